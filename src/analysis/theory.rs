//! Diffusion theory on the model, as the analysis reports it: the rule of thumb and the
//! mean exit times of steady conservative diffusion on the model's own layers
//! ([`crate::diffusion::estimate`], closed forms, with the source where diffusion puts it:
//! [`theory_source`]), and the time-dependent diffusion solver on the same layers
//! ([`crate::diffusion::transient`]) for everything else:
//!
//! * the escape probability (with absorption), and for slabs R and T on the actual layers
//!   (the solver's own source model: a beam enters through its face and is δ-scaled, see
//!   `diffusion/transient/source.rs`), and the absorbed fraction;
//! * the escape time conditional on escape: mean, median, 5 % and 95 % points, with
//!   absorption;
//! * the late decay rate λ₁.
//!
//! The closed-form means are those of conservative diffusion (absorption enters only D);
//! the solver's values include absorption. Where the solver cannot describe the medium
//! ([`crate::diffusion::transient::SolverError`]) its values are `null` and the comparison's
//! notes say why.

use serde::Serialize;

use crate::analysis::stellar::StellarTimes;
use crate::diffusion::transient::{self, EscapeSolution};
use crate::diffusion::{self, DiffusionEstimate};
use crate::medium::{Geometry, Medium, Source};
use crate::units::format_significant;

use super::slab_optics::equivalent_optics;

/// Where diffusion theory puts the source of a medium.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum TheorySource {
    /// As modelled: a sphere's point source, a slab's internal point or plane source.
    Modelled,
    /// A slab lit from outside (beam at any angle, or diffuse light): an isotropic plane
    /// source one reduced scattering length below the lit face, `depth_cm = 1/μs′` with μs′
    /// thickness-weighted over the layers, the convention of the steady and time-resolved
    /// slab theory (Patterson, Chance & Wilson 1989, Appl. Opt. 28:2331), used for the mean
    /// times as for R and T.
    Plane {
        /// 1/μs′, cm.
        depth_cm: f64,
    },
    /// A slab lit from outside that is no thicker than 1/μs′: diffusion theory has no
    /// source inside it.
    OutsideSlab {
        /// 1/μs′, cm.
        depth_cm: f64,
        /// The slab's thickness, cm.
        thickness_cm: f64,
    },
}

/// Where diffusion theory puts the source of `medium` (see [`TheorySource`]).
pub fn theory_source(medium: &Medium) -> TheorySource {
    if medium.geometry() != Geometry::Slab || !medium.source().enters_from_outside() {
        return TheorySource::Modelled;
    }
    let optics = equivalent_optics(medium);
    let depth_cm = 1.0 / optics.musp_per_cm;
    if depth_cm.is_finite() && depth_cm < optics.thickness_cm {
        TheorySource::Plane { depth_cm }
    } else {
        TheorySource::OutsideSlab {
            depth_cm,
            thickness_cm: optics.thickness_cm,
        }
    }
}

/// The steady diffusion estimates of `medium` with the source of [`theory_source`]: `None`
/// for a slab thinner than 1/μs′.
pub fn theory_estimate(medium: &Medium) -> Option<DiffusionEstimate> {
    match theory_source(medium) {
        TheorySource::Modelled => Some(diffusion::estimate(medium)),
        TheorySource::Plane { depth_cm } => medium
            .with_slab_source(Source::SlabPlane { depth_cm })
            .ok()
            .map(|plane| diffusion::estimate(&plane)),
        TheorySource::OutsideSlab { .. } => None,
    }
}

/// The time-dependent diffusion solution of `medium` with its own source
/// ([`crate::diffusion::transient::solve`]), or the note saying why there is none (a
/// [`crate::diffusion::transient::SolverError`] is reported, never a panic).
pub fn solve_diffusion(medium: &Medium) -> Result<EscapeSolution, String> {
    transient::solve(medium).map_err(|e| {
        format!(
            "the diffusion solver cannot describe this medium ({e}): no escape probability, \
             escape-time distribution, KS test or late decay from diffusion"
        )
    })
}

/// Whether any layer of `medium` absorbs (an interacting layer with albedo below 1). In
/// tabulated stellar profiles the walk uses albedo 1 (absorption is re-emission), so they
/// do not count.
pub fn absorbs(medium: &Medium) -> bool {
    medium
        .layers()
        .iter()
        .any(|layer| layer.extinction_per_cm() > 0.0 && layer.albedo() < 1.0)
}

/// The lowest albedo of any interacting layer (1 for a conservative medium).
pub fn lowest_albedo(medium: &Medium) -> f64 {
    medium
        .layers()
        .iter()
        .filter(|layer| layer.extinction_per_cm() > 0.0)
        .map(|layer| layer.albedo())
        .fold(1.0, f64::min)
}

/// The escape time of diffusion theory, conditional on escape (the diffusion solver, with
/// absorption); `null` where the solver cannot describe the medium.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct EscapeTimeTheory {
    /// Mean, s.
    pub mean_s: Option<f64>,
    /// Median, s.
    pub median_s: Option<f64>,
    /// 5 % quantile, s.
    pub p05_s: Option<f64>,
    /// 95 % quantile, s.
    pub p95_s: Option<f64>,
}

impl EscapeTimeTheory {
    /// The escape time of `solution`, conditional on escape.
    pub fn of(solution: &EscapeSolution) -> Self {
        let quantiles = solution.escape_quantiles_s(&[0.05, 0.5, 0.95]);
        Self {
            mean_s: solution.mean_escape_time_s(),
            p05_s: quantiles[0],
            median_s: quantiles[1],
            p95_s: quantiles[2],
        }
    }
}

/// Diffusion-theory values for the model (see [`crate::diffusion::estimate`]).
#[derive(Debug, Clone, Serialize)]
pub struct DiffusionSummary {
    /// Optical depth source → surface (sphere) or total thickness (slab).
    pub optical_depth: f64,
    /// Smallest mean free path, cm.
    pub mean_free_path_min_cm: f64,
    /// Largest mean free path, cm.
    pub mean_free_path_max_cm: f64,
    /// Rule of thumb N ≈ τ².
    pub naive_scatterings: f64,
    /// Rule of thumb t ≈ τ L n̄ / c, s.
    pub naive_time_s: f64,
    /// Mean exit time of steady conservative diffusion, surface at the boundary, s (null
    /// for a slab thinner than 1/μs′, where theory has no source).
    pub mean_time_s: Option<f64>,
    /// Mean exit time with the Milne extrapolated boundary (q∞ = 0.7104 l_tr), s.
    pub mean_time_extrapolated_s: Option<f64>,
    /// Scatterings implied by `mean_time_s`.
    pub mean_scatterings: Option<f64>,
    /// Scatterings implied by `mean_time_extrapolated_s`.
    pub mean_scatterings_extrapolated: Option<f64>,
    /// Residence time of diffusion in each layer, s (sums to `mean_time_s`).
    pub layer_residence_s: Option<Vec<f64>>,
    /// Slabs lit from outside: depth of the plane source diffusion theory uses, 1/μs′, cm
    /// (see [`TheorySource`]); null otherwise.
    pub source_depth_cm: Option<f64>,
    /// Fraction of launched photons that diffusion lets leave the medium, with absorption
    /// (the solver; a slab's specular reflection not included: compare with
    /// `outcome.escaped`, or `outcome.reflected + outcome.transmitted`).
    pub escape_probability: Option<f64>,
    /// Fraction of launched photons diffusion absorbs (the solver).
    pub absorbed: Option<f64>,
    /// Time in the medium of the photons that leave it, conditional on escape (the solver,
    /// with absorption).
    pub escape_time: EscapeTimeTheory,
    /// Late decay rate λ₁ of the escape-time distribution, 1/s (the solver).
    pub decay_rate_per_s: Option<f64>,
    /// Slabs: diffuse reflectance per launched photon (the solver on the actual layers,
    /// specular reflection not included); null for spheres.
    pub reflected: Option<f64>,
    /// Slabs: transmittance per launched photon, collimated transmission included (the
    /// solver); null for spheres.
    pub transmitted: Option<f64>,
    /// Stellar models with energy generation: the mean exit time averaged over where the
    /// energy is released (to the medium's surface, or to where the walk stops), s.
    pub luminosity_weighted_time_s: Option<f64>,
    /// The same with the Milne extrapolated boundary, s.
    pub luminosity_weighted_time_extrapolated_s: Option<f64>,
    /// Flux-weighted mean residence time U_F / L (to the same boundary), s.
    pub flux_weighted_time_s: Option<f64>,
    /// Radiant energy content of the star over its luminosity, U_rad / L, s.
    pub energy_content_time_s: Option<f64>,
    /// Mean exit time from the centre to the base of the outer convective zone, s.
    pub time_to_convective_base_s: Option<f64>,
}

impl DiffusionSummary {
    /// Diffusion theory on `medium`, with the time-dependent `solution` of its diffusion
    /// problem (`None` where the solver failed; the caller says why). Returns the summary and
    /// notes on what the values mean.
    pub fn new(medium: &Medium, solution: Option<&EscapeSolution>) -> (Self, Vec<String>) {
        let plain = diffusion::estimate(medium);
        let source = theory_source(medium);
        let theory = match source {
            TheorySource::Modelled => Some(plain.clone()),
            _ => theory_estimate(medium),
        };
        let mut notes = Vec::new();
        match source {
            TheorySource::Plane { depth_cm } => notes.push(format!(
                "the closed-form steady means put the incident light's source one reduced \
                 scattering length below the lit face, 1/μs′ = {} (μs′ averaged over the \
                 thickness), as the closed-form R and T do; the diffusion solver lets the \
                 beam decay into each layer",
                in_model_unit(medium, depth_cm)
            )),
            TheorySource::OutsideSlab {
                depth_cm,
                thickness_cm,
            } => notes.push(format!(
                "the slab ({}) is not thicker than one reduced scattering length 1/μs′ = \
                 {}: the closed-form steady means have no source inside it",
                in_model_unit(medium, thickness_cm),
                in_model_unit(medium, depth_cm)
            )),
            TheorySource::Modelled => {}
        }
        if absorbs(medium) {
            notes.push(format!(
                "the medium absorbs (lowest albedo {}): the closed-form steady means are those \
                 of conservative diffusion, and no Monte Carlo time is compared with them; the \
                 diffusion solver's escape times include absorption, and those are compared",
                format_significant(lowest_albedo(medium), 4)
            ));
        }
        let summary = Self {
            optical_depth: plain.optical_depth,
            mean_free_path_min_cm: plain.mean_free_path_min_cm,
            mean_free_path_max_cm: plain.mean_free_path_max_cm,
            naive_scatterings: plain.naive_scatterings,
            naive_time_s: plain.naive_time_s,
            mean_time_s: theory.as_ref().map(|t| t.mean_time_s),
            mean_time_extrapolated_s: theory.as_ref().map(|t| t.mean_time_extrapolated_s),
            mean_scatterings: theory.as_ref().map(|t| t.mean_scatterings),
            mean_scatterings_extrapolated: theory.as_ref().map(|t| t.mean_scatterings_extrapolated),
            layer_residence_s: theory.map(|t| t.layer_residence_s),
            source_depth_cm: match source {
                TheorySource::Plane { depth_cm } => Some(depth_cm),
                _ => None,
            },
            escape_probability: solution.map(EscapeSolution::escape_probability),
            absorbed: solution.map(EscapeSolution::absorbed),
            escape_time: solution.map(EscapeTimeTheory::of).unwrap_or_default(),
            decay_rate_per_s: solution.map(EscapeSolution::decay_rate_per_s),
            reflected: solution.and_then(EscapeSolution::reflected),
            transmitted: solution.and_then(EscapeSolution::transmitted),
            luminosity_weighted_time_s: None,
            luminosity_weighted_time_extrapolated_s: None,
            flux_weighted_time_s: None,
            energy_content_time_s: None,
            time_to_convective_base_s: None,
        };
        (summary, notes)
    }

    /// Adds the stellar diffusion times of a model with energy generation.
    pub fn add_stellar_times(&mut self, times: &StellarTimes) {
        self.luminosity_weighted_time_s = times.luminosity_weighted_time_s;
        self.luminosity_weighted_time_extrapolated_s =
            times.luminosity_weighted_time_extrapolated_s;
        self.flux_weighted_time_s = times.flux_weighted_time_s;
        self.energy_content_time_s = times.energy_content_time_s;
        self.time_to_convective_base_s = times.time_to_convective_base_s;
    }

    /// The closed-form theory a run whose photons start where the energy is released is
    /// compared with: the luminosity-weighted mean times in place of the times from the
    /// centre, and no scattering count. The solver's values (escape time, probabilities)
    /// already start from the energy generation and stay as they are.
    pub fn luminosity_weighted_reference(&self) -> Self {
        Self {
            mean_time_s: self.luminosity_weighted_time_s,
            mean_time_extrapolated_s: self.luminosity_weighted_time_extrapolated_s,
            mean_scatterings: None,
            mean_scatterings_extrapolated: None,
            ..self.clone()
        }
    }
}

/// A length in cm written in the model file's own unit (4 significant digits), for notes.
fn in_model_unit(medium: &Medium, cm: f64) -> String {
    let unit = medium.display_unit();
    format!(
        "{} {}",
        format_significant(cm / unit.to_cm(), 4),
        unit.symbol()
    )
}
