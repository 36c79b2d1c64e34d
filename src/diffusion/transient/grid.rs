//! Where the nodes of the spatial grid go.
//!
//! Every segment boundary (layer interface, profile sub-shell division, physical face,
//! extrapolated face) and every point source is a node, so the coefficients are constant
//! inside each element; the continuation of a face to its extrapolated boundary is one
//! element (it only carries the boundary condition). Inside a layer the element size is
//! the smallest of
//!
//! * `Δξ √D`: a uniform step in the Liouville coordinate ξ = ∫ dx/√D, with
//!   `BASE_ELEMENTS × resolution` steps over the whole problem. The diffusion modes
//!   oscillate with the local wavenumber √(λ/D), so this resolves every mode equally
//!   well wherever D is, and a profile whose mean free path changes by many orders of
//!   magnitude costs no more than a uniform one;
//! * `(scale/16 + 0.1 |x − x_k|) / resolution` around the source and each physical face
//!   (`scale` the distance from a point source to the nearest face, the absorption depth
//!   of a beam, a face's extrapolation length): elements grow geometrically by 10 % away
//!   from where the solution starts or changes fastest.
//!
//! A thin segment is one element. The number of elements is therefore about
//! `BASE_ELEMENTS × resolution + segments + (refinements) × 10 ln(range) × resolution`:
//! linear in the number of layers, and doubling `resolution` halves every element.

use super::model_1d::{Model1d, SegmentKind};
use super::source::Refinement;

/// Elements across the Liouville coordinate of the whole problem at resolution 1.
pub(super) const BASE_ELEMENTS: f64 = 200.0;
/// Smallest element near a refinement, as a fraction of its scale, at resolution 1.
const REFINE_FRACTION: f64 = 1.0 / 16.0;
/// Growth of the element size with distance from a refinement, at resolution 1.
const GRADING: f64 = 0.1;
/// Safety cap on the elements of one segment.
const MAX_ELEMENTS_PER_SEGMENT: usize = 10_000_000;

/// Node positions (cm) of each segment, both ends included; empty for transparent
/// segments (one lumped node). `splits` are positions that must be nodes.
pub(super) fn element_nodes(
    model: &Model1d,
    refine: &[Refinement],
    splits: &[f64],
    resolution: f64,
) -> Vec<Vec<f64>> {
    let liouville_length: f64 = model
        .segments
        .iter()
        .filter(|s| s.kind == SegmentKind::Diffusing)
        .map(|s| (s.end_cm - s.start_cm) / s.diffusion_cm2_s.sqrt())
        .sum();
    let step_xi = liouville_length / (BASE_ELEMENTS * resolution);
    let refinements = refinements_with_faces(model, refine);
    let mut nodes = Vec::with_capacity(model.segments.len());
    for segment in &model.segments {
        match segment.kind {
            SegmentKind::Transparent => {
                nodes.push(Vec::new());
                continue;
            }
            SegmentKind::Extension => {
                nodes.push(vec![segment.start_cm, segment.end_cm]);
                continue;
            }
            SegmentKind::Diffusing => {}
        }
        let uniform = step_xi * segment.diffusion_cm2_s.sqrt();
        let size = |x: f64| {
            refinements.iter().fold(uniform, |h, r| {
                h.min(
                    (REFINE_FRACTION * r.scale_cm + GRADING * (x - r.position_cm).abs())
                        / resolution,
                )
            })
        };
        let mut cuts: Vec<f64> = splits
            .iter()
            .copied()
            .filter(|&p| p > segment.start_cm && p < segment.end_cm)
            .collect();
        cuts.sort_by(f64::total_cmp);
        cuts.dedup();
        let mut positions = vec![segment.start_cm];
        let mut from = segment.start_cm;
        for to in cuts.into_iter().chain(std::iter::once(segment.end_cm)) {
            march(from, to, &size, &mut positions);
            from = to;
        }
        nodes.push(positions);
    }
    nodes
}

/// The source refinements plus one at each physical face that has an extension (scale:
/// the extrapolation length) or, without one, the face layer's transport mean free path.
fn refinements_with_faces(model: &Model1d, refine: &[Refinement]) -> Vec<Refinement> {
    let mut all: Vec<Refinement> = refine
        .iter()
        .copied()
        .filter(|r| r.scale_cm > 0.0 && r.scale_cm.is_finite())
        .collect();
    let segments = &model.segments;
    let faces = [
        (model.inside_cm.0, model.extension_cm[0], segments.first()),
        (model.inside_cm.1, model.extension_cm[1], segments.last()),
    ];
    for (index, (position, extension, segment)) in faces.into_iter().enumerate() {
        if index == 0 && model.geometry == crate::medium::Geometry::Sphere {
            continue;
        }
        let scale = if extension > 0.0 {
            extension
        } else {
            segment.map_or(f64::INFINITY, |s| s.transport_mfp_cm)
        };
        if scale.is_finite() && scale > 0.0 {
            all.push(Refinement {
                position_cm: position,
                scale_cm: scale,
            });
        }
    }
    all
}

/// Appends nodes from `from` (already present) to `to` (appended) with sizes near
/// `size(x)`: steps taken with the size at the step's midpoint, then stretched uniformly so
/// that the last lands on `to`.
fn march(from: f64, to: f64, size: &impl Fn(f64) -> f64, positions: &mut Vec<f64>) {
    let start = positions.len();
    let mut x = from;
    let mut count = 0;
    let overshoot = loop {
        let first = size(x);
        let step = size(x + 0.5 * first).min(2.0 * first);
        if step.is_nan() || step <= 0.0 || step.is_infinite() {
            break to;
        }
        x += step;
        count += 1;
        if x >= to || count >= MAX_ELEMENTS_PER_SEGMENT {
            break x;
        }
        positions.push(x);
    };
    let stretch = (to - from) / (overshoot - from);
    for position in &mut positions[start..] {
        *position = from + (*position - from) * stretch;
    }
    positions.push(to);
}
