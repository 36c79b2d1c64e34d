//! `sojourn run` before any photon: which walker `auto` picks and why, and the refusal of
//! runs that cannot make progress or would run for days.

use std::time::Instant;

use serde_json::Value;

use super::scale_support::sojourn;

/// A model file with one uniform sphere of radius 1 cm, extinction `sigma` /cm, albedo
/// `albedo`, centred source.
fn sphere_model(dir: &tempfile::TempDir, sigma: f64, albedo: f64) -> std::path::PathBuf {
    let path = dir.path().join(format!("sphere-{sigma}-{albedo}.json"));
    let model = serde_json::json!({
        "geometry": "sphere",
        "layers": [{
            "name": "ball",
            "outer_radius": 1.0,
            "extinction_coefficient": sigma,
            "albedo": albedo
        }]
    });
    std::fs::write(&path, model.to_string()).unwrap();
    path
}

fn walk_of(model: &std::path::Path, extra: &[&str]) -> Value {
    let output = sojourn()
        .arg("run")
        .arg(model)
        .args(["--photons", "500", "--json", "-"])
        .args(extra)
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let report: Value = serde_json::from_slice(&output.stdout).unwrap();
    report["walk"].clone()
}

#[test]
fn auto_walks_a_thin_sphere_directly_and_a_deep_one_with_jumps_and_says_why() {
    let dir = tempfile::tempdir().unwrap();
    let thin = walk_of(&sphere_model(&dir, 5.0, 1.0), &[]);
    assert_eq!(thin["method_used"], "direct");
    assert!(
        thin["method_reason"]
            .as_str()
            .unwrap()
            .contains("deep and smooth enough"),
        "{thin}"
    );
    assert!(thin["gamma"].is_null());
    let deep = walk_of(&sphere_model(&dir, 1e4, 1.0), &[]);
    assert_eq!(deep["method_used"], "accelerated");
    assert!(
        deep["method_reason"]
            .as_str()
            .unwrap()
            .contains("diffusion jumps bring it to about"),
        "{deep}"
    );
    assert!(deep["jumps_per_photon"].as_f64().unwrap() > 0.0);
    // The text report carries the same line.
    let output = sojourn()
        .arg("run")
        .arg(sphere_model(&dir, 1e4, 1.0))
        .args(["--photons", "200"])
        .output()
        .unwrap();
    let text = String::from_utf8(output.stdout).unwrap();
    assert!(
        text.contains("walker: accelerated, a direct walk would cost about"),
        "{text}"
    );
}

#[test]
fn a_direct_walk_of_the_sun_like_star_is_refused_at_once_with_its_estimate() {
    let started = Instant::now();
    let output = sojourn()
        .args(["run", "models/veyra-n3-sun-like.json", "--method", "direct"])
        .output()
        .unwrap();
    let seconds = started.elapsed().as_secs_f64();
    assert!(!output.status.success());
    let message = String::from_utf8_lossy(&output.stderr);
    for expected in [
        "models/veyra-n3-sun-like.json: refused before starting",
        "the direct walk is estimated at 2.060e26 steps per photon",
        "≈ τ²/2",
        "--allow-long-run",
    ] {
        assert!(message.contains(expected), "{expected:?} not in {message}");
    }
    assert!(output.stdout.is_empty(), "no report for a refused run");
    // Refused before any photon: far below the time of even one photon (~10^19 s).
    assert!(seconds < 10.0, "took {seconds} s");
}

#[test]
fn a_mean_free_path_below_the_position_resolution_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let model = sphere_model(&dir, 1e20, 1.0);
    for method in ["direct", "accelerated", "auto"] {
        let output = sojourn()
            .arg("run")
            .arg(&model)
            .args(["--method", method, "--allow-long-run"])
            .output()
            .unwrap();
        assert!(!output.status.success(), "{method}");
        let message = String::from_utf8_lossy(&output.stderr);
        for expected in [
            "cannot run: layers[0] (\"ball\")",
            "mean free path 1.000e-20 cm",
            "units in the last place",
            "never progress",
        ] {
            assert!(
                message.contains(expected),
                "{method}: {expected:?} not in {message}"
            );
        }
    }
}

#[test]
fn allow_long_run_starts_a_run_past_the_estimate() {
    // Albedo 0.5 at τ = 10⁴: the diffusion estimate (an upper one in absorbing media)
    // puts a direct walk at ~10⁷ flights per photon, 10¹¹ for 10⁴ photons, while photons
    // are absorbed after about two flights.
    let dir = tempfile::tempdir().unwrap();
    let model = sphere_model(&dir, 1e4, 0.5);
    let refused = sojourn()
        .arg("run")
        .arg(&model)
        .args(["--method", "direct", "--photons", "10000"])
        .output()
        .unwrap();
    assert!(!refused.status.success());
    assert!(String::from_utf8_lossy(&refused.stderr).contains("above the limit of 1e11 steps"));
    let walk = walk_of(&model, &["--method", "direct", "--allow-long-run"]);
    assert_eq!(walk["method_used"], "direct");
    // The step cap bounds the estimate too.
    let capped = sojourn()
        .arg("run")
        .arg(&model)
        .args([
            "--method",
            "direct",
            "--photons",
            "10000",
            "--max-steps",
            "1000",
            "--json",
            "-",
        ])
        .output()
        .unwrap();
    assert!(capped.status.success());
}
