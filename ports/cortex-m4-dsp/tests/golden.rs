//! Every golden vector of the kernel ids in `claims.txt`, run through the
//! port on the host (the lane models of `lanes.rs`) and compared byte for
//! byte with the expected output in `golden/` (the layout of
//! `golden/README.md`: little-endian elements, packed rows; a vector with
//! `row_pad` lays its rows `row_pad` elements apart, input padding 0xE7,
//! output buffer pre-filled with 0x3C, which the padding must keep).
//! The same vectors run through the port on the emulated Cortex-M4 in
//! `fixsight-verify targets`.

use fixsight::filter::Border;
use fixsight::{ImageView, ImageViewMut};
use fixsight_port_cortex_m4_dsp::filter::{self as port, scratch_words};
use fixsight_port_cortex_m4_dsp::CLAIMS;
use serde_json::Value;
use std::path::PathBuf;

fn golden_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../golden")
}

fn claims_file() -> Vec<String> {
    let text =
        std::fs::read_to_string(PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("claims.txt"))
            .expect("claims.txt");
    text.lines()
        .map(|l| l.split('#').next().unwrap_or("").trim().to_string())
        .filter(|l| !l.is_empty())
        .collect()
}

#[test]
fn claims_file_matches_the_crate() {
    assert_eq!(
        claims_file(),
        CLAIMS.iter().map(|s| s.to_string()).collect::<Vec<_>>()
    );
}

type PortU8 =
    fn(&ImageView<'_, u8>, &mut ImageViewMut<'_, u8>, Border, &mut [u32]) -> fixsight::Result<()>;
type PortI16 =
    fn(&ImageView<'_, u8>, &mut ImageViewMut<'_, i16>, Border, &mut [u32]) -> fixsight::Result<()>;

fn border(p: &Value) -> Border {
    match &p["border"] {
        Value::String(s) if s == "clamp" => Border::Clamp,
        b => Border::Fill(b["fill"].as_u64().expect("fill value") as u8),
    }
}

#[test]
fn every_claimed_golden_vector_is_bit_exact() {
    let dir = golden_dir();
    let manifest: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("manifest.json")).unwrap()).unwrap();
    let mut ran = 0;
    for v in manifest["vectors"].as_array().unwrap() {
        let kernel = v["kernel"].as_str().unwrap();
        if !CLAIMS.contains(&kernel) {
            continue;
        }
        let id = v["id"].as_str().unwrap();
        let input = &v["inputs"][0];
        let expected = &v["expected"][0];
        let (w, h) = (
            input["width"].as_u64().unwrap() as usize,
            input["height"].as_u64().unwrap() as usize,
        );
        let pad = v["row_pad"].as_u64().unwrap_or(0) as usize;
        let stride = w + pad;
        let packed = std::fs::read(dir.join(input["file"].as_str().unwrap())).unwrap();
        let mut px = vec![0xE7u8; stride * h];
        for y in 0..h {
            px[y * stride..y * stride + w].copy_from_slice(&packed[y * w..(y + 1) * w]);
        }
        let src = ImageView::new(&px, w, h, stride).unwrap();
        let want = std::fs::read(dir.join(expected["file"].as_str().unwrap())).unwrap();
        let mut scratch = vec![0u32; scratch_words(w)];
        // The output as little-endian bytes, rows packed, and the padding.
        let b = border(&v["params"]);
        let u8_port = match kernel {
            "filter.binomial3" => Some(port::binomial3 as PortU8),
            "filter.binomial5" => Some(port::binomial5 as PortU8),
            _ => None,
        };
        let i16_port = match kernel {
            "filter.sobel_x" => Some(port::sobel_x as PortI16),
            "filter.sobel_y" => Some(port::sobel_y as PortI16),
            "filter.scharr_x" => Some(port::scharr_x as PortI16),
            "filter.scharr_y" => Some(port::scharr_y as PortI16),
            _ => None,
        };
        // The output as little-endian bytes, rows packed, and the padding.
        let (got, padding): (Vec<u8>, Vec<u8>) = match (u8_port, i16_port) {
            (Some(p), _) => {
                let mut out = vec![0x3Cu8; stride * h];
                p(
                    &src,
                    &mut ImageViewMut::new(&mut out, w, h, stride).unwrap(),
                    b,
                    &mut scratch,
                )
                .unwrap();
                split(&out, w, stride, |e| vec![*e])
            }
            (None, Some(p)) => {
                let mut out = vec![0x3C3Ci16; stride * h];
                p(
                    &src,
                    &mut ImageViewMut::new(&mut out, w, h, stride).unwrap(),
                    b,
                    &mut scratch,
                )
                .unwrap();
                split(&out, w, stride, |e| e.to_le_bytes().to_vec())
            }
            _ => panic!("claimed kernel {kernel} has no runner in this test"),
        };
        assert_eq!(got, want, "{id}");
        assert!(padding.iter().all(|&b| b == 0x3C), "{id}: padding written");
        ran += 1;
    }
    // 33 vectors of the six claimed ids at the time of writing; a claim
    // without vectors would prove nothing.
    assert!(ran >= 33, "only {ran} claimed vectors found");
}

/// Packed row bytes and padding bytes of a frame with rows `stride` apart.
fn split<T>(
    out: &[T],
    w: usize,
    stride: usize,
    bytes: impl Fn(&T) -> Vec<u8>,
) -> (Vec<u8>, Vec<u8>) {
    let (mut rows, mut pad) = (Vec::new(), Vec::new());
    for row in out.chunks(stride) {
        rows.extend(row[..w].iter().flat_map(&bytes));
        pad.extend(row[w..].iter().flat_map(&bytes));
    }
    (rows, pad)
}
