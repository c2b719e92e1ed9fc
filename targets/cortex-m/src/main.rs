//! Conformance firmware for Cortex-M cores under QEMU system emulation.
//!
//! One source, three builds:
//!
//! | core | triple | QEMU board |
//! |---|---|---|
//! | Cortex-M4 | `thumbv7em-none-eabihf` | `mps2-an386` |
//! | Cortex-M3 | `thumbv7m-none-eabi` | `mps2-an385` |
//! | Cortex-M0 code | `thumbv6m-none-eabi` | `mps2-an385` (ARMv6-M is a subset of ARMv7-M) |
//!
//! Start-up (vector table, `.data`/`.bss` initialisation, FPU enable on the
//! hard-float build) is `cortex-m-rt`; everything after `main` is
//! `fixsight-harness`. The exit status reaches the host through the
//! semihosting extended exit call. Run with
//! `-semihosting-config enable=on,target=native`.
#![no_std]
#![no_main]

use core::fmt::Write;
use cortex_m_rt::{entry, exception, ExceptionFrame};

/// The triple this image was built for (set by `build.rs`).
const ARCH: &str = env!("FIXSIGHT_TARGET");

#[entry]
fn main() -> ! {
    let code = fixsight_harness::run(ARCH);
    fixsight_harness::sys::exit(code)
}

#[exception]
unsafe fn HardFault(ef: &ExceptionFrame) -> ! {
    let mut con = fixsight_harness::Console::open();
    let _ = writeln!(con, "hardfault pc {:#010x}", ef.pc());
    fixsight_harness::sys::exit(4)
}

#[panic_handler]
fn panic(info: &core::panic::PanicInfo) -> ! {
    let mut con = fixsight_harness::Console::open();
    let _ = writeln!(con, "panic {info}");
    fixsight_harness::sys::exit(3)
}
