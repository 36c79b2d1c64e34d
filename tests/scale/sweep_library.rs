//! The in-code sweep API and the resumable runner: a runner stopped after any point and
//! reopened finishes with the table of an uninterrupted in-memory sweep.

use sojourn::medium::{Layer, Medium, Source};
use sojourn::shard::Shard;
use sojourn::sweep::runner::Finished;
use sojourn::sweep::table::{csv_text, jsonl_text};
use sojourn::sweep::{PointResult, ResolvedSpec, Sweep, SweepRunner};
use sojourn::transport::PhaseFunction;

const MODEL: &str = r#"{"geometry": "slab", "layers": [
    {"thickness": 1, "extinction_coefficient": 2, "albedo": 0.95,
     "phase": {"kind": "henyey_greenstein", "g": 0.3}}]}"#;

const SPEC: &str = r#"{"model": "slab.json", "photons": 800, "seed": 8, "combine": "zip",
    "parameters": [
      {"path": "layers[0].extinction_coefficient", "linear": {"from": 1, "to": 5, "count": 4}},
      {"path": "layers[0].phase.g", "values": [0.0, 0.3, 0.6, 0.9]}]}"#;

fn spec() -> ResolvedSpec {
    ResolvedSpec::parse(SPEC, "spec.json", |_| {
        Ok((serde_json::from_str(MODEL).unwrap(), "slab.json".into()))
    })
    .unwrap()
}

fn table(results: &[PointResult]) -> String {
    let rows: Vec<_> = results.iter().map(PointResult::row).collect();
    csv_text(&rows) + &jsonl_text(&rows)
}

#[test]
fn a_runner_stopped_after_any_point_resumes_to_the_in_memory_table() {
    let spec = spec();
    let sweep = spec.build("spec.json").unwrap();
    let expected = table(&sweep.run());
    for stop_after in [0, 1, 3] {
        let directory = tempfile::tempdir().unwrap();
        let mut runner = SweepRunner::open(&sweep, &spec, directory.path(), None).unwrap();
        for index in runner.pending().into_iter().take(stop_after) {
            runner.run_point(index, &|_| {}).unwrap();
        }
        drop(runner); // stopped
        let mut runner = SweepRunner::open(&sweep, &spec, directory.path(), None).unwrap();
        assert_eq!(runner.pending().len(), 4 - stop_after);
        for index in runner.pending() {
            runner.run_point(index, &|_| {}).unwrap();
        }
        let Finished::Table { results, csv, .. } = runner.finish().unwrap() else {
            panic!("an unsharded sweep ends with its table");
        };
        assert_eq!(table(&results), expected, "stopped after {stop_after}");
        assert_eq!(
            std::fs::read_to_string(csv).unwrap(),
            csv_text(&results.iter().map(PointResult::row).collect::<Vec<_>>())
        );
    }
}

#[test]
fn finishing_before_every_point_is_done_names_the_missing_points() {
    let spec = spec();
    let sweep = spec.build("spec.json").unwrap();
    let directory = tempfile::tempdir().unwrap();
    let mut runner = SweepRunner::open(
        &sweep,
        &spec,
        directory.path(),
        Some(Shard::new(2, 3).unwrap()),
    )
    .unwrap();
    runner.run_point(1, &|_| {}).unwrap();
    let error = runner.finish().unwrap_err().to_string();
    assert!(error.contains("points 0, 2, 3 are not done"), "{error}");
}

#[test]
fn a_sweep_built_in_code_gives_one_result_per_point_with_its_parameters() {
    let mut sweep = Sweep::new(1_000, 3);
    for (tau, g) in [(0.5, 0.0), (2.0, 0.0), (2.0, 0.8)] {
        let layer = Layer::new(
            "bulk",
            tau,
            1.0,
            PhaseFunction::henyey_greenstein(g).unwrap(),
            1.0,
        )
        .unwrap();
        let medium = Medium::slab(vec![(1.0, layer)], 1.0, Source::normal_beam()).unwrap();
        sweep = sweep.point([("tau", tau), ("g", g)], medium);
    }
    let results = sweep.run();
    assert_eq!(results.len(), 3);
    assert_eq!(results[2].parameter("g"), Some(0.8));
    assert_eq!(results[1].analysis.optical_depth, 2.0);
    // Forward scattering lets more of the beam through a slab of the same optical depth.
    let transmitted = |k: usize| results[k].analysis.outcome.transmitted.unwrap();
    assert!(transmitted(2) > transmitted(1));
    assert!(transmitted(0) > transmitted(1));
    let row = results[0].row();
    assert_eq!(row.get("point"), Some(&serde_json::json!(0)));
    assert_eq!(row.get("tau"), Some(&serde_json::json!(0.5)));
}

#[test]
fn each_point_has_its_own_random_stream() {
    let layer = Layer::new("bulk", 3.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
    let medium = Medium::slab(vec![(1.0, layer)], 1.0, Source::normal_beam()).unwrap();
    let results = Sweep::new(500, 1)
        .point([("copy", 0.0)], medium.clone())
        .point([("copy", 1.0)], medium)
        .run();
    let mean = |k: usize| results[k].analysis.escape_time.mean_s.unwrap();
    assert_ne!(
        mean(0),
        mean(1),
        "the same medium at two indices drew the same photons"
    );
}

#[test]
fn reopening_removes_this_runs_temporaries_and_keeps_other_shards_files() {
    let spec = spec();
    let sweep = spec.build("spec.json").unwrap();
    let directory = tempfile::tempdir().unwrap();
    let points = directory.path().join("points");
    std::fs::create_dir_all(&points).unwrap();
    // Left by a killed whole sweep, and by a shard still running in the same folder.
    let stale = points.join(".point-0001.json.4242.tmp");
    let other_shard = points.join(".point-0001.shard-1-of-2.json.4243.tmp");
    let unrelated = points.join("notes.txt");
    for path in [&stale, &other_shard, &unrelated] {
        std::fs::write(path, "partial").unwrap();
    }
    let runner = SweepRunner::open(&sweep, &spec, directory.path(), None).unwrap();
    assert_eq!(runner.pending(), vec![0, 1, 2, 3]);
    assert!(!stale.exists());
    assert!(other_shard.exists());
    assert!(unrelated.exists());
}
