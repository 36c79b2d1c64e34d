//! Writing results: stdout, or a file written atomically (temporary file, then rename), so
//! an interrupted run never leaves a half-written output behind.

use std::io::Write;
use std::path::Path;

use anyhow::{Context, Result};

/// Writes `text` to stdout (`-`) or atomically to `path`.
pub fn write_text(path: &Path, text: &str) -> Result<()> {
    if path == Path::new("-") {
        let mut stdout = std::io::stdout().lock();
        stdout.write_all(text.as_bytes())?;
        stdout.flush()?;
        return Ok(());
    }
    write_atomically(path, text.as_bytes())
}

/// Writes `bytes` to a temporary file beside `path`, then renames it over `path`.
pub fn write_atomically(path: &Path, bytes: &[u8]) -> Result<()> {
    let directory = match path.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent,
        _ => Path::new("."),
    };
    let file_name = path
        .file_name()
        .with_context(|| format!("{}: not a file path", path.display()))?;
    let temporary = directory.join(format!(
        ".{}.{}.tmp",
        file_name.to_string_lossy(),
        std::process::id()
    ));
    std::fs::write(&temporary, bytes)
        .with_context(|| format!("cannot write {}", temporary.display()))?;
    std::fs::rename(&temporary, path).with_context(|| {
        let _ = std::fs::remove_file(&temporary);
        format!("cannot move the output into place at {}", path.display())
    })
}
