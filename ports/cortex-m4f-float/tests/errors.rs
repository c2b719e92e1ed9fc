//! Bad inputs give the kernel crate's typed errors, and a rejected row
//! changes nothing.

use fixsight::pipeline::{EdgeConfig, PointJobConfig, Thinning, DEMO};
use fixsight::warp::{ControlGrid, WarpGeometry};
use fixsight::Error;
use fixsight_port_cortex_m4f_float::{F32Config, F32EdgeStream, F32PointJob, Root};

type S = F32EdgeStream<32, { 32 * 16 }, 1024, 256>;

#[test]
fn the_stream_rejects_bad_input() {
    let mut s: Box<S> = Box::default();
    let row = [0u8; 32];
    assert!(matches!(s.push_row(&row), Err(Error::StreamOrder { .. })));
    assert!(matches!(s.finish(), Err(Error::StreamOrder { .. })));
    let capped = F32Config {
        edges: EdgeConfig {
            thinning: Thinning::AtMost(0),
            ..DEMO
        },
        root: Root::Fast,
    };
    assert!(matches!(
        s.configure(&capped, 32, 16),
        Err(Error::BadParameter { .. })
    ));
    assert!(matches!(
        s.configure(&F32Config::DEMO, 33, 16),
        Err(Error::BadParameter { name: "width", .. })
    ));
    assert!(matches!(
        s.configure(&F32Config::DEMO, 32, 0),
        Err(Error::BadParameter { name: "height", .. })
    ));
    assert!(matches!(
        s.configure(&F32Config::DEMO, 32, 17),
        Err(Error::BufferTooShort {
            needed: 544,
            got: 512,
            ..
        })
    ));
    let mut small: Box<F32EdgeStream<32, 512, 100, 16>> = Box::default();
    assert!(matches!(
        small.configure(&F32Config::DEMO, 32, 16),
        Err(Error::BufferTooShort {
            needed: 925,
            got: 100,
            ..
        })
    ));

    s.configure(&F32Config::DEMO, 32, 16).unwrap();
    assert!(matches!(
        s.push_row(&row[..31]),
        Err(Error::BadParameter { .. })
    ));
    assert_eq!(s.rows_pushed(), 0);
    for _ in 0..16 {
        s.push_row(&row).unwrap();
    }
    assert!(matches!(s.push_row(&row), Err(Error::StreamOrder { .. })));
    assert_eq!(s.rows_pushed(), 16);
    let r = s.finish().unwrap();
    assert_eq!(r.edge_points, 0);
    assert!(matches!(s.finish(), Err(Error::StreamOrder { .. })));
}

/// A rejected row in the middle of a frame leaves the frame as it was: the
/// same frame with and without a bad row in it gives the same edges.
#[test]
fn a_rejected_row_changes_nothing() {
    let img: Vec<u8> = (0..32 * 16)
        .map(|i| if (i % 32) < 15 { 40 } else { 210 })
        .collect();
    let run = |bad: bool| {
        let mut s: Box<S> = Box::default();
        s.configure(&F32Config::DEMO, 32, 16).unwrap();
        for (y, row) in img.chunks_exact(32).enumerate() {
            if bad && y == 7 {
                assert!(s.push_row(&row[..20]).is_err());
            }
            s.push_row(row).unwrap();
        }
        let rep = s.finish().unwrap();
        (rep, s.points().collect::<Vec<_>>())
    };
    let (a, b) = (run(false), run(true));
    assert!(a.0.edge_points >= 16);
    assert_eq!(a, b);
}

type J = F32PointJob<32, { 32 * 16 }, 1024, 256, 32, 201, 8, 4>;

#[test]
fn the_job_rejects_bad_input() {
    let mut j: Box<J> = Box::default();
    assert!(matches!(
        j.push_row(&[0; 32]),
        Err(Error::StreamOrder { .. })
    ));
    assert!(matches!(j.finish(None), Err(Error::StreamOrder { .. })));
    let mut cfg = PointJobConfig::DEMO_QVGA;
    cfg.vote.weight_shift = Some(2);
    assert!(j.configure(&cfg, Root::Fast, 32, 16).is_err());
    // The demo's vote frame is 320 x 240: a 32 x 16 frame without a grid
    // does not match it.
    j.configure(&PointJobConfig::DEMO_QVGA, Root::Fast, 32, 16)
        .unwrap();
    for _ in 0..16 {
        j.push_row(&[9; 32]).unwrap();
    }
    assert!(matches!(j.finish(None), Err(Error::SizeMismatch { .. })));
    // A grid whose output is not the raw frame.
    let geom = WarpGeometry::new(8, 8, 8, 8, 2).unwrap();
    let pts = [0, 0, 28, 0, 0, 28, 28, 28];
    let g = ControlGrid::new(&pts, geom, 3).unwrap();
    assert!(matches!(
        j.finish(Some(&g)),
        Err(Error::SizeMismatch { .. })
    ));
    // Vote storage smaller than the demo's vote.
    let mut tiny: Box<F32PointJob<32, 512, 1024, 256, 8, 9, 8, 4>> = Box::default();
    assert!(tiny
        .configure(&PointJobConfig::DEMO_QVGA, Root::Fast, 320, 240)
        .is_err());
}
