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
use crate::input::{MAX_STATE_BYTES, from_json_value, plain_message, read_text, strip_bom};
use crate::shard::{
    MergeError, RunShard, SHARD_FORMAT, Shard, check_coverage, run_shard_from_value, same,
};
use crate::tally::Tally;

/// What a sweep shard bundle says about itself. Reading one from JSON checks its format,
/// its embedded spec (see [`ResolvedSpec`]) and that the spec hash matches the spec.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(try_from = "SweepShardInfoRepr")]
pub struct SweepShardInfo {
    format: u32,
    spec_hash: String,
    shard: Shard,
    spec: ResolvedSpec,
}

/// A [`SweepShardInfo`] as read, before its checks.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct SweepShardInfoRepr {
    format: u32,
    spec_hash: String,
    shard: Shard,
    spec: ResolvedSpec,
}

impl TryFrom<SweepShardInfoRepr> for SweepShardInfo {
    type Error = String;

    fn try_from(repr: SweepShardInfoRepr) -> Result<Self, String> {
        if repr.format != SHARD_FORMAT {
            return Err(format!(
                "shard format {} (this sojourn reads format {SHARD_FORMAT})",
                repr.format
            ));
        }
        if repr.spec.hash() != repr.spec_hash {
            return Err(format!(
                "spec_hash {} does not match the embedded spec ({})",
                repr.spec_hash,
                repr.spec.hash()
            ));
        }
        Ok(Self {
            format: repr.format,
            spec_hash: repr.spec_hash,
            shard: repr.shard,
            spec: repr.spec,
        })
    }
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

    /// Which part.
    pub fn shard(&self) -> Shard {
        self.shard
    }

    /// The sweep, with its base model inlined.
    pub fn spec(&self) -> &ResolvedSpec {
        &self.spec
    }
}

/// A sweep shard bundle, as written to `OUT/shard-K-of-N.json`.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SweepShardFile {
    pub(crate) sweep_shard: SweepShardInfo,
    pub(crate) points: Vec<PointRecord>,
}

impl SweepShardFile {
    /// Which part of which sweep.
    pub fn info(&self) -> &SweepShardInfo {
        &self.sweep_shard
    }

    /// Every point's record for this shard's photons, in point order.
    pub fn points(&self) -> &[PointRecord] {
        &self.points
    }
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
    let value: Value =
        serde_json::from_str(strip_bom(text)).map_err(|e| MergeError::NotAShard {
            file: file.to_string(),
            problem: format!("not valid JSON: {}", plain_message(&e.to_string())),
        })?;
    sweep_shard_from_value(&value, file)
}

/// Reads a sweep shard bundle from its parsed JSON; see [`read_sweep_shard`].
fn sweep_shard_from_value(value: &Value, file: &str) -> Result<SweepShard, MergeError> {
    let damaged = |problem: String| MergeError::Damaged {
        file: file.to_string(),
        problem,
    };
    if value.get("sweep_shard").is_none() {
        return Err(MergeError::NotAShard {
            file: file.to_string(),
            problem: "not a sweep shard bundle: no \"sweep_shard\" key".into(),
        });
    }
    if let Some(problem) = format_problem(value, "/sweep_shard/format", SHARD_FORMAT, "shard") {
        return Err(damaged(problem));
    }
    let content: SweepShardFile = from_json_value(value).map_err(|e| damaged(e.to_string()))?;
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
        if !a.spec.same_sweep(&b.spec) {
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

/// Reads a shard file of either kind, within [`MAX_STATE_BYTES`].
///
/// # Errors
/// [`MergeError::Input`], [`MergeError::NotAShard`] or [`MergeError::Damaged`].
pub fn read_shard_file(path: &std::path::Path) -> Result<ShardFile, MergeError> {
    let file = path.display().to_string();
    let text = read_text(path, MAX_STATE_BYTES, "shard file")?;
    parse_shard_file(&text, &file)
}

/// Reads shard-file text of either kind; `file` labels errors.
///
/// # Errors
/// [`MergeError::NotAShard`] or [`MergeError::Damaged`].
pub fn parse_shard_file(text: &str, file: &str) -> Result<ShardFile, MergeError> {
    let value: Value =
        serde_json::from_str(strip_bom(text)).map_err(|e| MergeError::NotAShard {
            file: file.to_string(),
            problem: format!("not valid JSON: {}", plain_message(&e.to_string())),
        })?;
    if value.get("sweep_shard").is_some() {
        sweep_shard_from_value(&value, file).map(ShardFile::Sweep)
    } else {
        run_shard_from_value(value, file).map(|shard| ShardFile::Run(Box::new(shard)))
    }
}
