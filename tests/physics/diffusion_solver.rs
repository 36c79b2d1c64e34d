//! The time-dependent diffusion solver (`diffusion::transient`) against closed forms of
//! diffusion theory, its order of convergence, its behaviour on awkward media, and the
//! Monte Carlo against it where diffusion holds and where it fails. Sources of the check
//! values: docs/references.md, "Diffusion solver".

use std::f64::consts::PI;

use sojourn::analysis::RunAnalysis;
use sojourn::diffusion::boundary::{extrapolation_length_mfp, fresnel_reflectance};
use sojourn::diffusion::ks::{BinnedKsTest, BinnedSample, binned_ks_test};
use sojourn::diffusion::transient::{
    EscapeSolution, Exit, FaceCondition, SolverError, SolverOptions, solve, solve_with,
};
use sojourn::diffusion::{MILNE_EXTRAPOLATION_LENGTH, estimate};
use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::tally::{PathStats, Tally};
use sojourn::transport::PhaseFunction;
use sojourn::units::SPEED_OF_LIGHT_CM_S as C;

use crate::support::profiles::exponential_sphere;
use crate::support::{binomial_stderr, run_method};

const Q: f64 = MILNE_EXTRAPOLATION_LENGTH;

fn layer(sigma: f64, albedo: f64, g: f64, n: f64) -> Layer {
    let phase = if g == 0.0 {
        PhaseFunction::Isotropic
    } else {
        PhaseFunction::henyey_greenstein(g).unwrap()
    };
    Layer::new("", sigma, albedo, phase, n).unwrap()
}

fn options(resolution: f64, faces: FaceCondition) -> SolverOptions {
    SolverOptions { faces, resolution }
}

fn uniform_sphere(tau: f64, albedo: f64) -> Medium {
    Medium::sphere(vec![(1.0, layer(tau, albedo, 0.0, 1.0))], Source::centre()).unwrap()
}

// ---------------------------------------------------------------------------------------
// Closed forms
// ---------------------------------------------------------------------------------------

/// P(T > t) for diffusion from the centre of a sphere with an absorbing surface, in
/// s = D t / R²: 2 Σ (−1)^(n+1) exp(−n² π² s) (Carslaw & Jaeger 1959, §9.3; Redner 2001).
/// Summed here independently of the library's first-passage module.
fn sphere_survival(s: f64) -> f64 {
    (1..=200)
        .map(|n: i32| {
            let sign = if n % 2 == 1 { 1.0 } else { -1.0 };
            2.0 * sign * (-(n * n) as f64 * PI * PI * s).exp()
        })
        .sum()
}

/// The s with survival 1 − p, by bisection.
fn sphere_quantile(p: f64) -> f64 {
    let (mut low, mut high) = (0.005, 5.0);
    for _ in 0..200 {
        let middle = 0.5 * (low + high);
        if 1.0 - sphere_survival(middle) < p {
            low = middle;
        } else {
            high = middle;
        }
    }
    0.5 * (low + high)
}

#[test]
fn uniform_sphere_first_passage_quantiles() {
    // N/τ² = c t l / R² = 3 s (D = c l / 3). The series gives 0.164137 / 0.416356 /
    // 1.121280 at 5 / 50 / 95 % (the values of the issue, checked here to their last digit)
    // and the mean 1/2 (τ²/2 scatterings).
    let exact: Vec<f64> = [0.05, 0.5, 0.95]
        .iter()
        .map(|&p| 3.0 * sphere_quantile(p))
        .collect();
    for (value, quoted) in exact.iter().zip([0.164137, 0.416356, 1.121280]) {
        assert!((value - quoted).abs() < 6e-7, "{value} vs {quoted}");
    }
    let tau = 40.0;
    let solution = solve_with(
        &uniform_sphere(tau, 1.0),
        &options(1.0, FaceCondition::ZeroDensity),
    )
    .unwrap();
    // Scatterings per unit time: c σ = c τ (R = 1 cm).
    let scale = C * tau / (tau * tau);
    for (p, value) in [0.05, 0.5, 0.95].iter().zip(&exact) {
        let solver = solution.escape_quantile_s(*p).unwrap() * scale;
        assert!(
            (solver / value - 1.0).abs() < 1e-3,
            "{p}: {solver} vs {value}"
        );
    }
    let mean = solution.mean_escape_time_s().unwrap() * scale;
    assert!((mean / 0.5 - 1.0).abs() < 1e-4, "{mean}");
    assert!((solution.escape_probability() - 1.0).abs() < 1e-9);
    // The late decay rate of the series: π² D / R².
    let rate = PI * PI * C / (3.0 * tau);
    assert!((solution.decay_rate_per_s() / rate - 1.0).abs() < 1e-3);
}

#[test]
fn uniform_sphere_extrapolated_mean() {
    // With the extrapolated boundary the mean is close to (τ + q∞)²/2 scatterings
    // (docs/references.md, Diffusion theory 1: diffusion out of the sphere of radius R + q∞ l). The
    // solver's continuation holds no photons, so its own closed form is the steady Green's function
    // with a resistor shell to R_e: τ²/2 + τ² q∞ / (τ + q∞), 1.5 q∞²/τ² below; both within
    // 0.1 %, the second within the discretisation error (< 1e-4 here, see the convergence
    // test).
    let tau = 100.0;
    let solution = solve(&uniform_sphere(tau, 1.0)).unwrap();
    let scatterings = solution.mean_escape_time_s().unwrap() * C * tau;
    let textbook = (tau + Q).powi(2) / 2.0;
    let model = tau * tau / 2.0 + tau * tau * Q / (tau + Q);
    assert!((scatterings / textbook - 1.0).abs() < 1e-3, "{scatterings}");
    assert!((scatterings / model - 1.0).abs() < 1e-4, "{scatterings}");
    assert!((solution.extrapolation_lengths_cm()[1] / (Q / tau) - 1.0).abs() < 1e-12);
    // The closed-form estimate of the library counts the continuation as medium.
    let closed = estimate(&uniform_sphere(tau, 1.0)).mean_scatterings_extrapolated;
    assert!((scatterings / closed - 1.0).abs() < 1e-3);
}

#[test]
fn absorbing_sphere_escape_probability() {
    // Steady diffusion from the centre of an absorbing sphere: x / sinh x, x = κ R_e,
    // κ = √(μa/D′) = √(3 μa σ_tr) (textbook steady diffusion; the absorbing medium
    // continued to R_e = R + q∞ l_tr). Within 0.1 %. The solver's own closed form, with a
    // continuation that neither holds nor absorbs photons, solves u = (cosh κr + α sinh κr)
    // /(4πD r) inside and a/r + b outside: P = κ R_e / (κ z_e cosh κR + sinh κR); to 1e-4.
    // Held at zero on R itself: κR / sinh κR.
    let (sigma, albedo) = (100.0, 0.9999);
    let medium = uniform_sphere(sigma, albedo);
    let kappa = (3.0 * (1.0 - albedo) * sigma * sigma).sqrt();
    let z_e = Q / sigma;
    let x = kappa * (1.0 + z_e);
    let solution = solve(&medium).unwrap();
    let p = solution.escape_probability();
    assert!((p / (x / x.sinh()) - 1.0).abs() < 1e-3, "{p}");
    let model = x / (kappa * z_e * kappa.cosh() + kappa.sinh());
    assert!((p / model - 1.0).abs() < 1e-4, "{p} vs {model}");
    assert!((p + solution.absorbed() - 1.0).abs() < 1e-9);
    let zero = solve_with(&medium, &options(1.0, FaceCondition::ZeroDensity)).unwrap();
    let p0 = zero.escape_probability();
    assert!((p0 / (kappa / kappa.sinh()) - 1.0).abs() < 1e-4, "{p0}");
}

/// Extrapolated-boundary dipole for a semi-infinite medium with an isotropic source at
/// depth z₀: R(t) = ½ (4πDv)^(−½) t^(−3/2) e^(−μa v t) [z₀ e^(−z₀²/4Dvt) + (z₀ + 2z_e)
/// e^(−(z₀+2z_e)²/4Dvt)], D = 1/(3(μa + μs′)) (Patterson, Chance & Wilson 1989; Contini,
/// Martelli & Zaccanti 1997, eq. 36 for the semi-infinite limit). Per second.
fn dipole_reflectance(t: f64, mua: f64, musp: f64, z0: f64, z_e: f64) -> f64 {
    let dv = C / (3.0 * (mua + musp));
    let four = 4.0 * dv * t;
    let image = z0 + 2.0 * z_e;
    0.5 / (4.0 * PI * dv).sqrt() / (t * t.sqrt())
        * (-mua * C * t).exp()
        * (z0 * (-z0 * z0 / four).exp() + image * (-image * image / four).exp())
}

#[test]
fn semi_infinite_slab_reflectance_matches_the_dipole() {
    // A slab 2 000 transport mean free paths thick is semi-infinite for t below 10⁴
    // transport times (√(D v t) ≈ 58 l_tr). Source: the PCW isotropic source at 1/μs′.
    // The dipole takes the current at the physical face with the absorbing medium
    // continued to −z_e, the solver the partial-current condition: they agree to
    // O(z_e z₀ / Dvt), within 1 % after 30 transport times and 0.2 % after 300; the late
    // log-slope −d ln R/dt = μa v + 3/(2t) − … within 0.5 % (issue acceptance).
    let (musp, mua) = (10.0, 1e-3);
    let z0 = 1.0 / musp;
    let medium = Medium::slab(
        vec![(200.0, layer(musp + mua, musp / (musp + mua), 0.0, 1.0))],
        1.0,
        Source::SlabPlane { depth_cm: z0 },
    )
    .unwrap();
    let solution = solve(&medium).unwrap();
    let z_e = solution.extrapolation_lengths_cm()[0];
    assert!((z_e / (Q / (musp + mua)) - 1.0).abs() < 1e-12);
    let transport_time = 1.0 / (C * (musp + mua));
    for (multiple, tolerance) in [(30.0, 0.01), (100.0, 0.005), (300.0, 0.002), (3e3, 0.002)] {
        let t = multiple * transport_time;
        let ratio =
            solution.exit_rate_per_s(t, Exit::Top) / dipole_reflectance(t, mua, musp, z0, z_e);
        assert!(
            (ratio - 1.0).abs() < tolerance,
            "t = {multiple} l/v: {ratio}"
        );
    }
    let (t1, t2) = (5e3 * transport_time, 6e3 * transport_time);
    let slope = |r: &dyn Fn(f64) -> f64| (r(t1) / r(t2)).ln() / (t2 - t1);
    let solver = slope(&|t| solution.exit_rate_per_s(t, Exit::Top));
    let dipole = slope(&|t| dipole_reflectance(t, mua, musp, z0, z_e));
    assert!((solver / dipole - 1.0).abs() < 5e-3, "{solver} vs {dipole}");
    // Nothing reaches the far face in this window.
    assert!(
        solution.exit_rate_per_s(t2, Exit::Bottom)
            < 1e-12 * solution.exit_rate_per_s(t2, Exit::Top)
    );
}

/// Steady reflectance and transmittance of a slab [0, d] with a plane source at z₀,
/// absorption κ = √(μa/D′), and the partial-current condition u = z ∂u/∂n with lengths
/// z₁ (top) and z₂ (bottom): R = [sinh κ(d−z₀) + κz₂ cosh κ(d−z₀)] / W,
/// T = [sinh κz₀ + κz₁ cosh κz₀] / W, W = (1 + κ² z₁ z₂) sinh κd + κ (z₁ + z₂) cosh κd.
/// (Solution of D′u″ − μa u = −δ(z − z₀) with those Robin conditions, derived for this
/// test; the partial-current condition is Haskell et al. 1994; for μa → 0 it gives
/// (d + z₂ − z₀)/(d + z₁ + z₂), the extrapolated-boundary result.)
fn robin_slab(kappa: f64, d: f64, z0: f64, z1: f64, z2: f64) -> (f64, f64) {
    let w = (1.0 + kappa * kappa * z1 * z2) * (kappa * d).sinh()
        + kappa * (z1 + z2) * (kappa * d).cosh();
    let r = ((kappa * (d - z0)).sinh() + kappa * z2 * (kappa * (d - z0)).cosh()) / w;
    let t = ((kappa * z0).sinh() + kappa * z1 * (kappa * z0).cosh()) / w;
    (r, t)
}

#[test]
fn finite_slab_steady_reflectance_and_transmittance() {
    // n = 1.4 between air above and glass (1.5) below: each face its own A.
    let (sigma, albedo, n, d) = (20.0, 0.995, 1.4, 1.0);
    let transport = layer(sigma, albedo, 0.0, n).transport_extinction_per_cm();
    let kappa = (3.0 * (1.0 - albedo) * sigma * transport).sqrt();
    let z1 = extrapolation_length_mfp(n) / transport;
    let z2 = extrapolation_length_mfp(n / 1.5) / transport;
    for z0 in [0.05, 0.3, 0.8] {
        let medium = Medium::slab(
            vec![(d, layer(sigma, albedo, 0.0, n))],
            1.0,
            Source::SlabPlane { depth_cm: z0 },
        )
        .unwrap()
        .with_ambient_below(1.5)
        .unwrap();
        let solution = solve(&medium).unwrap();
        let [s1, s2] = solution.extrapolation_lengths_cm();
        assert!((s1 / z1 - 1.0).abs() < 1e-12 && (s2 / z2 - 1.0).abs() < 1e-12);
        let (r, t) = robin_slab(kappa, d, z0, z1, z2);
        let (sr, st) = (
            solution.reflected().unwrap(),
            solution.transmitted().unwrap(),
        );
        assert!((sr / r - 1.0).abs() < 1e-4, "z0 {z0}: R {sr} vs {r}");
        assert!((st / t - 1.0).abs() < 1e-4, "z0 {z0}: T {st} vs {t}");
        assert!((sr + st + solution.absorbed() - 1.0).abs() < 1e-9);
    }
    // A normal beam into the same slab with g = 0.5: Fresnel transmission
    // 1 − ((n − 1)/(n + 1))², an isotropic source μs′ e^(−σ_tr z) (δ-isotropic scaling),
    // absorbed before its first isotropic scattering μa/σ_tr of what the beam loses, the
    // remainder at the bottom split by Fresnel. Integrated here over the source depth
    // with the closed form above (Gauss–Legendre, 40 panels).
    let g = 0.5;
    let medium = Medium::slab(
        vec![(d, layer(sigma, albedo, g, n))],
        1.0,
        Source::normal_beam(),
    )
    .unwrap()
    .with_ambient_below(1.5)
    .unwrap();
    let mua = (1.0 - albedo) * sigma;
    let musp = albedo * sigma * (1.0 - g);
    let transport = mua + musp;
    let kappa = (3.0 * mua * transport).sqrt();
    let (z1, z2) = (
        extrapolation_length_mfp(n) / transport,
        extrapolation_length_mfp(n / 1.5) / transport,
    );
    let entering = 1.0 - ((n - 1.0) / (n + 1.0)).powi(2);
    let (mut r, mut t) = (0.0, 0.0);
    let nodes = [
        (-0.906_179_845_938_664, 0.236_926_885_056_189_1),
        (-0.538_469_310_105_683, 0.478_628_670_499_366_5),
        (0.0, 0.568_888_888_888_888_9),
        (0.538_469_310_105_683, 0.478_628_670_499_366_5),
        (0.906_179_845_938_664, 0.236_926_885_056_189_1),
    ];
    let panels = 40;
    for k in 0..panels {
        let (a, b) = (
            k as f64 * d / panels as f64,
            (k + 1) as f64 * d / panels as f64,
        );
        for (x, w) in nodes {
            let z = 0.5 * (a + b) + 0.5 * (b - a) * x;
            let q = entering * musp * (-transport * z).exp() * 0.5 * (b - a) * w;
            let (rz, tz) = robin_slab(kappa, d, z, z1, z2);
            r += q * rz;
            t += q * tz;
        }
    }
    let remaining = entering * (-transport * d).exp();
    let back = remaining * fresnel_reflectance(1.0, n, 1.5);
    let (rd, td) = robin_slab(kappa, d, d, z1, z2);
    r += back * rd;
    t += back * td + (remaining - back);
    let solution = solve(&medium).unwrap();
    assert!((solution.specular() - (1.0 - entering)).abs() < 1e-15);
    let (sr, st) = (
        solution.reflected().unwrap(),
        solution.transmitted().unwrap(),
    );
    assert!((sr / r - 1.0).abs() < 1e-4, "beam R {sr} vs {r}");
    assert!((st / t - 1.0).abs() < 1e-4, "beam T {st} vs {t}");
    let total = solution.specular() + sr + st + solution.absorbed();
    assert!((total - 1.0).abs() < 1e-9, "{total}");
}

#[test]
fn finite_slab_decay_rate_is_the_robin_eigenvalue() {
    // Conservative slab, matched faces: the slowest mode is sin-like with wavenumber k,
    // tan(k d) = 2 k z_e / (k² z_e² − 1) (Robin conditions at both faces), λ₁ = D v k²
    // (root found here by bisection). The extrapolated-boundary value π²Dv/(d + 2z_e)²
    // (PCW) is within 0.5 %.
    let (sigma, d) = (30.0, 1.0);
    let medium = Medium::slab(
        vec![(d, layer(sigma, 1.0, 0.0, 1.0))],
        1.0,
        Source::SlabPlane { depth_cm: 0.5 },
    )
    .unwrap();
    let z_e = Q / sigma;
    let f = |k: f64| {
        // (k² z² − 1) sin kd − 2 k z cos kd = 0, first root in (π/(d + 2z), π/d).
        (k * k * z_e * z_e - 1.0) * (k * d).sin() - 2.0 * k * z_e * (k * d).cos()
    };
    let (mut low, mut high) = (PI / (d + 3.0 * z_e), PI / d);
    assert!(f(low) * f(high) < 0.0);
    for _ in 0..200 {
        let middle = 0.5 * (low + high);
        if f(low) * f(middle) <= 0.0 {
            high = middle;
        } else {
            low = middle;
        }
    }
    let k = 0.5 * (low + high);
    let dv = C / (3.0 * sigma);
    let solution = solve(&medium).unwrap();
    let rate = solution.decay_rate_per_s();
    assert!(
        (rate / (dv * k * k) - 1.0).abs() < 2e-4,
        "{rate} vs {}",
        dv * k * k
    );
    let pcw = dv * PI * PI / (d + 2.0 * z_e).powi(2);
    assert!((rate / pcw - 1.0).abs() < 5e-3);
    // The escape rate decays at λ₁ late on.
    let (t1, t2) = (8.0 / rate, 10.0 / rate);
    let slope = (solution.exit_rate_per_s(t1, Exit::Any) / solution.exit_rate_per_s(t2, Exit::Any))
        .ln()
        / (t2 - t1);
    assert!((slope / rate - 1.0).abs() < 1e-6);
}

// ---------------------------------------------------------------------------------------
// Convergence
// ---------------------------------------------------------------------------------------

#[test]
fn convergence_is_second_order() {
    // Element sizes and time steps both scale as 1/resolution; the errors fall by 4 per
    // doubling. Against the exact series (uniform sphere, zero density on R): the 95 %
    // quantile (space and time error), the mean and λ₁ (space only).
    let tau = 20.0;
    let medium = uniform_sphere(tau, 1.0);
    let scale = C / tau;
    let exact_q95 = 3.0 * sphere_quantile(0.95);
    let exact_rate = PI * PI * C / (3.0 * tau);
    let errors: Vec<[f64; 3]> = [0.5, 1.0, 2.0, 4.0]
        .iter()
        .map(|&resolution| {
            let s = solve_with(&medium, &options(resolution, FaceCondition::ZeroDensity)).unwrap();
            [
                (s.escape_quantile_s(0.95).unwrap() * scale / exact_q95 - 1.0).abs(),
                (s.mean_escape_time_s().unwrap() * scale / 0.5 - 1.0).abs(),
                (s.decay_rate_per_s() / exact_rate - 1.0).abs(),
            ]
        })
        .collect();
    for pair in errors.windows(2) {
        for (quantity, (coarse, fine)) in pair[0].iter().zip(&pair[1]).enumerate() {
            let ratio = coarse / fine;
            assert!(
                (3.3..4.7).contains(&ratio),
                "quantity {quantity}: errors {errors:?}"
            );
        }
    }
    // The default resolution: below 3e-4 on all three.
    assert!(errors[1].iter().all(|&e| e < 3e-4), "{errors:?}");

    // A layered, refractive, absorbing slab lit by a beam (no closed form): successive
    // differences of the median and of the reflectance fall by about 4 per doubling
    // (Richardson).
    let slab = three_layer_slab(Source::normal_beam());
    let values: Vec<[f64; 2]> = [0.5, 1.0, 2.0, 4.0]
        .iter()
        .map(|&resolution| {
            let s = solve_with(&slab, &options(resolution, FaceCondition::Extrapolated)).unwrap();
            [s.escape_quantile_s(0.5).unwrap(), s.reflected().unwrap()]
        })
        .collect();
    for quantity in 0..2 {
        let d: Vec<f64> = values
            .windows(2)
            .map(|w| (w[0][quantity] - w[1][quantity]).abs())
            .collect();
        for pair in d.windows(2) {
            let ratio = pair[0] / pair[1];
            assert!(
                (3.0..5.0).contains(&ratio),
                "quantity {quantity}: {values:?}"
            );
        }
    }
}

// ---------------------------------------------------------------------------------------
// Consistency and awkward media
// ---------------------------------------------------------------------------------------

/// Every photon ends one way; the distribution functions are what they claim to be.
fn assert_consistent(what: &str, solution: &EscapeSolution) {
    let total = solution.specular() + solution.escape_probability() + solution.absorbed();
    assert!(
        (total - 1.0).abs() < 1e-8,
        "{what}: outcomes add to {total}"
    );
    let p = solution.escape_probability();
    if p <= 0.0 {
        return;
    }
    // The time-stepped total of escapes against the steady one.
    let late = solution.escaped_by(1e300, Exit::Any);
    assert!((late / p - 1.0).abs() < 1e-3, "{what}: {late} vs {p}");
    let median = solution.escape_quantile_s(0.5).unwrap();
    let mean = solution.mean_escape_time_s().unwrap();
    if median == 0.0 {
        // Most photons left at t = 0: a source on a face held at zero density.
        assert!(solution.escape_cdf(0.0) >= 0.5, "{what}");
        return;
    }
    assert!(median > 0.0 && mean > 0.0, "{what}");
    let edges: Vec<f64> = (0..=400)
        .map(|k| median * 10f64.powf(-4.0 + k as f64 / 50.0))
        .collect();
    let cdf = solution.escape_cdf_at(&edges);
    let survival: Vec<f64> = edges.iter().map(|&t| solution.survival(t)).collect();
    for k in 1..edges.len() {
        assert!(
            cdf[k] >= cdf[k - 1],
            "{what}: cdf decreases at {}",
            edges[k]
        );
        assert!(
            survival[k] <= survival[k - 1] + 1e-12,
            "{what}: survival grows"
        );
        assert!(solution.escape_density_per_s(edges[k]) >= 0.0);
    }
    assert!(cdf[0] < 0.5 && cdf[edges.len() - 1] > 0.5 && cdf[edges.len() - 1] <= 1.0);
    // The quantile is the smallest t with F(t) ≥ p (F jumps at a collimated arrival).
    for p in [0.05, 0.5, 0.95] {
        let q = solution.escape_quantile_s(p).unwrap();
        assert!(solution.escape_cdf(q) >= p - 1e-6, "{what}: quantile {p}");
        assert!(
            solution.escape_cdf(q * (1.0 - 1e-9)) <= p + 1e-6,
            "{what}: quantile {p}"
        );
    }
    assert!(solution.decay_rate_per_s() > 0.0 && solution.decay_rate_per_s().is_finite());
    let residence: f64 = solution.residence_s_by_layer().iter().sum();
    assert!(residence.is_finite() && residence >= 0.0, "{what}");
}

fn three_layer_slab(source: Source) -> Medium {
    // Different μs′ (100, 75, 60 /cm) and μa (0.05, 0.15, 0.12 /cm); refractive indices
    // 1.0 / 1.33 / 1.5 under air for the convergence test, matched for the Monte Carlo.
    Medium::slab(
        vec![
            (0.2, layer(100.0, 0.9995, 0.0, 1.0)),
            (0.3, layer(150.0, 0.999, 0.5, 1.33)),
            (0.2, layer(60.0, 0.998, 0.0, 1.5)),
        ],
        1.0,
        source,
    )
    .unwrap()
}

#[test]
fn awkward_media_solve_without_panics() {
    let beam = Source::normal_beam();
    let cases: Vec<(&str, Medium)> = vec![
        (
            "index 4 against air, beam",
            Medium::slab(vec![(1.0, layer(20.0, 0.99, 0.0, 4.0))], 1.0, beam).unwrap(),
        ),
        (
            "index 3.9, diffuse light",
            Medium::slab(
                vec![(1.0, layer(20.0, 0.99, 0.0, 3.9))],
                1.0,
                Source::Diffuse,
            )
            .unwrap(),
        ),
        (
            "absorbing-only layer between scattering ones",
            Medium::slab(
                vec![
                    (0.5, layer(20.0, 1.0, 0.0, 1.0)),
                    (0.1, layer(5.0, 0.0, 0.0, 1.0)),
                    (0.5, layer(20.0, 1.0, 0.0, 1.0)),
                ],
                1.0,
                Source::SlabPlane { depth_cm: 0.25 },
            )
            .unwrap(),
        ),
        (
            "optically thin slab, τ = 1e-4",
            Medium::slab(vec![(1.0, layer(1e-4, 0.9, 0.0, 1.5))], 1.0, beam).unwrap(),
        ),
        (
            "transparent middle layer (well-mixed gap)",
            Medium::slab(
                vec![
                    (0.5, layer(30.0, 1.0, 0.0, 1.0)),
                    (0.5, layer(0.0, 1.0, 0.0, 1.2)),
                    (0.5, layer(30.0, 1.0, 0.0, 1.0)),
                ],
                1.0,
                Source::SlabPoint { depth_cm: 0.75 },
            )
            .unwrap(),
        ),
        (
            "transparent top and bottom layers, beam at 60°",
            Medium::slab(
                vec![
                    (0.5, layer(0.0, 1.0, 0.0, 1.5)),
                    (1.0, layer(30.0, 0.99, 0.8, 1.33)),
                    (0.5, layer(0.0, 1.0, 0.0, 1.5)),
                ],
                1.0,
                Source::Beam {
                    polar_angle_deg: 60.0,
                    profile: sojourn::medium::BeamProfile::Narrow,
                },
            )
            .unwrap(),
        ),
        (
            "sphere with a transparent core",
            Medium::sphere(
                vec![
                    (0.5, layer(0.0, 1.0, 0.0, 1.0)),
                    (1.0, layer(40.0, 0.999, 0.0, 1.0)),
                ],
                Source::centre(),
            )
            .unwrap(),
        ),
        (
            "point source on the face",
            Medium::slab(
                vec![(1.0, layer(20.0, 1.0, 0.0, 1.0))],
                1.0,
                Source::SlabPoint { depth_cm: 0.0 },
            )
            .unwrap(),
        ),
        (
            "slab 1e-30 cm thick",
            Medium::slab(vec![(1e-30, layer(3e31, 0.999, 0.0, 1.0))], 1.0, beam).unwrap(),
        ),
        (
            "sphere 1e26 cm across",
            Medium::sphere(vec![(1e26, layer(1e-24, 1.0, 0.0, 1.0))], Source::centre()).unwrap(),
        ),
        (
            "off-centre source near the surface of a layered sphere",
            Medium::sphere(
                vec![
                    (0.3, layer(300.0, 1.0, 0.0, 1.0)),
                    (1.0, layer(30.0, 0.99, 0.0, 1.0)),
                ],
                Source::SpherePoint { radius_cm: 0.98 },
            )
            .unwrap(),
        ),
    ];
    for (what, medium) in &cases {
        let solution = solve(medium).unwrap_or_else(|e| panic!("{what}: {e}"));
        assert_consistent(what, &solution);
        let zero = solve_with(medium, &options(1.0, FaceCondition::ZeroDensity))
            .unwrap_or_else(|e| panic!("{what}, zero density: {e}"));
        assert_consistent(what, &zero);
    }
    // Sizes: the 1e-30 cm slab and the 1e26 cm sphere give times that scale with them.
    let tiny = solve(&cases[8].1).unwrap().mean_escape_time_s().unwrap();
    assert!(tiny > 1e-42 && tiny < 1e-38, "{tiny}");
    let huge = solve(&cases[9].1).unwrap().mean_escape_time_s().unwrap();
    // (τ + q∞)²/2 scatterings of l = 1e24 cm each.
    let expected = (100.0f64 + Q).powi(2) / 2.0 * 1e24 / C;
    assert!((huge / expected - 1.0).abs() < 1e-3, "{huge} vs {expected}");
    // A transparent layer is a well-mixed gap: it holds photons but absorbs none.
    let gap = solve(&cases[4].1).unwrap();
    assert!(gap.residence_s_by_layer()[1] > 0.0);
}

#[test]
fn media_diffusion_cannot_describe_give_errors() {
    // A source in a transparent surface layer lies outside the diffusing medium.
    let medium = Medium::slab(
        vec![
            (0.5, layer(0.0, 1.0, 0.0, 1.0)),
            (1.0, layer(30.0, 1.0, 0.0, 1.0)),
        ],
        1.0,
        Source::SlabPoint { depth_cm: 0.2 },
    )
    .unwrap();
    assert!(matches!(
        solve(&medium),
        Err(SolverError::SourceOutsideDiffusingRegion { .. })
    ));
    // No transport extinction anywhere cannot reach the solver: a medium of transparent
    // layers is refused, and forward scattering with g = 1 cannot be built (`Anisotropy`
    // keeps g inside (−1, 1)), so `SolverError::NoDiffusingLayer` stays a guard.
    let clear = Layer::new("", 0.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
    assert!(Medium::slab(vec![(1.0, clear)], 1.0, Source::normal_beam()).is_err());
    assert!(PhaseFunction::henyey_greenstein(1.0).is_err());
    let medium = uniform_sphere(10.0, 1.0);
    for resolution in [0.0, f64::NAN, 1e6] {
        assert!(matches!(
            solve_with(&medium, &options(resolution, FaceCondition::Extrapolated)),
            Err(SolverError::InvalidOption { .. })
        ));
    }
}

#[test]
fn many_layers_are_one_layer() {
    // 1 000 identical layers give the one-layer solution (the grid follows D, not the
    // layer count), and a profile star solves (speed: examples/diffusion_solver_speed.rs).
    let one = Medium::slab(
        vec![(1.0, layer(80.0, 0.999, 0.3, 1.3))],
        1.0,
        Source::normal_beam(),
    )
    .unwrap();
    let many = Medium::slab(
        vec![(1e-3, layer(80.0, 0.999, 0.3, 1.3)); 1000],
        1.0,
        Source::normal_beam(),
    )
    .unwrap();
    let (a, b) = (solve(&one).unwrap(), solve(&many).unwrap());
    assert!((a.reflected().unwrap() / b.reflected().unwrap() - 1.0).abs() < 2e-4);
    let (ma, mb) = (
        a.mean_escape_time_s().unwrap(),
        b.mean_escape_time_s().unwrap(),
    );
    assert!((ma / mb - 1.0).abs() < 2e-4, "{ma} vs {mb}");
    assert!(b.grid_nodes() < 1500, "{}", b.grid_nodes());
}

// ---------------------------------------------------------------------------------------
// Monte Carlo against the solver
// ---------------------------------------------------------------------------------------

/// A Monte Carlo escape-time histogram: bin edges (s), counts per bin, counts below and
/// above the binned range. The one place these tests read the tally's histogram.
struct Histogram {
    edges: Vec<f64>,
    counts: Vec<f64>,
    below: f64,
    above: f64,
}

fn escape_time_histogram(stats: &PathStats) -> Histogram {
    let bins = stats
        .time_histogram()
        .contiguous()
        .expect("photons escaped");
    Histogram {
        edges: bins.edges,
        counts: bins.weights,
        below: bins.below as f64,
        above: bins.above as f64,
    }
}

/// Monte Carlo escapes (every exit) against the solver: (mean ratio, its 1σ, KS test,
/// MC escape probability, its 1σ, solver escape probability).
struct Comparison {
    escapes: u64,
    mean_ratio: f64,
    mean_sigma: f64,
    ks: BinnedKsTest,
    escape_mc: f64,
    escape_sigma: f64,
    escape_theory: f64,
}

fn compare(medium: &Medium, tally: &Tally) -> Comparison {
    let solution = solve(medium).unwrap();
    let escapes = tally.all_escapes();
    let n = escapes.count();
    let theory = solution.mean_escape_time_s().unwrap();
    let histogram = escape_time_histogram(&escapes);
    let cdf = solution.escape_cdf_at(&histogram.edges);
    let ks = binned_ks_test(
        &BinnedSample {
            edges: &histogram.edges,
            counts: &histogram.counts,
            below: histogram.below,
            above: histogram.above,
            effective_size: n as f64,
        },
        &cdf,
    )
    .unwrap();
    let launched = tally.launched();
    let escape_mc = n as f64 / launched as f64;
    Comparison {
        escapes: n,
        mean_ratio: escapes.time_s().mean().unwrap() / theory,
        mean_sigma: escapes.time_s().std_error().unwrap() / theory,
        ks,
        escape_mc,
        escape_sigma: binomial_stderr(escape_mc, launched),
        escape_theory: solution.escape_probability(),
    }
}

/// The two-zone sphere: a nearly transparent core (σ 1.78 /cm to 0.5 cm, τ 0.89) inside
/// an envelope 100× denser (τ 89), centred source. (The inverse arrangement, a thick core
/// in a thin envelope, is where diffusion's interface conditions miss a boundary layer;
/// see `full_comparison_with_the_monte_carlo`.)
fn two_zone_sphere() -> Medium {
    Medium::sphere(
        vec![
            (0.5, layer(1.78, 1.0, 0.0, 1.0)),
            (1.0, layer(178.0, 1.0, 0.0, 1.0)),
        ],
        Source::centre(),
    )
    .unwrap()
}

/// A smooth profile: σ(r) = σ_c e^(−3r/R) in 400 sub-shells, optical radius 200.
fn profile_sphere() -> Medium {
    let central = 200.0 * 3.0 / (1.0 - (-3.0f64).exp());
    exponential_sphere(central, 3.0, 1.0, 400)
}

/// Asserts |ratio − 1| ≤ sigmas · σ + allowance.
fn assert_mean(what: &str, c: &Comparison, sigmas: f64, allowance: f64) {
    assert!(
        (c.mean_ratio - 1.0).abs() <= sigmas * c.mean_sigma + allowance,
        "{what}: MC/solver mean {} ± {} (N = {})",
        c.mean_ratio,
        c.mean_sigma,
        c.escapes
    );
}

#[test]
fn monte_carlo_follows_the_solver_where_diffusion_holds() {
    // Modest photon counts (the full comparison is the ignored test below). Tolerance on
    // the mean: 4σ plus the 1 % the acceptance allows diffusion; on the distribution: the
    // calibrated binned KS p-value above 0.001 (a 0.1 % false alarm rate if the solver
    // were exact). The accelerated walk (validated against the direct walk in
    // tests/physics/accelerated.rs) keeps the two spheres fast.
    let cases = [
        (
            "two-zone sphere",
            two_zone_sphere(),
            4_000,
            Method::Accelerated,
        ),
        (
            "smooth profile, τ = 200",
            profile_sphere(),
            400,
            Method::Direct,
        ),
        (
            "three-layer slab, plane source",
            three_layer_slab_matched(),
            6_000,
            Method::Direct,
        ),
    ];
    for (what, medium, photons, method) in cases {
        let tally = run_method(&medium, photons, 21, method).tally;
        let c = compare(&medium, &tally);
        assert_mean(what, &c, 4.0, 0.01);
        assert!(c.ks.p_value > 0.001, "{what}: {:?}", c.ks);
        assert!(
            (c.escape_mc - c.escape_theory).abs() <= 4.0 * c.escape_sigma + 0.01 * c.escape_theory,
            "{what}: escape {} ± {} vs {}",
            c.escape_mc,
            c.escape_sigma,
            c.escape_theory
        );
    }
}

fn three_layer_slab_matched() -> Medium {
    Medium::slab(
        vec![
            (0.2, layer(100.0, 0.9995, 0.0, 1.0)),
            (0.3, layer(150.0, 0.999, 0.5, 1.0)),
            (0.2, layer(60.0, 0.998, 0.0, 1.0)),
        ],
        1.0,
        Source::SlabPlane { depth_cm: 0.35 },
    )
    .unwrap()
}

#[test]
fn monte_carlo_departs_from_the_solver_where_diffusion_fails() {
    // A slab one mean free path thick and a sphere of albedo 0.3: the Monte Carlo is
    // many standard errors away from diffusion theory on the mean escape time, and the
    // distribution fails the KS test at the resolution of the calibration.
    let slab = Medium::slab(
        vec![(1.0, layer(1.0, 1.0, 0.0, 1.0))],
        1.0,
        Source::normal_beam(),
    )
    .unwrap();
    let sphere = uniform_sphere(3.0, 0.3);
    for (what, medium) in [("τ = 1 slab", slab), ("albedo 0.3 sphere", sphere)] {
        let tally = run_method(&medium, 5_000, 22, Method::Direct).tally;
        let c = compare(&medium, &tally);
        assert!(
            (c.mean_ratio - 1.0).abs() > 10.0 * c.mean_sigma + 0.05,
            "{what}: MC/solver mean {} ± {}",
            c.mean_ratio,
            c.mean_sigma
        );
        assert!(c.ks.distance > 0.1, "{what}: {:?}", c.ks);
        assert_eq!(c.ks.p_value, 1.0 / 1001.0, "{what}");
    }
}

/// The run's own analysis (`RunAnalysis`: the solver, the binned KS test, the verdict) of
/// `photons` photons on `medium`.
fn analyse(medium: &Medium, photons: u64, seed: u64, method: Method) -> RunAnalysis {
    let config = RunConfig {
        photons,
        seed,
        method,
        ..RunConfig::default()
    };
    let tally = run(medium, &config).tally;
    RunAnalysis::new(medium, &config, &tally)
}

#[test]
fn the_verdict_follows_the_monte_carlo_against_the_solver() {
    // The cases above, through the analysis every run gets. Where diffusion holds the
    // verdict is trustworthy: the photon counts put 3σ of the Monte Carlo mean inside the
    // 5 % tolerance (σ ≈ 0.8/√n relative for these escape-time distributions) and the KS
    // noise (≈ 0.87/√n) well below 0.03. Where it fails (τ = 1, albedo 0.3) the verdict is
    // false and names the cause.
    let holds = [
        (
            "two-zone sphere",
            two_zone_sphere(),
            6_000,
            Method::Accelerated,
        ),
        (
            "smooth profile, τ = 200",
            profile_sphere(),
            6_000,
            Method::Accelerated,
        ),
        (
            "three-layer slab, plane source",
            three_layer_slab_matched(),
            8_000,
            Method::Direct,
        ),
    ];
    for (what, medium, photons, method) in holds {
        let analysis = analyse(&medium, photons, 24, method);
        let c = &analysis.comparison;
        println!("{what}, {photons} photons: {}", c.verdict.reason);
        assert_eq!(
            c.verdict.trustworthy,
            Some(true),
            "{what}: {}",
            c.verdict.reason
        );
        assert!(
            c.verdict
                .reason
                .starts_with("diffusion describes this medium to"),
            "{what}: {}",
            c.verdict.reason
        );
        assert!(
            c.ks_distance.unwrap() <= 0.03,
            "{what}: {:?}",
            c.ks_distance
        );
    }
    let slab = Medium::slab(
        vec![(1.0, layer(1.0, 1.0, 0.0, 1.0))],
        1.0,
        Source::normal_beam(),
    )
    .unwrap();
    let fails = [
        (
            "τ = 1 slab",
            slab,
            "the slab is 1.0 transport mean free paths thick",
        ),
        (
            "albedo 0.3 sphere",
            uniform_sphere(3.0, 0.3),
            "the albedo is 0.30",
        ),
    ];
    for (what, medium, cause) in fails {
        let analysis = analyse(&medium, 2_000, 24, Method::Direct);
        let v = &analysis.comparison.verdict;
        println!("{what}, 2000 photons: {}", v.reason);
        assert_eq!(v.trustworthy, Some(false), "{what}: {}", v.reason);
        assert!(v.reason.contains(cause), "{what}: {}", v.reason);
        assert!(
            v.reason.starts_with("diffusion is off"),
            "{what}: {}",
            v.reason
        );
    }
}

#[test]
#[ignore = "full-precision Monte Carlo comparison, several minutes: cargo test --release -- --ignored full_comparison --nocapture"]
fn full_comparison_with_the_monte_carlo() {
    // Acceptance (issue): mean within 1 %, KS D ≤ 0.01 where diffusion holds, direct walk.
    let cases = [
        ("two-zone sphere", two_zone_sphere(), 100_000),
        ("smooth profile, τ = 200", profile_sphere(), 100_000),
        (
            "three-layer slab, plane source",
            three_layer_slab_matched(),
            200_000,
        ),
    ];
    for (what, medium, photons) in cases {
        let tally = run_method(&medium, photons, 23, Method::Direct).tally;
        let c = compare(&medium, &tally);
        println!(
            "{what}: {photons} photons, {} escapes; MC/solver mean {:.5} ± {:.5}; KS D {:.5}, \
             p {:.4} (unbinned {:.3}); escape {:.5} ± {:.5} vs {:.5}",
            c.escapes,
            c.mean_ratio,
            c.mean_sigma,
            c.ks.distance,
            c.ks.p_value,
            c.ks.unbinned_p_value,
            c.escape_mc,
            c.escape_sigma,
            c.escape_theory
        );
        assert!((c.mean_ratio - 1.0).abs() <= 0.01, "{what}");
        assert!(c.ks.distance <= 0.01, "{what}");
    }
    // For the record (not asserted): a thick core in a thin envelope (Ember-like: τ 90
    // inside τ 2.1), where photons leaving the core see a nearly free surface.
    let ember = Medium::sphere(
        vec![
            (0.3, layer(300.0, 1.0, 0.0, 1.0)),
            (1.0, layer(3.0, 1.0, 0.0, 1.0)),
        ],
        Source::centre(),
    )
    .unwrap();
    let tally = run_method(&ember, 100_000, 24, Method::Direct).tally;
    let c = compare(&ember, &tally);
    println!(
        "thick core, thin envelope: MC/solver mean {:.5} ± {:.5}; KS D {:.5}, p {:.4}",
        c.mean_ratio, c.mean_sigma, c.ks.distance, c.ks.p_value
    );
}

#[test]
fn a_source_a_vanishing_distance_below_a_face_is_refused_within_the_work_budget() {
    // Found by the long fuzz campaign: a plane source 3e-29 km below the top of a
    // τ = 60 slab made the integration take ~2·10⁵ steps (seconds on every run). The
    // solver now stops at its stated work budget with an error, which the comparison
    // reports as a note, instead of running on.
    let medium = sojourn::medium::model_file::parse_model(
        r#"{"geometry":"slab","length_unit":"km",
            "source":{"kind":"plane","depth":2.9999999999999997e-29},
            "layers":[{"extinction_coefficient":1.0,"name":"upper atmosphere","thickness":20.0},
                      {"extinction_coefficient":1.0,"name":"deep atmosphere","thickness":40.0}]}"#,
        "vanishing-depth.json",
    )
    .unwrap();
    let outcome = solve(&medium);
    assert!(
        matches!(outcome, Err(SolverError::TooMuchWork { .. })),
        "{:?}",
        outcome.err()
    );
}
