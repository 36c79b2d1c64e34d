//! Checks on the shape of the code itself (not its results).

mod layering;
