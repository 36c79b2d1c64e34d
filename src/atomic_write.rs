//! Writing a file so that readers (and a restarted run) see either the old content or the
//! whole new content, never a part: write a temporary file in the same directory, flush it
//! to disk, then rename it over the target (an atomic replacement on POSIX file systems).

use std::io::Write;
use std::path::{Path, PathBuf};

/// The temporary name used while `path` is being written: a hidden file beside it, tagged
/// with the process id so that concurrent writers never share one.
pub fn temporary_path(path: &Path) -> PathBuf {
    let directory = match path.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent,
        _ => Path::new("."),
    };
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    directory.join(format!(".{name}.{}.tmp", std::process::id()))
}

/// Whether `path` names a temporary file left by [`write_atomically`] (for example by a
/// process killed mid-write); such files can be ignored or removed.
pub fn is_temporary(path: &Path) -> bool {
    path.file_name()
        .map(|n| n.to_string_lossy())
        .is_some_and(|n| n.starts_with('.') && n.ends_with(".tmp"))
}

/// Writes `bytes` to `path` atomically.
///
/// # Errors
/// Any I/O error of creating, writing, syncing or renaming the temporary file; the
/// temporary file is removed on failure.
pub fn write_atomically(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    let temporary = temporary_path(path);
    let result = (|| {
        let mut file = std::fs::File::create(&temporary)?;
        file.write_all(bytes)?;
        file.sync_all()?;
        drop(file);
        std::fs::rename(&temporary, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&temporary);
    }
    result
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn replaces_the_content_and_leaves_no_temporary() {
        let directory = tempfile::tempdir().unwrap();
        let path = directory.path().join("out.json");
        write_atomically(&path, b"first").unwrap();
        write_atomically(&path, b"second").unwrap();
        assert_eq!(std::fs::read(&path).unwrap(), b"second");
        let names: Vec<_> = std::fs::read_dir(directory.path()).unwrap().collect();
        assert_eq!(names.len(), 1);
        assert!(is_temporary(&temporary_path(&path)));
        assert!(!is_temporary(&path));
    }

    #[test]
    fn a_missing_directory_is_an_error() {
        let directory = tempfile::tempdir().unwrap();
        let path = directory.path().join("no/such/dir/out.json");
        assert!(write_atomically(&path, b"x").is_err());
    }
}
