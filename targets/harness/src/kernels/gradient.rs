//! `gradient.*` kernel ids: inputs `gx`, `gy` (i16), no params, one output.

use super::{input, output, Arena, Fail, Img, Params};
use fixsight::gradient;

/// A dispatcher `$name` running the frame kernel `gradient::$name` on
/// inputs 0 and 1, writing output 0 through the view accessor `$out`.
macro_rules! pair_kernel {
    ($(#[$doc:meta])* $name:ident, $out:ident) => {
        $(#[$doc])*
        pub fn $name(
            _p: &Params,
            ins: &[Img<'_>],
            outs: &mut [Img<'_>],
            _arena: &mut Arena<'_>,
        ) -> Result<(), Fail> {
            let (gx, gy) = (input(ins, 0)?.i16()?, input(ins, 1)?.i16()?);
            gradient::$name(&gx, &gy, &mut output(outs, 0)?.$out()?)?;
            Ok(())
        }
    };
}

pair_kernel!(
    /// `gradient.magnitude_l1`: output `mag` (u16).
    magnitude_l1,
    u16_mut
);
pair_kernel!(
    /// `gradient.magnitude_l2_approx`: output `mag` (u16),
    /// alpha-max-plus-beta-min.
    magnitude_l2_approx,
    u16_mut
);
pair_kernel!(
    /// `gradient.magnitude_l2_round`: output `mag` (u16), the nearest integer
    /// to the Euclidean magnitude.
    magnitude_l2_round,
    u16_mut
);
pair_kernel!(
    /// `gradient.direction`: output `dir` (u8), sectors 0..=3.
    direction,
    u8_mut
);
pair_kernel!(
    /// `gradient.angles`: output `angle` (u16, 65536 = 180 degrees).
    angles,
    u16_mut
);
