//! The `hysteresis.*` contracts on the edge chain's intermediates.

use super::reference::{auto_thresholds, classify, link};
use crate::contract::{KernelFamily, KernelReport};
use crate::edge_chain::{demo_chains, run_link, run_stream_codes, step_ops, DEMO};
use crate::family::{as_f64, bit_exact_row};
use crate::scene::Scene;
use fixsight::hysteresis::MIN_STACK;

/// The contracts of the three kernel ids on the edge chain's suppressed
/// magnitudes and codes of the demo scenes: automatic thresholds against
/// [`auto_thresholds`], codes against [`classify`] (frame and row stream),
/// hysteresis against [`link`] with the demo stack and the minimum stack.
pub fn check(scenes: &[Scene]) -> Vec<KernelReport> {
    let (chains, problems) = demo_chains(scenes);
    let p = DEMO;
    let mut rows = Vec::new();

    // Automatic thresholds.
    {
        let (mut a, mut r, pr) = (Vec::new(), Vec::new(), problems.clone());
        let mut row_metrics = Vec::new();
        for (s, c) in &chains {
            let (lo, hi) =
                auto_thresholds(&c.nms, p.bins, p.shift, p.high_permille, p.low_ratio_u0f16);
            a.extend([c.thresholds.low() as f64, c.thresholds.high() as f64]);
            r.extend([lo as f64, hi as f64]);
            row_metrics.push((s.name, c.thresholds));
        }
        let mut row = bit_exact_row(
            "hysteresis.thresholds",
            KernelFamily::Hysteresis,
            &a,
            &r,
            65535.0,
            step_ops(&chains, 1),
            pr,
            "(low, high) of the automatic rule on the suppressed magnitudes vs the sorting reference",
        );
        for (name, t) in row_metrics {
            row.metrics.insert(format!("low.{name}"), t.low() as f64);
            row.metrics.insert(format!("high.{name}"), t.high() as f64);
            row.metrics
                .insert(format!("ratio.{name}"), t.high() as f64 / t.low() as f64);
        }
        rows.push(row);
    }

    // Classification, with the streaming form.
    {
        let (mut a, mut r, mut pr) = (Vec::new(), Vec::new(), problems.clone());
        let mut stream_ok = true;
        for (s, c) in &chains {
            a.extend(as_f64(&c.codes));
            r.extend(as_f64(&classify(
                &c.nms,
                c.thresholds.low(),
                c.thresholds.high(),
            )));
            match run_stream_codes(&c.mag, &c.dir, c.w, c.h, &c.thresholds) {
                Ok(sc) if sc == c.codes => {}
                Ok(_) => {
                    stream_ok = false;
                    pr.push(format!(
                        "{}: streaming codes differ from the frame codes",
                        s.name
                    ));
                }
                Err(err) => {
                    stream_ok = false;
                    pr.push(format!("{}: stream error: {err}", s.name));
                }
            }
        }
        let mut row = bit_exact_row(
            "hysteresis.classify",
            KernelFamily::Hysteresis,
            &a,
            &r,
            2.0,
            step_ops(&chains, 2),
            pr,
            "edge codes vs the reference; NMS row stream + classify_row vs frame",
        );
        row.metrics.insert(
            "stream_equals_frame".into(),
            if stream_ok { 1.0 } else { 0.0 },
        );
        rows.push(row);
    }

    // Hysteresis: the demo stack and the minimum stack give the reference.
    {
        let (mut a, mut r, mut pr) = (Vec::new(), Vec::new(), problems);
        let (mut passes_min, mut deferred_min, mut peak) = (0u32, 0u32, 0u32);
        for (s, c) in &chains {
            let want = link(&c.codes, c.w, c.h);
            a.extend(as_f64(&c.edges));
            r.extend(as_f64(&want));
            peak = peak.max(c.hyst.peak_stack);
            match run_link(&c.codes, c.w, c.h, MIN_STACK) {
                Ok((m, st)) => {
                    passes_min = passes_min.max(st.passes);
                    deferred_min = deferred_min.max(st.deferred);
                    if m != want {
                        pr.push(format!(
                            "{}: minimum-stack result differs from the reference",
                            s.name
                        ));
                    }
                }
                Err(err) => pr.push(format!("{}: minimum-stack run failed: {err}", s.name)),
            }
        }
        let mut row = bit_exact_row(
            "hysteresis.link",
            KernelFamily::Hysteresis,
            &a,
            &r,
            255.0,
            step_ops(&chains, 3),
            pr,
            "in-place hysteresis (demo stack and 8-entry stack) vs 8-connected component labelling",
        );
        row.metrics.insert("stack_entries".into(), p.stack as f64);
        row.metrics
            .insert("stack_bytes".into(), 4.0 * p.stack as f64);
        row.metrics.insert("peak_stack".into(), peak as f64);
        row.metrics
            .insert("min_stack_passes".into(), passes_min as f64);
        row.metrics
            .insert("min_stack_deferred".into(), deferred_min as f64);
        rows.push(row);
    }
    rows
}
