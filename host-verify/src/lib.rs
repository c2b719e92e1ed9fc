//! # fixsight-verify — host-side verification of the fixsight kernels
//!
//! For every kernel in the `fixsight` crate this crate holds an `f64`
//! reference (in a module named like the kernel's file), a declared
//! contract (bit-exact, or a tolerance with an analytical bound), error
//! metrics, operation counts per pixel, golden vectors, and the report that
//! ties them together.
//!
//! | module | role |
//! |---|---|
//! | [`scene`] | procedural demo world (warehouse floor, tape, wide-angle lens) |
//! | [`lens`] | lens models in `f64` |
//! | [`metrics`] | error statistics |
//! | [`opcount`] | operations per pixel, weighted |
//! | [`contract`] | the per-kernel report row |
//! | [`golden`] | golden-vector format, check and write |
//! | [`families`] | registry of kernel families |
//! | [`report`] | the verification report |
//! | [`targets`] | on-target conformance under QEMU (`targets` subcommand) |
//! | [`filter`], [`gradient`] | references and contracts, one per kernel file |
//! | [`nms`], [`hysteresis`], [`thinning`] | integer reference models of the edge kernels |
//! | [`canny`] | full-`f64` Canny reference and the `edges` family contract |

pub mod calibrate;
pub mod canny;
pub mod contract;
pub mod families;
pub mod filter;
pub mod golden;
pub mod gradient;
pub mod hysteresis;
pub mod lens;
pub mod metrics;
pub mod nms;
pub mod opcount;
pub mod remap;
pub mod report;
pub mod scene;
pub mod sweep_plot;
pub mod targets;
pub mod thinning;

use std::path::PathBuf;

/// The golden folder: `dir` if given; else `golden/` in the current folder
/// if it has a manifest; else the repository's `golden/` next to this crate.
pub fn golden_dir(dir: Option<PathBuf>) -> PathBuf {
    if let Some(d) = dir {
        return d;
    }
    let here = PathBuf::from("golden");
    if here.join(golden::MANIFEST).exists() {
        return here;
    }
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("..")
        .join("golden")
}
