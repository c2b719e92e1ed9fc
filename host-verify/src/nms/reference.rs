//! The reference models of `fixsight::nms` (see the family docs): the
//! integer 4-sector model of `nms.suppress`, and the `f64` interpolating
//! suppression of `nms.suppress_interpolated` (also step 3 of the chain's
//! full-`f64` Canny).

/// Relative tolerance under which two `f64` samples count as equal in
/// [`suppress_interpolated`].
///
/// Summation order moves an `f64` magnitude by a few units in the last
/// place (relative `~1e-15`), which on a synthetic board with mathematically
/// equal magnitudes decided which of two columns kept the edge. With this
/// tolerance such pairs are ties, settled by the stated raster rule. On the
/// integer inputs of `nms.suppress_interpolated` (magnitudes `<= 65535`,
/// gradients `<= 32768` in magnitude) two unequal interpolated samples
/// differ by at least `1 / 32768` in absolute and `2^-15 / 65535 ~ 4.7e-10`
/// in relative terms, far above the tolerance, and the few roundings of
/// the `f64` evaluation stay far below it: the tolerant comparison equals
/// the exact one there.
pub const TIE_TOLERANCE: f64 = 1e-12;

/// `a > b` beyond the tie tolerance.
fn above(a: f64, b: f64) -> bool {
    a - b > TIE_TOLERANCE * a.abs().max(b.abs())
}

/// Offsets `(before, after)` of a sector, from its angle.
pub fn sector_offsets(sector: u8) -> ((i64, i64), (i64, i64)) {
    let a = (45.0 * sector as f64).to_radians();
    let (dx, dy) = (a.cos().round() as i64, a.sin().round() as i64);
    ((-dx, -dy), (dx, dy))
}

/// Reference suppression of a `w x h` frame; an error names the first
/// sector outside `0..=3`.
pub fn reference(mag: &[u16], dir: &[u8], w: usize, h: usize) -> Result<Vec<u16>, String> {
    let at = |x: i64, y: i64| -> u16 {
        if x < 0 || y < 0 || x >= w as i64 || y >= h as i64 {
            0
        } else {
            mag[y as usize * w + x as usize]
        }
    };
    let mut out = vec![0u16; w * h];
    for y in 0..h {
        for x in 0..w {
            let i = y * w + x;
            let d = dir[i];
            if d > 3 {
                return Err(format!("sector {d} at ({x}, {y})"));
            }
            let ((bx, by), (ax, ay)) = sector_offsets(d);
            let (xi, yi) = (x as i64, y as i64);
            let m = mag[i];
            if m > at(xi + bx, yi + by) && m >= at(xi + ax, yi + ay) {
                out[i] = m;
            }
        }
    }
    Ok(out)
}

/// `f64` reference of `nms.suppress_interpolated` and of the full-`f64`
/// Canny's suppression: non-maximum suppression along the exact gradient
/// angle. For each pixel with magnitude `v > 0` and gradient `g != 0`: `u =
/// g / max(|gx|, |gy|)`, oriented towards positive y (or positive x when
/// `uy = 0`); the magnitude at `p + u` and at `p - u`, where the ray meets
/// the square of the 8 neighbours, is interpolated linearly between the
/// two neighbours it falls between (outside the image reads 0). The pixel
/// keeps `v` when `v` is above the backward sample (the side of negative
/// y, or of negative x for a horizontal gradient) and not below the forward
/// one, both beyond [`TIE_TOLERANCE`] (relative): of two equal maxima along
/// the gradient, the first in raster order survives, whatever order the
/// sums that made them were taken in.
pub fn suppress_interpolated(gx: &[f64], gy: &[f64], mag: &[f64], w: usize, h: usize) -> Vec<f64> {
    let m = |x: i64, y: i64| -> f64 {
        if x < 0 || y < 0 || x >= w as i64 || y >= h as i64 {
            0.0
        } else {
            mag[y as usize * w + x as usize]
        }
    };
    // Magnitude at p + (ux, uy) on the neighbour square (max(|ux|,|uy|) = 1).
    let ring = |x: i64, y: i64, ux: f64, uy: f64| -> f64 {
        if ux.abs() >= uy.abs() {
            let sx = ux.signum() as i64;
            let t = uy.abs();
            (1.0 - t) * m(x + sx, y) + t * m(x + sx, y + uy.signum() as i64)
        } else {
            let sy = uy.signum() as i64;
            let t = ux.abs();
            (1.0 - t) * m(x, y + sy) + t * m(x + ux.signum() as i64, y + sy)
        }
    };
    let mut out = vec![0f64; w * h];
    for y in 0..h as i64 {
        for x in 0..w as i64 {
            let i = y as usize * w + x as usize;
            let v = mag[i];
            let s = gx[i].abs().max(gy[i].abs());
            if v <= 0.0 || s == 0.0 {
                continue;
            }
            let (mut ux, mut uy) = (gx[i] / s, gy[i] / s);
            if uy < 0.0 || (uy == 0.0 && ux < 0.0) {
                ux = -ux;
                uy = -uy;
            }
            let fwd = ring(x, y, ux, uy);
            let back = ring(x, y, -ux, -uy);
            if above(v, back) && !above(fwd, v) {
                out[i] = v;
            }
        }
    }
    out
}

/// [`suppress_interpolated`] on integer inputs, rounded back to `u16` (the
/// kept values are the inputs themselves, so nothing is rounded).
pub fn suppress_interpolated_int(
    mag: &[u16],
    gx: &[i16],
    gy: &[i16],
    w: usize,
    h: usize,
) -> Vec<u16> {
    let f = |v: &[i16]| -> Vec<f64> { v.iter().map(|&a| a as f64).collect() };
    let m: Vec<f64> = mag.iter().map(|&a| a as f64).collect();
    suppress_interpolated(&f(gx), &f(gy), &m, w, h)
        .into_iter()
        .map(|v| v as u16)
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn offsets_agree_with_the_kernel_table() {
        for s in 0..4u8 {
            let ((bx, by), (ax, ay)) = fixsight::nms::SECTOR_NEIGHBOURS[s as usize];
            let k = ((bx as i64, by as i64), (ax as i64, ay as i64));
            assert_eq!(sector_offsets(s), k, "sector {s}");
        }
    }

    #[test]
    fn tie_tolerance_separates_ties_from_integer_differences() {
        // Smallest relative difference of two unequal interpolated samples
        // of integer inputs (see TIE_TOLERANCE) is far above the tolerance.
        let smallest = (1.0 / 32768.0) / 65535.0;
        assert!(smallest > 1e2 * TIE_TOLERANCE);
        assert!(above(1.0 + 1e-9, 1.0));
        assert!(!above(1.0 + 1e-14, 1.0));
    }
}
