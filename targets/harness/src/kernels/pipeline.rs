//! `pipeline.*` kernel ids, as `run_vector` in `host-verify/src/pipeline.rs`
//! computes them.
//!
//! | id | params | inputs | outputs |
//! |---|---|---|---|
//! | `pipeline.edge_stream` | the configuration, `frames`, `height`, `last_rows` | `frames` u8 | `edges` u8, `grad` i16 x2, `thresholds` u16 4x1 |
//! | `pipeline.point_job` | `PointJobConfig::DEMO_QVGA` with the vote, peak, marking and reference fields of `JobParams` (`host-verify/src/pipeline/job.rs`), `frames`, `height`, `grid_log2`, `grid_frac_bits` | `frames` u8, `grid` i32 x2 (with a grid) | `record` i32 |
//! | `pipeline.image_job` | as `pipeline.point_job`, the grid required (an undistortion grid, output and source the frame size, clamped border; `host-verify/src/pipeline/image.rs`) | `frames` u8, `grid` i32 x2 | `record` i32 |
//!
//! The stream lives in a `static` (its buffers are sized by its type, about
//! 46 KiB here), configured once per call. Bench form (`src/bench.rs`): no
//! configuration keys in the params means `fixsight::pipeline::DEMO`, and
//! a single output receives only the thresholds; the points are read (their
//! gradients summed) so the window holds the whole stage per frame.

use super::{input, output, Arena, Buf, Fail, Img, Params};
use fixsight::filter::Border;
use fixsight::lines::{Peak, PeakParams, VoteParams};
use fixsight::marking::{MarkingConfig, MarkingLimits, TapeContrast};
use fixsight::pipeline::{
    map_words, EdgeConfig, EdgeStream, ImageJob, ImageJobConfig, JobReport, Magnitude, Operator,
    PointJob, PointJobConfig, Smoothing, Suppression, Thinning, ThresholdRule, DEMO,
    EDGES_PER_FRAME,
};
use fixsight::track::{track_words, Tracker};
use fixsight::warp::{ControlGrid, WarpGeometry};

/// The stream the harness runs: QVGA, histogram bins for every
/// configuration of the vectors, 4096 point gradients.
type HarnessStream = EdgeStream<320, { map_words(320, 240) }, 1024, 4096>;

static mut STREAM: HarnessStream = HarnessStream::new();

fn int<T: TryFrom<i64>>(p: &Params, key: &'static str) -> Result<T, Fail> {
    T::try_from(p.int(key)?).map_err(|_| Fail::Param(key))
}

/// The smoothing, operator and magnitude the params name (the names of
/// `host-verify/src/pipeline/mod.rs`).
fn kinds_of(p: &Params) -> Result<(Smoothing, Operator, Magnitude), Fail> {
    let smoothing = match p.str("smoothing")? {
        "none" => Smoothing::None,
        "binomial3" => Smoothing::Binomial3,
        "binomial5" => Smoothing::Binomial5,
        "binomial7" => Smoothing::Binomial7,
        "gauss7" => Smoothing::Gauss7,
        _ => return Err(Fail::Param("smoothing")),
    };
    let operator = match p.str("operator")? {
        "sobel" => Operator::Sobel,
        "scharr" => Operator::Scharr,
        _ => return Err(Fail::Param("operator")),
    };
    let magnitude = match p.str("magnitude")? {
        "l1" => Magnitude::L1,
        "l2_approx" => Magnitude::L2Approx,
        "l2_round" => Magnitude::L2Round,
        _ => return Err(Fail::Param("magnitude")),
    };
    Ok((smoothing, operator, magnitude))
}

/// The suppression the params name; `sectors` when absent (the vectors
/// written before the choice existed).
fn suppression_of(p: &Params) -> Result<Suppression, Fail> {
    if p.get("suppression").is_none() {
        return Ok(Suppression::Sectors);
    }
    match p.str("suppression")? {
        "sectors" => Ok(Suppression::Sectors),
        "interpolated" => Ok(Suppression::Interpolated),
        _ => Err(Fail::Param("suppression")),
    }
}

/// The configuration the params name (module docs of
/// `host-verify/src/pipeline.rs`), or the demo one without `smoothing`.
fn config_of(p: &Params) -> Result<EdgeConfig, Fail> {
    if p.get("smoothing").is_none() {
        return Ok(DEMO);
    }
    let (smoothing, operator, magnitude) = kinds_of(p)?;
    let (low, high) = (int(p, "low")?, int(p, "high")?);
    let thresholds = match p.str("thresholds")? {
        "fixed" => ThresholdRule::Fixed { low, high },
        "auto" => ThresholdRule::Auto {
            shift: int(p, "shift")?,
            high_permille: int(p, "high_permille")?,
            low_ratio_u0f16: int(p, "low_ratio_u0f16")?,
            first_low: low,
            first_high: high,
        },
        _ => return Err(Fail::Param("thresholds")),
    };
    let thinning = match p.str("thinning")? {
        "off" => Thinning::Off,
        "until_stable" => Thinning::UntilStable,
        "at_most" => Thinning::AtMost(int(p, "thinning_cap")?),
        _ => return Err(Fail::Param("thinning")),
    };
    Ok(EdgeConfig {
        smoothing,
        operator,
        frac_bits: int(p, "frac_bits")?,
        magnitude,
        thresholds,
        thinning,
        suppression: suppression_of(p)?,
    })
}

/// `pipeline.edge_stream`: every frame of the input through one stream.
pub fn edge_stream(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    // SAFETY: the firmware is single-threaded and no other code touches
    // STREAM; this is its only reference while the call runs.
    let s: &mut HarnessStream = unsafe { &mut *core::ptr::addr_of_mut!(STREAM) };
    let cfg = config_of(p)?;
    let src = input(ins, 0)?;
    let frames: usize = int(p, "frames")?;
    let height: usize = int(p, "height")?;
    let last_rows: usize = int(p, "last_rows")?;
    let w = src.width;
    let data = match &src.buf {
        Buf::U8(d) => &**d,
        _ => return Err(Fail::Harness("frames must be u8")),
    };
    if frames == 0 || last_rows == 0 || last_rows > height || src.height != frames * height {
        return Err(Fail::Harness(
            "frames, height and last_rows do not fit the input",
        ));
    }
    s.configure(&cfg, w, height)?;
    let mut report = None;
    for f in 0..frames {
        let rows = if f + 1 == frames { last_rows } else { height };
        for y in 0..rows {
            let o = (f * height + y) * w;
            s.push_row(&data[o..o + w])?;
        }
        report = Some(if rows == height {
            s.finish()?
        } else {
            s.finish_short()?
        });
    }
    let r = report.ok_or(Fail::Harness("no frame"))?;
    let t = [
        r.thresholds.0,
        r.thresholds.1,
        r.next_thresholds.0,
        r.next_thresholds.1,
    ];
    if outs.len() == 1 {
        // Bench form: read the points as a line stage would.
        let mut sum = 0i32;
        for pt in s.points()? {
            if let Some((gx, gy)) = pt.gradient {
                sum = sum.wrapping_add(gx as i32 ^ gy as i32);
            }
        }
        core::hint::black_box(sum);
        return match &mut output(outs, 0)?.buf {
            Buf::U16(o) if o.len() >= 4 => {
                o[..4].copy_from_slice(&t);
                Ok(())
            }
            _ => Err(Fail::Harness("bench output must be u16 with 4 elements")),
        };
    }
    match &mut output(outs, 0)?.buf {
        Buf::U8(o) if o.len() == w * last_rows => {
            for (y, row) in o.chunks_exact_mut(w).enumerate() {
                s.edge_row(y, row)?;
            }
        }
        _ => return Err(Fail::Harness("edges output must be u8, width x last_rows")),
    }
    match &mut output(outs, 1)?.buf {
        Buf::I16(o) if o.len() == 2 * w * last_rows => {
            o.fill(0);
            for pt in s.points()? {
                let i = 2 * (pt.y as usize * w + pt.x as usize);
                let (gx, gy) = pt
                    .gradient
                    .ok_or(Fail::Harness("point gradient not stored"))?;
                o[i] = gx;
                o[i + 1] = gy;
            }
        }
        _ => {
            return Err(Fail::Harness(
                "grad output must be i16 x2, width x last_rows",
            ))
        }
    }
    match &mut output(outs, 2)?.buf {
        Buf::U16(o) if o.len() == 4 => {
            o.copy_from_slice(&t);
            Ok(())
        }
        _ => Err(Fail::Harness(
            "thresholds output must be u16 with 4 elements",
        )),
    }
}

/// The job the harness runs (as `VectorJob` of the host): frames up to
/// QVGA, 1024 histogram bins, 4096 gate bytes, 32 x 255 vote cells, 8 peak
/// and 4 track slots.
type HarnessJob = PointJob<320, { map_words(320, 240) }, 1024, 4096, 32, 255, 8, 4>;

static mut JOB: HarnessJob = HarnessJob::new();

/// Peak slots of [`HarnessJob`].
const PEAKS: usize = 8;
/// Track slots of [`HarnessJob`].
const TRACKS: usize = 4;
/// Words per frame of the `record` output.
pub const WORDS: usize =
    9 + 5 * PEAKS + fixsight::marking::RECORD_WORDS + 6 + TRACKS * fixsight::track::TRACK_WORDS;

/// The configuration a `pipeline.point_job` vector names.
pub(crate) fn job_config(p: &Params, width: usize, height: usize) -> Result<PointJobConfig, Fail> {
    let mut c = PointJobConfig::DEMO_QVGA;
    // A bench stage of the accuracy/cost map names another edge stage:
    // `EdgeConfig::demo_with` of its smoothing, operator and magnitude,
    // with its suppression.
    if p.get("smoothing").is_some() {
        let (s, o, m) = kinds_of(p)?;
        c.edges = EdgeConfig {
            suppression: suppression_of(p)?,
            ..EdgeConfig::demo_with(s, o, m)
        };
    }
    let gate: u16 = int(p, "gate")?;
    c.vote = VoteParams {
        width,
        height,
        theta_start: int(p, "theta_start")?,
        theta_step_log2: int(p, "theta_step_log2")?,
        theta_bins: int(p, "theta_bins")?,
        rho_step_log2: int(p, "rho_step_log2")?,
        rho_bins: int(p, "rho_bins")?,
        gate: (gate != 0).then_some(gate),
        ..c.vote
    };
    let r: usize = int(p, "peak_radius")?;
    c.peaks = PeakParams {
        threshold: int(p, "peak_threshold")?,
        radius_theta: r,
        radius_rho: r,
    };
    let m = p.ints("marking")?;
    let q = |i: usize| -> Result<i32, Fail> {
        m.get(i)
            .and_then(|&v| i32::try_from(v).ok())
            .ok_or(Fail::Param("marking"))
    };
    c.marking = MarkingConfig::new(MarkingLimits {
        near_row_q4: q(0)?,
        far_row_q4: q(1)?,
        horizon_row_q4: q(2)?,
        max_tilt: u16::try_from(q(3)?).map_err(|_| Fail::Param("marking"))?,
        near_x_min_q4: q(4)?,
        near_x_max_q4: q(5)?,
        near_sep_min_q4: q(6)?,
        near_sep_nominal_q4: q(7)?,
        near_sep_max_q4: q(8)?,
        converge_tol_q4: q(9)?,
        contrast: TapeContrast::Brighter,
    })?;
    let rf = p.ints("reference")?;
    let (Some(&rx), Some(&ry)) = (rf.first(), rf.get(1)) else {
        return Err(Fail::Param("reference"));
    };
    c.track.reference_q4 = (
        i32::try_from(rx).map_err(|_| Fail::Param("reference"))?,
        i32::try_from(ry).map_err(|_| Fail::Param("reference"))?,
    );
    c.track.rho.meas_var = int(p, "rho_meas_var")?;
    Ok(c)
}

/// `pipeline.point_job`: every frame of the input through the job, one
/// record per frame (layout in `host-verify/src/pipeline/job.rs`).
pub fn point_job(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    // SAFETY: the firmware is single-threaded and no other code touches
    // JOB; this is its only reference while the call runs.
    let job: &mut HarnessJob = unsafe { &mut *core::ptr::addr_of_mut!(JOB) };
    let (data, w, frames, height) = job_frames(p, ins)?;
    let cfg = job_config(p, w, height)?;
    let grid_log2: u32 = int(p, "grid_log2")?;
    let grid = if grid_log2 == 0 {
        None
    } else {
        let g = input(ins, 1)?;
        let pts = match &g.buf {
            Buf::I32(d) => &d[..],
            _ => return Err(Fail::Harness("grid must be i32")),
        };
        let geom = WarpGeometry::new(w, height, w, height, int(p, "grid_frac_bits")?)?;
        Some(ControlGrid::new(pts, geom, grid_log2)?)
    };
    job.configure(&cfg, w, height)?;
    let out = match &mut output(outs, 0)?.buf {
        Buf::I32(o) if o.len() == WORDS * frames => o,
        _ => return Err(Fail::Harness("record output must be i32, words x frames")),
    };
    for (f, rec) in out.chunks_exact_mut(WORDS).enumerate() {
        for y in 0..height {
            let o = (f * height + y) * w;
            job.push_row(&data[o..o + w])?;
        }
        let r = job.finish(grid.as_ref())?;
        put_record(&r, job.peaks(), job.tracker(), rec)?;
    }
    Ok(())
}

/// The stacked frames of a job vector: the bytes, width, frames, height.
pub(crate) fn job_frames<'a>(
    p: &Params,
    ins: &'a [Img<'_>],
) -> Result<(&'a [u8], usize, usize, usize), Fail> {
    let src = input(ins, 0)?;
    let frames: usize = int(p, "frames")?;
    let height: usize = int(p, "height")?;
    let data = match &src.buf {
        Buf::U8(d) => &**d,
        _ => return Err(Fail::Harness("frames must be u8")),
    };
    if frames == 0 || src.height != frames * height {
        return Err(Fail::Harness("frames and height do not fit the input"));
    }
    Ok((data, src.width, frames, height))
}

/// One frame's record (layout in `host-verify/src/pipeline/job.rs`) from
/// a job's report, its peaks and its tracker ([`PEAKS`] peak and
/// [`TRACKS`] track slots; zeros past the ones there are).
pub fn put_record<const N: usize>(
    r: &JobReport,
    peaks: &[Peak],
    tracker: Option<&Tracker<N, EDGES_PER_FRAME>>,
    rec: &mut [i32],
) -> Result<(), Fail> {
    let mut v = rec.iter_mut();
    let mut put = |x: i32| {
        if let Some(d) = v.next() {
            *d = x;
        }
    };
    for x in [
        r.frame as i32,
        r.edges.edge_points as i32,
        r.edges.candidates as i32,
        r.edges.thresholds.0 as i32,
        r.edges.thresholds.1 as i32,
        r.voted as i32,
        r.outside as i32,
        r.ungated as i32,
        r.peaks as i32,
    ] {
        put(x);
    }
    for i in 0..PEAKS {
        let pk = peaks.get(i);
        for x in pk.map_or([0; 5], |p| {
            [
                p.theta_bin as i32,
                p.rho_bin as i32,
                p.votes as i32,
                p.line.rho,
                p.line.theta as i32,
            ]
        }) {
            put(x);
        }
    }
    for x in r.marking.record() {
        put(x);
    }
    let wn = r.track.warning;
    for x in [
        r.track.associated as i32,
        r.track.born as i32,
        r.track.dropped as i32,
        wn.is_some() as i32,
        wn.map_or(0, |w| w.track_id as i32),
        wn.map_or(0, |w| w.frames as i32),
    ] {
        put(x);
    }
    let t = tracker.ok_or(Fail::Harness("no tracker"))?;
    for i in 0..TRACKS {
        for x in track_words(t.slot(i)) {
            put(x);
        }
    }
    Ok(())
}

/// The image-mode job of the harness: [`HarnessJob`] behind the warp,
/// its grid and ring in statics (the job keeps references to both).
type HarnessImageJob = ImageJob<'static, 320, { map_words(320, 240) }, 1024, 4096, 32, 255, 8, 4>;

static mut IMAGE_JOB: HarnessImageJob = HarnessImageJob::new();

/// Ring bytes: 96 rows of 320 (a band of up to 96 source rows).
pub const RING_BYTES: usize = 320 * 96;
static mut RING: [u8; RING_BYTES] = [0; RING_BYTES];

/// Grid words: a grid with points every 8 px over 320 x 240 (41 x 31).
pub const GRID_WORDS: usize = 2 * 41 * 31;
static mut GRID: [i32; GRID_WORDS] = [0; GRID_WORDS];

/// `pipeline.image_job`: every frame of the input through the job, one
/// record per frame (as `pipeline.point_job`).
pub fn image_job(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    // SAFETY: the firmware is single-threaded and no other code touches
    // IMAGE_JOB, RING or GRID. The job is first cleared in place into a
    // fresh one (`ImageJob::clear`, no second job on the stack), which
    // drops the references to RING and GRID it kept from the last call, so
    // the references made below are the only ones.
    let job: &mut HarnessImageJob = unsafe { &mut *core::ptr::addr_of_mut!(IMAGE_JOB) };
    job.clear();
    // SAFETY: see above; the job holds no reference to RING now.
    let ring: &'static mut [u8; RING_BYTES] = unsafe { &mut *core::ptr::addr_of_mut!(RING) };
    // SAFETY: see above; the job holds no reference to GRID now.
    let grid_store: &'static mut [i32; GRID_WORDS] = unsafe { &mut *core::ptr::addr_of_mut!(GRID) };
    let (data, w, frames, height) = job_frames(p, ins)?;
    let cfg = ImageJobConfig {
        job: job_config(p, w, height)?,
        border: Border::Clamp,
    };
    let pts = match &input(ins, 1)?.buf {
        Buf::I32(d) => &d[..],
        _ => return Err(Fail::Harness("grid must be i32")),
    };
    let kept = grid_store
        .get_mut(..pts.len())
        .ok_or(Fail::Harness("grid larger than the harness's grid store"))?;
    kept.copy_from_slice(pts);
    let kept: &'static [i32] = kept;
    let geom = WarpGeometry::new(w, height, w, height, int(p, "grid_frac_bits")?)?;
    let grid = ControlGrid::new(kept, geom, int(p, "grid_log2")?)?;
    job.configure(&cfg, grid, &mut ring[..])?;
    let out = match &mut output(outs, 0)?.buf {
        Buf::I32(o) if o.len() == WORDS * frames => o,
        _ => return Err(Fail::Harness("record output must be i32, words x frames")),
    };
    for (f, rec) in out.chunks_exact_mut(WORDS).enumerate() {
        for y in 0..height {
            let o = (f * height + y) * w;
            job.push_row(&data[o..o + w])?;
        }
        let r = job.finish()?;
        put_record(&r, job.peaks(), job.tracker(), rec)?;
    }
    Ok(())
}
