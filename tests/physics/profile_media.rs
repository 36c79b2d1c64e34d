//! Tabulated profiles as media: the diffusion time through the profile path against closed
//! forms (the mean exit time of 3-D diffusion from the centre of a sphere, R²/(6D), and with a
//! variable mean free path (1/c) ∫ r / l dr: Redner 2001, *A Guide to First-Passage
//! Processes*; Krapivsky, Redner & Ben-Naim 2010, *A Kinetic View of Statistical Physics*),
//! the accuracy of the sub-shell representation, and the photosphere.

use serde_json::json;

use sojourn::analysis::ProfileAnalysis;
use sojourn::diffusion::estimate;
use sojourn::medium::Medium;
use sojourn::medium::model_file::model_from_value;
use sojourn::opacity::OpacitySpec;
use sojourn::star::builder::{PolytropeStar, interior_opacity};
use sojourn::units::{SOLAR_MASS_G, SPEED_OF_LIGHT_CM_S};

fn load(model: serde_json::Value) -> Medium {
    model_from_value(&model, "test model").expect("valid model")
}

/// A profile layer of constant density `rho` and constant opacity `kappa` from `r0` to `r1`
/// (cm), sampled on `rows` rows.
fn uniform_profile(
    name: &str,
    r0: f64,
    r1: f64,
    rho: f64,
    kappa: f64,
    rows: usize,
) -> serde_json::Value {
    let radius: Vec<f64> = (0..rows)
        .map(|k| r0 + (r1 - r0) * k as f64 / (rows - 1) as f64)
        .collect();
    json!({
        "name": name,
        "profile": {
            "radius": radius,
            "density": vec![rho; rows],
            "temperature": vec![1e7; rows],
            "hydrogen": 0.7,
            "metals": 0.02,
            "opacity_law": { "kind": "constant", "value_cm2_g": kappa }
        }
    })
}

#[test]
fn uniform_sphere_through_the_profile_path_is_r_squared_over_2lc() {
    // Redner 2001: mean exit time from the centre R²/(6D) = R²/(2 l c).
    let (radius, rho, kappa) = (3.0e10, 2.0, 0.5); // σ = 1 per cm, τ = 3e10
    let medium = load(json!({
        "geometry": "sphere",
        "layers": [uniform_profile("uniform", 0.0, radius, rho, kappa, 7)]
    }));
    let l = 1.0 / (rho * kappa);
    let expected = radius * radius / (2.0 * l * SPEED_OF_LIGHT_CM_S);
    let report = ProfileAnalysis::new(&medium).unwrap();
    assert!(
        (report.diffusion.mean_time_s / expected - 1.0).abs() < 1e-12,
        "{} vs {expected}",
        report.diffusion.mean_time_s
    );
    assert!((estimate(&medium).mean_time_s / expected - 1.0).abs() < 1e-12);
    assert!((report.optical_depth / (radius / l) - 1.0).abs() < 1e-12);
    // A uniform profile needs one sub-shell per table interval and no more.
    assert_eq!(medium.layers().len(), 6);
    // ρc and ρ̄ are the constant density.
    assert!((report.central_density_g_cm3.unwrap() / rho - 1.0).abs() < 1e-14);
    assert!((report.mean_density_g_cm3.unwrap() / rho - 1.0).abs() < 1e-12);
}

#[test]
fn two_zone_sphere_through_the_profile_path_is_the_piecewise_integral() {
    // Redner 2001, variable l: T(0) = (1/c) ∫ r / l(r) dr
    //   = (1/c) [σ₁ a²/2 + σ₂ (R² − a²)/2] for a core of σ₁ to a and an envelope of σ₂ to R.
    let (a, r) = (2.0e10, 7.0e10);
    let (sigma1, sigma2) = (300.0 * 1e-10, 3.0 * 1e-10);
    let medium = load(json!({
        "geometry": "sphere",
        "layers": [
            uniform_profile("core", 0.0, a, 1.0, sigma1, 5),
            uniform_profile("envelope", a, r, 1e-2, sigma2 / 1e-2, 9)
        ]
    }));
    let expected = (sigma1 * a * a / 2.0 + sigma2 * (r * r - a * a) / 2.0) / SPEED_OF_LIGHT_CM_S;
    let report = ProfileAnalysis::new(&medium).unwrap();
    assert!((report.diffusion.mean_time_s / expected - 1.0).abs() < 1e-12);
    let core_share: f64 = report
        .shells
        .iter()
        .filter(|s| s.layer == "core")
        .map(|s| s.time_share)
        .sum();
    let core = sigma1 * a * a / 2.0 / SPEED_OF_LIGHT_CM_S / expected;
    assert!((core_share / core - 1.0).abs() < 1e-12);
    // The division between the two profile layers is a sharp interface; inside each, smooth.
    let first_envelope = medium.profiles()[1].first_sub_shell;
    assert!(medium.is_sharp_boundary(first_envelope - 1));
    assert!(!medium.is_sharp_boundary(0));
    assert!(medium.is_sharp_boundary(medium.layers().len() - 1));
}

#[test]
fn profile_followed_by_a_plain_layer() {
    // A profile core inside a plain shell: the same piecewise integral.
    let medium = load(json!({
        "geometry": "sphere",
        "layers": [
            uniform_profile("core", 0.0, 1.0, 4.0, 5.0, 3),
            { "name": "shell", "outer_radius": 3.0, "extinction_coefficient": 2.0 }
        ]
    }));
    let expected = (20.0 * 0.5 + 2.0 * (9.0 - 1.0) / 2.0) / SPEED_OF_LIGHT_CM_S;
    let report = ProfileAnalysis::new(&medium).unwrap();
    assert!((report.diffusion.mean_time_s / expected - 1.0).abs() < 1e-12);
    assert_eq!(
        report.mean_density_g_cm3, None,
        "the plain shell has no density"
    );
}

/// Checks the representation of a built star: τ error, tolerance between neighbours,
/// smooth internal divisions, and the photosphere definition.
fn check_representation(star: PolytropeStar) -> (Medium, ProfileAnalysis) {
    let built = star.build().unwrap();
    let medium = load(built.model_json);
    let summary = &medium.profiles()[0];
    // The acceptance bound is 1e−3; the radial averages make τ exact to the
    // quadrature, so the error is rounding.
    assert!(
        summary.tau_error_relative < 1e-10,
        "{}",
        summary.tau_error_relative
    );
    assert!(
        summary.time_error_relative < 1e-4,
        "{}",
        summary.time_error_relative
    );
    let layers = medium.layers();
    let mut unrefined = 0;
    for k in 0..layers.len() - 1 {
        let (x, y) = (
            layers[k].extinction_per_cm(),
            layers[k + 1].extinction_per_cm(),
        );
        if (x - y).abs() > summary.tolerance * x.max(y) {
            // Only where the sub-shells are optically thin.
            let (a, b) = medium.layer_bounds_cm(k);
            let (_, c) = medium.layer_bounds_cm(k + 1);
            assert!(x * (b - a) + y * (c - b) < 1e-3);
            unrefined += 1;
        }
        assert!(
            !medium.is_sharp_boundary(k),
            "division {k} should be smooth"
        );
    }
    assert_eq!(unrefined, summary.unrefined_divisions);
    assert!(medium.is_sharp_boundary(layers.len() - 1));
    let report = ProfileAnalysis::new(&medium).unwrap();
    // τ from the top of the table to the photosphere is 2/3: the dropped gas above the
    // surface cut with the smooth H⁻ blend (composite Simpson here, independent of the
    // code's Gauss–Legendre), then the medium's shells.
    let photosphere = report.photosphere_radius_cm.unwrap();
    let dropped = dropped_gas_depth(&medium, photosphere);
    let tau_above: f64 = dropped
        + (0..layers.len())
            .map(|k| {
                let (a, b) = medium.layer_bounds_cm(k);
                layers[k].extinction_per_cm() * (b - a.max(photosphere)).max(0.0)
            })
            .sum::<f64>();
    // Radii are f64 of size R: a position is known to ≈ ε R, i.e. τ to ε R σ there (in the
    // dense low-mass star σ ≈ 3e5 per cm at the surface, so that is ≈ 1).
    let k = report
        .shells
        .partition_point(|s| s.radius_cm < photosphere)
        .min(layers.len() - 1);
    let resolution = 4.0 * f64::EPSILON * medium.size_cm() * layers[k].extinction_per_cm();
    assert!(
        (tau_above - 2.0 / 3.0).abs() < 1e-6 + resolution,
        "{tau_above} (resolution {resolution})"
    );
    (medium, report)
}

/// Optical depth of the gas above the surface cut and above `radius_cm`, with the smooth
/// H⁻ / electron scattering + Kramers blend along the table's linearly interpolated ρ, T:
/// composite Simpson, 4000 panels per table interval.
fn dropped_gas_depth(medium: &Medium, radius_cm: f64) -> f64 {
    use sojourn::opacity::{GasState, OpacityLaw, SmoothHMinusBlend};
    let law = SmoothHMinusBlend::default();
    let rows = medium.structure().unwrap().atmosphere();
    let mut tau = 0.0;
    for pair in rows.windows(2) {
        let (a, b) = (&pair[0], &pair[1]);
        let (lo, hi) = (a.radius_cm.max(radius_cm), b.radius_cm);
        if hi <= lo {
            continue;
        }
        let sigma = |r: f64| {
            let s = (r - a.radius_cm) / (b.radius_cm - a.radius_cm);
            let state = GasState {
                density_g_cm3: a.density_g_cm3 + s * (b.density_g_cm3 - a.density_g_cm3),
                temperature_k: a.temperature_k + s * (b.temperature_k - a.temperature_k),
                hydrogen_x: a.hydrogen_x,
                metals_z: a.metals_z,
            };
            if state.density_g_cm3 > 0.0 {
                law.opacity_cm2_g(&state) * state.density_g_cm3
            } else {
                0.0 // the table's outer edge, ρ = T = 0
            }
        };
        let n = 4000;
        let h = (hi - lo) / n as f64;
        let mut sum = sigma(lo) + sigma(hi);
        for i in 1..n {
            sum += sigma(lo + i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 };
        }
        tau += sum * h / 3.0;
    }
    tau
}

#[test]
fn sun_like_n3_star_representation() {
    let (medium, report) = check_representation(PolytropeStar::default());
    let summary = &medium.profiles()[0];
    // Kramers holds down to 1e4 K: the model ends there, a little below R☉.
    let cut = summary.surface_cut.as_ref().unwrap();
    assert_eq!(cut.temperature_k, 1e4);
    // Mass of the model plus the dropped gas is the star's mass, to the linear interpolation
    // of ρ between the 400 rows.
    let mass = report.mass_g.unwrap() + cut.dropped_mass_g;
    assert!(
        (mass / SOLAR_MASS_G - 1.0).abs() < 1e-4,
        "{}",
        mass / SOLAR_MASS_G
    );
    // ρc/ρ̄ of the n = 3 polytrope, 54.1825 (Chandrasekhar 1939, An Introduction to the Study of Stellar Structure), with ρ̄
    // over the cut radius (R_cut/R☉)³ smaller volume, and the model's own mass.
    let shrink = (medium.size_cm() / 6.957e10).powi(3);
    let mean_full = report.mean_density_g_cm3.unwrap() * shrink * SOLAR_MASS_G / mass;
    let concentration = report.central_density_g_cm3.unwrap() / mean_full;
    assert!(
        (concentration / 54.1825 - 1.0).abs() < 1e-4,
        "{concentration}"
    );
    // Most of the diffusion time accrues in the inner half of the radius.
    assert!(report.time_budget.radius_90_percent_cm < 0.5 * medium.size_cm());
    // The rule of thumb overestimates a centrally concentrated star's time.
    assert!(report.diffusion.naive_over_diffusion > 3.0);
    let shares: f64 = report.shells.iter().map(|s| s.time_share).sum();
    assert!((shares - 1.0).abs() < 1e-12);
}

#[test]
fn low_mass_n15_star_and_smooth_blend_representations() {
    check_representation(PolytropeStar {
        index: 1.5,
        mass_solar: 0.3,
        radius_solar: 0.3,
        opacity: interior_opacity(),
        ..PolytropeStar::default()
    });
    // The smooth H⁻ blend holds down to 3000 K, where the extinction falls steeply: some
    // optically thin divisions stay unrefined, τ stays exact.
    let (medium, _) = check_representation(PolytropeStar {
        opacity: OpacitySpec::parse_short("smooth").unwrap(),
        ..PolytropeStar::default()
    });
    assert_eq!(
        medium.profiles()[0]
            .surface_cut
            .as_ref()
            .unwrap()
            .temperature_k,
        3000.0
    );
}

#[test]
fn finer_tolerance_gives_more_sub_shells_and_a_smaller_time_error() {
    let star = |tolerance| {
        let built = PolytropeStar {
            index: 1.5,
            tolerance: Some(tolerance),
            ..PolytropeStar::default()
        }
        .build()
        .unwrap();
        let medium = load(built.model_json);
        (
            medium.layers().len(),
            medium.profiles()[0].time_error_relative,
        )
    };
    let (coarse_count, coarse_error) = star(0.04);
    let (fine_count, fine_error) = star(0.005);
    assert!(fine_count > coarse_count);
    assert!(fine_error < coarse_error, "{fine_error} vs {coarse_error}");
}
