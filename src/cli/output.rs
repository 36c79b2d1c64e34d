//! Writing results: stdout, or a file written atomically (temporary file, then rename), so
//! an interrupted run never leaves a half-written output behind. Every output a command was
//! asked for is checked by [`check_outputs`] before any work, so that a path that cannot be
//! written is reported at once and not after a long run.

use std::io::Write;
use std::path::{Path, PathBuf};

use anyhow::{Context, Result, bail};
use sojourn::atomic_write::{check_destination, prepare_directory};

/// Whether `path` is `-`, standard output.
pub fn is_stdout(path: &Path) -> bool {
    path == Path::new("-")
}

/// Writes `text` to standard output; a failure (a full disk, a closed pipe) says so.
pub fn write_stdout(text: &str) -> Result<()> {
    let mut stdout = std::io::stdout().lock();
    stdout
        .write_all(text.as_bytes())
        .and_then(|()| stdout.flush())
        .context("cannot write to standard output")
}

/// Writes `text` to stdout (`-`) or atomically to `path`.
pub fn write_text(path: &Path, text: &str) -> Result<()> {
    if is_stdout(path) {
        return write_stdout(text);
    }
    write_atomically(path, text.as_bytes())
}

/// Writes `bytes` to a temporary file beside `path` (beside the file a symbolic link points
/// to), then renames it over `path`; a destination that is not a regular file is refused.
pub fn write_atomically(path: &Path, bytes: &[u8]) -> Result<()> {
    sojourn::atomic_write::write_atomically(path, bytes)
        .with_context(|| format!("cannot write {}", path.display()))
}

/// One output a command was asked to write.
pub enum Output<'a> {
    /// A file given with `flag`; `-` means standard output where `stdout` allows it.
    File {
        /// The option, e.g. `--json`.
        flag: &'static str,
        /// The path given.
        path: &'a Path,
        /// Whether `-` (standard output) is accepted.
        stdout: bool,
    },
    /// A folder given with `flag`, created if missing.
    Folder {
        /// The option, e.g. `--plot`.
        flag: &'static str,
        /// The path given.
        path: &'a Path,
    },
}

/// Checks every output before any work: at most one goes to standard output, no two name
/// the same file, every file can be written (see [`check_destination`]) and every folder
/// exists or is created and takes files. Returns whether one of them is standard output.
pub fn check_outputs(outputs: &[Output]) -> Result<bool> {
    let mut to_stdout: Option<&'static str> = None;
    let mut files: Vec<(PathBuf, &'static str)> = Vec::new();
    for output in outputs {
        match *output {
            Output::File { flag, path, stdout } if is_stdout(path) => {
                if !stdout {
                    bail!("{flag} -: this output cannot go to standard output; give a file path");
                }
                if let Some(first) = to_stdout {
                    bail!(
                        "{first} - and {flag} - would both write to standard output; send one \
                         to a file"
                    );
                }
                to_stdout = Some(flag);
            }
            Output::File { flag, path, .. } => {
                let destination = check_destination(path).context(flag)?;
                let key = std::fs::canonicalize(folder(&destination))
                    .map(|f| f.join(destination.file_name().unwrap_or_default()))
                    .unwrap_or(destination);
                if let Some((_, first)) = files.iter().find(|(seen, _)| *seen == key) {
                    bail!(
                        "{first} and {flag} both write {}: give each output its own file",
                        path.display()
                    );
                }
                files.push((key, flag));
            }
            Output::Folder { flag, path } => {
                if is_stdout(path) {
                    bail!(
                        "{flag} -: a folder of files cannot go to standard output; give a folder"
                    );
                }
                prepare_directory(path).context(flag)?;
            }
        }
    }
    Ok(to_stdout.is_some())
}

/// The folder holding `path`.
fn folder(path: &Path) -> &Path {
    match path.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent,
        _ => Path::new("."),
    }
}
