//! The command-line tool, driven as a user would.

mod bad_models;
mod bad_profiles;
mod checkpoints;
mod cluster_scripts;
mod fit_command;
mod import_command;
mod json_keys;
mod length_units;
mod optics;
mod output_paths;
mod plots;
mod profile_command;
mod run_command;
mod scale_support;
mod shards;
mod star_command;
mod stellar_runs;
mod sweeps;
mod walk_plan;
mod weighted_runs;
