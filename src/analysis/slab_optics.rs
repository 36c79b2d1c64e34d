//! The slab-optics part of a run's analysis: steady and time-resolved diffusion theory
//! beside the Monte Carlo result, resolved tallies turned into physical quantities, and the
//! flags that say where diffusion theory should not be trusted.

use serde::Serialize;

use crate::diffusion::time_resolved::{Boundary, DiffusionSlab, SlabOptics};
use crate::medium::{Geometry, Medium};
use crate::tally::{ResolvedTally, Tally};
use crate::transport::crossing::conservative_h;

use super::decay_fit::{DecayFit, fit_late_decay};

/// Thickness-weighted optical properties of a slab, the single-layer stand-in diffusion
/// theory uses (exact for a single layer).
pub fn equivalent_optics(medium: &Medium) -> SlabOptics {
    let thickness = medium.size_cm();
    let mut absorption = 0.0;
    let mut reduced_scattering = 0.0;
    let mut index = 0.0;
    for (i, layer) in medium.layers().iter().enumerate() {
        let (top, bottom) = medium.layer_bounds_cm(i);
        let weight = (bottom - top) / thickness;
        absorption += weight * layer.absorption_per_cm();
        reduced_scattering +=
            weight * layer.scattering_per_cm() * (1.0 - layer.phase().mean_cosine());
        index += weight * layer.refractive_index();
    }
    SlabOptics {
        mua_per_cm: absorption,
        musp_per_cm: reduced_scattering,
        thickness_cm: thickness,
        n_medium: index,
        n_outside: medium.ambient_above(),
    }
}

/// Steady-state diffusion theory for a slab beside the Monte Carlo values.
#[derive(Debug, Clone, Serialize)]
pub struct SlabDiffusion {
    /// What the diffusion model assumes.
    pub model: String,
    /// Absorption coefficient used, 1/cm (thickness-weighted).
    pub absorption_per_cm: f64,
    /// Reduced scattering coefficient μs′ used, 1/cm (thickness-weighted).
    pub reduced_scattering_per_cm: f64,
    /// Extrapolation length z_e = 2 A D, cm.
    pub extrapolation_length_cm: f64,
    /// Diffuse reflectance, extrapolated boundary, per launched photon.
    pub reflectance: f64,
    /// Diffuse transmittance, extrapolated boundary, per launched photon.
    pub transmittance: f64,
    /// Diffuse reflectance with zero boundary (z_e = 0), per launched photon.
    pub reflectance_zero_boundary: f64,
    /// Diffuse transmittance with zero boundary, per launched photon.
    pub transmittance_zero_boundary: f64,
    /// Monte Carlo diffuse reflectance (the `outcome.reflected` fraction).
    pub monte_carlo_reflectance: f64,
    /// Monte Carlo transmittance of scattered light (unscattered photons left out, as in
    /// diffusion theory).
    pub monte_carlo_diffuse_transmittance: f64,
    /// Late-time decay rate of reflectance and transmittance, extrapolated boundary, 1/s.
    pub decay_rate_per_s: f64,
    /// The same with zero boundary, 1/s.
    pub decay_rate_zero_boundary_per_s: f64,
    /// Where diffusion theory is not expected to hold for this sample.
    pub warnings: Vec<String>,
}

/// Diffusion theory for a slab illuminated by a beam or diffusely, `None` for spheres,
/// internal sources, or slabs diffusion theory cannot describe at all.
pub fn slab_diffusion(medium: &Medium, tally: &Tally) -> Option<SlabDiffusion> {
    if medium.geometry() != Geometry::Slab || !medium.source().enters_from_outside() {
        return None;
    }
    let optics = equivalent_optics(medium);
    let extrapolated = DiffusionSlab::new(optics, Boundary::Extrapolated).ok()?;
    let zero = DiffusionSlab::new(optics, Boundary::Zero).ok()?;
    let launched = tally.launched().max(1) as f64;
    let entering = 1.0 - tally.specular().weight() / launched;
    let unscattered = tally.transmitted().scattering_histogram().zero_weight();
    let mut warnings = Vec::new();
    if medium.layers().len() > 1 {
        warnings.push(
            "layered slab: diffusion theory here uses thickness-weighted properties".to_string(),
        );
    }
    if optics.mua_per_cm > 0.1 * optics.musp_per_cm {
        warnings.push(format!(
            "absorption is not small against reduced scattering (μa/μs′ = {:.3}; diffusion \
             needs μa ≪ μs′)",
            optics.mua_per_cm / optics.musp_per_cm
        ));
    }
    let transport_thickness = optics.thickness_cm * (optics.mua_per_cm + optics.musp_per_cm);
    if transport_thickness < 10.0 {
        warnings.push(format!(
            "the slab is only {transport_thickness:.2} transport mean free paths thick; \
             diffusion theory needs many"
        ));
    }
    if medium.ambient_below() != medium.ambient_above() {
        warnings.push("the boundary factor A uses the index above the slab for both faces".into());
    }
    Some(SlabDiffusion {
        model: "steady diffusion, source at 1/μs′, extrapolated boundary z_e = 2AD (A from \
                the index mismatch; Haskell et al. 1994), per launched photon (× the \
                fraction entering)"
            .to_string(),
        absorption_per_cm: optics.mua_per_cm,
        reduced_scattering_per_cm: optics.musp_per_cm,
        extrapolation_length_cm: extrapolated.extrapolation_length_cm(),
        reflectance: entering * extrapolated.steady_reflectance(),
        transmittance: entering * extrapolated.steady_transmittance(),
        reflectance_zero_boundary: entering * zero.steady_reflectance(),
        transmittance_zero_boundary: entering * zero.steady_transmittance(),
        monte_carlo_reflectance: tally.reflected().weight() / launched,
        monte_carlo_diffuse_transmittance: (tally.transmitted().weight() - unscattered) / launched,
        decay_rate_per_s: extrapolated.decay_rate_per_s(),
        decay_rate_zero_boundary_per_s: zero.decay_rate_per_s(),
        warnings,
    })
}

/// Resolved slab results in physical units.
#[derive(Debug, Clone, Serialize)]
pub struct ResolvedSummary {
    /// Width of a time bin, s.
    pub time_bin_s: f64,
    /// Centres of the time bins, s.
    pub time_s: Vec<f64>,
    /// Monte Carlo time-resolved diffuse reflectance, fraction of launched photons per s.
    pub reflectance_per_s: Vec<f64>,
    /// Monte Carlo time-resolved transmittance, fraction per s (unscattered included).
    pub transmittance_per_s: Vec<f64>,
    /// Diffusion theory, extrapolated boundary, on the same bins (fraction per s).
    pub diffusion_reflectance_per_s: Vec<f64>,
    /// Diffusion transmittance, extrapolated boundary, on the same bins (fraction per s).
    pub diffusion_transmittance_per_s: Vec<f64>,
    /// Diffusion reflectance with zero boundary (Patterson, Chance & Wilson 1989).
    pub diffusion_reflectance_zero_boundary_per_s: Vec<f64>,
    /// Photons reflected or transmitted after the last bin, fractions of launched.
    pub later_fraction: [f64; 2],
    /// Late-time decay of the Monte Carlo reflectance.
    pub reflectance_decay: Option<DecayFit>,
    /// Late-time decay of the Monte Carlo transmittance.
    pub transmittance_decay: Option<DecayFit>,
    /// Diffusion decay rates (extrapolated, zero boundary), 1/s.
    pub diffusion_decay_rate_per_s: Option<[f64; 2]>,
    /// Fraction of launched photons absorbed in each layer.
    pub absorbed_by_layer: Vec<f64>,
    /// Width of a depth bin, cm.
    pub depth_bin_cm: f64,
    /// Absorbed fraction per unit depth, 1/cm, per depth bin.
    pub absorbed_per_cm: Vec<f64>,
    /// Edges of the exit-cosine bins.
    pub cosine_edges: Vec<f64>,
    /// Reflected radiance per bin: fraction per steradian per unit projected area,
    /// dF / (2π μ dμ) per launched photon.
    pub reflected_radiance_per_sr: Vec<f64>,
    /// Transmitted radiance per bin, likewise.
    pub transmitted_radiance_per_sr: Vec<f64>,
    /// Fraction of reflected photons per exit-cosine bin.
    pub reflected_cosine_fraction: Vec<f64>,
    /// Limb darkening of the reflected light: relative radiance at the bin centres against
    /// the exact law of a deep conservative, isotropically scattering medium.
    pub limb_darkening: LimbDarkening,
    /// Null: the radial bins are logarithmic (`radial_edges_cm`); the key stays for
    /// readers of older reports, where the bins were of one width.
    pub radial_bin_cm: Option<f64>,
    /// Transport mean free path l′ = 1/(μa + μs′) the bins are scaled to (thickness-weighted
    /// optics), cm.
    pub transport_mean_free_path_cm: f64,
    /// Edges of the radial bins (distance from the beam axis), cm, logarithmic.
    pub radial_edges_cm: Vec<f64>,
    /// Spatially resolved diffuse reflectance R(ρ) around the beam axis, fraction of the
    /// launched photons per cm², per radial bin.
    pub reflectance_per_cm2: Vec<f64>,
    /// Its standard error per bin (binomial for analog photons; for weighted ones the
    /// bound √(Σw)/N, as w ≤ 1).
    pub reflectance_per_cm2_stderr: Vec<f64>,
    /// Spatially resolved transmittance T(ρ) (unscattered light included), per cm².
    pub transmittance_per_cm2: Vec<f64>,
    /// Its standard error per bin.
    pub transmittance_per_cm2_stderr: Vec<f64>,
    /// Reflected and transmitted fractions nearer the axis than the first radial bin.
    pub radial_nearer_fraction: [f64; 2],
    /// Reflected and transmitted fractions beyond the last radial bin.
    pub radial_farther_fraction: [f64; 2],
    /// Narrow beams: the steady diffusion R(ρ) of a semi-infinite medium of the slab's
    /// (thickness-weighted) optics, dipole with the extrapolated boundary (Farrell,
    /// Patterson & Wilson 1992), averaged over each radial bin, per launched photon (× the
    /// fraction entering), per cm²; empty for other sources.
    pub dipole_reflectance_per_cm2: Vec<f64>,
}

/// Emergent angular distribution of reflected light as limb darkening.
#[derive(Debug, Clone, Serialize)]
pub struct LimbDarkening {
    /// Bin-centre cosines μ.
    pub mu: Vec<f64>,
    /// Monte Carlo radiance, scaled to carry the same flux as H(μ)/H(1) (so that the two
    /// can be read on one scale).
    pub monte_carlo: Vec<f64>,
    /// Exact law of a deep, conservative, isotropically scattering medium: H(μ)/H(1)
    /// (Chandrasekhar 1950, ch. V), for comparison.
    pub exact_h_ratio: Vec<f64>,
    /// Eddington's approximation (0.4 + 0.6 μ), for comparison.
    pub eddington: Vec<f64>,
}

fn limb_darkening(edges: &[f64], radiance: &[f64]) -> LimbDarkening {
    let h1 = conservative_h(1.0);
    let mu: Vec<f64> = edges.windows(2).map(|w| 0.5 * (w[0] + w[1])).collect();
    let exact_h_ratio: Vec<f64> = mu.iter().map(|&m| conservative_h(m) / h1).collect();
    // Flux carried by each law over the bins: Σ I(μ) π (b² − a²).
    let flux = |values: &[f64]| -> f64 {
        values
            .iter()
            .zip(edges.windows(2))
            .map(|(v, w)| v * (w[1] * w[1] - w[0] * w[0]))
            .sum()
    };
    let scale = flux(&exact_h_ratio) / flux(radiance).max(f64::MIN_POSITIVE);
    LimbDarkening {
        monte_carlo: radiance.iter().map(|r| r * scale).collect(),
        eddington: mu.iter().map(|&m| 0.4 + 0.6 * m).collect(),
        exact_h_ratio,
        mu,
    }
}

/// Resolved results of `tally` on `medium`, if the tally kept them.
pub fn resolved_summary(medium: &Medium, tally: &Tally) -> Option<ResolvedSummary> {
    let resolved: &ResolvedTally = tally.resolved()?;
    let layout = resolved.layout();
    let launched = tally.launched().max(1) as f64;
    let bins = layout.time_bins;
    let time_s: Vec<f64> = (0..bins)
        .map(|i| (i as f64 + 0.5) * layout.time_bin_s)
        .collect();
    let per_second = |weights: &[f64]| -> Vec<f64> {
        weights[..bins]
            .iter()
            .map(|&w| w / launched / layout.time_bin_s)
            .collect()
    };
    let optics = equivalent_optics(medium);
    let entering = 1.0 - tally.specular().weight() / launched;
    let with_beam = medium.source().enters_from_outside();
    let extrapolated = with_beam
        .then(|| DiffusionSlab::new(optics, Boundary::Extrapolated).ok())
        .flatten();
    let zero = with_beam
        .then(|| DiffusionSlab::new(optics, Boundary::Zero).ok())
        .flatten();
    // Bin averages of the diffusion curves (Simpson on each bin).
    let bin_average = |f: &dyn Fn(f64) -> f64, i: usize| {
        let (a, b) = (
            i as f64 * layout.time_bin_s,
            (i + 1) as f64 * layout.time_bin_s,
        );
        let m = 0.5 * (a + b);
        let safe = |t: f64| if t > 0.0 { f(t) } else { 0.0 };
        entering * (safe(a) + 4.0 * safe(m) + safe(b)) / 6.0
    };
    let curve = |slab: &Option<DiffusionSlab>, reflect: bool| -> Vec<f64> {
        match slab {
            Some(slab) => (0..bins)
                .map(|i| {
                    if reflect {
                        bin_average(&|t| slab.reflectance_per_s(t), i)
                    } else {
                        bin_average(&|t| slab.transmittance_per_s(t), i)
                    }
                })
                .collect(),
            None => Vec::new(),
        }
    };
    let cosine_bins = layout.cosine_bins;
    let cosine_edges: Vec<f64> = (0..=cosine_bins)
        .map(|i| i as f64 / cosine_bins as f64)
        .collect();
    let radiance = |weights: &[f64]| -> Vec<f64> {
        weights
            .iter()
            .enumerate()
            .map(|(i, &c)| {
                let (a, b) = (cosine_edges[i], cosine_edges[i + 1]);
                // ∫ 2π μ dμ over the bin = π (b² − a²).
                c / launched / (std::f64::consts::PI * (b * b - a * a))
            })
            .collect()
    };
    let reflected_by_time = resolved.reflected_by_time().weights();
    let transmitted_by_time = resolved.transmitted_by_time().weights();
    let reflected_by_cosine = resolved.reflected_by_cosine().weights();
    let reflected_total: f64 = reflected_by_cosine.iter().sum();
    let radial = RadialSummary::new(medium, tally, resolved, entering);
    let diffusion_reflectance = curve(&extrapolated, true);
    let diffusion_transmittance = curve(&extrapolated, false);
    let reflected_radiance = radiance(&reflected_by_cosine);
    Some(ResolvedSummary {
        limb_darkening: limb_darkening(&cosine_edges, &reflected_radiance),
        time_bin_s: layout.time_bin_s,
        reflectance_per_s: per_second(&reflected_by_time),
        transmittance_per_s: per_second(&transmitted_by_time),
        reflectance_decay: fit_late_decay(
            &resolved.reflected_by_time().counts()[..bins],
            resolved.reflected_by_time().counts()[bins],
            &diffusion_reflectance,
            layout.time_bin_s,
        ),
        transmittance_decay: fit_late_decay(
            &resolved.transmitted_by_time().counts()[..bins],
            resolved.transmitted_by_time().counts()[bins],
            &diffusion_transmittance,
            layout.time_bin_s,
        ),
        diffusion_reflectance_per_s: diffusion_reflectance,
        diffusion_transmittance_per_s: diffusion_transmittance,
        diffusion_reflectance_zero_boundary_per_s: curve(&zero, true),
        time_s,
        later_fraction: [
            reflected_by_time[bins] / launched,
            transmitted_by_time[bins] / launched,
        ],
        diffusion_decay_rate_per_s: extrapolated
            .as_ref()
            .zip(zero.as_ref())
            .map(|(e, z)| [e.decay_rate_per_s(), z.decay_rate_per_s()]),
        absorbed_by_layer: resolved
            .absorbed_by_layer()
            .weights()
            .iter()
            .map(|&w| w / launched)
            .collect(),
        depth_bin_cm: layout.depth_bin_cm,
        absorbed_per_cm: resolved
            .absorbed_by_depth()
            .weights()
            .iter()
            .map(|&w| w / launched / layout.depth_bin_cm)
            .collect(),
        reflected_radiance_per_sr: reflected_radiance,
        transmitted_radiance_per_sr: radiance(&resolved.transmitted_by_cosine().weights()),
        reflected_cosine_fraction: reflected_by_cosine
            .iter()
            .map(|&w| {
                if reflected_total > 0.0 {
                    w / reflected_total
                } else {
                    0.0
                }
            })
            .collect(),
        cosine_edges,
        radial_bin_cm: None,
        transport_mean_free_path_cm: radial.transport_mean_free_path_cm,
        radial_edges_cm: radial.edges_cm,
        reflectance_per_cm2: radial.reflectance.0,
        reflectance_per_cm2_stderr: radial.reflectance.1,
        transmittance_per_cm2: radial.transmittance.0,
        transmittance_per_cm2_stderr: radial.transmittance.1,
        radial_nearer_fraction: radial.nearer,
        radial_farther_fraction: radial.farther,
        dipole_reflectance_per_cm2: radial.dipole,
    })
}

/// R(ρ), T(ρ) and the dipole on the radial bins.
struct RadialSummary {
    transport_mean_free_path_cm: f64,
    edges_cm: Vec<f64>,
    reflectance: (Vec<f64>, Vec<f64>),
    transmittance: (Vec<f64>, Vec<f64>),
    nearer: [f64; 2],
    farther: [f64; 2],
    dipole: Vec<f64>,
}

impl RadialSummary {
    fn new(medium: &Medium, tally: &Tally, resolved: &ResolvedTally, entering: f64) -> Self {
        use std::f64::consts::PI;
        let layout = resolved.layout();
        let launched = tally.launched().max(1) as f64;
        let edges_cm = layout.radial_edges_cm();
        let areas: Vec<f64> = edges_cm
            .windows(2)
            .map(|w| PI * (w[1] * w[1] - w[0] * w[0]))
            .collect();
        let per_area = |series: &crate::tally::BinSeries| -> (Vec<f64>, Vec<f64>) {
            let weights = series.weights();
            let inner = &weights[1..=layout.radial_bins];
            let values = inner
                .iter()
                .zip(&areas)
                .map(|(w, area)| w / launched / area)
                .collect();
            let errors = inner
                .iter()
                .zip(&areas)
                .map(|(w, area)| {
                    let p = w / launched;
                    let variance = if series_is_analog(series) {
                        p * (1.0 - p) / launched
                    } else {
                        w / (launched * launched)
                    };
                    variance.max(0.0).sqrt() / area
                })
                .collect();
            (values, errors)
        };
        let ends = |series: &crate::tally::BinSeries| {
            let weights = series.weights();
            (
                weights[0] / launched,
                weights[layout.radial_bins + 1] / launched,
            )
        };
        let (r_near, r_far) = ends(resolved.reflected_by_radius());
        let (t_near, t_far) = ends(resolved.transmitted_by_radius());
        let optics = equivalent_optics(medium);
        let beam = matches!(
            medium.source(),
            crate::medium::Source::Beam {
                profile: crate::medium::BeamProfile::Narrow,
                ..
            }
        );
        let dipole = crate::diffusion::dipole::Dipole::new(
            optics.mua_per_cm,
            optics.musp_per_cm,
            optics.n_medium / optics.n_outside,
        )
        .filter(|_| beam)
        .map(|dipole| {
            edges_cm
                .windows(2)
                .map(|w| entering * dipole.ring_average_per_cm2(w[0], w[1]))
                .collect()
        })
        .unwrap_or_default();
        Self {
            transport_mean_free_path_cm: super::resolved_layout::transport_mean_free_path_cm(
                medium,
            ),
            reflectance: per_area(resolved.reflected_by_radius()),
            transmittance: per_area(resolved.transmitted_by_radius()),
            edges_cm,
            nearer: [r_near, t_near],
            farther: [r_far, t_far],
            dipole,
        }
    }
}

/// Whether every photon in `series` had weight 1 (its weights equal its counts).
fn series_is_analog(series: &crate::tally::BinSeries) -> bool {
    series
        .weights()
        .iter()
        .zip(series.counts())
        .all(|(w, &c)| *w == c as f64)
}
