//! `sojourn run --checkpoint PATH`: a run killed mid-way resumes from its checkpoint and
//! ends with the same report as an uninterrupted run.

use std::process::Stdio;

use super::scale_support::{assert_mentions, fail, json, s, sojourn, succeed, without_timing};

const MODEL: &str = "models/test-sphere-tau20.json";
const RUN: [&str; 5] = ["run", MODEL, "--photons", "60000", "--seed"];

#[test]
fn a_killed_run_resumes_from_its_checkpoint_with_the_same_result() {
    let directory = tempfile::tempdir().unwrap();
    let checkpoint = directory.path().join("run.ckpt");
    let mut reference_args = RUN.to_vec();
    reference_args.extend(["9", "--json", "-"]);
    let reference = without_timing(json(&succeed(&reference_args)));

    let mut args = RUN.to_vec();
    args.extend([
        "9",
        "--checkpoint",
        s(&checkpoint),
        "--checkpoint-every",
        "1000",
    ]);
    let mut child = std::process::Command::new(assert_cmd::cargo::cargo_bin("sojourn"))
        .args(&args)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    while !checkpoint.exists() {
        if let Some(status) = child.try_wait().unwrap() {
            panic!("the run ended ({status}) before its first checkpoint");
        }
        std::thread::sleep(std::time::Duration::from_millis(2));
    }
    child.kill().unwrap();
    child.wait().unwrap();
    let saved = json(&std::fs::read_to_string(&checkpoint).unwrap());
    let done = saved["photons_done"].as_u64().unwrap();
    assert!(done > 0 && done < 60_000, "killed after {done} photons");
    assert_eq!(done % 1000, 0, "checkpoints fall every 1000 photons");

    args.extend(["--json", "-"]);
    let output = sojourn().args(&args).output().unwrap();
    assert!(output.status.success());
    assert_mentions(
        &String::from_utf8_lossy(&output.stderr),
        &[&format!(
            "resuming from {}: {done} of 60000",
            s(&checkpoint)
        )],
    );
    let resumed = without_timing(json(&String::from_utf8_lossy(&output.stdout)));
    assert_eq!(resumed, reference);
}

#[test]
fn a_checkpoint_of_another_run_is_refused() {
    let directory = tempfile::tempdir().unwrap();
    let checkpoint = directory.path().join("run.ckpt");
    succeed(&[
        "run",
        MODEL,
        "--photons",
        "2000",
        "--checkpoint",
        s(&checkpoint),
        "--checkpoint-every",
        "500",
        "--quiet",
    ]);
    let stderr = fail(&[
        "run",
        MODEL,
        "--photons",
        "2000",
        "--seed",
        "2",
        "--checkpoint",
        s(&checkpoint),
    ]);
    assert_mentions(
        &stderr,
        &["belongs to another run", "seed is 1 there, 2 here"],
    );
    let stderr = fail(&[
        "run",
        "models/diffuser-three-layer.json",
        "--photons",
        "2000",
        "--checkpoint",
        s(&checkpoint),
    ]);
    assert_mentions(&stderr, &["model_hash"]);
    std::fs::write(&checkpoint, "{\"format\": 1}").unwrap();
    let stderr = fail(&[
        "run",
        MODEL,
        "--photons",
        "2000",
        "--checkpoint",
        s(&checkpoint),
    ]);
    assert_mentions(&stderr, &["not a usable checkpoint"]);
}
