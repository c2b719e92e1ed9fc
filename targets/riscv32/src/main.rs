//! Conformance firmware for RV32IMC (`riscv32imc-unknown-none-elf`) on the
//! QEMU `virt` board started with `-bios none` (machine mode, from RAM at
//! 0x8000_0000).
//!
//! Start-up (stack, `.data`/`.bss` initialisation, trap vector) is
//! `riscv-rt`; everything after `main` is `fixsight-harness`. The exit
//! status reaches the host through the semihosting extended exit call. Run
//! with `-semihosting-config enable=on,target=native`.
#![no_std]
#![no_main]

use core::fmt::Write;
use riscv_rt::entry;

/// The triple this image was built for (set by `build.rs`).
const ARCH: &str = env!("FIXSIGHT_TARGET");

#[entry]
fn main() -> ! {
    let code = fixsight_harness::run(ARCH);
    fixsight_harness::sys::exit(code)
}

/// Any trap: report the cause and the faulting pc, exit with status 4.
#[export_name = "ExceptionHandler"]
fn exception_handler(_frame: &riscv_rt::TrapFrame) -> ! {
    let mut con = fixsight_harness::Console::open();
    let _ = writeln!(
        con,
        "trap mcause {:#x} mepc {:#010x}",
        riscv::register::mcause::read().bits(),
        riscv::register::mepc::read()
    );
    fixsight_harness::sys::exit(4)
}

#[panic_handler]
fn panic(info: &core::panic::PanicInfo) -> ! {
    let mut con = fixsight_harness::Console::open();
    let _ = writeln!(con, "panic {info}");
    fixsight_harness::sys::exit(3)
}
