//! `fxs_gradient_*`: magnitude, direction and angle of a derivative pair
//! (kernel ids `gradient.*`), over `fixsight::gradient`. A view of height 1 is the
//! row form.

use crate::boundary::{disjoint, image, Checked, Desc, FxsI16View, FxsU16ViewMut, FxsU8ViewMut};
use crate::status::{finish, kernel, FxsStatus};
use fixsight::{gradient, ImageView, ImageViewMut};

/// A kernel of `gx`, `gy` into one output image of `T`.
type PairKernel<T> =
    fn(&ImageView<'_, i16>, &ImageView<'_, i16>, &mut ImageViewMut<'_, T>) -> fixsight::Result<()>;

/// Checks the three descriptors and runs `k`.
///
/// # Safety
/// As the exported functions: readable descriptors whose data hold the
/// stated element counts, untouched by others during the call.
unsafe fn pair<T: Copy, D: Desc<Elem = T>>(
    gx: *const FxsI16View,
    gy: *const FxsI16View,
    out: *const D,
    k: PairKernel<T>,
) -> Checked<()> {
    // SAFETY: readable descriptors by the caller's guarantee.
    let (x, y, o) = unsafe { (image(gx, 1)?, image(gy, 1)?, image(out, 1)?) };
    disjoint(&[x.span(), y.span(), o.span()])?;
    // SAFETY: checked and disjoint (the two inputs may share memory).
    let (xv, yv, mut ov) = unsafe { (x.view()?, y.view()?, o.view_mut()?) };
    kernel(k(&xv, &yv, &mut ov))
}

/// `fxs_gradient_magnitude_l1`: `|gx| + |gy|` (kernel id `gradient.magnitude_l1`).
///
/// # Safety
/// See `pair`.
#[no_mangle]
pub unsafe extern "C" fn fxs_gradient_magnitude_l1(
    gx: *const FxsI16View,
    gy: *const FxsI16View,
    mag: *const FxsU16ViewMut,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { pair(gx, gy, mag, gradient::magnitude_l1) })
}

/// `fxs_gradient_magnitude_l2_approx`: the 4 % L2 estimate.
///
/// # Safety
/// See `pair`.
#[no_mangle]
pub unsafe extern "C" fn fxs_gradient_magnitude_l2_approx(
    gx: *const FxsI16View,
    gy: *const FxsI16View,
    mag: *const FxsU16ViewMut,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { pair(gx, gy, mag, gradient::magnitude_l2_approx) })
}

/// `fxs_gradient_magnitude_l2_round`: the nearest integer to the L2 norm.
///
/// # Safety
/// See `pair`.
#[no_mangle]
pub unsafe extern "C" fn fxs_gradient_magnitude_l2_round(
    gx: *const FxsI16View,
    gy: *const FxsI16View,
    mag: *const FxsU16ViewMut,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { pair(gx, gy, mag, gradient::magnitude_l2_round) })
}

/// `fxs_gradient_direction`: 4-sector direction.
///
/// # Safety
/// See `pair`.
#[no_mangle]
pub unsafe extern "C" fn fxs_gradient_direction(
    gx: *const FxsI16View,
    gy: *const FxsI16View,
    dir: *const FxsU8ViewMut,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { pair(gx, gy, dir, gradient::direction) })
}

/// `fxs_gradient_angles`: the angle of each gradient, `uint16_t` binary
/// angle (65536 = 180 degrees; kernel id `gradient.angles`).
///
/// # Safety
/// See `pair`.
#[no_mangle]
pub unsafe extern "C" fn fxs_gradient_angles(
    gx: *const FxsI16View,
    gy: *const FxsI16View,
    angle: *const FxsU16ViewMut,
) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { pair(gx, gy, angle, gradient::angles) })
}
