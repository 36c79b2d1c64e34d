//! Before a run: which walker runs (`auto` decides), what it will cost, and whether it can
//! make progress at all.
//!
//! `auto` compares the cost estimates of [`WalkCost`]: it walks directly where no region is
//! deep enough for jumps, where a direct walk takes at most
//! [`DIRECT_PREFERRED_FLIGHTS`] flights per photon (exact, and well under a millisecond a
//! photon), or where jumps would not halve the cost; otherwise it takes the accelerated
//! walk. A run is refused when a layer where the chosen walker flies directly stalls (its
//! mean free path is below the resolution of positions there), and when its estimated
//! steps exceed [`LONG_RUN_STEPS`] unless the caller allows long runs.

use crate::medium::Medium;
use crate::transport::{STALL_ULPS, Stall, WalkCost};

use super::{Method, RunConfig};

/// Direct walks of at most this many flights per photon are preferred by `auto`.
pub const DIRECT_PREFERRED_FLIGHTS: f64 = 2_000.0;

/// Estimated steps (flights and jumps, all photons) above which a run is refused unless
/// long runs are allowed: about an hour of one core at [`STEPS_PER_CORE_SECOND`].
pub const LONG_RUN_STEPS: f64 = 1e11;

/// Steps per second per core assumed in time estimates: a rounded-down direct-walk rate
/// measured on the development machine (README, "Speed").
pub const STEPS_PER_CORE_SECOND: f64 = 3e7;

/// The walker a run uses, why, and what it will cost.
#[derive(Debug, Clone, PartialEq)]
pub struct WalkPlan {
    /// The walker that runs: [`Method::Direct`] or [`Method::Accelerated`], never `Auto`.
    pub method: Method,
    /// One line: why this walker.
    pub reason: String,
    /// The cost estimates of both walkers.
    pub cost: WalkCost,
    /// Estimated steps per photon of the walker that runs.
    pub steps_per_photon: f64,
    /// The step cap per photon, which bounds the run's cost.
    pub max_steps: u64,
    /// Layers where that walker's flights stall.
    pub stalls: Vec<Stall>,
}

/// Why a run is refused before it starts.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PlanError {
    /// A layer's mean free path is below the resolution of positions in it.
    #[error(
        "layers[{layer}] ({name:?}): the mean free path {mean_free_path_cm:.3e} cm is below \
         {STALL_ULPS} units in the last place of positions there ({resolution_cm:.3e} cm at \
         {coordinate_cm:.6e} cm), so flights cannot move photons and the {method} walk would \
         never progress"
    )]
    Stalled {
        /// Layer index.
        layer: usize,
        /// Layer name.
        name: String,
        /// Its mean free path, cm.
        mean_free_path_cm: f64,
        /// Its largest coordinate, cm.
        coordinate_cm: f64,
        /// One unit in the last place there, cm.
        resolution_cm: f64,
        /// The walker that would run.
        method: &'static str,
    },
    /// The estimated cost is past the limit.
    #[error(
        "the {method} walk is estimated at {steps_per_photon:.3e} steps per photon \
         ({basis}){cap_note}, {total_steps:.3e} for {photons} photons, about \
         {core_hours:.3e} core-hours at {STEPS_PER_CORE_SECOND:.0e} steps per second: above \
         the limit of {LONG_RUN_STEPS:.0e} steps for one run"
    )]
    TooLong {
        /// The walker that would run.
        method: &'static str,
        /// Where the estimate comes from.
        basis: &'static str,
        /// Estimated steps per photon.
        steps_per_photon: f64,
        /// Empty, or how the step cap bounds the run (photons reaching it are censored).
        cap_note: String,
        /// Photons asked for.
        photons: u64,
        /// Estimated steps of the whole run.
        total_steps: f64,
        /// Estimated core-hours.
        core_hours: f64,
    },
}

impl WalkPlan {
    /// Estimated steps of `photons` photons, each at most the step cap.
    pub fn total_steps(&self, photons: u64) -> f64 {
        self.steps_per_photon.min(self.max_steps as f64) * photons as f64
    }

    /// Refuses a run of `photons` photons that cannot progress, or (unless
    /// `allow_long_run`) whose estimated steps exceed [`LONG_RUN_STEPS`].
    ///
    /// # Errors
    /// [`PlanError::Stalled`] (first: no flag helps), then [`PlanError::TooLong`].
    pub fn check(&self, photons: u64, allow_long_run: bool) -> Result<(), PlanError> {
        if let Some(stall) = self.stalls.first() {
            return Err(PlanError::Stalled {
                layer: stall.layer,
                name: stall.name.clone(),
                mean_free_path_cm: stall.mean_free_path_cm,
                coordinate_cm: stall.coordinate_cm,
                resolution_cm: stall.resolution_cm,
                method: self.method.name(),
            });
        }
        let total_steps = self.total_steps(photons);
        if allow_long_run || total_steps <= LONG_RUN_STEPS {
            return Ok(());
        }
        Err(PlanError::TooLong {
            method: self.method.name(),
            basis: match self.method {
                Method::Direct => "diffusion estimate of the scatterings, ≈ τ²/2",
                _ => "diffusion estimate of the flights outside the jump regions",
            },
            steps_per_photon: self.steps_per_photon,
            cap_note: if self.steps_per_photon > self.max_steps as f64 {
                format!(
                    "; the step cap stops each photon at {:.0e} steps (a censored photon)",
                    self.max_steps as f64
                )
            } else {
                String::new()
            },
            photons,
            total_steps,
            core_hours: total_steps / STEPS_PER_CORE_SECOND / 3600.0,
        })
    }
}

/// The plan of a run of `config` on `medium`: cheap (no Monte Carlo, no passage tables).
pub fn plan(medium: &Medium, config: &RunConfig) -> WalkPlan {
    let cost = WalkCost::new(medium, &config.acceleration);
    let direct = cost.direct_flights_per_photon;
    let accelerated = cost.accelerated_steps_per_photon;
    let gamma = config.acceleration.gamma();
    let (method, reason) = match config.method {
        Method::Direct => (
            Method::Direct,
            "requested: every flight and scattering is simulated".to_string(),
        ),
        Method::Accelerated if cost.has_jumps => (
            Method::Accelerated,
            "requested: diffusion jumps deep inside, direct steps elsewhere".to_string(),
        ),
        Method::Accelerated => (
            Method::Accelerated,
            format!(
                "requested, but no region is deep and smooth enough for jumps ({gamma} \
                 transport mean free paths from every surface, interface and steep gradient): \
                 every step is direct"
            ),
        ),
        Method::Auto if !cost.has_jumps => (
            Method::Direct,
            format!(
                "no region is deep and smooth enough for diffusion jumps ({gamma} transport \
                 mean free paths from every surface, interface and steep gradient)"
            ),
        ),
        Method::Auto if direct <= DIRECT_PREFERRED_FLIGHTS => (
            Method::Direct,
            format!(
                "a direct walk costs about {} flights per photon (diffusion \
                 estimate), at most {DIRECT_PREFERRED_FLIGHTS}: every scattering is followed \
                 exactly",
                count(direct)
            ),
        ),
        Method::Auto if accelerated >= 0.5 * direct => (
            Method::Direct,
            format!(
                "jumps would save little: about {} steps per photon against \
                 {} direct flights (diffusion estimates)",
                count(accelerated),
                count(direct)
            ),
        ),
        Method::Auto => (
            Method::Accelerated,
            format!(
                "a direct walk would cost about {} flights per photon (diffusion \
                 estimate); diffusion jumps bring it to about {} steps",
                count(direct),
                count(accelerated)
            ),
        ),
    };
    let accelerated_runs = method == Method::Accelerated;
    let steps_per_photon = if accelerated_runs {
        accelerated
    } else {
        direct
    };
    let stalls = cost.stalls(medium, accelerated_runs);
    WalkPlan {
        method,
        reason,
        cost,
        steps_per_photon,
        max_steps: config.limits.max_steps,
        stalls,
    }
}

/// A count for a sentence: whole below 10⁵, else three significant digits.
fn count(value: f64) -> String {
    if value < 1e5 {
        format!("{value:.0}")
    } else {
        format!("{value:.2e}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::medium::{Layer, Source};
    use crate::transport::PhaseFunction;

    fn sphere(tau: f64) -> Medium {
        let layer = Layer::new("", tau, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
        Medium::sphere(vec![(1.0, layer)], Source::centre()).unwrap()
    }

    fn auto(tau: f64) -> WalkPlan {
        plan(&sphere(tau), &RunConfig::default())
    }

    #[test]
    fn auto_walks_thin_spheres_directly_and_deep_ones_with_jumps() {
        assert_eq!(auto(5.0).method, Method::Direct);
        assert!(
            auto(5.0).reason.contains("deep and smooth"),
            "{}",
            auto(5.0).reason
        );
        assert_eq!(auto(30.0).method, Method::Direct);
        assert_eq!(auto(1e4).method, Method::Accelerated);
        assert!(auto(1e4).reason.contains("diffusion jumps bring it"));
    }

    #[test]
    fn a_direct_walk_of_a_deep_star_is_refused_with_its_estimate() {
        let config = RunConfig {
            method: Method::Direct,
            ..RunConfig::default()
        };
        let plan = plan(&sphere(2e13), &config);
        let error = plan.check(10_000, false).unwrap_err();
        let text = error.to_string();
        assert!(matches!(error, PlanError::TooLong { .. }), "{text}");
        assert!(text.contains("2.000e26 steps per photon"), "{text}");
        // Allowed explicitly, it is not refused for its cost.
        assert!(plan.check(10_000, true).is_ok());
        // The accelerated walk of the same sphere is cheap.
        let accelerated = super::plan(&sphere(2e13), &RunConfig::default());
        assert_eq!(accelerated.method, Method::Accelerated);
        assert!(accelerated.check(10_000, false).is_ok());
    }

    #[test]
    fn an_unresolvable_mean_free_path_is_refused() {
        let error = auto(1e20).check(10, true).unwrap_err();
        assert!(
            matches!(error, PlanError::Stalled { layer: 0, .. }),
            "{error}"
        );
    }
}
