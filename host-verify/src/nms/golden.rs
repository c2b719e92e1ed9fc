//! Golden cases and vector recomputation of `nms.suppress`.

use crate::edge_chain::{golden_crop, run_nms, synthetic_edges};
use crate::family::{case, input, no_params};
use crate::golden::{Blob, GoldenCase};
use crate::scene::Scene;
use serde_json::json;

/// Recomputes an `nms.suppress` vector.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    match kernel {
        "nms.suppress" => {
            no_params(kernel, params)?;
            let (bm, bd) = (input(inputs, "mag")?, input(inputs, "dir")?);
            if (bm.width, bm.height) != (bd.width, bd.height) {
                return Err("mag and dir differ in size".into());
            }
            let (w, h) = (bm.width, bm.height);
            Ok(vec![Blob::from_u16(
                "nms",
                w,
                h,
                1,
                &run_nms(&bm.to_u16()?, &bd.to_u8()?, w, h)?,
            )])
        }
        _ => Err(format!("unknown nms kernel `{kernel}`")),
    }
}

/// Golden cases: the suppression inputs of the edge chain on a scene crop,
/// and plateaus and ties in every sector.
pub fn golden_cases(scenes: &[Scene]) -> Vec<GoldenCase> {
    let g = golden_crop(scenes);
    let t = synthetic_edges();
    let (w, h) = (g.w, g.h);
    let (tw, th) = t.ties_size;
    vec![
        case(
            run_vector,
            "nms.suppress.floor",
            format!(
                "suppression of the rounded L2 magnitude and sectors of {}",
                g.at
            ),
            "nms.suppress",
            json!({}),
            vec![
                Blob::from_u16("mag", w, h, 1, &g.chain.mag),
                Blob::from_u8("dir", w, h, 1, &g.chain.dir),
            ],
        ),
        case(
            run_vector,
            "nms.suppress.ties",
            "magnitudes 0..3 and random sectors: plateaus everywhere, the tie rule decides".into(),
            "nms.suppress",
            json!({}),
            vec![
                Blob::from_u16("mag", tw, th, 1, &t.ties_mag),
                Blob::from_u8("dir", tw, th, 1, &t.ties_dir),
            ],
        ),
    ]
}
