//! The discretised diffusion problem: `C w′ = −K w`, with w = u/n³ at the nodes, C the
//! diagonal (lumped) capacities and K the symmetric tridiagonal stiffness plus absorption
//! plus the two escape conductances.
//!
//! Linear finite elements with mass lumping on the nodes of [`super::grid`]: the element
//! [a, b] of a segment with diffusion coefficient D and capacity c = n³ joins its two nodes
//! with the conductance `c D ∫ (φ′)² ρ dx`, ρ the geometric weight (1 for a slab, r² for a
//! sphere; the factor 4π and the lateral area cancel): `c D / h` for a slab,
//! `c D (a² + ab + b²) / (3h)` for a sphere. Each node gets the capacity `c ∫ ρ dx` and the
//! absorption rate `c v σ_a ∫ ρ dx` of the half elements on either side. Nodes held at zero
//! density (the Dirichlet faces) are removed; the conductances that tied them to the
//! neighbouring node are the escape conductances, so the escape rate through a face is
//! `g w` at that node. A transparent segment adds its capacity to one node and no element.
//! The continuation of a face to its extrapolated boundary is one element with the exact
//! steady conductance of a shell (slab: layer) that holds and absorbs nothing,
//! `c D a b / (b − a)` (slab: `c D / (b − a)`), so at a slab face it is exactly the
//! partial-current condition `u = z_e ∂u/∂n`.
//!
//! Lengths are scaled by the size of the problem, so that capacities are O(1) whatever the
//! medium's size, and conductances carry the unit s⁻¹.

use super::model_1d::{Model1d, SegmentKind};
use super::source::{Atom, SourceTerms};
use crate::medium::Geometry;

/// The discretised problem.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct System {
    /// Capacity of each unknown node (dimensionless volume × n³).
    pub capacity: Vec<f64>,
    /// Conductance between node i and i + 1, s⁻¹ (capacity units).
    pub link: Vec<f64>,
    /// Absorption rate of each node, s⁻¹ (capacity units).
    pub absorption: Vec<f64>,
    /// Escape conductance through the start face (slab top; 0 for a sphere) at node 0, and
    /// through the end face at the last node, s⁻¹.
    pub escape: [f64; 2],
    /// Diagonal of K (links, absorption and escape at each node), s⁻¹.
    pub diagonal: Vec<f64>,
    /// Photons at each node at t = 0, per launched photon.
    pub initial: Vec<f64>,
    /// Capacity of each node by model layer: (node, layer, capacity part).
    pub layer_parts: Vec<(usize, usize, f64)>,
    /// Photons that leave at t = 0 because the source put them on a node held at zero
    /// density (only with [`super::FaceCondition::ZeroDensity`]).
    pub prompt: Vec<Atom>,
}

/// A node while the grid is being assembled.
#[derive(Debug, Clone, Copy, Default)]
struct Node {
    /// Where the node sits; a lumped node covers a range.
    low_cm: f64,
    high_cm: f64,
    capacity: f64,
    absorption: f64,
    initial: f64,
}

impl System {
    /// Assembles the problem of `model` on the nodes `grid` (one list per segment, see
    /// [`super::grid::element_nodes`]) with the source `source`.
    pub fn assemble(model: &Model1d, grid: &[Vec<f64>], source: &SourceTerms) -> Self {
        let scale = model.end_cm() - model.start_cm();
        let sphere = model.geometry == Geometry::Sphere;
        // ∫ ρ dx over [a, b] in scaled units.
        let volume = |a: f64, b: f64| {
            let (a, b) = (a / scale, b / scale);
            if sphere {
                (b * b * b - a * a * a) / 3.0
            } else {
                b - a
            }
        };
        let first = model.start_cm();
        let mut nodes = vec![Node {
            low_cm: first,
            high_cm: first,
            ..Node::default()
        }];
        let mut links = Vec::new();
        let mut parts = Vec::new();
        for (index, segment) in model.segments.iter().enumerate() {
            let c = segment.capacity;
            if segment.kind == SegmentKind::Transparent {
                let last = nodes.len() - 1;
                let node = &mut nodes[last];
                let part = c * volume(segment.start_cm, segment.end_cm);
                node.capacity += part;
                node.high_cm = segment.end_cm;
                parts.push((last, segment.layer, part));
                continue;
            }
            let diffusivity = segment.diffusion_cm2_s / (scale * scale);
            if segment.kind == SegmentKind::Extension {
                // The boundary condition: the exact steady conductance of a continuation
                // that holds and absorbs nothing, out to the extrapolated face.
                let (sa, sb) = (segment.start_cm / scale, segment.end_cm / scale);
                let weight = if sphere {
                    sa * sb / (sb - sa)
                } else {
                    1.0 / (sb - sa)
                };
                links.push(c * diffusivity * weight);
                nodes.push(Node {
                    low_cm: segment.end_cm,
                    high_cm: segment.end_cm,
                    ..Node::default()
                });
                continue;
            }
            for pair in grid[index].windows(2) {
                let (a, b) = (pair[0], pair[1]);
                let (sa, sb) = (a / scale, b / scale);
                let h = sb - sa;
                let weight = if sphere {
                    (sa * sa + sa * sb + sb * sb) / (3.0 * h)
                } else {
                    1.0 / h
                };
                links.push(c * diffusivity * weight);
                let middle = 0.5 * (a + b);
                let left = c * volume(a, middle);
                let right = c * volume(middle, b);
                let last = nodes.len() - 1;
                nodes[last].capacity += left;
                nodes[last].absorption += left * segment.absorption_rate_per_s;
                parts.push((last, segment.layer, left));
                nodes.push(Node {
                    low_cm: b,
                    high_cm: b,
                    capacity: right,
                    absorption: right * segment.absorption_rate_per_s,
                    initial: 0.0,
                });
                parts.push((last + 1, segment.layer, right));
            }
        }
        // Distributed sources: hat-function integrals of each exponential piece.
        for piece in &source.pieces {
            let segment = &model.segments[piece.segment];
            if segment.kind == SegmentKind::Transparent {
                continue;
            }
            let start_node = node_at(&nodes, segment.start_cm);
            for (k, pair) in grid[piece.segment].windows(2).enumerate() {
                let (a, b) = (pair[0], pair[1]);
                let q_a =
                    piece.amplitude_per_cm * (-piece.decay_per_cm * (a - segment.start_cm)).exp();
                if q_a == 0.0 {
                    break;
                }
                let h = b - a;
                let (left, right) = hat_integrals(piece.decay_per_cm * h);
                nodes[start_node + k].initial += q_a * h * left;
                nodes[start_node + k + 1].initial += q_a * h * right;
            }
        }
        for &(position, mass) in &source.points {
            let node = node_at(&nodes, position);
            nodes[node].initial += mass;
        }
        // Remove the Dirichlet nodes: the last always, the first for a slab.
        let mut prompt = Vec::new();
        let last = nodes.len() - 1;
        if nodes[last].initial > 0.0 {
            prompt.push(Atom {
                time_s: 0.0,
                probability: nodes[last].initial,
                face: 1,
            });
        }
        let end_escape = links.pop().unwrap_or(0.0);
        nodes.pop();
        let mut start_escape = 0.0;
        let mut offset = 0;
        if !sphere {
            if nodes[0].initial > 0.0 {
                prompt.push(Atom {
                    time_s: 0.0,
                    probability: nodes[0].initial,
                    face: 0,
                });
            }
            start_escape = if links.is_empty() {
                0.0
            } else {
                links.remove(0)
            };
            nodes.remove(0);
            offset = 1;
        }
        let count = nodes.len();
        let layer_parts = parts
            .into_iter()
            .filter_map(|(node, layer, part)| {
                let node = node.checked_sub(offset)?;
                (node < count).then_some((node, layer, part))
            })
            .collect();
        let mut system = System {
            capacity: nodes.iter().map(|n| n.capacity).collect(),
            link: links,
            absorption: nodes.iter().map(|n| n.absorption).collect(),
            escape: [start_escape, end_escape],
            diagonal: Vec::new(),
            initial: nodes.iter().map(|n| n.initial).collect(),
            layer_parts,
            prompt,
        };
        system.diagonal = (0..count).map(|i| system.diagonal_sum(i)).collect();
        system
    }

    /// Number of unknown nodes.
    pub fn len(&self) -> usize {
        self.capacity.len()
    }

    /// Diagonal of K at node `i`.
    pub fn stiffness_diagonal(&self, i: usize) -> f64 {
        self.diagonal[i]
    }

    /// Diagonal of K at node `i` from its parts.
    fn diagonal_sum(&self, i: usize) -> f64 {
        let mut d = self.absorption[i];
        if i > 0 {
            d += self.link[i - 1];
        }
        if i < self.link.len() {
            d += self.link[i];
        }
        if i == 0 {
            d += self.escape[0];
        }
        if i + 1 == self.len() {
            d += self.escape[1];
        }
        d
    }

    /// `K w` into `out`.
    pub fn apply_stiffness(&self, w: &[f64], out: &mut [f64]) {
        let n = self.len();
        for i in 0..n {
            out[i] = self.diagonal[i] * w[i];
        }
        for (i, &g) in self.link.iter().enumerate() {
            out[i] -= g * w[i + 1];
            out[i + 1] -= g * w[i];
        }
    }

    /// Escape rates through the start and end faces for the node values `w`, per s.
    pub fn escape_rates(&self, w: &[f64]) -> [f64; 2] {
        let last = self.len() - 1;
        [self.escape[0] * w[0], self.escape[1] * w[last]]
    }

    /// Absorption rate for the node values `w`, per s.
    pub fn absorption_rate(&self, w: &[f64]) -> f64 {
        self.absorption.iter().zip(w).map(|(a, x)| a * x).sum()
    }

    /// Photons inside for the node values `w`.
    pub fn content(&self, w: &[f64]) -> f64 {
        self.capacity.iter().zip(w).map(|(c, x)| c * x).sum()
    }
}

/// The node at `position_cm`: the first whose range reaches it, or the nearer of the two
/// around it.
fn node_at(nodes: &[Node], position_cm: f64) -> usize {
    let after = nodes.partition_point(|n| n.high_cm < position_cm);
    if after >= nodes.len() {
        return nodes.len() - 1;
    }
    if after == 0 || nodes[after].low_cm <= position_cm {
        return after;
    }
    let before = after - 1;
    if position_cm - nodes[before].high_cm <= nodes[after].low_cm - position_cm {
        before
    } else {
        after
    }
}

/// `(∫₀¹ e^(−u s)(1 − s) ds, ∫₀¹ e^(−u s) s ds)`: the integrals of an exponential against
/// the two hat functions of an element, `u` its decay across the element (≥ 0).
fn hat_integrals(u: f64) -> (f64, f64) {
    if u < 1e-3 {
        (0.5 - u / 6.0 + u * u / 24.0, 0.5 - u / 3.0 + u * u / 8.0)
    } else {
        let e = (-u).exp();
        let em1 = (-u).exp_m1();
        ((u + em1) / (u * u), (-em1 - u * e) / (u * u))
    }
}

#[cfg(test)]
mod tests {
    use super::hat_integrals;

    #[test]
    fn hat_integrals_add_up_and_match_quadrature() {
        for u in [0.0, 1e-6, 5e-4, 2e-3, 0.3, 4.0, 80.0] {
            let (left, right) = hat_integrals(u);
            // Sum: ∫₀¹ e^(−us) ds = (1 − e^(−u))/u.
            let total = if u == 0.0 { 1.0 } else { -(-u).exp_m1() / u };
            assert!(((left + right) / total - 1.0).abs() < 1e-10, "{u}");
            // Midpoint rule.
            let n = 100_000;
            let (mut l, mut r) = (0.0, 0.0);
            for i in 0..n {
                let s = (i as f64 + 0.5) / n as f64;
                l += (-u * s).exp() * (1.0 - s) / n as f64;
                r += (-u * s).exp() * s / n as f64;
            }
            assert!((left - l).abs() < 1e-8 && (right - r).abs() < 1e-8, "{u}");
        }
    }
}
