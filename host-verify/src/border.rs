//! The border rule on the host side: its golden-parameter form and the
//! border-extended pixel lookup the references share.

use fixsight::filter::Border;
use serde::{Deserialize, Serialize};

/// Border rule as written in golden params.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "lowercase")]
pub enum BorderParam {
    /// Coordinates clamped into the image.
    Clamp,
    /// The fill value outside the image.
    Fill(u8),
}

impl From<BorderParam> for Border {
    fn from(b: BorderParam) -> Border {
        match b {
            BorderParam::Clamp => Border::Clamp,
            BorderParam::Fill(c) => Border::Fill(c),
        }
    }
}

impl From<Border> for BorderParam {
    fn from(b: Border) -> BorderParam {
        match b {
            Border::Clamp => BorderParam::Clamp,
            Border::Fill(c) => BorderParam::Fill(c),
        }
    }
}

/// Border-extended source sample `P(x, y)` of channel `ch` of an image of
/// `c` interleaved channels (the border rule of every kernel's reference).
#[allow(clippy::too_many_arguments)]
pub fn px(img: &[u8], w: usize, h: usize, c: usize, ch: usize, x: i64, y: i64, b: Border) -> i64 {
    if x >= 0 && y >= 0 && x < w as i64 && y < h as i64 {
        img[(y as usize * w + x as usize) * c + ch] as i64
    } else {
        match b {
            Border::Fill(v) => v as i64,
            Border::Clamp => {
                let xc = x.clamp(0, w as i64 - 1) as usize;
                let yc = y.clamp(0, h as i64 - 1) as usize;
                img[(yc * w + xc) * c + ch] as i64
            }
        }
    }
}
