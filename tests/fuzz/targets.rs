//! The loaders under fuzz, each behind one signature: the input text and the corpus file it
//! was made from (which labels errors and anchors relative paths), giving `Ok` or the
//! error's message.

use serde_json::Value;

use sojourn::checkpoint::read_checkpoint;
use sojourn::import::{ColumnMapping, ImportOptions, import_table};
use sojourn::medium::model_file::{model_from_value, parse_model_value};
use sojourn::opacity::OpacitySpec;
use sojourn::opacity::table::OpacityTable;
use sojourn::report::{ProfileReport, RunReport, render_run_report};
use sojourn::shard::{merge_run_shards, read_run_shard};
use sojourn::simulation::{RunConfig, plan, run};
use sojourn::sweep::ResolvedSpec;
use sojourn::sweep::merge::{ShardFile, merge_sweep_shards, parse_shard_file};
use sojourn::transport::WalkLimits;

/// One loader under fuzz.
pub struct Target {
    /// Its name in summaries.
    pub name: &'static str,
    /// Mixed into the seed so that targets get different mutants.
    pub salt: u64,
    /// The valid files its mutants are made from.
    pub corpus: &'static [&'static str],
    /// Runs the loader on a text made from a corpus file.
    pub run: fn(&str, &str) -> Result<(), String>,
}

/// Every target.
pub const TARGETS: &[Target] = &[
    Target {
        name: "model",
        salt: 0x6d6f_6465_6c00_0001,
        corpus: &[
            "models/diffuser-three-layer.json",
            "models/ember-two-zone.json",
            "models/grey-atmosphere.json",
            "models/opal-diffuser.json",
            "models/test-sphere-tau20.json",
            "models/tissue-phantom-two-layer.json",
            "models/ostrel-demo-table.json",
            "models/veyra-n3-sun-like.json",
        ],
        run: model,
    },
    Target {
        name: "sweep spec",
        salt: 0x7377_6565_7000_0002,
        corpus: &["examples/sweeps/sphere-optical-depth.json"],
        run: sweep_spec,
    },
    Target {
        name: "opacity table",
        salt: 0x6f70_6163_0000_0003,
        corpus: &["models/tables/demo-opacity-bump.csv"],
        run: opacity_table,
    },
    Target {
        name: "column table",
        salt: 0x636f_6c75_6d6e_0004,
        corpus: &["examples/brisa-4-profile.tsv"],
        run: column_table,
    },
    Target {
        name: "run shard",
        salt: 0x7275_6e73_0000_0005,
        corpus: &["tests/fuzz/corpus/run-shard-1-of-2.json"],
        run: run_shard,
    },
    Target {
        name: "sweep shard",
        salt: 0x7377_7368_0000_0006,
        corpus: &["tests/fuzz/corpus/sweep-shard-1-of-2.json"],
        run: sweep_shard,
    },
    Target {
        name: "checkpoint",
        salt: 0x636b_7074_0000_0007,
        corpus: &["tests/fuzz/corpus/sphere.ckpt"],
        run: checkpoint,
    },
];

/// A few photons with a small step cap: enough to walk every code path of a run and its
/// report, bounded in time whatever the model.
fn small_run() -> RunConfig {
    RunConfig {
        photons: 3,
        seed: 1,
        limits: WalkLimits { max_steps: 20_000 },
        ..RunConfig::default()
    }
}

/// Loads a model; one that loads and that the run plan accepts (as `sojourn run` checks it;
/// the step cap bounds the cost) is run for a few photons and reported, and a sphere gets
/// its profile report.
fn model(text: &str, file: &str) -> Result<(), String> {
    let value = parse_model_value(text, file).map_err(|e| e.to_string())?;
    let medium = model_from_value(&value, file).map_err(|e| e.to_string())?;
    let config = small_run();
    plan(&medium, &config)
        .check(config.photons, true)
        .map_err(|e| e.to_string())?;
    let result = run(&medium, &config);
    let report = RunReport::new(&medium, file, &config, &result);
    render_run_report(&report);
    serde_json::to_string(&report).map_err(|e| e.to_string())?;
    if medium.geometry() == sojourn::medium::Geometry::Sphere {
        ProfileReport::new(&medium, file).map_err(|e| e.to_string())?;
    }
    Ok(())
}

/// Reads a sweep spec over the small sphere model and builds every point.
fn sweep_spec(text: &str, file: &str) -> Result<(), String> {
    let base = std::fs::read_to_string("models/test-sphere-tau20.json").unwrap();
    let spec = ResolvedSpec::parse(text, file, |name| {
        Ok((parse_model_value(&base, name)?, name.to_string()))
    })
    .map_err(|e| e.to_string())?;
    spec.build(file).map_err(|e| e.to_string())?;
    Ok(())
}

/// Reads an opacity table and looks it up inside, at and beyond its corners.
fn opacity_table(text: &str, file: &str) -> Result<(), String> {
    let table = OpacityTable::parse(text, file).map_err(|e| e.to_string())?;
    for temperature in [1e3, 1e4, 1e6, 1e9] {
        for density in [1e-12, 1e-6, 1.0, 1e3] {
            let _ = table.opacity_cm2_g(temperature, density);
            let _ = table.opacity_clamped_cm2_g(temperature, density);
        }
    }
    Ok(())
}

/// Imports a column table as `sojourn import` does with the README's mapping.
fn column_table(text: &str, file: &str) -> Result<(), String> {
    let mapping = ColumnMapping::parse(
        "radius=radius_rsun:R_sun,log_temperature=log10_temperature_k,\
         log_density=log10_density_g_cm3,hydrogen=hydrogen_fraction,metals=metal_fraction",
    )
    .map_err(|e| e.to_string())?;
    let options = ImportOptions {
        opacity_law: Some(OpacitySpec::ElectronScattering {}),
        skip_rows: 3,
        ..ImportOptions::new(mapping)
    };
    import_table(text, file, &options).map_err(|e| e.to_string())?;
    Ok(())
}

/// Reads a run shard and merges it with the other, untouched shard of the same run.
fn run_shard(text: &str, file: &str) -> Result<(), String> {
    let shard = read_run_shard(text, file).map_err(|e| e.to_string())?;
    let other_file = "tests/fuzz/corpus/run-shard-2-of-2.json";
    let other_text = std::fs::read_to_string(other_file).unwrap();
    let other = read_run_shard(&other_text, other_file).map_err(|e| e.to_string())?;
    let merged = merge_run_shards(vec![shard, other]).map_err(|e| e.to_string())?;
    let report = RunReport::new(
        &merged.medium,
        &merged.model_file,
        &merged.config,
        &merged.result,
    );
    render_run_report(&report);
    Ok(())
}

/// Reads a sweep shard bundle and merges it with the other, untouched shard.
fn sweep_shard(text: &str, file: &str) -> Result<(), String> {
    let other_file = "tests/fuzz/corpus/sweep-shard-2-of-2.json";
    let other_text = std::fs::read_to_string(other_file).unwrap();
    let (ShardFile::Sweep(shard), ShardFile::Sweep(other)) = (
        parse_shard_file(text, file).map_err(|e| e.to_string())?,
        parse_shard_file(&other_text, other_file).map_err(|e| e.to_string())?,
    ) else {
        return Err("not a sweep shard".into());
    };
    merge_sweep_shards(vec![shard, other]).map_err(|e| e.to_string())?;
    Ok(())
}

/// Reads a checkpoint.
fn checkpoint(text: &str, file: &str) -> Result<(), String> {
    read_checkpoint(text, file).map_err(|e| e.to_string())?;
    let _: Value = serde_json::from_str(text).map_err(|e| e.to_string())?;
    Ok(())
}
