//! A [`ProfileTable`] divided into sub-shells of constant extinction, for the walker.
//!
//! **Representation.** [`ProfileTable::to_shells`] divides the profile into sub-shells of
//! constant extinction. Each sub-shell's extinction is the exact radial average of σ(r) over
//! it, ∫ σ dr / Δr (8-point Gauss–Legendre on a sub-shell that never straddles a table row,
//! where σ is smooth), so the optical depth along a radius from any sub-shell boundary to any
//! other is exact to that quadrature: the walker, which steps through homogeneous shells
//! exactly, sees the profile's own τ. The sub-shells start as the table intervals and are
//! halved until neighbouring extinctions differ by less than a relative tolerance (default
//! [`DEFAULT_TOLERANCE`], 1 %), and until the extinction of the profile varies by less than
//! that across each sub-shell (edge to edge, and edge to mean). Every division inside the
//! profile is marked smooth ([`crate::medium::Medium::with_smooth_boundaries`]): it is not a
//! material interface, so an accelerated walker may jump across it where its own check of the
//! mean free path allows.
//!
//! **Accuracy report.** [`ProfileSummary::tau_error_relative`] compares the representation's
//! optical depth with an independent adaptive quadrature of σ(r) over each table interval
//! (composite 8-point Gauss–Legendre, doubled until two successive sums agree to 1e−13);
//! [`ProfileSummary::time_error_relative`] does the same for the diffusion-time integral
//! ∫ r σ dr, where piecewise-constant extinction is a genuine (second-order) approximation.
//!
//! **Opacity tables.** A table's lowest temperature is its lower limit, as for a law; every
//! row the medium keeps, and the surface cut, must lie inside the table's range, unless the
//! model asks for clamping ([`OpacityTableUse::clamped_rows`] counts what was clamped).
//!
//! **Surface.** A stellar profile ends where density and temperature fall to 0, where two
//! things break:
//! * *Opacity-law validity.* With an opacity law, the medium ends at the outermost radius where
//!   the temperature is still at the lower end of the law's range
//!   ([`crate::opacity::OpacityLaw::temperature_range_k`], e.g. 10⁴ K for electron scattering
//!   and Kramers). Gas above is dropped and reported ([`SurfaceCut`]): there the law does not
//!   hold, and the Kramers T^−3.5 diverges as T → 0. Only the outermost layer of a model may
//!   be cut. Gas below the range further in, or above the range's upper end, is kept and
//!   noted.
//! * *Vanishing extinction.* Where σ → 0 (tabulated opacity or a constant law at ρ → 0),
//!   relative changes between neighbours never fall below the tolerance. A pair of
//!   neighbouring sub-shells (or a single sub-shell) whose optical thickness is below
//!   [`THIN_PAIR_OPTICAL_DEPTH`] (10⁻³) is not split further; divisions where the tolerance is
//!   therefore not met are counted in [`ProfileSummary::unrefined_divisions`]. Nothing is
//!   dropped, and τ stays exact.
//!
//! The walk treats every interaction in a profile sub-shell as a scattering (albedo 1,
//! isotropic): in a stellar interior absorption is followed by re-emission, and both count as
//! steps of the energy's random walk. The scattering/absorption split of the opacity is kept
//! as data ([`GasSample::scattering_fraction`]).

use serde::Serialize;

use super::super::layer::{GasSample, Layer};
use super::structure::{AtmosphereRow, RadialStructure, StructureRow};
use super::{MediumError, ProfileOpacity, ProfileTable, Quantity, invalid};
use crate::opacity::{OpacityLaw, OpacityTable, OutsidePolicy, TableRange, TemperatureRange};
use crate::transport::PhaseFunction;

/// Default relative tolerance between neighbouring sub-shell extinctions (1 %).
pub const DEFAULT_TOLERANCE: f64 = 0.01;

/// A sub-shell, or a pair of neighbouring sub-shells, whose optical thickness is below this
/// is not split further, even if the extinction varies by more than the tolerance
/// (dimensionless).
pub const THIN_PAIR_OPTICAL_DEPTH: f64 = 1e-3;

/// Largest number of sub-shells one profile may be divided into.
pub const MAX_SUB_SHELLS: usize = 200_000;

/// Relative agreement at which the reference quadrature stops doubling.
const REFERENCE_TOLERANCE: f64 = 1e-13;

/// Largest number of pieces per table interval in the reference quadrature (2¹²).
const REFERENCE_MAX_PIECES: usize = 4096;

/// 8-point Gauss–Legendre nodes on [−1, 1] (positive half) and weights (Abramowitz & Stegun
/// 1964, table 25.4).
const GAUSS_NODES: [f64; 4] = [
    0.183_434_642_495_649_8,
    0.525_532_409_916_329,
    0.796_666_477_413_626_7,
    0.960_289_856_497_536_3,
];
const GAUSS_WEIGHTS: [f64; 4] = [
    0.362_683_783_378_362,
    0.313_706_645_877_887_3,
    0.222_381_034_453_374_5,
    0.101_228_536_290_376_3,
];

/// Radial averages over an interval.
#[derive(Debug, Clone, Copy, Default)]
struct Averages {
    density: f64,
    temperature: f64,
    hydrogen: f64,
    metals: f64,
    extinction: f64,
    scattering: f64,
}

/// A stretch of the profile on which σ is smooth: the constant extension below the first
/// row (`row = None`) or one table interval [r_row, r_row+1] (possibly cut at the surface).
#[derive(Debug, Clone, Copy)]
struct Piece {
    start_cm: f64,
    end_cm: f64,
    row: Option<usize>,
}

/// One sub-shell during refinement.
#[derive(Debug, Clone, Copy)]
struct SubShell {
    inner_cm: f64,
    outer_cm: f64,
    piece: usize,
    averages: Averages,
    /// Extinction at the inner and outer edge, 1/cm.
    edges: (f64, f64),
}

impl SubShell {
    fn optical_thickness(&self) -> f64 {
        self.averages.extinction * (self.outer_cm - self.inner_cm)
    }
}

/// The gas dropped at the surface, where the temperature falls below the opacity law's
/// range.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SurfaceCut {
    /// Radius where the medium now ends, cm (where T equals `temperature_k`).
    pub radius_cm: f64,
    /// The temperature there: the lower end of the law's range, K.
    pub temperature_k: f64,
    /// Outer radius of the table, cm.
    pub table_radius_cm: f64,
    /// Mass of the dropped gas, g (4π ∫ r² ρ dr above the cut).
    pub dropped_mass_g: f64,
}

/// How a profile used an opacity table.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OpacityTableUse {
    /// The table's path as the model file gives it.
    pub file: String,
    /// Grid temperatures × densities.
    pub grid: [usize; 2],
    /// The range the table covers.
    pub range: TableRange,
    /// How the table is interpolated.
    pub interpolation: String,
    /// What happens to points outside the table ("refuse" or "clamp").
    pub outside: String,
    /// Table rows of the profile (kept by the medium, the surface cut included) whose
    /// (T, ρ) lay outside the table and were moved to its edge (0 unless clamping was asked
    /// for).
    pub clamped_rows: usize,
}

/// How the monotone interpolation of opacity tables is described in reports.
pub const TABLE_INTERPOLATION: &str =
    "monotone cubic (Steffen 1990) in log kappa over log T x log rho, tensor product";

/// How a profile was represented, and how well.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ProfileSummary {
    /// Name of the profile layer.
    pub layer_name: String,
    /// Index of the profile layer in the model file's `layers`.
    pub model_layer: usize,
    /// Index of the first sub-shell among the medium's layers.
    pub first_sub_shell: usize,
    /// Number of sub-shells.
    pub sub_shells: usize,
    /// Rows in the table.
    pub rows: usize,
    /// Relative tolerance between neighbouring extinctions.
    pub tolerance: f64,
    /// Largest relative change of extinction across a division within the tolerance.
    pub max_refined_change: f64,
    /// Divisions where neighbouring extinctions still differ by more than the tolerance,
    /// because the sub-shells around them were thinner than [`THIN_PAIR_OPTICAL_DEPTH`]
    /// before it was met (near a surface where the extinction vanishes).
    pub unrefined_divisions: usize,
    /// The opacity, described ("tabulated" for a κ column).
    pub opacity: String,
    /// The opacity law's temperature range, K (None for tabulated opacity).
    pub temperature_range_k: Option<TemperatureRange>,
    /// The opacity table, if the profile uses one: its file, range and how many rows were
    /// clamped to its edges.
    pub opacity_table: Option<OpacityTableUse>,
    /// Luminosity of the layer, ∫ ε dm over it, erg s⁻¹ (None without energy generation).
    pub luminosity_erg_s: Option<f64>,
    /// Inner radius of the profile layer, cm.
    pub inner_radius_cm: f64,
    /// Outer radius of the represented profile, cm (the surface cut, if any).
    pub outer_radius_cm: f64,
    /// Gas dropped at the surface (None if nothing was dropped).
    pub surface_cut: Option<SurfaceCut>,
    /// Optical depth across the layer along a radius, from the sub-shells.
    pub optical_depth: f64,
    /// The same from the reference quadrature of the interpolated profile.
    pub optical_depth_quadrature: f64,
    /// |representation − quadrature| / quadrature of the optical depth.
    pub tau_error_relative: f64,
    /// |representation − quadrature| / quadrature of the diffusion-time integral ∫ r σ dr.
    pub time_error_relative: f64,
    /// Mass of the represented gas, g (4π ∫ r² ρ dr by the reference quadrature).
    pub mass_g: f64,
    /// Density at the layer's inner boundary, g cm⁻³ (the centre, for the first layer).
    pub inner_density_g_cm3: f64,
    /// Temperature at the layer's inner boundary, K (None without temperatures).
    pub inner_temperature_k: Option<f64>,
    /// Caveats (one line each).
    pub notes: Vec<String>,
}

/// A profile divided into sub-shells: what a [`crate::medium::Medium`] is built from.
#[derive(Debug, Clone)]
pub struct ProfileShells {
    /// Sub-shells innermost first as (outer radius cm, layer): albedo 1, isotropic.
    pub shells: Vec<(f64, Layer)>,
    /// For each division between sub-shells k and k + 1 (k = 0 .. len − 2), whether the
    /// neighbouring extinctions are within the tolerance. Every division is an internal
    /// division of a smooth profile either way.
    pub within_tolerance: Vec<bool>,
    /// How the profile was represented.
    pub summary: ProfileSummary,
    /// The profile's rows as point values with m(r) and L(r) (mass and luminosity counted
    /// from the layer's inner boundary).
    pub structure: RadialStructure,
}

impl ProfileTable {
    /// Radial averages over [a, b] inside one piece, by 8-point Gauss–Legendre.
    fn averages(
        &self,
        law: Option<&dyn OpacityLaw>,
        row: Option<usize>,
        a: f64,
        b: f64,
    ) -> Averages {
        let half = 0.5 * (b - a);
        let mid = 0.5 * (a + b);
        let mut sum = Averages::default();
        for (node, weight) in GAUSS_NODES.iter().zip(GAUSS_WEIGHTS) {
            for radius in [mid - half * node, mid + half * node] {
                let p = self.point(law, row, radius);
                let w = 0.5 * weight;
                sum.density += w * p.density;
                sum.temperature += w * p.temperature;
                sum.hydrogen += w * p.hydrogen;
                sum.metals += w * p.metals;
                sum.extinction += w * p.extinction;
                sum.scattering += w * p.scattering;
            }
        }
        sum
    }

    /// ∫ σ dr, ∫ r σ dr and ∫ 4π r² ρ dr over [a, b] inside one piece, by 8-point
    /// Gauss–Legendre on `pieces` equal parts.
    fn integrals(
        &self,
        law: Option<&dyn OpacityLaw>,
        row: Option<usize>,
        a: f64,
        b: f64,
        pieces: usize,
    ) -> [f64; 3] {
        let width = (b - a) / pieces as f64;
        let mut sum = [0.0; 3];
        for k in 0..pieces {
            let lo = a + k as f64 * width;
            let hi = if k + 1 == pieces { b } else { lo + width };
            let half = 0.5 * (hi - lo);
            let mid = 0.5 * (lo + hi);
            for (node, weight) in GAUSS_NODES.iter().zip(GAUSS_WEIGHTS) {
                for radius in [mid - half * node, mid + half * node] {
                    let p = self.point(law, row, radius);
                    let w = half * weight;
                    sum[0] += w * p.extinction;
                    sum[1] += w * radius * p.extinction;
                    sum[2] += w * 4.0 * std::f64::consts::PI * radius * radius * p.density;
                }
            }
        }
        sum
    }

    /// The reference quadrature of one piece: pieces doubled until τ and ∫ r σ dr agree to
    /// [`REFERENCE_TOLERANCE`] between successive doublings.
    fn reference(&self, law: Option<&dyn OpacityLaw>, piece: &Piece) -> [f64; 3] {
        let mut pieces = 1;
        let mut previous = self.integrals(law, piece.row, piece.start_cm, piece.end_cm, 1);
        loop {
            pieces *= 2;
            let next = self.integrals(law, piece.row, piece.start_cm, piece.end_cm, pieces);
            let close = |i: usize| {
                (next[i] - previous[i]).abs() <= REFERENCE_TOLERANCE * next[i].abs()
                    || next[i] == previous[i]
            };
            if (close(0) && close(1) && close(2)) || pieces >= REFERENCE_MAX_PIECES {
                return next;
            }
            previous = next;
        }
    }

    /// Divides the profile, starting at `inner_cm` (the previous layer's outer radius, or 0),
    /// into sub-shells whose neighbouring extinctions differ by less than `tolerance`
    /// (relative), named `name`. See the module documentation for the method, the surface
    /// cut and the accuracy report.
    ///
    /// # Errors
    /// `tolerance` outside (0, 1); `inner_cm` above the first radius; every row below the
    /// opacity law's temperature range; a row (or the surface cut) outside an opacity table
    /// that refuses outside points, naming the row, the value and the table's range; a
    /// non-finite extinction (a T^−3.5 law at T = 0 inside the star); more than
    /// [`MAX_SUB_SHELLS`] sub-shells needed.
    pub fn to_shells(
        &self,
        name: &str,
        inner_cm: f64,
        tolerance: f64,
    ) -> Result<ProfileShells, MediumError> {
        if !(tolerance > 0.0 && tolerance < 1.0) {
            return Err(MediumError::value(
                "tolerance",
                tolerance,
                Quantity::Dimensionless,
                "a relative tolerance between 0 and 1 (e.g. 0.01 for 1 %)",
            ));
        }
        let radius = &self.columns.radius_cm;
        if inner_cm > radius[0] {
            return Err(MediumError::value(
                "radius[0]",
                radius[0],
                Quantity::Length,
                format!(
                    "a first radius >= the layer's inner boundary ({inner_cm} cm, the previous \
                     layer's outer radius)"
                ),
            ));
        }
        let law = self.law();
        let law_ref = law.as_deref();
        let range = law.as_ref().map(|law| law.temperature_range_k());
        let mut notes = Vec::new();

        // Surface cut: the outermost radius where T is still at the law's lower limit.
        let (top_row, top_cm, surface_cut) = match (range, &self.columns.temperature_k) {
            (Some(range), Some(temperature)) if range.min_k > 0.0 => {
                self.surface_cut(law_ref, range, temperature, &mut notes)?
            }
            _ => (self.rows() - 1, self.outer_radius_cm(), None),
        };
        let opacity_table = match &self.columns.opacity {
            ProfileOpacity::Table {
                file,
                table,
                outside,
            } => Some(self.check_table(
                file,
                table,
                *outside,
                (top_row, top_cm),
                surface_cut.as_ref(),
                &mut notes,
            )?),
            _ => None,
        };

        // Pieces on which σ is smooth.
        let mut pieces = Vec::new();
        if radius[0] > inner_cm {
            pieces.push(Piece {
                start_cm: inner_cm,
                end_cm: radius[0],
                row: None,
            });
        }
        for row in 0..top_row {
            let end = radius[row + 1].min(top_cm);
            if end > radius[row] {
                pieces.push(Piece {
                    start_cm: radius[row],
                    end_cm: end,
                    row: Some(row),
                });
            }
        }
        if top_row < self.rows() - 1 && top_cm > radius[top_row] {
            pieces.push(Piece {
                start_cm: radius[top_row],
                end_cm: top_cm,
                row: Some(top_row),
            });
        }

        let make = |piece: usize, a: f64, b: f64| {
            let row = pieces[piece].row;
            SubShell {
                inner_cm: a,
                outer_cm: b,
                piece,
                averages: self.averages(law_ref, row, a, b),
                edges: (
                    self.point(law_ref, row, a).extinction,
                    self.point(law_ref, row, b).extinction,
                ),
            }
        };
        let mut shells: Vec<SubShell> = pieces
            .iter()
            .enumerate()
            .map(|(index, piece)| make(index, piece.start_cm, piece.end_cm))
            .collect();
        let smallest_width = 1e-12 * top_cm;
        let differ = |x: f64, y: f64| (x - y).abs() > tolerance * x.max(y);
        let violates =
            |a: &SubShell, b: &SubShell| differ(a.averages.extinction, b.averages.extinction);
        // A sub-shell whose own extinction varies by more than the tolerance (edge to edge or
        // edge to mean) is split too, so that a single table interval is refined.
        let varies = |a: &SubShell| {
            let (lo, hi) = a.edges;
            let mean = a.averages.extinction;
            differ(lo, hi) || differ(lo, mean) || differ(mean, hi)
        };
        loop {
            let mut split = vec![false; shells.len()];
            let mut any = false;
            let splittable = |shell: &SubShell| shell.outer_cm - shell.inner_cm > smallest_width;
            for (k, shell) in shells.iter().enumerate() {
                if varies(shell)
                    && shell.optical_thickness() >= THIN_PAIR_OPTICAL_DEPTH
                    && splittable(shell)
                {
                    split[k] = true;
                    any = true;
                }
            }
            for k in 0..shells.len().saturating_sub(1) {
                let (a, b) = (&shells[k], &shells[k + 1]);
                if violates(a, b)
                    && a.optical_thickness() + b.optical_thickness() >= THIN_PAIR_OPTICAL_DEPTH
                {
                    for (index, shell) in [(k, a), (k + 1, b)] {
                        if splittable(shell) {
                            split[index] = true;
                            any = true;
                        }
                    }
                }
            }
            if !any {
                break;
            }
            let mut next = Vec::with_capacity(shells.len() * 2);
            for (shell, split) in shells.iter().zip(split) {
                if split {
                    let mid = 0.5 * (shell.inner_cm + shell.outer_cm);
                    next.push(make(shell.piece, shell.inner_cm, mid));
                    next.push(make(shell.piece, mid, shell.outer_cm));
                } else {
                    next.push(*shell);
                }
            }
            if next.len() > MAX_SUB_SHELLS {
                return Err(invalid(
                    "tolerance",
                    format!(
                        "more than {MAX_SUB_SHELLS} sub-shells would be needed to keep \
                         neighbouring extinctions within {tolerance}; raise the tolerance"
                    ),
                ));
            }
            shells = next;
        }

        if let Some(bad) = shells.iter().find(|s| !s.averages.extinction.is_finite()) {
            return Err(invalid(
                "temperature",
                format!(
                    "the extinction is not finite between r = {} cm and {} cm (temperature {} K \
                     there): the opacity law cannot be evaluated",
                    bad.inner_cm, bad.outer_cm, bad.averages.temperature
                ),
            ));
        }

        // Reference quadrature and the representation's own integrals.
        let mut reference = [0.0; 3];
        for piece in &pieces {
            let part = self.reference(law_ref, piece);
            for (sum, value) in reference.iter_mut().zip(part) {
                *sum += value;
            }
        }
        let optical_depth: f64 = shells.iter().map(SubShell::optical_thickness).sum();
        let time_integral: f64 = shells
            .iter()
            .map(|s| s.averages.extinction * (s.outer_cm.powi(2) - s.inner_cm.powi(2)) / 2.0)
            .sum();
        let relative = |value: f64, reference: f64| {
            if reference > 0.0 {
                (value - reference).abs() / reference
            } else {
                (value - reference).abs()
            }
        };

        let mut within_tolerance = Vec::with_capacity(shells.len().saturating_sub(1));
        let mut max_refined_change: f64 = 0.0;
        for pair in shells.windows(2) {
            let ok = !violates(&pair[0], &pair[1]);
            if ok {
                let (x, y) = (pair[0].averages.extinction, pair[1].averages.extinction);
                if x.max(y) > 0.0 {
                    max_refined_change = max_refined_change.max((x - y).abs() / x.max(y));
                }
            }
            within_tolerance.push(ok);
        }
        let unrefined_divisions = within_tolerance.iter().filter(|ok| !**ok).count();
        if unrefined_divisions > 0 {
            notes.push(format!(
                "{unrefined_divisions} division(s) between optically thin sub-shells (τ < \
                 {THIN_PAIR_OPTICAL_DEPTH}) differ by more than the tolerance, where the \
                 extinction falls towards 0; τ is exact there all the same"
            ));
        }

        let has_temperature = self.columns.temperature_k.is_some();
        let has_composition = self.columns.hydrogen_x.is_some();
        let has_metals = self.columns.metals_z.is_some();
        let known_fraction = match &self.columns.opacity {
            ProfileOpacity::Law(_) => true,
            ProfileOpacity::Table { .. } => false,
            ProfileOpacity::Tabulated {
                scattering_fraction,
                ..
            } => scattering_fraction.is_some(),
        };
        let mut layers = Vec::with_capacity(shells.len());
        for shell in &shells {
            let a = &shell.averages;
            let layer = Layer::new(name, a.extinction, 1.0, PhaseFunction::Isotropic, 1.0)
                .map_err(|error| {
                    invalid(
                        "radius",
                        format!(
                            "sub-shell {} cm – {} cm: {error}",
                            shell.inner_cm, shell.outer_cm
                        ),
                    )
                })?;
            let gas = GasSample {
                density_g_cm3: a.density,
                temperature_k: has_temperature.then_some(a.temperature),
                opacity_cm2_g: if a.density > 0.0 {
                    a.extinction / a.density
                } else {
                    0.0
                },
                scattering_fraction: (known_fraction && a.extinction > 0.0)
                    .then(|| (a.scattering / a.extinction).clamp(0.0, 1.0)),
                hydrogen_x: has_composition.then_some(a.hydrogen),
                metals_z: has_metals.then_some(a.metals),
            };
            layers.push((shell.outer_cm, layer.with_gas(gas)));
        }
        let inner_point = self.point(law_ref, None, inner_cm);
        let structure = self.structure(law_ref, inner_cm, top_row, top_cm, surface_cut.is_some());
        let summary = ProfileSummary {
            layer_name: name.to_string(),
            model_layer: 0,
            first_sub_shell: 0,
            sub_shells: layers.len(),
            rows: self.rows(),
            tolerance,
            max_refined_change,
            unrefined_divisions,
            opacity: match &self.columns.opacity {
                ProfileOpacity::Law(spec) => spec.describe(),
                ProfileOpacity::Tabulated { .. } => "tabulated".to_string(),
                ProfileOpacity::Table { file, .. } => format!("opacity table {file}"),
            },
            temperature_range_k: range,
            opacity_table,
            luminosity_erg_s: structure.luminosity_erg_s(),
            inner_radius_cm: inner_cm,
            outer_radius_cm: top_cm,
            surface_cut,
            optical_depth,
            optical_depth_quadrature: reference[0],
            tau_error_relative: relative(optical_depth, reference[0]),
            time_error_relative: relative(time_integral, reference[1]),
            mass_g: reference[2],
            inner_density_g_cm3: inner_point.density,
            inner_temperature_k: has_temperature.then_some(inner_point.temperature),
            notes,
        };
        Ok(ProfileShells {
            shells: layers,
            within_tolerance,
            summary,
            structure,
        })
    }

    /// The profile's rows from `inner_cm` to the surface `top_cm` (row `top_row` the last one
    /// kept, the cut interpolated after it) as a [`RadialStructure`], and the rows above a
    /// cut as its atmosphere.
    fn structure(
        &self,
        law: Option<&dyn OpacityLaw>,
        inner_cm: f64,
        top_row: usize,
        top_cm: f64,
        cut: bool,
    ) -> RadialStructure {
        let c = &self.columns;
        let radius = &c.radius_cm;
        let has = (
            c.temperature_k.is_some(),
            c.hydrogen_x.is_some(),
            c.metals_z.is_some(),
            c.energy_generation_erg_g_s.is_some(),
        );
        let row_of = |r: f64, p: super::Point| StructureRow {
            radius_cm: r,
            density_g_cm3: p.density,
            temperature_k: has.0.then_some(p.temperature),
            hydrogen_x: has.1.then_some(p.hydrogen),
            metals_z: has.2.then_some(p.metals),
            opacity_cm2_g: p.opacity,
            energy_generation_erg_g_s: has.3.then_some(p.energy),
            mass_g: 0.0,
            luminosity_erg_s: None,
        };
        let mut rows = Vec::with_capacity(top_row + 3);
        if radius[0] > inner_cm {
            rows.push(row_of(inner_cm, self.point_at(law, 0, 0.0)));
        }
        for (row, &r) in radius.iter().enumerate().take(top_row + 1) {
            rows.push(row_of(r, self.point_at(law, row, 0.0)));
        }
        let mut atmosphere = Vec::new();
        if cut {
            let at_cut = self.point(law, Some(top_row), top_cm);
            if top_cm > radius[top_row] {
                rows.push(row_of(top_cm, at_cut));
            }
            let gas = |r: f64, p: super::Point| AtmosphereRow {
                radius_cm: r,
                density_g_cm3: p.density,
                temperature_k: p.temperature,
                hydrogen_x: p.hydrogen,
                metals_z: p.metals,
            };
            atmosphere.push(gas(top_cm, at_cut));
            for (row, &r) in radius.iter().enumerate().skip(top_row + 1) {
                if r > top_cm {
                    atmosphere.push(gas(r, self.point_at(law, row, 0.0)));
                }
            }
        }
        RadialStructure::new(rows, atmosphere, 0.0, 0.0)
    }

    /// Checks every row the medium keeps (and the surface cut) against the opacity table's
    /// range: an error naming the row and the value, or, with clamping asked for, a count of
    /// the clamped rows and a note.
    fn check_table(
        &self,
        file: &str,
        table: &OpacityTable,
        outside: OutsidePolicy,
        (top_row, top_cm): (usize, f64),
        cut: Option<&SurfaceCut>,
        notes: &mut Vec<String>,
    ) -> Result<OpacityTableUse, MediumError> {
        let range = table.range();
        let temperature = self
            .columns
            .temperature_k
            .as_deref()
            .expect("validated: a table needs temperatures");
        let density = &self.columns.density_g_cm3;
        let mut points: Vec<(Option<usize>, f64, f64)> = (0..=top_row)
            .map(|row| (Some(row), temperature[row], density[row]))
            .collect();
        if let Some(cut) = cut {
            let r = &self.columns.radius_cm;
            let w = (top_cm - r[top_row]) / (r[top_row + 1] - r[top_row]);
            let rho = density[top_row] + w * (density[top_row + 1] - density[top_row]);
            points.push((None, cut.temperature_k, rho));
        }
        let short = |x: f64| crate::units::format_significant(x, 6);
        let fix = format!(
            "lies outside the opacity table {file} ({}): extend the table, or write \
             \"opacity_table\": {{\"file\": ..., \"outside\": \"clamp\"}} to clamp to its \
             edges",
            range.describe()
        );
        let mut clamped_rows = 0;
        for (row, t, rho) in points {
            if range.contains(t, rho) {
                continue;
            }
            if outside == OutsidePolicy::Clamp {
                clamped_rows += 1;
                continue;
            }
            let t_inside = (range.temperature_min_k..=range.temperature_max_k).contains(&t);
            let (field, problem) = match row {
                Some(row) if !t_inside => (
                    format!("temperature[{row}]"),
                    format!(
                        "T = {} K (rho = {} g/cm^3 there) {fix}",
                        short(t),
                        short(rho)
                    ),
                ),
                Some(row) => (
                    format!("density[{row}]"),
                    format!(
                        "rho = {} g/cm^3 (T = {} K there) {fix}",
                        short(rho),
                        short(t)
                    ),
                ),
                None => (
                    "density".to_string(),
                    format!(
                        "rho = {} g/cm^3 at the surface cut r = {top_cm:e} cm, where T falls to \
                         the table's lowest temperature {} K, {fix}",
                        short(rho),
                        short(t)
                    ),
                ),
            };
            return Err(MediumError::Invalid { field, problem });
        }
        if clamped_rows > 0 {
            notes.push(format!(
                "opacity table {file}: {clamped_rows} row(s) lie outside the table ({}) and \
                 were clamped to its edges, as asked (\"outside\": \"clamp\"); their opacity is \
                 an extrapolation by a constant",
                range.describe()
            ));
        }
        Ok(OpacityTableUse {
            file: file.to_string(),
            grid: [table.temperatures_k().len(), table.densities_g_cm3().len()],
            range,
            interpolation: TABLE_INTERPOLATION.to_string(),
            outside: outside.name().to_string(),
            clamped_rows,
        })
    }

    /// Finds where the medium ends under an opacity law with a lower temperature limit:
    /// (index of the last row kept, radius of the end, the cut if any).
    fn surface_cut(
        &self,
        law: Option<&dyn OpacityLaw>,
        range: TemperatureRange,
        temperature: &[f64],
        notes: &mut Vec<String>,
    ) -> Result<(usize, f64, Option<SurfaceCut>), MediumError> {
        let radius = &self.columns.radius_cm;
        let last = self.rows() - 1;
        let Some(top_row) = (0..=last)
            .rev()
            .find(|&row| temperature[row] >= range.min_k)
        else {
            return Err(invalid(
                "temperature",
                format!(
                    "every row is below {} K, the lower end of the opacity law's range: the law \
                     does not describe this gas",
                    range.min_k
                ),
            ));
        };
        // A row at 0 K inside the star: the law's T^-3.5 (or a table's edge) has no value
        // there, and interpolation towards it makes the extinction blow up between rows.
        if range.min_k > 0.0
            && let Some(row) = (0..top_row).find(|&row| temperature[row] <= 0.0)
        {
            return Err(MediumError::value(
                format!("temperature[{row}]"),
                temperature[row],
                Quantity::Dimensionless,
                format!(
                    "a temperature above 0 K: the medium keeps every row up to row {top_row}, the \
                     outermost at or above {} K (the lower limit of the opacity), and the opacity \
                     has no value at 0 K; only rows beyond it, which the surface cut drops, may \
                     be 0 K",
                    range.min_k
                ),
            ));
        }
        let cold_inside: Vec<usize> = (0..top_row)
            .filter(|&row| temperature[row] < range.min_k)
            .collect();
        if let (Some(first), Some(last_cold)) = (cold_inside.first(), cold_inside.last()) {
            notes.push(format!(
                "{} row(s) inside the star (r = {:.6e} – {:.6e} cm) are below {} K, the lower \
                 end of the opacity law's range; the law is used there anyway",
                cold_inside.len(),
                radius[*first],
                radius[*last_cold],
                range.min_k
            ));
        }
        let hot: Vec<f64> = temperature
            .iter()
            .copied()
            .filter(|&t| t > range.max_k)
            .collect();
        if !hot.is_empty() {
            notes.push(format!(
                "{} row(s) are above {} K (up to {:.4e} K), the upper end of the opacity law's \
                 range; the law is used there anyway",
                hot.len(),
                range.max_k,
                hot.iter().copied().fold(0.0, f64::max)
            ));
        }
        if top_row == last {
            return Ok((last, radius[last], None));
        }
        let (t0, t1) = (temperature[top_row], temperature[top_row + 1]);
        let fraction = ((t0 - range.min_k) / (t0 - t1)).clamp(0.0, 1.0);
        let cut_cm = radius[top_row] + fraction * (radius[top_row + 1] - radius[top_row]);
        // Mass above the cut (ρ is linear, so 8-point Gauss–Legendre is exact).
        let mut dropped_mass_g = 0.0;
        if cut_cm < radius[top_row + 1] {
            dropped_mass_g += self.integrals(law, Some(top_row), cut_cm, radius[top_row + 1], 1)[2];
        }
        for row in top_row + 1..last {
            dropped_mass_g += self.integrals(law, Some(row), radius[row], radius[row + 1], 1)[2];
        }
        let cut = SurfaceCut {
            radius_cm: cut_cm,
            temperature_k: range.min_k,
            table_radius_cm: radius[last],
            dropped_mass_g,
        };
        let temperature = if range.min_k.fract() == 0.0 {
            format!("{}", range.min_k)
        } else {
            crate::units::format_significant(range.min_k, 5)
        };
        let whose = match &self.columns.opacity {
            ProfileOpacity::Table { .. } => "opacity table's",
            _ => "opacity law's",
        };
        notes.push(format!(
            "surface cut at r = {:.6e} cm ({:.6} of the table's outer radius), where T falls to \
             {temperature} K, the lower end of the {whose} range; {:.3e} g of gas above it is \
             dropped",
            cut_cm,
            cut_cm / radius[last],
            dropped_mass_g
        ));
        Ok((top_row, cut_cm, Some(cut)))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::medium::profile::{ColumnValues, ProfileColumns};
    use crate::opacity::OpacitySpec;

    fn constant_law(kappa: f64) -> ProfileOpacity {
        ProfileOpacity::Law(OpacitySpec::Constant {
            value_cm2_g: kappa,
            scattering_fraction: 1.0,
        })
    }

    fn table(radius: Vec<f64>, density: Vec<f64>, opacity: ProfileOpacity) -> ProfileTable {
        let rows = radius.len();
        ProfileTable::new(ProfileColumns {
            radius_cm: radius,
            density_g_cm3: density,
            temperature_k: Some(vec![1e6; rows]),
            hydrogen_x: Some(ColumnValues::Constant(0.7)),
            metals_z: Some(ColumnValues::Constant(0.02)),
            opacity,
            energy_generation_erg_g_s: None,
        })
        .unwrap()
    }

    #[test]
    fn uniform_profile_is_one_sub_shell() {
        let t = table(vec![0.0, 2.0], vec![3.0, 3.0], constant_law(0.5));
        let shells = t.to_shells("core", 0.0, 0.01).unwrap();
        assert_eq!(shells.shells.len(), 1);
        assert_eq!(shells.shells[0].0, 2.0);
        assert!((shells.shells[0].1.extinction_per_cm() - 1.5).abs() < 1e-14);
        assert!(shells.summary.tau_error_relative < 1e-14);
        assert!(shells.summary.time_error_relative < 1e-14);
        // Mass 4/3 π R³ ρ.
        let mass = 4.0 / 3.0 * std::f64::consts::PI * 8.0 * 3.0;
        assert!((shells.summary.mass_g / mass - 1.0).abs() < 1e-13);
        assert_eq!(shells.summary.surface_cut, None);
    }

    #[test]
    fn linear_profile_is_refined_to_the_tolerance_and_tau_is_exact() {
        // ρ falls linearly from 2 to 0.5: σ = κ ρ, τ = κ (2 + 0.5)/2 · 10.
        let t = table(vec![0.0, 10.0], vec![2.0, 0.5], constant_law(1.0));
        for tolerance in [0.05, 0.01, 0.002] {
            let shells = t.to_shells("", 0.0, tolerance).unwrap();
            assert!((shells.summary.optical_depth / 12.5 - 1.0).abs() < 1e-14);
            assert!(shells.within_tolerance.iter().all(|ok| *ok));
            assert!(shells.summary.max_refined_change <= tolerance);
            for pair in shells.shells.windows(2) {
                let (x, y) = (pair[0].1.extinction_per_cm(), pair[1].1.extinction_per_cm());
                assert!((x - y).abs() <= tolerance * x.max(y));
            }
            // ∫ r σ dr: second-order error, shrinking with the tolerance.
            assert!(shells.summary.time_error_relative < tolerance * tolerance);
        }
    }

    #[test]
    fn vanishing_density_stops_at_thin_pairs() {
        // ρ → 0 at the surface: the last divisions cannot meet the tolerance.
        let t = table(vec![0.0, 1.0], vec![100.0, 0.0], constant_law(1.0));
        let shells = t.to_shells("", 0.0, 0.01).unwrap();
        assert!(shells.summary.unrefined_divisions > 0);
        assert!((shells.summary.optical_depth / 50.0 - 1.0).abs() < 1e-13);
        let last = shells.shells.len() - 1;
        assert!(!shells.within_tolerance[last - 1]);
        assert!(shells.shells.len() < 2000);
    }

    #[test]
    fn kramers_profile_is_cut_where_t_falls_below_its_range() {
        let spec: OpacitySpec = serde_json::from_str(
            r#"{"kind": "sum", "laws": [{"kind": "electron_scattering"},
                {"kind": "kramers_free_free"}]}"#,
        )
        .unwrap();
        let t = ProfileTable::new(ProfileColumns {
            radius_cm: vec![0.0, 1e10, 2e10],
            density_g_cm3: vec![1.0, 0.1, 0.0],
            temperature_k: Some(vec![1e7, 2e4, 0.0]),
            hydrogen_x: Some(ColumnValues::Constant(0.7)),
            metals_z: Some(ColumnValues::Constant(0.02)),
            opacity: ProfileOpacity::Law(spec),
            energy_generation_erg_g_s: None,
        })
        .unwrap();
        let shells = t.to_shells("", 0.0, 0.01).unwrap();
        let cut = shells.summary.surface_cut.clone().unwrap();
        // T = 2e4 − 2e4 (r − 1e10)/1e10 reaches 1e4 K at 1.5e10 cm.
        assert!((cut.radius_cm / 1.5e10 - 1.0).abs() < 1e-14);
        assert_eq!(shells.shells.last().unwrap().0, cut.radius_cm);
        // Dropped mass: ρ = 0.1 (2 − r/1e10) from 1.5e10 to 2e10.
        let r3 =
            |r: f64| 4.0 * std::f64::consts::PI * 0.1 * (2.0 * r.powi(3) / 3.0 - r.powi(4) / 4e10);
        let expected = r3(2e10) - r3(1.5e10);
        assert!((cut.dropped_mass_g / expected - 1.0).abs() < 1e-12);
        assert!(shells.summary.tau_error_relative < 1e-10);
        assert!(!shells.summary.notes.is_empty());
        // The scattering fraction is kept as data, the walk uses albedo 1.
        let gas = shells.shells[0].1.gas().unwrap();
        assert!(gas.scattering_fraction.unwrap() < 1.0);
        assert_eq!(shells.shells[0].1.albedo(), 1.0);
    }

    #[test]
    fn first_row_above_the_inner_boundary_is_held_constant() {
        let t = table(vec![1.0, 2.0], vec![4.0, 4.0], constant_law(1.0));
        let shells = t.to_shells("", 0.0, 0.01).unwrap();
        assert_eq!(shells.shells.len(), 2);
        assert!((shells.summary.optical_depth - 8.0).abs() < 1e-13);
        assert!(t.to_shells("", 1.5, 0.01).is_err());
    }
}
