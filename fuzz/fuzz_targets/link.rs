//! cargo-fuzz target: see `fuzz/harness.rs` for what is checked.
#![no_main]

#[path = "../harness.rs"]
mod harness;

libfuzzer_sys::fuzz_target!(|data: &[u8]| harness::link(data));
