//! What the binaries of this crate share: a camera frame made procedurally
//! at run time (so that nothing is folded away at compile time), the
//! stack's high-water mark, and the report to the host over semihosting.
//!
//! Each binary is a firmware written as a user of the kernel crate would
//! write it, for a Cortex-M4 with 256 KiB of flash and 64 KiB of RAM
//! (`memory.x`), and uses one part of the crate; `fixsight-verify flash`
//! builds each at `opt-level = 3` and `"s"`, takes its sections' sizes
//! against the binary `none` and runs it under QEMU.
//!
//! > **Not a safety function.** The point job's drift warning may end up
//! > steering a vehicle; it is not developed or certified as a safety
//! > function (ISO 3691-4, IEC 61508, ISO 13849 and local rules apply).
#![no_std]

use cortex_m_rt::{exception, ExceptionFrame};
use cortex_m_semihosting::{debug, hprintln};

/// A panic ends the run with exit status 1 (the kernels return errors and
/// do not panic; this is the firmware's own guard).
#[panic_handler]
fn panic(_: &core::panic::PanicInfo) -> ! {
    debug::exit(debug::EXIT_FAILURE);
    #[allow(clippy::empty_loop)]
    loop {}
}

#[exception]
unsafe fn HardFault(_: &ExceptionFrame) -> ! {
    hprintln!("hardfault");
    debug::exit(debug::EXIT_FAILURE);
    #[allow(clippy::empty_loop)]
    loop {}
}

/// One camera row at row `y`, `w` wide (`w = 320` for the geometry
/// below): a bright tape 20 px wide at the bottom row whose edges meet on
/// the demo camera's horizon (61.875 px above the image centre: `|x -
/// 159.5| < 10 (y - 57.625) / 181.375`, in integers), on a floor with a
/// brightness ramp; the tape moves sideways by `frame mod 5 - 2` px.
pub fn camera_row(frame: u32, y: usize, w: usize, row: &mut [u8]) {
    let reach = 20 * (8 * y as i32 - 461);
    let centre2 = 319 + 2 * (frame % 5) as i32 - 4;
    for (x, px) in row.iter_mut().enumerate().take(w) {
        let floor = 50 + (x as i32) / 16 + (y as i32) / 12;
        let tape = if (2 * x as i32 - centre2).abs() * 1451 < reach {
            150
        } else {
            0
        };
        *px = (floor + tape).clamp(0, 255) as u8;
    }
}

extern "C" {
    static _stack_start: u32;
    static _stack_end: u32;
}

/// Bytes of stack used so far: the painted words (`cortex-m-rt`'s
/// `paint-stack` fills the RAM between the end of `.bss` and the initial
/// stack pointer with `0xCCCC_CCCC` at reset) that are no longer intact,
/// counted from the lowest changed word to the top of the stack.
pub fn stack_used() -> usize {
    // Symbols of the linker script: only their addresses are taken.
    let (top, end) = (
        core::ptr::addr_of!(_stack_start) as usize,
        core::ptr::addr_of!(_stack_end) as usize,
    );
    let mut p = end;
    while p < top {
        // SAFETY: `end..top` is RAM the start-up code painted, word
        // aligned (the linker script asserts both alignments); a volatile
        // read of it has no side effect.
        let v = unsafe { core::ptr::read_volatile(p as *const u32) };
        if v != cortex_m_rt::STACK_PAINT_VALUE {
            break;
        }
        p += 4;
    }
    top - p
}

/// Prints `what` and the stack high-water mark to the host console and
/// ends the run: exit status 0 when `ok`, 1 otherwise.
pub fn report(ok: bool, what: core::fmt::Arguments<'_>) -> ! {
    hprintln!("{} stack_bytes {}", what, stack_used());
    debug::exit(if ok {
        debug::EXIT_SUCCESS
    } else {
        debug::EXIT_FAILURE
    });
    #[allow(clippy::empty_loop)]
    loop {}
}
