//! `fixsight-verify`: the command-line front of the verification tool. It
//! parses the arguments and calls the command's body in
//! `fixsight_verify::cmd`.

use clap::{Parser, Subcommand};
use fixsight_verify::cmd;
use fixsight_verify::targets::CodeBytes;
use std::path::PathBuf;
use std::process::ExitCode;

#[derive(Parser)]
#[command(
    name = "fixsight-verify",
    version,
    about = "Verify the fixsight kernels against f64 references and golden vectors"
)]
struct Cli {
    /// No progress bars, and no tables from `report` and `targets` (their
    /// failures, verdict and files are the same): for CI logs. Progress
    /// bars are drawn only when stderr is a terminal anyway.
    #[arg(long, global = true)]
    quiet: bool,
    #[command(subcommand)]
    cmd: Cmd,
}

#[derive(Subcommand)]
enum Cmd {
    /// Build a lens-undistortion control grid from a lens file and write it
    /// as Rust source, a C header and a CRC-checked blob.
    ///
    /// Example: fixsight-verify grid --lens cal/lens.txt --out my-firmware/src/
    Grid {
        /// Lens file (`fixsight-lens 1` text format).
        #[arg(long)]
        lens: PathBuf,
        /// Control-point spacing as log2 of output pixels (2..=6).
        #[arg(long, default_value_t = 4)]
        grid_log2: u32,
        /// Fractional bits of the coordinates (2..=10). The default 7 is the
        /// smallest value at which the project's sweep over its demo scenes
        /// and natural photographs keeps 99.9 % of pixels within 1 LSB on
        /// every image (README, "Natural photographs"; 5 suffices for
        /// low-contrast floor scenes only).
        #[arg(long, default_value_t = 7)]
        frac_bits: u32,
        /// Output folder.
        #[arg(long, default_value = "fixsight-grid")]
        out: PathBuf,
        /// File stem and identifier stem of the outputs: letters, digits,
        /// `_`, `-`, `.`; the files go into --out.
        #[arg(long, default_value = "lens_grid")]
        name: String,
        /// Replace output files that already exist (refused otherwise,
        /// naming the file, before anything is computed).
        #[arg(long)]
        overwrite: bool,
    },
    /// Calibrate a lens from photographs of a flat checkerboard: writes a
    /// lens file (`fixsight-lens 1`, its path on the last line) for `grid`,
    /// a report and a picture per image.
    ///
    /// Example: fixsight-verify calibrate --images photos/ --inner-corners 9x6 --square-mm 25 --out cal/
    Calibrate {
        /// Folder of .png/.jpg/.jpeg photographs of the board, one sensor size.
        #[arg(long, value_name = "DIR")]
        images: PathBuf,
        /// Inner corners of the board (where four squares meet), e.g. 9x6.
        #[arg(long, value_name = "COLSxROWS", value_parser = cmd::calibrate::parse_corners)]
        inner_corners: (usize, usize),
        /// Side of one square, millimetres.
        #[arg(long)]
        square_mm: f64,
        /// Distortion model: `brown` (radial k1..k3, tangential p1, p2) or
        /// `fisheye` (equidistant, k1, k2) for very wide lenses.
        #[arg(long, default_value = "brown", value_parser = fixsight_verify::calibrate::ModelKind::parse)]
        model: fixsight_verify::calibrate::ModelKind,
        /// Output folder.
        #[arg(long, default_value = "fixsight-calibration")]
        out: PathBuf,
        /// Control-point spacing (log2 px, 2..=6) for the report's grid error.
        #[arg(long, default_value_t = 4)]
        grid_log2: u32,
        /// Fractional bits (2..=10) for the report's grid error (default 7,
        /// as `grid`).
        #[arg(long, default_value_t = 7)]
        frac_bits: u32,
        /// Replace output files that already exist (refused otherwise,
        /// naming the file).
        #[arg(long)]
        overwrite: bool,
    },
    /// Sweep a kernel's format parameter against its f64 reference: sweep.md, sweep.json, sweep.png
    ///
    /// Per value and input: largest, mean and RMS error, share within 1 unit,
    /// the analytical bound where the kernel has one; sweep.png plots the
    /// error against the value, one line per input.
    ///
    /// Parameters (--kernel / --param, default values):
    ///   warp.pixel_map    frac_bits       2..=10
    ///   warp.control_grid frac_bits       2..=10 (points every 8 px)
    ///   warp.control_grid grid_log2       2..=6  (frac_bits 7)
    ///   filter.separable  coeff_bits      2..=11 (7-tap Gaussian, sigma 1 px)
    ///   lines.cos_sin     frac_bits       8..=14 (every binary angle)
    ///   lines.accumulator trig_frac_bits  8..=14
    ///
    /// Inputs: the demo scenes (one row group each) or --input; the warp
    /// kernels take --lens. Without --kernel: the warp precision sweep
    /// (fractional bits x pixel map and control-grid spacings) on a demo
    /// scene.
    ///
    /// Examples:
    ///   fixsight-verify sweep --kernel warp.control_grid --param grid_log2 --input photos/ --out grid-sweep
    ///   fixsight-verify sweep --kernel filter.separable --values 4..=9 --out coeff-sweep
    ///   fixsight-verify sweep --out fixsight-sweep
    #[command(verbatim_doc_comment)]
    Sweep {
        /// Kernel id whose format parameter is swept (see the list above).
        #[arg(long, value_name = "ID")]
        kernel: Option<String>,
        /// Parameter to sweep (needed when the kernel has several).
        #[arg(long, value_name = "NAME", requires = "kernel")]
        param: Option<String>,
        /// Values: A..=B or a list such as 4,6,8 (default: see above).
        #[arg(long, value_name = "LIST", requires = "kernel")]
        values: Option<String>,
        /// An image file (PNG, PGM/PPM, JPEG) or a folder of them, read as
        /// `run --input` reads them, instead of the demo scenes.
        #[arg(long, value_name = "PATH", requires = "kernel")]
        input: Option<PathBuf>,
        /// Warp kernels: a lens file (fixsight-lens 1, as `calibrate`
        /// writes it) for 320x240 images (default: the built-in demo lens,
        /// scaled to each image).
        #[arg(long, value_name = "FILE", requires = "kernel")]
        lens: Option<PathBuf>,
        /// Luma formula for colour --input images: bt601 (ITU-R BT.601) or bt709.
        #[arg(long, default_value = "bt601", value_parser = cmd::run::Luma::parse)]
        luma: cmd::run::Luma,
        /// Output folder.
        #[arg(long, default_value = "fixsight-sweep")]
        out: PathBuf,
        /// Replace output files that already exist.
        #[arg(long)]
        overwrite: bool,
    },
    /// Run every kernel on the built-in demo scenes, check every contract and
    /// golden vector, print a table and write report.json.
    ///
    /// With --lens FILE the rows that depend on the lens use that lens
    /// instead of the built-in demo lens: warp.pixel_map, warp.control_grid,
    /// warp.grid_stream (the demo scenes rendered through it, the natural
    /// photographs warped through it), lines.correct_point, the known lines
    /// of lines.peak, pipeline.point_job and pipeline.image_job (the demo
    /// sequence rendered through it). marking.select (limits derived for the
    /// demo view) and the ring figures band_* and ram_bytes_* stay on the
    /// demo lens and say so in their notes. The report names the lens (file
    /// name and SHA-256). Golden vectors are checked unchanged.
    ///
    /// Example: fixsight-verify report --out fixsight-report --overwrite
    ///
    /// With a calibrated lens: fixsight-verify report --lens cal/lens.txt --out lens-report
    // The safety note is `after_help`, so both `-h` and `--help` print it
    // and the option list keeps its compact form.
    #[command(
        after_help = "Not a safety function: the `track.tracker` and `pipeline.point_job` \
        rows measure a drift warning for a vehicle following floor tape. A vehicle that can hurt people needs \
        safety-rated sensing and control under the applicable standards (for example ISO \
        3691-4, IEC 61508, ISO 13849) and local regulations."
    )]
    Report {
        /// Output folder.
        #[arg(long, default_value = "fixsight-report")]
        out: PathBuf,
        /// Golden-vector folder (default: `golden` in the current folder).
        #[arg(long, value_name = "DIR")]
        vectors: Option<PathBuf>,
        /// A lens file (fixsight-lens 1, as `calibrate` writes it) for
        /// 320x240 frames with a 320x240 corrected view, for the rows that
        /// depend on the lens (default: the built-in demo lens). A bad file
        /// stops the command before anything runs.
        #[arg(long, value_name = "FILE")]
        lens: Option<PathBuf>,
        /// Replace the report's files (report.json, scene PNGs) if they exist.
        #[arg(long)]
        overwrite: bool,
    },
    /// Build the firmware of targets/user-firmware (one binary per part of the
    /// kernel crate: none, edge_stream, point_job), written as a user would
    /// write it for a Cortex-M4 with 256 KiB of flash and 64 KiB of RAM, at
    /// opt-level 3 and "s"; measure each image's flash, code and RAM (its
    /// sections and its stack high-water mark) and run it under QEMU; write
    /// flash.json. Fails when an image does not run or needs more RAM than the
    /// part has. Not a safety function: the point job's drift warning is an
    /// aid; a vehicle that can hurt people needs safety-rated sensing and
    /// control under the applicable standards (for example ISO 3691-4,
    /// IEC 61508) and local regulations.
    ///
    /// Example: fixsight-verify flash --out fixsight-report
    Flash {
        /// Output folder.
        #[arg(long, default_value = "fixsight-report")]
        out: PathBuf,
        /// Replace flash.json if it exists.
        #[arg(long)]
        overwrite: bool,
    },
    /// Build the firmware, run every golden vector on emulated Cortex-M0/M3/M4
    /// and RV32 cores (QEMU) and through the C ABI on the Cortex-M4, write
    /// targets.json.
    ///
    /// The Rust firmware also runs the 96 frames of the demo sequence through
    /// the demo jobs of both lens modes (pipeline.point_job and
    /// pipeline.image_job), compares every frame's record with the host's and
    /// counts each frame's instructions (entries <kernel id>/demo_sequence).
    /// The drift warnings in those records are not a safety function: a
    /// vehicle that can hurt people needs safety-rated sensing and control
    /// under the applicable standards (for example ISO 3691-4, IEC 61508) and
    /// local regulations.
    ///
    /// Example: fixsight-verify targets --lang rust --out fixsight-report
    Targets {
        /// Output folder.
        #[arg(long, default_value = "fixsight-report")]
        out: PathBuf,
        /// Golden-vector folder (default: `golden` in the current folder).
        #[arg(long, value_name = "DIR")]
        vectors: Option<PathBuf>,
        /// Only the firmware in this language (`rust` or `c`); default both.
        #[arg(long, value_parser = ["rust", "c"])]
        lang: Option<String>,
        /// Only this Rust image (repeatable): cortex-m4, cortex-m3,
        /// cortex-m0, rv32imc, or a port's image cortex-m4+cortex-m4-dsp, cortex-m4+cortex-m4f-float.
        /// Default: all of them. The C firmware follows --lang.
        #[arg(long, value_name = "IMAGE")]
        core: Vec<String>,
        /// How code bytes are measured: `graph` (default) sums the
        /// functions only the kernel id's dispatch function reaches in the
        /// image that ran the vectors (relocations kept by the link);
        /// `rebuild` builds one image per kernel id and core and takes its
        /// .text growth over an image dispatching none (slow).
        #[arg(long, value_name = "METHOD", value_enum, default_value_t = CodeBytes::Graph)]
        code_bytes: CodeBytes,
        /// Replace targets.json and the files in targets-logs/ if they exist.
        #[arg(long)]
        overwrite: bool,
    },
    /// Run one kernel on your own image or folder of images: fixed-point and
    /// f64 outputs, their difference, and the report's figures. Or, with
    /// --pipeline, the whole job (edges, lines, marking, tracker, drift
    /// warning) over a folder of 320x240 frames, fixed point against f64.
    ///
    /// Colour images become luma (--luma bt601, the default, or bt709). With
    /// --kernel, writes <stem>.<kernel>.fixed.png, .f64.png, .diff.png and
    /// .json per image; with --pipeline, <stem>.pipeline.png per frame (the
    /// tape edges of both runs drawn on the corrected view) and
    /// pipeline.json.
    ///
    /// Examples:
    ///   fixsight-verify run --input photos/ --kernel chain.edges --out run-out/
    ///   fixsight-verify run --input frames/ --pipeline --lens my-camera.lens --out job-out/
    #[command(
        after_help = "Not a safety function: with --pipeline it prints a drift warning \
        for a vehicle following floor tape. A vehicle that can hurt people needs safety-rated \
        sensing and control under the applicable standards (for example ISO 3691-4, IEC 61508, \
        ISO 13849) and local regulations."
    )]
    Run {
        /// An image file (PNG, PGM/PPM, JPEG) or a folder of them (with
        /// --pipeline: the frames of one sequence, in file-name order).
        #[arg(long, value_name = "PATH")]
        input: PathBuf,
        /// Kernel id: a filter preset, a gradient magnitude, or chain.edges.
        #[arg(
            long,
            value_name = "ID",
            required_unless_present = "pipeline",
            conflicts_with = "pipeline"
        )]
        kernel: Option<String>,
        /// The whole job in point mode (pipeline.point_job, the demo
        /// configuration for 320x240 frames) instead of one kernel.
        #[arg(long)]
        pipeline: bool,
        /// With --pipeline: a lens file (fixsight-lens 1, as `calibrate`
        /// writes it) for 320x240 frames; the edge points are corrected
        /// through it before voting. Without it the frames count as
        /// undistorted.
        #[arg(long, value_name = "FILE")]
        lens: Option<PathBuf>,
        /// Output folder.
        #[arg(long, value_name = "DIR", default_value = "fixsight-run")]
        out: PathBuf,
        /// Luma formula for colour input: bt601 (ITU-R BT.601) or bt709.
        #[arg(long, default_value = "bt601", value_parser = cmd::run::Luma::parse)]
        luma: cmd::run::Luma,
        /// Replace output files that already exist.
        #[arg(long)]
        overwrite: bool,
    },
    /// Does a pipeline fit a part? Instructions per second of each stage on a
    /// core (from targets.json), load at one instruction per cycle, margin,
    /// dominant stage. Exit status 1 when it does not fit.
    ///
    /// Example: fixsight-verify budget --width 320 --height 240 --fps 30 --clock-mhz 168
    ///
    /// Not a safety function: a budget of the software's cycles says nothing
    /// about whether a vehicle is safe; that needs safety-rated sensing and
    /// control under the applicable standards (ISO 3691-4, IEC 61508) and
    /// local rules.
    Budget {
        /// Frame width, pixels.
        #[arg(long)]
        width: u32,
        /// Frame height, pixels.
        #[arg(long)]
        height: u32,
        /// Frames per second.
        #[arg(long)]
        fps: f64,
        /// Core clock, MHz.
        #[arg(long)]
        clock_mhz: f64,
        /// Core, as named in targets.json (cortex-m4, cortex-m3, cortex-m0, rv32imc).
        #[arg(long, default_value = "cortex-m4")]
        core: String,
        /// Kernel id of a stage (repeatable; default: the pipeline's whole job).
        #[arg(long, value_name = "ID")]
        kernel: Vec<String>,
        /// Folder with targets.json (and report.json for the host operation counts).
        #[arg(long, value_name = "DIR", default_value = "fixsight-report")]
        report: PathBuf,
    },
    /// The accuracy/cost map: the whole job in point mode over a grid of
    /// configurations (smoothing, gradient operator, magnitude kind,
    /// non-maximum suppression, theta resolution), each with its worst one-to-one edge F1 against the
    /// full-f64 Canny on the demo scenes and natural photographs, its line
    /// accuracy on the demo sequence, its Cortex-M4 instructions per pixel
    /// (from targets.json) and its RAM; marks the Pareto front and names
    /// the recommended configuration for the part. Writes frontier.md,
    /// frontier.json and frontier.png.
    ///
    /// Configurations are named map-<smoothing>-<operator>-<magnitude>-t<theta
    /// bins>, with -interpolated at the end for the interpolating
    /// suppression (4 sectors otherwise): smoothing none, binomial3,
    /// binomial5, binomial7 or gauss7 with sobel and l1, l2_approx or
    /// l2_round at t32; binomial3 and gauss7 with scharr and l2_round;
    /// gauss7-sobel-l2_round and binomial3-sobel-l1 at t16; interpolated:
    /// binomial3-sobel-l2_approx, binomial5-sobel-l2_round,
    /// gauss7-sobel-l2_approx and gauss7-sobel-l2_round at t32, and
    /// gauss7-sobel-l2_round at t16 (the list the on-target harness
    /// measures). Four more, map-f32-gauss7-sobel-<fast|newton>-t32 with
    /// and without -interpolated, run the f32 point job of
    /// ports/cortex-m4f-float (a core with a single-precision FPU; costs
    /// from the image cortex-m4+cortex-m4f-float).
    ///
    /// Example: fixsight-verify frontier --clock-mhz 168 --fps 30
    /// (after `fixsight-verify targets`, which writes the costs into
    /// fixsight-report/targets.json)
    ///
    /// Not a safety function: the map ranks configurations of a job whose
    /// drift warning may end up steering a vehicle; a vehicle that can hurt
    /// people needs safety-rated sensing and control under the applicable
    /// standards (ISO 3691-4, IEC 61508, ISO 13849) and local rules.
    Frontier {
        /// Output folder; targets.json is read from here unless --targets.
        #[arg(long, value_name = "DIR", default_value = "fixsight-report")]
        out: PathBuf,
        /// Folder with targets.json (must hold one when given).
        #[arg(long, value_name = "DIR")]
        targets: Option<PathBuf>,
        /// Comma-separated configuration names (default: the whole grid).
        #[arg(long, value_name = "LIST")]
        configs: Option<String>,
        /// Images of the edge figures: all (demo scenes and natural
        /// photographs) or rendered (demo scenes only: a quick look).
        #[arg(long, default_value = "all", value_parser = cmd::frontier::Images::parse)]
        images: cmd::frontier::Images,
        /// Frames of the demo sequence for the line figures (1..=96).
        #[arg(long, default_value_t = 96)]
        frames: usize,
        /// Core clock of the part, MHz.
        #[arg(long, default_value_t = 168.0)]
        clock_mhz: f64,
        /// Frames per second.
        #[arg(long, default_value_t = 30.0)]
        fps: f64,
        /// Replace output files that already exist.
        #[arg(long)]
        overwrite: bool,
    },
    /// Compare a port's outputs for the golden inputs with the golden
    /// expected outputs, bit for bit: per vector pass, FAIL (first differing
    /// element x, y, channel, expected, got, and the count) or not claimed.
    ///
    /// The port writes, into --outputs, one file per expected image, named as
    /// that image's `file` in manifest.json, in the golden layout
    /// (golden/README.md); an optional claims.txt there lists the kernel ids
    /// or vector ids it implements (default: all). Exit status 1 when a
    /// claimed vector fails or nothing is claimed.
    ///
    /// Example: fixsight-verify port-check --vectors golden --outputs my-port-out/
    #[command(name = "port-check")]
    PortCheck {
        /// Golden-vector folder (default: `golden` in the current folder).
        #[arg(long, value_name = "DIR")]
        vectors: Option<PathBuf>,
        /// Folder with the port's output files (and optionally claims.txt).
        #[arg(long, value_name = "DIR")]
        outputs: PathBuf,
        /// Judge kernels whose contract is `tolerance` within their declared
        /// bound of our output instead of bit for bit (contracts from --report).
        #[arg(long)]
        tolerance: bool,
        /// report.json giving the contracts for --tolerance.
        #[arg(
            long,
            value_name = "FILE",
            default_value = "fixsight-report/report.json"
        )]
        report: PathBuf,
    },
    /// Check or regenerate the golden vectors.
    Golden {
        #[command(subcommand)]
        cmd: GoldenCmd,
    },
}

#[derive(Subcommand)]
enum GoldenCmd {
    /// Recompute every vector with the kernels and compare bit for bit.
    ///
    /// Example: fixsight-verify golden check --vectors golden
    Check {
        /// Golden-vector folder (default: `golden` in the current folder).
        #[arg(long, value_name = "DIR")]
        vectors: Option<PathBuf>,
    },
    /// Write chosen vectors as C data with a small runner (golden_check.c)
    /// for checking a port on your own board: golden_types.h,
    /// golden_vectors.h, golden_vectors.c, golden_check.c. Your port provides
    /// golden_port_run() and golden_port_print(), then calls
    /// golden_check_all().
    ///
    /// Example: fixsight-verify golden export-c --select filter.binomial5 --out my-port/golden/
    #[command(name = "export-c")]
    ExportC {
        /// Golden-vector folder (default: `golden` in the current folder).
        #[arg(long, value_name = "DIR")]
        vectors: Option<PathBuf>,
        /// Kernel id, vector id or family to export (repeatable; default all).
        #[arg(long, value_name = "NAME")]
        select: Vec<String>,
        /// Output folder.
        #[arg(long, value_name = "DIR", default_value = "fixsight-golden-c")]
        out: PathBuf,
        /// Replace the four files if they exist.
        #[arg(long)]
        overwrite: bool,
    },
    /// Extra vectors at your own frame size from a seed, for the row-loop
    /// kernels (filter presets, gradients, suppression, hysteresis, thinning,
    /// the edge chain): a demo-world floor scene rendered at WIDTHxHEIGHT,
    /// written as a golden folder for golden check, port-check and export-c.
    ///
    /// Example: fixsight-verify golden extra --seed 7 --width 640 --height 480 --out my-vectors/
    Extra {
        /// Seed of the scene (its layout is seed % 3 of the demo scenes).
        #[arg(long, default_value_t = 1)]
        seed: u64,
        /// Image width, 1..=4096.
        #[arg(long)]
        width: usize,
        /// Image height, 1..=4096 (at most 4 Mi pixels in all).
        #[arg(long)]
        height: usize,
        /// Output folder.
        #[arg(long, value_name = "DIR", default_value = "fixsight-golden-extra")]
        out: PathBuf,
        /// Replace the vectors in the folder if a manifest exists.
        #[arg(long)]
        overwrite: bool,
    },
    /// Regenerate the vectors from the current kernels.
    ///
    /// Example: fixsight-verify golden write --vectors my-vectors/
    Write {
        /// Golden-vector folder (default: `golden` in the current folder).
        #[arg(long, value_name = "DIR")]
        vectors: Option<PathBuf>,
        /// Replace existing vectors (needed when a manifest exists).
        #[arg(long)]
        overwrite: bool,
    },
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    fixsight_verify::progress::set_quiet(cli.quiet);
    match run(cli.cmd) {
        Ok(true) => ExitCode::SUCCESS,
        Ok(false) => ExitCode::FAILURE,
        Err(e) => {
            eprintln!("error: {e:#}");
            ExitCode::from(2)
        }
    }
}

fn run(command: Cmd) -> anyhow::Result<bool> {
    match command {
        Cmd::Grid {
            lens,
            grid_log2,
            frac_bits,
            out,
            name,
            overwrite,
        } => {
            println!(
                "{}",
                cmd::grid::run(&lens, grid_log2, frac_bits, &out, &name, overwrite)?
            );
            Ok(true)
        }
        Cmd::Calibrate {
            images,
            inner_corners: (cols, rows),
            square_mm,
            model,
            out,
            grid_log2,
            frac_bits,
            overwrite,
        } => {
            let req = cmd::calibrate::Request {
                images,
                board: fixsight_verify::calibrate::Board::new(cols, rows, square_mm)?,
                model,
                out,
                grid_log2,
                frac_bits,
                overwrite,
            };
            print!("{}", cmd::calibrate::run(&req)?);
            Ok(true)
        }
        Cmd::Sweep {
            kernel: None,
            out,
            overwrite,
            ..
        } => {
            print!("{}", cmd::sweep::run(&out, overwrite)?);
            println!("written to {}", fixsight_verify::files::shown_path(&out));
            Ok(true)
        }
        Cmd::Sweep {
            kernel: Some(kernel),
            param,
            values,
            input,
            lens,
            luma,
            out,
            overwrite,
        } => {
            let req = cmd::sweep::Request {
                kernel,
                param,
                values,
                input,
                lens,
                luma,
                out: out.clone(),
                overwrite,
            };
            print!("{}", cmd::sweep::run_param(&req)?);
            println!("written to {}", fixsight_verify::files::shown_path(&out));
            Ok(true)
        }
        Cmd::Report {
            out,
            vectors,
            lens,
            overwrite,
        } => cmd::report::run(&out, vectors, lens.as_deref(), overwrite),
        Cmd::Flash { out, overwrite } => cmd::flash::run(&out, overwrite),
        Cmd::Targets {
            out,
            vectors,
            lang,
            core,
            code_bytes,
            overwrite,
        } => cmd::targets::run(&out, vectors, lang.as_deref(), &core, code_bytes, overwrite),
        Cmd::Run {
            input,
            kernel,
            pipeline: _,
            lens,
            out,
            luma,
            overwrite,
        } => match (kernel, lens) {
            (Some(_), Some(_)) => Err(anyhow::anyhow!(
                "--lens goes with --pipeline (one kernel runs on the images as they are)"
            )),
            (Some(k), None) => cmd::run::run(&input, &k, &out, luma, overwrite),
            (None, lens) => cmd::run::pipeline::run(&input, lens.as_deref(), &out, luma, overwrite),
        },
        Cmd::Budget {
            width,
            height,
            fps,
            clock_mhz,
            core,
            kernel,
            report,
        } => cmd::budget::run(&report, &core, &kernel, width, height, fps, clock_mhz),
        Cmd::Frontier {
            out,
            targets,
            configs,
            images,
            frames,
            clock_mhz,
            fps,
            overwrite,
        } => {
            let req = cmd::frontier::Request {
                out,
                targets,
                configs,
                images,
                frames,
                clock_mhz,
                fps,
                overwrite,
            };
            print!("{}", cmd::frontier::run(&req)?);
            println!(
                "written to {}",
                fixsight_verify::files::shown_path(&req.out)
            );
            Ok(true)
        }
        Cmd::PortCheck {
            vectors,
            outputs,
            tolerance,
            report,
        } => cmd::port_check::run(vectors, &outputs, tolerance, &report),
        Cmd::Golden {
            cmd:
                GoldenCmd::ExportC {
                    vectors,
                    select,
                    out,
                    overwrite,
                },
        } => cmd::golden::export_c(vectors, &select, &out, overwrite),
        Cmd::Golden {
            cmd: GoldenCmd::Check { vectors },
        } => cmd::golden::check(vectors),
        Cmd::Golden {
            cmd:
                GoldenCmd::Extra {
                    seed,
                    width,
                    height,
                    out,
                    overwrite,
                },
        } => cmd::golden::extra(seed, width, height, &out, overwrite),
        Cmd::Golden {
            cmd: GoldenCmd::Write { vectors, overwrite },
        } => cmd::golden::write(vectors, overwrite),
    }
}
