//! The list of kernel families and kernel ids, and what needs all of them:
//! recomputing any golden vector, writing all golden cases, checking a
//! golden folder.
//!
//! A kernel id is `<family>.<function or preset>`: the stem of the kernel
//! file and the name of the public function (or preset constructor, or type
//! in snake case) it runs, e.g. `filter.binomial5`, `gradient.direction`,
//! `warp.pixel_map` ([`fixsight::warp::PixelMap`]). The same id names the
//! golden vectors' `kernel` field, the row of `report.json`, the row of
//! `targets.json` and the on-target dispatcher. The [`Family`] type lives
//! in [`crate::family`]; family modules import that, never this list.

use crate::edge_chain::GoldenCrop;
use crate::family::Family;
use crate::golden::{self, Blob, GoldenCase, GoldenError, GoldenSummary};
use crate::scene::Scene;
use std::path::Path;

/// Every family, in report order; adding a family is one line here.
pub const FAMILIES: &[Family] = &[
    crate::filter::FAMILY,
    crate::gradient::FAMILY,
    crate::nms::FAMILY,
    crate::hysteresis::FAMILY,
    crate::thinning::FAMILY,
    crate::chain::FAMILY,
    crate::warp::FAMILY,
    crate::pipeline::FAMILY,
    crate::marking::FAMILY,
    crate::track::FAMILY,
    crate::lines::FAMILY,
];

/// Every kernel id of every family, in report order.
pub fn kernel_ids() -> impl Iterator<Item = &'static str> {
    FAMILIES.iter().flat_map(|f| f.kernels.iter().copied())
}

/// The family a kernel id (`<family>.<name>`) belongs to.
pub fn family_of(kernel: &str) -> Option<&'static Family> {
    let prefix = kernel.split('.').next()?;
    FAMILIES.iter().find(|f| f.name == prefix)
}

/// Recomputes one golden vector with the family its kernel id belongs to.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    let family =
        family_of(kernel).ok_or_else(|| format!("kernel `{kernel}` belongs to no known family"))?;
    (family.run_vector)(kernel, params, inputs)
}

/// Recomputes one golden vector with padded rows ([`crate::padded`]).
pub fn run_padded(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
    row_pad: usize,
) -> Result<Vec<Blob>, String> {
    crate::padded::run_vector(kernel, params, inputs, row_pad)
}

/// Both runners of the golden check: [`run_vector`] and [`run_padded`].
pub const RUNNERS: golden::Runners = golden::Runners {
    packed: run_vector,
    padded: run_padded,
};

/// The row-loop families' cases on one scene crop, ids ending in `.<tag>`:
/// the long-row vectors of the golden folder and `golden extra`.
pub const CROP_CASES: &[fn(&str, &GoldenCrop) -> Vec<GoldenCase>] = &[
    crate::filter::golden::crop_cases,
    crate::gradient::golden::crop_cases,
    crate::nms::golden::crop_cases,
    crate::hysteresis::golden::crop_cases,
    crate::thinning::golden::crop_cases,
    crate::chain::golden::crop_cases,
];

/// Every entry of [`CROP_CASES`] on `g`.
pub fn crop_cases(tag: &str, g: &GoldenCrop) -> Vec<GoldenCase> {
    CROP_CASES.iter().flat_map(|f| f(tag, g)).collect()
}

/// All golden cases of all families, from the given scenes, then the
/// padded-row copies of some of them ([`crate::padded::cases`]).
pub fn all_cases(scenes: &[Scene]) -> Vec<GoldenCase> {
    let bar = crate::progress::bar(FAMILIES.len() as u64, "golden cases");
    let mut cases: Vec<GoldenCase> = FAMILIES
        .iter()
        .flat_map(|f| {
            bar.set_message(f.name);
            let c = (f.golden_cases)(scenes);
            bar.inc(1);
            c
        })
        .collect();
    bar.finish_and_clear();
    let padded = crate::padded::cases(&cases);
    cases.extend(padded);
    cases
}

/// Checks every vector of the golden folder `dir` with [`run_vector`].
pub fn check_golden(dir: &Path) -> Result<GoldenSummary, GoldenError> {
    golden::check(dir, RUNNERS)
}
