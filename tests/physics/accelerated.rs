//! The accelerated walker against the direct walker and against exact diffusion results.
//!
//! The long checks (10⁶ photons and more) are `#[ignore]`d; run them with
//! `cargo test --release --test tests physics::accelerated -- --ignored` (README,
//! "Development").

use sojourn::diffusion::ks::{kolmogorov_p_value, two_sample_ks_binned};
use sojourn::diffusion::{MILNE_EXTRAPOLATION_LENGTH, estimate, first_passage};
use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::tally::{Moments, PathStats};
use sojourn::transport::{Acceleration, PhaseFunction};
use sojourn::units::SPEED_OF_LIGHT_CM_S;

use crate::support::profiles::{exponential_sphere, steep_profile_sphere, uniform_sphere_from};
use crate::support::{assert_within, layer, radial_diffusion, run_method, uniform_sphere};

/// Escapes of `photons` photons with `method` and `seed`, after checking that the
/// accelerated walk really jumped.
fn escapes(medium: &Medium, photons: u64, seed: u64, method: Method) -> PathStats {
    let tally = run_method(medium, photons, seed, method).tally;
    if method == Method::Accelerated {
        assert!(tally.walk().jumps.value() > 0.0, "no jump was taken");
    }
    tally.all_escapes()
}

/// Ratio of two means and its standard error.
fn ratio(a: &Moments, b: &Moments) -> (f64, f64) {
    let (ma, ea) = (a.mean().unwrap(), a.std_error().unwrap());
    let (mb, eb) = (b.mean().unwrap(), b.std_error().unwrap());
    let r = ma / mb;
    (r, r * ((ea / ma).powi(2) + (eb / mb).powi(2)).sqrt())
}

/// Two-sample KS p-value of the escape-time histograms (asymptotic Kolmogorov
/// distribution; Press et al. 2007, Numerical Recipes 3rd ed., §14.3.3).
fn ks_p_value(a: &PathStats, b: &PathStats) -> f64 {
    let (counts_a, counts_b) = a.time_histogram().aligned_counts(b.time_histogram());
    let d = two_sample_ks_binned(&counts_a, &counts_b);
    let (n1, n2) = (a.count() as f64, b.count() as f64);
    kolmogorov_p_value(d, n1 * n2 / (n1 + n2))
}

/// Compares accelerated and direct escapes: mean time and mean scatterings within
/// `sigmas` standard errors of their ratio (and within `allowance` of 1), and the
/// two-sample KS p-value above `p_min`.
fn agree(
    what: &str,
    direct: &PathStats,
    fast: &PathStats,
    sigmas: f64,
    allowance: f64,
    p_min: f64,
) {
    for (quantity, d, f) in [
        ("mean time", &direct.time_s(), &fast.time_s()),
        (
            "mean scatterings",
            &direct.scatterings(),
            &fast.scatterings(),
        ),
    ] {
        let (r, sigma) = ratio(f, d);
        assert!(
            (r - 1.0).abs() <= sigmas * sigma,
            "{what}: {quantity} accelerated / direct = {r} ± {sigma}, beyond {sigmas}σ"
        );
        assert!(
            (r - 1.0).abs() <= allowance,
            "{what}: {quantity} accelerated / direct = {r} ± {sigma}, beyond {allowance}"
        );
    }
    let p = ks_p_value(direct, fast);
    assert!(p > p_min, "{what}: two-sample KS p-value {p}");
}

fn accelerated_matches_direct(what: &str, medium: &Medium, photons: u64) {
    let direct = escapes(medium, photons, 61, Method::Direct);
    let fast = escapes(medium, photons, 62, Method::Accelerated);
    agree(what, &direct, &fast, 4.0, 1.0, 1e-3);
}

#[test]
fn off_centre_uniform_sphere_matches_direct() {
    let medium = uniform_sphere_from(60.0, PhaseFunction::Isotropic, 0.4);
    accelerated_matches_direct("uniform τ = 60, r0 = 0.4 R", &medium, 12_000);
}

#[test]
fn two_zone_sphere_matches_direct() {
    // Core 100× more opaque than the envelope (τ 60 + 6): passages in the core only.
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
    // σ ∝ e^(−3r/R), τ = 190, as 300 smooth shells: passages where l_tr changes slowly
    // enough, direct steps in the outer part.
    let medium = exponential_sphere(600.0, 3.0, 1.0, 300);
    accelerated_matches_direct("profile e^(−3r)", &medium, 3_000);
}

#[test]
fn anisotropic_sphere_matches_direct() {
    // HG g = 0.8, τ = 150 (transport optical radius 30), source off centre.
    let medium = uniform_sphere_from(150.0, PhaseFunction::henyey_greenstein(0.8).unwrap(), 0.3);
    accelerated_matches_direct("HG g = 0.8", &medium, 6_000);
}

#[test]
fn absorbing_sphere_matches_direct() {
    // Albedo 0.999, τ = 80: about 4 % of the photons are absorbed during a walk of ~3000
    // scatterings; escape fractions agree within 4σ (binomial), escape times as above.
    let medium = Medium::sphere(
        vec![(1.0, layer(80.0, 0.999, PhaseFunction::Isotropic))],
        Source::centre(),
    )
    .unwrap();
    let direct = run_method(&medium, 10_000, 71, Method::Direct).tally;
    let fast = run_method(&medium, 10_000, 72, Method::Accelerated).tally;
    let estimate = |tally: &sojourn::tally::Tally| {
        let e = tally
            .fraction(tally.escaped())
            .expect("photons were launched");
        (e.value, e.stderr)
    };
    let (pd, ed) = estimate(&direct);
    let (pf, ef) = estimate(&fast);
    assert!(pd < 0.99, "the sphere absorbs: escape fraction {pd}");
    assert_within(
        "escape fraction",
        pf,
        pd,
        (ed * ed + ef * ef).sqrt(),
        4.0,
        0.0,
    );
    agree(
        "albedo 0.999",
        &direct.all_escapes(),
        &fast.all_escapes(),
        4.0,
        1.0,
        1e-3,
    );
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
        assert!(tally.walk().jumps.value() > 0.0, "auto jumps at τ = {tau}");
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
    // Source at R/2: passages between nodes spaced by doubling depth, so jumps plus flights
    // per photon grow like log τ. Asserted: from τ = 10³ to 10¹² (log τ × 4) the cost grows
    // less than 6×.
    let cost = |tau: f64| {
        let medium = uniform_sphere_from(tau, PhaseFunction::Isotropic, 0.5);
        let tally = run_method(&medium, 2_000, 66, Method::Accelerated).tally;
        (tally.walk().jumps.value() + tally.walk().direct_steps.value()) / 2_000.0
    };
    let (shallow, deep) = (cost(1e3), cost(1e12));
    assert!(
        deep < 6.0 * shallow,
        "cost {shallow} at 1e3, {deep} at 1e12"
    );
}

#[test]
fn radial_passages_have_no_gradient_bias() {
    // Smooth profile σ ∝ e^(−3r/R), τ ≈ 9500: the diffusion mean exit time and mean
    // scatterings of the same shells with the extrapolated boundary are the reference,
    // accurate to O(1/τ) ≈ 1e-4 here (Redner 2001, A Guide to First-Passage Processes, for
    // T = (1/c)∫ r/l dr). Radial passages use D(r) itself, so no drift correction is
    // involved: within 4σ and 0.5 % for both, with 3000 photons (σ ≈ 1.1 %).
    let medium = exponential_sphere(3.0e4, 3.0, 1.0, 3000);
    let reference = estimate(&medium);
    let escapes = escapes(&medium, 3_000, 67, Method::Accelerated);
    for (what, moments, expected) in [
        (
            "time",
            &escapes.time_s(),
            reference.mean_time_extrapolated_s,
        ),
        (
            "scatterings",
            &escapes.scatterings(),
            reference.mean_scatterings_extrapolated,
        ),
    ] {
        assert_within(
            what,
            moments.mean().unwrap(),
            expected,
            moments.std_error().unwrap(),
            4.0,
            0.005 * expected,
        );
    }
}

#[test]
fn drift_correction_removes_the_gradient_bias_of_local_jumps() {
    // A slab of 2000 smooth layers with σ ∝ e^(−2z/L), τ ≈ 2600, point source at mid-depth:
    // local jumps (slabs) need the drift tilt. Without it the walk solves D ΔT instead of
    // ∇·(D∇T) and is off by tens of percent; with it, within 4σ + 2 % of the diffusion
    // mean exit time (extrapolated faces; exact to O(1/τ)), at ε = 0.2.
    let layers: Vec<(f64, Layer)> = (0..2000)
        .map(|k| {
            let (a, b) = (k as f64 / 2000.0, (k + 1) as f64 / 2000.0);
            let sigma = 6000.0 * ((-2.0 * a).exp() - (-2.0 * b).exp()) / 2.0 * 2000.0;
            (
                0.0005,
                Layer::new("", sigma, 1.0, PhaseFunction::Isotropic, 1.0).unwrap(),
            )
        })
        .collect();
    let medium = Medium::slab(layers, 1.0, Source::SlabPoint { depth_cm: 0.5 })
        .unwrap()
        .with_smooth_boundaries(0..2000);
    let reference = estimate(&medium).mean_time_extrapolated_s;
    let bias = |drift_correction: bool| {
        let config = RunConfig {
            photons: 2_000,
            seed: 67,
            method: Method::Accelerated,
            acceleration: Acceleration::new(10.0, 0.2, drift_correction).unwrap(),
            ..RunConfig::default()
        };
        let escapes = run(&medium, &config).tally.all_escapes();
        (
            escapes.time_s().mean().unwrap() / reference - 1.0,
            escapes.time_s().std_error().unwrap() / reference,
        )
    };
    let (uncorrected, _) = bias(false);
    let (corrected, sigma) = bias(true);
    assert!(uncorrected.abs() > 0.1, "uncorrected bias {uncorrected}");
    assert!(
        corrected.abs() < 4.0 * sigma + 0.02,
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
    let accelerated = run_method(&medium, 3_000, 68, Method::Accelerated).tally;
    assert_eq!(direct.reflected(), accelerated.reflected());
    assert_eq!(direct.transmitted(), accelerated.transmitted());
}

#[test]
fn accelerated_walks_are_identical_for_any_thread_count() {
    // Passage tables are built once and shared; each photon keeps its own random stream.
    let medium = sojourn::medium::model_file::load_model(std::path::Path::new(
        "models/veyra-n3-sun-like.json",
    ))
    .unwrap();
    let tally = |threads: usize| {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        let result = pool.install(|| run_method(&medium, 600, 70, Method::Accelerated));
        serde_json::to_string(&result.tally).unwrap()
    };
    let one = tally(1);
    assert_eq!(one, tally(2));
    assert_eq!(one, tally(3));
}

#[test]
fn sun_like_polytrope_matches_the_profile_diffusion_time() {
    // The demo star Veyra (n = 3 polytrope, 1 M☉, 1 R☉, electron scattering + Kramers,
    // τ ≈ 2.3e13): the Monte Carlo mean escape time against the diffusion mean exit time
    // `sojourn profile` reports, (1/c) ∫ r/l dr (docs/references.md, Diffusion theory 1),
    // exact to O(1/τ) here. Acceptance: within 1 % and within 4σ (10⁴ photons: σ ≈ 0.5 %).
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
        (mean / reference - 1.0).abs() < 0.01,
        "{mean} vs {reference}"
    );
}

#[test]
fn uniform_sphere_quantiles_match_the_crank_nicolson_reference() {
    // Check of the independent reference itself: a uniform sphere, 200 shells, against the
    // exact first-passage law with the extrapolated radius (Krapivsky, Redner & Ben-Naim
    // 2010, problem 2.21): quantiles within 0.5 %.
    let tau = 1e3;
    let shells: Vec<(f64, Layer)> = (1..=200)
        .map(|k| (k as f64 / 200.0, layer(tau, 1.0, PhaseFunction::Isotropic)))
        .collect();
    let medium = Medium::sphere(shells, Source::centre())
        .unwrap()
        .with_smooth_boundaries(0..200);
    let l = 1.0 / tau;
    let radius = 1.0 + MILNE_EXTRAPOLATION_LENGTH * l;
    let diffusion = SPEED_OF_LIGHT_CM_S * l / 3.0;
    let scale = radius * radius / diffusion;
    let probabilities = [0.05, 0.5, 0.95];
    let reference = radial_diffusion::centre_escape_quantiles(
        &medium,
        &probabilities,
        0.01 * scale,
        1.0 * scale,
        400,
    );
    for (p, q) in probabilities.iter().zip(&reference) {
        let exact = first_passage::quantile(*p) * scale;
        assert!((q / exact - 1.0).abs() < 0.005, "p = {p}: {q} vs {exact}");
    }
}

#[test]
fn sun_like_escape_time_quantiles_match_radial_diffusion() {
    // Veyra: the 5/50/95 % quantiles of 4·10⁴ Monte Carlo escape times against the
    // Crank–Nicolson solution of radial diffusion on the same shells. Tolerance: 4σ of a
    // quantile (σ ≈ √(p(1−p)/n) / f(q), f from the reference CDF) plus the 0.6 % width of
    // the tally's logarithmic histogram bins.
    let path = std::path::Path::new("models/veyra-n3-sun-like.json");
    let medium = sojourn::medium::model_file::load_model(path).unwrap();
    let photons = 40_000;
    let escapes = run_method(&medium, photons, 73, Method::Auto)
        .tally
        .all_escapes();
    let year = sojourn::units::JULIAN_YEAR_S;
    let probabilities = [0.04, 0.05, 0.06, 0.49, 0.5, 0.51, 0.94, 0.95, 0.96];
    let reference = radial_diffusion::centre_escape_quantiles(
        &medium,
        &probabilities,
        1e4 * year,
        2e6 * year,
        600,
    );
    for k in [1, 4, 7] {
        let p = probabilities[k];
        let density_inverse = (reference[k + 1] - reference[k - 1]) / 0.02;
        let sigma = (p * (1.0 - p) / photons as f64).sqrt() * density_inverse;
        let measured = escapes.time_histogram().quantile(p).unwrap();
        assert_within(
            &format!("quantile {p}"),
            measured,
            reference[k],
            sigma,
            4.0,
            0.006 * reference[k],
        );
    }
}

/// The acceptance checks: accelerated against direct with `direct_photons` and
/// `fast_photons`, means within 3σ and within `allowance`, KS p > `p_min` (0 where only the
/// means are the criterion).
fn acceptance(
    what: &str,
    medium: &Medium,
    (direct_photons, fast_photons): (u64, u64),
    allowance: f64,
    p_min: f64,
) {
    let direct = escapes(medium, direct_photons, 1, Method::Direct);
    let fast = escapes(medium, fast_photons, 2, Method::Accelerated);
    for (quantity, d, f) in [
        ("time", &direct.time_s(), &fast.time_s()),
        ("scatterings", &direct.scatterings(), &fast.scatterings()),
    ] {
        let (r, sigma) = ratio(f, d);
        println!("{what}: {quantity} accelerated / direct = {r:.5} ± {sigma:.5}");
    }
    println!("{what}: KS p = {:.3}", ks_p_value(&direct, &fast));
    agree(what, &direct, &fast, 3.0, allowance, p_min);
}

#[test]
#[ignore = "long: 10⁶ direct photons through the steep profile (about 10 min on 2 cores)"]
fn steep_profile_acceptance() {
    // One profile layer, 0…1 cm in 200 steps, opacity 1, density 1200.4027 e^(−8r):
    // τ = 150.02, centred source. Means within 0.15 %, KS not significant (p > 0.01).
    acceptance(
        "steep profile",
        &steep_profile_sphere(),
        (1_000_000, 1_000_000),
        0.0015,
        0.01,
    );
}

#[test]
#[ignore = "long: 4·10⁶ photons each (about 2 min on 2 cores)"]
fn off_centre_uniform_sphere_acceptance() {
    // τ = 20, source at R/2: means within 0.1 %. The whole walk is one passage from 10
    // transport mean free paths below the surface (the shortest a passage may start), whose
    // escape-time law differs from the walk's at the 0.2 % level in the CDF: measured KS
    // D = 0.0016, significant at 4·10⁶ photons, so the distribution is not asserted here.
    let medium = uniform_sphere_from(20.0, PhaseFunction::Isotropic, 0.5);
    acceptance(
        "uniform τ = 20, r0 = R/2",
        &medium,
        (4_000_000, 4_000_000),
        0.001,
        0.0,
    );
}

#[test]
#[ignore = "long: 2·10⁶ direct photons of ~2000 flights (about 10 min on 2 cores)"]
fn anisotropic_off_centre_sphere_acceptance() {
    // HG g = 0.5, τ = 100, source at R/2: means within 0.1 %, KS not significant.
    let medium = uniform_sphere_from(100.0, PhaseFunction::henyey_greenstein(0.5).unwrap(), 0.5);
    acceptance(
        "HG g = 0.5, τ = 100, r0 = R/2",
        &medium,
        (2_000_000, 4_000_000),
        0.001,
        0.01,
    );
}
