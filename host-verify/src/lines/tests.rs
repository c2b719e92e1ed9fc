//! Tests of the lines references, with the outside checks named.

use super::*;
use fixsight::gradient::CORDIC_ATAN;
use fixsight::lines::TRIG_START;

#[test]
fn checked_in_tables_are_the_generated_ones() {
    assert_eq!(cordic_table(), CORDIC_ATAN.to_vec());
    assert_eq!(trig_start(), TRIG_START);
}

/// The sine/cosine table against the standard library's f64 sin/cos
/// (outside reference: Rust std, i.e. the platform libm) at every
/// binary angle, every precision.
#[test]
fn trig_table_within_bound_of_std() {
    for q in 8u32..=14 {
        let bound = 0.5 + 2f64.powi(q as i32 - 22);
        let sc = 2f64.powi(q as i32);
        for a in (0..UNITS_360).step_by(3) {
            let (c, s) = cos_sin(a, q);
            let th = a as f64 / UNITS_360 as f64 * 2.0 * PI;
            assert!((c as f64 - th.cos() * sc).abs() <= bound, "cos {a} q{q}");
            assert!((s as f64 - th.sin() * sc).abs() <= bound, "sin {a} q{q}");
        }
    }
}

/// The gradient angle against std's f64 atan2 near the extremes and on
/// a dense random sample.
#[test]
fn angle_within_bound_of_atan2() {
    let b = angle_bound_deg();
    let mut worst = 0f64;
    for (x, y) in angle_sample() {
        let d = angle_diff_deg(gradient::angle(x, y) as f64, angle_f64(x, y));
        worst = worst.max(d);
        assert!(d <= b, "({x}, {y}): {d} degrees");
    }
    assert!(worst > 0.0015, "worst {worst}: the bound is not vacuous");
}

/// Duda & Hart (1972) normal form on lines worked out by hand, through
/// the kernel (origin at pixel (8, 6) of a 16 x 12 frame):
/// * horizontal row y = 9: normal at 90 degrees, rho = 9 - 6 = 3 px;
/// * vertical column x = 2: normal at 0 degrees, rho = 2 - 8 = -6 px;
/// * the diagonal y = x - 2 (x - y = 2): points (3,1), (4,2), ...;
///   normal at 135 degrees gives rho = (-(x - 8) + (y - 6)) / sqrt 2
///   = (8 - 6 - 2) / sqrt 2 = 0.
#[test]
fn duda_hart_hand_lines() {
    let (w, h) = (16usize, 12usize);
    let p = VoteParams {
        width: w,
        height: h,
        theta_start: 0,
        theta_step_log2: 10,
        theta_bins: 64,
        rho_step_log2: 4,
        rho_bins: 31,
        trig_frac_bits: 14,
        gate: None,
        weight_shift: None,
    };
    type OnLine<'a> = &'a dyn Fn(usize, usize) -> bool;
    let cases: [(OnLine, u16, i32); 3] = [
        (&|_x, y| y == 9, 32768, 3 * 16),
        (&|x, _y| x == 2, 0, -6 * 16),
        (&|x, y| x >= 2 && y + 2 == x, 49152, 0),
    ];
    for (on, theta, rho) in cases {
        let edges: Vec<u8> = (0..w * h).map(|i| u8::from(on(i % w, i / w))).collect();
        let inp = EdgeInput {
            w,
            h,
            edges: &edges,
            gx: &[],
            gy: &[],
            weights: &[],
        };
        let pp = PeakParams {
            threshold: 16,
            radius_theta: 3,
            radius_rho: 3,
        };
        let run = run_vote(&p, &inp, None, &pp, 1).unwrap();
        let l = run.peaks[0].line;
        assert!(
            angle_diff_deg(l.theta as f64, theta as f64) < 0.2,
            "{l:?} vs {theta}"
        );
        let flip = (l.theta as i32 - theta as i32).abs() > 32768;
        let want = if flip { -rho } else { rho };
        assert!((l.rho - want).abs() <= 2, "{l:?} vs rho {want}");
    }
}

#[test]
fn model_and_f64_agree_on_a_small_frame() {
    let kl = known_line(5, 48, 36, None);
    let c = canny::run_chain(&kl.gray, 48, 36, &canny::DEMO).unwrap();
    let p = VoteParams {
        width: 48,
        height: 36,
        rho_bins: 61,
        rho_step_log2: 5,
        ..VoteParams::DEMO_QVGA
    };
    let inp = EdgeInput {
        w: 48,
        h: 36,
        edges: &c.thin,
        gx: &c.gx,
        gy: &c.gy,
        weights: &[],
    };
    let run = run_vote(&p, &inp, None, &PeakParams::DEMO, 4).unwrap();
    assert_eq!(run.cells, model_cells(&p, &c.thin, &c.gx, &c.gy, &[]));
}

#[test]
fn known_lines_are_recovered_on_a_few_cases() {
    let demo = crate::lens::LensInUse::demo().unwrap();
    let st = run_known_lines(8, &VoteParams::DEMO_QVGA, &PeakParams::DEMO, &demo).unwrap();
    assert_eq!(st.cases, 8);
    assert!(st.recovered >= 6, "{st:?}");
}

#[test]
fn demo_grid_is_accurate() {
    let (_, _, g) = demo_grid(320, 240).unwrap();
    assert!(g.max_px < 0.25, "{} px", g.max_px);
}
