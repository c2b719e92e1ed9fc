//! `chain.*` kernel ids, as `run_vector` in `host-verify/src/chain.rs`
//! computes them: `chain.edges`, the edge chain composed from the kernel
//! crate's public functions (a host composition until the pipeline moves
//! into the kernel crate). Input `src` u8, params those of
//! `hysteresis.thresholds` and `stack`, output `edges` u8. Intermediates
//! and scratch come from the arena.

use super::hysteresis::thresholds_of;
use super::{input, int, output, Arena, Fail, Img, Params};
use fixsight::filter::SeparableFilter;
use fixsight::{gradient, hysteresis, nms, thinning, ImageView, ImageViewMut};

/// The chain's smoothed Sobel (`smoothed_sobel` in
/// `host-verify/src/edge_chain.rs`): the gradient filters of
/// `fixsight::pipeline::DEMO`, x or (`vertical`) y.
fn smoothed_sobel(vertical: bool) -> Result<SeparableFilter, Fail> {
    let (fx, fy) = fixsight::pipeline::DEMO.gradient_filters()?;
    Ok(if vertical { fy } else { fx })
}

/// `chain.edges`: smoothed Sobel x and y, `magnitude_l2_round`,
/// `direction`, `nms::suppress`, automatic thresholds, `classify`,
/// `link`, `thin` (`run_chain` in `host-verify/src/chain.rs`); the
/// codes are written to the output and the last two steps run there in
/// place.
pub fn edges(
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
    hysteresis::link(&mut out, stack)?;
    thinning::thin(&mut out, scratch)?;
    Ok(())
}
