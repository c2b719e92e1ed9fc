//! # fixsight-c — the C ABI of the fixsight kernels
//!
//! A static library (`libfixsight_c.a`) and one C99 header,
//! `c-abi/include/fixsight.h`, that give C firmware every public kernel
//! family of the `fixsight` crate with plain C types: pointers, `int32_t`
//! sizes, strides in elements, caller-provided scratch, `int32_t` status
//! codes and `fxs_status_message`. No allocation, no global state, no
//! callbacks.
//!
//! The header is the reference for C callers (sizes of every buffer, what
//! may alias, the status codes, the integer model); the Rust items here are
//! not a Rust API (Rust code calls `fixsight` directly), so the modules are
//! private and only the `#[no_mangle]` symbols leave the crate.
//!
//! # Layout
//!
//! | file | what |
//! |---|---|
//! | `status.rs` | status codes, `fxs_status_message` |
//! | `boundary.rs` | image descriptors, pointer/length/overlap checks, objects in caller storage |
//! | `<family>.rs` | one file per kernel family, the `fxs_<family>_*` functions |
//! | `point_job.rs` | the whole job of the `pipeline` family (`fxs_point_job_*`), beside its edge stream in `pipeline.rs` |
//! | `image_job.rs` | the whole job in image mode (`fxs_image_job_*`), sharing the point job's C types and read-outs |
//!
//! Adding a family (say `blobs`): `src/blobs.rs` with its functions and
//! storage types, `mod blobs;` below, a section `blobs` in the header, the
//! golden dispatch in `c/golden_run.c` and its bad inputs in
//! `c/bad_input.c`; the header test checks that header and Rust agree.
//!
//! # Safety at the boundary
//!
//! `unsafe` lives only in this crate's `extern "C"` functions and in
//! `boundary.rs` (with its macro `zero_valid!`, expanded beside each object
//! type whose zero bytes are a fresh object's start). Every pointer/length
//! pair is checked (NULL, alignment, negative sizes, the kernel's layout
//! rules including `stride * height` overflow, stated length too short,
//! address-space wrap, overlap of a written buffer with any other) before
//! a slice is made; what remains for
//! the caller is stated at each `unsafe` block: the memory behind a pointer
//! must really hold the stated number of elements and not be touched by
//! anyone else during the call (or, for objects, while they are in use).
//!
//! # Panics
//!
//! The kernels return errors instead of panicking. On bare-metal targets
//! the library's panic handler, which no input can reach, executes a
//! permanently undefined instruction so the core's fault handler runs; on
//! hosted targets the standard library's handler is linked.
#![no_std]
#![deny(unsafe_op_in_unsafe_fn)]
#![warn(missing_docs, clippy::undocumented_unsafe_blocks)]

#[cfg(not(target_os = "none"))]
extern crate std;

mod boundary;
mod filter;
mod gradient;
mod hysteresis;
mod image_job;
mod lines;
mod marking;
mod nms;
mod pipeline;
mod point_job;
mod status;
mod thinning;
mod track;
mod warp;

#[cfg(test)]
mod header_check;

/// The library never panics by contract (every entry point validates its
/// arguments and returns a status; tested on the host and by the C
/// firmware's bad-input cases). Should it ever happen on a bare-metal
/// target, the core stops here, spinning until the firmware's watchdog or
/// a debugger takes over; the handler holds no inline assembly (that lives
/// only in `ports/`).
#[cfg(target_os = "none")]
#[panic_handler]
fn panic(_: &core::panic::PanicInfo) -> ! {
    loop {
        core::hint::spin_loop();
    }
}
