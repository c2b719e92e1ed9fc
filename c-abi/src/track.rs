//! `fxs_tracker_*`: the line tracker with drift warning (kernel id
//! `track.tracker`), over `fixsight::track`, at one fixed size:
//! [`FXS_TRACK_SLOTS`] tracks and [`FXS_TRACK_MAX_DETECTIONS`] detections
//! per call (`Tracker<4, 8>`), kept by value in caller storage
//! (`fxs_tracker`, no borrowed memory).
//!
//! Not a safety function (see the header): the drift warning is an aid
//! only.

use crate::boundary::{buf, disjoint, load, load_mut, size, storage, store, Checked, Span};
use crate::status::{finish, kernel, FxsStatus, FXS_E_BAD_PARAMETER};
use fixsight::track::{track_words, AxisNoise, Detection, TrackConfig, Tracker, TRACK_WORDS};

/// `FXS_TRACK_SLOTS`: tracks an `fxs_tracker` holds.
pub const FXS_TRACK_SLOTS: usize = 4;
/// `FXS_TRACK_MAX_DETECTIONS`: most detections per update.
pub const FXS_TRACK_MAX_DETECTIONS: usize = 8;
/// `FXS_TRACK_WORDS`: words of one slot's state (`fxs_tracker_slot_words`).
pub const FXS_TRACK_WORDS: usize = 18;

const _: () = assert!(FXS_TRACK_WORDS == TRACK_WORDS);

/// The tracker kept in `fxs_tracker`.
pub(crate) type TrackerObj = Tracker<FXS_TRACK_SLOTS, FXS_TRACK_MAX_DETECTIONS>;

crate::boundary::object_storage!(
    /// `fxs_tracker`: storage for a tracker.
    FxsTracker for TrackerObj, tag 0x4658_5431,
    FXS_TRACKER_SIZE = (FXS_TRACKER_SIZE_32: 416, FXS_TRACKER_SIZE_64: 416)
);

/// `fxs_track_axis_noise`: noise of one axis (`AxisNoise`).
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct FxsTrackAxisNoise {
    /// Measurement variance, 1..=2^24 units^2.
    pub meas_var: u32,
    /// Tracking index squared, Q16, 0..=2^24.
    pub accel_index_q16: u32,
    /// Initial velocity variance over `R`, Q16, 0..=2^28.
    pub init_vel_var_q16: u32,
}

/// `fxs_track_config`: tracker settings (`TrackConfig`).
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct FxsTrackConfig {
    /// Rho axis (1/16 px).
    pub rho: FxsTrackAxisNoise,
    /// Theta axis (binary-angle units).
    pub theta: FxsTrackAxisNoise,
    /// Gate, Q8, >= 1.
    pub gate_q8: u32,
    /// Hits that confirm a track, 1..=255.
    pub confirm_hits: i32,
    /// Misses a confirmed track survives, 0..=255.
    pub max_missed: i32,
    /// Smallest weight that starts a track.
    pub birth_weight: u32,
    /// Reference point x, Q4, |.| < 2^17.
    pub reference_x_q4: i32,
    /// Reference point y, Q4, |.| < 2^17.
    pub reference_y_q4: i32,
    /// Frames ahead a crossing is searched, 0..=1024.
    pub warn_horizon: i32,
    /// Hits before a track may warn, 0..=65535.
    pub warn_min_hits: i32,
    /// Calls that raise a warning, 1..=255.
    pub warn_raise_frames: i32,
    /// Calls that clear it, 1..=255.
    pub warn_clear_frames: i32,
}

/// `fxs_detection`: a line found in one frame.
#[repr(C)]
#[derive(Debug, Clone, Copy)]
pub struct FxsDetection {
    /// Distance from the origin, Q4, |.| < 2^17.
    pub rho_q4: i32,
    /// Normal angle, 65536 = 180 degrees.
    pub theta: u16,
    /// Always 0.
    pub reserved: u16,
    /// Votes or other strength.
    pub weight: u32,
}

/// `fxs_frame_report`: what one update did.
#[repr(C)]
#[derive(Debug, Clone, Copy, Default)]
pub struct FxsFrameReport {
    /// Tracks updated by a detection.
    pub associated: u32,
    /// Tracks started.
    pub born: u32,
    /// Tracks dropped.
    pub dropped: u32,
    /// Id of the warning track, -1 when none.
    pub warning_track: i32,
    /// Its slot, -1 when none.
    pub warning_slot: i32,
    /// Frames to the predicted crossing, -1 when none.
    pub warning_frames: i32,
}

/// An `int32_t` setting as a narrower unsigned type.
fn narrow<T: TryFrom<usize>>(v: i32) -> Checked<T> {
    T::try_from(size(v)?).map_err(|_| FXS_E_BAD_PARAMETER)
}

/// The kernel configuration of a C one.
pub(crate) fn config(c: &FxsTrackConfig) -> Checked<TrackConfig> {
    let axis = |a: &FxsTrackAxisNoise| AxisNoise {
        meas_var: a.meas_var,
        accel_index_q16: a.accel_index_q16,
        init_vel_var_q16: a.init_vel_var_q16,
    };
    Ok(TrackConfig {
        rho: axis(&c.rho),
        theta: axis(&c.theta),
        gate_q8: c.gate_q8,
        confirm_hits: narrow(c.confirm_hits)?,
        max_missed: narrow(c.max_missed)?,
        birth_weight: c.birth_weight,
        reference_q4: (c.reference_x_q4, c.reference_y_q4),
        warn_horizon: narrow(c.warn_horizon)?,
        warn_min_hits: narrow(c.warn_min_hits)?,
        warn_raise_frames: narrow(c.warn_raise_frames)?,
        warn_clear_frames: narrow(c.warn_clear_frames)?,
    })
}

/// `fxs_tracker_init`: a tracker with no tracks, after checking `config`.
///
/// # Safety
/// `tracker` writable storage; `config` readable.
#[no_mangle]
pub unsafe extern "C" fn fxs_tracker_init(
    tracker: *mut FxsTracker,
    config: *const FxsTrackConfig,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; pointers checked first.
    finish(unsafe {
        (|| {
            let own = storage::<TrackerObj>(tracker)?;
            let c = buf(config, 1, false)?;
            disjoint(&[own, c.span()])?;
            let t = kernel(TrackerObj::new(self::config(&c.slice()[0])?))?;
            store(tracker, t);
            Ok(())
        })()
    })
}

/// `fxs_tracker_reset`: drops every track and the last frame number (the
/// configuration stays).
///
/// # Safety
/// `tracker` initialised and used by no one else during the call.
#[no_mangle]
pub unsafe extern "C" fn fxs_tracker_reset(tracker: *mut FxsTracker) -> FxsStatus {
    // SAFETY: forwarded to the caller.
    finish(unsafe { load_mut::<TrackerObj>(tracker).map(|t| t.reset()) })
}

/// `fxs_tracker_update`: one call per frame (`frame` greater than the
/// last), with `count` detections (0..=FXS_TRACK_MAX_DETECTIONS; `dets`
/// may be NULL when 0); `report` may be NULL.
///
/// # Safety
/// `tracker` initialised and used by no one else; `dets` `count` readable
/// `fxs_detection`; `report` NULL or one writable `fxs_frame_report`.
#[no_mangle]
pub unsafe extern "C" fn fxs_tracker_update(
    tracker: *mut FxsTracker,
    frame: u32,
    dets: *const FxsDetection,
    count: usize,
    report: *mut FxsFrameReport,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; every pointer is checked first.
    finish(unsafe {
        (|| {
            let own = Span::object(tracker, true);
            let d = if count == 0 && dets.is_null() {
                None
            } else {
                Some(buf(dets, count, false)?)
            };
            let r = crate::boundary::optional(report)?;
            disjoint(&[
                own,
                d.map_or(Span::EMPTY, |b| b.span()),
                r.map_or(Span::EMPTY, |b| b.span()),
            ])?;
            let t = load_mut::<TrackerObj>(tracker)?;
            // One more than the tracker takes, so that the kernel itself
            // reports a count above its limit (after the frame order).
            let mut batch = [Detection::default(); FXS_TRACK_MAX_DETECTIONS + 1];
            let n = count.min(batch.len());
            for (b, s) in batch.iter_mut().zip(d.map_or(&[][..], |b| b.slice())) {
                *b = Detection {
                    rho_q4: s.rho_q4,
                    theta: s.theta,
                    weight: s.weight,
                };
            }
            let rep = kernel(t.update(frame, &batch[..n]))?;
            if let Some(r) = r {
                r.slice_mut()[0] = report_of(&rep);
            }
            Ok(())
        })()
    })
}

/// `fxs_tracker_slot_words`: the state of slot `slot`
/// (0..FXS_TRACK_SLOTS) as FXS_TRACK_WORDS words (`fixsight::track::track_words`;
/// word 0 is -1 for an empty slot) into `words[words_len]`.
///
/// # Safety
/// `tracker` initialised; `words` `words_len` writable `int32_t`.
#[no_mangle]
pub unsafe extern "C" fn fxs_tracker_slot_words(
    tracker: *const FxsTracker,
    slot: i32,
    words: *mut i32,
    words_len: usize,
) -> FxsStatus {
    // SAFETY: forwarded to the caller; every pointer is checked first.
    finish(unsafe {
        load::<TrackerObj>(tracker).and_then(|t| {
            put_slot_words(Span::object(tracker, false), slot, words, words_len, |s| {
                track_words(t.slot(s))
            })
        })
    })
}

/// Checks `slot` (0..FXS_TRACK_SLOTS) and `words[words_len]` (disjoint
/// from `obj`, the tracker's bytes), then writes `state(slot)` into the
/// first FXS_TRACK_WORDS words.
///
/// # Safety
/// `words` NULL or `words_len` writable `int32_t`, untouched by others
/// during the call.
pub(crate) unsafe fn put_slot_words(
    obj: Span,
    slot: i32,
    words: *mut i32,
    words_len: usize,
    state: impl FnOnce(usize) -> [i32; TRACK_WORDS],
) -> Checked<()> {
    let w = buf(words, words_len, true)?.first(FXS_TRACK_WORDS);
    disjoint(&[obj, w.span()])?;
    let s = size(slot)?;
    if s >= FXS_TRACK_SLOTS {
        return Err(FXS_E_BAD_PARAMETER);
    }
    if words_len < FXS_TRACK_WORDS {
        return Err(crate::status::FXS_E_BUFFER_TOO_SHORT);
    }
    // SAFETY: checked, writable by the caller's guarantee, disjoint from
    // the tracker.
    unsafe { w.slice_mut().copy_from_slice(&state(s)) };
    Ok(())
}

/// The C form of an update's report.
pub(crate) fn report_of(rep: &fixsight::track::FrameReport) -> FxsFrameReport {
    FxsFrameReport {
        associated: rep.associated as u32,
        born: rep.born as u32,
        dropped: rep.dropped as u32,
        warning_track: rep.warning.map_or(-1, |w| w.track_id as i32),
        warning_slot: rep.warning.map_or(-1, |w| w.slot as i32),
        warning_frames: rep.warning.map_or(-1, |w| w.frames as i32),
    }
}

/// The C form of a kernel configuration.
pub(crate) fn config_c(c: &TrackConfig) -> FxsTrackConfig {
    let axis = |a: &AxisNoise| FxsTrackAxisNoise {
        meas_var: a.meas_var,
        accel_index_q16: a.accel_index_q16,
        init_vel_var_q16: a.init_vel_var_q16,
    };
    FxsTrackConfig {
        rho: axis(&c.rho),
        theta: axis(&c.theta),
        gate_q8: c.gate_q8,
        confirm_hits: c.confirm_hits as i32,
        max_missed: c.max_missed as i32,
        birth_weight: c.birth_weight,
        reference_x_q4: c.reference_q4.0,
        reference_y_q4: c.reference_q4.1,
        warn_horizon: c.warn_horizon as i32,
        warn_min_hits: c.warn_min_hits as i32,
        warn_raise_frames: c.warn_raise_frames as i32,
        warn_clear_frames: c.warn_clear_frames as i32,
    }
}
