//! Public kernel APIs never panic: arbitrary sizes, strides, channel
//! counts, buffer lengths, thresholds and call orders give `Ok` or a typed
//! `Err`, never a panic (debug build, overflow checks on).

use fixed::types::U0F16;
use fixsight::filter::{self, Border, FilterStream, SeparableFilter, Taps};
use fixsight::{gradient, hysteresis, nms, thinning};
use fixsight::{ImageView, ImageViewMut};
use proptest::prelude::*;

/// An arbitrary, usually inconsistent, layout: (width, height, stride,
/// channels, buffer length).
fn layout() -> impl Strategy<Value = (usize, usize, usize, usize, usize)> {
    (
        prop_oneof![
            0usize..20,
            Just(32767usize),
            Just(32768usize),
            Just(usize::MAX)
        ],
        prop_oneof![0usize..20, Just(32768usize), Just(usize::MAX / 2)],
        prop_oneof![0usize..80, Just(usize::MAX)],
        0usize..6,
        0usize..600,
    )
}

fn taps() -> impl Strategy<Value = (Vec<i16>, u32)> {
    (prop::collection::vec(any::<i16>(), 0..12), 0u32..20)
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn views_and_filters((w, h, st, ch, len) in layout(), (w2, h2, st2, ch2, len2) in layout(),
                         (ht, hs) in taps(), (vt, vs) in taps(), scratch in 0usize..40,
                         b in prop_oneof![Just(Border::Clamp), any::<u8>().prop_map(Border::Fill)]) {
        let src = vec![7u8; len];
        let mut dst8 = vec![0u8; len2];
        let mut dst16 = vec![0i16; len2];
        let mut s = vec![0i32; scratch];
        let v = ImageView::interleaved(&src, w, h, st, ch);
        if let Ok(v) = &v {
            // Every accepted view can be read row by row without panicking.
            for y in 0..v.height() + 1 {
                let _ = v.row(y);
                let _ = v.pixel(v.width(), y);
            }
        }
        let filters: Vec<SeparableFilter> = match (Taps::new(&ht, hs), Taps::new(&vt, vs)) {
            (Ok(a), Ok(c)) => {
                // Both entry points for custom taps agree and never panic.
                let f = filter::separable(a, c, b);
                prop_assert_eq!(f, SeparableFilter::new(a, c, b));
                f.into_iter().collect()
            }
            _ => vec![filter::binomial7(b), filter::sobel_x(b)],
        };
        for f in &filters {
            if let (Ok(v), Ok(mut d)) = (&v, ImageViewMut::interleaved(&mut dst8, w2, h2, st2, ch2)) {
                let _ = f.apply(v, &mut d, &mut s);
            }
            if let (Ok(v), Ok(mut d)) = (&v, ImageViewMut::interleaved(&mut dst16, w2, h2, st2, ch2)) {
                let _ = f.apply(v, &mut d, &mut s);
            }
        }
    }

    #[test]
    fn streams_in_any_call_order(w in 0usize..12, h in 0usize..8, ring in 0usize..120, acc in 0usize..14,
                                 calls in prop::collection::vec((any::<bool>(), 0usize..14, 0usize..14), 0..24)) {
        let f = filter::binomial5(Border::Clamp);
        let mut r = vec![0u8; ring];
        let mut a = vec![0i32; acc];
        if let Ok(mut st) = FilterStream::new(&f, w, h, &mut r, &mut a) {
            for (push, inlen, outlen) in calls {
                let row = vec![1u8; inlen];
                let mut out = vec![0u8; outlen];
                let _ = if push { st.push_row(&row, &mut out) } else { st.flush_row(&mut out) };
            }
        }
        let (mut m, mut d) = (vec![0u16; ring], vec![0u8; ring]);
        if let Ok(mut st) = nms::NmsStream::new(w, h, &mut m, &mut d) {
            for i in 0..(h + 3) {
                let mut out = vec![0u16; w.saturating_sub(i % 2)];
                let _ = st.push_row(&vec![5u16; w], &vec![(i % 6) as u8; w], &mut out);
                let _ = st.flush_row(&mut out);
            }
        }
    }

    #[test]
    fn gradient_and_edge_kernels((w, h, st, _ch, len) in layout(), (w2, h2, st2, _c2, len2) in layout(),
                                 dirs in prop::collection::vec(0u8..8, 1..64),
                                 codes in prop::collection::vec(0u8..5, 1..64),
                                 low in any::<u16>(), high in any::<u16>(), stack in 0usize..12,
                                 hist in 0usize..40, shift in 0u32..40, permille in any::<u16>(), frac in any::<u16>()) {
        let gx = vec![i16::MIN; len];
        let gy = vec![i16::MAX; len];
        let mut o16 = vec![0u16; len2];
        let mut o8 = vec![0u8; len2];
        if let (Ok(a), Ok(b)) = (ImageView::new(&gx, w, h, st), ImageView::new(&gy, w, h, st)) {
            if let Ok(mut o) = ImageViewMut::new(&mut o16, w2, h2, st2) {
                let _ = gradient::magnitude_l1(&a, &b, &mut o);
                let _ = gradient::magnitude_l2_approx(&a, &b, &mut o);
                let _ = gradient::magnitude_l2_round(&a, &b, &mut o);
            }
            if let Ok(mut o) = ImageViewMut::new(&mut o8, w2, h2, st2) {
                let _ = gradient::direction(&a, &b, &mut o);
            }
        }
        let n = dirs.len();
        let mags: Vec<u16> = (0..n).map(|i| (i * 977 % 65536) as u16).collect();
        let mut out = vec![0u16; n];
        let (mw, mh) = (w.clamp(1, n), n / w.clamp(1, n));
        if let (Ok(m), Ok(d), Ok(mut o)) = (ImageView::new(&mags, mw, mh, mw), ImageView::new(&dirs, mw, mh, mw),
                                          ImageViewMut::new(&mut out, mw, mh, mw)) {
            let _ = nms::suppress(&m, &d, &mut o);
            let mut hbuf = vec![0u32; hist];
            let _ = hysteresis::Thresholds::from_histogram(&m, &mut hbuf, shift, permille, U0F16::from_bits(frac));
            if let Ok(t) = hysteresis::Thresholds::new(low, high) {
                let mut c = vec![0u8; n];
                if let Ok(mut cv) = ImageViewMut::new(&mut c, mw, mh, mw) {
                    let _ = hysteresis::classify(&m, &t, &mut cv);
                }
            }
        }
        let mut map = codes.clone();
        let cw = w.clamp(1, map.len());
        let ch = map.len() / cw;
        let mut stk = vec![0u32; stack];
        if let Ok(mut mv) = ImageViewMut::new(&mut map, cw, ch, cw) {
            let _ = hysteresis::link(&mut mv, &mut stk);
            let mut scratch = vec![0u8; stack * 3];
            let _ = thinning::thin(&mut mv, &mut scratch);
            let _ = thinning::thin_at_most(&mut mv, &mut scratch, stack as u32);
        }
    }
}

mod warp_apis {
    use fixsight::filter::Border;
    use fixsight::warp::{sample_pixel, ControlGrid, PixelMap, WarpGeometry};
    use fixsight::{ImageView, ImageViewMut};
    use proptest::prelude::*;

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(256))]

        #[test]
        fn warp_entry_points(ow in 0usize..10, oh in 0usize..10, sw in 0usize..10, sh in 0usize..10,
                              f in 0u32..14, k in 0u32..9, first in 0usize..12,
                              coords in prop::collection::vec(any::<i32>(), 0..260),
                              small in prop::collection::vec(-400i32..400, 0..260),
                              blob in prop::collection::vec(any::<u8>(), 0..120),
                              dst_h in 0usize..12, ch in 0usize..6, sx in any::<i32>(), sy in any::<i32>(),
                              b in prop_oneof![Just(Border::Clamp), any::<u8>().prop_map(Border::Fill)]) {
            let src = vec![9u8; 10 * 10 * 5];
            let mut dst = vec![0u8; 10 * 12 * 5];
            let mut px = [0u8; 5];
            if let Ok(v) = ImageView::interleaved(&src, sw.max(1), sh.max(1), sw.max(1) * ch.max(1), ch) {
                let _ = sample_pixel(&v, sx, sy, f, b, &mut px[..ch.min(5)]);
            }
            let _ = ControlGrid::from_blob(&blob);
            if let Ok(g) = WarpGeometry::new(ow, oh, sw, sh, f) {
                // Exactly the lengths the constructors want, filled from the
                // random values (so range checks, not length checks, decide).
                let fit = |n: usize| -> Vec<i32> {
                    small.iter().chain(coords.iter()).copied().cycle().take(n).collect()
                };
                let s = 1usize << k.clamp(2, 6);
                let cols = 2usize.max((ow.saturating_sub(1)).div_ceil(s) + 1);
                let rows = 2usize.max((oh.saturating_sub(1)).div_ceil(s) + 1);
                let dense = fit(2 * ow * oh);
                let pts = fit(2 * cols * rows);
                let scaled: Vec<i32> = pts.iter().map(|v| v << f.min(10)).collect();
                let maps: Vec<PixelMap> = [&coords, &dense]
                    .iter()
                    .filter_map(|c| PixelMap::new(c, g).ok())
                    .collect();
                let grids: Vec<ControlGrid> = [&coords, &pts, &scaled]
                    .iter()
                    .filter_map(|c| ControlGrid::new(c, g, k).ok())
                    .collect();
                if let (Ok(v), Ok(mut d)) = (
                    ImageView::interleaved(&src, sw, sh, sw * ch.max(1), ch),
                    ImageViewMut::interleaved(&mut dst, ow, dst_h, ow * ch.max(1), ch),
                ) {
                    for m in &maps {
                        let _ = m.warp_rows(&v, &mut d, first, b);
                    }
                    for m in &grids {
                        let _ = m.warp_rows(&v, &mut d, first, b);
                    }
                }
            }
        }
    }
}

mod pipeline_apis {
    use fixsight::pipeline::{
        map_words, EdgeConfig, EdgeStream, Magnitude, Operator, Smoothing, Thinning, ThresholdRule,
        DEMO,
    };
    use fixsight::thinning;
    use fixsight::ImageViewMut;
    use proptest::prelude::*;

    fn config() -> impl Strategy<Value = EdgeConfig> {
        (
            0usize..5,
            any::<bool>(),
            any::<u8>(),
            0usize..3,
            (
                any::<bool>(),
                any::<u8>(),
                any::<u16>(),
                any::<u16>(),
                any::<u16>(),
                any::<u16>(),
            ),
            (0usize..3, any::<u16>()),
        )
            .prop_map(|(sm, op, fb, mg, (fixed, sh, p, f, lo, hi), (th, cap))| {
                EdgeConfig {
                    smoothing: [
                        Smoothing::None,
                        Smoothing::Binomial3,
                        Smoothing::Binomial5,
                        Smoothing::Binomial7,
                        Smoothing::Gauss7,
                    ][sm],
                    operator: if op {
                        Operator::Sobel
                    } else {
                        Operator::Scharr
                    },
                    frac_bits: fb,
                    magnitude: [Magnitude::L1, Magnitude::L2Approx, Magnitude::L2Round][mg],
                    thresholds: if fixed {
                        ThresholdRule::Fixed { low: lo, high: hi }
                    } else {
                        ThresholdRule::Auto {
                            shift: sh,
                            high_permille: p,
                            low_ratio_u0f16: f,
                            first_low: lo,
                            first_high: hi,
                        }
                    },
                    thinning: [Thinning::Off, Thinning::UntilStable, Thinning::AtMost(cap)][th],
                }
            })
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(256))]

        /// Any configuration, size, row form and call order: `Ok` or a
        /// typed error.
        #[test]
        fn edge_stream_in_any_call_order(cfg in config(), demo in any::<bool>(), w in 0usize..20,
                                         h in 0usize..14, bits in 0u32..20,
                                         calls in prop::collection::vec((0usize..11, 0usize..44, any::<u16>()), 0..40)) {
            let cfg = if demo { DEMO } else { cfg };
            let _ = cfg.check();
            let _ = (cfg.max_magnitude(), cfg.bins_needed(), cfg.gradient_taps(), cfg.gradient_filters());
            let mut s: Box<EdgeStream<16, { map_words(16, 12) }, 600, 32>> = Box::default();
            let _ = s.configure(&cfg, w, h);
            for (call, len, v) in calls {
                let row8 = vec![(v & 255) as u8; len];
                let row16 = vec![v; len];
                let _ = match call {
                    0 => s.push_row(&row8),
                    1 => s.push_yuyv(&row8),
                    2 => s.push_uyvy(&row8),
                    3 => s.push_rgb565(&row16),
                    4 => s.push_raw(&row16, bits),
                    5 => s.next_row_slot().map(|r| { r.fill(v as u8); r.len() }),
                    6 => s.commit_row(),
                    7 => s.finish().map(|r| r.edge_points as usize),
                    8 => s.finish_short().map(|r| r.edge_points as usize),
                    9 => { s.reset(); Ok(0) }
                    _ => s.edge_row(len, &mut vec![0u8; v as usize % 24]).map(|_| 0),
                };
                if let Ok(p) = s.points() {
                    let _ = p.count();
                }
                let _ = (s.report(), s.thresholds(), s.rows_pushed());
            }
        }

        #[test]
        fn capped_thinning(w in 0usize..12, h in 0usize..12, cap in any::<u32>(), scratch in 0usize..40,
                           bits in prop::collection::vec(any::<bool>(), 0..144)) {
            let mut map: Vec<u8> = bits.iter().map(|&b| b as u8 * 255).collect();
            if let Ok(mut v) = ImageViewMut::new(&mut map, w, h, w.max(1)) {
                let _ = thinning::thin_at_most(&mut v, &mut vec![0u8; scratch], cap);
            }
        }
    }
}
