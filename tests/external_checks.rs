//! Checks of the filter and gradient kernels and their f64 references
//! against sources the project did not write. Each check names its source.

use fixsight::filter::{self, Border};
use fixsight_verify::filter::reference::{real_taps, reference_real};
use fixsight_verify::filter::run::run_whole;
use fixsight_verify::scene::demo_scenes;
use image::GrayImage;

/// n choose k, from the multiplicative formula.
fn choose(n: u64, k: u64) -> u64 {
    (0..k).fold(1u64, |acc, i| acc * (n - i) / (i + 1))
}

#[test]
fn binomial_presets_are_rows_of_pascals_triangle() {
    // Source: Pascal's triangle, rows 2, 4 and 6 — C(n, k) (any handbook,
    // e.g. Abramowitz & Stegun 1964, Handbook of Mathematical Functions,
    // Table 24.1 "Binomial coefficients").
    for (f, n) in [
        (filter::binomial3(Border::Clamp), 2u64),
        (filter::binomial5(Border::Clamp), 4),
        (filter::binomial7(Border::Clamp), 6),
    ] {
        let row: Vec<i32> = (0..=n).map(|k| choose(n, k) as i32).collect();
        assert_eq!(f.horizontal().coefficients(), &row[..]);
        assert_eq!(f.vertical().coefficients(), &row[..]);
        // Normalised by 2^n: the taps sum to exactly 1.
        assert_eq!(f.horizontal().sum(), 1i64 << f.horizontal().shift());
        assert_eq!(f.horizontal().shift() as u64, n);
    }
}

#[test]
fn binomial_kernel_variance_is_n_over_4() {
    // Source: the binomial distribution B(n, 1/2) has variance n p (1 - p)
    // = n/4 (Feller 1968, An Introduction to Probability Theory and Its
    // Applications, vol. 1, ch. IX).
    for (f, n) in [
        (filter::binomial3(Border::Clamp), 2.0),
        (filter::binomial5(Border::Clamp), 4.0),
        (filter::binomial7(Border::Clamp), 6.0),
    ] {
        let t = real_taps(f.horizontal());
        let r = (t.len() / 2) as f64;
        let mean: f64 = t.iter().enumerate().map(|(i, w)| (i as f64 - r) * w).sum();
        let var: f64 = t
            .iter()
            .enumerate()
            .map(|(i, w)| (i as f64 - r - mean).powi(2) * w)
            .sum();
        assert_eq!(mean, 0.0);
        assert_eq!(var, n / 4.0);
    }
}

/// 3x3 kernel of a separable filter as the outer product v^T h.
fn kernel3(f: &filter::SeparableFilter) -> [[i32; 3]; 3] {
    let (h, v) = (f.horizontal().coefficients(), f.vertical().coefficients());
    let mut k = [[0; 3]; 3];
    for (j, row) in k.iter_mut().enumerate() {
        for (i, c) in row.iter_mut().enumerate() {
            *c = v[j] * h[i];
        }
    }
    k
}

#[test]
fn sobel_and_scharr_coefficients() {
    // Source: Sobel & Feldman (1968), "A 3x3 isotropic gradient operator for
    // image processing" (talk at the Stanford AI Project; the operator as
    // reproduced in Gonzalez & Woods, Digital Image Processing, 3rd ed.
    // 2008, Fig. 10.14).
    assert_eq!(
        kernel3(&filter::sobel_x(Border::Clamp)),
        [[-1, 0, 1], [-2, 0, 2], [-1, 0, 1]]
    );
    assert_eq!(
        kernel3(&filter::sobel_y(Border::Clamp)),
        [[-1, -2, -1], [0, 0, 0], [1, 2, 1]]
    );
    // Source: Scharr (2000), "Optimale Operatoren in der Digitalen
    // Bildverarbeitung", PhD thesis, Univ. Heidelberg: smoothing [3 10 3]
    // across the derivative direction.
    assert_eq!(
        kernel3(&filter::scharr_x(Border::Clamp)),
        [[-3, 0, 3], [-10, 0, 10], [-3, 0, 3]]
    );
    assert_eq!(
        kernel3(&filter::scharr_y(Border::Clamp)),
        [[-3, -10, -3], [0, 0, 0], [3, 10, 3]]
    );
}

fn gray(s: &fixsight_verify::scene::Scene) -> GrayImage {
    GrayImage::from_raw(s.width as u32, s.height as u32, s.gray.clone()).unwrap()
}

/// A derivative operator of the outside crate.
type OutsideDerivative = fn(&GrayImage) -> image::ImageBuffer<image::Luma<i16>, Vec<i16>>;

#[test]
fn reference_derivatives_match_imageproc_exactly() {
    // Outside reference: the general-purpose `imageproc` crate (0.25),
    // gradients::{horizontal,vertical}_{sobel,scharr}, which pad by
    // continuity (= our clamp border) and return i16.
    for s in demo_scenes().iter().take(2) {
        let img = gray(s);
        let pairs: [(filter::SeparableFilter, OutsideDerivative); 4] = [
            (
                filter::sobel_x(Border::Clamp),
                imageproc::gradients::horizontal_sobel,
            ),
            (
                filter::sobel_y(Border::Clamp),
                imageproc::gradients::vertical_sobel,
            ),
            (
                filter::scharr_x(Border::Clamp),
                imageproc::gradients::horizontal_scharr,
            ),
            (
                filter::scharr_y(Border::Clamp),
                imageproc::gradients::vertical_scharr,
            ),
        ];
        for (f, outside) in pairs {
            let ours = reference_real(
                &s.gray,
                s.width,
                s.height,
                &real_taps(f.horizontal()),
                &real_taps(f.vertical()),
                Border::Clamp,
            );
            let theirs = outside(&img);
            let mismatches = ours
                .iter()
                .zip(theirs.as_raw())
                .filter(|(a, b)| **a != **b as f64)
                .count();
            assert_eq!(mismatches, 0, "{} vs imageproc", s.name);
            // And the kernel equals both.
            let k = run_whole::<i16>(&f, &s.gray, s.width, s.height).unwrap();
            assert_eq!(&k, theirs.as_raw());
        }
    }
}

#[test]
fn reference_smoothing_agrees_with_imageproc_within_its_intermediate_rounding() {
    // Outside reference: imageproc 0.25 filter::separable_filter_equal with
    // f32 taps [1 4 6 4 1]/16, border by continuity. It converts its
    // horizontal pass to u8 by truncation (dropping a fraction below 1)
    // before the vertical pass and truncates again at the end, so its
    // output lies in (exact - 2, exact]: we require exactly that of our
    // f64 reference, pixel by pixel.
    let f = filter::binomial5(Border::Clamp);
    let taps: Vec<f32> = real_taps(f.horizontal())
        .iter()
        .map(|&t| t as f32)
        .collect();
    for s in demo_scenes().iter().take(2) {
        let theirs = imageproc::filter::separable_filter_equal(&gray(s), &taps);
        let ours = reference_real(
            &s.gray,
            s.width,
            s.height,
            &real_taps(f.horizontal()),
            &real_taps(f.vertical()),
            Border::Clamp,
        );
        for (o, t) in ours.iter().zip(theirs.as_raw()) {
            let d = *t as f64 - o;
            assert!(d > -2.0 && d <= 1e-4, "imageproc {t} vs exact {o}");
        }
    }
}
