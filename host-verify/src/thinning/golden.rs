//! Golden cases and vector recomputation of `thinning.thin`.

use crate::edge_chain::{golden_crop, run_thinning};
use crate::family::{case, input, no_params};
use crate::golden::{Blob, GoldenCase};
use crate::scene::Scene;
use serde_json::json;

/// Recomputes a `thinning.thin` vector.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    match kernel {
        "thinning.thin" => {
            no_params(kernel, params)?;
            let b = input(inputs, "map")?;
            let (w, h) = (b.width, b.height);
            Ok(vec![Blob::from_u8(
                "thin",
                w,
                h,
                1,
                &run_thinning(&b.to_u8()?, w, h)?.0,
            )])
        }
        _ => Err(format!("unknown thinning kernel `{kernel}`")),
    }
}

/// Golden cases: the hysteresis output of the edge chain on a scene crop,
/// and thick synthetic blocks.
pub fn golden_cases(scenes: &[Scene]) -> Vec<GoldenCase> {
    let g = golden_crop(scenes);
    let (bw, bh) = (16usize, 12usize);
    let blocks: Vec<u8> = (0..bw * bh)
        .map(|i| {
            let (x, y) = (i % bw, i / bw);
            let bar = (2..7).contains(&y) && (1..14).contains(&x);
            let post = (7..11).contains(&y) && (9..13).contains(&x);
            let square = (9..11).contains(&y) && (2..4).contains(&x);
            if bar || post || square {
                200
            } else {
                0
            }
        })
        .collect();
    let mut v = vec![
        case(
            run_vector,
            "thinning.thin.floor",
            format!("thinning of the hysteresis output of {}", g.at),
            "thinning.thin",
            json!({}),
            vec![Blob::from_u8("map", g.w, g.h, 1, &g.chain.edges)],
        ),
        case(
            run_vector,
            "thinning.thin.blocks",
            "a thick bar with a post, and an isolated 2x2 block that the method removes".into(),
            "thinning.thin",
            json!({}),
            vec![Blob::from_u8("map", bw, bh, 1, &blocks)],
        ),
    ];
    for (tag, g) in crate::edge_chain::wide_crops(scenes) {
        v.extend(crop_cases(tag, &g));
    }
    v
}

/// Thinning of the edge chain's hysteresis output on one crop (the
/// long-row vectors, `golden extra`), id `thinning.thin.<tag>`.
pub fn crop_cases(tag: &str, g: &crate::edge_chain::GoldenCrop) -> Vec<GoldenCase> {
    vec![case(
        run_vector,
        &format!("thinning.thin.{tag}"),
        format!("thinning of the hysteresis output of {}", g.at),
        "thinning.thin",
        json!({}),
        vec![Blob::from_u8("map", g.w, g.h, 1, &g.chain.edges)],
    )]
}
