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
