//! How the host calls the gradient kernels, and the Sobel gradients of a
//! demo scene they run on.

use crate::filter::run::run_whole;
use crate::scene::Scene;
use fixsight::filter::{sobel_x, sobel_y, Border};
use fixsight::{ImageView, ImageViewMut};

/// A frame-level gradient kernel.
pub type PairKernel<T> =
    fn(&ImageView<'_, i16>, &ImageView<'_, i16>, &mut ImageViewMut<'_, T>) -> fixsight::Result<()>;

/// Runs a frame-level gradient kernel on `(gx, gy)`.
pub fn run_pair<T: Copy + Default>(
    gx: &[i16],
    gy: &[i16],
    w: usize,
    h: usize,
    k: PairKernel<T>,
) -> Result<Vec<T>, String> {
    let mut out = vec![T::default(); w * h];
    let e = |e: fixsight::Error| e.to_string();
    k(
        &ImageView::new(gx, w, h, w).map_err(e)?,
        &ImageView::new(gy, w, h, w).map_err(e)?,
        &mut ImageViewMut::new(&mut out, w, h, w).map_err(e)?,
    )
    .map_err(e)?;
    Ok(out)
}

/// Sobel gradients of a scene.
pub fn sobel_pair(s: &Scene) -> (Vec<i16>, Vec<i16>) {
    let gx = run_whole::<i16>(&sobel_x(Border::Clamp), &s.gray, s.width, s.height)
        .expect("scene sizes are valid");
    let gy = run_whole::<i16>(&sobel_y(Border::Clamp), &s.gray, s.width, s.height)
        .expect("scene sizes are valid");
    (gx, gy)
}
