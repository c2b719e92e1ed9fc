//! `f64` reference and contract for `fixsight::filter` (separable filters).
//!
//! The reference computes the 2-D correlation directly (a double sum over
//! both tap sets, no separation, no line buffers) on the border-extended
//! image, in `f64`, with the taps as real numbers `coef / 2^shift`. All
//! products are dyadic rationals far below 2^53, so the `f64` sum is exact;
//! the documented final rounding `floor(v + 1/2)` and saturation then give
//! the integer the kernel must produce.
//!
//! **Contract: bit-exact**, for every preset, both border rules, every demo
//! scene, whole-frame and streaming forms (which must also equal each
//! other).
//!
//! Kernel ids (golden `kernel` field, report row, on-target row): one per
//! preset function, `filter.binomial3`, `filter.binomial5`,
//! `filter.binomial7`, `filter.sobel_x`, `filter.sobel_y`,
//! `filter.scharr_x`, `filter.scharr_y`, with params
//! `{"border": "clamp" | {"fill": u8}}` (taps and output type are the
//! preset's); and `filter.separable` (`filter::separable`, caller-chosen
//! taps), params
//! `{"h": [i16...], "h_shift": u32, "v": [i16...], "v_shift": u32,
//!   "border": "clamp" | {"fill": u8}, "output": "u8" | "i16"}`.
//! Input `src` (u8), output `dst` (u8 or i16).

use crate::contract::{Contract, KernelFamily, KernelReport};
use crate::families::{input, parse_params, Family};
use crate::golden::{crop, Blob, GoldenCase};
use crate::metrics::ErrorStats;
use crate::opcount::{measure, OpsPerPx};
use crate::scene::Scene;
use fixsight::filter::{self, Border, FilterOutput, FilterStream, SeparableFilter, Taps};
use fixsight::{ImageView, ImageViewMut};
use serde::{Deserialize, Serialize};

/// The family entry.
pub const FAMILY: Family = Family {
    name: "filter",
    kernels: &[
        "filter.binomial3",
        "filter.binomial5",
        "filter.binomial7",
        "filter.sobel_x",
        "filter.sobel_y",
        "filter.scharr_x",
        "filter.scharr_y",
        "filter.separable",
    ],
    composed_on_host: false,
    check,
    golden_cases,
    run_vector,
};

/// Border rule as written in golden params.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "lowercase")]
pub enum BorderParam {
    /// Coordinates clamped into the image.
    Clamp,
    /// The fill value outside the image.
    Fill(u8),
}

impl From<BorderParam> for Border {
    fn from(b: BorderParam) -> Border {
        match b {
            BorderParam::Clamp => Border::Clamp,
            BorderParam::Fill(c) => Border::Fill(c),
        }
    }
}

impl From<Border> for BorderParam {
    fn from(b: Border) -> BorderParam {
        match b {
            Border::Clamp => BorderParam::Clamp,
            Border::Fill(c) => BorderParam::Fill(c),
        }
    }
}

/// Output element type in golden params.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "lowercase")]
pub enum OutputParam {
    /// Smoothing output.
    U8,
    /// Derivative output.
    I16,
}

/// Golden parameters of `filter.separable`.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, Eq)]
#[serde(deny_unknown_fields)]
pub struct FilterParams {
    /// Horizontal taps.
    pub h: Vec<i16>,
    /// Horizontal shift.
    pub h_shift: u32,
    /// Vertical taps.
    pub v: Vec<i16>,
    /// Vertical shift.
    pub v_shift: u32,
    /// Border rule.
    pub border: BorderParam,
    /// Output element type.
    pub output: OutputParam,
}

impl FilterParams {
    /// Parameters describing a kernel filter.
    pub fn of(f: &SeparableFilter, output: OutputParam) -> Self {
        let to16 = |t: &Taps| t.coefficients().iter().map(|&c| c as i16).collect();
        Self {
            h: to16(f.horizontal()),
            h_shift: f.horizontal().shift(),
            v: to16(f.vertical()),
            v_shift: f.vertical().shift(),
            border: f.border().into(),
            output,
        }
    }

    /// Builds the kernel filter (typed kernel errors become messages).
    pub fn build(&self) -> Result<SeparableFilter, String> {
        let h = Taps::new(&self.h, self.h_shift).map_err(|e| e.to_string())?;
        let v = Taps::new(&self.v, self.v_shift).map_err(|e| e.to_string())?;
        SeparableFilter::new(h, v, self.border.into()).map_err(|e| e.to_string())
    }
}

/// The reference: exact real-valued filter output (before rounding) at
/// every pixel, from the direct 2-D double sum on the extended image.
pub fn reference_real(
    img: &[u8],
    w: usize,
    h: usize,
    htaps: &[f64],
    vtaps: &[f64],
    border: Border,
) -> Vec<f64> {
    let (rx, ry) = (htaps.len() as i64 / 2, vtaps.len() as i64 / 2);
    let px = |x: i64, y: i64| crate::warp::px(img, w, h, 1, 0, x, y, border) as f64;
    let mut out = Vec::with_capacity(w * h);
    for y in 0..h as i64 {
        for x in 0..w as i64 {
            let mut s = 0.0;
            for (j, &vj) in vtaps.iter().enumerate() {
                for (i, &hi) in htaps.iter().enumerate() {
                    s += vj * hi * px(x + i as i64 - rx, y + j as i64 - ry);
                }
            }
            out.push(s);
        }
    }
    out
}

/// Real-valued taps of a kernel tap set: `coef / 2^shift`.
pub fn real_taps(t: &Taps) -> Vec<f64> {
    let d = (1u64 << t.shift()) as f64;
    t.coefficients().iter().map(|&c| c as f64 / d).collect()
}

/// The documented final rounding: `floor(v + 1/2)` clamped to `[lo, hi]`.
pub fn round_half_up_sat(v: f64, lo: f64, hi: f64) -> f64 {
    (v + 0.5).floor().clamp(lo, hi)
}

/// Runs the kernel over a whole frame.
pub fn run_whole<T: FilterOutput>(
    f: &SeparableFilter,
    img: &[u8],
    w: usize,
    h: usize,
) -> Result<Vec<T>, fixsight::Error> {
    let mut out = vec![T::default(); w * h];
    let mut scratch = vec![0i32; w];
    f.apply(
        &ImageView::new(img, w, h, w)?,
        &mut ImageViewMut::new(&mut out, w, h, w)?,
        &mut scratch,
    )?;
    Ok(out)
}

/// Runs the kernel row by row through a [`FilterStream`] and checks that
/// rows come out in order.
pub fn run_stream<T: FilterOutput>(
    f: &SeparableFilter,
    img: &[u8],
    w: usize,
    h: usize,
) -> Result<Vec<T>, String> {
    let mut ring = vec![0u8; FilterStream::ring_rows(f) * w];
    let mut acc = vec![0i32; w];
    let mut s = FilterStream::new(f, w, h, &mut ring, &mut acc).map_err(|e| e.to_string())?;
    let mut out = vec![T::default(); w * h];
    let mut row = vec![T::default(); w];
    let mut next = 0usize;
    let mut take = |y: Option<usize>, row: &[T]| -> Result<(), String> {
        if let Some(y) = y {
            if y != next {
                return Err(format!("stream produced row {y}, expected {next}"));
            }
            out[y * w..(y + 1) * w].copy_from_slice(row);
            next += 1;
        }
        Ok(())
    };
    for y in 0..h {
        let r = s
            .push_row(&img[y * w..(y + 1) * w], &mut row)
            .map_err(|e| e.to_string())?;
        take(r, &row)?;
    }
    loop {
        let r = s.flush_row(&mut row).map_err(|e| e.to_string())?;
        if r.is_none() {
            break;
        }
        take(r, &row)?;
    }
    if next != h {
        return Err(format!("stream produced {next} rows, expected {h}"));
    }
    Ok(out)
}

/// A preset: its kernel id (`filter.<preset function>`), constructor and
/// output type.
pub struct Preset {
    /// Kernel id, equal to the report row name.
    pub id: &'static str,
    /// The kernel crate's constructor.
    pub make: fn(Border) -> SeparableFilter,
    /// Output element type.
    pub output: OutputParam,
}

/// Every preset of `fixsight::filter`.
pub const PRESETS: [Preset; 7] = [
    Preset {
        id: "filter.binomial3",
        make: filter::binomial3,
        output: OutputParam::U8,
    },
    Preset {
        id: "filter.binomial5",
        make: filter::binomial5,
        output: OutputParam::U8,
    },
    Preset {
        id: "filter.binomial7",
        make: filter::binomial7,
        output: OutputParam::U8,
    },
    Preset {
        id: "filter.sobel_x",
        make: filter::sobel_x,
        output: OutputParam::I16,
    },
    Preset {
        id: "filter.sobel_y",
        make: filter::sobel_y,
        output: OutputParam::I16,
    },
    Preset {
        id: "filter.scharr_x",
        make: filter::scharr_x,
        output: OutputParam::I16,
    },
    Preset {
        id: "filter.scharr_y",
        make: filter::scharr_y,
        output: OutputParam::I16,
    },
];

/// Kernel id of a filter with caller-chosen taps (`filter::separable`).
pub const CUSTOM_ID: &str = "filter.separable";

/// The preset with kernel id `id`.
pub fn preset(id: &str) -> Option<&'static Preset> {
    PRESETS.iter().find(|p| p.id == id)
}

/// The custom tap sets checked under `filter.separable`: an asymmetric
/// 9 x 5 set with negative taps and shifts on both axes (`u8` and `i16`
/// output), and a 9-tap smoothed derivative with a 1-tap cross axis.
fn custom_filters(border: Border) -> Vec<(SeparableFilter, OutputParam)> {
    let odd = filter::separable(
        Taps::new(&ODD_H, 6).expect("valid taps"),
        Taps::new(&ODD_V, 3).expect("valid taps"),
        border,
    )
    .expect("fits the accumulator");
    let deriv = filter::separable(
        Taps::new(&[-1, -14, -61, -88, 0, 88, 61, 14, 1], 7).expect("valid taps"),
        Taps::new(&[1], 0).expect("valid taps"),
        border,
    )
    .expect("fits the accumulator");
    vec![
        (odd, OutputParam::U8),
        (odd, OutputParam::I16),
        (deriv, OutputParam::I16),
    ]
}

/// Horizontal taps of the asymmetric custom case (shift 6).
const ODD_H: [i16; 9] = [-3, 5, 17, 40, 17, 5, -3, 1, 2];
/// Vertical taps of the asymmetric custom case (shift 3).
const ODD_V: [i16; 5] = [2, -7, 29, -7, 2];

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
/// scenes: one row per kernel id.
pub fn check(scenes: &[Scene]) -> Vec<KernelReport> {
    let mut rows: Vec<KernelReport> = PRESETS
        .iter()
        .map(|p| check_filters(p.id, &|b| vec![((p.make)(b), p.output)], scenes))
        .collect();
    rows.push(check_filters(CUSTOM_ID, &custom_filters, scenes));
    rows
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
                let res = if si == 0 && fi == 0 && border == Border::Clamp {
                    let (r, o) = measure(s.width * s.height, || outputs(&f, output, s));
                    ops = o;
                    r
                } else {
                    outputs(&f, output, s)
                };
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
                        actual.extend(whole);
                    }
                    Err(e) => problems.push(format!("{}: kernel error: {e}", s.name)),
                }
            }
        }
    }
    // Ops were measured over both forms (whole frame then stream) on one
    // scene: halve to get the cost of one pass.
    let ops = halve(&ops);
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

/// A synthetic 0/255 checkerboard of 2x2 blocks: the worst case for
/// accumulator range and saturation.
pub fn checkerboard(w: usize, h: usize) -> Vec<u8> {
    (0..h)
        .flat_map(|y| (0..w).map(move |x| if ((x / 2) + (y / 2)) % 2 == 0 { 255 } else { 0 }))
        .collect()
}

/// Golden parameters of a preset kernel id (`filter.binomial5`, ...): the
/// taps and the output type are the preset's.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, Eq)]
#[serde(deny_unknown_fields)]
pub struct PresetParams {
    /// Border rule.
    pub border: BorderParam,
}

/// Runs `f` over a whole `w x h` frame into a `dst` blob of the output type.
fn run_blob(
    f: &SeparableFilter,
    output: OutputParam,
    img: &[u8],
    w: usize,
    h: usize,
) -> Result<Blob, String> {
    let e = |e: fixsight::Error| e.to_string();
    Ok(match output {
        OutputParam::U8 => {
            Blob::from_u8("dst", w, h, 1, &run_whole::<u8>(f, img, w, h).map_err(e)?)
        }
        OutputParam::I16 => {
            Blob::from_i16("dst", w, h, 1, &run_whole::<i16>(f, img, w, h).map_err(e)?)
        }
    })
}

/// A golden case of kernel `kernel`: a preset id (params: the border) or
/// [`CUSTOM_ID`] (params: taps, shifts, border, output).
fn case(
    id: String,
    comment: String,
    kernel: &str,
    f: &SeparableFilter,
    output: OutputParam,
    (img, w, h): (Vec<u8>, usize, usize),
) -> GoldenCase {
    let params = if kernel == CUSTOM_ID {
        serde_json::to_value(FilterParams::of(f, output))
    } else {
        serde_json::to_value(PresetParams {
            border: f.border().into(),
        })
    };
    let expected = run_blob(f, output, &img, w, h).expect("golden case sizes are valid");
    GoldenCase {
        id,
        comment,
        kernel: kernel.into(),
        params: params.expect("params serialise"),
        inputs: vec![Blob::from_u8("src", w, h, 1, &img)],
        expected: vec![expected],
    }
}

/// The id tag of a border rule: `clamp` or `fill<c>`.
fn border_tag(b: Border) -> String {
    match b {
        Border::Clamp => "clamp".to_string(),
        Border::Fill(c) => format!("fill{c}"),
    }
}

/// Golden cases: every preset with both borders on a scene crop of odd
/// size, the saturation-heavy checkerboard, images narrower than the taps,
/// and a custom asymmetric tap set with negative taps and shifts.
pub fn golden_cases(scenes: &[Scene]) -> Vec<GoldenCase> {
    let mut v = Vec::new();
    let s = &scenes[1 % scenes.len()];
    let (cw, ch) = (37, 23);
    let floor = crop(s, 140, 150, cw, ch);
    for p in &PRESETS {
        let short = p.id.split('.').nth(1).unwrap_or(p.id);
        for border in [Border::Clamp, Border::Fill(17), Border::Fill(255)] {
            let b = border_tag(border);
            let (img, comment) = if border == Border::Fill(255) {
                (
                    (checkerboard(16, 12), 16, 12),
                    format!("{short} on a 0/255 checkerboard (extreme accumulator values) with fill value 255"),
                )
            } else {
                (
                    (floor.clone(), cw, ch),
                    format!(
                        "{short} on a {cw}x{ch} crop of scene {} with border {b}",
                        s.name
                    ),
                )
            };
            let place = if border == Border::Fill(255) {
                "checker"
            } else {
                "floor"
            };
            v.push(case(
                format!("{}.{b}.{place}", p.id),
                comment,
                p.id,
                &(p.make)(border),
                p.output,
                img,
            ));
        }
    }
    v.push(case(
        "filter.binomial7.clamp.narrow".into(),
        "7 taps on a 2x3 image: every pixel is a border pixel".into(),
        "filter.binomial7",
        &filter::binomial7(Border::Clamp),
        OutputParam::U8,
        (vec![0, 255, 40, 90, 200, 7], 2, 3),
    ));
    let odd = custom_filters(Border::Fill(200))[0].0;
    v.push(case(
        "filter.separable.custom9x5.fill200.floor".into(),
        "asymmetric 9x5 taps with negative coefficients: rounding of negative sums and saturation to 0..255".into(),
        CUSTOM_ID,
        &odd,
        OutputParam::U8,
        (floor.clone(), cw, ch),
    ));
    v.push(case(
        "filter.separable.custom9x5.fill200.derivative".into(),
        "the same taps with i16 output".into(),
        CUSTOM_ID,
        &odd,
        OutputParam::I16,
        (floor, cw, ch),
    ));
    v.push(case(
        "filter.sobel_x.fill9.single".into(),
        "a 1x1 image: only the fill value and the pixel contribute".into(),
        "filter.sobel_x",
        &filter::sobel_x(Border::Fill(9)),
        OutputParam::I16,
        (vec![200], 1, 1),
    ));
    v
}

/// Recomputes a `filter.*` vector: a preset id or `filter.separable`.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    let (f, output) = if kernel == CUSTOM_ID {
        let p: FilterParams = parse_params(kernel, params)?;
        (p.build()?, p.output)
    } else {
        let pr = preset(kernel).ok_or_else(|| format!("unknown filter kernel `{kernel}`"))?;
        let p: PresetParams = parse_params(kernel, params)?;
        ((pr.make)(p.border.into()), pr.output)
    };
    let src = input(inputs, "src")?;
    Ok(vec![run_blob(
        &f,
        output,
        &src.to_u8()?,
        src.width,
        src.height,
    )?])
}
