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
use crate::input::{
    InputError, MAX_STATE_BYTES, from_json_value, plain_message, read_text, strip_bom,
};
use crate::medium::Medium;
use crate::simulation::{RunConfig, RunResult, run_with_progress};
use crate::tally::{Tally, TallyError};

/// Version of the checkpoint layout. Format 2: tallies with weights, histograms keyed on
/// the bits of the value, checked as they are read. Format 3: tallies
/// with residence by cell and path by layer.
pub const CHECKPOINT_FORMAT: u32 = 3;

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

/// The saved state of a run: made by [`CheckpointedRun`], read back by [`read_checkpoint`],
/// which checks that it is consistent in itself.
#[derive(Debug, Clone, Serialize)]
pub struct Checkpoint {
    format: u32,
    identity: CheckpointIdentity,
    photons_done: u64,
    elapsed_s: f64,
    tally: Tally,
}

impl Checkpoint {
    /// What run this is.
    pub fn identity(&self) -> &CheckpointIdentity {
        &self.identity
    }

    /// Photons done, counted from `identity.first_photon`.
    pub fn photons_done(&self) -> u64 {
        self.photons_done
    }

    /// Wall-clock time spent so far, over every session, s.
    pub fn elapsed_s(&self) -> f64 {
        self.elapsed_s
    }

    /// The exact tally of the photons done.
    pub fn tally(&self) -> &Tally {
        &self.tally
    }
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
    /// The file is not readable within the input limits (see [`crate::input`]).
    #[error(transparent)]
    Input(#[from] InputError),
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
        let state = match read_text(path, MAX_STATE_BYTES, "checkpoint") {
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
            Err(InputError::Read { cause, .. }) if cause.kind() == std::io::ErrorKind::NotFound => {
                Checkpoint {
                    format: CHECKPOINT_FORMAT,
                    identity,
                    photons_done: 0,
                    elapsed_s: 0.0,
                    tally: Tally::new(),
                }
            }
            Err(error) => return Err(error.into()),
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

/// Reads checkpoint text (`file` labels errors) and checks that it is consistent in
/// itself: its format, its tally, and the photons done against the run and the tally.
///
/// # Errors
/// [`CheckpointError::Damaged`] or [`CheckpointError::InvalidTally`].
pub fn read_checkpoint(text: &str, file: &str) -> Result<Checkpoint, CheckpointError> {
    let damaged = |problem: String| CheckpointError::Damaged {
        file: file.to_string(),
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
    let mut value: serde_json::Value = serde_json::from_str(strip_bom(text))
        .map_err(|e| damaged(format!("not valid JSON: {}", plain_message(&e.to_string()))))?;
    if let Some(problem) = format_problem(&value, "/format", CHECKPOINT_FORMAT, "checkpoint") {
        return Err(damaged(problem));
    }
    let tally = value
        .as_object_mut()
        .and_then(|object| object.remove("tally"))
        .ok_or_else(|| damaged("no \"tally\" key".into()))?;
    let head: Head = from_json_value(&value).map_err(|e| damaged(e.to_string()))?;
    let tally = Tally::from_json(tally).map_err(|e| CheckpointError::InvalidTally {
        file: file.to_string(),
        problem: e.within("tally"),
    })?;
    if head.format != CHECKPOINT_FORMAT {
        return Err(damaged(format!(
            "format {} (this sojourn reads format {CHECKPOINT_FORMAT})",
            head.format
        )));
    }
    if head.photons_done > head.identity.photons {
        return Err(damaged(format!(
            "{} photons done of a run of {}",
            head.photons_done, head.identity.photons
        )));
    }
    if tally.launched() != head.photons_done {
        return Err(damaged(format!(
            "the tally does not hold the {} photons done",
            head.photons_done
        )));
    }
    if !(head.elapsed_s.is_finite() && head.elapsed_s >= 0.0) {
        return Err(damaged(format!(
            "elapsed_s = {}: expected a wall-clock time >= 0 s",
            head.elapsed_s
        )));
    }
    Ok(Checkpoint {
        format: head.format,
        identity: head.identity,
        photons_done: head.photons_done,
        elapsed_s: head.elapsed_s,
        tally,
    })
}

/// Reads the checkpoint at `path` and checks that it belongs to the run `identity`.
fn load(
    text: &str,
    path: &Path,
    identity: &CheckpointIdentity,
) -> Result<Checkpoint, CheckpointError> {
    let file = path.display().to_string();
    let state = read_checkpoint(text, &file)?;
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
    Ok(state)
}
