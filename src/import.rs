//! Importing a stellar profile from a column table (the output of a stellar-evolution code,
//! a spreadsheet, a script), and writing a profile back as such a table.
//!
//! **Table.** Plain text with a header line naming the columns, then one row per line.
//! Fields are separated by commas if the header has a comma, else by runs of spaces or tabs.
//! Blank lines and lines starting with `#` are skipped; a header written as a comment
//! (`# r rho T`) is used if the first non-comment line is already numeric. `skip_rows` lines
//! before the header are ignored (e.g. a preamble of `key value` lines).
//! Numbers are read as f64; a Fortran exponent `1.0D+05` is accepted. Rows may run from the
//! centre outwards or from the surface inwards; radii must be strictly monotonic.
//!
//! **Mapping** ([`ColumnMapping::parse`]): comma-separated `QUANTITY=COLUMN[:SCALE]`, where
//! * QUANTITY is `radius`, `density`, `temperature`, `opacity`, `hydrogen`, `metals`,
//!   `scattering_fraction` or `energy_generation` (erg g⁻¹ s⁻¹); a `log_` prefix (`log_density=lg_rho`) says the column holds
//!   log₁₀ of the quantity;
//! * COLUMN is a header name, or, if no header field has that name, a 1-based column number;
//! * SCALE multiplies the (un-logged) value into cgs: a number (`density=rho:1e-3` for
//!   kg m⁻³), or for radius a length unit, any spelling of [`LengthUnit::parse`] (`um`,
//!   `mm`, `cm`, `m`, `km`, `R_sun` and aliases such as `solar_radius`). Radius is in cm by
//!   default.
//!
//! With a total radius (`total_radius_cm`) the radius column is a fraction r/R of it.
//! Required: radius and density, plus either an opacity column, or temperature with an
//! opacity law (X and Z from columns or single values), or temperature with an opacity table
//! ([`crate::opacity::table`]). The energy generation comes from a column or from
//! energy-generation laws evaluated at every row ([`crate::star::energy`]).
//!
//! Every problem is reported with the file, the line and the column: a missing column, a
//! radius that is not strictly monotonic, a negative density, a NaN, a number that does not
//! parse, a duplicated header name, too few rows.

use thiserror::Error;

use crate::input::{InputError, MAX_PROFILE_ROWS, MAX_TEXT_BYTES, read_text, strip_bom};
use crate::medium::MediumError;
use crate::medium::profile::{ColumnValues, ProfileColumns, ProfileOpacity, ProfileTable};
use crate::opacity::{GasState, OpacitySpec};
use crate::star::builder::TableChoice;
use crate::star::energy::EnergyLaws;
use crate::units::LengthUnit;

/// A table that could not be imported.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum ImportError {
    /// The table file could not be read.
    #[error("{file}: cannot read the table: {source}")]
    Read {
        /// The file.
        file: String,
        /// The operating-system error.
        source: std::io::Error,
    },
    /// The table is not readable within the input limits (see [`crate::input`]).
    #[error(transparent)]
    Input(#[from] InputError),
    /// The column mapping is malformed.
    #[error("--columns {entry:?}: {problem}")]
    Mapping {
        /// The offending entry of the mapping.
        entry: String,
        /// What is wrong.
        problem: String,
    },
    /// A problem with one line of the table.
    #[error("{file}: line {line}: {problem}")]
    Line {
        /// The file.
        file: String,
        /// 1-based line number.
        line: usize,
        /// What is wrong.
        problem: String,
    },
    /// A problem with one value of the table.
    #[error("{file}: line {line}, column '{column}': {problem}")]
    Cell {
        /// The file.
        file: String,
        /// 1-based line number.
        line: usize,
        /// The column's header name (or number).
        column: String,
        /// What is wrong.
        problem: String,
    },
    /// A problem with the table as a whole (header, row count, missing quantities).
    #[error("{file}: {problem}")]
    Table {
        /// The file.
        file: String,
        /// What is wrong.
        problem: String,
    },
}

/// The quantities a column can be mapped to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TableQuantity {
    /// Radius (cm after scaling).
    Radius,
    /// Density (g cm⁻³ after scaling).
    Density,
    /// Temperature (K after scaling).
    Temperature,
    /// Mass opacity (cm² g⁻¹ after scaling).
    Opacity,
    /// Hydrogen mass fraction X.
    Hydrogen,
    /// Metal mass fraction Z.
    Metals,
    /// Scattering fraction of the opacity.
    ScatteringFraction,
    /// Nuclear energy generation (erg g⁻¹ s⁻¹ after scaling).
    EnergyGeneration,
}

impl TableQuantity {
    const ALL: [TableQuantity; 8] = [
        TableQuantity::Radius,
        TableQuantity::Density,
        TableQuantity::Temperature,
        TableQuantity::Opacity,
        TableQuantity::Hydrogen,
        TableQuantity::Metals,
        TableQuantity::ScatteringFraction,
        TableQuantity::EnergyGeneration,
    ];

    /// The name used in mappings.
    pub fn name(self) -> &'static str {
        match self {
            TableQuantity::Radius => "radius",
            TableQuantity::Density => "density",
            TableQuantity::Temperature => "temperature",
            TableQuantity::Opacity => "opacity",
            TableQuantity::Hydrogen => "hydrogen",
            TableQuantity::Metals => "metals",
            TableQuantity::ScatteringFraction => "scattering_fraction",
            TableQuantity::EnergyGeneration => "energy_generation",
        }
    }
}

/// One entry of a mapping: quantity ← column, possibly log₁₀, times a scale.
#[derive(Debug, Clone, PartialEq)]
pub struct MappingEntry {
    /// The quantity.
    pub quantity: TableQuantity,
    /// Whether the column holds log₁₀ of the quantity.
    pub log10: bool,
    /// The column: a header name; digits only fall back to a 1-based column number if no
    /// header field has that name.
    pub column: String,
    /// Factor converting the (un-logged) value to cgs.
    pub scale: f64,
}

/// A parsed `--columns` mapping.
#[derive(Debug, Clone, PartialEq)]
pub struct ColumnMapping {
    entries: Vec<MappingEntry>,
}

fn length_unit(name: &str) -> Option<f64> {
    LengthUnit::parse(name).map(LengthUnit::to_cm)
}

/// Parses a length such as `6.957e10`, `0.8R_sun`, `0.8 R_sun`, `0.8 solar_radius`,
/// `7e5 km` into cm (a bare number is in cm; any spelling of [`LengthUnit::parse`]).
///
/// # Errors
/// A message saying what was expected.
pub fn parse_length_cm(text: &str) -> Result<f64, String> {
    let text = text.trim();
    let (number, factor) = LengthUnit::ALL
        .iter()
        .flat_map(|unit| {
            unit.spellings()
                .iter()
                .map(move |spelling| (*unit, *spelling))
        })
        .find_map(|(unit, spelling)| {
            text.strip_suffix(spelling)
                .filter(|rest| rest.trim().parse::<f64>().is_ok())
                .map(|rest| (rest.trim(), unit.to_cm()))
        })
        .unwrap_or((text, 1.0));
    let value: f64 = number
        .parse()
        .map_err(|_| format!("{text:?}: expected a length, e.g. 6.957e10 (cm), 0.8R_sun, 7e5km"))?;
    if !(value.is_finite() && value > 0.0) {
        return Err(format!("{text:?}: expected a positive length"));
    }
    Ok(value * factor)
}

impl ColumnMapping {
    /// Parses `QUANTITY=COLUMN[:SCALE],...` (see the module documentation).
    ///
    /// # Errors
    /// [`ImportError::Mapping`] naming the entry: no `=`, an unknown quantity, an empty
    /// column, a scale that is neither a positive number nor (for radius) a length unit, a
    /// quantity given twice.
    pub fn parse(text: &str) -> Result<Self, ImportError> {
        let mut entries: Vec<MappingEntry> = Vec::new();
        for raw in text.split(',') {
            let entry = raw.trim();
            if entry.is_empty() {
                continue;
            }
            let error = |problem: String| ImportError::Mapping {
                entry: entry.to_string(),
                problem,
            };
            let (key, value) = entry
                .split_once('=')
                .ok_or_else(|| error("expected QUANTITY=COLUMN, e.g. density=rho".into()))?;
            let key = key.trim();
            let (log10, name) = match key.strip_prefix("log_") {
                Some(rest) => (true, rest),
                None => (false, key),
            };
            let quantity = TableQuantity::ALL
                .into_iter()
                .find(|q| q.name() == name)
                .ok_or_else(|| {
                    error(format!(
                        "unknown quantity {key:?}: expected one of radius, density, temperature, \
                         opacity, hydrogen, metals, scattering_fraction, energy_generation (with a \
                         log_ prefix for log10 columns)"
                    ))
                })?;
            let (column, scale) = match value.rsplit_once(':') {
                Some((column, scale)) => {
                    let scale = scale.trim();
                    let factor = match (quantity, length_unit(scale)) {
                        (TableQuantity::Radius, Some(factor)) => factor,
                        _ => scale.parse::<f64>().map_err(|_| {
                            error(format!(
                                "scale {scale:?}: expected a number{}",
                                if quantity == TableQuantity::Radius {
                                    " or a length unit (um, mm, cm, m, km, R_sun; aliases such as solar_radius)"
                                } else {
                                    ""
                                }
                            ))
                        })?,
                    };
                    if !(factor.is_finite() && factor > 0.0) {
                        return Err(error(format!(
                            "scale {scale:?}: expected a positive number"
                        )));
                    }
                    (column.trim(), factor)
                }
                None => (value.trim(), 1.0),
            };
            if column.is_empty() {
                return Err(error("empty column name".into()));
            }
            if entries.iter().any(|e| e.quantity == quantity) {
                return Err(error(format!("{} is mapped twice", quantity.name())));
            }
            entries.push(MappingEntry {
                quantity,
                log10,
                column: column.to_string(),
                scale,
            });
        }
        if entries.is_empty() {
            return Err(ImportError::Mapping {
                entry: text.to_string(),
                problem: "no columns mapped; e.g. radius=r,density=rho,temperature=T".into(),
            });
        }
        Ok(Self { entries })
    }

    /// The entries.
    pub fn entries(&self) -> &[MappingEntry] {
        &self.entries
    }

    fn get(&self, quantity: TableQuantity) -> Option<&MappingEntry> {
        self.entries.iter().find(|e| e.quantity == quantity)
    }
}

/// Field separator of a table.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Delimiter {
    /// Comma if the header line has one, else whitespace.
    #[default]
    Auto,
    /// Commas (fields are trimmed).
    Comma,
    /// Runs of spaces or tabs.
    Whitespace,
}

/// How to read a table.
#[derive(Debug, Clone, PartialEq)]
pub struct ImportOptions {
    /// Which column holds what.
    pub mapping: ColumnMapping,
    /// Hydrogen fraction X where no column is mapped.
    pub hydrogen_x: Option<f64>,
    /// Metal fraction Z where no column is mapped.
    pub metals_z: Option<f64>,
    /// Opacity law, where no opacity column is mapped.
    pub opacity_law: Option<OpacitySpec>,
    /// Opacity table, where no opacity column and no law is given (needs temperature).
    pub opacity_table: Option<TableChoice>,
    /// Energy-generation laws evaluated at every row, where no energy-generation column is
    /// mapped (needs temperature, X and Z).
    pub energy: Option<EnergyLaws>,
    /// If set, the radius column is a fraction r/R of this radius, cm.
    pub total_radius_cm: Option<f64>,
    /// Lines skipped before looking for the header.
    pub skip_rows: usize,
    /// Field separator.
    pub delimiter: Delimiter,
}

impl ImportOptions {
    /// Options reading `mapping` with nothing else set.
    pub fn new(mapping: ColumnMapping) -> Self {
        Self {
            mapping,
            hydrogen_x: None,
            metals_z: None,
            opacity_law: None,
            opacity_table: None,
            energy: None,
            total_radius_cm: None,
            skip_rows: 0,
            delimiter: Delimiter::Auto,
        }
    }
}

fn split_fields(line: &str, comma: bool) -> Vec<&str> {
    if comma {
        line.split(',').map(str::trim).collect()
    } else {
        line.split_whitespace().collect()
    }
}

fn parse_number(text: &str) -> Option<f64> {
    let text = text.trim().trim_matches('"').trim();
    text.parse::<f64>()
        .ok()
        .or_else(|| text.replace(['D', 'd'], "e").parse::<f64>().ok())
}

fn unquote(name: &str) -> String {
    name.trim().trim_matches('"').trim().to_string()
}

/// A column resolved against the header.
struct Resolved<'a> {
    entry: &'a MappingEntry,
    index: usize,
    label: String,
}

/// Reads a table file and imports it with `options` (see [`import_table`]).
///
/// # Errors
/// [`ImportError::Input`] (see [`crate::input::read_text`]), or any error of [`import_table`].
pub fn import_table_file(
    path: &std::path::Path,
    options: &ImportOptions,
) -> Result<ProfileTable, ImportError> {
    let file = path.display().to_string();
    let text = read_text(path, MAX_TEXT_BYTES, "column table")?;
    import_table(&text, &file, options)
}

/// Imports table text into a validated [`ProfileTable`] (cgs, centre first); `file` labels
/// errors.
///
/// # Errors
/// [`ImportError`] naming the file, the line and the column.
pub fn import_table(
    text: &str,
    file: &str,
    options: &ImportOptions,
) -> Result<ProfileTable, ImportError> {
    let table_error = |problem: String| ImportError::Table {
        file: file.to_string(),
        problem,
    };
    let lines: Vec<(usize, &str)> = strip_bom(text)
        .lines()
        .enumerate()
        .skip(options.skip_rows)
        .map(|(index, line)| (index + 1, line))
        .collect();
    let is_comment = |line: &str| line.trim_start().starts_with('#');
    let is_blank = |line: &str| line.trim().is_empty();
    let first_content = lines
        .iter()
        .position(|(_, line)| !is_blank(line) && !is_comment(line))
        .ok_or_else(|| table_error("no header line and no data".into()))?;
    let (first_number, first_line) = lines[first_content];
    let looks_numeric = |line: &str| {
        let fields = split_fields(line, line.contains(','));
        !fields.is_empty() && fields.iter().all(|f| parse_number(f).is_some())
    };
    // The header: the first non-comment line, unless that is numeric; then the last comment
    // line before it.
    let (header_number, header_text, data_start) = if looks_numeric(first_line) {
        let comment = lines[..first_content]
            .iter()
            .rev()
            .find(|(_, line)| is_comment(line))
            .ok_or_else(|| {
                table_error(format!(
                    "line {first_number} holds numbers, but there is no header line naming the \
                     columns before it"
                ))
            })?;
        (
            comment.0,
            comment.1.trim_start().trim_start_matches('#'),
            first_content,
        )
    } else {
        (first_number, first_line, first_content + 1)
    };
    let comma = match options.delimiter {
        Delimiter::Comma => true,
        Delimiter::Whitespace => false,
        Delimiter::Auto => header_text.contains(','),
    };
    let header: Vec<String> = split_fields(header_text, comma)
        .into_iter()
        .map(unquote)
        .collect();
    if header.iter().all(String::is_empty) {
        return Err(ImportError::Line {
            file: file.to_string(),
            line: header_number,
            problem: "empty header line".into(),
        });
    }

    // Resolve every mapped column.
    let mut resolved: Vec<Resolved> = Vec::new();
    for entry in options.mapping.entries() {
        let name = &entry.column;
        let matches: Vec<usize> = header
            .iter()
            .enumerate()
            .filter(|(_, h)| *h == name)
            .map(|(i, _)| i)
            .collect();
        let index = match matches.as_slice() {
            [index] => *index,
            [] => match name.parse::<usize>() {
                Ok(number) if (1..=header.len()).contains(&number) => number - 1,
                _ => {
                    return Err(ImportError::Line {
                        file: file.to_string(),
                        line: header_number,
                        problem: format!(
                            "no column '{name}' (mapped to {}{}) in the header; the columns are: \
                             {}",
                            if entry.log10 { "log_" } else { "" },
                            entry.quantity.name(),
                            header.join(", ")
                        ),
                    });
                }
            },
            several => {
                return Err(ImportError::Line {
                    file: file.to_string(),
                    line: header_number,
                    problem: format!(
                        "the column name '{name}' appears {} times in the header (columns {}); \
                         rename one, or refer to it by its number",
                        several.len(),
                        several
                            .iter()
                            .map(|i| (i + 1).to_string())
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                });
            }
        };
        resolved.push(Resolved {
            entry,
            index,
            label: header[index].clone(),
        });
    }

    // Which quantities we must have.
    let mapping = &options.mapping;
    for required in [TableQuantity::Radius, TableQuantity::Density] {
        if mapping.get(required).is_none() {
            return Err(ImportError::Mapping {
                entry: String::new(),
                problem: format!(
                    "{} is not mapped; e.g. --columns radius=r,density=rho,temperature=T",
                    required.name()
                ),
            });
        }
    }
    let has_opacity_column = mapping.get(TableQuantity::Opacity).is_some();
    let opacity_sources = [
        has_opacity_column,
        options.opacity_law.is_some(),
        options.opacity_table.is_some(),
    ];
    if opacity_sources.iter().filter(|given| **given).count() > 1 {
        return Err(ImportError::Mapping {
            entry: String::new(),
            problem: "more than one opacity was given (an opacity column, a law, a table); choose \
                      one"
            .into(),
        });
    }
    let uses_table = options.opacity_table.is_some();
    if uses_table && mapping.get(TableQuantity::Temperature).is_none() {
        return Err(ImportError::Mapping {
            entry: String::new(),
            problem: "an opacity table needs temperature: map it, e.g. temperature=T".into(),
        });
    }
    if uses_table && mapping.get(TableQuantity::ScatteringFraction).is_some() {
        return Err(ImportError::Mapping {
            entry: String::new(),
            problem: "scattering_fraction goes with an opacity column".into(),
        });
    }
    if options.energy.is_some() {
        if mapping.get(TableQuantity::EnergyGeneration).is_some() {
            return Err(ImportError::Mapping {
                entry: String::new(),
                problem: "energy_generation is both mapped to a column and given by laws; choose \
                          one"
                .into(),
            });
        }
        if mapping.get(TableQuantity::Temperature).is_none() {
            return Err(ImportError::Mapping {
                entry: String::new(),
                problem: "energy-generation laws need temperature: map it, e.g. temperature=T"
                    .into(),
            });
        }
        for (quantity, single, flag) in [
            (TableQuantity::Hydrogen, options.hydrogen_x, "--hydrogen"),
            (TableQuantity::Metals, options.metals_z, "--metals"),
        ] {
            if mapping.get(quantity).is_none() && single.is_none() {
                return Err(ImportError::Mapping {
                    entry: String::new(),
                    problem: format!(
                        "energy-generation laws need {}: map a column or give {flag}",
                        quantity.name()
                    ),
                });
            }
        }
    }
    if !has_opacity_column && !uses_table {
        if options.opacity_law.is_none() {
            return Err(ImportError::Mapping {
                entry: String::new(),
                problem: "no opacity: map an opacity column (opacity=NAME, cm^2/g), or give an \
                          opacity law (--opacity) or an opacity table (--opacity-table) with a \
                          temperature column"
                    .into(),
            });
        }
        if mapping.get(TableQuantity::Temperature).is_none() {
            return Err(ImportError::Mapping {
                entry: String::new(),
                problem: "an opacity law needs temperature: map it, e.g. temperature=T".into(),
            });
        }
        if mapping.get(TableQuantity::ScatteringFraction).is_some() {
            return Err(ImportError::Mapping {
                entry: String::new(),
                problem: "scattering_fraction goes with an opacity column; an opacity law \
                          gives its own"
                    .into(),
            });
        }
    }
    for (quantity, single, flag) in [
        (TableQuantity::Hydrogen, options.hydrogen_x, "--hydrogen"),
        (TableQuantity::Metals, options.metals_z, "--metals"),
    ] {
        if mapping.get(quantity).is_some() && single.is_some() {
            return Err(ImportError::Mapping {
                entry: String::new(),
                problem: format!(
                    "{} is both mapped to a column and given by {flag}; choose one",
                    quantity.name()
                ),
            });
        }
        if !has_opacity_column && !uses_table && mapping.get(quantity).is_none() && single.is_none()
        {
            return Err(ImportError::Mapping {
                entry: String::new(),
                problem: format!(
                    "an opacity law needs {}: map a column ({}=NAME) or give {flag}",
                    quantity.name(),
                    quantity.name()
                ),
            });
        }
    }

    // Read the rows.
    let mut values: Vec<Vec<f64>> = vec![Vec::new(); resolved.len()];
    let mut line_of_row: Vec<usize> = Vec::new();
    for &(number, line) in &lines[data_start..] {
        if is_blank(line) || is_comment(line) {
            continue;
        }
        let fields = split_fields(line, comma);
        if fields.len() != header.len() {
            return Err(ImportError::Line {
                file: file.to_string(),
                line: number,
                problem: format!(
                    "{} field(s), but the header (line {header_number}) names {} columns",
                    fields.len(),
                    header.len()
                ),
            });
        }
        for (column, r) in resolved.iter().enumerate() {
            let cell = |problem: String| ImportError::Cell {
                file: file.to_string(),
                line: number,
                column: r.label.clone(),
                problem,
            };
            let raw = fields[r.index];
            let parsed =
                parse_number(raw).ok_or_else(|| cell(format!("{raw:?} is not a number")))?;
            if parsed.is_nan() {
                return Err(cell("NaN (not a number)".into()));
            }
            let value = if r.entry.log10 {
                10f64.powf(parsed)
            } else {
                parsed
            } * r.entry.scale;
            if !value.is_finite() {
                return Err(cell(format!(
                    "{raw} gives {value} {}: not a finite number",
                    r.entry.quantity.name()
                )));
            }
            let (ok, expected) = match r.entry.quantity {
                TableQuantity::Radius => (value >= 0.0, "a radius >= 0"),
                TableQuantity::Density => (value >= 0.0, "a density >= 0"),
                TableQuantity::Temperature => (value >= 0.0, "a temperature >= 0"),
                TableQuantity::Opacity => (value >= 0.0, "an opacity >= 0"),
                TableQuantity::Hydrogen | TableQuantity::Metals => {
                    ((0.0..=1.0).contains(&value), "a mass fraction in [0, 1]")
                }
                TableQuantity::ScatteringFraction => {
                    ((0.0..=1.0).contains(&value), "a fraction in [0, 1]")
                }
                TableQuantity::EnergyGeneration => {
                    (value >= 0.0, "an energy generation >= 0 (erg/g/s)")
                }
            };
            if !ok {
                return Err(cell(format!(
                    "{} = {value} (from {raw:?}): expected {expected}",
                    r.entry.quantity.name()
                )));
            }
            values[column].push(value);
        }
        line_of_row.push(number);
        if line_of_row.len() > MAX_PROFILE_ROWS {
            return Err(ImportError::Line {
                file: file.to_string(),
                line: number,
                problem: format!(
                    "more than {MAX_PROFILE_ROWS} data rows: a profile may have at most \
                     {MAX_PROFILE_ROWS} rows (the README's *Limits*); thin the table out"
                ),
            });
        }
    }
    let rows = line_of_row.len();
    if rows < 2 {
        return Err(table_error(format!(
            "{rows} data row(s) after the header (line {header_number}): a profile needs at \
             least 2"
        )));
    }

    // Radius: monotonic, either way; then centre first.
    let radius_column = resolved
        .iter()
        .position(|r| r.entry.quantity == TableQuantity::Radius)
        .expect("radius is mapped");
    let radius_label = resolved[radius_column].label.clone();
    let radius = &values[radius_column];
    let descending = radius[1] < radius[0];
    for k in 1..rows {
        let (previous, here) = (radius[k - 1], radius[k]);
        let monotonic = if descending {
            here < previous
        } else {
            here > previous
        };
        if !monotonic {
            return Err(ImportError::Cell {
                file: file.to_string(),
                line: line_of_row[k],
                column: radius_label,
                problem: format!(
                    "radius {here} does not {} from {previous} on line {}: radii must be strictly \
                     {} (the table's first two rows set the order)",
                    if descending { "decrease" } else { "increase" },
                    line_of_row[k - 1],
                    if descending {
                        "decreasing"
                    } else {
                        "increasing"
                    }
                ),
            });
        }
    }
    if descending {
        for column in &mut values {
            column.reverse();
        }
        line_of_row.reverse();
    }
    let total = options.total_radius_cm.unwrap_or(1.0);
    let take = |quantity: TableQuantity| {
        resolved
            .iter()
            .position(|r| r.entry.quantity == quantity)
            .map(|k| values[k].clone())
    };
    let radius_cm: Vec<f64> = take(TableQuantity::Radius)
        .expect("mapped")
        .into_iter()
        .map(|r| r * total)
        .collect();

    // X + Z ≤ 1 row by row, with the line named.
    let hydrogen = take(TableQuantity::Hydrogen);
    let metals = take(TableQuantity::Metals);
    for row in 0..rows {
        let x = hydrogen.as_ref().map(|h| h[row]).or(options.hydrogen_x);
        let z = metals.as_ref().map(|m| m[row]).or(options.metals_z);
        if let (Some(x), Some(z)) = (x, z)
            && x + z > 1.0
        {
            return Err(ImportError::Line {
                file: file.to_string(),
                line: line_of_row[row],
                problem: format!(
                    "X + Z = {} > 1: the helium fraction would be negative",
                    x + z
                ),
            });
        }
    }
    let column_or = |column: Option<Vec<f64>>, single: Option<f64>| {
        column
            .map(ColumnValues::PerRow)
            .or(single.map(ColumnValues::Constant))
    };
    let opacity = match (take(TableQuantity::Opacity), &options.opacity_table) {
        (Some(opacity_cm2_g), _) => ProfileOpacity::Tabulated {
            opacity_cm2_g,
            scattering_fraction: take(TableQuantity::ScatteringFraction).map(ColumnValues::PerRow),
        },
        (None, Some(table)) => ProfileOpacity::Table {
            file: table.file.clone(),
            table: table.table.clone(),
            outside: table.outside,
        },
        (None, None) => ProfileOpacity::Law(options.opacity_law.clone().expect("checked above")),
    };
    let density = take(TableQuantity::Density).expect("mapped");
    let temperature = take(TableQuantity::Temperature);
    let hydrogen_x = column_or(hydrogen, options.hydrogen_x);
    let metals_z = column_or(metals, options.metals_z);
    let energy_generation_erg_g_s = match (take(TableQuantity::EnergyGeneration), options.energy) {
        (Some(column), _) => Some(ColumnValues::PerRow(column)),
        (None, Some(laws)) => {
            let (t, x, z) = (
                temperature.as_ref().expect("checked above"),
                hydrogen_x.as_ref().expect("checked above"),
                metals_z.as_ref().expect("checked above"),
            );
            Some(ColumnValues::PerRow(
                (0..rows)
                    .map(|row| {
                        laws.erg_g_s(&GasState {
                            density_g_cm3: density[row],
                            temperature_k: t[row],
                            hydrogen_x: x.at(row),
                            metals_z: z.at(row),
                        })
                    })
                    .collect(),
            ))
        }
        (None, None) => None,
    };
    ProfileTable::new(ProfileColumns {
        radius_cm,
        density_g_cm3: density,
        temperature_k: temperature,
        hydrogen_x,
        metals_z,
        opacity,
        energy_generation_erg_g_s,
    })
    .map_err(|error: MediumError| table_error(error.to_string()))
}

/// Writes `table` as a comma-separated table that [`import_table`] reads back exactly
/// (numbers in full precision): columns `radius_cm`, `density_g_cm3`, then `temperature_k`,
/// `hydrogen`, `metals`, `opacity_cm2_g`, `scattering_fraction`, `energy_generation_erg_g_s`
/// where the table has them (constant X, Z written on every row).
pub fn table_csv(table: &ProfileTable) -> String {
    let c = table.columns();
    let rows = table.rows();
    let mut names = vec!["radius_cm", "density_g_cm3"];
    let mut columns: Vec<Box<dyn Fn(usize) -> f64 + '_>> = vec![
        Box::new(|row| c.radius_cm[row]),
        Box::new(|row| c.density_g_cm3[row]),
    ];
    if let Some(t) = &c.temperature_k {
        names.push("temperature_k");
        columns.push(Box::new(move |row| t[row]));
    }
    if let Some(x) = &c.hydrogen_x {
        names.push("hydrogen");
        columns.push(Box::new(move |row| x.at(row)));
    }
    if let Some(z) = &c.metals_z {
        names.push("metals");
        columns.push(Box::new(move |row| z.at(row)));
    }
    if let ProfileOpacity::Tabulated {
        opacity_cm2_g,
        scattering_fraction,
    } = &c.opacity
    {
        names.push("opacity_cm2_g");
        columns.push(Box::new(move |row| opacity_cm2_g[row]));
        if let Some(f) = scattering_fraction {
            names.push("scattering_fraction");
            columns.push(Box::new(move |row| f.at(row)));
        }
    }
    if let Some(energy) = &c.energy_generation_erg_g_s {
        names.push("energy_generation_erg_g_s");
        columns.push(Box::new(move |row| energy.at(row)));
    }
    let mut out = names.join(",");
    out.push('\n');
    for row in 0..rows {
        let line: Vec<String> = columns.iter().map(|f| format!("{:e}", f(row))).collect();
        out.push_str(&line.join(","));
        out.push('\n');
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn options(mapping: &str) -> ImportOptions {
        ImportOptions {
            hydrogen_x: Some(0.7),
            metals_z: Some(0.02),
            opacity_law: Some(OpacitySpec::ElectronScattering {}),
            ..ImportOptions::new(ColumnMapping::parse(mapping).unwrap())
        }
    }

    fn error(text: &str, mapping: &str) -> String {
        import_table(text, "t.txt", &options(mapping))
            .unwrap_err()
            .to_string()
    }

    const TABLE: &str = "# a test star\nr rho T\n0 10 2e7\n1e10 1 1e6\n2e10 0 0\n";

    #[test]
    fn whitespace_table_with_names() {
        let t = import_table(TABLE, "t", &options("radius=r,density=rho,temperature=T")).unwrap();
        assert_eq!(t.rows(), 3);
        assert_eq!(t.columns().radius_cm, vec![0.0, 1e10, 2e10]);
        assert_eq!(t.columns().temperature_k.as_ref().unwrap()[0], 2e7);
    }

    #[test]
    fn comma_table_descending_with_logs_scales_and_indices() {
        let text = "lg_r,lg_rho,lg_temp,h\n0,-7,3.7,0.7\n-1,0,6,0.7\n-2,1,7,0.6\n";
        let t = import_table(
            text,
            "t",
            &ImportOptions {
                hydrogen_x: None,
                ..options("log_radius=lg_r:R_sun,log_density=2,log_temperature=lg_temp,hydrogen=h")
            },
        )
        .unwrap();
        let c = t.columns();
        assert!((c.radius_cm[0] - 0.01 * 6.957e10).abs() < 1e-3);
        assert_eq!(c.radius_cm[2], 6.957e10);
        assert!((c.density_g_cm3[0] - 10.0).abs() < 1e-12);
        assert_eq!(
            c.hydrogen_x,
            Some(ColumnValues::PerRow(vec![0.6, 0.7, 0.7]))
        );
    }

    #[test]
    fn header_as_comment_and_fraction_radius() {
        let text = "# q rho T\n0.0 1 1e6\n0.5 1 1e6\n1.0 1 1e6\n";
        let t = import_table(
            text,
            "t",
            &ImportOptions {
                total_radius_cm: Some(2.0),
                ..options("radius=q,density=rho,temperature=T")
            },
        )
        .unwrap();
        assert_eq!(t.columns().radius_cm, vec![0.0, 1.0, 2.0]);
    }

    #[test]
    fn bad_tables_name_line_and_column() {
        let m = "radius=r,density=rho,temperature=T";
        let e = error(TABLE, "radius=r,density=dens,temperature=T");
        assert!(
            e.contains("line 2") && e.contains("no column 'dens'"),
            "{e}"
        );
        let e = error("r rho T\n0 1 1\n2 1 1\n1 1 1\n", m);
        assert!(e.contains("line 4") && e.contains("column 'r'"), "{e}");
        let e = error("r rho T\n0 1 1\n1 -1 1\n", m);
        assert!(
            e.contains("line 3") && e.contains("column 'rho'") && e.contains(">= 0"),
            "{e}"
        );
        let e = error("r rho T\n0 1 1\n1 nan 1\n", m);
        assert!(e.contains("line 3") && e.contains("NaN"), "{e}");
        let e = error("r rho T\n0 1 1\n1 x1 1\n", m);
        assert!(
            e.contains("line 3") && e.contains("\"x1\" is not a number"),
            "{e}"
        );
        let e = error("r rho rho T\n0 1 1 1\n1 1 1 1\n", m);
        assert!(e.contains("line 1") && e.contains("appears 2 times"), "{e}");
        let e = error("r rho T\n0 1 1\n", m);
        assert!(e.contains("1 data row(s)"), "{e}");
        let e = error("r rho T\n0 1 1\n1 1\n", m);
        assert!(e.contains("line 3") && e.contains("2 field(s)"), "{e}");
        let e = error("r rho T\n0 1 1\n1 1 1\n1 1 1\n", m);
        assert!(e.contains("line 4"), "{e}");
    }

    #[test]
    fn mapping_errors() {
        for bad in [
            "radius",
            "radius=r,rho=x",
            "radius=r:2x",
            "density=r:-1",
            "radius=r,radius=q",
        ] {
            assert!(ColumnMapping::parse(bad).is_err(), "{bad}");
        }
        let m = ColumnMapping::parse("radius=r:km,density=d:1e-3").unwrap();
        assert_eq!(m.entries()[0].scale, 1e5);
        assert_eq!(m.entries()[1].scale, 1e-3);
        assert!(parse_length_cm("0.5R_sun").unwrap() == 0.5 * 6.957e10);
        assert!(parse_length_cm("2 km").unwrap() == 2e5);
        assert!(parse_length_cm("3").unwrap() == 3.0);
        assert!(parse_length_cm("abc").is_err());
    }

    #[test]
    fn fortran_exponents_and_quoted_numbers_parse() {
        assert_eq!(parse_number("1.5D+03"), Some(1500.0));
        assert_eq!(parse_number("2.0d-1"), Some(0.2));
        assert_eq!(parse_number(" \"3.5\" "), Some(3.5));
        assert_eq!(parse_number("abc"), None);
    }

    #[test]
    fn csv_round_trip_is_exact() {
        let t = import_table(TABLE, "t", &options("radius=r,density=rho,temperature=T")).unwrap();
        let csv = table_csv(&t);
        let back = import_table(
            &csv,
            "t",
            &ImportOptions {
                hydrogen_x: None,
                metals_z: None,
                ..options(
                    "radius=radius_cm,density=density_g_cm3,temperature=temperature_k,\
                     hydrogen=hydrogen,metals=metals",
                )
            },
        )
        .unwrap();
        assert_eq!(back.columns().radius_cm, t.columns().radius_cm);
        assert_eq!(back.columns().density_g_cm3, t.columns().density_g_cm3);
    }
}
