//! A checkpointed run stopped after any number of chunks and resumed gives exactly the
//! tally of one uninterrupted run.

use sojourn::checkpoint::{CheckpointError, CheckpointedRun};
use sojourn::simulation::{RunConfig, run};
use sojourn::transport::PhaseFunction;

use crate::support::{layer, uniform_sphere};

#[test]
fn stopping_after_two_chunks_and_resuming_gives_the_uninterrupted_tally() {
    let medium = uniform_sphere(8.0);
    let config = RunConfig {
        photons: 5_000,
        seed: 21,
        ..RunConfig::default()
    };
    let uninterrupted = run(&medium, &config).tally;
    let directory = tempfile::tempdir().unwrap();
    let path = directory.path().join("run.ckpt");

    let mut first =
        CheckpointedRun::open(&medium, &config, "sphere-8", "direct", &path, 1_200).unwrap();
    assert_eq!(first.resumed_from(), 0);
    first.step(&|_| {}).unwrap();
    first.step(&|_| {}).unwrap();
    assert_eq!(first.photons_done(), 2_400);
    drop(first); // the process "dies" here

    let resumed =
        CheckpointedRun::open(&medium, &config, "sphere-8", "direct", &path, 1_200).unwrap();
    assert_eq!(resumed.resumed_from(), 2_400);
    let result = resumed.finish(&|_| {}).unwrap();
    assert_eq!(result.tally, uninterrupted);
    assert_eq!(
        serde_json::to_string(&result.tally).unwrap(),
        serde_json::to_string(&uninterrupted).unwrap()
    );

    // The finished checkpoint stays: opening it again runs nothing more.
    let again =
        CheckpointedRun::open(&medium, &config, "sphere-8", "direct", &path, 1_200).unwrap();
    assert!(again.is_complete());
    assert_eq!(again.finish(&|_| {}).unwrap().tally, uninterrupted);
}

#[test]
fn a_checkpoint_is_refused_by_a_different_run() {
    let medium = uniform_sphere(3.0);
    let config = RunConfig {
        photons: 600,
        seed: 4,
        ..RunConfig::default()
    };
    let directory = tempfile::tempdir().unwrap();
    let path = directory.path().join("run.ckpt");
    let mut first = CheckpointedRun::open(&medium, &config, "m", "direct", &path, 100).unwrap();
    first.step(&|_| {}).unwrap();
    let other = RunConfig {
        first_photon: 100,
        ..config.clone()
    };
    let error = CheckpointedRun::open(&medium, &other, "m", "direct", &path, 100).unwrap_err();
    assert!(
        matches!(
            error,
            CheckpointError::Mismatch {
                field: "first_photon",
                ..
            }
        ),
        "{error}"
    );
    let slab = sojourn::medium::Medium::slab(
        vec![(1.0, layer(2.0, 1.0, PhaseFunction::Isotropic))],
        1.0,
        sojourn::medium::Source::normal_beam(),
    )
    .unwrap();
    let error = CheckpointedRun::open(&slab, &config, "other", "direct", &path, 100).unwrap_err();
    assert!(
        error
            .to_string()
            .contains("model_hash is m there, other here"),
        "{error}"
    );
}

#[test]
fn a_damaged_or_older_checkpoint_is_refused_with_the_field() {
    let medium = uniform_sphere(3.0);
    let config = RunConfig {
        photons: 400,
        seed: 9,
        ..RunConfig::default()
    };
    let directory = tempfile::tempdir().unwrap();
    let path = directory.path().join("run.ckpt");
    let mut first = CheckpointedRun::open(&medium, &config, "m", "direct", &path, 100).unwrap();
    first.step(&|_| {}).unwrap();
    drop(first);
    let saved: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();

    let mut tampered = saved.clone();
    tampered["tally"]["escaped"]["time_s"]["max"] = serde_json::json!(1e308);
    std::fs::write(&path, tampered.to_string()).unwrap();
    match CheckpointedRun::open(&medium, &config, "m", "direct", &path, 100) {
        Err(CheckpointError::InvalidTally { problem, .. }) => {
            assert_eq!(problem.field(), "tally.escaped.time_s.max");
            assert!(problem.to_string().contains("impossible"), "{problem}");
        }
        other => panic!("expected an invalid tally, got {other:?}"),
    }

    let mut older = saved.clone();
    older["format"] = serde_json::json!(1);
    std::fs::write(&path, older.to_string()).unwrap();
    let error = CheckpointedRun::open(&medium, &config, "m", "direct", &path, 100).unwrap_err();
    assert!(
        error
            .to_string()
            .contains("checkpoint format 1, but this sojourn reads format 3 only"),
        "{error}"
    );
}
