//! Golden cases, params and vector recomputation of the `warp.*` kernel
//! ids.

use super::check::to_three_channels;
use super::grid::build_grid;
use super::reference::{exact_map, pixel_map_coords};
use super::run::{run_grid, run_grid_stream, run_pixel_map};
use crate::border::BorderParam;
use crate::family::{input, parse_params};
use crate::golden::{Blob, GoldenCase};
use crate::lens::{Camera, Intrinsics, LensModel};
use crate::scene::Scene;
use fixsight::filter::Border;
use fixsight::warp::{ControlGrid, WarpGeometry};
use serde::{Deserialize, Serialize};

/// Golden parameters of `warp.pixel_map`.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, Eq)]
#[serde(deny_unknown_fields)]
pub struct PixelMapParams {
    /// Fractional bits.
    pub frac_bits: u32,
    /// Border rule.
    pub border: BorderParam,
}

/// Golden parameters of `warp.control_grid` and `warp.grid_stream` (the
/// grid itself is the `blob` input).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, Eq)]
#[serde(deny_unknown_fields)]
pub struct GridParams {
    /// Border rule.
    pub border: BorderParam,
    /// Rows per strip the output is produced in.
    pub strip_rows: usize,
}

fn small_camera(w: usize, h: usize, lens: LensModel) -> Camera {
    Camera {
        intrinsics: Intrinsics {
            fx: 0.45 * w as f64,
            fy: 0.45 * w as f64,
            cx: (w as f64 - 1.0) / 2.0,
            cy: (h as f64 - 1.0) / 2.0,
        },
        lens,
    }
}

#[allow(clippy::too_many_arguments)]
fn pixel_map_case(
    id: &str,
    comment: &str,
    img: Vec<u8>,
    (sw, sh, c): (usize, usize, usize),
    coords: Vec<i32>,
    (ow, oh): (usize, usize),
    f: u32,
    border: Border,
) -> GoldenCase {
    let geom = WarpGeometry::new(ow, oh, sw, sh, f).expect("golden geometry is valid");
    let out = run_pixel_map(&coords, geom, &img, c, border).expect("golden map is valid");
    GoldenCase {
        row_pad: None,
        id: id.into(),
        comment: comment.into(),
        kernel: "warp.pixel_map".into(),
        params: serde_json::to_value(PixelMapParams {
            frac_bits: f,
            border: border.into(),
        })
        .expect("params serialise"),
        inputs: vec![
            Blob::from_u8("src", sw, sh, c, &img),
            Blob::from_i32("map", ow, oh, 2, &coords),
        ],
        expected: vec![Blob::from_u8("dst", ow, oh, c, &out)],
    }
}

fn grid_blob(points: &[i32], geom: WarpGeometry, k: u32) -> Vec<u8> {
    let m = ControlGrid::new(points, geom, k).expect("golden grid is valid");
    let mut blob = vec![0u8; m.blob_len()];
    m.write_blob(&mut blob)
        .expect("blob buffer is large enough");
    blob
}

#[allow(clippy::too_many_arguments)]
fn grid_case(
    kernel: &str,
    id: &str,
    comment: &str,
    img: Vec<u8>,
    c: usize,
    blob: Vec<u8>,
    border: Border,
    strip_rows: usize,
) -> GoldenCase {
    let m = ControlGrid::from_blob(&blob).expect("golden blob parses");
    let g = m.geometry();
    let out = if kernel == "warp.grid_stream" {
        run_grid_stream(&m, &img, c, border, strip_rows)
    } else {
        run_grid(&m, &img, c, border, Some(strip_rows))
    }
    .expect("golden grid runs");
    GoldenCase {
        row_pad: None,
        id: id.into(),
        comment: comment.into(),
        kernel: kernel.into(),
        params: serde_json::to_value(GridParams {
            border: border.into(),
            strip_rows,
        })
        .expect("params serialise"),
        inputs: vec![
            Blob::from_u8("src", g.src_width(), g.src_height(), c, &img),
            Blob::from_u8("blob", blob.len(), 1, 1, &blob),
        ],
        expected: vec![Blob::from_u8("dst", g.out_width(), g.out_height(), c, &out)],
    }
}

/// Golden cases: pixel maps at 2, 5 and 10 fractional bits with both
/// borders, an RGB case, a map reaching the edges of the accepted range,
/// and control grids at steps 4, 16 and 32 (partial last cells, strips, RGB),
/// all on a crop of a demo scene undistorted by a small barrel lens.
pub fn golden_cases(scenes: &[Scene]) -> Vec<GoldenCase> {
    let s = &scenes[0];
    let (sw, sh) = (48usize, 36usize);
    let img = crate::golden::crop(s, 136, 150, sw, sh);
    let rgb = to_three_channels(&img);
    let cam = small_camera(
        sw,
        sh,
        LensModel::BrownConrady {
            k1: -0.25,
            k2: 0.06,
            k3: 0.0,
            p1: 0.001,
            p2: -0.0007,
        },
    );
    let (ow, oh) = (41usize, 30usize);
    let view = cam
        .fit_view(ow, oh, sw, sh)
        .expect("the golden lens fits its view");
    let exact = exact_map(&cam, &view, ow, oh);
    let mut v = Vec::new();
    for (f, border, tag) in [
        (2, Border::Clamp, "f2.clamp"),
        (5, Border::Fill(0), "f5.fill0"),
        (10, Border::Clamp, "f10.clamp"),
    ] {
        v.push(pixel_map_case(
            &format!("warp.pixel_map.{tag}"),
            &format!("{ow}x{oh} undistortion of a {sw}x{sh} floor crop, F = {f}"),
            img.clone(),
            (sw, sh, 1),
            pixel_map_coords(&exact, f),
            (ow, oh),
            f,
            border,
        ));
    }
    v.push(pixel_map_case(
        "warp.pixel_map.f6.rgb.fill90",
        "three interleaved channels sharing the weights, F = 6, border 90",
        rgb.clone(),
        (sw, sh, 3),
        pixel_map_coords(&exact, 6),
        (ow, oh),
        6,
        Border::Fill(90),
    ));
    // A map spreading over the whole accepted range (-W..2W-1), including
    // its two extremes, to exercise the border rule far outside.
    let f = 4;
    let g = WarpGeometry::new(16, 12, sw, sh, f).expect("valid");
    let (xl, xh) = g.coord_range_x();
    let (yl, yh) = g.coord_range_y();
    let far: Vec<i32> = (0..16 * 12)
        .flat_map(|p| {
            let t = p as i64;
            [
                (xl as i64 + (t * 7919) % (xh as i64 - xl as i64 + 1)) as i32,
                (yl as i64 + (t * 104_729) % (yh as i64 - yl as i64 + 1)) as i32,
            ]
        })
        .enumerate()
        .map(|(i, v)| match i {
            0 => xl,
            1 => yl,
            2 => xh,
            3 => yh,
            _ => v,
        })
        .collect();
    for (border, tag) in [(Border::Fill(255), "fill255"), (Border::Clamp, "clamp")] {
        v.push(pixel_map_case(
            &format!("warp.pixel_map.far.{tag}"),
            "coordinates scattered over the accepted range, extremes included",
            img.clone(),
            (sw, sh, 1),
            far.clone(),
            (16, 12),
            f,
            border,
        ));
    }
    for (k, f, c, border, strip, tag) in [
        (2, 5, 1, Border::Fill(0), 30, "k2.f5.fill0"),
        (4, 8, 3, Border::Clamp, 7, "k4.f8.rgb.clamp"),
        (5, 10, 1, Border::Clamp, 1, "k5.f10.clamp"),
    ] {
        let geom = WarpGeometry::new(ow, oh, sw, sh, f).expect("valid");
        let mb = build_grid(&cam, &view, geom, k).expect("golden grid builds");
        v.push(grid_case(
            "warp.control_grid",
            &format!("warp.control_grid.{tag}"),
            &format!(
                "grid step {} ({}x{} points) from a blob, F = {f}, {c} channel(s), strips of {strip} rows",
                1 << k,
                mb.grid.0,
                mb.grid.1
            ),
            if c == 3 { rgb.clone() } else { img.clone() },
            c,
            grid_blob(&mb.points, geom, k),
            border,
            strip,
        ));
    }
    // The row stream: source rows pushed one at a time into a ring of
    // `band_rows(strip)` rows; same bytes as the whole-frame grid.
    for (k, f, c, border, strip, tag) in [
        (4, 5, 1, Border::Clamp, 1, "k4.f5.strip1.clamp"),
        (3, 7, 3, Border::Fill(40), 6, "k3.f7.rgb.strip6.fill40"),
    ] {
        let geom = WarpGeometry::new(ow, oh, sw, sh, f).expect("valid");
        let mb = build_grid(&cam, &view, geom, k).expect("golden grid builds");
        let blob = grid_blob(&mb.points, geom, k);
        let band = ControlGrid::from_blob(&blob)
            .and_then(|m| m.band_rows(strip))
            .expect("golden grid has a band");
        v.push(grid_case(
            "warp.grid_stream",
            &format!("warp.grid_stream.{tag}"),
            &format!(
                "row stream, grid step {} from a blob, F = {f}, {c} channel(s), strips of {strip} \
                 rows, ring of {band} source rows",
                1 << k
            ),
            if c == 3 { rgb.clone() } else { img.clone() },
            c,
            blob,
            border,
            strip,
        ));
    }
    v
}

/// Recomputes a `warp.pixel_map`, `warp.control_grid` or `warp.grid_stream` vector.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    let src = input(inputs, "src")?;
    let img = src.to_u8()?;
    let c = src.channels;
    let e = |e: fixsight::Error| e.to_string();
    match kernel {
        "warp.pixel_map" => {
            let p: PixelMapParams = parse_params(kernel, params)?;
            let map = input(inputs, "map")?;
            if map.channels != 2 {
                return Err(format!("map has {} channels, expected 2", map.channels));
            }
            let geom = WarpGeometry::new(map.width, map.height, src.width, src.height, p.frac_bits)
                .map_err(e)?;
            let out = run_pixel_map(&map.to_i32()?, geom, &img, c, p.border.into()).map_err(e)?;
            Ok(vec![Blob::from_u8("dst", map.width, map.height, c, &out)])
        }
        "warp.control_grid" | "warp.grid_stream" => {
            let p: GridParams = parse_params(kernel, params)?;
            let blob = input(inputs, "blob")?.to_u8()?;
            let m = ControlGrid::from_blob(&blob).map_err(e)?;
            let g = m.geometry();
            // The output size comes from the blob header: bound it before
            // the output is allocated.
            crate::golden::image_len(crate::golden::Elem::U8, g.out_width(), g.out_height(), c)
                .filter(|&n| n as u64 <= crate::files::MAX_IMAGE_BYTES)
                .ok_or_else(|| {
                    format!(
                        "the blob's {}x{} output with {c} channel(s) is larger than the {} bytes \
                         allowed per image",
                        g.out_width(),
                        g.out_height(),
                        crate::files::MAX_IMAGE_BYTES
                    )
                })?;
            let out = if kernel == "warp.grid_stream" {
                run_grid_stream(&m, &img, c, p.border.into(), p.strip_rows)
            } else {
                run_grid(&m, &img, c, p.border.into(), Some(p.strip_rows))
            }
            .map_err(e)?;
            Ok(vec![Blob::from_u8(
                "dst",
                g.out_width(),
                g.out_height(),
                c,
                &out,
            )])
        }
        _ => Err(format!("unknown warp kernel `{kernel}`")),
    }
}
