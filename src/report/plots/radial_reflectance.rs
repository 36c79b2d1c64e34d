//! The radial-reflectance panel of a slab run with `--resolve`: R(ρ) and T(ρ) of the Monte
//! Carlo against the distance ρ from the beam axis on log–log axes, with error bars, and
//! for a narrow beam the steady diffusion R(ρ) of a semi-infinite medium (the dipole with
//! the extrapolated boundary, Farrell, Patterson & Wilson 1992) averaged over the same bins.

use super::display_unit::DisplayUnit;
use super::error::PlotError;
use super::run_inputs::RunInputs;
use super::spec::{Axis, ChartSpec, ReferenceLine, Series};
use super::style::{Colour, Dash, LineStyle, MarkerShape, SeriesStyle};
use super::{Figure, Panel};

/// Everything the radial-reflectance figure shows, as plain data (lengths in cm).
#[derive(Debug, Clone, PartialEq)]
pub struct RadialReflectancePanel {
    /// File stem of the figure.
    pub name: String,
    /// Title.
    pub title: String,
    /// Subtitle.
    pub subtitle: String,
    /// Unit of ρ on the axis (the model's length unit).
    pub unit: DisplayUnit,
    /// Geometric bin centres √(a b), cm.
    pub rho_cm: Vec<f64>,
    /// Monte Carlo R(ρ), fraction per cm², and its standard error.
    pub reflectance: (Vec<f64>, Vec<f64>),
    /// Monte Carlo T(ρ), fraction per cm², and its standard error.
    pub transmittance: (Vec<f64>, Vec<f64>),
    /// The dipole's bin averages, per cm² (empty when not comparable).
    pub dipole: Vec<f64>,
    /// Transport mean free path l′, cm (a line marks 2 l′).
    pub transport_mean_free_path_cm: f64,
}

impl RadialReflectancePanel {
    /// The panel of a run with resolved slab tallies (`None` without them, or if no photon
    /// left through either face inside the binned range).
    pub fn for_run(inputs: &RunInputs) -> Option<Self> {
        let resolved = inputs.report.analysis.resolved.as_ref()?;
        let any = |values: &[f64]| values.iter().any(|&v| v > 0.0);
        if !any(&resolved.reflectance_per_cm2) && !any(&resolved.transmittance_per_cm2) {
            return None;
        }
        Some(Self {
            name: "radial-reflectance".into(),
            title: inputs.title("Reflectance and transmittance against distance from the beam"),
            subtitle: inputs.subtitle(),
            unit: DisplayUnit::length(inputs.medium.display_unit()),
            rho_cm: resolved
                .radial_edges_cm
                .windows(2)
                .map(|w| (w[0] * w[1]).sqrt())
                .collect(),
            reflectance: (
                resolved.reflectance_per_cm2.clone(),
                resolved.reflectance_per_cm2_stderr.clone(),
            ),
            transmittance: (
                resolved.transmittance_per_cm2.clone(),
                resolved.transmittance_per_cm2_stderr.clone(),
            ),
            dipole: resolved.dipole_reflectance_per_cm2.clone(),
            transport_mean_free_path_cm: resolved.transport_mean_free_path_cm,
        })
    }

    /// The chart this panel draws: positive bins only (log axes).
    pub fn spec(&self) -> ChartSpec {
        let unit = &self.unit;
        // Per cm² → per unit²: × size².
        let area = unit.size * unit.size;
        let points = |(values, errors): &(Vec<f64>, Vec<f64>)| -> (Vec<(f64, f64)>, Vec<f64>) {
            self.rho_cm
                .iter()
                .zip(values.iter().zip(errors))
                .filter(|(_, (v, _))| **v > 0.0)
                .map(|(&rho, (&v, &e))| ((unit.show(rho), v * area), e * area))
                .unzip()
        };
        let (reflected, reflected_errors) = points(&self.reflectance);
        let (transmitted, transmitted_errors) = points(&self.transmittance);
        let mut series = Vec::new();
        if !self.dipole.is_empty() {
            series.push(Series::new(
                "diffusion dipole, semi-infinite, extrapolated boundary",
                self.rho_cm
                    .iter()
                    .zip(&self.dipole)
                    .filter(|(_, d)| **d > 0.0)
                    .map(|(&rho, &d)| (unit.show(rho), d * area))
                    .collect(),
                SeriesStyle::line(Colour::Indigo, 3.0, Dash::Solid),
            ));
        }
        if !reflected.is_empty() {
            series.push(
                Series::new(
                    "Monte Carlo R(ρ) ± 1σ",
                    reflected,
                    SeriesStyle::points(Colour::Vermilion, MarkerShape::Circle),
                )
                .with_y_errors(reflected_errors),
            );
        }
        if !transmitted.is_empty() {
            series.push(
                Series::new(
                    "Monte Carlo T(ρ) ± 1σ",
                    transmitted,
                    SeriesStyle::points(Colour::Teal, MarkerShape::OpenSquare),
                )
                .with_y_errors(transmitted_errors),
            );
        }
        let symbol = if unit.symbol.is_empty() {
            "cm".to_string()
        } else {
            unit.symbol.clone()
        };
        ChartSpec {
            title: self.title.clone(),
            subtitle: self.subtitle.clone(),
            x_axis: Axis::log(unit.axis_label("distance from the beam axis ρ")),
            y_axis: Axis::log(format!("fraction of launched photons per {symbol}²")),
            series,
            reference_lines: vec![ReferenceLine::vertical(
                "2 transport mean free paths",
                unit.show(2.0 * self.transport_mean_free_path_cm),
                LineStyle::new(Colour::Slate, 1.5, Dash::Dotted),
            )],
            notes: vec![
                "bins equal in ln ρ; the dipole is for a narrow beam on a semi-infinite medium"
                    .into(),
            ],
        }
    }
}

impl Panel for RadialReflectancePanel {
    fn name(&self) -> &str {
        &self.name
    }

    fn render(&self) -> Result<Figure, PlotError> {
        Ok(Figure {
            name: self.name.clone(),
            title: self.title.clone(),
            caption: "Spatially resolved reflectance R(ρ) and transmittance T(ρ) against the \
                      distance from the beam axis (Monte Carlo, ±1σ), with the steady \
                      diffusion dipole of a semi-infinite medium for a narrow beam (Farrell, \
                      Patterson & Wilson 1992)."
                .into(),
            svg: super::line_chart(&self.spec())?,
        })
    }
}
