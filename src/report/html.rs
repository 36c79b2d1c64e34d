//! The single-file HTML report: the text report and every figure, inline, with no external
//! asset (no script, stylesheet, font or image is fetched), so it can be mailed or archived
//! as one file.

use std::fmt::Write;

use super::plots::Figure;

/// Escapes text for HTML element content and attribute values.
pub fn escape_html(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

const STYLE: &str = "body{font-family:sans-serif;color:#1d2733;background:#fff;\
max-width:1240px;margin:2em auto;padding:0 1em;line-height:1.4}\
h1{font-size:1.6em;margin-bottom:.2em}p.sub{color:#6b7480;margin-top:0}\
pre{background:#f1f3f5;padding:1em;overflow-x:auto;font-size:.9em;border-radius:4px}\
figure{margin:2em 0}figure svg{max-width:100%;height:auto;border:1px solid #e3e7ec}\
figcaption{color:#6b7480;margin-top:.4em}nav a{margin-right:1em}";

/// The HTML document: `title`, a `subtitle` line, the text report in `<pre>`, then each
/// figure's SVG inline with its caption.
pub fn render_html_report(title: &str, subtitle: &str, text: &str, figures: &[Figure]) -> String {
    let mut out = String::new();
    let _ = write!(
        out,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
         <title>{}</title>\n<style>{STYLE}</style>\n</head>\n<body>\n<h1>{}</h1>\n\
         <p class=\"sub\">{}</p>\n",
        escape_html(title),
        escape_html(title),
        escape_html(subtitle)
    );
    if !figures.is_empty() {
        out.push_str("<nav>");
        for figure in figures {
            let _ = write!(
                out,
                "<a href=\"#{}\">{}</a>",
                escape_html(&figure.name),
                escape_html(&figure.name)
            );
        }
        out.push_str("</nav>\n");
    }
    let _ = write!(
        out,
        "<h2>Summary</h2>\n<pre>{}</pre>\n",
        escape_html(text.trim_end())
    );
    for figure in figures {
        let _ = write!(
            out,
            "<figure id=\"{}\">\n{}\n<figcaption>{}</figcaption>\n</figure>\n",
            escape_html(&figure.name),
            figure.svg.trim(),
            escape_html(&figure.caption)
        );
    }
    out.push_str("</body>\n</html>\n");
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_is_escaped_and_figures_inlined() {
        let figure = Figure {
            name: "a".into(),
            title: "A <b>".into(),
            caption: "what it shows".into(),
            svg: "<svg xmlns=\"http://www.w3.org/2000/svg\"></svg>".into(),
        };
        let html = render_html_report("T & U", "sub", "x < y", &[figure]);
        assert!(html.contains("<title>T &amp; U</title>"));
        assert!(html.contains("<pre>x &lt; y</pre>"));
        assert!(html.contains("<svg xmlns"));
        assert!(html.contains("<figcaption>what it shows</figcaption>"));
    }
}
