//! `hysteresis.*` kernel ids, as `run_vector` in
//! `host-verify/src/hysteresis.rs` computes them.
//!
//! | id | params | inputs | outputs |
//! |---|---|---|---|
//! | `hysteresis.thresholds` | `bins`, `shift`, `high_permille`, `low_ratio_u0f16` | `mag` u16 | `thresholds` u16 (`low`, `high` in the first two elements) |
//! | `hysteresis.classify` | `low`, `high` | `mag` u16 | `codes` u8 |
//! | `hysteresis.link` | `stack` | `codes` u8 | `edges` u8 |
//!
//! Scratch (histogram, work stack) comes from the arena and is zeroed
//! first, as the host passes zeroed vectors.
//!
//! Two forms used only by the QVGA bench (`src/bench.rs`), never by a
//! golden vector: `hysteresis.classify` without `low`/`high` params takes
//! them from a second input, the output of `hysteresis.thresholds`; and
//! `hysteresis.link` with no input runs in place on its output image, so
//! the bench window holds the kernel alone and not the copy of the map.

use super::{copy_in, input, int, output, Arena, Buf, Fail, Img, Param, Params};
use fixsight::hysteresis::{self, Thresholds, U0F16};
use fixsight::ImageView;

pub(super) fn thresholds_of(
    p: &Params,
    mag: &ImageView<'_, u16>,
    arena: &mut Arena<'_>,
) -> Result<Thresholds, Fail> {
    let bins: usize = int(p, "bins")?;
    let hist = arena.u32s(bins).ok_or(Fail::Harness("arena full"))?;
    hist.fill(0);
    Ok(Thresholds::from_histogram(
        mag,
        hist,
        int(p, "shift")?,
        int(p, "high_permille")?,
        U0F16::from_bits(int(p, "low_ratio_u0f16")?),
    )?)
}

/// `hysteresis.thresholds`: `Thresholds::from_histogram` with a zeroed
/// histogram of `bins` entries; writes `low`, `high`.
pub fn thresholds(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let t = thresholds_of(p, &input(ins, 0)?.u16()?, arena)?;
    match &mut output(outs, 0)?.buf {
        Buf::U16(o) if o.len() >= 2 => {
            o[0] = t.low();
            o[1] = t.high();
            Ok(())
        }
        _ => Err(Fail::Harness(
            "thresholds output must be u16 with 2 elements",
        )),
    }
}

/// `hysteresis.classify`: `hysteresis::classify` with `Thresholds::new(low, high)`.
pub fn classify(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let t = match p.get("low") {
        Some(Param::Int(_)) => Thresholds::new(int(p, "low")?, int(p, "high")?)?,
        _ => match &input(ins, 1)?.buf {
            // Bench form: thresholds from the `hysteresis.thresholds` stage.
            Buf::U16(t) if t.len() >= 2 => Thresholds::new(t[0], t[1])?,
            _ => return Err(Fail::Param("low")),
        },
    };
    hysteresis::classify(&input(ins, 0)?.u16()?, &t, &mut output(outs, 0)?.u8_mut()?)?;
    Ok(())
}

/// `hysteresis.link`: the codes copied to the output, then
/// `hysteresis::link` in place with a zeroed `stack`-entry work stack.
pub fn link(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    let n: usize = int(p, "stack")?;
    let stack = arena.u32s(n).ok_or(Fail::Harness("arena full"))?;
    stack.fill(0);
    copy_in(ins, outs)?;
    hysteresis::link(&mut output(outs, 0)?.u8_mut()?, stack)?;
    Ok(())
}
