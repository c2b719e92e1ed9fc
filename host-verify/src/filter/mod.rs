//! `f64` reference and contract for `fixsight::filter` (separable filters).
//!
//! The reference computes the 2-D correlation directly (a double sum over
//! both tap sets, no separation, no line buffers) on the border-extended
//! image, in `f64`, with the taps as real numbers `coef / 2^shift`. All
//! products are dyadic rationals far below 2^53, so the `f64` sum is exact;
//! the documented final rounding `floor(v + 1/2)` and saturation then give
//! the integer the kernel must produce.
//!
//! **Contract: bit-exact**, for every preset, both border rules, every demo
//! scene, whole-frame and streaming forms (which must also equal each
//! other).
//!
//! Kernel ids (golden `kernel` field, report row, on-target row): one per
//! preset function, `filter.binomial3`, `filter.binomial5`,
//! `filter.binomial7`, `filter.sobel_x`, `filter.sobel_y`,
//! `filter.scharr_x`, `filter.scharr_y`, with params
//! `{"border": "clamp" | {"fill": u8}}` (taps and output type are the
//! preset's); and `filter.separable` (`filter::separable`, caller-chosen
//! taps), params
//! `{"h": [i16...], "h_shift": u32, "v": [i16...], "v_shift": u32,
//!   "border": "clamp" | {"fill": u8}, "output": "u8" | "i16"}`;
//! and `filter.filter_stream` (`filter::FilterStream`, the type in snake
//! case): the filter of those same params run through a row stream, input
//! rows pushed one at a time top to bottom, then flushed; its output equals
//! the whole frame's.
//! Input `src` (u8), output `dst` (u8 or i16).
//!
//! | file | holds |
//! |---|---|
//! | `reference.rs` | the `f64` reference |
//! | `run.rs` | how the host calls the kernel (whole frame, row stream) |
//! | `check.rs` | the contract checks on the demo scenes |
//! | `golden.rs` | golden cases, params, `run_vector` |

pub mod check;
pub mod golden;
pub mod reference;
pub mod run;

use crate::family::Family;
use fixsight::filter::{self, Border, SeparableFilter, Taps};
use serde::{Deserialize, Serialize};

/// The family entry.
pub const FAMILY: Family = Family {
    name: "filter",
    kernels: &[
        "filter.binomial3",
        "filter.binomial5",
        "filter.binomial7",
        "filter.sobel_x",
        "filter.sobel_y",
        "filter.scharr_x",
        "filter.scharr_y",
        "filter.separable",
        "filter.filter_stream",
    ],
    composed_on_host: false,
    check: |scenes, _lens| check::check(scenes),
    golden_cases: golden::golden_cases,
    run_vector: golden::run_vector,
};

/// Output element type in golden params.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "lowercase")]
pub enum OutputParam {
    /// Smoothing output.
    U8,
    /// Derivative output.
    I16,
}

/// A preset: its kernel id (`filter.<preset function>`), constructor and
/// output type.
pub struct Preset {
    /// Kernel id, equal to the report row name.
    pub id: &'static str,
    /// The kernel crate's constructor.
    pub make: fn(Border) -> SeparableFilter,
    /// Output element type.
    pub output: OutputParam,
}

/// Every preset of `fixsight::filter`.
pub const PRESETS: [Preset; 7] = [
    Preset {
        id: "filter.binomial3",
        make: filter::binomial3,
        output: OutputParam::U8,
    },
    Preset {
        id: "filter.binomial5",
        make: filter::binomial5,
        output: OutputParam::U8,
    },
    Preset {
        id: "filter.binomial7",
        make: filter::binomial7,
        output: OutputParam::U8,
    },
    Preset {
        id: "filter.sobel_x",
        make: filter::sobel_x,
        output: OutputParam::I16,
    },
    Preset {
        id: "filter.sobel_y",
        make: filter::sobel_y,
        output: OutputParam::I16,
    },
    Preset {
        id: "filter.scharr_x",
        make: filter::scharr_x,
        output: OutputParam::I16,
    },
    Preset {
        id: "filter.scharr_y",
        make: filter::scharr_y,
        output: OutputParam::I16,
    },
];

/// Kernel id of a filter with caller-chosen taps (`filter::separable`).
pub const CUSTOM_ID: &str = "filter.separable";

/// Kernel id of the row-streaming form (`filter::FilterStream`), params as
/// [`CUSTOM_ID`]'s.
pub const STREAM_ID: &str = "filter.filter_stream";

/// The tap sets checked under [`STREAM_ID`]: `binomial5` (5-row ring), the
/// asymmetric 9 x 5 set (`u8`) and `sobel_y` (`i16`, 3-row ring).
fn stream_filters(border: Border) -> Vec<(SeparableFilter, OutputParam)> {
    vec![
        (filter::binomial5(border), OutputParam::U8),
        custom_filters(border)[0],
        (filter::sobel_y(border), OutputParam::I16),
    ]
}

/// The preset with kernel id `id`.
pub fn preset(id: &str) -> Option<&'static Preset> {
    PRESETS.iter().find(|p| p.id == id)
}

/// The custom tap sets checked under `filter.separable`: an asymmetric
/// 9 x 5 set with negative taps and shifts on both axes (`u8` and `i16`
/// output), and a 9-tap smoothed derivative with a 1-tap cross axis.
fn custom_filters(border: Border) -> Vec<(SeparableFilter, OutputParam)> {
    let odd = filter::separable(
        Taps::new(&ODD_H, 6).expect("valid taps"),
        Taps::new(&ODD_V, 3).expect("valid taps"),
        border,
    )
    .expect("fits the accumulator");
    let deriv = filter::separable(
        Taps::new(&[-1, -14, -61, -88, 0, 88, 61, 14, 1], 7).expect("valid taps"),
        Taps::new(&[1], 0).expect("valid taps"),
        border,
    )
    .expect("fits the accumulator");
    vec![
        (odd, OutputParam::U8),
        (odd, OutputParam::I16),
        (deriv, OutputParam::I16),
    ]
}

/// Horizontal taps of the asymmetric custom case (shift 6).
const ODD_H: [i16; 9] = [-3, 5, 17, 40, 17, 5, -3, 1, 2];

/// Vertical taps of the asymmetric custom case (shift 3).
const ODD_V: [i16; 5] = [2, -7, 29, -7, 2];
