//! The escape-time panel of a run: the Monte Carlo distribution of the time photons spend in
//! the medium, against diffusion theory.
//!
//! For a uniform, conservative sphere with a centred source the theory is the exact
//! first-passage density of diffusion out of the sphere, with the surface moved out to the
//! Milne extrapolated radius ([`crate::diffusion::equivalent_sphere`]); its mean and median
//! are marked. Otherwise the diffusion mean exit times (surface at the boundary, and
//! extrapolated) are marked, with the rule of thumb t ≈ τ L / c. Where the medium absorbs,
//! neither is drawn: they are conservative, and absorption shortens the Monte Carlo times.

use super::display_unit::DisplayUnit;
use super::distribution::{DistributionPanel, Mark, TheoryCurve};
use super::run_inputs::{RunInputs, group_digits};
use super::style::{Colour, Dash, LineStyle};
use crate::diffusion::{equivalent_sphere, first_passage};

/// The note under a run's distribution panels where the medium absorbs.
pub const ABSORBING_NOTE: &str = "the medium absorbs: diffusion times here are conservative, \
                                  so neither they nor the rule of thumb are drawn";

/// Stroke of a theory density.
pub const THEORY: LineStyle = LineStyle::new(Colour::Indigo, 3.0, Dash::Solid);
/// Stroke of a theory mean.
pub const THEORY_MEAN: LineStyle = LineStyle::new(Colour::Indigo, 2.5, Dash::Dashed);
/// Stroke of a theory median (or of the unextrapolated diffusion mean).
pub const THEORY_MEDIAN: LineStyle = LineStyle::new(Colour::Indigo, 3.0, Dash::Dotted);
/// Stroke of the Monte Carlo mean (solid, so a theory mean dashed over it stays visible).
pub const SAMPLE_MEAN: LineStyle = LineStyle::new(Colour::Vermilion, 2.5, Dash::Solid);
/// Stroke of the Monte Carlo median.
pub const SAMPLE_MEDIAN: LineStyle = LineStyle::new(Colour::Vermilion, 2.5, Dash::LongDash);
/// Stroke of the rule of thumb.
pub const RULE_OF_THUMB: LineStyle = LineStyle::new(Colour::Ochre, 3.0, Dash::DashDot);

/// Points of the first-passage density of a sphere, as `(value, density per value)`, where
/// `value = s · scale` for the dimensionless exit time `s` (e.g. `scale = R²/D` for time in
/// seconds). 300 points log-spaced between the 10⁻⁴ quantile and the 10⁻⁵ upper tail.
pub fn first_passage_points(scale: f64) -> Vec<(f64, f64)> {
    let (low, high) = (
        first_passage::quantile(1e-4),
        first_passage::inverse_survival(1e-5),
    );
    let n = 300;
    (0..n)
        .map(|k| {
            let s = low * (high / low).powf(k as f64 / (n - 1) as f64);
            (s * scale, first_passage::pdf(s) / scale)
        })
        .collect()
}

/// The escape-time panel of a run, or `None` if no photon left the medium.
pub fn escape_time_panel(inputs: &RunInputs) -> Option<DistributionPanel> {
    let escapes = inputs.tally.all_escapes();
    if escapes.count() == 0 {
        return None;
    }
    let report = &inputs.report.analysis;
    let summary = &report.escape_time;
    let comparable = report.comparison.times_comparable;
    let d = &report.diffusion;
    let unit = DisplayUnit::time_for(summary.median_s.or(d.mean_time_s).unwrap_or(d.naive_time_s));
    let mut marks = Vec::new();
    if let Some(mean) = summary.mean_s {
        marks.push(Mark {
            label: format!("Monte Carlo mean {}", unit.format(mean)),
            value: mean,
            style: SAMPLE_MEAN,
        });
    }
    if let Some(median) = summary.median_s {
        marks.push(Mark {
            label: format!("Monte Carlo median {}", unit.format(median)),
            value: median,
            style: SAMPLE_MEDIAN,
        });
    }
    let theory = equivalent_sphere(inputs.medium).map(|(radius, diffusion)| {
        let scale = radius * radius / diffusion;
        let mean = first_passage::mean_exit_time_s(radius, diffusion);
        let median = first_passage::quantile(0.5) * scale;
        marks.push(Mark {
            label: format!("diffusion mean {}", unit.format(mean)),
            value: mean,
            style: THEORY_MEAN,
        });
        marks.push(Mark {
            label: format!("diffusion median {}", unit.format(median)),
            value: median,
            style: THEORY_MEDIAN,
        });
        TheoryCurve {
            label: "diffusion first-passage density (extrapolated radius)".into(),
            points: first_passage_points(scale),
            style: THEORY,
        }
    });
    if theory.is_none() && comparable {
        if let Some(mean) = d.mean_time_extrapolated_s {
            marks.push(Mark {
                label: format!("diffusion mean, extrapolated surface {}", unit.format(mean)),
                value: mean,
                style: THEORY_MEAN,
            });
        }
        if let Some(mean) = d.mean_time_s {
            marks.push(Mark {
                label: format!("diffusion mean, surface at boundary {}", unit.format(mean)),
                value: mean,
                style: THEORY_MEDIAN,
            });
        }
    }
    let mut notes = Vec::new();
    if comparable {
        marks.push(Mark {
            label: format!("rule of thumb t ≈ τL/c = {}", unit.format(d.naive_time_s)),
            value: d.naive_time_s,
            style: RULE_OF_THUMB,
        });
    } else {
        notes.push(ABSORBING_NOTE.to_string());
    }
    if let Some(ks) = report.comparison.ks_distance {
        notes.push(format!(
            "Kolmogorov–Smirnov distance to the first-passage law: {}",
            crate::units::format_significant(ks, 3)
        ));
    }
    Some(DistributionPanel {
        name: "escape-time".into(),
        title: inputs.title("Escape time"),
        subtitle: inputs.subtitle(),
        quantity: "time in the medium".into(),
        symbol: "t".into(),
        unit,
        sample_label: format!(
            "Monte Carlo, {} photons that left",
            group_digits(escapes.count())
        ),
        histogram: escapes.time_histogram().clone(),
        whole_numbers: false,
        theory,
        marks,
        notes,
        caption: "Monte Carlo histogram of the time photons spent in the medium, as a \
                  probability density, with diffusion theory on the same axes; vertical lines \
                  mark the means, the medians and the rule of thumb."
            .into(),
    })
}
