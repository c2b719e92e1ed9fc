use super::check::steady_gains;
use super::compare::{compare_states, truth_figures};
use super::golden::{golden_cases, run_vector};
use super::reference::{kalata_gains, settling_time_constant, RefAxis};
use super::run::{run_fixed, run_reference};
use super::sequences::{contract_sequences, synth_sequence};
use fixsight::track::TrackConfig;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde_json::json;
use std::f64::consts::PI;

#[test]
fn sine_table_error_within_the_stated_bound() {
    // Every angle on a 1/256-step grid of a quarter of the table's
    // resolution over the full turn: the stated 1.617 LSB bound.
    let mut worst = 0f64;
    for a in (0..(1i32 << 25)).step_by(61) {
        let exact = (a as f64 / (1u64 << 25) as f64 * 2.0 * PI).sin() * 32768.0;
        worst = worst.max((fixsight::track::sin_q15(a) as f64 - exact).abs());
    }
    assert!(worst <= 1.617, "worst {worst}");
    assert!(worst > 0.5, "the check can fail: worst {worst}");
}

#[test]
fn kalata_matches_the_reference_filter_limit() {
    // The f64 reference filter's own steady state equals Kalata's closed
    // form (Kalata 1984, "The tracking index", IEEE Trans. AES 20(2)).
    for q in [0.0001f64, 0.01, 1.0, 100.0] {
        let mut r = RefAxis::born(0.0, 4 << 16);
        let q16 = (q * 65536.0).round() as u32;
        for _ in 0..5000 {
            r.predict(q16, None);
            r.update(0.0, None);
        }
        let (ka, kb) = kalata_gains((q16 as f64 / 65536.0).sqrt());
        assert!((r.a - ka).abs() < 1e-9, "q={q}: alpha {} vs {ka}", r.a);
        assert!((r.b - kb).abs() < 1e-9, "q={q}: beta {} vs {kb}", r.b);
    }
    // The closed form satisfies the tracking-index definition
    // L^2 = beta^2 / (1 - alpha) and the optimal alpha-beta relation
    // beta = 2 (2 - alpha) - 4 sqrt(1 - alpha) (both from memory of
    // Kalata 1984); L = 1 gives alpha = 3/4, beta = 1/2 by hand.
    for l in [0.05f64, 0.3, 1.0, 4.0] {
        let (a, b) = kalata_gains(l);
        assert!((b * b / (1.0 - a) - l * l).abs() < 1e-9 * (1.0 + l * l));
        assert!((2.0 * (2.0 - a) - 4.0 * (1.0 - a).sqrt() - b).abs() < 1e-12);
    }
    let (a, b) = kalata_gains(1.0);
    assert!(
        (a - 0.75).abs() < 1e-15 && (b - 0.5).abs() < 1e-15,
        "{a} {b}"
    );
}

#[test]
fn fixed_gains_within_bound_of_kalata() {
    for q in [655u32, 6554, 65536, 655360] {
        let (fa, fb, ra, rb, ba, bb) = steady_gains(q, 4 << 16, 2000);
        let (ka, kb) = kalata_gains((q as f64 / 65536.0).sqrt());
        assert!(
            (fa - ka).abs() <= ba + (ra - ka).abs(),
            "q={q} alpha {fa} {ka} {ba}"
        );
        assert!(
            (fb - kb).abs() <= bb + (rb - kb).abs(),
            "q={q} beta {fb} {kb} {bb}"
        );
    }
}

#[test]
fn decoupled_reference_equals_a_general_four_state_filter() {
    // Outside check: the textbook Kalman filter (Kalman 1960) on the
    // joint state (rho, v_rho, theta, v_theta) with nalgebra's general
    // matrix algebra gives the same states and covariances as the two
    // normalised 2-state filters of the reference.
    use nalgebra::{Matrix2, Matrix2x4, Matrix4, Vector2, Vector4};
    let (rr, rt) = (64.0f64, 11881.0f64);
    let (qr, qt) = (655u32, 9000u32);
    let f = Matrix4::new(
        1.0, 1.0, 0.0, 0.0, 0.0, 1.0, 0.0, 0.0, 0.0, 0.0, 1.0, 1.0, 0.0, 0.0, 0.0, 1.0,
    );
    let h = Matrix2x4::new(1.0, 0.0, 0.0, 0.0, 0.0, 0.0, 1.0, 0.0);
    let qblk = |q: u32, r: f64| {
        let s = q as f64 / 65536.0 * r;
        Matrix2::new(s / 4.0, s / 2.0, s / 2.0, s)
    };
    let mut qm = Matrix4::zeros();
    qm.fixed_view_mut::<2, 2>(0, 0).copy_from(&qblk(qr, rr));
    qm.fixed_view_mut::<2, 2>(2, 2).copy_from(&qblk(qt, rt));
    let rm = Matrix2::new(rr, 0.0, 0.0, rt);
    let mut rng = ChaCha8Rng::seed_from_u64(9);
    let (z0r, z0t) = (300.0, 2000.0);
    let mut x = Vector4::new(z0r, 0.0, z0t, 0.0);
    let mut p = Matrix4::zeros();
    p[(0, 0)] = rr;
    p[(1, 1)] = 4.0 * rr;
    p[(2, 2)] = rt;
    p[(3, 3)] = 2.0 * rt;
    let mut ar = RefAxis::born(z0r, 4 << 16);
    let mut at = RefAxis::born(z0t, 2 << 16);
    for k in 1..200 {
        x = f * x;
        p = f * p * f.transpose() + qm;
        ar.predict(qr, None);
        at.predict(qt, None);
        if k % 7 == 3 {
            continue; // a missed frame: predict only
        }
        let z = Vector2::new(
            z0r + 0.3 * k as f64 + rng.random_range(-8.0..8.0),
            z0t - 2.0 * k as f64 + rng.random_range(-100.0..100.0),
        );
        let s = h * p * h.transpose() + rm;
        let kg = p * h.transpose() * s.try_inverse().expect("S is positive definite");
        let y = z - h * x;
        x += kg * y;
        p = (Matrix4::identity() - kg * h) * p;
        ar.update(z[0] - ar.x, None);
        at.update(z[1] - at.x, None);
        let close = |a: f64, b: f64| (a - b).abs() <= 1e-9 * (1.0 + b.abs());
        assert!(close(ar.x, x[0]) && close(ar.v, x[1]), "k={k} rho");
        assert!(close(at.x, x[2]) && close(at.v, x[3]), "k={k} theta");
        assert!(
            close(ar.a * rr, p[(0, 0)]) && close(ar.b * rr, p[(0, 1)]),
            "k={k}"
        );
        assert!(
            close(ar.c * rr, p[(1, 1)]) && close(at.c * rt, p[(3, 3)]),
            "k={k}"
        );
        assert!(
            p[(0, 2)].abs() < 1e-9 && p[(1, 3)].abs() < 1e-9,
            "k={k}: coupled"
        );
    }
}

#[test]
fn fixed_tracker_follows_the_reference_within_bound() {
    let cfg = TrackConfig::DEMO;
    for s in contract_sequences().iter().take(3) {
        let fixed = run_fixed(cfg, &s.frames).unwrap();
        let reference = run_reference(cfg, &s.frames);
        let c = compare_states(&fixed, &reference);
        assert_eq!(c.decision_mismatches, 0, "{}", s.name);
        assert!(c.rho.len() > 300, "{}: too few compared samples", s.name);
        for (e, b) in c.rho.iter().chain(&c.theta) {
            assert!(e <= b, "{}: err {e} bound {b}", s.name);
        }
        let t = truth_figures(&cfg, s, &fixed);
        assert!(
            t.lead.is_some_and(|l| l > 0),
            "{}: no warning ahead",
            s.name
        );
    }
}

#[test]
fn wrap_sequences_pass_through_zero() {
    let s = synth_sequence(0x7_2AC1, 300, true);
    let thetas: Vec<f64> = s.truth.iter().map(|t| t[0].theta).collect();
    assert!(thetas.iter().any(|t| *t < 0.1) && thetas.iter().any(|t| *t > PI - 0.1));
    let fixed = run_fixed(TrackConfig::DEMO, &s.frames).unwrap();
    // Both edges tracked through the wrap by the same two ids.
    let ids: std::collections::BTreeSet<u16> = fixed
        .iter()
        .flat_map(|f| f.slots.iter().flatten())
        .filter(|t| t.confirmed && (t.theta.pos >> 8 > 60000 || t.theta.pos >> 8 < 5000))
        .map(|t| t.id)
        .collect();
    assert!(ids.len() >= 2, "{ids:?}");
}

#[test]
fn golden_cases_recompute() {
    for c in golden_cases(&[]) {
        assert_eq!(
            run_vector(&c.kernel, &c.params, &c.inputs).unwrap(),
            c.expected,
            "{}",
            c.id
        );
    }
    let c = &golden_cases(&[])[0];
    let mut p = c.params.clone();
    p["slots"] = json!(3);
    assert!(run_vector(&c.kernel, &p, &c.inputs).is_err());
}

#[test]
fn demo_measurement_variances_are_the_accumulator_bins_quantisation() {
    // R = step^2 / 12, the variance of a quantisation error uniform over one
    // step (Bennett 1948, "Spectra of quantized signals", Bell System
    // Technical Journal 27; cited from memory), with the steps of the demo
    // vote in the tracker's units: rho in 1/16 px (the vote's rows are
    // 2^rho_step_log2 of them), theta in binary units (its columns are
    // 2^theta_step_log2).
    let (cfg, v) = (TrackConfig::DEMO, fixsight::lines::VoteParams::DEMO_QVGA);
    let var = |log2: u32| (1u64 << (2 * log2)) as f64 / 12.0;
    assert_eq!(cfg.rho.meas_var as f64, var(v.rho_step_log2).floor());
    assert_eq!(cfg.theta.meas_var as f64, var(v.theta_step_log2).floor());
    // New-track velocity variances, normalised by R in Q16: 1 px/frame
    // (16 units) and 0.3 degree/frame (109 units); design choices.
    let init = |sd: f64, r: u32| (sd * sd * 65536.0 / r as f64).round() as u32;
    assert_eq!(cfg.rho.init_vel_var_q16, init(16.0, cfg.rho.meas_var));
    assert_eq!(cfg.theta.init_vel_var_q16, init(109.0, cfg.theta.meas_var));
}

#[test]
fn demo_debounce_counts_follow_the_filter_settling() {
    // The steady-state gains and pole of the demo's q = 66 / 65536 (both
    // axes), the figures the kernel's module docs quote.
    let cfg = TrackConfig::DEMO;
    assert_eq!(cfg.rho.accel_index_q16, cfg.theta.accel_index_q16);
    let q = cfg.rho.accel_index_q16;
    let (alpha, beta) = kalata_gains((q as f64 / 65536.0).sqrt());
    assert!((alpha - 0.2226).abs() < 5e-5 && (beta - 0.0280).abs() < 5e-5);
    let tau = settling_time_constant(q);
    assert!((tau - 7.94).abs() < 5e-3, "tau {tau}");
    assert!(((1.0 - alpha).sqrt() - 0.8817).abs() < 5e-5);
    assert_eq!(cfg.warn_raise_frames as f64, tau.ceil());
    assert_eq!(cfg.warn_clear_frames as f64, (tau * 20f64.ln()).ceil());
    // The filter itself has that pole: the reference filter at its steady
    // state, fed noise-free measurements of a still line, shrinks a state
    // error like r^k (envelope over one period of the complex pole pair,
    // about 50 frames here).
    let step = |r: &mut RefAxis| {
        r.predict(q, None);
        r.update(-r.x, None);
        r.err = Default::default();
    };
    let mut r = RefAxis::born(0.0, 4 << 16);
    for _ in 0..2000 {
        step(&mut r);
    }
    (r.x, r.v) = (1.0, 0.0);
    let norms: Vec<f64> = (0..400)
        .map(|_| {
            step(&mut r);
            r.x.hypot(r.v)
        })
        .collect();
    let peak = |w: &[f64]| w.iter().cloned().fold(0.0, f64::max).ln();
    let rate = (peak(&norms[350..400]) - peak(&norms[150..200])) / 200.0;
    assert!(
        (rate * tau + 1.0).abs() < 0.02,
        "decay {rate} per frame, 1/tau {}",
        1.0 / tau
    );
}
