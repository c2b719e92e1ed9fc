//! The streamed edge stage: camera rows in, edge points (position and
//! gradient) out, in memory fixed at compile time.
//!
//! > **Not a safety function.** This stage can feed a vehicle that follows
//! > floor tape. It is not developed, assessed or certified as a safety
//! > function; a vehicle that can hurt people needs safety-rated sensing and
//! > control under the standards that apply to it (for example ISO 3691-4,
//! > IEC 61508, ISO 13849) and local rules.
//!
//! # What it computes
//!
//! An [`EdgeConfig`] names every setting of the chain; [`DEMO`] is the
//! configuration the project's host tool and on-target harness both use.
//! For a frame of `width x height` pixels the stream's result is, **bit for
//! bit**, what the whole-frame kernels give when run one after another:
//!
//! 1. gradients: [`crate::filter::SeparableFilter::apply`] with the two
//!    filters of [`EdgeConfig::gradient_filters`] (the smoothing taps
//!    convolved with the operator's derivative and cross taps, one
//!    rounding, clamped border), `i16` output;
//! 2. magnitude ([`Magnitude`]) and [`crate::gradient::direction`];
//! 3. [`crate::nms::suppress`], or with [`Suppression::Interpolated`]
//!    [`crate::nms::suppress_interpolated`] on the gradients of step 1;
//! 4. [`crate::hysteresis::classify`] with the thresholds in use for the
//!    frame (see *Thresholds* below);
//! 5. [`crate::hysteresis::link`];
//! 6. [`crate::thinning::thin`] (or [`crate::thinning::thin_at_most`], or
//!    nothing, by [`Thinning`]).
//!
//! The edge points are the nonzero pixels of step 6 in raster order, each
//! with the `gx`, `gy` of step 1 at that pixel (what line voting needs to
//! gate votes by orientation).
//!
//! # Thresholds: this frame or the next
//!
//! [`ThresholdRule::Fixed`] uses one pair for every frame. With
//! [`ThresholdRule::Auto`] the stream accumulates, row by row, the
//! histogram of the nonzero suppressed magnitudes of the frame and, at its
//! end, derives thresholds by [`crate::hysteresis::Thresholds::from_counts`]
//! (equal to [`crate::hysteresis::Thresholds::from_histogram`] on the
//! frame's suppressed magnitudes). Those thresholds apply to the **next**
//! frame: the stream keeps no per-pixel magnitudes, so it cannot classify
//! the current frame again. The first frame after [`EdgeStream::configure`]
//! uses the rule's `first` pair. [`EdgeStream::reset`] keeps the carried
//! pair. The histogram has `(max_magnitude >> shift) + 1` bins, where
//! `max_magnitude` follows from the configured taps and magnitude kind
//! ([`EdgeConfig::max_magnitude`]), so no magnitude falls past the last bin
//! and the derived `high` is never capped by the histogram;
//! [`FrameReport::threshold_at_limit`] reports the one remaining limit (no
//! nonzero magnitude, or `high` clipped to 65535). With a candidate budget
//! ([`EdgeStream::set_candidate_budget`]) the carried pair also goes
//! through [`crate::hysteresis::Thresholds::within_budget`] on the same
//! histogram.
//!
//! # Memory (counted from the types)
//!
//! [`EdgeStream<W, MAP_WORDS, BINS, CAP>`](EdgeStream) owns every buffer:
//!
//! | buffer | size |
//! |---|---|
//! | camera row ring | `9 * W` bytes (the longest fused tap set has 9 taps; also the thinning rows at frame end) |
//! | magnitude rows | `3 * 2 * W` bytes |
//! | gradient row | `2 * 2 * W` bytes (also the hysteresis work stack at frame end) |
//! | class map | `4 * MAP_WORDS` bytes: 2 bits per pixel, rows padded to 16 pixels ([`map_words`]) |
//! | threshold histogram | `4 * BINS` bytes ([`EdgeConfig::bins_needed`]) |
//! | point gradients | `4 * CAP` bytes: `gx, gy` of up to `CAP` candidates |
//!
//! There is no frame-sized byte buffer: the class map holds 2 bits per
//! pixel (none / weak / strong / edge, then none / dropped / thinned /
//! edge). [`EdgeStream::ram_bytes`] is `size_of::<Self>()`; the table in the
//! README is printed from it.
//!
//! Point gradients are stored for every *candidate* (a suppressed
//! magnitude at or above `low`) in raster order, because whether a
//! candidate ends up an edge is known only at the end of the frame. A
//! frame with more than `CAP` candidates still gives every edge point, but
//! the ones past the `CAP`-th candidate come without a gradient
//! ([`EdgePoint::gradient`] is `None`), and
//! [`FrameReport::gradients_dropped`] counts them.
//!
//! # Streaming and timing
//!
//! One call per camera row ([`EdgeStream::push_row`], a format adapter, or
//! [`EdgeStream::next_row_slot`] + [`EdgeStream::commit_row`] so that the
//! camera DMA writes straight into the ring). Gradient row `y` is formed
//! when row `y + r` arrives (`r` = radius of the fused taps, 4 in
//! [`DEMO`]); its suppression and classification follow one row later.
//! One pass per row does it all, 64 columns at a time: each column's
//! `2r + 1` ring pixels are read once and feed both column sums (cross and
//! derivative taps) into a stack buffer (72 pairs of `i32`, 576 bytes; the
//! `r` columns on either side of a chunk are summed again); then per pixel the
//! `2r + 1` column sums around it give `gx`, `gy` and the magnitude of
//! row `y`, and one pixel behind, in the same loop, row `y - 1` gets its
//! suppression (its direction only when its magnitude can matter: at least
//! 1 with automatic thresholds, at least `low` with fixed ones), histogram
//! count, class and
//! point gradient. Hysteresis and thinning run on the class map when the
//! frame ends ([`EdgeStream::finish`]), with the gradient row as their
//! work stack and the camera ring as their row scratch.
//!
//! # Rounding, saturation and borders
//!
//! Only what the whole-frame kernels do: the fused column and row sums are
//! exact in `i32` (the taps are regrouped by their symmetry, which changes
//! no sum; [`EdgeConfig::check`] rejects any configuration whose worst
//! case does not fit), `gx, gy = sat_i16(round_shift(acc, h_shift +
//! v_shift))` (round half up, [`crate::arith::round_shift`]), rows and
//! columns outside the frame clamp to its edge, magnitudes and sectors by
//! [`crate::gradient`], suppression by the rule of [`crate::nms`] (zero
//! outside), classes and thresholds by [`crate::hysteresis`], thinning by
//! [`crate::thinning`].
//!
//! # Bad input
//!
//! Every call validates before it changes anything: a rejected row
//! (wrong length, one row too many, an out-of-range sample) leaves the
//! stream exactly as it was, so the next good row continues the frame.
//!
//! ```
//! use fixsight::pipeline::{EdgeStream, DEMO, map_words};
//! // A 24 x 16 frame with a vertical step at x = 12.
//! let mut s = EdgeStream::<24, { map_words(24, 16) }, 925, 256>::new();
//! s.configure(&DEMO, 24, 16)?;
//! let row: [u8; 24] = core::array::from_fn(|x| if x < 12 { 30 } else { 200 });
//! for _ in 0..16 { s.push_row(&row)?; }
//! let report = s.finish()?;
//! assert!(report.edge_points >= 12);
//! for p in s.points()? {
//!     assert!(p.x == 11 || p.x == 12);
//!     let (gx, _gy) = p.gradient.unwrap();
//!     assert!(gx > 0); // intensity grows to the right
//! }
//! # Ok::<(), fixsight::Error>(())
//! ```

use core::num::NonZeroU32;

use crate::error::{Error, Result};
use crate::filter::{self, Border, SeparableFilter, Taps, MAX_TAPS};
use crate::gradient::{
    direction_sector, l1, l2_approx, l2_round, round_root, L2_ALPHA, L2_BETA, L2_SHIFT,
};
use crate::hysteresis::{
    self, check_rule, code_of, CodeMap, HysteresisStats, Thresholds, NONE, U0F16,
};
use crate::image::{check_dims, MAX_DIM};
use crate::ops::{tally, Op};
use crate::thinning::{self, ThinMap, ThinStats};

/// Smoothing applied before the derivative (fused into its taps).
///
/// ```
/// use fixsight::pipeline::Smoothing;
/// assert_eq!(Smoothing::Gauss7.taps(), (&[1i16, 14, 62, 102, 62, 14, 1][..], 8));
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Smoothing {
    /// No smoothing: the bare operator.
    None,
    /// Binomial `[1 2 1] / 4`.
    Binomial3,
    /// Binomial `[1 4 6 4 1] / 16`.
    Binomial5,
    /// Binomial `[1 6 15 20 15 6 1] / 64`.
    Binomial7,
    /// The `sigma = 1` Gaussian sampled at `-3..=3`, normalised, times 256
    /// and rounded: `[1 14 62 102 62 14 1] / 256` (`0.00443, 0.05401,
    /// 0.24203, 0.39905` times 256 are `1.14, 13.83, 61.96, 102.16`; the
    /// rounded taps sum to 256).
    Gauss7,
}

impl Smoothing {
    /// Taps and normalisation shift.
    ///
    /// ```
    /// assert_eq!(fixsight::pipeline::Smoothing::None.taps(), (&[1i16][..], 0));
    /// ```
    pub const fn taps(self) -> (&'static [i16], u32) {
        match self {
            Smoothing::None => (&[1], 0),
            Smoothing::Binomial3 => (&[1, 2, 1], 2),
            Smoothing::Binomial5 => (&[1, 4, 6, 4, 1], 4),
            Smoothing::Binomial7 => (&[1, 6, 15, 20, 15, 6, 1], 6),
            Smoothing::Gauss7 => (&[1, 14, 62, 102, 62, 14, 1], 8),
        }
    }
}

/// Gradient operator: derivative `[-1 0 1]` along the axis, a cross
/// smoothing across it.
///
/// ```
/// assert_eq!(fixsight::pipeline::Operator::Scharr.cross(), [3, 10, 3]);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Operator {
    /// Sobel & Feldman (1968): cross taps `[1 2 1]`.
    Sobel,
    /// Scharr (2000): cross taps `[3 10 3]`.
    Scharr,
}

impl Operator {
    /// Cross taps.
    ///
    /// ```
    /// assert_eq!(fixsight::pipeline::Operator::Sobel.cross(), [1, 2, 1]);
    /// ```
    pub const fn cross(self) -> [i16; 3] {
        match self {
            Operator::Sobel => [1, 2, 1],
            Operator::Scharr => [3, 10, 3],
        }
    }
}

/// Gradient magnitude kind (the functions of [`crate::gradient`]).
///
/// ```
/// use fixsight::pipeline::Magnitude;
/// assert_eq!(Magnitude::L2Round.of(300, -400), 500);
/// assert_eq!(Magnitude::L1.of(300, -400), 700);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Magnitude {
    /// [`crate::gradient::l1`].
    L1,
    /// [`crate::gradient::l2_approx`].
    L2Approx,
    /// [`crate::gradient::l2_round`].
    L2Round,
}

impl Magnitude {
    /// The magnitude of one gradient.
    ///
    /// ```
    /// assert_eq!(fixsight::pipeline::Magnitude::L2Approx.of(100, 0), 96);
    /// ```
    #[inline(always)]
    pub fn of(self, gx: i16, gy: i16) -> u16 {
        match self {
            Magnitude::L1 => l1(gx, gy),
            Magnitude::L2Approx => l2_approx(gx, gy),
            Magnitude::L2Round => l2_round(gx, gy),
        }
    }

    /// Largest magnitude of gradients with `|gx|, |gy| <= g` (`g <= 32767`).
    ///
    /// ```
    /// use fixsight::pipeline::Magnitude;
    /// assert_eq!(Magnitude::L2Round.max_for(2614), 3697); // 2614 * sqrt 2 = 3696.8
    /// assert_eq!(Magnitude::L1.max_for(10), 20);
    /// ```
    pub const fn max_for(self, g: u32) -> u32 {
        match self {
            Magnitude::L1 => 2 * g,
            Magnitude::L2Approx => {
                ((L2_ALPHA + L2_BETA) as u32 * g + (1 << (L2_SHIFT - 1))) >> L2_SHIFT
            }
            Magnitude::L2Round => {
                // Nearest integer to sqrt(2 g^2): r = floor(sqrt(s)), plus one
                // when s - r^2 > r (the rule of `l2_round`).
                let s = 2 * g * g;
                let r = isqrt(s);
                if s - r * r > r {
                    r + 1
                } else {
                    r
                }
            }
        }
    }
}

/// `floor(sqrt(s))` in a `const` context (binary search).
const fn isqrt(s: u32) -> u32 {
    let (mut lo, mut hi) = (0u32, 65536u32);
    while hi - lo > 1 {
        let mid = (lo + hi) / 2;
        if (mid as u64) * (mid as u64) <= s as u64 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    lo
}

/// Where the double thresholds come from.
///
/// ```
/// use fixsight::pipeline::ThresholdRule;
/// let r = ThresholdRule::Fixed { low: 40, high: 90 };
/// assert_ne!(r, fixsight::pipeline::DEMO.thresholds);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ThresholdRule {
    /// The same pair for every frame (`1 <= low <= high`).
    Fixed {
        /// Low threshold.
        low: u16,
        /// High threshold.
        high: u16,
    },
    /// The automatic rule of [`crate::hysteresis`] on each frame's
    /// histogram, applied to the next frame.
    Auto {
        /// Bin width `2^shift` (`0..=15`).
        shift: u8,
        /// Share of nonzero suppressed magnitudes below `high`, permille
        /// (`1..=999`).
        high_permille: u16,
        /// `low / high` as `U0F16` bits (nonzero).
        low_ratio_u0f16: u16,
        /// Low threshold of the first frame.
        first_low: u16,
        /// High threshold of the first frame.
        first_high: u16,
    },
}

/// Thinning after hysteresis.
///
/// ```
/// assert_eq!(fixsight::pipeline::DEMO.thinning, fixsight::pipeline::Thinning::AtMost(8));
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Thinning {
    /// No thinning: the points are the hysteresis edges.
    Off,
    /// [`crate::thinning::thin`]: iterate until nothing changes.
    UntilStable,
    /// [`crate::thinning::thin_at_most`] with this cap (at least 1): a
    /// bound on the time per frame.
    AtMost(u16),
}

/// Non-maximum suppression of the stage (step 3 of the module docs).
///
/// ```
/// use fixsight::pipeline::{EdgeConfig, Suppression, DEMO};
/// assert_eq!(DEMO.suppression, Suppression::Sectors);
/// let finer = EdgeConfig { suppression: Suppression::Interpolated, ..DEMO };
/// assert!(finer.check().is_ok());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Suppression {
    /// [`crate::nms::suppress`] with the sector of
    /// [`crate::gradient::direction_sector`]: the two neighbours along the
    /// nearest of four directions. The cheaper rule.
    Sectors,
    /// [`crate::nms::suppress_interpolated`] (its per-pixel rule
    /// [`crate::nms::interpolated_keeps`]): the magnitude interpolated
    /// between the two neighbours the gradient ray passes between, on the
    /// same integer gradients. Closer to the `f64` Canny on textured and
    /// sharp natural images; it reads the gradient of the pixel instead of
    /// its sector and costs about three times as much per candidate
    /// (`targets/README.md`).
    Interpolated,
}

/// Every setting of the edge chain.
///
/// ```
/// use fixsight::pipeline::{EdgeConfig, Magnitude, DEMO};
/// let cheap = EdgeConfig { magnitude: Magnitude::L1, ..DEMO };
/// assert!(cheap.max_magnitude() > DEMO.max_magnitude());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct EdgeConfig {
    /// Smoothing fused into the derivative taps.
    pub smoothing: Smoothing,
    /// Gradient operator.
    pub operator: Operator,
    /// Fractional bits kept in `gx`, `gy` (the gradients are the operator
    /// on the smoothed image times `2^frac_bits`); at most twice the
    /// smoothing shift.
    pub frac_bits: u8,
    /// Magnitude kind.
    pub magnitude: Magnitude,
    /// Threshold rule.
    pub thresholds: ThresholdRule,
    /// Thinning.
    pub thinning: Thinning,
    /// Non-maximum suppression.
    pub suppression: Suppression,
}

/// The demo configuration, used by the host tool's report, the golden
/// vectors of the stage and the on-target harness.
///
/// * Smoothing [`Smoothing::Gauss7`] with Sobel and 2 fractional bits,
///   rounded L2 magnitude: the chain that reaches F1 >= 0.95 against the
///   full-`f64` Canny on the demo scenes (see `host-verify/src/canny.rs`
///   for the design record).
/// * Automatic thresholds with the kernel crate's demo share
///   ([`crate::hysteresis::DEMO_HIGH_PERMILLE`]) and ratio
///   ([`crate::hysteresis::DEMO_LOW_FRACTION`]), bins of width 4: 925
///   bins cover the largest magnitude 3697 of these taps in 3700 bytes.
///   Measured on the demo scenes (`host-verify`): bins of width 2 and 4
///   give the same thresholds and worst-scene F1 0.9686 against the
///   full-`f64` Canny of that time (0.9670 against the reference of
///   `3f06247`: thresholds as `t - 1/2`, thinned, the kernels' border);
///   width 8 moves `worn-dim` from (60, 124) to (61, 128) and its F1 to
///   0.9448 (same older reference), below the 0.95 goal. The first frame uses
///   `(60, 125)`, about the demo scenes' own thresholds.
/// * Thinning capped at 8 iterations (the demo scenes need at most 3).
///
/// ```
/// use fixsight::pipeline::DEMO;
/// assert_eq!(DEMO.max_magnitude(), 3697);
/// assert_eq!(DEMO.bins_needed(), 925);
/// ```
pub const DEMO: EdgeConfig = EdgeConfig {
    smoothing: Smoothing::Gauss7,
    operator: Operator::Sobel,
    frac_bits: 2,
    magnitude: Magnitude::L2Round,
    thresholds: ThresholdRule::Auto {
        shift: 2,
        high_permille: hysteresis::DEMO_HIGH_PERMILLE,
        low_ratio_u0f16: hysteresis::DEMO_LOW_FRACTION.to_bits(),
        first_low: 60,
        first_high: 125,
    },
    thinning: Thinning::AtMost(8),
    suppression: Suppression::Sectors,
};

/// The fused gradient taps of a configuration: `deriv` = smoothing
/// convolved with `[-1 0 1]`, `cross` = smoothing convolved with the
/// operator's cross taps (full convolution, tap `k` at offset `k - r`).
/// `gx` filters rows with `deriv` and columns with `cross`; `gy` the
/// transpose. The total shift `h_shift + v_shift = 2 * smoothing shift -
/// frac_bits` (split with the larger half horizontally).
///
/// ```
/// let t = fixsight::pipeline::DEMO.gradient_taps();
/// assert_eq!(t.deriv(), &[-1, -14, -61, -88, 0, 88, 61, 14, 1]);
/// assert_eq!(t.cross(), &[1, 16, 91, 240, 328, 240, 91, 16, 1]);
/// assert_eq!((t.h_shift, t.v_shift), (7, 7));
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct GradientTaps {
    deriv: [i16; MAX_TAPS],
    cross: [i16; MAX_TAPS],
    len: usize,
    /// Shift of the horizontal tap set.
    pub h_shift: u32,
    /// Shift of the vertical tap set.
    pub v_shift: u32,
}

impl GradientTaps {
    /// Derivative taps.
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeConfig, Smoothing, DEMO};
    /// let c = EdgeConfig { smoothing: Smoothing::None, frac_bits: 0, ..DEMO };
    /// assert_eq!(c.gradient_taps().deriv(), &[-1, 0, 1]);
    /// ```
    pub const fn deriv(&self) -> &[i16] {
        self.deriv.split_at(self.len).0
    }

    /// Cross taps.
    ///
    /// ```
    /// assert_eq!(fixsight::pipeline::DEMO.gradient_taps().cross().len(), 9);
    /// ```
    pub const fn cross(&self) -> &[i16] {
        self.cross.split_at(self.len).0
    }

    /// Radius `(len - 1) / 2`.
    ///
    /// ```
    /// assert_eq!(fixsight::pipeline::DEMO.gradient_taps().radius(), 4);
    /// ```
    pub const fn radius(&self) -> usize {
        (self.len - 1) / 2
    }
}

/// Full convolution of `a` with a 3-tap set.
const fn conv3(a: &[i16], b: [i16; 3]) -> [i16; MAX_TAPS] {
    let mut out = [0i16; MAX_TAPS];
    let mut i = 0;
    while i < a.len() {
        let mut j = 0;
        while j < 3 {
            out[i + j] += a[i] * b[j];
            j += 1;
        }
        i += 1;
    }
    out
}

impl EdgeConfig {
    /// The fused taps (see [`GradientTaps`]). A `frac_bits` above twice the
    /// smoothing shift is clamped here and rejected by
    /// [`EdgeConfig::check`].
    ///
    /// ```
    /// assert_eq!(fixsight::pipeline::DEMO.gradient_taps().deriv().len(), 9);
    /// ```
    pub const fn gradient_taps(&self) -> GradientTaps {
        let (s, shift) = self.smoothing.taps();
        let total = 2 * shift;
        let frac = if (self.frac_bits as u32) < total {
            self.frac_bits as u32
        } else {
            total
        };
        let total = total - frac;
        GradientTaps {
            deriv: conv3(s, [-1, 0, 1]),
            cross: conv3(s, self.operator.cross()),
            len: s.len() + 2,
            h_shift: total.div_ceil(2),
            v_shift: total / 2,
        }
    }

    /// Largest `|gx|` or `|gy|` over all 8-bit inputs:
    /// `round_shift(255 * P * V, h_shift + v_shift)` with `P` the sum of
    /// the positive derivative taps and `V` the sum of the cross taps.
    ///
    /// ```
    /// assert_eq!(fixsight::pipeline::DEMO.max_gradient(), 2614);
    /// ```
    pub const fn max_gradient(&self) -> u32 {
        let t = self.gradient_taps();
        let (mut p, mut v, mut i) = (0i64, 0i64, 0);
        while i < t.len {
            if t.deriv[i] > 0 {
                p += t.deriv[i] as i64;
            }
            v += t.cross[i] as i64;
            i += 1;
        }
        let s = t.h_shift + t.v_shift;
        let acc = 255 * p * v;
        let half = if s == 0 { 0 } else { 1i64 << (s - 1) };
        ((acc + half) >> s) as u32
    }

    /// Largest magnitude the configuration can produce
    /// ([`Magnitude::max_for`] of [`EdgeConfig::max_gradient`]).
    ///
    /// ```
    /// assert_eq!(fixsight::pipeline::DEMO.max_magnitude(), 3697);
    /// ```
    pub const fn max_magnitude(&self) -> u32 {
        let g = self.max_gradient();
        let g = if g > 32767 { 32767 } else { g };
        self.magnitude.max_for(g)
    }

    /// Histogram bins the automatic rule needs: `(max_magnitude >> shift)
    /// + 1`; 0 for fixed thresholds.
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeConfig, ThresholdRule, DEMO};
    /// assert_eq!(DEMO.bins_needed(), 3697 / 4 + 1);
    /// let fixed = EdgeConfig { thresholds: ThresholdRule::Fixed { low: 9, high: 20 }, ..DEMO };
    /// assert_eq!(fixed.bins_needed(), 0);
    /// ```
    pub const fn bins_needed(&self) -> usize {
        match self.thresholds {
            ThresholdRule::Fixed { .. } => 0,
            ThresholdRule::Auto { shift, .. } => {
                let s = if shift > 15 { 15 } else { shift };
                (self.max_magnitude() >> s) as usize + 1
            }
        }
    }

    /// Checks every setting.
    ///
    /// Errors: `frac_bits` above twice the smoothing shift, a gradient that
    /// could exceed `i16`, bad thresholds or rule parameters, a thinning cap
    /// of 0 -> [`Error::BadParameter`] / [`Error::ThresholdOrder`].
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeConfig, Thinning, DEMO};
    /// assert!(DEMO.check().is_ok());
    /// assert!(EdgeConfig { frac_bits: 17, ..DEMO }.check().is_err());
    /// assert!(EdgeConfig { thinning: Thinning::AtMost(0), ..DEMO }.check().is_err());
    /// ```
    pub fn check(&self) -> Result<()> {
        let (_, shift) = self.smoothing.taps();
        if self.frac_bits as u32 > 2 * shift {
            return Err(Error::BadParameter {
                name: "frac_bits",
                expected: "at most twice the smoothing shift",
                got: self.frac_bits as i64,
            });
        }
        if self.max_gradient() > i16::MAX as u32 {
            return Err(Error::BadParameter {
                name: "frac_bits",
                expected: "small enough that gx, gy fit i16",
                got: self.frac_bits as i64,
            });
        }
        self.gradient_filters()?;
        match self.thresholds {
            ThresholdRule::Fixed { low, high } => {
                Thresholds::new(low, high)?;
            }
            ThresholdRule::Auto {
                shift,
                high_permille,
                low_ratio_u0f16,
                first_low,
                first_high,
            } => {
                check_rule(
                    1,
                    shift as u32,
                    high_permille,
                    U0F16::from_bits(low_ratio_u0f16),
                )?;
                Thresholds::new(first_low, first_high)?;
            }
        }
        if self.thinning == Thinning::AtMost(0) {
            return Err(Error::BadParameter {
                name: "thinning iteration cap",
                expected: "1..=65535",
                got: 0,
            });
        }
        Ok(())
    }

    /// The two whole-frame filters the stage equals: `(gx filter, gy
    /// filter)`, clamped border ([`Border::Clamp`]).
    ///
    /// ```
    /// let (fx, fy) = fixsight::pipeline::DEMO.gradient_filters()?;
    /// assert_eq!(fx.horizontal().coefficients(), fy.vertical().coefficients());
    /// assert_eq!(fx.shift(), 14);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn gradient_filters(&self) -> Result<(SeparableFilter, SeparableFilter)> {
        let t = self.gradient_taps();
        let d = |s| Taps::new(t.deriv(), s);
        let c = |s| Taps::new(t.cross(), s);
        let fx = filter::separable(d(t.h_shift)?, c(t.v_shift)?, Border::Clamp)?;
        let fy = filter::separable(c(t.h_shift)?, d(t.v_shift)?, Border::Clamp)?;
        Ok((fx, fy))
    }

    /// [`DEMO`] with another smoothing, operator and magnitude, the other
    /// settings adjusted so that the variant has the demo's gradient scale
    /// and fits the demo job types ([`DemoPointJobQvga`]); the
    /// configurations of the accuracy/cost map (`fixsight-verify
    /// frontier`). The rules, in this order:
    ///
    /// 1. `op = 0` for Sobel (cross taps sum 4), `2` for Scharr (sum 16);
    ///    `frac_bits = min(2 - op, 2 * smoothing shift)`, so the gradients
    ///    are the operator times `2^(frac_bits + op)`, at most 16 times
    ///    the smoothed image's central difference like [`DEMO`]'s
    ///    (`frac_bits 2`, Sobel);
    /// 2. `d = 2 - frac_bits - op` (0 or 2): the first frame's thresholds
    ///    are [`DEMO`]'s shifted right by `d` (at least `(1, 2)`): the same
    ///    edges on a scale `2^d` times smaller;
    /// 3. the histogram's bin-width shift is the smallest `s >= 2` (the
    ///    demo's) with `bins_needed() <= DEMO.bins_needed()` (925), so a
    ///    magnitude range wider than the demo's (L1 reaches `2 g`, L2
    ///    `sqrt 2 g`) takes wider bins, never a capped rule;
    /// 4. share, ratio and thinning are [`DEMO`]'s.
    ///
    /// [`DEMO`] itself comes back unchanged:
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeConfig, Magnitude, Operator, Smoothing, ThresholdRule, DEMO};
    /// assert_eq!(EdgeConfig::demo_with(Smoothing::Gauss7, Operator::Sobel, Magnitude::L2Round), DEMO);
    /// let c = EdgeConfig::demo_with(Smoothing::None, Operator::Sobel, Magnitude::L1);
    /// assert_eq!(c.frac_bits, 0);
    /// assert!(c.bins_needed() <= DEMO.bins_needed() && c.check().is_ok());
    /// assert!(matches!(c.thresholds, ThresholdRule::Auto { first_low: 15, first_high: 31, .. }));
    /// ```
    pub const fn demo_with(
        smoothing: Smoothing,
        operator: Operator,
        magnitude: Magnitude,
    ) -> EdgeConfig {
        let op: u32 = match operator {
            Operator::Sobel => 0,
            Operator::Scharr => 2,
        };
        let (_, sh) = smoothing.taps();
        let frac = if 2 - op < 2 * sh { 2 - op } else { 2 * sh };
        let d = 2 - frac - op;
        let mut cfg = EdgeConfig {
            smoothing,
            operator,
            frac_bits: frac as u8,
            magnitude,
            ..DEMO
        };
        if let ThresholdRule::Auto {
            shift,
            high_permille,
            low_ratio_u0f16,
            first_low,
            first_high,
        } = DEMO.thresholds
        {
            let lo = first_low >> d;
            let hi = first_high >> d;
            let mut s = shift;
            let room = DEMO.bins_needed();
            loop {
                cfg.thresholds = ThresholdRule::Auto {
                    shift: s,
                    high_permille,
                    low_ratio_u0f16,
                    first_low: if lo < 1 { 1 } else { lo },
                    first_high: if hi < 2 { 2 } else { hi },
                };
                if cfg.bins_needed() <= room || s >= 15 {
                    break;
                }
                s += 1;
            }
        }
        cfg
    }

    /// The thresholds of the first frame.
    fn first_thresholds(&self) -> Result<Thresholds> {
        match self.thresholds {
            ThresholdRule::Fixed { low, high } => Thresholds::new(low, high),
            ThresholdRule::Auto {
                first_low,
                first_high,
                ..
            } => Thresholds::new(first_low, first_high),
        }
    }
}

/// `u32` words of a class map for a `width x height` frame: rows padded to
/// 16 pixels (2 bits each).
///
/// ```
/// assert_eq!(fixsight::pipeline::map_words(320, 240), 4800); // 19 200 bytes
/// assert_eq!(fixsight::pipeline::map_words(17, 2), 4);
/// ```
pub const fn map_words(width: usize, height: usize) -> usize {
    width.div_ceil(16) * height
}

/// The [`DEMO`] stage for 320 x 240 frames with `CAP` point gradients.
///
/// ```
/// use fixsight::pipeline::DemoQvga;
/// // 29 224 bytes without point gradients, 4 more per stored candidate.
/// assert_eq!(DemoQvga::<0>::ram_bytes(), 29_224);
/// assert_eq!(DemoQvga::<888>::ram_bytes(), 29_224 + 4 * 888);
/// ```
pub type DemoQvga<const CAP: usize> =
    EdgeStream<320, { map_words(320, 240) }, { DEMO.bins_needed() }, CAP>;

/// The [`DEMO`] stage for 640 x 480 frames with `CAP` point gradients.
///
/// ```
/// assert_eq!(fixsight::pipeline::DemoVga::<0>::ram_bytes(), 92_904);
/// ```
pub type DemoVga<const CAP: usize> =
    EdgeStream<640, { map_words(640, 480) }, { DEMO.bins_needed() }, CAP>;

/// A row step of [`EdgeStream`], as seen by a hook of the crate (the
/// point-mode job keeps the gradient of each candidate this way).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Stepped {
    /// Gradient row `y` was formed (it is in the gradient row now) and,
    /// when `y >= 1`, row `y - 1` was suppressed and classified.
    Formed(usize),
    /// The last row `y` was suppressed and classified.
    LastClassified(usize),
}

/// A hook called after each row step.
pub(crate) type StepHook<'h, S> = dyn FnMut(&S, Stepped) + 'h;

/// Rows of the camera ring (the longest fused tap set).
pub const RING_ROWS: usize = MAX_TAPS;

/// Final map state of a pixel that became an edge.
const EDGE2: u8 = 3;
/// Final map state of an edge removed by thinning.
const THINNED: u8 = 2;

/// One edge point: position and, when it was stored, the gradient.
///
/// ```
/// let p = fixsight::pipeline::EdgePoint { x: 3, y: 4, gradient: Some((10, -2)) };
/// assert_eq!(p.gradient.map(|g| g.0), Some(10));
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct EdgePoint {
    /// Column.
    pub x: u16,
    /// Row.
    pub y: u16,
    /// `(gx, gy)` of the gradient at the point (x to the right, y down the
    /// rows, scaled by `2^frac_bits`); `None` when the frame had more
    /// candidates than the stream stores (see the module docs).
    pub gradient: Option<(i16, i16)>,
}

/// What a finished frame gave.
///
/// ```
/// let r = fixsight::pipeline::FrameReport::default();
/// assert_eq!(r.edge_points, 0);
/// ```
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FrameReport {
    /// Frame width.
    pub width: u16,
    /// Rows in the frame (less than declared for a short frame).
    pub height: u16,
    /// Thresholds used for this frame `(low, high)`.
    pub thresholds: (u16, u16),
    /// Thresholds carried to the next frame (the same pair for fixed
    /// thresholds).
    pub next_thresholds: (u16, u16),
    /// `true` when the automatic rule hit a limit: no nonzero suppressed
    /// magnitude in the frame (then `low = high = 65535`), or `high`
    /// clipped to 65535.
    pub threshold_at_limit: bool,
    /// Candidates (suppressed magnitudes at or above `low`).
    pub candidates: u32,
    /// Edge points after hysteresis and thinning.
    pub edge_points: u32,
    /// Candidates whose gradient was not stored (more than `CAP`).
    pub gradients_dropped: u32,
    /// Hysteresis statistics.
    pub hysteresis: HysteresisStats,
    /// Thinning statistics (all zero when thinning is off).
    pub thinning: ThinStats,
}

/// The configuration slot of an unconfigured stage: each field its type's
/// first variant or zero, so that [`EdgeStream::new`] (and the jobs that
/// hold one) is all zero bytes and a `static` of it goes to `.bss`, with no
/// initial image in flash to store and copy at reset
/// (`fixsight-verify flash` checks the linked firmware). Never run: a
/// stage works only after `configure` has replaced it.
const UNSET: EdgeConfig = EdgeConfig {
    smoothing: Smoothing::None,
    operator: Operator::Sobel,
    frac_bits: 0,
    magnitude: Magnitude::L1,
    thresholds: ThresholdRule::Fixed { low: 0, high: 0 },
    thinning: Thinning::Off,
    suppression: Suppression::Sectors,
};

/// The report of no frame: every count zero (a stream's report before
/// its first frame).
const NO_FRAME: FrameReport = FrameReport {
    width: 0,
    height: 0,
    thresholds: (0, 0),
    next_thresholds: (0, 0),
    threshold_at_limit: false,
    candidates: 0,
    edge_points: 0,
    gradients_dropped: 0,
    hysteresis: HysteresisStats {
        edges: 0,
        passes: 0,
        deferred: 0,
        peak_stack: 0,
    },
    thinning: ThinStats {
        iterations: 0,
        deleted: 0,
        capped: false,
    },
};

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Phase {
    /// No configuration yet.
    Unconfigured,
    /// Rows may come.
    Streaming,
    /// The frame is finished; its points can be read.
    Done,
}

/// The packed class map of a frame (2 bits per pixel, rows of `stride`
/// words, pixel `x` at bits `2 (x mod 16)` of word `x / 16`).
struct Packed<'a> {
    words: &'a mut [u32],
    width: usize,
    height: usize,
    stride: usize,
}

impl Packed<'_> {
    #[inline(always)]
    fn get(&self, x: usize, y: usize) -> u8 {
        ((self.words[y * self.stride + x / 16] >> (2 * (x % 16))) & 3) as u8
    }
    #[inline(always)]
    fn set(&mut self, x: usize, y: usize, v: u8) {
        let w = &mut self.words[y * self.stride + x / 16];
        let sh = 2 * (x % 16);
        *w = (*w & !(3 << sh)) | ((v as u32) << sh);
    }
}

impl CodeMap for Packed<'_> {
    const EDGE: u8 = EDGE2;
    #[inline(always)]
    fn dims(&self) -> (usize, usize) {
        (self.width, self.height)
    }
    #[inline(always)]
    fn code(&self, x: usize, y: usize) -> u8 {
        self.get(x, y)
    }
    #[inline(always)]
    fn set_code(&mut self, x: usize, y: usize, v: u8) {
        self.set(x, y, v)
    }
    /// From the weak (`01`) pairs of the three rows' words: the columns
    /// `x - 1 ..= x + 1` of a row as bits 0..=2 (0 outside the map; the
    /// padding pairs past `width` are always `00`).
    #[inline(always)]
    fn weak_neighbours(&self, x: usize, y: usize) -> u8 {
        let weak = |v: u32| v & !(v >> 1) & 0x5555_5555;
        let (i, b) = (x / 16, x % 16);
        let row3 = |yy: usize| -> u32 {
            let Some(row) = self.words.get(yy * self.stride..(yy + 1) * self.stride) else {
                return 0;
            };
            let mid = weak(row.get(i).copied().unwrap_or(0));
            let at = (mid >> (2 * b)) & 1;
            let left = match b {
                0 => i
                    .checked_sub(1)
                    .and_then(|j| row.get(j))
                    .map_or(0, |&v| weak(v) >> 30),
                _ => mid >> (2 * b - 2),
            } & 1;
            let right = match b {
                15 => row.get(i + 1).map_or(0, |&v| weak(v)),
                _ => mid >> (2 * b + 2),
            } & 1;
            left | at << 1 | right << 2
        };
        let up = match y {
            0 => 0,
            _ => row3(y - 1),
        };
        let (cur, dn) = (row3(y), row3(y + 1));
        // NEIGHBOURS order: N, NE, E, SE, S, SW, W, NW.
        ((up >> 1 & 1)
            | (up >> 2 & 1) << 1
            | (cur >> 2 & 1) << 2
            | (dn >> 2 & 1) << 3
            | (dn >> 1 & 1) << 4
            | (dn & 1) << 5
            | (cur & 1) << 6
            | (up & 1) << 7) as u8
    }
    /// Skips the words of row `y` that hold no STRONG (`10`) pair.
    #[inline(always)]
    fn next_strong(&self, x: usize, y: usize) -> usize {
        let row = &self.words[y * self.stride..(y + 1) * self.stride];
        let mut wi = x / 16;
        // Pixels before `x` masked off.
        let mut v = row.get(wi).copied().unwrap_or(0) & (u32::MAX << (2 * (x % 16)));
        loop {
            let strong = (v >> 1) & !v & 0x5555_5555;
            if strong != 0 {
                return (wi * 16 + strong.trailing_zeros() as usize / 2).min(self.width);
            }
            wi += 1;
            match row.get(wi) {
                Some(&n) => v = n,
                None => return self.width,
            }
        }
    }
}

impl ThinMap for Packed<'_> {
    #[inline(always)]
    fn dims(&self) -> (usize, usize) {
        (self.width, self.height)
    }
    fn load_row(&self, y: usize, dst: &mut [u8]) -> bool {
        let row = &self.words[y * self.stride..(y + 1) * self.stride];
        let mut any = 0u32;
        // One bit per pixel: both bits of its pair set (`11`, an edge).
        let edge = |v: u32| v & (v >> 1) & 0x5555_5555;
        let unpack = |e: u32, chunk: &mut [u8]| {
            for (i, d) in chunk.iter_mut().enumerate() {
                *d = ((e >> (2 * i)) & 1) as u8;
            }
        };
        let dst = &mut dst[..self.width];
        let mut whole = dst.chunks_exact_mut(16);
        for (chunk, &v) in (&mut whole).zip(row) {
            let e = edge(v);
            any |= e;
            match <&mut [u8; 16]>::try_from(chunk) {
                // 16 background pixels: four word stores.
                Ok(c) if e == 0 => *c = [0; 16],
                Ok(c) => unpack(e, c),
                Err(_) => {}
            }
        }
        let rest = whole.into_remainder();
        if let Some(&v) = row.get(self.width / 16) {
            let e = edge(v);
            any |= e;
            unpack(e, rest);
        }
        any != 0
    }
    #[inline(always)]
    fn delete(&mut self, x: usize, y: usize) {
        self.set(x, y, THINNED);
    }
}

/// The streamed edge stage over buffers it owns (see the module docs).
///
/// * `W`: largest frame width;
/// * `MAP_WORDS`: class-map words, at least [`map_words`]`(width, height)`;
/// * `BINS`: histogram bins, at least [`EdgeConfig::bins_needed`];
/// * `CAP`: candidates whose gradient is stored.
///
/// [`EdgeStream::new`] is `const`, so the stream can sit in a `static`
/// (for example inside a `critical_section::Mutex<RefCell<_>>`) and be
/// driven from a DMA-complete interrupt with no `unsafe` in user code.
///
/// ```
/// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
/// type Qvga = EdgeStream<320, { map_words(320, 240) }, 925, 0>;
/// // Every byte the caller provides, counted from the type.
/// assert_eq!(Qvga::ram_bytes(), core::mem::size_of::<Qvga>());
/// assert!(Qvga::ram_bytes() < 32 * 1024);
/// ```
#[derive(Debug, Clone)]
pub struct EdgeStream<const W: usize, const MAP_WORDS: usize, const BINS: usize, const CAP: usize> {
    cfg: EdgeConfig,
    deriv: [i32; MAX_TAPS],
    cross: [i32; MAX_TAPS],
    radius: usize,
    shift: u32,
    bins: usize,
    width: usize,
    height: usize,
    phase: Phase,
    /// Rows committed in this frame.
    pushed: usize,
    /// Gradient rows formed.
    formed: usize,
    /// Rows suppressed and classified.
    classified: usize,
    thresholds: Thresholds,
    carried: Thresholds,
    candidates: u32,
    stored: usize,
    /// Candidate budget of the automatic rule (`None`: no step 5).
    budget: Option<NonZeroU32>,
    /// Rows of the finished frame.
    done_height: usize,
    report: FrameReport,
    rows: [[u8; W]; RING_ROWS],
    mag: [[u16; W]; 3],
    grad: [[i16; 2]; W],
    map: [u32; MAP_WORDS],
    hist: [u32; BINS],
    grads: [[i16; 2]; CAP],
}

impl<const W: usize, const MAP_WORDS: usize, const BINS: usize, const CAP: usize> Default
    for EdgeStream<W, MAP_WORDS, BINS, CAP>
{
    fn default() -> Self {
        Self::new()
    }
}

impl<const W: usize, const MAP_WORDS: usize, const BINS: usize, const CAP: usize>
    EdgeStream<W, MAP_WORDS, BINS, CAP>
{
    /// An unconfigured stream with zeroed buffers (`const`, for statics).
    ///
    /// ```
    /// use fixsight::pipeline::EdgeStream;
    /// static _S: EdgeStream<64, 256, 64, 16> = EdgeStream::new();
    /// ```
    pub const fn new() -> Self {
        Self {
            cfg: UNSET,
            deriv: [0; MAX_TAPS],
            cross: [0; MAX_TAPS],
            radius: 0,
            shift: 0,
            bins: 0,
            width: 0,
            height: 0,
            phase: Phase::Unconfigured,
            pushed: 0,
            formed: 0,
            classified: 0,
            thresholds: Thresholds::UNSET,
            carried: Thresholds::UNSET,
            candidates: 0,
            stored: 0,
            budget: None,
            done_height: 0,
            report: NO_FRAME,
            rows: [[0; W]; RING_ROWS],
            mag: [[0; W]; 3],
            grad: [[0; 2]; W],
            map: [0; MAP_WORDS],
            hist: [0; BINS],
            grads: [[0; 2]; CAP],
        }
    }

    /// Back to the state [`EdgeStream::new`] gives (unconfigured, every
    /// buffer zeroed), written field by field in place. `*s =
    /// EdgeStream::new()` may build the whole new stream on the stack
    /// first and copy it; this never holds more than one field's worth of
    /// temporary. For a stream that lives in a `static` or in memory a C
    /// caller owns.
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<8, { map_words(8, 8) }, 925, 0>::new();
    /// s.configure(&DEMO, 8, 8)?;
    /// s.push_row(&[9; 8])?;
    /// s.clear();
    /// assert_eq!(s.rows_pushed(), 0);
    /// assert!(s.push_row(&[9; 8]).is_err()); // not configured any more
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn clear(&mut self) {
        // Every field by name (no `..`): a new field must be cleared here.
        let Self {
            cfg,
            deriv,
            cross,
            radius,
            shift,
            bins,
            width,
            height,
            phase,
            pushed,
            formed,
            classified,
            thresholds,
            carried,
            candidates,
            stored,
            budget,
            done_height,
            report,
            rows,
            mag,
            grad,
            map,
            hist,
            grads,
        } = self;
        *cfg = UNSET;
        *phase = Phase::Unconfigured;
        (*thresholds, *carried) = (Thresholds::UNSET, Thresholds::UNSET);
        *report = NO_FRAME;
        for n in [
            radius,
            bins,
            width,
            height,
            pushed,
            formed,
            classified,
            stored,
            done_height,
        ] {
            *n = 0;
        }
        (*shift, *candidates) = (0, 0);
        *budget = None;
        deriv.fill(0);
        cross.fill(0);
        rows.as_flattened_mut().fill(0);
        mag.as_flattened_mut().fill(0);
        grad.as_flattened_mut().fill(0);
        map.fill(0);
        hist.fill(0);
        grads.as_flattened_mut().fill(0);
    }

    /// Bytes of this type: all the memory the stage needs.
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, map_words};
    /// assert!(EdgeStream::<640, { map_words(640, 480) }, 925, 0>::ram_bytes() > 76_800);
    /// ```
    pub const fn ram_bytes() -> usize {
        core::mem::size_of::<Self>()
    }

    /// Sets the configuration and frame size, checking that the buffers
    /// fit, and starts a fresh stream (thresholds back to the rule's first
    /// pair). Nothing changes when it fails.
    ///
    /// Errors: a bad configuration ([`EdgeConfig::check`]); zero or too
    /// large size; `width > W`, `MAP_WORDS < map_words(width, height)`,
    /// `BINS < bins_needed()` or `W < 4` (the hysteresis stack borrows the
    /// two column-sum rows and needs 8 entries) -> [`Error::BufferTooShort`].
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<32, { map_words(32, 8) }, 925, 0>::new();
    /// assert!(s.configure(&DEMO, 32, 8).is_ok());
    /// assert!(s.configure(&DEMO, 33, 8).is_err());  // wider than W
    /// assert!(s.configure(&DEMO, 32, 9).is_err());  // map too small
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn configure(&mut self, cfg: &EdgeConfig, width: usize, height: usize) -> Result<()> {
        cfg.check()?;
        check_dims(width, height)?;
        if height > MAX_DIM {
            return Err(Error::TooLarge {
                width,
                height,
                limit: MAX_DIM,
            });
        }
        for (what, needed, got) in [
            ("edge stream row (W)", width, W),
            (
                "edge stream class map words",
                map_words(width, height),
                MAP_WORDS,
            ),
            (
                "edge stream threshold histogram bins",
                cfg.bins_needed(),
                BINS,
            ),
            (
                "edge stream hysteresis stack (2 W)",
                hysteresis::MIN_STACK,
                2 * W,
            ),
        ] {
            if got < needed {
                return Err(Error::BufferTooShort { what, needed, got });
            }
        }
        let first = cfg.first_thresholds()?;
        let t = cfg.gradient_taps();
        self.cfg = *cfg;
        for i in 0..MAX_TAPS {
            self.deriv[i] = t.deriv[i] as i32;
            self.cross[i] = t.cross[i] as i32;
        }
        self.radius = t.radius();
        self.shift = t.h_shift + t.v_shift;
        self.bins = cfg.bins_needed();
        self.width = width;
        self.height = height;
        self.carried = first;
        self.thresholds = first;
        self.report = FrameReport::default();
        self.phase = Phase::Streaming;
        self.clear_frame();
        Ok(())
    }

    /// Drops the frame in progress (or the finished frame's points): the
    /// next row is row 0 of a new frame. Configuration and the thresholds
    /// carried for the next frame stay. Use it for a dropped frame whose
    /// rows should not count; to keep the rows of a frame that ended early,
    /// use [`EdgeStream::finish_short`].
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<8, { map_words(8, 8) }, 925, 0>::new();
    /// s.configure(&DEMO, 8, 8)?;
    /// s.push_row(&[0; 8])?;
    /// s.reset();
    /// assert_eq!(s.rows_pushed(), 0);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn reset(&mut self) {
        if self.phase != Phase::Unconfigured {
            self.phase = Phase::Streaming;
            self.clear_frame();
        }
    }

    fn clear_frame(&mut self) {
        self.pushed = 0;
        self.formed = 0;
        self.classified = 0;
        self.candidates = 0;
        self.stored = 0;
        self.thresholds = self.carried;
    }

    /// Rows committed to the frame in progress.
    ///
    /// ```
    /// let s = fixsight::pipeline::EdgeStream::<8, 8, 1, 0>::new();
    /// assert_eq!(s.rows_pushed(), 0);
    /// ```
    pub fn rows_pushed(&self) -> usize {
        if self.phase == Phase::Streaming {
            self.pushed
        } else {
            0
        }
    }

    /// Thresholds the next (or current) frame uses; before `configure`,
    /// `low = high = 65535` (no magnitude would be a candidate).
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<8, { map_words(8, 8) }, 925, 0>::new();
    /// assert_eq!((s.thresholds().low(), s.thresholds().high()), (65535, 65535));
    /// s.configure(&DEMO, 8, 8)?;
    /// assert_eq!((s.thresholds().low(), s.thresholds().high()), (60, 125));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn thresholds(&self) -> Thresholds {
        match self.phase {
            // Nothing configured: no magnitude is a candidate.
            Phase::Unconfigured => Thresholds::MAX,
            Phase::Streaming if self.pushed > 0 => self.thresholds,
            _ => self.carried,
        }
    }

    /// Sets the candidate budget of the automatic thresholds (step 5 of
    /// the rule in [`crate::hysteresis`], [`Thresholds::within_budget`]):
    /// from the end of the frame in progress on, the pair carried to the
    /// next frame is raised when needed so that the finished frame would
    /// have had at most `budget` candidates. `None` (the state after
    /// [`EdgeStream::new`] and [`EdgeStream::clear`]) leaves the rule's
    /// pair as it is. [`EdgeStream::configure`] and
    /// [`EdgeStream::reset`] keep the budget; fixed thresholds ignore it.
    ///
    /// For a caller that keeps something per candidate in a store of a
    /// fixed size: [`PointJob`] sets its gate-byte count `CAP` here. The
    /// budget binds on the **next** frame, so a frame with more
    /// candidates than the one before can still overflow.
    ///
    /// ```
    /// use core::num::NonZeroU32;
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// // A 32 x 32 checkerboard of 4-pixel squares: many candidates.
    /// let img: [u8; 1024] = core::array::from_fn(|i| if (i % 32 / 4 + i / 128) % 2 == 0 { 40 } else { 200 });
    /// let mut s = EdgeStream::<32, { map_words(32, 32) }, 925, 0>::new();
    /// s.configure(&DEMO, 32, 32)?;
    /// s.set_candidate_budget(NonZeroU32::new(40));
    /// let mut counts = [0; 2];
    /// for n in &mut counts {
    ///     for r in img.chunks_exact(32) { s.push_row(r)?; }
    ///     *n = s.finish()?.candidates;
    /// }
    /// // The second frame ran on the pair the first raised.
    /// assert!(counts[0] > 40 && counts[1] <= 40);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn set_candidate_budget(&mut self, budget: Option<NonZeroU32>) {
        self.budget = budget;
    }

    /// Checks that one more row may come.
    fn check_room(&self) -> Result<()> {
        match self.phase {
            Phase::Unconfigured => Err(Error::StreamOrder {
                reason: "edge stream used before configure",
            }),
            Phase::Streaming if self.pushed >= self.height => Err(Error::StreamOrder {
                reason: "more rows pushed than the height declared at configure",
            }),
            _ => Ok(()),
        }
    }

    /// Ring slot of the next row.
    fn slot_index(&self) -> usize {
        let next = if self.phase == Phase::Streaming {
            self.pushed
        } else {
            0
        };
        next % RING_ROWS
    }

    /// The ring slot the next row goes to (`width` bytes): let the camera
    /// DMA write the row there, then call [`EdgeStream::commit_row`].
    /// Nothing changes until the commit (writing the slot is not a change
    /// of the stream's state: it is the next row's storage).
    ///
    /// Errors: not configured, or every declared row already came ->
    /// [`Error::StreamOrder`].
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<8, { map_words(8, 8) }, 925, 0>::new();
    /// s.configure(&DEMO, 8, 8)?;
    /// s.next_row_slot()?.copy_from_slice(&[9; 8]); // as a DMA would
    /// s.commit_row()?;
    /// assert_eq!(s.rows_pushed(), 1);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn next_row_slot(&mut self) -> Result<&mut [u8]> {
        self.check_room()?;
        let (i, w) = (self.slot_index(), self.width);
        Ok(&mut self.rows[i][..w])
    }

    /// Takes the row in the slot of [`EdgeStream::next_row_slot`] as the
    /// next camera row. Returns the number of rows committed so far.
    ///
    /// Errors: as [`EdgeStream::next_row_slot`].
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<8, { map_words(4, 1) }, 925, 0>::new();
    /// s.configure(&DEMO, 4, 1)?;
    /// assert_eq!(s.commit_row()?, 1);
    /// assert!(s.commit_row().is_err()); // only one row declared
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn commit_row(&mut self) -> Result<usize> {
        self.commit_row_then(&mut |_, _| {})
    }

    /// [`EdgeStream::commit_row`], calling `after` once per row step
    /// ([`Stepped`]) as it happens.
    pub(crate) fn commit_row_then(&mut self, after: &mut StepHook<'_, Self>) -> Result<usize> {
        self.check_room()?;
        if self.phase == Phase::Done {
            self.phase = Phase::Streaming;
            self.clear_frame();
        }
        if self.pushed == 0 && self.bins > 0 {
            self.hist[..self.bins].fill(0);
        }
        self.pushed += 1;
        self.advance(self.height, after);
        Ok(self.pushed)
    }

    /// Pushes one row of 8-bit luma (`width` bytes exactly).
    ///
    /// Errors: another length -> [`Error::RowLength`]; as
    /// [`EdgeStream::next_row_slot`].
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<8, { map_words(4, 2) }, 925, 0>::new();
    /// s.configure(&DEMO, 4, 2)?;
    /// assert!(s.push_row(&[1, 2, 3]).is_err());
    /// assert_eq!(s.push_row(&[1, 2, 3, 4])?, 1);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn push_row(&mut self, row: &[u8]) -> Result<usize> {
        self.check_len("luma", row.len(), 1)?;
        self.next_row_slot()?.copy_from_slice(row);
        tally(Op::Load, row.len() as u32);
        tally(Op::Store, row.len() as u32);
        self.commit_row()
    }

    fn check_len(&self, what: &'static str, got: usize, per_px: usize) -> Result<()> {
        self.check_room()?;
        let expected = self.width * per_px;
        if got != expected {
            return Err(Error::RowLength {
                what,
                expected,
                got,
            });
        }
        Ok(())
    }

    /// Pushes one row of packed YUYV (`Y0 U Y1 V ...`, `2 * width` bytes):
    /// the luma is every even byte, taken as it is.
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<8, { map_words(2, 1) }, 925, 0>::new();
    /// s.configure(&DEMO, 2, 1)?;
    /// assert!(s.push_yuyv(&[10, 128, 20]).is_err());
    /// s.push_yuyv(&[10, 128, 20, 128])?;
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn push_yuyv(&mut self, row: &[u8]) -> Result<usize> {
        self.push_luma_of("YUYV", row, 0)
    }

    /// Pushes one row of packed UYVY (`U Y0 V Y1 ...`, `2 * width` bytes):
    /// the luma is every odd byte, taken as it is.
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<8, { map_words(2, 1) }, 925, 0>::new();
    /// s.configure(&DEMO, 2, 1)?;
    /// s.push_uyvy(&[128, 10, 128, 20])?;
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn push_uyvy(&mut self, row: &[u8]) -> Result<usize> {
        self.push_luma_of("UYVY", row, 1)
    }

    fn push_luma_of(&mut self, what: &'static str, row: &[u8], offset: usize) -> Result<usize> {
        self.check_len(what, row.len(), 2)?;
        let slot = self.next_row_slot()?;
        for (d, pair) in slot.iter_mut().zip(row.chunks_exact(2)) {
            *d = pair[offset];
        }
        tally(Op::Load, slot.len() as u32);
        tally(Op::Store, slot.len() as u32);
        self.commit_row()
    }

    /// Pushes one row of RGB565 pixels (`width` values, red in bits 15..11,
    /// green in 10..5, blue in 4..0) as luma by [`rgb565_luma`].
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<8, { map_words(2, 1) }, 925, 0>::new();
    /// s.configure(&DEMO, 2, 1)?;
    /// s.push_rgb565(&[0xFFFF, 0x0000])?;
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn push_rgb565(&mut self, row: &[u16]) -> Result<usize> {
        self.check_len("RGB565", row.len(), 1)?;
        let slot = self.next_row_slot()?;
        for (d, &p) in slot.iter_mut().zip(row) {
            *d = rgb565_luma(p);
        }
        let n = slot.len() as u32;
        tally(Op::Load, n);
        tally(Op::Shift, 6 * n);
        tally(Op::Logic, 6 * n);
        tally(Op::Mac, 3 * n);
        tally(Op::Store, n);
        self.commit_row()
    }

    /// Pushes one row of `bits`-bit samples in `u16` (`bits` in `8..=16`,
    /// `width` values) as 8-bit luma by [`raw_to_u8`].
    ///
    /// Errors: `bits` outside `8..=16` or a sample `>= 2^bits` ->
    /// [`Error::BadParameter`], and the stream is unchanged.
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<8, { map_words(2, 2) }, 925, 0>::new();
    /// s.configure(&DEMO, 2, 2)?;
    /// assert!(s.push_raw(&[1023, 1024], 10).is_err()); // 1024 is not 10-bit
    /// assert_eq!(s.push_raw(&[1023, 0], 10)?, 1);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn push_raw(&mut self, row: &[u16], bits: u32) -> Result<usize> {
        if !(8..=16).contains(&bits) {
            return Err(Error::BadParameter {
                name: "sample bits",
                expected: "8..=16",
                got: bits as i64,
            });
        }
        self.check_len("raw sample", row.len(), 1)?;
        let slot = self.next_row_slot()?;
        let mut any = 0u32;
        for (d, &v) in slot.iter_mut().zip(row) {
            any |= v as u32;
            *d = raw_to_u8(v, bits);
        }
        if any >> bits != 0 {
            let bad = row.iter().copied().find(|&v| (v as u32) >> bits != 0);
            return Err(Error::BadParameter {
                name: "raw sample",
                expected: "below 2^bits",
                got: bad.unwrap_or(0) as i64,
            });
        }
        let n = slot.len() as u32;
        tally(Op::Load, n);
        tally(Op::AddSub, n);
        tally(Op::Shift, n);
        tally(Op::Logic, 3 * n);
        tally(Op::Store, n);
        self.commit_row()
    }

    /// Forms every gradient row and classifies every row that the first
    /// `height` rows allow (all of them when `pushed == height`).
    fn advance(&mut self, height: usize, after: &mut StepHook<'_, Self>) {
        let r = self.radius;
        while self.formed < height && self.pushed >= (self.formed + r + 1).min(height) {
            self.step(self.formed, height);
            after(self, Stepped::Formed(self.formed));
            self.formed += 1;
        }
        if self.pushed == height && self.formed == height && self.classified < height {
            self.classify_last(height);
            after(self, Stepped::LastClassified(height - 1));
        }
    }

    /// Forms gradient row `y` and, in the same loop one pixel behind,
    /// suppresses and classifies row `y - 1` (whose `gx, gy` the loop
    /// replaces in the one gradient row as it goes).
    fn step(&mut self, y: usize, height: usize) {
        let (w, r) = (self.width, self.radius);
        let mut idx = [0usize; RING_ROWS];
        for (j, slot) in idx.iter_mut().enumerate().take(2 * r + 1) {
            let yy = (y as isize + j as isize - r as isize).clamp(0, height as isize - 1);
            *slot = yy as usize % RING_ROWS;
        }
        let ring = &self.rows;
        let rows: [&[u8]; RING_ROWS] = core::array::from_fn(|j| &ring[idx[j]][..w]);
        // The window's rows in ring order, when none is clamped.
        let flat = (y >= r && y + r < height).then(|| Ring {
            flat: ring.as_flattened(),
            top: (y - r) % RING_ROWS,
        });
        let taps = Fused {
            c: self.cross,
            d: self.deriv,
            shift: self.shift,
            half: (1i32 << self.shift) >> 1,
            kind: self.cfg.magnitude,
        };
        if y == 1 {
            // Row 0 has no row above: its suppression reads zeros there.
            self.mag[(y + 1) % 3][..w].fill(0);
        }
        let auto = self.auto_shift();
        let (cur, prev, prev2) = three(&mut self.mag, y % 3);
        let classify = y >= 1;
        let mut cl = Classifier::<CAP>::new(
            self.thresholds,
            auto,
            self.cfg.suppression,
            &mut self.hist[..self.bins],
            &mut self.map[(y.saturating_sub(1)) * w.div_ceil(16)..][..w.div_ceil(16)],
            &mut self.grads,
            self.stored,
        );
        let rows3 = Rows3 {
            above: &prev2[..w],
            centre: &prev[..w],
        };
        let below = &mut cur[..w];
        let grad = &mut self.grad[..w];
        let job = classify.then_some((rows3, &mut cl));
        let demo = r == DemoTaps::RADIUS
            && taps.c == DemoTaps::C
            && taps.d == DemoTaps::D
            && taps.shift == DemoTaps.shift()
            && taps.kind == DemoTaps.kind();
        match r {
            _ if demo => fused_row::<{ DemoTaps::RADIUS }, W, CAP, _>(
                &rows, flat, &DemoTaps, grad, below, job,
            ),
            1 => fused_row::<1, W, CAP, _>(&rows, None, &taps, grad, below, job),
            2 => fused_row::<2, W, CAP, _>(&rows, None, &taps, grad, below, job),
            3 => fused_row::<3, W, CAP, _>(&rows, None, &taps, grad, below, job),
            _ => fused_row::<4, W, CAP, _>(&rows, None, &taps, grad, below, job),
        }
        self.stored = cl.n.stored;
        self.candidates += cl.n.candidates;
        let counted = cl.n.counted;
        if classify {
            self.classified = y;
        }
        // Per pixel, columns: 2r + 1 ring loads, r adds and r subtracts,
        // r + 1 multiplies for the cross sum and r for the derivative, 2
        // stores into the chunk buffer (the 2r columns a chunk of 64 sums
        // again are not counted); rows: 4r + 1 column-sum loads, 2r
        // subtracts and 2r adds, 2r + 1 multiplies, 2 roundings (add,
        // shift, saturate), the magnitude, the old gradient's load and the
        // magnitude and gradient stores; loop branch.
        let (n, r32) = (w as u32, r as u32);
        tally(Op::Load, n * (6 * r32 + 3));
        tally(Op::AddSub, n * (6 * r32 + 2));
        tally(Op::Mac, n * (4 * r32 + 2));
        tally(Op::Store, 4 * n);
        tally(Op::Shift, 2 * n);
        tally(Op::Logic, 2 * n);
        tally(Op::Branch, n);
        match taps.kind {
            Magnitude::L1 => tally(Op::AddSub, 3 * n),
            Magnitude::L2Approx => {
                tally(Op::Logic, 5 * n);
                tally(Op::Mac, 2 * n);
                tally(Op::Shift, n);
            }
            Magnitude::L2Round => {
                // Mul + mac for the sum of squares, a table start and two
                // Newton steps (see `gradient::magnitude_l2_round_row`).
                tally(Op::Mac, 3 * n);
                tally(Op::Mul, n);
                tally(Op::Table, n);
                tally(Op::Div, 2 * n);
                tally(Op::AddSub, 6 * n);
                tally(Op::Shift, 5 * n);
                tally(Op::Logic, 8 * n);
                tally(Op::Branch, 2 * n);
            }
        }
        if classify {
            tally_classify(n, counted, self.cfg.suppression);
        }
    }

    /// Suppresses and classifies the last row (no row below it).
    fn classify_last(&mut self, height: usize) {
        let (w, y) = (self.width, height - 1);
        let stride = w.div_ceil(16);
        let auto = self.auto_shift();
        // No row below the last one (nor above a single row): zeros.
        self.mag[(y + 1) % 3][..w].fill(0);
        if y == 0 {
            self.mag[(y + 2) % 3][..w].fill(0);
        }
        let (below, centre, above) = three(&mut self.mag, (y + 1) % 3);
        let rows3 = Rows3 {
            above: &above[..w],
            centre: &centre[..w],
        };
        let mut cl = Classifier::<CAP>::new(
            self.thresholds,
            auto,
            self.cfg.suppression,
            &mut self.hist[..self.bins],
            &mut self.map[y * stride..(y + 1) * stride],
            &mut self.grads,
            self.stored,
        );
        cl.row(&rows3, &below[..w], &self.grad[..w]);
        self.stored = cl.n.stored;
        self.candidates += cl.n.candidates;
        let counted = cl.n.counted;
        self.classified = height;
        tally_classify(w as u32, counted, self.cfg.suppression);
    }

    fn auto_shift(&self) -> Option<u32> {
        match self.cfg.thresholds {
            ThresholdRule::Auto { shift, .. } => Some(shift as u32),
            ThresholdRule::Fixed { .. } => None,
        }
    }

    /// Ends a frame of exactly the declared height: hysteresis and
    /// thinning on the class map, thresholds for the next frame. The points
    /// can then be read with [`EdgeStream::points`] until the next row is
    /// committed.
    ///
    /// Errors: fewer rows than declared -> [`Error::RowCount`] (nothing
    /// changes; push the rest, or end early with
    /// [`EdgeStream::finish_short`]); not streaming ->
    /// [`Error::StreamOrder`].
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<8, { map_words(4, 2) }, 925, 0>::new();
    /// s.configure(&DEMO, 4, 2)?;
    /// s.push_row(&[0; 4])?;
    /// assert!(s.finish().is_err());
    /// s.push_row(&[0; 4])?;
    /// assert_eq!(s.finish()?.edge_points, 0);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn finish(&mut self) -> Result<FrameReport> {
        self.finish_then(&mut |_, _| {})
    }

    /// [`EdgeStream::finish`] with a step hook (see
    /// [`EdgeStream::commit_row_then`]).
    pub(crate) fn finish_then(&mut self, after: &mut StepHook<'_, Self>) -> Result<FrameReport> {
        self.check_streaming()?;
        if self.pushed != self.height {
            return Err(Error::RowCount {
                expected: self.height,
                got: self.pushed,
            });
        }
        Ok(self.end_frame(self.height, after))
    }

    /// Ends the frame after the rows that came (at least one): the result
    /// is that of a frame of that many rows, bit for bit. The declared
    /// height stays for the next frame.
    ///
    /// Errors: no row yet, or not streaming -> [`Error::StreamOrder`].
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<8, { map_words(4, 8) }, 925, 0>::new();
    /// s.configure(&DEMO, 4, 8)?;
    /// assert!(s.finish_short().is_err());
    /// s.push_row(&[0; 4])?;
    /// assert_eq!(s.finish_short()?.height, 1);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn finish_short(&mut self) -> Result<FrameReport> {
        self.finish_short_then(&mut |_, _| {})
    }

    /// [`EdgeStream::finish_short`] with a step hook.
    pub(crate) fn finish_short_then(
        &mut self,
        after: &mut StepHook<'_, Self>,
    ) -> Result<FrameReport> {
        self.check_streaming()?;
        if self.pushed == 0 {
            return Err(Error::StreamOrder {
                reason: "a frame needs at least one row",
            });
        }
        Ok(self.end_frame(self.pushed, after))
    }

    fn check_streaming(&self) -> Result<()> {
        if self.phase != Phase::Streaming {
            return Err(Error::StreamOrder {
                reason: "no frame in progress (configure first, or the frame is already finished)",
            });
        }
        Ok(())
    }

    fn end_frame(&mut self, h: usize, after: &mut StepHook<'_, Self>) -> FrameReport {
        // Rows past the last one clamp to it: form and classify the rest.
        self.advance(h, after);
        let w = self.width;
        let (mut at_limit, mut next) = (false, self.carried);
        if let ThresholdRule::Auto {
            shift,
            high_permille,
            low_ratio_u0f16,
            ..
        } = self.cfg.thresholds
        {
            // The rule was checked at configure and the histogram has its
            // bins, so this cannot fail; keep the old pair if it did.
            if let Ok(t) = Thresholds::from_counts(
                &self.hist[..self.bins],
                shift as u32,
                high_permille,
                U0F16::from_bits(low_ratio_u0f16),
            ) {
                let t = match self.budget {
                    Some(b) => t
                        .within_budget(&self.hist[..self.bins], shift as u32, b.get())
                        .unwrap_or(t),
                    None => t,
                };
                at_limit = t.high() == u16::MAX;
                next = t;
            }
        }
        let mut packed = Packed {
            words: &mut self.map[..map_words(w, h)],
            width: w,
            height: h,
            stride: w.div_ceil(16),
        };
        let hyst = hysteresis::propagate(&mut packed, &mut self.grad[..]);
        let ring = &mut self.rows.as_flattened_mut()[..3 * w];
        let thin = match self.cfg.thinning {
            Thinning::Off => ThinStats::default(),
            Thinning::UntilStable => thinning::thin_map(&mut packed, ring, u32::MAX),
            Thinning::AtMost(n) => thinning::thin_map(&mut packed, ring, n as u32),
        };
        let used = self.thresholds;
        self.carried = next;
        self.phase = Phase::Done;
        self.done_height = h;
        self.report = FrameReport {
            width: w as u16,
            height: h as u16,
            thresholds: (used.low(), used.high()),
            next_thresholds: (next.low(), next.high()),
            threshold_at_limit: at_limit,
            candidates: self.candidates,
            edge_points: self.count_points(),
            gradients_dropped: self.candidates - self.stored as u32,
            hysteresis: hyst,
            thinning: thin,
        };
        self.report
    }
}

impl<const W: usize, const MAP_WORDS: usize, const BINS: usize, const CAP: usize>
    EdgeStream<W, MAP_WORDS, BINS, CAP>
{
    /// Class-map rows of the finished frame.
    fn done_map(&self) -> (&[u32], usize) {
        let stride = self.width.div_ceil(16);
        (&self.map[..stride * self.done_height], stride)
    }

    fn count_points(&self) -> u32 {
        let (words, _) = self.done_map();
        words
            .iter()
            .map(|&v| {
                // A pair `11` marks an edge: both bits of the pair set.
                (v & (v >> 1) & 0x5555_5555).count_ones()
            })
            .sum()
    }

    /// The report of the last finished frame.
    ///
    /// ```
    /// let s = fixsight::pipeline::EdgeStream::<8, 8, 1, 0>::new();
    /// assert!(s.report().is_none());
    /// ```
    pub fn report(&self) -> Option<FrameReport> {
        (self.phase == Phase::Done).then_some(self.report)
    }

    /// The edge points of the finished frame in raster order.
    ///
    /// Errors: no finished frame -> [`Error::StreamOrder`].
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<8, { map_words(4, 1) }, 925, 0>::new();
    /// s.configure(&DEMO, 4, 1)?;
    /// assert!(s.points().is_err());
    /// s.push_row(&[0; 4])?;
    /// s.finish()?;
    /// assert_eq!(s.points()?.count(), 0);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn points(&self) -> Result<EdgePoints<'_>> {
        if self.phase != Phase::Done {
            return Err(Error::StreamOrder {
                reason: "points read before the frame was finished",
            });
        }
        let (words, stride) = self.done_map();
        Ok(EdgePoints {
            words,
            grads: &self.grads[..self.stored],
            width: self.width,
            stride,
            pos: 0,
            end: stride * 16 * self.done_height,
            candidate: 0,
        })
    }

    /// Row `y` of the finished frame's edge map as bytes: 255 at an edge
    /// point, 0 elsewhere (`width` bytes are written).
    ///
    /// Errors: no finished frame -> [`Error::StreamOrder`]; `y` past the
    /// frame -> [`Error::RowRange`]; short `out` -> [`Error::BufferTooShort`].
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
    /// let mut s = EdgeStream::<8, { map_words(4, 1) }, 925, 0>::new();
    /// s.configure(&DEMO, 4, 1)?;
    /// s.push_row(&[0; 4])?;
    /// s.finish()?;
    /// let mut row = [7u8; 4];
    /// s.edge_row(0, &mut row)?;
    /// assert_eq!(row, [0; 4]);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn edge_row(&self, y: usize, out: &mut [u8]) -> Result<()> {
        if self.phase != Phase::Done {
            return Err(Error::StreamOrder {
                reason: "edge row read before the frame was finished",
            });
        }
        if y >= self.done_height {
            return Err(Error::RowRange {
                first_row: y,
                rows: 1,
                height: self.done_height,
            });
        }
        let w = self.width;
        if out.len() < w {
            return Err(Error::BufferTooShort {
                what: "edge row output",
                needed: w,
                got: out.len(),
            });
        }
        let (words, stride) = self.done_map();
        for (x, o) in out[..w].iter_mut().enumerate() {
            let v = (words[y * stride + x / 16] >> (2 * (x % 16))) & 3;
            *o = if v == EDGE2 as u32 { 255 } else { 0 };
        }
        Ok(())
    }
}

/// Iterator over the edge points of a finished frame
/// ([`EdgeStream::points`]).
///
/// ```
/// use fixsight::pipeline::{EdgeStream, DEMO, map_words};
/// let mut s = EdgeStream::<8, { map_words(8, 8) }, 925, 64>::new();
/// s.configure(&DEMO, 8, 8)?;
/// for y in 0..8u8 { s.push_row(&[0, 0, 0, 0, 250, 250, 250, 250])?; }
/// s.finish()?;
/// let xs: Vec<u16> = s.points()?.map(|p| p.x).collect();
/// assert!(xs.iter().all(|&x| x == 3 || x == 4));
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug, Clone)]
pub struct EdgePoints<'a> {
    words: &'a [u32],
    grads: &'a [[i16; 2]],
    width: usize,
    stride: usize,
    /// Next position, `y * 16 * stride + x` over padded rows.
    pos: usize,
    end: usize,
    /// Candidates before `pos`.
    candidate: usize,
}

impl Iterator for EdgePoints<'_> {
    type Item = EdgePoint;

    fn next(&mut self) -> Option<EdgePoint> {
        while self.pos < self.end {
            let (wi, bit) = (self.pos / 16, self.pos % 16);
            let word = self.words.get(wi).copied().unwrap_or(0) >> (2 * bit);
            if word == 0 {
                // Nothing left in this word.
                self.pos = (wi + 1) * 16;
                continue;
            }
            // Straight to the next pixel with a nonzero code (`word != 0`,
            // so the skip stays inside the word).
            let skip = word.trailing_zeros() as usize / 2;
            let v = ((word >> (2 * skip)) & 3) as u8;
            let p = self.pos + skip;
            if p >= self.end {
                self.pos = self.end;
                break;
            }
            self.pos = p + 1;
            if v == NONE {
                continue;
            }
            let k = self.candidate;
            self.candidate += 1;
            if v != EDGE2 {
                continue;
            }
            let row = 16 * self.stride;
            let (x, y) = (p % row, p / row);
            if x >= self.width {
                continue;
            }
            return Some(EdgePoint {
                x: x as u16,
                y: y as u16,
                gradient: self.grads.get(k).map(|g| (g[0], g[1])),
            });
        }
        None
    }
}

/// The three magnitude rows as `(slot r, slot r - 1, slot r - 2)` (mod 3):
/// the row being formed and the two before it.
#[inline(always)]
fn three<T>(m: &mut [T; 3], r: usize) -> (&mut T, &T, &T) {
    let [a, b, c] = m;
    match r {
        0 => (a, c, b),
        1 => (b, a, c),
        _ => (c, b, a),
    }
}

/// The fused taps of a row loop, as the configuration gave them.
struct Fused {
    c: [i32; MAX_TAPS],
    d: [i32; MAX_TAPS],
    shift: u32,
    /// `2^(shift - 1)`, 0 for `shift = 0`: `(acc + half) >> shift` is
    /// `round_shift(acc, shift)` here, because `shift <= 16` and
    /// [`EdgeConfig::check`] bounds `|acc|` by `32767.5 * 2^shift`.
    half: i32,
    kind: Magnitude,
}

/// The taps, rounding and magnitude of a fused row loop, read through
/// methods so that one loop body compiles both with the configuration's
/// taps in memory ([`Fused`]) and with the taps of [`DEMO`] as constants
/// ([`DemoTaps`]: the multiplies by 1 and 16 become adds and shifts, and
/// no tap occupies a register). Both give the same integers.
trait TapSet: SectorRule {
    /// Cross tap `j` (`0..=2R`).
    fn c(&self, j: usize) -> i32;
    /// Derivative tap `j` (`0..=2R`).
    fn d(&self, j: usize) -> i32;
    /// Total rounding shift of both passes.
    fn shift(&self) -> u32;
    /// `2^(shift - 1)`, 0 for `shift = 0`.
    fn half(&self) -> i32;
    /// Magnitude kind.
    fn kind(&self) -> Magnitude;
    /// Whether the column sums run the loop specialised per ring rotation
    /// ([`columns_rotated`]): nine copies of the column loop, paid for
    /// only by the constant taps of [`DEMO`].
    const ROTATED: bool = false;
    /// The magnitude of one gradient ([`Magnitude::of`]).
    #[inline(always)]
    fn magnitude(&self, g: [i16; 2]) -> u16 {
        self.kind().of(g[0], g[1])
    }
}

/// How the classifier finds a gradient's sector: [`direction_sector`],
/// unless a tap set bounds its gradients so that a cheaper exact form
/// applies ([`DemoTaps`]).
trait SectorRule {
    /// [`direction_sector`] of `g`.
    #[inline(always)]
    fn sector(&self, g: [i16; 2]) -> u8 {
        direction_sector(g[0], g[1])
    }
}

/// [`direction_sector`] itself (the ends of a row, any tap set).
struct AnySector;

impl SectorRule for AnySector {}

impl SectorRule for Fused {}

impl TapSet for Fused {
    #[inline(always)]
    fn c(&self, j: usize) -> i32 {
        self.c[j]
    }
    #[inline(always)]
    fn d(&self, j: usize) -> i32 {
        self.d[j]
    }
    #[inline(always)]
    fn shift(&self) -> u32 {
        self.shift
    }
    #[inline(always)]
    fn half(&self) -> i32 {
        self.half
    }
    #[inline(always)]
    fn kind(&self) -> Magnitude {
        self.kind
    }
}

/// The fused taps of [`DEMO`].
const DEMO_TAPS: GradientTaps = DEMO.gradient_taps();

/// [`DEMO_TAPS`] widened to the stream's `i32` tap arrays.
const fn widen(t: [i16; MAX_TAPS]) -> [i32; MAX_TAPS] {
    let mut out = [0i32; MAX_TAPS];
    let mut i = 0;
    while i < MAX_TAPS {
        out[i] = t[i] as i32;
        i += 1;
    }
    out
}

// The squares and products of [`DemoTaps`] stay below `2^31`.
const _: () = assert!(4 * (DEMO.max_gradient() as u64).pow(2) < 1 << 31);

/// The taps of [`DEMO`] as constants: a stream whose taps, shift and
/// magnitude equal these runs [`fused_row`] with them (see
/// [`EdgeStream::step`]).
struct DemoTaps;

impl DemoTaps {
    const C: [i32; MAX_TAPS] = widen(DEMO_TAPS.cross);
    const D: [i32; MAX_TAPS] = widen(DEMO_TAPS.deriv);
    const SHIFT: u32 = DEMO_TAPS.h_shift + DEMO_TAPS.v_shift;
    const RADIUS: usize = DEMO_TAPS.radius();
}

impl TapSet for DemoTaps {
    const ROTATED: bool = true;
    #[inline(always)]
    fn c(&self, j: usize) -> i32 {
        Self::C[j]
    }
    #[inline(always)]
    fn d(&self, j: usize) -> i32 {
        Self::D[j]
    }
    #[inline(always)]
    fn shift(&self) -> u32 {
        Self::SHIFT
    }
    #[inline(always)]
    fn half(&self) -> i32 {
        (1i32 << Self::SHIFT) >> 1
    }
    #[inline(always)]
    fn kind(&self) -> Magnitude {
        DEMO.magnitude
    }
    /// [`l2_round`] with the squares of the signed values: these taps
    /// bound `|gx|, |gy|` by [`EdgeConfig::max_gradient`] (2614), so no
    /// value is `-32768` and the saturating absolute values change nothing.
    #[inline(always)]
    fn magnitude(&self, g: [i16; 2]) -> u16 {
        let (x, y) = (g[0] as i32, g[1] as i32);
        round_root((x * x + y * y) as u32)
    }
}

impl SectorRule for DemoTaps {
    /// [`direction_sector`] from the signed squares and the product, for
    /// the same bound: with `p = |gx gy|` (`= |gx| |gy|`), `s = |gx| + |gy|`
    /// has `s^2 = gx^2 + gy^2 + 2p` and `(|gy| - |gx|)^2 = gx^2 + gy^2 -
    /// 2p`, so sector 0 (`s^2 < 2 gx^2`) is `gy^2 + 2p < gx^2`, and sector 2
    /// (`|gy| > |gx|` and `(|gy| - |gx|)^2 > 2 gx^2`) is `gy^2 > gx^2 + 2p`
    /// (which already implies `|gy| > |gx|`). Otherwise both are nonzero,
    /// so `gx gy > 0` is `(gx > 0) == (gy > 0)`: sector 1, else 3. A zero
    /// gradient (`s = 0`) is sector 0, as in `direction_sector`. (The
    /// products stay below `2^31`: `|gx|, |gy| <= 2614`.)
    #[inline(always)]
    fn sector(&self, g: [i16; 2]) -> u8 {
        let (x, y) = (g[0] as i32, g[1] as i32);
        let (xx, yy, p) = (x * x, y * y, x * y);
        let twice = 2 * p.abs();
        if yy + twice < xx || (x | y) == 0 {
            0
        } else if yy > xx + twice {
            2
        } else if p > 0 {
            1
        } else {
            3
        }
    }
}

/// The magnitude rows above a classified row and the row itself (`width`
/// each; zeros stand for rows outside the image).
struct Rows3<'a> {
    above: &'a [u16],
    centre: &'a [u16],
}

/// What decides a pixel's code: thresholds, the smallest magnitude that
/// can change anything (1 with a histogram, where every nonzero
/// suppressed magnitude counts, else `low`), the histogram's bin shift.
#[derive(Clone, Copy)]
struct Rule {
    t: Thresholds,
    floor: u16,
    auto: Option<u32>,
    /// [`Suppression::Interpolated`].
    interpolated: bool,
}

/// The running counts of a classified row (kept in locals by the row
/// loops, stored back after them).
#[derive(Clone, Copy, Default)]
struct Counts {
    /// Point gradients stored so far in the frame.
    stored: usize,
    candidates: u32,
    /// The class word being filled (2 bits per pixel).
    word: u32,
    counted: u32,
}

/// Per-pixel suppression, histogram, classification, packing and point
/// gradients of one row.
struct Classifier<'a, const CAP: usize> {
    rule: Rule,
    hist: &'a mut [u32],
    words: &'a mut [u32],
    grads: &'a mut [[i16; 2]; CAP],
    n: Counts,
}

/// Pixel `x` of a row: `g` its gradient; `a`, `c`, `b` the magnitudes at
/// `x - 1 ..= x + 1` in the rows above, its own and below (`c[1]` its
/// magnitude; the neighbours along the gradient's sector are read only
/// when needed: most pixels stop at the floor).
#[allow(clippy::too_many_arguments)]
#[inline(always)]
fn classify_px<const CAP: usize, T: SectorRule>(
    f: &T,
    rule: &Rule,
    hist: &mut [u32],
    words: &mut [u32],
    grads: &mut [[i16; 2]; CAP],
    n: &mut Counts,
    x: usize,
    g: [i16; 2],
    [a, c, b]: [&[u16; 3]; 3],
) {
    let mut code = NONE;
    let mc = c[1];
    if mc >= rule.floor {
        let keep = if rule.interpolated {
            interpolated_keeps_outlined(&[*a, *c, *b], g)
        } else {
            // The rule of `nms::suppress` with the sector of
            // `gradient::direction_sector`.
            let (before, after) = match f.sector(g) {
                0 => (c[0], c[2]),
                1 => (a[0], b[2]),
                2 => (a[1], b[1]),
                _ => (a[2], b[0]),
            };
            mc > before && mc >= after
        };
        if keep {
            if let Some(sh) = rule.auto {
                // The bins cover the largest magnitude (checked at
                // configure), so the index never reaches past the last
                // bin.
                if let Some(c) = hist.get_mut((mc >> sh) as usize) {
                    *c += 1;
                }
                n.counted += 1;
            }
            code = code_of(mc, &rule.t);
            if code != NONE {
                if let Some(slot) = grads.get_mut(n.stored) {
                    *slot = g;
                    n.stored += 1;
                }
                n.candidates += 1;
            }
        }
    }
    // Pixel `x` at bits `2 (x mod 16)`: shift in from the top, the word
    // is complete after its 16th pixel.
    n.word = (n.word >> 2) | ((code as u32) << 30);
    if x % 16 == 15 {
        if let Some(wd) = words.get_mut(x / 16) {
            *wd = n.word;
        }
    }
}

/// [`crate::nms::interpolated_keeps`], kept out of the row loop so that
/// the 4-sector path's registers are not spent on a rule it does not run.
#[inline(never)]
fn interpolated_keeps_outlined(n: &[[u16; 3]; 3], g: [i16; 2]) -> bool {
    crate::nms::interpolated_keeps(n, g)
}

impl<'a, const CAP: usize> Classifier<'a, CAP> {
    fn new(
        t: Thresholds,
        auto: Option<u32>,
        suppression: Suppression,
        hist: &'a mut [u32],
        words: &'a mut [u32],
        grads: &'a mut [[i16; 2]; CAP],
        stored: usize,
    ) -> Self {
        Self {
            rule: Rule {
                t,
                floor: if auto.is_some() { 1 } else { t.low() },
                auto,
                interpolated: suppression == Suppression::Interpolated,
            },
            hist,
            words,
            grads,
            n: Counts {
                stored,
                ..Counts::default()
            },
        }
    }

    /// Pixel `x` at the ends of the row (or of a row of 1 or 2 pixels):
    /// neighbours outside the row are 0.
    #[inline(never)]
    fn px_edge(&mut self, x: usize, g: [i16; 2], r: &Rows3<'_>, below: &[u16]) {
        let at = |row: &[u16], dx: isize| -> u16 {
            let xx = x as isize + dx;
            if xx < 0 {
                0
            } else {
                row.get(xx as usize).copied().unwrap_or(0)
            }
        };
        let near = |row: &[u16]| [at(row, -1), at(row, 0), at(row, 1)];
        let (a, c, b) = (near(r.above), near(r.centre), near(below));
        classify_px(
            &AnySector,
            &self.rule,
            self.hist,
            self.words,
            self.grads,
            &mut self.n,
            x,
            g,
            [&a, &c, &b],
        );
    }

    /// Pixels `lo..hi` (`1 <= lo`, `hi + 1 <= width`) of a row whose
    /// `below` row is complete there, with the counts in locals;
    /// `grad[x]` is the pixel's gradient and is replaced by `fresh[x - lo]`
    /// (the gradient of the row below, which the row loop formed).
    #[allow(clippy::too_many_arguments)]
    #[inline(always)]
    fn span<T: TapSet>(
        &mut self,
        f: &T,
        r: &Rows3<'_>,
        below: &[u16],
        grad: &mut [[i16; 2]],
        fresh: &[[i16; 2]],
        lo: usize,
        hi: usize,
    ) {
        if lo >= hi {
            return;
        }
        let rule = self.rule;
        let mut n = self.n;
        let (hist, words, grads) = (&mut *self.hist, &mut *self.words, &mut *self.grads);
        let (a, c, b) = (
            &r.above[lo - 1..hi + 1],
            &r.centre[lo - 1..hi + 1],
            &below[lo - 1..hi + 1],
        );
        let cells = a
            .windows(3)
            .zip(c.windows(3))
            .zip(b.windows(3))
            .zip(grad[lo..hi].iter_mut().zip(&fresh[..hi - lo]));
        for (x, (((a, c), b), (g, new))) in (lo..hi).zip(cells) {
            let held = core::mem::replace(g, *new);
            // `windows(3)` gives 3 elements: the conversions cannot fail.
            if let (Ok(a), Ok(c), Ok(b)) = (a.try_into(), c.try_into(), b.try_into()) {
                classify_px(f, &rule, hist, words, grads, &mut n, x, held, [a, c, b]);
            }
        }
        self.n = n;
    }

    /// Stores the last, partial word of a row of `w` pixels.
    fn close(&mut self, w: usize) {
        if w % 16 != 0 {
            if let Some(wd) = self.words.get_mut(w / 16) {
                *wd = self.n.word >> (2 * (16 - w % 16));
            }
        }
    }

    /// A whole row whose `below` row is complete.
    fn row(&mut self, r: &Rows3<'_>, below: &[u16], grad: &[[i16; 2]]) {
        let w = grad.len();
        for (x, &g) in grad.iter().enumerate() {
            self.px_edge(x, g, r, below);
        }
        self.close(w);
    }
}

/// Tallies the classification of `n` pixels, `counted` of them into the
/// histogram.
fn tally_classify(n: u32, counted: u32, suppression: Suppression) {
    if suppression == Suppression::Interpolated {
        // Over the sector rule: the interpolated rule's five multiplies
        // against the sector's two squares, three more additions (the two
        // interpolated sides and the orientation) and the branches of the
        // orientation and the major axis.
        tally(Op::Mul, 3 * n);
        tally(Op::AddSub, 3 * n);
        tally(Op::Branch, 2 * n);
    }
    // Per pixel: direction (about 12 operations, see
    // `gradient::direction_row`), 4 loads, 2 compares and a select for the
    // suppression, 2 compares for the class, a shift and an or to pack it;
    // per counted magnitude a shift and a bin update.
    tally(Op::Load, 6 * n);
    tally(Op::Logic, 10 * n);
    tally(Op::AddSub, 3 * n);
    tally(Op::Mul, 2 * n);
    tally(Op::Shift, 3 * n);
    tally(Op::Table, n);
    tally(Op::Branch, 4 * n);
    tally(Op::Store, n / 16 + 1);
    tally(Op::Shift, counted);
    tally(Op::Load, counted);
    tally(Op::AddSub, counted);
    tally(Op::Store, counted);
}

/// Both column sums at column `x`: `cross` and `deriv` down the `2R + 1`
/// rows, folded by the symmetry of the taps (`cross` symmetric, `deriv`
/// antisymmetric with a zero centre, [`GradientTaps`]): the integer sums
/// are regrouped, not changed, so they equal the whole-frame filter's
/// column sums exactly.
#[inline(always)]
fn column<const R: usize, T: TapSet>(rows: &[&[u8]; RING_ROWS], f: &T, x: usize) -> [i32; 2] {
    let mut s = f.c(R) * rows[R][x] as i32;
    let mut d = 0i32;
    for k in 1..=R {
        let (a, b) = (rows[R - k][x] as i32, rows[R + k][x] as i32);
        s += f.c(R + k) * (a + b);
        d += f.d(R + k) * (b - a);
    }
    [s, d]
}

/// `gx, gy` from the `2R + 1` column sums around a pixel (`win[R]` is the
/// pixel's own column): `deriv` along the cross sums, `cross` along the
/// derivative sums, each rounded once by `sat_i16(round_shift(acc,
/// shift))`.
#[inline(always)]
fn gradient_at<const R: usize, T: TapSet>(win: &[[i32; 2]], f: &T) -> [i16; 2] {
    let (mut ax, mut ay) = (0i32, f.c(R) * win[R][1]);
    for k in 1..=R {
        ax += f.d(R + k) * (win[R + k][0] - win[R - k][0]);
        ay += f.c(R + k) * (win[R + k][1] + win[R - k][1]);
    }
    // `sat_i16` written as a clamp, the form the Arm back end turns into
    // one saturating instruction.
    let sat = |v: i32| v.clamp(i16::MIN as i32, i16::MAX as i32) as i16;
    [
        sat((ax + f.half()) >> f.shift()),
        sat((ay + f.half()) >> f.shift()),
    ]
}

/// The row a fused loop classifies: the magnitude rows above it and its
/// own, and the classifier.
type RowAbove<'a, 'c, const CAP: usize> = (Rows3<'a>, &'a mut Classifier<'c, CAP>);

/// Columns whose sums one chunk of a fused row holds (on the stack).
const CHUNK: usize = 64;

/// The column sums of columns `start .. start + buf.len()`, each clamped
/// into the row (`rows[j].len()` wide, at least 1): the columns inside
/// the row by a loop without bounds tests (every row sliced to them),
/// those outside as copies of the first or last column's sums.
#[inline(always)]
fn fill_columns<const R: usize, const S: usize, T: TapSet>(
    rows: &[&[u8]; RING_ROWS],
    ring: Option<Ring<'_>>,
    f: &T,
    start: isize,
    buf: &mut [[i32; 2]],
) {
    let w = rows[R].len() as isize;
    let end = start + buf.len() as isize;
    // Inside: columns `lo..hi` at `buf[lo - start..hi - start]`.
    let (lo, hi) = (start.clamp(0, w), end.clamp(0, w));
    if lo < hi {
        let (s, m) = (lo as usize, (hi - lo) as usize);
        let at = (lo - start) as usize;
        let out = &mut buf[at..at + m];
        match ring {
            Some(ring) if T::ROTATED && 2 * R + 1 == RING_ROWS => {
                columns_rotated::<R, S, T>(ring, f, s, out)
            }
            _ => {
                let span: [&[u8]; RING_ROWS] = core::array::from_fn(|j| &rows[j][s..s + m]);
                // One index over `span` and `out` (all `m` long): no
                // bounds test survives in the loop (an iterator over `out`
                // beside the index leaves one).
                #[allow(clippy::needless_range_loop)]
                for i in 0..m {
                    out[i] = column::<R, T>(&span, f, i);
                }
            }
        }
    }
    let left = ((lo.max(start) - start) as usize).min(buf.len());
    let right = ((hi.max(start) - start) as usize).min(buf.len());
    if left > 0 {
        let first = column::<R, T>(rows, f, 0);
        buf[..left].fill(first);
    }
    if right < buf.len() {
        let last = column::<R, T>(rows, f, w as usize - 1);
        buf[right..].fill(last);
    }
}

/// The ring of camera rows as one slice (slot `k` at `k * S`, `S` the
/// stream's width capacity) and the slot of the window's top row, for a
/// window of `2R + 1 = RING_ROWS` rows none of which is clamped (row `j`
/// of the window is in slot `(top + j) mod RING_ROWS`).
#[derive(Clone, Copy)]
struct Ring<'a> {
    flat: &'a [u8],
    top: usize,
}

/// [`column`] for columns `s .. s + out.len()` of a window of
/// `RING_ROWS` unclamped rows, the loop compiled once per rotation of the
/// ring so that every row is one constant offset from the column (no
/// row pointer is kept in a register or reloaded from the stack). Same
/// sums as [`column`].
#[inline(always)]
fn columns_rotated<const R: usize, const S: usize, T: TapSet>(
    ring: Ring<'_>,
    f: &T,
    s: usize,
    out: &mut [[i32; 2]],
) {
    match ring.top {
        0 => columns_at::<R, S, 0, T>(ring.flat, f, s, out),
        1 => columns_at::<R, S, 1, T>(ring.flat, f, s, out),
        2 => columns_at::<R, S, 2, T>(ring.flat, f, s, out),
        3 => columns_at::<R, S, 3, T>(ring.flat, f, s, out),
        4 => columns_at::<R, S, 4, T>(ring.flat, f, s, out),
        5 => columns_at::<R, S, 5, T>(ring.flat, f, s, out),
        6 => columns_at::<R, S, 6, T>(ring.flat, f, s, out),
        7 => columns_at::<R, S, 7, T>(ring.flat, f, s, out),
        _ => columns_at::<R, S, 8, T>(ring.flat, f, s, out),
    }
}

/// [`columns_rotated`] for the rotation `TOP`.
#[inline(never)]
fn columns_at<const R: usize, const S: usize, const TOP: usize, T: TapSet>(
    flat: &[u8],
    f: &T,
    s: usize,
    out: &mut [[i32; 2]],
) {
    let m = out.len();
    // Every row of the window lies within `8 S + m` bytes of column `s`;
    // each row's span is the window at a constant offset.
    let Some(win) = flat.get(s..s + (RING_ROWS - 1) * S + m) else {
        return;
    };
    let rows: [&[u8]; RING_ROWS] =
        core::array::from_fn(|j| &win[((TOP + j) % RING_ROWS) * S..][..m]);
    // One index over the rows and `out` (all `m` long): no bounds test
    // survives in the loop.
    #[allow(clippy::needless_range_loop)]
    for i in 0..m {
        out[i] = column::<R, T>(&rows, f, i);
    }
}

/// One fused row, chunk by chunk of [`CHUNK`] pixels: first the column
/// sums of the chunk and `R` columns on either side (columns outside the
/// row clamp to its ends, the clamped border) into a stack buffer (the
/// `2R` columns two chunks share are moved, not summed again); then, per
/// pixel, `gx, gy` from the `2R + 1` column sums around it into a second
/// stack buffer and the magnitude into `mag`. With `classify`, the row
/// above is then suppressed and classified over the chunk one pixel
/// behind (its neighbours below are the magnitudes just formed), reading
/// its gradient from `grad` before the new one replaces it.
#[inline(always)]
fn fused_row<const R: usize, const S: usize, const CAP: usize, T: TapSet>(
    rows: &[&[u8]; RING_ROWS],
    ring: Option<Ring<'_>>,
    f: &T,
    grad: &mut [[i16; 2]],
    mag: &mut [u16],
    mut classify: Option<RowAbove<'_, '_, CAP>>,
) {
    let w = mag.len();
    if w == 0 {
        return;
    }
    let grad = &mut grad[..w];
    let rows: [&[u8]; RING_ROWS] = core::array::from_fn(|j| &rows[j][..w]);
    let mut buf = [[0i32; 2]; CHUNK + 2 * (MAX_TAPS / 2)];
    // `fresh[0]`: the new gradient of pixel `x0 - 1` (not stored yet: the
    // row above still needs the old one there); `fresh[1 + i]`: of pixel
    // `x0 + i`.
    let mut fresh = [[0i16; 2]; CHUNK + 1];
    let (mut x0, mut prev) = (0, 0);
    while x0 < w {
        let n = CHUNK.min(w - x0);
        if x0 == 0 {
            fill_columns::<R, S, T>(&rows, ring, f, -(R as isize), &mut buf[..n + 2 * R]);
        } else {
            buf.copy_within(prev..prev + 2 * R, 0);
            fill_columns::<R, S, T>(
                &rows,
                ring,
                f,
                (x0 + R) as isize,
                &mut buf[2 * R..n + 2 * R],
            );
        }
        let out = mag[x0..x0 + n].iter_mut().zip(&mut fresh[1..n + 1]);
        for (win, (m, g)) in buf[..n + 2 * R].windows(2 * R + 1).zip(out) {
            let gg = gradient_at::<R, T>(win, f);
            *m = f.magnitude(gg);
            *g = gg;
        }
        match classify.as_mut() {
            Some((r, cl)) => {
                if x0 == 0 && n >= 2 {
                    cl.px_edge(0, grad[0], r, mag);
                    grad[0] = fresh[1];
                }
                // Pixels `max(x0 - 1, 1) ..= x0 + n - 2`.
                let lo = x0.max(2) - 1;
                let hi = x0 + n - 1;
                cl.span(f, r, mag, grad, &fresh[lo + 1 - x0..], lo, hi);
            }
            None => grad[x0..x0 + n].copy_from_slice(&fresh[1..n + 1]),
        }
        fresh[0] = fresh[n];
        prev = n;
        x0 += n;
    }
    if let Some((r, cl)) = classify {
        cl.px_edge(w - 1, grad[w - 1], &r, mag);
        grad[w - 1] = fresh[0];
        cl.close(w);
    }
}

pub mod image_job;
mod point_job;
pub use image_job::{DemoImageJobQvga, DemoImageJobVga, ImageJobConfig};
pub use point_job::{
    centre_line, check_frames, line_stages, tape_detections, JobReport, LineOutcome,
    PointJobConfig, EDGES_PER_FRAME,
};

/// The whole job in point mode: camera rows in; at the end of the frame
/// edge points corrected through the lens grid, line votes, peaks, the
/// tape's two edges, tracks and the drift warning out; in memory fixed by
/// the type.
///
/// > **Not a safety function.** The drift warning is an aid for a vehicle
/// > that follows floor tape. It is not developed, assessed or certified
/// > as a safety function; a vehicle that can hurt people needs
/// > safety-rated sensing and control under the standards that apply to it
/// > (for example ISO 3691-4 for driverless industrial trucks, IEC 61508,
/// > ISO 13849) and local rules, with protective measures that do not
/// > depend on this software.
///
/// * `W`, `MAP_WORDS`, `BINS`: the edge stage's ([`EdgeStream`], which
///   the job owns with no point gradients);
/// * `CAP`: candidates per frame whose gate byte is kept (below);
/// * `T`, `R`: vote columns and rows ([`crate::lines::VoteStore`]);
/// * `K`: peaks kept per frame (the lines offered to the marking);
/// * `N`: track slots of the tracker ([`crate::track::Tracker`], fed with
///   at most [`EDGES_PER_FRAME`] detections per frame).
///
/// # What a frame computes, bit for bit
///
/// Rows go in as for [`EdgeStream`] ([`PointJob::push_row`], or
/// [`PointJob::next_row_slot`] and [`PointJob::commit_row`] for a DMA).
/// [`PointJob::finish`] then gives exactly what these kernels give when run
/// one after another on the whole frame (a property test checks it on
/// random frames):
///
/// 1. the edge stage: the edge map and each point's `gx, gy` (module docs),
///    with the candidate budget `CAP` when the votes are gated and `CAP >
///    0` ([`EdgeStream::set_candidate_budget`], below);
/// 2. [`crate::lines::Accumulator::vote_row_corrected`] on every row of the
///    edge map with those gradients, through the correction grid (or
///    [`crate::lines::Accumulator::vote_row`] without a grid), on an
///    accumulator fresh for the frame, parameters `vote`;
/// 3. [`crate::lines::Accumulator::peaks`] with `peaks` and `K` slots;
/// 4. [`centre_line`] of each peak's line, in peak order: the lines move
///    from the vote frame's origin to the image centre, the origin of the
///    marking and the tracker;
/// 5. [`crate::marking::select`] on those lines with `marking` (no polarity
///    is known in point mode: the contrast rule is skipped);
/// 6. [`crate::track::Tracker::update`] with the frame number and, when a
///    marking was found, its left then its right edge as detections
///    (`rho`, `theta`, weight = votes); none otherwise, so the tracks
///    coast. Its report carries the drift warning.
///
/// # Point gradients in one byte
///
/// Whether a candidate pixel becomes an edge point is known only at the
/// end of the frame, and the gated vote needs its gradient angle. The job
/// keeps, for each of the first `CAP` candidates of the frame (raster
/// order), one byte: the gate code of its angle
/// ([`crate::lines::VoteParams::gate_code`] of
/// [`crate::gradient::angle`]`(gx, gy)`), which names the run of columns
/// the point votes in exactly; the gradient row is held for one row step
/// (`4 W` bytes) until the row's classes are known. An edge point whose
/// candidate came past the `CAP`-th casts no vote and is counted
/// ([`JobReport::ungated`]); only then does the job differ from the
/// composition above. Without a gate, nothing is kept and `CAP` may be 0.
///
/// So that the gate bytes suffice, a gated job gives its edge stage the
/// candidate budget `CAP`: with automatic thresholds, a frame that had
/// more than `CAP` candidates raises the `low` carried to the next frame
/// to the smallest histogram bin edge with at most `CAP` magnitudes at or
/// above it ([`crate::hysteresis::Thresholds::within_budget`]). Textured
/// floors (grass, gravel, brick in the natural test images) then keep the
/// strongest `CAP` candidates spread over the whole frame, instead of the
/// first `CAP` in raster order and no votes from the bottom rows. A frame
/// with many more candidates than the one before it can still overflow,
/// and so can the first frame, which uses the rule's `first` pair.
///
/// # Frames
///
/// Frame numbers count from 0 at [`PointJob::configure`] and
/// [`PointJob::reset`], one per finished frame and one per
/// [`PointJob::drop_frame`] (a skipped number: the tracks coast through
/// it).
///
/// # Memory (counted from the type)
///
/// [`PointJob::ram_bytes`] is `size_of::<Self>()`: the edge stage, the
/// held gradient row `4 W`, the gate bytes `CAP`, the accumulator and its
/// table `2 T R + 4 T`, `K` peaks and lines, the tracker. For the demo at
/// 320 x 240 ([`DemoPointJobQvga`]) it is 48 496 bytes, within 48 KiB
/// (49 152); at 640 x 480 ([`DemoPointJobVga`]) 138 544. The correction
/// grid is read only and not counted (it can stay in flash: 41 x 31 points
/// of 8 bytes, 10 168 bytes, for the demo lens at 320 x 240 with step 8).
///
/// ```
/// use fixsight::pipeline::{DemoPointJobQvga, EdgeConfig, PointJobConfig, ThresholdRule, DEMO};
/// // Fixed thresholds: the synthetic frame below has no noise for the
/// // automatic rule to work on.
/// let cfg = PointJobConfig {
///     edges: EdgeConfig { thresholds: ThresholdRule::Fixed { low: 60, high: 125 }, ..DEMO },
///     ..PointJobConfig::DEMO_QVGA
/// };
/// let mut job: Box<DemoPointJobQvga> = Box::default();
/// job.configure(&cfg, 320, 240)?;
/// // A bright tape 20 px wide at the bottom row, its edges meeting on the
/// // demo horizon (61.875 px above the image centre), on a darker floor.
/// let px = |x: usize, y: usize| {
///     let half = 10.0 * (y as f64 - 119.5 + 61.875) / 181.375;
///     if (x as f64 - 159.5).abs() < half { 220u8 } else { 60 }
/// };
/// for frame in 0..3 {
///     for y in 0..240 {
///         let row: [u8; 320] = core::array::from_fn(|x| px(x, y));
///         job.push_row(&row)?;
///     }
///     let r = job.finish(None)?;
///     assert_eq!(r.frame, frame);
///     let tape = r.marking.found().expect("the tape");
///     assert!((280..=360).contains(&tape.near_width_q4())); // about 20 px
/// }
/// assert_eq!(job.tracker().unwrap().tracks().count(), 2);
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug, Clone)]
pub struct PointJob<
    const W: usize,
    const MAP_WORDS: usize,
    const BINS: usize,
    const CAP: usize,
    const T: usize,
    const R: usize,
    const K: usize,
    const N: usize,
> {
    cfg: PointJobConfig,
    configured: bool,
    stream: EdgeStream<W, MAP_WORDS, BINS, 0>,
    held: [[i16; 2]; W],
    codes: [u8; CAP],
    coded: usize,
    votes: crate::lines::VoteStore<T, R>,
    peaks: [crate::lines::Peak; K],
    lines: [crate::marking::Candidate; K],
    found: usize,
    /// Meaningful once `configured` (before, all zero bytes).
    tracker: crate::track::Tracker<N, EDGES_PER_FRAME>,
    frame: u32,
    /// The last frame's report, meaningful when `reported` (before, all
    /// zero bytes: no `Option`, whose empty value would not be).
    report: JobReport,
    reported: bool,
}

/// Gate bytes of [`DemoPointJobQvga`]: the demo sequence's frames have up
/// to about 2 300 candidates once the automatic thresholds settle.
pub const DEMO_QVGA_CAP: usize = 4096;

/// The demo job at 320 x 240: [`PointJobConfig::DEMO_QVGA`], 32 x 201 vote
/// cells, 8 peaks, 4 tracks.
///
/// ```
/// assert!(fixsight::pipeline::DemoPointJobQvga::ram_bytes() <= 48 * 1024);
/// ```
pub type DemoPointJobQvga =
    PointJob<320, { map_words(320, 240) }, { DEMO.bins_needed() }, DEMO_QVGA_CAP, 32, 201, 8, 4>;

/// The demo job's types at 640 x 480: four times the gate bytes, vote rows
/// of 2 px over the half diagonal (`-400..=400` px, 401 rows).
///
/// ```
/// assert!(fixsight::pipeline::DemoPointJobVga::ram_bytes() > 100_000);
/// ```
pub type DemoPointJobVga = PointJob<
    640,
    { map_words(640, 480) },
    { DEMO.bins_needed() },
    { 4 * DEMO_QVGA_CAP },
    32,
    401,
    8,
    4,
>;

/// The whole job in image mode (rules, integer model and memory in the
/// module docs of [`image_job`]): camera rows in, warped through
/// the lens grid row by row into the edge stage; at the end of the frame
/// line votes, peaks, the tape's two edges, tracks and the drift warning
/// out.
///
/// > **Not a safety function** (see the module docs).
///
/// The const parameters are [`PointJob`]'s, for the **corrected** frame
/// (`W` at least the grid's output width). `'a` is the life of the grid's
/// points and of the caller's ring of source rows.
///
/// ```
/// use fixsight::pipeline::{DemoImageJobQvga, ImageJob, ImageJobConfig};
/// use fixsight::warp::{ControlGrid, WarpGeometry};
/// // An identity grid at 320 x 240 (step 16, F = 5) stands in for a lens.
/// let geom = WarpGeometry::new(320, 240, 320, 240, 5)?;
/// let pts: Vec<i32> = (0..16).flat_map(|j| (0..21).flat_map(move |i| [i * 512, j * 512])).collect();
/// let grid = ControlGrid::new(&pts, geom, 4)?;
/// let mut ring = vec![0u8; DemoImageJobQvga::ring_bytes(&grid)?];
/// let mut job: Box<DemoImageJobQvga> = Box::default();
/// job.configure(&ImageJobConfig::DEMO_QVGA, grid, &mut ring)?;
/// // Two parallel vertical edges: lines, no tape.
/// let row: [u8; 320] = core::array::from_fn(|x| if (150..170).contains(&x) { 220 } else { 60 });
/// for _ in 0..240 { job.push_row(&row)?; }
/// let r = job.finish()?;
/// assert_eq!((r.frame, r.peaks, r.outside), (0, 2, 0));
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug)]
pub struct ImageJob<
    'a,
    const W: usize,
    const MAP_WORDS: usize,
    const BINS: usize,
    const CAP: usize,
    const T: usize,
    const R: usize,
    const K: usize,
    const N: usize,
> {
    warp: image_job::Warp<'a>,
    job: PointJob<W, MAP_WORDS, BINS, CAP, T, R, K, N>,
}

/// Luma of an RGB565 pixel by the ITU-R BT.601 weights
/// `Y = 0.299 R + 0.587 G + 0.114 B` in integers:
///
/// ```text
/// R8 = (R5 << 3) | (R5 >> 2)     G8 = (G6 << 2) | (G6 >> 4)     B8 = (B5 << 3) | (B5 >> 2)
/// Y  = (77 R8 + 150 G8 + 29 B8 + 128) >> 8                        (round half up)
/// ```
///
/// The 5- and 6-bit channels are widened by repeating their top bits (so
/// full scale maps to 255); the weights are `0.299, 0.587, 0.114` times 256
/// rounded to sum 256 (76.5 -> 77, 150.3 -> 150, 29.2 -> 29), so white
/// gives 255 and the result never exceeds 255. Within 1 of the `f64`
/// BT.601 luma of the widened channels.
///
/// ```
/// use fixsight::pipeline::rgb565_luma;
/// assert_eq!(rgb565_luma(0xFFFF), 255);
/// assert_eq!(rgb565_luma(0x0000), 0);
/// assert_eq!(rgb565_luma(0xF800), 77);  // pure red: (77 * 255 + 128) >> 8
/// ```
#[inline(always)]
pub const fn rgb565_luma(p: u16) -> u8 {
    let r = ((p >> 11) & 31) as u32;
    let g = ((p >> 5) & 63) as u32;
    let b = (p & 31) as u32;
    let (r8, g8, b8) = (
        (r << 3) | (r >> 2),
        (g << 2) | (g >> 4),
        (b << 3) | (b >> 2),
    );
    ((77 * r8 + 150 * g8 + 29 * b8 + 128) >> 8) as u8
}

/// An 8-bit value from a `bits`-bit sample (`bits` in `8..=16`, `v <
/// 2^bits`): `min(255, (v + 2^(bits - 9)) >> (bits - 8))`, the sample
/// divided by `2^(bits - 8)` rounded half up and clamped (only the top
/// values round up to 256); `v` itself for 8 bits.
///
/// ```
/// use fixsight::pipeline::raw_to_u8;
/// assert_eq!(raw_to_u8(1023, 10), 255);  // (1023 + 2) >> 2 = 256 -> 255
/// assert_eq!(raw_to_u8(6, 10), 2);       // 1.5 -> 2
/// assert_eq!(raw_to_u8(4095, 12), 255);
/// assert_eq!(raw_to_u8(200, 8), 200);
/// ```
#[inline(always)]
pub const fn raw_to_u8(v: u16, bits: u32) -> u8 {
    if bits <= 8 {
        return if v > 255 { 255 } else { v as u8 };
    }
    let s = bits - 8;
    let r = (v as u32 + (1 << (s - 1))) >> s;
    if r > 255 {
        255
    } else {
        r as u8
    }
}

#[cfg(test)]
mod tests {
    extern crate std;
    use super::*;
    use crate::{gradient, nms, ImageView, ImageViewMut};
    use proptest::prelude::*;
    use std::boxed::Box;
    use std::vec;
    use std::vec::Vec;

    /// The packed map's weak-neighbour mask equals the pixel-by-pixel test
    /// of every neighbour, at word boundaries, row ends and the map's
    /// edges (widths 15, 16, 17, 32 and 33).
    #[test]
    fn packed_weak_neighbours_match_the_codes() {
        for w in [15usize, 16, 17, 32, 33] {
            let (h, stride) = (5usize, w.div_ceil(16));
            let mut words = vec![0u32; stride * h];
            let mut s = 0x1234_5678u32 ^ w as u32;
            let mut p = Packed {
                words: &mut words,
                width: w,
                height: h,
                stride,
            };
            for y in 0..h {
                for x in 0..w {
                    s = s.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
                    p.set(x, y, (s >> 30) as u8);
                }
            }
            for y in 0..h {
                for x in 0..w {
                    let mut want = 0u8;
                    for (i, (dx, dy)) in hysteresis::NEIGHBOURS.into_iter().enumerate() {
                        let (nx, ny) = (x as i32 + dx, y as i32 + dy);
                        if nx >= 0
                            && ny >= 0
                            && (nx as usize) < w
                            && (ny as usize) < h
                            && p.get(nx as usize, ny as usize) == hysteresis::WEAK
                        {
                            want |= 1 << i;
                        }
                    }
                    assert_eq!(p.weak_neighbours(x, y), want, "w {w} ({x}, {y})");
                }
            }
        }
    }

    const TW: usize = 40;
    const TH: usize = 30;
    /// Histogram bins for every configuration [`config`] draws: the most
    /// any smoothing, operator, magnitude and `frac_bits <= 2` needs with
    /// bins of width 1 (the Scharr, L1, 2-bit case needs 24 481; a fixed
    /// guess of 21 000 once made `configure` refuse a drawn case).
    const TBINS: usize = most_bins();

    const fn most_bins() -> usize {
        let sm = [
            Smoothing::None,
            Smoothing::Binomial3,
            Smoothing::Binomial5,
            Smoothing::Binomial7,
            Smoothing::Gauss7,
        ];
        let ops = [Operator::Sobel, Operator::Scharr];
        let mags = [Magnitude::L1, Magnitude::L2Approx, Magnitude::L2Round];
        let mut most = 0;
        let (mut i, mut j, mut k, mut fb) = (0, 0, 0, 0u8);
        while i < sm.len() {
            while j < ops.len() {
                while k < mags.len() {
                    while fb <= 2 {
                        let c = EdgeConfig {
                            smoothing: sm[i],
                            operator: ops[j],
                            frac_bits: fb,
                            magnitude: mags[k],
                            thresholds: ThresholdRule::Auto {
                                shift: 0,
                                high_permille: 500,
                                low_ratio_u0f16: 1,
                                first_low: 1,
                                first_high: 1,
                            },
                            thinning: Thinning::Off,
                            suppression: Suppression::Sectors,
                        };
                        if c.bins_needed() > most {
                            most = c.bins_needed();
                        }
                        fb += 1;
                    }
                    fb = 0;
                    k += 1;
                }
                k = 0;
                j += 1;
            }
            j = 0;
            i += 1;
        }
        most
    }
    type Test<const CAP: usize> = EdgeStream<TW, { map_words(TW, TH) }, TBINS, CAP>;

    /// What the whole-frame kernels give, one after another.
    struct Whole {
        edges: Vec<u8>,
        gx: Vec<i16>,
        gy: Vec<i16>,
        sup: Vec<u16>,
    }

    fn whole(cfg: &EdgeConfig, img: &[u8], w: usize, h: usize, t: &Thresholds) -> Whole {
        let (fx, fy) = cfg.gradient_filters().unwrap();
        let n = w * h;
        let (mut gx, mut gy) = (vec![0i16; n], vec![0i16; n]);
        let mut scratch = vec![0i32; w];
        let src = ImageView::new(img, w, h, w).unwrap();
        fx.apply(
            &src,
            &mut ImageViewMut::new(&mut gx, w, h, w).unwrap(),
            &mut scratch,
        )
        .unwrap();
        fy.apply(
            &src,
            &mut ImageViewMut::new(&mut gy, w, h, w).unwrap(),
            &mut scratch,
        )
        .unwrap();
        let (mut mag, mut dir) = (vec![0u16; n], vec![0u8; n]);
        {
            let (vx, vy) = (
                ImageView::new(&gx, w, h, w).unwrap(),
                ImageView::new(&gy, w, h, w).unwrap(),
            );
            let mut m = ImageViewMut::new(&mut mag, w, h, w).unwrap();
            match cfg.magnitude {
                Magnitude::L1 => gradient::magnitude_l1(&vx, &vy, &mut m),
                Magnitude::L2Approx => gradient::magnitude_l2_approx(&vx, &vy, &mut m),
                Magnitude::L2Round => gradient::magnitude_l2_round(&vx, &vy, &mut m),
            }
            .unwrap();
            gradient::direction(&vx, &vy, &mut ImageViewMut::new(&mut dir, w, h, w).unwrap())
                .unwrap();
        }
        let mut sup = vec![0u16; n];
        match cfg.suppression {
            Suppression::Sectors => nms::suppress(
                &ImageView::new(&mag, w, h, w).unwrap(),
                &ImageView::new(&dir, w, h, w).unwrap(),
                &mut ImageViewMut::new(&mut sup, w, h, w).unwrap(),
            ),
            Suppression::Interpolated => nms::suppress_interpolated(
                &ImageView::new(&mag, w, h, w).unwrap(),
                &ImageView::new(&gx, w, h, w).unwrap(),
                &ImageView::new(&gy, w, h, w).unwrap(),
                &mut ImageViewMut::new(&mut sup, w, h, w).unwrap(),
            ),
        }
        .unwrap();
        let mut edges = vec![0u8; n];
        hysteresis::classify(
            &ImageView::new(&sup, w, h, w).unwrap(),
            t,
            &mut ImageViewMut::new(&mut edges, w, h, w).unwrap(),
        )
        .unwrap();
        let mut map = ImageViewMut::new(&mut edges, w, h, w).unwrap();
        hysteresis::link(&mut map, &mut [0u32; 8]).unwrap();
        let mut ring = vec![0u8; 3 * w];
        match cfg.thinning {
            Thinning::Off => {}
            Thinning::UntilStable => {
                thinning::thin(&mut map, &mut ring).unwrap();
            }
            Thinning::AtMost(k) => {
                thinning::thin_at_most(&mut map, &mut ring, k as u32).unwrap();
            }
        }
        Whole { edges, gx, gy, sup }
    }

    /// Frame from a seed: a few bright bars and discs on a ramp with noise.
    fn frame(seed: u64, w: usize, h: usize) -> Vec<u8> {
        let mut s = seed | 1;
        let mut next = || {
            s = s
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (s >> 33) as u32
        };
        let (cx, cy, r) = (next() % 40, next() % 30, 2 + next() % 9);
        let (bx, bw) = (next() % 40, 1 + next() % 6);
        let amp = 30 + next() % 200;
        // One frame in three without noise: plateaus and exact ties.
        let noise = if next() % 3 == 0 { 1 } else { 1 + next() % 40 };
        (0..w * h)
            .map(|i| {
                let (x, y) = ((i % w) as i64, (i / w) as i64);
                let mut v = 20 + (x + 2 * y) as u32;
                let (dx, dy) = (x - cx as i64, y - cy as i64);
                if dx * dx + dy * dy < (r * r) as i64 {
                    v += amp;
                }
                if (bx as i64..(bx + bw) as i64).contains(&x) {
                    v += amp / 2;
                }
                v += next() % noise;
                v.min(255) as u8
            })
            .collect()
    }

    fn config() -> impl Strategy<Value = EdgeConfig> {
        let smoothing = prop_oneof![
            Just(Smoothing::None),
            Just(Smoothing::Binomial3),
            Just(Smoothing::Binomial5),
            Just(Smoothing::Binomial7),
            Just(Smoothing::Gauss7)
        ];
        let op = prop_oneof![Just(Operator::Sobel), Just(Operator::Scharr)];
        let mag = prop_oneof![
            Just(Magnitude::L1),
            Just(Magnitude::L2Approx),
            Just(Magnitude::L2Round)
        ];
        let thin = prop_oneof![
            Just(Thinning::Off),
            Just(Thinning::UntilStable),
            (1u16..3).prop_map(Thinning::AtMost)
        ];
        let rule = prop_oneof![
            (1u16..200, 0u16..300).prop_map(|(l, d)| ThresholdRule::Fixed {
                low: l,
                high: l + d
            }),
            (0u8..5, 500u16..999, 1u16..=u16::MAX, 1u16..100, 0u16..200).prop_map(
                |(shift, p, f, l, d)| ThresholdRule::Auto {
                    shift,
                    high_permille: p,
                    low_ratio_u0f16: f,
                    first_low: l,
                    first_high: l + d,
                }
            ),
        ];
        let suppression = prop_oneof![Just(Suppression::Sectors), Just(Suppression::Interpolated)];
        (smoothing, op, 0u8..3, mag, rule, (thin, suppression))
            .prop_map(|(sm, op, fb, mg, rule, (th, sup))| {
                let fb = fb.min(2 * sm.taps().1 as u8);
                EdgeConfig {
                    smoothing: sm,
                    operator: op,
                    frac_bits: fb,
                    magnitude: mg,
                    thresholds: rule,
                    thinning: th,
                    suppression: sup,
                }
            })
            // Scharr with L1 magnitudes and bins of width 1 needs more
            // histogram bins than the test stream has.
            .prop_filter("histogram fits the test stream", |c| {
                c.bins_needed() <= TBINS
            })
    }

    /// Checks a finished frame against the whole-frame chain.
    fn same_as_whole<const CAP: usize>(
        s: &Test<CAP>,
        cfg: &EdgeConfig,
        img: &[u8],
        w: usize,
        h: usize,
    ) -> core::result::Result<(), TestCaseError> {
        let rep = s.report().unwrap();
        let t = Thresholds::new(rep.thresholds.0, rep.thresholds.1).unwrap();
        let want = whole(cfg, img, w, h, &t);
        let mut row = vec![0u8; w];
        for y in 0..h {
            s.edge_row(y, &mut row).unwrap();
            prop_assert_eq!(&row[..], &want.edges[y * w..(y + 1) * w], "row {}", y);
        }
        let mut n = 0u32;
        for p in s.points().unwrap() {
            let i = p.y as usize * w + p.x as usize;
            prop_assert!(want.edges[i] != 0);
            if let Some(g) = p.gradient {
                prop_assert_eq!(g, (want.gx[i], want.gy[i]));
            }
            n += 1;
        }
        prop_assert_eq!(n, rep.edge_points);
        prop_assert_eq!(n as usize, want.edges.iter().filter(|&&v| v != 0).count());
        let cands = want.sup.iter().filter(|&&m| m >= t.low()).count();
        prop_assert_eq!(rep.candidates as usize, cands);
        prop_assert_eq!(rep.gradients_dropped as usize, cands.saturating_sub(CAP));
        if let ThresholdRule::Auto {
            shift,
            high_permille,
            low_ratio_u0f16,
            ..
        } = cfg.thresholds
        {
            let mut hist = vec![0u32; cfg.bins_needed()];
            let next = Thresholds::from_histogram(
                &ImageView::new(&want.sup, w, h, w).unwrap(),
                &mut hist,
                shift as u32,
                high_permille,
                U0F16::from_bits(low_ratio_u0f16),
            )
            .unwrap();
            prop_assert_eq!(rep.next_thresholds, (next.low(), next.high()));
            // No suppressed magnitude reaches past the last bin.
            let top = want.sup.iter().max().copied().unwrap_or(0) as usize >> shift;
            prop_assert!(top < cfg.bins_needed());
        } else {
            prop_assert_eq!(rep.next_thresholds, rep.thresholds);
        }
        Ok(())
    }

    /// Two frames from the seeds through one stream, each checked against
    /// the whole-frame chain (the second uses the thresholds the first
    /// derived).
    fn two_frames(
        cfg: &EdgeConfig,
        w: usize,
        h: usize,
        seeds: [u64; 2],
    ) -> core::result::Result<(), TestCaseError> {
        let mut s: Box<Test<64>> = Box::default();
        s.configure(cfg, w, h).unwrap();
        for sd in seeds {
            let img = frame(sd, w, h);
            push_frame(&mut s, &img, w);
            s.finish().unwrap();
            same_as_whole(&s, cfg, &img, w, h)?;
        }
        Ok(())
    }

    fn push_frame<const CAP: usize>(s: &mut Test<CAP>, img: &[u8], w: usize) {
        for r in img.chunks_exact(w) {
            s.push_row(r).unwrap();
        }
    }

    #[test]
    fn demo_taps_are_the_host_chain_taps() {
        // The fused taps are symmetric / antisymmetric for every preset, as
        // the folded passes assume.
        for sm in [
            Smoothing::None,
            Smoothing::Binomial3,
            Smoothing::Binomial5,
            Smoothing::Binomial7,
            Smoothing::Gauss7,
        ] {
            for op in [Operator::Sobel, Operator::Scharr] {
                let c = EdgeConfig {
                    smoothing: sm,
                    operator: op,
                    frac_bits: 0,
                    ..DEMO
                };
                let t = c.gradient_taps();
                let (d, x, r) = (t.deriv(), t.cross(), t.radius());
                assert_eq!(d[r], 0);
                for k in 1..=r {
                    assert_eq!(d[r + k], -d[r - k]);
                    assert_eq!(x[r + k], x[r - k]);
                }
                // Sum of the cross taps: smoothing sum times the operator's.
                let want =
                    (1i32 << sm.taps().1) * op.cross().iter().map(|&v| v as i32).sum::<i32>();
                assert_eq!(x.iter().map(|&v| v as i32).sum::<i32>(), want);
                assert!(c.check().is_ok(), "{sm:?} {op:?}");
            }
        }
    }

    #[test]
    fn qvga_and_vga_sizes_from_the_types() {
        type Qvga = EdgeStream<320, { map_words(320, 240) }, { DEMO.bins_needed() }, 0>;
        type Vga = EdgeStream<640, { map_words(640, 480) }, { DEMO.bins_needed() }, 0>;
        // The buffers of the module docs' table, plus a few words of state.
        let bins = DEMO.bins_needed();
        let q = 9 * 320 + 6 * 320 + 4 * 320 + 4 * 4800 + 4 * bins;
        assert!(Qvga::ram_bytes() >= q && Qvga::ram_bytes() < q + 256);
        let v = 9 * 640 + 6 * 640 + 4 * 640 + 4 * 19200 + 4 * bins;
        assert!(Vga::ram_bytes() >= v && Vga::ram_bytes() < v + 256);
    }

    #[test]
    fn rgb565_luma_is_within_one_of_bt601() {
        // ITU-R BT.601: Y = 0.299 R + 0.587 G + 0.114 B.
        for p in 0..=u16::MAX {
            let r = ((p >> 11) & 31) as f64;
            let g = ((p >> 5) & 63) as f64;
            let b = (p & 31) as f64;
            // The channels widened by repeating their top bits (our rule).
            let (r8, g8, b8) = (
                r * 8.0 + (r / 4.0).floor(),
                g * 4.0 + (g / 16.0).floor(),
                b * 8.0 + (b / 4.0).floor(),
            );
            let y = 0.299 * r8 + 0.587 * g8 + 0.114 * b8;
            let got = rgb565_luma(p) as f64;
            assert!((got - y).abs() <= 1.0, "{p:#06x}: {got} vs {y}");
        }
    }

    #[test]
    fn raw_samples_round_half_up() {
        for bits in 9..=16u32 {
            let s = bits - 8;
            for v in 0..(1u32 << bits) {
                let want = ((v as f64 / (1u64 << s) as f64) + 0.5).floor().min(255.0);
                assert_eq!(raw_to_u8(v as u16, bits) as f64, want, "{v} at {bits} bits");
            }
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(24))]

        /// The demo taps run their own loops (constant taps, and the column
        /// sums compiled per ring rotation for the rows whose window is
        /// not clamped): frames of 9 to `TH` rows take every rotation.
        #[test]
        fn demo_taps_stream_equals_the_whole_frame_kernels(
            interpolated in any::<bool>(), w in 1usize..=TW, h in 9usize..=TH,
            seed in any::<u64>(), seed2 in any::<u64>()
        ) {
            let cfg = EdgeConfig {
                suppression: if interpolated {
                    Suppression::Interpolated
                } else {
                    Suppression::Sectors
                },
                ..DEMO
            };
            two_frames(&cfg, w, h, [seed, seed2])?;
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(96))]

        #[test]
        fn stream_equals_the_whole_frame_kernels(
            cfg in config(), w in 1usize..=TW, h in 1usize..=TH, seed in any::<u64>(),
            seed2 in any::<u64>()
        ) {
            two_frames(&cfg, w, h, [seed, seed2])?;
        }

        #[test]
        fn bad_rows_between_good_ones_change_nothing(
            w in 1usize..=TW, h in 1usize..=TH, seed in any::<u64>(),
            bad in proptest::collection::vec((0usize..6, 0usize..80), 1..12)
        ) {
            let cfg = DEMO;
            let mut s: Box<Test<4096>> = Box::default();
            s.configure(&cfg, w, h).unwrap();
            let img = frame(seed, w, h);
            let mut bad = bad.into_iter();
            for (y, r) in img.chunks_exact(w).enumerate() {
                if let Some((kind, len)) = bad.next() {
                    let before = s.rows_pushed();
                    let err = match kind {
                        0 => s.push_row(&vec![1u8; if len == w { w + 1 } else { len }]),
                        1 => s.push_yuyv(&vec![1u8; if len == 2 * w { 1 } else { len }]),
                        2 => s.push_rgb565(&vec![1u16; if len == w { w + 2 } else { len }]),
                        3 => s.push_raw(&vec![1u16 << 10; w], 10),
                        4 => s.push_raw(&vec![1u16; w], 17),
                        _ => s.finish().map(|_| 0),
                    };
                    prop_assert!(err.is_err());
                    prop_assert_eq!(s.rows_pushed(), before);
                }
                if y % 2 == 0 {
                    s.push_row(r).unwrap();
                } else {
                    // The DMA path.
                    s.next_row_slot().unwrap().copy_from_slice(r);
                    s.commit_row().unwrap();
                }
            }
            prop_assert!(s.push_row(&img[..w]).is_err());
            s.finish().unwrap();
            same_as_whole(&s, &cfg, &img, w, h)?;
        }

        #[test]
        fn a_short_frame_is_the_frame_of_its_rows(
            w in 1usize..=TW, h in 2usize..=TH, seed in any::<u64>(), cut in 1usize..TH
        ) {
            let cut = cut.min(h - 1);
            let cfg = DEMO;
            let mut s: Box<Test<8>> = Box::default();
            s.configure(&cfg, w, h).unwrap();
            let img = frame(seed, w, h);
            push_frame(&mut s, &img[..cut * w], w);
            let row_count = matches!(s.finish(), Err(Error::RowCount { .. }));
            prop_assert!(row_count);
            let rep = s.finish_short().unwrap();
            prop_assert_eq!(rep.height as usize, cut);
            same_as_whole(&s, &cfg, &img[..cut * w], w, cut)?;
            // The next frame is full height again, and reset drops a frame.
            s.push_row(&img[..w]).unwrap();
            s.reset();
            push_frame(&mut s, &img, w);
            s.finish().unwrap();
            same_as_whole(&s, &cfg, &img, w, h)?;
        }

        #[test]
        fn packed_camera_rows_give_the_luma_path(
            w in 1usize..=TW, h in 1usize..=TH, seed in any::<u64>(), form in 0usize..4
        ) {
            let img = frame(seed, w, h);
            let mut a: Box<Test<256>> = Box::default();
            let mut b: Box<Test<256>> = Box::default();
            a.configure(&DEMO, w, h).unwrap();
            b.configure(&DEMO, w, h).unwrap();
            for r in img.chunks_exact(w) {
                a.push_row(r).unwrap();
                match form {
                    0 => b.push_yuyv(&r.iter().flat_map(|&v| [v, 77]).collect::<Vec<_>>()),
                    1 => b.push_uyvy(&r.iter().flat_map(|&v| [200, v]).collect::<Vec<_>>()),
                    // 12-bit samples v * 16 + 7 round back to v.
                    2 => b.push_raw(&r.iter().map(|&v| v as u16 * 16 + 7).collect::<Vec<_>>(), 12),
                    // Grey RGB565 (v >> 3 in every channel) against its luma.
                    _ => b.push_rgb565(&r.iter().map(|&v| {
                        let (c5, c6) = ((v >> 3) as u16, (v >> 2) as u16);
                        (c5 << 11) | (c6 << 5) | c5
                    }).collect::<Vec<_>>()),
                }.unwrap();
            }
            a.finish().unwrap();
            b.finish().unwrap();
            if form < 3 {
                prop_assert_eq!(a.points().unwrap().collect::<Vec<_>>(),
                    b.points().unwrap().collect::<Vec<_>>());
            } else {
                prop_assert!(b.report().is_some());
            }
        }
    }

    /// The demo tap set's sector and magnitude (signed squares) against
    /// `direction_sector` and `l2_round`: every gradient up to 300 and a
    /// stride-7 grid up to the bound 2614 with both signs.
    #[test]
    fn demo_sector_and_magnitude_are_the_general_ones() {
        use crate::gradient::{direction_sector, l2_round};
        let g = DEMO.max_gradient() as i32;
        let near = (-300..=300).collect::<Vec<i32>>();
        let far = (-g..=g).step_by(7).chain([-g, g]).collect::<Vec<i32>>();
        for set in [&near, &far] {
            for &x in set.iter() {
                for &y in set.iter() {
                    let v = [x as i16, y as i16];
                    assert_eq!(DemoTaps.sector(v), direction_sector(v[0], v[1]), "{v:?}");
                    assert_eq!(DemoTaps.magnitude(v), l2_round(v[0], v[1]), "{v:?}");
                }
            }
        }
    }

    #[test]
    fn a_plateau_keeps_its_first_pixel() {
        // A clean vertical step: the two columns beside it have equal
        // magnitudes; the tie rule of `nms` keeps the left one only.
        let (w, h) = (24, 16);
        let img: Vec<u8> = (0..w * h)
            .map(|i| if i % w < 12 { 40 } else { 200 })
            .collect();
        let cfg = EdgeConfig {
            thresholds: ThresholdRule::Fixed { low: 1, high: 1 },
            thinning: Thinning::Off,
            ..DEMO
        };
        let mut s: Box<Test<64>> = Box::default();
        s.configure(&cfg, w, h).unwrap();
        push_frame(&mut s, &img, w);
        s.finish().unwrap();
        let pts: Vec<EdgePoint> = s.points().unwrap().collect();
        assert_eq!(pts.len(), h);
        assert!(pts.iter().all(|p| p.x == 11 && p.gradient.unwrap().0 > 0));
        same_as_whole(&s, &cfg, &img, w, h).unwrap();
    }

    #[test]
    fn points_past_the_capacity_have_no_gradient() {
        let (w, h) = (TW, TH);
        let img: Vec<u8> = (0..w * h)
            .map(|i| if (i % w) % 8 < 4 { 10 } else { 240 })
            .collect();
        let cfg = EdgeConfig {
            thresholds: ThresholdRule::Fixed { low: 50, high: 100 },
            ..DEMO
        };
        let mut s: Box<Test<5>> = Box::default();
        s.configure(&cfg, w, h).unwrap();
        push_frame(&mut s, &img, w);
        let rep = s.finish().unwrap();
        assert!(rep.candidates > 5);
        assert_eq!(rep.gradients_dropped, rep.candidates - 5);
        let with: usize = s.points().unwrap().filter(|p| p.gradient.is_some()).count();
        assert!(with <= 5);
        same_as_whole(&s, &cfg, &img, w, h).unwrap();
    }

    #[test]
    fn misuse_is_a_typed_error() {
        let mut s: Box<Test<0>> = Box::default();
        assert!(matches!(
            s.push_row(&[0; 4]),
            Err(Error::StreamOrder { .. })
        ));
        assert!(matches!(s.finish(), Err(Error::StreamOrder { .. })));
        assert!(matches!(s.points(), Err(Error::StreamOrder { .. })));
        assert!(matches!(
            s.configure(&DEMO, TW + 1, 2),
            Err(Error::BufferTooShort { .. })
        ));
        assert!(matches!(
            s.configure(&DEMO, 0, 2),
            Err(Error::ZeroSize { .. })
        ));
        let small: Box<EdgeStream<8, 8, 10, 0>> = Box::default();
        let mut small = small;
        assert!(matches!(
            small.configure(&DEMO, 8, 2),
            Err(Error::BufferTooShort {
                what: "edge stream threshold histogram bins",
                ..
            })
        ));
        s.configure(&DEMO, 4, 1).unwrap();
        assert!(matches!(
            s.push_row(&[0; 5]),
            Err(Error::RowLength {
                expected: 4,
                got: 5,
                ..
            })
        ));
        s.push_row(&[0; 4]).unwrap();
        assert!(s.push_row(&[0; 4]).is_err());
        assert!(s.edge_row(0, &mut [0; 4]).is_err());
        s.finish().unwrap();
        assert!(s.finish().is_err());
        assert!(s.edge_row(1, &mut [0; 4]).is_err());
        assert!(s.edge_row(0, &mut [0; 3]).is_err());
    }
}
