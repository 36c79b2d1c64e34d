//! The command-line tool, driven as a user would.

mod bad_models;
mod checkpoints;
mod cluster_scripts;
mod plots;
mod run_command;
mod scale_support;
mod shards;
mod sweeps;
