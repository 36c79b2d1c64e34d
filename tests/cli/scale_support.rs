//! Helpers shared by the command-line tests (the binary, running it, reading its JSON).

use std::path::{Path, PathBuf};
use std::process::Output;

use assert_cmd::Command;
use serde_json::Value;

/// The `sojourn` binary.
pub fn sojourn() -> Command {
    Command::cargo_bin("sojourn").expect("binary built")
}

/// Runs `sojourn ARGS`, asserts success, returns stdout.
pub fn succeed(args: &[&str]) -> String {
    let output = sojourn().args(args).output().unwrap();
    assert!(
        output.status.success(),
        "sojourn {args:?} failed:\n{}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).unwrap()
}

/// Runs `sojourn ARGS`, asserts exit status 1 with nothing on stdout and no panic, returns
/// stderr.
pub fn fail(args: &[&str]) -> String {
    let output: Output = sojourn().args(args).output().unwrap();
    let stderr = String::from_utf8_lossy(&output.stderr).to_string();
    assert_eq!(output.status.code(), Some(1), "sojourn {args:?}: {stderr}");
    assert!(
        output.stdout.is_empty(),
        "stdout: {}",
        String::from_utf8_lossy(&output.stdout)
    );
    assert!(!stderr.contains("panicked"), "{stderr}");
    stderr
}

/// Asserts that every needle occurs in `text`.
pub fn assert_mentions(text: &str, needles: &[&str]) {
    for needle in needles {
        assert!(text.contains(needle), "{needle:?} missing from: {text}");
    }
}

/// A JSON report without its wall-clock field.
pub fn without_timing(mut report: Value) -> Value {
    report.as_object_mut().unwrap().remove("elapsed_s");
    report
}

/// Parses JSON text.
pub fn json(text: &str) -> Value {
    serde_json::from_str(text).expect("valid JSON")
}

/// A path as `&str`.
pub fn s(path: &Path) -> &str {
    path.to_str().expect("UTF-8 temporary path")
}

/// A layered test slab in cm: thin coat over a bulk, absorbing a little.
pub const SLAB_MODEL: &str = r#"{
  "name": "test slab",
  "geometry": "slab",
  "layers": [
    { "thickness": 0.1, "extinction_coefficient": 10, "albedo": 0.95,
      "phase": { "kind": "henyey_greenstein", "g": 0.5 } },
    { "thickness": 1.0, "extinction_coefficient": 3, "albedo": 1.0 }
  ]
}"#;

/// Writes `model.json` (the test slab) and `spec.json` with `spec` into `directory`;
/// returns the spec's path.
pub fn write_spec(directory: &Path, spec: &str) -> PathBuf {
    std::fs::write(directory.join("model.json"), SLAB_MODEL).unwrap();
    let path = directory.join("spec.json");
    std::fs::write(&path, spec).unwrap();
    path
}

/// A 6-point grid sweep (3 optical thicknesses × 2 albedos) of the test slab.
pub const SIX_POINT_SPEC: &str = r#"{
  "model": "model.json",
  "photons": 1500,
  "seed": 11,
  "parameters": [
    { "path": "layers[1].extinction_coefficient", "values": [1, 3, 9] },
    { "path": "layers[1].albedo", "values": [1.0, 0.9] }
  ],
  "combine": "grid"
}"#;
