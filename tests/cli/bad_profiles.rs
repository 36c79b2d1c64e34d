//! Malformed profile layers in model files: each error names the file, the JSON path (down
//! to the row) and what was expected; no panics.

use assert_cmd::Command;

fn rejected(text: &str) -> String {
    let directory = tempfile::tempdir().unwrap();
    let path = directory.path().join("broken-profile.json");
    std::fs::write(&path, text).unwrap();
    let output = Command::cargo_bin("sojourn")
        .unwrap()
        .arg("profile")
        .arg(&path)
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&output.stderr).to_string();
    assert_eq!(output.status.code(), Some(1), "accepted:\n{text}\n{stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert!(stderr.contains("broken-profile.json"), "{stderr}");
    stderr
}

fn model(profile: &str) -> String {
    format!(
        r#"{{"geometry": "sphere", "length_unit": "km", "layers": [{{"name": "core", "profile": {{{profile}}}}}]}}"#
    )
}

const LAW: &str = r#""temperature": [1e7, 1e6, 1e5], "hydrogen": 0.7, "metals": 0.02,
    "opacity_law": {"kind": "electron_scattering"}"#;

fn assert_mentions(stderr: &str, needles: &[&str]) {
    for needle in needles {
        assert!(stderr.contains(needle), "{needle:?} missing from: {stderr}");
    }
}

#[test]
fn negative_density_names_the_row() {
    let stderr = rejected(&model(&format!(
        r#""radius": [0, 1, 2], "density": [1, -3, 0], {LAW}"#
    )));
    assert_mentions(&stderr, &["layers[0].profile.density[1]", "-3", "g/cm^3"]);
}

#[test]
fn decreasing_radius_is_shown_in_the_file_unit() {
    let stderr = rejected(&model(&format!(
        r#""radius": [0, 2, 1], "density": [1, 1, 1], {LAW}"#
    )));
    assert_mentions(
        &stderr,
        &["layers[0].profile.radius[2]", "1 km", "radius[1] (2 km)"],
    );
}

#[test]
fn column_lengths_must_match() {
    let stderr = rejected(&model(&format!(
        r#""radius": [0, 1, 2], "density": [1, 1], {LAW}"#
    )));
    assert_mentions(
        &stderr,
        &["layers[0].profile.density", "2 values, expected 3"],
    );
}

#[test]
fn law_needs_composition_and_temperature() {
    let stderr = rejected(&model(
        r#""radius": [0, 1], "density": [1, 1], "temperature": [1e7, 1e6], "metals": 0.02,
           "opacity_law": {"kind": "electron_scattering"}"#,
    ));
    assert_mentions(&stderr, &["layers[0].profile.hydrogen", "missing"]);
}

#[test]
fn law_and_opacity_column_are_exclusive() {
    let stderr = rejected(&model(&format!(
        r#""radius": [0, 1, 2], "density": [1, 1, 1], "opacity": [1, 1, 1], {LAW}"#
    )));
    assert_mentions(&stderr, &["layers[0].profile.opacity", "not both"]);
}

#[test]
fn unknown_profile_key_is_a_typo() {
    let stderr = rejected(&model(&format!(
        r#""radius": [0, 1, 2], "density": [1, 1, 1], "temprature": [1, 1, 1], {LAW}"#
    )));
    assert_mentions(&stderr, &["layers[0].profile", "temprature"]);
}

#[test]
fn plain_keys_do_not_mix_with_a_profile() {
    let stderr = rejected(&format!(
        r#"{{"geometry": "sphere", "layers": [{{"outer_radius": 3, "profile": {{"radius": [0, 1, 2], "density": [1, 1, 1], {LAW}}}}}]}}"#
    ));
    assert_mentions(
        &stderr,
        &["layers[0].outer_radius", "not used with \"profile\""],
    );
}

#[test]
fn profiles_are_for_spheres() {
    let stderr = rejected(&format!(
        r#"{{"geometry": "slab", "layers": [{{"profile": {{"radius": [0, 1, 2], "density": [1, 1, 1], {LAW}}}}}]}}"#
    ));
    assert_mentions(&stderr, &["layers[0].profile", "spheres"]);
}

#[test]
fn composition_must_leave_room_for_helium() {
    let stderr = rejected(&model(
        r#""radius": [0, 1], "density": [1, 1], "temperature": [1e7, 1e6],
           "hydrogen": [0.7, 0.9], "metals": 0.2, "opacity_law": {"kind": "electron_scattering"}"#,
    ));
    assert_mentions(&stderr, &["layers[0].profile.metals", "X + Z <= 1"]);
}

#[test]
fn cut_inner_layer_is_refused() {
    // T falls below the Kramers range inside a layer that is not the outermost.
    let stderr = rejected(
        r#"{"geometry": "sphere", "layers": [
            {"profile": {"radius": [0, 1, 2], "density": [1, 1, 1], "temperature": [1e7, 1e6, 10],
              "hydrogen": 0.7, "metals": 0.02, "opacity_law": {"kind": "kramers_free_free"}}},
            {"outer_radius": 3, "extinction_coefficient": 1}]}"#,
    );
    assert_mentions(
        &stderr,
        &["layers[0].profile.temperature", "only the outermost layer"],
    );
}

#[test]
fn tolerance_out_of_range() {
    let stderr = rejected(&model(&format!(
        r#""radius": [0, 1, 2], "density": [1, 1, 1], "tolerance": 1.5, {LAW}"#
    )));
    assert_mentions(&stderr, &["layers[0].profile.tolerance", "1.5"]);
}
