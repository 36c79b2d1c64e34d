//! Output paths: every destination is checked before any photon, devices and pipes are
//! refused and left as they are, symbolic links are written through, `-` is standard
//! output, and a failing standard output is an error that names it, not a panic.

use std::path::Path;
use std::time::{Duration, Instant};

use super::scale_support::{fail, sojourn, succeed};

const MODEL: &str = "models/test-sphere-tau20.json";

/// Far more photons than finish in the time allowed: a refusal that comes in time came
/// before the run (10⁹ photons of this model take hours).
const ENDLESS: &str = "1000000000";

/// Generous against a loaded machine; the refusals measured here take about 10 ms.
const PROMPT: Duration = Duration::from_secs(5);

fn fail_promptly(args: &[&str]) -> String {
    let start = Instant::now();
    let stderr = fail(args);
    let elapsed = start.elapsed();
    assert!(elapsed < PROMPT, "refused after {elapsed:?}: {stderr}");
    stderr
}

fn assert_mentions(text: &str, needles: &[&str]) {
    for needle in needles {
        assert!(text.contains(needle), "{needle:?} missing from: {text}");
    }
}

fn entries(directory: &Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(directory)
        .unwrap()
        .map(|entry| entry.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    names
}

#[test]
fn json_into_a_missing_folder_is_refused_before_any_photon() {
    let directory = tempfile::tempdir().unwrap();
    let json = directory.path().join("missing/report.json");
    let stderr = fail_promptly(&[
        "run",
        MODEL,
        "--photons",
        ENDLESS,
        "-q",
        "--json",
        json.to_str().unwrap(),
    ]);
    assert_mentions(&stderr, &["--json", "missing/report.json", "No such file"]);
}

#[test]
fn report_into_a_folder_and_plot_into_a_file_are_refused_before_any_photon() {
    let directory = tempfile::tempdir().unwrap();
    let folder = directory.path().to_str().unwrap();
    let stderr = fail_promptly(&["run", MODEL, "--photons", ENDLESS, "--report", folder]);
    assert_mentions(&stderr, &["--report", "is a directory, not a regular file"]);
    let stderr = fail_promptly(&["run", MODEL, "--photons", ENDLESS, "--plot", MODEL]);
    assert_mentions(&stderr, &["--plot", "is a regular file, not a folder"]);
    let checkpoint = directory.path().join("no/such/run.ckpt");
    let stderr = fail_promptly(&[
        "run",
        MODEL,
        "--photons",
        ENDLESS,
        "--checkpoint",
        checkpoint.to_str().unwrap(),
    ]);
    assert_mentions(&stderr, &["--checkpoint", "cannot create a file in"]);
    assert_eq!(entries(directory.path()), Vec::<String>::new());
}

#[test]
fn two_outputs_to_one_file_or_to_stdout_are_refused() {
    let directory = tempfile::tempdir().unwrap();
    let same = directory.path().join("same.out");
    let same = same.to_str().unwrap();
    let stderr = fail_promptly(&[
        "run",
        MODEL,
        "--photons",
        ENDLESS,
        "--json",
        same,
        "--report",
        same,
    ]);
    assert_mentions(&stderr, &["--json and --report both write", "same.out"]);
    let stderr = fail_promptly(&[
        "run",
        MODEL,
        "--photons",
        ENDLESS,
        "--json",
        "-",
        "--report",
        "-",
    ]);
    assert_mentions(
        &stderr,
        &["--json - and --report - would both write to standard output"],
    );
    let stderr = fail_promptly(&["profile", MODEL, "--csv", "-", "--report", "-"]);
    assert_mentions(
        &stderr,
        &["--csv - and --report - would both write to standard output"],
    );
}

#[test]
fn report_dash_is_the_html_on_stdout_and_no_file() {
    let directory = tempfile::tempdir().unwrap();
    let output = sojourn()
        .current_dir(directory.path())
        .args(["run", "--photons", "200", "-q", "--report", "-"])
        .output()
        .unwrap();
    assert!(output.status.success());
    let html = String::from_utf8(output.stdout).unwrap();
    assert!(
        html.trim_start().starts_with("<!DOCTYPE html>"),
        "{}",
        &html[..80]
    );
    assert!(html.trim_end().ends_with("</html>"));
    assert_eq!(entries(directory.path()), Vec::<String>::new());
}

#[cfg(unix)]
#[test]
fn a_symbolic_link_is_written_through_and_kept() {
    let directory = tempfile::tempdir().unwrap();
    let link = directory.path().join("latest.json");
    std::os::unix::fs::symlink("run-7.json", &link).unwrap();
    succeed(&[
        "run",
        "--photons",
        "100",
        "-q",
        "--json",
        link.to_str().unwrap(),
    ]);
    assert!(
        std::fs::symlink_metadata(&link)
            .unwrap()
            .file_type()
            .is_symlink()
    );
    let target = std::fs::read_to_string(directory.path().join("run-7.json")).unwrap();
    assert!(target.contains("\"photons\": 100"), "{target}");
    assert_eq!(entries(directory.path()), ["latest.json", "run-7.json"]);
}

/// A named pipe stands in for a device: writing to a real device as root would replace it
/// with a regular file if the refusal ever broke.
#[cfg(unix)]
#[test]
fn a_pipe_is_refused_and_left_a_pipe() {
    let directory = tempfile::tempdir().unwrap();
    let pipe = directory.path().join("pipe.json");
    let made = std::process::Command::new("mkfifo").arg(&pipe).status();
    if !made.is_ok_and(|status| status.success()) {
        eprintln!("no mkfifo here: skipped");
        return;
    }
    for args in [
        vec!["run", "--photons", ENDLESS, "--json"],
        vec!["profile", MODEL, "--csv"],
        vec![
            "star",
            "--polytrope",
            "3",
            "--mass",
            "1",
            "--radius",
            "1",
            "--out",
        ],
    ] {
        let mut args = args.clone();
        args.push(pipe.to_str().unwrap());
        let stderr = fail_promptly(&args);
        assert_mentions(&stderr, &["is a named pipe, not a regular file"]);
        let kind = std::fs::symlink_metadata(&pipe).unwrap().file_type();
        assert!(!kind.is_file(), "the pipe was replaced by {args:?}");
    }
    assert_eq!(entries(directory.path()), ["pipe.json"]);
}

/// Runs `sojourn ARGS` with stdout on `/dev/full` (every write fails with "no space").
#[cfg(target_os = "linux")]
fn with_full_stdout(args: &[&str]) -> Option<(Option<i32>, String)> {
    let full = std::fs::OpenOptions::new()
        .write(true)
        .open("/dev/full")
        .ok()?;
    let output = std::process::Command::new(env!("CARGO_BIN_EXE_sojourn"))
        .args(args)
        .stdout(full)
        .stderr(std::process::Stdio::piped())
        .output()
        .unwrap();
    Some((
        output.status.code(),
        String::from_utf8_lossy(&output.stderr).to_string(),
    ))
}

#[cfg(target_os = "linux")]
#[test]
fn a_full_stdout_is_an_error_naming_it_not_a_panic() {
    let directory = tempfile::tempdir().unwrap();
    let spec = directory.path().join("tiny.json");
    let model = std::fs::canonicalize(MODEL).unwrap();
    std::fs::write(
        &spec,
        format!(
            r#"{{"model": {:?}, "photons": 20,
                "parameters": [{{"path": "layers[0].albedo", "values": [0.9, 1]}}]}}"#,
            model.to_str().unwrap()
        ),
    )
    .unwrap();
    let spec = spec.to_str().unwrap();
    for args in [
        vec!["sweep", spec, "-q"],
        vec!["sweep", spec, "--dry-run"],
        vec!["run", "--photons", "50", "-q"],
        vec!["profile", MODEL],
    ] {
        let Some((code, stderr)) = with_full_stdout(&args) else {
            return;
        };
        assert_eq!(code, Some(1), "{args:?}: {stderr}");
        assert!(!stderr.contains("panicked"), "{args:?}: {stderr}");
        assert_mentions(&stderr, &["cannot write to standard output"]);
    }
}
