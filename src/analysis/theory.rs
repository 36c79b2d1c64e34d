//! Diffusion theory on the model, as the analysis reports it: the rule of thumb, the mean
//! exit times of steady diffusion on the model's own layers ([`crate::diffusion::estimate`])
//! with the source where diffusion theory puts it ([`theory_source`]), and what theory says
//! of the escape probability and the escape-time distribution where it can say it honestly.
//!
//! What is filled today:
//!
//! * **Conservative media** (no layer absorbs): escape probability 1 (slabs lit from
//!   outside: the fraction that enters), mean escape time = the steady mean exit time with
//!   the extrapolated boundary; for a uniform sphere with a centred source also the median
//!   and the 5 % and 95 % points of the exact first-passage law out of the extrapolated
//!   sphere ([`crate::diffusion::first_passage`]).
//! * **Absorbing media**: slabs lit from outside get the steady diffuse R and T (and their
//!   sum) with absorption ([`super::slab_optics::SlabDiffusion`]); the escape times of
//!   absorbing diffusion, and the escape probability elsewhere, are `null`: the mean times
//!   here are those of conservative diffusion, with absorption entering only D.
//!
//! Everything left `null` says why in the comparison's notes; the time-dependent diffusion
//! solver fills it in.

use serde::Serialize;

use crate::analysis::stellar::StellarTimes;
use crate::diffusion::{self, DiffusionEstimate, equivalent_sphere, first_passage};
use crate::medium::{Geometry, Medium, Source};
use crate::units::format_significant;

use super::slab_optics::{SlabDiffusion, equivalent_optics};

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
    if medium.geometry() != Geometry::Slab
        || !matches!(medium.source(), Source::Beam { .. } | Source::Diffuse)
    {
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

/// The escape time of diffusion theory, conditional on escape; `null` where theory does not
/// give it yet.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct EscapeTimeTheory {
    /// Mean, s (conservative media: the steady mean exit time, extrapolated boundary).
    pub mean_s: Option<f64>,
    /// Median, s.
    pub median_s: Option<f64>,
    /// 5 % quantile, s.
    pub p05_s: Option<f64>,
    /// 95 % quantile, s.
    pub p95_s: Option<f64>,
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
    /// Fraction of launched photons that diffusion theory lets leave the medium (slabs lit
    /// from outside: after entering it; compare with `outcome.escaped`, or
    /// `outcome.reflected + outcome.transmitted`).
    pub escape_probability: Option<f64>,
    /// Time in the medium of the photons that leave it, conditional on escape.
    pub escape_time: EscapeTimeTheory,
    /// Slabs lit from outside: diffuse reflectance per launched photon (steady diffusion,
    /// extrapolated boundary, with absorption); null otherwise.
    pub reflected: Option<f64>,
    /// Slabs lit from outside: diffuse transmittance per launched photon; null otherwise.
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
    /// Diffusion theory on `medium`; `slab` is the steady slab theory beside the run (slabs
    /// lit from outside), `entering` the fraction of launched photons that entered the
    /// medium (1 but for Fresnel reflection at a slab's lit face). Returns the summary and
    /// notes on what is missing and why.
    pub fn new(
        medium: &Medium,
        slab: Option<&SlabDiffusion>,
        entering: f64,
    ) -> (Self, Vec<String>) {
        let plain = diffusion::estimate(medium);
        let source = theory_source(medium);
        let theory = match source {
            TheorySource::Modelled => Some(plain.clone()),
            _ => theory_estimate(medium),
        };
        let conservative = !absorbs(medium);
        let lit_slab = !matches!(source, TheorySource::Modelled);
        let mut notes = Vec::new();
        match source {
            TheorySource::Plane { depth_cm } => notes.push(format!(
                "diffusion theory puts the incident light's source one reduced scattering \
                 length below the lit face, 1/μs′ = {} cm (μs′ averaged over the thickness), \
                 for the mean times as for R and T",
                format_significant(depth_cm, 4)
            )),
            TheorySource::OutsideSlab {
                depth_cm,
                thickness_cm,
            } => notes.push(format!(
                "the slab ({} cm) is not thicker than one reduced scattering length 1/μs′ = \
                 {} cm: diffusion theory has no source inside it and gives no mean time",
                format_significant(thickness_cm, 4),
                format_significant(depth_cm, 4)
            )),
            TheorySource::Modelled => {}
        }
        let escape_probability = if conservative {
            Some(if lit_slab { entering } else { 1.0 })
        } else {
            slab.map(|s| s.reflectance + s.transmittance)
        };
        let mut escape_time = EscapeTimeTheory::default();
        if conservative {
            escape_time.mean_s = theory.as_ref().map(|t| t.mean_time_extrapolated_s);
            if let Some((radius_cm, diffusion_cm2_s)) = equivalent_sphere(medium) {
                let time = |p: f64| {
                    first_passage::time_from_dimensionless(
                        first_passage::quantile(p),
                        radius_cm,
                        diffusion_cm2_s,
                    )
                };
                escape_time.median_s = Some(time(0.5));
                escape_time.p05_s = Some(time(0.05));
                escape_time.p95_s = Some(time(0.95));
            }
        } else {
            let probability = if escape_probability.is_some() {
                "the steady R and T include absorption, but the"
            } else {
                "the escape probability and the"
            };
            notes.push(format!(
                "the medium absorbs (lowest albedo {}): the mean times above are those of \
                 conservative diffusion, while absorption removes long paths from the Monte \
                 Carlo escape times; {probability} escape times of absorbing diffusion are not \
                 computed yet, so no Monte Carlo time is compared with diffusion",
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
            escape_probability,
            escape_time,
            reflected: slab.map(|s| s.reflectance),
            transmitted: slab.map(|s| s.transmittance),
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

    /// The theory a run whose photons start where the energy is released is compared with:
    /// the luminosity-weighted mean times in place of the times from the centre, and no
    /// scattering count or escape-time quantiles (those are from the centre).
    pub fn luminosity_weighted_reference(&self) -> Self {
        Self {
            mean_time_s: self.luminosity_weighted_time_s,
            mean_time_extrapolated_s: self.luminosity_weighted_time_extrapolated_s,
            mean_scatterings: None,
            mean_scatterings_extrapolated: None,
            escape_time: EscapeTimeTheory {
                mean_s: self.luminosity_weighted_time_extrapolated_s,
                ..EscapeTimeTheory::default()
            },
            ..self.clone()
        }
    }
}
