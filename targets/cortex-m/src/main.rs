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
//! hard-float build) is `cortex-m-rt`; everything after it, the panic
//! handler and the fault report are `fixsight-harness`, shared with the
//! RV32 firmware. Run with `-semihosting-config enable=on,target=native`.
#![no_std]
#![no_main]

use cortex_m_rt::{entry, exception, ExceptionFrame};

#[entry]
fn main() -> ! {
    fixsight_harness::start()
}

#[exception]
unsafe fn HardFault(ef: &ExceptionFrame) -> ! {
    fixsight_harness::fault(format_args!("hardfault pc {:#010x}", ef.pc()))
}
