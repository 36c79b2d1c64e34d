//! The library side of parameter studies and long runs: checkpoints, the in-code sweep API
//! and the resumable sweep runner, driven without the binary.

mod checkpoint_resume;
mod sweep_library;
