//! The scripts in `examples/cluster/`: the workstation script (xargs -P) and the Slurm
//! scripts, the latter driven through a stand-in `sbatch` that runs each job at once, give
//! the merged result of the unsplit run.

use std::path::Path;
use std::process::Command;

use super::scale_support::{SIX_POINT_SPEC, json, s, succeed, without_timing, write_spec};

const MODEL: &str = "models/diffuser-three-layer.json";

/// Runs `bash examples/cluster/SCRIPT ARGS` with `SOJOURN` set to the binary and, given a
/// fake `sbatch` folder, that folder first on `PATH` and `FAKE_SBATCH_LOG` set.
fn bash(script: &str, args: &[&str], fake_sbatch: Option<(&Path, &Path)>) -> String {
    let mut command = Command::new("bash");
    command
        .arg(format!("examples/cluster/{script}"))
        .args(args)
        .env("SOJOURN", assert_cmd::cargo::cargo_bin("sojourn"));
    if let Some((bin, log)) = fake_sbatch {
        let path = std::env::var("PATH").unwrap_or_default();
        command
            .env("PATH", format!("{}:{path}", bin.display()))
            .env("FAKE_SBATCH_LOG", log);
    }
    let output = command.output().unwrap();
    assert!(
        output.status.success(),
        "{script} {args:?}:\n{}{}",
        String::from_utf8_lossy(&output.stdout),
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8_lossy(&output.stdout).into_owned()
}

fn unsplit_run() -> serde_json::Value {
    without_timing(json(&succeed(&[
        "run",
        MODEL,
        "--photons",
        "2000",
        "--json",
        "-",
    ])))
}

fn merged(out: &Path) -> serde_json::Value {
    without_timing(json(
        &std::fs::read_to_string(out.join("merged.json")).unwrap(),
    ))
}

#[test]
fn the_workstation_script_runs_shards_in_parallel_and_merges_them() {
    let directory = tempfile::tempdir().unwrap();
    let out = directory.path().join("run");
    let text = bash(
        "local.sh",
        &["run", MODEL, "3", "2", s(&out), "--photons", "2000"],
        None,
    );
    assert!(text.contains("2000 photons"), "{text}");
    assert_eq!(merged(&out), unsplit_run());

    let spec = write_spec(directory.path(), SIX_POINT_SPEC);
    let whole = directory.path().join("whole");
    succeed(&["sweep", s(&spec), "--out", s(&whole), "--quiet"]);
    let out = directory.path().join("sweep");
    bash("local.sh", &["sweep", s(&spec), "4", "2", s(&out)], None);
    assert_eq!(
        std::fs::read_to_string(out.join("sweep.csv")).unwrap(),
        std::fs::read_to_string(whole.join("sweep.csv")).unwrap()
    );
}

/// A stand-in for Slurm's `sbatch`: runs the job at once (array tasks one after another,
/// with the task variables Slurm sets), logs its arguments, prints a job id.
const FAKE_SBATCH: &str = r#"#!/usr/bin/env bash
echo "sbatch $*" >> "$FAKE_SBATCH_LOG"
array="" output=/dev/null
while [[ $1 == --* ]]; do
    case $1 in
        --array=*) array=${1#--array=} ;;
        --output=*) output=${1#--output=} ;;
    esac
    shift
done
script=$1
shift
if [ -n "$array" ]; then
    first=${array%-*} last=${array#*-}
    for k in $(seq "$first" "$last"); do
        SLURM_ARRAY_TASK_ID=$k SLURM_ARRAY_TASK_COUNT=$((last - first + 1)) \
            bash "$script" "$@" > "${output//%a/$k}" 2>&1 || exit 1
    done
else
    bash "$script" "$@" > "$output" 2>&1 || exit 1
fi
echo "4242;cluster"
"#;

#[test]
fn the_slurm_scripts_submit_an_array_and_a_merge_that_waits_for_it() {
    let directory = tempfile::tempdir().unwrap();
    let bin = directory.path().join("bin");
    std::fs::create_dir(&bin).unwrap();
    let sbatch = bin.join("sbatch");
    std::fs::write(&sbatch, FAKE_SBATCH).unwrap();
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        std::fs::set_permissions(&sbatch, std::fs::Permissions::from_mode(0o755)).unwrap();
    }
    let log = directory.path().join("sbatch.log");
    let out = directory.path().join("out");
    let stdout = bash(
        "submit.sh",
        &["run", MODEL, "4", s(&out), "--photons", "2000"],
        Some((&bin, &log)),
    );
    assert!(stdout.contains("job array 4242 (1-4)"), "{stdout}");
    let calls = std::fs::read_to_string(&log).unwrap();
    assert!(calls.contains("--array=1-4"), "{calls}");
    assert!(calls.contains("--dependency=afterok:4242 "), "{calls}");
    assert_eq!(merged(&out), unsplit_run());
    assert!(
        std::fs::read_to_string(out.join("merged.txt"))
            .unwrap()
            .contains("Lumen-3")
    );
}
