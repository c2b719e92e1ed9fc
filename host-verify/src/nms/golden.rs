//! Golden cases and vector recomputation of `nms.suppress`.

use crate::edge_chain::{golden_crop, run_nms, run_nms_interpolated, synthetic_edges};
use crate::family::{case, input, no_params};
use crate::golden::{Blob, GoldenCase};
use crate::scene::Scene;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
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
        "nms.suppress_interpolated" => {
            no_params(kernel, params)?;
            let (bm, bx, by) = (
                input(inputs, "mag")?,
                input(inputs, "gx")?,
                input(inputs, "gy")?,
            );
            let (w, h) = (bm.width, bm.height);
            if (bx.width, bx.height) != (w, h) || (by.width, by.height) != (w, h) {
                return Err("mag, gx and gy differ in size".into());
            }
            Ok(vec![Blob::from_u16(
                "nms",
                w,
                h,
                1,
                &run_nms_interpolated(&bm.to_u16()?, &bx.to_i16()?, &by.to_i16()?, w, h)?,
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
    let (tw, th) = t.ties_size;
    let mut v = crop_cases("floor", &g);
    v.extend([
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
        {
            let (iw, ih, mag, gx, gy) = interpolated_ties();
            case(
                run_vector,
                "nms.suppress_interpolated.ties",
                "magnitudes 0..3 with gradients in -3..=3 (ties and zero gradients everywhere), \
                 i16 extremes and the largest magnitudes in the last row"
                    .into(),
                "nms.suppress_interpolated",
                json!({}),
                vec![
                    Blob::from_u16("mag", iw, ih, 1, &mag),
                    Blob::from_i16("gx", iw, ih, 1, &gx),
                    Blob::from_i16("gy", iw, ih, 1, &gy),
                ],
            )
        },
    ]);
    for (tag, g) in crate::edge_chain::wide_crops(scenes) {
        v.extend(crop_cases(tag, &g));
    }
    v
}

/// Both suppressions on the edge chain's intermediates of one crop (the
/// long-row vectors, `golden extra`), ids `<kernel id>.<tag>`.
pub fn crop_cases(tag: &str, g: &crate::edge_chain::GoldenCrop) -> Vec<GoldenCase> {
    let (w, h, c) = (g.w, g.h, &g.chain);
    vec![
        case(
            run_vector,
            &format!("nms.suppress.{tag}"),
            format!(
                "suppression of the rounded L2 magnitude and sectors of {}",
                g.at
            ),
            "nms.suppress",
            json!({}),
            vec![
                Blob::from_u16("mag", w, h, 1, &c.mag),
                Blob::from_u8("dir", w, h, 1, &c.dir),
            ],
        ),
        case(
            run_vector,
            &format!("nms.suppress_interpolated.{tag}"),
            format!(
                "interpolating suppression of the rounded L2 magnitude and gradients of {}",
                g.at
            ),
            "nms.suppress_interpolated",
            json!({}),
            vec![
                Blob::from_u16("mag", w, h, 1, &c.mag),
                Blob::from_i16("gx", w, h, 1, &c.gx),
                Blob::from_i16("gy", w, h, 1, &c.gy),
            ],
        ),
    ]
}

/// Synthetic input of `nms.suppress_interpolated.ties`, 13 x 9, from one
/// ChaCha8 stream (seed `0x1A7E`): magnitudes `0..=3` and gradients in
/// `-3..=3`; the last row holds magnitudes near 65535 and gradients at the
/// `i16` extremes (largest products).
#[allow(clippy::type_complexity)]
pub fn interpolated_ties() -> (usize, usize, Vec<u16>, Vec<i16>, Vec<i16>) {
    let (w, h) = (13usize, 9usize);
    let mut rng = ChaCha8Rng::seed_from_u64(0x1A7E);
    let mut mag: Vec<u16> = (0..w * h).map(|_| rng.random_range(0..4u16)).collect();
    let mut gx: Vec<i16> = (0..w * h).map(|_| rng.random_range(-3..=3i16)).collect();
    let mut gy: Vec<i16> = (0..w * h).map(|_| rng.random_range(-3..=3i16)).collect();
    let ext = [i16::MIN, i16::MAX, -1, 0, 1, i16::MIN + 1];
    for x in 0..w {
        let i = (h - 1) * w + x;
        mag[i] = 65535 - (x as u16 % 3);
        gx[i] = ext[x % ext.len()];
        gy[i] = ext[(x / 2 + 1) % ext.len()];
    }
    (w, h, mag, gx, gy)
}
