//! The registry of kernel families. Each family module (named like the
//! kernel file it verifies) exposes one [`Family`]; adding a family is one
//! line in [`FAMILIES`].

use crate::contract::KernelReport;
use crate::golden::{Blob, GoldenCase};
use crate::scene::Scene;

/// Recomputes one golden vector: `(kernel id, params, inputs) -> outputs`,
/// or a message saying what was wrong with the vector.
pub type RunVector = fn(&str, &serde_json::Value, &[Blob]) -> Result<Vec<Blob>, String>;

/// What the host tool needs from a kernel family.
pub struct Family {
    /// Family name: the part of golden kernel ids before the first `.`.
    pub name: &'static str,
    /// Runs every contract check of the family on the demo scenes.
    pub check: fn(&[Scene]) -> Vec<KernelReport>,
    /// The family's golden cases (inputs, parameters, expected outputs
    /// computed by the kernels).
    pub golden_cases: fn(&[Scene]) -> Vec<GoldenCase>,
    /// Recomputes one golden vector.
    pub run_vector: RunVector,
}

/// Every family, in report order.
pub const FAMILIES: &[Family] = &[
    crate::filter::FAMILY,
    crate::gradient::FAMILY,
    crate::canny::FAMILY,
    crate::remap::FAMILY,
    crate::lines::FAMILY,
];

/// The family a golden kernel id (`<family>.<kernel>`) belongs to.
pub fn family_of(kernel: &str) -> Option<&'static Family> {
    let prefix = kernel.split('.').next()?;
    FAMILIES.iter().find(|f| f.name == prefix)
}

/// Parses a family's parameter object, naming the kernel in the error.
pub fn parse_params<T: serde::de::DeserializeOwned>(
    kernel: &str,
    params: &serde_json::Value,
) -> Result<T, String> {
    serde_json::from_value(params.clone()).map_err(|e| format!("params of `{kernel}`: {e}"))
}

/// Finds the input image called `name`.
pub fn input<'a>(inputs: &'a [Blob], name: &str) -> Result<&'a Blob, String> {
    inputs
        .iter()
        .find(|b| b.name == name)
        .ok_or_else(|| format!("input image `{name}` is missing"))
}
