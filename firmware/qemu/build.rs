//! Puts memory.x where the linker finds it.
use std::{env, fs, path::PathBuf};

fn main() {
    let out = PathBuf::from(env::var_os("OUT_DIR").expect("OUT_DIR set by cargo"));
    fs::copy("memory.x", out.join("memory.x")).expect("copy memory.x");
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=memory.x");
    // The Cortex-M0 board (micro:bit) ticks at a different rate.
    println!("cargo:rustc-check-cfg=cfg(armv6m)");
    if env::var("TARGET").is_ok_and(|t| t.starts_with("thumbv6m")) {
        println!("cargo:rustc-cfg=armv6m");
    }
}
