//! The drawing shared by every chart kind: layout, title, axes with ticks and grid, bars,
//! series, error bars, reference lines, the frame and the legend. Coordinates are mapped by
//! plotters' Cartesian grid in transformed axis space (see [`super::ticks`]); strokes are
//! dashed here, in pixels, so dashes look the same whatever the axis scales.

use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint, Ranged};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::error::PlotError;
use super::spec::{Bars, ChartSpec, Orientation, ReferenceLine, Scale, Series};
use super::style::{Colour, Dash, LineStyle, MarkerShape, SeriesStyle, size, text_width};
use super::ticks::{self, Ticks, tick_label, transform};

/// Height of the title block above the chart, px.
const TITLE_BLOCK: u32 = 100;
/// Left and right page margin, px.
const MARGIN: i32 = 36;
/// Width of a legend symbol, px.
const SYMBOL: i32 = 52;

type Grid = Cartesian2d<TickedAxis, TickedAxis>;

/// A linear coordinate (in transformed axis space) whose ticks are chosen by
/// [`super::ticks`], not by plotters.
struct TickedAxis {
    low: f64,
    high: f64,
    major: Vec<f64>,
    minor: Vec<f64>,
}

impl TickedAxis {
    fn new(range: (f64, f64), ticks: &Ticks) -> Self {
        Self {
            low: range.0,
            high: range.1,
            major: ticks.major.clone(),
            minor: ticks.minor.clone(),
        }
    }
}

impl Ranged for TickedAxis {
    type FormatOption = DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        let fraction = (value - self.low) / (self.high - self.low);
        limit.0 + (fraction * (limit.1 - limit.0) as f64).round() as i32
    }

    fn key_points<H: KeyPointHint>(&self, hint: H) -> Vec<f64> {
        if hint.weight().allow_light_points() {
            self.minor.clone()
        } else {
            self.major.clone()
        }
    }

    fn range(&self) -> std::ops::Range<f64> {
        self.low..self.high
    }
}
type Chart<'a, 'b> = ChartContext<'a, SVGBackend<'b>, Grid>;
type Root<'a> = DrawingArea<SVGBackend<'a>, plotters::coord::Shift>;

/// plotters writes `font-size = size / 1.24`; this gives text of `px` pixels.
fn font(px: f64) -> FontDesc<'static> {
    FontDesc::new(FontFamily::SansSerif, px * 1.24, FontStyle::Normal)
}

fn text_style(px: f64, colour: Colour, h: HPos, v: VPos) -> TextStyle<'static> {
    TextStyle {
        font: font(px),
        color: colour.rgb().to_backend_color(),
        pos: Pos::new(h, v),
    }
}

fn stroke(colour: Colour, width: f64) -> ShapeStyle {
    ShapeStyle {
        color: colour.rgb().to_rgba(),
        filled: false,
        stroke_width: width.round().max(1.0) as u32,
    }
}

fn fill(colour: Colour) -> ShapeStyle {
    ShapeStyle {
        color: colour.rgb().to_rgba(),
        filled: true,
        stroke_width: 0,
    }
}

/// Extent of the data on one axis, in transformed coordinates.
#[derive(Debug, Clone, Copy)]
struct Extent(Option<(f64, f64)>);

impl Extent {
    fn add(&mut self, t: Option<f64>) {
        if let Some(t) = t {
            self.0 = Some(match self.0 {
                None => (t, t),
                Some((a, b)) => (a.min(t), b.max(t)),
            });
        }
    }
}

/// The fitted axes of one chart: transformed ranges and ticks.
#[derive(Debug, Clone, PartialEq)]
pub struct Frame {
    /// Horizontal range (transformed coordinates).
    pub x_range: (f64, f64),
    /// Vertical range (transformed coordinates).
    pub y_range: (f64, f64),
    /// Horizontal ticks.
    pub x_ticks: Ticks,
    /// Vertical ticks.
    pub y_ticks: Ticks,
}

fn check(spec: &ChartSpec, bars: Option<&Bars>) -> Result<(), PlotError> {
    let figure = || spec.title.clone();
    if let Some(bars) = bars {
        if bars.edges.len() != bars.heights.len() + 1 {
            return Err(PlotError::LengthMismatch {
                figure: figure(),
                what: "histogram edges".into(),
                expected: bars.heights.len() + 1,
                found: bars.edges.len(),
            });
        }
        if let Some(index) = bars
            .edges
            .windows(2)
            .position(|w| w[0].is_nan() || w[1].is_nan() || w[1] <= w[0])
        {
            return Err(PlotError::EdgesNotIncreasing {
                figure: figure(),
                index: index + 1,
                value: bars.edges[index + 1],
            });
        }
    }
    for series in &spec.series {
        if let Some(errors) = &series.y_errors
            && errors.len() != series.points.len()
        {
            return Err(PlotError::LengthMismatch {
                figure: figure(),
                what: format!("y errors of {:?}", series.label),
                expected: series.points.len(),
                found: errors.len(),
            });
        }
    }
    Ok(())
}

/// Fits the axes to everything the chart will show.
pub fn fit(spec: &ChartSpec, bars: Option<&Bars>) -> Result<Frame, PlotError> {
    check(spec, bars)?;
    let (xs, ys) = (spec.x_axis.scale, spec.y_axis.scale);
    let mut x = Extent(None);
    let mut y = Extent(None);
    if let Some(bars) = bars {
        for (i, &h) in bars.heights.iter().enumerate() {
            let (a, b) = (
                transform(xs, bars.edges[i]),
                transform(xs, bars.edges[i + 1]),
            );
            if h != 0.0 && a.is_some() && b.is_some() && transform(ys, h).is_some() {
                x.add(a);
                x.add(b);
                y.add(transform(ys, h));
                if ys == Scale::Linear {
                    y.add(Some(0.0));
                }
            }
        }
    }
    for series in &spec.series {
        for (i, &(px, py)) in series.points.iter().enumerate() {
            let (tx, ty) = (transform(xs, px), transform(ys, py));
            if tx.is_none() || ty.is_none() {
                continue;
            }
            x.add(tx);
            y.add(ty);
            if let Some(errors) = &series.y_errors {
                let e = errors[i].abs();
                if e.is_finite() {
                    y.add(transform(ys, py + e));
                    y.add(transform(ys, py - e));
                }
            }
        }
    }
    for line in &spec.reference_lines {
        match line.orientation {
            Orientation::Vertical => x.add(transform(xs, line.value)),
            Orientation::Horizontal => y.add(transform(ys, line.value)),
        }
    }
    let no_data = |axis: &str| PlotError::NoData {
        figure: spec.title.clone(),
        reason: format!("no finite {axis} value can be shown on its axis"),
    };
    let (x0, x1) = x.0.ok_or_else(|| no_data("x"))?;
    let (y0, y1) = y.0.ok_or_else(|| no_data("y"))?;
    let x_range = ticks::padded_range(xs, x0, x1, spec.x_axis.from_zero);
    let y_range = ticks::padded_range(ys, y0, y1, spec.y_axis.from_zero);
    Ok(Frame {
        x_ticks: ticks::ticks(xs, x_range.0, x_range.1),
        y_ticks: ticks::ticks(ys, y_range.0, y_range.1),
        x_range,
        y_range,
    })
}

/// One legend entry's symbol.
enum Symbol {
    Bar,
    Series(SeriesStyle, bool),
    Line(LineStyle),
}

fn legend_entries<'s>(spec: &'s ChartSpec, bars: Option<&'s Bars>) -> Vec<(&'s str, Symbol)> {
    let mut entries = Vec::new();
    if let Some(bars) = bars
        && !bars.label.is_empty()
    {
        entries.push((bars.label.as_str(), Symbol::Bar));
    }
    for series in &spec.series {
        if !series.label.is_empty() {
            entries.push((
                series.label.as_str(),
                Symbol::Series(series.style, series.y_errors.is_some()),
            ));
        }
    }
    for line in &spec.reference_lines {
        if !line.label.is_empty() {
            entries.push((line.label.as_str(), Symbol::Line(line.style)));
        }
    }
    entries
}

/// Legend layout: columns and rows (notes take a full row each).
fn legend_layout(entries: &[(&str, Symbol)], notes: usize) -> (usize, usize) {
    let usable = size::WIDTH as f64 - 2.0 * MARGIN as f64;
    let widest = entries
        .iter()
        .map(|(label, _)| text_width(label, size::LEGEND))
        .fold(0.0, f64::max);
    let needed = SYMBOL as f64 + 16.0 + widest + 24.0;
    let columns = if needed * 2.0 <= usable { 2 } else { 1 };
    (columns, entries.len().div_ceil(columns) + notes)
}

/// Draws `spec` (with `bars` underneath, if any) and returns the SVG document.
pub fn render(spec: &ChartSpec, bars: Option<&Bars>) -> Result<String, PlotError> {
    let frame = fit(spec, bars)?;
    let entries = legend_entries(spec, bars);
    let (columns, rows) = legend_layout(&entries, spec.notes.len());
    let height = size::CHART_HEIGHT + rows as u32 * size::LEGEND_ROW + 24;
    let mut svg = String::new();
    let failed = |error: &dyn std::fmt::Display| PlotError::Drawing {
        figure: spec.title.clone(),
        message: error.to_string(),
    };
    {
        let root = SVGBackend::with_string(&mut svg, (size::WIDTH, height)).into_drawing_area();
        root.fill(&Colour::Paper.rgb()).map_err(|e| failed(&e))?;
        draw_titles(&root, spec).map_err(|e| failed(&e))?;
        let (_, rest) = root.split_vertically(TITLE_BLOCK);
        let (chart_area, _) = rest.split_vertically(size::CHART_HEIGHT - TITLE_BLOCK);
        let mut chart = build_chart(&chart_area, &frame).map_err(|e| failed(&e))?;
        draw_mesh(&mut chart, spec, &frame).map_err(|e| failed(&e))?;
        let plot = chart.plotting_area().get_pixel_range();
        let plot = (plot.0.start, plot.0.end - 1, plot.1.start, plot.1.end - 1);
        if let Some(bars) = bars {
            draw_bars(&root, &chart, spec, &frame, bars).map_err(|e| failed(&e))?;
        }
        for series in &spec.series {
            draw_series(&root, &chart, spec, &frame, series).map_err(|e| failed(&e))?;
        }
        for line in &spec.reference_lines {
            draw_reference(&root, &chart, spec, plot, line).map_err(|e| failed(&e))?;
        }
        root.draw(&Rectangle::new(
            [(plot.0, plot.2), (plot.1, plot.3)],
            stroke(Colour::Ink, 1.5),
        ))
        .map_err(|e| failed(&e))?;
        let legend_top = size::CHART_HEIGHT as i32 + 8;
        draw_legend(&root, &entries, &spec.notes, columns, legend_top).map_err(|e| failed(&e))?;
        root.present().map_err(|e| failed(&e))?;
    }
    Ok(svg)
}

type DrawResult = Result<(), DrawingAreaErrorKind<std::io::Error>>;

/// Cuts `text` to fit `width` px at `font_size`, with an ellipsis.
fn fit_text(text: &str, font_size: f64, width: f64) -> String {
    if text_width(text, font_size) <= width {
        return text.to_string();
    }
    let keep = (width / (0.56 * font_size)).floor() as usize;
    let mut out: String = text.chars().take(keep.saturating_sub(1)).collect();
    out.push('…');
    out
}

/// The title's font size: [`size::TITLE`], or smaller (down to [`SMALLEST_TITLE`]) for a
/// long title.
fn title_size(title: &str, width: f64) -> f64 {
    let fitting = width / (BOLD_WIDTH * 0.56 * title.chars().count().max(1) as f64);
    fitting.clamp(SMALLEST_TITLE, size::TITLE)
}

/// Bold text is about this much wider than [`text_width`] estimates.
const BOLD_WIDTH: f64 = 1.07;

/// The smallest title font, px; a title that does not fit at it wraps onto a second line.
const SMALLEST_TITLE: f64 = 22.0;

/// The title's font size and lines: one line at [`title_size`] when it fits at
/// [`SMALLEST_TITLE`] or more, else two lines at that size, broken at the last space that
/// lets the first line fit (the second line is shortened with an ellipsis only if it still
/// does not fit).
fn title_lines(title: &str, width: f64) -> (f64, Vec<String>) {
    let px = title_size(title, width);
    let fits = |text: &str| text_width(text, SMALLEST_TITLE * BOLD_WIDTH) <= width;
    if px > SMALLEST_TITLE || fits(title) {
        return (px, vec![title.to_string()]);
    }
    let break_at = title
        .char_indices()
        .rev()
        .find(|&(i, c)| c == ' ' && fits(&title[..i]))
        .map(|(i, _)| i);
    match break_at {
        Some(i) => (
            SMALLEST_TITLE,
            vec![
                title[..i].to_string(),
                fit_text(
                    title[i + 1..].trim_start(),
                    SMALLEST_TITLE * BOLD_WIDTH,
                    width,
                ),
            ],
        ),
        None => (
            SMALLEST_TITLE,
            vec![fit_text(title, SMALLEST_TITLE * BOLD_WIDTH, width)],
        ),
    }
}

fn draw_titles(root: &Root, spec: &ChartSpec) -> DrawResult {
    let width = size::WIDTH as f64 - 2.0 * MARGIN as f64;
    let (px, lines) = title_lines(&spec.title, width);
    let title_font = FontDesc::new(FontFamily::SansSerif, px * 1.24, FontStyle::Bold);
    // One line at the top; two lines closer together, moving the subtitle down.
    let (first, step, subtitle_y) = if lines.len() == 1 {
        (18, 0, 62)
    } else {
        (4, 30, 66)
    };
    for (k, line) in lines.into_iter().enumerate() {
        root.draw(&Text::new(
            line,
            (MARGIN, first + step * k as i32),
            TextStyle {
                font: title_font.clone(),
                color: Colour::Ink.rgb().to_backend_color(),
                pos: Pos::new(HPos::Left, VPos::Top),
            },
        ))?;
    }
    root.draw(&Text::new(
        fit_text(&spec.subtitle, size::SUBTITLE, width),
        (MARGIN, subtitle_y),
        text_style(size::SUBTITLE, Colour::Slate, HPos::Left, VPos::Top),
    ))
}

fn build_chart<'a, 'b>(
    area: &'a Root<'b>,
    frame: &Frame,
) -> Result<Chart<'a, 'b>, DrawingAreaErrorKind<std::io::Error>> {
    let x = TickedAxis::new(frame.x_range, &frame.x_ticks);
    let y = TickedAxis::new(frame.y_range, &frame.y_ticks);
    ChartBuilder::on(area)
        .margin_left(MARGIN as u32 - 12)
        .margin_right(MARGIN as u32 + 8)
        .margin_top(6)
        .margin_bottom(4)
        .x_label_area_size(72)
        .y_label_area_size(118)
        .build_cartesian_2d(x, y)
}

fn draw_mesh(chart: &mut Chart, spec: &ChartSpec, frame: &Frame) -> DrawResult {
    let (xs, ys) = (spec.x_axis.scale, spec.y_axis.scale);
    let x_major = frame.x_ticks.major.clone();
    let y_major = frame.y_ticks.major.clone();
    let x_format = move |t: &f64| tick_label(xs, *t, &x_major);
    let y_format = move |t: &f64| tick_label(ys, *t, &y_major);
    chart
        .configure_mesh()
        .x_desc(spec.x_axis.label.as_str())
        .y_desc(spec.y_axis.label.as_str())
        .axis_desc_style(text_style(
            size::AXIS_LABEL,
            Colour::Ink,
            HPos::Center,
            VPos::Center,
        ))
        .label_style(text_style(
            size::TICK_LABEL,
            Colour::Ink,
            HPos::Center,
            VPos::Center,
        ))
        .x_label_formatter(&x_format)
        .y_label_formatter(&y_format)
        .bold_line_style(stroke(Colour::Grid, 1.0))
        .light_line_style(stroke(Colour::FaintGrid, 1.0))
        .axis_style(stroke(Colour::Ink, 1.5))
        .set_all_tick_mark_size(6)
        .x_label_offset(0)
        .draw()
}

/// Splits a pixel polyline into the dashes of `pattern` (one piece for a solid line).
pub fn dash_polyline(points: &[(f64, f64)], pattern: &[f64]) -> Vec<Vec<(f64, f64)>> {
    if pattern.is_empty() || points.len() < 2 {
        return vec![points.to_vec()];
    }
    let mut pieces = Vec::new();
    let mut current: Vec<(f64, f64)> = vec![points[0]];
    let (mut phase, mut left) = (0usize, pattern[0]);
    for pair in points.windows(2) {
        let (mut a, b) = (pair[0], pair[1]);
        let mut length = ((b.0 - a.0).powi(2) + (b.1 - a.1).powi(2)).sqrt();
        while length > left {
            let f = left / length;
            let cut = (a.0 + f * (b.0 - a.0), a.1 + f * (b.1 - a.1));
            if phase % 2 == 0 {
                current.push(cut);
                pieces.push(std::mem::take(&mut current));
            } else {
                current = vec![cut];
            }
            length -= left;
            a = cut;
            phase = (phase + 1) % pattern.len();
            left = pattern[phase];
        }
        left -= length;
        if phase % 2 == 0 {
            current.push(b);
        }
    }
    if phase % 2 == 0 && current.len() >= 2 {
        pieces.push(current);
    }
    pieces
}

fn draw_stroke(root: &Root, pixels: &[(f64, f64)], style: LineStyle) -> DrawResult {
    for piece in dash_polyline(pixels, style.dash.pattern()) {
        let coords: Vec<(i32, i32)> = piece
            .iter()
            .map(|&(x, y)| (x.round() as i32, y.round() as i32))
            .collect();
        if coords.len() >= 2 {
            root.draw(&PathElement::new(coords, stroke(style.colour, style.width)))?;
        }
    }
    Ok(())
}

fn pixel(chart: &Chart, tx: f64, ty: f64) -> (f64, f64) {
    let (x, y) = chart.backend_coord(&(tx, ty));
    (x as f64, y as f64)
}

fn draw_bars(
    root: &Root,
    chart: &Chart,
    spec: &ChartSpec,
    frame: &Frame,
    bars: &Bars,
) -> DrawResult {
    let (xs, ys) = (spec.x_axis.scale, spec.y_axis.scale);
    let base = match ys {
        Scale::Linear => 0f64.clamp(frame.y_range.0, frame.y_range.1),
        Scale::Log => frame.y_range.0,
    };
    for (i, &h) in bars.heights.iter().enumerate() {
        let (Some(a), Some(b), Some(top)) = (
            transform(xs, bars.edges[i]),
            transform(xs, bars.edges[i + 1]),
            transform(ys, h),
        ) else {
            continue;
        };
        if h == 0.0 {
            continue;
        }
        let (x0, y0) = chart.backend_coord(&(a, base));
        let (x1, y1) = chart.backend_coord(&(b, top));
        root.draw(&Rectangle::new([(x0, y1), (x1, y0)], fill(Colour::BarFill)))?;
        root.draw(&Rectangle::new(
            [(x0, y1), (x1, y0)],
            stroke(Colour::BarEdge, 1.0),
        ))?;
    }
    Ok(())
}

fn draw_series(
    root: &Root,
    chart: &Chart,
    spec: &ChartSpec,
    frame: &Frame,
    series: &Series,
) -> DrawResult {
    let (xs, ys) = (spec.x_axis.scale, spec.y_axis.scale);
    // Runs of drawable points; a point that cannot be shown breaks the line.
    let mut runs: Vec<Vec<(f64, f64)>> = vec![Vec::new()];
    let mut marks = Vec::new();
    for (i, &(x, y)) in series.points.iter().enumerate() {
        match (transform(xs, x), transform(ys, y)) {
            (Some(tx), Some(ty)) => {
                let p = pixel(chart, tx, ty);
                runs.last_mut().expect("one run").push(p);
                marks.push((i, tx, ty, p));
            }
            _ => runs.push(Vec::new()),
        }
    }
    if let Some(line) = series.style.line {
        for run in runs.iter().filter(|r| r.len() >= 2) {
            draw_stroke(root, run, line)?;
        }
    }
    if let Some(errors) = &series.y_errors {
        for &(i, tx, _, p) in &marks {
            let (value, e) = (series.points[i].1, errors[i].abs());
            if !e.is_finite() || e == 0.0 {
                continue;
            }
            let low = transform(ys, value - e).unwrap_or(frame.y_range.0);
            let high = transform(ys, value + e).unwrap_or(frame.y_range.1);
            let (_, y_low) = pixel(chart, tx, low.max(frame.y_range.0));
            let (_, y_high) = pixel(chart, tx, high.min(frame.y_range.1));
            let style = LineStyle::new(series.style.colour, 2.0, Dash::Solid);
            draw_stroke(root, &[(p.0, y_low), (p.0, y_high)], style)?;
            for y in [y_low, y_high] {
                draw_stroke(root, &[(p.0 - 6.0, y), (p.0 + 6.0, y)], style)?;
            }
        }
    }
    for &(_, _, _, p) in &marks {
        draw_marker(root, series.style.marker, series.style.colour, p)?;
    }
    Ok(())
}

fn draw_marker(root: &Root, shape: MarkerShape, colour: Colour, (x, y): (f64, f64)) -> DrawResult {
    let r = size::MARKER;
    let at = |dx: f64, dy: f64| ((x + dx).round() as i32, (y + dy).round() as i32);
    match shape {
        MarkerShape::None => Ok(()),
        MarkerShape::Circle => {
            root.draw(&Circle::new(at(0.0, 0.0), r.round() as i32, fill(colour)))
        }
        MarkerShape::OpenSquare => {
            let s = 0.85 * r;
            root.draw(&Rectangle::new([at(-s, -s), at(s, s)], fill(Colour::Paper)))?;
            root.draw(&Rectangle::new([at(-s, -s), at(s, s)], stroke(colour, 2.0)))
        }
        MarkerShape::Triangle => root.draw(&Polygon::new(
            vec![at(0.0, -1.15 * r), at(r, 0.75 * r), at(-r, 0.75 * r)],
            fill(colour),
        )),
        MarkerShape::OpenDiamond => {
            let d = 1.2 * r;
            let corners = vec![at(0.0, -d), at(d, 0.0), at(0.0, d), at(-d, 0.0)];
            root.draw(&Polygon::new(corners.clone(), fill(Colour::Paper)))?;
            let mut closed = corners;
            closed.push(closed[0]);
            root.draw(&PathElement::new(closed, stroke(colour, 2.0)))
        }
        MarkerShape::Cross => {
            let d = 0.85 * r;
            root.draw(&PathElement::new(
                vec![at(-d, -d), at(d, d)],
                stroke(colour, 2.5),
            ))?;
            root.draw(&PathElement::new(
                vec![at(-d, d), at(d, -d)],
                stroke(colour, 2.5),
            ))
        }
    }
}

fn draw_reference(
    root: &Root,
    chart: &Chart,
    spec: &ChartSpec,
    plot: (i32, i32, i32, i32),
    line: &ReferenceLine,
) -> DrawResult {
    let (left, right, top, bottom) = (plot.0 as f64, plot.1 as f64, plot.2 as f64, plot.3 as f64);
    match line.orientation {
        Orientation::Vertical => {
            let Some(t) = transform(spec.x_axis.scale, line.value) else {
                return Ok(());
            };
            let (x, _) = pixel(chart, t, 0.0);
            draw_stroke(root, &[(x, top), (x, bottom)], line.style)
        }
        Orientation::Horizontal => {
            let Some(t) = transform(spec.y_axis.scale, line.value) else {
                return Ok(());
            };
            let (_, y) = chart.backend_coord(&(0.0, t));
            let y = y as f64;
            draw_stroke(root, &[(left, y), (right, y)], line.style)
        }
    }
}

fn draw_legend(
    root: &Root,
    entries: &[(&str, Symbol)],
    notes: &[String],
    columns: usize,
    top: i32,
) -> DrawResult {
    let usable = size::WIDTH as i32 - 2 * MARGIN;
    let column_width = usable / columns as i32;
    let row_height = size::LEGEND_ROW as i32;
    let rows = entries.len().div_ceil(columns);
    let label_width = column_width as f64 - SYMBOL as f64 - 30.0;
    for (k, (label, symbol)) in entries.iter().enumerate() {
        // Fill columns top to bottom, so related entries stay together.
        let (column, row) = (k / rows, k % rows);
        let x = MARGIN + column as i32 * column_width;
        let y = top + row as i32 * row_height + row_height / 2;
        let (xf, yf) = (x as f64, y as f64);
        match symbol {
            Symbol::Bar => {
                root.draw(&Rectangle::new(
                    [(x + 4, y - 10), (x + SYMBOL - 4, y + 10)],
                    fill(Colour::BarFill),
                ))?;
                root.draw(&Rectangle::new(
                    [(x + 4, y - 10), (x + SYMBOL - 4, y + 10)],
                    stroke(Colour::BarEdge, 1.0),
                ))?;
            }
            Symbol::Series(style, errors) => {
                if let Some(line) = style.line {
                    draw_stroke(root, &[(xf, yf), (xf + SYMBOL as f64, yf)], line)?;
                }
                let centre = (xf + SYMBOL as f64 / 2.0, yf);
                if *errors {
                    let s = LineStyle::new(style.colour, 2.0, Dash::Solid);
                    draw_stroke(root, &[(centre.0, yf - 12.0), (centre.0, yf + 12.0)], s)?;
                }
                draw_marker(root, style.marker, style.colour, centre)?;
            }
            Symbol::Line(style) => {
                draw_stroke(root, &[(xf, yf), (xf + SYMBOL as f64, yf)], *style)?
            }
        }
        root.draw(&Text::new(
            fit_text(label, size::LEGEND, label_width),
            (x + SYMBOL + 14, y),
            text_style(size::LEGEND, Colour::Ink, HPos::Left, VPos::Center),
        ))?;
    }
    for (k, note) in notes.iter().enumerate() {
        let y = top + (rows + k) as i32 * row_height + row_height / 2;
        root.draw(&Text::new(
            fit_text(note, size::LEGEND, usable as f64),
            (MARGIN + 4, y),
            text_style(size::LEGEND, Colour::Slate, HPos::Left, VPos::Center),
        ))?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dashes_cover_the_on_parts_of_a_line() {
        let pieces = dash_polyline(&[(0.0, 0.0), (100.0, 0.0)], &[10.0, 5.0]);
        // 0–10, 15–25, …, 90–100: seven dashes.
        assert_eq!(pieces.len(), 7);
        assert_eq!(pieces[1][0], (15.0, 0.0));
        assert_eq!(pieces[1][1], (25.0, 0.0));
        let total: f64 = pieces.iter().map(|p| p[p.len() - 1].0 - p[0].0).sum();
        assert!((total - 70.0).abs() < 1e-9);
        assert_eq!(dash_polyline(&[(0.0, 0.0), (3.0, 4.0)], &[]).len(), 1);
    }

    #[test]
    fn long_titles_wrap_onto_two_lines_without_losing_words() {
        let width = size::WIDTH as f64 - 2.0 * MARGIN as f64;
        let short = "Escape time · Ember";
        assert_eq!(title_lines(short, width).1, [short]);
        let long = "Mean escape time against layers[0].extinction_coefficient · Orvel, an \
                    invented three-layer diffuser with a long and descriptive name";
        let (px, lines) = title_lines(long, width);
        assert_eq!(px, SMALLEST_TITLE);
        assert_eq!(lines.len(), 2);
        assert_eq!(format!("{} {}", lines[0], lines[1]), long, "no word lost");
        for line in &lines {
            assert!(text_width(line, px * BOLD_WIDTH) <= width, "{line}");
        }
    }
}
