//! Time-resolved slab diffusion (in progress).
