//! The few architecture-specific pieces: semihosting calls, reading the
//! stack pointer, and painting the stack.
//!
//! Semihosting uses the `cortex-m-semihosting` / `riscv-semihosting` crates
//! (`syscall`); both follow the Arm semihosting specification, which RISC-V
//! semihosting copies except for the trap sequence.

#[cfg(target_arch = "arm")]
use cortex_m_semihosting::syscall;
#[cfg(target_arch = "riscv32")]
use riscv_semihosting::syscall;

/// SYS_WRITE (0x05): write a buffer to a host file handle.
const SYS_WRITE: usize = 0x05;
/// SYS_OPEN (0x01): open a host file; ":tt" is the console.
const SYS_OPEN: usize = 0x01;
/// SYS_EXIT_EXTENDED (0x20): report an exception with a sub-code. With the
/// reason `ADP_Stopped_ApplicationExit` QEMU exits with the sub-code as its
/// own exit status (the plain SYS_EXIT (0x18) on 32-bit cores carries only
/// the reason, so QEMU can only exit 0 or 1).
const SYS_EXIT_EXTENDED: usize = 0x20;
/// Reason code `ADP_Stopped_ApplicationExit`.
const ADP_STOPPED_APPLICATION_EXIT: usize = 0x20026;

/// Opens the host console for writing ("w" mode = 4) and returns its handle.
pub fn open_console() -> usize {
    let name = b":tt\0";
    let args = [name.as_ptr() as usize, 4usize, name.len() - 1];
    // SAFETY: the argument block is valid for SYS_OPEN and outlives the call.
    unsafe { syscall(SYS_OPEN, &args) }
}

/// Writes `bytes` to a host handle.
pub fn write(handle: usize, bytes: &[u8]) {
    let args = [handle, bytes.as_ptr() as usize, bytes.len()];
    // SAFETY: the argument block points at a live buffer of the given length.
    unsafe {
        syscall(SYS_WRITE, &args);
    }
}

/// Ends the emulation with `code` as the emulator's exit status.
pub fn exit(code: u32) -> ! {
    let args = [ADP_STOPPED_APPLICATION_EXIT, code as usize];
    // SAFETY: valid argument block for SYS_EXIT_EXTENDED.
    unsafe {
        syscall(SYS_EXIT_EXTENDED, &args);
    }
    // Only reached if the host let the program continue.
    loop {
        core::hint::spin_loop();
    }
}

extern "C" {
    /// Returns the caller's stack pointer (a leaf with no frame, so the value
    /// is the stack pointer at the call site).
    fn fixsight_stack_pointer() -> usize;
    /// Writes `pattern` to every word in `[limit, sp)` where `sp` is the
    /// caller's stack pointer (leaf, no frame). `limit` must be 4-aligned.
    fn fixsight_paint_stack(limit: usize, pattern: u32);
}

#[cfg(target_arch = "arm")]
core::arch::global_asm!(
    // Thumb code that assembles for ARMv6-M too (low registers only).
    ".section .text.fixsight_stack_pointer,\"ax\",%progbits",
    ".global fixsight_stack_pointer",
    ".type fixsight_stack_pointer,%function",
    ".thumb_func",
    "fixsight_stack_pointer:",
    "    mov r0, sp",
    "    bx lr",
    ".size fixsight_stack_pointer, . - fixsight_stack_pointer",
    ".section .text.fixsight_paint_stack,\"ax\",%progbits",
    ".global fixsight_paint_stack",
    ".type fixsight_paint_stack,%function",
    ".thumb_func",
    "fixsight_paint_stack:",
    "    mov r2, sp",
    "1:  subs r2, #4",
    "    cmp r2, r0",
    "    blo 2f",
    "    str r1, [r2]",
    "    b 1b",
    "2:  bx lr",
    ".size fixsight_paint_stack, . - fixsight_paint_stack",
);

#[cfg(target_arch = "riscv32")]
core::arch::global_asm!(
    ".section .text.fixsight_stack_pointer,\"ax\",@progbits",
    ".global fixsight_stack_pointer",
    "fixsight_stack_pointer:",
    "    mv a0, sp",
    "    ret",
    ".section .text.fixsight_paint_stack,\"ax\",@progbits",
    ".global fixsight_paint_stack",
    "fixsight_paint_stack:",
    "    mv t0, sp",
    "1:  addi t0, t0, -4",
    "    bltu t0, a0, 2f",
    "    sw a1, 0(t0)",
    "    j 1b",
    "2:  ret",
);

/// Stack pointer at the call site.
#[inline(always)]
pub fn stack_pointer() -> usize {
    // SAFETY: leaf assembly routine that only reads sp.
    unsafe { fixsight_stack_pointer() }
}

/// Paints `[limit, sp)` with `pattern`.
#[inline(always)]
pub fn paint_stack(limit: usize, pattern: u32) {
    // SAFETY: the region below the current stack pointer is free stack (the
    // caller keeps `limit` inside the stack region).
    unsafe { fixsight_paint_stack(limit, pattern) }
}

/// Lowest word in `[limit, top)` that no longer holds `pattern`; returns
/// `top` if all are intact.
pub fn lowest_touched(limit: usize, top: usize, pattern: u32) -> usize {
    let mut a = limit;
    while a < top {
        // SAFETY: `[limit, top)` is stack memory painted just before.
        let w = unsafe { core::ptr::read_volatile(a as *const u32) };
        if w != pattern {
            return a;
        }
        a += 4;
    }
    top
}
