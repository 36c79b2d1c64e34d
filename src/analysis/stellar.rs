//! What a stellar model says about its own energy transport: luminosity, radiative and
//! convective zones, the photosphere, and the diffusion times people quote, gathered for the
//! profile and run reports.
//!
//! [`StellarAnalysis::of`] works on any sphere made of profile layers
//! ([`crate::medium::Medium::structure`]); without energy generation the luminosity, the
//! zones and the luminosity-weighted times are absent, and the notes say why.

use serde::Serialize;

use crate::diffusion::stellar_times;
use crate::medium::{Geometry, Medium};
use crate::star::photosphere::{Photosphere, photosphere};
use crate::star::zones::{
    MIXING_LENGTH_ALPHA, Zone, ZoneKind, convective_crossing_time_s, gradients,
    outer_convective_base_cm, zones,
};

/// Diffusion times of a star beyond the mean exit time from the centre (see
/// [`crate::diffusion::stellar_times`]); None where the model lacks what they need.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct StellarTimes {
    /// Luminosity-weighted mean exit time t_L = ∫ T(r₀) dL / L, surface at the boundary, s.
    pub luminosity_weighted_time_s: Option<f64>,
    /// The same with the Milne extrapolated boundary, s.
    pub luminosity_weighted_time_extrapolated_s: Option<f64>,
    /// Flux-weighted mean residence time U_F / L (equal to t_L by Little's law; computed by
    /// another route), s.
    pub flux_weighted_time_s: Option<f64>,
    /// Radiant energy content over luminosity, U_rad / L with U_rad = ∫ a T⁴ dV, s.
    pub energy_content_time_s: Option<f64>,
    /// U_rad = ∫ a T⁴ dV, erg.
    pub radiant_energy_erg: Option<f64>,
    /// Mean exit time from the centre to the base of the outer convective zone, (1/c) ∫₀^r_cb
    /// r / l dr, s (None without an outer convective zone).
    pub time_to_convective_base_s: Option<f64>,
    /// Luminosity-weighted mean exit time to the base of the outer convective zone, of the
    /// energy released below it, s.
    pub luminosity_weighted_time_to_convective_base_s: Option<f64>,
}

/// The stellar analysis of a sphere of profile layers.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StellarAnalysis {
    /// L = ∫ ε dm over the model (to its surface), erg s⁻¹ (None without energy generation).
    pub luminosity_erg_s: Option<f64>,
    /// Radiative and convective zones, innermost first (empty without L(r)).
    pub zones: Vec<Zone>,
    /// Inner radius of the outer convective zone, cm (the outermost convective zone with at
    /// most 1 % of the mass above it; None if there is none; 0 for a star convective from the
    /// centre).
    pub convective_base_radius_cm: Option<f64>,
    /// Time convection takes to cross the outer convective zone (mixing-length estimate), s.
    pub convective_crossing_time_s: Option<f64>,
    /// Mixing-length parameter α used for the crossing time.
    pub mixing_length_alpha: f64,
    /// Where τ = 2/3 (None if it cannot be computed).
    pub photosphere: Option<Photosphere>,
    /// The diffusion times.
    pub times: StellarTimes,
    /// One-line caveats.
    pub notes: Vec<String>,
}

impl StellarAnalysis {
    /// The analysis of `medium`; None unless it is a sphere with a radial structure (made
    /// only of profile layers).
    pub fn of(medium: &Medium) -> Option<Self> {
        if medium.geometry() != Geometry::Sphere {
            return None;
        }
        let structure = medium.structure()?;
        let mut notes = Vec::new();
        let luminosity_erg_s = structure.luminosity_erg_s();
        let gradient_rows = gradients(structure);
        let zones = match (&gradient_rows, luminosity_erg_s) {
            (Some(rows), Some(_)) => zones(structure, rows),
            _ => Vec::new(),
        };
        if luminosity_erg_s.is_none() {
            notes.push(
                "no energy generation in the model (profile \"energy_generation\"): no \
                 luminosity, zones or luminosity-weighted times; `sojourn star` writes it"
                    .to_string(),
            );
        } else if gradient_rows.is_none() {
            notes.push(
                "zones need temperature, hydrogen and metals at every row; the model lacks \
                 some"
                    .to_string(),
            );
        }
        let convective_base_radius_cm = outer_convective_base_cm(structure, &zones);
        // The medium may end below the star's surface (a run stopped at the convective base).
        let surface = medium
            .truncation()
            .map_or(structure.outer_radius_cm(), |(_, full)| full);
        let convective_crossing_time_s = convective_base_radius_cm.and_then(|base| {
            convective_crossing_time_s(structure, base, surface, MIXING_LENGTH_ALPHA)
        });
        let energy = stellar_times::energy_content_time_s(structure);
        let luminosity_weighted = stellar_times::luminosity_weighted_time_s(medium);
        let extrapolation = stellar_times::extrapolation_time_s(medium);
        let within = |base: f64| base <= medium.size_cm() * (1.0 + 1e-12);
        let times = StellarTimes {
            luminosity_weighted_time_s: luminosity_weighted,
            luminosity_weighted_time_extrapolated_s: luminosity_weighted
                .zip(extrapolation)
                .map(|(t, e)| t + e),
            flux_weighted_time_s: stellar_times::flux_weighted_time_s(medium),
            energy_content_time_s: energy.map(|e| e.1),
            radiant_energy_erg: energy.map(|e| e.0),
            time_to_convective_base_s: convective_base_radius_cm
                .filter(|&base| within(base))
                .map(|base| stellar_times::time_between_s(medium, 0.0, base).max(0.0)),
            luminosity_weighted_time_to_convective_base_s: convective_base_radius_cm
                .filter(|&base| within(base))
                .and_then(|base| stellar_times::luminosity_weighted_time_to_s(medium, base)),
        };
        match (convective_base_radius_cm, &zones.last()) {
            (Some(base), _) if base <= 0.0 => notes.push(
                "the whole model is convective (Schwarzschild): radiative diffusion carries none \
                 of its luminosity; the diffusion times describe radiation the model's \
                 convection would outrun"
                    .to_string(),
            ),
            (Some(base), _) => notes.push(format!(
                "outer convective zone from r = {base:.6e} cm ({:.3} of the radius) to the \
                 surface: published diffusion times follow radiation to its base \
                 (time_to_convective_base_s); convection crosses it in about {} (mixing-length \
                 estimate, alpha = {MIXING_LENGTH_ALPHA})",
                base / surface,
                convective_crossing_time_s
                    .map_or_else(|| "?".to_string(), crate::units::format_duration)
            )),
            (None, Some(zone)) if zone.kind == ZoneKind::Radiative => notes.push(
                "no outer convective zone: radiation carries the luminosity to the surface"
                    .to_string(),
            ),
            _ => {}
        }
        if !zones.is_empty() {
            notes.push(
                "zones from the Schwarzschild criterion, nabla_rad = 3 kappa L P / (16 pi a c G \
                 m T^4) against nabla_ad of ideal gas with radiation, on the model's own \
                 structure; a polytrope's temperature gradient is fixed by its index, so the \
                 zones say where radiation could not carry the model's luminosity"
                    .to_string(),
            );
        }
        Some(Self {
            luminosity_erg_s,
            zones,
            convective_base_radius_cm,
            convective_crossing_time_s,
            mixing_length_alpha: MIXING_LENGTH_ALPHA,
            photosphere: photosphere(medium),
            times,
            notes,
        })
    }
}
