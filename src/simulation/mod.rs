//! Running many photons: parallel over photons with rayon, one random stream per photon,
//! tallies merged exactly, so a seed fixes the result bit for bit whatever the thread count.
//! [`plan`] decides beforehand which walker runs and what it will cost.

mod plan;

pub use plan::{
    DIRECT_PREFERRED_FLIGHTS, LONG_RUN_STEPS, PlanError, STEPS_PER_CORE_SECOND, WalkPlan, plan,
};

use std::time::Instant;

use rayon::prelude::*;

use crate::medium::Medium;
use crate::tally::Tally;
use crate::tally::{AbsorbedAlongPath, PhotonRecord, ResolvedLayout};
pub use crate::transport::Absorption;
use crate::transport::rng::photon_rng;
use crate::transport::{AcceleratedWalker, Acceleration, DirectWalker, PathLedger, WalkLimits};

/// How photons are walked.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Method {
    /// Every flight and scattering simulated.
    Direct,
    /// Diffusion jumps deep inside (radial passages in spheres, local jumps in slabs),
    /// direct steps elsewhere.
    Accelerated,
    /// Direct or accelerated, whichever [`plan`] estimates to be cheaper.
    #[default]
    Auto,
}

impl std::str::FromStr for Method {
    type Err = String;

    fn from_str(text: &str) -> Result<Self, Self::Err> {
        match text {
            "direct" => Ok(Method::Direct),
            "accelerated" => Ok(Method::Accelerated),
            "auto" => Ok(Method::Auto),
            other => Err(format!(
                "unknown walk method {other:?}: expected direct, accelerated or auto"
            )),
        }
    }
}

impl Method {
    /// The method's name as written on the command line and in reports.
    pub fn name(self) -> &'static str {
        match self {
            Method::Direct => "direct",
            Method::Accelerated => "accelerated",
            Method::Auto => "auto",
        }
    }
}

/// The walker a run uses.
enum Walker {
    Direct(DirectWalker),
    Accelerated(AcceleratedWalker),
}

impl Walker {
    fn new(medium: &Medium, config: &RunConfig) -> Self {
        let keep_deposits = config.resolved.is_some();
        match plan(medium, config).method {
            Method::Accelerated => Walker::Accelerated(
                AcceleratedWalker::new(medium, config.limits, config.acceleration)
                    .with_absorption(config.absorption, keep_deposits),
            ),
            Method::Direct | Method::Auto => Walker::Direct(
                DirectWalker::new(medium, config.limits)
                    .with_absorption(config.absorption, keep_deposits),
            ),
        }
    }

    fn walk(
        &self,
        rng: &mut crate::transport::rng::PhotonRng,
        absorbed: &mut AbsorbedAlongPath,
        ledger: &mut PathLedger,
    ) -> PhotonRecord {
        match self {
            Walker::Direct(walker) => walker.walk_weighted_with_ledger(rng, absorbed, ledger),
            Walker::Accelerated(walker) => walker.walk_weighted_with_ledger(rng, absorbed, ledger),
        }
    }
}

/// What to run.
#[derive(Debug, Clone, PartialEq)]
pub struct RunConfig {
    /// Number of photons.
    pub photons: u64,
    /// Seed of the random streams.
    pub seed: u64,
    /// Stream id (e.g. the index of a sweep point); photons of different streams are
    /// independent.
    pub stream: u64,
    /// Index of the first photon (shards run disjoint index ranges of one run).
    pub first_photon: u64,
    /// Per-photon limits.
    pub limits: WalkLimits,
    /// Walk method.
    pub method: Method,
    /// Parameters of the accelerated walk (used by `Accelerated` and `Auto`).
    pub acceleration: Acceleration,
    /// Resolved slab tallies to keep (time of flight, depth, angle, radius), if any.
    pub resolved: Option<ResolvedLayout>,
    /// How absorption is simulated (analog by default).
    pub absorption: Absorption,
}

impl Default for RunConfig {
    fn default() -> Self {
        Self {
            photons: 10_000,
            seed: 1,
            stream: 0,
            first_photon: 0,
            limits: WalkLimits::default(),
            method: Method::default(),
            acceleration: Acceleration::default(),
            resolved: None,
            absorption: Absorption::Analog,
        }
    }
}

impl RunConfig {
    /// A canonical description of everything that shapes each photon's walk and tally
    /// besides the photon range and seed: method, acceleration parameters, step cap and
    /// resolved-tally bins, and the absorption treatment when it is not analog (so that
    /// analog descriptions are those of earlier versions). Runs that differ here must not
    /// be merged.
    pub fn walk_description(&self) -> String {
        let mut description = serde_json::json!({
            "method": self.method.name(),
            "acceleration": self.acceleration,
            "max_steps": self.limits.max_steps,
            "resolved": self.resolved,
        });
        if self.absorption != Absorption::Analog {
            description["absorption"] = self.absorption.name().into();
        }
        description.to_string()
    }
}

/// The result of a run: the merged tally and the wall-clock time it took.
#[derive(Debug, Clone)]
pub struct RunResult {
    /// Merged outcomes of all photons.
    pub tally: Tally,
    /// Wall-clock time of the run, s (not reproducible; excluded from comparisons).
    pub elapsed_s: f64,
}

/// Runs `config.photons` photons through `medium`.
/// Runs on the current rayon thread pool; to choose the thread count, call it inside
/// `rayon::ThreadPoolBuilder::new().num_threads(n).build()?.install(|| run(..))`.
pub fn run(medium: &Medium, config: &RunConfig) -> RunResult {
    run_with_progress(medium, config, &|_| {})
}

/// Like [`run`], calling `progress(photons done)` from time to time (from the calling
/// thread, between batches).
pub fn run_with_progress(
    medium: &Medium,
    config: &RunConfig,
    progress: &(dyn Fn(u64) + Sync),
) -> RunResult {
    let started = Instant::now();
    let walker = Walker::new(medium, config);
    let weighted = config.absorption == Absorption::Weighted;
    let mut tally = Tally::for_run(medium, config.resolved);
    let end = config.first_photon + config.photons;
    let batch = (config.photons / 100).clamp(1_000, 1_000_000);
    let mut start = config.first_photon;
    while start < end {
        let stop = (start + batch).min(end);
        let part = (start..stop)
            .into_par_iter()
            .fold(
                || {
                    (
                        Tally::for_run(medium, config.resolved),
                        (PathLedger::for_medium(medium), AbsorbedAlongPath::default()),
                    )
                },
                |(mut tally, (mut ledger, mut absorbed)), photon| {
                    let mut rng = photon_rng(config.seed, config.stream, photon);
                    let record = walker.walk(&mut rng, &mut absorbed, &mut ledger);
                    if weighted {
                        tally.record_weighted_with_residence(&record, &absorbed, &ledger);
                    } else {
                        tally.record_with_residence(&record, &ledger);
                    }
                    (tally, (ledger, absorbed))
                },
            )
            .map(|(tally, _)| tally)
            .reduce(
                || Tally::for_run(medium, config.resolved),
                |mut a, b| {
                    a.merge(&b);
                    a
                },
            );
        tally.merge(&part);
        start = stop;
        progress(start - config.first_photon);
    }
    RunResult {
        tally,
        elapsed_s: started.elapsed().as_secs_f64(),
    }
}
