//! `warp.*` kernel ids, as `run_vector` in `host-verify/src/warp.rs`
//! computes them.
//!
//! * `warp.pixel_map`: params `frac_bits`, `border` (`"clamp"` or
//!   `{"fill": c}`); inputs `src` (u8, any channel count), `map` (i32,
//!   2 channels: raw x, y per output pixel); output `dst` (u8, map size,
//!   channels of `src`). One `PixelMap::warp_rows` call over all rows.
//! * `warp.control_grid`: params `border`, `strip_rows`; inputs `src` (u8),
//!   `blob` (u8, the grid blob as one row of bytes); output `dst` (u8, the
//!   blob's output size). The blob is parsed in place by
//!   `ControlGrid::from_blob` and the output produced in strips of
//!   `strip_rows` rows (the last strip shorter), one `warp_rows` call per
//!   strip, like a caller with a small line buffer.

use super::filter::border;
use super::{input, output, Arena, Buf, Fail, Img, Params};
use fixsight::warp::{ControlGrid, PixelMap, WarpGeometry};
use fixsight::ImageViewMut;

/// `warp.pixel_map`.
pub fn pixel_map(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let b = border(p)?;
    let frac_bits = u32::try_from(p.int("frac_bits")?).map_err(|_| Fail::Param("frac_bits"))?;
    let src = input(ins, 0)?;
    let map = input(ins, 1)?;
    if map.channels != 2 {
        return Err(Fail::Harness("map must have 2 channels"));
    }
    let Buf::I32(coords) = &map.buf else {
        return Err(Fail::Harness("map is not i32"));
    };
    let geom = WarpGeometry::new(map.width, map.height, src.width, src.height, frac_bits)?;
    let m = PixelMap::new(coords, geom)?;
    m.warp_rows(&src.u8()?, &mut output(outs, 0)?.u8_mut()?, 0, b)?;
    Ok(())
}

/// `warp.control_grid`.
pub fn control_grid(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let b = border(p)?;
    let strip = usize::try_from(p.int("strip_rows")?)
        .map_err(|_| Fail::Param("strip_rows"))?
        .max(1);
    let src = input(ins, 0)?;
    let Buf::U8(blob) = &input(ins, 1)?.buf else {
        return Err(Fail::Harness("blob is not u8"));
    };
    let m = ControlGrid::from_blob(blob)?;
    let sv = src.u8()?;
    let dst = output(outs, 0)?;
    let (w, c) = (dst.width, dst.channels);
    let Buf::U8(out) = &mut dst.buf else {
        return Err(Fail::Harness("dst is not u8"));
    };
    if w == 0 || c == 0 {
        return Err(Fail::Harness("dst is empty"));
    }
    for (n, chunk) in out.chunks_mut(strip * w * c).enumerate() {
        let rows = chunk.len() / (w * c);
        m.warp_rows(
            &sv,
            &mut ImageViewMut::interleaved(chunk, w, rows, w * c, c)?,
            n * strip,
            b,
        )?;
    }
    Ok(())
}
