//! Synthetic measurement sequences with their truth (see the family docs).

use fixsight::track::{Detection, TrackConfig};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};
use std::f64::consts::PI;

/// One call of the tracker.
#[derive(Debug, Clone)]
pub struct SeqFrame {
    /// Frame number.
    pub frame: u32,
    /// Detections, strongest first.
    pub dets: Vec<Detection>,
}

/// A true line in the lines' frame: `rho` in px, `theta` in radians in
/// `[0, pi)`.
#[derive(Debug, Clone, Copy)]
pub struct TrueLine {
    /// Distance from the image centre, px.
    pub rho: f64,
    /// Normal angle, radians, `[0, pi)`.
    pub theta: f64,
}

/// A synthetic measurement sequence and its truth.
#[derive(Debug, Clone)]
pub struct Sequence {
    /// Name.
    pub name: String,
    /// Seed.
    pub seed: u64,
    /// Calls of the tracker (skipped frame numbers do not appear).
    pub frames: Vec<SeqFrame>,
    /// The two tape edges at every call.
    pub truth: Vec<[TrueLine; 2]>,
    /// First frame number at which the reference point is on or past a
    /// tape edge (true lines), if within the sequence.
    pub true_crossing: Option<u32>,
}

/// `(rho, theta)` with theta folded into `[0, pi)` (rho negated when
/// folded).
fn canonical(rho: f64, theta: f64) -> TrueLine {
    let n = (theta / PI).floor();
    let th = theta - n * PI;
    if (n as i64).rem_euclid(2) == 1 {
        TrueLine {
            rho: -rho,
            theta: th,
        }
    } else {
        TrueLine { rho, theta: th }
    }
}

fn quantise(l: TrueLine, weight: u32) -> Detection {
    let c = canonical(l.rho, l.theta);
    let theta = ((c.theta / PI * 65536.0).round() as i64).rem_euclid(65536);
    // theta rounding to 65536 means 180 degrees: the same line at 0 with -rho.
    let (rho, theta) = if (c.theta / PI * 65536.0).round() as i64 >= 65536 {
        (-c.rho, 0)
    } else {
        (c.rho, theta)
    };
    Detection {
        rho_q4: (rho * 16.0).round() as i32,
        theta: theta as u16,
        weight,
    }
}

/// Signed distance (px) of the reference point to a true line.
fn true_distance(cfg: &TrackConfig, l: TrueLine) -> f64 {
    let (px, py) = (
        cfg.reference_q4.0 as f64 / 16.0,
        cfg.reference_q4.1 as f64 / 16.0,
    );
    px * l.theta.cos() + py * l.theta.sin() - l.rho
}

/// A sequence of `n` frames from `seed` (see the module docs). `wrap`
/// makes theta pass through 0/180 degrees about a third of the way in.
pub fn synth_sequence(seed: u64, n: u32, wrap: bool) -> Sequence {
    let cfg = TrackConfig::DEMO;
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let py = cfg.reference_q4.1 as f64 / 16.0;
    let half_width = 12.0;
    // Angular velocity 0.01 .. 0.04 degree/frame, either sign.
    let omega = rng.random_range(0.01f64..0.04).to_radians()
        * if rng.random_bool(0.5) { 1.0 } else { -1.0 };
    let theta0 = if wrap {
        -omega * n as f64 / 3.0
    } else {
        rng.random_range(3.0f64..20.0).to_radians()
    };
    let offset = rng.random_range(-3.0f64..3.0);
    let rho0 = py * theta0.sin() - offset;
    let t_cross = rng.random_range(0.5f64..0.7) * n as f64;
    let target = if rng.random_bool(0.5) {
        half_width
    } else {
        -half_width
    };
    // d_c(t) ~ d_c(0) + (py cos(theta0) omega - v) t reaches the target.
    let v_rho = py * theta0.cos() * omega - (target - offset) / t_cross;
    let line = |t: f64, k: f64| TrueLine {
        rho: rho0 + v_rho * t + k * half_width,
        theta: theta0 + omega * t,
    };
    let noise_rho = Normal::new(0.0, 0.5).expect("finite sd");
    let noise_theta = Normal::new(0.0, 0.3f64.to_radians()).expect("finite sd");
    let weight = Normal::new(150.0, 20.0).expect("finite sd");
    let occlusion = rng.random_range(n / 4..n / 2);
    let mut frames = Vec::new();
    let mut truth = Vec::new();
    let mut true_crossing = None;
    for f in 0..n {
        let t = f as f64;
        let edges = [line(t, -1.0), line(t, 1.0)];
        let canon = edges.map(|l| canonical(l.rho, l.theta));
        if true_crossing.is_none() {
            // The point is inside the tape while its distances to the two
            // edges have opposite signs.
            let d0 = true_distance(&cfg, edges[0]);
            let d1 = true_distance(&cfg, edges[1]);
            if d0 * d1 >= 0.0 {
                true_crossing = Some(f);
            }
        }
        if f > 0 && rng.random_bool(0.03) {
            continue; // dropped camera frame
        }
        let mut dets = Vec::new();
        for l in edges {
            if (occlusion..occlusion + 4).contains(&f) || rng.random_bool(0.08) {
                continue;
            }
            let noisy = TrueLine {
                rho: l.rho + noise_rho.sample(&mut rng),
                theta: l.theta + noise_theta.sample(&mut rng),
            };
            let w = f64::max(weight.sample(&mut rng), 1.0) as u32;
            dets.push(quantise(noisy, w));
        }
        if rng.random_bool(0.7) {
            let shelf = TrueLine {
                rho: -60.0 + noise_rho.sample(&mut rng),
                theta: PI / 2.0 + noise_theta.sample(&mut rng),
            };
            dets.push(quantise(shelf, rng.random_range(60..120)));
        }
        let clutter = match rng.random_range(0..10) {
            0..6 => 0,
            6..9 => 1,
            _ => 2,
        };
        for _ in 0..clutter {
            let l = TrueLine {
                rho: rng.random_range(-150.0..150.0),
                theta: rng.random_range(0.0..PI),
            };
            dets.push(quantise(l, rng.random_range(10..120)));
        }
        dets.sort_by_key(|d| std::cmp::Reverse(d.weight));
        frames.push(SeqFrame { frame: f, dets });
        truth.push(canon);
    }
    Sequence {
        name: format!("{}-{seed}", if wrap { "wrap" } else { "drift" }),
        seed,
        frames,
        truth,
        true_crossing,
    }
}

/// The sequences of the contract: four drifting and four wrapping, 300
/// frames each.
pub fn contract_sequences() -> Vec<Sequence> {
    (0..8)
        .map(|i| synth_sequence(0x7_2AC0 + i, 300, i % 2 == 1))
        .collect()
}
