//! Separable FIR filters on `u8` images: smoothing (`u8 -> u8`) and
//! derivatives (`u8 -> i16`), whole frame or one row at a time.
//!
//! # Integer model (what a port must reproduce)
//!
//! A filter is a horizontal tap set `h` (length `2rx+1`, shift `sh`) and a
//! vertical tap set `v` (length `2ry+1`, shift `sv`), integer coefficients.
//! Tap `k` of a set of radius `r` applies to offset `k - r`, so tap 0 is the
//! left (top) neighbour; taps are **not** flipped (correlation).
//! For output pixel `(x, y)`:
//!
//! ```text
//! acc = sum_{j=0}^{2ry} sum_{i=0}^{2rx} v[j] * h[i] * P(x + i - rx, y + j - ry)    (exact, i32)
//! out = saturate(floor((acc + 2^(s-1)) / 2^s))        with s = sh + sv  (out = acc when s = 0)
//! ```
//!
//! `saturate` clamps to `0..=255` for `u8` output and to `-32768..=32767` for
//! `i16` output. The rounding is **round half up** ([`crate::arith::round_shift`]).
//! No intermediate result is rounded: the accumulator is exact, because
//! construction rejects any tap set whose worst case
//! `255 * sum|h| * sum|v| + 2^(s-1)` exceeds `i32::MAX`
//! ([`Error::AccumulatorOverflow`]).
//!
//! `P` extends the image past its edges by the [`Border`] rule:
//! * [`Border::Clamp`]: `P(x, y) = I(clamp(x, 0, w-1), clamp(y, 0, h-1))`;
//! * [`Border::Fill(c)`](Border::Fill): `P(x, y) = c` outside the image.
//!
//! The implementation sums each column vertically first (one `i32` row), then
//! filters that row horizontally; both forms ([`SeparableFilter::apply`] and
//! [`FilterStream`]) call the same two passes, so they are bit-identical.
//! The preset tap sets `[1 2 1]`, `[1 4 6 4 1]`, `[1 6 15 20 15 6 1]`,
//! `[-1 0 1]` and `[3 10 3]` (recognised by their coefficients, whichever
//! constructor built them) run as constant shift-and-add forms in both passes
//! when no row or column of the window lies in a fill border; the
//! integer sums are regrouped, not approximated, so the output is the same.
//!
//! With the cargo feature `compact-filter` only one generic loop per pass
//! is compiled (a runtime tap count, no constant-tap forms, no per-count
//! copies), and the whole-frame form's two passes are compiled once for
//! both output types (the element type is chosen per pixel at the store):
//! the outputs are the same bit for bit, the code is several times smaller
//! and the cost per pixel higher (both measured in `targets/README.md`).
//!
//! # Memory
//! * whole frame: a caller scratch of `width` `i32`;
//! * streaming: `(2ry+1) * width` bytes of input rows plus `width` `i32`
//!   ([`FilterLines`] holds both in a const-generic struct).
//!
//! ```
//! use fixsight::filter::{self, Border};
//! use fixsight::{ImageView, ImageViewMut};
//! // A vertical step edge: Sobel x responds with 4 * 100 on the edge columns.
//! let mut src = [0u8; 6 * 3];
//! for y in 0..3 { for x in 3..6 { src[y * 6 + x] = 100; } }
//! let mut gx = [0i16; 6 * 3];
//! let mut scratch = [0i32; 6];
//! filter::sobel_x(Border::Clamp).apply(
//!     &ImageView::new(&src, 6, 3, 6)?, &mut ImageViewMut::new(&mut gx, 6, 3, 6)?, &mut scratch)?;
//! assert_eq!(&gx[6..12], &[0, 0, 400, 400, 0, 0]);
//! # Ok::<(), fixsight::Error>(())
//! ```

use crate::arith::{round_shift_proven, sat_i16, sat_u8};
use crate::error::{Error, Result};
use crate::image::{check_dims, check_same_size, check_single_channel, ImageView, ImageViewMut};
use crate::ops::{tally, tally_per, Op};
#[cfg(feature = "fixed")]
use fixed::{types::extra::LeEqU16, FixedI16};

/// Longest tap set accepted.
pub const MAX_TAPS: usize = 9;

/// Largest shift of one tap set.
pub const MAX_TAP_SHIFT: u32 = 16;

/// Largest combined shift `sh + sv`.
pub const MAX_TOTAL_SHIFT: u32 = 30;

/// One-dimensional tap set: odd length `1..=9`, `i16` coefficients, and a
/// normalisation shift (the taps represent `coef / 2^shift`).
///
/// ```
/// use fixsight::filter::Taps;
/// let t = Taps::new(&[1, 4, 6, 4, 1], 4)?;
/// assert_eq!(t.radius(), 2);
/// assert_eq!(t.sum(), 16);
/// assert!(Taps::new(&[1, 1], 1).is_err());      // even length
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Taps {
    coef: [i32; MAX_TAPS],
    len: u8,
    shift: u8,
}

impl Taps {
    /// Taps from integer coefficients and a shift (`value = coef / 2^shift`).
    ///
    /// Errors: empty, even or longer than [`MAX_TAPS`] -> [`Error::BadTaps`];
    /// `shift > 16` -> [`Error::BadTaps`].
    ///
    /// ```
    /// assert!(fixsight::filter::Taps::new(&[-1, 0, 1], 0).is_ok());
    /// ```
    pub fn new(coef: &[i16], shift: u32) -> Result<Self> {
        if coef.is_empty() || coef.len() > MAX_TAPS {
            return Err(Error::BadTaps {
                reason: "tap count must be 1 to 9",
                value: coef.len(),
            });
        }
        if coef.len() % 2 == 0 {
            return Err(Error::BadTaps {
                reason: "tap count must be odd (centred taps)",
                value: coef.len(),
            });
        }
        if shift > MAX_TAP_SHIFT {
            return Err(Error::BadTaps {
                reason: "shift of one tap set must be at most 16",
                value: shift as usize,
            });
        }
        let mut c = [0i32; MAX_TAPS];
        for (d, &s) in c.iter_mut().zip(coef) {
            *d = s as i32;
        }
        Ok(Self {
            coef: c,
            len: coef.len() as u8,
            shift: shift as u8,
        })
    }

    /// Taps from fixed-point coefficients: the raw bits become the integer
    /// coefficients and the number of fractional bits becomes the shift
    /// (cargo feature `fixed`).
    ///
    /// ```
    /// # #[cfg(feature = "fixed")] {
    /// use fixed::types::I8F8;
    /// use fixsight::filter::Taps;
    /// let quarter = I8F8::from_bits(64);   // 0.25
    /// let half = I8F8::from_bits(128);     // 0.5
    /// let t = Taps::from_fixed(&[quarter, half, quarter])?;
    /// assert_eq!(t, Taps::new(&[64, 128, 64], 8)?);
    /// # }
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    #[cfg(feature = "fixed")]
    pub fn from_fixed<Frac: LeEqU16>(coef: &[FixedI16<Frac>]) -> Result<Self> {
        let mut raw = [0i16; MAX_TAPS];
        let n = coef.len().min(MAX_TAPS);
        for (d, s) in raw.iter_mut().zip(coef.iter()) {
            *d = s.to_bits();
        }
        if coef.len() > MAX_TAPS {
            return Err(Error::BadTaps {
                reason: "tap count must be 1 to 9",
                value: coef.len(),
            });
        }
        Self::new(&raw[..n], FixedI16::<Frac>::FRAC_NBITS)
    }

    /// Preset constructor for tap sets proven valid by tests.
    const fn preset(c: [i32; MAX_TAPS], len: u8, shift: u8) -> Self {
        Self {
            coef: c,
            len,
            shift,
        }
    }

    /// The integer coefficients.
    ///
    /// ```
    /// let t = fixsight::filter::Taps::new(&[1, 2, 1], 2).unwrap();
    /// assert_eq!(t.coefficients(), &[1, 2, 1]);
    /// ```
    pub fn coefficients(&self) -> &[i32] {
        &self.coef[..self.len as usize]
    }

    /// Normalisation shift.
    ///
    /// ```
    /// assert_eq!(fixsight::filter::Taps::new(&[1, 2, 1], 2).unwrap().shift(), 2);
    /// ```
    pub fn shift(&self) -> u32 {
        self.shift as u32
    }

    /// Radius `(len - 1) / 2`.
    ///
    /// ```
    /// assert_eq!(fixsight::filter::Taps::new(&[1], 0).unwrap().radius(), 0);
    /// ```
    pub fn radius(&self) -> usize {
        (self.len as usize - 1) / 2
    }

    /// Sum of the coefficients.
    ///
    /// ```
    /// assert_eq!(fixsight::filter::Taps::new(&[-1, 0, 1], 0).unwrap().sum(), 0);
    /// ```
    pub fn sum(&self) -> i64 {
        self.coefficients().iter().map(|&c| c as i64).sum()
    }

    /// Sum of the absolute values of the coefficients.
    ///
    /// ```
    /// assert_eq!(fixsight::filter::Taps::new(&[-1, 0, 1], 0).unwrap().abs_sum(), 2);
    /// ```
    pub fn abs_sum(&self) -> u64 {
        self.coefficients()
            .iter()
            .map(|&c| c.unsigned_abs() as u64)
            .sum()
    }
}

/// How pixels outside the image are defined.
///
/// ```
/// let b = fixsight::filter::Border::Fill(0);
/// assert_ne!(b, fixsight::filter::Border::Clamp);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Border {
    /// Coordinates are clamped into the image (the nearest edge pixel).
    Clamp,
    /// The fill value everywhere outside the image.
    Fill(u8),
}

mod sealed {
    #[cfg(feature = "compact-filter")]
    use crate::ImageViewMut;

    pub trait Sealed: Sized {
        /// The output view as [`OutRows`], for the loops of the feature
        /// `compact-filter`, compiled once for both element types.
        #[cfg(feature = "compact-filter")]
        fn out_rows<'a, 'b>(dst: &'a mut ImageViewMut<'b, Self>) -> OutRows<'a, 'b>;
    }

    /// An output view of either element type.
    #[cfg(feature = "compact-filter")]
    pub enum OutRows<'a, 'b> {
        U8(&'a mut ImageViewMut<'b, u8>),
        I16(&'a mut ImageViewMut<'b, i16>),
    }

    impl Sealed for u8 {
        #[cfg(feature = "compact-filter")]
        fn out_rows<'a, 'b>(dst: &'a mut ImageViewMut<'b, u8>) -> OutRows<'a, 'b> {
            OutRows::U8(dst)
        }
    }
    impl Sealed for i16 {
        #[cfg(feature = "compact-filter")]
        fn out_rows<'a, 'b>(dst: &'a mut ImageViewMut<'b, i16>) -> OutRows<'a, 'b> {
            OutRows::I16(dst)
        }
    }
}

/// Output element of a filter: `u8` (smoothing) or `i16` (derivatives).
/// Sealed; the conversion is the documented round-half-up then saturate.
///
/// ```
/// use fixsight::filter::FilterOutput;
/// assert_eq!(<u8 as FilterOutput>::from_acc(24, 4), 2);     // 1.5 -> 2
/// assert_eq!(<i16 as FilterOutput>::from_acc(-24, 4), -1);  // -1.5 -> -1
/// ```
pub trait FilterOutput: Copy + Default + sealed::Sealed {
    /// `saturate(round_shift(acc, shift))`.
    fn from_acc(acc: i32, shift: u32) -> Self;
    /// `saturate(v)` of an already rounded value.
    fn from_rounded(v: i32) -> Self;
}

impl FilterOutput for u8 {
    #[inline(always)]
    fn from_acc(acc: i32, shift: u32) -> Self {
        sat_u8(round_shift_proven(acc, shift))
    }
    #[inline(always)]
    fn from_rounded(v: i32) -> Self {
        sat_u8(v)
    }
}

impl FilterOutput for i16 {
    #[inline(always)]
    fn from_acc(acc: i32, shift: u32) -> Self {
        sat_i16(round_shift_proven(acc, shift))
    }
    #[inline(always)]
    fn from_rounded(v: i32) -> Self {
        sat_i16(v)
    }
}

/// A separable 2-D filter: horizontal taps, vertical taps, border rule.
///
/// ```
/// use fixsight::filter::{Border, SeparableFilter, Taps};
/// let box3 = Taps::new(&[1, 1, 1], 0)?;
/// let f = SeparableFilter::new(box3, box3, Border::Fill(0))?;
/// assert_eq!(f.shift(), 0);
/// // 9-tap sets of 32767 would overflow the 32-bit accumulator:
/// let big = Taps::new(&[32767; 9], 0)?;
/// assert!(SeparableFilter::new(big, big, Border::Clamp).is_err());
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SeparableFilter {
    h: Taps,
    v: Taps,
    border: Border,
}

impl SeparableFilter {
    /// Builds a filter, checking the combined shift (at most 30) and that the
    /// worst-case accumulator `255 * sum|h| * sum|v| + 2^(s-1)` fits `i32`.
    ///
    /// ```
    /// use fixsight::filter::{Border, SeparableFilter, Taps};
    /// let t = Taps::new(&[1, 2, 1], 2)?;
    /// assert!(SeparableFilter::new(t, t, Border::Clamp).is_ok());
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn new(h: Taps, v: Taps, border: Border) -> Result<Self> {
        let s = h.shift() + v.shift();
        if s > MAX_TOTAL_SHIFT {
            return Err(Error::BadTaps {
                reason: "combined horizontal + vertical shift must be at most 30",
                value: s as usize,
            });
        }
        let f = Self { h, v, border };
        let worst = f.worst_case_acc();
        if worst > i32::MAX as u64 {
            return Err(Error::AccumulatorOverflow {
                worst_case: worst,
                limit: i32::MAX as u64,
            });
        }
        Ok(f)
    }

    /// Worst-case accumulator magnitude over all `u8` inputs, including the
    /// rounding offset: `255 * sum|h| * sum|v| + 2^(s-1)`.
    ///
    /// ```
    /// let f = fixsight::filter::binomial5(fixsight::filter::Border::Clamp);
    /// assert_eq!(f.worst_case_acc(), 255 * 16 * 16 + 128);
    /// ```
    pub fn worst_case_acc(&self) -> u64 {
        let s = self.shift();
        let half = if s == 0 { 0 } else { 1u64 << (s - 1) };
        255 * self.h.abs_sum() * self.v.abs_sum() + half
    }

    /// Horizontal tap set.
    ///
    /// ```
    /// let f = fixsight::filter::sobel_x(fixsight::filter::Border::Clamp);
    /// assert_eq!(f.horizontal().coefficients(), &[-1, 0, 1]);
    /// ```
    pub fn horizontal(&self) -> &Taps {
        &self.h
    }

    /// Vertical tap set.
    ///
    /// ```
    /// let f = fixsight::filter::sobel_x(fixsight::filter::Border::Clamp);
    /// assert_eq!(f.vertical().coefficients(), &[1, 2, 1]);
    /// ```
    pub fn vertical(&self) -> &Taps {
        &self.v
    }

    /// Border rule.
    ///
    /// ```
    /// let f = fixsight::filter::binomial3(fixsight::filter::Border::Fill(7));
    /// assert_eq!(f.border(), fixsight::filter::Border::Fill(7));
    /// ```
    pub fn border(&self) -> Border {
        self.border
    }

    /// Combined shift `sh + sv`.
    ///
    /// ```
    /// assert_eq!(fixsight::filter::binomial7(fixsight::filter::Border::Clamp).shift(), 12);
    /// ```
    pub fn shift(&self) -> u32 {
        self.h.shift() + self.v.shift()
    }

    /// Filters a whole frame. `scratch` must hold at least `src.width()`
    /// elements. Both views must be single-channel and the same size.
    ///
    /// ```
    /// use fixsight::{filter, ImageView, ImageViewMut};
    /// let src = [0u8, 0, 255, 0, 0];
    /// let mut dst = [0u8; 5];
    /// let mut scratch = [0i32; 5];
    /// filter::binomial3(filter::Border::Clamp)
    ///     .apply(&ImageView::new(&src, 5, 1, 5)?, &mut ImageViewMut::new(&mut dst, 5, 1, 5)?, &mut scratch)?;
    /// // (0 + 2*255 + 0)/4 = 127.5 -> 128 (round half up); neighbours 255/4 = 63.75 -> 64
    /// assert_eq!(dst, [0, 64, 128, 64, 0]);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn apply<T: FilterOutput>(
        &self,
        src: &ImageView<'_, u8>,
        dst: &mut ImageViewMut<'_, T>,
        scratch: &mut [i32],
    ) -> Result<()> {
        check_single_channel(src)?;
        check_single_channel(&dst.as_view())?;
        check_same_size("filter output vs input", src, dst)?;
        let w = src.width();
        if scratch.len() < w {
            return Err(Error::BufferTooShort {
                what: "filter scratch",
                needed: w,
                got: scratch.len(),
            });
        }
        let acc = &mut scratch[..w];
        #[cfg(feature = "compact-filter")]
        self.apply_compact(src, T::out_rows(dst), acc);
        #[cfg(not(feature = "compact-filter"))]
        {
            let h = src.height();
            for y in 0..h {
                self.vertical_pass(y, h, |yy| src.row_at(yy), acc);
                self.horizontal_pass(acc, dst.row_at_mut(y));
                tally(Op::Branch, 1);
            }
        }
        Ok(())
    }

    /// [`Self::apply`] of the feature `compact-filter`: the loops compiled
    /// once for both output types, the element type chosen per pixel.
    #[cfg(feature = "compact-filter")]
    #[inline(never)]
    fn apply_compact(
        &self,
        src: &ImageView<'_, u8>,
        mut dst: sealed::OutRows<'_, '_>,
        acc: &mut [i32],
    ) {
        for y in 0..src.height() {
            self.vertical_any(y, src, acc);
            let out = match &mut dst {
                sealed::OutRows::U8(d) => OutRow::U8(d.row_at_mut(y)),
                sealed::OutRows::I16(d) => OutRow::I16(d.row_at_mut(y)),
            };
            self.horizontal_any(acc, out);
            tally(Op::Branch, 1);
        }
    }

    /// Vertical pass for output row `y`: `acc[x] = sum_j v[j] * P(x, y+j-ry)`.
    /// `row(yy)` returns input row `yy` for `0 <= yy < height`.
    fn vertical_pass<'r>(
        &self,
        y: usize,
        height: usize,
        row: impl Fn(usize) -> &'r [u8],
        acc: &mut [i32],
    ) {
        let r = self.v.radius() as isize;
        // Preset tap sets with every row inside the image (or clamped by
        // the clamp rule) take a shift-and-add form with constant taps.
        if let Some(kind) = FixedTaps::of(self.v.coefficients()) {
            let inside = y as isize >= r && y as isize + r < height as isize;
            if inside || self.border == Border::Clamp {
                let mut rows: [&[u8]; MAX_TAPS] = [&[]; MAX_TAPS];
                for (j, slot) in rows.iter_mut().enumerate().take(2 * r as usize + 1) {
                    let yy = (y as isize + j as isize - r).clamp(0, height as isize - 1);
                    *slot = row(yy as usize);
                }
                kind.column_sum(&rows, acc);
                // Per pixel: the form's loads and arithmetic, one store, one
                // loop branch.
                let w = acc.len();
                kind.tally_px(w);
                tally_per(Op::Store, 1, w);
                tally_per(Op::Branch, 1, w);
                return;
            }
        }
        // Rows in a fill border contribute c * v[j] to every column.
        let mut bias = 0i32;
        if let Border::Fill(c) = self.border {
            for (j, &cv) in self.v.coefficients().iter().enumerate() {
                let yy = y as isize + j as isize - r;
                if yy < 0 || yy >= height as isize {
                    bias += cv * c as i32;
                    tally(Op::Mac, 1);
                }
            }
        }
        // Gather the contributing rows (clamped for the clamp rule; rows in
        // a fill border are already in `bias`) and sum them in one pass.
        let mut rows: [&[u8]; MAX_TAPS] = [&[]; MAX_TAPS];
        let mut coefs = [0i32; MAX_TAPS];
        let mut n = 0usize;
        for (j, &cv) in self.v.coefficients().iter().enumerate() {
            let yy = y as isize + j as isize - r;
            let src_row = if yy >= 0 && yy < height as isize {
                yy as usize
            } else {
                match self.border {
                    Border::Fill(_) => continue,
                    Border::Clamp => yy.clamp(0, height as isize - 1) as usize,
                }
            };
            if cv == 0 {
                continue;
            }
            rows[n] = row(src_row);
            coefs[n] = cv;
            n += 1;
        }
        if cfg!(feature = "compact-filter") {
            column_sum_any(&rows[..n], &coefs[..n], bias, acc);
        } else {
            column_sum_by_count(&rows, &coefs, n, bias, acc);
        }
        // Per pixel: n loads + n MACs (the first is a multiply-add onto the
        // bias), one store, one loop branch.
        let w = acc.len();
        tally_per(Op::Load, n as u32, w);
        tally_per(Op::Mac, n as u32, w);
        tally_per(Op::Store, 1, w);
        tally_per(Op::Branch, 1, w);
    }
}

/// [`column_sum`] with the row count `n` as a compile-time constant.
fn column_sum_by_count(
    rows: &[&[u8]; MAX_TAPS],
    coefs: &[i32; MAX_TAPS],
    n: usize,
    bias: i32,
    acc: &mut [i32],
) {
    {
        match n {
            0 => acc.fill(bias),
            1 => column_sum::<1>(rows, coefs, bias, acc),
            2 => column_sum::<2>(rows, coefs, bias, acc),
            3 => column_sum::<3>(rows, coefs, bias, acc),
            4 => column_sum::<4>(rows, coefs, bias, acc),
            5 => column_sum::<5>(rows, coefs, bias, acc),
            6 => column_sum::<6>(rows, coefs, bias, acc),
            7 => column_sum::<7>(rows, coefs, bias, acc),
            8 => column_sum::<8>(rows, coefs, bias, acc),
            _ => column_sum::<9>(rows, coefs, bias, acc),
        }
    }
}

impl SeparableFilter {
    /// Horizontal pass: `out[x] = from_acc(sum_i h[i] * A(x+i-rx), s)` where
    /// `A` is `acc` extended by the border rule.
    fn horizontal_pass<T: FilterOutput>(&self, acc: &[i32], out: &mut [T]) {
        let w = acc.len();
        let r = self.h.radius();
        let s = self.shift();
        let taps = self.h.coefficients();
        let outside = match self.border {
            Border::Fill(c) => Some(c as i32 * self.v.sum() as i32),
            Border::Clamp => None,
        };
        let ext = |i: isize| -> i32 {
            if i >= 0 && (i as usize) < w {
                acc[i as usize]
            } else {
                match outside {
                    Some(v) => v,
                    None => acc[i.clamp(0, w as isize - 1) as usize],
                }
            }
        };
        let border_px = |x: usize| -> T {
            let mut sum = 0i32;
            for (i, &c) in taps.iter().enumerate() {
                sum += c * ext(x as isize + i as isize - r as isize);
            }
            T::from_acc(sum, s)
        };
        let k = taps.len() as u32;
        if w > 2 * r {
            for x in 0..r {
                out[x] = border_px(x);
                out[w - 1 - x] = border_px(w - 1 - x);
            }
            let interior = &mut out[r..w - r];
            let fixed = FixedTaps::of(taps);
            match (fixed, taps.len()) {
                (Some(kind), _) => kind.dot_row(acc, interior, s),
                (None, _) if cfg!(feature = "compact-filter") => {
                    dot_row_any(taps, acc, interior, s)
                }
                (None, 1) => dot_row::<T, 1>(taps, acc, interior, s),
                (None, 3) => dot_row::<T, 3>(taps, acc, interior, s),
                (None, 5) => dot_row::<T, 5>(taps, acc, interior, s),
                (None, 7) => dot_row::<T, 7>(taps, acc, interior, s),
                (None, _) => dot_row::<T, 9>(taps, acc, interior, s),
            }
            // Border pixels: one load and one MAC per tap.
            let (nb, ni) = (2 * r, w - 2 * r);
            tally_per(Op::Load, k, nb);
            tally_per(Op::Mac, k, nb);
            match fixed {
                Some(kind) => kind.tally_px(ni),
                None => {
                    tally_per(Op::Load, k, ni);
                    tally_per(Op::Mac, k, ni);
                }
            }
        } else {
            for (x, o) in out.iter_mut().enumerate().take(w) {
                *o = border_px(x);
            }
            tally_per(Op::Load, k, w);
            tally_per(Op::Mac, k, w);
        }
        let n = w;
        // Rounding offset, shift, two saturation compares, store, loop branch.
        tally_per(Op::AddSub, 1, n);
        tally_per(Op::Shift, 1, n);
        tally_per(Op::Logic, 2, n);
        tally_per(Op::Store, 1, n);
        tally_per(Op::Branch, 1, n);
    }
}

/// One output row of either element type (the feature `compact-filter`).
#[cfg(feature = "compact-filter")]
enum OutRow<'a> {
    U8(&'a mut [u8]),
    I16(&'a mut [i16]),
}

#[cfg(feature = "compact-filter")]
impl OutRow<'_> {
    /// Stores the rounded value `v` at `x`, saturated to the element type.
    #[inline(always)]
    fn put(&mut self, x: usize, v: i32) {
        match self {
            OutRow::U8(o) => {
                if let Some(d) = o.get_mut(x) {
                    *d = sat_u8(v);
                }
            }
            OutRow::I16(o) => {
                if let Some(d) = o.get_mut(x) {
                    *d = sat_i16(v);
                }
            }
        }
    }
}

#[cfg(feature = "compact-filter")]
impl SeparableFilter {
    /// [`Self::vertical_pass`] of the feature `compact-filter`: one loop
    /// per tap row adding into `acc`; a row in a fill border adds
    /// `v[j] * c` to every column, a row past the edge under the clamp
    /// rule is the edge row. The same exact sums.
    #[inline(never)]
    fn vertical_any(&self, y: usize, src: &ImageView<'_, u8>, acc: &mut [i32]) {
        let h = src.height() as isize;
        let r = self.v.radius() as isize;
        acc.fill(0);
        for (j, &cv) in self.v.coefficients().iter().enumerate() {
            let yy = y as isize + j as isize - r;
            match self.border {
                Border::Fill(c) if yy < 0 || yy >= h => {
                    for a in acc.iter_mut() {
                        *a += cv * c as i32;
                    }
                }
                _ => {
                    let row = src.row_at(yy.clamp(0, h - 1) as usize);
                    for (a, &p) in acc.iter_mut().zip(row) {
                        *a += cv * p as i32;
                    }
                }
            }
        }
        let (w, n) = (acc.len(), self.v.coefficients().len() as u32);
        tally_per(Op::Load, n, w);
        tally_per(Op::Mac, n, w);
        tally_per(Op::Store, 1, w);
        tally_per(Op::Branch, 1, w);
    }

    /// [`Self::horizontal_pass`] compiled once for both output types (the
    /// feature `compact-filter`): the same sums, rounding and saturation,
    /// the element type chosen per pixel.
    #[inline(never)]
    fn horizontal_any(&self, acc: &[i32], mut out: OutRow<'_>) {
        let w = acc.len();
        let r = self.h.radius();
        let s = self.shift();
        let taps = self.h.coefficients();
        let outside = match self.border {
            Border::Fill(c) => Some(c as i32 * self.v.sum() as i32),
            Border::Clamp => None,
        };
        // Interior pixels: their window is a slice of `acc` (none when the
        // row is no wider than the taps).
        for (i, win) in acc.windows(taps.len()).enumerate() {
            let mut sum = 0i32;
            for (&t, &a) in taps.iter().zip(win) {
                sum += t * a;
            }
            out.put(r + i, round_shift_proven(sum, s));
        }
        // The `r` pixels at each end (every pixel of a narrower row): each
        // tap through the border rule.
        let left = r.min(w);
        for x in (0..left).chain(w.saturating_sub(r).max(left)..w) {
            let mut sum = 0i32;
            for (i, &c) in taps.iter().enumerate() {
                let at = (x + i) as isize - r as isize;
                sum += c * match (acc.get(at.max(0) as usize), outside) {
                    (Some(&a), _) if at >= 0 => a,
                    (_, Some(v)) => v,
                    _ => acc[at.clamp(0, w as isize - 1) as usize],
                };
            }
            out.put(x, round_shift_proven(sum, s));
        }
        let k = taps.len() as u32;
        tally_per(Op::Load, k, w);
        tally_per(Op::Mac, k, w);
        // Rounding offset, shift, two saturation compares, store, loop branch.
        tally_per(Op::AddSub, 1, w);
        tally_per(Op::Shift, 1, w);
        tally_per(Op::Logic, 2, w);
        tally_per(Op::Store, 1, w);
        tally_per(Op::Branch, 1, w);
    }
}

/// Interior of the horizontal pass with a compile-time tap count: `out[i]`
/// takes the window `acc[i .. i + N]`.
#[inline(always)]
fn dot_row<T: FilterOutput, const N: usize>(taps: &[i32], acc: &[i32], out: &mut [T], s: u32) {
    let n = out.len();
    let mut k = [0i32; N];
    for (d, &t) in k.iter_mut().zip(taps) {
        *d = t;
    }
    // One slice per tap, all of length n, so the loop indexes without
    // bounds checks and vectorises.
    let shifted: [&[i32]; N] = core::array::from_fn(|t| &acc[t..t + n]);
    let half = if s == 0 { 0 } else { 1i32 << (s - 1) };
    let out = &mut out[..n];
    for i in 0..n {
        let mut sum = 0i32;
        for t in 0..N {
            sum += k[t] * shifted[t][i];
        }
        out[i] = T::from_rounded((sum + half) >> s);
    }
}

/// [`dot_row`] with the tap count known only at run time (the one loop of
/// the feature `compact-filter`).
#[inline(never)]
fn dot_row_any<T: FilterOutput>(taps: &[i32], acc: &[i32], out: &mut [T], s: u32) {
    let half = if s == 0 { 0 } else { 1i32 << (s - 1) };
    for (o, win) in out.iter_mut().zip(acc.windows(taps.len())) {
        let mut sum = 0i32;
        for (&t, &a) in taps.iter().zip(win) {
            sum += t * a;
        }
        *o = T::from_rounded((sum + half) >> s);
    }
}

/// [`column_sum`] with the row count known only at run time (the one loop
/// of the feature `compact-filter`): `acc[x] = bias + sum_t coefs[t] *
/// rows[t][x]`, one row at a time.
#[inline(never)]
fn column_sum_any(rows: &[&[u8]], coefs: &[i32], bias: i32, acc: &mut [i32]) {
    acc.fill(bias);
    for (row, &c) in rows.iter().zip(coefs) {
        for (a, &p) in acc.iter_mut().zip(row.iter()) {
            *a += c * p as i32;
        }
    }
}

/// `acc[x] = form(...)` over input rows bound by name: each row is sliced
/// to `acc.len()` once, so the loop indexes without bounds checks and
/// keeps every row pointer in a register.
macro_rules! column_form {
    ($rows:expr, $acc:expr, [$($p:ident = $j:expr),+], $form:block) => {{
        let w = $acc.len();
        let acc = &mut $acc[..w];
        $(let $p = &$rows[$j][..w];)+
        for x in 0..w {
            $(let $p = $p[x] as i32;)+
            acc[x] = $form;
        }
    }};
}

/// `out[i] = from_rounded((form(acc[i + j]...) + half) >> s)` over shifted
/// views of the accumulator row bound by name, all of length `out.len()`.
macro_rules! dot_form {
    ($T:ty, $acc:expr, $out:expr, $s:expr, [$($p:ident = $j:expr),+], $form:block) => {{
        let n = $out.len();
        let out = &mut $out[..n];
        $(let $p = &$acc[$j..$j + n];)+
        let s = $s;
        let half = if s == 0 { 0 } else { 1i32 << (s - 1) };
        for i in 0..n {
            $(let $p = $p[i];)+
            out[i] = <$T>::from_rounded(($form + half) >> s);
        }
    }};
}

/// Preset tap sets computed with constant taps (shifts, adds and constant
/// multiplies). Every form equals the tap-by-tap sum exactly: the terms are
/// regrouped, and no partial sum exceeds `sum|c| * max|input|`, which the
/// construction check bounds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "compact-filter", allow(dead_code))]
enum FixedTaps {
    /// `[1 2 1]`: `p0 + p2 + (p1 << 1)`.
    Binomial3,
    /// `[1 4 6 4 1]`: `(p0 + p4) + ((p1 + p3) << 2) + 6 * p2`.
    Binomial5,
    /// `[1 6 15 20 15 6 1]`:
    /// `(p0 + p6) + 6 * (p1 + p5) + 15 * (p2 + p4) + 20 * p3`.
    Binomial7,
    /// `[-1 0 1]`: `p2 - p0` (the centre is not read).
    Diff3,
    /// `[3 10 3]`: `3 * (p0 + p2) + 10 * p1`.
    Scharr3,
}

impl FixedTaps {
    /// The form of a tap set; never one with the feature `compact-filter`.
    #[cfg(feature = "compact-filter")]
    fn of(_: &[i32]) -> Option<Self> {
        None
    }

    #[cfg(not(feature = "compact-filter"))]
    fn of(c: &[i32]) -> Option<Self> {
        match c {
            [1, 2, 1] => Some(Self::Binomial3),
            [1, 4, 6, 4, 1] => Some(Self::Binomial5),
            [1, 6, 15, 20, 15, 6, 1] => Some(Self::Binomial7),
            [-1, 0, 1] => Some(Self::Diff3),
            [3, 10, 3] => Some(Self::Scharr3),
            _ => None,
        }
    }

    /// Tallies `n` evaluations of the form: its loads and arithmetic.
    fn tally_px(self, n: usize) {
        // (loads, add/sub, shifts, multiplies by a constant)
        let (ld, add, sh, mul) = match self {
            Self::Binomial3 => (3, 2, 1, 0),
            Self::Binomial5 => (5, 4, 1, 1),
            Self::Binomial7 => (7, 6, 0, 3),
            Self::Diff3 => (2, 1, 0, 0),
            Self::Scharr3 => (3, 2, 0, 2),
        };
        tally_per(Op::Load, ld, n);
        tally_per(Op::AddSub, add, n);
        tally_per(Op::Shift, sh, n);
        tally_per(Op::Mul, mul, n);
    }

    /// `acc[x] = form(rows[0][x], rows[1][x], ...)`, rows `0..len`.
    #[inline(always)]
    fn column_sum(self, rows: &[&[u8]; MAX_TAPS], acc: &mut [i32]) {
        match self {
            Self::Binomial3 => {
                column_form!(rows, acc, [p0 = 0, p1 = 1, p2 = 2], { p0 + p2 + (p1 << 1) })
            }
            Self::Binomial5 => column_form!(rows, acc, [p0 = 0, p1 = 1, p2 = 2, p3 = 3, p4 = 4], {
                (p0 + p4) + ((p1 + p3) << 2) + 6 * p2
            }),
            Self::Binomial7 => column_form!(
                rows,
                acc,
                [p0 = 0, p1 = 1, p2 = 2, p3 = 3, p4 = 4, p5 = 5, p6 = 6],
                { (p0 + p6) + 6 * (p1 + p5) + 15 * (p2 + p4) + 20 * p3 }
            ),
            Self::Diff3 => column_form!(rows, acc, [p0 = 0, p2 = 2], { p2 - p0 }),
            Self::Scharr3 => column_form!(rows, acc, [p0 = 0, p1 = 1, p2 = 2], {
                3 * (p0 + p2) + 10 * p1
            }),
        }
    }

    /// Interior of the horizontal pass: `out[i] = from_rounded((form(acc[i ..
    /// i + len]) + half) >> s)`.
    #[inline(always)]
    fn dot_row<T: FilterOutput>(self, acc: &[i32], out: &mut [T], s: u32) {
        match self {
            Self::Binomial3 => dot_form!(T, acc, out, s, [p0 = 0, p1 = 1, p2 = 2], {
                p0 + p2 + (p1 << 1)
            }),
            Self::Binomial5 => {
                dot_form!(T, acc, out, s, [p0 = 0, p1 = 1, p2 = 2, p3 = 3, p4 = 4], {
                    (p0 + p4) + ((p1 + p3) << 2) + 6 * p2
                })
            }
            Self::Binomial7 => dot_form!(
                T,
                acc,
                out,
                s,
                [p0 = 0, p1 = 1, p2 = 2, p3 = 3, p4 = 4, p5 = 5, p6 = 6],
                { (p0 + p6) + 6 * (p1 + p5) + 15 * (p2 + p4) + 20 * p3 }
            ),
            Self::Diff3 => dot_form!(T, acc, out, s, [p0 = 0, p2 = 2], { p2 - p0 }),
            Self::Scharr3 => dot_form!(T, acc, out, s, [p0 = 0, p1 = 1, p2 = 2], {
                3 * (p0 + p2) + 10 * p1
            }),
        }
    }
}

/// `acc[x] = bias + sum_{t<N} coefs[t] * rows[t][x]` in one pass.
#[inline(always)]
fn column_sum<const N: usize>(
    rows: &[&[u8]; MAX_TAPS],
    coefs: &[i32; MAX_TAPS],
    bias: i32,
    acc: &mut [i32],
) {
    let w = acc.len();
    let acc = &mut acc[..w];
    let r: [&[u8]; N] = core::array::from_fn(|t| &rows[t][..w]);
    for x in 0..w {
        let mut sum = bias;
        for t in 0..N {
            sum += coefs[t] * r[t][x] as i32;
        }
        acc[x] = sum;
    }
}

/// Row-streaming form of a [`SeparableFilter`]: push input rows top to
/// bottom, receive output rows as soon as they are complete (after `ry`
/// rows of latency), then flush the last `ry` rows.
///
/// Output is bit-identical to [`SeparableFilter::apply`].
///
/// ```
/// use fixsight::filter::{self, Border, FilterLines};
/// let f = filter::binomial3(Border::Clamp);
/// let mut lines = FilterLines::<4, 3>::new();
/// let mut s = lines.stream(&f, 3)?;
/// let mut out = [0u8; 4];
/// let mut got = 0;
/// for _ in 0..3 {
///     if let Some(_y) = s.push_row(&[8, 8, 8, 8], &mut out)? { got += 1; }
/// }
/// while let Some(_y) = s.flush_row(&mut out)? { got += 1; }
/// assert_eq!((got, out), (3, [8; 4]));
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug)]
pub struct FilterStream<'f, 'b> {
    filter: &'f SeparableFilter,
    width: usize,
    height: usize,
    ring_rows: usize,
    ring: &'b mut [u8],
    acc: &'b mut [i32],
    pushed: usize,
    emitted: usize,
}

impl<'f, 'b> FilterStream<'f, 'b> {
    /// Input rows the ring must hold: `2 * ry + 1`.
    ///
    /// ```
    /// let f = fixsight::filter::binomial5(fixsight::filter::Border::Clamp);
    /// assert_eq!(fixsight::filter::FilterStream::ring_rows(&f), 5);
    /// ```
    pub fn ring_rows(filter: &SeparableFilter) -> usize {
        2 * filter.v.radius() + 1
    }

    /// Starts a stream over caller memory: `ring` needs
    /// `ring_rows(filter) * width` bytes and `acc` needs `width` elements.
    ///
    /// ```
    /// use fixsight::filter::{self, Border, FilterStream};
    /// let f = filter::sobel_y(Border::Clamp);
    /// let (mut ring, mut acc) = ([0u8; 3 * 10], [0i32; 10]);
    /// let s = FilterStream::new(&f, 10, 4, &mut ring, &mut acc)?;
    /// assert_eq!(s.rows_pushed(), 0);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn new(
        filter: &'f SeparableFilter,
        width: usize,
        height: usize,
        ring: &'b mut [u8],
        acc: &'b mut [i32],
    ) -> Result<Self> {
        check_dims(width, height)?;
        let ring_rows = Self::ring_rows(filter);
        let needed = ring_rows * width;
        if ring.len() < needed {
            return Err(Error::BufferTooShort {
                what: "stream row ring",
                needed,
                got: ring.len(),
            });
        }
        if acc.len() < width {
            return Err(Error::BufferTooShort {
                what: "stream accumulator row",
                needed: width,
                got: acc.len(),
            });
        }
        // Keep exactly one row of accumulators: the passes size their
        // loops from it.
        let acc = &mut acc[..width];
        Ok(Self {
            filter,
            width,
            height,
            ring_rows,
            ring,
            acc,
            pushed: 0,
            emitted: 0,
        })
    }

    /// Rows pushed so far.
    ///
    /// ```
    /// # let f = fixsight::filter::binomial3(fixsight::filter::Border::Clamp);
    /// # let mut l = fixsight::filter::FilterLines::<2, 3>::new();
    /// let s = l.stream(&f, 2)?;
    /// assert_eq!(s.rows_pushed(), 0);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn rows_pushed(&self) -> usize {
        self.pushed
    }

    /// Output rows produced so far.
    ///
    /// ```
    /// # let f = fixsight::filter::binomial3(fixsight::filter::Border::Clamp);
    /// # let mut l = fixsight::filter::FilterLines::<2, 3>::new();
    /// let s = l.stream(&f, 2)?;
    /// assert_eq!(s.rows_emitted(), 0);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn rows_emitted(&self) -> usize {
        self.emitted
    }

    /// Pushes the next input row (`width` elements are read) and, when an
    /// output row is complete, writes it to `out` (`width` elements) and
    /// returns its row index.
    ///
    /// Errors: more than `height` rows -> [`Error::StreamOrder`]; short
    /// `row` or `out` -> [`Error::BufferTooShort`].
    ///
    /// ```
    /// # let f = fixsight::filter::binomial3(fixsight::filter::Border::Clamp);
    /// # let mut l = fixsight::filter::FilterLines::<2, 3>::new();
    /// let mut s = l.stream(&f, 1)?;
    /// let mut out = [0u8; 2];
    /// assert_eq!(s.push_row(&[4, 4], &mut out)?, Some(0));
    /// assert!(s.push_row(&[4, 4], &mut out).is_err()); // only 1 row declared
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn push_row<T: FilterOutput>(
        &mut self,
        row: &[u8],
        out: &mut [T],
    ) -> Result<Option<usize>> {
        if self.pushed >= self.height {
            return Err(Error::StreamOrder {
                reason: "more rows pushed than the height declared at construction",
            });
        }
        if row.len() < self.width {
            return Err(Error::BufferTooShort {
                what: "pushed input row",
                needed: self.width,
                got: row.len(),
            });
        }
        self.check_out(out.len())?;
        let slot = (self.pushed % self.ring_rows) * self.width;
        self.ring[slot..slot + self.width].copy_from_slice(&row[..self.width]);
        tally_per(Op::Load, 1, self.width);
        tally_per(Op::Store, 1, self.width);
        self.pushed += 1;
        let ry = self.filter.v.radius();
        if self.pushed >= (self.emitted + ry + 1).min(self.height) {
            Ok(Some(self.emit(out)))
        } else {
            Ok(None)
        }
    }

    /// After all `height` rows are pushed, writes the next pending output
    /// row to `out` and returns its index; `None` when every row is out.
    ///
    /// Errors: called before the last row was pushed -> [`Error::StreamOrder`].
    ///
    /// ```
    /// # let f = fixsight::filter::binomial3(fixsight::filter::Border::Clamp);
    /// # let mut l = fixsight::filter::FilterLines::<2, 3>::new();
    /// let mut s = l.stream(&f, 2)?;
    /// let mut out = [0u8; 2];
    /// assert!(s.flush_row(&mut out).is_err()); // nothing pushed yet
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn flush_row<T: FilterOutput>(&mut self, out: &mut [T]) -> Result<Option<usize>> {
        if self.pushed < self.height {
            return Err(Error::StreamOrder {
                reason: "flush before all declared rows were pushed",
            });
        }
        if self.emitted >= self.height {
            return Ok(None);
        }
        self.check_out(out.len())?;
        Ok(Some(self.emit(out)))
    }

    fn check_out(&self, len: usize) -> Result<()> {
        if len < self.width {
            Err(Error::BufferTooShort {
                what: "stream output row",
                needed: self.width,
                got: len,
            })
        } else {
            Ok(())
        }
    }

    /// Computes output row `emitted` from the ring (all its input rows are
    /// in the ring by the push/flush conditions) and advances.
    fn emit<T: FilterOutput>(&mut self, out: &mut [T]) -> usize {
        let y = self.emitted;
        let (w, rr) = (self.width, self.ring_rows);
        let ring: &[u8] = self.ring;
        self.filter.vertical_pass(
            y,
            self.height,
            |yy| &ring[(yy % rr) * w..(yy % rr) * w + w],
            self.acc,
        );
        self.filter.horizontal_pass(&self.acc[..w], &mut out[..w]);
        self.emitted += 1;
        y
    }
}

/// Line buffers for a [`FilterStream`] sized at compile time: `ROWS` input
/// rows of `WIDTH` bytes plus one `i32` row, `ROWS * WIDTH + 4 * WIDTH`
/// bytes in all. `ROWS` must be at least `2 * ry + 1` of the filter used.
///
/// ```
/// use fixsight::filter::{self, Border, FilterLines};
/// let mut lines = FilterLines::<320, 5>::new();       // 320*5 + 4*320 = 2880 bytes
/// assert!(lines.stream(&filter::binomial5(Border::Clamp), 240).is_ok());
/// assert!(lines.stream(&filter::binomial7(Border::Clamp), 240).is_err()); // needs 7 rows
/// ```
#[derive(Debug, Clone)]
pub struct FilterLines<const WIDTH: usize, const ROWS: usize> {
    ring: [[u8; WIDTH]; ROWS],
    acc: [i32; WIDTH],
}

impl<const WIDTH: usize, const ROWS: usize> Default for FilterLines<WIDTH, ROWS> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const WIDTH: usize, const ROWS: usize> FilterLines<WIDTH, ROWS> {
    /// Zeroed buffers.
    ///
    /// ```
    /// let _l = fixsight::filter::FilterLines::<64, 3>::new();
    /// ```
    pub const fn new() -> Self {
        Self {
            ring: [[0; WIDTH]; ROWS],
            acc: [0; WIDTH],
        }
    }

    /// Starts a stream of width `WIDTH` and the given height over these
    /// buffers.
    ///
    /// ```
    /// let mut l = fixsight::filter::FilterLines::<8, 3>::new();
    /// let f = fixsight::filter::sobel_x(fixsight::filter::Border::Clamp);
    /// assert!(l.stream(&f, 8).is_ok());
    /// ```
    pub fn stream<'f>(
        &mut self,
        filter: &'f SeparableFilter,
        height: usize,
    ) -> Result<FilterStream<'f, '_>> {
        FilterStream::new(
            filter,
            WIDTH,
            height,
            self.ring.as_flattened_mut(),
            &mut self.acc,
        )
    }
}

/// A filter with caller-chosen tap sets (kernel id `filter.separable`);
/// the presets below are the other `filter.*` kernel ids. The same checks
/// as [`SeparableFilter::new`]: combined shift at most 30 and a worst-case
/// accumulator that fits `i32`, else a typed error.
///
/// ```
/// use fixsight::filter::{self, Border, Taps};
/// // [1 2 1] / 4 along rows only.
/// let f = filter::separable(Taps::new(&[1, 2, 1], 2)?, Taps::new(&[1], 0)?, Border::Fill(0))?;
/// assert_eq!(f.shift(), 2);
/// // A tap set too large for the i32 accumulator is refused.
/// let big = Taps::new(&[32767; 9], 0)?;
/// assert!(filter::separable(big, big, Border::Clamp).is_err());
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn separable(h: Taps, v: Taps, border: Border) -> Result<SeparableFilter> {
    SeparableFilter::new(h, v, border)
}

const fn taps3(a: i32, b: i32, c: i32, shift: u8) -> Taps {
    Taps::preset([a, b, c, 0, 0, 0, 0, 0, 0], 3, shift)
}

/// Binomial smoothing, 3 taps `[1 2 1] / 4` in both directions.
///
/// ```
/// let f = fixsight::filter::binomial3(fixsight::filter::Border::Clamp);
/// assert_eq!(f.horizontal().coefficients(), &[1, 2, 1]);
/// ```
pub const fn binomial3(border: Border) -> SeparableFilter {
    let t = taps3(1, 2, 1, 2);
    SeparableFilter { h: t, v: t, border }
}

/// Binomial smoothing, 5 taps `[1 4 6 4 1] / 16` in both directions.
///
/// ```
/// let f = fixsight::filter::binomial5(fixsight::filter::Border::Clamp);
/// assert_eq!(f.vertical().coefficients(), &[1, 4, 6, 4, 1]);
/// ```
pub const fn binomial5(border: Border) -> SeparableFilter {
    let t = Taps::preset([1, 4, 6, 4, 1, 0, 0, 0, 0], 5, 4);
    SeparableFilter { h: t, v: t, border }
}

/// Binomial smoothing, 7 taps `[1 6 15 20 15 6 1] / 64` in both directions.
///
/// ```
/// let f = fixsight::filter::binomial7(fixsight::filter::Border::Clamp);
/// assert_eq!(f.horizontal().sum(), 64);
/// ```
pub const fn binomial7(border: Border) -> SeparableFilter {
    let t = Taps::preset([1, 6, 15, 20, 15, 6, 1, 0, 0], 7, 6);
    SeparableFilter { h: t, v: t, border }
}

/// Sobel x derivative: `[-1 0 1]` horizontally, `[1 2 1]` vertically, no
/// shift; output range `-1020..=1020` (use `i16` output). Positive where
/// intensity grows to the right.
///
/// ```
/// let f = fixsight::filter::sobel_x(fixsight::filter::Border::Clamp);
/// assert_eq!(f.shift(), 0);
/// ```
pub const fn sobel_x(border: Border) -> SeparableFilter {
    SeparableFilter {
        h: taps3(-1, 0, 1, 0),
        v: taps3(1, 2, 1, 0),
        border,
    }
}

/// Sobel y derivative: `[1 2 1]` horizontally, `[-1 0 1]` vertically;
/// positive where intensity grows downwards (row index increasing).
///
/// ```
/// let f = fixsight::filter::sobel_y(fixsight::filter::Border::Clamp);
/// assert_eq!(f.vertical().coefficients(), &[-1, 0, 1]);
/// ```
pub const fn sobel_y(border: Border) -> SeparableFilter {
    SeparableFilter {
        h: taps3(1, 2, 1, 0),
        v: taps3(-1, 0, 1, 0),
        border,
    }
}

/// Scharr x derivative: `[-1 0 1]` horizontally, `[3 10 3]` vertically;
/// output range `-4080..=4080`.
///
/// ```
/// let f = fixsight::filter::scharr_x(fixsight::filter::Border::Clamp);
/// assert_eq!(f.vertical().coefficients(), &[3, 10, 3]);
/// ```
pub const fn scharr_x(border: Border) -> SeparableFilter {
    SeparableFilter {
        h: taps3(-1, 0, 1, 0),
        v: taps3(3, 10, 3, 0),
        border,
    }
}

/// Scharr y derivative: `[3 10 3]` horizontally, `[-1 0 1]` vertically.
///
/// ```
/// let f = fixsight::filter::scharr_y(fixsight::filter::Border::Clamp);
/// assert_eq!(f.horizontal().coefficients(), &[3, 10, 3]);
/// ```
pub const fn scharr_y(border: Border) -> SeparableFilter {
    SeparableFilter {
        h: taps3(3, 10, 3, 0),
        v: taps3(-1, 0, 1, 0),
        border,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn presets_pass_the_checked_constructor() {
        for f in [
            binomial3(Border::Clamp),
            binomial5(Border::Clamp),
            binomial7(Border::Clamp),
            sobel_x(Border::Clamp),
            sobel_y(Border::Clamp),
            scharr_x(Border::Clamp),
            scharr_y(Border::Clamp),
        ] {
            let h = Taps::new(
                &f.h.coefficients()
                    .iter()
                    .map(|&c| c as i16)
                    .collect::<heapless::Vec<i16, 9>>(),
                f.h.shift(),
            )
            .unwrap();
            let v = Taps::new(
                &f.v.coefficients()
                    .iter()
                    .map(|&c| c as i16)
                    .collect::<heapless::Vec<i16, 9>>(),
                f.v.shift(),
            )
            .unwrap();
            assert_eq!(SeparableFilter::new(h, v, f.border).unwrap(), f);
        }
    }

    #[test]
    fn bad_tap_sets_are_rejected_with_reasons() {
        assert!(matches!(
            Taps::new(&[], 0),
            Err(Error::BadTaps { value: 0, .. })
        ));
        assert!(matches!(
            Taps::new(&[1; 11], 0),
            Err(Error::BadTaps { value: 11, .. })
        ));
        assert!(matches!(
            Taps::new(&[1, 2], 0),
            Err(Error::BadTaps { value: 2, .. })
        ));
        assert!(matches!(
            Taps::new(&[1], 17),
            Err(Error::BadTaps { value: 17, .. })
        ));
        let t = Taps::new(&[1], 16).unwrap();
        assert!(matches!(
            SeparableFilter::new(t, t, Border::Clamp),
            Err(Error::BadTaps { value: 32, .. })
        ));
        // Largest 9-tap set that fits: 255 * S * S < 2^31 -> S <= 2901.
        let ok = Taps::new(&[322, 322, 322, 322, 322, 322, 322, 322, 325], 0).unwrap();
        assert_eq!(ok.abs_sum(), 2901);
        assert!(SeparableFilter::new(ok, ok, Border::Clamp).is_ok());
        let bad = Taps::new(&[322, 322, 322, 322, 322, 322, 322, 322, 326], 0).unwrap();
        assert!(matches!(
            SeparableFilter::new(bad, bad, Border::Clamp),
            Err(Error::AccumulatorOverflow { .. })
        ));
    }

    /// The loops of the feature `compact-filter` give the sums of the
    /// per-count loops the default build uses, for every tap count.
    #[test]
    fn compact_loops_equal_the_per_count_loops() {
        let w = 23;
        let data: [[u8; 23]; MAX_TAPS] =
            core::array::from_fn(|j| core::array::from_fn(|x| ((x * 37 + j * 101) % 256) as u8));
        let rows: [&[u8]; MAX_TAPS] = core::array::from_fn(|j| &data[j][..]);
        let coefs = [-3, 17, 255, -128, 9, 0, 77, -1, 64];
        for n in 0..=MAX_TAPS {
            let (mut a, mut b) = ([0i32; 23], [0i32; 23]);
            column_sum_by_count(&rows, &coefs, n, 5, &mut a);
            column_sum_any(&rows[..n], &coefs[..n], 5, &mut b);
            assert_eq!(a, b, "{n} rows");
        }
        let acc: [i32; 23] = core::array::from_fn(|x| (x as i32 * 7919) % 1000 - 500);
        for taps in [
            &coefs[..1],
            &coefs[..3],
            &coefs[..5],
            &coefs[..7],
            &coefs[..9],
        ] {
            let n = w - taps.len() + 1;
            let (mut a, mut b) = ([0i16; 23], [0i16; 23]);
            match taps.len() {
                1 => dot_row::<i16, 1>(taps, &acc, &mut a[..n], 3),
                3 => dot_row::<i16, 3>(taps, &acc, &mut a[..n], 3),
                5 => dot_row::<i16, 5>(taps, &acc, &mut a[..n], 3),
                7 => dot_row::<i16, 7>(taps, &acc, &mut a[..n], 3),
                _ => dot_row::<i16, 9>(taps, &acc, &mut a[..n], 3),
            }
            dot_row_any(taps, &acc, &mut b[..n], 3);
            assert_eq!(a, b, "{} taps", taps.len());
        }
    }

    #[test]
    #[cfg(not(feature = "compact-filter"))] // no forms in that build
    fn constant_tap_forms_equal_the_tap_by_tap_sums() {
        let sets: [&[i32]; 5] = [
            &[1, 2, 1],
            &[1, 4, 6, 4, 1],
            &[1, 6, 15, 20, 15, 6, 1],
            &[-1, 0, 1],
            &[3, 10, 3],
        ];
        const W: usize = 23;
        let mut data = [[0u8; W]; 7];
        for (j, r) in data.iter_mut().enumerate() {
            for (x, p) in r.iter_mut().enumerate() {
                *p = match (x + j) % 5 {
                    0 => 0,
                    1 => 255,
                    _ => ((x * 37 + j * 91) % 256) as u8,
                };
            }
        }
        for c in sets {
            let kind = FixedTaps::of(c).unwrap();
            let n = c.len();
            let mut rows: [&[u8]; MAX_TAPS] = [&[]; MAX_TAPS];
            let mut coefs = [0i32; MAX_TAPS];
            for j in 0..n {
                rows[j] = &data[j];
                coefs[j] = c[j];
            }
            let (mut fixed, mut generic) = ([0i32; W], [0i32; W]);
            kind.column_sum(&rows, &mut fixed);
            match n {
                3 => column_sum::<3>(&rows, &coefs, 0, &mut generic),
                5 => column_sum::<5>(&rows, &coefs, 0, &mut generic),
                _ => column_sum::<7>(&rows, &coefs, 0, &mut generic),
            }
            assert_eq!(fixed, generic, "column form of {c:?}");
            // Horizontal: an accumulator row with the extreme column sums.
            let acc: [i32; W] = core::array::from_fn(|x| fixed[x] * 255 - 128 * (x as i32 % 3));
            for s in [0, 3, 8] {
                let (mut a, mut b) = ([0i16; W], [0i16; W]);
                kind.dot_row(&acc, &mut a[..W + 1 - n], s);
                match n {
                    3 => dot_row::<i16, 3>(c, &acc, &mut b[..W + 1 - n], s),
                    5 => dot_row::<i16, 5>(c, &acc, &mut b[..W + 1 - n], s),
                    _ => dot_row::<i16, 7>(c, &acc, &mut b[..W + 1 - n], s),
                }
                assert_eq!(a, b, "row form of {c:?}, shift {s}");
            }
        }
    }

    #[test]
    fn stream_misuse_is_an_error_not_a_panic() {
        let f = binomial5(Border::Clamp);
        let mut ring = [0u8; 4 * 5];
        let mut acc = [0i32; 4];
        assert!(matches!(
            FilterStream::new(&f, 5, 2, &mut ring, &mut acc),
            Err(Error::BufferTooShort { .. })
        ));
        let mut s = FilterStream::new(&f, 4, 2, &mut ring, &mut acc).unwrap();
        let mut out = [0u8; 3];
        assert!(matches!(
            s.push_row(&[1, 2, 3, 4], &mut out),
            Err(Error::BufferTooShort { .. })
        ));
        assert!(matches!(
            s.push_row(&[1, 2, 3], &mut [0u8; 4]),
            Err(Error::BufferTooShort { .. })
        ));
    }
}
