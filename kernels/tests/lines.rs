//! Line voting: saturation, gating, the trig table, segments and bad input
//! (the accumulator against the brute-force model of its integer model, and
//! peak selection, are property tests in `tests/lines_model.rs`, where the
//! model lives in the host crate).

use fixsight::gradient::angle;
use fixsight::lines::{
    cos_sin, segments, Accumulator, EdgeRow, Line, Peak, PeakParams, Segment, SegmentParams,
    VoteParams,
};
use fixsight::ImageView;
#[test]
fn counts_saturate_instead_of_wrapping() {
    let p = VoteParams {
        width: 4,
        height: 4,
        theta_start: 0,
        theta_step_log2: 14,
        theta_bins: 4,
        rho_step_log2: 8,
        rho_bins: 3,
        trig_frac_bits: 14,
        gate: None,
        weight_shift: Some(0),
    };
    let mut cells = vec![0u16; p.cells()];
    let mut trig = vec![[0i16; 2]; 4];
    let mut acc = Accumulator::new(p, &mut cells, &mut trig).unwrap();
    // The origin pixel (2, 2) votes rho = 0 in every column, weight 4095:
    // 65520 per vote, so the second vote saturates.
    for _ in 0..3 {
        acc.vote_point(32, 32, None, u16::MAX).unwrap();
    }
    for t in 0..4 {
        assert_eq!(acc.cells()[t * 3 + 1], 65535);
    }
}

#[test]
fn gated_votes_are_fewer_and_hit_the_right_column() {
    // Gradient along +x at a point: only columns within the gate of 0
    // degrees (mod 180) receive votes.
    let mut p = VoteParams {
        width: 16,
        height: 16,
        theta_start: 0,
        theta_step_log2: 10,
        theta_bins: 64,
        rho_step_log2: 4,
        rho_bins: 31,
        trig_frac_bits: 14,
        gate: Some(1500),
        weight_shift: None,
    };
    let mut cells = vec![0u16; p.cells()];
    let mut trig = vec![[0i16; 2]; 64];
    let mut acc = Accumulator::new(p, &mut cells, &mut trig).unwrap();
    acc.vote_point(16 * 3, 16 * 5, Some(angle(100, 0)), 1)
        .unwrap();
    // Columns at 0 and +-1024 (within 1500 of 0), and 63 * 1024 = 180 - 1024.
    assert_eq!(acc.columns(), 3);
    let voted: Vec<usize> = (0..64)
        .filter(|t| acc.cells()[t * 31..(t + 1) * 31].iter().any(|&v| v > 0))
        .collect();
    assert_eq!(voted, vec![0, 1, 63]);
    p.gate = None;
    let mut cells = vec![0u16; p.cells()];
    let mut acc = Accumulator::new(p, &mut cells, &mut trig).unwrap();
    acc.vote_point(16 * 3, 16 * 5, None, 1).unwrap();
    assert_eq!(acc.columns(), 64);
}

#[test]
fn trig_table_lies_on_the_unit_circle() {
    // Integer check, no float: cos^2 + sin^2 within (2^14 +- 1)^2 for every
    // binary angle at Q14 (each value is within 0.5 + 2^-8 LSB).
    for a in (0..(1u32 << 17)).step_by(7) {
        let (c, s) = cos_sin(a, 14);
        let r2 = (c as i64).pow(2) + (s as i64).pow(2);
        assert!(
            (16383i64.pow(2)..=16385i64.pow(2)).contains(&r2),
            "{a}: {c} {s}"
        );
    }
    // Symmetries of the reduction: a + 180 degrees negates both.
    for a in (0..65536u32).step_by(13) {
        let (c, s) = cos_sin(a, 12);
        assert_eq!(cos_sin(a + 65536, 12), (-c, -s));
    }
}

#[test]
fn segments_follow_a_diagonal_with_gaps() {
    // A 45-degree edge y = x + 2 in a 20 x 20 map (origin (10, 10)), with
    // pixels 8..=11 missing.
    let mut m = vec![0u8; 400];
    for x in 0..18usize {
        if !(8..=11).contains(&x) {
            m[(x + 2) * 20 + x] = 255;
        }
    }
    // Normal at 135 degrees: (cos, sin) = (-1/sqrt2, 1/sqrt2);
    // rho = (-(x-10) + (y-10)) / sqrt 2 = 2 / sqrt 2 = 1.4142 px = 22.6 Q4.
    let line = Line {
        rho: 23,
        theta: 49152,
        votes: 0,
    };
    let v = ImageView::new(&m, 20, 20, 20).unwrap();
    let mut out = [Segment::default(); 3];
    let sp = SegmentParams {
        min_length: 3,
        max_gap: 3,
        tolerance: 0,
    };
    let n = segments(&v, &line, &sp, &mut out).unwrap();
    assert_eq!(n, 2, "{out:?}");
    // Endpoints on the line within the rounding of rho (0.4 Q4 units).
    assert_eq!((out[0].x0, out[0].x1), (0, 7 * 16));
    assert!((out[0].y0 - 32).abs() <= 1 && (out[0].y1 - 9 * 16).abs() <= 1);
    assert_eq!((out[1].x0, out[1].x1, out[1].hits), (12 * 16, 17 * 16, 6));
    // A wider gap allowance joins them.
    let sp = SegmentParams { max_gap: 4, ..sp };
    assert_eq!(segments(&v, &line, &sp, &mut out).unwrap(), 1);
    // Capacity 1 stops the walk after the first segment.
    let sp = SegmentParams { max_gap: 3, ..sp };
    assert_eq!(segments(&v, &line, &sp, &mut out[..1]).unwrap(), 1);
}

#[test]
fn bad_input_gives_typed_errors() {
    let p = VoteParams::DEMO_QVGA;
    let mut cells = vec![0u16; p.cells()];
    let mut trig = vec![[0i16; 2]; 64];
    for bad in [
        VoteParams { theta_bins: 0, ..p },
        VoteParams {
            theta_start: 1 << 17,
            ..p
        },
        VoteParams {
            theta_bins: 129,
            ..p
        },
        VoteParams {
            rho_step_log2: 9,
            ..p
        },
        VoteParams { gate: Some(0), ..p },
        VoteParams { width: 0, ..p },
        VoteParams { width: 4097, ..p },
        VoteParams {
            rho_bins: 4001,
            ..p
        },
    ] {
        assert!(
            Accumulator::new(bad, &mut cells, &mut trig).is_err(),
            "{bad:?}"
        );
    }
    let mut acc = Accumulator::new(p, &mut cells, &mut trig).unwrap();
    assert!(matches!(
        acc.vote_point(-1, 0, Some(0), 1),
        Err(fixsight::Error::PointOutside { .. })
    ));
    let row = [1u8; 320];
    assert!(acc.vote_row(0, &EdgeRow::plain(&row)).is_err()); // gate needs gradients
    assert!(acc.vote_row(240, &EdgeRow::plain(&row)).is_err());
    let mut none: [Peak; 0] = [];
    assert!(acc.peaks(&PeakParams::DEMO, &mut none).is_err());
    // A suppression neighbourhood wider than the accumulator is refused
    // before any cell is visited (a radius of 10^9 once looped for
    // minutes; found by the hostile-input campaign).
    acc.vote_point(100, 100, Some(0), 1).unwrap();
    let mut out = [Peak::default(); 2];
    for (rt, rb, field) in [
        (1_000_000_000, 1, "radius_theta"),
        (1, usize::MAX, "radius_rho"),
        (p.theta_bins + 1, 0, "radius_theta"),
    ] {
        let pp = PeakParams {
            threshold: 1,
            radius_theta: rt,
            radius_rho: rb,
        };
        match acc.peaks(&pp, &mut out) {
            Err(fixsight::Error::BadParameter { name, .. }) => assert_eq!(name, field),
            other => panic!("{field}: {other:?}"),
        }
    }
    let edge = PeakParams {
        threshold: 1,
        radius_theta: p.theta_bins,
        radius_rho: p.rho_bins,
    };
    assert_eq!(acc.peaks(&edge, &mut out).unwrap(), 1);
}
