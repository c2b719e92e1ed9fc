//! `f64` references and contracts for `fixsight::gradient`.
//!
//! Inputs are the integer Sobel gradients of the demo scenes (the kernels
//! and the references see the same `i16` values), plus a sweep of the full
//! `i16` range in the tests.
//!
//! * `gradient.magnitude_l1` — reference `|gx| + |gy|` in `f64` (absolute
//!   values saturated at 32767 as documented). **Bit-exact.**
//! * `gradient.magnitude_l2_approx` — reference `sqrt(gx^2 + gy^2)`.
//!   **Tolerance**, relative: the checked figure per pixel is
//!   `max(0, |m - t| - 1/2) / t` (the kernel's estimation error once its
//!   final half-LSB rounding is allowed for), and the analytical bound is
//!   the alpha-max-plus-beta-min worst case
//!   `sqrt(alpha^2 + beta^2) - 1 = 4.0266 %` derived in the kernel docs.
//! * `gradient.magnitude_l2_round` — reference `sqrt(gx^2 + gy^2)` in
//!   `f64` rounded to the nearest integer (`f64::round`; `sqrt` of an
//!   integer below `2^31` is never within `f64` error of a half-integer, so
//!   the rounding direction is never in doubt). **Bit-exact.**
//! * `gradient.direction` — reference `atan2(gy, gx)` in degrees, folded to
//!   `[0, 180)`, sector `round(theta / 45) mod 4`. **Bit-exact.**
//!
//! * `gradient.angles` — reference `atan2(gy, gx)` folded to `[0, 180)`
//!   degrees; **tolerance** 0.004881 degrees (derived in the kernel docs);
//!   the row is built by `crate::lines::angle_row`, beside the line voting
//!   that gates with it.
//!
//! Golden kernel ids: `gradient.magnitude_l1`, `gradient.magnitude_l2_approx`,
//! `gradient.magnitude_l2_round` (outputs `mag`, u16), `gradient.direction` (output `dir`, u8),
//! `gradient.angles` (output `angle`, u16, 65536 = 180 degrees); inputs
//! `gx`, `gy` (i16); params `{}`.

pub mod check;
pub mod golden;
pub mod reference;
pub mod run;
#[cfg(test)]
mod tests;

use crate::family::Family;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "gradient",
    kernels: &[
        "gradient.magnitude_l1",
        "gradient.magnitude_l2_approx",
        "gradient.magnitude_l2_round",
        "gradient.direction",
        "gradient.angles",
    ],
    composed_on_host: false,
    check: |scenes, _lens| check::check(scenes),
    golden_cases: golden::golden_cases,
    run_vector: golden::run_vector,
};
