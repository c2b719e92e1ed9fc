//! Rounding and saturation primitives shared by every kernel.
//!
//! These few functions *are* the numeric contract: a port to another core
//! that reproduces them reproduces the kernels bit for bit.
//!
//! * [`round_shift`] — divide by `2^s`, **round half up** (ties toward
//!   +infinity): `(x + 2^(s-1)) >> s` with an arithmetic (flooring) right
//!   shift. For `s = 0` it returns `x`. Examples for `s = 1`: `3 -> 2`,
//!   `-3 -> -1`, `-1 -> 0`, `1 -> 1`. Total: defined for every `i32` and
//!   every shift (no wrap-around near `i32::MAX`, `0` for `s >= 32`).
//! * [`sat_u8`] — clamp to `0..=255`.
//! * [`sat_i16`] — clamp to `-32768..=32767`.
//! * [`abs_sat_i16`] — `|x|` of an `i16`, with `-32768` mapped to `32767`.
//!
//! Every public function here is total: any argument gives a defined
//! result (saturated where the type cannot hold it), never a panic or a
//! wrapped value.
//!
//! ```
//! use fixsight::arith::{round_shift, sat_u8};
//! assert_eq!(round_shift(3, 1), 2);    // 1.5  -> 2
//! assert_eq!(round_shift(-3, 1), -1);  // -1.5 -> -1 (half up, not away from zero)
//! assert_eq!(sat_u8(300), 255);
//! ```

/// `x / 2^s` rounded half up (ties toward +infinity), for every `x` and
/// every `s`: total, never overflows, never panics.
///
/// Equal to `(x + 2^(s-1)) >> s` evaluated in exact (unbounded) integer
/// arithmetic with a flooring shift; `s = 0` returns `x`. It is computed
/// without the addition, as `(x >> s) + ((x >> (s - 1)) & 1)` (the floor
/// plus the bit just below the cut), so `x` near `i32::MAX` does not wrap:
/// `round_shift(i32::MAX, 1) = 2^30`. For `s >= 32` the exact quotient lies
/// in `[-1/2, 1/2)` and the result is `0`. The result always fits an `i32`.
///
/// ```
/// use fixsight::arith::round_shift;
/// assert_eq!(round_shift(5, 2), 1);   // 1.25 -> 1
/// assert_eq!(round_shift(6, 2), 2);   // 1.5  -> 2
/// assert_eq!(round_shift(-6, 2), -1); // -1.5 -> -1
/// assert_eq!(round_shift(-7, 2), -2); // -1.75 -> -2
/// assert_eq!(round_shift(7, 0), 7);
/// assert_eq!(round_shift(i32::MAX, 1), 1 << 30); // no wrap-around
/// assert_eq!(round_shift(i32::MIN, 31), -1);
/// assert_eq!(round_shift(i32::MIN, 40), 0);      // any shift is accepted
/// ```
#[inline(always)]
pub const fn round_shift(x: i32, s: u32) -> i32 {
    if s == 0 {
        x
    } else if s >= 32 {
        0
    } else {
        (x >> s) + ((x >> (s - 1)) & 1)
    }
}

/// The kernels' form of [`round_shift`]: `(x + 2^(s-1)) >> s` with one add
/// and one shift, for callers that proved at construction that
/// `1 <= s <= 30` or `s = 0` and that `x + 2^(s-1)` fits an `i32` (each
/// kernel's docs state the proof). On that domain it equals
/// [`round_shift`] (tested below); it is not public, so no caller outside
/// the crate can leave the domain.
#[inline(always)]
pub(crate) const fn round_shift_proven(x: i32, s: u32) -> i32 {
    if s == 0 {
        x
    } else {
        (x + (1 << (s - 1))) >> s
    }
}

/// Clamps to the `u8` range `0..=255`.
///
/// ```
/// assert_eq!(fixsight::arith::sat_u8(-4), 0);
/// assert_eq!(fixsight::arith::sat_u8(128), 128);
/// assert_eq!(fixsight::arith::sat_u8(256), 255);
/// ```
#[inline(always)]
pub const fn sat_u8(x: i32) -> u8 {
    if x < 0 {
        0
    } else if x > 255 {
        255
    } else {
        x as u8
    }
}

/// Clamps to the `i16` range `-32768..=32767`.
///
/// ```
/// assert_eq!(fixsight::arith::sat_i16(40000), 32767);
/// assert_eq!(fixsight::arith::sat_i16(-40000), -32768);
/// ```
#[inline(always)]
pub const fn sat_i16(x: i32) -> i16 {
    if x < i16::MIN as i32 {
        i16::MIN
    } else if x > i16::MAX as i32 {
        i16::MAX
    } else {
        x as i16
    }
}

/// Clamps to the `u16` range `0..=65535`.
///
/// ```
/// assert_eq!(fixsight::arith::sat_u16(70000), 65535);
/// assert_eq!(fixsight::arith::sat_u16(-1), 0);
/// ```
#[inline(always)]
pub const fn sat_u16(x: i32) -> u16 {
    if x < 0 {
        0
    } else if x > u16::MAX as i32 {
        u16::MAX
    } else {
        x as u16
    }
}

/// `|x|` for an `i16`, saturating: `-32768` gives `32767`.
///
/// ```
/// assert_eq!(fixsight::arith::abs_sat_i16(-32768), 32767);
/// assert_eq!(fixsight::arith::abs_sat_i16(-5), 5);
/// ```
#[inline(always)]
pub const fn abs_sat_i16(x: i16) -> u16 {
    // `|x|` in `i32` is at most 32768; subtracting its bit 15 maps 32768
    // (only) to 32767, without a compare.
    let a = (x as i32).abs();
    (a - (a >> 15)) as u16
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every `i16`: the magnitude in `i64`, then clipped to 32767.
    #[test]
    fn abs_sat_i16_is_the_clipped_magnitude_everywhere() {
        for x in i16::MIN..=i16::MAX {
            let want = (x as i64).abs().min(32767) as u16;
            assert_eq!(abs_sat_i16(x), want, "{x}");
        }
    }

    /// Exact `floor(x / 2^s + 1/2)` in 128-bit arithmetic.
    fn exact(x: i32, s: u32) -> i32 {
        let d = 1i128 << s;
        (2 * x as i128 + d).div_euclid(2 * d) as i32
    }

    #[test]
    fn round_shift_is_total_and_exact_at_the_extremes() {
        let xs = [
            i32::MIN,
            i32::MIN + 1,
            -3,
            -1,
            0,
            1,
            3,
            i32::MAX - 1,
            i32::MAX,
        ];
        for s in 0..=70u32 {
            for &x in &xs {
                assert_eq!(round_shift(x, s), exact(x, s.min(100)), "x={x} s={s}");
            }
        }
        // The issue-16 cases: x near i32::MAX and shifts of 32 and more.
        assert_eq!(round_shift(i32::MAX, 1), 1 << 30);
        assert_eq!(round_shift(i32::MAX, 31), 1);
        assert_eq!(round_shift(i32::MIN, 32), 0);
        assert_eq!(round_shift(i32::MAX, u32::MAX), 0);
    }

    #[test]
    fn proven_form_equals_the_total_form_on_its_domain() {
        for s in 0..=30u32 {
            let half = if s == 0 { 0 } else { 1i64 << (s - 1) };
            let top = (i32::MAX as i64 - half) as i32;
            for x in [i32::MIN, -1_000_001, -7, -1, 0, 1, 7, 999_999, top - 1, top] {
                assert_eq!(round_shift_proven(x, s), round_shift(x, s), "x={x} s={s}");
            }
        }
    }

    #[test]
    fn round_shift_matches_floor_of_x_plus_half() {
        for s in 1..=8u32 {
            for x in -2000i32..=2000 {
                // floor(x / 2^s + 1/2) in exact rational arithmetic:
                let d = 1i32 << s;
                let expected = (2 * x + d).div_euclid(2 * d);
                assert_eq!(round_shift(x, s), expected, "x={x} s={s}");
            }
        }
    }
}
