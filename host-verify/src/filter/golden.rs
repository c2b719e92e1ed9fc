//! Golden cases and vector recomputation of the `filter.*` kernel ids.

use super::run::{run_stream, run_whole};
use super::{custom_filters, preset, OutputParam, CUSTOM_ID, PRESETS, STREAM_ID};
use crate::border::BorderParam;
use crate::family::{input, parse_params};
use crate::golden::{crop, Blob, GoldenCase};
use crate::scene::Scene;
use fixsight::filter::{self, Border, SeparableFilter, Taps};
use serde::{Deserialize, Serialize};

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
    let params = if kernel == CUSTOM_ID || kernel == STREAM_ID {
        serde_json::to_value(FilterParams::of(f, output))
    } else {
        serde_json::to_value(PresetParams {
            border: f.border().into(),
        })
    };
    let expected = if kernel == STREAM_ID {
        let (p, i) = (
            FilterParams::of(f, output),
            Blob::from_u8("src", w, h, 1, &img),
        );
        let p = serde_json::to_value(p).expect("params serialise");
        run_vector(kernel, &p, &[i])
            .expect("golden case sizes are valid")
            .remove(0)
    } else {
        run_blob(f, output, &img, w, h).expect("golden case sizes are valid")
    };
    GoldenCase {
        row_pad: None,
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

/// A synthetic 0/255 checkerboard of 2x2 blocks: the worst case for
/// accumulator range and saturation.
pub fn checkerboard(w: usize, h: usize) -> Vec<u8> {
    (0..h)
        .flat_map(|y| (0..w).map(move |x| if ((x / 2) + (y / 2)) % 2 == 0 { 255 } else { 0 }))
        .collect()
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
    for (tag, g) in crate::edge_chain::wide_crops(scenes) {
        v.extend(crop_cases(tag, &g));
        if tag == "wide317" {
            v.push(case(
                format!("{STREAM_ID}.binomial5.clamp.{tag}"),
                format!(
                    "binomial5 taps through the row stream (5-row ring) on {}",
                    g.at
                ),
                STREAM_ID,
                &filter::binomial5(Border::Clamp),
                OutputParam::U8,
                (g.img.clone(), g.w, g.h),
            ));
        }
    }
    v.push(case(
        format!("{STREAM_ID}.custom9x5.fill200.floor"),
        format!(
            "asymmetric 9x5 taps through the row stream on the {cw}x{ch} crop: the 5-row ring wraps \
             four times, the last 2 rows come out of the flush"
        ),
        STREAM_ID,
        &custom_filters(Border::Fill(200))[0].0,
        OutputParam::U8,
        (floor.clone(), cw, ch),
    ));
    v.push(case(
        format!("{STREAM_ID}.sobel_y.fill17.floor"),
        format!("Sobel y taps through the row stream, i16 rows, on the {cw}x{ch} crop"),
        STREAM_ID,
        &filter::sobel_y(Border::Fill(17)),
        OutputParam::I16,
        (floor.clone(), cw, ch),
    ));
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

/// Every preset with the clamped border on one crop (the long-row vectors,
/// `golden extra`), ids `<kernel id>.clamp.<tag>`.
pub fn crop_cases(tag: &str, g: &crate::edge_chain::GoldenCrop) -> Vec<GoldenCase> {
    PRESETS
        .iter()
        .map(|p| {
            case(
                format!("{}.clamp.{tag}", p.id),
                format!("{} on {}", p.id, g.at),
                p.id,
                &(p.make)(Border::Clamp),
                p.output,
                (g.img.clone(), g.w, g.h),
            )
        })
        .collect()
}

/// The filter and output type of a `filter.*` vector's kernel id and params:
/// a preset id (params: the border) or `filter.separable` and
/// `filter.filter_stream` (params: [`FilterParams`]).
pub fn filter_of(
    kernel: &str,
    params: &serde_json::Value,
) -> Result<(SeparableFilter, OutputParam), String> {
    if kernel == CUSTOM_ID || kernel == STREAM_ID {
        let p: FilterParams = parse_params(kernel, params)?;
        Ok((p.build()?, p.output))
    } else {
        let pr = preset(kernel).ok_or_else(|| format!("unknown filter kernel `{kernel}`"))?;
        let p: PresetParams = parse_params(kernel, params)?;
        Ok(((pr.make)(p.border.into()), pr.output))
    }
}

/// Recomputes a `filter.*` vector: a preset id or `filter.separable`
/// (whole frame), or `filter.filter_stream` (the same filter through a
/// [`fixsight::filter::FilterStream`], row by row).
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    let (f, output) = filter_of(kernel, params)?;
    let src = input(inputs, "src")?;
    if kernel == STREAM_ID {
        let (img, w, h) = (src.to_u8()?, src.width, src.height);
        return Ok(vec![match output {
            OutputParam::U8 => Blob::from_u8("dst", w, h, 1, &run_stream::<u8>(&f, &img, w, h)?),
            OutputParam::I16 => Blob::from_i16("dst", w, h, 1, &run_stream::<i16>(&f, &img, w, h)?),
        }]);
    }
    Ok(vec![run_blob(
        &f,
        output,
        &src.to_u8()?,
        src.width,
        src.height,
    )?])
}
