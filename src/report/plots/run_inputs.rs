//! What the panels of one `sojourn run` are made from: the medium, the merged tally and the
//! run report, with the titles every run figure shares.

use crate::medium::Medium;
use crate::report::RunReport;
use crate::tally::Tally;

/// The inputs of a run's figures.
#[derive(Debug, Clone, Copy)]
pub struct RunInputs<'a> {
    /// The model that ran.
    pub medium: &'a Medium,
    /// The merged tally (histograms of times and scatterings).
    pub tally: &'a Tally,
    /// The run report (the run's analysis, with the model's label).
    pub report: &'a RunReport,
}

/// `12345` as `12 345` (thin groups of three digits, as in the figures' titles).
pub fn group_digits(n: u64) -> String {
    let digits = n.to_string();
    let mut out = String::new();
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push('\u{2009}');
        }
        out.push(c);
    }
    out
}

impl RunInputs<'_> {
    /// The model's name, or `(unnamed model)`.
    pub fn model_name(&self) -> String {
        let name = &self.report.model.name;
        if name.is_empty() {
            "(unnamed model)".to_string()
        } else {
            name.clone()
        }
    }

    /// `"{what} · {model}"`, the title of a run figure.
    pub fn title(&self, what: &str) -> String {
        format!("{what} · {}", self.model_name())
    }

    /// Photons, seed, method and file: the subtitle of a run figure.
    pub fn subtitle(&self) -> String {
        let r = self.report;
        format!(
            "{} photons · seed {} · {} walk · {}",
            group_digits(r.analysis.photons),
            r.analysis.seed,
            r.analysis.method,
            r.model.file
        )
    }
}

#[cfg(test)]
mod tests {
    use super::group_digits;

    #[test]
    fn digits_are_grouped_in_threes() {
        assert_eq!(group_digits(7), "7");
        assert_eq!(group_digits(10_000), "10\u{2009}000");
        assert_eq!(group_digits(1_234_567), "1\u{2009}234\u{2009}567");
    }
}
