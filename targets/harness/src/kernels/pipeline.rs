//! `pipeline.*` kernel ids, as `run_vector` in `host-verify/src/pipeline.rs`
//! computes them.
//!
//! | id | params | inputs | outputs |
//! |---|---|---|---|
//! | `pipeline.edge_stream` | the configuration, `frames`, `height`, `last_rows` | `frames` u8 | `edges` u8, `grad` i16 x2, `thresholds` u16 4x1 |
//!
//! The stream lives in a `static` (its buffers are sized by its type, about
//! 46 KiB here), configured once per call. Bench form (`src/bench.rs`): no
//! configuration keys in the params means `fixsight::pipeline::DEMO`, and
//! a single output receives only the thresholds; the points are read (their
//! gradients summed) so the window holds the whole stage per frame.

use super::{input, output, Arena, Buf, Fail, Img, Params};
use fixsight::pipeline::{
    map_words, EdgeConfig, EdgeStream, Magnitude, Operator, Smoothing, ThresholdRule, Thinning,
    DEMO,
};

/// The stream the harness runs: QVGA, histogram bins for every
/// configuration of the vectors, 4096 point gradients.
type HarnessStream = EdgeStream<320, { map_words(320, 240) }, 1024, 4096>;

static mut STREAM: HarnessStream = HarnessStream::new();

fn int<T: TryFrom<i64>>(p: &Params, key: &'static str) -> Result<T, Fail> {
    T::try_from(p.int(key)?).map_err(|_| Fail::Param(key))
}

/// The configuration the params name (module docs of
/// `host-verify/src/pipeline.rs`), or the demo one without `smoothing`.
fn config_of(p: &Params) -> Result<EdgeConfig, Fail> {
    if p.get("smoothing").is_none() {
        return Ok(DEMO);
    }
    let smoothing = match p.str("smoothing")? {
        "none" => Smoothing::None,
        "binomial3" => Smoothing::Binomial3,
        "binomial5" => Smoothing::Binomial5,
        "binomial7" => Smoothing::Binomial7,
        "gauss7" => Smoothing::Gauss7,
        _ => return Err(Fail::Param("smoothing")),
    };
    let operator = match p.str("operator")? {
        "sobel" => Operator::Sobel,
        "scharr" => Operator::Scharr,
        _ => return Err(Fail::Param("operator")),
    };
    let magnitude = match p.str("magnitude")? {
        "l1" => Magnitude::L1,
        "l2_approx" => Magnitude::L2Approx,
        "l2_round" => Magnitude::L2Round,
        _ => return Err(Fail::Param("magnitude")),
    };
    let (low, high) = (int(p, "low")?, int(p, "high")?);
    let thresholds = match p.str("thresholds")? {
        "fixed" => ThresholdRule::Fixed { low, high },
        "auto" => ThresholdRule::Auto {
            shift: int(p, "shift")?,
            high_permille: int(p, "high_permille")?,
            low_ratio_u0f16: int(p, "low_ratio_u0f16")?,
            first_low: low,
            first_high: high,
        },
        _ => return Err(Fail::Param("thresholds")),
    };
    let thinning = match p.str("thinning")? {
        "off" => Thinning::Off,
        "until_stable" => Thinning::UntilStable,
        "at_most" => Thinning::AtMost(int(p, "thinning_cap")?),
        _ => return Err(Fail::Param("thinning")),
    };
    Ok(EdgeConfig {
        smoothing,
        operator,
        frac_bits: int(p, "frac_bits")?,
        magnitude,
        thresholds,
        thinning,
    })
}

/// `pipeline.edge_stream`: every frame of the input through one stream.
pub fn edge_stream(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    // SAFETY: the firmware is single-threaded and no other code touches
    // STREAM; this is its only reference while the call runs.
    let s: &mut HarnessStream = unsafe { &mut *core::ptr::addr_of_mut!(STREAM) };
    let cfg = config_of(p)?;
    let src = input(ins, 0)?;
    let frames: usize = int(p, "frames")?;
    let height: usize = int(p, "height")?;
    let last_rows: usize = int(p, "last_rows")?;
    let w = src.width;
    let data = match &src.buf {
        Buf::U8(d) => &**d,
        _ => return Err(Fail::Harness("frames must be u8")),
    };
    if frames == 0 || last_rows == 0 || last_rows > height || src.height != frames * height {
        return Err(Fail::Harness("frames, height and last_rows do not fit the input"));
    }
    s.configure(&cfg, w, height)?;
    let mut report = None;
    for f in 0..frames {
        let rows = if f + 1 == frames { last_rows } else { height };
        for y in 0..rows {
            let o = (f * height + y) * w;
            s.push_row(&data[o..o + w])?;
        }
        report = Some(if rows == height {
            s.finish()?
        } else {
            s.finish_short()?
        });
    }
    let r = report.ok_or(Fail::Harness("no frame"))?;
    let t = [
        r.thresholds.0,
        r.thresholds.1,
        r.next_thresholds.0,
        r.next_thresholds.1,
    ];
    if outs.len() == 1 {
        // Bench form: read the points as a line stage would.
        let mut sum = 0i32;
        for pt in s.points()? {
            if let Some((gx, gy)) = pt.gradient {
                sum = sum.wrapping_add(gx as i32 ^ gy as i32);
            }
        }
        core::hint::black_box(sum);
        return match &mut output(outs, 0)?.buf {
            Buf::U16(o) if o.len() >= 4 => {
                o[..4].copy_from_slice(&t);
                Ok(())
            }
            _ => Err(Fail::Harness("bench output must be u16 with 4 elements")),
        };
    }
    match &mut output(outs, 0)?.buf {
        Buf::U8(o) if o.len() == w * last_rows => {
            for (y, row) in o.chunks_exact_mut(w).enumerate() {
                s.edge_row(y, row)?;
            }
        }
        _ => return Err(Fail::Harness("edges output must be u8, width x last_rows")),
    }
    match &mut output(outs, 1)?.buf {
        Buf::I16(o) if o.len() == 2 * w * last_rows => {
            o.fill(0);
            for pt in s.points()? {
                let i = 2 * (pt.y as usize * w + pt.x as usize);
                let (gx, gy) = pt.gradient.ok_or(Fail::Harness("point gradient not stored"))?;
                o[i] = gx;
                o[i + 1] = gy;
            }
        }
        _ => return Err(Fail::Harness("grad output must be i16 x2, width x last_rows")),
    }
    match &mut output(outs, 2)?.buf {
        Buf::U16(o) if o.len() == 4 => {
            o.copy_from_slice(&t);
            Ok(())
        }
        _ => Err(Fail::Harness("thresholds output must be u16 with 4 elements")),
    }
}
