//! Property tests of the filter and gradient kernels (built with overflow
//! checks on, so any arithmetic overflow fails the test).

use fixsight::filter::{self, Border, FilterStream, SeparableFilter, Taps};
use fixsight::gradient;
use fixsight::{ImageView, ImageViewMut};
use proptest::prelude::*;

fn whole<T: filter::FilterOutput>(f: &SeparableFilter, img: &[u8], w: usize, h: usize) -> Vec<T> {
    let mut out = vec![T::default(); w * h];
    let mut scratch = vec![0i32; w];
    f.apply(
        &ImageView::new(img, w, h, w).unwrap(),
        &mut ImageViewMut::new(&mut out, w, h, w).unwrap(),
        &mut scratch,
    )
    .unwrap();
    out
}

fn streamed<T: filter::FilterOutput>(
    f: &SeparableFilter,
    img: &[u8],
    w: usize,
    h: usize,
) -> Vec<T> {
    let mut ring = vec![0u8; FilterStream::ring_rows(f) * w];
    let mut acc = vec![0i32; w];
    let mut s = FilterStream::new(f, w, h, &mut ring, &mut acc).unwrap();
    let mut out = vec![T::default(); w * h];
    let mut row = vec![T::default(); w];
    for y in 0..h {
        if let Some(oy) = s.push_row(&img[y * w..(y + 1) * w], &mut row).unwrap() {
            out[oy * w..(oy + 1) * w].copy_from_slice(&row);
        }
    }
    while let Some(oy) = s.flush_row(&mut row).unwrap() {
        out[oy * w..(oy + 1) * w].copy_from_slice(&row);
    }
    out
}

fn image() -> impl Strategy<Value = (usize, usize, Vec<u8>)> {
    (1usize..24, 1usize..20)
        .prop_flat_map(|(w, h)| (Just(w), Just(h), prop::collection::vec(any::<u8>(), w * h)))
}

fn border() -> impl Strategy<Value = Border> {
    prop_oneof![Just(Border::Clamp), any::<u8>().prop_map(Border::Fill)]
}

/// Any tap set the constructor accepts (odd length 1..=9, i16 taps scaled
/// down so that most combinations fit the accumulator).
fn taps() -> impl Strategy<Value = Taps> {
    (0usize..5, 0u32..=8).prop_flat_map(|(half, shift)| {
        prop::collection::vec(-2000i16..=2000, 2 * half + 1)
            .prop_map(move |c| Taps::new(&c, shift).unwrap())
    })
}

fn presets(b: Border) -> [SeparableFilter; 7] {
    [
        filter::binomial3(b),
        filter::binomial5(b),
        filter::binomial7(b),
        filter::sobel_x(b),
        filter::sobel_y(b),
        filter::scharr_x(b),
        filter::scharr_y(b),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(96))]

    #[test]
    fn constant_image_stays_constant(v in any::<u8>(), w in 1usize..20, h in 1usize..20, which in 0usize..3) {
        let img = vec![v; w * h];
        for b in [Border::Clamp, Border::Fill(v)] {
            let f = presets(b)[which];
            prop_assert!(whole::<u8>(&f, &img, w, h).iter().all(|&p| p == v));
            // Derivatives of a constant image are zero.
            for d in &presets(b)[3..] {
                prop_assert!(whole::<i16>(d, &img, w, h).iter().all(|&p| p == 0));
            }
        }
    }

    #[test]
    fn streaming_equals_whole_frame((w, h, img) in image(), b in border(), t in taps(), u in taps()) {
        for f in presets(b) {
            prop_assert_eq!(whole::<u8>(&f, &img, w, h), streamed::<u8>(&f, &img, w, h));
            prop_assert_eq!(whole::<i16>(&f, &img, w, h), streamed::<i16>(&f, &img, w, h));
        }
        if let Ok(f) = SeparableFilter::new(t, u, b) {
            prop_assert_eq!(whole::<u8>(&f, &img, w, h), streamed::<u8>(&f, &img, w, h));
            prop_assert_eq!(whole::<i16>(&f, &img, w, h), streamed::<i16>(&f, &img, w, h));
        }
    }

    /// Any accepted tap set on extreme inputs (all 0, all 255, checker)
    /// runs without overflow (overflow checks are on in tests).
    #[test]
    fn accepted_filters_never_overflow(t in taps(), u in taps(), b in border(), w in 1usize..16, h in 1usize..12) {
        if let Ok(f) = SeparableFilter::new(t, u, b) {
            for pattern in 0..3 {
                let img: Vec<u8> = (0..w * h).map(|i| match pattern {
                    0 => 0,
                    1 => 255,
                    _ => if (i % w + i / w) % 2 == 0 { 255 } else { 0 },
                }).collect();
                let _ = whole::<u8>(&f, &img, w, h);
                let _ = whole::<i16>(&f, &img, w, h);
            }
        }
    }

    /// With symmetric horizontal taps, filtering commutes with mirroring
    /// the image left-right; likewise vertical taps with up-down.
    #[test]
    fn symmetric_taps_commute_with_mirroring((w, h, img) in image(), b in border()) {
        let mirror_x = |v: &[u8]| -> Vec<u8> {
            (0..h).flat_map(|y| (0..w).rev().map(move |x| (y, x))).map(|(y, x)| v[y * w + x]).collect()
        };
        let mirror_y = |v: &[u8]| -> Vec<u8> {
            (0..h).rev().flat_map(|y| (0..w).map(move |x| (y, x))).map(|(y, x)| v[y * w + x]).collect()
        };
        for f in &presets(b)[..3] {
            prop_assert_eq!(whole::<u8>(f, &mirror_x(&img), w, h), mirror_x(&whole::<u8>(f, &img, w, h)));
            prop_assert_eq!(whole::<u8>(f, &mirror_y(&img), w, h), mirror_y(&whole::<u8>(f, &img, w, h)));
        }
    }

    /// Gradient kernels run over the full i16 range without overflow, and
    /// the L2 estimate stays inside its documented bound.
    #[test]
    fn gradient_kernels_full_range(gx in any::<i16>(), gy in any::<i16>()) {
        let t = ((gx as f64).abs().min(32767.0)).hypot((gy as f64).abs().min(32767.0));
        let m = gradient::l2_approx(gx, gy) as f64;
        let bound = gradient::L2_APPROX_REL_ERR_PPM as f64 * 1e-6;
        prop_assert!(((m - t).abs() - 0.5).max(0.0) <= bound * t);
        prop_assert!(gradient::direction_sector(gx, gy) < 4);
        prop_assert!(gradient::l1(gx, gy) as u32 <= 65534);
    }
}
