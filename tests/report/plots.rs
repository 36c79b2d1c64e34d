//! Every chart kind and every panel of a run, drawn for small runs and read back.

use sojourn::analysis::resolved_layout;
use sojourn::medium::{Layer, Medium, Source};
use sojourn::report::html::render_html_report;
use sojourn::report::plots::absorption_depth::AbsorptionDepthPanel;
use sojourn::report::plots::distribution::DistributionPanel;
use sojourn::report::plots::escape_time::escape_time_panel;
use sojourn::report::plots::limb_darkening::LimbDarkeningPanel;
use sojourn::report::plots::optical_structure::OpticalStructurePanel;
use sojourn::report::plots::profile_budget::ProfileTimeBudgetPanel;
use sojourn::report::plots::radial_reflectance::RadialReflectancePanel;
use sojourn::report::plots::scatterings::scatterings_panel;
use sojourn::report::plots::sweep_escape_time::{StudyPoint, SweepPanel};
use sojourn::report::plots::time_budget::TimeBudgetPanel;
use sojourn::report::plots::time_resolved::TimeResolvedPanel;
use sojourn::report::plots::{
    Axis, Bars, ChartSpec, Colour, Dash, HistogramSpec, LineStyle, MarkerShape, Panel, PlotError,
    ReferenceLine, RunInputs, Scale, Series, SeriesStyle, fit, histogram_chart, line_chart,
    run_figures, run_panels, ticks::transform,
};
use sojourn::report::plots::{Orientation, profile_panels, sweep_panels};
use sojourn::report::{ProfileReport, RunReport};
use sojourn::simulation::{RunConfig, RunResult, run};
use sojourn::sweep::{PointResult, Sweep};
use sojourn::transport::PhaseFunction;
use sojourn::units::LengthUnit;

use super::svg::{self, Svg, label_width};
use crate::support::{layer, uniform_sphere};

struct SmallRun {
    medium: Medium,
    result: RunResult,
    report: RunReport,
}

impl SmallRun {
    fn new(medium: Medium, photons: u64) -> Self {
        let config = RunConfig {
            photons,
            seed: 3,
            ..RunConfig::default()
        };
        let result = run(&medium, &config);
        let report = RunReport::new(&medium, "test", &config, &result);
        Self {
            medium,
            result,
            report,
        }
    }

    fn inputs(&self) -> RunInputs<'_> {
        RunInputs {
            medium: &self.medium,
            tally: &self.result.tally,
            report: &self.report,
        }
    }
}

fn two_zone_sphere() -> Medium {
    let core = Layer::new("core", 40.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
    let envelope = Layer::new("envelope", 4.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
    Medium::sphere(vec![(0.3, core), (1.0, envelope)], Source::centre())
        .unwrap()
        .with_name("two-zone test sphere")
}

fn slab() -> Medium {
    Medium::slab(
        vec![(
            1.0,
            layer(8.0, 0.98, PhaseFunction::henyey_greenstein(0.5).unwrap()),
        )],
        1.0,
        Source::normal_beam(),
    )
    .unwrap()
}

/// The bars are drawn once each (plus the legend swatch), inside the plot frame, and both
/// legend entries of a distribution (sample and theory, where there is one) are present.
fn check_distribution(panel: &DistributionPanel, expect_theory: bool) -> Svg {
    let spec = panel.spec().unwrap();
    let figure = panel.render().unwrap();
    assert_eq!(figure.name, panel.name);
    let svg = svg::parse(&figure.svg);
    let bars = svg.filled(&Colour::BarFill.hex());
    assert_eq!(
        bars.len(),
        spec.bars.drawn() + 1,
        "one rect per non-empty bar plus the legend swatch"
    );
    assert!(spec.bars.drawn() >= 5, "{} bars", spec.bars.drawn());
    assert!(svg.has_text(&spec.bars.label), "legend lacks the histogram");
    assert_eq!(spec.chart.series.len(), usize::from(expect_theory));
    for series in &spec.chart.series {
        assert!(
            svg.has_text(&series.label),
            "legend lacks {:?}",
            series.label
        );
    }
    for line in &spec.chart.reference_lines {
        assert!(svg.has_text(&line.label), "legend lacks {:?}", line.label);
    }
    check_ranges(&spec.chart, Some(&spec.bars));
    // In pixels: every bar sits inside the frame.
    let frame = svg.frame(&Colour::Ink.hex());
    let legend_swatch_top = frame.y + frame.height + 60.0;
    for bar in bars.iter().filter(|b| b.y < legend_swatch_top) {
        assert!(bar.x >= frame.x - 0.5 && bar.x + bar.width <= frame.x + frame.width + 0.5);
        assert!(bar.y >= frame.y - 0.5 && bar.y + bar.height <= frame.y + frame.height + 0.5);
    }
    check_tick_labels(&svg);
    svg
}

/// The fitted axes hold every bar, point (with its error bar) and reference line.
fn check_ranges(chart: &ChartSpec, bars: Option<&Bars>) {
    let frame = fit(chart, bars).unwrap();
    let (xs, ys) = (chart.x_axis.scale, chart.y_axis.scale);
    let inside = |range: (f64, f64), t: Option<f64>| {
        t.is_none_or(|t| t >= range.0 - 1e-12 && t <= range.1 + 1e-12)
    };
    if let Some(bars) = bars {
        for (i, &h) in bars.heights.iter().enumerate() {
            if h > 0.0 {
                assert!(inside(frame.x_range, transform(xs, bars.edges[i])));
                assert!(inside(frame.x_range, transform(xs, bars.edges[i + 1])));
                assert!(inside(frame.y_range, transform(ys, h)), "bar {i} = {h}");
            }
        }
    }
    for series in &chart.series {
        for (i, &(x, y)) in series.points.iter().enumerate() {
            assert!(inside(frame.x_range, transform(xs, x)), "{x} outside x");
            assert!(inside(frame.y_range, transform(ys, y)), "{y} outside y");
            if let Some(errors) = &series.y_errors {
                assert!(inside(frame.y_range, transform(ys, y + errors[i])));
            }
        }
    }
    for line in &chart.reference_lines {
        assert!(
            inside(frame.x_range, transform(xs, line.value))
                || inside(frame.y_range, transform(ys, line.value))
        );
    }
    assert!(frame.x_ticks.major.len() >= 2, "{:?}", frame.x_ticks);
    assert!(frame.y_ticks.major.len() >= 2, "{:?}", frame.y_ticks);
}

/// Neighbouring x tick labels do not overlap.
fn check_tick_labels(svg: &Svg) {
    let frame = svg.frame(&Colour::Ink.hex());
    let labels = svg.x_tick_labels(&frame);
    assert!(labels.len() >= 2, "x tick labels: {labels:?}");
    for pair in labels.windows(2) {
        let gap = pair[1].x - pair[0].x;
        let needed = (label_width(&pair[0]) + label_width(&pair[1])) / 2.0;
        assert!(
            gap > needed,
            "tick labels {:?} and {:?} overlap",
            pair[0].text,
            pair[1].text
        );
    }
}

#[test]
fn uniform_sphere_escape_times_sit_on_the_first_passage_curve() {
    let run = SmallRun::new(uniform_sphere(6.0), 3000);
    let panel = escape_time_panel(&run.inputs()).unwrap();
    let svg = check_distribution(&panel, true);
    assert!(svg.has_text("diffusion first-passage density (extrapolated radius)"));
    let labels: Vec<&str> = panel.marks.iter().map(|m| m.label.as_str()).collect();
    for start in [
        "Monte Carlo mean",
        "Monte Carlo median",
        "diffusion mean",
        "diffusion median",
        "rule of thumb",
    ] {
        assert!(
            labels.iter().any(|l| l.starts_with(start)),
            "no mark {start:?} in {labels:?}"
        );
    }
    // The theory curve is a density: on the log axis (per unit ln t) its area is 1.
    let spec = panel.spec().unwrap();
    assert_eq!(spec.chart.x_axis.scale, Scale::Log);
    assert!(spec.chart.y_axis.label.contains("per unit ln t"));
    let curve = &spec.chart.series[0].points;
    let area: f64 = curve
        .windows(2)
        .map(|w| (w[1].0 / w[0].0).ln() * (w[0].1 + w[1].1) / 2.0)
        .sum();
    assert!((area - 1.0).abs() < 1e-3, "area under the curve {area}");
    // And so is the histogram's (every photon escapes a conservative sphere).
    let bars = &spec.bars;
    let area: f64 = bars
        .heights
        .iter()
        .zip(bars.edges.windows(2))
        .map(|(h, e)| h * (e[1] / e[0]).ln())
        .sum();
    assert!((area - 1.0).abs() < 1e-9, "area under the bars {area}");
    assert!(spec.chart.title.contains("Escape time"));
    assert!(spec.chart.subtitle.contains("3\u{2009}000 photons"));
}

#[test]
fn scattering_counts_render_with_theory_and_integer_bars() {
    let run = SmallRun::new(uniform_sphere(6.0), 3000);
    let panel = scatterings_panel(&run.inputs()).unwrap();
    check_distribution(&panel, true);
    let spec = panel.spec().unwrap();
    assert!(
        spec.bars.edges.iter().all(|e| e.fract() == 0.5),
        "{:?}",
        spec.bars.edges
    );
}

#[test]
fn layered_sphere_marks_diffusion_means_and_has_a_time_budget() {
    let run = SmallRun::new(two_zone_sphere(), 2000);
    let panel = escape_time_panel(&run.inputs()).unwrap();
    check_distribution(&panel, false);
    let labels: Vec<&str> = panel.marks.iter().map(|m| m.label.as_str()).collect();
    assert!(
        labels
            .iter()
            .any(|l| l.starts_with("diffusion mean, extrapolated surface"))
    );
    assert!(
        labels
            .iter()
            .any(|l| l.starts_with("diffusion mean, surface at boundary"))
    );

    let budget = TimeBudgetPanel::for_run(&run.inputs()).unwrap();
    // The layer shares are the diffusion estimate's, and the fine curve ends at 100 %.
    let total: f64 = budget.layers.iter().map(|l| l.share).sum();
    assert!((total - 1.0).abs() < 1e-12);
    let last = budget.time_share.last().unwrap();
    assert!((last.0 - 1.0).abs() < 1e-12 && (last.1 - 1.0).abs() < 1e-9);
    // The fine curve passes through the model's own layer points.
    let at_core = budget
        .time_share
        .iter()
        .find(|(r, _)| (r - 0.3).abs() < 1e-12)
        .unwrap();
    assert!((at_core.1 - budget.layers[0].cumulative_share).abs() < 1e-9);
    let spec = budget.spec();
    check_ranges(&spec, None);
    let figure = budget.render().unwrap();
    let svg = svg::parse(&figure.svg);
    for series in spec.series.iter().filter(|s| !s.label.is_empty()) {
        assert!(
            svg.has_text(&series.label),
            "legend lacks {:?}",
            series.label
        );
    }
    assert!(svg.has_text("half of the time"));
    // Layer-boundary markers: one open square per layer and the centre, plus the legend's.
    let squares = svg
        .rects
        .iter()
        .filter(|r| r.stroke == Colour::Vermilion.hex().to_uppercase() && r.fill == "NONE")
        .count();
    assert_eq!(squares, budget.layers.len() + 2);
    check_tick_labels(&svg);
    // The run's Monte Carlo residence on the same cells, with 1σ bars, and no note that
    // it is missing.
    let monte_carlo = spec
        .series
        .iter()
        .find(|s| s.label.starts_with("Monte Carlo: share"))
        .expect("a Monte Carlo series");
    assert_eq!(
        monte_carlo.y_errors.as_ref().map(Vec::len),
        Some(monte_carlo.points.len())
    );
    assert_eq!(monte_carlo.points.len(), budget.layers.len() + 1);
    assert!((monte_carlo.points.last().unwrap().1 - 1.0).abs() < 1e-12);
    assert!(
        spec.notes
            .iter()
            .any(|n| n.starts_with("half the time inside"))
    );
    assert!(!spec.notes.iter().any(|n| n.contains("not tallied")));
}

#[test]
fn run_figures_cover_each_geometry() {
    let sphere = SmallRun::new(two_zone_sphere(), 800);
    let names: Vec<String> = run_panels(&sphere.inputs())
        .iter()
        .map(|p| p.name().to_string())
        .collect();
    assert_eq!(names, ["escape-time", "scatterings", "time-budget"]);
    let slab = SmallRun::new(slab(), 1500);
    let figures = run_figures(&slab.inputs()).unwrap();
    let names: Vec<&str> = figures.iter().map(|f| f.name.as_str()).collect();
    assert_eq!(
        names,
        ["escape-time", "scatterings"],
        "no time budget for a slab"
    );
    for figure in &figures {
        svg::parse(&figure.svg);
    }
    let panel = escape_time_panel(&slab.inputs()).unwrap();
    check_distribution(&panel, false);
    // The slab absorbs: no conservative diffusion time is drawn beside its escape times.
    assert!(
        panel
            .marks
            .iter()
            .all(|m| !m.label.contains("diffusion") && !m.label.contains("rule of thumb")),
        "{:?}",
        panel.marks.iter().map(|m| &m.label).collect::<Vec<_>>()
    );
    assert!(panel.theory.is_none());
    assert!(panel.notes.iter().any(|n| n.contains("the medium absorbs")));
    let html = render_html_report("slab", "sub", "report <text>", &figures);
    assert_eq!(html.matches("<svg").count(), 2);
    assert!(html.contains("report &lt;text&gt;"));
}

#[test]
fn line_chart_draws_log_axes_error_bars_and_reference_lines() {
    let points = vec![(2.0, 0.8), (5.0, 4.1), (10.0, 17.0), (50.0, 390.0)];
    let errors = vec![0.1, 0.3, 1.5, 30.0];
    let spec = ChartSpec {
        title: "Mean scatterings against optical radius".into(),
        subtitle: "four runs".into(),
        x_axis: Axis::log("optical radius τ"),
        y_axis: Axis::log("mean scatterings"),
        series: vec![
            Series::new(
                "Monte Carlo ± 1σ",
                points.clone(),
                SeriesStyle::points(Colour::Vermilion, MarkerShape::Circle),
            )
            .with_y_errors(errors),
            Series::new(
                "diffusion τ²/2",
                (1..=60).map(|t| (t as f64, (t * t) as f64 / 2.0)).collect(),
                SeriesStyle::cycle(0),
            ),
        ],
        reference_lines: vec![ReferenceLine::horizontal(
            "one scattering",
            1.0,
            LineStyle::new(Colour::Slate, 2.0, Dash::Dotted),
        )],
        notes: vec!["a note".into()],
    };
    check_ranges(&spec, None);
    let svg = svg::parse(&line_chart(&spec).unwrap());
    for label in [
        "Monte Carlo ± 1σ",
        "diffusion τ²/2",
        "one scattering",
        "a note",
    ] {
        assert!(svg.has_text(label), "legend lacks {label:?}");
    }
    // One filled circle per point of the first series and one in the legend; the second
    // series' circles (style 0 has circle markers too) add 60 + 1.
    assert_eq!(svg.circles, points.len() + 1 + 60 + 1);
    // Error bars: a stem and two caps per point, and the legend's stem.
    let vermilion = Colour::Vermilion.hex().to_uppercase();
    assert_eq!(
        svg.strokes.iter().filter(|s| **s == vermilion).count(),
        3 * points.len() + 1
    );
    check_tick_labels(&svg);
}

#[test]
fn histogram_chart_on_linear_axes_draws_each_bar_once() {
    let spec = HistogramSpec {
        chart: ChartSpec {
            title: "t".into(),
            subtitle: String::new(),
            x_axis: Axis::linear("x (ns)"),
            y_axis: Axis::linear_from_zero("density (1/ns)"),
            series: vec![],
            reference_lines: vec![ReferenceLine::vertical(
                "mean",
                2.2,
                LineStyle::new(Colour::Indigo, 2.0, Dash::Dashed),
            )],
            notes: vec![],
        },
        bars: Bars {
            label: "sample".into(),
            edges: vec![0.0, 1.0, 2.0, 3.0, 4.0],
            heights: vec![0.1, 0.0, 0.5, 0.4],
        },
    };
    check_ranges(&spec.chart, Some(&spec.bars));
    let svg = svg::parse(&histogram_chart(&spec).unwrap());
    assert_eq!(svg.filled(&Colour::BarFill.hex()).len(), 3 + 1);
    assert!(svg.has_text("sample") && svg.has_text("mean"));
    check_tick_labels(&svg);
}

#[test]
fn malformed_specs_are_errors() {
    let chart = ChartSpec {
        title: "bad".into(),
        subtitle: String::new(),
        x_axis: Axis::log("x"),
        y_axis: Axis::linear("y"),
        series: vec![Series::new(
            "s",
            vec![(-1.0, 1.0), (0.0, 2.0)],
            SeriesStyle::cycle(1),
        )],
        reference_lines: vec![],
        notes: vec![],
    };
    assert!(matches!(line_chart(&chart), Err(PlotError::NoData { .. })));
    let spec = HistogramSpec {
        chart: ChartSpec {
            x_axis: Axis::linear("x"),
            ..chart.clone()
        },
        bars: Bars {
            label: "b".into(),
            edges: vec![0.0, 1.0],
            heights: vec![1.0, 2.0],
        },
    };
    assert!(matches!(
        histogram_chart(&spec),
        Err(PlotError::LengthMismatch { .. })
    ));
    let spec = HistogramSpec {
        bars: Bars {
            label: "b".into(),
            edges: vec![0.0, 2.0, 1.0],
            heights: vec![1.0, 2.0],
        },
        ..spec
    };
    assert!(matches!(
        histogram_chart(&spec),
        Err(PlotError::EdgesNotIncreasing { index: 2, .. })
    ));
}

/// Series with a label are in the legend, and the fitted axes hold the data.
fn check_line_panel(spec: &ChartSpec, svg_text: &str) -> Svg {
    check_ranges(spec, None);
    let svg = svg::parse(svg_text);
    for series in spec.series.iter().filter(|s| !s.label.is_empty()) {
        assert!(
            svg.has_text(&series.label),
            "legend lacks {:?}",
            series.label
        );
    }
    for line in spec.reference_lines.iter().filter(|l| !l.label.is_empty()) {
        assert!(svg.has_text(&line.label), "legend lacks {:?}", line.label);
    }
    for note in &spec.notes {
        assert!(svg.has_text(note), "notes lack {note:?}");
    }
    check_tick_labels(&svg);
    svg
}

fn labels(spec: &ChartSpec) -> Vec<&str> {
    spec.series.iter().map(|s| s.label.as_str()).collect()
}

#[test]
fn profile_panels_show_structure_photosphere_and_budget() {
    let medium = two_zone_sphere();
    let report = ProfileReport::new(&medium, "test").unwrap();
    let panels = profile_panels(&medium, &report);
    let names: Vec<&str> = panels.iter().map(|p| p.name()).collect();
    assert_eq!(names, ["mean-free-path", "optical-depth", "time-budget"]);

    let structure = OpticalStructurePanel::from_profile(&medium, &report).unwrap();
    // Two step points per shell; τ from 40·0.3 + 4·0.7 = 14.8 at the centre to 0.
    assert_eq!(structure.mean_free_path.len(), 4);
    assert!((structure.optical_depth[0].1 - 14.8).abs() < 1e-12);
    assert_eq!(*structure.optical_depth.last().unwrap(), (1.0, 0.0));
    let photosphere = report.analysis.photosphere_radius_cm.unwrap();
    assert!((photosphere - (1.0 - (2.0 / 3.0) / 4.0)).abs() < 1e-12);

    // One quantity per figure: the mean free path on its own logarithmic axis ...
    let spec = structure.mean_free_path_spec();
    assert_eq!(spec.y_axis.scale, Scale::Log);
    assert_eq!(spec.y_axis.label, "mean free path l (cm)");
    assert_eq!(labels(&spec), ["mean free path l (cm)"]);
    assert!(
        !spec
            .reference_lines
            .iter()
            .any(|l| l.label.contains("τ = 2/3") && l.orientation == Orientation::Horizontal)
    );
    let svg = panels[0].render().unwrap().svg;
    check_line_panel(&spec, &svg);

    // ... and the optical depth against the depth below the surface, both axes log, so
    // the photosphere, 1/6 cm below the surface of this 1 cm sphere, is not squeezed.
    let spec = structure.optical_depth_spec();
    assert_eq!(
        (spec.x_axis.scale, spec.y_axis.scale),
        (Scale::Log, Scale::Log)
    );
    assert!(spec.x_axis.label.starts_with("depth below the surface"));
    assert!(
        spec.series[0]
            .points
            .iter()
            .all(|&(d, tau)| d > 0.0 && tau > 0.0)
    );
    assert!(spec.reference_lines.iter().any(|l| {
        l.orientation == Orientation::Vertical
            && (l.value - (1.0 - photosphere)).abs() < 1e-12
            && l.label.starts_with("photosphere (τ = 2/3)")
    }));
    assert!(
        spec.reference_lines
            .iter()
            .any(|l| { l.orientation == Orientation::Horizontal && l.value == 2.0 / 3.0 })
    );
    check_line_panel(&spec, &panels[1].render().unwrap().svg);

    let budget = ProfileTimeBudgetPanel::from_profile(&medium, &report).unwrap();
    let spec = budget.spec();
    assert_eq!(spec.series.len(), 4, "{:?}", labels(&spec));
    assert!(labels(&spec).contains(&"share of T = (1/c)∫ r/l dr accrued inside r"));
    // The accrual curve ends at 100 % and passes the report's half-time radius at 50 %.
    let accrual = &budget.accrual;
    assert!((accrual.last().unwrap().1 - 1.0).abs() < 1e-12);
    let half = report.analysis.time_budget.accrual_radius_50_percent_cm;
    let below = accrual.iter().rfind(|(r, _)| *r <= half).unwrap();
    let above = accrual.iter().find(|(r, _)| *r > half).unwrap();
    assert!(below.1 <= 0.5 + 1e-12 && above.1 >= 0.5 - 1e-12);
    assert!(!spec.notes.iter().any(|n| n.contains("Monte Carlo")));
    check_line_panel(&spec, &budget.render().unwrap().svg);
}

fn resolved_slab_run(photons: u64) -> SmallRun {
    resolved_slab_run_from(photons, Source::normal_beam())
}

/// The two-layer test slab with its resolved tallies, lit by `source`.
fn resolved_slab_run_from(photons: u64, source: Source) -> SmallRun {
    let medium = Medium::slab(
        vec![
            (
                0.5,
                layer(10.0, 0.99, PhaseFunction::henyey_greenstein(0.3).unwrap()),
            ),
            (
                1.5,
                layer(10.0, 0.97, PhaseFunction::henyey_greenstein(0.3).unwrap()),
            ),
        ],
        1.0,
        source,
    )
    .unwrap()
    .with_name("two-layer test slab");
    let config = RunConfig {
        photons,
        seed: 5,
        resolved: Some(resolved_layout(&medium, None, 60, 10)),
        ..RunConfig::default()
    };
    let result = run(&medium, &config);
    let report = RunReport::new(&medium, "test", &config, &result);
    SmallRun {
        medium,
        result,
        report,
    }
}

#[test]
fn resolved_slab_has_time_absorption_and_angle_panels() {
    let run = resolved_slab_run(3000);
    let names: Vec<String> = run_panels(&run.inputs())
        .iter()
        .map(|p| p.name().to_string())
        .collect();
    assert_eq!(
        names,
        [
            "escape-time",
            "scatterings",
            "time-resolved",
            "absorption-depth",
            "radial-reflectance",
        ]
    );
    // Lit from outside: no limb-darkening panel (it is the law of light from inside).
    assert!(LimbDarkeningPanel::for_run(&run.inputs()).is_none());
    // R(ρ) on log-log axes: the narrow beam's dipole, then the Monte Carlo R and T.
    let radial = RadialReflectancePanel::for_run(&run.inputs()).unwrap();
    let spec = radial.spec();
    assert_eq!(
        (spec.x_axis.scale, spec.y_axis.scale),
        (Scale::Log, Scale::Log)
    );
    assert_eq!(
        labels(&spec),
        [
            "diffusion dipole, semi-infinite, extrapolated boundary",
            "Monte Carlo R(ρ) ± 1σ",
            "Monte Carlo T(ρ) ± 1σ",
        ]
    );
    assert!(
        spec.series[1]
            .points
            .iter()
            .all(|&(rho, r)| rho > 0.0 && r > 0.0)
    );
    let svg = radial.render().unwrap().svg;
    assert!(svg.starts_with("<svg"), "{}", &svg[..40]);
    // Without --resolve, only the existing panels (checked for the plain slab in
    // run_figures_cover_each_geometry).

    let time = TimeResolvedPanel::for_run(&run.inputs()).unwrap();
    let spec = time.spec();
    assert_eq!(spec.y_axis.scale, Scale::Log);
    assert_eq!(
        labels(&spec),
        [
            "diffusion reflectance, extrapolated boundary",
            "diffusion reflectance, zero boundary",
            "diffusion transmittance, extrapolated boundary",
            "Monte Carlo reflectance",
            "Monte Carlo transmittance",
        ]
    );
    // Monte Carlo points: one per non-empty bin, on the tally's bins, per display unit.
    let resolved = run.report.analysis.resolved.as_ref().unwrap();
    let reflected = &spec.series[3];
    assert_eq!(
        reflected.points.len(),
        resolved
            .reflectance_per_s
            .iter()
            .filter(|&&v| v > 0.0)
            .count()
    );
    let unit = &time.unit;
    let (i, r) = resolved
        .reflectance_per_s
        .iter()
        .enumerate()
        .find(|(_, v)| **v > 0.0)
        .unwrap();
    assert_eq!(
        reflected.points[0],
        (unit.show(resolved.time_s[i]), r * unit.size)
    );
    let svg = check_line_panel(&spec, &time.render().unwrap().svg);
    // One circle per reflectance point and one in the legend.
    assert_eq!(svg.circles, reflected.points.len() + 1);

    let absorption = AbsorptionDepthPanel::for_run(&run.inputs()).unwrap();
    let spec = absorption.spec();
    assert_eq!(spec.bars.heights.len(), resolved.absorbed_per_cm.len());
    // The bars integrate to the absorbed fraction.
    let area: f64 = spec
        .bars
        .heights
        .iter()
        .zip(spec.bars.edges.windows(2))
        .map(|(h, e)| h * (e[1] - e[0]))
        .sum();
    assert!(
        (area - run.report.analysis.outcome.absorbed.unwrap()).abs() < 1e-9,
        "{area}"
    );
    assert_eq!(spec.chart.reference_lines.len(), 1, "one interface");
    check_ranges(&spec.chart, Some(&spec.bars));
    let svg = svg::parse(&absorption.render().unwrap().svg);
    assert_eq!(
        svg.filled(&Colour::BarFill.hex()).len(),
        spec.bars.drawn() + 1
    );
    assert!(svg.has_text(&spec.bars.label) && svg.has_text("layer boundary"));
    check_tick_labels(&svg);

    // A plane source inside the slab: its light leaving the top face is limb-darkened.
    let inside = resolved_slab_run_from(3000, Source::SlabPlane { depth_cm: 1.0 });
    let limb = LimbDarkeningPanel::for_run(&inside.inputs()).unwrap();
    let spec = limb.spec();
    assert_eq!(
        labels(&spec)[..2],
        [
            "H(μ)/H(1), deep conservative isotropic medium",
            "Eddington 0.4 + 0.6μ"
        ]
    );
    assert!(labels(&spec)[2].starts_with("Monte Carlo ± 1σ"));
    assert_eq!(spec.series[2].points.len(), 10);
    assert_eq!(spec.series[2].y_errors.as_ref().unwrap().len(), 10);
    let svg = check_line_panel(&spec, &limb.render().unwrap().svg);
    assert_eq!(svg.circles, 10 + 1);
}

/// The figure's view of a sweep's results.
fn study_points(results: &[PointResult]) -> Vec<StudyPoint<'_>> {
    results
        .iter()
        .map(|r| StudyPoint {
            index: r.index,
            parameters: &r.parameters,
            analysis: &r.analysis,
        })
        .collect()
}

#[test]
fn sweep_panel_draws_means_with_errors_and_both_estimates() {
    let mut sweep = Sweep::new(400, 9);
    for tau in [1.0, 3.0, 10.0, 30.0] {
        sweep = sweep.point([("optical radius", tau)], uniform_sphere(tau));
    }
    let results = sweep.run();
    let points = study_points(&results);
    let panels = sweep_panels(&points, "", "in code", LengthUnit::Cm);
    assert_eq!(panels.len(), 1);
    let panel = SweepPanel::from_points(&points, "", "in code", LengthUnit::Cm).unwrap();
    let spec = panel.spec();
    assert_eq!(spec.x_axis.scale, Scale::Log, "τ spans 1.5 decades");
    assert_eq!(spec.x_axis.label, "optical radius");
    assert_eq!(
        labels(&spec),
        [
            "diffusion, extrapolated boundary",
            "rule of thumb t ≈ τL/c",
            "Monte Carlo mean ± 1σ",
        ]
    );
    let mc = &spec.series[2];
    assert_eq!(mc.points.len(), 4);
    assert_eq!(mc.y_errors.as_ref().unwrap().len(), 4);
    assert!(spec.subtitle.starts_with("4 points × 400 photons"));
    let svg = check_line_panel(&spec, &panel.render().unwrap().svg);
    assert_eq!(svg.circles, 4 + 1);

    // A narrow range stays linear; a second parameter makes groups.
    let mut sweep = Sweep::new(200, 9);
    for g in [0.0, 0.5] {
        for tau in [2.0, 4.0] {
            sweep = sweep.point([("tau", tau), ("g", g)], uniform_sphere(tau));
        }
    }
    let results = sweep.run();
    let panel =
        SweepPanel::from_points(&study_points(&results), "", "grid", LengthUnit::Cm).unwrap();
    assert_eq!(panel.groups.len(), 2);
    let spec = panel.spec();
    assert_eq!(spec.x_axis.scale, Scale::Linear);
    assert_eq!(spec.series.len(), 6);
    assert!(labels(&spec).contains(&"Monte Carlo mean ± 1σ (g = 0.5000)"));
    check_line_panel(&spec, &panel.render().unwrap().svg);
}

#[test]
fn sweep_panel_draws_no_diffusion_line_through_absorbing_points() {
    let absorbing = |albedo: f64| {
        Medium::sphere(
            vec![(1.0, layer(4.0, albedo, PhaseFunction::Isotropic))],
            Source::centre(),
        )
        .unwrap()
    };
    let sweep = Sweep::new(200, 9)
        .point([("albedo", 0.9)], absorbing(0.9))
        .point([("albedo", 1.0)], absorbing(1.0));
    let results = sweep.run();
    let panel =
        SweepPanel::from_points(&study_points(&results), "", "albedo", LengthUnit::Cm).unwrap();
    let spec = panel.spec();
    let line = |label: &str| {
        spec.series
            .iter()
            .find(|s| s.label.starts_with(label))
            .map_or(0, |s| s.points.len())
    };
    assert_eq!(line("diffusion"), 1, "only the conservative point");
    assert_eq!(line("rule of thumb"), 1);
    assert_eq!(line("Monte Carlo"), 2);
    assert!(spec.notes.iter().any(|n| n.contains("the medium absorbs")));
}

#[test]
fn sweep_axis_names_the_unit_of_the_swept_field() {
    let sweep = Sweep::new(100, 9)
        .point(
            [("layers[0].extinction_coefficient", 2.0)],
            uniform_sphere(2.0),
        )
        .point(
            [("layers[0].extinction_coefficient", 4.0)],
            uniform_sphere(4.0),
        );
    let results = sweep.run();
    let points = study_points(&results);
    let in_mm = SweepPanel::from_points(&points, "", "units", LengthUnit::Mm).unwrap();
    assert_eq!(in_mm.parameter, "layers[0].extinction_coefficient (1/mm)");
    let sweep = Sweep::new(100, 9)
        .point([("layers[1].thickness", 2.0)], uniform_sphere(2.0))
        .point([("layers[1].thickness", 4.0)], uniform_sphere(4.0));
    let results = sweep.run();
    let points = study_points(&results);
    let in_r_sun = SweepPanel::from_points(&points, "", "units", LengthUnit::SolarRadius).unwrap();
    assert_eq!(in_r_sun.parameter, "layers[1].thickness (R_sun)");
    let sweep = Sweep::new(100, 9)
        .point([("layers[0].albedo", 0.9)], uniform_sphere(2.0))
        .point([("layers[0].albedo", 1.0)], uniform_sphere(2.0));
    let results = sweep.run();
    let points = study_points(&results);
    let plain = SweepPanel::from_points(&points, "", "units", LengthUnit::Mm).unwrap();
    assert_eq!(plain.parameter, "layers[0].albedo", "an albedo has no unit");
}
