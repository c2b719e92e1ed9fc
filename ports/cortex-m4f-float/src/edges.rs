//! The `f32` streamed edge stage ([`F32EdgeStream`]): camera rows in,
//! edge points (position and gradient angle) out, every buffer in the type.
//!
//! # What it computes, for a frame of `width x height` pixels
//!
//! 1. **Gradients** in `f32`: the fused taps of the configuration
//!    ([`EdgeConfig::gradient_taps`]: the smoothing's integer taps convolved
//!    with the operator's derivative `[-1 0 1]` and cross taps), each set
//!    divided by its power of two (`h_shift`, `v_shift`), so `gx`, `gy` are
//!    the operator on the smoothed image times `2^frac_bits`, the integer
//!    stage's scale, without its rounding to `i16`. Rows and columns outside
//!    the frame clamp to its edge (the integer stage's border). The taps are
//!    applied by their symmetry: `cross` is symmetric and `deriv`
//!    antisymmetric, so each output sums `r` pairs (plus the centre tap of
//!    `cross`), `r` the radius (4 for the demo's 9 taps).
//! 2. **Magnitude** `sqrt(gx^2 + gy^2)` by [`Root`]: `micromath`'s
//!    approximation ([`Root::Fast`]) or that approximation refined by two
//!    Newton steps ([`Root::Newton`]).
//! 3. **Non-maximum suppression** by the configuration's `suppression`:
//!    in 4 sectors, the rule of `fixsight::nms` (strictly above the
//!    *before* neighbour, at least the *after* one, neighbours outside the
//!    frame read 0), the sector from `|gy| < tan(22.5 deg) |gx|` (0),
//!    `|gy| > tan(67.5 deg) |gx|` (2), else 1 when `gx`, `gy` have the same
//!    sign, 3 otherwise: the boundaries of
//!    `fixsight::gradient::direction_sector`, on the `f32` gradients; or
//!    interpolating ([`interpolated_keeps`]: the integer model of
//!    `fixsight::nms::suppress_interpolated` in `f32`).
//! 4. **Classes** against the thresholds in use for the frame: strong at or
//!    above `high`, weak at or above `low` (the integer thresholds compared
//!    as `f32`).
//! 5. **Thresholds** by the kernel crate's automatic rule: a histogram of
//!    `floor(m) >> shift` of the nonzero suppressed magnitudes, then
//!    [`Thresholds::from_counts`] with the rule's share and ratio, then,
//!    with a candidate budget ([`F32EdgeStream::set_candidate_budget`]),
//!    [`Thresholds::within_budget`] on the same histogram; they apply to the
//!    next frame, like the integer stage's.
//! 6. **Hysteresis** and **thinning** by the kernel crate's public
//!    whole-frame functions (`fixsight::hysteresis::link`,
//!    `fixsight::thinning::thin` / `thin_at_most`) on a byte class map.
//!
//! The edge points are the nonzero pixels after step 6 in raster order,
//! each with the gradient angle of its candidate (`u16`, 65536 units per
//! half turn, the unit of `fixsight::gradient::angle`, computed by
//! `micromath`'s `atan2`) when it was one of the first `CAP` candidates.
//!
//! # Precision
//!
//! Every sum and product is IEEE 754 binary32 with round to nearest (the
//! Cortex-M4F's FPU in its default mode; the host's SSE arithmetic gives the
//! same results for the same operation order, as no fused multiply-add is
//! written: `a * b + c` rounds twice). The camera samples (`0..=255`) and the
//! taps divided by a power of two are exact in `f32`; the tap sums round.
//! The bound the tests hold is derived in `tests/against_f64.rs`.
//!
//! `micromath` 2.1's `sqrt` is the exponent-halving approximation
//! `from_bits((bits + 0x3f80_0000) >> 1)` (the crate's docs: "average
//! deviation of ~5%"; the crate's sources cite Stephan Brumme, "Square
//! root", bits.stephan-brumme.com); it is non-decreasing in its argument,
//! which is what suppression and the rank rule of the thresholds need:
//! both see only the order of magnitudes (except for ties the shift
//! creates and the histogram's bin edges). `atan2` has a stated maximum
//! error of 0.002 rad (crate docs), 42 units of the angle, against gate
//! columns of 512 or 1024 units.

use core::num::NonZeroU32;

use crate::Root;
use fixsight::hysteresis::{self, Thresholds, NONE, STRONG, U0F16, WEAK};
use fixsight::pipeline::{EdgeConfig, Suppression, Thinning, ThresholdRule};
use fixsight::{Error, ImageViewMut};
use micromath::F32Ext;

/// Longest fused tap set (the 7-tap smoothings with a 3-tap operator).
pub const MAX_TAPS: usize = 9;

/// Entries of the hysteresis work stack (a longer stack means fewer
/// passes, never another result: `fixsight::hysteresis::link`).
pub const LINK_STACK: usize = 256;

/// `tan(22.5 deg) = sqrt 2 - 1` and `tan(67.5 deg) = sqrt 2 + 1`, rounded
/// to `f32`.
const TAN_22_5: f32 = 0.414_213_57;
const TAN_67_5: f32 = 2.414_213_6;

/// The settings of the `f32` stage.
///
/// ```
/// use fixsight_port_cortex_m4f_float::{F32Config, Root};
/// let c = F32Config::DEMO;
/// assert_eq!(c.edges, fixsight::pipeline::DEMO);
/// assert_eq!(c.root, Root::Fast);
/// assert!(c.check().is_ok());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct F32Config {
    /// Smoothing, operator, gradient scale (`frac_bits`), threshold rule,
    /// thinning and suppression; the magnitude kind is replaced by
    /// [`F32Config::root`].
    pub edges: EdgeConfig,
    /// Square root of the magnitude.
    pub root: Root,
}

impl F32Config {
    /// The demo's edge settings (`fixsight::pipeline::DEMO`) with
    /// `micromath`'s square root.
    pub const DEMO: F32Config = F32Config {
        edges: fixsight::pipeline::DEMO,
        root: Root::Fast,
    };

    /// Checks the settings (`edges.check()`).
    ///
    /// ```
    /// use fixsight::pipeline::{EdgeConfig, Thinning, DEMO};
    /// use fixsight_port_cortex_m4f_float::{F32Config, Root};
    /// let c = F32Config {
    ///     edges: EdgeConfig { thinning: Thinning::AtMost(0), ..DEMO },
    ///     root: Root::Fast,
    /// };
    /// assert!(c.check().is_err());
    /// ```
    pub fn check(&self) -> Result<(), Error> {
        self.edges.check()
    }
}

/// The report of one frame.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct F32FrameReport {
    /// Thresholds `(low, high)` the frame was classified with.
    pub thresholds: (u16, u16),
    /// Thresholds for the next frame.
    pub next_thresholds: (u16, u16),
    /// Candidates (suppressed magnitude at or above `low`).
    pub candidates: u32,
    /// Candidates past the `CAP`-th, whose angle was not kept.
    pub angles_dropped: u32,
    /// Edge points after hysteresis and thinning.
    pub edge_points: u32,
}

/// One edge point.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct F32EdgePoint {
    /// Column.
    pub x: u16,
    /// Row.
    pub y: u16,
    /// Gradient angle (65536 units per half turn), `None` past the
    /// `CAP`-th candidate.
    pub angle: Option<u16>,
}

/// The `f32` streamed edge stage (module docs).
///
/// Const parameters: `W` the widest frame; `MAP` bytes of the class map,
/// at least `width * height`; `BINS` threshold histogram bins, at least
/// `edges.bins_needed()`; `CAP` candidates whose position and angle are
/// kept.
///
/// ```
/// use fixsight_port_cortex_m4f_float::{F32Config, F32EdgeStream};
/// // A 24 x 16 frame with a vertical step at x = 12.
/// let mut s = F32EdgeStream::<24, { 24 * 16 }, 925, 256>::new();
/// s.configure(&F32Config::DEMO, 24, 16)?;
/// let row: [u8; 24] = core::array::from_fn(|x| if x < 12 { 30 } else { 200 });
/// for _ in 0..16 { s.push_row(&row)?; }
/// let report = s.finish()?;
/// assert!(report.edge_points >= 12);
/// for p in s.points() {
///     assert!(p.x == 11 || p.x == 12);
///     assert_eq!(p.angle, Some(0)); // gradient along +x
/// }
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug, Clone)]
pub struct F32EdgeStream<const W: usize, const MAP: usize, const BINS: usize, const CAP: usize> {
    cfg: F32Config,
    configured: bool,
    width: usize,
    height: usize,
    rows: usize,
    /// Gradient rows formed in the frame.
    formed: usize,
    taps: Taps,
    ring: [[u8; W]; MAX_TAPS],
    col_c: [f32; W],
    col_d: [f32; W],
    gx: [[f32; W]; 3],
    gy: [[f32; W]; 3],
    mag: [[f32; W]; 3],
    map: [u8; MAP],
    hist: [u32; BINS],
    low: f32,
    high: f32,
    used: (u16, u16),
    pos: [u32; CAP],
    angle: [u16; CAP],
    candidates: u32,
    /// Candidates of the last finished frame.
    candidates_kept: u32,
    /// The last frame is finished and its map not yet cleared.
    finished: bool,
    stack: [u32; LINK_STACK],
    report: Option<F32FrameReport>,
    /// Candidate budget of the automatic rule (`None`: no step 5).
    budget: Option<NonZeroU32>,
}

impl<const W: usize, const MAP: usize, const BINS: usize, const CAP: usize> Default
    for F32EdgeStream<W, MAP, BINS, CAP>
{
    fn default() -> Self {
        Self::new()
    }
}

impl<const W: usize, const MAP: usize, const BINS: usize, const CAP: usize>
    F32EdgeStream<W, MAP, BINS, CAP>
{
    /// An unconfigured stream, every buffer zeroed.
    pub const fn new() -> Self {
        Self {
            cfg: F32Config::DEMO,
            configured: false,
            width: 0,
            height: 0,
            rows: 0,
            formed: 0,
            taps: Taps {
                r: 0,
                cv: [0.0; MAX_TAPS],
                dv: [0.0; MAX_TAPS],
                ch: [0.0; MAX_TAPS],
                dh: [0.0; MAX_TAPS],
            },
            ring: [[0; W]; MAX_TAPS],
            col_c: [0.0; W],
            col_d: [0.0; W],
            gx: [[0.0; W]; 3],
            gy: [[0.0; W]; 3],
            mag: [[0.0; W]; 3],
            map: [0; MAP],
            hist: [0; BINS],
            low: 0.0,
            high: 0.0,
            used: (0, 0),
            pos: [0; CAP],
            angle: [0; CAP],
            candidates: 0,
            candidates_kept: 0,
            finished: false,
            stack: [0; LINK_STACK],
            report: None,
            budget: None,
        }
    }

    /// Bytes of the stream: `size_of::<Self>()`.
    ///
    /// ```
    /// use fixsight_port_cortex_m4f_float::F32EdgeStream;
    /// assert!(F32EdgeStream::<320, 76800, 925, 4096>::ram_bytes() > 76800);
    /// ```
    pub const fn ram_bytes() -> usize {
        core::mem::size_of::<Self>()
    }

    /// The candidate budget of the automatic thresholds, as
    /// `fixsight::pipeline::EdgeStream::set_candidate_budget` (`None`: the
    /// rule's pair as it is; `configure` keeps it).
    pub fn set_candidate_budget(&mut self, budget: Option<NonZeroU32>) {
        self.budget = budget;
    }

    /// Sets the configuration and frame size and starts a frame; the first
    /// frame uses the rule's first thresholds.
    ///
    /// Errors: a bad configuration ([`F32Config::check`]); `width` 0 or
    /// above `W`, `height` 0, `width * height` above `MAP`, or fewer than
    /// `bins_needed()` bins -> [`Error::BadParameter`] /
    /// [`Error::BufferTooShort`].
    pub fn configure(&mut self, cfg: &F32Config, width: usize, height: usize) -> Result<(), Error> {
        cfg.check()?;
        if width == 0 || width > W {
            return Err(Error::BadParameter {
                name: "width",
                expected: "1..=W",
                got: width as i64,
            });
        }
        if height == 0 || height > u16::MAX as usize {
            return Err(Error::BadParameter {
                name: "height",
                expected: "1..=65535",
                got: height as i64,
            });
        }
        let pixels = width.saturating_mul(height);
        if pixels > MAP {
            return Err(Error::BufferTooShort {
                what: "class map (MAP bytes, one per pixel)",
                needed: pixels,
                got: MAP,
            });
        }
        if cfg.edges.bins_needed() > BINS {
            return Err(Error::BufferTooShort {
                what: "threshold histogram (BINS)",
                needed: cfg.edges.bins_needed(),
                got: BINS,
            });
        }
        let (low, high) = match cfg.edges.thresholds {
            ThresholdRule::Fixed { low, high } => (low, high),
            ThresholdRule::Auto {
                first_low,
                first_high,
                ..
            } => (first_low, first_high),
        };
        self.taps = Taps::of(&cfg.edges);
        self.cfg = *cfg;
        self.width = width;
        self.height = height;
        self.set_thresholds(low, high);
        self.configured = true;
        self.report = None;
        self.start_frame();
        Ok(())
    }

    fn set_thresholds(&mut self, low: u16, high: u16) {
        self.used = (low, high);
        self.low = low as f32;
        self.high = high as f32;
    }

    fn start_frame(&mut self) {
        self.finished = false;
        self.rows = 0;
        self.formed = 0;
        self.candidates = 0;
        self.hist.fill(0);
        let n = self.width * self.height;
        self.map[..n].fill(NONE);
    }

    /// Configured width.
    pub fn width(&self) -> usize {
        self.width
    }

    /// Configured height.
    pub fn height(&self) -> usize {
        self.height
    }

    /// Rows pushed in the current frame.
    pub fn rows_pushed(&self) -> usize {
        self.rows
    }

    /// Pushes one camera row (`width` samples).
    ///
    /// Errors: not configured -> [`Error::StreamOrder`]; a row of another
    /// length -> [`Error::BadParameter`]; one row more than `height` ->
    /// [`Error::StreamOrder`]. A rejected row changes nothing.
    pub fn push_row(&mut self, row: &[u8]) -> Result<(), Error> {
        if !self.configured {
            return Err(Error::StreamOrder {
                reason: "f32 edge stream used before configure",
            });
        }
        if row.len() != self.width {
            return Err(Error::BadParameter {
                name: "row length",
                expected: "the configured width",
                got: row.len() as i64,
            });
        }
        if self.rows >= self.height {
            return Err(Error::StreamOrder {
                reason: "more rows than the configured height; finish the frame",
            });
        }
        if self.finished {
            self.start_frame();
        }
        let y = self.rows;
        self.ring[y % MAX_TAPS][..self.width].copy_from_slice(row);
        self.rows += 1;
        if y >= self.taps.r {
            self.form(y - self.taps.r);
        }
        Ok(())
    }

    /// Ends the frame: the last gradient rows (bottom border), suppression
    /// of the last row, hysteresis, thinning and the next thresholds.
    ///
    /// Errors: not configured or not every row pushed ->
    /// [`Error::StreamOrder`].
    pub fn finish(&mut self) -> Result<F32FrameReport, Error> {
        if !self.configured {
            return Err(Error::StreamOrder {
                reason: "f32 edge stream used before configure",
            });
        }
        if self.rows != self.height {
            return Err(Error::StreamOrder {
                reason: "finish before the frame's last row",
            });
        }
        let (w, h) = (self.width, self.height);
        for g in h.saturating_sub(self.taps.r)..h {
            self.form(g);
        }
        self.suppress_row(h - 1);
        let used = self.used;
        let mut map = ImageViewMut::new(&mut self.map[..w * h], w, h, w)?;
        hysteresis::link(&mut map, &mut self.stack)?;
        let scratch = self.ring.as_flattened_mut();
        match self.cfg.edges.thinning {
            Thinning::Off => {}
            Thinning::UntilStable => {
                fixsight::thinning::thin(&mut map, scratch)?;
            }
            Thinning::AtMost(n) => {
                fixsight::thinning::thin_at_most(&mut map, scratch, n as u32)?;
            }
        }
        let edge_points = self.map[..w * h].iter().filter(|&&v| v != NONE).count() as u32;
        if let ThresholdRule::Auto {
            shift,
            high_permille,
            low_ratio_u0f16,
            ..
        } = self.cfg.edges.thresholds
        {
            let n = self.cfg.edges.bins_needed();
            let t = Thresholds::from_counts(
                &self.hist[..n],
                shift as u32,
                high_permille,
                U0F16::from_bits(low_ratio_u0f16),
            )?;
            let t = match self.budget {
                Some(b) => t.within_budget(&self.hist[..n], shift as u32, b.get())?,
                None => t,
            };
            self.set_thresholds(t.low(), t.high());
        }
        let report = F32FrameReport {
            thresholds: used,
            next_thresholds: self.used,
            candidates: self.candidates,
            angles_dropped: self.candidates.saturating_sub(CAP as u32),
            edge_points,
        };
        self.report = Some(report);
        // The map stays readable until the next frame's first row.
        self.rows = 0;
        self.candidates_kept = report.candidates;
        self.finished = true;
        Ok(report)
    }

    /// The report of the last finished frame.
    pub fn report(&self) -> Option<F32FrameReport> {
        self.report
    }

    /// The edge points of the last finished frame, in raster order (empty
    /// before the first [`finish`](Self::finish) or once a row of the next
    /// frame was pushed).
    pub fn points(&self) -> F32EdgePoints<'_> {
        let n = if self.finished {
            self.width * self.height
        } else {
            0
        };
        F32EdgePoints {
            map: &self.map[..n],
            width: self.width,
            pos: &self.pos[..(self.candidates_kept as usize).min(CAP)],
            angle: &self.angle,
            next: 0,
            k: 0,
        }
    }

    /// Forms gradient row `g` (rows `g - r ..= g + r` clamped into the
    /// frame are in the ring), then suppresses row `g - 1`.
    fn form(&mut self, g: usize) {
        let (w, r, h) = (self.width, self.taps.r, self.height);
        let rows: [&[u8]; MAX_TAPS] = core::array::from_fn(|k| {
            let y = (g + k).saturating_sub(r).min(h - 1);
            &self.ring[y % MAX_TAPS][..w]
        });
        let s = g % 3;
        let out = RowOut {
            col_c: &mut self.col_c[..w],
            col_d: &mut self.col_d[..w],
            gx: &mut self.gx[s][..w],
            gy: &mut self.gy[s][..w],
            mag: &mut self.mag[s][..w],
        };
        gradient_row(&self.taps, &rows, out, self.cfg.root);
        self.formed = g + 1;
        if g >= 1 {
            self.suppress_row(g - 1);
        }
    }

    /// `(gx, gy, magnitude)` of gradient row `y` of the current (or just
    /// finished) frame while the stream holds it: the last three rows
    /// formed (row `y` is formed when row `y + r` is pushed, `r` the radius
    /// of the taps, and the last `r` rows at [`finish`](Self::finish)).
    /// For tests and instrumentation; `None` for any other row.
    pub fn formed_row(&self, y: usize) -> Option<(&[f32], &[f32], &[f32])> {
        if y >= self.formed || y + 3 < self.formed {
            return None;
        }
        let (s, w) = (y % 3, self.width);
        Some((&self.gx[s][..w], &self.gy[s][..w], &self.mag[s][..w]))
    }

    /// Suppression, histogram count, class and candidate record of row
    /// `y` (its gradient rows `y - 1 ..= y + 1` are formed).
    fn suppress_row(&mut self, y: usize) {
        // One loop per rule, so the rule's test is not made per pixel.
        if self.cfg.edges.suppression == Suppression::Interpolated {
            self.suppress_row_by::<true>(y);
        } else {
            self.suppress_row_by::<false>(y);
        }
    }

    /// [`Self::suppress_row`] with the interpolating rule or the sectors.
    #[inline(always)]
    fn suppress_row_by<const INTERPOLATED: bool>(&mut self, y: usize) {
        let (w, h) = (self.width, self.height);
        let s = y % 3;
        let above = if y >= 1 { Some((y - 1) % 3) } else { None };
        let below = if y + 1 < h { Some((y + 1) % 3) } else { None };
        let mag = &self.mag;
        let m_at = |row: Option<usize>, x: usize, dx: isize| -> f32 {
            let xx = x as isize + dx;
            match row {
                Some(r) if xx >= 0 && (xx as usize) < w => mag[r][xx as usize],
                _ => 0.0,
            }
        };
        let bins = self.cfg.edges.bins_needed();
        let shift = match self.cfg.edges.thresholds {
            ThresholdRule::Auto { shift, .. } => shift as u32,
            ThresholdRule::Fixed { .. } => 0,
        };
        for (x, &m) in mag[s][..w].iter().enumerate() {
            if m <= 0.0 || m.is_nan() {
                continue;
            }
            let (gx, gy) = (self.gx[s][x], self.gy[s][x]);
            let keep = if INTERPOLATED {
                interpolated_keeps(m, gx, gy, |dx, dy| {
                    let row = match dy {
                        -1 => above,
                        0 => Some(s),
                        _ => below,
                    };
                    m_at(row, x, dx)
                })
            } else {
                let (ax, ay) = (gx.abs(), gy.abs());
                let (before, after) = if ay < TAN_22_5 * ax {
                    (m_at(Some(s), x, -1), m_at(Some(s), x, 1))
                } else if ay > TAN_67_5 * ax {
                    (m_at(above, x, 0), m_at(below, x, 0))
                } else if (gx > 0.0) == (gy > 0.0) {
                    (m_at(above, x, -1), m_at(below, x, 1))
                } else {
                    (m_at(above, x, 1), m_at(below, x, -1))
                };
                m > before && m >= after
            };
            if !keep {
                continue;
            }
            if bins > 0 {
                let b = ((m as u32) >> shift) as usize;
                self.hist[b.min(bins - 1)] += 1;
            }
            let code = if m >= self.high {
                STRONG
            } else if m >= self.low {
                WEAK
            } else {
                continue;
            };
            let p = y * w + x;
            self.map[p] = code;
            let k = self.candidates as usize;
            if k < CAP {
                self.pos[k] = p as u32;
                self.angle[k] = angle_of(gx, gy);
            }
            self.candidates = self.candidates.saturating_add(1);
        }
    }
}

/// The interpolating suppression's rule for a pixel of magnitude `m > 0`
/// and gradient `(gx, gy)` (the integer model of
/// `fixsight::nms::suppress_interpolated`, in `f32`): the gradient oriented
/// downwards, `a = max(|dx|, dy)`, `b = min(|dx|, dy)`, the magnitudes
/// one step along the ray forwards `A` and backwards `B` interpolated
/// between an axis and a diagonal neighbour (scaled by `a`, not divided),
/// kept when `m a > B` and `m a >= A`; `at(dx, dy)` is the magnitude at
/// that offset, 0 outside the frame. The products and sums round (binary32).
///
/// ```
/// use fixsight_port_cortex_m4f_float::edges::interpolated_keeps;
/// // The example of `fixsight::nms::suppress_interpolated`: a ridge of 9
/// // along a 30-degree slope, 9 * 2 < 1 * 8 + 1 * 12: suppressed.
/// let n = [[0.0, 0.0, 0.0], [0.0, 9.0, 8.0], [0.0, 0.0, 12.0f32]];
/// let at = |dx: isize, dy: isize| n[(1 + dy) as usize][(1 + dx) as usize];
/// assert!(!interpolated_keeps(9.0, 2.0, 1.0, at));
/// let v = [[0.0; 3], [3.0, 9.0, 4.0], [0.0; 3]];
/// assert!(interpolated_keeps(9.0, 5.0, 0.0, |dx, dy| v[(1 + dy) as usize][(1 + dx) as usize]));
/// ```
#[inline(always)]
pub fn interpolated_keeps(m: f32, gx: f32, gy: f32, at: impl Fn(isize, isize) -> f32) -> bool {
    let (dx, dy) = if gy < 0.0 || (gy == 0.0 && gx < 0.0) {
        (-gx, -gy)
    } else {
        (gx, gy)
    };
    let sx: isize = if dx > 0.0 {
        1
    } else if dx < 0.0 {
        -1
    } else {
        0
    };
    let adx = dx.abs();
    if m <= 0.0 || m.is_nan() || (adx == 0.0 && dy == 0.0) {
        return false;
    }
    let (a, b, after, before) = if adx >= dy {
        (adx, dy, (at(sx, 0), at(sx, 1)), (at(-sx, 0), at(-sx, -1)))
    } else {
        (dy, adx, (at(0, 1), at(sx, 1)), (at(0, -1), at(-sx, -1)))
    };
    let fwd = (a - b) * after.0 + b * after.1;
    let back = (a - b) * before.0 + b * before.1;
    let ma = m * a;
    ma > back && ma >= fwd
}

/// The fused taps in `f32`, each set over its power of two: `gx` filters
/// rows (vertically) by `cv` and columns by `dh`, `gy` rows by `dv` and
/// columns by `ch`; `r` is the radius.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Taps {
    pub(crate) r: usize,
    pub(crate) cv: [f32; MAX_TAPS],
    pub(crate) dv: [f32; MAX_TAPS],
    pub(crate) ch: [f32; MAX_TAPS],
    pub(crate) dh: [f32; MAX_TAPS],
}

impl Taps {
    /// The taps of a configuration (`EdgeConfig::gradient_taps`; dividing
    /// an `i16` tap by a power of two is exact in `f32`).
    pub(crate) fn of(cfg: &EdgeConfig) -> Taps {
        let t = cfg.gradient_taps();
        let (hs, vs) = (
            1.0 / (1u32 << t.h_shift) as f32,
            1.0 / (1u32 << t.v_shift) as f32,
        );
        let mut out = Taps {
            r: t.radius(),
            cv: [0.0; MAX_TAPS],
            dv: [0.0; MAX_TAPS],
            ch: [0.0; MAX_TAPS],
            dh: [0.0; MAX_TAPS],
        };
        for (k, (&d, &c)) in t.deriv().iter().zip(t.cross()).enumerate().take(MAX_TAPS) {
            out.cv[k] = c as f32 * vs;
            out.dv[k] = d as f32 * vs;
            out.ch[k] = c as f32 * hs;
            out.dh[k] = d as f32 * hs;
        }
        out
    }
}

/// One gradient row from its `2r + 1` camera rows (`rows[k]` is row
/// `y - r + k`, clamped into the frame by the caller; all slices of the
/// frame's width): the vertical pass into `col_c` (cross taps) and
/// `col_d` (derivative taps) pair by pair around the centre row, then the
/// horizontal pass with clamped columns, then the magnitude by `root`.
/// The operation order is the one `tests` model.
pub(crate) fn gradient_row(t: &Taps, rows: &[&[u8]; MAX_TAPS], out: RowOut<'_>, root: Root) {
    // One body per radius, so the tap loops unroll (the same operations
    // in the same order for every radius).
    match t.r {
        0 => gradient_row_r::<0>(t, rows, out, root),
        1 => gradient_row_r::<1>(t, rows, out, root),
        2 => gradient_row_r::<2>(t, rows, out, root),
        3 => gradient_row_r::<3>(t, rows, out, root),
        _ => gradient_row_r::<4>(t, rows, out, root),
    }
}

/// The buffers of one gradient row, all of the frame's width: the column
/// sums (scratch) and the row's `gx`, `gy` and magnitude.
pub(crate) struct RowOut<'a> {
    pub(crate) col_c: &'a mut [f32],
    pub(crate) col_d: &'a mut [f32],
    pub(crate) gx: &'a mut [f32],
    pub(crate) gy: &'a mut [f32],
    pub(crate) mag: &'a mut [f32],
}

/// [`gradient_row`] for radius `R` (`2R + 1 <= MAX_TAPS`).
#[inline(always)]
fn gradient_row_r<const R: usize>(t: &Taps, rows: &[&[u8]; MAX_TAPS], out: RowOut<'_>, root: Root) {
    let RowOut {
        col_c,
        col_d,
        gx,
        gy,
        mag,
    } = out;
    let w = col_c.len();
    let cc = t.cv[R];
    for ((c, d), &p) in col_c.iter_mut().zip(col_d.iter_mut()).zip(rows[R]) {
        *c = cc * p as f32;
        *d = 0.0;
    }
    for k in 0..R {
        let (c, d) = (t.cv[k], t.dv[2 * R - k]);
        let cols = col_c.iter_mut().zip(col_d.iter_mut());
        for ((cs, ds), (&p, &q)) in cols.zip(rows[k].iter().zip(rows[2 * R - k])) {
            let (p, q) = (p as f32, q as f32);
            *cs += c * (p + q);
            *ds += d * (q - p);
        }
    }
    let (cc, dd) = (&*col_c, &*col_d);
    let (ch, dh) = (&t.ch, &t.dh);
    let one = |wc: &[f32], wd: &[f32], i: &dyn Fn(usize) -> usize| -> (f32, f32) {
        let mut sx = 0.0f32;
        let mut sy = ch[R] * wd[i(R)];
        for k in 0..R {
            let (a, b) = (i(k), i(2 * R - k));
            sx += dh[2 * R - k] * (wc[b] - wc[a]);
            sy += ch[k] * (wd[a] + wd[b]);
        }
        (sx, sy)
    };
    let mut put = |x: usize, (sx, sy): (f32, f32)| {
        gx[x] = sx;
        gy[x] = sy;
        mag[x] = root.of(sx * sx + sy * sy);
    };
    // Border columns (all of them in a frame of at most 2R columns).
    let left = if w <= 2 * R { w } else { R };
    let right = if w <= 2 * R { w..w } else { w - R..w };
    for x in (0..left).chain(right) {
        let at = |k: usize| (x + k).saturating_sub(R).min(w - 1);
        put(x, one(cc, dd, &at));
    }
    if w <= 2 * R {
        return;
    }
    // Interior: the window `x - R ..= x + R` of both column sums.
    for (j, (wc, wd)) in cc.windows(2 * R + 1).zip(dd.windows(2 * R + 1)).enumerate() {
        let mut sx = 0.0f32;
        let mut sy = ch[R] * wd[R];
        for k in 0..R {
            sx += dh[2 * R - k] * (wc[2 * R - k] - wc[k]);
            sy += ch[k] * (wd[k] + wd[2 * R - k]);
        }
        put(j + R, (sx, sy));
    }
}

/// The gradient angle of `(gx, gy)` in 65536 units per half turn, the
/// convention of `fixsight::gradient::angle` (the gradient folded into
/// `y >= 0`, and `y = 0, x < 0` onto `x > 0`), by `micromath`'s `atan2`
/// (maximum error 0.002 rad, its docs).
///
/// ```
/// use fixsight_port_cortex_m4f_float::edges::angle_of;
/// assert_eq!(angle_of(1.0, 0.0), 0);
/// assert!(angle_of(0.0, 5.0).abs_diff(32768) <= 45);
/// assert!(angle_of(-3.0, 3.0).abs_diff(49152) <= 45);
/// assert_eq!(angle_of(-2.0, 0.0), 0);
/// ```
pub fn angle_of(gx: f32, gy: f32) -> u16 {
    let (x, y) = if gy < 0.0 || (gy == 0.0 && gx < 0.0) {
        (-gx, -gy)
    } else {
        (gx, gy)
    };
    let a = F32Ext::atan2(y, x).max(0.0);
    let u = a * (65536.0 / core::f32::consts::PI) + 0.5;
    (u as u32 & 0xffff) as u16
}

/// The edge points of a frame ([`F32EdgeStream::points`]).
#[derive(Debug, Clone)]
pub struct F32EdgePoints<'a> {
    map: &'a [u8],
    width: usize,
    pos: &'a [u32],
    angle: &'a [u16],
    next: usize,
    k: usize,
}

impl Iterator for F32EdgePoints<'_> {
    type Item = F32EdgePoint;

    fn next(&mut self) -> Option<F32EdgePoint> {
        while self.next < self.map.len() {
            let p = self.next;
            self.next += 1;
            if self.map[p] == NONE {
                continue;
            }
            // Candidates are in raster order and every edge point is one.
            while self.k < self.pos.len() && (self.pos[self.k] as usize) < p {
                self.k += 1;
            }
            let angle = match self.pos.get(self.k) {
                Some(&q) if q as usize == p => self.angle.get(self.k).copied(),
                _ => None,
            };
            return Some(F32EdgePoint {
                x: (p % self.width) as u16,
                y: (p / self.width) as u16,
                angle,
            });
        }
        None
    }
}

#[cfg(test)]
mod tests {
    //! The stream against whole-frame `f32` processing: every gradient row
    //! of the frame from [`gradient_row`] at once, then suppression,
    //! histogram, classes, hysteresis and thinning over the whole frame,
    //! written here without the stream's row ring.
    extern crate std;
    use super::*;
    use fixsight::pipeline::{Magnitude, Operator, Smoothing};
    use std::vec;
    use std::vec::Vec;

    fn frame(w: usize, h: usize, seed: u32) -> Vec<u8> {
        let mut s = seed;
        (0..w * h)
            .map(|i| {
                let (x, y) = ((i % w) as i32, (i / w) as i32);
                s = s.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
                let (dx, dy) = (x - w as i32 / 2, y - h as i32 / 2);
                let disc = if dx * dx + dy * dy < (h as i32 / 3).pow(2) {
                    100
                } else {
                    0
                };
                (30 + x + disc + (s >> 28) as i32).clamp(0, 255) as u8
            })
            .collect()
    }

    struct Whole {
        edges: Vec<u8>,
        angles: Vec<(usize, u16)>,
        next: (u16, u16),
    }

    /// The whole frame with thresholds `(low, high)`.
    fn whole(cfg: &F32Config, img: &[u8], w: usize, h: usize, t: (u16, u16)) -> Whole {
        let taps = Taps::of(&cfg.edges);
        let r = taps.r;
        let (mut gx, mut gy, mut m) = (vec![0f32; w * h], vec![0f32; w * h], vec![0f32; w * h]);
        let (mut cc, mut cd) = (vec![0f32; w], vec![0f32; w]);
        for y in 0..h {
            let rows: [&[u8]; MAX_TAPS] = core::array::from_fn(|k| {
                let yy = (y + k).saturating_sub(r).min(h - 1);
                &img[yy * w..(yy + 1) * w]
            });
            let o = y * w..(y + 1) * w;
            let out = RowOut {
                col_c: &mut cc,
                col_d: &mut cd,
                gx: &mut gx[o.clone()],
                gy: &mut gy[o.clone()],
                mag: &mut m[o],
            };
            gradient_row(&taps, &rows, out, cfg.root);
        }
        let mag = |x: isize, y: isize| -> f32 {
            if x < 0 || y < 0 || x >= w as isize || y >= h as isize {
                0.0
            } else {
                m[y as usize * w + x as usize]
            }
        };
        let (shift, permille, ratio) = match cfg.edges.thresholds {
            ThresholdRule::Auto {
                shift,
                high_permille,
                low_ratio_u0f16,
                ..
            } => (shift as u32, high_permille, low_ratio_u0f16),
            ThresholdRule::Fixed { .. } => panic!("auto rule expected"),
        };
        let bins = cfg.edges.bins_needed();
        let mut hist = vec![0u32; bins];
        let mut map = vec![0u8; w * h];
        let mut angles = Vec::new();
        for y in 0..h {
            for x in 0..w {
                let i = y * w + x;
                let v = m[i];
                if v <= 0.0 {
                    continue;
                }
                let (a, b) = (gx[i].abs(), gy[i].abs());
                // Neighbour offsets of the sectors (fixsight::nms).
                let ((bx, by), (ax, ay)) = if b < TAN_22_5 * a {
                    ((-1, 0), (1, 0))
                } else if b > TAN_67_5 * a {
                    ((0, -1), (0, 1))
                } else if (gx[i] > 0.0) == (gy[i] > 0.0) {
                    ((-1, -1), (1, 1))
                } else {
                    ((1, -1), (-1, 1))
                };
                let (xi, yi) = (x as isize, y as isize);
                let keep = if cfg.edges.suppression == Suppression::Interpolated {
                    interpolated_keeps(v, gx[i], gy[i], |dx, dy| mag(xi + dx, yi + dy))
                } else {
                    v > mag(xi + bx, yi + by) && v >= mag(xi + ax, yi + ay)
                };
                if !keep {
                    continue;
                }
                hist[((v as u32 >> shift) as usize).min(bins - 1)] += 1;
                map[i] = if v >= t.1 as f32 {
                    STRONG
                } else if v >= t.0 as f32 {
                    WEAK
                } else {
                    continue;
                };
                angles.push((i, angle_of(gx[i], gy[i])));
            }
        }
        let mut view = ImageViewMut::new(&mut map, w, h, w).unwrap();
        hysteresis::link(&mut view, &mut [0u32; 64]).unwrap();
        let mut scratch = vec![0u8; 3 * w];
        if let Thinning::AtMost(n) = cfg.edges.thinning {
            fixsight::thinning::thin_at_most(&mut view, &mut scratch, n as u32).unwrap();
        }
        let next =
            Thresholds::from_counts(&hist, shift, permille, U0F16::from_bits(ratio)).unwrap();
        Whole {
            edges: map,
            angles,
            next: (next.low(), next.high()),
        }
    }

    type S = F32EdgeStream<48, { 48 * 40 }, 1024, 4096>;

    #[test]
    fn stream_on_two_frames_equals_whole_frame_processing() {
        let configs = [
            F32Config::DEMO,
            F32Config {
                root: Root::Newton,
                ..F32Config::DEMO
            },
            F32Config {
                edges: EdgeConfig::demo_with(
                    Smoothing::Binomial3,
                    Operator::Scharr,
                    Magnitude::L2Round,
                ),
                root: Root::Fast,
            },
            F32Config {
                edges: EdgeConfig {
                    suppression: Suppression::Interpolated,
                    ..fixsight::pipeline::DEMO
                },
                root: Root::Newton,
            },
        ];
        for cfg in configs {
            for (w, h) in [(48, 40), (17, 11), (9, 9), (6, 4)] {
                let mut s: std::boxed::Box<S> = std::boxed::Box::default();
                s.configure(&cfg, w, h).unwrap();
                let (one, two) = (frame(w, h, 1), frame(w, h, 2));
                let first = match cfg.edges.thresholds {
                    ThresholdRule::Auto {
                        first_low,
                        first_high,
                        ..
                    } => (first_low, first_high),
                    ThresholdRule::Fixed { low, high } => (low, high),
                };
                let mut t = first;
                for img in [&one, &two] {
                    for row in img.chunks_exact(w) {
                        s.push_row(row).unwrap();
                    }
                    let rep = s.finish().unwrap();
                    let want = whole(&cfg, img, w, h, t);
                    assert_eq!(rep.thresholds, t, "{w}x{h}");
                    assert_eq!(rep.next_thresholds, want.next, "{w}x{h}");
                    let mut edges = vec![0u8; w * h];
                    for p in s.points() {
                        let i = p.y as usize * w + p.x as usize;
                        edges[i] = 255;
                        let a = want.angles.iter().find(|c| c.0 == i).map(|c| c.1);
                        assert_eq!(p.angle, a, "{w}x{h} ({}, {})", p.x, p.y);
                    }
                    assert_eq!(edges, want.edges, "{w}x{h} {cfg:?}");
                    assert_eq!(rep.candidates as usize, want.angles.len());
                    t = want.next;
                }
                assert_ne!(t, first, "the rule moved the thresholds");
            }
        }
    }
}
