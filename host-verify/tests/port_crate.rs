//! The repository's own port (`ports/cortex-m4-dsp/`) through
//! `fixsight-verify port-check`, the way a vendor proves a port: run the
//! port on every golden input of its claimed kernel ids (padded-row
//! vectors with padded buffers, `golden/README.md`), write one output file
//! per expected image and the port's own `claims.txt`, and check the
//! folder. Every claimed vector passes, every other vector is listed as not
//! claimed; a port that got one element wrong would fail there (shown by
//! `tests/port_check.rs` on an independent port).

use fixsight::filter::Border;
use fixsight::{ImageView, ImageViewMut};
use fixsight_port_cortex_m4_dsp::filter::{self as port, scratch_words};
use fixsight_verify::golden;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::Command;

type PortU8 =
    fn(&ImageView<'_, u8>, &mut ImageViewMut<'_, u8>, Border, &mut [u32]) -> fixsight::Result<()>;
type PortI16 =
    fn(&ImageView<'_, u8>, &mut ImageViewMut<'_, i16>, Border, &mut [u32]) -> fixsight::Result<()>;

fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("..")
}

#[test]
fn the_dsp_port_passes_port_check_on_every_claimed_vector() {
    let g = repo().join("golden");
    let m = golden::read_manifest(&g).unwrap();
    let out_dir = std::env::temp_dir().join(format!("fixsight-port-crate-{}", std::process::id()));
    let _ = fs::remove_dir_all(&out_dir);
    fs::create_dir_all(&out_dir).unwrap();
    fs::copy(
        repo().join("ports/cortex-m4-dsp/claims.txt"),
        out_dir.join("claims.txt"),
    )
    .unwrap();
    let mut claimed = 0;
    for v in &m.vectors {
        if !fixsight_port_cortex_m4_dsp::CLAIMS.contains(&v.kernel.as_str()) {
            continue;
        }
        let src = golden::load_image(&g, &v.inputs[0]).unwrap();
        let (w, h) = (src.width, src.height);
        let stride = w + v.row_pad.unwrap_or(0);
        let mut input = vec![golden::IN_PAD_BYTE; stride * h];
        for y in 0..h {
            input[y * stride..y * stride + w].copy_from_slice(&src.bytes[y * w..(y + 1) * w]);
        }
        let view = ImageView::new(&input, w, h, stride).unwrap();
        let border = match v.params["border"]["fill"].as_u64() {
            Some(c) => Border::Fill(c as u8),
            None => Border::Clamp,
        };
        let mut scratch = vec![0u32; scratch_words(w)];
        let smoothing = match v.kernel.as_str() {
            "filter.binomial3" => Some(port::binomial3 as PortU8),
            "filter.binomial5" => Some(port::binomial5 as PortU8),
            _ => None,
        };
        let derivative = match v.kernel.as_str() {
            "filter.sobel_x" => Some(port::sobel_x as PortI16),
            "filter.sobel_y" => Some(port::sobel_y as PortI16),
            "filter.scharr_x" => Some(port::scharr_x as PortI16),
            "filter.scharr_y" => Some(port::scharr_y as PortI16),
            _ => None,
        };
        let bytes: Vec<u8> = match (smoothing, derivative) {
            (Some(p), _) => {
                let mut out = vec![golden::OUT_PAD_BYTE; stride * h];
                let mut dst = ImageViewMut::new(&mut out, w, h, stride).unwrap();
                p(&view, &mut dst, border, &mut scratch).unwrap();
                out
            }
            (None, Some(p)) => {
                let fill = i16::from_le_bytes([golden::OUT_PAD_BYTE; 2]);
                let mut out = vec![fill; stride * h];
                let mut dst = ImageViewMut::new(&mut out, w, h, stride).unwrap();
                p(&view, &mut dst, border, &mut scratch).unwrap();
                out.iter().flat_map(|e| e.to_le_bytes()).collect()
            }
            _ => panic!("claimed kernel {} has no runner here", v.kernel),
        };
        fs::write(out_dir.join(&v.expected[0].file), bytes).unwrap();
        claimed += 1;
    }
    assert!(claimed >= 33, "{claimed} claimed vectors");
    let o = Command::new(env!("CARGO_BIN_EXE_fixsight-verify"))
        .args(["port-check", "--vectors"])
        .arg(&g)
        .arg("--outputs")
        .arg(&out_dir)
        .output()
        .unwrap();
    let out = String::from_utf8_lossy(&o.stdout);
    assert!(
        o.status.success(),
        "{out}\n{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let total = m.vectors.len();
    let summary = format!(
        "port-check: {claimed} passed, 0 failed, {} not claimed, of {total} vectors",
        total - claimed
    );
    assert!(out.contains(&summary), "{out}");
    fs::remove_dir_all(&out_dir).unwrap();
}
