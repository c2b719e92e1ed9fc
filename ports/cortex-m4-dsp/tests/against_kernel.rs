//! The port against the kernel it replaces, on random frames: sizes 1..=40
//! by 1..=9 (every width modulo 4, frames shorter than the tap window),
//! padded rows, both border rules, every fill value. The kernel crate is
//! the reference here; it is itself held to the golden vectors and to the
//! `f64` contracts by `fixsight-verify` (the port-check model of a vendor
//! port: bit-exact to the published integer model).

use fixsight::filter::{self, Border};
use fixsight::{Error, ImageView, ImageViewMut};
use fixsight_port_cortex_m4_dsp::filter::{binomial5, scratch_words, sobel_x};
use proptest::prelude::*;

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
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn binomial5_equals_the_kernel((w, h, stride, px) in frame(), b in border()) {
        let src = ImageView::new(&px, w, h, stride).unwrap();
        let mut ours = vec![0x3Cu8; stride * h];
        let mut theirs = ours.clone();
        let mut scratch = vec![0xDEAD_BEEFu32; scratch_words(w)];
        binomial5(&src, &mut ImageViewMut::new(&mut ours, w, h, stride).unwrap(), b, &mut scratch)
            .unwrap();
        filter::binomial5(b)
            .apply(&src, &mut ImageViewMut::new(&mut theirs, w, h, stride).unwrap(), &mut vec![0; w])
            .unwrap();
        // Padding included: neither writes past the end of a row.
        prop_assert_eq!(ours, theirs);
    }

    #[test]
    fn sobel_x_equals_the_kernel((w, h, stride, px) in frame(), b in border()) {
        let src = ImageView::new(&px, w, h, stride).unwrap();
        let mut ours = vec![0x3C3Ci16; stride * h];
        let mut theirs = ours.clone();
        let mut scratch = vec![0xDEAD_BEEFu32; scratch_words(w)];
        sobel_x(&src, &mut ImageViewMut::new(&mut ours, w, h, stride).unwrap(), b, &mut scratch)
            .unwrap();
        filter::sobel_x(b)
            .apply(&src, &mut ImageViewMut::new(&mut theirs, w, h, stride).unwrap(), &mut vec![0; w])
            .unwrap();
        prop_assert_eq!(ours, theirs);
    }
}

/// Extreme accumulators: all 255 reaches the largest lane sum of the
/// binomial's row pass (16 * 4080 + 128), stripes two columns wide the
/// extreme Sobel responses (+-1020), all 0 and a 0/255 checkerboard the
/// other corners; at a width that is a multiple of 4 and one that is not.
#[test]
fn extreme_frames_equal_the_kernel() {
    for w in [16usize, 19] {
        let h = 7;
        for kind in 0..4 {
            let px: Vec<u8> = (0..w * h)
                .map(|i| match kind {
                    0 => 255,
                    1 => 0,
                    2 => {
                        if (i % w / 2) % 2 == 0 {
                            255
                        } else {
                            0
                        }
                    }
                    _ => {
                        if (i % w + i / w) % 2 == 0 {
                            255
                        } else {
                            0
                        }
                    }
                })
                .collect();
            let src = ImageView::new(&px, w, h, w).unwrap();
            for b in [Border::Clamp, Border::Fill(0), Border::Fill(255)] {
                let mut scratch = vec![0u32; scratch_words(w)];
                let (mut ours, mut theirs) = (vec![0u8; w * h], vec![0u8; w * h]);
                binomial5(
                    &src,
                    &mut ImageViewMut::new(&mut ours, w, h, w).unwrap(),
                    b,
                    &mut scratch,
                )
                .unwrap();
                filter::binomial5(b)
                    .apply(
                        &src,
                        &mut ImageViewMut::new(&mut theirs, w, h, w).unwrap(),
                        &mut vec![0; w],
                    )
                    .unwrap();
                assert_eq!(ours, theirs, "binomial5 w {w} kind {kind} {b:?}");
                let (mut ours, mut theirs) = (vec![0i16; w * h], vec![0i16; w * h]);
                sobel_x(
                    &src,
                    &mut ImageViewMut::new(&mut ours, w, h, w).unwrap(),
                    b,
                    &mut scratch,
                )
                .unwrap();
                filter::sobel_x(b)
                    .apply(
                        &src,
                        &mut ImageViewMut::new(&mut theirs, w, h, w).unwrap(),
                        &mut vec![0; w],
                    )
                    .unwrap();
                assert_eq!(ours, theirs, "sobel_x w {w} kind {kind} {b:?}");
                if kind == 2 && b == Border::Clamp {
                    assert!(
                        theirs.iter().any(|&g| g.abs() == 1020),
                        "reaches the extreme"
                    );
                }
            }
        }
    }
}

#[test]
fn bad_inputs_give_typed_errors() {
    let px = [0u8; 24];
    let src = ImageView::new(&px, 6, 4, 6).unwrap();
    let mut out = [0u8; 24];
    let mut short = [0u32; 5];
    let e = binomial5(
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
    let mut scratch = [0u32; 16];
    let e = binomial5(
        &src,
        &mut ImageViewMut::new(&mut out, 4, 6, 4).unwrap(),
        Border::Clamp,
        &mut scratch,
    );
    assert!(matches!(e, Err(Error::SizeMismatch { .. })), "{e:?}");
    let rgb = [0u8; 6 * 4 * 3];
    let src3 = ImageView::interleaved(&rgb, 6, 4, 18, 3).unwrap();
    let mut g = [0i16; 24];
    let e = sobel_x(
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
