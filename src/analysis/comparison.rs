//! Monte Carlo against diffusion theory: ratios of means, the distance between the
//! escape-time distributions, outcome fractions side by side, and the verdict
//! ([`mod@super::verdict`]).
//!
//! Times are compared only where both sides treat absorption alike: the diffusion times
//! here are those of conservative diffusion, so where the medium absorbs every time ratio
//! is `null` and `notes` says why (absorption removes long paths from the Monte Carlo
//! escape times; a ratio of the two would mean nothing).

use serde::Serialize;

use crate::diffusion::{self, equivalent_sphere, ks::kolmogorov_p_value};
use crate::medium::Medium;
use crate::tally::{PathStats, Tally};

use super::slab_optics::SlabDiffusion;
use super::theory::{DiffusionSummary, absorbs};
use super::verdict::{Evidence, FractionEvidence, KsEvidence, MeanEvidence, Regime, Verdict};

/// Fewest escaped photons for a Kolmogorov–Smirnov test (its asymptotic p-value is good to
/// about 1 % from some 35 samples on; Press et al., *Numerical Recipes*, 3rd ed., §14.3.3).
pub const KS_MIN_ESCAPES: u64 = 100;

/// Monte Carlo against diffusion theory.
#[derive(Debug, Clone, Serialize)]
pub struct Comparison {
    /// Monte Carlo mean escape time / diffusion mean exit time with the extrapolated
    /// boundary (null where the medium absorbs).
    pub time_ratio: Option<f64>,
    /// 1σ uncertainty of `time_ratio` (from the Monte Carlo standard error).
    pub time_ratio_stderr: Option<f64>,
    /// Monte Carlo mean escape time / diffusion mean exit time without extrapolation.
    pub time_ratio_plain: Option<f64>,
    /// Monte Carlo mean escape time / the rule of thumb's time.
    pub naive_time_ratio: Option<f64>,
    /// Monte Carlo mean scatterings / diffusion (extrapolated) scatterings.
    pub scatterings_ratio: Option<f64>,
    /// Kolmogorov–Smirnov distance between the Monte Carlo escape times and the diffusion
    /// escape-time distribution, from the tally's histogram (a lower bound of the unbinned
    /// distance; the exact first-passage law out of the extrapolated sphere, for a uniform,
    /// conservative sphere with a centred source and at least 100 escapes; null otherwise).
    pub ks_distance: Option<f64>,
    /// Asymptotic p-value of `ks_distance` for the number of escapes (an upper bound, as the
    /// binned distance is a lower bound).
    pub ks_p_value: Option<f64>,
    /// Whether Monte Carlo times are compared with diffusion times here (false where the
    /// medium absorbs: the diffusion times are conservative).
    pub times_comparable: bool,
    /// Whether diffusion describes this medium, and why.
    pub verdict: Verdict,
    /// What is not compared and why; cautions on what is.
    pub notes: Vec<String>,
}

/// Monte Carlo `escapes` (all photons that left; `tally` for the outcome fractions) on
/// `medium` against diffusion `theory` (with its `notes`) and, for slabs lit from outside,
/// the steady `slab` theory.
pub fn compare(
    medium: &Medium,
    tally: &Tally,
    escapes: &PathStats,
    theory: &DiffusionSummary,
    mut notes: Vec<String>,
    slab: Option<&SlabDiffusion>,
) -> Comparison {
    let times_comparable = !absorbs(medium);
    let mean = escapes.time_s().mean();
    let stderr = escapes.time_s().std_error();
    let against = |value: Option<f64>, reference: Option<f64>| {
        value
            .zip(reference)
            .filter(|&(_, r)| times_comparable && r > 0.0)
            .map(|(v, r)| v / r)
    };
    let extrapolated = theory.mean_time_extrapolated_s;
    let time_ratio = against(mean, extrapolated);
    let time_ratio_stderr = against(stderr, extrapolated);

    let mut ks_distance = None;
    let mut ks_p_value = None;
    if times_comparable && equivalent_sphere(medium).is_some() {
        if escapes.count() >= KS_MIN_ESCAPES {
            ks_distance = diffusion::first_passage_ks_distance(medium, escapes);
            ks_p_value = ks_distance.map(|d| kolmogorov_p_value(d, escapes.count() as f64));
            if ks_distance.is_none() {
                notes.push(
                    "no KS test: some escape times fall outside the tally's histogram".into(),
                );
            }
        } else {
            notes.push(format!(
                "no KS test: {} photons escaped, fewer than {KS_MIN_ESCAPES}",
                escapes.count()
            ));
        }
    } else if times_comparable && theory.mean_time_extrapolated_s.is_some() {
        notes.push(
            "diffusion's escape-time distribution (quantiles, KS test) is known in closed form \
             only for a uniform, conservative sphere with a centred source; here the means \
             are compared"
                .into(),
        );
    }

    let regime = Regime::of(medium);
    let failures = regime.failures();
    if time_ratio.is_some() && !failures.is_empty() {
        notes.push(format!(
            "caution: {}; diffusion needs many transport mean free paths and μa ≪ μs′, so \
             the ratios are not expected to be 1",
            failures.join("; ")
        ));
    }

    let launched = tally.launched().max(1) as f64;
    let binomial = |p: f64| (p * (1.0 - p) / launched).sqrt();
    let fractions = slab
        .map(|s| {
            vec![
                FractionEvidence {
                    name: "R".into(),
                    monte_carlo: s.monte_carlo_reflectance,
                    stderr: binomial(s.monte_carlo_reflectance),
                    diffusion: s.reflectance,
                },
                FractionEvidence {
                    name: "T".into(),
                    monte_carlo: s.monte_carlo_diffuse_transmittance,
                    stderr: binomial(s.monte_carlo_diffuse_transmittance),
                    diffusion: s.transmittance,
                },
            ]
        })
        .unwrap_or_default();
    let times_missing = if !times_comparable {
        Some("the medium absorbs".to_string())
    } else if extrapolated.is_none() {
        Some("diffusion has no source inside the slab".to_string())
    } else if mean.is_none() {
        Some("no photon left the medium".to_string())
    } else {
        None
    };
    let evidence = Evidence {
        mean: time_ratio
            .zip(time_ratio_stderr)
            .map(|(ratio, ratio_stderr)| MeanEvidence {
                ratio,
                ratio_stderr,
            }),
        distribution: ks_distance
            .zip(ks_p_value)
            .map(|(distance, p_value)| KsEvidence { distance, p_value }),
        fractions,
        regime,
        times_missing,
    };

    Comparison {
        time_ratio,
        time_ratio_stderr,
        time_ratio_plain: against(mean, theory.mean_time_s),
        naive_time_ratio: against(mean, Some(theory.naive_time_s)),
        scatterings_ratio: against(
            escapes.scatterings().mean(),
            theory.mean_scatterings_extrapolated,
        ),
        ks_distance,
        ks_p_value,
        times_comparable,
        verdict: super::verdict::verdict(&evidence),
        notes,
    }
}
