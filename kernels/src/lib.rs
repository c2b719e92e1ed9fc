//! # fixsight — fixed-point camera-pipeline kernels for small cores
//!
//! `#![no_std]`, no heap, no floating point in any kernel code path. Every
//! kernel runs in memory the caller hands in, has a documented integer model
//! (rounding, saturation and border rules stated down to the bit) and is
//! checked by the `fixsight-verify` host tool against an `f64` reference and
//! golden vectors.
//!
//! One module per concept:
//!
//! | module | what it holds |
//! |---|---|
//! | [`error`] | the one typed [`Error`] every fallible call returns |
//! | [`image`] | [`ImageView`] / [`ImageViewMut`]: validated views over caller buffers |
//! | [`arith`] | the rounding and saturation primitives every kernel uses |
//! | [`ops`] | operation counting (feature `count-ops`) |
//! | [`filter`] | separable FIR filters, presets (binomial, Sobel, Scharr), row streaming |
//! | [`gradient`] | gradient magnitude (L1, approximate L2), 4-sector direction, binary-angle gradient angle |
//! | [`nms`] | non-maximum suppression along the 4-sector direction, row streaming |
//! | [`hysteresis`] | double threshold, automatic thresholds, bounded-memory hysteresis |
//! | [`thinning`] | Zhang-Suen thinning to one-pixel edges |
//! | [`lines`] | line voting: `(rho, theta)` accumulator, gated streaming votes, lens-corrected points, peaks, segments |
//! | [`pipeline`] | the streamed edge stage: camera rows in, edge points out, in fixed memory |
//! | [`marking`] | picks a floor tape's two edges among detected lines (not a safety function) |
//! | [`warp`] | lens-undistortion warp: bilinear fixed-point sampling, pixel maps, control grids, grid blobs |
//! | [`track`] | constant-velocity Kalman tracking of tape edges, drift warning (not a safety function) |
//!
//! ```
//! use fixsight::{filter, ImageView, ImageViewMut};
//! let src = [10u8; 8 * 4];
//! let mut dst = [0u8; 8 * 4];
//! let mut scratch = [0i32; 8];
//! let smooth = filter::binomial5(filter::Border::Clamp);
//! smooth.apply(
//!     &ImageView::new(&src, 8, 4, 8)?,
//!     &mut ImageViewMut::new(&mut dst, 8, 4, 8)?,
//!     &mut scratch,
//! )?;
//! assert!(dst.iter().all(|&p| p == 10));
//! # Ok::<(), fixsight::Error>(())
//! ```
#![no_std]
#![forbid(unsafe_code)]
#![warn(missing_docs)]

#[cfg(feature = "count-ops")]
extern crate std;

pub mod arith;
pub mod error;
pub mod filter;
pub mod gradient;
pub mod hysteresis;
pub mod image;
pub mod lines;
pub mod marking;
pub mod nms;
pub mod ops;
pub mod pipeline;
pub mod thinning;
pub mod track;
pub mod warp;

pub use error::{Error, Result};
pub use image::{ImageView, ImageViewMut};

/// Version of this crate (its `Cargo.toml` version). Golden manifests
/// record the version of the kernels that generated them.
///
/// ```
/// assert_eq!(fixsight::VERSION.split('.').count(), 3);
/// ```
pub const VERSION: &str = env!("CARGO_PKG_VERSION");
