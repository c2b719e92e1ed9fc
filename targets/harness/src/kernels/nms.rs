//! `nms.*` kernel ids, as `run_vector` in `host-verify/src/nms.rs`
//! computes them: `nms.suppress`, inputs `mag` u16 and `dir` u8, no params,
//! output `nms` u16; `nms.suppress_interpolated`, inputs `mag` u16, `gx` and
//! `gy` i16, no params, output `nms` u16.

use super::{input, output, Arena, Fail, Img, Params};
use fixsight::nms;

/// `nms.suppress`: `nms::suppress`.
pub fn suppress(
    _p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let (mag, dir) = (input(ins, 0)?.u16()?, input(ins, 1)?.u8()?);
    nms::suppress(&mag, &dir, &mut output(outs, 0)?.u16_mut()?)?;
    Ok(())
}

/// `nms.suppress_interpolated`: `nms::suppress_interpolated`.
pub fn suppress_interpolated(
    _p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let (mag, gx, gy) = (
        input(ins, 0)?.u16()?,
        input(ins, 1)?.i16()?,
        input(ins, 2)?.i16()?,
    );
    nms::suppress_interpolated(&mag, &gx, &gy, &mut output(outs, 0)?.u16_mut()?)?;
    Ok(())
}
