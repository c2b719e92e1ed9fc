//! Line voting against the brute-force transcription of its documented
//! integer model (`fixsight_verify::lines::model_cells` and `peaks_of`): streaming rows equals
//! the whole-frame call equals the model, and peaks are the model's
//! strongest local winners (proptest, overflow checks on).

use fixsight::lines::{Accumulator, EdgeRow, Peak, PeakParams, VoteParams};
use fixsight::ImageView;
use fixsight_verify::lines::{model_cells, peaks_of};
use proptest::prelude::*;

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
        let pp = PeakParams { threshold: thr, radius_theta: rt.min(p.theta_bins), radius_rho: rb.min(p.rho_bins) };
        let mut out = vec![Peak::default(); k];
        let n = acc.peaks(&pp, &mut out).unwrap();
        let real: Vec<f64> = cells.iter().map(|&v| v as f64).collect();
        let all: Vec<(u16, usize)> = peaks_of(&p, &real, &pp, k)
            .into_iter()
            .map(|(t, b, v)| (v as u16, t * p.rho_bins + b))
            .collect();
        prop_assert_eq!(n, all.len());
        for (pk, (v, i)) in out[..n].iter().zip(&all) {
            prop_assert_eq!(pk.votes, *v);
            prop_assert_eq!(pk.theta_bin as usize * p.rho_bins + pk.rho_bin as usize, *i);
        }
    }
}
