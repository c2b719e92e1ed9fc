//! Build script shared by the firmware crates (`cortex-m/`, `riscv32/`):
//! puts the crate's `memory.x` where the start-up crate's `link.x` looks
//! for it, and keeps the relocations in the linked image
//! (`--emit-relocs`): `fixsight-verify targets` measures each kernel id's
//! code bytes from the call and reference graph they give
//! (`host-verify/src/codebytes.rs`). They are sections of their own, not
//! loaded: the image's code and data are the same with or without them.
use std::path::PathBuf;

fn main() {
    let out = PathBuf::from(std::env::var("OUT_DIR").unwrap());
    std::fs::copy("memory.x", out.join("memory.x")).unwrap();
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rustc-link-arg=--emit-relocs");
    println!("cargo:rerun-if-changed=memory.x");
}
