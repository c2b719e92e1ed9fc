//! Golden cases and vector recomputation of the `gradient.*` kernel ids.

use super::run::run_pair;
use crate::family::input;
use crate::filter::run::run_whole;
use crate::golden::{crop, Blob, GoldenCase};
use crate::scene::Scene;
use fixsight::filter::{sobel_x, sobel_y, Border};
use fixsight::gradient;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde_json::json;

/// Golden cases: the three kernels on the Sobel gradients of a scene crop,
/// and on random full-range `i16` pairs including the extremes.
pub fn golden_cases(scenes: &[Scene]) -> Vec<GoldenCase> {
    let s = &scenes[1 % scenes.len()];
    let (w, h) = (33usize, 21usize);
    let img = crop(s, 150, 140, w, h);
    let gx = run_whole::<i16>(&sobel_x(Border::Clamp), &img, w, h).expect("valid size");
    let gy = run_whole::<i16>(&sobel_y(Border::Clamp), &img, w, h).expect("valid size");
    let mut rng = ChaCha8Rng::seed_from_u64(0x6AD1);
    let (rw, rh) = (24usize, 16usize);
    let mut rx: Vec<i16> = (0..rw * rh).map(|_| rng.random()).collect();
    let mut ry: Vec<i16> = (0..rw * rh).map(|_| rng.random()).collect();
    // Extremes and boundary cases at the start.
    let special: [(i16, i16); 12] = [
        (0, 0),
        (-32768, -32768),
        (-32768, 32767),
        (32767, -32768),
        (100, 41),
        (100, 42),
        (41, 100),
        (42, 100),
        (-100, 242),
        (-100, 241),
        (1, 0),
        (0, -1),
    ];
    for (i, &(a, b)) in special.iter().enumerate() {
        rx[i] = a;
        ry[i] = b;
    }
    let mut v = Vec::new();
    let sets = vec![
        (
            "floor",
            format!("Sobel gradients of a {w}x{h} crop of scene {}", s.name),
            &gx,
            &gy,
            w,
            h,
        ),
        (
            "random",
            "random full-range i16 pairs, extremes and sector boundaries first".to_string(),
            &rx,
            &ry,
            rw,
            rh,
        ),
    ];
    for (tag, comment, gx, gy, w, h) in sets {
        v.extend(pair_cases(tag, &comment, gx, gy, (w, h)));
    }
    for (tag, g) in crate::edge_chain::wide_crops(scenes) {
        v.extend(crop_cases(tag, &g));
    }
    v
}

/// Every gradient kernel on one pair of gradient images, ids
/// `<kernel id>.<tag>`.
fn pair_cases(
    tag: &str,
    comment: &str,
    gx: &[i16],
    gy: &[i16],
    (w, h): (usize, usize),
) -> Vec<GoldenCase> {
    let inputs = vec![
        Blob::from_i16("gx", w, h, 1, gx),
        Blob::from_i16("gy", w, h, 1, gy),
    ];
    [
        "gradient.magnitude_l1",
        "gradient.magnitude_l2_approx",
        "gradient.magnitude_l2_round",
        "gradient.direction",
        "gradient.angles",
    ]
    .iter()
    .map(|&kernel| GoldenCase {
        row_pad: None,
        id: format!("{kernel}.{tag}"),
        comment: format!("{kernel} on {comment}"),
        kernel: kernel.into(),
        params: json!({}),
        expected: run_vector(kernel, &json!({}), &inputs).expect("golden inputs are valid"),
        inputs: inputs.clone(),
    })
    .collect()
}

/// Every gradient kernel on the edge chain's smoothed Sobel gradients of
/// one crop (the long-row vectors, `golden extra`).
pub fn crop_cases(tag: &str, g: &crate::edge_chain::GoldenCrop) -> Vec<GoldenCase> {
    pair_cases(
        tag,
        &format!("the edge chain's smoothed Sobel gradients of {}", g.at),
        &g.chain.gx,
        &g.chain.gy,
        (g.w, g.h),
    )
}

/// Recomputes a gradient vector.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    if !params.as_object().is_some_and(|o| o.is_empty()) {
        return Err(format!("params of `{kernel}` must be an empty object"));
    }
    let bx = input(inputs, "gx")?;
    let by = input(inputs, "gy")?;
    let (gx, gy) = (bx.to_i16()?, by.to_i16()?);
    if (bx.width, bx.height) != (by.width, by.height) {
        return Err("gx and gy differ in size".into());
    }
    let (w, h) = (bx.width, bx.height);
    Ok(vec![match kernel {
        "gradient.magnitude_l1" => Blob::from_u16(
            "mag",
            w,
            h,
            1,
            &run_pair(&gx, &gy, w, h, gradient::magnitude_l1)?,
        ),
        "gradient.magnitude_l2_approx" => Blob::from_u16(
            "mag",
            w,
            h,
            1,
            &run_pair(&gx, &gy, w, h, gradient::magnitude_l2_approx)?,
        ),
        "gradient.magnitude_l2_round" => Blob::from_u16(
            "mag",
            w,
            h,
            1,
            &run_pair(&gx, &gy, w, h, gradient::magnitude_l2_round)?,
        ),
        "gradient.direction" => Blob::from_u8(
            "dir",
            w,
            h,
            1,
            &run_pair(&gx, &gy, w, h, gradient::direction)?,
        ),
        "gradient.angles" => Blob::from_u16(
            "angle",
            w,
            h,
            1,
            &run_pair(&gx, &gy, w, h, gradient::angles)?,
        ),
        _ => return Err(format!("unknown gradient kernel `{kernel}`")),
    }])
}
