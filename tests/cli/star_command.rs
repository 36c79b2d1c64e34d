//! `sojourn star`: the flags of the issue as written, the model file it writes, and errors.

use super::scale_support::sojourn;
use serde_json::Value;

#[test]
fn star_writes_a_model_that_loads_and_profiles() {
    let directory = tempfile::tempdir().unwrap();
    let out = directory.path().join("my-star.json");
    let output = sojourn()
        .args([
            "star",
            "--polytrope",
            "3",
            "--mass",
            "1.0",
            "--radius",
            "1.0",
            "--hydrogen",
            "0.70",
            "--metals",
            "0.02",
            "--out",
        ])
        .arg(&out)
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let stdout = String::from_utf8(output.stdout).unwrap();
    assert!(stdout.contains("central density 76.39 g/cm³"), "{stdout}");
    // Written atomically: only the model is left in the directory.
    let names: Vec<_> = std::fs::read_dir(directory.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(names.len(), 1, "{names:?}");
    let model: Value = serde_json::from_str(&std::fs::read_to_string(&out).unwrap()).unwrap();
    assert_eq!(model["geometry"], "sphere");
    assert_eq!(model["length_unit"], "solar_radius");
    let profile = &model["layers"][0]["profile"];
    assert_eq!(profile["radius"].as_array().unwrap().len(), 400);
    assert_eq!(profile["hydrogen"], 0.7);
    assert_eq!(profile["opacity_law"]["kind"], "sum");
    // The model runs through `sojourn profile`.
    let report = sojourn()
        .args(["profile", "--json", "-"])
        .arg(&out)
        .output()
        .unwrap();
    assert!(report.status.success());
    let report: Value = serde_json::from_slice(&report.stdout).unwrap();
    // ρc of the n = 3 Sun: 54.1825 × 3M☉/(4πR☉³) = 76.385 g/cm³ (Chandrasekhar 1939).
    let rho_c = report["central_density_g_cm3"].as_f64().unwrap();
    assert!((rho_c / 76.385 - 1.0).abs() < 1e-4, "{rho_c}");
}

#[test]
fn star_options_eddington_opacity_rows_and_table() {
    let directory = tempfile::tempdir().unwrap();
    let out = directory.path().join("heavy.json");
    let table = directory.path().join("heavy.csv");
    let output = sojourn()
        .args([
            "star",
            "--polytrope",
            "3",
            "--mass",
            "10",
            "--radius",
            "5",
            "--eddington",
            "--opacity",
            "es",
            "--rows",
            "120",
            "--tolerance",
            "0.02",
            "--name",
            "Heavy test",
            "--out",
        ])
        .arg(&out)
        .arg("--table")
        .arg(&table)
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let model: Value = serde_json::from_str(&std::fs::read_to_string(&out).unwrap()).unwrap();
    assert_eq!(model["name"], "Heavy test");
    assert_eq!(model["layers"][0]["profile"]["tolerance"], 0.02);
    assert_eq!(
        model["layers"][0]["profile"]["opacity_law"]["kind"],
        "electron_scattering"
    );
    let csv = std::fs::read_to_string(&table).unwrap();
    assert!(csv.starts_with("radius_cm,density_g_cm3,temperature_k,hydrogen,metals\n"));
    assert_eq!(csv.lines().count(), 121);
    // Eddington's β for 10 M☉ is below 1 and printed.
    let stdout = String::from_utf8(output.stdout).unwrap();
    assert!(!stdout.contains("beta = 1.00000"), "{stdout}");
}

#[test]
fn impossible_stars_are_refused_without_writing() {
    let directory = tempfile::tempdir().unwrap();
    let out = directory.path().join("bad.json");
    for (args, expected) in [
        (vec!["--polytrope", "5"], "no finite surface"),
        (vec!["--polytrope", "1.5", "--eddington"], "index 3"),
        (
            vec!["--polytrope", "3", "--metals", "0.5", "--hydrogen", "0.7"],
            "X + Z <= 1",
        ),
        (
            vec!["--polytrope", "3", "--opacity", "thomson"],
            "expected es",
        ),
    ] {
        let output = sojourn()
            .arg("star")
            .args(&args)
            .args(["--mass", "1", "--radius", "1", "--out"])
            .arg(&out)
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert!(!output.status.success(), "{args:?} accepted");
        assert!(stderr.contains(expected), "{args:?}: {stderr}");
        assert!(!stderr.contains("panicked"));
        assert!(!out.exists());
    }
}
