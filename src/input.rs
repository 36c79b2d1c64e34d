//! Reading input files within stated limits, and the limits themselves.
//!
//! Every file sojourn reads goes through [`read_text`] (or [`read_from`] for standard
//! input): directories and devices are refused (a pipe is fine), a file larger than its
//! limit is refused before it is read, a stream is read only up to its limit, a UTF-8
//! byte-order mark is dropped, and text that is not UTF-8 is refused with the byte offset.
//!
//! The limits (the README's *Limits* section lists them) keep a hostile or mistaken input
//! from exhausting memory or time before any check can speak. They are generous for real
//! use: the demo stars have 400 profile rows and 2 500 sub-shells; a 10 000-point sweep of
//! 10⁴ photons each is already a large study.

use std::io::Read;
use std::path::Path;

use thiserror::Error;

/// Largest model file, sweep spec or column table, bytes (64 MiB).
pub const MAX_TEXT_BYTES: u64 = 64 << 20;

/// Largest shard file, checkpoint or sweep point file, bytes (1 GiB): they carry exact
/// tallies, tens to hundreds of kB per point or run.
pub const MAX_STATE_BYTES: u64 = 1 << 30;

/// Most layers in a model file (each profile layer counts once, whatever its rows).
pub const MAX_LAYERS: usize = 10_000;

/// Most rows in one tabulated profile (a model's `profile` or an imported table).
pub const MAX_PROFILE_ROWS: usize = 100_000;

/// Most points in a sweep (the product of the value counts for a grid), and most values
/// one parameter may list or a range may count.
pub const MAX_SWEEP_POINTS: u64 = 10_000;

/// Smallest thickness or radius in a model file, cm (1e-30 cm; below the Planck length
/// there is no physics to model, and far below it floating-point positions break down).
pub const MIN_LENGTH_CM: f64 = 1e-30;

/// Largest thickness or radius, and largest total size, of a model, cm (1e30 cm, about ten
/// times the radius of the observable universe: the squares of positions stay finite).
pub const MAX_LENGTH_CM: f64 = 1e30;

/// Largest extinction, scattering or absorption coefficient, per cm (1e30 /cm); smallest
/// non-zero one 1e-30 /cm, so that mean free paths stay finite numbers.
pub const MAX_COEFFICIENT_PER_CM: f64 = 1e30;

/// Smallest non-zero coefficient, per cm (see [`MAX_COEFFICIENT_PER_CM`]).
pub const MIN_COEFFICIENT_PER_CM: f64 = 1e-30;

/// Largest optical depth of a model, through all its layers (1e30): the naive step count
/// τ² and the diffusion times stay finite numbers.
pub const MAX_OPTICAL_DEPTH: f64 = 1e30;

/// The README's table of input limits (Markdown), made from the constants above; a test
/// checks that the README holds it word for word.
pub fn limits_table() -> String {
    let rows = [
        (
            "Model file, sweep spec, opacity or column table".to_string(),
            describe_bytes(MAX_TEXT_BYTES),
        ),
        (
            "Shard file, checkpoint, sweep point file".to_string(),
            describe_bytes(MAX_STATE_BYTES),
        ),
        ("Layers in a model".to_string(), group(MAX_LAYERS as u64)),
        (
            "Rows of one tabulated profile".to_string(),
            group(MAX_PROFILE_ROWS as u64),
        ),
        (
            "Points of a sweep (a grid: the product of the value counts)".to_string(),
            group(MAX_SWEEP_POINTS),
        ),
        (
            "Thickness or radius of a layer, size of a model".to_string(),
            format!("{MIN_LENGTH_CM:e} cm to {MAX_LENGTH_CM:e} cm"),
        ),
        (
            "Extinction, scattering or absorption coefficient (or 0)".to_string(),
            format!("{MIN_COEFFICIENT_PER_CM:e} to {MAX_COEFFICIENT_PER_CM:e} per cm"),
        ),
        (
            "Optical depth through all layers".to_string(),
            format!("{MAX_OPTICAL_DEPTH:e}"),
        ),
    ];
    let mut table = String::from("| Input | Limit |\n|---|---|\n");
    for (input, limit) in rows {
        table += &format!("| {input} | {limit} |\n");
    }
    table
}

/// `10000` as `10 000`.
fn group(number: u64) -> String {
    let digits = number.to_string();
    let mut grouped = String::new();
    for (index, digit) in digits.chars().enumerate() {
        if index > 0 && (digits.len() - index).is_multiple_of(3) {
            grouped.push(' ');
        }
        grouped.push(digit);
    }
    grouped
}

/// The label of standard input in messages.
pub const STDIN_LABEL: &str = "<standard input>";

/// An input that cannot be read within its limits.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum InputError {
    /// The operating system refused to open or read the file.
    #[error("{file}: cannot read the {what}: {cause}")]
    Read {
        /// The file.
        file: String,
        /// What kind of input it should be ("model file", "shard file", ...).
        what: &'static str,
        /// The operating-system error.
        cause: std::io::Error,
    },
    /// A directory or a device where a file was expected.
    #[error(
        "{file}: is {kind}, not {} {what}: give the path of a regular file",
        article(what)
    )]
    NotAFile {
        /// The path.
        file: String,
        /// What it is ("a directory", "a character device", ...).
        kind: &'static str,
        /// What kind of input it should be.
        what: &'static str,
    },
    /// More bytes than the limit for this kind of input.
    #[error(
        "{file}: {size} is more than the {} limit for {} {what} (the README's *Limits* lists them)",
        describe_bytes(*limit),
        article(what)
    )]
    TooLarge {
        /// The file.
        file: String,
        /// What kind of input it is.
        what: &'static str,
        /// Its size as known ("80 MiB", or "more than 64 MiB" for a stream).
        size: String,
        /// The limit, bytes.
        limit: u64,
    },
    /// Bytes that are not UTF-8 text.
    #[error(
        "{file}: byte {offset}: not UTF-8 text; {} {what} is JSON or plain text in UTF-8",
        article(what)
    )]
    NotText {
        /// The file.
        file: String,
        /// What kind of input it should be.
        what: &'static str,
        /// Offset of the first byte that is not UTF-8.
        offset: usize,
    },
}

/// "an" before a word that starts with a vowel, else "a".
fn article(word: &str) -> &'static str {
    if word.starts_with(['a', 'e', 'i', 'o', 'u']) {
        "an"
    } else {
        "a"
    }
}

/// A byte count for messages: `512 B`, `64 MiB`, `1.5 GiB`.
pub fn describe_bytes(bytes: u64) -> String {
    const UNITS: [&str; 4] = ["KiB", "MiB", "GiB", "TiB"];
    if bytes < 1024 {
        return format!("{bytes} B");
    }
    let mut value = bytes as f64 / 1024.0;
    let mut unit = 0;
    while value >= 1024.0 && unit + 1 < UNITS.len() {
        value /= 1024.0;
        unit += 1;
    }
    if value.fract() == 0.0 {
        format!("{value} {}", UNITS[unit])
    } else {
        format!("{value:.1} {}", UNITS[unit])
    }
}

/// What a path that is not a regular file is, for messages; `None` for a regular file or
/// a stream (pipe, socket) that may be read.
fn refused_kind(file_type: std::fs::FileType) -> Option<&'static str> {
    if file_type.is_dir() {
        return Some("a directory");
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if file_type.is_char_device() {
            return Some("a character device");
        }
        if file_type.is_block_device() {
            return Some("a block device");
        }
    }
    None
}

/// Reads the text file at `path` (a `what`, e.g. "model file") of at most `limit` bytes.
///
/// # Errors
/// [`InputError`]: the file cannot be opened or read, is a directory or a device, is
/// larger than `limit`, or is not UTF-8.
pub fn read_text(path: &Path, limit: u64, what: &'static str) -> Result<String, InputError> {
    let file = path.display().to_string();
    let read_error = |cause| InputError::Read {
        file: file.clone(),
        what,
        cause,
    };
    let metadata = std::fs::metadata(path).map_err(read_error)?;
    if let Some(kind) = refused_kind(metadata.file_type()) {
        return Err(InputError::NotAFile { file, kind, what });
    }
    if metadata.is_file() && metadata.len() > limit {
        return Err(InputError::TooLarge {
            file,
            what,
            size: describe_bytes(metadata.len()),
            limit,
        });
    }
    let opened = std::fs::File::open(path).map_err(read_error)?;
    read_from(opened, &file, limit, what)
}

/// Reads text from a stream (standard input, a pipe) labelled `file` in messages, up to
/// `limit` bytes.
///
/// # Errors
/// [`InputError::Read`], [`InputError::TooLarge`] past `limit` bytes, or
/// [`InputError::NotText`].
pub fn read_from(
    reader: impl Read,
    file: &str,
    limit: u64,
    what: &'static str,
) -> Result<String, InputError> {
    let mut bytes = Vec::new();
    reader
        .take(limit.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(|cause| InputError::Read {
            file: file.to_string(),
            what,
            cause,
        })?;
    if bytes.len() as u64 > limit {
        return Err(InputError::TooLarge {
            file: file.to_string(),
            what,
            size: format!("more than {}", describe_bytes(limit)),
            limit,
        });
    }
    let text = String::from_utf8(bytes).map_err(|error| InputError::NotText {
        file: file.to_string(),
        what,
        offset: error.utf8_error().valid_up_to(),
    })?;
    Ok(match text.strip_prefix('\u{feff}') {
        Some(rest) => rest.to_string(),
        None => text,
    })
}

/// `text` without a leading UTF-8 byte-order mark (some editors write one; JSON parsers
/// refuse it).
pub fn strip_bom(text: &str) -> &str {
    text.strip_prefix('\u{feff}').unwrap_or(text)
}

/// Rewrites a serde message for people: Rust type names ("f64", "u64", "struct X",
/// "untagged enum X") become the words a file's author knows, and serde_json's trailing
/// " at line L column C" (reported apart, or meaningless for a parsed value) is dropped.
pub fn plain_message(message: &str) -> String {
    let mut text = match message.rfind(" at line ") {
        Some(index) if message[index..].contains(" column ") => message[..index].to_string(),
        _ => message.to_string(),
    };
    if let Some(index) = text.find("data did not match any variant of untagged enum") {
        text = format!("{}a value of another form", &text[..index]);
    }
    for (rust, plain) in [
        ("expected f64", "expected a number"),
        ("expected f32", "expected a number"),
        ("expected u64", "expected a whole number >= 0"),
        ("expected u32", "expected a whole number >= 0"),
        ("expected usize", "expected a whole number >= 0"),
        ("expected i64", "expected a whole number"),
        ("expected i32", "expected a whole number"),
        ("expected a sequence", "expected a list [...]"),
        ("expected a map", "expected an object {...}"),
        ("floating point `", "number `"),
    ] {
        text = text.replace(rust, plain);
    }
    for kind in [
        "expected struct ",
        "expected enum ",
        "expected tuple struct ",
    ] {
        while let Some(index) = text.find(kind) {
            let end = text[index + kind.len()..]
                .find(|c: char| !(c.is_alphanumeric() || c == '_'))
                .map_or(text.len(), |e| index + kind.len() + e);
            text.replace_range(index..end, "expected an object {...}");
        }
    }
    text
}

/// The field path and message of a deserialisation error at `path` (serde_path_to_error's
/// form, e.g. `layers[0].phase`): Rust type names become words ([`plain_message`]), and a
/// message that names a field inside the value ("field `gaunt`: invalid type ...", as an
/// opacity law reports it) has that field joined to the path. An empty path is `.`.
pub fn field_and_message(path: &str, message: &str) -> (String, String) {
    let mut field = if path == "." {
        String::new()
    } else {
        path.to_string()
    };
    let mut message = plain_message(message);
    while let Some(rest) = message.strip_prefix("field `") {
        let Some((inner, tail)) = rest.split_once("`: ") else {
            break;
        };
        field = if field.is_empty() || inner.starts_with('[') {
            format!("{field}{inner}")
        } else {
            format!("{field}.{inner}")
        };
        message = tail.to_string();
    }
    if field.is_empty() {
        field = ".".into();
    }
    (field, message)
}

/// What kind of JSON value `value` is, for messages: "a list", "a number `3`", ...
pub fn json_kind(value: &serde_json::Value) -> String {
    use serde_json::Value;
    match value {
        Value::Null => "null".into(),
        Value::Bool(b) => format!("a boolean `{b}`"),
        Value::Number(n) => format!("a number `{n}`"),
        Value::String(s) => format!("a string {s:?}"),
        Value::Array(_) => "a list".into(),
        Value::Object(_) => "an object".into(),
    }
}

/// A JSON value of the wrong shape: where, and what is wrong.
#[derive(Debug, Clone, PartialEq, Eq, Error)]
#[error("{field}: {message}")]
pub struct FieldError {
    /// JSON path of the field (`.` for the whole value).
    pub field: String,
    /// What is wrong, in plain words.
    pub message: String,
}

/// Reads `value` as a `T`; an error names the JSON path of the field (see
/// [`field_and_message`]).
///
/// # Errors
/// [`FieldError`] for JSON of the wrong shape or a value that `T` refuses.
pub fn from_json_value<T: serde::de::DeserializeOwned>(
    value: &serde_json::Value,
) -> Result<T, FieldError> {
    serde_path_to_error::deserialize(value).map_err(|error| {
        let (field, message) =
            field_and_message(&error.path().to_string(), &error.into_inner().to_string());
        FieldError { field, message }
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn streams_stop_at_the_limit_and_marks_are_dropped() {
        let text = read_from(&b"\xef\xbb\xbf{}"[..], "x", 10, "model file").unwrap();
        assert_eq!(text, "{}");
        let error = read_from(std::io::repeat(0), "zeros", 1000, "model file").unwrap_err();
        assert_eq!(
            error.to_string(),
            "zeros: more than 1000 B is more than the 1000 B limit for a model file (the \
             README's *Limits* lists them)"
        );
        let error = read_from(&b"ab\xffcd"[..], "x", 10, "model file").unwrap_err();
        assert!(error.to_string().contains("byte 2: not UTF-8"), "{error}");
    }

    #[test]
    fn directories_and_devices_are_not_files() {
        let directory = tempfile::tempdir().unwrap();
        let error = read_text(directory.path(), 10, "model file").unwrap_err();
        assert!(error.to_string().contains("is a directory"), "{error}");
        #[cfg(unix)]
        {
            let error = read_text(Path::new("/dev/zero"), 10, "model file").unwrap_err();
            assert!(error.to_string().contains("a character device"), "{error}");
        }
        let big = directory.path().join("big.json");
        std::fs::write(&big, vec![b' '; 2048]).unwrap();
        let error = read_text(&big, 1024, "model file").unwrap_err();
        assert!(
            error
                .to_string()
                .contains("2 KiB is more than the 1 KiB limit")
        );
    }

    #[test]
    fn the_readme_states_the_limits() {
        let readme = include_str!("../README.md");
        let table = limits_table();
        assert!(
            readme.contains(&table),
            "README.md's *Limits* section must hold this table:\n{table}"
        );
    }

    #[test]
    fn rust_type_names_become_words() {
        assert_eq!(
            plain_message("invalid type: string \"x\", expected f64 at line 1 column 5"),
            "invalid type: string \"x\", expected a number"
        );
        assert_eq!(
            plain_message("invalid type: integer `1`, expected struct LayerSpec"),
            "invalid type: integer `1`, expected an object {...}"
        );
        assert_eq!(
            plain_message("invalid value: integer `-1`, expected u64"),
            "invalid value: integer `-1`, expected a whole number >= 0"
        );
        assert_eq!(describe_bytes(64 << 20), "64 MiB");
        assert_eq!(describe_bytes(1536), "1.5 KiB");
    }
}
