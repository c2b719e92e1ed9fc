//! The port against the kernel it replaces, on random frames: sizes 1..=40
//! by 1..=9 (every width modulo 4, frames shorter than the tap window),
//! padded rows, both border rules, every fill value; and on the frames
//! that reach the extreme accumulators. The kernel crate is the reference
//! here; it is itself held to the golden vectors and to the `f64`
//! contracts by `fixsight-verify` (the port-check model of a vendor port:
//! bit-exact to the published integer model).

use fixsight::filter::{self, Border, FilterOutput, SeparableFilter};
use fixsight::{Error, ImageView, ImageViewMut, Result};
use fixsight_port_cortex_m4_dsp::filter as port;
use fixsight_port_cortex_m4_dsp::filter::scratch_words;
use proptest::prelude::*;

type PortFn<T> = fn(&ImageView<'_, u8>, &mut ImageViewMut<'_, T>, Border, &mut [u32]) -> Result<()>;

/// A kernel crate preset.
type Preset = fn(Border) -> SeparableFilter;

/// One claimed kernel: id, port, kernel crate preset.
type Case<T> = (&'static str, PortFn<T>, Preset);

/// The `u8` kernels.
const SMOOTHING: [Case<u8>; 2] = [
    ("filter.binomial3", port::binomial3, filter::binomial3),
    ("filter.binomial5", port::binomial5, filter::binomial5),
];

/// The `i16` kernels.
const DERIVATIVES: [Case<i16>; 4] = [
    ("filter.sobel_x", port::sobel_x, filter::sobel_x),
    ("filter.sobel_y", port::sobel_y, filter::sobel_y),
    ("filter.scharr_x", port::scharr_x, filter::scharr_x),
    ("filter.scharr_y", port::scharr_y, filter::scharr_y),
];

/// Port and kernel on one frame (rows `stride` apart), both outputs
/// starting from the same filled buffer, padding included.
fn both<T: FilterOutput + PartialEq + std::fmt::Debug>(
    (p, k): (PortFn<T>, Preset),
    (w, h, stride, px): (usize, usize, usize, &[u8]),
    b: Border,
    fill: T,
) -> (Vec<T>, Vec<T>) {
    let src = ImageView::new(px, w, h, stride).unwrap();
    let mut ours = vec![fill; stride * h];
    let mut theirs = ours.clone();
    let mut scratch = vec![0xDEAD_BEEFu32; scratch_words(w)];
    p(
        &src,
        &mut ImageViewMut::new(&mut ours, w, h, stride).unwrap(),
        b,
        &mut scratch,
    )
    .unwrap();
    k(b).apply(
        &src,
        &mut ImageViewMut::new(&mut theirs, w, h, stride).unwrap(),
        &mut vec![0; w],
    )
    .unwrap();
    (ours, theirs)
}

fn border() -> impl Strategy<Value = Border> {
    prop_oneof![Just(Border::Clamp), any::<u8>().prop_map(Border::Fill)]
}

/// A frame: width, height, stride and the pixels (row padding included).
fn frame() -> impl Strategy<Value = (usize, usize, usize, Vec<u8>)> {
    (1usize..=40, 1usize..=9, 0usize..=5).prop_flat_map(|(w, h, pad)| {
        let stride = w + pad;
        (
            Just(w),
            Just(h),
            Just(stride),
            prop::collection::vec(any::<u8>(), stride * h),
        )
    })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(128))]

    #[test]
    fn smoothing_equals_the_kernel((w, h, stride, px) in frame(), b in border()) {
        for (id, p, k) in SMOOTHING {
            let (ours, theirs) = both((p, k), (w, h, stride, &px), b, 0x3Cu8);
            // Padding included: neither writes past the end of a row.
            prop_assert_eq!(ours, theirs, "{}", id);
        }
    }

    #[test]
    fn derivatives_equal_the_kernel((w, h, stride, px) in frame(), b in border()) {
        for (id, p, k) in DERIVATIVES {
            let (ours, theirs) = both((p, k), (w, h, stride, &px), b, 0x3C3Ci16);
            prop_assert_eq!(ours, theirs, "{}", id);
        }
    }
}

/// Extreme accumulators: all 255 reaches the largest lane sums of the
/// smoothing row passes (16 * 4080 + 128 and 4 * 1020 + 8), stripes two
/// columns (rows) wide the extreme x (y) derivatives, all 0 and a 0/255
/// checkerboard the other corners; at a width that is a multiple of 4 and
/// one that is not.
#[test]
fn extreme_frames_equal_the_kernel() {
    let mut extremes = [false; 4];
    for w in [16usize, 19] {
        let h = 7;
        for kind in 0..5 {
            let px: Vec<u8> = (0..w * h)
                .map(|i| {
                    let (x, y) = (i % w, i / w);
                    let on = match kind {
                        0 => true,
                        1 => false,
                        2 => (x / 2) % 2 == 0,
                        3 => (y / 2) % 2 == 0,
                        _ => (x + y) % 2 == 0,
                    };
                    if on {
                        255
                    } else {
                        0
                    }
                })
                .collect();
            for b in [Border::Clamp, Border::Fill(0), Border::Fill(255)] {
                for (id, p, k) in SMOOTHING {
                    let (ours, theirs) = both((p, k), (w, h, w, &px), b, 0u8);
                    assert_eq!(ours, theirs, "{id} w {w} kind {kind} {b:?}");
                }
                for (n, (id, p, k)) in DERIVATIVES.into_iter().enumerate() {
                    let (ours, theirs) = both((p, k), (w, h, w, &px), b, 0i16);
                    assert_eq!(ours, theirs, "{id} w {w} kind {kind} {b:?}");
                    let top = if n < 2 { 1020 } else { 4080 };
                    extremes[n] |= theirs.iter().any(|&g| g.abs() == top);
                }
            }
        }
    }
    assert_eq!(extremes, [true; 4], "every derivative reaches its extreme");
}

#[test]
fn bad_inputs_give_typed_errors() {
    let px = [0u8; 24];
    let src = ImageView::new(&px, 6, 4, 6).unwrap();
    let mut out = [0u8; 24];
    let mut short = [0u32; 5];
    for (_, p, _) in SMOOTHING {
        let e = p(
            &src,
            &mut ImageViewMut::new(&mut out, 6, 4, 6).unwrap(),
            Border::Clamp,
            &mut short,
        );
        assert_eq!(
            e,
            Err(Error::BufferTooShort {
                what: "port filter scratch",
                needed: scratch_words(6),
                got: 5
            })
        );
    }
    let mut scratch = [0u32; 16];
    let e = port::binomial5(
        &src,
        &mut ImageViewMut::new(&mut out, 4, 6, 4).unwrap(),
        Border::Clamp,
        &mut scratch,
    );
    assert!(matches!(e, Err(Error::SizeMismatch { .. })), "{e:?}");
    let rgb = [0u8; 6 * 4 * 3];
    let src3 = ImageView::interleaved(&rgb, 6, 4, 18, 3).unwrap();
    let mut g = [0i16; 24];
    for (_, p, _) in DERIVATIVES {
        let e = p(
            &src3,
            &mut ImageViewMut::new(&mut g, 6, 4, 6).unwrap(),
            Border::Clamp,
            &mut scratch,
        );
        assert!(
            matches!(e, Err(Error::UnsupportedChannels { channels: 3, .. })),
            "{e:?}"
        );
    }
}
