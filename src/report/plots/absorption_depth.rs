//! The absorption panel of a slab run with `--resolve`: the fraction of launched photons
//! absorbed per unit depth, as bars on the tally's depth bins, with layer boundaries marked
//! and each layer's absorbed fraction listed.

use super::display_unit::DisplayUnit;
use super::error::PlotError;
use super::run_inputs::RunInputs;
use super::spec::{Axis, Bars, ChartSpec, HistogramSpec, ReferenceLine};
use super::style::{Colour, Dash, LineStyle};
use super::{Figure, Panel};
use crate::units::format_significant;

/// Everything the absorption-by-depth figure shows, as plain data.
#[derive(Debug, Clone, PartialEq)]
pub struct AbsorptionDepthPanel {
    /// File stem of the figure.
    pub name: String,
    /// Title.
    pub title: String,
    /// Subtitle.
    pub subtitle: String,
    /// Unit of the depth axis (the model's length unit).
    pub unit: DisplayUnit,
    /// Width of a depth bin, cm.
    pub depth_bin_cm: f64,
    /// Absorbed fraction per cm in each depth bin, from the top face down.
    pub absorbed_per_cm: Vec<f64>,
    /// Depths of the interfaces between layers, cm.
    pub interfaces_cm: Vec<f64>,
    /// `(layer name, absorbed fraction)`, top layer first.
    pub absorbed_by_layer: Vec<(String, f64)>,
}

/// Layer boundaries drawn and shares listed up to this many layers.
const MAX_NAMED_LAYERS: usize = 6;

impl AbsorptionDepthPanel {
    /// The panel of a run with resolved slab tallies (`None` without them or if nothing
    /// was absorbed).
    pub fn for_run(inputs: &RunInputs) -> Option<Self> {
        let resolved = inputs.report.analysis.resolved.as_ref()?;
        if !resolved.absorbed_per_cm.iter().any(|&a| a > 0.0) {
            return None;
        }
        let medium = inputs.medium;
        let layers = medium.layers();
        let interfaces_cm = (0..layers.len().saturating_sub(1))
            .map(|i| medium.layer_bounds_cm(i).1)
            .collect();
        let absorbed_by_layer = layers
            .iter()
            .zip(&resolved.absorbed_by_layer)
            .enumerate()
            .map(|(i, (layer, &f))| {
                let name = if layer.name().is_empty() {
                    format!("layer {i}")
                } else {
                    layer.name().to_string()
                };
                (name, f)
            })
            .collect();
        Some(Self {
            name: "absorption-depth".into(),
            title: inputs.title("Absorption by depth"),
            subtitle: inputs.subtitle(),
            unit: DisplayUnit::length(medium.display_unit()),
            depth_bin_cm: resolved.depth_bin_cm,
            absorbed_per_cm: resolved.absorbed_per_cm.clone(),
            interfaces_cm,
            absorbed_by_layer,
        })
    }

    /// The histogram this panel draws.
    pub fn spec(&self) -> HistogramSpec {
        let unit = &self.unit;
        let edges = (0..=self.absorbed_per_cm.len())
            .map(|i| unit.show(i as f64 * self.depth_bin_cm))
            .collect();
        // Per cm shown per display unit of depth.
        let heights = self.absorbed_per_cm.iter().map(|a| a * unit.size).collect();
        let total: f64 = self.absorbed_by_layer.iter().map(|(_, f)| f).sum();
        let mut reference_lines = Vec::new();
        let mut notes = Vec::new();
        if self.absorbed_by_layer.len() <= MAX_NAMED_LAYERS {
            for (k, &depth) in self.interfaces_cm.iter().enumerate() {
                reference_lines.push(ReferenceLine::vertical(
                    if k == 0 { "layer boundary" } else { "" },
                    unit.show(depth),
                    LineStyle::new(Colour::Slate, 2.0, Dash::Dashed),
                ));
            }
            let shares: Vec<String> = self
                .absorbed_by_layer
                .iter()
                .map(|(name, f)| format!("{name} {}", format_significant(*f, 3)))
                .collect();
            notes.push(format!("absorbed by layer: {}", shares.join(" · ")));
        }
        let per = if unit.symbol.is_empty() {
            "cm"
        } else {
            unit.symbol.as_str()
        };
        HistogramSpec {
            chart: ChartSpec {
                title: self.title.clone(),
                subtitle: self.subtitle.clone(),
                x_axis: Axis::linear_from_zero(unit.axis_label("depth below the top face z")),
                y_axis: Axis::linear_from_zero(format!(
                    "absorbed fraction of photons launched per {per}"
                )),
                series: Vec::new(),
                reference_lines,
                notes,
            },
            bars: Bars {
                label: format!(
                    "Monte Carlo, {} of the photons absorbed in all",
                    format_significant(total, 4)
                ),
                edges,
                heights,
            },
        }
    }
}

impl Panel for AbsorptionDepthPanel {
    fn name(&self) -> &str {
        &self.name
    }

    fn render(&self) -> Result<Figure, PlotError> {
        Ok(Figure {
            name: self.name.clone(),
            title: self.title.clone(),
            caption: "Fraction of the launched photons absorbed per unit depth below the top \
                      face (Monte Carlo, on the tally's depth bins); dashed lines are layer \
                      boundaries."
                .into(),
            svg: super::histogram_chart(&self.spec())?,
        })
    }
}
