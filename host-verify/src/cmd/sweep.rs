//! `fixsight-verify sweep`: without `--kernel`, the warp precision sweep
//! on a demo scene ([`run`]); with `--kernel ID [--param P]`, one format
//! parameter of a kernel swept on the demo scenes or the user's images
//! ([`run_param`], rules in [`crate::sweep`]). Both write `sweep.md`,
//! `sweep.json` and `sweep.png`.

use crate::files::Outputs;
use crate::warp::check::demo_view;
use crate::warp::sweep::{sweep, sweep_table};

/// The files the sweep writes.
pub const OUTPUTS: [&str; 3] = ["sweep.md", "sweep.json", "sweep.png"];

/// `fixsight-verify sweep`: the precision sweep on the first demo scene,
/// written as `sweep.md`, `sweep.json` and `sweep.png` into `out` (refusing
/// to replace any of them unless `overwrite`, before the sweep runs);
/// returns the table.
pub fn run(out: &std::path::Path, overwrite: bool) -> anyhow::Result<String> {
    let mut outputs = Outputs::new(out, OUTPUTS, overwrite, "--overwrite")?;
    let spec = &crate::scene::DEMO_SPECS[0];
    let s = crate::scene::render(spec, crate::scene::DEMO_WIDTH, crate::scene::DEMO_HEIGHT);
    let view = demo_view(&s).map_err(anyhow::Error::msg)?;
    let fb: Vec<u32> = (2..=10).collect();
    let steps: Vec<u32> = (2..=6).collect();
    let rows = sweep(&s.gray, s.width, s.height, &s.camera, &view, &fb, &steps)
        .map_err(anyhow::Error::msg)?;
    let table = format!(
        "Precision sweep on demo scene `{}` ({}x{}, fit-to-view undistortion, border fill 0).\n\
         Errors against the f64 bilinear reference at the exact lens coordinates.\n\n{}",
        s.name,
        s.width,
        s.height,
        sweep_table(&rows)
    );
    outputs.write(OUTPUTS[0], table.as_bytes())?;
    outputs.write(
        OUTPUTS[1],
        (serde_json::to_string_pretty(&rows)? + "\n").as_bytes(),
    )?;
    outputs.write_with(OUTPUTS[2], |p| {
        crate::sweep::plot::draw_warp(&rows, p).map_err(|e| std::io::Error::other(e.to_string()))
    })?;
    outputs.commit()?;
    Ok(table)
}

/// A `sweep --kernel` request, as given on the command line.
///
/// ```
/// use fixsight_verify::cmd::{run::Luma, sweep::{run_param, Request}};
/// let out = std::env::temp_dir().join(format!("fsv-doc-sweep-cmd-{}", std::process::id()));
/// let req = Request {
///     kernel: "lines.cos_sin".into(), param: None, values: Some("8,14".into()),
///     input: None, lens: None, luma: Luma::Bt601, out: out.clone(), overwrite: false,
/// };
/// let table = run_param(&req).unwrap();
/// assert!(table.contains("| binary angles | 14 |"));
/// // The files exist now: a second run is refused.
/// assert!(run_param(&req).unwrap_err().to_string().contains("--overwrite"));
/// # std::fs::remove_dir_all(&out).unwrap();
/// ```
#[derive(Debug, Clone)]
pub struct Request {
    /// Kernel id.
    pub kernel: String,
    /// Parameter name (`None`: the kernel's only one).
    pub param: Option<String>,
    /// `--values` as given (`None`: the parameter's defaults).
    pub values: Option<String>,
    /// An image file or folder (`None`: the demo scenes).
    pub input: Option<std::path::PathBuf>,
    /// A lens file for the warp kernels (`None`: the demo lens).
    pub lens: Option<std::path::PathBuf>,
    /// Luma formula of colour input images.
    pub luma: crate::cmd::run::Luma,
    /// Output folder.
    pub out: std::path::PathBuf,
    /// Replace existing outputs.
    pub overwrite: bool,
}

/// `fixsight-verify sweep --kernel ...`: checks the request (kernel,
/// parameter, values, options that apply, lens file), refuses existing
/// outputs unless `overwrite`, reads the inputs, runs the sweep and writes
/// `sweep.md`, `sweep.json`, `sweep.png`; returns the Markdown text
/// (example at [`Request`]).
pub fn run_param(req: &Request) -> anyhow::Result<String> {
    use crate::sweep::{self, eval, SweepError};
    let p = sweep::find(&req.kernel, req.param.as_deref())?;
    let values = sweep::values(p, req.values.as_deref())?;
    if req.lens.is_some() && !p.lens {
        return Err(SweepError::NotApplicable {
            option: "--lens",
            kernel: p.kernel,
            why: "only the warp kernels take a lens",
        }
        .into());
    }
    if req.input.is_some() && !p.images {
        return Err(SweepError::NotApplicable {
            option: "--input",
            kernel: p.kernel,
            why: "it runs on every binary angle, not on images",
        }
        .into());
    }
    eval::check_values(p, &values).map_err(anyhow::Error::msg)?;
    let lens = match &req.lens {
        Some(path) => super::report::load_lens(path)?,
        None => {
            crate::lens::LensInUse::demo().map_err(|e| anyhow::anyhow!("the demo lens: {e}"))?
        }
    };
    let mut outputs = Outputs::new(&req.out, OUTPUTS, req.overwrite, "--overwrite")?;
    let (images, source) = if !p.images {
        (Vec::new(), "every binary angle".to_string())
    } else if let Some(input) = &req.input {
        let (paths, skipped) = super::run::inputs(input)?;
        for s in &skipped {
            println!("skipped {} (not an image file)", crate::files::shown(s));
        }
        let mut images = Vec::new();
        for path in &paths {
            let g = super::run::load_grey(path, req.luma)?;
            let name = path.file_stem().unwrap_or_default().to_string_lossy();
            images.push(eval::user_image(&name, g, &lens).map_err(anyhow::Error::msg)?);
        }
        (images, crate::files::shown_path(input))
    } else {
        let scenes = crate::scene::demo_scenes();
        (
            eval::scene_images(&scenes, &lens).map_err(anyhow::Error::msg)?,
            "the demo scenes".to_string(),
        )
    };
    let rows = eval::run(p, &values, &images).map_err(anyhow::Error::msg)?;
    let lens_line = if p.lens {
        format!("Lens: {}.\n", lens.describe())
    } else {
        String::new()
    };
    let derived: Vec<String> = sweep::smallest_within(&rows, 1.0)
        .into_iter()
        .map(|(i, v)| match v {
            Some(v) => format!("{i}: {v}"),
            None => format!("{i}: none of the values swept"),
        })
        .collect();
    let text = format!(
        "Sweep of `{}` of `{}` on {source}.\n\
         Other settings: {}.\n{lens_line}\
         Errors: fixed point minus the {}, in {}; `within 1`: share of samples with \
         |error| <= 1.\nBound: {}.\n\n{}\n\
         Smallest value from which the largest error stays within 1 unit for every larger \
         value swept: {}.\n",
        p.param,
        p.kernel,
        p.fixed,
        p.reference,
        p.unit,
        p.bound
            .unwrap_or("none (no analytical bound for this kernel)"),
        sweep::table(p, &rows),
        derived.join("; ")
    );
    let json = serde_json::json!({
        "kernel": p.kernel,
        "param": p.param,
        "values": values,
        "inputs": source,
        "lens": if p.lens { Some(lens.describe()) } else { None },
        "fixed": p.fixed,
        "reference": p.reference,
        "unit": p.unit,
        "bound": p.bound,
        "rows": rows,
    });
    outputs.write(OUTPUTS[0], text.as_bytes())?;
    outputs.write(
        OUTPUTS[1],
        (serde_json::to_string_pretty(&json)? + "\n").as_bytes(),
    )?;
    outputs.write_with(OUTPUTS[2], |path| {
        crate::sweep::plot::draw(p, &rows, path).map_err(|e| std::io::Error::other(e.to_string()))
    })?;
    outputs.commit()?;
    Ok(text)
}
