//! `gradient.*` kernel ids: inputs `gx`, `gy` (i16), no params.
//!
//! Each dispatcher is written out as `pub fn <name>(` on purpose: the
//! harness build script finds the served kernel ids by that text.

use super::{input, output, Arena, Fail, Img, Params};
use fixsight::gradient;

/// `gradient.magnitude_l1`: output `mag` (u16).
pub fn magnitude_l1(
    _p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let (gx, gy) = (input(ins, 0)?.i16()?, input(ins, 1)?.i16()?);
    gradient::magnitude_l1(&gx, &gy, &mut output(outs, 0)?.u16_mut()?)?;
    Ok(())
}

/// `gradient.magnitude_l2_approx`: output `mag` (u16), alpha-max-plus-beta-min.
pub fn magnitude_l2_approx(
    _p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let (gx, gy) = (input(ins, 0)?.i16()?, input(ins, 1)?.i16()?);
    gradient::magnitude_l2_approx(&gx, &gy, &mut output(outs, 0)?.u16_mut()?)?;
    Ok(())
}

/// `gradient.magnitude_l2_round`: output `mag` (u16), the nearest integer
/// to the Euclidean magnitude.
pub fn magnitude_l2_round(
    _p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let (gx, gy) = (input(ins, 0)?.i16()?, input(ins, 1)?.i16()?);
    gradient::magnitude_l2_round(&gx, &gy, &mut output(outs, 0)?.u16_mut()?)?;
    Ok(())
}

/// `gradient.direction`: output `dir` (u8), sectors 0..=3.
pub fn direction(
    _p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let (gx, gy) = (input(ins, 0)?.i16()?, input(ins, 1)?.i16()?);
    gradient::direction(&gx, &gy, &mut output(outs, 0)?.u8_mut()?)?;
    Ok(())
}

/// `gradient.angles`: output `angle` (u16, 65536 = 180 degrees).
pub fn angles(
    _p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let (gx, gy) = (input(ins, 0)?.i16()?, input(ins, 1)?.i16()?);
    gradient::angles(&gx, &gy, &mut output(outs, 0)?.u16_mut()?)?;
    Ok(())
}
