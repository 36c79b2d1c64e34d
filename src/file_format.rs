//! Layout versions of the files sojourn writes (shard files, checkpoints, sweep points):
//! the check every reader makes before parsing anything else.

use serde_json::Value;

/// Why a file of layout version `found` (at `pointer` in `value`) cannot be read by a
/// reader of version `expected`, if it cannot. Checked before anything else is parsed, so
/// that an old file is named as old rather than as damaged.
pub(crate) fn format_problem(
    value: &Value,
    pointer: &str,
    expected: u32,
    what: &str,
) -> Option<String> {
    let found = value.pointer(pointer)?.as_u64()?;
    if found == expected as u64 {
        return None;
    }
    let age = if found < expected as u64 {
        "an earlier sojourn wrote it (its tally layout is older)"
    } else {
        "a later sojourn wrote it"
    };
    Some(format!(
        "{what} format {found}, but this sojourn reads format {expected} only: {age}; \
         rerun it with this version"
    ))
}
