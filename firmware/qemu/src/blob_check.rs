//! The path blob on target: the meadow field's blob, held in flash, is
//! decoded in chunks as it would arrive over a link, compared with the same
//! path loaded by the generated `load_meadow()`, tracked along, and
//! refused when a bit is flipped. Prints the instructions each record's
//! decoding costs (min / median / max over the records) and those of a
//! whole decode.
//!
//! Called from `main` with one line; it keeps its own timing helpers so
//! that it does not depend on the benchmarks there.

use crate::meter::Meter;
use cortex_m_semihosting::{debug, hprintln};
use kappaline::io::blob::{
    decode, BlobError, Decoder, Origin, Progress, HEADER_LEN, ORIGIN_LEN, RECORD_LEN,
};
use kappaline::{Path, Pose, TrackStatus, Tracker, TrackerConfig};

mod meadow {
    include!("../data/meadow.rs");
}

/// The blob in flash (a `static`: it stays in the read-only image).
static BLOB: &[u8] = include_bytes!("../data/meadow.kpath");

/// Segments the decoded path can hold.
const CAPACITY: usize = 16;
/// Records in the meadow blob.
const RECORDS: usize = 11;

fn fail(why: &str) -> ! {
    hprintln!("FAIL: blob: {}", why);
    debug::exit(debug::EXIT_FAILURE);
    loop {
        cortex_m::asm::wfi();
    }
}

fn check(ok: bool, why: &str) {
    if !ok {
        fail(why);
    }
}

/// Runs the checks; exits with a failure on any mismatch.
#[inline(never)]
pub fn run(meter: &Meter) {
    let (per_record, path) = streamed(meter);
    whole(meter, &path);
    against_loader(&path);
    track(&path);
    corrupted();
    let mut sorted = per_record;
    sorted.sort_unstable();
    hprintln!(
        "{:<44} {:>7} {:>7} {:>7}",
        "blob: one record (min med max)",
        sorted.first().copied().unwrap_or(0),
        sorted.get(RECORDS / 2).copied().unwrap_or(0),
        sorted.last().copied().unwrap_or(0)
    );
    hprintln!(
        "blob: {} bytes in flash, {} segments: checks passed",
        BLOB.len(),
        path.len()
    );
}

/// Header and origin in one chunk, then one record per chunk (each timed),
/// then the CRC.
#[inline(never)]
fn streamed(meter: &Meter) -> ([u32; RECORDS], Path<f32, CAPACITY>) {
    let mut d = Decoder::<f32, CAPACITY>::new();
    let head = HEADER_LEN + ORIGIN_LEN;
    check(
        matches!(
            d.feed(BLOB.get(..head).unwrap_or_default()),
            Ok(Progress::NeedMore)
        ),
        "header",
    );
    check(
        d.info().is_some_and(|i| usize::from(i.segments) == RECORDS),
        "segment count",
    );
    let mut costs = [0u32; RECORDS];
    for (k, cost) in costs.iter_mut().enumerate() {
        let at = head + k * RECORD_LEN;
        let chunk = BLOB.get(at..at + RECORD_LEN).unwrap_or_default();
        let (n, r) = meter.instructions(|| d.feed(chunk));
        check(matches!(r, Ok(Progress::NeedMore)), "record");
        *cost = n;
    }
    let tail = BLOB.get(head + RECORDS * RECORD_LEN..).unwrap_or_default();
    check(matches!(d.feed(tail), Ok(Progress::Done { .. })), "crc");
    match d.finish() {
        Ok((p, info)) => {
            // The loader file's origin, in the blob's units.
            let want = meadow::MEADOW_ORIGIN
                .and_then(|(lat, lon, h)| Origin::from_degrees(lat, lon, h).ok());
            check(info.origin.is_some() && info.origin == want, "origin");
            (costs, p)
        }
        Err(_) => fail("finish"),
    }
}

/// The whole blob in one call, and in 7-byte chunks: the same path.
#[inline(never)]
fn whole(meter: &Meter, streamed: &Path<f32, CAPACITY>) {
    let (n, r) = meter.instructions(|| decode::<f32, CAPACITY>(BLOB));
    hprintln!("{:<44} {:>7}", "blob: decode 315 bytes, 11 segments", n);
    check(r.is_ok_and(|(p, _)| p == *streamed), "whole decode");
    let mut d = Decoder::<f32, CAPACITY>::new();
    for c in BLOB.chunks(7) {
        check(d.feed(c).is_ok(), "7-byte chunks");
    }
    check(
        d.finish().is_ok_and(|(p, _)| p == *streamed),
        "7-byte chunks differ",
    );
}

/// The blob's path against the generated loader's (quantisation: 0.5 mm).
#[inline(never)]
fn against_loader(path: &Path<f32, CAPACITY>) {
    let Ok(table) = meadow::load_meadow() else {
        fail("load_meadow");
    };
    check(table.len() == path.len(), "lengths");
    for i in 0..path.len() {
        let (Some(a), Some(b)) = (table.anchor(i), path.anchor(i)) else {
            fail("anchor");
        };
        check(
            (a.x - b.x).abs() < 1e-3 && (a.y - b.y).abs() < 1e-3,
            "anchor position",
        );
        check((a.heading - b.heading).abs() < 1e-5, "anchor heading");
    }
    check(
        (table.length() - path.length()).abs() < 6e-3,
        "total length",
    );
    check(
        (f64::from(path.length()) - meadow::MEADOW_LENGTH).abs() < 6e-3,
        "length in the loader file",
    );
}

/// Tracks 0.3 m left of the decoded path, every 2 m along it.
#[inline(never)]
fn track(path: &Path<f32, CAPACITY>) {
    let Ok(mut t) = Tracker::new(TrackerConfig::tractor()) else {
        fail("tracker");
    };
    let mut s = 0.0f32;
    while s < path.length() - 1.0 {
        let p = path.at(s);
        let pose = Pose::new(p.x - 0.3 * p.sin, p.y + 0.3 * p.cos, p.heading());
        match t.update(path, &pose) {
            Ok(e) if e.status == TrackStatus::OnPath => {
                check(
                    (e.cross_track - 0.3).abs() < 1e-3,
                    "cross-track on the decoded path",
                );
                check((e.station - s).abs() < 1e-2, "station on the decoded path");
            }
            _ => fail("tracking the decoded path"),
        }
        s += 2.0;
    }
}

/// A flipped bit in a record and a cut blob are refused with their errors.
#[inline(never)]
fn corrupted() {
    let mut copy = [0u8; 315];
    for (d, s) in copy.iter_mut().zip(BLOB) {
        *d = *s;
    }
    if let Some(b) = copy.get_mut(HEADER_LEN + ORIGIN_LEN + 3 * RECORD_LEN + 17) {
        *b ^= 0x01;
    }
    check(
        matches!(
            decode::<f32, CAPACITY>(&copy),
            Err(BlobError::CrcMismatch { .. })
        ),
        "flipped bit accepted",
    );
    check(
        matches!(
            decode::<f32, CAPACITY>(BLOB.get(..200).unwrap_or_default()),
            Err(BlobError::Truncated { received: 200 })
        ),
        "cut blob accepted",
    );
}
