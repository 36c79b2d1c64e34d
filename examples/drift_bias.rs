//! Bias of the accelerated walk in gradients: mean time, mean scatterings and escape-time
//! quantiles against the gradient tolerance ε.
//!
//! 1. Spheres (radial passages): the steep profile σ ∝ e^(−8r/R), τ = 150 (one profile
//!    layer, the acceptance model), against the direct walk of the same model. ε sets where
//!    diffusion is trusted: l_tr may change by at most ε over γ transport mean free paths.
//! 2. Slabs (local jumps): 2000 smooth layers with σ ∝ e^(−2z/L), τ ≈ 2600, point source
//!    at mid-depth, against the diffusion mean exit time and scatterings of the same layers
//!    (extrapolated faces, exact to O(1/τ)), with and without the first-order drift tilt.
//!
//! `cargo run --release --example drift_bias [-- PHOTONS]` (default 40 000 per run; the
//! direct reference of part 1 is kept in `SOJOURN_VALIDATION_CACHE` if that is set).

#[allow(dead_code)]
#[path = "../tests/support/profiles.rs"]
mod profiles;

use sojourn::diffusion::estimate;
use sojourn::diffusion::ks::{kolmogorov_p_value, two_sample_ks_binned};
use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::tally::{Moments, PathStats, Tally};
use sojourn::transport::{Acceleration, PhaseFunction};

fn ratio(a: &Moments, b: &Moments) -> (f64, f64) {
    let (ma, ea) = (a.mean().unwrap(), a.std_error().unwrap());
    let (mb, eb) = (b.mean().unwrap(), b.std_error().unwrap());
    let r = ma / mb;
    (r, r * ((ea / ma).powi(2) + (eb / mb).powi(2)).sqrt())
}

fn tally(
    medium: &Medium,
    photons: u64,
    seed: u64,
    method: Method,
    acceleration: Acceleration,
) -> Tally {
    run(
        medium,
        &RunConfig {
            photons,
            seed,
            method,
            acceleration,
            ..RunConfig::default()
        },
    )
    .tally
}

/// The direct reference, cached like `validate_acceleration` does.
fn direct_reference(medium: &Medium, photons: u64) -> Tally {
    let cache = std::env::var_os("SOJOURN_VALIDATION_CACHE")
        .map(|dir| std::path::PathBuf::from(dir).join(format!("drift-steep-{photons}.json")));
    if let Some(text) = cache.as_ref().and_then(|p| std::fs::read_to_string(p).ok())
        && let Ok(value) = serde_json::from_str::<serde_json::Value>(&text)
        && let Ok(cached) = Tally::from_json(value)
    {
        return cached;
    }
    let fresh = tally(medium, photons, 1, Method::Direct, Acceleration::default());
    if let Some(path) = cache {
        std::fs::write(
            path,
            serde_json::to_string(&fresh).expect("tally serialises"),
        )
        .expect("cache directory writable");
    }
    fresh
}

fn quantile_ratios(fast: &PathStats, reference: &PathStats) -> String {
    [0.05, 0.5, 0.95]
        .iter()
        .map(|&p| {
            let a = fast.time_histogram().quantile(p).unwrap();
            let b = reference.time_histogram().quantile(p).unwrap();
            format!("{:.4}", a / b)
        })
        .collect::<Vec<_>>()
        .join(" / ")
}

fn main() {
    let photons: u64 = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(40_000);

    let steep = profiles::steep_profile_sphere();
    let direct = direct_reference(&steep, photons);
    let reference = direct.all_escapes();
    println!(
        "Spheres: steep profile σ ∝ e^(−8r/R), τ = 150.02, {photons} photons per run, against the direct walk (seeds 1 and 2)"
    );
    println!(
        "| ε | time / direct | scatterings / direct | quantiles 5 / 50 / 95 % / direct | KS p | jumps per photon | flights per photon |"
    );
    println!("|---|---|---|---|---|---|---|");
    for epsilon in [0.03, 0.1, 0.3, 1.0] {
        let acceleration = Acceleration::default()
            .with_epsilon(epsilon)
            .expect("valid ε");
        let fast = tally(&steep, photons, 2, Method::Accelerated, acceleration);
        let escapes = fast.all_escapes();
        let (t, ts) = ratio(escapes.time_s(), reference.time_s());
        let (n, ns) = ratio(escapes.scatterings(), reference.scatterings());
        let d = {
            let (left, right) = reference
                .time_histogram()
                .aligned_counts(escapes.time_histogram());
            two_sample_ks_binned(&left, &right)
        };
        let (n1, n2) = (reference.count() as f64, escapes.count() as f64);
        let p = kolmogorov_p_value(d, n1 * n2 / (n1 + n2));
        println!(
            "| {epsilon} | {t:.4} ± {ts:.4} | {n:.4} ± {ns:.4} | {} | {p:.3} | {:.1} | {:.0} |",
            quantile_ratios(&escapes, &reference),
            fast.walk().jumps.value() / photons as f64,
            fast.walk().direct_steps.value() / photons as f64
        );
    }

    let layers: Vec<(f64, Layer)> = (0..2000)
        .map(|k| {
            let (a, b) = (k as f64 / 2000.0, (k + 1) as f64 / 2000.0);
            let sigma = 6000.0 * ((-2.0 * a).exp() - (-2.0 * b).exp()) / 2.0 * 2000.0;
            (
                0.0005,
                Layer::new("", sigma, 1.0, PhaseFunction::Isotropic, 1.0).expect("valid"),
            )
        })
        .collect();
    let slab = Medium::slab(layers, 1.0, Source::SlabPoint { depth_cm: 0.5 })
        .expect("valid slab")
        .with_smooth_boundaries(0..2000);
    let diffusion = estimate(&slab);
    let slab_photons = photons / 4;
    println!();
    println!(
        "Slabs: σ ∝ e^(−2z/L), τ = {:.0}, point source at mid-depth, {slab_photons} photons per run, against diffusion (extrapolated faces)",
        diffusion.optical_depth
    );
    println!(
        "| ε | drift correction | time / diffusion | scatterings / diffusion | jumps per photon | flights per photon |"
    );
    println!("|---|---|---|---|---|---|");
    for epsilon in [0.4, 0.2, 0.1] {
        for drift_correction in [false, true] {
            let acceleration =
                Acceleration::new(10.0, epsilon, drift_correction).expect("valid γ and ε");
            let fast = tally(&slab, slab_photons, 3, Method::Accelerated, acceleration);
            let escapes = fast.all_escapes();
            let time = escapes.time_s().mean().unwrap() / diffusion.mean_time_extrapolated_s;
            let time_sigma =
                escapes.time_s().std_error().unwrap() / diffusion.mean_time_extrapolated_s;
            let n = escapes.scatterings().mean().unwrap() / diffusion.mean_scatterings_extrapolated;
            let n_sigma = escapes.scatterings().std_error().unwrap()
                / diffusion.mean_scatterings_extrapolated;
            println!(
                "| {epsilon} | {} | {time:.4} ± {time_sigma:.4} | {n:.4} ± {n_sigma:.4} | {:.0} | {:.0} |",
                if drift_correction { "yes" } else { "no" },
                fast.walk().jumps.value() / slab_photons as f64,
                fast.walk().direct_steps.value() / slab_photons as f64
            );
        }
    }
}
