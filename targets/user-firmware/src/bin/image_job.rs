//! The whole job in image mode at 320 x 240 with the demo configuration
//! (`DemoImageJobQvga`, `ImageJobConfig::DEMO_QVGA`): camera rows in, each
//! warped through a lens grid into the edge stage as soon as the source
//! rows of a corrected row are in; votes, peaks, the tape's edges, tracks
//! and the drift warning out. The grid here is the identity (points every
//! 16 px, 21 x 16 of them, in RAM); the ring of camera rows is sized for
//! the demo lens at this size (19 rows, 6 080 bytes: a wide-angle grid
//! needs that many, the identity fewer), so the RAM figure is that of a
//! firmware with a real lens. Three frames.
#![no_std]
#![no_main]

use cortex_m_rt::entry;
use fixsight::pipeline::{DemoImageJobQvga, ImageJobConfig};
use fixsight::warp::{ControlGrid, WarpGeometry};
use fixsight_fw_user::{camera_row, report};

/// Grid step `2^4` px, coordinates with `F = 5` fractional bits.
const GRID_LOG2: u32 = 4;
const FRAC_BITS: u32 = 5;
/// 21 x 16 points of two words.
const GRID_WORDS: usize = 2 * 21 * 16;
/// Camera rows the demo lens's grid needs in the ring at 320 x 240.
const RING_ROWS: usize = 19;

#[entry]
fn main() -> ! {
    static mut JOB: DemoImageJobQvga<'static> = DemoImageJobQvga::new();
    static mut POINTS: [i32; GRID_WORDS] = [0; GRID_WORDS];
    static mut RING: [u8; RING_ROWS * 320] = [0; RING_ROWS * 320];
    let (job, points, ring): (
        &'static mut DemoImageJobQvga<'static>,
        &'static mut [i32; GRID_WORDS],
        &'static mut [u8; RING_ROWS * 320],
    ) = (JOB, POINTS, RING);
    let run = |job: &mut DemoImageJobQvga<'static>,
               points: &'static mut [i32],
               ring: &'static mut [u8]|
     -> Result<(u32, bool, bool), fixsight::Error> {
        let cfg = ImageJobConfig::DEMO_QVGA;
        let geom = WarpGeometry::new(320, 240, cfg.job.vote.width, cfg.job.vote.height, FRAC_BITS)?;
        let (cols, rows) = ControlGrid::grid_size(&geom, GRID_LOG2)?;
        let got = points.len();
        let used = points
            .get_mut(..2 * cols * rows)
            .ok_or(fixsight::Error::BufferTooShort {
                what: "grid points",
                needed: 2 * cols * rows,
                got,
            })?;
        for (i, p) in used.chunks_exact_mut(2).enumerate() {
            p[0] = ((i % cols) << (GRID_LOG2 + FRAC_BITS)) as i32;
            p[1] = ((i / cols) << (GRID_LOG2 + FRAC_BITS)) as i32;
        }
        let grid = ControlGrid::new(used, geom, GRID_LOG2)?;
        let need = DemoImageJobQvga::ring_bytes(&grid)?;
        let got = ring.len();
        let ring = ring
            .get_mut(..need)
            .ok_or(fixsight::Error::BufferTooShort {
                what: "camera row ring",
                needed: need,
                got,
            })?;
        job.configure(&cfg, grid, ring)?;
        let mut row = [0u8; 320];
        let (mut edges, mut found, mut warned) = (0, false, false);
        for frame in 0..3 {
            for y in 0..240 {
                camera_row(frame, y, 320, &mut row);
                job.push_row(&row)?;
            }
            let r = job.finish()?;
            edges = r.edges.edge_points;
            found = r.marking.found().is_some();
            warned = r.track.warning.is_some();
        }
        Ok((edges, found, warned))
    };
    match run(job, points, ring) {
        Ok((e, found, warned)) => report(
            found,
            format_args!("image_job edge_points {e} tape_found {found} warning {warned}"),
        ),
        Err(e) => report(false, format_args!("image_job error {e}")),
    }
}
