//! Writing a file so that readers (and a restarted run) see either the old content or the
//! whole new content, never a part: write a temporary file in the same directory, flush it
//! to disk, then rename it over the target (an atomic replacement on POSIX file systems).
//!
//! Only regular files are written this way. A destination that is a directory, a device
//! (`/dev/full`, `/dev/null`), a named pipe or a socket is refused rather than replaced by
//! a regular file; a symbolic link is followed, so the file it points to receives the new
//! content and the link stays. [`check_destination`] and [`prepare_directory`] run the same
//! checks before any work, so that an output that cannot be written is found before a long
//! run rather than after it.

use std::io::Write;
use std::path::{Path, PathBuf};

use thiserror::Error;

/// Most symbolic links followed from an output path to its file (the limit Linux applies
/// when it opens a path, `MAXSYMLINKS`).
pub const MAX_LINKS: usize = 40;

/// An output destination that cannot receive a file.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum DestinationError {
    /// The path (or the file a link points to) exists and is not a regular file.
    #[error(
        "{path}: is {kind}, not a regular file: outputs are written only to regular files \
         (or through a symbolic link to one)"
    )]
    NotAFile {
        /// The path as given.
        path: String,
        /// What it is ("a directory", "a character device", ...).
        kind: &'static str,
    },
    /// A folder output whose path is a file or a device.
    #[error("{path}: is {kind}, not a folder")]
    NotAFolder {
        /// The path as given.
        path: String,
        /// What it is ("a regular file", "a character device", ...).
        kind: &'static str,
    },
    /// More than [`MAX_LINKS`] symbolic links, or a loop of them.
    #[error("{path}: more than {MAX_LINKS} symbolic links (a loop?)")]
    TooManyLinks {
        /// The path as given.
        path: String,
    },
    /// The folder that would hold the file is missing or does not take new files.
    #[error("{path}: cannot create a file in {folder}: {cause}")]
    Unwritable {
        /// The path as given.
        path: String,
        /// The folder the file would be written in.
        folder: String,
        /// The operating-system error.
        cause: std::io::Error,
    },
    /// A symbolic link or a file's type cannot be read.
    #[error("{path}: cannot inspect the destination: {cause}")]
    Inspect {
        /// The path as given.
        path: String,
        /// The operating-system error.
        cause: std::io::Error,
    },
}

impl From<DestinationError> for std::io::Error {
    fn from(error: DestinationError) -> Self {
        let kind = match &error {
            DestinationError::Unwritable { cause, .. }
            | DestinationError::Inspect { cause, .. } => cause.kind(),
            _ => std::io::ErrorKind::InvalidInput,
        };
        std::io::Error::new(kind, error)
    }
}

/// What a file that is not a regular file is, for messages.
fn describe_kind(file_type: std::fs::FileType) -> &'static str {
    if file_type.is_dir() {
        return "a directory";
    }
    if file_type.is_file() {
        return "a regular file";
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if file_type.is_char_device() {
            return "a character device";
        }
        if file_type.is_block_device() {
            return "a block device";
        }
        if file_type.is_fifo() {
            return "a named pipe";
        }
        if file_type.is_socket() {
            return "a socket";
        }
    }
    "not a regular file"
}

/// The file a write to `path` lands in: `path` itself, or for a symbolic link the file it
/// points to (links followed up to [`MAX_LINKS`], relative links against their folder). The
/// file need not exist yet.
///
/// # Errors
/// [`DestinationError::NotAFile`] when the file exists and is not a regular file,
/// [`DestinationError::TooManyLinks`], [`DestinationError::Inspect`].
pub fn resolve_destination(path: &Path) -> Result<PathBuf, DestinationError> {
    let label = || path.display().to_string();
    let mut current = path.to_path_buf();
    for _ in 0..=MAX_LINKS {
        let metadata = match std::fs::symlink_metadata(&current) {
            Ok(metadata) => metadata,
            Err(error) if error.kind() == std::io::ErrorKind::NotFound => return Ok(current),
            Err(cause) => {
                return Err(DestinationError::Inspect {
                    path: label(),
                    cause,
                });
            }
        };
        let file_type = metadata.file_type();
        if file_type.is_file() {
            return Ok(current);
        }
        if !file_type.is_symlink() {
            return Err(DestinationError::NotAFile {
                path: label(),
                kind: describe_kind(file_type),
            });
        }
        let target = std::fs::read_link(&current).map_err(|cause| DestinationError::Inspect {
            path: label(),
            cause,
        })?;
        current = if target.is_absolute() {
            target
        } else {
            folder_of(&current).join(target)
        };
    }
    Err(DestinationError::TooManyLinks { path: label() })
}

/// The folder holding `path` (`.` for a bare file name).
fn folder_of(path: &Path) -> &Path {
    match path.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent,
        _ => Path::new("."),
    }
}

/// The temporary name used while `path` is being written: a hidden file beside it, tagged
/// with the process id so that concurrent writers never share one.
pub fn temporary_path(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    folder_of(path).join(format!(".{name}.{}.tmp", std::process::id()))
}

/// Whether `path` names a temporary file left by [`write_atomically`] (for example by a
/// process killed mid-write); such files can be ignored or removed.
pub fn is_temporary(path: &Path) -> bool {
    path.file_name()
        .map(|n| n.to_string_lossy())
        .is_some_and(|n| n.starts_with('.') && n.ends_with(".tmp"))
}

/// Checks, before any work, that [`write_atomically`] can write `path`: the destination
/// (after links) is a regular file or does not exist, and its folder takes a new file (a
/// temporary file is created there and removed at once). Returns the file that will be
/// written.
///
/// # Errors
/// [`DestinationError`] saying why the file cannot be written.
pub fn check_destination(path: &Path) -> Result<PathBuf, DestinationError> {
    let destination = resolve_destination(path)?;
    if destination.file_name().is_none() {
        return Err(DestinationError::NotAFile {
            path: path.display().to_string(),
            kind: "a folder path",
        });
    }
    let temporary = temporary_path(&destination);
    let probe = std::fs::OpenOptions::new()
        .write(true)
        .create_new(true)
        .open(&temporary);
    match probe {
        Ok(file) => {
            drop(file);
            let _ = std::fs::remove_file(&temporary);
            Ok(destination)
        }
        Err(cause) => Err(DestinationError::Unwritable {
            path: path.display().to_string(),
            folder: folder_of(&destination).display().to_string(),
            cause,
        }),
    }
}

/// Makes sure the folder `path` exists (creating it and its parents if missing) and takes
/// new files, before any work.
///
/// # Errors
/// [`DestinationError::NotAFolder`] when `path` is a file or a device,
/// [`DestinationError::Unwritable`] when it cannot be created or written in.
pub fn prepare_directory(path: &Path) -> Result<(), DestinationError> {
    let label = || path.display().to_string();
    match std::fs::metadata(path) {
        Ok(metadata) if !metadata.is_dir() => {
            return Err(DestinationError::NotAFolder {
                path: label(),
                kind: describe_kind(metadata.file_type()),
            });
        }
        Ok(_) => {}
        Err(_) => {
            std::fs::create_dir_all(path).map_err(|cause| DestinationError::Unwritable {
                path: label(),
                folder: label(),
                cause,
            })?;
        }
    }
    check_destination(&path.join("probe")).map(|_| ())
}

/// Writes `bytes` to `path` atomically; a symbolic link is followed and its target
/// replaced.
///
/// # Errors
/// [`DestinationError`] (as an I/O error) for a destination that is not a regular file;
/// any I/O error of creating, writing, syncing or renaming the temporary file. The
/// temporary file is removed on every failure.
pub fn write_atomically(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    let destination = resolve_destination(path)?;
    let temporary = temporary_path(&destination);
    let result = (|| {
        let mut file = std::fs::File::create(&temporary)?;
        file.write_all(bytes)?;
        file.sync_all()?;
        drop(file);
        std::fs::rename(&temporary, &destination)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&temporary);
    }
    result
}

#[cfg(test)]
mod tests {
    use super::*;

    fn names(directory: &Path) -> Vec<String> {
        let mut names: Vec<String> = std::fs::read_dir(directory)
            .unwrap()
            .map(|entry| entry.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        names
    }

    #[test]
    fn replaces_the_content_and_leaves_no_temporary() {
        let directory = tempfile::tempdir().unwrap();
        let path = directory.path().join("out.json");
        write_atomically(&path, b"first").unwrap();
        write_atomically(&path, b"second").unwrap();
        assert_eq!(std::fs::read(&path).unwrap(), b"second");
        assert_eq!(names(directory.path()), ["out.json"]);
        assert!(is_temporary(&temporary_path(&path)));
        assert!(!is_temporary(&path));
    }

    #[test]
    fn a_missing_directory_is_an_error() {
        let directory = tempfile::tempdir().unwrap();
        let path = directory.path().join("no/such/dir/out.json");
        assert!(write_atomically(&path, b"x").is_err());
        let error = check_destination(&path).unwrap_err();
        assert!(
            matches!(error, DestinationError::Unwritable { .. }),
            "{error}"
        );
    }

    #[cfg(unix)]
    #[test]
    fn links_are_written_through_and_kept() {
        let directory = tempfile::tempdir().unwrap();
        let target = directory.path().join("target.json");
        let link = directory.path().join("link.json");
        std::os::unix::fs::symlink("target.json", &link).unwrap();
        assert_eq!(check_destination(&link).unwrap(), target);
        write_atomically(&link, b"through").unwrap();
        assert!(
            std::fs::symlink_metadata(&link)
                .unwrap()
                .file_type()
                .is_symlink()
        );
        assert_eq!(std::fs::read(&target).unwrap(), b"through");
        assert_eq!(names(directory.path()), ["link.json", "target.json"]);
        let looped = directory.path().join("loop");
        std::os::unix::fs::symlink("loop", &looped).unwrap();
        let error = write_atomically(&looped, b"x").unwrap_err();
        assert!(error.to_string().contains("symbolic links"), "{error}");
    }

    #[cfg(unix)]
    #[test]
    fn devices_pipes_and_directories_are_refused_untouched() {
        let directory = tempfile::tempdir().unwrap();
        let error = check_destination(Path::new("/dev/null")).unwrap_err();
        assert!(error.to_string().contains("a character device"), "{error}");
        let error = write_atomically(directory.path(), b"x").unwrap_err();
        assert!(error.to_string().contains("is a directory"), "{error}");
        let pipe = directory.path().join("pipe");
        let made = std::process::Command::new("mkfifo").arg(&pipe).status();
        if made.is_ok_and(|status| status.success()) {
            let error = write_atomically(&pipe, b"x").unwrap_err();
            assert!(error.to_string().contains("a named pipe"), "{error}");
            let file_type = std::fs::symlink_metadata(&pipe).unwrap().file_type();
            assert!(!file_type.is_file());
        }
        let file = directory.path().join("file");
        std::fs::write(&file, b"x").unwrap();
        let error = prepare_directory(&file).unwrap_err();
        assert!(
            error.to_string().contains("a regular file, not a folder"),
            "{error}"
        );
        prepare_directory(&directory.path().join("new/figures")).unwrap();
        assert!(directory.path().join("new/figures").is_dir());
        assert_eq!(
            names(&directory.path().join("new/figures")),
            Vec::<String>::new()
        );
    }
}
