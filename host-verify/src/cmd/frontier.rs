//! `fixsight-verify frontier`: the accuracy/cost map ([`crate::frontier`]):
//! every configuration of the grid (or the ones named) run on the images
//! and the demo sequence, its cost read from `targets.json`; writes
//! `frontier.md`, `frontier.json` and `frontier.png`.

use crate::files::{shown_path, Outputs};
use crate::frontier::float::{F32MapConfig, F32_GRID};
use crate::frontier::{self, Frontier, MapConfig, SequenceRun, GRID};
use crate::targets::{load_targets_json, TARGETS_JSON};
use anyhow::{bail, Context};
use std::path::PathBuf;

/// The files the command writes.
pub const OUTPUTS: [&str; 3] = ["frontier.md", "frontier.json", "frontier.png"];

/// Which images the edge figures use.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Images {
    /// The rendered demo scenes and the natural photographs.
    All,
    /// The rendered demo scenes only (a quick look, not the map's figure).
    Rendered,
}

impl Images {
    /// Parses `all` or `rendered`.
    ///
    /// ```
    /// use fixsight_verify::cmd::frontier::Images;
    /// assert_eq!(Images::parse("rendered"), Ok(Images::Rendered));
    /// assert!(Images::parse("some").is_err());
    /// ```
    pub fn parse(s: &str) -> Result<Images, String> {
        match s {
            "all" => Ok(Images::All),
            "rendered" => Ok(Images::Rendered),
            _ => Err(format!("`{s}`: expected `all` or `rendered`")),
        }
    }
}

/// A `frontier` request.
#[derive(Debug, Clone)]
pub struct Request {
    /// Output folder (also where `targets.json` is looked for without
    /// `targets`).
    pub out: PathBuf,
    /// Folder holding `targets.json` (must exist when given).
    pub targets: Option<PathBuf>,
    /// Comma-separated configuration names (`None`: the whole grid).
    pub configs: Option<String>,
    /// Images of the edge figures.
    pub images: Images,
    /// Frames of the demo sequence for the line figures (1..=96).
    pub frames: usize,
    /// Clock of the part, MHz.
    pub clock_mhz: f64,
    /// Frames per second.
    pub fps: f64,
    /// Replace existing outputs.
    pub overwrite: bool,
}

/// The configurations a request names.
///
/// ```
/// use fixsight_verify::cmd::frontier::configs;
/// assert_eq!(configs(None).unwrap().len(), 24);
/// assert_eq!(configs(Some("map-gauss7-sobel-l1-t32")).unwrap().len(), 1);
/// assert!(configs(Some("map-gauss7-sobel-l1-t32,map-gauss7-sobel-l1-t32")).is_err());
/// assert!(configs(Some("")).is_err());
/// ```
pub fn configs(list: Option<&str>) -> anyhow::Result<Vec<MapConfig>> {
    let Some(list) = list else {
        return Ok(GRID.to_vec());
    };
    let mut out: Vec<MapConfig> = Vec::new();
    for name in list.split(',').map(str::trim) {
        if name.is_empty() {
            bail!("--configs: an empty name in `{list}`");
        }
        if F32MapConfig::parse(name).is_some() {
            // An f32 configuration: [`f32_configs`].
            continue;
        }
        let c = MapConfig::parse(name).map_err(|e| anyhow::anyhow!("--configs: {e}"))?;
        if !GRID.contains(&c) {
            bail!(
                "--configs: `{name}` is not in the grid the targets measure (see `fixsight-verify frontier --help`)"
            );
        }
        if out.contains(&c) {
            bail!("--configs: `{name}` is named twice");
        }
        out.push(c);
    }
    Ok(out)
}

/// The `f32` configurations a request names (all of [`F32_GRID`]
/// without `--configs`).
///
/// ```
/// use fixsight_verify::cmd::frontier::f32_configs;
/// assert_eq!(f32_configs(None).unwrap().len(), 4);
/// assert_eq!(f32_configs(Some("map-gauss7-sobel-l1-t32")).unwrap().len(), 0);
/// assert_eq!(f32_configs(Some("map-f32-gauss7-sobel-fast-t32")).unwrap().len(), 1);
/// assert!(f32_configs(Some("map-f32-gauss7-sobel-fast-t16")).is_err());
/// ```
pub fn f32_configs(list: Option<&str>) -> anyhow::Result<Vec<F32MapConfig>> {
    let Some(list) = list else {
        return Ok(F32_GRID.to_vec());
    };
    let mut out: Vec<F32MapConfig> = Vec::new();
    for name in list.split(',').map(str::trim) {
        let Some(c) = F32MapConfig::parse(name) else {
            continue;
        };
        let c = c.map_err(|e| anyhow::anyhow!("--configs: {e}"))?;
        if !F32_GRID.contains(&c) {
            bail!("--configs: `{name}` is not in the f32 list the targets measure");
        }
        if out.contains(&c) {
            bail!("--configs: `{name}` is named twice");
        }
        out.push(c);
    }
    Ok(out)
}

/// Runs the map, writes its files and returns the table.
pub fn run(req: &Request) -> anyhow::Result<String> {
    if !(req.clock_mhz.is_finite() && req.clock_mhz > 0.0) {
        bail!(
            "--clock-mhz must be a positive number, got {}",
            req.clock_mhz
        );
    }
    if !(req.fps.is_finite() && req.fps > 0.0) {
        bail!("--fps must be a positive number, got {}", req.fps);
    }
    if !(1..=96).contains(&req.frames) {
        bail!(
            "--frames must be 1..=96 (the demo sequence's frames), got {}",
            req.frames
        );
    }
    let chosen = configs(req.configs.as_deref())?;
    let chosen_f32 = f32_configs(req.configs.as_deref())?;
    let (targets, costs_from) = match &req.targets {
        Some(dir) => {
            let path = dir.join(TARGETS_JSON);
            if !path.is_file() {
                bail!(
                    "--targets: no {} (run `fixsight-verify targets` first)",
                    shown_path(&path)
                );
            }
            let t = load_targets_json(dir).with_context(|| {
                format!("--targets: {} is not a targets file", shown_path(&path))
            })?;
            (
                Some(t),
                format!("Cortex-M4 bench stages of {}", shown_path(&path)),
            )
        }
        None => match load_targets_json(&req.out) {
            Some(t) => (
                Some(t),
                format!(
                    "Cortex-M4 bench stages of {}",
                    shown_path(&req.out.join(TARGETS_JSON))
                ),
            ),
            None => (
                None,
                format!(
                    "not measured (no {}; run `fixsight-verify targets` first)",
                    shown_path(&req.out.join(TARGETS_JSON))
                ),
            ),
        },
    };
    // Refuse before the long run.
    let mut outputs = Outputs::new(&req.out, OUTPUTS, req.overwrite, "--overwrite")?;
    let scenes = match req.images {
        Images::All => crate::natural::all_scenes(),
        Images::Rendered => crate::scene::demo_scenes(),
    };
    let refs = frontier::references(&scenes);
    let seq = SequenceRun::new(req.frames).map_err(anyhow::Error::msg)?;
    let bar = crate::progress::bar((chosen.len() + chosen_f32.len()) as u64, "frontier");
    let mut points = Vec::new();
    for c in &chosen {
        bar.set_message(c.name());
        points.push(
            frontier::evaluate(c, &refs, &seq, targets.as_ref()).map_err(anyhow::Error::msg)?,
        );
        bar.inc(1);
    }
    for c in &chosen_f32 {
        bar.set_message(c.name());
        points.push(
            frontier::float::evaluate(c, &refs, &seq, targets.as_ref())
                .map_err(anyhow::Error::msg)?,
        );
        bar.inc(1);
    }
    bar.finish_and_clear();
    frontier::mark_front(&mut points);
    let budget = req.clock_mhz * 1e6 / (req.fps * 320.0 * 240.0);
    let (recommended, verdict) = frontier::recommend(&points, budget);
    let f = Frontier {
        reference: "the full-f64 Canny (Gaussian sigma 1, Sobel, exact L2, interpolated suppression) with the automatic rule on its own magnitudes, thinned like the edges it is compared with".into(),
        images: refs.iter().map(|r| (r.name.clone(), r.class.clone())).collect(),
        clock_mhz: req.clock_mhz,
        fps: req.fps,
        budget_instr_per_px: budget,
        points,
        recommended,
        verdict,
        costs_from,
    };
    let table = frontier::table(&f);
    outputs.write(OUTPUTS[0], table.as_bytes())?;
    outputs.write(
        OUTPUTS[1],
        (serde_json::to_string_pretty(&f)? + "\n").as_bytes(),
    )?;
    outputs.write_with(OUTPUTS[2], |p| {
        frontier::plot::draw(&f, p).map_err(|e| std::io::Error::other(e.to_string()))
    })?;
    outputs.commit()?;
    Ok(table)
}
