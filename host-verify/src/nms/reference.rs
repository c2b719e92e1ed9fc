//! The integer reference model of `fixsight::nms` (see the family docs).

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
}
