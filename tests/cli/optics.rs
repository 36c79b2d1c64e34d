//! Finite beams, detectors and R(ρ) through the command line: the JSON keys, shards that
//! merge to the unsplit run, and bad input refused with nothing written.

use super::scale_support::{fail, json, s, succeed, without_timing};

const MODEL: &str = "models/lumen-probe.json";

#[test]
fn detectors_report_fraction_error_and_time_of_flight() {
    let report = json(&succeed(&[
        "run",
        MODEL,
        "--photons",
        "4000",
        "--seed",
        "3",
        "--json",
        "-",
    ]));
    let detectors = report["detectors"].as_array().unwrap();
    assert_eq!(detectors.len(), 3);
    let ring = &detectors[1];
    assert_eq!(ring["name"], "ring-2mm");
    assert_eq!(ring["face"], "top");
    // 1.8 mm and 2.2 mm, in cm.
    assert!((ring["inner_radius_cm"].as_f64().unwrap() - 0.18).abs() < 1e-12);
    assert!((ring["outer_radius_cm"].as_f64().unwrap() - 0.22).abs() < 1e-12);
    assert_eq!(ring["numerical_aperture"], 0.22);
    let angle = ring["acceptance_half_angle_deg"].as_f64().unwrap();
    assert!((angle - 0.22f64.asin().to_degrees()).abs() < 1e-12);
    let (fraction, stderr) = (
        ring["fraction"].as_f64().unwrap(),
        ring["stderr"].as_f64().unwrap(),
    );
    assert!(fraction > 0.0 && stderr > 0.0 && stderr < fraction);
    let count = ring["time_of_flight"]["count"].as_u64().unwrap();
    assert_eq!(fraction, count as f64 / 4000.0);
    assert!(ring["time_of_flight"]["mean_s"].as_f64().unwrap() > 0.0);
    assert_eq!(detectors[2]["numerical_aperture"], serde_json::Value::Null);
    // The collimated part of the transmitted light, with its error.
    let outcome = &report["outcome"];
    let collimated = outcome["collimated_transmitted"].as_f64().unwrap();
    assert!(collimated <= outcome["transmitted"].as_f64().unwrap());
    assert!(outcome["stderr"]["collimated_transmitted"].is_number());
    let text = succeed(&["run", MODEL, "--photons", "4000", "--seed", "3"]);
    assert!(
        text.contains("Detectors (fraction of photons launched"),
        "{text}"
    );
    assert!(text.contains("ring-2mm"), "{text}");
    assert!(text.contains("collimated"), "{text}");
}

#[test]
fn detector_and_radial_shards_merge_to_the_unsplit_run() {
    let run = [
        "run",
        MODEL,
        "--photons",
        "3000",
        "--seed",
        "4",
        "--resolve",
    ];
    let mut args = run.to_vec();
    args.extend(["--json", "-"]);
    let unsplit = without_timing(json(&succeed(&args)));
    let directory = tempfile::tempdir().unwrap();
    let mut files = Vec::new();
    for k in ["1/3", "2/3", "3/3"] {
        let file = directory.path().join(format!("part-{}.json", &k[..1]));
        let mut args = run.to_vec();
        args.extend(["--shard", k, "--json", s(&file), "--quiet"]);
        succeed(&args);
        files.push(file);
    }
    let merged = without_timing(json(&succeed(&[
        "merge",
        s(&files[2]),
        s(&files[0]),
        s(&files[1]),
        "--json",
        "-",
    ])));
    assert_eq!(merged, unsplit);
    assert!(merged["resolved"]["transmittance_per_cm2"].is_array());
}

#[test]
fn a_bad_detector_or_beam_is_refused_and_nothing_is_written() {
    let directory = tempfile::tempdir().unwrap();
    let cases = [
        (
            r#"{"face": "bottom", "outer_radius": 1, "numerical_aperture": 1.0}"#,
            r#"{"kind": "beam"}"#,
            "detectors[0].numerical_aperture",
        ),
        (
            r#"{"face": "top", "inner_radius": 1, "outer_radius": 1}"#,
            r#"{"kind": "beam"}"#,
            "detectors[0].outer_radius",
        ),
        (
            r#"{"face": "top", "outer_radius": 1}"#,
            r#"{"kind": "beam", "profile": "gaussian", "radius": -0.5}"#,
            "source.radius",
        ),
        (
            r#"{"face": "top", "outer_radius": 1}"#,
            r#"{"kind": "beam", "profile": "flat", "radius": 0}"#,
            "source.radius",
        ),
    ];
    for (index, (detector, source, field)) in cases.iter().enumerate() {
        let model = directory.path().join(format!("bad-{index}.json"));
        std::fs::write(
            &model,
            format!(
                r#"{{"geometry": "slab", "layers": [{{"thickness": 1, "extinction_coefficient": 2}}],
                    "source": {source}, "detectors": [{detector}]}}"#
            ),
        )
        .unwrap();
        let out = directory.path().join(format!("out-{index}.json"));
        let plots = directory.path().join(format!("plots-{index}"));
        let stderr = fail(&["run", s(&model), "--json", s(&out), "--plot", s(&plots)]);
        assert!(stderr.contains(field), "{field}: {stderr}");
        assert!(stderr.contains(&format!("bad-{index}.json")), "{stderr}");
        assert!(!out.exists() && !plots.exists(), "{field}: output written");
    }
}

#[test]
fn a_checkpointed_detector_run_equals_the_plain_run() {
    // Chunks of 700 photons, each saved to the checkpoint and merged: the same report.
    let directory = tempfile::tempdir().unwrap();
    let checkpoint = directory.path().join("probe.ckpt");
    let run = [
        "run",
        MODEL,
        "--photons",
        "3000",
        "--seed",
        "6",
        "--resolve",
    ];
    let mut args = run.to_vec();
    args.extend(["--json", "-"]);
    let plain = without_timing(json(&succeed(&args)));
    let mut args = run.to_vec();
    args.extend([
        "--checkpoint",
        s(&checkpoint),
        "--checkpoint-every",
        "700",
        "--json",
        "-",
    ]);
    let chunked = without_timing(json(&succeed(&args)));
    assert_eq!(chunked, plain);
    // The saved tally carries the detector counts, and reading it back checks them.
    let saved = json(&std::fs::read_to_string(&checkpoint).unwrap());
    assert_eq!(
        saved["tally"]["optics"]["detected"]
            .as_array()
            .unwrap()
            .len(),
        3
    );
}
