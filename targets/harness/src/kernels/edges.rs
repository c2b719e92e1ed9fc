//! `edges.*` kernel ids, as `run_vector` in `host-verify/src/canny.rs`
//! computes them.
//!
//! | id | params | inputs | outputs |
//! |---|---|---|---|
//! | `edges.nms` | none | `mag` u16, `dir` u8 | `nms` u16 |
//! | `edges.thresholds` | `bins`, `shift`, `high_permille`, `low_fraction_bits` | `mag` u16 | `thresholds` u16 (`low`, `high` in the first two elements) |
//! | `edges.classify` | `low`, `high` | `mag` u16 | `codes` u8 |
//! | `edges.hysteresis` | `stack` | `codes` u8 | `edges` u8 |
//! | `edges.thinning` | none | `map` u8 | `thin` u8 |
//! | `edges.chain` | the threshold params and `stack` | `src` u8 | `edges` u8 |
//!
//! Scratch (histogram, hysteresis work stack, thinning rows, filter row,
//! chain intermediates) comes from the arena and is zeroed first where the
//! host passes zeroed vectors.
//!
//! Two forms used only by the QVGA bench (`src/bench.rs`), never by a
//! golden vector: `edges.classify` without `low`/`high` params takes them
//! from a second input, the output of `edges.thresholds`; and
//! `edges.hysteresis` / `edges.thinning` with no input run in place on
//! their output image, so the bench window holds the kernel alone and not
//! the copy of the map.

use super::{input, output, Arena, Buf, Fail, Img, Param, Params};
use fixsight::filter::SeparableFilter;
use fixsight::hysteresis::{self, Thresholds, U0F16};
use fixsight::{gradient, nms, thinning, ImageView, ImageViewMut};

fn int<T: TryFrom<i64>>(p: &Params, key: &'static str) -> Result<T, Fail> {
    T::try_from(p.int(key)?).map_err(|_| Fail::Param(key))
}

/// `edges.nms`: `nms::suppress`.
pub fn nms(
    _p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let (mag, dir) = (input(ins, 0)?.u16()?, input(ins, 1)?.u8()?);
    nms::suppress(&mag, &dir, &mut output(outs, 0)?.u16_mut()?)?;
    Ok(())
}

fn thresholds_of(
    p: &Params,
    mag: &ImageView<'_, u16>,
    arena: &mut Arena<'_>,
) -> Result<Thresholds, Fail> {
    let bins: usize = int(p, "bins")?;
    let hist = arena.u32s(bins).ok_or(Fail::Harness("arena full"))?;
    hist.fill(0);
    Ok(Thresholds::from_histogram(
        mag,
        hist,
        int(p, "shift")?,
        int(p, "high_permille")?,
        U0F16::from_bits(int(p, "low_fraction_bits")?),
    )?)
}

/// `edges.thresholds`: `Thresholds::from_histogram` with a zeroed
/// histogram of `bins` entries; writes `low`, `high`.
pub fn thresholds(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let t = thresholds_of(p, &input(ins, 0)?.u16()?, arena)?;
    match &mut output(outs, 0)?.buf {
        Buf::U16(o) if o.len() >= 2 => {
            o[0] = t.low();
            o[1] = t.high();
            Ok(())
        }
        _ => Err(Fail::Harness(
            "thresholds output must be u16 with 2 elements",
        )),
    }
}

/// `edges.classify`: `hysteresis::classify` with `Thresholds::new(low, high)`.
pub fn classify(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let t = match p.get("low") {
        Some(Param::Int(_)) => Thresholds::new(int(p, "low")?, int(p, "high")?)?,
        _ => match &input(ins, 1)?.buf {
            // Bench form: thresholds from the `edges.thresholds` stage.
            Buf::U16(t) if t.len() >= 2 => Thresholds::new(t[0], t[1])?,
            _ => return Err(Fail::Param("low")),
        },
    };
    hysteresis::classify(&input(ins, 0)?.u16()?, &t, &mut output(outs, 0)?.u8_mut()?)?;
    Ok(())
}

/// Copies input 0 into output 0 (same shape, u8), unless there is no input.
fn copy_in(ins: &[Img<'_>], outs: &mut [Img<'_>]) -> Result<(), Fail> {
    let Some(src) = ins.first() else {
        return Ok(());
    };
    let dst = output(outs, 0)?;
    if (src.width, src.height, src.channels) != (dst.width, dst.height, dst.channels) {
        return Err(Fail::Harness("input and output differ in shape"));
    }
    match (&src.buf, &mut dst.buf) {
        (Buf::U8(s), Buf::U8(d)) if s.len() == d.len() => {
            d.copy_from_slice(s);
            Ok(())
        }
        _ => Err(Fail::Harness("input and output must be u8 of one size")),
    }
}

/// `edges.hysteresis`: the codes copied to the output, then
/// `hysteresis::hysteresis` in place with a zeroed `stack`-entry work stack.
pub fn hysteresis(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let n: usize = int(p, "stack")?;
    let stack = arena.u32s(n).ok_or(Fail::Harness("arena full"))?;
    stack.fill(0);
    copy_in(ins, outs)?;
    hysteresis::hysteresis(&mut output(outs, 0)?.u8_mut()?, stack)?;
    Ok(())
}

/// `edges.thinning`: the map copied to the output, then `thinning::thin`
/// in place with `3 * width` zeroed scratch bytes.
pub fn thinning(
    _p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let w = output(outs, 0)?.width;
    let scratch = arena.u8s(3 * w).ok_or(Fail::Harness("arena full"))?;
    scratch.fill(0);
    copy_in(ins, outs)?;
    thinning::thin(&mut output(outs, 0)?.u8_mut()?, scratch)?;
    Ok(())
}

/// The chain's smoothed Sobel (`smoothed_sobel` in `host-verify/src/canny.rs`):
/// the gradient filters of `fixsight::pipeline::DEMO`, x or (`vertical`) y.
fn smoothed_sobel(vertical: bool) -> Result<SeparableFilter, Fail> {
    let (fx, fy) = fixsight::pipeline::DEMO.gradient_filters()?;
    Ok(if vertical { fy } else { fx })
}

/// `edges.chain`: smoothed Sobel x and y, `magnitude_l2_round`,
/// `direction`, `nms::suppress`, automatic thresholds, `classify`,
/// `hysteresis`, `thin` (`run_chain` in `host-verify/src/canny.rs`); the
/// codes are written to the output and the last two steps run there in
/// place.
pub fn chain(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let src = input(ins, 0)?;
    let sv = src.u8()?;
    let (w, h) = (src.width, src.height);
    let n = w * h;
    let full = Fail::Harness("arena full");
    let gx = arena.i16s(n).ok_or(full)?;
    let gy = arena.i16s(n).ok_or(full)?;
    let mag = arena.u16s(n).ok_or(full)?;
    let dir = arena.u8s(n).ok_or(full)?;
    let sup = arena.u16s(n).ok_or(full)?;
    let row = arena.i32s(w).ok_or(full)?;
    row.fill(0);
    smoothed_sobel(false)?.apply(&sv, &mut ImageViewMut::new(gx, w, h, w)?, row)?;
    row.fill(0);
    smoothed_sobel(true)?.apply(&sv, &mut ImageViewMut::new(gy, w, h, w)?, row)?;
    let (vx, vy) = (ImageView::new(gx, w, h, w)?, ImageView::new(gy, w, h, w)?);
    gradient::magnitude_l2_round(&vx, &vy, &mut ImageViewMut::new(mag, w, h, w)?)?;
    gradient::direction(&vx, &vy, &mut ImageViewMut::new(dir, w, h, w)?)?;
    let (mv, dv) = (ImageView::new(mag, w, h, w)?, ImageView::new(dir, w, h, w)?);
    nms::suppress(&mv, &dv, &mut ImageViewMut::new(sup, w, h, w)?)?;
    let sv = ImageView::new(sup, w, h, w)?;
    let t = thresholds_of(p, &sv, arena)?;
    let stack_len: usize = int(p, "stack")?;
    let stack = arena.u32s(stack_len).ok_or(full)?;
    stack.fill(0);
    let scratch = arena.u8s(3 * w).ok_or(full)?;
    scratch.fill(0);
    let mut out = output(outs, 0)?.u8_mut()?;
    if (out.width(), out.height()) != (w, h) {
        return Err(Fail::Harness("output differs from src in size"));
    }
    hysteresis::classify(&sv, &t, &mut out)?;
    hysteresis::hysteresis(&mut out, stack)?;
    thinning::thin(&mut out, scratch)?;
    Ok(())
}
