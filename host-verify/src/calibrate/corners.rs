//! Finding a checkerboard's inner corners in one grey image, to sub-pixel
//! precision.
//!
//! # Steps
//!
//! 1. **Working scale.** Images wider or taller than [`SEARCH_MAX_SIDE`] are
//!    halved (2x2 means) until they fit; the search runs there and only the
//!    refinement sees the full image.
//! 2. **Saddle candidates**, at smoothing scales [`SEARCH_SCALES`] in turn
//!    (the first that yields the board wins): the image is smoothed with a
//!    Gaussian of standard deviation `s`, the Hessian taken by central
//!    differences, and the saddle strength `Ixy^2 - Ixx Iyy` (positive
//!    only where the surface curves up one way and down the other, as at a
//!    point where four squares meet) kept at its local maxima over a
//!    `(2 ceil(s) + 1)^2` window (ties to the earlier pixel in raster
//!    order), at most `8 * corners + 100` of them, each placed at the vertex
//!    of a parabola through the strength and its two neighbours per axis.
//! 3. **Cross test.** The smoothed image is read on a circle of radius
//!    `2 s + 1` around each candidate (32 bilinear samples). A corner
//!    where four squares meet is point-symmetric, so the profile has two
//!    bright and two dark arcs: its mean crossings number exactly 4, its
//!    second circular harmonic `A2` (mean of `f e^{-2i phi}`) is at least
//!    `0.15` of the profile's range and at least 1.5 times the first
//!    harmonic, and the range is at least 8 grey levels. `arg A2` (the
//!    "phase") turns by about 180 degrees from a corner to each of its four
//!    grid neighbours and stays about the same to its diagonal neighbours;
//!    "opposite phase" below means `cos(phase difference) < 0`.
//! 4. **Grid growth.** From a seed candidate, its nearest candidate of
//!    opposite phase gives one grid step, the nearest opposite-phase
//!    candidate at 45..135 degrees from it (and at most 2.5 steps away) the
//!    other, and a same-phase candidate must sit within 0.3 of the shorter
//!    step of their sum. The grid then grows a whole column or row at a
//!    time on each side. Each new corner is predicted from the last steps
//!    on its line: the next step is the last step turned and scaled as the
//!    last step was from the one before (the ratio of the two steps taken
//!    as complex numbers), which follows the shrinking of perspective and
//!    the bend of a distorting lens; with only two corners on the line, the
//!    last step repeats. The nearest unused candidate of opposite phase to
//!    its predecessor within 0.4 of the smaller of the predicted step, the
//!    last step and the distance to the predecessor's nearest neighbour
//!    across the line is taken; a corner with no candidate there is sought
//!    by refinement from the prediction (step 5, window radius 0.4 of the
//!    last step, clamped to `3..=25` px) and kept if it stays within 0.4 of
//!    the last step of the prediction and passes the cross test with the
//!    opposite phase. A line is added only when all its corners are found.
//!    Seeds are tried in decreasing saddle strength (at most 160, skipping
//!    candidates already in a grown grid); the first grid of exactly the
//!    board's size wins. A grid that grows past the board's size in either
//!    direction, or holds the board's size with more corners, is reported
//!    as too large.
//! 5. **Sub-pixel refinement** on the full image smoothed with a Gaussian
//!    of standard deviation 0.7 px: around the current estimate `q`, every
//!    pixel `p` within radius `rho` has a gradient `g` (central differences)
//!    that is perpendicular to `p - q` when `q` is the corner (all edges
//!    near the corner pass through it). Minimising `sum w (g . (p - q))^2`
//!    with `w = exp(-|p - q|^2 / (2 (rho/2)^2))` gives
//!    `q = (sum w g g^T)^-1 sum w g g^T p` (Foerstner & Guelch 1987, "A
//!    fast operator for detection and precise location of distinct points,
//!    corners and centres of circular features", ISPRS Intercommission
//!    Conference, from memory), iterated until the step is below `1e-4` px
//!    (at most 50 times). `rho` is 0.45 of the corner's reach, clamped to
//!    `2.5..=25` px: the reach is the smaller height of the parallelogram
//!    spanned by the corner's shorter grid steps along the two axes, the
//!    distance to the nearest edge of a neighbouring square that does not
//!    pass through the corner (on a board seen at a slant this is much less
//!    than the step). A corner that moves more than half its reach is
//!    rejected, and with it the image.
//! 6. **Labelling.** The grid is transposed if needed so that its first axis
//!    has the board's `cols` corners, mirrored when the board's axes would
//!    appear left-handed (the board is seen from its printed side), and of
//!    the two labellings left (a 180-degree turn apart) the one whose first
//!    corner is nearer the image's top-left is kept.
//!
//! Thresholds in steps 2-4 are common practice, no source; they were
//! chosen on the rendered views of [`super::synth`] (blur up to 2 px, noise
//! up to 6 DN, vignetting, wide-angle and fisheye lenses).

use super::synth::gaussian_blur;
use super::{Board, Grey};
use std::collections::BTreeMap;

/// Longest image side the corner search works on; larger images are
/// halved until they fit.
pub const SEARCH_MAX_SIDE: usize = 1024;
/// Smoothing scales (px at the working scale) tried in turn.
pub const SEARCH_SCALES: [f64; 4] = [0.8, 1.2, 2.0, 3.2];
/// Seeds tried per scale.
const MAX_SEEDS: usize = 160;

/// Why a board was not found in an image.
#[derive(Debug, Clone, PartialEq)]
pub enum NotFound {
    /// No point where four squares meet.
    NoCorners,
    /// Corners found, but never a grid of the board's size; the largest
    /// grid seen is given.
    Partial {
        /// Largest grid found (columns, rows).
        largest: (usize, usize),
    },
    /// A grid larger than the board.
    TooLarge {
        /// The grid found (columns, rows).
        found: (usize, usize),
    },
    /// A corner of the grid could not be refined.
    Refinement {
        /// Its label (i, j).
        corner: (usize, usize),
    },
}

impl std::fmt::Display for NotFound {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            NotFound::NoCorners => write!(f, "no checkerboard corner found"),
            NotFound::Partial { largest } => write!(
                f,
                "board not found completely (largest grid {}x{} corners)",
                largest.0, largest.1
            ),
            NotFound::TooLarge { found } => write!(
                f,
                "a grid of {}x{} corners, larger than the board: another pattern in view?",
                found.0, found.1
            ),
            NotFound::Refinement { corner } => write!(
                f,
                "corner ({}, {}) could not be located to sub-pixel precision",
                corner.0, corner.1
            ),
        }
    }
}

/// A candidate corner at the working scale.
#[derive(Debug, Clone, Copy)]
struct Candidate {
    x: f64,
    y: f64,
    strength: f64,
    phase: f64,
}

/// Finds the board's inner corners, row-major by board label (module
/// docs).
///
/// ```
/// use fixsight_verify::calibrate::{corners::find_board, synth};
/// let spec = synth::SynthSpec::wide_angle(320, 240);
/// let pose = synth::poses(&spec, 1, 11).unwrap()[0];
/// let img = synth::render(&spec, &pose, 11);
/// let found = find_board(&img, &spec.board).unwrap();
/// assert_eq!(found.len(), 54);
/// ```
pub fn find_board(img: &Grey, board: &Board) -> Result<Vec<(f64, f64)>, NotFound> {
    let mut work = img.clone();
    let mut level = 0;
    while work.width.max(work.height) > SEARCH_MAX_SIDE {
        work = halve(&work);
        level += 1;
    }
    let scale = (1usize << level) as f64;
    let mut largest = (0usize, 0usize);
    let mut too_large = None;
    let mut any = false;
    let fine = gaussian_blur(img, 0.7);
    for &s in &SEARCH_SCALES {
        let smooth = gaussian_blur(&work, s);
        let cands = candidates(&smooth, s, board.count());
        if cands.is_empty() {
            continue;
        }
        any = true;
        match grow_best(&smooth, &cands, board, s) {
            Ok(grid) => {
                // To full-resolution coordinates: working pixel i covers
                // full pixels i*2^L .. (i+1)*2^L - 1.
                let grid: Vec<Vec<(f64, f64)>> = grid
                    .into_iter()
                    .map(|row| {
                        row.into_iter()
                            .map(|(x, y)| ((x + 0.5) * scale - 0.5, (y + 0.5) * scale - 0.5))
                            .collect()
                    })
                    .collect();
                return finish(&fine, grid, board);
            }
            Err(NotFound::Partial { largest: l }) => {
                if l.0 * l.1 > largest.0 * largest.1 {
                    largest = l;
                }
            }
            Err(NotFound::TooLarge { found }) => too_large = Some(found),
            Err(e) => return Err(e),
        }
    }
    if let Some(found) = too_large {
        return Err(NotFound::TooLarge { found });
    }
    if !any || largest == (0, 0) {
        return Err(NotFound::NoCorners);
    }
    Err(NotFound::Partial { largest })
}

/// 2x2 means (odd last column / row dropped).
fn halve(g: &Grey) -> Grey {
    let (w, h) = (g.width / 2, g.height / 2);
    let mut px = Vec::with_capacity(w * h);
    for y in 0..h {
        for x in 0..w {
            let (a, b) = (2 * x as isize, 2 * y as isize);
            px.push((g.at(a, b) + g.at(a + 1, b) + g.at(a, b + 1) + g.at(a + 1, b + 1)) / 4.0);
        }
    }
    Grey {
        width: w,
        height: h,
        px,
    }
}

/// Saddle candidates that pass the cross test (steps 2-3).
fn candidates(smooth: &Grey, s: f64, corners: usize) -> Vec<Candidate> {
    let (w, h) = (smooth.width, smooth.height);
    let mut resp = vec![0.0; w * h];
    for y in 1..h.saturating_sub(1) {
        for x in 1..w.saturating_sub(1) {
            let (xi, yi) = (x as isize, y as isize);
            let c = smooth.at(xi, yi);
            let ixx = smooth.at(xi + 1, yi) - 2.0 * c + smooth.at(xi - 1, yi);
            let iyy = smooth.at(xi, yi + 1) - 2.0 * c + smooth.at(xi, yi - 1);
            let ixy =
                (smooth.at(xi + 1, yi + 1) - smooth.at(xi + 1, yi - 1) - smooth.at(xi - 1, yi + 1)
                    + smooth.at(xi - 1, yi - 1))
                    / 4.0;
            resp[y * w + x] = ixy * ixy - ixx * iyy;
        }
    }
    let k = s.ceil() as isize;
    let mut peaks = Vec::new();
    for y in 1..h.saturating_sub(1) {
        for x in 1..w.saturating_sub(1) {
            let r = resp[y * w + x];
            if r <= 0.0 {
                continue;
            }
            let mut best = true;
            'win: for dy in -k..=k {
                for dx in -k..=k {
                    let (xx, yy) = (x as isize + dx, y as isize + dy);
                    if (dx, dy) == (0, 0)
                        || xx < 0
                        || yy < 0
                        || xx >= w as isize
                        || yy >= h as isize
                    {
                        continue;
                    }
                    let q = resp[yy as usize * w + xx as usize];
                    // Ties go to the earlier pixel in raster order.
                    if q > r || (q == r && (dy, dx) < (0, 0)) {
                        best = false;
                        break 'win;
                    }
                }
            }
            if best {
                // Sub-pixel peak: a parabola through the response and its
                // two neighbours, per axis.
                let at = |dx: isize, dy: isize| {
                    resp[(y as isize + dy) as usize * w + (x as isize + dx) as usize]
                };
                let vertex = |a: f64, b: f64, c: f64| {
                    let den = a - 2.0 * b + c;
                    if den < 0.0 {
                        (0.5 * (a - c) / den).clamp(-0.5, 0.5)
                    } else {
                        0.0
                    }
                };
                let ox = vertex(at(-1, 0), r, at(1, 0));
                let oy = vertex(at(0, -1), r, at(0, 1));
                peaks.push((x as f64 + ox, y as f64 + oy, r));
            }
        }
    }
    peaks.sort_by(|a, b| b.2.total_cmp(&a.2));
    peaks.truncate(8 * corners + 100);
    let radius = 2.0 * s + 1.0;
    peaks
        .into_iter()
        .filter_map(|(x, y, strength)| {
            cross_phase(smooth, x, y, radius).map(|phase| Candidate {
                x,
                y,
                strength,
                phase,
            })
        })
        .collect()
}

/// The cross test of step 3; the phase `arg A2` when it passes.
fn cross_phase(smooth: &Grey, x: f64, y: f64, radius: f64) -> Option<f64> {
    const N: usize = 32;
    let mut f = [0.0; N];
    for (k, v) in f.iter_mut().enumerate() {
        let a = k as f64 * std::f64::consts::TAU / N as f64;
        *v = smooth.sample(x + radius * a.cos(), y + radius * a.sin());
    }
    let mean = f.iter().sum::<f64>() / N as f64;
    let (lo, hi) = f
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &v| {
            (l.min(v), h.max(v))
        });
    let range = hi - lo;
    if range < 8.0 {
        return None;
    }
    let crossings = (0..N)
        .filter(|&k| (f[k] > mean) != (f[(k + 1) % N] > mean))
        .count();
    if crossings != 4 {
        return None;
    }
    let harmonic = |m: f64| {
        let (mut re, mut im) = (0.0, 0.0);
        for (k, v) in f.iter().enumerate() {
            let a = m * k as f64 * std::f64::consts::TAU / N as f64;
            re += (v - mean) * a.cos();
            im -= (v - mean) * a.sin();
        }
        (re / N as f64, im / N as f64)
    };
    let (r1, i1) = harmonic(1.0);
    let (r2, i2) = harmonic(2.0);
    let (a1, a2) = (r1.hypot(i1), r2.hypot(i2));
    if a2 < 0.15 * range || a2 < 1.5 * a1 {
        return None;
    }
    Some(i2.atan2(r2))
}

/// Grid of candidate indices by label `(i, j)`.
type Grid = BTreeMap<(i32, i32), Pt>;

/// A grid point at the working scale.
#[derive(Debug, Clone, Copy)]
struct Pt {
    x: f64,
    y: f64,
    phase: f64,
    /// Candidate index, or `usize::MAX` for a corner found by refinement.
    cand: usize,
}

fn opposite(a: f64, b: f64) -> bool {
    (a - b).cos() < 0.0
}

fn dist(a: (f64, f64), b: (f64, f64)) -> f64 {
    (a.0 - b.0).hypot(a.1 - b.1)
}

/// Tries seeds (step 4) and returns the grid positions of the first grid of
/// the board's size, `grid[j][i]` in growth labels.
fn grow_best(
    smooth: &Grey,
    cands: &[Candidate],
    board: &Board,
    s: f64,
) -> Result<Vec<Vec<(f64, f64)>>, NotFound> {
    let mut order: Vec<usize> = (0..cands.len()).collect();
    order.sort_by(|&a, &b| cands[b].strength.total_cmp(&cands[a].strength));
    let mut used_by_grids = vec![false; cands.len()];
    let mut largest = (0, 0);
    let mut too_large = None;
    for &seed in order.iter().take(MAX_SEEDS) {
        if used_by_grids[seed] {
            continue;
        }
        let Some(mut grid) = seed_grid(cands, seed) else {
            continue;
        };
        let limit = board.cols.max(board.rows) as i32;
        let outcome = grow(smooth, cands, &mut grid, limit, s);
        for p in grid.values() {
            if p.cand != usize::MAX {
                used_by_grids[p.cand] = true;
            }
        }
        let (c, r) = extent(&grid);
        let holds_board = c.max(r) >= board.cols.max(board.rows)
            && c.min(r) >= board.cols.min(board.rows)
            && c * r > board.count();
        if !outcome || holds_board {
            too_large = Some((c, r));
            continue;
        }
        if (c, r) == (board.cols, board.rows) || (r, c) == (board.cols, board.rows) {
            if grid.len() == c * r {
                return Ok(to_rows(&grid));
            }
        } else if c * r > largest.0 * largest.1 {
            largest = (c, r);
        }
    }
    if let Some(found) = too_large {
        return Err(NotFound::TooLarge { found });
    }
    Err(NotFound::Partial { largest })
}

/// Columns and rows the grid spans.
fn extent(grid: &Grid) -> (usize, usize) {
    let (i0, i1, j0, j1) = bounds(grid);
    ((i1 - i0 + 1) as usize, (j1 - j0 + 1) as usize)
}

fn to_rows(grid: &Grid) -> Vec<Vec<(f64, f64)>> {
    let (i0, _, j0, _) = bounds(grid);
    let (c, r) = extent(grid);
    let mut rows = vec![vec![(0.0, 0.0); c]; r];
    for (&(i, j), p) in grid {
        rows[(j - j0) as usize][(i - i0) as usize] = (p.x, p.y);
    }
    rows
}

/// The 2x2 seed of step 4.
fn seed_grid(cands: &[Candidate], seed: usize) -> Option<Grid> {
    let a = cands[seed];
    let pa = (a.x, a.y);
    let mut opp: Vec<(f64, usize)> = cands
        .iter()
        .enumerate()
        .filter(|(k, c)| *k != seed && opposite(c.phase, a.phase))
        .map(|(k, c)| (dist(pa, (c.x, c.y)), k))
        .collect();
    opp.sort_by(|x, y| x.0.total_cmp(&y.0));
    let &(d1, b1) = opp.first()?;
    let u = (cands[b1].x - a.x, cands[b1].y - a.y);
    let &(d2, b2) = opp.iter().skip(1).find(|(d, k)| {
        let v = (cands[*k].x - a.x, cands[*k].y - a.y);
        let cos = (u.0 * v.0 + u.1 * v.1) / (d1 * d);
        cos.abs() < 0.7 && *d < 2.5 * d1
    })?;
    let v = (cands[b2].x - a.x, cands[b2].y - a.y);
    let pred = (a.x + u.0 + v.0, a.y + u.1 + v.1);
    let tol = 0.3 * d1.min(d2);
    let c = cands
        .iter()
        .enumerate()
        .filter(|(k, c)| {
            ![seed, b1, b2].contains(k)
                && !opposite(c.phase, a.phase)
                && dist(pred, (c.x, c.y)) < tol
        })
        .min_by(|x, y| dist(pred, (x.1.x, x.1.y)).total_cmp(&dist(pred, (y.1.x, y.1.y))))?
        .0;
    let pt = |k: usize| Pt {
        x: cands[k].x,
        y: cands[k].y,
        phase: cands[k].phase,
        cand: k,
    };
    let mut g = Grid::new();
    g.insert((0, 0), pt(seed));
    g.insert((1, 0), pt(b1));
    g.insert((0, 1), pt(b2));
    g.insert((1, 1), pt(c));
    Some(g)
}

/// Label of the new point on line `m` (`k = 0`) or of the `k`-th point
/// behind it.
type LabelAt = dyn Fn(i32, i32) -> (i32, i32);

/// Grows the grid line by line (step 4). Returns `false` as soon as a side
/// exceeds `limit` corners.
fn grow(smooth: &Grey, cands: &[Candidate], grid: &mut Grid, limit: i32, s: f64) -> bool {
    let mut used: Vec<bool> = vec![false; cands.len()];
    for p in grid.values().filter(|p| p.cand != usize::MAX) {
        used[p.cand] = true;
    }
    loop {
        let mut added = false;
        for side in 0..4 {
            let (i0, i1, j0, j1) = bounds(grid);
            // Line to add: along j for left/right sides, along i for top/bottom.
            // `(new, back)` gives the label of the new point on line `m` and
            // of the k-th point behind it.
            let (range, new_at): (Vec<i32>, Box<LabelAt>) = match side {
                0 => ((j0..=j1).collect(), Box::new(move |m, k| (i1 + 1 - k, m))),
                1 => ((j0..=j1).collect(), Box::new(move |m, k| (i0 - 1 + k, m))),
                2 => ((i0..=i1).collect(), Box::new(move |m, k| (m, j1 + 1 - k))),
                _ => ((i0..=i1).collect(), Box::new(move |m, k| (m, j0 - 1 + k))),
            };
            let mut line = Vec::with_capacity(range.len());
            let mut taken = Vec::new();
            for &m in &range {
                let get = |k: i32| grid.get(&new_at(m, k)).copied();
                let (Some(p1), Some(p2)) = (get(1), get(2)) else {
                    break;
                };
                // Next step = last step turned and scaled as the last step
                // was from the one before (complex ratio), which follows
                // both the shrinking of perspective and the bend of the lens.
                let d1 = (p1.x - p2.x, p1.y - p2.y);
                let d0 = match get(3) {
                    Some(p3) => {
                        let d2 = (p2.x - p3.x, p2.y - p3.y);
                        let n2 = d2.0 * d2.0 + d2.1 * d2.1;
                        let z = (
                            (d1.0 * d2.0 + d1.1 * d2.1) / n2,
                            (d1.1 * d2.0 - d1.0 * d2.1) / n2,
                        );
                        (d1.0 * z.0 - d1.1 * z.1, d1.0 * z.1 + d1.1 * z.0)
                    }
                    None => d1,
                };
                let pred = (p1.x + d0.0, p1.y + d0.1);
                // Spacing across the line at p1: the nearest of its
                // neighbours on the previous line.
                let across = [m - 1, m + 1]
                    .iter()
                    .filter_map(|&mm| grid.get(&new_at(mm, 1)))
                    .map(|q| dist((q.x, q.y), (p1.x, p1.y)))
                    .fold(f64::INFINITY, f64::min);
                let step = d0.0.hypot(d0.1).min(d1.0.hypot(d1.1));
                let tol = 0.4 * step.min(across);
                let found = cands
                    .iter()
                    .enumerate()
                    .filter(|(k, c)| !used[*k] && !taken.contains(k) && opposite(c.phase, p1.phase))
                    .map(|(k, c)| (dist(pred, (c.x, c.y)), k))
                    .filter(|(d, _)| *d < tol)
                    .min_by(|a, b| a.0.total_cmp(&b.0));
                let pt = match found {
                    Some((_, k)) => {
                        taken.push(k);
                        Some(Pt {
                            x: cands[k].x,
                            y: cands[k].y,
                            phase: cands[k].phase,
                            cand: k,
                        })
                    }
                    None => seek(smooth, pred, step, p1.phase, s),
                };
                match pt {
                    Some(p) => line.push((new_at(m, 0), p)),
                    None => break,
                }
            }
            if line.len() == range.len() {
                for (label, p) in line {
                    if p.cand != usize::MAX {
                        used[p.cand] = true;
                    }
                    grid.insert(label, p);
                }
                added = true;
                let (c, r) = extent(grid);
                if c as i32 > limit || r as i32 > limit {
                    return false;
                }
            }
        }
        if !added {
            return true;
        }
    }
}

/// Smallest and largest labels `(i0, i1, j0, j1)` of a non-empty grid.
fn bounds(grid: &Grid) -> (i32, i32, i32, i32) {
    let (mut i0, mut i1, mut j0, mut j1) = (i32::MAX, i32::MIN, i32::MAX, i32::MIN);
    for &(i, j) in grid.keys() {
        i0 = i0.min(i);
        i1 = i1.max(i);
        j0 = j0.min(j);
        j1 = j1.max(j);
    }
    (i0, i1, j0, j1)
}

/// A corner missed by the candidate search, sought by refinement from the
/// prediction and accepted if it stays near it and passes the cross test
/// with a phase opposite to `prev_phase`.
fn seek(smooth: &Grey, pred: (f64, f64), step: f64, prev_phase: f64, s: f64) -> Option<Pt> {
    let inside = |p: (f64, f64)| {
        p.0 >= 1.0
            && p.1 >= 1.0
            && p.0 <= smooth.width as f64 - 2.0
            && p.1 <= smooth.height as f64 - 2.0
    };
    if !inside(pred) {
        return None;
    }
    let rho = (0.4 * step).clamp(3.0, 25.0);
    let q = refine_point(smooth, pred, rho)?;
    if dist(q, pred) > 0.4 * step || !inside(q) {
        return None;
    }
    let phase = cross_phase(smooth, q.0, q.1, 2.0 * s + 1.0)?;
    opposite(phase, prev_phase).then_some(Pt {
        x: q.0,
        y: q.1,
        phase,
        cand: usize::MAX,
    })
}

/// Gradient-orthogonality refinement of step 5 from `start` with window
/// radius `rho`; `None` when the normal matrix is singular or the
/// estimate leaves the image.
///
/// ```
/// use fixsight_verify::calibrate::{corners::refine_point, synth::gaussian_blur, Grey};
/// // A sharp corner where four squares meet at (10.3, 9.6); each pixel
/// // holds the exact area shares of the bright and dark squares.
/// let (w, h) = (21, 21);
/// let mut px = vec![0.0; w * h];
/// for y in 0..h {
///     for x in 0..w {
///         let a = (x as f64 + 0.5 - 10.3).clamp(0.0, 1.0); // share right of the corner
///         let b = (y as f64 + 0.5 - 9.6).clamp(0.0, 1.0); // share below it
///         let bright = a * b + (1.0 - a) * (1.0 - b);
///         px[y * w + x] = 20.0 + 180.0 * bright;
///     }
/// }
/// // Smoothed as `find_board` does before refining.
/// let g = gaussian_blur(&Grey { width: w, height: h, px }, 0.7);
/// let q = refine_point(&g, (9.0, 11.0), 6.0).unwrap();
/// // Found to (10.331, 9.578): on a sharp corner aligned with the pixel
/// // grid the estimator keeps a bias of a few hundredths of a pixel.
/// assert!((q.0 - 10.3).abs() < 0.05 && (q.1 - 9.6).abs() < 0.05, "{q:?}");
/// ```
pub fn refine_point(g: &Grey, start: (f64, f64), rho: f64) -> Option<(f64, f64)> {
    let mut q = start;
    let sw2 = 2.0 * (rho / 2.0) * (rho / 2.0);
    for _ in 0..50 {
        let (x0, x1) = ((q.0 - rho).floor() as isize, (q.0 + rho).ceil() as isize);
        let (y0, y1) = ((q.1 - rho).floor() as isize, (q.1 + rho).ceil() as isize);
        let (mut a, mut b, mut c, mut bx, mut by) = (0.0, 0.0, 0.0, 0.0, 0.0);
        for y in y0.max(1)..=y1.min(g.height as isize - 2) {
            for x in x0.max(1)..=x1.min(g.width as isize - 2) {
                let (dx, dy) = (x as f64 - q.0, y as f64 - q.1);
                let d2 = dx * dx + dy * dy;
                if d2 > rho * rho {
                    continue;
                }
                let w = (-d2 / sw2).exp();
                let gx = (g.at(x + 1, y) - g.at(x - 1, y)) / 2.0;
                let gy = (g.at(x, y + 1) - g.at(x, y - 1)) / 2.0;
                let (gxx, gxy, gyy) = (w * gx * gx, w * gx * gy, w * gy * gy);
                a += gxx;
                b += gxy;
                c += gyy;
                bx += gxx * x as f64 + gxy * y as f64;
                by += gxy * x as f64 + gyy * y as f64;
            }
        }
        let det = a * c - b * b;
        if det.is_nan() || det <= 1e-9 * (a + c) * (a + c) {
            return None;
        }
        let n = ((c * bx - b * by) / det, (a * by - b * bx) / det);
        let step = dist(n, q);
        q = n;
        if !(q.0.is_finite() && q.1.is_finite())
            || q.0 < 0.0
            || q.1 < 0.0
            || q.0 > g.width as f64 - 1.0
            || q.1 > g.height as f64 - 1.0
        {
            return None;
        }
        if step < 1e-4 {
            break;
        }
    }
    Some(q)
}

/// Distance from corner `(i, j)` of `rows[j][i]` to the nearest edge that
/// does not pass through it: the smaller height of the parallelogram
/// spanned by its shorter neighbour steps along the two grid axes.
fn cell_reach(rows: &[Vec<(f64, f64)>], i: usize, j: usize) -> f64 {
    let (r, c) = (rows.len(), rows[0].len());
    let p = rows[j][i];
    let shortest = |cands: [Option<(f64, f64)>; 2]| {
        cands
            .into_iter()
            .flatten()
            .map(|q| (q.0 - p.0, q.1 - p.1))
            .min_by(|a, b| a.0.hypot(a.1).total_cmp(&b.0.hypot(b.1)))
    };
    let a = shortest([
        (i > 0).then(|| rows[j][i - 1]),
        (i + 1 < c).then(|| rows[j][i + 1]),
    ]);
    let b = shortest([
        (j > 0).then(|| rows[j - 1][i]),
        (j + 1 < r).then(|| rows[j + 1][i]),
    ]);
    match (a, b) {
        (Some(a), Some(b)) => {
            let area = (a.0 * b.1 - a.1 * b.0).abs();
            area / a.0.hypot(a.1).max(b.0.hypot(b.1))
        }
        _ => 0.0,
    }
}

/// Steps 5 and 6 on the grid `rows[j][i]` (full-resolution coordinates).
fn finish(
    fine: &Grey,
    rows: Vec<Vec<(f64, f64)>>,
    board: &Board,
) -> Result<Vec<(f64, f64)>, NotFound> {
    let (r, c) = (rows.len(), rows[0].len());
    let mut refined = rows.clone();
    for j in 0..r {
        for i in 0..c {
            let p = rows[j][i];
            let reach = cell_reach(&rows, i, j);
            let rho = (0.45 * reach).clamp(2.5, 25.0);
            let q = refine_point(fine, p, rho)
                .filter(|q| dist(*q, p) <= 0.5 * reach)
                .ok_or(NotFound::Refinement { corner: (i, j) })?;
            refined[j][i] = q;
        }
    }
    // Step 6: transpose to cols x rows.
    let mut g = if c == board.cols && r == board.rows {
        refined
    } else {
        (0..c)
            .map(|i| (0..r).map(|j| refined[j][i]).collect())
            .collect()
    };
    let (rr, cc) = (g.len(), g[0].len());
    let cross = |g: &Vec<Vec<(f64, f64)>>| {
        let o = g[0][0];
        let a = (g[0][1].0 - o.0, g[0][1].1 - o.1);
        let b = (g[1][0].0 - o.0, g[1][0].1 - o.1);
        a.0 * b.1 - a.1 * b.0
    };
    if cross(&g) < 0.0 {
        if cc == rr {
            // Square grid: a transpose keeps the size and flips handedness.
            g = (0..cc)
                .map(|i| (0..rr).map(|j| g[j][i]).collect())
                .collect();
        } else {
            for row in &mut g {
                row.reverse();
            }
        }
    }
    let turned: Vec<Vec<(f64, f64)>> = g
        .iter()
        .rev()
        .map(|row| row.iter().rev().copied().collect())
        .collect();
    let key = |g: &Vec<Vec<(f64, f64)>>| g[0][0].0 + g[0][0].1;
    if key(&turned) < key(&g) {
        g = turned;
    }
    Ok(g.into_iter().flatten().collect())
}
