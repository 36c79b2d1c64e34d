//! Test and example media with smooth extinction profiles, represented as many thin shells
//! of constant extinction joined by smooth (non-sharp) boundaries.

use sojourn::medium::{Layer, Medium, Source};
use sojourn::transport::PhaseFunction;

/// A sphere of radius `radius_cm` with extinction σ(r) = `central` · e^(−`falloff` r/R),
/// cut into `shells` equal shells whose extinction is the exact radial average of σ over
/// the shell (so the optical depth along a radius is exact). Centred isotropic source.
pub fn exponential_sphere(central: f64, falloff: f64, radius_cm: f64, shells: usize) -> Medium {
    let width = radius_cm / shells as f64;
    let layers = (0..shells)
        .map(|k| {
            let (a, b) = (k as f64 * width, (k + 1) as f64 * width);
            let scale = radius_cm / falloff;
            let mean = central * scale * ((-a / scale).exp() - (-b / scale).exp()) / width;
            let layer = Layer::new("", mean, 1.0, PhaseFunction::Isotropic, 1.0).expect("valid");
            (b, layer)
        })
        .collect();
    Medium::sphere(layers, Source::centre())
        .expect("valid sphere")
        .with_smooth_boundaries(0..shells)
}

/// Optical depth from the centre to the surface of [`exponential_sphere`]:
/// central · R (1 − e^(−falloff)) / falloff.
pub fn exponential_sphere_depth(central: f64, falloff: f64, radius_cm: f64) -> f64 {
    central * radius_cm * (1.0 - (-falloff).exp()) / falloff
}

/// The steep-profile check model: one tabulated profile layer, radius 0…1 cm in 200 steps,
/// opacity 1 cm²/g, density 1200.4027 e^(−8r) g/cm³ (σ(r) = ρ(r)), centred source, built
/// through the model-file loader with its default sub-shell tolerance. Its optical radius
/// is 1200.4027 (1 − e⁻⁸)/8 = 150.02.
pub fn steep_profile_sphere() -> Medium {
    let radius: Vec<f64> = (0..=200).map(|k| k as f64 / 200.0).collect();
    let density: Vec<f64> = radius
        .iter()
        .map(|r| 1200.4027 * (-8.0 * r).exp())
        .collect();
    let opacity = vec![1.0; radius.len()];
    let model = serde_json::json!({
        "name": "steep exponential profile",
        "geometry": "sphere",
        "layers": [{
            "name": "steep",
            "profile": { "radius": radius, "density": density, "opacity": opacity }
        }]
    });
    sojourn::medium::model_file::model_from_value(&model, "steep profile").expect("valid model")
}

/// A uniform sphere of radius 1 cm, optical radius `tau` (extinction `tau`/cm), albedo 1,
/// phase function `phase`, isotropic point source at `source_radius_cm`.
pub fn uniform_sphere_from(tau: f64, phase: PhaseFunction, source_radius_cm: f64) -> Medium {
    let layer = Layer::new("", tau, 1.0, phase, 1.0).expect("valid layer");
    Medium::sphere(
        vec![(1.0, layer)],
        Source::SpherePoint {
            radius_cm: source_radius_cm,
        },
    )
    .expect("valid sphere")
}
