//! `fxs_warp_*`: bilinear lens-undistortion warp driven by a pixel map or a
//! control grid (kernel ids `warp.pixel_map`, `warp.control_grid`), a strip
//! of output rows at a time, and the control grid fed one source row at a
//! time (kernel id `warp.grid_stream`, `fxs_warp_grid_stream_*` over
//! `fixsight::warp::GridStream`, kept in caller storage `fxs_grid_stream`
//! with a caller ring), over `fixsight::warp`.

use crate::boundary::{
    border, buf, disjoint, image, load, load_mut, size, storage, store, Checked, FxsU8View,
    FxsU8ViewMut, Span,
};
use crate::status::{finish, kernel, FxsStatus, FXS_E_LAYOUT_OVERFLOW, FXS_E_UNSUPPORTED_CHANNELS};
use fixsight::warp::{ControlGrid, GridStream, PixelMap, WarpGeometry};

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

/// A grid stream: the stream (its own copy of the checked grid, the caller
/// ring it writes), the channels it was made for, and the caller memory it
/// uses: the grid's points or blob (read) and the ring (written).
pub(crate) struct GridStreamObj {
    stream: GridStream<'static, 'static>,
    channels: usize,
    borrowed: [Span; 2],
}

crate::boundary::object_storage!(
    /// `fxs_grid_stream`: storage for a control-grid row stream.
    FxsGridStream for GridStreamObj, tag 0x4658_5733,
    FXS_GRID_STREAM_SIZE = (FXS_GRID_STREAM_SIZE_32: 128, FXS_GRID_STREAM_SIZE_64: 248)
);

/// The channels and the bytes of one source row of a grid stream
/// (`FXS_E_UNSUPPORTED_CHANNELS` outside 1..=4, as the kernel).
fn source_row(g: &ControlGrid<'_>, channels: i32) -> Checked<(usize, usize)> {
    let c = size(channels)?;
    if !(1..=4).contains(&c) {
        return Err(FXS_E_UNSUPPORTED_CHANNELS);
    }
    Ok((c, g.geometry().src_width() * c))
}

/// `fxs_warp_grid_stream_ring_len`: bytes of the smallest ring a stream
/// over `grid` with `channels` and strips of `strip_rows` rows takes
/// (`band_rows(strip_rows) * src_width * channels`).
///
/// # Safety
/// `grid` initialised; `ring_len` one writable `uintptr_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_warp_grid_stream_ring_len(
    grid: *const FxsControlGrid,
    channels: i32,
    strip_rows: i32,
    ring_len: *mut usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        load::<GridObj>(grid).and_then(|m| {
            let out = buf(ring_len, 1, true)?;
            disjoint(&[Span::object(grid, false), m.borrowed, out.span()])?;
            let (_, row) = source_row(&m.grid, channels)?;
            let band = kernel(m.grid.band_rows(size(strip_rows)?))?;
            out.slice_mut()[0] = band.checked_mul(row).ok_or(FXS_E_LAYOUT_OVERFLOW)?;
            Ok(())
        })
    })
}

/// `fxs_warp_grid_stream_init`: a row stream over `grid` (copied; its
/// points or blob stay borrowed) writing source rows into `ring`, output
/// in strips of `strip_rows` rows with `channels` (1..=4) interleaved
/// channels and `border_rule`.
///
/// # Safety
/// `stream` writable storage; `grid` initialised; `ring` `ring_len`
/// writable bytes that, while the stream is used, nothing else touches;
/// the grid's points or blob stay valid and unchanged as long.
#[no_mangle]
pub unsafe extern "C" fn fxs_warp_grid_stream_init(
    stream: *mut FxsGridStream,
    grid: *const FxsControlGrid,
    ring: *mut u8,
    ring_len: usize,
    channels: i32,
    strip_rows: i32,
    border_rule: i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        (|| {
            let own = storage::<GridStreamObj>(stream)?;
            let m = load::<GridObj>(grid)?;
            let (channels, row) = source_row(&m.grid, channels)?;
            let src_h = m.grid.geometry().src_height();
            // The kernel uses whole rows, at most the source height.
            let r = buf(ring, ring_len, true)?.first((ring_len / row).min(src_h) * row);
            disjoint(&[own, Span::object(grid, false), m.borrowed, r.span()])?;
            let (strip, rule) = (size(strip_rows)?, border(border_rule)?);
            let s = kernel(GridStream::new(
                m.grid,
                r.slice_mut(),
                channels,
                strip,
                rule,
            ))?;
            let borrowed = [m.borrowed, r.span()];
            store(
                stream,
                GridStreamObj {
                    stream: s,
                    channels,
                    borrowed,
                },
            );
            Ok(())
        })()
    })
}

/// `fxs_warp_grid_stream_push_row`: copies the next source row (`row_len
/// == src_width * channels` bytes) into the ring; `*rows_pushed` (may be
/// NULL) the rows of the frame so far.
///
/// # Safety
/// `stream` initialised and used by no one else; `row` `row_len` readable
/// bytes; `rows_pushed` NULL or one writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_warp_grid_stream_push_row(
    stream: *mut FxsGridStream,
    row: *const u8,
    row_len: usize,
    rows_pushed: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        crate::boundary::push_row(
            stream,
            row,
            row_len,
            rows_pushed,
            |o: &GridStreamObj| o.borrowed,
            |o, r| {
                kernel(o.stream.push_row(r))?;
                Ok(o.stream.rows_pushed())
            },
        )
    })
}

/// `fxs_warp_grid_stream_next_strip`: when every source row the next strip
/// reads is in, writes it into rows `0 .. *rows` of `dst` (width
/// `out_width`, the stream's channels, at least the strip's rows) and sets
/// `*first_row` to its first output row; else `*rows = 0`, `*first_row =
/// -1` and nothing is written.
///
/// # Safety
/// `stream` initialised and used by no one else; `dst` a readable
/// descriptor whose data holds the stated bytes, writable, untouched by
/// others during the call; `first_row`, `rows` one writable `int32_t` each.
#[no_mangle]
pub unsafe extern "C" fn fxs_warp_grid_stream_next_strip(
    stream: *mut FxsGridStream,
    dst: *const FxsU8ViewMut,
    first_row: *mut i32,
    rows: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        (|| {
            let (f, n) = (buf(first_row, 1, true)?, buf(rows, 1, true)?);
            let d = image(dst, load::<GridStreamObj>(stream)?.channels)?;
            disjoint(&[Span::object(stream, true), d.span(), f.span(), n.span()])?;
            let o = load_mut::<GridStreamObj>(stream)?;
            let spans = [o.borrowed[0], o.borrowed[1], d.span(), f.span(), n.span()];
            disjoint(&spans)?;
            let done = kernel(o.stream.next_strip(&mut d.view_mut()?))?;
            let (a, b) = done.map_or((-1, 0), |s| (s.first_row as i32, s.rows as i32));
            f.slice_mut()[0] = a;
            n.slice_mut()[0] = b;
            Ok(())
        })()
    })
}

/// `fxs_warp_grid_stream_finished`: `*finished` 1 once every output row of
/// the frame was written, else 0.
///
/// # Safety
/// `stream` initialised, not written during the call; `finished` one
/// writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_warp_grid_stream_finished(
    stream: *const FxsGridStream,
    finished: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        (|| {
            let o = load::<GridStreamObj>(stream)?;
            let f = buf(finished, 1, true)?;
            disjoint(&[Span::object(stream, false), f.span()])?;
            f.slice_mut()[0] = o.stream.finished() as i32;
            Ok(())
        })()
    })
}

/// `fxs_warp_grid_stream_reset`: starts a new frame (no rows in, output
/// from row 0), also after a short or dropped one.
///
/// # Safety
/// `stream` initialised and used by no one else.
#[no_mangle]
pub unsafe extern "C" fn fxs_warp_grid_stream_reset(stream: *mut FxsGridStream) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { load_mut::<GridStreamObj>(stream).map(|o| o.stream.reset()) })
}
