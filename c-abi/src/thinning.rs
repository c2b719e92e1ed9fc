//! `fxs_thinning_thin`: Zhang-Suen thinning in place (kernel id
//! `thinning.thin`), over `fixsight::thinning`.

use crate::boundary::{buf, disjoint, image, optional, Checked, FxsU8ViewMut, Span};
use crate::status::{finish, kernel, FxsStatus};
use fixsight::thinning;

/// `fxs_thin_stats`: what a thinning run did.
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct FxsThinStats {
    /// Full iterations, including the last one that deleted nothing.
    pub iterations: u32,
    /// Pixels deleted.
    pub deleted: u32,
}

/// `fxs_thinning_thin`: thins a binary map in place; `scratch` needs
/// `3 * width` bytes; `stats` may be NULL.
///
/// # Safety
/// `map` a readable descriptor whose data hold the stated bytes, writable;
/// `scratch` `scratch_len` writable bytes; `stats` NULL or one writable
/// `fxs_thin_stats`; nothing else touches them during the call.
#[no_mangle]
pub unsafe extern "C" fn fxs_thinning_thin(
    map: *const FxsU8ViewMut,
    scratch: *mut u8,
    scratch_len: usize,
    stats: *mut FxsThinStats,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { thin(map, scratch, scratch_len, stats) })
}

/// The checks and work of `fxs_thinning_thin`.
///
/// # Safety
/// As `fxs_thinning_thin`.
unsafe fn thin(
    map: *const FxsU8ViewMut,
    scratch: *mut u8,
    scratch_len: usize,
    stats: *mut FxsThinStats,
) -> Checked<()> {
    // SAFETY: readable descriptor by the caller's guarantee.
    let m = unsafe { image(map, 1)? };
    let sc = buf(scratch, scratch_len, true)?.first(3 * m.width());
    let st = optional(stats)?;
    disjoint(&[m.span(), sc.span(), st.map_or(Span::EMPTY, |b| b.span())])?;
    // SAFETY: checked and disjoint; valid by the caller's guarantee.
    let (mut mv, sc) = unsafe { (m.view_mut()?, sc.slice_mut()) };
    let r = kernel(thinning::thin(&mut mv, sc))?;
    if let Some(st) = st {
        // SAFETY: one checked, writable `fxs_thin_stats`, disjoint from the rest.
        unsafe {
            st.slice_mut()[0] = FxsThinStats {
                iterations: r.iterations,
                deleted: r.deleted,
            }
        };
    }
    Ok(())
}
