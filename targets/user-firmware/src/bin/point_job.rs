//! The whole job in point mode at 320 x 240 with the demo configuration
//! (`DemoPointJobQvga`, `PointJobConfig::DEMO_QVGA`): rows in; edge points
//! corrected through a lens grid, votes, peaks, the tape's edges, tracks
//! and the drift warning out. The grid here is the identity (points every
//! 8 px, 41 x 31 of them, in RAM as a firmware that computes or receives
//! its grid at start-up holds it); three frames.
#![no_std]
#![no_main]

use cortex_m_rt::entry;
use fixsight::pipeline::{DemoPointJobQvga, PointJobConfig};
use fixsight::warp::{ControlGrid, WarpGeometry};
use fixsight_fw_user::{camera_row, report};

/// Grid step `2^3` px, coordinates with `F = 5` fractional bits.
const GRID_LOG2: u32 = 3;
const FRAC_BITS: u32 = 5;
/// 41 x 31 points of two words.
const GRID_WORDS: usize = 2 * 41 * 31;

#[entry]
fn main() -> ! {
    static mut JOB: DemoPointJobQvga = DemoPointJobQvga::new();
    static mut POINTS: [i32; GRID_WORDS] = [0; GRID_WORDS];
    let (job, points): (&mut DemoPointJobQvga, &mut [i32; GRID_WORDS]) = (JOB, POINTS);
    let run = |job: &mut DemoPointJobQvga,
               points: &mut [i32]|
     -> Result<(u32, bool, bool), fixsight::Error> {
        let cfg = PointJobConfig::DEMO_QVGA;
        let geom = WarpGeometry::new(320, 240, cfg.vote.width, cfg.vote.height, FRAC_BITS)?;
        let (cols, rows) = ControlGrid::grid_size(&geom, GRID_LOG2)?;
        let used = points
            .get_mut(..2 * cols * rows)
            .ok_or(fixsight::Error::BufferTooShort {
                what: "grid points",
                needed: 2 * cols * rows,
                got: GRID_WORDS,
            })?;
        for (i, p) in used.chunks_exact_mut(2).enumerate() {
            p[0] = ((i % cols) << (GRID_LOG2 + FRAC_BITS)) as i32;
            p[1] = ((i / cols) << (GRID_LOG2 + FRAC_BITS)) as i32;
        }
        let grid = ControlGrid::new(used, geom, GRID_LOG2)?;
        job.configure(&cfg, 320, 240)?;
        let mut row = [0u8; 320];
        let (mut edges, mut found, mut warned) = (0, false, false);
        for frame in 0..3 {
            for y in 0..240 {
                camera_row(frame, y, 320, &mut row);
                job.push_row(&row)?;
            }
            let r = job.finish(Some(&grid))?;
            edges = r.edges.edge_points;
            found = r.marking.found().is_some();
            warned = r.track.warning.is_some();
        }
        Ok((edges, found, warned))
    };
    match run(job, points) {
        Ok((e, found, warned)) => report(
            found,
            format_args!("point_job edge_points {e} tape_found {found} warning {warned}"),
        ),
        Err(e) => report(false, format_args!("point_job error {e}")),
    }
}
