//! The integer reference models of `fixsight::hysteresis` (see the family
//! docs).

use std::collections::VecDeque;

/// Reference double threshold.
pub fn classify(mag: &[u16], low: u16, high: u16) -> Vec<u8> {
    mag.iter()
        .map(|&m| {
            if m >= high {
                2
            } else if m >= low {
                1
            } else {
                0
            }
        })
        .collect()
}

/// The 8-connected components of the nonzero pixels of `map`, each as
/// the list of its pixel indices (breadth-first flood fill).
pub fn components8(map: &[u8], w: usize, h: usize) -> Vec<Vec<usize>> {
    let mut comps = Vec::new();
    let mut seen = vec![false; w * h];
    for s in 0..w * h {
        if map[s] == 0 || seen[s] {
            continue;
        }
        seen[s] = true;
        let mut members = vec![s];
        let mut q = VecDeque::from([s]);
        while let Some(p) = q.pop_front() {
            let (x, y) = ((p % w) as i64, (p / w) as i64);
            for dy in -1..=1 {
                for dx in -1..=1 {
                    let (nx, ny) = (x + dx, y + dy);
                    if nx >= 0 && ny >= 0 && nx < w as i64 && ny < h as i64 {
                        let n = ny as usize * w + nx as usize;
                        if map[n] != 0 && !seen[n] {
                            seen[n] = true;
                            members.push(n);
                            q.push_back(n);
                        }
                    }
                }
            }
        }
        comps.push(members);
    }
    comps
}

/// Reference hysteresis on edge codes (0, 1, 2): returns 0/255. A
/// component of nonzero codes is kept whole when it holds a strong pixel.
pub fn link(codes: &[u8], w: usize, h: usize) -> Vec<u8> {
    let mut out = vec![0u8; w * h];
    for members in components8(codes, w, h) {
        if members.iter().any(|&m| codes[m] == 2) {
            for m in members {
                out[m] = 255;
            }
        }
    }
    out
}

/// Reference automatic thresholds `(low, high)`.
pub fn auto_thresholds(
    mag: &[u16],
    bins: usize,
    shift: u32,
    high_permille: u16,
    low_ratio_u0f16: u16,
) -> (u16, u16) {
    let mut idx: Vec<usize> = mag
        .iter()
        .filter(|&&m| m > 0)
        .map(|&m| ((m >> shift) as usize).min(bins - 1))
        .collect();
    if idx.is_empty() {
        return (u16::MAX, u16::MAX);
    }
    idx.sort_unstable();
    let n = idx.len() as u64;
    let target = (n * high_permille as u64).div_ceil(1000) as usize;
    let b = idx[target.max(1) - 1];
    let high = (((b as u64) + 1) << shift).min(65535);
    let low = ((high as f64 * low_ratio_u0f16 as f64 / 65536.0) + 0.5).floor() as u64;
    (low.max(1) as u16, high as u16)
}
