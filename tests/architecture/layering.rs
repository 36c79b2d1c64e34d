//! The library's modules depend on each other in one direction only: lowest layer first,
//!
//! ```text
//! units, fingerprint, atomic_write → opacity → medium → tally, star, import → diffusion
//!   → transport → simulation → analysis → shard, checkpoint → sweep, report
//! ```
//!
//! (the binary's `cli` sits on top of everything). A module may use modules of earlier
//! layers only; two modules of the same layer may not use each other. The test reads every
//! `crate::…` path (and `super::…` paths that climb to the crate root) outside comments and
//! test modules in `src/`, so a new upward dependency (a cycle in the making) fails here
//! with the file and line that adds it. DEVELOPERS.md explains the order.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

/// The library's top-level modules, lowest layer first.
const LAYERS: &[&[&str]] = &[
    &[
        "units",
        "fingerprint",
        "atomic_write",
        "file_format",
        "input",
    ],
    &["opacity"],
    &["medium"],
    &["tally", "star"],
    &["import"],
    &["diffusion"],
    &["transport"],
    &["simulation"],
    &["analysis"],
    &["shard", "checkpoint", "fit"],
    &["sweep", "report"],
];

/// Known exceptions to the order, `(from, to, why)`. Each must still be needed: the test
/// fails when one is not, so that it is removed.
const EXCEPTIONS: &[(&str, &str, &str)] = &[(
    "medium",
    "transport",
    "a layer's phase function is transport::PhaseFunction (a cycle: transport walks the \
     medium); the house plan puts the type in medium and its sampler in transport",
)];

fn layer_of(module: &str) -> Option<usize> {
    LAYERS.iter().position(|layer| layer.contains(&module))
}

/// A dependency found in the source: which module uses which, and where.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord)]
struct Use {
    from: String,
    to: String,
    at: String,
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).expect("src/ is readable") {
        let path = entry.expect("directory entry").path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// The module path of a file below `src/`: `src/a/b.rs` → [a, b], `src/a/mod.rs` → [a].
fn module_path(relative: &Path) -> Vec<String> {
    let mut parts: Vec<String> = relative
        .iter()
        .map(|p| p.to_string_lossy().into_owned())
        .collect();
    let last = parts.pop().expect("a file name");
    let stem = last.trim_end_matches(".rs");
    if stem != "mod" {
        parts.push(stem.to_string());
    }
    parts
}

/// The code of a file without comments and without its test module (`#[cfg(test)]`
/// followed by `mod tests`, at the end of the file by convention).
fn code_lines(text: &str) -> Vec<(usize, String)> {
    let lines: Vec<&str> = text.lines().collect();
    let mut out = Vec::new();
    for (index, line) in lines.iter().enumerate() {
        let trimmed = line.trim_start();
        if trimmed.starts_with("#[cfg(test)]")
            && lines[index + 1..]
                .iter()
                .find(|l| !l.trim().is_empty())
                .is_some_and(|l| l.trim_start().starts_with("mod tests"))
        {
            break;
        }
        let code = match line.find("//") {
            Some(at) => &line[..at],
            None => line,
        };
        out.push((index + 1, code.to_string()));
    }
    out
}

/// The first identifier at the start of `text`.
fn identifier(text: &str) -> &str {
    let end = text
        .find(|c: char| !(c.is_ascii_alphanumeric() || c == '_'))
        .unwrap_or(text.len());
    &text[..end]
}

/// Top-level modules named by `crate::x`, `crate::{x, y::z}` and `super::…` paths that
/// climb to the crate root from a module `depth` levels deep.
fn referenced_modules(code: &str, depth: usize) -> Vec<String> {
    let mut found = Vec::new();
    let mut rest = code;
    while let Some(at) = rest.find("crate::") {
        let before = rest[..at].chars().last();
        rest = &rest[at + "crate::".len()..];
        if before.is_some_and(|c| c.is_ascii_alphanumeric() || "_$:".contains(c)) {
            continue;
        }
        if let Some(group) = rest.strip_prefix('{') {
            let mut level = 0;
            let mut item_start = true;
            for (i, c) in group.char_indices() {
                match c {
                    '{' => level += 1,
                    '}' if level == 0 => break,
                    '}' => level -= 1,
                    ',' if level == 0 => {
                        item_start = true;
                        continue;
                    }
                    _ => {}
                }
                if item_start && level == 0 && !c.is_whitespace() {
                    found.push(identifier(&group[i..]).to_string());
                    item_start = false;
                }
            }
        } else {
            found.push(identifier(rest).to_string());
        }
    }
    let mut rest = code;
    while let Some(at) = rest.find("super::") {
        let before = rest[..at].chars().last();
        let mut climbed = 0;
        let mut tail = &rest[at..];
        while let Some(next) = tail.strip_prefix("super::") {
            climbed += 1;
            tail = next;
        }
        rest = tail;
        if before.is_some_and(|c| c.is_ascii_alphanumeric() || c == '_' || c == ':') {
            continue;
        }
        if climbed == depth {
            found.push(identifier(tail).to_string());
        }
    }
    found.retain(|m| !m.is_empty() && m != "self");
    found
}

fn library_uses() -> Vec<Use> {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    let mut uses = BTreeSet::new();
    for file in files {
        let relative = file.strip_prefix(&src).expect("below src/");
        let path = module_path(relative);
        // The crate root and the binary (main.rs, cli/) may use anything.
        if path.is_empty() || path[0] == "lib" || path[0] == "main" || path[0] == "cli" {
            continue;
        }
        let text = std::fs::read_to_string(&file).expect("source is readable");
        for (line, code) in code_lines(&text) {
            for module in referenced_modules(&code, path.len()) {
                if module != path[0] {
                    uses.insert(Use {
                        from: path[0].clone(),
                        to: module,
                        at: format!("src/{}:{line}", relative.display()),
                    });
                }
            }
        }
    }
    uses.into_iter().collect()
}

#[test]
fn the_scanner_reads_paths_groups_and_super_chains() {
    assert_eq!(
        referenced_modules("use crate::medium::{Layer, Medium};", 2),
        ["medium"]
    );
    assert_eq!(
        referenced_modules("use crate::{tally::Tally, units};", 1),
        ["tally", "units"]
    );
    assert_eq!(
        referenced_modules("let x = crate::units::C; y::crate::z;", 1),
        ["units"]
    );
    assert_eq!(
        referenced_modules("use super::super::tally::X;", 2),
        ["tally"]
    );
    assert!(referenced_modules("use super::spec::ChartSpec;", 3).is_empty());
    let text =
        "use crate::a::X;\n// use crate::b::Y;\n#[cfg(test)]\nmod tests {\n use crate::c;\n}\n";
    let kept: Vec<String> = code_lines(text).into_iter().map(|(_, c)| c).collect();
    assert_eq!(kept, ["use crate::a::X;", ""]);
    assert_eq!(
        module_path(Path::new("report/plots/mod.rs")),
        ["report", "plots"]
    );
    assert_eq!(module_path(Path::new("shard.rs")), ["shard"]);
}

#[test]
fn every_library_module_sits_in_a_layer() {
    let lib = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("src/lib.rs"))
        .expect("src/lib.rs is readable");
    let declared: Vec<&str> = lib
        .lines()
        .filter_map(|l| l.trim().strip_prefix("pub mod "))
        .map(|m| m.trim_end_matches(';'))
        .collect();
    assert!(declared.len() >= 10, "found {declared:?} in src/lib.rs");
    for module in declared {
        assert!(
            layer_of(module).is_some(),
            "module `{module}` is in no layer: add it to LAYERS in tests/architecture/layering.rs \
             and to the order in DEVELOPERS.md"
        );
    }
}

#[test]
fn dependencies_point_down_the_layers_only() {
    let uses = library_uses();
    assert!(
        uses.iter()
            .any(|u| u.from == "analysis" && u.to == "diffusion"),
        "the scanner found no analysis → diffusion use; it is broken"
    );
    let mut wrong = Vec::new();
    for u in &uses {
        let (Some(from), Some(to)) = (layer_of(&u.from), layer_of(&u.to)) else {
            wrong.push(format!(
                "{}: `{}` uses unknown module `{}`",
                u.at, u.from, u.to
            ));
            continue;
        };
        let excepted = EXCEPTIONS
            .iter()
            .any(|(f, t, _)| *f == u.from && *t == u.to);
        if to >= from && !excepted {
            wrong.push(format!(
                "{}: `{}` (layer {from}) uses `{}` (layer {to}): a module may use only lower layers",
                u.at, u.from, u.to
            ));
        }
    }
    assert!(
        wrong.is_empty(),
        "upward dependencies:\n{}",
        wrong.join("\n")
    );
    for (from, to, why) in EXCEPTIONS {
        assert!(
            uses.iter().any(|u| u.from == *from && u.to == *to),
            "the exception {from} → {to} ({why}) is no longer needed: remove it"
        );
    }
}

#[test]
fn formatting_and_scale_out_stay_apart() {
    // Sweeps, shards and checkpoints carry tallies and analysis, never reports.
    let uses = library_uses();
    for u in &uses {
        assert!(
            !(["sweep", "shard", "checkpoint"].contains(&u.from.as_str()) && u.to == "report"),
            "{}: `{}` uses `report`",
            u.at,
            u.from
        );
    }
}
