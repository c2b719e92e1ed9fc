//! Fixed-point tracking of tape edges over frames, and the drift warning.
//!
//! > **Not a safety function.** The drift warning is an aid for a vehicle
//! > that follows floor tape. It is not developed, assessed or certified as
//! > a safety function. A vehicle that can hurt people needs safety-rated
//! > sensing and control under the standards that apply to it (for example
//! > ISO 3691-4 for driverless industrial trucks, IEC 61508, ISO 13849) and
//! > the rules of the place where it runs, with protective measures that do
//! > not depend on this software.
//!
//! A [`Tracker`] keeps up to `N` tracks, one per tape edge. Each frame the
//! caller hands in the lines found in that frame as [`Detection`]s (at most
//! `M`); the tracker predicts every track to the new frame, associates
//! detections with tracks, updates each associated track with a
//! constant-velocity Kalman filter (Kalman 1960, "A new approach to linear
//! filtering and prediction problems", J. Basic Eng. 82(1)), starts,
//! confirms and drops tracks, and predicts in how many frames the vehicle's
//! reference point will cross each confirmed edge ([`DriftWarning`]).
//!
//! # Measurement convention
//!
//! A line is `rho = x cos(theta) + y sin(theta)`, `x` to the right, `y` down
//! the rows, both in pixels from an origin chosen by whoever produced the
//! lines (the line-voting kernel states its origin; the tracker does not
//! depend on it, because the reference point is given in the same frame,
//! [`TrackConfig::reference_q4`]).
//!
//! * `rho_q4`: `i32`, 1/16 pixel, `|rho_q4| < 2^17` ([`RHO_LIMIT_Q4`]).
//! * `theta`: `u16` binary angle, 65536 units = 180 degrees, `theta` in
//!   `[0, 180)` degrees.
//! * `weight`: votes or any other non-negative strength; used only to decide
//!   which unassociated detections start tracks.
//!
//! Below, one *unit* (u) is one measurement step of an axis: 1/16 pixel for
//! rho, one binary-angle step (180/65536 degree) for theta.
//!
//! # The filter (per track, per axis)
//!
//! The state of an axis is position `x` and velocity `v` (units per frame),
//! with a constant-velocity model, one step per frame (`T = 1`),
//! `F = [[1, 1], [0, 1]]`, measurement `H = [1, 0]`, measurement noise
//! variance `R = meas_var` u^2, and the piecewise-constant white acceleration
//! process noise `Q = sigma_a^2 [[1/4, 1/2], [1/2, 1]]` (Bar-Shalom, Li &
//! Kirubarajan 2001, "Estimation with Applications to Tracking and
//! Navigation", section 6.3.3, from memory).
//!
//! The rho and theta axes are filtered separately. This is the exact Kalman
//! filter of the joint four-state model, not an approximation: with `F`, `H`,
//! `Q`, `R` and the initial covariance all block-diagonal over the two axes,
//! every covariance stays block-diagonal and the gains decouple (checked in
//! the host crate against a general 4-state filter written with a
//! linear-algebra crate).
//!
//! The covariance is kept **normalised by `R`**: `P~ = P / R`. In these units
//! the measurement noise is 1, the process noise is
//! `q [[1/4, 1/2], [1/2, 1]]` with `q = sigma_a^2 / R`, the square of Kalata's
//! tracking index (Kalata 1984, "The tracking index: a generalized parameter
//! for alpha-beta and alpha-beta-gamma target trackers", IEEE Trans. AES
//! 20(2)), and the filter's gains do not depend on the axis's units.
//!
//! # Number formats
//!
//! | quantity | type | format | range kept |
//! |---|---|---|---|
//! | position `x` (rho) | `i32` | Q8 of 1/16 px (1/4096 px) | `|x| <= 2^25` (saturated) |
//! | position `x` (theta) | `i32` | Q8 of the binary angle (2^24 = 180 deg) | `[0, 2^24)` (wrapped, below) |
//! | velocity `v` | `i32` | Q8 units per frame | `|v| <= 2^23` (saturated) |
//! | covariance `a = P~00`, `c = P~11` | `i32` | Q16, dimensionless | `0 ..= 2^31 - 1` (saturated) |
//! | covariance `b = P~01` | `i32` | Q16 | `-(2^31 - 1) ..= 2^31 - 1` (saturated) |
//! | gains `k0`, `k1` | `i32` | Q16 | `k0` in `0 ..= 65536`, `|k1| <= |b|` |
//! | normalised innovation squared | `u32` | Q8 | saturated at `u32::MAX` |
//!
//! Every intermediate is computed in `i64` (all products below are proven to
//! fit: each factor's range is in the table). Two rounding rules, both
//! *round half up* (ties toward +infinity):
//!
//! * `rs(x, s) = (x + 2^(s-1)) >> s` with an arithmetic (flooring) shift
//!   (the `i64` form of [`crate::arith::round_shift`]);
//! * `rdiv(n, d) = floor((2n + d) / (2d))` for `d > 0` (floor division, so
//!   negative `n` rounds the same way as positive).
//!
//! `sat(x, lo, hi)` clamps. `q00 = rs(q, 2)`, `q01 = rs(q, 1)`, `q11 = q`
//! are the process-noise entries in Q16 (`q = accel_index_q16`).
//!
//! **Predict** (one frame; every right-hand side uses the old values):
//!
//! ```text
//! x = sat(x + v, -2^25, 2^25)             (rho; theta: x + v, then the wrap rule)
//! a = sat(a + 2b + c + q00, 0, 2^31 - 1)
//! b = sat(b + c + q01, -(2^31 - 1), 2^31 - 1)
//! c = sat(c + q11, 0, 2^31 - 1)
//! ```
//!
//! **Update** with a measurement `z` (Q8, `z = z_u << 8`), innovation
//! `y = z - x`:
//!
//! ```text
//! s  = a + 65536                          (S~ = P~00 + 1, Q16)
//! k0 = rdiv(a << 16, s)                   (alpha, Q16)
//! k1 = rdiv(b << 16, s)                   (beta, Q16, per frame)
//! x  = x + rs(k0 * y, 16)                 (then saturated / wrapped as in predict)
//! v  = sat(v + rs(k1 * y, 16), -2^23, 2^23)
//! c  = sat(c - rs(k1 * b, 16), 0, 2^31 - 1)   (b: the value before this update)
//! a  = k0
//! b  = k1
//! ```
//!
//! (`a = k0` and `b = k1` are exact in normalised units: `P~00+ = P~00/S~`
//! and `P~01+ = P~01/S~`.)
//!
//! **Birth** from a detection: `x = z`, `v = 0`, `a = 65536` (variance `R`),
//! `b = 0`, `c = init_vel_var_q16`.
//!
//! # The theta wrap
//!
//! `(rho, theta)` and `(-rho, theta + 180 deg)` are the same line. The theta
//! position is kept in `[0, 2^24)` (Q8, `[0, 180)` degrees): after every
//! predict and update, if it left that range, `n = floor(x / 2^24)`,
//! `x = x - n 2^24`, and when `n` is odd the rho axis flips: rho `x = -x`,
//! `v = -v` (its covariance is unchanged: `cov(-x, -v) = cov(x, v)`), and the
//! track's [`Track::side`] changes sign (the signed distance below flips).
//!
//! A measurement is brought next to the predicted theta before the update:
//! with `d = (theta << 8) - x_theta`, if `d > 2^23` (more than 90 degrees)
//! the measurement is used as `(theta - 180 deg, -rho)`, if `d < -2^23` as
//! `(theta + 180 deg, -rho)`, otherwise as it is (so `|d| = 2^23` exactly
//! keeps the measurement as given).
//!
//! # Gating and association
//!
//! The normalised innovation squared of a detection against a predicted
//! track is, per axis, `y^2 / (R S~)`, in Q8:
//! `g = min(rdiv(y^2 * 256, R * s), u32::MAX)` (unsigned, `y` in Q8, `s` in
//! Q16 as above; `y^2 < 2^52` because `|y| < 2^26`), and the two axes add
//! (saturating). A detection is *in the gate* of a track when
//! `g_rho + g_theta <= gate_q8`. Under the model the sum is chi-square with
//! two degrees of freedom, whose distribution function is
//! `1 - exp(-g / 2)`, so the quantile for probability `p` is
//! `-2 ln(1 - p)` exactly ([`GATE_99_Q8`] = 9.2103 for 99 %, 2358 in Q8).
//!
//! Association is greedy by global nearest neighbour: among all pairs of an
//! unassociated track and an unassociated detection that are in the gate,
//! the pair with the smallest `g` is associated; **ties** go to the lowest
//! track slot, then the lowest detection index. Repeat until no pair is in
//! a gate.
//!
//! # Track life
//!
//! * **Birth**: a detection that is in no track's gate (whether or not that
//!   track took another detection) and whose `weight >= birth_weight`
//!   starts a tentative track in the lowest free slot; candidates are taken
//!   in order of decreasing weight, ties to the lowest detection index; when
//!   no slot is free the rest are ignored. A birth counts as the track's
//!   first hit. Track ids count up from 0 by one per birth (wrapping at
//!   `u16`).
//! * **Confirmation**: a track is confirmed when its hit count reaches
//!   `confirm_hits` (it stays confirmed).
//! * **Misses**: a frame in which a track takes no detection is a miss; so
//!   is every frame number skipped between two calls (the track is predicted
//!   through it). A tentative track is dropped at its first miss; a
//!   confirmed one when it has missed more than `max_missed` frames in a
//!   row. (Common practice, no source.) An associated frame resets the
//!   miss count.
//!
//! # Drift warning
//!
//! The reference point `(px, py)` ([`TrackConfig::reference_q4`], 1/16
//! pixel, same frame as rho; for example the bottom-centre pixel of the
//! corrected image) has the signed distance to a track's line
//!
//! ```text
//! d(t) = rs(px * cos(theta(t)) + py * sin(theta(t)), 7) - rho(t)      (Q8 of 1/16 px)
//! rho(t) = x_rho + t v_rho,   theta(t) = x_theta + t v_theta          (Q8, i64, not wrapped)
//! ```
//!
//! with `cos` and `sin` from [`sin_q15`] / [`cos_q15`] (Q15). At birth the
//! track stores the side of the reference point, `side = +1` if `d(0) >= 0`
//! else `-1`.
//!
//! **Prediction.** Every call, after the births, every live track gets its
//! [`Track::frames_to_cross`]: `None` unless it is confirmed and has at
//! least `warn_min_hits` hits; otherwise
//!
//! * if `side * d(0) <= 0` the point is on the edge or past it: **0 frames**;
//! * else the first `t` in `1 ..= warn_horizon` with `side * d(t) <= 0`,
//!   if any: **`t` frames**;
//! * else `None`: no crossing predicted within the horizon.
//!
//! **Debounce.** A young track's velocity estimate is noisy, so its
//! prediction enters and leaves the horizon from one frame to the next. The
//! warning of a track ([`Track::warning`]) is therefore raised and cleared
//! with a hysteresis counted in calls (a skipped frame number is not
//! evaluated: it neither extends nor breaks a run), with the counter
//! [`Track::warn_streak`]. With `K = warn_raise_frames`,
//! `K' = warn_clear_frames`, `p` this call's `frames_to_cross` and `gap` the
//! frame numbers elapsed since the previous call:
//!
//! | warning before | `p` | then |
//! |---|---|---|
//! | `None` | `Some(f)` | `streak += 1`; if `streak >= K`: warning `Some(f)`, `streak = 0` |
//! | `None` | `None` | `streak = 0` |
//! | `Some(_)` | `Some(f)` | warning `Some(f)`, `streak = 0` |
//! | `Some(w)` | `None` | `streak += 1`; if `streak >= K'`: warning `None`, `streak = 0`; else warning `Some(w - gap)` (saturating at 0: the last prediction counted down) |
//!
//! (`streak` saturates at 255.) `K = K' = 1` is the undebounced rule: a
//! warning exactly while a crossing is predicted. A held warning is visible
//! as `warning` `Some` with `frames_to_cross` `None`.
//!
//! Why [`TrackConfig::DEMO`] has `K = 8`, `K' = 24`: with a measurement
//! every frame the filter settles to the alpha-beta filter of Kalata's
//! index (above), whose error obeys `e(k+1) = (I - G H) F e(k)` with the
//! gains `G = (alpha, beta)`, characteristic polynomial `z^2 - (2 - alpha - beta) z + (1 - alpha)`.
//! Its slower pole has modulus `r` (for the demo's `q = 66 / 65536` on both
//! axes: `alpha = 0.2226`, `beta = 0.0280`, complex poles,
//! `r = sqrt(1 - alpha) = 0.8817`), so an estimation error, and with it a
//! noise-driven excursion of the prediction, fades with the time constant
//! `tau = -1 / ln r = 7.94` frames. Raising takes one time constant,
//! `K = ceil(tau) = 8`: an excursion shorter than the filter's memory does
//! not raise. Clearing takes the 5 % settling time,
//! `K' = ceil(tau ln 20) = 24`: the warning goes only once the filter has
//! had time to settle on a state that predicts no crossing, because a
//! missed warning costs more than a held one (on- and off-delays against
//! chattering alarms are common practice in alarm handling, no source).
//! The host crate recomputes both from the demo's `q`.
//!
//! The frame's [`DriftWarning`] is the raised warning with the fewest frames
//! (ties: lowest slot). Tracks that are coasting (missed this frame) still
//! predict and warn; a dropped track's warning goes with it.
//!
//! # Bad input
//!
//! A frame number not greater than the previous one gives
//! [`Error::FrameOrder`]; more than `M` detections, `|rho_q4| >= 2^17` or a
//! configuration out of range give [`Error::BadParameter`] naming the field.
//! A rejected call leaves the tracker unchanged. Nothing panics.
//!
//! ```
//! use fixsight::track::{Detection, TrackConfig, Tracker};
//! let mut cfg = TrackConfig::DEMO;
//! cfg.reference_q4 = (0, 0); // the reference point at the lines' origin
//! let mut t: Tracker<4, 8> = Tracker::new(cfg)?;
//! // An edge 20 px right of the reference point, moving 0.5 px/frame left.
//! // It reaches the point at frame 40.
//! for f in 0..=30u32 {
//!     let rho_q4 = 320 - 8 * f as i32;
//!     let rep = t.update(f, &[Detection { rho_q4, theta: 0, weight: 100 }])?;
//!     if f == 30 {
//!         // 10 frames to go; the velocity estimate is still settling.
//!         let frames = rep.warning.expect("crossing within the horizon").frames;
//!         assert!((9..=11).contains(&frames), "{frames}");
//!     }
//! }
//! # Ok::<(), fixsight::Error>(())
//! ```

use crate::error::{Error, Result};
use crate::ops::{tally, Op};

/// Largest accepted `|rho_q4|` is `RHO_LIMIT_Q4 - 1` (8192 px).
///
/// ```
/// assert_eq!(fixsight::track::RHO_LIMIT_Q4, 1 << 17);
/// ```
pub const RHO_LIMIT_Q4: i32 = 1 << 17;

/// Fractional bits of positions and velocities (of measurement units).
///
/// ```
/// assert_eq!(fixsight::track::STATE_FRAC, 8);
/// ```
pub const STATE_FRAC: u32 = 8;

/// Fractional bits of the normalised covariance and of the gains.
///
/// ```
/// assert_eq!(fixsight::track::COV_FRAC, 16);
/// ```
pub const COV_FRAC: u32 = 16;

/// 180 degrees of theta position, Q8 (`65536 << 8`).
///
/// ```
/// assert_eq!(fixsight::track::HALF_TURN_Q8, 1 << 24);
/// ```
pub const HALF_TURN_Q8: i32 = 1 << 24;

/// Gate on the normalised innovation squared (two degrees of freedom) for
/// 99 %: `-2 ln(0.01) = 9.2103`, in Q8 (`round(9.2103 * 256) = 2358`).
///
/// ```
/// assert_eq!(fixsight::track::GATE_99_Q8, 2358);
/// ```
pub const GATE_99_Q8: u32 = 2358;

const POS_LIMIT_RHO: i64 = 1 << 25;
const VEL_LIMIT: i64 = 1 << 23;
const COV_MAX: i64 = i32::MAX as i64;
const ONE_Q16: i64 = 1 << COV_FRAC;
const QUARTER_TURN_Q8: i64 = 1 << 23;
const FULL_TURN_MASK: i64 = (1 << 25) - 1;
/// Largest accepted `meas_var`.
const MEAS_VAR_MAX: u32 = 1 << 24;
/// Largest accepted `accel_index_q16`.
const ACCEL_INDEX_MAX: u32 = 1 << 24;
/// Largest accepted `init_vel_var_q16`.
const INIT_VEL_VAR_MAX: u32 = 1 << 28;
/// Largest accepted `warn_horizon`.
pub const WARN_HORIZON_MAX: u16 = 1024;

/// `sin(k pi / 256)` in Q15 for `k = 0..=128` (a quarter wave), rounded to
/// nearest. Generated with `f64` (`round(32768 sin(k pi / 256))`) and
/// checked against `f64::sin` by the host crate.
const SIN_TABLE: [u16; 129] = [
    0, 402, 804, 1206, 1608, 2009, 2411, 2811, 3212, 3612, 4011, 4410, 4808, 5205, 5602, 5998,
    6393, 6787, 7180, 7571, 7962, 8351, 8740, 9127, 9512, 9896, 10279, 10660, 11039, 11417, 11793,
    12167, 12540, 12910, 13279, 13646, 14010, 14373, 14733, 15091, 15447, 15800, 16151, 16500,
    16846, 17190, 17531, 17869, 18205, 18538, 18868, 19195, 19520, 19841, 20160, 20475, 20788,
    21097, 21403, 21706, 22006, 22302, 22595, 22884, 23170, 23453, 23732, 24008, 24279, 24548,
    24812, 25073, 25330, 25583, 25833, 26078, 26320, 26557, 26791, 27020, 27246, 27467, 27684,
    27897, 28106, 28311, 28511, 28707, 28899, 29086, 29269, 29448, 29622, 29792, 29957, 30118,
    30274, 30425, 30572, 30715, 30853, 30986, 31114, 31238, 31357, 31471, 31581, 31686, 31786,
    31881, 31972, 32058, 32138, 32214, 32286, 32352, 32413, 32470, 32522, 32568, 32610, 32647,
    32679, 32706, 32729, 32746, 32758, 32766, 32768,
];

/// Sine of a binary angle in Q15.
///
/// `angle_q8` is in units of 1/256 of a binary-angle step (65536 steps =
/// 180 degrees), so a full turn is `2^25`; only the low 25 bits matter
/// (any `i32`, negative ones included, is taken modulo the full turn).
///
/// Integer model: `r = angle & (2^25 - 1)`, quadrant `n = r >> 23`,
/// `u = r & (2^23 - 1)`, mirrored `u = 2^23 - u` in quadrants 1 and 3;
/// `i = u >> 16`, `f = u & 0xFFFF`; `m = T[128]` if `i = 128`, else
/// `m = T[i] + ((T[i+1] - T[i]) f + 2^15) >> 16` (arithmetic shift), with
/// `T` the 129-entry quarter-wave table `round(32768 sin(k pi / 256))`;
/// the result is `m` in quadrants 0 and 1 and `-m` in 2 and 3.
///
/// Error bound against the exact sine, in Q15 LSB: table rounding 0.5 +
/// linear interpolation `h^2 / 8 * 32768 = 0.617` (`h = pi / 256`) + final
/// rounding 0.5, so at most **1.617 LSB** (4.94e-5); the host crate measures
/// it over every angle on a 2^16-step grid of the full turn.
///
/// ```
/// use fixsight::track::sin_q15;
/// assert_eq!(sin_q15(0), 0);
/// assert_eq!(sin_q15(1 << 23), 32768);          // 90 degrees
/// assert_eq!(sin_q15(-(1 << 23)), -32768);      // -90 degrees
/// assert!((sin_q15(1 << 22) - 23170).abs() <= 1); // 45 degrees
/// ```
pub fn sin_q15(angle_q8: i32) -> i32 {
    let r = (angle_q8 as i64 & FULL_TURN_MASK) as u32;
    let quadrant = r >> 23;
    let mut u = r & ((1 << 23) - 1);
    if quadrant & 1 == 1 {
        u = (1 << 23) - u;
    }
    let i = (u >> 16) as usize;
    let f = (u & 0xFFFF) as i32;
    tally(Op::Table, 2);
    tally(Op::Mul, 1);
    let m = match (SIN_TABLE.get(i), SIN_TABLE.get(i + 1)) {
        (Some(&t0), Some(&t1)) => t0 as i32 + (((t1 as i32 - t0 as i32) * f + (1 << 15)) >> 16),
        (Some(&t0), None) => t0 as i32,
        _ => 0,
    };
    if quadrant >= 2 {
        -m
    } else {
        m
    }
}

/// Cosine of a binary angle in Q15: `sin_q15(angle_q8 + 2^23)` (a quarter
/// turn ahead, wrapping). Same model and error bound as [`sin_q15`].
///
/// ```
/// use fixsight::track::cos_q15;
/// assert_eq!(cos_q15(0), 32768);
/// assert_eq!(cos_q15(1 << 24), -32768); // 180 degrees
/// ```
pub fn cos_q15(angle_q8: i32) -> i32 {
    sin_q15(((angle_q8 as i64 + QUARTER_TURN_Q8) & FULL_TURN_MASK) as i32)
}

/// `(x + 2^(s-1)) >> s` on `i64`, `s >= 1`: round half up.
#[inline(always)]
fn rs(x: i64, s: u32) -> i64 {
    (x + (1i64 << (s - 1))) >> s
}

/// `floor((2n + d) / (2d))`, `d > 0`: `n / d` rounded half up.
#[inline(always)]
fn rdiv(n: i64, d: i64) -> i64 {
    tally(Op::Div, 1);
    (2 * n + d).div_euclid(2 * d)
}

#[inline(always)]
fn sat(x: i64, lo: i64, hi: i64) -> i64 {
    x.clamp(lo, hi)
}

/// One line found in a frame: the tracker's input.
///
/// ```
/// use fixsight::track::Detection;
/// // A vertical line 10 px right of the origin, 250 votes.
/// let d = Detection { rho_q4: 160, theta: 0, weight: 250 };
/// assert_eq!(d.rho_q4 / 16, 10);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Detection {
    /// Distance of the line from the origin, 1/16 pixel, `|rho_q4| < 2^17`.
    pub rho_q4: i32,
    /// Normal angle, binary angle (65536 = 180 degrees).
    pub theta: u16,
    /// Votes or other strength (decides births only).
    pub weight: u32,
}

/// Noise settings of one axis (rho or theta).
///
/// ```
/// use fixsight::track::AxisNoise;
/// // rho: measurement sd 0.5 px = 8 units -> R = 64 units^2.
/// let a = AxisNoise { meas_var: 64, accel_index_q16: 655, init_vel_var_q16: 4 << 16 };
/// assert_eq!(a.meas_var, 64);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AxisNoise {
    /// Measurement noise variance `R` in units^2, `1 ..= 2^24`.
    pub meas_var: u32,
    /// `q = sigma_a^2 / R`, the square of Kalata's tracking index, Q16,
    /// `0 ..= 2^24`.
    pub accel_index_q16: u32,
    /// Velocity variance of a new track divided by `R` (per frame^2), Q16,
    /// `0 ..= 2^28`.
    pub init_vel_var_q16: u32,
}

/// Tracker settings. [`TrackConfig::DEMO`] holds the demo values.
///
/// ```
/// let c = fixsight::track::TrackConfig::DEMO;
/// assert_eq!(c.gate_q8, fixsight::track::GATE_99_Q8);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TrackConfig {
    /// Rho axis noise (units of 1/16 px).
    pub rho: AxisNoise,
    /// Theta axis noise (binary-angle units).
    pub theta: AxisNoise,
    /// Gate on the summed normalised innovation squared, Q8, `>= 1`.
    pub gate_q8: u32,
    /// Hits that confirm a track, `1 ..= 255`.
    pub confirm_hits: u8,
    /// Misses in a row a confirmed track survives.
    pub max_missed: u8,
    /// Smallest weight that starts a track.
    pub birth_weight: u32,
    /// Reference point `(x, y)` in 1/16 pixel, in the lines' frame; each
    /// `|.| < 2^17`.
    pub reference_q4: (i32, i32),
    /// Frames ahead the crossing is searched, `0 ..= 1024`.
    pub warn_horizon: u16,
    /// Hits a confirmed track needs before it may warn (its velocity
    /// estimate has settled), any value.
    pub warn_min_hits: u16,
    /// Calls in a row with a crossing predicted within the horizon that
    /// raise a track's warning (`K` of the debounce rule), `1 ..= 255`.
    pub warn_raise_frames: u8,
    /// Calls in a row without one that clear it (`K'`), `1 ..= 255`.
    pub warn_clear_frames: u8,
}

impl TrackConfig {
    /// Every field zero: the stored value of a job that is not configured
    /// (invalid as a configuration: `confirm_hits` is 0). All zero bytes.
    pub(crate) const UNSET: TrackConfig = TrackConfig {
        rho: AxisNoise {
            meas_var: 0,
            accel_index_q16: 0,
            init_vel_var_q16: 0,
        },
        theta: AxisNoise {
            meas_var: 0,
            accel_index_q16: 0,
            init_vel_var_q16: 0,
        },
        gate_q8: 0,
        confirm_hits: 0,
        max_missed: 0,
        birth_weight: 0,
        reference_q4: (0, 0),
        warn_horizon: 0,
        warn_min_hits: 0,
        warn_raise_frames: 0,
        warn_clear_frames: 0,
    };

    /// Demo settings for a 320 x 240 corrected image with lines measured
    /// from the image centre, reference point at the bottom-centre pixel
    /// `(0, 119.5)` px:
    ///
    /// * measurement variance `R = step^2 / 12` on each axis, `step` the
    ///   bin of [`crate::lines::VoteParams::DEMO_QVGA`] in the tracker's
    ///   units: a line is measured as a peak cell of the accumulator, and
    ///   the error of a quantiser with step `q` uniform over the step has
    ///   variance `q^2 / 12` (Bennett 1948, "Spectra of quantized signals",
    ///   Bell System Technical Journal 27; cited from memory). That is the
    ///   error of an unrefined peak: the refinement reduces it and noise on
    ///   the edge points adds to it, so it sets the scale from the
    ///   measuring instrument rather than from any scene;
    /// * rho: rows of 2 px = 32 units, `R = floor(1024 / 12) = 85` units^2
    ///   (sd 0.58 px), `q = 0.001` (66 in Q16; a slow drift), new-track
    ///   velocity sd 1 px/frame (`init = 256 u^2 / R`, Q16
    ///   `round(256 * 65536 / 85) = 197379`);
    /// * theta: columns of 2.8125 degrees = 1024 units,
    ///   `R = floor(1024^2 / 12) = 87381` units^2 (sd 0.81 degree),
    ///   `q = 0.001`, new-track velocity sd 0.3 degree/frame (109 units,
    ///   `init = 11881 / R`, Q16 `round(11881 * 65536 / 87381) = 8911`);
    /// * gate 99 % ([`GATE_99_Q8`]); confirmed after 3 hits; 5 missed
    ///   frames survived; births from weight 40 up; warning horizon 90
    ///   frames (3 s at 30 frames/s), from the 15th hit of a track on;
    /// * warning raised after 8 calls in a row with a predicted crossing and
    ///   cleared after 24 without: one time constant and the 5 % settling
    ///   time of the steady-state filter for this `q` (module docs, "Drift
    ///   warning").
    ///
    /// Except the measurement variances and the two debounce counts, these
    /// are design choices for the demo sequence (common practice, no
    /// source), not measured camera figures.
    ///
    /// ```
    /// let c = fixsight::track::TrackConfig::DEMO;
    /// assert_eq!(c.reference_q4, (0, 1912));
    /// ```
    pub const DEMO: TrackConfig = TrackConfig {
        rho: AxisNoise {
            meas_var: 85,
            accel_index_q16: 66,
            init_vel_var_q16: 197_379,
        },
        theta: AxisNoise {
            meas_var: 87_381,
            accel_index_q16: 66,
            init_vel_var_q16: 8_911,
        },
        gate_q8: GATE_99_Q8,
        confirm_hits: 3,
        max_missed: 5,
        birth_weight: 40,
        reference_q4: (0, 1912),
        warn_horizon: 90,
        warn_min_hits: 15,
        warn_raise_frames: 8,
        warn_clear_frames: 24,
    };

    /// Checks every field's range.
    ///
    /// ```
    /// use fixsight::track::TrackConfig;
    /// let mut c = TrackConfig::DEMO;
    /// c.confirm_hits = 0;
    /// assert!(c.validate().is_err());
    /// assert!(TrackConfig::DEMO.validate().is_ok());
    /// ```
    pub fn validate(&self) -> Result<()> {
        let bad = |name: &'static str, expected: &'static str, got: i64| {
            Err(Error::BadParameter {
                name,
                expected,
                got,
            })
        };
        for (axis, names) in [
            (
                &self.rho,
                [
                    "rho.meas_var",
                    "rho.accel_index_q16",
                    "rho.init_vel_var_q16",
                ],
            ),
            (
                &self.theta,
                [
                    "theta.meas_var",
                    "theta.accel_index_q16",
                    "theta.init_vel_var_q16",
                ],
            ),
        ] {
            if axis.meas_var == 0 || axis.meas_var > MEAS_VAR_MAX {
                return bad(names[0], "1 ..= 2^24", axis.meas_var as i64);
            }
            if axis.accel_index_q16 > ACCEL_INDEX_MAX {
                return bad(names[1], "0 ..= 2^24", axis.accel_index_q16 as i64);
            }
            if axis.init_vel_var_q16 > INIT_VEL_VAR_MAX {
                return bad(names[2], "0 ..= 2^28", axis.init_vel_var_q16 as i64);
            }
        }
        if self.gate_q8 == 0 {
            return bad("gate_q8", ">= 1", 0);
        }
        if self.confirm_hits == 0 {
            return bad("confirm_hits", "1 ..= 255", 0);
        }
        let (px, py) = self.reference_q4;
        if px.unsigned_abs() >= RHO_LIMIT_Q4 as u32 {
            return bad("reference_q4.x", "|x| < 2^17", px as i64);
        }
        if py.unsigned_abs() >= RHO_LIMIT_Q4 as u32 {
            return bad("reference_q4.y", "|y| < 2^17", py as i64);
        }
        if self.warn_horizon > WARN_HORIZON_MAX {
            return bad("warn_horizon", "0 ..= 1024", self.warn_horizon as i64);
        }
        if self.warn_raise_frames == 0 {
            return bad("warn_raise_frames", "1 ..= 255", 0);
        }
        if self.warn_clear_frames == 0 {
            return bad("warn_clear_frames", "1 ..= 255", 0);
        }
        Ok(())
    }
}

/// Filter state of one axis of a track (formats in the module docs).
///
/// ```
/// let s = fixsight::track::AxisState::default();
/// assert_eq!(s.pos, 0);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AxisState {
    /// Position, Q8 units.
    pub pos: i32,
    /// Velocity, Q8 units per frame.
    pub vel: i32,
    /// `P~00`, Q16 (after an update: the position gain `alpha`).
    pub p_pos: i32,
    /// `P~01`, Q16 (after an update: the velocity gain `beta`).
    pub p_cross: i32,
    /// `P~11`, Q16.
    pub p_vel: i32,
}

impl AxisState {
    /// Every field zero (the axes of an empty tracker slot).
    pub(crate) const ZERO: AxisState = AxisState {
        pos: 0,
        vel: 0,
        p_pos: 0,
        p_cross: 0,
        p_vel: 0,
    };

    fn born(z_q8: i64, init_vel_var: u32) -> Self {
        AxisState {
            pos: z_q8 as i32,
            vel: 0,
            p_pos: ONE_Q16 as i32,
            p_cross: 0,
            p_vel: init_vel_var as i32,
        }
    }

    /// Covariance predict (one frame).
    fn predict_cov(&mut self, q: u32) {
        let (a, b, c) = (self.p_pos as i64, self.p_cross as i64, self.p_vel as i64);
        let q = q as i64;
        tally(Op::AddSub, 6);
        tally(Op::Shift, 3);
        tally(Op::Logic, 6);
        self.p_pos = sat(a + 2 * b + c + rs(q, 2), 0, COV_MAX) as i32;
        self.p_cross = sat(b + c + rs(q, 1), -COV_MAX, COV_MAX) as i32;
        self.p_vel = sat(c + q, 0, COV_MAX) as i32;
    }

    /// `S~` in Q16.
    fn s(&self) -> i64 {
        self.p_pos as i64 + ONE_Q16
    }

    /// Measurement update with innovation `y` (Q8). Returns the new
    /// position before saturation or wrapping (i64).
    fn update(&mut self, y: i64) -> i64 {
        let s = self.s();
        let (a, b, c) = (self.p_pos as i64, self.p_cross as i64, self.p_vel as i64);
        let k0 = rdiv(a << COV_FRAC, s);
        let k1 = rdiv(b << COV_FRAC, s);
        tally(Op::Mul, 3);
        tally(Op::AddSub, 8);
        tally(Op::Shift, 6);
        tally(Op::Logic, 4);
        let x = self.pos as i64 + rs(k0 * y, COV_FRAC);
        self.vel = sat(
            self.vel as i64 + rs(k1 * y, COV_FRAC),
            -VEL_LIMIT,
            VEL_LIMIT,
        ) as i32;
        self.p_vel = sat(c - rs(k1 * b, COV_FRAC), 0, COV_MAX) as i32;
        self.p_pos = k0 as i32;
        self.p_cross = k1 as i32;
        x
    }

    /// Normalised innovation squared of `y` (Q8), in Q8, saturated.
    fn nis_q8(&self, y: i64, meas_var: u32) -> u32 {
        let y2 = (y * y) as u64;
        let d = meas_var as u64 * self.s() as u64;
        tally(Op::Mul, 2);
        tally(Op::Div, 1);
        tally(Op::Shift, 1);
        let n = (2 * (y2 << 8) + d) / (2 * d);
        n.min(u32::MAX as u64) as u32
    }
}

/// One track.
///
/// ```
/// let t = fixsight::track::Track::default();
/// assert!(!t.confirmed);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Track {
    /// Id given at birth.
    pub id: u16,
    /// Rho axis (units of 1/16 px).
    pub rho: AxisState,
    /// Theta axis (binary-angle units), position in `[0, 2^24)`.
    pub theta: AxisState,
    /// Frames in which the track took a detection (saturating).
    pub hits: u16,
    /// Frames missed in a row.
    pub missed: u8,
    /// Reached `confirm_hits`.
    pub confirmed: bool,
    /// Side of the reference point at birth, `+1` or `-1` (flips with the
    /// rho sign on a theta wrap).
    pub side: i8,
    /// Predicted frames to the crossing after the last call (`None` beyond
    /// the horizon, or when the track may not warn yet).
    pub frames_to_cross: Option<u16>,
    /// Calls in a row counted toward raising (warning `None`) or clearing
    /// (warning `Some`) the warning; the debounce rule of the module docs.
    pub warn_streak: u8,
    /// The track's raised drift warning: frames to the crossing (the
    /// current prediction, or while held the last one counted down).
    pub warning: Option<u16>,
}

impl Track {
    /// Whether a tracker slot holding this value holds a track: a track is
    /// born with one hit and never loses one, so an empty slot
    /// ([`NO_TRACK`]) is the one value with `hits == 0`.
    #[inline(always)]
    fn live(&self) -> bool {
        self.hits > 0
    }

    /// Keeps theta in `[0, 2^24)`, flipping rho and the side on odd wraps.
    fn wrap(&mut self, theta_pos: i64) {
        let n = theta_pos.div_euclid(HALF_TURN_Q8 as i64);
        self.theta.pos = theta_pos.rem_euclid(HALF_TURN_Q8 as i64) as i32;
        tally(Op::Div, 1);
        if n & 1 == 1 {
            self.rho.pos = -self.rho.pos;
            self.rho.vel = -self.rho.vel;
            self.side = -self.side;
        }
    }

    fn predict(&mut self, cfg: &TrackConfig) {
        tally(Op::AddSub, 2);
        self.rho.pos = sat(
            self.rho.pos as i64 + self.rho.vel as i64,
            -POS_LIMIT_RHO,
            POS_LIMIT_RHO,
        ) as i32;
        self.rho.predict_cov(cfg.rho.accel_index_q16);
        self.theta.predict_cov(cfg.theta.accel_index_q16);
        self.wrap(self.theta.pos as i64 + self.theta.vel as i64);
    }

    /// The detection as `(rho, theta)` innovations (Q8), after bringing it
    /// next to the predicted theta.
    fn innovation(&self, d: &Detection) -> (i64, i64) {
        let zt = (d.theta as i64) << STATE_FRAC;
        let diff = zt - self.theta.pos as i64;
        let zr = (d.rho_q4 as i64) << STATE_FRAC;
        tally(Op::AddSub, 3);
        tally(Op::Logic, 2);
        if diff > QUARTER_TURN_Q8 {
            (-zr - self.rho.pos as i64, diff - HALF_TURN_Q8 as i64)
        } else if diff < -QUARTER_TURN_Q8 {
            (-zr - self.rho.pos as i64, diff + HALF_TURN_Q8 as i64)
        } else {
            (zr - self.rho.pos as i64, diff)
        }
    }

    fn gate_q8(&self, d: &Detection, cfg: &TrackConfig) -> u32 {
        let (yr, yt) = self.innovation(d);
        self.rho
            .nis_q8(yr, cfg.rho.meas_var)
            .saturating_add(self.theta.nis_q8(yt, cfg.theta.meas_var))
    }

    fn update(&mut self, d: &Detection) {
        let (yr, yt) = self.innovation(d);
        let xr = self.rho.update(yr);
        self.rho.pos = sat(xr, -POS_LIMIT_RHO, POS_LIMIT_RHO) as i32;
        let xt = self.theta.update(yt);
        self.wrap(xt);
        self.hits = self.hits.saturating_add(1);
        self.missed = 0;
    }

    /// Signed distance of the point to the line predicted `t` frames ahead,
    /// Q8 of 1/16 px.
    fn distance_q8(&self, point: (i32, i32), t: i64) -> i64 {
        let theta = self.theta.pos as i64 + t * self.theta.vel as i64;
        let rho = self.rho.pos as i64 + t * self.rho.vel as i64;
        let a = (theta & FULL_TURN_MASK) as i32;
        tally(Op::Mul, 2);
        tally(Op::Mac, 2);
        tally(Op::AddSub, 4);
        tally(Op::Shift, 1);
        rs(
            point.0 as i64 * cos_q15(a) as i64 + point.1 as i64 * sin_q15(a) as i64,
            7,
        ) - rho
    }

    fn crossing(&self, cfg: &TrackConfig) -> Option<u16> {
        let side = self.side as i64;
        if side * self.distance_q8(cfg.reference_q4, 0) <= 0 {
            return Some(0);
        }
        (1..=cfg.warn_horizon).find(|&t| {
            tally(Op::Branch, 1);
            side * self.distance_q8(cfg.reference_q4, t as i64) <= 0
        })
    }

    /// This call's prediction and the debounce rule (module docs); `gap`
    /// frame numbers since the previous call.
    fn evaluate_warning(&mut self, cfg: &TrackConfig, gap: u32) {
        self.frames_to_cross = if self.confirmed && self.hits >= cfg.warn_min_hits {
            self.crossing(cfg)
        } else {
            None
        };
        tally(Op::Branch, 2);
        tally(Op::AddSub, 1);
        (self.warn_streak, self.warning) = debounce(
            self.warning,
            self.frames_to_cross,
            self.warn_streak,
            cfg,
            gap,
        );
    }
}

/// One step of the debounce rule: `(streak, warning)` after a call whose
/// prediction is `p`.
fn debounce(
    warning: Option<u16>,
    p: Option<u16>,
    streak: u8,
    cfg: &TrackConfig,
    gap: u32,
) -> (u8, Option<u16>) {
    let next = streak.saturating_add(1);
    match (warning, p) {
        (None, Some(f)) if next >= cfg.warn_raise_frames => (0, Some(f)),
        (None, Some(_)) => (next, None),
        (None, None) => (0, None),
        (Some(_), Some(f)) => (0, Some(f)),
        (Some(_), None) if next >= cfg.warn_clear_frames => (0, None),
        (Some(w), None) => (
            next,
            Some(w.saturating_sub(u16::try_from(gap).unwrap_or(u16::MAX))),
        ),
    }
}

/// Words per track in [`track_words`].
///
/// ```
/// assert_eq!(fixsight::track::TRACK_WORDS, 18);
/// ```
pub const TRACK_WORDS: usize = 18;

/// A slot as 18 `i32` words (the layout of the tracker's golden vectors and
/// a compact log record): `[id or -1, confirmed, hits, missed, side,
/// frames_to_cross or -1, rho pos, rho vel, rho p_pos, rho p_cross, rho
/// p_vel, theta pos, theta vel, theta p_pos, theta p_cross, theta p_vel,
/// warn_streak, warning or -1]`; an empty slot is `-1` followed by zeros.
///
/// ```
/// use fixsight::track::{track_words, Track};
/// assert_eq!(track_words(None)[0], -1);
/// assert_eq!(track_words(Some(&Track::default()))[5], -1);
/// assert_eq!(track_words(Some(&Track::default()))[17], -1);
/// ```
pub fn track_words(t: Option<&Track>) -> [i32; TRACK_WORDS] {
    let mut w = [0; TRACK_WORDS];
    let Some(t) = t else {
        w[0] = -1;
        return w;
    };
    w[0] = t.id as i32;
    w[1] = t.confirmed as i32;
    w[2] = t.hits as i32;
    w[3] = t.missed as i32;
    w[4] = t.side as i32;
    w[5] = t.frames_to_cross.map_or(-1, |f| f as i32);
    for (k, a) in [&t.rho, &t.theta].into_iter().enumerate() {
        let base = 6 + 5 * k;
        w[base..base + 5].copy_from_slice(&[a.pos, a.vel, a.p_pos, a.p_cross, a.p_vel]);
    }
    w[16] = t.warn_streak as i32;
    w[17] = t.warning.map_or(-1, |f| f as i32);
    w
}

/// A raised drift warning: a predicted crossing of the reference point
/// over a confirmed edge, after the debounce rule of the module docs.
///
/// ```
/// let w = fixsight::track::DriftWarning { track_id: 3, slot: 0, frames: 12 };
/// assert_eq!(w.frames, 12);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DriftWarning {
    /// Id of the track.
    pub track_id: u16,
    /// Its slot.
    pub slot: u8,
    /// Frames until the predicted crossing (0: on or past the edge); while
    /// the warning is held without a prediction, the last one counted down.
    pub frames: u16,
}

/// What one [`Tracker::update`] did.
///
/// ```
/// let r = fixsight::track::FrameReport::default();
/// assert!(r.warning.is_none());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FrameReport {
    /// Detections associated with a track.
    pub associated: u8,
    /// Tracks started.
    pub born: u8,
    /// Tracks dropped (misses, including skipped frames).
    pub dropped: u8,
    /// The most urgent raised drift warning, if any (debounce rule in the
    /// module docs).
    pub warning: Option<DriftWarning>,
}

/// Up to `N` tracks fed with up to `M` detections per frame; no heap, fixed
/// size (`N` and `M` in `1 ..= 255`).
///
/// ```
/// use fixsight::track::{Detection, TrackConfig, Tracker};
/// let mut t: Tracker<2, 4> = Tracker::new(TrackConfig::DEMO)?;
/// let d = [Detection { rho_q4: -400, theta: 100, weight: 90 }];
/// for f in 0..3 {
///     t.update(f, &d)?;
/// }
/// let tr = t.tracks().next().unwrap();
/// assert!(tr.confirmed);
/// assert_eq!(tr.rho.pos >> 8, -400);
/// assert!(t.update(2, &d).is_err()); // frame numbers must increase
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug, Clone)]
pub struct Tracker<const N: usize, const M: usize> {
    cfg: TrackConfig,
    /// A slot holds a track when its `hits` is nonzero (a track is born
    /// with one hit and never loses one); an empty slot is [`NO_TRACK`],
    /// all zero bytes, so that a tracker in a `static` takes no initial
    /// image in flash.
    slots: [Track; N],
    gates: [[u32; M]; N],
    last_frame: Option<u32>,
    next_id: u16,
}

/// An empty slot (module docs of [`Tracker`]): every field zero.
const NO_TRACK: Track = Track {
    id: 0,
    rho: AxisState::ZERO,
    theta: AxisState::ZERO,
    hits: 0,
    missed: 0,
    confirmed: false,
    side: 0,
    frames_to_cross: None,
    warn_streak: 0,
    warning: None,
};

impl<const N: usize, const M: usize> Tracker<N, M> {
    /// The value a job holds before it is configured: no track, every
    /// configuration field zero (not a valid configuration; never used to
    /// update). All zero bytes.
    pub(crate) const UNSET: Self = Self {
        cfg: TrackConfig::UNSET,
        slots: [NO_TRACK; N],
        gates: [[0; M]; N],
        last_frame: None,
        next_id: 0,
    };

    /// Back to [`Tracker::UNSET`], field by field in place (`*self =
    /// Self::UNSET` may build the whole value on the stack first).
    pub(crate) fn unset(&mut self) {
        self.reset();
        self.cfg = TrackConfig::UNSET;
        for row in self.gates.iter_mut() {
            row.fill(0);
        }
    }

    /// A tracker with no tracks. Errors: a configuration field out of range,
    /// or `N`, `M` outside `1 ..= 255` ([`Error::BadParameter`]).
    ///
    /// ```
    /// use fixsight::track::{TrackConfig, Tracker};
    /// assert!(Tracker::<0, 4>::new(TrackConfig::DEMO).is_err());
    /// assert!(Tracker::<4, 4>::new(TrackConfig::DEMO).is_ok());
    /// ```
    pub fn new(cfg: TrackConfig) -> Result<Self> {
        Self::check(&cfg)?;
        Ok(Self {
            cfg,
            slots: [NO_TRACK; N],
            gates: [[0; M]; N],
            last_frame: None,
            next_id: 0,
        })
    }

    /// The checks of [`Tracker::new`].
    pub(crate) fn check(cfg: &TrackConfig) -> Result<()> {
        cfg.validate()?;
        if N == 0 || N > 255 {
            return Err(Error::BadParameter {
                name: "N (track slots)",
                expected: "1 ..= 255",
                got: N as i64,
            });
        }
        if M == 0 || M > 255 {
            return Err(Error::BadParameter {
                name: "M (detections per frame)",
                expected: "1 ..= 255",
                got: M as i64,
            });
        }
        Ok(())
    }

    /// What [`Tracker::new`] gives for a configuration that passed
    /// [`Tracker::check`], written in place (no tracker-sized temporary on
    /// the stack, which `*self = Tracker::new(cfg)?` may build).
    pub(crate) fn start(&mut self, cfg: TrackConfig) {
        self.unset();
        self.cfg = cfg;
    }

    /// Forgets every track and the last frame number (the configuration
    /// stays); track ids start again from 0.
    ///
    /// ```
    /// use fixsight::track::{Detection, TrackConfig, Tracker};
    /// let mut t: Tracker<2, 2> = Tracker::new(TrackConfig::DEMO)?;
    /// t.update(5, &[Detection { rho_q4: 0, theta: 0, weight: 99 }])?;
    /// t.reset();
    /// assert_eq!(t.tracks().count(), 0);
    /// t.update(0, &[])?; // frame 0 is accepted again
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn reset(&mut self) {
        for t in self.slots.iter_mut() {
            *t = NO_TRACK;
        }
        self.last_frame = None;
        self.next_id = 0;
    }

    /// The configuration.
    ///
    /// ```
    /// use fixsight::track::{TrackConfig, Tracker};
    /// let t: Tracker<1, 1> = Tracker::new(TrackConfig::DEMO)?;
    /// assert_eq!(t.config(), &TrackConfig::DEMO);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn config(&self) -> &TrackConfig {
        &self.cfg
    }

    /// The track in slot `i`, if any.
    ///
    /// ```
    /// use fixsight::track::{TrackConfig, Tracker};
    /// let t: Tracker<2, 2> = Tracker::new(TrackConfig::DEMO)?;
    /// assert!(t.slot(0).is_none());
    /// assert!(t.slot(7).is_none());
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn slot(&self, i: usize) -> Option<&Track> {
        self.slots.get(i).filter(|t| t.live())
    }

    /// The live tracks in slot order.
    ///
    /// ```
    /// use fixsight::track::{TrackConfig, Tracker};
    /// let t: Tracker<2, 2> = Tracker::new(TrackConfig::DEMO)?;
    /// assert_eq!(t.tracks().count(), 0);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn tracks(&self) -> impl Iterator<Item = &Track> {
        self.slots.iter().filter(|t| t.live())
    }

    /// The last frame number accepted.
    ///
    /// ```
    /// use fixsight::track::{TrackConfig, Tracker};
    /// let mut t: Tracker<1, 1> = Tracker::new(TrackConfig::DEMO)?;
    /// t.update(9, &[])?;
    /// assert_eq!(t.last_frame(), Some(9));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn last_frame(&self) -> Option<u32> {
        self.last_frame
    }

    /// Processes the detections of frame `frame` (see the module docs for
    /// every rule). Errors ([`Error::FrameOrder`], [`Error::BadParameter`])
    /// leave the tracker unchanged.
    ///
    /// ```
    /// use fixsight::track::{Detection, TrackConfig, Tracker};
    /// let mut t: Tracker<2, 4> = Tracker::new(TrackConfig::DEMO)?;
    /// let r = t.update(0, &[Detection { rho_q4: 100, theta: 65500, weight: 50 }])?;
    /// assert_eq!(r.born, 1);
    /// // The same line seen just past 180 degrees: theta 200, rho negated.
    /// let r = t.update(1, &[Detection { rho_q4: -100, theta: 200, weight: 50 }])?;
    /// assert_eq!(r.associated, 1);
    /// assert_eq!(r.born, 0);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn update(&mut self, frame: u32, detections: &[Detection]) -> Result<FrameReport> {
        if let Some(last) = self.last_frame {
            if frame <= last {
                return Err(Error::FrameOrder { last, got: frame });
            }
        }
        if detections.len() > M {
            return Err(Error::BadParameter {
                name: "detections.len()",
                expected: "at most M (the tracker's detections per frame)",
                got: detections.len() as i64,
            });
        }
        if let Some(d) = detections
            .iter()
            .find(|d| d.rho_q4.unsigned_abs() >= RHO_LIMIT_Q4 as u32)
        {
            return Err(Error::BadParameter {
                name: "rho_q4",
                expected: "|rho_q4| < 2^17",
                got: d.rho_q4 as i64,
            });
        }
        let gap = match self.last_frame {
            Some(last) => frame - last,
            None => 1,
        };
        self.last_frame = Some(frame);
        let cfg = self.cfg;
        let mut rep = FrameReport::default();

        // Predict through skipped frames (misses) to this frame.
        for t in self.slots.iter_mut().filter(|t| t.live()) {
            let mut step = 0u32;
            loop {
                t.predict(&cfg);
                step += 1;
                if step == gap {
                    break;
                }
                t.missed = t.missed.saturating_add(1);
                if dropped(t, &cfg) {
                    *t = NO_TRACK;
                    rep.dropped += 1;
                    break;
                }
            }
        }

        // Gates.
        let mut in_any_gate = [false; M];
        for (slot, row) in self.slots.iter().zip(self.gates.iter_mut()) {
            for (j, g) in row.iter_mut().enumerate() {
                *g = match detections.get(j) {
                    Some(d) if slot.live() => slot.gate_q8(d, &cfg),
                    _ => u32::MAX,
                };
                if *g <= cfg.gate_q8 {
                    in_any_gate[j] = true;
                }
            }
        }

        // Greedy global nearest neighbour.
        let mut track_taken = [false; N];
        let mut det_taken = [false; M];
        loop {
            let mut best: Option<(u32, usize, usize)> = None;
            for (i, row) in self.gates.iter().enumerate() {
                if track_taken[i] {
                    continue;
                }
                for (j, &g) in row.iter().enumerate().take(detections.len()) {
                    tally(Op::Logic, 2);
                    if det_taken[j] || g > cfg.gate_q8 {
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
            if let (Some(t), Some(d)) = (self.slots.get_mut(i), detections.get(j)) {
                if !t.live() {
                    continue; // an empty slot's gate is u32::MAX
                }
                t.update(d);
                if t.hits >= cfg.confirm_hits as u16 {
                    t.confirmed = true;
                }
                rep.associated += 1;
            }
        }

        // Misses of this frame.
        for (t, &taken) in self.slots.iter_mut().zip(track_taken.iter()) {
            if t.live() && !taken {
                t.missed = t.missed.saturating_add(1);
                if dropped(t, &cfg) {
                    *t = NO_TRACK;
                    rep.dropped += 1;
                }
            }
        }

        // Births: ungated detections by decreasing weight.
        let mut used = in_any_gate;
        loop {
            let mut best: Option<(u32, usize)> = None;
            for (j, d) in detections.iter().enumerate() {
                if used[j] || d.weight < cfg.birth_weight {
                    continue;
                }
                if best.is_none_or(|(w, _)| d.weight > w) {
                    best = Some((d.weight, j));
                }
            }
            let Some((_, j)) = best else { break };
            used[j] = true;
            let Some(free) = self.slots.iter_mut().find(|s| !s.live()) else {
                break;
            };
            let Some(d) = detections.get(j) else { break };
            let mut t = Track {
                id: self.next_id,
                rho: AxisState::born((d.rho_q4 as i64) << STATE_FRAC, cfg.rho.init_vel_var_q16),
                theta: AxisState::born((d.theta as i64) << STATE_FRAC, cfg.theta.init_vel_var_q16),
                hits: 1,
                missed: 0,
                confirmed: cfg.confirm_hits <= 1,
                side: 1,
                frames_to_cross: None,
                warn_streak: 0,
                warning: None,
            };
            if t.distance_q8(cfg.reference_q4, 0) < 0 {
                t.side = -1;
            }
            self.next_id = self.next_id.wrapping_add(1);
            *free = t;
            rep.born += 1;
        }

        // Drift warnings.
        for (i, t) in self.slots.iter_mut().enumerate() {
            if !t.live() {
                continue;
            }
            t.evaluate_warning(&cfg, gap);
            if let Some(frames) = t.warning {
                if rep.warning.is_none_or(|w| frames < w.frames) {
                    rep.warning = Some(DriftWarning {
                        track_id: t.id,
                        slot: i as u8,
                        frames,
                    });
                }
            }
        }
        Ok(rep)
    }
}

/// The drop rule: tentative at the first miss, confirmed beyond
/// `max_missed`.
fn dropped(t: &Track, cfg: &TrackConfig) -> bool {
    if t.confirmed {
        t.missed > cfg.max_missed
    } else {
        t.missed > 0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn det(rho_q4: i32, theta: u16) -> Detection {
        Detection {
            rho_q4,
            theta,
            weight: 100,
        }
    }

    #[test]
    fn sine_table_symmetries_and_pythagoras() {
        // sin^2 + cos^2 within the interpolation error of 1 (Q30), every
        // 1/64 of a binary step over a full turn.
        for a in (0..(1i32 << 25)).step_by(4099) {
            let (s, c) = (sin_q15(a) as i64, cos_q15(a) as i64);
            let r = s * s + c * c;
            assert!((r - (1 << 30)).abs() <= 2 * 2 * 32768, "a={a} r={r}");
            assert_eq!(sin_q15(a), -sin_q15(-a), "odd at {a}");
            assert_eq!(sin_q15(a + (1 << 24)), -sin_q15(a));
        }
        assert_eq!(cos_q15(1 << 23), 0);
    }

    #[test]
    fn constant_line_converges_and_confirms() {
        let mut t: Tracker<4, 4> = Tracker::new(TrackConfig::DEMO).unwrap();
        for f in 0..50 {
            let r = t.update(f, &[det(800, 3000)]).unwrap();
            assert_eq!(r.dropped, 0);
        }
        let tr = t.tracks().next().unwrap();
        assert!(tr.confirmed);
        assert_eq!(tr.hits, 50);
        assert_eq!(tr.rho.pos, 800 << 8);
        assert_eq!(tr.theta.pos, 3000 << 8);
        assert_eq!(tr.rho.vel, 0);
    }

    #[test]
    fn theta_wrap_keeps_one_track_and_flips_rho() {
        // A line whose normal turns through 180 degrees: theta decreasing
        // 100 units per frame from 1000; past 0 it is reported as
        // (65536 - k, -rho).
        let mut cfg = TrackConfig::DEMO;
        cfg.theta.init_vel_var_q16 = 4 << 16;
        let mut t: Tracker<4, 4> = Tracker::new(cfg).unwrap();
        let rho = 1600;
        for f in 0..30i32 {
            let th = 1000 - 100 * f;
            let d = if th >= 0 {
                det(rho, th as u16)
            } else {
                det(-rho, (65536 + th) as u16)
            };
            let r = t.update(f as u32, &[d]).unwrap();
            if f > 0 {
                assert_eq!(r.born, 0, "frame {f}: a second track started");
                assert_eq!(r.associated, 1, "frame {f}");
            }
        }
        let tr = t.tracks().next().unwrap();
        assert!(tr.theta.pos > 60000 << 8, "theta {}", tr.theta.pos);
        assert!(
            (tr.rho.pos + (rho << 8)).abs() < 256 * 8,
            "rho {}",
            tr.rho.pos
        );
        assert!(tr.theta.vel < 0 && (tr.theta.vel + 100 * 256).abs() < 256 * 5);
        assert_eq!(t.tracks().count(), 1);
    }

    #[test]
    fn non_monotonic_frames_are_rejected_without_change() {
        let mut t: Tracker<2, 2> = Tracker::new(TrackConfig::DEMO).unwrap();
        t.update(10, &[det(0, 0)]).unwrap();
        let before = t.clone();
        assert_eq!(
            t.update(10, &[]),
            Err(Error::FrameOrder { last: 10, got: 10 })
        );
        assert_eq!(
            t.update(3, &[]),
            Err(Error::FrameOrder { last: 10, got: 3 })
        );
        assert_eq!(t.slots, before.slots);
        assert!(matches!(
            t.update(11, &[det(0, 0), det(1, 1), det(2, 2)]),
            Err(Error::BadParameter { .. })
        ));
        assert!(matches!(
            t.update(11, &[det(1 << 17, 0)]),
            Err(Error::BadParameter { .. })
        ));
        assert_eq!(t.last_frame(), Some(10));
    }

    #[test]
    fn confirmed_track_survives_max_missed_then_drops() {
        let mut t: Tracker<2, 2> = Tracker::new(TrackConfig::DEMO).unwrap();
        for f in 0..5 {
            t.update(f, &[det(0, 0)]).unwrap();
        }
        // 5 missed frames survive, the 6th drops the track.
        for f in 5..10 {
            assert_eq!(t.update(f, &[]).unwrap().dropped, 0);
        }
        assert_eq!(t.update(10, &[]).unwrap().dropped, 1);
        // Skipped frame numbers count as misses too.
        let mut t: Tracker<2, 2> = Tracker::new(TrackConfig::DEMO).unwrap();
        for f in 0..5 {
            t.update(f, &[det(0, 0)]).unwrap();
        }
        assert_eq!(t.update(10, &[det(0, 0)]).unwrap().associated, 1);
        assert_eq!(t.update(17, &[det(0, 0)]).unwrap().dropped, 1);
        // A tentative track drops at its first miss.
        let mut t: Tracker<2, 2> = Tracker::new(TrackConfig::DEMO).unwrap();
        t.update(0, &[det(0, 0)]).unwrap();
        assert_eq!(t.update(1, &[]).unwrap().dropped, 1);
    }

    #[test]
    fn association_ties_go_to_the_lowest_slot() {
        let mut t: Tracker<2, 2> = Tracker::new(TrackConfig::DEMO).unwrap();
        // Two tracks 4 px apart; one detection exactly between them.
        t.update(0, &[det(-32, 0), det(32, 0)]).unwrap();
        let r = t.update(1, &[det(0, 0)]).unwrap();
        assert_eq!(r.associated, 1);
        assert_eq!(t.slot(0).unwrap().hits, 2);
        assert!(t.slot(1).is_none(), "the tentative loser dropped");
    }

    #[test]
    fn gated_detections_start_no_track_and_births_follow_weight() {
        let mut t: Tracker<2, 4> = Tracker::new(TrackConfig::DEMO).unwrap();
        let w = |rho_q4, weight| Detection {
            rho_q4,
            theta: 0,
            weight,
        };
        let r = t
            .update(0, &[w(0, 50), w(1600, 60), w(-1600, 70), w(3200, 10)])
            .unwrap();
        assert_eq!(r.born, 2);
        assert_eq!(t.slot(0).unwrap().rho.pos, -1600 << 8);
        assert_eq!(t.slot(1).unwrap().rho.pos, 1600 << 8);
        // A duplicate next to a tracked line does not start a track.
        let r = t.update(1, &[w(-1600, 70), w(-1598, 70)]).unwrap();
        assert_eq!((r.associated, r.born), (1, 0));
    }

    #[test]
    fn warning_counts_down_to_the_crossing() {
        let mut cfg = TrackConfig::DEMO;
        cfg.reference_q4 = (0, 0);
        let mut t: Tracker<2, 2> = Tracker::new(cfg).unwrap();
        // Edge at x = 10 px moving 0.25 px/frame toward x = 0: crosses at
        // frame 40.
        let mut seen = 0;
        for f in 0..45u32 {
            let r = t.update(f, &[det(160 - 4 * f as i32, 0)]).unwrap();
            if let Some(w) = r.warning {
                if (20..=40).contains(&f) {
                    let eta = f as i32 + w.frames as i32;
                    assert!((39..=41).contains(&eta), "frame {f}: eta {eta}");
                    seen += 1;
                } else if f > 40 {
                    assert_eq!(w.frames, 0, "frame {f}: past the edge");
                }
            }
        }
        assert!(seen >= 20);
        let tr = t.tracks().next().unwrap();
        assert_eq!(tr.side, -1, "d = -rho < 0 at birth");
        assert_eq!(tr.frames_to_cross, Some(0));
    }

    #[test]
    fn debounce_raises_after_k_holds_with_countdown_and_clears_after_k_prime() {
        let mut cfg = TrackConfig::DEMO;
        cfg.warn_raise_frames = 3;
        cfg.warn_clear_frames = 2;
        // Raise on the 3rd prediction in a row; a gap breaks nothing.
        let mut st = (0u8, None);
        for (p, want) in [
            (Some(50), (1, None)),
            (None, (0, None)),
            (Some(40), (1, None)),
            (Some(39), (2, None)),
            (Some(38), (0, Some(38))),
            (Some(30), (0, Some(30))),
        ] {
            st = debounce(st.1, p, st.0, &cfg, 1);
            assert_eq!(st, want, "p {p:?}");
        }
        // Held one call, counted down by the frames elapsed (gap 4), then
        // cleared on the 2nd call without a prediction.
        st = debounce(st.1, None, st.0, &cfg, 4);
        assert_eq!(st, (1, Some(26)));
        assert_eq!(debounce(st.1, Some(20), st.0, &cfg, 1), (0, Some(20)));
        assert_eq!(debounce(st.1, None, st.0, &cfg, 1), (0, None));
        // The countdown saturates at 0, the streak at 255.
        cfg.warn_clear_frames = 255;
        assert_eq!(debounce(Some(3), None, 7, &cfg, 100_000), (8, Some(0)));
        assert_eq!(debounce(Some(3), None, 255, &cfg, 1), (0, None));
        cfg.warn_raise_frames = 255;
        assert_eq!(debounce(None, Some(5), 254, &cfg, 1), (0, Some(5)));
    }

    #[test]
    fn one_call_debounce_is_the_plain_prediction_and_demo_delays_it_by_k() {
        // Edge at x = 10 px moving 0.25 px/frame toward the point.
        let run = |raise: u8, clear: u8| {
            let mut cfg = TrackConfig::DEMO;
            cfg.reference_q4 = (0, 0);
            cfg.warn_raise_frames = raise;
            cfg.warn_clear_frames = clear;
            let mut t: Tracker<2, 2> = Tracker::new(cfg).unwrap();
            let mut out = [(None, None); 45];
            for (f, o) in out.iter_mut().enumerate() {
                let r = t.update(f as u32, &[det(160 - 4 * f as i32, 0)]).unwrap();
                *o = (
                    t.slot(0).unwrap().frames_to_cross,
                    r.warning.map(|w| w.frames),
                );
            }
            out
        };
        let plain = run(1, 1);
        assert!(plain.iter().all(|(p, w)| p == w));
        let first = plain.iter().position(|(p, _)| p.is_some()).unwrap();
        let demo = run(8, 24);
        let raised = demo.iter().position(|(_, w)| w.is_some()).unwrap();
        assert!(plain[first..first + 8].iter().all(|(p, _)| p.is_some()));
        assert_eq!(raised, first + 7, "raised on the 8th prediction in a row");
        assert!(demo[raised..].iter().all(|(p, w)| p == w));
    }

    #[test]
    fn extreme_inputs_saturate_without_panic() {
        let mut cfg = TrackConfig::DEMO;
        cfg.rho.accel_index_q16 = 1 << 24;
        cfg.theta.accel_index_q16 = 1 << 24;
        cfg.rho.init_vel_var_q16 = 1 << 28;
        cfg.max_missed = 255;
        cfg.confirm_hits = 1;
        cfg.gate_q8 = u32::MAX;
        cfg.reference_q4 = (RHO_LIMIT_Q4 - 1, -(RHO_LIMIT_Q4 - 1));
        cfg.warn_horizon = WARN_HORIZON_MAX;
        let mut t: Tracker<2, 2> = Tracker::new(cfg).unwrap();
        let lim = RHO_LIMIT_Q4 - 1;
        for f in 0..300u32 {
            let d = if f % 2 == 0 {
                det(lim, 0)
            } else {
                det(-lim, 32768)
            };
            let ds = [d];
            let _ = t.update(f * 7, if f % 3 == 0 { &[] } else { &ds }).unwrap();
        }
        let _ = t.update(u32::MAX, &[det(lim, u16::MAX)]).unwrap();
        assert!(t.update(u32::MAX, &[]).is_err());
    }
}
