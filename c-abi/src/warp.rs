//! `fxs_warp_*`: bilinear lens-undistortion warp driven by a pixel map or a
//! control grid (kernel ids `warp.pixel_map`, `warp.control_grid`), a strip
//! of output rows at a time, over `fixsight::warp`.

use crate::boundary::{
    border, buf, disjoint, image, load, size, storage, store, Checked, FxsU8View, FxsU8ViewMut,
    Span,
};
use crate::status::{finish, kernel, FxsStatus};
use fixsight::warp::{ControlGrid, PixelMap, WarpGeometry};

/// `fxs_warp_geometry`: output and source sizes and fractional bits.
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct FxsWarpGeometry {
    /// Output width.
    pub out_width: i32,
    /// Output height.
    pub out_height: i32,
    /// Source width.
    pub src_width: i32,
    /// Source height.
    pub src_height: i32,
    /// Fractional bits `F` of every coordinate, `2..=10`.
    pub frac_bits: i32,
}

/// The kernel geometry of a C one.
///
/// # Safety
/// `g` is NULL or points to a readable `fxs_warp_geometry`.
unsafe fn geometry(g: *const FxsWarpGeometry) -> Checked<WarpGeometry> {
    // SAFETY: forwarded to the caller; the checks come first.
    let g = unsafe { buf(g, 1, false)?.slice()[0] };
    kernel(WarpGeometry::new(
        size(g.out_width)?,
        size(g.out_height)?,
        size(g.src_width)?,
        size(g.src_height)?,
        size(g.frac_bits)? as u32,
    ))
}

/// A pixel map and the coordinates it borrows.
pub(crate) struct MapObj {
    map: PixelMap<'static>,
    borrowed: Span,
}

crate::boundary::object_storage!(
    /// `fxs_pixel_map`: storage for a checked pixel map.
    FxsPixelMap for MapObj, tag 0x4658_5731,
    FXS_PIXEL_MAP_SIZE = (FXS_PIXEL_MAP_SIZE_32: 48, FXS_PIXEL_MAP_SIZE_64: 88)
);

/// A control grid and the points or blob it borrows.
pub(crate) struct GridObj {
    grid: ControlGrid<'static>,
    borrowed: Span,
}

impl GridObj {
    /// The checked grid.
    pub(crate) fn grid(&self) -> &ControlGrid<'static> {
        &self.grid
    }

    /// The points or blob the grid borrows.
    pub(crate) fn borrowed(&self) -> Span {
        self.borrowed
    }
}

crate::boundary::object_storage!(
    /// `fxs_control_grid`: storage for a checked control grid.
    FxsControlGrid for GridObj, tag 0x4658_5732,
    FXS_CONTROL_GRID_SIZE = (FXS_CONTROL_GRID_SIZE_32: 64, FXS_CONTROL_GRID_SIZE_64: 120)
);

/// `fxs_warp_pixel_map_init`: checks every coordinate pair of `coords`
/// (`2 * out_width * out_height` raw `int32_t`, x then y) once.
///
/// # Safety
/// `map` writable storage; `geom` readable; `coords` `coords_len` readable
/// `int32_t` that stay valid and unchanged while the map is used.
#[no_mangle]
pub unsafe extern "C" fn fxs_warp_pixel_map_init(
    map: *mut FxsPixelMap,
    coords: *const i32,
    coords_len: usize,
    geom: *const FxsWarpGeometry,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { pixel_map_init(map, coords, coords_len, geom) })
}

/// The checks and work of `fxs_warp_pixel_map_init`.
///
/// # Safety
/// As `fxs_warp_pixel_map_init`.
unsafe fn pixel_map_init(
    map: *mut FxsPixelMap,
    coords: *const i32,
    coords_len: usize,
    geom: *const FxsWarpGeometry,
) -> Checked<()> {
    let own = storage::<MapObj>(map)?;
    // SAFETY: readable by the caller's guarantee.
    let g = unsafe { geometry(geom)? };
    let need = 2 * g.out_width() * g.out_height();
    let c = buf(coords, coords_len, false)?.first(need);
    disjoint(&[own, c.span()])?;
    // SAFETY: checked; valid and unchanged while the map is used.
    let m = kernel(PixelMap::new(unsafe { c.slice() }, g))?;
    // SAFETY: checked, writable storage.
    unsafe {
        store(
            map,
            MapObj {
                map: m,
                borrowed: c.span(),
            },
        )
    };
    Ok(())
}

/// Checks the images of a strip call.
///
/// # Safety
/// Readable descriptors.
unsafe fn strip_args<'a>(
    obj: Span,
    borrowed: Span,
    src: *const FxsU8View,
    channels: i32,
    dst: *const FxsU8ViewMut,
) -> Checked<(fixsight::ImageView<'a, u8>, fixsight::ImageViewMut<'a, u8>)> {
    let ch = size(channels)?;
    // SAFETY: readable descriptors by the caller's guarantee.
    let (s, d) = unsafe { (image(src, ch)?, image(dst, ch)?) };
    disjoint(&[obj, borrowed, s.span(), d.span()])?;
    // SAFETY: checked and disjoint.
    unsafe { Ok((s.view()?, d.view_mut()?)) }
}

/// `fxs_warp_pixel_map_rows`: output rows `first_row ..` (as many as
/// `dst` has) into `dst`; `channels` interleaved elements per pixel in both
/// images (1 to 4).
///
/// # Safety
/// `map` initialised; descriptors readable, their data holding the stated
/// bytes (`dst` writable), untouched by others during the call.
#[no_mangle]
pub unsafe extern "C" fn fxs_warp_pixel_map_rows(
    map: *const FxsPixelMap,
    src: *const FxsU8View,
    channels: i32,
    dst: *const FxsU8ViewMut,
    first_row: i32,
    border_rule: i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        load::<MapObj>(map).and_then(|m| {
            let (sv, mut dv) =
                strip_args(Span::object(map, false), m.borrowed, src, channels, dst)?;
            kernel(
                m.map
                    .warp_rows(&sv, &mut dv, size(first_row)?, border(border_rule)?),
            )
        })
    })
}

/// `fxs_warp_control_grid_size`: control-point columns and rows a grid
/// with points every `2^grid_log2` output pixels needs.
///
/// # Safety
/// `geom` readable; `cols`, `rows` one writable `int32_t` each.
#[no_mangle]
pub unsafe extern "C" fn fxs_warp_control_grid_size(
    geom: *const FxsWarpGeometry,
    grid_log2: i32,
    cols: *mut i32,
    rows: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        geometry(geom).and_then(|g| {
            let (c, r) = (buf(cols, 1, true)?, buf(rows, 1, true)?);
            disjoint(&[c.span(), r.span(), Span::object(geom, false)])?;
            let (nc, nr) = kernel(ControlGrid::grid_size(&g, size(grid_log2)? as u32))?;
            c.slice_mut()[0] = nc as i32;
            r.slice_mut()[0] = nr as i32;
            Ok(())
        })
    })
}

/// Stores a checked grid.
///
/// # Safety
/// `grid` passed `storage` and is writable.
unsafe fn put_grid(grid: *mut FxsControlGrid, g: ControlGrid<'static>, borrowed: Span) {
    // SAFETY: forwarded to the caller.
    unsafe { store(grid, GridObj { grid: g, borrowed }) };
}

/// `fxs_warp_control_grid_init`: a grid over caller points (`2 * cols *
/// rows` raw `int32_t`, x then y, row-major), checked once.
///
/// # Safety
/// `grid` writable storage; `geom` readable; `points` `points_len`
/// readable `int32_t` that stay valid and unchanged while the grid is used.
#[no_mangle]
pub unsafe extern "C" fn fxs_warp_control_grid_init(
    grid: *mut FxsControlGrid,
    points: *const i32,
    points_len: usize,
    geom: *const FxsWarpGeometry,
    grid_log2: i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        storage::<GridObj>(grid).and_then(|own| {
            let g = geometry(geom)?;
            let k = size(grid_log2)? as u32;
            let (c, r) = kernel(ControlGrid::grid_size(&g, k))?;
            let p = buf(points, points_len, false)?.first(2 * c * r);
            disjoint(&[own, p.span()])?;
            let m = kernel(ControlGrid::new(p.slice(), g, k))?;
            put_grid(grid, m, p.span());
            Ok(())
        })
    })
}

/// `fxs_warp_control_grid_from_blob`: parses and checks a grid blob (format
/// in the `fixsight::warp` docs), borrowing it.
///
/// # Safety
/// `grid` writable storage; `blob` `blob_len` readable bytes that stay
/// valid and unchanged while the grid is used.
#[no_mangle]
pub unsafe extern "C" fn fxs_warp_control_grid_from_blob(
    grid: *mut FxsControlGrid,
    blob: *const u8,
    blob_len: usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        storage::<GridObj>(grid).and_then(|own| {
            let b = buf(blob, blob_len, false)?;
            disjoint(&[own, b.span()])?;
            let m = kernel(ControlGrid::from_blob(b.slice()))?;
            put_grid(grid, m, b.span());
            Ok(())
        })
    })
}

/// `fxs_warp_control_grid_rows`: as `fxs_warp_pixel_map_rows`, with a grid.
///
/// # Safety
/// As `fxs_warp_pixel_map_rows`.
#[no_mangle]
pub unsafe extern "C" fn fxs_warp_control_grid_rows(
    grid: *const FxsControlGrid,
    src: *const FxsU8View,
    channels: i32,
    dst: *const FxsU8ViewMut,
    first_row: i32,
    border_rule: i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        load::<GridObj>(grid).and_then(|m| {
            let (sv, mut dv) =
                strip_args(Span::object(grid, false), m.borrowed, src, channels, dst)?;
            kernel(
                m.grid
                    .warp_rows(&sv, &mut dv, size(first_row)?, border(border_rule)?),
            )
        })
    })
}

/// `fxs_warp_control_grid_write_blob`: writes the grid as a blob
/// (`32 + 8 * cols * rows` bytes) and its length to `*written`.
///
/// # Safety
/// `grid` initialised; `out` `out_len` writable bytes; `written` one
/// writable `size_t`; untouched by others during the call.
#[no_mangle]
pub unsafe extern "C" fn fxs_warp_control_grid_write_blob(
    grid: *const FxsControlGrid,
    out: *mut u8,
    out_len: usize,
    written: *mut usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        load::<GridObj>(grid).and_then(|m| {
            let o = buf(out, out_len, true)?;
            let n = buf(written, 1, true)?;
            disjoint(&[Span::object(grid, false), m.borrowed, o.span(), n.span()])?;
            n.slice_mut()[0] = kernel(m.grid.write_blob(o.slice_mut()))?;
            Ok(())
        })
    })
}
