//! Golden vectors with padded rows (`row_pad` in the manifest): the kernels
//! whose public API takes an image view with a stride, run on buffers whose
//! rows are `width * channels + row_pad` elements apart.
//!
//! The runner ([`run_vector`]) lays every input out as
//! [`crate::golden::padded`] describes (padding bytes
//! [`crate::golden::IN_PAD_BYTE`]), fills every output buffer with
//! [`crate::golden::OUT_PAD_BYTE`], calls the kernel on views with that
//! stride, and takes the packed outputs back with [`crate::golden::unpad`],
//! which fails when the kernel wrote one padding element. In-place kernels
//! (`hysteresis.link`, `thinning.thin`) get the input's pixels, not its
//! padding, copied into the output buffer first. The packed outputs must
//! equal the expected images, which are those of the same inputs run packed.
//!
//! The padded vectors ([`cases`]) are copies of packed vectors of the
//! golden folder, one or two per kernel family with a stride in its API,
//! ids `<packed id>.pad<row_pad>`, `row_pad` chosen so the stride is odd.

use crate::family::{buffer_len, input, no_params, parse_params};
use crate::golden::{out_buffer, padded, unpad, Blob, Elem, GoldenCase, IN_PAD_BYTE};
use fixsight::{ImageView, ImageViewMut};

/// The packed vectors that get a padded copy.
pub const PADDED_FROM: [&str; 10] = [
    "filter.binomial5.clamp.floor",
    "filter.sobel_x.fill17.floor",
    "filter.separable.custom9x5.fill200.floor",
    "gradient.magnitude_l1.floor",
    "gradient.direction.floor",
    "nms.suppress.floor",
    "nms.suppress_interpolated.floor",
    "hysteresis.classify.floor",
    "hysteresis.link.floor",
    "thinning.thin.floor",
];

/// The padded copies of the [`PADDED_FROM`] vectors among `packed`, their
/// expected outputs computed by [`run_vector`].
pub fn cases(packed: &[GoldenCase]) -> Vec<GoldenCase> {
    packed
        .iter()
        .filter(|c| PADDED_FROM.contains(&c.id.as_str()))
        .map(|c| {
            let w = c.inputs[0].width * c.inputs[0].channels;
            let pad = if w % 2 == 1 { 4 } else { 5 };
            let expected =
                run_vector(&c.kernel, &c.params, &c.inputs, pad).expect("padded golden cases run");
            GoldenCase {
                id: format!("{}.pad{pad}", c.id),
                comment: format!(
                    "{}; rows padded to a stride of {} elements (row_pad {pad})",
                    c.comment,
                    w + pad
                ),
                kernel: c.kernel.clone(),
                params: c.params.clone(),
                inputs: c.inputs.clone(),
                expected,
                row_pad: Some(pad),
            }
        })
        .collect()
}

/// An input laid out with padded rows, as typed elements.
struct In {
    bytes: Blob,
    width: usize,
    height: usize,
    stride: usize,
}

fn lay_in(inputs: &[Blob], name: &str, pad: usize) -> Result<In, String> {
    let b = input(inputs, name)?;
    if b.channels != 1 {
        return Err(format!("input `{name}` must have one channel"));
    }
    let p = padded(b, pad, IN_PAD_BYTE);
    Ok(In {
        width: b.width,
        height: b.height,
        stride: p.width,
        bytes: p,
    })
}

/// A single-channel output buffer the shape of `like`.
fn lay_out(name: &str, elem: Elem, like: &In, pad: usize) -> Blob {
    out_buffer(name, elem, like.width, like.height, 1, pad)
}

fn err(e: fixsight::Error) -> String {
    e.to_string()
}

/// Views over typed copies of padded buffers: `view!(vec, in)` makes an
/// `ImageView` over `vec` with `in`'s width, height and stride.
macro_rules! view {
    ($d:expr, $i:expr) => {
        ImageView::new(&$d, $i.width, $i.height, $i.stride).map_err(err)?
    };
}
macro_rules! view_mut {
    ($d:expr, $i:expr) => {
        ImageViewMut::new(&mut $d, $i.width, $i.height, $i.stride).map_err(err)?
    };
}

/// Checks that every input has the size of the first.
fn same_size(ins: &[&In]) -> Result<(), String> {
    if ins
        .iter()
        .any(|i| (i.width, i.height) != (ins[0].width, ins[0].height))
    {
        return Err("inputs differ in size".into());
    }
    Ok(())
}

/// Recomputes a `row_pad` vector (module docs): the kernel ids of the
/// filter, gradient, nms, hysteresis (`classify`, `link`) and thinning
/// families; any other id is an error saying it has no padded runner.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
    pad: usize,
) -> Result<Vec<Blob>, String> {
    let out = match kernel.split('.').next().unwrap_or("") {
        "filter" if kernel != crate::filter::STREAM_ID => {
            let (f, output) = crate::filter::golden::filter_of(kernel, params)?;
            let src = lay_in(inputs, "src", pad)?;
            let s = src.bytes.to_u8()?;
            let mut scratch = vec![0i32; src.width];
            match output {
                crate::filter::OutputParam::U8 => {
                    let mut d = lay_out("dst", Elem::U8, &src, pad).to_u8()?;
                    f.apply(&view!(s, src), &mut view_mut!(d, src), &mut scratch)
                        .map_err(err)?;
                    Blob::from_u8("dst", src.stride, src.height, 1, &d)
                }
                crate::filter::OutputParam::I16 => {
                    let mut d = lay_out("dst", Elem::I16, &src, pad).to_i16()?;
                    f.apply(&view!(s, src), &mut view_mut!(d, src), &mut scratch)
                        .map_err(err)?;
                    Blob::from_i16("dst", src.stride, src.height, 1, &d)
                }
            }
        }
        "gradient" => {
            no_params(kernel, params)?;
            let (bx, by) = (lay_in(inputs, "gx", pad)?, lay_in(inputs, "gy", pad)?);
            same_size(&[&bx, &by])?;
            let (gx, gy) = (bx.bytes.to_i16()?, by.bytes.to_i16()?);
            let (vx, vy) = (view!(gx, bx), view!(gy, by));
            let mag = match kernel {
                "gradient.magnitude_l1" => fixsight::gradient::magnitude_l1,
                "gradient.magnitude_l2_approx" => fixsight::gradient::magnitude_l2_approx,
                "gradient.magnitude_l2_round" => fixsight::gradient::magnitude_l2_round,
                "gradient.angles" => fixsight::gradient::angles,
                "gradient.direction" => {
                    let mut d = lay_out("dir", Elem::U8, &bx, pad).to_u8()?;
                    fixsight::gradient::direction(&vx, &vy, &mut view_mut!(d, bx)).map_err(err)?;
                    let b = Blob::from_u8("dir", bx.stride, bx.height, 1, &d);
                    return Ok(vec![unpad(&b, bx.width, 1)?]);
                }
                _ => return Err(format!("unknown gradient kernel `{kernel}`")),
            };
            let name = if kernel == "gradient.angles" {
                "angle"
            } else {
                "mag"
            };
            let mut d = lay_out(name, Elem::U16, &bx, pad).to_u16()?;
            mag(&vx, &vy, &mut view_mut!(d, bx)).map_err(err)?;
            Blob::from_u16(name, bx.stride, bx.height, 1, &d)
        }
        "nms" => {
            no_params(kernel, params)?;
            let bm = lay_in(inputs, "mag", pad)?;
            let m = bm.bytes.to_u16()?;
            let mut d = lay_out("nms", Elem::U16, &bm, pad).to_u16()?;
            match kernel {
                "nms.suppress" => {
                    let bd = lay_in(inputs, "dir", pad)?;
                    same_size(&[&bm, &bd])?;
                    let dir = bd.bytes.to_u8()?;
                    fixsight::nms::suppress(&view!(m, bm), &view!(dir, bd), &mut view_mut!(d, bm))
                        .map_err(err)?;
                }
                "nms.suppress_interpolated" => {
                    let (bx, by) = (lay_in(inputs, "gx", pad)?, lay_in(inputs, "gy", pad)?);
                    same_size(&[&bm, &bx, &by])?;
                    let (gx, gy) = (bx.bytes.to_i16()?, by.bytes.to_i16()?);
                    fixsight::nms::suppress_interpolated(
                        &view!(m, bm),
                        &view!(gx, bx),
                        &view!(gy, by),
                        &mut view_mut!(d, bm),
                    )
                    .map_err(err)?;
                }
                _ => return Err(format!("unknown nms kernel `{kernel}`")),
            }
            Blob::from_u16("nms", bm.stride, bm.height, 1, &d)
        }
        "hysteresis" if kernel == "hysteresis.classify" => {
            let p: crate::hysteresis::golden::ClassifyParams = parse_params(kernel, params)?;
            let t = fixsight::hysteresis::Thresholds::new(p.low, p.high).map_err(err)?;
            let bm = lay_in(inputs, "mag", pad)?;
            let m = bm.bytes.to_u16()?;
            let mut d = lay_out("codes", Elem::U8, &bm, pad).to_u8()?;
            fixsight::hysteresis::classify(&view!(m, bm), &t, &mut view_mut!(d, bm))
                .map_err(err)?;
            Blob::from_u8("codes", bm.stride, bm.height, 1, &d)
        }
        "hysteresis" if kernel == "hysteresis.link" => {
            let p: crate::hysteresis::golden::StackParams = parse_params(kernel, params)?;
            let mut stack = vec![0u32; buffer_len("stack", p.stack)?];
            let bc = lay_in(inputs, "codes", pad)?;
            let mut d = copied_in(&bc, "edges", pad)?;
            fixsight::hysteresis::link(&mut view_mut!(d, bc), &mut stack).map_err(err)?;
            Blob::from_u8("edges", bc.stride, bc.height, 1, &d)
        }
        "thinning" if kernel == "thinning.thin" => {
            no_params(kernel, params)?;
            let bm = lay_in(inputs, "map", pad)?;
            let mut d = copied_in(&bm, "thin", pad)?;
            let mut scratch = vec![0u8; 3 * bm.width];
            fixsight::thinning::thin(&mut view_mut!(d, bm), &mut scratch).map_err(err)?;
            Blob::from_u8("thin", bm.stride, bm.height, 1, &d)
        }
        _ => {
            return Err(format!(
                "kernel `{kernel}` has no runner for padded rows (row_pad); \
                 only the kernels listed in golden/README.md take them"
            ))
        }
    };
    Ok(vec![unpad(&out, out.width - pad, 1)?])
}

/// The output buffer of an in-place `u8` kernel: [`crate::golden::OUT_PAD_BYTE`]
/// everywhere, then the input's pixels (not its padding) copied in.
fn copied_in(i: &In, name: &str, pad: usize) -> Result<Vec<u8>, String> {
    let src = i.bytes.to_u8()?;
    let mut d = lay_out(name, Elem::U8, i, pad).to_u8()?;
    for (o, s) in d.chunks_mut(i.stride).zip(src.chunks(i.stride)) {
        o[..i.width].copy_from_slice(&s[..i.width]);
    }
    Ok(d)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::golden::OUT_PAD_BYTE;

    fn packed_cases() -> Vec<GoldenCase> {
        let scenes = crate::scene::demo_scenes();
        crate::families::FAMILIES
            .iter()
            .filter(|f| ["filter", "gradient", "nms", "hysteresis", "thinning"].contains(&f.name))
            .flat_map(|f| (f.golden_cases)(&scenes))
            .collect()
    }

    /// Every padded copy gives exactly the packed vector's outputs, and
    /// every listed packed vector has its copy.
    #[test]
    fn padded_outputs_equal_packed() {
        let packed = packed_cases();
        let padded = cases(&packed);
        assert_eq!(padded.len(), PADDED_FROM.len());
        for p in &padded {
            let id = p.id.rsplit_once('.').unwrap().0;
            let orig = packed.iter().find(|c| c.id == id).unwrap();
            assert_eq!(p.expected.len(), orig.expected.len());
            for (a, b) in p.expected.iter().zip(&orig.expected) {
                assert_eq!(a.bytes, b.bytes, "{}", p.id);
                assert_eq!((a.width, a.height, a.elem), (b.width, b.height, b.elem));
            }
            let stride = p.inputs[0].width + p.row_pad.unwrap();
            assert_eq!(stride % 2, 1, "{}: odd stride", p.id);
        }
    }

    /// A kernel id without a padded runner is refused, not run packed.
    #[test]
    fn unknown_kernels_are_refused() {
        let b = Blob::from_u8("src", 4, 2, 1, &[0; 8]);
        let e = run_vector(
            "warp.pixel_map",
            &serde_json::json!({}),
            std::slice::from_ref(&b),
            3,
        );
        assert!(e.unwrap_err().contains("no runner for padded rows"));
        let e = run_vector(crate::filter::STREAM_ID, &serde_json::json!({}), &[b], 3);
        assert!(e.is_err());
    }

    /// The manifest reader takes `row_pad` 1..=64 and refuses 0, 65 and a
    /// field it does not know (a reader must not run such a vector packed).
    #[test]
    fn manifest_row_pad_is_checked() {
        let m = |extra: &str| {
            format!(
                r#"{{"format": "fixsight-golden", "version": 1, "vectors": [{{"id": "x.y",
                "comment": "", "kernel": "x.y", "params": {{}}, "inputs": [],
                "expected": [{{"name": "a", "file": "a.bin", "elem": "u8", "width": 1,
                "height": 1, "channels": 1, "sha256": "{}"}}]{extra}}}]}}"#,
                "0".repeat(64)
            )
        };
        let path = std::path::Path::new("manifest.json");
        let parse = |extra: &str| crate::golden::parse_manifest(&m(extra), path);
        assert_eq!(parse("").unwrap().vectors[0].row_pad, None);
        assert_eq!(
            parse(r#", "row_pad": 64"#).unwrap().vectors[0].row_pad,
            Some(64)
        );
        for bad in [r#", "row_pad": 0"#, r#", "row_pad": 65"#] {
            assert!(
                parse(bad).unwrap_err().to_string().contains("row_pad"),
                "{bad}"
            );
        }
        let e = parse(r#", "stride": 41"#).unwrap_err().to_string();
        assert!(e.contains("unknown field `stride`"), "{e}");
    }

    /// A buffer whose padding a kernel overwrote is rejected, naming the
    /// element.
    #[test]
    fn overwritten_padding_fails() {
        let mut out = out_buffer("dst", Elem::I16, 5, 3, 1, 4);
        assert!(out.bytes.iter().all(|&b| b == OUT_PAD_BYTE));
        assert!(unpad(&out, 5, 1).is_ok());
        // element 1 of the padding after row 2: byte (2 * 9 + 5 + 1) * 2
        out.bytes[(2 * 9 + 6) * 2 + 1] = 0;
        let e = unpad(&out, 5, 1).unwrap_err();
        assert!(e.contains("padding element 1 after row 2"), "{e}");
        assert!(e.contains("1 padding element(s)"), "{e}");
    }
}
