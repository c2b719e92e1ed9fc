//! Binary thinning to one-pixel-wide, 8-connected edges by the parallel
//! method of Zhang and Suen (T. Y. Zhang, C. Y. Suen, 1984, "A fast parallel
//! algorithm for thinning digital patterns", Communications of the ACM
//! 27(3)).
//!
//! # Model (what a port must reproduce)
//!
//! A pixel is foreground when its byte is nonzero; outside the image reads
//! as background. For a foreground pixel `P1` name its neighbours
//! `P2 = N, P3 = NE, P4 = E, P5 = SE, P6 = S, P7 = SW, P8 = W, P9 = NW`
//! (y down the rows) and let
//!
//! * `B` = number of foreground neighbours,
//! * `A` = number of background-to-foreground transitions in the cyclic
//!   sequence `P2, P3, ..., P9, P2`.
//!
//! One iteration is two sub-iterations. Each sub-iteration decides every
//! pixel from the map as it was at the start of that sub-iteration (the
//! parallel rule of the paper) and deletes (sets to 0) every foreground
//! pixel with `2 <= B <= 6`, `A = 1` and
//!
//! * sub-iteration 1: `P2 P4 P6 = 0` and `P4 P6 P8 = 0`;
//! * sub-iteration 2: `P2 P4 P8 = 0` and `P2 P6 P8 = 0`.
//!
//! Iterations repeat until one deletes nothing. Pixels that stay keep their
//! byte value. The decision is a look-up in a 256-entry table indexed by the
//! neighbour bits (bit 0 = `P2` ... bit 7 = `P9`), built at compile time
//! from the rule above ([`deletable`]).
//!
//! Known property of the published method: an isolated 2x2 block is deleted
//! entirely; lines one pixel wide (8-connected, no 4-connected corners) are
//! left unchanged.
//!
//! # Memory and time
//! A caller scratch of `3 * width` bytes holds the rows above, at and below
//! the current row as they were at the start of the sub-iteration. Each
//! iteration is two scans (the first iteration's of the whole frame, see
//! below); the number of iterations is about half
//! the thickest stroke plus one, and at most the foreground count plus one
//! (every iteration but the last deletes a pixel).
//!
//! Without a cap the time therefore grows with the frame: a solid frame
//! (every pixel foreground, the thickest stroke it can hold) needs
//! `min(W, H) / 2 + 1` iterations, each costing `O(W H)`. For a firmware
//! deadline use [`thin_at_most`]: with a cap of `K` iterations the work is
//! at most `K` iterations of at most 82 counted operations per pixel (per
//! sub-iteration: the 2 ring copies, a word test per group of 4 pixels, and
//! for a foreground pixel that is deleted 1 + 8 loads, 1 + 17 compares and
//! ors, 7 shifts, 1 table look-up, 3 branches, 1 store; see the tallies in
//! the code), whatever the input. A sub-iteration decides only the rows
//! whose 3-row neighbourhood changed since the same kind of sub-iteration
//! last decided them (every row the first time; the others would decide
//! the same again), so iterations after the first cost in proportion to
//! the rows still changing. Measured (`cargo run --release -p fixsight
//! --features count-ops --example thin_worst`, x86-64 host, 2 shared cores
//! with a QEMU run on the other, commit `e9e9f62`):
//!
//! | frame | iterations of a solid frame | ops/px, first iteration | ops/px per iteration, average | host time, uncapped | host time, one iteration |
//! |---|---|---|---|---|---|
//! | 64x64 | 33 | 78.5 | 27.8 | 1 ms | 0.05 ms |
//! | 160x120 | 61 | 79.0 | 30.7 | 58 ms | 0.23 ms |
//! | 320x240 | 121 | 79.3 | 30.6 | 58 ms | 0.93 ms |
//! | 640x480 | 241 | 79.4 | 30.6 | 680 ms | 8.3 ms |
//! | 1024x1024 | 513 | 79.4 | 27.5 | 4.2 s | 29 ms |
//!
//! Edge maps after non-maximum suppression are one or two pixels wide and
//! need a few iterations; a cap a little above that (for example 8) bounds
//! the frame time at `8 x` the one-iteration figure and
//! [`ThinStats::capped`] reports the frames where it bit.
//!
//! ```
//! use fixsight::{thinning, ImageViewMut};
//! // A 3-pixel-thick bar thins to its centre row.
//! let mut map = [0u8; 9 * 5];
//! for y in 1..4 { for x in 1..8 { map[y * 9 + x] = 255; } }
//! let mut scratch = [0u8; 3 * 9];
//! thinning::thin(&mut ImageViewMut::new(&mut map, 9, 5, 9)?, &mut scratch)?;
//! // Only the centre row is left (the ends shorten, as in the paper's examples).
//! assert_eq!(&map[2 * 9..3 * 9], &[0, 0, 255, 255, 255, 255, 0, 0, 0]);
//! assert_eq!(map.iter().filter(|&&v| v != 0).count(), 4);
//! # Ok::<(), fixsight::Error>(())
//! ```

use crate::error::{Error, Result};
use crate::image::{check_single_channel, ImageViewMut};
use crate::ops::{tally, tally_per, Op};

/// The Zhang-Suen deletion rule for neighbour bits `mask` (bit 0 = `P2` =
/// N, then clockwise to bit 7 = `P9` = NW) in sub-iteration `sub` (1 or 2;
/// any other value is treated as 2).
///
/// ```
/// use fixsight::thinning::deletable;
/// // End of a horizontal line (only W set): B = 1, kept.
/// assert!(!deletable(1 << 6, 1));
/// // Top edge of a thick bar (E, SE, S, SW, W set): kept by sub-iteration 1
/// // (E, S and W all set), deleted by sub-iteration 2 (N clear).
/// assert!(!deletable(0b0111_1100, 1));
/// assert!(deletable(0b0111_1100, 2));
/// ```
pub const fn deletable(mask: u8, sub: u8) -> bool {
    let b = mask.count_ones();
    // A: 0 -> 1 transitions going P2, P3, ..., P9, P2.
    let next = mask.rotate_right(1); // bit i = neighbour i + 1
    let a = (!mask & next).count_ones();
    let p2 = mask & 1 != 0;
    let p4 = mask & (1 << 2) != 0;
    let p6 = mask & (1 << 4) != 0;
    let p8 = mask & (1 << 6) != 0;
    let (c, d) = if sub == 1 {
        (!(p2 && p4 && p6), !(p4 && p6 && p8))
    } else {
        (!(p2 && p4 && p8), !(p2 && p6 && p8))
    };
    b >= 2 && b <= 6 && a == 1 && c && d
}

const fn build_table() -> [u8; 256] {
    let mut t = [0u8; 256];
    let mut m = 0usize;
    while m < 256 {
        let mut v = 0u8;
        if deletable(m as u8, 1) {
            v |= 1;
        }
        if deletable(m as u8, 2) {
            v |= 2;
        }
        t[m] = v;
        m += 1;
    }
    t
}

/// Bit 0: deletable in sub-iteration 1; bit 1: in sub-iteration 2.
static TABLE: [u8; 256] = build_table();

/// What a thinning run did.
///
/// ```
/// assert_eq!(fixsight::thinning::ThinStats::default().deleted, 0);
/// ```
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ThinStats {
    /// Full iterations run, including the last one that deleted nothing.
    pub iterations: u32,
    /// Pixels deleted.
    pub deleted: u32,
    /// `true` when [`thin_at_most`] stopped at its iteration cap while the
    /// last iteration still deleted pixels (the map may not be stable).
    pub capped: bool,
}

/// 1 when pixel `x` of `row` is foreground; 0 outside the row (an empty
/// `row` stands for a row outside the image; `x = usize::MAX` for the
/// column left of the image).
#[inline(always)]
fn fg(row: &[u8], x: usize) -> u8 {
    row.get(x).map_or(0, |&v| (v != 0) as u8)
}

/// A binary map that [`thin_map`] thins: the caller's `u8` image here,
/// the 2-bit packed map of [`crate::pipeline`].
pub(crate) trait ThinMap {
    /// Width and height.
    fn dims(&self) -> (usize, usize);
    /// Writes row `y` to `dst` (`width` bytes), nonzero where foreground;
    /// returns `false` only when the row has no foreground pixel (`true`
    /// is always allowed: it only costs the scan of the row).
    fn load_row(&self, y: usize, dst: &mut [u8]) -> bool;
    /// Deletes the foreground pixel `(x, y)`.
    fn delete(&mut self, x: usize, y: usize);
}

impl ThinMap for ImageViewMut<'_, u8> {
    #[inline(always)]
    fn dims(&self) -> (usize, usize) {
        (self.width(), self.height())
    }
    #[inline(always)]
    fn load_row(&self, y: usize, dst: &mut [u8]) -> bool {
        dst.copy_from_slice(self.as_view().row_at(y));
        true
    }
    #[inline(always)]
    fn delete(&mut self, x: usize, y: usize) {
        self.row_at_mut(y)[x] = 0;
    }
}

/// A set of rows in blocks of `2^shift` rows (at most 256 blocks, so any
/// height fits in 32 bytes): a block in the set stands for all its rows.
#[derive(Debug, Clone, Copy)]
struct RowSet {
    bits: [u32; 8],
    shift: u32,
}

impl RowSet {
    /// Every row of a map `h` rows high.
    fn all(h: usize) -> RowSet {
        let mut shift = 0;
        while (h.saturating_sub(1) >> shift) >= 256 {
            shift += 1;
        }
        RowSet {
            bits: [u32::MAX; 8],
            shift,
        }
    }

    fn empty(shift: u32) -> RowSet {
        RowSet {
            bits: [0; 8],
            shift,
        }
    }

    #[inline(always)]
    fn has(&self, y: usize) -> bool {
        let b = y >> self.shift;
        self.bits
            .get(b / 32)
            .is_some_and(|w| (w >> (b % 32)) & 1 != 0)
    }

    /// Adds rows `y - 1 ..= y + 1` (those inside `0..h`).
    fn mark_around(&mut self, y: usize, h: usize) {
        for r in y.saturating_sub(1)..=(y + 1).min(h.saturating_sub(1)) {
            let b = r >> self.shift;
            if let Some(w) = self.bits.get_mut(b / 32) {
                *w |= 1 << (b % 32);
            }
        }
    }

    fn add(&mut self, o: &RowSet) {
        for (a, b) in self.bits.iter_mut().zip(o.bits) {
            *a |= b;
        }
    }
}

/// One sub-iteration; returns the number of pixels deleted. The rows are
/// copied into the ring before any pixel of the row below them is
/// decided, so every decision reads the map as it was at the start of the
/// sub-iteration (the parallel rule). Rows the map reports empty and
/// groups of 4 background pixels are skipped: they hold no pixel to
/// decide (a shortcut of the scan, not of the rule).
fn sub_iteration<M: ThinMap>(
    map: &mut M,
    ring: &mut [u8],
    bit: u8,
    todo: &RowSet,
) -> (u32, RowSet) {
    let (w, h) = map.dims();
    let slot = |y: usize| (y % 3) * w;
    let mut touched = RowSet::empty(todo.shift);
    // Row `r` is read by the rows `r - 1 ..= r + 1`: loaded (before any of
    // its pixels is deleted) when one of them is to be decided.
    let needed = |r: usize| todo.has(r.saturating_sub(1)) || todo.has(r) || todo.has(r + 1);
    let mut any = [false; 3];
    if needed(0) {
        any[0] = map.load_row(0, &mut ring[..w]);
        tally_per(Op::Load, 1, w);
        tally_per(Op::Store, 1, w);
    }
    let mut deleted = 0u32;
    for y in 0..h {
        if y + 1 < h && needed(y + 1) {
            let s = slot(y + 1);
            any[(y + 1) % 3] = map.load_row(y + 1, &mut ring[s..s + w]);
            tally_per(Op::Load, 1, w);
            tally_per(Op::Store, 1, w);
        }
        tally(Op::Branch, 2);
        if !todo.has(y) || !any[y % 3] {
            continue;
        }
        let ring_ro: &[u8] = ring;
        let above = if y > 0 {
            &ring_ro[slot(y - 1)..slot(y - 1) + w]
        } else {
            &[]
        };
        let cur = &ring_ro[slot(y)..slot(y) + w];
        let below = if y + 1 < h {
            &ring_ro[slot(y + 1)..slot(y + 1) + w]
        } else {
            &[]
        };
        let (mut fg_count, mut groups, mut scanned) = (0usize, 0usize, 0usize);
        let mut row_deleted = 0u32;
        let quads = cur.chunks_exact(4);
        let tail = quads.remainder();
        // Groups of 4 pixels, then the last `w % 4` (their group offset
        // `w - w % 4`).
        let groups_of = quads
            .map(|q| u32::from_ne_bytes([q[0], q[1], q[2], q[3]]))
            .enumerate()
            .map(|(g, v)| (4 * g, v, 4))
            .chain((!tail.is_empty()).then_some((w - tail.len(), u32::MAX, tail.len())));
        for (x0, v, len) in groups_of {
            groups += 1;
            // Four background pixels: one word compared.
            if v == 0 {
                continue;
            }
            scanned += len;
            for (x, &v) in cur.iter().enumerate().skip(x0).take(len) {
                if v == 0 {
                    continue;
                }
                fg_count += 1;
                let (l, r) = (x.wrapping_sub(1), x + 1);
                let mask = fg(above, x)
                    | fg(above, r) << 1
                    | fg(cur, r) << 2
                    | fg(below, r) << 3
                    | fg(below, x) << 4
                    | fg(below, l) << 5
                    | fg(cur, l) << 6
                    | fg(above, l) << 7;
                if TABLE[mask as usize] & bit != 0 {
                    map.delete(x, y);
                    row_deleted += 1;
                }
            }
        }
        deleted += row_deleted;
        if row_deleted > 0 {
            touched.mark_around(y, h);
        }
        // Per group of 4 pixels: a word load, compare and branch; per pixel
        // of a group with foreground: load, compare, branch. Foreground
        // pixels: 8 loads, 8 compares, 7 shifts, 7 ors, a table look-up,
        // a test and branch.
        tally_per(Op::Load, 1, groups + scanned);
        tally_per(Op::Load, 8, fg_count);
        tally_per(Op::Logic, 1, groups + scanned);
        tally_per(Op::Logic, 17, fg_count);
        tally_per(Op::Shift, 7, fg_count);
        tally_per(Op::Table, 1, fg_count);
        tally_per(Op::Branch, 1, groups + scanned);
        tally_per(Op::Branch, 1, fg_count);
        tally_per(Op::Store, 1, row_deleted as usize);
    }
    (deleted, touched)
}

/// Iterations on any [`ThinMap`] with a ring of `3 * width` bytes (the
/// caller checks it), at most `max_iterations` (at least 1).
///
/// A sub-iteration decides only the rows whose 3-row neighbourhood changed
/// since that kind of sub-iteration last decided them (all rows the first
/// time): the decisions of the other rows could only repeat (a deleted
/// pixel is background now, a kept one would be kept again), so skipping
/// them changes no pixel, no count and no iteration number.
pub(crate) fn thin_map<M: ThinMap>(map: &mut M, ring: &mut [u8], max_iterations: u32) -> ThinStats {
    let mut st = ThinStats::default();
    let (_, h) = map.dims();
    let mut todo = [RowSet::all(h); 2];
    loop {
        st.iterations += 1;
        let (d1, t1) = sub_iteration(map, ring, 1, &todo[0]);
        todo[0] = t1;
        todo[1].add(&t1);
        let (d2, t2) = sub_iteration(map, ring, 2, &todo[1]);
        todo[1] = t2;
        todo[0].add(&t2);
        let d = d1 + d2;
        st.deleted += d;
        tally(Op::Branch, 1);
        if d == 0 {
            return st;
        }
        if st.iterations >= max_iterations {
            st.capped = true;
            return st;
        }
    }
}

/// Checks a thinning scratch of `3 * width` bytes and returns that span.
fn ring_of(width: usize, scratch: &mut [u8]) -> Result<&mut [u8]> {
    let needed = 3 * width;
    if scratch.len() < needed {
        return Err(Error::BufferTooShort {
            what: "thinning row scratch",
            needed,
            got: scratch.len(),
        });
    }
    Ok(&mut scratch[..needed])
}

/// Thins a binary map in place (see the module docs). `scratch` needs
/// `3 * width` bytes.
///
/// Errors: short scratch -> [`Error::BufferTooShort`]; multi-channel map ->
/// [`Error::UnsupportedChannels`].
///
/// ```
/// use fixsight::{thinning, ImageViewMut};
/// // A one-pixel diagonal line is left as it is.
/// let mut map = [9u8, 0, 0,  0, 9, 0,  0, 0, 9];
/// let mut scratch = [0u8; 9];
/// let st = thinning::thin(&mut ImageViewMut::new(&mut map, 3, 3, 3)?, &mut scratch)?;
/// assert_eq!(map, [9, 0, 0,  0, 9, 0,  0, 0, 9]);
/// assert_eq!((st.iterations, st.deleted), (1, 0));
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn thin(map: &mut ImageViewMut<'_, u8>, scratch: &mut [u8]) -> Result<ThinStats> {
    check_single_channel(&map.as_view())?;
    let ring = ring_of(map.width(), scratch)?;
    Ok(thin_map(map, ring, u32::MAX))
}

/// [`thin`] with a cap on the iterations: stops after `max_iterations`
/// iterations even when the last one deleted pixels, and then reports
/// [`ThinStats::capped`]. Each iteration is the same two sub-iterations as
/// in [`thin`], so a cap at or above the number [`thin`] needs gives the
/// same map. A cap bounds the time per frame on a real-time core.
///
/// Errors: as [`thin`]; `max_iterations = 0` -> [`Error::BadParameter`].
///
/// ```
/// use fixsight::{thinning, ImageViewMut};
/// // A 5-pixel-thick bar needs more than one iteration.
/// let mut map = [0u8; 12 * 9];
/// for y in 2..7 { for x in 1..11 { map[y * 12 + x] = 1; } }
/// let mut scratch = [0u8; 36];
/// let st = thinning::thin_at_most(&mut ImageViewMut::new(&mut map, 12, 9, 12)?, &mut scratch, 1)?;
/// assert!(st.capped && st.iterations == 1);
/// # Ok::<(), fixsight::Error>(())
/// ```
pub fn thin_at_most(
    map: &mut ImageViewMut<'_, u8>,
    scratch: &mut [u8],
    max_iterations: u32,
) -> Result<ThinStats> {
    check_single_channel(&map.as_view())?;
    if max_iterations == 0 {
        return Err(Error::BadParameter {
            name: "thinning iteration cap",
            expected: "1..",
            got: 0,
        });
    }
    let ring = ring_of(map.width(), scratch)?;
    Ok(thin_map(map, ring, max_iterations))
}

#[cfg(test)]
mod tests {
    extern crate std;
    use super::*;
    use proptest::prelude::*;
    use std::vec;
    use std::vec::Vec;

    fn run(map: &mut [u8], w: usize, h: usize) -> ThinStats {
        let mut scratch = vec![0u8; 3 * w];
        thin(&mut ImageViewMut::new(map, w, h, w).unwrap(), &mut scratch).unwrap()
    }

    /// 8-connected components of the foreground (heap flood fill).
    fn components(map: &[u8], w: usize, h: usize) -> usize {
        let mut seen = vec![false; w * h];
        let mut n = 0;
        for s in 0..w * h {
            if map[s] == 0 || seen[s] {
                continue;
            }
            n += 1;
            seen[s] = true;
            let mut todo = vec![s];
            while let Some(p) = todo.pop() {
                let (x, y) = ((p % w) as i32, (p / w) as i32);
                for dy in -1..=1 {
                    for dx in -1..=1 {
                        let (nx, ny) = (x + dx, y + dy);
                        if nx >= 0 && ny >= 0 && (nx as usize) < w && (ny as usize) < h {
                            let q = ny as usize * w + nx as usize;
                            if map[q] != 0 && !seen[q] {
                                seen[q] = true;
                                todo.push(q);
                            }
                        }
                    }
                }
            }
        }
        n
    }

    /// Bresenham line (8-connected, one pixel wide).
    fn line(map: &mut [u8], w: usize, (x0, y0): (i32, i32), (x1, y1): (i32, i32)) {
        let (dx, dy) = ((x1 - x0).abs(), -(y1 - y0).abs());
        let (sx, sy) = (if x0 < x1 { 1 } else { -1 }, if y0 < y1 { 1 } else { -1 });
        let (mut x, mut y, mut err) = (x0, y0, dx + dy);
        loop {
            map[y as usize * w + x as usize] = 255;
            if (x, y) == (x1, y1) {
                break;
            }
            let e2 = 2 * err;
            if e2 >= dy {
                err += dy;
                x += sx;
            }
            if e2 <= dx {
                err += dx;
                y += sy;
            }
        }
    }

    #[test]
    fn table_matches_the_rule_at_a_few_hand_checked_masks() {
        // Zhang & Suen 1984: interior of a region (B = 8) is never deleted;
        // an isolated pixel (B = 0) is never deleted; a pixel joining two
        // parts (A = 2) is never deleted.
        assert_eq!(TABLE[0xFF], 0);
        assert_eq!(TABLE[0], 0);
        assert_eq!(TABLE[(1 << 0) | (1 << 4)], 0); // N and S only: A = 2
                                                   // SE corner of a block (N, NW, W set) is deleted in both.
        assert_eq!(TABLE[(1 << 0) | (1 << 7) | (1 << 6)], 3);
    }

    #[test]
    fn published_invariants_hold_on_fixed_shapes() {
        // Zhang & Suen 1984, CACM 27(3): thinning leaves one-pixel lines,
        // reduces a thick stroke to its medial line and keeps connectivity.
        let (w, h) = (32usize, 24usize);
        // Filled bar 5 px thick, rows 4..9: thins to row 6.
        let mut m = vec![0u8; w * h];
        for y in 4..9 {
            for x in 3..29 {
                m[y * w + x] = 255;
            }
        }
        run(&mut m, w, h);
        for y in 0..h {
            for x in 0..w {
                if m[y * w + x] != 0 {
                    assert_eq!(y, 6, "({x},{y})");
                }
            }
        }
        assert!(m[6 * w + 6..6 * w + 26].iter().all(|&v| v != 0));
        // Two filled rectangles and a ring: component count kept.
        let mut m = vec![0u8; w * h];
        for y in 2..8 {
            for x in 2..12 {
                m[y * w + x] = 255;
            }
        }
        for y in 12..21 {
            for x in 4..9 {
                m[y * w + x] = 255;
            }
        }
        for y in 3..20 {
            for x in 16..29 {
                let ring = !(6..17).contains(&y) || !(19..26).contains(&x);
                if ring {
                    m[y * w + x] = 255;
                }
            }
        }
        let before = components(&m, w, h);
        assert_eq!(before, 3);
        let st = run(&mut m, w, h);
        assert_eq!(components(&m, w, h), before);
        assert!(st.deleted > 0 && st.iterations > 1);
    }

    #[test]
    fn short_scratch_is_a_typed_error() {
        let mut m = [0u8; 8];
        let mut s = [0u8; 11];
        assert_eq!(
            thin(&mut ImageViewMut::new(&mut m, 4, 2, 4).unwrap(), &mut s),
            Err(Error::BufferTooShort {
                what: "thinning row scratch",
                needed: 12,
                got: 11
            })
        );
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]

        #[test]
        fn bresenham_lines_are_unchanged(
            x0 in 0i32..24, y0 in 0i32..20, x1 in 0i32..24, y1 in 0i32..20
        ) {
            // Zhang & Suen 1984: a line already one pixel wide is a fixed point.
            prop_assume!((x0, y0) != (x1, y1));
            let (w, h) = (24usize, 20usize);
            let mut m = vec![0u8; w * h];
            line(&mut m, w, (x0, y0), (x1, y1));
            let before = m.clone();
            run(&mut m, w, h);
            prop_assert_eq!(m, before);
        }

        #[test]
        fn result_is_a_subset_and_a_fixed_point(
            w in 1usize..16, h in 1usize..16, seed in any::<u64>()
        ) {
            let mut m: Vec<u8> = Vec::with_capacity(w * h);
            let mut s = seed;
            for _ in 0..w * h {
                s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
                m.push(if (s >> 40) % 3 != 0 { 200 } else { 0 });
            }
            let orig = m.clone();
            run(&mut m, w, h);
            for (a, b) in m.iter().zip(&orig) {
                prop_assert!(*a == 0 || a == b);
            }
            let once = m.clone();
            let st = run(&mut m, w, h);
            prop_assert_eq!(m, once);
            prop_assert_eq!(st.deleted, 0);
        }
    }
}
