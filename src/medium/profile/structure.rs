//! The radial structure behind a tabulated profile: the table's rows as point values, with
//! the enclosed mass m(r) and luminosity L(r), for stellar-structure analysis (zones,
//! photosphere, energy content) and for the energy-generation source.
//!
//! Between rows every column is linear in r, as in the profile itself ([`super`]), so
//! m(r) = 4π ∫ r² ρ dr and L(r) = 4π ∫ r² ρ ε dr are polynomials in r on each interval
//! (degree 3 and 5) and are integrated exactly (4-point Gauss–Legendre, exact to degree 7).
//! The rows start at the layer's inner boundary (where the table starts above it, a copy of
//! the first row is put there, as the profile holds the first row's values down to the
//! boundary). The rows end at the
//! medium's surface (the surface cut, if any, as a last interpolated row); the table's rows
//! above a cut are kept apart as the [`RadialStructure::atmosphere`], for the photosphere.

use serde::Serialize;

/// 4-point Gauss–Legendre nodes on [−1, 1] and weights (Abramowitz & Stegun 1964,
/// table 25.4).
const NODES: [f64; 4] = [
    -0.861_136_311_594_052_6,
    -0.339_981_043_584_856_3,
    0.339_981_043_584_856_3,
    0.861_136_311_594_052_6,
];
const WEIGHTS: [f64; 4] = [
    0.347_854_845_137_453_9,
    0.652_145_154_862_546_1,
    0.652_145_154_862_546_1,
    0.347_854_845_137_453_9,
];

/// ∫_a^b f(r) dr by 4-point Gauss–Legendre (exact for polynomials of degree ≤ 7).
pub(crate) fn gauss4(a: f64, b: f64, f: impl Fn(f64) -> f64) -> f64 {
    let half = 0.5 * (b - a);
    let mid = 0.5 * (a + b);
    NODES
        .iter()
        .zip(WEIGHTS)
        .map(|(node, weight)| weight * f(mid + half * node))
        .sum::<f64>()
        * half
}

/// One row of the structure: point values at `radius_cm`, cgs.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct StructureRow {
    /// Radius, cm.
    pub radius_cm: f64,
    /// Density, g cm⁻³.
    pub density_g_cm3: f64,
    /// Temperature, K (None where the profile gives none).
    pub temperature_k: Option<f64>,
    /// Hydrogen mass fraction X (None where the profile gives none).
    pub hydrogen_x: Option<f64>,
    /// Metal mass fraction Z (None where the profile gives none).
    pub metals_z: Option<f64>,
    /// Mass opacity at the row, cm² g⁻¹.
    pub opacity_cm2_g: f64,
    /// Energy generation, erg g⁻¹ s⁻¹ (None where the profile gives none).
    pub energy_generation_erg_g_s: Option<f64>,
    /// Mass inside `radius_cm`, g.
    pub mass_g: f64,
    /// Luminosity inside `radius_cm`, L(r) = ∫ ε dm, erg s⁻¹ (None without energy
    /// generation).
    pub luminosity_erg_s: Option<f64>,
}

/// The gas of a table row above the surface cut (dropped from the medium), cgs.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct AtmosphereRow {
    /// Radius, cm.
    pub radius_cm: f64,
    /// Density, g cm⁻³.
    pub density_g_cm3: f64,
    /// Temperature, K.
    pub temperature_k: f64,
    /// Hydrogen mass fraction X (NaN where the profile gives none).
    pub hydrogen_x: f64,
    /// Metal mass fraction Z (NaN where the profile gives none).
    pub metals_z: f64,
}

/// The structure of one or more profile layers, centre (or inner boundary) outwards.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RadialStructure {
    rows: Vec<StructureRow>,
    atmosphere: Vec<AtmosphereRow>,
}

/// Linear interpolation between `a` and `b` at fraction `s`.
fn lerp(a: f64, b: f64, s: f64) -> f64 {
    a + s * (b - a)
}

fn lerp_option(a: Option<f64>, b: Option<f64>, s: f64) -> Option<f64> {
    Some(lerp(a?, b?, s))
}

impl RadialStructure {
    /// A structure from rows of point values whose `mass_g` and `luminosity_erg_s` are
    /// ignored and recomputed, starting from `inner_mass_g` and `inner_luminosity_erg_s` at
    /// the first row, and the table rows above the surface (`atmosphere`, empty if nothing
    /// was cut). Rows must have strictly increasing radii (at least 2).
    pub fn new(
        mut rows: Vec<StructureRow>,
        atmosphere: Vec<AtmosphereRow>,
        inner_mass_g: f64,
        inner_luminosity_erg_s: f64,
    ) -> Self {
        let energy = rows.iter().all(|r| r.energy_generation_erg_g_s.is_some());
        let mut mass = inner_mass_g;
        let mut luminosity = inner_luminosity_erg_s;
        for k in 0..rows.len() {
            if k > 0 {
                let (a, b) = (rows[k - 1], rows[k]);
                mass += Self::shell_integral(&a, &b, a.radius_cm, b.radius_cm, false);
                if energy {
                    luminosity += Self::shell_integral(&a, &b, a.radius_cm, b.radius_cm, true);
                }
            }
            rows[k].mass_g = mass;
            rows[k].luminosity_erg_s = energy.then_some(luminosity);
        }
        Self { rows, atmosphere }
    }

    /// 4π ∫ r² ρ dr (or with ε as well) over [from, to] inside the interval (a, b).
    fn shell_integral(
        a: &StructureRow,
        b: &StructureRow,
        from: f64,
        to: f64,
        with_energy: bool,
    ) -> f64 {
        let width = b.radius_cm - a.radius_cm;
        4.0 * std::f64::consts::PI
            * gauss4(from, to, |r| {
                let s = (r - a.radius_cm) / width;
                let rho = lerp(a.density_g_cm3, b.density_g_cm3, s);
                let epsilon = if with_energy {
                    lerp(
                        a.energy_generation_erg_g_s.unwrap_or(0.0),
                        b.energy_generation_erg_g_s.unwrap_or(0.0),
                        s,
                    )
                } else {
                    1.0
                };
                r * r * rho * epsilon
            })
    }

    /// The same structure followed by `outer` (a profile layer starting where this one
    /// ends): its mass and luminosity continue from this structure's totals; the atmosphere
    /// becomes `outer`'s.
    pub fn append(&mut self, outer: &RadialStructure) {
        let energy = self.has_energy_generation() && outer.has_energy_generation();
        let joined = Self::new(
            outer.rows.clone(),
            outer.atmosphere.clone(),
            self.mass_g(),
            self.luminosity_erg_s().unwrap_or(0.0),
        );
        if !energy {
            for row in &mut self.rows {
                row.luminosity_erg_s = None;
                row.energy_generation_erg_g_s = None;
            }
        }
        let skip =
            usize::from(joined.rows.first().is_some_and(|first| {
                Some(first.radius_cm) == self.rows.last().map(|r| r.radius_cm)
            }));
        self.rows
            .extend(joined.rows.into_iter().skip(skip).map(|mut row| {
                if !energy {
                    row.luminosity_erg_s = None;
                    row.energy_generation_erg_g_s = None;
                }
                row
            }));
        self.atmosphere = joined.atmosphere;
    }

    /// The rows, innermost first, ending at the medium's surface.
    pub fn rows(&self) -> &[StructureRow] {
        &self.rows
    }

    /// The table's rows above the surface cut, the cut itself first (empty if nothing was
    /// cut).
    pub fn atmosphere(&self) -> &[AtmosphereRow] {
        &self.atmosphere
    }

    /// Whether every row has an energy generation (and so L(r) is known).
    pub fn has_energy_generation(&self) -> bool {
        self.rows.iter().all(|r| r.luminosity_erg_s.is_some())
    }

    /// Whether every row has a temperature and a composition.
    pub fn has_temperature_and_composition(&self) -> bool {
        self.rows
            .iter()
            .all(|r| r.temperature_k.is_some() && r.hydrogen_x.is_some() && r.metals_z.is_some())
    }

    /// Radius of the last row (the medium's surface), cm.
    pub fn outer_radius_cm(&self) -> f64 {
        self.rows.last().map_or(0.0, |r| r.radius_cm)
    }

    /// Mass inside the surface, g.
    pub fn mass_g(&self) -> f64 {
        self.rows.last().map_or(0.0, |r| r.mass_g)
    }

    /// Luminosity at the surface, L = ∫ ε dm, erg s⁻¹ (None without energy generation).
    pub fn luminosity_erg_s(&self) -> Option<f64> {
        self.rows.last().and_then(|r| r.luminosity_erg_s)
    }

    /// Index k of the interval [rows[k], rows[k+1]] holding `radius_cm` (clamped to the
    /// first and last interval).
    fn interval(&self, radius_cm: f64) -> usize {
        self.rows
            .partition_point(|r| r.radius_cm <= radius_cm)
            .clamp(1, self.rows.len() - 1)
            - 1
    }

    /// The point values at `radius_cm`, interpolated linearly between rows (the first row's
    /// values, mass and luminosity below it), with the exact m(r) and L(r). The opacity is interpolated linearly
    /// too (the profile itself evaluates its law at every radius).
    pub fn at(&self, radius_cm: f64) -> StructureRow {
        let first = self.rows[0];
        if radius_cm <= first.radius_cm {
            // The rows start at the layer's inner boundary: nothing lies below it.
            return StructureRow { radius_cm, ..first };
        }
        let k = self.interval(radius_cm);
        let (a, b) = (self.rows[k], self.rows[k + 1]);
        let r = radius_cm.min(b.radius_cm);
        let s = (r - a.radius_cm) / (b.radius_cm - a.radius_cm);
        StructureRow {
            radius_cm: r,
            density_g_cm3: lerp(a.density_g_cm3, b.density_g_cm3, s),
            temperature_k: lerp_option(a.temperature_k, b.temperature_k, s),
            hydrogen_x: lerp_option(a.hydrogen_x, b.hydrogen_x, s),
            metals_z: lerp_option(a.metals_z, b.metals_z, s),
            opacity_cm2_g: lerp(a.opacity_cm2_g, b.opacity_cm2_g, s),
            energy_generation_erg_g_s: lerp_option(
                a.energy_generation_erg_g_s,
                b.energy_generation_erg_g_s,
                s,
            ),
            mass_g: a.mass_g + Self::shell_integral(&a, &b, a.radius_cm, r, false),
            luminosity_erg_s: a
                .luminosity_erg_s
                .map(|l| l + Self::shell_integral(&a, &b, a.radius_cm, r, true)),
        }
    }

    /// L(r), erg s⁻¹: exact for the piecewise-linear ρ and ε (None without energy
    /// generation).
    pub fn luminosity_at(&self, radius_cm: f64) -> Option<f64> {
        self.at(radius_cm).luminosity_erg_s
    }

    /// m(r), g: exact for the piecewise-linear ρ.
    pub fn mass_at(&self, radius_cm: f64) -> f64 {
        self.at(radius_cm).mass_g
    }

    /// The same structure ending at `radius_cm` (a row interpolated there; nothing above).
    pub fn truncated_at(&self, radius_cm: f64) -> Self {
        let mut rows: Vec<StructureRow> = self
            .rows
            .iter()
            .copied()
            .filter(|r| r.radius_cm < radius_cm)
            .collect();
        rows.push(self.at(radius_cm));
        Self {
            rows,
            atmosphere: Vec::new(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn row(r: f64, rho: f64, eps: f64) -> StructureRow {
        StructureRow {
            radius_cm: r,
            density_g_cm3: rho,
            temperature_k: Some(1e6),
            hydrogen_x: Some(0.7),
            metals_z: Some(0.02),
            opacity_cm2_g: 1.0,
            energy_generation_erg_g_s: Some(eps),
            mass_g: f64::NAN,
            luminosity_erg_s: None,
        }
    }

    #[test]
    fn mass_and_luminosity_are_exact_for_linear_columns() {
        // ρ = 2 − r on [0, 2], ε = 3 + r: m(r) = 4π(2r³/3 − r⁴/4),
        // L(r) = 4π ∫ r²(2 − r)(3 + r) dr = 4π(2r³ − r⁴/4 − r⁵/5).
        let s = RadialStructure::new(
            vec![row(0.0, 2.0, 3.0), row(1.0, 1.0, 4.0), row(2.0, 0.0, 5.0)],
            Vec::new(),
            0.0,
            0.0,
        );
        let pi4 = 4.0 * std::f64::consts::PI;
        let m = |r: f64| pi4 * (2.0 * r.powi(3) / 3.0 - r.powi(4) / 4.0);
        let l = |r: f64| pi4 * (2.0 * r.powi(3) - r.powi(4) / 4.0 - r.powi(5) / 5.0);
        for r in [0.0, 0.3, 1.0, 1.7, 2.0] {
            assert!((s.mass_at(r) - m(r)).abs() < 1e-13 * m(2.0), "m({r})");
            assert!(
                (s.luminosity_at(r).unwrap() - l(r)).abs() < 1e-13 * l(2.0),
                "L({r})"
            );
        }
        assert!((s.luminosity_erg_s().unwrap() - l(2.0)).abs() < 1e-13 * l(2.0));
        // Truncation keeps m and L below the cut.
        let t = s.truncated_at(1.5);
        assert_eq!(t.outer_radius_cm(), 1.5);
        assert!((t.luminosity_erg_s().unwrap() - l(1.5)).abs() < 1e-13 * l(2.0));
        // Appending a second layer continues m and L.
        let mut joined = RadialStructure::new(
            vec![row(0.0, 2.0, 3.0), row(1.0, 1.0, 4.0)],
            vec![],
            0.0,
            0.0,
        );
        joined.append(&RadialStructure::new(
            vec![row(1.0, 1.0, 4.0), row(2.0, 0.0, 5.0)],
            vec![],
            0.0,
            0.0,
        ));
        assert_eq!(joined.rows().len(), 3);
        assert!((joined.luminosity_erg_s().unwrap() - l(2.0)).abs() < 1e-13 * l(2.0));
    }
}
