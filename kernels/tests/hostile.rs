//! Regression tests of the kernel-crate items of issue 16 (hostile input):
//! streams stay sound after a rejected call (item 10), the public
//! arithmetic helpers are total (item 11), operation tallies cannot
//! overflow on long rows (item 12), thinning takes an iteration cap
//! (item 7). Built with overflow checks on.

use fixsight::arith::round_shift;
use fixsight::filter::{self, Border, FilterOutput, FilterStream, SeparableFilter};
use fixsight::nms::{self, NmsStream};
use fixsight::{gradient, thinning, Error, ImageView, ImageViewMut};
use proptest::prelude::*;

/// A call that a stream must reject without changing state.
#[derive(Debug, Clone)]
enum Bad {
    /// An input row one element short.
    ShortRow,
    /// An output row one element short.
    ShortOut,
    /// A flush before the last row was pushed (only meaningful mid-frame).
    EarlyFlush,
    /// A direction row with one sector outside 0..=3 (suppression only),
    /// at the given column and with the given value.
    Sector(usize, u8),
}

fn bad() -> impl Strategy<Value = Bad> {
    prop_oneof![
        Just(Bad::ShortRow),
        Just(Bad::ShortOut),
        Just(Bad::EarlyFlush),
        (0usize..64, 4u8..=255).prop_map(|(x, v)| Bad::Sector(x, v)),
    ]
}

/// A frame and, per row, the rejected calls to make before pushing it.
fn frame_with_bad_calls() -> impl Strategy<Value = (usize, usize, Vec<u8>, Vec<Vec<Bad>>)> {
    (1usize..20, 1usize..14).prop_flat_map(|(w, h)| {
        (
            Just(w),
            Just(h),
            prop::collection::vec(any::<u8>(), w * h),
            prop::collection::vec(prop::collection::vec(bad(), 0..3), h + 1),
        )
    })
}

fn whole_filter<T: FilterOutput>(f: &SeparableFilter, img: &[u8], w: usize, h: usize) -> Vec<T> {
    let mut out = vec![T::default(); w * h];
    f.apply(
        &ImageView::new(img, w, h, w).unwrap(),
        &mut ImageViewMut::new(&mut out, w, h, w).unwrap(),
        &mut vec![0i32; w],
    )
    .unwrap();
    out
}

/// Streams `img` through `f`, making the rejected calls of `bad` before
/// each push (and after the last one, before the flushes); every rejected
/// call must be an error, every other call must succeed.
fn filter_streamed_with_bad_calls<T: FilterOutput>(
    f: &SeparableFilter,
    img: &[u8],
    w: usize,
    h: usize,
    bad: &[Vec<Bad>],
) -> Vec<T> {
    let mut ring = vec![0u8; FilterStream::ring_rows(f) * w];
    let mut acc = vec![0i32; w];
    let mut s = FilterStream::new(f, w, h, &mut ring, &mut acc).unwrap();
    let mut out = vec![T::default(); w * h];
    let mut row = vec![T::default(); w];
    let mut short = vec![T::default(); w - 1];
    let mut keep = |oy: Option<usize>, row: &[T]| {
        if let Some(oy) = oy {
            out[oy * w..(oy + 1) * w].copy_from_slice(row);
        }
    };
    for (y, calls) in bad.iter().enumerate() {
        let (pushed, emitted) = (s.rows_pushed(), s.rows_emitted());
        for b in calls {
            let good = if y < h {
                &img[y * w..(y + 1) * w]
            } else {
                &img[..w]
            };
            let r = match b {
                Bad::ShortRow => s.push_row(&good[..w - 1], &mut row),
                Bad::ShortOut => s.push_row(good, &mut short),
                Bad::EarlyFlush if y < h => s.flush_row(&mut row),
                // After the last row: one push too many.
                Bad::EarlyFlush | Bad::Sector(..) => s.push_row(good, &mut row),
            };
            assert!(r.is_err(), "{b:?} at row {y} accepted");
            assert_eq!((s.rows_pushed(), s.rows_emitted()), (pushed, emitted));
        }
        if y < h {
            let oy = s.push_row(&img[y * w..(y + 1) * w], &mut row).unwrap();
            keep(oy, &row);
        }
    }
    while let Some(oy) = s.flush_row(&mut row).unwrap() {
        keep(Some(oy), &row);
    }
    out
}

/// A direction map from bytes: sectors 0..=3.
fn sectors(img: &[u8]) -> Vec<u8> {
    img.iter().map(|v| v % 4).collect()
}

/// Magnitudes from bytes: small values so that ties and plateaus occur.
fn magnitudes(img: &[u8]) -> Vec<u16> {
    img.iter().map(|&v| (v / 16) as u16).collect()
}

fn whole_nms(mag: &[u16], dir: &[u8], w: usize, h: usize) -> Vec<u16> {
    let mut out = vec![0u16; w * h];
    nms::suppress(
        &ImageView::new(mag, w, h, w).unwrap(),
        &ImageView::new(dir, w, h, w).unwrap(),
        &mut ImageViewMut::new(&mut out, w, h, w).unwrap(),
    )
    .unwrap();
    out
}

fn nms_streamed_with_bad_calls(
    mag: &[u16],
    dir: &[u8],
    w: usize,
    h: usize,
    bad: &[Vec<Bad>],
) -> Vec<u16> {
    let (mut rm, mut rd) = (vec![0u16; 3 * w], vec![0u8; 3 * w]);
    let mut s = NmsStream::new(w, h, &mut rm, &mut rd).unwrap();
    let mut out = vec![0u16; w * h];
    let mut row = vec![0u16; w];
    let mut short = vec![0u16; w - 1];
    for (y, calls) in bad.iter().enumerate() {
        let pushed = s.rows_pushed();
        let yy = y.min(h - 1);
        let (m, d) = (&mag[yy * w..(yy + 1) * w], &dir[yy * w..(yy + 1) * w]);
        for b in calls {
            let r = match b {
                Bad::ShortRow => s.push_row(&m[..w - 1], d, &mut row),
                Bad::ShortOut => s.push_row(m, d, &mut short),
                Bad::EarlyFlush if y < h => s.flush_row(&mut row),
                Bad::EarlyFlush => s.push_row(m, d, &mut row),
                Bad::Sector(x, v) => {
                    let mut d2 = d.to_vec();
                    d2[x % w] = *v;
                    s.push_row(m, &d2, &mut row)
                }
            };
            assert!(r.is_err(), "{b:?} at row {y} accepted");
            assert_eq!(
                s.rows_pushed(),
                pushed,
                "{b:?} at row {y} changed the stream"
            );
        }
        if y < h {
            if let Some(oy) = s.push_row(m, d, &mut row).unwrap() {
                out[oy * w..(oy + 1) * w].copy_from_slice(&row);
            }
        }
    }
    while let Some(oy) = s.flush_row(&mut row).unwrap() {
        out[oy * w..(oy + 1) * w].copy_from_slice(&row);
    }
    out
}

/// The calls a filter stream must reject: a sector is no filter input, so
/// mid-frame it would be a good push; [`filter_streamed_with_bad_calls`]
/// makes it a push past the last row instead, so it stays after row `h`.
fn filter_calls(bad: &[Vec<Bad>], h: usize) -> Vec<Vec<Bad>> {
    bad.iter()
        .enumerate()
        .map(|(y, c)| {
            c.iter()
                .filter(|b| y >= h || !matches!(b, Bad::Sector(..)))
                .cloned()
                .collect()
        })
        .collect()
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(128))]

    /// Item 10: random rejected calls between good rows leave every stream
    /// type bit-identical to its whole-frame kernel.
    #[test]
    fn streams_after_rejected_calls_equal_the_whole_frame(
        (w, h, img, bad) in frame_with_bad_calls(), which in 0usize..7, fill in any::<u8>()) {
        let b = if which % 2 == 0 { Border::Clamp } else { Border::Fill(fill) };
        let fs = [filter::binomial3(b), filter::binomial5(b), filter::binomial7(b), filter::sobel_x(b),
                  filter::sobel_y(b), filter::scharr_x(b), filter::scharr_y(b)];
        let f = &fs[which];
        let calls = filter_calls(&bad, h);
        let a: Vec<u8> = filter_streamed_with_bad_calls(f, &img, w, h, &calls);
        prop_assert_eq!(a, whole_filter::<u8>(f, &img, w, h));
        let a: Vec<i16> = filter_streamed_with_bad_calls(f, &img, w, h, &calls);
        prop_assert_eq!(a, whole_filter::<i16>(f, &img, w, h));
        let (m, d) = (magnitudes(&img), sectors(&img));
        prop_assert_eq!(nms_streamed_with_bad_calls(&m, &d, w, h, &bad), whole_nms(&m, &d, w, h));
    }

    /// Item 11: `round_shift` is total and exact against 128-bit arithmetic
    /// for every `i32` and every shift.
    #[test]
    fn round_shift_is_total(x in any::<i32>(), s in any::<u32>()) {
        let exact = if s >= 64 { 0 } else {
            let d = 1i128 << s;
            (2 * x as i128 + d).div_euclid(2 * d) as i32
        };
        prop_assert_eq!(round_shift(x, s), exact);
    }
}

/// Item 10, the case from the issue: after a row with sector 9 was
/// rejected, the next rows still give the rule's output.
#[test]
fn suppression_stream_after_a_bad_sector() {
    // Row 0 with vertical gradients (sector 2): each pixel competes with
    // the row below only (above the image reads 0).
    let mag = [8u16, 0, 11, 7, 1, 1, 1, 1];
    let dir = [2u8, 2, 2, 2, 2, 2, 2, 2];
    let (mut rm, mut rd) = ([0u16; 12], [0u8; 12]);
    let mut s = NmsStream::new(4, 2, &mut rm, &mut rd).unwrap();
    let mut out = [0u16; 4];
    assert_eq!(
        s.push_row(&mag[..4], &[0, 9, 0, 0], &mut out),
        Err(Error::BadParameter {
            name: "direction sector",
            expected: "0..=3",
            got: 9
        })
    );
    assert_eq!(s.rows_pushed(), 0);
    assert_eq!(s.push_row(&mag[..4], &dir[..4], &mut out), Ok(None));
    assert_eq!(s.push_row(&mag[4..], &dir[4..], &mut out), Ok(Some(0)));
    assert_eq!(out, [8, 0, 11, 7]);
}

/// Item 12: a row of more than 2^32 / 51 elements (the rounded-L2 row
/// tallies about 51 add/sub per element at the largest gradients) runs
/// without an overflow in its operation counts, in a build with overflow
/// checks on, with counting off as on the chip.
#[test]
fn long_rows_do_not_overflow_the_tallies() {
    let n = (u32::MAX / 51) as usize + 1_000;
    let gx = vec![i16::MIN; n];
    let gy = vec![i16::MAX; n];
    let mut out = vec![0u16; n];
    gradient::magnitude_l2_round_row(&gx, &gy, &mut out).unwrap();
    // sqrt(2 * 32767^2) = 46339.54 -> 46340 (i16::MIN saturates to 32767).
    assert!(out.iter().all(|&m| m == 46340));
}

/// Item 7: the cap stops thinning after the given number of iterations and
/// says so; a cap at or above what `thin` needs gives `thin`'s map.
#[test]
fn thinning_cap_bites_and_reports() {
    let (w, h) = (24usize, 20usize);
    let solid = vec![1u8; w * h];
    let mut scratch = vec![0u8; 3 * w];
    let mut full = solid.clone();
    let st = thinning::thin(
        &mut ImageViewMut::new(&mut full, w, h, w).unwrap(),
        &mut scratch,
    )
    .unwrap();
    assert!(!st.capped && st.iterations > 3);
    for cap in 1..st.iterations + 2 {
        let mut m = solid.clone();
        let c = thinning::thin_at_most(
            &mut ImageViewMut::new(&mut m, w, h, w).unwrap(),
            &mut scratch,
            cap,
        )
        .unwrap();
        // `thin` stops after an iteration that deleted nothing, so the map
        // is final after `st.iterations - 1`; a cap there still bites (the
        // last allowed iteration deleted pixels), with the final map.
        if cap < st.iterations {
            assert!(c.capped && c.iterations == cap, "cap {cap}: {c:?}");
            assert_eq!(m == full, cap == st.iterations - 1, "cap {cap}");
        } else {
            assert_eq!(c, st, "cap {cap}");
            assert_eq!(m, full);
        }
    }
    assert!(matches!(
        thinning::thin_at_most(
            &mut ImageViewMut::new(&mut full, w, h, w).unwrap(),
            &mut scratch,
            0
        ),
        Err(Error::BadParameter { .. })
    ));
}

/// Messages: a grid blob whose header holds a bad value (with a valid CRC)
/// is rejected with the name of that header field.
#[test]
fn blob_errors_name_the_header_field() {
    use fixsight::warp::{crc32, ControlGrid, WarpGeometry};
    let g = WarpGeometry::new(4, 4, 4, 4, 2).unwrap();
    let mut blob = [0u8; 64];
    ControlGrid::new(&[0, 0, 16, 0, 0, 16, 16, 16], g, 2)
        .unwrap()
        .write_blob(&mut blob)
        .unwrap();
    for (offset, value, field) in [
        (8usize, 0u8, "out_width"),
        (12, 0, "src_width"),
        (16, 9, "grid_log2"),
        (17, 0, "frac_bits"),
    ] {
        let mut b = blob;
        b[offset] = value;
        b[offset + 1] = if offset < 16 { 0 } else { b[offset + 1] };
        let crc = crc32(&[&b[..28], &b[32..]]);
        b[28..32].copy_from_slice(&crc.to_le_bytes());
        match ControlGrid::from_blob(&b) {
            Err(e @ Error::BlobField { field: f, .. }) => {
                assert_eq!(f, field);
                assert!(e.to_string().contains(field));
            }
            other => panic!("{field}: {other:?}"),
        }
    }
}
