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
//! * `warp.grid_stream`: params, inputs and output as `warp.control_grid`.
//!   The source rows are pushed one at a time into a `GridStream` whose
//!   ring (from the arena) holds exactly `band_rows(strip_rows)` rows; each
//!   strip is taken as soon as it is ready, into a strip buffer from the
//!   arena, and copied to its place in `dst`.

use super::filter::border;
use super::{input, output, Arena, Buf, Fail, Img, Params};
use fixsight::warp::{ControlGrid, GridStream, PixelMap, WarpGeometry};
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

/// `warp.grid_stream`.
pub fn grid_stream(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let b = border(p)?;
    let src = input(ins, 0)?;
    let Buf::U8(blob) = &input(ins, 1)?.buf else {
        return Err(Fail::Harness("blob is not u8"));
    };
    let Buf::U8(img) = &src.buf else {
        return Err(Fail::Harness("src is not u8"));
    };
    let m = ControlGrid::from_blob(blob)?;
    let g = m.geometry();
    let c = src.channels;
    let (w, h) = (g.out_width(), g.out_height());
    let strip = usize::try_from(p.int("strip_rows")?)
        .map_err(|_| Fail::Param("strip_rows"))?
        .clamp(1, h);
    let row_len = g.src_width() * c;
    let Some(ring) = arena.u8s(m.band_rows(strip)? * row_len) else {
        return Err(Fail::Harness("arena full (ring)"));
    };
    let Some(buf) = arena.u8s(strip * w * c) else {
        return Err(Fail::Harness("arena full (strip)"));
    };
    let mut st = GridStream::new(m, ring, c, strip, b)?;
    let dst = output(outs, 0)?;
    let Buf::U8(out) = &mut dst.buf else {
        return Err(Fail::Harness("dst is not u8"));
    };
    for y in 0..=g.src_height() {
        while let Some(d) =
            st.next_strip(&mut ImageViewMut::interleaved(buf, w, strip, w * c, c)?)?
        {
            let n = d.rows * w * c;
            let at = d.first_row * w * c;
            out.get_mut(at..at + n)
                .ok_or(Fail::Harness("dst too small"))?
                .copy_from_slice(&buf[..n]);
        }
        if let Some(row) = img.get(y * row_len..(y + 1) * row_len) {
            st.push_row(row)?;
        }
    }
    Ok(())
}
