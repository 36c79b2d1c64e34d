//! `sojourn run`: the report, its JSON keys, and thread-count independence.

use assert_cmd::Command;
use serde_json::Value;

fn sojourn() -> Command {
    Command::cargo_bin("sojourn").expect("binary built")
}

fn run_json(args: &[&str]) -> Value {
    let output = sojourn().args(args).args(["--json", "-"]).output().unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&output.stdout).expect("stdout carries only JSON")
}

/// The JSON report without its wall-clock fields.
fn without_timing(mut report: Value) -> Value {
    report.as_object_mut().unwrap().remove("elapsed_s");
    report
}

#[test]
fn demo_model_runs_and_prints_the_report() {
    let output = sojourn()
        .args(["run", "--photons", "2000"])
        .output()
        .unwrap();
    assert!(output.status.success());
    let text = String::from_utf8(output.stdout).unwrap();
    for expected in [
        "Ember",
        "escaped",
        "rule of thumb",
        "extrapolated",
        "radiant energy",
    ] {
        assert!(
            text.contains(expected),
            "report lacks {expected:?}:\n{text}"
        );
    }
}

#[test]
fn json_report_has_the_documented_keys() {
    let report = run_json(&["run", "models/test-sphere-tau20.json", "--photons", "3000"]);
    for path in [
        "/photons",
        "/seed",
        "/optical_depth",
        "/outcome/escaped",
        "/outcome/absorbed",
        "/outcome/censored",
        "/escape_time/mean_s",
        "/escape_time/stderr_s",
        "/escape_time/median_s",
        "/escape_time/p05_s",
        "/escape_time/p95_s",
        "/scatterings/mean",
        "/scatterings/stderr",
        "/diffusion/naive_scatterings",
        "/diffusion/naive_time_s",
        "/diffusion/mean_time_s",
        "/diffusion/mean_time_extrapolated_s",
        "/comparison/time_ratio",
        "/comparison/time_ratio_stderr",
        "/comparison/ks_distance",
        "/elapsed_s",
    ] {
        let value = report
            .pointer(path)
            .unwrap_or_else(|| panic!("missing {path}"));
        assert!(value.is_number(), "{path} = {value}");
    }
    assert!(report.pointer("/outcome/reflected").unwrap().is_null());
    assert_eq!(report["photons"], 3000);
    assert_eq!(report["geometry"], "sphere");
    assert_eq!(report["optical_depth"], 20.0);
}

#[test]
fn same_seed_gives_identical_json_for_one_and_two_threads() {
    let base = [
        "run",
        "models/diffuser-three-layer.json",
        "--photons",
        "4000",
        "--seed",
        "5",
    ];
    let one = run_json(&[&base[..], &["--threads", "1"]].concat());
    let two = run_json(&[&base[..], &["--threads", "2"]].concat());
    assert_eq!(without_timing(one), without_timing(two));
}

#[test]
fn json_file_is_written_and_text_still_printed() {
    let directory = tempfile::tempdir().unwrap();
    let path = directory.path().join("report.json");
    let output = sojourn()
        .args(["run", "--photons", "500", "--json"])
        .arg(&path)
        .output()
        .unwrap();
    assert!(output.status.success());
    assert!(String::from_utf8_lossy(&output.stdout).contains("Outcome"));
    let report: Value = serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    assert_eq!(report["photons"], 500);
}
