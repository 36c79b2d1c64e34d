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
    assert_eq!(model["length_unit"], "R_sun");
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
    assert!(csv.starts_with(
        "radius_cm,density_g_cm3,temperature_k,hydrogen,metals,energy_generation_erg_g_s\n"
    ));
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

#[test]
fn star_with_an_opacity_table_energy_and_radiation_pressure_by_mass() {
    let directory = tempfile::tempdir().unwrap();
    let out = directory.path().join("stars").join("heavy.json");
    std::fs::create_dir(directory.path().join("stars")).unwrap();
    let table = std::fs::canonicalize("models/tables/demo-opacity-bump.csv").unwrap();
    // 20 M☉, n = 3: Eddington's quartic gives 1 − β ≈ 13 % > 1 %, so radiation pressure is
    // included without asking; the table is referred to relative to the model file.
    let output = sojourn()
        .args([
            "star",
            "--polytrope",
            "3",
            "--mass",
            "20",
            "--radius",
            "6",
            "--rows",
            "150",
        ])
        .arg("--opacity-table")
        .arg(&table)
        .args(["--energy-source", "--out"])
        .arg(&out)
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&output.stdout);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    assert!(stdout.contains("radiation pressure included"), "{stdout}");
    assert!(stdout.contains("luminosity"), "{stdout}");
    let model: Value = serde_json::from_str(&std::fs::read_to_string(&out).unwrap()).unwrap();
    let profile = &model["layers"][0]["profile"];
    let written = profile["opacity_table"].as_str().unwrap();
    assert!(
        written.starts_with("../") && written.ends_with("demo-opacity-bump.csv"),
        "{written}"
    );
    assert!(directory.path().join("stars").join(written).exists());
    assert_eq!(profile["energy_generation"].as_array().unwrap().len(), 150);
    assert_eq!(model["source"]["kind"], "energy_generation");
    assert!(model["name"].as_str().unwrap().contains("Eddington"));
    // n = 1.5 at 20 M☉: ideal gas, and a warning on stderr.
    let soft = directory.path().join("soft.json");
    let output = sojourn()
        .args([
            "star",
            "--polytrope",
            "1.5",
            "--mass",
            "20",
            "--radius",
            "6",
            "--rows",
            "50",
        ])
        .args(["--energy", "none", "--out"])
        .arg(&soft)
        .output()
        .unwrap();
    assert!(output.status.success());
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        stderr.contains("warning: radiation pressure is not included"),
        "{stderr}"
    );
    let model: Value = serde_json::from_str(&std::fs::read_to_string(&soft).unwrap()).unwrap();
    assert!(model["layers"][0]["profile"]["energy_generation"].is_null());
    // --ideal-gas keeps ideal gas and warns too; --eddington and --ideal-gas conflict.
    let output = sojourn()
        .args([
            "star",
            "--polytrope",
            "3",
            "--mass",
            "20",
            "--radius",
            "6",
            "--ideal-gas",
        ])
        .args(["--rows", "50", "--out"])
        .arg(&soft)
        .output()
        .unwrap();
    assert!(output.status.success());
    assert!(
        String::from_utf8_lossy(&output.stderr).contains("warning: radiation pressure left out")
    );
    let output = sojourn()
        .args(["star", "--polytrope", "3", "--mass", "1", "--radius", "1"])
        .args(["--ideal-gas", "--eddington", "--out"])
        .arg(&soft)
        .output()
        .unwrap();
    assert!(!output.status.success());
}

#[test]
fn a_missing_or_bad_opacity_table_is_refused_without_writing() {
    let directory = tempfile::tempdir().unwrap();
    let out = directory.path().join("star.json");
    let bad = directory.path().join("bad.csv");
    std::fs::write(
        &bad,
        "temperature_k,density_g_cm3,opacity_cm2_g\n1e4,1e-8,1\n1e4,1e-6,1\n1e8,1e-8,1\n1e8,1e-6,nan\n",
    )
    .unwrap();
    for (table, expected) in [
        (
            directory.path().join("missing.csv"),
            "missing.csv: cannot read",
        ),
        (bad.clone(), "bad.csv: line 5, column 'opacity_cm2_g': NaN"),
    ] {
        let output = sojourn()
            .args(["star", "--polytrope", "3", "--mass", "1", "--radius", "1"])
            .arg("--opacity-table")
            .arg(&table)
            .arg("--out")
            .arg(&out)
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(1), "{stderr}");
        assert!(
            stderr.contains(expected),
            "{expected:?} missing from {stderr}"
        );
        assert!(!out.exists());
    }
}
