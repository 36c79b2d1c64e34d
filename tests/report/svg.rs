//! Reading the SVG that the plotting layer writes: parsed with roxmltree, so a malformed
//! document fails here, then searched for the elements a reader sees.

use roxmltree::{Document, Node};

/// A parsed figure, kept as owned values so tests can hold it.
pub struct Svg {
    /// `<rect>` elements as (x, y, width, height, fill, stroke).
    pub rects: Vec<Rect>,
    /// `<text>` elements as (x, y, font size, anchor, content).
    pub texts: Vec<Label>,
    /// Number of `<circle>` elements.
    pub circles: usize,
    /// `<polyline>` and `<line>` strokes, by colour (uppercase hex).
    pub strokes: Vec<String>,
}

/// A rectangle.
#[derive(Debug, Clone)]
pub struct Rect {
    pub x: f64,
    pub y: f64,
    pub width: f64,
    pub height: f64,
    pub fill: String,
    pub stroke: String,
}

/// A piece of text.
#[derive(Debug, Clone)]
pub struct Label {
    pub x: f64,
    pub y: f64,
    pub size: f64,
    pub anchor: String,
    pub text: String,
}

fn number(node: Node, name: &str) -> f64 {
    node.attribute(name)
        .unwrap_or_else(|| panic!("<{}> lacks {name}", node.tag_name().name()))
        .parse()
        .unwrap()
}

fn text(node: Node, name: &str) -> String {
    node.attribute(name).unwrap_or("").to_uppercase()
}

/// Parses `svg`, panicking with the parser's message if it is not well-formed XML.
pub fn parse(svg: &str) -> Svg {
    let document = Document::parse(svg).unwrap_or_else(|e| panic!("SVG is not XML: {e}"));
    let root = document.root_element();
    assert_eq!(root.tag_name().name(), "svg");
    assert_eq!(
        root.tag_name().namespace(),
        Some("http://www.w3.org/2000/svg")
    );
    let mut out = Svg {
        rects: Vec::new(),
        texts: Vec::new(),
        circles: 0,
        strokes: Vec::new(),
    };
    for node in root.descendants().filter(Node::is_element) {
        match node.tag_name().name() {
            "rect" => out.rects.push(Rect {
                x: number(node, "x"),
                y: number(node, "y"),
                width: number(node, "width"),
                height: number(node, "height"),
                fill: text(node, "fill"),
                stroke: text(node, "stroke"),
            }),
            "text" => out.texts.push(Label {
                x: number(node, "x"),
                y: number(node, "y"),
                size: number(node, "font-size"),
                anchor: node.attribute("text-anchor").unwrap_or("start").to_string(),
                text: node.text().unwrap_or("").trim().to_string(),
            }),
            "circle" => out.circles += 1,
            "polyline" | "line" => out.strokes.push(text(node, "stroke")),
            _ => {}
        }
    }
    out
}

impl Svg {
    /// Filled rectangles of colour `hex`.
    pub fn filled(&self, hex: &str) -> Vec<&Rect> {
        let hex = hex.to_uppercase();
        self.rects.iter().filter(|r| r.fill == hex).collect()
    }

    /// The plot frame: the largest unfilled rectangle stroked in `ink`.
    pub fn frame(&self, ink: &str) -> Rect {
        let ink = ink.to_uppercase();
        self.rects
            .iter()
            .filter(|r| r.fill == "NONE" && r.stroke == ink)
            .max_by(|a, b| (a.width * a.height).total_cmp(&(b.width * b.height)))
            .expect("a plot frame")
            .clone()
    }

    /// Whether some text element reads exactly `label`.
    pub fn has_text(&self, label: &str) -> bool {
        self.texts.iter().any(|t| t.text == label)
    }

    /// Tick labels under the frame (centred texts within 40 px below it), left to right.
    pub fn x_tick_labels(&self, frame: &Rect) -> Vec<Label> {
        let bottom = frame.y + frame.height;
        let mut labels: Vec<Label> = self
            .texts
            .iter()
            .filter(|t| t.anchor == "middle" && t.y > bottom && t.y < bottom + 40.0)
            .cloned()
            .collect();
        labels.sort_by(|a, b| a.x.total_cmp(&b.x));
        labels
    }
}

/// Estimated width of a label (0.6 em per character, a generous sans-serif average).
pub fn label_width(label: &Label) -> f64 {
    0.6 * label.size * label.text.chars().count() as f64
}
