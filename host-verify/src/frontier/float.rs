//! The `f32` configurations of the accuracy/cost map: the point job of the
//! port `ports/cortex-m4f-float/` (`F32PointJob`: an `f32` edge stage, then
//! the kernel crate's line stages), for cores with a single-precision FPU
//! (the Cortex-M4F). They are evaluated like the integer configurations
//! (edge F1 on the same images against the same references, line figures
//! over the same sequence, cost of the bench stage on the Cortex-M4 with
//! its FPU, the image `cortex-m4+cortex-m4f-float`), marked `float` in
//! `frontier.json` and "(f32, FPU)" in the table, and take part in the
//! Pareto front and the recommendation under the same rules: a firmware
//! without an FPU cannot run them (on a Cortex-M0 or M3 every `f32`
//! operation is a library call).

use super::{m4_cost_of, map_point, Described, MapConfig, MapPoint, Reference, SequenceRun};
use crate::metrics::matched_agreement;
use crate::pipeline::job::JobFrame;
use crate::pipeline::{operator_name, smoothing_name, suppression_name};
use fixsight::pipeline::{Magnitude, Operator, PointJobConfig, Smoothing, Suppression};
use fixsight::warp::ControlGrid;
use fixsight_port_cortex_m4f_float::{F32Config, F32EdgeStream, F32PointJobQvga, Root};
use std::f64::consts::PI;

/// The port's image in `targets.json` (`Port::name`).
pub const PORT: &str = "cortex-m4f-float";

/// The kernel id of the port's bench stages.
pub const KERNEL: &str = "float.point_job";

/// One `f32` configuration.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct F32MapConfig {
    /// Smoothing fused into the gradient taps.
    pub smoothing: Smoothing,
    /// Gradient operator.
    pub operator: Operator,
    /// Square root of the magnitude.
    pub root: Root,
    /// Vote columns (32 or 16).
    pub theta_bins: usize,
    /// Non-maximum suppression of the edge stage.
    pub suppression: Suppression,
}

/// The `f32` configurations, in the order of the harness's `f32_stage!`
/// lines (`targets/harness/src/bench.rs`): the demo's smoothing and
/// operator with either square root and either suppression.
pub const F32_GRID: [F32MapConfig; 4] = [
    f32_at(Root::Fast, Suppression::Sectors),
    f32_at(Root::Newton, Suppression::Sectors),
    f32_at(Root::Fast, Suppression::Interpolated),
    f32_at(Root::Newton, Suppression::Interpolated),
];

/// The demo's smoothing and operator at 32 theta columns.
const fn f32_at(root: Root, suppression: Suppression) -> F32MapConfig {
    F32MapConfig {
        smoothing: Smoothing::Gauss7,
        operator: Operator::Sobel,
        root,
        theta_bins: 32,
        suppression,
    }
}

/// The integer stage on the same gradient scale and thresholds.
fn integer_twin(c: &F32MapConfig) -> MapConfig {
    MapConfig {
        smoothing: c.smoothing,
        operator: c.operator,
        magnitude: Magnitude::L2Round,
        theta_bins: c.theta_bins,
        suppression: c.suppression,
    }
}

impl F32MapConfig {
    /// `map-f32-<smoothing>-<operator>-<root>-t<theta bins>`, followed by
    /// `-interpolated` with the interpolating suppression.
    ///
    /// ```
    /// use fixsight_verify::frontier::float::F32_GRID;
    /// assert_eq!(F32_GRID[0].name(), "map-f32-gauss7-sobel-fast-t32");
    /// assert_eq!(F32_GRID[3].name(), "map-f32-gauss7-sobel-newton-t32-interpolated");
    /// ```
    pub fn name(&self) -> String {
        format!(
            "map-f32-{}-{}-{}-t{}{}",
            smoothing_name(self.smoothing),
            operator_name(self.operator),
            self.root.name(),
            self.theta_bins,
            match self.suppression {
                Suppression::Sectors => String::new(),
                other => format!("-{}", suppression_name(other)),
            }
        )
    }

    /// The configuration a name names; `None` for a name that does not
    /// start with `map-f32-`, an error for a bad one that does.
    ///
    /// ```
    /// use fixsight_verify::frontier::float::{F32MapConfig, F32_GRID};
    /// assert_eq!(F32MapConfig::parse("map-f32-gauss7-sobel-newton-t32"), Some(Ok(F32_GRID[1])));
    /// assert_eq!(
    ///     F32MapConfig::parse("map-f32-gauss7-sobel-fast-t32-interpolated"),
    ///     Some(Ok(F32_GRID[2]))
    /// );
    /// assert_eq!(F32MapConfig::parse("map-gauss7-sobel-l1-t32"), None);
    /// assert!(F32MapConfig::parse("map-f32-gauss7-sobel-exact-t32").unwrap().is_err());
    /// ```
    pub fn parse(name: &str) -> Option<Result<F32MapConfig, String>> {
        let rest = name.strip_prefix("map-f32-")?;
        let parts: Vec<&str> = rest.split('-').collect();
        let (s, o, r, t, x) = match parts[..] {
            [s, o, r, t] => (s, o, r, t, None),
            [s, o, r, t, x] => (s, o, r, t, Some(x)),
            _ => {
                return Some(Err(format!(
                    "`{name}`: an f32 configuration is written \
                     map-f32-<smoothing>-<operator>-<fast|newton>-t<theta bins>[-interpolated]"
                )))
            }
        };
        let root = match r {
            "fast" => Root::Fast,
            "newton" => Root::Newton,
            _ => {
                return Some(Err(format!(
                    "`{name}`: unknown square root `{r}` (fast or newton)"
                )))
            }
        };
        // Smoothing, operator, theta columns and suppression by the
        // integer names' rules.
        let twin = match x {
            None => format!("map-{s}-{o}-l2_round-{t}"),
            Some(x) => format!("map-{s}-{o}-l2_round-{t}-{x}"),
        };
        Some(MapConfig::parse(&twin).map(|c| F32MapConfig {
            smoothing: c.smoothing,
            operator: c.operator,
            root,
            theta_bins: c.theta_bins,
            suppression: c.suppression,
        }))
    }

    /// The edge stage: the integer stage `EdgeConfig::demo_with(smoothing,
    /// operator, L2Round)` (its gradient scale, first thresholds and bin
    /// width) with the configuration's square root.
    pub fn edges(&self) -> F32Config {
        F32Config {
            edges: integer_twin(self).edges(),
            root: self.root,
        }
    }

    /// The whole job's settings (those of the integer twin; the edge
    /// stage's root is [`F32MapConfig::root`]).
    pub fn job(&self) -> PointJobConfig {
        integer_twin(self).job()
    }
}

/// The host's `f32` stream: QVGA (every image of the map), the demo's
/// histogram, 65536 candidates (none dropped on these images).
type HostF32Stream = F32EdgeStream<320, { 320 * 240 }, 1024, 65536>;

/// One-to-one F1 of the `f32` edge stage on each reference: the second of
/// two identical frames (thresholds from the first), like
/// [`super::edge_f1`].
pub fn edge_f1(cfg: &F32Config, refs: &[Reference]) -> Result<Vec<f64>, String> {
    let mut s: Box<HostF32Stream> = Box::default();
    refs.iter()
        .map(|r| {
            let sc = &r.scene;
            let err = |e: fixsight::Error| format!("{}: {e}", r.name);
            s.configure(cfg, sc.width, sc.height).map_err(err)?;
            for _ in 0..2 {
                for row in sc.gray.chunks_exact(sc.width) {
                    s.push_row(row).map_err(err)?;
                }
                s.finish().map_err(err)?;
            }
            let mut edges = vec![0u8; sc.width * sc.height];
            for p in s.points() {
                edges[p.y as usize * sc.width + p.x as usize] = 255;
            }
            Ok(matched_agreement(&edges, &r.edges, sc.width, sc.height, 1).f1)
        })
        .collect()
}

/// Line figures of the `f32` job over the sequence (those of
/// [`super::line_figures`]).
pub fn line_figures(c: &F32MapConfig, run: &SequenceRun) -> Result<super::LineFigures, String> {
    let g = &run.grid;
    let grid = ControlGrid::new(&g.points, g.geom, g.k).map_err(|e| e.to_string())?;
    let cfg = c.job();
    let (w, h) = (cfg.vote.width, cfg.vote.height);
    let mut job: Box<F32PointJobQvga> = Box::default();
    job.configure(&cfg, c.root, w, h)
        .map_err(|e| e.to_string())?;
    let to_px =
        |l: &fixsight::marking::Candidate| (l.rho_q4 as f64 / 16.0, l.theta as f64 / 65536.0 * PI);
    let mut frames = Vec::new();
    for img in &run.frames {
        for r in img.chunks_exact(w) {
            job.push_row(r).map_err(|e| e.to_string())?;
        }
        let rep = job.finish(Some(&grid)).map_err(|e| e.to_string())?;
        let lines = job.lines();
        let tr = job.tracker().ok_or("no tracker")?;
        frames.push(JobFrame {
            tape: rep
                .marking
                .found()
                .map(|t| [to_px(&lines[t.left]), to_px(&lines[t.right])]),
            tracks: tr
                .tracks()
                .filter(|t| t.confirmed)
                .map(|t| {
                    (
                        t.rho.pos as f64 / 256.0 / 16.0,
                        t.theta.pos as f64 / 256.0 / 65536.0 * PI,
                    )
                })
                .collect(),
            warning: rep.track.warning.map(|w| w.frames),
            predicted: tr.tracks().filter_map(|t| t.frames_to_cross).min(),
        });
    }
    Ok(super::line_figures_of(&run.truth, &frames))
}

/// Evaluates one `f32` configuration: a [`MapPoint`] with `float` set,
/// the RAM of `F32PointJobQvga` and the cost and code bytes of its bench
/// stage on the port's image.
pub fn evaluate(
    c: &F32MapConfig,
    refs: &[Reference],
    run: &SequenceRun,
    targets: Option<&crate::targets::TargetsReport>,
) -> Result<MapPoint, String> {
    let edges = c.edges();
    edges.check().map_err(|e| format!("{}: {e}", c.name()))?;
    let f1s = edge_f1(&edges, refs)?;
    let lines = line_figures(c, run)?;
    let cost = targets.and_then(|t| m4_cost_of(t, Some(PORT), KERNEL, &c.name()));
    let what = Described {
        name: c.name(),
        smoothing: smoothing_name(c.smoothing).into(),
        operator: operator_name(c.operator).into(),
        magnitude: format!("f32 {}", c.root.name()),
        edges: edges.edges,
        theta_bins: c.theta_bins,
        ram_bytes: F32PointJobQvga::ram_bytes(),
        float: true,
    };
    Ok(map_point(what, refs, &f1s, run.len(), &lines, cost))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The harness measures the same `f32` list, in the same order (its
    /// `f32_stage!` lines in `targets/harness/src/bench.rs`).
    #[test]
    fn the_harness_measures_the_same_f32_configurations() {
        let theirs = super::super::tests::harness_stage_names("f32_stage", "map-f32-");
        let ours: Vec<String> = F32_GRID.iter().map(F32MapConfig::name).collect();
        assert_eq!(theirs, ours);
        for (c, n) in F32_GRID.iter().zip(&ours) {
            assert_eq!(F32MapConfig::parse(n), Some(Ok(*c)));
            assert!(c.edges().check().is_ok(), "{n}");
        }
    }
}
