//! Contract checks of the `filter.*` kernel ids on the demo scenes:
//! bit-exact, whole frame and row stream, both border rules.

use super::reference::{real_taps, reference_real, round_half_up_sat};
use super::run::{run_stream, run_whole};
use super::{custom_filters, stream_filters, OutputParam, CUSTOM_ID, PRESETS, STREAM_ID};
use crate::contract::{Contract, KernelFamily, KernelReport};
use crate::metrics::ErrorStats;
use crate::opcount::{measure, OpsPerPx};
use crate::scene::Scene;
use fixsight::filter::{Border, SeparableFilter};

/// Borders every preset is checked with.
const BORDERS: [Border; 2] = [Border::Clamp, Border::Fill(0)];

/// Kernel output widened to `f64`, whole frame and stream.
fn outputs(
    f: &SeparableFilter,
    out: OutputParam,
    s: &Scene,
) -> Result<(Vec<f64>, Vec<f64>), String> {
    let (w, h) = (s.width, s.height);
    let e = |e: fixsight::Error| e.to_string();
    Ok(match out {
        OutputParam::U8 => (
            run_whole::<u8>(f, &s.gray, w, h)
                .map_err(e)?
                .iter()
                .map(|&v| v as f64)
                .collect(),
            run_stream::<u8>(f, &s.gray, w, h)?
                .iter()
                .map(|&v| v as f64)
                .collect(),
        ),
        OutputParam::I16 => (
            run_whole::<i16>(f, &s.gray, w, h)
                .map_err(e)?
                .iter()
                .map(|&v| v as f64)
                .collect(),
            run_stream::<i16>(f, &s.gray, w, h)?
                .iter()
                .map(|&v| v as f64)
                .collect(),
        ),
    })
}

/// Contract checks of every preset and of the custom tap sets on the
/// scenes: one row per kernel id. The `filter.filter_stream` row judges the
/// row stream (of the stream tap sets, [`stream_filters`]) against the
/// reference and counts the operations of the stream alone; the other rows
/// judge the whole frame, and every row requires both forms to agree.
pub fn check(scenes: &[Scene]) -> Vec<KernelReport> {
    let mut rows: Vec<KernelReport> = PRESETS
        .iter()
        .map(|p| check_filters(p.id, &|b| vec![((p.make)(b), p.output)], scenes))
        .collect();
    rows.push(check_filters(CUSTOM_ID, &custom_filters, scenes));
    rows.push(check_filters(STREAM_ID, &stream_filters, scenes));
    rows
}

/// The stream's output alone, widened to `f64` (what the
/// `filter.filter_stream` row measures).
fn stream_output(f: &SeparableFilter, out: OutputParam, s: &Scene) -> Result<Vec<f64>, String> {
    let (w, h) = (s.width, s.height);
    Ok(match out {
        OutputParam::U8 => run_stream::<u8>(f, &s.gray, w, h)?
            .iter()
            .map(|&v| v as f64)
            .collect(),
        OutputParam::I16 => run_stream::<i16>(f, &s.gray, w, h)?
            .iter()
            .map(|&v| v as f64)
            .collect(),
    })
}

/// The filters of one kernel id for a border rule, with their output types.
type FilterSet<'a> = dyn Fn(Border) -> Vec<(SeparableFilter, OutputParam)> + 'a;

fn check_filters(id: &str, make: &FilterSet<'_>, scenes: &[Scene]) -> KernelReport {
    let mut actual = Vec::new();
    let mut reference = Vec::new();
    let mut unrounded_max = 0f64;
    let mut problems = Vec::new();
    let mut ops = OpsPerPx::default();
    let mut peak = 0f64;
    for border in BORDERS {
        for (fi, (f, output)) in make(border).into_iter().enumerate() {
            let (lo, hi) = match output {
                OutputParam::U8 => (0.0, 255.0),
                OutputParam::I16 => (-32768.0, 32767.0),
            };
            peak = peak.max(hi - lo);
            for (si, s) in scenes.iter().enumerate() {
                let real = reference_real(
                    &s.gray,
                    s.width,
                    s.height,
                    &real_taps(f.horizontal()),
                    &real_taps(f.vertical()),
                    border,
                );
                let first = si == 0 && fi == 0 && border == Border::Clamp;
                let res = if first && id == STREAM_ID {
                    let (r, o) = measure(s.width * s.height, || stream_output(&f, output, s));
                    ops = o;
                    r.and_then(|st| outputs(&f, output, s).map(|(w, _)| (st, w)))
                } else if first {
                    let (r, o) = measure(s.width * s.height, || outputs(&f, output, s));
                    ops = o;
                    r
                } else {
                    outputs(&f, output, s)
                };
                // The judged form first: the stream for `filter.filter_stream`.
                let res = res.map(|(a, b)| if id == STREAM_ID { (b, a) } else { (a, b) });
                match res {
                    Ok((whole, stream)) => {
                        if whole != stream {
                            let n = whole.iter().zip(&stream).filter(|(a, b)| a != b).count();
                            problems.push(format!(
                                "{}: streaming differs from whole frame at {n} pixels ({border:?})",
                                s.name
                            ));
                        }
                        for (&k, &r) in whole.iter().zip(&real) {
                            if r >= lo && r <= hi {
                                unrounded_max = unrounded_max.max((k - r).abs());
                            }
                        }
                        reference.extend(real.iter().map(|&r| round_half_up_sat(r, lo, hi)));
                        actual.extend(if id == STREAM_ID { stream } else { whole });
                    }
                    Err(e) => problems.push(format!("{}: kernel error: {e}", s.name)),
                }
            }
        }
    }
    // Ops were measured over both forms (whole frame then stream) on one
    // scene: halve to get the cost of one pass; the stream row measured the
    // stream alone.
    let ops = if id == STREAM_ID { ops } else { halve(&ops) };
    let stats = ErrorStats::compare(&actual, &reference, peak);
    let mut r = KernelReport::from_stats(
        id,
        KernelFamily::Filter,
        Contract::BitExact,
        0.0,
        &stats,
        ops,
    );
    r.metrics
        .insert("max_err_vs_unrounded".into(), unrounded_max);
    r.metrics.insert(
        "stream_equals_frame".into(),
        if problems.iter().any(|p| p.contains("streaming")) {
            0.0
        } else {
            1.0
        },
    );
    r.notes.push(format!(
        "whole frame and row stream vs direct 2-D f64 sum; borders clamp and fill(0); {} scenes",
        scenes.len()
    ));
    if id == STREAM_ID {
        r.notes.push(
            "row stream (FilterStream, pushed one row at a time) judged; binomial5 and the \
             asymmetric 9x5 (u8) and Sobel y (i16); ops/px of the stream alone, on the first"
                .into(),
        );
    }
    if id == CUSTOM_ID {
        r.notes.push(
            "custom taps: asymmetric 9x5 (u8 and i16 output) and a 9-tap smoothed derivative; \
             ops/px of the first"
                .into(),
        );
    }
    for pr in problems {
        r.fail(pr);
    }
    r
}

fn halve(o: &OpsPerPx) -> OpsPerPx {
    OpsPerPx {
        total: o.total / 2.0,
        weighted: o.weighted / 2.0,
        per_category: o
            .per_category
            .iter()
            .map(|(k, v)| (k.clone(), v / 2.0))
            .collect(),
    }
}
