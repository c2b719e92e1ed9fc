//! QVGA (320 x 240) benchmark frames: the instructions-per-pixel figures.
//!
//! The stages form the front of the edge pipeline on one synthetic frame,
//! each reading what an earlier stage wrote, so every kernel sees realistic
//! data (the direction kernel's branches depend on it):
//!
//! ```text
//! frame --binomial5--> smooth --sobel_x--> gx --+--magnitude_l1--> mag
//!                             --sobel_y--> gy --+--magnitude_l2--> mag2
//!                                               +--direction-----> dir
//! ```
//!
//! plus the other presets (binomial3/7, Scharr) for comparison. Each stage
//! is one measured call (instruction window and stack painting, like a
//! golden vector). Every stage uses replicate borders.
//!
//! The frame is integer-only and deterministic: a ramp `64 + (x + 2y) / 8`,
//! plus 96 inside a disc of radius 70 centred at (110, 120) and inside the
//! rectangle x in 200..290, y in 40..200, plus noise `0..15` from the LCG
//! `s = s * 1664525 + 1013904223` (top 4 bits), clamped to 255.

use crate::kernels::{Arena, Buf, Img, Param, Params};
use crate::vectors::Elem;
use crate::Console;
use core::fmt::Write;

/// Frame width.
pub const WIDTH: usize = 320;
/// Frame height.
pub const HEIGHT: usize = 240;

/// Image slots shared by the stages.
const SLOTS: [Elem; 9] = [
    Elem::U8,  // 0 frame
    Elem::U8,  // 1 smooth
    Elem::I16, // 2 gx
    Elem::I16, // 3 gy
    Elem::U16, // 4 mag (L1)
    Elem::U16, // 5 mag2 (approx L2)
    Elem::U8,  // 6 dir
    Elem::U8,  // 7 scratch u8
    Elem::I16, // 8 scratch i16
];

/// One measured stage.
pub struct Stage {
    /// Report name.
    pub name: &'static str,
    /// Kernel id (dispatched through the generated table).
    pub kernel: &'static str,
    /// Parameters, in the golden-manifest form.
    pub params: &'static [(&'static str, Param)],
    /// Input slots.
    pub inputs: &'static [usize],
    /// Output slots.
    pub outputs: &'static [usize],
}

const fn sep(
    h: &'static [i64],
    hs: i64,
    v: &'static [i64],
    vs: i64,
    out: &'static str,
) -> [(&'static str, Param); 6] {
    [
        ("h", Param::Ints(h)),
        ("h_shift", Param::Int(hs)),
        ("v", Param::Ints(v)),
        ("v_shift", Param::Int(vs)),
        ("border", Param::Str("replicate")),
        ("output", Param::Str(out)),
    ]
}

const BINOMIAL3: [(&str, Param); 6] = sep(&[1, 2, 1], 2, &[1, 2, 1], 2, "u8");
const BINOMIAL5: [(&str, Param); 6] = sep(&[1, 4, 6, 4, 1], 4, &[1, 4, 6, 4, 1], 4, "u8");
const BINOMIAL7: [(&str, Param); 6] = sep(
    &[1, 6, 15, 20, 15, 6, 1],
    6,
    &[1, 6, 15, 20, 15, 6, 1],
    6,
    "u8",
);
const SOBEL_X: [(&str, Param); 6] = sep(&[-1, 0, 1], 0, &[1, 2, 1], 0, "i16");
const SOBEL_Y: [(&str, Param); 6] = sep(&[1, 2, 1], 0, &[-1, 0, 1], 0, "i16");
const SCHARR_X: [(&str, Param); 6] = sep(&[-1, 0, 1], 0, &[3, 10, 3], 0, "i16");

/// The stages in run order (`kernel:` lines are read by `build.rs`).
pub static STAGES: &[Stage] = &[
    Stage {
        name: "binomial5",
        kernel: "filter.separable",
        params: &BINOMIAL5,
        inputs: &[0],
        outputs: &[1],
    },
    Stage {
        name: "sobel_x",
        kernel: "filter.separable",
        params: &SOBEL_X,
        inputs: &[1],
        outputs: &[2],
    },
    Stage {
        name: "sobel_y",
        kernel: "filter.separable",
        params: &SOBEL_Y,
        inputs: &[1],
        outputs: &[3],
    },
    Stage {
        name: "magnitude_l1",
        kernel: "gradient.magnitude_l1",
        params: &[],
        inputs: &[2, 3],
        outputs: &[4],
    },
    Stage {
        name: "magnitude_l2",
        kernel: "gradient.magnitude_l2",
        params: &[],
        inputs: &[2, 3],
        outputs: &[5],
    },
    Stage {
        name: "direction",
        kernel: "gradient.direction",
        params: &[],
        inputs: &[2, 3],
        outputs: &[6],
    },
    Stage {
        name: "binomial3",
        kernel: "filter.separable",
        params: &BINOMIAL3,
        inputs: &[0],
        outputs: &[7],
    },
    Stage {
        name: "binomial7",
        kernel: "filter.separable",
        params: &BINOMIAL7,
        inputs: &[0],
        outputs: &[7],
    },
    Stage {
        name: "scharr_x",
        kernel: "filter.separable",
        params: &SCHARR_X,
        inputs: &[1],
        outputs: &[8],
    },
];

/// Fills the synthetic frame (see the module docs).
fn fill_frame(frame: &mut [u8]) {
    let mut s: u32 = 0x1234_5678;
    for y in 0..HEIGHT {
        for x in 0..WIDTH {
            s = s.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
            let (xi, yi) = (x as i32, y as i32);
            let mut v = 64 + (xi + 2 * yi) / 8 + (s >> 28) as i32;
            let (dx, dy) = (xi - 110, yi - 120);
            if dx * dx + dy * dy < 70 * 70 {
                v += 96;
            }
            if (200..290).contains(&xi) && (40..200).contains(&yi) {
                v += 96;
            }
            frame[y * WIDTH + x] = v.min(255) as u8;
        }
    }
}

/// Runs every stage whose kernel this build serves and prints one `bench`
/// line per stage.
pub fn run(con: &mut Console, words: &mut [u32]) {
    let mut arena = Arena::new(words);
    let mut slots: [Img<'_>; SLOTS.len()] = Default::default();
    for (slot, &elem) in slots.iter_mut().zip(SLOTS.iter()) {
        match arena.image_filled(elem, WIDTH, HEIGHT, 1, 0) {
            Some(img) => *slot = img,
            None => {
                let _ = writeln!(con, "bench - - ERROR win - px 0 stack 0 arena full");
                return;
            }
        }
    }
    if let Buf::U8(f) = &mut slots[0].buf {
        fill_frame(f);
    }
    for st in STAGES {
        let Some(run) = crate::vectors::dispatch(st.kernel) else {
            continue;
        };
        let mut ins: [Img<'_>; 2] = Default::default();
        let mut outs: [Img<'_>; 1] = Default::default();
        for (d, &s) in ins.iter_mut().zip(st.inputs) {
            *d = core::mem::take(&mut slots[s]);
        }
        for (d, &s) in outs.iter_mut().zip(st.outputs) {
            *d = core::mem::take(&mut slots[s]);
        }
        let m = crate::measure(
            run,
            &Params::new(st.params),
            &ins[..st.inputs.len()],
            &mut outs[..st.outputs.len()],
            &mut arena,
        );
        for (d, &s) in ins.iter_mut().zip(st.inputs) {
            slots[s] = core::mem::take(d);
        }
        for (d, &s) in outs.iter_mut().zip(st.outputs) {
            slots[s] = core::mem::take(d);
        }
        let _ = write!(
            con,
            "bench {} {} {} win {} px {} stack {}",
            st.name,
            st.kernel,
            if m.result.is_ok() { "pass" } else { "ERROR" },
            m.window,
            WIDTH * HEIGHT,
            m.stack
        );
        match m.result {
            Ok(()) => {
                let _ = writeln!(con);
            }
            Err(e) => {
                let _ = writeln!(con, " {e}");
            }
        }
    }
}
