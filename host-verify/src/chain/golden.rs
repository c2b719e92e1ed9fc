//! The golden case and vector recomputation of `chain.edges`.

use super::ID;
use crate::edge_chain::{golden_crop, run_chain, ChainParams, VECTOR_PARAMS};
use crate::family::{case, input, parse_params};
use crate::golden::{Blob, GoldenCase};
use crate::scene::Scene;

/// Recomputes the `chain.edges` vector.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    match kernel {
        "chain.edges" => {
            let p: ChainParams = parse_params(kernel, params)?;
            let b = input(inputs, "src")?;
            let (w, h) = (b.width, b.height);
            Ok(vec![Blob::from_u8(
                "edges",
                w,
                h,
                1,
                &run_chain(&b.to_u8()?, w, h, &p)?.thin,
            )])
        }
        _ => Err(format!("unknown chain kernel `{kernel}`")),
    }
}

/// Golden case: the whole chain on the edge-step crop.
pub fn golden_cases(scenes: &[Scene]) -> Vec<GoldenCase> {
    let mut v = crop_cases("floor", &golden_crop(scenes));
    for (tag, g) in crate::edge_chain::wide_crops(scenes) {
        v.extend(crop_cases(tag, &g));
    }
    v
}

/// The whole chain on one crop (the long-row vectors, `golden extra`), id
/// `chain.edges.<tag>`.
pub fn crop_cases(tag: &str, g: &crate::edge_chain::GoldenCrop) -> Vec<GoldenCase> {
    vec![case(
        run_vector,
        &format!("chain.edges.{tag}"),
        format!(
            "the whole chain (Gaussian 7-tap, Sobel, rounded L2, NMS, auto thresholds, hysteresis, thinning) on {}",
            g.at
        ),
        ID,
        serde_json::to_value(VECTOR_PARAMS).expect("serialisable"),
        vec![Blob::from_u8("src", g.w, g.h, 1, &g.img)],
    )]
}
