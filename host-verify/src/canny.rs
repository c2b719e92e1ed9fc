//! The `edges` family: the fixed-point edge chain (7-tap integer Gaussian
//! smoothing fused with Sobel, rounded L2 magnitude, 4-sector direction,
//! non-maximum suppression, automatic double threshold, hysteresis,
//! thinning) against
//!
//! * the integer reference models in [`crate::nms`], [`crate::hysteresis`]
//!   and [`crate::thinning`], step by step on the same integer inputs —
//!   **bit-exact**;
//! * a full-`f64` Canny detector ([`reference_f64`]) — edge agreement as
//!   precision, recall and F1 with a 1-pixel matching tolerance
//!   ([`agreement`]); the goal is `F1 >= 0.95` on every demo scene.
//!
//! # The full-`f64` Canny reference
//!
//! 1. Gaussian smoothing with `sigma = 1`, sampled to radius
//!    `ceil(3 sigma)`, normalised, separable, replicated border, no
//!    rounding (the kernel chain uses these taps rounded to 1/256, see
//!    [`fixsight::pipeline::Smoothing::Gauss7`]);
//! 2. Sobel derivatives in `f64` (same taps, scale and replicated border as
//!    the kernels), magnitude `sqrt(gx^2 + gy^2)`;
//! 3. non-maximum suppression along the exact gradient angle: the
//!    magnitude on the ray `p +- g / max(|gx|, |gy|)` where it crosses the
//!    square of the 8 neighbours, linearly interpolated between the two
//!    neighbours it falls between (outside the image reads 0); a pixel is
//!    kept when strictly above the sample on the side of negative y (or of
//!    negative x for a horizontal gradient) and not below the other;
//! 4. the same integer thresholds as the kernel chain (derived by the
//!    kernel's automatic rule on its own suppressed magnitudes), compared as
//!    `f64`; hysteresis as 8-connected components holding a strong pixel.
//!
//! No thinning: that is the classical detector (Canny 1986, "A
//! Computational Approach to Edge Detection", IEEE PAMI 8(6)).
//!
//! # Design of the fixed-point chain (measured, worst scene `worn-dim`)
//!
//! The first chain smoothed with the binomial `[1 4 6 4 1]/16` (also
//! `sigma = 1`) and used the alpha-max-plus-beta-min magnitude
//! (`gradient::magnitude_l2_approx`, up to 4 % off). On `worn-dim` (strong
//! noise, thresholds near the noise floor) it reached F1 0.929 only.
//! Swapping one stage at a time for its exact `f64` form, same thresholds,
//! worn-dim F1 after thinning was: binomial smoothing with exact magnitude
//! and interpolated NMS 0.933 (the 5-tap binomial is not the reference's
//! 7-tap sampled Gaussian, and hysteresis near the noise floor amplifies
//! the difference); with the sampled Gaussian, exact magnitude and
//! interpolated NMS 0.999; Gaussian with the approximate magnitude and
//! 4-sector NMS 0.920; Gaussian with the exact magnitude and 4-sector NMS
//! 0.969. Integer rounding of the gradients changed F1 by less than 0.002,
//! thinning by less than 0.006. Hence the chain now smooths with the
//! sampled Gaussian rounded to 1/256 ([`fixsight::pipeline::Smoothing::Gauss7`]) and takes the exact
//! rounded magnitude (`gradient::magnitude_l2_round`); NMS stays on the 4
//! sectors.
//!
//! # Matching
//!
//! A kernel edge pixel is a true positive when a reference edge pixel lies
//! within Chebyshev distance 1; a reference pixel is recalled when a kernel
//! edge pixel lies within distance 1 (not a one-to-one assignment).
//! `precision = TP_k / |K|`, `recall = TP_r / |R|`, `F1 = 2PR / (P + R)`;
//! an empty set counts as fully precise (or fully recalled).
//!
//! # Golden kernel ids
//!
//! | id | inputs | params | outputs |
//! |---|---|---|---|
//! | `edges.nms` | `mag` u16, `dir` u8 | `{}` | `nms` u16 |
//! | `edges.thresholds` | `mag` u16 | `{bins, shift, high_permille, low_fraction_bits}` | `thresholds` u16 2x1 (`low`, `high`) |
//! | `edges.classify` | `mag` u16 | `{low, high}` | `codes` u8 |
//! | `edges.hysteresis` | `codes` u8 | `{stack}` | `edges` u8 |
//! | `edges.thinning` | `map` u8 | `{}` | `thin` u8 |
//! | `edges.chain` | `src` u8 | `{bins, shift, high_permille, low_fraction_bits, stack}` | `edges` u8 |

use crate::contract::{Contract, KernelFamily, KernelReport};
use crate::families::{input, parse_params, Family};
use crate::filter::run_whole;
use crate::golden::{crop, Blob, GoldenCase};
use crate::metrics::ErrorStats;
use crate::opcount::{measure, OpsPerPx};
use crate::scene::Scene;
use crate::{hysteresis as href, nms as nref, thinning as tref};
use fixsight::filter::SeparableFilter;
use fixsight::hysteresis::{self, Thresholds, U0F16};
use fixsight::nms::{self, NmsStream};
use fixsight::pipeline::{self, ThresholdRule};
use fixsight::{gradient, thinning, ImageView, ImageViewMut};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde::{Deserialize, Serialize};
use serde_json::json;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "edges",
    check,
    golden_cases,
    run_vector,
};

/// The F1 goal against the full-`f64` Canny (issue goal).
pub const F1_GOAL: f64 = 0.95;

/// Regression floor of the worst-scene F1, kept as a guard in the tests
/// (the `edges.canny` row's verdict is [`F1_GOAL`]).
pub const F1_FLOOR: f64 = 0.90;

/// Settings of the fixed-point chain.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ChainParams {
    /// Histogram bins of the automatic threshold rule.
    pub bins: usize,
    /// Histogram bin width as a power of two.
    pub shift: u32,
    /// Share of nonzero suppressed magnitudes below `high`, permille.
    pub high_permille: u16,
    /// `low / high` as `U0F16` bits.
    pub low_fraction_bits: u16,
    /// Hysteresis work-stack entries.
    pub stack: usize,
}

/// The demo settings: the threshold rule of the kernel crate's
/// [`fixsight::pipeline::DEMO`] (bins of width 8 covering the chain's
/// largest magnitude, the demo share and ratio) and a 1024-entry stack.
pub const DEMO: ChainParams = demo_params();

const fn demo_params() -> ChainParams {
    let (shift, high_permille, low_fraction_bits) = match pipeline::DEMO.thresholds {
        ThresholdRule::Auto {
            shift,
            high_permille,
            low_fraction_bits,
            ..
        } => (shift as u32, high_permille, low_fraction_bits),
        ThresholdRule::Fixed { .. } => (0, 0, 0),
    };
    ChainParams {
        bins: pipeline::DEMO.bins_needed(),
        shift,
        high_permille,
        low_fraction_bits,
        stack: 1024,
    }
}

/// The parameters the `edges.*.floor` golden vectors were written with
/// (512 bins of width 2, the same share and ratio, a 1024-entry stack).
/// They are the vectors' own parameters, stored in the manifest, and stay
/// as they are so the vectors stay byte-identical; the report uses
/// [`DEMO`].
pub const VECTOR_PARAMS: ChainParams = ChainParams {
    bins: 512,
    shift: 1,
    high_permille: hysteresis::DEMO_HIGH_PERMILLE,
    low_fraction_bits: hysteresis::DEMO_LOW_FRACTION.to_bits(),
    stack: 1024,
};

/// Every intermediate of the fixed-point chain on one image.
#[derive(Debug, Clone)]
pub struct Chain {
    /// Width.
    pub w: usize,
    /// Height.
    pub h: usize,
    /// Sobel x of the smoothed image.
    pub gx: Vec<i16>,
    /// Sobel y of the smoothed image.
    pub gy: Vec<i16>,
    /// Rounded L2 magnitude.
    pub mag: Vec<u16>,
    /// Direction sectors.
    pub dir: Vec<u8>,
    /// Suppressed magnitude.
    pub nms: Vec<u16>,
    /// Thresholds from the automatic rule.
    pub thresholds: Thresholds,
    /// Edge codes.
    pub codes: Vec<u8>,
    /// Hysteresis output (0/255).
    pub edges: Vec<u8>,
    /// Thinned output (0/255).
    pub thin: Vec<u8>,
    /// Hysteresis statistics.
    pub hyst: hysteresis::HysteresisStats,
    /// Thinning statistics.
    pub thin_stats: thinning::ThinStats,
    /// Operations per pixel of the edge steps: nms, thresholds (histogram
    /// and classification), hysteresis, thinning.
    pub ops: [OpsPerPx; 4],
}

fn e(err: fixsight::Error) -> String {
    err.to_string()
}

/// Scale of the chain's gradients relative to Sobel on the 8-bit image:
/// the smoothed derivative keeps 2 fractional bits.
pub const GRAD_SCALE: f64 = 4.0;

/// The smoothed Sobel filter of the chain, `x` or (`vertical`) `y`:
/// [`fixsight::pipeline::EdgeConfig::gradient_filters`] of
/// [`fixsight::pipeline::DEMO`], the 7-tap Gaussian `[1 14 62 102 62 14
/// 1]/256` convolved with Sobel's taps, `[-1 -14 -61 -88 0 88 61 14 1]` by
/// `[1 16 91 240 328 240 91 16 1]`, each shift 7 (9 x 9 support). The exact
/// accumulator is `2^16` times Sobel of the smoothed image and the shift 14
/// leaves Sobel times 4 ([`GRAD_SCALE`]), rounded once, half up; the output
/// is at most 2614 in magnitude.
pub fn smoothed_sobel(vertical: bool) -> SeparableFilter {
    let (fx, fy) = pipeline::DEMO
        .gradient_filters()
        .expect("the demo configuration is valid");
    if vertical {
        fy
    } else {
        fx
    }
}

/// Integer gradients of an 8-bit image: [`smoothed_sobel`] x and y, one
/// rounding each, replicated borders.
pub fn gradients(gray: &[u8], w: usize, h: usize) -> Result<(Vec<i16>, Vec<i16>), String> {
    let gx = run_whole::<i16>(&smoothed_sobel(false), gray, w, h).map_err(e)?;
    let gy = run_whole::<i16>(&smoothed_sobel(true), gray, w, h).map_err(e)?;
    Ok((gx, gy))
}

/// Runs the kernel's suppression on a frame.
pub fn run_nms(mag: &[u16], dir: &[u8], w: usize, h: usize) -> Result<Vec<u16>, String> {
    let mut out = vec![0u16; w * h];
    nms::suppress(
        &ImageView::new(mag, w, h, w).map_err(e)?,
        &ImageView::new(dir, w, h, w).map_err(e)?,
        &mut ImageViewMut::new(&mut out, w, h, w).map_err(e)?,
    )
    .map_err(e)?;
    Ok(out)
}

/// Automatic thresholds by the kernel.
pub fn run_thresholds(
    mag: &[u16],
    w: usize,
    h: usize,
    p: &ChainParams,
) -> Result<Thresholds, String> {
    let mut hist = vec![0u32; p.bins];
    Thresholds::from_histogram(
        &ImageView::new(mag, w, h, w).map_err(e)?,
        &mut hist,
        p.shift,
        p.high_permille,
        U0F16::from_bits(p.low_fraction_bits),
    )
    .map_err(e)
}

/// Classification by the kernel.
pub fn run_classify(mag: &[u16], w: usize, h: usize, t: &Thresholds) -> Result<Vec<u8>, String> {
    let mut out = vec![0u8; w * h];
    hysteresis::classify(
        &ImageView::new(mag, w, h, w).map_err(e)?,
        t,
        &mut ImageViewMut::new(&mut out, w, h, w).map_err(e)?,
    )
    .map_err(e)?;
    Ok(out)
}

/// Hysteresis by the kernel with a stack of `stack` entries.
pub fn run_hysteresis(
    codes: &[u8],
    w: usize,
    h: usize,
    stack: usize,
) -> Result<(Vec<u8>, hysteresis::HysteresisStats), String> {
    let mut map = codes.to_vec();
    let mut st = vec![0u32; stack];
    let s = hysteresis::hysteresis(
        &mut ImageViewMut::new(&mut map, w, h, w).map_err(e)?,
        &mut st,
    )
    .map_err(e)?;
    Ok((map, s))
}

/// Thinning by the kernel.
pub fn run_thinning(
    map: &[u8],
    w: usize,
    h: usize,
) -> Result<(Vec<u8>, thinning::ThinStats), String> {
    let mut m = map.to_vec();
    let mut scratch = vec![0u8; 3 * w];
    let s = thinning::thin(
        &mut ImageViewMut::new(&mut m, w, h, w).map_err(e)?,
        &mut scratch,
    )
    .map_err(e)?;
    Ok((m, s))
}

/// The whole fixed-point chain on an 8-bit image.
pub fn run_chain(gray: &[u8], w: usize, h: usize, p: &ChainParams) -> Result<Chain, String> {
    let (gx, gy) = gradients(gray, w, h)?;
    let mut mag = vec![0u16; w * h];
    let mut dir = vec![0u8; w * h];
    {
        let vx = ImageView::new(&gx, w, h, w).map_err(e)?;
        let vy = ImageView::new(&gy, w, h, w).map_err(e)?;
        gradient::magnitude_l2_round(
            &vx,
            &vy,
            &mut ImageViewMut::new(&mut mag, w, h, w).map_err(e)?,
        )
        .map_err(e)?;
        gradient::direction(
            &vx,
            &vy,
            &mut ImageViewMut::new(&mut dir, w, h, w).map_err(e)?,
        )
        .map_err(e)?;
    }
    let px = w * h;
    let (nms_out, o_nms) = measure(px, || run_nms(&mag, &dir, w, h));
    let nms_out = nms_out?;
    let (tc, o_thr) = measure(px, || -> Result<(Thresholds, Vec<u8>), String> {
        let t = run_thresholds(&nms_out, w, h, p)?;
        Ok((t, run_classify(&nms_out, w, h, &t)?))
    });
    let (thresholds, codes) = tc?;
    let (hy, o_hy) = measure(px, || run_hysteresis(&codes, w, h, p.stack));
    let (edges, hyst) = hy?;
    let (th, o_th) = measure(px, || run_thinning(&edges, w, h));
    let (thin, thin_stats) = th?;
    Ok(Chain {
        w,
        h,
        gx,
        gy,
        mag,
        dir,
        nms: nms_out,
        thresholds,
        codes,
        edges,
        thin,
        hyst,
        thin_stats,
        ops: [o_nms, o_thr, o_hy, o_th],
    })
}

/// The streaming form of suppression and classification: rows pushed
/// through an [`NmsStream`], each output row classified by
/// [`hysteresis::classify_row`] as it comes out.
pub fn run_stream_codes(
    mag: &[u16],
    dir: &[u8],
    w: usize,
    h: usize,
    t: &Thresholds,
) -> Result<Vec<u8>, String> {
    let (mut rm, mut rd) = (vec![0u16; 3 * w], vec![0u8; 3 * w]);
    let mut s = NmsStream::new(w, h, &mut rm, &mut rd).map_err(e)?;
    let mut codes = vec![0u8; w * h];
    let mut row = vec![0u16; w];
    let mut next = 0usize;
    let mut take = |y: Option<usize>, row: &[u16]| -> Result<(), String> {
        if let Some(y) = y {
            if y != next {
                return Err(format!("stream produced row {y}, expected {next}"));
            }
            hysteresis::classify_row(row, t, &mut codes[y * w..(y + 1) * w]).map_err(e)?;
            next += 1;
        }
        Ok(())
    };
    for y in 0..h {
        let r = s
            .push_row(&mag[y * w..(y + 1) * w], &dir[y * w..(y + 1) * w], &mut row)
            .map_err(e)?;
        take(r, &row)?;
    }
    loop {
        let r = s.flush_row(&mut row).map_err(e)?;
        if r.is_none() {
            break;
        }
        take(r, &row)?;
    }
    if next != h {
        return Err(format!("stream produced {next} rows of {h}"));
    }
    Ok(codes)
}

/// Separable `f64` Gaussian smoothing with replicated border.
pub fn gaussian_f64(img: &[f64], w: usize, h: usize, sigma: f64) -> Vec<f64> {
    let r = (3.0 * sigma).ceil() as i64;
    let k: Vec<f64> = (-r..=r)
        .map(|i| (-(i * i) as f64 / (2.0 * sigma * sigma)).exp())
        .collect();
    let s: f64 = k.iter().sum();
    let k: Vec<f64> = k.iter().map(|v| v / s).collect();
    let cl = |v: i64, n: usize| v.clamp(0, n as i64 - 1) as usize;
    let mut tmp = vec![0f64; w * h];
    for y in 0..h {
        for x in 0..w {
            tmp[y * w + x] = (-r..=r)
                .map(|i| k[(i + r) as usize] * img[y * w + cl(x as i64 + i, w)])
                .sum();
        }
    }
    let mut out = vec![0f64; w * h];
    for y in 0..h {
        for x in 0..w {
            out[y * w + x] = (-r..=r)
                .map(|i| k[(i + r) as usize] * tmp[cl(y as i64 + i, h) * w + x])
                .sum();
        }
    }
    out
}

/// Sobel derivatives in `f64` with replicated border.
pub fn sobel_f64(img: &[f64], w: usize, h: usize) -> (Vec<f64>, Vec<f64>) {
    let p = |x: i64, y: i64| {
        img[y.clamp(0, h as i64 - 1) as usize * w + x.clamp(0, w as i64 - 1) as usize]
    };
    let mut gx = vec![0f64; w * h];
    let mut gy = vec![0f64; w * h];
    for y in 0..h as i64 {
        for x in 0..w as i64 {
            let i = y as usize * w + x as usize;
            gx[i] = (p(x + 1, y - 1) + 2.0 * p(x + 1, y) + p(x + 1, y + 1))
                - (p(x - 1, y - 1) + 2.0 * p(x - 1, y) + p(x - 1, y + 1));
            gy[i] = (p(x - 1, y + 1) + 2.0 * p(x, y + 1) + p(x + 1, y + 1))
                - (p(x - 1, y - 1) + 2.0 * p(x, y - 1) + p(x + 1, y - 1));
        }
    }
    (gx, gy)
}

/// Non-maximum suppression along the exact gradient angle with linear
/// interpolation (see the module docs).
pub fn nms_f64(gx: &[f64], gy: &[f64], mag: &[f64], w: usize, h: usize) -> Vec<f64> {
    let m = |x: i64, y: i64| -> f64 {
        if x < 0 || y < 0 || x >= w as i64 || y >= h as i64 {
            0.0
        } else {
            mag[y as usize * w + x as usize]
        }
    };
    // Magnitude at p + (ux, uy) on the neighbour square (max(|ux|,|uy|) = 1).
    let ring = |x: i64, y: i64, ux: f64, uy: f64| -> f64 {
        if ux.abs() >= uy.abs() {
            let sx = ux.signum() as i64;
            let t = uy.abs();
            (1.0 - t) * m(x + sx, y) + t * m(x + sx, y + uy.signum() as i64)
        } else {
            let sy = uy.signum() as i64;
            let t = ux.abs();
            (1.0 - t) * m(x, y + sy) + t * m(x + ux.signum() as i64, y + sy)
        }
    };
    let mut out = vec![0f64; w * h];
    for y in 0..h as i64 {
        for x in 0..w as i64 {
            let i = y as usize * w + x as usize;
            let v = mag[i];
            if v <= 0.0 {
                continue;
            }
            let s = gx[i].abs().max(gy[i].abs());
            let (mut ux, mut uy) = (gx[i] / s, gy[i] / s);
            // Orient u towards positive y (or positive x when uy = 0), so
            // `ring(-u)` is the side of negative y.
            if uy < 0.0 || (uy == 0.0 && ux < 0.0) {
                ux = -ux;
                uy = -uy;
            }
            let fwd = ring(x, y, ux, uy);
            let back = ring(x, y, -ux, -uy);
            if v > back && v >= fwd {
                out[i] = v;
            }
        }
    }
    out
}

/// The full-`f64` Canny on an 8-bit image with the given thresholds:
/// returns 0/255.
pub fn reference_f64(gray: &[u8], w: usize, h: usize, low: f64, high: f64) -> Vec<u8> {
    let img: Vec<f64> = gray.iter().map(|&v| v as f64).collect();
    let s = gaussian_f64(&img, w, h, 1.0);
    let (mut gx, mut gy) = sobel_f64(&s, w, h);
    for v in gx.iter_mut().chain(gy.iter_mut()) {
        *v *= GRAD_SCALE;
    }
    let mag: Vec<f64> = gx.iter().zip(&gy).map(|(a, b)| a.hypot(*b)).collect();
    let sup = nms_f64(&gx, &gy, &mag, w, h);
    let codes: Vec<u8> = sup
        .iter()
        .map(|&v| {
            if v >= high {
                2
            } else if v >= low {
                1
            } else {
                0
            }
        })
        .collect();
    href::hysteresis(&codes, w, h)
}

/// Edge agreement with a 1-pixel tolerance.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Agreement {
    /// Share of kernel edge pixels with a reference edge within 1 px.
    pub precision: f64,
    /// Share of reference edge pixels with a kernel edge within 1 px.
    pub recall: f64,
    /// Harmonic mean of the two.
    pub f1: f64,
    /// Kernel edge pixels.
    pub kernel_px: usize,
    /// Reference edge pixels.
    pub reference_px: usize,
}

/// Precision, recall and F1 of `kernel` against `reference` (nonzero =
/// edge) with Chebyshev tolerance 1.
pub fn agreement(kernel: &[u8], reference: &[u8], w: usize, h: usize) -> Agreement {
    let near = |map: &[u8], i: usize| -> bool {
        let (x, y) = ((i % w) as i64, (i / w) as i64);
        (-1..=1).any(|dy| {
            (-1..=1).any(|dx| {
                let (nx, ny) = (x + dx, y + dy);
                nx >= 0
                    && ny >= 0
                    && nx < w as i64
                    && ny < h as i64
                    && map[ny as usize * w + nx as usize] != 0
            })
        })
    };
    let k: Vec<usize> = (0..w * h).filter(|&i| kernel[i] != 0).collect();
    let r: Vec<usize> = (0..w * h).filter(|&i| reference[i] != 0).collect();
    let tp_k = k.iter().filter(|&&i| near(reference, i)).count();
    let tp_r = r.iter().filter(|&&i| near(kernel, i)).count();
    let precision = if k.is_empty() {
        1.0
    } else {
        tp_k as f64 / k.len() as f64
    };
    let recall = if r.is_empty() {
        1.0
    } else {
        tp_r as f64 / r.len() as f64
    };
    let f1 = if precision + recall > 0.0 {
        2.0 * precision * recall / (precision + recall)
    } else {
        0.0
    };
    Agreement {
        precision,
        recall,
        f1,
        kernel_px: k.len(),
        reference_px: r.len(),
    }
}

fn sum_ops(list: &[OpsPerPx]) -> OpsPerPx {
    list.iter().fold(OpsPerPx::default(), |a, b| a.plus(b))
}

fn bit_exact_row(
    name: &str,
    actual: &[f64],
    reference: &[f64],
    peak: f64,
    ops: OpsPerPx,
    problems: Vec<String>,
    note: &str,
) -> KernelReport {
    let stats = ErrorStats::compare(actual, reference, peak);
    let mut r = KernelReport::from_stats(
        name,
        KernelFamily::Edges,
        Contract::BitExact,
        0.0,
        &stats,
        ops,
    );
    r.notes.push(note.to_string());
    for p in problems {
        r.fail(p);
    }
    r
}

fn as_f64<T: Copy + Into<f64>>(v: &[T]) -> Vec<f64> {
    v.iter().map(|&x| x.into()).collect()
}

/// Contract checks of the edge chain on the demo scenes.
pub fn check(scenes: &[Scene]) -> Vec<KernelReport> {
    let p = DEMO;
    let mut chains = Vec::new();
    let mut problems = Vec::new();
    for s in scenes {
        match run_chain(&s.gray, s.width, s.height, &p) {
            Ok(c) => chains.push((s, c)),
            Err(err) => problems.push(format!("{}: kernel error: {err}", s.name)),
        }
    }
    let mut rows = Vec::new();

    // Non-maximum suppression, frame and stream.
    {
        let (mut a, mut r, mut pr) = (Vec::new(), Vec::new(), problems.clone());
        for (s, c) in &chains {
            match nref::reference(&c.mag, &c.dir, c.w, c.h) {
                Ok(want) => {
                    a.extend(as_f64(&c.nms));
                    r.extend(as_f64(&want));
                }
                Err(err) => pr.push(format!("{}: reference rejected input: {err}", s.name)),
            }
        }
        let ops = chains
            .first()
            .map(|(_, c)| c.ops[0].clone())
            .unwrap_or_default();
        let mut row = bit_exact_row(
            "edges.nms",
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
        rows.push(row);
    }

    // Automatic thresholds and classification, with the streaming form.
    {
        let (mut a, mut r, mut pr) = (Vec::new(), Vec::new(), problems.clone());
        let mut stream_ok = true;
        let mut metrics = Vec::new();
        for (s, c) in &chains {
            let (lo, hi) = href::auto_thresholds(
                &c.nms,
                p.bins,
                p.shift,
                p.high_permille,
                p.low_fraction_bits,
            );
            if (lo, hi) != (c.thresholds.low(), c.thresholds.high()) {
                pr.push(format!(
                    "{}: thresholds ({}, {}) differ from the reference ({lo}, {hi})",
                    s.name,
                    c.thresholds.low(),
                    c.thresholds.high()
                ));
            }
            a.extend(as_f64(&c.codes));
            r.extend(as_f64(&href::classify(&c.nms, lo, hi)));
            match run_stream_codes(&c.mag, &c.dir, c.w, c.h, &c.thresholds) {
                Ok(sc) if sc == c.codes => {}
                Ok(_) => {
                    stream_ok = false;
                    pr.push(format!(
                        "{}: streaming codes differ from the frame codes",
                        s.name
                    ));
                }
                Err(err) => {
                    stream_ok = false;
                    pr.push(format!("{}: stream error: {err}", s.name));
                }
            }
            metrics.push((s.name, c.thresholds));
        }
        let ops = chains
            .first()
            .map(|(_, c)| c.ops[1].clone())
            .unwrap_or_default();
        let mut row = bit_exact_row(
            "edges.threshold",
            &a,
            &r,
            2.0,
            ops,
            pr,
            "automatic thresholds and edge codes vs the reference; NMS row stream + classify_row vs frame",
        );
        for (name, t) in metrics {
            row.metrics.insert(format!("low.{name}"), t.low() as f64);
            row.metrics.insert(format!("high.{name}"), t.high() as f64);
            row.metrics
                .insert(format!("ratio.{name}"), t.high() as f64 / t.low() as f64);
        }
        row.metrics.insert(
            "stream_equals_frame".into(),
            if stream_ok { 1.0 } else { 0.0 },
        );
        rows.push(row);
    }

    // Hysteresis: the demo stack and the minimum stack give the reference.
    {
        let (mut a, mut r, mut pr) = (Vec::new(), Vec::new(), problems.clone());
        let (mut passes_min, mut deferred_min, mut peak) = (0u32, 0u32, 0u32);
        for (s, c) in &chains {
            let want = href::hysteresis(&c.codes, c.w, c.h);
            a.extend(as_f64(&c.edges));
            r.extend(as_f64(&want));
            peak = peak.max(c.hyst.peak_stack);
            match run_hysteresis(&c.codes, c.w, c.h, hysteresis::MIN_STACK) {
                Ok((m, st)) => {
                    passes_min = passes_min.max(st.passes);
                    deferred_min = deferred_min.max(st.deferred);
                    if m != want {
                        pr.push(format!(
                            "{}: minimum-stack result differs from the reference",
                            s.name
                        ));
                    }
                }
                Err(err) => pr.push(format!("{}: minimum-stack run failed: {err}", s.name)),
            }
        }
        let ops = chains
            .first()
            .map(|(_, c)| c.ops[2].clone())
            .unwrap_or_default();
        let mut row = bit_exact_row(
            "edges.hysteresis",
            &a,
            &r,
            255.0,
            ops,
            pr,
            "in-place hysteresis (demo stack and 8-entry stack) vs 8-connected component labelling",
        );
        row.metrics.insert("stack_entries".into(), p.stack as f64);
        row.metrics
            .insert("stack_bytes".into(), 4.0 * p.stack as f64);
        row.metrics.insert("peak_stack".into(), peak as f64);
        row.metrics
            .insert("min_stack_passes".into(), passes_min as f64);
        row.metrics
            .insert("min_stack_deferred".into(), deferred_min as f64);
        rows.push(row);
    }

    // Thinning.
    {
        let (mut a, mut r, pr) = (Vec::new(), Vec::new(), problems.clone());
        let mut iters = 0u32;
        let mut deleted = 0u32;
        for (_, c) in &chains {
            let (want, _) = tref::reference(&c.edges, c.w, c.h);
            a.extend(as_f64(&c.thin));
            r.extend(as_f64(&want));
            iters = iters.max(c.thin_stats.iterations);
            deleted += c.thin_stats.deleted;
        }
        let ops = chains
            .first()
            .map(|(_, c)| c.ops[3].clone())
            .unwrap_or_default();
        let mut row = bit_exact_row(
            "edges.thinning",
            &a,
            &r,
            255.0,
            ops,
            pr,
            "Zhang-Suen (table) vs a direct per-pixel reference of the paper's conditions",
        );
        row.metrics.insert("max_iterations".into(), iters as f64);
        row.metrics.insert("deleted".into(), deleted as f64);
        rows.push(row);
    }

    // The whole chain vs the full-f64 Canny.
    {
        let mut pr = problems;
        let mut worst: Option<Agreement> = None;
        let mut worst_before_thin = 1f64;
        let mut metrics = Vec::new();
        for (s, c) in &chains {
            let reference = reference_f64(
                &s.gray,
                c.w,
                c.h,
                c.thresholds.low() as f64,
                c.thresholds.high() as f64,
            );
            let ag = agreement(&c.thin, &reference, c.w, c.h);
            let ag0 = agreement(&c.edges, &reference, c.w, c.h);
            worst_before_thin = worst_before_thin.min(ag0.f1);
            metrics.push((s.name, ag));
            if worst.is_none_or(|w| ag.f1 < w.f1) {
                worst = Some(ag);
            }
        }
        let ops = chains
            .first()
            .map(|(_, c)| sum_ops(&c.ops))
            .unwrap_or_default();
        let w = worst.unwrap_or(Agreement {
            precision: 0.0,
            recall: 0.0,
            f1: 0.0,
            kernel_px: 0,
            reference_px: 0,
        });
        // The row's verdict is the goal on the worst scene.
        if w.f1 < F1_GOAL {
            pr.push(format!(
                "GOAL NOT MET: worst F1 {:.4} is below the goal {F1_GOAL}",
                w.f1
            ));
        }
        let mut row = KernelReport {
            name: "edges.canny".into(),
            family: KernelFamily::Edges,
            contract: Contract::Tolerance,
            max_abs_err: 1.0 - w.f1,
            bound: 1.0 - F1_GOAL,
            bit_exact_share: 0.0,
            ops_per_px: ops,
            metrics: Default::default(),
            pass: true,
            notes: vec![
                "figure is 1 - F1 of the worst scene (1-px tolerance) against a full-f64 Canny \
                 (sigma 1 Gaussian, f64 Sobel, interpolated NMS) with the same thresholds; \
                 bound is the goal F1 >= 0.95, not an analytical bound"
                    .into(),
                "ops/px are those of the edge steps: nms + thresholds + hysteresis + thinning"
                    .into(),
            ],
        };
        row.metrics.insert("precision".into(), w.precision);
        row.metrics.insert("recall".into(), w.recall);
        row.metrics.insert("f1".into(), w.f1);
        row.metrics.insert("f1_goal".into(), F1_GOAL);
        row.metrics.insert(
            "f1_goal_met".into(),
            if w.f1 >= F1_GOAL { 1.0 } else { 0.0 },
        );
        row.metrics
            .insert("f1_before_thinning".into(), worst_before_thin);
        for (name, ag) in metrics {
            row.metrics.insert(format!("f1.{name}"), ag.f1);
            row.metrics
                .insert(format!("precision.{name}"), ag.precision);
            row.metrics.insert(format!("recall.{name}"), ag.recall);
            row.metrics
                .insert(format!("edge_px.{name}"), ag.kernel_px as f64);
        }
        for p in pr {
            row.fail(p);
        }
        rows.push(row);
    }
    rows
}

/// Parameters of `edges.classify`.
#[derive(Debug, Clone, Copy, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ClassifyParams {
    /// Low threshold.
    pub low: u16,
    /// High threshold.
    pub high: u16,
}

/// Parameters of `edges.thresholds`.
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
    pub low_fraction_bits: u16,
}

/// Parameters of `edges.hysteresis`.
#[derive(Debug, Clone, Copy, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StackParams {
    /// Work-stack entries.
    pub stack: usize,
}

fn no_params(kernel: &str, params: &serde_json::Value) -> Result<(), String> {
    if params.as_object().is_some_and(|o| o.is_empty()) {
        Ok(())
    } else {
        Err(format!("params of `{kernel}` must be an empty object"))
    }
}

/// Recomputes an edges vector.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    match kernel {
        "edges.nms" => {
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
        "edges.thresholds" => {
            let p: ThresholdParams = parse_params(kernel, params)?;
            let b = input(inputs, "mag")?;
            let cp = ChainParams {
                bins: p.bins,
                shift: p.shift,
                high_permille: p.high_permille,
                low_fraction_bits: p.low_fraction_bits,
                stack: hysteresis::MIN_STACK,
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
        "edges.classify" => {
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
        "edges.hysteresis" => {
            let p: StackParams = parse_params(kernel, params)?;
            let b = input(inputs, "codes")?;
            let (w, h) = (b.width, b.height);
            Ok(vec![Blob::from_u8(
                "edges",
                w,
                h,
                1,
                &run_hysteresis(&b.to_u8()?, w, h, p.stack)?.0,
            )])
        }
        "edges.thinning" => {
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
        "edges.chain" => {
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
        _ => Err(format!("unknown edges kernel `{kernel}`")),
    }
}

fn case(
    id: &str,
    comment: String,
    kernel: &str,
    params: serde_json::Value,
    inputs: Vec<Blob>,
) -> GoldenCase {
    let expected = run_vector(kernel, &params, &inputs).expect("golden inputs are valid");
    GoldenCase {
        id: id.into(),
        comment,
        kernel: kernel.into(),
        params,
        inputs,
        expected,
    }
}

/// Golden cases: each step on the integer intermediates of a scene crop,
/// synthetic tie and stack-overflow cases, and the whole chain.
pub fn golden_cases(scenes: &[Scene]) -> Vec<GoldenCase> {
    let s = &scenes[1 % scenes.len()];
    let (w, h) = (48usize, 32usize);
    let (x0, y0) = (136usize, 180usize);
    let img = crop(s, x0, y0, w, h);
    let c = run_chain(&img, w, h, &VECTOR_PARAMS).expect("crop sizes are valid");
    let at = format!("a {w}x{h} crop at ({x0}, {y0}) of scene {}", s.name);
    let mut v = Vec::new();
    v.push(case(
        "edges.nms.floor",
        format!("suppression of the rounded L2 magnitude and sectors of {at}"),
        "edges.nms",
        json!({}),
        vec![
            Blob::from_u16("mag", w, h, 1, &c.mag),
            Blob::from_u8("dir", w, h, 1, &c.dir),
        ],
    ));
    // Plateaus and ties in every sector.
    let (tw, th) = (12usize, 9usize);
    let mut rng = ChaCha8Rng::seed_from_u64(0xED6E);
    let tm: Vec<u16> = (0..tw * th).map(|_| rng.random_range(0..4u16)).collect();
    let td: Vec<u8> = (0..tw * th).map(|_| rng.random_range(0..4u8)).collect();
    v.push(case(
        "edges.nms.ties",
        "magnitudes 0..3 and random sectors: plateaus everywhere, the tie rule decides".into(),
        "edges.nms",
        json!({}),
        vec![
            Blob::from_u16("mag", tw, th, 1, &tm),
            Blob::from_u8("dir", tw, th, 1, &td),
        ],
    ));
    let tp = json!({"bins": VECTOR_PARAMS.bins, "shift": VECTOR_PARAMS.shift,
                    "high_permille": VECTOR_PARAMS.high_permille,
                    "low_fraction_bits": VECTOR_PARAMS.low_fraction_bits});
    v.push(case(
        "edges.thresholds.floor",
        format!("automatic thresholds of the suppressed magnitudes of {at}"),
        "edges.thresholds",
        tp.clone(),
        vec![Blob::from_u16("mag", w, h, 1, &c.nms)],
    ));
    let big: Vec<u16> = (0..64u32).map(|i| (i * i * 16).min(65535) as u16).collect();
    v.push(case(
        "edges.thresholds.saturating",
        "magnitudes up to 65535 with 16 bins of width 2^12: the last bin collects the overflow"
            .into(),
        "edges.thresholds",
        json!({"bins": 16, "shift": 12, "high_permille": 990, "low_fraction_bits": 21845}),
        vec![Blob::from_u16("mag", 8, 8, 1, &big)],
    ));
    v.push(case(
        "edges.classify.floor",
        format!("double threshold of the suppressed magnitudes of {at}"),
        "edges.classify",
        json!({"low": c.thresholds.low(), "high": c.thresholds.high()}),
        vec![Blob::from_u16("mag", w, h, 1, &c.nms)],
    ));
    v.push(case(
        "edges.hysteresis.floor",
        format!("hysteresis of the edge codes of {at}"),
        "edges.hysteresis",
        json!({"stack": VECTOR_PARAMS.stack}),
        vec![Blob::from_u8("codes", w, h, 1, &c.codes)],
    ));
    let (hw, hh) = (20usize, 14usize);
    let mut codes: Vec<u8> = (0..hw * hh)
        .map(|_| match rng.random_range(0..100u32) {
            0..=2 => 2,
            3..=64 => 1,
            _ => 0,
        })
        .collect();
    codes[hw * hh - 1] = 2;
    v.push(case(
        "edges.hysteresis.min-stack",
        "dense random weak codes with the minimum 8-entry stack: deferred seeds and rescans".into(),
        "edges.hysteresis",
        json!({"stack": hysteresis::MIN_STACK}),
        vec![Blob::from_u8("codes", hw, hh, 1, &codes)],
    ));
    v.push(case(
        "edges.thinning.floor",
        format!("thinning of the hysteresis output of {at}"),
        "edges.thinning",
        json!({}),
        vec![Blob::from_u8("map", w, h, 1, &c.edges)],
    ));
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
    v.push(case(
        "edges.thinning.blocks",
        "a thick bar with a post, and an isolated 2x2 block that the method removes".into(),
        "edges.thinning",
        json!({}),
        vec![Blob::from_u8("map", bw, bh, 1, &blocks)],
    ));
    v.push(case(
        "edges.chain.floor",
        format!("the whole chain (Gaussian 7-tap, Sobel, rounded L2, NMS, auto thresholds, hysteresis, thinning) on {at}"),
        "edges.chain",
        serde_json::to_value(VECTOR_PARAMS).expect("serialisable"),
        vec![Blob::from_u8("src", w, h, 1, &img)],
    ));
    v
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scene::demo_scenes;

    #[test]
    fn agreement_on_hand_made_maps() {
        let (w, h) = (6usize, 4usize);
        let mut a = vec![0u8; w * h];
        let mut b = vec![0u8; w * h];
        // Reference: row 1, columns 0..6. Kernel: row 2 (1 px off) plus one
        // stray pixel at (5, 3)... which is within 1 px of (4..6, 2)? no:
        // the reference is row 1, so (5,3) is 2 rows away -> false positive.
        for x in 0..w {
            b[w + x] = 255;
            a[2 * w + x] = 255;
        }
        a[3 * w + 5] = 255;
        let ag = agreement(&a, &b, w, h);
        assert_eq!((ag.kernel_px, ag.reference_px), (7, 6));
        assert!((ag.precision - 6.0 / 7.0).abs() < 1e-12);
        assert_eq!(ag.recall, 1.0);
        assert!((ag.f1 - 2.0 * (6.0 / 7.0) / (1.0 + 6.0 / 7.0)).abs() < 1e-12);
    }

    #[test]
    fn f64_canny_finds_a_vertical_step_at_the_step() {
        let (w, h) = (16usize, 10usize);
        let img: Vec<u8> = (0..w * h)
            .map(|i| if i % w >= 8 { 200 } else { 20 })
            .collect();
        // The vectors' parameters: their 512 bins of width 2 end at 1024,
        // below this step's magnitude (about 1840), so `high` is 1024 and
        // the step is strong. With the demo bins, which cover every
        // magnitude, a frame whose only edge is one plateau of equal
        // magnitudes gets `high` just above it (the rule takes the upper
        // end of the quantile's bin) and has no strong pixel.
        let c = run_chain(&img, w, h, &VECTOR_PARAMS).unwrap();
        let (lo, hi) = (c.thresholds.low() as f64, c.thresholds.high() as f64);
        let e = reference_f64(&img, w, h, lo, hi);
        for y in 0..h {
            let cols: Vec<usize> = (0..w).filter(|&x| e[y * w + x] != 0).collect();
            let kcols: Vec<usize> = (0..w).filter(|&x| c.thin[y * w + x] != 0).collect();
            assert_eq!(cols, vec![7], "reference row {y} ({lo}, {hi})");
            assert_eq!(kcols, vec![7], "kernel row {y} ({lo}, {hi})");
        }
        assert_eq!(agreement(&c.thin, &e, w, h).f1, 1.0);
    }

    #[test]
    fn demo_scenes_meet_the_bit_exact_contracts_and_the_f1_goal() {
        let scenes = demo_scenes();
        let rows = check(&scenes);
        assert_eq!(rows.len(), 5);
        for r in rows.iter().filter(|r| r.contract == Contract::BitExact) {
            assert!(r.pass, "{}: {:?} {:?}", r.name, r.notes, r.metrics);
            assert_eq!(r.bit_exact_share, 1.0, "{}", r.name);
        }
        let canny = rows.iter().find(|r| r.name == "edges.canny").unwrap();
        assert!(canny.pass, "{:?}", canny.notes);
        assert_eq!(canny.metrics["f1_goal_met"], 1.0, "{:?}", canny.metrics);
        for s in &scenes {
            let f1 = canny.metrics[&format!("f1.{}", s.name)];
            // The goal on every scene, and the older regression floor as a
            // guard (it fails first if the chain drifts badly).
            assert!(f1 >= F1_FLOOR, "{}: {f1}", s.name);
            assert!(f1 >= F1_GOAL, "{}: {f1}", s.name);
        }
    }

    #[test]
    fn golden_cases_recompute_and_have_content() {
        let cases = golden_cases(&demo_scenes());
        for c in &cases {
            let got = run_vector(&c.kernel, &c.params, &c.inputs).unwrap();
            assert_eq!(got, c.expected, "{}", c.id);
        }
        let chain = cases.iter().find(|c| c.id == "edges.chain.floor").unwrap();
        let edges = chain.expected[0].to_u8().unwrap();
        assert!(
            edges.iter().filter(|&&v| v != 0).count() > 20,
            "crop has too few edges"
        );
        assert!(run_vector("edges.hysteresis", &json!({"stack": 3}), &cases[5].inputs).is_err());
        assert!(run_vector(
            "edges.classify",
            &json!({"low": 9, "high": 3}),
            &cases[4].inputs
        )
        .unwrap_err()
        .contains("low threshold 9 is above high threshold 3"));
    }
}
