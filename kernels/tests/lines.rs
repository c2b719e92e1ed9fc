//! Line voting: the accumulator against a brute-force transcription of the
//! documented integer model, streaming against whole-frame voting, gating,
//! saturation, peak selection and segments (proptest, overflow checks on).

use fixsight::gradient::angle;
use fixsight::lines::{
    cos_sin, segments, Accumulator, EdgeRow, Line, Peak, PeakParams, Segment, SegmentParams,
    VoteParams, UNITS_180,
};
use fixsight::ImageView;
use proptest::prelude::*;

/// The voting model of the module docs, one point and one column at a
/// time, every column tested against the gate by its signed angle
/// difference (not by the kernel's interval arithmetic).
fn model_cells(p: &VoteParams, edges: &[u8], gx: &[i16], gy: &[i16], wts: &[u16]) -> Vec<u16> {
    let (w, h) = (p.width, p.height);
    let r = p.rho_bins;
    let mut cells = vec![0u32; p.cells()];
    let q = p.trig_frac_bits;
    let sh = p.rho_step_log2 + q;
    for y in 0..h {
        for x in 0..w {
            let i = y * w + x;
            if edges[i] == 0 {
                continue;
            }
            let wt = match p.weight_shift {
                None => 1i64,
                Some(k) => ((wts[i] as i64) >> k).min(4095),
            };
            if wt == 0 {
                continue;
            }
            let phi = angle(gx[i], gy[i]);
            let x4 = (x as i64 - (w >> 1) as i64) * 16;
            let y4 = (y as i64 - (h >> 1) as i64) * 16;
            for t in 0..p.theta_bins {
                let a = (p.theta_start + ((t as u32) << p.theta_step_log2)) % (1 << 17);
                if let Some(g) = p.gate {
                    let d = ((a % UNITS_180) as u16).wrapping_sub(phi) as i16;
                    if (d as i32).abs() > g as i32 {
                        continue;
                    }
                }
                let (c, s) = cos_sin(a, q);
                let pos = x4 * c as i64
                    + y4 * s as i64
                    + ((((r as i64) - 1) / 2) << sh)
                    + (1i64 << (sh - 5));
                let b = pos.div_euclid(1 << sh);
                let f = pos.div_euclid(1 << (sh - 4)).rem_euclid(16);
                if (0..r as i64).contains(&b) {
                    cells[t * r + b as usize] += (wt * (16 - f)) as u32;
                }
                if f > 0 && (0..r as i64).contains(&(b + 1)) {
                    cells[t * r + (b + 1) as usize] += (wt * f) as u32;
                }
            }
        }
    }
    cells.into_iter().map(|v| v.min(65535) as u16).collect()
}

prop_compose! {
    fn params()(w in 1usize..40, h in 1usize..30, start in 0u32..(1 << 17), s in 7u32..=14,
                r in 0u32..=8, q in 8u32..=14, gate in prop::option::of(1u16..20000),
                ws in prop::option::of(0u32..6))
                (bins in 1usize..=(65536usize >> s).min(40), rho_half in 0usize..60,
                 w in Just(w), h in Just(h), start in Just(start), s in Just(s), r in Just(r),
                 q in Just(q), gate in Just(gate), ws in Just(ws)) -> VoteParams {
        VoteParams { width: w, height: h, theta_start: start, theta_step_log2: s,
            theta_bins: bins, rho_step_log2: r, rho_bins: 2 * rho_half + 1,
            trig_frac_bits: q, gate, weight_shift: ws }
    }
}

fn frame(p: &VoteParams, seed: u64, density: u32) -> (Vec<u8>, Vec<i16>, Vec<i16>, Vec<u16>) {
    let n = p.width * p.height;
    let mut s = seed | 1;
    let mut next = || {
        s ^= s << 13;
        s ^= s >> 7;
        s ^= s << 17;
        s
    };
    let edges = (0..n)
        .map(|_| u8::from((next() % 100) < density as u64))
        .collect();
    let gx = (0..n).map(|_| next() as i16).collect();
    let gy = (0..n).map(|_| next() as i16).collect();
    let wt = (0..n).map(|_| next() as u16).collect();
    (edges, gx, gy, wt)
}

fn vote_stream(
    p: &VoteParams,
    e: &[u8],
    gx: &[i16],
    gy: &[i16],
    wt: &[u16],
) -> Result<Vec<u16>, fixsight::Error> {
    let mut cells = vec![0u16; p.cells()];
    let mut trig = vec![[0i16; 2]; p.theta_bins];
    let mut acc = Accumulator::new(*p, &mut cells, &mut trig)?;
    let w = p.width;
    for y in 0..p.height {
        let row = EdgeRow {
            edges: &e[y * w..(y + 1) * w],
            gx: Some(&gx[y * w..(y + 1) * w]),
            gy: Some(&gy[y * w..(y + 1) * w]),
            weights: Some(&wt[y * w..(y + 1) * w]),
        };
        acc.vote_row(y, &row)?;
    }
    Ok(acc.cells().to_vec())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(128))]

    /// Streaming rows equals the whole-frame call and the brute-force model
    /// bit for bit, with and without gate and weights.
    #[test]
    fn stream_equals_frame_equals_model(p in params(), seed in any::<u64>(), density in 0u32..60) {
        prop_assume!(p.check().is_ok());
        let (e, gx, gy, wt) = frame(&p, seed, density);
        let streamed = vote_stream(&p, &e, &gx, &gy, &wt).unwrap();
        let mut cells = vec![0u16; p.cells()];
        let mut trig = vec![[0i16; 2]; p.theta_bins];
        let mut acc = Accumulator::new(p, &mut cells, &mut trig).unwrap();
        let (w, h) = (p.width, p.height);
        let ev = ImageView::new(&e, w, h, w).unwrap();
        let (xv, yv) = (ImageView::new(&gx, w, h, w).unwrap(), ImageView::new(&gy, w, h, w).unwrap());
        let wv = ImageView::new(&wt, w, h, w).unwrap();
        acc.vote_frame(&ev, Some((&xv, &yv)), Some(&wv)).unwrap();
        prop_assert_eq!(acc.cells(), &streamed[..]);
        prop_assert_eq!(&streamed, &model_cells(&p, &e, &gx, &gy, &wt));
    }

    /// Peaks: every reported cell is above the threshold and wins its
    /// neighbourhood; the list is sorted; no winning cell stronger than the
    /// last one kept is missing.
    #[test]
    fn peaks_are_the_strongest_local_winners(p in params(), seed in any::<u64>(), k in 1usize..6,
                                             rt in 0usize..3, rb in 0usize..3, thr in 1u16..200) {
        prop_assume!(p.check().is_ok());
        let (e, gx, gy, wt) = frame(&p, seed, 30);
        let cells = vote_stream(&p, &e, &gx, &gy, &wt).unwrap();
        let mut c2 = cells.clone();
        let mut trig = vec![[0i16; 2]; p.theta_bins];
        // Rebuild an accumulator holding exactly these cells by voting again.
        let mut acc = Accumulator::new(p, &mut c2, &mut trig).unwrap();
        let w = p.width;
        for y in 0..p.height {
            let row = EdgeRow { edges: &e[y * w..(y + 1) * w], gx: Some(&gx[y * w..(y + 1) * w]),
                gy: Some(&gy[y * w..(y + 1) * w]), weights: Some(&wt[y * w..(y + 1) * w]) };
            acc.vote_row(y, &row).unwrap();
        }
        let pp = PeakParams { threshold: thr, radius_theta: rt, radius_rho: rb };
        let mut out = vec![Peak::default(); k];
        let n = acc.peaks(&pp, &mut out).unwrap();
        let (tn, r) = (p.theta_bins as i64, p.rho_bins as i64);
        let wraps = (p.theta_bins << p.theta_step_log2) == 65536;
        let idx = |t: i64, b: i64| -> Option<usize> {
            let (t, b) = if (0..tn).contains(&t) || !wraps { (t, b) } else { (t.rem_euclid(tn), r - 1 - b) };
            ((0..tn).contains(&t) && (0..r).contains(&b)).then(|| (t * r + b) as usize)
        };
        let winner = |t: i64, b: i64| -> bool {
            let i = (t * r + b) as usize;
            let v = cells[i];
            if v < thr { return false; }
            for dt in -(rt as i64)..=rt as i64 {
                for db in -(rb as i64)..=rb as i64 {
                    if let Some(j) = idx(t + dt, b + db) {
                        if cells[j] > v || (cells[j] == v && j < i) { return false; }
                    }
                }
            }
            true
        };
        let mut all: Vec<(u16, usize)> = Vec::new();
        for t in 0..tn { for b in 0..r { if winner(t, b) { all.push((cells[(t * r + b) as usize], (t * r + b) as usize)); } } }
        all.sort_by(|a, b| b.0.cmp(&a.0).then(a.1.cmp(&b.1)));
        all.truncate(k);
        prop_assert_eq!(n, all.len());
        for (pk, (v, i)) in out[..n].iter().zip(&all) {
            prop_assert_eq!(pk.votes, *v);
            prop_assert_eq!(pk.theta_bin as usize * p.rho_bins + pk.rho_bin as usize, *i);
        }
    }
}

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
}
