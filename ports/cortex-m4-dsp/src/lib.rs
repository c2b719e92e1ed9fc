//! # fixsight-port-cortex-m4-dsp — a worked example of a vendor port
//!
//! Kernels of the `fixsight` crate rewritten for the Cortex-M4: four
//! pixels per step on packed 16-bit lanes, with the Armv7E-M DSP
//! instructions where plain Rust does not reach them. A port is held to the
//! same contract as the kernel it replaces: **bit-exact** on every golden
//! vector, on the host (`tests/golden.rs`, and a property test against the
//! kernel on random sizes, strides and borders) and on the emulated
//! Cortex-M4 (`fixsight-verify targets` builds the firmware with this port
//! swapped in for the kernel ids of `claims.txt` and runs every golden
//! vector), where its instructions per pixel are measured by the same
//! counter as the kernel's.
//!
//! | kernel id | function | kernel crate equivalent |
//! |---|---|---|
//! | `filter.binomial3` | [`filter::binomial3`] | `fixsight::filter::binomial3(border).apply(..)` |
//! | `filter.binomial5` | [`filter::binomial5`] | `fixsight::filter::binomial5(border).apply(..)` |
//! | `filter.sobel_x` | [`filter::sobel_x`] | `fixsight::filter::sobel_x(border).apply(..)` |
//! | `filter.sobel_y` | [`filter::sobel_y`] | `fixsight::filter::sobel_y(border).apply(..)` |
//! | `filter.scharr_x` | [`filter::scharr_x`] | `fixsight::filter::scharr_x(border).apply(..)` |
//! | `filter.scharr_y` | [`filter::scharr_y`] | `fixsight::filter::scharr_y(border).apply(..)` |
//!
//! This crate is the only place in the project where `unsafe` is allowed,
//! and only for inline assembly ([`lanes`]): each block carries a comment
//! that argues it sound. On a target without the DSP extension (the host,
//! a Cortex-M3) the same functions are Rust models of the instructions, so
//! the crate builds and gives the same outputs everywhere.
//!
//! ```
//! use fixsight::filter::Border;
//! use fixsight::{ImageView, ImageViewMut};
//! use fixsight_port_cortex_m4_dsp::filter::{binomial5, scratch_words};
//! let src = [10u8; 8 * 4];
//! let mut dst = [0u8; 8 * 4];
//! let mut scratch = [0u32; scratch_words(8)];
//! binomial5(
//!     &ImageView::new(&src, 8, 4, 8)?,
//!     &mut ImageViewMut::new(&mut dst, 8, 4, 8)?,
//!     Border::Clamp,
//!     &mut scratch,
//! )?;
//! assert!(dst.iter().all(|&p| p == 10));
//! # Ok::<(), fixsight::Error>(())
//! ```

#![no_std]
#![deny(missing_docs)]
// `unsafe` only where a block of inline assembly is allowed by name.
#![deny(unsafe_code)]

pub mod filter;
pub mod lanes;

/// The kernel ids this port implements, as listed in `claims.txt` (the
/// claims file `fixsight-verify port-check` reads).
///
/// ```
/// assert!(fixsight_port_cortex_m4_dsp::CLAIMS.contains(&"filter.sobel_x"));
/// ```
pub const CLAIMS: &[&str] = &[
    "filter.binomial3",
    "filter.binomial5",
    "filter.sobel_x",
    "filter.sobel_y",
    "filter.scharr_x",
    "filter.scharr_y",
];
