//! Non-maximum suppression of a gradient magnitude along the 4-sector
//! gradient direction (the thinning step of Canny 1986), whole frame or one
//! row at a time.
//!
//! # Integer model (what a port must reproduce)
//!
//! Inputs are a `u16` magnitude `M` (for example
//! [`crate::gradient::magnitude_l2_approx`]) and a `u8` direction sector `D`
//! in `0..=3` from [`crate::gradient::direction_sector`] (x to the right,
//! y down the rows). Each sector names two neighbours along the gradient, a
//! *before* neighbour (earlier in raster order) and an *after* neighbour:
//!
//! | sector | gradient angle | before `(dx, dy)` | after `(dx, dy)` |
//! |---|---|---|---|
//! | 0 | 0 deg | `(-1, 0)` | `(+1, 0)` |
//! | 1 | 45 deg | `(-1, -1)` | `(+1, +1)` |
//! | 2 | 90 deg | `(0, -1)` | `(0, +1)` |
//! | 3 | 135 deg | `(+1, -1)` | `(-1, +1)` |
//!
//! Output pixel `(x, y)`:
//!
//! ```text
//! out = M(x, y)   if M(x, y) > M(before) and M(x, y) >= M(after)
//! out = 0         otherwise
//! ```
//!
//! * **Tie rule**: strictly greater than the before neighbour, greater or
//!   equal to the after neighbour. Of a plateau of equal maxima along the
//!   gradient, exactly the first one in raster order survives; a pixel of
//!   magnitude 0 never survives.
//! * **Border rule**: a neighbour outside the image reads as magnitude 0, so
//!   a border pixel competes only with its inside neighbour.
//! * A sector outside `0..=3` is rejected with [`Error::BadParameter`]
//!   (`direction sector`); rows before the offending one are already written.
//!
//! Comparisons only; no arithmetic, so there is no rounding or overflow.
//!
//! # Memory
//! * whole frame ([`suppress`]): none beyond the input and output images;
//! * streaming ([`NmsStream`]): three magnitude rows and three direction rows,
//!   `9 * width` bytes ([`NmsLines`] holds them in a const-generic struct).
//!
//! Both forms call [`suppress_row`], so they are bit-identical.
//!
//! ```
//! use fixsight::{nms, ImageView, ImageViewMut};
//! // A ridge of magnitude 9 in column 1, gradient along x (sector 0).
//! let mag = [3u16, 9, 4,  3, 9, 4];
//! let dir = [0u8; 6];
//! let mut out = [7u16; 6];
//! nms::suppress(&ImageView::new(&mag, 3, 2, 3)?, &ImageView::new(&dir, 3, 2, 3)?,
//!     &mut ImageViewMut::new(&mut out, 3, 2, 3)?)?;
//! assert_eq!(out, [0, 9, 0,  0, 9, 0]);
//! # Ok::<(), fixsight::Error>(())
//! ```

use crate::error::{Error, Result};
use crate::image::{check_dims, check_same_size, check_single_channel, ImageView, ImageViewMut};
use crate::ops::{tally, tally_per, Op};

/// Neighbour offsets `(before, after)` of each sector, as `(dx, dy)`.
///
/// ```
/// assert_eq!(fixsight::nms::SECTOR_NEIGHBOURS[3], ((1, -1), (-1, 1)));
/// ```
pub const SECTOR_NEIGHBOURS: [((i8, i8), (i8, i8)); 4] = [
    ((-1, 0), (1, 0)),
    ((-1, -1), (1, 1)),
    ((0, -1), (0, 1)),
    ((1, -1), (-1, 1)),
];

/// Magnitude at column `x + dx` of `row`, 0 outside the row or when the row
/// itself is outside the image.
#[inline(always)]
fn at(row: Option<&[u16]>, x: usize, dx: i8) -> u16 {
    match row {
        None => 0,
        Some(r) => {
            let xx = x as isize + dx as isize;
            if xx < 0 {
                0
            } else {
                r.get(xx as usize).copied().unwrap_or(0)
            }
        }
    }
}

/// Suppresses one row (the streaming form). `centre` is the magnitude row
/// being decided (its length is the width), `above` / `below` the rows next
/// to it (`None` outside the image), `dir` its direction sectors; `out`
/// receives the kept magnitudes.
///
/// Errors: `above`, `below`, `dir` or `out` shorter than `centre` ->
/// [`Error::BufferTooShort`]; a sector outside `0..=3` ->
/// [`Error::BadParameter`].
///
/// ```
/// let mut out = [0u16; 3];
/// // Vertical gradient (sector 2): the centre row wins where it beats the
/// // row above and ties or beats the row below.
/// fixsight::nms::suppress_row(Some(&[1, 5, 5]), &[4, 5, 6], Some(&[4, 2, 9]),
///     &[2, 2, 2], &mut out)?;
/// assert_eq!(out, [4, 0, 0]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn suppress_row(
    above: Option<&[u16]>,
    centre: &[u16],
    below: Option<&[u16]>,
    dir: &[u8],
    out: &mut [u16],
) -> Result<()> {
    let w = centre.len();
    for (what, len) in [
        ("row above", above.map_or(w, <[u16]>::len)),
        ("row below", below.map_or(w, <[u16]>::len)),
        ("direction row", dir.len()),
        ("suppression output row", out.len()),
    ] {
        if len < w {
            return Err(Error::BufferTooShort {
                what,
                needed: w,
                got: len,
            });
        }
    }
    let above = above.map(|r| &r[..w]);
    let below = below.map(|r| &r[..w]);
    for x in 0..w {
        let m = centre[x];
        let d = dir[x];
        let (before, after) = match d {
            0 => (at(Some(centre), x, -1), at(Some(centre), x, 1)),
            1 => (at(above, x, -1), at(below, x, 1)),
            2 => (at(above, x, 0), at(below, x, 0)),
            3 => (at(above, x, 1), at(below, x, -1)),
            _ => {
                return Err(Error::BadParameter {
                    name: "direction sector",
                    expected: "0..=3",
                    got: d as i64,
                })
            }
        };
        out[x] = if m > before && m >= after { m } else { 0 };
    }
    // Per pixel: loads m, d and two neighbours; a 4-way dispatch on the
    // sector (one table look-up of the neighbour offsets); two compares;
    // a select; one store; the loop branch.
    let n = w;
    tally_per(Op::Load, 4, n);
    tally_per(Op::Table, 1, n);
    tally_per(Op::Logic, 3, n);
    tally_per(Op::Store, 1, n);
    tally_per(Op::Branch, 2, n);
    Ok(())
}

/// Whole-frame non-maximum suppression.
///
/// Errors: `mag`, `dir` and `out` must be single-channel and of one size
/// ([`Error::SizeMismatch`], [`Error::UnsupportedChannels`]); a sector
/// outside `0..=3` -> [`Error::BadParameter`].
///
/// ```
/// use fixsight::{nms, ImageView, ImageViewMut};
/// // Diagonal gradient (sector 1): the centre beats (0,0) and ties (2,2),
/// // so it survives and (2,2) does not; (0,0) loses to the centre.
/// let mag = [1u16, 0, 0,  0, 5, 0,  0, 0, 5];
/// let dir = [1u8; 9];
/// let mut out = [0u16; 9];
/// nms::suppress(&ImageView::new(&mag, 3, 3, 3)?, &ImageView::new(&dir, 3, 3, 3)?,
///     &mut ImageViewMut::new(&mut out, 3, 3, 3)?)?;
/// assert_eq!(out, [0, 0, 0,  0, 5, 0,  0, 0, 0]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn suppress(
    mag: &ImageView<'_, u16>,
    dir: &ImageView<'_, u8>,
    out: &mut ImageViewMut<'_, u16>,
) -> Result<()> {
    check_single_channel(mag)?;
    check_single_channel(dir)?;
    check_single_channel(&out.as_view())?;
    if mag.width() != dir.width() || mag.height() != dir.height() {
        return Err(Error::SizeMismatch {
            what: "direction vs magnitude",
            expected: (mag.width(), mag.height()),
            got: (dir.width(), dir.height()),
        });
    }
    check_same_size("suppression output vs magnitude", mag, out)?;
    let h = mag.height();
    for y in 0..h {
        let above = if y > 0 { Some(mag.row_at(y - 1)) } else { None };
        let below = if y + 1 < h {
            Some(mag.row_at(y + 1))
        } else {
            None
        };
        suppress_row(
            above,
            mag.row_at(y),
            below,
            dir.row_at(y),
            out.row_at_mut(y),
        )?;
        tally(Op::Branch, 1);
    }
    Ok(())
}

/// Row-streaming non-maximum suppression over caller memory: push magnitude
/// and direction rows top to bottom; output row `y` comes out when row
/// `y + 1` is pushed (the last row on [`NmsStream::flush_row`]).
///
/// ```
/// use fixsight::nms::NmsLines;
/// let mut lines = NmsLines::<3>::new();
/// let mut s = lines.stream(2)?;
/// let mut out = [0u16; 3];
/// assert_eq!(s.push_row(&[1, 8, 2], &[0, 0, 0], &mut out)?, None);
/// assert_eq!(s.push_row(&[1, 1, 1], &[0, 0, 0], &mut out)?, Some(0));
/// assert_eq!(out, [0, 8, 0]);
/// assert_eq!(s.flush_row(&mut out)?, Some(1));
/// assert_eq!(out, [1, 0, 0]); // plateau of 1s: only its first pixel survives
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug)]
pub struct NmsStream<'b> {
    width: usize,
    height: usize,
    mag: &'b mut [u16],
    dir: &'b mut [u8],
    pushed: usize,
    emitted: usize,
}

/// Rows held by a stream ring.
const RING: usize = 3;

impl<'b> NmsStream<'b> {
    /// Starts a stream: `mag` needs `3 * width` elements, `dir` `3 * width`.
    ///
    /// Errors: zero or too large size -> [`Error::ZeroSize`] /
    /// [`Error::TooLarge`]; short buffers -> [`Error::BufferTooShort`].
    ///
    /// ```
    /// let (mut m, mut d) = ([0u16; 30], [0u8; 30]);
    /// assert!(fixsight::nms::NmsStream::new(10, 5, &mut m, &mut d).is_ok());
    /// assert!(fixsight::nms::NmsStream::new(11, 5, &mut m, &mut d).is_err());
    /// ```
    pub fn new(width: usize, height: usize, mag: &'b mut [u16], dir: &'b mut [u8]) -> Result<Self> {
        check_dims(width, height)?;
        let needed = RING * width;
        if mag.len() < needed {
            return Err(Error::BufferTooShort {
                what: "suppression magnitude ring",
                needed,
                got: mag.len(),
            });
        }
        if dir.len() < needed {
            return Err(Error::BufferTooShort {
                what: "suppression direction ring",
                needed,
                got: dir.len(),
            });
        }
        Ok(Self {
            width,
            height,
            mag,
            dir,
            pushed: 0,
            emitted: 0,
        })
    }

    /// Rows pushed so far.
    ///
    /// ```
    /// let mut l = fixsight::nms::NmsLines::<4>::new();
    /// assert_eq!(l.stream(3)?.rows_pushed(), 0);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn rows_pushed(&self) -> usize {
        self.pushed
    }

    /// Pushes the next magnitude row and its direction row (`width`
    /// elements of each are read); when an output row is complete, writes it
    /// to `out` and returns its index.
    ///
    /// Errors: more than `height` rows -> [`Error::StreamOrder`]; short rows
    /// -> [`Error::BufferTooShort`]; a sector outside `0..=3` anywhere in
    /// the first `width` elements of `dir` -> [`Error::BadParameter`]. Every
    /// check runs before the row is stored: after an error the stream is
    /// unchanged, and pushing a good row next continues the frame.
    ///
    /// ```
    /// let mut l = fixsight::nms::NmsLines::<2>::new();
    /// let mut s = l.stream(1)?;
    /// let mut out = [0u16; 2];
    /// assert_eq!(s.push_row(&[3, 2], &[0, 0], &mut out)?, Some(0));
    /// assert_eq!(out, [3, 0]);
    /// assert!(s.push_row(&[3, 2], &[0, 0], &mut out).is_err());
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn push_row(&mut self, mag: &[u16], dir: &[u8], out: &mut [u16]) -> Result<Option<usize>> {
        if self.pushed >= self.height {
            return Err(Error::StreamOrder {
                reason: "more rows pushed than the height declared at construction",
            });
        }
        let w = self.width;
        for (what, len) in [
            ("pushed magnitude row", mag.len()),
            ("pushed direction row", dir.len()),
            ("suppression output row", out.len()),
        ] {
            if len < w {
                return Err(Error::BufferTooShort {
                    what,
                    needed: w,
                    got: len,
                });
            }
        }
        // Validate the whole row before anything is stored: a rejected push
        // leaves the stream exactly as it was.
        if let Some(&bad) = dir[..w].iter().find(|&&d| d > 3) {
            return Err(Error::BadParameter {
                name: "direction sector",
                expected: "0..=3",
                got: bad as i64,
            });
        }
        let slot = (self.pushed % RING) * w;
        self.mag[slot..slot + w].copy_from_slice(&mag[..w]);
        self.dir[slot..slot + w].copy_from_slice(&dir[..w]);
        tally_per(Op::Load, 2, w);
        tally_per(Op::Store, 2, w);
        self.pushed += 1;
        if self.pushed >= (self.emitted + 2).min(self.height) {
            self.emit(out).map(Some)
        } else {
            Ok(None)
        }
    }

    /// After all rows are pushed, writes the last pending output row and
    /// returns its index; `None` when every row is out.
    ///
    /// Errors: called before the last row was pushed -> [`Error::StreamOrder`].
    ///
    /// ```
    /// let mut l = fixsight::nms::NmsLines::<2>::new();
    /// let mut s = l.stream(2)?;
    /// assert!(s.flush_row(&mut [0u16; 2]).is_err());
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn flush_row(&mut self, out: &mut [u16]) -> Result<Option<usize>> {
        if self.pushed < self.height {
            return Err(Error::StreamOrder {
                reason: "flush before all declared rows were pushed",
            });
        }
        if self.emitted >= self.height {
            return Ok(None);
        }
        if out.len() < self.width {
            return Err(Error::BufferTooShort {
                what: "suppression output row",
                needed: self.width,
                got: out.len(),
            });
        }
        self.emit(out).map(Some)
    }

    fn emit(&mut self, out: &mut [u16]) -> Result<usize> {
        let y = self.emitted;
        let w = self.width;
        let row = |yy: usize| (yy % RING) * w;
        let mag: &[u16] = self.mag;
        let above = if y > 0 {
            Some(&mag[row(y - 1)..row(y - 1) + w])
        } else {
            None
        };
        let below = if y + 1 < self.height {
            Some(&mag[row(y + 1)..row(y + 1) + w])
        } else {
            None
        };
        suppress_row(
            above,
            &mag[row(y)..row(y) + w],
            below,
            &self.dir[row(y)..row(y) + w],
            &mut out[..w],
        )?;
        self.emitted += 1;
        Ok(y)
    }
}

/// Ring buffers for an [`NmsStream`] of width `WIDTH`, sized at compile
/// time: `3 * WIDTH` magnitudes and `3 * WIDTH` sectors, `9 * WIDTH` bytes.
///
/// ```
/// let mut lines = fixsight::nms::NmsLines::<640>::new(); // 5760 bytes
/// assert!(lines.stream(480).is_ok());
/// ```
#[derive(Debug, Clone)]
pub struct NmsLines<const WIDTH: usize> {
    mag: [[u16; WIDTH]; RING],
    dir: [[u8; WIDTH]; RING],
}

impl<const WIDTH: usize> Default for NmsLines<WIDTH> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const WIDTH: usize> NmsLines<WIDTH> {
    /// Zeroed buffers.
    ///
    /// ```
    /// let _l = fixsight::nms::NmsLines::<16>::new();
    /// ```
    pub const fn new() -> Self {
        Self {
            mag: [[0; WIDTH]; RING],
            dir: [[0; WIDTH]; RING],
        }
    }

    /// Starts a stream of width `WIDTH` and the given height.
    ///
    /// ```
    /// let mut l = fixsight::nms::NmsLines::<8>::new();
    /// assert!(l.stream(0).is_err());
    /// ```
    pub fn stream(&mut self, height: usize) -> Result<NmsStream<'_>> {
        NmsStream::new(
            WIDTH,
            height,
            self.mag.as_flattened_mut(),
            self.dir.as_flattened_mut(),
        )
    }
}

/// Magnitude at `(x + dx, y + dy)` of `mag`, 0 outside the image.
#[inline(always)]
fn sample(mag: &ImageView<'_, u16>, x: usize, y: usize, dx: i32, dy: i32) -> u32 {
    let (xx, yy) = (x as i64 + dx as i64, y as i64 + dy as i64);
    if xx < 0 || yy < 0 || xx >= mag.width() as i64 || yy >= mag.height() as i64 {
        0
    } else {
        mag.row_at(yy as usize)[xx as usize] as u32
    }
}

/// The rule of [`suppress_interpolated`] for one pixel: `true` when the
/// centre of the 3 x 3 magnitudes `n` (`n[1 + dy][1 + dx]` the magnitude
/// at `(x + dx, y + dy)`, 0 outside the image) survives along the gradient
/// `g = [gx, gy]` of the centre. Steps 1 to 4 of the integer model of
/// [`suppress_interpolated`], exactly; the streamed edge stage
/// ([`crate::pipeline::Suppression::Interpolated`]) calls it too, so the
/// two agree bit for bit.
///
/// ```
/// // A ridge of 9 along a 30-degree slope (the example of
/// // `suppress_interpolated`): 9 * 2 < 1 * 8 + 1 * 12, suppressed.
/// let n = [[0, 0, 0], [0, 9, 8], [0, 0, 12]];
/// assert!(!fixsight::nms::interpolated_keeps(&n, [2, 1]));
/// // A vertical ridge (gradient along x): 9 beats 3 and 4.
/// assert!(fixsight::nms::interpolated_keeps(&[[0; 3], [3, 9, 4], [0; 3]], [5, 0]));
/// ```
#[inline(always)]
pub fn interpolated_keeps(n: &[[u16; 3]; 3], g: [i16; 2]) -> bool {
    interpolated_rule(n[1][1] as u32, g, |dx, dy| {
        n[(1 + dy) as usize][(1 + dx) as usize] as u32
    })
}

/// Steps 1 to 4 of the integer model of [`suppress_interpolated`] for a
/// pixel of magnitude `m` and gradient `g`; `at(dx, dy)` is the magnitude
/// at `(x + dx, y + dy)` (`dx, dy` in `-1..=1`, 0 outside the image), read
/// only for the four neighbours the rule needs.
#[inline(always)]
fn interpolated_rule(m: u32, g: [i16; 2], at: impl Fn(i32, i32) -> u32) -> bool {
    let (mut dx, mut dy) = (g[0] as i32, g[1] as i32);
    if dy < 0 || (dy == 0 && dx < 0) {
        dx = -dx;
        dy = -dy;
    }
    let s = dx.signum();
    let adx = dx.unsigned_abs();
    let ady = dy as u32;
    if m == 0 || (adx == 0 && ady == 0) {
        return false;
    }
    let (a, b, after, before) = if adx >= ady {
        (adx, ady, (at(s, 0), at(s, 1)), (at(-s, 0), at(-s, -1)))
    } else {
        (ady, adx, (at(0, 1), at(s, 1)), (at(0, -1), at(-s, -1)))
    };
    let fwd = (a - b) * after.0 + b * after.1;
    let back = (a - b) * before.0 + b * before.1;
    let ma = m * a;
    ma > back && ma >= fwd
}

/// Whole-frame non-maximum suppression along the exact gradient direction
/// with linear interpolation between the two neighbours the gradient ray
/// passes between (the form Canny 1986 describes; the 4-sector
/// [`suppress`] is the cheaper approximation). Inputs are the magnitude
/// `mag` and the gradients `gx`, `gy` it was computed from (x to the right,
/// y down the rows), all of one size.
///
/// # Integer model (what a port must reproduce)
///
/// For pixel `(x, y)` with `m = mag(x, y)`, `M(u, v)` the magnitude at
/// `(u, v)` (0 outside the image), and the gradient widened to `i32`:
///
/// 1. `m = 0`, or `gx = gy = 0`: the output is 0.
/// 2. Orient the gradient downwards: `(dx, dy) = (gx, gy)`, negated when
///    `gy < 0`, or when `gy = 0` and `gx < 0`; so `dy >= 0`, and `dx > 0`
///    when `dy = 0`. `s = sign(dx)` (-1, 0 or 1).
/// 3. Major axis: with `a = max(|dx|, dy)` and `b = min(|dx|, dy)` (so
///    `0 <= b <= a`, `a > 0`), the ray `p + (dx, dy) / a` crosses the square
///    of the 8 neighbours between an axis neighbour and a diagonal one:
///    * `|dx| >= dy`: *after* `A = (a - b) M(x+s, y) + b M(x+s, y+1)`,
///      *before* `B = (a - b) M(x-s, y) + b M(x-s, y-1)`;
///    * `|dx| < dy`: *after* `A = (a - b) M(x, y+1) + b M(x+s, y+1)`,
///      *before* `B = (a - b) M(x, y-1) + b M(x-s, y-1)`.
///
///    `A / a` and `B / a` are the linearly interpolated magnitudes on the
///    ray one step forwards and backwards.
/// 4. `out = m` if `m a > B` and `m a >= A`, else 0.
///
/// **No rounding**: the interpolation is never divided out; both sides of
/// each comparison are scaled by `a`, and every product and sum is exact in
/// `u32` (`a <= 32768`, magnitudes `<= 65535`, so each side is
/// `<= 65535 * 32768 < 2^31`). **Tie rule**: as [`suppress`], strictly
/// above the *before* side (the side of negative y, or of negative x for a
/// horizontal gradient) and not below the *after* side, so of two equal
/// maxima along the gradient the first in raster order survives.
/// **Border rule**: neighbours outside the image read 0.
///
/// Errors: `mag`, `gx`, `gy` and `out` must be single-channel
/// ([`Error::UnsupportedChannels`]) and of one size ([`Error::SizeMismatch`]).
///
/// ```
/// use fixsight::{nms, ImageView, ImageViewMut};
/// // A ridge of 9 along a 30-degree slope: gradient (2, 1) points to
/// // (x+1, y) and (x+1, y+1) with weights 1/2 each.
/// let mag = [0u16, 0, 0,  0, 9, 8,  0, 0, 12];
/// let (gx, gy) = ([2i16; 9], [1i16; 9]);
/// let mut out = [0u16; 9];
/// nms::suppress_interpolated(&ImageView::new(&mag, 3, 3, 3)?, &ImageView::new(&gx, 3, 3, 3)?,
///     &ImageView::new(&gy, 3, 3, 3)?, &mut ImageViewMut::new(&mut out, 3, 3, 3)?)?;
/// // Centre: 9 * 2 = 18 >= 1 * 8 + 1 * 12 = 20? no -> suppressed.
/// assert_eq!(out[4], 0);
/// // (2, 2): before side (1, 2) and (1, 1): 12 * 2 = 24 > 1 * 0 + 1 * 9.
/// assert_eq!(out[8], 12);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn suppress_interpolated(
    mag: &ImageView<'_, u16>,
    gx: &ImageView<'_, i16>,
    gy: &ImageView<'_, i16>,
    out: &mut ImageViewMut<'_, u16>,
) -> Result<()> {
    check_single_channel(mag)?;
    check_single_channel(gx)?;
    check_single_channel(gy)?;
    check_single_channel(&out.as_view())?;
    for (what, v) in [
        ("gradient x vs magnitude", gx),
        ("gradient y vs magnitude", gy),
    ] {
        if v.width() != mag.width() || v.height() != mag.height() {
            return Err(Error::SizeMismatch {
                what,
                expected: (mag.width(), mag.height()),
                got: (v.width(), v.height()),
            });
        }
    }
    check_same_size("suppression output vs magnitude", mag, out)?;
    let (w, h) = (mag.width(), mag.height());
    for y in 0..h {
        let (rm, rx, ry) = (mag.row_at(y), gx.row_at(y), gy.row_at(y));
        let orow = out.row_at_mut(y);
        for x in 0..w {
            let keep = interpolated_rule(rm[x] as u32, [rx[x], ry[x]], |dx, dy| {
                sample(mag, x, y, dx, dy)
            });
            orow[x] = if keep { rm[x] } else { 0 };
        }
        // Per pixel: loads m, gx, gy and four neighbours; orientation
        // (compare, two negations, sign, two abs); major-axis compare and
        // select; five multiplies (two per side, m a); two subtractions and
        // two additions; two compares; one store; branches for the
        // zero test, orientation, axis and loop.
        tally_per(Op::Load, 7, w);
        tally_per(Op::Logic, 8, w);
        tally_per(Op::Mul, 5, w);
        tally_per(Op::AddSub, 6, w);
        tally_per(Op::Store, 1, w);
        tally_per(Op::Branch, 4, w);
        tally(Op::Branch, 1);
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn frame(mag: &[u16], dir: &[u8], w: usize, h: usize) -> heapless::Vec<u16, 256> {
        let mut out = [0u16; 256];
        suppress(
            &ImageView::new(mag, w, h, w).unwrap(),
            &ImageView::new(dir, w, h, w).unwrap(),
            &mut ImageViewMut::new(&mut out[..w * h], w, h, w).unwrap(),
        )
        .unwrap();
        heapless::Vec::from_slice(&out[..w * h]).unwrap()
    }

    #[test]
    fn every_sector_uses_its_own_neighbours() {
        // 3x3 with the centre 5 and one neighbour raised to 6 at each
        // position: the centre survives unless that neighbour lies on its
        // sector's line.
        for d in 0..4u8 {
            let ((bx, by), (ax, ay)) = SECTOR_NEIGHBOURS[d as usize];
            for ny in 0..3i8 {
                for nx in 0..3i8 {
                    if (nx, ny) == (1, 1) {
                        continue;
                    }
                    let mut mag = [1u16; 9];
                    mag[4] = 5;
                    mag[(ny * 3 + nx) as usize] = 6;
                    let out = frame(&mag, &[d; 9], 3, 3);
                    let on_line = (nx - 1, ny - 1) == (bx, by) || (nx - 1, ny - 1) == (ax, ay);
                    assert_eq!(out[4] == 0, on_line, "sector {d} neighbour ({nx},{ny})");
                }
            }
        }
    }

    #[test]
    fn plateau_keeps_the_first_pixel_in_raster_order() {
        let out = frame(&[0, 7, 7, 0], &[0; 4], 4, 1);
        assert_eq!(&out[..], &[0, 7, 0, 0]);
        let out = frame(&[0, 7, 7, 0], &[2; 4], 1, 4);
        assert_eq!(&out[..], &[0, 7, 0, 0]);
    }

    #[test]
    fn bad_inputs_are_typed_errors() {
        let m = [1u16; 4];
        let mut o = [0u16; 4];
        assert!(matches!(
            suppress_row(None, &m, None, &[0, 0, 9, 0], &mut o),
            Err(Error::BadParameter { got: 9, .. })
        ));
        assert!(matches!(
            suppress_row(Some(&m[..2]), &m, None, &[0; 4], &mut o),
            Err(Error::BufferTooShort {
                needed: 4,
                got: 2,
                ..
            })
        ));
        let d = [0u8; 6];
        assert!(matches!(
            suppress(
                &ImageView::new(&m, 2, 2, 2).unwrap(),
                &ImageView::new(&d, 3, 2, 3).unwrap(),
                &mut ImageViewMut::new(&mut o, 2, 2, 2).unwrap()
            ),
            Err(Error::SizeMismatch { .. })
        ));
        let (mut rm, mut rd) = ([0u16; 6], [0u8; 5]);
        assert!(matches!(
            NmsStream::new(2, 2, &mut rm, &mut rd),
            Err(Error::BufferTooShort {
                needed: 6,
                got: 5,
                ..
            })
        ));
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]

        #[test]
        fn stream_equals_frame_and_keeps_only_local_maxima(
            w in 1usize..12, h in 1usize..12, seed in any::<u64>()
        ) {
            let mut mag = [0u16; 144];
            let mut dir = [0u8; 144];
            let mut s = seed;
            for i in 0..w * h {
                s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
                mag[i] = ((s >> 33) % 6) as u16; // small range: many ties
                dir[i] = ((s >> 50) % 4) as u8;
            }
            let want = frame(&mag[..w * h], &dir[..w * h], w, h);
            let (mut rm, mut rd) = ([0u16; 36], [0u8; 36]);
            let mut st = NmsStream::new(w, h, &mut rm, &mut rd).unwrap();
            let mut got = [0u16; 144];
            let mut row = [0u16; 12];
            for y in 0..h {
                if let Some(oy) = st.push_row(&mag[y * w..y * w + w], &dir[y * w..y * w + w], &mut row).unwrap() {
                    got[oy * w..oy * w + w].copy_from_slice(&row[..w]);
                }
            }
            while let Some(oy) = st.flush_row(&mut row).unwrap() {
                got[oy * w..oy * w + w].copy_from_slice(&row[..w]);
            }
            prop_assert_eq!(&got[..w * h], &want[..]);
            // Kept pixels carry their magnitude; along the sector line no two
            // neighbours are both kept (the tie rule breaks every plateau).
            for y in 0..h {
                for x in 0..w {
                    let o = want[y * w + x];
                    prop_assert!(o == 0 || o == mag[y * w + x]);
                    let (_, (ax, ay)) = SECTOR_NEIGHBOURS[dir[y * w + x] as usize];
                    let (xx, yy) = (x as i32 + ax as i32, y as i32 + ay as i32);
                    if o > 0 && xx >= 0 && yy >= 0 && (xx as usize) < w && (yy as usize) < h {
                        let j = yy as usize * w + xx as usize;
                        if dir[j] == dir[y * w + x] {
                            prop_assert_eq!(want[j], 0);
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn interpolated_follows_the_documented_model_on_hand_cases() {
        let run = |mag: &[u16], gx: &[i16], gy: &[i16], w: usize, h: usize| {
            let mut out = [0u16; 64];
            suppress_interpolated(
                &ImageView::new(mag, w, h, w).unwrap(),
                &ImageView::new(gx, w, h, w).unwrap(),
                &ImageView::new(gy, w, h, w).unwrap(),
                &mut ImageViewMut::new(&mut out[..w * h], w, h, w).unwrap(),
            )
            .unwrap();
            heapless::Vec::<u16, 64>::from_slice(&out[..w * h]).unwrap()
        };
        // Horizontal gradient, plateau of two equal maxima: the first in
        // raster order survives, whichever way the gradient points.
        let mag = [1u16, 7, 7, 1];
        for g in [3i16, -3] {
            assert_eq!(&run(&mag, &[g; 4], &[0; 4], 4, 1)[..], &[0, 7, 0, 0]);
        }
        // Vertical gradient pointing up is oriented down: same result.
        let mag = [1u16, 7, 7, 1];
        for g in [5i16, -5] {
            assert_eq!(&run(&mag, &[0; 4], &[g; 4], 1, 4)[..], &[0, 7, 0, 0]);
        }
        // Zero gradient or zero magnitude: suppressed.
        assert_eq!(&run(&[5], &[0], &[0], 1, 1)[..], &[0]);
        assert_eq!(&run(&[0], &[1], &[0], 1, 1)[..], &[0]);
        // Diagonal gradient (1, 1): only the diagonal neighbours count.
        let mag = [9u16, 9, 0, 9, 5, 9, 0, 9, 4];
        assert_eq!(run(&mag, &[1; 9], &[1; 9], 3, 3)[4], 0);
        let mag = [4u16, 9, 0, 9, 5, 9, 0, 9, 4];
        assert_eq!(run(&mag, &[1; 9], &[1; 9], 3, 3)[4], 5);
    }

    #[test]
    fn interpolated_rejects_mismatched_sizes() {
        let (m, g) = ([1u16; 6], [1i16; 6]);
        let mut o = [0u16; 6];
        let e = suppress_interpolated(
            &ImageView::new(&m, 3, 2, 3).unwrap(),
            &ImageView::new(&g, 2, 3, 2).unwrap(),
            &ImageView::new(&g, 3, 2, 3).unwrap(),
            &mut ImageViewMut::new(&mut o, 3, 2, 3).unwrap(),
        );
        assert!(matches!(e, Err(Error::SizeMismatch { .. })));
    }
}
