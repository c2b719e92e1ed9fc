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
//! | file | holds |
//! |---|---|
//! | `reference.rs` | the `f64` reference tracker, its rounding-error bound, Kalata's gains |
//! | `sequences.rs` | the synthetic sequences and their truth |
//! | `run.rs` | both trackers run over a sequence |
//! | `compare.rs` | fixed against reference and against the truth, per sequence |
//! | `check.rs` | the `track.tracker` report row |
//! | `golden.rs` | the golden cases, `run_vector` |
//! | `tests.rs` | outside-world checks (Kalata 1984; a general 4-state filter in `nalgebra`), fixed within its bound, golden recompute |
//!
//! > **Not a safety function.** The drift warning measured here is an aid,
//! > not a safety function; a vehicle that can hurt people needs
//! > safety-rated sensing and control (ISO 3691-4, IEC 61508, ISO 13849) and
//! > must follow local rules.
//!
//! # The `f64` reference ([`RefTracker`](reference::RefTracker))
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
//! ([`RefTrack::eta_range`](reference::RefTrack::eta_range)): the fixed
//! count must lie between the first `t` at which the reference distance
//! `d(t)` comes within its first-order error bound
//! ([`RefTrack::distance_bound`](reference::RefTrack::distance_bound): the
//! state bounds carried `t` frames ahead, the slope of `d` in theta, the table-sine bound of
//! 1.617 Q15 LSB on `cos` and `sin`, the final half Q8 step) and the first
//! `t` at which it is past the edge by more than that bound. A sample
//! outside its range fails the row. Both trackers then apply the debounce
//! rule of `fixsight::track` (raise after `warn_raise_frames` calls in a
//! row with a prediction, clear after `warn_clear_frames` without, hold
//! with a countdown in between; the reference writes it out on its own)
//! to their own predictions; `warning_frame_delta` (first frame with a
//! raised warning, fixed minus reference; goal 0) must be 0, and
//! `warning_mismatch_frames` counts the calls whose reported warnings
//! (track, frames) differ, `warning_presence_mismatch_frames` those where
//! only one tracker warns. `settling_tau_frames` is the filter's time
//! constant the debounce counts derive from. The row also carries the
//! figures against the truth: tracking errors of the matched confirmed
//! track, `frames_lost`, warning lead, warnings raised more than the
//! horizon before the true crossing (`early_warning_frames`) and frames of
//! the last 30 before it without a warning (`missed_warning_frames`).
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
//! # Sequences ([`synth_sequence`](sequences::synth_sequence))
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
//! reference_y_q4, warn_horizon, warn_min_hits, warn_raise_frames,
//! warn_clear_frames, slots, max_detections}` (`slots` = 4, `max_detections`
//! = 8: the const generics of the tracker both sides build). Inputs:
//! `frames` u32, width 2 (frame number, detection count), one row per call;
//! `dets` i32, width 3 (`rho_q4`, `theta`, `weight`), the detections of all
//! calls in order (at least one row: a sequence with no detection carries
//! one unused zero row). Outputs: `states` i32, width
//! [`STATE_FIELDS`](golden::STATE_FIELDS), one row per call and slot (see
//! [`state_row`](golden::state_row)); `report` i32, width 5 (associated,
//! born, dropped, warning track id or -1, warning frames or -1), one row per
//! call.

pub mod check;
pub mod compare;
pub mod golden;
pub mod reference;
pub mod run;
pub mod sequences;
#[cfg(test)]
mod tests;

use crate::family::Family;
use fixsight::track::Tracker;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "track",
    kernels: &[ID],
    composed_on_host: false,
    check: |scenes, _lens| check::check(scenes),
    golden_cases: golden::golden_cases,
    run_vector: golden::run_vector,
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
