//! `thinning.*` kernel ids, as `run_vector` in
//! `host-verify/src/thinning.rs` computes them: `thinning.thin`, input
//! `map` u8, no params, output `thin` u8. With no input (QVGA bench only)
//! it thins its output image in place.

use super::{copy_in, output, Arena, Fail, Img, Params};
use fixsight::thinning;

/// `thinning.thin`: the map copied to the output, then `thinning::thin`
/// in place with `3 * width` zeroed scratch bytes.
pub fn thin(
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
