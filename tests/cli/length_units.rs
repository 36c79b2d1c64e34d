//! One spelling per length unit, accepted everywhere a unit is: `R_sun` and `solar_radius`
//! (and the other aliases of `LengthUnit::parse`) in a model file's `length_unit`, in
//! `import --length-unit`, in the radius scale of an import mapping and in
//! `import --total-radius`; reports and written files use the canonical `R_sun`.

use std::path::Path;

use super::scale_support::sojourn;
use serde_json::Value;

const SOLAR_RADIUS_CM: f64 = 6.957e10;

/// The JSON report of a 200-photon run of `model`.
fn run_json(model: &Path) -> Value {
    let output = sojourn()
        .arg("run")
        .arg(model)
        .args(["--photons", "200", "--json", "-"])
        .output()
        .unwrap();
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&output.stdout).unwrap()
}

fn import(table: &Path, out: &Path, args: &[&str]) -> std::process::Output {
    sojourn()
        .arg("import")
        .arg(table)
        .args(args)
        .arg("--out")
        .arg(out)
        .output()
        .unwrap()
}

fn model_file(path: &Path) -> Value {
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

#[test]
fn model_files_accept_every_spelling_of_the_solar_radius() {
    let directory = tempfile::tempdir().unwrap();
    for spelling in ["R_sun", "solar_radius", "Rsun", "R☉"] {
        let path = directory.path().join("sphere.json");
        std::fs::write(
            &path,
            format!(
                r#"{{"geometry": "sphere", "length_unit": "{spelling}",
                    "layers": [{{"outer_radius": 0.5, "extinction_coefficient": 4.0}}]}}"#
            ),
        )
        .unwrap();
        let report = run_json(&path);
        let size = report["model"]["size_cm"].as_f64().unwrap();
        assert_eq!(size, 0.5 * SOLAR_RADIUS_CM, "{spelling}");
        // Reports name the unit by its one canonical symbol.
        assert_eq!(report["model"]["length_unit"], "R_sun", "{spelling}");
    }
    // µm and its ASCII spelling are one unit too.
    for spelling in ["um", "µm", "micron"] {
        let path = directory.path().join("slab.json");
        std::fs::write(
            &path,
            format!(
                r#"{{"geometry": "slab", "length_unit": "{spelling}",
                    "layers": [{{"thickness": 20, "extinction_coefficient": 0.1}}]}}"#
            ),
        )
        .unwrap();
        let report = run_json(&path);
        assert!((report["model"]["size_cm"].as_f64().unwrap() - 20e-4).abs() < 1e-15);
        assert_eq!(report["model"]["length_unit"], "um", "{spelling}");
    }
}

#[test]
fn import_accepts_every_spelling_in_every_place() {
    let directory = tempfile::tempdir().unwrap();
    let table = directory.path().join("star.txt");
    // Radius as a fraction of the total radius in `f`, as solar radii in `r`.
    std::fs::write(
        &table,
        "f r rho T\n0 0 80 1.5e7\n0.5 0.4 10 5e6\n0.9 0.72 0.1 5e5\n1 0.8 1e-4 2e4\n",
    )
    .unwrap();
    let mut outer_radii = Vec::new();
    for (unit, scale, total) in [
        ("R_sun", "R_sun", "0.8R_sun"),
        ("solar_radius", "solar_radius", "0.8 solar_radius"),
        ("Rsun", "Rsun", "0.8Rsun"),
    ] {
        // --length-unit and the radius scale of the mapping.
        let out = directory.path().join(format!("{unit}-scale.json"));
        let output = import(
            &table,
            &out,
            &[
                "--columns",
                &format!("radius=r:{scale},density=rho,temperature=T"),
                "--length-unit",
                unit,
            ],
        );
        assert!(
            output.status.success(),
            "{unit}: {}",
            String::from_utf8_lossy(&output.stderr)
        );
        let model = model_file(&out);
        assert_eq!(model["length_unit"], "R_sun", "{unit}: written canonically");
        let radii = model["layers"][0]["profile"]["radius"].clone();
        outer_radii.push(radii[3].as_f64().unwrap());
        // --total-radius with the same unit gives the same model.
        let fraction_out = directory.path().join(format!("{unit}-total.json"));
        let output = import(
            &table,
            &fraction_out,
            &[
                "--columns",
                "radius=f,density=rho,temperature=T",
                "--total-radius",
                total,
                "--length-unit",
                unit,
            ],
        );
        assert!(
            output.status.success(),
            "{unit}: {}",
            String::from_utf8_lossy(&output.stderr)
        );
        let fractions = model_file(&fraction_out)["layers"][0]["profile"]["radius"].clone();
        for row in 0..4 {
            let (a, b) = (
                radii[row].as_f64().unwrap(),
                fractions[row].as_f64().unwrap(),
            );
            assert!(
                (a - b).abs() <= 1e-12 * a.max(1.0),
                "{unit} row {row}: {a} {b}"
            );
        }
    }
    // The model is in solar radii: the table's outer 0.8 R☉.
    for radius in outer_radii {
        assert!((radius - 0.8).abs() < 1e-12, "{radius}");
    }
    // An unknown unit is refused with every accepted spelling named.
    let output = import(
        &table,
        &directory.path().join("bad.json"),
        &[
            "--columns",
            "radius=r,density=rho,temperature=T",
            "--length-unit",
            "furlong",
        ],
    );
    assert!(!output.status.success());
    let stderr = String::from_utf8_lossy(&output.stderr);
    for word in ["furlong", "R_sun", "solar_radius", "um"] {
        assert!(stderr.contains(word), "{word} in {stderr}");
    }
}
