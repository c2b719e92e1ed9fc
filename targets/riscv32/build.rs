//! Puts `memory.x` where riscv-rt's `link.x` looks for it, and passes
//! the target triple to the program.
use std::path::PathBuf;

fn main() {
    let out = PathBuf::from(std::env::var("OUT_DIR").unwrap());
    std::fs::copy("memory.x", out.join("memory.x")).unwrap();
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=memory.x");
    println!(
        "cargo:rustc-env=FIXSIGHT_TARGET={}",
        std::env::var("TARGET").unwrap()
    );
}
