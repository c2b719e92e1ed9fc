//! # fixsight-port-cortex-m4f-float — the point job with an `f32` edge stage
//!
//! For cores with a single-precision FPU (the Cortex-M4F, target
//! `thumbv7em-none-eabihf`): the demo's edge stage written in `f32`
//! ([`F32EdgeStream`]: the same smoothing and operator taps, magnitude,
//! 4-sector or interpolating suppression, automatic thresholds by the same rank rule,
//! hysteresis and thinning), followed by the kernel crate's line stages
//! through its public API ([`F32PointJob`]: vote, peaks, marking, tracker),
//! so that the accuracy/cost map (`fixsight-verify frontier`) can set what
//! the integer stage costs and gives beside what `f32` costs and gives on
//! the same core. The kernel crate stays integer-only: this crate is a port
//! (`ports/`), never linked into a core without an FPU.
//!
//! `#![no_std]`, no heap, no `unsafe`; every buffer is in the types, sized
//! by const parameters, and `ram_bytes()` is `size_of::<Self>()`. Public
//! functions return the kernel crate's typed [`fixsight::Error`] and do not
//! panic.
//!
//! This port claims no kernel id (`claims.txt` is empty): it is not
//! bit-exact to any kernel. `fixsight-verify targets` builds the Cortex-M4
//! firmware with the feature `port-cortex-m4f-float`, whose bench stages
//! `map-f32-...` run this job on the QVGA bench frame.
//!
//! ```
//! use fixsight::pipeline::PointJobConfig;
//! use fixsight_port_cortex_m4f_float::{F32PointJobQvga, Root};
//! let mut job: Box<F32PointJobQvga> = Box::default();
//! job.configure(&PointJobConfig::DEMO_QVGA, Root::Fast, 320, 240)?;
//! // Two bright vertical bars: lines, no tape.
//! let row: [u8; 320] = core::array::from_fn(|x| if (150..170).contains(&x) { 220 } else { 60 });
//! for _ in 0..240 { job.push_row(&row)?; }
//! let r = job.finish(None)?;
//! assert_eq!(r.peaks, 2);
//! # Ok::<(), fixsight::Error>(())
//! ```

#![no_std]
#![deny(missing_docs)]
#![forbid(unsafe_code)]

pub mod edges;
pub mod job;

pub use edges::{F32Config, F32EdgePoint, F32EdgeStream, F32FrameReport};
pub use job::{F32JobReport, F32PointJob, F32PointJobQvga};

use micromath::F32Ext;

/// How the stage takes the square root of `gx^2 + gy^2`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Root {
    /// `micromath`'s `F32Ext::sqrt`: `from_bits((bits + 0x3f80_0000) >> 1)`,
    /// an integer add and shift, within about 6 % of the root
    /// (`tests/against_f64.rs` measures the bound it holds), and
    /// non-decreasing.
    Fast,
    /// [`Root::Fast`] refined by two Newton steps `y = (y + s / y) / 2`
    /// (two `f32` divisions): each step squares the relative error and
    /// halves it (Newton's method for `y^2 = s`), so from 6.1 % the error is
    /// below `2e-3` then `2e-6`, plus the `f32` rounding of the steps.
    Newton,
}

impl Root {
    /// The square root of `s >= 0` (0 for 0).
    ///
    /// ```
    /// use fixsight_port_cortex_m4f_float::Root;
    /// assert_eq!(Root::Fast.of(4.0), 2.0);
    /// assert!((Root::Newton.of(2.0) - core::f32::consts::SQRT_2).abs() < 3e-6);
    /// assert_eq!(Root::Newton.of(0.0), 0.0);
    /// ```
    #[inline(always)]
    pub fn of(self, s: f32) -> f32 {
        let y = F32Ext::sqrt(s);
        match self {
            Root::Fast => y,
            Root::Newton => {
                if s > 0.0 {
                    let y = 0.5 * (y + s / y);
                    0.5 * (y + s / y)
                } else {
                    0.0
                }
            }
        }
    }

    /// Name in the map (`fast`, `newton`).
    ///
    /// ```
    /// assert_eq!(fixsight_port_cortex_m4f_float::Root::Newton.name(), "newton");
    /// ```
    pub const fn name(self) -> &'static str {
        match self {
            Root::Fast => "fast",
            Root::Newton => "newton",
        }
    }
}
