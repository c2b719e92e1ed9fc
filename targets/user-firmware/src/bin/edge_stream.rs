//! The streamed edge stage alone at 320 x 240 with the demo configuration
//! (`EdgeStream`, rows pushed as a camera delivers them, edge points read
//! at the end of the frame), two frames.
#![no_std]
#![no_main]

use cortex_m_rt::entry;
use fixsight::pipeline::{map_words, EdgeStream, DEMO};
use fixsight_fw_user::{camera_row, report};

type Stage = EdgeStream<320, { map_words(320, 240) }, { DEMO.bins_needed() }, 0>;

#[entry]
fn main() -> ! {
    static mut STAGE: Stage = Stage::new();
    let stage: &mut Stage = STAGE;
    let run = |stage: &mut Stage| -> Result<(u32, u32), fixsight::Error> {
        stage.configure(&DEMO, 320, 240)?;
        let mut row = [0u8; 320];
        let mut points = 0u32;
        for frame in 0..2 {
            for y in 0..240 {
                camera_row(frame, y, 320, &mut row);
                stage.push_row(&row)?;
            }
            let r = stage.finish()?;
            points = r.edge_points;
        }
        let read = stage.points()?.count() as u32;
        Ok((points, read))
    };
    match run(stage) {
        Ok((p, read)) => report(p == read, format_args!("edge_stream points {p}")),
        Err(e) => report(false, format_args!("edge_stream error {e}")),
    }
}
