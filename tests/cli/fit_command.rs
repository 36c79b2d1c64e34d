//! `sojourn fit` driven as a user would: a small fit writing every output, and bad input
//! (measurements out of range, R + T > 1, a missing measurement, unreachable values, a
//! model that does not suit a fit), each with a clear error, exit status 1 and nothing
//! written.

use std::path::Path;

use super::scale_support::{assert_mentions, fail, json, s, succeed};

fn film() -> String {
    format!(
        "{}/examples/fit/lumaris-film.json",
        env!("CARGO_MANIFEST_DIR")
    )
}

/// `sojourn fit` on the film with `measurements` and outputs into `dir`; asserts failure and
/// that nothing was written; returns stderr.
fn rejected(measurements: &[&str]) -> String {
    let dir = tempfile::tempdir().unwrap();
    let json_path = dir.path().join("fit.json");
    let plot = dir.path().join("figures");
    let film = film();
    let mut args = vec!["fit", film.as_str()];
    args.extend_from_slice(measurements);
    args.extend_from_slice(&[
        "--photons",
        "500",
        "--json",
        s(&json_path),
        "--plot",
        s(&plot),
    ]);
    let stderr = fail(&args);
    assert!(!json_path.exists(), "a JSON report was written: {stderr}");
    assert!(!plot.exists(), "the figure folder was created: {stderr}");
    stderr
}

#[test]
fn reflectance_outside_zero_one() {
    let stderr = rejected(&["--reflectance", "1.2", "--transmittance", "0.3"]);
    assert_mentions(&stderr, &["--reflectance 1.2", "between 0 and 1"]);
    let stderr = rejected(&["--reflectance", "-0.1", "--transmittance", "0.3"]);
    assert_mentions(&stderr, &["--reflectance -0.1", "between 0 and 1"]);
}

#[test]
fn transmittance_outside_zero_one() {
    let stderr = rejected(&["--reflectance", "0.2", "--transmittance", "1.5"]);
    assert_mentions(&stderr, &["--transmittance 1.5", "between 0 and 1"]);
    let stderr = rejected(&[
        "--reflectance",
        "0.2",
        "--transmittance",
        "0.5",
        "--collimated-transmittance",
        "-0.01",
    ]);
    assert_mentions(&stderr, &["--collimated-transmittance -0.01"]);
}

#[test]
fn more_light_out_than_in() {
    let stderr = rejected(&["--reflectance", "0.6", "--transmittance", "0.5"]);
    assert_mentions(
        &stderr,
        &[
            "lumaris-film.json",
            "no solution",
            "R + T = 1.1",
            "exceeds 1",
        ],
    );
    let stderr = rejected(&[
        "--reflectance",
        "0.3",
        "--transmittance",
        "0.6",
        "--collimated-transmittance",
        "0.2",
    ]);
    assert_mentions(&stderr, &["R + T + Tc", "exceeds 1"]);
}

#[test]
fn a_missing_measurement() {
    let dir = tempfile::tempdir().unwrap();
    let json_path = dir.path().join("fit.json");
    let film = film();
    let output = super::scale_support::sojourn()
        .args([
            "fit",
            &film,
            "--reflectance",
            "0.2",
            "--json",
            s(&json_path),
        ])
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(!output.status.success());
    assert!(stderr.contains("--transmittance"), "{stderr}");
    assert!(!json_path.exists());
}

#[test]
fn values_no_sample_can_produce() {
    // Above the clear film's transmittance (Fresnel losses only: (1 − r)/(1 + r) = 0.9254
    // for n = 1.49, docs/references.md, Fit 1).
    let stderr = rejected(&["--reflectance", "0.03", "--transmittance", "0.95"]);
    assert_mentions(
        &stderr,
        &["no solution", "neither absorption nor scattering"],
    );
    // Below the specular reflection of the front face (((n − 1)/(n + 1))² = 0.0387).
    let stderr = rejected(&["--reflectance", "0.01", "--transmittance", "0.5"]);
    assert_mentions(
        &stderr,
        &[
            "specular reflection of the front face",
            "--exclude-specular",
        ],
    );
    // Reflecting less than a film that only absorbs, at the same transmittance.
    let stderr = rejected(&["--reflectance", "0.04", "--transmittance", "0.5"]);
    assert_mentions(&stderr, &["only absorbs", "scattering only adds"]);
}

#[test]
fn uncertainties_that_do_not_fit_the_measurements() {
    let stderr = rejected(&[
        "--reflectance",
        "0.25",
        "--transmittance",
        "0.6",
        "--uncertainty",
        "0.01",
        "0.01",
        "0.01",
    ]);
    assert_mentions(
        &stderr,
        &["--uncertainty", "3 values given for 2 measurements"],
    );
    let stderr = rejected(&[
        "--reflectance",
        "0.25",
        "--transmittance",
        "0.6",
        "--uncertainty",
        "-0.01",
    ]);
    assert_mentions(&stderr, &["--uncertainty", "-0.01", ">= 0"]);
}

#[test]
fn a_model_that_does_not_suit_a_fit() {
    let sphere = format!(
        "{}/models/test-sphere-tau20.json",
        env!("CARGO_MANIFEST_DIR")
    );
    let stderr = fail(&[
        "fit",
        &sphere,
        "--reflectance",
        "0.2",
        "--transmittance",
        "0.3",
    ]);
    assert_mentions(&stderr, &["test-sphere-tau20.json", "needs a slab"]);
    let stderr = rejected(&[
        "--reflectance",
        "0.25",
        "--transmittance",
        "0.6",
        "--layer",
        "3",
    ]);
    assert_mentions(&stderr, &["--layer 3", "1 layer(s)"]);
}

#[test]
fn a_small_fit_writes_its_outputs() {
    let dir = tempfile::tempdir().unwrap();
    let json_path = dir.path().join("fit.json");
    let report = dir.path().join("fit.txt");
    let plot = dir.path().join("figures");
    let film = film();
    let stdout = succeed(&[
        "fit",
        &film,
        "--reflectance",
        "0.247",
        "--transmittance",
        "0.610",
        "--collimated-transmittance",
        "0.124",
        "--uncertainty",
        "0.003",
        "0.003",
        "0.002",
        "--photons",
        "3000",
        "--json",
        s(&json_path),
        "--report",
        s(&report),
        "--plot",
        s(&plot),
    ]);
    assert!(stdout.is_empty(), "the text went to --report: {stdout}");
    let value = json(&std::fs::read_to_string(&json_path).unwrap());
    assert_eq!(value["length_unit"], "mm");
    let fit = &value["fit"];
    for key in [
        "absorption_coefficient",
        "scattering_coefficient",
        "reduced_scattering_coefficient",
        "reflectance",
        "transmittance",
        "collimated_transmittance",
        "iterations",
        "converged",
    ] {
        assert!(!fit[key].is_null(), "fit.{key} missing: {fit}");
    }
    for key in [
        "absorption_coefficient",
        "scattering_coefficient",
        "reduced_scattering_coefficient",
        "correlation",
    ] {
        assert!(fit["stderr"][key].is_number(), "fit.stderr.{key}: {fit}");
    }
    // μs = μs′ / (1 − g), g = 0.8.
    let mus = fit["scattering_coefficient"].as_f64().unwrap();
    let musp = fit["reduced_scattering_coefficient"].as_f64().unwrap();
    assert!((mus * 0.2 - musp).abs() < 1e-9 * musp);
    let text = std::fs::read_to_string(&report).unwrap();
    assert_mentions(&text, &["μa", "μs′", "What limits the accuracy", "caution"]);
    assert!(Path::new(&plot).join("fit-plane.svg").exists());
}

#[test]
fn a_fit_is_reproducible_whatever_the_threads() {
    let film = film();
    let run = |threads: &str| {
        let mut value = json(&succeed(&[
            "fit",
            &film,
            "--reflectance",
            "0.247",
            "--transmittance",
            "0.734",
            "--photons",
            "2000",
            "--threads",
            threads,
            "--json",
            "-",
        ]));
        value.as_object_mut().unwrap().remove("elapsed_s");
        value
    };
    assert_eq!(run("1"), run("2"));
}

#[test]
fn a_pair_out_of_reach_is_not_converged() {
    // R = 0.99 with no transmission: the film would need μa → 0 and μs′ → ∞ together,
    // beyond what the solver reaches; it must stop with converged false and a reason, not
    // claim a solution.
    let film = film();
    let value = json(&succeed(&[
        "fit",
        &film,
        "--reflectance",
        "0.99",
        "--transmittance",
        "0",
        "--photons",
        "500",
        "--json",
        "-",
    ]));
    assert_eq!(value["fit"]["converged"], false, "{}", value["fit"]);
    assert!(
        !value["fit"]["reason"].as_str().unwrap().is_empty(),
        "{}",
        value["fit"]
    );
}
