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
//! | [`golden_c`] | the golden vectors as C source (C ports, the C ABI's tests) |
//! | [`families`] | registry of kernel families |
//! | [`report`] | the verification report |
//! | [`targets`] | on-target conformance under QEMU (`targets` subcommand) |
//! | [`c_firmware`] | the C firmware of `targets`: golden vectors through the C ABI on the emulated Cortex-M4 |
//! | [`filter`], [`gradient`], [`nms`], [`hysteresis`], [`thinning`], [`warp`] | reference, contract check and golden cases of `kernels/src/<same name>.rs` |
//! | [`chain`] | the edge chain composed on the host (`chain.edges`), its full-`f64` Canny reference |
//! | [`sweep_plot`] | the plot of the warp precision sweep |

pub mod c_firmware;
pub mod chain;
pub mod contract;
pub mod families;
pub mod filter;
pub mod golden;
pub mod golden_c;
pub mod gradient;
pub mod hysteresis;
pub mod lens;
pub mod metrics;
pub mod nms;
pub mod opcount;
pub mod report;
pub mod scene;
pub mod sweep_plot;
pub mod targets;
pub mod thinning;
pub mod warp;

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
