//! Opacity tables in a model: a table generated from the built-in law reproduces the law's
//! optical depth and diffusion times, points outside a table are refused (or clamped and
//! flagged on request), and every malformed table names its file, line and value.

use std::path::Path;
use std::sync::Arc;

use sojourn::analysis::ProfileAnalysis;
use sojourn::analysis::stellar::StellarAnalysis;
use sojourn::medium::Medium;
use sojourn::medium::model_file::model_from_value;
use sojourn::opacity::{GasState, OpacitySpec, OpacityTable, OutsidePolicy};
use sojourn::star::builder::{PolytropeStar, TableChoice, interior_opacity};

/// `count` values from 10^from to 10^to, evenly spaced in log.
fn log_grid(from: f64, to: f64, count: usize) -> Vec<f64> {
    (0..count)
        .map(|k| 10f64.powf(from + (to - from) * k as f64 / (count - 1) as f64))
        .collect()
}

/// Writes `table` into `folder` as `name` and returns the Sun-like star built with it,
/// loaded from a model file in the same folder.
fn star_with_table(folder: &Path, table: OpacityTable, outside: OutsidePolicy) -> Medium {
    std::fs::write(folder.join("table.csv"), table.to_csv(&[])).unwrap();
    let built = PolytropeStar {
        opacity_table: Some(TableChoice {
            file: "table.csv".into(),
            table: Arc::new(table),
            outside,
        }),
        ..PolytropeStar::default()
    }
    .build()
    .unwrap();
    let label = folder.join("star.json").display().to_string();
    model_from_value(&built.model_json, &label).unwrap()
}

/// The built-in electron scattering + Kramers law (X = 0.70, Z = 0.02) on a 60 × 60 grid,
/// log T = 4 … 8, log ρ = −10 … 3.
fn law_table() -> OpacityTable {
    let law = interior_opacity().build().unwrap();
    OpacityTable::from_grid(
        "law",
        &log_grid(4.0, 8.0, 60),
        &log_grid(-10.0, 3.0, 60),
        |t, rho| {
            law.opacity_cm2_g(&GasState {
                density_g_cm3: rho,
                temperature_k: t,
                hydrogen_x: 0.7,
                metals_z: 0.02,
            })
        },
    )
    .unwrap()
}

#[test]
fn a_table_of_the_law_reproduces_its_optical_depth_and_diffusion_time() {
    // The acceptance test: 60 × 60 points, the n = 3 Sun-like star, within 0.5 %.
    // (The interpolation is exact on the pure power laws; the error comes from the
    // electron-scattering / Kramers transition and is far smaller.)
    let folder = tempfile::tempdir().unwrap();
    let with_table = star_with_table(folder.path(), law_table(), OutsidePolicy::Refuse);
    let with_law =
        model_from_value(&PolytropeStar::default().build().unwrap().model_json, "law").unwrap();
    let table = ProfileAnalysis::new(&with_table).unwrap();
    let law = ProfileAnalysis::new(&with_law).unwrap();
    // The table starts at 10⁴ K, the law's lower limit: the surface is cut at the same place.
    assert!((with_table.size_cm() / with_law.size_cm() - 1.0).abs() < 1e-12);
    let relative = |a: f64, b: f64| (a / b - 1.0).abs();
    let tau = relative(table.optical_depth, law.optical_depth);
    let time = relative(table.diffusion.mean_time_s, law.diffusion.mean_time_s);
    let weighted = relative(
        table.diffusion.luminosity_weighted_time_s.unwrap(),
        law.diffusion.luminosity_weighted_time_s.unwrap(),
    );
    assert!(
        tau < 5e-3 && time < 5e-3 && weighted < 5e-3,
        "τ {tau}, T {time}, t_L {weighted}"
    );
    // Measured: all three within 1e−3 (a guard on the interpolation's accuracy).
    assert!(
        tau < 1e-3 && time < 1e-3 && weighted < 1e-3,
        "τ {tau}, T {time}, t_L {weighted}"
    );
    let used = table.profile.as_ref().unwrap().layers[0]
        .opacity_table
        .clone()
        .unwrap();
    assert_eq!(used.grid, [60, 60]);
    assert_eq!(used.clamped_rows, 0);
}

#[test]
fn points_outside_the_table_are_refused_or_clamped_when_asked() {
    // A table starting at ρ = 1e−6 g/cm³: the surface layers of the star (ρ ≈ 4e−8 at the
    // cut) lie below it.
    let law = interior_opacity().build().unwrap();
    let narrow = || {
        OpacityTable::from_grid(
            "narrow",
            &log_grid(4.0, 8.0, 20),
            &log_grid(-6.0, 3.0, 20),
            |t, rho| {
                law.opacity_cm2_g(&GasState {
                    density_g_cm3: rho,
                    temperature_k: t,
                    hydrogen_x: 0.7,
                    metals_z: 0.02,
                })
            },
        )
        .unwrap()
    };
    let folder = tempfile::tempdir().unwrap();
    std::fs::write(folder.path().join("table.csv"), narrow().to_csv(&[])).unwrap();
    let mut built = PolytropeStar {
        opacity_table: Some(TableChoice {
            file: "table.csv".into(),
            table: Arc::new(narrow()),
            outside: OutsidePolicy::Refuse,
        }),
        ..PolytropeStar::default()
    }
    .build()
    .unwrap();
    let label = folder.path().join("star.json").display().to_string();
    let error = model_from_value(&built.model_json, &label)
        .unwrap_err()
        .to_string();
    for needle in [
        "star.json",
        "layers[0].profile.density",
        "lies outside the opacity table table.csv",
        "rho 1e-6 – 1e3 g/cm^3",
        "clamp",
    ] {
        assert!(error.contains(needle), "{needle:?} missing from: {error}");
    }
    // Asked for, clamping loads the model and the report flags the clamped rows.
    built.model_json["layers"][0]["profile"]["opacity_table"] =
        serde_json::json!({ "file": "table.csv", "outside": "clamp" });
    let medium = model_from_value(&built.model_json, &label).unwrap();
    let report = ProfileAnalysis::new(&medium).unwrap();
    let used = report.profile.as_ref().unwrap().layers[0]
        .opacity_table
        .clone()
        .unwrap();
    assert_eq!(used.outside, "clamp");
    assert!(used.clamped_rows > 0);
    assert!(
        report
            .notes
            .iter()
            .any(|n| n.contains("clamped to its edges"))
    );
}

#[test]
fn malformed_tables_name_the_file_the_line_and_the_value() {
    let folder = tempfile::tempdir().unwrap();
    let good = law_table().to_csv(&["a test table".to_string()]);
    // Line numbers: 1 comment, 2 header, then rows; the 5th row is on line 7.
    let lines: Vec<&str> = good.lines().collect();
    let fifth = lines[6];
    let fields: Vec<&str> = fifth.split(',').collect();
    let replace = |with: &str| good.replacen(fifth, with, 1);
    let cases = [
        (
            replace(&format!("{},{},-2.5", fields[0], fields[1])),
            vec!["line 7, column 'opacity_cm2_g'", "-2.5"],
        ),
        (
            replace(&format!("{},{},0", fields[0], fields[1])),
            vec!["line 7, column 'opacity_cm2_g'", "0: expected"],
        ),
        (
            replace(&format!("{},abc,{}", fields[0], fields[2])),
            vec!["line 7, column 'density_g_cm3'", "\"abc\" is not a number"],
        ),
        (
            replace(&format!("1.5e4,{},{}", fields[1], fields[2])),
            vec!["line 7: the temperature 15000 K", "not a rectilinear grid"],
        ),
        (
            good.replacen(&format!("{fifth}\n"), "", 1),
            vec!["no row for the grid point T = 10000 K, rho = 7.6094966854"],
        ),
        (
            "temperature_k,density_g_cm3,opacity_cm2_g\n1e4,1,1\n1e5,1,1\n".to_string(),
            vec![
                "2 temperature(s) × 1 density",
                "at least 2 temperatures × 2 densities",
            ],
        ),
    ];
    for (text, needles) in cases {
        let path = folder.path().join("bad.csv");
        std::fs::write(&path, &text).unwrap();
        let error = OpacityTable::read(&path).unwrap_err().to_string();
        assert!(error.contains("bad.csv"), "{error}");
        for needle in needles {
            assert!(error.contains(needle), "{needle:?} missing from: {error}");
        }
    }
}

#[test]
fn the_demo_table_star_keeps_its_opacity_inside_the_table() {
    // The shipped demo (an invented table) covers the Sun-like star without clamping, and
    // its bump raises the envelope opacity over the law it was made from.
    let medium =
        sojourn::medium::model_file::load_model(Path::new("models/veyra-n3-demo-table.json"))
            .unwrap();
    let summary = &medium.profiles()[0];
    assert_eq!(summary.opacity_table.as_ref().unwrap().clamped_rows, 0);
    assert!(
        StellarAnalysis::of(&medium)
            .unwrap()
            .luminosity_erg_s
            .is_some()
    );
    let spec = OpacitySpec::parse_short("smooth").unwrap();
    assert!(spec.build().is_ok());
}
