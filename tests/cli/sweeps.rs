//! `sojourn sweep`: the table, shards merged to the unsplit table, resume after a kill,
//! and specs that are refused before anything is written.

use std::path::Path;
use std::process::Stdio;

use super::scale_support::{
    SIX_POINT_SPEC, assert_mentions, fail, s, sojourn, succeed, write_spec,
};

fn read(path: &Path) -> String {
    std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// Finished point files (not temporaries) in `points`.
fn point_files(points: &Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(points)
        .map(|entries| {
            entries
                .flatten()
                .map(|e| e.file_name().to_string_lossy().into_owned())
                .filter(|n| n.starts_with("point-"))
                .collect()
        })
        .unwrap_or_default();
    names.sort();
    names
}

#[test]
fn a_sweep_writes_one_row_per_point_in_csv_and_json_lines() {
    let directory = tempfile::tempdir().unwrap();
    let spec = write_spec(directory.path(), SIX_POINT_SPEC);
    let out = directory.path().join("out");
    let output = sojourn()
        .args(["sweep", s(&spec), "--out", s(&out)])
        .output()
        .unwrap();
    assert!(output.status.success());
    // Not a terminal: no progress bar, only the closing status line on stderr.
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(!stderr.contains("ETA"), "{stderr}");
    assert_mentions(&stderr, &["wrote", "sweep.csv"]);
    assert_mentions(
        &String::from_utf8_lossy(&output.stdout),
        &["layers[1].extinction_coefficient", "MC/diffusion"],
    );

    let csv = read(&out.join("sweep.csv"));
    let mut lines = csv.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    assert_eq!(
        &header[..3],
        [
            "point",
            "layers[1].extinction_coefficient",
            "layers[1].albedo"
        ]
    );
    for column in [
        "optical_depth",
        "reflected",
        "reflected_stderr",
        "specular",
        "transmitted",
        "escape_time_mean_s",
        "reflected_time_mean_s",
        "transmitted_time_mean_s",
        "escape_time_stderr_s",
        "diffusion_mean_time_extrapolated_s",
        "time_ratio",
        "time_ratio_stderr",
        "naive_time_ratio",
    ] {
        assert!(header.contains(&column), "{column} missing from {header:?}");
    }
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    assert_eq!(rows.len(), 6);
    // Every photon is accounted for: R + specular + T + A + censored = 1 in each row.
    let at = |name: &str| header.iter().position(|c| *c == name).unwrap();
    for row in &rows {
        let total: f64 = [
            "reflected",
            "specular",
            "transmitted",
            "absorbed",
            "censored",
        ]
        .iter()
        .map(|name| row[at(name)].parse::<f64>().unwrap())
        .sum();
        assert!(
            (total - 1.0).abs() < 1e-12,
            "{row:?}: outcomes sum to {total}"
        );
    }
    // Grid: the first parameter varies slowest.
    let settings: Vec<(&str, &str, &str)> = rows.iter().map(|r| (r[0], r[1], r[2])).collect();
    assert_eq!(
        settings,
        [
            ("0", "1", "1.0"),
            ("1", "1", "0.9"),
            ("2", "3", "1.0"),
            ("3", "3", "0.9"),
            ("4", "9", "1.0"),
            ("5", "9", "0.9")
        ]
    );
    let column = |name: &str| header.iter().position(|h| *h == name).unwrap();
    // Optical depth = 10 × 0.1 + σ × 1.
    assert_eq!(rows[4][column("optical_depth")], "10.0");
    // A conservative slab absorbs only in its coat; an absorbing bulk absorbs more.
    let absorbed = |row: usize| rows[row][column("absorbed")].parse::<f64>().unwrap();
    assert!(absorbed(5) > absorbed(4));

    let jsonl = read(&out.join("sweep.jsonl"));
    let records: Vec<serde_json::Value> = jsonl
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(records.len(), 6);
    assert_eq!(records[3]["point"], 3);
    assert_eq!(records[3]["layers[1].albedo"], 0.9);
    assert!(records[3]["escaped"].is_null(), "a slab has no `escaped`");
    // The coat absorbs: the diffusion time is given, but no Monte Carlo time is compared
    // with that of conservative diffusion.
    assert!(records[3]["diffusion_mean_time_extrapolated_s"].is_number());
    assert!(records[3]["time_ratio"].is_null());
    assert!(records[3]["naive_time_ratio"].is_null());
    assert_eq!(point_files(&out.join("points")).len(), 6);
}

#[test]
fn merged_sweep_shards_equal_the_unsplit_sweep_for_1_2_and_5_shards() {
    let directory = tempfile::tempdir().unwrap();
    let spec = write_spec(directory.path(), SIX_POINT_SPEC);
    let whole = directory.path().join("whole");
    let output = sojourn()
        .args(["sweep", s(&spec), "--out", s(&whole), "--quiet"])
        .output()
        .unwrap();
    assert!(output.status.success());
    assert!(
        output.stderr.is_empty(),
        "--quiet: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    let csv = read(&whole.join("sweep.csv"));
    let jsonl = read(&whole.join("sweep.jsonl"));
    for n in [1, 2, 5] {
        let out = directory.path().join(format!("shards-{n}"));
        for k in 1..=n {
            let stdout = succeed(&[
                "sweep",
                s(&spec),
                "--out",
                s(&out),
                "--shard",
                &format!("{k}/{n}"),
                "--quiet",
            ]);
            assert!(stdout.contains("sojourn merge"), "{stdout}");
        }
        assert!(!out.join("sweep.csv").exists(), "a shard writes no table");
        let bundles: Vec<String> = (1..=n)
            .map(|k| s(&out.join(format!("shard-{k}-of-{n}.json"))).to_string())
            .collect();
        let merged = directory.path().join(format!("merged-{n}"));
        let mut args = vec!["merge"];
        args.extend(bundles.iter().map(String::as_str));
        args.extend(["--out", s(&merged)]);
        succeed(&args);
        assert_eq!(read(&merged.join("sweep.csv")), csv, "{n} shards: CSV");
        assert_eq!(
            read(&merged.join("sweep.jsonl")),
            jsonl,
            "{n} shards: JSON Lines"
        );
        // --csv - and --json - print the same table.
        let mut args = vec!["merge"];
        args.extend(bundles.iter().map(String::as_str));
        args.extend(["--csv", "-"]);
        assert_eq!(succeed(&args), csv);
    }
}

#[test]
fn sweep_shards_merge_and_plot() {
    let directory = tempfile::tempdir().unwrap();
    let spec = write_spec(directory.path(), SIX_POINT_SPEC);
    let whole_plot = directory.path().join("whole-plot");
    succeed(&[
        "sweep",
        s(&spec),
        "--out",
        s(&directory.path().join("whole")),
        "--plot",
        s(&whole_plot),
        "--quiet",
    ]);
    let out = directory.path().join("shards");
    for k in 1..=2 {
        succeed(&[
            "sweep",
            s(&spec),
            "--out",
            s(&out),
            "--shard",
            &format!("{k}/2"),
            "--quiet",
        ]);
    }
    let plot = directory.path().join("merged-plot");
    let report = directory.path().join("merged.html");
    let table = succeed(&[
        "merge",
        s(&out.join("shard-1-of-2.json")),
        s(&out.join("shard-2-of-2.json")),
        "--plot",
        s(&plot),
        "--report",
        s(&report),
    ]);
    // The figure of the merged shards is the unsplit sweep's figure; only the subtitle's
    // label differs (the spec file against "merged from 2 shards").
    let merged_svg = read(&plot.join("sweep-escape-time.svg"));
    let whole_svg = read(&whole_plot.join("sweep-escape-time.svg"));
    assert_eq!(
        merged_svg.replace("merged from 2 shards", "LABEL"),
        whole_svg.replace(s(&spec), "LABEL")
    );
    assert!(merged_svg.contains("layers[1].extinction_coefficient (1/cm)"));
    let html = read(&report);
    assert!(html.contains("<svg"), "the report embeds the figure");
    assert!(
        html.contains(table.lines().next().unwrap().trim()),
        "and the table"
    );
}

#[test]
fn merge_refuses_shards_of_different_sweeps() {
    let directory = tempfile::tempdir().unwrap();
    let spec = write_spec(directory.path(), SIX_POINT_SPEC);
    let out = directory.path().join("a");
    succeed(&[
        "sweep",
        s(&spec),
        "--out",
        s(&out),
        "--shard",
        "1/2",
        "--quiet",
    ]);
    let other = tempfile::tempdir().unwrap();
    let other_spec = write_spec(
        other.path(),
        &SIX_POINT_SPEC.replace("\"seed\": 11", "\"seed\": 12"),
    );
    let other_out = other.path().join("b");
    succeed(&[
        "sweep",
        s(&other_spec),
        "--out",
        s(&other_out),
        "--shard",
        "2/2",
        "--quiet",
    ]);
    let stderr = fail(&[
        "merge",
        s(&out.join("shard-1-of-2.json")),
        s(&other_out.join("shard-2-of-2.json")),
    ]);
    assert_mentions(
        &stderr,
        &["spec_hash is fnv1a64:", "not parts of the same sweep"],
    );
    let stderr = fail(&["merge", s(&out.join("shard-1-of-2.json"))]);
    assert_mentions(&stderr, &["missing shard(s) 2 of 2"]);
}

/// Six points of growing cost (a sphere of optical radius 2 … 48): the first two are done
/// in milliseconds, the rest take most of a second, so the kill lands mid-sweep.
const SLOW_SPEC: &str = r#"{
  "model": "sphere.json",
  "photons": 20000,
  "seed": 3,
  "parameters": [
    { "path": "layers[0].extinction_coefficient", "values": [2, 4, 8, 16, 32, 48] }
  ]
}"#;

const SPHERE: &str =
    r#"{"geometry": "sphere", "layers": [{"outer_radius": 1, "extinction_coefficient": 1}]}"#;

#[test]
fn a_killed_sweep_resumes_with_every_point_once_and_the_same_results() {
    let directory = tempfile::tempdir().unwrap();
    std::fs::write(directory.path().join("sphere.json"), SPHERE).unwrap();
    let spec = directory.path().join("slow.json");
    std::fs::write(&spec, SLOW_SPEC).unwrap();

    let reference = directory.path().join("reference");
    succeed(&["sweep", s(&spec), "--out", s(&reference), "--quiet"]);

    let out = directory.path().join("killed");
    let points = out.join("points");
    let mut child = std::process::Command::new(assert_cmd::cargo::cargo_bin("sojourn"))
        .args(["sweep", s(&spec), "--out", s(&out), "--quiet"])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    loop {
        if point_files(&points).len() >= 2 {
            child.kill().unwrap();
            break;
        }
        if let Some(status) = child.try_wait().unwrap() {
            panic!("the sweep ended ({status}) before its second point file appeared");
        }
        std::thread::sleep(std::time::Duration::from_millis(2));
    }
    child.wait().unwrap();
    let survivors = point_files(&points);
    assert!(
        survivors.len() < 6 && !out.join("sweep.csv").exists(),
        "the kill came after the sweep finished: {survivors:?}"
    );
    let first_point = read(&points.join("point-0000.json"));

    let output = sojourn()
        .args(["sweep", s(&spec), "--out", s(&out)])
        .output()
        .unwrap();
    assert!(output.status.success());
    assert_mentions(
        &String::from_utf8_lossy(&output.stderr),
        &[&format!("{} of 6 points already done", survivors.len())],
    );
    // Finished points were kept, not run again (their file records its own run time).
    assert_eq!(read(&points.join("point-0000.json")), first_point);
    let names = point_files(&points);
    let expected: Vec<String> = (0..6).map(|i| format!("point-{i:04}.json")).collect();
    assert_eq!(names, expected, "every point once, no temporary left");
    assert_eq!(
        read(&out.join("sweep.csv")),
        read(&reference.join("sweep.csv"))
    );
    assert_eq!(
        read(&out.join("sweep.jsonl")),
        read(&reference.join("sweep.jsonl"))
    );
}

#[test]
fn point_files_of_another_spec_are_refused() {
    let directory = tempfile::tempdir().unwrap();
    let spec = write_spec(directory.path(), SIX_POINT_SPEC);
    let out = directory.path().join("out");
    succeed(&["sweep", s(&spec), "--out", s(&out), "--quiet"]);
    std::fs::write(&spec, SIX_POINT_SPEC.replace("1500", "1600")).unwrap();
    let stderr = fail(&["sweep", s(&spec), "--out", s(&out)]);
    assert_mentions(
        &stderr,
        &["point-0000.json belongs to a different sweep", "--out"],
    );
}

#[test]
fn dry_run_lists_the_points_and_writes_nothing() {
    let directory = tempfile::tempdir().unwrap();
    let spec = write_spec(directory.path(), SIX_POINT_SPEC);
    let stdout = succeed(&["sweep", s(&spec), "--dry-run"]);
    assert_mentions(
        &stdout,
        &[
            "6 points × 1500 photons",
            "point    5: layers[1].extinction_coefficient = 9, layers[1].albedo = 0.9",
        ],
    );
    assert!(!directory.path().join("spec.out").exists());
}

/// Each bad spec fails with exit 1, names the spec file and `needles`, and writes nothing.
fn refused(spec: &str, needles: &[&str]) {
    let directory = tempfile::tempdir().unwrap();
    let path = write_spec(directory.path(), spec);
    let out = directory.path().join("out");
    let stderr = fail(&["sweep", s(&path), "--out", s(&out)]);
    assert_mentions(&stderr, &["spec.json"]);
    assert_mentions(&stderr, needles);
    assert!(!out.exists(), "a refused spec wrote {}", out.display());
    assert!(!directory.path().join("spec.out").exists());
}

fn spec_with(parameter: &str) -> String {
    format!(r#"{{"model": "model.json", "photons": 100, "parameters": [{parameter}]}}"#)
}

#[test]
fn bad_specs_are_refused_before_any_work_with_the_field_and_the_reason() {
    refused(
        &spec_with(r#"{"path": "layers[2].albedo", "values": [0.5]}"#),
        &[
            "parameters[0].path",
            "layers has 2 entries",
            "[2] does not exist",
        ],
    );
    refused(
        &spec_with(r#"{"path": "layers[0].albdo", "values": [0.5]}"#),
        &["point 0", "unknown field `albdo`"],
    );
    refused(
        &spec_with(r#"{"path": "layers[0].phase.gg", "values": [0.5]}"#),
        &["unknown field `gg`"],
    );
    refused(
        &spec_with(r#"{"path": "layers[0].albedo", "values": ["high", 0.5]}"#),
        &["parameters[0].values[0] = \"high\"", "expected a number"],
    );
    refused(
        &spec_with(r#"{"path": "layers[0].albedo", "values": []}"#),
        &["parameters[0].values = []", "non-empty"],
    );
    refused(
        &spec_with(
            r#"{"path": "layers[0].albedo", "linear": {"from": 0.5, "to": 1, "count": -3}}"#,
        ),
        &["parameters[0].linear.count = -3", "cannot be negative"],
    );
    refused(
        &spec_with(r#"{"path": "layers[0].albedo", "log": {"from": 0.5, "to": 1, "count": 0}}"#),
        &["parameters[0].log.count = 0", "empty range"],
    );
    refused(
        &spec_with(r#"{"path": "layers[0].albedo", "steps": {"from": 0.5, "to": 1, "count": 2}}"#),
        &[
            "parameters[0]",
            "unknown field `steps`",
            "`values`, `linear`, `log`",
        ],
    );
    refused(
        &spec_with(r#"{"path": "layers[0].albedo", "values": [0.9, 1.5]}"#),
        &["point 1 (layers[0].albedo = 1.5)", "layers[0].albedo"],
    );
    refused(
        r#"{"model": "missing.json", "parameters": [{"path": "layers[0].albedo", "values": [1]}]}"#,
        &["base model", "missing.json", "cannot read"],
    );
    refused(
        r#"{"model": "model.json", "combine": "zip", "parameters": [
            {"path": "layers[0].albedo", "values": [1, 0.9]},
            {"path": "layers[1].albedo", "values": [1]}]}"#,
        &["parameters[1] = 1 values", "zip"],
    );
    refused(
        r#"{"model": "model.json", "parameters": [{"path": "layers[0].albedo", "values": [1]}], "combine": "cross"}"#,
        &["combine", "unknown variant `cross`"],
    );
    refused(
        r#"{"model": "model.json", "method": "sideways", "parameters": [{"path": "layers[0].albedo", "values": [1]}]}"#,
        &["method", "unknown variant `sideways`", "`direct`"],
    );
}
