//! `sojourn run --plot DIR --report PATH`: the figures and the HTML report as files.

use super::scale_support::sojourn;

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
    assert!(
        stderr.contains("--plot") && stderr.contains("not a folder"),
        "{stderr}"
    );
}

/// The `.svg` files in `directory`, sorted, each parsed as XML.
fn svg_files(directory: &std::path::Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(directory)
        .unwrap()
        .map(|entry| entry.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    for name in &names {
        let svg = std::fs::read_to_string(directory.join(name)).unwrap();
        roxmltree::Document::parse(&svg).unwrap_or_else(|e| panic!("{name}: {e}"));
    }
    names
}

#[test]
fn profile_plot_and_report_write_structure_and_budget() {
    let directory = tempfile::tempdir().unwrap();
    let plots = directory.path().join("figures");
    let report = directory.path().join("profile.html");
    let output = sojourn()
        .args(["profile", "models/ember-two-zone.json", "--plot"])
        .arg(&plots)
        .arg("--report")
        .arg(&report)
        .output()
        .unwrap();
    assert!(output.status.success(), "{output:?}");
    assert!(String::from_utf8_lossy(&output.stdout).contains("Time budget"));
    assert_eq!(
        svg_files(&plots),
        ["mean-free-path.svg", "optical-depth.svg", "time-budget.svg"]
    );
    let html = std::fs::read_to_string(&report).unwrap();
    assert_eq!(html.matches("<svg").count(), 3);
    assert!(html.contains("Time budget"), "the text report is embedded");
}

#[test]
fn resolved_slab_run_adds_its_panels_and_a_sweep_plots_its_table() {
    let directory = tempfile::tempdir().unwrap();
    let plots = directory.path().join("slab");
    let output = sojourn()
        .args([
            "run",
            "models/opal-diffuser.json",
            "--photons",
            "800",
            "--resolve",
            "--quiet",
            "--plot",
        ])
        .arg(&plots)
        .output()
        .unwrap();
    assert!(output.status.success(), "{output:?}");
    assert_eq!(
        svg_files(&plots),
        [
            "absorption-depth.svg",
            "escape-time.svg",
            "radial-reflectance.svg",
            "scatterings.svg",
            "time-resolved.svg"
        ]
    );

    let figures = directory.path().join("sweep-figures");
    let output = sojourn()
        .args([
            "sweep",
            "examples/sweeps/sphere-optical-depth.json",
            "--quiet",
            "--out",
        ])
        .arg(directory.path().join("sweep"))
        .arg("--plot")
        .arg(&figures)
        .output()
        .unwrap();
    assert!(output.status.success(), "{output:?}");
    assert_eq!(svg_files(&figures), ["sweep-escape-time.svg"]);
    let svg = std::fs::read_to_string(figures.join("sweep-escape-time.svg")).unwrap();
    assert!(svg.contains("Monte Carlo mean ± 1σ"));
    assert!(svg.contains("layers[0].extinction_coefficient"));
}

#[test]
fn a_zip_sweep_plots_one_series_titled_by_what_varied() {
    let directory = tempfile::tempdir().unwrap();
    let spec = directory.path().join("zip.json");
    let model = std::fs::canonicalize("models/test-sphere-tau20.json").unwrap();
    std::fs::write(
        &spec,
        format!(
            r#"{{"model": {model:?}, "photons": 300, "combine": "zip", "parameters": [
                {{"path": "layers[0].extinction_coefficient", "values": [1, 2, 4, 8]}},
                {{"path": "layers[0].albedo", "values": [1, 0.99, 0.98, 0.97]}}]}}"#,
            model = model.to_str().unwrap()
        ),
    )
    .unwrap();
    let figures = directory.path().join("figures");
    let output = sojourn()
        .arg("sweep")
        .arg(&spec)
        .args(["--quiet", "--out"])
        .arg(directory.path().join("out"))
        .arg("--plot")
        .arg(&figures)
        .output()
        .unwrap();
    assert!(output.status.success(), "{output:?}");
    let svg = std::fs::read_to_string(figures.join("sweep-escape-time.svg")).unwrap();
    assert_eq!(svg.matches("Monte Carlo mean").count(), 1, "one series");
    // The title (wrapped over two lines if long) names both parameters.
    assert!(
        svg.contains("layers[0].albedo") && svg.contains("together)"),
        "{svg}"
    );
}
