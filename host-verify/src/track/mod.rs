//! The `track` family: the fixed-point tracker (`fixsight::track`) against
//! an `f64` reference tracker, on synthetic measurement sequences, and
//! against the truth that generated them.
//!
//! One kernel id, `track.tracker` ([`fixsight::track::Tracker`], one call
//! of `Tracker::update` per frame; the drift warning is part of what that
//! call returns). Its report row carries the rho position error in px as
//! `max_abs_err` against `bound`; every other figure below is in the row's
//! `metrics` (`theta_*`, `velocity_*`, `steady_*`, `warning_*`, `eta_*`,
//! `tracking_error_*`, ...) and any failed check fails the row.
//!
//! > **Not a safety function.** The drift warning measured here is an aid,
//! > not a safety function; a vehicle that can hurt people needs
//! > safety-rated sensing and control (ISO 3691-4, IEC 61508, ISO 13849) and
//! > must follow local rules.
//!
//! # The `f64` reference ([`RefTracker`])
//!
//! The same rules as the kernel (module docs of `fixsight::track`: wrap,
//! gating, greedy association with its tie rule, birth by weight, drop
//! rules, crossing search) written in `f64` with no rounding: positions in
//! measurement units, the normalised covariance as real numbers, the gate as
//! `gate_q8 / 256`, `q00 = q / 4`, `q01 = q / 2`, `sin` and `cos` from the
//! standard library. The saturation limits of the kernel are applied as
//! `f64` clamps (they never act on the sequences below).
//!
//! # The tolerance contract (rho: `max_abs_err`, `bound`; theta: `theta_*`)
//!
//! While both trackers make the same decisions (same slots, ids, hits,
//! misses, confirmations), the fixed state differs from the reference only
//! by rounding. Each reference track carries a **first-order rounding-error
//! bound** of its state `(a, b, c, x, v)` per axis, as a zonotope (a list
//! of error generators; the bound on a component is the sum of the absolute
//! values of that component over all generators):
//!
//! * predict: every generator is mapped by the Jacobian of the predict step
//!   (`F` on `(x, v)`, `a + 2b + c`, `b + c`, `c` on the covariance); the
//!   exact differences `rs(q, 2)/2^16 - q/4` and `rs(q, 1)/2^16 - q/2` are
//!   added as a generator on `(a, b)`;
//! * update: every generator is mapped by the Jacobian of the update at the
//!   reference's values (`s = a + 1`, `y` the reference innovation):
//!   `a' = a/s`, `b' = b/s`, `c' = c - b^2/s`, `x' = x + (a/s) y`,
//!   `v' = v + (b/s) y`; then the kernel's roundings are added, each as one
//!   generator with its worst case from the formats: `k0` (2^-17, acting on
//!   `a'` and, times `y`, on `x'`), `k1` (2^-17 on `b'`, times `y` on `v'`,
//!   times `-b` on `c'`), `rs(k1 b, 16)` (2^-17 on `c'`), `rs(k0 y, 16)`
//!   and `rs(k1 y, 16)` (half a Q8 step, 2^-9 units, on `x'` and `v'`);
//! * birth: no error (both start from the same integers);
//! * a theta wrap negates the rho generators' `x` and `v` components.
//!
//! Products of two errors (of order 2^-34) are left out: the bound is
//! first order. It is computed along each sequence from the formats, never
//! fitted; the row fails unless every compared sample lies within its own
//! bound and the decisions of the two trackers agree in every frame.
//!
//! # Drift warning (`warning_*`, `eta_*`)
//!
//! Per track that may warn and per frame (both trackers agreeing on the
//! decisions), the fixed frames-to-crossing is compared with the
//! reference's, "no crossing within the horizon" counted as
//! `warn_horizon + 1`. The tolerance is derived per sample
//! ([`RefTrack::eta_range`]): the fixed count must lie between the first
//! `t` at which the reference distance `d(t)` comes within its first-order
//! error bound ([`RefTrack::distance_bound`]: the state bounds carried `t`
//! frames ahead, the slope of `d` in theta, the table-sine bound of
//! 1.617 Q15 LSB on `cos` and `sin`, the final half Q8 step) and the first
//! `t` at which it is past the edge by more than that bound. A sample
//! outside its range fails the row. `warning_frame_delta` (first frame with
//! a warning, fixed minus reference; goal 0) must be 0 too. The row also
//! carries the figures against the truth: tracking errors of the matched
//! confirmed track, `frames_lost`, warning lead, warnings raised more than
//! the horizon before the true crossing (`early_warning_frames`) and frames
//! of the last 30 before it without a warning (`missed_warning_frames`).
//!
//! # Steady-state gains (`steady_*`)
//!
//! Fed a measurement every frame, a constant-velocity Kalman filter
//! converges to the alpha-beta filter whose gains depend only on the
//! tracking index `L = sigma_a T^2 / sigma_v` (Kalata 1984, "The tracking
//! index: a generalized parameter for alpha-beta and alpha-beta-gamma
//! target trackers", IEEE Trans. AES 20(2)):
//! `alpha = -(L^2 + 8L - (L + 4) sqrt(L^2 + 8L)) / 8`,
//! `beta = (L^2 + 4L - L sqrt(L^2 + 8L)) / 4`. The row compares the fixed
//! filter's gains after 2000 updates with these closed forms for several
//! `L`; the bound is the first-order rounding bound of `(a, b)` above plus
//! the reference's own distance from the closed form.
//!
//! # Sequences ([`synth_sequence`])
//!
//! A 320 x 240 corrected image, lines measured from its centre, reference
//! point at the bottom-centre pixel (`TrackConfig::DEMO`). Two tape edges
//! (a tape 24 px wide) move with constant velocity in rho and theta; the
//! tape centre starts under the reference point and drifts so that the
//! point crosses one edge at about 60 % of the sequence; in the wrap
//! sequences theta passes through 0/180 degrees. Measurement noise: rho
//! sd 0.5 px, theta sd 0.3 degree, quantised to the measurement units.
//! Each edge is missed with probability 0.08, both edges for 4 frames of an
//! occlusion, 3 % of the frame numbers are skipped (dropped camera
//! frames), a shelf edge (a horizontal line 60 px above the centre) is seen
//! in 70 % of frames, and up to two random clutter lines per frame.
//!
//! # Golden kernel id `track.tracker`
//!
//! Params: `{"rho": {meas_var, accel_index_q16, init_vel_var_q16}, "theta":
//! {...}, gate_q8, confirm_hits, max_missed, birth_weight, reference_x_q4,
//! reference_y_q4, warn_horizon, warn_min_hits, slots, max_detections}` (`slots` = 4,
//! `max_detections` = 8: the const generics of the tracker both sides
//! build). Inputs: `frames` u32, width 2 (frame number, detection count),
//! one row per call; `dets` i32, width 3 (`rho_q4`, `theta`, `weight`),
//! the detections of all calls in order (at least one row: a sequence with
//! no detection carries one unused zero row). Outputs: `states` i32, width
//! [`STATE_FIELDS`], one row per call and slot (see [`state_row`]);
//! `report` i32, width 5 (associated, born, dropped, warning track id or
//! -1, warning frames or -1), one row per call.

use crate::contract::{Contract, KernelFamily, KernelReport};
use crate::family::{input, parse_params, Family};
use crate::golden::{Blob, GoldenCase};
use crate::metrics::ErrorStats;
use crate::opcount::{measure, OpsPerPx};
use crate::scene::Scene;
use fixsight::track::{AxisNoise, AxisState, Detection, FrameReport, Track, TrackConfig, Tracker};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};
use serde::Deserialize;
use serde_json::json;
use std::collections::BTreeMap;
use std::f64::consts::PI;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "track",
    kernels: &[ID],
    composed_on_host: false,
    check,
    golden_cases,
    run_vector,
};

/// Kernel id of the tracker (`fixsight::track::Tracker`, run frame by
/// frame through `Tracker::update`).
pub const ID: &str = "track.tracker";

/// Track slots of the verified tracker.
pub const SLOTS: usize = 4;
/// Detections per frame of the verified tracker.
pub const MAX_DETECTIONS: usize = 8;
/// The tracker both the host and the target harness build.
pub type DemoTracker = Tracker<SLOTS, MAX_DETECTIONS>;

/// Pixels per rho unit.
const PX_PER_U: f64 = 1.0 / 16.0;
/// Degrees per theta unit.
const DEG_PER_U: f64 = 180.0 / 65536.0;
const HALF_TURN_U: f64 = 65536.0;

// ---------------------------------------------------------------- reference

/// Error generators of one axis: `(a, b, c, x, v)` per generator.
#[derive(Debug, Clone, Default)]
pub struct Zonotope {
    gens: Vec<[f64; 5]>,
}

impl Zonotope {
    /// Bound on component `i` (0 `a`, 1 `b`, 2 `c`, 3 `x`, 4 `v`).
    pub fn bound(&self, i: usize) -> f64 {
        self.gens.iter().map(|g| g[i].abs()).sum()
    }

    fn map(&mut self, j: &[[f64; 5]; 5]) {
        for g in &mut self.gens {
            let old = *g;
            for (r, row) in j.iter().enumerate() {
                g[r] = row.iter().zip(old.iter()).map(|(m, e)| m * e).sum();
            }
        }
    }

    fn push(&mut self, g: [f64; 5]) {
        if g.iter().any(|v| *v != 0.0) {
            self.gens.push(g);
        }
    }
}

/// One axis of a reference track.
#[derive(Debug, Clone, Default)]
pub struct RefAxis {
    /// Position, units.
    pub x: f64,
    /// Velocity, units per frame.
    pub v: f64,
    /// Normalised covariance `P~00`.
    pub a: f64,
    /// `P~01`.
    pub b: f64,
    /// `P~11`.
    pub c: f64,
    /// First-order rounding-error bound of the fixed-point twin.
    pub err: Zonotope,
}

const COV_MAX: f64 = 2147483647.0 / 65536.0;

impl RefAxis {
    /// A new axis at measurement `z` (units).
    pub fn born(z: f64, init_vel_var_q16: u32) -> Self {
        RefAxis {
            x: z,
            v: 0.0,
            a: 1.0,
            b: 0.0,
            c: init_vel_var_q16 as f64 / 65536.0,
            err: Zonotope::default(),
        }
    }

    /// Predict one frame (`q_q16` = `accel_index_q16`).
    pub fn predict(&mut self, q_q16: u32, pos_limit: Option<f64>) {
        let q = q_q16 as f64 / 65536.0;
        self.x += self.v;
        if let Some(l) = pos_limit {
            self.x = self.x.clamp(-l, l);
        }
        let (a, b, c) = (self.a, self.b, self.c);
        self.a = (a + 2.0 * b + c + q / 4.0).clamp(0.0, COV_MAX);
        self.b = (b + c + q / 2.0).clamp(-COV_MAX, COV_MAX);
        self.c = (c + q).clamp(0.0, COV_MAX);
        self.err.map(&[
            [1.0, 2.0, 1.0, 0.0, 0.0],
            [0.0, 1.0, 1.0, 0.0, 0.0],
            [0.0, 0.0, 1.0, 0.0, 0.0],
            [0.0, 0.0, 0.0, 1.0, 1.0],
            [0.0, 0.0, 0.0, 0.0, 1.0],
        ]);
        let q00 = fixsight_rs(q_q16 as i64, 2) as f64 / 65536.0 - q / 4.0;
        let q01 = fixsight_rs(q_q16 as i64, 1) as f64 / 65536.0 - q / 2.0;
        self.err.push([q00, q01, 0.0, 0.0, 0.0]);
    }

    /// Update with innovation `y` (units).
    pub fn update(&mut self, y: f64, pos_limit: Option<f64>) {
        let (a, b, c) = (self.a, self.b, self.c);
        let s = a + 1.0;
        let (k0, k1) = (a / s, b / s);
        self.err.map(&[
            [1.0 / (s * s), 0.0, 0.0, 0.0, 0.0],
            [-b / (s * s), 1.0 / s, 0.0, 0.0, 0.0],
            [b * b / (s * s), -2.0 * b / s, 1.0, 0.0, 0.0],
            [y / (s * s), 0.0, 0.0, 1.0 - k0, 0.0],
            [-b * y / (s * s), y / s, 0.0, -k1, 1.0],
        ]);
        let half_cov = 0.5 / 65536.0;
        let half_pos = 0.5 / 256.0;
        self.err.push([half_cov, 0.0, 0.0, y * half_cov, 0.0]);
        self.err
            .push([0.0, half_cov, -b * half_cov, 0.0, y * half_cov]);
        self.err.push([0.0, 0.0, half_cov, 0.0, 0.0]);
        self.err.push([0.0, 0.0, 0.0, half_pos, 0.0]);
        self.err.push([0.0, 0.0, 0.0, 0.0, half_pos]);
        self.x += k0 * y;
        if let Some(l) = pos_limit {
            self.x = self.x.clamp(-l, l);
        }
        self.v = (self.v + k1 * y).clamp(-32768.0, 32768.0);
        self.c = (c - k1 * b).clamp(0.0, COV_MAX);
        self.a = k0;
        self.b = k1;
    }

    fn nis(&self, y: f64, meas_var: u32) -> f64 {
        y * y / (meas_var as f64 * (self.a + 1.0))
    }
}

/// `(x + 2^(s-1)) >> s` (the kernel's rounding, for the exact `q` terms).
fn fixsight_rs(x: i64, s: u32) -> i64 {
    (x + (1 << (s - 1))) >> s
}

/// One reference track.
#[derive(Debug, Clone)]
pub struct RefTrack {
    /// Id.
    pub id: u16,
    /// Rho axis (units of 1/16 px).
    pub rho: RefAxis,
    /// Theta axis (binary-angle units, `[0, 65536)`).
    pub theta: RefAxis,
    /// Hits.
    pub hits: u16,
    /// Misses in a row.
    pub missed: u8,
    /// Confirmed.
    pub confirmed: bool,
    /// Side of the reference point.
    pub side: i8,
    /// Frames to the crossing (confirmed tracks).
    pub frames_to_cross: Option<u16>,
}

const RHO_POS_LIMIT: f64 = 131072.0;

impl RefTrack {
    fn wrap(&mut self) {
        let n = (self.theta.x / HALF_TURN_U).floor();
        self.theta.x -= n * HALF_TURN_U;
        if (n as i64).rem_euclid(2) == 1 {
            self.rho.x = -self.rho.x;
            self.rho.v = -self.rho.v;
            self.side = -self.side;
            for g in &mut self.rho.err.gens {
                g[3] = -g[3];
                g[4] = -g[4];
            }
        }
    }

    fn predict(&mut self, cfg: &TrackConfig) {
        self.rho
            .predict(cfg.rho.accel_index_q16, Some(RHO_POS_LIMIT));
        self.theta.predict(cfg.theta.accel_index_q16, None);
        self.wrap();
    }

    fn innovation(&self, d: &Detection) -> (f64, f64) {
        let zt = d.theta as f64;
        let diff = zt - self.theta.x;
        let zr = d.rho_q4 as f64;
        if diff > HALF_TURN_U / 2.0 {
            (-zr - self.rho.x, diff - HALF_TURN_U)
        } else if diff < -HALF_TURN_U / 2.0 {
            (-zr - self.rho.x, diff + HALF_TURN_U)
        } else {
            (zr - self.rho.x, diff)
        }
    }

    fn gate(&self, d: &Detection, cfg: &TrackConfig) -> f64 {
        let (yr, yt) = self.innovation(d);
        self.rho.nis(yr, cfg.rho.meas_var) + self.theta.nis(yt, cfg.theta.meas_var)
    }

    fn update(&mut self, d: &Detection) {
        let (yr, yt) = self.innovation(d);
        self.rho.update(yr, Some(RHO_POS_LIMIT));
        self.theta.update(yt, None);
        self.wrap();
        self.hits = self.hits.saturating_add(1);
        self.missed = 0;
    }

    /// Signed distance (units of 1/16 px) of `point` to the line `t`
    /// frames ahead.
    pub fn distance(&self, point: (i32, i32), t: f64) -> f64 {
        let th = (self.theta.x + t * self.theta.v) * PI / HALF_TURN_U;
        point.0 as f64 * th.cos() + point.1 as f64 * th.sin() - (self.rho.x + t * self.rho.v)
    }

    /// First-order bound on `|d_fixed(t) - d(t)|` (units of 1/16 px): the
    /// rho and theta error zonotopes carried `t` frames ahead, the slope of
    /// `d` in theta, the table-sine bound (1.617 Q15 LSB on each of `cos`
    /// and `sin`) and the final half Q8 step of the kernel's `rs(., 7)`.
    pub fn distance_bound(&self, point: (i32, i32), t: f64) -> f64 {
        let ahead = |z: &Zonotope| -> f64 { z.gens.iter().map(|g| (g[3] + t * g[4]).abs()).sum() };
        let rho_b = ahead(&self.rho.err);
        let dth = ahead(&self.theta.err) * PI / HALF_TURN_U;
        let th = (self.theta.x + t * self.theta.v) * PI / HALF_TURN_U;
        let (px, py) = (point.0 as f64, point.1 as f64);
        let slope = (-px * th.sin() + py * th.cos()).abs();
        let mag = px.abs() + py.abs();
        rho_b + slope * dth + mag * dth * dth / 2.0 + mag * 1.617 / 32768.0 + 0.5 / 256.0
    }

    /// The frames-to-crossing of the reference and the range `lo ..= hi`
    /// the fixed tracker's must lie in, "no crossing within the horizon"
    /// encoded as `warn_horizon + 1`: `lo` is the first `t` at which the
    /// fixed sign may already be "crossed", `hi` the first `t` at which it
    /// must be.
    pub fn eta_range(&self, cfg: &TrackConfig) -> (u32, u32, u32) {
        let h = cfg.warn_horizon as u32;
        let side = self.side as f64;
        let (mut eta, mut lo, mut hi) = (h + 1, h + 1, h + 1);
        for t in 0..=h {
            let d = side * self.distance(cfg.reference_q4, t as f64);
            let b = self.distance_bound(cfg.reference_q4, t as f64);
            if d <= 0.0 && eta > h {
                eta = t;
            }
            if d <= b && lo > h {
                lo = t;
            }
            if d <= -b {
                hi = t;
                break;
            }
        }
        (eta, lo, hi)
    }

    fn crossing(&self, cfg: &TrackConfig) -> Option<u16> {
        let side = self.side as f64;
        if side * self.distance(cfg.reference_q4, 0.0) <= 0.0 {
            return Some(0);
        }
        (1..=cfg.warn_horizon).find(|&t| side * self.distance(cfg.reference_q4, t as f64) <= 0.0)
    }
}

/// The `f64` reference tracker (same rules as the kernel).
#[derive(Debug, Clone)]
pub struct RefTracker {
    cfg: TrackConfig,
    /// Slots.
    pub slots: Vec<Option<RefTrack>>,
    last_frame: Option<u32>,
    next_id: u16,
}

impl RefTracker {
    /// An empty tracker with `slots` slots.
    pub fn new(cfg: TrackConfig, slots: usize) -> Self {
        Self {
            cfg,
            slots: vec![None; slots],
            last_frame: None,
            next_id: 0,
        }
    }

    fn dropped(&self, t: &RefTrack) -> bool {
        if t.confirmed {
            t.missed > self.cfg.max_missed
        } else {
            t.missed > 0
        }
    }

    /// One frame. Frame numbers must increase (the caller's sequences do).
    pub fn update(&mut self, frame: u32, dets: &[Detection]) -> FrameReport {
        let gap = self.last_frame.map_or(1, |l| frame - l);
        self.last_frame = Some(frame);
        let cfg = self.cfg;
        let mut rep = FrameReport::default();
        for i in 0..self.slots.len() {
            let Some(mut t) = self.slots[i].take() else {
                continue;
            };
            let mut keep = true;
            for step in 1..=gap {
                t.predict(&cfg);
                if step == gap {
                    break;
                }
                t.missed = t.missed.saturating_add(1);
                if self.dropped(&t) {
                    keep = false;
                    rep.dropped += 1;
                    break;
                }
            }
            if keep {
                self.slots[i] = Some(t);
            }
        }
        let gate = cfg.gate_q8 as f64 / 256.0;
        let gates: Vec<Vec<f64>> = self
            .slots
            .iter()
            .map(|s| {
                dets.iter()
                    .map(|d| s.as_ref().map_or(f64::INFINITY, |t| t.gate(d, &cfg)))
                    .collect()
            })
            .collect();
        let mut used: Vec<bool> = (0..dets.len())
            .map(|j| gates.iter().any(|row| row[j] <= gate))
            .collect();
        let mut track_taken = vec![false; self.slots.len()];
        let mut det_taken = vec![false; dets.len()];
        loop {
            let mut best: Option<(f64, usize, usize)> = None;
            for (i, row) in gates.iter().enumerate() {
                if track_taken[i] {
                    continue;
                }
                for (j, &g) in row.iter().enumerate() {
                    if det_taken[j] || g > gate {
                        continue;
                    }
                    if best.is_none_or(|(bg, _, _)| g < bg) {
                        best = Some((g, i, j));
                    }
                }
            }
            let Some((_, i, j)) = best else { break };
            track_taken[i] = true;
            det_taken[j] = true;
            if let Some(t) = self.slots[i].as_mut() {
                t.update(&dets[j]);
                if t.hits >= cfg.confirm_hits as u16 {
                    t.confirmed = true;
                }
                rep.associated += 1;
            }
        }
        let (confirmed_limit, tentative_limit) = (cfg.max_missed, 0u8);
        for (slot, &taken) in self.slots.iter_mut().zip(&track_taken) {
            let Some(t) = slot.as_mut() else { continue };
            if taken {
                continue;
            }
            t.missed = t.missed.saturating_add(1);
            let limit = if t.confirmed {
                confirmed_limit
            } else {
                tentative_limit
            };
            if t.missed > limit {
                *slot = None;
                rep.dropped += 1;
            }
        }
        loop {
            let best = dets
                .iter()
                .enumerate()
                .filter(|(j, d)| !used[*j] && d.weight >= cfg.birth_weight)
                .fold(None::<(u32, usize)>, |b, (j, d)| match b {
                    Some((w, _)) if d.weight <= w => b,
                    _ => Some((d.weight, j)),
                });
            let Some((_, j)) = best else { break };
            used[j] = true;
            let Some(free) = self.slots.iter().position(Option::is_none) else {
                break;
            };
            let d = &dets[j];
            let mut t = RefTrack {
                id: self.next_id,
                rho: RefAxis::born(d.rho_q4 as f64, cfg.rho.init_vel_var_q16),
                theta: RefAxis::born(d.theta as f64, cfg.theta.init_vel_var_q16),
                hits: 1,
                missed: 0,
                confirmed: cfg.confirm_hits <= 1,
                side: 1,
                frames_to_cross: None,
            };
            if t.distance(cfg.reference_q4, 0.0) < 0.0 {
                t.side = -1;
            }
            self.next_id = self.next_id.wrapping_add(1);
            self.slots[free] = Some(t);
            rep.born += 1;
        }
        for (i, s) in self.slots.iter_mut().enumerate() {
            let Some(t) = s else { continue };
            t.frames_to_cross = if t.confirmed && t.hits >= cfg.warn_min_hits {
                t.crossing(&cfg)
            } else {
                None
            };
            if let Some(frames) = t.frames_to_cross {
                if rep.warning.is_none_or(|w| frames < w.frames) {
                    rep.warning = Some(fixsight::track::DriftWarning {
                        track_id: t.id,
                        slot: i as u8,
                        frames,
                    });
                }
            }
        }
        rep
    }
}

// ---------------------------------------------------------------- sequences

/// One call of the tracker.
#[derive(Debug, Clone)]
pub struct SeqFrame {
    /// Frame number.
    pub frame: u32,
    /// Detections, strongest first.
    pub dets: Vec<Detection>,
}

/// A true line in the lines' frame: `rho` in px, `theta` in radians in
/// `[0, pi)`.
#[derive(Debug, Clone, Copy)]
pub struct TrueLine {
    /// Distance from the image centre, px.
    pub rho: f64,
    /// Normal angle, radians, `[0, pi)`.
    pub theta: f64,
}

/// A synthetic measurement sequence and its truth.
#[derive(Debug, Clone)]
pub struct Sequence {
    /// Name.
    pub name: String,
    /// Seed.
    pub seed: u64,
    /// Calls of the tracker (skipped frame numbers do not appear).
    pub frames: Vec<SeqFrame>,
    /// The two tape edges at every call.
    pub truth: Vec<[TrueLine; 2]>,
    /// First frame number at which the reference point is on or past a
    /// tape edge (true lines), if within the sequence.
    pub true_crossing: Option<u32>,
}

/// `(rho, theta)` with theta folded into `[0, pi)` (rho negated when
/// folded).
fn canonical(rho: f64, theta: f64) -> TrueLine {
    let n = (theta / PI).floor();
    let th = theta - n * PI;
    if (n as i64).rem_euclid(2) == 1 {
        TrueLine {
            rho: -rho,
            theta: th,
        }
    } else {
        TrueLine { rho, theta: th }
    }
}

fn quantise(l: TrueLine, weight: u32) -> Detection {
    let c = canonical(l.rho, l.theta);
    let theta = ((c.theta / PI * 65536.0).round() as i64).rem_euclid(65536);
    // theta rounding to 65536 means 180 degrees: the same line at 0 with -rho.
    let (rho, theta) = if (c.theta / PI * 65536.0).round() as i64 >= 65536 {
        (-c.rho, 0)
    } else {
        (c.rho, theta)
    };
    Detection {
        rho_q4: (rho * 16.0).round() as i32,
        theta: theta as u16,
        weight,
    }
}

/// Signed distance (px) of the reference point to a true line.
fn true_distance(cfg: &TrackConfig, l: TrueLine) -> f64 {
    let (px, py) = (
        cfg.reference_q4.0 as f64 / 16.0,
        cfg.reference_q4.1 as f64 / 16.0,
    );
    px * l.theta.cos() + py * l.theta.sin() - l.rho
}

/// A sequence of `n` frames from `seed` (see the module docs). `wrap`
/// makes theta pass through 0/180 degrees about a third of the way in.
pub fn synth_sequence(seed: u64, n: u32, wrap: bool) -> Sequence {
    let cfg = TrackConfig::DEMO;
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let py = cfg.reference_q4.1 as f64 / 16.0;
    let half_width = 12.0;
    // Angular velocity 0.01 .. 0.04 degree/frame, either sign.
    let omega = rng.random_range(0.01f64..0.04).to_radians()
        * if rng.random_bool(0.5) { 1.0 } else { -1.0 };
    let theta0 = if wrap {
        -omega * n as f64 / 3.0
    } else {
        rng.random_range(3.0f64..20.0).to_radians()
    };
    let offset = rng.random_range(-3.0f64..3.0);
    let rho0 = py * theta0.sin() - offset;
    let t_cross = rng.random_range(0.5f64..0.7) * n as f64;
    let target = if rng.random_bool(0.5) {
        half_width
    } else {
        -half_width
    };
    // d_c(t) ~ d_c(0) + (py cos(theta0) omega - v) t reaches the target.
    let v_rho = py * theta0.cos() * omega - (target - offset) / t_cross;
    let line = |t: f64, k: f64| TrueLine {
        rho: rho0 + v_rho * t + k * half_width,
        theta: theta0 + omega * t,
    };
    let noise_rho = Normal::new(0.0, 0.5).expect("finite sd");
    let noise_theta = Normal::new(0.0, 0.3f64.to_radians()).expect("finite sd");
    let weight = Normal::new(150.0, 20.0).expect("finite sd");
    let occlusion = rng.random_range(n / 4..n / 2);
    let mut frames = Vec::new();
    let mut truth = Vec::new();
    let mut true_crossing = None;
    for f in 0..n {
        let t = f as f64;
        let edges = [line(t, -1.0), line(t, 1.0)];
        let canon = edges.map(|l| canonical(l.rho, l.theta));
        if true_crossing.is_none() {
            // The point is inside the tape while its distances to the two
            // edges have opposite signs.
            let d0 = true_distance(&cfg, edges[0]);
            let d1 = true_distance(&cfg, edges[1]);
            if d0 * d1 >= 0.0 {
                true_crossing = Some(f);
            }
        }
        if f > 0 && rng.random_bool(0.03) {
            continue; // dropped camera frame
        }
        let mut dets = Vec::new();
        for l in edges {
            if (occlusion..occlusion + 4).contains(&f) || rng.random_bool(0.08) {
                continue;
            }
            let noisy = TrueLine {
                rho: l.rho + noise_rho.sample(&mut rng),
                theta: l.theta + noise_theta.sample(&mut rng),
            };
            let w = f64::max(weight.sample(&mut rng), 1.0) as u32;
            dets.push(quantise(noisy, w));
        }
        if rng.random_bool(0.7) {
            let shelf = TrueLine {
                rho: -60.0 + noise_rho.sample(&mut rng),
                theta: PI / 2.0 + noise_theta.sample(&mut rng),
            };
            dets.push(quantise(shelf, rng.random_range(60..120)));
        }
        let clutter = match rng.random_range(0..10) {
            0..6 => 0,
            6..9 => 1,
            _ => 2,
        };
        for _ in 0..clutter {
            let l = TrueLine {
                rho: rng.random_range(-150.0..150.0),
                theta: rng.random_range(0.0..PI),
            };
            dets.push(quantise(l, rng.random_range(10..120)));
        }
        dets.sort_by_key(|d| std::cmp::Reverse(d.weight));
        frames.push(SeqFrame { frame: f, dets });
        truth.push(canon);
    }
    Sequence {
        name: format!("{}-{seed}", if wrap { "wrap" } else { "drift" }),
        seed,
        frames,
        truth,
        true_crossing,
    }
}

/// The sequences of the contract: four drifting and four wrapping, 300
/// frames each.
pub fn contract_sequences() -> Vec<Sequence> {
    (0..8)
        .map(|i| synth_sequence(0x7_2AC0 + i, 300, i % 2 == 1))
        .collect()
}

// ---------------------------------------------------------------- runs

/// Output of one call of the fixed tracker.
#[derive(Debug, Clone)]
pub struct FixedFrame {
    /// Slots after the call.
    pub slots: [Option<Track>; SLOTS],
    /// The report.
    pub report: FrameReport,
}

/// Runs the kernel over a sequence.
pub fn run_fixed(cfg: TrackConfig, frames: &[SeqFrame]) -> Result<Vec<FixedFrame>, String> {
    let mut t = DemoTracker::new(cfg).map_err(|e| e.to_string())?;
    frames
        .iter()
        .map(|f| {
            let report = t
                .update(f.frame, &f.dets)
                .map_err(|e| format!("frame {}: {e}", f.frame))?;
            let mut slots = [None; SLOTS];
            for (i, s) in slots.iter_mut().enumerate() {
                *s = t.slot(i).copied();
            }
            Ok(FixedFrame { slots, report })
        })
        .collect()
}

/// Output of one call of the reference.
#[derive(Debug, Clone)]
pub struct RefFrame {
    /// Slots after the call.
    pub slots: Vec<Option<RefTrack>>,
    /// The report.
    pub report: FrameReport,
}

/// Runs the reference over a sequence.
pub fn run_reference(cfg: TrackConfig, frames: &[SeqFrame]) -> Vec<RefFrame> {
    let mut t = RefTracker::new(cfg, SLOTS);
    frames
        .iter()
        .map(|f| {
            let report = t.update(f.frame, &f.dets);
            RefFrame {
                slots: t.slots.clone(),
                report,
            }
        })
        .collect()
}

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

/// Warning comparison of one sequence: `(first fixed warning frame, first
/// reference warning frame, frames where presence or count differ, max
/// |count difference| where both warn)`.
pub fn compare_warnings(
    seq: &Sequence,
    fixed: &[FixedFrame],
    reference: &[RefFrame],
) -> (Option<u32>, Option<u32>, usize, u32) {
    let first = |w: &dyn Fn(usize) -> bool| {
        seq.frames
            .iter()
            .enumerate()
            .find(|(i, _)| w(*i))
            .map(|(_, f)| f.frame)
    };
    let ff = first(&|i| fixed[i].report.warning.is_some());
    let fr = first(&|i| reference[i].report.warning.is_some());
    let mut mismatches = 0;
    let mut max_delta = 0u32;
    for (a, b) in fixed.iter().zip(reference) {
        match (a.report.warning, b.report.warning) {
            (Some(x), Some(y)) => {
                let d = (x.frames as i32 - y.frames as i32).unsigned_abs();
                max_delta = max_delta.max(d);
                if d != 0 || x.track_id != y.track_id {
                    mismatches += 1;
                }
            }
            (None, None) => {}
            _ => mismatches += 1,
        }
    }
    (ff, fr, mismatches, max_delta)
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

// ---------------------------------------------------------------- Kalata

/// Kalata's (1984) steady-state `(alpha, beta)` for tracking index `l`.
pub fn kalata_gains(l: f64) -> (f64, f64) {
    let r = (l * l + 8.0 * l).sqrt();
    (
        -(l * l + 8.0 * l - (l + 4.0) * r) / 8.0,
        (l * l + 4.0 * l - l * r) / 4.0,
    )
}

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

// ---------------------------------------------------------------- report

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
        let (ff, fr, wm, ed) = compare_warnings(s, &fixed, &reference);
        match (ff, fr) {
            (Some(a), Some(b)) => m.warn_delta = m.warn_delta.max((a as i64 - b as i64).abs()),
            (None, None) => {}
            _ => m.warn_mismatch += 1,
        }
        m.warn_mismatch += wm;
        m.eta_delta = m.eta_delta.max(ed);
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
fn warning_figures(m: &Measured, metrics: &mut BTreeMap<String, f64>) -> Vec<String> {
    let mut problems = Vec::new();
    let pairs: Vec<(f64, f64)> = m.etas.iter().map(|e| (e.0, e.1)).collect();
    let outside = m.etas.iter().filter(|e| !e.2).count();
    let uncertain = m.etas.iter().filter(|e| e.3).count();
    let eta = stats_of(&pairs);
    let mut put = |k: &str, v: f64| {
        metrics.insert(k.into(), v);
    };
    put("warning_frame_delta", m.warn_delta as f64);
    put("warning_mismatch_frames", m.warn_mismatch as f64);
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
    problems.extend(warning_figures(&m, mt));
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
         horizon + 1) within the range the first-order state bound allows; tracking errors \
         and warning timing vs truth; not a safety function"
            .into(),
    );
    for p in problems {
        row.fail(p);
    }
    vec![row]
}

// ---------------------------------------------------------------- golden

/// Fields per row of the `states` output.
pub const STATE_FIELDS: usize = fixsight::track::TRACK_WORDS;

/// One `states` row (`fixsight::track::track_words`).
pub fn state_row(t: Option<&Track>) -> [i32; STATE_FIELDS] {
    fixsight::track::track_words(t)
}

/// One `report` row.
pub fn report_row(r: &FrameReport) -> [i32; 5] {
    [
        r.associated as i32,
        r.born as i32,
        r.dropped as i32,
        r.warning.map_or(-1, |w| w.track_id as i32),
        r.warning.map_or(-1, |w| w.frames as i32),
    ]
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct AxisParams {
    meas_var: u32,
    accel_index_q16: u32,
    init_vel_var_q16: u32,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Params {
    rho: AxisParams,
    theta: AxisParams,
    gate_q8: u32,
    confirm_hits: u8,
    max_missed: u8,
    birth_weight: u32,
    reference_x_q4: i32,
    reference_y_q4: i32,
    warn_horizon: u16,
    warn_min_hits: u16,
    slots: usize,
    max_detections: usize,
}

fn params_json(c: &TrackConfig) -> serde_json::Value {
    let ax = |a: &AxisNoise| {
        json!({"meas_var": a.meas_var, "accel_index_q16": a.accel_index_q16,
               "init_vel_var_q16": a.init_vel_var_q16})
    };
    json!({
        "rho": ax(&c.rho), "theta": ax(&c.theta), "gate_q8": c.gate_q8,
        "confirm_hits": c.confirm_hits, "max_missed": c.max_missed,
        "birth_weight": c.birth_weight, "reference_x_q4": c.reference_q4.0,
        "reference_y_q4": c.reference_q4.1, "warn_horizon": c.warn_horizon,
        "warn_min_hits": c.warn_min_hits,
        "slots": SLOTS, "max_detections": MAX_DETECTIONS,
    })
}

fn inputs_of(frames: &[SeqFrame]) -> Vec<Blob> {
    let f: Vec<u32> = frames
        .iter()
        .flat_map(|f| [f.frame, f.dets.len() as u32])
        .collect();
    let mut d: Vec<i32> = frames
        .iter()
        .flat_map(|f| f.dets.iter())
        .flat_map(|d| [d.rho_q4, d.theta as i32, d.weight as i32])
        .collect();
    if d.is_empty() {
        d = vec![0; 3];
    }
    vec![
        Blob::from_u32("frames", 2, frames.len(), 1, &f),
        Blob::from_i32("dets", 3, d.len() / 3, 1, &d),
    ]
}

fn outputs_of(run: &[FixedFrame]) -> Vec<Blob> {
    let states: Vec<i32> = run
        .iter()
        .flat_map(|f| f.slots.iter().flat_map(|s| state_row(s.as_ref())))
        .collect();
    let reports: Vec<i32> = run.iter().flat_map(|f| report_row(&f.report)).collect();
    vec![
        Blob::from_i32("states", STATE_FIELDS, run.len() * SLOTS, 1, &states),
        Blob::from_i32("report", 5, run.len(), 1, &reports),
    ]
}

/// Recomputes a `track.tracker` vector.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    if kernel != ID {
        return Err(format!("unknown kernel `{kernel}`"));
    }
    let p: Params = parse_params(kernel, params)?;
    if (p.slots, p.max_detections) != (SLOTS, MAX_DETECTIONS) {
        return Err(format!(
            "slots/max_detections {}/{} differ from the verified tracker's {SLOTS}/{MAX_DETECTIONS}",
            p.slots, p.max_detections
        ));
    }
    let ax = |a: &AxisParams| AxisNoise {
        meas_var: a.meas_var,
        accel_index_q16: a.accel_index_q16,
        init_vel_var_q16: a.init_vel_var_q16,
    };
    let cfg = TrackConfig {
        rho: ax(&p.rho),
        theta: ax(&p.theta),
        gate_q8: p.gate_q8,
        confirm_hits: p.confirm_hits,
        max_missed: p.max_missed,
        birth_weight: p.birth_weight,
        reference_q4: (p.reference_x_q4, p.reference_y_q4),
        warn_horizon: p.warn_horizon,
        warn_min_hits: p.warn_min_hits,
    };
    let (bf, bd) = (input(inputs, "frames")?, input(inputs, "dets")?);
    if bf.width != 2 || bd.width != 3 {
        return Err("frames must be 2 wide and dets 3 wide".into());
    }
    let f = bf.to_u32()?;
    let d = bd.to_i32()?;
    let mut frames = Vec::new();
    let mut at = 0usize;
    for row in f.chunks_exact(2) {
        let n = row[1] as usize;
        let slice = d
            .get(3 * at..3 * (at + n))
            .ok_or("frames announce more detections than dets holds")?;
        at += n;
        frames.push(SeqFrame {
            frame: row[0],
            dets: slice
                .chunks_exact(3)
                .map(|c| Detection {
                    rho_q4: c[0],
                    theta: c[1] as u16,
                    weight: c[2] as u32,
                })
                .collect(),
        });
    }
    Ok(outputs_of(&run_fixed(cfg, &frames)?))
}

fn case(id: &str, comment: &str, cfg: &TrackConfig, frames: &[SeqFrame]) -> GoldenCase {
    let expected = outputs_of(&run_fixed(*cfg, frames).expect("golden sequences are valid"));
    GoldenCase {
        id: id.into(),
        comment: comment.into(),
        kernel: ID.into(),
        params: params_json(cfg),
        inputs: inputs_of(frames),
        expected,
    }
}

/// Golden cases: a wrapping demo sequence, and a saturating one.
pub fn golden_cases(_scenes: &[Scene]) -> Vec<GoldenCase> {
    let cfg = TrackConfig::DEMO;
    let demo = synth_sequence(0x7_2AC1, 120, true);
    let mut extreme = cfg;
    extreme.rho.accel_index_q16 = 1 << 24;
    extreme.theta.accel_index_q16 = 1 << 24;
    extreme.rho.init_vel_var_q16 = 1 << 28;
    extreme.theta.meas_var = 1;
    extreme.max_missed = 255;
    extreme.confirm_hits = 1;
    extreme.gate_q8 = u32::MAX;
    extreme.birth_weight = 0;
    extreme.reference_q4 = ((1 << 17) - 1, -(1 << 17) + 1);
    extreme.warn_horizon = 1024;
    extreme.warn_min_hits = 0;
    let lim = (1 << 17) - 1;
    let mut rng = ChaCha8Rng::seed_from_u64(0x7_2AC2);
    let mut frame = 0u32;
    let extreme_frames: Vec<SeqFrame> = (0..40)
        .map(|i| {
            frame += [1, 1, 7, 300][rng.random_range(0..4)];
            let n = rng.random_range(0..=MAX_DETECTIONS);
            let dets = (0..n)
                .map(|_| Detection {
                    rho_q4: if i % 2 == 0 { lim } else { -lim }
                        * if rng.random_bool(0.5) { 1 } else { -1 },
                    theta: rng.random(),
                    weight: rng.random_range(0..4),
                })
                .collect();
            SeqFrame { frame, dets }
        })
        .collect();
    vec![
        case(
            "track.tracker.demo-wrap",
            "120 frames of two tape edges drifting toward the reference point while theta \
             passes 0/180 degrees; misses, an occlusion, dropped frame numbers, a shelf edge \
             and clutter",
            &cfg,
            &demo.frames,
        ),
        case(
            "track.tracker.extremes",
            "largest process noise and velocity prior, rho at +-(2^17 - 1), any theta, gate \
             wide open, frame gaps up to 300: saturation and wrap rules",
            &extreme,
            &extreme_frames,
        ),
    ]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sine_table_error_within_the_stated_bound() {
        // Every angle on a 1/256-step grid of a quarter of the table's
        // resolution over the full turn: the stated 1.617 LSB bound.
        let mut worst = 0f64;
        for a in (0..(1i32 << 25)).step_by(61) {
            let exact = (a as f64 / (1u64 << 25) as f64 * 2.0 * PI).sin() * 32768.0;
            worst = worst.max((fixsight::track::sin_q15(a) as f64 - exact).abs());
        }
        assert!(worst <= 1.617, "worst {worst}");
        assert!(worst > 0.5, "the check can fail: worst {worst}");
    }

    #[test]
    fn kalata_matches_the_reference_filter_limit() {
        // The f64 reference filter's own steady state equals Kalata's closed
        // form (Kalata 1984, "The tracking index", IEEE Trans. AES 20(2)).
        for q in [0.0001f64, 0.01, 1.0, 100.0] {
            let mut r = RefAxis::born(0.0, 4 << 16);
            let q16 = (q * 65536.0).round() as u32;
            for _ in 0..5000 {
                r.predict(q16, None);
                r.update(0.0, None);
            }
            let (ka, kb) = kalata_gains((q16 as f64 / 65536.0).sqrt());
            assert!((r.a - ka).abs() < 1e-9, "q={q}: alpha {} vs {ka}", r.a);
            assert!((r.b - kb).abs() < 1e-9, "q={q}: beta {} vs {kb}", r.b);
        }
        // The closed form satisfies the tracking-index definition
        // L^2 = beta^2 / (1 - alpha) and the optimal alpha-beta relation
        // beta = 2 (2 - alpha) - 4 sqrt(1 - alpha) (both from memory of
        // Kalata 1984); L = 1 gives alpha = 3/4, beta = 1/2 by hand.
        for l in [0.05f64, 0.3, 1.0, 4.0] {
            let (a, b) = kalata_gains(l);
            assert!((b * b / (1.0 - a) - l * l).abs() < 1e-9 * (1.0 + l * l));
            assert!((2.0 * (2.0 - a) - 4.0 * (1.0 - a).sqrt() - b).abs() < 1e-12);
        }
        let (a, b) = kalata_gains(1.0);
        assert!(
            (a - 0.75).abs() < 1e-15 && (b - 0.5).abs() < 1e-15,
            "{a} {b}"
        );
    }

    #[test]
    fn fixed_gains_within_bound_of_kalata() {
        for q in [655u32, 6554, 65536, 655360] {
            let (fa, fb, ra, rb, ba, bb) = steady_gains(q, 4 << 16, 2000);
            let (ka, kb) = kalata_gains((q as f64 / 65536.0).sqrt());
            assert!(
                (fa - ka).abs() <= ba + (ra - ka).abs(),
                "q={q} alpha {fa} {ka} {ba}"
            );
            assert!(
                (fb - kb).abs() <= bb + (rb - kb).abs(),
                "q={q} beta {fb} {kb} {bb}"
            );
        }
    }

    #[test]
    fn decoupled_reference_equals_a_general_four_state_filter() {
        // Outside check: the textbook Kalman filter (Kalman 1960) on the
        // joint state (rho, v_rho, theta, v_theta) with nalgebra's general
        // matrix algebra gives the same states and covariances as the two
        // normalised 2-state filters of the reference.
        use nalgebra::{Matrix2, Matrix2x4, Matrix4, Vector2, Vector4};
        let (rr, rt) = (64.0f64, 11881.0f64);
        let (qr, qt) = (655u32, 9000u32);
        let f = Matrix4::new(
            1.0, 1.0, 0.0, 0.0, 0.0, 1.0, 0.0, 0.0, 0.0, 0.0, 1.0, 1.0, 0.0, 0.0, 0.0, 1.0,
        );
        let h = Matrix2x4::new(1.0, 0.0, 0.0, 0.0, 0.0, 0.0, 1.0, 0.0);
        let qblk = |q: u32, r: f64| {
            let s = q as f64 / 65536.0 * r;
            Matrix2::new(s / 4.0, s / 2.0, s / 2.0, s)
        };
        let mut qm = Matrix4::zeros();
        qm.fixed_view_mut::<2, 2>(0, 0).copy_from(&qblk(qr, rr));
        qm.fixed_view_mut::<2, 2>(2, 2).copy_from(&qblk(qt, rt));
        let rm = Matrix2::new(rr, 0.0, 0.0, rt);
        let mut rng = ChaCha8Rng::seed_from_u64(9);
        let (z0r, z0t) = (300.0, 2000.0);
        let mut x = Vector4::new(z0r, 0.0, z0t, 0.0);
        let mut p = Matrix4::zeros();
        p[(0, 0)] = rr;
        p[(1, 1)] = 4.0 * rr;
        p[(2, 2)] = rt;
        p[(3, 3)] = 2.0 * rt;
        let mut ar = RefAxis::born(z0r, 4 << 16);
        let mut at = RefAxis::born(z0t, 2 << 16);
        for k in 1..200 {
            x = f * x;
            p = f * p * f.transpose() + qm;
            ar.predict(qr, None);
            at.predict(qt, None);
            if k % 7 == 3 {
                continue; // a missed frame: predict only
            }
            let z = Vector2::new(
                z0r + 0.3 * k as f64 + rng.random_range(-8.0..8.0),
                z0t - 2.0 * k as f64 + rng.random_range(-100.0..100.0),
            );
            let s = h * p * h.transpose() + rm;
            let kg = p * h.transpose() * s.try_inverse().expect("S is positive definite");
            let y = z - h * x;
            x += kg * y;
            p = (Matrix4::identity() - kg * h) * p;
            ar.update(z[0] - ar.x, None);
            at.update(z[1] - at.x, None);
            let close = |a: f64, b: f64| (a - b).abs() <= 1e-9 * (1.0 + b.abs());
            assert!(close(ar.x, x[0]) && close(ar.v, x[1]), "k={k} rho");
            assert!(close(at.x, x[2]) && close(at.v, x[3]), "k={k} theta");
            assert!(
                close(ar.a * rr, p[(0, 0)]) && close(ar.b * rr, p[(0, 1)]),
                "k={k}"
            );
            assert!(
                close(ar.c * rr, p[(1, 1)]) && close(at.c * rt, p[(3, 3)]),
                "k={k}"
            );
            assert!(
                p[(0, 2)].abs() < 1e-9 && p[(1, 3)].abs() < 1e-9,
                "k={k}: coupled"
            );
        }
    }

    #[test]
    fn fixed_tracker_follows_the_reference_within_bound() {
        let cfg = TrackConfig::DEMO;
        for s in contract_sequences().iter().take(3) {
            let fixed = run_fixed(cfg, &s.frames).unwrap();
            let reference = run_reference(cfg, &s.frames);
            let c = compare_states(&fixed, &reference);
            assert_eq!(c.decision_mismatches, 0, "{}", s.name);
            assert!(c.rho.len() > 300, "{}: too few compared samples", s.name);
            for (e, b) in c.rho.iter().chain(&c.theta) {
                assert!(e <= b, "{}: err {e} bound {b}", s.name);
            }
            let t = truth_figures(&cfg, s, &fixed);
            assert!(
                t.lead.is_some_and(|l| l > 0),
                "{}: no warning ahead",
                s.name
            );
        }
    }

    #[test]
    fn wrap_sequences_pass_through_zero() {
        let s = synth_sequence(0x7_2AC1, 300, true);
        let thetas: Vec<f64> = s.truth.iter().map(|t| t[0].theta).collect();
        assert!(thetas.iter().any(|t| *t < 0.1) && thetas.iter().any(|t| *t > PI - 0.1));
        let fixed = run_fixed(TrackConfig::DEMO, &s.frames).unwrap();
        // Both edges tracked through the wrap by the same two ids.
        let ids: std::collections::BTreeSet<u16> = fixed
            .iter()
            .flat_map(|f| f.slots.iter().flatten())
            .filter(|t| t.confirmed && (t.theta.pos >> 8 > 60000 || t.theta.pos >> 8 < 5000))
            .map(|t| t.id)
            .collect();
        assert!(ids.len() >= 2, "{ids:?}");
    }

    #[test]
    fn golden_cases_recompute() {
        for c in golden_cases(&[]) {
            assert_eq!(
                run_vector(&c.kernel, &c.params, &c.inputs).unwrap(),
                c.expected,
                "{}",
                c.id
            );
        }
        let c = &golden_cases(&[])[0];
        let mut p = c.params.clone();
        p["slots"] = json!(3);
        assert!(run_vector(&c.kernel, &p, &c.inputs).is_err());
    }
}
