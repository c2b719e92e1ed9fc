//! `fixsight-verify budget`: does a pipeline fit a part? From the frame
//! size, the frame rate and the clock, the instructions per second each
//! stage needs on a core (from the exact on-target counts of
//! `targets.json`) and the weighted operations per second (from the host
//! operation counts of `report.json`), the load on the core and the margin.
//!
//! Rules, stated so a reader can redo the sums:
//!
//! * a stage's figure is its `instr_per_px` on the core for a bench stage
//!   (`<kernel id>/<stage>`: instructions per pixel of the QVGA bench frame,
//!   measured under QEMU by `fixsight-verify targets`; entries without a
//!   bench stage are per output element of their golden vectors and are
//!   not used),
//!   times `width * height * fps`. A kernel id measured over the demo
//!   sequence (`<kernel id>/demo_sequence`: the mean over its 96 frames,
//!   and the costliest frame) is figured from that entry alone, not from
//!   its one-frame bench stage: the sequence holds the tape, glare and
//!   clutter the job is for;
//! * the load is that sum over the clock (`clock_mhz * 10^6` cycles per
//!   second) **at one instruction per cycle**. Instructions are not cycles:
//!   on a real part, flash wait states, multi-cycle loads and taken branches
//!   cost more (common practice, no source), so keep a margin;
//! * every frame must be done before the next one arrives, so the verdict
//!   takes the costliest frame where it is known (the `demo_sequence`
//!   entries), the mean otherwise; both loads are printed;
//! * the stages are the entries of the core whose kernel id is given with
//!   `--kernel` (every bench of that id), by default one whole job: the
//!   point mode `pipeline.point_job` when it was measured, else the image
//!   mode `pipeline.image_job`, else the edge stage `pipeline.edge_stream`
//!   (each job contains the edge stage, so they are never summed by
//!   default);
//! * `weighted ops/px` is the report row's host count for the id, when
//!   `report.json` is in the same folder.
//!
//! The per-pixel figures were measured at the vectors' frame sizes and hold
//! for other sizes only as far as a kernel's cost per pixel does not depend
//! on the size (true of the row loops; the per-frame parts of the line
//! stage, peaks, marking and tracker, spread over fewer pixels on a smaller
//! frame).

use crate::files;
use anyhow::{bail, Context};
use std::path::Path;

/// The stage name of the demo-sequence entries.
const SEQUENCE_STAGE: &str = crate::target_sequence::STAGE;

/// The edge stage's id (contained in the whole-job entries).
const EDGE_STAGE: &str = "pipeline.edge_stream";

/// The default stage, in order of preference: the whole job in point mode
/// (no frame buffer), in image mode, the edge stage alone.
const DEFAULT_JOBS: [&str; 3] = ["pipeline.point_job", "pipeline.image_job", EDGE_STAGE];

/// One stage of the budget.
#[derive(Debug, Clone, PartialEq)]
pub struct Stage {
    /// `targets.json` entry name (`<kernel id>` or `<kernel id>/<bench>`).
    pub name: String,
    /// Instructions per pixel on the core (the mean over the demo sequence
    /// for a `demo_sequence` entry).
    pub instr_per_px: f64,
    /// The costliest frame's instructions per pixel, for a `demo_sequence`
    /// entry.
    pub worst_instr_per_px: Option<f64>,
    /// Host weighted operations per pixel, when the report has the row.
    pub weighted_ops_per_px: Option<f64>,
}

/// The budget of a set of stages.
#[derive(Debug, Clone, PartialEq)]
pub struct Budget {
    /// Core name.
    pub core: String,
    /// The stages.
    pub stages: Vec<Stage>,
    /// Pixels per second (`width * height * fps`).
    pub px_per_s: f64,
    /// Clock, cycles per second.
    pub clock_hz: f64,
}

impl Budget {
    /// Instructions per second of all stages.
    pub fn instr_per_s(&self) -> f64 {
        self.stages.iter().map(|s| s.instr_per_px).sum::<f64>() * self.px_per_s
    }
    /// Load on the core at one instruction per cycle (1.0 = every cycle).
    pub fn load(&self) -> f64 {
        self.instr_per_s() / self.clock_hz
    }
    /// Load of the costliest frame (each stage's worst frame where known,
    /// its mean otherwise): what a frame deadline must hold.
    pub fn worst_load(&self) -> f64 {
        self.stages
            .iter()
            .map(|s| s.worst_instr_per_px.unwrap_or(s.instr_per_px))
            .sum::<f64>()
            * self.px_per_s
            / self.clock_hz
    }
}

/// Builds the budget from a `targets.json` value and an optional
/// `report.json` value.
///
/// ```
/// use fixsight_verify::cmd::budget::plan;
/// let t = serde_json::json!({"targets": [{"name": "cortex-m4", "lang": "rust",
///     "kernels": [{"name": "pipeline.edge_stream/x", "instr_per_px": 100.0}]}]});
/// let b = plan(&t, None, "cortex-m4", &[], 320, 240, 30.0, 168.0).unwrap();
/// assert_eq!(b.instr_per_s(), 100.0 * 320.0 * 240.0 * 30.0);
/// assert!((b.load() - 1.3714).abs() < 1e-4); // 230.4 M instr/s on 168 MHz
/// ```
#[allow(clippy::too_many_arguments)]
pub fn plan(
    targets: &serde_json::Value,
    report: Option<&serde_json::Value>,
    core: &str,
    kernels: &[String],
    width: u32,
    height: u32,
    fps: f64,
    clock_mhz: f64,
) -> anyhow::Result<Budget> {
    if width == 0 || height == 0 {
        bail!("--width and --height must be at least 1");
    }
    if !(fps.is_finite() && fps > 0.0) {
        bail!("--fps must be a positive number, not {fps}");
    }
    if !(clock_mhz.is_finite() && clock_mhz > 0.0) {
        bail!("--clock-mhz must be a positive number, not {clock_mhz}");
    }
    let cores: Vec<&serde_json::Value> = targets["targets"]
        .as_array()
        .map(|a| {
            a.iter()
                .filter(|t| t["lang"].as_str().unwrap_or("rust") == "rust" && t["port"].is_null())
                .collect()
        })
        .unwrap_or_default();
    let names: Vec<&str> = cores.iter().filter_map(|t| t["name"].as_str()).collect();
    let c = cores.iter().find(|t| t["name"] == core).with_context(|| {
        format!(
            "no core `{core}` in targets.json (it has: {})",
            names.join(", ")
        )
    })?;
    let ids: Vec<&str> = c["kernels"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|k| k["name"].as_str())
        .filter(|n| n.contains('/'))
        .filter_map(|n| n.split('/').next())
        .collect();
    // Default: one whole job, the first of DEFAULT_JOBS that was measured
    // (each contains the edge stage; two of them would count it twice).
    let default_job = DEFAULT_JOBS.iter().find(|j| ids.contains(j));
    let wanted = |id: &str| -> bool {
        if kernels.is_empty() {
            default_job == Some(&id)
        } else {
            kernels.iter().any(|k| k == id)
        }
    };
    let ops = |id: &str| -> Option<f64> {
        report?["kernels"]
            .as_array()?
            .iter()
            .find(|k| k["name"] == id)?["ops_per_px"]["weighted"]
            .as_f64()
    };
    let all: Vec<&serde_json::Value> = c["kernels"].as_array().into_iter().flatten().collect();
    let on_sequence = |id: &str| {
        all.iter()
            .any(|k| k["name"].as_str() == Some(&format!("{id}/{SEQUENCE_STAGE}")))
    };
    let mut stages = Vec::new();
    for k in &all {
        let name = k["name"].as_str().unwrap_or_default();
        let (id, stage) = name.split_once('/').unwrap_or((name, ""));
        // Only bench stages (`<id>/<stage>`) are per pixel of a frame; an
        // entry without one is per output element of its golden vectors.
        // An id measured over the demo sequence counts that entry only.
        if wanted(id) && !stage.is_empty() && (stage == SEQUENCE_STAGE || !on_sequence(id)) {
            let instr = k["instr_per_px"]
                .as_f64()
                .with_context(|| format!("{name}: no instr_per_px in targets.json"))?;
            stages.push(Stage {
                name: name.to_string(),
                instr_per_px: instr,
                worst_instr_per_px: k["sequence"]["instr_per_px_max"].as_f64(),
                weighted_ops_per_px: ops(id),
            });
        }
    }
    for k in kernels {
        if !stages
            .iter()
            .any(|s| s.name.split('/').next() == Some(k.as_str()))
        {
            bail!(
                "no per-pixel bench figure for kernel {} on {core} in targets.json (a kernel \
                 without a bench stage is measured per output element of its golden vectors, \
                 which is not a cost per pixel)",
                files::shown(k)
            );
        }
    }
    if stages.is_empty() {
        bail!("no pipeline.* entry on {core} in targets.json: name the stages with --kernel");
    }
    Ok(Budget {
        core: core.to_string(),
        stages,
        px_per_s: width as f64 * height as f64 * fps,
        clock_hz: clock_mhz * 1e6,
    })
}

/// The command: reads `targets.json` (and `report.json` if present) from
/// `dir`, prints the table and the verdict; `Ok(false)` when it does not fit.
#[allow(clippy::too_many_arguments)]
pub fn run(
    dir: &Path,
    core: &str,
    kernels: &[String],
    width: u32,
    height: u32,
    fps: f64,
    clock_mhz: f64,
) -> anyhow::Result<bool> {
    let tpath = dir.join(crate::targets::TARGETS_JSON);
    let targets: serde_json::Value =
        serde_json::from_str(&files::read_text(&tpath).with_context(|| {
            format!(
                "the budget needs on-target counts: run `fixsight-verify targets --out {}` first",
                files::shown_path(dir)
            )
        })?)
        .with_context(|| format!("{} is not JSON", files::shown_path(&tpath)))?;
    let rpath = dir.join("report.json");
    let report: Option<serde_json::Value> = files::read_text(&rpath)
        .ok()
        .and_then(|t| serde_json::from_str(&t).ok());
    let b = plan(
        &targets,
        report.as_ref(),
        core,
        kernels,
        width,
        height,
        fps,
        clock_mhz,
    )?;
    println!(
        "{width}x{height} at {fps} frames/s on {} at {clock_mhz} MHz: {:.3} Mpixel/s",
        b.core,
        b.px_per_s / 1e6
    );
    println!(
        "{:<48} {:>12} {:>12} {:>14} {:>8}",
        "stage (targets.json)", "wops/px", "instr/px", "M instr/s", "load %"
    );
    let mut dominant = (String::new(), 0.0f64);
    for s in &b.stages {
        let ips = s.instr_per_px * b.px_per_s;
        if ips > dominant.1 {
            dominant = (s.name.clone(), ips);
        }
        println!(
            "{:<48} {:>12} {:>12.1} {:>14.2} {:>8.1}",
            s.name,
            s.weighted_ops_per_px
                .map_or("-".to_string(), |v| format!("{v:.1}")),
            s.instr_per_px,
            ips / 1e6,
            100.0 * ips / b.clock_hz
        );
    }
    let mean = b.load();
    let load = b.worst_load();
    println!(
        "total: {:.2} M instructions/s, {:.1} % of the clock at one instruction per cycle; \
         dominant stage: {}",
        b.instr_per_s() / 1e6,
        100.0 * mean,
        dominant.0
    );
    if b.stages.iter().any(|s| s.worst_instr_per_px.is_some()) {
        println!(
            "costliest frame of the demo sequence: {:.1} % of the clock (the verdict below: \
             every frame must be done before the next arrives)",
            100.0 * load
        );
    }
    if b.stages.len() > 1 {
        println!(
            "note: the stages are summed; an entry that already contains another (a whole-job \
             entry and its edge stage) counts that part twice: pick stages with --kernel"
        );
    }
    if load <= 1.0 {
        println!(
            "FITS with {:.1} % of the cycles left for the rest of the firmware (instructions are \
             not cycles: wait states and multi-cycle instructions eat into that margin)",
            100.0 * (1.0 - load)
        );
        Ok(true)
    } else {
        println!(
            "DOES NOT FIT: {:.2} times the cycles the clock gives; lower the frame rate to {:.1} \
             frames/s or the frame size, or raise the clock to {:.0} MHz",
            load,
            fps / load,
            clock_mhz * load
        );
        Ok(false)
    }
}
