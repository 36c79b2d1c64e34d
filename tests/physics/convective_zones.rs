//! Radiative and convective zones and the diffusion-time definitions against exact
//! properties: Eddington's standard model (∇_rad = 1/4 everywhere, radiative equilibrium),
//! the n = 1.5 polytrope (d ln T / d ln P = 0.4 = ∇_ad), the radiative gradient evaluated by
//! hand, and the demo stars (docs/references.md, "Stellar structure").

use sojourn::analysis::stellar::StellarAnalysis;
use sojourn::medium::Medium;
use sojourn::medium::model_file::{model_from_value, profile_model_json};
use sojourn::medium::profile::{ColumnValues, ProfileTable};
use sojourn::opacity::{GasState, OpacitySpec};
use sojourn::star::builder::{PolytropeStar, PressureChoice};
use sojourn::star::energy::{cno_cycle_erg_g_s, pp_chain_erg_g_s};
use sojourn::star::zones::{ZoneKind, adiabatic_gradient, gradients};
use sojourn::units::{GRAVITATIONAL_CONSTANT_CGS, LengthUnit, SPEED_OF_LIGHT_CM_S};

/// Eddington's standard model: n = 3 with radiation pressure (10 M☉, 5 R☉), constant
/// κ = 0.34 cm²/g and ε uniform per gram with L = (1 − β) 4π c G M / κ.
fn eddington_model() -> (Medium, f64) {
    let kappa = 0.34;
    let built = PolytropeStar {
        index: 3.0,
        mass_solar: 10.0,
        radius_solar: 5.0,
        pressure: PressureChoice::Eddington,
        opacity: OpacitySpec::Constant {
            value_cm2_g: kappa,
            scattering_fraction: 1.0,
        },
        energy: None,
        ..PolytropeStar::default()
    }
    .build()
    .unwrap();
    let beta = built.polytrope.beta();
    let epsilon = (1.0 - beta)
        * 4.0
        * std::f64::consts::PI
        * SPEED_OF_LIGHT_CM_S
        * GRAVITATIONAL_CONSTANT_CGS
        / kappa;
    let mut columns = built.table.columns().clone();
    columns.energy_generation_erg_g_s = Some(ColumnValues::Constant(epsilon));
    let table = ProfileTable::new(columns).unwrap();
    let json = profile_model_json("Eddington", LengthUnit::SolarRadius, "n = 3", &table, None);
    (model_from_value(&json, "eddington").unwrap(), beta)
}

#[test]
fn eddington_standard_model_is_radiative_with_nabla_rad_one_quarter() {
    // With P_rad = (1 − β) P everywhere, constant κ and L(r)/m(r) = ε = (1 − β) 4π c G / κ,
    // ∇_rad = 3κLP/(16πacGmT⁴) = 1/4 exactly at every radius (Eddington 1926; the issue's
    // acceptance test). The structure has ρ, T at the rows and L/m = ε exactly, so the rows
    // give 1/4 to the precision of β from the quartic (1e−6).
    let (medium, beta) = eddington_model();
    assert!(beta < 0.99, "{beta}: radiation pressure matters at 10 M☉");
    let structure = medium.structure().unwrap();
    let rows = gradients(structure).unwrap();
    let mut checked = 0;
    for (row, gradient) in structure.rows().iter().zip(&rows) {
        if row.temperature_k.unwrap() <= 0.0 {
            continue;
        }
        let nabla_rad = gradient.nabla_rad.unwrap();
        assert!(
            (nabla_rad - 0.25).abs() < 1e-5,
            "r = {}: {nabla_rad}",
            row.radius_cm
        );
        // β from the row's own gas and radiation pressure is the model's β.
        assert!((gradient.beta - beta).abs() < 1e-6);
        assert!(gradient.nabla_ad > 0.25 + 1e-3);
        checked += 1;
    }
    assert!(checked > 390);
    let analysis = StellarAnalysis::of(&medium).unwrap();
    assert_eq!(analysis.zones.len(), 1);
    assert_eq!(analysis.zones[0].kind, ZoneKind::Radiative);
    assert_eq!(analysis.convective_base_radius_cm, None);
    assert_eq!(analysis.times.time_to_convective_base_s, None);
}

#[test]
fn in_radiative_equilibrium_the_three_stellar_times_agree() {
    // Eddington's standard model is in radiative equilibrium with its own luminosity:
    // a T⁴ is the energy density radiative diffusion of L(r) needs (zero at the surface), so
    // U_rad / L = U_F / L; and U_F / L equals the luminosity-weighted mean exit time by
    // Little's law. Three routes (the model's T, the flux shell by shell, the exit times
    // weighted by dL) agree to the discretisation of the 400-row table.
    let (medium, _) = eddington_model();
    let times = StellarAnalysis::of(&medium).unwrap().times;
    let (content, flux, weighted) = (
        times.energy_content_time_s.unwrap(),
        times.flux_weighted_time_s.unwrap(),
        times.luminosity_weighted_time_s.unwrap(),
    );
    assert!((flux / weighted - 1.0).abs() < 1e-6, "{flux} vs {weighted}");
    assert!((content / flux - 1.0).abs() < 1e-3, "{content} vs {flux}");
    // ... and the luminosity-weighted time is shorter than the one from the centre.
    let central = sojourn::diffusion::estimate(&medium.with_sphere_source(0.0).unwrap());
    assert!(weighted < central.mean_time_s);
}

#[test]
fn n15_polytrope_has_the_adiabatic_gradient() {
    // An n = 1.5 polytrope of ideal gas has T ∝ θ, P ∝ θ^2.5: d ln T / d ln P = 0.4 = ∇_ad of
    // a monatomic ideal gas (the acceptance test of the gradient computation). The
    // reports' P includes radiation, a T⁴/3: in a 0.3 M☉ star it is below 1e−4 of the gas
    // pressure, so both agree with 0.4 to 5e−4.
    let built = PolytropeStar {
        index: 1.5,
        mass_solar: 0.3,
        radius_solar: 0.3,
        ..PolytropeStar::default()
    }
    .build()
    .unwrap();
    let medium = model_from_value(&built.model_json, "tamsin").unwrap();
    let structure = medium.structure().unwrap();
    let rows = gradients(structure).unwrap();
    for (row, gradient) in structure.rows().iter().zip(&rows).take(rows.len() - 2) {
        let nabla = gradient.nabla.unwrap();
        assert!((nabla - 0.4).abs() < 5e-4, "r = {}: {nabla}", row.radius_cm);
        assert!((gradient.nabla_ad - 0.4).abs() < 5e-4);
        assert!((gradient.nabla_ad - adiabatic_gradient(gradient.beta)).abs() < 1e-15);
    }
}

#[test]
fn radiative_gradient_at_the_centre_by_hand() {
    // ∇_rad at the centre of the Sun-like polytrope, 3 κ ε P / (16 π a c G T⁴) with L/m → ε,
    // evaluated here with the constants written out (CODATA 2018: a = 4σ/c,
    // σ = 5.670374419e−5 cgs; G = 6.67430e−8; k = 1.380649e−16; m_u = 1.66053906660e−24) and
    // κ, ε from the laws at (ρc, Tc).
    let built = PolytropeStar::default().build().unwrap();
    let medium = model_from_value(&built.model_json, "sun").unwrap();
    let structure = medium.structure().unwrap();
    let centre = structure.rows()[0];
    let (rho, t) = (centre.density_g_cm3, centre.temperature_k.unwrap());
    let gas = GasState {
        density_g_cm3: rho,
        temperature_k: t,
        hydrogen_x: 0.7,
        metals_z: 0.02,
    };
    let kappa = OpacitySpec::parse_short("es+kramers")
        .unwrap()
        .build()
        .unwrap()
        .opacity_cm2_g(&gas);
    let epsilon = pp_chain_erg_g_s(&gas) + cno_cycle_erg_g_s(&gas);
    let c = 2.997_924_58e10;
    let a = 4.0 * 5.670_374_419e-5 / c;
    let mu = 1.0 / (2.0 * 0.7 + 0.75 * 0.28 + 0.5 * 0.02);
    let pressure = rho * 1.380_649e-16 * t / (mu * 1.660_539_066_60e-24) + a * t.powi(4) / 3.0;
    let expected = 3.0 * kappa * epsilon * pressure
        / (16.0 * std::f64::consts::PI * a * c * 6.674_30e-8 * t.powi(4));
    let nabla_rad = gradients(structure).unwrap()[0].nabla_rad.unwrap();
    assert!(
        (nabla_rad / expected - 1.0).abs() < 1e-9,
        "{nabla_rad} vs {expected}"
    );
    // With Kramers' law at guillotine factor 1 (κc ≈ 20 cm²/g, ten times tabulated solar
    // values) radiation could not carry the luminosity: the centre is convective.
    assert!(expected > 0.4, "{expected}");
}

#[test]
fn sun_like_demo_with_the_demo_table_has_an_outer_convective_zone() {
    let medium = sojourn::medium::model_file::load_model(std::path::Path::new(
        "models/veyra-n3-demo-table.json",
    ))
    .unwrap();
    let analysis = StellarAnalysis::of(&medium).unwrap();
    let radius = medium.size_cm();
    // Zones cover the model without gaps and alternate in kind.
    let zones = &analysis.zones;
    assert_eq!(zones[0].inner_radius_cm, 0.0);
    assert_eq!(zones.last().unwrap().outer_radius_cm, radius);
    for pair in zones.windows(2) {
        assert_eq!(pair[0].outer_radius_cm, pair[1].inner_radius_cm);
        assert_ne!(pair[0].kind, pair[1].kind);
    }
    let base = analysis.convective_base_radius_cm.unwrap();
    assert!(
        base > 0.5 * radius && base < 0.95 * radius,
        "{}",
        base / radius
    );
    // Diffusion to the base is nearly all of the diffusion to the surface (the envelope is
    // optically thin by comparison), and convection crosses the zone in under a year.
    let to_base = analysis.times.time_to_convective_base_s.unwrap();
    let to_surface = sojourn::diffusion::estimate(&medium).mean_time_s;
    assert!(to_base < to_surface && to_base > 0.9 * to_surface);
    assert!(analysis.convective_crossing_time_s.unwrap() < 3.156e7);
    // The photosphere lies where τ = 2/3, between the convective base and the table's top.
    let photosphere = analysis.photosphere.unwrap();
    assert!(photosphere.radius_cm > base);
    assert!((3000.0..10_000.0).contains(&photosphere.temperature_k.unwrap()));
}
