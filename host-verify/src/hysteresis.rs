//! Integer reference models of `fixsight::hysteresis`, written from the
//! kernel's documented model:
//!
//! * [`classify`]: STRONG (2) when `m >= high`, WEAK (1) when
//!   `low <= m < high`, else 0;
//! * [`link`]: label the 8-connected components of the nonzero codes
//!   (breadth first, on the heap) and keep a component when it holds a
//!   STRONG pixel; the rule of Canny 1986 ("A Computational Approach to
//!   Edge Detection", IEEE PAMI 8(6)) stated as connected components;
//! * [`auto_thresholds`]: the histogram rule computed by sorting the bin
//!   indices of the nonzero magnitudes and taking the `target`-th smallest.
//!
//! Kernel ids (contracts **bit-exact**, checked on the edge chain's
//! intermediates on the demo scenes, see [`crate::chain`]):
//!
//! | id | kernel API | inputs | params | outputs |
//! |---|---|---|---|---|
//! | `hysteresis.thresholds` | `Thresholds::from_histogram` | `mag` u16 | `{bins, shift, high_permille, low_ratio_u0f16}` | `thresholds` u16 2x1 (`low`, `high`) |
//! | `hysteresis.classify` | `classify` | `mag` u16 | `{low, high}` | `codes` u8 |
//! | `hysteresis.link` | `link` | `codes` u8 | `{stack}` | `edges` u8 |
//!
//! `low_ratio_u0f16` is the raw bits of the `U0F16` ratio `low / high`
//! (`31457` is 0.48); `stack` the work-stack entries (at least 8).

use crate::chain::{
    as_f64, bit_exact_row, case, demo_chains, golden_crop, run_classify, run_link,
    run_stream_codes, run_thresholds, step_ops, synthetic_edges, ChainParams, DEMO,
};
use crate::contract::{KernelFamily, KernelReport};
use crate::families::{input, parse_params, Family};
use crate::golden::{Blob, GoldenCase};
use crate::scene::Scene;
use fixsight::hysteresis::{Thresholds, MIN_STACK};
use serde::{Deserialize, Serialize};
use serde_json::json;
use std::collections::VecDeque;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "hysteresis",
    kernels: &[
        "hysteresis.thresholds",
        "hysteresis.classify",
        "hysteresis.link",
    ],
    composed_on_host: false,
    check,
    golden_cases,
    run_vector,
};

/// Reference double threshold.
pub fn classify(mag: &[u16], low: u16, high: u16) -> Vec<u8> {
    mag.iter()
        .map(|&m| {
            if m >= high {
                2
            } else if m >= low {
                1
            } else {
                0
            }
        })
        .collect()
}

/// The 8-connected components of the nonzero pixels of `map`, each as
/// the list of its pixel indices (breadth-first flood fill).
pub fn components8(map: &[u8], w: usize, h: usize) -> Vec<Vec<usize>> {
    let mut comps = Vec::new();
    let mut seen = vec![false; w * h];
    for s in 0..w * h {
        if map[s] == 0 || seen[s] {
            continue;
        }
        seen[s] = true;
        let mut members = vec![s];
        let mut q = VecDeque::from([s]);
        while let Some(p) = q.pop_front() {
            let (x, y) = ((p % w) as i64, (p / w) as i64);
            for dy in -1..=1 {
                for dx in -1..=1 {
                    let (nx, ny) = (x + dx, y + dy);
                    if nx >= 0 && ny >= 0 && nx < w as i64 && ny < h as i64 {
                        let n = ny as usize * w + nx as usize;
                        if map[n] != 0 && !seen[n] {
                            seen[n] = true;
                            members.push(n);
                            q.push_back(n);
                        }
                    }
                }
            }
        }
        comps.push(members);
    }
    comps
}

/// Reference hysteresis on edge codes (0, 1, 2): returns 0/255. A
/// component of nonzero codes is kept whole when it holds a strong pixel.
pub fn link(codes: &[u8], w: usize, h: usize) -> Vec<u8> {
    let mut out = vec![0u8; w * h];
    for members in components8(codes, w, h) {
        if members.iter().any(|&m| codes[m] == 2) {
            for m in members {
                out[m] = 255;
            }
        }
    }
    out
}

/// Reference automatic thresholds `(low, high)`.
pub fn auto_thresholds(
    mag: &[u16],
    bins: usize,
    shift: u32,
    high_permille: u16,
    low_ratio_u0f16: u16,
) -> (u16, u16) {
    let mut idx: Vec<usize> = mag
        .iter()
        .filter(|&&m| m > 0)
        .map(|&m| ((m >> shift) as usize).min(bins - 1))
        .collect();
    if idx.is_empty() {
        return (u16::MAX, u16::MAX);
    }
    idx.sort_unstable();
    let n = idx.len() as u64;
    let target = (n * high_permille as u64).div_ceil(1000) as usize;
    let b = idx[target.max(1) - 1];
    let high = (((b as u64) + 1) << shift).min(65535);
    let low = ((high as f64 * low_ratio_u0f16 as f64 / 65536.0) + 0.5).floor() as u64;
    (low.max(1) as u16, high as u16)
}
/// Parameters of `hysteresis.classify`.
#[derive(Debug, Clone, Copy, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ClassifyParams {
    /// Low threshold.
    pub low: u16,
    /// High threshold.
    pub high: u16,
}

/// Parameters of `hysteresis.thresholds`.
#[derive(Debug, Clone, Copy, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ThresholdParams {
    /// Histogram bins.
    pub bins: usize,
    /// Bin width shift.
    pub shift: u32,
    /// Permille below `high`.
    pub high_permille: u16,
    /// `low / high` as U0F16 bits.
    pub low_ratio_u0f16: u16,
}

/// Parameters of `hysteresis.link`.
#[derive(Debug, Clone, Copy, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StackParams {
    /// Work-stack entries.
    pub stack: usize,
}

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

fn e(err: fixsight::Error) -> String {
    err.to_string()
}

/// Recomputes a `hysteresis.*` vector.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    match kernel {
        "hysteresis.thresholds" => {
            let p: ThresholdParams = parse_params(kernel, params)?;
            let b = input(inputs, "mag")?;
            let cp = ChainParams {
                bins: p.bins,
                shift: p.shift,
                high_permille: p.high_permille,
                low_ratio_u0f16: p.low_ratio_u0f16,
                stack: MIN_STACK,
            };
            let t = run_thresholds(&b.to_u16()?, b.width, b.height, &cp)?;
            Ok(vec![Blob::from_u16(
                "thresholds",
                2,
                1,
                1,
                &[t.low(), t.high()],
            )])
        }
        "hysteresis.classify" => {
            let p: ClassifyParams = parse_params(kernel, params)?;
            let t = Thresholds::new(p.low, p.high).map_err(e)?;
            let b = input(inputs, "mag")?;
            let (w, h) = (b.width, b.height);
            Ok(vec![Blob::from_u8(
                "codes",
                w,
                h,
                1,
                &run_classify(&b.to_u16()?, w, h, &t)?,
            )])
        }
        "hysteresis.link" => {
            let p: StackParams = parse_params(kernel, params)?;
            let b = input(inputs, "codes")?;
            let (w, h) = (b.width, b.height);
            Ok(vec![Blob::from_u8(
                "edges",
                w,
                h,
                1,
                &run_link(&b.to_u8()?, w, h, p.stack)?.0,
            )])
        }
        _ => Err(format!("unknown hysteresis kernel `{kernel}`")),
    }
}

/// Golden cases: thresholds, codes and hysteresis on the edge chain's
/// intermediates of a scene crop, a saturating histogram, and a dense weak
/// code map with the minimum stack.
pub fn golden_cases(scenes: &[Scene]) -> Vec<GoldenCase> {
    let g = golden_crop(scenes);
    let t = synthetic_edges();
    let (w, h, c, at) = (g.w, g.h, &g.chain, &g.at);
    let tp = json!({"bins": DEMO.bins, "shift": DEMO.shift, "high_permille": DEMO.high_permille,
                    "low_ratio_u0f16": DEMO.low_ratio_u0f16});
    let big: Vec<u16> = (0..64u32).map(|i| (i * i * 16).min(65535) as u16).collect();
    let (hw, hh) = t.codes_size;
    vec![
        case(
            run_vector,
            "hysteresis.thresholds.floor",
            format!("automatic thresholds of the suppressed magnitudes of {at}"),
            "hysteresis.thresholds",
            tp,
            vec![Blob::from_u16("mag", w, h, 1, &c.nms)],
        ),
        case(
            run_vector,
            "hysteresis.thresholds.saturating",
            "magnitudes up to 65535 with 16 bins of width 2^12: the last bin collects the overflow"
                .into(),
            "hysteresis.thresholds",
            json!({"bins": 16, "shift": 12, "high_permille": 990, "low_ratio_u0f16": 21845}),
            vec![Blob::from_u16("mag", 8, 8, 1, &big)],
        ),
        case(
            run_vector,
            "hysteresis.classify.floor",
            format!("double threshold of the suppressed magnitudes of {at}"),
            "hysteresis.classify",
            json!({"low": c.thresholds.low(), "high": c.thresholds.high()}),
            vec![Blob::from_u16("mag", w, h, 1, &c.nms)],
        ),
        case(
            run_vector,
            "hysteresis.link.floor",
            format!("hysteresis of the edge codes of {at}"),
            "hysteresis.link",
            json!({"stack": DEMO.stack}),
            vec![Blob::from_u8("codes", w, h, 1, &c.codes)],
        ),
        case(
            run_vector,
            "hysteresis.link.min-stack",
            "dense random weak codes with the minimum 8-entry stack: deferred seeds and rescans"
                .into(),
            "hysteresis.link",
            json!({"stack": MIN_STACK}),
            vec![Blob::from_u8("codes", hw, hh, 1, &t.codes)],
        ),
    ]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scene::demo_scenes;

    #[test]
    fn bad_vector_params_are_refused_with_a_reason() {
        let cases = golden_cases(&demo_scenes());
        let link_case = cases
            .iter()
            .find(|c| c.id == "hysteresis.link.floor")
            .unwrap();
        assert!(run_vector("hysteresis.link", &json!({"stack": 3}), &link_case.inputs).is_err());
        let classify_case = cases
            .iter()
            .find(|c| c.id == "hysteresis.classify.floor")
            .unwrap();
        assert!(run_vector(
            "hysteresis.classify",
            &json!({"low": 9, "high": 3}),
            &classify_case.inputs
        )
        .unwrap_err()
        .contains("low threshold 9 is above high threshold 3"));
        assert!(run_vector("hysteresis.nothing", &json!({}), &link_case.inputs).is_err());
    }
}
