//! `sojourn run`: the report, its JSON keys, and thread-count independence.

use super::scale_support::sojourn;
use serde_json::Value;

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

#[test]
fn slab_report_shows_optics_and_json_carries_the_curves() {
    let output = sojourn()
        .args([
            "run",
            "models/opal-diffuser.json",
            "--photons",
            "4000",
            "--resolve",
        ])
        .output()
        .unwrap();
    assert!(output.status.success());
    let text = String::from_utf8(output.stdout).unwrap();
    for expected in [
        "reflected",
        "specular",
        "transmitted",
        "absorbed",
        "diffuse R",
        "late decay rate",
    ] {
        assert!(
            text.contains(expected),
            "report lacks {expected:?}:\n{text}"
        );
    }
    let report = run_json(&[
        "run",
        "models/opal-diffuser.json",
        "--photons",
        "4000",
        "--resolve",
    ]);
    let bins = report
        .pointer("/resolved/time_s")
        .unwrap()
        .as_array()
        .unwrap()
        .len();
    assert_eq!(bins, 200);
    for key in [
        "/resolved/reflectance_per_s",
        "/resolved/transmittance_per_s",
        "/resolved/diffusion_reflectance_per_s",
        "/resolved/diffusion_transmittance_per_s",
    ] {
        assert_eq!(
            report.pointer(key).unwrap().as_array().unwrap().len(),
            bins,
            "{key}"
        );
    }
    assert!(
        report
            .pointer("/outcome/specular")
            .unwrap()
            .as_f64()
            .unwrap()
            > 0.0
    );
    assert!(
        report
            .pointer("/reflected_time/mean_s")
            .unwrap()
            .is_number()
    );
    assert!(
        report
            .pointer("/slab_diffusion/reflectance")
            .unwrap()
            .is_number()
    );
}

#[test]
fn resolve_is_refused_for_spheres() {
    let output = sojourn()
        .args(["run", "--resolve", "--photons", "10"])
        .output()
        .unwrap();
    assert!(!output.status.success());
    assert!(String::from_utf8_lossy(&output.stderr).contains("--resolve is for slabs"));
}

#[test]
fn an_absorbing_slab_compares_no_time_with_conservative_diffusion() {
    // The two-layer phantom absorbs (albedo 0.996): its closed-form diffusion times are
    // conservative, so neither the text nor the JSON may put a Monte Carlo time beside them
    // as a ratio. Its times are compared with the diffusion solver's, which absorbs too.
    let directory = tempfile::tempdir().unwrap();
    let path = directory.path().join("phantom.json");
    let output = sojourn()
        .args([
            "run",
            "models/tissue-phantom-two-layer.json",
            "--photons",
            "1000",
            "--json",
        ])
        .arg(&path)
        .output()
        .unwrap();
    assert!(output.status.success());
    let text = String::from_utf8(output.stdout).unwrap();
    for line in text.lines() {
        assert!(
            !line.contains("mean time /") && !line.contains("closed forms (conservative"),
            "a ratio of an absorbing Monte Carlo time to conservative diffusion: {line}"
        );
    }
    assert!(text.contains("closed forms below are conservative"));
    assert!(text.contains("Monte Carlo against the diffusion solver (both with absorption)"));
    assert!(text.contains("mean escape time    MC / solver"));
    assert!(text.contains("KS distance "));
    assert!(text.contains("verdict: "));
    let report: Value = serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    let comparison = &report["comparison"];
    for key in [
        "time_ratio",
        "time_ratio_stderr",
        "time_ratio_plain",
        "naive_time_ratio",
        "scatterings_ratio",
    ] {
        assert!(
            comparison[key].is_null(),
            "comparison.{key} = {}",
            comparison[key]
        );
    }
    assert_eq!(comparison["times_comparable"], false);
    let notes = comparison["notes"].as_array().unwrap();
    assert!(
        notes
            .iter()
            .any(|n| n.as_str().unwrap().contains("the medium absorbs"))
    );
    // The comparisons that exist are with the absorbing solver.
    let diffusion = &report["diffusion"];
    assert!(diffusion["mean_time_extrapolated_s"].is_number());
    let absorbed = diffusion["absorbed"].as_f64().unwrap();
    assert!(absorbed > 0.1, "diffusion absorbs {absorbed}");
    let escape = diffusion["escape_probability"].as_f64().unwrap();
    let (r, t) = (
        diffusion["reflected"].as_f64().unwrap(),
        diffusion["transmitted"].as_f64().unwrap(),
    );
    assert!((escape - (r + t)).abs() < 1e-12);
    for key in ["mean_s", "median_s", "p05_s", "p95_s"] {
        assert!(diffusion["escape_time"][key].is_number(), "{key}");
    }
    let ratio = comparison["escape_time_ratio"].as_f64().unwrap();
    let mc = report["escape_time"]["mean_s"].as_f64().unwrap();
    let solver = diffusion["escape_time"]["mean_s"].as_f64().unwrap();
    assert!((ratio - mc / solver).abs() < 1e-12 * ratio);
    assert!(comparison["ks_distance"].is_number());
    assert!(comparison["ks_p_value"].is_number());
    assert!(comparison["verdict"]["trustworthy"].is_boolean());
    assert!(comparison["verdict"]["reason"].is_string());
}

/// A command-line usage error: non-zero exit, nothing on stdout, no panic; returns stderr.
fn usage_error(args: &[&str]) -> String {
    let output = sojourn().args(args).output().unwrap();
    let stderr = String::from_utf8_lossy(&output.stderr).to_string();
    assert!(!output.status.success(), "sojourn {args:?} succeeded");
    assert!(output.stdout.is_empty());
    assert!(!stderr.contains("panicked"), "{stderr}");
    stderr
}

#[test]
fn resolved_tally_options_need_resolve() {
    for flag in ["--tof-bins", "--cosine-bins"] {
        let stderr = usage_error(&["run", "models/opal-diffuser.json", flag, "50"]);
        assert!(stderr.contains("--resolve"), "{flag}: {stderr}");
    }
}

#[test]
fn counts_below_one_are_refused_in_plain_words() {
    for flag in ["--photons", "--max-steps"] {
        let stderr = usage_error(&["run", flag, "0"]);
        assert!(
            stderr.contains("expected a whole number of at least 1"),
            "{flag}: {stderr}"
        );
        assert!(!stderr.contains("18446744073709551615"), "{stderr}");
    }
    for value in ["--photons=-3", "--photons=many"] {
        let stderr = usage_error(&["run", value]);
        assert!(stderr.contains("expected a whole number"), "{stderr}");
    }
}

#[test]
fn the_header_counts_the_layers_the_model_file_declares() {
    // Ember: two plain layers; Veyra: one profile layer, which the walker sees as its
    // sub-shells.
    let ember = String::from_utf8(
        sojourn()
            .args(["run", "--photons", "100"])
            .output()
            .unwrap()
            .stdout,
    )
    .unwrap();
    assert!(ember.contains("sphere, 2 layers ·"), "{ember}");
    let veyra = String::from_utf8(
        sojourn()
            .args(["run", "models/veyra-n3-sun-like.json", "--photons", "100"])
            .output()
            .unwrap()
            .stdout,
    )
    .unwrap();
    assert!(
        veyra.contains("sphere, 1 layer in 2472 shells ·"),
        "{veyra}"
    );
}

#[test]
fn labels_fit_the_source() {
    let run = |model: &str| {
        String::from_utf8(
            sojourn()
                .args(["run", model, "--photons", "500", "--resolve"])
                .output()
                .unwrap()
                .stdout,
        )
        .unwrap()
    };
    // A source deep inside a slab: light leaves through its faces; nothing is reflected
    // before entering, and the exit angles read as limb darkening.
    let inside = run("models/grey-atmosphere.json");
    for absent in [
        "specular",
        "before entering",
        "unscattered",
        "reflected light",
    ] {
        assert!(!inside.contains(absent), "{absent:?} in:\n{inside}");
    }
    assert!(inside.contains("left through the top face"), "{inside}");
    assert!(inside.contains("limb darkening of light leaving the top face"));
    // A plate lit from outside: reflection, specular reflection, no limb darkening.
    let lit = run("models/opal-diffuser.json");
    assert!(
        lit.contains("specular") && lit.contains("(diffuse)"),
        "{lit}"
    );
    assert!(!lit.contains("limb darkening"), "{lit}");
}

#[test]
fn a_slab_of_index_four_gives_a_report() {
    // Once a panic after the walk (a clamp with min > max in the slab diffusion estimate).
    let directory = tempfile::tempdir().unwrap();
    let model = directory.path().join("index-four.json");
    std::fs::write(
        &model,
        r#"{"geometry":"slab","layers":[{"thickness":1,"extinction_coefficient":1,"refractive_index":4}]}"#,
    )
    .unwrap();
    let report = run_json(&["run", model.to_str().unwrap(), "--photons", "200"]);
    assert_eq!(report["photons"], 200);
    assert!(report["outcome"]["reflected"].as_f64().unwrap() > 0.0);
}

#[test]
fn a_dash_reads_the_model_from_standard_input() {
    let model = std::fs::read("models/opal-diffuser.json").unwrap();
    let from_file = run_json(&["run", "models/opal-diffuser.json", "--photons", "300"]);
    let output = sojourn()
        .args(["run", "-", "--photons", "300", "--json", "-"])
        .write_stdin(model)
        .output()
        .unwrap();
    assert!(output.status.success(), "{output:?}");
    let from_stdin: Value = serde_json::from_slice(&output.stdout).unwrap();
    assert_eq!(from_stdin["model"]["file"], "<stdin>");
    // The same walk, bit for bit, whichever way the model came in.
    assert_eq!(from_stdin["escape_time"], from_file["escape_time"]);
    assert_eq!(from_stdin["outcome"], from_file["outcome"]);
    let output = sojourn()
        .args(["profile", "-", "--rows", "2"])
        .write_stdin(std::fs::read("models/ember-two-zone.json").unwrap())
        .output()
        .unwrap();
    assert!(output.status.success(), "{output:?}");
    assert!(String::from_utf8_lossy(&output.stdout).contains("model <stdin> · sphere of 2 shells"));
    let output = sojourn()
        .args(["run", "-"])
        .write_stdin("{\"geometry\": \"sphere\"")
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&output.stderr).contains("<stdin>: line"));
}

#[test]
fn a_model_in_mm_is_reported_in_mm() {
    let output = sojourn()
        .args([
            "run",
            "models/diffuser-three-layer.json",
            "--photons",
            "1000",
            "--resolve",
        ])
        .output()
        .unwrap();
    assert!(output.status.success());
    let text = String::from_utf8(output.stdout).unwrap();
    assert!(!text.contains("/cm") && !text.contains(" cm"), "{text}");
    assert!(text.contains(" /mm") && text.contains(" mm"), "{text}");
}

#[test]
fn a_source_inside_a_slab_gets_a_late_decay_rate_at_the_solvers_lambda() {
    // The grey atmosphere, 2·10⁴ photons: its time-of-flight tail is a clean exponential,
    // and the maximum-likelihood rate of the photons leaving each face after the tail has
    // become single-mode must agree with the diffusion solver's λ₁ (an independent
    // method: the time-dependent diffusion equation on the model's own layers) within 4σ
    // of the Monte Carlo error plus a 2 % allowance for the diffusion approximation itself
    // in a slab 60 mean free paths thick (the run's own comparison puts diffusion's mean
    // escape time for this model within about 1 % of the Monte Carlo's).
    let report = run_json(&[
        "run",
        "models/grey-atmosphere.json",
        "--photons",
        "20000",
        "--seed",
        "3",
        "--resolve",
    ]);
    let lambda = report["diffusion"]["decay_rate_per_s"].as_f64().unwrap();
    for face in ["reflectance_decay", "transmittance_decay"] {
        let fit = &report["resolved"][face];
        let rate = fit["rate_per_s"]
            .as_f64()
            .expect("a rate, not too few counts");
        let stderr = fit["stderr_per_s"].as_f64().unwrap();
        assert!(fit["photons"].as_u64().unwrap() >= 100, "{fit}");
        assert!(
            (rate - lambda).abs() < 4.0 * stderr + 0.02 * lambda,
            "{face}: {rate} ± {stderr} against λ₁ = {lambda}"
        );
    }
}
