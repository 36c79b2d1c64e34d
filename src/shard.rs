//! Shards: a run (or a sweep) split into N disjoint parts that run anywhere, in any order,
//! and merge into exactly the unsplit result.
//!
//! Shard K of N (numbered **1..=N**, as a Slurm job array `--array=1-N` numbers its tasks)
//! runs the photon indices `[T·(K−1)/N, T·K/N)` of a run of T photons. Because every
//! photon's random stream depends only on (seed, stream, photon index) and tallies merge
//! exactly, the merged tally of all N shards equals, bit for bit, the tally of the unsplit
//! run. A shard file written by `sojourn run --shard K/N --json PATH` is the usual JSON
//! report of the shard's own photons plus two keys: `shard` ([`RunShardInfo`]: which part,
//! of which run, with the model itself) and `tally` (the exact tally state).
//! [`merge_run_shards`] checks that the files belong together and rebuilds the full run.

use std::fmt;
use std::ops::Range;
use std::str::FromStr;

use serde::{Deserialize, Serialize};
use serde_json::Value;
use thiserror::Error;

use crate::analysis::RunAnalysis;
use crate::file_format::format_problem;
use crate::fingerprint::{canonical_json, fingerprint};
use crate::input::{InputError, from_json_value, plain_message, strip_bom};
use crate::medium::Medium;
use crate::medium::model_file::{ModelError, model_from_value};
use crate::simulation::{Absorption, Method, RunConfig, RunResult};
use crate::tally::{ResolvedLayout, Tally, TallyError};
use crate::transport::Acceleration;
use crate::transport::WalkLimits;

/// Version of the shard-file layout; merge refuses other versions. Format 2: tallies with
/// weights, histograms keyed on the bits of the value, checked as they are read. Format 3: tallies
/// with residence by cell and path by layer.
pub const SHARD_FORMAT: u32 = 3;

/// Part K of N (1 ≤ K ≤ N) of a run or a sweep.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(try_from = "RawShard")]
pub struct Shard {
    index: u64,
    count: u64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawShard {
    index: u64,
    count: u64,
}

impl TryFrom<RawShard> for Shard {
    type Error = ShardError;
    fn try_from(raw: RawShard) -> Result<Self, Self::Error> {
        Shard::new(raw.index, raw.count)
    }
}

/// A shard specification that is not `K/N` with 1 ≤ K ≤ N.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
#[non_exhaustive]
pub enum ShardError {
    /// Not of the form `K/N` with two whole numbers.
    #[error("shard {text:?}: expected K/N with whole numbers, e.g. 2/5 (shards are numbered 1..N)")]
    Syntax {
        /// The text given.
        text: String,
    },
    /// K or N out of range.
    #[error("shard {index}/{count}: expected 1 <= K <= N (shards are numbered 1..N)")]
    Range {
        /// K.
        index: u64,
        /// N.
        count: u64,
    },
}

impl Shard {
    /// Shard `index` of `count` (1-based).
    ///
    /// # Errors
    /// [`ShardError::Range`] unless 1 ≤ index ≤ count.
    pub fn new(index: u64, count: u64) -> Result<Self, ShardError> {
        if index == 0 || index > count {
            return Err(ShardError::Range { index, count });
        }
        Ok(Self { index, count })
    }

    /// The whole run: shard 1 of 1.
    pub fn whole() -> Self {
        Self { index: 1, count: 1 }
    }

    /// K, from 1 to N.
    pub fn index(&self) -> u64 {
        self.index
    }

    /// N, the number of shards.
    pub fn count(&self) -> u64 {
        self.count
    }

    /// Whether this is the whole run (1/1).
    pub fn is_whole(&self) -> bool {
        self.count == 1
    }

    /// The photon indices of this shard within a run of `total` photons:
    /// `[total·(K−1)/N, total·K/N)`. The N ranges are disjoint, cover `0..total`, and
    /// differ in length by at most one photon.
    ///
    /// # Examples
    /// ```
    /// use sojourn::shard::Shard;
    /// let ranges: Vec<_> = (1..=3).map(|k| Shard::new(k, 3).unwrap().photon_range(10)).collect();
    /// assert_eq!(ranges, vec![0..3, 3..6, 6..10]);
    /// ```
    pub fn photon_range(&self, total: u64) -> Range<u64> {
        let at = |k: u64| ((total as u128 * k as u128) / self.count as u128) as u64;
        at(self.index - 1)..at(self.index)
    }

    /// The file-name tag of this shard, `shard-K-of-N`.
    pub fn tag(&self) -> String {
        format!("shard-{}-of-{}", self.index, self.count)
    }
}

impl fmt::Display for Shard {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}/{}", self.index, self.count)
    }
}

impl FromStr for Shard {
    type Err = ShardError;
    fn from_str(text: &str) -> Result<Self, Self::Err> {
        let syntax = || ShardError::Syntax {
            text: text.to_string(),
        };
        let (k, n) = text.split_once('/').ok_or_else(syntax)?;
        let k: u64 = k.trim().parse().map_err(|_| syntax())?;
        let n: u64 = n.trim().parse().map_err(|_| syntax())?;
        Shard::new(k, n)
    }
}

/// What a run shard file says about itself, beyond its report: everything merge needs to
/// check that shards belong together and to rebuild the full report with no other input.
///
/// Made by [`RunShardInfo::new`]; reading one from JSON checks that it is consistent in
/// itself (format, photon range, method, step cap, model hash) and that its model builds.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "RunShardInfoRepr")]
pub struct RunShardInfo {
    format: u32,
    shard: Shard,
    total_photons: u64,
    first_photon: u64,
    photons: u64,
    seed: u64,
    stream: u64,
    max_steps: u64,
    method: String,
    acceleration: Acceleration,
    resolved: Option<ResolvedLayout>,
    /// Absorption treatment; absent (analog) in the files of earlier versions.
    #[serde(default, skip_serializing_if = "is_analog")]
    absorption: Absorption,
    model_hash: String,
    model_file: String,
    model: Value,
}

/// A [`RunShardInfo`] as read, before its checks.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RunShardInfoRepr {
    format: u32,
    shard: Shard,
    total_photons: u64,
    first_photon: u64,
    photons: u64,
    seed: u64,
    stream: u64,
    max_steps: u64,
    method: String,
    acceleration: Acceleration,
    resolved: Option<ResolvedLayout>,
    /// Absorption treatment; absent (analog) in the files of earlier versions.
    #[serde(default, skip_serializing_if = "is_analog")]
    absorption: Absorption,
    model_hash: String,
    model_file: String,
    model: Value,
}

impl TryFrom<RunShardInfoRepr> for RunShardInfo {
    type Error = String;

    fn try_from(repr: RunShardInfoRepr) -> Result<Self, String> {
        if repr.format != SHARD_FORMAT {
            return Err(format!(
                "shard format {} (this sojourn reads format {SHARD_FORMAT})",
                repr.format
            ));
        }
        if repr.total_photons == 0 {
            return Err("total_photons = 0: a run has at least 1 photon".into());
        }
        let expected = repr.shard.photon_range(repr.total_photons);
        if repr.first_photon != expected.start || repr.photons != expected.end - expected.start {
            return Err(format!(
                "photons {}..{} are not shard {} of {} photons ({}..{})",
                repr.first_photon,
                repr.first_photon.saturating_add(repr.photons),
                repr.shard,
                repr.total_photons,
                expected.start,
                expected.end
            ));
        }
        if repr.max_steps == 0 {
            return Err("max_steps = 0: a walk has at least 1 step".into());
        }
        repr.method
            .parse::<Method>()
            .map_err(|problem| format!("method: {problem}"))?;
        if fingerprint(&repr.model) != repr.model_hash {
            return Err(format!(
                "model_hash {} does not match the embedded model ({})",
                repr.model_hash,
                fingerprint(&repr.model)
            ));
        }
        model_from_value(&repr.model, &repr.model_file)
            .map_err(|error| format!("the embedded model does not build: {error}"))?;
        Ok(Self {
            format: repr.format,
            shard: repr.shard,
            total_photons: repr.total_photons,
            first_photon: repr.first_photon,
            photons: repr.photons,
            seed: repr.seed,
            stream: repr.stream,
            max_steps: repr.max_steps,
            method: repr.method,
            acceleration: repr.acceleration,
            resolved: repr.resolved,
            absorption: repr.absorption,
            model_hash: repr.model_hash,
            model_file: repr.model_file,
            model: repr.model,
        })
    }
}

impl RunShardInfo {
    /// Describes shard `shard` of a run of `total_photons` photons with `config` (whose
    /// `first_photon` and `photons` must already be the shard's range) on the model whose
    /// JSON is `model`, read from `model_file`.
    pub fn new(
        shard: Shard,
        total_photons: u64,
        config: &RunConfig,
        method: &str,
        model: Value,
        model_file: &str,
    ) -> Self {
        Self {
            format: SHARD_FORMAT,
            shard,
            total_photons,
            first_photon: config.first_photon,
            photons: config.photons,
            seed: config.seed,
            stream: config.stream,
            max_steps: config.limits.max_steps,
            method: method.to_string(),
            acceleration: config.acceleration,
            resolved: config.resolved,
            absorption: config.absorption,
            model_hash: fingerprint(&model),
            model_file: model_file.to_string(),
            model,
        }
    }

    /// Which part this is.
    pub fn shard(&self) -> Shard {
        self.shard
    }

    /// Photons of the whole run.
    pub fn total_photons(&self) -> u64 {
        self.total_photons
    }

    /// First photon index of this shard, and its photon count.
    pub fn photon_range(&self) -> std::ops::Range<u64> {
        self.first_photon..self.first_photon + self.photons
    }

    /// The model file's label as given on the command line (reported as `model.file`).
    pub fn model_file(&self) -> &str {
        &self.model_file
    }

    /// The model file's JSON, so that merge can rebuild the medium.
    pub fn model(&self) -> &Value {
        &self.model
    }
}

/// The shard file: the shard's own report (any serialisable map, in practice
/// `report::RunReport`) with `shard` and `tally` added.
#[derive(Debug, Serialize)]
pub struct RunShardReport<'a, R: Serialize> {
    /// The report of the shard's photons alone (its keys stay at the top level).
    #[serde(flatten)]
    pub report: &'a R,
    /// Which part of which run.
    pub shard: &'a RunShardInfo,
    /// The exact tally of the shard's photons.
    pub tally: &'a Tally,
}

/// A shard file read back: its description, its tally, its wall-clock time and its label.
#[derive(Debug, Clone)]
pub struct RunShard {
    /// Which part of which run.
    pub info: RunShardInfo,
    /// The exact tally of its photons.
    pub tally: Tally,
    /// Wall-clock time of the shard, s.
    pub elapsed_s: f64,
    /// Where it was read from (for messages).
    pub file: String,
}

/// The parts of a run shard file that merge reads besides its tally (the report's other
/// keys are ignored: merge rebuilds the report).
#[derive(Deserialize)]
struct RunShardFile {
    shard: RunShardInfo,
    #[serde(default)]
    elapsed_s: f64,
}

/// Shard files that cannot be merged, and why.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum MergeError {
    /// Nothing to merge.
    #[error("no shard files given")]
    Empty,
    /// A file could not be read.
    #[error("{file}: cannot read: {cause}")]
    Read {
        /// The file.
        file: String,
        /// The operating-system error.
        cause: std::io::Error,
    },
    /// The file is not readable within the input limits (see [`crate::input`]).
    #[error(transparent)]
    Input(#[from] InputError),
    /// A file is not a shard file of the expected kind.
    #[error("{file}: not a shard file: {problem}")]
    NotAShard {
        /// The file.
        file: String,
        /// What was found instead.
        problem: String,
    },
    /// A shard file whose content contradicts itself (edited or damaged).
    #[error("{file}: damaged shard file: {problem}")]
    Damaged {
        /// The file.
        file: String,
        /// What is inconsistent.
        problem: String,
    },
    /// A shard file whose tally contradicts itself (edited or damaged).
    #[error("{file}: damaged shard file: {problem}")]
    InvalidTally {
        /// The file.
        file: String,
        /// What is inconsistent, with the path of the field inside the file.
        problem: TallyError,
    },
    /// Two shards of different runs (or sweeps).
    #[error("{0}")]
    Mismatch(Box<Mismatch>),
    /// The same shard given twice (overlapping photon ranges).
    #[error("shard {shard} is given twice ({first} and {second}): their photons overlap")]
    Duplicate {
        /// The shard.
        shard: Shard,
        /// One file.
        first: String,
        /// The other.
        second: String,
    },
    /// Not every shard of the run is present.
    #[error(
        "missing shard(s) {missing} of {count}: every shard 1..{count} is needed for the full result"
    )]
    Missing {
        /// The missing indices, comma-separated.
        missing: String,
        /// N.
        count: u64,
    },
    /// The embedded model no longer builds a medium.
    #[error(transparent)]
    Model(#[from] Box<ModelError>),
}

/// Two shards that differ in a field that must be the same across one run or sweep.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Mismatch {
    /// "run" or "sweep".
    pub what: &'static str,
    /// The file compared against.
    pub first: String,
    /// The file that differs.
    pub other: String,
    /// The field that differs.
    pub field: String,
    /// Its value in `first`.
    pub first_value: String,
    /// Its value in `other`.
    pub other_value: String,
}

impl fmt::Display for Mismatch {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{}: {} is {}, but {} has {}: these shards are not parts of the same {}",
            self.other, self.field, self.other_value, self.first, self.first_value, self.what
        )
    }
}

/// Reads a run shard file from `text`; `file` labels errors.
///
/// # Errors
/// [`MergeError::NotAShard`] for other JSON, [`MergeError::Damaged`] when the content
/// contradicts itself (model hash, photon range or tally).
pub fn read_run_shard(text: &str, file: &str) -> Result<RunShard, MergeError> {
    let value: Value =
        serde_json::from_str(strip_bom(text)).map_err(|e| MergeError::NotAShard {
            file: file.to_string(),
            problem: format!("not valid JSON: {}", plain_message(&e.to_string())),
        })?;
    run_shard_from_value(value, file)
}

/// Reads a run shard file from its parsed JSON; see [`read_run_shard`].
pub(crate) fn run_shard_from_value(value: Value, file: &str) -> Result<RunShard, MergeError> {
    if value.get("spec_hash").is_some() && value.get("point").is_some() {
        return Err(MergeError::NotAShard {
            file: file.to_string(),
            problem:
                "this is one point of a sweep; merge the sweep's bundles OUT/shard-K-of-N.json"
                    .into(),
        });
    }
    if value.get("shard").is_none() || value.get("tally").is_none() {
        return Err(MergeError::NotAShard {
            file: file.to_string(),
            problem: "no \"shard\" and \"tally\" keys; write shard files with `sojourn run MODEL --shard K/N --json PATH`".into(),
        });
    }
    let damaged = |problem: String| MergeError::Damaged {
        file: file.to_string(),
        problem,
    };
    if let Some(problem) = format_problem(&value, "/shard/format", SHARD_FORMAT, "shard") {
        return Err(damaged(problem));
    }
    let mut value = value;
    let tally = value
        .as_object_mut()
        .and_then(|object| object.remove("tally"))
        .unwrap_or(Value::Null);
    let parsed: RunShardFile = from_json_value(&value).map_err(|e| damaged(e.to_string()))?;
    let tally = Tally::from_json(tally).map_err(|e| MergeError::InvalidTally {
        file: file.to_string(),
        problem: e.within("tally"),
    })?;
    if !(parsed.elapsed_s.is_finite() && parsed.elapsed_s >= 0.0) {
        return Err(damaged(format!(
            "elapsed_s = {}: expected a wall-clock time >= 0 s",
            parsed.elapsed_s
        )));
    }
    let shard = RunShard {
        info: parsed.shard,
        tally,
        elapsed_s: parsed.elapsed_s,
        file: file.to_string(),
    };
    let info = &shard.info;
    check_tally(&shard.tally, info.photons, file)?;
    let kept = shard.tally.resolved().map(|r| r.layout());
    if kept != info.resolved {
        return Err(damaged(format!(
            "the tally keeps resolved bins {kept:?}, the shard says {:?}",
            info.resolved
        )));
    }
    Ok(shard)
}

/// Checks a tally read from a file (already consistent in itself, see
/// [`Tally::from_json`]) against its file: it holds exactly `photons` photons.
pub(crate) fn check_tally(tally: &Tally, photons: u64, file: &str) -> Result<(), MergeError> {
    let damaged = |problem: String| MergeError::Damaged {
        file: file.to_string(),
        problem,
    };
    if tally.launched() != photons {
        return Err(damaged(format!(
            "the tally holds {} photons, the shard {photons}",
            tally.launched()
        )));
    }
    Ok(())
}

/// Checks that `shards` (with the file each came from) are each of 1..N exactly once.
pub(crate) fn check_coverage(shards: &[(Shard, &str)]) -> Result<(), MergeError> {
    let Some(&(first, _)) = shards.first() else {
        return Err(MergeError::Empty);
    };
    let count = first.count();
    let mut seen: Vec<Option<&str>> = vec![None; count as usize];
    for &(shard, file) in shards {
        let slot = &mut seen[(shard.index() - 1) as usize];
        if let Some(previous) = slot {
            return Err(MergeError::Duplicate {
                shard,
                first: previous.to_string(),
                second: file.to_string(),
            });
        }
        *slot = Some(file);
    }
    let missing: Vec<String> = seen
        .iter()
        .enumerate()
        .filter(|(_, file)| file.is_none())
        .map(|(index, _)| (index + 1).to_string())
        .collect();
    if !missing.is_empty() {
        return Err(MergeError::Missing {
            missing: missing.join(", "),
            count,
        });
    }
    Ok(())
}

/// Compares one field of two shards; `Err(Mismatch)` when they differ.
pub(crate) fn same<T: PartialEq + fmt::Display>(
    what: &'static str,
    field: &str,
    (first_file, first): (&str, T),
    (other_file, other): (&str, T),
) -> Result<(), MergeError> {
    if first == other {
        return Ok(());
    }
    Err(MergeError::Mismatch(Box::new(Mismatch {
        what,
        first: first_file.to_string(),
        other: other_file.to_string(),
        field: field.to_string(),
        first_value: first.to_string(),
        other_value: other.to_string(),
    })))
}

/// A run rebuilt from its shards: the medium, the model label, the configuration of the
/// whole run and the merged result (wall-clock time: the sum over shards).
#[derive(Debug, Clone)]
pub struct MergedRun {
    /// The medium, rebuilt from the embedded model.
    pub medium: Medium,
    /// The model label of shard 1.
    pub model_file: String,
    /// The whole run's configuration.
    pub config: RunConfig,
    /// The merged tally (identical to the unsplit run's) and the summed wall-clock time.
    pub result: RunResult,
}

impl MergedRun {
    /// The analysis of the whole run (identical to the unsplit run's).
    pub fn analysis(&self) -> RunAnalysis {
        RunAnalysis::new(&self.medium, &self.config, &self.result.tally)
    }
}

/// Merges the shards of one run.
///
/// # Errors
/// [`MergeError`] when the shards are not all of one run (model, seed, stream, step cap,
/// method, photon count or shard count differ), when a shard is given twice or is missing,
/// or when the model no longer builds.
pub fn merge_run_shards(mut shards: Vec<RunShard>) -> Result<MergedRun, MergeError> {
    shards.sort_by_key(|s| s.info.shard.index());
    let Some(first) = shards.first() else {
        return Err(MergeError::Empty);
    };
    let a = &first.info;
    for other in &shards[1..] {
        let b = &other.info;
        let (f, o) = (first.file.as_str(), other.file.as_str());
        same("run", "model_hash", (f, &a.model_hash), (o, &b.model_hash))?;
        let (model_a, model_b) = (canonical_json(&a.model), canonical_json(&b.model));
        same("run", "model", (f, &model_a), (o, &model_b))?;
        same("run", "seed", (f, a.seed), (o, b.seed))?;
        same("run", "stream", (f, a.stream), (o, b.stream))?;
        same("run", "max_steps", (f, a.max_steps), (o, b.max_steps))?;
        same("run", "method", (f, &a.method), (o, &b.method))?;
        let settings = |info: &RunShardInfo| {
            serde_json::json!({
                "acceleration": info.acceleration,
                "resolved": info.resolved,
                "absorption": info.absorption,
            })
            .to_string()
        };
        same("run", "walk settings", (f, &settings(a)), (o, &settings(b)))?;
        same(
            "run",
            "total_photons",
            (f, a.total_photons),
            (o, b.total_photons),
        )?;
        same(
            "run",
            "shard count",
            (f, a.shard.count()),
            (o, b.shard.count()),
        )?;
    }
    let listed: Vec<(Shard, &str)> = shards
        .iter()
        .map(|s| (s.info.shard, s.file.as_str()))
        .collect();
    check_coverage(&listed)?;
    let medium = model_from_value(&a.model, &a.model_file).map_err(Box::new)?;
    let mut tally = Tally::new();
    let mut elapsed_s = 0.0;
    for shard in &shards {
        tally.merge(&shard.tally);
        elapsed_s += shard.elapsed_s;
    }
    Ok(MergedRun {
        medium,
        model_file: a.model_file.clone(),
        config: RunConfig {
            photons: a.total_photons,
            seed: a.seed,
            stream: a.stream,
            first_photon: 0,
            limits: WalkLimits {
                max_steps: a.max_steps,
            },
            method: a
                .method
                .parse()
                .map_err(|problem: String| MergeError::Damaged {
                    file: first.file.clone(),
                    problem: format!("shard.method: {problem}"),
                })?,
            acceleration: a.acceleration,
            resolved: a.resolved,
            absorption: a.absorption,
        },
        result: RunResult { tally, elapsed_s },
    })
}

/// Whether `absorption` is analog (left out of shard files, as before weighting existed).
fn is_analog(absorption: &Absorption) -> bool {
    *absorption == Absorption::Analog
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn parses_and_prints_k_of_n() {
        let shard: Shard = "2/5".parse().unwrap();
        assert_eq!((shard.index(), shard.count()), (2, 5));
        assert_eq!(shard.to_string(), "2/5");
        assert_eq!(shard.tag(), "shard-2-of-5");
        for bad in ["0/3", "4/3", "1/0", "x/2", "3", "1/2/3", "-1/2"] {
            assert!(bad.parse::<Shard>().is_err(), "{bad}");
        }
    }

    #[test]
    fn coverage_names_missing_and_duplicate_shards() {
        let s = |k| Shard::new(k, 4).unwrap();
        let missing = check_coverage(&[(s(1), "a"), (s(3), "c")]).unwrap_err();
        assert!(missing.to_string().contains("missing shard(s) 2, 4 of 4"));
        let twice = check_coverage(&[(s(1), "a"), (s(1), "b")]).unwrap_err();
        assert!(
            twice
                .to_string()
                .contains("shard 1/4 is given twice (a and b)")
        );
    }

    proptest! {
        #[test]
        fn ranges_partition_the_run(total in 0u64..1_000_000, count in 1u64..64) {
            let mut next = 0;
            for index in 1..=count {
                let range = Shard::new(index, count).unwrap().photon_range(total);
                prop_assert_eq!(range.start, next);
                prop_assert!(range.end - range.start <= total / count + 1);
                next = range.end;
            }
            prop_assert_eq!(next, total);
        }
    }
}
