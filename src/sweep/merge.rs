//! Merging the shards of a sweep: every point's tallies from shards 1..N add up exactly to
//! the tally of the unsplit sweep, so the merged table equals the unsplit one byte for byte.
//!
//! A sweep shard (`sojourn sweep SPEC --shard K/N`) ends by writing a bundle
//! `OUT/shard-K-of-N.json`: [`SweepShardInfo`] (spec hash, shard, and the resolved spec with
//! the base model inlined) and one [`PointRecord`] per point with the tally of its photon
//! range. [`merge_sweep_shards`] needs nothing else. [`read_shard_file`] reads a shard file of
//! either kind (a run's or a sweep's).

use serde::{Deserialize, Serialize};
use serde_json::Value;

use super::runner::{PointRecord, results_from_tallies};
use super::spec::{ResolvedSpec, SpecError};
use super::{PointResult, Sweep};
use crate::file_format::format_problem;
use crate::shard::{
    MergeError, RunShard, SHARD_FORMAT, Shard, check_coverage, read_run_shard, same,
};
use crate::tally::Tally;

/// What a sweep shard bundle says about itself.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct SweepShardInfo {
    /// Layout version ([`SHARD_FORMAT`]).
    pub format: u32,
    /// [`ResolvedSpec::hash`] of `spec`.
    pub spec_hash: String,
    /// Which part.
    pub shard: Shard,
    /// The sweep, with its base model inlined.
    pub spec: ResolvedSpec,
}

impl SweepShardInfo {
    /// The description of `shard` of the sweep `spec`.
    pub fn new(spec: &ResolvedSpec, shard: Shard) -> Self {
        Self {
            format: SHARD_FORMAT,
            spec_hash: spec.hash(),
            shard,
            spec: spec.clone(),
        }
    }
}

/// A sweep shard bundle, as written to `OUT/shard-K-of-N.json`.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct SweepShardFile {
    /// Which part of which sweep.
    pub sweep_shard: SweepShardInfo,
    /// Every point's record for this shard's photons, in point order.
    pub points: Vec<PointRecord>,
}

/// A sweep shard read back, with the file it came from.
#[derive(Debug, Clone)]
pub struct SweepShard {
    /// The bundle.
    pub content: SweepShardFile,
    /// Where it was read from (for messages).
    pub file: String,
}

/// A merged sweep: the rebuilt points and every point's result.
#[derive(Debug)]
pub struct MergedSweep {
    /// The sweep rebuilt from the embedded spec.
    pub sweep: Sweep,
    /// Results in point order (`elapsed_s`: summed over shards).
    pub results: Vec<PointResult>,
}

/// Reads a sweep shard bundle from `text`; `file` labels errors.
///
/// # Errors
/// [`MergeError::NotAShard`] or [`MergeError::Damaged`].
pub fn read_sweep_shard(text: &str, file: &str) -> Result<SweepShard, MergeError> {
    if let Some(problem) = serde_json::from_str::<serde_json::Value>(text)
        .ok()
        .and_then(|value| format_problem(&value, "/sweep_shard/format", SHARD_FORMAT, "shard"))
    {
        return Err(MergeError::Damaged {
            file: file.to_string(),
            problem,
        });
    }
    let content: SweepShardFile = serde_json::from_str(text).map_err(|e| {
        if text.contains("\"sweep_shard\"") {
            MergeError::Damaged {
                file: file.to_string(),
                problem: e.to_string(),
            }
        } else {
            MergeError::NotAShard {
                file: file.to_string(),
                problem: format!("not a sweep shard bundle: {e}"),
            }
        }
    })?;
    let info = &content.sweep_shard;
    let damaged = |problem: String| MergeError::Damaged {
        file: file.to_string(),
        problem,
    };
    if info.format != SHARD_FORMAT {
        return Err(damaged(format!(
            "shard format {} (this sojourn reads format {SHARD_FORMAT})",
            info.format
        )));
    }
    if info.spec.hash() != info.spec_hash {
        return Err(damaged(format!(
            "spec_hash {} does not match the embedded spec ({})",
            info.spec_hash,
            info.spec.hash()
        )));
    }
    Ok(SweepShard {
        content,
        file: file.to_string(),
    })
}

/// Merges the shards of one sweep.
///
/// # Errors
/// [`MergeError`] when the shards belong to different sweeps (spec hash or shard count
/// differ), a shard is given twice or missing, a point record is damaged, or the embedded
/// spec no longer builds.
pub fn merge_sweep_shards(mut shards: Vec<SweepShard>) -> Result<MergedSweep, MergeError> {
    shards.sort_by_key(|s| s.content.sweep_shard.shard.index());
    let Some(first) = shards.first() else {
        return Err(MergeError::Empty);
    };
    let a = &first.content.sweep_shard;
    for other in &shards[1..] {
        let b = &other.content.sweep_shard;
        let (f, o) = (first.file.as_str(), other.file.as_str());
        same("sweep", "spec_hash", (f, &a.spec_hash), (o, &b.spec_hash))?;
        let same_content = |spec: &ResolvedSpec| ResolvedSpec {
            model_file: String::new(),
            ..spec.clone()
        };
        if same_content(&a.spec) != same_content(&b.spec) {
            same(
                "sweep",
                "spec",
                (f, "its embedded spec"),
                (o, "a different spec"),
            )?;
        }
        same(
            "sweep",
            "shard count",
            (f, a.shard.count()),
            (o, b.shard.count()),
        )?;
    }
    let listed: Vec<(Shard, &str)> = shards
        .iter()
        .map(|s| (s.content.sweep_shard.shard, s.file.as_str()))
        .collect();
    check_coverage(&listed)?;
    let spec_hash = a.spec_hash.clone();
    let sweep = a.spec.build(&first.file).map_err(|error| match error {
        SpecError::Point { cause, .. } => MergeError::Model(cause),
        other => MergeError::Damaged {
            file: first.file.clone(),
            problem: other.to_string(),
        },
    })?;
    let count = sweep.points().len();
    let mut merged: Vec<(Tally, f64)> = vec![(Tally::new(), 0.0); count];
    for shard in &mut shards {
        let info_shard = shard.content.sweep_shard.shard;
        let file = shard.file.clone();
        if shard.content.points.len() != count {
            return Err(MergeError::Damaged {
                file,
                problem: format!(
                    "{} point records, the sweep has {count} points",
                    shard.content.points.len()
                ),
            });
        }
        for (index, record) in shard.content.points.iter_mut().enumerate() {
            if record.spec_hash != spec_hash {
                return Err(MergeError::Damaged {
                    file: file.clone(),
                    problem: format!("point {index} has spec hash {}", record.spec_hash),
                });
            }
            record
                .check(&sweep, index as u64, info_shard, &file)
                .map_err(|problem| MergeError::Damaged {
                    file: file.clone(),
                    problem: format!("point {index}: {problem}"),
                })?;
            merged[index].0.merge(&record.tally);
            merged[index].1 += record.elapsed_s;
        }
    }
    let results = results_from_tallies(&sweep, merged);
    Ok(MergedSweep { sweep, results })
}

/// A shard file of either kind (a run's or a sweep's); reading one is the first step of
/// `sojourn merge`, which belongs above both runs and sweeps.
#[derive(Debug, Clone)]
pub enum ShardFile {
    /// A shard of a run (`sojourn run --shard K/N --json PATH`).
    Run(Box<RunShard>),
    /// A shard bundle of a sweep (`sojourn sweep SPEC --shard K/N`).
    Sweep(SweepShard),
}

/// Reads a shard file of either kind.
///
/// # Errors
/// [`MergeError::Read`], [`MergeError::NotAShard`] or [`MergeError::Damaged`].
pub fn read_shard_file(path: &std::path::Path) -> Result<ShardFile, MergeError> {
    let file = path.display().to_string();
    let text = std::fs::read_to_string(path).map_err(|source| MergeError::Read {
        file: file.clone(),
        cause: source,
    })?;
    let is_sweep = serde_json::from_str::<Value>(&text)
        .ok()
        .is_some_and(|v| v.get("sweep_shard").is_some());
    if is_sweep {
        read_sweep_shard(&text, &file).map(ShardFile::Sweep)
    } else {
        read_run_shard(&text, &file).map(|shard| ShardFile::Run(Box::new(shard)))
    }
}
