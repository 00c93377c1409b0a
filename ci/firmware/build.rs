//! Selects the memory layout for the target: one `memory.x` per machine under
//! `memory/`, none in the crate root (a root `memory.x` would win the linker
//! search over the one copied here).
use std::{env, fs, path::PathBuf};

fn main() {
    let target = env::var("TARGET").unwrap_or_default();
    let machine = match target.as_str() {
        "thumbv6m-none-eabi" => "microbit",
        _ => "mps2-an386",
    };
    let out = PathBuf::from(env::var("OUT_DIR").expect("OUT_DIR"));
    let src = PathBuf::from("memory").join(machine).join("memory.x");
    fs::copy(&src, out.join("memory.x")).expect("copy memory.x");
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=memory");
    println!("cargo:rerun-if-changed=build.rs");
}
