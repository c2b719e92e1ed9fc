//! Gradient magnitude and direction from a pair of `i16` derivative images.
//!
//! # Integer model
//!
//! Let `ax = |gx|`, `ay = |gy|` with the saturating absolute value
//! ([`crate::arith::abs_sat_i16`]: `-32768` counts as `32767`), so
//! `ax, ay <= 32767`.
//!
//! * **L1 magnitude** ([`magnitude_l1`]): `ax + ay`, exact, `u16`
//!   (at most 65534).
//! * **Approximate L2 magnitude** ([`magnitude_l2_approx`]), an
//!   alpha-max-plus-beta-min estimate with our own coefficients
//!   `alpha = 123/128`, `beta = 51/128`:
//!   `m = (123 * max(ax, ay) + 51 * min(ax, ay) + 64) >> 7`, saturated to
//!   `u16` (the sum is at most `174 * 32767 + 64`, which fits `i32`; the
//!   result is at most 44543, so saturation never triggers). Round half up.
//!   Worst-case relative error against `sqrt(gx^2 + gy^2)`, before the final
//!   rounding: with `t = min/max` in `[0, 1]` the ratio
//!   `(alpha + beta t) / sqrt(1 + t^2)` is largest at `t = beta/alpha`
//!   (value `sqrt(alpha^2 + beta^2)`) and smallest at an end point, so the
//!   bound is `max(sqrt(alpha^2+beta^2) - 1, 1 - alpha, 1 - (alpha+beta)/sqrt 2)
//!   = 4.027 %` (see [`L2_APPROX_REL_ERR_PPM`]); rounding adds at most 0.5 LSB.
//! * **Rounded L2 magnitude** ([`magnitude_l2_round`]): the integer nearest
//!   to `sqrt(ax^2 + ay^2)`, exact. `s = ax^2 + ay^2` is a `u32` (at most
//!   `2 * 32767^2 = 2147352578 < 2^31`); `r = floor(sqrt(s))`, and the
//!   result is `r + 1` when `s - r^2 > r`, else `r`. Only the result is the
//!   contract; a port may take the square root any exact way. Because `s`
//!   is an integer, `sqrt(s)` is never exactly `r + 1/2` (that would need
//!   `s = r^2 + r + 1/4`), so there is no tie and the result is
//!   `round(sqrt(s))` under any rounding rule; at most 46340, so it fits
//!   `u16`. How this crate takes `r` depends on the core (both ways give
//!   the same `r` for every `s < 2^31`; the test
//!   `floor_sqrt_ways_agree_everywhere` runs all of them):
//!   - with a hardware divide (the host, ARMv7-M and later, RV32 with the
//!     `M` extension): `s = 0` gives 0; otherwise, with `z` the leading
//!     zeros of `s`, `u = s << (z & !1)` (top bit at 31 or 30) and
//!     `t = u >> 26` (in `16..64`), the start is
//!     `q = ceil(sqrt((t + 1) * 2^26)) >> (z >> 1)` (a table indexed by
//!     `t`, 64 entries of which the 48 for `t` in `16..64` are used;
//!     within 3.2 % of `sqrt(s)`), then two integer Newton steps
//!     `q = (q + s / q) >> 1` (floor division), and `r = q - 1` when
//!     `q^2 > s`, else `q`. After the first step `q >= floor(sqrt(s))`
//!     (the arithmetic-geometric mean inequality in integers) and each
//!     step about squares the relative error (3.2 %, `5e-4`, `1.2e-7`), so
//!     the second leaves `q` at `r` or `r + 1`;
//!   - without one (ARMv6-M, where a divide is a library call): the
//!     bit-by-bit square root in `k` steps, where `k = 4, 8, 12, 16` for
//!     `s` below `2^8, 2^16, 2^24` or above, `bit` running over
//!     `4^(k-1), ..., 4, 1`; each step forms `t = root + bit`, halves
//!     `root`, and when `rem >= t` subtracts `t` from `rem` and adds `bit`
//!     to `root`; at the end `root = r`.
//! * **Direction** ([`direction_sector`]): the gradient angle
//!   `theta = atan2(gy, gx)` (x to the right, y down the rows), folded to
//!   `[0, 180)` degrees, quantised to the nearest of 0, 45, 90, 135 degrees
//!   and returned as sector `0, 1, 2, 3`. Computed exactly with integer
//!   comparisons, no division and no table:
//!   - sector 0 when `ay < (sqrt 2 - 1) * ax`, tested as `(ax + ay)^2 < 2 ax^2`;
//!   - sector 2 when `ay > (sqrt 2 + 1) * ax`, tested as
//!     `ay > ax && (ay - ax)^2 > 2 ax^2`;
//!   - otherwise sector 1 when `gx` and `gy` have the same sign (both
//!     non-zero), else sector 3.
//!
//!   All squares are `u32` (`(ax + ay)^2 <= 65534^2 < 2^32`). The
//!   boundaries are irrational, so no integer pair lies on one: the result
//!   equals quantising the exact angle. `gx = gy = 0` gives sector 0.
//!
//! ```
//! use fixsight::gradient::{direction_sector, l2_approx};
//! assert_eq!(direction_sector(10, 0), 0);   // gradient along +x
//! assert_eq!(direction_sector(10, 10), 1);  // 45 degrees (down-right)
//! assert_eq!(direction_sector(0, -7), 2);   // vertical
//! assert_eq!(direction_sector(-10, 10), 3); // 135 degrees
//! assert_eq!(l2_approx(300, 400), 504);     // exact: 500
//! ```

use crate::arith::{abs_sat_i16, round_shift, sat_u16};
use crate::error::{Error, Result};
use crate::image::{check_same_size, check_single_channel, ImageView, ImageViewMut};
use crate::ops::{tally_per, Op};

/// `alpha` numerator of the L2 estimate (denominator 128).
pub const L2_ALPHA: i32 = 123;
/// `beta` numerator of the L2 estimate (denominator 128).
pub const L2_BETA: i32 = 51;
/// Shift of the L2 estimate (denominator `2^7 = 128`).
pub const L2_SHIFT: u32 = 7;
/// Worst-case relative error of [`l2_approx`] before final rounding, in
/// parts per million, rounded up: `sqrt(123^2 + 51^2) / 128 - 1`.
pub const L2_APPROX_REL_ERR_PPM: u32 = 40_266;

/// `|gx| + |gy|` (saturating absolute values).
///
/// ```
/// assert_eq!(fixsight::gradient::l1(-3, 4), 7);
/// assert_eq!(fixsight::gradient::l1(-32768, -32768), 65534);
/// ```
#[inline(always)]
pub fn l1(gx: i16, gy: i16) -> u16 {
    abs_sat_i16(gx) + abs_sat_i16(gy)
}

/// Alpha-max-plus-beta-min estimate of `sqrt(gx^2 + gy^2)` (see the module
/// docs for the exact formula and bound).
///
/// ```
/// assert_eq!(fixsight::gradient::l2_approx(100, 0), 96);  // 123*100/128 = 96.09
/// ```
#[inline(always)]
pub fn l2_approx(gx: i16, gy: i16) -> u16 {
    let ax = abs_sat_i16(gx) as i32;
    let ay = abs_sat_i16(gy) as i32;
    let (hi, lo) = if ax >= ay { (ax, ay) } else { (ay, ax) };
    sat_u16((L2_ALPHA * hi + L2_BETA * lo + (1 << (L2_SHIFT - 1))) >> L2_SHIFT)
}

/// Steps of the bit-by-bit square root of `s < 2^32` (two bits of the
/// radicand per step): 4, 8, 12 or 16.
#[inline(always)]
fn sqrt_steps(s: u32) -> u32 {
    if s < 1 << 8 {
        4
    } else if s < 1 << 16 {
        8
    } else if s < 1 << 24 {
        12
    } else {
        16
    }
}

/// `floor(sqrt(s))` in `steps` bit-by-bit steps (`s < 4^steps`).
#[inline(always)]
fn sqrt_bits(s: u32, steps: u32) -> u32 {
    let mut rem = s;
    let mut root = 0u32;
    let mut bit = 1u32 << (2 * (steps - 1));
    for _ in 0..steps {
        let t = root + bit;
        root >>= 1;
        if rem >= t {
            rem -= t;
            root += bit;
        }
        bit >>= 2;
    }
    root
}

/// Start values of [`sqrt_newton`]: `SQRT_SEED[t] = ceil(sqrt((t + 1) *
/// 2^26))`, the root of the top of the interval of `u32` values whose top
/// six bits (normalised to an even shift) are `t`. Only `t` in `16..64`
/// occurs; the table has all 64 entries so that the index `u >> 26` needs
/// no range test.
const SQRT_SEED: [u32; 64] = {
    let mut out = [0u32; 64];
    let mut i = 0;
    while i < 64 {
        let v = ((i as u64) + 1) << 26;
        // Smallest r with r^2 >= v (binary search).
        let (mut lo, mut hi) = (0u64, 1u64 << 17);
        while hi - lo > 1 {
            let mid = (lo + hi) / 2;
            if mid * mid >= v {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        out[i] = hi as u32;
        i += 1;
    }
    out
};

/// `floor(sqrt(s))` by two integer Newton steps from a table start within
/// 3.2 % (`s < 2^31`; see the module docs).
#[inline(always)]
fn sqrt_newton(s: u32) -> u32 {
    if s == 0 {
        return 0;
    }
    // `u = s * 4^k` with its top bit at 31 or 30; `t` its top six bits.
    let z = s.leading_zeros();
    let u = s << (z & !1);
    let t = (u >> 26) as usize;
    let mut q = SQRT_SEED[t] >> (z >> 1);
    for _ in 0..2 {
        // `q >= 1` for `s >= 1`, so the fallback never applies.
        q = (q + s.checked_div(q).unwrap_or(0)) >> 1;
    }
    q - u32::from(q * q > s)
}

/// `true` where a `u32` divide is one instruction (see the module docs).
/// ARMv6-M is the one supported Arm profile with neither a divide nor
/// 32-bit compare-and-swap, so the latter tells the profiles apart.
const HW_DIVIDE: bool = cfg!(any(
    all(target_arch = "arm", target_has_atomic = "32"),
    all(target_arch = "riscv32", target_feature = "m"),
    not(any(target_arch = "arm", target_arch = "riscv32")),
));

/// `floor(sqrt(s))` for `s < 2^31`, the way that suits the core.
#[inline(always)]
fn floor_sqrt(s: u32) -> u32 {
    if HW_DIVIDE {
        sqrt_newton(s)
    } else {
        sqrt_bits(s, sqrt_steps(s))
    }
}

/// The integer nearest to `sqrt(gx^2 + gy^2)` (saturating absolute values;
/// see the module docs for the exact steps). Exact: the error is at most
/// half an LSB and there are no ties.
///
/// ```
/// use fixsight::gradient::l2_round;
/// assert_eq!(l2_round(300, 400), 500);
/// assert_eq!(l2_round(1, 1), 1);     // sqrt 2 = 1.414
/// assert_eq!(l2_round(1, 2), 2);     // sqrt 5 = 2.236
/// assert_eq!(l2_round(-32768, -32768), 46340); // saturated to 32767
/// ```
#[inline(always)]
pub fn l2_round(gx: i16, gy: i16) -> u16 {
    let ax = abs_sat_i16(gx) as u32;
    let ay = abs_sat_i16(gy) as u32;
    round_root(ax * ax + ay * ay)
}

/// The integer nearest to `sqrt(s)` for `s <= 2 * 32767^2` (the last step of
/// [`l2_round`], for callers that form the sum of squares themselves).
#[inline(always)]
pub(crate) fn round_root(s: u32) -> u16 {
    let root = floor_sqrt(s);
    // root = floor(sqrt(s)) <= 46339; round to nearest.
    sat_u16((root + u32::from(s - root * root > root)) as i32)
}

/// Gradient direction quantised to 4 sectors: 0 (0 deg), 1 (45 deg),
/// 2 (90 deg), 3 (135 deg). Exact; see the module docs.
///
/// ```
/// // tan(22.5 deg) = 0.41421...: 41/100 is below it, 42/100 above.
/// assert_eq!(fixsight::gradient::direction_sector(100, 41), 0);
/// assert_eq!(fixsight::gradient::direction_sector(100, 42), 1);
/// ```
#[inline(always)]
pub fn direction_sector(gx: i16, gy: i16) -> u8 {
    let ax = abs_sat_i16(gx) as u32;
    let ay = abs_sat_i16(gy) as u32;
    let s = ax + ay;
    let two_ax2 = 2 * ax * ax;
    if s * s < two_ax2 || s == 0 {
        0
    } else if ay > ax && (ay - ax) * (ay - ax) > two_ax2 {
        2
    } else if (gx > 0) == (gy > 0) {
        1
    } else {
        3
    }
}

/// Checks that the two gradient images and the output share one size and a
/// single channel.
fn check_pair<T: Copy>(
    gx: &ImageView<'_, i16>,
    gy: &ImageView<'_, i16>,
    out: &ImageViewMut<'_, T>,
) -> Result<()> {
    check_single_channel(gx)?;
    check_single_channel(gy)?;
    check_single_channel(&out.as_view())?;
    if gx.width() != gy.width() || gx.height() != gy.height() {
        return Err(Error::SizeMismatch {
            what: "gy vs gx",
            expected: (gx.width(), gx.height()),
            got: (gy.width(), gy.height()),
        });
    }
    check_same_size("gradient output vs gx", gx, out)
}

/// A row-level gradient kernel: `(gx row, gy row, output row)`.
type RowKernel<T> = fn(&[i16], &[i16], &mut [T]) -> Result<()>;

/// Applies a per-pixel function of `(gx, gy)` row by row.
fn map_pair<T: Copy>(
    gx: &ImageView<'_, i16>,
    gy: &ImageView<'_, i16>,
    out: &mut ImageViewMut<'_, T>,
    row_fn: RowKernel<T>,
) -> Result<()> {
    check_pair(gx, gy, out)?;
    for y in 0..gx.height() {
        row_fn(gx.row_at(y), gy.row_at(y), out.row_at_mut(y))?;
    }
    Ok(())
}

/// Checks the three rows of a row-level call and returns their common length.
fn row_len(gx: &[i16], gy: &[i16], out_len: usize) -> Result<usize> {
    let n = gx.len();
    if gy.len() < n {
        return Err(Error::BufferTooShort {
            what: "gy row",
            needed: n,
            got: gy.len(),
        });
    }
    if out_len < n {
        return Err(Error::BufferTooShort {
            what: "gradient output row",
            needed: n,
            got: out_len,
        });
    }
    Ok(n)
}

/// L1 magnitude of one row (the streaming form): `out[i] = l1(gx[i], gy[i])`
/// for `i < gx.len()`.
///
/// ```
/// let mut out = [0u16; 2];
/// fixsight::gradient::magnitude_l1_row(&[1, -2], &[3, 4], &mut out)?;
/// assert_eq!(out, [4, 6]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn magnitude_l1_row(gx: &[i16], gy: &[i16], out: &mut [u16]) -> Result<()> {
    let n = row_len(gx, gy, out.len())?;
    for ((o, &a), &b) in out[..n].iter_mut().zip(gx).zip(gy) {
        *o = l1(a, b);
    }
    // Two loads, two abs (compare + negate), one add, one store, loop branch.
    tally_per(Op::Load, 2, n);
    tally_per(Op::Logic, 2, n);
    tally_per(Op::AddSub, 3, n);
    tally_per(Op::Store, 1, n);
    tally_per(Op::Branch, 1, n);
    Ok(())
}

/// Approximate L2 magnitude of one row: `out[i] = l2_approx(gx[i], gy[i])`.
///
/// ```
/// let mut out = [0u16; 1];
/// fixsight::gradient::magnitude_l2_approx_row(&[30], &[40], &mut out)?;
/// assert_eq!(out, [50]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn magnitude_l2_approx_row(gx: &[i16], gy: &[i16], out: &mut [u16]) -> Result<()> {
    let n = row_len(gx, gy, out.len())?;
    for ((o, &a), &b) in out[..n].iter_mut().zip(gx).zip(gy) {
        *o = l2_approx(a, b);
    }
    // Loads 2, abs 2x(compare+negate), max/min compare 1, mul 1 + mac 1,
    // rounding add 1, shift 1, saturation compares 2, store 1, branch 1.
    tally_per(Op::Load, 2, n);
    tally_per(Op::Logic, 5, n);
    tally_per(Op::AddSub, 3, n);
    tally_per(Op::Mul, 1, n);
    tally_per(Op::Mac, 1, n);
    tally_per(Op::Shift, 1, n);
    tally_per(Op::Store, 1, n);
    tally_per(Op::Branch, 1, n);
    Ok(())
}

/// Rounded L2 magnitude of one row: `out[i] = l2_round(gx[i], gy[i])`.
///
/// Errors: `gy` or `out` shorter than `gx` -> [`Error::BufferTooShort`].
///
/// ```
/// let mut out = [0u16; 2];
/// fixsight::gradient::magnitude_l2_round_row(&[30, -7], &[40, 7], &mut out)?;
/// assert_eq!(out, [50, 10]); // sqrt 98 = 9.899
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn magnitude_l2_round_row(gx: &[i16], gy: &[i16], out: &mut [u16]) -> Result<()> {
    let n = row_len(gx, gy, out.len())?;
    let mut nonzero = 0usize;
    for ((o, &a), &b) in out[..n].iter_mut().zip(gx).zip(gy) {
        *o = l2_round(a, b);
        nonzero += usize::from(a != 0 || b != 0);
    }
    // Counted for the way with a divide (the host's; see the module docs).
    // Per pixel: loads 2, abs 2x(compare+negate), one mul + one mac for the
    // sum of squares, the zero test and its branch, store 1, loop branch 1.
    // Per nonzero sum: leading zeros, a mask, two shifts and a table
    // look-up for the start, a shift to scale it, per Newton step a divide,
    // an add and a shift, then a multiply, compare and subtract for `r`, and
    // a multiply-subtract, compare and add for the rounding.
    tally_per(Op::Logic, 4, nonzero);
    tally_per(Op::Table, 1, nonzero);
    tally_per(Op::AddSub, 4, nonzero);
    tally_per(Op::Shift, 5, nonzero);
    tally_per(Op::Div, 2, nonzero);
    tally_per(Op::Mul, 1, nonzero);
    tally_per(Op::Mac, 1, nonzero);
    Ok(())
}

/// Direction sectors of one row: `out[i] = direction_sector(gx[i], gy[i])`.
///
/// ```
/// let mut out = [9u8; 2];
/// fixsight::gradient::direction_row(&[5, 0], &[0, 5], &mut out)?;
/// assert_eq!(out, [0, 2]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn direction_row(gx: &[i16], gy: &[i16], out: &mut [u8]) -> Result<()> {
    let n = row_len(gx, gy, out.len())?;
    let mut branches = 0usize;
    for ((o, &a), &b) in out[..n].iter_mut().zip(gx).zip(gy) {
        let d = direction_sector(a, b);
        branches += if d == 0 { 1 } else { 2 };
        *o = d;
    }
    // Loads 2, abs 2x(compare+negate), add 1, squares: 1 mul + 1 mul,
    // shift (2 ax^2) 1, compare 1 (+ up to 2 more), store 1, loop branch.
    tally_per(Op::Load, 2, n);
    tally_per(Op::Logic, 3, n);
    tally_per(Op::Logic, 1, branches);
    tally_per(Op::AddSub, 3, n);
    tally_per(Op::Mul, 2, n);
    tally_per(Op::Shift, 1, n);
    tally_per(Op::Store, 1, n);
    tally_per(Op::Branch, 1, n);
    tally_per(Op::Branch, 1, branches);
    Ok(())
}

/// L1 magnitude of a frame.
///
/// ```
/// use fixsight::{gradient, ImageView, ImageViewMut};
/// let (gx, gy, mut m) = ([3i16, -3], [4i16, 4], [0u16; 2]);
/// gradient::magnitude_l1(&ImageView::new(&gx, 2, 1, 2)?, &ImageView::new(&gy, 2, 1, 2)?,
///     &mut ImageViewMut::new(&mut m, 2, 1, 2)?)?;
/// assert_eq!(m, [7, 7]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn magnitude_l1(
    gx: &ImageView<'_, i16>,
    gy: &ImageView<'_, i16>,
    out: &mut ImageViewMut<'_, u16>,
) -> Result<()> {
    map_pair(gx, gy, out, magnitude_l1_row)
}

/// Approximate L2 magnitude of a frame.
///
/// ```
/// use fixsight::{gradient, ImageView, ImageViewMut};
/// let (gx, gy, mut m) = ([0i16], [1000i16], [0u16]);
/// gradient::magnitude_l2_approx(&ImageView::new(&gx, 1, 1, 1)?, &ImageView::new(&gy, 1, 1, 1)?,
///     &mut ImageViewMut::new(&mut m, 1, 1, 1)?)?;
/// assert_eq!(m, [961]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn magnitude_l2_approx(
    gx: &ImageView<'_, i16>,
    gy: &ImageView<'_, i16>,
    out: &mut ImageViewMut<'_, u16>,
) -> Result<()> {
    map_pair(gx, gy, out, magnitude_l2_approx_row)
}

/// Rounded L2 magnitude of a frame ([`l2_round`] per pixel).
///
/// Errors: `gx`, `gy` and `out` must be single-channel and of one size
/// ([`Error::SizeMismatch`], [`Error::UnsupportedChannels`]).
///
/// ```
/// use fixsight::{gradient, ImageView, ImageViewMut};
/// let (gx, gy, mut m) = ([0i16, 5], [1000i16, 5], [0u16; 2]);
/// gradient::magnitude_l2_round(&ImageView::new(&gx, 2, 1, 2)?, &ImageView::new(&gy, 2, 1, 2)?,
///     &mut ImageViewMut::new(&mut m, 2, 1, 2)?)?;
/// assert_eq!(m, [1000, 7]); // sqrt 50 = 7.07
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn magnitude_l2_round(
    gx: &ImageView<'_, i16>,
    gy: &ImageView<'_, i16>,
    out: &mut ImageViewMut<'_, u16>,
) -> Result<()> {
    map_pair(gx, gy, out, magnitude_l2_round_row)
}

/// Direction sectors of a frame.
///
/// ```
/// use fixsight::{gradient, ImageView, ImageViewMut};
/// let (gx, gy, mut d) = ([1i16, -1], [1i16, 1], [0u8; 2]);
/// gradient::direction(&ImageView::new(&gx, 2, 1, 2)?, &ImageView::new(&gy, 2, 1, 2)?,
///     &mut ImageViewMut::new(&mut d, 2, 1, 2)?)?;
/// assert_eq!(d, [1, 3]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn direction(
    gx: &ImageView<'_, i16>,
    gy: &ImageView<'_, i16>,
    out: &mut ImageViewMut<'_, u8>,
) -> Result<()> {
    map_pair(gx, gy, out, direction_row)
}

/// Binary-angle units of a half turn: gradient angles and line angles are
/// `u16` with `65536` units = 180 degrees (one unit = 0.00274658 degrees).
pub const ANGLE_UNITS_180: u32 = 1 << 16;

/// `atan(2^-i)` for `i = 0..24` in units of `2^30` per 180 degrees
/// (`2^28` = 45 degrees), each `round(atan(2^-i) / pi * 2^30)`. The
/// rotation angles of the shift-and-add (CORDIC) iterations used by
/// [`angle`] and by `lines::cos_sin`. Generated and checked against `f64`
/// `atan` by `cordic_table()` in `host-verify/src/lines.rs`.
pub const CORDIC_ATAN: [i32; 24] = [
    268435456, 158466703, 83729454, 42502378, 21333666, 10677233, 5339919, 2670123, 1335082,
    667543, 333772, 166886, 83443, 41722, 20861, 10430, 5215, 2608, 1304, 652, 326, 163, 81, 41,
];

/// Shift-and-add iterations of [`angle`].
pub const ANGLE_ITERATIONS: usize = 15;

/// Worst-case error of [`angle`] against the exact folded `atan2`, in
/// micro-degrees, rounded up (derivation in [`angle`]): residual angle
/// `atan(2^-14)` = 3497.06, final rounding half a unit = 1373.30, shift
/// truncation and table rounding together below 10.
pub const ANGLE_MAX_ERR_MICRODEG: u32 = 4881;

/// Gradient angle as a binary angle: `atan2(gy, gx)` (x to the right, y
/// down the rows) folded to `[0, 180)` degrees, in `u16` units of
/// [`ANGLE_UNITS_180`] (`65536` = 180 degrees). `gx = gy = 0` gives 0.
///
/// # Integer model (what a port must reproduce)
///
/// 1. `(x, y) = (gx, gy)` as `i32`; when `y < 0`, or `y = 0` and `x < 0`,
///    negate both (fold to the upper half plane). `z = 0`.
/// 2. When `x < 0`: `(x, y) = (y, -x)` and `z = 2^29` (90 degrees); now
///    `x >= 0, y >= 0` and the remaining angle is in `[0, 90]` degrees.
/// 3. Normalise: `m = max(x, y)` (at most 32768), `k = clz32(m) - 3`,
///    `x <<= k`, `y <<= k`, so `2^28 <= m < 2^29`.
/// 4. For `i` in `0..15`: with `dx = y >> i`, `dy = x >> i` (arithmetic
///    shifts of the values before this step): when `y > 0`, `x += dx`,
///    `y -= dy`, `z += CORDIC_ATAN[i]`; otherwise `x -= dx`, `y += dy`,
///    `z -= CORDIC_ATAN[i]`. (`|x|, |y| < 1.65 * sqrt 2 * 2^29 < 2^31`.)
/// 5. Result `round_shift(z, 14)` taken modulo `2^16` (so a result of 180
///    degrees becomes 0, the same orientation).
///
/// Error bound: the iterations leave a residual angle of at most
/// `atan(2^-14)` (Volder 1959, "The CORDIC trigonometric computing
/// technique"; convergence range 99.9 degrees covers step 2's `[0, 90]`);
/// truncating shifts on a vector of length at least `2^28` turn it by less
/// than `15 * 2^-27` rad, the table's rounding adds at most `15 * 2^-31`
/// of 180 degrees, and the final rounding half a unit: in total at most
/// 0.004881 degrees ([`ANGLE_MAX_ERR_MICRODEG`]), measured against `f64`
/// `atan2` in the host tests.
///
/// ```
/// use fixsight::gradient::angle;
/// assert_eq!(angle(10, 0), 0);          // gradient along +x
/// assert_eq!(angle(0, 10), 32768);      // 90 degrees (down the rows)
/// assert_eq!(angle(10, 10), 16384);     // 45 degrees
/// assert_eq!(angle(-10, 10), 49152);    // 135 degrees
/// assert_eq!(angle(-10, -10), 16384);   // folded: same orientation as 45
/// assert_eq!(angle(0, 0), 0);
/// ```
#[inline]
pub fn angle(gx: i16, gy: i16) -> u16 {
    let (mut x, mut y) = (gx as i32, gy as i32);
    if y < 0 || (y == 0 && x < 0) {
        x = -x;
        y = -y;
    }
    let mut z = 0i32;
    if x < 0 {
        let t = x;
        x = y;
        y = -t;
        z = 1 << 29;
    }
    let m = x.max(y) as u32;
    if m == 0 {
        return 0;
    }
    let k = m.leading_zeros() - 3;
    x <<= k;
    y <<= k;
    for (i, &a) in CORDIC_ATAN.iter().enumerate().take(ANGLE_ITERATIONS) {
        let (dx, dy) = (y >> i, x >> i);
        if y > 0 {
            x += dx;
            y -= dy;
            z += a;
        } else {
            x -= dx;
            y += dy;
            z -= a;
        }
    }
    round_shift(z, 14) as u16
}

/// Gradient angles of one row: `out[i] = angle(gx[i], gy[i])`.
///
/// Errors: `gy` or `out` shorter than `gx` -> [`Error::BufferTooShort`].
///
/// ```
/// let mut out = [0u16; 3];
/// fixsight::gradient::angle_row(&[1, 0, -3], &[0, 5, 3], &mut out)?;
/// assert_eq!(out, [0, 32768, 49152]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn angle_row(gx: &[i16], gy: &[i16], out: &mut [u16]) -> Result<()> {
    let n = row_len(gx, gy, out.len())?;
    for ((o, &a), &b) in out[..n].iter_mut().zip(gx).zip(gy) {
        *o = angle(a, b);
    }
    tally_angles(n);
    Ok(())
}

/// Counts the work of `n` calls of [`angle`]: folding and quadrant tests,
/// normalisation, then per iteration two shifts, two add/subs, the angle
/// add, a table load, the sign test and the loop branch.
pub(crate) fn tally_angles(n: usize) {
    let it = ANGLE_ITERATIONS as u32;
    tally_per(Op::Load, 2, n);
    tally_per(Op::Logic, 6 + it, n);
    tally_per(Op::AddSub, 3 + 3 * it, n);
    tally_per(Op::Shift, 4 + 2 * it, n);
    tally_per(Op::Table, it, n);
    tally_per(Op::Store, 1, n);
    tally_per(Op::Branch, 4 + 2 * it, n);
}

/// Gradient angles of a frame ([`angle`] per pixel).
///
/// ```
/// use fixsight::{gradient, ImageView, ImageViewMut};
/// let (gx, gy, mut a) = ([5i16, 0], [5i16, -4], [0u16; 2]);
/// gradient::angles(&ImageView::new(&gx, 2, 1, 2)?, &ImageView::new(&gy, 2, 1, 2)?,
///     &mut ImageViewMut::new(&mut a, 2, 1, 2)?)?;
/// assert_eq!(a, [16384, 32768]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn angles(
    gx: &ImageView<'_, i16>,
    gy: &ImageView<'_, i16>,
    out: &mut ImageViewMut<'_, u16>,
) -> Result<()> {
    map_pair(gx, gy, out, angle_row)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The exact floor root by a binary search in `u64`: the reference for
    /// both ways.
    fn floor_sqrt_u64(s: u32) -> u32 {
        let (mut lo, mut hi) = (0u64, 1u64 << 16);
        while hi - lo > 1 {
            let mid = (lo + hi) / 2;
            if mid * mid <= s as u64 {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        lo as u32
    }

    /// Both ways of taking the root at every place where `floor(sqrt)` or
    /// the rounding changes (`r^2 - 1`, `r^2`, `r^2 + r`, `r^2 + r + 1`),
    /// and at the largest sum `2 * 32767^2`.
    #[test]
    fn floor_sqrt_ways_agree_at_the_steps() {
        let top = 2 * 32767u32 * 32767;
        let check = |s: u32| {
            let want = floor_sqrt_u64(s);
            assert_eq!(sqrt_newton(s), want, "Newton, s = {s}");
            assert_eq!(sqrt_bits(s, sqrt_steps(s)), want, "bit by bit, s = {s}");
        };
        for r in 0u32..=46340 {
            for s in [r * r, r * r + r, r * r + r + 1, (r * r).saturating_sub(1)] {
                if s <= top {
                    check(s);
                }
            }
        }
        check(top);
    }

    /// Every `s` below `2^31` (about 2^31 roots; run with `cargo test
    /// --release -p fixsight --lib floor_sqrt -- --ignored`).
    #[test]
    #[ignore = "exhaustive: minutes in release mode"]
    fn floor_sqrt_ways_agree_everywhere() {
        let mut r = 0u32;
        for s in 0u32..1 << 31 {
            if (r + 1) * (r + 1) <= s {
                r += 1;
            }
            assert_eq!(sqrt_newton(s), r, "Newton, s = {s}");
            assert_eq!(sqrt_bits(s, sqrt_steps(s)), r, "bit by bit, s = {s}");
        }
    }

    #[test]
    fn sizes_must_match() {
        let a = [0i16; 4];
        let b = [0i16; 6];
        let mut o = [0u16; 4];
        let gx = ImageView::new(&a, 2, 2, 2).unwrap();
        let gy = ImageView::new(&b, 3, 2, 3).unwrap();
        let mut out = ImageViewMut::new(&mut o, 2, 2, 2).unwrap();
        assert!(matches!(
            magnitude_l1(&gx, &gy, &mut out),
            Err(Error::SizeMismatch { .. })
        ));
        assert!(matches!(
            magnitude_l1_row(&a, &b[..1], &mut [0u16; 4]),
            Err(Error::BufferTooShort { .. })
        ));
    }

    #[test]
    fn l2_round_is_the_nearest_integer_by_integer_comparison() {
        // Independent integer check: r is nearest to sqrt(s) exactly when
        // (2r - 1)^2 < 4s < (2r + 1)^2 (no equality is possible).
        let check = |x: i16, y: i16| {
            let (ax, ay) = (abs_sat_i16(x) as u64, abs_sat_i16(y) as u64);
            let s4 = 4 * (ax * ax + ay * ay);
            let r = l2_round(x, y) as u64;
            assert!(r == 0 || (2 * r - 1) * (2 * r - 1) < s4, "({x},{y}) -> {r}");
            assert!(s4 < (2 * r + 1) * (2 * r + 1), "({x},{y}) -> {r}");
        };
        for x in -200i16..=200 {
            for y in -60i16..=60 {
                check(x, y);
            }
        }
        // Around the step-count switches s = 2^8, 2^16, 2^24.
        for x in (250i16..=262).chain(4090..=4100) {
            for y in -3i16..=3 {
                check(x, y);
            }
        }
        for x in [i16::MIN, -32767, -32766, -1, 0, 1, 23170, 32766, 32767] {
            for y in [i16::MIN, -32767, -16384, -1, 0, 1, 23170, 23171, 32767] {
                check(x, y);
            }
        }
        let mut bad = [0u16; 3];
        assert!(matches!(
            magnitude_l2_round_row(&[1, 2, 3, 4], &[1, 2, 3, 4], &mut bad),
            Err(Error::BufferTooShort { .. })
        ));
    }

    #[test]
    fn direction_is_exact_on_a_dense_integer_grid() {
        // Independent integer check of the boundary against an exact
        // rational comparison with a rational enclosure of sqrt(2) - 1:
        // 0.41421356237 < sqrt 2 - 1 < 0.41421356238 (sqrt 2 from memory to
        // 11 digits; the enclosure is checked by squaring below).
        let lo = 41_421_356_237u128;
        let hi = 41_421_356_238u128;
        let den = 100_000_000_000u128;
        assert!((lo + den) * (lo + den) < 2 * den * den);
        assert!((hi + den) * (hi + den) > 2 * den * den);
        for ax in 0..300i32 {
            for ay in 0..300i32 {
                let (x, y) = (ax as u128, ay as u128);
                let below = y * den < lo * x; // surely below the 22.5 deg line
                let above = y * den > hi * x; // surely above it
                let s = direction_sector(ax as i16, ay as i16);
                if below {
                    assert_eq!(s, 0, "({ax},{ay})");
                } else if above {
                    assert_ne!(s, 0, "({ax},{ay})");
                }
            }
        }
    }
}
