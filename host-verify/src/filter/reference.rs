//! The `f64` reference of `fixsight::filter`: the direct 2-D correlation
//! on the border-extended image (see the family docs).

use crate::border::px;
use fixsight::filter::{Border, Taps};

/// The reference: exact real-valued filter output (before rounding) at
/// every pixel, from the direct 2-D double sum on the extended image.
pub fn reference_real(
    img: &[u8],
    w: usize,
    h: usize,
    htaps: &[f64],
    vtaps: &[f64],
    border: Border,
) -> Vec<f64> {
    let (rx, ry) = (htaps.len() as i64 / 2, vtaps.len() as i64 / 2);
    let px = |x: i64, y: i64| px(img, w, h, 1, 0, x, y, border) as f64;
    let mut out = Vec::with_capacity(w * h);
    for y in 0..h as i64 {
        for x in 0..w as i64 {
            let mut s = 0.0;
            for (j, &vj) in vtaps.iter().enumerate() {
                for (i, &hi) in htaps.iter().enumerate() {
                    s += vj * hi * px(x + i as i64 - rx, y + j as i64 - ry);
                }
            }
            out.push(s);
        }
    }
    out
}

/// Real-valued taps of a kernel tap set: `coef / 2^shift`.
pub fn real_taps(t: &Taps) -> Vec<f64> {
    let d = (1u64 << t.shift()) as f64;
    t.coefficients().iter().map(|&c| c as f64 / d).collect()
}

/// The documented final rounding: `floor(v + 1/2)` clamped to `[lo, hi]`.
pub fn round_half_up_sat(v: f64, lo: f64, hi: f64) -> f64 {
    (v + 0.5).floor().clamp(lo, hi)
}
