//! `filter.*` kernel ids.

use super::{input, output, Arena, Fail, Img, Params};
use fixsight::filter::{Border, FilterOutput, SeparableFilter, Taps, MAX_TAPS};

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

pub(super) fn border(p: &Params) -> Result<Border, Fail> {
    match p.get("border") {
        Some(super::Param::Str("replicate")) => Ok(Border::Replicate),
        _ => {
            let c = p.int("border.constant")?;
            Ok(Border::Constant(
                u8::try_from(c).map_err(|_| Fail::Param("border.constant"))?,
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
/// (`"replicate"` or `{"constant": c}`), `output` (`"u8"` or `"i16"`);
/// input `src` (u8), output `dst`.
pub fn separable(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let f = SeparableFilter::new(
        taps(p, "h", "h_shift")?,
        taps(p, "v", "v_shift")?,
        border(p)?,
    )?;
    let src = input(ins, 0)?;
    let dst = output(outs, 0)?;
    match p.str("output")? {
        "u8" => apply(&f, src, dst.u8_mut()?, arena),
        "i16" => apply(&f, src, dst.i16_mut()?, arena),
        _ => Err(Fail::Param("output")),
    }
}
