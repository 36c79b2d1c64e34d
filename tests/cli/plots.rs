//! `sojourn run --plot DIR --report PATH`: the figures and the HTML report as files.

use assert_cmd::Command;

fn sojourn() -> Command {
    Command::cargo_bin("sojourn").expect("binary built")
}

#[test]
fn plot_and_report_write_svg_files_and_one_self_contained_page() {
    let directory = tempfile::tempdir().unwrap();
    let plots = directory.path().join("figures");
    let report = directory.path().join("run.html");
    let output = sojourn()
        .args([
            "run",
            "models/test-sphere-tau20.json",
            "--photons",
            "1500",
            "--plot",
        ])
        .arg(&plots)
        .arg("--report")
        .arg(&report)
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let text = String::from_utf8(output.stdout).unwrap();
    assert!(
        text.contains("Outcome"),
        "the text report still goes to stdout"
    );
    let mut names: Vec<String> = std::fs::read_dir(&plots)
        .unwrap()
        .map(|entry| entry.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(
        names,
        ["escape-time.svg", "scatterings.svg", "time-budget.svg"],
        "no temporary files left"
    );
    for name in &names {
        let svg = std::fs::read_to_string(plots.join(name)).unwrap();
        roxmltree::Document::parse(&svg).unwrap_or_else(|e| panic!("{name}: {e}"));
        assert!(
            svg.contains("Test sphere of optical radius 20"),
            "{name}: title names the model"
        );
        assert!(
            svg.contains("1\u{2009}500 photons"),
            "{name}: subtitle gives the photon count"
        );
    }
    let html = std::fs::read_to_string(&report).unwrap();
    assert!(html.starts_with("<!DOCTYPE html>"));
    assert_eq!(html.matches("<svg").count(), 3);
    assert!(
        html.contains("<pre>") && html.contains("rule of thumb"),
        "summary table inline"
    );
    // No external assets: nothing is fetched when the page opens.
    for needle in [
        "<script",
        "<link",
        "<img",
        "src=",
        "url(",
        "@import",
        "href=\"http",
    ] {
        assert!(
            !html.contains(needle),
            "report refers to an external asset: {needle}"
        );
    }
}

#[test]
fn json_on_stdout_stays_pure_with_plots() {
    let directory = tempfile::tempdir().unwrap();
    let output = sojourn()
        .args(["run", "--photons", "300", "--json", "-", "--plot"])
        .arg(directory.path())
        .output()
        .unwrap();
    assert!(output.status.success());
    let _: serde_json::Value = serde_json::from_slice(&output.stdout).expect("only JSON on stdout");
    assert!(directory.path().join("escape-time.svg").exists());
}

#[test]
fn unwritable_plot_directory_is_an_error() {
    let directory = tempfile::tempdir().unwrap();
    let file = directory.path().join("a-file");
    std::fs::write(&file, "x").unwrap();
    let output = sojourn()
        .args(["run", "--photons", "100", "--plot"])
        .arg(&file)
        .output()
        .unwrap();
    assert!(!output.status.success());
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(stderr.contains("figure directory"), "{stderr}");
}
