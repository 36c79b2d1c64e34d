//! The accelerated walker against the direct walker and against exact diffusion results.

use sojourn::diffusion::ks::{kolmogorov_p_value, two_sample_ks_binned};
use sojourn::diffusion::{MILNE_EXTRAPOLATION_LENGTH, estimate, first_passage};
use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::tally::PathStats;
use sojourn::transport::{Acceleration, PhaseFunction};
use sojourn::units::SPEED_OF_LIGHT_CM_S;

use crate::support::profiles::exponential_sphere;
use crate::support::{assert_within, layer, run_method, uniform_sphere};

/// Compares accelerated and direct escape times on `medium`: means within 4σ of their
/// difference, and the two-sample KS p-value above 0.001 (the two histograms are
/// consistent with one distribution; Press et al. 2007, Numerical Recipes 3rd ed.,
/// §14.3.3, for the asymptotic p-value).
fn accelerated_matches_direct(what: &str, medium: &Medium, photons: u64) {
    let direct = run_method(medium, photons, 61, Method::Direct)
        .tally
        .all_escapes();
    let fast = run_method(medium, photons, 62, Method::Accelerated).tally;
    assert!(fast.walk().jumps.value() > 0.0, "{what}: no jump was taken");
    let fast = fast.all_escapes();
    let difference_sigma = (direct.time_s().std_error().unwrap().powi(2)
        + fast.time_s().std_error().unwrap().powi(2))
    .sqrt();
    assert_within(
        &format!("{what}: mean escape time"),
        fast.time_s().mean().unwrap(),
        direct.time_s().mean().unwrap(),
        difference_sigma,
        4.0,
        0.0,
    );
    let p = ks_p_value(&direct, &fast);
    assert!(p > 1e-3, "{what}: two-sample KS p-value {p}");
}

fn ks_p_value(a: &PathStats, b: &PathStats) -> f64 {
    let (counts_a, counts_b) = a.time_histogram().aligned_counts(b.time_histogram());
    let d = two_sample_ks_binned(&counts_a, &counts_b);
    let (n1, n2) = (a.count() as f64, b.count() as f64);
    kolmogorov_p_value(d, n1 * n2 / (n1 + n2))
}

#[test]
fn off_centre_uniform_sphere_matches_direct() {
    let medium = Medium::sphere(
        vec![(1.0, layer(60.0, 1.0, PhaseFunction::Isotropic))],
        Source::SpherePoint { radius_cm: 0.4 },
    )
    .unwrap();
    accelerated_matches_direct("uniform τ = 60, r0 = 0.4 R", &medium, 12_000);
}

#[test]
fn two_zone_sphere_matches_direct() {
    // Core 100× more opaque than the envelope (τ 60 + 6).
    let medium = Medium::sphere(
        vec![
            (0.3, layer(200.0, 1.0, PhaseFunction::Isotropic)),
            (3.3, layer(2.0, 1.0, PhaseFunction::Isotropic)),
        ],
        Source::centre(),
    )
    .unwrap();
    accelerated_matches_direct("two-zone sphere", &medium, 8_000);
}

#[test]
fn smooth_profile_matches_direct() {
    // σ ∝ e^(−3r/R), τ = 190, as 300 smooth shells, default γ and ε: jumps happen in the
    // inner, most opaque part.
    let medium = exponential_sphere(600.0, 3.0, 1.0, 300);
    let config = |method, seed| RunConfig {
        photons: 4_000,
        seed,
        method,
        ..RunConfig::default()
    };
    let direct = run(&medium, &config(Method::Direct, 63))
        .tally
        .all_escapes();
    let fast = run(&medium, &config(Method::Accelerated, 64)).tally;
    assert!(fast.walk().jumps.value() > 1.0 * 4_000.0);
    let fast = fast.all_escapes();
    let sigma = (direct.time_s().std_error().unwrap().powi(2)
        + fast.time_s().std_error().unwrap().powi(2))
    .sqrt();
    assert_within(
        "profile mean time",
        fast.time_s().mean().unwrap(),
        direct.time_s().mean().unwrap(),
        sigma,
        4.0,
        0.0,
    );
    assert!(ks_p_value(&direct, &fast) > 1e-3);
}

#[test]
fn anisotropic_sphere_matches_direct() {
    // HG g = 0.8, τ = 150 (transport optical radius 30), source off centre.
    let medium = Medium::sphere(
        vec![(
            1.0,
            layer(150.0, 1.0, PhaseFunction::henyey_greenstein(0.8).unwrap()),
        )],
        Source::SpherePoint { radius_cm: 0.3 },
    )
    .unwrap();
    accelerated_matches_direct("HG g = 0.8", &medium, 6_000);
}

#[test]
fn very_deep_uniform_spheres_follow_diffusion() {
    // τ = 1e4 and 1e6, centred source: mean scatterings (τ + q∞)²/2 (docs/references.md, Diffusion
    // theory 1, extrapolated boundary), and the 5/50/95 % quantiles of the escape time within 2 %
    // of the first-passage law with R + q∞ l and D = c l / 3 (docs/references.md, Diffusion theory
    // 1). Tolerances: the mean within 4σ and within 1 %; quantiles 2 % (histogram resolution 0.1 %,
    // sampling error of a quantile with 10⁵ photons ≈ 0.3 %).
    for tau in [1e4, 1e6] {
        let medium = uniform_sphere(tau);
        let tally = run_method(&medium, 100_000, 65, Method::Auto).tally;
        let escapes = tally.escaped();
        let expected = (tau + MILNE_EXTRAPOLATION_LENGTH).powi(2) / 2.0;
        let mean = escapes.scatterings().mean().unwrap();
        assert_within(
            "N",
            mean,
            expected,
            escapes.scatterings().std_error().unwrap(),
            4.0,
            0.0,
        );
        assert!((mean / expected - 1.0).abs() < 0.01);
        let l = 1.0 / tau;
        let radius = 1.0 + MILNE_EXTRAPOLATION_LENGTH * l;
        let diffusion = SPEED_OF_LIGHT_CM_S * l / 3.0;
        for p in [0.05, 0.5, 0.95] {
            let expected = first_passage::quantile(p) * radius * radius / diffusion;
            let measured = escapes.time_histogram().quantile(p).unwrap();
            assert!(
                (measured / expected - 1.0).abs() < 0.02,
                "τ = {tau}, p = {p}: {measured} vs {expected}"
            );
        }
    }
}

#[test]
fn cost_grows_like_log_tau() {
    // Source at R/2: the walk approaches the surface in jumps that shrink geometrically, so
    // the number of jumps plus flights per photon grows like log τ. Measured (γ = 10): ≈ 91 at 10³,
    // ≈ 227 at 10¹². Asserted: from τ = 10³ to 10¹² (log τ × 4) the cost grows less than 6×.
    let cost = |tau: f64| {
        let medium = Medium::sphere(
            vec![(1.0, layer(tau, 1.0, PhaseFunction::Isotropic))],
            Source::SpherePoint { radius_cm: 0.5 },
        )
        .unwrap();
        let tally = run_method(&medium, 2_000, 66, Method::Auto).tally;
        (tally.walk().jumps.value() + tally.walk().direct_steps.value()) / 2_000.0
    };
    let (shallow, deep) = (cost(1e3), cost(1e12));
    assert!(
        deep < 6.0 * shallow,
        "cost {shallow} at 1e3, {deep} at 1e12"
    );
}

#[test]
fn drift_correction_removes_the_gradient_bias() {
    // Smooth profile σ ∝ e^(−3r/R), τ ≈ 9500: the diffusion mean exit time on the same
    // shells (extrapolated boundary) is the reference, accurate to O(1/τ). Without the
    // drift correction the walk solves D ΔT instead of ∇·(D∇T) and is off by tens of
    // percent whatever ε; with it, the bias at ε = 0.2 is within 4σ + 1.5 % (measured
    // +0.5 % ± 0.4 % with 2·10⁴ photons; +6 % at ε = 0.4: second order in ε).
    let medium = exponential_sphere(3.0e4, 3.0, 1.0, 3000);
    let reference = estimate(&medium).mean_time_extrapolated_s;
    let bias = |drift_correction: bool| {
        let config = RunConfig {
            photons: 3_000,
            seed: 67,
            method: Method::Accelerated,
            acceleration: Acceleration {
                gamma: 10.0,
                epsilon: 0.2,
                drift_correction,
            },
            ..RunConfig::default()
        };
        let escapes = run(&medium, &config).tally.escaped().clone();
        (
            escapes.time_s().mean().unwrap() / reference - 1.0,
            escapes.time_s().std_error().unwrap() / reference,
        )
    };
    let (uncorrected, _) = bias(false);
    let (corrected, sigma) = bias(true);
    assert!(uncorrected > 0.2, "uncorrected bias {uncorrected}");
    assert!(
        corrected.abs() < 4.0 * sigma + 0.015,
        "corrected bias {corrected} ± {sigma}"
    );
}

#[test]
fn thin_media_give_identical_photons_with_either_walker() {
    // Where no jump applies, the accelerated walker draws exactly the direct walker's
    // random numbers (README, "Accelerated walk").
    let medium = Medium::slab(
        vec![(
            2.0,
            Layer::new(
                "",
                1.0,
                0.9,
                PhaseFunction::henyey_greenstein(0.75).unwrap(),
                1.0,
            )
            .unwrap(),
        )],
        1.0,
        Source::normal_beam(),
    )
    .unwrap();
    let direct = run_method(&medium, 3_000, 68, Method::Direct).tally;
    let auto = run_method(&medium, 3_000, 68, Method::Auto).tally;
    assert_eq!(direct.reflected(), auto.reflected());
    assert_eq!(direct.transmitted(), auto.transmitted());
}

#[test]
fn sun_like_polytrope_matches_the_profile_diffusion_time() {
    // The demo star Veyra (n = 3 polytrope, 1 M☉, 1 R☉, electron scattering + Kramers,
    // τ ≈ 2.3e13): the accelerated Monte Carlo mean escape time against the diffusion mean
    // exit time `sojourn profile` reports, (1/c) ∫ r/l dr (docs/references.md, Diffusion theory 1),
    // which is exact to O(1/τ) here. Acceptance: within 2 % and within 4σ (10⁴ photons: σ ≈ 0.5 %;
    // measured +0.3 %).
    let path = std::path::Path::new("models/veyra-n3-sun-like.json");
    let medium = sojourn::medium::model_file::load_model(path).unwrap();
    let profile = sojourn::analysis::ProfileAnalysis::new(&medium).unwrap();
    let reference = profile.diffusion.mean_time_s;
    let tally = run_method(&medium, 10_000, 69, Method::Auto).tally;
    let escapes = tally.escaped();
    let mean = escapes.time_s().mean().unwrap();
    let sigma = escapes.time_s().std_error().unwrap();
    assert_within("Veyra mean escape time", mean, reference, sigma, 4.0, 0.0);
    assert!(
        (mean / reference - 1.0).abs() < 0.02,
        "{mean} vs {reference}"
    );
}
