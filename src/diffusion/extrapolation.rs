//! The extrapolated boundary at a free face of the model: how far outside the face the
//! diffusion density is taken to vanish, and with which optical properties the diffusion
//! equation is continued out to that plane or sphere. Shared by the closed-form estimates
//! and the time-dependent solver, so both put the boundary in the same place.

use super::boundary::{MILNE_EXTRAPOLATION_LENGTH, extrapolation_length_mfp};
use crate::medium::Medium;

/// The pseudo-layer that continues the medium beyond a free face up to its extrapolated
/// boundary.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct FaceExtension {
    /// Extrapolation length, cm.
    pub length_cm: f64,
    /// Transport extinction σ_tr of the continuation, 1/cm.
    pub transport_per_cm: f64,
    /// Scattering coefficient of the continuation, 1/cm.
    pub scattering_per_cm: f64,
    /// Refractive index of the continuation (that of the face layer).
    pub refractive_index: f64,
}

/// The continuation of layer `index` of `medium` beyond its outer boundary (`outward`,
/// sphere surface or slab bottom) or above its inner boundary (slab top), with
/// `outside_index` the refractive index beyond the face. `None` for a layer with no
/// transport extinction (nothing to extrapolate).
///
/// The length is q∞ l_tr at a matched face and (2/3) A l_tr at a refractive one
/// ([`extrapolation_length_mfp`]). Where the face layer is one sub-shell of a smooth
/// profile (its inner division marked smooth, [`Medium::is_sharp_boundary`]) and is thinner
/// than q∞ transport optical depths, the continuation takes the mean transport extinction
/// and scattering of the outermost q∞ transport optical depths of the profile
/// instead: the Milne condition is a statement in optical depth, and a tenuous outermost
/// sub-shell (ρ → 0 at a stellar surface) would otherwise set an extrapolation length of
/// its own mean free path. Layers bounded by sharp interfaces (every plain model) take
/// their own values.
pub(crate) fn face_extension(
    medium: &Medium,
    index: usize,
    outward: bool,
    outside_index: f64,
) -> Option<FaceExtension> {
    let layer = &medium.layers()[index];
    let transport = layer.transport_extinction_per_cm();
    let (inner, outer) = medium.layer_bounds_cm(index);
    let own_depth = transport * (outer - inner);
    let joined_to_next = |k: usize| {
        if outward {
            k > 0 && !medium.is_sharp_boundary(k - 1)
        } else {
            k + 1 < medium.layers().len() && !medium.is_sharp_boundary(k)
        }
    };
    if own_depth < MILNE_EXTRAPOLATION_LENGTH && joined_to_next(index) {
        // Average over the outermost q∞ transport optical depths of the smooth run.
        let (mut depth, mut length, mut scattering_length) = (0.0, 0.0, 0.0);
        let mut k = index;
        loop {
            let here = &medium.layers()[k];
            let (a, b) = medium.layer_bounds_cm(k);
            let sigma = here.transport_extinction_per_cm();
            let wanted = MILNE_EXTRAPOLATION_LENGTH - depth;
            let piece = if sigma * (b - a) > wanted {
                wanted / sigma
            } else {
                b - a
            };
            depth += sigma * piece;
            length += piece;
            scattering_length += here.scattering_per_cm() * piece;
            if depth >= MILNE_EXTRAPOLATION_LENGTH || !joined_to_next(k) {
                break;
            }
            k = if outward { k - 1 } else { k + 1 };
        }
        if depth <= 0.0 || length <= 0.0 {
            return None;
        }
        let mean_transport = depth / length;
        return Some(FaceExtension {
            length_cm: MILNE_EXTRAPOLATION_LENGTH / mean_transport,
            transport_per_cm: mean_transport,
            scattering_per_cm: scattering_length / length,
            refractive_index: layer.refractive_index(),
        });
    }
    if transport.is_nan() || transport <= 0.0 {
        return None;
    }
    let relative_index = layer.refractive_index() / outside_index;
    Some(FaceExtension {
        length_cm: extrapolation_length_mfp(relative_index) / transport,
        transport_per_cm: transport,
        scattering_per_cm: layer.scattering_per_cm(),
        refractive_index: layer.refractive_index(),
    })
}
