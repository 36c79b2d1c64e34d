//! The `sojourn` command-line tool: a thin layer over the library.

mod cli;

use std::process::ExitCode;

fn main() -> ExitCode {
    match cli::run() {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            if cli::is_broken_pipe(&error) {
                return ExitCode::SUCCESS;
            }
            eprintln!("sojourn: error: {error:#}");
            ExitCode::FAILURE
        }
    }
}
