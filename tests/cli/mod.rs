//! The command-line tool, driven as a user would.

mod bad_models;
mod run_command;
