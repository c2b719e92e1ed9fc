//! The `nms.suppress` contract on the edge chain's intermediates.

use super::reference::{reference, suppress_interpolated_int};
use crate::contract::{KernelFamily, KernelReport};
use crate::edge_chain::{demo_chains, run_nms_interpolated, step_ops};
use crate::family::{as_f64, bit_exact_row};
use crate::opcount::measure;
use crate::scene::Scene;

/// The `nms.suppress` contract: the kernel's suppression of the edge
/// chain's rounded L2 magnitudes and sectors on the demo scenes, against
/// [`reference()`].
pub fn check(scenes: &[Scene]) -> Vec<KernelReport> {
    let (chains, problems) = demo_chains(scenes);
    let (mut a, mut r, mut pr) = (Vec::new(), Vec::new(), problems);
    for (s, c) in &chains {
        match reference(&c.mag, &c.dir, c.w, c.h) {
            Ok(want) => {
                a.extend(as_f64(&c.nms));
                r.extend(as_f64(&want));
            }
            Err(err) => pr.push(format!("{}: reference rejected input: {err}", s.name)),
        }
    }
    let ops = step_ops(&chains, 0);
    let mut row = bit_exact_row(
            "nms.suppress",
            KernelFamily::Nms,
            &a,
            &r,
            65535.0,
            ops,
            pr,
            "suppressed rounded-L2 magnitudes vs the integer reference model (offsets from the sector angle)",
        );
    let kept: usize = chains
        .iter()
        .map(|(_, c)| c.nms.iter().filter(|&&v| v > 0).count())
        .sum();
    let px: usize = chains.iter().map(|(_, c)| c.w * c.h).sum();
    row.metrics
        .insert("kept_share".into(), kept as f64 / px.max(1) as f64);

    // The interpolating suppression on the same gradients.
    let (mut a, mut r, mut pr) = (Vec::new(), Vec::new(), Vec::new());
    let (mut kept, mut ops) = (0usize, None);
    for (s, c) in &chains {
        let (got, o) = measure(c.w * c.h, || {
            run_nms_interpolated(&c.mag, &c.gx, &c.gy, c.w, c.h)
        });
        ops.get_or_insert(o);
        match got {
            Ok(got) => {
                kept += got.iter().filter(|&&v| v > 0).count();
                a.extend(as_f64(&got));
                r.extend(as_f64(&suppress_interpolated_int(
                    &c.mag, &c.gx, &c.gy, c.w, c.h,
                )));
            }
            Err(err) => pr.push(format!("{}: kernel error: {err}", s.name)),
        }
    }
    let mut interp = bit_exact_row(
        "nms.suppress_interpolated",
        KernelFamily::Nms,
        &a,
        &r,
        65535.0,
        ops.unwrap_or_default(),
        pr,
        "suppressed rounded-L2 magnitudes along the exact gradient direction vs the f64 \
         interpolating reference with tie tolerance (equal to the exact comparison on integer inputs)",
    );
    interp
        .metrics
        .insert("kept_share".into(), kept as f64 / px.max(1) as f64);
    vec![row, interp]
}
