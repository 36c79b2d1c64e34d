//! `sojourn import`: the example table, the mappings of the issue as written, the round trip
//! from a built star, and bad tables.

use std::path::Path;

use super::scale_support::sojourn;
use serde_json::Value;

fn profile_json(model: &Path) -> Value {
    let output = sojourn()
        .arg("profile")
        .arg(model)
        .args(["--json", "-"])
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&output.stdout).unwrap()
}

fn import(table: &Path, args: &[&str], out: &Path) -> std::process::Output {
    sojourn()
        .arg("import")
        .arg(table)
        .args(args)
        .arg("--out")
        .arg(out)
        .output()
        .unwrap()
}

#[test]
fn example_table_imports_with_the_documented_mapping() {
    // The mapping line of examples/README.md: three preamble lines skipped, then the header.
    let directory = tempfile::tempdir().unwrap();
    let out = directory.path().join("brisa-4.json");
    let output = import(
        Path::new("examples/brisa-4-profile.tsv"),
        &[
            "--skip-rows",
            "3",
            "--columns",
            "radius=radius_rsun:R_sun,log_temperature=log10_temperature_k,log_density=log10_density_g_cm3,hydrogen=hydrogen_fraction,metals=metal_fraction",
            "--opacity",
            "es+kramers",
        ],
        &out,
    );
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    assert!(output.stderr.is_empty(), "nothing assumed");
    let report = profile_json(&out);
    // The table's outer radius, 0.746250 R☉, and its central density 10^1.48406.
    let radius = report["radius_cm"].as_f64().unwrap();
    assert!((radius / (0.74625 * 6.957e10) - 1.0).abs() < 1e-12);
    let rho_c = report["central_density_g_cm3"].as_f64().unwrap();
    assert!((rho_c / 10f64.powf(1.48406) - 1.0).abs() < 1e-12);
    assert_eq!(report["shells"][0]["inner_radius_cm"], 0.0);
    // Without --name the model is named after the table file.
    assert_eq!(
        report["model"]["name"].as_str().unwrap(),
        "imported table brisa-4-profile.tsv"
    );
    // Without --skip-rows the first preamble line is taken for the header, and the second
    // line is refused with its line number.
    let unskipped = import(
        Path::new("examples/brisa-4-profile.tsv"),
        &[
            "--columns",
            "radius=radius_rsun:R_sun,log_temperature=log10_temperature_k,log_density=log10_density_g_cm3,hydrogen=hydrogen_fraction,metals=metal_fraction",
        ],
        &directory.path().join("unskipped.json"),
    );
    assert!(!unskipped.status.success());
}

#[test]
fn issue_mappings_work_as_written() {
    let directory = tempfile::tempdir().unwrap();
    let table = directory.path().join("star.txt");
    std::fs::write(
        &table,
        "r rho T kappa\n0 80 1.5e7 2.0\n3e10 10 5e6 5.0\n6e10 0.1 5e5 40.0\n7e10 1e-4 2e4 900\n",
    )
    .unwrap();
    // --columns radius=NAME,density=NAME,temperature=NAME (radius in cm by default).
    let out = directory.path().join("law.json");
    let output = import(
        &table,
        &["--columns", "radius=r,density=rho,temperature=T"],
        &out,
    );
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    // The composition and law it had to assume are said on stderr.
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        stderr.contains("assumed") && stderr.contains("hydrogen = 0.7"),
        "{stderr}"
    );
    assert_eq!(profile_json(&out)["radius_cm"], 7e10);
    // --columns radius=NAME,density=NAME,opacity=NAME.
    let out = directory.path().join("kappa.json");
    let output = import(
        &table,
        &["--columns", "radius=r,density=rho,opacity=kappa"],
        &out,
    );
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let report = profile_json(&out);
    // τ of a linearly interpolated κρ: exact quadrature of piecewise quadratics.
    let (r, rho, kappa) = (
        [0.0, 3e10, 6e10, 7e10],
        [80.0, 10.0, 0.1, 1e-4],
        [2.0, 5.0, 40.0, 900.0],
    );
    let mut tau = 0.0;
    for k in 0..3 {
        // ∫ (a + b s)(c + d s) ds over [0, h] with s from the row below.
        let h: f64 = r[k + 1] - r[k];
        let (a, b) = (rho[k], (rho[k + 1] - rho[k]) / h);
        let (c, d) = (kappa[k], (kappa[k + 1] - kappa[k]) / h);
        tau += a * c * h + (a * d + b * c) * h * h / 2.0 + b * d * h.powi(3) / 3.0;
    }
    let measured = report["optical_depth"].as_f64().unwrap();
    assert!((measured / tau - 1.0).abs() < 1e-12, "{measured} vs {tau}");
    assert!(report["shells"][0]["temperature_k"].is_null());
}

#[test]
fn round_trip_from_a_built_star_reproduces_tau_and_time() {
    // A table written from a built polytrope and imported back: τ and diffusion time to 1e−6.
    let directory = tempfile::tempdir().unwrap();
    let model = directory.path().join("star.json");
    let table = directory.path().join("star.csv");
    let output = sojourn()
        .args([
            "star",
            "--polytrope",
            "1.5",
            "--mass",
            "0.5",
            "--radius",
            "0.5",
            "--hydrogen",
            "0.72",
            "--metals",
            "0.01",
            "--opacity",
            "es+kramers",
            "--out",
        ])
        .arg(&model)
        .arg("--table")
        .arg(&table)
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let back = directory.path().join("back.json");
    let output = import(
        &table,
        &[
            "--columns",
            "radius=radius_cm,density=density_g_cm3,temperature=temperature_k,hydrogen=hydrogen,metals=metals",
            "--opacity",
            "es+kramers",
        ],
        &back,
    );
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let (a, b) = (profile_json(&model), profile_json(&back));
    for path in [
        "/optical_depth",
        "/diffusion/mean_time_s",
        "/diffusion/naive_time_s",
        "/radius_cm",
        "/photosphere_radius_cm",
    ] {
        let (x, y) = (
            a.pointer(path).unwrap().as_f64().unwrap(),
            b.pointer(path).unwrap().as_f64().unwrap(),
        );
        assert!((x / y - 1.0).abs() < 1e-6, "{path}: {x} vs {y}");
    }
}

/// Imports `text` with the mapping radius=r,density=rho,temperature=T and returns stderr,
/// asserting a clean failure: exit 1, no panic, the file named, no output written.
fn rejected(text: &str, mapping: &str) -> String {
    let directory = tempfile::tempdir().unwrap();
    let table = directory.path().join("bad-table.txt");
    std::fs::write(&table, text).unwrap();
    let out = directory.path().join("out.json");
    let output = import(
        &table,
        &[
            "--columns",
            mapping,
            "--hydrogen",
            "0.7",
            "--metals",
            "0.02",
        ],
        &out,
    );
    let stderr = String::from_utf8_lossy(&output.stderr).to_string();
    assert_eq!(output.status.code(), Some(1), "accepted:\n{text}\n{stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert!(!out.exists());
    stderr
}

const MAPPING: &str = "radius=r,density=rho,temperature=T";

fn assert_mentions(stderr: &str, needles: &[&str]) {
    for needle in needles {
        assert!(stderr.contains(needle), "{needle:?} missing from: {stderr}");
    }
}

#[test]
fn missing_column() {
    let stderr = rejected("r rho temp\n0 1 1e6\n1 1 1e6\n", MAPPING);
    assert_mentions(
        &stderr,
        &["bad-table.txt", "line 1", "no column 'T'", "r, rho, temp"],
    );
}

#[test]
fn non_monotonic_radius() {
    let stderr = rejected("r rho T\n0 1 1e6\n2 1 1e6\n1 1 1e6\n3 1 1e6\n", MAPPING);
    assert_mentions(
        &stderr,
        &["bad-table.txt", "line 4", "column 'r'", "strictly"],
    );
}

#[test]
fn negative_density() {
    let stderr = rejected("r,rho,T\n0,1,1e6\n1,-0.5,1e6\n", MAPPING);
    assert_mentions(
        &stderr,
        &["line 3", "column 'rho'", "-0.5", "a density >= 0"],
    );
}

#[test]
fn nan_value() {
    let stderr = rejected("r rho T\n0 1 1e6\n1 1 NaN\n", MAPPING);
    assert_mentions(&stderr, &["line 3", "column 'T'", "NaN"]);
}

#[test]
fn unparsable_number_at_line_k() {
    let stderr = rejected(
        "# comment\nr rho T\n0 1 1e6\n1 1 1e6\n2 1.0.0 1e6\n",
        MAPPING,
    );
    assert_mentions(
        &stderr,
        &["line 5", "column 'rho'", "\"1.0.0\" is not a number"],
    );
}

#[test]
fn duplicate_column_names() {
    let stderr = rejected("r rho T rho\n0 1 1e6 2\n1 1 1e6 2\n", MAPPING);
    assert_mentions(
        &stderr,
        &["line 1", "'rho' appears 2 times", "columns 2, 4"],
    );
}

#[test]
fn too_few_rows() {
    let stderr = rejected("r rho T\n0 1 1e6\n", MAPPING);
    assert_mentions(&stderr, &["1 data row(s)", "at least 2"]);
    let stderr = rejected("r rho T\n", MAPPING);
    assert_mentions(&stderr, &["0 data row(s)"]);
}

#[test]
fn ragged_row_and_bad_mapping() {
    let stderr = rejected("r rho T\n0 1 1e6\n1 1\n", MAPPING);
    assert_mentions(&stderr, &["line 3", "2 field(s)", "3 columns"]);
    let stderr = rejected(
        "r rho T\n0 1 1e6\n1 1 1e6\n",
        "radius=r,dens=rho,temperature=T",
    );
    assert_mentions(&stderr, &["unknown quantity \"dens\""]);
    let stderr = rejected(
        "r rho T\n0 1 1e6\n1 1 1e6\n",
        "radius=r:parsec,density=rho,temperature=T",
    );
    assert_mentions(&stderr, &["scale \"parsec\""]);
}

#[test]
fn import_with_an_opacity_table_and_energy_laws() {
    // The example table with the demo opacity table and pp + CNO evaluated at every row.
    let directory = tempfile::tempdir().unwrap();
    let out = directory.path().join("brisa-4.json");
    let table = std::fs::canonicalize("models/tables/demo-opacity-bump.csv").unwrap();
    let output = sojourn()
        .arg("import")
        .arg("examples/brisa-4-profile.tsv")
        .args([
            "--skip-rows",
            "3",
            "--columns",
            "radius=radius_rsun:R_sun,log_temperature=log10_temperature_k,log_density=log10_density_g_cm3,hydrogen=hydrogen_fraction,metals=metal_fraction",
            "--length-unit",
            "R_sun",
            "--energy",
            "pp+cno",
            "--opacity-table",
        ])
        .arg(&table)
        .arg("--out")
        .arg(&out)
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    assert!(String::from_utf8_lossy(&output.stdout).contains("luminosity"));
    let model: Value = serde_json::from_str(&std::fs::read_to_string(&out).unwrap()).unwrap();
    let profile = &model["layers"][0]["profile"];
    assert!(
        profile["opacity_table"]
            .as_str()
            .unwrap()
            .ends_with("demo-opacity-bump.csv")
    );
    assert!(profile["opacity_law"].is_null());
    assert!(profile["energy_generation"].is_array());
    let report = profile_json(&out);
    assert!(report["luminosity_erg_s"].as_f64().unwrap() > 0.0);
    // An energy_generation column is read as such; laws and a column together are refused.
    let both = import(
        Path::new("examples/brisa-4-profile.tsv"),
        &[
            "--skip-rows",
            "3",
            "--columns",
            "radius=radius_rsun:R_sun,log_density=log10_density_g_cm3,log_temperature=log10_temperature_k,energy_generation=hydrogen_fraction",
            "--energy",
            "pp",
        ],
        &directory.path().join("both.json"),
    );
    assert!(!both.status.success());
    assert!(String::from_utf8_lossy(&both.stderr).contains("energy_generation is both mapped"));
    // A table without a temperature column cannot use an opacity table.
    let output = sojourn()
        .arg("import")
        .arg("examples/brisa-4-profile.tsv")
        .args([
            "--skip-rows",
            "3",
            "--columns",
            "radius=radius_rsun:R_sun,log_density=log10_density_g_cm3",
            "--opacity-table",
        ])
        .arg(&table)
        .arg("--out")
        .arg(directory.path().join("no-t.json"))
        .output()
        .unwrap();
    assert!(!output.status.success());
    assert!(String::from_utf8_lossy(&output.stderr).contains("an opacity table needs temperature"));
}
