//! Puts memory.x where the linker finds it, and writes the path blob the
//! minimal firmware loads (`bin/minimal.rs`).
use std::{env, fs, path::PathBuf};

use kappaline::io::blob::{encode, encoded_len, EncodeOptions};
use kappaline::{PathBuilder, Pose, Segment};

/// Segments of the minimal firmware's path (an invented test track).
const MINIMAL_SEGMENTS: usize = 100;

/// The minimal firmware's path, built on the host in `f64` as a planner
/// would, and written as a blob: 100 segments repeating a 10 m line, a
/// 4 m transition to 1/10 m, a 4 m arc and a 4 m transition back.
fn minimal_blob() -> Vec<u8> {
    let mut b =
        PathBuilder::<f64, MINIMAL_SEGMENTS>::new(Pose::new(0.0, 0.0, 0.0)).expect("start pose");
    for i in 0..MINIMAL_SEGMENTS {
        let seg = match i % 4 {
            0 => Segment::line(10.0),
            1 => Segment::transition(4.0, 0.0, 0.1),
            2 => Segment::arc(4.0, 0.1),
            _ => Segment::transition(4.0, 0.1, 0.0),
        };
        b.try_push(seg.expect("segment")).expect("push");
    }
    let path = b.build().expect("path");
    let mut blob = vec![0u8; encoded_len(MINIMAL_SEGMENTS, false)];
    encode(&path, &EncodeOptions::DEFAULT, &mut blob).expect("encode");
    blob
}

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
    fs::write(out.join("minimal.kpath"), minimal_blob()).expect("write minimal.kpath");
    println!("cargo:rerun-if-changed=build.rs");
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=memory-microbit.x");
    println!("cargo:rerun-if-changed=memory-mps2.x");
    // The Cortex-M0 board (micro:bit) ticks at a different rate.
    println!("cargo:rustc-check-cfg=cfg(armv6m)");
    if env::var("TARGET").is_ok_and(|t| t.starts_with("thumbv6m")) {
        println!("cargo:rustc-cfg=armv6m");
    }
}
