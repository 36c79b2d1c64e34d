//! Malformed model files: each gives a clear error naming the file and the field, a non-zero
//! exit, and never a panic.

use assert_cmd::Command;

/// Runs `sojourn run` on a model file with `text` and returns stderr, asserting failure.
fn rejected(text: &str) -> String {
    let directory = tempfile::tempdir().unwrap();
    let path = directory.path().join("broken-model.json");
    std::fs::write(&path, text).unwrap();
    let output = Command::cargo_bin("sojourn")
        .unwrap()
        .args(["run", "--photons", "10"])
        .arg(&path)
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&output.stderr).to_string();
    assert!(!output.status.success(), "accepted:\n{text}");
    assert_eq!(output.status.code(), Some(1), "{stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert!(
        stderr.contains("broken-model.json"),
        "error does not name the file: {stderr}"
    );
    assert!(output.stdout.is_empty(), "partial output on stdout");
    stderr
}

fn assert_mentions(stderr: &str, needles: &[&str]) {
    for needle in needles {
        assert!(stderr.contains(needle), "{needle:?} missing from: {stderr}");
    }
}

const SPHERE_LAYER: &str = r#"{"outer_radius": 1, "extinction_coefficient": 5}"#;

fn sphere(layers: &str) -> String {
    format!(r#"{{"geometry": "sphere", "layers": [{layers}]}}"#)
}

#[test]
fn bad_json_names_line_and_column() {
    let stderr = rejected("{\"geometry\": \"sphere\",\n \"layers\": [ }");
    assert_mentions(&stderr, &["line 2", "not valid JSON"]);
}

#[test]
fn unknown_key_is_a_typo() {
    let stderr = rejected(&sphere(
        r#"{"outer_radius": 1, "extinction_coefficient": 5, "albdo": 0.5}"#,
    ));
    assert_mentions(&stderr, &["layers[0]", "albdo"]);
}

#[test]
fn negative_thickness() {
    let stderr = rejected(
        r#"{"geometry": "slab", "layers": [{"thickness": -2, "extinction_coefficient": 1}]}"#,
    );
    assert_mentions(&stderr, &["layers[0].thickness", "-2", "> 0"]);
}

#[test]
fn non_increasing_radii() {
    let stderr = rejected(&sphere(&format!(
        r#"{SPHERE_LAYER}, {{"outer_radius": 0.5, "extinction_coefficient": 1}}"#
    )));
    assert_mentions(
        &stderr,
        &[
            "layers[1].outer_radius",
            "0.5",
            "greater than layers[0].outer_radius",
        ],
    );
}

#[test]
fn albedo_above_one() {
    let stderr = rejected(&sphere(
        r#"{"outer_radius": 1, "extinction_coefficient": 5, "albedo": 1.2}"#,
    ));
    assert_mentions(&stderr, &["layers[0].albedo", "1.2", "between 0 and 1"]);
}

#[test]
fn anisotropy_beyond_one() {
    let stderr = rejected(&sphere(
        r#"{"outer_radius": 1, "extinction_coefficient": 5, "phase": {"kind": "henyey_greenstein", "g": 1.5}}"#,
    ));
    assert_mentions(&stderr, &["layers[0].phase.g", "1.5", "between -1 and 1"]);
}

#[test]
fn missing_opacity() {
    let stderr = rejected(&sphere(r#"{"outer_radius": 1, "density": 1.4}"#));
    assert_mentions(&stderr, &["layers[0].opacity", "missing"]);
}

#[test]
fn nan_is_not_a_number() {
    let stderr = rejected(&sphere(
        r#"{"outer_radius": 1, "extinction_coefficient": NaN}"#,
    ));
    assert_mentions(&stderr, &["not valid JSON"]);
    let stderr = rejected(&sphere(
        r#"{"outer_radius": 1, "extinction_coefficient": "NaN"}"#,
    ));
    assert_mentions(
        &stderr,
        &["layers[0].extinction_coefficient", "invalid type"],
    );
}

#[test]
fn empty_layers() {
    let stderr = rejected(r#"{"geometry": "sphere", "layers": []}"#);
    assert_mentions(&stderr, &["layers", "at least one layer"]);
}

#[test]
fn zero_extinction_everywhere() {
    let stderr = rejected(&sphere(
        r#"{"outer_radius": 1, "extinction_coefficient": 0}"#,
    ));
    assert_mentions(&stderr, &["layers", "zero extinction"]);
}

#[test]
fn source_outside_the_medium() {
    let stderr = rejected(&format!(
        r#"{{"geometry": "sphere", "length_unit": "km", "layers": [{SPHERE_LAYER}], "source": {{"kind": "point", "radius": 3}}}}"#
    ));
    assert_mentions(&stderr, &["source.radius", "3 km", "[0, 1 km)"]);
    let stderr = rejected(
        r#"{"geometry": "slab", "layers": [{"thickness": 1, "extinction_coefficient": 1}], "source": {"kind": "point", "depth": 4}}"#,
    );
    assert_mentions(&stderr, &["source.depth", "4 cm"]);
}

#[test]
fn unknown_unit() {
    let stderr = rejected(&format!(
        r#"{{"geometry": "sphere", "length_unit": "furlong", "layers": [{SPHERE_LAYER}]}}"#
    ));
    assert_mentions(&stderr, &["length_unit", "furlong", "solar_radius"]);
}

#[test]
fn wrong_geometry_field_and_missing_geometry() {
    let stderr = rejected(
        r#"{"geometry": "slab", "layers": [{"outer_radius": 1, "extinction_coefficient": 1}]}"#,
    );
    assert_mentions(&stderr, &["layers[0].outer_radius", "not used by a slab"]);
    let stderr = rejected(r#"{"layers": [{"outer_radius": 1, "extinction_coefficient": 1}]}"#);
    assert_mentions(&stderr, &["geometry"]);
}

#[test]
fn beam_angle_out_of_range_and_refractive_index_below_one() {
    let stderr = rejected(
        r#"{"geometry": "slab", "layers": [{"thickness": 1, "extinction_coefficient": 1}], "source": {"kind": "beam", "polar_angle_deg": 95}}"#,
    );
    assert_mentions(&stderr, &["source.polar_angle_deg", "95", "[0, 90)"]);
    let stderr = rejected(
        r#"{"geometry": "slab", "layers": [{"thickness": 1, "extinction_coefficient": 1, "refractive_index": 0.5}]}"#,
    );
    assert_mentions(&stderr, &["layers[0].refractive_index", "0.5", ">= 1"]);
}

#[test]
fn missing_file_is_reported() {
    let output = Command::cargo_bin("sojourn")
        .unwrap()
        .args(["run", "no/such/model.json"])
        .output()
        .unwrap();
    assert!(!output.status.success());
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        stderr.contains("no/such/model.json") && stderr.contains("cannot read"),
        "{stderr}"
    );
}

#[test]
fn ambient_sides_are_checked() {
    let stderr = rejected(
        r#"{"geometry": "slab", "layers": [{"thickness": 1, "extinction_coefficient": 1}], "ambient_index": {"above": 1.0, "below": 0.5}}"#,
    );
    assert_mentions(&stderr, &["ambient_index.below", "0.5"]);
    let stderr = rejected(
        r#"{"geometry": "sphere", "layers": [{"outer_radius": 1, "extinction_coefficient": 1}], "ambient_index": 1.3}"#,
    );
    assert_mentions(&stderr, &["ambient_index", "slabs only"]);
}
