//! Opacity tables: mass opacity κ(T, ρ) given on a grid, in a long-form CSV of our own, and
//! interpolated in log space.
//!
//! **Format.** Plain text, comma-separated. Lines starting with `#` are comments (say there
//! where the numbers come from); blank lines are skipped. The first other line is the header,
//! naming exactly the three columns `temperature_k`, `density_g_cm3` and `opacity_cm2_g`
//! (in any order); then one line per grid point:
//!
//! ```text
//! # an invented demo table
//! temperature_k,density_g_cm3,opacity_cm2_g
//! 10000,1e-10,0.52
//! 10000,1e-9,0.81
//! ...
//! ```
//!
//! The points must form a *rectilinear grid*: a set of temperatures and a set of densities,
//! every temperature at every density, each exactly once (in any row order), at least 2 × 2
//! points; T, ρ and κ finite and > 0 (they are interpolated in log space). A table is for
//! one composition: the X and Z of the gas it is used for are not read.
//!
//! **Interpolation.** log₁₀ κ is interpolated over (log₁₀ T, log₁₀ ρ) by a tensor product of
//! monotone cubic Hermite interpolants (Steffen 1990, A&A 239:443; docs/references.md,
//! Stellar structure 5):
//! first along log ρ on the (up to) four temperature rows around the point, then along log T
//! through those four values. Why this one: opacities are close to power laws in T and ρ
//! (Kramers, electron scattering), which are straight lines in log space and are reproduced
//! exactly; the transitions between them are smooth and are followed to third order in the
//! grid spacing; and tables have bumps (ionisation zones), next to which a bicubic spline
//! overshoots and invents extrema, whereas the monotone interpolant never leaves the range of
//! the grid values around the point. It is continuous, with continuous slopes along each
//! axis at grid lines.
//!
//! **Outside the table.** A point outside the table's temperature or density range is
//! refused ([`OpacityTable::opacity_cm2_g`] returns [`OutsideTable`], naming the point and
//! the table's range). Clamping to the nearest edge happens only when asked for
//! ([`OutsidePolicy::Clamp`], [`OpacityTable::opacity_clamped_cm2_g`]); reports then say
//! which points were clamped.

use std::collections::HashMap;
use std::path::Path;

use serde::{Deserialize, Serialize};
use thiserror::Error;

use super::{GasState, OpacityLaw, TemperatureRange, steffen};

/// Name of the temperature column (K).
pub const TEMPERATURE_COLUMN: &str = "temperature_k";
/// Name of the density column (g cm⁻³).
pub const DENSITY_COLUMN: &str = "density_g_cm3";
/// Name of the opacity column (cm² g⁻¹).
pub const OPACITY_COLUMN: &str = "opacity_cm2_g";

/// A table file that could not be read or is not a valid table.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum OpacityTableError {
    /// The file could not be read.
    #[error("{file}: cannot read the opacity table: {cause}")]
    Read {
        /// The file.
        file: String,
        /// The operating-system error.
        cause: std::io::Error,
    },
    /// The file is a folder or a device, over the size limit, or not UTF-8 text (see
    /// [`crate::input::read_text`]).
    #[error(transparent)]
    Input(#[from] crate::input::InputError),
    /// A problem with one line (header, number of fields, a repeated grid point).
    #[error("{file}: line {line}: {problem}")]
    Line {
        /// The file.
        file: String,
        /// 1-based line number.
        line: u64,
        /// What is wrong.
        problem: String,
    },
    /// A problem with one value.
    #[error("{file}: line {line}, column '{column}': {problem}")]
    Cell {
        /// The file.
        file: String,
        /// 1-based line number.
        line: u64,
        /// The column's name.
        column: String,
        /// What is wrong, with the value.
        problem: String,
    },
    /// A problem with the grid as a whole (too few points, not rectilinear, missing points).
    #[error("{file}: {problem}")]
    Grid {
        /// The file.
        file: String,
        /// What is wrong, naming the values (and the line, where one line is at fault).
        problem: String,
    },
}

/// What to do with a point outside the table's range.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum OutsidePolicy {
    /// Refuse it (the default): an error names the point and the table's range.
    #[default]
    Refuse,
    /// Use the value at the nearest edge of the table (only when the user asks; reports
    /// flag every clamped point).
    Clamp,
}

impl OutsidePolicy {
    /// "refuse" or "clamp".
    pub fn name(self) -> &'static str {
        match self {
            OutsidePolicy::Refuse => "refuse",
            OutsidePolicy::Clamp => "clamp",
        }
    }
}

/// The range a table covers: temperature (K) and density (g cm⁻³).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TableRange {
    /// Lowest temperature, K.
    pub temperature_min_k: f64,
    /// Highest temperature, K.
    pub temperature_max_k: f64,
    /// Lowest density, g cm⁻³.
    pub density_min_g_cm3: f64,
    /// Highest density, g cm⁻³.
    pub density_max_g_cm3: f64,
}

impl TableRange {
    /// Whether (T, ρ) lies inside (edges included).
    pub fn contains(&self, temperature_k: f64, density_g_cm3: f64) -> bool {
        (self.temperature_min_k..=self.temperature_max_k).contains(&temperature_k)
            && (self.density_min_g_cm3..=self.density_max_g_cm3).contains(&density_g_cm3)
    }

    /// "T 1e4 – 1e8 K, rho 1e-10 – 100 g/cm^3" (6 significant digits).
    pub fn describe(&self) -> String {
        let short = |x: f64| {
            let text = format!("{x:.5e}");
            let (mantissa, exponent) = text.split_once('e').expect("exponent form");
            let mantissa = mantissa.trim_end_matches('0').trim_end_matches('.');
            format!("{mantissa}e{exponent}")
        };
        format!(
            "T {} – {} K, rho {} – {} g/cm^3",
            short(self.temperature_min_k),
            short(self.temperature_max_k),
            short(self.density_min_g_cm3),
            short(self.density_max_g_cm3)
        )
    }
}

/// A point outside an opacity table.
#[derive(Debug, Clone, PartialEq, Error)]
#[error(
    "T = {temperature_k} K, rho = {density_g_cm3} g/cm^3 lies outside the opacity table {file} \
     ({}); extend the table, or ask for clamping to its edges",
    range.describe()
)]
pub struct OutsideTable {
    /// The table's file.
    pub file: String,
    /// The temperature asked for, K.
    pub temperature_k: f64,
    /// The density asked for, g cm⁻³.
    pub density_g_cm3: f64,
    /// The table's range.
    pub range: TableRange,
}

/// A validated opacity table on a rectilinear grid in log T × log ρ.
#[derive(Debug, Clone, PartialEq)]
pub struct OpacityTable {
    file: String,
    temperatures_k: Vec<f64>,
    densities_g_cm3: Vec<f64>,
    log_temperature: Vec<f64>,
    log_density: Vec<f64>,
    /// log₁₀ κ, temperature-major: index t · n_ρ + d.
    log_opacity: Vec<f64>,
}

/// One parsed row: line number, T, ρ, κ.
type Point = (u64, f64, f64, f64);

impl OpacityTable {
    /// Reads and validates a table file (format in the module documentation).
    ///
    /// # Errors
    /// [`OpacityTableError`] naming the file, the line and the value.
    pub fn read(path: &Path) -> Result<Self, OpacityTableError> {
        let file = path.display().to_string();
        let text = crate::input::read_text(path, crate::input::MAX_TEXT_BYTES, "opacity table")
            .map_err(|error| match error {
                crate::input::InputError::Read { cause, .. } => OpacityTableError::Read {
                    file: file.clone(),
                    cause,
                },
                other => OpacityTableError::Input(other),
            })?;
        Self::parse(&text, &file)
    }

    /// Parses and validates table text; `file` labels errors and names the table.
    ///
    /// # Errors
    /// [`OpacityTableError`]: a header without exactly the three columns, a line with the
    /// wrong number of fields, a value that is not a number or not finite and > 0, a grid
    /// point given twice, fewer than 2 × 2 points, a grid that is not rectilinear or misses
    /// points.
    pub fn parse(text: &str, file: &str) -> Result<Self, OpacityTableError> {
        let mut reader = csv::ReaderBuilder::new()
            .has_headers(false)
            .comment(Some(b'#'))
            .trim(csv::Trim::All)
            .flexible(true)
            .from_reader(text.as_bytes());
        let line_error = |line: u64, problem: String| OpacityTableError::Line {
            file: file.to_string(),
            line,
            problem,
        };
        let mut columns: Option<[usize; 3]> = None;
        let mut points: Vec<Point> = Vec::new();
        for record in reader.records() {
            let record = record.map_err(|error| {
                let line = error.position().map_or(0, |p| p.line());
                line_error(line, format!("not readable as CSV: {error}"))
            })?;
            let line = record.position().map_or(0, |p| p.line());
            if record.iter().all(str::is_empty) {
                continue;
            }
            let Some(order) = columns else {
                columns = Some(header_order(&record).map_err(|problem| line_error(line, problem))?);
                continue;
            };
            if record.len() != 3 {
                return Err(line_error(
                    line,
                    format!(
                        "{} field(s), expected 3 ({TEMPERATURE_COLUMN}, {DENSITY_COLUMN}, \
                         {OPACITY_COLUMN})",
                        record.len()
                    ),
                ));
            }
            let mut values = [0.0; 3];
            for (slot, (name, what)) in [
                (TEMPERATURE_COLUMN, "a temperature in K"),
                (DENSITY_COLUMN, "a density in g/cm^3"),
                (OPACITY_COLUMN, "an opacity in cm^2/g"),
            ]
            .iter()
            .enumerate()
            {
                let raw = &record[order[slot]];
                let cell = |problem: String| OpacityTableError::Cell {
                    file: file.to_string(),
                    line,
                    column: (*name).to_string(),
                    problem,
                };
                let value: f64 = raw
                    .parse()
                    .map_err(|_| cell(format!("{raw:?} is not a number")))?;
                if !(value.is_finite() && value > 0.0) {
                    return Err(cell(format!(
                        "{}: expected {what}, finite and > 0 (the table is interpolated in log \
                         space)",
                        show(value)
                    )));
                }
                values[slot] = value;
            }
            points.push((line, values[0], values[1], values[2]));
        }
        if columns.is_none() {
            return Err(OpacityTableError::Grid {
                file: file.to_string(),
                problem: format!(
                    "no header: the first line that is not a comment must name the columns \
                     {TEMPERATURE_COLUMN},{DENSITY_COLUMN},{OPACITY_COLUMN}"
                ),
            });
        }
        Self::from_points(file, &points)
    }

    /// A table on the grid `temperatures_k` × `densities_g_cm3` (any order) with κ from
    /// `opacity(T, ρ)`, named `file` (how a table is generated from a law).
    ///
    /// # Errors
    /// As [`OpacityTable::parse`]: values not finite and > 0, repeated values, fewer than
    /// 2 × 2 points (lines are numbered as in [`OpacityTable::to_csv`] without comments).
    pub fn from_grid(
        file: &str,
        temperatures_k: &[f64],
        densities_g_cm3: &[f64],
        opacity: impl Fn(f64, f64) -> f64,
    ) -> Result<Self, OpacityTableError> {
        let mut points = Vec::with_capacity(temperatures_k.len() * densities_g_cm3.len());
        for &t in temperatures_k {
            for &rho in densities_g_cm3 {
                let line = points.len() as u64 + 2;
                let kappa = opacity(t, rho);
                for (column, value) in [
                    (TEMPERATURE_COLUMN, t),
                    (DENSITY_COLUMN, rho),
                    (OPACITY_COLUMN, kappa),
                ] {
                    if !(value.is_finite() && value > 0.0) {
                        return Err(OpacityTableError::Cell {
                            file: file.to_string(),
                            line,
                            column: column.to_string(),
                            problem: format!("{value}: expected a finite number > 0"),
                        });
                    }
                }
                points.push((line, t, rho, kappa));
            }
        }
        Self::from_points(file, &points)
    }

    /// Checks that `points` form a complete rectilinear grid and builds the table.
    fn from_points(file: &str, points: &[Point]) -> Result<Self, OpacityTableError> {
        let grid = |problem: String| OpacityTableError::Grid {
            file: file.to_string(),
            problem,
        };
        let distinct = |pick: fn(&Point) -> f64| {
            let mut values: Vec<f64> = points.iter().map(pick).collect();
            values.sort_by(f64::total_cmp);
            values.dedup();
            values
        };
        let temperatures = distinct(|p| p.1);
        let densities = distinct(|p| p.2);
        let (nt, nd) = (temperatures.len(), densities.len());
        if nt < 2 || nd < 2 {
            return Err(grid(format!(
                "{} point(s) on {nt} temperature(s) × {nd} density(ies): a table needs at least \
                 2 temperatures × 2 densities",
                points.len()
            )));
        }
        let mut seen: HashMap<(u64, u64), u64> = HashMap::with_capacity(points.len());
        for &(line, t, rho, _) in points {
            if let Some(first) = seen.insert((t.to_bits(), rho.to_bits()), line) {
                return Err(OpacityTableError::Line {
                    file: file.to_string(),
                    line,
                    problem: format!(
                        "the grid point T = {} K, rho = {} g/cm^3 is given again (first on \
                         line {first}): each point appears once",
                        show(t),
                        show(rho)
                    ),
                });
            }
        }
        if points.len() != nt * nd {
            return Err(grid(incomplete_grid(points, &temperatures, &densities)));
        }
        let index = |values: &[f64], x: f64| {
            values
                .binary_search_by(|v| v.total_cmp(&x))
                .expect("a grid value")
        };
        let mut log_opacity = vec![0.0; nt * nd];
        for &(_, t, rho, kappa) in points {
            log_opacity[index(&temperatures, t) * nd + index(&densities, rho)] = kappa.log10();
        }
        Ok(Self {
            file: file.to_string(),
            log_temperature: temperatures.iter().map(|t| t.log10()).collect(),
            log_density: densities.iter().map(|d| d.log10()).collect(),
            temperatures_k: temperatures,
            densities_g_cm3: densities,
            log_opacity,
        })
    }

    /// The table as text in the format it is read from, with `comments` as `#` lines first
    /// (numbers in shortest round-trip form, so the text reads back to the same table).
    pub fn to_csv(&self, comments: &[String]) -> String {
        let mut out = String::new();
        for comment in comments {
            out.push_str("# ");
            out.push_str(comment);
            out.push('\n');
        }
        out.push_str(&format!(
            "{TEMPERATURE_COLUMN},{DENSITY_COLUMN},{OPACITY_COLUMN}\n"
        ));
        let nd = self.densities_g_cm3.len();
        for (it, t) in self.temperatures_k.iter().enumerate() {
            for (id, rho) in self.densities_g_cm3.iter().enumerate() {
                let kappa = 10f64.powf(self.log_opacity[it * nd + id]);
                out.push_str(&format!("{t:?},{rho:?},{kappa:?}\n"));
            }
        }
        out
    }

    /// The file the table was read from (its label).
    pub fn file(&self) -> &str {
        &self.file
    }

    /// The same table labelled `file` (e.g. the path as written in a model file).
    pub fn with_file(mut self, file: impl Into<String>) -> Self {
        self.file = file.into();
        self
    }

    /// The grid temperatures, ascending, K.
    pub fn temperatures_k(&self) -> &[f64] {
        &self.temperatures_k
    }

    /// The grid densities, ascending, g cm⁻³.
    pub fn densities_g_cm3(&self) -> &[f64] {
        &self.densities_g_cm3
    }

    /// The range the table covers.
    pub fn range(&self) -> TableRange {
        TableRange {
            temperature_min_k: self.temperatures_k[0],
            temperature_max_k: *self.temperatures_k.last().expect("2 temperatures"),
            density_min_g_cm3: self.densities_g_cm3[0],
            density_max_g_cm3: *self.densities_g_cm3.last().expect("2 densities"),
        }
    }

    /// κ at (T, ρ), cm² g⁻¹, interpolated as the module documentation says.
    ///
    /// # Errors
    /// [`OutsideTable`] if (T, ρ) lies outside the table (or is NaN).
    pub fn opacity_cm2_g(
        &self,
        temperature_k: f64,
        density_g_cm3: f64,
    ) -> Result<f64, OutsideTable> {
        let range = self.range();
        if !range.contains(temperature_k, density_g_cm3) {
            return Err(OutsideTable {
                file: self.file.clone(),
                temperature_k,
                density_g_cm3,
                range,
            });
        }
        Ok(self.interpolate(temperature_k, density_g_cm3))
    }

    /// κ at (T, ρ) with the point moved to the nearest edge of the table if it lies outside,
    /// cm² g⁻¹, and whether it was moved. NaN for a NaN input.
    pub fn opacity_clamped_cm2_g(&self, temperature_k: f64, density_g_cm3: f64) -> (f64, bool) {
        if temperature_k.is_nan() || density_g_cm3.is_nan() {
            return (f64::NAN, false);
        }
        let range = self.range();
        let t = temperature_k.clamp(range.temperature_min_k, range.temperature_max_k);
        let rho = density_g_cm3.clamp(range.density_min_g_cm3, range.density_max_g_cm3);
        (
            self.interpolate(t, rho),
            t != temperature_k || rho != density_g_cm3,
        )
    }

    /// The interpolant at a point inside the table.
    fn interpolate(&self, temperature_k: f64, density_g_cm3: f64) -> f64 {
        let (lt_axis, ld_axis) = (&self.log_temperature, &self.log_density);
        let lt = temperature_k
            .log10()
            .clamp(lt_axis[0], lt_axis[lt_axis.len() - 1]);
        let ld = density_g_cm3
            .log10()
            .clamp(ld_axis[0], ld_axis[ld_axis.len() - 1]);
        let cell =
            |axis: &[f64], x: f64| axis.partition_point(|&v| v <= x).clamp(1, axis.len() - 1) - 1;
        let window =
            |axis: &[f64], cell: usize| (cell.saturating_sub(1), (cell + 3).min(axis.len()));
        let (it, id) = (cell(lt_axis, lt), cell(ld_axis, ld));
        let (t_from, t_to) = window(lt_axis, it);
        let (d_from, d_to) = window(ld_axis, id);
        let nd = ld_axis.len();
        let densities = &ld_axis[d_from..d_to];
        let mut along_density = [0.0; 4];
        for (slot, row) in (t_from..t_to).enumerate() {
            let values = &self.log_opacity[row * nd + d_from..row * nd + d_to];
            along_density[slot] = steffen::interpolate(densities, values, id - d_from, ld);
        }
        let log_kappa = steffen::interpolate(
            &lt_axis[t_from..t_to],
            &along_density[..t_to - t_from],
            it - t_from,
            lt,
        );
        10f64.powf(log_kappa)
    }
}

/// A value for a message: plain below 10⁷ and above 10⁻³, else in exponent form.
fn show(x: f64) -> String {
    if x == 0.0 || (1e-3..1e7).contains(&x.abs()) {
        format!("{x}")
    } else {
        format!("{x:e}")
    }
}

/// Which column each of (temperature, density, opacity) is in, from the header record.
fn header_order(record: &csv::StringRecord) -> Result<[usize; 3], String> {
    let names: Vec<&str> = record.iter().collect();
    let expected = [TEMPERATURE_COLUMN, DENSITY_COLUMN, OPACITY_COLUMN];
    let mut order = [0; 3];
    for (slot, name) in expected.iter().enumerate() {
        let found: Vec<usize> = names
            .iter()
            .enumerate()
            .filter(|(_, n)| **n == *name)
            .map(|(k, _)| k)
            .collect();
        if found.len() != 1 || names.len() != 3 {
            return Err(format!(
                "the header must name exactly the columns {TEMPERATURE_COLUMN}, \
                 {DENSITY_COLUMN} and {OPACITY_COLUMN} (in any order), found {names:?}"
            ));
        }
        order[slot] = found[0];
    }
    Ok(order)
}

/// The message for a grid with fewer points than temperatures × densities: an off-grid value
/// (one that appears at far fewer points than the others: the grid is not rectilinear) with
/// its line, or else the first missing point.
fn incomplete_grid(points: &[Point], temperatures: &[f64], densities: &[f64]) -> String {
    let count =
        |pick: fn(&Point) -> f64, value: f64| points.iter().filter(|p| pick(p) == value).count();
    for (pick, values, others, what, other_what, unit) in [
        (
            (|p: &Point| p.1) as fn(&Point) -> f64,
            temperatures,
            densities.len(),
            "temperature",
            "densities",
            "K",
        ),
        (
            (|p: &Point| p.2) as fn(&Point) -> f64,
            densities,
            temperatures.len(),
            "density",
            "temperatures",
            "g/cm^3",
        ),
    ] {
        let most = values.iter().map(|&v| count(pick, v)).max().unwrap_or(0);
        if let Some(&value) = values
            .iter()
            .find(|&&v| 2 * count(pick, v) <= most && count(pick, v) < others)
        {
            let line = points.iter().find(|p| pick(p) == value).map_or(0, |p| p.0);
            return format!(
                "line {line}: the {what} {} {unit} appears at {} of the {others} {other_what} \
                 (other {what}s at up to {most}): the table is not a rectilinear grid; every \
                 {what} needs a row at every one of the {other_what}",
                show(value),
                count(pick, value)
            );
        }
    }
    let present: std::collections::HashSet<(u64, u64)> = points
        .iter()
        .map(|p| (p.1.to_bits(), p.2.to_bits()))
        .collect();
    for &t in temperatures {
        for &rho in densities {
            if !present.contains(&(t.to_bits(), rho.to_bits())) {
                return format!(
                    "no row for the grid point T = {} K, rho = {} g/cm^3: the table has {} \
                     rows, but its {} temperatures × {} densities need {} (every combination \
                     once)",
                    show(t),
                    show(rho),
                    points.len(),
                    temperatures.len(),
                    densities.len(),
                    temperatures.len() * densities.len()
                );
            }
        }
    }
    "the grid is incomplete".to_string()
}

/// Whether (T, ρ) lies within a relative 10⁻⁹ of the range (rounding, not a real excursion).
fn within_rounding(range: &TableRange, temperature_k: f64, density_g_cm3: f64) -> bool {
    let near = |x: f64, lo: f64, hi: f64| x >= lo * (1.0 - 1e-9) && x <= hi * (1.0 + 1e-9);
    near(
        temperature_k,
        range.temperature_min_k,
        range.temperature_max_k,
    ) && near(
        density_g_cm3,
        range.density_min_g_cm3,
        range.density_max_g_cm3,
    )
}

/// An opacity table used as an [`OpacityLaw`], with a policy for points outside it.
///
/// The table's own κ(T, ρ) is used whatever the X and Z of the gas. Outside the table the
/// law returns NaN ([`OutsidePolicy::Refuse`]: callers check the range first and report the
/// point; within 10⁻⁹ of an edge, rounding, the edge value) or the value at the nearest edge ([`OutsidePolicy::Clamp`]). The scattering fraction
/// is unknown for a table and given as 0 (profile reports leave it empty). The temperature
/// range is the table's.
#[derive(Debug, Clone, PartialEq)]
pub struct TableOpacity {
    table: std::sync::Arc<OpacityTable>,
    outside: OutsidePolicy,
}

impl TableOpacity {
    /// `table` with `outside` applied to points outside it.
    pub fn new(table: std::sync::Arc<OpacityTable>, outside: OutsidePolicy) -> Self {
        Self { table, outside }
    }

    /// The table.
    pub fn table(&self) -> &OpacityTable {
        &self.table
    }

    /// The policy for points outside the table.
    pub fn outside(&self) -> OutsidePolicy {
        self.outside
    }
}

impl OpacityLaw for TableOpacity {
    fn opacity_cm2_g(&self, state: &GasState) -> f64 {
        match self.outside {
            OutsidePolicy::Refuse => {
                let (t, rho) = (state.temperature_k, state.density_g_cm3);
                match self.table.opacity_cm2_g(t, rho) {
                    Ok(kappa) => kappa,
                    // Within rounding of an edge (a surface cut is placed where T equals the
                    // table's lowest temperature): the edge value.
                    Err(outside) if within_rounding(&outside.range, t, rho) => {
                        self.table.opacity_clamped_cm2_g(t, rho).0
                    }
                    Err(_) => f64::NAN,
                }
            }
            OutsidePolicy::Clamp => {
                self.table
                    .opacity_clamped_cm2_g(state.temperature_k, state.density_g_cm3)
                    .0
            }
        }
    }

    fn scattering_fraction(&self, _state: &GasState) -> f64 {
        0.0
    }

    fn temperature_range_k(&self) -> TemperatureRange {
        let range = self.table.range();
        TemperatureRange {
            min_k: range.temperature_min_k,
            max_k: range.temperature_max_k,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const SMALL: &str = "# a 3 x 2 test table, κ = 0.1 T^0.5 ρ (an invented law)\n\
        temperature_k,density_g_cm3,opacity_cm2_g\n\
        100,1,1\n\
        100,10,10\n\
        10000,1,10\n\
        10000,10,100\n\
        1000000,1,100\n\
        1000000,10,1000\n";

    fn error(text: &str) -> String {
        OpacityTable::parse(text, "t.csv").unwrap_err().to_string()
    }

    #[test]
    fn a_power_law_table_is_reproduced_exactly_between_its_points() {
        let table = OpacityTable::parse(SMALL, "t.csv").unwrap();
        assert_eq!(table.temperatures_k(), [100.0, 1e4, 1e6]);
        for (t, rho) in [
            (300.0f64, 2.0),
            (1e4, 5.0),
            (5e5, 1.0),
            (1e6, 10.0),
            (100.0, 1.0),
        ] {
            let exact = 0.1 * t.sqrt() * rho;
            let kappa = table.opacity_cm2_g(t, rho).unwrap();
            assert!((kappa / exact - 1.0).abs() < 1e-12, "({t}, {rho}): {kappa}");
        }
        // Columns in another order, rows shuffled, blank lines: the same table.
        let shuffled = "opacity_cm2_g, density_g_cm3, temperature_k\n\n1000,10,1e6\n1,1,100\n\
            10,10,100\n10,1,1e4\n100,10,1e4\n100,1,1e6\n";
        let other = OpacityTable::parse(shuffled, "t.csv").unwrap();
        assert_eq!(other.log_opacity, table.log_opacity);
        // The CSV reads back to the same table.
        let again = OpacityTable::parse(&table.to_csv(&["x".into()]), "t.csv").unwrap();
        assert_eq!(again, table);
    }

    #[test]
    fn outside_points_are_refused_or_clamped_on_request() {
        let table = OpacityTable::parse(SMALL, "t.csv").unwrap();
        let outside = table.opacity_cm2_g(50.0, 2.0).unwrap_err();
        assert_eq!(outside.temperature_k, 50.0);
        let message = outside.to_string();
        assert!(
            message.contains("t.csv") && message.contains("T = 50 K"),
            "{message}"
        );
        assert!(message.contains("1e2 – 1e6 K"), "{message}");
        assert!(table.opacity_cm2_g(1e3, 11.0).is_err());
        assert!(table.opacity_cm2_g(f64::NAN, 1.0).is_err());
        let (kappa, moved) = table.opacity_clamped_cm2_g(50.0, 20.0);
        assert!(moved);
        assert!((kappa - 10.0).abs() < 1e-12, "{kappa}");
        let (kappa, moved) = table.opacity_clamped_cm2_g(1e4, 1.0);
        assert!(!moved && (kappa - 10.0).abs() < 1e-12);
        let law = TableOpacity::new(std::sync::Arc::new(table), OutsidePolicy::Refuse);
        let state = |t| GasState {
            density_g_cm3: 2.0,
            temperature_k: t,
            hydrogen_x: 0.7,
            metals_z: 0.02,
        };
        assert!(law.opacity_cm2_g(&state(10.0)).is_nan());
        assert_eq!(law.temperature_range_k().min_k, 100.0);
    }

    /// A 3 × 4 table of the same law, rows in order, and the line of the row (T, ρ).
    fn larger() -> (String, impl Fn(f64, f64) -> usize) {
        let (temperatures, densities) = ([100.0, 1e4, 1e6], [1.0, 10.0, 100.0, 1000.0]);
        let mut text = "# test\ntemperature_k,density_g_cm3,opacity_cm2_g\n".to_string();
        for t in temperatures {
            for rho in densities {
                let kappa: f64 = 0.1 * f64::sqrt(t) * rho;
                text += &format!("{t},{rho},{kappa}\n");
            }
        }
        let line = move |t: f64, rho: f64| {
            let it = temperatures.iter().position(|&x| x == t).unwrap();
            let id = densities.iter().position(|&x| x == rho).unwrap();
            3 + 4 * it + id
        };
        (text, line)
    }

    #[test]
    fn bad_tables_name_the_file_the_line_and_the_value() {
        let (good, line) = larger();
        assert!(OpacityTable::parse(&good, "t.csv").is_ok());
        let row = "10000,10,100\n";
        assert!(good.contains(row));
        let at = line(1e4, 10.0);
        let bad_header = error("temperature,density_g_cm3,opacity_cm2_g\n1,1,1\n");
        assert!(bad_header.contains("t.csv: line 1:") && bad_header.contains("temperature_k"));
        let text = error(&good.replace(row, "10000,ten,100\n"));
        assert!(
            text.contains(&format!("t.csv: line {at}, column 'density_g_cm3'"))
                && text.contains("\"ten\""),
            "{text}"
        );
        let negative = error(&good.replace(row, "10000,10,-3\n"));
        assert!(
            negative.contains(&format!("line {at}, column 'opacity_cm2_g': -3")),
            "{negative}"
        );
        let zero = error(&good.replace(row, "10000,10,0\n"));
        assert!(
            zero.contains(&format!("line {at}")) && zero.contains(": 0:"),
            "{zero}"
        );
        let fields = error(&good.replace(row, "10000,10\n"));
        assert!(
            fields.contains(&format!("line {at}: 2 field(s)")),
            "{fields}"
        );
        let missing = error(&good.replace(row, ""));
        assert!(
            missing.contains("no row for the grid point T = 10000 K, rho = 10 g/cm^3"),
            "{missing}"
        );
        let skewed = error(&good.replace(row, "12000,10,100\n"));
        assert!(
            skewed.contains(&format!(
                "t.csv: line {at}: the temperature 12000 K appears at 1"
            )) && skewed.contains("not a rectilinear grid"),
            "{skewed}"
        );
        let repeated = error(&format!("{good}10000,10,100\n"));
        assert!(
            repeated.contains("line 15") && repeated.contains(&format!("first on line {at}")),
            "{repeated}"
        );
        let tiny = error("temperature_k,density_g_cm3,opacity_cm2_g\n1,1,1\n2,1,1\n");
        assert!(tiny.contains("2 temperature(s) × 1 density"), "{tiny}");
        assert!(error("# only a comment\n").contains("no header"));
    }

    #[test]
    fn interpolation_never_leaves_the_range_of_the_surrounding_values() {
        // A bump in the middle of a flat table: no value below the flat level, none above the
        // peak (a bicubic spline would dip below next to it).
        let temperatures: Vec<f64> = (0..9).map(|k| 10f64.powi(k)).collect();
        let densities = [1.0, 10.0, 100.0];
        let table = OpacityTable::from_grid("bump", &temperatures, &densities, |t, _| {
            if t == 1e4 { 100.0 } else { 1.0 }
        })
        .unwrap();
        for k in 0..=800 {
            let t = 10f64.powf(k as f64 / 100.0);
            let kappa = table.opacity_cm2_g(t, 5.0).unwrap();
            assert!(
                (1.0 - 1e-12..=100.0 + 1e-9).contains(&kappa),
                "T = {t}: {kappa}"
            );
        }
    }
}
