//! The verification contract: one [`KernelReport`] row per kernel, as it
//! appears in the printed table and in `report.json`.
//!
//! Every kernel declares one of two contracts:
//! * [`Contract::BitExact`]: the kernel output equals the `f64` reference
//!   after the same documented final rounding, on every sample;
//!   `bound` is 0.
//! * [`Contract::Tolerance`]: `max_abs_err <= bound`, where `bound` is an
//!   analytical worst case derived from the number formats (stated in the
//!   reference module's docs), never a fitted number.

use crate::metrics::ErrorStats;
use crate::opcount::OpsPerPx;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Family of a kernel (the `family` field of `report.json`): the stem of
/// the kernel file `kernels/src/<stem>.rs`, or `chain` for the host-side
/// composition of the edge chain.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum KernelFamily {
    /// Separable filters (`filter.rs`).
    Filter,
    /// Gradient magnitude and direction (`gradient.rs`).
    Gradient,
    /// Non-maximum suppression (`nms.rs`).
    Nms,
    /// Double threshold and hysteresis (`hysteresis.rs`).
    Hysteresis,
    /// Thinning (`thinning.rs`).
    Thinning,
    /// Lens-undistortion warp (`warp.rs`).
    Warp,
    /// The edge chain composed on the host (`host-verify/src/chain.rs`).
    Chain,
    /// The streamed edge stage (`pipeline.rs`).
    Pipeline,
    /// Marking selection (`marking.rs`).
    Marking,
    /// Tape-edge tracker and drift warning (`track.rs`).
    Track,
    /// Line voting (`lines.rs`).
    Lines,
}

impl KernelFamily {
    /// The name as written in `report.json`.
    pub fn name(self) -> &'static str {
        match self {
            KernelFamily::Filter => "filter",
            KernelFamily::Gradient => "gradient",
            KernelFamily::Nms => "nms",
            KernelFamily::Hysteresis => "hysteresis",
            KernelFamily::Thinning => "thinning",
            KernelFamily::Warp => "warp",
            KernelFamily::Chain => "chain",
            KernelFamily::Pipeline => "pipeline",
            KernelFamily::Marking => "marking",
            KernelFamily::Track => "track",
            KernelFamily::Lines => "lines",
        }
    }
}

/// The declared contract.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Contract {
    /// Equal to the reference after the documented final rounding.
    #[serde(rename = "bit-exact")]
    BitExact,
    /// Within an analytical bound of the reference.
    #[serde(rename = "tolerance")]
    Tolerance,
}

/// One row of the report.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct KernelReport {
    /// Kernel name, unique across the report (e.g. `filter.binomial5`).
    pub name: String,
    /// Family.
    pub family: KernelFamily,
    /// Declared contract.
    pub contract: Contract,
    /// Largest absolute error measured over all demo scenes.
    pub max_abs_err: f64,
    /// Analytical bound (0 for bit-exact).
    pub bound: f64,
    /// Share of output samples equal to the reference.
    pub bit_exact_share: f64,
    /// Operations per output pixel, counted by the kernel itself.
    pub ops_per_px: OpsPerPx,
    /// Free-form named figures (error statistics, geometry, F1, ...).
    pub metrics: BTreeMap<String, f64>,
    /// Verdict.
    pub pass: bool,
    /// Human-readable notes: what was compared, and why a check failed.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub notes: Vec<String>,
}

impl KernelReport {
    /// A row for a kernel judged on one set of error statistics: pass when
    /// the contract holds (bit-exact: every sample exact; tolerance:
    /// `max_abs <= bound`).
    pub fn from_stats(
        name: &str,
        family: KernelFamily,
        contract: Contract,
        bound: f64,
        stats: &ErrorStats,
        ops_per_px: OpsPerPx,
    ) -> Self {
        let pass = match contract {
            Contract::BitExact => stats.max_abs == 0.0,
            Contract::Tolerance => stats.max_abs <= bound,
        };
        let mut metrics = BTreeMap::new();
        stats.add_to(&mut metrics, "");
        metrics.insert("samples".into(), stats.samples as f64);
        let mut notes = Vec::new();
        if !pass {
            notes.push(format!(
                "max |err| {} exceeds the {} bound {}",
                stats.max_abs,
                match contract {
                    Contract::BitExact => "bit-exact",
                    Contract::Tolerance => "tolerance",
                },
                bound
            ));
        }
        Self {
            name: name.to_string(),
            family,
            contract,
            max_abs_err: stats.max_abs,
            bound: if contract == Contract::BitExact {
                0.0
            } else {
                bound
            },
            bit_exact_share: stats.exact_share,
            ops_per_px,
            metrics,
            pass,
            notes,
        }
    }

    /// A failed row for a kernel whose figures could not be computed:
    /// no samples, no operations, `why` as its note.
    pub fn failed(
        name: &str,
        family: KernelFamily,
        contract: Contract,
        why: impl Into<String>,
    ) -> Self {
        let empty = ErrorStats::compare(&[], &[], 1.0);
        let mut r = Self::from_stats(name, family, contract, 0.0, &empty, OpsPerPx::default());
        r.fail(why);
        r
    }

    /// Marks the row failed with a reason (used for extra checks such as
    /// streaming == whole frame).
    pub fn fail(&mut self, why: impl Into<String>) {
        self.pass = false;
        self.notes.push(why.into());
    }
}
