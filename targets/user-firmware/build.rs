//! Puts `memory.x` (a part with 256 KiB of flash and 64 KiB of RAM) where
//! the start-up crate's `link.x` looks for it.
use std::path::PathBuf;

fn main() {
    let out = PathBuf::from(std::env::var("OUT_DIR").unwrap());
    std::fs::copy("memory.x", out.join("memory.x")).unwrap();
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=memory.x");
}
