//! The filter presets with taps of radius 1 and 2 on packed 16-bit lanes:
//! `filter.binomial3`, `filter.binomial5`, `filter.sobel_x`,
//! `filter.sobel_y`, `filter.scharr_x`, `filter.scharr_y`.
//!
//! # What is computed
//!
//! Exactly the kernel crate's integer model (`fixsight::filter`, module
//! docs): for output pixel `(x, y)`,
//! `acc = sum_j sum_i v[j] * h[i] * P(x + i - r, y + j - r)` with taps
//! applied as a correlation (tap 0 on the left or top neighbour), `P` the
//! image extended by the border rule (clamp: the nearest edge pixel; fill
//! `c`: `c` everywhere outside), then `out = floor((acc + 2^(s-1)) / 2^s)`
//! (`out = acc` for `s = 0`). None of these presets can saturate:
//!
//! | kernel id | `v` | `h` | `s` | output range |
//! |---|---|---|---:|---|
//! | `filter.binomial3` | `[1 2 1]` | `[1 2 1]` | 4 | `u8`, `0..=255` |
//! | `filter.binomial5` | `[1 4 6 4 1]` | `[1 4 6 4 1]` | 8 | `u8`, `0..=255` |
//! | `filter.sobel_x` | `[1 2 1]` | `[-1 0 1]` | 0 | `i16`, `-1020..=1020` |
//! | `filter.sobel_y` | `[-1 0 1]` | `[1 2 1]` | 0 | `i16`, `-1020..=1020` |
//! | `filter.scharr_x` | `[3 10 3]` | `[-1 0 1]` | 0 | `i16`, `-4080..=4080` |
//! | `filter.scharr_y` | `[-1 0 1]` | `[3 10 3]` | 0 | `i16`, `-4080..=4080` |
//!
//! # How
//!
//! Per output row, two passes over a lane array in the caller's scratch.
//!
//! 1. **Columns.** `a(x) = sum_j v[j] * P(x, y + j - r)`, the vertical sum of
//!    column `x`, four columns per step: one 32-bit load per source row, split
//!    into the lane pairs `(x, x + 2)` ([`even_bytes`]) and `(x + 1, x + 3)`
//!    ([`odd_bytes`]), summed with plain 32-bit adds and shifts. A lane
//!    holds at most `16 * 255 = 4080` (`[1 4 6 4 1]`, `[3 10 3]`) or
//!    `4 * 255 = 1020` (`[1 2 1]`), so no carry leaves a lane. The
//!    derivative `[-1 0 1]` is stored plus 256 (`1..=511`), so that no lane
//!    is ever negative and no subtraction borrows from the next lane. Group
//!    `g` of four columns is stored as two words, `E[g] = (a(4g), a(4g + 2))`
//!    and `O[g] = (a(4g + 1), a(4g + 3))`, after one group of padding on the
//!    left. Columns outside the image take the border's column sum: `a(0)`
//!    or `a(w - 1)` for clamp (the clamped pixel's whole column),
//!    `c * sum(v)` (plus the bias) for fill. Rows outside the image under
//!    fill, and the last `w mod 4` columns, are summed one column at a time
//!    (same sums).
//! 2. **Rows.** Four outputs per step, again as an even pair
//!    `(x, x + 2)` and an odd pair `(x + 1, x + 3)`. The neighbours at odd
//!    distance straddle two words: `(a(x - 1), a(x + 1)) =`
//!    [`straddle`]`(O[g - 1], O[g])` and so on, each computed once and
//!    carried to the next step. With `S(d)` the pair of `a` at distance `d`:
//!    * binomial5: `S(-2) + S(+2) + 4 (S(-1) + S(+1)) + 6 S(0) + (128, 128)`;
//!      a lane holds at most `16 * 4080 + 128 = 65408 < 65536`, so plain
//!      adds are exact. The four bytes are `(even >> 8) & 0x00FF00FF |
//!      odd & 0xFF00FF00`: one store. binomial3 likewise with
//!      `S(-1) + 2 S(0) + S(+1) + (8, 8)` (at most 4088) and a shift of 4.
//!    * sobel_x, scharr_x: [`ssub16`]`(S(+1), S(-1))`, the one step whose
//!      lanes go negative (a plain subtraction would borrow across the
//!      lanes); the four `i16` are [`low_lanes`] and [`high_lanes`] of the
//!      pairs: two stores.
//!    * sobel_y, scharr_y: the smoothing sums of the biased differences with
//!      plain adds (at most `4 * 511` and `16 * 511`), then one [`ssub16`]
//!      removes the bias times the tap sum (`4 * 256`, `16 * 256`).
//!
//! # Memory
//!
//! `scratch`: [`scratch_words`]`(width)` words, `2 * (ceil(width / 4) + 2)`.
//! No other state; the views may have padded rows (stride > width).

use crate::lanes::{even_bytes, high_lanes, low_lanes, odd_bytes, ssub16, straddle};
use fixsight::filter::Border;
use fixsight::{Error, ImageView, ImageViewMut, Result};

/// Words of scratch the kernels of this module need for a row of `width`
/// pixels: two per group of four columns, plus one group of padding on
/// each side.
///
/// ```
/// assert_eq!(fixsight_port_cortex_m4_dsp::filter::scratch_words(320), 164);
/// assert_eq!(fixsight_port_cortex_m4_dsp::filter::scratch_words(1), 6);
/// ```
pub const fn scratch_words(width: usize) -> usize {
    2 * (width.div_ceil(4) + 2)
}

/// The vertical tap sets.
#[derive(Clone, Copy)]
enum Column {
    /// `[1 4 6 4 1]`.
    Five,
    /// `[1 2 1]`.
    Three,
    /// `[3 10 3]`.
    Scharr,
    /// `[-1 0 1]`, stored with the bias [`DIFF_BIAS`] so that every lane
    /// stays non-negative.
    Diff,
}

/// Bias added to every `[-1 0 1]` column sum (`-255..=255` becomes
/// `1..=511`), removed by one [`ssub16`] after the row pass.
const DIFF_BIAS: u32 = 256;

impl Column {
    const fn radius(self) -> usize {
        match self {
            Column::Five => 2,
            _ => 1,
        }
    }

    const fn taps(self) -> &'static [i32] {
        match self {
            Column::Five => &[1, 4, 6, 4, 1],
            Column::Three => &[1, 2, 1],
            Column::Scharr => &[3, 10, 3],
            Column::Diff => &[-1, 0, 1],
        }
    }

    /// Sum of the taps: the column sum of a column all `c`, over `c`.
    const fn sum(self) -> i32 {
        match self {
            Column::Five | Column::Scharr => 16,
            Column::Three => 4,
            Column::Diff => 0,
        }
    }

    /// Added to every stored column sum.
    const fn bias(self) -> i32 {
        match self {
            Column::Diff => DIFF_BIAS as i32,
            _ => 0,
        }
    }
}

/// Where the source row of one vertical tap comes from.
type RowSource<'a> = Option<&'a [u8]>;

/// Lane of column `x` (`-4 <= x`) in the lane array: word and bit shift.
fn lane_of(x: isize) -> (usize, u32) {
    let p = (x + 4) as usize;
    (2 * (p / 4) + (p & 1), 16 * ((p as u32 >> 1) & 1))
}

fn set_lane(lanes: &mut [u32], x: isize, v: u32) {
    let (i, s) = lane_of(x);
    if let Some(w) = lanes.get_mut(i) {
        *w = (*w & !(0xFFFF << s)) | (v << s);
    }
}

fn get_lane(lanes: &[u32], x: isize) -> u32 {
    let (i, s) = lane_of(x);
    lanes.get(i).map_or(0, |w| (w >> s) & 0xFFFF)
}

/// Checks the views and the scratch, returns `(width, height, words)`.
fn check<T: Copy>(
    src: &ImageView<'_, u8>,
    dst: &ImageViewMut<'_, T>,
    scratch: &[u32],
) -> Result<(usize, usize, usize)> {
    for ch in [src.channels(), dst.channels()] {
        if ch != 1 {
            return Err(Error::UnsupportedChannels {
                channels: ch,
                accepted: "1",
            });
        }
    }
    let (w, h) = (src.width(), src.height());
    if (dst.width(), dst.height()) != (w, h) {
        return Err(Error::SizeMismatch {
            what: "filter output vs input",
            expected: (w, h),
            got: (dst.width(), dst.height()),
        });
    }
    let words = scratch_words(w);
    if scratch.len() < words {
        return Err(Error::BufferTooShort {
            what: "port filter scratch",
            needed: words,
            got: scratch.len(),
        });
    }
    Ok((w, h, words))
}

/// Pass 1 for output row `y`: the column sums of every column, border
/// columns included, into `lanes` (`scratch_words(w)` words).
fn columns(col: Column, src: &ImageView<'_, u8>, y: usize, border: Border, lanes: &mut [u32]) {
    let (w, h) = (src.width(), src.height());
    let r = col.radius();
    let mut taps: [RowSource<'_>; 5] = [None; 5];
    for (j, slot) in taps.iter_mut().enumerate().take(2 * r + 1) {
        let yy = (y + j).checked_sub(r).filter(|&yy| yy < h);
        *slot = match (yy, border) {
            (Some(yy), _) => src.row(yy),
            (None, Border::Clamp) => src.row((y + j).saturating_sub(r).min(h - 1)),
            (None, Border::Fill(_)) => None,
        };
    }
    let fill = match border {
        Border::Fill(c) => c as i32,
        Border::Clamp => 0,
    };
    let groups = w / 4;
    let out = &mut lanes[2..2 + 2 * groups];
    let packed = match (col, taps) {
        (Column::Five, [Some(r0), Some(r1), Some(r2), Some(r3), Some(r4)]) => {
            columns5([r0, r1, r2, r3, r4], out);
            true
        }
        (Column::Three, [Some(r0), Some(r1), Some(r2), _, _]) => {
            // Lanes: <= 4 * 255 = 1020.
            columns3([r0, r1, r2], out, |a, b, c| a + c + (b << 1));
            true
        }
        (Column::Scharr, [Some(r0), Some(r1), Some(r2), _, _]) => {
            // Lanes: <= 16 * 255 = 4080.
            columns3([r0, r1, r2], out, |a, b, c| {
                let t = a + c;
                t + (t << 1) + (b << 3) + (b << 1)
            });
            true
        }
        (Column::Diff, [Some(r0), Some(_), Some(r2), _, _]) => {
            // Lanes: c - a + 256 in 1..=511, never below zero, so the plain
            // subtraction borrows nothing from the next lane.
            const BIAS: u32 = DIFF_BIAS | DIFF_BIAS << 16;
            columns3([r0, r0, r2], out, |a, _, c| c + BIAS - a);
            true
        }
        _ => false,
    };
    // One column at a time: every column when a row lies in a fill border,
    // else the last `w mod 4`. Every sum is >= 0 (biased for `Diff`).
    let first = if packed { 4 * groups } else { 0 };
    for x in first..w {
        let mut s = col.bias();
        for (&t, row) in col.taps().iter().zip(taps) {
            s += t * row.and_then(|r| r.get(x)).map_or(fill, |&p| p as i32);
        }
        set_lane(lanes, x as isize, s as u32);
    }
    let (left, right) = match border {
        Border::Clamp => (get_lane(lanes, 0), get_lane(lanes, w as isize - 1)),
        Border::Fill(c) => {
            let v = (c as i32 * col.sum() + col.bias()) as u32;
            (v, v)
        }
    };
    for x in -4..0 {
        set_lane(lanes, x, left);
    }
    for x in w..4 * (w.div_ceil(4) + 1) {
        set_lane(lanes, x as isize, right);
    }
}

/// Loads four bytes as a little-endian word (one `LDR`; unaligned loads
/// are allowed on the Armv7-M).
#[inline(always)]
fn word(b: &[u8]) -> u32 {
    b.try_into().map_or(0, u32::from_le_bytes)
}

/// `[1 4 6 4 1]` column sums of `4 * out.len() / 2` columns.
fn columns5(rows: [&[u8]; 5], out: &mut [u32]) {
    let [r0, r1, r2, r3, r4] = rows;
    let it = out
        .chunks_exact_mut(2)
        .zip(r0.chunks_exact(4))
        .zip(r1.chunks_exact(4))
        .zip(r2.chunks_exact(4))
        .zip(r3.chunks_exact(4))
        .zip(r4.chunks_exact(4));
    for (((((o, a), b), c), d), e) in it {
        let (a, b, c, d, e) = (word(a), word(b), word(c), word(d), word(e));
        // Lanes: each term <= 255 times its tap, the sum <= 4080.
        let sum = |f: fn(u32) -> u32| {
            let (cc, bd) = (f(c), f(b) + f(d));
            f(a) + f(e) + (bd << 2) + (cc << 2) + (cc << 1)
        };
        o[0] = sum(even_bytes);
        o[1] = sum(odd_bytes);
    }
}

/// Three-row column sums of `4 * out.len() / 2` columns: `form(a, b, c)`
/// of the lane pairs of the top, middle and bottom rows.
#[inline(always)]
fn columns3(rows: [&[u8]; 3], out: &mut [u32], form: impl Fn(u32, u32, u32) -> u32) {
    let [r0, r1, r2] = rows;
    let it = out
        .chunks_exact_mut(2)
        .zip(r0.chunks_exact(4))
        .zip(r1.chunks_exact(4))
        .zip(r2.chunks_exact(4));
    for (((o, a), b), c) in it {
        let (a, b, c) = (word(a), word(b), word(c));
        o[0] = form(even_bytes(a), even_bytes(b), even_bytes(c));
        o[1] = form(odd_bytes(a), odd_bytes(b), odd_bytes(c));
    }
}

/// The lane pairs of one step of pass 2, group `g`: `e = E[g]`, `o = O[g]`
/// and the straddling pairs at distance -2, -1 (carried from the previous
/// step) and +2, +3.
struct Step {
    /// `(a(x - 2), a(x))` with `x = 4g`.
    es_prev: u32,
    /// `(a(x - 1), a(x + 1))`.
    os_prev: u32,
    /// `(a(x), a(x + 2))`.
    e: u32,
    /// `(a(x + 1), a(x + 3))`.
    o: u32,
    /// `(a(x + 2), a(x + 4))`.
    es: u32,
    /// `(a(x + 3), a(x + 5))`.
    os: u32,
}

/// Pass 2: `out[4g..4g + 4] = step(g)` for every group `g` of four
/// outputs, left to right; in the last group of a row whose width is not a
/// multiple of 4 only the elements inside the row are stored.
#[inline(always)]
fn rows<T: Copy>(lanes: &[u32], out: &mut [T], step: impl Fn(&Step) -> [T; 4]) {
    let (Some(&e0), Some(&o0), Some(&e1), Some(&o1)) =
        (lanes.first(), lanes.get(1), lanes.get(2), lanes.get(3))
    else {
        return;
    };
    let mut es_prev = straddle(e0, e1);
    let mut os_prev = straddle(o0, o1);
    let mut step_at = |cur: &[u32], next: &[u32]| {
        let (e, o) = (cur[0], cur[1]);
        let (es, os) = (straddle(e, next[0]), straddle(o, next[1]));
        let s = Step {
            es_prev,
            os_prev,
            e,
            o,
            es,
            os,
        };
        (es_prev, os_prev) = (es, os);
        step(&s)
    };
    let mut chunks = out.chunks_exact_mut(4);
    let mut groups = lanes[2..].chunks_exact(2).zip(lanes[4..].chunks_exact(2));
    for (c, (cur, next)) in (&mut chunks).zip(&mut groups) {
        c.copy_from_slice(&step_at(cur, next));
    }
    let rest = chunks.into_remainder();
    if let Some((cur, next)) = groups.next() {
        let vals = step_at(cur, next);
        let n = rest.len().min(4);
        rest[..n].copy_from_slice(&vals[..n]);
    }
}

/// Both passes over every row: the column sums of `col` into the
/// scratch, then `step` per group of four outputs.
#[inline(always)]
fn run<T: Copy>(
    col: Column,
    src: &ImageView<'_, u8>,
    dst: &mut ImageViewMut<'_, T>,
    border: Border,
    scratch: &mut [u32],
    step: impl Fn(&Step) -> [T; 4],
) -> Result<()> {
    let (w, h, words) = check(src, dst, scratch)?;
    let lanes = &mut scratch[..words];
    for y in 0..h {
        columns(col, src, y, border, lanes);
        let Some(out) = dst.row_mut(y) else {
            break;
        };
        rows(lanes, &mut out[..w], &step);
    }
    Ok(())
}

/// Four `u8` from the even pair `(x, x + 2)` and the odd pair
/// `(x + 1, x + 3)` of rounded sums, each lane `< 2^(8 + s)`:
/// `(even >> s)` in bytes 0 and 2, `(odd >> s)` in bytes 1 and 3.
#[inline(always)]
fn pack_bytes<const S: u32>(even: u32, odd: u32) -> [u8; 4] {
    (((even >> S) & 0x00FF_00FF) | ((odd << (8 - S)) & 0xFF00_FF00)).to_le_bytes()
}

/// Four `i16` from the even and odd pairs of signed lanes.
#[inline(always)]
fn pack_i16(even: u32, odd: u32) -> [i16; 4] {
    let (lo, hi) = (low_lanes(even, odd), high_lanes(even, odd));
    [lo as i16, (lo >> 16) as i16, hi as i16, (hi >> 16) as i16]
}

/// `filter.binomial5`: `[1 4 6 4 1] / 16` both ways, `u8 -> u8`, bit-exact
/// to `fixsight::filter::binomial5(border).apply(..)`.
///
/// Errors: either view not single-channel
/// ([`Error::UnsupportedChannels`]), sizes differ
/// ([`Error::SizeMismatch`]), `scratch` shorter than
/// [`scratch_words`]`(width)` ([`Error::BufferTooShort`]).
///
/// ```
/// use fixsight::filter::{self, Border};
/// use fixsight::{ImageView, ImageViewMut};
/// use fixsight_port_cortex_m4_dsp::filter::{binomial5, scratch_words};
/// let src: Vec<u8> = (0..7 * 5).map(|i| (i * 37 % 256) as u8).collect();
/// let (mut ours, mut theirs) = ([0u8; 35], [0u8; 35]);
/// let mut scratch = [0u32; scratch_words(7)];
/// let view = ImageView::new(&src, 7, 5, 7)?;
/// binomial5(&view, &mut ImageViewMut::new(&mut ours, 7, 5, 7)?, Border::Fill(9), &mut scratch)?;
/// filter::binomial5(Border::Fill(9))
///     .apply(&view, &mut ImageViewMut::new(&mut theirs, 7, 5, 7)?, &mut [0i32; 7])?;
/// assert_eq!(ours, theirs);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn binomial5(
    src: &ImageView<'_, u8>,
    dst: &mut ImageViewMut<'_, u8>,
    border: Border,
    scratch: &mut [u32],
) -> Result<()> {
    run(Column::Five, src, dst, border, scratch, |s| {
        // Lanes: <= 16 * 4080 + 128 = 65408.
        const HALF: u32 = 0x0080_0080;
        let even = s.es_prev + s.es + ((s.os_prev + s.o) << 2) + (s.e << 2) + (s.e << 1);
        let odd = s.os_prev + s.os + ((s.e + s.es) << 2) + (s.o << 2) + (s.o << 1);
        pack_bytes::<8>(even + HALF, odd + HALF)
    })
}

/// `filter.binomial3`: `[1 2 1] / 4` both ways, `u8 -> u8`, bit-exact to
/// `fixsight::filter::binomial3(border).apply(..)`.
///
/// Errors as [`binomial5`].
///
/// ```
/// use fixsight::filter::Border;
/// use fixsight::{ImageView, ImageViewMut};
/// use fixsight_port_cortex_m4_dsp::filter::{binomial3, scratch_words};
/// let src = [0u8, 0, 255, 0, 0];
/// let mut dst = [0u8; 5];
/// let mut scratch = [0u32; scratch_words(5)];
/// binomial3(&ImageView::new(&src, 5, 1, 5)?, &mut ImageViewMut::new(&mut dst, 5, 1, 5)?,
///           Border::Clamp, &mut scratch)?;
/// // (0 + 2*255 + 0)/4 = 127.5 -> 128 (round half up); neighbours 255/4 = 63.75 -> 64
/// assert_eq!(dst, [0, 64, 128, 64, 0]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn binomial3(
    src: &ImageView<'_, u8>,
    dst: &mut ImageViewMut<'_, u8>,
    border: Border,
    scratch: &mut [u32],
) -> Result<()> {
    run(Column::Three, src, dst, border, scratch, |s| {
        // Lanes: <= 4 * 1020 + 8 = 4088.
        const HALF: u32 = 0x0008_0008;
        let even = s.os_prev + s.o + (s.e << 1);
        let odd = s.e + s.es + (s.o << 1);
        pack_bytes::<4>(even + HALF, odd + HALF)
    })
}

/// `filter.sobel_x`: `[-1 0 1]` across, `[1 2 1]` down, `u8 -> i16`,
/// bit-exact to `fixsight::filter::sobel_x(border).apply(..)`.
///
/// Errors as [`binomial5`].
///
/// ```
/// use fixsight::filter::Border;
/// use fixsight::{ImageView, ImageViewMut};
/// use fixsight_port_cortex_m4_dsp::filter::{scratch_words, sobel_x};
/// // A vertical step edge: 4 * 100 on the two columns beside it.
/// let mut src = [0u8; 6 * 3];
/// for y in 0..3 { for x in 3..6 { src[y * 6 + x] = 100; } }
/// let mut gx = [0i16; 6 * 3];
/// let mut scratch = [0u32; scratch_words(6)];
/// sobel_x(&ImageView::new(&src, 6, 3, 6)?, &mut ImageViewMut::new(&mut gx, 6, 3, 6)?,
///         Border::Clamp, &mut scratch)?;
/// assert_eq!(&gx[6..12], &[0, 0, 400, 400, 0, 0]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn sobel_x(
    src: &ImageView<'_, u8>,
    dst: &mut ImageViewMut<'_, i16>,
    border: Border,
    scratch: &mut [u32],
) -> Result<()> {
    run(Column::Three, src, dst, border, scratch, difference)
}

/// `filter.scharr_x`: `[-1 0 1]` across, `[3 10 3]` down, `u8 -> i16`,
/// bit-exact to `fixsight::filter::scharr_x(border).apply(..)`.
///
/// Errors as [`binomial5`].
///
/// ```
/// use fixsight::filter::Border;
/// use fixsight::{ImageView, ImageViewMut};
/// use fixsight_port_cortex_m4_dsp::filter::{scharr_x, scratch_words};
/// // A vertical step edge: 16 * 100 on the two columns beside it.
/// let mut src = [0u8; 6 * 3];
/// for y in 0..3 { for x in 3..6 { src[y * 6 + x] = 100; } }
/// let mut gx = [0i16; 6 * 3];
/// let mut scratch = [0u32; scratch_words(6)];
/// scharr_x(&ImageView::new(&src, 6, 3, 6)?, &mut ImageViewMut::new(&mut gx, 6, 3, 6)?,
///          Border::Clamp, &mut scratch)?;
/// assert_eq!(&gx[6..12], &[0, 0, 1600, 1600, 0, 0]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn scharr_x(
    src: &ImageView<'_, u8>,
    dst: &mut ImageViewMut<'_, i16>,
    border: Border,
    scratch: &mut [u32],
) -> Result<()> {
    run(Column::Scharr, src, dst, border, scratch, difference)
}

/// The row pass `[-1 0 1]`: `a(x + 1) - a(x - 1)`, the one step whose
/// lanes go negative.
#[inline(always)]
fn difference(s: &Step) -> [i16; 4] {
    pack_i16(ssub16(s.o, s.os_prev), ssub16(s.es, s.e))
}

/// `filter.sobel_y`: `[1 2 1]` across, `[-1 0 1]` down, `u8 -> i16`,
/// bit-exact to `fixsight::filter::sobel_y(border).apply(..)`.
///
/// The column differences are stored plus 256 (so every lane is
/// non-negative and the row pass adds without borrows); the row pass
/// removes `4 * 256` with one [`ssub16`].
///
/// Errors as [`binomial5`].
///
/// ```
/// use fixsight::filter::Border;
/// use fixsight::{ImageView, ImageViewMut};
/// use fixsight_port_cortex_m4_dsp::filter::{scratch_words, sobel_y};
/// // A horizontal step edge: 4 * 100 on the two rows beside it.
/// let mut src = [0u8; 3 * 6];
/// for y in 3..6 { for x in 0..3 { src[y * 3 + x] = 100; } }
/// let mut gy = [0i16; 3 * 6];
/// let mut scratch = [0u32; scratch_words(3)];
/// sobel_y(&ImageView::new(&src, 3, 6, 3)?, &mut ImageViewMut::new(&mut gy, 3, 6, 3)?,
///         Border::Clamp, &mut scratch)?;
/// assert_eq!([gy[3], gy[6], gy[9], gy[12]], [0, 400, 400, 0]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn sobel_y(
    src: &ImageView<'_, u8>,
    dst: &mut ImageViewMut<'_, i16>,
    border: Border,
    scratch: &mut [u32],
) -> Result<()> {
    run(Column::Diff, src, dst, border, scratch, |s| {
        // Lanes: <= 4 * 511 = 2044 before the bias is removed.
        const BIAS: u32 = (4 * DIFF_BIAS) | (4 * DIFF_BIAS) << 16;
        let even = s.os_prev + s.o + (s.e << 1);
        let odd = s.e + s.es + (s.o << 1);
        pack_i16(ssub16(even, BIAS), ssub16(odd, BIAS))
    })
}

/// `filter.scharr_y`: `[3 10 3]` across, `[-1 0 1]` down, `u8 -> i16`,
/// bit-exact to `fixsight::filter::scharr_y(border).apply(..)`.
///
/// Column differences biased as in [`sobel_y`]; the row pass removes
/// `16 * 256`.
///
/// Errors as [`binomial5`].
///
/// ```
/// use fixsight::filter::Border;
/// use fixsight::{ImageView, ImageViewMut};
/// use fixsight_port_cortex_m4_dsp::filter::{scharr_y, scratch_words};
/// let mut src = [0u8; 3 * 6];
/// for y in 3..6 { for x in 0..3 { src[y * 3 + x] = 100; } }
/// let mut gy = [0i16; 3 * 6];
/// let mut scratch = [0u32; scratch_words(3)];
/// scharr_y(&ImageView::new(&src, 3, 6, 3)?, &mut ImageViewMut::new(&mut gy, 3, 6, 3)?,
///          Border::Clamp, &mut scratch)?;
/// assert_eq!([gy[3], gy[6], gy[9], gy[12]], [0, 1600, 1600, 0]);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn scharr_y(
    src: &ImageView<'_, u8>,
    dst: &mut ImageViewMut<'_, i16>,
    border: Border,
    scratch: &mut [u32],
) -> Result<()> {
    run(Column::Diff, src, dst, border, scratch, |s| {
        // Lanes: <= 16 * 511 = 8176 before the bias is removed.
        const BIAS: u32 = (16 * DIFF_BIAS) | (16 * DIFF_BIAS) << 16;
        let (te, to) = (s.os_prev + s.o, s.e + s.es);
        let even = te + (te << 1) + (s.e << 3) + (s.e << 1);
        let odd = to + (to << 1) + (s.o << 3) + (s.o << 1);
        pack_i16(ssub16(even, BIAS), ssub16(odd, BIAS))
    })
}
