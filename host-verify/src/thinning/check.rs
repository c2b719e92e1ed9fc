//! The `thinning.thin` contract on the edge chain's hysteresis output.

use super::reference::reference;
use crate::contract::{KernelFamily, KernelReport};
use crate::edge_chain::{demo_chains, step_ops};
use crate::family::{as_f64, bit_exact_row};
use crate::scene::Scene;

/// The `thinning.thin` contract: the kernel on the edge chain's hysteresis
/// output of the demo scenes, against [`reference()`].
pub fn check(scenes: &[Scene]) -> Vec<KernelReport> {
    let (chains, problems) = demo_chains(scenes);
    let (mut a, mut r, pr) = (Vec::new(), Vec::new(), problems);
    let mut iters = 0u32;
    let mut deleted = 0u32;
    for (_, c) in &chains {
        let (want, _) = reference(&c.edges, c.w, c.h);
        a.extend(as_f64(&c.thin));
        r.extend(as_f64(&want));
        iters = iters.max(c.thin_stats.iterations);
        deleted += c.thin_stats.deleted;
    }
    let ops = step_ops(&chains, 4);
    let mut row = bit_exact_row(
        "thinning.thin",
        KernelFamily::Thinning,
        &a,
        &r,
        255.0,
        ops,
        pr,
        "Zhang-Suen (table) vs a direct per-pixel reference of the paper's conditions",
    );
    row.metrics.insert("max_iterations".into(), iters as f64);
    row.metrics.insert("deleted".into(), deleted as f64);
    vec![row]
}
