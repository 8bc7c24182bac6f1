//! Replays the committed fuzz corpus (`fuzz/corpus/<target>/`) through the
//! same checks the cargo-fuzz targets run (`fuzz/harness.rs`), on stable,
//! in the normal test run. A crash found by fuzzing is added to the corpus
//! and stays a regression test here.

#[path = "../fuzz/harness.rs"]
mod harness;

use std::path::PathBuf;

fn replay(target: &str, check: fn(&[u8])) {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("fuzz/corpus")
        .join(target);
    let mut files: Vec<_> = std::fs::read_dir(&dir)
        .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
        .filter_map(Result::ok)
        .map(|e| e.path())
        .filter(|p| p.is_file())
        .collect();
    files.sort();
    assert!(files.len() >= 3, "{target}: corpus nearly empty");
    for f in &files {
        let data = std::fs::read(f).unwrap();
        let outcome = std::panic::catch_unwind(|| check(&data));
        assert!(outcome.is_ok(), "{target}: {} fails", f.display());
    }
    println!("{target}: {} corpus inputs replayed", files.len());
}

#[test]
fn blob_corpus() {
    replay("blob", harness::blob);
}

#[test]
fn path_guidance_corpus() {
    replay("path_guidance", harness::path_guidance);
}

#[test]
fn fit_g1_corpus() {
    replay("fit_g1", harness::fit_g1);
}

#[test]
fn link_corpus() {
    replay("link", harness::link);
}
