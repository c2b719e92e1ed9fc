//! Brute-force transcriptions of the documented integer model of
//! `fixsight::lines` (module docs there), one point and one column at a
//! time, written apart from the kernel's loops: the oracle of the property
//! tests (`tests/lines_model.rs`) and of the hostile-input campaign
//! (`kernel.lines`).

use fixsight::gradient::angle;
use fixsight::lines::{cos_sin, VoteParams, UNITS_180};

/// The vote cells of `p` for a frame of `edges` (nonzero = edge point),
/// gradients `gx`, `gy` (used for the gate) and weights `wts` (used with
/// `weight_shift`), all `width x height`: every column is tested against
/// the gate by its signed angle difference (not by the kernel's interval
/// arithmetic), the two rho cells of each vote split in sixteenths, counts
/// added in `u32` and saturated to `u16` at the end.
///
/// ```
/// use fixsight::lines::VoteParams;
/// use fixsight_verify::lines::model::model_cells;
/// let p = VoteParams { width: 3, height: 3, theta_start: 0, theta_step_log2: 14, theta_bins: 4,
///     rho_step_log2: 4, rho_bins: 5, trig_frac_bits: 14, gate: None, weight_shift: None };
/// let mut e = [0u8; 9];
/// e[4] = 1; // the centre pixel: rho 0 in every column
/// let c = model_cells(&p, &e, &[0; 9], &[0; 9], &[0; 9]);
/// assert!((0..4).all(|t| c[t * 5 + 2] == 16));
/// ```
pub fn model_cells(p: &VoteParams, edges: &[u8], gx: &[i16], gy: &[i16], wts: &[u16]) -> Vec<u16> {
    let (w, h) = (p.width, p.height);
    let r = p.rho_bins;
    let mut cells = vec![0u32; p.cells()];
    let q = p.trig_frac_bits;
    let sh = p.rho_step_log2 + q;
    for y in 0..h {
        for x in 0..w {
            let i = y * w + x;
            if edges[i] == 0 {
                continue;
            }
            let wt = match p.weight_shift {
                None => 1i64,
                Some(k) => ((wts[i] as i64) >> k).min(4095),
            };
            if wt == 0 {
                continue;
            }
            let phi = angle(gx[i], gy[i]);
            let x4 = (x as i64 - (w >> 1) as i64) * 16;
            let y4 = (y as i64 - (h >> 1) as i64) * 16;
            for t in 0..p.theta_bins {
                let a = (p.theta_start + ((t as u32) << p.theta_step_log2)) % (1 << 17);
                if let Some(g) = p.gate {
                    let d = ((a % UNITS_180) as u16).wrapping_sub(phi) as i16;
                    if (d as i32).abs() > g as i32 {
                        continue;
                    }
                }
                let (c, s) = cos_sin(a, q);
                let pos = x4 * c as i64
                    + y4 * s as i64
                    + ((((r as i64) - 1) / 2) << sh)
                    + (1i64 << (sh - 5));
                let b = pos.div_euclid(1 << sh);
                let f = pos.div_euclid(1 << (sh - 4)).rem_euclid(16);
                if (0..r as i64).contains(&b) {
                    cells[t * r + b as usize] += (wt * (16 - f)) as u32;
                }
                if f > 0 && (0..r as i64).contains(&(b + 1)) {
                    cells[t * r + (b + 1) as usize] += (wt * f) as u32;
                }
            }
        }
    }
    cells.into_iter().map(|v| v.min(65535) as u16).collect()
}

/// The peaks the documented rule keeps from `cells`: every cell of at least
/// `threshold` votes that no cell of its `(2 radius_theta + 1) x (2
/// radius_rho + 1)` neighbourhood beats (more votes, or as many at a lower
/// index), the neighbourhood wrapping over 180 degrees with `rho` mirrored
/// when the columns cover the half turn; the strongest `k`, ties by lower
/// index. Returns `(votes, index)` pairs, index `theta_bin * rho_bins +
/// rho_bin`.
///
/// ```
/// use fixsight::lines::VoteParams;
/// use fixsight_verify::lines::model::peak_winners;
/// let p = VoteParams { width: 3, height: 3, theta_start: 0, theta_step_log2: 14, theta_bins: 2,
///     rho_step_log2: 4, rho_bins: 3, trig_frac_bits: 14, gate: None, weight_shift: None };
/// let cells = [0, 5, 0, 0, 9, 0];
/// assert_eq!(peak_winners(&p, &cells, 1, 0, 0, 4), vec![(9, 4), (5, 1)]);
/// assert_eq!(peak_winners(&p, &cells, 1, 1, 1, 4), vec![(9, 4)]);
/// ```
pub fn peak_winners(
    p: &VoteParams,
    cells: &[u16],
    threshold: u16,
    radius_theta: usize,
    radius_rho: usize,
    k: usize,
) -> Vec<(u16, usize)> {
    let (tn, r) = (p.theta_bins as i64, p.rho_bins as i64);
    let wraps = (p.theta_bins << p.theta_step_log2) == 65536;
    let idx = |t: i64, b: i64| -> Option<usize> {
        let (t, b) = if (0..tn).contains(&t) || !wraps {
            (t, b)
        } else {
            (t.rem_euclid(tn), r - 1 - b)
        };
        ((0..tn).contains(&t) && (0..r).contains(&b)).then_some((t * r + b) as usize)
    };
    let (rt, rb) = (radius_theta as i64, radius_rho as i64);
    let winner = |t: i64, b: i64| -> bool {
        let i = (t * r + b) as usize;
        let v = cells[i];
        if v < threshold {
            return false;
        }
        for dt in -rt..=rt {
            for db in -rb..=rb {
                if let Some(j) = idx(t + dt, b + db) {
                    if cells[j] > v || (cells[j] == v && j < i) {
                        return false;
                    }
                }
            }
        }
        true
    };
    let mut all: Vec<(u16, usize)> = Vec::new();
    for t in 0..tn {
        for b in 0..r {
            if winner(t, b) {
                all.push((cells[(t * r + b) as usize], (t * r + b) as usize));
            }
        }
    }
    all.sort_by(|a, b| b.0.cmp(&a.0).then(a.1.cmp(&b.1)));
    all.truncate(k);
    all
}
