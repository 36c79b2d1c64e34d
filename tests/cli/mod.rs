//! The command-line tool, driven as a user would.

mod bad_models;
mod bad_profiles;
mod import_command;
mod profile_command;
mod run_command;
mod star_command;
