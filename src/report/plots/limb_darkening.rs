//! The limb-darkening panel of a slab run with `--resolve`: the emergent angular
//! distribution of reflected light as radiance against the exit cosine μ, scaled to carry
//! the same flux as H(μ)/H(1), with the exact law of a deep, conservative, isotropically
//! scattering medium, H(μ)/H(1) (Chandrasekhar 1950, ch. V), and Eddington's 0.4 + 0.6μ.
//! Error bars are the Poisson 1σ of each cosine bin's count.

use super::error::PlotError;
use super::run_inputs::RunInputs;
use super::spec::{Axis, ChartSpec, ReferenceLine, Series};
use super::style::{Colour, Dash, LineStyle, MarkerShape, SeriesStyle};
use super::{Figure, Panel};
use crate::transport::crossing::conservative_h;

/// Everything the limb-darkening figure shows, as plain data.
#[derive(Debug, Clone, PartialEq)]
pub struct LimbDarkeningPanel {
    /// File stem of the figure.
    pub name: String,
    /// Title.
    pub title: String,
    /// Subtitle.
    pub subtitle: String,
    /// Bin-centre cosines μ.
    pub mu: Vec<f64>,
    /// Monte Carlo radiance on the H(μ)/H(1) scale.
    pub monte_carlo: Vec<f64>,
    /// Its 1σ (Poisson, from each bin's count).
    pub monte_carlo_error: Vec<f64>,
    /// Reflected photons in all.
    pub reflected_photons: u64,
}

/// Points of the smooth H(μ)/H(1) curve.
const CURVE_POINTS: usize = 101;

impl LimbDarkeningPanel {
    /// The panel of a run with resolved slab tallies and a source inside the slab (`None`
    /// without them, for a slab lit from outside, or if no photon left through the top).
    pub fn for_run(inputs: &RunInputs) -> Option<Self> {
        // Limb darkening is the law of light from deep inside; a slab lit from outside
        // keeps its exit angles in the JSON report only.
        if inputs.report.analysis.lit_from_outside {
            return None;
        }
        let resolved = inputs.report.analysis.resolved.as_ref()?;
        let reflected = inputs.tally.reflected().count();
        if reflected == 0 {
            return None;
        }
        let limb = &resolved.limb_darkening;
        let monte_carlo_error = limb
            .monte_carlo
            .iter()
            .zip(&resolved.reflected_cosine_fraction)
            .map(|(&value, &fraction)| {
                let count = fraction * reflected as f64;
                if count > 0.0 {
                    value / count.sqrt()
                } else {
                    0.0
                }
            })
            .collect();
        Some(Self {
            name: "limb-darkening".into(),
            title: inputs.title("Limb darkening of reflected light"),
            subtitle: inputs.subtitle(),
            mu: limb.mu.clone(),
            monte_carlo: limb.monte_carlo.clone(),
            monte_carlo_error,
            reflected_photons: reflected,
        })
    }

    /// The chart this panel draws.
    pub fn spec(&self) -> ChartSpec {
        let h1 = conservative_h(1.0);
        let exact = (0..CURVE_POINTS)
            .map(|k| {
                let mu = k as f64 / (CURVE_POINTS - 1) as f64;
                (mu, conservative_h(mu) / h1)
            })
            .collect();
        ChartSpec {
            title: self.title.clone(),
            subtitle: self.subtitle.clone(),
            x_axis: Axis::linear_from_zero("cosine of the exit angle μ"),
            y_axis: Axis::linear_from_zero("radiance I(μ) / I(1), on the H(μ)/H(1) scale"),
            series: vec![
                Series::new(
                    "H(μ)/H(1), deep conservative isotropic medium",
                    exact,
                    SeriesStyle::line(Colour::Indigo, 3.0, Dash::Solid),
                ),
                Series::new(
                    "Eddington 0.4 + 0.6μ",
                    vec![(0.0, 0.4), (1.0, 1.0)],
                    SeriesStyle::line(Colour::Ochre, 3.0, Dash::DashDot),
                ),
                Series::new(
                    format!(
                        "Monte Carlo ± 1σ, {} reflected photons",
                        super::group_digits(self.reflected_photons)
                    ),
                    self.mu
                        .iter()
                        .copied()
                        .zip(self.monte_carlo.iter().copied())
                        .collect(),
                    SeriesStyle::points(Colour::Vermilion, MarkerShape::Circle),
                )
                .with_y_errors(self.monte_carlo_error.clone()),
            ],
            reference_lines: vec![ReferenceLine::horizontal(
                "",
                1.0,
                LineStyle::new(Colour::Slate, 1.5, Dash::Dotted),
            )],
            notes: vec![
                "Monte Carlo scaled to carry the same flux as H(μ)/H(1) over the cosine bins"
                    .into(),
            ],
        }
    }
}

impl Panel for LimbDarkeningPanel {
    fn name(&self) -> &str {
        &self.name
    }

    fn render(&self) -> Result<Figure, PlotError> {
        Ok(Figure {
            name: self.name.clone(),
            title: self.title.clone(),
            caption: "Radiance of the reflected light against the exit cosine μ (Monte Carlo, \
                      scaled to the flux of H(μ)/H(1)), with the exact law of a deep \
                      conservative isotropically scattering medium and Eddington's 0.4 + 0.6μ."
                .into(),
            svg: super::line_chart(&self.spec())?,
        })
    }
}
