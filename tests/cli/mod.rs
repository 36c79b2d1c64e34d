//! The command-line tool, driven as a user would.

mod bad_models;
mod plots;
mod run_command;
