//! Sets `cfg(packed_dsp)` when the target has the Armv7E-M DSP extension
//! (the `thumbv7em-*` triples: Cortex-M4 and M7; `thumbv8m.main` is left
//! out because the extension is optional there). With it the DSP
//! instructions are inline assembly; without it (the host, or a core
//! without the extension) the same functions are Rust models of those
//! instructions, bit-identical by the instruction set's definition.

fn main() {
    println!("cargo::rustc-check-cfg=cfg(packed_dsp)");
    println!("cargo:rerun-if-changed=build.rs");
    let target = std::env::var("TARGET").unwrap_or_default();
    if target.starts_with("thumbv7em") {
        println!("cargo:rustc-cfg=packed_dsp");
    }
}
