//! Validated image views over caller-owned buffers.
//!
//! A view is `width x height` pixels of `channels` interleaved elements each;
//! row `y` starts at element `y * stride`. Construction checks everything the
//! kernels rely on, so kernel code can slice rows without further checks:
//!
//! * `width`, `height` in `1..=MAX_DIM`;
//! * `channels` in `1..=4`;
//! * `stride >= width * channels`;
//! * `stride * (height - 1) + width * channels <= buffer length`;
//! * `stride * height < 2^31`, so every element index fits a signed 32-bit
//!   integer on any target.
//!
//! ```
//! use fixsight::{ImageView, Error};
//! let buf = [0u8; 6 * 3];
//! let v = ImageView::new(&buf, 5, 3, 6)?;          // padded rows
//! assert_eq!(v.row(2).map(|r| r.len()), Some(5));
//! assert!(matches!(ImageView::new(&buf, 7, 3, 6), Err(Error::StrideTooSmall { .. })));
//! # Ok::<(), Error>(())
//! ```

use crate::error::{Error, Result};

/// Largest accepted width or height (2^15 - 1): pixel coordinates fit `i16`
/// and fixed-point coordinates with up to 16 fractional bits fit `i32`.
pub const MAX_DIM: usize = 32767;

/// Largest number of interleaved channels a view may have.
pub const MAX_CHANNELS: usize = 4;

/// Checks that `width` and `height` are in `1..=MAX_DIM`.
///
/// ```
/// use fixsight::image::check_dims;
/// assert!(check_dims(640, 480).is_ok());
/// assert!(check_dims(0, 480).is_err());
/// assert!(check_dims(40000, 1).is_err());
/// ```
pub fn check_dims(width: usize, height: usize) -> Result<()> {
    if width == 0 || height == 0 {
        return Err(Error::ZeroSize { width, height });
    }
    if width > MAX_DIM || height > MAX_DIM {
        return Err(Error::TooLarge {
            width,
            height,
            limit: MAX_DIM,
        });
    }
    Ok(())
}

/// Checks a layout (the rules in the module docs, without a buffer) and
/// returns the number of elements it spans:
/// `stride * (height - 1) + width * channels`. A buffer of at least that many
/// elements can hold the image; callers that hand memory across a language
/// boundary use it to size the slice before making a view.
///
/// ```
/// use fixsight::{image::layout_span, Error};
/// assert_eq!(layout_span(5, 3, 6, 1), Ok(17));          // last row needs no padding
/// assert_eq!(layout_span(2, 2, 6, 3), Ok(12));          // interleaved RGB
/// assert!(matches!(layout_span(7, 3, 6, 1), Err(Error::StrideTooSmall { .. })));
/// assert!(matches!(layout_span(1, 30000, 1 << 20, 1), Err(Error::LayoutOverflow { .. })));
/// ```
pub fn layout_span(width: usize, height: usize, stride: usize, channels: usize) -> Result<usize> {
    check_dims(width, height)?;
    if channels == 0 || channels > MAX_CHANNELS {
        return Err(Error::UnsupportedChannels {
            channels,
            accepted: "1 to 4 interleaved channels",
        });
    }
    let row_len = width * channels; // <= 32767 * 4, no overflow
    if stride < row_len {
        return Err(Error::StrideTooSmall { stride, row_len });
    }
    let total = match stride.checked_mul(height) {
        Some(t) if t <= i32::MAX as usize => t,
        _ => return Err(Error::LayoutOverflow { stride, height }),
    };
    Ok(total - stride + row_len)
}

/// Checks a layout against a buffer length and returns the number of
/// elements it spans.
fn check_layout(
    len: usize,
    width: usize,
    height: usize,
    stride: usize,
    channels: usize,
) -> Result<usize> {
    let needed = layout_span(width, height, stride, channels)?;
    if len < needed {
        return Err(Error::BufferTooShort {
            what: "image",
            needed,
            got: len,
        });
    }
    Ok(needed)
}

/// Read-only view of an image in a caller buffer.
///
/// ```
/// use fixsight::ImageView;
/// let buf: [i16; 4] = [1, -2, 3, -4];
/// let g = ImageView::new(&buf, 2, 2, 2)?;
/// assert_eq!(g.pixel(1, 1), Some(-4));
/// assert_eq!(g.pixel(2, 0), None);
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug, Clone, Copy)]
pub struct ImageView<'a, T> {
    data: &'a [T],
    width: usize,
    height: usize,
    stride: usize,
    channels: usize,
}

impl<'a, T: Copy> ImageView<'a, T> {
    /// A single-channel view; `stride` is in elements.
    ///
    /// ```
    /// let buf = [0u8; 12];
    /// assert!(fixsight::ImageView::new(&buf, 4, 3, 4).is_ok());
    /// ```
    pub fn new(data: &'a [T], width: usize, height: usize, stride: usize) -> Result<Self> {
        Self::interleaved(data, width, height, stride, 1)
    }

    /// A view of `channels` interleaved elements per pixel (for example 3
    /// for RGB); `stride` is in elements, not pixels.
    ///
    /// ```
    /// let rgb = [0u8; 2 * 2 * 3];
    /// let v = fixsight::ImageView::interleaved(&rgb, 2, 2, 6, 3)?;
    /// assert_eq!(v.row(0).unwrap().len(), 6);
    /// # Ok::<(), fixsight::Error>(())
    /// ```
    pub fn interleaved(
        data: &'a [T],
        width: usize,
        height: usize,
        stride: usize,
        channels: usize,
    ) -> Result<Self> {
        check_layout(data.len(), width, height, stride, channels)?;
        Ok(Self {
            data,
            width,
            height,
            stride,
            channels,
        })
    }

    /// Width in pixels.
    ///
    /// ```
    /// let b = [0u8; 6];
    /// assert_eq!(fixsight::ImageView::new(&b, 3, 2, 3).unwrap().width(), 3);
    /// ```
    pub fn width(&self) -> usize {
        self.width
    }

    /// Height in rows.
    ///
    /// ```
    /// let b = [0u8; 6];
    /// assert_eq!(fixsight::ImageView::new(&b, 3, 2, 3).unwrap().height(), 2);
    /// ```
    pub fn height(&self) -> usize {
        self.height
    }

    /// Row stride in elements.
    ///
    /// ```
    /// let b = [0u8; 8];
    /// assert_eq!(fixsight::ImageView::new(&b, 3, 2, 4).unwrap().stride(), 4);
    /// ```
    pub fn stride(&self) -> usize {
        self.stride
    }

    /// Interleaved elements per pixel.
    ///
    /// ```
    /// let b = [0u8; 6];
    /// assert_eq!(fixsight::ImageView::new(&b, 3, 2, 3).unwrap().channels(), 1);
    /// ```
    pub fn channels(&self) -> usize {
        self.channels
    }

    /// Row `y` (`width * channels` elements), or `None` past the last row.
    ///
    /// ```
    /// let b = [1u8, 2, 3, 4];
    /// let v = fixsight::ImageView::new(&b, 2, 2, 2).unwrap();
    /// assert_eq!(v.row(1), Some(&[3u8, 4][..]));
    /// ```
    pub fn row(&self, y: usize) -> Option<&'a [T]> {
        if y < self.height {
            Some(self.row_at(y))
        } else {
            None
        }
    }

    /// Element of channel 0 at `(x, y)`, or `None` outside the image.
    ///
    /// ```
    /// let b = [1u8, 2, 3, 4];
    /// let v = fixsight::ImageView::new(&b, 2, 2, 2).unwrap();
    /// assert_eq!(v.pixel(0, 1), Some(3));
    /// ```
    pub fn pixel(&self, x: usize, y: usize) -> Option<T> {
        if x < self.width && y < self.height {
            Some(self.data[y * self.stride + x * self.channels])
        } else {
            None
        }
    }

    /// Row `y` for `y < height` (checked at construction, so this cannot go
    /// out of bounds for an in-range `y`).
    pub(crate) fn row_at(&self, y: usize) -> &'a [T] {
        let start = y * self.stride;
        &self.data[start..start + self.width * self.channels]
    }

    /// The elements from the start of row `y` to the end of the buffer
    /// (`y < height`), for kernels that index several rows from one base.
    pub(crate) fn rows_from(&self, y: usize) -> &'a [T] {
        &self.data[y * self.stride..]
    }

    /// `true` when `other` has the same width and height.
    pub(crate) fn same_size<U: Copy>(&self, other: &ImageViewMut<'_, U>) -> bool {
        self.width == other.width && self.height == other.height
    }
}

/// Writable view of an image in a caller buffer. Same layout rules as
/// [`ImageView`].
///
/// ```
/// use fixsight::ImageViewMut;
/// let mut buf = [0u8; 4];
/// let mut v = ImageViewMut::new(&mut buf, 2, 2, 2)?;
/// v.row_mut(1).unwrap()[0] = 9;
/// assert_eq!(buf, [0, 0, 9, 0]);
/// # Ok::<(), fixsight::Error>(())
/// ```
#[derive(Debug)]
pub struct ImageViewMut<'a, T> {
    data: &'a mut [T],
    width: usize,
    height: usize,
    stride: usize,
    channels: usize,
}

impl<'a, T: Copy> ImageViewMut<'a, T> {
    /// A single-channel writable view; `stride` is in elements.
    ///
    /// ```
    /// let mut b = [0i16; 6];
    /// assert!(fixsight::ImageViewMut::new(&mut b, 3, 2, 3).is_ok());
    /// ```
    pub fn new(data: &'a mut [T], width: usize, height: usize, stride: usize) -> Result<Self> {
        Self::interleaved(data, width, height, stride, 1)
    }

    /// A writable view of `channels` interleaved elements per pixel.
    ///
    /// ```
    /// let mut b = [0u8; 12];
    /// assert!(fixsight::ImageViewMut::interleaved(&mut b, 2, 2, 6, 3).is_ok());
    /// ```
    pub fn interleaved(
        data: &'a mut [T],
        width: usize,
        height: usize,
        stride: usize,
        channels: usize,
    ) -> Result<Self> {
        check_layout(data.len(), width, height, stride, channels)?;
        Ok(Self {
            data,
            width,
            height,
            stride,
            channels,
        })
    }

    /// Width in pixels.
    ///
    /// ```
    /// let mut b = [0u8; 6];
    /// assert_eq!(fixsight::ImageViewMut::new(&mut b, 3, 2, 3).unwrap().width(), 3);
    /// ```
    pub fn width(&self) -> usize {
        self.width
    }

    /// Height in rows.
    ///
    /// ```
    /// let mut b = [0u8; 6];
    /// assert_eq!(fixsight::ImageViewMut::new(&mut b, 3, 2, 3).unwrap().height(), 2);
    /// ```
    pub fn height(&self) -> usize {
        self.height
    }

    /// Row stride in elements.
    ///
    /// ```
    /// let mut b = [0u8; 8];
    /// assert_eq!(fixsight::ImageViewMut::new(&mut b, 3, 2, 4).unwrap().stride(), 4);
    /// ```
    pub fn stride(&self) -> usize {
        self.stride
    }

    /// Interleaved elements per pixel.
    ///
    /// ```
    /// let mut b = [0u8; 6];
    /// assert_eq!(fixsight::ImageViewMut::new(&mut b, 3, 2, 3).unwrap().channels(), 1);
    /// ```
    pub fn channels(&self) -> usize {
        self.channels
    }

    /// Writable row `y`, or `None` past the last row.
    ///
    /// ```
    /// let mut b = [0u8; 4];
    /// let mut v = fixsight::ImageViewMut::new(&mut b, 2, 2, 2).unwrap();
    /// assert!(v.row_mut(2).is_none());
    /// ```
    pub fn row_mut(&mut self, y: usize) -> Option<&mut [T]> {
        if y < self.height {
            Some(self.row_at_mut(y))
        } else {
            None
        }
    }

    /// Read-only view of the same pixels.
    ///
    /// ```
    /// let mut b = [5u8; 4];
    /// let v = fixsight::ImageViewMut::new(&mut b, 2, 2, 2).unwrap();
    /// assert_eq!(v.as_view().pixel(1, 1), Some(5));
    /// ```
    pub fn as_view(&self) -> ImageView<'_, T> {
        ImageView {
            data: self.data,
            width: self.width,
            height: self.height,
            stride: self.stride,
            channels: self.channels,
        }
    }

    /// Writable row `y` for `y < height`.
    pub(crate) fn row_at_mut(&mut self, y: usize) -> &mut [T] {
        let start = y * self.stride;
        let len = self.width * self.channels;
        &mut self.data[start..start + len]
    }
}

/// Checks that `out` has the size of `src`; `what` names the pair in the error.
pub(crate) fn check_same_size<T: Copy, U: Copy>(
    what: &'static str,
    src: &ImageView<'_, T>,
    out: &ImageViewMut<'_, U>,
) -> Result<()> {
    if src.same_size(out) {
        Ok(())
    } else {
        Err(Error::SizeMismatch {
            what,
            expected: (src.width, src.height),
            got: (out.width, out.height),
        })
    }
}

/// Checks that a view has exactly one channel.
pub(crate) fn check_single_channel<T: Copy>(view: &ImageView<'_, T>) -> Result<()> {
    if view.channels == 1 {
        Ok(())
    } else {
        Err(Error::UnsupportedChannels {
            channels: view.channels,
            accepted: "1 channel",
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_every_bad_layout_with_its_numbers() {
        let b = [0u8; 100];
        assert_eq!(
            ImageView::new(&b, 0, 5, 5).unwrap_err(),
            Error::ZeroSize {
                width: 0,
                height: 5
            }
        );
        assert!(matches!(
            ImageView::new(&b, MAX_DIM + 1, 1, MAX_DIM + 1),
            Err(Error::TooLarge { .. })
        ));
        assert_eq!(
            ImageView::new(&b, 10, 2, 9).unwrap_err(),
            Error::StrideTooSmall {
                stride: 9,
                row_len: 10
            }
        );
        assert_eq!(
            ImageView::new(&b, 10, 11, 10).unwrap_err(),
            Error::BufferTooShort {
                what: "image",
                needed: 110,
                got: 100
            }
        );
        assert!(matches!(
            ImageView::new(&b, 10, 30000, usize::MAX / 2),
            Err(Error::LayoutOverflow { .. })
        ));
        assert!(matches!(
            ImageView::interleaved(&b, 2, 2, 10, 5),
            Err(Error::UnsupportedChannels { channels: 5, .. })
        ));
    }

    #[test]
    fn last_row_may_be_short_of_stride() {
        // 3 rows of stride 5 but the final row only needs width elements.
        let b = [0u8; 5 * 2 + 3];
        assert!(ImageView::new(&b, 3, 3, 5).is_ok());
    }
}
