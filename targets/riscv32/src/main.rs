//! Conformance firmware for RV32IMC (`riscv32imc-unknown-none-elf`) on the
//! QEMU `virt` board started with `-bios none` (machine mode, from RAM at
//! 0x8000_0000).
//!
//! Start-up (stack, `.data`/`.bss` initialisation, trap vector) is
//! `riscv-rt`; everything after it, the panic handler and the fault report
//! are `fixsight-harness`, shared with the Cortex-M firmware. Run with
//! `-semihosting-config enable=on,target=native`.
#![no_std]
#![no_main]

use riscv_rt::entry;

#[entry]
fn main() -> ! {
    fixsight_harness::start()
}

/// Any trap: report the cause and the faulting pc, exit with status 4.
#[export_name = "ExceptionHandler"]
fn exception_handler(_frame: &riscv_rt::TrapFrame) -> ! {
    fixsight_harness::fault(format_args!(
        "trap mcause {:#x} mepc {:#010x}",
        riscv::register::mcause::read().bits(),
        riscv::register::mepc::read()
    ))
}
