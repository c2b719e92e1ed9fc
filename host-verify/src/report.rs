//! The verification report: every family's contract checks on the demo
//! scenes and the natural photographs ([`crate::natural`]; rows give
//! per-image and per-class figures), the golden-vector check, and (when `targets.json` is in the
//! output folder) the on-target figures; printed as a table and written as
//! `report.json` and as one self-contained HTML file, `report.html`
//! ([`crate::html`]).
//!
//! `report.json`, schema 1 (fields are only ever added):
//!
//! ```text
//! { "schema": 1, "pass": bool,
//!   "lens": { "description": str, "file"?: str, "sha256"?: str },
//!   "golden": { "vectors": int, "passed": int, "failures"?: [[id, reason]] },
//!   "scenes": [ { "name", "description", "seed", "width", "height", "image",
//!                 "class": "rendered" | "sharp" | "texture",
//!                 "source"?, "licence"? } ],
//!   "kernels": [ { "name", "family", "contract": "bit-exact" | "tolerance",
//!                  "max_abs_err", "bound", "bit_exact_share",
//!                  "ops_per_px": { "total", "weighted", "add_sub", "mul", "mac", "shift",
//!                                  "logic", "load", "store", "branch", "table", "div" },
//!                  "metrics": { name: number }, "pass", "notes"?: [str] } ],
//!   "targets"?: <contents of targets.json>,
//!   "frontier"?: <contents of frontier.json>,
//!   "flash"?: <contents of flash.json> }
//! ```

use crate::contract::KernelReport;
use crate::families::check_golden;
use crate::families::FAMILIES;
use crate::files::Outputs;
use crate::golden::GoldenSummary;
use crate::lens::{LensInUse, LensOrigin};
use crate::natural::{all_scenes, natural_image, NATURAL, PACKAGE};
use crate::scene::Scene;
use anyhow::Context;
use serde::Serialize;
use std::path::Path;

/// Current schema number of `report.json`.
pub const SCHEMA: u32 = 1;

/// Description of a demo scene in the report.
#[derive(Debug, Clone, Serialize)]
pub struct SceneInfo {
    /// Name.
    pub name: String,
    /// What it shows.
    pub description: String,
    /// Seed.
    pub seed: u64,
    /// Width.
    pub width: usize,
    /// Height.
    pub height: usize,
    /// PNG written next to the report.
    pub image: String,
    /// Image class (`rendered`, `sharp`, `texture`).
    pub class: String,
    /// Where a natural photograph comes from (package, version, image).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub source: Option<String>,
    /// Licence of a natural photograph.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub licence: Option<String>,
}

/// The lens the lens-dependent rows used.
#[derive(Debug, Clone, Serialize)]
pub struct LensInfo {
    /// `built-in demo lens`, or `lens file NAME (SHA-256 HEX)`.
    pub description: String,
    /// The lens file's name (absent for the demo lens).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub file: Option<String>,
    /// SHA-256 of the lens file's bytes (absent for the demo lens).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sha256: Option<String>,
}

impl LensInfo {
    /// The description of `lens`.
    pub fn of(lens: &LensInUse) -> Self {
        let (file, sha256) = match &lens.origin {
            LensOrigin::Demo => (None, None),
            LensOrigin::File { name, sha256 } => (Some(name.clone()), Some(sha256.clone())),
        };
        Self {
            description: lens.describe(),
            file,
            sha256,
        }
    }
}

/// The whole report.
#[derive(Debug, Clone, Serialize)]
pub struct Report {
    /// Schema number.
    pub schema: u32,
    /// Overall verdict.
    pub pass: bool,
    /// The lens of the lens-dependent rows.
    pub lens: LensInfo,
    /// Golden-vector summary.
    pub golden: GoldenSummary,
    /// Scenes used: the demo scenes, then the natural photographs.
    pub scenes: Vec<SceneInfo>,
    /// One row per kernel.
    pub kernels: Vec<KernelReport>,
    /// On-target figures, when `targets.json` was found.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub targets: Option<serde_json::Value>,
    /// The accuracy/cost map, when `frontier.json` (`fixsight-verify
    /// frontier`) was found in the report folder.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub frontier: Option<crate::frontier::Frontier>,
    /// A user's firmware on a 64 KiB part, when `flash.json`
    /// (`fixsight-verify flash`) was found in the report folder.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub flash: Option<crate::cmd::flash::FlashReport>,
}

/// The JSON file at `path` when it exists (a link counts as existing and
/// is refused by the reader), `None` when it does not; a file that does not
/// parse is an error naming it, followed by `what`.
fn json_if_present<T: serde::de::DeserializeOwned>(
    path: &std::path::Path,
    what: &str,
) -> anyhow::Result<Option<T>> {
    if std::fs::symlink_metadata(path).is_err() {
        return Ok(None);
    }
    let text = crate::files::read_text(path)?;
    let v = serde_json::from_str(&text)
        .with_context(|| format!("{} {what}", crate::files::shown_path(path)))?;
    Ok(Some(v))
}

/// Runs every family's checks on the given scenes, the lens-dependent
/// rows with `lens`.
pub fn check_all(scenes: &[Scene], lens: &LensInUse) -> Vec<KernelReport> {
    let bar = crate::progress::bar(FAMILIES.len() as u64, "checking families");
    let rows = FAMILIES
        .iter()
        .flat_map(|f| {
            bar.set_message(f.name);
            let rows = (f.check)(scenes, lens);
            bar.inc(1);
            rows
        })
        .collect();
    bar.finish_and_clear();
    rows
}

/// Builds the report: scenes, checks (the lens-dependent rows with
/// `lens`), golden vectors in `golden_dir`, and `targets.json` from
/// `out_dir` if present. Writes scene PNGs and `report.json` into
/// `out_dir` through [`crate::files::Outputs`]: refused before anything
/// runs when one of them exists and `overwrite` is not set.
pub fn run(
    out_dir: &Path,
    golden_dir: &Path,
    overwrite: bool,
    lens: &LensInUse,
) -> anyhow::Result<Report> {
    let pngs: Vec<String> = crate::scene::DEMO_SPECS
        .iter()
        .map(|s| s.name)
        .chain(NATURAL.iter().map(|n| n.name))
        .map(|n| format!("scene-{n}.png"))
        .collect();
    let mut outputs = Outputs::new(
        out_dir,
        pngs.iter()
            .map(String::as_str)
            .chain(["report.json", crate::html::HTML_FILE]),
        overwrite,
        "--overwrite",
    )?;
    let scenes = all_scenes();
    let mut infos = Vec::new();
    for s in &scenes {
        let file = format!("scene-{}.png", s.name);
        let img = image::GrayImage::from_raw(s.width as u32, s.height as u32, s.gray.clone())
            .context("scene buffer has the scene's size")?;
        outputs.write_with(&file, |p| img.save(p).map_err(std::io::Error::other))?;
        infos.push(SceneInfo {
            name: s.name.into(),
            description: s.description.into(),
            seed: s.seed,
            width: s.width,
            height: s.height,
            image: file,
            class: s.class.name().into(),
            source: natural_image(s.name).map(|n| format!("{PACKAGE}{}", n.file)),
            licence: natural_image(s.name).map(|n| n.licence.to_string()),
        });
    }
    let kernels = check_all(&scenes, lens);
    let golden = match check_golden(golden_dir) {
        Ok(g) => g,
        Err(e) => GoldenSummary {
            vectors: 0,
            passed: 0,
            failures: vec![("manifest".into(), e.to_string())],
        },
    };
    let targets: Option<serde_json::Value> =
        json_if_present(&out_dir.join("targets.json"), "is not valid JSON")?;
    let frontier = json_if_present(
        &out_dir.join(crate::cmd::frontier::OUTPUTS[1]),
        "is not a map written by `fixsight-verify frontier`",
    )?;
    let flash = json_if_present(
        &out_dir.join(crate::cmd::flash::FLASH_JSON),
        "is not a file written by `fixsight-verify flash`",
    )?;
    let targets_ok = targets
        .as_ref()
        .and_then(|t: &serde_json::Value| t["targets"].as_array().cloned())
        .is_none_or(|ts| ts.iter().all(|t| t["passed"] == t["vectors"]));
    let pass = targets_ok
        && kernels.iter().all(|k| k.pass)
        && golden.failures.is_empty()
        && golden.vectors > 0
        && golden.passed == golden.vectors;
    let report = Report {
        schema: SCHEMA,
        pass,
        lens: LensInfo::of(lens),
        golden,
        scenes: infos,
        kernels,
        targets,
        frontier,
        flash,
    };
    outputs.write(
        "report.json",
        (serde_json::to_string_pretty(&report)? + "\n").as_bytes(),
    )?;
    outputs.write(
        crate::html::HTML_FILE,
        crate::html::render(&report, &scenes)?.as_bytes(),
    )?;
    outputs.commit()?;
    Ok(report)
}

fn fmt_num(v: f64) -> String {
    if v == 0.0 {
        "0".into()
    } else if v.abs() >= 0.01 && v.abs() < 1e5 {
        format!("{v:.3}")
    } else {
        format!("{v:.2e}")
    }
}

/// The report as a text table.
pub fn table(r: &Report) -> String {
    let mut out = String::new();
    let header = [
        "kernel", "family", "contract", "max err", "bound", "exact %", "ops/px", "wops/px",
        "verdict",
    ];
    let rows: Vec<[String; 9]> = r
        .kernels
        .iter()
        .map(|k| {
            [
                k.name.clone(),
                serde_json::to_value(k.family)
                    .ok()
                    .and_then(|v| v.as_str().map(str::to_string))
                    .unwrap_or_default(),
                match k.contract {
                    crate::contract::Contract::BitExact => "bit-exact".into(),
                    crate::contract::Contract::Tolerance => "tolerance".into(),
                },
                fmt_num(k.max_abs_err),
                fmt_num(k.bound),
                format!("{:.2}", 100.0 * k.bit_exact_share),
                format!("{:.1}", k.ops_per_px.total),
                format!("{:.1}", k.ops_per_px.weighted),
                if k.pass { "PASS".into() } else { "FAIL".into() },
            ]
        })
        .collect();
    let mut widths = header.map(str::len);
    for row in &rows {
        for (w, c) in widths.iter_mut().zip(row) {
            *w = (*w).max(c.len());
        }
    }
    let line = |cells: &[String]| -> String {
        cells
            .iter()
            .zip(widths)
            .enumerate()
            .map(|(i, (c, w))| {
                if i < 3 {
                    format!("{c:<w$}")
                } else {
                    format!("{c:>w$}")
                }
            })
            .collect::<Vec<_>>()
            .join("  ")
    };
    out += &line(&header.map(String::from));
    out += "\n";
    out += &widths
        .iter()
        .map(|&w| "-".repeat(w))
        .collect::<Vec<_>>()
        .join("  ");
    out += "\n";
    for row in &rows {
        out += &line(row);
        out += "\n";
    }
    for k in &r.kernels {
        for n in k
            .notes
            .iter()
            .filter(|n| !k.pass || n.starts_with("GOAL NOT MET"))
        {
            out += &format!("  {}: {}\n", k.name, n);
        }
    }
    out += &format!("lens: {}\n", r.lens.description);
    out += &format!(
        "golden vectors: {}/{} reproduced bit for bit\n",
        r.golden.passed, r.golden.vectors
    );
    for (id, why) in &r.golden.failures {
        out += &format!("  golden {id}: {why}\n");
    }
    if let Some(targets) = r.targets.as_ref().and_then(|t| t["targets"].as_array()) {
        for t in targets {
            out += &format!(
                "on target {} ({}, {}): {}/{} golden vectors bit-exact\n",
                t["name"].as_str().unwrap_or("?"),
                t["triple"].as_str().unwrap_or("?"),
                crate::targets::firmware_of(t),
                t["passed"],
                t["vectors"]
            );
            if let Some(l) = t.get("c_library") {
                out += &format!(
                    "  C static library {}: {} bytes, adds {} bytes of .text + .rodata\n",
                    l["archive"].as_str().unwrap_or("?"),
                    l["archive_bytes"],
                    l["firmware_bytes_added"]
                );
            }
        }
    }
    out += &format!("overall: {}\n", if r.pass { "PASS" } else { "FAIL" });
    out
}
