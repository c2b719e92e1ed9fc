//! The `chain.edges` contract: F1 against the full-`f64` Canny, one to one
//! (the verdict) and many to one (kept beside it), for both suppression
//! kinds, on every scene given (the report gives the demo scenes and the
//! natural photographs), worst per image class.

use super::reference::{agreement, canny_of_chain, reference_of_chain, Agreement};
use super::ID;
use crate::contract::{Contract, KernelFamily, KernelReport};
use crate::edge_chain::{chains_with, ChainParams, Suppression, DEMO, DEMO_INTERPOLATED};
use crate::metrics::{matched_agreement, MatchedAgreement};
use crate::opcount::OpsPerPx;
use crate::scene::{Scene, SceneClass};
use std::collections::BTreeMap;

/// The F1 goal against the full-`f64` Canny under the one-to-one measure
/// (issue goal).
pub const F1_GOAL: f64 = 0.95;

/// Floor of the worst-image one-to-one F1: the `chain.edges` row fails
/// below it. [`F1_GOAL`] is reported beside it ("GOAL NOT MET" notes):
/// measured, the goal does not hold on every image for either suppression
/// kind (README, "Edges on natural photographs").
pub const F1_FLOOR: f64 = 0.90;

/// The configuration the README recommends, on which the row's verdict is
/// judged.
pub const RECOMMENDED: ChainParams = DEMO_INTERPOLATED;

pub fn sum_ops(list: &[OpsPerPx]) -> OpsPerPx {
    list.iter().fold(OpsPerPx::default(), |a, b| a.plus(b))
}

/// Figures of one configuration on one scene.
#[derive(Debug, Clone, Copy)]
pub struct SceneF1 {
    /// Image class.
    pub class: SceneClass,
    /// Many-to-one agreement (each pixel needs a partner within 1 px).
    pub loose: Agreement,
    /// One-to-one agreement within 1 px.
    pub matched: MatchedAgreement,
    /// Many-to-one F1 before thinning (the chain's hysteresis output
    /// against the `f64` Canny before its thinning).
    pub loose_before_thin: f64,
    /// The automatic high threshold came from the histogram's top bin.
    pub high_at_top_bin: bool,
    /// The high threshold the chain used.
    pub high: u16,
}

/// Runs one configuration on every scene: per-scene figures, operations of
/// the edge steps on the first scene, and problems.
pub fn evaluate(
    scenes: &[Scene],
    p: &ChainParams,
) -> (Vec<(&'static str, SceneF1)>, OpsPerPx, Vec<String>) {
    let (chains, problems) = chains_with(scenes, p);
    let mut out = Vec::new();
    for (s, c) in &chains {
        let (low, high) = (c.thresholds.low(), c.thresholds.high());
        let reference = reference_of_chain(&s.gray, c.w, c.h, low, high);
        let canny = canny_of_chain(&s.gray, c.w, c.h, low, high);
        out.push((
            s.name,
            SceneF1 {
                class: s.class,
                loose: agreement(&c.thin, &reference, c.w, c.h),
                matched: matched_agreement(&c.thin, &reference, c.w, c.h, 1),
                loose_before_thin: agreement(&c.edges, &canny, c.w, c.h).f1,
                high_at_top_bin: (c.thresholds.high() as usize) >= (p.bins << p.shift).min(65535),
                high: c.thresholds.high(),
            },
        ));
    }
    let ops = chains
        .first()
        .map(|(_, c)| sum_ops(&c.ops))
        .unwrap_or_default();
    (out, ops, problems)
}

fn prefix(s: Suppression) -> &'static str {
    match s {
        Suppression::Sectors => "sectors.",
        Suppression::Interpolated => "interpolated.",
    }
}

/// Adds one configuration's figures to the row's metrics, under
/// `sectors.` / `interpolated.` and (for `bare`) also without a prefix.
fn add_metrics(
    m: &mut BTreeMap<String, f64>,
    kind: Suppression,
    per: &[(&'static str, SceneF1)],
    ops: &OpsPerPx,
    bare: bool,
) {
    let worst = |f: &dyn Fn(&SceneF1) -> f64| per.iter().map(|(_, x)| f(x)).fold(1f64, f64::min);
    let mut put = |k: String, v: f64| {
        if bare {
            m.insert(k.clone(), v);
        }
        m.insert(format!("{}{k}", prefix(kind)), v);
    };
    put("f1_matched".into(), worst(&|x| x.matched.f1));
    put("f1".into(), worst(&|x| x.loose.f1));
    put("f1_before_thinning".into(), worst(&|x| x.loose_before_thin));
    put("ops_per_px".into(), ops.total);
    put("weighted_ops_per_px".into(), ops.weighted);
    put(
        "thresholds_at_top_bin".into(),
        per.iter().filter(|(_, x)| x.high_at_top_bin).count() as f64,
    );
    for c in SceneClass::ALL {
        let of: Vec<&SceneF1> = per
            .iter()
            .filter(|(_, x)| x.class == c)
            .map(|(_, x)| x)
            .collect();
        if !of.is_empty() {
            put(
                format!("f1_matched.class.{}", c.name()),
                of.iter().map(|x| x.matched.f1).fold(1f64, f64::min),
            );
            put(
                format!("f1.class.{}", c.name()),
                of.iter().map(|x| x.loose.f1).fold(1f64, f64::min),
            );
        }
    }
    for (name, x) in per {
        put(format!("f1_matched.{name}"), x.matched.f1);
        put(format!("precision_matched.{name}"), x.matched.precision);
        put(format!("recall_matched.{name}"), x.matched.recall);
        put(format!("f1.{name}"), x.loose.f1);
        put(format!("edge_px.{name}"), x.matched.detected_px as f64);
        put(format!("high_threshold.{name}"), x.high as f64);
    }
}

/// The `chain.edges` contract on the given scenes: one-to-one F1 of the
/// chain against the full-`f64` Canny (see the family docs), for the
/// 4-sector suppression (the chain of the golden vector and of
/// `pipeline.edge_stream`) and the interpolating one; the verdict is the
/// goal on the worst image for [`RECOMMENDED`].
pub fn check(scenes: &[Scene]) -> Vec<KernelReport> {
    let mut row = KernelReport {
        name: ID.into(),
        family: KernelFamily::Chain,
        contract: Contract::Tolerance,
        max_abs_err: 1.0,
        bound: 1.0 - F1_FLOOR,
        bit_exact_share: 0.0,
        ops_per_px: OpsPerPx::default(),
        metrics: Default::default(),
        pass: true,
        notes: vec![
            "figure is 1 - F1 of the worst image, one-to-one matching within 1 px (Chebyshev; \
             Martin, Fowlkes & Malik 2004), of the recommended configuration (interpolating \
             suppression) against a full-f64 Canny (sigma 1 Gaussian, f64 Sobel, interpolated \
             NMS) with the same thresholds, each applied to the f64 magnitude as t - 1/2 (the \
             test the chain's rounded magnitude makes), thinned by the chain's thinning rule \
             (Zhang & Suen 1984) so that both maps are one pixel wide; bound is the floor F1 >= 0.90 (the goal 0.95 is \
             reported beside it), not an analytical bound; `f1` is the older many-to-one figure, `sectors.*` / `interpolated.*` the \
             two suppression kinds"
                .into(),
            "ops/px are those of the edge steps of the recommended configuration: \
             nms.suppress_interpolated + hysteresis.thresholds + hysteresis.classify + \
             hysteresis.link + thinning.thin (sectors.ops_per_px: with nms.suppress)"
                .into(),
        ],
    };
    let mut problems = Vec::new();
    for kind in Suppression::ALL {
        let p = match kind {
            Suppression::Sectors => DEMO,
            Suppression::Interpolated => DEMO_INTERPOLATED,
        };
        let (per, ops, pr) = evaluate(scenes, &p);
        let recommended = p == RECOMMENDED;
        add_metrics(&mut row.metrics, kind, &per, &ops, recommended);
        if recommended {
            problems.extend(pr);
            let worst = per.iter().map(|(_, x)| x.matched.f1).fold(1f64, f64::min);
            row.max_abs_err = 1.0 - worst;
            row.ops_per_px = ops;
            row.metrics.insert("f1_goal".into(), F1_GOAL);
            row.metrics.insert(
                "f1_goal_met".into(),
                if worst >= F1_GOAL { 1.0 } else { 0.0 },
            );
            for (name, x) in &per {
                if x.matched.f1 < F1_GOAL {
                    row.notes.push(format!(
                        "GOAL NOT MET: one-to-one F1 {:.4} on {name} is below the goal {F1_GOAL}",
                        x.matched.f1
                    ));
                }
                if x.matched.f1 < F1_FLOOR {
                    problems.push(format!(
                        "one-to-one F1 {:.4} on {name} is below the floor {F1_FLOOR}",
                        x.matched.f1
                    ));
                }
            }
            for (name, x) in &per {
                if x.high_at_top_bin {
                    row.notes.push(format!(
                        "automatic high threshold on {name} came from the histogram's top bin \
                         (at its limit)"
                    ));
                }
            }
        }
    }
    for p in problems {
        row.fail(p);
    }
    vec![row]
}
