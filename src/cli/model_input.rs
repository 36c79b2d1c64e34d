//! Where a command reads its model file: a path, or `-` for standard input.

use std::path::Path;

use anyhow::Result;
use serde_json::Value;
use sojourn::input::{MAX_TEXT_BYTES, read_from};
use sojourn::medium::model_file::{load_model_value, parse_model_value};

/// How a model read from standard input is named in messages and reports.
pub const STDIN_LABEL: &str = "<stdin>";

/// The model file's JSON and its label: the file at `path`, or standard input for `-`
/// (within the same size limit as a file; relative paths inside it, such as opacity
/// tables, are then taken from the current folder).
pub fn model_value(path: &Path) -> Result<(Value, String)> {
    if path == Path::new("-") {
        let text = read_from(
            std::io::stdin().lock(),
            STDIN_LABEL,
            MAX_TEXT_BYTES,
            "model file",
        )?;
        return Ok((parse_model_value(&text, STDIN_LABEL)?, STDIN_LABEL.into()));
    }
    Ok((load_model_value(path)?, path.display().to_string()))
}
