//! Reference model of `fixsight::thinning`: Zhang-Suen thinning written
//! directly from the paper (T. Y. Zhang, C. Y. Suen, 1984, "A fast parallel
//! algorithm for thinning digital patterns", CACM 27(3)), with `B` and `A`
//! counted per pixel (no table) and each sub-iteration deciding from a full
//! copy of the frame. Contract **bit-exact** (foreground/background and the
//! surviving byte values), checked on the hysteresis output of the edge
//! chain on the demo scenes (see [`crate::chain`]).
//!
//! Kernel id `thinning.thin`: input `map` u8 (nonzero = foreground), params
//! `{}`, output `thin` u8.

use crate::chain::{as_f64, bit_exact_row, case, demo_chains, no_params, run_thinning, step_ops};
use crate::contract::{KernelFamily, KernelReport};
use crate::families::{input, Family};
use crate::golden::{Blob, GoldenCase};
use crate::scene::Scene;
use serde_json::json;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "thinning",
    kernels: &["thinning.thin"],
    composed_on_host: false,
    check,
    golden_cases,
    run_vector,
};

/// Thins a `w x h` map (nonzero = foreground; outside = background) and
/// returns the result and the number of full iterations run.
pub fn reference(map: &[u8], w: usize, h: usize) -> (Vec<u8>, u32) {
    let mut cur = map.to_vec();
    let mut iterations = 0;
    loop {
        iterations += 1;
        let mut changed = false;
        for sub in [1, 2] {
            let snap = cur.clone();
            let f = |x: i64, y: i64| -> bool {
                x >= 0
                    && y >= 0
                    && x < w as i64
                    && y < h as i64
                    && snap[y as usize * w + x as usize] != 0
            };
            for y in 0..h as i64 {
                for x in 0..w as i64 {
                    if !f(x, y) {
                        continue;
                    }
                    // P2..P9: N, NE, E, SE, S, SW, W, NW.
                    let p = [
                        f(x, y - 1),
                        f(x + 1, y - 1),
                        f(x + 1, y),
                        f(x + 1, y + 1),
                        f(x, y + 1),
                        f(x - 1, y + 1),
                        f(x - 1, y),
                        f(x - 1, y - 1),
                    ];
                    let b = p.iter().filter(|&&v| v).count();
                    let a = (0..8).filter(|&i| !p[i] && p[(i + 1) % 8]).count();
                    let (p2, p4, p6, p8) = (p[0], p[2], p[4], p[6]);
                    let (c, d) = if sub == 1 {
                        (!(p2 && p4 && p6), !(p4 && p6 && p8))
                    } else {
                        (!(p2 && p4 && p8), !(p2 && p6 && p8))
                    };
                    if (2..=6).contains(&b) && a == 1 && c && d {
                        cur[y as usize * w + x as usize] = 0;
                        changed = true;
                    }
                }
            }
        }
        if !changed {
            return (cur, iterations);
        }
    }
}

/// Number of 8-connected foreground components.
pub fn components(map: &[u8], w: usize, h: usize) -> usize {
    crate::hysteresis::components8(map, w, h).len()
}

/// The `thinning.thin` contract: the kernel on the edge chain's hysteresis
/// output of the demo scenes, against [`reference()`].
pub fn check(scenes: &[Scene]) -> Vec<KernelReport> {
    let (chains, problems) = demo_chains(scenes);
    let (mut a, mut r, pr) = (Vec::new(), Vec::new(), problems);
    let mut iters = 0u32;
    let mut deleted = 0u32;
    for (_, c) in &chains {
        let (want, _) = reference(&c.edges, c.w, c.h);
        a.extend(as_f64(&c.thin));
        r.extend(as_f64(&want));
        iters = iters.max(c.thin_stats.iterations);
        deleted += c.thin_stats.deleted;
    }
    let ops = step_ops(&chains, 4);
    let mut row = bit_exact_row(
        "thinning.thin",
        KernelFamily::Thinning,
        &a,
        &r,
        255.0,
        ops,
        pr,
        "Zhang-Suen (table) vs a direct per-pixel reference of the paper's conditions",
    );
    row.metrics.insert("max_iterations".into(), iters as f64);
    row.metrics.insert("deleted".into(), deleted as f64);
    vec![row]
}

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
    let g = crate::chain::golden_crop(scenes);
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
    vec![
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
    ]
}
