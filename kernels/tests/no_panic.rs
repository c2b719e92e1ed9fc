//! Public kernel APIs never panic: arbitrary sizes, strides, channel
//! counts, buffer lengths, thresholds and call orders give `Ok` or a typed
//! `Err`, never a panic (debug build, overflow checks on).

use fixsight::filter::{self, Border, FilterStream, SeparableFilter, Taps};
use fixsight::hysteresis::U0F16;
use fixsight::marking::{
    self, Candidate, Marking, MarkingConfig, MarkingLimits, Polarity, TapeContrast,
};
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
        // The bufferless layout check agrees with the view's own.
        match fixsight::image::layout_span(w, h, st, ch) {
            Ok(span) => prop_assert_eq!(v.is_ok(), len >= span),
            Err(e) => prop_assert_eq!(v.as_ref().err().copied(), Some(e)),
        }
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
            if let (Ok(a), Ok(b)) = (ImageView::new(&gx, w, h, st), ImageView::new(&gy, w, h, st)) {
                let _ = nms::suppress_interpolated(&m, &a, &b, &mut o);
            }
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
    use fixsight::warp::{
        sample_pixel, ControlGrid, GridStream, PixelMap, SourceBand, WarpGeometry,
    };
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
                        let _ = m.warp_rows_grey(&v, &mut d, first, b);
                    }
                }
                // Bands of arbitrary position, slot and height, and streams
                // with arbitrary rings, strips and call orders.
                for m in &grids {
                    let _ = m.source_rows(first, dst_h);
                    let _ = m.band_rows(dst_h);
                    if let (Ok(v), Ok(mut d)) = (
                        ImageView::interleaved(&src, sw, dst_h.max(1), sw * ch.max(1), ch),
                        ImageViewMut::interleaved(&mut dst, ow, dst_h, ow * ch.max(1), ch),
                    ) {
                        for (fr, fs) in [(first, sx as usize % 13), (sh.saturating_sub(first), 0), (usize::MAX, 0)] {
                            if let Ok(band) = SourceBand::new(v, fr, fs) {
                                let _ = band.rows();
                                let _ = m.warp_band(&band, &mut d, first, b);
                            }
                        }
                    }
                    let mut ring = vec![0u8; (sy as usize) % 300];
                    if let Ok(mut st) = GridStream::new(*m, &mut ring, ch, dst_h, b) {
                        let row = vec![1u8; sw * ch + (sx as usize % 2)];
                        for step in 0..(3 * sh + 6) {
                            if (sx as usize >> (step % 16)) & 1 == 0 {
                                let _ = st.push_row(&row);
                            } else if let Ok(mut d) =
                                ImageViewMut::interleaved(&mut dst, ow, dst_h, ow * ch.max(1), ch)
                            {
                                let _ = st.next_strip(&mut d);
                            }
                            if step % 7 == 3 {
                                if let Ok(slot) = st.row_slot() {
                                    slot.fill(3);
                                }
                                let _ = st.commit_row();
                            }
                            if step == 2 * sh + 1 && sy % 3 == 0 {
                                st.reset();
                            }
                        }
                        let _ = (st.finished(), st.rows_pushed(), st.band_rows());
                    }
                }
            }
        }
    }
}

mod pipeline_apis {
    use fixsight::filter::Border;
    use fixsight::lines::{PeakParams, VoteParams};
    use fixsight::pipeline::{
        map_words, EdgeConfig, EdgeStream, ImageJob, ImageJobConfig, Magnitude, Operator, PointJob,
        PointJobConfig, Smoothing, Suppression, Thinning, ThresholdRule, DEMO,
    };
    use fixsight::thinning;
    use fixsight::warp::{ControlGrid, WarpGeometry};
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
            (0usize..3, any::<u16>(), any::<bool>()),
        )
            .prop_map(
                |(sm, op, fb, mg, (fixed, sh, p, f, lo, hi), (th, cap, interp))| EdgeConfig {
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
                    suppression: if interp {
                        Suppression::Interpolated
                    } else {
                        Suppression::Sectors
                    },
                },
            )
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

        /// The point-mode job: any configuration (edge stage, vote and peak
        /// settings), size, grid, row form and call order: `Ok` or a typed
        /// error.
        #[test]
        fn point_job_in_any_call_order(cfg in config(), demo in any::<bool>(), w in 0usize..20,
                                       h in 0usize..14, vw in 0usize..24, vh in 0usize..16,
                                       start in any::<u32>(), step in 0u32..16, bins in 0usize..80,
                                       rstep in 0u32..10, rbins in 0usize..40,
                                       gate in prop::option::of(any::<u16>()),
                                       weight in prop::option::of(0u32..20), threshold in any::<u16>(),
                                       gw in 1usize..24, gh in 1usize..16, k in 0u32..8, amp in any::<i32>(),
                                       calls in prop::collection::vec((0usize..9, 0usize..44, any::<u8>()), 0..40)) {
            let mut job_cfg = PointJobConfig::DEMO_QVGA;
            // The demo settings on a vote frame that fits the buffers below.
            job_cfg.vote = VoteParams { width: w.max(1), height: h.max(1), rho_bins: 41, ..job_cfg.vote };
            if !demo {
                job_cfg.edges = cfg;
                job_cfg.vote = VoteParams {
                    width: vw,
                    height: vh,
                    theta_start: start,
                    theta_step_log2: step,
                    theta_bins: bins,
                    rho_step_log2: rstep,
                    rho_bins: rbins,
                    trig_frac_bits: 14,
                    gate,
                    weight_shift: weight,
                };
                job_cfg.peaks = PeakParams { threshold, radius_theta: 1, radius_rho: 1 };
            }
            let _ = job_cfg.check();
            let mut j: Box<PointJob<16, { map_words(16, 12) }, 600, 32, 64, 41, 4, 2>> =
                Box::default();
            let _ = j.configure(&job_cfg, w, h);
            // A grid of any size with any points (rejected or accepted).
            let grid_pts: Vec<i32> = (0..2 * 9 * 9i32).map(|i| i.wrapping_mul(amp) >> 20).collect();
            let geom = WarpGeometry::new(gw, gh, vw.max(1), vh.max(1), 4);
            let grid = geom.ok().and_then(|g| ControlGrid::new(&grid_pts, g, k).ok());
            for (call, len, v) in calls {
                let _ = match call {
                    0 | 1 => j.push_row(&vec![v; len]),
                    2 => j.next_row_slot().map(|r| { r.fill(v); r.len() }),
                    3 => j.commit_row(),
                    4 => j.finish(grid.as_ref()).map(|r| r.voted as usize),
                    5 => j.finish_short(grid.as_ref()).map(|r| r.voted as usize),
                    6 => j.finish(None).map(|r| r.voted as usize),
                    7 => { j.drop_frame(); Ok(0) }
                    _ => { j.reset(); Ok(0) }
                };
                let _ = (j.report(), j.peaks().len(), j.lines().len(), j.rows_pushed());
                let _ = j.tracker().map(|t| t.tracks().count());
                if let Ok(p) = j.edge_stage().points() {
                    let _ = p.count();
                }
            }
        }

        /// The image-mode job: any configuration, grid (output and source
        /// sizes, points, step), ring length, border, row form and call
        /// order, also configure again mid-frame: `Ok` or a typed error.
        #[test]
        fn image_job_in_any_call_order(cfg in config(), demo in any::<bool>(), ow in 1usize..20,
                                       oh in 1usize..14, sw in 1usize..24, sh in 1usize..16,
                                       k in prop_oneof![2u32..=4, 0u32..8],
                                       amp in prop_oneof![-(1i32 << 27)..(1 << 27), any::<i32>()],
                                       ring_len in prop_oneof![0usize..400, Just(4096usize)],
                                       fill in prop::option::of(any::<u8>()), vw in 0usize..24,
                                       gate in prop::option::of(any::<u16>()),
                                       calls in prop::collection::vec((0usize..10, 0usize..44, any::<u8>()), 0..40)) {
            let mut job = PointJobConfig::DEMO_QVGA;
            job.vote = VoteParams { width: ow, height: oh, rho_bins: 41, gate, ..job.vote };
            if !demo {
                job.edges = cfg;
                job.vote.width = vw;
            }
            let icfg = ImageJobConfig {
                job,
                border: fill.map_or(Border::Clamp, Border::Fill),
            };
            // An identity moved by noise (large `amp`: points out of range,
            // refused), as many points as the grid needs.
            let geom = WarpGeometry::new(ow, oh, sw, sh, 4);
            let (cols, rows) = geom.ok().and_then(|g| ControlGrid::grid_size(&g, k).ok()).unwrap_or((2, 2));
            let grid_pts: Vec<i32> = (0..cols * rows)
                .flat_map(|p| [((p % cols) << k.min(6)) * sw / ow, ((p / cols) << k.min(6)) * sh / oh])
                .enumerate()
                .map(|(i, c)| 16 * c as i32 + ((i as i32 % 7).wrapping_mul(amp) >> 27))
                .collect();
            let grid = geom.ok().and_then(|g| ControlGrid::new(&grid_pts, g, k).ok());
            let configured = grid.is_some();
            let mut rings = [vec![0u8; ring_len], vec![0u8; ring_len]];
            let [r0, r1] = &mut rings;
            let mut j: Box<ImageJob<16, { map_words(16, 12) }, { DEMO.bins_needed() }, 32, 64, 41, 4, 2>> =
                Box::default();
            if let Some(g) = grid {
                let _ = ImageJob::<16, 8, 8, 8, 8, 9, 2, 2>::ring_bytes(&g);
                let _ = j.configure(&icfg, g, r0);
            }
            let mut spare = Some(r1);
            for (call, len, v) in calls {
                let _ = match call {
                    0 | 1 => j.push_row(&vec![v; len]),
                    2 => j.next_row_slot().map(|r| { r.fill(v); r.len() }),
                    3 => j.commit_row(),
                    4 | 5 => j.finish().map(|r| r.voted as usize),
                    6 => j.finish_short().map(|r| r.voted as usize),
                    7 => { j.drop_frame(); Ok(0) }
                    8 => { j.reset(); Ok(0) }
                    _ => match (grid, spare.take()) {
                        (Some(g), Some(r)) => j.configure(&icfg, g, r).map(|_| 0),
                        _ => Ok(0),
                    },
                };
                let _ = (j.report(), j.peaks().len(), j.lines().len(), j.rows_pushed(), j.rows_out());
                let _ = j.tracker().map(|t| t.tracks().count());
                if let Ok(p) = j.line_stage().edge_stage().points() {
                    let _ = p.count();
                }
            }
            if configured && j.tracker().is_some() {
                prop_assert!(j.rows_out() <= 12);
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

mod track_apis {
    use fixsight::track::{cos_q15, sin_q15, AxisNoise, Detection, TrackConfig, Tracker};
    use proptest::prelude::*;

    fn axis() -> impl Strategy<Value = AxisNoise> {
        (
            prop_oneof![Just(0u32), 1u32..100_000, Just(1 << 24), Just(u32::MAX)],
            prop_oneof![Just(0u32), 0u32..70_000, Just(1 << 24), Just(u32::MAX)],
            prop_oneof![Just(0u32), 0u32..1_000_000, Just(1 << 28), Just(u32::MAX)],
        )
            .prop_map(|(meas_var, accel_index_q16, init_vel_var_q16)| AxisNoise {
                meas_var,
                accel_index_q16,
                init_vel_var_q16,
            })
    }

    fn config() -> impl Strategy<Value = TrackConfig> {
        (
            axis(),
            axis(),
            prop_oneof![Just(0u32), 1u32..5000, Just(u32::MAX)],
            any::<u8>(),
            any::<u8>(),
            0u32..200,
            (prop_oneof![-3000i32..3000, any::<i32>()], -3000i32..3000),
            prop_oneof![0u16..100, Just(1024u16), Just(u16::MAX)],
            prop_oneof![0u16..20, Just(u16::MAX)],
            (any::<u8>(), any::<u8>()),
        )
            .prop_map(
                |(
                    rho,
                    theta,
                    gate_q8,
                    confirm_hits,
                    max_missed,
                    birth_weight,
                    reference_q4,
                    warn_horizon,
                    warn_min_hits,
                    (warn_raise_frames, warn_clear_frames),
                )| {
                    TrackConfig {
                        rho,
                        theta,
                        gate_q8,
                        confirm_hits,
                        max_missed,
                        birth_weight,
                        reference_q4,
                        warn_horizon,
                        warn_min_hits,
                        warn_raise_frames,
                        warn_clear_frames,
                    }
                },
            )
    }

    fn detection() -> impl Strategy<Value = Detection> {
        (
            prop_oneof![
                -3000i32..3000,
                any::<i32>(),
                Just((1 << 17) - 1),
                Just(-(1 << 17) + 1)
            ],
            any::<u16>(),
            any::<u32>(),
        )
            .prop_map(|(rho_q4, theta, weight)| Detection {
                rho_q4,
                theta,
                weight,
            })
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(128))]

        #[test]
        fn tracker_any_config_frames_and_detections(
            cfg in config(),
            calls in prop::collection::vec(
                (prop_oneof![0u32..4, Just(1000u32), Just(u32::MAX)], prop::collection::vec(detection(), 0..7)),
                0..40),
            angles in prop::collection::vec(any::<i32>(), 0..8),
        ) {
            for a in angles {
                let (s, c) = (sin_q15(a), cos_q15(a));
                prop_assert!(s.abs() <= 32768 && c.abs() <= 32768);
            }
            // The same settings brought into range, so every call order is
            // exercised on a tracker that exists.
            let mut wide = cfg;
            for ax in [&mut wide.rho, &mut wide.theta] {
                ax.meas_var = ax.meas_var.clamp(1, 1 << 24);
                ax.accel_index_q16 = ax.accel_index_q16.min(1 << 24);
                ax.init_vel_var_q16 = ax.init_vel_var_q16.min(1 << 28);
            }
            wide.confirm_hits = wide.confirm_hits.max(1);
            wide.gate_q8 = wide.gate_q8.max(1);
            wide.reference_q4.0 = wide.reference_q4.0.clamp(-(1 << 17) + 1, (1 << 17) - 1);
            wide.warn_horizon = wide.warn_horizon.min(1024);
            wide.warn_raise_frames = wide.warn_raise_frames.max(1);
            wide.warn_clear_frames = wide.warn_clear_frames.max(1);
            prop_assert!(Tracker::<3, 5>::new(wide).is_ok());
            let mut a = Tracker::<3, 5>::new(wide);
            let mut b = Tracker::<1, 1>::new(cfg);
            let _ = Tracker::<0, 1>::new(cfg);
            let _ = Tracker::<1, 0>::new(cfg);
            let mut frame = 0u32;
            for (step, dets) in calls {
                frame = frame.wrapping_add(step);
                if let Ok(t) = a.as_mut() {
                    let _ = t.update(frame, &dets);
                }
                if let Ok(t) = b.as_mut() {
                    let _ = t.update(frame, &dets);
                    let _ = t.tracks().count();
                }
            }
        }
    }
}

mod lines_no_panic {
    //! Line voting and the gradient angle: arbitrary parameters, buffer
    //! lengths, points, rows and call orders give `Ok` or a typed `Err`.

    use fixsight::gradient;
    use fixsight::lines::{
        cos_sin, segments, Accumulator, EdgeRow, Line, Peak, PeakParams, Segment, SegmentParams,
        VoteParams,
    };
    use fixsight::warp::{ControlGrid, WarpGeometry};
    use fixsight::ImageView;
    use proptest::prelude::*;

    prop_compose! {
        fn any_params()(w in prop_oneof![0usize..24, Just(4096usize), Just(4097usize), Just(usize::MAX)],
                        h in prop_oneof![0usize..24, Just(usize::MAX)],
                        start in prop_oneof![0u32..(1 << 17), any::<u32>()],
                        s in 0u32..20, bins in prop_oneof![0usize..70, Just(usize::MAX)],
                        r in 0u32..12, rho in prop_oneof![0usize..300, Just(usize::MAX)],
                        q in 0u32..20, gate in prop::option::of(any::<u16>()),
                        ws in prop::option::of(0u32..40)) -> VoteParams {
            VoteParams { width: w, height: h, theta_start: start, theta_step_log2: s,
                theta_bins: bins, rho_step_log2: r, rho_bins: rho, trig_frac_bits: q,
                gate, weight_shift: ws }
        }
    }

    prop_compose! {
        fn usable_params()(w in 1usize..24, h in 1usize..24, start in 0u32..(1 << 17), s in 8u32..=14,
                           r in 0u32..=8, half in 0usize..20, q in 8u32..=14,
                           gate in prop::option::of(1u16..=32767), ws in prop::option::of(0u32..=15))
                          (bins in 1usize..=(65536usize >> s).min(64), w in Just(w), h in Just(h),
                           start in Just(start), s in Just(s), r in Just(r), half in Just(half),
                           q in Just(q), gate in Just(gate), ws in Just(ws)) -> VoteParams {
            VoteParams { width: w, height: h, theta_start: start, theta_step_log2: s,
                theta_bins: bins, rho_step_log2: r, rho_bins: 2 * half + 1, trig_frac_bits: q,
                gate, weight_shift: ws }
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(256))]

        #[test]
        fn accumulator_calls(p in prop_oneof![any_params(), usable_params()], ncells in prop_oneof![0usize..3000, Just(70_000usize)], ntrig in prop_oneof![0usize..80, Just(4096usize)],
                             pts in prop::collection::vec((any::<i32>(), any::<i32>(), any::<Option<u16>>(), any::<u16>()), 0..8),
                             rows in prop::collection::vec((0usize..30, 0usize..40, 0usize..40, 0usize..40, 0usize..40), 0..6),
                             thr in any::<u16>(), rt in prop_oneof![0usize..4, Just(usize::MAX)],
                             rb in prop_oneof![0usize..4, Just(usize::MAX)], k in 0usize..5) {
            let _ = p.check();
            let _ = p.bytes();
            let mut cells = vec![0u16; ncells];
            let mut trig = vec![[0i16; 2]; ntrig];
            let Ok(mut acc) = Accumulator::new(p, &mut cells, &mut trig) else { return Ok(()); };
            for (x, y, a, w) in pts {
                let _ = acc.vote_point(x, y, a, w);
            }
            let g = WarpGeometry::new(8, 6, p.width.clamp(1, 32767), p.height.clamp(1, 32767), 3).unwrap();
            let grid_pts = vec![5i32; 2 * 3 * 3];
            let grid = ControlGrid::new(&grid_pts, g, 2).unwrap();
            for (y, ne, nx, ny, nw) in rows {
                let e = vec![1u8; ne];
                let (gx, gy, wt) = (vec![3i16; nx], vec![-4i16; ny], vec![9u16; nw]);
                let row = EdgeRow { edges: &e, gx: Some(&gx), gy: Some(&gy), weights: Some(&wt) };
                let _ = acc.vote_row(y, &row);
                let _ = acc.vote_row(acc.next_row(), &row);
                let _ = acc.vote_row_corrected(y, &row, &grid);
            }
            let mut out = vec![Peak::default(); k];
            let pp = PeakParams { threshold: thr, radius_theta: rt.min(1 << 20), radius_rho: rb.min(1 << 20) };
            if let Ok(n) = acc.peaks(&pp, &mut out) {
                prop_assert!(n <= k);
            }
            for t in [0usize, 1, usize::MAX] {
                let _ = acc.refine(t.min(p.theta_bins - 1), 0);
            }
            let e = vec![1u8; p.width.min(24) * p.height.min(24)];
            let (vw, vh) = (p.width.clamp(1, 24), p.height.clamp(1, 24));
            let v = ImageView::new(&e, vw, vh, vw);
            if let Ok(v) = v {
                let _ = acc.vote_frame(&v, None, None);
            }
        }

        #[test]
        fn segments_and_angles(w in 1usize..30, h in 1usize..30, rho in any::<i32>(), theta in any::<u16>(),
                               minl in any::<u16>(), gap in any::<u16>(), tol in any::<u8>(), cap in 0usize..4,
                               gx in prop::collection::vec(any::<i16>(), 0..20),
                               gy in prop::collection::vec(any::<i16>(), 0..20), no in 0usize..20,
                               a in any::<u32>(), q in any::<u32>()) {
            let m = vec![1u8; w * h];
            let v = ImageView::new(&m, w, h, w).unwrap();
            let mut out = vec![Segment::default(); cap];
            let sp = SegmentParams { min_length: minl, max_gap: gap, tolerance: tol };
            if let Ok(n) = segments(&v, &Line { rho, theta, votes: 0 }, &sp, &mut out) {
                prop_assert!(n <= cap);
            }
            let mut o = vec![0u16; no];
            let _ = gradient::angle_row(&gx, &gy, &mut o);
            let _ = cos_sin(a, q);
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn marking_selection_on_any_lines_and_limits(
        rows in (any::<i32>(), any::<i32>(), any::<i32>()),
        tilt in any::<u16>(),
        xs in (any::<i32>(), any::<i32>()),
        seps in (any::<i32>(), any::<i32>(), any::<i32>(), any::<i32>()),
        contrast in 0u8..3,
        raw in prop::collection::vec((any::<i32>(), any::<u16>(), any::<u32>(), 0u8..3), 0..40),
        near_demo in prop::collection::vec((-4000i32..4000, prop_oneof![0u16..12000, 53536u16..=65535], any::<u32>(), 0u8..3), 0..24),
    ) {
        let pol = |p: u8| [Polarity::Unknown, Polarity::Rising, Polarity::Falling][p as usize];
        let lines: Vec<Candidate> = raw
            .iter()
            .chain(near_demo.iter())
            .map(|&(rho_q4, theta, votes, p)| Candidate { rho_q4, theta, votes, polarity: pol(p) })
            .collect();
        let limits = MarkingLimits {
            near_row_q4: rows.0,
            far_row_q4: rows.1,
            horizon_row_q4: rows.2,
            max_tilt: tilt,
            near_x_min_q4: xs.0,
            near_x_max_q4: xs.1,
            near_sep_min_q4: seps.0,
            near_sep_nominal_q4: seps.1,
            near_sep_max_q4: seps.2,
            converge_tol_q4: seps.3,
            contrast: [TapeContrast::Brighter, TapeContrast::Darker, TapeContrast::Either][contrast as usize],
        };
        if let Ok(c) = MarkingConfig::new(limits) {
            let _ = marking::select(&lines, &c);
        }
        // The widest configuration the checks accept.
        let wide = MarkingConfig::new(MarkingLimits {
            near_row_q4: marking::MAX_ROW_Q4,
            far_row_q4: marking::MAX_ROW_Q4 - 1,
            horizon_row_q4: -marking::MAX_ROW_Q4,
            max_tilt: marking::MAX_TILT,
            near_x_min_q4: -marking::MAX_SPAN_Q4,
            near_x_max_q4: marking::MAX_SPAN_Q4,
            near_sep_min_q4: 1,
            near_sep_nominal_q4: 1,
            near_sep_max_q4: marking::MAX_SPAN_Q4,
            converge_tol_q4: marking::MAX_SPAN_Q4,
            contrast: TapeContrast::Either,
        })
        .unwrap();
        let _ = marking::select(&lines, &wide);
        let m = marking::select(&lines, &MarkingConfig::DEMO);
        if let Marking::Found(t) = m {
            prop_assert!(t.left < lines.len() && t.right < lines.len() && t.left != t.right);
            prop_assert!(t.near_x_q4[0] < t.near_x_q4[1]);
        }
        for c in &lines {
            let _ = marking::column_at_row(c.rho_q4, c.theta, rows.0);
            let _ = marking::sin_cos_q15(c.theta);
        }
    }
}
