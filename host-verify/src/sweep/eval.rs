//! The sweep's runs: each kernel at each value on each input, against its
//! `f64` reference (rules in the module docs of [`crate::sweep`]).

use super::{Row, SweepParam};
use crate::edge_chain as canny;
use crate::filter::reference::reference_real;
use crate::filter::run::run_whole;
use crate::lens::{Camera, Intrinsics, LensInUse};
use crate::lines::{hough_f64, run_vote, EdgeInput};
use crate::scene::{demo_camera, Scene};
use crate::warp::check::{demo_view, scenes_through, CHECK_FRAC_BITS, CHECK_GRID_LOG2};
use crate::warp::grid::build_grid;
use crate::warp::reference::{bilinear_f64, exact_map, neighbour_diffs, pixel_map_coords};
use crate::warp::run::{run_grid, run_pixel_map};
use fixsight::filter::{self, Border, Taps};
use fixsight::lines::{cos_sin, PeakParams, VoteParams, UNITS_360};
use fixsight::warp::{ControlGrid, WarpGeometry};
use std::f64::consts::PI;

/// A grey input image with the camera that took it and the corrected view
/// the warp kernels produce.
///
/// ```
/// use fixsight_verify::{cmd::run::Grey, lens::LensInUse, sweep::eval::user_image};
/// let g = Grey { w: 40, h: 30, px: vec![128; 1200] };
/// let img = user_image("flat", g, &LensInUse::demo().unwrap()).unwrap();
/// assert_eq!((img.w, img.h, img.view.cx), (40, 30, 19.5));
/// ```
#[derive(Debug, Clone)]
pub struct Image {
    /// Name in the table (scene name or file stem).
    pub name: String,
    /// Width.
    pub w: usize,
    /// Height.
    pub h: usize,
    /// Pixels, row-major.
    pub px: Vec<u8>,
    /// Sensor camera.
    pub camera: Camera,
    /// Corrected view (same size as the image).
    pub view: Intrinsics,
}

/// The demo scenes as `lens` sees them (the warp family's rule,
/// [`scenes_through`]), with their corrected views.
///
/// ```
/// use fixsight_verify::{lens::LensInUse, scene, sweep::eval::scene_images};
/// let scenes = vec![scene::render(&scene::DEMO_SPECS[0], 64, 48)];
/// let imgs = scene_images(&scenes, &LensInUse::demo().unwrap()).unwrap();
/// assert_eq!((imgs[0].name.as_str(), imgs[0].w), (scene::DEMO_SPECS[0].name, 64));
/// ```
pub fn scene_images(scenes: &[Scene], lens: &LensInUse) -> Result<Vec<Image>, String> {
    scenes_through(scenes, lens)?
        .into_iter()
        .map(|s| {
            let view = if lens.is_demo() {
                demo_view(&s)?
            } else {
                lens.view
            };
            Ok(Image {
                name: s.name.to_string(),
                w: s.width,
                h: s.height,
                px: s.gray,
                camera: s.camera,
                view,
            })
        })
        .collect()
}

/// A user image taken through `lens`: the demo lens scaled to the image
/// (its fit-to-view corrected view), or a lens file, whose size the image
/// must have (see [`Image`] for an example).
pub fn user_image(name: &str, g: crate::cmd::run::Grey, lens: &LensInUse) -> Result<Image, String> {
    let (camera, view) = if lens.is_demo() {
        let cam = demo_camera(g.w, g.h);
        let view = cam
            .fit_view(g.w, g.h, g.w, g.h)
            .map_err(|e| format!("{name}: the demo lens at {}x{}: {e}", g.w, g.h))?;
        (cam, view)
    } else {
        if (g.w, g.h) != LensInUse::SIZE {
            return Err(format!(
                "{name} is {}x{}; the {} is for {}x{} images",
                g.w,
                g.h,
                lens.describe(),
                LensInUse::SIZE.0,
                LensInUse::SIZE.1
            ));
        }
        (lens.camera, lens.view)
    };
    Ok(Image {
        name: name.to_string(),
        w: g.w,
        h: g.h,
        px: g.px,
        camera,
        view,
    })
}

/// Standard deviation of the Gaussian swept under `filter.separable`, px.
///
/// ```
/// use fixsight_verify::sweep::eval::{RADIUS, SIGMA};
/// assert_eq!(RADIUS as f64, 3.0 * SIGMA);
/// ```
pub const SIGMA: f64 = 1.0;
/// Radius of its tap sets (7 taps, `3 sigma`).
///
/// ```
/// assert_eq!(fixsight_verify::sweep::eval::gaussian_taps(6).0.len(), 2 * fixsight_verify::sweep::eval::RADIUS + 1);
/// ```
pub const RADIUS: usize = 3;

/// The Gaussian's real taps `g` (sampled at integer offsets, normalised to
/// sum 1) and the kernel's taps `q` at `bits` fractional bits: every tap
/// rounded half up, `floor(g 2^bits + 1/2)`, then the centre tap takes the
/// remainder so that the taps sum to `2^bits` exactly (unity gain on a flat
/// image; common practice, no source).
///
/// ```
/// use fixsight_verify::sweep::eval::gaussian_taps;
/// let (q, g) = gaussian_taps(8);
/// assert_eq!(q.iter().map(|&c| c as i32).sum::<i32>(), 256);
/// assert_eq!(q, [1, 14, 62, 102, 62, 14, 1]);
/// assert!((g.iter().sum::<f64>() - 1.0).abs() < 1e-12);
/// ```
pub fn gaussian_taps(bits: u32) -> (Vec<i16>, Vec<f64>) {
    let raw: Vec<f64> = (0..=2 * RADIUS)
        .map(|i| {
            let d = i as f64 - RADIUS as f64;
            (-d * d / (2.0 * SIGMA * SIGMA)).exp()
        })
        .collect();
    let total: f64 = raw.iter().sum();
    let g: Vec<f64> = raw.iter().map(|v| v / total).collect();
    let one = (1i64 << bits) as f64;
    let mut q: Vec<i64> = g.iter().map(|v| (v * one + 0.5).floor() as i64).collect();
    let rest = (1i64 << bits) - q.iter().sum::<i64>();
    q[RADIUS] += rest;
    // At most 2^16 (bits <= 16, the kernel's shift limit): fits i16 once
    // the centre, at most 0.4 of the sum, has taken the remainder.
    (q.iter().map(|&c| c as i16).collect(), g)
}

/// The separable filter of `filter.separable` at `bits`, or the kernel's
/// refusal.
///
/// ```
/// use fixsight_verify::sweep::eval::gaussian_filter;
/// assert_eq!(gaussian_filter(11).unwrap().shift(), 22);
/// assert!(gaussian_filter(12).is_err()); // 255 * 4096^2 does not fit i32
/// ```
pub fn gaussian_filter(bits: u32) -> Result<filter::SeparableFilter, fixsight::Error> {
    let (q, _) = gaussian_taps(bits);
    let t = Taps::new(&q, bits)?;
    filter::separable(t, t, Border::Clamp)
}

/// Checks every value against the kernel's own constructor before any run
/// (the filter's accumulator limit is the only one not known as a range).
///
/// ```
/// use fixsight_verify::sweep::{eval::check_values, find};
/// let p = find("filter.separable", None).unwrap();
/// assert!(check_values(p, &[2, 11]).is_ok());
/// assert!(check_values(p, &[12]).unwrap_err().contains("coeff_bits 12"));
/// ```
pub fn check_values(p: &SweepParam, values: &[u32]) -> Result<(), String> {
    if p.kernel == "filter.separable" {
        for &b in values {
            gaussian_filter(b)
                .map_err(|e| format!("--values: the kernel refuses coeff_bits {b}: {e}"))?;
        }
    }
    Ok(())
}

/// Runs the sweep: rows by input, then by value.
///
/// ```
/// use fixsight_verify::sweep::{eval, find};
/// let p = find("lines.cos_sin", None).unwrap();
/// let rows = eval::run(p, &[8], &[]).unwrap();
/// assert!(rows[0].max_abs <= rows[0].bound.unwrap());
/// ```
pub fn run(p: &SweepParam, values: &[u32], images: &[Image]) -> Result<Vec<Row>, String> {
    match (p.kernel, p.param) {
        ("lines.cos_sin", _) => Ok(values.iter().map(|&q| trig_row(q)).collect()),
        _ => {
            let mut rows = Vec::new();
            let bar = crate::progress::bar(images.len() as u64, "sweeping images");
            for img in images {
                bar.set_message(img.name.clone());
                let r = match p.kernel {
                    "warp.pixel_map" | "warp.control_grid" => warp_rows(p, values, img),
                    "filter.separable" => filter_rows(values, img),
                    "lines.accumulator" => vote_rows(values, img),
                    other => Err(format!("no sweep for {other}")),
                };
                rows.extend(r.map_err(|e| format!("{}: {e}", img.name))?);
                bar.inc(1);
            }
            bar.finish_and_clear();
            Ok(rows)
        }
    }
}

/// Largest coordinate error per axis and Euclidean, px, of the integer
/// coordinates `coord(p)` (`F` fractional bits) against the exact map.
fn coord_errors(
    exact: &[(f64, f64)],
    f: u32,
    coord: impl Fn(usize) -> Option<(i32, i32)>,
) -> Result<(f64, f64, f64), String> {
    let scale = 1.0 / (1u64 << f) as f64;
    let (mut ex, mut ey, mut ed) = (0f64, 0f64, 0f64);
    for (p, &(x, y)) in exact.iter().enumerate() {
        let (cx, cy) = coord(p).ok_or("a pixel outside the grid")?;
        let (dx, dy) = (cx as f64 * scale - x, cy as f64 * scale - y);
        ex = ex.max(dx.abs());
        ey = ey.max(dy.abs());
        ed = ed.max(dx.hypot(dy));
    }
    Ok((ex, ey, ed))
}

fn warp_rows(p: &SweepParam, values: &[u32], img: &Image) -> Result<Vec<Row>, String> {
    let (w, h) = (img.w, img.h);
    let border = Border::Fill(0);
    let exact = exact_map(&img.camera, &img.view, w, h);
    let reference: Vec<f64> = exact
        .iter()
        .map(|&(x, y)| bilinear_f64(&img.px, w, h, 1, 0, x, y, border))
        .collect();
    let (dx, dy) = neighbour_diffs(&img.px, w, h, 1, border);
    let e = |e: fixsight::Error| e.to_string();
    let mut rows = Vec::new();
    for &v in values {
        let (f, k) = match (p.kernel, p.param) {
            ("warp.control_grid", "grid_log2") => (CHECK_FRAC_BITS, Some(v)),
            ("warp.control_grid", _) => (v, Some(CHECK_GRID_LOG2)),
            _ => (v, None),
        };
        let geom = WarpGeometry::new(w, h, w, h, f).map_err(e)?;
        let (out, (ex, ey, ed), bytes) = match k {
            None => {
                let coords = pixel_map_coords(&exact, f);
                let out = run_pixel_map(&coords, geom, &img.px, 1, border).map_err(e)?;
                let errs = coord_errors(&exact, f, |p| Some((coords[2 * p], coords[2 * p + 1])))?;
                // The contract's coordinate error: the rounding, 2^-(F+1).
                let q = 1.0 / (1u64 << (f + 1)) as f64;
                (out, (q, q, errs.2), 8 * w * h)
            }
            Some(k) => {
                let mb = build_grid(&img.camera, &img.view, geom, k)?;
                let table = ControlGrid::new(&mb.points, geom, k).map_err(e)?;
                let out = run_grid(&table, &img.px, 1, border, None).map_err(e)?;
                let errs = coord_errors(&exact, f, |p| table.coord(p % w, p / w))?;
                (out, errs, mb.table_bytes)
            }
        };
        let mut r = Row::from_errors(
            &img.name,
            v,
            out.iter().zip(&reference).map(|(&a, &r)| a as f64 - r),
            Some(0.5 + dx * ex + dy * ey),
        );
        r.extra.insert("geo_max_px".into(), ed);
        r.extra.insert("table_bytes".into(), bytes as f64);
        rows.push(r);
    }
    Ok(rows)
}

fn filter_rows(values: &[u32], img: &Image) -> Result<Vec<Row>, String> {
    let (_, g) = gaussian_taps(0);
    let reference = reference_real(&img.px, img.w, img.h, &g, &g, Border::Clamp);
    let mut rows = Vec::new();
    for &b in values {
        let f = gaussian_filter(b).map_err(|e| e.to_string())?;
        let out = run_whole::<u8>(&f, &img.px, img.w, img.h).map_err(|e| e.to_string())?;
        let (q, _) = gaussian_taps(b);
        let one = (1u64 << b) as f64;
        let mut diff = 0f64;
        for (qi, gi) in q.iter().zip(&g) {
            for (qj, gj) in q.iter().zip(&g) {
                diff += (*qi as f64 * *qj as f64 / (one * one) - gi * gj).abs();
            }
        }
        rows.push(Row::from_errors(
            &img.name,
            b,
            out.iter().zip(&reference).map(|(&a, &r)| a as f64 - r),
            Some(0.5 + 127.5 * diff),
        ));
    }
    Ok(rows)
}

/// `lines.cos_sin` at `q` over every binary angle.
fn trig_row(q: u32) -> Row {
    let sc = 2f64.powi(q as i32);
    let errs = (0..UNITS_360).flat_map(|a| {
        let (c, s) = cos_sin(a, q);
        let th = a as f64 / UNITS_360 as f64 * 2.0 * PI;
        [c as f64 - th.cos() * sc, s as f64 - th.sin() * sc]
    });
    let mut r = Row::from_errors(
        "binary angles",
        q,
        errs,
        Some(0.5 + 2f64.powi(q as i32 - 22)),
    );
    r.extra.insert("max_err_of_one".into(), r.max_abs / sc);
    r
}

/// The demo vote settings at `w x h`: rows of 2 px out to the half
/// diagonal (201 rows at 320 x 240, as `VoteParams::DEMO_QVGA`).
fn vote_params(w: usize, h: usize, q: u32) -> VoteParams {
    let d = VoteParams::DEMO_QVGA;
    let row_px = (1u32 << d.rho_step_log2) as f64 / 16.0;
    let half = ((w - (w >> 1)) as f64).hypot((h - (h >> 1)) as f64);
    VoteParams {
        width: w,
        height: h,
        rho_bins: 2 * (half / row_px).ceil() as usize + 1,
        trig_frac_bits: q,
        ..d
    }
}

fn vote_rows(values: &[u32], img: &Image) -> Result<Vec<Row>, String> {
    let (w, h) = (img.w, img.h);
    let c = canny::run_chain(&img.px, w, h, &canny::DEMO)?;
    let (ox, oy) = ((w >> 1) as f64, (h >> 1) as f64);
    // The kernel's own integer gradient angle gates both runs.
    let points: Vec<(f64, f64, f64)> = (0..w * h)
        .filter(|&i| c.thin[i] != 0)
        .map(|i| {
            (
                (i % w) as f64 - ox,
                (i / w) as f64 - oy,
                fixsight::gradient::angle(c.gx[i], c.gy[i]) as f64,
            )
        })
        .collect();
    let inp = EdgeInput {
        w,
        h,
        edges: &c.thin,
        gx: &c.gx,
        gy: &c.gy,
        weights: &[],
    };
    // The f64 transform does not depend on the table's bits.
    let reference = hough_f64(&vote_params(w, h, 14), &points);
    let mut rows = Vec::new();
    for &q in values {
        let p = vote_params(w, h, q);
        let run = run_vote(&p, &inp, None, &PeakParams::DEMO, 1).map_err(|e| e.to_string())?;
        let mut r = Row::from_errors(
            &img.name,
            q,
            run.cells
                .iter()
                .zip(&reference)
                .map(|(&a, &r)| a as f64 - r),
            None,
        );
        r.extra.insert("edge_points".into(), run.points as f64);
        rows.push(r);
    }
    Ok(rows)
}
