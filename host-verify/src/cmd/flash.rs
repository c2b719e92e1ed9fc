//! `fixsight-verify flash`: what a firmware that uses one part of the
//! kernel crate costs in flash and RAM on a Cortex-M4 with 256 KiB of flash
//! and 64 KiB of RAM, at both optimisation levels.
//!
//! The firmware is `targets/user-firmware/`, written as a user would write
//! it (the kernel crate without features, `cortex-m-rt`, the kernel's
//! objects in `static`s): one binary per part (`none`, the baseline with
//! start-up, the frame generator and the report; `edge_stream`, the
//! streamed edge stage at 320 x 240; `point_job`, the whole job in point
//! mode with a lens grid; `image_job`, the whole job in image mode, the
//! camera rows warped through a lens grid row by row). Each is built at `opt-level = 3` (profile
//! `release`) and `"s"` (profile `release-s`), both with fat LTO, linked
//! into the part's memory (`memory.x`: an image that does not fit does not
//! link) and run under QEMU (`mps2-an386`), where it reports its stack
//! high-water mark (the painted stack of `cortex-m-rt`'s `paint-stack`)
//! and exits 0 when its job ran (for the point job: the tape found).
//!
//! Per image: the section sizes (`llvm-size -A`), flash = vector table +
//! `.text` + `.rodata` + `.data` (the initial image of the initialised
//! statics is stored in flash and copied at reset), code = `.text +
//! .rodata` beyond the image `none` at the same level, RAM = `.data +
//! .bss` + stack. The command fails when an image does not run or its RAM
//! exceeds the part's.

use crate::files::Outputs;
use crate::targets::{llvm_tool, repo_root};
use anyhow::{anyhow, bail, Context, Result};
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};
use std::process::Command;

/// The output file.
pub const FLASH_JSON: &str = "flash.json";

/// The binaries of `targets/user-firmware`, the baseline first.
pub const IMAGES: [&str; 4] = ["none", "edge_stream", "point_job", "image_job"];

/// Images whose statics are all zero bytes (the kernel crate's
/// `EdgeStream::new`, `PointJob::new` and `ImageJob::new` are): their
/// `.data` must be empty, or a `static` of the stage or a job would carry
/// its whole initial image in flash and copy it at reset.
pub const ZERO_DATA: [&str; 4] = ["none", "edge_stream", "point_job", "image_job"];

/// The optimisation levels: `(cargo profile, opt-level)`.
pub const LEVELS: [(&str, &str); 2] = [("release", "3"), ("release-s", "s")];

/// The part of `targets/user-firmware/memory.x`.
pub const PART_FLASH_BYTES: u64 = 256 * 1024;
/// RAM of the part.
pub const PART_RAM_BYTES: u64 = 64 * 1024;

const TRIPLE: &str = "thumbv7em-none-eabihf";

/// Sizes of the sections of one linked image.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
pub struct Sections {
    /// `.vector_table`.
    pub vector_table: u64,
    /// `.text`.
    pub text: u64,
    /// `.rodata`.
    pub rodata: u64,
    /// `.data` (in RAM, and its initial image in flash).
    pub data: u64,
    /// `.bss` (zeroed RAM).
    pub bss: u64,
}

impl Sections {
    /// Bytes stored in flash.
    pub fn flash(&self) -> u64 {
        self.vector_table + self.text + self.rodata + self.data
    }

    /// Code and constants.
    pub fn code(&self) -> u64 {
        self.text + self.rodata
    }

    /// RAM of the statics.
    pub fn static_ram(&self) -> u64 {
        self.data + self.bss
    }
}

/// One image at one optimisation level.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FlashImage {
    /// Binary name.
    pub name: String,
    /// `opt-level` (`3` or `s`).
    pub opt_level: String,
    /// Section sizes.
    pub sections: Sections,
    /// [`Sections::flash`].
    pub flash_bytes: u64,
    /// `.text + .rodata` beyond the image `none` at the same level.
    pub code_bytes_over_none: i64,
    /// Stack high-water mark the image reported.
    pub stack_bytes: u64,
    /// `.data + .bss` + stack.
    pub ram_bytes: u64,
    /// What the image printed.
    pub console: String,
    /// Its exit status under QEMU.
    pub exit_status: i32,
}

/// `flash.json`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FlashReport {
    /// Always 1.
    pub schema: u32,
    /// Flash of the part, bytes.
    pub part_flash_bytes: u64,
    /// RAM of the part, bytes.
    pub part_ram_bytes: u64,
    /// Every image at every level.
    pub images: Vec<FlashImage>,
}

/// The sections of `llvm-size -A` output.
///
/// ```
/// use fixsight_verify::cmd::flash::{parse_sections, Sections};
/// let text = "x  :\nsection  size  addr\n.vector_table 1024 0\n.text 2604 1024\n\
///             .rodata 272 3628\n.data 0 536870912\n.bss 8 536870912\nTotal 3908\n";
/// let s = parse_sections(text).unwrap();
/// assert_eq!((s.text, s.bss, s.flash()), (2604, 8, 3900));
/// assert!(parse_sections("section size addr\n").is_err());
/// ```
pub fn parse_sections(text: &str) -> Result<Sections> {
    let mut s = Sections::default();
    let mut seen = 0;
    for l in text.lines() {
        let mut it = l.split_whitespace();
        let (Some(name), Some(size)) = (it.next(), it.next()) else {
            continue;
        };
        let slot = match name {
            ".vector_table" => &mut s.vector_table,
            ".text" => &mut s.text,
            ".rodata" => &mut s.rodata,
            ".data" => &mut s.data,
            ".bss" => &mut s.bss,
            _ => continue,
        };
        *slot = size
            .parse()
            .with_context(|| format!("section size `{size}` in `{l}`"))?;
        seen += 1;
    }
    if seen < 2 {
        bail!("llvm-size printed no .text or .vector_table section");
    }
    Ok(s)
}

/// The stack figure of a console line `... stack_bytes N`.
///
/// ```
/// use fixsight_verify::cmd::flash::stack_of;
/// assert_eq!(stack_of("point_job edge_points 3 stack_bytes 3136\n"), Some(3136));
/// assert_eq!(stack_of("hardfault\n"), None);
/// ```
pub fn stack_of(console: &str) -> Option<u64> {
    let words: Vec<&str> = console.split_whitespace().collect();
    words
        .windows(2)
        .find(|w| w[0] == "stack_bytes")
        .and_then(|w| w[1].parse().ok())
}

fn build(dir: &Path, profile: &str) -> Result<()> {
    let st = Command::new("timeout")
        .args(["900", "cargo", "build", "--quiet", "--bins", "--profile"])
        .arg(profile)
        .args(["--target", TRIPLE])
        .current_dir(dir)
        .env_remove("CARGO_TARGET_DIR")
        .env_remove("RUSTFLAGS")
        .env_remove("CARGO_BUILD_RUSTFLAGS")
        .env_remove("CARGO_ENCODED_RUSTFLAGS")
        .status()
        .context("running cargo")?;
    if !st.success() {
        bail!(
            "building {} with profile {profile} failed ({st}); an image that does not fit \
             the part's {} KiB of flash or {} KiB of RAM fails to link",
            dir.display(),
            PART_FLASH_BYTES / 1024,
            PART_RAM_BYTES / 1024
        );
    }
    Ok(())
}

fn sections(elf: &Path) -> Result<Sections> {
    let out = Command::new(llvm_tool("llvm-size")?)
        .arg("-A")
        .arg(elf)
        .output()
        .context("running llvm-size")?;
    parse_sections(&String::from_utf8_lossy(&out.stdout))
        .with_context(|| format!("sections of {}", elf.display()))
}

fn run_qemu(elf: &Path) -> Result<(i32, String)> {
    let out = Command::new("timeout")
        .args([
            "300",
            "qemu-system-arm",
            "-M",
            "mps2-an386",
            "-cpu",
            "cortex-m4",
        ])
        .args(["-display", "none", "-monitor", "none", "-serial", "none"])
        .args(["-semihosting-config", "enable=on,target=native", "-kernel"])
        .arg(elf)
        .output()
        .context("running qemu-system-arm")?;
    let status = out.status.code().unwrap_or(-1);
    if status == 124 {
        bail!("{} timed out under QEMU", elf.display());
    }
    Ok((status, String::from_utf8_lossy(&out.stdout).into_owned()))
}

/// Builds, measures and runs every image; writes `flash.json` to `out`.
pub fn run(out: &Path, overwrite: bool) -> Result<bool> {
    let mut files = Outputs::new(out, [FLASH_JSON], overwrite, "--overwrite")?;
    let dir = repo_root().join("targets").join("user-firmware");
    let mut report = FlashReport {
        schema: 1,
        part_flash_bytes: PART_FLASH_BYTES,
        part_ram_bytes: PART_RAM_BYTES,
        images: Vec::new(),
    };
    let mut ok = true;
    for (profile, level) in LEVELS {
        build(&dir, profile)?;
        let bins: PathBuf = dir.join("target").join(TRIPLE).join(profile);
        let mut base = None;
        for name in IMAGES {
            let elf = bins.join(name);
            let s = sections(&elf)?;
            let base_code = *base.get_or_insert(s.code());
            let (status, console) = run_qemu(&elf)?;
            let stack = stack_of(&console)
                .ok_or_else(|| anyhow!("{name} ({level}) printed no stack figure: {console}"))?;
            let img = FlashImage {
                name: name.into(),
                opt_level: level.into(),
                flash_bytes: s.flash(),
                code_bytes_over_none: s.code() as i64 - base_code as i64,
                stack_bytes: stack,
                ram_bytes: s.static_ram() + stack,
                sections: s,
                console: console.trim().to_string(),
                exit_status: status,
            };
            if status != 0 {
                println!(
                    "FAIL {name} (opt-level {level}) exited {status}: {}",
                    img.console
                );
                ok = false;
            }
            if ZERO_DATA.contains(&name) && s.data != 0 {
                println!(
                    "FAIL {name} (opt-level {level}): {} bytes of .data; its statics should be \
                     zero bytes (in .bss)",
                    s.data
                );
                ok = false;
            }
            if img.ram_bytes > PART_RAM_BYTES {
                println!(
                    "FAIL {name} (opt-level {level}) needs {} bytes of RAM, the part has {}",
                    img.ram_bytes, PART_RAM_BYTES
                );
                ok = false;
            }
            report.images.push(img);
        }
    }
    print!("{}", table(&report));
    files.write(
        FLASH_JSON,
        (serde_json::to_string_pretty(&report)? + "\n").as_bytes(),
    )?;
    files.commit()?;
    println!(
        "flash figures written to {}",
        out.join(FLASH_JSON).display()
    );
    Ok(ok)
}

/// The report as a Markdown table.
pub fn table(r: &FlashReport) -> String {
    let mut t = String::from(
        "| image | opt-level | .text | .rodata | .data | .bss | flash B | code B over `none` | stack B | RAM B |\n\
         |---|---|---:|---:|---:|---:|---:|---:|---:|---:|\n",
    );
    for i in &r.images {
        let s = &i.sections;
        t += &format!(
            "| {} | {} | {} | {} | {} | {} | {} | {} | {} | {} |\n",
            i.name,
            i.opt_level,
            s.text,
            s.rodata,
            s.data,
            s.bss,
            i.flash_bytes,
            i.code_bytes_over_none,
            i.stack_bytes,
            i.ram_bytes
        );
    }
    t
}
