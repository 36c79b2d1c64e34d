//! The look of sojourn's figures: a small palette of its own, line dashes and point
//! markers, and the sizes that keep a figure readable on a projector.
//!
//! The palette is chosen so that no two data colours rely on hue alone. Each has a
//! distinct CIE lightness L* (in brackets) so that a greyscale print still separates them,
//! and the hues sit on the blue–orange axis that red–green colour-blind readers see well.
//! Every default series style also differs by dash pattern and point marker, so two series
//! can be told apart with no colour at all.

use plotters::style::RGBColor;

/// A colour of the sojourn palette.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Colour {
    /// Near-black blue-grey for text, axes and frames (L* 15).
    Ink,
    /// Deep indigo (L* 25): theory curves.
    Indigo,
    /// Burnt vermilion (L* 49): Monte Carlo statistics.
    Vermilion,
    /// Ochre (L* 60): reference values such as the rule of thumb.
    Ochre,
    /// Sea teal (L* 53).
    Teal,
    /// Plum (L* 38).
    Plum,
    /// Slate grey (L* 48).
    Slate,
    /// Pale cornflower (L* 84): histogram bar fill.
    BarFill,
    /// Steel blue (L* 55): histogram bar outline.
    BarEdge,
    /// Very light grey (L* 92): major grid lines.
    Grid,
    /// Almost white (L* 96): minor grid lines.
    FaintGrid,
    /// White: the background.
    Paper,
}

impl Colour {
    /// The colour as 8-bit sRGB.
    pub fn rgb(self) -> RGBColor {
        match self {
            Colour::Ink => RGBColor(0x1d, 0x27, 0x33),
            Colour::Indigo => RGBColor(0x1b, 0x3a, 0x6b),
            Colour::Vermilion => RGBColor(0xc4, 0x50, 0x1b),
            Colour::Ochre => RGBColor(0xb8, 0x8a, 0x1e),
            Colour::Teal => RGBColor(0x2a, 0x8c, 0x82),
            Colour::Plum => RGBColor(0x8a, 0x3b, 0x78),
            Colour::Slate => RGBColor(0x6b, 0x74, 0x80),
            Colour::BarFill => RGBColor(0xbc, 0xd3, 0xea),
            Colour::BarEdge => RGBColor(0x5f, 0x86, 0xb3),
            Colour::Grid => RGBColor(0xe3, 0xe7, 0xec),
            Colour::FaintGrid => RGBColor(0xf1, 0xf3, 0xf5),
            Colour::Paper => RGBColor(0xff, 0xff, 0xff),
        }
    }

    /// The colour as an SVG/CSS hex string, e.g. `#1b3a6b`.
    pub fn hex(self) -> String {
        let RGBColor(r, g, b) = self.rgb();
        format!("#{r:02x}{g:02x}{b:02x}")
    }
}

/// How a line is stroked. Patterns are in pixels (on, off, on, off, …).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Dash {
    /// Unbroken.
    Solid,
    /// 14 on, 8 off.
    Dashed,
    /// 3 on, 6 off.
    Dotted,
    /// 16 on, 6 off, 3 on, 6 off.
    DashDot,
    /// 28 on, 10 off.
    LongDash,
}

impl Dash {
    /// The on/off pattern in pixels (empty for a solid line).
    pub fn pattern(self) -> &'static [f64] {
        match self {
            Dash::Solid => &[],
            Dash::Dashed => &[14.0, 8.0],
            Dash::Dotted => &[3.0, 6.0],
            Dash::DashDot => &[16.0, 6.0, 3.0, 6.0],
            Dash::LongDash => &[28.0, 10.0],
        }
    }
}

/// A point marker drawn at each data point.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MarkerShape {
    /// No marker.
    None,
    /// Filled circle.
    Circle,
    /// Open square.
    OpenSquare,
    /// Filled upward triangle.
    Triangle,
    /// Open diamond.
    OpenDiamond,
    /// Diagonal cross.
    Cross,
}

/// A stroke: colour, width (px) and dash pattern.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LineStyle {
    /// Colour.
    pub colour: Colour,
    /// Width, px.
    pub width: f64,
    /// Dash pattern.
    pub dash: Dash,
}

impl LineStyle {
    /// A stroke of `colour`, `width` px and `dash`.
    pub const fn new(colour: Colour, width: f64, dash: Dash) -> Self {
        Self {
            colour,
            width,
            dash,
        }
    }
}

/// How a data series is drawn: an optional line and an optional marker at each point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SeriesStyle {
    /// The joining line, if any.
    pub line: Option<LineStyle>,
    /// The marker at each point.
    pub marker: MarkerShape,
    /// Colour of markers and error bars.
    pub colour: Colour,
}

impl SeriesStyle {
    /// A line without markers.
    pub const fn line(colour: Colour, width: f64, dash: Dash) -> Self {
        Self {
            line: Some(LineStyle::new(colour, width, dash)),
            marker: MarkerShape::None,
            colour,
        }
    }

    /// Markers only, no joining line.
    pub const fn points(colour: Colour, marker: MarkerShape) -> Self {
        Self {
            line: None,
            marker,
            colour,
        }
    }

    /// The `index`-th default style: colour, dash and marker all change together, so
    /// series stay distinct in greyscale and without colour vision.
    pub fn cycle(index: usize) -> Self {
        const STYLES: [(Colour, Dash, MarkerShape); 6] = [
            (Colour::Indigo, Dash::Solid, MarkerShape::Circle),
            (Colour::Vermilion, Dash::Dashed, MarkerShape::OpenSquare),
            (Colour::Ochre, Dash::DashDot, MarkerShape::Triangle),
            (Colour::Teal, Dash::Dotted, MarkerShape::OpenDiamond),
            (Colour::Plum, Dash::LongDash, MarkerShape::Cross),
            (Colour::Slate, Dash::Solid, MarkerShape::OpenSquare),
        ];
        let (colour, dash, marker) = STYLES[index % STYLES.len()];
        Self {
            line: Some(LineStyle::new(colour, 2.5, dash)),
            marker,
            colour,
        }
    }
}

/// Canvas and type sizes, px. A figure is 1200 px wide; text sizes are chosen for a slide
/// shown at that width.
pub mod size {
    /// Width of every figure.
    pub const WIDTH: u32 = 1200;
    /// Height of the plot part (title and chart), before the legend rows.
    pub const CHART_HEIGHT: u32 = 700;
    /// Height of one legend row.
    pub const LEGEND_ROW: u32 = 34;
    /// Title font size.
    pub const TITLE: f64 = 30.0;
    /// Subtitle font size.
    pub const SUBTITLE: f64 = 20.0;
    /// Axis label font size.
    pub const AXIS_LABEL: f64 = 23.0;
    /// Tick label font size.
    pub const TICK_LABEL: f64 = 20.0;
    /// Legend font size.
    pub const LEGEND: f64 = 20.0;
    /// Marker radius.
    pub const MARKER: f64 = 7.0;
    /// Font family written into the SVG (resolved by the viewer; nothing is embedded).
    pub const FONT: &str = "sans-serif";
}

/// Estimated width (px) of `text` at `font_size`: 0.56 em per character, a fair average
/// for sans-serif fonts. The SVG itself positions text with anchors, so this is used only
/// to fit layouts (legend columns, truncated titles).
pub fn text_width(text: &str, font_size: f64) -> f64 {
    0.56 * font_size * text.chars().count() as f64
}
