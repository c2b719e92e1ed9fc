//! The contract check of `marking.select` on lines derived from the demo
//! sequence's truth (see the family's module docs).

use super::reference::{column_bound_px, select_f64, trig_bound, trig_max_err};
use crate::contract::{Contract, KernelFamily, KernelReport};
use crate::opcount::measure;
use crate::scene::Scene;
use crate::sequence::{SequenceSpec, TruthLine, DEMO_SEQUENCE};
use fixsight::marking::{self, Candidate, Marking, MarkingConfig, Polarity};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};
use std::f64::consts::PI;

/// One selection problem built from the sequence's truth.
#[derive(Debug, Clone)]
pub struct Trial {
    /// Frame of the sequence.
    pub frame: usize,
    /// The lines offered.
    pub lines: Vec<Candidate>,
    /// Input indices of the true left and right edges, when both are
    /// offered.
    pub truth: Option<(usize, usize)>,
    /// Whether polarities are given.
    pub polarity: bool,
    /// What each line is: `tape-left`, `tape-right`, a clutter kind of
    /// [`SequenceSpec::clutter`], or `random`.
    pub kinds: Vec<&'static str>,
}

/// Standard deviation of the noise put on offered lines: `rho`, px.
pub const TRIAL_RHO_SIGMA_PX: f64 = 0.35;
/// Standard deviation of the noise put on offered lines: `theta`, degrees.
pub const TRIAL_THETA_SIGMA_DEG: f64 = 0.35;

fn to_candidate(l: &TruthLine, votes: u32, polarity: Option<bool>) -> Candidate {
    let (rho_q4, theta) = l.quantised();
    Candidate {
        rho_q4,
        theta,
        votes,
        polarity: match polarity {
            None => Polarity::Unknown,
            Some(true) => Polarity::Rising,
            Some(false) => Polarity::Falling,
        },
    }
}

/// Selection problems from the truth of `spec`: per frame, `per_frame`
/// trials (polarities given in the even ones). Each offers the tape's
/// edges that are at least half visible, the scene's clutter lines
/// ([`SequenceSpec::clutter`], polarity from the scene where it fixes it,
/// else random), votes the visible image length of the line times a
/// detection share uniform in 0.5..1, and three random lines (`rho`
/// uniform in +-200 px, any `theta`, votes 10..60), all with Gaussian
/// noise of [`TRIAL_RHO_SIGMA_PX`] and [`TRIAL_THETA_SIGMA_DEG`], in a
/// random order; all from `seed`.
pub fn trials(spec: &SequenceSpec, seed: u64, per_frame: usize) -> Result<Vec<Trial>, String> {
    let view = spec.view()?;
    let origin = (
        (spec.width as f64 - 1.0) / 2.0,
        (spec.height as f64 - 1.0) / 2.0,
    );
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let rho_n = Normal::new(0.0, TRIAL_RHO_SIGMA_PX).map_err(|e| e.to_string())?;
    let th_n = Normal::new(0.0, TRIAL_THETA_SIGMA_DEG.to_radians()).map_err(|e| e.to_string())?;
    let mut out = Vec::new();
    for k in 0..spec.frames {
        let t = spec.truth(&view, k, origin);
        let clutter = spec.clutter(&view, k, origin);
        for r in 0..per_frame {
            let polarity = r % 2 == 0;
            let noisy = |l: &TruthLine, rng: &mut ChaCha8Rng| TruthLine {
                rho: l.rho + rho_n.sample(rng),
                theta: (l.theta + th_n.sample(rng)).rem_euclid(PI),
                ..*l
            };
            // Keep rho consistent when the noise wraps theta past 0 / 180.
            let wrap = |orig: &TruthLine, n: TruthLine| {
                if (n.theta - orig.theta).abs() > PI / 2.0 {
                    TruthLine {
                        rho: -n.rho,
                        brighter_along_normal: !n.brighter_along_normal,
                        ..n
                    }
                } else {
                    n
                }
            };
            // (candidate, 1 left edge / 2 right edge / 0 other, kind)
            let mut offered: Vec<(Candidate, u8, &'static str)> = Vec::new();
            for (e, l) in t.edges.iter().enumerate() {
                if t.visible[e] < 0.5 {
                    continue;
                }
                let n = wrap(l, noisy(l, &mut rng));
                let votes = (t.length_px[e] * t.visible[e] * rng.random_range(0.5..1.0)) as u32;
                let pol = polarity.then_some(n.brighter_along_normal);
                offered.push((
                    to_candidate(&n, votes, pol),
                    1 + e as u8,
                    ["tape-left", "tape-right"][e],
                ));
            }
            for c in &clutter {
                let n = wrap(&c.line, noisy(&c.line, &mut rng));
                let votes = (c.length_px * rng.random_range(0.5..1.0)) as u32;
                let random_side = rng.random::<bool>();
                let pol = polarity.then_some(if c.polarity_known {
                    n.brighter_along_normal
                } else {
                    random_side
                });
                offered.push((to_candidate(&n, votes, pol), 0, c.kind));
            }
            for _ in 0..3 {
                let l = TruthLine {
                    rho: rng.random_range(-200.0..200.0),
                    theta: rng.random_range(0.0..PI),
                    brighter_along_normal: rng.random(),
                };
                let votes = rng.random_range(10..60);
                offered.push((
                    to_candidate(&l, votes, polarity.then_some(l.brighter_along_normal)),
                    0,
                    "random",
                ));
            }
            for i in (1..offered.len()).rev() {
                let j = rng.random_range(0..=i);
                offered.swap(i, j);
            }
            let find = |tag: u8| offered.iter().position(|o| o.1 == tag);
            let truth = find(1).zip(find(2));
            out.push(Trial {
                frame: k,
                lines: offered.iter().map(|o| o.0).collect(),
                truth,
                polarity,
                kinds: offered.iter().map(|o| o.2).collect(),
            });
        }
    }
    Ok(out)
}

/// Seed of the report's trials.
pub const TRIAL_SEED: u64 = 0x5EED_0200;
/// Trials per frame in the report.
pub const TRIALS_PER_FRAME: usize = 4;

/// Contract check of the selection on the demo sequence's truth.
pub fn check(_scenes: &[Scene]) -> Vec<KernelReport> {
    let cfg = MarkingConfig::DEMO;
    let l = *cfg.limits();
    let ts = match trials(&DEMO_SEQUENCE, TRIAL_SEED, TRIALS_PER_FRAME) {
        Ok(t) => t,
        Err(e) => {
            let mut r = empty_row();
            r.fail(format!("cannot build the trials: {e}"));
            return vec![r];
        }
    };
    let total_lines: usize = ts.iter().map(|t| t.lines.len()).sum();
    let (results, ops) = measure(total_lines, || {
        ts.iter()
            .map(|t| marking::select(&t.lines, &cfg))
            .collect::<Vec<_>>()
    });
    let mut notes = Vec::new();
    let (mut agree, mut borderline, mut unexplained) = (0usize, 0usize, 0usize);
    let (mut with_tape, mut fixed_true, mut ref_true) = (0usize, 0usize, 0usize);
    let (mut wrong, mut missed, mut without, mut without_none) = (0usize, 0usize, 0usize, 0usize);
    let (mut max_err, mut beyond_beta) = (0f64, 0usize);
    let mut lost_frames = std::collections::BTreeSet::new();
    let mut wrong_notes = Vec::new();
    for (t, m) in ts.iter().zip(&results) {
        let r = select_f64(&t.lines, &l);
        let fixed_pick = m.found().map(|e| (e.left, e.right));
        if r.borderline {
            borderline += 1;
        }
        if fixed_pick == r.pick {
            agree += 1;
            if let Marking::Found(e) = m {
                let got = [e.near_x_q4[0], e.near_x_q4[1], e.far_x_q4[0], e.far_x_q4[1]];
                let want = [r.near_x_q4[0], r.near_x_q4[1], r.far_x_q4[0], r.far_x_q4[1]];
                for ((g, w), b) in got.iter().zip(want).zip(r.beta_q4) {
                    let d = (*g as f64 - w).abs();
                    max_err = max_err.max(d / 16.0);
                    if d > b {
                        beyond_beta += 1;
                    }
                }
            }
        } else if !r.borderline {
            unexplained += 1;
            if notes.len() < 5 {
                notes.push(format!(
                    "frame {}: fixed picked {fixed_pick:?}, f64 {:?}, not borderline",
                    t.frame, r.pick
                ));
            }
        }
        if fixed_pick.is_some() && fixed_pick != t.truth && wrong_notes.len() < 3 {
            if let Some((a, b)) = fixed_pick {
                wrong_notes.push(format!(
                    "frame {}: picked lines of kinds `{}` and `{}` (tape {})",
                    t.frame,
                    t.kinds[a],
                    t.kinds[b],
                    if t.truth.is_some() {
                        "offered"
                    } else {
                        "hidden"
                    }
                ));
            }
        }
        match t.truth {
            Some(truth) => {
                with_tape += 1;
                if fixed_pick == Some(truth) {
                    fixed_true += 1;
                } else if fixed_pick.is_some() {
                    wrong += 1;
                } else {
                    missed += 1;
                }
                if r.pick == Some(truth) {
                    ref_true += 1;
                }
            }
            None => {
                without += 1;
                if fixed_pick.is_none() {
                    without_none += 1;
                } else {
                    wrong += 1;
                }
            }
        }
        if fixed_pick != t.truth {
            lost_frames.insert(t.frame);
        }
    }
    let trig = trig_max_err();
    let bound = column_bound_px(&l);
    let n = ts.len() as f64;
    let mut metrics = std::collections::BTreeMap::new();
    for (k, v) in [
        ("trials", n),
        ("frames", DEMO_SEQUENCE.frames as f64),
        ("lines_per_trial", total_lines as f64 / n),
        ("agreement_share", agree as f64 / n),
        ("borderline_trials", borderline as f64),
        ("unexplained_disagreements", unexplained as f64),
        ("trials_with_tape", with_tape as f64),
        (
            "truth_share_fixed",
            fixed_true as f64 / with_tape.max(1) as f64,
        ),
        ("truth_share_f64", ref_true as f64 / with_tape.max(1) as f64),
        ("wrong_pair_trials", wrong as f64),
        ("missed_tape_trials", missed as f64),
        ("trials_without_tape", without as f64),
        ("not_found_without_tape", without_none as f64),
        ("frames_not_exactly_right", lost_frames.len() as f64),
        ("columns_beyond_their_bound", beyond_beta as f64),
        ("trig_max_err_lsb", trig),
        ("trig_bound_lsb", trig_bound()),
        ("ops_per_call", ops.total * total_lines as f64 / n),
        ("rho_noise_sigma_px", TRIAL_RHO_SIGMA_PX),
        ("theta_noise_sigma_deg", TRIAL_THETA_SIGMA_DEG),
    ] {
        metrics.insert(k.to_string(), v);
    }
    let pass = max_err <= bound && unexplained == 0 && beyond_beta == 0 && trig <= trig_bound();
    if beyond_beta > 0 {
        notes.push(format!(
            "{beyond_beta} columns beyond their own fixed-point bound"
        ));
    }
    if trig > trig_bound() {
        notes.push(format!(
            "table sine/cosine error {trig} LSB exceeds its bound {}",
            trig_bound()
        ));
    }
    notes.extend(wrong_notes);
    notes.push(format!(
        "fixed vs f64 selection on {} trials from the truth of sequence `{}` (seed {:#x}); \
         max_abs_err: column of a shared pick, px; ops_per_px counts per input line",
        ts.len(),
        DEMO_SEQUENCE.name,
        TRIAL_SEED
    ));
    vec![KernelReport {
        name: "marking.select".into(),
        family: KernelFamily::Marking,
        contract: Contract::Tolerance,
        max_abs_err: max_err,
        bound,
        bit_exact_share: agree as f64 / n,
        ops_per_px: ops,
        metrics,
        pass,
        notes,
    }]
}

fn empty_row() -> KernelReport {
    KernelReport {
        name: "marking.select".into(),
        family: KernelFamily::Marking,
        contract: Contract::Tolerance,
        max_abs_err: 0.0,
        bound: 0.0,
        bit_exact_share: 0.0,
        ops_per_px: Default::default(),
        metrics: Default::default(),
        pass: false,
        notes: Vec::new(),
    }
}
