//! The whole job in point mode (`pipeline.point_job`,
//! [`fixsight::pipeline::PointJob`]) over the demo sequence: the kernel
//! against the kernels composed on the host (bit-exact), against an `f64`
//! reference of the same job, and both against the sequence's truth.
//!
//! > **Not a safety function.** The drift warning measured here is an aid;
//! > a vehicle that can hurt people needs safety-rated sensing and control
//! > (ISO 3691-4, IEC 61508, ISO 13849) and local rules.
//!
//! # The three runs, per frame of "aisle-drift" (96 QVGA frames)
//!
//! * **fixed**: [`DemoPointJobQvga`] with [`PointJobConfig::DEMO_QVGA`],
//!   rows pushed one by one, the demo lens's correction grid
//!   ([`crate::lines::demo_grid`]: step 8, 5 fractional bits).
//! * **composed**: the edge stream keeping the gradients of the first
//!   `DEMO_QVGA_CAP` candidates (the points past them vote in neither), then
//!   `Accumulator::vote_row_corrected` on every row of its edge map with
//!   the gradient rows, `peaks`, `centre_line`, `marking::select`,
//!   `Tracker::update`, one after another. The fixed run must equal it bit
//!   for bit in every frame (edge report, peaks, lines, marking, tracker
//!   report and every track's words); a difference fails the row.
//! * **f64**: the same job in `f64`: the full-`f64` Canny of
//!   [`crate::chain::reference`] with the thresholds the fixed stage used
//!   in that frame (so the threshold rule is not what is compared), each
//!   applied to the `f64` magnitude as `t - 1/2` (the fixed stage
//!   compares its magnitude rounded to the nearest integer with `t`), the
//!   map thinned by the stage's thinning rule run to the end
//!   ([`crate::chain::reference::reference_of_chain`]); each
//!   edge pixel corrected by the lens model itself
//!   ([`crate::lines::corrected_of`]), gated by the `f64` gradient angle
//!   `atan2(gy, gx)` of the `f64` Sobel; the `f64` Hough of
//!   [`crate::lines::hough_f64`] (same bins, continuous gate); peaks by the
//!   kernel's rule ([`crate::lines::peaks_of`]) refined by the kernel's
//!   formulas in `f64` without rounding; the centre shift exact; the
//!   lines rounded to Q4 and binary angle for the `f64` marking
//!   selection ([`crate::marking::reference::select_f64`]) and the `f64`
//!   tracker ([`crate::track::reference::RefTracker`]), which take the
//!   integer line type.
//!
//! # Metrics
//!
//! * `line_rho_err_px_*`, `line_theta_err_deg_*`: the selected tape edges
//!   against the truth edges (centre origin), `fixed_` and `f64_` over the
//!   frames where each found the tape, `fixed_vs_f64_` over the frames
//!   where both did (max and mean).
//! * `tracking_err_px_*`: per truth edge, the nearest confirmed track's
//!   `rho` (its state after the frame), over the frames with a confirmed
//!   track on both edges: `fixed_` and `f64_`, max and mean.
//! * `lost_frames_fixed`, `lost_frames_f64`: frames without a marking;
//!   `occluded_frames`: frames the truth calls occluded.
//! * `first_warning_fixed`, `first_warning_f64`: first frame with a raised
//!   drift warning (-1: none); `warning_frame_delta`: their difference in
//!   frames, the goal is 0; `warning_frames_differ`: frames where one run
//!   warns and the other does not; `truth_crossing_frame`.
//! * `predicted_crossing_diff_frames_max` / `_mean`: the warning's input,
//!   the fewest frames to a predicted crossing over the live tracks
//!   ([`JobFrame::predicted`]), compared between the runs over the frames
//!   where both predict one; `prediction_frames_differ`: frames where only
//!   one run predicts a crossing within the horizon. A warning is raised
//!   after `warn_raise_frames` predictions in a row, so when the prediction
//!   hovers at the horizon for many frames, a small difference in it moves
//!   the first warning by many frames: these figures say whether a
//!   `warning_frame_delta` comes from the lines or from that threshold.
//! * `ram_bytes_qvga`, `ram_bytes_vga`: [`DemoPointJobQvga::ram_bytes`],
//!   [`DemoPointJobVga::ram_bytes`] (`size_of` of the types, all the
//!   working memory the caller provides; the grid stays in flash);
//!   `grid_bytes`: the correction grid's table.
//! * `ungated_points_max`: edge points past the gate-byte capacity in the
//!   worst frame; `candidates_max`.
//! * `still_candidates.<scene>`, `still_ungated.<scene>`,
//!   `still_ungated_first.<scene>`: the job without a grid on two frames
//!   of the same 320 x 240 scene, the demo scenes and the natural
//!   photographs ([`textured_frames`]): the second frame's candidates and
//!   ungated points (the row fails if it has any: its thresholds were
//!   raised to fit the gate bytes on that very image), and the first
//!   frame's ungated points (on the rule's first pair, nothing raised).

use crate::chain::reference::{gradients_f64, reference_of_chain};
use crate::contract::{Contract, KernelFamily, KernelReport};
use crate::golden::{Blob, GoldenCase};
use crate::lens::LensInUse;
use crate::lines::{
    build_correction_grid, corrected_of, hough_f64, peaks_of, CorrectionGrid, GRID_FRAC_BITS,
    GRID_LOG2,
};
use crate::marking::reference::select_f64;
use crate::metrics::ErrorStats;
use crate::opcount::{measure, OpsPerPx};
use crate::scene::Scene;
use crate::sequence::{FrameTruth, Sequence, SequenceSpec, TruthLine, DEMO_SEQUENCE};
use crate::track::reference::RefTracker;
use fixsight::lines::{Accumulator, EdgeRow, Peak, VoteParams};
use fixsight::marking::{self, Candidate, Polarity};
use fixsight::pipeline::{
    centre_line, map_words, tape_detections, DemoPointJobQvga, DemoPointJobVga, EdgeStream,
    FrameReport, JobReport, PointJobConfig, EDGES_PER_FRAME,
};
use fixsight::track::{track_words, Detection, Tracker, TRACK_WORDS};
use fixsight::warp::ControlGrid;
use std::f64::consts::PI;

/// The kernel id: the job type [`fixsight::pipeline::PointJob`].
pub const JOB_KERNEL: &str = "pipeline.point_job";

/// Track slots of the demo job ([`DemoPointJobQvga`]).
pub const DEMO_TRACKS: usize = 4;
/// Peak slots of the demo job.
pub const DEMO_PEAKS: usize = 8;

/// The edge stream of the composition: the demo QVGA stage keeping the
/// gradients of as many candidates as the job keeps gate bytes (a point
/// past them casts no vote in either).
type CapStage = EdgeStream<320, { map_words(320, 240) }, 925, DEMO_CAP>;

/// One frame's outcome, in the units every run can give: lines about the
/// image centre in pixels and radians.
#[derive(Debug, Clone, Default)]
pub struct JobFrame {
    /// The tape's left and right edge `(rho px, theta rad)`, if found.
    pub tape: Option<[(f64, f64); 2]>,
    /// Confirmed tracks `(rho px, theta rad)`.
    pub tracks: Vec<(f64, f64)>,
    /// The raised drift warning (frames to the crossing).
    pub warning: Option<u16>,
    /// The prediction the warning is debounced from: the fewest frames to
    /// the crossing over the live tracks (`frames_to_cross`), `None` when
    /// no track predicts a crossing within the horizon.
    pub predicted: Option<u16>,
}

fn e(err: fixsight::Error) -> String {
    err.to_string()
}

fn to_px(c: &Candidate) -> (f64, f64) {
    (c.rho_q4 as f64 / 16.0, c.theta as f64 / 65536.0 * PI)
}

/// One frame of the fixed run at the bit level: the report, the peaks,
/// the lines and every track slot's words.
pub type FrameRecord = (
    JobReport,
    Vec<Peak>,
    Vec<Candidate>,
    Vec<[i32; TRACK_WORDS]>,
);

/// The fixed run's frame and its bit-level record.
pub struct FixedRun {
    /// Per frame.
    pub frames: Vec<JobFrame>,
    /// Per frame: the report, peaks, lines, track words (for the
    /// composition check).
    pub records: Vec<FrameRecord>,
    /// Operations per pixel per frame (mean over the sequence).
    pub ops: OpsPerPx,
}

/// One finished frame of a demo job (either mode) as its outcome and its
/// bit-level record.
pub fn outcome(
    rep: JobReport,
    peaks: &[Peak],
    lines: &[Candidate],
    tr: &Tracker<DEMO_TRACKS, EDGES_PER_FRAME>,
) -> (JobFrame, FrameRecord) {
    let tape = rep
        .marking
        .found()
        .map(|t| [to_px(&lines[t.left]), to_px(&lines[t.right])]);
    let tracks = tr
        .tracks()
        .filter(|t| t.confirmed)
        .map(|t| {
            (
                t.rho.pos as f64 / 256.0 / 16.0,
                t.theta.pos as f64 / 256.0 / 65536.0 * PI,
            )
        })
        .collect();
    let words = (0..DEMO_TRACKS).map(|i| track_words(tr.slot(i))).collect();
    let frame = JobFrame {
        tape,
        tracks,
        warning: rep.track.warning.map(|w| w.frames),
        predicted: tr.tracks().filter_map(|t| t.frames_to_cross).min(),
    };
    (frame, (rep, peaks.to_vec(), lines.to_vec(), words))
}

/// Runs the kernel job over `frames` (320 x 240 frames), the edge points
/// corrected through `grid` when there is one.
pub fn run_fixed(frames: &[Vec<u8>], grid: Option<&ControlGrid<'_>>) -> Result<FixedRun, String> {
    run_fixed_with(&PointJobConfig::DEMO_QVGA, frames, grid)
}

/// [`run_fixed`] with another configuration of the demo job types (for
/// example an edge stage of `EdgeConfig::demo_with`).
pub fn run_fixed_with(
    cfg: &PointJobConfig,
    frames: &[Vec<u8>],
    grid: Option<&ControlGrid<'_>>,
) -> Result<FixedRun, String> {
    let cfg = *cfg;
    let mut job: Box<DemoPointJobQvga> = Box::default();
    let (w, h) = (cfg.vote.width, cfg.vote.height);
    job.configure(&cfg, w, h).map_err(e)?;
    run_frames(frames, w * h, &mut |img| {
        for r in img.chunks_exact(w) {
            job.push_row(r).map_err(e)?;
        }
        let rep = job.finish(grid).map_err(e)?;
        let tr = job.tracker().ok_or("no tracker")?;
        Ok(outcome(rep, job.peaks(), job.lines(), tr))
    })
}

/// One frame through a job: its outcome and record.
pub type FrameStep<'a> = dyn FnMut(&[u8]) -> Result<(JobFrame, FrameRecord), String> + 'a;

/// Runs `frame` on every frame (of `px` pixels) inside one operation
/// count and collects the outcomes and records.
pub fn run_frames(
    frames: &[Vec<u8>],
    px: usize,
    frame: &mut FrameStep<'_>,
) -> Result<FixedRun, String> {
    let (mut out, mut records) = (Vec::new(), Vec::new());
    let (res, ops) = measure(px * frames.len(), || -> Result<(), String> {
        for img in frames {
            let (f, r) = frame(img)?;
            out.push(f);
            records.push(r);
        }
        Ok(())
    });
    res?;
    Ok(FixedRun {
        frames: out,
        records,
        ops,
    })
}

/// The kernels composed one after another (module docs); returns the
/// differences from the fixed run's records.
pub fn composed_differences(
    frames: &[Vec<u8>],
    grid: &ControlGrid<'_>,
    fixed: &FixedRun,
) -> Result<Vec<String>, String> {
    let cfg = PointJobConfig::DEMO_QVGA;
    let (w, h) = (cfg.vote.width, cfg.vote.height);
    let mut stage: Box<CapStage> = Box::default();
    stage.configure(&cfg.edges, w, h).map_err(e)?;
    // The job's candidate budget: its gate bytes (`PointJob::configure`).
    stage.set_candidate_budget(cfg.candidate_budget(DEMO_CAP));
    let mut tracker = Tracker::<DEMO_TRACKS, EDGES_PER_FRAME>::new(cfg.track).map_err(e)?;
    let p = cfg.vote;
    let mut cells = vec![0u16; p.cells()];
    let mut trig = vec![[0i16; 2]; p.theta_bins];
    let mut diffs = Vec::new();
    for (k, (img, rec)) in frames.iter().zip(&fixed.records).enumerate() {
        for r in img.chunks_exact(w) {
            stage.push_row(r).map_err(e)?;
        }
        let edges_rep: FrameReport = stage.finish().map_err(e)?;
        let mut edges = vec![0u8; w * h];
        let (mut gx, mut gy) = (vec![0i16; w * h], vec![0i16; w * h]);
        let mut ungated = false;
        for pt in stage.points().map_err(e)? {
            let i = pt.y as usize * w + pt.x as usize;
            let Some((a, b)) = pt.gradient else {
                ungated = true;
                continue;
            };
            edges[i] = 255;
            gx[i] = a;
            gy[i] = b;
        }
        let mut acc = Accumulator::new(p, &mut cells, &mut trig).map_err(e)?;
        for y in 0..h {
            let rr = y * w..(y + 1) * w;
            let row = EdgeRow::with_gradient(&edges[rr.clone()], &gx[rr.clone()], &gy[rr]);
            acc.vote_row_corrected(y, &row, grid).map_err(e)?;
        }
        let mut peaks = vec![Peak::default(); DEMO_PEAKS];
        let n = acc.peaks(&cfg.peaks, &mut peaks).map_err(e)?;
        peaks.truncate(n);
        let lines: Vec<Candidate> = peaks.iter().map(|pk| centre_line(&pk.line, w, h)).collect();
        let m = marking::select(&lines, &cfg.marking);
        let (dets, nd) = tape_detections(&m, &lines);
        // An incomplete vote is not tracked (`JobReport::ungated`).
        let nd = if ungated { 0 } else { nd };
        let tr = tracker.update(k as u32, &dets[..nd]).map_err(e)?;
        let words: Vec<_> = (0..DEMO_TRACKS)
            .map(|i| track_words(tracker.slot(i)))
            .collect();
        let (rep, fpeaks, flines, fwords) = rec;
        let same = rep.edges == edges_rep
            && rep.voted == acc.points()
            && rep.outside == acc.skipped()
            && *fpeaks == peaks
            && *flines == lines
            && rep.marking == m
            && rep.track == tr
            && *fwords == words;
        if !same {
            diffs.push(format!(
                "frame {k}: the job differs from the kernels composed"
            ));
        }
    }
    Ok(diffs)
}

/// Gate bytes of the demo job.
pub const DEMO_CAP: usize = fixsight::pipeline::DEMO_QVGA_CAP;

/// The refined line of `f64` peak `(t, b)` by the kernel's refinement
/// formulas (module docs of `fixsight::lines`) without rounding: binary
/// angle 360 and `rho` in px, in the vote frame.
fn refine_f64(p: &VoteParams, cells: &[f64], t: usize, b: usize) -> (f64, f64) {
    let (tn, r) = (p.theta_bins as i64, p.rho_bins as i64);
    let wraps = (p.theta_bins << p.theta_step_log2) == 65536;
    let at = |t: i64, b: i64| -> f64 {
        let (t, b) = if (0..tn).contains(&t) || !wraps {
            (t, b)
        } else {
            (t.rem_euclid(tn), r - 1 - b)
        };
        if (0..tn).contains(&t) && (0..r).contains(&b) {
            cells[(t * r + b) as usize]
        } else {
            0.0
        }
    };
    let step = (1u32 << p.rho_step_log2) as f64 / 16.0;
    let (ti, bi) = (t as i64, b as i64);
    let rho_b = (b as f64 - (r as f64 - 1.0) / 2.0) * step;
    let mass = |u: i64| at(u, bi - 1) + at(u, bi) + at(u, bi + 1);
    let centroid = |u: i64| {
        let m = mass(u);
        if m == 0.0 {
            rho_b
        } else {
            rho_b + (at(u, bi + 1) - at(u, bi - 1)) * step / m
        }
    };
    let height = |u: i64| at(u, bi - 1).max(at(u, bi)).max(at(u, bi + 1));
    let (ml, m0, mr) = (height(ti - 1), height(ti), height(ti + 1));
    let den = 2.0 * (2.0 * m0 - ml - mr);
    let s = (1u32 << p.theta_step_log2) as f64;
    let off = if den <= 0.0 {
        0.0
    } else {
        ((mr - ml) * s / den).clamp(-s / 2.0, s / 2.0)
    };
    let c0 = centroid(ti);
    let u = if off > 0.0 { ti + 1 } else { ti - 1 };
    let rho = if off != 0.0 && u >= 0 && u < tn && mass(u) > 0.0 {
        c0 + (centroid(u) - c0) * off.abs() / s
    } else {
        c0
    };
    let a = p.theta_start as f64 + t as f64 * s + off;
    (a.rem_euclid(131072.0), rho)
}

/// What the `f64` run takes from the fixed run's edge stage, per frame:
/// the stage's control decisions, not its arithmetic.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct StageControl {
    /// The thresholds the fixed stage used (the `f64` run applies each
    /// as `t - 1/2`, [`crate::chain::reference::chain_threshold_f64`]).
    pub thresholds: (u16, u16),
    /// The frame had more candidates than gate bytes (`ungated > 0`): its
    /// vote is incomplete, so the job hands the tracker no tape
    /// ([`fixsight::pipeline::PointJob::finish`]) and neither does the
    /// `f64` run.
    pub overflowed: bool,
}

/// The fixed run's [`StageControl`] of every frame.
pub fn stage_controls(fixed: &FixedRun) -> Vec<StageControl> {
    fixed
        .records
        .iter()
        .map(|r| StageControl {
            thresholds: r.0.edges.thresholds,
            overflowed: r.0.ungated > 0,
        })
        .collect()
}

/// The edge map of the `f64` job's frame: the full-`f64` Canny with the
/// fixed stage's thresholds of that frame, each as `t - 1/2` on the `f64`
/// magnitude, thinned by the stage's rule.
fn f64_job_edges(img: &[u8], w: usize, h: usize, ctl: &StageControl) -> Vec<u8> {
    let (low, high) = ctl.thresholds;
    reference_of_chain(img, w, h, low, high)
}

/// The `f64` job over `frames` with the fixed stage's control decisions
/// per frame (module docs).
pub fn run_f64(seq: &Sequence, frames: &[Vec<u8>], controls: &[StageControl]) -> Vec<JobFrame> {
    let correct = |x: f64, y: f64| corrected_of(seq.camera(), seq.view(), x, y);
    run_f64_with(frames, controls, &correct)
}

/// The `f64` job after the edge stage: each edge pixel `(x, y)` of a frame
/// votes at `correct(x, y)` (none: no vote), then the `f64` lines, marking
/// and tracker of the module docs.
pub fn run_f64_with(
    frames: &[Vec<u8>],
    controls: &[StageControl],
    correct: &dyn Fn(f64, f64) -> Option<(f64, f64)>,
) -> Vec<JobFrame> {
    let cfg = PointJobConfig::DEMO_QVGA;
    let p = cfg.vote;
    let (w, h) = (p.width, p.height);
    let (ox, oy) = ((w >> 1) as f64, (h >> 1) as f64);
    let mut tracker = RefTracker::new(cfg.track, DEMO_TRACKS);
    let mut out = Vec::new();
    for (k, (img, ctl)) in frames.iter().zip(controls).enumerate() {
        let edges = f64_job_edges(img, w, h, ctl);
        let (gx, gy) = gradients_f64(img, w, h);
        let mut pts = Vec::new();
        for y in 0..h {
            for x in 0..w {
                let i = y * w + x;
                if edges[i] == 0 {
                    continue;
                }
                let Some((cx, cy)) = correct(x as f64, y as f64) else {
                    continue;
                };
                if !(0.0..=(w - 1) as f64).contains(&cx) || !(0.0..=(h - 1) as f64).contains(&cy) {
                    continue;
                }
                let phi = (gy[i].atan2(gx[i]) / PI * 65536.0).rem_euclid(65536.0);
                pts.push((cx - ox, cy - oy, phi));
            }
        }
        let cells = hough_f64(&p, &pts);
        let peaks = peaks_of(&p, &cells, &cfg.peaks, DEMO_PEAKS);
        let lines: Vec<(f64, f64, f64)> = peaks
            .iter()
            .map(|&(t, b, v)| {
                let (a, rho) = refine_f64(&p, &cells, t, b);
                let (a, rho) = if a >= 65536.0 {
                    (a - 65536.0, -rho)
                } else {
                    (a, rho)
                };
                let th = a / 65536.0 * PI;
                // From the vote frame's origin to the image centre.
                let (dx, dy) = (ox - (w as f64 - 1.0) / 2.0, oy - (h as f64 - 1.0) / 2.0);
                (rho + dx * th.cos() + dy * th.sin(), th, v)
            })
            .collect();
        let cands: Vec<Candidate> = lines
            .iter()
            .map(|&(rho, th, v)| {
                let t = (th / PI * 65536.0).round() as u32;
                let (t, rho) = if t >= 65536 {
                    (t - 65536, -rho)
                } else {
                    (t, rho)
                };
                Candidate {
                    rho_q4: (rho * 16.0).round() as i32,
                    theta: t as u16,
                    votes: v.round() as u32,
                    polarity: Polarity::Unknown,
                }
            })
            .collect();
        let m = select_f64(&cands, cfg.marking.limits());
        let (tape, dets) = match m.pick {
            Some((l, r)) => (
                Some([(lines[l].0, lines[l].1), (lines[r].0, lines[r].1)]),
                [l, r]
                    .iter()
                    .map(|&i| Detection {
                        rho_q4: cands[i].rho_q4,
                        theta: cands[i].theta,
                        weight: cands[i].votes,
                    })
                    .collect(),
            ),
            None => (None, vec![]),
        };
        let fed = if ctl.overflowed { &[][..] } else { &dets[..] };
        let rep = tracker.update(k as u32, fed);
        let tracks = tracker
            .slots
            .iter()
            .flatten()
            .filter(|t| t.confirmed)
            .map(|t| (t.rho.x / 16.0, t.theta.x / 65536.0 * PI))
            .collect();
        let predicted = tracker
            .slots
            .iter()
            .flatten()
            .filter_map(|t| t.frames_to_cross)
            .min();
        out.push(JobFrame {
            tape,
            tracks,
            warning: rep.warning.map(|w| w.frames),
            predicted,
        });
    }
    out
}

/// `(|d rho| px, |d theta| deg)` between two lines `(rho px, theta rad)`
/// with `theta` in `[0, pi)`, taking `(rho, theta)` and `(-rho, theta +-
/// pi)` as the same line.
pub fn line_err(a: (f64, f64), b: (f64, f64)) -> (f64, f64) {
    let mut d = a.1 - b.1;
    let mut rho_b = b.0;
    if d > PI / 2.0 {
        d -= PI;
        rho_b = -rho_b;
    } else if d < -PI / 2.0 {
        d += PI;
        rho_b = -rho_b;
    }
    ((a.0 - rho_b).abs(), d.abs().to_degrees())
}

fn truth_px(t: &TruthLine) -> (f64, f64) {
    (t.rho, t.theta)
}

/// The selected tape edges of a run against the truth, frame by frame
/// (the shorter length): `|d rho|` px and `|d theta|` degrees of each of
/// the two edges, over the frames where the run found the tape.
pub fn truth_line_errors(truth: &[FrameTruth], frames: &[JobFrame]) -> (Vec<f64>, Vec<f64>) {
    let (mut rho, mut theta) = (Vec::new(), Vec::new());
    for (run, t) in frames.iter().zip(truth) {
        if let Some(tape) = run.tape {
            for (i, edge) in t.edges.iter().enumerate() {
                let (dr, dt) = line_err(tape[i], truth_px(edge));
                rho.push(dr);
                theta.push(dt);
            }
        }
    }
    (rho, theta)
}

/// Frames in which the run found the tape but selected a wrong line for
/// one of its edges: a selected edge whose `|d rho|` to the true edge is
/// more than half the `|d rho|` between the two true edges of that frame
/// (the selection is then nearer the tape's other edge, or farther from
/// its own edge than the tape is wide in half, than it is to the edge it
/// stands for). Half the tape's own width is the scale because the other
/// edge is the nearest line the truth knows that the selection must not
/// be taken for (derived from the scene's geometry, not fitted).
///
/// ```
/// use fixsight_verify::pipeline::job::wrong_edge_frames;
/// assert_eq!(wrong_edge_frames(&[], &[]), 0);
/// ```
pub fn wrong_edge_frames(truth: &[FrameTruth], frames: &[JobFrame]) -> usize {
    frames
        .iter()
        .zip(truth)
        .filter(|(run, t)| {
            let Some(tape) = run.tape else {
                return false;
            };
            let (e0, e1) = (truth_px(&t.edges[0]), truth_px(&t.edges[1]));
            let half = line_err(e0, e1).0 / 2.0;
            (0..2).any(|i| line_err(tape[i], truth_px(&t.edges[i])).0 > half)
        })
        .count()
}

/// Max and mean, `(0, 0)` when empty.
fn max_mean(v: &[f64]) -> (f64, f64) {
    if v.is_empty() {
        return (0.0, 0.0);
    }
    (
        v.iter().copied().fold(0.0, f64::max),
        v.iter().sum::<f64>() / v.len() as f64,
    )
}

/// The fixed run against the `f64` run of the same frames.
#[derive(Debug, Clone, Default)]
pub struct FixedVsF64 {
    /// Frames compared.
    pub frames: usize,
    /// `|d rho|` px of each tape edge, over the frames where both found the
    /// tape.
    pub rho_px: Vec<f64>,
    /// `|d theta|` degrees, the same pairs.
    pub theta_deg: Vec<f64>,
    /// Frames without a marking: fixed, `f64`.
    pub lost: [usize; 2],
    /// Frames where one run warns and the other does not.
    pub warning_frames_differ: usize,
    /// First frame with a raised drift warning: fixed, `f64`.
    pub first_warning: [Option<usize>; 2],
    /// `|difference|` in frames of the predicted crossing, over the frames
    /// where both runs predict one within the horizon.
    pub predicted_diff: Vec<f64>,
    /// Frames where only one run predicts a crossing within the horizon
    /// (the input of the warning's debounce differs).
    pub prediction_frames_differ: usize,
}

impl FixedVsF64 {
    /// Compares `fixed` and `reference` frame by frame (the shorter length).
    pub fn of(fixed: &[JobFrame], reference: &[JobFrame]) -> Self {
        let mut c = FixedVsF64 {
            frames: fixed.len().min(reference.len()),
            ..Default::default()
        };
        for (k, (a, b)) in fixed.iter().zip(reference).enumerate() {
            if let (Some(ta), Some(tb)) = (a.tape, b.tape) {
                for i in 0..2 {
                    let (dr, dt) = line_err(ta[i], tb[i]);
                    c.rho_px.push(dr);
                    c.theta_deg.push(dt);
                }
            }
            for (i, run) in [a, b].into_iter().enumerate() {
                c.lost[i] += run.tape.is_none() as usize;
                if run.warning.is_some() && c.first_warning[i].is_none() {
                    c.first_warning[i] = Some(k);
                }
            }
            c.warning_frames_differ += (a.warning.is_some() != b.warning.is_some()) as usize;
            match (a.predicted, b.predicted) {
                (Some(pa), Some(pb)) => c.predicted_diff.push(pa.abs_diff(pb) as f64),
                (None, None) => {}
                _ => c.prediction_frames_differ += 1,
            }
        }
        c
    }

    /// Frames between the first warnings of the two runs: 0 when both warn
    /// first in the same frame or neither warns, the number of frames when
    /// only one warns.
    pub fn warning_frame_delta(&self) -> f64 {
        match self.first_warning {
            [Some(a), Some(b)] => a.abs_diff(b) as f64,
            [None, None] => 0.0,
            _ => self.frames as f64,
        }
    }

    /// `(max, mean)` of [`Self::rho_px`] and of [`Self::theta_deg`].
    pub fn line_figures(&self) -> ((f64, f64), (f64, f64)) {
        (max_mean(&self.rho_px), max_mean(&self.theta_deg))
    }
}

/// The demo sequence seen through `lens`: rendered through its camera,
/// the truth drawn in its corrected view ([`Sequence::through`]).
pub fn demo_sequence_through(lens: &LensInUse) -> Result<Sequence, String> {
    let spec = DEMO_SEQUENCE;
    if lens.is_demo() {
        return Sequence::new(&spec);
    }
    if (spec.width, spec.height) != LensInUse::SIZE {
        return Err(format!(
            "the demo sequence is {}x{}; the {} is for {}x{}",
            spec.width,
            spec.height,
            lens.describe(),
            LensInUse::SIZE.0,
            LensInUse::SIZE.1
        ));
    }
    Sequence::through(&spec, lens.camera, lens.view)
}

/// The note of a row run on [`demo_sequence_through`] `lens`.
pub fn lens_note(lens: &LensInUse) -> String {
    format!(
        "lens: {} (the demo sequence rendered through it, its correction grids, the truth in its \
         corrected view)",
        lens.describe()
    )
}

/// The point mode's correction grid of a sequence: from its camera to its
/// corrected view, both the frame size, step `2^GRID_LOG2`,
/// `GRID_FRAC_BITS` fractional bits.
pub fn sequence_correction_grid(seq: &Sequence) -> Result<CorrectionGrid, String> {
    let spec = seq.spec();
    let (w, h) = (spec.width, spec.height);
    build_correction_grid(
        seq.camera(),
        seq.view(),
        (w, h),
        (w, h),
        GRID_LOG2,
        GRID_FRAC_BITS,
    )
}

/// The whole comparison over a sequence (the demo's in the report).
pub fn job_row(seq: &Sequence) -> Result<KernelReport, String> {
    let spec = seq.spec();
    let (w, h) = (spec.width, spec.height);
    let cg = sequence_correction_grid(seq)?;
    let grid = ControlGrid::new(&cg.points, cg.geom, cg.k).map_err(e)?;
    let frames: Vec<Vec<u8>> = (0..spec.frames).map(|k| seq.render(k)).collect();
    let fixed = run_fixed(&frames, Some(&grid))?;
    let mut pr = composed_differences(&frames, &grid, &fixed)?;
    let reference = run_f64(seq, &frames, &stage_controls(&fixed));
    let mut row = compare_runs(
        JOB_KERNEL,
        spec,
        seq,
        &fixed,
        &reference,
        &mut pr,
        vec![
            format!(
                "whole job in point mode over the {} sequence ({} frames {}x{}): the kernel vs the kernels composed, frame by frame; f64 and truth figures in metrics",
                spec.name, spec.frames, w, h
            ),
            "ops per pixel per frame: the whole job (edge stage, gate bytes, votes, peaks, marking, tracker)".into(),
        ],
    );
    let m = &mut row.metrics;
    let mut put = |k: &str, v: f64| {
        m.insert(k.into(), v);
    };
    put("ram_bytes_qvga", DemoPointJobQvga::ram_bytes() as f64);
    put("ram_bytes_vga", DemoPointJobVga::ram_bytes() as f64);
    put("grid_bytes", (cg.points.len() * 4) as f64);
    put("gate_bytes", DEMO_CAP as f64);
    put_counts(&mut row, &fixed);
    for p in pr.drain(..) {
        row.fail(p);
    }
    Ok(row)
}

/// The candidate and ungated maxima of a fixed run, as metrics.
pub fn put_counts(row: &mut KernelReport, fixed: &FixedRun) {
    let cands = fixed
        .records
        .iter()
        .map(|r| r.0.edges.candidates)
        .max()
        .unwrap_or(0);
    let ungated = fixed.records.iter().map(|r| r.0.ungated).max().unwrap_or(0);
    row.metrics.insert("candidates_max".into(), cands as f64);
    row.metrics
        .insert("ungated_points_max".into(), ungated as f64);
}

/// The row comparing a fixed run with the composition (`diffs`, one entry
/// per differing frame, prefixed `frame k:`) and with the `f64` run and
/// the truth (module docs, *Metrics*); the caller adds its mode's figures
/// and fails the row on `diffs`.
pub fn compare_runs(
    kernel: &str,
    spec: &SequenceSpec,
    seq: &Sequence,
    fixed: &FixedRun,
    reference: &[JobFrame],
    diffs: &mut [String],
    notes: Vec<String>,
) -> KernelReport {
    let pr = diffs;
    let (w, h) = (spec.width, spec.height);
    let origin = ((w as f64 - 1.0) / 2.0, (h as f64 - 1.0) / 2.0);
    let truth: Vec<_> = (0..spec.frames).map(|k| seq.truth(k, origin)).collect();
    let cmp = FixedVsF64::of(&fixed.frames, reference);
    let (fr, ft) = truth_line_errors(&truth, &fixed.frames);
    let (rr, rt) = truth_line_errors(&truth, reference);
    let (mut track_f, mut track_r) = (vec![], vec![]);
    let mut occluded = 0;
    for ((a, b), t) in fixed.frames.iter().zip(reference).zip(&truth) {
        occluded += t.occluded() as usize;
        let tl = [truth_px(&t.edges[0]), truth_px(&t.edges[1])];
        for (run, errs) in [(a, &mut track_f), (b, &mut track_r)] {
            let near: Vec<f64> = tl
                .iter()
                .filter_map(|&edge| {
                    run.tracks
                        .iter()
                        .map(|&tr| line_err(tr, edge))
                        .filter(|&(_, dt)| dt < 10.0)
                        .map(|(dr, _)| dr)
                        .min_by(f64::total_cmp)
                })
                .collect();
            if near.len() == 2 {
                errs.extend(near);
            }
        }
    }
    let crossing = crate::sequence::SequenceTruth {
        frames: truth.clone(),
    }
    .crossing();
    let delta = cmp.warning_frame_delta();
    // The row's contract: the job equals the kernels composed, bit for bit
    // (the samples are the frames; a differing frame counts 1).
    let flags: Vec<f64> = (0..spec.frames)
        .map(|k| pr.iter().any(|d| d.starts_with(&format!("frame {k}:"))) as u8 as f64)
        .collect();
    let stats = ErrorStats::compare(&flags, &vec![0.0; flags.len()], 1.0);
    let mut row = KernelReport::from_stats(
        kernel,
        KernelFamily::Pipeline,
        Contract::BitExact,
        0.0,
        &stats,
        fixed.ops.clone(),
    );
    row.notes.extend(notes);
    if delta != 0.0 {
        row.notes.push(format!(
            "GOAL NOT MET: warning_frame_delta {delta} (goal 0)"
        ));
        row.notes.push(format!(
            "the warnings are debounced from the predicted crossing: it differs between the runs by \
             up to {} frames (mean {:.1}) where both predict one within the horizon, and {} of {} \
             frames have a prediction in one run only",
            max_mean(&cmp.predicted_diff).0,
            max_mean(&cmp.predicted_diff).1,
            cmp.prediction_frames_differ,
            cmp.frames
        ));
    }
    let m = &mut row.metrics;
    let mut put = |k: &str, v: f64| {
        m.insert(k.into(), v);
    };
    for (name, v) in [
        ("line_rho_err_px_fixed", &fr),
        ("line_theta_err_deg_fixed", &ft),
        ("line_rho_err_px_f64", &rr),
        ("line_theta_err_deg_f64", &rt),
        ("line_rho_err_px_fixed_vs_f64", &cmp.rho_px),
        ("line_theta_err_deg_fixed_vs_f64", &cmp.theta_deg),
        ("tracking_err_px_fixed", &track_f),
        ("tracking_err_px_f64", &track_r),
    ] {
        let (mx, mean) = max_mean(v);
        put(&format!("{name}_max"), mx);
        put(&format!("{name}_mean"), mean);
    }
    let first = |f: Option<usize>| f.map_or(-1.0, |v| v as f64);
    put("lost_frames_fixed", cmp.lost[0] as f64);
    put("lost_frames_f64", cmp.lost[1] as f64);
    put("occluded_frames", occluded as f64);
    put("first_warning_fixed", first(cmp.first_warning[0]));
    put("first_warning_f64", first(cmp.first_warning[1]));
    put("warning_frame_delta", delta);
    put("warning_frames_differ", cmp.warning_frames_differ as f64);
    let (pmax, pmean) = max_mean(&cmp.predicted_diff);
    put("predicted_crossing_diff_frames_max", pmax);
    put("predicted_crossing_diff_frames_mean", pmean);
    put(
        "prediction_frames_differ",
        cmp.prediction_frames_differ as f64,
    );
    put("truth_crossing_frame", first(crossing.map(|c| c.frame)));
    put("frames", spec.frames as f64);
    row
}

/// The report row on the demo sequence seen through `lens`.
pub fn check_job(lens: &LensInUse, scenes: &[Scene]) -> KernelReport {
    let mut row = row_or_failure(
        JOB_KERNEL,
        demo_sequence_through(lens).and_then(|seq| job_row(&seq)),
    );
    row.notes.push(lens_note(lens));
    textured_frames(&mut row, scenes);
    row
}

/// The candidate budget on still scenes (module docs, *Metrics*): the
/// demo job, no grid, two frames of each 320 x 240 scene. On the second
/// frame the automatic thresholds come from the same image, so the budget
/// step guarantees at most `DEMO_CAP` candidates: an ungated point there
/// fails the row. Scenes of another size are named in a note.
pub fn textured_frames(row: &mut KernelReport, scenes: &[Scene]) {
    let cfg = PointJobConfig::DEMO_QVGA;
    let mut job: Box<DemoPointJobQvga> = Box::default();
    for s in scenes {
        if (s.width, s.height) != (cfg.vote.width, cfg.vote.height) {
            row.notes.push(format!(
                "{}: {} x {}, not a frame of the demo job; no still-frame check",
                s.name, s.width, s.height
            ));
            continue;
        }
        let mut two = || -> Result<[JobReport; 2], String> {
            job.configure(&cfg, s.width, s.height).map_err(e)?;
            let mut once = || -> Result<JobReport, String> {
                for r in s.gray.chunks_exact(s.width) {
                    job.push_row(r).map_err(e)?;
                }
                job.finish(None).map_err(e)
            };
            Ok([once()?, once()?])
        };
        match two() {
            Ok([first, second]) => {
                let m = &mut row.metrics;
                m.insert(
                    format!("still_candidates.{}", s.name),
                    second.edges.candidates as f64,
                );
                m.insert(format!("still_ungated.{}", s.name), second.ungated as f64);
                m.insert(
                    format!("still_ungated_first.{}", s.name),
                    first.ungated as f64,
                );
                if second.ungated > 0 {
                    row.fail(format!(
                        "{}: {} ungated points on the second of two equal frames ({} candidates, {} gate bytes)",
                        s.name, second.ungated, second.edges.candidates, DEMO_CAP
                    ));
                }
            }
            Err(why) => row.fail(format!("{}: still frames failed: {why}", s.name)),
        }
    }
}

/// The row, or a failed row of `kernel` saying why there is none.
pub fn row_or_failure(kernel: &str, row: Result<KernelReport, String>) -> KernelReport {
    row.unwrap_or_else(|why| {
        KernelReport::failed(kernel, KernelFamily::Pipeline, Contract::BitExact, why)
    })
}

/// Peak slots of the golden vectors' job (and of the harness's).
pub const VECTOR_PEAKS: usize = 8;
/// Track slots of the golden vectors' job.
pub const VECTOR_TRACKS: usize = 4;
/// Words per frame of the `record` output (module docs of
/// [`JobParams`]).
pub const RECORD_WORDS_PER_FRAME: usize =
    9 + 5 * VECTOR_PEAKS + marking::RECORD_WORDS + 6 + VECTOR_TRACKS * TRACK_WORDS;

/// Parameters of a `pipeline.point_job` vector. The configuration is
/// [`PointJobConfig::DEMO_QVGA`] with these fields replaced: the vote
/// frame `width x height` (the input's width, `height`), `theta_start`,
/// `theta_step_log2`, `theta_bins`, `rho_step_log2`, `rho_bins`, `gate`
/// (0: none); the peak `peak_threshold` and `peak_radius` (both radii);
/// the marking limits `marking` (`near_row`, `far_row`, `horizon_row`,
/// `max_tilt`, `near_x_min`, `near_x_max`, `near_sep_min`,
/// `near_sep_nominal`, `near_sep_max`, `converge_tol`, Q4; a brighter
/// tape); the tracker's `reference` point (Q4) and `rho_meas_var`. The
/// frames pass the demo lens's correction grid, input `grid` (i32, 2
/// channels, `cols x rows`, `grid_log2`, `grid_frac_bits`), or none when
/// `grid_log2` is 0. The job has 8 peak slots and 4 track slots.
///
/// Inputs: `frames` u8, `width x (frames * height)`; `grid`. Output
/// `record` i32, `RECORD_WORDS_PER_FRAME x frames`, per frame: frame
/// number, edge points, candidates, thresholds low and high, voted,
/// outside, ungated, peaks found; 8 peaks `(theta_bin, rho_bin, votes,
/// rho, theta)` (zeros past the found ones); the marking record
/// ([`Marking::record`]); the tracker's report `(associated, born,
/// dropped, warning present, warning track id, warning frames)`; the 4
/// slots' [`track_words`].
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct JobParams {
    /// Frames stacked in the input.
    pub frames: usize,
    /// Height of one frame.
    pub height: usize,
    /// Vote column 0, binary angle 360.
    pub theta_start: u32,
    /// Column step log2.
    pub theta_step_log2: u32,
    /// Columns.
    pub theta_bins: usize,
    /// Row step log2.
    pub rho_step_log2: u32,
    /// Rows (odd).
    pub rho_bins: usize,
    /// Gate half-width, 0 for none.
    pub gate: u16,
    /// Peak threshold.
    pub peak_threshold: u16,
    /// Peak suppression radius (both axes).
    pub peak_radius: usize,
    /// Marking limits, Q4 (see above).
    pub marking: Vec<i32>,
    /// Tracker reference point, Q4.
    pub reference: Vec<i32>,
    /// Tracker rho measurement variance.
    pub rho_meas_var: u32,
    /// Grid step log2, 0 without a grid.
    pub grid_log2: u32,
    /// Grid fractional bits.
    pub grid_frac_bits: u32,
}

/// The configuration a vector names.
pub fn job_config(p: &JobParams, width: usize) -> Result<PointJobConfig, String> {
    let mut c = PointJobConfig::DEMO_QVGA;
    c.vote = VoteParams {
        width,
        height: p.height,
        theta_start: p.theta_start,
        theta_step_log2: p.theta_step_log2,
        theta_bins: p.theta_bins,
        rho_step_log2: p.rho_step_log2,
        rho_bins: p.rho_bins,
        gate: (p.gate != 0).then_some(p.gate),
        ..c.vote
    };
    c.peaks = fixsight::lines::PeakParams {
        threshold: p.peak_threshold,
        radius_theta: p.peak_radius,
        radius_rho: p.peak_radius,
    };
    let m: [i32; 10] = p
        .marking
        .as_slice()
        .try_into()
        .map_err(|_| "marking needs 10 limits".to_string())?;
    c.marking = fixsight::marking::MarkingConfig::new(fixsight::marking::MarkingLimits {
        near_row_q4: m[0],
        far_row_q4: m[1],
        horizon_row_q4: m[2],
        max_tilt: u16::try_from(m[3]).map_err(|_| "max_tilt out of range")?,
        near_x_min_q4: m[4],
        near_x_max_q4: m[5],
        near_sep_min_q4: m[6],
        near_sep_nominal_q4: m[7],
        near_sep_max_q4: m[8],
        converge_tol_q4: m[9],
        contrast: fixsight::marking::TapeContrast::Brighter,
    })
    .map_err(e)?;
    let r: [i32; 2] = p
        .reference
        .as_slice()
        .try_into()
        .map_err(|_| "reference needs 2 values".to_string())?;
    c.track.reference_q4 = (r[0], r[1]);
    c.track.rho.meas_var = p.rho_meas_var;
    c.check().map_err(e)?;
    Ok(c)
}

/// The golden vectors' job type (as the harness's).
pub type VectorJob = fixsight::pipeline::PointJob<
    320,
    { map_words(320, 240) },
    1024,
    4096,
    32,
    255,
    VECTOR_PEAKS,
    VECTOR_TRACKS,
>;

/// The record of one frame (see [`JobParams`]).
pub fn frame_record(job: &VectorJob, r: &JobReport) -> Vec<i32> {
    let slots: Vec<[i32; TRACK_WORDS]> = job.tracker().map_or_else(Vec::new, |t| {
        (0..VECTOR_TRACKS).map(|i| track_words(t.slot(i))).collect()
    });
    record_words(r, job.peaks(), &slots)
}

/// The record of one frame (layout in [`JobParams`]) from a job's report,
/// its peaks (the first [`VECTOR_PEAKS`], zeros past the found ones) and
/// its track slots' words (none without a tracker).
pub fn record_words(r: &JobReport, peaks: &[Peak], slots: &[[i32; TRACK_WORDS]]) -> Vec<i32> {
    let mut v = vec![
        r.frame as i32,
        r.edges.edge_points as i32,
        r.edges.candidates as i32,
        r.edges.thresholds.0 as i32,
        r.edges.thresholds.1 as i32,
        r.voted as i32,
        r.outside as i32,
        r.ungated as i32,
        r.peaks as i32,
    ];
    for i in 0..VECTOR_PEAKS {
        match peaks.get(i) {
            Some(p) => v.extend([
                p.theta_bin as i32,
                p.rho_bin as i32,
                p.votes as i32,
                p.line.rho,
                p.line.theta as i32,
            ]),
            None => v.extend([0; 5]),
        }
    }
    v.extend(r.marking.record());
    let w = r.track.warning;
    v.extend([
        r.track.associated as i32,
        r.track.born as i32,
        r.track.dropped as i32,
        w.is_some() as i32,
        w.map_or(0, |w| w.track_id as i32),
        w.map_or(0, |w| w.frames as i32),
    ]);
    for s in slots {
        v.extend(s);
    }
    v
}

/// Recomputes a `pipeline.point_job` vector.
pub fn run_job_vector(params: &serde_json::Value, inputs: &[Blob]) -> Result<Vec<Blob>, String> {
    let p: JobParams = crate::family::parse_params(JOB_KERNEL, params)?;
    let b = crate::family::input(inputs, "frames")?;
    if p.frames.checked_mul(p.height) != Some(b.height) || p.frames == 0 {
        return Err(format!(
            "frames input is {} rows high, {} x {} expected",
            b.height, p.frames, p.height
        ));
    }
    let w = b.width;
    let cfg = job_config(&p, w)?;
    let pts;
    let grid = if p.grid_log2 == 0 {
        None
    } else {
        let g = crate::family::input(inputs, "grid")?;
        pts = g.to_i32()?;
        let geom = fixsight::warp::WarpGeometry::new(w, p.height, w, p.height, p.grid_frac_bits)
            .map_err(e)?;
        Some(ControlGrid::new(&pts, geom, p.grid_log2).map_err(e)?)
    };
    let mut job: Box<VectorJob> = Box::default();
    job.configure(&cfg, w, p.height).map_err(e)?;
    let data = b.to_u8()?;
    let mut rec = Vec::new();
    for f in 0..p.frames {
        for y in 0..p.height {
            let o = (f * p.height + y) * w;
            job.push_row(&data[o..o + w]).map_err(e)?;
        }
        let r = job.finish(grid.as_ref()).map_err(e)?;
        rec.extend(frame_record(&job, &r));
    }
    Ok(vec![Blob::from_i32(
        "record",
        RECORD_WORDS_PER_FRAME,
        p.frames,
        1,
        &rec,
    )])
}

/// `v / d` rounded half away from zero.
fn div_round(v: i32, d: i32) -> i32 {
    let q = (v.abs() + d / 2) / d;
    if v < 0 {
        -q
    } else {
        q
    }
}

/// The golden cases: four consecutive frames of the demo sequence rendered
/// at a quarter of its size (80 x 60, frames 52..56 of "aisle-drift", the
/// reference point nearing the right edge) through the demo lens's grid
/// at that size, with the demo configuration scaled to it (vote rows
/// `-50..=50` px, peak threshold 160 = 640 / 4, marking limits and
/// reference point divided by 4, rho variance by 16); and the same frames
/// without a grid and without a gate.
pub fn job_golden_cases() -> Vec<GoldenCase> {
    let (w, h, first, n) = (80usize, 60usize, QUARTER_FIRST, QUARTER_FRAMES);
    let (seq, base, frames_blob) = quarter_case();
    let cg = build_correction_grid(seq.camera(), seq.view(), (w, h), (w, h), 2, GRID_FRAC_BITS)
        .expect("a grid for the demo lens at 80 x 60");
    let grid_blob = Blob::from_i32("grid", cg.grid.0, cg.grid.1, 2, &cg.points);
    let plain = JobParams {
        grid_log2: 0,
        gate: 0,
        ..base.clone()
    };
    let run = |_: &str, p: &serde_json::Value, i: &[Blob]| run_job_vector(p, i);
    vec![
        crate::family::case(
            run,
            "pipeline.point_job.aisle-quarter-lens",
            format!(
                "frames {first}..{} of the demo sequence at {w}x{h}, through the demo lens's grid \
                 (step 4, F = {GRID_FRAC_BITS}); the demo configuration scaled to a quarter",
                first + n
            ),
            JOB_KERNEL,
            serde_json::to_value(&base).expect("serialisable"),
            vec![frames_blob.clone(), grid_blob],
        ),
        crate::family::case(
            run,
            "pipeline.point_job.aisle-quarter-raw",
            "the same frames voted at their raw positions (no grid), every column (no gate)".into(),
            JOB_KERNEL,
            serde_json::to_value(&plain).expect("serialisable"),
            vec![frames_blob],
        ),
        budget_case(run),
    ]
}

/// The case that makes the candidate budget bind (step 5 of the rule in
/// `fixsight::hysteresis`): the natural photograph `grass` (scikit-image's
/// sample data, CC0; see `host-verify/data/natural/SOURCES.md`) twice at
/// 320 x 240 through the demo configuration without a grid. The first
/// frame, on the rule's first pair, has more candidates than the job's
/// 4 096 gate bytes; the second runs on the pair the budget raised, which
/// the record's thresholds show, and keeps every vote.
fn budget_case(run: crate::golden::RunVector) -> GoldenCase {
    let grass = crate::natural::natural_image("grass")
        .expect("the built-in photograph grass")
        .scene();
    let (w, h) = (grass.width, grass.height);
    let frames: Vec<u8> = grass.gray.iter().chain(&grass.gray).copied().collect();
    let params = demo_params(2, h, 1, PointJobConfig::DEMO_QVGA.vote.rho_bins, 0);
    crate::family::case(
        run,
        "pipeline.point_job.grass-budget",
        format!(
            "the photograph grass twice at {w}x{h}, the demo configuration, no grid: the first \
             frame overflows the gate bytes, the second runs on the low threshold the \
             candidate budget raised"
        ),
        JOB_KERNEL,
        serde_json::to_value(&params).expect("serialisable"),
        vec![Blob::from_u8("frames", w, 2 * h, 1, &frames)],
    )
}

/// [`PointJobConfig::DEMO_QVGA`] as the params of a vector of `frames`
/// frames of `height` rows, `div` times smaller than QVGA each way (1:
/// QVGA): the marking's rows, columns and separations, the tracker's
/// reference point (rounded half away from zero) and the peak threshold
/// divided by `div`, the tilt kept, the rho variance divided by `div^2`;
/// `rho_bins` vote rows and a grid of step `2^grid_log2` (0: none).
fn demo_params(
    frames: usize,
    height: usize,
    div: i32,
    rho_bins: usize,
    grid_log2: u32,
) -> JobParams {
    let d = PointJobConfig::DEMO_QVGA;
    let l = d.marking.limits();
    let q = |v: i32| div_round(v, div);
    JobParams {
        frames,
        height,
        theta_start: d.vote.theta_start,
        theta_step_log2: d.vote.theta_step_log2,
        theta_bins: d.vote.theta_bins,
        rho_step_log2: d.vote.rho_step_log2,
        rho_bins,
        gate: d.vote.gate.unwrap_or(0),
        peak_threshold: d.peaks.threshold / div as u16,
        peak_radius: d.peaks.radius_theta,
        marking: vec![
            q(l.near_row_q4),
            q(l.far_row_q4),
            q(l.horizon_row_q4),
            l.max_tilt as i32,
            q(l.near_x_min_q4),
            q(l.near_x_max_q4),
            q(l.near_sep_min_q4),
            q(l.near_sep_nominal_q4),
            q(l.near_sep_max_q4),
            q(l.converge_tol_q4),
        ],
        reference: vec![q(d.track.reference_q4.0), q(d.track.reference_q4.1)],
        rho_meas_var: d.track.rho.meas_var / (div * div) as u32,
        grid_log2,
        grid_frac_bits: GRID_FRAC_BITS,
    }
}

/// First frame of the quarter-size golden cases.
const QUARTER_FIRST: usize = 52;
/// Frames of the quarter-size golden cases.
const QUARTER_FRAMES: usize = 4;

/// The sequence at 80 x 60, the params (with a step-4 point-mode grid)
/// and the `frames` input of the quarter-size golden cases (see
/// [`job_golden_cases`]).
pub fn quarter_case() -> (Sequence, JobParams, Blob) {
    let (w, h, first, n) = (80usize, 60usize, QUARTER_FIRST, QUARTER_FRAMES);
    let spec = SequenceSpec {
        width: w,
        height: h,
        ..DEMO_SEQUENCE
    };
    let seq = Sequence::new(&spec).expect("the demo sequence at 80 x 60");
    let frames: Vec<u8> = (first..first + n).flat_map(|k| seq.render(k)).collect();
    let base = demo_params(n, h, 4, 51, 2);
    let frames_blob = Blob::from_u8("frames", w, n * h, 1, &frames);
    (seq, base, frames_blob)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chain::reference::{reference_f64, suppressed_f64};

    /// The truth itself selects no wrong edge; the two edges swapped are
    /// wrong in every frame; a shift of less than half the tape's width is
    /// not wrong, one of more is.
    #[test]
    fn wrong_edges_are_those_nearer_half_a_tape_away() {
        let seq = crate::sequence::Sequence::new(&crate::sequence::DEMO_SEQUENCE).unwrap();
        let truth: Vec<FrameTruth> = (0..24).map(|k| seq.truth(k, (159.5, 119.5))).collect();
        let frame = |tape: [(f64, f64); 2]| JobFrame {
            tape: Some(tape),
            tracks: Vec::new(),
            warning: None,
            predicted: None,
        };
        let edges = |t: &FrameTruth| [truth_px(&t.edges[0]), truth_px(&t.edges[1])];
        let exact: Vec<JobFrame> = truth.iter().map(|t| frame(edges(t))).collect();
        assert_eq!(wrong_edge_frames(&truth, &exact), 0);
        let swapped: Vec<JobFrame> = truth
            .iter()
            .map(|t| {
                let [a, b] = edges(t);
                frame([b, a])
            })
            .collect();
        assert_eq!(wrong_edge_frames(&truth, &swapped), truth.len());
        let shifted = |share: f64| -> usize {
            let runs: Vec<JobFrame> = truth
                .iter()
                .map(|t| {
                    let [a, b] = edges(t);
                    let width = line_err(a, b).0;
                    frame([(a.0 + share * width, a.1), b])
                })
                .collect();
            wrong_edge_frames(&truth, &runs)
        };
        assert_eq!(shifted(0.4), 0);
        assert_eq!(shifted(0.6), truth.len());
        // A frame without a tape is lost, not wrong.
        let lost = vec![JobFrame {
            tape: None,
            ..frame(edges(&truth[0]))
        }];
        assert_eq!(wrong_edge_frames(&truth[..1], &lost), 0);
    }

    #[test]
    fn f64_job_takes_the_fixed_thresholds_as_the_rounded_magnitude_does() {
        // A vertical step whose strongest f64 suppressed magnitude m lies
        // in (t - 1/2, t) for the integer t = ceil(m): the fixed stage's
        // rounded magnitude reaches t, so with high = t the step is an edge
        // for the f64 job too; the unshifted test m >= t would drop it.
        let (w, h) = (16, 12);
        let found = (1..=255u8).find_map(|a| {
            let img: Vec<u8> = (0..w * h)
                .map(|i| if i % w >= w / 2 { a } else { 0 })
                .collect();
            let m = suppressed_f64(&img, w, h).into_iter().fold(0.0, f64::max);
            let t = m.ceil();
            (t - m > 0.0 && t - m < 0.5 && t <= u16::MAX as f64).then_some((img, t as u16))
        });
        let (img, t) = found.expect("a step height with the magnitude just below an integer");
        let ctl = StageControl {
            thresholds: (t / 2, t),
            overflowed: false,
        };
        let edges = f64_job_edges(&img, w, h, &ctl);
        assert!(edges.iter().any(|&v| v != 0));
        let unshifted = reference_f64(&img, w, h, (t / 2) as f64, t as f64);
        assert!(unshifted.iter().all(|&v| v == 0));
    }
}
