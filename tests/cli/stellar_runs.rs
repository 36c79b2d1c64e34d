//! `sojourn run` on stellar models: the energy-generation source, `--stop-at convective-base`,
//! the stellar keys of the JSON report, and models whose opacity table is bad or too small.

use super::scale_support::{fail, sojourn};
use serde_json::Value;

/// A copy of the Sun-like demo with the demo table and the energy-generation source, in a
/// temporary folder beside a copy of the table.
fn energy_source_model(directory: &std::path::Path) -> std::path::PathBuf {
    std::fs::create_dir_all(directory.join("tables")).unwrap();
    std::fs::copy(
        "models/tables/demo-opacity-bump.csv",
        directory.join("tables/demo-opacity-bump.csv"),
    )
    .unwrap();
    let text = std::fs::read_to_string("models/veyra-n3-demo-table.json").unwrap();
    let mut model: Value = serde_json::from_str(&text).unwrap();
    model["source"] = serde_json::json!({ "kind": "energy_generation" });
    let path = directory.join("veyra-energy.json");
    std::fs::write(&path, serde_json::to_string(&model).unwrap()).unwrap();
    path
}

#[test]
fn run_stops_at_the_convective_base_and_reports_the_stellar_keys() {
    let directory = tempfile::tempdir().unwrap();
    let model = energy_source_model(directory.path());
    let output = sojourn()
        .arg("run")
        .arg(&model)
        .args([
            "--photons",
            "300",
            "--stop-at",
            "convective-base",
            "--json",
            "-",
        ])
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let report: Value = serde_json::from_slice(&output.stdout).unwrap();
    for path in [
        "/luminosity_erg_s",
        "/diffusion/luminosity_weighted_time_s",
        "/diffusion/energy_content_time_s",
        "/diffusion/time_to_convective_base_s",
        "/stop_at/radius_cm",
        "/stop_at/convective_crossing_time_s",
        "/comparison/time_ratio",
    ] {
        let value = report
            .pointer(path)
            .unwrap_or_else(|| panic!("missing {path}"));
        assert!(value.is_number(), "{path} = {value}");
    }
    assert!(report["zones"].as_array().unwrap().len() >= 2);
    // The walk ends at the base: the model's size is the base radius.
    let base = report["stop_at"]["radius_cm"].as_f64().unwrap();
    assert_eq!(report["model"]["size_cm"].as_f64().unwrap(), base);
    assert!(base < 0.95 * report["stop_at"]["surface_radius_cm"].as_f64().unwrap());
    // 300 photons: the mean agrees with the luminosity-weighted time to the base within
    // 5σ (≈ 4 % per σ).
    let ratio = report["comparison"]["time_ratio"].as_f64().unwrap();
    let sigma = report["comparison"]["time_ratio_stderr"].as_f64().unwrap();
    assert!((ratio - 1.0).abs() < 5.0 * sigma, "{ratio} ± {sigma}");
    assert!(
        report["notes"]
            .as_array()
            .unwrap()
            .iter()
            .any(|n| n.as_str().unwrap().contains("the walk stops at"))
    );
}

#[test]
fn stop_at_needs_an_outer_convective_zone_and_no_shards() {
    // No energy generation in a plain model; a radiative grey star has no convective zone;
    // Veyra with power-law opacity is convective throughout.
    let stderr = fail(&[
        "run",
        "models/ember-two-zone.json",
        "--stop-at",
        "convective-base",
    ]);
    assert!(stderr.contains("needs a stellar model"), "{stderr}");
    let stderr = fail(&[
        "run",
        "models/test-polytrope-n3-tau50.json",
        "--stop-at",
        "convective-base",
    ]);
    assert!(stderr.contains("no outer convective zone"), "{stderr}");
    let stderr = fail(&[
        "run",
        "models/veyra-n3-sun-like.json",
        "--stop-at",
        "convective-base",
    ]);
    assert!(stderr.contains("the whole model is convective"), "{stderr}");
    let output = sojourn()
        .args([
            "run",
            "models/veyra-n3-demo-table.json",
            "--stop-at",
            "convective-base",
        ])
        .args(["--shard", "1/2", "--json", "x.json"])
        .output()
        .unwrap();
    assert!(!output.status.success());
    assert!(String::from_utf8_lossy(&output.stderr).contains("cannot be used with"));
}

#[test]
fn an_energy_source_needs_energy_generation() {
    let directory = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string("models/ember-two-zone.json").unwrap();
    let mut model: Value = serde_json::from_str(&text).unwrap();
    model["source"] = serde_json::json!({ "kind": "energy_generation" });
    let path = directory.path().join("ember-energy.json");
    std::fs::write(&path, serde_json::to_string(&model).unwrap()).unwrap();
    let stderr = fail(&["run", path.to_str().unwrap(), "--photons", "10"]);
    assert!(
        stderr.contains("ember-energy.json: source.kind"),
        "{stderr}"
    );
    assert!(stderr.contains("energy_generation"), "{stderr}");
}

#[test]
fn bad_opacity_tables_in_a_model_name_the_model_the_table_the_line_and_the_value() {
    let directory = tempfile::tempdir().unwrap();
    let model = energy_source_model(directory.path());
    let table = directory.path().join("tables/demo-opacity-bump.csv");
    let good = std::fs::read_to_string(&table).unwrap();
    let header = good
        .lines()
        .position(|l| l.starts_with("temperature_k"))
        .unwrap();
    let line = good.lines().nth(header + 3).unwrap().to_string();
    let fields: Vec<&str> = line.split(',').collect();
    let number = header + 4; // 1-based line of that row
    let cases = [
        (
            format!("{},{},-1", fields[0], fields[1]),
            "-1: expected an opacity",
        ),
        (
            format!("{},{},x", fields[0], fields[1]),
            "\"x\" is not a number",
        ),
    ];
    for (replacement, expected) in cases {
        std::fs::write(&table, good.replacen(&line, &replacement, 1)).unwrap();
        let stderr = fail(&["profile", model.to_str().unwrap()]);
        for needle in [
            "veyra-energy.json",
            "layers[0].profile.opacity_table",
            "demo-opacity-bump.csv",
            &format!("line {number}"),
            expected,
        ] {
            assert!(stderr.contains(needle), "{needle:?} missing from {stderr}");
        }
    }
}
