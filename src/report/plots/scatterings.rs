//! The scattering-count panel of a run: how many times photons scattered before they left,
//! against diffusion theory.
//!
//! Diffusion gives a time; the count follows at the layer's scattering rate, N = v σ_s t
//! (the same conversion the report's diffusion scatterings use). For a uniform,
//! conservative sphere with a centred source the first-passage density is drawn in N;
//! otherwise the diffusion mean counts are marked. The rule of thumb N ≈ τ² is marked in
//! every case.

use super::display_unit::DisplayUnit;
use super::distribution::{DistributionPanel, Mark, TheoryCurve};
use super::escape_time::{
    ABSORBING_NOTE, RULE_OF_THUMB, SAMPLE_MEAN, SAMPLE_MEDIAN, THEORY, THEORY_MEAN, THEORY_MEDIAN,
    first_passage_points,
};
use super::run_inputs::{RunInputs, group_digits};
use crate::diffusion::{equivalent_sphere, first_passage};
use crate::units::{SPEED_OF_LIGHT_CM_S, format_significant};

fn count(value: f64) -> String {
    format_significant(value, 4)
}

/// The scattering-count panel of a run, or `None` if no photon left the medium.
pub fn scatterings_panel(inputs: &RunInputs) -> Option<DistributionPanel> {
    let escapes = inputs.tally.all_escapes();
    if escapes.count() == 0 {
        return None;
    }
    let report = &inputs.report.analysis;
    let summary = &report.scatterings;
    let mut marks = Vec::new();
    if let Some(mean) = summary.mean {
        marks.push(Mark {
            label: format!("Monte Carlo mean {}", count(mean)),
            value: mean,
            style: SAMPLE_MEAN,
        });
    }
    if let Some(median) = summary.median {
        marks.push(Mark {
            label: format!("Monte Carlo median {}", count(median)),
            value: median,
            style: SAMPLE_MEDIAN,
        });
    }
    let theory = equivalent_sphere(inputs.medium).map(|(radius, diffusion)| {
        let layer = &inputs.medium.layers()[0];
        let rate = SPEED_OF_LIGHT_CM_S / layer.refractive_index() * layer.scattering_per_cm();
        let scale = radius * radius / diffusion * rate;
        let mean = first_passage::MEAN_S * scale;
        let median = first_passage::quantile(0.5) * scale;
        marks.push(Mark {
            label: format!("diffusion mean {}", count(mean)),
            value: mean,
            style: THEORY_MEAN,
        });
        marks.push(Mark {
            label: format!("diffusion median {}", count(median)),
            value: median,
            style: THEORY_MEDIAN,
        });
        TheoryCurve {
            label: "diffusion first-passage density, N = v σ_s t".into(),
            points: first_passage_points(scale),
            style: THEORY,
        }
    });
    let comparable = report.comparison.times_comparable;
    let d = &report.diffusion;
    if theory.is_none() && comparable {
        if let Some(mean) = d.mean_scatterings_extrapolated {
            marks.push(Mark {
                label: format!("diffusion mean, extrapolated surface {}", count(mean)),
                value: mean,
                style: THEORY_MEAN,
            });
        }
        if let Some(mean) = d.mean_scatterings {
            marks.push(Mark {
                label: format!("diffusion mean, surface at boundary {}", count(mean)),
                value: mean,
                style: THEORY_MEDIAN,
            });
        }
    }
    let mut notes = Vec::new();
    if comparable {
        marks.push(Mark {
            label: format!("rule of thumb N ≈ τ² = {}", count(d.naive_scatterings)),
            value: d.naive_scatterings,
            style: RULE_OF_THUMB,
        });
    } else {
        notes.push(ABSORBING_NOTE.to_string());
    }
    Some(DistributionPanel {
        name: "scatterings".into(),
        title: inputs.title("Scatterings before escape"),
        subtitle: inputs.subtitle(),
        quantity: "number of scatterings N".into(),
        symbol: "N".into(),
        unit: DisplayUnit::number(),
        sample_label: format!(
            "Monte Carlo, {} photons that left",
            group_digits(escapes.count())
        ),
        histogram: escapes.scattering_histogram().clone(),
        whole_numbers: true,
        theory,
        marks,
        notes,
        caption: "Monte Carlo histogram of the number of scatterings before escape, as a \
                  probability density, with diffusion theory (time converted at the scattering \
                  rate); vertical lines mark the means, the medians and N ≈ τ²."
            .into(),
    })
}
