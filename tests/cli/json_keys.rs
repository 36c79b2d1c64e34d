//! The JSON outputs keep every key they had before the analysis layer was split from the
//! report: the key paths of fixed-seed runs of `run`, a shard file, `merge`, `profile` and
//! a sweep's table are compared with the lists in `tests/cli/json_keys/`, recorded from the
//! outputs of sojourn 0.1 before the split (the same commands). A key may be added only by
//! listing it in [`ADDED`] (and documenting it in the README's JSON tables); none may
//! disappear.

use std::collections::BTreeSet;
use std::path::Path;

use serde_json::Value;

use super::scale_support::{s, succeed};

/// Keys added since the recorded lists, each documented in the README.
const ADDED: &[&str] = &[
    "resolved.reflectance_decay.photons",
    "resolved.transmittance_decay.diffusion_rate_per_s",
    "resolved.transmittance_decay.from_s",
    "resolved.transmittance_decay.photons",
    "resolved.transmittance_decay.rate_per_s",
    "resolved.transmittance_decay.stderr_per_s",
    "resolved.transmittance_decay.to_s",
    "convective_base_radius_cm",
    "diffusion.convective_crossing_time_s",
    "diffusion.energy_content_time_s",
    "diffusion.flux_weighted_time_s",
    "diffusion.luminosity_weighted_time_extrapolated_s",
    "diffusion.luminosity_weighted_time_s",
    "diffusion.luminosity_weighted_time_to_convective_base_s",
    "diffusion.time_to_convective_base_s",
    "luminosity_erg_s",
    "photosphere",
    "photosphere.above_surface_cut",
    "photosphere.dropped_gas_optical_depth",
    "photosphere.method",
    "photosphere.radius_cm",
    "photosphere.temperature_k",
    "profile.layers[].luminosity_erg_s",
    "profile.layers[].opacity_table",
    "shells[].luminosity_erg_s",
    "zones",
    "zones[].inner_radius_cm",
    "zones[].kind",
    "zones[].outer_radius_cm",
    "stop_at",
    "effective_photons",
    "specular",
    "specular_stderr",
    "reflected_time_mean_s",
    "transmitted_time_mean_s",
    "walk.method_used",
    "walk.method_reason",
    "comparison.ks_p_value",
    "comparison.times_comparable",
    "comparison.verdict",
    "comparison.verdict.trustworthy",
    "comparison.verdict.reason",
    "comparison.notes",
    "diffusion.source_depth_cm",
    "diffusion.escape_probability",
    "diffusion.escape_time",
    "diffusion.escape_time.mean_s",
    "diffusion.escape_time.median_s",
    "diffusion.escape_time.p05_s",
    "diffusion.escape_time.p95_s",
    "diffusion.reflected",
    "diffusion.transmitted",
    "diffusion.absorbed",
    "diffusion.decay_rate_per_s",
    "comparison.escape_time_ratio",
    "comparison.escape_time_ratio_stderr",
    "comparison.ks_bins",
    "comparison.ks_at_s",
    "comparison.late_decay",
    "comparison.late_decay.from_s",
    "comparison.late_decay.photons",
    "comparison.late_decay.rate_per_s",
    "comparison.late_decay.stderr_per_s",
    "comparison.late_decay.diffusion_rate_per_s",
    "comparison.outcomes",
    "comparison.outcomes[].name",
    "comparison.outcomes[].monte_carlo",
    "comparison.outcomes[].stderr",
    "comparison.outcomes[].diffusion",
    "comparison.verdict.tolerance",
    // Residence tally and partial paths (time budget, path_by_layer).
    "time_budget.accrual_radius_10_percent_cm",
    "time_budget.accrual_radius_50_percent_cm",
    "time_budget.accrual_radius_90_percent_cm",
    "path_by_layer",
    "path_by_layer[].absorbed",
    "path_by_layer[].absorbed.mean_cm",
    "path_by_layer[].absorbed.pathlength_factor",
    "path_by_layer[].absorbed.stderr_cm",
    "path_by_layer[].escaped",
    "path_by_layer[].escaped.mean_cm",
    "path_by_layer[].escaped.pathlength_factor",
    "path_by_layer[].escaped.stderr_cm",
    "path_by_layer[].layer",
    "path_by_layer[].name",
    "path_by_layer[].reflected",
    "path_by_layer[].reflected.mean_cm",
    "path_by_layer[].reflected.pathlength_factor",
    "path_by_layer[].reflected.stderr_cm",
    "path_by_layer[].thickness_cm",
    "path_by_layer[].transmitted",
    "path_by_layer[].transmitted.mean_cm",
    "path_by_layer[].transmitted.pathlength_factor",
    "path_by_layer[].transmitted.stderr_cm",
    "residence_budget",
    "residence_budget.cells",
    "residence_budget.cells[].cumulative_time_s",
    "residence_budget.cells[].cumulative_time_s.stderr",
    "residence_budget.cells[].cumulative_time_s.value",
    "residence_budget.cells[].diffusion_time_s",
    "residence_budget.cells[].inner_cm",
    "residence_budget.cells[].layer",
    "residence_budget.cells[].outer_cm",
    "residence_budget.cells[].time_s",
    "residence_budget.cells[].time_s.stderr",
    "residence_budget.cells[].time_s.value",
    "residence_budget.diffusion_half_time_cm",
    "residence_budget.diffusion_mean_time_s",
    "residence_budget.diffusion_source",
    "residence_budget.half_time_cm",
    "residence_budget.half_time_cm.stderr",
    "residence_budget.half_time_cm.value",
    "residence_budget.mean_time_s",
    "residence_budget.mean_time_s.stderr",
    "residence_budget.mean_time_s.value",
    "residence_budget.photons",
    // Weighted photons and absorption rescaling.
    "absorption_mode",
    "reweighted",
    // Optics: collimated transmittance, R(ρ) and T(ρ) on logarithmic bins, detectors.
    "outcome.collimated_transmitted",
    "outcome.stderr.collimated_transmitted",
    "resolved.transport_mean_free_path_cm",
    "resolved.radial_edges_cm",
    "resolved.reflectance_per_cm2_stderr",
    "resolved.transmittance_per_cm2",
    "resolved.transmittance_per_cm2_stderr",
    "resolved.radial_nearer_fraction",
    "resolved.radial_farther_fraction",
    "resolved.dipole_reflectance_per_cm2",
    "detectors",
    "detectors[].name",
    "detectors[].face",
    "detectors[].inner_radius_cm",
    "detectors[].outer_radius_cm",
    "detectors[].acceptance_half_angle_deg",
    "detectors[].numerical_aperture",
    "detectors[].fraction",
    "detectors[].stderr",
    "detectors[].time_of_flight",
    "detectors[].time_of_flight.count",
    "detectors[].time_of_flight.mean_s",
    "detectors[].time_of_flight.stderr_s",
    "detectors[].time_of_flight.std_dev_s",
    "detectors[].time_of_flight.min_s",
    "detectors[].time_of_flight.max_s",
    "detectors[].time_of_flight.p05_s",
    "detectors[].time_of_flight.p25_s",
    "detectors[].time_of_flight.median_s",
    "detectors[].time_of_flight.p75_s",
    "detectors[].time_of_flight.p95_s",
    // sojourn fit (its own report; model.*, sojourn_version and elapsed_s as in run)
    "fit",
    "fit.absorption_coefficient",
    "fit.anisotropy",
    "fit.collimated_transmittance",
    "fit.conditioning",
    "fit.converged",
    "fit.covariance_log",
    "fit.evaluations",
    "fit.iterations",
    "fit.layer",
    "fit.layer_name",
    "fit.limits",
    "fit.matched",
    "fit.matched[].measured",
    "fit.matched[].model",
    "fit.matched[].model_stderr",
    "fit.matched[].name",
    "fit.matched[].uncertainty",
    "fit.method",
    "fit.misfit",
    "fit.path",
    "fit.path[].absorption_coefficient",
    "fit.path[].reduced_scattering_coefficient",
    "fit.photons_per_evaluation",
    "fit.photons_total",
    "fit.reason",
    "fit.reduced_scattering_coefficient",
    "fit.reflectance",
    "fit.scales",
    "fit.scattering_coefficient",
    "fit.seed",
    "fit.start",
    "fit.start.absorption_coefficient",
    "fit.start.method",
    "fit.start.reduced_scattering_coefficient",
    "fit.stderr",
    "fit.stderr.absorption_coefficient",
    "fit.stderr.correlation",
    "fit.stderr.reduced_scattering_coefficient",
    "fit.stderr.scattering_coefficient",
    "fit.stderr_measurement",
    "fit.stderr_measurement.absorption_coefficient",
    "fit.stderr_measurement.correlation",
    "fit.stderr_measurement.reduced_scattering_coefficient",
    "fit.stderr_measurement.scattering_coefficient",
    "fit.stderr_monte_carlo",
    "fit.stderr_monte_carlo.absorption_coefficient",
    "fit.stderr_monte_carlo.correlation",
    "fit.stderr_monte_carlo.reduced_scattering_coefficient",
    "fit.stderr_monte_carlo.scattering_coefficient",
    "fit.transmittance",
    "fit.unique",
    "fit.uniqueness",
    "fit.unscattered_transmittance_counted",
    "length_unit",
    "measurement",
    "measurement.collimated_transmittance",
    "measurement.collimated_transmittance.uncertainty",
    "measurement.collimated_transmittance.value",
    "measurement.reflectance",
    "measurement.reflectance.uncertainty",
    "measurement.reflectance.value",
    "measurement.specular_included",
    "measurement.transmittance",
    "measurement.transmittance.uncertainty",
    "measurement.transmittance.value",
];

/// Key paths of `value`: `a.b` for object keys, `a[]` for the elements of an array (the
/// union over all elements).
fn key_paths(value: &Value, prefix: &str, out: &mut BTreeSet<String>) {
    match value {
        Value::Object(map) => {
            for (key, inner) in map {
                let path = if prefix.is_empty() {
                    key.clone()
                } else {
                    format!("{prefix}.{key}")
                };
                out.insert(path.clone());
                key_paths(inner, &path, out);
            }
        }
        Value::Array(items) => {
            for item in items {
                key_paths(item, &format!("{prefix}[]"), out);
            }
        }
        _ => {}
    }
}

fn keys_of(value: &Value) -> BTreeSet<String> {
    let mut out = BTreeSet::new();
    key_paths(value, "", &mut out);
    out
}

/// A recorded list.
fn recorded(name: &str) -> BTreeSet<String> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/cli/json_keys")
        .join(name);
    std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("{}: {e}", path.display()))
        .lines()
        .map(str::trim)
        .filter(|l| !l.is_empty())
        .map(String::from)
        .collect()
}

/// Asserts that `actual` holds every recorded key of `name` and nothing else but keys
/// listed in [`ADDED`] whose parent path exists in `actual`.
fn assert_same_keys(name: &str, actual: &BTreeSet<String>) {
    let before = recorded(name);
    let lost: Vec<&String> = before.difference(actual).collect();
    assert!(lost.is_empty(), "{name}: keys lost: {lost:?}");
    let new: Vec<&String> = actual
        .difference(&before)
        .filter(|k| !ADDED.contains(&k.as_str()))
        .collect();
    assert!(
        new.is_empty(),
        "{name}: new keys {new:?}: document them in the README and list them in ADDED"
    );
}

fn model(name: &str) -> String {
    format!("{}/models/{name}", env!("CARGO_MANIFEST_DIR"))
}

#[test]
fn run_json_keeps_its_keys() {
    let sphere = succeed(&[
        "run",
        &model("test-sphere-tau20.json"),
        "--photons",
        "300",
        "--seed",
        "7",
        "--json",
        "-",
    ]);
    assert_same_keys(
        "run-sphere.keys",
        &keys_of(&serde_json::from_str(&sphere).unwrap()),
    );
    let slab = succeed(&[
        "run",
        &model("opal-diffuser.json"),
        "--photons",
        "3000",
        "--seed",
        "7",
        "--resolve",
        "--json",
        "-",
    ]);
    assert_same_keys(
        "run-slab-resolved.keys",
        &keys_of(&serde_json::from_str(&slab).unwrap()),
    );
}

#[test]
fn shard_and_merge_json_keep_their_keys() {
    let dir = tempfile::tempdir().unwrap();
    let opal = model("opal-diffuser.json");
    let mut files = Vec::new();
    for k in ["1/2", "2/2"] {
        let file = dir.path().join(format!("shard-{}.json", &k[..1]));
        succeed(&[
            "run",
            &opal,
            "--photons",
            "3000",
            "--seed",
            "7",
            "--resolve",
            "--shard",
            k,
            "--json",
            s(&file),
            "--quiet",
        ]);
        files.push(file);
    }
    let text = std::fs::read_to_string(&files[0]).unwrap();
    let shard: BTreeSet<String> = keys_of(&serde_json::from_str(&text).unwrap())
        .into_iter()
        .filter(|k| !k.starts_with("tally.") && !k.starts_with("shard.model."))
        .collect();
    let extra = recorded("shard-extra.keys");
    let lost: Vec<&String> = extra.difference(&shard).collect();
    assert!(lost.is_empty(), "shard file: keys lost: {lost:?}");
    // The rest is the run report of the shard's photons (a late-decay fit may be null
    // with half the photons, so only a subset of the full run's keys is required).
    let report = recorded("run-slab-resolved.keys");
    let unknown: Vec<&String> = shard
        .iter()
        .filter(|k| !extra.contains(*k) && !report.contains(*k) && !ADDED.contains(&k.as_str()))
        .collect();
    assert!(unknown.is_empty(), "shard file: new keys {unknown:?}");
    let merged = succeed(&["merge", s(&files[0]), s(&files[1]), "--json", "-"]);
    assert_same_keys(
        "run-slab-resolved.keys",
        &keys_of(&serde_json::from_str(&merged).unwrap()),
    );
}

#[test]
fn profile_json_keeps_its_keys() {
    let profile = succeed(&[
        "profile",
        &model("test-polytrope-n3-tau50.json"),
        "--json",
        "-",
    ]);
    assert_same_keys(
        "profile.keys",
        &keys_of(&serde_json::from_str(&profile).unwrap()),
    );
}

#[test]
fn sweep_rows_keep_their_columns() {
    let dir = tempfile::tempdir().unwrap();
    let spec = dir.path().join("spec.json");
    std::fs::write(
        &spec,
        format!(
            r#"{{ "model": {:?}, "photons": 200, "seed": 7,
                 "parameters": [ {{ "path": "layers[0].extinction_coefficient", "values": [2, 5] }} ],
                 "combine": "grid" }}"#,
            model("test-sphere-tau20.json")
        ),
    )
    .unwrap();
    let out = dir.path().join("out");
    succeed(&["sweep", s(&spec), "--out", s(&out), "--quiet"]);
    let table = std::fs::read_to_string(out.join("sweep.jsonl")).unwrap();
    for line in table.lines() {
        assert_same_keys(
            "sweep-row.keys",
            &keys_of(&serde_json::from_str(line).unwrap()),
        );
    }
}

#[test]
fn fit_json_keys_are_listed() {
    let fit = succeed(&[
        "fit",
        &model("../examples/fit/lumaris-film.json"),
        "--reflectance",
        "0.52",
        "--transmittance",
        "0.35",
        "--collimated-transmittance",
        "0.004",
        "--uncertainty",
        "0.005",
        "--photons",
        "2000",
        "--json",
        "-",
    ]);
    let run = recorded("run-slab-resolved.keys");
    let unknown: Vec<String> = keys_of(&serde_json::from_str(&fit).unwrap())
        .into_iter()
        .filter(|k| !ADDED.contains(&k.as_str()) && !run.contains(k))
        .collect();
    assert!(
        unknown.is_empty(),
        "fit: new keys {unknown:?}: document them in the README and list them in ADDED"
    );
}
