//! Golden cases, params and vector recomputation of `track.tracker`.

use super::run::{run_fixed, FixedFrame};
use super::sequences::{synth_sequence, SeqFrame};
use super::{ID, MAX_DETECTIONS, SLOTS};
use crate::family::{input, parse_params};
use crate::golden::{Blob, GoldenCase};
use crate::scene::Scene;
use fixsight::track::{AxisNoise, Detection, FrameReport, Track, TrackConfig};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde::Deserialize;
use serde_json::json;

/// Fields per row of the `states` output.
pub const STATE_FIELDS: usize = fixsight::track::TRACK_WORDS;

/// One `states` row (`fixsight::track::track_words`).
pub fn state_row(t: Option<&Track>) -> [i32; STATE_FIELDS] {
    fixsight::track::track_words(t)
}

/// One `report` row.
pub fn report_row(r: &FrameReport) -> [i32; 5] {
    [
        r.associated as i32,
        r.born as i32,
        r.dropped as i32,
        r.warning.map_or(-1, |w| w.track_id as i32),
        r.warning.map_or(-1, |w| w.frames as i32),
    ]
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct AxisParams {
    meas_var: u32,
    accel_index_q16: u32,
    init_vel_var_q16: u32,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Params {
    rho: AxisParams,
    theta: AxisParams,
    gate_q8: u32,
    confirm_hits: u8,
    max_missed: u8,
    birth_weight: u32,
    reference_x_q4: i32,
    reference_y_q4: i32,
    warn_horizon: u16,
    warn_min_hits: u16,
    warn_raise_frames: u8,
    warn_clear_frames: u8,
    slots: usize,
    max_detections: usize,
}

fn params_json(c: &TrackConfig) -> serde_json::Value {
    let ax = |a: &AxisNoise| {
        json!({"meas_var": a.meas_var, "accel_index_q16": a.accel_index_q16,
               "init_vel_var_q16": a.init_vel_var_q16})
    };
    json!({
        "rho": ax(&c.rho), "theta": ax(&c.theta), "gate_q8": c.gate_q8,
        "confirm_hits": c.confirm_hits, "max_missed": c.max_missed,
        "birth_weight": c.birth_weight, "reference_x_q4": c.reference_q4.0,
        "reference_y_q4": c.reference_q4.1, "warn_horizon": c.warn_horizon,
        "warn_min_hits": c.warn_min_hits, "warn_raise_frames": c.warn_raise_frames,
        "warn_clear_frames": c.warn_clear_frames,
        "slots": SLOTS, "max_detections": MAX_DETECTIONS,
    })
}

fn inputs_of(frames: &[SeqFrame]) -> Vec<Blob> {
    let f: Vec<u32> = frames
        .iter()
        .flat_map(|f| [f.frame, f.dets.len() as u32])
        .collect();
    let mut d: Vec<i32> = frames
        .iter()
        .flat_map(|f| f.dets.iter())
        .flat_map(|d| [d.rho_q4, d.theta as i32, d.weight as i32])
        .collect();
    if d.is_empty() {
        d = vec![0; 3];
    }
    vec![
        Blob::from_u32("frames", 2, frames.len(), 1, &f),
        Blob::from_i32("dets", 3, d.len() / 3, 1, &d),
    ]
}

fn outputs_of(run: &[FixedFrame]) -> Vec<Blob> {
    let states: Vec<i32> = run
        .iter()
        .flat_map(|f| f.slots.iter().flat_map(|s| state_row(s.as_ref())))
        .collect();
    let reports: Vec<i32> = run.iter().flat_map(|f| report_row(&f.report)).collect();
    vec![
        Blob::from_i32("states", STATE_FIELDS, run.len() * SLOTS, 1, &states),
        Blob::from_i32("report", 5, run.len(), 1, &reports),
    ]
}

/// Recomputes a `track.tracker` vector.
pub fn run_vector(
    kernel: &str,
    params: &serde_json::Value,
    inputs: &[Blob],
) -> Result<Vec<Blob>, String> {
    if kernel != ID {
        return Err(format!("unknown kernel `{kernel}`"));
    }
    let p: Params = parse_params(kernel, params)?;
    if (p.slots, p.max_detections) != (SLOTS, MAX_DETECTIONS) {
        return Err(format!(
            "slots/max_detections {}/{} differ from the verified tracker's {SLOTS}/{MAX_DETECTIONS}",
            p.slots, p.max_detections
        ));
    }
    let ax = |a: &AxisParams| AxisNoise {
        meas_var: a.meas_var,
        accel_index_q16: a.accel_index_q16,
        init_vel_var_q16: a.init_vel_var_q16,
    };
    let cfg = TrackConfig {
        rho: ax(&p.rho),
        theta: ax(&p.theta),
        gate_q8: p.gate_q8,
        confirm_hits: p.confirm_hits,
        max_missed: p.max_missed,
        birth_weight: p.birth_weight,
        reference_q4: (p.reference_x_q4, p.reference_y_q4),
        warn_horizon: p.warn_horizon,
        warn_min_hits: p.warn_min_hits,
        warn_raise_frames: p.warn_raise_frames,
        warn_clear_frames: p.warn_clear_frames,
    };
    let (bf, bd) = (input(inputs, "frames")?, input(inputs, "dets")?);
    if bf.width != 2 || bd.width != 3 {
        return Err("frames must be 2 wide and dets 3 wide".into());
    }
    let f = bf.to_u32()?;
    let d = bd.to_i32()?;
    let mut frames = Vec::new();
    let mut at = 0usize;
    for row in f.chunks_exact(2) {
        let n = row[1] as usize;
        let slice = d
            .get(3 * at..3 * (at + n))
            .ok_or("frames announce more detections than dets holds")?;
        at += n;
        frames.push(SeqFrame {
            frame: row[0],
            dets: slice
                .chunks_exact(3)
                .map(|c| Detection {
                    rho_q4: c[0],
                    theta: c[1] as u16,
                    weight: c[2] as u32,
                })
                .collect(),
        });
    }
    Ok(outputs_of(&run_fixed(cfg, &frames)?))
}

fn case(id: &str, comment: &str, cfg: &TrackConfig, frames: &[SeqFrame]) -> GoldenCase {
    let expected = outputs_of(&run_fixed(*cfg, frames).expect("golden sequences are valid"));
    GoldenCase {
        row_pad: None,
        id: id.into(),
        comment: comment.into(),
        kernel: ID.into(),
        params: params_json(cfg),
        inputs: inputs_of(frames),
        expected,
    }
}

/// Golden cases: a wrapping demo sequence, a drifting one with short
/// debounce counts (raise, hold with countdown, clear), and a saturating
/// one.
pub fn golden_cases(_scenes: &[Scene]) -> Vec<GoldenCase> {
    let cfg = TrackConfig::DEMO;
    let demo = synth_sequence(0x7_2AC1, 120, true);
    let mut flicker = cfg;
    flicker.warn_horizon = 60;
    flicker.warn_min_hits = 3;
    flicker.warn_raise_frames = 3;
    flicker.warn_clear_frames = 4;
    let drift = synth_sequence(0x7_2AC5, 160, false);
    let mut extreme = cfg;
    extreme.rho.accel_index_q16 = 1 << 24;
    extreme.theta.accel_index_q16 = 1 << 24;
    extreme.rho.init_vel_var_q16 = 1 << 28;
    extreme.theta.meas_var = 1;
    extreme.max_missed = 255;
    extreme.confirm_hits = 1;
    extreme.gate_q8 = u32::MAX;
    extreme.birth_weight = 0;
    extreme.reference_q4 = ((1 << 17) - 1, -(1 << 17) + 1);
    extreme.warn_horizon = 1024;
    extreme.warn_min_hits = 0;
    extreme.warn_raise_frames = 1;
    extreme.warn_clear_frames = 255;
    let lim = (1 << 17) - 1;
    let mut rng = ChaCha8Rng::seed_from_u64(0x7_2AC2);
    let mut frame = 0u32;
    let extreme_frames: Vec<SeqFrame> = (0..40)
        .map(|i| {
            frame += [1, 1, 7, 300][rng.random_range(0..4)];
            let n = rng.random_range(0..=MAX_DETECTIONS);
            let dets = (0..n)
                .map(|_| Detection {
                    rho_q4: if i % 2 == 0 { lim } else { -lim }
                        * if rng.random_bool(0.5) { 1 } else { -1 },
                    theta: rng.random(),
                    weight: rng.random_range(0..4),
                })
                .collect();
            SeqFrame { frame, dets }
        })
        .collect();
    vec![
        case(
            "track.tracker.demo-wrap",
            "120 frames of two tape edges drifting toward the reference point while theta \
             passes 0/180 degrees; misses, an occlusion, dropped frame numbers, a shelf edge \
             and clutter",
            &cfg,
            &demo.frames,
        ),
        case(
            "track.tracker.debounce",
            "160 frames of two tape edges drifting toward the reference point, horizon 60, \
             warnings from the 3rd hit, raised after 3 calls and cleared after 4: the young \
             tracks' predictions flicker, so warnings are raised, held with a countdown and \
             cleared",
            &flicker,
            &drift.frames,
        ),
        case(
            "track.tracker.extremes",
            "largest process noise and velocity prior, rho at +-(2^17 - 1), any theta, gate \
             wide open, frame gaps up to 300: saturation and wrap rules",
            &extreme,
            &extreme_frames,
        ),
    ]
}
