//! Parameter studies: one model varied over a list, range or grid of values, each point
//! run with its own random stream (stream = point index), reported as one table row.
//!
//! Two ways in:
//!
//! * in code: build each point's [`Medium`] yourself and collect them in a [`Sweep`];
//! * from a JSON spec: [`spec::ResolvedSpec`] varies values of a model file by JSON path
//!   (`layers[0].albedo`) and builds the [`Sweep`] for you.
//!
//! ```
//! use sojourn::medium::{Layer, Medium, Source};
//! use sojourn::sweep::Sweep;
//! use sojourn::transport::PhaseFunction;
//!
//! let mut sweep = Sweep::new(500, 1);
//! for tau in [1.0, 2.0, 4.0] {
//!     let layer = Layer::new("slab", tau, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
//!     let medium = Medium::slab(vec![(1.0, layer)], 1.0, Source::normal_beam()).unwrap();
//!     sweep = sweep.point([("optical_depth", tau)], medium);
//! }
//! let results = sweep.run();
//! assert_eq!(results.len(), 3);
//! // Thicker slabs reflect more of a conservative beam.
//! let reflected = |k: usize| results[k].analysis.outcome.reflected.unwrap();
//! assert!(reflected(2) > reflected(0));
//! ```
//!
//! [`runner`] runs a sweep into an output folder, one file per finished point, so a killed
//! sweep resumes; [`merge`] joins the shards of a sweep run on several machines.

pub mod json_path;
pub mod merge;
pub mod rescale;
pub mod runner;
pub mod spec;
pub mod table;

pub use runner::{SweepError, SweepRunner};
pub use spec::{Combine, ResolvedSpec, SpecError};
pub use table::SweepRow;

use serde_json::Value;

use crate::analysis::RunAnalysis;
use crate::medium::Medium;
use crate::shard::Shard;
use crate::simulation::{Absorption, Method, RunConfig, RunResult, run_with_progress};
use crate::transport::WalkLimits;

/// One point of a sweep: its parameter values and its medium.
#[derive(Debug, Clone)]
pub struct SweepPoint {
    parameters: Vec<(String, Value)>,
    medium: Medium,
}

impl SweepPoint {
    /// A point with `parameters` as `(name, value)` pairs (table columns, in order).
    pub fn new(parameters: Vec<(String, Value)>, medium: Medium) -> Self {
        Self { parameters, medium }
    }

    /// The parameter values, as `(name, value)` pairs.
    pub fn parameters(&self) -> &[(String, Value)] {
        &self.parameters
    }

    /// The medium.
    pub fn medium(&self) -> &Medium {
        &self.medium
    }
}

/// A set of points run with the same photon count, seed and step cap.
#[derive(Debug, Clone)]
pub struct Sweep {
    photons: u64,
    seed: u64,
    max_steps: u64,
    method: Method,
    absorption: Absorption,
    label: String,
    points: Vec<SweepPoint>,
}

impl Sweep {
    /// An empty sweep of `photons` photons per point with `seed`.
    pub fn new(photons: u64, seed: u64) -> Self {
        Self {
            photons,
            seed,
            max_steps: WalkLimits::default().max_steps,
            method: Method::default(),
            absorption: Absorption::default(),
            label: "<built in code>".to_string(),
            points: Vec::new(),
        }
    }

    /// Sets the step cap per photon (see [`WalkLimits`]).
    pub fn max_steps(mut self, max_steps: u64) -> Self {
        self.max_steps = max_steps;
        self
    }

    /// Sets the walk method (default `auto`; see [`Method`]).
    pub fn method(mut self, method: Method) -> Self {
        self.method = method;
        self
    }

    /// Sets the absorption treatment (default analog; see [`Absorption`]).
    pub fn absorption(mut self, absorption: Absorption) -> Self {
        self.absorption = absorption;
        self
    }

    /// The absorption treatment.
    pub fn absorption_mode(&self) -> Absorption {
        self.absorption
    }

    /// Sets the model label (the spec file, or what the points were built from), shown in
    /// reports and figures of the sweep.
    pub fn model_label(mut self, label: &str) -> Self {
        self.label = label.to_string();
        self
    }

    /// The model label (see [`Sweep::model_label`]).
    pub fn label(&self) -> &str {
        &self.label
    }

    /// Adds a point with numeric parameters `(name, value)` and its medium.
    pub fn point<K: Into<String>>(
        mut self,
        parameters: impl IntoIterator<Item = (K, f64)>,
        medium: Medium,
    ) -> Self {
        let parameters = parameters
            .into_iter()
            .map(|(name, value)| (name.into(), serde_json::json!(value)))
            .collect();
        self.points.push(SweepPoint::new(parameters, medium));
        self
    }

    /// Adds a point.
    pub fn push(&mut self, point: SweepPoint) {
        self.points.push(point);
    }

    /// The points, in order (point index = position).
    pub fn points(&self) -> &[SweepPoint] {
        &self.points
    }

    /// Photons per point.
    pub fn photons(&self) -> u64 {
        self.photons
    }

    /// Seed of the random streams.
    pub fn seed(&self) -> u64 {
        self.seed
    }

    /// The run configuration of point `index` (its stream is `index`), restricted to the
    /// photons of `shard`.
    pub fn config(&self, index: u64, shard: Shard) -> RunConfig {
        let range = shard.photon_range(self.photons);
        RunConfig {
            photons: range.end - range.start,
            seed: self.seed,
            stream: index,
            first_photon: range.start,
            limits: WalkLimits {
                max_steps: self.max_steps,
            },
            method: self.method,
            absorption: self.absorption,
            ..RunConfig::default()
        }
    }

    /// Runs the photons of `shard` for point `index`; `progress(photons done)` as in
    /// [`run_with_progress`].
    ///
    /// # Panics
    /// If `index` is not a point of the sweep.
    pub fn run_point(
        &self,
        index: u64,
        shard: Shard,
        progress: &(dyn Fn(u64) + Sync),
    ) -> RunResult {
        let point = &self.points[index as usize];
        run_with_progress(&point.medium, &self.config(index, shard), progress)
    }

    /// The result of point `index` from the tally of all its photons.
    ///
    /// # Panics
    /// If `index` is not a point of the sweep.
    pub fn result(&self, index: u64, result: &RunResult) -> PointResult {
        let point = &self.points[index as usize];
        let config = self.config(index, Shard::whole());
        PointResult {
            index,
            parameters: point.parameters.clone(),
            analysis: RunAnalysis::new(&point.medium, &config, &result.tally),
            elapsed_s: result.elapsed_s,
            reweighted: false,
        }
    }

    /// Runs every point in order, all photons each, on the current rayon thread pool.
    pub fn run(&self) -> Vec<PointResult> {
        self.run_with_progress(&|_, _| {})
    }

    /// Like [`Sweep::run`], calling `progress(point, photons done in that point)`.
    pub fn run_with_progress(&self, progress: &(dyn Fn(u64, u64) + Sync)) -> Vec<PointResult> {
        (0..self.points.len() as u64)
            .map(|index| {
                let result = self.run_point(index, Shard::whole(), &|n| progress(index, n));
                self.result(index, &result)
            })
            .collect()
    }
}

/// The outcome of one point: its parameters and the analysis of its run.
#[derive(Debug, Clone)]
pub struct PointResult {
    /// Point index (= its random stream).
    pub index: u64,
    /// Its parameter values, `(name, value)`.
    pub parameters: Vec<(String, Value)>,
    /// The analysis of the point's run.
    pub analysis: RunAnalysis,
    /// Wall-clock time of the point's photons, s (summed over shards after a merge).
    pub elapsed_s: f64,
    /// Whether the point's photons were rescaled from the walk of another point
    /// ([`rescale`]), not walked.
    pub reweighted: bool,
}

impl PointResult {
    /// The numeric value of parameter `name`, if the point has it.
    pub fn parameter(&self, name: &str) -> Option<f64> {
        self.parameters
            .iter()
            .find(|(n, _)| n == name)
            .and_then(|(_, v)| v.as_f64())
    }

    /// The point's table row (see [`SweepRow`]).
    pub fn row(&self) -> SweepRow {
        SweepRow::from_result(self)
    }
}
