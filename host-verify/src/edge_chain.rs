//! The fixed-point edge chain run on the host: 9-tap smoothed Sobel
//! ([`fixsight::pipeline::Smoothing::Gauss7`] with Sobel's taps, the
//! filters of [`fixsight::pipeline::DEMO`]), rounded L2 magnitude, 4-sector
//! direction, non-maximum suppression, automatic thresholds,
//! classification, hysteresis and thinning, by the kernel crate's public
//! functions only, with every intermediate kept ([`Chain`]).
//!
//! The `nms`, `hysteresis` and `thinning` families check their kernels on
//! these intermediates of the demo scenes and take their golden inputs
//! from them; the `chain` family ([`crate::chain`]) checks the whole chain
//! against a full-`f64` Canny. This module imports no family module.

use crate::filter::run::run_whole;
use crate::golden::crop;
use crate::opcount::{measure, OpsPerPx};
use crate::scene::Scene;
use fixsight::filter::SeparableFilter;
use fixsight::hysteresis::{self, Thresholds, U0F16};
use fixsight::nms::{self, NmsStream};
use fixsight::pipeline::{self, ThresholdRule};
use fixsight::{gradient, thinning, ImageView, ImageViewMut};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde::{Deserialize, Serialize};

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
    pub low_ratio_u0f16: u16,
    /// Hysteresis work-stack entries.
    pub stack: usize,
    /// Which non-maximum suppression the chain runs (absent in the
    /// manifest: the 4-sector `nms.suppress`, as every vector written
    /// before the choice existed).
    #[serde(default, skip_serializing_if = "Suppression::is_sectors")]
    pub suppression: Suppression,
}

/// The non-maximum suppression of the chain.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Suppression {
    /// `nms::suppress` on the 4 direction sectors (the cheap option).
    #[default]
    Sectors,
    /// `nms::suppress_interpolated` along the exact gradient direction.
    Interpolated,
}

impl Suppression {
    /// Both kinds, sectors first.
    pub const ALL: [Suppression; 2] = [Suppression::Sectors, Suppression::Interpolated];

    /// True for [`Suppression::Sectors`].
    pub fn is_sectors(&self) -> bool {
        *self == Suppression::Sectors
    }

    /// Kernel id of the suppression step.
    pub fn kernel(self) -> &'static str {
        match self {
            Suppression::Sectors => "nms.suppress",
            Suppression::Interpolated => "nms.suppress_interpolated",
        }
    }
}

/// The demo settings: the threshold rule of the kernel crate's
/// [`fixsight::pipeline::DEMO`] (bins of width 4 covering the chain's
/// largest magnitude, the demo share and ratio) and a 1024-entry stack.
pub const DEMO: ChainParams = demo_params();

const fn demo_params() -> ChainParams {
    let (shift, high_permille, low_ratio_u0f16) = match pipeline::DEMO.thresholds {
        ThresholdRule::Auto {
            shift,
            high_permille,
            low_ratio_u0f16,
            ..
        } => (shift as u32, high_permille, low_ratio_u0f16),
        ThresholdRule::Fixed { .. } => (0, 0, 0),
    };
    ChainParams {
        bins: pipeline::DEMO.bins_needed(),
        shift,
        high_permille,
        low_ratio_u0f16,
        stack: 1024,
        suppression: Suppression::Sectors,
    }
}

/// [`DEMO`] with the interpolating suppression.
pub const DEMO_INTERPOLATED: ChainParams = ChainParams {
    suppression: Suppression::Interpolated,
    ..DEMO
};

/// The parameters the edge golden vectors (`nms.*`, `hysteresis.*`,
/// `thinning.*`, `chain.*`) were written with: 512 bins of width 2 (they
/// end at 1023, below the chain's largest magnitude 3697), the same share
/// and ratio, a 1024-entry stack. They are the vectors' own parameters,
/// stored in the manifest, and stay as they are so the vectors stay byte
/// for byte; the report uses [`DEMO`].
pub const VECTOR_PARAMS: ChainParams = ChainParams {
    bins: 512,
    shift: 1,
    high_permille: hysteresis::DEMO_HIGH_PERMILLE,
    low_ratio_u0f16: hysteresis::DEMO_LOW_FRACTION.to_bits(),
    stack: 1024,
    suppression: Suppression::Sectors,
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
    /// Operations per pixel of the edge steps, in [`STEPS`] order.
    pub ops: [OpsPerPx; 5],
}

/// The edge steps whose operations [`Chain::ops`] holds, by kernel id (the
/// first is `nms.suppress_interpolated` when the chain runs
/// [`Suppression::Interpolated`]).
pub const STEPS: [&str; 5] = [
    "nms.suppress",
    "hysteresis.thresholds",
    "hysteresis.classify",
    "hysteresis.link",
    "thinning.thin",
];

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
/// rounding each, clamped borders (coordinates clamped into the image).
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

/// Runs the kernel's interpolating suppression on a frame.
pub fn run_nms_interpolated(
    mag: &[u16],
    gx: &[i16],
    gy: &[i16],
    w: usize,
    h: usize,
) -> Result<Vec<u16>, String> {
    let mut out = vec![0u16; w * h];
    nms::suppress_interpolated(
        &ImageView::new(mag, w, h, w).map_err(e)?,
        &ImageView::new(gx, w, h, w).map_err(e)?,
        &ImageView::new(gy, w, h, w).map_err(e)?,
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
    let mut hist = vec![0u32; crate::family::buffer_len("histogram bins", p.bins)?];
    Thresholds::from_histogram(
        &ImageView::new(mag, w, h, w).map_err(e)?,
        &mut hist,
        p.shift,
        p.high_permille,
        U0F16::from_bits(p.low_ratio_u0f16),
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
pub fn run_link(
    codes: &[u8],
    w: usize,
    h: usize,
    stack: usize,
) -> Result<(Vec<u8>, hysteresis::HysteresisStats), String> {
    let mut map = codes.to_vec();
    let mut st = vec![0u32; crate::family::buffer_len("hysteresis stack", stack)?];
    let s = hysteresis::link(
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
    let (nms_out, o_nms) = measure(px, || match p.suppression {
        Suppression::Sectors => run_nms(&mag, &dir, w, h),
        Suppression::Interpolated => run_nms_interpolated(&mag, &gx, &gy, w, h),
    });
    let nms_out = nms_out?;
    let (thresholds, o_thr) = measure(px, || run_thresholds(&nms_out, w, h, p));
    let thresholds = thresholds?;
    let (codes, o_cl) = measure(px, || run_classify(&nms_out, w, h, &thresholds));
    let codes = codes?;
    let (hy, o_hy) = measure(px, || run_link(&codes, w, h, p.stack));
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
        ops: [o_nms, o_thr, o_cl, o_hy, o_th],
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

/// The chain with [`DEMO`] settings on every demo scene, and the scenes on
/// which it failed (as report problems).
pub fn demo_chains(scenes: &[Scene]) -> (Vec<(&Scene, Chain)>, Vec<String>) {
    chains_with(scenes, &DEMO)
}

/// The chain with the given settings on every scene, and the scenes on
/// which it failed (as report problems).
pub fn chains_with<'a>(
    scenes: &'a [Scene],
    p: &ChainParams,
) -> (Vec<(&'a Scene, Chain)>, Vec<String>) {
    let mut chains = Vec::new();
    let mut problems = Vec::new();
    for s in scenes {
        match run_chain(&s.gray, s.width, s.height, p) {
            Ok(c) => chains.push((s, c)),
            Err(err) => problems.push(format!("{}: kernel error: {err}", s.name)),
        }
    }
    (chains, problems)
}

/// Operations per pixel of step `step` ([`STEPS`] index) on the first scene.
pub fn step_ops(chains: &[(&Scene, Chain)], step: usize) -> OpsPerPx {
    chains
        .first()
        .map(|(_, c)| c.ops[step].clone())
        .unwrap_or_default()
}

/// The scene crop the edge-step golden cases start from, with the chain's
/// intermediates on it.
pub struct GoldenCrop {
    /// Crop width.
    pub w: usize,
    /// Crop height.
    pub h: usize,
    /// The crop.
    pub img: Vec<u8>,
    /// The chain with [`VECTOR_PARAMS`] on the crop.
    pub chain: Chain,
    /// Where the crop comes from, for comments.
    pub at: String,
}

/// The 48 x 32 crop at (136, 180) of the second demo scene.
pub fn golden_crop(scenes: &[Scene]) -> GoldenCrop {
    crop_at(scenes, 1, (136, 180), (48, 32))
}

/// One long-row crop: `(tag, scene index, (x0, y0), (w, h))`.
pub type WideCrop = (&'static str, usize, (usize, usize), (usize, usize));

/// The wide crops of the golden vectors, `(tag, scene index, (x0, y0),
/// (w, h))`: rows as long as the loops a port unrolls or vectorises run
/// over, one a power of two (256: only full blocks of 4, 8, 16, 32 or 64
/// pixels) and one odd (317, a prime: a tail after every block size), 12
/// rows so the 9-row support of the edge chain has interior rows too. A
/// port that goes wrong only in full blocks or only in a tail fails one of
/// them (common practice, no source).
pub const WIDE_CROPS: [WideCrop; 2] = [
    ("wide256", 1, (32, 100), (256, 12)),
    ("wide317", 1, (1, 130), (317, 12)),
];

/// The [`WIDE_CROPS`] with the chain's intermediates, tagged.
pub fn wide_crops(scenes: &[Scene]) -> Vec<(&'static str, GoldenCrop)> {
    WIDE_CROPS
        .iter()
        .map(|&(tag, k, at, size)| (tag, crop_at(scenes, k, at, size)))
        .collect()
}

/// The `w x h` crop at `(x0, y0)` of demo scene `k` (modulo the scenes
/// given) with the chain's intermediates.
pub fn crop_at(
    scenes: &[Scene],
    k: usize,
    (x0, y0): (usize, usize),
    (w, h): (usize, usize),
) -> GoldenCrop {
    let s = &scenes[k % scenes.len()];
    let at = format!("a {w}x{h} crop at ({x0}, {y0}) of scene {}", s.name);
    crop_of(crop(s, x0, y0, w, h), (w, h), at).expect("crop sizes are valid")
}

/// A `w x h` image with the chain's intermediates ([`VECTOR_PARAMS`]);
/// `at` says where it comes from. Errors: a size the kernels refuse.
pub fn crop_of(img: Vec<u8>, (w, h): (usize, usize), at: String) -> Result<GoldenCrop, String> {
    let chain = run_chain(&img, w, h, &VECTOR_PARAMS)?;
    Ok(GoldenCrop {
        w,
        h,
        img,
        chain,
        at,
    })
}

/// Synthetic inputs of the edge-step golden cases, drawn in this order from
/// one ChaCha8 stream (seed `0xED6E`): a 12 x 9 tie case for
/// `nms.suppress` (magnitudes `0..=3`, random sectors), then a 20 x 14
/// dense weak code map for `hysteresis.link` (3 % strong, 62 % weak, the
/// last pixel strong).
pub struct SyntheticEdges {
    /// Tie-case size.
    pub ties_size: (usize, usize),
    /// Tie-case magnitudes.
    pub ties_mag: Vec<u16>,
    /// Tie-case sectors.
    pub ties_dir: Vec<u8>,
    /// Code-map size.
    pub codes_size: (usize, usize),
    /// Code map.
    pub codes: Vec<u8>,
}

/// Draws [`SyntheticEdges`].
pub fn synthetic_edges() -> SyntheticEdges {
    let (tw, th) = (12usize, 9usize);
    let mut rng = ChaCha8Rng::seed_from_u64(0xED6E);
    let ties_mag: Vec<u16> = (0..tw * th).map(|_| rng.random_range(0..4u16)).collect();
    let ties_dir: Vec<u8> = (0..tw * th).map(|_| rng.random_range(0..4u8)).collect();
    let (hw, hh) = (20usize, 14usize);
    let mut codes: Vec<u8> = (0..hw * hh)
        .map(|_| match rng.random_range(0..100u32) {
            0..=2 => 2,
            3..=64 => 1,
            _ => 0,
        })
        .collect();
    codes[hw * hh - 1] = 2;
    SyntheticEdges {
        ties_size: (tw, th),
        ties_mag,
        ties_dir,
        codes_size: (hw, hh),
        codes,
    }
}
