//! The Monte Carlo forward model of a fit: the measured quantities predicted for trial
//! coefficients of the fitted layer, with their Monte Carlo covariance.
//!
//! Every evaluation runs the same photons: the same seed, stream and photon indices, and
//! the walk method chosen once at the start (common random numbers). A small change of μa
//! or μs′ then changes the fate of few photons, so differences between evaluations (the
//! finite-difference Jacobian, the solver's steps) are far less noisy than independent
//! runs would be. R and T come from the tally; the collimated transmittance, when it is
//! measured, from the closed form of [`super::ballistic`], which is the expected value of
//! the tally's unscattered photons without their noise.

use nalgebra::DMatrix;

use crate::simulation::{RunConfig, plan, run};
use crate::tally::{PathStats, Tally};

use super::ballistic::unscattered_with;
use super::error::FitError;
use super::measurement::Measurement;
use super::sample::Sample;

/// What one evaluation predicts, in the order of [`Measurement::values`].
#[derive(Debug, Clone, PartialEq)]
pub struct Prediction {
    /// Predicted R, T and (if measured) Tc.
    pub values: Vec<f64>,
    /// Monte Carlo covariance of `values` (R and T from the multinomial outcome counts; Tc,
    /// a closed form, has none).
    pub covariance: DMatrix<f64>,
    /// Fraction of photons transmitted without scattering, from the tally.
    pub unscattered_transmittance: f64,
    /// Fraction of photons stopped by the step cap (their fate unknown).
    pub censored: f64,
}

/// A forward model: trial (ln μa, ln μs′) with μa, μs′ in 1/cm → predicted measurements.
pub trait ForwardModel {
    /// The prediction at `log_coefficients`, or `None` where the model cannot say (outside
    /// its validity).
    ///
    /// # Errors
    /// A trial medium that cannot be built or run.
    fn predict(&mut self, log_coefficients: [f64; 2]) -> Result<Option<Vec<f64>>, FitError>;
}

/// The Monte Carlo forward model (common random numbers).
pub struct MonteCarloModel<'a> {
    sample: &'a Sample,
    measurement: &'a Measurement,
    config: RunConfig,
    evaluations: usize,
    photons_run: u64,
    cache: Vec<([u64; 2], Prediction)>,
}

impl<'a> MonteCarloModel<'a> {
    /// A model running `config` (its method should be fixed, not `Auto`, so that every
    /// evaluation walks the same way).
    pub fn new(sample: &'a Sample, measurement: &'a Measurement, config: RunConfig) -> Self {
        Self {
            sample,
            measurement,
            config,
            evaluations: 0,
            photons_run: 0,
            cache: Vec::new(),
        }
    }

    /// Monte Carlo runs so far (repeated points are not run again).
    pub fn evaluations(&self) -> usize {
        self.evaluations
    }

    /// Photons run so far.
    pub fn photons_run(&self) -> u64 {
        self.photons_run
    }

    /// The full prediction at (ln μa, ln μs′).
    ///
    /// # Errors
    /// [`FitError::Medium`] for a trial medium that cannot be built, [`FitError::TooCostly`]
    /// where the walk plan refuses the run.
    pub fn evaluate(&mut self, log_coefficients: [f64; 2]) -> Result<Prediction, FitError> {
        let key = log_coefficients.map(f64::to_bits);
        if let Some((_, found)) = self.cache.iter().find(|(k, _)| *k == key) {
            return Ok(found.clone());
        }
        let [absorption, reduced] = log_coefficients.map(f64::exp);
        let medium = self.sample.with_coefficients(absorption, reduced)?;
        plan(&medium, &self.config)
            .check(self.config.photons, false)
            .map_err(|refusal| FitError::TooCostly {
                absorption_per_cm: absorption,
                reduced_scattering_per_cm: reduced,
                reason: refusal.to_string(),
            })?;
        let tally = run(&medium, &self.config).tally;
        self.evaluations += 1;
        self.photons_run += self.config.photons;
        let scattering = self.sample.scattering_per_cm(reduced);
        let layer = self.sample.layer();
        let collimated = unscattered_with(&medium, |index| {
            if index == layer {
                absorption + scattering
            } else {
                medium.layers()[index].extinction_per_cm()
            }
        })
        .map_or(0.0, |b| b.transmittance);
        let prediction = predict_from_tally(&tally, self.measurement, collimated);
        self.cache.push((key, prediction.clone()));
        Ok(prediction)
    }
}

impl ForwardModel for MonteCarloModel<'_> {
    fn predict(&mut self, log_coefficients: [f64; 2]) -> Result<Option<Vec<f64>>, FitError> {
        self.evaluate(log_coefficients).map(|p| Some(p.values))
    }
}

/// A set of outcomes of one photon each: its weight Σw and Σw².
#[derive(Debug, Clone, Copy, Default)]
struct Scores {
    weight: f64,
    squared: f64,
}

impl Scores {
    fn of(stats: &PathStats) -> Self {
        Self {
            weight: stats.weight(),
            squared: if stats.is_weighted() {
                stats.weight_squared()
            } else {
                stats.weight()
            },
        }
    }

    fn plus(self, other: Scores) -> Self {
        Self {
            weight: self.weight + other.weight,
            squared: self.squared + other.squared,
        }
    }
}

/// The prediction from one run's tally: R and T as the measurement defines them, with
/// their covariance. Each photon scores in at most one of the sets, so with N photons
/// Var f = (Σw²/N − f²)/N and Cov(f_R, f_T) = −f_R f_T / N (the multinomial covariance;
/// binomial for analog photons). The unscattered photons' Σw² is taken as their Σw times
/// the transmitted set's mean w²/w (exact for analog photons).
fn predict_from_tally(tally: &Tally, measurement: &Measurement, collimated: f64) -> Prediction {
    let n = tally.launched().max(1) as f64;
    let mut reflected = Scores::of(tally.reflected());
    if measurement.specular_included {
        reflected = reflected.plus(Scores::of(tally.specular()));
    }
    let transmitted_all = Scores::of(tally.transmitted());
    let unscattered_weight = tally.transmitted().scattering_histogram().zero_weight();
    let transmitted = if measurement.collimated_transmittance.is_some() {
        let share = if transmitted_all.weight > 0.0 {
            transmitted_all.squared / transmitted_all.weight
        } else {
            1.0
        };
        Scores {
            weight: transmitted_all.weight - unscattered_weight,
            squared: (transmitted_all.squared - unscattered_weight * share).max(0.0),
        }
    } else {
        transmitted_all
    };
    let r = reflected.weight / n;
    let t = transmitted.weight / n;
    let mut values = vec![r, t];
    let size = if measurement.collimated_transmittance.is_some() {
        values.push(collimated);
        3
    } else {
        2
    };
    let mut covariance = DMatrix::zeros(size, size);
    covariance[(0, 0)] = ((reflected.squared / n - r * r) / n).max(0.0);
    covariance[(1, 1)] = ((transmitted.squared / n - t * t) / n).max(0.0);
    covariance[(0, 1)] = -r * t / n;
    covariance[(1, 0)] = -r * t / n;
    Prediction {
        values,
        covariance,
        unscattered_transmittance: unscattered_weight / n,
        censored: tally.censored().weight() / n,
    }
}
