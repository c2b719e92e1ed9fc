//! The `track.tracker` contract: one report row over the contract
//! sequences, plus the steady-state gains against Kalata (1984).

use super::compare::{compare_etas, compare_states, compare_warnings, truth_figures, TruthFigures};
use super::reference::{kalata_gains, settling_time_constant, RefAxis};
use super::run::{run_fixed, run_reference};
use super::sequences::{contract_sequences, Sequence};
use super::ID;
use crate::contract::{Contract, KernelFamily, KernelReport};
use crate::metrics::ErrorStats;
use crate::opcount::{measure, OpsPerPx};
use crate::scene::Scene;
use fixsight::track::{Detection, TrackConfig, Tracker};
use std::collections::BTreeMap;

/// Steady state after `n` updates with zero innovation, from birth:
/// `(fixed alpha, fixed beta, reference alpha, reference beta, first-order
/// bound on alpha, bound on beta)`.
pub fn steady_gains(q_q16: u32, init_q16: u32, n: usize) -> (f64, f64, f64, f64, f64, f64) {
    let mut cfg = TrackConfig::DEMO;
    cfg.rho.accel_index_q16 = q_q16;
    cfg.rho.init_vel_var_q16 = init_q16;
    cfg.theta = cfg.rho;
    cfg.confirm_hits = 1;
    cfg.warn_horizon = 0;
    cfg.warn_min_hits = u16::MAX;
    let mut t = Tracker::<1, 1>::new(cfg).expect("valid settings");
    let mut r = RefAxis::born(0.0, init_q16);
    let d = [Detection {
        rho_q4: 0,
        theta: 100,
        weight: 100,
    }];
    for f in 0..n as u32 {
        t.update(f, &d).expect("increasing frames");
        if f > 0 {
            r.predict(q_q16, None);
            r.update(0.0, None);
        }
    }
    let s = t.slot(0).expect("one track").rho;
    (
        s.p_pos as f64 / 65536.0,
        s.p_cross as f64 / 65536.0,
        r.a,
        r.b,
        r.err.bound(0),
        r.err.bound(1),
    )
}

fn stats_of(pairs: &[(f64, f64)]) -> ErrorStats {
    let a: Vec<f64> = pairs.iter().map(|p| p.0).collect();
    ErrorStats::compare(&a, &vec![0.0; a.len()], 1.0)
}

/// Largest bound of `(error, bound)` samples.
fn max_bound(pairs: &[(f64, f64)]) -> f64 {
    pairs.iter().map(|p| p.1).fold(0.0, f64::max)
}

/// Largest `error / bound` of `(error, bound)` samples (infinite when a
/// sample with a zero bound has an error).
fn worst_ratio(pairs: &[(f64, f64)]) -> f64 {
    pairs
        .iter()
        .map(|(e, b)| {
            if *b > 0.0 {
                e / b
            } else if *e > 0.0 {
                f64::INFINITY
            } else {
                0.0
            }
        })
        .fold(0.0, f64::max)
}

/// Everything measured over the contract sequences.
#[derive(Default)]
struct Measured {
    /// Rho position `(error px, bound px)` per compared sample.
    rho: Vec<(f64, f64)>,
    /// Theta position `(error deg, bound deg)`.
    theta: Vec<(f64, f64)>,
    vel_rho: f64,
    vel_theta: f64,
    decision_mismatches: usize,
    ops: Option<OpsPerPx>,
    problems: Vec<String>,
    warn_delta: i64,
    warn_mismatch: usize,
    warn_presence_mismatch: usize,
    /// Sequences where only one tracker warns at all.
    warn_first_missing: usize,
    eta_delta: u32,
    etas: Vec<(f64, f64, bool, bool)>,
    truth: TruthFigures,
    leads: Vec<i64>,
    eta_errors: Vec<i64>,
    calls: usize,
}

fn measure_sequences(cfg: TrackConfig, seqs: &[Sequence]) -> Measured {
    let mut m = Measured::default();
    for s in seqs {
        let (fixed, o) = measure(s.frames.len(), || run_fixed(cfg, &s.frames));
        m.ops.get_or_insert(o);
        let fixed = match fixed {
            Ok(f) => f,
            Err(e) => {
                m.problems.push(format!("{}: {e}", s.name));
                continue;
            }
        };
        m.calls += s.frames.len();
        let reference = run_reference(cfg, &s.frames);
        let c = compare_states(&fixed, &reference);
        m.rho.extend(c.rho);
        m.theta.extend(c.theta);
        for (vr, vt) in c.vel {
            m.vel_rho = m.vel_rho.max(vr);
            m.vel_theta = m.vel_theta.max(vt);
        }
        m.decision_mismatches += c.decision_mismatches;
        m.etas.extend(compare_etas(&cfg, &fixed, &reference));
        let w = compare_warnings(s, &fixed, &reference);
        match (w.first_fixed, w.first_reference) {
            (Some(a), Some(b)) => m.warn_delta = m.warn_delta.max((a as i64 - b as i64).abs()),
            (None, None) => {}
            _ => m.warn_first_missing += 1,
        }
        m.warn_mismatch += w.mismatches;
        m.warn_presence_mismatch += w.presence_mismatches;
        m.eta_delta = m.eta_delta.max(w.max_delta);
        let t = truth_figures(&cfg, s, &fixed);
        m.truth.rho_err.extend(t.rho_err);
        m.truth.theta_err.extend(t.theta_err);
        m.truth.frames_lost += t.frames_lost;
        m.truth.early_warning_frames += t.early_warning_frames;
        m.truth.missed_warning_frames += t.missed_warning_frames;
        m.leads.extend(t.lead);
        m.eta_errors.extend(t.eta_error);
    }
    m
}

/// Steady-state gains against Kalata (1984) for `q = L^2` in {0.01, 0.1,
/// 1, 10}: metrics and the gains that lie outside their bound.
fn steady_gain_figures(metrics: &mut BTreeMap<String, f64>) -> Vec<String> {
    let mut worst = 0f64;
    let mut bound = 0f64;
    let mut problems = Vec::new();
    for (name, q) in [
        ("0.01", 655u32),
        ("0.1", 6554),
        ("1", 65536),
        ("10", 655360),
    ] {
        let (fa, fb, ra, rb, ba, bb) = steady_gains(q, 4 << 16, 2000);
        let (ka, kb) = kalata_gains((q as f64 / 65536.0).sqrt());
        let (ea, eb) = ((fa - ka).abs(), (fb - kb).abs());
        let (la, lb) = (ba + (ra - ka).abs(), bb + (rb - kb).abs());
        worst = worst.max(ea).max(eb);
        bound = bound.max(la).max(lb);
        if ea > la || eb > lb {
            problems.push(format!(
                "steady gains at q = {name} off Kalata (1984) beyond their bound"
            ));
        }
        metrics.insert(format!("steady_alpha_fixed_q{name}"), fa);
        metrics.insert(format!("steady_alpha_kalata_q{name}"), ka);
        metrics.insert(format!("steady_beta_fixed_q{name}"), fb);
        metrics.insert(format!("steady_beta_kalata_q{name}"), kb);
    }
    metrics.insert("steady_gain_max_abs_err".into(), worst);
    metrics.insert("steady_gain_bound".into(), bound);
    problems
}

/// The drift-warning figures of the module docs, into `metrics`; the
/// failed checks.
fn warning_figures(
    cfg: &TrackConfig,
    m: &Measured,
    metrics: &mut BTreeMap<String, f64>,
) -> Vec<String> {
    let mut problems = Vec::new();
    let pairs: Vec<(f64, f64)> = m.etas.iter().map(|e| (e.0, e.1)).collect();
    let outside = m.etas.iter().filter(|e| !e.2).count();
    let uncertain = m.etas.iter().filter(|e| e.3).count();
    let eta = stats_of(&pairs);
    let mut put = |k: &str, v: f64| {
        metrics.insert(k.into(), v);
    };
    put("warn_raise_frames", cfg.warn_raise_frames as f64);
    put("warn_clear_frames", cfg.warn_clear_frames as f64);
    put(
        "settling_tau_frames",
        settling_time_constant(cfg.rho.accel_index_q16)
            .max(settling_time_constant(cfg.theta.accel_index_q16)),
    );
    put("warning_frame_delta", m.warn_delta as f64);
    put("warning_mismatch_frames", m.warn_mismatch as f64);
    put(
        "warning_presence_mismatch_frames",
        m.warn_presence_mismatch as f64,
    );
    put("warning_frames_to_cross_max_delta", m.eta_delta as f64);
    put("eta_max_abs_err_frames", eta.max_abs);
    put("eta_bound_frames", max_bound(&pairs));
    put("eta_samples", pairs.len() as f64);
    put("eta_samples_outside_range", outside as f64);
    put("eta_samples_uncertain", uncertain as f64);
    let t = &m.truth;
    let rs = ErrorStats::compare(&t.rho_err, &vec![0.0; t.rho_err.len()], 1.0);
    let ts = ErrorStats::compare(&t.theta_err, &vec![0.0; t.theta_err.len()], 1.0);
    put("tracking_error_rho_px_rms", rs.rmse);
    put("tracking_error_rho_px_max", rs.max_abs);
    put("tracking_error_theta_deg_rms", ts.rmse);
    put("tracking_error_theta_deg_max", ts.max_abs);
    put("frames_lost", t.frames_lost as f64);
    put("edge_frames", 2.0 * m.calls as f64);
    put("early_warning_frames", t.early_warning_frames as f64);
    put("missed_warning_frames", t.missed_warning_frames as f64);
    if let (Some(mn), Some(mx)) = (m.leads.iter().min(), m.leads.iter().max()) {
        put("warning_lead_frames_min", *mn as f64);
        put("warning_lead_frames_max", *mx as f64);
    }
    if let Some(w) = m.eta_errors.iter().map(|e| e.abs()).max() {
        put("first_warning_eta_abs_err_frames_max", w as f64);
    }
    if outside > 0 {
        problems.push(format!(
            "{outside} frames-to-crossing samples outside their allowed range"
        ));
    }
    if m.warn_first_missing > 0 {
        problems.push(format!(
            "{} sequences with a warning from one tracker only",
            m.warn_first_missing
        ));
    }
    if m.warn_delta != 0 {
        problems.push(format!(
            "first warning frame differs by {} (goal 0)",
            m.warn_delta
        ));
    }
    problems
}

/// The `track.tracker` row (the scenes are not used: the tracker's input
/// is lines). Its `max_abs_err` and `bound` are the rho position's (px);
/// theta, velocity, steady gains and the drift warning are in `metrics`
/// and fail the row as well (module docs).
pub fn check(_scenes: &[Scene]) -> Vec<KernelReport> {
    let cfg = TrackConfig::DEMO;
    let seqs = contract_sequences();
    let m = measure_sequences(cfg, &seqs);
    let mut row = KernelReport::from_stats(
        ID,
        KernelFamily::Track,
        Contract::Tolerance,
        max_bound(&m.rho),
        &stats_of(&m.rho),
        m.ops.clone().unwrap_or_default(),
    );
    let mut problems = m.problems.clone();
    let (rho_ratio, theta_ratio) = (worst_ratio(&m.rho), worst_ratio(&m.theta));
    let theta = stats_of(&m.theta);
    let mt = &mut row.metrics;
    mt.insert("rho_worst_err_to_bound".into(), rho_ratio);
    mt.insert("theta_max_abs_err_deg".into(), theta.max_abs);
    mt.insert("theta_rmse_deg".into(), theta.rmse);
    mt.insert("theta_bound_deg".into(), max_bound(&m.theta));
    mt.insert("theta_worst_err_to_bound".into(), theta_ratio);
    mt.insert("velocity_rho_max_abs_err_px_per_frame".into(), m.vel_rho);
    mt.insert(
        "velocity_theta_max_abs_err_deg_per_frame".into(),
        m.vel_theta,
    );
    mt.insert(
        "decision_mismatch_frames".into(),
        m.decision_mismatches as f64,
    );
    mt.insert("sequences".into(), seqs.len() as f64);
    problems.extend(steady_gain_figures(mt));
    problems.extend(warning_figures(&cfg, &m, mt));
    for (axis, r) in [("rho", rho_ratio), ("theta", theta_ratio)] {
        if r > 1.0 {
            problems.push(format!(
                "a {axis} sample exceeds its own bound (ratio {r:.3})"
            ));
        }
    }
    if m.decision_mismatches > 0 {
        problems.push(format!(
            "{} frames with different tracker decisions",
            m.decision_mismatches
        ));
    }
    row.notes.push(format!(
        "fixed vs f64 tracker over {} synthetic sequences of 300 frames (drift and theta wrap, \
         misses, occlusion, dropped frames, clutter): max_abs_err and bound are the rho \
         position in px (per-sample first-order rounding bound, max shown), theta_* the same \
         in degrees; ops are per frame",
        seqs.len()
    ));
    row.notes.push(
        "steady_*: alpha, beta after 2000 updates vs the Kalata (1984) closed form, \
         q = L^2 in {0.01, 0.1, 1, 10}"
            .into(),
    );
    row.notes.push(
        "warning_*, eta_*: per track and frame, fixed vs f64 frames-to-crossing (none = \
         horizon + 1) within the range the first-order state bound allows; warnings after \
         the debounce rule (raise after warn_raise_frames calls, clear after \
         warn_clear_frames), fixed vs f64 and timing vs truth; not a safety function"
            .into(),
    );
    for p in problems {
        row.fail(p);
    }
    vec![row]
}
