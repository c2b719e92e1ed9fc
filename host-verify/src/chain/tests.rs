use super::check::*;
use super::golden::*;
use super::reference::*;
use super::ID;
use crate::edge_chain::{
    run_chain, run_classify, run_link, run_thinning, GRAD_SCALE, VECTOR_PARAMS,
};

use crate::scene::demo_scenes;

#[test]
fn agreement_on_hand_made_maps() {
    let (w, h) = (6usize, 4usize);
    let mut a = vec![0u8; w * h];
    let mut b = vec![0u8; w * h];
    // Reference: row 1, columns 0..6. Kernel: row 2 (1 px off) plus one
    // stray pixel at (5, 3)... which is within 1 px of (4..6, 2)? no:
    // the reference is row 1, so (5,3) is 2 rows away -> false positive.
    for x in 0..w {
        b[w + x] = 255;
        a[2 * w + x] = 255;
    }
    a[3 * w + 5] = 255;
    let ag = agreement(&a, &b, w, h);
    assert_eq!((ag.kernel_px, ag.reference_px), (7, 6));
    assert!((ag.precision - 6.0 / 7.0).abs() < 1e-12);
    assert_eq!(ag.recall, 1.0);
    assert!((ag.f1 - 2.0 * (6.0 / 7.0) / (1.0 + 6.0 / 7.0)).abs() < 1e-12);
}

#[test]
fn f64_canny_finds_a_vertical_step_at_the_step() {
    let (w, h) = (16usize, 10usize);
    let img: Vec<u8> = (0..w * h)
        .map(|i| if i % w >= 8 { 200 } else { 20 })
        .collect();
    // The vectors' parameters: their 512 bins of width 2 end at 1024,
    // below this step's magnitude (about 1840), so `high` is 1024 and the
    // step is strong. With the demo bins, which cover every magnitude, a
    // frame whose only edge is one plateau of equal magnitudes gets `high`
    // just above it (the rule takes the upper end of the quantile's bin)
    // and has no strong pixel.
    let c = run_chain(&img, w, h, &VECTOR_PARAMS).unwrap();
    let (lo, hi) = (c.thresholds.low(), c.thresholds.high());
    let e = reference_of_chain(&img, w, h, lo, hi);
    for y in 0..h {
        let cols: Vec<usize> = (0..w).filter(|&x| e[y * w + x] != 0).collect();
        let kcols: Vec<usize> = (0..w).filter(|&x| c.thin[y * w + x] != 0).collect();
        assert_eq!(cols, vec![7], "reference row {y} ({lo}, {hi})");
        assert_eq!(kcols, vec![7], "kernel row {y} ({lo}, {hi})");
    }
    assert_eq!(agreement(&c.thin, &e, w, h).f1, 1.0);
}

#[test]
fn chain_thresholds_on_the_real_line_decide_as_the_rounded_magnitude() {
    // The chain's test `l2_round(gx, gy) >= t` and the reference's test
    // `hypot(gx, gy) >= chain_threshold_f64(t)` agree on every integer
    // gradient of a window around typical thresholds; the unshifted test
    // `hypot >= t` does not (it is half a unit stricter).
    let mut unshifted_differs = 0usize;
    for gx in -260i16..=260 {
        for gy in 0i16..=260 {
            let (m, r) = (
                fixsight::gradient::l2_round(gx, gy),
                (gx as f64).hypot(gy as f64),
            );
            for t in [1u16, 96, 199, 200, 201, 257] {
                assert_eq!(m >= t, r >= chain_threshold_f64(t), "({gx}, {gy}) t {t}");
                unshifted_differs += usize::from((m >= t) != (r >= t as f64));
            }
        }
    }
    assert!(unshifted_differs > 0);
}

#[test]
fn demo_scenes_meet_the_floor_and_the_sector_chain_its_older_goal() {
    let scenes = demo_scenes();
    let rows = check(&scenes);
    assert_eq!(rows.len(), 1);
    let chain = &rows[0];
    assert_eq!(chain.name, ID);
    assert!(chain.pass, "{:?}", chain.notes);
    for s in &scenes {
        for kind in ["sectors.", "interpolated.", ""] {
            let f1 = chain.metrics[&format!("{kind}f1_matched.{}", s.name)];
            assert!(f1 >= F1_FLOOR, "{kind}{}: {f1}", s.name);
            // One to one never scores above many to one.
            assert!(f1 <= chain.metrics[&format!("{kind}f1.{}", s.name)] + 1e-12);
        }
        // The 4-sector chain keeps the many-to-one goal it always met.
        let f1 = chain.metrics[&format!("sectors.f1.{}", s.name)];
        assert!(f1 >= F1_GOAL, "{}: {f1}", s.name);
    }
    assert_eq!(chain.metrics["sectors.thresholds_at_top_bin"], 0.0);
}

#[test]
fn golden_case_recomputes_and_has_content() {
    let cases = golden_cases(&demo_scenes());
    // The small crop and the two long-row crops.
    let ids: Vec<&str> = cases.iter().map(|c| c.id.as_str()).collect();
    assert_eq!(
        ids,
        [
            "chain.edges.floor",
            "chain.edges.wide256",
            "chain.edges.wide317"
        ]
    );
    for c in &cases {
        assert_eq!(
            run_vector(&c.kernel, &c.params, &c.inputs).unwrap(),
            c.expected
        );
        let edges = c.expected[0].to_u8().unwrap();
        assert!(
            edges.iter().filter(|&&v| v != 0).count() > 20,
            "{}: crop has too few edges",
            c.id
        );
    }
    assert!(run_vector("chain.nothing", &cases[0].params, &cases[0].inputs).is_err());
}

/// A synthetic board: squares of 16 px, grey 40 and 200, 64 x 48.
fn board() -> (Vec<u8>, usize, usize) {
    let (w, h) = (64usize, 48usize);
    let img = (0..w * h)
        .map(|i| {
            if ((i % w) / 16 + (i / w) / 16) % 2 == 0 {
                40
            } else {
                200
            }
        })
        .collect();
    (img, w, h)
}

#[test]
fn board_ties_do_not_depend_on_summation_order() {
    use rand::{Rng, SeedableRng};
    let (img, w, h) = board();
    let f: Vec<f64> = img.iter().map(|&v| v as f64).collect();
    let s = gaussian_f64(&f, w, h, 1.0);
    let (gx, gy) = sobel_f64(&s, w, h);
    let mag: Vec<f64> = gx.iter().zip(&gy).map(|(a, b)| a.hypot(*b)).collect();
    // The board has pairs of neighbours whose magnitudes are equal in
    // exact arithmetic but differ in the last bits in f64: the situation
    // where a strict comparison let summation order pick the edge column.
    let near_ties = (0..w * h - 1)
        .filter(|&i| {
            let (a, b) = (mag[i], mag[i + 1]);
            a > 1.0 && a != b && (a - b).abs() <= 1e-13 * a
        })
        .count();
    assert!(near_ties > 0, "board has no near ties");
    // Moving every magnitude by a few units in the last place (what another
    // summation order does) changes nothing.
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(7);
    let jittered: Vec<f64> = mag
        .iter()
        .map(|&v| v * (1.0 + rng.random_range(-8i32..=8) as f64 * f64::EPSILON))
        .collect();
    let a = nms_f64(&gx, &gy, &mag, w, h);
    let b = nms_f64(&gx, &gy, &jittered, w, h);
    let moved = a
        .iter()
        .zip(&b)
        .filter(|(x, y)| (**x > 0.0) != (**y > 0.0))
        .count();
    assert_eq!(moved, 0, "pixels moved by summation order");
    // Raster rule: each step between columns 16k-1 | 16k (and rows
    // likewise) keeps its earlier side, away from the corners.
    let e = reference_f64(&img, w, h, 100.0, 200.0);
    for y in [8usize, 24, 40] {
        let cols: Vec<usize> = (1..w - 1).filter(|&x| e[y * w + x] != 0).collect();
        assert_eq!(cols, vec![15, 31, 47], "row {y}");
    }
    for x in [8usize, 24, 40, 56] {
        let rows: Vec<usize> = (1..h - 1).filter(|&y| e[y * w + x] != 0).collect();
        assert_eq!(rows, vec![15, 31], "column {x}");
    }
}

#[test]
fn reference_of_chain_is_one_pixel_wide_where_the_canny_is_not() {
    // Steps along lines of slope 1/2 .. 2: the f64 suppression keeps both
    // pixels of some staircase steps, so the unthinned Canny is not one
    // pixel wide there; the reference of the chain is (thinning it again
    // removes nothing), and on such an image the thinned chain matches it
    // one to one better than it matches the unthinned Canny.
    use crate::metrics::matched_agreement;
    use crate::thinning::reference::reference as thin;
    let (w, h) = (48usize, 40usize);
    let mut thick_images = 0;
    for (a, b) in [(1i64, 2i64), (2, 3), (1, 1), (3, 2), (2, 1), (3, 5), (5, 3)] {
        let img: Vec<u8> = (0..w * h)
            .map(|i| {
                let (x, y) = ((i % w) as i64, (i / w) as i64);
                if a * x + b * y > a * 24 + b * 20 {
                    190
                } else {
                    40
                }
            })
            .collect();
        // The automatic rule puts `high` above a lone step; fixed
        // thresholds well below its magnitude instead.
        let c = run_chain(&img, w, h, &crate::edge_chain::DEMO_INTERPOLATED).unwrap();
        let (lo, hi) = (100u16, 200u16);
        let t = fixsight::hysteresis::Thresholds::new(lo, hi).unwrap();
        let codes = run_classify(&c.nms, w, h, &t).unwrap();
        let (edges, _) = run_link(&codes, w, h, 1024).unwrap();
        let (chain_thin, _) = run_thinning(&edges, w, h).unwrap();
        let r = reference_of_chain(&img, w, h, lo, hi);
        assert!(r.iter().any(|&v| v != 0), "slope {a}/{b}: no edge");
        assert_eq!(thin(&r, w, h).0, r, "slope {a}/{b}");
        let canny = canny_of_chain(&img, w, h, lo, hi);
        if thin(&canny, w, h).0 != canny {
            thick_images += 1;
            let thinned = matched_agreement(&chain_thin, &r, w, h, 1);
            let unthinned = matched_agreement(&chain_thin, &canny, w, h, 1);
            assert!(thinned.f1 > unthinned.f1, "slope {a}/{b}");
        }
    }
    assert!(thick_images > 0, "no image with a thick f64 Canny");
}

#[test]
fn f64_gradients_have_the_kernels_border() {
    // The fused filter of the chain clamps image coordinates, so near the
    // border its gradients differ from the f64 ones by no more than inside
    // (tap and output rounding only). Sobel of the smoothed image with its
    // own clamp (the older reference) is far off there.
    let ring = |i: usize, w: usize, h: usize| {
        let (x, y) = (i % w, i / w);
        x < 4 || y < 4 || x + 4 >= w || y + 4 >= h
    };
    let mut scenes = demo_scenes();
    scenes.extend(crate::natural::natural_scenes());
    for s in &scenes {
        let (w, h) = (s.width, s.height);
        let (kx, ky) = crate::edge_chain::gradients(&s.gray, w, h).unwrap();
        let worst = |gx: &[f64], gy: &[f64]| {
            let mut m = [0f64; 2];
            for i in 0..w * h {
                let d = (kx[i] as f64 - GRAD_SCALE * gx[i])
                    .abs()
                    .max((ky[i] as f64 - GRAD_SCALE * gy[i]).abs());
                let k = usize::from(ring(i, w, h));
                m[k] = m[k].max(d);
            }
            m
        };
        let (gx, gy) = gradients_f64(&s.gray, w, h);
        let [inside, border] = worst(&gx, &gy);
        assert!(
            border <= inside,
            "{}: border {border} inside {inside}",
            s.name
        );
        let f: Vec<f64> = s.gray.iter().map(|&v| v as f64).collect();
        let (ox, oy) = sobel_f64(&gaussian_f64(&f, w, h, 1.0), w, h);
        let [_, old_border] = worst(&ox, &oy);
        assert!(old_border > 10.0 * inside, "{}: {old_border}", s.name);
    }
}
