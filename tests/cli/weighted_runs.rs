//! `--absorption weighted` on `run` (report, JSON, shards, checkpoints) and sweeps that
//! vary only absorption (walked once and rescaled).

use super::scale_support::{assert_mentions, fail, json, s, succeed, without_timing, write_spec};

const MODEL: &str = "models/tissue-phantom-two-layer.json";

#[test]
fn a_weighted_run_says_so_in_text_and_json() {
    let text = succeed(&[
        "run",
        MODEL,
        "--photons",
        "800",
        "--absorption",
        "weighted",
        "--quiet",
    ]);
    assert_mentions(
        &text,
        &["absorption is weighted (implicit capture)", "roulette"],
    );
    let report = json(&succeed(&[
        "run",
        MODEL,
        "--photons",
        "800",
        "--absorption",
        "weighted",
        "--json",
        "-",
        "--quiet",
    ]));
    assert_eq!(report["absorption"], "weighted");
    assert_eq!(report["absorption_mode"], "weighted");
    let effective = report["effective_photons"].as_f64().unwrap();
    assert!(effective > 0.0 && effective < 800.0, "{effective}");
    let analog = json(&succeed(&[
        "run",
        MODEL,
        "--photons",
        "800",
        "--json",
        "-",
        "--quiet",
    ]));
    assert_eq!(analog["absorption_mode"], "analog");
    assert_eq!(analog["effective_photons"], 800.0);
}

#[test]
fn an_unknown_absorption_treatment_is_refused() {
    // A usage error (clap's exit status 2), naming the flag, the value and the choices.
    let output = super::scale_support::sojourn()
        .args(["run", MODEL, "--absorption", "implicit"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(2));
    assert!(output.stdout.is_empty());
    let error = String::from_utf8_lossy(&output.stderr);
    assert_mentions(&error, &["--absorption", "implicit", "analog", "weighted"]);
}

#[test]
fn weighted_shards_merge_to_the_unsplit_run_and_refuse_analog_ones() {
    let directory = tempfile::tempdir().unwrap();
    let run = |extra: &[&str], name: &str| {
        let path = directory.path().join(name);
        let mut args = vec![
            "run",
            MODEL,
            "--photons",
            "900",
            "--seed",
            "4",
            "--json",
            s(&path),
            "--quiet",
        ];
        args.extend(extra);
        succeed(&args);
        s(&path).to_string()
    };
    let weighted = ["--absorption", "weighted"];
    let whole = run(&weighted, "whole.json");
    let one = run(&[&weighted[..], &["--shard", "1/2"]].concat(), "one.json");
    let two = run(&[&weighted[..], &["--shard", "2/2"]].concat(), "two.json");
    let merged = json(&succeed(&["merge", &one, &two, "--json", "-"]));
    let whole = json(&std::fs::read_to_string(whole).unwrap());
    assert_eq!(without_timing(merged), without_timing(whole));
    let analog_two = run(&["--shard", "2/2"], "analog-two.json");
    let error = fail(&["merge", &one, &analog_two, "--json", "-"]);
    assert_mentions(&error, &["walk settings"]);
}

#[test]
fn an_absorption_only_sweep_is_walked_once_and_rescaled() {
    let directory = tempfile::tempdir().unwrap();
    let spec = write_spec(
        directory.path(),
        r#"{ "model": "model.json", "photons": 1500, "seed": 3,
             "parameters": [ { "path": "layers[1].albedo", "values": [0.999, 0.99, 1.0] } ] }"#,
    );
    let out = directory.path().join("out");
    let output = super::scale_support::sojourn()
        .args(["sweep", s(&spec), "--out", s(&out)])
        .output()
        .unwrap();
    assert!(output.status.success());
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_mentions(
        &stderr,
        &["differ only in absorption", "walked point 2 once"],
    );
    let rows: Vec<serde_json::Value> = std::fs::read_to_string(out.join("sweep.jsonl"))
        .unwrap()
        .lines()
        .map(json)
        .collect();
    assert_eq!(rows[0]["reweighted"], true);
    assert_eq!(rows[0]["absorption_mode"], "rescaled");
    assert_eq!(rows[2]["reweighted"], false);
    assert!(rows[0]["effective_photons"].as_f64().unwrap() > 0.0);
    // Less albedo, more absorption.
    let absorbed = |row: &serde_json::Value| row["absorbed"].as_f64().unwrap();
    assert!(absorbed(&rows[1]) > absorbed(&rows[0]) && absorbed(&rows[0]) > absorbed(&rows[2]));
    // A sweep that also varies an extinction is walked point by point, as before.
    let spec = write_spec(
        directory.path(),
        r#"{ "model": "model.json", "photons": 300, "seed": 3,
             "parameters": [ { "path": "layers[1].albedo", "values": [0.9, 1.0] },
                             { "path": "layers[1].extinction_coefficient", "values": [2, 3] } ],
             "combine": "zip" }"#,
    );
    let out = directory.path().join("mixed");
    succeed(&["sweep", s(&spec), "--out", s(&out), "--quiet"]);
    let table = std::fs::read_to_string(out.join("sweep.jsonl")).unwrap();
    assert!(table.lines().all(|l| json(l)["reweighted"] == false));
}

#[test]
fn a_rescaled_sweep_with_a_bad_path_fails_before_any_walk() {
    let directory = tempfile::tempdir().unwrap();
    let spec = write_spec(
        directory.path(),
        r#"{ "model": "model.json", "photons": 1000000000,
             "parameters": [ { "path": "layers[7].albedo", "values": [0.9, 1.0] } ] }"#,
    );
    let out = directory.path().join("out");
    let error = fail(&["sweep", s(&spec), "--out", s(&out), "--quiet"]);
    assert_mentions(&error, &["layers[7]"]);
    assert!(!out.join("sweep.csv").exists());
    let spec = write_spec(
        directory.path(),
        r#"{ "model": "model.json", "photons": 1000000000,
             "parameters": [ { "path": "layers[1].albedo", "values": [0.9, "high"] } ] }"#,
    );
    let error = fail(&["sweep", s(&spec), "--out", s(&out), "--quiet"]);
    assert_mentions(&error, &["albedo"]);
}

#[test]
fn a_sweep_spec_takes_the_absorption_treatment() {
    let directory = tempfile::tempdir().unwrap();
    let spec = write_spec(
        directory.path(),
        r#"{ "model": "model.json", "photons": 400, "seed": 3, "absorption": "weighted",
             "parameters": [ { "path": "layers[1].extinction_coefficient", "values": [2, 3] } ] }"#,
    );
    let out = directory.path().join("out");
    succeed(&["sweep", s(&spec), "--out", s(&out), "--quiet"]);
    let table = std::fs::read_to_string(out.join("sweep.jsonl")).unwrap();
    assert!(
        table
            .lines()
            .all(|l| json(l)["absorption_mode"] == "weighted")
    );
    let spec = write_spec(
        directory.path(),
        r#"{ "model": "model.json", "absorption": "implicit",
             "parameters": [ { "path": "layers[1].albedo", "values": [0.9] } ] }"#,
    );
    let error = fail(&["sweep", s(&spec), "--out", s(&directory.path().join("bad"))]);
    assert_mentions(&error, &["absorption", "implicit", "weighted"]);
}
