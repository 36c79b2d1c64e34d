//! The integration suite: one test binary (links once), modules by theme.
//!
//! Statistical tests use fixed seeds; their tolerances are stated in standard errors (σ) of
//! the Monte Carlo estimate, plus, where the check value is itself approximate, the stated
//! uncertainty of that value.

mod architecture;
mod cli;
mod fuzz;
mod physics;
mod report;
mod scale;
mod support;
