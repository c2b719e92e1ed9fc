//! Line voting in fixed point: a `(rho, theta)` accumulator in caller
//! memory, gated and weighted votes from edge rows (streaming) or single
//! points, lens-corrected points through a control grid, peaks with
//! sub-bin refinement, and segments along a found line.
//!
//! > **Not a safety function.** Lines found here may steer a vehicle that
//! > follows floor markings. Nothing here is developed or assessed as a
//! > safety function; a vehicle that can hurt people needs safety-rated
//! > sensing and control under the standards that apply (for example
//! > ISO 3691-4, IEC 61508, ISO 13849) and the local rules.
//!
//! # Lines and units
//!
//! A line is the normal form of Duda & Hart (1972, "Use of the Hough
//! transformation to detect lines and curves in pictures", CACM 15(1)):
//! `rho = x cos(theta) + y sin(theta)`, x to the right, **y down the
//! rows**, `(x, y)` measured from the **origin** of the voting frame, the
//! centre of pixel `(W >> 1, H >> 1)` of a `W x H` frame (pixel centres at
//! integer coordinates). [`Line`] holds
//!
//! * `rho`: `i32` in Q4 pixels (1/16 px), signed;
//! * `theta`: `u16` binary angle, `65536` units = 180 degrees, in `[0, 180)`;
//! * `votes`: the peak cell's count.
//!
//! Angles inside the accumulator run over a full turn: **binary angle 360**,
//! `2^17 = 131072` units = 360 degrees ([`UNITS_360`]). A column angle
//! `a >= 65536` (180 degrees or more) stands for the same line as
//! `(a - 65536, -rho)`; [`Line::from_turn`] does that fold exactly.
//!
//! # Accumulator geometry ([`VoteParams`])
//!
//! * Theta column `t` (`0 <= t < T`) has angle
//!   `a_t = (theta_start + t * 2^s) mod 2^17`, `s = theta_step_log2`
//!   (`4..=14`: from 0.044 to 45 degrees), `T * 2^s <= 65536` (a window of
//!   at most 180 degrees; it may cross 180 degrees, e.g. `[135, 225)` for
//!   near-vertical markings).
//! * Rho row `b` (`0 <= b < R`, `R` odd) has centre
//!   `rho_b = (b - (R - 1) / 2) * 2^r` Q4 units, `r = rho_step_log2`
//!   (`0..=8`: 1/16 px to 16 px); row `(R - 1) / 2` is `rho = 0`.
//! * Cells are `u16`, row-major by column: cell `(t, b)` is
//!   `cells[t * R + b]`; [`Accumulator::cells_needed`] = `T * R`. Counts
//!   **saturate** at 65535.
//! * The frame is at most 4096 x 4096 pixels.
//!
//! Bins to line units (exact integers): column `t` is binary angle 360
//! `a_t` above, folded by [`Line::from_turn`]; row `b` is `rho_b` Q4 above.
//!
//! # Trigonometric table
//!
//! Column `t` holds `(cos a_t, sin a_t)` as `i16` in Q`q`
//! (`q = trig_frac_bits`, `8..=14`), computed at construction by
//! [`cos_sin`] (integer shift-and-add rotation, no float, no stored sine
//! table). Error against `f64` `cos`/`sin` times `2^q`: at most
//! `0.5 + 2^(q-22)` LSB ([`cos_sin`] derives it; the host tool checks every
//! binary angle).
//!
//! # Voting (integer model)
//!
//! A point is `(x4, y4)`, Q4 pixels relative to the origin (the row forms
//! use `x4 = (x - (W >> 1)) * 16`, `y4 = (y - (H >> 1)) * 16`). Its weight
//! `w` is 1 (unit votes) or, with `weight_shift = Some(k)`,
//! `min(weight >> k, 4095)` from the caller's weight row (a point of
//! weight 0 casts nothing). For every column `t` it votes in (all of them,
//! or the gated ones below):
//!
//! ```text
//! acc = x4 * cos_t + y4 * sin_t                       exact i32, Q(4+q)
//! p   = acc + ((R-1)/2 << (r+q)) + (1 << (r+q-5))     offset to row 0, plus half of 1/16 row
//! b   = p >> (r+q)                                    arithmetic shift (floor)
//! f   = (p >> (r+q-4)) & 15                           position between row b and b+1, 1/16 steps
//! cells[t][b]   += w * (16 - f)    when 0 <= b < R
//! cells[t][b+1] += w * f           when 0 <= b+1 < R and f > 0      (saturating u16 adds)
//! ```
//!
//! so each vote is split linearly between the two rows around its `rho`
//! (rounded half up to 1/16 row), and the vote mass keeps the mean `rho`
//! of the points that cast it. `|acc| <= 2^30` (`|x4|, |y4| <= 2^15`,
//! `|cos|, |sin| <= 2^14`) and construction checks
//! `((R-1)/2 << (r+q)) + 2^(r+q-5) < 2^30`, so nothing overflows.
//!
//! **Orientation gate** (`gate = Some(g)`, `1..=32767` binary units of 180
//! degrees): a point with gradient angle `phi` ([`crate::gradient::angle`],
//! `u16`, 65536 = 180 degrees) votes only in columns whose angle modulo
//! 180 degrees is within `g` of `phi` modulo 180 degrees:
//! `o = (phi - g - theta_start) mod 2^16` is where the gate starts,
//! counted from the window start; the columns are those with
//! `t * 2^s` in `[o, o + 2g]`, taken modulo `2^16` (one or two runs of
//! columns, found with two shifts, no search). The gradient of an edge is
//! normal to it, so its angle is the line's `theta` (mod 180 degrees).
//!
//! Rows may be voted **one at a time** ([`Accumulator::vote_row`], rows in
//! order `0, 1, ..., H-1`, as a camera delivers them) or as a frame
//! ([`Accumulator::vote_frame`], which calls the same row function): the
//! cells are identical bit for bit.
//!
//! # Lens-corrected points
//!
//! [`Accumulator::vote_row_corrected`] takes rows of the raw (distorted)
//! edge map and a control grid ([`crate::warp::ControlGrid`]) **over the
//! source image** whose points hold corrected coordinates: the grid's
//! output size is the source frame, its source size the corrected
//! (voting) frame. Each edge pixel `(x, y)` becomes the grid's coordinate
//! [`ControlGrid::coord`](crate::warp::ControlGrid::coord) (the exact
//! bilinear interpolation of its cell's four points, rounded half up to
//! `F` fractional bits), then Q4: `round_shift(c, F - 4)` for `F >= 4`,
//! `c << (4 - F)` below. Points that land outside the corrected frame are
//! skipped and counted ([`Accumulator::skipped`]). The cost is one grid
//! evaluation per edge point instead of one resampled pixel per frame
//! pixel; no frame buffer is needed. The gradient angle is that of the
//! raw image: the gate must be wide enough for the lens's local rotation
//! of directions (the host tool measures it for the demo lens).
//!
//! # Peaks ([`Accumulator::peaks`])
//!
//! A cell `(t, b)` is a peak when its count is at least `threshold` and it
//! wins against every other cell `(t', b')` with `|t' - t| <= radius_theta`,
//! `|b' - b| <= radius_rho`: it wins when its count is greater, or equal
//! and its index `t * R + b` is smaller (so one cell of a plateau
//! survives). Cells outside the accumulator do not exist (read 0), except
//! that a window of a full half turn (`T * 2^s = 65536`) **wraps**: column
//! `-1` is column `T - 1` and column `T` is column 0, with rows mirrored
//! (`b -> R - 1 - b`), because `(a + 180, -rho)` is the line `(a, rho)`. The `K`
//! strongest peaks (`K` = output capacity) are kept, sorted by count
//! descending, ties by smaller index first.
//!
//! Each peak is refined from its 3 x 3 neighbourhood (same cell rule), in
//! `i64`, with `rdiv(n, d) = floor((2n + d) / (2d))` for `d > 0`
//! (division rounded half up):
//!
//! ```text
//! m(u) = C[u][b-1] + C[u][b] + C[u][b+1]            for u = t-1, t, t+1
//! h(u) = max(C[u][b-1], C[u][b], C[u][b+1])
//! c(u) = rho_b + rdiv((C[u][b+1] - C[u][b-1]) << r, m(u))    (rho_b when m(u) = 0)
//! den  = 2 * (2 h(t) - h(t-1) - h(t+1))
//! off  = clamp(rdiv((h(t+1) - h(t-1)) << s, den), -2^(s-1), 2^(s-1))   (0 when den <= 0)
//! rho  = c(t) + rdiv((c(u) - c(t)) * |off|, 2^s)   with u = t+1 if off > 0, t-1 if off < 0,
//!                                                  when that column exists and m(u) > 0; else c(t)
//! a    = (theta_start + t * 2^s + off) mod 2^17  ->  Line::from_turn(a, rho, C[t][b])
//! ```
//!
//! `c(u)` is the centroid of the column's vote mass (the mean `rho` of the
//! points, since votes are split linearly), `off` the vertex of the
//! parabola through the three columns' peak heights `h(u)` (three-point
//! parabolic interpolation of a sampled peak; common practice, no source),
//! and `rho` the centroid moved to the refined angle along its neighbour
//! column. The heights, not the masses, locate the angle: a line's votes
//! in a column away from its angle spread over more rows than the three
//! summed, and a second line a few rows away (the other edge of a tape)
//! adds to the masses but not to the peak height.
//!
//! # Segments ([`segments`])
//!
//! Walks an edge map along a [`Line`] and returns the runs of edge pixels
//! with at least `min_length` steps and gaps of at most `max_gap` steps.
//! Memory: no scratch, a few words of state and the caller's output slice.
//! Integer model in [`segments`].
//!
//! ```
//! use fixsight::lines::{Accumulator, PeakParams, Peak, VoteParams};
//! // A vertical line x = 5 in a 16 x 12 frame (origin at pixel (8, 6)).
//! let mut edges = [0u8; 16 * 12];
//! for y in 0..12 { edges[y * 16 + 5] = 255; }
//! let p = VoteParams { width: 16, height: 12, theta_start: 0, theta_step_log2: 11,
//!     theta_bins: 32, rho_step_log2: 4, rho_bins: 21, trig_frac_bits: 14,
//!     gate: None, weight_shift: None };
//! let mut cells = [0u16; 32 * 21];
//! let mut trig = [[0i16; 2]; 32];
//! let mut acc = Accumulator::new(p, &mut cells, &mut trig)?;
//! acc.vote_frame(&fixsight::ImageView::new(&edges, 16, 12, 16)?, None, None)?;
//! let mut out = [Peak::default(); 1];
//! let n = acc.peaks(&PeakParams { threshold: 16, radius_theta: 2, radius_rho: 2 }, &mut out)?;
//! assert_eq!(n, 1);
//! // Normal along +x, refined 9 units (0.025 degree) off: the line's rows
//! // -6..=5 lie unevenly about the origin, so the neighbour columns' peak
//! // heights differ.
//! assert_eq!(out[0].line.theta, 9);
//! assert_eq!(out[0].line.rho, -3 * 16);    // x = 5 is 3 px left of the origin
//! # Ok::<(), fixsight::Error>(())
//! ```

use crate::arith::round_shift;
use crate::error::{Error, Result};
use crate::gradient::{self, CORDIC_ATAN};
use crate::image::ImageView;
use crate::ops::{tally, Op};
use crate::warp::ControlGrid;

/// Binary-angle units of a full turn (`2^17` = 360 degrees).
pub const UNITS_360: u32 = 1 << 17;
/// Binary-angle units of a half turn (`2^16` = 180 degrees), the unit of
/// [`Line::theta`].
pub const UNITS_180: u32 = 1 << 16;
/// Largest frame width or height the accumulator accepts.
pub const MAX_FRAME: usize = 4096;
/// Largest vote weight (so that `16 * weight` fits a `u16` cell).
pub const MAX_WEIGHT: u32 = 4095;
/// Iterations of [`cos_sin`].
pub const TRIG_ITERATIONS: usize = 24;
/// `round(2^30 / K)`, `K = prod_{i<24} sqrt(1 + 2^-2i)`: the start length
/// of [`cos_sin`]'s rotation, so that the result has length `2^30`.
pub const TRIG_START: i32 = 652_032_874;

/// A line in normal form (see the module docs for units and origin).
///
/// ```
/// use fixsight::lines::Line;
/// // 270 degrees with rho 5 px is the same line as 90 degrees with rho -5 px.
/// let l = Line::from_turn(3 * 32768, 80, 7);
/// assert_eq!((l.theta, l.rho, l.votes), (32768, -80, 7));
/// ```
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Line {
    /// Signed distance from the origin, Q4 pixels (1/16 px).
    pub rho: i32,
    /// Angle of the normal, binary angle, `65536` = 180 degrees, `[0, 180)`.
    pub theta: u16,
    /// Count of the peak cell.
    pub votes: u16,
}

impl Line {
    /// The line of a binary-angle-360 angle `a` (taken modulo `2^17`) and
    /// `rho`: `a < 2^16` gives `(a, rho)`, else `(a - 2^16, -rho)`.
    ///
    /// ```
    /// use fixsight::lines::Line;
    /// assert_eq!(Line::from_turn(100, -16, 1), Line { rho: -16, theta: 100, votes: 1 });
    /// assert_eq!(Line::from_turn(131072 + 100, -16, 1).theta, 100); // modulo a turn
    /// ```
    pub fn from_turn(a: u32, rho: i32, votes: u16) -> Self {
        let a = a & (UNITS_360 - 1);
        if a >= UNITS_180 {
            Line {
                rho: rho.saturating_neg(),
                theta: (a - UNITS_180) as u16,
                votes,
            }
        } else {
            Line {
                rho,
                theta: a as u16,
                votes,
            }
        }
    }
}

/// `(cos a, sin a)` in Q`frac_bits` (`8..=14`, so `1.0` fits `i16`) for a
/// binary angle `a` with `2^17` units per turn (taken modulo a turn).
///
/// Integer model: reduce to `z` in `[-90, 90]` degrees (`a <= 2^15`: `a`;
/// `a < 3 * 2^15`: `a - 2^16` and negate the results; else `a - 2^17`),
/// `z <<= 14` (units of `2^30` per 180 degrees), `x = TRIG_START`, `y = 0`;
/// 24 iterations `i`: with `dx = y >> i`, `dy = x >> i`, when `z >= 0`:
/// `x -= dx, y += dy, z -= CORDIC_ATAN[i]`, else `x += dx, y -= dy,
/// z += CORDIC_ATAN[i]`; results `round_shift(x, 30 - q)`,
/// `round_shift(y, 30 - q)`.
///
/// Error bound: residual angle at most `atan(2^-23) < 1.2e-7`, shift
/// truncation below `24 * 2 * 1.65 * 2^-30 < 7.4e-8`, start-length
/// rounding below `1e-9`: before the final rounding the values are within
/// `2^-22` of `cos a`, `sin a`, so the result is within
/// `0.5 + 2^(q-22)` LSB of the exact value times `2^q`.
///
/// ```
/// use fixsight::lines::cos_sin;
/// assert_eq!(cos_sin(0, 14), (16384, 0));
/// assert_eq!(cos_sin(32768, 14), (0, 16384));       // 90 degrees
/// assert_eq!(cos_sin(65536, 14), (-16384, 0));      // 180 degrees
/// assert_eq!(cos_sin(16384, 14), (11585, 11585));   // 45 degrees: 16384 / sqrt 2 = 11585.2
/// ```
pub fn cos_sin(a: u32, frac_bits: u32) -> (i16, i16) {
    let q = frac_bits.clamp(8, 14);
    let a = (a & (UNITS_360 - 1)) as i32;
    let (z0, neg) = if a <= 1 << 15 {
        (a, false)
    } else if a < 3 << 15 {
        (a - (1 << 16), true)
    } else {
        (a - (1 << 17), false)
    };
    let mut z = z0 << 14;
    let (mut x, mut y) = (TRIG_START, 0i32);
    for (i, &t) in CORDIC_ATAN.iter().enumerate().take(TRIG_ITERATIONS) {
        let (dx, dy) = (y >> i, x >> i);
        if z >= 0 {
            x -= dx;
            y += dy;
            z -= t;
        } else {
            x += dx;
            y -= dy;
            z += t;
        }
    }
    let (c, s) = (round_shift(x, 30 - q), round_shift(y, 30 - q));
    if neg {
        (-c as i16, -s as i16)
    } else {
        (c as i16, s as i16)
    }
}

/// Accumulator geometry and voting rules (module docs). Checked by
/// [`VoteParams::check`] and at [`Accumulator::new`].
///
/// ```
/// use fixsight::lines::VoteParams;
/// let p = VoteParams::DEMO_QVGA;
/// assert_eq!(p.cells(), 32 * 201);
/// assert_eq!(p.bytes(), 32 * 201 * 2 + 32 * 4); // 12992 bytes: fits 16 KiB
/// assert!(p.check().is_ok());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct VoteParams {
    /// Frame width in pixels (`1..=4096`).
    pub width: usize,
    /// Frame height in pixels (`1..=4096`).
    pub height: usize,
    /// Angle of column 0, binary angle 360 (`< 2^17`).
    pub theta_start: u32,
    /// Column step `2^s` binary-360 units, `s` in `4..=14`.
    pub theta_step_log2: u32,
    /// Columns `T >= 1`, with `T * 2^s <= 65536` (at most 180 degrees).
    pub theta_bins: usize,
    /// Row step `2^r` Q4 units, `r` in `0..=8`.
    pub rho_step_log2: u32,
    /// Rows `R`, odd, `1..=4095`.
    pub rho_bins: usize,
    /// Fractional bits `q` of the trigonometric table, `8..=14`.
    pub trig_frac_bits: u32,
    /// Orientation gate half-width (binary units, 65536 = 180 degrees,
    /// `1..=32767`), or `None` to vote in every column.
    pub gate: Option<u16>,
    /// `None`: unit votes; `Some(k)` (`k <= 15`): weight `min(w >> k, 4095)`
    /// from the caller's weight row.
    pub weight_shift: Option<u32>,
}

impl VoteParams {
    /// The demo configuration for 320 x 240: columns every 2.8125 degrees
    /// over `[135, 225)` degrees (lines within 45 degrees of vertical, as
    /// floor markings seen by a forward camera), rows every 2 px over
    /// `-200..=200` px (the half diagonal), Q14 table, gate +-15 degrees
    /// (5461 units), unit votes: 32 x 201 cells, 12992 bytes with the
    /// table. Chosen on the known-line cases of the host tool (rows of 2 px
    /// keep the two edges of a tape apart; 4 px rows with 1.4 degree
    /// columns recovered fewer lines in the same memory).
    ///
    /// ```
    /// assert_eq!(fixsight::lines::VoteParams::DEMO_QVGA.theta_start, 49152); // 135 degrees
    /// ```
    pub const DEMO_QVGA: VoteParams = VoteParams {
        width: 320,
        height: 240,
        theta_start: 49152,
        theta_step_log2: 10,
        theta_bins: 32,
        rho_step_log2: 5,
        rho_bins: 201,
        trig_frac_bits: 14,
        gate: Some(5461),
        weight_shift: None,
    };

    /// Cells `T * R`.
    ///
    /// ```
    /// assert_eq!(fixsight::lines::VoteParams::DEMO_QVGA.cells(), 6432);
    /// ```
    pub const fn cells(&self) -> usize {
        self.theta_bins.saturating_mul(self.rho_bins)
    }

    /// Bytes of caller memory: `2 * T * R` (cells) `+ 4 * T` (table).
    ///
    /// ```
    /// assert_eq!(fixsight::lines::VoteParams::DEMO_QVGA.bytes(), 12992);
    /// ```
    pub const fn bytes(&self) -> usize {
        self.cells()
            .saturating_mul(2)
            .saturating_add(self.theta_bins.saturating_mul(4))
    }

    /// Checks every field (ranges in the field docs and the overflow bound
    /// of the module docs).
    ///
    /// ```
    /// let mut p = fixsight::lines::VoteParams::DEMO_QVGA;
    /// p.rho_bins = 100; // even
    /// assert!(p.check().is_err());
    /// ```
    pub fn check(&self) -> Result<()> {
        let bad = |name: &'static str, expected: &'static str, got: i64| {
            Err(Error::BadParameter {
                name,
                expected,
                got,
            })
        };
        if self.width == 0 || self.height == 0 {
            return Err(Error::ZeroSize {
                width: self.width,
                height: self.height,
            });
        }
        if self.width > MAX_FRAME || self.height > MAX_FRAME {
            return Err(Error::TooLarge {
                width: self.width,
                height: self.height,
                limit: MAX_FRAME,
            });
        }
        if self.theta_start >= UNITS_360 {
            return bad(
                "theta_start",
                "0..131072 (binary angle, 131072 = 360 degrees)",
                self.theta_start as i64,
            );
        }
        if !(4..=14).contains(&self.theta_step_log2) {
            return bad("theta_step_log2", "4..=14", self.theta_step_log2 as i64);
        }
        if self.theta_bins == 0 || self.theta_bins > (UNITS_180 as usize >> self.theta_step_log2) {
            return bad(
                "theta_bins",
                "1..=65536 >> theta_step_log2 (a window of at most 180 degrees)",
                self.theta_bins as i64,
            );
        }
        if self.rho_step_log2 > 8 {
            return bad("rho_step_log2", "0..=8", self.rho_step_log2 as i64);
        }
        if !(8..=14).contains(&self.trig_frac_bits) {
            return bad("trig_frac_bits", "8..=14", self.trig_frac_bits as i64);
        }
        if self.rho_bins % 2 == 0 || self.rho_bins > 4095 {
            return bad("rho_bins", "odd, 1..=4095", self.rho_bins as i64);
        }
        let sh = self.rho_step_log2 + self.trig_frac_bits;
        let offset = (((self.rho_bins as i64 - 1) / 2) << sh) + (1i64 << (sh - 5));
        if offset >= 1 << 30 {
            return bad(
                "rho_bins",
                "((rho_bins - 1) / 2) << (rho_step_log2 + trig_frac_bits) below 2^30",
                self.rho_bins as i64,
            );
        }
        if let Some(g) = self.gate {
            if g == 0 || g > 32767 {
                return bad("gate", "1..=32767 (65536 = 180 degrees)", g as i64);
            }
        }
        if let Some(k) = self.weight_shift {
            if k > 15 {
                return bad("weight_shift", "0..=15", k as i64);
            }
        }
        Ok(())
    }

    /// The gate of a point with gradient angle `angle` (module docs,
    /// "Orientation gate"), half-width `g`, as a run of **unwrapped**
    /// columns `(first, count)`: with `o = (angle - g - theta_start) mod
    /// 2^16`, `first = ceil(o / 2^s)` and `count = floor((o + 2g) / 2^s) + 1
    /// - first` (the multiples of `2^s` in `[o, o + 2g]`). Unwrapped column
    /// `j` is column `j mod (65536 >> s)` when that is below `T`.
    ///
    /// ```
    /// let p = fixsight::lines::VoteParams::DEMO_QVGA;
    /// // Angle 0 (an edge across x): 180 degrees is column 16 of [135, 225).
    /// let (first, count) = p.gate_run(0, 5461);
    /// assert_eq!((first, count), (11, 11)); // columns 11..=21: 166 to 194 degrees
    /// ```
    pub fn gate_run(&self, angle: u16, g: u16) -> (u32, u32) {
        let s = self.theta_step_log2.clamp(4, 14);
        let o = (angle as u32)
            .wrapping_sub(g as u32)
            .wrapping_sub(self.theta_start)
            & (UNITS_180 - 1);
        let end = o + 2 * g as u32; // inclusive, may pass 2^16
        let first = (o + (1 << s) - 1) >> s;
        let last = (end >> s) + 1; // exclusive
        (first, last - first)
    }

    /// The gate of `angle` as one byte, for storing per point: bits 7..1
    /// hold `first mod (65536 >> s)`, bit 0 is `count - floor(2g / 2^s)`
    /// (0 or 1), with `(first, count)` of [`VoteParams::gate_run`]. Voting
    /// with the code ([`VoteParams::gate_of_code`]) casts exactly the votes
    /// of the angle: a run that starts at `65536 >> s` is the run that
    /// starts at 0, and the run holds either `floor(2g / 2^s)` or one more
    /// multiples of `2^s`. `None` without a gate, or when
    /// `theta_step_log2 < 9` (then `first` needs more than 7 bits).
    ///
    /// ```
    /// let p = fixsight::lines::VoteParams::DEMO_QVGA;
    /// let code = p.gate_code(0).unwrap();
    /// assert_eq!(p.gate_of_code(code), p.gate_run(0, 5461));
    /// ```
    pub fn gate_code(&self, angle: u16) -> Option<u8> {
        let g = self.gate?;
        if self.theta_step_log2 < 9 || self.theta_step_log2 > 14 {
            return None;
        }
        let s = self.theta_step_log2;
        let period = UNITS_180 >> s;
        let (first, count) = self.gate_run(angle, g);
        let long = count - ((2 * g as u32) >> s);
        Some((((first % period) << 1) | (long & 1)) as u8)
    }

    /// The run `(first, count)` of a [`VoteParams::gate_code`] byte
    /// (`(0, 0)` without a gate).
    ///
    /// ```
    /// let p = fixsight::lines::VoteParams::DEMO_QVGA;
    /// assert_eq!(p.gate_of_code(0b0001_0111), (11, 11)); // first 11, long run
    /// ```
    pub fn gate_of_code(&self, code: u8) -> (u32, u32) {
        match self.gate {
            None => (0, 0),
            Some(g) => {
                let s = self.theta_step_log2.clamp(4, 14);
                (
                    (code >> 1) as u32,
                    ((2 * g as u32) >> s) + (code & 1) as u32,
                )
            }
        }
    }

    /// Angle of column `t`, binary angle 360.
    fn column_angle(&self, t: usize) -> u32 {
        (self.theta_start + ((t as u32) << self.theta_step_log2)) & (UNITS_360 - 1)
    }

    /// Centre of row `b` in Q4 pixels.
    ///
    /// ```
    /// let p = fixsight::lines::VoteParams::DEMO_QVGA;
    /// assert_eq!(p.rho_of_row(100), 0);
    /// assert_eq!(p.rho_of_row(0), -200 * 16);
    /// ```
    pub fn rho_of_row(&self, b: usize) -> i32 {
        (b as i32 - (self.rho_bins as i32 - 1) / 2) << self.rho_step_log2
    }

    /// The line of cell `(t, b)` without refinement
    /// ([`Line::from_turn`] of the column angle and row centre).
    ///
    /// ```
    /// let p = fixsight::lines::VoteParams::DEMO_QVGA;
    /// // Column 16 is 135 + 45 = 180 degrees: theta 0 with rho negated.
    /// assert_eq!(p.line_of_cell(16, 101, 9).theta, 0);
    /// assert_eq!(p.line_of_cell(16, 101, 9).rho, -32);
    /// ```
    pub fn line_of_cell(&self, t: usize, b: usize, votes: u16) -> Line {
        Line::from_turn(self.column_angle(t), self.rho_of_row(b), votes)
    }
}

/// One row of an edge map, with what gating and weighting need.
///
/// ```
/// use fixsight::lines::EdgeRow;
/// let e = [0u8, 255, 0];
/// let r = EdgeRow::plain(&e);
/// assert!(r.gx.is_none() && r.weights.is_none());
/// ```
#[derive(Debug, Clone, Copy)]
pub struct EdgeRow<'r> {
    /// Edge flags, one per pixel; nonzero marks an edge point.
    pub edges: &'r [u8],
    /// Horizontal gradient (needed when the parameters gate).
    pub gx: Option<&'r [i16]>,
    /// Vertical gradient (needed when the parameters gate).
    pub gy: Option<&'r [i16]>,
    /// Vote weights (needed when the parameters weight votes).
    pub weights: Option<&'r [u16]>,
}

impl<'r> EdgeRow<'r> {
    /// A row with edge flags only.
    ///
    /// ```
    /// let r = fixsight::lines::EdgeRow::plain(&[1u8]);
    /// assert_eq!(r.edges.len(), 1);
    /// ```
    pub fn plain(edges: &'r [u8]) -> Self {
        Self {
            edges,
            gx: None,
            gy: None,
            weights: None,
        }
    }

    /// A row with edge flags and gradients (for gated voting).
    ///
    /// ```
    /// let r = fixsight::lines::EdgeRow::with_gradient(&[1u8], &[3i16], &[4i16]);
    /// assert!(r.gy.is_some());
    /// ```
    pub fn with_gradient(edges: &'r [u8], gx: &'r [i16], gy: &'r [i16]) -> Self {
        Self {
            edges,
            gx: Some(gx),
            gy: Some(gy),
            weights: None,
        }
    }
}

/// Peak selection settings.
///
/// ```
/// let p = fixsight::lines::PeakParams::DEMO;
/// assert!(p.threshold > 0);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PeakParams {
    /// Smallest count of a peak (`>= 1`).
    pub threshold: u16,
    /// Suppression half-width in columns (`0..=theta_bins`).
    pub radius_theta: usize,
    /// Suppression half-width in rows (`0..=rho_bins`).
    pub radius_rho: usize,
}

impl PeakParams {
    /// Demo settings for [`VoteParams::DEMO_QVGA`] with unit votes: at
    /// least 40 points (640 = 40 x 16), suppression over +-1 column
    /// (2.8 degrees) and +-1 row (2 px), so the two edges of a tape a few
    /// pixels wide stay apart.
    ///
    /// ```
    /// assert_eq!(fixsight::lines::PeakParams::DEMO.threshold, 640);
    /// ```
    pub const DEMO: PeakParams = PeakParams {
        threshold: 640,
        radius_theta: 1,
        radius_rho: 1,
    };

    /// Checks the settings against the accumulator they will search:
    /// `threshold >= 1`, `radius_theta <= theta_bins` and
    /// `radius_rho <= rho_bins` (a wider neighbourhood would only visit
    /// the same cells again, so it is refused rather than looped over).
    ///
    /// Errors: [`Error::BadParameter`] naming the field.
    ///
    /// ```
    /// use fixsight::lines::{PeakParams, VoteParams};
    /// let v = VoteParams::DEMO_QVGA;
    /// assert!(PeakParams::DEMO.check(&v).is_ok());
    /// let wide = PeakParams { radius_theta: v.theta_bins + 1, ..PeakParams::DEMO };
    /// assert!(wide.check(&v).is_err());
    /// ```
    pub fn check(&self, vote: &VoteParams) -> Result<()> {
        let bad = |name: &'static str, expected: &'static str, got: usize| {
            Err(Error::BadParameter {
                name,
                expected,
                got: i64::try_from(got).unwrap_or(i64::MAX),
            })
        };
        if self.threshold == 0 {
            return bad("threshold", "1..=65535", 0);
        }
        if self.radius_theta > vote.theta_bins {
            return bad("radius_theta", "0..=theta_bins", self.radius_theta);
        }
        if self.radius_rho > vote.rho_bins {
            return bad("radius_rho", "0..=rho_bins", self.radius_rho);
        }
        Ok(())
    }
}

/// A peak: its cell, its count and its refined line.
///
/// ```
/// let p = fixsight::lines::Peak::default();
/// assert_eq!(p.votes, 0);
/// ```
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Peak {
    /// Column `t`.
    pub theta_bin: u16,
    /// Row `b`.
    pub rho_bin: u16,
    /// Count of the cell.
    pub votes: u16,
    /// The refined line (module docs).
    pub line: Line,
}

/// `floor((2n + d) / (2d))` for `d > 0`: `n / d` rounded half up.
fn rdiv(n: i64, d: i64) -> i64 {
    (2 * n + d).div_euclid(2 * d)
}

/// The vote accumulator over caller memory (cells and trigonometric table).
///
/// ```
/// use fixsight::lines::{Accumulator, VoteParams};
/// let p = VoteParams::DEMO_QVGA;
/// let mut cells = vec![0u16; p.cells()];
/// let mut trig = vec![[0i16; 2]; p.theta_bins];
/// let mut acc = Accumulator::new(p, &mut cells, &mut trig)?;
/// acc.vote_point(160 * 16, 0, Some(0), 1)?;   // top row, above the origin; gradient along x
/// assert_eq!(acc.points(), 1);
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug)]
pub struct Accumulator<'a> {
    p: VoteParams,
    cells: &'a mut [u16],
    trig: &'a mut [[i16; 2]],
    next_row: usize,
    points: u32,
    columns: u32,
    skipped: u32,
}

impl<'a> Accumulator<'a> {
    /// Cells a configuration needs (`T * R`).
    ///
    /// ```
    /// let p = fixsight::lines::VoteParams::DEMO_QVGA;
    /// assert_eq!(fixsight::lines::Accumulator::cells_needed(&p), 6432);
    /// ```
    pub fn cells_needed(p: &VoteParams) -> usize {
        p.cells()
    }

    /// Checks `p`, zeroes the cells and fills the table (one
    /// `[cos, sin]` per column). `cells` needs `T * R` entries and `trig`
    /// `T`; longer buffers are fine.
    ///
    /// ```
    /// use fixsight::lines::{Accumulator, VoteParams};
    /// let p = VoteParams::DEMO_QVGA;
    /// let (mut cells, mut trig) = (vec![0u16; 10], vec![[0i16; 2]; 32]);
    /// assert!(Accumulator::new(p, &mut cells, &mut trig).is_err());
    /// ```
    pub fn new(p: VoteParams, cells: &'a mut [u16], trig: &'a mut [[i16; 2]]) -> Result<Self> {
        p.check()?;
        let n = p.cells();
        if cells.len() < n {
            return Err(Error::BufferTooShort {
                what: "accumulator cells",
                needed: n,
                got: cells.len(),
            });
        }
        if trig.len() < p.theta_bins {
            return Err(Error::BufferTooShort {
                what: "accumulator trigonometric table",
                needed: p.theta_bins,
                got: trig.len(),
            });
        }
        let cells = &mut cells[..n];
        let trig = &mut trig[..p.theta_bins];
        for (t, e) in trig.iter_mut().enumerate() {
            let (c, s) = cos_sin(p.column_angle(t), p.trig_frac_bits);
            *e = [c, s];
        }
        let mut acc = Self {
            p,
            cells,
            trig,
            next_row: 0,
            points: 0,
            columns: 0,
            skipped: 0,
        };
        acc.reset();
        Ok(acc)
    }

    /// Zeroes the cells and counters for a new frame (the table stays).
    ///
    /// ```
    /// # use fixsight::lines::{Accumulator, VoteParams};
    /// # let p = VoteParams::DEMO_QVGA;
    /// # let (mut c, mut t) = (vec![0u16; p.cells()], vec![[0i16; 2]; 32]);
    /// let mut acc = Accumulator::new(p, &mut c, &mut t)?;
    /// acc.vote_point(0, 0, Some(0), 1)?;
    /// acc.reset();
    /// assert!(acc.cells().iter().all(|&v| v == 0));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn reset(&mut self) {
        self.cells.fill(0);
        self.next_row = 0;
        self.points = 0;
        self.columns = 0;
        self.skipped = 0;
    }

    /// The parameters.
    ///
    /// ```
    /// # use fixsight::lines::{Accumulator, VoteParams};
    /// # let p = VoteParams::DEMO_QVGA;
    /// # let (mut c, mut t) = (vec![0u16; p.cells()], vec![[0i16; 2]; 32]);
    /// let acc = Accumulator::new(p, &mut c, &mut t)?;
    /// assert_eq!(acc.params(), &p);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn params(&self) -> &VoteParams {
        &self.p
    }

    /// The cells, `cells[t * R + b]`.
    ///
    /// ```
    /// # use fixsight::lines::{Accumulator, VoteParams};
    /// # let p = VoteParams::DEMO_QVGA;
    /// # let (mut c, mut t) = (vec![0u16; p.cells()], vec![[0i16; 2]; 32]);
    /// let acc = Accumulator::new(p, &mut c, &mut t)?;
    /// assert_eq!(acc.cells().len(), 6432);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn cells(&self) -> &[u16] {
        self.cells
    }

    /// The table, `[cos, sin]` per column in Q`trig_frac_bits`.
    ///
    /// ```
    /// # use fixsight::lines::{Accumulator, VoteParams};
    /// # let p = VoteParams::DEMO_QVGA;
    /// # let (mut c, mut t) = (vec![0u16; p.cells()], vec![[0i16; 2]; 32]);
    /// let acc = Accumulator::new(p, &mut c, &mut t)?;
    /// assert_eq!(acc.table()[16], [-16384, 0]); // column 16: 180 degrees
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn table(&self) -> &[[i16; 2]] {
        self.trig
    }

    /// Points that cast votes since the last reset (saturating).
    ///
    /// ```
    /// # use fixsight::lines::{Accumulator, VoteParams};
    /// # let p = VoteParams::DEMO_QVGA;
    /// # let (mut c, mut t) = (vec![0u16; p.cells()], vec![[0i16; 2]; 32]);
    /// let acc = Accumulator::new(p, &mut c, &mut t)?;
    /// assert_eq!(acc.points(), 0);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn points(&self) -> u32 {
        self.points
    }

    /// Columns voted in since the last reset, over all points (saturating):
    /// `columns() / points()` is the cost of a point in column updates.
    ///
    /// ```
    /// # use fixsight::lines::{Accumulator, VoteParams};
    /// # let mut p = VoteParams::DEMO_QVGA;
    /// p.gate = None;
    /// # let (mut c, mut t) = (vec![0u16; p.cells()], vec![[0i16; 2]; 32]);
    /// let mut acc = Accumulator::new(p, &mut c, &mut t)?;
    /// acc.vote_point(0, 0, None, 1)?;
    /// assert_eq!(acc.columns(), 32);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn columns(&self) -> u32 {
        self.columns
    }

    /// Corrected points that fell outside the frame and were skipped
    /// ([`vote_row_corrected`](Self::vote_row_corrected)).
    ///
    /// ```
    /// # use fixsight::lines::{Accumulator, VoteParams};
    /// # let p = VoteParams::DEMO_QVGA;
    /// # let (mut c, mut t) = (vec![0u16; p.cells()], vec![[0i16; 2]; 32]);
    /// let acc = Accumulator::new(p, &mut c, &mut t)?;
    /// assert_eq!(acc.skipped(), 0);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn skipped(&self) -> u32 {
        self.skipped
    }

    /// The next row [`vote_row`](Self::vote_row) expects.
    ///
    /// ```
    /// # use fixsight::lines::{Accumulator, EdgeRow, VoteParams};
    /// # let mut p = VoteParams::DEMO_QVGA;
    /// # p.gate = None;
    /// # let (mut c, mut t) = (vec![0u16; p.cells()], vec![[0i16; 2]; 32]);
    /// let mut acc = Accumulator::new(p, &mut c, &mut t)?;
    /// acc.vote_row(0, &EdgeRow::plain(&[0u8; 320]))?;
    /// assert_eq!(acc.next_row(), 1);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn next_row(&self) -> usize {
        self.next_row
    }

    /// Votes one point at `(x_q4, y_q4)`, Q4 pixels from the centre of the
    /// top-left pixel (so `(16 * x, 16 * y)` is pixel `(x, y)`), with
    /// gradient angle `angle` (required when gating) and raw weight
    /// `weight` (scaled by `weight_shift`; ignored for unit votes).
    ///
    /// Errors: a point outside `0..=16 (W-1)` x `0..=16 (H-1)` ->
    /// [`Error::PointOutside`]; gating without an angle ->
    /// [`Error::BadParameter`].
    ///
    /// ```
    /// # use fixsight::lines::{Accumulator, VoteParams};
    /// # let p = VoteParams::DEMO_QVGA;
    /// # let (mut c, mut t) = (vec![0u16; p.cells()], vec![[0i16; 2]; 32]);
    /// let mut acc = Accumulator::new(p, &mut c, &mut t)?;
    /// assert!(acc.vote_point(320 * 16, 0, Some(0), 1).is_err()); // one past the last column
    /// assert!(acc.vote_point(0, 0, None, 1).is_err());           // the demo gates: angle needed
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn vote_point(
        &mut self,
        x_q4: i32,
        y_q4: i32,
        angle: Option<u16>,
        weight: u16,
    ) -> Result<()> {
        let (xm, ym) = (
            (self.p.width as i32 - 1) * 16,
            (self.p.height as i32 - 1) * 16,
        );
        if !(0..=xm).contains(&x_q4) || !(0..=ym).contains(&y_q4) {
            return Err(Error::PointOutside {
                x_q4,
                y_q4,
                width: self.p.width,
                height: self.p.height,
            });
        }
        if self.p.gate.is_some() && angle.is_none() {
            return Err(Error::BadParameter {
                name: "angle",
                expected: "a gradient angle when the parameters gate",
                got: -1,
            });
        }
        let w = self.weight_of(weight);
        let (ox, oy) = self.origin_q4();
        self.vote_q4(x_q4 - ox, y_q4 - oy, angle.unwrap_or(0), w);
        Ok(())
    }

    /// The origin in Q4 pixels from the top-left pixel centre.
    fn origin_q4(&self) -> (i32, i32) {
        (
            ((self.p.width >> 1) as i32) * 16,
            ((self.p.height >> 1) as i32) * 16,
        )
    }

    fn weight_of(&self, raw: u16) -> u32 {
        match self.p.weight_shift {
            None => 1,
            Some(k) => ((raw as u32) >> k).min(MAX_WEIGHT),
        }
    }

    /// Checks a row's buffers against the frame width and the parameters,
    /// and the row order.
    fn check_row(&self, y: usize, row: &EdgeRow<'_>, width: usize) -> Result<()> {
        if y != self.next_row {
            return Err(Error::StreamOrder {
                reason:
                    "edge rows must be voted in order 0, 1, ..., height - 1 (reset starts a frame)",
            });
        }
        if row.edges.len() < width {
            return Err(Error::BufferTooShort {
                what: "edge row",
                needed: width,
                got: row.edges.len(),
            });
        }
        if self.p.gate.is_some() {
            for (g, what) in [(row.gx, "gx row"), (row.gy, "gy row")] {
                let got = g.map_or(0, <[i16]>::len);
                if got < width {
                    return Err(Error::BufferTooShort {
                        what,
                        needed: width,
                        got,
                    });
                }
            }
        }
        if self.p.weight_shift.is_some() {
            let got = row.weights.map_or(0, <[u16]>::len);
            if got < width {
                return Err(Error::BufferTooShort {
                    what: "weight row",
                    needed: width,
                    got,
                });
            }
        }
        Ok(())
    }

    /// Angle and weight of pixel `x` of a checked row.
    #[inline(always)]
    fn angle_weight(&self, row: &EdgeRow<'_>, x: usize) -> (u16, u32) {
        let a = match (self.p.gate, row.gx, row.gy) {
            (Some(_), Some(gx), Some(gy)) => gradient::angle(gx[x], gy[x]),
            _ => 0,
        };
        let w = match row.weights {
            Some(ws) if self.p.weight_shift.is_some() => self.weight_of(ws[x]),
            _ => 1,
        };
        (a, w)
    }

    /// Votes row `y` of the edge map (the streaming form: rows must come in
    /// order from 0; [`reset`](Self::reset) starts a new frame). Every
    /// pixel `x < W` with `edges[x] != 0` votes as the point `(x, y)`.
    ///
    /// Errors: wrong row order -> [`Error::StreamOrder`]; `y >= H` ->
    /// [`Error::RowRange`]; rows shorter than `W`, or missing gradients
    /// (gating) or weights (weighting) -> [`Error::BufferTooShort`].
    ///
    /// ```
    /// use fixsight::lines::{Accumulator, EdgeRow, VoteParams};
    /// let mut p = VoteParams::DEMO_QVGA;
    /// p.gate = None;
    /// let (mut c, mut t) = (vec![0u16; p.cells()], vec![[0i16; 2]; 32]);
    /// let mut acc = Accumulator::new(p, &mut c, &mut t)?;
    /// let mut row = [0u8; 320];
    /// row[10] = 1;
    /// acc.vote_row(0, &EdgeRow::plain(&row))?;
    /// assert!(acc.vote_row(5, &EdgeRow::plain(&row)).is_err()); // row 1 expected
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn vote_row(&mut self, y: usize, row: &EdgeRow<'_>) -> Result<()> {
        let w = self.p.width;
        if y >= self.p.height {
            return Err(Error::RowRange {
                first_row: y,
                rows: 1,
                height: self.p.height,
            });
        }
        self.check_row(y, row, w)?;
        let (ox, oy) = self.origin_q4();
        let y4 = (y as i32) * 16 - oy;
        let mut seen = 0u32;
        for x in 0..w {
            if row.edges[x] != 0 {
                let (a, wt) = self.angle_weight(row, x);
                self.vote_q4((x as i32) * 16 - ox, y4, a, wt);
                seen += 1;
            }
        }
        tally_scan(w as u32, seen, self.p.gate.is_some());
        self.next_row += 1;
        Ok(())
    }

    /// Votes a whole edge map (`W x H`, single channel), with gradient
    /// images when gating and a weight image when weighting: the row form
    /// for rows `0..H` in order, so the result equals streaming bit for
    /// bit. Starts from the current state (call on a fresh or reset
    /// accumulator).
    ///
    /// ```
    /// use fixsight::lines::{Accumulator, VoteParams};
    /// use fixsight::ImageView;
    /// let mut p = VoteParams::DEMO_QVGA;
    /// p.gate = None;
    /// let (mut c, mut t) = (vec![0u16; p.cells()], vec![[0i16; 2]; 32]);
    /// let mut acc = Accumulator::new(p, &mut c, &mut t)?;
    /// let edges = vec![0u8; 320 * 240];
    /// acc.vote_frame(&ImageView::new(&edges, 320, 240, 320)?, None, None)?;
    /// assert_eq!(acc.points(), 0);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn vote_frame(
        &mut self,
        edges: &ImageView<'_, u8>,
        gradient: Option<(&ImageView<'_, i16>, &ImageView<'_, i16>)>,
        weights: Option<&ImageView<'_, u16>>,
    ) -> Result<()> {
        let expected = (self.p.width, self.p.height);
        let check = |what: &'static str, w: usize, h: usize, c: usize| -> Result<()> {
            if (w, h) != expected {
                return Err(Error::SizeMismatch {
                    what,
                    expected,
                    got: (w, h),
                });
            }
            if c != 1 {
                return Err(Error::UnsupportedChannels {
                    channels: c,
                    accepted: "1 (single-channel edge, gradient and weight images)",
                });
            }
            Ok(())
        };
        check(
            "edge map vs vote frame",
            edges.width(),
            edges.height(),
            edges.channels(),
        )?;
        if let Some((gx, gy)) = gradient {
            check("gx vs vote frame", gx.width(), gx.height(), gx.channels())?;
            check("gy vs vote frame", gy.width(), gy.height(), gy.channels())?;
        }
        if let Some(wv) = weights {
            check(
                "weights vs vote frame",
                wv.width(),
                wv.height(),
                wv.channels(),
            )?;
        }
        for y in 0..self.p.height {
            let row = EdgeRow {
                edges: edges.row_at(y),
                gx: gradient.map(|g| g.0.row_at(y)),
                gy: gradient.map(|g| g.1.row_at(y)),
                weights: weights.map(|w| w.row_at(y)),
            };
            self.vote_row(y, &row)?;
        }
        Ok(())
    }

    /// Votes row `y` of a **raw** (distorted) edge map in corrected
    /// coordinates: each edge pixel goes through `grid` (module docs,
    /// "Lens-corrected points"). The grid's output size must be the raw
    /// frame (`row` lengths, `y` range) and its source size this
    /// accumulator's frame. Rows in order from 0, as for
    /// [`vote_row`](Self::vote_row).
    ///
    /// ```
    /// use fixsight::lines::{Accumulator, EdgeRow, VoteParams};
    /// use fixsight::warp::{ControlGrid, WarpGeometry};
    /// // Identity grid over an 8 x 8 raw frame, 4 fractional bits.
    /// let g = WarpGeometry::new(8, 8, 8, 8, 4)?;
    /// let s = 4 * 16;
    /// let pts = [0, 0, s, 0, 2 * s, 0, 0, s, s, s, 2 * s, s, 0, 2 * s, s, 2 * s, 2 * s, 2 * s];
    /// let grid = ControlGrid::new(&pts, g, 2)?;
    /// let p = VoteParams { width: 8, height: 8, theta_start: 0, theta_step_log2: 12,
    ///     theta_bins: 16, rho_step_log2: 4, rho_bins: 13, trig_frac_bits: 14,
    ///     gate: None, weight_shift: None };
    /// let (mut c, mut t) = ([0u16; 16 * 13], [[0i16; 2]; 16]);
    /// let mut acc = Accumulator::new(p, &mut c, &mut t)?;
    /// let row = [0u8, 0, 0, 1, 0, 0, 0, 0];
    /// acc.vote_row_corrected(0, &EdgeRow::plain(&row), &grid)?;
    /// assert_eq!(acc.points(), 1);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn vote_row_corrected(
        &mut self,
        y: usize,
        row: &EdgeRow<'_>,
        grid: &ControlGrid<'_>,
    ) -> Result<()> {
        let g = grid.geometry();
        if (g.src_width(), g.src_height()) != (self.p.width, self.p.height) {
            return Err(Error::SizeMismatch {
                what: "grid corrected frame vs vote frame",
                expected: (self.p.width, self.p.height),
                got: (g.src_width(), g.src_height()),
            });
        }
        let (w, h) = (g.out_width(), g.out_height());
        if y >= h {
            return Err(Error::RowRange {
                first_row: y,
                rows: 1,
                height: h,
            });
        }
        self.check_row(y, row, w)?;
        let mut seen = 0u32;
        for x in 0..w {
            if row.edges[x] == 0 {
                continue;
            }
            seen += 1;
            if let Some((x4, y4)) = self.corrected_q4(grid, x, y) {
                let (a, wt) = self.angle_weight(row, x);
                self.vote_q4(x4, y4, a, wt);
            }
        }
        tally_scan(w as u32, seen, self.p.gate.is_some());
        // Grid point: 8 multiplies, 10 add/subs, 2 rounding shifts, cell
        // lookup (2 shifts, 2 compares, 8 loads), Q4 conversion 2 adds + 2 shifts,
        // frame test 4 compares.
        tally(Op::Mul, 8 * seen);
        tally(Op::AddSub, 14 * seen);
        tally(Op::Shift, 6 * seen);
        tally(Op::Logic, 6 * seen);
        tally(Op::Load, 8 * seen);
        tally(Op::Branch, 2 * seen);
        self.next_row += 1;
        Ok(())
    }

    /// Raw pixel `(x, y)` through `grid`, in Q4 relative to the origin
    /// (module docs, "Lens-corrected points"); `None` when the grid has no
    /// coordinate for it, or when the corrected point lies outside the
    /// frame (then counted in [`skipped`](Self::skipped)).
    pub(crate) fn corrected_q4(
        &mut self,
        grid: &ControlGrid<'_>,
        x: usize,
        y: usize,
    ) -> Option<(i32, i32)> {
        let (ox, oy) = self.origin_q4();
        let (xm, ym) = (
            (self.p.width as i32 - 1) * 16,
            (self.p.height as i32 - 1) * 16,
        );
        let (x4, y4) = correct_point(grid, x, y)?;
        if !(0..=xm).contains(&x4) || !(0..=ym).contains(&y4) {
            self.skipped = self.skipped.saturating_add(1);
            return None;
        }
        Some((x4 - ox, y4 - oy))
    }

    /// Pixel `(x, y)` in Q4 relative to the origin (no lens correction).
    pub(crate) fn plain_q4(&self, x: usize, y: usize) -> (i32, i32) {
        let (ox, oy) = self.origin_q4();
        ((x as i32) * 16 - ox, (y as i32) * 16 - oy)
    }

    /// Votes a point relative to the origin in every column of its gate.
    #[inline]
    fn vote_q4(&mut self, x4: i32, y4: i32, angle: u16, w: u32) {
        if w == 0 {
            return;
        }
        self.points = self.points.saturating_add(1);
        let p = &self.p;
        let t_max = p.theta_bins;
        match p.gate {
            None => self.vote_columns(0, t_max, x4, y4, w),
            Some(g) => {
                let (first, count) = p.gate_run(angle, g);
                self.vote_run(first, count, x4, y4, w);
                // Gate arithmetic: 4 add/subs, 2 masks, 4 shifts, 3 compares.
                tally(Op::AddSub, 4);
                tally(Op::Logic, 5);
                tally(Op::Shift, 4);
                tally(Op::Branch, 2);
            }
        }
    }

    /// Votes the gate run `first .. first + count` of unwrapped columns
    /// ([`VoteParams::gate_run`]): column `j` for `j < P`, column `j - P`
    /// past it (`P = 65536 >> s`, the columns of a half turn), each only
    /// when below `T`. This is the rule of the module docs: the run
    /// `[o, o + 2g]` taken modulo `2^16`.
    #[inline]
    fn vote_run(&mut self, first: u32, count: u32, x4: i32, y4: i32, w: u32) {
        let t_max = self.p.theta_bins;
        let period = UNITS_180 >> self.p.theta_step_log2;
        let end = first + count;
        if end <= period {
            self.vote_columns(first as usize, (end as usize).min(t_max), x4, y4, w);
        } else {
            self.vote_columns(first as usize, (period as usize).min(t_max), x4, y4, w);
            self.vote_columns(0, ((end - period) as usize).min(t_max), x4, y4, w);
        }
    }

    /// Votes a point (Q4, relative to the origin) with unit weight through
    /// a gate code of [`VoteParams::gate_code`]: equal to voting the point
    /// with any angle of that code. Parameters without a gate vote every
    /// column whatever the code; gated parameters with no code vote
    /// nothing.
    pub(crate) fn vote_coded(&mut self, x4: i32, y4: i32, code: Option<u8>) {
        match (self.p.gate, code) {
            (None, _) => self.vote_q4(x4, y4, 0, 1),
            (Some(_), None) => {}
            (Some(_), Some(c)) => {
                self.points = self.points.saturating_add(1);
                let (first, count) = self.p.gate_of_code(c);
                self.vote_run(first, count, x4, y4, 1);
                // Code decoding: 2 shifts, a mask, an add.
                tally(Op::Shift, 2);
                tally(Op::Logic, 1);
                tally(Op::AddSub, 1);
            }
        }
    }

    /// Votes columns `t0..t1` (empty when `t0 >= t1`).
    #[inline]
    fn vote_columns(&mut self, t0: usize, t1: usize, x4: i32, y4: i32, w: u32) {
        if t0 >= t1 {
            return;
        }
        let r = self.p.rho_bins;
        let sh = self.p.rho_step_log2 + self.p.trig_frac_bits;
        let off = ((((r as i32) - 1) / 2) << sh) + (1 << (sh - 5));
        let (lo_w, hi_w) = (16 * w, w);
        for t in t0..t1 {
            let [c, s] = self.trig[t];
            let p = x4 * c as i32 + y4 * s as i32 + off;
            let b = p >> sh;
            let f = ((p >> (sh - 4)) & 15) as u32;
            let col = &mut self.cells[t * r..(t + 1) * r];
            if b >= 0 && (b as usize) < r {
                let cell = &mut col[b as usize];
                *cell = cell.saturating_add((lo_w - hi_w * f) as u16);
            }
            let b1 = b + 1;
            if f > 0 && b1 >= 0 && (b1 as usize) < r {
                let cell = &mut col[b1 as usize];
                *cell = cell.saturating_add((hi_w * f) as u16);
            }
        }
        let n = (t1 - t0) as u32;
        self.columns = self.columns.saturating_add(n);
        // Per column: 2 table loads, 1 mul + 1 mac, offset add, 2 shifts,
        // mask, 2 weight products (mul), 2 x (range compares, load, add,
        // saturate compare, store), loop branch.
        tally(Op::Load, 4 * n);
        tally(Op::Mul, 3 * n);
        tally(Op::Mac, n);
        tally(Op::AddSub, 5 * n);
        tally(Op::Shift, 2 * n);
        tally(Op::Logic, 7 * n);
        tally(Op::Store, 2 * n);
        tally(Op::Branch, 3 * n);
    }

    /// Whether the window is a full half turn (columns wrap around).
    fn wraps(&self) -> bool {
        (self.p.theta_bins << self.p.theta_step_log2) == UNITS_180 as usize
    }

    /// Index of cell `(t, b)`: columns outside the window wrap when the
    /// window is a full half turn (column `-1` is column `T - 1` with rows
    /// mirrored, `b -> R - 1 - b`, since `(a + 180, -rho)` is the line
    /// `(a, rho)`), otherwise they and rows outside `0..R` have no cell.
    fn index(&self, t: i64, b: i64) -> Option<usize> {
        let (tn, r) = (self.p.theta_bins as i64, self.p.rho_bins as i64);
        let (t, b) = if (0..tn).contains(&t) || !self.wraps() {
            (t, b)
        } else {
            (t.rem_euclid(tn), r - 1 - b)
        };
        if t < 0 || b < 0 || t >= tn || b >= r {
            None
        } else {
            Some((t * r + b) as usize)
        }
    }

    /// Count of cell `(t, b)` (cells outside read 0; see [`Self::index`]).
    fn at(&self, t: i64, b: i64) -> i64 {
        self.index(t, b).map_or(0, |i| self.cells[i] as i64)
    }

    /// Whether cell `(t, b)` wins its suppression neighbourhood.
    fn wins(&self, t: usize, b: usize, pp: &PeakParams) -> bool {
        let idx = t * self.p.rho_bins + b;
        let v = self.cells[idx];
        let (rt, rb) = (pp.radius_theta as i64, pp.radius_rho as i64);
        for dt in -rt..=rt {
            for db in -rb..=rb {
                if let Some(j) = self.index(t as i64 + dt, b as i64 + db) {
                    let n = self.cells[j];
                    if n > v || (n == v && j < idx) {
                        return false;
                    }
                }
            }
        }
        true
    }

    /// Finds up to `out.len()` peaks (module docs: threshold, suppression,
    /// order, ties) and refines them; returns how many were written.
    ///
    /// Errors: empty `out` (K = 0) or settings refused by
    /// [`PeakParams::check`] -> [`Error::BadParameter`].
    ///
    /// ```
    /// # use fixsight::lines::{Accumulator, Peak, PeakParams, VoteParams};
    /// # let p = VoteParams::DEMO_QVGA;
    /// # let (mut c, mut t) = (vec![0u16; p.cells()], vec![[0i16; 2]; 32]);
    /// let acc = Accumulator::new(p, &mut c, &mut t)?;
    /// let mut out = [Peak::default(); 4];
    /// assert_eq!(acc.peaks(&PeakParams::DEMO, &mut out)?, 0);
    /// assert!(acc.peaks(&PeakParams::DEMO, &mut []).is_err());
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn peaks(&self, pp: &PeakParams, out: &mut [Peak]) -> Result<usize> {
        if out.is_empty() {
            return Err(Error::BadParameter {
                name: "peak capacity",
                expected: "at least 1 output slot",
                got: 0,
            });
        }
        pp.check(&self.p)?;
        let (tn, r) = (self.p.theta_bins, self.p.rho_bins);
        let k = out.len();
        let mut n = 0usize;
        let mut compared = 0u32;
        for t in 0..tn {
            for b in 0..r {
                let v = self.cells[t * r + b];
                if v < pp.threshold {
                    continue;
                }
                // Full output and not better than the last kept: skip.
                if n == k && v <= out[k - 1].votes {
                    continue;
                }
                compared += 1;
                if !self.wins(t, b, pp) {
                    continue;
                }
                // Insert after every kept peak with votes >= v (earlier
                // index wins ties, and scanning is in index order).
                let mut at = n;
                while at > 0 && out[at - 1].votes < v {
                    at -= 1;
                }
                let mut i = if n < k { n } else { k - 1 };
                while i > at {
                    out[i] = out[i - 1];
                    i -= 1;
                }
                out[at] = Peak {
                    theta_bin: t as u16,
                    rho_bin: b as u16,
                    votes: v,
                    line: Line::default(),
                };
                n = (n + 1).min(k);
            }
        }
        for pk in out[..n].iter_mut() {
            pk.line = self.refine(pk.theta_bin as usize, pk.rho_bin as usize);
        }
        let cells = (tn * r) as u32;
        let nb = ((2 * pp.radius_theta + 1) * (2 * pp.radius_rho + 1)) as u32;
        tally(Op::Load, cells + compared * nb);
        tally(Op::Logic, cells + 2 * compared * nb);
        tally(Op::Branch, cells + compared * nb);
        Ok(n)
    }

    /// The refined line of peak `(t, b)` (module docs).
    ///
    /// ```
    /// # use fixsight::lines::{Accumulator, VoteParams};
    /// # let p = VoteParams::DEMO_QVGA;
    /// # let (mut c, mut t) = (vec![0u16; p.cells()], vec![[0i16; 2]; 32]);
    /// let acc = Accumulator::new(p, &mut c, &mut t)?;
    /// // An empty neighbourhood refines to the cell itself.
    /// assert_eq!(acc.refine(0, 50), p.line_of_cell(0, 50, 0));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn refine(&self, t: usize, b: usize) -> Line {
        let p = &self.p;
        let (ti, bi) = (t as i64, b as i64);
        let r = p.rho_step_log2;
        let s = p.theta_step_log2;
        let rho_b = p.rho_of_row(b.min(p.rho_bins.saturating_sub(1))) as i64;
        let mass = |u: i64| self.at(u, bi - 1) + self.at(u, bi) + self.at(u, bi + 1);
        let centroid = |u: i64| {
            let m = mass(u);
            if m == 0 {
                rho_b
            } else {
                rho_b + rdiv((self.at(u, bi + 1) - self.at(u, bi - 1)) << r, m)
            }
        };
        let height = |u: i64| {
            self.at(u, bi - 1)
                .max(self.at(u, bi))
                .max(self.at(u, bi + 1))
        };
        let (ml, m0, mr) = (height(ti - 1), height(ti), height(ti + 1));
        let den = 2 * (2 * m0 - ml - mr);
        let half = 1i64 << (s - 1);
        let off = if den <= 0 {
            0
        } else {
            rdiv((mr - ml) << s, den).clamp(-half, half)
        };
        let c0 = centroid(ti);
        let u = if off > 0 { ti + 1 } else { ti - 1 };
        let rho = if off != 0 && u >= 0 && u < p.theta_bins as i64 && mass(u) > 0 {
            c0 + rdiv((centroid(u) - c0) * off.abs(), 1 << s)
        } else {
            c0
        };
        let a = (p.column_angle(t) as i64 + off).rem_euclid(UNITS_360 as i64) as u32;
        let votes = self.at(ti, bi) as u16;
        Line::from_turn(
            a,
            rho.clamp(i32::MIN as i64 + 1, i32::MAX as i64) as i32,
            votes,
        )
    }
}

/// The corrected position of raw pixel `(x, y)` through a correction grid
/// (module docs, "Lens-corrected points"): the grid's coordinate
/// ([`ControlGrid::coord`], `F` fractional bits) converted to Q4 pixels,
/// `round_shift(c, F - 4)` for `F >= 4`, else `c << (4 - F)`. `None` when
/// `(x, y)` lies outside the grid's output (the raw frame).
///
/// ```
/// use fixsight::lines::correct_point;
/// use fixsight::warp::{ControlGrid, WarpGeometry};
/// // A grid that shifts every point by (+1.5, -0.25) px (F = 2).
/// let g = WarpGeometry::new(8, 8, 8, 8, 2)?;
/// let (dx, dy) = (6, -1);
/// let pts = [dx, dy, 32 + dx, dy, dx, 32 + dy, 32 + dx, 32 + dy];
/// let grid = ControlGrid::new(&pts, g, 3)?;
/// assert_eq!(correct_point(&grid, 2, 3), Some((16 * 2 + 24, 16 * 3 - 4)));
/// assert_eq!(correct_point(&grid, 8, 0), None);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn correct_point(grid: &ControlGrid<'_>, x: usize, y: usize) -> Option<(i32, i32)> {
    let f = grid.geometry().frac_bits();
    let to_q4 = |c: i32| {
        if f >= 4 {
            round_shift(c, f - 4)
        } else {
            c << (4 - f)
        }
    };
    grid.coord(x, y).map(|(cx, cy)| (to_q4(cx), to_q4(cy)))
}

/// Counts the scan of one row: a load, a test and a branch per pixel, and
/// per edge point the origin offset, plus the gradient angle when gating.
fn tally_scan(w: u32, points: u32, gated: bool) {
    tally(Op::Load, w);
    tally(Op::Logic, w);
    tally(Op::Branch, w);
    tally(Op::AddSub, 2 * points);
    tally(Op::Shift, points);
    if gated {
        gradient::tally_angles(points as usize);
    }
}

/// Accumulator storage owned by value, sized at compile time: `T` columns
/// and `R` rows of cells plus the table; `const`-constructible, so it can
/// live in a `static` or a firmware's state struct.
///
/// ```
/// use fixsight::lines::{VoteParams, VoteStore};
/// let mut store: VoteStore<32, 201> = VoteStore::new();
/// assert_eq!(core::mem::size_of_val(&store), 12992);
/// let acc = store.accumulator(VoteParams::DEMO_QVGA)?;
/// assert_eq!(acc.cells().len(), 6432);
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug, Clone)]
pub struct VoteStore<const T: usize, const R: usize> {
    cells: [[u16; R]; T],
    trig: [[i16; 2]; T],
}

impl<const T: usize, const R: usize> Default for VoteStore<T, R> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const T: usize, const R: usize> VoteStore<T, R> {
    /// Zeroed storage.
    ///
    /// ```
    /// let s: fixsight::lines::VoteStore<2, 3> = fixsight::lines::VoteStore::new();
    /// # let _ = s;
    /// ```
    pub const fn new() -> Self {
        Self {
            cells: [[0; R]; T],
            trig: [[0; 2]; T],
        }
    }

    /// An accumulator over this storage (zeroed, table filled); `p` must
    /// have `theta_bins <= T` and `theta_bins * rho_bins <= T * R`.
    ///
    /// ```
    /// use fixsight::lines::{VoteParams, VoteStore};
    /// let mut small: VoteStore<8, 9> = VoteStore::new();
    /// assert!(small.accumulator(VoteParams::DEMO_QVGA).is_err());
    /// ```
    pub fn accumulator(&mut self, p: VoteParams) -> Result<Accumulator<'_>> {
        Accumulator::new(p, self.cells.as_flattened_mut(), &mut self.trig)
    }
}

/// Segment walk settings ([`segments`]).
///
/// ```
/// assert_eq!(fixsight::lines::SegmentParams::DEMO.max_gap, 6);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SegmentParams {
    /// Shortest segment, in walk steps (pixels along the walk axis), `>= 1`.
    pub min_length: u16,
    /// Longest gap inside a segment, in walk steps.
    pub max_gap: u16,
    /// Pixels tested on each side of the line across the walk axis (`0..=3`).
    pub tolerance: u8,
}

impl SegmentParams {
    /// Demo: segments of at least 20 px, gaps up to 6 px, +-1 px across.
    ///
    /// ```
    /// assert_eq!(fixsight::lines::SegmentParams::DEMO.min_length, 20);
    /// ```
    pub const DEMO: SegmentParams = SegmentParams {
        min_length: 20,
        max_gap: 6,
        tolerance: 1,
    };
}

/// A segment: endpoints in Q4 pixel coordinates from the centre of the
/// top-left pixel, and its count of edge hits.
///
/// ```
/// let s = fixsight::lines::Segment::default();
/// assert_eq!(s.hits, 0);
/// ```
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Segment {
    /// First endpoint x, Q4.
    pub x0: i32,
    /// First endpoint y, Q4.
    pub y0: i32,
    /// Second endpoint x, Q4.
    pub x1: i32,
    /// Second endpoint y, Q4.
    pub y1: i32,
    /// Steps of the walk that found an edge pixel.
    pub hits: u16,
}

/// Walks `edges` (a `W x H` edge map in the frame of `line`, origin at pixel
/// `(W >> 1, H >> 1)`) along `line` and writes the segments found, in walk
/// order, into `out`; returns how many (at most `out.len()`; the walk stops
/// when `out` is full). Memory: no scratch (a few words of state).
///
/// # Integer model
///
/// `(c, s) = cos_sin(theta, 14)` (theta as binary angle 360). When
/// `|s| >= |c|` the walk axis `i` is x (`0..W`) and the cross axis `j` is
/// y, with `(ci, cj) = (c, s)`; otherwise `i` is y (`0..H`), `j` is x and
/// `(ci, cj) = (s, c)`. With `(oi, oj)` the origin on those axes, the cross
/// coordinate of the line at step `i`, Q16 pixels from the origin, is
///
/// ```text
/// J(i) = base + i * d,   base = rdiv(((rho << 10) + oi * ci) << 16, cj),
///                        d    = rdiv(-ci << 16, cj)
/// ```
///
/// (`i64`; `rdiv` rounds half up, with numerator and divisor negated
/// first when `cj < 0`), and the pixel tested is `j = oj + ((J(i) + 2^15) >> 16)`
/// and its `tolerance` neighbours on each side across the walk. A step
/// **hits** when any of them is inside the map and nonzero. A run opens at
/// a hit, takes every later hit, and closes when more than `max_gap` steps in
/// a row have missed (a gap of `max_gap` misses stays inside) or the walk ends; a closed run of `last - first + 1 >=
/// min_length` steps is a segment from step `first` to step `last`:
/// walk coordinate `16 i`, cross coordinate `16 oj + ((J(i) + 2^11) >> 12)`
/// (Q4, rounded half up).
///
/// Errors: multi-channel map -> [`Error::UnsupportedChannels`];
/// `min_length = 0` or `tolerance > 3` -> [`Error::BadParameter`].
///
/// ```
/// use fixsight::lines::{segments, Line, Segment, SegmentParams};
/// use fixsight::ImageView;
/// // Row y = 2 of a 12 x 5 map, pixels 1..=4 and 8..=10 (gap of 3).
/// let mut m = [0u8; 12 * 5];
/// for x in (1..=4).chain(8..=10) { m[2 * 12 + x] = 1; }
/// // Horizontal line y = 2: normal at 90 degrees, rho = 2 - (5 >> 1) = 0.
/// let line = Line { rho: 0, theta: 32768, votes: 0 };
/// let mut out = [Segment::default(); 4];
/// let sp = SegmentParams { min_length: 3, max_gap: 2, tolerance: 0 };
/// let n = segments(&ImageView::new(&m, 12, 5, 12)?, &line, &sp, &mut out)?;
/// assert_eq!(n, 2);
/// assert_eq!((out[0].x0, out[0].y0, out[0].x1, out[0].y1, out[0].hits), (16, 32, 64, 32, 4));
/// assert_eq!((out[1].x0, out[1].x1), (128, 160));
/// let sp = SegmentParams { max_gap: 3, ..sp };
/// assert_eq!(segments(&ImageView::new(&m, 12, 5, 12)?, &line, &sp, &mut out)?, 1);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn segments(
    edges: &ImageView<'_, u8>,
    line: &Line,
    sp: &SegmentParams,
    out: &mut [Segment],
) -> Result<usize> {
    if edges.channels() != 1 {
        return Err(Error::UnsupportedChannels {
            channels: edges.channels(),
            accepted: "1 (an edge map)",
        });
    }
    if sp.min_length == 0 {
        return Err(Error::BadParameter {
            name: "min_length",
            expected: "1..=65535",
            got: 0,
        });
    }
    if sp.tolerance > 3 {
        return Err(Error::BadParameter {
            name: "tolerance",
            expected: "0..=3",
            got: sp.tolerance as i64,
        });
    }
    let (w, h) = (edges.width(), edges.height());
    let (c, s) = cos_sin(line.theta as u32, 14);
    let along_x = s.unsigned_abs() >= c.unsigned_abs();
    let (n_i, n_j, ci, cj, oi, oj) = if along_x {
        (w, h, c as i64, s as i64, (w >> 1) as i64, (h >> 1) as i64)
    } else {
        (h, w, s as i64, c as i64, (h >> 1) as i64, (w >> 1) as i64)
    };
    let div = |n: i64, d: i64| if d < 0 { rdiv(-n, -d) } else { rdiv(n, d) };
    let base = div((((line.rho as i64) << 10) + oi * ci) << 16, cj);
    let d = div(-ci << 16, cj);
    let tol = sp.tolerance as i64;
    let hit_at = |i: usize, jc: i64| -> bool {
        (jc - tol..=jc + tol).any(|j| {
            if j < 0 || j >= n_j as i64 {
                return false;
            }
            let (x, y) = if along_x {
                (i, j as usize)
            } else {
                (j as usize, i)
            };
            edges.row_at(y)[x] != 0
        })
    };
    let cross = |i: usize| base + i as i64 * d;
    let q4 = |jj: i64| {
        (16 * oj + ((jj + (1 << 11)) >> 12)).clamp(i32::MIN as i64, i32::MAX as i64) as i32
    };
    let mut n = 0usize;
    // (first step, last hit step, hits) of the open run.
    let mut run: Option<(usize, usize, u16)> = None;
    let emit = |first: usize, last: usize, hits: u16, out: &mut [Segment], n: &mut usize| {
        if last - first + 1 >= sp.min_length as usize && *n < out.len() {
            let (a, b) = (cross(first), cross(last));
            let (fi, li) = (16 * first as i32, 16 * last as i32);
            out[*n] = if along_x {
                Segment {
                    x0: fi,
                    y0: q4(a),
                    x1: li,
                    y1: q4(b),
                    hits,
                }
            } else {
                Segment {
                    x0: q4(a),
                    y0: fi,
                    x1: q4(b),
                    y1: li,
                    hits,
                }
            };
            *n += 1;
        }
    };
    let span = (2 * tol + 1) as u32;
    let mut tested = 0u32;
    for i in 0..n_i {
        if n == out.len() {
            break;
        }
        tested += 1;
        let jc = oj + ((cross(i) + (1 << 15)) >> 16);
        if hit_at(i, jc) {
            run = Some(match run {
                None => (i, i, 1),
                Some((f, _, k)) => (f, i, k.saturating_add(1)),
            });
        } else if let Some((f, l, k)) = run {
            if i - l > sp.max_gap as usize {
                emit(f, l, k, out, &mut n);
                run = None;
            }
        }
    }
    if let Some((f, l, k)) = run {
        emit(f, l, k, out, &mut n);
    }
    // Per step: a mul-add and a rounding shift for the cross coordinate,
    // then per tested pixel a range compare, a load and a test.
    tally(Op::Mac, tested);
    tally(Op::AddSub, 2 * tested);
    tally(Op::Shift, tested);
    tally(Op::Load, span * tested);
    tally(Op::Logic, 3 * span * tested);
    tally(Op::Branch, (span + 1) * tested);
    Ok(n)
}
