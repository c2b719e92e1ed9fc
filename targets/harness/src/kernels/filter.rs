//! `filter.*` kernel ids, as `run_vector` in `host-verify/src/filter/golden.rs`
//! computes them: one function per preset (`filter::binomial5`, ...;
//! params: `border`), `separable` for caller-chosen taps and
//! `filter_stream` for the same taps through a `FilterStream`. Input `src`
//! (u8), output `dst` (u8 for smoothing, i16 for derivatives).

use super::{input, output, Arena, Buf, Fail, Img, Params};
use fixsight::filter::{self, Border, FilterOutput, FilterStream, SeparableFilter, Taps, MAX_TAPS};

fn taps(p: &Params, key: &'static str, shift_key: &'static str) -> Result<Taps, Fail> {
    let list = p.ints(key)?;
    if list.len() > MAX_TAPS {
        return Err(Fail::Param(key));
    }
    let mut c = [0i16; MAX_TAPS];
    for (d, &s) in c.iter_mut().zip(list) {
        *d = i16::try_from(s).map_err(|_| Fail::Param(key))?;
    }
    let shift = u32::try_from(p.int(shift_key)?).map_err(|_| Fail::Param(shift_key))?;
    Ok(Taps::new(&c[..list.len()], shift)?)
}

/// The filter of `filter.separable` and `filter.filter_stream` params.
fn custom(p: &Params) -> Result<SeparableFilter, Fail> {
    Ok(filter::separable(
        taps(p, "h", "h_shift")?,
        taps(p, "v", "v_shift")?,
        border(p)?,
    )?)
}

pub(super) fn border(p: &Params) -> Result<Border, Fail> {
    match p.get("border") {
        Some(super::Param::Str("clamp")) => Ok(Border::Clamp),
        _ => {
            let c = p.int("border.fill")?;
            Ok(Border::Fill(
                u8::try_from(c).map_err(|_| Fail::Param("border.fill"))?,
            ))
        }
    }
}

fn apply<T: FilterOutput>(
    f: &SeparableFilter,
    src: &Img<'_>,
    dst: fixsight::ImageViewMut<'_, T>,
    arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let mut dst = dst;
    let scratch = arena.i32s(src.width).ok_or(Fail::Harness("arena full"))?;
    f.apply(&src.u8()?, &mut dst, scratch)?;
    Ok(())
}

/// `filter.separable`: params `h`, `h_shift`, `v`, `v_shift`, `border`
/// (`"clamp"` or `{"fill": c}`), `output` (`"u8"` or `"i16"`);
/// input `src` (u8), output `dst`.
pub fn separable(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let f = custom(p)?;
    let src = input(ins, 0)?;
    let dst = output(outs, 0)?;
    match p.str("output")? {
        "u8" => apply(&f, src, dst.u8_mut()?, arena),
        "i16" => apply(&f, src, dst.i16_mut()?, arena),
        _ => Err(Fail::Param("output")),
    }
}

/// Runs `f` as a row stream from `src` into `dst` (rows `stride`
/// elements apart), checking that rows come out in order.
fn stream_rows<T: FilterOutput>(
    f: &SeparableFilter,
    src: &Img<'_>,
    dst: &mut [T],
    stride: usize,
    arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let (w, h) = (src.width, src.height);
    let rows = FilterStream::ring_rows(f);
    let ring = arena.u8s(rows * w).ok_or(Fail::Harness("arena full"))?;
    let acc = arena.i32s(w).ok_or(Fail::Harness("arena full"))?;
    let Buf::U8(s) = &src.buf else {
        return Err(Fail::Harness("src must be u8"));
    };
    if src.channels != 1 || s.len() < h * src.stride || dst.len() < h * stride {
        return Err(Fail::Harness("src and dst must be one-channel frames"));
    }
    let mut st = FilterStream::new(f, w, h, ring, acc)?;
    let mut next = 0usize;
    for y in 0..=h {
        loop {
            let at = next.min(h - 1) * stride;
            let out = &mut dst[at..at + w];
            let got = if y < h {
                st.push_row(&s[y * src.stride..y * src.stride + w], out)?
            } else {
                st.flush_row(out)?
            };
            match got {
                Some(r) if r == next && next < h => next += 1,
                Some(_) => return Err(Fail::Harness("stream rows out of order")),
                None => {}
            }
            if y < h || got.is_none() {
                break;
            }
        }
    }
    if next == h {
        Ok(())
    } else {
        Err(Fail::Harness("stream emitted too few rows"))
    }
}

/// `filter.filter_stream`: params as `filter.separable`; every row of
/// `src` pushed into a `FilterStream`, then the last rows flushed, each
/// emitted row written to its row of `dst`.
pub fn filter_stream(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let f = custom(p)?;
    let src = input(ins, 0)?;
    let dst = output(outs, 0)?;
    if (dst.width, dst.height) != (src.width, src.height) {
        return Err(Fail::Harness("dst differs from src in size"));
    }
    let stride = dst.stride;
    match (&mut dst.buf, p.str("output")?) {
        (Buf::U8(d), "u8") => stream_rows(&f, src, d, stride, arena),
        (Buf::I16(d), "i16") => stream_rows(&f, src, d, stride, arena),
        _ => Err(Fail::Param("output")),
    }
}

/// A dispatcher `$name` for the preset `filter::$name`: border from the
/// params, input `src`, output `dst` through the view accessor `$out`.
macro_rules! preset {
    ($(#[$doc:meta])* $name:ident, $out:ident) => {
        $(#[$doc])*
        pub fn $name(
            p: &Params,
            ins: &[Img<'_>],
            outs: &mut [Img<'_>],
            arena: &mut Arena<'_>,
        ) -> Result<(), Fail> {
            let f = filter::$name(border(p)?);
            apply(&f, input(ins, 0)?, output(outs, 0)?.$out()?, arena)
        }
    };
}

#[cfg(not(feature = "port-cortex-m4-dsp"))]
preset!(
    /// `filter.binomial3`: `[1 2 1]/4` both ways, u8 output.
    binomial3,
    u8_mut
);
#[cfg(not(feature = "port-cortex-m4-dsp"))]
preset!(
    /// `filter.binomial5`: `[1 4 6 4 1]/16` both ways, u8 output.
    binomial5,
    u8_mut
);
preset!(
    /// `filter.binomial7`: `[1 6 15 20 15 6 1]/64` both ways, u8 output.
    binomial7,
    u8_mut
);
#[cfg(not(feature = "port-cortex-m4-dsp"))]
preset!(
    /// `filter.sobel_x`: i16 output.
    sobel_x,
    i16_mut
);

/// A dispatcher `$name` for the port's `filter::$name` (feature
/// `port-cortex-m4-dsp`): same params, input and output as the preset's,
/// the port's scratch from the arena.
#[cfg(feature = "port-cortex-m4-dsp")]
macro_rules! ported {
    ($(#[$doc:meta])* $name:ident, $out:ident) => {
        $(#[$doc])*
        pub fn $name(
            p: &Params,
            ins: &[Img<'_>],
            outs: &mut [Img<'_>],
            arena: &mut Arena<'_>,
        ) -> Result<(), Fail> {
            use fixsight_port_cortex_m4_dsp::filter as port;
            let src = input(ins, 0)?;
            let scratch = arena
                .u32s(port::scratch_words(src.width))
                .ok_or(Fail::Harness("arena full"))?;
            let mut dst = output(outs, 0)?.$out()?;
            port::$name(&src.u8()?, &mut dst, border(p)?, scratch)?;
            Ok(())
        }
    };
}

#[cfg(feature = "port-cortex-m4-dsp")]
ported!(
    /// `filter.binomial3` through the Cortex-M4 DSP port.
    binomial3,
    u8_mut
);
#[cfg(feature = "port-cortex-m4-dsp")]
ported!(
    /// `filter.binomial5` through the Cortex-M4 DSP port.
    binomial5,
    u8_mut
);
#[cfg(feature = "port-cortex-m4-dsp")]
ported!(
    /// `filter.sobel_x` through the Cortex-M4 DSP port.
    sobel_x,
    i16_mut
);
#[cfg(feature = "port-cortex-m4-dsp")]
ported!(
    /// `filter.sobel_y` through the Cortex-M4 DSP port.
    sobel_y,
    i16_mut
);
#[cfg(feature = "port-cortex-m4-dsp")]
ported!(
    /// `filter.scharr_x` through the Cortex-M4 DSP port.
    scharr_x,
    i16_mut
);
#[cfg(feature = "port-cortex-m4-dsp")]
ported!(
    /// `filter.scharr_y` through the Cortex-M4 DSP port.
    scharr_y,
    i16_mut
);
#[cfg(not(feature = "port-cortex-m4-dsp"))]
preset!(
    /// `filter.sobel_y`: i16 output.
    sobel_y,
    i16_mut
);
#[cfg(not(feature = "port-cortex-m4-dsp"))]
preset!(
    /// `filter.scharr_x`: i16 output.
    scharr_x,
    i16_mut
);
#[cfg(not(feature = "port-cortex-m4-dsp"))]
preset!(
    /// `filter.scharr_y`: i16 output.
    scharr_y,
    i16_mut
);
