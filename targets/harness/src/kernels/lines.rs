//! `lines.*` kernel ids, as `run_vector` in `host-verify/src/lines.rs`
//! computes them.
//!
//! | id | inputs | outputs |
//! |---|---|---|
//! | `lines.cos_sin` | `angles` u32 | `cs` i16, 2 channels |
//! | `lines.accumulator` | `edges` u8, `gx`, `gy` i16, `weights` u16 | `cells` u16 (`R x T`) |
//! | `lines.correct_point` | the same and `grid` i32 (2 channels) | `cells` u16 |
//! | `lines.peak` | as `lines.accumulator` | `peaks` i32 `5 x k` |
//! | `lines.segments` | `edges` u8 | `segments` i32 `5 x k` |
//!
//! Parameters: the `VoteParams` fields (`gate` 0 = none, `weight_shift`
//! -1 = unit votes), plus `grid_log2`, `frac_bits` (corrected form),
//! `threshold`, `radius_theta`, `radius_rho`, `k` (peaks), or the segment
//! walk's `rho`, `theta`, `min_length`, `max_gap`, `tolerance`, `k`.
//! Gradients and weights are passed to the kernel only when the
//! parameters gate or weight. The accumulator's cells are the output image
//! itself; the table is a stack array of up to 256 columns.

use super::{input, output, Arena, Buf, Fail, Img, Params};
use fixsight::lines::{
    segments as walk, Accumulator, EdgeRow, Line, Peak, PeakParams, Segment, SegmentParams,
    VoteParams,
};
use fixsight::warp::{ControlGrid, WarpGeometry};
use fixsight::ImageView;

/// Largest `k` the harness serves (stack arrays).
const MAX_K: usize = 16;

fn int<T: TryFrom<i64>>(p: &Params, key: &'static str) -> Result<T, Fail> {
    T::try_from(p.int(key)?).map_err(|_| Fail::Param(key))
}

fn vote_params(p: &Params) -> Result<VoteParams, Fail> {
    let gate: u16 = int(p, "gate")?;
    let ws: i64 = p.int("weight_shift")?;
    Ok(VoteParams {
        width: int(p, "width")?,
        height: int(p, "height")?,
        theta_start: int(p, "theta_start")?,
        theta_step_log2: int(p, "theta_step_log2")?,
        theta_bins: int(p, "theta_bins")?,
        rho_step_log2: int(p, "rho_step_log2")?,
        rho_bins: int(p, "rho_bins")?,
        trig_frac_bits: int(p, "trig_frac_bits")?,
        gate: (gate != 0).then_some(gate),
        weight_shift: u32::try_from(ws).ok(),
    })
}

/// Most columns the harness serves (the table is a stack array).
const MAX_T: usize = 256;

/// Votes the edge map of `ins` into `cells` (`grid`: corrected points,
/// rows one by one).
fn vote<'c>(
    vp: VoteParams,
    ins: &[Img<'_>],
    cells: &'c mut [u16],
    trig: &'c mut [[i16; 2]; MAX_T],
    grid: Option<&ControlGrid<'_>>,
) -> Result<Accumulator<'c>, Fail> {
    if vp.theta_bins > MAX_T {
        return Err(Fail::Param("theta_bins"));
    }
    let mut acc = Accumulator::new(vp, cells, &mut trig[..])?;
    let e = input(ins, 0)?;
    let h = e.height;
    let ev = e.u8()?;
    let (gx, gy, wt) = (
        input(ins, 1)?.i16()?,
        input(ins, 2)?.i16()?,
        input(ins, 3)?.u16()?,
    );
    match grid {
        None => {
            let g = vp.gate.map(|_| (&gx, &gy));
            let wv = vp.weight_shift.map(|_| &wt);
            acc.vote_frame(&ev, g, wv)?;
        }
        Some(grid) => {
            for y in 0..h {
                let row = EdgeRow {
                    edges: ev.row(y).ok_or(Fail::Harness("edge row"))?,
                    gx: gx.row(y),
                    gy: gy.row(y),
                    weights: wt.row(y),
                };
                acc.vote_row_corrected(y, &row, grid)?;
            }
        }
    }
    Ok(acc)
}

fn cells_of<'o>(outs: &'o mut [Img<'_>]) -> Result<&'o mut [u16], Fail> {
    match &mut output(outs, 0)?.buf {
        Buf::U16(c) => Ok(c),
        _ => Err(Fail::Harness("cells output must be u16")),
    }
}

/// `lines.accumulator`: the accumulator of the edge map (`Accumulator::vote_frame`).
pub fn accumulator(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let vp = vote_params(p)?;
    let mut trig = [[0i16; 2]; MAX_T];
    vote(vp, ins, cells_of(outs)?, &mut trig, None)?;
    Ok(())
}

/// `lines.correct_point`: edge points corrected through `grid`.
pub fn correct_point(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let vp = vote_params(p)?;
    let e = input(ins, 0)?;
    let g = input(ins, 4)?;
    let pts = match &g.buf {
        Buf::I32(d) => &d[..],
        _ => return Err(Fail::Harness("grid must be i32")),
    };
    let geom = WarpGeometry::new(e.width, e.height, vp.width, vp.height, int(p, "frac_bits")?)?;
    let grid = ControlGrid::new(pts, geom, int(p, "grid_log2")?)?;
    let mut trig = [[0i16; 2]; MAX_T];
    vote(vp, ins, cells_of(outs)?, &mut trig, Some(&grid))?;
    Ok(())
}

fn write_rows(outs: &mut [Img<'_>], rows: &[[i32; 5]], k: usize) -> Result<(), Fail> {
    match &mut output(outs, 0)?.buf {
        Buf::I32(o) if o.len() == 5 * k => {
            o.fill(0);
            for (d, r) in o.chunks_exact_mut(5).zip(rows) {
                d.copy_from_slice(r);
            }
            Ok(())
        }
        _ => Err(Fail::Harness("output must be i32, 5 x k")),
    }
}

/// `lines.peak`: the `k` strongest refined peaks.
pub fn peak(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let vp = vote_params(p)?;
    let k: usize = int(p, "k")?;
    if k == 0 || k > MAX_K {
        return Err(Fail::Param("k"));
    }
    let cells = arena.u16s(vp.cells()).ok_or(Fail::Harness("arena full"))?;
    let mut trig = [[0i16; 2]; MAX_T];
    let acc = vote(vp, ins, cells, &mut trig, None)?;
    let pp = PeakParams {
        threshold: int(p, "threshold")?,
        radius_theta: int(p, "radius_theta")?,
        radius_rho: int(p, "radius_rho")?,
    };
    let mut found = [Peak::default(); MAX_K];
    let n = acc.peaks(&pp, &mut found[..k])?;
    let mut rows = [[0i32; 5]; MAX_K];
    for (r, pk) in rows.iter_mut().zip(&found[..n]) {
        *r = [
            pk.theta_bin as i32,
            pk.rho_bin as i32,
            pk.votes as i32,
            pk.line.rho,
            pk.line.theta as i32,
        ];
    }
    write_rows(outs, &rows[..n], k)
}

/// `lines.segments`: the walk along a given line.
pub fn segments(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let k: usize = int(p, "k")?;
    if k == 0 || k > MAX_K {
        return Err(Fail::Param("k"));
    }
    let e = input(ins, 0)?;
    let ev: ImageView<'_, u8> = e.u8()?;
    let line = Line {
        rho: int(p, "rho")?,
        theta: int(p, "theta")?,
        votes: 0,
    };
    let sp = SegmentParams {
        min_length: int(p, "min_length")?,
        max_gap: int(p, "max_gap")?,
        tolerance: int(p, "tolerance")?,
    };
    let mut out = [Segment::default(); MAX_K];
    let n = walk(&ev, &line, &sp, &mut out[..k])?;
    let mut rows = [[0i32; 5]; MAX_K];
    for (r, s) in rows.iter_mut().zip(&out[..n]) {
        *r = [s.x0, s.y0, s.x1, s.y1, s.hits as i32];
    }
    write_rows(outs, &rows[..n], k)
}

/// `lines.cos_sin`: `(cos, sin)` of every input angle in Q`frac_bits`.
pub fn cos_sin(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let q: u32 = int(p, "frac_bits")?;
    let angles = match &input(ins, 0)?.buf {
        Buf::U32(a) => &a[..],
        _ => return Err(Fail::Harness("angles must be u32")),
    };
    match &mut output(outs, 0)?.buf {
        Buf::I16(o) if o.len() == 2 * angles.len() => {
            for (d, &a) in o.chunks_exact_mut(2).zip(angles) {
                let (c, s) = fixsight::lines::cos_sin(a, q);
                d[0] = c;
                d[1] = s;
            }
            Ok(())
        }
        _ => Err(Fail::Harness("output must be i16, 2 per angle")),
    }
}
