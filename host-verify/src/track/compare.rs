//! Per-sequence comparisons: fixed against reference (state, frames to the
//! crossing, warnings) and fixed against the truth.

use super::run::{FixedFrame, RefFrame};
use super::sequences::{Sequence, TrueLine};
use super::{DEG_PER_U, PX_PER_U};
use fixsight::track::{AxisState, Track, TrackConfig};

/// Whether the two trackers made the same decisions in a frame.
fn same_decisions(f: &FixedFrame, r: &RefFrame) -> bool {
    f.report.associated == r.report.associated
        && f.report.born == r.report.born
        && f.report.dropped == r.report.dropped
        && f.slots.iter().zip(&r.slots).all(|(a, b)| match (a, b) {
            (None, None) => true,
            (Some(a), Some(b)) => {
                (a.id, a.hits, a.missed, a.confirmed, a.side)
                    == (b.id, b.hits, b.missed, b.confirmed, b.side)
            }
            _ => false,
        })
}

/// Fixed-point state of an axis as `(x, v)` in units.
fn axis_xv(s: &AxisState) -> (f64, f64) {
    (s.pos as f64 / 256.0, s.vel as f64 / 256.0)
}

/// Per-sample comparison of a sequence: `(rho err px, rho bound px, theta
/// err deg, theta bound deg)` per live track per frame, plus the count of
/// frames whose decisions differ.
pub struct StateComparison {
    /// Rho position errors (px) and their bounds.
    pub rho: Vec<(f64, f64)>,
    /// Theta position errors (degrees) and their bounds.
    pub theta: Vec<(f64, f64)>,
    /// Velocity errors, rho (px/frame) and theta (degree/frame).
    pub vel: Vec<(f64, f64)>,
    /// Frames whose decisions differ.
    pub decision_mismatches: usize,
}

/// Compares the fixed and reference runs of one sequence.
pub fn compare_states(fixed: &[FixedFrame], reference: &[RefFrame]) -> StateComparison {
    let mut out = StateComparison {
        rho: Vec::new(),
        theta: Vec::new(),
        vel: Vec::new(),
        decision_mismatches: 0,
    };
    for (f, r) in fixed.iter().zip(reference) {
        if !same_decisions(f, r) {
            out.decision_mismatches += 1;
            continue;
        }
        for (a, b) in f.slots.iter().zip(&r.slots) {
            let (Some(a), Some(b)) = (a, b) else { continue };
            let (xr, vr) = axis_xv(&a.rho);
            let (xt, vt) = axis_xv(&a.theta);
            out.rho.push((
                (xr - b.rho.x).abs() * PX_PER_U,
                b.rho.err.bound(3) * PX_PER_U,
            ));
            out.theta.push((
                (xt - b.theta.x).abs() * DEG_PER_U,
                b.theta.err.bound(3) * DEG_PER_U,
            ));
            out.vel.push((
                (vr - b.rho.v).abs() * PX_PER_U,
                (vt - b.theta.v).abs() * DEG_PER_U,
            ));
        }
    }
    out
}

/// Per-track frames-to-crossing, fixed against the reference, over the
/// frames where both trackers made the same decisions: `(|difference|,
/// allowed |difference|, inside the allowed range, range not a single
/// value)` per track that may warn, "none" counted as `warn_horizon + 1`.
pub fn compare_etas(
    cfg: &TrackConfig,
    fixed: &[FixedFrame],
    reference: &[RefFrame],
) -> Vec<(f64, f64, bool, bool)> {
    let mut out = Vec::new();
    for (f, r) in fixed.iter().zip(reference) {
        if !same_decisions(f, r) {
            continue;
        }
        for (a, b) in f.slots.iter().zip(&r.slots) {
            let (Some(a), Some(b)) = (a, b) else { continue };
            if !(b.confirmed && b.hits >= cfg.warn_min_hits) {
                continue;
            }
            let (eta, lo, hi) = b.eta_range(cfg);
            let got = a
                .frames_to_cross
                .map_or(cfg.warn_horizon as u32 + 1, |v| v as u32);
            out.push((
                (got as f64 - eta as f64).abs(),
                (eta - lo).max(hi - eta) as f64,
                (lo..=hi).contains(&got),
                lo < hi,
            ));
        }
    }
    out
}

/// Raised warnings of one sequence, fixed against reference.
#[derive(Debug, Clone, Default)]
pub struct WarningComparison {
    /// First frame with a fixed warning.
    pub first_fixed: Option<u32>,
    /// First frame with a reference warning.
    pub first_reference: Option<u32>,
    /// Calls whose warnings differ (presence, track or frames).
    pub mismatches: usize,
    /// Calls with a warning on one side only.
    pub presence_mismatches: usize,
    /// Largest |frames difference| where both warn.
    pub max_delta: u32,
}

/// Compares the reported (debounced) warnings of one sequence.
pub fn compare_warnings(
    seq: &Sequence,
    fixed: &[FixedFrame],
    reference: &[RefFrame],
) -> WarningComparison {
    let first = |w: &dyn Fn(usize) -> bool| {
        seq.frames
            .iter()
            .enumerate()
            .find(|(i, _)| w(*i))
            .map(|(_, f)| f.frame)
    };
    let mut out = WarningComparison {
        first_fixed: first(&|i| fixed[i].report.warning.is_some()),
        first_reference: first(&|i| reference[i].report.warning.is_some()),
        ..Default::default()
    };
    for (a, b) in fixed.iter().zip(reference) {
        match (a.report.warning, b.report.warning) {
            (Some(x), Some(y)) => {
                let d = (x.frames as i32 - y.frames as i32).unsigned_abs();
                out.max_delta = out.max_delta.max(d);
                if d != 0 || x.track_id != y.track_id {
                    out.mismatches += 1;
                }
            }
            (None, None) => {}
            _ => {
                out.mismatches += 1;
                out.presence_mismatches += 1;
            }
        }
    }
    out
}

/// Fixed tracker against the truth of one sequence.
#[derive(Debug, Clone, Default)]
pub struct TruthFigures {
    /// Rho errors (px) of the confirmed track matched to each true edge.
    pub rho_err: Vec<f64>,
    /// Theta errors (degrees).
    pub theta_err: Vec<f64>,
    /// Calls (after the first `confirm_hits`) in which a true edge had no
    /// confirmed track within 4 px and 2 degrees.
    pub frames_lost: usize,
    /// Frames between the first warning and the true crossing (positive:
    /// warned ahead).
    pub lead: Option<i64>,
    /// Predicted crossing frame at the first warning minus the true one.
    pub eta_error: Option<i64>,
    /// Calls with a warning while the true crossing is more than
    /// `warn_horizon` frames away.
    pub early_warning_frames: usize,
    /// Calls in the last 30 frames before the true crossing without a
    /// warning.
    pub missed_warning_frames: usize,
}

/// Distance in `(rho px, theta deg)` between a fixed track and a true line,
/// after bringing the track next to the line's theta.
fn track_vs_truth(t: &Track, l: TrueLine) -> (f64, f64) {
    let rho = t.rho.pos as f64 / 256.0 * PX_PER_U;
    let th = t.theta.pos as f64 / 256.0 * DEG_PER_U;
    let lt = l.theta.to_degrees();
    let d = th - lt;
    if d > 90.0 {
        ((-rho - l.rho).abs(), (d - 180.0).abs())
    } else if d < -90.0 {
        ((-rho - l.rho).abs(), (d + 180.0).abs())
    } else {
        ((rho - l.rho).abs(), d.abs())
    }
}

/// Scores the fixed run of a sequence against its truth.
pub fn truth_figures(cfg: &TrackConfig, seq: &Sequence, fixed: &[FixedFrame]) -> TruthFigures {
    let mut out = TruthFigures::default();
    for (k, (f, truth)) in fixed.iter().zip(&seq.truth).enumerate() {
        for l in truth {
            let best = f
                .slots
                .iter()
                .flatten()
                .filter(|t| t.confirmed)
                .map(|t| track_vs_truth(t, *l))
                .filter(|(r, th)| *r <= 4.0 && *th <= 2.0)
                .min_by(|a, b| a.0.total_cmp(&b.0));
            match best {
                Some((r, th)) => {
                    out.rho_err.push(r);
                    out.theta_err.push(th);
                }
                None if k >= cfg.confirm_hits as usize => out.frames_lost += 1,
                None => {}
            }
        }
    }
    if let Some(tc) = seq.true_crossing {
        for (sf, f) in seq.frames.iter().zip(fixed) {
            let ahead = tc as i64 - sf.frame as i64;
            if f.report.warning.is_some() && ahead > cfg.warn_horizon as i64 {
                out.early_warning_frames += 1;
            }
            if f.report.warning.is_none() && (1..=30).contains(&ahead) {
                out.missed_warning_frames += 1;
            }
        }
    }
    let first = seq
        .frames
        .iter()
        .zip(fixed)
        .find(|(_, f)| f.report.warning.is_some());
    if let (Some((sf, f)), Some(tc)) = (first, seq.true_crossing) {
        out.lead = Some(tc as i64 - sf.frame as i64);
        out.eta_error = f
            .report
            .warning
            .map(|w| sf.frame as i64 + w.frames as i64 - tc as i64);
    }
    out
}
