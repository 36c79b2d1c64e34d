//! Monte Carlo against diffusion theory: outcome fractions side by side, the mean escape
//! time against the diffusion solver's (both conditional on escape, both with absorption),
//! the KS distance between the escape-time distributions ([`super::escape_ks`]), the late
//! decay rates ([`super::late_decay`]), the ratios to the closed-form means and the rule of
//! thumb, and the verdict ([`mod@super::verdict`]).
//!
//! Every time is compared only with a theory that treats absorption as the Monte Carlo
//! does: the solver includes it, so its comparisons are made for every medium; the closed
//! forms and the rule of thumb are conservative, so where the medium absorbs their ratios
//! are `null` and `notes` says why (absorption removes long paths from the Monte Carlo
//! escape times; such a ratio would mean nothing).

use serde::Serialize;

use crate::diffusion::transient::EscapeSolution;
use crate::medium::{Geometry, Medium};
use crate::tally::{PathStats, Tally};

use super::escape_ks::escape_time_ks;
use super::late_decay::{LateDecay, late_decay};
use super::theory::{DiffusionSummary, absorbs};
use super::verdict::{Evidence, FractionEvidence, KsEvidence, MeanEvidence, Regime, Verdict};

pub use super::escape_ks::{KS_BINS, KS_MIN_ESCAPES};

/// One outcome fraction, Monte Carlo beside the diffusion solver.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OutcomeComparison {
    /// Which outcome: `escaped`, `reflected`, `transmitted` or `absorbed` (the keys of
    /// `outcome`).
    pub name: String,
    /// Monte Carlo fraction of launched photons.
    pub monte_carlo: Option<f64>,
    /// Its 1σ.
    pub stderr: Option<f64>,
    /// Diffusion's fraction (null where the solver failed).
    pub diffusion: Option<f64>,
}

/// Monte Carlo against diffusion theory.
#[derive(Debug, Clone, Serialize)]
pub struct Comparison {
    /// Monte Carlo mean escape time / the closed-form steady diffusion mean with the
    /// extrapolated boundary (null where the medium absorbs: that mean is conservative).
    pub time_ratio: Option<f64>,
    /// 1σ uncertainty of `time_ratio` (from the Monte Carlo standard error).
    pub time_ratio_stderr: Option<f64>,
    /// Monte Carlo mean escape time / the closed-form mean without extrapolation.
    pub time_ratio_plain: Option<f64>,
    /// Monte Carlo mean escape time / the rule of thumb's time.
    pub naive_time_ratio: Option<f64>,
    /// Monte Carlo mean scatterings / diffusion (extrapolated) scatterings.
    pub scatterings_ratio: Option<f64>,
    /// Monte Carlo mean escape time / the diffusion solver's, both conditional on escape
    /// and both with absorption (null where no photon escaped or the solver failed).
    pub escape_time_ratio: Option<f64>,
    /// 1σ of `escape_time_ratio` (from the Monte Carlo standard error).
    pub escape_time_ratio_stderr: Option<f64>,
    /// Kolmogorov–Smirnov distance between the Monte Carlo escape times and the solver's
    /// escape-time distribution, at the edges of [`KS_BINS`] bins of equal diffusion
    /// probability (null with fewer than [`KS_MIN_ESCAPES`] escapes, or where the solver
    /// failed; `notes` says why).
    pub ks_distance: Option<f64>,
    /// Its p-value, calibrated for those bins and the (effective) number of escapes.
    pub ks_p_value: Option<f64>,
    /// Number of bins of the KS test.
    pub ks_bins: Option<usize>,
    /// Time of the largest gap between the two cumulative distributions, s.
    pub ks_at_s: Option<f64>,
    /// The late decay rate of the Monte Carlo escape times beside the solver's λ₁.
    pub late_decay: Option<LateDecay>,
    /// Outcome fractions side by side (escaped, absorbed; reflected, transmitted, absorbed
    /// for slabs).
    pub outcomes: Vec<OutcomeComparison>,
    /// Whether Monte Carlo times are compared with the closed-form (conservative) diffusion
    /// times and the rule of thumb (false where the medium absorbs); the solver's times are
    /// compared in every medium.
    pub times_comparable: bool,
    /// Whether diffusion describes this medium, and why.
    pub verdict: Verdict,
    /// What is not compared and why; cautions on what is.
    pub notes: Vec<String>,
}

/// Monte Carlo `escapes` (all photons that left; `tally` for the outcome fractions) on
/// `medium` against diffusion: the closed forms of `theory` (with its `notes`) and the
/// time-dependent `solution` (`None` where the solver failed; the note saying why is among
/// `notes`).
pub fn compare(
    medium: &Medium,
    tally: &Tally,
    escapes: &PathStats,
    theory: &DiffusionSummary,
    mut notes: Vec<String>,
    solution: Option<&EscapeSolution>,
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
    let solver_mean = theory.escape_time.mean_s.filter(|&m| m > 0.0);
    let escape_time_ratio = mean.zip(solver_mean).map(|(m, s)| m / s);
    let escape_time_ratio_stderr = stderr.zip(solver_mean).map(|(e, s)| e / s);

    let mut ks = None;
    let mut decay = None;
    if let Some(solution) = solution {
        match escape_time_ks(escapes, solution) {
            Ok(test) => ks = Some(test),
            Err(note) => notes.push(note),
        }
        if ks.is_some() {
            match late_decay(escapes, solution) {
                Ok(fit) => decay = Some(fit),
                Err(note) => notes.push(note),
            }
        }
    }

    let regime = Regime::of(medium);
    let failures = regime.failures();
    if escape_time_ratio.is_some() && !failures.is_empty() {
        notes.push(format!(
            "caution: {}; diffusion needs many transport mean free paths and μa ≪ μs′, so \
             the Monte Carlo is not expected to follow it",
            failures.join("; ")
        ));
    }

    let outcomes = outcome_rows(medium, tally, solution);
    let fractions = fraction_evidence(medium, &outcomes);
    let times_missing = if mean.is_none() {
        Some("no photon left the medium".to_string())
    } else if solver_mean.is_none() && time_ratio.is_none() {
        Some(if solution.is_none() {
            "the diffusion solver could not describe the medium".to_string()
        } else {
            "diffusion lets no photon out".to_string()
        })
    } else {
        None
    };
    // The solver's mean where it exists (with absorption); the conservative closed form
    // only where the solver failed on a conservative medium.
    let mean_evidence = match (escape_time_ratio, escape_time_ratio_stderr) {
        (Some(ratio), Some(ratio_stderr)) => Some(MeanEvidence {
            ratio,
            ratio_stderr,
        }),
        _ => time_ratio
            .zip(time_ratio_stderr)
            .filter(|_| solution.is_none())
            .map(|(ratio, ratio_stderr)| MeanEvidence {
                ratio,
                ratio_stderr,
            }),
    };
    let evidence = Evidence {
        mean: mean_evidence,
        distribution: ks.map(|k| KsEvidence {
            distance: k.distance,
            p_value: k.p_value,
        }),
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
        escape_time_ratio,
        escape_time_ratio_stderr,
        ks_distance: ks.map(|k| k.distance),
        ks_p_value: ks.map(|k| k.p_value),
        ks_bins: ks.map(|k| k.bins),
        ks_at_s: ks.map(|k| k.at_s),
        late_decay: decay,
        outcomes,
        times_comparable,
        verdict: super::verdict::verdict(&evidence),
        notes,
    }
}

/// The outcome fractions of `tally` beside those of `solution`: escaped and absorbed for a
/// sphere; reflected (diffuse), transmitted (unscattered included) and absorbed for a slab.
fn outcome_rows(
    medium: &Medium,
    tally: &Tally,
    solution: Option<&EscapeSolution>,
) -> Vec<OutcomeComparison> {
    let row = |name: &str, stats: &PathStats, diffusion: Option<f64>| {
        let estimate = tally.fraction(stats);
        OutcomeComparison {
            name: name.to_string(),
            monte_carlo: estimate.map(|e| e.value),
            stderr: estimate.map(|e| e.stderr),
            diffusion,
        }
    };
    let mut rows = match medium.geometry() {
        Geometry::Sphere => vec![row(
            "escaped",
            tally.escaped(),
            solution.map(EscapeSolution::escape_probability),
        )],
        Geometry::Slab => vec![
            row(
                "reflected",
                tally.reflected(),
                solution.and_then(EscapeSolution::reflected),
            ),
            row(
                "transmitted",
                tally.transmitted(),
                solution.and_then(EscapeSolution::transmitted),
            ),
        ],
    };
    rows.push(row(
        "absorbed",
        tally.absorbed(),
        solution.map(EscapeSolution::absorbed),
    ));
    rows
}

/// The fractions the verdict weighs: a slab's R and T, an absorbing sphere's escape
/// probability (a conservative sphere lets every photon out on both sides; the absorbed
/// fraction is what the others leave).
fn fraction_evidence(medium: &Medium, rows: &[OutcomeComparison]) -> Vec<FractionEvidence> {
    let weighed: &[(&str, &str)] = match medium.geometry() {
        Geometry::Slab => &[("reflected", "R"), ("transmitted", "T")],
        Geometry::Sphere if absorbs(medium) => &[("escaped", "escape probability")],
        Geometry::Sphere => &[],
    };
    weighed
        .iter()
        .filter_map(|(key, name)| {
            let row = rows.iter().find(|r| r.name == *key)?;
            Some(FractionEvidence {
                name: name.to_string(),
                monte_carlo: row.monte_carlo?,
                stderr: row.stderr?,
                diffusion: row.diffusion?,
            })
        })
        .collect()
}
