//! Marking selection: from the lines found in the corrected (undistorted)
//! view, pick the two edges of a floor tape, or say that there is none.
//!
//! > **Not a safety function.** This selection may end up steering a
//! > vehicle. It is not developed, assessed or certified as a safety
//! > function; a vehicle that can hurt people needs safety-rated sensing
//! > and control under the applicable standards (for example ISO 3691-4,
//! > IEC 61508, ISO 13849) and local rules, with protective measures that
//! > do not depend on this software.
//!
//! # Units (shared with the lines stage)
//!
//! A line is `rho = x cos(theta) + y sin(theta)` with `x` to the right and
//! `y` down the rows, in pixels of the corrected view measured from the
//! image centre `((W-1)/2, (H-1)/2)` (pixel centres at integers). `rho` is
//! an `i32` in Q4 (1/16 px); `theta` is a `u16` binary angle, 65536 units
//! = 180 degrees, so `theta` covers `[0, 180)` degrees. Rows passed in the
//! configuration are `y` values in Q4 on the same origin.
//!
//! # The geometry behind the rules
//!
//! A pinhole camera of focal length `f` px (the corrected view's) sits `h`
//! above a flat floor, pitched down by `phi`, without roll, its principal
//! point at the image centre. A floor point seen on row `y` lies at depth
//! `Z = h / (sin(phi) + (y/f) cos(phi))`, so a length `d` across that row
//! on the floor spans `f d / Z = d cos(phi) (y - y_h) / h` pixels, where
//! `y_h = -f tan(phi)` is the horizon row. Hence every floor line parallel
//! to the tape runs to one vanishing point on the horizon, and a tape of
//! width `w` at heading `psi` to the camera spans
//! `w cos(phi) (y - y_h) / (h cos(psi))` pixels across row `y`: its two
//! edges are not parallel in the image but converge on the horizon. Two
//! rows below the horizon, a **near row** and a **far row**, turn this into
//! integer tests on where each line crosses them.
//!
//! # Rules
//!
//! For a line, `tilt` is its angle from the vertical: `theta` when
//! `theta < 32768`, else `65536 - theta` (binary units). `x(y)` is the
//! column (Q4) where it crosses row `y` (integer model below).
//!
//! 1. **Tilt**: `tilt <= max_tilt`. Rejects floor joints and stop lines
//!    across the aisle (near-horizontal in the image) and the racking and
//!    shelf edges along the aisle far to the side (steep in the floor's
//!    perspective).
//! 2. **Near position**: `near_x_min <= x(near_row) <= near_x_max`: the
//!    tape is within the lateral range searched.
//!
//! A pair of lines that both pass 1 and 2, named `L` and `R` so that
//! `x_L(near_row) < x_R(near_row)`:
//!
//! 3. **Near separation**: `near_sep_min <= x_R(near) - x_L(near) <= near_sep_max`.
//! 4. **Convergence**: the two lines meet on the horizon. Two floor lines
//!    through one vanishing point on the horizon row `y_h` have
//!    separations `s_n = x_R(near) - x_L(near)` and
//!    `s_f = x_R(far) - x_L(far)` in the ratio `s_f / s_n = D_f / D_n`,
//!    `D_n = near_row - horizon_row`, `D_f = far_row - horizon_row`. The
//!    rule is `|s_f D_n - s_n D_f| <= converge_tol D_n`, exact in `i64`.
//!    Rules 3 and 4 together say "near-parallel, converging on the
//!    horizon, as wide as the tape": a parallel pair (two racking
//!    uprights, which converge below the image) or a tape edge paired with
//!    a line of another vanishing point fails rule 4; two lines of the same
//!    edge fail the minimum of rule 3.
//! 5. **Contrast** (only when both lines carry a [`Polarity`] and the
//!    configuration's [`TapeContrast`] is not `Either`): for a tape
//!    brighter than the floor, `L` must be brighter on its right and `R`
//!    brighter on its left; reversed for a darker tape. A line with
//!    [`Polarity::Rising`] is brighter on its right when `theta < 32768`
//!    (its normal points right), brighter on its left otherwise;
//!    [`Polarity::Falling`] the opposite. Rejects dark grooves and the
//!    gap between two tapes.
//!
//! **Choice** among the pairs passing every rule: the largest vote sum
//! `votes_L + votes_R` (exact, `u64`); on equal sums the smallest
//! `|x_R(near) - x_L(near) - near_sep_nominal|`; on equal deviations the
//! pair met first when pairs are enumerated as input indices `(i, j)`,
//! `i < j`, `i` outer. No pair: [`Marking::NotFound`], with the number of
//! lines that passed rules 1 and 2.
//!
//! Where the limits come from: they are derived from the camera height,
//! pitch and focal length, the tape width and stated tolerances by the
//! host tool (`fixsight_verify::marking::derive_limits`, with the
//! derivation in its docs); [`MarkingConfig::DEMO`] is its result for the
//! demo camera.
//!
//! # Integer model (enough to match it bit for bit)
//!
//! * **Sine and cosine**, Q15 (32768 = 1). A quarter-wave table
//!   [`SIN_Q15`] of 257 entries `T[i] = round(32768 sin(i pi / 512))`,
//!   `i = 0..=256` (no entry is within 0.003 of a half). For `a` in
//!   `0..=32768` (90 degrees = 32768 units), `S(a) = T[256]` when
//!   `a = 32768`, else with `i = a >> 7`, `r = a & 127`:
//!   `S(a) = T[i] + round_shift((T[i+1] - T[i]) * r, 7)`, that is
//!   `((T[i+1] - T[i]) * r + 64) >> 7` (the difference is never negative). Then for `theta` in `0..65536`:
//!   `sin = S(theta)` if `theta < 32768` else `S(65536 - theta)`;
//!   `cos = S(32768 - theta)` if `theta <= 32768` else `-S(theta - 32768)`.
//!   Error against `32768 sin`, `32768 cos`: at most
//!   `1/2 (table) + 1/2 (final rounding) + (pi/512)^2 / 8 * 32768
//!   (interpolation) = 1.1543` LSB ([`SIN_COS_MAX_ERR_MILLI_LSB`]); the
//!   host tool measures 1.0007 LSB over all 65536 angles.
//! * **Column at a row** ([`column_at_row`]): in `i64`,
//!   `n = rho * 32768 - y * sin`, `d = cos`; if `d < 0` both change sign;
//!   `x = floor((2n + d) / (2d))`, the quotient rounded half up (toward
//!   +infinity). `d = 0` (a horizontal line) has no column. With
//!   `|rho| <= 2^31`, `|y| <= 2^19` nothing overflows (`|2n + d| < 2^48`).
//! * **Rules** compare these `i64` columns and their differences with the
//!   configuration's `i32` limits exactly; the tilt is compared in binary
//!   units. With `max_tilt <= 60` degrees, `|cos| >= 16383` for every line
//!   that reaches the division. Rule 4 multiplies separations (below
//!   `2^26` in magnitude: near columns are within `MAX_SPAN_Q4`, far
//!   columns within `2^21` of them) by row differences (below `2^20`):
//!   below `2^47`, exact in `i64`.
//!
//! # Cost
//!
//! `n` input lines: at most `n` column pairs (two table sines, two
//! divisions each), `n (n - 1) / 2` pair tests (a few subtractions,
//! multiplications and comparisons each). The columns of the first
//! [`CACHED_LINES`] lines are kept on the stack as two `i32` (512 bytes
//! and a 64-bit mask; a near column that passed rule 2 is within
//! `MAX_SPAN_Q4`, its far column within `2^21 + 1` of it, so both fit);
//! lines past them are evaluated again for each pair they enter.
//!
//! ```
//! use fixsight::marking::{self, Candidate, Marking, MarkingConfig, Polarity};
//! let line = |rho_px: i32, theta: u16, polarity| Candidate {
//!     rho_q4: rho_px * 16,
//!     theta,
//!     votes: 90,
//!     polarity,
//! };
//! let lines = [
//!     line(-4, 1000, Polarity::Rising),   // left tape edge, tilted right of vertical
//!     line(0, 32768, Polarity::Rising),   // a joint across the aisle
//!     line(-3, 64800, Polarity::Rising),  // right tape edge (theta near 180 degrees)
//! ];
//! match marking::select(&lines, &MarkingConfig::DEMO) {
//!     Marking::Found(t) => {
//!         assert_eq!((t.left, t.right), (0, 2));
//!         assert!(t.near_width_q4() > 0);
//!     }
//!     Marking::NotFound { .. } => unreachable!(),
//! }
//! # Ok::<(), fixsight::Error>(())
//! ```

use crate::arith::round_shift;
use crate::error::{Error, Result};
use crate::ops::{tally, Op};

/// Quarter-wave sine table, Q15: `SIN_Q15[i] = round(32768 sin(i pi / 512))`
/// for `i = 0..=256` (0 to 90 degrees in steps of 90/256 degree). The
/// host tool regenerates it with `f64` and checks every entry.
///
/// ```
/// use fixsight::marking::SIN_Q15;
/// assert_eq!((SIN_Q15[0], SIN_Q15[128], SIN_Q15[256]), (0, 23170, 32768));
/// ```
pub const SIN_Q15: [u16; 257] = [
    0, 201, 402, 603, 804, 1005, 1206, 1407, 1608, 1809, 2009, 2210, 2411, 2611, 2811, 3012, 3212,
    3412, 3612, 3812, 4011, 4211, 4410, 4609, 4808, 5007, 5205, 5404, 5602, 5800, 5998, 6195, 6393,
    6590, 6787, 6983, 7180, 7376, 7571, 7767, 7962, 8157, 8351, 8546, 8740, 8933, 9127, 9319, 9512,
    9704, 9896, 10088, 10279, 10469, 10660, 10850, 11039, 11228, 11417, 11605, 11793, 11980, 12167,
    12354, 12540, 12725, 12910, 13095, 13279, 13463, 13646, 13828, 14010, 14192, 14373, 14553,
    14733, 14912, 15091, 15269, 15447, 15624, 15800, 15976, 16151, 16326, 16500, 16673, 16846,
    17018, 17190, 17361, 17531, 17700, 17869, 18037, 18205, 18372, 18538, 18703, 18868, 19032,
    19195, 19358, 19520, 19681, 19841, 20001, 20160, 20318, 20475, 20632, 20788, 20943, 21097,
    21251, 21403, 21555, 21706, 21856, 22006, 22154, 22302, 22449, 22595, 22740, 22884, 23028,
    23170, 23312, 23453, 23593, 23732, 23870, 24008, 24144, 24279, 24414, 24548, 24680, 24812,
    24943, 25073, 25202, 25330, 25457, 25583, 25708, 25833, 25956, 26078, 26199, 26320, 26439,
    26557, 26674, 26791, 26906, 27020, 27133, 27246, 27357, 27467, 27576, 27684, 27791, 27897,
    28002, 28106, 28209, 28311, 28411, 28511, 28610, 28707, 28803, 28899, 28993, 29086, 29178,
    29269, 29359, 29448, 29535, 29622, 29707, 29792, 29875, 29957, 30038, 30118, 30196, 30274,
    30350, 30425, 30499, 30572, 30644, 30715, 30784, 30853, 30920, 30986, 31050, 31114, 31177,
    31238, 31298, 31357, 31415, 31471, 31527, 31581, 31634, 31686, 31737, 31786, 31834, 31881,
    31927, 31972, 32015, 32058, 32099, 32138, 32177, 32214, 32251, 32286, 32319, 32352, 32383,
    32413, 32442, 32470, 32496, 32522, 32546, 32568, 32590, 32610, 32629, 32647, 32664, 32679,
    32693, 32706, 32718, 32729, 32738, 32746, 32753, 32758, 32762, 32766, 32767, 32768,
];

/// Worst-case error of [`sin_cos_q15`] against the exact `32768 sin`,
/// `32768 cos`, in thousandths of an LSB, rounded up: `1/2 + 1/2 +
/// (pi/512)^2 / 8 * 32768 = 1.15421` LSB.
///
/// ```
/// assert_eq!(fixsight::marking::SIN_COS_MAX_ERR_MILLI_LSB, 1155);
/// ```
pub const SIN_COS_MAX_ERR_MILLI_LSB: u32 = 1155;

/// Largest accepted `max_tilt`: 60 degrees (21845 binary units), so that
/// `|cos| >= 1/2` for every line the columns are computed for.
///
/// ```
/// assert_eq!(fixsight::marking::MAX_TILT, 21845);
/// ```
pub const MAX_TILT: u16 = 21845;

/// Largest accepted `|row|` in the configuration, Q4: 32767 px.
///
/// ```
/// assert_eq!(fixsight::marking::MAX_ROW_Q4, 32767 * 16);
/// ```
pub const MAX_ROW_Q4: i32 = 32767 * 16;

/// Largest accepted `|column|` and separation limit in the configuration,
/// Q4 (`2^24`, a million pixels).
///
/// ```
/// assert_eq!(fixsight::marking::MAX_SPAN_Q4, 1 << 24);
/// ```
pub const MAX_SPAN_Q4: i32 = 1 << 24;

/// Lines whose columns [`select`] keeps on the stack.
///
/// ```
/// assert_eq!(fixsight::marking::CACHED_LINES, 64);
/// ```
pub const CACHED_LINES: usize = 64;

/// Which way the image intensity changes across a line, when the lines
/// stage knows it (for example from the sign of the gradient of the
/// pixels that voted for it, projected on the line's normal).
///
/// ```
/// use fixsight::marking::Polarity;
/// assert_ne!(Polarity::Rising, Polarity::Falling);
/// assert_eq!(Polarity::default(), Polarity::Unknown);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Polarity {
    /// Not known: the contrast rule is skipped for this line.
    #[default]
    Unknown,
    /// The image grows brighter along the normal `(cos theta, sin theta)`.
    Rising,
    /// The image grows darker along the normal.
    Falling,
}

/// One detected line offered to the selection.
///
/// ```
/// use fixsight::marking::{Candidate, Polarity};
/// // A vertical line 10.5 px right of the image centre, 120 votes.
/// let c = Candidate { rho_q4: 168, theta: 0, votes: 120, polarity: Polarity::Unknown };
/// assert_eq!(c.rho_q4, 168);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Candidate {
    /// `rho`, Q4 pixels from the image centre.
    pub rho_q4: i32,
    /// `theta`, binary angle (65536 = 180 degrees).
    pub theta: u16,
    /// Votes (or any non-negative strength; only compared and added).
    pub votes: u32,
    /// Intensity change across the line, if known.
    pub polarity: Polarity,
}

/// Whether the tape is brighter or darker than the floor.
///
/// ```
/// use fixsight::marking::TapeContrast;
/// assert_ne!(TapeContrast::Brighter, TapeContrast::Either);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum TapeContrast {
    /// Light tape on a darker floor (the demo).
    Brighter,
    /// Dark tape on a lighter floor.
    Darker,
    /// Either: the contrast rule is off.
    Either,
}

/// The limits of the rules, as plain numbers (see the module docs); made
/// into a usable [`MarkingConfig`] by [`MarkingConfig::new`], which checks
/// them. Rows and columns are Q4 pixels about the image centre.
///
/// ```
/// use fixsight::marking::MarkingConfig;
/// let l = *MarkingConfig::DEMO.limits();
/// assert!(l.horizon_row_q4 < l.far_row_q4 && l.far_row_q4 < l.near_row_q4);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MarkingLimits {
    /// Near row `y`, Q4.
    pub near_row_q4: i32,
    /// Far row `y`, Q4 (between the horizon and the near row).
    pub far_row_q4: i32,
    /// Horizon row `y`, Q4 (above the far row).
    pub horizon_row_q4: i32,
    /// Largest tilt from the vertical, binary units (`<= MAX_TILT`).
    pub max_tilt: u16,
    /// Smallest column on the near row, Q4.
    pub near_x_min_q4: i32,
    /// Largest column on the near row, Q4.
    pub near_x_max_q4: i32,
    /// Smallest separation on the near row, Q4 (`>= 1`).
    pub near_sep_min_q4: i32,
    /// Expected separation on the near row, Q4 (tie-break only).
    pub near_sep_nominal_q4: i32,
    /// Largest separation on the near row, Q4.
    pub near_sep_max_q4: i32,
    /// Largest departure of the far-row separation from the one
    /// convergence on the horizon predicts, Q4 (`>= 0`).
    pub converge_tol_q4: i32,
    /// Tape contrast.
    pub contrast: TapeContrast,
}

/// A checked set of [`MarkingLimits`].
///
/// ```
/// use fixsight::marking::{MarkingConfig, MarkingLimits};
/// let mut l = *MarkingConfig::DEMO.limits();
/// l.near_sep_min_q4 = l.near_sep_max_q4 + 1;
/// assert!(MarkingConfig::new(l).is_err());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MarkingConfig {
    limits: MarkingLimits,
}

const fn bad(name: &'static str, expected: &'static str, got: i64) -> Error {
    Error::BadParameter {
        name,
        expected,
        got,
    }
}

impl MarkingConfig {
    /// Every limit zero, a brighter tape: the stored value of a job that
    /// is not configured (not a valid configuration, never used). All
    /// zero bytes.
    pub(crate) const UNSET: MarkingConfig = MarkingConfig {
        limits: MarkingLimits {
            near_row_q4: 0,
            far_row_q4: 0,
            horizon_row_q4: 0,
            max_tilt: 0,
            near_x_min_q4: 0,
            near_x_max_q4: 0,
            near_sep_min_q4: 0,
            near_sep_nominal_q4: 0,
            near_sep_max_q4: 0,
            converge_tol_q4: 0,
            contrast: TapeContrast::Brighter,
        },
    };

    /// The demo camera's configuration: `fixsight_verify::marking::derive_limits`
    /// for the corrected view of the demo lens at 320 x 240 (focal length
    /// 107.1644 px), camera 0.45 m +- 0.02 m above the floor, pitched
    /// 30 +- 1 degrees down, a 50 +- 5 mm tape, headings up to 15 degrees,
    /// the tape's centre up to 0.15 m to either side on the near row, lines
    /// accurate to 1 px in `rho` and 1 degree in `theta`; near row the
    /// bottom row (`y = 119.5` px), far row halfway to the horizon; a tape
    /// brighter than the floor. Checked against the host derivation by the
    /// host tool's tests.
    ///
    /// In pixels: horizon at `y = -61.875`, far row `y = 28.8125` (the
    /// far separation of a tape is half the near one); tape columns on the
    /// near row within +-69.4 (65.4 for the tape, 3.9 for the line error);
    /// tilt up to 29.94 degrees; separation on the near row 7.1 to 28.7
    /// (tape 15.0 to 20.8 before the line errors, nominal 17.4);
    /// convergence residual up to 2.80 (2 x 1.31 for the line errors,
    /// 0.15 for the horizon moving with the pitch).
    ///
    /// ```
    /// let l = fixsight::marking::MarkingConfig::DEMO.limits();
    /// assert_eq!(l.near_row_q4, 1912);
    /// ```
    pub const DEMO: MarkingConfig = match MarkingConfig::new(MarkingLimits {
        near_row_q4: 1912,
        far_row_q4: 461,
        horizon_row_q4: -990,
        max_tilt: 10901,
        near_x_min_q4: -1110,
        near_x_max_q4: 1110,
        near_sep_min_q4: 114,
        near_sep_nominal_q4: 279,
        near_sep_max_q4: 459,
        converge_tol_q4: 45,
        contrast: TapeContrast::Brighter,
    }) {
        Ok(c) => c,
        // Evaluated at compile time: an invalid constant does not build.
        Err(_) => panic!("MarkingConfig::DEMO limits are invalid"),
    };

    /// Checks the limits: rows within `+-MAX_ROW_Q4` with
    /// `horizon_row < far_row < near_row`, `max_tilt <= MAX_TILT`,
    /// columns and separations within `+-MAX_SPAN_Q4`,
    /// `near_x_min <= near_x_max`,
    /// `1 <= near_sep_min <= near_sep_nominal <= near_sep_max`,
    /// `converge_tol >= 0`. The error names the first limit that fails.
    ///
    /// ```
    /// use fixsight::{Error, marking::{MarkingConfig, MAX_TILT}};
    /// let mut l = *MarkingConfig::DEMO.limits();
    /// l.max_tilt = MAX_TILT + 1;
    /// assert!(matches!(MarkingConfig::new(l), Err(Error::BadParameter { name: "max_tilt", .. })));
    /// ```
    pub const fn new(l: MarkingLimits) -> Result<Self> {
        let (row, span) = (MAX_ROW_Q4 as i64, MAX_SPAN_Q4 as i64);
        // (name, value, smallest, largest, accepted range in words), in
        // the order checked; a range may use the limits checked before it.
        let checks: [(&str, i64, i64, i64, &str); 10] = [
            (
                "near_row_q4",
                l.near_row_q4 as i64,
                -row,
                row,
                "-MAX_ROW_Q4..=MAX_ROW_Q4",
            ),
            (
                "far_row_q4",
                l.far_row_q4 as i64,
                -row,
                l.near_row_q4 as i64 - 1,
                "-MAX_ROW_Q4..near_row_q4 (above the near row)",
            ),
            (
                "horizon_row_q4",
                l.horizon_row_q4 as i64,
                -row,
                l.far_row_q4 as i64 - 1,
                "-MAX_ROW_Q4..far_row_q4 (above the far row)",
            ),
            (
                "max_tilt",
                l.max_tilt as i64,
                0,
                MAX_TILT as i64,
                "0..=MAX_TILT (60 degrees)",
            ),
            (
                "near_x_min_q4",
                l.near_x_min_q4 as i64,
                -span,
                span,
                "-MAX_SPAN_Q4..=MAX_SPAN_Q4",
            ),
            (
                "near_x_max_q4",
                l.near_x_max_q4 as i64,
                l.near_x_min_q4 as i64,
                span,
                "near_x_min_q4..=MAX_SPAN_Q4",
            ),
            (
                "near_sep_min_q4",
                l.near_sep_min_q4 as i64,
                1,
                span,
                "1..=MAX_SPAN_Q4",
            ),
            (
                "near_sep_nominal_q4",
                l.near_sep_nominal_q4 as i64,
                l.near_sep_min_q4 as i64,
                span,
                "near_sep_min_q4..=MAX_SPAN_Q4",
            ),
            (
                "near_sep_max_q4",
                l.near_sep_max_q4 as i64,
                l.near_sep_nominal_q4 as i64,
                span,
                "near_sep_nominal_q4..=MAX_SPAN_Q4",
            ),
            (
                "converge_tol_q4",
                l.converge_tol_q4 as i64,
                0,
                span,
                "0..=MAX_SPAN_Q4",
            ),
        ];
        let mut i = 0;
        while i < checks.len() {
            let (name, value, lo, hi, expected) = checks[i];
            if value < lo || value > hi {
                return Err(bad(name, expected, value));
            }
            i += 1;
        }
        Ok(Self { limits: l })
    }

    /// The limits.
    ///
    /// ```
    /// use fixsight::marking::{MarkingConfig, TapeContrast};
    /// assert_eq!(MarkingConfig::DEMO.limits().contrast, TapeContrast::Brighter);
    /// ```
    pub const fn limits(&self) -> &MarkingLimits {
        &self.limits
    }
}

/// The tape found: which input lines are its edges and where they cross
/// the two rows.
///
/// ```
/// use fixsight::marking::TapeEdges;
/// let t = TapeEdges { left: 3, right: 1, near_x_q4: [-120, 160], far_x_q4: [-40, 60], votes: 200 };
/// assert_eq!((t.near_width_q4(), t.near_centre_q4()), (280, 20));
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TapeEdges {
    /// Index (into the input slice) of the left edge.
    pub left: usize,
    /// Index of the right edge.
    pub right: usize,
    /// Columns of the left and right edge on the near row, Q4.
    pub near_x_q4: [i32; 2],
    /// Columns of the left and right edge on the far row, Q4.
    pub far_x_q4: [i32; 2],
    /// Votes of the two edges added.
    pub votes: u64,
}

impl TapeEdges {
    /// Width of the tape on the near row, Q4.
    ///
    /// ```
    /// # use fixsight::marking::TapeEdges;
    /// let t = TapeEdges { left: 0, right: 1, near_x_q4: [-8, 8], far_x_q4: [0, 4], votes: 2 };
    /// assert_eq!(t.near_width_q4(), 16);
    /// ```
    pub fn near_width_q4(&self) -> i32 {
        self.near_x_q4[1].saturating_sub(self.near_x_q4[0])
    }

    /// Centre of the tape on the near row, Q4, rounded down (the mean of
    /// the two columns by an arithmetic shift).
    ///
    /// ```
    /// # use fixsight::marking::TapeEdges;
    /// let t = TapeEdges { left: 0, right: 1, near_x_q4: [-9, 8], far_x_q4: [0, 4], votes: 2 };
    /// assert_eq!(t.near_centre_q4(), -1);
    /// ```
    pub fn near_centre_q4(&self) -> i32 {
        ((self.near_x_q4[0] as i64 + self.near_x_q4[1] as i64) >> 1) as i32
    }
}

/// The outcome of a selection: a tape, or none (a normal outcome, not an
/// error).
///
/// ```
/// use fixsight::marking::{self, Marking, MarkingConfig};
/// let m = marking::select(&[], &MarkingConfig::DEMO);
/// assert_eq!(m, Marking::NotFound { lines: 0, candidates: 0 });
/// assert!(m.found().is_none());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Marking {
    /// The tape's two edges.
    Found(TapeEdges),
    /// No pair passes the rules.
    NotFound {
        /// Lines offered.
        lines: usize,
        /// Lines that passed the single-line rules (tilt, near position).
        candidates: usize,
    },
}

/// Number of words of [`Marking::record`].
///
/// ```
/// assert_eq!(fixsight::marking::RECORD_WORDS, 10);
/// ```
pub const RECORD_WORDS: usize = 10;

impl Marking {
    /// The outcome as [`RECORD_WORDS`] `i32` words, the layout of the
    /// golden vectors' `marking` output and a fixed-size record for a log
    /// or a link: `found` (1 or 0), `left`, `right` (input indices, -1 when
    /// not found, `i32::MAX` for an index past it), the near-row columns
    /// left and right, the far-row columns left and right (Q4, 0 when not
    /// found), the vote sum's low and high 32 bits (as `i32` bit patterns),
    /// and, when not found, the number of lines that passed the
    /// single-line rules (saturated to `i32::MAX`), else 0.
    ///
    /// ```
    /// use fixsight::marking::{Marking, TapeEdges};
    /// let t = TapeEdges { left: 3, right: 1, near_x_q4: [-8, 8], far_x_q4: [-4, 4], votes: 1 << 32 };
    /// assert_eq!(Marking::Found(t).record(), [1, 3, 1, -8, 8, -4, 4, 0, 1, 0]);
    /// let n = Marking::NotFound { lines: 9, candidates: 2 };
    /// assert_eq!(n.record(), [0, -1, -1, 0, 0, 0, 0, 0, 0, 2]);
    /// ```
    pub fn record(&self) -> [i32; RECORD_WORDS] {
        let word = |v: usize| i32::try_from(v).unwrap_or(i32::MAX);
        match self {
            Marking::Found(t) => [
                1,
                word(t.left),
                word(t.right),
                t.near_x_q4[0],
                t.near_x_q4[1],
                t.far_x_q4[0],
                t.far_x_q4[1],
                t.votes as u32 as i32,
                (t.votes >> 32) as u32 as i32,
                0,
            ],
            Marking::NotFound { candidates, .. } => {
                [0, -1, -1, 0, 0, 0, 0, 0, 0, word(*candidates)]
            }
        }
    }

    /// The edges, if found.
    ///
    /// ```
    /// use fixsight::marking::{Marking, TapeEdges};
    /// let t = TapeEdges { left: 0, right: 1, near_x_q4: [-8, 8], far_x_q4: [0, 4], votes: 2 };
    /// assert_eq!(Marking::Found(t).found(), Some(&t));
    /// ```
    pub fn found(&self) -> Option<&TapeEdges> {
        match self {
            Marking::Found(t) => Some(t),
            Marking::NotFound { .. } => None,
        }
    }
}

/// `S(a)` of the module docs for `a` in `0..=32768`.
#[inline]
fn quarter_sine(a: u32) -> i32 {
    let i = (a >> 7) as usize;
    tally(Op::Shift, 1);
    tally(Op::Logic, 2);
    tally(Op::Branch, 1);
    match (SIN_Q15.get(i), SIN_Q15.get(i + 1)) {
        (Some(&t0), Some(&t1)) => {
            let r = (a & 127) as i32;
            tally(Op::Table, 2);
            tally(Op::AddSub, 3);
            tally(Op::Mul, 1);
            tally(Op::Shift, 1);
            t0 as i32 + round_shift((t1 as i32 - t0 as i32) * r, 7)
        }
        // a = 32768 (i = 256); a > 32768 is never passed.
        _ => {
            tally(Op::Table, 1);
            SIN_Q15[256] as i32
        }
    }
}

/// `(sin, cos)` of a binary angle (65536 = 180 degrees) in Q15, by the
/// table of the module docs; error at most [`SIN_COS_MAX_ERR_MILLI_LSB`]
/// thousandths of an LSB.
///
/// ```
/// use fixsight::marking::sin_cos_q15;
/// assert_eq!(sin_cos_q15(0), (0, 32768));
/// assert_eq!(sin_cos_q15(16384), (23170, 23170));  // 45 degrees
/// assert_eq!(sin_cos_q15(32768), (32768, 0));      // 90 degrees
/// assert_eq!(sin_cos_q15(49152), (23170, -23170)); // 135 degrees
/// ```
pub fn sin_cos_q15(theta: u16) -> (i32, i32) {
    let t = theta as u32;
    tally(Op::Logic, 2);
    tally(Op::Branch, 2);
    tally(Op::AddSub, 2);
    let sin = if t < 32768 {
        quarter_sine(t)
    } else {
        quarter_sine(65536 - t)
    };
    let cos = if t <= 32768 {
        quarter_sine(32768 - t)
    } else {
        -quarter_sine(t - 32768)
    };
    (sin, cos)
}

/// Column (Q4, about the image centre) where the line `(rho_q4, theta)`
/// crosses row `row_q4`, by the integer model of the module docs; `None`
/// for a horizontal line (`cos = 0`, `theta = 32768`).
///
/// ```
/// use fixsight::marking::column_at_row;
/// // A vertical line at x = 5 px crosses every row at x = 5 px.
/// assert_eq!(column_at_row(80, 0, 1000), Some(80));
/// // 45 degrees: x + y = 10 px (rho = 10 / sqrt 2 px); at y = 4 px, x = 6 px
/// // up to the table's precision.
/// let x = column_at_row(113, 16384, 64).unwrap();
/// assert!((x - 96).abs() <= 1, "{x}");
/// assert_eq!(column_at_row(0, 32768, 0), None);
/// ```
pub fn column_at_row(rho_q4: i32, theta: u16, row_q4: i32) -> Option<i64> {
    let (sin, cos) = sin_cos_q15(theta);
    tally(Op::Shift, 2);
    tally(Op::Mul, 1);
    tally(Op::AddSub, 3);
    tally(Op::Logic, 2);
    tally(Op::Branch, 2);
    tally(Op::Div, 1);
    if cos == 0 {
        return None;
    }
    let n = ((rho_q4 as i64) << 15) - row_q4 as i64 * sin as i64;
    let (n, d) = if cos < 0 {
        (-n, -(cos as i64))
    } else {
        (n, cos as i64)
    };
    Some((2 * n + d).div_euclid(2 * d))
}

/// Tilt from the vertical, binary units.
fn tilt(theta: u16) -> u16 {
    if theta < 32768 {
        theta
    } else {
        (65536 - theta as u32) as u16
    }
}

/// Columns on the near and far rows of a line passing rules 1 and 2.
fn columns(c: &Candidate, l: &MarkingLimits) -> Option<(i64, i64)> {
    tally(Op::Logic, 3);
    tally(Op::Branch, 3);
    if tilt(c.theta) > l.max_tilt {
        return None;
    }
    let near = column_at_row(c.rho_q4, c.theta, l.near_row_q4)?;
    if near < l.near_x_min_q4 as i64 || near > l.near_x_max_q4 as i64 {
        return None;
    }
    Some((near, column_at_row(c.rho_q4, c.theta, l.far_row_q4)?))
}

/// Rule 4 for near and far separations `near`, `far`.
fn converges(near: i64, far: i64, l: &MarkingLimits) -> bool {
    tally(Op::AddSub, 4);
    tally(Op::Mul, 3);
    tally(Op::Logic, 2);
    tally(Op::Branch, 1);
    let dn = l.near_row_q4 as i64 - l.horizon_row_q4 as i64;
    let df = l.far_row_q4 as i64 - l.horizon_row_q4 as i64;
    (far * dn - near * df).abs() <= l.converge_tol_q4 as i64 * dn
}

/// `Some(true)` when the line is brighter on its right.
fn brighter_right(c: &Candidate) -> Option<bool> {
    match c.polarity {
        Polarity::Unknown => None,
        Polarity::Rising => Some(c.theta < 32768),
        Polarity::Falling => Some(c.theta >= 32768),
    }
}

/// Rule 5 for a pair already ordered left, right.
fn contrast_ok(left: &Candidate, right: &Candidate, contrast: TapeContrast) -> bool {
    tally(Op::Logic, 2);
    tally(Op::Branch, 2);
    let want_left = match contrast {
        TapeContrast::Brighter => true,
        TapeContrast::Darker => false,
        TapeContrast::Either => return true,
    };
    match (brighter_right(left), brighter_right(right)) {
        (Some(a), Some(b)) => a == want_left && b != want_left,
        _ => true,
    }
}

/// Clamps an `i64` into `i32` (the selected columns always fit: see the
/// limits' ranges).
fn to_i32(v: i64) -> i32 {
    v.clamp(i32::MIN as i64, i32::MAX as i64) as i32
}

/// Picks the tape's two edges among `lines` by the rules of the module
/// docs. Any slice (empty included) and any line values are accepted.
///
/// ```
/// use fixsight::marking::{self, Candidate, Marking, MarkingConfig, Polarity};
/// // Only a joint across the aisle and a steep shelf edge: no tape.
/// let lines = [
///     Candidate { rho_q4: 640, theta: 32768, votes: 200, polarity: Polarity::Unknown },
///     Candidate { rho_q4: 900, theta: 12000, votes: 150, polarity: Polarity::Unknown },
/// ];
/// assert_eq!(
///     marking::select(&lines, &MarkingConfig::DEMO),
///     Marking::NotFound { lines: 2, candidates: 0 }
/// );
/// ```
pub fn select(lines: &[Candidate], config: &MarkingConfig) -> Marking {
    let l = &config.limits;
    // Columns of the first CACHED_LINES lines; bit i of `known` set when
    // line i passed rules 1 and 2.
    let mut cache = [[0i32; 2]; CACHED_LINES];
    let mut known = 0u64;
    let mut candidates = 0usize;
    for (i, (slot, c)) in cache.iter_mut().zip(lines).enumerate() {
        if let Some((near, far)) = columns(c, l) {
            *slot = [to_i32(near), to_i32(far)];
            known |= 1 << i;
        }
    }
    let cols = |i: usize| -> Option<(i64, i64)> {
        match cache.get(i) {
            Some(v) => (known >> i & 1 == 1).then_some((v[0] as i64, v[1] as i64)),
            None => lines.get(i).and_then(|c| columns(c, l)),
        }
    };
    // (edges, deviation from the nominal near separation)
    let mut best: Option<(TapeEdges, i64)> = None;
    for (i, a) in lines.iter().enumerate() {
        let Some(ca) = cols(i) else {
            continue;
        };
        candidates += 1;
        for (j, b) in lines.iter().enumerate().skip(i + 1) {
            let Some(cb) = cols(j) else {
                continue;
            };
            tally(Op::AddSub, 4);
            tally(Op::Logic, 6);
            tally(Op::Branch, 6);
            let ((li, lc, lx), (ri, rc, rx)) = if ca.0 < cb.0 {
                ((i, a, ca), (j, b, cb))
            } else {
                ((j, b, cb), (i, a, ca))
            };
            let near = rx.0 - lx.0;
            let far = rx.1 - lx.1;
            if near < l.near_sep_min_q4 as i64
                || near > l.near_sep_max_q4 as i64
                || !converges(near, far, l)
                || !contrast_ok(lc, rc, l.contrast)
            {
                continue;
            }
            let votes = lc.votes as u64 + rc.votes as u64;
            let dev = (near - l.near_sep_nominal_q4 as i64).abs();
            let better = match &best {
                None => true,
                Some((t, d)) => votes > t.votes || (votes == t.votes && dev < *d),
            };
            if better {
                best = Some((
                    TapeEdges {
                        left: li,
                        right: ri,
                        near_x_q4: [to_i32(lx.0), to_i32(rx.0)],
                        far_x_q4: [to_i32(lx.1), to_i32(rx.1)],
                        votes,
                    },
                    dev,
                ));
            }
        }
    }
    match best {
        Some((t, _)) => Marking::Found(t),
        None => Marking::NotFound {
            lines: lines.len(),
            candidates,
        },
    }
}

#[cfg(test)]
mod tests {
    extern crate std;
    use super::*;
    use std::vec::Vec;

    fn line(rho_px: f64, deg: f64, votes: u32, polarity: Polarity) -> Candidate {
        let t = (deg.rem_euclid(180.0) / 180.0 * 65536.0).round() as u32 % 65536;
        Candidate {
            rho_q4: (rho_px * 16.0).round() as i32,
            theta: t as u16,
            votes,
            polarity,
        }
    }

    /// A line through image points `(x0, y0)` and `(x1, y1)` (px about the
    /// centre), with `polarity` given for the normal chosen.
    fn through(
        p0: (f64, f64),
        p1: (f64, f64),
        votes: u32,
        brighter_right: Option<bool>,
    ) -> Candidate {
        let (dx, dy) = (p1.0 - p0.0, p1.1 - p0.1);
        let mut th = (-dx).atan2(dy); // normal (dy, -dx)
        if th < 0.0 {
            th += core::f64::consts::PI;
        }
        let (s, c) = th.sin_cos();
        let rho = p0.0 * c + p0.1 * s;
        let polarity = match brighter_right {
            None => Polarity::Unknown,
            Some(br) => {
                if br == (c > 0.0) {
                    Polarity::Rising
                } else {
                    Polarity::Falling
                }
            }
        };
        line(rho, th.to_degrees(), votes, polarity)
    }

    /// The demo tape: edges through the horizon point (0, -61.87) and
    /// +-8.7 px about `centre` on the bottom row (y = 119.5).
    fn tape(centre: f64, votes: u32, pol: bool) -> [Candidate; 2] {
        let vp = (centre * 0.2, -61.87);
        [
            through(vp, (centre - 8.7, 119.5), votes, pol.then_some(true)),
            through(vp, (centre + 8.7, 119.5), votes, pol.then_some(false)),
        ]
    }

    #[test]
    fn finds_the_tape_among_clutter_in_any_order() {
        let [l, r] = tape(10.0, 100, true);
        let clutter = [
            line(20.0, 90.0, 300, Polarity::Rising), // joint across the aisle
            line(-30.0, 89.0, 250, Polarity::Falling), // another
            through((0.0, -61.87), (-150.0, 60.0), 400, Some(true)), // shelf edge, steep
            through((0.0, -61.87), (150.0, 60.0), 400, Some(false)),
            // A dark groove along the aisle: narrow and of the wrong polarity.
            through((0.0, -61.87), (-60.0, 119.5), 90, Some(false)),
            through((0.0, -61.87), (-58.0, 119.5), 90, Some(true)),
            // Two parallel racking uprights 20 px apart: do not converge.
            line(40.0, 0.5, 120, Polarity::Rising),
            line(60.0, 0.5, 120, Polarity::Falling),
        ];
        let mut all: Vec<Candidate> = clutter.to_vec();
        all.push(l);
        all.push(r);
        for rot in 0..all.len() {
            all.rotate_left(1);
            let m = select(&all, &MarkingConfig::DEMO);
            let t = *m.found().unwrap_or_else(|| panic!("rotation {rot}: {m:?}"));
            assert_eq!((all[t.left], all[t.right]), (l, r), "rotation {rot}");
            // 17.4 px wide, centred 10 px right, on the near row.
            assert!((t.near_width_q4() - 278).abs() <= 4, "{t:?}");
            assert!((t.near_centre_q4() - 160).abs() <= 4, "{t:?}");
        }
    }

    #[test]
    fn each_rule_rejects_its_clutter() {
        let cfg = MarkingConfig::DEMO;
        let [l, r] = tape(0.0, 100, true);
        assert!(select(&[l, r], &cfg).found().is_some());
        // Reversed polarities (a dark stripe) fail rule 5, unless the
        // polarity is unknown or the contrast rule is off.
        let flip = |c: Candidate| Candidate {
            polarity: match c.polarity {
                Polarity::Rising => Polarity::Falling,
                Polarity::Falling => Polarity::Rising,
                Polarity::Unknown => Polarity::Unknown,
            },
            ..c
        };
        let [dl, dr] = [flip(l), flip(r)];
        assert!(select(&[dl, dr], &cfg).found().is_none());
        let either = MarkingConfig::new(MarkingLimits {
            contrast: TapeContrast::Either,
            ..*cfg.limits()
        })
        .unwrap();
        assert!(select(&[dl, dr], &either).found().is_some());
        let darker = MarkingConfig::new(MarkingLimits {
            contrast: TapeContrast::Darker,
            ..*cfg.limits()
        })
        .unwrap();
        assert!(select(&[dl, dr], &darker).found().is_some());
        let unknown = [l, r].map(|c| Candidate {
            polarity: Polarity::Unknown,
            ..c
        });
        assert!(select(&unknown, &cfg).found().is_some());
        // Too narrow / too wide on the near row.
        let narrow = tape(0.0, 100, true);
        let vp = (0.0, -61.87);
        let thin = [
            narrow[0],
            through(vp, (-8.7 + 3.0, 119.5), 100, Some(false)),
        ];
        assert_eq!(
            select(&thin, &cfg),
            Marking::NotFound {
                lines: 2,
                candidates: 2
            }
        );
        let wide = [
            narrow[0],
            through(vp, (-8.7 + 36.0, 119.5), 100, Some(false)),
        ];
        assert!(select(&wide, &cfg).found().is_none());
        // Right width on the near row but parallel: does not converge.
        let par = [
            line(-8.7, 0.0, 100, Polarity::Rising),
            line(8.7, 0.0, 100, Polarity::Falling),
        ];
        assert!(select(&par, &cfg).found().is_none());
        // Out of the lateral window.
        let [fl, fr] = tape(95.0, 100, true);
        assert_eq!(
            select(&[fl, fr], &cfg),
            Marking::NotFound {
                lines: 2,
                candidates: 0
            }
        );
    }

    #[test]
    fn votes_then_nominal_width_then_order_decide() {
        let cfg = MarkingConfig::DEMO;
        let [a, b] = tape(-20.0, 100, true);
        let [c, d] = tape(25.0, 101, true);
        let m = select(&[a, b, c, d], &cfg);
        assert_eq!(m.found().map(|t| (t.left, t.right)), Some((2, 3)));
        // Equal votes: the width nearer the nominal wins; a slightly too
        // wide right edge for the first tape loses.
        let vp = (-4.0, -61.87);
        let b2 = through(vp, (-20.0 + 8.7 + 2.0, 119.5), 100, Some(false));
        let d2 = Candidate { votes: 100, ..d };
        let m = select(&[a, b2, c, d2], &cfg);
        assert_eq!(m.found().map(|t| (t.left, t.right)), Some((2, 3)));
        // Equal votes and widths: the first pair in input order.
        let m = select(&[a, b, a, b], &cfg);
        assert_eq!(m.found().map(|t| (t.left, t.right)), Some((0, 1)));
    }

    #[test]
    fn lines_past_the_cache_behave_like_the_first_ones() {
        let cfg = MarkingConfig::DEMO;
        let [l, r] = tape(3.0, 100, true);
        let mut lines = [line(0.0, 90.0, 5, Polarity::Unknown); 80];
        lines[70] = l;
        lines[77] = r;
        let t = *select(&lines, &cfg).found().unwrap();
        assert_eq!((t.left, t.right), (70, 77));
        // One edge inside the cache, one past it.
        lines[70] = lines[0];
        lines[5] = l;
        let t = *select(&lines, &cfg).found().unwrap();
        assert_eq!((t.left, t.right), (5, 77));
        let m = select(&[l, r], &cfg);
        assert_eq!(
            m.found().map(|u| (u.near_x_q4, u.far_x_q4)),
            Some((t.near_x_q4, t.far_x_q4))
        );
    }

    #[test]
    fn sine_table_interpolation_stays_within_its_bound() {
        // Exhaustive over all binary angles against the f64 functions of
        // the standard library.
        let bound = SIN_COS_MAX_ERR_MILLI_LSB as f64 / 1000.0;
        let mut worst = 0f64;
        for t in 0..=u16::MAX {
            let (s, c) = sin_cos_q15(t);
            let a = t as f64 / 65536.0 * core::f64::consts::PI;
            worst = worst.max((s as f64 - 32768.0 * a.sin()).abs());
            worst = worst.max((c as f64 - 32768.0 * a.cos()).abs());
        }
        assert!(worst <= bound, "{worst}");
        assert!(worst > 0.9, "{worst}: the bound is not loose by much");
    }

    /// The normal parameterisation `rho = x cos(theta) + y sin(theta)` of
    /// Duda & Hart (1972), "Use of the Hough transformation to detect lines
    /// and curves in pictures", CACM 15(1), on lines worked by hand: the
    /// vertical line x = 5 (theta 0, rho 5), the horizontal line y = 3
    /// (theta 90, no column), the 45-degree line x + y = 8 (rho 8 / sqrt 2,
    /// at y = 2 the column is 6) and the 135-degree line y - x = 4 (normal
    /// (-1, 1) / sqrt 2, rho 4 / sqrt 2; at y = 10 the column is 6).
    #[test]
    fn columns_of_hand_worked_lines() {
        assert_eq!(column_at_row(5 * 16, 0, 7 * 16), Some(80));
        assert_eq!(column_at_row(3 * 16, 32768, 0), None);
        let r = (8.0 / core::f64::consts::SQRT_2 * 16.0f64).round() as i32;
        let x = column_at_row(r, 16384, 2 * 16).unwrap();
        assert!((x - 96).abs() <= 1, "{x}");
        let r = (4.0 / core::f64::consts::SQRT_2 * 16.0f64).round() as i32;
        let x = column_at_row(r, 49152, 10 * 16).unwrap();
        assert!((x - 96).abs() <= 1, "{x}");
    }

    #[test]
    fn column_rounds_half_up() {
        // Vertical line: exact.
        assert_eq!(column_at_row(-37, 0, 5), Some(-37));
        // theta = 180 - tiny: cos < 0, the division turns the sign.
        assert_eq!(column_at_row(37, 65535, 0), Some(-37));
        // Extreme inputs do not overflow.
        assert!(column_at_row(i32::MIN, 21845, MAX_ROW_Q4).is_some());
        assert!(column_at_row(i32::MAX, 43691, -MAX_ROW_Q4).is_some());
        assert!(column_at_row(i32::MAX, 32767, MAX_ROW_Q4).is_some());
    }

    #[test]
    fn bad_limits_are_named() {
        let base = *MarkingConfig::DEMO.limits();
        let name = |l: MarkingLimits| match MarkingConfig::new(l) {
            Err(Error::BadParameter { name, .. }) => name,
            other => panic!("{other:?}"),
        };
        assert_eq!(
            name(MarkingLimits {
                near_row_q4: MAX_ROW_Q4 + 1,
                ..base
            }),
            "near_row_q4"
        );
        assert_eq!(
            name(MarkingLimits {
                far_row_q4: base.near_row_q4,
                ..base
            }),
            "far_row_q4"
        );
        assert_eq!(
            name(MarkingLimits {
                max_tilt: MAX_TILT + 1,
                ..base
            }),
            "max_tilt"
        );
        assert_eq!(
            name(MarkingLimits {
                near_x_min_q4: i32::MIN,
                ..base
            }),
            "near_x_min_q4"
        );
        assert_eq!(
            name(MarkingLimits {
                near_x_max_q4: base.near_x_min_q4 - 1,
                ..base
            }),
            "near_x_max_q4"
        );
        assert_eq!(
            name(MarkingLimits {
                near_sep_min_q4: 0,
                ..base
            }),
            "near_sep_min_q4"
        );
        assert_eq!(
            name(MarkingLimits {
                near_sep_nominal_q4: base.near_sep_max_q4 + 1,
                ..base
            }),
            "near_sep_max_q4"
        );
        assert_eq!(
            name(MarkingLimits {
                near_sep_nominal_q4: 0,
                ..base
            }),
            "near_sep_nominal_q4"
        );
        assert_eq!(
            name(MarkingLimits {
                converge_tol_q4: -1,
                ..base
            }),
            "converge_tol_q4"
        );
        assert_eq!(
            name(MarkingLimits {
                converge_tol_q4: MAX_SPAN_Q4 + 1,
                ..base
            }),
            "converge_tol_q4"
        );
        assert_eq!(
            name(MarkingLimits {
                horizon_row_q4: base.far_row_q4,
                ..base
            }),
            "horizon_row_q4"
        );
        assert_eq!(
            name(MarkingLimits {
                horizon_row_q4: -MAX_ROW_Q4 - 1,
                ..base
            }),
            "horizon_row_q4"
        );
        assert!(MarkingConfig::new(MarkingLimits {
            max_tilt: MAX_TILT,
            ..base
        })
        .is_ok());
    }
}
