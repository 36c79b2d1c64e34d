//! Arguments of `star` and `import` for stellar physics: `--opacity-table FILE` (read the
//! table, and write its path into the model file relative to the model file's folder, as the
//! loader reads it) and `--energy LAWS`.

use std::path::{Component, Path, PathBuf};
use std::sync::Arc;

use anyhow::{Context, Result};

use sojourn::opacity::{OpacityTable, OutsidePolicy};
use sojourn::star::builder::TableChoice;
use sojourn::star::energy::EnergyLaws;

/// `--energy`: energy-generation laws, or none.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct EnergyChoice(pub Option<EnergyLaws>);

/// Parses `--energy` (`pp`, `cno`, `pp+cno`, `none`).
pub fn energy(text: &str) -> Result<EnergyChoice, String> {
    EnergyLaws::parse_short(text).map(EnergyChoice)
}

/// Reads `table` and returns it with the path to write into the model file `model`.
pub fn table_for_model(table: &Path, model: &Path, clamp: bool) -> Result<TableChoice> {
    let read = OpacityTable::read(table)?;
    let file = relative_path(table, model)
        .with_context(|| format!("cannot locate {} from {}", table.display(), model.display()))?;
    Ok(TableChoice {
        file,
        table: Arc::new(read),
        outside: if clamp {
            OutsidePolicy::Clamp
        } else {
            OutsidePolicy::Refuse
        },
    })
}

/// The path of `target` relative to the folder of `model` (with `/` separators), or
/// `target` made absolute where no relative path exists.
fn relative_path(target: &Path, model: &Path) -> Result<String> {
    let target = std::fs::canonicalize(target)?;
    let folder = match model.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let folder = std::fs::canonicalize(&folder)
        .with_context(|| format!("the folder {} does not exist", folder.display()))?;
    let (from, to): (Vec<Component>, Vec<Component>) =
        (folder.components().collect(), target.components().collect());
    let common = from.iter().zip(&to).take_while(|(a, b)| a == b).count();
    if common == 0 {
        return Ok(target.display().to_string());
    }
    let mut parts: Vec<String> = vec!["..".to_string(); from.len() - common];
    parts.extend(
        to[common..]
            .iter()
            .map(|c| c.as_os_str().to_string_lossy().into_owned()),
    );
    Ok(parts.join("/"))
}
