//! `fixsight-verify`: the command-line front of the verification tool.

use clap::{Parser, Subcommand};
use fixsight_verify::{golden, golden_dir, report, scene};
use std::path::PathBuf;
use std::process::ExitCode;

#[derive(Parser)]
#[command(
    name = "fixsight-verify",
    version,
    about = "Verify the fixsight kernels against f64 references and golden vectors"
)]
struct Cli {
    #[command(subcommand)]
    cmd: Cmd,
}

#[derive(Subcommand)]
enum Cmd {
    /// Build a lens-undistortion mesh table from a lens file and write it as
    /// Rust source, C header and binary blob.
    Mesh {
        /// Lens file (`fixsight-lens 1` text format).
        #[arg(long)]
        lens: PathBuf,
        /// Mesh step as log2 of output pixels (2..=6).
        #[arg(long, default_value_t = 4)]
        step_log2: u32,
        /// Fractional bits of the coordinates (2..=10).
        #[arg(long, default_value_t = 5)]
        frac_bits: u32,
        /// Output folder.
        #[arg(long, default_value = "fixsight-mesh")]
        out: PathBuf,
        /// File stem and identifier stem of the outputs.
        #[arg(long, default_value = "lens_mesh")]
        name: String,
    },
    /// Calibrate a lens from photographs of a flat checkerboard: writes a
    /// lens file (`fixsight-lens 1`, its path on the last line), a report
    /// and a picture per image.
    Calibrate {
        /// Folder of .png/.jpg/.jpeg photographs of the board, one sensor size.
        #[arg(long)]
        images: PathBuf,
        /// Inner corners of the board as COLSxROWS (corners where four squares meet), e.g. 9x6.
        #[arg(long, value_parser = fixsight_verify::calibrate::command::parse_corners)]
        inner_corners: (usize, usize),
        /// Side of one square, millimetres.
        #[arg(long)]
        square_mm: f64,
        /// Distortion model: `brown` (radial k1..k3, tangential p1, p2) or `fisheye` (equidistant k1, k2).
        #[arg(long, default_value = "brown", value_parser = fixsight_verify::calibrate::ModelKind::parse)]
        model: fixsight_verify::calibrate::ModelKind,
        /// Output folder.
        #[arg(long, default_value = "fixsight-calibration")]
        out: PathBuf,
        /// Mesh step as log2 of output pixels (2..=6), for the report's mesh error.
        #[arg(long, default_value_t = 4)]
        step_log2: u32,
        /// Fractional bits (2..=10), for the report's mesh error.
        #[arg(long, default_value_t = 5)]
        frac_bits: u32,
        /// Replace existing output files.
        #[arg(long)]
        replace: bool,
    },
    /// Remap precision sweep (fractional bits x mesh step): table and plot.
    Sweep {
        /// Output folder.
        #[arg(long, default_value = "fixsight-sweep")]
        out: PathBuf,
    },
    /// Run every kernel on the built-in demo scenes, check every contract and
    /// golden vector, print a table and write report.json.
    Report {
        /// Output folder.
        #[arg(long, default_value = "fixsight-report")]
        out: PathBuf,
        /// Golden-vector folder (default: ./golden, else the repository's).
        #[arg(long)]
        golden: Option<PathBuf>,
    },
    /// Build the firmware, run every golden vector on emulated Cortex-M0/M3/M4
    /// and RV32 cores (QEMU), write targets.json.
    Targets {
        /// Output folder.
        #[arg(long, default_value = "fixsight-report")]
        out: PathBuf,
        /// Golden-vector folder (default: ./golden, else the repository's).
        #[arg(long)]
        golden: Option<PathBuf>,
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
    Check {
        /// Golden-vector folder (default: ./golden, else the repository's).
        #[arg(long)]
        dir: Option<PathBuf>,
    },
    /// Regenerate the vectors from the current kernels.
    Write {
        /// Golden-vector folder (default: ./golden, else the repository's).
        #[arg(long)]
        dir: Option<PathBuf>,
        /// Replace existing vectors (needed when a manifest exists).
        #[arg(long)]
        overwrite: bool,
    },
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(cli.cmd) {
        Ok(true) => ExitCode::SUCCESS,
        Ok(false) => ExitCode::FAILURE,
        Err(e) => {
            eprintln!("error: {e:#}");
            ExitCode::from(2)
        }
    }
}

fn run(cmd: Cmd) -> anyhow::Result<bool> {
    match cmd {
        Cmd::Mesh {
            lens,
            step_log2,
            frac_bits,
            out,
            name,
        } => {
            println!(
                "{}",
                fixsight_verify::remap::mesh_command(&lens, step_log2, frac_bits, &out, &name)?
            );
            Ok(true)
        }
        Cmd::Calibrate {
            images,
            inner_corners: (cols, rows),
            square_mm,
            model,
            out,
            step_log2,
            frac_bits,
            replace,
        } => {
            use fixsight_verify::calibrate::{command, Board};
            let req = command::Request {
                images,
                board: Board::new(cols, rows, square_mm)?,
                model,
                out,
                step_log2,
                frac_bits,
                replace,
            };
            print!("{}", command::run(&req)?);
            Ok(true)
        }
        Cmd::Sweep { out } => {
            print!("{}", fixsight_verify::remap::sweep_command(&out)?);
            println!("written to {}", out.display());
            Ok(true)
        }
        Cmd::Report { out, golden } => {
            let r = report::run(&out, &golden_dir(golden))?;
            print!("{}", report::table(&r));
            println!("report written to {}", out.join("report.json").display());
            Ok(r.pass)
        }
        Cmd::Targets { out, golden } => fixsight_verify::targets::run(&out, &golden_dir(golden)),
        Cmd::Golden {
            cmd: GoldenCmd::Check { dir },
        } => {
            let dir = golden_dir(dir);
            let s = golden::check(&dir).map_err(|e| {
                anyhow::anyhow!("{e}\nhint: regenerate with `fixsight-verify golden write --overwrite` only if the kernels changed on purpose")
            })?;
            for (id, why) in &s.failures {
                println!("FAIL {id}: {why}");
            }
            println!(
                "{}/{} golden vectors reproduced bit for bit ({})",
                s.passed,
                s.vectors,
                dir.display()
            );
            Ok(s.failures.is_empty() && s.passed == s.vectors)
        }
        Cmd::Golden {
            cmd: GoldenCmd::Write { dir, overwrite },
        } => {
            let dir = golden_dir(dir);
            let cases = golden::all_cases(&scene::demo_scenes());
            let m = golden::write(&dir, &cases, overwrite)?;
            println!(
                "wrote {} golden vectors to {}",
                m.vectors.len(),
                dir.display()
            );
            Ok(true)
        }
    }
}
