//! Integer reference model of `fixsight::nms`, written from the kernel's
//! documented model and nothing else.
//!
//! The neighbour offsets are derived here from the sector's angle
//! (`45 * sector` degrees, x right, y down): the *after* neighbour is
//! `(round(cos a), round(sin a))`, the *before* neighbour its opposite.
//! A pixel keeps its magnitude when it is strictly greater than the before
//! neighbour and not smaller than the after neighbour; neighbours outside
//! the image read as 0.
//!
//! Kernel id `nms.suppress` (contract **bit-exact**, checked on the
//! suppression inputs of the edge chain on the demo scenes, see
//! [`crate::chain`]): inputs `mag` u16, `dir` u8, params `{}`, output `nms`
//! u16.

use crate::chain::{as_f64, bit_exact_row, case, demo_chains, no_params, run_nms, step_ops};
use crate::contract::{KernelFamily, KernelReport};
use crate::families::{input, Family};
use crate::golden::{Blob, GoldenCase};
use crate::scene::Scene;
use serde_json::json;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "nms",
    kernels: &["nms.suppress"],
    composed_on_host: false,
    check,
    golden_cases,
    run_vector,
};

/// Offsets `(before, after)` of a sector, from its angle.
pub fn sector_offsets(sector: u8) -> ((i64, i64), (i64, i64)) {
    let a = (45.0 * sector as f64).to_radians();
    let (dx, dy) = (a.cos().round() as i64, a.sin().round() as i64);
    ((-dx, -dy), (dx, dy))
}

/// Reference suppression of a `w x h` frame; an error names the first
/// sector outside `0..=3`.
pub fn reference(mag: &[u16], dir: &[u8], w: usize, h: usize) -> Result<Vec<u16>, String> {
    let at = |x: i64, y: i64| -> u16 {
        if x < 0 || y < 0 || x >= w as i64 || y >= h as i64 {
            0
        } else {
            mag[y as usize * w + x as usize]
        }
    };
    let mut out = vec![0u16; w * h];
    for y in 0..h {
        for x in 0..w {
            let i = y * w + x;
            let d = dir[i];
            if d > 3 {
                return Err(format!("sector {d} at ({x}, {y})"));
            }
            let ((bx, by), (ax, ay)) = sector_offsets(d);
            let (xi, yi) = (x as i64, y as i64);
            let m = mag[i];
            if m > at(xi + bx, yi + by) && m >= at(xi + ax, yi + ay) {
                out[i] = m;
            }
        }
    }
    Ok(out)
}

/// The `nms.suppress` contract: the kernel's suppression of the edge
/// chain's rounded L2 magnitudes and sectors on the demo scenes, against
/// [`reference()`].
pub fn check(scenes: &[Scene]) -> Vec<KernelReport> {
    let (chains, problems) = demo_chains(scenes);
    let (mut a, mut r, mut pr) = (Vec::new(), Vec::new(), problems);
    for (s, c) in &chains {
        match reference(&c.mag, &c.dir, c.w, c.h) {
            Ok(want) => {
                a.extend(as_f64(&c.nms));
                r.extend(as_f64(&want));
            }
            Err(err) => pr.push(format!("{}: reference rejected input: {err}", s.name)),
        }
    }
    let ops = step_ops(&chains, 0);
    let mut row = bit_exact_row(
            "nms.suppress",
            KernelFamily::Nms,
            &a,
            &r,
            65535.0,
            ops,
            pr,
            "suppressed rounded-L2 magnitudes vs the integer reference model (offsets from the sector angle)",
        );
    let kept: usize = chains
        .iter()
        .map(|(_, c)| c.nms.iter().filter(|&&v| v > 0).count())
        .sum();
    let px: usize = chains.iter().map(|(_, c)| c.w * c.h).sum();
    row.metrics
        .insert("kept_share".into(), kept as f64 / px.max(1) as f64);
    vec![row]
}

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
    let g = crate::chain::golden_crop(scenes);
    let t = crate::chain::synthetic_edges();
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn offsets_agree_with_the_kernel_table() {
        for s in 0..4u8 {
            let ((bx, by), (ax, ay)) = fixsight::nms::SECTOR_NEIGHBOURS[s as usize];
            let k = ((bx as i64, by as i64), (ax as i64, ay as i64));
            assert_eq!(sector_offsets(s), k, "sector {s}");
        }
    }
}
