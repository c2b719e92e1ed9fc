//! The `track.tracker` kernel id, as `run_vector` in
//! `host-verify/src/track/` computes it.
//!
//! | id | params | inputs | outputs |
//! |---|---|---|---|
//! | `track.tracker` | axis noise (`rho.*`, `theta.*`), `gate_q8`, `confirm_hits`, `max_missed`, `birth_weight`, `reference_x_q4`, `reference_y_q4`, `warn_horizon`, `warn_min_hits`, `warn_raise_frames`, `warn_clear_frames`, `slots` (4), `max_detections` (8) | `frames` u32 (frame, count), `dets` i32 (rho_q4, theta, weight) | `states` i32 (18 per slot per call), `report` i32 (5 per call) |
//!
//! Not a safety function: the drift warning is an aid only (see the
//! `fixsight::track` module docs).

use super::{input, output, Arena, Buf, Fail, Img, Params};
use fixsight::track::{track_words, AxisNoise, Detection, TrackConfig, Tracker};

const SLOTS: usize = 4;
const MAX_DETECTIONS: usize = 8;
const STATE_FIELDS: usize = fixsight::track::TRACK_WORDS;

fn int<T: TryFrom<i64>>(p: &Params, key: &'static str) -> Result<T, Fail> {
    T::try_from(p.int(key)?).map_err(|_| Fail::Param(key))
}

fn axis(p: &Params, keys: [&'static str; 3]) -> Result<AxisNoise, Fail> {
    Ok(AxisNoise {
        meas_var: int(p, keys[0])?,
        accel_index_q16: int(p, keys[1])?,
        init_vel_var_q16: int(p, keys[2])?,
    })
}

/// `track.tracker`: runs a `Tracker<4, 8>` over the calls of `frames`.
pub fn tracker(
    p: &Params,
    ins: &[Img<'_>],
    outs: &mut [Img<'_>],
    _arena: &mut Arena<'_>,
) -> Result<(), Fail> {
    if int::<usize>(p, "slots")? != SLOTS || int::<usize>(p, "max_detections")? != MAX_DETECTIONS {
        return Err(Fail::Harness(
            "slots / max_detections differ from Tracker<4, 8>",
        ));
    }
    let cfg = TrackConfig {
        rho: axis(
            p,
            [
                "rho.meas_var",
                "rho.accel_index_q16",
                "rho.init_vel_var_q16",
            ],
        )?,
        theta: axis(
            p,
            [
                "theta.meas_var",
                "theta.accel_index_q16",
                "theta.init_vel_var_q16",
            ],
        )?,
        gate_q8: int(p, "gate_q8")?,
        confirm_hits: int(p, "confirm_hits")?,
        max_missed: int(p, "max_missed")?,
        birth_weight: int(p, "birth_weight")?,
        reference_q4: (int(p, "reference_x_q4")?, int(p, "reference_y_q4")?),
        warn_horizon: int(p, "warn_horizon")?,
        warn_min_hits: int(p, "warn_min_hits")?,
        warn_raise_frames: int(p, "warn_raise_frames")?,
        warn_clear_frames: int(p, "warn_clear_frames")?,
    };
    let frames = match &input(ins, 0)?.buf {
        Buf::U32(d) => &**d,
        _ => return Err(Fail::Harness("frames is not u32")),
    };
    let dets = match &input(ins, 1)?.buf {
        Buf::I32(d) => &**d,
        _ => return Err(Fail::Harness("dets is not i32")),
    };
    let mut tracker: Tracker<SLOTS, MAX_DETECTIONS> = Tracker::new(cfg)?;
    let (states_img, rest) = outs.split_at_mut(1);
    let states = match &mut output(states_img, 0)?.buf {
        Buf::I32(d) => d,
        _ => return Err(Fail::Harness("states is not i32")),
    };
    let report = match &mut output(rest, 0)?.buf {
        Buf::I32(d) => d,
        _ => return Err(Fail::Harness("report is not i32")),
    };
    let mut at = 0usize;
    for (k, call) in frames.chunks_exact(2).enumerate() {
        let n = call[1] as usize;
        if n > MAX_DETECTIONS {
            return Err(Fail::Harness(
                "more detections in a call than Tracker<4, 8> takes",
            ));
        }
        let mut batch = [Detection::default(); MAX_DETECTIONS];
        let src = dets.get(3 * at..3 * (at + n)).ok_or(Fail::Harness(
            "frames announce more detections than dets holds",
        ))?;
        for (d, c) in batch.iter_mut().zip(src.chunks_exact(3)) {
            *d = Detection {
                rho_q4: c[0],
                theta: c[1] as u16,
                weight: c[2] as u32,
            };
        }
        at += n;
        let r = tracker.update(call[0], &batch[..n])?;
        let row = [
            r.associated as i32,
            r.born as i32,
            r.dropped as i32,
            r.warning.map_or(-1, |w| w.track_id as i32),
            r.warning.map_or(-1, |w| w.frames as i32),
        ];
        report
            .get_mut(5 * k..5 * k + 5)
            .ok_or(Fail::Harness("report too small"))?
            .copy_from_slice(&row);
        for slot in 0..SLOTS {
            let base = (k * SLOTS + slot) * STATE_FIELDS;
            states
                .get_mut(base..base + STATE_FIELDS)
                .ok_or(Fail::Harness("states too small"))?
                .copy_from_slice(&track_words(tracker.slot(slot)));
        }
    }
    Ok(())
}
