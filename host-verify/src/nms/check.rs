//! The `nms.suppress` contract on the edge chain's intermediates.

use super::reference::reference;
use crate::contract::{KernelFamily, KernelReport};
use crate::edge_chain::{demo_chains, step_ops};
use crate::family::{as_f64, bit_exact_row};
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
    vec![row]
}
