//! Operations per pixel: runs a kernel with the `count-ops` tallies on and
//! turns the counts into per-pixel figures, plain and weighted.
//!
//! The weights are data (`host-verify/data/op-weights.json`), documented
//! there with their source.

use fixsight::ops::{self, Op, OpCounts, OP_KINDS};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::sync::OnceLock;

const WEIGHTS_JSON: &str = include_str!("../data/op-weights.json");

#[derive(Deserialize)]
struct WeightsFile {
    weights: BTreeMap<String, u32>,
}

/// The weight table, indexed by `Op as usize`.
///
/// Panics only if the JSON compiled into the binary is malformed, which the
/// unit test below rules out.
pub fn weights() -> &'static [u32; OP_KINDS] {
    static W: OnceLock<[u32; OP_KINDS]> = OnceLock::new();
    W.get_or_init(|| {
        let f: WeightsFile =
            serde_json::from_str(WEIGHTS_JSON).expect("data/op-weights.json is valid JSON");
        let mut w = [0u32; OP_KINDS];
        for op in Op::ALL {
            w[op as usize] = *f
                .weights
                .get(op.name())
                .expect("data/op-weights.json names every category");
        }
        w
    })
}

/// Operations per output pixel.
#[derive(Debug, Clone, Default, Serialize, Deserialize, PartialEq)]
pub struct OpsPerPx {
    /// All categories added up.
    pub total: f64,
    /// Weighted sum (see [`weights`]).
    pub weighted: f64,
    /// Per category (`add_sub`, `mul`, `mac`, ...).
    #[serde(flatten)]
    pub per_category: BTreeMap<String, f64>,
}

impl OpsPerPx {
    /// Per-pixel figures of `counts` over `pixels` output pixels.
    pub fn from_counts(counts: &OpCounts, pixels: usize) -> Self {
        let px = pixels.max(1) as f64;
        let per_category = Op::ALL
            .iter()
            .map(|&op| (op.name().to_string(), counts.get(op) as f64 / px))
            .collect();
        Self {
            total: counts.total() as f64 / px,
            weighted: counts.weighted(weights()) as f64 / px,
            per_category,
        }
    }

    /// Sum of two per-pixel figures (for chained kernels on the same pixels).
    pub fn plus(&self, other: &OpsPerPx) -> OpsPerPx {
        let mut per_category = self.per_category.clone();
        for (k, v) in &other.per_category {
            *per_category.entry(k.clone()).or_insert(0.0) += v;
        }
        OpsPerPx {
            total: self.total + other.total,
            weighted: self.weighted + other.weighted,
            per_category,
        }
    }
}

/// Runs `f` with fresh counters on this thread and returns its result and
/// the operations it counted per output pixel.
pub fn measure<R>(pixels: usize, f: impl FnOnce() -> R) -> (R, OpsPerPx) {
    let _ = ops::take();
    let r = f();
    let counts = ops::take();
    (r, OpsPerPx::from_counts(&counts, pixels))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn weight_table_covers_every_category() {
        let w = weights();
        assert!(w.iter().all(|&x| x > 0));
        assert_eq!(w[Op::Div as usize], 18);
    }

    #[test]
    fn counting_is_on_in_the_host_build() {
        let (_, o) = measure(2, || ops::tally(Op::Mac, 6));
        assert_eq!(o.per_category["mac"], 3.0);
        assert_eq!(o.total, 3.0);
    }
}
