//! The analysis of one run: outcome fractions, escape-time and scattering distributions,
//! the walk's cost, diffusion theory on the model and the comparison of the two, as one
//! serialisable structure ([`RunAnalysis`]) with no formatting. The report layer adds the
//! model's label and the wall-clock time and renders it; its JSON keys are documented in
//! the README.

use super::residence::{LayerPath, ResidenceBudget, path_by_layer};
use serde::Serialize;

use crate::analysis::stellar::StellarAnalysis;
use crate::medium::{Geometry, Medium, Source};
use crate::simulation::{Absorption, Method, RunConfig};
use crate::star::zones::Zone;
use crate::tally::{PathStats, Tally};

use super::comparison::{Comparison, compare};
use super::slab_optics::{ResolvedSummary, SlabDiffusion, resolved_summary, slab_diffusion};
use super::theory::{DiffusionSummary, solve_diffusion};

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
    /// Slabs lit by a beam: the part of `transmitted` that never scattered (collimated
    /// transmittance; the diffuse transmittance is `transmitted` minus this). Null otherwise.
    pub collimated_transmitted: Option<f64>,
    /// Absorbed inside (null when no photon was launched).
    pub absorbed: Option<f64>,
    /// Stopped by the step cap (null when no photon was launched).
    pub censored: Option<f64>,
    /// Standard errors of the fractions above, in the same order (binomial for analog
    /// photons, from the weights otherwise: see [`crate::tally::Tally::fraction`]).
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
    /// Of `collimated_transmitted`.
    pub collimated_transmitted: Option<f64>,
    /// Of `absorbed`.
    pub absorbed: Option<f64>,
    /// Of `censored`.
    pub censored: Option<f64>,
}

/// Mean, spread and quantiles of a distribution. Keys carry the unit suffix given at
/// construction (`_s` for times, none for counts). Quantiles come from the tally's
/// histogram: inside the observed [min, max], within 0.1 % of the sample quantiles, whole
/// numbers for whole-number data.
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
    /// The escape times of `stats`, s (serialise with [`Self::seconds`]).
    pub fn of_time(stats: &PathStats) -> Self {
        Self::build(stats.count(), stats.time_s(), stats.time_histogram())
    }

    /// The scattering counts of `stats`.
    pub fn of_scatterings(stats: &PathStats) -> Self {
        Self::build(
            stats.count(),
            stats.scatterings(),
            stats.scattering_histogram(),
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
    pub fn seconds(&self) -> TimeSummary {
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

/// Where a walk was stopped below the surface (`sojourn run --stop-at convective-base`).
#[derive(Debug, Clone, Serialize)]
pub struct StopAt {
    /// Radius the walk stops at (photons reaching it count as escaped), cm.
    pub radius_cm: f64,
    /// The model's surface radius, cm.
    pub surface_radius_cm: f64,
    /// Time convection takes from there to the surface (mixing-length estimate), s.
    pub convective_crossing_time_s: Option<f64>,
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

/// Everything one run tells about its medium, as plain data; its serde form is the body of
/// the JSON report (the report adds the version, the model's label and the wall-clock
/// time).
#[derive(Debug, Clone, Serialize)]
pub struct RunAnalysis {
    /// Sphere or slab.
    pub geometry: Geometry,
    /// Walk method.
    pub method: String,
    /// Absorption treatment ("analog": an absorbed photon ends; "weighted": implicit
    /// capture with Russian roulette).
    pub absorption: String,
    /// The same, under the name the weighted-photon reports use ("analog" or "weighted").
    pub absorption_mode: String,
    /// Photons launched.
    pub photons: u64,
    /// Kish's effective number of photons (Σw)²/Σw² (equal to `photons` for analog runs).
    pub effective_photons: f64,
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
    /// Slabs with detectors: what each saw (left out of the JSON when there are none).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub detectors: Vec<super::detectors::DetectorReading>,
    /// Stellar models with energy generation: L = ∫ ε dm of the star, erg s⁻¹.
    pub luminosity_erg_s: Option<f64>,
    /// Stellar models with energy generation: radiative and convective zones of the star.
    pub zones: Option<Vec<Zone>>,
    /// Where the walk stopped below the surface (null when it ran to the surface).
    pub stop_at: Option<StopAt>,
    /// Slabs lit from outside (a beam or diffuse light on the top face), where reflection,
    /// specular reflection and unscattered transmission have their optical meaning; false
    /// for spheres and for sources inside a slab. Text only.
    #[serde(skip)]
    pub lit_from_outside: bool,
    /// Where the photons that left spent their time, cell by cell, beside steady diffusion
    /// (null if the tally keeps no residence).
    pub residence_budget: Option<ResidenceBudget>,
    /// Mean path length in each declared layer per outcome, cm.
    pub path_by_layer: Vec<LayerPath>,
    /// One-line caveats for the reader.
    pub notes: Vec<String>,
}

impl RunAnalysis {
    /// The analysis of `tally`, the photons of a run of `config` on `medium`.
    pub fn new(medium: &Medium, config: &RunConfig, tally: &Tally) -> Self {
        let escapes = tally.all_escapes();
        let escape_time = DistributionSummary::of_time(&escapes);
        let scatterings = DistributionSummary::of_scatterings(&escapes);
        let is_slab = medium.geometry() == Geometry::Slab;
        let stellar = StellarAnalysis::of(medium);
        let energy_source = medium.source() == Source::EnergyGeneration;
        let slab = slab_diffusion(medium, tally);
        let solution = solve_diffusion(medium);
        let (mut diffusion, mut theory_notes) =
            DiffusionSummary::new(medium, solution.as_ref().ok());
        if let Err(note) = &solution {
            theory_notes.push(note.clone());
        }
        if let Some(stellar) = &stellar {
            diffusion.add_stellar_times(&stellar.times);
        }
        // Photons from the energy generation: compare with the luminosity-weighted times.
        let reference = if energy_source {
            diffusion.luminosity_weighted_reference()
        } else {
            diffusion.clone()
        };
        let comparison = compare(
            medium,
            tally,
            &escapes,
            &reference,
            theory_notes,
            solution.as_ref().ok(),
        );
        let mut notes = vec![absorption_note(config.absorption, tally)];
        if medium.geometry() == Geometry::Sphere {
            notes.push(
                "in a star a \"photon\" stands for radiant energy that is absorbed and \
                 re-emitted many times, not one photon travelling all the way"
                    .to_string(),
            );
        }
        notes.extend(super::profile::profile_notes(medium));
        if tally.launched() == 0 {
            notes.push(
                "no photons were launched: fractions, times and quantiles are undefined"
                    .to_string(),
            );
        }
        let not_finite = escapes.time_s().non_finite() + escapes.scatterings().non_finite();
        if not_finite > 0 {
            notes.push(format!(
                "{not_finite} escape times or scattering counts were not finite (NaN or \
                 infinite): they are counted, but left out of the means and extremes"
            ));
        }
        if energy_source {
            notes.push(
                "photons start where the energy is released (probability ∝ ε ρ r² dr): the \
                 closed-form time ratios compare with the luminosity-weighted diffusion times \
                 (diffusion.mean_time_s is from the centre), and the diffusion solver starts \
                 its photons at 64 luminosity quantiles"
                    .to_string(),
            );
        }
        let stop_at = medium
            .truncation()
            .map(|(radius_cm, surface_radius_cm)| StopAt {
                radius_cm,
                surface_radius_cm,
                convective_crossing_time_s: stellar
                    .as_ref()
                    .filter(|s| {
                        s.convective_base_radius_cm
                            .is_some_and(|base| (base - radius_cm).abs() <= 1e-9 * radius_cm)
                    })
                    .and_then(|s| s.convective_crossing_time_s),
            });
        if let Some(stop) = &stop_at {
            notes.push(format!(
                "the walk stops at r = {:.6e} cm ({:.3} of the surface radius): photons reaching \
                 it count as escaped, and every diffusion time is to that radius{}",
                stop.radius_cm,
                stop.radius_cm / stop.surface_radius_cm,
                stop.convective_crossing_time_s
                    .map_or_else(String::new, |t| format!(
                        "; convection carries the energy on to the surface in about {} \
                     (mixing-length estimate)",
                        crate::units::format_duration(t)
                    ))
            ));
        }
        if tally.censored().count() > 0 {
            notes.push(format!(
                "{} photons hit the step cap ({}) and are counted as censored; raise \
                 --max-steps to follow them",
                tally.censored().count(),
                config.limits.max_steps
            ));
        }
        Self {
            geometry: medium.geometry(),
            method: config.method.name().to_string(),
            absorption: config.absorption.name().to_string(),
            absorption_mode: config.absorption.name().to_string(),
            photons: tally.launched(),
            effective_photons: tally.effective_photons(),
            seed: config.seed,
            optical_depth: diffusion.optical_depth,
            outcome: outcome_fractions(
                tally,
                is_slab,
                matches!(medium.source(), Source::Beam { .. }),
            ),
            escape_time: escape_time.seconds(),
            scatterings,
            reflected_time: is_slab
                .then(|| DistributionSummary::of_time(tally.reflected()).seconds()),
            transmitted_time: is_slab
                .then(|| DistributionSummary::of_time(tally.transmitted()).seconds()),
            diffusion,
            comparison,
            walk: WalkSummary::new(medium, config, tally),
            slab_diffusion: slab,
            resolved: resolved_summary(medium, tally),
            detectors: super::detectors::detector_readings(medium, tally),
            luminosity_erg_s: stellar.as_ref().and_then(|s| s.luminosity_erg_s),
            zones: stellar
                .as_ref()
                .filter(|s| s.luminosity_erg_s.is_some())
                .map(|s| s.zones.clone()),
            stop_at,
            lit_from_outside: is_slab && medium.source().enters_from_outside(),
            residence_budget: ResidenceBudget::new(medium, tally),
            path_by_layer: path_by_layer(medium, tally),
            notes,
        }
    }
}

impl WalkSummary {
    /// The walk of `tally`'s photons, run with `config` on `medium`. A new field goes into
    /// the struct and here, nowhere else.
    pub fn new(medium: &Medium, config: &RunConfig, tally: &Tally) -> Self {
        let launched = tally.launched().max(1) as f64;
        let walk = tally.walk();
        let total_time = walk.total_time_s.value();
        let plan = crate::simulation::plan(medium, config);
        let accelerated = plan.method == Method::Accelerated;
        Self {
            method_used: plan.method.name().to_string(),
            method_reason: plan.reason,
            gamma: accelerated.then_some(config.acceleration.gamma()),
            epsilon: accelerated.then_some(config.acceleration.epsilon()),
            drift_correction: accelerated.then_some(config.acceleration.drift_correction()),
            jumps_per_photon: walk.jumps.value() / launched,
            direct_steps_per_photon: walk.direct_steps.value() / launched,
            jump_time_fraction: if total_time > 0.0 {
                walk.jump_time_s.value() / total_time
            } else {
                0.0
            },
            max_steps: config.limits.max_steps,
        }
    }
}

/// The report's line on how absorption was simulated.
fn absorption_note(absorption: Absorption, tally: &Tally) -> String {
    match absorption {
        Absorption::Analog => "absorption is analog: an absorbed photon ends its walk".to_string(),
        Absorption::Weighted => format!(
            "absorption is weighted (implicit capture): at each interaction a photon scatters \
             and its weight is multiplied by the albedo; Russian roulette below weight {:e} \
             (survival {}); the absorbed fraction is 1 minus the weight each photon carried \
             out; the photons that left are worth {:.0} analog ones (Kish)",
            crate::transport::ROULETTE_THRESHOLD,
            crate::transport::ROULETTE_SURVIVAL,
            tally.effective_photons()
        ),
    }
}

/// The outcome fractions of `tally`; `beam`: the light is a beam (collimated
/// transmittance reported).
fn outcome_fractions(tally: &Tally, is_slab: bool, beam: bool) -> OutcomeFractions {
    let split = |stats| {
        let estimate = tally.fraction(stats);
        (estimate.map(|e| e.value), estimate.map(|e| e.stderr))
    };
    let (escaped, escaped_err) = split(tally.escaped());
    let (reflected, reflected_err) = split(tally.reflected());
    let (specular, specular_err) = split(tally.specular());
    let (transmitted, transmitted_err) = split(tally.transmitted());
    let (collimated, collimated_err) = tally
        .optics()
        .filter(|_| beam)
        .map_or((None, None), |optics| {
            split(optics.collimated_transmitted())
        });
    let (absorbed, absorbed_err) = split(tally.absorbed());
    let (censored, censored_err) = split(tally.censored());
    OutcomeFractions {
        escaped: escaped.filter(|_| !is_slab),
        reflected: reflected.filter(|_| is_slab),
        specular: specular.filter(|_| is_slab),
        transmitted: transmitted.filter(|_| is_slab),
        collimated_transmitted: collimated.filter(|_| is_slab),
        absorbed,
        censored,
        stderr: OutcomeStderr {
            escaped: escaped_err.filter(|_| !is_slab),
            reflected: reflected_err.filter(|_| is_slab),
            specular: specular_err.filter(|_| is_slab),
            transmitted: transmitted_err.filter(|_| is_slab),
            collimated_transmitted: collimated_err.filter(|_| is_slab),
            absorbed: absorbed_err,
            censored: censored_err,
        },
    }
}
