//! Golden cases, params and vector recomputation of the `hysteresis.*`
//! kernel ids.

use crate::edge_chain::{
    golden_crop, run_classify, run_link, run_thresholds, synthetic_edges, ChainParams,
    VECTOR_PARAMS,
};
use crate::family::{case, input, parse_params};
use crate::golden::{Blob, GoldenCase};
use crate::scene::Scene;
use fixsight::hysteresis::{Thresholds, MIN_STACK};
use serde::{Deserialize, Serialize};
use serde_json::json;

/// Parameters of `hysteresis.classify`.
#[derive(Debug, Clone, Copy, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ClassifyParams {
    /// Low threshold.
    pub low: u16,
    /// High threshold.
    pub high: u16,
}

/// Parameters of `hysteresis.thresholds`.
#[derive(Debug, Clone, Copy, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ThresholdParams {
    /// Histogram bins.
    pub bins: usize,
    /// Bin width shift.
    pub shift: u32,
    /// Permille below `high`.
    pub high_permille: u16,
    /// `low / high` as U0F16 bits.
    pub low_ratio_u0f16: u16,
}

/// Parameters of `hysteresis.link`.
#[derive(Debug, Clone, Copy, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StackParams {
    /// Work-stack entries.
    pub stack: usize,
}

fn e(err: fixsight::Error) -> String {
    err.to_string()
}

/// Recomputes a `hysteresis.*` vector.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    match kernel {
        "hysteresis.thresholds" => {
            let p: ThresholdParams = parse_params(kernel, params)?;
            let b = input(inputs, "mag")?;
            let cp = ChainParams {
                bins: p.bins,
                shift: p.shift,
                high_permille: p.high_permille,
                low_ratio_u0f16: p.low_ratio_u0f16,
                stack: MIN_STACK,
                suppression: Default::default(),
            };
            let t = run_thresholds(&b.to_u16()?, b.width, b.height, &cp)?;
            Ok(vec![Blob::from_u16(
                "thresholds",
                2,
                1,
                1,
                &[t.low(), t.high()],
            )])
        }
        "hysteresis.classify" => {
            let p: ClassifyParams = parse_params(kernel, params)?;
            let t = Thresholds::new(p.low, p.high).map_err(e)?;
            let b = input(inputs, "mag")?;
            let (w, h) = (b.width, b.height);
            Ok(vec![Blob::from_u8(
                "codes",
                w,
                h,
                1,
                &run_classify(&b.to_u16()?, w, h, &t)?,
            )])
        }
        "hysteresis.link" => {
            let p: StackParams = parse_params(kernel, params)?;
            let b = input(inputs, "codes")?;
            let (w, h) = (b.width, b.height);
            Ok(vec![Blob::from_u8(
                "edges",
                w,
                h,
                1,
                &run_link(&b.to_u8()?, w, h, p.stack)?.0,
            )])
        }
        _ => Err(format!("unknown hysteresis kernel `{kernel}`")),
    }
}

/// Golden cases: thresholds, codes and hysteresis on the edge chain's
/// intermediates of a scene crop, a saturating histogram, and a dense weak
/// code map with the minimum stack.
pub fn golden_cases(scenes: &[Scene]) -> Vec<GoldenCase> {
    let t = synthetic_edges();
    let big: Vec<u16> = (0..64u32).map(|i| (i * i * 16).min(65535) as u16).collect();
    let (hw, hh) = t.codes_size;
    let mut v = crop_cases("floor", &golden_crop(scenes));
    v.extend([
        case(
            run_vector,
            "hysteresis.thresholds.saturating",
            "magnitudes up to 65535 with 16 bins of width 2^12: the last bin collects the overflow"
                .into(),
            "hysteresis.thresholds",
            json!({"bins": 16, "shift": 12, "high_permille": 990, "low_ratio_u0f16": 21845}),
            vec![Blob::from_u16("mag", 8, 8, 1, &big)],
        ),
        case(
            run_vector,
            "hysteresis.link.min-stack",
            "dense random weak codes with the minimum 8-entry stack: deferred seeds and rescans"
                .into(),
            "hysteresis.link",
            json!({"stack": MIN_STACK}),
            vec![Blob::from_u8("codes", hw, hh, 1, &t.codes)],
        ),
    ]);
    for (tag, g) in crate::edge_chain::wide_crops(scenes) {
        v.extend(crop_cases(tag, &g));
    }
    v
}

/// The three hysteresis steps on the edge chain's intermediates of one
/// crop (the long-row vectors, `golden extra`), ids `<kernel id>.<tag>`.
pub fn crop_cases(tag: &str, g: &crate::edge_chain::GoldenCrop) -> Vec<GoldenCase> {
    let (w, h, c, at) = (g.w, g.h, &g.chain, &g.at);
    vec![
        case(
            run_vector,
            &format!("hysteresis.thresholds.{tag}"),
            format!("automatic thresholds of the suppressed magnitudes of {at}"),
            "hysteresis.thresholds",
            thresholds_params(),
            vec![Blob::from_u16("mag", w, h, 1, &c.nms)],
        ),
        case(
            run_vector,
            &format!("hysteresis.classify.{tag}"),
            format!("double threshold of the suppressed magnitudes of {at}"),
            "hysteresis.classify",
            json!({"low": c.thresholds.low(), "high": c.thresholds.high()}),
            vec![Blob::from_u16("mag", w, h, 1, &c.nms)],
        ),
        case(
            run_vector,
            &format!("hysteresis.link.{tag}"),
            format!("hysteresis of the edge codes of {at}"),
            "hysteresis.link",
            json!({"stack": VECTOR_PARAMS.stack}),
            vec![Blob::from_u8("codes", w, h, 1, &c.codes)],
        ),
    ]
}

/// The automatic-threshold parameters of the edge chain's vectors.
fn thresholds_params() -> serde_json::Value {
    json!({"bins": VECTOR_PARAMS.bins, "shift": VECTOR_PARAMS.shift, "high_permille": VECTOR_PARAMS.high_permille,
           "low_ratio_u0f16": VECTOR_PARAMS.low_ratio_u0f16})
}
