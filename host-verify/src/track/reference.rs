//! The `f64` reference tracker ([`RefTracker`]) with the first-order
//! rounding-error bound of its fixed-point twin ([`Zonotope`]), and
//! Kalata's closed-form steady-state gains ([`kalata_gains`]); see the
//! family docs.

use super::HALF_TURN_U;
use fixsight::track::{Detection, FrameReport, TrackConfig};
use std::f64::consts::PI;

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
    /// Calls in a row toward raising or clearing the warning.
    pub warn_streak: u8,
    /// The raised warning (frames to the crossing).
    pub warning: Option<u16>,
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

    /// The debounce rule of `fixsight::track` (module docs, "Drift
    /// warning"), written out: a run of `warn_raise_frames` calls with a
    /// prediction raises, a run of `warn_clear_frames` calls without one
    /// clears, and in between a raised warning holds, counting its last
    /// prediction down by the frames elapsed.
    fn debounce(&mut self, cfg: &TrackConfig, gap: u32) {
        let raised = self.warning.is_some();
        let predicted = self.frames_to_cross.is_some();
        if raised == predicted {
            // Raised and still predicted, or quiet and still quiet.
            self.warn_streak = 0;
            self.warning = self.frames_to_cross;
            return;
        }
        self.warn_streak = self.warn_streak.saturating_add(1);
        let limit = if raised {
            cfg.warn_clear_frames
        } else {
            cfg.warn_raise_frames
        };
        if self.warn_streak >= limit {
            self.warn_streak = 0;
            self.warning = self.frames_to_cross;
        } else if let Some(w) = self.warning {
            self.warning = Some((w as u32).saturating_sub(gap) as u16);
        }
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
                warn_streak: 0,
                warning: None,
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
            t.debounce(&cfg, gap);
            if let Some(frames) = t.warning {
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

/// Kalata's (1984) steady-state `(alpha, beta)` for tracking index `l`.
pub fn kalata_gains(l: f64) -> (f64, f64) {
    let r = (l * l + 8.0 * l).sqrt();
    (
        -(l * l + 8.0 * l - (l + 4.0) * r) / 8.0,
        (l * l + 4.0 * l - l * r) / 4.0,
    )
}

/// Time constant (frames) of the steady-state filter's error decay for
/// `q = accel_index_q16 / 2^16`: the error of the alpha-beta filter with
/// Kalata's gains obeys `e(k+1) = (I - G H) F e(k)`, `G = (alpha, beta)`;
/// with `r` the largest modulus of that matrix's eigenvalues,
/// `tau = -1 / ln r`. The debounce counts of `TrackConfig::DEMO` are
/// `ceil(tau)` and `ceil(tau ln 20)` (module docs of `fixsight::track`).
pub fn settling_time_constant(q_q16: u32) -> f64 {
    let (alpha, beta) = kalata_gains((q_q16 as f64 / 65536.0).sqrt());
    // (I - G H) F with F = [[1, 1], [0, 1]], H = [1, 0].
    let m = [[1.0 - alpha, 1.0 - alpha], [-beta, 1.0 - beta]];
    let trace = m[0][0] + m[1][1];
    let det = m[0][0] * m[1][1] - m[0][1] * m[1][0];
    let disc = trace * trace - 4.0 * det;
    let r = if disc < 0.0 {
        det.sqrt()
    } else {
        (trace.abs() + disc.sqrt()) / 2.0
    };
    -1.0 / r.ln()
}
