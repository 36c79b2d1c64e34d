//! The run, the profile and the sweep, called as the command line calls them
//! (`src/cli/run_command.rs`, `profile_command.rs`, `sweep_command.rs`), with the photons
//! run in chunks so that Python keeps control: the GIL is released while a chunk walks and
//! Ctrl-C (any pending signal) is checked between chunks.
//!
//! Chunking changes no bit of the result: every photon draws from its own random stream,
//! fixed by (seed, stream, photon index), and tallies merge exactly, so chunks of a run
//! merged in order are the run (the same argument as `sojourn::checkpoint`).

use std::path::{Path, PathBuf};
use std::str::FromStr;
use std::time::Instant;

use pyo3::exceptions::PyTypeError;
use pyo3::prelude::*;
use pyo3::types::{PyBool, PyDict};
use rayon::ThreadPool;
use serde_json::Value;

use sojourn::analysis::resolved_layout;
use sojourn::medium::model_file::{ModelError, parse_model_value};
use sojourn::medium::{Geometry, Medium};
use sojourn::report::{ProfileReport, RunReport};
use sojourn::shard::Shard;
use sojourn::simulation::{self, Absorption, Method, RunConfig, RunResult};
use sojourn::sweep::ResolvedSpec;
use sojourn::sweep::table::jsonl_text;
use sojourn::tally::{LogHistogram, Tally};
use sojourn::transport::WalkLimits;

use crate::{Model, refused, to_json};

/// Wall-clock time aimed at for one chunk of photons, s: Ctrl-C is noticed within about
/// this long (longer only while a single photon takes longer).
const CHUNK_TARGET_S: f64 = 0.2;

/// Label of a sweep spec given as a dict when the caller gives none.
const SPEC_DICT_LABEL: &str = "<sweep spec>";

/// Names of the escape-time histograms a run keeps, in the order of `RunOutput`.
const HISTOGRAMS: [&str; 4] = ["all", "escaped", "reflected", "transmitted"];

/// `value` as a whole number in `min..=max`, or the refusal naming `name`.
fn whole(name: &str, value: i128, min: u64, max: u64) -> PyResult<u64> {
    if value >= i128::from(min) && value <= i128::from(max) {
        return Ok(value as u64);
    }
    Err(out_of_range(name, &value.to_string(), min, max, value > 0))
}

/// The refusal of `name = value` outside `min..=max` (`too_large`: above it).
fn out_of_range(name: &str, value: &str, min: u64, max: u64, too_large: bool) -> PyErr {
    let range = if max == u64::MAX && !too_large {
        format!(">= {min}")
    } else {
        format!("from {min} to {max}")
    };
    refused(format!("{name} = {value}: expected a whole number {range}"))
}

/// A whole-number argument `name` in `min..=max`: an int (or anything with `__index__`,
/// such as a NumPy integer), `default` when `None`. `TypeError` for other types (bool and
/// float included), `SojournError` for a value out of range.
fn whole_arg(
    name: &str,
    value: Option<&Bound<'_, PyAny>>,
    default: u64,
    min: u64,
    max: u64,
) -> PyResult<u64> {
    let Some(value) = value.filter(|value| !value.is_none()) else {
        return Ok(default);
    };
    if value.is_instance_of::<PyBool>() || !value.hasattr("__index__")? {
        return Err(PyTypeError::new_err(format!(
            "{name} = {}: expected a whole number (int), not {}",
            value.repr()?,
            crate::type_name(value)
        )));
    }
    let Ok(number) = value.extract::<i128>() else {
        // Beyond 128 bits: out of every range.
        let too_large = value.gt(0)?;
        return Err(out_of_range(name, &value.to_string(), min, max, too_large));
    };
    whole(name, number, min, max)
}

/// The worker threads: `threads` of them (1 to 1024), or one per core.
fn thread_pool(threads: Option<&Bound<'_, PyAny>>) -> PyResult<ThreadPool> {
    let mut builder = rayon::ThreadPoolBuilder::new();
    let threads = whole_arg("threads", threads, 0, 1, 1024)?;
    if threads > 0 {
        builder = builder.num_threads(threads as usize);
    }
    builder
        .build()
        .map_err(|error| refused(format!("cannot start the worker threads: {error}")))
}

/// Runs `config` on `medium` in chunks of photons, each with the GIL released, checking
/// for signals between chunks. Chunks start at four photons per thread and are scaled to
/// take about [`CHUNK_TARGET_S`]. The tally is that of one uninterrupted run.
fn run_in_chunks(
    py: Python<'_>,
    pool: &ThreadPool,
    medium: &Medium,
    config: &RunConfig,
) -> PyResult<RunResult> {
    let started = Instant::now();
    let threads = pool.current_num_threads().max(1) as u64;
    let mut tally = Tally::with_resolved(config.resolved);
    let mut chunk = 4 * threads;
    let mut done = 0;
    while done < config.photons {
        let part = RunConfig {
            first_photon: config.first_photon + done,
            photons: chunk.min(config.photons - done),
            ..config.clone()
        };
        let chunk_started = Instant::now();
        let result = py.detach(|| pool.install(|| simulation::run(medium, &part)));
        tally.merge(&result.tally);
        done += part.photons;
        py.check_signals()?;
        let took_s = chunk_started.elapsed().as_secs_f64().max(1e-6);
        let scale = (CHUNK_TARGET_S / took_s).clamp(0.25, 4.0);
        chunk = ((part.photons as f64 * scale) as u64).max(threads);
    }
    Ok(RunResult {
        tally,
        elapsed_s: started.elapsed().as_secs_f64(),
    })
}

/// The occupied part of a histogram as contiguous fine bins: edges (one more than the
/// counts) and counts; empty when no positive finite value landed in it.
fn occupied_bins(histogram: &LogHistogram) -> (Vec<f64>, Vec<u64>) {
    match histogram.contiguous() {
        Some(bins) => (bins.edges, bins.counts),
        None => (Vec::new(), Vec::new()),
    }
}

/// What a run gives back to Python: the JSON report, as `sojourn run --json` writes it,
/// and the escape-time histograms of the tally.
#[pyclass(frozen, module = "sojourn._sojourn")]
pub struct RunOutput {
    json: String,
    histograms: Vec<(Vec<f64>, Vec<u64>)>,
}

#[pymethods]
impl RunOutput {
    /// The JSON report, byte for byte what `sojourn run --json` writes for the same run
    /// (`elapsed_s` aside).
    #[getter]
    fn json(&self) -> &str {
        &self.json
    }

    /// The occupied bins of an escape-time histogram as `(edges_s, counts)`: `which` is
    /// `"all"` (every photon that left), `"escaped"` (spheres), `"reflected"` or
    /// `"transmitted"` (slabs). Bins are the tally's bit-keyed bins, 1024 per octave (each at most 0.098 % wide).
    fn histogram(&self, which: &str) -> PyResult<(Vec<f64>, Vec<u64>)> {
        HISTOGRAMS
            .iter()
            .position(|name| *name == which)
            .map(|k| self.histograms[k].clone())
            .ok_or_else(|| {
                refused(format!(
                    "unknown escape-time histogram {which:?}: expected all, escaped, reflected or transmitted"
                ))
            })
    }
}

/// Runs photons through `model` as `sojourn run MODEL --json` does; see the package's
/// `sojourn.run` for the arguments.
#[pyfunction]
#[pyo3(signature = (
    model, *, photons=None, seed=None, threads=None, method="auto", absorption="analog",
    max_steps=None, resolve=false, tof_bin_ps=None, tof_bins=None, cosine_bins=None
))]
#[allow(clippy::too_many_arguments)]
pub fn run(
    py: Python<'_>,
    model: &Model,
    photons: Option<&Bound<'_, PyAny>>,
    seed: Option<&Bound<'_, PyAny>>,
    threads: Option<&Bound<'_, PyAny>>,
    method: &str,
    absorption: &str,
    max_steps: Option<&Bound<'_, PyAny>>,
    resolve: bool,
    tof_bin_ps: Option<f64>,
    tof_bins: Option<&Bound<'_, PyAny>>,
    cosine_bins: Option<&Bound<'_, PyAny>>,
) -> PyResult<RunOutput> {
    let photons = whole_arg("photons", photons, 10_000, 1, u64::MAX)?;
    let seed = whole_arg("seed", seed, 1, 0, u64::MAX)?;
    let method = Method::from_str(method).map_err(refused)?;
    let absorption = Absorption::from_str(absorption).map_err(refused)?;
    let default_steps = WalkLimits::default().max_steps;
    let max_steps = whole_arg("max_steps", max_steps, default_steps, 1, u64::MAX)?;
    let tof_bins = whole_arg("tof_bins", tof_bins, 200, 1, 100_000)? as usize;
    let cosine_bins = whole_arg("cosine_bins", cosine_bins, 20, 1, 10_000)? as usize;
    if let Some(width) = tof_bin_ps {
        if !(width.is_finite() && width > 0.0) {
            return Err(refused(format!(
                "tof_bin_ps = {width}: expected a finite number > 0"
            )));
        }
        if !resolve {
            return Err(refused("tof_bin_ps is for resolved runs: add resolve=True"));
        }
    }
    let pool = thread_pool(threads)?;
    let medium = model.medium();
    if resolve && medium.geometry() != Geometry::Slab {
        return Err(refused(format!(
            "{}: resolve=True is for slabs; this model is a sphere",
            model.label()
        )));
    }
    let resolved = resolve.then(|| {
        resolved_layout(
            medium,
            tof_bin_ps.map(|ps| ps * 1e-12),
            tof_bins,
            cosine_bins,
        )
    });
    let config = RunConfig {
        photons,
        seed,
        limits: WalkLimits { max_steps },
        method,
        absorption,
        resolved,
        ..RunConfig::default()
    };
    let result = run_in_chunks(py, &pool, medium, &config)?;
    let report = RunReport::new(medium, model.label(), &config, &result);
    let json = serde_json::to_string_pretty(&report).map_err(refused)? + "\n";
    let tally = &result.tally;
    let histograms = [
        &tally.all_escapes(),
        tally.escaped(),
        tally.reflected(),
        tally.transmitted(),
    ]
    .iter()
    .map(|stats| occupied_bins(stats.time_histogram()))
    .collect();
    Ok(RunOutput { json, histograms })
}

/// The profile report of a sphere as `sojourn profile MODEL --json` writes it.
#[pyfunction]
pub fn profile(model: &Model) -> PyResult<String> {
    let report = ProfileReport::new(model.medium(), model.label())
        .map_err(|error| refused(format!("{}: {error}", model.label())))?;
    Ok(serde_json::to_string_pretty(&report).map_err(refused)? + "\n")
}

/// Reads a base model named in a sweep spec, relative to `directory`, as
/// `ResolvedSpec::load` does.
fn read_named_model(directory: &Path, name: &str) -> Result<(Value, String), ModelError> {
    let path = directory.join(name);
    let label = path.display().to_string();
    let text = std::fs::read_to_string(&path).map_err(|cause| ModelError::Read {
        file: label.clone(),
        cause,
    })?;
    Ok((parse_model_value(&text, &label)?, label))
}

/// The resolved spec and its label from a spec file path or a spec dict. In a dict,
/// `"model"` may be a path (relative to `base_dir`), a `Model` or a model dict.
fn resolve_spec(
    spec: &Bound<'_, PyAny>,
    base_dir: Option<PathBuf>,
    label: Option<String>,
) -> PyResult<(ResolvedSpec, String)> {
    let Ok(dict) = spec.cast::<PyDict>() else {
        let path: PathBuf = spec.extract()?;
        let label = label.unwrap_or_else(|| path.display().to_string());
        return Ok((ResolvedSpec::load(&path).map_err(refused)?, label));
    };
    let label = label.unwrap_or_else(|| SPEC_DICT_LABEL.to_string());
    let directory = base_dir.unwrap_or_default();
    // A model given in the dict stands in for the file the spec would name.
    let dict = dict.copy()?;
    let mut given = None;
    if let Some(entry) = dict.get_item("model")? {
        if let Ok(model) = entry.cast::<Model>() {
            let model = model.get();
            given = Some((model.value().clone(), model.label().to_string()));
        } else if entry.is_instance_of::<PyDict>() {
            let value = to_json(&entry, &label, "model")?;
            given = Some((value, crate::DICT_LABEL.to_string()));
        }
        if let Some((_, model_label)) = &given {
            dict.set_item("model", model_label)?;
        }
    }
    let value = to_json(&dict, &label, "")?;
    let resolved = ResolvedSpec::parse(&value.to_string(), &label, |name| match given {
        Some(model) => Ok(model),
        None => read_named_model(&directory, name),
    })
    .map_err(refused)?;
    Ok((resolved, label))
}

/// Runs a sweep as `sojourn sweep SPEC` does and returns its table as JSON Lines, the
/// text of `sweep.jsonl`; see the package's `sojourn.sweep` for the arguments.
#[pyfunction]
#[pyo3(signature = (spec, *, base_dir=None, label=None, threads=None))]
pub fn sweep(
    py: Python<'_>,
    spec: &Bound<'_, PyAny>,
    base_dir: Option<PathBuf>,
    label: Option<String>,
    threads: Option<&Bound<'_, PyAny>>,
) -> PyResult<String> {
    let (resolved, label) = resolve_spec(spec, base_dir, label)?;
    let sweep = resolved.build(&label).map_err(refused)?;
    let pool = thread_pool(threads)?;
    let mut rows = Vec::with_capacity(sweep.points().len());
    for (index, point) in sweep.points().iter().enumerate() {
        let index = index as u64;
        let config = sweep.config(index, Shard::whole());
        let result = run_in_chunks(py, &pool, point.medium(), &config)?;
        rows.push(sweep.result(index, &result).row());
    }
    Ok(jsonl_text(&rows))
}
