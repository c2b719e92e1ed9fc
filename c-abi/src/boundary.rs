//! Everything that turns C arguments into safe Rust values: image
//! descriptors, pointer/length pairs, overlap checks, and objects kept in
//! caller storage. Every check runs before a slice is made, in this order:
//!
//! 1. a descriptor or object pointer is NULL -> `FXS_E_NULL_POINTER`, or
//!    misaligned -> `FXS_E_MISALIGNED`;
//! 2. a data pointer is NULL -> `FXS_E_NULL_POINTER`, misaligned for its
//!    element type -> `FXS_E_MISALIGNED`;
//! 3. width, height, stride (or another size) negative -> `FXS_E_NEGATIVE`;
//! 4. the layout rules of `fixsight::image::layout_span` -> the kernel's
//!    codes (`FXS_E_ZERO_SIZE`, `FXS_E_TOO_LARGE`, `FXS_E_STRIDE_TOO_SMALL`,
//!    `FXS_E_LAYOUT_OVERFLOW`);
//! 5. the stated length shorter than the layout spans ->
//!    `FXS_E_BUFFER_TOO_SHORT`; the bytes would pass the end of the address
//!    space -> `FXS_E_ADDRESS_RANGE`;
//! 6. a buffer that is written overlaps any other buffer of the call ->
//!    `FXS_E_OVERLAP`.
//!
//! Slices are then made over exactly the elements the layout spans (not
//! the whole stated length), so two images that share one allocation
//! without touching the same elements are accepted.

use crate::status::{
    kernel, FxsStatus, FXS_E_ADDRESS_RANGE, FXS_E_BAD_PARAMETER, FXS_E_BUFFER_TOO_SHORT,
    FXS_E_MISALIGNED, FXS_E_NEGATIVE, FXS_E_NOT_INITIALISED, FXS_E_NULL_POINTER, FXS_E_OVERLAP,
};
use core::mem::{align_of, size_of};
use fixsight::filter::Border;
use fixsight::image::layout_span;
use fixsight::{ImageView, ImageViewMut};

/// Result of a boundary check.
pub(crate) type Checked<T> = Result<T, FxsStatus>;

/// `FXS_BORDER_CLAMP`: border argument meaning [`Border::Clamp`]; `0..=255`
/// mean [`Border::Fill`] with that value.
pub const FXS_BORDER_CLAMP: i32 = -1;

/// The border rule of a C `border` argument.
pub(crate) fn border(b: i32) -> Checked<Border> {
    match b {
        FXS_BORDER_CLAMP => Ok(Border::Clamp),
        0..=255 => Ok(Border::Fill(b as u8)),
        _ => Err(FXS_E_BAD_PARAMETER),
    }
}

/// A non-negative `int32_t` size as `usize`.
pub(crate) fn size(v: i32) -> Checked<usize> {
    usize::try_from(v).map_err(|_| FXS_E_NEGATIVE)
}

/// Bytes `[start, end)` of caller memory a call borrows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Span {
    start: usize,
    end: usize,
    writable: bool,
}

impl Span {
    /// No bytes: overlaps nothing.
    pub(crate) const EMPTY: Span = Span {
        start: 0,
        end: 0,
        writable: false,
    };

    /// The span of `n` objects of `T` at `p`; `p + n * size_of::<T>()` is
    /// known not to wrap.
    fn of<T>(p: *const T, n: usize, writable: bool) -> Self {
        let start = p as usize;
        Span {
            start,
            end: start + n * size_of::<T>(),
            writable,
        }
    }

    /// The bytes of one object in caller storage.
    pub(crate) fn object<T>(p: *const T, writable: bool) -> Self {
        Self::of(p, 1, writable)
    }
}

/// `FXS_E_OVERLAP` when a written span shares a byte with any other span.
pub(crate) fn disjoint(spans: &[Span]) -> Checked<()> {
    for (i, a) in spans.iter().enumerate() {
        for b in &spans[i + 1..] {
            if (a.writable || b.writable) && a.start < b.end && b.start < a.end {
                return Err(FXS_E_OVERLAP);
            }
        }
    }
    Ok(())
}

/// A checked pointer to `len` elements of `T`.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Buf<T> {
    ptr: *mut T,
    len: usize,
    span: Span,
}

/// Null, alignment and address-range checks of `len` elements at `p`.
pub(crate) fn buf<T>(p: *const T, len: usize, writable: bool) -> Checked<Buf<T>> {
    if p.is_null() {
        return Err(FXS_E_NULL_POINTER);
    }
    if (p as usize) % align_of::<T>() != 0 {
        return Err(FXS_E_MISALIGNED);
    }
    let fits = len
        .checked_mul(size_of::<T>())
        .is_some_and(|b| b <= isize::MAX as usize && (p as usize).checked_add(b).is_some());
    if !fits {
        return Err(FXS_E_ADDRESS_RANGE);
    }
    Ok(Buf {
        ptr: p.cast_mut(),
        len,
        span: Span::of(p, len, writable),
    })
}

/// An optional single output object: NULL means "not wanted".
pub(crate) fn optional<T>(p: *mut T) -> Checked<Option<Buf<T>>> {
    if p.is_null() {
        Ok(None)
    } else {
        buf(p, 1, true).map(Some)
    }
}

impl<T> Buf<T> {
    /// The bytes this buffer covers.
    pub(crate) fn span(&self) -> Span {
        self.span
    }

    /// The first `n` elements only (`n` at most the length).
    pub(crate) fn first(self, n: usize) -> Self {
        let len = n.min(self.len);
        Buf {
            ptr: self.ptr,
            len,
            span: Span::of(self.ptr, len, self.span.writable),
        }
    }

    /// A shared slice.
    ///
    /// # Safety
    /// The caller of the C function guaranteed that `len` elements at the
    /// pointer are initialised, readable, and not written by anyone during
    /// `'a`; the pointer was checked non-null and aligned.
    pub(crate) unsafe fn slice<'a>(self) -> &'a [T] {
        // SAFETY: as stated above; `len * size_of::<T>()` fits `isize` and
        // does not wrap (checked in `buf`).
        unsafe { core::slice::from_raw_parts(self.ptr, self.len) }
    }

    /// An exclusive slice.
    ///
    /// # Safety
    /// As [`Buf::slice`], and the memory is writable and accessed by nothing
    /// else during `'a` (the overlap checks cover the other arguments of
    /// the call).
    pub(crate) unsafe fn slice_mut<'a>(self) -> &'a mut [T] {
        // SAFETY: as stated above.
        unsafe { core::slice::from_raw_parts_mut(self.ptr, self.len) }
    }
}

/// A C image descriptor: data pointer, stated length in elements, width,
/// height and stride (elements).
pub(crate) trait Desc {
    /// Element type.
    type Elem;
    /// Whether the kernel writes the image.
    const WRITABLE: bool;
    /// `(data, len, width, height, stride)`.
    fn parts(&self) -> (*const Self::Elem, usize, i32, i32, i32);
}

macro_rules! descriptors {
    ($($(#[$doc:meta])* $name:ident, $ptr:ty, $elem:ty, $writable:expr;)*) => {$(
        $(#[$doc])*
        #[repr(C)]
        #[derive(Debug, Clone, Copy)]
        pub struct $name {
            /// First element of row 0.
            pub data: $ptr,
            /// Elements available at `data`.
            pub len: usize,
            /// Pixels per row.
            pub width: i32,
            /// Rows.
            pub height: i32,
            /// Elements from the start of one row to the next.
            pub stride: i32,
        }

        impl Desc for $name {
            type Elem = $elem;
            const WRITABLE: bool = $writable;
            fn parts(&self) -> (*const $elem, usize, i32, i32, i32) {
                (self.data as *const $elem, self.len, self.width, self.height, self.stride)
            }
        }
    )*};
}

descriptors! {
    /// `fxs_u8_view`: an image of `uint8_t` that is only read.
    FxsU8View, *const u8, u8, false;
    /// `fxs_u8_view_mut`: an image of `uint8_t` that is written.
    FxsU8ViewMut, *mut u8, u8, true;
    /// `fxs_i16_view`: an image of `int16_t` that is only read.
    FxsI16View, *const i16, i16, false;
    /// `fxs_i16_view_mut`: an image of `int16_t` that is written.
    FxsI16ViewMut, *mut i16, i16, true;
    /// `fxs_u16_view`: an image of `uint16_t` that is only read.
    FxsU16View, *const u16, u16, false;
    /// `fxs_u16_view_mut`: an image of `uint16_t` that is written.
    FxsU16ViewMut, *mut u16, u16, true;
}

/// A checked image: its buffer (exactly the span of the layout) and layout.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Image<T> {
    buf: Buf<T>,
    width: usize,
    height: usize,
    stride: usize,
    channels: usize,
}

/// Checks a descriptor with `channels` interleaved elements per pixel.
///
/// # Safety
/// `d` is NULL or points to a readable descriptor.
pub(crate) unsafe fn image<D: Desc>(d: *const D, channels: usize) -> Checked<Image<D::Elem>> {
    if d.is_null() {
        return Err(FXS_E_NULL_POINTER);
    }
    if (d as usize) % align_of::<D>() != 0 {
        return Err(FXS_E_MISALIGNED);
    }
    // SAFETY: non-null and aligned; the caller guarantees it is readable.
    let (data, len, w, h, s) = unsafe { (*d).parts() };
    if data.is_null() {
        return Err(FXS_E_NULL_POINTER);
    }
    if (data as usize) % align_of::<D::Elem>() != 0 {
        return Err(FXS_E_MISALIGNED);
    }
    let (width, height, stride) = (size(w)?, size(h)?, size(s)?);
    let span = kernel(layout_span(width, height, stride, channels))?;
    if len < span {
        return Err(FXS_E_BUFFER_TOO_SHORT);
    }
    Ok(Image {
        buf: buf(data, span, D::WRITABLE)?,
        width,
        height,
        stride,
        channels,
    })
}

impl<T: Copy> Image<T> {
    /// The bytes the image covers.
    pub(crate) fn span(&self) -> Span {
        self.buf.span
    }

    /// Width in pixels.
    pub(crate) fn width(&self) -> usize {
        self.width
    }

    /// A read-only view.
    ///
    /// # Safety
    /// As [`Buf::slice`].
    pub(crate) unsafe fn view<'a>(self) -> Checked<ImageView<'a, T>> {
        // SAFETY: forwarded to the caller.
        let data = unsafe { self.buf.slice() };
        kernel(ImageView::interleaved(
            data,
            self.width,
            self.height,
            self.stride,
            self.channels,
        ))
    }

    /// A writable view.
    ///
    /// # Safety
    /// As [`Buf::slice_mut`].
    pub(crate) unsafe fn view_mut<'a>(self) -> Checked<ImageViewMut<'a, T>> {
        // SAFETY: forwarded to the caller.
        let data = unsafe { self.buf.slice_mut() };
        kernel(ImageViewMut::interleaved(
            data,
            self.width,
            self.height,
            self.stride,
            self.channels,
        ))
    }
}

/// An object kept in caller storage of type `Self::Storage`, marked with a
/// tag so that zeroed, foreign or never-initialised storage is refused.
pub(crate) trait Stored: Sized {
    /// The C storage type (`#[repr(C, align(8))]`, a byte array).
    type Storage;
    /// Tag written by `store`, checked by `load`.
    const TAG: u32;
}

/// `FXS_OBJECT_ALIGN`: alignment of every object storage type.
pub const FXS_OBJECT_ALIGN: usize = 8;

/// What lives in the storage: the tag, then the object.
#[repr(C)]
pub(crate) struct Tagged<T> {
    tag: u32,
    value: T,
}

/// Checks that `Tagged<T>` fits `T::Storage`, with less than 8 bytes to
/// spare, and its alignment (used in const assertions).
pub(crate) const fn fits<T: Stored>() -> bool {
    let (need, have) = (size_of::<Tagged<T>>(), size_of::<T::Storage>());
    need <= have && have - need < 8 && align_of::<Tagged<T>>() <= align_of::<T::Storage>()
}

/// Checks a storage pointer for NULL and alignment.
fn storage_ptr<T: Stored>(p: *const T::Storage) -> Checked<*mut Tagged<T>> {
    if p.is_null() {
        return Err(FXS_E_NULL_POINTER);
    }
    if (p as usize) % align_of::<T::Storage>() != 0 {
        return Err(FXS_E_MISALIGNED);
    }
    Ok(p.cast_mut().cast())
}

/// Checks storage for a new object (before its buffers are checked against
/// it).
pub(crate) fn storage<T: Stored>(p: *mut T::Storage) -> Checked<Span> {
    storage_ptr::<T>(p)?;
    Ok(Span::object(p, true))
}

/// Writes a new object into checked storage.
///
/// # Safety
/// `p` passed [`storage`], and the caller guarantees the storage is
/// writable and not in use by anything else.
pub(crate) unsafe fn store<T: Stored>(p: *mut T::Storage, value: T) {
    let t: *mut Tagged<T> = p.cast();
    // SAFETY: aligned, large enough (`fits` is asserted per storage type),
    // writable by the caller's guarantee. The old contents are not dropped:
    // no object here owns anything.
    unsafe { t.write(Tagged { tag: T::TAG, value }) };
}

/// Reads the tag of storage that passed the pointer checks.
///
/// # Safety
/// `t` is aligned and readable for `size_of::<T::Storage>()` bytes.
unsafe fn tag_ok<T: Stored>(t: *const Tagged<T>) -> bool {
    // SAFETY: the tag is the first field of a `repr(C)` struct, inside the
    // storage; reading a `u32` of any bit pattern is defined.
    unsafe { core::ptr::addr_of!((*t).tag).read() == T::TAG }
}

/// A shared reference to the object in storage `p`.
///
/// # Safety
/// `p` is NULL or points to readable storage of type `T::Storage` that is
/// not written during `'a`; when its tag is right it holds a `T` written by
/// [`store`] and not since modified by the caller.
pub(crate) unsafe fn load<'a, T: Stored>(p: *const T::Storage) -> Checked<&'a T> {
    let t = storage_ptr::<T>(p)?;
    // SAFETY: checked pointer, readable by the caller's guarantee.
    if !unsafe { tag_ok(t) } {
        return Err(FXS_E_NOT_INITIALISED);
    }
    // SAFETY: the tag says `store` wrote a `T` here.
    Ok(unsafe { &(*t).value })
}

/// An exclusive reference to the object in storage `p`.
///
/// # Safety
/// As [`load`], and nothing else accesses the storage during `'a`.
pub(crate) unsafe fn load_mut<'a, T: Stored>(p: *mut T::Storage) -> Checked<&'a mut T> {
    let t = storage_ptr::<T>(p)?;
    // SAFETY: as in `load`.
    if !unsafe { tag_ok(t) } {
        return Err(FXS_E_NOT_INITIALISED);
    }
    // SAFETY: as in `load`, exclusive by the caller's guarantee.
    Ok(unsafe { &mut (*t).value })
}

/// A type whose all-zero bytes are a valid value: every `bool` false,
/// every enum tag one of its variants, no reference, `NonZero*` or other
/// type that forbids zero, at any depth.
///
/// # Safety
/// Implemented only through [`zero_valid!`], whose constant proves it when
/// the crate is compiled.
pub(crate) unsafe trait ZeroValid {}

/// Implements [`ZeroValid`] for one concrete type, with its proof: a
/// constant of the type made of zero bytes. rustc checks the final value of
/// every constant against the validity rules of its type, field by field
/// at every depth, and refuses to compile one that breaks them (error
/// E0080, "constructing invalid value"; the rules are the invalid values of
/// The Rust Reference, "Behavior considered undefined"). Tried with rustc
/// 1.95: a zero enum tag outside the variants, a zero reference and a zero
/// `NonZeroU8` after a 40 000-byte array in a struct are each refused.
macro_rules! zero_valid {
    ($t:ty) => {
        // SAFETY: evaluated only by the compiler, which refuses to build
        // when zero bytes are not a valid `$t` (see `zero_valid!`).
        const _: $t = unsafe { core::mem::MaybeUninit::zeroed().assume_init() };
        // SAFETY: the constant above is the proof.
        unsafe impl $crate::boundary::ZeroValid for $t {}
    };
}
pub(crate) use zero_valid;

/// Puts a fresh object into checked storage `p` in place, never building
/// one on the stack: zero bytes over the object (a valid `T`,
/// [`ZeroValid`]), `clear` to turn them into the fresh object (the kernel
/// types' in-place `clear`), the tag, then `configure` on it in place;
/// when `configure` fails the storage is marked not initialised.
///
/// # Safety
/// `p` passed [`storage`], and the caller guarantees the storage is
/// writable and not in use by anything else.
pub(crate) unsafe fn store_cleared<T: Stored + ZeroValid>(
    p: *mut T::Storage,
    clear: impl FnOnce(&mut T),
    configure: impl FnOnce(&mut T) -> Checked<()>,
) -> Checked<()> {
    let t: *mut Tagged<T> = p.cast();
    // SAFETY: aligned, large enough (`fits` is asserted per storage type),
    // writable and exclusive by the caller's guarantee; the old contents
    // own nothing. After `write_bytes` the object's bytes are all zero,
    // a valid `T` (`T: ZeroValid`), so the `&mut T` given to `clear`
    // points to a valid value.
    unsafe {
        let value = core::ptr::addr_of_mut!((*t).value);
        value.write_bytes(0, 1);
        clear(&mut *value);
        core::ptr::addr_of_mut!((*t).tag).write(T::TAG);
    }
    // SAFETY: just written; exclusive by the caller's guarantee.
    let obj = unsafe { load_mut::<T>(p)? };
    if let Err(e) = configure(obj) {
        // SAFETY: the tag is the first 4 bytes of the checked storage.
        unsafe { core::ptr::write_bytes(p.cast::<u8>(), 0, 4) };
        return Err(e);
    }
    Ok(())
}

/// A camera row pushed into an object in caller storage: checks
/// `row[row_len]` and the optional count `rows_pushed` (NULL, alignment,
/// no overlap with the object or with the memory `borrowed` names: the
/// count may share no byte with any of it, the row none with what is
/// written), runs `push`, and writes the rows it returns to
/// `*rows_pushed`.
///
/// # Safety
/// `p` as for [`load_mut`]; `row` `row_len` readable bytes; `rows_pushed`
/// NULL or one writable `int32_t`; none touched by others during the call.
pub(crate) unsafe fn push_row<T: Stored>(
    p: *mut T::Storage,
    row: *const u8,
    row_len: usize,
    rows_pushed: *mut i32,
    borrowed: impl FnOnce(&T) -> [Span; 2],
    push: impl FnOnce(&mut T, &[u8]) -> Checked<usize>,
) -> Checked<()> {
    let r = buf(row, row_len, false)?;
    let n = optional(rows_pushed)?;
    let n_span = n.map_or(Span::EMPTY, |b| b.span());
    disjoint(&[Span::object(p, true), r.span(), n_span])?;
    // SAFETY: initialised and exclusively used by the caller's guarantee;
    // disjoint from the row and the count (checked above).
    let obj = unsafe { load_mut::<T>(p)? };
    let [b0, b1] = borrowed(obj);
    disjoint(&[b0, b1, r.span(), n_span])?;
    // SAFETY: checked, readable, shares no byte with the object's memory.
    let got = push(obj, unsafe { r.slice() })?;
    if let Some(n) = n {
        // SAFETY: checked, writable, disjoint from everything else.
        unsafe { n.slice_mut()[0] = got as i32 };
    }
    Ok(())
}

/// Defines a C storage type for an object: `#[repr(C, align(8))]` bytes,
/// sized per pointer width, with a compile-time check that the object fits.
macro_rules! object_storage {
    ($(#[$doc:meta])* $name:ident for $obj:ty, tag $tag:expr,
     $size:ident = ($size32:ident: $n32:expr, $size64:ident: $n64:expr)) => {
        /// Storage size on 32-bit targets (`FXS_..._SIZE_32` in the header).
        pub const $size32: usize = $n32;
        /// Storage size on 64-bit targets (`FXS_..._SIZE_64` in the header).
        pub const $size64: usize = $n64;
        /// Storage size on this target.
        pub const $size: usize = if cfg!(target_pointer_width = "64") {
            $size64
        } else {
            $size32
        };

        $(#[$doc])*
        #[repr(C, align(8))]
        pub struct $name {
            bytes: [u8; $size],
        }

        impl $crate::boundary::Stored for $obj {
            type Storage = $name;
            const TAG: u32 = $tag;
        }

        const _: () = assert!(
            $crate::boundary::fits::<$obj>(),
            concat!(stringify!($name), ": object size differs from the storage constant")
        );
        const _: () = assert!(
            core::mem::size_of::<$name>() == $size
                && core::mem::align_of::<$name>() == $crate::boundary::FXS_OBJECT_ALIGN
        );
    };
}
pub(crate) use object_storage;

/// The object [`store_cleared`] writes (with no configuration) over
/// storage full of `0xA5` bytes, shown by `show` (tests of the objects'
/// fresh state).
#[cfg(test)]
pub(crate) fn cleared_over_garbage<T: Stored + ZeroValid>(
    clear: impl FnOnce(&mut T),
    show: impl FnOnce(&T) -> std::string::String,
) -> std::string::String {
    let mut own = std::boxed::Box::<T::Storage>::new_uninit();
    let p = own.as_mut_ptr();
    // SAFETY: the box's own `size_of::<T::Storage>()` writable bytes.
    unsafe { p.cast::<u8>().write_bytes(0xA5, size_of::<T::Storage>()) };
    storage::<T>(p).expect("aligned storage");
    // SAFETY: checked storage, used by nothing else.
    unsafe { store_cleared(p, clear, |_| Ok(())) }.expect("no configuration to fail");
    // SAFETY: just written by `store_cleared`.
    show(unsafe { load::<T>(p) }.expect("tagged"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spans_overlap_only_when_written() {
        let a = [0u8; 16];
        let r1 = Span::of(a.as_ptr(), 8, false);
        let r2 = Span::of(a[4..].as_ptr(), 8, false);
        let w2 = Span::of(a[4..].as_ptr(), 8, true);
        let w3 = Span::of(a[8..].as_ptr(), 8, true);
        assert_eq!(disjoint(&[r1, r2]), Ok(()));
        assert_eq!(disjoint(&[r1, w2]), Err(FXS_E_OVERLAP));
        assert_eq!(disjoint(&[r1, w3]), Ok(())); // touching, not sharing
        assert_eq!(disjoint(&[w2, Span::of(a.as_ptr(), 0, true)]), Ok(()));
    }

    #[test]
    fn pointer_checks() {
        let a = [0u16; 4];
        assert_eq!(
            buf::<u16>(core::ptr::null(), 1, false).err(),
            Some(FXS_E_NULL_POINTER)
        );
        let odd = (a.as_ptr() as usize + 1) as *const u16;
        assert_eq!(buf(odd, 1, false).err(), Some(FXS_E_MISALIGNED));
        assert_eq!(
            buf(a.as_ptr(), usize::MAX / 2, false).err(),
            Some(FXS_E_ADDRESS_RANGE)
        );
        assert_eq!(buf(a.as_ptr(), 4, false).map(|b| b.len), Ok(4));
        assert_eq!(border(-2), Err(FXS_E_BAD_PARAMETER));
        assert_eq!(border(256), Err(FXS_E_BAD_PARAMETER));
        assert_eq!(border(7), Ok(Border::Fill(7)));
        assert_eq!(size(-1), Err(FXS_E_NEGATIVE));
    }
}
