//! The hostile-input campaign: seeded random cases against every parser
//! the tool has (lens file, grid blob, golden manifest) and every family of
//! public kernel entry points, each case checked for panics, for time, and
//! against an independent oracle where one exists.
//!
//! | family | cases | oracle |
//! |---|---|---|
//! | `parse.lens` | the demo lens file with values, lines and bytes replaced, removed, repeated, a byte-order mark | an accepted file satisfies every documented range, and its view's corners map inside one sensor size |
//! | `parse.grid_blob` | valid blobs of random grids, then bit flips with the CRC recomputed, truncations, random header fields | an accepted blob writes back to the same bytes, and each pixel's coordinate equals the `i128` bilinear model of its points |
//! | `parse.image` | small grey and colour PNG, PGM and PPM images of random pixels, then bit flips, truncations and header sizes up to 2^32 | an untouched grey image decodes to exactly its pixels; an accepted one has sides within the limit and `width * height` pixels |
//! | `parse.golden_manifest` | one to three vectors of the repository's manifest, with fields set to extremes, files renamed, kernels swapped, bytes flipped | every untouched vector still reproduces; no panic, no hang |
//! | `kernel.arith` | any `i32`, any shift | `i128` arithmetic |
//! | `kernel.filter` | random sizes, borders, presets and custom taps; the row stream with rejected calls in between | the direct 2-D sum on the border-extended image (`f64`, exact here), rounded half up and saturated; the stream equals the frame |
//! | `kernel.gradient` | random and extreme `i16` rows | `f64` magnitude and angle references, the L2 approximation formula |
//! | `kernel.nms` | random magnitudes with ties, sectors including invalid ones; the stream | the host reference; the stream equals the frame |
//! | `kernel.hysteresis` | random magnitudes and thresholds, code maps, stack sizes, histogram rules | the host references (breadth-first flood fill, sorted-histogram thresholds) |
//! | `kernel.thinning` | random binary maps, caps | the host reference (a direct transcription of the paper's two sub-iterations) |
//! | `kernel.warp` | random geometries, pixel maps (in and out of range), control grids, 1..=4 channels | the `i128`/`i64` sampling and grid models |
//! | `kernel.lines` | random vote settings (valid and not), frames of edge points with random gradients and weights, peak settings | the brute-force models of the host (`crate::lines::model_cells`, `crate::lines::peaks_of`); the row stream equals the frame |
//! | `kernel.marking` | random candidate lines (extreme `rho`, any angle, duplicates) and the demo limits or random ones | a found pair names two different input lines whose near-row columns and separation lie within the limits; the same input gives the same answer |
//! | `kernel.track` | random settings (valid and not), zero to three detections (the tracker takes two), `rho` past its range, frame numbers that sometimes step back | exactly the frames that break a documented rule are refused, with a typed error and no change; counts and warnings are consistent with the live tracks; a reset tracker answers as a new one |
//! | `kernel.pipeline` | random edge-stage settings (valid and not), frame sizes, frames per run, short last frames | the whole-frame kernels one after another ([`crate::pipeline::compare`]) |
//!
//! A case that panics, or whose result differs from the oracle, is counted
//! with its seed and case number, which reproduce it
//! ([`run_family`] with the same seed, then the case index). A case taking
//! longer than [`SLOW_CASE`] is counted as slow; the long-run command
//! (`cargo run --release -p fixsight-verify --example campaign`) also
//! stops with a message if one case runs for more than a minute (a hang).

use crate::golden::{self, Manifest};
use fixsight::filter::{self, Border, FilterOutput, FilterStream, SeparableFilter, Taps};
use fixsight::warp::{ControlGrid, PixelMap, WarpGeometry};
use fixsight::{gradient, hysteresis, nms, thinning, ImageView, ImageViewMut};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

/// A case taking longer than this is counted as slow.
pub const SLOW_CASE: Duration = Duration::from_secs(2);

/// Every family of the campaign, in report order.
pub const FAMILIES: [&str; 15] = [
    "parse.lens",
    "parse.grid_blob",
    "parse.image",
    "parse.golden_manifest",
    "kernel.arith",
    "kernel.filter",
    "kernel.gradient",
    "kernel.nms",
    "kernel.hysteresis",
    "kernel.thinning",
    "kernel.warp",
    "kernel.lines",
    "kernel.marking",
    "kernel.track",
    "kernel.pipeline",
];

/// What one family's run found.
#[derive(Debug, Clone, Default)]
pub struct Tally {
    /// Family name.
    pub family: &'static str,
    /// Cases run.
    pub cases: u64,
    /// Cases that panicked.
    pub panics: u64,
    /// Cases whose result differs from the oracle.
    pub wrong: u64,
    /// Cases slower than [`SLOW_CASE`].
    pub slow: u64,
    /// Cases that the code under test rejected with a typed error.
    pub rejected: u64,
    /// Slowest case, seconds.
    pub slowest_s: f64,
    /// Up to five findings: `case index: what`.
    pub findings: Vec<String>,
}

/// Outcome of one case.
enum Outcome {
    /// Accepted and equal to the oracle (or no oracle applies).
    Ok,
    /// Rejected with a typed error, as it may be.
    Rejected,
    /// A result the oracle disagrees with.
    Wrong(String),
}

use Outcome::{Ok as Fine, Rejected, Wrong};

/// The random source of case `i` of `family` under `seed`.
fn rng_for(seed: u64, family: &str, i: u64) -> ChaCha8Rng {
    let mut h = seed ^ 0x9e37_79b9_7f4a_7c15;
    for b in family.bytes() {
        h = (h ^ b as u64).wrapping_mul(0x0100_0000_01b3);
    }
    let mut r = ChaCha8Rng::seed_from_u64(h);
    r.set_stream(i);
    r
}

/// Shared, read-only inputs of the campaign (the repository's golden
/// manifest and folder, the demo lens file).
pub struct Inputs {
    golden_dir: PathBuf,
    manifest: Option<Manifest>,
    lens: String,
}

impl Inputs {
    /// Loads the inputs from the repository's `golden/` (`golden_dir`).
    pub fn load(golden_dir: &Path) -> Self {
        Self {
            golden_dir: golden_dir.to_path_buf(),
            manifest: golden::read_manifest(golden_dir).ok(),
            lens: include_str!("../data/demo-lens.txt").to_string(),
        }
    }
}

/// Runs `cases` cases of `family` from `seed`, calling `progress` after
/// each case with its index (the long-run command's hang watchdog).
pub fn run_family(
    family: &'static str,
    seed: u64,
    cases: u64,
    inputs: &Inputs,
    progress: &dyn Fn(u64),
) -> Tally {
    let mut t = Tally {
        family,
        ..Default::default()
    };
    for i in 0..cases {
        let mut rng = rng_for(seed, family, i);
        let start = Instant::now();
        let r = catch_unwind(AssertUnwindSafe(|| match family {
            "parse.lens" => lens_case(&mut rng, &inputs.lens),
            "parse.grid_blob" => blob_case(&mut rng),
            "parse.image" => image_case(&mut rng),
            "parse.golden_manifest" => manifest_case(&mut rng, inputs),
            "kernel.arith" => arith_case(&mut rng),
            "kernel.filter" => filter_case(&mut rng),
            "kernel.gradient" => gradient_case(&mut rng),
            "kernel.nms" => nms_case(&mut rng),
            "kernel.hysteresis" => hysteresis_case(&mut rng),
            "kernel.thinning" => thinning_case(&mut rng),
            "kernel.warp" => warp_case(&mut rng),
            "kernel.lines" => lines_case(&mut rng),
            "kernel.marking" => marking_case(&mut rng),
            "kernel.track" => track_case(&mut rng),
            "kernel.pipeline" => pipeline_case(&mut rng),
            _ => Wrong(format!("unknown family {family}")),
        }));
        let dt = start.elapsed();
        t.cases += 1;
        t.slowest_s = t.slowest_s.max(dt.as_secs_f64());
        if dt > SLOW_CASE {
            t.slow += 1;
            if t.findings.len() < 5 {
                t.findings
                    .push(format!("case {i}: slow ({:.1} s)", dt.as_secs_f64()));
            }
        }
        match r {
            Ok(Fine) => {}
            Ok(Rejected) => t.rejected += 1,
            Ok(Wrong(why)) => {
                t.wrong += 1;
                if t.findings.len() < 5 {
                    t.findings.push(format!("case {i}: {why}"));
                }
            }
            Err(p) => {
                t.panics += 1;
                let msg = p
                    .downcast_ref::<String>()
                    .cloned()
                    .or_else(|| p.downcast_ref::<&str>().map(|s| s.to_string()))
                    .unwrap_or_default();
                if t.findings.len() < 5 {
                    t.findings.push(format!("case {i}: panic: {msg}"));
                }
            }
        }
        progress(i);
    }
    t
}

/// Runs every family with `cases` cases each, panics silenced (they are
/// counted).
pub fn run_all(seed: u64, cases: u64, golden_dir: &Path) -> Vec<Tally> {
    let inputs = Inputs::load(golden_dir);
    let hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(|_| {}));
    let out = FAMILIES
        .iter()
        .map(|f| run_family(f, seed, cases, &inputs, &|_| {}))
        .collect();
    std::panic::set_hook(hook);
    out
}

// ---------------------------------------------------------------- helpers

fn bytes(r: &mut ChaCha8Rng, n: usize) -> Vec<u8> {
    match r.random_range(0..6) {
        0 => vec![if r.random() { 0 } else { 255 }; n],
        1 => (0..n).map(|_| if r.random() { 0 } else { 255 }).collect(),
        _ => (0..n).map(|_| r.random()).collect(),
    }
}

fn i16s(r: &mut ChaCha8Rng, n: usize) -> Vec<i16> {
    (0..n)
        .map(|_| match r.random_range(0..8) {
            0 => i16::MIN,
            1 => i16::MAX,
            2 => 0,
            3 => r.random_range(-3..=3),
            _ => r.random(),
        })
        .collect()
}

fn border(r: &mut ChaCha8Rng) -> Border {
    if r.random() {
        Border::Clamp
    } else {
        Border::Fill(r.random())
    }
}

fn first_diff<T: PartialEq + std::fmt::Debug>(what: &str, got: &[T], want: &[T]) -> Outcome {
    if got.len() != want.len() {
        return Wrong(format!(
            "{what}: {} values, oracle {}",
            got.len(),
            want.len()
        ));
    }
    match got.iter().zip(want).position(|(a, b)| a != b) {
        None => Fine,
        Some(i) => Wrong(format!(
            "{what}: element {i} is {:?}, oracle {:?}",
            got[i], want[i]
        )),
    }
}

// ------------------------------------------------------------------ arith

fn arith_case(r: &mut ChaCha8Rng) -> Outcome {
    let x: i32 = match r.random_range(0..4) {
        0 => *[i32::MIN, i32::MAX, -1, 0, 1]
            .get(r.random_range(0..5))
            .unwrap_or(&0),
        _ => r.random(),
    };
    let s: u32 = match r.random_range(0..4) {
        0 => r.random(),
        _ => r.random_range(0..40),
    };
    let want = if s >= 64 {
        0
    } else {
        let d = 1i128 << s;
        (2 * x as i128 + d).div_euclid(2 * d) as i32
    };
    let got = fixsight::arith::round_shift(x, s);
    if got != want {
        return Wrong(format!("round_shift({x}, {s}) = {got}, oracle {want}"));
    }
    let (a, b) = (fixsight::arith::sat_u8(x), x.clamp(0, 255) as u8);
    let c = (fixsight::arith::sat_i16(x), x.clamp(-32768, 32767) as i16);
    let d = (fixsight::arith::sat_u16(x), x.clamp(0, 65535) as u16);
    let y = x as i16;
    let e = (
        fixsight::arith::abs_sat_i16(y),
        (y as i32).unsigned_abs().min(32767) as u16,
    );
    if a != b || c.0 != c.1 || d.0 != d.1 || e.0 != e.1 {
        return Wrong(format!("saturation of {x} differs"));
    }
    Fine
}

// ----------------------------------------------------------------- filter

fn whole<T: FilterOutput>(f: &SeparableFilter, img: &[u8], w: usize, h: usize) -> Option<Vec<T>> {
    let mut out = vec![T::default(); w * h];
    f.apply(
        &ImageView::new(img, w, h, w).ok()?,
        &mut ImageViewMut::new(&mut out, w, h, w).ok()?,
        &mut vec![0i32; w],
    )
    .ok()?;
    Some(out)
}

/// The stream with rejected calls in between; `None` if a good call failed
/// or a bad one was accepted.
fn streamed<T: FilterOutput>(
    f: &SeparableFilter,
    img: &[u8],
    w: usize,
    h: usize,
    r: &mut ChaCha8Rng,
) -> Result<Vec<T>, String> {
    let mut ring = vec![0u8; FilterStream::ring_rows(f) * w];
    let mut acc = vec![0i32; w];
    let mut s = FilterStream::new(f, w, h, &mut ring, &mut acc).map_err(|e| e.to_string())?;
    let mut out = vec![T::default(); w * h];
    let mut row = vec![T::default(); w];
    for y in 0..h {
        if r.random_range(0..4) == 0 {
            let bad = match r.random_range(0..3) {
                0 => s.push_row(&img[y * w..y * w + w - 1], &mut row),
                1 => s.push_row(&img[y * w..y * w + w], &mut row[..w - 1]),
                _ => s.flush_row(&mut row),
            };
            if bad.is_ok() {
                return Err(format!("a bad call at row {y} was accepted"));
            }
        }
        if let Some(oy) = s
            .push_row(&img[y * w..y * w + w], &mut row)
            .map_err(|e| e.to_string())?
        {
            out[oy * w..oy * w + w].copy_from_slice(&row);
        }
    }
    while let Some(oy) = s.flush_row(&mut row).map_err(|e| e.to_string())? {
        out[oy * w..oy * w + w].copy_from_slice(&row);
    }
    if s.push_row(&img[..w], &mut row).is_ok() {
        return Err("a push after the last row was accepted".into());
    }
    Ok(out)
}

fn filter_case(r: &mut ChaCha8Rng) -> Outcome {
    let (w, h) = (r.random_range(1..=24), r.random_range(1..=16));
    let img = bytes(r, w * h);
    let b = border(r);
    let f = match r.random_range(0..9) {
        0 => filter::binomial3(b),
        1 => filter::binomial5(b),
        2 => filter::binomial7(b),
        3 => filter::sobel_x(b),
        4 => filter::sobel_y(b),
        5 => filter::scharr_x(b),
        6 => filter::scharr_y(b),
        _ => {
            let mut taps = || {
                let n = match r.random_range(0..8) {
                    0 => r.random_range(0..12),
                    _ => 2 * r.random_range(0..5) + 1,
                };
                let c: Vec<i16> = (0..n)
                    .map(|_| match r.random_range(0..6) {
                        0 => r.random(),
                        _ => r.random_range(-300..=300),
                    })
                    .collect();
                Taps::new(&c, r.random_range(0..=18))
            };
            match (taps(), taps()) {
                (Ok(a), Ok(c)) => match filter::separable(a, c, b) {
                    Ok(f) => f,
                    Err(_) => return Rejected,
                },
                _ => return Rejected,
            }
        }
    };
    let (ht, vt) = (
        crate::filter::reference::real_taps(f.horizontal()),
        crate::filter::reference::real_taps(f.vertical()),
    );
    let real = crate::filter::reference::reference_real(&img, w, h, &ht, &vt, b);
    let round = |lo: f64, hi: f64| -> Vec<f64> {
        real.iter()
            .map(|&v| crate::filter::reference::round_half_up_sat(v, lo, hi))
            .collect()
    };
    let (Some(a), Some(c)) = (whole::<u8>(&f, &img, w, h), whole::<i16>(&f, &img, w, h)) else {
        return Wrong("a valid frame was rejected".into());
    };
    let a64: Vec<f64> = a.iter().map(|&v| v as f64).collect();
    let c64: Vec<f64> = c.iter().map(|&v| v as f64).collect();
    if let Wrong(m) = first_diff("u8 output", &a64, &round(0.0, 255.0)) {
        return Wrong(m);
    }
    if let Wrong(m) = first_diff("i16 output", &c64, &round(-32768.0, 32767.0)) {
        return Wrong(m);
    }
    match streamed::<u8>(&f, &img, w, h, r) {
        Ok(s) => first_diff("stream", &s, &a),
        Err(e) => Wrong(format!("stream: {e}")),
    }
}

// --------------------------------------------------------------- gradient

fn gradient_case(r: &mut ChaCha8Rng) -> Outcome {
    let n = r.random_range(0..64);
    let (gx, gy) = (i16s(r, n), i16s(r, n));
    let mut out = vec![0u16; n];
    let mut dir = vec![0u8; n];
    if gradient::magnitude_l1_row(&gx, &gy, &mut out).is_err() {
        return Wrong("l1 row rejected".into());
    }
    let want: Vec<u16> = gx
        .iter()
        .zip(&gy)
        .map(|(&a, &b)| crate::gradient::reference::reference_l1(a, b) as u16)
        .collect();
    if let Wrong(m) = first_diff("l1", &out, &want) {
        return Wrong(m);
    }
    let _ = gradient::magnitude_l2_round_row(&gx, &gy, &mut out);
    let want: Vec<u16> = gx
        .iter()
        .zip(&gy)
        .map(|(&a, &b)| crate::gradient::reference::reference_l2_round(a, b) as u16)
        .collect();
    if let Wrong(m) = first_diff("l2_round", &out, &want) {
        return Wrong(m);
    }
    let _ = gradient::magnitude_l2_approx_row(&gx, &gy, &mut out);
    let want: Vec<u16> = gx
        .iter()
        .zip(&gy)
        .map(|(&a, &b)| {
            let (ax, ay) = (
                (a as i32).unsigned_abs().min(32767),
                (b as i32).unsigned_abs().min(32767),
            );
            ((123 * ax.max(ay) + 51 * ax.min(ay) + 64) >> 7) as u16
        })
        .collect();
    if let Wrong(m) = first_diff("l2_approx", &out, &want) {
        return Wrong(m);
    }
    let _ = gradient::direction_row(&gx, &gy, &mut dir);
    let want: Vec<u8> = gx
        .iter()
        .zip(&gy)
        .map(|(&a, &b)| crate::gradient::reference::reference_sector(a, b))
        .collect();
    if let Wrong(m) = first_diff("direction", &dir, &want) {
        return Wrong(m);
    }
    // Short buffers are typed errors.
    if n > 0 && gradient::magnitude_l1_row(&gx, &gy[..n - 1], &mut out).is_ok() {
        return Wrong("short gy accepted".into());
    }
    Fine
}

// -------------------------------------------------------------------- nms

fn nms_case(r: &mut ChaCha8Rng) -> Outcome {
    let (w, h) = (r.random_range(1..=20), r.random_range(1..=14));
    let top = *[2u16, 5, 60, 65535].get(r.random_range(0..4)).unwrap_or(&5);
    let mag: Vec<u16> = (0..w * h).map(|_| r.random_range(0..=top)).collect();
    let bad = r.random_range(0..8) == 0;
    let mut dir: Vec<u8> = (0..w * h).map(|_| r.random_range(0..4)).collect();
    if bad {
        let i = r.random_range(0..w * h);
        dir[i] = r.random_range(4..=255);
    }
    let mut out = vec![0u16; w * h];
    let got = nms::suppress(
        &ImageView::new(&mag, w, h, w).expect("valid"),
        &ImageView::new(&dir, w, h, w).expect("valid"),
        &mut ImageViewMut::new(&mut out, w, h, w).expect("valid"),
    );
    let want = crate::nms::reference::reference(&mag, &dir, w, h);
    match (got, want) {
        (Err(_), Err(_)) => return Rejected,
        (Ok(()), Ok(want)) => {
            if let Wrong(m) = first_diff("suppress", &out, &want) {
                return Wrong(m);
            }
        }
        (g, wnt) => {
            return Wrong(format!(
                "kernel {:?}, oracle {}",
                g.map(|_| ()),
                if wnt.is_ok() { "accepts" } else { "rejects" }
            ))
        }
    }
    // The stream with rejected calls in between equals the frame.
    let (mut rm, mut rd) = (vec![0u16; 3 * w], vec![0u8; 3 * w]);
    let mut s = nms::NmsStream::new(w, h, &mut rm, &mut rd).expect("valid");
    let mut got = vec![0u16; w * h];
    let mut row = vec![0u16; w];
    for y in 0..h {
        let (m, d) = (&mag[y * w..y * w + w], &dir[y * w..y * w + w]);
        if r.random_range(0..4) == 0 {
            let mut d2 = d.to_vec();
            d2[r.random_range(0..w)] = 200;
            if s.push_row(m, &d2, &mut row).is_ok() {
                return Wrong(format!("a bad sector at row {y} was accepted"));
            }
        }
        match s.push_row(m, d, &mut row) {
            Ok(Some(oy)) => got[oy * w..oy * w + w].copy_from_slice(&row),
            Ok(None) => {}
            Err(e) => return Wrong(format!("stream row {y}: {e}")),
        }
    }
    while let Ok(Some(oy)) = s.flush_row(&mut row) {
        got[oy * w..oy * w + w].copy_from_slice(&row);
    }
    first_diff("stream", &got, &out)
}

// ------------------------------------------------------------- hysteresis

fn hysteresis_case(r: &mut ChaCha8Rng) -> Outcome {
    let (w, h) = (r.random_range(1..=24), r.random_range(1..=16));
    let mag: Vec<u16> = (0..w * h)
        .map(|_| match r.random_range(0..4) {
            0 => 0,
            1 => r.random(),
            _ => r.random_range(0..100),
        })
        .collect();
    let (low, high) = (r.random_range(0..120u16), r.random_range(0..120u16));
    let view = ImageView::new(&mag, w, h, w).expect("valid");
    let mut codes = vec![0u8; w * h];
    match hysteresis::Thresholds::new(low, high) {
        Err(_) => {
            if (1..=high).contains(&low) {
                return Wrong(format!("thresholds {low}, {high} rejected"));
            }
        }
        Ok(t) => {
            hysteresis::classify(
                &view,
                &t,
                &mut ImageViewMut::new(&mut codes, w, h, w).expect("valid"),
            )
            .expect("valid");
            if let Wrong(m) = first_diff(
                "classify",
                &codes,
                &crate::hysteresis::reference::classify(&mag, low, high),
            ) {
                return Wrong(m);
            }
            let want = crate::hysteresis::reference::link(&codes, w, h);
            let stack = match r.random_range(0..3) {
                0 => r.random_range(0..8),
                1 => 8,
                _ => r.random_range(8..4 * w * h + 9),
            };
            let mut map = codes.clone();
            let res = hysteresis::link(
                &mut ImageViewMut::new(&mut map, w, h, w).expect("valid"),
                &mut vec![0u32; stack],
            );
            match res {
                Err(_) if stack < hysteresis::MIN_STACK => {}
                Err(e) => return Wrong(format!("link rejected a stack of {stack}: {e}")),
                Ok(_) => {
                    if let Wrong(m) = first_diff("link", &map, &want) {
                        return Wrong(m);
                    }
                }
            }
        }
    }
    let bins = r.random_range(0..70);
    let shift = r.random_range(0..20);
    let permille = r.random_range(0..1100u16);
    let ratio = r.random::<u16>();
    let mut hist = vec![0u32; bins];
    match hysteresis::Thresholds::from_histogram(
        &view,
        &mut hist,
        shift,
        permille,
        hysteresis::U0F16::from_bits(ratio),
    ) {
        Err(_) => Rejected,
        Ok(t) => {
            let (lo, hi) =
                crate::hysteresis::reference::auto_thresholds(&mag, bins, shift, permille, ratio);
            if (t.low(), t.high()) != (lo, hi) {
                Wrong(format!(
                    "thresholds ({}, {}), oracle ({lo}, {hi}) for bins {bins} shift {shift} \
                     permille {permille} ratio {ratio}",
                    t.low(),
                    t.high()
                ))
            } else {
                Fine
            }
        }
    }
}

// --------------------------------------------------------------- thinning

fn thinning_case(r: &mut ChaCha8Rng) -> Outcome {
    let (w, h) = (r.random_range(1..=24), r.random_range(1..=20));
    let density = r.random_range(0..=10u32);
    let map: Vec<u8> = (0..w * h)
        .map(|_| u8::from(r.random_range(0..10u32) < density) * r.random_range(1..=255u8))
        .collect();
    let (want, iterations) = crate::thinning::reference::reference(&map, w, h);
    let mut got = map.clone();
    let mut scratch = vec![0u8; 3 * w];
    let st = match thinning::thin(
        &mut ImageViewMut::new(&mut got, w, h, w).expect("valid"),
        &mut scratch,
    ) {
        Ok(s) => s,
        Err(e) => return Wrong(format!("thin rejected a valid map: {e}")),
    };
    if st.iterations != iterations {
        return Wrong(format!("{} iterations, oracle {iterations}", st.iterations));
    }
    if let Wrong(m) = first_diff("thin", &got, &want) {
        return Wrong(m);
    }
    let cap = r.random_range(0..iterations + 2);
    let mut capped = map.clone();
    match thinning::thin_at_most(
        &mut ImageViewMut::new(&mut capped, w, h, w).expect("valid"),
        &mut scratch,
        cap,
    ) {
        Err(_) if cap == 0 => Rejected,
        Err(e) => Wrong(format!("cap {cap} rejected: {e}")),
        Ok(c) if cap >= iterations => {
            if c.capped || c.iterations != iterations {
                return Wrong(format!("cap {cap} above the need reported {c:?}"));
            }
            first_diff("capped thin", &capped, &want)
        }
        Ok(c) => {
            if c.iterations != cap || (!c.capped && cap + 1 < iterations) {
                Wrong(format!("cap {cap} of {iterations}: {c:?}"))
            } else {
                Fine
            }
        }
    }
}

// ------------------------------------------------------------------- warp

fn warp_case(r: &mut ChaCha8Rng) -> Outcome {
    let (sw, sh) = (r.random_range(1..=12), r.random_range(1..=10));
    let (ow, oh) = (r.random_range(1..=14), r.random_range(1..=12));
    let f = r.random_range(0..=12u32);
    let c = r.random_range(1..=4);
    let geom = match WarpGeometry::new(ow, oh, sw, sh, f) {
        Ok(g) => g,
        Err(_) => return Rejected,
    };
    let img = bytes(r, sw * sh * c);
    let b = border(r);
    let (xl, xh) = geom.coord_range_x();
    let (yl, yh) = geom.coord_range_y();
    let out_of_range = r.random_range(0..8) == 0;
    let coord = |r: &mut ChaCha8Rng, lo: i32, hi: i32| -> i32 {
        if out_of_range && r.random_range(0..16) == 0 {
            if r.random() {
                lo - 1
            } else {
                hi + 1
            }
        } else {
            r.random_range(lo..=hi)
        }
    };
    let src = ImageView::interleaved(&img, sw, sh, sw * c, c).expect("valid");
    if r.random() {
        let coords: Vec<i32> = (0..ow * oh)
            .flat_map(|_| [coord(r, xl, xh), coord(r, yl, yh)])
            .collect();
        let map = match PixelMap::new(&coords, geom) {
            Ok(m) => m,
            Err(_) if out_of_range => return Rejected,
            Err(e) => return Wrong(format!("pixel map rejected: {e}")),
        };
        let mut out = vec![0u8; ow * oh * c];
        if let Err(e) = map.warp_rows(
            &src,
            &mut ImageViewMut::interleaved(&mut out, ow, oh, ow * c, c).expect("valid"),
            0,
            b,
        ) {
            return Wrong(format!("pixel map warp rejected: {e}"));
        }
        let want: Vec<u8> = coords
            .chunks(2)
            .flat_map(|p| crate::warp::reference::model_sample(&img, sw, sh, c, p[0], p[1], f, b))
            .collect();
        first_diff("pixel map", &out, &want)
    } else {
        let k = r.random_range(1..=7u32);
        let Ok((cols, rows)) = ControlGrid::grid_size(&geom, k) else {
            return Rejected;
        };
        let points: Vec<i32> = (0..cols * rows)
            .flat_map(|_| [coord(r, xl, xh), coord(r, yl, yh)])
            .collect();
        let grid = match ControlGrid::new(&points, geom, k) {
            Ok(g) => g,
            Err(_) => return Rejected,
        };
        let mut out = vec![0u8; ow * oh * c];
        let strip = r.random_range(1..=oh);
        for y0 in (0..oh).step_by(strip) {
            let rows_here = strip.min(oh - y0);
            let chunk = &mut out[y0 * ow * c..(y0 + rows_here) * ow * c];
            if let Err(e) = grid.warp_rows(
                &src,
                &mut ImageViewMut::interleaved(chunk, ow, rows_here, ow * c, c).expect("valid"),
                y0,
                b,
            ) {
                return Wrong(format!("grid warp rejected: {e}"));
            }
        }
        let mut want = Vec::with_capacity(ow * oh * c);
        for y in 0..oh {
            for x in 0..ow {
                let (mx, my) =
                    crate::warp::reference::model_grid_coord(&points, cols, rows, k, x, y);
                if grid.coord(x, y) != Some((mx, my)) {
                    return Wrong(format!(
                        "coord({x}, {y}) = {:?}, oracle ({mx}, {my})",
                        grid.coord(x, y)
                    ));
                }
                want.extend(crate::warp::reference::model_sample(
                    &img, sw, sh, c, mx, my, f, b,
                ));
            }
        }
        first_diff("control grid", &out, &want)
    }
}

// ------------------------------------------------------------ grid blobs

fn blob_case(r: &mut ChaCha8Rng) -> Outcome {
    let (ow, oh) = (r.random_range(1..=40), r.random_range(1..=30));
    let (sw, sh) = (r.random_range(1..=40), r.random_range(1..=30));
    let f = r.random_range(2..=10u32);
    let k = r.random_range(2..=6u32);
    let geom = WarpGeometry::new(ow, oh, sw, sh, f).expect("valid sizes");
    let (cols, rows) = ControlGrid::grid_size(&geom, k).expect("valid step");
    let (xl, xh) = geom.coord_range_x();
    let (yl, yh) = geom.coord_range_y();
    let points: Vec<i32> = (0..cols * rows)
        .flat_map(|_| [r.random_range(xl..=xh), r.random_range(yl..=yh)])
        .collect();
    let Ok(grid) = ControlGrid::new(&points, geom, k) else {
        return Rejected;
    };
    let mut blob = vec![0u8; grid.blob_len()];
    grid.write_blob(&mut blob).expect("sized");
    // Mutate.
    match r.random_range(0..6) {
        0 => {}
        1 => {
            let n = r.random_range(0..blob.len() + 8);
            blob.resize(n, r.random());
        }
        2 => {
            for _ in 0..r.random_range(1..4) {
                let i = r.random_range(0..blob.len());
                blob[i] ^= 1 << r.random_range(0..8);
            }
        }
        _ => {
            // Header fields or payload changed, CRC recomputed so that the
            // parser looks past it.
            for _ in 0..r.random_range(1..4) {
                let i = if r.random() {
                    r.random_range(4..28)
                } else {
                    r.random_range(0..blob.len())
                };
                blob[i] = match r.random_range(0..3) {
                    0 => 0,
                    1 => 255,
                    _ => r.random(),
                };
            }
            if blob.len() >= 32 {
                let crc = fixsight::warp::crc32(&[&blob[..28], &blob[32..]]);
                blob[28..32].copy_from_slice(&crc.to_le_bytes());
            }
        }
    }
    let parsed = match ControlGrid::from_blob(&blob) {
        Ok(g) => g,
        Err(_) => return Rejected,
    };
    let mut back = vec![0u8; parsed.blob_len()];
    if parsed.write_blob(&mut back).is_err() || back != blob {
        return Wrong("an accepted blob does not write back to the same bytes".into());
    }
    let g = parsed.geometry();
    let (cols, rows) = parsed.grid();
    let pts: Vec<i32> = (0..rows)
        .flat_map(|j| (0..cols).map(move |i| (i, j)))
        .flat_map(|(i, j)| {
            let p = parsed.point(i, j);
            [p.0, p.1]
        })
        .collect();
    for _ in 0..8 {
        let (x, y) = (
            r.random_range(0..g.out_width()),
            r.random_range(0..g.out_height()),
        );
        let want =
            crate::warp::reference::model_grid_coord(&pts, cols, rows, parsed.grid_log2(), x, y);
        if parsed.coord(x, y) != Some(want) {
            return Wrong(format!(
                "coord({x}, {y}) of a parsed blob = {:?}, oracle {want:?}",
                parsed.coord(x, y)
            ));
        }
    }
    Fine
}

// ------------------------------------------------------------- lens files

fn lens_case(r: &mut ChaCha8Rng, demo: &str) -> Outcome {
    let mut lines: Vec<String> = demo.lines().map(str::to_string).collect();
    const VALUES: [&str; 16] = [
        "0",
        "-0",
        "1",
        "-1",
        "1e308",
        "-1e308",
        "NaN",
        "inf",
        "32767",
        "32768",
        "0.5",
        "",
        "abc",
        "1e-320",
        "99999999999999999999",
        "fisheye",
    ];
    const KEYS: [&str; 12] = [
        "out_width = ",
        "out_height = ",
        "view = manual",
        "view_fx = ",
        "view_cx = ",
        "k1 = ",
        "model = fisheye",
        "model = brown",
        "fx = ",
        "p2 = ",
        "zoom = 2",
        "view = fit",
    ];
    for _ in 0..r.random_range(1..5) {
        let n = lines.len().max(1);
        match r.random_range(0..8) {
            0 => {
                let i = r.random_range(0..n);
                if i < lines.len() {
                    lines.remove(i);
                }
            }
            1 => {
                let i = r.random_range(0..n);
                let l = lines.get(i).cloned().unwrap_or_default();
                lines.push(l);
            }
            2 => lines.insert(
                0,
                "\u{feff}".to_string() + &lines.first().cloned().unwrap_or_default(),
            ),
            3 => {
                let key = KEYS[r.random_range(0..KEYS.len())];
                let v = if key.ends_with("= ") {
                    if r.random() {
                        VALUES[r.random_range(0..VALUES.len())].to_string()
                    } else {
                        format!("{}", r.random_range(1..300))
                    }
                } else {
                    String::new()
                };
                lines.push(format!("{key}{v}"));
            }
            _ => {
                // Replace the value of a random key = value line.
                let i = r.random_range(0..n);
                if let Some(l) = lines.get_mut(i) {
                    if let Some((k, _)) = l.clone().split_once('=') {
                        let v = if r.random() {
                            VALUES[r.random_range(0..VALUES.len())].to_string()
                        } else {
                            format!("{}", r.random_range(-2.0..2.0f64))
                        };
                        *l = format!("{k}= {v}");
                    } else if !l.is_empty() {
                        let j = r.random_range(0..l.len());
                        if l.is_char_boundary(j) {
                            l.insert(j, char::from_u32(r.random_range(0..0x3000)).unwrap_or('='));
                        }
                    }
                }
            }
        }
    }
    let text = lines.join("\n");
    let spec = match crate::lens::LensSpec::parse(&text) {
        Ok(s) => s,
        Err(_) => return Rejected,
    };
    let (sw, sh) = spec.sensor;
    let (ow, oh) = spec.output;
    let i = spec.camera.intrinsics;
    let dims_ok = [sw, sh, ow, oh].iter().all(|&d| (1..=32767).contains(&d));
    let f_ok = [i.fx, i.fy, spec.view.fx, spec.view.fy]
        .iter()
        .all(|&f| f > 0.0 && f <= 1e5);
    if !dims_ok || !f_ok {
        return Wrong(format!(
            "accepted out-of-range sizes or focal lengths: {spec:?}"
        ));
    }
    for (x, y) in [(0, 0), (ow - 1, 0), (0, oh - 1), (ow - 1, oh - 1)] {
        let (sx, sy) = spec.camera.source_of(&spec.view, x as f64, y as f64);
        let (swf, shf) = (sw as f64, sh as f64);
        if !(sx >= -swf && sx <= 2.0 * swf - 1.0 && sy >= -shf && sy <= 2.0 * shf - 1.0) {
            return Wrong(format!("accepted corner ({x}, {y}) maps to ({sx}, {sy})"));
        }
    }
    // Small views also go through the grid builder (no panic; an accepted
    // grid has increasing control points).
    if ow * oh <= 64 * 64 {
        let geom = match WarpGeometry::new(ow, oh, sw, sh, 5) {
            Ok(g) => g,
            Err(_) => return Fine,
        };
        if let Ok(mb) = crate::warp::grid::build_grid(&spec.camera, &spec.view, geom, 2) {
            let (cols, _) = mb.grid;
            for (n, p) in mb.real.iter().enumerate() {
                if n % cols > 0 && mb.real[n - 1].0 >= p.0 {
                    return Wrong("an accepted grid has a decreasing row".into());
                }
            }
        }
    }
    Fine
}

// ------------------------------------------------------------------ lines

fn lines_case(r: &mut ChaCha8Rng) -> Outcome {
    use crate::lines::{model_cells, peaks_of};
    use fixsight::lines::{Accumulator, EdgeRow, Peak, PeakParams, VoteParams};
    // Three cases in four inside the documented ranges (so that the model
    // comparison runs), one in four anywhere near or past them.
    let wide = r.random_range(0..4) == 0;
    let s = if wide {
        r.random_range(6u32..=15)
    } else {
        r.random_range(7u32..=14)
    };
    let max_bins = (65536usize >> s).min(48);
    let p = if wide {
        VoteParams {
            width: r.random_range(0usize..40),
            height: r.random_range(0usize..30),
            theta_start: r.random(),
            theta_step_log2: s,
            theta_bins: r.random_range(0..=max_bins + 1),
            rho_step_log2: r.random_range(0u32..=9),
            rho_bins: r.random_range(0usize..130),
            trig_frac_bits: r.random_range(6u32..=16),
            gate: r.random::<bool>().then(|| r.random()),
            weight_shift: r.random::<bool>().then(|| r.random_range(0u32..18)),
        }
    } else {
        VoteParams {
            width: r.random_range(1usize..40),
            height: r.random_range(1usize..30),
            theta_start: r.random_range(0..1 << 17),
            theta_step_log2: s,
            theta_bins: r.random_range(1..=max_bins),
            rho_step_log2: r.random_range(0u32..=8),
            rho_bins: 2 * r.random_range(0usize..60) + 1,
            trig_frac_bits: r.random_range(8u32..=14),
            gate: r.random::<bool>().then(|| r.random_range(1u16..20000)),
            weight_shift: r.random::<bool>().then(|| r.random_range(0u32..6)),
        }
    };
    let n = p.width * p.height;
    let density = r.random_range(0u32..60);
    let edges: Vec<u8> = (0..n)
        .map(|_| u8::from(r.random_range(0..100) < density))
        .collect();
    let gx = i16s(r, n);
    let gy = i16s(r, n);
    let wts: Vec<u16> = (0..n).map(|_| r.random()).collect();
    // The caller's buffers are sometimes a cell short.
    let short = r.random_range(0..10) == 0;
    let cells_len = Accumulator::cells_needed(&p).saturating_sub(short as usize);
    let mut cells = vec![0u16; cells_len.min(1 << 20)];
    let mut trig = vec![[0i16; 2]; p.theta_bins.min(1 << 16)];
    let mut acc = match Accumulator::new(p, &mut cells, &mut trig) {
        Ok(a) => a,
        Err(_) => return Rejected,
    };
    if p.check().is_err() || short {
        return Wrong(format!("accepted invalid settings or buffers: {p:?}"));
    }
    let w = p.width;
    for y in 0..p.height {
        let rr = y * w..(y + 1) * w;
        let row = EdgeRow {
            edges: &edges[rr.clone()],
            gx: Some(&gx[rr.clone()]),
            gy: Some(&gy[rr.clone()]),
            weights: Some(&wts[rr]),
        };
        if let Err(e) = acc.vote_row(y, &row) {
            return Wrong(format!("row {y} refused: {e}"));
        }
    }
    let streamed = acc.cells().to_vec();
    let want = model_cells(&p, &edges, &gx, &gy, &wts);
    if streamed != want {
        return first_diff("streamed cells vs the model", &streamed, &want);
    }
    acc.reset();
    if n > 0 {
        let (ev, xv, yv, wv) = (
            ImageView::new(&edges, p.width, p.height, p.width),
            ImageView::new(&gx, p.width, p.height, p.width),
            ImageView::new(&gy, p.width, p.height, p.width),
            ImageView::new(&wts, p.width, p.height, p.width),
        );
        let (Ok(ev), Ok(xv), Ok(yv), Ok(wv)) = (ev, xv, yv, wv) else {
            return Wrong("views of a valid frame refused".into());
        };
        if let Err(e) = acc.vote_frame(&ev, Some((&xv, &yv)), Some(&wv)) {
            return Wrong(format!("whole frame refused: {e}"));
        }
        if acc.cells() != &streamed[..] {
            return first_diff("whole-frame cells vs streamed", acc.cells(), &streamed);
        }
    }
    let pp = PeakParams {
        threshold: r.random_range(0u16..300),
        radius_theta: r.random_range(0usize..4),
        radius_rho: r.random_range(0usize..4),
    };
    let k = r.random_range(0usize..7);
    let mut out = vec![Peak::default(); k];
    let refusable =
        k == 0 || pp.threshold == 0 || pp.radius_theta > p.theta_bins || pp.radius_rho > p.rho_bins;
    match acc.peaks(&pp, &mut out) {
        Err(_) if refusable => Rejected,
        Err(e) => Wrong(format!("peaks refused valid settings {pp:?}: {e}")),
        Ok(_) if refusable => Wrong(format!(
            "peaks accepted k = {k}, threshold {}, radii {} x {} on {} x {} cells",
            pp.threshold, pp.radius_theta, pp.radius_rho, p.theta_bins, p.rho_bins
        )),
        Ok(got) => {
            let real: Vec<f64> = streamed.iter().map(|&v| v as f64).collect();
            let want: Vec<(u16, usize)> = peaks_of(&p, &real, &pp, k)
                .into_iter()
                .map(|(t, b, v)| (v as u16, t * p.rho_bins + b))
                .collect();
            let got: Vec<(u16, usize)> = out[..got.min(k)]
                .iter()
                .map(|pk| {
                    (
                        pk.votes,
                        pk.theta_bin as usize * p.rho_bins + pk.rho_bin as usize,
                    )
                })
                .collect();
            if got == want {
                Fine
            } else {
                Wrong(format!("peaks {got:?}, the model keeps {want:?}"))
            }
        }
    }
}

// ---------------------------------------------------------------- marking

fn marking_case(r: &mut ChaCha8Rng) -> Outcome {
    use fixsight::marking::{self, Candidate, MarkingConfig, MarkingLimits, Polarity};
    let demo = *MarkingConfig::DEMO.limits();
    let cfg = if r.random_range(0..3) == 0 {
        let max_tilt: u16 = r.random();
        let mut v = |base: i32| -> i32 {
            match r.random_range(0..4) {
                0 => r.random(),
                _ => base + r.random_range(-400..400),
            }
        };
        let limits = MarkingLimits {
            near_row_q4: v(demo.near_row_q4),
            far_row_q4: v(demo.far_row_q4),
            horizon_row_q4: v(demo.horizon_row_q4),
            max_tilt,
            near_x_min_q4: v(demo.near_x_min_q4),
            near_x_max_q4: v(demo.near_x_max_q4),
            near_sep_min_q4: v(demo.near_sep_min_q4),
            near_sep_nominal_q4: v(demo.near_sep_nominal_q4),
            near_sep_max_q4: v(demo.near_sep_max_q4),
            converge_tol_q4: v(demo.converge_tol_q4),
            contrast: demo.contrast,
        };
        match MarkingConfig::new(limits) {
            Ok(c) => c,
            Err(_) => return Rejected,
        }
    } else {
        MarkingConfig::DEMO
    };
    let n = r.random_range(0usize..24);
    let pol = [Polarity::Unknown, Polarity::Rising, Polarity::Falling];
    let mut lines: Vec<Candidate> = (0..n)
        .map(|_| Candidate {
            rho_q4: match r.random_range(0..6) {
                0 => r.random(),
                _ => r.random_range(-3000..3000),
            },
            theta: match r.random_range(0..3) {
                0 => r.random(),
                _ => r.random_range(0..65536u32).min(65535) as u16,
            },
            votes: r.random(),
            polarity: pol[r.random_range(0..3)],
        })
        .collect();
    if n > 1 && r.random() {
        // A duplicate line.
        let i = r.random_range(0..n);
        lines.push(lines[i]);
    }
    let m = marking::select(&lines, &cfg);
    if marking::select(&lines, &cfg) != m {
        return Wrong("the same lines gave two answers".into());
    }
    let Some(t) = m.found() else { return Fine };
    let l = cfg.limits();
    let sep = t.near_x_q4[1] as i64 - t.near_x_q4[0] as i64;
    let inside = |x: i32| (l.near_x_min_q4..=l.near_x_max_q4).contains(&x);
    if t.left >= lines.len() || t.right >= lines.len() || t.left == t.right {
        Wrong(format!(
            "pair ({}, {}) of {} lines",
            t.left,
            t.right,
            lines.len()
        ))
    } else if !inside(t.near_x_q4[0]) || !inside(t.near_x_q4[1]) {
        Wrong(format!("near columns {:?} outside the limits", t.near_x_q4))
    } else if !(l.near_sep_min_q4 as i64..=l.near_sep_max_q4 as i64).contains(&sep) {
        Wrong(format!("near separation {sep} outside the limits"))
    } else {
        Fine
    }
}

// ------------------------------------------------------------------ track

fn track_case(r: &mut ChaCha8Rng) -> Outcome {
    use fixsight::track::{Detection, TrackConfig, Tracker};
    let mut cfg = TrackConfig::DEMO;
    if r.random_range(0..3) == 0 {
        match r.random_range(0..8) {
            0 => cfg.rho.meas_var = r.random(),
            1 => cfg.theta.accel_index_q16 = r.random(),
            2 => cfg.gate_q8 = r.random(),
            3 => cfg.confirm_hits = r.random(),
            4 => cfg.max_missed = r.random(),
            5 => cfg.reference_q4 = (r.random(), r.random()),
            6 => cfg.warn_horizon = r.random(),
            _ => cfg.warn_raise_frames = r.random(),
        }
    }
    let mut t = match Tracker::<4, 2>::new(cfg) {
        Ok(t) => t,
        Err(_) => return Rejected,
    };
    let fresh = t.clone();
    let mut steps = Vec::new();
    let mut frame: u32 = r.random_range(0..1000);
    let mut base = (r.random_range(-2000..2000), r.random::<u16>());
    for _ in 0..r.random_range(1usize..40) {
        let back = r.random_range(0..12) == 0;
        let next = if back {
            frame.saturating_sub(r.random_range(0..3))
        } else {
            frame.saturating_add(r.random_range(1..3))
        };
        base.0 += r.random_range(-20..20);
        base.1 = base.1.wrapping_add(r.random_range(0..200));
        let count = if r.random_range(0..10) == 0 {
            3
        } else {
            r.random_range(0usize..3)
        };
        let dets: Vec<Detection> = (0..count)
            .map(|_| Detection {
                rho_q4: match r.random_range(0..16) {
                    0 => r.random(),
                    _ => base.0 + r.random_range(-300..300),
                },
                theta: base.1.wrapping_add(r.random_range(0..2000)),
                weight: r.random(),
            })
            .collect();
        steps.push((next, dets.clone()));
        let before = t.clone();
        let stepped_back = t.last_frame().is_some_and(|l| next <= l);
        let too_many = dets.len() > 2;
        let too_far = dets.iter().any(|d| d.rho_q4.unsigned_abs() >= 1 << 17);
        match t.update(next, &dets) {
            Err(e) => {
                if format!("{t:?}") != format!("{before:?}") {
                    return Wrong(format!("a refused frame ({e}) changed the tracker"));
                }
                if !(stepped_back || too_many || too_far) {
                    return Wrong(format!("frame {next} refused: {e}"));
                }
            }
            Ok(_) if stepped_back || too_many || too_far => {
                return Wrong(format!(
                    "frame {next} after {:?} with {} detections accepted",
                    before.last_frame(),
                    dets.len()
                ));
            }
            Ok(rep) => {
                frame = next;
                let live = t.tracks().count();
                if rep.associated as usize > dets.len() || live > 4 {
                    return Wrong(format!(
                        "{rep:?} with {} detections, {live} tracks",
                        dets.len()
                    ));
                }
                if let Some(w) = rep.warning {
                    let ok = t
                        .slot(w.slot as usize)
                        .is_some_and(|tr| tr.id == w.track_id && tr.confirmed);
                    if !ok {
                        return Wrong(format!("warning {w:?} names no confirmed track"));
                    }
                }
            }
        }
    }
    // A reset tracker behaves as a new one: the same frames give the same
    // reports and tracks (its scratch need not be cleared).
    t.reset();
    let mut fresh = fresh;
    for (frame, dets) in &steps {
        let (a, b) = (t.update(*frame, dets), fresh.update(*frame, dets));
        let same_tracks = (0..4).all(|i| t.slot(i) == fresh.slot(i));
        if format!("{a:?}") != format!("{b:?}") || !same_tracks {
            return Wrong(format!(
                "frame {frame}: a reset tracker gave {a:?}, a new one {b:?}"
            ));
        }
    }
    Fine
}

// --------------------------------------------------------------- pipeline

fn pipeline_case(r: &mut ChaCha8Rng) -> Outcome {
    use crate::pipeline::{compare, config_of, run_stream, stage_params};
    use fixsight::pipeline::DEMO;
    let (w, h) = (r.random_range(1usize..48), r.random_range(1usize..36));
    let frames = r.random_range(1usize..4);
    let last_rows = if r.random_range(0..4) == 0 {
        r.random_range(1..=h)
    } else {
        h
    };
    let mut p = stage_params(&DEMO, frames, h, last_rows);
    const SMOOTH: [&str; 6] = [
        "none",
        "binomial3",
        "binomial5",
        "binomial7",
        "gauss7",
        "box",
    ];
    const MAG: [&str; 3] = ["l1", "l2_approx", "l2_round"];
    const THIN: [&str; 3] = ["off", "until_stable", "at_most"];
    p.operator = ["sobel", "scharr"][r.random_range(0..2)].into();
    p.magnitude = MAG[r.random_range(0..3)].into();
    p.thresholds = ["fixed", "auto"][r.random_range(0..2)].into();
    p.low_ratio_u0f16 = r.random();
    // Three cases in four inside the documented ranges, one anywhere.
    if r.random_range(0..4) == 0 {
        p.smoothing = SMOOTH[r.random_range(0..SMOOTH.len())].into();
        p.frac_bits = r.random_range(0..8);
        p.low = r.random_range(0..300);
        p.high = r.random_range(0..600);
        p.shift = r.random_range(0..6);
        p.high_permille = r.random_range(0..1100);
    } else {
        p.smoothing = SMOOTH[r.random_range(0..SMOOTH.len() - 1)].into();
        p.frac_bits = r.random_range(0..3);
        p.low = r.random_range(1..200);
        p.high = p.low + r.random_range(0..300);
        p.shift = r.random_range(0..4);
        p.high_permille = r.random_range(1..1000);
    }
    p.thinning = THIN[r.random_range(0..3)].into();
    p.thinning_cap = r.random_range(0..5);
    let cfg = match config_of(&p) {
        Ok(c) => c,
        Err(_) => return Rejected,
    };
    let stack: Vec<u8> = match r.random_range(0..3) {
        0 => bytes(r, w * h * frames),
        // Blocks of two levels: long edges.
        _ => {
            let (a, b) = (r.random::<u8>(), r.random::<u8>());
            let (cx, cy) = (r.random_range(0..w), r.random_range(0..h));
            (0..w * h * frames)
                .map(|i| {
                    let (x, y) = (i % w, (i / w) % h);
                    let v = if x >= cx && y >= cy { a } else { b };
                    v.saturating_add(r.random_range(0..4))
                })
                .collect()
        }
    };
    let out = match run_stream(&cfg, &stack, w, h, frames, last_rows) {
        Ok(o) => o,
        Err(_) => return Rejected,
    };
    if last_rows < h {
        return Fine;
    }
    let last = &stack[(frames - 1) * w * h..];
    match compare(&cfg, last, w, h, &out).first() {
        None => Fine,
        Some(p) => Wrong(format!("{w}x{h}, {cfg:?}: {p}")),
    }
}

// -------------------------------------------------------- golden manifest

fn manifest_case(r: &mut ChaCha8Rng, inputs: &Inputs) -> Outcome {
    let Some(full) = &inputs.manifest else {
        return Wrong("the repository's manifest does not load".into());
    };
    let n = r.random_range(1..=3usize).min(full.vectors.len());
    let mut m = full.clone();
    let mut picked: Vec<usize> = Vec::new();
    while picked.len() < n {
        let i = r.random_range(0..full.vectors.len());
        if !picked.contains(&i) {
            picked.push(i);
        }
    }
    m.vectors = picked.iter().map(|&i| full.vectors[i].clone()).collect();
    // Vector 0 stays untouched unless the whole text is mutated: it must
    // reproduce (the control).
    let mut json = serde_json::to_value(&m).expect("serialises");
    let untouched = json["vectors"][0]["id"].clone();
    for _ in 0..r.random_range(0..4) {
        let Some(vs) = json["vectors"].as_array_mut() else {
            break;
        };
        if vs.len() < 2 {
            break;
        }
        let i = r.random_range(1..vs.len());
        let v = &mut vs[i];
        const BIG: [u64; 7] = [0, 1, 1 << 31, 1 << 62, 1 << 63, u64::MAX, 1_000_000_000];
        let bigv = serde_json::json!(BIG[r.random_range(0..BIG.len())]);
        let big = || bigv.clone();
        match r.random_range(0..8) {
            0 => {
                if let Some(p) = v["params"].as_object_mut() {
                    let keys: Vec<String> = p.keys().cloned().collect();
                    if !keys.is_empty() {
                        p.insert(keys[r.random_range(0..keys.len())].clone(), big());
                    }
                }
            }
            1 => {
                let f = ["width", "height", "channels"][r.random_range(0..3)];
                if let Some(img) = v["inputs"].get_mut(0) {
                    img[f] = big();
                }
            }
            2 => {
                let name =
                    ["../manifest.json", "", "/dev/zero", "nosuch.bin", ".x"][r.random_range(0..5)];
                if let Some(img) = v["inputs"].get_mut(0) {
                    img["file"] = serde_json::json!(name);
                }
            }
            3 => {
                let other = &full.vectors[r.random_range(0..full.vectors.len())];
                v["kernel"] = serde_json::json!(other.kernel);
            }
            4 => {
                if let Some(img) = v["expected"].get_mut(0) {
                    img["elem"] = serde_json::json!("u16");
                }
            }
            5 => v["params"] = serde_json::json!({}),
            6 => {
                if let Some(o) = v.as_object_mut() {
                    o.remove("params");
                }
            }
            _ => v["inputs"] = serde_json::json!([]),
        }
    }
    let mut text = serde_json::to_string(&json).expect("serialises");
    let byte_level = r.random_range(0..6) == 0;
    if byte_level {
        let mut b = text.into_bytes();
        for _ in 0..r.random_range(1..4) {
            let i = r.random_range(0..b.len());
            b[i] = r.random_range(0x20..0x7f);
        }
        text = String::from_utf8(b).expect("ascii");
    }
    let path = inputs.golden_dir.join(golden::MANIFEST);
    let parsed = match golden::parse_manifest(&text, &path) {
        Ok(p) => p,
        Err(_) => return Rejected,
    };
    let s = golden::check_manifest(&inputs.golden_dir, &parsed, crate::families::RUNNERS);
    if !byte_level {
        let id = untouched.as_str().unwrap_or_default();
        if let Some((_, why)) = s.failures.iter().find(|(f, _)| f == id) {
            // The same vector may appear again, mutated, under its id.
            let dup = parsed.vectors.iter().filter(|v| v.id == id).count() > 1;
            if !dup {
                return Wrong(format!("untouched vector {id} failed: {why}"));
            }
        }
    }
    Fine
}

/// A user image for `run`: encoded here, then perhaps damaged.
fn image_case(r: &mut ChaCha8Rng) -> Outcome {
    use crate::cmd::run::{grey_from_bytes, Luma, MAX_SIDE};
    let (w, h) = (r.random_range(1..40u32), r.random_range(1..30u32));
    let colour: bool = r.random();
    let px = bytes(r, (w * h * if colour { 3 } else { 1 }) as usize);
    let mut file = Vec::new();
    let format = match r.random_range(0..2) {
        0 => image::ImageFormat::Png,
        _ => image::ImageFormat::Pnm,
    };
    let written = if colour {
        image::RgbImage::from_raw(w, h, px.clone()).map(image::DynamicImage::ImageRgb8)
    } else {
        image::GrayImage::from_raw(w, h, px.clone()).map(image::DynamicImage::ImageLuma8)
    };
    let Some(img) = written else {
        return Wrong("test image buffer has the wrong size".into());
    };
    if img
        .write_to(&mut std::io::Cursor::new(&mut file), format)
        .is_err()
    {
        return Wrong("encoding the test image failed".into());
    }
    let damage = r.random_range(0..4);
    match damage {
        0 => {}
        1 => {
            for _ in 0..r.random_range(1..8) {
                let i = r.random_range(0..file.len());
                file[i] ^= 1 << r.random_range(0..8);
            }
        }
        2 => file.truncate(r.random_range(0..file.len())),
        _ => {
            // A Netpbm header claiming any size, followed by a few bytes.
            let (hw, hh) = (r.random_range(0..=u32::MAX), r.random_range(0..=u32::MAX));
            file = format!("P5\n{hw} {hh}\n255\n").into_bytes();
            let n = r.random_range(0..64);
            file.extend(bytes(r, n));
        }
    }
    match grey_from_bytes(&file, Luma::Bt601) {
        Err(_) if damage == 0 => Wrong("an undamaged image was refused".into()),
        Err(_) => Rejected,
        Ok(g) => {
            if g.w as u32 > MAX_SIDE || g.h as u32 > MAX_SIDE || g.px.len() != g.w * g.h {
                return Wrong(format!(
                    "accepted a {}x{} image of {} pixels",
                    g.w,
                    g.h,
                    g.px.len()
                ));
            }
            if damage == 0 && !colour && (g.w as u32, g.h as u32, &g.px) != (w, h, &px) {
                return Wrong("an undamaged grey image decoded to other pixels".into());
            }
            Fine
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The campaign's smoke run inside `cargo test`: a few cases per family,
    /// nothing found.
    #[test]
    fn smoke() {
        let golden = Path::new(env!("CARGO_MANIFEST_DIR")).join("../golden");
        for t in run_all(16, 48, &golden) {
            assert_eq!(t.cases, 48);
            assert!(
                t.panics == 0 && t.wrong == 0 && t.slow == 0,
                "{}: {:?}",
                t.family,
                t.findings
            );
            assert!(t.rejected < t.cases, "{}: every case rejected", t.family);
        }
    }
}
