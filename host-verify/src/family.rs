//! What every kernel family provides ([`Family`]) and the helpers the
//! family modules share. The list of families is [`crate::families`];
//! this module imports none of them, so nothing imports in a circle.

use crate::contract::{Contract, KernelFamily, KernelReport};
pub use crate::golden::RunVector;
use crate::golden::{Blob, GoldenCase};
use crate::lens::LensInUse;
use crate::metrics::ErrorStats;
use crate::opcount::OpsPerPx;
use crate::scene::Scene;

/// What the host tool needs from a kernel family.
pub struct Family {
    /// Family name: the stem of its files, the part of its kernel ids before
    /// the first `.`, and the `family` field of its report rows.
    pub name: &'static str,
    /// Every kernel id of the family, in report order.
    pub kernels: &'static [&'static str],
    /// `true` when the kernels are composed on the host from kernel-crate
    /// functions (no `kernels/src/<name>.rs` yet).
    pub composed_on_host: bool,
    /// Runs every contract check of the family on the demo scenes; rows
    /// that depend on the camera's lens use the given one.
    pub check: fn(&[Scene], &LensInUse) -> Vec<KernelReport>,
    /// The family's golden cases (inputs, parameters, expected outputs
    /// computed by the kernels).
    pub golden_cases: fn(&[Scene]) -> Vec<GoldenCase>,
    /// Recomputes one golden vector.
    pub run_vector: RunVector,
}

/// Rows that stay on the built-in demo lens whatever lens the report was
/// given: with another lens, each row gets a note saying so and `why`.
///
/// ```
/// use fixsight_verify::contract::{Contract, KernelFamily, KernelReport};
/// use fixsight_verify::family::kept_on_demo_lens;
/// use fixsight_verify::lens::LensInUse;
/// use fixsight_verify::metrics::ErrorStats;
/// use fixsight_verify::opcount::OpsPerPx;
/// let stats = ErrorStats::compare(&[1.0], &[1.0], 1.0);
/// let row = KernelReport::from_stats("warp.pixel_map", KernelFamily::Warp,
///     Contract::BitExact, 0.0, &stats, OpsPerPx::default());
/// let demo = LensInUse::demo().unwrap();
/// let rows = kept_on_demo_lens(vec![row], &demo, "its limits are the demo's");
/// assert!(rows[0].notes.is_empty());
/// ```
pub fn kept_on_demo_lens(
    mut rows: Vec<KernelReport>,
    lens: &LensInUse,
    why: &str,
) -> Vec<KernelReport> {
    if !lens.is_demo() {
        for r in &mut rows {
            r.notes.push(format!(
                "computed with the built-in demo lens, not the {}: {why}",
                lens.describe()
            ));
        }
    }
    rows
}

/// Parses a family's parameter object, naming the kernel in the error.
pub fn parse_params<T: serde::de::DeserializeOwned>(
    kernel: &str,
    params: &serde_json::Value,
) -> Result<T, String> {
    serde_json::from_value(params.clone()).map_err(|e| format!("params of `{kernel}`: {e}"))
}

/// Largest buffer, in elements, that a golden parameter may ask for (a
/// work stack, a histogram): 2^24, far above what any vector needs.
pub const MAX_PARAM_ELEMS: usize = 1 << 24;

/// Checks a buffer length taken from a golden parameter against
/// [`MAX_PARAM_ELEMS`] before anything is allocated.
///
/// ```
/// use fixsight_verify::family::buffer_len;
/// assert_eq!(buffer_len("stack", 64), Ok(64));
/// assert!(buffer_len("bins", 1 << 61).unwrap_err().contains("bins"));
/// ```
pub fn buffer_len(what: &str, n: usize) -> Result<usize, String> {
    if n > MAX_PARAM_ELEMS {
        Err(format!(
            "{what} = {n} is above the {MAX_PARAM_ELEMS} elements the tool allocates for it"
        ))
    } else {
        Ok(n)
    }
}

/// Finds the input image called `name`.
pub fn input<'a>(inputs: &'a [Blob], name: &str) -> Result<&'a Blob, String> {
    inputs
        .iter()
        .find(|b| b.name == name)
        .ok_or_else(|| format!("input image `{name}` is missing"))
}

/// Fails unless `params` is an empty object.
pub fn no_params(kernel: &str, params: &serde_json::Value) -> Result<(), String> {
    if params.as_object().is_some_and(|o| o.is_empty()) {
        Ok(())
    } else {
        Err(format!("params of `{kernel}` must be an empty object"))
    }
}

/// A golden case whose expected outputs `run` computes.
pub fn case(
    run: RunVector,
    id: &str,
    comment: String,
    kernel: &str,
    params: serde_json::Value,
    inputs: Vec<Blob>,
) -> GoldenCase {
    let expected = run(kernel, &params, &inputs).expect("golden inputs are valid");
    GoldenCase {
        row_pad: None,
        id: id.into(),
        comment,
        kernel: kernel.into(),
        params,
        inputs,
        expected,
    }
}

/// A bit-exact report row of an edge step.
#[allow(clippy::too_many_arguments)]
pub fn bit_exact_row(
    name: &str,
    family: KernelFamily,
    actual: &[f64],
    reference: &[f64],
    peak: f64,
    ops: OpsPerPx,
    problems: Vec<String>,
    note: &str,
) -> KernelReport {
    let stats = ErrorStats::compare(actual, reference, peak);
    let mut r = KernelReport::from_stats(name, family, Contract::BitExact, 0.0, &stats, ops);
    r.notes.push(note.to_string());
    for p in problems {
        r.fail(p);
    }
    r
}

/// Widens integer samples to `f64`.
pub fn as_f64<T: Copy + Into<f64>>(v: &[T]) -> Vec<f64> {
    v.iter().map(|&x| x.into()).collect()
}
