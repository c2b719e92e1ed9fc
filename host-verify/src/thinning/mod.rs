//! Reference model of `fixsight::thinning`: Zhang-Suen thinning written
//! directly from the paper (T. Y. Zhang, C. Y. Suen, 1984, "A fast parallel
//! algorithm for thinning digital patterns", CACM 27(3)), with `B` and `A`
//! counted per pixel (no table) and each sub-iteration deciding from a full
//! copy of the frame. Contract **bit-exact** (foreground/background and the
//! surviving byte values), checked on the hysteresis output of the edge
//! chain on the demo scenes (see [`crate::edge_chain`]).
//!
//! Kernel id `thinning.thin`: input `map` u8 (nonzero = foreground), params
//! `{}`, output `thin` u8.

pub mod check;
pub mod golden;
pub mod reference;

use crate::family::Family;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "thinning",
    kernels: &["thinning.thin"],
    composed_on_host: false,
    check: |scenes, _lens| check::check(scenes),
    golden_cases: golden::golden_cases,
    run_vector: golden::run_vector,
};
