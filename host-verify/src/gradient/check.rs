//! Contract checks of the `gradient.*` kernel ids on the Sobel gradients
//! of the demo scenes.

use super::reference::*;
use super::run::{run_pair, sobel_pair, PairKernel};
use crate::contract::{Contract, KernelFamily, KernelReport};
use crate::metrics::ErrorStats;
use crate::opcount::measure;
use crate::scene::Scene;
use fixsight::gradient;

/// A scene with its Sobel gradients `(gx, gy)`.
type ScenePair<'a> = (&'a Scene, (Vec<i16>, Vec<i16>));

/// A bit-exact row: runs `kernel` on every scene's gradients and compares
/// with `reference` pixel by pixel.
fn bit_exact_row<T: Copy + Default + Into<f64>>(
    name: &str,
    pairs: &[ScenePair<'_>],
    kernel: PairKernel<T>,
    reference: impl Fn(i16, i16) -> f64,
    peak: f64,
) -> KernelReport {
    let (mut a, mut r, mut ops) = (Vec::new(), Vec::new(), None);
    let mut err = None;
    for (s, (gx, gy)) in pairs {
        let (res, o) = measure(s.width * s.height, || {
            run_pair(gx, gy, s.width, s.height, kernel)
        });
        ops.get_or_insert(o);
        match res {
            Ok(m) => {
                a.extend(m.into_iter().map(Into::into));
                r.extend(gx.iter().zip(gy).map(|(&x, &y)| reference(x, y)));
            }
            Err(e) => err = Some(e),
        }
    }
    let stats = ErrorStats::compare(&a, &r, peak);
    let mut row = KernelReport::from_stats(
        name,
        KernelFamily::Gradient,
        Contract::BitExact,
        0.0,
        &stats,
        ops.unwrap_or_default(),
    );
    if let Some(e) = err {
        row.fail(e);
    }
    row
}

/// Contract checks on the scenes' Sobel gradients.
pub fn check(scenes: &[Scene]) -> Vec<KernelReport> {
    let pairs: Vec<_> = scenes.iter().map(|s| (s, sobel_pair(s))).collect();
    let mut rows = Vec::new();

    rows.push(bit_exact_row(
        "gradient.magnitude_l1",
        &pairs,
        gradient::magnitude_l1,
        reference_l1,
        65534.0,
    ));

    // L2 estimate: relative tolerance.
    {
        let bound = l2_rel_bound();
        let (mut worst, mut worst_raw, mut n, mut exact) = (0f64, 0f64, 0usize, 0usize);
        let (mut a, mut r) = (Vec::new(), Vec::new());
        let mut ops = None;
        let mut err = None;
        for (s, (gx, gy)) in &pairs {
            let (res, o) = measure(s.width * s.height, || {
                run_pair(gx, gy, s.width, s.height, gradient::magnitude_l2_approx)
            });
            ops.get_or_insert(o);
            let m = match res {
                Ok(m) => m,
                Err(e) => {
                    err = Some(e);
                    continue;
                }
            };
            for ((&x, &y), &mv) in gx.iter().zip(gy).zip(&m) {
                let t = reference_l2(x, y);
                let mv = mv as f64;
                n += 1;
                if mv == t.round() {
                    exact += 1;
                }
                a.push(mv);
                r.push(t);
                if t > 0.0 {
                    worst = worst.max(((mv - t).abs() - 0.5).max(0.0) / t);
                    worst_raw = worst_raw.max((mv - t).abs() / t);
                } else if mv != 0.0 {
                    worst = f64::INFINITY;
                }
            }
        }
        let stats = ErrorStats::compare(&a, &r, 65534.0);
        let mut row = KernelReport::from_stats(
            "gradient.magnitude_l2_approx",
            KernelFamily::Gradient,
            Contract::Tolerance,
            bound,
            &stats,
            ops.unwrap_or_default(),
        );
        // The contract figure for this kernel is relative (see the family docs).
        row.max_abs_err = worst;
        row.bound = bound;
        row.bit_exact_share = exact as f64 / n.max(1) as f64;
        row.pass = worst <= bound && err.is_none();
        row.notes.clear();
        row.metrics.insert("max_abs_err_lsb".into(), stats.max_abs);
        row.metrics
            .insert("max_rel_err_incl_rounding".into(), worst_raw);
        row.notes.push(
            "error is relative: max(0, |m - t| - 0.5) / t against t = sqrt(gx^2 + gy^2)".into(),
        );
        if worst > bound {
            row.notes
                .push(format!("relative error {worst} exceeds the bound {bound}"));
        }
        if let Some(e) = err {
            row.notes.push(e);
        }
        rows.push(row);
    }

    rows.push(bit_exact_row(
        "gradient.magnitude_l2_round",
        &pairs,
        gradient::magnitude_l2_round,
        reference_l2_round,
        65534.0,
    ));

    rows.push(bit_exact_row(
        "gradient.direction",
        &pairs,
        gradient::direction,
        |x, y| reference_sector(x, y) as f64,
        3.0,
    ));
    rows.push(crate::lines::angle_row());
    rows
}
