//! The few architecture-specific pieces: semihosting calls, reading the
//! stack pointer, and painting the stack.
//!
//! Semihosting uses the `cortex-m-semihosting` / `riscv-semihosting` crates
//! (`syscall`); both follow the Arm semihosting specification, which RISC-V
//! semihosting copies except for the trap sequence.

#[cfg(target_arch = "arm")]
use cortex_m_semihosting::{syscall, syscall1};
#[cfg(target_arch = "riscv32")]
use riscv_semihosting::{syscall, syscall1};

/// SYS_WRITE (0x05): write a buffer to a host file handle.
const SYS_WRITE: usize = 0x05;
/// SYS_OPEN (0x01): open a host file; ":tt" is the console.
const SYS_OPEN: usize = 0x01;
/// SYS_CLOSE (0x02): close a host file handle.
const SYS_CLOSE: usize = 0x02;
/// SYS_READ (0x06): read from a host file handle; returns the bytes *not*
/// read (0 when the buffer was filled).
const SYS_READ: usize = 0x06;
/// SYS_SEEK (0x0A): move a host file handle to an absolute byte position.
const SYS_SEEK: usize = 0x0A;
/// SYS_GET_CMDLINE (0x15): the command line the host gives the program
/// (QEMU: the `arg=` items of `-semihosting-config`, joined by spaces).
const SYS_GET_CMDLINE: usize = 0x15;
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

/// Opens the host file named by `name` (without its NUL; at most 255
/// bytes) for reading in binary mode ("rb" = 1). `None` if the name is too
/// long or the host cannot open it.
pub fn open_read(name: &[u8]) -> Option<usize> {
    let mut z = [0u8; 256];
    z.get_mut(..name.len())?.copy_from_slice(name);
    if name.len() == z.len() {
        return None;
    }
    let args = [z.as_ptr() as usize, 1usize, name.len()];
    // SAFETY: the argument block and the NUL-terminated name outlive the call.
    let h = unsafe { syscall(SYS_OPEN, &args) };
    (h != usize::MAX).then_some(h)
}

/// Fills `buf` from a host handle; `false` if the host returned fewer
/// bytes (end of file or error).
pub fn read(handle: usize, buf: &mut [u8]) -> bool {
    let args = [handle, buf.as_mut_ptr() as usize, buf.len()];
    // SAFETY: the argument block points at a live, writable buffer of the
    // given length, which the host fills.
    unsafe { syscall(SYS_READ, &args) == 0 }
}

/// Moves a host handle to byte `pos`; `false` on failure.
pub fn seek(handle: usize, pos: usize) -> bool {
    let args = [handle, pos];
    // SAFETY: valid argument block for SYS_SEEK.
    unsafe { syscall(SYS_SEEK, &args) == 0 }
}

/// Closes a host handle.
pub fn close(handle: usize) {
    let args = [handle];
    // SAFETY: valid argument block for SYS_CLOSE.
    unsafe {
        syscall(SYS_CLOSE, &args);
    }
}

/// The host's command line for this program copied into `buf`; its
/// length, or `None` when the host gives none or it does not fit.
pub fn command_line(buf: &mut [u8]) -> Option<usize> {
    let mut args = [buf.as_mut_ptr() as usize, buf.len()];
    let block = args.as_mut_ptr();
    // SAFETY: the block points at a live, writable buffer of the given
    // length; the host writes the line there and its length into the
    // block's second word, which is read back below through the same
    // pointer.
    let (r, len) = unsafe {
        let r = syscall1(SYS_GET_CMDLINE, block as usize);
        (r, core::ptr::read_volatile(block.add(1)))
    };
    (r == 0 && len <= buf.len()).then_some(len)
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
