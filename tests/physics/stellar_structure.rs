//! Stellar structure against published and analytic values: Lane–Emden constants, analytic
//! polytropes, the opacity laws of Carroll & Ostlie, and the IAU/CODATA constants
//! (docs/references.md, "Stellar structure", items 12–14).

use sojourn::opacity::{
    ElectronScattering, GasState, KramersBoundFree, KramersFreeFree, OpacityLaw, OpacitySpec,
};
use sojourn::star::{LaneEmdenSolution, LaneEmdenTable};
use sojourn::units;

fn relative(a: f64, b: f64) -> f64 {
    (a / b - 1.0).abs()
}

#[test]
fn lane_emden_constants_n_1_5_and_3() {
    // Chandrasekhar 1939, An Introduction to the Study of Stellar Structure; Horedt 2004,
    // Polytropes (docs/references.md, Stellar structure 12): (ξ₁, −ξ₁²θ′(ξ₁), ρc/ρ̄), to 1e−4
    // relative.
    for (n, xi1, mass, concentration) in [
        (1.5, 3.65375, 2.71406, 5.99071),
        (3.0, 6.89685, 2.01824, 54.1825),
    ] {
        let s = LaneEmdenSolution::solve(n).unwrap();
        assert!(relative(s.xi1(), xi1) < 1e-4, "n = {n}: ξ₁ = {}", s.xi1());
        assert!(relative(s.mass_parameter(), mass) < 1e-4, "n = {n}");
        assert!(
            relative(s.central_to_mean_density(), concentration) < 1e-4,
            "n = {n}"
        );
    }
}

/// Largest |θ − exact| over 4001 points of [0, end].
fn worst_error(theta: impl Fn(f64) -> f64, exact: impl Fn(f64) -> f64, end: f64) -> f64 {
    (0..=4000)
        .map(|k| end * k as f64 / 4000.0)
        .map(|x| (theta(x) - exact(x)).abs())
        .fold(0.0, f64::max)
}

#[test]
fn analytic_polytropes_to_1e_minus_8() {
    // Chandrasekhar 1939 (docs/references.md, Stellar structure 12): n = 0: θ = 1 − ξ²/6 (ξ₁ = √6);
    // n = 1: θ = sin ξ / ξ (ξ₁ = π); n = 5: θ = (1 + ξ²/3)^(−1/2) (no surface; checked to ξ = 30).
    let n0 = LaneEmdenSolution::solve(0.0).unwrap();
    assert!((n0.xi1() - 6f64.sqrt()).abs() < 1e-8);
    let e0 = worst_error(|x| n0.theta(x).unwrap(), |x| 1.0 - x * x / 6.0, n0.xi1());
    assert!(e0 < 1e-8, "n = 0: {e0}");

    let n1 = LaneEmdenSolution::solve(1.0).unwrap();
    assert!((n1.xi1() - std::f64::consts::PI).abs() < 1e-8);
    let sinc = |x: f64| if x == 0.0 { 1.0 } else { x.sin() / x };
    let e1 = worst_error(|x| n1.theta(x).unwrap(), sinc, n1.xi1());
    assert!(e1 < 1e-8, "n = 1: {e1}");

    let n5 = LaneEmdenTable::integrate(5.0, 30.0).unwrap();
    let e5 = worst_error(
        |x| n5.theta(x).unwrap(),
        |x| (1.0 + x * x / 3.0).powf(-0.5),
        30.0,
    );
    assert!(e5 < 1e-8, "n = 5: {e5}");
}

fn gas(rho: f64, t: f64, x: f64, z: f64) -> GasState {
    GasState {
        density_g_cm3: rho,
        temperature_k: t,
        hydrogen_x: x,
        metals_z: z,
    }
}

#[test]
fn opacity_laws_match_hand_evaluated_formulas() {
    // Carroll & Ostlie, An Introduction to Modern Astrophysics, ch. 9 (docs/references.md, Stellar
    // structure 13):
    //   κ_es = 0.2 (1 + X); κ_ff = 3.68e22 g_ff (1 − Z)(1 + X) ρ T^−3.5;
    //   κ_bf = 4.34e25 (g_bf / t) Z (1 + X) ρ T^−3.5 (cm²/g, ρ in g/cm³, T in K).
    // Point D: ρ = 1, T = 1e7 (T^−3.5 = 3.16227766e−25), X = 0.7, Z = 0.02:
    //   es = 0.34; ff = 3.68e22·0.98·1.7·3.16227766e−25 = 1.93875449e−2;
    //   bf (g = 1, t = 1) = 4.34e25·0.02·1.7·3.16227766e−25 = 0.466625692.
    // Point E: ρ = 5, T = 2e6 (T^−3.5 = 1/(11.3137085e21) = 8.83883476e−23), X = 0.6,
    //   Z = 0.03: es = 0.32; ff (g = 1.2) = 3.68e22·1.2·0.97·1.6·5·8.83883476e−23 = 30.2890604;
    //   bf (g = 1, t = 30) = 4.34e25/30·0.03·1.6·5·8.83883476e−23 = 30.6884343.
    let d = gas(1.0, 1e7, 0.7, 0.02);
    let e = gas(5.0, 2e6, 0.6, 0.03);
    let es = ElectronScattering;
    assert!(relative(es.opacity_cm2_g(&d), 0.34) < 1e-12);
    assert!(relative(es.opacity_cm2_g(&e), 0.32) < 1e-12);
    let ff = KramersFreeFree::default();
    assert!(relative(ff.opacity_cm2_g(&d), 1.938_754_49e-2) < 1e-8);
    let ff12 = KramersFreeFree::new(1.2).unwrap();
    assert!(relative(ff12.opacity_cm2_g(&e), 30.289_060_4) < 1e-8);
    let bf = KramersBoundFree::default();
    assert!(relative(bf.opacity_cm2_g(&d), 0.466_625_692) < 1e-8);
    let bf30 = KramersBoundFree::new(1.0, 30.0).unwrap();
    assert!(relative(bf30.opacity_cm2_g(&e), 30.688_434_3) < 1e-8);
    // The model-file sum of the three, and its scattering split (only es scatters).
    let sum = OpacitySpec::parse_short("es+kramers")
        .unwrap()
        .build()
        .unwrap();
    let total = 0.34 + 1.938_754_49e-2 + 0.466_625_692;
    assert!(relative(sum.opacity_cm2_g(&d), total) < 1e-8);
    assert!(relative(sum.scattering_fraction(&d), 0.34 / total) < 1e-8);
}

#[test]
fn iau_and_codata_constants() {
    // docs/references.md, Stellar structure 14: IAU 2015 B3 R☉ = 6.957e8 m, L☉ = 3.828e26 W; CODATA
    // 2018 σ_T = 6.6524587321e−29 m², c = 299 792 458 m/s, m_u = 1.66053906660e−27 kg,
    // k_B = 1.380649e−23 J/K; Julian year 365.25 d.
    assert_eq!(units::SOLAR_RADIUS_CM, 6.957e10);
    assert_eq!(units::SOLAR_LUMINOSITY_ERG_S, 3.828e33);
    assert!(relative(units::THOMSON_CROSS_SECTION_CM2, 6.652_458_732_1e-25) < 1e-15);
    assert_eq!(units::SPEED_OF_LIGHT_CM_S, 2.997_924_58e10);
    assert!(relative(units::ATOMIC_MASS_UNIT_G, 1.660_539_066_60e-24) < 1e-15);
    assert!(relative(units::BOLTZMANN_ERG_K, 1.380_649e-16) < 1e-15);
    assert_eq!(units::JULIAN_YEAR_S, 31_557_600.0);
    // Electron scattering from first principles: κ_es = σ_T (1 + X) / (2 m_u) ≈ 0.2004 (1 + X)
    // for fully ionised H/He, which the 0.2 (1 + X) of Carroll & Ostlie rounds.
    let kappa = units::THOMSON_CROSS_SECTION_CM2 / (2.0 * units::ATOMIC_MASS_UNIT_G);
    assert!(relative(kappa, 0.2) < 3e-3, "{kappa}");
}
