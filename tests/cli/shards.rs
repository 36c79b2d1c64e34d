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
