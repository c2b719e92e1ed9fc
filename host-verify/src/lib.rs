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
//! | [`calibrate`] | lens calibration from checkerboard photographs: corners, Zhang's closed form, Levenberg-Marquardt, report (`calibrate` command) |
//! | [`cmd`] | the body of each command of the `fixsight-verify` tool, one file per command |
//! | [`family`] | what a kernel family provides ([`family::Family`]) and shared helpers |
//! | [`families`] | the list of families and kernel ids; recomputing any golden vector |
//! | [`filter`], [`gradient`], [`nms`], [`hysteresis`], [`thinning`], [`warp`] | one folder per kernel file `kernels/src/<same name>.rs`: `reference.rs`, `check.rs` (contract), `golden.rs` (golden cases, `run_vector`) |
//! | [`chain`] | the edge chain composed on the host (`chain.edges`): full-`f64` Canny reference, F1 contract |
//! | [`edge_chain`] | the fixed-point edge chain run on the host, whose intermediates the edge families check |
//! | [`pipeline`] | the streamed edge stage (`pipeline.edge_stream`) against the whole-frame kernels and the `f64` Canny |
//! | [`border`] | the border rule as a golden parameter, the border-extended pixel lookup |
//! | [`scene`] | procedural demo world (warehouse floor, tape, wide-angle lens) |
//! | [`natural`] | openly licensed natural photographs (grey crops shipped in `data/natural/`), run through every accuracy contract beside the demo scenes |
//! | [`sequence`] | the demo sequence (cart drifting along floor tape) and its per-frame truth |
//! | [`lens`] | lens models in `f64`, the lens file format |
//! | [`metrics`] | error statistics |
//! | [`opcount`] | operations per pixel, weighted |
//! | [`contract`] | the per-kernel report row |
//! | [`campaign`] | the seeded hostile-input campaign over every parser and kernel family (smoke run in `cargo test`, long run `--example campaign`) |
//! | [`files`] | bounded reads of regular files and safe output sets, used by every command |
//! | [`golden`] | golden-vector format, check and write |
//! | [`padded`] | golden vectors with padded rows (`row_pad`): their runner and cases |
//! | [`golden_c`] | the golden vectors as C source (C ports, the C ABI's tests) |
//! | [`report`] | the verification report |
//! | [`html`] | the report as one self-contained HTML file for a review (`report.html`) |
//! | [`targets`] | on-target conformance under QEMU (`targets` command) |
//! | [`codebytes`] | code bytes per kernel id of `targets` from the reference graph of one linked image |
//! | [`c_firmware`] | the C firmware of `targets`: golden vectors through the C ABI on the emulated Cortex-M4 |
//! | [`marking`] | marking selection: limits derived from the camera geometry, `f64` reference, contract on the demo sequence's truth |
//! | [`track`] | the tracker (`track.tracker`): `f64` reference tracker, synthetic sequences, tracker and drift-warning contract, one folder like the families above |
//! | [`lines`] | line voting: integer and `f64` Hough references, known-line cases, lens-correction grids |

pub mod border;
pub mod c_firmware;
pub mod calibrate;
pub mod campaign;
pub mod chain;
pub mod cmd;
pub mod codebytes;
pub mod contract;
pub mod edge_chain;
pub mod families;
pub mod family;
pub mod files;
pub mod filter;
pub mod frontier;
pub mod golden;
pub mod golden_c;
pub mod gradient;
pub mod html;
pub mod hysteresis;
pub mod lens;
pub mod lines;
pub mod marking;
pub mod metrics;
pub mod natural;
pub mod nms;
pub mod opcount;
pub mod padded;
pub mod pipeline;
pub mod progress;
pub mod report;
pub mod scene;
pub mod sequence;
pub mod sweep;
pub mod target_sequence;
pub mod targets;
pub mod thinning;
pub mod track;
pub mod warp;
