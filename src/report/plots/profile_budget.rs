//! The time-budget panel of `sojourn profile`: the run's [`TimeBudgetPanel`] drawn for the
//! profile's shells with a centred source (where the radiation resides), with the profile
//! report's own budget added: the cumulative share of T = (1/c) ∫₀^R r / l_tr dr accrued
//! inside r (inside a shell of constant extinction it grows as r², and is drawn so).

use super::error::PlotError;
use super::spec::Series;
use super::style::{Colour, Dash, SeriesStyle};
use super::time_budget::TimeBudgetPanel;
use super::{Figure, Panel};
use crate::medium::Medium;
use crate::report::ProfileReport;

/// Everything the profile's time-budget figure shows, as plain data.
#[derive(Debug, Clone, PartialEq)]
pub struct ProfileTimeBudgetPanel {
    /// The residence-time budget of the shells (centred source), as for a run.
    pub budget: TimeBudgetPanel,
    /// `(radius cm, share of T accrued inside it)`, from the centre out.
    pub accrual: Vec<(f64, f64)>,
    /// Radii inside which 10, 50 and 90 % of T accrue, cm.
    pub accrual_radii_cm: [f64; 3],
}

/// Points inside each shell for the accrual curve when the shells are few.
const POINTS_PER_SHELL: usize = 16;
/// Shell boundaries drawn at most (every k-th beyond it).
const MAX_POINTS: usize = 3000;

impl ProfileTimeBudgetPanel {
    /// The panel of the profile report of `medium` (`None` if it has no diffusion time).
    pub fn from_profile(medium: &Medium, report: &ProfileReport) -> Option<Self> {
        let total = report.analysis.diffusion.mean_time_s;
        if total.is_nan() || total <= 0.0 || report.analysis.shells.is_empty() {
            return None;
        }
        let centred = medium.with_sphere_source(0.0).ok()?;
        let name = if report.model.name.is_empty() {
            "(unnamed model)"
        } else {
            report.model.name.as_str()
        };
        let mut budget = TimeBudgetPanel::for_sphere(
            &centred,
            format!("Where the diffusion time goes · {name}"),
            format!(
                "{} shells · source at the centre · no Monte Carlo · {}",
                report.analysis.shells.len(),
                report.model.file
            ),
        )?;
        budget.name = "time-budget".into();
        let shells = &report.analysis.shells;
        let few = shells.len() * POINTS_PER_SHELL <= MAX_POINTS;
        let stride = shells.len().div_ceil(MAX_POINTS).max(1);
        let mut accrual = vec![(0.0, 0.0)];
        for (k, shell) in shells.iter().enumerate() {
            let before = shell.cumulative_time_s - shell.time_s;
            let (a, b) = (shell.inner_radius_cm, shell.radius_cm);
            if few {
                for j in 1..POINTS_PER_SHELL {
                    let r = a + (b - a) * j as f64 / POINTS_PER_SHELL as f64;
                    let part = if b > a {
                        (r * r - a * a) / (b * b - a * a)
                    } else {
                        1.0
                    };
                    accrual.push((r, (before + part * shell.time_s) / total));
                }
            } else if k % stride != 0 && k + 1 != shells.len() {
                continue;
            }
            accrual.push((b, shell.cumulative_time_s / total));
        }
        let t = &report.analysis.time_budget;
        Some(Self {
            budget,
            accrual,
            accrual_radii_cm: [
                t.accrual_radius_10_percent_cm,
                t.accrual_radius_50_percent_cm,
                t.accrual_radius_90_percent_cm,
            ],
        })
    }

    /// The chart: the run's time-budget chart with the accrual curve added and notes for a
    /// profile.
    pub fn spec(&self) -> super::ChartSpec {
        let mut spec = self.budget.spec();
        let unit = &self.budget.unit;
        spec.series.insert(
            1,
            Series::new(
                "share of T = (1/c)∫ r/l dr accrued inside r",
                self.accrual
                    .iter()
                    .map(|&(r, s)| (unit.show(r), s))
                    .collect(),
                SeriesStyle::line(Colour::Teal, 3.0, Dash::Dashed),
            ),
        );
        spec.notes
            .retain(|note| !note.starts_with("no Monte Carlo here"));
        let [r10, r50, r90] = self.accrual_radii_cm;
        spec.notes.push(format!(
            "T accrues 10 % inside r = {}, half inside {}, 90 % inside {}",
            unit.format(r10),
            unit.format(r50),
            unit.format(r90)
        ));
        spec
    }
}

impl Panel for ProfileTimeBudgetPanel {
    fn name(&self) -> &str {
        &self.budget.name
    }

    fn render(&self) -> Result<Figure, PlotError> {
        Ok(Figure {
            name: self.budget.name.clone(),
            title: self.budget.title.clone(),
            caption: "Cumulative share of the diffusion time against radius for a source at \
                      the centre: the share of T = (1/c)∫ r/l dr accrued inside r (the \
                      profile report's budget), the share of the mean exit time the radiation \
                      spends inside r, and the share of optical depth."
                .into(),
            svg: super::line_chart(&self.spec())?,
        })
    }
}
