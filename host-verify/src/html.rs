//! The report as one self-contained HTML file, `report.html`, for a design
//! review: every plot is a PNG inside the file (base64 `data:` URIs), there
//! is no script, style sheet, font or image fetched from anywhere, so the
//! file opens offline and can be mailed or archived as it is.
//!
//! Contents, in order: the verdict, the golden-vector and on-target
//! summaries, the safety caution; a table of every kernel row; the edge
//! chain's fixed-point and `f64` edge maps side by side on a demo scene with
//! their difference; then per kernel: contract and verdict, notes, metrics,
//! operations per pixel by category (bar chart), the error histogram and an
//! error heat map on a demo scene where the family's host side gives a
//! per-pixel `f64` reference (filters and gradient magnitudes; for
//! bit-exact rows the histogram is the single bar at 0 of every compared
//! sample), and the on-target figures when `targets.json` was present; last
//! the demo scenes.
//!
//! Plots carry titles and axis labels, drawn with the DejaVu Sans font that
//! the `dejavu` crate embeds.

use crate::chain::reference::{agreement, reference_of_chain};
use crate::cmd::run;
use crate::contract::{Contract, KernelReport};
use crate::edge_chain::{run_chain, DEMO};
use crate::report::Report;
use crate::scene::Scene;
use anyhow::{anyhow, Result};
use base64::Engine as _;
use plotters::prelude::*;
use std::collections::BTreeMap;
use std::fmt::Write as _;

/// File name of the HTML report in the output folder.
pub const HTML_FILE: &str = "report.html";

/// Family name the embedded font is registered under.
pub(crate) const FONT: &str = "sans-serif";

/// Registers the embedded font with the plotting crate (once).
pub(crate) fn font() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        // The bytes are a valid TrueType font shipped by the crate; a
        // failure here would leave plots without text, which the tests catch.
        let _ = plotters::style::register_font(FONT, FontStyle::Normal, dejavu::sans::regular());
    });
}

/// HTML-escapes text.
fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// An RGB buffer as an `<img>` with a PNG `data:` URI.
fn img_tag(rgb: &[u8], w: u32, h: u32, alt: &str) -> Result<String> {
    let mut png = Vec::new();
    image::codecs::png::PngEncoder::new(&mut png).write_image(
        rgb,
        w,
        h,
        image::ExtendedColorType::Rgb8,
    )?;
    Ok(format!(
        "<img class=\"plot\" alt=\"{}\" src=\"data:image/png;base64,{}\">",
        esc(alt),
        base64::engine::general_purpose::STANDARD.encode(png)
    ))
}

use image::ImageEncoder as _;

const PLOT_W: u32 = 560;
const PLOT_H: u32 = 300;

fn plot_err<E: std::fmt::Debug>(e: E) -> anyhow::Error {
    anyhow!("drawing a plot: {e:?}")
}

/// Bar chart of `(label, value)` with a title and axis labels.
fn bar_chart(title: &str, x_label: &str, y_label: &str, bars: &[(String, f64)]) -> Result<String> {
    font();
    let mut buf = vec![255u8; (PLOT_W * PLOT_H * 3) as usize];
    {
        let root = BitMapBackend::with_buffer(&mut buf, (PLOT_W, PLOT_H)).into_drawing_area();
        root.fill(&WHITE).map_err(plot_err)?;
        let top = bars.iter().map(|b| b.1).fold(0.0f64, f64::max).max(1e-9) * 1.1;
        let n = bars.len().max(1);
        let mut chart = ChartBuilder::on(&root)
            .caption(title, (FONT, 18))
            .margin(10)
            .x_label_area_size(50)
            .y_label_area_size(60)
            .build_cartesian_2d((0..n - 1).into_segmented(), 0.0..top)
            .map_err(plot_err)?;
        let labels: Vec<String> = bars.iter().map(|b| b.0.clone()).collect();
        chart
            .configure_mesh()
            .disable_x_mesh()
            .x_desc(x_label)
            .y_desc(y_label)
            .x_labels(n.min(16))
            .x_label_formatter(&|v| match v {
                SegmentValue::CenterOf(i) => labels.get(*i).cloned().unwrap_or_default(),
                _ => String::new(),
            })
            .label_style((FONT, 12))
            .axis_desc_style((FONT, 14))
            .draw()
            .map_err(plot_err)?;
        chart
            .draw_series(bars.iter().enumerate().map(|(i, b)| {
                let mut r = Rectangle::new(
                    [
                        (SegmentValue::Exact(i), 0.0),
                        (SegmentValue::Exact(i + 1), b.1),
                    ],
                    RGBColor(70, 110, 180).filled(),
                );
                r.set_margin(0, 0, 6, 6);
                r
            }))
            .map_err(plot_err)?;
        root.present().map_err(plot_err)?;
    }
    img_tag(&buf, PLOT_W, PLOT_H, title)
}

/// Error histogram as a bar chart of sample shares (%): bins of 1/8 LSB
/// when every error is within 2 LSB (a rounding error of at most half an
/// LSB would otherwise fall on the 0 and 1 bins), else of 1 LSB; each bar
/// is labelled with its bin's lower edge.
fn histogram_chart(title: &str, errors: &[f64]) -> Result<String> {
    let max = errors.iter().fold(0.0f64, |a, &e| a.max(e.abs()));
    let step = if max <= 2.0 { 0.125 } else { 1.0 };
    let mut hist: BTreeMap<i64, u64> = BTreeMap::new();
    for e in errors {
        *hist.entry((e / step).floor() as i64).or_insert(0) += 1;
    }
    let total = errors.len().max(1) as f64;
    let bars: Vec<(String, f64)> = hist
        .iter()
        .map(|(b, c)| (format!("{}", *b as f64 * step), 100.0 * *c as f64 / total))
        .collect();
    bar_chart(
        title,
        &format!("error, LSB (fixed minus f64), bins of {step} LSB"),
        "share of samples, %",
        &bars,
    )
}

/// Heat map of `|err|` over a `w x h` image (white 0, dark red at `top`),
/// with a title and a colour scale line.
fn heat_map(title: &str, err: &[f64], w: usize, h: usize) -> Result<String> {
    font();
    let (pw, ph) = ((w as u32 + 20).max(PLOT_W), h as u32 + 70);
    let mut buf = vec![255u8; (pw * ph * 3) as usize];
    let top = err.iter().fold(0.0f64, |a, &e| a.max(e.abs())).max(1e-12);
    {
        let root = BitMapBackend::with_buffer(&mut buf, (pw, ph)).into_drawing_area();
        root.fill(&WHITE).map_err(plot_err)?;
        root.draw(&Text::new(title.to_string(), (10, 6), (FONT, 16)))
            .map_err(plot_err)?;
        root.draw(&Text::new(
            format!("|error|: white 0, dark red {top:.3} LSB; x right, y down, pixels"),
            (10, ph as i32 - 22),
            (FONT, 12),
        ))
        .map_err(plot_err)?;
        for y in 0..h {
            for x in 0..w {
                let t = (err[y * w + x].abs() / top).clamp(0.0, 1.0);
                let c = RGBColor(
                    (255.0 - 95.0 * t) as u8,
                    (255.0 * (1.0 - t)) as u8,
                    (255.0 * (1.0 - t)) as u8,
                );
                root.draw_pixel((10 + x as i32, 30 + y as i32), &c)
                    .map_err(plot_err)?;
            }
        }
        root.present().map_err(plot_err)?;
    }
    img_tag(&buf, pw, ph, title)
}

/// Per-pixel `fixed - f64` of a kernel on every scene, for the kernels
/// whose family gives a per-pixel `f64` reference (the filter presets and
/// the gradient magnitudes, as `run` computes them); `None` for the others.
pub fn pixel_errors(kernel: &str, scenes: &[Scene]) -> Option<Vec<Vec<f64>>> {
    if kernel == "chain.edges" || !run::kernels().contains(&kernel) {
        return None;
    }
    scenes
        .iter()
        .map(|s| {
            let g = run::Grey {
                w: s.width,
                h: s.height,
                px: s.gray.clone(),
            };
            let o = run::apply(kernel, &g).ok()?;
            Some(
                o.fixed
                    .iter()
                    .zip(&o.reference)
                    .map(|(a, b)| a - b)
                    .collect(),
            )
        })
        .collect()
}

fn fmt(v: f64) -> String {
    if v == 0.0 {
        "0".into()
    } else if v.abs() >= 0.01 && v.abs() < 1e6 {
        format!("{v:.4}")
    } else {
        format!("{v:.3e}")
    }
}

/// On-target entries whose name is the kernel id or starts with `id/`.
fn target_rows(targets: &serde_json::Value, id: &str) -> Vec<[String; 6]> {
    let mut rows = Vec::new();
    for t in targets["targets"].as_array().into_iter().flatten() {
        for k in t["kernels"].as_array().into_iter().flatten() {
            let name = k["name"].as_str().unwrap_or("");
            if name == id || name.starts_with(&format!("{id}/")) {
                rows.push([
                    format!(
                        "{} ({})",
                        t["name"].as_str().unwrap_or("?"),
                        crate::targets::firmware_of(t)
                    ),
                    name.to_string(),
                    fmt(k["instr_per_px"].as_f64().unwrap_or(f64::NAN)),
                    k["code_bytes"].to_string(),
                    k["stack_bytes"].to_string(),
                    format!("{}/{}", t["passed"], t["vectors"]),
                ]);
            }
        }
    }
    rows
}

fn table(out: &mut String, head: &[&str], rows: &[Vec<String>]) {
    out.push_str("<table><tr>");
    for h in head {
        let _ = write!(out, "<th>{}</th>", esc(h));
    }
    out.push_str("</tr>");
    for r in rows {
        out.push_str("<tr>");
        for c in r {
            let _ = write!(out, "<td>{}</td>", esc(c));
        }
        out.push_str("</tr>");
    }
    out.push_str("</table>\n");
}

/// The edge chain's fixed and `f64` maps on `s`, side by side, and their
/// difference (white both, red fixed only, blue `f64` only).
fn edge_chain_section(s: &Scene) -> Result<String> {
    let c = run_chain(&s.gray, s.width, s.height, &DEMO).map_err(|e| anyhow!("{e}"))?;
    let (low, high) = (c.thresholds.low(), c.thresholds.high());
    let reference = reference_of_chain(&s.gray, c.w, c.h, low, high);
    let ag = agreement(&c.thin, &reference, c.w, c.h);
    let grey = |m: &[u8]| -> Vec<u8> { m.iter().flat_map(|&v| [v, v, v]).collect() };
    let diff: Vec<u8> = c
        .thin
        .iter()
        .zip(&reference)
        .flat_map(|(&a, &b)| match (a != 0, b != 0) {
            (true, true) => [255, 255, 255],
            (true, false) => [230, 40, 40],
            (false, true) => [60, 120, 255],
            (false, false) => [0, 0, 0],
        })
        .collect();
    let (w, h) = (c.w as u32, c.h as u32);
    Ok(format!(
        "<h2 id=\"edges\">Edge chain: fixed point and f64 on scene {name}</h2>\n\
         <p>The demo edge chain (kernel crate, thresholds low {low}, high {high} from its own \
         rule) and the full-f64 Canny of the host (sigma 1 Gaussian, f64 Sobel, interpolated \
         suppression) with the same thresholds, each applied to the f64 magnitude as t - 1/2 \
         (the test the chain's rounded magnitude makes), thinned by the chain's rule. F1 within 1 px: {f1:.4} (precision {p:.4}, recall \
         {r:.4}; {kp} fixed, {rp} f64 edge pixels).</p>\n<div class=\"row\">\
         <figure>{src}<figcaption>scene</figcaption></figure>\
         <figure>{fixed}<figcaption>fixed point</figcaption></figure>\
         <figure>{refimg}<figcaption>f64 reference</figcaption></figure>\
         <figure>{d}<figcaption>white both, red fixed only, blue f64 only</figcaption></figure>\
         </div>\n",
        name = esc(s.name),
        f1 = ag.f1,
        p = ag.precision,
        r = ag.recall,
        kp = ag.kernel_px,
        rp = ag.reference_px,
        src = img_tag(&grey(&s.gray), w, h, "scene")?,
        fixed = img_tag(&grey(&c.thin), w, h, "fixed-point edges")?,
        refimg = img_tag(&grey(&reference), w, h, "f64 edges")?,
        d = img_tag(&diff, w, h, "edge difference")?,
    ))
}

fn kernel_section(k: &KernelReport, r: &Report, scenes: &[Scene]) -> Result<String> {
    let mut out = String::new();
    let _ = write!(
        out,
        "<h3 id=\"k-{id}\">{id} <span class=\"{cls}\">{verdict}</span></h3>\n<p>Contract: \
         <b>{contract}</b>; measured max |error| {err} against a bound of {bound}; {exact:.4} % of \
         samples equal to the reference.</p>\n",
        id = esc(&k.name),
        cls = if k.pass { "pass" } else { "fail" },
        verdict = if k.pass { "PASS" } else { "FAIL" },
        contract = match k.contract {
            Contract::BitExact => "bit-exact",
            Contract::Tolerance => "tolerance",
        },
        err = fmt(k.max_abs_err),
        bound = fmt(k.bound),
        exact = 100.0 * k.bit_exact_share,
    );
    if !k.notes.is_empty() {
        out.push_str("<ul>");
        for n in &k.notes {
            let _ = write!(out, "<li>{}</li>", esc(n));
        }
        out.push_str("</ul>\n");
    }
    out.push_str("<div class=\"row\">");
    let ops: Vec<(String, f64)> = k
        .ops_per_px
        .per_category
        .iter()
        .filter(|(_, v)| **v > 0.0)
        .map(|(c, v)| (c.clone(), *v))
        .collect();
    if ops.is_empty() {
        out.push_str("<p>No operation counts for this row.</p>");
    } else {
        out.push_str(&bar_chart(
            &format!("{}: operations per pixel", k.name),
            "category",
            "operations per output pixel",
            &ops,
        )?);
    }
    match pixel_errors(&k.name, scenes) {
        Some(errors) => {
            out.push_str(&histogram_chart(
                &format!(
                    "{}: error against the exact f64 output, all demo scenes",
                    k.name
                ),
                &errors.concat(),
            )?);
            if let (Some(e0), Some(s0)) = (errors.first(), scenes.first()) {
                out.push_str(&heat_map(
                    &format!("{}: |fixed - exact f64| on scene {}", k.name, s0.name),
                    e0,
                    s0.width,
                    s0.height,
                )?);
            }
        }
        None if k.contract == Contract::BitExact && k.bit_exact_share == 1.0 => {
            out.push_str(&bar_chart(
                &format!("{}: error histogram (bit-exact)", k.name),
                "error, LSB (kernel minus its integer model)",
                "share of samples, %",
                &[("0".to_string(), 100.0)],
            )?);
            out.push_str(
                "<p>Bit-exact against its integer model on every compared sample: the error \
                 is 0 at every pixel, so there is no heat map to draw.</p>",
            );
        }
        None => out.push_str(
            "<p>This row is judged on the figures below (not a per-pixel error against an \
             f64 image), so it has no error histogram or heat map.</p>",
        ),
    }
    out.push_str("</div>\n");
    if !k.metrics.is_empty() {
        let rows: Vec<Vec<String>> = k
            .metrics
            .iter()
            .map(|(n, v)| vec![n.clone(), fmt(*v)])
            .collect();
        out.push_str("<details><summary>metrics</summary>");
        table(&mut out, &["metric", "value"], &rows);
        out.push_str("</details>\n");
    }
    if let Some(t) = &r.targets {
        let rows = target_rows(t, &k.name);
        if !rows.is_empty() {
            let rows: Vec<Vec<String>> = rows.into_iter().map(|r| r.to_vec()).collect();
            table(
                &mut out,
                &[
                    "core",
                    "bench",
                    "instructions/px",
                    "code bytes",
                    "stack bytes",
                    "vectors passed",
                ],
                &rows,
            );
        }
    }
    Ok(out)
}

/// The flash and RAM of a user's firmware (`flash.json`): one row per
/// image and optimisation level.
fn flash_section(f: &crate::cmd::flash::FlashReport) -> String {
    let mut out = String::from("<h2 id=\"flash\">A user's firmware on the part</h2>\n");
    let _ = writeln!(
        out,
        "<p>Firmware of <code>targets/user-firmware</code> (<code>fixsight-verify flash</code>) \
         for a Cortex-M4 with {} KiB of flash and {} KiB of RAM, run under QEMU: flash = vector \
         table + .text + .rodata + .data, code over the image <code>none</code>, RAM = .data + \
         .bss + the stack high-water mark.</p>",
        f.part_flash_bytes / 1024,
        f.part_ram_bytes / 1024
    );
    let rows: Vec<Vec<String>> = f
        .images
        .iter()
        .map(|i| {
            vec![
                i.name.clone(),
                i.opt_level.clone(),
                i.flash_bytes.to_string(),
                i.code_bytes_over_none.to_string(),
                i.stack_bytes.to_string(),
                i.ram_bytes.to_string(),
                if i.exit_status == 0 {
                    "ran".into()
                } else {
                    format!("exit {}", i.exit_status)
                },
            ]
        })
        .collect();
    table(
        &mut out,
        &[
            "image",
            "opt-level",
            "flash B",
            "code B over none",
            "stack B",
            "RAM B",
            "run",
        ],
        &rows,
    );
    out
}

/// The accuracy/cost map of `frontier.json`: its verdict, its plot
/// (drawn again from the figures) and one row per configuration.
fn frontier_section(f: &crate::frontier::Frontier) -> Result<String> {
    let mut out = String::from("<h2 id=\"frontier\">Accuracy/cost map</h2>\n");
    let _ = writeln!(
        out,
        "<p>Whole job in point mode, QVGA (<code>fixsight-verify frontier</code>). Edge F1 one \
         to one within 1 px against {}; line errors on the demo sequence against its truth; \
         cost: {}. Budget at {} MHz and {} frames/s: {:.1} instructions per pixel. {}.</p>",
        esc(&f.reference),
        esc(&f.costs_from),
        f.clock_mhz,
        f.fps,
        f.budget_instr_per_px,
        esc(&f.verdict)
    );
    let (w, h) = crate::frontier::plot::SIZE;
    out.push_str(&img_tag(
        &crate::frontier::plot::rgb(f)?,
        w,
        h,
        "accuracy/cost map",
    )?);
    out.push('\n');
    let rows: Vec<Vec<String>> = f
        .points
        .iter()
        .map(|p| {
            vec![
                if p.float {
                    format!("{} (f32, needs an FPU)", p.name)
                } else {
                    p.name.clone()
                },
                format!("{:.4}", p.f1_worst),
                format!(
                    "{:.2} / {:.2}",
                    p.line_rho_err_px_mean, p.line_rho_err_px_max
                ),
                p.lost_frames.to_string(),
                p.wrong_edge_frames.to_string(),
                p.m4_instr_per_px
                    .map_or("not measured".into(), |c| format!("{c:.2}")),
                if p.pareto {
                    "yes".into()
                } else {
                    String::new()
                },
            ]
        })
        .collect();
    table(
        &mut out,
        &[
            "configuration",
            "worst F1",
            "rho err px mean / max",
            "lost frames",
            "wrong-edge frames",
            "M4 instr/px",
            "Pareto front",
        ],
        &rows,
    );
    Ok(out)
}

/// The whole HTML document.
pub fn render(r: &Report, scenes: &[Scene]) -> Result<String> {
    let mut out = String::new();
    out.push_str(
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\
         <title>fixsight verification report</title><style>\
         body{font-family:sans-serif;margin:2em;max-width:1300px}\
         table{border-collapse:collapse;margin:0.5em 0}td,th{border:1px solid #bbb;\
         padding:2px 6px;text-align:left}.pass{color:#176317}.fail{color:#b00000}\
         .row{display:flex;flex-wrap:wrap;gap:12px;align-items:flex-start}\
         figure{margin:0}img.plot{border:1px solid #ddd}\
         .caution{border:2px solid #b00000;padding:0.5em 1em}</style></head><body>\n",
    );
    let _ = write!(
        out,
        "<h1>fixsight verification report <span class=\"{}\">{}</span></h1>\n\
         <p>Lens of the lens-dependent rows: {}.</p>\n\
         <p>Golden vectors: {}/{} reproduced bit for bit. Kernel rows: {} of {} pass.</p>\n",
        if r.pass { "pass" } else { "fail" },
        if r.pass { "PASS" } else { "FAIL" },
        esc(&r.lens.description),
        r.golden.passed,
        r.golden.vectors,
        r.kernels.iter().filter(|k| k.pass).count(),
        r.kernels.len()
    );
    match &r.targets {
        Some(t) => {
            let rows: Vec<Vec<String>> = t["targets"]
                .as_array()
                .into_iter()
                .flatten()
                .map(|c| {
                    vec![
                        c["name"].as_str().unwrap_or("?").to_string(),
                        crate::targets::firmware_of(c),
                        format!("{}/{}", c["passed"], c["vectors"]),
                    ]
                })
                .collect();
            out.push_str("<p>On-target runs (targets.json):</p>");
            table(&mut out, &["core", "firmware", "vectors bit-exact"], &rows);
        }
        None => out.push_str(
            "<p>No targets.json in the report folder: on-target figures are not shown (run \
             <code>fixsight-verify targets</code> first).</p>\n",
        ),
    }
    out.push_str(
        "<p class=\"caution\"><b>Not a safety function.</b> The line, tracker and drift-warning \
         figures describe software accuracy only. A vehicle that can hurt people needs \
         safety-rated sensing and control under the applicable standards (for example ISO \
         3691-4 for driverless industrial trucks, IEC 61508, ISO 13849) and local rules.</p>\n",
    );
    out.push_str("<h2>Kernels</h2>\n<table><tr><th>kernel</th><th>contract</th><th>max error</th><th>bound</th><th>exact %</th><th>weighted ops/px</th><th>verdict</th></tr>");
    for k in &r.kernels {
        let _ = write!(
            out,
            "<tr><td><a href=\"#k-{id}\">{id}</a></td><td>{c}</td><td>{e}</td><td>{b}</td>\
             <td>{x:.2}</td><td>{w:.1}</td><td class=\"{cls}\">{v}</td></tr>",
            id = esc(&k.name),
            c = match k.contract {
                Contract::BitExact => "bit-exact",
                Contract::Tolerance => "tolerance",
            },
            e = fmt(k.max_abs_err),
            b = fmt(k.bound),
            x = 100.0 * k.bit_exact_share,
            w = k.ops_per_px.weighted,
            cls = if k.pass { "pass" } else { "fail" },
            v = if k.pass { "PASS" } else { "FAIL" },
        );
    }
    out.push_str("</table>\n");
    if let Some(s) = scenes.first() {
        out.push_str(&edge_chain_section(s)?);
    }
    if let Some(f) = &r.frontier {
        out.push_str(&frontier_section(f)?);
    }
    if let Some(f) = &r.flash {
        out.push_str(&flash_section(f));
    }
    out.push_str("<h2>Per kernel</h2>\n");
    for k in &r.kernels {
        out.push_str(&kernel_section(k, r, scenes)?);
    }
    out.push_str("<h2>Demo scenes</h2>\n<div class=\"row\">");
    for s in scenes {
        let rgb: Vec<u8> = s.gray.iter().flat_map(|&v| [v, v, v]).collect();
        let _ = write!(
            out,
            "<figure>{}<figcaption>{}: {} (seed {:#x})</figcaption></figure>",
            img_tag(&rgb, s.width as u32, s.height as u32, s.name)?,
            esc(s.name),
            esc(s.description),
            s.seed
        );
    }
    out.push_str("</div>\n</body></html>\n");
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cmd::flash::{FlashImage, FlashReport, Sections};

    /// The flash section names every image and level, and says which
    /// image did not run.
    #[test]
    fn flash_section_lists_every_image() {
        let img = |name: &str, level: &str, status| FlashImage {
            name: name.into(),
            opt_level: level.into(),
            sections: Sections::default(),
            flash_bytes: 1234,
            code_bytes_over_none: 56,
            stack_bytes: 78,
            ram_bytes: 910,
            console: String::new(),
            exit_status: status,
        };
        let f = FlashReport {
            schema: 1,
            part_flash_bytes: 256 * 1024,
            part_ram_bytes: 64 * 1024,
            images: vec![img("none", "3", 0), img("point_job", "s", 1)],
        };
        let h = flash_section(&f);
        assert!(h.contains("256 KiB of flash and 64 KiB of RAM"));
        assert!(
            h.contains("<td>point_job</td><td>s</td><td>1234</td>"),
            "{h}"
        );
        assert!(
            h.contains("<td>exit 1</td>") && h.contains("<td>ran</td>"),
            "{h}"
        );
    }
}
