//! The run report: everything a user reads from a run, as one serialisable structure whose
//! JSON keys are documented in the README.

use serde::Serialize;

use crate::diffusion::{self, DiffusionEstimate};
use crate::medium::{Geometry, Medium};
use crate::simulation::{Method, RunConfig, RunResult};
use crate::tally::{PathStats, Tally};

use super::slab_optics::{ResolvedSummary, SlabDiffusion, resolved_summary, slab_diffusion};

/// Where the model came from and what it is.
#[derive(Debug, Clone, Serialize)]
pub struct ModelSummary {
    /// Name given in the model file.
    pub name: String,
    /// File the model was read from (or the embedded demo label).
    pub file: String,
    /// Number of layers.
    pub layers: usize,
    /// Outer radius (sphere) or thickness (slab), cm.
    pub size_cm: f64,
    /// Length unit the model file used.
    pub length_unit: String,
}

/// Fractions of launched photons by outcome (null where the geometry has no such outcome).
#[derive(Debug, Clone, Serialize)]
pub struct OutcomeFractions {
    /// Left a sphere.
    pub escaped: Option<f64>,
    /// Left a slab through the top face after entering it (diffuse reflectance).
    pub reflected: Option<f64>,
    /// Reflected by the top face before entering (specular reflectance of the incident
    /// light; 0 for matched indices and for internal sources).
    pub specular: Option<f64>,
    /// Left a slab through the bottom face (total transmittance, unscattered included).
    pub transmitted: Option<f64>,
    /// Absorbed inside.
    pub absorbed: f64,
    /// Stopped by the step cap.
    pub censored: f64,
    /// Binomial standard errors of the fractions above, in the same order.
    pub stderr: OutcomeStderr,
}

/// Binomial standard errors of [`OutcomeFractions`].
#[derive(Debug, Clone, Serialize)]
pub struct OutcomeStderr {
    /// Of `escaped`.
    pub escaped: Option<f64>,
    /// Of `reflected`.
    pub reflected: Option<f64>,
    /// Of `specular`.
    pub specular: Option<f64>,
    /// Of `transmitted`.
    pub transmitted: Option<f64>,
    /// Of `absorbed`.
    pub absorbed: f64,
    /// Of `censored`.
    pub censored: f64,
}

/// Mean, spread and quantiles of a distribution. Keys carry the unit suffix given at
/// construction (`_s` for times, none for counts). Quantiles come from the log-binned
/// histogram (resolution ±0.6 %).
#[derive(Debug, Clone, Default, Serialize)]
pub struct DistributionSummary {
    /// Number of photons in the distribution.
    pub count: u64,
    /// Mean.
    pub mean: Option<f64>,
    /// Standard error of the mean.
    pub stderr: Option<f64>,
    /// Standard deviation.
    pub std_dev: Option<f64>,
    /// Smallest value.
    pub min: Option<f64>,
    /// Largest value.
    pub max: Option<f64>,
    /// 5 % quantile.
    pub p05: Option<f64>,
    /// 25 % quantile.
    pub p25: Option<f64>,
    /// Median.
    pub median: Option<f64>,
    /// 75 % quantile.
    pub p75: Option<f64>,
    /// 95 % quantile.
    pub p95: Option<f64>,
}

impl DistributionSummary {
    fn of_time(stats: &PathStats) -> Self {
        Self::build(stats.count(), &stats.time_s, &stats.time_histogram)
    }

    fn of_scatterings(stats: &PathStats) -> Self {
        Self::build(
            stats.count(),
            &stats.scatterings,
            &stats.scattering_histogram,
        )
    }

    fn build(
        count: u64,
        moments: &crate::tally::Moments,
        histogram: &crate::tally::LogHistogram,
    ) -> Self {
        Self {
            count,
            mean: moments.mean(),
            stderr: moments.std_error(),
            std_dev: moments.std_dev(),
            min: moments.min(),
            max: moments.max(),
            p05: histogram.quantile(0.05),
            p25: histogram.quantile(0.25),
            median: histogram.quantile(0.5),
            p75: histogram.quantile(0.75),
            p95: histogram.quantile(0.95),
        }
    }

    /// The same summary serialised with `_s` suffixes (times in seconds).
    fn seconds(&self) -> TimeSummary {
        TimeSummary {
            count: self.count,
            mean_s: self.mean,
            stderr_s: self.stderr,
            std_dev_s: self.std_dev,
            min_s: self.min,
            max_s: self.max,
            p05_s: self.p05,
            p25_s: self.p25,
            median_s: self.median,
            p75_s: self.p75,
            p95_s: self.p95,
        }
    }
}

/// A [`DistributionSummary`] of times, with `_s` key suffixes.
#[derive(Debug, Clone, Serialize)]
pub struct TimeSummary {
    /// Number of photons.
    pub count: u64,
    /// Mean, s.
    pub mean_s: Option<f64>,
    /// Standard error of the mean, s.
    pub stderr_s: Option<f64>,
    /// Standard deviation, s.
    pub std_dev_s: Option<f64>,
    /// Smallest, s.
    pub min_s: Option<f64>,
    /// Largest, s.
    pub max_s: Option<f64>,
    /// 5 % quantile, s.
    pub p05_s: Option<f64>,
    /// 25 % quantile, s.
    pub p25_s: Option<f64>,
    /// Median, s.
    pub median_s: Option<f64>,
    /// 75 % quantile, s.
    pub p75_s: Option<f64>,
    /// 95 % quantile, s.
    pub p95_s: Option<f64>,
}

/// Diffusion-theory values for the model (see [`crate::diffusion::estimate`]).
#[derive(Debug, Clone, Serialize)]
pub struct DiffusionSummary {
    /// Optical depth source → surface (sphere) or total thickness (slab).
    pub optical_depth: f64,
    /// Smallest mean free path, cm.
    pub mean_free_path_min_cm: f64,
    /// Largest mean free path, cm.
    pub mean_free_path_max_cm: f64,
    /// Rule of thumb N ≈ τ².
    pub naive_scatterings: f64,
    /// Rule of thumb t ≈ τ L n̄ / c, s.
    pub naive_time_s: f64,
    /// Mean exit time of steady diffusion, surface at the boundary, s.
    pub mean_time_s: f64,
    /// Mean exit time with the Milne extrapolated boundary (q∞ = 0.7104 l_tr), s.
    pub mean_time_extrapolated_s: f64,
    /// Scatterings implied by `mean_time_s`.
    pub mean_scatterings: f64,
    /// Scatterings implied by `mean_time_extrapolated_s`.
    pub mean_scatterings_extrapolated: f64,
    /// Residence time of diffusion in each layer, s (sums to `mean_time_s`).
    pub layer_residence_s: Vec<f64>,
}

impl From<&DiffusionEstimate> for DiffusionSummary {
    fn from(estimate: &DiffusionEstimate) -> Self {
        Self {
            optical_depth: estimate.optical_depth,
            mean_free_path_min_cm: estimate.mean_free_path_min_cm,
            mean_free_path_max_cm: estimate.mean_free_path_max_cm,
            naive_scatterings: estimate.naive_scatterings,
            naive_time_s: estimate.naive_time_s,
            mean_time_s: estimate.mean_time_s,
            mean_time_extrapolated_s: estimate.mean_time_extrapolated_s,
            mean_scatterings: estimate.mean_scatterings,
            mean_scatterings_extrapolated: estimate.mean_scatterings_extrapolated,
            layer_residence_s: estimate.layer_residence_s.clone(),
        }
    }
}

/// Monte Carlo against diffusion theory.
#[derive(Debug, Clone, Serialize)]
pub struct Comparison {
    /// Monte Carlo mean escape time / diffusion mean exit time with the extrapolated
    /// boundary.
    pub time_ratio: Option<f64>,
    /// 1σ uncertainty of `time_ratio` (from the Monte Carlo standard error).
    pub time_ratio_stderr: Option<f64>,
    /// Monte Carlo mean escape time / diffusion mean exit time without extrapolation.
    pub time_ratio_plain: Option<f64>,
    /// Monte Carlo mean escape time / the rule of thumb's time.
    pub naive_time_ratio: Option<f64>,
    /// Monte Carlo mean scatterings / diffusion (extrapolated) scatterings.
    pub scatterings_ratio: Option<f64>,
    /// Kolmogorov–Smirnov distance between the Monte Carlo escape times and the exact
    /// first-passage distribution of diffusion out of the extrapolated sphere (uniform,
    /// conservative sphere with a centred source only; null otherwise).
    pub ks_distance: Option<f64>,
}

/// How the walk went: method, absorption treatment and cost.
#[derive(Debug, Clone, Serialize)]
pub struct WalkSummary {
    /// The walker that ran: "direct" or "accelerated" (what `auto` chose).
    pub method_used: String,
    /// Why that walker ([`crate::simulation::plan`]).
    pub method_reason: String,
    /// Jump threshold γ in transport mean free paths (accelerated walks; null for direct).
    pub gamma: Option<f64>,
    /// Mean-free-path tolerance ε across a jump sphere (accelerated walks; null for direct).
    pub epsilon: Option<f64>,
    /// Whether jump exits were tilted along ∇D (accelerated walks; null for direct).
    pub drift_correction: Option<bool>,
    /// Diffusion jumps per photon.
    pub jumps_per_photon: f64,
    /// Direct free flights per photon.
    pub direct_steps_per_photon: f64,
    /// Fraction of the total photon time covered by diffusion jumps.
    pub jump_time_fraction: f64,
    /// Step cap per photon.
    pub max_steps: u64,
}

/// The full report of one run; its serde form is the JSON report.
#[derive(Debug, Clone, Serialize)]
pub struct RunReport {
    /// sojourn version that made the report.
    pub sojourn_version: String,
    /// The model.
    pub model: ModelSummary,
    /// Sphere or slab.
    pub geometry: Geometry,
    /// Walk method.
    pub method: String,
    /// Absorption treatment ("analog": an absorbed photon ends).
    pub absorption: String,
    /// Photons launched.
    pub photons: u64,
    /// Seed of the random streams.
    pub seed: u64,
    /// Optical depth source → surface (sphere) or total thickness (slab).
    pub optical_depth: f64,
    /// Outcome fractions.
    pub outcome: OutcomeFractions,
    /// Time in the medium of every photon that left it, s.
    pub escape_time: TimeSummary,
    /// Scatterings of every photon that left the medium.
    pub scatterings: DistributionSummary,
    /// Slabs: time in the medium of reflected photons, s.
    pub reflected_time: Option<TimeSummary>,
    /// Slabs: time in the medium of transmitted photons, s.
    pub transmitted_time: Option<TimeSummary>,
    /// Diffusion-theory values.
    pub diffusion: DiffusionSummary,
    /// Monte Carlo against diffusion theory.
    pub comparison: Comparison,
    /// Walk cost.
    pub walk: WalkSummary,
    /// Slabs lit from outside: steady diffusion theory beside the Monte Carlo values.
    pub slab_diffusion: Option<SlabDiffusion>,
    /// Resolved slab tallies (with `--resolve`): time of flight, depth, angle, radius.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub resolved: Option<ResolvedSummary>,
    /// One-line caveats for the reader.
    pub notes: Vec<String>,
    /// Wall-clock time of the run, s (varies run to run).
    pub elapsed_s: f64,
}

impl RunReport {
    /// Builds the report of `result`, a run of `config` on `medium` read from `file`.
    pub fn new(medium: &Medium, file: &str, config: &RunConfig, result: &RunResult) -> Self {
        let tally = &result.tally;
        let estimate = diffusion::estimate(medium);
        let escapes = tally.all_escapes();
        let escape_time = DistributionSummary::of_time(&escapes);
        let scatterings = DistributionSummary::of_scatterings(&escapes);
        let is_slab = medium.geometry() == Geometry::Slab;
        let comparison = compare(medium, tally, &escapes, &estimate);
        let launched = tally.launched().max(1) as f64;
        let walk = tally.walk();
        let total_time = walk.total_time_s.value();
        let plan = crate::simulation::plan(medium, config);
        let accelerated = plan.method == Method::Accelerated;
        let mut notes = vec!["absorption is analog: an absorbed photon ends its walk".to_string()];
        if medium.geometry() == Geometry::Sphere {
            notes.push(
                "in a star a \"photon\" stands for radiant energy that is absorbed and \
                 re-emitted many times, not one photon travelling all the way"
                    .to_string(),
            );
        }
        if medium.layers().iter().any(|layer| layer.albedo() < 1.0) {
            notes.push(
                "the medium absorbs: the diffusion mean times are those of conservative \
                 diffusion, while absorption removes long paths from the Monte Carlo escape \
                 times, so the time ratios fall below 1"
                    .to_string(),
            );
        }
        notes.extend(super::profile_report::profile_notes(medium));
        if tally.censored().count() > 0 {
            notes.push(format!(
                "{} photons hit the step cap ({}) and are counted as censored; raise \
                 --max-steps to follow them",
                tally.censored().count(),
                config.limits.max_steps
            ));
        }
        Self {
            sojourn_version: env!("CARGO_PKG_VERSION").to_string(),
            model: ModelSummary {
                name: medium.name().to_string(),
                file: file.to_string(),
                layers: medium.layers().len(),
                size_cm: medium.size_cm(),
                length_unit: medium.display_unit().symbol().to_string(),
            },
            geometry: medium.geometry(),
            method: config.method.name().to_string(),
            absorption: "analog".to_string(),
            photons: tally.launched(),
            seed: config.seed,
            optical_depth: estimate.optical_depth,
            outcome: outcome_fractions(tally, is_slab),
            escape_time: escape_time.seconds(),
            scatterings,
            reflected_time: is_slab
                .then(|| DistributionSummary::of_time(tally.reflected()).seconds()),
            transmitted_time: is_slab
                .then(|| DistributionSummary::of_time(tally.transmitted()).seconds()),
            diffusion: DiffusionSummary::from(&estimate),
            comparison,
            walk: WalkSummary {
                method_used: plan.method.name().to_string(),
                method_reason: plan.reason,
                gamma: accelerated.then_some(config.acceleration.gamma),
                epsilon: accelerated.then_some(config.acceleration.epsilon),
                drift_correction: accelerated.then_some(config.acceleration.drift_correction),
                jumps_per_photon: walk.jumps.value() / launched,
                direct_steps_per_photon: walk.direct_steps.value() / launched,
                jump_time_fraction: if total_time > 0.0 {
                    walk.jump_time_s.value() / total_time
                } else {
                    0.0
                },
                max_steps: config.limits.max_steps,
            },
            slab_diffusion: slab_diffusion(medium, tally),
            resolved: resolved_summary(medium, tally),
            notes,
            elapsed_s: result.elapsed_s,
        }
    }
}

fn outcome_fractions(tally: &Tally, is_slab: bool) -> OutcomeFractions {
    let (escaped, escaped_err) = tally.fraction(tally.escaped());
    let (reflected, reflected_err) = tally.fraction(tally.reflected());
    let (specular, specular_err) = tally.fraction(tally.specular());
    let (transmitted, transmitted_err) = tally.fraction(tally.transmitted());
    let (absorbed, absorbed_err) = tally.fraction(tally.absorbed());
    let (censored, censored_err) = tally.fraction(tally.censored());
    OutcomeFractions {
        escaped: (!is_slab).then_some(escaped),
        reflected: is_slab.then_some(reflected),
        specular: is_slab.then_some(specular),
        transmitted: is_slab.then_some(transmitted),
        absorbed,
        censored,
        stderr: OutcomeStderr {
            escaped: (!is_slab).then_some(escaped_err),
            reflected: is_slab.then_some(reflected_err),
            specular: is_slab.then_some(specular_err),
            transmitted: is_slab.then_some(transmitted_err),
            absorbed: absorbed_err,
            censored: censored_err,
        },
    }
}

fn compare(
    medium: &Medium,
    _tally: &Tally,
    escapes: &PathStats,
    estimate: &DiffusionEstimate,
) -> Comparison {
    let mean = escapes.time_s.mean();
    let stderr = escapes.time_s.std_error();
    let ratio = |reference: f64| mean.filter(|_| reference > 0.0).map(|m| m / reference);
    let time_ratio = ratio(estimate.mean_time_extrapolated_s);
    Comparison {
        time_ratio,
        time_ratio_stderr: stderr
            .filter(|_| estimate.mean_time_extrapolated_s > 0.0)
            .map(|s| s / estimate.mean_time_extrapolated_s),
        time_ratio_plain: ratio(estimate.mean_time_s),
        naive_time_ratio: ratio(estimate.naive_time_s),
        scatterings_ratio: escapes
            .scatterings
            .mean()
            .filter(|_| estimate.mean_scatterings_extrapolated > 0.0)
            .map(|n| n / estimate.mean_scatterings_extrapolated),
        ks_distance: diffusion::first_passage_ks_distance(medium, escapes),
    }
}
