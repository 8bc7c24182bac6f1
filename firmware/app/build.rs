//! Puts memory.x and device.x where the linker finds them.
use std::{env, fs, path::PathBuf};

fn main() {
    let out = PathBuf::from(env::var_os("OUT_DIR").expect("OUT_DIR set by cargo"));
    for f in ["memory.x", "device.x"] {
        fs::copy(f, out.join(f)).expect("copy linker script");
        println!("cargo:rerun-if-changed={f}");
    }
    println!("cargo:rustc-link-search={}", out.display());
}
