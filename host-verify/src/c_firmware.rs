//! The C firmware of `fixsight-verify targets`: every golden vector through
//! the C ABI on the emulated Cortex-M4 (the Rust harness's board,
//! `mps2-an386`), one build and one QEMU run.
//!
//! 1. `cargo build -p fixsight-c --profile c-release --target
//!    thumbv7em-none-eabihf` gives `libfixsight_c.a`;
//! 2. [`crate::golden_c::c_source`] turns the golden folder into C;
//! 3. `arm-none-eabi-gcc` (C99, `-O2`, hard-float ABI like the library)
//!    compiles `targets/c-firmware/firmware.c` (start-up, semihosting,
//!    measurement markers), `c-abi/c/golden_run.c` and
//!    `c-abi/c/bad_input.c`, and links them with the library and newlib's
//!    `libc` (for `memcpy`, `memset`, `strcmp`) under
//!    `targets/c-firmware/link.ld`;
//! 4. QEMU runs it once with the instruction-window plugin; the console
//!    protocol is the Rust harness's (`vec`, `done`), plus one `bad` line
//!    per bad-input case and `badinput cases N failed F`.
//!
//! Figures: instructions per output pixel over each kernel id's golden
//! vectors (window minus the empty-call window, as for the Rust
//! firmware), the stack high-water mark by painting, and code bytes as the
//! `.text` growth of an image whose runner keeps only that kernel id's
//! dispatcher (`-DGOLDEN_KEEP=K_<family>_<name>`) over one that keeps none
//! (`-DGOLDEN_KEEP=-1`), both without the bad-input cases (which call
//! every function): link-only images, not run. The archive size and
//! the growth of `.text + .rodata` of the full image over the `none` image
//! go to `c_library`.

use crate::targets::{
    parse_console, run_qemu, symbol, text_bytes, CLibrary, KernelFigures, Target, TargetResult,
};
use anyhow::{bail, Context, Result};
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::Command;

/// The cross compiler (Debian `gcc-arm-none-eabi`).
pub const CC: &str = "arm-none-eabi-gcc";

/// The core the C firmware runs on.
const TARGET: Target = Target {
    name: "cortex-m4",
    triple: "thumbv7em-none-eabihf",
    krate: "c-firmware",
    bin: "fixsight-c-firmware.elf",
    qemu: "qemu-system-arm",
    machine: &["-M", "mps2-an386", "-cpu", "cortex-m4"],
};

/// Compiler flags for the Cortex-M4 with the hard-float ABI of
/// `thumbv7em-none-eabihf`.
const CFLAGS: &[&str] = &[
    "-std=c99",
    "-O2",
    "-mcpu=cortex-m4",
    "-mthumb",
    "-mfloat-abi=hard",
    "-mfpu=fpv4-sp-d16",
    "-ffunction-sections",
    "-fdata-sections",
    "-Wall",
    "-Wextra",
    "-Werror",
];

/// Stack budget of each whole job through C, in bytes: the high-water
/// mark over the kernel id's golden vectors (the runner's frames
/// included) may not exceed it, or the run fails. About 52 KB of job
/// storage and this much stack leave room for the rest of a firmware on a
/// part with 64 KiB of RAM (a round figure, common practice, no source).
/// Measured at `9b39bcf`: 2 588 bytes (point job) and 3 084 (image job);
/// before `fxs_*_job_init` stopped building the job on the stack, 25 164
/// and 31 172 (see `targets/README.md`).
pub const JOB_STACK_BUDGET: u64 = 4096;

/// The kernel ids held to [`JOB_STACK_BUDGET`].
const BUDGETED: [&str; 2] = ["pipeline.point_job", "pipeline.image_job"];

/// A problem per budgeted kernel id whose stack figure exceeds
/// [`JOB_STACK_BUDGET`]; an id that did not run (a golden folder without
/// it) has nothing to check.
fn over_budget(stack: &BTreeMap<&str, u64>) -> Vec<String> {
    BUDGETED
        .iter()
        .filter_map(|id| {
            let used = *stack.get(id)?;
            (used > JOB_STACK_BUDGET).then(|| {
                format!(
                    "cortex-m4 (C): {id} used {used} bytes of stack, over its budget of \
                     {JOB_STACK_BUDGET} (c_firmware::JOB_STACK_BUDGET)"
                )
            })
        })
        .collect()
}

fn run_cmd(cmd: &mut Command, what: &str) -> Result<()> {
    let out = cmd.output().with_context(|| format!("running {what}"))?;
    if !out.status.success() {
        bail!(
            "{what} failed:\n{}{}",
            String::from_utf8_lossy(&out.stdout),
            String::from_utf8_lossy(&out.stderr)
        );
    }
    Ok(())
}

/// Builds the M4 static library; returns its path.
fn build_library(root: &Path) -> Result<PathBuf> {
    run_cmd(
        Command::new("cargo")
            .args([
                "build",
                "--quiet",
                "-p",
                "fixsight-c",
                "--profile",
                "c-release",
                "--target",
                TARGET.triple,
            ])
            .current_dir(root)
            .env_remove("RUSTFLAGS")
            .env_remove("CARGO_ENCODED_RUSTFLAGS"),
        "cargo build -p fixsight-c",
    )?;
    Ok(root
        .join("target")
        .join(TARGET.triple)
        .join("c-release/libfixsight_c.a"))
}

/// Sum of the sizes of `.text` and `.rodata`.
fn text_rodata(elf: &Path) -> Result<u64> {
    let out = Command::new(crate::targets::llvm_tool("llvm-size")?)
        .arg("-A")
        .arg(elf)
        .output()?;
    Ok(String::from_utf8_lossy(&out.stdout)
        .lines()
        .filter_map(|l| {
            let mut it = l.split_whitespace();
            let name = it.next()?;
            let size: u64 = it.next()?.parse().ok()?;
            matches!(name, ".text" | ".rodata").then_some(size)
        })
        .sum())
}

/// Compiles and links; `keep` selects a code-size image.
struct Builder {
    root: PathBuf,
    dir: PathBuf,
    lib: PathBuf,
    /// Objects that do not change between images.
    fixed: Vec<PathBuf>,
}

impl Builder {
    fn compile(&self, src: &Path, obj: &Path, defines: &[String]) -> Result<()> {
        let fw = self.root.join("targets/c-firmware");
        run_cmd(
            Command::new(CC)
                .args(CFLAGS)
                .args(defines)
                .arg("-I")
                .arg(self.root.join("c-abi/include"))
                .arg("-I")
                .arg(self.root.join("c-abi/c"))
                .arg("-I")
                .arg(&fw)
                .arg("-c")
                .arg(src)
                .arg("-o")
                .arg(obj),
            &format!("{CC} {}", src.display()),
        )
    }

    /// The run image (`size` = None), or a code-size image keeping every
    /// kernel id (`Some(None)`) or one (`Some(Some("K_..."))`, `"-1"` none).
    fn image(&self, size: Option<Option<&str>>, name: &str) -> Result<PathBuf> {
        let mut defines = vec![format!("-DGOLDEN_ARCH=\"{}\"", TARGET.triple)];
        let mut objects = self.fixed.clone();
        if let Some(keep) = size {
            defines.push("-DGOLDEN_SIZE_IMAGE".into());
            defines.push("-Wno-unused-function".into());
            if let Some(k) = keep {
                defines.push(format!("-DGOLDEN_KEEP={k}"));
            }
        } else {
            objects.push(self.dir.join("bad_input.o"));
        }
        let runner = self.dir.join(format!("golden_run.{name}.o"));
        self.compile(&self.root.join("c-abi/c/golden_run.c"), &runner, &defines)?;
        let elf = self.dir.join(format!("{name}.elf"));
        run_cmd(
            Command::new(CC)
                .args(CFLAGS)
                .args(["-nostartfiles", "-T"])
                .arg(self.root.join("targets/c-firmware/link.ld"))
                .arg("-Wl,--gc-sections")
                .arg(&runner)
                .args(&objects)
                .arg(&self.lib)
                .args(["-lc", "-lgcc", "-o"])
                .arg(&elf),
            &format!("linking {}", elf.display()),
        )?;
        Ok(elf)
    }
}

/// Builds, runs once and measures the C firmware.
pub fn run(
    root: &Path,
    golden: &Path,
    plugin: &Path,
    logs: &Path,
) -> Result<(TargetResult, Vec<String>)> {
    let lib = build_library(root)?;
    let dir = root.join("targets/c-firmware/target");
    std::fs::create_dir_all(&dir)?;
    let vectors = dir.join("golden_vectors.c");
    std::fs::write(&vectors, crate::golden_c::c_source(golden)?)?;
    let mut b = Builder {
        root: root.to_path_buf(),
        dir: dir.clone(),
        lib: lib.clone(),
        fixed: Vec::new(),
    };
    let defines = [format!("-DGOLDEN_ARCH=\"{}\"", TARGET.triple)];
    for (src, obj) in [
        (root.join("targets/c-firmware/firmware.c"), "firmware.o"),
        (root.join("c-abi/c/bad_input.c"), "bad_input.o"),
        (vectors.clone(), "golden_vectors.o"),
    ] {
        let o = dir.join(obj);
        b.compile(&src, &o, &defines)?;
        if obj != "bad_input.o" {
            b.fixed.push(o);
        }
    }
    let elf = b.image(None, TARGET.bin.trim_end_matches(".elf"))?;

    let log = logs.join("cortex-m4-c.plugin.txt");
    let r = run_qemu(&TARGET, &elf, plugin, &log, None)?;
    std::fs::write(logs.join("cortex-m4-c.console.txt"), &r.console)?;
    let mut problems = Vec::new();
    let (cal, calls, (vectors_run, passed)) =
        parse_console(&r.console).with_context(|| format!("C firmware: status {}", r.status))?;
    for c in &calls {
        if c.status != "pass" {
            problems.push(format!("cortex-m4 (C): {}", c.line));
        }
    }
    let bad_lines: Vec<&str> = r
        .console
        .lines()
        .filter(|l| l.starts_with("bad ") && !l.ends_with(" pass"))
        .collect();
    for l in &bad_lines {
        problems.push(format!("cortex-m4 (C): {l}"));
    }
    let bad_summary = r.console.lines().find(|l| l.starts_with("badinput "));
    if bad_summary.is_none() {
        problems.push("cortex-m4 (C): no bad-input summary".into());
    }
    let all_ok = passed == vectors_run && bad_lines.is_empty() && bad_summary.is_some();
    if (r.status == 0) != all_ok {
        problems.push(format!(
            "cortex-m4 (C): exit status {} disagrees with {passed}/{vectors_run} vectors and the bad inputs",
            r.status
        ));
    }
    if r.status != 0 {
        problems.push(format!("cortex-m4 (C): firmware exit status {}", r.status));
    }
    // The markers must be the C firmware's.
    symbol(&elf, "fixsight_window_open")?;
    let base = *r
        .windows
        .get(cal)
        .context("C firmware: no calibration window")?;

    let none = b.image(Some(Some("-1")), "none")?;
    let every = b.image(Some(None), "every")?;
    let (text_none, all_none) = (text_bytes(&none)?, text_rodata(&none)?);
    let mut ids: Vec<String> = Vec::new();
    for c in &calls {
        if !ids.contains(&c.kernel) {
            ids.push(c.kernel.clone());
        }
    }
    let mut kernels = Vec::new();
    let mut stack: BTreeMap<&str, u64> = BTreeMap::new();
    for c in &calls {
        let e = stack.entry(c.kernel.as_str()).or_default();
        *e = (*e).max(c.stack);
    }
    problems.extend(over_budget(&stack));
    for id in &ids {
        let token = format!("K_{}", id.replace('.', "_"));
        let with = text_bytes(&b.image(Some(Some(&token)), &token)?)?;
        let (mut n, mut px) = (0u64, 0u64);
        for c in calls.iter().filter(|c| &c.kernel == id) {
            if let Some(w) = c.window.and_then(|w| r.windows.get(w)) {
                n += w.saturating_sub(base);
                px += c.px;
            }
        }
        let ipx = if px == 0 { 0.0 } else { n as f64 / px as f64 };
        kernels.push(KernelFigures {
            name: id.clone(),
            instr_per_px: (ipx * 100.0).round() / 100.0,
            code_bytes: with.saturating_sub(text_none),
            stack_bytes: stack[id.as_str()],
            sequence: None,
        });
    }
    let rel = lib
        .strip_prefix(root)
        .unwrap_or(&lib)
        .to_string_lossy()
        .replace('\\', "/");
    let c_library = CLibrary {
        archive: rel,
        archive_bytes: std::fs::metadata(&lib)?.len(),
        firmware_bytes_added: text_rodata(&every)?.saturating_sub(all_none),
    };
    b.fixed.clear();
    Ok((
        TargetResult {
            name: TARGET.name.into(),
            triple: TARGET.triple.into(),
            vectors: vectors_run,
            passed,
            kernels,
            lang: "c".into(),
            c_library: Some(c_library),
            port: None,
        },
        problems,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn job_stack_over_the_budget_is_a_problem() {
        let mut stack = BTreeMap::from([("pipeline.point_job", JOB_STACK_BUDGET)]);
        assert!(over_budget(&stack).is_empty()); // at the budget; image job not run
        stack.insert("pipeline.image_job", JOB_STACK_BUDGET + 1);
        stack.insert("filter.binomial3", 10 * JOB_STACK_BUDGET); // not budgeted
        let p = over_budget(&stack);
        assert_eq!(p.len(), 1);
        assert!(p[0].contains("pipeline.image_job used 4097 bytes"), "{p:?}");
    }
}
