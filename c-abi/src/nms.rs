//! `fxs_nms_*`: non-maximum suppression (kernel ids `nms.suppress`, whole
//! frame and row streaming, and `nms.suppress_interpolated`), over
//! `fixsight::nms`.

use crate::boundary::{
    buf, disjoint, image, load_mut, size, storage, store, Buf, Checked, FxsI16View, FxsU16View,
    FxsU16ViewMut, FxsU8View, Span,
};
use crate::status::{finish, kernel, FxsStatus};
use fixsight::nms::{self, NmsStream};

/// A stream and the ring memory it borrows.
pub(crate) struct StreamObj {
    stream: NmsStream<'static>,
    width: usize,
    /// Magnitude and direction rings (written).
    borrowed: [Span; 2],
}

crate::boundary::object_storage!(
    /// `fxs_nms_stream`: storage for a suppression row stream.
    FxsNmsStream for StreamObj, tag 0x4658_4E31,
    FXS_NMS_STREAM_SIZE = (FXS_NMS_STREAM_SIZE_32: 64, FXS_NMS_STREAM_SIZE_64: 128)
);

/// `fxs_nms_suppress`: whole frame.
///
/// # Safety
/// Readable descriptors whose data hold the stated element counts (`out`
/// writable), untouched by others during the call.
#[no_mangle]
pub unsafe extern "C" fn fxs_nms_suppress(
    mag: *const FxsU16View,
    dir: *const FxsU8View,
    out: *const FxsU16ViewMut,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { suppress(mag, dir, out) })
}

/// The checks and work of `fxs_nms_suppress`.
///
/// # Safety
/// As `fxs_nms_suppress`.
unsafe fn suppress(
    mag: *const FxsU16View,
    dir: *const FxsU8View,
    out: *const FxsU16ViewMut,
) -> Checked<()> {
    // SAFETY: readable descriptors by the caller's guarantee.
    let (m, d, o) = unsafe { (image(mag, 1)?, image(dir, 1)?, image(out, 1)?) };
    disjoint(&[m.span(), d.span(), o.span()])?;
    // SAFETY: checked and disjoint.
    let (mv, dv, mut ov) = unsafe { (m.view()?, d.view()?, o.view_mut()?) };
    kernel(nms::suppress(&mv, &dv, &mut ov))
}

/// `fxs_nms_suppress_interpolated`: whole frame, suppression along the
/// exact gradient direction (kernel id `nms.suppress_interpolated`).
///
/// # Safety
/// Readable descriptors whose data hold the stated element counts (`out`
/// writable), untouched by others during the call.
#[no_mangle]
pub unsafe extern "C" fn fxs_nms_suppress_interpolated(
    mag: *const FxsU16View,
    gx: *const FxsI16View,
    gy: *const FxsI16View,
    out: *const FxsU16ViewMut,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { suppress_interpolated(mag, gx, gy, out) })
}

/// The checks and work of `fxs_nms_suppress_interpolated`.
///
/// # Safety
/// As `fxs_nms_suppress_interpolated`.
unsafe fn suppress_interpolated(
    mag: *const FxsU16View,
    gx: *const FxsI16View,
    gy: *const FxsI16View,
    out: *const FxsU16ViewMut,
) -> Checked<()> {
    // SAFETY: readable descriptors by the caller's guarantee.
    let (m, x, y, o) = unsafe { (image(mag, 1)?, image(gx, 1)?, image(gy, 1)?, image(out, 1)?) };
    // The inputs may share memory with each other (they are only read);
    // the output may overlap none of them.
    disjoint(&[m.span(), o.span()])?;
    disjoint(&[x.span(), o.span()])?;
    disjoint(&[y.span(), o.span()])?;
    // SAFETY: checked; the output is disjoint from every input.
    let (mv, xv, yv, mut ov) = unsafe { (m.view()?, x.view()?, y.view()?, o.view_mut()?) };
    kernel(nms::suppress_interpolated(&mv, &xv, &yv, &mut ov))
}

/// `fxs_nms_stream_init`: a row stream; each ring needs `3 * width` elements.
///
/// # Safety
/// `stream` writable storage; the rings hold the stated element counts and,
/// until the stream is last used, stay valid, unmoved and untouched by
/// anything but the stream functions.
#[no_mangle]
pub unsafe extern "C" fn fxs_nms_stream_init(
    stream: *mut FxsNmsStream,
    width: i32,
    height: i32,
    mag_ring: *mut u16,
    mag_ring_len: usize,
    dir_ring: *mut u8,
    dir_ring_len: usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        stream_init(
            stream,
            width,
            height,
            mag_ring,
            mag_ring_len,
            dir_ring,
            dir_ring_len,
        )
    })
}

/// The checks and work of `fxs_nms_stream_init`.
///
/// # Safety
/// As `fxs_nms_stream_init`.
unsafe fn stream_init(
    stream: *mut FxsNmsStream,
    width: i32,
    height: i32,
    mag_ring: *mut u16,
    mag_ring_len: usize,
    dir_ring: *mut u8,
    dir_ring_len: usize,
) -> Checked<()> {
    let own = storage::<StreamObj>(stream)?;
    let (w, h) = (size(width)?, size(height)?);
    let need = w.saturating_mul(3);
    let m = buf(mag_ring, mag_ring_len, true)?.first(need);
    let d = buf(dir_ring, dir_ring_len, true)?.first(need);
    let borrowed = [m.span(), d.span()];
    disjoint(&[own, borrowed[0], borrowed[1]])?;
    // SAFETY: checked, disjoint, valid while the stream is used by the
    // caller's guarantee (hence `'static`).
    let (m, d) = unsafe { (m.slice_mut(), d.slice_mut()) };
    let s = kernel(NmsStream::new(w, h, m, d))?;
    // SAFETY: checked storage, writable and unused by the caller's guarantee.
    unsafe {
        store(
            stream,
            StreamObj {
                stream: s,
                width: w,
                borrowed,
            },
        )
    };
    Ok(())
}

/// Checks the output row and index of a push or flush against everything
/// else the call and the stream touch.
fn out_args(
    obj: &StreamObj,
    own: Span,
    inputs: [Span; 2],
    out: *mut u16,
    out_len: usize,
    out_row: *mut i32,
) -> Checked<(Buf<u16>, Buf<i32>)> {
    let o = buf(out, out_len, true)?.first(obj.width);
    let idx = buf(out_row, 1, true)?;
    let b = obj.borrowed;
    disjoint(&[own, b[0], b[1], inputs[0], inputs[1], o.span(), idx.span()])?;
    Ok((o, idx))
}

/// `fxs_nms_stream_push`: push a magnitude row and its direction row, maybe
/// receive an output row (`*out_row` its index, or -1).
///
/// # Safety
/// `stream` initialised and used by no one else; `mag`, `dir`, `out` hold
/// the stated element counts (`out` writable), `out_row` one writable
/// `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_nms_stream_push(
    stream: *mut FxsNmsStream,
    mag: *const u16,
    mag_len: usize,
    dir: *const u8,
    dir_len: usize,
    out: *mut u16,
    out_len: usize,
    out_row: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { push(stream, mag, mag_len, dir, dir_len, out, out_len, out_row) })
}

/// The checks and work of `fxs_nms_stream_push`.
///
/// # Safety
/// As `fxs_nms_stream_push`.
#[allow(clippy::too_many_arguments)]
unsafe fn push(
    stream: *mut FxsNmsStream,
    mag: *const u16,
    mag_len: usize,
    dir: *const u8,
    dir_len: usize,
    out: *mut u16,
    out_len: usize,
    out_row: *mut i32,
) -> Checked<()> {
    // SAFETY: initialised, exclusively used storage by the caller's guarantee.
    let obj = unsafe { load_mut::<StreamObj>(stream)? };
    let m = buf(mag, mag_len, false)?.first(obj.width);
    let d = buf(dir, dir_len, false)?.first(obj.width);
    let own = Span::object(stream, true);
    let (o, idx) = out_args(obj, own, [m.span(), d.span()], out, out_len, out_row)?;
    // SAFETY: checked and disjoint from each other and from the stream's memory.
    let (m, d, o, idx) = unsafe { (m.slice(), d.slice(), o.slice_mut(), idx.slice_mut()) };
    let y = kernel(obj.stream.push_row(m, d, o))?;
    idx[0] = y.map_or(-1, |y| y as i32);
    Ok(())
}

/// `fxs_nms_stream_flush`: after the last push, the last output row
/// (`*out_row` its index, or -1 when all are out).
///
/// # Safety
/// `stream` initialised and used by no one else; `out` `out_len` writable
/// `uint16_t`; `out_row` one writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_nms_stream_flush(
    stream: *mut FxsNmsStream,
    out: *mut u16,
    out_len: usize,
    out_row: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { flush(stream, out, out_len, out_row) })
}

/// The checks and work of `fxs_nms_stream_flush`.
///
/// # Safety
/// As `fxs_nms_stream_flush`.
unsafe fn flush(
    stream: *mut FxsNmsStream,
    out: *mut u16,
    out_len: usize,
    out_row: *mut i32,
) -> Checked<()> {
    // SAFETY: as in `push`.
    let obj = unsafe { load_mut::<StreamObj>(stream)? };
    let own = Span::object(stream, true);
    let (o, idx) = out_args(obj, own, [Span::EMPTY; 2], out, out_len, out_row)?;
    // SAFETY: as in `push`.
    let (o, idx) = unsafe { (o.slice_mut(), idx.slice_mut()) };
    let y = kernel(obj.stream.flush_row(o))?;
    idx[0] = y.map_or(-1, |y| y as i32);
    Ok(())
}
