//! Rounding and saturation primitives shared by every kernel.
//!
//! These few functions *are* the numeric contract: a port to another core
//! that reproduces them reproduces the kernels bit for bit.
//!
//! * [`round_shift`] — divide by `2^s`, **round half up** (ties toward
//!   +infinity): `(x + 2^(s-1)) >> s` with an arithmetic (flooring) right
//!   shift. For `s = 0` it returns `x`. Examples for `s = 1`: `3 -> 2`,
//!   `-3 -> -1`, `-1 -> 0`, `1 -> 1`.
//! * [`sat_u8`] — clamp to `0..=255`.
//! * [`sat_i16`] — clamp to `-32768..=32767`.
//! * [`abs_sat_i16`] — `|x|` of an `i16`, with `-32768` mapped to `32767`.
//!
//! ```
//! use fixsight::arith::{round_shift, sat_u8};
//! assert_eq!(round_shift(3, 1), 2);    // 1.5  -> 2
//! assert_eq!(round_shift(-3, 1), -1);  // -1.5 -> -1 (half up, not away from zero)
//! assert_eq!(sat_u8(300), 255);
//! ```

/// `x / 2^s` rounded half up (ties toward +infinity), computed as
/// `(x + (1 << (s - 1))) >> s` with an arithmetic right shift; `s = 0`
/// returns `x`.
///
/// Callers guarantee `s <= 30` and that `x + 2^(s-1)` does not overflow;
/// every kernel proves this at construction (see each kernel's docs).
///
/// ```
/// use fixsight::arith::round_shift;
/// assert_eq!(round_shift(5, 2), 1);   // 1.25 -> 1
/// assert_eq!(round_shift(6, 2), 2);   // 1.5  -> 2
/// assert_eq!(round_shift(-6, 2), -1); // -1.5 -> -1
/// assert_eq!(round_shift(-7, 2), -2); // -1.75 -> -2
/// assert_eq!(round_shift(7, 0), 7);
/// ```
#[inline(always)]
pub const fn round_shift(x: i32, s: u32) -> i32 {
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
    if x == i16::MIN {
        i16::MAX as u16
    } else if x < 0 {
        (-x) as u16
    } else {
        x as u16
    }
}

#[cfg(test)]
mod tests {
    use super::*;

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
