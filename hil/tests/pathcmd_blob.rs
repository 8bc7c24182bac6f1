//! `build-path` writes a ready loader `fn` and a path blob.
//!
//! The committed outputs (`tests/pathcmd_generated/orchard_path.rs` and `.kpath`,
//! and `firmware/qemu/data/meadow.kpath`, which the QEMU firmware decodes
//! from flash) are regenerated here and must match byte for byte, so they
//! stay what the command writes. The generated file is compiled into this
//! test (`include!`) and its `load_orchard()` called: no glue is left to
//! the user. Both forms are compared with the path built in `f64`; the
//! blob must agree within its stated quantisation (0.5 mm positions and
//! lengths, `2^-33` turn headings) plus the `f32` rounding of the loaded
//! path (the values are common practice for an `f32` path of this extent:
//! an ulp is 15 um at 100 m).

use std::path::{Path as FsPath, PathBuf};

use kappaline::io::blob::{decode, Decoder, Progress};
use kappaline::Path;

mod orchard {
    include!("pathcmd_generated/orchard_path.rs");
}

fn out_dir(tag: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("kappaline-blob-{}-{tag}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// Runs build-path with the working directory `hil/` (as `cargo test`
/// does), so the input's name in the header is the relative one.
fn build(args: &[&str], out_rs: &FsPath) {
    let mut v: Vec<String> = args.iter().map(|s| s.to_string()).collect();
    v.push("--out-rs".into());
    v.push(out_rs.display().to_string());
    kappaline_hil::pathcmd::run(&v).unwrap();
}

#[test]
fn the_committed_orchard_files_are_what_build_path_writes() {
    let dir = out_dir("orchard");
    let rs = dir.join("orchard_path.rs");
    build(
        &["--input", "data/orchard_rows.csv", "--name", "orchard"],
        &rs,
    );
    let here = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/pathcmd_generated");
    assert_eq!(
        std::fs::read_to_string(&rs).unwrap(),
        std::fs::read_to_string(here.join("orchard_path.rs")).unwrap(),
        "regenerate: cd hil && cargo run -p kappaline-hil -- build-path --input data/orchard_rows.csv --name orchard --out-rs tests/pathcmd_generated/orchard_path.rs"
    );
    assert_eq!(
        std::fs::read(dir.join("orchard_path.kpath")).unwrap(),
        std::fs::read(here.join("orchard_path.kpath")).unwrap()
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_generated_fn_and_the_blob_give_the_same_path() {
    let from_fn: Path<f32, 15> = orchard::load_orchard().unwrap();
    assert_eq!(from_fn.len(), orchard::ORCHARD_SEGMENTS.len());
    assert!((f64::from(from_fn.length()) - orchard::ORCHARD_LENGTH).abs() < 1e-3);
    let bytes = std::fs::read(
        PathBuf::from(env!("CARGO_MANIFEST_DIR"))
            .join("tests/pathcmd_generated/orchard_path.kpath"),
    )
    .unwrap();
    let (from_blob, info): (Path<f32, 15>, _) = decode(&bytes).unwrap();
    assert!(info.origin.is_none() && orchard::ORCHARD_ORIGIN.is_none());
    assert!(!info.closed && !info.cusps && !orchard::ORCHARD_CLOSED);
    for i in 0..from_fn.len() {
        let (a, b) = (from_fn.anchor(i).unwrap(), from_blob.anchor(i).unwrap());
        assert!(
            (a.x - b.x).abs() < 0.6e-3 && (a.y - b.y).abs() < 0.6e-3,
            "anchor {i}"
        );
        assert!((a.heading - b.heading).abs() < 1e-6, "heading {i}");
        let (s, t) = (from_fn.segment(i).unwrap(), from_blob.segment(i).unwrap());
        assert!((s.length() - t.length()).abs() < 1.1e-3, "length {i}");
        assert!((s.kappa0() - t.kappa0()).abs() < 1e-6, "curvature {i}");
    }
    // Along the whole path, every 0.5 m, the two agree to the quantisation.
    let mut worst = 0.0f32;
    let n = (from_fn.length() / 0.5) as u32;
    for k in 0..=n {
        let s = k as f32 * 0.5;
        let (p, q) = (from_fn.at(s), from_blob.at(s));
        worst = worst.max((p.x - q.x).hypot(p.y - q.y));
    }
    println!("orchard: fn path vs blob path, largest distance {worst:.2e} m");
    assert!(worst < 2.5e-3, "{worst}");
}

#[test]
fn the_qemu_blob_is_what_build_path_writes_for_the_meadow() {
    let dir = out_dir("meadow");
    let rs = dir.join("meadow.rs");
    build(
        &[
            "--input",
            "data/meadow_track.csv",
            "--radius",
            "10",
            "--max-curvature-rate",
            "0.04",
            "--speed",
            "2.5",
            "--name",
            "meadow",
        ],
        &rs,
    );
    let fresh = std::fs::read(dir.join("meadow.kpath")).unwrap();
    let committed = std::fs::read(
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../firmware/qemu/data/meadow.kpath"),
    )
    .unwrap();
    assert_eq!(
        fresh, committed,
        "regenerate firmware/qemu/data/meadow.* (see its README)"
    );
    // In chunks of 7 bytes, as over a slow link.
    let mut d = Decoder::<f32, 16>::new();
    let mut done = false;
    for c in committed.chunks(7) {
        done = matches!(d.feed(c).unwrap(), Progress::Done { .. });
    }
    assert!(done);
    let (p, info) = d.finish().unwrap();
    assert_eq!((p.len(), committed.len()), (11, 16 + 20 + 11 * 25 + 4));
    let (lat, lon, h) = info.origin.unwrap().to_degrees();
    assert_eq!((lat, lon, h), (46.9301, 7.4102, 560.0));
    let _ = std::fs::remove_dir_all(&dir);
}
