//! Geometric warp (lens undistortion): bilinear sampling at fixed-point
//! source coordinates, driven by a pixel map (one coordinate pair per
//! output pixel, [`PixelMap`]) or by a control grid (control points every
//! `2^k` output pixels, [`ControlGrid`]), for grey or interleaved
//! multi-channel `u8` images, one strip of output rows at a time.
//!
//! Kernel ids (golden vectors, `report.json`, on-target figures):
//! `warp.pixel_map` and `warp.control_grid`.
//!
//! # Coordinates
//!
//! A source coordinate is a signed raw integer with `F` fractional bits
//! (`F` = [`WarpGeometry::frac_bits`], `2..=10`): raw `r` means `r / 2^F`
//! pixels. Pixel centres sit at integer coordinates, so raw `(0, 0)` is the
//! centre of the top-left source pixel and raw `((W-1) * 2^F, 0)` the centre
//! of the top-right one.
//!
//! Every coordinate a map or grid holds must lie in the **accepted range**
//! `-W * 2^F ..= (2W - 1) * 2^F` for x and `-H * 2^F ..= (2H - 1) * 2^F` for y
//! (`W x H` the source size): one source image beyond each edge. This is
//! checked when a map or grid is built ([`Error::MapOutOfRange`]); with
//! `W, H <= 32767` and `F <= 10` every raw value fits 27 bits.
//!
//! # Sampling integer model (what a port must reproduce)
//!
//! For a raw coordinate `(sx, sy)`:
//!
//! ```text
//! x0 = sx >> F            (arithmetic shift: floor)      fx = sx & (2^F - 1)
//! y0 = sy >> F                                           fy = sy & (2^F - 1)
//! wx0 = 2^F - fx, wx1 = fx, wy0 = 2^F - fy, wy1 = fy     (the quantised weights)
//! acc = wy0 * (wx0 * P(x0, y0)   + wx1 * P(x0+1, y0))
//!     + wy1 * (wx0 * P(x0, y0+1) + wx1 * P(x0+1, y0+1))    (exact, i32)
//! out = sat_u8((acc + 2^(2F-1)) >> 2F)                    (round half up)
//! ```
//!
//! computed per channel with the same weights. `acc <= 255 * 2^(2F) < 2^28`,
//! so nothing overflows, and `acc / 2^(2F)` is exactly the bilinear
//! interpolant at the quantised coordinate; the output is that value rounded
//! half up ([`crate::arith::round_shift`]) and saturated ([`crate::arith::sat_u8`],
//! which never triggers because the interpolant is a convex combination).
//!
//! `P(x, y)` is the source pixel inside the image and follows the
//! [`Border`] rule outside it: [`Border::Clamp`] clamps `x` to `0..=W-1`
//! and `y` to `0..=H-1`; [`Border::Fill(c)`](Border::Fill) gives `c`.
//! All four taps use the rule, even taps whose weight is zero (which then
//! contribute nothing). No coordinate, however far outside, reads outside
//! the source buffer.
//!
//! ## Error against the exact bilinear value
//!
//! Against the `f64` bilinear interpolant at the quantised coordinate the
//! output is off by at most 0.5 LSB (the final rounding). If the map was
//! quantised from exact coordinates by rounding to nearest, each coordinate
//! moves by at most `2^-(F+1)` px, and the bilinear interpolant changes by at
//! most `Dx * |dx| + Dy * |dy|`, where `Dx` (`Dy`) is the largest absolute
//! difference between horizontally (vertically) adjacent samples of the
//! border-extended source. Hence, against the exact-coordinate `f64`
//! reference,
//!
//! ```text
//! |out - ref| <= 0.5 + (Dx + Dy) * 2^-(F+1)   <=   0.5 + 255 * 2^-F   LSB
//! ```
//!
//! ## Fractional bits: the default `F = 5`
//!
//! The host tool's defaults (`fixsight-verify grid --frac-bits`, the
//! report's checks, the on-target bench) use `F = 5`. The value follows the
//! project's own precision sweep (`fixsight-verify sweep`: demo scene
//! `aisle-straight`, 320 x 240, fit-to-view undistortion, fill value 0,
//! errors against the `f64` bilinear value at the exact lens coordinates):
//! `F = 5` is the smallest `F` at which both the pixel map and a control
//! grid with points every 4 pixels keep at least 99.9 % of pixels within
//! 1 LSB (0.99961 and 0.99931; at `F = 4`, 0.99819 and 0.99702). The pixel
//! map's RMS error is then 0.294 LSB against 0.287 LSB at `F = 10`, where
//! only the final rounding remains, and each further bit gains less than
//! 0.005 LSB RMS. Coarser grids are limited by their geometric error, not
//! by `F`. The sweep runs on one synthetic scene; the value is to be
//! checked again on natural images.
//!
//! # Pixel map
//!
//! [`PixelMap`]: one `(x, y)` raw pair per output pixel, row-major, as
//! interleaved `i32` (`coords[2 * (y * out_width + x)]` is x). Output pixel
//! `(x, y)` samples at exactly that pair.
//!
//! # Control-grid integer model
//!
//! [`ControlGrid`]: control points every `S = 2^k` output pixels (`k` =
//! `grid_log2`, `2..=6`) on a grid of `cols x rows` points, where
//! `cols = max(2, ceil((out_width - 1) / S) + 1)` and likewise `rows` with
//! the height: point `(i, j)` belongs to output position `(i * S, j * S)` and
//! holds a raw `(x, y)` pair (stored row-major, interleaved `i32`). Points past
//! the output edge exist so that the last cell is complete.
//!
//! Output pixel `(x, y)` lies in cell `i = min(x >> k, cols - 2)`,
//! `j = min(y >> k, rows - 2)` at offsets `u = x - i*S`, `v = y - j*S`
//! (`0..=S`; `S` only on the last column / row of points). With `C00, C10,
//! C01, C11` the raw values of one axis at points `(i, j)`, `(i+1, j)`,
//! `(i, j+1)`, `(i+1, j+1)`, the sampled coordinate on that axis is
//!
//! ```text
//! c = C00 + ((u*(S-v)*(C10-C00) + (S-u)*v*(C01-C00) + u*v*(C11-C00) + 2^(2k-1)) >> 2k)
//! ```
//!
//! which equals `floor(B + 1/2)`, `B` the exact bilinear interpolation of the
//! four control points: **the grid coordinate is the exact bilinear grid
//! value rounded half up to `F` fractional bits**. The sample is then the
//! sampling model above fed with `(c_x, c_y)`, so the grid path is bit-exact
//! to the pixel-map path given the grid-interpolated coordinates.
//!
//! The kernel evaluates the same quantity incrementally. Per output row and
//! cell: `L = v*(C01-C00)`, `R = ((C10-C00) << k) + v*(C11-C10)`,
//! `D = R - L`, `A = (L << k) + 2^(2k-1)`; then per pixel `c = C00 + (A >> 2k)`
//! and `A += D` — two additions and a shift per axis, no multiply (the two
//! multiplies per axis happen once per cell and row). Since
//! `A(u) = S*L + u*D = (S-u)*L + u*R + 2^(2k-1)`, this is identical to the
//! formula above. Construction proves that `A` fits `i32` for every cell:
//! `S*(2S+1)*(|C10-C00| + |C11-C10| + |C01-C00|) + 2^(2k-1) <= i32::MAX` per
//! axis, otherwise [`Error::GridCellOverflow`].
//!
//! Every grid coordinate is a rounded convex combination of its cell's
//! control points, so it lies in the accepted range whenever they do.
//!
//! # Blob format (version 1)
//!
//! A grid travels as a binary blob, all integers little-endian:
//!
//! | offset | size | field |
//! |---|---|---|
//! | 0 | 4 | magic `b"FSMT"` |
//! | 4 | 2 | format version = 1 |
//! | 6 | 2 | header length = 32 |
//! | 8 | 2 | output width |
//! | 10 | 2 | output height |
//! | 12 | 2 | source width |
//! | 14 | 2 | source height |
//! | 16 | 1 | step log2 `k` |
//! | 17 | 1 | fractional bits `F` |
//! | 18 | 2 | grid columns |
//! | 20 | 2 | grid rows |
//! | 22 | 2 | flags, must be 0 |
//! | 24 | 4 | payload length = `cols * rows * 8` |
//! | 28 | 4 | CRC-32 of bytes `0..28` followed by the payload |
//! | 32 | payload | `cols * rows` pairs of `i32` `(x, y)`, row-major |
//!
//! The CRC is CRC-32/ISO-HDLC (reflected polynomial `0xEDB88320`, initial
//! value and final XOR `0xFFFFFFFF`; check value of `"123456789"` is
//! `0xCBF43926`). [`ControlGrid::from_blob`] checks, in order: length at least
//! 32, magic, version, header length, total length equal to `32 + payload`,
//! CRC, then every field and control point as [`ControlGrid::new`] does. The
//! parsed table borrows the blob; nothing is copied.
//!
//! # Memory and strips
//!
//! No scratch memory. [`PixelMap::warp_rows`] and [`ControlGrid::warp_rows`]
//! write a strip of consecutive output rows starting at `first_row` into a
//! view whose height is the strip height, so a frame can be produced a part
//! at a time; strips are bit-identical to the same rows of a whole frame.
//!
//! ```
//! use fixsight::filter::Border;
//! use fixsight::warp::{ControlGrid, WarpGeometry};
//! use fixsight::{ImageView, ImageViewMut};
//! // A 4x4 identity grid (step 4, 2 fractional bits) over a 4x4 image.
//! let g = WarpGeometry::new(4, 4, 4, 4, 2)?;
//! let s = 4 * 4; // raw value of 4 px
//! let pts = [0, 0, s, 0, 0, s, s, s];
//! let grid = ControlGrid::new(&pts, g, 2)?;
//! let src: [u8; 16] = core::array::from_fn(|i| 10 * i as u8);
//! let mut out = [0u8; 16];
//! grid.warp_rows(&ImageView::new(&src, 4, 4, 4)?, &mut ImageViewMut::new(&mut out, 4, 4, 4)?,
//!                 0, Border::Clamp)?;
//! assert_eq!(out, src);
//! # Ok::<(), fixsight::Error>(())
//! ```

use crate::arith::{round_shift_proven, sat_u8};
use crate::error::{Error, Result};
use crate::filter::Border;
use crate::image::{check_dims, ImageView, ImageViewMut};
use crate::ops::{tally, tally_per, Op};

/// Fewest fractional bits of a coordinate.
pub const MIN_FRAC_BITS: u32 = 2;
/// Most fractional bits of a coordinate.
pub const MAX_FRAC_BITS: u32 = 10;
/// Smallest grid step, as log2 of output pixels.
pub const MIN_GRID_LOG2: u32 = 2;
/// Largest grid step, as log2 of output pixels.
pub const MAX_GRID_LOG2: u32 = 6;

/// Magic bytes at the start of a grid blob.
pub const BLOB_MAGIC: [u8; 4] = *b"FSMT";
/// Blob format version this build writes and reads.
pub const BLOB_VERSION: u16 = 1;
/// Blob header length in bytes.
pub const BLOB_HEADER_LEN: usize = 32;

/// CRC-32/ISO-HDLC, the blob checksum.
const BLOB_CRC: crc::Crc<u32> = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC);

/// CRC-32 (ISO-HDLC) of `parts` concatenated, as stored in a blob header.
///
/// ```
/// assert_eq!(fixsight::warp::crc32(&[b"1234", b"56789"]), 0xCBF4_3926);
/// ```
pub fn crc32(parts: &[&[u8]]) -> u32 {
    let mut d = BLOB_CRC.digest();
    for p in parts {
        d.update(p);
    }
    d.finalize()
}

/// Sizes and coordinate format shared by a pixel map and a grid: output
/// size, source size and fractional bits `F`. All validated at construction.
///
/// ```
/// use fixsight::warp::WarpGeometry;
/// let g = WarpGeometry::new(640, 480, 640, 480, 5)?;
/// assert_eq!(g.coord_range_x(), (-640 * 32, 1279 * 32));
/// assert!(WarpGeometry::new(640, 480, 640, 480, 11).is_err());
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct WarpGeometry {
    out_width: usize,
    out_height: usize,
    src_width: usize,
    src_height: usize,
    frac_bits: u32,
}

impl WarpGeometry {
    /// Output `out_width x out_height`, source `src_width x src_height`
    /// (each `1..=32767`), `frac_bits` in `2..=10`.
    ///
    /// ```
    /// assert!(fixsight::warp::WarpGeometry::new(0, 4, 4, 4, 4).is_err());
    /// ```
    pub fn new(
        out_width: usize,
        out_height: usize,
        src_width: usize,
        src_height: usize,
        frac_bits: u32,
    ) -> Result<Self> {
        check_dims(out_width, out_height)?;
        check_dims(src_width, src_height)?;
        if !(MIN_FRAC_BITS..=MAX_FRAC_BITS).contains(&frac_bits) {
            return Err(Error::BadParameter {
                name: "frac_bits",
                expected: "2..=10",
                got: frac_bits as i64,
            });
        }
        Ok(Self {
            out_width,
            out_height,
            src_width,
            src_height,
            frac_bits,
        })
    }

    /// Output width.
    ///
    /// ```
    /// # let g = fixsight::warp::WarpGeometry::new(8, 6, 4, 3, 4).unwrap();
    /// assert_eq!(g.out_width(), 8);
    /// ```
    pub fn out_width(&self) -> usize {
        self.out_width
    }

    /// Output height.
    ///
    /// ```
    /// # let g = fixsight::warp::WarpGeometry::new(8, 6, 4, 3, 4).unwrap();
    /// assert_eq!(g.out_height(), 6);
    /// ```
    pub fn out_height(&self) -> usize {
        self.out_height
    }

    /// Source width.
    ///
    /// ```
    /// # let g = fixsight::warp::WarpGeometry::new(8, 6, 4, 3, 4).unwrap();
    /// assert_eq!(g.src_width(), 4);
    /// ```
    pub fn src_width(&self) -> usize {
        self.src_width
    }

    /// Source height.
    ///
    /// ```
    /// # let g = fixsight::warp::WarpGeometry::new(8, 6, 4, 3, 4).unwrap();
    /// assert_eq!(g.src_height(), 3);
    /// ```
    pub fn src_height(&self) -> usize {
        self.src_height
    }

    /// Fractional bits `F` of every coordinate.
    ///
    /// ```
    /// # let g = fixsight::warp::WarpGeometry::new(8, 6, 4, 3, 4).unwrap();
    /// assert_eq!(g.frac_bits(), 4);
    /// ```
    pub fn frac_bits(&self) -> u32 {
        self.frac_bits
    }

    /// Accepted raw x range `(-W * 2^F, (2W - 1) * 2^F)`.
    ///
    /// ```
    /// # let g = fixsight::warp::WarpGeometry::new(8, 6, 4, 3, 4).unwrap();
    /// assert_eq!(g.coord_range_x(), (-64, 112));
    /// ```
    pub fn coord_range_x(&self) -> (i32, i32) {
        range(self.src_width, self.frac_bits)
    }

    /// Accepted raw y range `(-H * 2^F, (2H - 1) * 2^F)`.
    ///
    /// ```
    /// # let g = fixsight::warp::WarpGeometry::new(8, 6, 4, 3, 4).unwrap();
    /// assert_eq!(g.coord_range_y(), (-48, 80));
    /// ```
    pub fn coord_range_y(&self) -> (i32, i32) {
        range(self.src_height, self.frac_bits)
    }

    /// Checks raw pair `index` against the accepted range.
    fn check_pair(&self, index: usize, x: i32, y: i32) -> Result<()> {
        let (lo, hi) = self.coord_range_x();
        if x < lo || x > hi {
            return Err(Error::MapOutOfRange {
                axis: "x",
                index,
                value: x,
                min: lo,
                max: hi,
            });
        }
        let (lo, hi) = self.coord_range_y();
        if y < lo || y > hi {
            return Err(Error::MapOutOfRange {
                axis: "y",
                index,
                value: y,
                min: lo,
                max: hi,
            });
        }
        Ok(())
    }

    /// Checks a source view and an output strip against this geometry.
    fn check_views(
        &self,
        src: &ImageView<'_, u8>,
        dst: &ImageViewMut<'_, u8>,
        first_row: usize,
    ) -> Result<()> {
        if src.width() != self.src_width || src.height() != self.src_height {
            return Err(Error::SizeMismatch {
                what: "warp source vs map geometry",
                expected: (self.src_width, self.src_height),
                got: (src.width(), src.height()),
            });
        }
        if dst.width() != self.out_width {
            return Err(Error::SizeMismatch {
                what: "warp output strip vs map geometry",
                expected: (self.out_width, dst.height()),
                got: (dst.width(), dst.height()),
            });
        }
        if first_row > self.out_height || dst.height() > self.out_height - first_row {
            return Err(Error::RowRange {
                first_row,
                rows: dst.height(),
                height: self.out_height,
            });
        }
        if dst.channels() != src.channels() {
            return Err(Error::UnsupportedChannels {
                channels: dst.channels(),
                accepted: "the same number of channels as the source",
            });
        }
        Ok(())
    }
}

fn range(n: usize, f: u32) -> (i32, i32) {
    // n <= 32767, f <= 10: |values| < 2^26.
    let n = n as i32;
    (-(n << f), (2 * n - 1) << f)
}

/// Samples one pixel of `src` at raw coordinate `(sx, sy)` with `frac_bits`
/// fractional bits, following the module's sampling model, and writes one
/// element per source channel to `out`. Any coordinate is accepted (the
/// border rule covers everything outside the image).
///
/// ```
/// use fixsight::{filter::Border, warp::sample_pixel, ImageView};
/// // Unit cell 0,100 / 50,250 sampled at its centre (raw 2, 2 with F = 2):
/// let src = [0u8, 100, 50, 250];
/// let v = ImageView::new(&src, 2, 2, 2)?;
/// let mut out = [0u8; 1];
/// sample_pixel(&v, 2, 2, 2, Border::Clamp, &mut out)?;
/// assert_eq!(out, [100]); // (0 + 100 + 50 + 250) / 4
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn sample_pixel(
    src: &ImageView<'_, u8>,
    sx: i32,
    sy: i32,
    frac_bits: u32,
    border: Border,
    out: &mut [u8],
) -> Result<()> {
    if !(MIN_FRAC_BITS..=MAX_FRAC_BITS).contains(&frac_bits) {
        return Err(Error::BadParameter {
            name: "frac_bits",
            expected: "2..=10",
            got: frac_bits as i64,
        });
    }
    let c = src.channels();
    if out.len() < c {
        return Err(Error::BufferTooShort {
            what: "sampled pixel",
            needed: c,
            got: out.len(),
        });
    }
    // Clamp far-away coordinates into the accepted range of this source:
    // every tap of a clamped coordinate is outside the image exactly when it
    // was before, and the border rule gives the same values.
    let (lo, hi) = range(src.width(), frac_bits);
    let sx = sx.clamp(lo, hi);
    let (lo, hi) = range(src.height(), frac_bits);
    let sy = sy.clamp(lo, hi);
    let s = Sampler::new(src, frac_bits, border);
    match c {
        1 => {
            s.sample::<1>(sx, sy, &mut out[..1]);
        }
        2 => {
            s.sample::<2>(sx, sy, &mut out[..2]);
        }
        3 => {
            s.sample::<3>(sx, sy, &mut out[..3]);
        }
        _ => {
            s.sample::<4>(sx, sy, &mut out[..4]);
        }
    }
    Ok(())
}

/// The sampling model bound to one source view.
struct Sampler<'s, 'a> {
    src: &'s ImageView<'a, u8>,
    f: u32,
    mask: i32,
    one: i32,
    border: Border,
    /// `width - 1` and `height - 1`: the fast path needs `x0 < wm1`, `y0 < hm1`.
    wm1: u32,
    hm1: u32,
}

impl<'s, 'a> Sampler<'s, 'a> {
    fn new(src: &'s ImageView<'a, u8>, f: u32, border: Border) -> Self {
        Self {
            src,
            f,
            mask: (1 << f) - 1,
            one: 1 << f,
            border,
            wm1: (src.width() - 1) as u32,
            hm1: (src.height() - 1) as u32,
        }
    }

    /// Tap `(x, y)`, channel `ch`, with the border rule.
    #[inline(always)]
    fn tap<const C: usize>(&self, x: i32, y: i32, ch: usize) -> i32 {
        let inside = x >= 0 && (x as u32) <= self.wm1 && y >= 0 && (y as u32) <= self.hm1;
        if inside {
            self.src.row_at(y as usize)[x as usize * C + ch] as i32
        } else {
            match self.border {
                Border::Fill(c) => c as i32,
                Border::Clamp => {
                    let xc = x.clamp(0, self.wm1 as i32) as usize;
                    let yc = y.clamp(0, self.hm1 as i32) as usize;
                    self.src.row_at(yc)[xc * C + ch] as i32
                }
            }
        }
    }

    /// Samples at a raw coordinate in the accepted range (callers guarantee
    /// `|sx|, |sy| < 2^27`). Returns `true` on the fast (all taps inside)
    /// path.
    #[inline(always)]
    fn sample<const C: usize>(&self, sx: i32, sy: i32, out: &mut [u8]) -> bool {
        let x0 = sx >> self.f;
        let y0 = sy >> self.f;
        let fx = sx & self.mask;
        let fy = sy & self.mask;
        let (wx0, wx1) = (self.one - fx, fx);
        let (wy0, wy1) = (self.one - fy, fy);
        let s2 = 2 * self.f;
        // Negative x0 wraps to a large u32 and fails the test.
        if (x0 as u32) < self.wm1 && (y0 as u32) < self.hm1 {
            let r0 = self.src.row_at(y0 as usize);
            let r1 = self.src.row_at(y0 as usize + 1);
            let i = x0 as usize * C;
            let (a0, a1) = (&r0[i..i + 2 * C], &r1[i..i + 2 * C]);
            for (ch, o) in out.iter_mut().enumerate().take(C) {
                let top = wx0 * a0[ch] as i32 + wx1 * a0[ch + C] as i32;
                let bot = wx0 * a1[ch] as i32 + wx1 * a1[ch + C] as i32;
                *o = sat_u8(round_shift_proven(wy0 * top + wy1 * bot, s2));
            }
            true
        } else {
            for (ch, o) in out.iter_mut().enumerate().take(C) {
                let top = wx0 * self.tap::<C>(x0, y0, ch) + wx1 * self.tap::<C>(x0 + 1, y0, ch);
                let bot =
                    wx0 * self.tap::<C>(x0, y0 + 1, ch) + wx1 * self.tap::<C>(x0 + 1, y0 + 1, ch);
                *o = sat_u8(round_shift_proven(wy0 * top + wy1 * bot, s2));
            }
            false
        }
    }
}

/// Counts the sampling work of one output row: `n` pixels, `fast` of them
/// on the all-inside path, `c` channels.
fn tally_samples(n: usize, fast: usize, c: usize) {
    let slow = n - fast;
    // Per channel and pixel: the counts below times `c` (at most 4).
    let c = c as u32;
    // Per pixel: two floor shifts, two masks, two weight subtractions, the
    // two bounds compares and their branch, row address (multiply + add).
    tally_per(Op::Shift, 2, n);
    tally_per(Op::Logic, 4, n);
    tally_per(Op::AddSub, 3, n);
    tally_per(Op::Mul, 1, n);
    tally_per(Op::Branch, 1, n);
    // Per channel: 4 loads, 3 multiplies and 3 multiply-adds, rounding add
    // and shift, two saturation compares, one store.
    tally_per(Op::Load, 4 * c, n);
    tally_per(Op::Mul, 3 * c, n);
    tally_per(Op::Mac, 3 * c, n);
    tally_per(Op::AddSub, c, n);
    tally_per(Op::Shift, c, n);
    tally_per(Op::Logic, 2 * c, n);
    tally_per(Op::Store, c, n);
    // Border pixels: four inside tests (4 compares each) and a branch per tap.
    tally_per(Op::Logic, 16 * c, slow);
    tally_per(Op::Branch, 4 * c, slow);
}

/// A pixel map: one raw `(x, y)` source coordinate per output pixel,
/// interleaved `i32`, row-major, borrowed from the caller.
///
/// ```
/// use fixsight::warp::{PixelMap, WarpGeometry};
/// let g = WarpGeometry::new(2, 1, 2, 1, 4)?;
/// let coords = [16, 0, 0, 0];            // mirror: out(0) <- src(1), out(1) <- src(0)
/// assert!(PixelMap::new(&coords, g).is_ok());
/// assert!(PixelMap::new(&coords[..3], g).is_err());
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug, Clone, Copy)]
pub struct PixelMap<'a> {
    coords: &'a [i32],
    geom: WarpGeometry,
}

impl<'a> PixelMap<'a> {
    /// Wraps `coords` (at least `2 * out_width * out_height` values),
    /// checking every pair against the accepted range.
    ///
    /// ```
    /// use fixsight::warp::{PixelMap, WarpGeometry};
    /// use fixsight::Error;
    /// let g = WarpGeometry::new(1, 1, 4, 4, 2)?;
    /// // x = 20 px is more than one source width past the right edge:
    /// assert!(matches!(PixelMap::new(&[80, 0], g), Err(Error::MapOutOfRange { axis: "x", .. })));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn new(coords: &'a [i32], geom: WarpGeometry) -> Result<Self> {
        let n = geom.out_width * geom.out_height;
        let needed = 2 * n;
        if coords.len() < needed {
            return Err(Error::BufferTooShort {
                what: "pixel map",
                needed,
                got: coords.len(),
            });
        }
        for (i, p) in coords[..needed].chunks_exact(2).enumerate() {
            geom.check_pair(i, p[0], p[1])?;
        }
        Ok(Self {
            coords: &coords[..needed],
            geom,
        })
    }

    /// The geometry.
    ///
    /// ```
    /// # use fixsight::warp::{PixelMap, WarpGeometry};
    /// let g = WarpGeometry::new(1, 1, 1, 1, 3)?;
    /// assert_eq!(PixelMap::new(&[0, 0], g)?.geometry().frac_bits(), 3);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn geometry(&self) -> WarpGeometry {
        self.geom
    }

    /// Warps output rows `first_row .. first_row + dst.height()` into
    /// `dst` (width `out_width`, same channel count as `src`, which must be
    /// `src_width x src_height`).
    ///
    /// ```
    /// use fixsight::filter::Border;
    /// use fixsight::warp::{PixelMap, WarpGeometry};
    /// use fixsight::{ImageView, ImageViewMut};
    /// let g = WarpGeometry::new(2, 1, 2, 1, 4)?;
    /// let map = PixelMap::new(&[16, 0, 8, 0], g)?;  // x = 1.0 and x = 0.5
    /// let src = [10u8, 21];
    /// let mut out = [0u8; 2];
    /// map.warp_rows(&ImageView::new(&src, 2, 1, 2)?, &mut ImageViewMut::new(&mut out, 2, 1, 2)?,
    ///                0, Border::Clamp)?;
    /// assert_eq!(out, [21, 16]); // 15.5 rounds half up to 16
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn warp_rows(
        &self,
        src: &ImageView<'_, u8>,
        dst: &mut ImageViewMut<'_, u8>,
        first_row: usize,
        border: Border,
    ) -> Result<()> {
        self.geom.check_views(src, dst, first_row)?;
        match src.channels() {
            1 => self.rows::<1>(src, dst, first_row, border),
            2 => self.rows::<2>(src, dst, first_row, border),
            3 => self.rows::<3>(src, dst, first_row, border),
            _ => self.rows::<4>(src, dst, first_row, border),
        }
        Ok(())
    }

    fn rows<const C: usize>(
        &self,
        src: &ImageView<'_, u8>,
        dst: &mut ImageViewMut<'_, u8>,
        first_row: usize,
        border: Border,
    ) {
        let s = Sampler::new(src, self.geom.frac_bits, border);
        let w = self.geom.out_width;
        for r in 0..dst.height() {
            let y = first_row + r;
            let map_row = &self.coords[2 * y * w..2 * (y + 1) * w];
            let out = dst.row_at_mut(r);
            let mut fast = 0usize;
            for (p, o) in map_row.chunks_exact(2).zip(out.chunks_exact_mut(C)) {
                fast += s.sample::<C>(p[0], p[1], o) as usize;
            }
            tally_per(Op::Load, 2, w);
            tally(Op::Branch, 1);
            tally_samples(w, fast, C);
        }
    }
}

/// Where a grid's control points live: caller `i32` words or the payload
/// bytes of a blob (read little-endian in place).
#[derive(Debug, Clone, Copy)]
enum Points<'a> {
    Words(&'a [i32]),
    Bytes(&'a [u8]),
}

impl Points<'_> {
    /// Raw value `k` (`2 * point + axis`); in range by construction.
    #[inline(always)]
    fn get(&self, k: usize) -> i32 {
        match *self {
            Points::Words(w) => w[k],
            Points::Bytes(b) => {
                let i = 4 * k;
                i32::from_le_bytes([b[i], b[i + 1], b[i + 2], b[i + 3]])
            }
        }
    }
}

/// A control grid: control points every `2^k` output pixels (see the
/// module docs for the grid, the integer model and the blob format).
/// Borrows its points.
///
/// ```
/// use fixsight::warp::{ControlGrid, WarpGeometry};
/// let g = WarpGeometry::new(640, 480, 640, 480, 5)?;
/// let (cols, rows) = ControlGrid::grid_size(&g, 4)?;
/// assert_eq!((cols, rows), (41, 31));
/// assert_eq!(ControlGrid::table_bytes(&g, 4)?, 41 * 31 * 8); // 10168 bytes for VGA at step 16
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug, Clone, Copy)]
pub struct ControlGrid<'a> {
    points: Points<'a>,
    geom: WarpGeometry,
    k: u32,
    cols: usize,
    rows: usize,
}

fn check_step(grid_log2: u32) -> Result<()> {
    if (MIN_GRID_LOG2..=MAX_GRID_LOG2).contains(&grid_log2) {
        Ok(())
    } else {
        Err(Error::BadParameter {
            name: "grid_log2",
            expected: "2..=6",
            got: grid_log2 as i64,
        })
    }
}

fn grid_len(n: usize, k: u32) -> usize {
    let s = 1usize << k;
    ((n - 1).div_ceil(s) + 1).max(2)
}

impl<'a> ControlGrid<'a> {
    /// Grid `(cols, rows)` a grid with step `2^grid_log2` needs for this
    /// geometry.
    ///
    /// ```
    /// # use fixsight::warp::{ControlGrid, WarpGeometry};
    /// // 17 columns: points at x = 0 and 16 suffice; 18 need a third at 32.
    /// let g = WarpGeometry::new(17, 1, 8, 8, 4)?;
    /// assert_eq!(ControlGrid::grid_size(&g, 4)?, (2, 2));
    /// let g = WarpGeometry::new(18, 1, 8, 8, 4)?;
    /// assert_eq!(ControlGrid::grid_size(&g, 4)?, (3, 2));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn grid_size(geom: &WarpGeometry, grid_log2: u32) -> Result<(usize, usize)> {
        check_step(grid_log2)?;
        Ok((
            grid_len(geom.out_width, grid_log2),
            grid_len(geom.out_height, grid_log2),
        ))
    }

    /// Bytes of control-point data (`cols * rows * 8`) for this geometry.
    ///
    /// ```
    /// # use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let g = WarpGeometry::new(4, 4, 4, 4, 4)?;
    /// assert_eq!(ControlGrid::table_bytes(&g, 2)?, 2 * 2 * 8);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn table_bytes(geom: &WarpGeometry, grid_log2: u32) -> Result<usize> {
        let (c, r) = Self::grid_size(geom, grid_log2)?;
        Ok(c * r * 8)
    }

    /// A grid over caller words: `points` holds at least `2 * cols * rows`
    /// raw values (`(x, y)` per control point, row-major). Checks the step,
    /// every point against the accepted range and every cell against the
    /// accumulator bound.
    ///
    /// ```
    /// use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let g = WarpGeometry::new(4, 4, 4, 4, 2)?;
    /// assert!(ControlGrid::new(&[0; 8], g, 2).is_ok());
    /// assert!(ControlGrid::new(&[0; 6], g, 2).is_err()); // 4 points needed
    /// assert!(ControlGrid::new(&[0; 8], g, 7).is_err()); // step 128 not supported
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn new(points: &'a [i32], geom: WarpGeometry, grid_log2: u32) -> Result<Self> {
        let (cols, rows) = Self::grid_size(&geom, grid_log2)?;
        let needed = 2 * cols * rows;
        if points.len() < needed {
            return Err(Error::BufferTooShort {
                what: "grid control points",
                needed,
                got: points.len(),
            });
        }
        Self::validated(
            Points::Words(&points[..needed]),
            geom,
            grid_log2,
            cols,
            rows,
        )
    }

    fn validated(
        points: Points<'a>,
        geom: WarpGeometry,
        k: u32,
        cols: usize,
        rows: usize,
    ) -> Result<Self> {
        let m = Self {
            points,
            geom,
            k,
            cols,
            rows,
        };
        for i in 0..cols * rows {
            geom.check_pair(i, points.get(2 * i), points.get(2 * i + 1))?;
        }
        let s = 1u64 << k;
        let half = 1u64 << (2 * k - 1);
        for j in 0..rows - 1 {
            for i in 0..cols - 1 {
                for axis in 0..2 {
                    let (c00, c10, c01, c11) = m.corners(i, j, axis);
                    let sum = (c10 as i64 - c00 as i64).unsigned_abs()
                        + (c11 as i64 - c10 as i64).unsigned_abs()
                        + (c01 as i64 - c00 as i64).unsigned_abs();
                    let worst = s * (2 * s + 1) * sum + half;
                    if worst > i32::MAX as u64 {
                        return Err(Error::GridCellOverflow {
                            col: i,
                            row: j,
                            worst_case: worst,
                            limit: i32::MAX as u64,
                        });
                    }
                }
            }
        }
        Ok(m)
    }

    /// Parses a blob (format in the module docs), borrowing its payload.
    ///
    /// ```
    /// use fixsight::warp::{ControlGrid, WarpGeometry};
    /// use fixsight::Error;
    /// let g = WarpGeometry::new(4, 4, 4, 4, 2)?;
    /// let pts = [0, 0, 16, 0, 0, 16, 16, 16];
    /// let mut blob = [0u8; 64];
    /// let n = ControlGrid::new(&pts, g, 2)?.write_blob(&mut blob)?;
    /// assert_eq!(n, 64);
    /// let back = ControlGrid::from_blob(&blob)?;
    /// assert_eq!(back.point(1, 1), (16, 16));
    /// blob[40] ^= 1;
    /// assert!(matches!(ControlGrid::from_blob(&blob), Err(Error::BlobCrc { .. })));
    /// assert!(matches!(ControlGrid::from_blob(&blob[..50]), Err(Error::BlobSize { .. })));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn from_blob(bytes: &'a [u8]) -> Result<Self> {
        if bytes.len() < BLOB_HEADER_LEN {
            return Err(Error::BlobSize {
                expected: BLOB_HEADER_LEN,
                got: bytes.len(),
            });
        }
        let u16_at = |o: usize| u16::from_le_bytes([bytes[o], bytes[o + 1]]);
        let u32_at =
            |o: usize| u32::from_le_bytes([bytes[o], bytes[o + 1], bytes[o + 2], bytes[o + 3]]);
        let magic = [bytes[0], bytes[1], bytes[2], bytes[3]];
        if magic != BLOB_MAGIC {
            return Err(Error::BlobMagic { got: magic });
        }
        let version = u16_at(4);
        if version != BLOB_VERSION {
            return Err(Error::BlobVersion {
                got: version,
                supported: BLOB_VERSION,
            });
        }
        let header_len = u16_at(6);
        if header_len as usize != BLOB_HEADER_LEN {
            return Err(Error::BlobField {
                field: "header_len",
                got: header_len as u32,
                expected: "32",
            });
        }
        let payload_len = u32_at(24) as usize;
        let expected = BLOB_HEADER_LEN.saturating_add(payload_len);
        if bytes.len() != expected {
            return Err(Error::BlobSize {
                expected,
                got: bytes.len(),
            });
        }
        let stored = u32_at(28);
        let computed = crc32(&[&bytes[..28], &bytes[BLOB_HEADER_LEN..]]);
        if stored != computed {
            return Err(Error::BlobCrc { stored, computed });
        }
        let flags = u16_at(22);
        if flags != 0 {
            return Err(Error::BlobField {
                field: "flags",
                got: flags as u32,
                expected: "0",
            });
        }
        // Each header field on its own, so that the error names it.
        for (field, off) in [
            ("out_width", 8),
            ("out_height", 10),
            ("src_width", 12),
            ("src_height", 14),
        ] {
            let v = u16_at(off);
            if v == 0 || v as usize > crate::image::MAX_DIM {
                return Err(Error::BlobField {
                    field,
                    got: v as u32,
                    expected: "1..=32767",
                });
            }
        }
        let k = bytes[16] as u32;
        if !(MIN_GRID_LOG2..=MAX_GRID_LOG2).contains(&k) {
            return Err(Error::BlobField {
                field: "grid_log2",
                got: k,
                expected: "2..=6",
            });
        }
        let f = bytes[17] as u32;
        if !(MIN_FRAC_BITS..=MAX_FRAC_BITS).contains(&f) {
            return Err(Error::BlobField {
                field: "frac_bits",
                got: f,
                expected: "2..=10",
            });
        }
        let geom = WarpGeometry::new(
            u16_at(8) as usize,
            u16_at(10) as usize,
            u16_at(12) as usize,
            u16_at(14) as usize,
            f,
        )?;
        let (cols, rows) = Self::grid_size(&geom, k)?;
        let (gc, gr) = (u16_at(18) as usize, u16_at(20) as usize);
        if (gc, gr) != (cols, rows) {
            return Err(Error::GridCoverage {
                output: (geom.out_width, geom.out_height),
                grid: (gc, gr),
                needed: (cols, rows),
            });
        }
        if payload_len != cols * rows * 8 {
            return Err(Error::BlobField {
                field: "payload_len",
                got: payload_len as u32,
                expected: "grid columns x grid rows x 8",
            });
        }
        Self::validated(
            Points::Bytes(&bytes[BLOB_HEADER_LEN..]),
            geom,
            k,
            cols,
            rows,
        )
    }

    /// Blob length for this grid: `32 + cols * rows * 8`.
    ///
    /// ```
    /// # use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let g = WarpGeometry::new(4, 4, 4, 4, 2)?;
    /// assert_eq!(ControlGrid::new(&[0; 8], g, 2)?.blob_len(), 64);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn blob_len(&self) -> usize {
        BLOB_HEADER_LEN + self.cols * self.rows * 8
    }

    /// Writes the blob into `out` (at least [`blob_len`](Self::blob_len)
    /// bytes) and returns its length.
    ///
    /// ```
    /// # use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let g = WarpGeometry::new(4, 4, 4, 4, 2)?;
    /// let mut small = [0u8; 63];
    /// assert!(ControlGrid::new(&[0; 8], g, 2)?.write_blob(&mut small).is_err());
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn write_blob(&self, out: &mut [u8]) -> Result<usize> {
        let n = self.blob_len();
        if out.len() < n {
            return Err(Error::BufferTooShort {
                what: "grid blob",
                needed: n,
                got: out.len(),
            });
        }
        let out = &mut out[..n];
        let g = &self.geom;
        // Every dimension is <= 32767, so the u16 casts are exact.
        let mut h = [0u8; BLOB_HEADER_LEN];
        h[0..4].copy_from_slice(&BLOB_MAGIC);
        h[4..6].copy_from_slice(&BLOB_VERSION.to_le_bytes());
        h[6..8].copy_from_slice(&(BLOB_HEADER_LEN as u16).to_le_bytes());
        h[8..10].copy_from_slice(&(g.out_width as u16).to_le_bytes());
        h[10..12].copy_from_slice(&(g.out_height as u16).to_le_bytes());
        h[12..14].copy_from_slice(&(g.src_width as u16).to_le_bytes());
        h[14..16].copy_from_slice(&(g.src_height as u16).to_le_bytes());
        h[16] = self.k as u8;
        h[17] = g.frac_bits as u8;
        h[18..20].copy_from_slice(&(self.cols as u16).to_le_bytes());
        h[20..22].copy_from_slice(&(self.rows as u16).to_le_bytes());
        h[24..28].copy_from_slice(&((n - BLOB_HEADER_LEN) as u32).to_le_bytes());
        for (i, chunk) in out[BLOB_HEADER_LEN..].chunks_exact_mut(4).enumerate() {
            chunk.copy_from_slice(&self.points.get(i).to_le_bytes());
        }
        let crc = crc32(&[&h[..28], &out[BLOB_HEADER_LEN..]]);
        h[28..32].copy_from_slice(&crc.to_le_bytes());
        out[..BLOB_HEADER_LEN].copy_from_slice(&h);
        Ok(n)
    }

    /// The geometry.
    ///
    /// ```
    /// # use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let g = WarpGeometry::new(4, 4, 4, 4, 2)?;
    /// assert_eq!(ControlGrid::new(&[0; 8], g, 2)?.geometry(), g);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn geometry(&self) -> WarpGeometry {
        self.geom
    }

    /// Step as log2 of output pixels.
    ///
    /// ```
    /// # use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let g = WarpGeometry::new(4, 4, 4, 4, 2)?;
    /// assert_eq!(ControlGrid::new(&[0; 8], g, 2)?.grid_log2(), 2);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn grid_log2(&self) -> u32 {
        self.k
    }

    /// Grid `(cols, rows)`.
    ///
    /// ```
    /// # use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let g = WarpGeometry::new(4, 4, 4, 4, 2)?;
    /// assert_eq!(ControlGrid::new(&[0; 8], g, 2)?.grid(), (2, 2));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn grid(&self) -> (usize, usize) {
        (self.cols, self.rows)
    }

    /// Control point `(col, row)` as a raw `(x, y)` pair, or `(0, 0)` for
    /// indices outside the grid ([`try_point`](Self::try_point) tells the
    /// two apart).
    ///
    /// ```
    /// # use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let g = WarpGeometry::new(4, 4, 4, 4, 2)?;
    /// let m = ControlGrid::new(&[0, 0, 16, 0, 0, 16, 16, 16], g, 2)?;
    /// assert_eq!(m.point(1, 0), (16, 0));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn point(&self, col: usize, row: usize) -> (i32, i32) {
        self.try_point(col, row).unwrap_or((0, 0))
    }

    /// Control point `(col, row)`, or `None` outside the grid.
    ///
    /// ```
    /// # use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let g = WarpGeometry::new(4, 4, 4, 4, 2)?;
    /// assert_eq!(ControlGrid::new(&[0; 8], g, 2)?.try_point(2, 0), None);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn try_point(&self, col: usize, row: usize) -> Option<(i32, i32)> {
        if col < self.cols && row < self.rows {
            let i = row * self.cols + col;
            Some((self.points.get(2 * i), self.points.get(2 * i + 1)))
        } else {
            None
        }
    }

    /// Corners `C00, C10, C01, C11` of cell `(i, j)` on one axis.
    #[inline(always)]
    fn corners(&self, i: usize, j: usize, axis: usize) -> (i32, i32, i32, i32) {
        let at = |ii: usize, jj: usize| self.points.get(2 * (jj * self.cols + ii) + axis);
        (at(i, j), at(i + 1, j), at(i, j + 1), at(i + 1, j + 1))
    }

    /// The grid-interpolated raw coordinate of output pixel `(x, y)` by the
    /// closed formula of the module docs (multiplies; for checking and for
    /// callers that need single points). `None` outside the output.
    ///
    /// ```
    /// # use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let g = WarpGeometry::new(4, 4, 4, 4, 2)?;
    /// let m = ControlGrid::new(&[0, 0, 16, 0, 0, 16, 16, 16], g, 2)?;
    /// assert_eq!(m.coord(3, 1), Some((12, 4)));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn coord(&self, x: usize, y: usize) -> Option<(i32, i32)> {
        if x >= self.geom.out_width || y >= self.geom.out_height {
            return None;
        }
        let k = self.k;
        let s = 1i32 << k;
        let i = (x >> k).min(self.cols - 2);
        let j = (y >> k).min(self.rows - 2);
        let u = (x - (i << k)) as i32;
        let v = (y - (j << k)) as i32;
        let axis = |a: usize| {
            let (c00, c10, c01, c11) = self.corners(i, j, a);
            // Same bound as the incremental form: fits i32 by construction.
            let acc = u * (s - v) * (c10 - c00) + (s - u) * v * (c01 - c00) + u * v * (c11 - c00);
            c00 + round_shift_proven(acc, 2 * k)
        };
        Some((axis(0), axis(1)))
    }

    /// Warps output rows `first_row .. first_row + dst.height()` into
    /// `dst`; same view rules as [`PixelMap::warp_rows`].
    ///
    /// ```
    /// use fixsight::filter::Border;
    /// use fixsight::warp::{ControlGrid, WarpGeometry};
    /// use fixsight::{ImageView, ImageViewMut};
    /// // Shift right by half a pixel (F = 3): every point is x + 0.5.
    /// let g = WarpGeometry::new(4, 2, 4, 4, 3)?;
    /// let pts = [4, 0, 36, 0, 4, 32, 36, 32];        // points at output x, y = 0 and 4
    /// let m = ControlGrid::new(&pts, g, 2)?;
    /// let src = [0u8, 10, 20, 30].repeat(4);
    /// let mut strip = [0u8; 4];                      // just row 1
    /// m.warp_rows(&ImageView::new(&src, 4, 4, 4)?, &mut ImageViewMut::new(&mut strip, 4, 1, 4)?,
    ///              1, Border::Fill(0))?;
    /// assert_eq!(strip, [5, 15, 25, 15]);            // last: (30 + 0) / 2
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn warp_rows(
        &self,
        src: &ImageView<'_, u8>,
        dst: &mut ImageViewMut<'_, u8>,
        first_row: usize,
        border: Border,
    ) -> Result<()> {
        self.geom.check_views(src, dst, first_row)?;
        match src.channels() {
            1 => self.rows::<1>(src, dst, first_row, border),
            2 => self.rows::<2>(src, dst, first_row, border),
            3 => self.rows::<3>(src, dst, first_row, border),
            _ => self.rows::<4>(src, dst, first_row, border),
        }
        Ok(())
    }

    fn rows<const C: usize>(
        &self,
        src: &ImageView<'_, u8>,
        dst: &mut ImageViewMut<'_, u8>,
        first_row: usize,
        border: Border,
    ) {
        let s = Sampler::new(src, self.geom.frac_bits, border);
        let k = self.k;
        let step = 1usize << k;
        let sh = 2 * k;
        let half = 1i32 << (sh - 1);
        let w = self.geom.out_width;
        for r in 0..dst.height() {
            let y = first_row + r;
            let j = (y >> k).min(self.rows - 2);
            let v = (y - (j << k)) as i32;
            let out = dst.row_at_mut(r);
            let mut fast = 0usize;
            let mut cells = 0usize;
            for i in 0..self.cols - 1 {
                let x_start = i << k;
                if x_start >= w {
                    break;
                }
                let x_end = if i == self.cols - 2 {
                    w
                } else {
                    (x_start + step).min(w)
                };
                cells += 1;
                let (x00, x10, x01, x11) = self.corners(i, j, 0);
                let (y00, y10, y01, y11) = self.corners(i, j, 1);
                let lx = v * (x01 - x00);
                let rx = ((x10 - x00) << k) + v * (x11 - x10);
                let ly = v * (y01 - y00);
                let ry = ((y10 - y00) << k) + v * (y11 - y10);
                let (dx, dy) = (rx - lx, ry - ly);
                let mut ax = (lx << k) + half;
                let mut ay = (ly << k) + half;
                let seg = &mut out[x_start * C..x_end * C];
                let n = x_end - x_start;
                for (u, o) in seg.chunks_exact_mut(C).enumerate() {
                    fast += s.sample::<C>(x00 + (ax >> sh), y00 + (ay >> sh), o) as usize;
                    // The accumulator is advanced only while another pixel of
                    // this cell follows, so it never leaves the proven range.
                    if u + 1 < n {
                        ax += dx;
                        ay += dy;
                    }
                }
            }
            // Per cell: 8 corner loads, 4 multiplies, 12 add/sub, 4 shifts.
            tally_per(Op::Load, 8, cells);
            tally_per(Op::Mul, 4, cells);
            tally_per(Op::AddSub, 12, cells);
            tally_per(Op::Shift, 4, cells);
            tally_per(Op::Branch, 1, cells);
            tally(Op::Branch, 1);
            // Per pixel: 2 accumulator adds, 2 shifts, 2 base adds, loop test.
            let n = w;
            tally_per(Op::AddSub, 4, n);
            tally_per(Op::Shift, 2, n);
            tally_per(Op::Logic, 1, n);
            tally_samples(w, fast, C);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;
    extern crate std;
    use std::vec;
    use std::vec::Vec;

    /// Straight transcription of the sampling model in i64 with explicit
    /// border handling, independent of the kernel's fast path.
    #[allow(clippy::too_many_arguments)]
    fn model(
        src: &[u8],
        w: usize,
        h: usize,
        c: usize,
        sx: i32,
        sy: i32,
        f: u32,
        border: Border,
    ) -> Vec<u8> {
        let p = |x: i64, y: i64, ch: usize| -> i64 {
            if x >= 0 && x < w as i64 && y >= 0 && y < h as i64 {
                src[(y as usize * w + x as usize) * c + ch] as i64
            } else {
                match border {
                    Border::Fill(v) => v as i64,
                    Border::Clamp => {
                        let xc = x.clamp(0, w as i64 - 1) as usize;
                        let yc = y.clamp(0, h as i64 - 1) as usize;
                        src[(yc * w + xc) * c + ch] as i64
                    }
                }
            }
        };
        let one = 1i64 << f;
        let x0 = (sx as i64).div_euclid(one);
        let y0 = (sy as i64).div_euclid(one);
        let fx = (sx as i64).rem_euclid(one);
        let fy = (sy as i64).rem_euclid(one);
        (0..c)
            .map(|ch| {
                let acc = (one - fy) * ((one - fx) * p(x0, y0, ch) + fx * p(x0 + 1, y0, ch))
                    + fy * ((one - fx) * p(x0, y0 + 1, ch) + fx * p(x0 + 1, y0 + 1, ch));
                let q = 1i64 << (2 * f);
                (acc + q / 2).div_euclid(q).clamp(0, 255) as u8
            })
            .collect()
    }

    /// The bilinear formula on a unit cell: corners give corner values, the
    /// centre gives the mean.
    // Bilinear interpolation on the unit square, f(x,y) = f00(1-x)(1-y) +
    // f10 x(1-y) + f01(1-x)y + f11 xy: Press, Teukolsky, Vetterling, Flannery
    // (2007), "Numerical Recipes", 3rd ed., sec. 3.6, eq. 3.6.5.
    #[test]
    fn unit_cell_corners_and_centre() {
        let src = [0u8, 100, 50, 250];
        let v = ImageView::new(&src, 2, 2, 2).unwrap();
        let f = 4;
        let mut o = [0u8; 1];
        for (sx, sy, want) in [
            (0, 0, 0u8),
            (16, 0, 100),
            (0, 16, 50),
            (16, 16, 250),
            (8, 8, 100),
            // x = 0.25, y = 0.75: 0*.75*.25 + 100*.25*.25 + 50*.75*.75 + 250*.25*.75
            // = 6.25 + 28.125 + 46.875 = 81.25 -> 81
            (4, 12, 81),
        ] {
            sample_pixel(&v, sx, sy, f, Border::Clamp, &mut o).unwrap();
            assert_eq!(o[0], want, "at ({sx}, {sy})");
        }
    }

    #[test]
    fn far_coordinates_follow_the_border_rule() {
        let src = [7u8, 9, 11, 13];
        let v = ImageView::new(&src, 2, 2, 2).unwrap();
        let mut o = [0u8; 1];
        for (sx, sy) in [(i32::MIN, 0), (i32::MAX, i32::MAX), (-1, -1), (0, i32::MIN)] {
            sample_pixel(&v, sx, sy, 10, Border::Fill(200), &mut o).unwrap();
            let clamped_x = sx.clamp(-2 << 10, 3 << 10);
            let clamped_y = sy.clamp(-2 << 10, 3 << 10);
            assert_eq!(
                o.to_vec(),
                model(&src, 2, 2, 1, clamped_x, clamped_y, 10, Border::Fill(200))
            );
        }
        sample_pixel(&v, i32::MAX, i32::MAX, 10, Border::Clamp, &mut o).unwrap();
        assert_eq!(o[0], 13);
        sample_pixel(&v, i32::MIN, i32::MIN, 10, Border::Fill(3), &mut o).unwrap();
        assert_eq!(o[0], 3);
    }

    #[test]
    fn geometry_and_map_rejections() {
        assert!(matches!(
            WarpGeometry::new(4, 4, 4, 4, 1),
            Err(Error::BadParameter {
                name: "frac_bits",
                ..
            })
        ));
        assert!(matches!(
            WarpGeometry::new(4, 4, 40000, 4, 4),
            Err(Error::TooLarge { .. })
        ));
        let g = WarpGeometry::new(2, 2, 4, 4, 4).unwrap();
        let mut c = [0i32; 8];
        c[5] = -(4 << 4) - 1;
        assert_eq!(
            PixelMap::new(&c, g).unwrap_err(),
            Error::MapOutOfRange {
                axis: "y",
                index: 2,
                value: -65,
                min: -64,
                max: 112
            }
        );
        // Views that do not match the geometry.
        let m = PixelMap::new(&[0; 8], g).unwrap();
        let src = [0u8; 16];
        let mut out = [0u8; 8];
        let sv = ImageView::new(&src, 4, 4, 4).unwrap();
        assert!(matches!(
            m.warp_rows(
                &ImageView::new(&src, 4, 3, 4).unwrap(),
                &mut ImageViewMut::new(&mut out, 2, 2, 2).unwrap(),
                0,
                Border::Clamp
            ),
            Err(Error::SizeMismatch { .. })
        ));
        assert_eq!(
            m.warp_rows(
                &sv,
                &mut ImageViewMut::new(&mut out, 2, 2, 2).unwrap(),
                1,
                Border::Clamp
            ),
            Err(Error::RowRange {
                first_row: 1,
                rows: 2,
                height: 2
            })
        );
        assert!(m
            .warp_rows(
                &sv,
                &mut ImageViewMut::new(&mut out, 2, 1, 2).unwrap(),
                usize::MAX,
                Border::Clamp
            )
            .is_err());
        assert!(matches!(
            m.warp_rows(
                &sv,
                &mut ImageViewMut::interleaved(&mut out, 2, 1, 6, 3).unwrap(),
                0,
                Border::Clamp
            ),
            Err(Error::UnsupportedChannels { channels: 3, .. })
        ));
    }

    #[test]
    fn grid_step_overflow_is_detected() {
        // k = 6, F = 10: a cell whose corners are 3 source widths apart.
        let g = WarpGeometry::new(64, 64, 32767, 32767, 10).unwrap();
        let big = (32767 << 10) - 1;
        let pts = [0, 0, big, 0, 0, 0, 0, 0];
        assert!(matches!(
            ControlGrid::new(&pts, g, 6),
            Err(Error::GridCellOverflow { col: 0, row: 0, .. })
        ));
    }

    #[test]
    fn blob_rejections() {
        let g = WarpGeometry::new(5, 5, 8, 8, 4).unwrap();
        let (c, r) = ControlGrid::grid_size(&g, 2).unwrap();
        assert_eq!((c, r), (2, 2));
        let pts = [0, 0, 64, 0, 0, 64, 64, 64];
        let m = ControlGrid::new(&pts, g, 2).unwrap();
        let mut blob = vec![0u8; m.blob_len()];
        m.write_blob(&mut blob).unwrap();
        assert!(ControlGrid::from_blob(&blob).is_ok());
        assert_eq!(
            ControlGrid::from_blob(&blob[..10]).unwrap_err(),
            Error::BlobSize {
                expected: 32,
                got: 10
            }
        );
        let mut b = blob.clone();
        b[0] = b'X';
        assert!(matches!(
            ControlGrid::from_blob(&b),
            Err(Error::BlobMagic { .. })
        ));
        let mut b = blob.clone();
        b[4] = 2;
        assert_eq!(
            ControlGrid::from_blob(&b).unwrap_err(),
            Error::BlobVersion {
                got: 2,
                supported: 1
            }
        );
        let mut b = blob.clone();
        b.push(0);
        assert!(matches!(
            ControlGrid::from_blob(&b),
            Err(Error::BlobSize { .. })
        ));
        // A field change with a recomputed CRC is caught by the field checks.
        let reseal = |b: &mut Vec<u8>| {
            let crc = crc32(&[&b[..28], &b[32..]]);
            b[28..32].copy_from_slice(&crc.to_le_bytes());
        };
        let mut b = blob.clone();
        b[16] = 7;
        reseal(&mut b);
        assert!(matches!(
            ControlGrid::from_blob(&b),
            Err(Error::BlobField {
                field: "grid_log2",
                got: 7,
                ..
            })
        ));
        let mut b = blob.clone();
        b[18] = 3;
        reseal(&mut b);
        assert_eq!(
            ControlGrid::from_blob(&b).unwrap_err(),
            Error::GridCoverage {
                output: (5, 5),
                grid: (3, 2),
                needed: (2, 2)
            }
        );
        let mut b = blob.clone();
        b[32..36].copy_from_slice(&(-10_000i32).to_le_bytes());
        reseal(&mut b);
        assert!(matches!(
            ControlGrid::from_blob(&b),
            Err(Error::MapOutOfRange {
                axis: "x",
                index: 0,
                ..
            })
        ));
        let mut b = blob.clone();
        b[22] = 1;
        reseal(&mut b);
        assert!(matches!(
            ControlGrid::from_blob(&b),
            Err(Error::BlobField { field: "flags", .. })
        ));
        let mut b = blob.clone();
        b[6] = 33;
        assert!(matches!(
            ControlGrid::from_blob(&b),
            Err(Error::BlobField {
                field: "header_len",
                ..
            })
        ));
    }

    fn arb_border() -> impl Strategy<Value = Border> {
        prop_oneof![Just(Border::Clamp), any::<u8>().prop_map(Border::Fill)]
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]

        /// The pixel-map path equals the i64 transcription of the model on
        /// arbitrary in-range coordinates, any channel count, any strip.
        #[test]
        fn pixel_map_matches_model(
            w in 1usize..7, h in 1usize..6, ow in 1usize..6, oh in 1usize..6,
            c in prop_oneof![Just(1usize), Just(3usize), Just(2usize), Just(4usize)],
            f in 2u32..=10, border in arb_border(), seed in any::<u64>(),
            split in 0usize..6,
        ) {
            let g = WarpGeometry::new(ow, oh, w, h, f).unwrap();
            let (xl, xh) = g.coord_range_x();
            let (yl, yh) = g.coord_range_y();
            let mut st = seed | 1;
            let mut next = || { st ^= st << 13; st ^= st >> 7; st ^= st << 17; st };
            let src: Vec<u8> = (0..w * h * c).map(|_| next() as u8).collect();
            let coords: Vec<i32> = (0..ow * oh).flat_map(|_| {
                let x = xl + (next() % (xh - xl + 1) as u64) as i32;
                let y = yl + (next() % (yh - yl + 1) as u64) as i32;
                [x, y]
            }).collect();
            let map = PixelMap::new(&coords, g).unwrap();
            let sv = ImageView::interleaved(&src, w, h, w * c, c).unwrap();
            let mut full = vec![0u8; ow * oh * c];
            map.warp_rows(&sv, &mut ImageViewMut::interleaved(&mut full, ow, oh, ow * c, c).unwrap(),
                0, border).unwrap();
            for p in 0..ow * oh {
                let want = model(&src, w, h, c, coords[2 * p], coords[2 * p + 1], f, border);
                prop_assert_eq!(&full[p * c..(p + 1) * c], &want[..]);
            }
            // Strips reproduce the same rows.
            let split = split.min(oh);
            let mut strips = vec![0u8; ow * oh * c];
            let (a, b) = strips.split_at_mut(split * ow * c);
            if split > 0 {
                map.warp_rows(&sv, &mut ImageViewMut::interleaved(a, ow, split, ow * c, c).unwrap(),
                    0, border).unwrap();
            }
            if split < oh {
                map.warp_rows(&sv, &mut ImageViewMut::interleaved(b, ow, oh - split, ow * c, c).unwrap(),
                    split, border).unwrap();
            }
            prop_assert_eq!(strips, full);
        }

        /// The incremental grid path equals the closed formula for every
        /// output pixel, and the closed formula equals the rounded exact
        /// bilinear grid value (computed independently in i128).
        #[test]
        fn grid_matches_closed_formula_and_pixel_map_path(
            ow in 1usize..40, oh in 1usize..30, w in 1usize..20, h in 1usize..20,
            k in 2u32..=6, f in 2u32..=10, c in prop_oneof![Just(1usize), Just(3usize)],
            border in arb_border(), seed in any::<u64>(), first in 0usize..30,
        ) {
            let g = WarpGeometry::new(ow, oh, w, h, f).unwrap();
            let (cols, rows) = ControlGrid::grid_size(&g, k).unwrap();
            let (xl, xh) = g.coord_range_x();
            let (yl, yh) = g.coord_range_y();
            let mut st = seed | 1;
            let mut next = || { st ^= st << 13; st ^= st >> 7; st ^= st << 17; st };
            let pts: Vec<i32> = (0..cols * rows).flat_map(|_| {
                [xl + (next() % (xh - xl + 1) as u64) as i32,
                 yl + (next() % (yh - yl + 1) as u64) as i32]
            }).collect();
            let grid = match ControlGrid::new(&pts, g, k) {
                Ok(m) => m,
                Err(Error::GridCellOverflow { .. }) => return Ok(()),
                Err(e) => panic!("{e}"),
            };
            let s = 1i128 << k;
            let mut coords = vec![0i32; 2 * ow * oh];
            for y in 0..oh {
                for x in 0..ow {
                    let (cx, cy) = grid.coord(x, y).unwrap();
                    let i = (x >> k).min(cols - 2);
                    let j = (y >> k).min(rows - 2);
                    let u = (x - (i << k)) as i128;
                    let v = (y - (j << k)) as i128;
                    for (a, got) in [(0usize, cx), (1, cy)] {
                        let at = |ii: usize, jj: usize| pts[2 * (jj * cols + ii) + a] as i128;
                        let num = (s - u) * (s - v) * at(i, j) + u * (s - v) * at(i + 1, j)
                            + (s - u) * v * at(i, j + 1) + u * v * at(i + 1, j + 1);
                        let want = (2 * num + s * s).div_euclid(2 * s * s);
                        prop_assert_eq!(got as i128, want);
                    }
                    coords[2 * (y * ow + x)] = cx;
                    coords[2 * (y * ow + x) + 1] = cy;
                }
            }
            let src: Vec<u8> = (0..w * h * c).map(|_| next() as u8).collect();
            let sv = ImageView::interleaved(&src, w, h, w * c, c).unwrap();
            let first = first.min(oh - 1);
            let rows_out = oh - first;
            let mut a = vec![0u8; ow * rows_out * c];
            let mut b = vec![0u8; ow * rows_out * c];
            grid.warp_rows(&sv, &mut ImageViewMut::interleaved(&mut a, ow, rows_out, ow * c, c).unwrap(),
                first, border).unwrap();
            let pmap = PixelMap::new(&coords, g).unwrap();
            pmap.warp_rows(&sv, &mut ImageViewMut::interleaved(&mut b, ow, rows_out, ow * c, c).unwrap(),
                first, border).unwrap();
            prop_assert_eq!(&a, &b);
            // Through a blob, too.
            let mut blob = vec![0u8; grid.blob_len()];
            grid.write_blob(&mut blob).unwrap();
            let back = ControlGrid::from_blob(&blob).unwrap();
            let mut d = vec![0u8; ow * rows_out * c];
            back.warp_rows(&sv, &mut ImageViewMut::interleaved(&mut d, ow, rows_out, ow * c, c).unwrap(),
                first, border).unwrap();
            prop_assert_eq!(d, b);
        }

        /// Arbitrary bytes, and arbitrary single-byte corruptions of a valid
        /// blob, never panic and never parse as a different valid grid.
        #[test]
        fn blob_parser_never_panics(bytes in proptest::collection::vec(any::<u8>(), 0..200),
                                    pos in 0usize..96, flip in 1u8..=255) {
            let _ = ControlGrid::from_blob(&bytes);
            let g = WarpGeometry::new(9, 5, 8, 8, 3).unwrap();
            let (cols, rows) = ControlGrid::grid_size(&g, 2).unwrap();
            let pts: Vec<i32> = (0..cols * rows).flat_map(|i| [(i as i32 % cols as i32) * 32, (i / cols) as i32 * 32]).collect();
            let m = ControlGrid::new(&pts, g, 2).unwrap();
            let mut blob = vec![0u8; m.blob_len()];
            m.write_blob(&mut blob).unwrap();
            let pos = pos % blob.len();
            blob[pos] ^= flip;
            prop_assert!(ControlGrid::from_blob(&blob).is_err());
            let cut = pos.min(blob.len() - 1);
            prop_assert!(ControlGrid::from_blob(&blob[..cut]).is_err());
        }
    }
}
