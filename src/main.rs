//! The `sojourn` command-line tool: a thin layer over the library.

mod cli;

use std::io::Write;
use std::process::ExitCode;

fn main() -> ExitCode {
    match cli::run() {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            if cli::is_broken_pipe(&error) {
                return ExitCode::SUCCESS;
            }
            // A failing stderr must not turn the error into a panic; the exit code says it.
            let _ = writeln!(std::io::stderr(), "sojourn: error: {error:#}");
            ExitCode::FAILURE
        }
    }
}
