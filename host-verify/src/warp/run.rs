//! How the host calls the warp kernels.

use fixsight::filter::Border;
use fixsight::warp::{ControlGrid, GridStream, PixelMap, WarpGeometry};
use fixsight::{ImageView, ImageViewMut};

/// Runs the pixel-map kernel over a whole frame.
pub fn run_pixel_map(
    coords: &[i32],
    geom: WarpGeometry,
    img: &[u8],
    c: usize,
    border: Border,
) -> Result<Vec<u8>, fixsight::Error> {
    let map = PixelMap::new(coords, geom)?;
    let (w, h) = (geom.out_width(), geom.out_height());
    let mut out = vec![0u8; w * h * c];
    let sw = geom.src_width();
    map.warp_rows(
        &ImageView::interleaved(img, sw, geom.src_height(), sw * c, c)?,
        &mut ImageViewMut::interleaved(&mut out, w, h, w * c, c)?,
        0,
        border,
    )?;
    Ok(out)
}

/// Runs a grid over a whole frame, or in strips of `strip` rows.
pub fn run_grid(
    grid: &ControlGrid<'_>,
    img: &[u8],
    c: usize,
    border: Border,
    strip: Option<usize>,
) -> Result<Vec<u8>, fixsight::Error> {
    let g = grid.geometry();
    let (w, h) = (g.out_width(), g.out_height());
    let mut out = vec![0u8; w * h * c];
    let sw = g.src_width();
    let src = ImageView::interleaved(img, sw, g.src_height(), sw * c, c)?;
    // A strip taller than the frame is the whole frame.
    let step = strip.unwrap_or(h).clamp(1, h);
    for (n, chunk) in out.chunks_mut(step * w * c).enumerate() {
        let rows = chunk.len() / (w * c);
        grid.warp_rows(
            &src,
            &mut ImageViewMut::interleaved(chunk, w, rows, w * c, c)?,
            n * step,
            border,
        )?;
    }
    Ok(out)
}

/// Runs a grid through [`GridStream`] as a camera would feed it: source
/// rows pushed one by one into a ring of exactly `band_rows(strip)` rows,
/// each strip of `strip` rows taken as soon as it is ready.
pub fn run_grid_stream(
    grid: &ControlGrid<'_>,
    img: &[u8],
    c: usize,
    border: Border,
    strip: usize,
) -> Result<Vec<u8>, fixsight::Error> {
    let g = grid.geometry();
    let (w, h, sw) = (g.out_width(), g.out_height(), g.src_width());
    let row_len = sw * c;
    let strip = strip.clamp(1, h);
    let mut ring = vec![0u8; grid.band_rows(strip)? * row_len];
    let mut st = GridStream::new(*grid, &mut ring, c, strip, border)?;
    let mut out = vec![0u8; w * h * c];
    let mut buf = vec![0u8; strip * w * c];
    for y in 0..=g.src_height() {
        while let Some(d) = st.next_strip(&mut ImageViewMut::interleaved(
            &mut buf,
            w,
            strip,
            w * c,
            c,
        )?)? {
            let n = d.rows * w * c;
            let at = d.first_row * w * c;
            out[at..at + n].copy_from_slice(&buf[..n]);
        }
        if let Some(row) = img.get(y * row_len..(y + 1) * row_len) {
            st.push_row(row)?;
        }
    }
    Ok(out)
}
