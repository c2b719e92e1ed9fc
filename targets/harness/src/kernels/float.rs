//! `float.point_job` (feature `port-cortex-m4f-float`, Cortex-M4F only):
//! the whole job in point mode with the `f32` edge stage of
//! `ports/cortex-m4f-float` (`F32PointJob`). No golden vector names this
//! id (the `f32` stage is bit-exact to no kernel); the bench stages
//! `map-f32-...` of `src/bench.rs` measure it on the QVGA bench frame.
//!
//! | id | params | inputs | outputs |
//! |---|---|---|---|
//! | `float.point_job` | those of `pipeline.point_job`'s map stages, plus `root` (`fast` or `newton`) | `frames` u8, `grid` i32 x2 | `record` i32 (the frame, edge points, candidates, thresholds, voted, outside, ungated, peaks; zeros past them) |

use super::pipeline::{job_config, job_frames};
use super::{input, output, Arena, Buf, Fail, Img, Params};
use fixsight::warp::{ControlGrid, WarpGeometry};
use fixsight_port_cortex_m4f_float::{F32PointJobQvga, Root};

static mut JOB: F32PointJobQvga = F32PointJobQvga::new();

/// `float.point_job` (module docs).
#[inline(never)]
pub fn point_job(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    // SAFETY: the firmware is single-threaded and no other code touches
    // JOB; this is its only reference while the call runs.
    let job: &mut F32PointJobQvga = unsafe { &mut *core::ptr::addr_of_mut!(JOB) };
    let (data, w, frames, height) = job_frames(p, ins)?;
    let cfg = job_config(p, w, height)?;
    let root = match p.str("root")? {
        "fast" => Root::Fast,
        "newton" => Root::Newton,
        _ => return Err(Fail::Param("root")),
    };
    let grid_log2: u32 =
        u32::try_from(p.int("grid_log2")?).map_err(|_| Fail::Param("grid_log2"))?;
    let grid = if grid_log2 == 0 {
        None
    } else {
        let g = input(ins, 1)?;
        let pts = match &g.buf {
            Buf::I32(d) => &d[..],
            _ => return Err(Fail::Harness("grid must be i32")),
        };
        let f =
            u32::try_from(p.int("grid_frac_bits")?).map_err(|_| Fail::Param("grid_frac_bits"))?;
        let geom = WarpGeometry::new(w, height, w, height, f)?;
        Some(ControlGrid::new(pts, geom, grid_log2)?)
    };
    job.configure(&cfg, root, w, height)?;
    let out = match &mut output(outs, 0)?.buf {
        Buf::I32(o) if o.len() >= 9 * frames => o,
        _ => {
            return Err(Fail::Harness(
                "record output must be i32, at least 9 x frames",
            ))
        }
    };
    let words = out.len() / frames;
    for (f, rec) in out.chunks_exact_mut(words).enumerate() {
        for y in 0..height {
            let o = (f * height + y) * w;
            job.push_row(&data[o..o + w])?;
        }
        let r = job.finish(grid.as_ref())?;
        rec.fill(0);
        for (d, x) in rec.iter_mut().zip([
            r.frame as i32,
            r.edges.edge_points as i32,
            r.edges.candidates as i32,
            r.edges.thresholds.0 as i32,
            r.edges.thresholds.1 as i32,
            r.voted as i32,
            r.outside as i32,
            r.ungated as i32,
            r.peaks as i32,
        ]) {
            *d = x;
        }
    }
    Ok(())
}
