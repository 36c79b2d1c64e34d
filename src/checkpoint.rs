//! Checkpoints of a long run: the exact tally and the number of photons done, saved
//! atomically every M photons, so that a run killed at any moment resumes where its last
//! checkpoint left it and ends with the same bits as an uninterrupted run.
//!
//! Photons run in chunks of M in index order; each chunk is merged into the tally and the
//! checkpoint file is replaced (temporary file + rename). Because tallies merge exactly and
//! every photon's random stream depends only on (seed, stream, photon index), a run resumed
//! from a checkpoint gives exactly the tally of one uninterrupted run. A checkpoint records
//! what it belongs to ([`CheckpointIdentity`]); resuming with other settings is refused.

use std::path::{Path, PathBuf};
use std::time::Instant;

use serde::{Deserialize, Serialize};
use thiserror::Error;

use crate::atomic_write::write_atomically;
use crate::file_format::format_problem;
use crate::medium::Medium;
use crate::simulation::{RunConfig, RunResult, run_with_progress};
use crate::tally::{Tally, TallyError};

/// Version of the checkpoint layout. Format 2: tallies with weights, histograms keyed on
/// the bits of the value, checked as they are read.
pub const CHECKPOINT_FORMAT: u32 = 2;

/// What a checkpoint belongs to: resuming requires every field to match.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct CheckpointIdentity {
    /// Fingerprint of the model (see [`crate::fingerprint::fingerprint`]), or any label that
    /// identifies a medium built in code.
    pub model_hash: String,
    /// Walk method.
    pub method: String,
    /// Seed of the random streams.
    pub seed: u64,
    /// Stream id.
    pub stream: u64,
    /// First photon index of the run (non-zero for a shard).
    pub first_photon: u64,
    /// Photons of the run.
    pub photons: u64,
    /// Step cap per photon.
    pub max_steps: u64,
}

impl CheckpointIdentity {
    /// The identity of `config` run on the model identified by `model_hash` with `method`.
    pub fn new(config: &RunConfig, model_hash: &str, method: &str) -> Self {
        Self {
            model_hash: model_hash.to_string(),
            method: method.to_string(),
            seed: config.seed,
            stream: config.stream,
            first_photon: config.first_photon,
            photons: config.photons,
            max_steps: config.limits.max_steps,
        }
    }

    fn fields(&self) -> [(&'static str, String); 7] {
        [
            ("model_hash", self.model_hash.clone()),
            ("method", self.method.clone()),
            ("seed", self.seed.to_string()),
            ("stream", self.stream.to_string()),
            ("first_photon", self.first_photon.to_string()),
            ("photons", self.photons.to_string()),
            ("max_steps", self.max_steps.to_string()),
        ]
    }
}

/// The saved state of a run.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct Checkpoint {
    /// Layout version ([`CHECKPOINT_FORMAT`]).
    pub format: u32,
    /// What run this is.
    pub identity: CheckpointIdentity,
    /// Photons done, counted from `identity.first_photon`.
    pub photons_done: u64,
    /// Wall-clock time spent so far, over every session, s.
    pub elapsed_s: f64,
    /// The exact tally of the photons done.
    pub tally: Tally,
}

/// A checkpoint that cannot be used.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum CheckpointError {
    /// The file could not be read.
    #[error("{file}: cannot read the checkpoint: {cause}")]
    Read {
        /// The file.
        file: String,
        /// The operating-system error.
        cause: std::io::Error,
    },
    /// The file could not be written.
    #[error("{file}: cannot write the checkpoint: {cause}")]
    Write {
        /// The file.
        file: String,
        /// The operating-system error.
        cause: std::io::Error,
    },
    /// The file is not a checkpoint, or contradicts itself.
    #[error("{file}: not a usable checkpoint: {problem}")]
    Damaged {
        /// The file.
        file: String,
        /// What is wrong.
        problem: String,
    },
    /// The checkpoint's tally contradicts itself (edited or damaged).
    #[error("{file}: not a usable checkpoint: {problem}")]
    InvalidTally {
        /// The file.
        file: String,
        /// What is inconsistent, with the path of the field inside the file.
        problem: TallyError,
    },
    /// The checkpoint belongs to another run.
    #[error(
        "{file}: the checkpoint belongs to another run ({field} is {saved} there, {wanted} here): use the same model and options, or remove the checkpoint to start afresh"
    )]
    Mismatch {
        /// The file.
        file: String,
        /// The field that differs.
        field: &'static str,
        /// Its value in the checkpoint.
        saved: String,
        /// Its value in this run.
        wanted: String,
    },
}

/// A run that saves a checkpoint every `every` photons and resumes from one.
#[derive(Debug)]
pub struct CheckpointedRun<'a> {
    medium: &'a Medium,
    config: RunConfig,
    path: PathBuf,
    every: u64,
    state: Checkpoint,
    resumed_from: u64,
}

impl<'a> CheckpointedRun<'a> {
    /// Prepares a run of `config` on `medium` checkpointed at `path` every `every` photons
    /// (at least 1). If `path` exists it must be a checkpoint of the same run
    /// (`model_hash`, `method`, and every field of `config`); the run resumes from it.
    ///
    /// # Errors
    /// [`CheckpointError`] when the file exists but cannot be read, is damaged, or belongs
    /// to another run.
    pub fn open(
        medium: &'a Medium,
        config: &RunConfig,
        model_hash: &str,
        method: &str,
        path: &Path,
        every: u64,
    ) -> Result<Self, CheckpointError> {
        let identity = CheckpointIdentity::new(config, model_hash, method);
        let state = match std::fs::read_to_string(path) {
            Ok(text) => {
                let state = load(&text, path, &identity)?;
                let kept = state.tally.resolved().map(|r| r.layout());
                if kept != config.resolved {
                    return Err(CheckpointError::Mismatch {
                        file: path.display().to_string(),
                        field: "resolved",
                        saved: format!("{kept:?}"),
                        wanted: format!("{:?}", config.resolved),
                    });
                }
                state
            }
            Err(error) if error.kind() == std::io::ErrorKind::NotFound => Checkpoint {
                format: CHECKPOINT_FORMAT,
                identity,
                photons_done: 0,
                elapsed_s: 0.0,
                tally: Tally::new(),
            },
            Err(source) => {
                return Err(CheckpointError::Read {
                    file: path.display().to_string(),
                    cause: source,
                });
            }
        };
        Ok(Self {
            medium,
            config: config.clone(),
            path: path.to_path_buf(),
            every: every.max(1),
            resumed_from: state.photons_done,
            state,
        })
    }

    /// Photons already done when the run was opened (0 for a fresh start).
    pub fn resumed_from(&self) -> u64 {
        self.resumed_from
    }

    /// Photons done so far.
    pub fn photons_done(&self) -> u64 {
        self.state.photons_done
    }

    /// Whether every photon has run.
    pub fn is_complete(&self) -> bool {
        self.state.photons_done >= self.config.photons
    }

    /// Runs the next chunk of at most `every` photons and saves the checkpoint.
    /// `progress(photons done in total)` is called as in [`run_with_progress`].
    ///
    /// # Errors
    /// [`CheckpointError::Write`] when the checkpoint cannot be saved.
    pub fn step(&mut self, progress: &(dyn Fn(u64) + Sync)) -> Result<(), CheckpointError> {
        if self.is_complete() {
            return Ok(());
        }
        let started = Instant::now();
        let done = self.state.photons_done;
        let chunk = self.every.min(self.config.photons - done);
        let config = RunConfig {
            photons: chunk,
            first_photon: self.config.first_photon + done,
            ..self.config.clone()
        };
        let part = run_with_progress(self.medium, &config, &|n| progress(done + n));
        self.state.tally.merge(&part.tally);
        self.state.photons_done += chunk;
        self.state.elapsed_s += started.elapsed().as_secs_f64();
        self.save()
    }

    /// Runs every remaining chunk, saving after each, and returns the result of the whole
    /// run (wall-clock time summed over every session that worked on it).
    ///
    /// # Errors
    /// [`CheckpointError::Write`] when a checkpoint cannot be saved.
    pub fn finish(mut self, progress: &(dyn Fn(u64) + Sync)) -> Result<RunResult, CheckpointError> {
        while !self.is_complete() {
            self.step(progress)?;
        }
        Ok(RunResult {
            tally: self.state.tally,
            elapsed_s: self.state.elapsed_s,
        })
    }

    fn save(&self) -> Result<(), CheckpointError> {
        let text = serde_json::to_string(&self.state).expect("a checkpoint serialises");
        write_atomically(&self.path, text.as_bytes()).map_err(|source| CheckpointError::Write {
            file: self.path.display().to_string(),
            cause: source,
        })
    }
}

fn load(
    text: &str,
    path: &Path,
    identity: &CheckpointIdentity,
) -> Result<Checkpoint, CheckpointError> {
    let file = path.display().to_string();
    let damaged = |problem: String| CheckpointError::Damaged {
        file: file.clone(),
        problem,
    };
    /// A checkpoint without its tally (read apart, for its typed errors).
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    struct Head {
        format: u32,
        identity: CheckpointIdentity,
        photons_done: u64,
        elapsed_s: f64,
    }
    let mut value: serde_json::Value =
        serde_json::from_str(text).map_err(|e| damaged(e.to_string()))?;
    if let Some(problem) = format_problem(&value, "/format", CHECKPOINT_FORMAT, "checkpoint") {
        return Err(damaged(problem));
    }
    let tally = value
        .as_object_mut()
        .and_then(|object| object.remove("tally"))
        .ok_or_else(|| damaged("no \"tally\" key".into()))?;
    let head: Head = serde_json::from_value(value).map_err(|e| damaged(e.to_string()))?;
    let tally = Tally::from_json(tally).map_err(|e| CheckpointError::InvalidTally {
        file: file.clone(),
        problem: e.within("tally"),
    })?;
    let state = Checkpoint {
        format: head.format,
        identity: head.identity,
        photons_done: head.photons_done,
        elapsed_s: head.elapsed_s,
        tally,
    };
    if state.format != CHECKPOINT_FORMAT {
        return Err(damaged(format!(
            "format {} (this sojourn reads format {CHECKPOINT_FORMAT})",
            state.format
        )));
    }
    for ((field, saved), (_, wanted)) in state.identity.fields().into_iter().zip(identity.fields())
    {
        if saved != wanted {
            return Err(CheckpointError::Mismatch {
                file,
                field,
                saved,
                wanted,
            });
        }
    }
    if state.photons_done > identity.photons {
        return Err(damaged(format!(
            "{} photons done of a run of {}",
            state.photons_done, identity.photons
        )));
    }
    if state.tally.launched() != state.photons_done {
        return Err(damaged(format!(
            "the tally does not hold the {} photons done",
            state.photons_done
        )));
    }
    Ok(state)
}
