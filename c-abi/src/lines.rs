//! `fxs_lines_*`: line voting (kernel ids `lines.*`) over
//! `fixsight::lines`: the table of cosines and sines, an accumulator over
//! caller cells and table (frames, rows in order, lens-corrected rows,
//! single points), its peaks, and the segment walk along a line.
//!
//! Not a safety function (see the header): lines found here may steer a
//! vehicle; that needs safety-rated sensing and control.
//!
//! Peaks and segments are written into the caller's C structs through a
//! stack array of at most [`FXS_LINES_MAX_OUT`] kernel values (the kernel
//! types are not `repr(C)`), so `out_len` is limited to that.

use crate::boundary::{
    buf, disjoint, image, load, load_mut, size, storage, store, Buf, Checked, FxsI16View,
    FxsU16View, FxsU8View, Span,
};
use crate::status::{finish, kernel, FxsStatus, FXS_E_BAD_PARAMETER, FXS_E_POINT_OUTSIDE};
use crate::warp::{FxsControlGrid, GridObj};
use fixsight::lines::{
    self, Accumulator, EdgeRow, Line, Peak, PeakParams, Segment, SegmentParams, VoteParams,
};

/// `FXS_LINES_MAX_OUT`: most peaks or segments one call writes.
pub const FXS_LINES_MAX_OUT: usize = 32;

/// `fxs_vote_params`: accumulator geometry and voting rules (the fields of
/// `fixsight::lines::VoteParams`; `gate` 0 = no gate, `weight_shift` -1 =
/// unit votes).
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct FxsVoteParams {
    /// Frame width, 1..=4096.
    pub width: i32,
    /// Frame height, 1..=4096.
    pub height: i32,
    /// Angle of column 0, binary angle 360 (0..131071).
    pub theta_start: i32,
    /// Column step `2^s` binary-360 units, `s` 4..=14.
    pub theta_step_log2: i32,
    /// Columns `T`, `T * 2^s <= 65536`.
    pub theta_bins: i32,
    /// Row step `2^r` Q4 units, `r` 0..=8.
    pub rho_step_log2: i32,
    /// Rows `R`, odd, 1..=4095.
    pub rho_bins: i32,
    /// Fractional bits of the table, 8..=14.
    pub trig_frac_bits: i32,
    /// Orientation gate half-width, 1..=32767 (65536 = 180 degrees), or 0.
    pub gate: i32,
    /// Weight shift 0..=15, or -1 for unit votes.
    pub weight_shift: i32,
}

/// `fxs_line`: `rho` Q4 pixels from the origin, `theta` binary angle
/// (65536 = 180 degrees), `votes` the peak's count.
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct FxsLine {
    /// Signed distance, Q4 pixels.
    pub rho: i32,
    /// Normal angle, `[0, 180)` degrees in 65536 units.
    pub theta: u16,
    /// Count of the peak cell.
    pub votes: u16,
}

/// `fxs_line_peak`: a peak cell, its count and its refined line.
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct FxsLinePeak {
    /// Column.
    pub theta_bin: u16,
    /// Row.
    pub rho_bin: u16,
    /// Count of the cell.
    pub votes: u16,
    /// Always 0.
    pub reserved: u16,
    /// The refined line.
    pub line: FxsLine,
}

/// `fxs_peak_params`: peak selection.
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct FxsPeakParams {
    /// Smallest count of a peak, 1..=65535.
    pub threshold: i32,
    /// Suppression half-width in columns, >= 0.
    pub radius_theta: i32,
    /// Suppression half-width in rows, >= 0.
    pub radius_rho: i32,
}

/// `fxs_segment_params`: the segment walk.
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct FxsSegmentParams {
    /// Shortest segment in walk steps, 1..=65535.
    pub min_length: i32,
    /// Longest gap in walk steps, 0..=65535.
    pub max_gap: i32,
    /// Pixels tested on each side across the walk, 0..=3.
    pub tolerance: i32,
}

/// `fxs_segment`: endpoints in Q4 pixels from the centre of the top-left
/// pixel, and the steps that hit an edge pixel.
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct FxsSegment {
    /// First endpoint x.
    pub x0: i32,
    /// First endpoint y.
    pub y0: i32,
    /// Second endpoint x.
    pub x1: i32,
    /// Second endpoint y.
    pub y1: i32,
    /// Steps that hit.
    pub hits: u32,
}

/// `fxs_vote_counts`: what an accumulator has seen since init or reset.
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct FxsVoteCounts {
    /// Points that voted.
    pub points: u32,
    /// Column votes cast.
    pub columns: u32,
    /// Corrected points that fell outside the frame.
    pub skipped: u32,
    /// The next row a row call expects.
    pub next_row: u32,
}

/// An accumulator and the cells and table it borrows.
pub(crate) struct AccObj {
    acc: Accumulator<'static>,
    /// Cells and table (written).
    borrowed: [Span; 2],
}

crate::boundary::object_storage!(
    /// `fxs_lines_accumulator`: storage for a vote accumulator.
    FxsLinesAccumulator for AccObj, tag 0x4658_4C31,
    FXS_LINES_ACCUMULATOR_SIZE = (FXS_LINES_ACCUMULATOR_SIZE_32: 104, FXS_LINES_ACCUMULATOR_SIZE_64: 176)
);

/// A C `int32_t` parameter that must lie in `lo..=hi`.
fn ranged(v: i32, lo: i32, hi: i32) -> Checked<i32> {
    if v < 0 && lo >= 0 {
        Err(crate::status::FXS_E_NEGATIVE)
    } else if (lo..=hi).contains(&v) {
        Ok(v)
    } else {
        Err(FXS_E_BAD_PARAMETER)
    }
}

/// The kernel parameters of a C `fxs_vote_params` (ranges the kernel does
/// not see as such, the `gate` and `weight_shift` sentinels, are checked
/// here; the rest by `VoteParams::check`).
///
/// # Safety
/// `p` is NULL or points to a readable `fxs_vote_params`.
unsafe fn vote_params(p: *const FxsVoteParams) -> Checked<VoteParams> {
    // SAFETY: forwarded to the caller; null and alignment checked first.
    params_of(unsafe { &buf(p, 1, false)?.slice()[0] })
}

/// The checked kernel parameters of a C `fxs_vote_params` (see
/// `vote_params`).
pub(crate) fn params_of(p: &FxsVoteParams) -> Checked<VoteParams> {
    let vp = VoteParams {
        width: size(p.width)?,
        height: size(p.height)?,
        theta_start: size(p.theta_start)? as u32,
        theta_step_log2: size(p.theta_step_log2)? as u32,
        theta_bins: size(p.theta_bins)?,
        rho_step_log2: size(p.rho_step_log2)? as u32,
        rho_bins: size(p.rho_bins)?,
        trig_frac_bits: size(p.trig_frac_bits)? as u32,
        gate: match ranged(p.gate, 0, 32767)? {
            0 => None,
            g => Some(g as u16),
        },
        weight_shift: match ranged(p.weight_shift, -1, 15)? {
            -1 => None,
            k => Some(k as u32),
        },
    };
    kernel(vp.check())?;
    Ok(vp)
}

/// The C form of checked kernel parameters.
pub(crate) fn params_c(p: &VoteParams) -> FxsVoteParams {
    FxsVoteParams {
        width: p.width as i32,
        height: p.height as i32,
        theta_start: p.theta_start as i32,
        theta_step_log2: p.theta_step_log2 as i32,
        theta_bins: p.theta_bins as i32,
        rho_step_log2: p.rho_step_log2 as i32,
        rho_bins: p.rho_bins as i32,
        trig_frac_bits: p.trig_frac_bits as i32,
        gate: p.gate.map_or(0, i32::from),
        weight_shift: p.weight_shift.map_or(-1, |k| k as i32),
    }
}

/// The kernel peak selection of a C one.
pub(crate) fn peak_params(p: &FxsPeakParams) -> Checked<PeakParams> {
    Ok(PeakParams {
        threshold: ranged(p.threshold, 0, 65535)? as u16,
        radius_theta: size(p.radius_theta)?,
        radius_rho: size(p.radius_rho)?,
    })
}

/// The C form of a kernel peak selection.
pub(crate) fn peak_params_c(p: &PeakParams) -> FxsPeakParams {
    FxsPeakParams {
        threshold: p.threshold as i32,
        radius_theta: p.radius_theta as i32,
        radius_rho: p.radius_rho as i32,
    }
}

/// The C form of a kernel peak.
pub(crate) fn peak_c(s: &Peak) -> FxsLinePeak {
    FxsLinePeak {
        theta_bin: s.theta_bin,
        rho_bin: s.rho_bin,
        votes: s.votes,
        reserved: 0,
        line: line_of(s.line),
    }
}

/// `fxs_lines_cos_sin`: `(cos a, sin a)` in Q`frac_bits` (8..=14) of a
/// binary angle `a` (131072 = 360 degrees, taken modulo a turn).
///
/// # Safety
/// `cos_out`, `sin_out` one writable `int16_t` each.
#[no_mangle]
pub unsafe extern "C" fn fxs_lines_cos_sin(
    angle: u32,
    frac_bits: i32,
    cos_out: *mut i16,
    sin_out: *mut i16,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        two_outputs(cos_out, sin_out, [Span::EMPTY; 2], || {
            Ok(lines::cos_sin(angle, ranged(frac_bits, 8, 14)? as u32))
        })
    })
}

/// Checks two single outputs (NULL, alignment, no overlap with each other
/// or with `other`), then writes the pair `f` gives.
///
/// # Safety
/// `a`, `b` each point to one writable `T` when not NULL.
unsafe fn two_outputs<T>(
    a: *mut T,
    b: *mut T,
    other: [Span; 2],
    f: impl FnOnce() -> Checked<(T, T)>,
) -> Checked<()> {
    let (ab, bb) = (buf(a, 1, true)?, buf(b, 1, true)?);
    disjoint(&[ab.span(), bb.span(), other[0], other[1]])?;
    let (x, y) = f()?;
    // SAFETY: checked, writable by the caller's guarantee, disjoint.
    unsafe {
        ab.slice_mut()[0] = x;
        bb.slice_mut()[0] = y;
    }
    Ok(())
}

/// `fxs_lines_accumulator_init`: checks `params`, zeroes the cells
/// (`cells_len >= theta_bins * rho_bins`) and fills the table (`trig_len
/// >= 2 * theta_bins` `int16_t`, cos then sin per column).
///
/// # Safety
/// `acc` writable storage; `params` readable; `cells` and `trig` hold the
/// stated elements and, until the accumulator is last used, stay valid and
/// are written by no one else (reading the cells between calls is fine).
#[no_mangle]
pub unsafe extern "C" fn fxs_lines_accumulator_init(
    acc: *mut FxsLinesAccumulator,
    params: *const FxsVoteParams,
    cells: *mut u16,
    cells_len: usize,
    trig: *mut i16,
    trig_len: usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        (|| {
            let own = storage::<AccObj>(acc)?;
            let vp = vote_params(params)?;
            let c = buf(cells, cells_len, true)?.first(vp.cells());
            buf(trig, trig_len, true)?;
            let t = buf(trig.cast::<[i16; 2]>(), trig_len / 2, true)?.first(vp.theta_bins);
            let borrowed = [c.span(), t.span()];
            disjoint(&[own, Span::object(params, false), borrowed[0], borrowed[1]])?;
            let a = kernel(Accumulator::new(vp, c.slice_mut(), t.slice_mut()))?;
            store(acc, AccObj { acc: a, borrowed });
            Ok(())
        })()
    })
}

/// `fxs_lines_accumulator_reset`: zeroes the cells and counters for a new
/// frame (the table stays).
///
/// # Safety
/// `acc` initialised and used by no one else during the call.
#[no_mangle]
pub unsafe extern "C" fn fxs_lines_accumulator_reset(acc: *mut FxsLinesAccumulator) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { load_mut::<AccObj>(acc).map(|o| o.acc.reset()) })
}

/// `fxs_lines_accumulator_counts`: the counters.
///
/// # Safety
/// `acc` initialised; `counts` one writable `fxs_vote_counts`.
#[no_mangle]
pub unsafe extern "C" fn fxs_lines_accumulator_counts(
    acc: *const FxsLinesAccumulator,
    counts: *mut FxsVoteCounts,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        (|| {
            let o = load::<AccObj>(acc)?;
            let c = buf(counts, 1, true)?;
            disjoint(&[Span::object(acc, false), c.span()])?;
            c.slice_mut()[0] = FxsVoteCounts {
                points: o.acc.points(),
                columns: o.acc.columns(),
                skipped: o.acc.skipped(),
                next_row: o.acc.next_row() as u32,
            };
            Ok(())
        })()
    })
}

/// An optional read-only row: NULL means not given.
fn opt_row<T>(p: *const T, len: usize, width: usize) -> Checked<Option<Buf<T>>> {
    if p.is_null() {
        Ok(None)
    } else {
        Ok(Some(buf(p, len, false)?.first(width)))
    }
}

/// The span of an optional buffer.
fn span_of<T>(b: &Option<Buf<T>>) -> Span {
    b.as_ref().map_or(Span::EMPTY, Buf::span)
}

/// The caller's pointers of one edge row.
struct RowArgs {
    edges: (*const u8, usize),
    gx: (*const i16, usize),
    gy: (*const i16, usize),
    weights: (*const u16, usize),
}

/// Checks a row, the accumulator and the optional grid, and votes.
///
/// # Safety
/// As `fxs_lines_vote_row` (and `grid` NULL or an initialised grid).
unsafe fn vote_row(
    acc: *mut FxsLinesAccumulator,
    y: i32,
    r: RowArgs,
    grid: Option<*const FxsControlGrid>,
) -> Checked<()> {
    let own = Span::object(acc, true);
    let (g, g_spans) = match grid {
        None => (None, [Span::EMPTY; 2]),
        Some(p) => {
            // SAFETY: initialised grid, not written during the call.
            let go = unsafe { load::<GridObj>(p)? };
            (Some(go), [Span::object(p, false), go.borrowed()])
        }
    };
    disjoint(&[own, g_spans[0], g_spans[1]])?;
    // SAFETY: initialised, exclusively used storage by the caller's
    // guarantee; disjoint from the grid (checked above).
    let o = unsafe { load_mut::<AccObj>(acc)? };
    let y = size(y)?;
    let w = g.map_or(o.acc.params().width, |g| g.grid().geometry().out_width());
    let e = buf(r.edges.0, r.edges.1, false)?.first(w);
    let gx = opt_row(r.gx.0, r.gx.1, w)?;
    let gy = opt_row(r.gy.0, r.gy.1, w)?;
    let wt = opt_row(r.weights.0, r.weights.1, w)?;
    disjoint(&[
        own,
        o.borrowed[0],
        o.borrowed[1],
        g_spans[0],
        g_spans[1],
        e.span(),
        span_of(&gx),
        span_of(&gy),
        span_of(&wt),
    ])?;
    // SAFETY: checked; the inputs are only read and share no byte with the
    // accumulator's memory.
    let row = unsafe {
        EdgeRow {
            edges: e.slice(),
            gx: gx.map(|b| b.slice()),
            gy: gy.map(|b| b.slice()),
            weights: wt.map(|b| b.slice()),
        }
    };
    kernel(match g {
        None => o.acc.vote_row(y, &row),
        Some(g) => o.acc.vote_row_corrected(y, &row, g.grid()),
    })
}

/// `fxs_lines_vote_row`: votes edge row `y` (rows in order from 0 after
/// init or reset). `gx`, `gy` (needed when gating) and `weights` (needed
/// when weighting) may be NULL otherwise; each length >= width.
///
/// # Safety
/// `acc` initialised and used by no one else; every non-NULL pointer holds
/// its stated elements, untouched by others during the call.
#[no_mangle]
#[allow(clippy::too_many_arguments)]
pub unsafe extern "C" fn fxs_lines_vote_row(
    acc: *mut FxsLinesAccumulator,
    y: i32,
    edges: *const u8,
    edges_len: usize,
    gx: *const i16,
    gx_len: usize,
    gy: *const i16,
    gy_len: usize,
    weights: *const u16,
    weights_len: usize,
) -> FxsStatus {
    let r = RowArgs {
        edges: (edges, edges_len),
        gx: (gx, gx_len),
        gy: (gy, gy_len),
        weights: (weights, weights_len),
    };
    // SAFETY: forwarded to the caller.
    finish(unsafe { vote_row(acc, y, r, None) })
}

/// `fxs_lines_vote_row_corrected`: votes row `y` of a raw (distorted) edge
/// map, each edge pixel mapped through `grid` (its output size is the raw
/// frame, its source size the accumulator's frame).
///
/// # Safety
/// As `fxs_lines_vote_row`; `grid` initialised.
#[no_mangle]
#[allow(clippy::too_many_arguments)]
pub unsafe extern "C" fn fxs_lines_vote_row_corrected(
    acc: *mut FxsLinesAccumulator,
    y: i32,
    edges: *const u8,
    edges_len: usize,
    gx: *const i16,
    gx_len: usize,
    gy: *const i16,
    gy_len: usize,
    weights: *const u16,
    weights_len: usize,
    grid: *const FxsControlGrid,
) -> FxsStatus {
    let r = RowArgs {
        edges: (edges, edges_len),
        gx: (gx, gx_len),
        gy: (gy, gy_len),
        weights: (weights, weights_len),
    };
    // SAFETY: forwarded to the caller.
    finish(unsafe { vote_row(acc, y, r, Some(grid)) })
}

/// `fxs_lines_vote_frame`: votes a whole edge map (rows 0.. in order);
/// `gx`, `gy`, `weights` may be NULL when the parameters neither gate nor
/// weight.
///
/// # Safety
/// `acc` initialised and used by no one else; descriptors NULL or
/// readable, their data holding the stated elements.
#[no_mangle]
pub unsafe extern "C" fn fxs_lines_vote_frame(
    acc: *mut FxsLinesAccumulator,
    edges: *const FxsU8View,
    gx: *const FxsI16View,
    gy: *const FxsI16View,
    weights: *const FxsU16View,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        (|| {
            let own = Span::object(acc, true);
            let e = image(edges, 1)?;
            let gxi = if gx.is_null() {
                None
            } else {
                Some(image(gx, 1)?)
            };
            let gyi = if gy.is_null() {
                None
            } else {
                Some(image(gy, 1)?)
            };
            let wi = if weights.is_null() {
                None
            } else {
                Some(image(weights, 1)?)
            };
            let sp = |i: Option<Span>| i.unwrap_or(Span::EMPTY);
            let o = load_mut::<AccObj>(acc)?;
            disjoint(&[
                own,
                o.borrowed[0],
                o.borrowed[1],
                e.span(),
                sp(gxi.map(|i| i.span())),
                sp(gyi.map(|i| i.span())),
                sp(wi.map(|i| i.span())),
            ])?;
            let ev = e.view()?;
            let (gxv, gyv) = match (gxi, gyi) {
                (Some(a), Some(b)) => (Some(a.view()?), Some(b.view()?)),
                (None, None) => (None, None),
                _ => return Err(crate::status::FXS_E_NULL_POINTER),
            };
            let wv = match wi {
                Some(w) => Some(w.view()?),
                None => None,
            };
            let grad = gxv.as_ref().zip(gyv.as_ref());
            kernel(o.acc.vote_frame(&ev, grad, wv.as_ref()))
        })()
    })
}

/// `fxs_lines_vote_point`: one point `(x_q4, y_q4)` (Q4 pixels from the
/// centre of the top-left pixel), gradient angle `angle` (0..=65535, or -1
/// for none; needed when gating), raw weight `weight` (0..=65535).
///
/// # Safety
/// `acc` initialised and used by no one else.
#[no_mangle]
pub unsafe extern "C" fn fxs_lines_vote_point(
    acc: *mut FxsLinesAccumulator,
    x_q4: i32,
    y_q4: i32,
    angle: i32,
    weight: i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        (|| {
            let o = load_mut::<AccObj>(acc)?;
            let a = match ranged(angle, -1, 65535)? {
                -1 => None,
                a => Some(a as u16),
            };
            let w = ranged(weight, 0, 65535)? as u16;
            kernel(o.acc.vote_point(x_q4, y_q4, a, w))
        })()
    })
}

/// A C line as a kernel line.
fn line_of(l: Line) -> FxsLine {
    FxsLine {
        rho: l.rho,
        theta: l.theta,
        votes: l.votes,
    }
}

/// The checked output array and count of a peaks or segments call.
pub(crate) fn outputs<T>(
    out: *mut T,
    out_len: usize,
    found: *mut i32,
) -> Checked<(Buf<T>, Buf<i32>, usize)> {
    let o = buf(out, out_len, true)?;
    let f = buf(found, 1, true)?;
    if out_len == 0 || out_len > FXS_LINES_MAX_OUT {
        return Err(FXS_E_BAD_PARAMETER);
    }
    Ok((o, f, out_len))
}

/// `fxs_lines_peaks`: up to `out_len` (1..=FXS_LINES_MAX_OUT) peaks,
/// strongest first, refined; `*found` how many were written.
///
/// # Safety
/// `acc` initialised and not written during the call; `params` readable;
/// `out` `out_len` writable `fxs_line_peak`; `found` one writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_lines_peaks(
    acc: *const FxsLinesAccumulator,
    params: *const FxsPeakParams,
    out: *mut FxsLinePeak,
    out_len: usize,
    found: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        (|| {
            let o = load::<AccObj>(acc)?;
            let p = buf(params, 1, false)?.slice()[0];
            let (ob, fb, k) = outputs(out, out_len, found)?;
            disjoint(&[
                Span::object(acc, false),
                o.borrowed[0],
                o.borrowed[1],
                Span::object(params, false),
                ob.span(),
                fb.span(),
            ])?;
            let pp = peak_params(&p)?;
            let mut tmp = [Peak::default(); FXS_LINES_MAX_OUT];
            let n = kernel(o.acc.peaks(&pp, &mut tmp[..k]))?;
            for (d, s) in ob.slice_mut().iter_mut().zip(&tmp[..n]) {
                *d = peak_c(s);
            }
            fb.slice_mut()[0] = n as i32;
            Ok(())
        })()
    })
}

/// `fxs_lines_correct_point`: raw pixel `(x, y)` through `grid` into Q4
/// corrected coordinates; `FXS_E_POINT_OUTSIDE` when the pixel is outside
/// the grid's output frame.
///
/// # Safety
/// `grid` initialised; `x_q4`, `y_q4` one writable `int32_t` each.
#[no_mangle]
pub unsafe extern "C" fn fxs_lines_correct_point(
    grid: *const FxsControlGrid,
    x: i32,
    y: i32,
    x_q4: *mut i32,
    y_q4: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        load::<GridObj>(grid).and_then(|g| {
            let spans = [Span::object(grid, false), g.borrowed()];
            two_outputs(x_q4, y_q4, spans, || {
                lines::correct_point(g.grid(), size(x)?, size(y)?).ok_or(FXS_E_POINT_OUTSIDE)
            })
        })
    })
}

/// `fxs_lines_segments`: walks `edges` along `line` (frame origin at pixel
/// `(W >> 1, H >> 1)`) and writes up to `out_len` (1..=FXS_LINES_MAX_OUT)
/// segments in walk order; `*found` how many.
///
/// # Safety
/// `edges` readable descriptor and data; `line`, `params` readable; `out`
/// `out_len` writable `fxs_segment`; `found` one writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_lines_segments(
    edges: *const FxsU8View,
    line: *const FxsLine,
    params: *const FxsSegmentParams,
    out: *mut FxsSegment,
    out_len: usize,
    found: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        (|| {
            let e = image(edges, 1)?;
            let l = buf(line, 1, false)?.slice()[0];
            let p = buf(params, 1, false)?.slice()[0];
            let (ob, fb, k) = outputs(out, out_len, found)?;
            disjoint(&[
                e.span(),
                Span::object(line, false),
                Span::object(params, false),
                ob.span(),
                fb.span(),
            ])?;
            let sp = SegmentParams {
                min_length: ranged(p.min_length, 0, 65535)? as u16,
                max_gap: ranged(p.max_gap, 0, 65535)? as u16,
                tolerance: ranged(p.tolerance, 0, 255)? as u8,
            };
            let kl = Line {
                rho: l.rho,
                theta: l.theta,
                votes: l.votes,
            };
            let mut tmp = [Segment::default(); FXS_LINES_MAX_OUT];
            let n = kernel(lines::segments(&e.view()?, &kl, &sp, &mut tmp[..k]))?;
            for (d, s) in ob.slice_mut().iter_mut().zip(&tmp[..n]) {
                *d = FxsSegment {
                    x0: s.x0,
                    y0: s.y0,
                    x1: s.x1,
                    y1: s.y1,
                    hits: s.hits as u32,
                };
            }
            fb.slice_mut()[0] = n as i32;
            Ok(())
        })()
    })
}
