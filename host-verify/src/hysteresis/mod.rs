//! Integer reference models of `fixsight::hysteresis`, written from the
//! kernel's documented model:
//!
//! * [`classify`](reference::classify): STRONG (2) when `m >= high`, WEAK (1) when
//!   `low <= m < high`, else 0;
//! * [`link`](reference::link): label the 8-connected components of the nonzero codes
//!   (breadth first, on the heap) and keep a component when it holds a
//!   STRONG pixel; the rule of Canny 1986 ("A Computational Approach to
//!   Edge Detection", IEEE PAMI 8(6)) stated as connected components;
//! * [`auto_thresholds`](reference::auto_thresholds): the histogram rule computed by sorting the bin
//!   indices of the nonzero magnitudes and taking the `target`-th smallest.
//!
//! Kernel ids (contracts **bit-exact**, checked on the edge chain's
//! intermediates on the demo scenes, see [`crate::edge_chain`]):
//!
//! | id | kernel API | inputs | params | outputs |
//! |---|---|---|---|---|
//! | `hysteresis.thresholds` | `Thresholds::from_histogram` | `mag` u16 | `{bins, shift, high_permille, low_ratio_u0f16}` | `thresholds` u16 2x1 (`low`, `high`) |
//! | `hysteresis.classify` | `classify` | `mag` u16 | `{low, high}` | `codes` u8 |
//! | `hysteresis.link` | `link` | `codes` u8 | `{stack}` | `edges` u8 |
//!
//! `low_ratio_u0f16` is the raw bits of the `U0F16` ratio `low / high`
//! (`31457` is 0.48); `stack` the work-stack entries (at least 8).

pub mod check;
pub mod golden;
pub mod reference;
#[cfg(test)]
mod tests;

use crate::family::Family;

/// The family entry.
pub const FAMILY: Family = Family {
    name: "hysteresis",
    kernels: &[
        "hysteresis.thresholds",
        "hysteresis.classify",
        "hysteresis.link",
    ],
    composed_on_host: false,
    check: |scenes, _lens| check::check(scenes),
    golden_cases: golden::golden_cases,
    run_vector: golden::run_vector,
};
