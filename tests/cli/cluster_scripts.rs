//! The scripts in `examples/cluster/`: the workstation script (xargs -P) and the Slurm
//! scripts, the latter driven through a stand-in `sbatch` that runs each job at once, give
//! the merged result of the unsplit run, and `submit.sh` passes cores and scheduler options
//! through. (`check-local-scheduler.sh` runs them on a real single-node Slurm; `.ci/run`
//! calls it where it can.)

use std::path::Path;
use std::process::Command;

use super::scale_support::{SIX_POINT_SPEC, json, s, succeed, without_timing, write_spec};

const MODEL: &str = "models/diffuser-three-layer.json";

/// `bash examples/cluster/SCRIPT ARGS` with `SOJOURN` set to the binary, the variables
/// `env` set (and the submit script's own variables cleared otherwise) and, given a fake
/// `sbatch` folder, that folder first on `PATH` and `FAKE_SBATCH_LOG` set.
fn script(
    script: &str,
    args: &[&str],
    fake_sbatch: Option<(&Path, &Path)>,
    env: &[(&str, &str)],
) -> Command {
    let mut command = Command::new("bash");
    command
        .arg(format!("examples/cluster/{script}"))
        .args(args)
        .env("SOJOURN", assert_cmd::cargo::cargo_bin("sojourn"))
        .env_remove("SOJOURN_CPUS_PER_TASK")
        .env_remove("SOJOURN_SBATCH_OPTIONS");
    for (name, value) in env {
        command.env(name, value);
    }
    if let Some((bin, log)) = fake_sbatch {
        let path = std::env::var("PATH").unwrap_or_default();
        command
            .env("PATH", format!("{}:{path}", bin.display()))
            .env("FAKE_SBATCH_LOG", log);
    }
    command
}

/// Runs `bash examples/cluster/SCRIPT ARGS` (see [`script`]), asserts success, returns
/// stdout.
fn bash(script_name: &str, args: &[&str], fake_sbatch: Option<(&Path, &Path)>) -> String {
    bash_with(script_name, args, fake_sbatch, &[])
}

/// [`bash`] with environment variables.
fn bash_with(
    script_name: &str,
    args: &[&str],
    fake_sbatch: Option<(&Path, &Path)>,
    env: &[(&str, &str)],
) -> String {
    let output = script(script_name, args, fake_sbatch, env)
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{script_name} {args:?}:\n{}{}",
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
unset SLURM_CPUS_PER_TASK
while [[ $1 == --* ]]; do
    case $1 in
        --array=*) array=${1#--array=} ;;
        --output=*) output=${1#--output=} ;;
        --cpus-per-task=*) export SLURM_CPUS_PER_TASK=${1#--cpus-per-task=} ;;
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

/// Writes the fake `sbatch` into `DIRECTORY/bin`; returns that folder.
fn fake_sbatch(directory: &Path) -> std::path::PathBuf {
    let bin = directory.join("bin");
    std::fs::create_dir(&bin).unwrap();
    let sbatch = bin.join("sbatch");
    std::fs::write(&sbatch, FAKE_SBATCH).unwrap();
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        std::fs::set_permissions(&sbatch, std::fs::Permissions::from_mode(0o755)).unwrap();
    }
    bin
}

#[test]
fn the_slurm_scripts_submit_an_array_and_a_merge_that_waits_for_it() {
    let directory = tempfile::tempdir().unwrap();
    let bin = fake_sbatch(directory.path());
    let log = directory.path().join("sbatch.log");
    let out = directory.path().join("out");
    let stdout = bash(
        "submit.sh",
        &["run", MODEL, "4", s(&out), "--photons", "2000"],
        Some((&bin, &log)),
    );
    assert!(
        stdout.contains("job array 4242 (1-4, 4 cores each)"),
        "{stdout}"
    );
    let calls = std::fs::read_to_string(&log).unwrap();
    assert!(calls.contains("--array=1-4"), "{calls}");
    // Four cores per shard task by default, as the #SBATCH line of shard.sbatch says.
    assert!(calls.contains("--cpus-per-task=4 --array=1-4"), "{calls}");
    assert!(calls.contains("--dependency=afterok:4242 "), "{calls}");
    assert_eq!(merged(&out), unsplit_run());
    assert!(
        std::fs::read_to_string(out.join("merged.txt"))
            .unwrap()
            .contains("Lumen-3")
    );
}

/// The `sbatch` calls `submit.sh` made, one line each: the array first, then the merge.
fn sbatch_calls(log: &Path) -> Vec<String> {
    std::fs::read_to_string(log)
        .unwrap()
        .lines()
        .map(str::to_string)
        .collect()
}

#[test]
fn submit_passes_cores_and_scheduler_options_through() {
    let directory = tempfile::tempdir().unwrap();
    let bin = fake_sbatch(directory.path());
    let spec = write_spec(directory.path(), SIX_POINT_SPEC);

    // By option, after the words of the environment variable.
    let log = directory.path().join("options.log");
    let out = directory.path().join("by-option");
    let stdout = bash_with(
        "submit.sh",
        &[
            "--cpus-per-task",
            "2",
            "--sbatch-option",
            "--partition=short",
            "--sbatch-option=--qos=low",
            "sweep",
            s(&spec),
            "2",
            s(&out),
        ],
        Some((&bin, &log)),
        &[("SOJOURN_SBATCH_OPTIONS", "--account=lab --time=00:30:00")],
    );
    assert!(stdout.contains("(1-2, 2 cores each)"), "{stdout}");
    let calls = sbatch_calls(&log);
    assert_eq!(calls.len(), 2, "{calls:?}");
    assert!(
        calls[0].contains("--cpus-per-task=2 --array=1-2"),
        "{calls:?}"
    );
    for call in &calls {
        assert!(
            call.contains("--account=lab --time=00:30:00 --partition=short --qos=low "),
            "{call}"
        );
    }
    assert!(
        !calls[1].contains("--cpus-per-task"),
        "the merge takes one core: {calls:?}"
    );
    assert!(out.join("sweep.csv").exists());

    // By environment variable; the shard runs as many threads (same result either way).
    let log = directory.path().join("variable.log");
    let out = directory.path().join("by-variable");
    bash_with(
        "submit.sh",
        &["run", MODEL, "3", s(&out), "--photons", "2000"],
        Some((&bin, &log)),
        &[("SOJOURN_CPUS_PER_TASK", "3")],
    );
    assert!(sbatch_calls(&log)[0].contains("--cpus-per-task=3 --array=1-3"));
    assert_eq!(merged(&out), unsplit_run());
}

#[test]
fn submit_refuses_a_bad_core_count_and_unknown_options() {
    for (args, env, needle) in [
        (
            &["--cpus-per-task", "0"][..],
            None,
            "--cpus-per-task must be a whole number >= 1, not \"0\"",
        ),
        (&[][..], Some("two"), "not \"two\""),
        (&["--cores", "2"][..], None, "unknown option --cores"),
    ] {
        let mut args = args.to_vec();
        args.extend(["run", MODEL, "2", "unused-out"]);
        let variables: Vec<(&str, &str)> = env
            .map(|value| vec![("SOJOURN_CPUS_PER_TASK", value)])
            .unwrap_or_default();
        let output = script("submit.sh", &args, None, &variables)
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(2), "{args:?}: {stderr}");
        assert!(stderr.contains(needle), "{args:?}: {stderr}");
    }
    assert!(!Path::new("unused-out").exists());
}
