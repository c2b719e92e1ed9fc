//! On-target conformance under QEMU: `fixsight-verify targets`.
//!
//! Builds the firmware under `targets/` for each core, runs it in QEMU
//! system emulation, and collects what it reports over semihosting:
//!
//! | name | triple | QEMU |
//! |---|---|---|
//! | `cortex-m4` | `thumbv7em-none-eabihf` | `qemu-system-arm -M mps2-an386` |
//! | `cortex-m3` | `thumbv7m-none-eabi` | `qemu-system-arm -M mps2-an385` |
//! | `cortex-m0` | `thumbv6m-none-eabi` | `qemu-system-arm -M mps2-an385` (ARMv6-M code on the M3 model) |
//! | `rv32imc` | `riscv32imc-unknown-none-elf` | `qemu-system-riscv32 -M virt -bios none` |
//!
//! Per target it records:
//!
//! * **vectors / passed** — every golden vector run on the core, outputs
//!   compared byte for byte on the target; the firmware's exit status (0
//!   only if all are bit-exact) must agree with the lines it printed.
//! * **instructions per output pixel** — exact guest instruction counts from
//!   the TCG plugin `targets/qemu-plugin/insn_window.c`: every executed
//!   instruction adds 1 to a counter, and the counter is read on entry to the
//!   firmware's `fixsight_window_open` and `fixsight_window_close` markers.
//!   The marker cost, measured with a no-op call through the same code path
//!   (window 0), is subtracted. Figures come from the 320 x 240 bench stages
//!   of `targets/harness/src/bench.rs`; a kernel id with no bench stage uses
//!   its golden vectors (total instructions / total output pixels). Every
//!   image is run twice and all counts must agree, or the run fails.
//! * **code bytes** — by default ([`CodeBytes::Graph`]) from the image
//!   that ran the vectors: the functions reachable from the kernel id's
//!   dispatch function that the harness's own code does not reach, summed
//!   ([`crate::codebytes`]). With `--code-bytes rebuild`
//!   ([`CodeBytes::Rebuild`]) the earlier method: growth of the `.text`
//!   section of an image in which only this kernel id is dispatched (all
//!   other vectors go to a no-op), over an image in which none is (see
//!   `targets/harness/build.rs`), one build per kernel id and core.
//! * **stack bytes** — high-water mark by stack painting: 16 KiB below the
//!   caller's stack pointer are filled with a pattern before each measured
//!   call and scanned after it; the figure is the deepest byte written,
//!   measured from the caller's stack pointer (it includes the dispatch
//!   function's frame). Per kernel id, the maximum over all its calls.
//!
//! Results go to `targets.json` (schema 1) in the output folder, with the
//! console and plugin logs of each run beside it under `targets-logs/`.

use crate::target_sequence::{OnTargetSequence, STAGE};
use anyhow::{anyhow, bail, Context, Result};
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};
use std::process::Command;

/// File name of the results in the output folder.
pub const TARGETS_JSON: &str = "targets.json";
/// Folder of the console and plugin logs, inside the output folder.
pub const LOGS_DIR: &str = "targets-logs";

/// Every Rust target the firmware needs.
pub const TRIPLES: [&str; 4] = [
    "thumbv7em-none-eabihf",
    "thumbv7m-none-eabi",
    "thumbv6m-none-eabi",
    "riscv32imc-unknown-none-elf",
];

/// Seconds one QEMU run may take before it is killed (a semihosting call
/// without `-semihosting-config` hangs).
const QEMU_TIMEOUT_S: &str = "600";
/// Seconds one firmware build may take.
const BUILD_TIMEOUT_S: &str = "900";

/// One emulated core.
#[derive(Debug, Clone, Copy)]
pub struct Target {
    /// Short name used in the table and JSON.
    pub name: &'static str,
    /// Rust target triple.
    pub triple: &'static str,
    /// Firmware crate folder under `targets/`.
    pub krate: &'static str,
    /// Binary name of that crate.
    pub bin: &'static str,
    /// QEMU executable.
    pub qemu: &'static str,
    /// Board and CPU arguments.
    pub machine: &'static [&'static str],
}

/// The four cores.
pub const TARGETS: [Target; 4] = [
    Target {
        name: "cortex-m4",
        triple: "thumbv7em-none-eabihf",
        krate: "cortex-m",
        bin: "fixsight-fw-cortex-m",
        qemu: "qemu-system-arm",
        machine: &["-M", "mps2-an386", "-cpu", "cortex-m4"],
    },
    Target {
        name: "cortex-m3",
        triple: "thumbv7m-none-eabi",
        krate: "cortex-m",
        bin: "fixsight-fw-cortex-m",
        qemu: "qemu-system-arm",
        machine: &["-M", "mps2-an385", "-cpu", "cortex-m3"],
    },
    Target {
        name: "cortex-m0",
        triple: "thumbv6m-none-eabi",
        krate: "cortex-m",
        bin: "fixsight-fw-cortex-m",
        qemu: "qemu-system-arm",
        machine: &["-M", "mps2-an385", "-cpu", "cortex-m3"],
    },
    Target {
        name: "rv32imc",
        triple: "riscv32imc-unknown-none-elf",
        krate: "riscv32",
        bin: "fixsight-fw-riscv32",
        qemu: "qemu-system-riscv32",
        machine: &["-M", "virt", "-bios", "none"],
    },
];

/// How `targets` measures the code bytes of a kernel id (`--code-bytes`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum CodeBytes {
    /// From the reference graph of the image that ran the vectors (module
    /// `codebytes`); no extra build.
    Graph,
    /// `.text` growth of a code-size image per kernel id over the `none`
    /// image: one more firmware build per kernel id and core.
    Rebuild,
}

/// A port (`ports/<name>/`, a crate with optimised variants of kernels)
/// that a core's firmware can take in place of the kernel crate for the
/// kernel ids of its `claims.txt`: built as one more image of `core` with
/// the firmware feature `port-<name>`, run over every golden vector like
/// the plain image, and reported as one more entry of `targets.json` with
/// the figures of the claimed ids and of the ids it adds.
#[derive(Debug, Clone, Copy)]
pub struct Port {
    /// Folder under `ports/` and suffix of the firmware feature.
    pub name: &'static str,
    /// Name of the core in [`TARGETS`] the port is written for.
    pub core: &'static str,
    /// Ids the port's image adds to the harness's table for bench stages
    /// only (no golden vector names them: the port is bit-exact to no
    /// kernel there), reported beside its claims.
    pub adds: &'static [&'static str],
}

impl Port {
    /// Name of the port's image, `<core>+<name>` (`--core`, log files).
    pub fn image(&self) -> String {
        format!("{}+{}", self.core, self.name)
    }
}

/// The ports in the repository.
pub const PORTS: [Port; 2] = [
    Port {
        name: "cortex-m4-dsp",
        core: "cortex-m4",
        adds: &[],
    },
    // The f32 point job for the Cortex-M4F (`ports/cortex-m4f-float/`):
    // claims nothing, adds the bench stages `map-f32-...` of
    // `float.point_job` (the accuracy/cost map reads them).
    Port {
        name: "cortex-m4f-float",
        core: "cortex-m4",
        adds: &["float.point_job"],
    },
];

/// A port and the kernel ids it claims, for one run.
struct PortRun<'a> {
    port: &'a Port,
    /// Kernel ids of `claims.txt`, in file order of the set, then the ids
    /// the port adds ([`Port::adds`]).
    claims: Vec<String>,
    /// `port-<name>`.
    feature: String,
}

impl PortRun<'_> {
    /// Reads the port's `claims.txt`; every entry must be a kernel id of
    /// the manifest (a vector id would claim part of a kernel, which a
    /// firmware feature cannot do).
    fn new<'p>(root: &Path, golden: &Path, port: &'p Port) -> Result<PortRun<'p>> {
        let manifest = crate::golden::read_manifest(golden)?;
        let dir = root.join("ports").join(port.name);
        let claims = crate::cmd::port_check::read_claims(&dir, &manifest.vectors)?
            .ok_or_else(|| anyhow!("{}: no claims.txt", dir.display()))?;
        let kernels: BTreeSet<&str> = manifest.vectors.iter().map(|v| v.kernel.as_str()).collect();
        if let Some(c) = claims.iter().find(|c| !kernels.contains(c.as_str())) {
            bail!(
                "{}/claims.txt: `{c}` is not a kernel id; a port claims whole kernels",
                dir.display()
            );
        }
        Ok(PortRun {
            port,
            claims: claims
                .into_iter()
                .chain(port.adds.iter().map(|a| a.to_string()))
                .collect(),
            feature: format!("port-{}", port.name),
        })
    }
}

/// `targets.json`.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct TargetsReport {
    /// Always 1.
    pub schema: u32,
    /// One entry per core.
    pub targets: Vec<TargetResult>,
}

/// Results of one core.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct TargetResult {
    /// Short name (`cortex-m4`, ...).
    pub name: String,
    /// Rust target triple.
    pub triple: String,
    /// Golden vectors run.
    pub vectors: usize,
    /// Golden vectors reproduced bit for bit.
    pub passed: usize,
    /// Per-kernel figures.
    pub kernels: Vec<KernelFigures>,
    /// Language of the firmware: `"rust"` (the kernels called directly) or
    /// `"c"` (through the C ABI, `targets/c-firmware`).
    #[serde(default = "rust_lang")]
    pub lang: String,
    /// The static library a C firmware links, and what it adds.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub c_library: Option<CLibrary>,
    /// The port (`ports/<name>/`) this firmware took in place of the
    /// kernel crate for the ids of `kernels`; `None` for the kernel crate.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub port: Option<String>,
}

fn rust_lang() -> String {
    "rust".into()
}

/// Size figures of the C ABI's static library on one core.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct CLibrary {
    /// Path of the archive, relative to the repository.
    pub archive: String,
    /// Bytes of the archive file (`libfixsight_c.a`).
    pub archive_bytes: u64,
    /// Growth of `.text` + `.rodata` of the C firmware that dispatches
    /// every kernel id over the same firmware dispatching none (code-size
    /// images without the bad-input cases): what the library (and the
    /// small C dispatchers) add to a firmware image.
    pub firmware_bytes_added: u64,
}

/// Figures of one kernel (one bench stage, or one kernel id without one).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct KernelFigures {
    /// `<kernel id>` or `<kernel id>/<bench stage>`.
    pub name: String,
    /// Guest instructions per output pixel.
    pub instr_per_px: f64,
    /// `.text` bytes the kernel id adds to the firmware.
    pub code_bytes: u64,
    /// Stack high-water mark of the kernel id, bytes.
    pub stack_bytes: u64,
    /// For the demo sequence's entries (`<kernel id>/demo_sequence`,
    /// [`crate::target_sequence`]): the per-frame figures.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sequence: Option<SequenceFigures>,
}

/// Per-frame figures of a kernel run over the demo sequence on a core.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct SequenceFigures {
    /// Frames run.
    pub frames: usize,
    /// Frames whose record is bit-identical to the host's.
    pub bit_exact_frames: usize,
    /// Fewest instructions per pixel of one frame.
    pub instr_per_px_min: f64,
    /// Most instructions per pixel of one frame.
    pub instr_per_px_max: f64,
}

/// What ran on a core, for tables: the firmware's language, and the port
/// it took in place of the kernel crate if any (`rust`, `c`,
/// `rust, port cortex-m4-dsp`), from one entry of `targets.json`.
pub fn firmware_of(t: &serde_json::Value) -> String {
    let lang = t["lang"].as_str().unwrap_or("rust");
    match t["port"].as_str() {
        Some(p) => format!("{lang}, port {p}"),
        None => lang.to_string(),
    }
}

/// Reads `targets.json` from `dir` if present and well-formed (for the
/// report).
pub fn load_targets_json(dir: &Path) -> Option<TargetsReport> {
    let text = crate::files::read_text(&dir.join(TARGETS_JSON)).ok()?;
    let r: TargetsReport = serde_json::from_str(&text).ok()?;
    (r.schema == 1).then_some(r)
}

/// Repository root (the folder holding `targets/`).
pub(crate) fn repo_root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("..")
}

/// `llvm-size` / `llvm-nm` from the rustup `llvm-tools` component.
pub(crate) fn llvm_tool(name: &str) -> Result<PathBuf> {
    let out = Command::new("rustc")
        .args(["--print", "sysroot"])
        .output()?;
    let sysroot = String::from_utf8_lossy(&out.stdout).trim().to_string();
    let out = Command::new("rustc").arg("-vV").output()?;
    let host = String::from_utf8_lossy(&out.stdout)
        .lines()
        .find_map(|l| l.strip_prefix("host: ").map(str::to_string))
        .ok_or_else(|| anyhow!("cannot read the host triple from `rustc -vV`"))?;
    let p = Path::new(&sysroot)
        .join("lib/rustlib")
        .join(host)
        .join("bin")
        .join(name);
    if p.exists() {
        Ok(p)
    } else {
        bail!(
            "{} not found; install it with: rustup component add llvm-tools",
            p.display()
        )
    }
}

/// Checks every outside tool and prints the exact install command for what
/// is missing.
pub fn preflight() -> Result<()> {
    let mut missing = Vec::new();
    for q in ["qemu-system-arm", "qemu-system-riscv32"] {
        if Command::new(q).arg("--version").output().is_err() {
            missing.push(format!(
                "{q} not found; install it with: apt-get install -y --no-install-recommends qemu-system-arm qemu-system-misc"
            ));
        }
    }
    if Command::new("timeout").arg("--version").output().is_err() {
        missing.push("timeout not found; install it with: apt-get install -y coreutils".into());
    }
    if Command::new(crate::c_firmware::CC)
        .arg("--version")
        .output()
        .is_err()
    {
        missing.push(format!("{} not found (builds the C firmware); install it with: apt-get install -y --no-install-recommends gcc-arm-none-eabi libnewlib-arm-none-eabi", crate::c_firmware::CC));
    }
    if Command::new("gcc").arg("--version").output().is_err() {
        missing.push("gcc not found (builds the QEMU plugin); install it with: apt-get install -y --no-install-recommends gcc libc6-dev".into());
    }
    match Command::new("rustup")
        .args(["target", "list", "--installed"])
        .output()
    {
        Ok(o) => {
            let have = String::from_utf8_lossy(&o.stdout).to_string();
            let absent: Vec<&str> = TRIPLES
                .iter()
                .copied()
                .filter(|t| !have.lines().any(|l| l.trim() == *t))
                .collect();
            if !absent.is_empty() {
                missing.push(format!(
                    "rust targets missing: {}; install them with: rustup target add {}",
                    absent.join(" "),
                    TRIPLES.join(" ")
                ));
            }
        }
        Err(_) => {
            missing.push("rustup not found; the firmware needs rustup-managed targets".into())
        }
    }
    for t in ["llvm-size", "llvm-nm"] {
        if let Err(e) = llvm_tool(t) {
            missing.push(e.to_string());
        }
    }
    if missing.is_empty() {
        Ok(())
    } else {
        bail!("on-target checks cannot run:\n  {}", missing.join("\n  "))
    }
}

/// Compiles the instruction-window plugin into `targets/qemu-plugin/target/`.
pub(crate) fn build_plugin(root: &Path) -> Result<PathBuf> {
    let dir = root.join("targets/qemu-plugin");
    let out = dir.join("target/libinsn_window.so");
    std::fs::create_dir_all(out.parent().unwrap())?;
    let st = Command::new("gcc")
        .args([
            "-shared", "-fPIC", "-O2", "-Wall", "-Wextra", "-Werror", "-o",
        ])
        .arg(&out)
        .arg(dir.join("insn_window.c"))
        .status()
        .context("running gcc")?;
    if !st.success() {
        bail!("building the QEMU plugin failed");
    }
    Ok(out)
}

/// Builds one firmware image; `only` selects a code-size image, `feature`
/// a firmware feature (a port).
fn build_firmware(
    root: &Path,
    t: &Target,
    golden: &Path,
    only: Option<&str>,
    feature: Option<&str>,
) -> Result<PathBuf> {
    let dir = root.join("targets").join(t.krate);
    let mut cmd = Command::new("timeout");
    cmd.args([
        BUILD_TIMEOUT_S,
        "cargo",
        "build",
        "--release",
        "--quiet",
        "--target",
        t.triple,
    ])
    .current_dir(&dir)
    .env_remove("CARGO_TARGET_DIR")
    .env_remove("RUSTFLAGS")
    .env_remove("CARGO_BUILD_RUSTFLAGS")
    .env_remove("CARGO_ENCODED_RUSTFLAGS")
    .env("FIXSIGHT_GOLDEN_DIR", golden);
    if let Some(f) = feature {
        cmd.args(["--features", f]);
    }
    match only {
        Some(k) => cmd.env("FIXSIGHT_ONLY_KERNELS", k),
        None => cmd.env_remove("FIXSIGHT_ONLY_KERNELS"),
    };
    let st = cmd.status().context("running cargo")?;
    if !st.success() {
        bail!(
            "building the {} firmware for {} failed ({st})",
            t.krate,
            t.triple
        );
    }
    Ok(dir
        .join("target")
        .join(t.triple)
        .join("release")
        .join(t.bin))
}

/// Address of a symbol in an ELF file.
pub(crate) fn symbol(elf: &Path, name: &str) -> Result<u64> {
    let out = Command::new(llvm_tool("llvm-nm")?).arg(elf).output()?;
    String::from_utf8_lossy(&out.stdout)
        .lines()
        .find_map(|l| {
            let mut it = l.split_whitespace();
            let (a, _, n) = (it.next()?, it.next()?, it.next()?);
            (n == name)
                .then(|| u64::from_str_radix(a, 16).ok())
                .flatten()
        })
        .ok_or_else(|| anyhow!("symbol {name} not found in {}", elf.display()))
}

/// Size of the `.text` section.
pub(crate) fn text_bytes(elf: &Path) -> Result<u64> {
    let out = Command::new(llvm_tool("llvm-size")?)
        .arg("-A")
        .arg(elf)
        .output()?;
    String::from_utf8_lossy(&out.stdout)
        .lines()
        .find_map(|l| {
            let mut it = l.split_whitespace();
            (it.next()? == ".text")
                .then(|| it.next()?.parse().ok())
                .flatten()
        })
        .ok_or_else(|| anyhow!("no .text section in {}", elf.display()))
}

/// What one QEMU run printed.
#[derive(Debug, Clone, Default)]
pub struct Run {
    /// Exit status of QEMU (the firmware's, through semihosting).
    pub status: i32,
    /// Console text.
    pub console: String,
    /// Plugin log text.
    pub windows: Vec<u64>,
    /// Plugin log verbatim.
    pub plugin_log: String,
}

/// Runs `elf` on `t`'s emulator with the counting plugin; `sequence`
/// names a demo-sequence file on the firmware's semihosting command line
/// ([`crate::target_sequence`]).
pub(crate) fn run_qemu(
    t: &Target,
    elf: &Path,
    plugin: &Path,
    log: &Path,
    sequence: Option<&Path>,
) -> Result<Run> {
    let open = symbol(elf, "fixsight_window_open")?;
    let close = symbol(elf, "fixsight_window_close")?;
    let _ = std::fs::remove_file(log);
    let out = Command::new("timeout")
        .args([QEMU_TIMEOUT_S, t.qemu])
        .args(t.machine)
        .args(["-display", "none", "-monitor", "none", "-serial", "none"])
        .arg("-semihosting-config")
        .arg(match sequence {
            Some(p) => format!("enable=on,target=native,arg=fixsight,arg={}", p.display()),
            None => "enable=on,target=native".into(),
        })
        .arg("-kernel")
        .arg(elf)
        .arg("-plugin")
        .arg(format!(
            "{},open={open:#x},close={close:#x}",
            plugin.display()
        ))
        .args(["-d", "plugin", "-D"])
        .arg(log)
        .output()
        .with_context(|| format!("running {}", t.qemu))?;
    let status = out.status.code().unwrap_or(-1);
    if status == 124 {
        bail!(
            "{} on {} timed out after {QEMU_TIMEOUT_S} s",
            t.qemu,
            t.name
        );
    }
    let plugin_log = std::fs::read_to_string(log).unwrap_or_default();
    let mut windows = Vec::new();
    for l in plugin_log.lines() {
        let f: Vec<&str> = l.split_whitespace().collect();
        match f.as_slice() {
            ["window", i, "insns", n] if i.parse::<usize>().ok() == Some(windows.len()) => {
                windows.push(n.parse()?)
            }
            _ => bail!("unexpected plugin output on {}: {l}", t.name),
        }
    }
    Ok(Run {
        status,
        console: String::from_utf8_lossy(&out.stdout).into_owned(),
        windows,
        plugin_log,
    })
}

/// One measured call as printed by the firmware.
#[derive(Debug, Clone)]
pub(crate) struct Call {
    pub(crate) kernel: String,
    /// Bench stage name, `None` for a golden vector.
    pub(crate) stage: Option<String>,
    pub(crate) status: String,
    pub(crate) window: Option<usize>,
    pub(crate) px: u64,
    pub(crate) stack: u64,
    pub(crate) line: String,
}

pub(crate) fn parse_console(c: &str) -> Result<(usize, Vec<Call>, (usize, usize))> {
    let mut cal = None;
    let mut calls = Vec::new();
    let mut done = None;
    for l in c.lines() {
        let f: Vec<&str> = l.split_whitespace().collect();
        let field = |k: &str| {
            f.iter()
                .position(|x| *x == k)
                .and_then(|i| f.get(i + 1))
                .copied()
        };
        let num = |k: &str| field(k).and_then(|v| v.parse::<u64>().ok());
        match f.first().copied() {
            Some("cal") => cal = field("win").and_then(|v| v.parse().ok()),
            Some("vec") if f.len() >= 5 => calls.push(Call {
                kernel: f[3].into(),
                stage: None,
                status: f[4].into(),
                window: field("win").and_then(|v| v.parse().ok()),
                px: num("px").unwrap_or(0),
                stack: num("stack").unwrap_or(0),
                line: l.into(),
            }),
            Some("bench") if f.len() >= 4 => calls.push(Call {
                kernel: f[2].into(),
                stage: Some(f[1].into()),
                status: f[3].into(),
                window: field("win").and_then(|v| v.parse().ok()),
                px: num("px").unwrap_or(0),
                stack: num("stack").unwrap_or(0),
                line: l.into(),
            }),
            Some("done") => {
                done = Some((
                    num("vectors").unwrap_or(0) as usize,
                    num("passed").unwrap_or(0) as usize,
                ))
            }
            _ => {}
        }
    }
    let cal = cal.ok_or_else(|| anyhow!("no calibration line in the console output"))?;
    let done = done.ok_or_else(|| anyhow!("the firmware did not finish (no `done` line)"))?;
    Ok((cal, calls, done))
}

/// Runs everything for one core: the kernel crate's firmware, or with
/// `port` the firmware with that port swapped in (figures of the claimed
/// kernel ids only; no demo sequence).
#[allow(clippy::too_many_arguments)]
fn run_target(
    root: &Path,
    t: &Target,
    golden: &Path,
    plugin: &Path,
    logs: &Path,
    sequence: Option<&OnTargetSequence>,
    port: Option<&PortRun<'_>>,
    method: CodeBytes,
) -> Result<(TargetResult, Vec<String>)> {
    let mut problems = Vec::new();
    let feature = port.map(|p| p.feature.as_str());
    let label = match port {
        Some(p) => p.port.image(),
        None => t.name.to_string(),
    };
    let elf = build_firmware(root, t, golden, None, feature)?;
    let mut runs = Vec::new();
    for k in 0..2 {
        let log = logs.join(format!("{label}.plugin.{k}.txt"));
        let r = run_qemu(t, &elf, plugin, &log, sequence.map(|s| s.path.as_path()))?;
        std::fs::write(logs.join(format!("{label}.console.{k}.txt")), &r.console)?;
        runs.push(r);
    }
    let r = &runs[0];
    if runs[1].windows != r.windows {
        problems.push(format!(
            "{label}: instruction counts differ between two runs"
        ));
    }
    if runs[1].console != r.console {
        problems.push(format!("{label}: console output differs between two runs"));
    }
    let (cal, mut calls, (vectors, passed)) =
        parse_console(&r.console).with_context(|| format!("{label}: status {}", r.status))?;
    let mut sequence_problems = Vec::new();
    if let Some(seq) = sequence {
        let printed = crate::target_sequence::parse(&r.console)?;
        let (frames, p) = crate::target_sequence::check(t.name, &printed, seq);
        calls.extend(frames);
        sequence_problems = p;
    }
    for c in calls.iter().filter(|c| c.stage.as_deref() != Some(STAGE)) {
        if c.status != "pass" {
            problems.push(format!("{label}: {}", c.line));
        }
    }
    problems.extend(sequence_problems);
    if (r.status == 0) != (passed == vectors) {
        problems.push(format!(
            "{label}: exit status {} disagrees with {passed}/{vectors} vectors passed",
            r.status
        ));
    }
    if r.status != 0 {
        problems.push(format!("{label}: firmware exit status {}", r.status));
    }
    let base = *r
        .windows
        .get(cal)
        .ok_or_else(|| anyhow!("{label}: no calibration window"))?;
    let insns = |c: &Call| {
        c.window
            .and_then(|w| r.windows.get(w))
            .map(|&n| n.saturating_sub(base))
    };

    // Kernel ids in first-seen order.
    let mut ids: Vec<String> = Vec::new();
    for c in &calls {
        let claimed = port.is_none_or(|p| p.claims.contains(&c.kernel));
        if claimed && !ids.contains(&c.kernel) {
            ids.push(c.kernel.clone());
        }
    }
    let mut stack: BTreeMap<&str, u64> = BTreeMap::new();
    for c in &calls {
        let e = stack.entry(c.kernel.as_str()).or_default();
        *e = (*e).max(c.stack);
    }
    let code = match method {
        CodeBytes::Graph => {
            // Every kernel id the image dispatches: their dispatch
            // functions are cut from the harness's baseline.
            let all: BTreeSet<String> = calls.iter().map(|c| c.kernel.clone()).collect();
            let lists = crate::codebytes::measure(&elf, &ids, &all)
                .with_context(|| format!("{label}: code bytes from the image's reference graph"))?;
            let mut log = String::new();
            let mut code = BTreeMap::new();
            for (id, fs) in &lists {
                let bytes: u64 = fs.iter().map(|f| f.1).sum();
                log += &format!("{id} {bytes}\n");
                for (name, size) in fs {
                    log += &format!("  {size:>7} {name}\n");
                }
                code.insert(id.clone(), bytes);
            }
            std::fs::write(logs.join(format!("{label}.code-bytes.txt")), log)?;
            code
        }
        CodeBytes::Rebuild => code_size_images(root, t, golden, feature, &label, &ids)?,
    };

    let mut kernels = Vec::new();
    for id in &ids {
        let stages: Vec<&Call> = calls
            .iter()
            .filter(|c| &c.kernel == id && c.stage.is_some())
            .collect();
        let per_px = |cs: &[&Call]| -> f64 {
            let (n, px) = cs
                .iter()
                .filter_map(|c| Some((insns(c)?, c.px)))
                .fold((0u64, 0u64), |a, b| (a.0 + b.0, a.1 + b.1));
            if px == 0 {
                0.0
            } else {
                n as f64 / px as f64
            }
        };
        let fig = |name: String, ipx: f64| KernelFigures {
            name,
            instr_per_px: round2(ipx),
            code_bytes: code[id],
            stack_bytes: stack[id.as_str()],
            sequence: None,
        };
        if stages.is_empty() {
            let vs: Vec<&Call> = calls.iter().filter(|c| &c.kernel == id).collect();
            kernels.push(fig(id.clone(), per_px(&vs)));
        } else {
            // One entry per stage name (a bench stage is one call; the demo
            // sequence one call per frame).
            let mut names: Vec<&str> = Vec::new();
            for s in &stages {
                let n = s.stage.as_deref().unwrap_or("");
                if !names.contains(&n) {
                    names.push(n);
                }
            }
            for n in names {
                let cs: Vec<&Call> = stages
                    .iter()
                    .copied()
                    .filter(|c| c.stage.as_deref() == Some(n))
                    .collect();
                let mut f = fig(format!("{id}/{n}"), per_px(&cs));
                if n == STAGE {
                    let each: Vec<f64> = cs.iter().map(|c| per_px(&[c])).collect();
                    f.sequence = Some(SequenceFigures {
                        frames: cs.len(),
                        bit_exact_frames: cs.iter().filter(|c| c.status == "pass").count(),
                        instr_per_px_min: round2(
                            each.iter().copied().fold(f64::INFINITY, f64::min),
                        ),
                        instr_per_px_max: round2(each.iter().copied().fold(0.0, f64::max)),
                    });
                }
                kernels.push(f);
            }
        }
    }
    Ok((
        TargetResult {
            name: t.name.into(),
            triple: t.triple.into(),
            vectors,
            passed,
            kernels,
            lang: rust_lang(),
            c_library: None,
            port: port.map(|p| p.port.name.to_string()),
        },
        problems,
    ))
}

/// Code bytes by the rebuild method: one image per kernel id, and the
/// baseline (`none`); the `.text` growth of each over the baseline.
fn code_size_images(
    root: &Path,
    t: &Target,
    golden: &Path,
    feature: Option<&str>,
    label: &str,
    ids: &[String],
) -> Result<BTreeMap<String, u64>> {
    let mut code: BTreeMap<String, u64> = BTreeMap::new();
    let bar = crate::progress::bar(ids.len() as u64 + 1, &format!("{label}: code-size images"));
    bar.set_message("none");
    let none = text_bytes(&build_firmware(root, t, golden, Some("none"), feature)?)?;
    bar.inc(1);
    for id in ids {
        bar.set_message(id.clone());
        let with = text_bytes(&build_firmware(root, t, golden, Some(id), feature)?)?;
        code.insert(id.clone(), with.saturating_sub(none));
        bar.inc(1);
    }
    bar.finish_and_clear();
    Ok(code)
}

fn round2(v: f64) -> f64 {
    (v * 100.0).round() / 100.0
}

/// The per-target table.
pub fn table(r: &TargetsReport) -> String {
    let mut s = String::new();
    for t in &r.targets {
        let port = t
            .port
            .as_deref()
            .map_or(String::new(), |p| format!(", port {p}"));
        s += &format!(
            "{} ({}, {}{port}): {}/{} golden vectors bit-exact\n",
            t.name, t.triple, t.lang, t.passed, t.vectors
        );
        if let Some(l) = &t.c_library {
            s += &format!(
                "  {}: {} bytes; adds {} bytes of .text + .rodata to the firmware\n",
                l.archive, l.archive_bytes, l.firmware_bytes_added
            );
        }
        s += &format!(
            "  {:<36} {:>10} {:>10} {:>8}\n",
            "kernel", "instr/px", "code B", "stack B"
        );
        for k in &t.kernels {
            s += &format!(
                "  {:<36} {:>10.2} {:>10} {:>8}\n",
                k.name, k.instr_per_px, k.code_bytes, k.stack_bytes
            );
            if let Some(q) = &k.sequence {
                s += &format!(
                    "    {}/{} frames bit-identical to the host; one frame {:.2} to {:.2} instr/px\n",
                    q.bit_exact_frames, q.frames, q.instr_per_px_min, q.instr_per_px_max
                );
            }
        }
    }
    s
}

/// `fixsight-verify targets`: preflight, build, run, write `targets.json`.
/// Returns `Ok(false)` if any vector failed or any check disagreed.
///
/// `lang` = `Some("rust")` or `Some("c")` runs only that firmware; a
/// non-empty `cores` only those Rust images (names of [`TARGETS`], or
/// `<core>+<port>` for a port's image); `method` says how code bytes are
/// measured.
pub fn run(
    out: &Path,
    golden: &Path,
    lang: Option<&str>,
    cores: &[String],
    method: CodeBytes,
) -> Result<bool> {
    let labels: Vec<String> = TARGETS
        .iter()
        .map(|t| t.name.to_string())
        .chain(PORTS.iter().map(Port::image))
        .collect();
    if let Some(c) = cores.iter().find(|c| !labels.contains(c)) {
        bail!(
            "--core: no image `{c}`; the images are {}",
            labels.join(", ")
        );
    }
    let wanted = |label: &str| cores.is_empty() || cores.iter().any(|c| c == label);
    preflight()?;
    let root = repo_root();
    let golden = std::fs::canonicalize(golden)
        .with_context(|| format!("golden folder {}", golden.display()))?;
    let logs = out.join(LOGS_DIR);
    std::fs::create_dir_all(&logs)?;
    let plugin = build_plugin(&root)?;
    let mut report = TargetsReport {
        schema: 1,
        targets: Vec::new(),
    };
    let mut problems = Vec::new();
    if lang != Some("c") {
        let seq = crate::target_sequence::prepare(&logs)?;
        for t in TARGETS.iter().filter(|t| wanted(t.name)) {
            let (r, p) = run_target(&root, t, &golden, &plugin, &logs, Some(&seq), None, method)?;
            println!(
                "{} ({}): {}/{} golden vectors bit-exact",
                t.name, t.triple, r.passed, r.vectors
            );
            report.targets.push(r);
            problems.extend(p);
        }
        for port in PORTS.iter().filter(|p| wanted(&p.image())) {
            let run = PortRun::new(&root, &golden, port)?;
            let t = TARGETS
                .iter()
                .find(|t| t.name == port.core)
                .ok_or_else(|| anyhow!("port {}: no core {}", port.name, port.core))?;
            let (r, p) = run_target(&root, t, &golden, &plugin, &logs, None, Some(&run), method)?;
            println!(
                "{} with port {} ({}): {}/{} golden vectors bit-exact",
                t.name, port.name, t.triple, r.passed, r.vectors
            );
            report.targets.push(r);
            problems.extend(p);
        }
    }
    if lang != Some("rust") {
        let (r, p) = crate::c_firmware::run(&root, &golden, &plugin, &logs)?;
        report.targets.push(r);
        problems.extend(p);
    }
    if !crate::progress::quiet() {
        print!("{}", table(&report));
    }
    // The command checked the overwrite rule before the run.
    let mut o = crate::files::Outputs::new(out, [TARGETS_JSON], true, "--overwrite")?;
    o.write(
        TARGETS_JSON,
        (serde_json::to_string_pretty(&report)? + "\n").as_bytes(),
    )?;
    o.commit()?;
    println!("targets written to {}", out.join(TARGETS_JSON).display());
    for p in &problems {
        println!("FAIL {p}");
    }
    Ok(problems.is_empty())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn console_lines_parse() {
        let c = "fixsight-target x\ncal win 0 stack 8\n\
                 vec 0 a.b a.b pass win 1 px 4 stack 100\n\
                 vec 1 a.c a.b FAIL win 2 px 4 stack 90 output `dst` differs first at element 3\n\
                 bench s a.b pass win 3 px 76800 stack 120\ndone vectors 2 passed 1\n";
        let (cal, calls, done) = parse_console(c).unwrap();
        assert_eq!((cal, done), (0, (2, 1)));
        assert_eq!(calls.len(), 3);
        assert_eq!(calls[1].status, "FAIL");
        assert_eq!(calls[2].stage.as_deref(), Some("s"));
        assert_eq!(calls[2].px, 76800);
        assert!(parse_console("cal win 0 stack 8\n").is_err());
    }

    #[test]
    fn targets_json_round_trips() {
        let dir = std::env::temp_dir().join(format!("fixsight-targets-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let r = TargetsReport {
            schema: 1,
            targets: vec![TargetResult {
                name: "cortex-m4".into(),
                triple: "thumbv7em-none-eabihf".into(),
                vectors: 3,
                passed: 3,
                kernels: vec![KernelFigures {
                    name: "gradient.direction".into(),
                    instr_per_px: 39.87,
                    code_bytes: 1552,
                    stack_bytes: 252,
                    sequence: Some(SequenceFigures {
                        frames: 96,
                        bit_exact_frames: 96,
                        instr_per_px_min: 250.5,
                        instr_per_px_max: 301.25,
                    }),
                }],
                lang: "c".into(),
                c_library: Some(CLibrary {
                    archive: "target/x/c-release/libfixsight_c.a".into(),
                    archive_bytes: 10,
                    firmware_bytes_added: 5,
                }),
                port: Some("cortex-m4-dsp".into()),
            }],
        };
        std::fs::write(dir.join(TARGETS_JSON), serde_json::to_string(&r).unwrap()).unwrap();
        assert_eq!(load_targets_json(&dir), Some(r));
        std::fs::write(dir.join(TARGETS_JSON), "{\"schema\": 2, \"targets\": []}").unwrap();
        assert_eq!(load_targets_json(&dir), None);
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
