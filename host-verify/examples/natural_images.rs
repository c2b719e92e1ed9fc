//! Rebuilds the natural test images in `host-verify/data/natural/` from the
//! sample photographs a Python package ships (see `SOURCES.md` there for
//! the package, its version and each image's licence).
//!
//! ```sh
//! pip download --no-deps -d /tmp/wheel scikit-image==0.25.2
//! unzip -q /tmp/wheel/scikit_image-0.25.2-*.whl 'skimage/data/*' -d /tmp/wheel
//! cargo run -p fixsight-verify --example natural_images -- /tmp/wheel/skimage/data host-verify/data/natural
//! ```
//!
//! Each image is decoded, turned grey by the `image` crate's luma rule
//! (`(2126 R + 7152 G + 722 B) / 10000`, integer, Rec. 709 weights on the
//! stored values) when it has colour, and cropped to 320 x 240 at the
//! offset listed in [`fixsight_verify::natural::NATURAL`], without
//! resampling, so the pixels are the photographer's own. Only the package's
//! data files are used; none of its code runs.

use fixsight_verify::natural::{NATURAL, NATURAL_HEIGHT, NATURAL_WIDTH};
use std::path::PathBuf;

fn main() -> anyhow::Result<()> {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let [src, out] = args.as_slice() else {
        anyhow::bail!("usage: natural_images <package data folder> <output folder>");
    };
    let (src, out) = (PathBuf::from(src), PathBuf::from(out));
    std::fs::create_dir_all(&out)?;
    for n in NATURAL {
        let path = src.join(n.file);
        let img = image::open(&path)
            .map_err(|e| anyhow::anyhow!("{}: {e}", path.display()))?
            .to_luma8();
        let (x0, y0) = n.crop_at;
        let (w, h) = (NATURAL_WIDTH as u32, NATURAL_HEIGHT as u32);
        anyhow::ensure!(
            x0 + w <= img.width() && y0 + h <= img.height(),
            "{}: {}x{} is too small for the crop at ({x0}, {y0})",
            n.file,
            img.width(),
            img.height()
        );
        let crop = image::imageops::crop_imm(&img, x0, y0, w, h).to_image();
        let dest = out.join(format!("{}.png", n.name));
        crop.save(&dest)?;
        println!("{} <- {} at ({x0}, {y0})", dest.display(), n.file);
    }
    Ok(())
}
