//! Dispatch from golden-vector kernel ids to the fixsight API.
//!
//! The one table of kernel ids and dispatch functions is [`kernel_table!`]
//! below: `"<family>.<name>" => <family>::<name>`, the function in
//! `src/kernels/<family>.rs` with the [`RunFn`] signature. The compiler
//! checks every entry; a vector whose kernel id the table lacks is
//! reported as UNSUPPORTED and fails the run (and the host test
//! `tests/names.rs` checks the table against the kernel registry).
//! Adding a family: create `src/kernels/<family>.rs`, add `pub mod
//! <family>;` and its rows below, and (optionally) a QVGA entry in
//! `src/bench.rs`.

pub mod chain;
pub mod filter;
#[cfg(feature = "port-cortex-m4f-float")]
pub mod float;
pub mod gradient;
pub mod hysteresis;
pub mod lines;
pub mod marking;
pub mod nms;
pub mod pipeline;
pub mod thinning;
pub mod track;
pub mod warp;

use crate::vectors::{same, served, Elem, ImageSpec, ONLY};
use core::fmt;

/// Defines [`KERNEL_IDS`], [`lookup`] and [`dispatch`] from rows
/// `"id" => function,`.
macro_rules! kernel_table {
    ($($id:literal => $run:path,)*) => {
        /// Every kernel id the firmware serves, in table order.
        pub const KERNEL_IDS: &[&str] = &[$($id),*];

        /// The dispatch function of `kernel`, evaluated at compile time for
        /// the golden vectors (`build.rs` writes `lookup("<id>")` into each
        /// vector): `None` when the table has no such id. In a code-size
        /// image (`ONLY`, see `build.rs`) every id outside the image's list
        /// gets [`noop`], so the other kernels are not linked.
        pub const fn lookup(kernel: &str) -> Option<RunFn> {
            $(
                if same($id, kernel) {
                    return Some(if served($id) { $run as RunFn } else { noop });
                }
            )*
            if ONLY.is_some() {
                Some(noop)
            } else {
                None
            }
        }

        /// [`lookup`] at run time, for the bench stages. The rows of ids a
        /// code-size image does not serve drop out at compile time.
        pub fn dispatch(kernel: &str) -> Option<RunFn> {
            match kernel {
                $($id if const { served($id) } => Some($run as RunFn),)*
                // The f32 job of the port `cortex-m4f-float`: bench stages
                // only (no golden vector names it, so not in the table).
                #[cfg(feature = "port-cortex-m4f-float")]
                "float.point_job" if ONLY.is_none() => Some(float::point_job as RunFn),
                _ if ONLY.is_some() => Some(noop),
                _ => None,
            }
        }
    };
}

kernel_table! {
    "filter.binomial3" => filter::binomial3,
    "filter.binomial5" => filter::binomial5,
    "filter.binomial7" => filter::binomial7,
    "filter.sobel_x" => filter::sobel_x,
    "filter.sobel_y" => filter::sobel_y,
    "filter.scharr_x" => filter::scharr_x,
    "filter.scharr_y" => filter::scharr_y,
    "filter.separable" => filter::separable,
    "filter.filter_stream" => filter::filter_stream,
    "gradient.magnitude_l1" => gradient::magnitude_l1,
    "gradient.magnitude_l2_approx" => gradient::magnitude_l2_approx,
    "gradient.magnitude_l2_round" => gradient::magnitude_l2_round,
    "gradient.direction" => gradient::direction,
    "gradient.angles" => gradient::angles,
    "nms.suppress" => nms::suppress,
    "nms.suppress_interpolated" => nms::suppress_interpolated,
    "hysteresis.thresholds" => hysteresis::thresholds,
    "hysteresis.classify" => hysteresis::classify,
    "hysteresis.link" => hysteresis::link,
    "thinning.thin" => thinning::thin,
    "chain.edges" => chain::edges,
    "warp.pixel_map" => warp::pixel_map,
    "warp.control_grid" => warp::control_grid,
    "warp.grid_stream" => warp::grid_stream,
    "pipeline.edge_stream" => pipeline::edge_stream,
    "pipeline.point_job" => pipeline::point_job,
    "pipeline.image_job" => pipeline::image_job,
    "marking.select" => marking::select,
    "track.tracker" => track::tracker,
    "lines.cos_sin" => lines::cos_sin,
    "lines.accumulator" => lines::accumulator,
    "lines.peak" => lines::peak,
    "lines.correct_point" => lines::correct_point,
    "lines.segments" => lines::segments,
}

/// Most input or output images one vector may have.
pub const MAX_IMAGES: usize = 6;

/// A dispatch function: parameters, input images, output images (already
/// sized like the expected outputs), scratch arena.
pub type RunFn = fn(&Params, &[Img<'_>], &mut [Img<'_>], &mut Arena<'_>) -> Result<(), Fail>;

/// Does nothing: the calibration call, and the stand-in for other kernels
/// in code-size images (see `build.rs`).
#[inline(never)]
pub fn noop(_: &Params, _: &[Img<'_>], _: &mut [Img<'_>], _: &mut Arena<'_>) -> Result<(), Fail> {
    Ok(())
}

/// Why a vector did not pass.
#[derive(Debug, Clone, Copy)]
pub enum Fail {
    /// The kernel returned an error.
    Kernel(fixsight::Error),
    /// The vector does not fit what the dispatch function expects.
    Harness(&'static str),
    /// A parameter is missing or has the wrong type.
    Param(&'static str),
    /// An output differs from the expected bytes.
    Mismatch {
        /// Output image name.
        image: &'static str,
        /// Index of the first differing element.
        element: usize,
    },
    /// The kernel wrote into an output's row padding (`row_pad` vectors).
    Padding {
        /// Output image name.
        image: &'static str,
        /// Row after which the padding was written.
        row: usize,
        /// Index of the padding element within that row's padding.
        element: usize,
    },
}

impl From<fixsight::Error> for Fail {
    fn from(e: fixsight::Error) -> Self {
        Fail::Kernel(e)
    }
}

impl fmt::Display for Fail {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Fail::Kernel(e) => write!(f, "kernel error: {e}"),
            Fail::Harness(s) => write!(f, "harness: {s}"),
            Fail::Param(s) => write!(f, "parameter `{s}` missing or of the wrong type"),
            Fail::Mismatch { image, element } => {
                write!(f, "output `{image}` differs first at element {element}")
            }
            Fail::Padding {
                image,
                row,
                element,
            } => write!(
                f,
                "output `{image}`: padding element {element} after row {row} was overwritten"
            ),
        }
    }
}

/// A parameter value from the manifest (nested objects are flattened to
/// dotted keys by `build.rs`).
#[derive(Debug, Clone, Copy)]
pub enum Param {
    /// An integer.
    Int(i64),
    /// A boolean.
    Bool(bool),
    /// A string.
    Str(&'static str),
    /// An array of integers.
    Ints(&'static [i64]),
    /// A non-integer number, as written in the manifest.
    Num(&'static str),
    /// `null`.
    Null,
}

/// The parameters of one call.
#[derive(Debug, Clone, Copy)]
pub struct Params {
    items: &'static [(&'static str, Param)],
}

impl Params {
    /// No parameters.
    pub const EMPTY: Params = Params { items: &[] };

    /// Wraps a static list.
    pub const fn new(items: &'static [(&'static str, Param)]) -> Self {
        Self { items }
    }

    /// Looks a key up.
    pub fn get(&self, key: &str) -> Option<Param> {
        self.items.iter().find(|(k, _)| *k == key).map(|(_, v)| *v)
    }

    /// Integer parameter.
    pub fn int(&self, key: &'static str) -> Result<i64, Fail> {
        match self.get(key) {
            Some(Param::Int(v)) => Ok(v),
            _ => Err(Fail::Param(key)),
        }
    }

    /// String parameter.
    pub fn str(&self, key: &'static str) -> Result<&'static str, Fail> {
        match self.get(key) {
            Some(Param::Str(v)) => Ok(v),
            _ => Err(Fail::Param(key)),
        }
    }

    /// Integer-array parameter.
    pub fn ints(&self, key: &'static str) -> Result<&'static [i64], Fail> {
        match self.get(key) {
            Some(Param::Ints(v)) => Ok(v),
            _ => Err(Fail::Param(key)),
        }
    }

    /// Boolean parameter.
    pub fn bool(&self, key: &'static str) -> Result<bool, Fail> {
        match self.get(key) {
            Some(Param::Bool(v)) => Ok(v),
            _ => Err(Fail::Param(key)),
        }
    }
}

/// Typed pixel storage of one image.
#[derive(Debug)]
pub enum Buf<'a> {
    /// `u8` elements.
    U8(&'a mut [u8]),
    /// `i16` elements.
    I16(&'a mut [i16]),
    /// `u16` elements.
    U16(&'a mut [u16]),
    /// `i32` elements.
    I32(&'a mut [i32]),
    /// `u32` elements.
    U32(&'a mut [u32]),
}

/// Every byte of an input's row padding (`row_pad` vectors).
pub const IN_PAD_BYTE: u8 = 0xE7;
/// Every byte of an output buffer before the call in a `row_pad` vector;
/// the padding must still hold it afterwards.
pub const OUT_PAD_BYTE: u8 = 0x3C;

/// An image in the arena: `height` rows of `stride` elements (`stride =
/// width * channels + row_pad`; packed when `row_pad` is 0).
#[derive(Debug)]
pub struct Img<'a> {
    /// Elements (`stride * height`).
    pub buf: Buf<'a>,
    /// Width in pixels.
    pub width: usize,
    /// Height in rows.
    pub height: usize,
    /// Interleaved channels.
    pub channels: usize,
    /// Elements from one row's start to the next.
    pub stride: usize,
}

impl Default for Img<'_> {
    fn default() -> Self {
        Img {
            buf: Buf::U8(&mut []),
            width: 0,
            height: 0,
            channels: 0,
            stride: 0,
        }
    }
}

macro_rules! img_access {
    ($view:ident, $view_mut:ident, $var:ident, $t:ty) => {
        /// Read-only fixsight view, or an error if the element type differs.
        pub fn $view(&self) -> Result<fixsight::ImageView<'_, $t>, Fail> {
            match &self.buf {
                Buf::$var(d) => Ok(fixsight::ImageView::interleaved(
                    d,
                    self.width,
                    self.height,
                    self.stride,
                    self.channels,
                )?),
                _ => Err(Fail::Harness(concat!("image is not ", stringify!($t)))),
            }
        }

        /// Writable fixsight view, or an error if the element type differs.
        pub fn $view_mut(&mut self) -> Result<fixsight::ImageViewMut<'_, $t>, Fail> {
            let (w, h, c, s) = (self.width, self.height, self.channels, self.stride);
            match &mut self.buf {
                Buf::$var(d) => Ok(fixsight::ImageViewMut::interleaved(d, w, h, s, c)?),
                _ => Err(Fail::Harness(concat!("image is not ", stringify!($t)))),
            }
        }
    };
}

impl Img<'_> {
    img_access!(u8, u8_mut, U8, u8);
    img_access!(i16, i16_mut, I16, i16);
    img_access!(u16, u16_mut, U16, u16);
    img_access!(i32, i32_mut, I32, i32);
    img_access!(u32, u32_mut, U32, u32);

    /// The first difference from `want`: [`Fail::Mismatch`] at the first
    /// pixel element whose little-endian bytes differ (element 0 if the
    /// shape or element type differs), or [`Fail::Padding`] at the first
    /// row-padding element that no longer holds [`OUT_PAD_BYTE`].
    pub fn first_difference(&self, want: &ImageSpec) -> Option<Fail> {
        let image = want.name;
        let row = self.width * self.channels;
        if self.width != want.width
            || self.height != want.height
            || self.channels != want.channels
            || self.stride < row
        {
            return Some(Fail::Mismatch { image, element: 0 });
        }
        let stride = self.stride;
        macro_rules! cmp {
            ($d:expr, $t:ty, $e:path) => {{
                const N: usize = core::mem::size_of::<$t>();
                if want.elem != $e || want.bytes.len() != row * self.height * N
                    || $d.len() < stride * self.height
                {
                    return Some(Fail::Mismatch { image, element: 0 });
                }
                let pad = <$t>::from_le_bytes([OUT_PAD_BYTE; N]);
                for (y, (r, w)) in $d
                    .chunks(stride)
                    .zip(want.bytes.chunks_exact(row * N))
                    .enumerate()
                {
                    if let Some(x) = r[..row]
                        .iter()
                        .zip(w.chunks_exact(N))
                        .position(|(v, b)| v.to_le_bytes()[..] != b[..])
                    {
                        return Some(Fail::Mismatch { image, element: y * row + x });
                    }
                    if let Some(k) = r[row..].iter().position(|&v| v != pad) {
                        return Some(Fail::Padding { image, row: y, element: k });
                    }
                }
                None
            }};
        }
        match &self.buf {
            Buf::U8(d) => cmp!(d, u8, Elem::U8),
            Buf::I16(d) => cmp!(d, i16, Elem::I16),
            Buf::U16(d) => cmp!(d, u16, Elem::U16),
            Buf::I32(d) => cmp!(d, i32, Elem::I32),
            Buf::U32(d) => cmp!(d, u32, Elem::U32),
        }
    }
}

/// Bump allocator over a word buffer.
pub struct Arena<'a> {
    rest: &'a mut [u32],
}

impl<'a> Arena<'a> {
    /// Wraps a buffer.
    pub fn new(words: &'a mut [u32]) -> Self {
        Self { rest: words }
    }

    fn words(&mut self, bytes: usize) -> Option<&'a mut [u32]> {
        let n = bytes.div_ceil(4);
        if n > self.rest.len() {
            return None;
        }
        let rest = core::mem::take(&mut self.rest);
        let (head, tail) = rest.split_at_mut(n);
        self.rest = tail;
        Some(head)
    }

    /// `n` zeroed-or-not elements of `u8` (contents unspecified).
    pub fn u8s(&mut self, n: usize) -> Option<&'a mut [u8]> {
        let w = self.words(n)?;
        // SAFETY: a u32 buffer of >= n bytes, exclusively borrowed for 'a.
        Some(unsafe { core::slice::from_raw_parts_mut(w.as_mut_ptr().cast::<u8>(), n) })
    }

    /// `n` elements of `i16`.
    pub fn i16s(&mut self, n: usize) -> Option<&'a mut [i16]> {
        let w = self.words(2 * n)?;
        // SAFETY: 4-aligned buffer of >= 2n bytes, exclusively borrowed.
        Some(unsafe { core::slice::from_raw_parts_mut(w.as_mut_ptr().cast::<i16>(), n) })
    }

    /// `n` elements of `u16`.
    pub fn u16s(&mut self, n: usize) -> Option<&'a mut [u16]> {
        let w = self.words(2 * n)?;
        // SAFETY: as above.
        Some(unsafe { core::slice::from_raw_parts_mut(w.as_mut_ptr().cast::<u16>(), n) })
    }

    /// `n` elements of `i32`.
    pub fn i32s(&mut self, n: usize) -> Option<&'a mut [i32]> {
        let w = self.words(4 * n)?;
        // SAFETY: as above.
        Some(unsafe { core::slice::from_raw_parts_mut(w.as_mut_ptr().cast::<i32>(), n) })
    }

    /// `n` elements of `u32`.
    pub fn u32s(&mut self, n: usize) -> Option<&'a mut [u32]> {
        self.words(4 * n)
    }

    /// An image whose every byte is `fill`, packed rows.
    pub fn image_filled(
        &mut self,
        elem: Elem,
        width: usize,
        height: usize,
        channels: usize,
        fill: u8,
    ) -> Option<Img<'a>> {
        self.image_padded(elem, width, height, channels, 0, fill)
    }

    /// An image with `row_pad` padding elements after every row (the last
    /// too), every byte `fill`.
    pub fn image_padded(
        &mut self,
        elem: Elem,
        width: usize,
        height: usize,
        channels: usize,
        row_pad: usize,
        fill: u8,
    ) -> Option<Img<'a>> {
        let stride = width * channels + row_pad;
        let n = stride * height;
        let f16 = u16::from_le_bytes([fill; 2]);
        let f32v = u32::from_le_bytes([fill; 4]);
        let buf = match elem {
            Elem::U8 => {
                let d = self.u8s(n)?;
                d.fill(fill);
                Buf::U8(d)
            }
            Elem::I16 => {
                let d = self.i16s(n)?;
                d.fill(f16 as i16);
                Buf::I16(d)
            }
            Elem::U16 => {
                let d = self.u16s(n)?;
                d.fill(f16);
                Buf::U16(d)
            }
            Elem::I32 => {
                let d = self.i32s(n)?;
                d.fill(f32v as i32);
                Buf::I32(d)
            }
            Elem::U32 => {
                let d = self.u32s(n)?;
                d.fill(f32v);
                Buf::U32(d)
            }
        };
        Some(Img {
            buf,
            width,
            height,
            channels,
            stride,
        })
    }

    /// An image holding the decoded elements of a golden file, with
    /// `row_pad` padding elements of [`IN_PAD_BYTE`] bytes after every row.
    pub fn image_from(&mut self, spec: &ImageSpec, row_pad: usize) -> Option<Img<'a>> {
        let mut img = self.image_padded(
            spec.elem,
            spec.width,
            spec.height,
            spec.channels,
            row_pad,
            IN_PAD_BYTE,
        )?;
        let (row, stride) = (spec.width * spec.channels, img.stride);
        macro_rules! dec {
            ($d:expr, $t:ty) => {{
                const N: usize = core::mem::size_of::<$t>();
                for (r, f) in $d.chunks_mut(stride).zip(spec.bytes.chunks_exact(row * N)) {
                    for (v, b) in r[..row].iter_mut().zip(f.chunks_exact(N)) {
                        let mut a = [0u8; N];
                        a.copy_from_slice(b);
                        *v = <$t>::from_le_bytes(a);
                    }
                }
            }};
        }
        match &mut img.buf {
            Buf::U8(d) => dec!(d, u8),
            Buf::I16(d) => dec!(d, i16),
            Buf::U16(d) => dec!(d, u16),
            Buf::I32(d) => dec!(d, i32),
            Buf::U32(d) => dec!(d, u32),
        }
        Some(img)
    }
}

/// The single input image `i`, or a harness error naming what is missing.
pub fn input<'r, 'a>(ins: &'r [Img<'a>], i: usize) -> Result<&'r Img<'a>, Fail> {
    ins.get(i).ok_or(Fail::Harness("too few input images"))
}

/// The output image `i`.
pub fn output<'r, 'a>(outs: &'r mut [Img<'a>], i: usize) -> Result<&'r mut Img<'a>, Fail> {
    outs.get_mut(i)
        .ok_or(Fail::Harness("too few output images"))
}

/// An integer parameter converted to `T`.
pub(crate) fn int<T: TryFrom<i64>>(p: &Params, key: &'static str) -> Result<T, Fail> {
    T::try_from(p.int(key)?).map_err(|_| Fail::Param(key))
}

/// Copies the pixels of input 0 into output 0 (same shape and stride, u8;
/// the output's row padding is left as it is), unless there is no input.
pub(crate) fn copy_in(ins: &[Img<'_>], outs: &mut [Img<'_>]) -> Result<(), Fail> {
    let Some(src) = ins.first() else {
        return Ok(());
    };
    let dst = output(outs, 0)?;
    if (src.width, src.height, src.channels, src.stride)
        != (dst.width, dst.height, dst.channels, dst.stride)
    {
        return Err(Fail::Harness("input and output differ in shape"));
    }
    let (row, stride) = (src.width * src.channels, src.stride);
    match (&src.buf, &mut dst.buf) {
        (Buf::U8(s), Buf::U8(d)) if s.len() == d.len() && stride > 0 => {
            for (o, i) in d.chunks_mut(stride).zip(s.chunks(stride)) {
                o[..row].copy_from_slice(&i[..row]);
            }
            Ok(())
        }
        _ => Err(Fail::Harness("input and output must be u8 of one size")),
    }
}
