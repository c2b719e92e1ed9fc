//! Line voting against the general-purpose image crate's Hough line
//! detector (`imageproc::hough::detect_lines`, imageproc 0.25, a
//! dev-dependency used only here as an outside reference) on the same
//! edge maps.
//!
//! imageproc measures `r = x cos(m) + y sin(m)` from the top-left pixel
//! with 1-degree, 1-pixel bins (its `r` truncated toward zero); fixsight
//! measures from pixel `(W >> 1, H >> 1)`. The strongest line of each must
//! agree within one of imageproc's bins plus half of ours: 1.7 degrees and
//! 1.5 px after moving the origin.

use fixsight::lines::{Accumulator, Peak, PeakParams, VoteParams};
use fixsight::ImageView;
use image::GrayImage;
use imageproc::hough::{detect_lines, LineDetectionOptions};

const W: usize = 160;
const H: usize = 120;

/// An edge map with one long straight line `x cos t + y sin t = r`
/// (corner origin, pixels within 0.5 px) and a few short distractors.
fn edge_map(t_deg: f64, r: f64) -> Vec<u8> {
    let (s, c) = t_deg.to_radians().sin_cos();
    let mut m = vec![0u8; W * H];
    for y in 0..H {
        for x in 0..W {
            let d = x as f64 * c + y as f64 * s - r;
            if d.abs() < 0.5 {
                m[y * W + x] = 255;
            }
        }
    }
    for k in 0..6 {
        for i in 0..8 {
            m[(10 + 15 * k) * W + 20 + 3 * k + i] = 255;
        }
    }
    m
}

#[test]
fn strongest_line_agrees_with_imageproc() {
    let p = VoteParams {
        width: W,
        height: H,
        theta_start: 0,
        theta_step_log2: 8,
        theta_bins: 256,
        rho_step_log2: 4,
        rho_bins: 201,
        trig_frac_bits: 14,
        gate: None,
        weight_shift: None,
    };
    let (ox, oy) = ((W >> 1) as f64, (H >> 1) as f64);
    for (t, r) in [
        (3.0, 40.0),
        (30.0, 70.0),
        (62.0, 90.0),
        (90.0, 55.0),
        (118.0, 20.0),
        (151.0, -40.0),
        (176.0, -100.0),
    ] {
        let m = edge_map(t, r);
        let img = GrayImage::from_raw(W as u32, H as u32, m.clone()).unwrap();
        let theirs = detect_lines(
            &img,
            LineDetectionOptions {
                vote_threshold: 20,
                suppression_radius: 4,
            },
        );
        let mut cells = vec![0u16; p.cells()];
        let mut trig = vec![[0i16; 2]; p.theta_bins];
        let mut acc = Accumulator::new(p, &mut cells, &mut trig).unwrap();
        acc.vote_frame(&ImageView::new(&m, W, H, W).unwrap(), None, None)
            .unwrap();
        let mut out = [Peak::default(); 1];
        let pp = PeakParams {
            threshold: 16 * 20,
            radius_theta: 4,
            radius_rho: 4,
        };
        assert_eq!(acc.peaks(&pp, &mut out).unwrap(), 1);
        let l = out[0].line;
        let th = l.theta as f64 / 65536.0 * 180.0;
        let (s, c) = th.to_radians().sin_cos();
        // Our line moved to the corner origin.
        let ours_r = l.rho as f64 / 16.0 + ox * c + oy * s;
        // imageproc's strongest line is the one its vote count ranks first;
        // it returns lines in accumulator order, so pick the nearest of
        // its lines to the drawn one and check ours against that.
        let best = theirs
            .iter()
            .min_by(|a, b| {
                let da = (a.angle_in_degrees as f64 - t).abs() + (a.r as f64 - r).abs();
                let db = (b.angle_in_degrees as f64 - t).abs() + (b.r as f64 - r).abs();
                da.total_cmp(&db)
            })
            .expect("imageproc finds the line");
        let mut dt = (th - best.angle_in_degrees as f64).abs();
        let mut dr = (ours_r - best.r as f64).abs();
        if dt > 90.0 {
            dt = 180.0 - dt;
            dr = (ours_r + best.r as f64).abs();
        }
        assert!(
            dt <= 1.7,
            "t={t}: ours {th:.2} deg, imageproc {}",
            best.angle_in_degrees
        );
        assert!(dr <= 1.5, "t={t}: ours r {ours_r:.2}, imageproc {}", best.r);
        // And both are near the drawn line.
        assert!((best.angle_in_degrees as f64 - t).abs() <= 1.0 || t > 179.0);
    }
}
