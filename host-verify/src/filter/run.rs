//! How the host calls the filter kernels: whole frame and row stream.

use fixsight::filter::{FilterOutput, FilterStream, SeparableFilter};
use fixsight::{ImageView, ImageViewMut};

/// Runs the kernel over a whole frame.
pub fn run_whole<T: FilterOutput>(
    f: &SeparableFilter,
    img: &[u8],
    w: usize,
    h: usize,
) -> Result<Vec<T>, fixsight::Error> {
    let mut out = vec![T::default(); w * h];
    let mut scratch = vec![0i32; w];
    f.apply(
        &ImageView::new(img, w, h, w)?,
        &mut ImageViewMut::new(&mut out, w, h, w)?,
        &mut scratch,
    )?;
    Ok(out)
}

/// Runs the kernel row by row through a [`FilterStream`] and checks that
/// rows come out in order.
pub fn run_stream<T: FilterOutput>(
    f: &SeparableFilter,
    img: &[u8],
    w: usize,
    h: usize,
) -> Result<Vec<T>, String> {
    let mut ring = vec![0u8; FilterStream::ring_rows(f) * w];
    let mut acc = vec![0i32; w];
    let mut s = FilterStream::new(f, w, h, &mut ring, &mut acc).map_err(|e| e.to_string())?;
    let mut out = vec![T::default(); w * h];
    let mut row = vec![T::default(); w];
    let mut next = 0usize;
    let mut take = |y: Option<usize>, row: &[T]| -> Result<(), String> {
        if let Some(y) = y {
            if y != next {
                return Err(format!("stream produced row {y}, expected {next}"));
            }
            out[y * w..(y + 1) * w].copy_from_slice(row);
            next += 1;
        }
        Ok(())
    };
    for y in 0..h {
        let r = s
            .push_row(&img[y * w..(y + 1) * w], &mut row)
            .map_err(|e| e.to_string())?;
        take(r, &row)?;
    }
    loop {
        let r = s.flush_row(&mut row).map_err(|e| e.to_string())?;
        if r.is_none() {
            break;
        }
        take(r, &row)?;
    }
    if next != h {
        return Err(format!("stream produced {next} rows, expected {h}"));
    }
    Ok(out)
}
