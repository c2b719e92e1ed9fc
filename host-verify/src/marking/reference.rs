//! The `f64` reference of the selection and the fixed-point error bounds
//! it judges the kernel by (see the family's module docs).

use fixsight::marking::{
    self, Candidate, MarkingLimits, Polarity, TapeContrast, SIN_COS_MAX_ERR_MILLI_LSB,
};
use std::f64::consts::PI;

/// Error bound of the table sine and cosine, Q15 LSB.
pub fn trig_bound() -> f64 {
    SIN_COS_MAX_ERR_MILLI_LSB as f64 / 1000.0
}

/// Largest error of the kernel's table sine and cosine against `f64`,
/// over all 65536 angles, Q15 LSB.
pub fn trig_max_err() -> f64 {
    (0..=u16::MAX)
        .map(|t| {
            let (s, c) = marking::sin_cos_q15(t);
            let a = t as f64 / 65536.0 * PI;
            (s as f64 - 32768.0 * a.sin())
                .abs()
                .max((c as f64 - 32768.0 * a.cos()).abs())
        })
        .fold(0.0, f64::max)
}

/// The table of the kernel, regenerated: `round(32768 sin(i pi / 512))`.
pub fn sine_table() -> Vec<u16> {
    (0..=256)
        .map(|i| (32768.0 * (i as f64 * PI / 512.0).sin()).round() as u16)
        .collect()
}

/// A column of the reference: exact value and the fixed-point bound, Q4.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Col {
    x: f64,
    beta: f64,
}

fn col(c: &Candidate, row_q4: i32) -> Col {
    let t = c.theta as f64 / 65536.0 * PI;
    let (s, co) = t.sin_cos();
    let x = (c.rho_q4 as f64 - row_q4 as f64 * s) / co;
    let e = trig_bound();
    Col {
        x,
        beta: (x.abs() + (row_q4 as f64).abs()) * e / (32768.0 * co.abs() - e) + 0.5,
    }
}

/// The `f64` reference's outcome.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RefMarking {
    /// Left and right input indices of the pick.
    pub pick: Option<(usize, usize)>,
    /// Exact near-row columns of the pick, Q4.
    pub near_x_q4: [f64; 2],
    /// Exact far-row columns of the pick, Q4.
    pub far_x_q4: [f64; 2],
    /// Fixed-point column bounds of the pick (near left, near right, far
    /// left, far right), Q4.
    pub beta_q4: [f64; 4],
    /// Lines that passed the single-line rules.
    pub candidates: usize,
    /// The fixed selection may differ (module docs).
    pub borderline: bool,
}

/// A line of the reference that passed the tilt rule.
#[derive(Debug, Clone, Copy)]
struct RefLine {
    near: Col,
    far: Col,
    /// Inside the near window (exactly).
    inside: bool,
    /// Within its bound of a window limit.
    uncertain: bool,
}

/// The selection in `f64` (module docs).
pub fn select_f64(lines: &[Candidate], l: &MarkingLimits) -> RefMarking {
    let near_to = |v: f64, limit: f64, b: f64| (v - limit).abs() <= b;
    let cols: Vec<Option<RefLine>> = lines
        .iter()
        .map(|c| {
            let tilt = if c.theta < 32768 {
                c.theta as u32
            } else {
                65536 - c.theta as u32
            };
            if tilt > l.max_tilt as u32 {
                return None;
            }
            let near = col(c, l.near_row_q4);
            let (lo, hi) = (l.near_x_min_q4 as f64, l.near_x_max_q4 as f64);
            Some(RefLine {
                near,
                far: col(c, l.far_row_q4),
                inside: near.x >= lo && near.x <= hi,
                uncertain: near_to(near.x, lo, near.beta) || near_to(near.x, hi, near.beta),
            })
        })
        .collect();
    let candidates = cols.iter().flatten().filter(|c| c.inside).count();
    let bright_right = |c: &Candidate| match c.polarity {
        Polarity::Unknown => None,
        Polarity::Rising => Some(c.theta < 32768),
        Polarity::Falling => Some(c.theta >= 32768),
    };
    let dn = (l.near_row_q4 - l.horizon_row_q4) as f64;
    let df = (l.far_row_q4 - l.horizon_row_q4) as f64;
    struct Pair {
        left: usize,
        right: usize,
        votes: u64,
        dev: f64,
        bound: f64,
        valid: bool,
        uncertain: bool,
    }
    // Pairs in the kernel's enumeration order.
    let mut pairs: Vec<Pair> = Vec::new();
    for i in 0..lines.len() {
        for j in i + 1..lines.len() {
            let (Some(a), Some(b)) = (cols[i], cols[j]) else {
                continue;
            };
            let (li, lc, ri, rc) = if a.near.x < b.near.x {
                (i, a, j, b)
            } else {
                (j, b, i, a)
            };
            let near = rc.near.x - lc.near.x;
            let far = rc.far.x - lc.far.x;
            let bn = lc.near.beta + rc.near.beta;
            let bf = lc.far.beta + rc.far.beta;
            let residual = (far * dn - near * df).abs();
            let tol = l.converge_tol_q4 as f64 * dn;
            let min = l.near_sep_min_q4 as f64;
            // Columns within their bounds of each other may come out in
            // the other order: a separation of at most near + bn, negative
            // or not, which can only pass a minimum that small.
            let order_flip = near <= bn && min <= near + bn;
            let contrast_ok = match l.contrast {
                TapeContrast::Either => true,
                c => {
                    let want = c == TapeContrast::Brighter;
                    match (bright_right(&lines[li]), bright_right(&lines[ri])) {
                        (Some(a), Some(b)) => a == want && b != want,
                        _ => true,
                    }
                }
            };
            // (passes in f64, within the fixed-point bound of its threshold)
            let tests = [
                (a.inside, a.uncertain),
                (b.inside, b.uncertain),
                (near >= min, near_to(near, min, bn) || order_flip),
                (
                    near <= l.near_sep_max_q4 as f64,
                    near_to(near, l.near_sep_max_q4 as f64, bn),
                ),
                (residual <= tol, near_to(residual, tol, bf * dn + bn * df)),
            ];
            let certain_fail = !contrast_ok || tests.iter().any(|&(pass, u)| !pass && !u);
            let valid = contrast_ok && tests.iter().all(|&(pass, _)| pass);
            let uncertain = !certain_fail && tests.iter().any(|&(_, u)| u);
            if !valid && !uncertain {
                continue;
            }
            pairs.push(Pair {
                left: li,
                right: ri,
                votes: lines[li].votes as u64 + lines[ri].votes as u64,
                dev: (near - l.near_sep_nominal_q4 as f64).abs(),
                bound: bn,
                valid,
                uncertain,
            });
        }
    }
    // The kernel keeps the first pair of the largest votes and the
    // smallest deviation.
    let mut best: Option<usize> = None;
    for (n, v) in pairs.iter().enumerate().filter(|(_, v)| v.valid) {
        let better = match best {
            None => true,
            Some(b) => {
                v.votes > pairs[b].votes || (v.votes == pairs[b].votes && v.dev < pairs[b].dev)
            }
        };
        if better {
            best = Some(n);
        }
    }
    let borderline = match best {
        None => pairs.iter().any(|p| p.uncertain),
        Some(b) => {
            let w = &pairs[b];
            w.uncertain
                || pairs.iter().enumerate().any(|(n, p)| {
                    n != b
                        && ((p.uncertain && p.votes >= w.votes)
                            || (p.votes == w.votes && (p.dev - w.dev).abs() <= p.bound + w.bound))
                })
        }
    };
    let pick = best.map(|b| (pairs[b].left, pairs[b].right));
    let (mut near_x_q4, mut far_x_q4, mut beta_q4) = ([0.0; 2], [0.0; 2], [0.0; 4]);
    if let Some((li, ri)) = pick {
        for (s, idx) in [li, ri].into_iter().enumerate() {
            let c = cols[idx].expect("picked lines passed the tilt rule");
            near_x_q4[s] = c.near.x;
            far_x_q4[s] = c.far.x;
            beta_q4[s] = c.near.beta;
            beta_q4[2 + s] = c.far.beta;
        }
    }
    RefMarking {
        pick,
        near_x_q4,
        far_x_q4,
        beta_q4,
        candidates,
        borderline,
    }
}

/// The worst-case column error bound (px) of the fixed selection for a
/// configuration: `beta` at the largest column magnitude on either row
/// (the near window, widened to the far row at the largest tilt), the
/// larger row and the smallest cosine the tilt rule lets through.
pub fn column_bound_px(l: &MarkingLimits) -> f64 {
    let e = trig_bound();
    let tilt = l.max_tilt as f64 / 65536.0 * PI;
    let xn = (l
        .near_x_min_q4
        .unsigned_abs()
        .max(l.near_x_max_q4.unsigned_abs())) as f64;
    let x = xn + (l.near_row_q4 - l.far_row_q4) as f64 * tilt.tan() + 1.0;
    let y = (l
        .near_row_q4
        .unsigned_abs()
        .max(l.far_row_q4.unsigned_abs())) as f64;
    ((x + y) * e / (32768.0 * tilt.cos() - e) + 0.5) / 16.0
}
