//! Finite beams, detectors and the collimated transmittance of slabs lit from outside.

use sojourn::medium::detector::Acceptance;
use sojourn::medium::{BeamProfile, Detector, Face, Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::tally::{Outcome, Tally};
use sojourn::transport::rng::photon_rng;
use sojourn::transport::{DirectWalker, PhaseFunction, WalkLimits};

use crate::support::chandrasekhar::HFunction;
use crate::support::{assert_within, binomial_stderr};

fn direct(medium: &Medium, photons: u64, seed: u64) -> Tally {
    let config = RunConfig {
        photons,
        seed,
        method: Method::Direct,
        ..RunConfig::default()
    };
    run(medium, &config).tally
}

/// Unpolarised Fresnel reflectance from index `n1` into `n2` at incidence cosine `cos_i`,
/// from the s and p amplitudes (Born & Wolf, Principles of Optics, §1.5.2;
/// docs/references.md, Transport 3), written out here apart from the code under test.
fn fresnel(cos_i: f64, n1: f64, n2: f64) -> f64 {
    let sin_t = n1 / n2 * (1.0 - cos_i * cos_i).sqrt();
    if sin_t >= 1.0 {
        return 1.0;
    }
    let cos_t = (1.0 - sin_t * sin_t).sqrt();
    let rs = (n1 * cos_i - n2 * cos_t) / (n1 * cos_i + n2 * cos_t);
    let rp = (n2 * cos_i - n1 * cos_t) / (n2 * cos_i + n1 * cos_t);
    0.5 * (rs * rs + rp * rp)
}

#[test]
fn collimated_transmittance_is_beer_lambert_with_fresnel_faces() {
    // A scattering slab, μt d = 1.5, n = 1.4 in air, beams at 0° and 40°. Light that never
    // scatters crosses the slab along the refracted ray (cos θt from Snell's law), losing
    // e^(−μt d / cos θt) per crossing, and bounces between the faces with the Fresnel
    // reflectance R at θt (the same from either side): it leaves through the bottom after
    // 0, 2, 4, … internal reflections, so
    //   Tc = (1 − R)² a / (1 − R² a²),   a = e^(−μt d / cos θt)
    // (Beer–Lambert, docs/references.md Transport 1, with Fresnel faces, Transport 3; the
    // series summed in closed form). Tolerance 4σ binomial.
    let (n, sigma, thickness) = (1.4, 3.0, 0.5);
    let layer = Layer::new(
        "",
        sigma,
        0.9,
        PhaseFunction::henyey_greenstein(0.8).unwrap(),
        n,
    )
    .unwrap();
    for (angle, seed) in [(0.0f64, 81), (40.0, 82)] {
        let source = Source::Beam {
            polar_angle_deg: angle,
            profile: BeamProfile::Narrow,
        };
        let medium = Medium::slab(vec![(thickness, layer.clone())], 1.0, source).unwrap();
        let photons = 100_000;
        let tally = direct(&medium, photons, seed);
        let cos_i = angle.to_radians().cos();
        let sin_t = angle.to_radians().sin() / n;
        let cos_t = (1.0 - sin_t * sin_t).sqrt();
        let r = fresnel(cos_i, 1.0, n);
        assert!((r - fresnel(cos_t, n, 1.0)).abs() < 1e-12, "reciprocity");
        let a = (-sigma * thickness / cos_t).exp();
        let expected = (1.0 - r).powi(2) * a / (1.0 - r * r * a * a);
        let measured = tally
            .fraction(tally.optics().unwrap().collimated_transmitted())
            .unwrap()
            .value;
        assert_within(
            &format!("collimated transmittance at {angle}°"),
            measured,
            expected,
            binomial_stderr(expected, photons),
            4.0,
            0.0,
        );
    }
}

#[test]
fn a_detector_cone_sees_the_milne_share_of_the_emergent_light() {
    // Source deep in a conservative, isotropically scattering slab (τ = 30, plane source at
    // τ = 15), matched faces: the emergent intensity follows the Milne law I(μ) ∝ H(μ)
    // (Chandrasekhar 1950, ch. V; docs/references.md, Transport 2). A top-face disc wide
    // enough to catch everything, with an acceptance half-angle of 60° (μ ≥ 0.5) or a
    // numerical aperture of 0.5 in air (θ = 30°, μ ≥ cos 30°), sees the share
    // ∫ μ H dμ over its cone / ∫₀¹ μ H dμ of the top-face light. Tolerance 4σ binomial.
    let layer = Layer::new("", 30.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
    let disc = |acceptance| Detector {
        name: String::new(),
        face: Face::Top,
        inner_radius_cm: 0.0,
        outer_radius_cm: 1e4,
        acceptance,
    };
    let medium = Medium::slab(vec![(1.0, layer)], 1.0, Source::SlabPlane { depth_cm: 0.5 })
        .unwrap()
        .with_detectors(vec![
            disc(Acceptance::HalfAngleDeg(60.0)),
            disc(Acceptance::NumericalAperture(0.5)),
            disc(Acceptance::HalfAngleDeg(90.0)),
        ])
        .unwrap();
    let tally = direct(&medium, 60_000, 83);
    let reflected = tally.reflected().count();
    let detected = tally.optics().unwrap().detected();
    // The whole face with every direction: exactly the top-face photons.
    assert_eq!(detected[2].count(), reflected);
    let h = HFunction::new(1.0);
    let flux = |a: f64, b: f64| {
        let steps = 4000;
        (0..steps)
            .map(|k| {
                let mu = a + (b - a) * (k as f64 + 0.5) / steps as f64;
                mu * h.eval(mu) * (b - a) / steps as f64
            })
            .sum::<f64>()
    };
    let total = flux(0.0, 1.0);
    for (stats, min_mu) in [
        (&detected[0], 0.5),
        (&detected[1], 30f64.to_radians().cos()),
    ] {
        let expected = flux(min_mu, 1.0) / total;
        assert_within(
            &format!("share within μ ≥ {min_mu}"),
            stats.count() as f64 / reflected as f64,
            expected,
            binomial_stderr(expected, reflected),
            4.0,
            0.0,
        );
    }
}

#[test]
fn rings_partition_the_face_exactly() {
    // Rings [0, 0.1), [0.1, 0.3), [0.3, 10⁴) cm on the bottom face, every direction: their
    // counts add up to the transmitted photons (all of which leave within 10⁴ cm here).
    let layer = Layer::new("", 10.0, 0.95, PhaseFunction::Isotropic, 1.3).unwrap();
    let ring = |inner, outer| Detector {
        name: String::new(),
        face: Face::Bottom,
        inner_radius_cm: inner,
        outer_radius_cm: outer,
        acceptance: Acceptance::HalfAngleDeg(90.0),
    };
    let medium = Medium::slab(vec![(0.4, layer)], 1.0, Source::normal_beam())
        .unwrap()
        .with_detectors(vec![ring(0.0, 0.1), ring(0.1, 0.3), ring(0.3, 1e4)])
        .unwrap();
    let tally = direct(&medium, 20_000, 84);
    let detected = tally.optics().unwrap().detected();
    let sum: u64 = detected.iter().map(|s| s.count()).sum();
    assert_eq!(sum, tally.transmitted().count());
    assert!(detected.iter().all(|s| s.count() > 0));
}

#[test]
fn beam_entry_points_follow_the_profile_on_the_tilted_footprint() {
    // Photons absorbed at once (albedo 0, extinction 10⁵ per cm, matched index) mark where
    // they entered. A Gaussian beam of 1/e² radius w has independent normal offsets of
    // standard deviation w/2 across the beam; at polar angle θ the footprint on the face
    // stretches x by 1/cos θ: ⟨x²⟩ = w²/(4 cos² θ), ⟨y²⟩ = w²/4. A flat beam of radius R
    // at normal incidence: ⟨x²⟩ = ⟨y²⟩ = R²/4, and no photon beyond R. Tolerance 4σ of
    // the sample means.
    let layer = Layer::new("", 1e5, 0.0, PhaseFunction::Isotropic, 1.0).unwrap();
    let w = 0.2;
    let cases = [
        (BeamProfile::Gaussian { radius_cm: w }, 60.0f64, w * w / 4.0),
        (BeamProfile::Flat { radius_cm: w }, 0.0, w * w / 4.0),
    ];
    for (profile, angle, across) in cases {
        let source = Source::Beam {
            polar_angle_deg: angle,
            profile,
        };
        let medium = Medium::slab(vec![(1.0, layer.clone())], 1.0, source).unwrap();
        let walker = DirectWalker::new(&medium, WalkLimits::default());
        let photons = 20_000u64;
        let (mut xx, mut yy) = (Vec::new(), Vec::new());
        for photon in 0..photons {
            let record = walker.walk(&mut photon_rng(85, 0, photon));
            assert_eq!(record.outcome, Outcome::Absorbed);
            let [x, y, _] = record.position_cm;
            if let BeamProfile::Flat { radius_cm } = profile {
                assert!(x.hypot(y) <= radius_cm * (1.0 + 1e-4));
            }
            xx.push(x * x);
            yy.push(y * y);
        }
        let stretch = angle.to_radians().cos().powi(-2);
        for (values, expected, axis) in [(&xx, across * stretch, "x"), (&yy, across, "y")] {
            let n = values.len() as f64;
            let mean = values.iter().sum::<f64>() / n;
            let var = values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0);
            assert_within(
                &format!("{profile:?} at {angle}°: <{axis}²>"),
                mean,
                expected,
                (var / n).sqrt(),
                4.0,
                0.0,
            );
        }
    }
}

#[test]
fn a_finite_beam_on_a_wide_slab_keeps_the_totals_of_a_narrow_one() {
    // Laterally unbounded slab: where the light enters does not change R or T. Gaussian
    // beam (w = 0.3 cm) against the narrow beam, independent runs; tolerance 4σ of the
    // difference.
    let layer = Layer::new(
        "",
        10.0,
        0.98,
        PhaseFunction::henyey_greenstein(0.5).unwrap(),
        1.4,
    )
    .unwrap();
    let photons = 40_000;
    let narrow = Medium::slab(vec![(0.3, layer.clone())], 1.0, Source::normal_beam()).unwrap();
    let gaussian = Medium::slab(
        vec![(0.3, layer)],
        1.0,
        Source::Beam {
            polar_angle_deg: 0.0,
            profile: BeamProfile::Gaussian { radius_cm: 0.3 },
        },
    )
    .unwrap();
    let (a, b) = (direct(&narrow, photons, 86), direct(&gaussian, photons, 87));
    for (name, pick) in [
        (
            "reflected",
            Tally::reflected as fn(&Tally) -> &sojourn::tally::PathStats,
        ),
        ("transmitted", Tally::transmitted),
    ] {
        let (fa, fb) = (a.fraction(pick(&a)).unwrap(), b.fraction(pick(&b)).unwrap());
        assert_within(
            name,
            fb.value,
            fa.value,
            fa.stderr.hypot(fb.stderr),
            4.0,
            0.0,
        );
    }
}
