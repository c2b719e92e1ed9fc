//! Double threshold and hysteresis (Canny 1986): strong pixels are edges,
//! weak pixels are edges only when 8-connected to a strong one through
//! other weak pixels. Bounded memory, no recursion.
//!
//! # Integer model (what a port must reproduce)
//!
//! **Thresholds** are integers on the magnitude scale, `1 <= low <= high`
//! ([`Thresholds::new`]). [`classify_row`] / [`classify`] map a suppressed
//! magnitude `m` to an edge code:
//!
//! ```text
//! STRONG (2)  if m >= high
//! WEAK   (1)  if low <= m < high
//! NONE   (0)  otherwise (so m = 0, a suppressed pixel, is never an edge)
//! ```
//!
//! **Hysteresis** ([`link`]) turns a code map in place into a binary
//! map: a pixel becomes [`EDGE`] (255) when it is STRONG, or WEAK and joined
//! to a STRONG pixel by a path of WEAK pixels, each step to one of the 8
//! neighbours; every other pixel becomes [`NONE`]. The result is a pure
//! function of the code map (it does not depend on the work-stack size).
//!
//! **Automatic thresholds** ([`Thresholds::from_histogram`]), common
//! practice, no source: `high` is set so that a chosen share of the nonzero
//! magnitudes lies below it, `low` is a fixed fraction of `high`:
//!
//! 1. histogram of every `m > 0`, bin `b = min(m >> shift, bins - 1)`;
//!    `n` = number of such pixels;
//! 2. `target = ceil(n * high_permille / 1000)` (`u64`);
//! 3. `b*` = first bin whose cumulative count reaches `target`;
//!    `high = min((b* + 1) << shift, 65535)`;
//! 4. `low = max(1, (high * f + 32768) >> 16)` where `f` is the low fraction
//!    as `U0F16` bits (round half up, `u32` arithmetic, no overflow).
//!
//! With `n = 0` it returns `low = high = 65535`.
//!
//! **Candidate budget** ([`Thresholds::within_budget`]), an optional fifth
//! step for a stage that keeps something per candidate (a magnitude at or
//! above `low`) in a store of `B` entries. Let `c(b)` be the sum of the
//! histogram's bins `b ..= bins - 1`, so that `c(b)` counts exactly the
//! magnitudes `>= b << shift` (for `b <= bins - 1`; the last bin also
//! holds everything above it), and `b0 = low >> shift`, the bin of `low`:
//!
//! 5. if `c(b0) <= B`, nothing changes. Otherwise `b'` = the smallest bin
//!    index above `b0` with `c(b') <= B` (`bins` when there is none, where
//!    `c(bins) = 0`); `low = min(b' << shift, 65535)`, `high = max(high,
//!    low)`.
//!
//! On the counted frame at most `B` magnitudes lie at or above the new
//! `low` (unless it was clipped at 65535, or `b' = bins` and the last bin
//! holds values above its range). The test is on `c(b0)`, an upper bound
//! of the count at or above `low`, so the step can raise `low` by less
//! than a bin when the exact count was already within `B`. The step
//! follows from the size of the store; nothing in it is tuned.
//!
//! The demo defaults
//! [`DEMO_HIGH_PERMILLE`] and [`DEMO_LOW_FRACTION`] give a high:low ratio of
//! about 2.08:1, inside the 2:1 to 3:1 range Canny recommends (Canny 1986,
//! "A Computational Approach to Edge Detection", IEEE PAMI 8(6)).
//!
//! # Algorithm and memory of the hysteresis
//!
//! Codes are kept in the map itself; the only other memory is a caller work
//! stack of `u32` entries (`(y << 16) | x`), at least [`MIN_STACK`] long:
//!
//! 1. Validation scan: any code other than 0, 1, 2 -> [`Error::BadEdgeCode`]
//!    before anything is written.
//! 2. Raster scan from row `r0` (first pass: 0). Each STRONG pixel becomes
//!    EDGE and is pushed; the stack is drained depth first: each popped
//!    pixel's WEAK neighbours (in the order N, NE, E, SE, S, SW, W, NW)
//!    become EDGE and are pushed. When the stack is full, such a neighbour is
//!    instead re-marked STRONG (a pending seed); if it lies behind the scan
//!    position, `r0` for the next pass is lowered to its row.
//! 3. Repeat step 2 while a pass left pending seeds behind its scan position.
//! 4. Final scan: WEAK -> NONE.
//!
//! Every pending seed is picked up by the scan that passes it (this pass or
//! the next), so no edge is dropped; each pass turns at least one pixel into
//! EDGE, so it terminates. Worst-case memory: the `w * h` code map (the
//! caller's image) plus `4 * S` bytes of stack for `S` entries; the stack
//! never fills when `S >= w * h`, and then exactly one pass runs. A small
//! stack only costs extra passes ([`HysteresisStats::passes`]).
//!
//! ```
//! use fixsight::hysteresis::{self, Thresholds, EDGE, NONE};
//! use fixsight::{ImageView, ImageViewMut};
//! let t = Thresholds::new(10, 25)?;
//! // One strong pixel (30) carries the weak chain (12, 11) with it; the
//! // isolated weak pixel (15) at the far end is dropped.
//! let mag = [30u16, 12, 11, 0, 15];
//! let mut map = [0u8; 5];
//! hysteresis::classify(&ImageView::new(&mag, 5, 1, 5)?, &t,
//!     &mut ImageViewMut::new(&mut map, 5, 1, 5)?)?;
//! assert_eq!(map, [2, 1, 1, 0, 1]);
//! let mut stack = [0u32; 8];
//! hysteresis::link(&mut ImageViewMut::new(&mut map, 5, 1, 5)?, &mut stack)?;
//! assert_eq!(map, [EDGE, EDGE, EDGE, NONE, NONE]);
//! # Ok::<(), fixsight::Error>(())
//! ```

use crate::error::{Error, Result};
use crate::image::{check_same_size, check_single_channel, ImageView, ImageViewMut};
use crate::ops::{tally, tally_per, Op};
/// An unsigned fraction in `[0, 1)` with 16 fractional bits (`U0F16` in
/// the Q notation): the value is `bits / 65536`. The low-threshold
/// fraction is one. With the cargo feature `fixed` it converts to and from
/// `fixed::types::U0F16`, bits unchanged.
///
/// ```
/// use fixsight::hysteresis::U0F16;
/// let half = U0F16::from_bits(32768); // 0.5
/// assert_eq!(half.to_bits(), 32768);
/// assert!(U0F16::ZERO < half);
/// ```
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, PartialOrd, Ord, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct U0F16(u16);

impl U0F16 {
    /// Zero.
    ///
    /// ```
    /// assert_eq!(fixsight::hysteresis::U0F16::ZERO.to_bits(), 0);
    /// ```
    pub const ZERO: Self = Self(0);

    /// The fraction `bits / 65536`.
    ///
    /// ```
    /// let q = fixsight::hysteresis::U0F16::from_bits(16384); // 0.25
    /// assert_eq!(q.to_bits(), 16384);
    /// ```
    pub const fn from_bits(bits: u16) -> Self {
        Self(bits)
    }

    /// The raw bits (the value times 65536).
    ///
    /// ```
    /// assert_eq!(fixsight::hysteresis::DEMO_LOW_FRACTION.to_bits(), 31457);
    /// ```
    pub const fn to_bits(self) -> u16 {
        self.0
    }
}

/// Bits unchanged (feature `fixed`).
///
/// ```
/// # #[cfg(feature = "fixed")] {
/// let f = fixed::types::U0F16::from_num(0.5);
/// assert_eq!(fixsight::hysteresis::U0F16::from(f).to_bits(), 32768);
/// # }
/// ```
#[cfg(feature = "fixed")]
impl From<fixed::types::U0F16> for U0F16 {
    fn from(f: fixed::types::U0F16) -> Self {
        Self(f.to_bits())
    }
}

/// Bits unchanged (feature `fixed`).
///
/// ```
/// # #[cfg(feature = "fixed")] {
/// let f: fixed::types::U0F16 = fixsight::hysteresis::U0F16::from_bits(32768).into();
/// assert_eq!(f, fixed::types::U0F16::from_num(0.5));
/// # }
/// ```
#[cfg(feature = "fixed")]
impl From<U0F16> for fixed::types::U0F16 {
    fn from(f: U0F16) -> Self {
        Self::from_bits(f.0)
    }
}

/// Code of a pixel that is not an edge (input and output).
pub const NONE: u8 = 0;
/// Code of a weak candidate (`low <= m < high`).
pub const WEAK: u8 = 1;
/// Code of a strong pixel (`m >= high`).
pub const STRONG: u8 = 2;
/// Code of a final edge pixel (hysteresis output).
pub const EDGE: u8 = 255;

/// Smallest accepted work stack: one entry per 8-neighbour.
pub const MIN_STACK: usize = 8;

/// Demo share of nonzero suppressed magnitudes below `high`, in permille
/// (common practice, no source; the value was chosen on the project's demo
/// scenes, where most suppressed maxima are floor texture and noise).
pub const DEMO_HIGH_PERMILLE: u16 = 970;

/// Demo `low / high` = 31457 / 65536 = 0.48, i.e. a high:low ratio of
/// about 2.08:1 (Canny 1986 recommends 2:1 to 3:1); just under one half so
/// that rounding `low` half up never takes the ratio below 2:1 for
/// `high >= 2`.
///
/// ```
/// assert_eq!(fixsight::hysteresis::DEMO_LOW_FRACTION.to_bits(), 31457);
/// ```
pub const DEMO_LOW_FRACTION: U0F16 = U0F16::from_bits(31457);

/// A validated pair of thresholds, `1 <= low <= high`.
///
/// ```
/// use fixsight::hysteresis::Thresholds;
/// assert!(Thresholds::new(20, 50).is_ok());
/// assert!(Thresholds::new(50, 20).is_err());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Thresholds {
    low: u16,
    high: u16,
}

impl Thresholds {
    /// `low = high = 65535`: nothing but the largest magnitude is a
    /// candidate (the automatic rule's result for an empty histogram).
    pub(crate) const MAX: Thresholds = Thresholds {
        low: u16::MAX,
        high: u16::MAX,
    };

    /// `low = high = 0`: the stored value of an unconfigured stage (never
    /// used as a rule: a stage reads its thresholds only once configured,
    /// and reports [`Thresholds::MAX`] before). All zero bytes, so that a
    /// stage in a `static` takes no initial image in flash.
    pub(crate) const UNSET: Thresholds = Thresholds { low: 0, high: 0 };

    /// Checks and stores `low` and `high`.
    ///
    /// Errors: `low > high` -> [`Error::ThresholdOrder`]; `low = 0` (every
    /// suppressed pixel would be a candidate) -> [`Error::BadParameter`].
    ///
    /// ```
    /// use fixsight::{hysteresis::Thresholds, Error};
    /// assert_eq!(Thresholds::new(9, 3), Err(Error::ThresholdOrder { low: 9, high: 3 }));
    /// assert!(matches!(Thresholds::new(0, 3), Err(Error::BadParameter { .. })));
    /// ```
    pub fn new(low: u16, high: u16) -> Result<Self> {
        if low == 0 {
            return Err(Error::BadParameter {
                name: "low threshold",
                expected: "1..=65535",
                got: 0,
            });
        }
        if low > high {
            return Err(Error::ThresholdOrder { low, high });
        }
        Ok(Self { low, high })
    }

    /// Low threshold.
    ///
    /// ```
    /// assert_eq!(fixsight::hysteresis::Thresholds::new(4, 9).unwrap().low(), 4);
    /// ```
    pub fn low(&self) -> u16 {
        self.low
    }

    /// High threshold.
    ///
    /// ```
    /// assert_eq!(fixsight::hysteresis::Thresholds::new(4, 9).unwrap().high(), 9);
    /// ```
    pub fn high(&self) -> u16 {
        self.high
    }

    /// Derives thresholds from the histogram of the nonzero magnitudes of
    /// `mag` by the rule in the module docs. `hist` is caller scratch (its
    /// length is the bin count, at least 1), `shift <= 15` the bin width as a
    /// power of two, `high_permille` in `1..=999`, `low_fraction` nonzero.
    ///
    /// Errors: empty `hist` -> [`Error::BufferTooShort`]; out-of-range
    /// parameters -> [`Error::BadParameter`]; multi-channel `mag` ->
    /// [`Error::UnsupportedChannels`].
    ///
    /// ```
    /// use fixsight::hysteresis::{Thresholds, DEMO_LOW_FRACTION};
    /// use fixsight::ImageView;
    /// let mag: [u16; 10] = [0, 10, 20, 30, 40, 50, 60, 70, 80, 90];
    /// let mut hist = [0u32; 128];
    /// // 9 nonzero values; 80 % -> target 8 -> value 80 -> high 81.
    /// let t = Thresholds::from_histogram(&ImageView::new(&mag, 10, 1, 10)?, &mut hist, 0,
    ///     800, DEMO_LOW_FRACTION)?;
    /// assert_eq!((t.low(), t.high()), (39, 81)); // 81 * 0.48 = 38.9
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn from_histogram(
        mag: &ImageView<'_, u16>,
        hist: &mut [u32],
        shift: u32,
        high_permille: u16,
        low_fraction: U0F16,
    ) -> Result<Self> {
        check_single_channel(mag)?;
        check_rule(hist.len(), shift, high_permille, low_fraction)?;
        hist.fill(0);
        let last = hist.len() - 1;
        for y in 0..mag.height() {
            for &m in mag.row_at(y) {
                if m > 0 {
                    let b = ((m >> shift) as usize).min(last);
                    hist[b] += 1;
                }
            }
            // Per pixel: load, compare, branch; per counted pixel shift,
            // min, load/add/store of the bin, count add.
            let w = mag.width();
            tally_per(Op::Load, 2, w);
            tally_per(Op::Logic, 2, w);
            tally_per(Op::Shift, 1, w);
            tally_per(Op::AddSub, 2, w);
            tally_per(Op::Store, 1, w);
            tally_per(Op::Branch, 2, w);
        }
        Self::from_counts(hist, shift, high_permille, low_fraction)
    }

    /// Step 5 of the automatic rule (module docs): the pair, raised when
    /// needed so that at most `budget` of the magnitudes counted in `hist`
    /// (bins as [`Thresholds::from_counts`], width `1 << shift`) lie at or
    /// above `low`. The first pair returned by [`Thresholds::from_counts`]
    /// or [`Thresholds::new`] goes in; `high` only moves when `low` passes
    /// it.
    ///
    /// Errors: as [`Thresholds::from_counts`] for `hist` and `shift` (an
    /// empty histogram, `shift > 15`).
    ///
    /// ```
    /// use fixsight::hysteresis::Thresholds;
    /// // 100 magnitudes in each of the bins 2..=9 of width 4 (values 8..=39).
    /// let mut hist = [0u32; 10];
    /// for b in 2..10 { hist[b] = 100; }
    /// let t = Thresholds::new(12, 30)?;               // low in bin 3: 700 at or above
    /// assert_eq!(t.within_budget(&hist, 2, 700)?, t);  // fits: unchanged
    /// let r = t.within_budget(&hist, 2, 450)?;         // bins 6..=9 hold 400
    /// assert_eq!((r.low(), r.high()), (24, 30));
    /// let r = t.within_budget(&hist, 2, 150)?;         // bin 9 alone: 100
    /// assert_eq!((r.low(), r.high()), (36, 36));       // high follows low
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn within_budget(self, hist: &[u32], shift: u32, budget: u32) -> Result<Self> {
        check_rule(hist.len(), shift, 1, U0F16::from_bits(1))?;
        let b0 = (self.low >> shift) as usize;
        let Some(upper) = hist.get(b0..) else {
            // `low` lies past the last bin: nothing is counted there.
            return Ok(self);
        };
        let above: u64 = upper.iter().map(|&c| c as u64).sum();
        tally_per(Op::Load, 1, upper.len());
        tally_per(Op::AddSub, 1, upper.len());
        if above <= budget as u64 {
            return Ok(self);
        }
        // Down from the top while the bins above still fit.
        let (mut b, mut cum) = (hist.len(), 0u64);
        while b > b0 + 1 {
            let next = cum + hist[b - 1] as u64;
            tally(Op::Load, 1);
            tally(Op::AddSub, 2);
            tally(Op::Logic, 2);
            tally(Op::Branch, 2);
            if next > budget as u64 {
                break;
            }
            cum = next;
            b -= 1;
        }
        let low = ((b as u64) << shift).min(u16::MAX as u64) as u16;
        tally(Op::Shift, 1);
        tally(Op::Logic, 2);
        Ok(Self {
            low,
            high: self.high.max(low),
        })
    }

    /// Steps 2 to 4 of the automatic rule (module docs) on a histogram
    /// that is already filled: `hist[b]` counts the nonzero magnitudes `m`
    /// with `min(m >> shift, hist.len() - 1) = b`, and `n` is the sum of the
    /// counts. [`Thresholds::from_histogram`] fills `hist` from a frame and
    /// calls this; [`crate::pipeline`] fills it row by row.
    ///
    /// Errors: as [`Thresholds::from_histogram`].
    ///
    /// ```
    /// use fixsight::hysteresis::{Thresholds, DEMO_LOW_FRACTION};
    /// // The values 10, 20, ..., 90 in bins of width 1.
    /// let mut hist = [0u32; 128];
    /// for v in (10..=90).step_by(10) { hist[v] = 1; }
    /// let t = Thresholds::from_counts(&hist, 0, 800, DEMO_LOW_FRACTION)?;
    /// assert_eq!((t.low(), t.high()), (39, 81));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn from_counts(
        hist: &[u32],
        shift: u32,
        high_permille: u16,
        low_fraction: U0F16,
    ) -> Result<Self> {
        check_rule(hist.len(), shift, high_permille, low_fraction)?;
        let n: u64 = hist.iter().map(|&c| c as u64).sum();
        tally_per(Op::Load, 1, hist.len());
        tally_per(Op::AddSub, 1, hist.len());
        if n == 0 {
            return Ok(Self {
                low: u16::MAX,
                high: u16::MAX,
            });
        }
        let last = hist.len() - 1;
        let target = (n * high_permille as u64).div_ceil(1000);
        tally(Op::Mul, 1);
        tally(Op::Div, 1);
        let mut cum: u64 = 0;
        let mut bstar = last;
        for (b, &c) in hist.iter().enumerate() {
            cum += c as u64;
            tally(Op::Load, 1);
            tally(Op::AddSub, 1);
            tally(Op::Logic, 1);
            tally(Op::Branch, 1);
            if cum >= target {
                bstar = b;
                break;
            }
        }
        let high = (((bstar as u64) + 1) << shift).min(u16::MAX as u64) as u32;
        let low = ((high * low_fraction.to_bits() as u32 + 32768) >> 16).max(1);
        tally(Op::Mul, 1);
        tally(Op::AddSub, 2);
        tally(Op::Shift, 2);
        tally(Op::Logic, 2);
        Ok(Self {
            low: low as u16,
            high: high as u16,
        })
    }
}

/// Checks the parameters of the automatic rule: at least one bin,
/// `shift <= 15`, `high_permille` in `1..=999`, nonzero `low_fraction`.
pub(crate) fn check_rule(
    bins: usize,
    shift: u32,
    high_permille: u16,
    low_fraction: U0F16,
) -> Result<()> {
    if bins == 0 {
        return Err(Error::BufferTooShort {
            what: "threshold histogram",
            needed: 1,
            got: 0,
        });
    }
    if shift > 15 {
        return Err(Error::BadParameter {
            name: "histogram shift",
            expected: "0..=15",
            got: shift as i64,
        });
    }
    if !(1..=999).contains(&high_permille) {
        return Err(Error::BadParameter {
            name: "high_permille",
            expected: "1..=999",
            got: high_permille as i64,
        });
    }
    if low_fraction.to_bits() == 0 {
        return Err(Error::BadParameter {
            name: "low_fraction (U0F16 bits)",
            expected: "1..=65535",
            got: 0,
        });
    }
    Ok(())
}

/// The edge code of one suppressed magnitude (module docs): STRONG when
/// `m >= high`, WEAK when `low <= m < high`, else NONE.
#[inline(always)]
pub(crate) fn code_of(m: u16, t: &Thresholds) -> u8 {
    if m >= t.high {
        STRONG
    } else if m >= t.low {
        WEAK
    } else {
        NONE
    }
}

/// Classifies one row of suppressed magnitudes (the streaming form of the
/// double threshold): `out[i]` is STRONG, WEAK or NONE for `mag[i]`.
///
/// Errors: `out` shorter than `mag` -> [`Error::BufferTooShort`].
///
/// ```
/// use fixsight::hysteresis::{classify_row, Thresholds};
/// let mut out = [9u8; 4];
/// classify_row(&[0, 5, 10, 20], &Thresholds::new(5, 20)?, &mut out)?;
/// assert_eq!(out, [0, 1, 1, 2]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn classify_row(mag: &[u16], t: &Thresholds, out: &mut [u8]) -> Result<()> {
    let w = mag.len();
    if out.len() < w {
        return Err(Error::BufferTooShort {
            what: "edge code output row",
            needed: w,
            got: out.len(),
        });
    }
    for (o, &m) in out[..w].iter_mut().zip(mag) {
        *o = code_of(m, t);
    }
    // Per pixel: load, two compares, two selects, store, loop branch.
    let n = w;
    tally_per(Op::Load, 1, n);
    tally_per(Op::Logic, 4, n);
    tally_per(Op::Store, 1, n);
    tally_per(Op::Branch, 1, n);
    Ok(())
}

/// Classifies a frame of suppressed magnitudes into edge codes.
///
/// Errors: size or channel mismatch -> [`Error::SizeMismatch`] /
/// [`Error::UnsupportedChannels`].
///
/// ```
/// use fixsight::{hysteresis::{classify, Thresholds}, ImageView, ImageViewMut};
/// let mag = [3u16, 30];
/// let mut out = [0u8; 2];
/// classify(&ImageView::new(&mag, 1, 2, 1)?, &Thresholds::new(3, 30)?,
///     &mut ImageViewMut::new(&mut out, 1, 2, 1)?)?;
/// assert_eq!(out, [1, 2]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn classify(
    mag: &ImageView<'_, u16>,
    t: &Thresholds,
    out: &mut ImageViewMut<'_, u8>,
) -> Result<()> {
    check_single_channel(mag)?;
    check_single_channel(&out.as_view())?;
    check_same_size("edge code map vs magnitude", mag, out)?;
    for y in 0..mag.height() {
        classify_row(mag.row_at(y), t, out.row_at_mut(y))?;
        tally(Op::Branch, 1);
    }
    Ok(())
}

/// What a hysteresis run did.
///
/// ```
/// let s = fixsight::hysteresis::HysteresisStats::default();
/// assert_eq!(s.passes, 0);
/// ```
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct HysteresisStats {
    /// Pixels set to [`EDGE`].
    pub edges: u32,
    /// Raster passes of step 2 (1 when the stack never filled).
    pub passes: u32,
    /// Times a neighbour was re-marked as a pending seed because the stack
    /// was full.
    pub deferred: u32,
    /// Largest number of stack entries in use.
    pub peak_stack: u32,
}

/// Neighbour offsets in visiting order N, NE, E, SE, S, SW, W, NW.
pub(crate) const NEIGHBOURS: [(i32, i32); 8] = [
    (0, -1),
    (1, -1),
    (1, 0),
    (1, 1),
    (0, 1),
    (-1, 1),
    (-1, 0),
    (-1, -1),
];

/// A map of edge codes that [`propagate`] walks: the caller's `u8` image
/// here, the 2-bit packed map of [`crate::pipeline`]. Codes are [`NONE`],
/// [`WEAK`], [`STRONG`] and the map's own edge marker `EDGE`.
pub(crate) trait CodeMap {
    /// Code written for a pixel that became an edge.
    const EDGE: u8;
    /// Width and height.
    fn dims(&self) -> (usize, usize);
    /// Code at `(x, y)` (in range by the caller's loops).
    fn code(&self, x: usize, y: usize) -> u8;
    /// Writes a code at `(x, y)`.
    fn set_code(&mut self, x: usize, y: usize, v: u8);
    /// The first column `>= x` of row `y` that may hold STRONG (`width`
    /// when none does); a map that cannot tell returns `x`.
    #[inline(always)]
    fn next_strong(&self, x: usize, _y: usize) -> usize {
        x
    }
    /// Bit `i` set when neighbour `i` of `(x, y)` (the order of
    /// [`NEIGHBOURS`]) is inside the map and [`WEAK`].
    #[inline(always)]
    fn weak_neighbours(&self, x: usize, y: usize) -> u8 {
        let (w, h) = self.dims();
        let mut m = 0u8;
        for (i, &(dx, dy)) in NEIGHBOURS.iter().enumerate() {
            let (nx, ny) = (x as i32 + dx, y as i32 + dy);
            if nx >= 0
                && ny >= 0
                && (nx as usize) < w
                && (ny as usize) < h
                && self.code(nx as usize, ny as usize) == WEAK
            {
                m |= 1 << i;
            }
        }
        m
    }
}

impl CodeMap for ImageViewMut<'_, u8> {
    const EDGE: u8 = EDGE;
    #[inline(always)]
    fn dims(&self) -> (usize, usize) {
        (self.width(), self.height())
    }
    #[inline(always)]
    fn code(&self, x: usize, y: usize) -> u8 {
        self.as_view().row_at(y)[x]
    }
    #[inline(always)]
    fn set_code(&mut self, x: usize, y: usize, v: u8) {
        self.row_at_mut(y)[x] = v;
    }
}

/// A work-stack entry `(y << 16) | x`: `u32` in the public API, a pair of
/// `i16` where the pipeline lends its gradient row (low half first).
pub(crate) trait StackWord: Copy {
    /// Stores an entry.
    fn pack(e: u32) -> Self;
    /// Reads it back.
    fn unpack(self) -> u32;
}

impl StackWord for u32 {
    #[inline(always)]
    fn pack(e: u32) -> Self {
        e
    }
    #[inline(always)]
    fn unpack(self) -> u32 {
        self
    }
}

impl StackWord for [i16; 2] {
    #[inline(always)]
    fn pack(e: u32) -> Self {
        [e as i16, (e >> 16) as i16]
    }
    #[inline(always)]
    fn unpack(self) -> u32 {
        (self[0] as u16 as u32) | ((self[1] as u16 as u32) << 16)
    }
}

/// Hysteresis in place on an edge-code map (see the module docs for the
/// algorithm, the result and the memory). `stack` is caller scratch of at
/// least [`MIN_STACK`] entries; a larger stack means fewer passes, never a
/// different result.
///
/// Errors: `stack` shorter than [`MIN_STACK`] -> [`Error::BufferTooShort`];
/// a code other than 0, 1, 2 -> [`Error::BadEdgeCode`] (the map is left
/// unchanged); multi-channel map -> [`Error::UnsupportedChannels`].
///
/// ```
/// use fixsight::{hysteresis, ImageViewMut};
/// // A weak diagonal hanging off a strong corner pixel survives.
/// let mut map = [2u8, 0, 0,  0, 1, 0,  0, 0, 1];
/// let mut stack = [0u32; 8];
/// let st = hysteresis::link(&mut ImageViewMut::new(&mut map, 3, 3, 3)?, &mut stack)?;
/// assert_eq!(map, [255, 0, 0,  0, 255, 0,  0, 0, 255]);
/// assert_eq!((st.edges, st.passes), (3, 1));
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn link(map: &mut ImageViewMut<'_, u8>, stack: &mut [u32]) -> Result<HysteresisStats> {
    check_single_channel(&map.as_view())?;
    if stack.len() < MIN_STACK {
        return Err(Error::BufferTooShort {
            what: "hysteresis work stack",
            needed: MIN_STACK,
            got: stack.len(),
        });
    }
    let (w, h) = (map.width(), map.height());
    // 1. Validation scan.
    for y in 0..h {
        for (x, &v) in map.row_at_mut(y).iter().enumerate() {
            if v > STRONG {
                return Err(Error::BadEdgeCode { x, y, value: v });
            }
        }
        tally_per(Op::Load, 1, w);
        tally_per(Op::Logic, 1, w);
        tally_per(Op::Branch, 2, w);
    }
    let st = propagate(map, stack);
    // 4. Final scan.
    for y in 0..h {
        for v in map.row_at_mut(y).iter_mut() {
            if *v == WEAK {
                *v = NONE;
            }
        }
        tally_per(Op::Load, 1, w);
        tally_per(Op::Logic, 1, w);
        tally_per(Op::Store, 1, w);
        tally_per(Op::Branch, 2, w);
    }
    Ok(st)
}

/// Steps 2 and 3 of the module docs on any [`CodeMap`] holding only codes
/// 0, 1 and 2, with a stack of at least [`MIN_STACK`] entries (the caller
/// checks both). STRONG pixels and the WEAK pixels joined to them become
/// `M::EDGE`; other WEAK pixels stay WEAK.
pub(crate) fn propagate<M: CodeMap, S: StackWord>(map: &mut M, stack: &mut [S]) -> HysteresisStats {
    let (w, h) = map.dims();
    let mut st = HysteresisStats::default();
    let cap = stack.len();
    let mut r0 = 0usize;
    loop {
        st.passes += 1;
        let mut next_r0 = usize::MAX;
        for y in r0..h {
            let mut x = 0;
            while x < w {
                x = map.next_strong(x, y);
                if x >= w {
                    break;
                }
                if map.code(x, y) != STRONG {
                    x += 1;
                    continue;
                }
                map.set_code(x, y, M::EDGE);
                st.edges += 1;
                stack[0] = S::pack(((y as u32) << 16) | x as u32);
                let mut top = 1usize;
                st.peak_stack = st.peak_stack.max(1);
                tally(Op::Store, 2);
                while top > 0 {
                    top -= 1;
                    let e = stack[top].unpack();
                    let (px, py) = ((e & 0xFFFF) as i32, (e >> 16) as i32);
                    tally(Op::Load, 1);
                    tally(Op::Logic, 1);
                    tally(Op::Shift, 1);
                    tally(Op::AddSub, 1);
                    // The weak neighbours, visited in the order of
                    // `NEIGHBOURS` (visiting one changes only that one, so
                    // the mask taken first is the mask a neighbour-by-
                    // neighbour test would see). Per popped pixel: 3 row
                    // loads, about 16 shifts and logic operations.
                    let mut weak = map.weak_neighbours(px as usize, py as usize);
                    tally(Op::Load, 3);
                    tally(Op::Logic, 8);
                    tally(Op::Shift, 8);
                    while weak != 0 {
                        let i = weak.trailing_zeros() as usize;
                        weak &= weak - 1;
                        let (dx, dy) = NEIGHBOURS[i];
                        let (nxu, nyu) = ((px + dx) as usize, (py + dy) as usize);
                        tally(Op::AddSub, 2);
                        tally(Op::Logic, 2);
                        tally(Op::Branch, 1);
                        if top < cap {
                            map.set_code(nxu, nyu, M::EDGE);
                            stack[top] = S::pack(((nyu as u32) << 16) | nxu as u32);
                            top += 1;
                            st.edges += 1;
                            st.peak_stack = st.peak_stack.max(top as u32);
                            tally(Op::Store, 2);
                            tally(Op::Shift, 1);
                            tally(Op::Logic, 2);
                            tally(Op::AddSub, 1);
                        } else {
                            map.set_code(nxu, nyu, STRONG);
                            st.deferred += 1;
                            if nyu < y || (nyu == y && nxu < x) {
                                next_r0 = next_r0.min(nyu);
                            }
                            tally(Op::Store, 1);
                            tally(Op::Logic, 3);
                        }
                    }
                }
                x += 1;
            }
            // Scan: a load, a compare and two branches per pixel.
            tally_per(Op::Load, 1, w);
            tally_per(Op::Logic, 1, w);
            tally_per(Op::Branch, 2, w);
        }
        if next_r0 == usize::MAX {
            break;
        }
        r0 = next_r0;
    }
    st
}

#[cfg(test)]
mod tests {
    extern crate std;
    use super::*;
    use proptest::prelude::*;
    use std::vec;
    use std::vec::Vec;

    /// Independent model: label 8-connected components of {WEAK, STRONG}
    /// with a queue on the heap; a component is kept when it has a STRONG.
    fn by_components(map: &[u8], w: usize, h: usize) -> Vec<u8> {
        let mut label = vec![usize::MAX; w * h];
        let mut out = vec![NONE; w * h];
        for s in 0..w * h {
            if map[s] == NONE || label[s] != usize::MAX {
                continue;
            }
            let mut members = vec![s];
            label[s] = s;
            let mut i = 0;
            let mut strong = false;
            while i < members.len() {
                let p = members[i];
                i += 1;
                strong |= map[p] == STRONG;
                let (x, y) = ((p % w) as i32, (p / w) as i32);
                for dy in -1..=1 {
                    for dx in -1..=1 {
                        let (nx, ny) = (x + dx, y + dy);
                        if nx >= 0 && ny >= 0 && (nx as usize) < w && (ny as usize) < h {
                            let q = ny as usize * w + nx as usize;
                            if map[q] != NONE && label[q] == usize::MAX {
                                label[q] = s;
                                members.push(q);
                            }
                        }
                    }
                }
            }
            if strong {
                for &p in &members {
                    out[p] = EDGE;
                }
            }
        }
        out
    }

    #[test]
    fn bad_inputs_are_typed_errors_and_leave_the_map_alone() {
        let mut map = [1u8, 2, 7, 0];
        let mut stack = [0u32; 8];
        assert_eq!(
            link(
                &mut ImageViewMut::new(&mut map, 2, 2, 2).unwrap(),
                &mut stack
            ),
            Err(Error::BadEdgeCode {
                x: 0,
                y: 1,
                value: 7
            })
        );
        assert_eq!(map, [1, 2, 7, 0]);
        assert_eq!(
            link(
                &mut ImageViewMut::new(&mut map, 2, 2, 2).unwrap(),
                &mut stack[..7]
            ),
            Err(Error::BufferTooShort {
                what: "hysteresis work stack",
                needed: 8,
                got: 7
            })
        );
        let mag = [1u16; 4];
        let mut h = [0u32; 4];
        let v = ImageView::new(&mag, 2, 2, 2).unwrap();
        assert!(Thresholds::from_histogram(&v, &mut [], 0, 500, DEMO_LOW_FRACTION).is_err());
        assert!(Thresholds::from_histogram(&v, &mut h, 16, 500, DEMO_LOW_FRACTION).is_err());
        assert!(Thresholds::from_histogram(&v, &mut h, 0, 1000, DEMO_LOW_FRACTION).is_err());
        assert!(Thresholds::from_histogram(&v, &mut h, 0, 500, U0F16::ZERO).is_err());
        let mut o = [0u8; 3];
        assert!(classify_row(&mag, &Thresholds::new(1, 1).unwrap(), &mut o).is_err());
    }

    #[test]
    fn a_long_spiral_with_the_minimum_stack_matches_a_huge_stack() {
        // A weak serpentine filling a 24x24 frame, strong at its far end:
        // the minimum stack must defer and rescan, and still reach the start.
        let (w, h) = (24usize, 24usize);
        let mut map = vec![NONE; w * h];
        for y in (0..h).step_by(2) {
            for x in 0..w {
                map[y * w + x] = WEAK;
            }
            let link_x = if (y / 2) % 2 == 0 { w - 1 } else { 0 };
            if y + 1 < h {
                map[(y + 1) * w + link_x] = WEAK;
            }
        }
        map[(h - 2) * w + 3] = STRONG;
        let want = by_components(&map, w, h);
        for cap in [8usize, 9, 13, w * h] {
            let mut m = map.clone();
            let mut stack = vec![0u32; cap];
            let st = link(&mut ImageViewMut::new(&mut m, w, h, w).unwrap(), &mut stack).unwrap();
            assert_eq!(m, want, "stack {cap}");
            assert!(st.peak_stack as usize <= cap);
            if cap == w * h {
                assert_eq!((st.passes, st.deferred), (1, 0));
            }
        }
    }

    #[test]
    fn a_full_weak_block_seeded_at_its_last_pixel_needs_rescans_but_is_complete() {
        let (w, h) = (16usize, 12usize);
        let mut map = vec![WEAK; w * h];
        map[w * h - 1] = STRONG;
        let mut stack = [0u32; MIN_STACK];
        let st = link(
            &mut ImageViewMut::new(&mut map, w, h, w).unwrap(),
            &mut stack,
        )
        .unwrap();
        assert!(map.iter().all(|&v| v == EDGE));
        assert_eq!(st.edges as usize, w * h);
        assert!(st.deferred > 0 && st.passes > 1, "{st:?}");
    }

    #[test]
    fn demo_ratio_is_inside_cannys_range() {
        // Canny 1986, "A Computational Approach to Edge Detection", IEEE PAMI
        // 8(6): high:low between 2:1 and 3:1.
        let f = DEMO_LOW_FRACTION.to_bits() as u32;
        assert!(3 * f >= 65536 && 2 * f <= 65536);
        for high in 2..=65535u32 {
            let low = ((high * f + 32768) >> 16).max(1);
            assert!(2 * low <= high && high <= 3 * low, "high {high} low {low}");
        }
        let mag: Vec<u16> = (0..400u16).map(|i| i * 3).collect();
        let mut hist = [0u32; 256];
        let t = Thresholds::from_histogram(
            &ImageView::new(&mag, 400, 1, 400).unwrap(),
            &mut hist,
            2,
            DEMO_HIGH_PERMILLE,
            DEMO_LOW_FRACTION,
        )
        .unwrap();
        // 2 <= high / low <= 3, in integers.
        let (hi, lo) = (t.high() as u32, t.low() as u32);
        assert!(2 * lo <= hi && hi <= 3 * lo, "{t:?}");
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]

        /// Step 5 against counting the magnitudes themselves: the raised
        /// `low` is a bin edge with at most `budget` magnitudes at or above
        /// it, and the next lower bin edge above `low`'s bin has more.
        #[test]
        fn budget_step_is_the_lowest_bin_edge_that_fits(
            mags in proptest::collection::vec(1u16..400, 0..300),
            shift in 0u32..4, budget in 0u32..200, low in 1u16..300, extra in 0u16..100
        ) {
            let bins = (399 >> shift) + 1;
            let mut hist = vec![0u32; bins];
            for &m in &mags {
                hist[(m >> shift) as usize] += 1;
            }
            let at_or_above = |t: u32| mags.iter().filter(|&&m| m as u32 >= t).count() as u32;
            let t = Thresholds::new(low, low + extra).unwrap();
            let r = t.within_budget(&hist, shift, budget).unwrap();
            let edge0 = (low as u32 >> shift) << shift;
            if at_or_above(edge0) <= budget {
                prop_assert_eq!(r, t);
            } else {
                let (lo, step) = (r.low() as u32, 1u32 << shift);
                prop_assert_eq!(lo % step, 0);
                prop_assert!(lo > low as u32 && at_or_above(lo) <= budget);
                prop_assert!(lo - step == edge0 || at_or_above(lo - step) > budget);
                prop_assert_eq!(r.high(), t.high().max(r.low()));
            }
        }

        #[test]
        fn result_is_the_component_rule_for_any_stack(
            w in 1usize..20, h in 1usize..20, seed in any::<u64>(), cap in 8usize..20
        ) {
            let mut map = vec![NONE; w * h];
            let mut s = seed;
            for v in map.iter_mut() {
                s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
                let r = (s >> 40) % 100;
                *v = if r < 3 { STRONG } else if r < 55 { WEAK } else { NONE };
            }
            let want = by_components(&map, w, h);
            let mut m = map.clone();
            let mut stack = vec![0u32; cap];
            link(&mut ImageViewMut::new(&mut m, w, h, w).unwrap(), &mut stack).unwrap();
            prop_assert_eq!(m, want);
        }

        #[test]
        fn automatic_thresholds_are_ordered_and_never_panic(
            vals in proptest::collection::vec(any::<u16>(), 1..64),
            shift in 0u32..16, bins in 1usize..64, p in 1u16..1000, f in 1u16..=u16::MAX
        ) {
            let mut hist = vec![0u32; bins];
            let t = Thresholds::from_histogram(
                &ImageView::new(&vals, vals.len(), 1, vals.len()).unwrap(),
                &mut hist, shift, p, U0F16::from_bits(f)).unwrap();
            prop_assert!(1 <= t.low() && t.low() <= t.high());
            prop_assert!(Thresholds::new(t.low(), t.high()).is_ok());
        }
    }
}
