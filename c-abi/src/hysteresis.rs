//! `fxs_hysteresis_*`: automatic thresholds, double threshold and
//! hysteresis (kernel ids `hysteresis.thresholds`, `hysteresis.classify`,
//! `hysteresis.link`), over `fixsight::hysteresis`.

use crate::boundary::{buf, disjoint, image, optional, Checked, FxsU16View, FxsU8ViewMut, Span};
use crate::status::{finish, kernel, FxsStatus, FXS_E_BAD_PARAMETER, FXS_E_NEGATIVE};
use fixsight::hysteresis::{self, Thresholds, U0F16};

/// `fxs_link_stats`: what a hysteresis run did.
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct FxsLinkStats {
    /// Pixels set to 255 (edge).
    pub edges: u32,
    /// Raster passes (1 when the work stack never filled).
    pub passes: u32,
    /// Neighbours deferred because the work stack was full.
    pub deferred: u32,
    /// Most work-stack entries in use.
    pub peak_stack: u32,
}

/// An `int32_t` parameter that must fit `T`: negative -> `FXS_E_NEGATIVE`,
/// too large -> `FXS_E_BAD_PARAMETER`.
fn param<T: TryFrom<i32>>(v: i32) -> Checked<T> {
    if v < 0 {
        return Err(FXS_E_NEGATIVE);
    }
    T::try_from(v).map_err(|_| FXS_E_BAD_PARAMETER)
}

/// `fxs_hysteresis_thresholds`: thresholds from the histogram of the
/// nonzero magnitudes; `hist` holds `bins` (at least 1) `uint32_t`.
///
/// # Safety
/// `mag` a readable descriptor whose data hold the stated elements; `hist`
/// `bins` writable `uint32_t`; `low`, `high` one writable `uint16_t` each;
/// nothing else touches them during the call.
#[no_mangle]
pub unsafe extern "C" fn fxs_hysteresis_thresholds(
    mag: *const FxsU16View,
    hist: *mut u32,
    bins: usize,
    shift: i32,
    high_permille: i32,
    low_ratio_u0f16: i32,
    low: *mut u16,
    high: *mut u16,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe {
        thresholds(
            mag,
            hist,
            bins,
            shift,
            high_permille,
            low_ratio_u0f16,
            low,
            high,
        )
    })
}

/// The checks and work of `fxs_hysteresis_thresholds`.
///
/// # Safety
/// As `fxs_hysteresis_thresholds`.
#[allow(clippy::too_many_arguments)]
unsafe fn thresholds(
    mag: *const FxsU16View,
    hist: *mut u32,
    bins: usize,
    shift: i32,
    high_permille: i32,
    low_ratio_u0f16: i32,
    low: *mut u16,
    high: *mut u16,
) -> Checked<()> {
    // SAFETY: readable descriptor by the caller's guarantee.
    let m = unsafe { image(mag, 1)? };
    let h = buf(hist, bins, true)?;
    let (lo, hi) = (buf(low, 1, true)?, buf(high, 1, true)?);
    disjoint(&[m.span(), h.span(), lo.span(), hi.span()])?;
    let (shift, permille, ratio) = (
        param::<u32>(shift)?,
        param::<u16>(high_permille)?,
        param::<u16>(low_ratio_u0f16)?,
    );
    // SAFETY: checked and disjoint; valid by the caller's guarantee.
    let (mv, h) = unsafe { (m.view()?, h.slice_mut()) };
    let t = kernel(Thresholds::from_histogram(
        &mv,
        h,
        shift,
        permille,
        U0F16::from_bits(ratio),
    ))?;
    // SAFETY: one checked, writable `uint16_t` each, disjoint from the rest.
    unsafe {
        lo.slice_mut()[0] = t.low();
        hi.slice_mut()[0] = t.high();
    }
    Ok(())
}

/// `fxs_hysteresis_classify`: edge codes 0, 1 (weak), 2 (strong) for
/// `1 <= low <= high <= 65535`.
///
/// # Safety
/// Readable descriptors whose data hold the stated elements (`codes`
/// writable), untouched by others during the call.
#[no_mangle]
pub unsafe extern "C" fn fxs_hysteresis_classify(
    mag: *const FxsU16View,
    low: i32,
    high: i32,
    codes: *const FxsU8ViewMut,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { classify(mag, low, high, codes) })
}

/// The checks and work of `fxs_hysteresis_classify`.
///
/// # Safety
/// As `fxs_hysteresis_classify`.
unsafe fn classify(
    mag: *const FxsU16View,
    low: i32,
    high: i32,
    codes: *const FxsU8ViewMut,
) -> Checked<()> {
    // SAFETY: readable descriptors by the caller's guarantee.
    let (m, c) = unsafe { (image(mag, 1)?, image(codes, 1)?) };
    disjoint(&[m.span(), c.span()])?;
    let t = kernel(Thresholds::new(param(low)?, param(high)?))?;
    // SAFETY: checked and disjoint.
    let (mv, mut cv) = unsafe { (m.view()?, c.view_mut()?) };
    kernel(hysteresis::classify(&mv, &t, &mut cv))
}

/// `fxs_hysteresis_link`: hysteresis in place on an edge-code map; `stack`
/// at least 8 entries; `stats` may be NULL.
///
/// # Safety
/// `map` a readable descriptor whose data hold the stated bytes, writable;
/// `stack` `stack_len` writable `uint32_t`; `stats` NULL or one writable
/// `fxs_link_stats`; nothing else touches them during the call.
#[no_mangle]
pub unsafe extern "C" fn fxs_hysteresis_link(
    map: *const FxsU8ViewMut,
    stack: *mut u32,
    stack_len: usize,
    stats: *mut FxsLinkStats,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { link(map, stack, stack_len, stats) })
}

/// The checks and work of `fxs_hysteresis_link`.
///
/// # Safety
/// As `fxs_hysteresis_link`.
unsafe fn link(
    map: *const FxsU8ViewMut,
    stack: *mut u32,
    stack_len: usize,
    stats: *mut FxsLinkStats,
) -> Checked<()> {
    // SAFETY: readable descriptor by the caller's guarantee.
    let m = unsafe { image(map, 1)? };
    let s = buf(stack, stack_len, true)?;
    let st = optional(stats)?;
    disjoint(&[m.span(), s.span(), st.map_or(Span::EMPTY, |b| b.span())])?;
    // SAFETY: checked and disjoint.
    let (mut mv, s) = unsafe { (m.view_mut()?, s.slice_mut()) };
    let r = kernel(hysteresis::link(&mut mv, s))?;
    if let Some(st) = st {
        // SAFETY: one checked, writable `fxs_link_stats`, disjoint from the rest.
        unsafe {
            st.slice_mut()[0] = FxsLinkStats {
                edges: r.edges,
                passes: r.passes,
                deferred: r.deferred,
                peak_stack: r.peak_stack,
            }
        };
    }
    Ok(())
}
