//! The fixed tracker and the reference run over a sequence, frame by frame.

use super::reference::{RefTrack, RefTracker};
use super::sequences::SeqFrame;
use super::{DemoTracker, SLOTS};
use fixsight::track::{FrameReport, Track, TrackConfig};

/// Output of one call of the fixed tracker.
#[derive(Debug, Clone)]
pub struct FixedFrame {
    /// Slots after the call.
    pub slots: [Option<Track>; SLOTS],
    /// The report.
    pub report: FrameReport,
}

/// Runs the kernel over a sequence.
pub fn run_fixed(cfg: TrackConfig, frames: &[SeqFrame]) -> Result<Vec<FixedFrame>, String> {
    let mut t = DemoTracker::new(cfg).map_err(|e| e.to_string())?;
    frames
        .iter()
        .map(|f| {
            let report = t
                .update(f.frame, &f.dets)
                .map_err(|e| format!("frame {}: {e}", f.frame))?;
            let mut slots = [None; SLOTS];
            for (i, s) in slots.iter_mut().enumerate() {
                *s = t.slot(i).copied();
            }
            Ok(FixedFrame { slots, report })
        })
        .collect()
}

/// Output of one call of the reference.
#[derive(Debug, Clone)]
pub struct RefFrame {
    /// Slots after the call.
    pub slots: Vec<Option<RefTrack>>,
    /// The report.
    pub report: FrameReport,
}

/// Runs the reference over a sequence.
pub fn run_reference(cfg: TrackConfig, frames: &[SeqFrame]) -> Vec<RefFrame> {
    let mut t = RefTracker::new(cfg, SLOTS);
    frames
        .iter()
        .map(|f| {
            let report = t.update(f.frame, &f.dets);
            RefFrame {
                slots: t.slots.clone(),
                report,
            }
        })
        .collect()
}
