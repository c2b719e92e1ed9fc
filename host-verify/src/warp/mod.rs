//! The `warp` family: `f64` reference, integer-model transcription,
//! contract and golden cases of `fixsight::warp`, plus the host tools built
//! on them.
//!
//! | file | holds |
//! |---|---|
//! | `reference.rs` | the `f64` bilinear reference, the integer model transcribed, the exact lens map |
//! | `run.rs` | how the host calls the kernels |
//! | `check.rs` | the contract checks on the demo scenes |
//! | `golden.rs` | golden cases, params, `run_vector` |
//! | `grid.rs` | the control-grid builder (control points from a lens model, geometric error) |
//! | `grid_files.rs` | the Rust, C header and blob files of `fixsight-verify grid` |
//! | `sweep.rs` | the precision sweep of `fixsight-verify sweep` (its plot: [`crate::sweep::plot::draw_warp`]) |
//!
//! # References
//!
//! * [`reference::bilinear_f64`]: bilinear interpolation of the border-extended source
//!   at a real coordinate (pixel centres at integers), in `f64`.
//! * [`reference::model_sample`] and [`reference::model_grid_coord`]: the kernel's documented
//!   integer model (kernels/src/warp.rs) transcribed in `i64`/`i128`
//!   arithmetic with Euclidean division, without the kernel's fast path or
//!   incremental stepping.
//! * [`reference::exact_map`]: the exact `f64` source coordinate of every output pixel
//!   ([`crate::lens::Camera::source_of`]).
//!
//! Coordinates are quantised by [`reference::quantise`]: `floor(v * 2^F + 1/2)`.
//!
//! # Contract
//!
//! * `warp.pixel_map` (grey and 3 interleaved channels in one row):
//!   bit-exact to the integer model on the quantised exact map, whole frame and in strips; against the `f64`
//!   reference at the **exact** (unquantised) coordinates within
//!   `0.5 + (Dx + Dy) 2^-(F+1)` LSB, `Dx`/`Dy` the largest horizontal /
//!   vertical neighbour difference of the source (derivation in the kernel
//!   docs), and within 1 LSB on at least 99.9 % of pixels at `F >= 5`.
//! * `warp.control_grid`: bit-exact to the integer model fed with the
//!   grid-interpolated coordinates; against the `f64` reference at the
//!   ideal grid coordinate (bilinear interpolation of the unquantised control
//!   points) within `0.5 + (Dx + Dy) 2^-F` (control-point quantisation and
//!   coordinate rounding, `2^-(F+1)` each per axis), and within 1 LSB on
//!   99.9 %. The grid's own approximation of the lens is reported apart as
//!   geometric error (`grid_max_px`, `grid_rms_px`) and as
//!   `max_err_vs_exact_lens_map`.
//! * `warp.grid_stream`: bit-exact to the integer model fed with the
//!   grid-interpolated coordinates (the same model as `warp.control_grid`),
//!   with source rows pushed one at a time into a ring of exactly
//!   `band_rows(strip_rows)` rows and strips taken as soon as ready. Its
//!   metrics give the ring the demo lens needs ([`check::band_figures`]):
//!   `band_rows_*` and `band_bytes_*` (grey) at QVGA and VGA.
//!
//! The report's lens (`report --lens FILE`, else the built-in demo lens)
//! is the map of all three rows: with a lens file the demo scenes are
//! rendered again through it and the natural photographs are warped
//! through it ([`check::scenes_through`]); the band figures stay on the
//! demo lens.
//!
//! # Golden kernel ids
//!
//! | id | kernel API | inputs | params | output |
//! |---|---|---|---|---|
//! | `warp.pixel_map` | `PixelMap::warp_rows` | `src` u8 (any channels), `map` i32 2 channels (raw x, y per output pixel) | `{"frac_bits": 2..=10, "border": "clamp" \| {"fill": u8}}` | `dst` u8, map size, channels of `src` |
//! | `warp.control_grid` | `ControlGrid::from_blob`, `ControlGrid::warp_rows` | `src` u8, `blob` u8 (the grid blob as one row) | `{"border": ..., "strip_rows": rows per call}` | `dst` u8, the blob's output size |
//! | `warp.grid_stream` | `ControlGrid::from_blob`, `GridStream` (`push_row`, `next_strip`) | as `warp.control_grid` | as `warp.control_grid`; the ring holds `band_rows(strip_rows)` source rows | as `warp.control_grid` (the same bytes) |

pub mod check;
pub mod golden;
pub mod grid;
pub mod grid_files;
pub mod reference;
pub mod run;
pub mod sweep;
#[cfg(test)]
mod tests;

use crate::family::Family;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "warp",
    kernels: &["warp.pixel_map", "warp.control_grid", "warp.grid_stream"],
    composed_on_host: false,
    check: check::check,
    golden_cases: golden::golden_cases,
    run_vector: golden::run_vector,
};
