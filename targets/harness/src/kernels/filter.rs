//! `filter.*` kernel ids, as `run_vector` in `host-verify/src/filter.rs`
//! computes them: one function per preset (`filter::binomial5`, ...;
//! params: `border`) and `separable` for caller-chosen taps. Input `src`
//! (u8), output `dst` (u8 for smoothing, i16 for derivatives).

use super::{input, output, Arena, Fail, Img, Params};
use fixsight::filter::{self, Border, FilterOutput, SeparableFilter, Taps, MAX_TAPS};

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
    let f = filter::separable(
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

preset!(
    /// `filter.binomial3`: `[1 2 1]/4` both ways, u8 output.
    binomial3,
    u8_mut
);
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
preset!(
    /// `filter.sobel_x`: i16 output.
    sobel_x,
    i16_mut
);
preset!(
    /// `filter.sobel_y`: i16 output.
    sobel_y,
    i16_mut
);
preset!(
    /// `filter.scharr_x`: i16 output.
    scharr_x,
    i16_mut
);
preset!(
    /// `filter.scharr_y`: i16 output.
    scharr_y,
    i16_mut
);
