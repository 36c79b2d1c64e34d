//! The sweep table: one row per point, written as CSV and as JSON Lines with the same
//! columns in the same order, and a short text rendering for the terminal.
//!
//! Columns: `point`, one column per parameter (named by its path or name), then the key
//! results with their 1σ uncertainties (see [`COLUMNS`]). Empty CSV cells (JSON `null`) mark
//! values that do not exist for the point (a sphere's `reflected`, a ratio without escapes).
//! Wall-clock times are left out, so a sweep's table is the same file, byte for byte,
//! however it was split, interrupted or resumed.

use std::fmt::Write as _;
use std::io::Write;

use serde::ser::{Serialize, SerializeMap, Serializer};
use serde_json::{Value, json};

use super::PointResult;
use crate::units::{format_duration, format_significant};

/// The result columns after `point` and the parameters, with their meaning (units in the
/// name: `_s` seconds; fractions of photons launched).
pub const COLUMNS: &[(&str, &str)] = &[
    ("photons", "photons launched"),
    (
        "seed",
        "seed of the random streams (the point's stream is its index)",
    ),
    (
        "optical_depth",
        "source → surface (sphere) or total thickness (slab)",
    ),
    ("escaped", "fraction that left a sphere"),
    ("escaped_stderr", "its binomial 1σ"),
    (
        "reflected",
        "fraction that left a slab through the top face",
    ),
    ("reflected_stderr", "its binomial 1σ"),
    (
        "specular",
        "fraction reflected at a slab's top face before entering it",
    ),
    ("specular_stderr", "its binomial 1σ"),
    (
        "transmitted",
        "fraction that left a slab through the bottom face",
    ),
    ("transmitted_stderr", "its binomial 1σ"),
    ("absorbed", "fraction absorbed"),
    ("absorbed_stderr", "its binomial 1σ"),
    ("censored", "fraction stopped by the step cap"),
    ("censored_stderr", "its binomial 1σ"),
    (
        "escape_time_mean_s",
        "mean time in the medium of photons that left it",
    ),
    ("escape_time_stderr_s", "its standard error"),
    ("escape_time_std_dev_s", "standard deviation of that time"),
    ("escape_time_median_s", "median (histogram, within 0.1 %)"),
    ("escape_time_p05_s", "5 % quantile"),
    ("escape_time_p95_s", "95 % quantile"),
    (
        "reflected_time_mean_s",
        "mean time in the medium of light that left a slab through the top face",
    ),
    (
        "transmitted_time_mean_s",
        "mean time in the medium of light that left a slab through the bottom face",
    ),
    ("scatterings_mean", "mean scatterings of photons that left"),
    ("scatterings_stderr", "its standard error"),
    ("diffusion_naive_scatterings", "rule of thumb N ≈ τ²"),
    ("diffusion_naive_time_s", "rule of thumb t ≈ τ L n̄ / c"),
    ("diffusion_mean_time_s", "steady diffusion mean exit time"),
    (
        "diffusion_mean_time_extrapolated_s",
        "the same, Milne extrapolated boundary",
    ),
    (
        "diffusion_mean_scatterings_extrapolated",
        "scatterings implied by it",
    ),
    (
        "time_ratio",
        "Monte Carlo mean time / extrapolated diffusion",
    ),
    ("time_ratio_stderr", "its 1σ"),
    (
        "time_ratio_plain",
        "Monte Carlo mean time / diffusion without extrapolation",
    ),
    ("naive_time_ratio", "Monte Carlo mean time / rule of thumb"),
    (
        "scatterings_ratio",
        "Monte Carlo mean scatterings / extrapolated diffusion",
    ),
    (
        "ks_distance",
        "KS distance to the diffusion solver's escape-time law (null below 100 escapes)",
    ),
    (
        "direct_steps_per_photon",
        "free flights per photon (walk cost)",
    ),
    (
        "absorption_mode",
        "analog, weighted (implicit capture, Russian roulette) or rescaled (from another point's walk)",
    ),
    (
        "effective_photons",
        "Kish's effective number of photons behind the times (photons, for analog points)",
    ),
    (
        "reweighted",
        "true where the point was rescaled from the walk of the least absorbing point",
    ),
];

/// One row of the sweep table: `(column, value)` pairs in column order.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepRow {
    columns: Vec<(String, Value)>,
}

impl SweepRow {
    /// The row of a point's result.
    pub fn from_result(result: &PointResult) -> Self {
        let r = &result.analysis;
        let mut columns = vec![("point".to_string(), json!(result.index))];
        columns.extend(result.parameters.iter().cloned());
        let o = &r.outcome;
        let values = [
            json!(r.photons),
            json!(r.seed),
            json!(r.optical_depth),
            json!(o.escaped),
            json!(o.stderr.escaped),
            json!(o.reflected),
            json!(o.stderr.reflected),
            json!(o.specular),
            json!(o.stderr.specular),
            json!(o.transmitted),
            json!(o.stderr.transmitted),
            json!(o.absorbed),
            json!(o.stderr.absorbed),
            json!(o.censored),
            json!(o.stderr.censored),
            json!(r.escape_time.mean_s),
            json!(r.escape_time.stderr_s),
            json!(r.escape_time.std_dev_s),
            json!(r.escape_time.median_s),
            json!(r.escape_time.p05_s),
            json!(r.escape_time.p95_s),
            json!(r.reflected_time.as_ref().and_then(|t| t.mean_s)),
            json!(r.transmitted_time.as_ref().and_then(|t| t.mean_s)),
            json!(r.scatterings.mean),
            json!(r.scatterings.stderr),
            json!(r.diffusion.naive_scatterings),
            json!(r.diffusion.naive_time_s),
            json!(r.diffusion.mean_time_s),
            json!(r.diffusion.mean_time_extrapolated_s),
            json!(r.diffusion.mean_scatterings_extrapolated),
            json!(r.comparison.time_ratio),
            json!(r.comparison.time_ratio_stderr),
            json!(r.comparison.time_ratio_plain),
            json!(r.comparison.naive_time_ratio),
            json!(r.comparison.scatterings_ratio),
            json!(r.comparison.ks_distance),
            json!(r.walk.direct_steps_per_photon),
            json!(r.absorption_mode),
            json!(r.effective_photons),
            json!(result.reweighted),
        ];
        debug_assert_eq!(values.len(), COLUMNS.len());
        columns.extend(
            COLUMNS
                .iter()
                .zip(values)
                .map(|((name, _), value)| (name.to_string(), value)),
        );
        Self { columns }
    }

    /// The `(column, value)` pairs, in order.
    pub fn columns(&self) -> &[(String, Value)] {
        &self.columns
    }

    /// The value of column `name`.
    pub fn get(&self, name: &str) -> Option<&Value> {
        self.columns.iter().find(|(n, _)| n == name).map(|(_, v)| v)
    }
}

impl Serialize for SweepRow {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let mut map = serializer.serialize_map(Some(self.columns.len()))?;
        for (name, value) in &self.columns {
            map.serialize_entry(name, value)?;
        }
        map.end()
    }
}

/// A CSV cell: numbers in shortest round-trip form, strings as they are, null as empty.
fn cell(value: &Value) -> String {
    match value {
        Value::Null => String::new(),
        Value::String(text) => text.clone(),
        other => other.to_string(),
    }
}

/// Writes `rows` as CSV with a header line (the columns of the first row).
///
/// # Errors
/// Any error of the writer.
pub fn write_csv<W: Write>(rows: &[SweepRow], out: W) -> Result<(), csv::Error> {
    let mut writer = csv::Writer::from_writer(out);
    if let Some(first) = rows.first() {
        writer.write_record(first.columns.iter().map(|(name, _)| name))?;
    }
    for row in rows {
        writer.write_record(row.columns.iter().map(|(_, value)| cell(value)))?;
    }
    writer.flush()?;
    Ok(())
}

/// Writes `rows` as JSON Lines: one JSON object per line, keys in column order.
///
/// # Errors
/// Any error of the writer.
pub fn write_jsonl<W: Write>(rows: &[SweepRow], mut out: W) -> std::io::Result<()> {
    for row in rows {
        serde_json::to_writer(&mut out, row)?;
        out.write_all(b"\n")?;
    }
    out.flush()
}

/// `rows` as CSV text.
pub fn csv_text(rows: &[SweepRow]) -> String {
    let mut bytes = Vec::new();
    write_csv(rows, &mut bytes).expect("writing to memory cannot fail");
    String::from_utf8(bytes).expect("CSV of UTF-8 text is UTF-8")
}

/// `rows` as JSON Lines text.
pub fn jsonl_text(rows: &[SweepRow]) -> String {
    let mut bytes = Vec::new();
    write_jsonl(rows, &mut bytes).expect("writing to memory cannot fail");
    String::from_utf8(bytes).expect("JSON is UTF-8")
}

/// A compact table of the results for a terminal: parameters, optical depth, the fraction
/// that left the medium (`left`: a sphere's `escaped`, a slab's reflected + transmitted,
/// specular reflection not included; the CSV has each apart), mean time in the medium, the extrapolated diffusion
/// time, and the ratios of the mean time to diffusion theory and to the rule of thumb. Where
/// the medium absorbs, the (conservative) diffusion time is marked `*` and no ratio is
/// given.
pub fn render_text(results: &[PointResult]) -> String {
    let mut out = String::new();
    let Some(first) = results.first() else {
        return out;
    };
    let names: Vec<&str> = first.parameters.iter().map(|(n, _)| n.as_str()).collect();
    let widths: Vec<usize> = names.iter().map(|n| n.len().max(10)).collect();
    let _ = write!(out, "{:>5}", "point");
    for (name, width) in names.iter().zip(&widths) {
        let _ = write!(out, "  {name:>width$}");
    }
    let _ = writeln!(
        out,
        "  {:>9}  {:>9}  {:>22}  {:>11}  {:>17}  {:>9}",
        "τ", "left", "mean time ± 1σ", "diffusion", "MC/diffusion", "MC/rule"
    );
    let number = |v: Option<f64>| v.map_or("-".to_string(), |v| format_significant(v, 4));
    let mut conservative_only = false;
    for result in results {
        let r = &result.analysis;
        let _ = write!(out, "{:>5}", result.index);
        for ((_, value), width) in result.parameters.iter().zip(&widths) {
            let shown = match value.as_f64() {
                Some(v) => format_significant(v, 5),
                None => cell(value),
            };
            let _ = write!(out, "  {shown:>width$}");
        }
        let o = &r.outcome;
        let left = o
            .escaped
            .unwrap_or_else(|| o.reflected.unwrap_or(0.0) + o.transmitted.unwrap_or(0.0));
        let time = match (r.escape_time.mean_s, r.escape_time.stderr_s) {
            (Some(m), Some(s)) => format!("{} ± {}", format_duration(m), format_duration(s)),
            (Some(m), None) => format_duration(m),
            _ => "-".to_string(),
        };
        let ratio = match (r.comparison.time_ratio, r.comparison.time_ratio_stderr) {
            (Some(x), Some(s)) => format!(
                "{} ± {}",
                format_significant(x, 4),
                format_significant(s, 2)
            ),
            (x, _) => number(x),
        };
        let mut diffusion = r
            .diffusion
            .mean_time_extrapolated_s
            .map_or_else(|| "-".to_string(), format_duration);
        if !r.comparison.times_comparable {
            diffusion.push('*');
            conservative_only = true;
        }
        let _ = writeln!(
            out,
            "  {:>9}  {:>9.5}  {time:>22}  {diffusion:>11}  {ratio:>17}  {:>9}",
            format_significant(r.optical_depth, 4),
            left,
            number(r.comparison.naive_time_ratio),
        );
    }
    if conservative_only {
        let _ = writeln!(
            out,
            "* the medium absorbs: conservative diffusion, not compared with the Monte Carlo \
             time"
        );
    }
    out
}
