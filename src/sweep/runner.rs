//! Running a sweep into an output folder so that it survives being killed.
//!
//! ```text
//! OUT/points/point-0003.json               one file per finished point (shard: point-0003.shard-2-of-5.json)
//! OUT/sweep.csv, OUT/sweep.jsonl           the table, assembled when every point is done
//! OUT/shard-2-of-5.json                    a shard's bundle of its points, for `sojourn merge`
//! ```
//!
//! Points run one after another (each one parallel over photons). A finished point is
//! written atomically (temporary file + rename) with the sweep's spec hash, its photon range
//! and its exact tally, so a sweep killed at any moment loses at most the point in progress.
//! Opened again with the same spec and folder, [`SweepRunner`] skips the points already
//! there; point files of another spec are refused, never mixed in.

use std::path::{Path, PathBuf};
use std::time::Instant;

use serde::{Deserialize, Serialize};
use serde_json::Value;
use thiserror::Error;

use super::merge::{SweepShardFile, SweepShardInfo};
use super::rescale::{can_rescale, run_rescaled};
use super::spec::ResolvedSpec;
use super::table::{SweepRow, csv_text, jsonl_text};
use super::{PointResult, Sweep};
use crate::atomic_write::{is_temporary, write_atomically};
use crate::file_format::format_problem;
use crate::input::{
    InputError, MAX_STATE_BYTES, from_json_value, plain_message, read_text, strip_bom,
};
use crate::medium::Medium;
use crate::shard::{MergeError, Shard, check_tally};
use crate::simulation::RunResult;
use crate::tally::Tally;

/// Version of the point-file layout (3: tallies carry residence sums).
pub const POINT_FORMAT: u32 = 3;

/// A sweep that cannot run, resume or be assembled.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum SweepError {
    /// A file or folder operation failed.
    #[error("{path}: cannot {action}: {cause}")]
    Io {
        /// The file or folder.
        path: String,
        /// What was being done ("create the folder", "write", "read").
        action: &'static str,
        /// The operating-system error.
        cause: std::io::Error,
    },
    /// A point file of a different sweep is in the way.
    #[error(
        "{file} belongs to a different sweep (spec hash {found}, this spec {expected}): give another --out folder, or remove {points} to start this sweep afresh"
    )]
    Foreign {
        /// The point file.
        file: String,
        /// Its spec hash.
        found: String,
        /// This sweep's spec hash.
        expected: String,
        /// The points folder.
        points: String,
    },
    /// A point file that contradicts itself or its name.
    #[error("{file}: damaged point file: {problem} (remove it to run the point again)")]
    Damaged {
        /// The file.
        file: String,
        /// What is wrong.
        problem: String,
    },
    /// A point file that is not readable within the input limits (see [`crate::input`]).
    #[error(transparent)]
    Input(#[from] InputError),
    /// Assembly was asked for before every point was done.
    #[error("points {missing} are not done yet")]
    Incomplete {
        /// The missing point indices, comma-separated.
        missing: String,
    },
}

/// A parameter value as stored in a point file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ParameterValue {
    /// Path or name of the parameter.
    pub path: String,
    /// Its value at this point.
    pub value: Value,
}

/// A finished point (or a shard's part of it), as stored in its file. Reading one from
/// JSON checks its format, its tally (see [`Tally`]) against its photon count, and its
/// wall-clock time; [`SweepRunner`] and merge then check it against the sweep.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(try_from = "PointRecordRepr")]
pub struct PointRecord {
    pub(crate) format: u32,
    pub(crate) spec_hash: String,
    pub(crate) point: u64,
    pub(crate) shard: Shard,
    pub(crate) seed: u64,
    pub(crate) first_photon: u64,
    pub(crate) photons: u64,
    pub(crate) parameters: Vec<ParameterValue>,
    pub(crate) elapsed_s: f64,
    pub(crate) tally: Tally,
    /// Whether the tally was rescaled from the walk of another point (absent: walked).
    #[serde(default, skip_serializing_if = "is_false")]
    pub(crate) reweighted: bool,
}

fn is_false(value: &bool) -> bool {
    !*value
}

/// A [`PointRecord`] as read, before its checks.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct PointRecordRepr {
    format: u32,
    spec_hash: String,
    point: u64,
    shard: Shard,
    seed: u64,
    first_photon: u64,
    photons: u64,
    parameters: Vec<ParameterValue>,
    elapsed_s: f64,
    tally: Tally,
    #[serde(default)]
    reweighted: bool,
}

impl TryFrom<PointRecordRepr> for PointRecord {
    type Error = String;

    fn try_from(repr: PointRecordRepr) -> Result<Self, String> {
        if repr.format != POINT_FORMAT {
            return Err(format!(
                "format {} (this sojourn reads format {POINT_FORMAT})",
                repr.format
            ));
        }
        if repr.first_photon.checked_add(repr.photons).is_none() {
            return Err(format!(
                "photons {} from {}: past the last photon index",
                repr.photons, repr.first_photon
            ));
        }
        if repr.tally.launched() != repr.photons {
            return Err(format!(
                "the tally holds {} photons, the record {}",
                repr.tally.launched(),
                repr.photons
            ));
        }
        if !(repr.elapsed_s.is_finite() && repr.elapsed_s >= 0.0) {
            return Err(format!(
                "elapsed_s = {}: expected a wall-clock time >= 0 s",
                repr.elapsed_s
            ));
        }
        Ok(Self {
            format: repr.format,
            spec_hash: repr.spec_hash,
            point: repr.point,
            shard: repr.shard,
            seed: repr.seed,
            first_photon: repr.first_photon,
            photons: repr.photons,
            parameters: repr.parameters,
            elapsed_s: repr.elapsed_s,
            tally: repr.tally,
            reweighted: repr.reweighted,
        })
    }
}

impl PointRecord {
    /// Checks that the record is point `index` of `sweep` for `shard`, with a consistent
    /// tally; `Err(problem)` otherwise. The spec hash is checked by the caller.
    pub(crate) fn check(
        &mut self,
        sweep: &Sweep,
        index: u64,
        shard: Shard,
        file: &str,
    ) -> Result<(), String> {
        let config = sweep.config(index, shard);
        if self.format != POINT_FORMAT {
            return Err(format!(
                "format {} (this sojourn reads format {POINT_FORMAT})",
                self.format
            ));
        }
        if self.point != index || self.shard != shard {
            return Err(format!(
                "it holds point {} of shard {}, expected point {index} of shard {shard}",
                self.point, self.shard
            ));
        }
        if self.seed != config.seed
            || self.first_photon != config.first_photon
            || self.photons != config.photons
        {
            return Err(format!(
                "seed {} photons {}..{}, expected seed {} photons {}..{}",
                self.seed,
                self.first_photon,
                self.first_photon + self.photons,
                config.seed,
                config.first_photon,
                config.first_photon + config.photons
            ));
        }
        let expected: Vec<ParameterValue> = parameter_values(sweep, index);
        if self.parameters != expected {
            return Err("its parameter values are not this point's".into());
        }
        check_tally(&self.tally, self.photons, file).map_err(|e| match e {
            MergeError::Damaged { problem, .. } => problem,
            other => other.to_string(),
        })
    }
}

fn parameter_values(sweep: &Sweep, index: u64) -> Vec<ParameterValue> {
    sweep.points()[index as usize]
        .parameters()
        .iter()
        .map(|(path, value)| ParameterValue {
            path: path.clone(),
            value: value.clone(),
        })
        .collect()
}

/// What [`SweepRunner::finish`] produced.
#[derive(Debug)]
pub enum Finished {
    /// A whole sweep: every point's result, and the table files written.
    Table {
        /// Results in point order.
        results: Vec<PointResult>,
        /// The CSV file.
        csv: PathBuf,
        /// The JSON Lines file.
        jsonl: PathBuf,
    },
    /// A shard: the bundle file to give to `sojourn merge`.
    Shard {
        /// The bundle.
        bundle: PathBuf,
    },
}

/// A sweep bound to its output folder and shard.
#[derive(Debug)]
pub struct SweepRunner<'a> {
    sweep: &'a Sweep,
    spec: &'a ResolvedSpec,
    hash: String,
    out: PathBuf,
    shard: Shard,
    bundle: bool,
    done: Vec<Option<PointRecord>>,
}

impl<'a> SweepRunner<'a> {
    /// Creates the output folder (if needed) and reads the point files of this sweep and
    /// shard already there. `sweep` must be `spec.build(..)`. With `shard` given (even
    /// 1/1) the sweep ends with a bundle for `sojourn merge`; without, with the table.
    ///
    /// # Errors
    /// [`SweepError::Io`] when the folder cannot be created or read,
    /// [`SweepError::Foreign`] for a point file of another spec, [`SweepError::Damaged`]
    /// for one that contradicts itself.
    pub fn open(
        sweep: &'a Sweep,
        spec: &'a ResolvedSpec,
        out: &Path,
        shard: Option<Shard>,
    ) -> Result<Self, SweepError> {
        let mut runner = Self {
            sweep,
            spec,
            hash: spec.hash(),
            out: out.to_path_buf(),
            shard: shard.unwrap_or_else(Shard::whole),
            bundle: shard.is_some(),
            done: vec![None; sweep.points().len()],
        };
        let points = runner.points_dir();
        std::fs::create_dir_all(&points).map_err(|source| SweepError::Io {
            path: points.display().to_string(),
            action: "create the folder",
            cause: source,
        })?;
        for index in 0..sweep.points().len() as u64 {
            let path = runner.point_path(index);
            let text = match read_text(&path, MAX_STATE_BYTES, "sweep point file") {
                Ok(text) => text,
                Err(InputError::Read { cause, .. })
                    if cause.kind() == std::io::ErrorKind::NotFound =>
                {
                    continue;
                }
                Err(error) => return Err(error.into()),
            };
            runner.done[index as usize] = Some(runner.read_point(&path, &text, index)?);
        }
        runner.remove_stale_temporaries();
        Ok(runner)
    }

    /// The folder of point files.
    pub fn points_dir(&self) -> PathBuf {
        self.out.join("points")
    }

    /// The file of point `index` for this runner's shard.
    pub fn point_path(&self, index: u64) -> PathBuf {
        let name = if !self.bundle {
            format!("point-{index:04}.json")
        } else {
            format!("point-{index:04}.{}.json", self.shard.tag())
        };
        self.points_dir().join(name)
    }

    /// Indices of the points still to run, in order.
    pub fn pending(&self) -> Vec<u64> {
        (0..self.done.len() as u64)
            .filter(|&i| self.done[i as usize].is_none())
            .collect()
    }

    /// Photons per point in this runner's shard.
    pub fn photons_per_point(&self) -> u64 {
        self.sweep.config(0, self.shard).photons
    }

    /// Runs point `index`, writes its file atomically, and returns its wall-clock time, s.
    /// `progress(photons done in the point)` as in [`crate::simulation::run_with_progress`].
    ///
    /// # Errors
    /// [`SweepError::Io`] when the point file cannot be written.
    pub fn run_point(
        &mut self,
        index: u64,
        progress: &(dyn Fn(u64) + Sync),
    ) -> Result<f64, SweepError> {
        let started = Instant::now();
        let result = self.sweep.run_point(index, self.shard, progress);
        let config = self.sweep.config(index, self.shard);
        let elapsed_s = started.elapsed().as_secs_f64();
        let record = PointRecord {
            format: POINT_FORMAT,
            spec_hash: self.hash.clone(),
            point: index,
            shard: self.shard,
            seed: config.seed,
            first_photon: config.first_photon,
            photons: config.photons,
            parameters: parameter_values(self.sweep, index),
            elapsed_s,
            tally: result.tally,
            reweighted: false,
        };
        let path = self.point_path(index);
        let text = serde_json::to_string(&record).expect("a point record serialises");
        write_atomically(&path, text.as_bytes()).map_err(|source| SweepError::Io {
            path: path.display().to_string(),
            action: "write",
            cause: source,
        })?;
        self.done[index as usize] = Some(record);
        Ok(elapsed_s)
    }

    /// Whether [`SweepRunner::run_rescaled`] applies: a whole sweep (no shard) with no
    /// point done yet, of two or more points that differ only in absorption (see
    /// [`super::rescale`]).
    pub fn rescalable(&self) -> bool {
        let media: Vec<Medium> = self
            .sweep
            .points()
            .iter()
            .map(|p| p.medium().clone())
            .collect();
        !self.bundle && self.done.iter().all(Option::is_none) && can_rescale(&media)
    }

    /// Walks the least absorbing point once, rescales every other point from it (points
    /// whose weights collapse are walked on their own) and writes every point file.
    /// Returns the walked point and the points walked on their own.
    ///
    /// # Errors
    /// [`SweepError::Io`] when a point file cannot be written; [`SweepError::Incomplete`]
    /// naming every point if the points cannot be rescaled (check
    /// [`SweepRunner::rescalable`] first).
    pub fn run_rescaled(&mut self) -> Result<(usize, Vec<usize>), SweepError> {
        let media: Vec<Medium> = self
            .sweep
            .points()
            .iter()
            .map(|p| p.medium().clone())
            .collect();
        let config = self.sweep.config(0, self.shard);
        let run = run_rescaled(&media, &config).map_err(|_| SweepError::Incomplete {
            missing: join(&self.pending()),
        })?;
        let share_s = run.elapsed_s / media.len() as f64;
        for (index, point) in run.points.into_iter().enumerate() {
            let index = index as u64;
            let config = self.sweep.config(index, self.shard);
            let record = PointRecord {
                format: POINT_FORMAT,
                spec_hash: self.hash.clone(),
                point: index,
                shard: self.shard,
                seed: config.seed,
                first_photon: config.first_photon,
                photons: config.photons,
                parameters: parameter_values(self.sweep, index),
                elapsed_s: share_s,
                tally: point.tally,
                reweighted: point.reweighted,
            };
            let path = self.point_path(index);
            let text = serde_json::to_string(&record).expect("a point record serialises");
            write_atomically(&path, text.as_bytes()).map_err(|source| SweepError::Io {
                path: path.display().to_string(),
                action: "write",
                cause: source,
            })?;
            self.done[index as usize] = Some(record);
        }
        Ok((run.walk_point, run.walked_alone))
    }

    /// Once every point is done: for a whole sweep, builds the results and writes
    /// `sweep.csv` and `sweep.jsonl`; for a shard (given to [`SweepRunner::open`]), writes
    /// its bundle `shard-K-of-N.json`.
    ///
    /// # Errors
    /// [`SweepError::Incomplete`] if points are missing, [`SweepError::Io`] when a file
    /// cannot be written.
    pub fn finish(self) -> Result<Finished, SweepError> {
        let pending = self.pending();
        if !pending.is_empty() {
            return Err(SweepError::Incomplete {
                missing: join(&pending),
            });
        }
        let records: Vec<PointRecord> = self.done.into_iter().flatten().collect();
        let write = |path: PathBuf, text: &str| {
            write_atomically(&path, text.as_bytes())
                .map(|_| path.clone())
                .map_err(|source| SweepError::Io {
                    path: path.display().to_string(),
                    action: "write",
                    cause: source,
                })
        };
        if !self.bundle {
            let reweighted: Vec<bool> = records.iter().map(|r| r.reweighted).collect();
            let tallies: Vec<(Tally, f64)> = records
                .into_iter()
                .map(|r| (r.tally, r.elapsed_s))
                .collect();
            let mut results = results_from_tallies(self.sweep, tallies);
            for (result, reweighted) in results.iter_mut().zip(reweighted) {
                result.reweighted = reweighted;
                if reweighted {
                    result.analysis.absorption_mode = "rescaled".to_string();
                    result.analysis.notes.push(
                        "absorption rescaled: the photons of the least absorbing point's walk, \
                         reweighted to this point's absorption (weighted photons)"
                            .to_string(),
                    );
                }
            }
            let rows: Vec<SweepRow> = results.iter().map(PointResult::row).collect();
            let csv = write(self.out.join("sweep.csv"), &csv_text(&rows))?;
            let jsonl = write(self.out.join("sweep.jsonl"), &jsonl_text(&rows))?;
            Ok(Finished::Table {
                results,
                csv,
                jsonl,
            })
        } else {
            let bundle = SweepShardFile {
                sweep_shard: SweepShardInfo::new(self.spec, self.shard),
                points: records,
            };
            let text = serde_json::to_string(&bundle).expect("a bundle serialises") + "\n";
            let bundle = write(self.out.join(format!("{}.json", self.shard.tag())), &text)?;
            Ok(Finished::Shard { bundle })
        }
    }

    fn read_point(&self, path: &Path, text: &str, index: u64) -> Result<PointRecord, SweepError> {
        let file = path.display().to_string();
        let damaged = |problem: String| SweepError::Damaged {
            file: file.clone(),
            problem,
        };
        let value: serde_json::Value = serde_json::from_str(strip_bom(text))
            .map_err(|e| damaged(format!("not valid JSON: {}", plain_message(&e.to_string()))))?;
        if let Some(problem) = format_problem(&value, "/format", POINT_FORMAT, "point") {
            return Err(damaged(problem));
        }
        let mut record: PointRecord =
            from_json_value(&value).map_err(|e| damaged(e.to_string()))?;
        if record.spec_hash != self.hash {
            return Err(SweepError::Foreign {
                file: file.clone(),
                found: record.spec_hash,
                expected: self.hash.clone(),
                points: self.points_dir().display().to_string(),
            });
        }
        record
            .check(self.sweep, index, self.shard, &file)
            .map_err(damaged)?;
        Ok(record)
    }

    /// Removes temporary files of this shard's point files left by a killed run.
    fn remove_stale_temporaries(&self) {
        let Ok(entries) = std::fs::read_dir(self.points_dir()) else {
            return;
        };
        let suffix = if !self.bundle {
            ".json".to_string()
        } else {
            format!(".{}.json", self.shard.tag())
        };
        for entry in entries.flatten() {
            let path = entry.path();
            let name = entry.file_name().to_string_lossy().into_owned();
            // Temporary names are ".<final name>.<pid>.tmp".
            let final_name = name
                .strip_prefix('.')
                .and_then(|n| n.strip_suffix(".tmp"))
                .and_then(|n| n.rsplit_once('.').map(|(n, _)| n));
            if is_temporary(&path)
                && final_name.is_some_and(|n| {
                    n.starts_with("point-")
                        && n.ends_with(&suffix)
                        && n.matches('.').count() == suffix.matches('.').count()
                })
            {
                let _ = std::fs::remove_file(path);
            }
        }
    }
}

/// The results of every point of `sweep` from the tally of all its photons (and the
/// wall-clock time spent on it).
pub(crate) fn results_from_tallies(sweep: &Sweep, tallies: Vec<(Tally, f64)>) -> Vec<PointResult> {
    tallies
        .into_iter()
        .enumerate()
        .map(|(index, (tally, elapsed_s))| {
            sweep.result(index as u64, &RunResult { tally, elapsed_s })
        })
        .collect()
}

pub(crate) fn join(indices: &[u64]) -> String {
    indices
        .iter()
        .map(u64::to_string)
        .collect::<Vec<_>>()
        .join(", ")
}
