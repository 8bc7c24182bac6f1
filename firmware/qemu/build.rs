//! Puts memory.x where the linker finds it.
use std::{env, fs, path::PathBuf};

fn main() {
    let out = PathBuf::from(env::var_os("OUT_DIR").expect("OUT_DIR set by cargo"));
    // The micro:bit (Cortex-M0) has 256 KiB of flash and 16 KiB of RAM;
    // the mps2 boards have 4 MiB of each.
    let m0 = env::var("TARGET").is_ok_and(|t| t.starts_with("thumbv6m"));
    // (No file called memory.x in this directory: the linker would find it
    // before the one in OUT_DIR.)
    let memory = if m0 {
        "memory-microbit.x"
    } else {
        "memory-mps2.x"
    };
    fs::copy(memory, out.join("memory.x")).expect("copy memory.x");
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=memory-microbit.x");
    println!("cargo:rerun-if-changed=memory-mps2.x");
    // The Cortex-M0 board (micro:bit) ticks at a different rate.
    println!("cargo:rustc-check-cfg=cfg(armv6m)");
    if env::var("TARGET").is_ok_and(|t| t.starts_with("thumbv6m")) {
        println!("cargo:rustc-cfg=armv6m");
    }
}
