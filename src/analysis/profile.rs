//! The profile analysis (`sojourn profile`): the optical structure of a sphere and where
//! its diffusion time accrues, with no Monte Carlo.
//!
//! Per shell (every sub-shell of a tabulated profile, every plain layer): radius, density,
//! temperature, opacity, mean free path l, optical depth from the surface, and the diffusion
//! time from the centre, T = (1/c) ∫₀^R r / l_tr(r) dr (Krapivsky, Redner & Ben-Naim 2010,
//! problem 2.21; docs/references.md),
//! with each shell's part (1/c) ∫_shell r / l_tr dr and its share of T (`time_share`):
//! how much each shell's opacity adds to the mean exit time (∂T/∂σ_tr(r) = r/c), the
//! *accrual*. Where the radiation *resides* meanwhile is the Green's-function residence
//! time of [`crate::diffusion::estimate`] (`residence_share`): that is the *time budget*,
//! the quantity a run's Monte Carlo residence tally measures on the same shells, so
//! `sojourn profile` and `sojourn run` report one budget. Both sum to T.

use serde::Serialize;

use super::theory::{DiffusionSummary, EscapeTimeTheory, solve_diffusion};
use crate::analysis::stellar::StellarAnalysis;
use crate::diffusion::{self, MILNE_EXTRAPOLATION_LENGTH};
use crate::medium::profile::ProfileSummary;
use crate::medium::{Geometry, Medium, MediumError};
use crate::star::photosphere::Photosphere;
use crate::star::zones::Zone;
use crate::units::SPEED_OF_LIGHT_CM_S;

/// Optical depth from the surface that defines the photosphere (Eddington: τ = 2/3).
pub const PHOTOSPHERE_OPTICAL_DEPTH: f64 = 2.0 / 3.0;

/// One shell of the profile report. Values are those of the homogeneous shell the walker
/// sees (for a profile sub-shell, radial averages over it).
#[derive(Debug, Clone, Serialize)]
pub struct ShellRow {
    /// Index among the medium's layers (innermost 0).
    pub index: usize,
    /// Name of the model layer the shell belongs to.
    pub layer: String,
    /// Inner radius, cm.
    pub inner_radius_cm: f64,
    /// Outer radius, cm.
    pub radius_cm: f64,
    /// Density, g cm⁻³ (null where the model gives none).
    pub density_g_cm3: Option<f64>,
    /// Temperature, K (null where the model gives none).
    pub temperature_k: Option<f64>,
    /// Mass opacity, cm² g⁻¹ (null where the model gives none).
    pub opacity_cm2_g: Option<f64>,
    /// Fraction of the opacity that is true scattering (null where unknown).
    pub scattering_fraction: Option<f64>,
    /// Extinction σ, cm⁻¹.
    pub extinction_per_cm: f64,
    /// Mean free path 1/σ, cm (null for a transparent shell).
    pub mean_free_path_cm: Option<f64>,
    /// Optical thickness of the shell along a radius.
    pub tau_shell: f64,
    /// Optical depth from the surface down to the shell's outer radius.
    pub tau_from_surface: f64,
    /// The shell's part of the diffusion time from the centre, (1/c) ∫ r σ_tr dr, s.
    pub time_s: f64,
    /// (1/c) ∫₀^radius r σ_tr dr: the diffusion time accrued from the centre to the shell's
    /// outer radius, s.
    pub cumulative_time_s: f64,
    /// `time_s` / total.
    pub time_share: f64,
    /// Share of the mean exit time that diffusing radiation spends inside the shell (the
    /// residence time of steady diffusion from a central source).
    pub residence_share: f64,
    /// Luminosity inside the shell's outer radius, L(r) = ∫ ε dm, erg s⁻¹ (null without
    /// energy generation).
    pub luminosity_erg_s: Option<f64>,
}

/// Diffusion-theory times from the centre.
#[derive(Debug, Clone, Serialize)]
pub struct ProfileDiffusion {
    /// Rule of thumb N ≈ τ².
    pub naive_scatterings: f64,
    /// Rule of thumb t ≈ τ R / c, s.
    pub naive_time_s: f64,
    /// Mean exit time of steady diffusion from the centre, (1/c) ∫₀^R r / l_tr dr, s.
    pub mean_time_s: f64,
    /// The same with the Milne extrapolated boundary (surface moved out by q∞ = 0.7104
    /// transport optical depths), s.
    pub mean_time_extrapolated_s: f64,
    /// Scatterings implied by `mean_time_s`.
    pub mean_scatterings: f64,
    /// Scatterings implied by `mean_time_extrapolated_s`.
    pub mean_scatterings_extrapolated: f64,
    /// `naive_time_s` / `mean_time_s`: how far the rule of thumb is off.
    pub naive_over_diffusion: f64,
    /// Fraction of the radiation from the centre that diffusion lets leave, with absorption
    /// (the time-dependent diffusion solver, as in a run's `diffusion.escape_probability`;
    /// null where the solver cannot describe the medium).
    pub escape_probability: Option<f64>,
    /// The escape time from the centre, conditional on escape, as in a run's
    /// `diffusion.escape_time` ([`DiffusionSummary`]: the solver).
    pub escape_time: EscapeTimeTheory,
    /// Late decay rate λ₁ of the escape-time distribution, 1/s (the solver).
    pub decay_rate_per_s: Option<f64>,
    /// Mean exit time averaged over where the energy is released, ∫ T(r₀) dL / L, s (null
    /// without energy generation).
    pub luminosity_weighted_time_s: Option<f64>,
    /// The same with the Milne extrapolated boundary, s.
    pub luminosity_weighted_time_extrapolated_s: Option<f64>,
    /// Flux-weighted mean residence time U_F / L, s (equal to the luminosity-weighted time by
    /// Little's law; computed from the radiative flux).
    pub flux_weighted_time_s: Option<f64>,
    /// Radiant energy content over luminosity, U_rad / L with U_rad = ∫ a T⁴ dV, s.
    pub energy_content_time_s: Option<f64>,
    /// Mean exit time from the centre to the base of the outer convective zone, s (null when
    /// there is none).
    pub time_to_convective_base_s: Option<f64>,
    /// Luminosity-weighted mean exit time to the base of the outer convective zone, s.
    pub luminosity_weighted_time_to_convective_base_s: Option<f64>,
    /// Time convection takes to cross the outer convective zone (mixing-length estimate), s.
    pub convective_crossing_time_s: Option<f64>,
}

/// Where the radiation spends the mean exit time from the centre (steady diffusion's
/// residence, the same budget a run tallies by Monte Carlo), and where the diffusion time
/// accrues, (1/c) ∫ r / l_tr dr: radii inside which given fractions lie, cm.
#[derive(Debug, Clone, Serialize)]
pub struct TimeBudget {
    /// 10 % of the time is spent inside this radius, cm.
    pub radius_10_percent_cm: f64,
    /// 50 %, cm.
    pub radius_50_percent_cm: f64,
    /// 90 %, cm.
    pub radius_90_percent_cm: f64,
    /// The shell holding the largest residence share (index into `shells`).
    pub largest_shell: usize,
    /// 10 % of (1/c) ∫ r / l_tr dr accrues inside this radius, cm (the opacity that adds
    /// to the time, not where the time is spent).
    pub accrual_radius_10_percent_cm: f64,
    /// 50 % of it, cm.
    pub accrual_radius_50_percent_cm: f64,
    /// 90 % of it, cm.
    pub accrual_radius_90_percent_cm: f64,
}

/// The representation of the model's tabulated profiles.
#[derive(Debug, Clone, Serialize)]
pub struct ProfileRepresentation {
    /// Sub-shells in all profile layers.
    pub sub_shells: usize,
    /// Largest relative optical-depth error of any profile layer against the reference
    /// quadrature.
    pub tau_error_relative: f64,
    /// Largest relative error of the diffusion-time integral ∫ r σ dr of any profile layer.
    pub time_error_relative: f64,
    /// Each profile layer.
    pub layers: Vec<ProfileSummary>,
}

/// The analysis of a sphere's profile (`sojourn profile`); its serde form is the body of
/// the JSON output (the report adds the version and the model's label).
#[derive(Debug, Clone, Serialize)]
pub struct ProfileAnalysis {
    /// Outer radius of the medium, cm.
    pub radius_cm: f64,
    /// Optical depth from the centre to the surface along a radius.
    pub optical_depth: f64,
    /// Radius where the optical depth from the top of the model is 2/3, cm (null if the whole
    /// sphere is thinner than that); see `photosphere` for how it was found.
    pub photosphere_radius_cm: Option<f64>,
    /// The photosphere of a stellar model: radius, temperature and method (τ counted from the
    /// top of the table, with the H⁻ blend in the gas above a surface cut); null otherwise.
    pub photosphere: Option<Photosphere>,
    /// Luminosity L = ∫ ε dm, erg s⁻¹ (null without energy generation).
    pub luminosity_erg_s: Option<f64>,
    /// Radiative and convective zones (Schwarzschild criterion), innermost first (empty
    /// without energy generation).
    pub zones: Vec<Zone>,
    /// Inner radius of the outer convective zone, cm (null when there is none).
    pub convective_base_radius_cm: Option<f64>,
    /// Density at the centre, g cm⁻³ (null if the model gives none).
    pub central_density_g_cm3: Option<f64>,
    /// Mass of the model over its volume, 3M / (4πR³), g cm⁻³ (null unless every shell
    /// has a density).
    pub mean_density_g_cm3: Option<f64>,
    /// Mass of the model, g (null unless every shell has a density).
    pub mass_g: Option<f64>,
    /// Temperature at the centre, K (null if the model gives none).
    pub central_temperature_k: Option<f64>,
    /// Smallest mean free path of any shell, cm.
    pub mean_free_path_min_cm: f64,
    /// Largest mean free path of any interacting shell, cm.
    pub mean_free_path_max_cm: f64,
    /// Diffusion times from the centre.
    pub diffusion: ProfileDiffusion,
    /// Where the diffusion time accrues.
    pub time_budget: TimeBudget,
    /// The tabulated profiles' representation (null for a model of plain layers).
    pub profile: Option<ProfileRepresentation>,
    /// Every shell, innermost first.
    pub shells: Vec<ShellRow>,
    /// One-line caveats.
    pub notes: Vec<String>,
}

/// Radius inside which `fraction` of the residence time is spent, from the shells'
/// residence shares (linear in volume inside a shell, as the run's budget interpolates).
fn residence_radius(shells: &[ShellRow], fraction: f64) -> f64 {
    let mut before = 0.0;
    for shell in shells {
        let after = before + shell.residence_share;
        if after >= fraction && shell.residence_share > 0.0 {
            let part = ((fraction - before) / shell.residence_share).clamp(0.0, 1.0);
            let (a, b) = (shell.inner_radius_cm, shell.radius_cm);
            return (a.powi(3) + part * (b.powi(3) - a.powi(3))).cbrt();
        }
        before = after;
    }
    shells.last().map_or(0.0, |s| s.radius_cm)
}

/// Radius inside which `fraction` of the total accrues, from cumulative values at shell
/// outer radii (within a shell of constant σ, the accrued time grows as r²).
fn accrual_radius(shells: &[ShellRow], total: f64, fraction: f64) -> f64 {
    let target = fraction * total;
    for shell in shells {
        if shell.cumulative_time_s >= target && shell.time_s > 0.0 {
            let before = shell.cumulative_time_s - shell.time_s;
            let part = ((target - before) / shell.time_s).clamp(0.0, 1.0);
            let (a, b) = (shell.inner_radius_cm, shell.radius_cm);
            return (a * a + part * (b * b - a * a)).sqrt();
        }
    }
    shells.last().map_or(0.0, |s| s.radius_cm)
}

impl ProfileAnalysis {
    /// The profile analysis of `medium` (a sphere). Diffusion times are from the centre
    /// whatever the model's source.
    ///
    /// # Errors
    /// [`MediumError`] if the medium is not a sphere.
    pub fn new(medium: &Medium) -> Result<Self, MediumError> {
        if medium.geometry() != Geometry::Sphere {
            return Err(MediumError::Invalid {
                field: "geometry".into(),
                problem: "the profile report describes spheres; this model is a slab".into(),
            });
        }
        let centred = medium.with_sphere_source(0.0)?;
        let estimate = diffusion::estimate(&centred);
        let solution = solve_diffusion(&centred);
        let (theory, _) = DiffusionSummary::new(&centred, solution.as_ref().ok());
        let layers = medium.layers();
        let radius_cm = medium.size_cm();

        // Optical depth from the surface and per-shell diffusion times.
        let tau_shell: Vec<f64> = (0..layers.len())
            .map(|k| {
                let (a, b) = medium.layer_bounds_cm(k);
                layers[k].extinction_per_cm() * (b - a)
            })
            .collect();
        let optical_depth: f64 = tau_shell.iter().sum();
        let time_s: Vec<f64> = (0..layers.len())
            .map(|k| {
                let (a, b) = medium.layer_bounds_cm(k);
                layers[k].transport_extinction_per_cm() * (b * b - a * a)
                    / (2.0 * SPEED_OF_LIGHT_CM_S)
            })
            .collect();
        let total_time: f64 = time_s.iter().sum();
        let mut above = 0.0;
        let mut tau_from_surface = vec![0.0; layers.len()];
        for k in (0..layers.len()).rev() {
            tau_from_surface[k] = above;
            above += tau_shell[k];
        }
        let share = |value: f64, total: f64| if total > 0.0 { value / total } else { 0.0 };
        let mut cumulative = 0.0;
        let mut shells = Vec::with_capacity(layers.len());
        for (k, layer) in layers.iter().enumerate() {
            let (a, b) = medium.layer_bounds_cm(k);
            cumulative += time_s[k];
            let gas = layer.gas();
            shells.push(ShellRow {
                index: k,
                layer: layer.name().to_string(),
                inner_radius_cm: a,
                radius_cm: b,
                density_g_cm3: gas.map(|g| g.density_g_cm3),
                temperature_k: gas.and_then(|g| g.temperature_k),
                opacity_cm2_g: gas.map(|g| g.opacity_cm2_g),
                scattering_fraction: gas.and_then(|g| g.scattering_fraction),
                extinction_per_cm: layer.extinction_per_cm(),
                mean_free_path_cm: (layer.extinction_per_cm() > 0.0)
                    .then(|| layer.mean_free_path_cm()),
                tau_shell: tau_shell[k],
                tau_from_surface: tau_from_surface[k],
                time_s: time_s[k],
                cumulative_time_s: cumulative,
                time_share: share(time_s[k], total_time),
                residence_share: share(estimate.layer_residence_s[k], estimate.mean_time_s),
                luminosity_erg_s: medium.structure().and_then(|s| s.luminosity_at(b)),
            });
        }

        let stellar = StellarAnalysis::of(medium);
        let photosphere_radius_cm = stellar
            .as_ref()
            .and_then(|s| s.photosphere.as_ref().map(|p| p.radius_cm))
            .or_else(|| photosphere(&shells));
        let profiles = medium.profiles();
        let in_profile = |k: usize| {
            profiles
                .iter()
                .find(|p| (p.first_sub_shell..p.first_sub_shell + p.sub_shells).contains(&k))
        };
        let (central_density_g_cm3, central_temperature_k) = match in_profile(0) {
            Some(p) if p.first_sub_shell == 0 => {
                (Some(p.inner_density_g_cm3), p.inner_temperature_k)
            }
            _ => (
                layers[0].gas().map(|g| g.density_g_cm3),
                layers[0].gas().and_then(|g| g.temperature_k),
            ),
        };
        let mut mass = Some(0.0);
        for (k, layer) in layers.iter().enumerate() {
            match in_profile(k) {
                Some(p) if p.first_sub_shell == k => mass = mass.map(|m| m + p.mass_g),
                Some(_) => {}
                None => {
                    let (a, b) = medium.layer_bounds_cm(k);
                    mass = match (mass, layer.gas()) {
                        (Some(m), Some(gas)) => Some(
                            m + gas.density_g_cm3 * 4.0 / 3.0
                                * std::f64::consts::PI
                                * (b.powi(3) - a.powi(3)),
                        ),
                        _ => None,
                    };
                }
            }
        }
        let volume = 4.0 / 3.0 * std::f64::consts::PI * radius_cm.powi(3);
        let largest_shell = shells
            .iter()
            .enumerate()
            .max_by(|x, y| x.1.residence_share.total_cmp(&y.1.residence_share))
            .map_or(0, |(k, _)| k);
        let time_budget = TimeBudget {
            radius_10_percent_cm: residence_radius(&shells, 0.1),
            radius_50_percent_cm: residence_radius(&shells, 0.5),
            radius_90_percent_cm: residence_radius(&shells, 0.9),
            largest_shell,
            accrual_radius_10_percent_cm: accrual_radius(&shells, total_time, 0.1),
            accrual_radius_50_percent_cm: accrual_radius(&shells, total_time, 0.5),
            accrual_radius_90_percent_cm: accrual_radius(&shells, total_time, 0.9),
        };

        let profile = (!profiles.is_empty()).then(|| ProfileRepresentation {
            sub_shells: profiles.iter().map(|p| p.sub_shells).sum(),
            tau_error_relative: profiles
                .iter()
                .map(|p| p.tau_error_relative)
                .fold(0.0, f64::max),
            time_error_relative: profiles
                .iter()
                .map(|p| p.time_error_relative)
                .fold(0.0, f64::max),
            layers: profiles.to_vec(),
        });

        let mut notes = vec![
            "diffusion times are from the centre: T = (1/c) ∫ r / l dr; time_share is each \
             shell's part of it, residence_share where the radiation spends that time"
                .to_string(),
        ];
        notes.extend(profile_notes(medium));
        let outer_share: f64 = shells
            .iter()
            .filter(|s| s.inner_radius_cm >= 0.95 * radius_cm)
            .map(|s| s.time_share)
            .sum();
        if outer_share > 0.1 && profiles.iter().any(|p| p.surface_cut.is_some()) {
            notes.push(format!(
                "{:.0} % of the diffusion time accrues in the outer 5 % of the radius, next to \
                 the surface cut: it depends on where the opacity law is cut off (and a \
                 convective envelope would carry that energy faster than diffusion)",
                100.0 * outer_share
            ));
        }
        notes.push(format!(
            "the extrapolated time moves the surface out by q∞ = {MILNE_EXTRAPOLATION_LENGTH} \
             transport optical depths (Milne); it is the better estimate of a Monte Carlo mean \
             at moderate optical depth"
        ));
        if let Some(stellar) = &stellar {
            notes.extend(stellar.notes.iter().cloned());
        }
        let times = stellar
            .as_ref()
            .map(|s| s.times.clone())
            .unwrap_or_default();

        Ok(Self {
            radius_cm,
            optical_depth,
            photosphere_radius_cm,
            photosphere: stellar.as_ref().and_then(|s| s.photosphere.clone()),
            luminosity_erg_s: stellar.as_ref().and_then(|s| s.luminosity_erg_s),
            zones: stellar
                .as_ref()
                .map(|s| s.zones.clone())
                .unwrap_or_default(),
            convective_base_radius_cm: stellar.as_ref().and_then(|s| s.convective_base_radius_cm),
            central_density_g_cm3,
            mean_density_g_cm3: mass.map(|m| m / volume),
            mass_g: mass,
            central_temperature_k,
            mean_free_path_min_cm: estimate.mean_free_path_min_cm,
            mean_free_path_max_cm: estimate.mean_free_path_max_cm,
            diffusion: ProfileDiffusion {
                naive_scatterings: estimate.naive_scatterings,
                naive_time_s: estimate.naive_time_s,
                mean_time_s: estimate.mean_time_s,
                mean_time_extrapolated_s: estimate.mean_time_extrapolated_s,
                mean_scatterings: estimate.mean_scatterings,
                mean_scatterings_extrapolated: estimate.mean_scatterings_extrapolated,
                naive_over_diffusion: share(estimate.naive_time_s, estimate.mean_time_s),
                escape_probability: theory.escape_probability,
                escape_time: theory.escape_time,
                decay_rate_per_s: theory.decay_rate_per_s,
                luminosity_weighted_time_s: times.luminosity_weighted_time_s,
                luminosity_weighted_time_extrapolated_s: times
                    .luminosity_weighted_time_extrapolated_s,
                flux_weighted_time_s: times.flux_weighted_time_s,
                energy_content_time_s: times.energy_content_time_s,
                time_to_convective_base_s: times.time_to_convective_base_s,
                luminosity_weighted_time_to_convective_base_s: times
                    .luminosity_weighted_time_to_convective_base_s,
                convective_crossing_time_s: stellar
                    .as_ref()
                    .and_then(|s| s.convective_crossing_time_s),
            },
            time_budget,
            profile,
            shells,
            notes,
        })
    }
}

/// The radius where the optical depth from the surface reaches 2/3 (None if it never does).
fn photosphere(shells: &[ShellRow]) -> Option<f64> {
    for shell in shells.iter().rev() {
        let below = shell.tau_from_surface + shell.tau_shell;
        if below >= PHOTOSPHERE_OPTICAL_DEPTH && shell.extinction_per_cm > 0.0 {
            let depth =
                (PHOTOSPHERE_OPTICAL_DEPTH - shell.tau_from_surface) / shell.extinction_per_cm;
            return Some((shell.radius_cm - depth).max(shell.inner_radius_cm));
        }
    }
    None
}

/// One-line notes on a medium's tabulated profiles, for any report: the albedo-1 walk, the
/// representation and its accuracy, and each profile's own caveats (surface cut, ...).
pub fn profile_notes(medium: &Medium) -> Vec<String> {
    let profiles = medium.profiles();
    if profiles.is_empty() {
        return Vec::new();
    }
    let mut notes = vec![
        "in profile layers absorption (re-emitted) and scattering both count as interactions \
         of the energy's random walk: the walk uses albedo 1 there; the scattering fraction is \
         kept as data (scattering_fraction)"
            .to_string(),
    ];
    for p in profiles {
        let label = if p.layer_name.is_empty() {
            format!("layers[{}]", p.model_layer)
        } else {
            format!("'{}'", p.layer_name)
        };
        notes.push(format!(
            "profile {label}: {} rows -> {} sub-shells of constant extinction (neighbours \
             within {} %, largest change {:.3} %); optical depth {:.6e}, error against a fine \
             quadrature {:.1e} (relative), diffusion-time integral error {:.1e}",
            p.rows,
            p.sub_shells,
            p.tolerance * 100.0,
            p.max_refined_change * 100.0,
            p.optical_depth,
            p.tau_error_relative,
            p.time_error_relative
        ));
        for note in &p.notes {
            notes.push(format!("profile {label}: {note}"));
        }
    }
    notes
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::medium::{Layer, Source};
    use crate::transport::PhaseFunction;

    #[test]
    fn two_zone_sphere_budget_and_photosphere() {
        let inner = Layer::new("core", 100.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
        let outer = Layer::new("envelope", 1.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
        let medium = Medium::sphere(vec![(0.5, inner), (2.0, outer)], Source::centre()).unwrap();
        let report = ProfileAnalysis::new(&medium).unwrap();
        // τ = 100·0.5 + 1·1.5 = 51.5; photosphere 2/3 cm below the surface.
        assert!((report.optical_depth - 51.5).abs() < 1e-12);
        assert!((report.photosphere_radius_cm.unwrap() - (2.0 - 2.0 / 3.0)).abs() < 1e-12);
        // T = (1/c)[100·0.25/2 + 1·(4 − 0.25)/2] (docs/references.md, Diffusion theory 1).
        let expected = (12.5 + 1.875) / SPEED_OF_LIGHT_CM_S;
        assert!((report.diffusion.mean_time_s / expected - 1.0).abs() < 1e-12);
        assert!((report.shells[0].time_share - 12.5 / 14.375).abs() < 1e-12);
        assert!((report.shells[1].cumulative_time_s / expected - 1.0).abs() < 1e-12);
        // 50 % of 14.375 = 7.1875 accrues inside r with 100 r²/2 = 7.1875.
        assert!(
            (report.time_budget.accrual_radius_50_percent_cm - (0.14375f64).sqrt()).abs() < 1e-12
        );
        assert_eq!(report.central_density_g_cm3, None);
        assert!(report.profile.is_none());
        let residence: f64 = report.shells.iter().map(|s| s.residence_share).sum();
        assert!((residence - 1.0).abs() < 1e-12);
    }
}
