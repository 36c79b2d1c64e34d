//! `sojourn run --shard K/N` and `sojourn merge`: shards merge to exactly the unsplit run,
//! and merge refuses files that do not belong together, saying why.

use tempfile::TempDir;

use super::scale_support::{
    SIX_POINT_SPEC, assert_mentions, fail, json, s, succeed, without_timing, write_spec,
};

const MODEL: &str = "models/diffuser-three-layer.json";
const RUN: [&str; 6] = ["--photons", "3000", "--seed", "5", "--max-steps", "100000"];

/// Writes shard K of N of the test run into `directory`, returns its path. `changes`
/// replaces options of the test run: `[("--seed", "6")]`.
fn shard_file(directory: &TempDir, k: u64, n: u64, changes: &[(&str, &str)]) -> String {
    let path = directory.path().join(format!("run-{k}-of-{n}.json"));
    let shard = format!("{k}/{n}");
    let mut args = vec!["run", MODEL];
    let mut options = RUN;
    for (flag, value) in changes {
        let at = options.iter().position(|o| o == flag).unwrap();
        options[at + 1] = value;
    }
    args.extend(options);
    args.extend(["--shard", &shard, "--json", s(&path)]);
    succeed(&args);
    s(&path).to_string()
}

#[test]
fn merged_shards_equal_the_unsplit_run_for_1_2_and_5_shards() {
    let mut args = vec!["run", MODEL];
    args.extend(RUN);
    args.extend(["--json", "-"]);
    let unsplit = without_timing(json(&succeed(&args)));
    for n in [1, 2, 5] {
        let directory = tempfile::tempdir().unwrap();
        // Given in reverse order: merge does not depend on the order of its inputs.
        let files: Vec<String> = (1..=n)
            .rev()
            .map(|k| shard_file(&directory, k, n, &[]))
            .collect();
        let mut merge = vec!["merge"];
        merge.extend(files.iter().map(String::as_str));
        merge.extend(["--json", "-"]);
        let merged = without_timing(json(&succeed(&merge)));
        assert_eq!(merged, unsplit, "{n} shards");
        // Each shard holds its own part of the photons.
        let part = json(&std::fs::read_to_string(&files[0]).unwrap());
        assert_eq!(part["shard"]["shard"]["index"], n);
        assert_eq!(part["photons"], part["shard"]["photons"]);
    }
}

#[test]
fn merge_prints_the_text_report_by_default() {
    let directory = tempfile::tempdir().unwrap();
    let a = shard_file(&directory, 1, 2, &[]);
    let b = shard_file(&directory, 2, 2, &[]);
    let text = succeed(&["merge", &a, &b]);
    assert_mentions(
        &text,
        &["Lumen-3", "3000 photons", "reflected", "Diffusion theory"],
    );
}

#[test]
fn merged_run_shards_draw_the_unsplit_runs_figures() {
    let directory = tempfile::tempdir().unwrap();
    let whole = directory.path().join("whole");
    let mut args = vec!["run", MODEL];
    args.extend(RUN);
    args.extend(["--plot", s(&whole)]);
    succeed(&args);
    let a = shard_file(&directory, 1, 2, &[]);
    let b = shard_file(&directory, 2, 2, &[]);
    let merged = directory.path().join("merged");
    let report = directory.path().join("merged.html");
    succeed(&[
        "merge",
        &a,
        &b,
        "--plot",
        s(&merged),
        "--report",
        s(&report),
    ]);
    let mut names: Vec<String> = std::fs::read_dir(&whole)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert!(!names.is_empty());
    for name in &names {
        let read = |dir: &std::path::Path| std::fs::read_to_string(dir.join(name)).unwrap();
        assert_eq!(read(&merged), read(&whole), "{name}");
    }
    assert!(std::fs::read_to_string(&report).unwrap().contains("<svg"));
}

#[test]
fn merge_refuses_shards_of_different_runs_with_the_reason() {
    let directory = tempfile::tempdir().unwrap();
    let one = shard_file(&directory, 1, 2, &[]);
    let two = shard_file(&directory, 2, 2, &[]);
    let other_dir = tempfile::tempdir().unwrap();
    let other_seed = shard_file(&other_dir, 2, 2, &[("--seed", "6")]);
    let stderr = fail(&["merge", &one, &other_seed]);
    assert_mentions(
        &stderr,
        &["seed is 6", "has 5", "not parts of the same run"],
    );

    let other_dir = tempfile::tempdir().unwrap();
    let other_cap = shard_file(&other_dir, 2, 2, &[("--max-steps", "500")]);
    let stderr = fail(&["merge", &one, &other_cap]);
    assert_mentions(&stderr, &["max_steps is 500", "has 100000"]);

    let other_dir = tempfile::tempdir().unwrap();
    let path = other_dir.path().join("sphere.json");
    succeed(&[
        "run",
        "models/test-sphere-tau20.json",
        "--photons",
        "3000",
        "--seed",
        "5",
        "--max-steps",
        "100000",
        "--shard",
        "2/2",
        "--json",
        s(&path),
    ]);
    let stderr = fail(&["merge", &one, s(&path)]);
    assert_mentions(
        &stderr,
        &["model_hash is fnv1a64:", "not parts of the same run"],
    );

    let other_dir = tempfile::tempdir().unwrap();
    let of_three = shard_file(&other_dir, 2, 3, &[]);
    let stderr = fail(&["merge", &one, &of_three]);
    assert_mentions(&stderr, &["shard count is 3", "has 2"]);

    let stderr = fail(&["merge", &one, &one, &two]);
    assert_mentions(&stderr, &["shard 1/2 is given twice", "overlap"]);

    let stderr = fail(&["merge", &two]);
    assert_mentions(&stderr, &["missing shard(s) 1 of 2"]);
}

#[test]
fn merge_refuses_files_that_are_not_shards_or_are_damaged() {
    let directory = tempfile::tempdir().unwrap();
    let report = directory.path().join("report.json");
    succeed(&["run", MODEL, "--photons", "200", "--json", s(&report)]);
    let stderr = fail(&["merge", s(&report)]);
    assert_mentions(&stderr, &["not a shard file", "--shard K/N"]);

    let one = shard_file(&directory, 1, 2, &[]);
    let two = shard_file(&directory, 2, 2, &[]);
    // Edit the embedded model: its hash no longer matches.
    let mut edited = json(&std::fs::read_to_string(&two).unwrap());
    edited["shard"]["model"]["layers"][0]["thickness"] = serde_json::json!(0.06);
    std::fs::write(&two, edited.to_string()).unwrap();
    let stderr = fail(&["merge", &one, &two]);
    assert_mentions(
        &stderr,
        &["damaged shard file", "does not match the embedded model"],
    );

    // Mixing a run shard with a sweep shard.
    let sweep_dir = tempfile::tempdir().unwrap();
    let spec = write_spec(sweep_dir.path(), SIX_POINT_SPEC);
    let out = sweep_dir.path().join("out");
    succeed(&[
        "sweep",
        s(&spec),
        "--out",
        s(&out),
        "--shard",
        "1/2",
        "--quiet",
    ]);
    let bundle = out.join("shard-1-of-2.json");
    let stderr = fail(&["merge", &one, s(&bundle)]);
    assert_mentions(&stderr, &["is a shard of a run", "is a shard of a sweep"]);
}

#[test]
fn a_shard_needs_a_json_output_and_a_valid_k_of_n() {
    let output = super::scale_support::sojourn()
        .args(["run", MODEL, "--shard", "1/2"])
        .output()
        .unwrap();
    assert!(!output.status.success());
    assert!(String::from_utf8_lossy(&output.stderr).contains("--json"));
    for bad in ["0/2", "3/2", "two/3"] {
        let output = super::scale_support::sojourn()
            .args(["run", MODEL, "--shard", bad, "--json", "-"])
            .output()
            .unwrap();
        assert!(!output.status.success(), "{bad}");
        assert!(
            String::from_utf8_lossy(&output.stderr).contains("1 <= K <= N")
                || String::from_utf8_lossy(&output.stderr).contains("K/N"),
            "{bad}"
        );
    }
}

#[test]
fn merge_refuses_shards_run_with_different_walk_settings() {
    // Same model, seed and photons, but one shard walked with a different jump threshold:
    // the photons differ, so the shards must not be joined.
    let directory = tempfile::tempdir().unwrap();
    let a = shard_file(&directory, 1, 2, &[]);
    let path = directory.path().join("other-gamma.json");
    let mut args = vec!["run", MODEL];
    args.extend(RUN);
    args.extend(["--gamma", "5", "--shard", "2/2", "--json", s(&path)]);
    succeed(&args);
    let stderr = fail(&["merge", &a, s(&path)]);
    assert_mentions(&stderr, &["walk settings"]);
}

#[test]
fn resolved_slab_shards_merge_to_the_unsplit_run() {
    let directory = tempfile::tempdir().unwrap();
    let mut base = vec![
        "run",
        "models/opal-diffuser.json",
        "--photons",
        "2000",
        "--resolve",
    ];
    let mut whole = base.clone();
    whole.extend(["--json", "-"]);
    let unsplit = without_timing(json(&succeed(&whole)));
    let paths: Vec<String> = (1..=2)
        .map(|k| {
            directory
                .path()
                .join(format!("r{k}.json"))
                .to_string_lossy()
                .to_string()
        })
        .collect();
    for (k, path) in paths.iter().enumerate() {
        let shard = format!("{}/2", k + 1);
        let mut args = base.clone();
        args.extend(["--shard", &shard, "--json", path]);
        succeed(&args);
    }
    base.clear();
    let merged = without_timing(json(&succeed(&[
        "merge", &paths[0], &paths[1], "--json", "-",
    ])));
    assert_eq!(merged, unsplit);
}

/// Writes `value` as a shard file next to the originals and returns its path.
fn write_tampered(directory: &TempDir, name: &str, value: &serde_json::Value) -> String {
    let path = directory.path().join(name);
    std::fs::write(&path, value.to_string()).unwrap();
    s(&path).to_string()
}

#[test]
fn merge_refuses_tampered_tallies_with_the_reason() {
    let directory = tempfile::tempdir().unwrap();
    let one = shard_file(&directory, 1, 2, &[]);
    let two = shard_file(&directory, 2, 2, &[]);
    let original = json(&std::fs::read_to_string(&two).unwrap());
    let refuse = |name: &str, edit: &dyn Fn(&mut serde_json::Value), needles: &[&str]| {
        let mut tampered = original.clone();
        edit(&mut tampered);
        let path = write_tampered(&directory, name, &tampered);
        let stderr = fail(&["merge", &one, &path]);
        let mut expected = vec!["damaged shard file", name];
        expected.extend(needles);
        assert_mentions(&stderr, &expected);
    };
    // Histogram counts that disagree with the outcome's count.
    refuse(
        "counts.json",
        &|v| {
            let bin = &mut v["tally"]["reflected"]["time_histogram"]["bins"][0][1];
            *bin = serde_json::json!(bin.as_u64().unwrap() + 1);
        },
        &["tally.reflected.time_histogram", "photons counted"],
    );
    // An exact-sum state whose mean lies above the max.
    let mut larger = sojourn::tally::ExactSum::new();
    larger.add(
        original["tally"]["reflected"]["time_s"]["sum"]["value"]
            .as_f64()
            .unwrap(),
    );
    larger.add(1.0);
    refuse(
        "mean.json",
        &|v| v["tally"]["reflected"]["time_s"]["sum"] = serde_json::to_value(&larger).unwrap(),
        &["tally.reflected.time_s.sum", "lies outside"],
    );
    // A maximum no value reached.
    refuse(
        "max.json",
        &|v| v["tally"]["transmitted"]["time_s"]["max"] = serde_json::json!(1e308),
        &["tally.transmitted.time_s.max", "max 1e308 is impossible"],
    );
    // More photons launched than the outcomes hold.
    refuse(
        "launched.json",
        &|v| {
            let launched = v["tally"]["launched"].as_u64().unwrap();
            v["tally"]["launched"] = serde_json::json!(launched + 1);
        },
        &["tally.launched", "against the sum of the outcomes"],
    );
    // A file of the previous format is named as such.
    refuse(
        "old.json",
        &|v| v["shard"]["format"] = serde_json::json!(1),
        &["shard format 1", "reads format 3 only", "rerun it"],
    );
}

#[test]
fn merge_refuses_a_resolved_bin_of_two_to_the_63() {
    let directory = tempfile::tempdir().unwrap();
    let paths: Vec<String> = (1..=2)
        .map(|k| {
            let path = directory.path().join(format!("r{k}.json"));
            let shard = format!("{k}/2");
            succeed(&[
                "run",
                "models/opal-diffuser.json",
                "--photons",
                "400",
                "--resolve",
                "--shard",
                &shard,
                "--json",
                s(&path),
            ]);
            s(&path).to_string()
        })
        .collect();
    let mut tampered = json(&std::fs::read_to_string(&paths[1]).unwrap());
    tampered["tally"]["resolved"]["reflected_by_time"][3] = serde_json::json!(1u64 << 63);
    let path = write_tampered(&directory, "bin.json", &tampered);
    let stderr = fail(&["merge", &paths[0], &path]);
    assert_mentions(
        &stderr,
        &[
            "damaged shard file",
            "tally.resolved.reflected_by_time",
            "against the reflected photons",
        ],
    );
}

#[test]
fn a_shard_without_photons_reports_no_fractions() {
    // Two photons in three shards: shard 1 holds none.
    let directory = tempfile::tempdir().unwrap();
    let path = directory.path().join("empty.json");
    succeed(&[
        "run",
        MODEL,
        "--photons",
        "2",
        "--shard",
        "1/3",
        "--json",
        s(&path),
    ]);
    let report = json(&std::fs::read_to_string(&path).unwrap());
    assert_eq!(report["photons"], 0);
    for key in ["reflected", "transmitted", "absorbed", "censored"] {
        assert!(
            report["outcome"][key].is_null(),
            "{key}: {}",
            report["outcome"][key]
        );
        assert!(report["outcome"]["stderr"][key].is_null(), "{key}");
    }
    let notes = report["notes"].to_string();
    assert!(notes.contains("no photons were launched"), "{notes}");
}
