//! `sojourn profile`: text, JSON keys and CSV of the demo stars.

use super::scale_support::sojourn;
use serde_json::Value;

fn profile_json(model: &str) -> Value {
    let output = sojourn()
        .args(["profile", model, "--json", "-"])
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&output.stdout).expect("stdout carries only JSON")
}

#[test]
fn json_has_the_required_keys() {
    let report = profile_json("models/veyra-n3-sun-like.json");
    for path in [
        "/optical_depth",
        "/photosphere_radius_cm",
        "/central_density_g_cm3",
        "/mean_density_g_cm3",
        "/diffusion/naive_time_s",
        "/diffusion/mean_time_s",
        "/diffusion/mean_time_extrapolated_s",
        "/profile/tau_error_relative",
        "/profile/time_error_relative",
        "/time_budget/radius_50_percent_cm",
        "/diffusion/escape_probability",
        "/diffusion/escape_time/mean_s",
        "/diffusion/escape_time/median_s",
        "/diffusion/escape_time/p05_s",
        "/diffusion/escape_time/p95_s",
        "/diffusion/decay_rate_per_s",
    ] {
        let value = report
            .pointer(path)
            .unwrap_or_else(|| panic!("missing {path}"));
        assert!(value.is_number(), "{path} = {value}");
    }
    let shells = report["shells"].as_array().unwrap();
    assert!(shells.len() > 1000);
    for key in [
        "radius_cm",
        "mean_free_path_cm",
        "tau_from_surface",
        "time_share",
        "density_g_cm3",
        "temperature_k",
        "opacity_cm2_g",
        "scattering_fraction",
        "cumulative_time_s",
    ] {
        assert!(shells[0][key].is_number(), "shells[0].{key}");
    }
    assert!(report["profile"]["tau_error_relative"].as_f64().unwrap() < 1e-3);
    // The diffusion solver from the centre: a conservative sphere lets everything out, and
    // its quantiles are ordered around the median.
    let d = &report["diffusion"];
    assert!((d["escape_probability"].as_f64().unwrap() - 1.0).abs() < 1e-9);
    let e = &d["escape_time"];
    let (p05, median, p95) = (
        e["p05_s"].as_f64().unwrap(),
        e["median_s"].as_f64().unwrap(),
        e["p95_s"].as_f64().unwrap(),
    );
    assert!(0.0 < p05 && p05 < median && median < p95);
    let shares: f64 = shells
        .iter()
        .map(|s| s["time_share"].as_f64().unwrap())
        .sum();
    assert!((shares - 1.0).abs() < 1e-9);
    // The outermost shell is at the surface: τ from the surface 0.
    assert_eq!(shells.last().unwrap()["tau_from_surface"], 0.0);
    assert!(
        report["notes"]
            .as_array()
            .unwrap()
            .iter()
            .any(|n| n.as_str().unwrap().contains("albedo 1"))
    );
}

#[test]
fn text_report_leads_with_the_time_budget() {
    let output = sojourn()
        .args(["profile", "models/tamsin-n1.5-low-mass.json", "--rows", "8"])
        .output()
        .unwrap();
    assert!(output.status.success());
    let text = String::from_utf8(output.stdout).unwrap();
    for expected in [
        "Tamsin",
        "photosphere (τ = 2/3)",
        "rule of thumb",
        "Time budget",
        "half inside",
        "0.875–1.000",
        "sub-shells",
        "surface cut",
    ] {
        assert!(text.contains(expected), "{expected:?} missing:\n{text}");
    }
}

#[test]
fn csv_has_one_line_per_shell_and_plain_models_work() {
    let directory = tempfile::tempdir().unwrap();
    let csv = directory.path().join("ember.csv");
    let output = sojourn()
        .args(["profile", "models/ember-two-zone.json", "--csv"])
        .arg(&csv)
        .output()
        .unwrap();
    assert!(output.status.success());
    assert!(String::from_utf8_lossy(&output.stdout).contains("Time budget"));
    let text = std::fs::read_to_string(&csv).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.len(), 3, "header + two shells");
    assert!(lines[0].starts_with("index,layer,inner_radius_cm,radius_cm,"));
    assert!(lines[1].starts_with("0,opaque core,"));
    // Ember: core 300 per R☉ to 0.3 R☉, envelope 3 per R☉: T = (R☉/c)(300·0.09/2 +
    // 3·0.91/2) in units where lengths are R☉ (Redner 2001, A Guide to First-Passage Processes).
    let report = profile_json("models/ember-two-zone.json");
    let expected = 6.957e10 * (300.0 * 0.09 / 2.0 + 3.0 * 0.91 / 2.0) / 2.997_924_58e10;
    let mean = report["diffusion"]["mean_time_s"].as_f64().unwrap();
    assert!(
        (mean / expected - 1.0).abs() < 1e-12,
        "{mean} vs {expected}"
    );
    assert!(report["central_density_g_cm3"].is_null());
    assert!(report["profile"].is_null());
}

#[test]
fn slabs_and_double_stdout_are_refused() {
    let output = sojourn()
        .args(["profile", "models/diffuser-three-layer.json"])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&output.stderr).contains("describes spheres"));
    let output = sojourn()
        .args([
            "profile",
            "models/ember-two-zone.json",
            "--json",
            "-",
            "--csv",
            "-",
        ])
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    assert!(output.stdout.is_empty());
}

#[test]
fn tolerance_override_changes_the_representation() {
    let shells = |extra: &[&str]| {
        let output = sojourn()
            .args(["profile", "models/tamsin-n1.5-low-mass.json", "--json", "-"])
            .args(extra)
            .output()
            .unwrap();
        assert!(output.status.success());
        let report: Value = serde_json::from_slice(&output.stdout).unwrap();
        let layer = &report["profile"]["layers"][0];
        (
            report["shells"].as_array().unwrap().len(),
            layer["tolerance"].as_f64().unwrap(),
            report["profile"]["time_error_relative"].as_f64().unwrap(),
        )
    };
    let (default_count, default_tolerance, default_error) = shells(&[]);
    let (fine_count, fine_tolerance, fine_error) = shells(&["--tolerance", "0.002"]);
    assert_eq!(default_tolerance, 0.01);
    assert_eq!(fine_tolerance, 0.002);
    assert!(
        fine_count > 3 * default_count,
        "{fine_count} vs {default_count}"
    );
    assert!(fine_error < default_error);
    let output = sojourn()
        .args([
            "profile",
            "models/tamsin-n1.5-low-mass.json",
            "--tolerance",
            "2",
        ])
        .output()
        .unwrap();
    assert_eq!(
        output.status.code(),
        Some(2),
        "clap rejects it as a usage error"
    );
}

#[test]
fn run_walks_a_profile_model_and_notes_its_representation() {
    let run = |extra: &[&str]| {
        let output = sojourn()
            .args([
                "run",
                "models/test-polytrope-n3-tau50.json",
                "--photons",
                "300",
                "--json",
                "-",
            ])
            .args(extra)
            .output()
            .unwrap();
        assert!(
            output.status.success(),
            "{}",
            String::from_utf8_lossy(&output.stderr)
        );
        serde_json::from_slice::<Value>(&output.stdout).unwrap()
    };
    let report = run(&[]);
    let coarse = run(&["--profile-tolerance", "0.05"]);
    assert!(
        coarse["model"]["layers"].as_u64().unwrap() < report["model"]["layers"].as_u64().unwrap()
    );
    // τ is exact whatever the tolerance.
    assert!((report["optical_depth"].as_f64().unwrap() - 50.0).abs() < 1e-9);
    assert!((coarse["optical_depth"].as_f64().unwrap() - 50.0).abs() < 1e-9);
    let notes: Vec<&str> = report["notes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|n| n.as_str().unwrap())
        .collect();
    assert!(notes.iter().any(|n| n.contains("albedo 1")), "{notes:?}");
    assert!(
        notes
            .iter()
            .any(|n| n.contains("sub-shells") && n.contains("error against a fine quadrature")),
        "{notes:?}"
    );
}

#[test]
fn stellar_keys_zones_and_times() {
    // The Sun-like demo with the demo opacity table: an outer convective zone.
    let report = profile_json("models/veyra-n3-demo-table.json");
    for path in [
        "/luminosity_erg_s",
        "/convective_base_radius_cm",
        "/photosphere/radius_cm",
        "/photosphere/temperature_k",
        "/diffusion/luminosity_weighted_time_s",
        "/diffusion/luminosity_weighted_time_extrapolated_s",
        "/diffusion/flux_weighted_time_s",
        "/diffusion/energy_content_time_s",
        "/diffusion/time_to_convective_base_s",
        "/diffusion/luminosity_weighted_time_to_convective_base_s",
        "/diffusion/convective_crossing_time_s",
        "/profile/layers/0/opacity_table/range/temperature_min_k",
    ] {
        let value = report
            .pointer(path)
            .unwrap_or_else(|| panic!("missing {path}"));
        assert!(value.is_number(), "{path} = {value}");
    }
    let zones = report["zones"].as_array().unwrap();
    assert!(zones.len() >= 2);
    for zone in zones {
        assert!(zone["inner_radius_cm"].is_number() && zone["outer_radius_cm"].is_number());
        assert!(["radiative", "convective"].contains(&zone["kind"].as_str().unwrap()));
    }
    assert!(report["shells"][10]["luminosity_erg_s"].is_number());
    // Eddington-like radiative stars have no outer convective zone: null.
    let radiative = profile_json("models/test-polytrope-n3-tau50.json");
    assert!(radiative["diffusion"]["time_to_convective_base_s"].is_null());
    assert!(
        radiative["zones"]
            .as_array()
            .unwrap()
            .iter()
            .all(|z| z["kind"] == "radiative")
    );
    // A plain model has none of it.
    let plain = profile_json("models/ember-two-zone.json");
    assert!(plain["luminosity_erg_s"].is_null() && plain["zones"].as_array().unwrap().is_empty());
    assert!(plain["diffusion"]["luminosity_weighted_time_s"].is_null());
}

#[test]
fn text_report_lists_zones_and_the_other_times() {
    let output = sojourn()
        .args(["profile", "models/veyra-n3-demo-table.json", "--rows", "4"])
        .output()
        .unwrap();
    assert!(output.status.success());
    let text = String::from_utf8(output.stdout).unwrap();
    for expected in [
        "luminosity L = ∫ ε dm",
        "photosphere (τ = 2/3)",
        "surface cut (walk ends)",
        "Diffusion time, other definitions",
        "from where the energy is released (L-weighted)",
        "radiant energy / luminosity U_rad/L",
        "Energy transport",
        "base of the outer convective zone",
        "convection across the zone",
    ] {
        assert!(text.contains(expected), "{expected:?} missing:\n{text}");
    }
}
