//! Target-independent part of the fixsight conformance firmware.
//!
//! The firmware crates (`targets/cortex-m`, `targets/riscv32`) bring the
//! core up and call [`start`]; their fault handlers call [`fault`]. This
//! crate holds everything else, the panic handler included:
//!
//! * the golden vectors, turned by `build.rs` from `golden/manifest.json`
//!   into static data (element bytes, dimensions, parameters);
//! * the table of dispatch functions, one per kernel id
//!   ([`kernels::dispatch`], rows in `src/kernels/mod.rs`);
//! * the QVGA benchmark frames ([`bench`]);
//! * the demo sequence the host names on the command line ([`sequence`]);
//! * the measurement of every call: the instruction-count window markers
//!   read by the QEMU plugin (`targets/qemu-plugin`), and stack painting for
//!   the high-water mark;
//! * the report, one line per vector on the semihosting console, and the
//!   exit status.
//!
//! # Console protocol (read by `fixsight-verify targets`)
//!
//! ```text
//! fixsight-target <arch>                            first line
//! cal win <w> stack <bytes>                         the empty-call window
//! vec <i> <id> <kernel> <pass|FAIL|UNSUPPORTED|ERROR> win <w> px <n> stack <bytes> [detail]
//! bench <name> <kernel> <pass|ERROR> win <w> px <n> stack <bytes> [detail]
//! seq ...                                           the demo sequence ([`sequence`])
//! done vectors <n> passed <p>
//! ```
//!
//! # Exit status (through semihosting SYS_EXIT_EXTENDED)
//! 0: every vector bit-exact; 1: at least one vector failed or could not
//! run; 3: panic; 4: fault.
#![no_std]

pub mod bench;
pub mod kernels;
pub mod sequence;
pub mod sys;
pub mod vectors;

use core::fmt::{self, Write};
use kernels::{noop, Arena, Fail, Img, Params, RunFn};

/// Opens an instruction-count window. The plugin snapshots its counter when
/// this function's first instruction executes. Its body differs from
/// [`fixsight_window_close`] so the optimiser cannot merge the two.
#[no_mangle]
#[inline(never)]
pub extern "C" fn fixsight_window_open() {
    // SAFETY: single-threaded firmware; plain volatile counter.
    unsafe {
        let p = core::ptr::addr_of_mut!(WINDOWS_OPENED);
        p.write_volatile(p.read_volatile().wrapping_add(1));
    }
}

/// Closes an instruction-count window (see [`fixsight_window_open`]).
#[no_mangle]
#[inline(never)]
pub extern "C" fn fixsight_window_close() {
    // SAFETY: as above; a different variable and constant.
    unsafe {
        let p = core::ptr::addr_of_mut!(WINDOWS_CLOSED);
        p.write_volatile(p.read_volatile().wrapping_add(3));
    }
}

static mut WINDOWS_OPENED: u32 = 0;
static mut WINDOWS_CLOSED: u32 = 0;

/// Bytes of stack painted below the caller before each measured call. A
/// kernel that reaches the bottom of this span is reported as an error.
pub const STACK_PAINT_SPAN: usize = 16 * 1024;
const PAINT: u32 = 0x5AC3_96E1;

/// Result of one measured call.
pub struct Measured {
    /// What the kernel returned.
    pub result: Result<(), Fail>,
    /// Index of the instruction-count window (the plugin's N-th report).
    pub window: u32,
    /// Bytes of stack below the caller's stack pointer that the call wrote.
    pub stack: usize,
}

static mut WINDOW_INDEX: u32 = 0;

/// Runs one kernel call inside a counting window with a painted stack.
/// Calibration and real calls both go through this function, so the fixed
/// cost of the markers and of the indirect call is the same and cancels.
#[inline(never)]
pub fn measure(
    run: RunFn,
    params: &Params,
    inputs: &[Img<'_>],
    outputs: &mut [Img<'_>],
    arena: &mut Arena<'_>,
) -> Measured {
    let sp = sys::stack_pointer() & !3;
    let limit = sp - STACK_PAINT_SPAN;
    sys::paint_stack(limit, PAINT);
    fixsight_window_open();
    let result = run(params, inputs, outputs, arena);
    fixsight_window_close();
    let low = sys::lowest_touched(limit, sp, PAINT);
    // SAFETY: single-threaded.
    let window = unsafe {
        let p = core::ptr::addr_of_mut!(WINDOW_INDEX);
        let w = p.read();
        p.write(w + 1);
        w
    };
    let result = if low == limit {
        Err(Fail::Harness(
            "stack use reached the bottom of the painted span",
        ))
    } else {
        result
    };
    Measured {
        result,
        window,
        stack: sp - low,
    }
}

/// Line-buffered writer to the semihosting console.
pub struct Console {
    handle: usize,
    buf: [u8; 256],
    len: usize,
}

impl Console {
    /// Opens the host console.
    pub fn open() -> Self {
        Self {
            handle: sys::open_console(),
            buf: [0; 256],
            len: 0,
        }
    }

    /// Sends what is buffered.
    pub fn flush(&mut self) {
        if self.len > 0 {
            sys::write(self.handle, &self.buf[..self.len]);
            self.len = 0;
        }
    }
}

impl Write for Console {
    fn write_str(&mut self, s: &str) -> fmt::Result {
        for &b in s.as_bytes() {
            if self.len == self.buf.len() {
                self.flush();
            }
            self.buf[self.len] = b;
            self.len += 1;
            if b == b'\n' {
                self.flush();
            }
        }
        Ok(())
    }
}

/// Arena for inputs, outputs and scratch: 2.5 MiB, enough for the QVGA
/// bench images (1.9 MiB with the 614 KiB dense warp map) and the largest
/// golden vector.
const ARENA_WORDS: usize = 640 * 1024;
static mut ARENA: [u32; ARENA_WORDS] = [0; ARENA_WORDS];

/// The target triple this harness was built for (set by `build.rs`).
pub const ARCH: &str = env!("FIXSIGHT_TARGET");

/// The firmware's whole program after start-up: runs every golden vector
/// and bench stage ([`run`]) and ends the emulation with its status.
pub fn start() -> ! {
    let code = run(ARCH);
    sys::exit(code)
}

/// Reports a fault (hard fault, trap) on the console and ends the
/// emulation with status 4.
pub fn fault(what: fmt::Arguments<'_>) -> ! {
    let mut con = Console::open();
    let _ = writeln!(con, "{what}");
    sys::exit(4)
}

/// Any panic: report it on the console, end the emulation with status 3.
#[cfg(target_os = "none")]
#[panic_handler]
fn panic(info: &core::panic::PanicInfo) -> ! {
    let mut con = Console::open();
    let _ = writeln!(con, "panic {info}");
    sys::exit(3)
}

/// An image that only measures bench stages: the f32 port's
/// (`port-cortex-m4f-float`) claims no kernel id, so it runs no golden
/// vector (the plain image of the same core runs them all) and only the
/// bench stages of the ids it adds.
pub const BENCH_ONLY: bool = cfg!(feature = "port-cortex-m4f-float");

/// Runs every golden vector and every bench frame, prints the report and
/// returns the exit status (0 = all vectors bit-exact).
pub fn run(arch: &str) -> u32 {
    let mut con = Console::open();
    // SAFETY: `run` is entered once; this is the only reference to ARENA.
    let words: &'static mut [u32; ARENA_WORDS] = unsafe { &mut *core::ptr::addr_of_mut!(ARENA) };
    let _ = writeln!(con, "fixsight-target {arch}");

    {
        let mut arena = Arena::new(&mut words[..]);
        let m = measure(noop, &Params::EMPTY, &[], &mut [], &mut arena);
        let _ = writeln!(con, "cal win {} stack {}", m.window, m.stack);
    }

    let mut passed = 0usize;
    let all: &[vectors::Vector] = if BENCH_ONLY { &[] } else { vectors::VECTORS };
    for (i, v) in all.iter().enumerate() {
        let mut arena = Arena::new(&mut words[..]);
        let (status, m, detail) = run_vector(v, &mut arena);
        if status == "pass" {
            passed += 1;
        }
        let px = v.expected.first().map_or(0, |e| e.width * e.height);
        let _ = write!(
            con,
            "vec {i} {} {} {status} win {} px {px} stack {}",
            v.id, v.kernel, m.window, m.stack
        );
        match detail {
            Some(d) => {
                let _ = writeln!(con, " {d}");
            }
            None => {
                let _ = writeln!(con);
            }
        }
    }

    bench::run(&mut con, &mut words[..]);
    sequence::run(&mut con, &mut words[..]);

    let total = all.len();
    let _ = writeln!(con, "done vectors {total} passed {passed}");
    if passed == total {
        0
    } else {
        1
    }
}

/// Decodes inputs, runs the kernel and compares every output byte.
fn run_vector<'a>(
    v: &vectors::Vector,
    arena: &mut Arena<'a>,
) -> (&'static str, Measured, Option<Fail>) {
    let unsupported = |window| Measured {
        result: Ok(()),
        window,
        stack: 0,
    };
    let Some(run) = v.run else {
        return (
            "UNSUPPORTED",
            unsupported(u32::MAX),
            Some(Fail::Harness("no dispatch function for this kernel id")),
        );
    };
    if v.inputs.len() > kernels::MAX_IMAGES || v.expected.len() > kernels::MAX_IMAGES {
        return (
            "ERROR",
            unsupported(u32::MAX),
            Some(Fail::Harness("more images than MAX_IMAGES")),
        );
    }
    let mut ins: [Img<'a>; kernels::MAX_IMAGES] = Default::default();
    let mut outs: [Img<'a>; kernels::MAX_IMAGES] = Default::default();
    for (slot, spec) in ins.iter_mut().zip(v.inputs) {
        match arena.image_from(spec, v.row_pad) {
            Some(img) => *slot = img,
            None => {
                return (
                    "ERROR",
                    unsupported(u32::MAX),
                    Some(Fail::Harness("arena full")),
                )
            }
        }
    }
    for (slot, spec) in outs.iter_mut().zip(v.expected) {
        // Packed outputs start as 0xA5 bytes; padded ones as OUT_PAD_BYTE,
        // which their padding must still hold afterwards.
        let fill = if v.row_pad == 0 {
            0xA5
        } else {
            kernels::OUT_PAD_BYTE
        };
        match arena.image_padded(
            spec.elem,
            spec.width,
            spec.height,
            spec.channels,
            v.row_pad,
            fill,
        ) {
            Some(img) => *slot = img,
            None => {
                return (
                    "ERROR",
                    unsupported(u32::MAX),
                    Some(Fail::Harness("arena full")),
                )
            }
        }
    }
    let ins = &ins[..v.inputs.len()];
    let outs = &mut outs[..v.expected.len()];
    let params = Params::new(v.params);
    let m = measure(run, &params, ins, outs, arena);
    if let Err(e) = m.result {
        return ("ERROR", m, Some(e));
    }
    for (got, want) in outs.iter().zip(v.expected) {
        if let Some(f) = got.first_difference(want) {
            return ("FAIL", m, Some(f));
        }
    }
    ("pass", m, None)
}
