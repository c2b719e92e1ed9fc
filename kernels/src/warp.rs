//! Geometric warp (lens undistortion): bilinear sampling at fixed-point
//! source coordinates, driven by a pixel map (one coordinate pair per
//! output pixel, [`PixelMap`]) or by a control grid (control points every
//! `2^k` output pixels, [`ControlGrid`]), for grey or interleaved
//! multi-channel `u8` images, one strip of output rows at a time.
//!
//! Kernel ids (golden vectors, `report.json`, on-target figures):
//! `warp.pixel_map`, `warp.control_grid` and `warp.grid_stream` (the
//! control grid fed row by row, [`GridStream`]).
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
//! parsed table borrows the blob; nothing is copied. Reading and writing
//! blobs needs the cargo feature `grid-blob` (the CRC comes from the `crc`
//! crate); without it a firmware builds its grid from points
//! ([`ControlGrid::new`]) and the kernel crate depends on nothing beyond
//! `core`.
//!
//! # Bands of source rows and the row stream (image mode)
//!
//! A grid can be run from a **band** of source rows instead of a whole
//! source frame, for firmware that receives camera rows one at a time and
//! cannot hold a frame:
//!
//! * [`ControlGrid::source_rows`]`(first_row, rows)` says which source rows
//!   an output strip reads: the hull of the tap rows `y0` and `y0 + 1` of
//!   all its pixels (weight-zero taps included), clamped into
//!   `0..=src_height - 1`. It is exact, not a bound: along one output row of
//!   one cell the grid coordinate `c(u) = C00 + ((A0 + u * D) >> 2k)` is the
//!   floor of a linear function of `u`, hence monotonic, so its extremes are
//!   at the cell's first and last pixel; the function evaluates those two
//!   per row and cell.
//! * [`ControlGrid::band_rows`]`(strip_rows)` is the ring height a stream
//!   needs when output is made in strips of `strip_rows` rows, each as soon
//!   as its rows are in: `max over strips s of T(s) - first(s) + 1`, where
//!   `first(s)` is the first row strip `s` reads and `T(s)` the largest last
//!   row of strips `0..=s` (strips come out in order, so strip `s` waits for
//!   every earlier strip's rows too).
//! * [`ControlGrid::warp_band`] warps a strip from a [`SourceBand`] (caller
//!   rows, in order or as a ring) and refuses a band that lacks a row the
//!   strip reads ([`Error::BandRows`]).
//! * [`GridStream`] owns the order: the caller pushes source rows (or lets a
//!   DMA write into [`GridStream::row_slot`]) into a caller ring of at
//!   least `band_rows(strip_rows)` rows (row `y` in ring row `y % ring_rows`)
//!   and takes each strip with [`GridStream::next_strip`] as soon as it is
//!   ready. A ready strip must be taken before the next row is pushed;
//!   with that rule a ring of `band_rows` rows never loses a row a later
//!   strip reads (for any later strip `s'`, `T(s') >= ` the row being pushed,
//!   so `first(s') >= T(s') - band + 1 >` the row it overwrites).
//!
//! The band path runs the same row loop as [`ControlGrid::warp_rows`], with
//! source row `y` read from its slot in the band, so the output is
//! bit-identical to the whole-frame warp (property tests on random grids,
//! frames, sizes, strips and ring positions).
//!
//! Ring the demo lens needs (the demo camera of the host tool, wide angle
//! with barrel distortion, fit-to-view undistortion to the same size, grid
//! step 16, `F = 5`, grey; `fixsight-verify report`, row
//! `warp.grid_stream`, and the host test `demo_lens_band_rows`):
//!
//! | frame | strips of 1 row | strips of 16 rows |
//! |---|---|---|
//! | 320 x 240 | 19 rows, 6 080 bytes | 32 rows, 10 240 bytes |
//! | 640 x 480 | 35 rows, 22 400 bytes | 48 rows, 30 720 bytes |
//!
//! # The all-inside grey loop
//!
//! For one-channel images, an output row of one cell whose taps all lie
//! inside the image (`0 <= x0 <= W-2`, `0 <= y0 <= H-2` at both ends of
//! the row, which covers every pixel between, the coordinate being
//! monotonic) runs a loop without border tests. It computes the same
//! numbers by exact integer identities: the cell accumulator is rescaled to
//! 12 fraction bits with the base coordinate folded in,
//! `X = (C00 << 12) + (A << (12 - 2k))`, so `X >> 12` is the grid
//! coordinate, `x0 = X >> (12 + F)`, `fx = (X >> 12) & (2^F - 1)` (likewise
//! y); then `top = (a << F) + (b - a) * fx`, `bot = (c << F) + (d - c) * fx`,
//! `acc = (top << F) + (bot - top) * fy`, `out = (acc + 2^(2F-1)) >> 2F`,
//! which equal the sampling model's weighted sums term for term. A port
//! needs none of this to match the golden vectors; it is how the loop
//! reaches its cost (see `targets/README.md`).
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
#[cfg(feature = "grid-blob")]
const BLOB_CRC: crc::Crc<u32> = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC);

/// CRC-32 (ISO-HDLC) of `parts` concatenated, as stored in a blob header.
/// Feature `grid-blob`.
///
/// ```
/// assert_eq!(fixsight::warp::crc32(&[b"1234", b"56789"]), 0xCBF4_3926);
/// ```
#[cfg(feature = "grid-blob")]
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
        self.check_strip(src.channels(), dst, first_row, dst.height())
    }

    /// Checks an output strip of `rows` rows written into the first rows of
    /// `dst` (width, row range, channels) against this geometry and a source
    /// of `channels` channels.
    fn check_strip(
        &self,
        channels: usize,
        dst: &ImageViewMut<'_, u8>,
        first_row: usize,
        rows: usize,
    ) -> Result<()> {
        if dst.width() != self.out_width {
            return Err(Error::SizeMismatch {
                what: "warp output strip vs map geometry",
                expected: (self.out_width, dst.height()),
                got: (dst.width(), dst.height()),
            });
        }
        if first_row > self.out_height || rows > self.out_height - first_row {
            return Err(Error::RowRange {
                first_row,
                rows,
                height: self.out_height,
            });
        }
        if rows > dst.height() {
            return Err(Error::SizeMismatch {
                what: "warp output strip rows",
                expected: (self.out_width, rows),
                got: (dst.width(), dst.height()),
            });
        }
        if dst.channels() != channels {
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
    let s = Sampler::<false>::new(
        Rows::frame(src),
        src.width(),
        src.height(),
        frac_bits,
        border,
    );
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

/// Where the sampler finds the source rows: source row `y` is row
/// `slot(y)` of `view`, `slot(y) = y + shift` (wrapping), minus `cap` once
/// that reaches `cap`. A whole frame is `shift = 0`, `cap = height`; a ring
/// band of `cap` rows holding source rows `f .. f + cap` with row `f` at slot
/// `s` is `shift = s - f` (wrapping). Callers read only rows the band holds
/// (proved by [`ControlGrid::source_rows`] for grids).
#[derive(Clone, Copy)]
struct Rows<'s> {
    view: ImageView<'s, u8>,
    shift: usize,
    cap: usize,
}

impl<'s> Rows<'s> {
    /// A whole source frame.
    fn frame(view: &ImageView<'s, u8>) -> Self {
        Self {
            view: *view,
            shift: 0,
            cap: view.height(),
        }
    }

    /// Slot of source row `y` (a row the band holds).
    #[inline(always)]
    fn slot(&self, y: usize) -> usize {
        let s = y.wrapping_add(self.shift);
        if s >= self.cap {
            s.wrapping_sub(self.cap)
        } else {
            s
        }
    }

    /// Source row `y` (a row the band holds); without `RING` the rows are
    /// a whole frame (`shift = 0`, no wrap) and the slot test is left out.
    #[inline(always)]
    fn row<const RING: bool>(&self, y: usize) -> &'s [u8] {
        if RING {
            self.view.row_at(self.slot(y))
        } else {
            self.view.row_at(y)
        }
    }
}

/// The sampling model bound to one source: a whole frame, or with `RING`
/// a band of rows in a ring.
struct Sampler<'s, const RING: bool> {
    rows: Rows<'s>,
    f: u32,
    mask: i32,
    one: i32,
    border: Border,
    /// `width - 1` and `height - 1` of the source image: the fast path
    /// needs `x0 < wm1`, `y0 < hm1`.
    wm1: u32,
    hm1: u32,
}

impl<'s, const RING: bool> Sampler<'s, RING> {
    fn new(rows: Rows<'s>, width: usize, height: usize, f: u32, border: Border) -> Self {
        Self {
            rows,
            f,
            mask: (1 << f) - 1,
            one: 1 << f,
            border,
            wm1: (width - 1) as u32,
            hm1: (height - 1) as u32,
        }
    }

    /// Tap `(x, y)`, channel `ch`, with the border rule.
    #[inline(always)]
    fn tap<const C: usize>(&self, x: i32, y: i32, ch: usize) -> i32 {
        let inside = x >= 0 && (x as u32) <= self.wm1 && y >= 0 && (y as u32) <= self.hm1;
        if inside {
            self.rows.row::<RING>(y as usize)[x as usize * C + ch] as i32
        } else {
            match self.border {
                Border::Fill(c) => c as i32,
                Border::Clamp => {
                    let xc = x.clamp(0, self.wm1 as i32) as usize;
                    let yc = y.clamp(0, self.hm1 as i32) as usize;
                    self.rows.row::<RING>(yc)[xc * C + ch] as i32
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
            let r0 = self.rows.row::<RING>(y0 as usize);
            let r1 = self.rows.row::<RING>(y0 as usize + 1);
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
        let g = &self.geom;
        let s = Sampler::<false>::new(
            Rows::frame(src),
            g.src_width,
            g.src_height,
            g.frac_bits,
            border,
        );
        let w = g.out_width;
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
    #[cfg(feature = "grid-blob")]
    Bytes(&'a [u8]),
}

impl Points<'_> {
    /// Point `p` as its raw `(x, y)` pair; in range by construction.
    #[inline(always)]
    fn pair(&self, p: usize) -> (i32, i32) {
        match *self {
            Points::Words(w) => match w.get(2 * p..2 * p + 2) {
                Some(&[x, y]) => (x, y),
                // Not reached: construction checked the length.
                _ => (0, 0),
            },
            #[cfg(feature = "grid-blob")]
            Points::Bytes(b) => match b.get(8 * p..8 * p + 8) {
                Some(&[a0, a1, a2, a3, b0, b1, b2, b3]) => (
                    i32::from_le_bytes([a0, a1, a2, a3]),
                    i32::from_le_bytes([b0, b1, b2, b3]),
                ),
                // Not reached: construction checked the payload length.
                _ => (0, 0),
            },
        }
    }

    /// Raw value `k` (`2 * point + axis`); in range by construction.
    #[inline(always)]
    fn get(&self, k: usize) -> i32 {
        match *self {
            Points::Words(w) => w[k],
            #[cfg(feature = "grid-blob")]
            Points::Bytes(b) => match b.get(4 * k..4 * k + 4) {
                Some(&[b0, b1, b2, b3]) => i32::from_le_bytes([b0, b1, b2, b3]),
                // Not reached: construction checked the payload length.
                _ => 0,
            },
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
    /// Feature `grid-blob`.
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
    #[cfg(feature = "grid-blob")]
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
    /// bytes) and returns its length. Feature `grid-blob`.
    ///
    /// ```
    /// # use fixsight::warp::{ControlGrid, WarpGeometry};
    /// let g = WarpGeometry::new(4, 4, 4, 4, 2)?;
    /// let mut small = [0u8; 63];
    /// assert!(ControlGrid::new(&[0; 8], g, 2)?.write_blob(&mut small).is_err());
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    #[cfg(feature = "grid-blob")]
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
        let n = dst.height();
        self.dispatch::<false>(Rows::frame(src), dst, first_row, n, border);
        Ok(())
    }

    /// [`warp_rows`](Self::warp_rows) for grey (one-channel) images only:
    /// the same output, but a firmware that calls only this links the grey
    /// loop and none of the 2..4-channel ones. A source with another
    /// channel count is [`Error::UnsupportedChannels`].
    ///
    /// ```
    /// use fixsight::filter::Border;
    /// use fixsight::warp::{ControlGrid, WarpGeometry};
    /// use fixsight::{Error, ImageView, ImageViewMut};
    /// let g = WarpGeometry::new(4, 4, 4, 4, 2)?;
    /// let m = ControlGrid::new(&[0, 0, 16, 0, 0, 16, 16, 16], g, 2)?; // identity
    /// let src: [u8; 16] = core::array::from_fn(|i| 3 * i as u8);
    /// let mut out = [0u8; 16];
    /// m.warp_rows_grey(&ImageView::new(&src, 4, 4, 4)?, &mut ImageViewMut::new(&mut out, 4, 4, 4)?,
    ///                  0, Border::Clamp)?;
    /// assert_eq!(out, src);
    /// let rgb = [0u8; 48];
    /// let mut o3 = [0u8; 48];
    /// assert!(matches!(
    ///     m.warp_rows_grey(&ImageView::interleaved(&rgb, 4, 4, 12, 3)?,
    ///                      &mut ImageViewMut::interleaved(&mut o3, 4, 4, 12, 3)?, 0, Border::Clamp),
    ///     Err(Error::UnsupportedChannels { channels: 3, .. })));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn warp_rows_grey(
        &self,
        src: &ImageView<'_, u8>,
        dst: &mut ImageViewMut<'_, u8>,
        first_row: usize,
        border: Border,
    ) -> Result<()> {
        if src.channels() != 1 {
            return Err(Error::UnsupportedChannels {
                channels: src.channels(),
                accepted: "1 (grey)",
            });
        }
        self.geom.check_views(src, dst, first_row)?;
        let n = dst.height();
        self.rows::<1, false>(Rows::frame(src), dst, first_row, n, border);
        Ok(())
    }

    /// The source rows output rows `first_row .. first_row + rows` read:
    /// every tap row `y0` and `y0 + 1` of every output pixel of the strip
    /// (also taps of weight zero), clamped into `0 ..= src_height - 1`. With
    /// [`Border::Fill`] a tap row outside the image is not read at all, so
    /// the range is then the clamped hull (never narrower than what is
    /// read). Exact, not an estimate: along one output row of one cell the
    /// grid coordinate is monotonic (the floor of a linear function of `u`),
    /// so its extremes are at the cell's first and last output pixel, and
    /// this function evaluates the coordinate there, per row and cell of
    /// the strip. Cost: two coordinate evaluations per row and cell.
    ///
    /// A strip of out-of-range rows is [`Error::RowRange`].
    ///
    /// ```
    /// use fixsight::warp::{ControlGrid, SourceRows, WarpGeometry};
    /// // 8x8 output from an 8x8 source, F = 2, step 4; the middle row of
    /// // points is pulled up by 1.5 source rows (raw 6 = 1.5 px).
    /// let g = WarpGeometry::new(8, 8, 8, 8, 2)?;
    /// let mut pts = [0i32; 18];
    /// for j in 0..3 {
    ///     for i in 0..3 {
    ///         pts[2 * (3 * j + i)] = 16 * i as i32;
    ///         pts[2 * (3 * j + i) + 1] = 16 * j as i32 - if j == 1 { 6 } else { 0 };
    ///     }
    /// }
    /// let m = ControlGrid::new(&pts, g, 2)?;
    /// // Output row 4 samples source y = 2.5: rows 2 and 3.
    /// assert_eq!(m.source_rows(4, 1)?, SourceRows { first: 2, last: 3 });
    /// // Rows 0..4 sample y from 0 up to 3/4 of 2.5 px (raw 7.5, rounded
    /// // half up to 8 = 2.0 px): tap rows 0..=3.
    /// assert_eq!(m.source_rows(0, 4)?, SourceRows { first: 0, last: 3 });
    /// assert!(m.source_rows(6, 3).is_err()); // past the output
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn source_rows(&self, first_row: usize, rows: usize) -> Result<SourceRows> {
        let g = &self.geom;
        if rows == 0 || first_row >= g.out_height || rows > g.out_height - first_row {
            return Err(Error::RowRange {
                first_row,
                rows,
                height: g.out_height,
            });
        }
        let sh = 2 * self.k;
        let (mut lo, mut hi) = (i32::MAX, i32::MIN);
        for y in first_row..first_row + rows {
            let (j, v) = self.cell_row(y);
            for i in 0..self.cols - 1 {
                let Some((xs, xe)) = self.cell_span(i) else {
                    break;
                };
                let a = self.axis(i, j, v, 1);
                for c in [a.at(0, sh), a.at((xe - xs - 1) as i32, sh)] {
                    lo = lo.min(c);
                    hi = hi.max(c);
                }
            }
        }
        let f = g.frac_bits;
        let hm1 = g.src_height as i32 - 1;
        Ok(SourceRows {
            first: (lo >> f).clamp(0, hm1) as usize,
            last: ((hi >> f) + 1).clamp(0, hm1) as usize,
        })
    }

    /// Rows a ring of source rows must hold for output made in strips of
    /// `strip_rows` rows (the last strip shorter) as soon as the source
    /// rows each strip reads are in: with `T(s)` the largest last row
    /// ([`source_rows`](Self::source_rows)) of strips `0..=s` (strip `s`
    /// can be made once row `T(s)` is in, not before any earlier strip)
    /// and `first(s)` the first row strip `s` reads, the band is
    /// `max over s of T(s) - first(s) + 1`. A ring of that many rows never
    /// overwrites a row a strip still needs when each ready strip is taken
    /// before the next row is pushed ([`GridStream`] enforces this).
    ///
    /// `strip_rows = 0` is [`Error::BadParameter`]; more rows than the output
    /// height mean one strip.
    ///
    /// ```
    /// use fixsight::warp::{ControlGrid, WarpGeometry};
    /// // Identity 16x16 grid, step 4: strips of 4 rows read 5 source rows
    /// // (4 + the zero-weight tap below), strips of 1 row read 2.
    /// let g = WarpGeometry::new(16, 16, 16, 16, 2)?;
    /// let pts: Vec<i32> = (0..25).flat_map(|p| [16 * (p % 5), 16 * (p / 5)]).collect();
    /// let m = ControlGrid::new(&pts, g, 2)?;
    /// assert_eq!(m.band_rows(4)?, 5);
    /// assert_eq!(m.band_rows(1)?, 2);
    /// assert!(m.band_rows(0).is_err());
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn band_rows(&self, strip_rows: usize) -> Result<usize> {
        if strip_rows == 0 {
            return Err(Error::BadParameter {
                name: "strip_rows",
                expected: "at least 1",
                got: 0,
            });
        }
        let h = self.geom.out_height;
        let (mut reach, mut band, mut y) = (0usize, 1usize, 0usize);
        while y < h {
            let n = strip_rows.min(h - y);
            let r = self.source_rows(y, n)?;
            reach = reach.max(r.last);
            band = band.max(reach - r.first + 1);
            y += n;
        }
        Ok(band)
    }

    /// Warps output rows `first_row .. first_row + dst.height()` from a
    /// band of source rows instead of a whole frame: bit-identical to
    /// [`warp_rows`](Self::warp_rows) on the full source whenever the band
    /// holds every row the strip reads ([`source_rows`](Self::source_rows));
    /// otherwise [`Error::BandRows`] naming both ranges. The band's width and
    /// channels must match the grid's source (`SizeMismatch`,
    /// `UnsupportedChannels`), the strip as for `warp_rows`.
    ///
    /// ```
    /// use fixsight::filter::Border;
    /// use fixsight::warp::{ControlGrid, SourceBand, WarpGeometry};
    /// use fixsight::{Error, ImageView, ImageViewMut};
    /// let g = WarpGeometry::new(4, 4, 4, 4, 2)?;
    /// let m = ControlGrid::new(&[0, 0, 16, 0, 0, 16, 16, 16], g, 2)?; // identity
    /// let src: [u8; 16] = core::array::from_fn(|i| 5 * i as u8);
    /// // A 3-row ring holding source rows 1, 2, 3: row 3 sits in slot 0.
    /// let mut ring = [0u8; 12];
    /// for y in 1..4 {
    ///     ring[(y % 3) * 4..(y % 3) * 4 + 4].copy_from_slice(&src[y * 4..y * 4 + 4]);
    /// }
    /// let band = SourceBand::new(ImageView::new(&ring, 4, 3, 4)?, 1, 1)?;
    /// let mut row = [0u8; 4];
    /// m.warp_band(&band, &mut ImageViewMut::new(&mut row, 4, 1, 4)?, 2, Border::Clamp)?;
    /// assert_eq!(row, src[8..12]);
    /// // Output row 0 reads source rows 0 and 1; row 0 is not in the band.
    /// assert!(matches!(
    ///     m.warp_band(&band, &mut ImageViewMut::new(&mut row, 4, 1, 4)?, 0, Border::Clamp),
    ///     Err(Error::BandRows { needed_first: 0, held_first: 1, .. })));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn warp_band(
        &self,
        band: &SourceBand<'_>,
        dst: &mut ImageViewMut<'_, u8>,
        first_row: usize,
        border: Border,
    ) -> Result<()> {
        let rows = dst.height();
        self.band_strip::<false>(band, dst, first_row, rows, None, border)
    }

    /// [`warp_band`](Self::warp_band) into the first `count` rows of `dst`;
    /// `known` is `source_rows(first_row, count)` when the caller has it.
    /// With `GREY` only the one-channel loop is called (and linked); the
    /// caller has checked that the band is grey.
    fn band_strip<const GREY: bool>(
        &self,
        band: &SourceBand<'_>,
        dst: &mut ImageViewMut<'_, u8>,
        first_row: usize,
        count: usize,
        known: Option<SourceRows>,
        border: Border,
    ) -> Result<()> {
        let g = &self.geom;
        let v = &band.view;
        if v.width() != g.src_width {
            return Err(Error::SizeMismatch {
                what: "warp band width vs grid source width",
                expected: (g.src_width, v.height()),
                got: (v.width(), v.height()),
            });
        }
        g.check_strip(v.channels(), dst, first_row, count)?;
        let need = match known {
            Some(n) => n,
            None => self.source_rows(first_row, count)?,
        };
        let held = band.rows();
        if need.first < held.first || need.last > held.last {
            return Err(Error::BandRows {
                needed_first: need.first,
                needed_last: need.last,
                held_first: held.first,
                held_last: held.last,
            });
        }
        let rows = Rows {
            view: *v,
            shift: band.first_slot.wrapping_sub(band.first_row),
            cap: v.height(),
        };
        if GREY {
            self.rows::<1, true>(rows, dst, first_row, count, border);
        } else {
            self.dispatch::<true>(rows, dst, first_row, count, border);
        }
        Ok(())
    }

    /// The channel dispatch of the checked entry points.
    fn dispatch<const RING: bool>(
        &self,
        src: Rows<'_>,
        dst: &mut ImageViewMut<'_, u8>,
        first_row: usize,
        n: usize,
        border: Border,
    ) {
        match src.view.channels() {
            1 => self.rows::<1, RING>(src, dst, first_row, n, border),
            2 => self.rows::<2, RING>(src, dst, first_row, n, border),
            3 => self.rows::<3, RING>(src, dst, first_row, n, border),
            _ => self.rows::<4, RING>(src, dst, first_row, n, border),
        }
    }

    /// Cell row `j` and offset `v` of output row `y`.
    #[inline(always)]
    fn cell_row(&self, y: usize) -> (usize, i32) {
        let j = (y >> self.k).min(self.rows - 2);
        (j, (y - (j << self.k)) as i32)
    }

    /// Output columns `x_start .. x_end` of cell column `i`, or `None` when
    /// the cell starts past the output (extra points of a short last cell).
    #[inline(always)]
    fn cell_span(&self, i: usize) -> Option<(usize, usize)> {
        let w = self.geom.out_width;
        let x_start = i << self.k;
        if x_start >= w {
            return None;
        }
        let x_end = if i == self.cols - 2 {
            w
        } else {
            (x_start + (1 << self.k)).min(w)
        };
        Some((x_start, x_end))
    }

    /// The incremental form (module docs) of one axis along output row
    /// offset `v` of cell `(i, j)`.
    #[inline(always)]
    fn axis(&self, i: usize, j: usize, v: i32, axis: usize) -> Axis {
        Axis::new(self.corners(i, j, axis), v, self.k)
    }

    fn rows<const C: usize, const RING: bool>(
        &self,
        src: Rows<'_>,
        dst: &mut ImageViewMut<'_, u8>,
        first_row: usize,
        count: usize,
        border: Border,
    ) {
        let g = &self.geom;
        let s = Sampler::<RING>::new(src, g.src_width, g.src_height, g.frac_bits, border);
        let w = g.out_width;
        for r in 0..count {
            let (j, v) = self.cell_row(first_row + r);
            let (fast, runs, cells) = self.row_cells::<C, RING>(&s, dst.row_at_mut(r), j, v);
            // Per cell: 4 corner loads (the left ones are the previous
            // cell's right ones), 4 multiplies, 12 add/sub, 4 shifts.
            tally_per(Op::Load, 4, cells);
            tally(Op::Load, 4);
            tally_per(Op::Mul, 4, cells);
            tally_per(Op::AddSub, 12, cells);
            tally_per(Op::Shift, 4, cells);
            tally_per(Op::Branch, 1, cells);
            tally(Op::Branch, 1);
            // Per all-inside grey run: the range test (4 coordinate
            // evaluations, 8 compares) and the scaled accumulators.
            tally_per(Op::Mul, 4, runs);
            tally_per(Op::Logic, 8, runs);
            tally_per(Op::Shift, 8, runs);
            tally_per(Op::AddSub, 8, runs);
            // Per pixel: 2 accumulator adds, 2 shifts, 2 base adds, loop test.
            tally_per(Op::AddSub, 4, w);
            tally_per(Op::Shift, 2, w);
            tally_per(Op::Logic, 1, w);
            tally_samples(w, fast, C);
        }
    }
}

impl ControlGrid<'_> {
    /// One output row (`out`, cell row `j`, offset `v`), cell by cell.
    /// Returns `(pixels on the all-inside path, grey runs, cells)`. Kept out
    /// of line so that its loop has the registers to itself.
    #[inline(never)]
    fn row_cells<const C: usize, const RING: bool>(
        &self,
        s: &Sampler<'_, RING>,
        out: &mut [u8],
        j: usize,
        v: i32,
    ) -> (usize, usize, usize) {
        let sh = 2 * self.k;
        let (mut fast, mut runs, mut cells) = (0usize, 0usize, 0usize);
        // The left corners of cell `i` are the right ones of cell `i - 1`.
        let (top, bottom) = (j * self.cols, (j + 1) * self.cols);
        let (mut l0, mut l1) = (self.points.pair(top), self.points.pair(bottom));
        for i in 0..self.cols - 1 {
            let Some((x_start, x_end)) = self.cell_span(i) else {
                break;
            };
            cells += 1;
            let (r0, r1) = (
                self.points.pair(top + i + 1),
                self.points.pair(bottom + i + 1),
            );
            let ax = Axis::new((l0.0, r0.0, l1.0, r1.0), v, self.k);
            let ay = Axis::new((l0.1, r0.1, l1.1, r1.1), v, self.k);
            (l0, l1) = (r0, r1);
            let Some(seg) = out.get_mut(x_start * C..x_end * C) else {
                break;
            };
            if C == 1 && grey_inside(s, &ax, &ay, sh, seg) {
                fast += seg.len();
                runs += 1;
            } else {
                fast += cell_pixels::<C, RING>(s, &ax, &ay, sh, seg);
            }
        }
        (fast, runs, cells)
    }
}

/// The general per-pixel loop over one output row of one cell (any
/// channels, any border): the incremental coordinates of the module docs
/// fed to the sampling model. Returns the pixels that took the sampler's
/// all-inside path.
#[inline(never)]
fn cell_pixels<const C: usize, const RING: bool>(
    s: &Sampler<'_, RING>,
    ax: &Axis,
    ay: &Axis,
    sh: u32,
    seg: &mut [u8],
) -> usize {
    let n = seg.len() / C;
    let (mut a_x, mut a_y) = (ax.a0, ay.a0);
    let mut fast = 0usize;
    for (u, o) in seg.chunks_exact_mut(C).enumerate() {
        fast += s.sample::<C>(ax.c00 + (a_x >> sh), ay.c00 + (a_y >> sh), o) as usize;
        // The accumulator is advanced only while another pixel of this cell
        // follows, so it never leaves the proven range.
        if u + 1 < n {
            a_x += ax.d;
            a_y += ay.d;
        }
    }
    fast
}

/// One axis of the incremental grid form along one output row of one
/// cell: the coordinate at offset `u` is `c00 + ((a0 + u * d) >> 2k)`.
#[derive(Clone, Copy)]
struct Axis {
    c00: i32,
    a0: i32,
    d: i32,
}

impl Axis {
    /// From the cell corners `(C00, C10, C01, C11)` of one axis, output row
    /// offset `v` and step `2^k` (module docs: `L`, `R`, `D`, `A`).
    #[inline(always)]
    fn new((c00, c10, c01, c11): (i32, i32, i32, i32), v: i32, k: u32) -> Self {
        let l = v * (c01 - c00);
        let r = ((c10 - c00) << k) + v * (c11 - c10);
        Axis {
            c00,
            a0: (l << k) + (1 << (2 * k - 1)),
            d: r - l,
        }
    }

    /// The raw coordinate at offset `u` (`0..=S`). `a0 + u * d` and
    /// `u * d` stay within the bound construction proved for the cell
    /// (module docs), so the `i32` arithmetic is exact.
    #[inline(always)]
    fn at(&self, u: i32, sh: u32) -> i32 {
        self.c00 + ((self.a0 + u * self.d) >> sh)
    }
}

/// Largest raw coordinate (exclusive) of the all-inside grey loop: its
/// accumulators hold `coordinate << 12` plus 12 fraction bits in a `u32`.
const RUN_COORD_LIMIT: i32 = 1 << 20;

/// The all-inside grey fast path of one output row of one cell: when every
/// tap of every pixel of `seg` lies inside the image (`0 <= x0 <= W-2`,
/// `0 <= y0 <= H-2`, tested at the segment's two ends, between which the
/// coordinate is monotonic), the tap rows sit in the band without wrapping,
/// and the coordinates stay below [`RUN_COORD_LIMIT`], runs [`grey_run`] and
/// returns `true`; otherwise touches nothing and returns `false`.
///
/// The run's accumulators are the cell's `A` scaled to 12 fraction bits
/// (`A << (12 - 2k)`, exact since `2k <= 12`) with the coordinate base
/// folded in: `X = (c00 << 12) + (A << (12 - 2k))`, so `X >> 12` is the
/// grid coordinate `c00 + (A >> 2k)` itself, `x0 = X >> (12 + F)` and
/// `fx = (X >> 12) & (2^F - 1)`. The y accumulator counts from the band's
/// first tap row.
#[inline(always)]
fn grey_inside<const RING: bool>(
    s: &Sampler<'_, RING>,
    ax: &Axis,
    ay: &Axis,
    sh: u32,
    seg: &mut [u8],
) -> bool {
    let Some(last) = seg.len().checked_sub(1) else {
        return true;
    };
    let last = last as i32;
    let f = s.f;
    let (x_a, x_b) = (ax.at(0, sh), ax.at(last, sh));
    let (y_a, y_b) = (ay.at(0, sh), ay.at(last, sh));
    let (xlo, xhi) = (x_a.min(x_b), x_a.max(x_b));
    let (ylo, yhi) = (y_a.min(y_b), y_a.max(y_b));
    // Coordinates are below 2^27 in magnitude and `wm1, hm1 < 2^15`, `F <= 10`.
    if xlo < 0
        || ylo < 0
        || xhi >= (s.wm1 << f) as i32
        || yhi >= (s.hm1 << f) as i32
        || xhi >= RUN_COORD_LIMIT
    {
        return false;
    }
    let y_first = (ylo >> f) as usize;
    let y_last = (yhi >> f) as usize + 1;
    let slot = if RING { s.rows.slot(y_first) } else { y_first };
    if RING && slot + (y_last - y_first) >= s.rows.cap {
        return false;
    }
    let y_base = (y_first as i32) << f;
    if yhi - y_base >= RUN_COORD_LIMIT {
        return false;
    }
    let up = 12 - sh;
    // The true values are in 0..2^32 by the tests above, so the wrapping
    // `u32` arithmetic gives them exactly; the steps keep their
    // two's-complement bits and the loop adds them wrapping.
    let x = (ax.c00 as u32)
        .wrapping_shl(12)
        .wrapping_add((ax.a0 as u32).wrapping_shl(up));
    let y = ((ay.c00 - y_base) as u32)
        .wrapping_shl(12)
        .wrapping_add((ay.a0 as u32).wrapping_shl(up));
    let dx = (ax.d as u32).wrapping_shl(up);
    let dy = (ay.d as u32).wrapping_shl(up);
    let base = s.rows.view.rows_from(slot);
    // A stride below 2^16 lets the compiler see that the tap index cannot
    // overflow (one bounds test per pixel instead of two).
    let Ok(stride) = u16::try_from(s.rows.view.stride()) else {
        return false;
    };
    let acc = (x, y, dx, dy);
    match f {
        2 => grey_run::<2>(base, stride, acc, seg),
        3 => grey_run::<3>(base, stride, acc, seg),
        4 => grey_run::<4>(base, stride, acc, seg),
        5 => grey_run::<5>(base, stride, acc, seg),
        6 => grey_run::<6>(base, stride, acc, seg),
        7 => grey_run::<7>(base, stride, acc, seg),
        8 => grey_run::<8>(base, stride, acc, seg),
        9 => grey_run::<9>(base, stride, acc, seg),
        _ => grey_run::<10>(base, stride, acc, seg),
    }
    true
}

/// The grey inner loop with all four taps inside (see [`grey_inside`]),
/// `F` fractional bits. Per pixel, with the accumulators `(x, y)` of
/// [`grey_inside`]: the taps `a b / c d` at `base[y0 * stride + x0 ..]` and
///
/// ```text
/// top = (a << F) + (b - a) * fx          = a * (2^F - fx) + b * fx
/// bot = (c << F) + (d - c) * fx          = c * (2^F - fx) + d * fx
/// acc = (top << F) + (bot - top) * fy    = top * (2^F - fy) + bot * fy
/// out = (acc + 2^(2F-1)) >> 2F
/// ```
///
/// which is the sampling model term for term (exact integer identities;
/// `0 <= acc <= 255 * 2^2F`, so the saturation of the model never acts).
// Not inlined: each `F` gets a small function of its own, with the loop's
// values in registers.
#[inline(never)]
fn grey_run<const F: u32>(
    base: &[u8],
    stride: u16,
    (mut x, mut y, dx, dy): (u32, u32, u32, u32),
    seg: &mut [u8],
) {
    let mask = (1u32 << F) - 1;
    let half = 1i32 << (2 * F - 1);
    let stride = stride as usize;
    let span = stride + 2;
    // Taps at `i .. i + span` with `i <= last`; `grey_inside` proved every
    // pixel's `i` is, so the early returns are never taken.
    let Some(last) = base.len().checked_sub(span) else {
        return;
    };
    for o in seg.iter_mut() {
        let x0 = (x >> (12 + F)) as usize;
        let fx = ((x >> 12) & mask) as i32;
        // `y0 <= H - 2 < 2^15`: the mask loses nothing and bounds the index.
        let y0 = ((y >> (12 + F)) & 0x7fff) as usize;
        let fy = ((y >> 12) & mask) as i32;
        let i = y0 * stride + x0;
        if i > last {
            return;
        }
        let q = &base[i..i + span];
        let (a, b) = (q[0] as i32, q[1] as i32);
        let (c, d) = (q[stride] as i32, q[stride + 1] as i32);
        let top = (a << F) + (b - a) * fx;
        let bot = (c << F) + (d - c) * fx;
        let acc = (top << F) + (bot - top) * fy;
        *o = ((acc + half) >> (2 * F)) as u8;
        x = x.wrapping_add(dx);
        y = y.wrapping_add(dy);
    }
}

/// The source rows an output strip reads, `first ..= last` (see
/// [`ControlGrid::source_rows`]), or the rows a band holds.
///
/// ```
/// use fixsight::warp::SourceRows;
/// let r = SourceRows { first: 3, last: 9 };
/// assert_eq!(r.count(), 7);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SourceRows {
    /// First source row.
    pub first: usize,
    /// Last source row (inclusive).
    pub last: usize,
}

impl SourceRows {
    /// Number of rows, `last - first + 1` (0 if `last < first`).
    ///
    /// ```
    /// assert_eq!(fixsight::warp::SourceRows { first: 0, last: 0 }.count(), 1);
    /// ```
    pub fn count(&self) -> usize {
        (self.last + 1).saturating_sub(self.first)
    }
}

/// A band of consecutive source rows in caller memory, for
/// [`ControlGrid::warp_band`]: `view` is `src_width` wide and `h` rows high
/// and holds source rows `first_row .. first_row + h`, source row
/// `first_row + t` in view row `(first_slot + t) % h`. A plain band (rows in
/// order) has `first_slot = 0`; a ring filled row after row (row `y` in slot
/// `y % h`) has `first_slot = first_row % h`.
///
/// ```
/// use fixsight::warp::{SourceBand, SourceRows};
/// use fixsight::ImageView;
/// let ring = [0u8; 5 * 8];
/// let band = SourceBand::new(ImageView::new(&ring, 8, 5, 8)?, 12, 12 % 5)?;
/// assert_eq!(band.rows(), SourceRows { first: 12, last: 16 });
/// assert!(SourceBand::new(ImageView::new(&ring, 8, 5, 8)?, 12, 5).is_err());
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug, Clone, Copy)]
pub struct SourceBand<'a> {
    view: ImageView<'a, u8>,
    first_row: usize,
    first_slot: usize,
}

impl<'a> SourceBand<'a> {
    /// A band holding source rows `first_row ..` with `first_row` in view
    /// row `first_slot` (`< view.height()`, else [`Error::BadParameter`]);
    /// `first_row` up to [`crate::image::MAX_DIM`].
    ///
    /// ```
    /// use fixsight::warp::SourceBand;
    /// use fixsight::ImageView;
    /// let rows = [0u8; 3 * 4];
    /// assert!(SourceBand::new(ImageView::new(&rows, 4, 3, 4)?, 0, 0).is_ok());
    /// assert!(SourceBand::new(ImageView::new(&rows, 4, 3, 4)?, 40_000, 0).is_err());
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn new(view: ImageView<'a, u8>, first_row: usize, first_slot: usize) -> Result<Self> {
        if first_slot >= view.height() {
            return Err(Error::BadParameter {
                name: "first_slot",
                expected: "below the band height",
                got: first_slot as i64,
            });
        }
        if first_row > crate::image::MAX_DIM {
            return Err(Error::BadParameter {
                name: "first_row",
                expected: "0..=32767",
                got: first_row as i64,
            });
        }
        Ok(Self {
            view,
            first_row,
            first_slot,
        })
    }

    /// The source rows the band holds.
    ///
    /// ```
    /// use fixsight::warp::{SourceBand, SourceRows};
    /// use fixsight::ImageView;
    /// let rows = [0u8; 2 * 4];
    /// let b = SourceBand::new(ImageView::new(&rows, 4, 2, 4)?, 7, 1)?;
    /// assert_eq!(b.rows(), SourceRows { first: 7, last: 8 });
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn rows(&self) -> SourceRows {
        SourceRows {
            first: self.first_row,
            last: self.first_row + self.view.height() - 1,
        }
    }
}

/// One strip a [`GridStream`] wrote: output rows `first_row .. first_row +
/// rows`, in rows `0 .. rows` of the caller's strip view.
///
/// ```
/// let s = fixsight::warp::StripDone { first_row: 16, rows: 8 };
/// assert_eq!(s.first_row + s.rows, 24);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct StripDone {
    /// First output row of the strip.
    pub first_row: usize,
    /// Rows in the strip (`strip_rows`, fewer for the last strip).
    pub rows: usize,
}

/// The control-grid warp fed row by row: the caller pushes source rows in
/// order (a copy with [`push_row`](Self::push_row), or straight into the
/// ring with [`row_slot`](Self::row_slot) and
/// [`commit_row`](Self::commit_row), e.g. by a camera DMA) and takes each
/// output strip of `strip_rows` rows with [`next_strip`](Self::next_strip)
/// as soon as the source rows it reads are in. Output is bit-identical to
/// [`ControlGrid::warp_rows`] on the whole frame (the same row loop, reading
/// the ring through [`ControlGrid::warp_band`]).
///
/// Memory: a caller ring of at least
/// [`ControlGrid::band_rows`]`(strip_rows)` source rows of
/// `src_width * channels` bytes; source row `y` lives in ring row
/// `y % ring_rows`. No other buffer.
///
/// Order rules (else [`Error::StreamOrder`]): a strip that is ready must be
/// taken before the next row is pushed (this is what keeps a ring of
/// `band_rows` rows from overwriting a row a later strip reads); no more
/// than `src_height` rows per frame. [`reset`](Self::reset) starts the next
/// frame (also after a short or dropped one). Once every source row is in,
/// every remaining strip is ready.
///
/// ```
/// use fixsight::filter::Border;
/// use fixsight::warp::{ControlGrid, GridStream, WarpGeometry};
/// use fixsight::{ImageView, ImageViewMut};
/// // Identity grid, 8x8, step 4, F = 2; strips of 4 rows.
/// let g = WarpGeometry::new(8, 8, 8, 8, 2)?;
/// let pts: Vec<i32> = (0..9).flat_map(|p| [16 * (p % 3), 16 * (p / 3)]).collect();
/// let grid = ControlGrid::new(&pts, g, 2)?;
/// assert_eq!(grid.band_rows(4)?, 5);
/// let mut ring = [0u8; 5 * 8];
/// let mut st = GridStream::new(grid, &mut ring, 1, 4, Border::Clamp)?;
/// let src: Vec<u8> = (0..64).map(|i| i as u8).collect();
/// let (mut out, mut strip) = ([0u8; 64], [0u8; 32]);
/// for y in 0..=8 {
///     // Take every ready strip, then push the next row (if any).
///     while let Some(d) = st.next_strip(&mut ImageViewMut::new(&mut strip, 8, 4, 8)?)? {
///         out[d.first_row * 8..(d.first_row + d.rows) * 8].copy_from_slice(&strip[..d.rows * 8]);
///     }
///     if y < 8 {
///         st.push_row(&src[y * 8..y * 8 + 8])?;
///     }
/// }
/// assert!(st.finished());
/// assert_eq!(&out[..], &src[..]);
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug)]
pub struct GridStream<'g, 'r> {
    grid: ControlGrid<'g>,
    ring: &'r mut [u8],
    ring_rows: usize,
    row_len: usize,
    channels: usize,
    strip_rows: usize,
    band_rows: usize,
    border: Border,
    pushed: usize,
    next_row: usize,
    /// Source rows the strip starting at `next_row` reads.
    pending: SourceRows,
}

impl<'g, 'r> GridStream<'g, 'r> {
    /// A stream over `grid` for sources of `channels` (1..=4) interleaved
    /// channels, output in strips of `strip_rows` (>= 1) rows, with the
    /// caller's `ring` (its first `ring_rows * src_width * channels` bytes
    /// are used, `ring_rows = min(ring.len() / (src_width * channels),
    /// src_height)`, which must be at least `grid.band_rows(strip_rows)`,
    /// else [`Error::BufferTooShort`] with the bytes needed).
    ///
    /// ```
    /// use fixsight::filter::Border;
    /// use fixsight::warp::{ControlGrid, GridStream, WarpGeometry};
    /// use fixsight::Error;
    /// let g = WarpGeometry::new(8, 8, 8, 8, 2)?;
    /// let pts: Vec<i32> = (0..9).flat_map(|p| [16 * (p % 3), 16 * (p / 3)]).collect();
    /// let grid = ControlGrid::new(&pts, g, 2)?;
    /// let mut small = [0u8; 4 * 8];
    /// assert!(matches!(GridStream::new(grid, &mut small, 1, 4, Border::Clamp),
    ///                  Err(Error::BufferTooShort { needed: 40, .. })));
    /// assert!(GridStream::new(grid, &mut small, 5, 1, Border::Clamp).is_err());
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn new(
        grid: ControlGrid<'g>,
        ring: &'r mut [u8],
        channels: usize,
        strip_rows: usize,
        border: Border,
    ) -> Result<Self> {
        if !(1..=4).contains(&channels) {
            return Err(Error::UnsupportedChannels {
                channels,
                accepted: "1 to 4",
            });
        }
        let g = grid.geometry();
        let band_rows = grid.band_rows(strip_rows)?;
        let row_len = g.src_width * channels;
        let ring_rows = (ring.len() / row_len).min(g.src_height);
        if ring_rows < band_rows {
            return Err(Error::BufferTooShort {
                what: "grid stream ring",
                needed: band_rows * row_len,
                got: ring.len(),
            });
        }
        let strip_rows = strip_rows.min(g.out_height);
        let pending = grid.source_rows(0, strip_rows)?;
        Ok(Self {
            grid,
            ring,
            ring_rows,
            row_len,
            channels,
            strip_rows,
            band_rows,
            border,
            pushed: 0,
            next_row: 0,
            pending,
        })
    }

    /// Ring rows the grid needs at this strip height
    /// ([`ControlGrid::band_rows`]).
    ///
    /// ```
    /// # use fixsight::filter::Border;
    /// # use fixsight::warp::{ControlGrid, GridStream, WarpGeometry};
    /// # let g = WarpGeometry::new(8, 8, 8, 8, 2)?;
    /// # let pts: Vec<i32> = (0..9).flat_map(|p| [16 * (p % 3), 16 * (p / 3)]).collect();
    /// # let grid = ControlGrid::new(&pts, g, 2)?;
    /// let mut ring = [0u8; 8 * 8];
    /// let st = GridStream::new(grid, &mut ring, 1, 1, Border::Clamp)?;
    /// assert_eq!(st.band_rows(), 2);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn band_rows(&self) -> usize {
        self.band_rows
    }

    /// Source rows pushed in this frame.
    ///
    /// ```
    /// # use fixsight::filter::Border;
    /// # use fixsight::warp::{ControlGrid, GridStream, WarpGeometry};
    /// # let g = WarpGeometry::new(8, 8, 8, 8, 2)?;
    /// # let pts: Vec<i32> = (0..9).flat_map(|p| [16 * (p % 3), 16 * (p / 3)]).collect();
    /// # let grid = ControlGrid::new(&pts, g, 2)?;
    /// let mut ring = [0u8; 8 * 8];
    /// let mut st = GridStream::new(grid, &mut ring, 1, 1, Border::Clamp)?;
    /// st.push_row(&[0; 8])?;
    /// assert_eq!(st.rows_pushed(), 1);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn rows_pushed(&self) -> usize {
        self.pushed
    }

    /// `true` once every output row of the frame was written.
    ///
    /// ```
    /// # use fixsight::filter::Border;
    /// # use fixsight::warp::{ControlGrid, GridStream, WarpGeometry};
    /// # let g = WarpGeometry::new(8, 8, 8, 8, 2)?;
    /// # let pts: Vec<i32> = (0..9).flat_map(|p| [16 * (p % 3), 16 * (p / 3)]).collect();
    /// # let grid = ControlGrid::new(&pts, g, 2)?;
    /// let mut ring = [0u8; 8 * 8];
    /// let st = GridStream::new(grid, &mut ring, 1, 1, Border::Clamp)?;
    /// assert!(!st.finished());
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn finished(&self) -> bool {
        self.next_row >= self.grid.geom.out_height
    }

    /// Whether the next strip's source rows are all in.
    fn ready(&self) -> bool {
        !self.finished() && self.pending.last < self.pushed
    }

    /// Checks that one more row may be pushed now.
    fn check_push(&self) -> Result<()> {
        if self.pushed >= self.grid.geom.src_height {
            return Err(Error::StreamOrder {
                reason: "every source row of the frame is in; reset for the next frame",
            });
        }
        if self.ready() {
            return Err(Error::StreamOrder {
                reason: "a strip is ready: take it with next_strip before pushing the next row",
            });
        }
        Ok(())
    }

    /// Copies source row `rows_pushed()` into the ring. `row` must be
    /// `src_width * channels` bytes ([`Error::RowLength`]).
    ///
    /// ```
    /// # use fixsight::filter::Border;
    /// # use fixsight::warp::{ControlGrid, GridStream, WarpGeometry};
    /// # let g = WarpGeometry::new(8, 8, 8, 8, 2)?;
    /// # let pts: Vec<i32> = (0..9).flat_map(|p| [16 * (p % 3), 16 * (p / 3)]).collect();
    /// # let grid = ControlGrid::new(&pts, g, 2)?;
    /// let mut ring = [0u8; 8 * 8];
    /// let mut st = GridStream::new(grid, &mut ring, 1, 1, Border::Clamp)?;
    /// assert!(st.push_row(&[0; 7]).is_err());
    /// st.push_row(&[0; 8])?;
    /// st.push_row(&[0; 8])?;
    /// assert!(st.push_row(&[0; 8]).is_err()); // output row 0 is ready: take it first
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn push_row(&mut self, row: &[u8]) -> Result<()> {
        if row.len() != self.row_len {
            return Err(Error::RowLength {
                what: "grid stream source row",
                expected: self.row_len,
                got: row.len(),
            });
        }
        self.row_slot()?.copy_from_slice(row);
        self.commit_row()
    }

    /// The ring row where source row `rows_pushed()` goes, for a camera
    /// DMA (or any writer) to fill in place; [`commit_row`](Self::commit_row)
    /// then counts it in. Same order rules as [`push_row`](Self::push_row).
    ///
    /// ```
    /// # use fixsight::filter::Border;
    /// # use fixsight::warp::{ControlGrid, GridStream, WarpGeometry};
    /// # let g = WarpGeometry::new(8, 8, 8, 8, 2)?;
    /// # let pts: Vec<i32> = (0..9).flat_map(|p| [16 * (p % 3), 16 * (p / 3)]).collect();
    /// # let grid = ControlGrid::new(&pts, g, 2)?;
    /// let mut ring = [0u8; 8 * 8];
    /// let mut st = GridStream::new(grid, &mut ring, 1, 1, Border::Clamp)?;
    /// st.row_slot()?.fill(7);
    /// st.commit_row()?;
    /// assert_eq!(st.rows_pushed(), 1);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn row_slot(&mut self) -> Result<&mut [u8]> {
        self.check_push()?;
        let at = (self.pushed % self.ring_rows) * self.row_len;
        Ok(&mut self.ring[at..at + self.row_len])
    }

    /// Counts in the row written through [`row_slot`](Self::row_slot).
    ///
    /// ```
    /// # use fixsight::filter::Border;
    /// # use fixsight::warp::{ControlGrid, GridStream, WarpGeometry};
    /// # let g = WarpGeometry::new(8, 8, 8, 8, 2)?;
    /// # let pts: Vec<i32> = (0..9).flat_map(|p| [16 * (p % 3), 16 * (p / 3)]).collect();
    /// # let grid = ControlGrid::new(&pts, g, 2)?;
    /// let mut ring = [0u8; 8 * 8];
    /// let mut st = GridStream::new(grid, &mut ring, 1, 1, Border::Clamp)?;
    /// st.commit_row()?;
    /// st.commit_row()?;
    /// assert!(st.commit_row().is_err()); // output row 0 is ready
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn commit_row(&mut self) -> Result<()> {
        self.check_push()?;
        self.pushed += 1;
        Ok(())
    }

    /// Writes the next strip into rows `0..rows` of `dst` (width
    /// `out_width`, the stream's channels, at least `rows` rows) if every
    /// source row it reads is in, and returns which rows it wrote; `None`
    /// when the strip waits for rows, or the frame is finished.
    ///
    /// ```
    /// # use fixsight::filter::Border;
    /// # use fixsight::warp::{ControlGrid, GridStream, WarpGeometry};
    /// # use fixsight::ImageViewMut;
    /// # let g = WarpGeometry::new(8, 8, 8, 8, 2)?;
    /// # let pts: Vec<i32> = (0..9).flat_map(|p| [16 * (p % 3), 16 * (p / 3)]).collect();
    /// # let grid = ControlGrid::new(&pts, g, 2)?;
    /// let mut ring = [0u8; 8 * 8];
    /// let mut st = GridStream::new(grid, &mut ring, 1, 1, Border::Clamp)?;
    /// let mut row = [0u8; 8];
    /// st.push_row(&[9; 8])?;
    /// assert_eq!(st.next_strip(&mut ImageViewMut::new(&mut row, 8, 1, 8)?)?, None);
    /// st.push_row(&[9; 8])?;
    /// let done = st.next_strip(&mut ImageViewMut::new(&mut row, 8, 1, 8)?)?;
    /// assert_eq!(done, Some(fixsight::warp::StripDone { first_row: 0, rows: 1 }));
    /// assert_eq!(row, [9; 8]);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn next_strip(&mut self, dst: &mut ImageViewMut<'_, u8>) -> Result<Option<StripDone>> {
        self.strip::<false>(dst)
    }

    /// [`next_strip`](Self::next_strip) for a grey stream (`channels` 1 at
    /// [`GridStream::new`]): the same strips, but a firmware that calls
    /// only this links the grey row loop and none of the 2..4-channel ones
    /// (what [`crate::pipeline::ImageJob`] does). A stream of another
    /// channel count is [`Error::UnsupportedChannels`].
    ///
    /// ```
    /// # use fixsight::filter::Border;
    /// # use fixsight::warp::{ControlGrid, GridStream, WarpGeometry};
    /// # use fixsight::{Error, ImageViewMut};
    /// # let g = WarpGeometry::new(8, 8, 8, 8, 2)?;
    /// # let pts: Vec<i32> = (0..9).flat_map(|p| [16 * (p % 3), 16 * (p / 3)]).collect();
    /// # let grid = ControlGrid::new(&pts, g, 2)?;
    /// let mut ring = [0u8; 8 * 8];
    /// let mut st = GridStream::new(grid, &mut ring, 1, 1, Border::Clamp)?;
    /// let mut row = [0u8; 8];
    /// st.push_row(&[7; 8])?;
    /// st.push_row(&[7; 8])?;
    /// assert!(st.next_strip_grey(&mut ImageViewMut::new(&mut row, 8, 1, 8)?)?.is_some());
    /// assert_eq!(row, [7; 8]);
    /// let mut ring3 = [0u8; 8 * 24];
    /// let mut rgb = GridStream::new(grid, &mut ring3, 3, 1, Border::Clamp)?;
    /// let mut row3 = [0u8; 24];
    /// assert!(matches!(
    ///     rgb.next_strip_grey(&mut ImageViewMut::interleaved(&mut row3, 8, 1, 24, 3)?),
    ///     Err(Error::UnsupportedChannels { channels: 3, .. })));
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn next_strip_grey(&mut self, dst: &mut ImageViewMut<'_, u8>) -> Result<Option<StripDone>> {
        if self.channels != 1 {
            return Err(Error::UnsupportedChannels {
                channels: self.channels,
                accepted: "1 (grey)",
            });
        }
        self.strip::<true>(dst)
    }

    /// [`next_strip`](Self::next_strip), with only the grey loop when
    /// `GREY` (the stream's channel count checked to be 1 by the caller).
    fn strip<const GREY: bool>(
        &mut self,
        dst: &mut ImageViewMut<'_, u8>,
    ) -> Result<Option<StripDone>> {
        let g = self.grid.geom;
        let rows = self
            .strip_rows
            .min(g.out_height - self.next_row.min(g.out_height));
        if dst.width() != g.out_width || dst.height() < rows {
            return Err(Error::SizeMismatch {
                what: "grid stream strip vs output width and strip rows",
                expected: (g.out_width, rows),
                got: (dst.width(), dst.height()),
            });
        }
        if dst.channels() != self.channels {
            return Err(Error::UnsupportedChannels {
                channels: dst.channels(),
                accepted: "the channel count the stream was made for",
            });
        }
        if !self.ready() {
            return Ok(None);
        }
        // The ring holds the newest `ring_rows` rows pushed.
        let first = self.pushed.saturating_sub(self.ring_rows);
        let held = self.pushed.min(self.ring_rows);
        let view = ImageView::interleaved(
            &self.ring[..held * self.row_len],
            g.src_width,
            held,
            self.row_len,
            self.channels,
        )?;
        let band = SourceBand::new(view, first, first % self.ring_rows)?;
        let first_row = self.next_row;
        self.grid.band_strip::<GREY>(
            &band,
            dst,
            first_row,
            rows,
            Some(self.pending),
            self.border,
        )?;
        self.next_row += rows;
        if !self.finished() {
            let n = self.strip_rows.min(g.out_height - self.next_row);
            self.pending = self.grid.source_rows(self.next_row, n)?;
        }
        Ok(Some(StripDone { first_row, rows }))
    }

    /// Starts a new frame: no rows in, output from row 0. The ring keeps
    /// its bytes (they are overwritten as rows come in).
    ///
    /// ```
    /// # use fixsight::filter::Border;
    /// # use fixsight::warp::{ControlGrid, GridStream, WarpGeometry};
    /// # let g = WarpGeometry::new(8, 8, 8, 8, 2)?;
    /// # let pts: Vec<i32> = (0..9).flat_map(|p| [16 * (p % 3), 16 * (p / 3)]).collect();
    /// # let grid = ControlGrid::new(&pts, g, 2)?;
    /// let mut ring = [0u8; 8 * 8];
    /// let mut st = GridStream::new(grid, &mut ring, 1, 1, Border::Clamp)?;
    /// st.push_row(&[1; 8])?; // a frame cut short after one row
    /// st.reset();
    /// assert_eq!(st.rows_pushed(), 0);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn reset(&mut self) {
        self.pushed = 0;
        self.next_row = 0;
        // Rows 0..strip_rows were valid at construction.
        if let Ok(p) = self.grid.source_rows(0, self.strip_rows) {
            self.pending = p;
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

    /// A xorshift64 generator seeded with `seed` (never zero).
    fn xorshift(seed: u64) -> impl FnMut() -> u64 {
        let mut st = seed | 1;
        move || {
            st ^= st << 13;
            st ^= st >> 7;
            st ^= st << 17;
            st
        }
    }

    /// `n` raw `(x, y)` pairs drawn uniformly from the ranges `xr`, `yr`.
    fn random_points(
        n: usize,
        (xl, xh): (i32, i32),
        (yl, yh): (i32, i32),
        next: &mut impl FnMut() -> u64,
    ) -> Vec<i32> {
        (0..n)
            .flat_map(|_| {
                [
                    xl + (next() % (xh - xl + 1) as u64) as i32,
                    yl + (next() % (yh - yl + 1) as u64) as i32,
                ]
            })
            .collect()
    }

    /// The grid over `pts`, or `None` when a cell could overflow (a case
    /// the property tests skip); any other error fails the test.
    fn grid_or_skip(pts: &[i32], g: WarpGeometry, k: u32) -> Option<ControlGrid<'_>> {
        match ControlGrid::new(pts, g, k) {
            Ok(m) => Some(m),
            Err(Error::GridCellOverflow { .. }) => None,
            Err(e) => panic!("{e}"),
        }
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
            let mut next = xorshift(seed);
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
            let mut next = xorshift(seed);
            let pts = random_points(cols * rows, g.coord_range_x(), g.coord_range_y(), &mut next);
            let Some(grid) = grid_or_skip(&pts, g, k) else { return Ok(()) };
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

        /// Near-identity grids (every tap inside, so the grey all-inside
        /// loop runs) equal the pixel-map path fed with the grid
        /// coordinates, for every F and step, whole frame and strips.
        #[test]
        fn grey_inside_loop_matches_pixel_map_path(
            ow in 1usize..70, oh in 1usize..40, extra_w in 2usize..9, extra_h in 2usize..9,
            k in 2u32..=6, f in 2u32..=10, border in arb_border(), seed in any::<u64>(),
            first in 0usize..40,
        ) {
            let (w, h) = (ow + extra_w, oh + extra_h);
            let g = WarpGeometry::new(ow, oh, w, h, f).unwrap();
            let (cols, rows) = ControlGrid::grid_size(&g, k).unwrap();
            let mut next = xorshift(seed);
            // Points at (x, y) + 0.5 px + jitter of up to +-0.45 px, clamped
            // so that every tap stays inside.
            let one = 1i64 << f;
            let jit = (one * 45 / 100).max(1);
            let pts: Vec<i32> = (0..cols * rows).flat_map(|p| {
                let (i, j) = ((p % cols) << k, (p / cols) << k);
                let mut c = |base: usize, n: usize| {
                    let v = ((base as i64) << f) + one / 2 + (next() % (2 * jit as u64 + 1)) as i64 - jit;
                    v.clamp(0, ((n as i64 - 1) << f) - 1) as i32
                };
                let x = c(i, w);
                [x, c(j, h)]
            }).collect();
            let Some(grid) = grid_or_skip(&pts, g, k) else { return Ok(()) };
            let coords: Vec<i32> = (0..ow * oh).flat_map(|p| {
                let (x, y) = grid.coord(p % ow, p / ow).unwrap();
                [x, y]
            }).collect();
            let src: Vec<u8> = (0..w * h).map(|_| next() as u8).collect();
            let sv = ImageView::new(&src, w, h, w).unwrap();
            let first = first.min(oh - 1);
            let n = oh - first;
            let mut a = vec![0u8; ow * n];
            let mut b = vec![0u8; ow * n];
            grid.warp_rows(&sv, &mut ImageViewMut::new(&mut a, ow, n, ow).unwrap(), first, border).unwrap();
            PixelMap::new(&coords, g).unwrap()
                .warp_rows(&sv, &mut ImageViewMut::new(&mut b, ow, n, ow).unwrap(), first, border).unwrap();
            prop_assert_eq!(&a, &b);
            let mut c = vec![0u8; ow * n];
            grid.warp_rows_grey(&sv, &mut ImageViewMut::new(&mut c, ow, n, ow).unwrap(), first, border).unwrap();
            prop_assert_eq!(c, b);
        }

        /// `source_rows` equals the brute-force hull of every tap row, and
        /// a band holding exactly those rows (at any ring position) gives
        /// the whole-frame rows, while a band one row short at either end
        /// is refused.
        #[test]
        fn source_rows_is_exact_and_bands_match_frames(
            ow in 1usize..40, oh in 1usize..30, w in 1usize..20, h in 1usize..24,
            k in 2u32..=6, f in 2u32..=10, c in prop_oneof![Just(1usize), Just(3usize)],
            border in arb_border(), seed in any::<u64>(), first in 0usize..30, len in 1usize..30,
            rot in 0usize..64, tame in any::<bool>(),
        ) {
            let g = WarpGeometry::new(ow, oh, w, h, f).unwrap();
            let (cols, rows) = ControlGrid::grid_size(&g, k).unwrap();
            let mut next = xorshift(seed);
            // Wild points over the accepted range, or tame ones inside the image.
            let (xr, yr) = if tame {
                ((0, ((w as i32 - 1) << f).max(0)), (0, ((h as i32 - 1) << f).max(0)))
            } else {
                (g.coord_range_x(), g.coord_range_y())
            };
            let pts = random_points(cols * rows, xr, yr, &mut next);
            let Some(grid) = grid_or_skip(&pts, g, k) else { return Ok(()) };
            let first = first.min(oh - 1);
            let n = len.min(oh - first);
            let (mut lo, mut hi) = (i64::MAX, i64::MIN);
            for y in first..first + n {
                for x in 0..ow {
                    let y0 = (grid.coord(x, y).unwrap().1 >> f) as i64;
                    for t in [y0, y0 + 1] {
                        let t = t.clamp(0, h as i64 - 1);
                        lo = lo.min(t);
                        hi = hi.max(t);
                    }
                }
            }
            let need = grid.source_rows(first, n).unwrap();
            prop_assert_eq!(need, SourceRows { first: lo as usize, last: hi as usize });

            let src: Vec<u8> = (0..w * h * c).map(|_| next() as u8).collect();
            let sv = ImageView::interleaved(&src, w, h, w * c, c).unwrap();
            let mut want = vec![0u8; ow * n * c];
            grid.warp_rows(&sv, &mut ImageViewMut::interleaved(&mut want, ow, n, ow * c, c).unwrap(),
                first, border).unwrap();
            // The needed rows in a ring of `cap` rows, row y at slot (y + rot) % cap.
            let cap = need.count() + rot % 3;
            let mut ring = vec![0u8; cap * w * c];
            let slot0 = rot % cap;
            for t in 0..cap.min(h - need.first) {
                let y = need.first + t;
                let s = (slot0 + t) % cap;
                ring[s * w * c..(s + 1) * w * c].copy_from_slice(&src[y * w * c..(y + 1) * w * c]);
            }
            let bv = ImageView::interleaved(&ring, w, cap, w * c, c).unwrap();
            let band = SourceBand::new(bv, need.first, slot0).unwrap();
            let mut got = vec![0u8; ow * n * c];
            grid.warp_band(&band, &mut ImageViewMut::interleaved(&mut got, ow, n, ow * c, c).unwrap(),
                first, border).unwrap();
            prop_assert_eq!(&got, &want);
            // One row short at the top or at the bottom.
            if need.count() >= 2 {
                let short = ImageView::interleaved(&ring, w, need.count() - 1, w * c, c).unwrap();
                for (fr, fs) in [(need.first + 1, 0usize), (need.first, 0)] {
                    let b = SourceBand::new(short, fr, fs).unwrap();
                    let r = grid.warp_band(&b, &mut ImageViewMut::interleaved(&mut got, ow, n, ow * c, c).unwrap(),
                        first, border);
                    let is_band_rows = matches!(r, Err(Error::BandRows { .. }));
                    prop_assert!(is_band_rows);
                }
            }
        }

        /// The row stream, with rows pushed or written in place and strips
        /// taken as soon as they are ready, reproduces the whole frame with
        /// a ring of exactly `band_rows` rows; two frames in a row after a
        /// reset (the first cut short) give the same bytes.
        #[test]
        fn grid_stream_matches_whole_frame(
            ow in 1usize..40, oh in 1usize..30, w in 1usize..20, h in 1usize..24,
            k in 2u32..=6, f in 2u32..=10, c in prop_oneof![Just(1usize), Just(2usize)],
            border in arb_border(), seed in any::<u64>(), strip in 1usize..12, tame in any::<bool>(),
            cut in 0usize..24,
        ) {
            let g = WarpGeometry::new(ow, oh, w, h, f).unwrap();
            let (cols, rows) = ControlGrid::grid_size(&g, k).unwrap();
            let (xl, xh) = g.coord_range_x();
            let (yl, yh) = g.coord_range_y();
            let mut next = xorshift(seed);
            let pts: Vec<i32> = (0..cols * rows).flat_map(|p| {
                if tame {
                    // A smooth map: a scaled identity with jitter.
                    let (i, j) = ((p % cols) as i64, (p / cols) as i64);
                    let x = ((i << k) * w as i64 / ow.max(1) as i64) << f;
                    let y = ((j << k) * h as i64 / oh.max(1) as i64) << f;
                    let jx = (next() % (1 << f)) as i64;
                    let jy = (next() % (1 << f)) as i64;
                    [(x + jx).clamp(xl as i64, xh as i64) as i32, (y + jy).clamp(yl as i64, yh as i64) as i32]
                } else {
                    random_points(1, (xl, xh), (yl, yh), &mut next).try_into().unwrap()
                }
            }).collect();
            let Some(grid) = grid_or_skip(&pts, g, k) else { return Ok(()) };
            let src: Vec<u8> = (0..w * h * c).map(|_| next() as u8).collect();
            let sv = ImageView::interleaved(&src, w, h, w * c, c).unwrap();
            let mut want = vec![0u8; ow * oh * c];
            grid.warp_rows(&sv, &mut ImageViewMut::interleaved(&mut want, ow, oh, ow * c, c).unwrap(),
                0, border).unwrap();
            let band = grid.band_rows(strip).unwrap();
            prop_assert!(band <= h);
            let mut ring = vec![0u8; band * w * c];
            let mut s = GridStream::new(grid, &mut ring, c, strip, border).unwrap();
            let strip = strip.min(oh);
            let mut buf = vec![0u8; strip * ow * c];
            for frame in 0..2 {
                let mut got = vec![0u8; ow * oh * c];
                // Frame 0 is cut short after `cut` rows and restarted.
                let rows_in = if frame == 0 { cut.min(h) } else { h };
                for y in 0..=rows_in {
                    while let Some(d) = s.next_strip(
                        &mut ImageViewMut::interleaved(&mut buf, ow, strip, ow * c, c).unwrap()).unwrap() {
                        let at = d.first_row * ow * c;
                        got[at..at + d.rows * ow * c].copy_from_slice(&buf[..d.rows * ow * c]);
                    }
                    if y < rows_in {
                        let row = &src[y * w * c..(y + 1) * w * c];
                        if y % 2 == 0 {
                            s.push_row(row).unwrap();
                        } else {
                            s.row_slot().unwrap().copy_from_slice(row);
                            s.commit_row().unwrap();
                        }
                    }
                }
                if frame == 1 {
                    prop_assert!(s.finished());
                    prop_assert_eq!(&got, &want);
                    let refused = matches!(s.push_row(&src[..w * c]), Err(Error::StreamOrder { .. }));
                    prop_assert!(refused);
                }
                s.reset();
            }
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
