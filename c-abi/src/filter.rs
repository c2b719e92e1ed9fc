//! `fxs_filter_*`: separable filters (kernel ids `filter.*`), whole frame
//! and row streaming, over `fixsight::filter`.

use crate::boundary::{
    border, buf, disjoint, image, load, load_mut, size, storage, store, Checked, FxsI16ViewMut,
    FxsU8View, FxsU8ViewMut, Span,
};
use crate::status::{finish, kernel, FxsStatus, FXS_E_BAD_PARAMETER, FXS_E_NEGATIVE};
use fixsight::filter::{self, FilterOutput, FilterStream, SeparableFilter, Taps, MAX_TAPS};

/// `FXS_FILTER_BINOMIAL3`: `[1 2 1]/4` both ways (kernel id `filter.binomial3`).
pub const FXS_FILTER_BINOMIAL3: i32 = 0;
/// `FXS_FILTER_BINOMIAL5`: `[1 4 6 4 1]/16` both ways.
pub const FXS_FILTER_BINOMIAL5: i32 = 1;
/// `FXS_FILTER_BINOMIAL7`: `[1 6 15 20 15 6 1]/64` both ways.
pub const FXS_FILTER_BINOMIAL7: i32 = 2;
/// `FXS_FILTER_SOBEL_X`: Sobel x derivative.
pub const FXS_FILTER_SOBEL_X: i32 = 3;
/// `FXS_FILTER_SOBEL_Y`: Sobel y derivative.
pub const FXS_FILTER_SOBEL_Y: i32 = 4;
/// `FXS_FILTER_SCHARR_X`: Scharr x derivative.
pub const FXS_FILTER_SCHARR_X: i32 = 5;
/// `FXS_FILTER_SCHARR_Y`: Scharr y derivative.
pub const FXS_FILTER_SCHARR_Y: i32 = 6;

crate::boundary::object_storage!(
    /// `fxs_filter`: storage for a checked filter (taps, shifts, border).
    FxsFilter for SeparableFilter, tag 0x4658_4631,
    FXS_FILTER_SIZE = (FXS_FILTER_SIZE_32: 88, FXS_FILTER_SIZE_64: 88)
);

/// A stream and the caller memory it borrows.
pub(crate) struct StreamObj {
    stream: FilterStream<'static, 'static>,
    width: usize,
    /// Ring and accumulator row (written), the filter object (read).
    borrowed: [Span; 3],
}

crate::boundary::object_storage!(
    /// `fxs_filter_stream`: storage for a row stream.
    FxsFilterStream for StreamObj, tag 0x4658_4632,
    FXS_FILTER_STREAM_SIZE = (FXS_FILTER_STREAM_SIZE_32: 88, FXS_FILTER_STREAM_SIZE_64: 168)
);

/// Writes `f` into checked storage.
///
/// # Safety
/// `out` is NULL or writable storage of an `fxs_filter` not in use.
unsafe fn put(out: *mut FxsFilter, f: Checked<SeparableFilter>) -> Checked<()> {
    storage::<SeparableFilter>(out)?;
    let f = f?;
    // SAFETY: checked storage, writable by the caller's guarantee.
    unsafe { store(out, f) };
    Ok(())
}

/// `fxs_filter_preset`: one of the `FXS_FILTER_*` presets with a border.
///
/// # Safety
/// `out` is NULL or points to writable `fxs_filter` storage that no stream
/// is using.
#[no_mangle]
pub unsafe extern "C" fn fxs_filter_preset(
    out: *mut FxsFilter,
    preset: i32,
    border_rule: i32,
) -> FxsStatus {
    let f = border(border_rule).and_then(|b| {
        Ok(match preset {
            FXS_FILTER_BINOMIAL3 => filter::binomial3(b),
            FXS_FILTER_BINOMIAL5 => filter::binomial5(b),
            FXS_FILTER_BINOMIAL7 => filter::binomial7(b),
            FXS_FILTER_SOBEL_X => filter::sobel_x(b),
            FXS_FILTER_SOBEL_Y => filter::sobel_y(b),
            FXS_FILTER_SCHARR_X => filter::scharr_x(b),
            FXS_FILTER_SCHARR_Y => filter::scharr_y(b),
            _ => return Err(FXS_E_BAD_PARAMETER),
        })
    });
    // SAFETY: forwarded to the caller.
    finish(unsafe { put(out, f) })
}

/// Taps from a C array.
///
/// # Safety
/// `p` is NULL or points to `len` readable `int16_t`.
unsafe fn taps(p: *const i16, len: i32, shift: i32) -> Checked<Taps> {
    let n = size(len)?;
    let shift = u32::try_from(shift).map_err(|_| FXS_E_NEGATIVE)?;
    // More than MAX_TAPS: let the kernel name the error without reading them.
    let coef = buf(p, n.min(MAX_TAPS + 1), false)?;
    // SAFETY: checked pointer to at least this many readable elements.
    kernel(Taps::new(unsafe { coef.slice() }, shift))
}

/// `fxs_filter_separable`: caller-chosen taps (kernel id `filter.separable`).
///
/// # Safety
/// `out` as in `fxs_filter_preset`; `h` and `v` point to `h_len` and
/// `v_len` readable `int16_t` (only the first 10 are read at most).
#[no_mangle]
pub unsafe extern "C" fn fxs_filter_separable(
    out: *mut FxsFilter,
    h: *const i16,
    h_len: i32,
    h_shift: i32,
    v: *const i16,
    v_len: i32,
    v_shift: i32,
    border_rule: i32,
) -> FxsStatus {
    // SAFETY: the tap arrays are readable by the caller's guarantee.
    let f = unsafe { custom(h, h_len, h_shift, v, v_len, v_shift, border_rule) };
    // SAFETY: forwarded to the caller.
    finish(unsafe { put(out, f) })
}

/// The filter of `fxs_filter_separable`.
///
/// # Safety
/// As `fxs_filter_separable` for `h` and `v`.
unsafe fn custom(
    h: *const i16,
    h_len: i32,
    h_shift: i32,
    v: *const i16,
    v_len: i32,
    v_shift: i32,
    border_rule: i32,
) -> Checked<SeparableFilter> {
    // SAFETY: forwarded to the caller.
    let (ht, vt) = unsafe { (taps(h, h_len, h_shift)?, taps(v, v_len, v_shift)?) };
    kernel(filter::separable(ht, vt, border(border_rule)?))
}

/// `fxs_filter_ring_rows`: input rows a stream ring must hold (`2 ry + 1`).
///
/// # Safety
/// `f` is NULL or readable `fxs_filter` storage; `rows` NULL or writable.
#[no_mangle]
pub unsafe extern "C" fn fxs_filter_ring_rows(f: *const FxsFilter, rows: *mut i32) -> FxsStatus {
    // SAFETY: readable storage by the caller's guarantee.
    let f = unsafe { load::<SeparableFilter>(f) };
    finish(f.and_then(|f| {
        let out = buf(rows, 1, true)?;
        // SAFETY: checked pointer to one writable `int32_t`.
        unsafe { out.slice_mut()[0] = FilterStream::ring_rows(f) as i32 };
        Ok(())
    }))
}

/// Whole-frame filtering into an output image of `T`.
///
/// # Safety
/// As the exported `fxs_filter_frame_*` functions.
unsafe fn frame<T: FilterOutput, D: crate::boundary::Desc<Elem = T>>(
    f: *const FxsFilter,
    src: *const FxsU8View,
    dst: *const D,
    scratch: *mut i32,
    scratch_len: usize,
) -> Checked<()> {
    // SAFETY: caller guarantees readable storage and descriptors.
    let (filt, s, d) = unsafe { (load::<SeparableFilter>(f)?, image(src, 1)?, image(dst, 1)?) };
    let sc = buf(scratch, scratch_len, true)?.first(s.width());
    disjoint(&[Span::object(f, false), s.span(), d.span(), sc.span()])?;
    // SAFETY: checked and disjoint; the caller guarantees the stated
    // memory is valid and untouched by others during the call.
    let (sv, mut dv, sc) = unsafe { (s.view()?, d.view_mut()?, sc.slice_mut()) };
    kernel(filt.apply(&sv, &mut dv, sc))
}

/// `fxs_filter_frame_u8`: whole frame, `uint8_t` output (smoothing).
///
/// # Safety
/// `f` initialised filter storage; `src`, `dst` readable descriptors whose
/// data hold the stated element counts; `scratch` holds `scratch_len`
/// writable `int32_t`; nothing else touches them during the call.
#[no_mangle]
pub unsafe extern "C" fn fxs_filter_frame_u8(
    f: *const FxsFilter,
    src: *const FxsU8View,
    dst: *const FxsU8ViewMut,
    scratch: *mut i32,
    scratch_len: usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { frame::<u8, _>(f, src, dst, scratch, scratch_len) })
}

/// `fxs_filter_frame_i16`: whole frame, `int16_t` output (derivatives).
///
/// # Safety
/// As `fxs_filter_frame_u8`.
#[no_mangle]
pub unsafe extern "C" fn fxs_filter_frame_i16(
    f: *const FxsFilter,
    src: *const FxsU8View,
    dst: *const FxsI16ViewMut,
    scratch: *mut i32,
    scratch_len: usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { frame::<i16, _>(f, src, dst, scratch, scratch_len) })
}

/// `fxs_filter_stream_init`: a row stream over caller memory.
///
/// # Safety
/// `stream` writable storage; `f` initialised filter storage; `ring` and
/// `acc` hold `ring_len` bytes and `acc_len` `int32_t`. Until the stream is
/// last used, the filter, ring and accumulator stay valid, unmoved, and are
/// touched by no one but the stream functions.
#[no_mangle]
pub unsafe extern "C" fn fxs_filter_stream_init(
    stream: *mut FxsFilterStream,
    f: *const FxsFilter,
    width: i32,
    height: i32,
    ring: *mut u8,
    ring_len: usize,
    acc: *mut i32,
    acc_len: usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { stream_init(stream, f, width, height, ring, ring_len, acc, acc_len) })
}

/// The checks and work of `fxs_filter_stream_init`.
///
/// # Safety
/// As `fxs_filter_stream_init`.
#[allow(clippy::too_many_arguments)]
unsafe fn stream_init(
    stream: *mut FxsFilterStream,
    f: *const FxsFilter,
    width: i32,
    height: i32,
    ring: *mut u8,
    ring_len: usize,
    acc: *mut i32,
    acc_len: usize,
) -> Checked<()> {
    let own = storage::<StreamObj>(stream)?;
    // SAFETY: readable filter storage by the caller's guarantee.
    let filt: &'static SeparableFilter = unsafe { load::<SeparableFilter>(f)? };
    let (w, h) = (size(width)?, size(height)?);
    let rows = FilterStream::ring_rows(filt);
    let r = buf(ring, ring_len, true)?.first(rows.saturating_mul(w));
    let a = buf(acc, acc_len, true)?.first(w);
    let borrowed = [r.span(), a.span(), Span::object(f, false)];
    disjoint(&[own, borrowed[0], borrowed[1], borrowed[2]])?;
    // SAFETY: checked, disjoint, and valid for as long as the stream is
    // used by the caller's guarantee (hence `'static` here).
    let (r, a) = unsafe { (r.slice_mut(), a.slice_mut()) };
    let s = kernel(FilterStream::new(filt, w, h, r, a))?;
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

/// Checks `out_row` and the output row of a push or flush.
fn out_args<T>(
    obj: &StreamObj,
    own: Span,
    input: Option<Span>,
    out: *mut T,
    out_len: usize,
    out_row: *mut i32,
) -> Checked<(crate::boundary::Buf<T>, crate::boundary::Buf<i32>)> {
    let o = buf(out, out_len, true)?.first(obj.width);
    let idx = buf(out_row, 1, true)?;
    let b = obj.borrowed;
    disjoint(&[
        own,
        b[0],
        b[1],
        b[2],
        o.span(),
        idx.span(),
        input.unwrap_or(Span::EMPTY),
    ])?;
    Ok((o, idx))
}

/// Push one row.
///
/// # Safety
/// As the exported `fxs_filter_stream_push_*`.
unsafe fn push<T: FilterOutput>(
    stream: *mut FxsFilterStream,
    row: *const u8,
    row_len: usize,
    out: *mut T,
    out_len: usize,
    out_row: *mut i32,
) -> Checked<()> {
    // SAFETY: the caller guarantees initialised, exclusively used storage.
    let obj = unsafe { load_mut::<StreamObj>(stream)? };
    let own = Span::object(stream, true);
    let input = buf(row, row_len, false)?.first(obj.width);
    let (o, idx) = out_args(obj, own, Some(input.span()), out, out_len, out_row)?;
    // SAFETY: checked and disjoint from each other and from the memory
    // the stream holds.
    let (input, o, idx) = unsafe { (input.slice(), o.slice_mut(), idx.slice_mut()) };
    let y = kernel(obj.stream.push_row(input, o))?;
    idx[0] = y.map_or(-1, |y| y as i32);
    Ok(())
}

/// Flush one row.
///
/// # Safety
/// As the exported `fxs_filter_stream_flush_*`.
unsafe fn flush<T: FilterOutput>(
    stream: *mut FxsFilterStream,
    out: *mut T,
    out_len: usize,
    out_row: *mut i32,
) -> Checked<()> {
    // SAFETY: as in `push`.
    let obj = unsafe { load_mut::<StreamObj>(stream)? };
    let own = Span::object(stream, true);
    let (o, idx) = out_args(obj, own, None, out, out_len, out_row)?;
    // SAFETY: as in `push`.
    let (o, idx) = unsafe { (o.slice_mut(), idx.slice_mut()) };
    let y = kernel(obj.stream.flush_row(o))?;
    idx[0] = y.map_or(-1, |y| y as i32);
    Ok(())
}

/// `fxs_filter_stream_push_u8`: push input row, maybe receive a `uint8_t`
/// output row (`*out_row` its index, or -1).
///
/// # Safety
/// `stream` initialised and used by no one else; `row` holds `row_len`
/// readable bytes, `out` `out_len` writable bytes, `out_row` one writable
/// `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_filter_stream_push_u8(
    stream: *mut FxsFilterStream,
    row: *const u8,
    row_len: usize,
    out: *mut u8,
    out_len: usize,
    out_row: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { push(stream, row, row_len, out, out_len, out_row) })
}

/// `fxs_filter_stream_push_i16`: as `_u8` with `int16_t` output.
///
/// # Safety
/// As `fxs_filter_stream_push_u8`.
#[no_mangle]
pub unsafe extern "C" fn fxs_filter_stream_push_i16(
    stream: *mut FxsFilterStream,
    row: *const u8,
    row_len: usize,
    out: *mut i16,
    out_len: usize,
    out_row: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { push(stream, row, row_len, out, out_len, out_row) })
}

/// `fxs_filter_stream_flush_u8`: after the last push, the next pending
/// output row (`*out_row` its index, or -1 when all are out).
///
/// # Safety
/// `stream` initialised and used by no one else; `out` holds `out_len`
/// writable bytes, `out_row` one writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_filter_stream_flush_u8(
    stream: *mut FxsFilterStream,
    out: *mut u8,
    out_len: usize,
    out_row: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { flush(stream, out, out_len, out_row) })
}

/// `fxs_filter_stream_flush_i16`: as `_u8` with `int16_t` output.
///
/// # Safety
/// As `fxs_filter_stream_flush_u8`.
#[no_mangle]
pub unsafe extern "C" fn fxs_filter_stream_flush_i16(
    stream: *mut FxsFilterStream,
    out: *mut i16,
    out_len: usize,
    out_row: *mut i32,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { flush(stream, out, out_len, out_row) })
}
