//! The `f32` soak shared by `examples/soak_f32.rs` (10 million updates) and
//! `tests/core_soak.rs` (a short run in the normal test run).
//!
//! An invented racetrack-shaped loop (two 120 m straights joined by
//! clothoid-arc-clothoid half turns) is built in `f32` and in `f64`; a
//! point drives round it 0.1 m per update, 0.2 m left of the `f64` path, its
//! station taken from the update count (no summed steps, so the truth does
//! not drift), and both trackers see it. If the `f32` tracker's state
//! drifted, its station would walk away from the `f64` one over the laps.
//!
//! Measured (10 million updates, `examples/soak_f32.rs`): no growth from one
//! million to the next; the largest differences sit at joints, where the
//! `f32` tracker puts points up to 1.2 mm either side of the arc-clothoid
//! joint at the joint itself (2.8 mm at the closing joint: a point just
//! before the end reported at station 0). Cross-track there is right to
//! 3 um: the feet on either side are micrometres apart in distance.

#![allow(dead_code)]

use kappaline::{Continuity, Path, PathBuilder, Pose, Real, Segment, Tracker, TrackerConfig};

/// Capacity of the loop.
pub const N: usize = 8;
/// Metres per update.
pub const STEP: f64 = 0.1;

/// The loop in `T`.
pub fn racetrack<T: Real>() -> Path<T, N> {
    let k = 1.0 / 15.0;
    let spiral = 8.0;
    let arc = (core::f64::consts::PI - k * spiral) / k;
    let c = T::from_f64;
    let mut b = PathBuilder::<T, N>::new(Pose::new(c(0.0), c(0.0), c(0.0))).expect("start");
    for _ in 0..2 {
        for s in [
            Segment::line(c(120.0)),
            Segment::transition(c(spiral), c(0.0), c(k)),
            Segment::arc(c(arc), c(k)),
            Segment::transition(c(spiral), c(k), c(0.0)),
        ] {
            b.try_push(s.expect("segment")).expect("push");
        }
    }
    b.close(Continuity::DEFAULT).expect("closed")
}

/// Metres either side of the loop's closing joint reported apart: there the
/// `f32` tracker may put a point a few millimetres before the end at
/// station 0 (the start of the first segment), a choice between two feet
/// whose distances differ by micrometres, not a drift.
pub const JOINT: f64 = 0.01;

/// Per block of `block` updates, over `blocks` blocks: the largest
/// `|station_f32 - station_f64|` (metres, wrapped) within [`JOINT`] of the
/// closing joint and elsewhere.
pub fn soak(blocks: usize, block: usize) -> Vec<(f64, f64)> {
    let p32 = racetrack::<f32>();
    let p64 = racetrack::<f64>();
    let len = p64.length();
    let mut t32 = Tracker::new(TrackerConfig::<f32>::tractor()).expect("tracker");
    let mut t64 = Tracker::new(TrackerConfig::<f64>::tractor()).expect("tracker");
    let mut out = Vec::with_capacity(blocks);
    let mut k = 0u64;
    for _ in 0..blocks {
        let mut worst = (0.0f64, 0.0f64);
        for _ in 0..block {
            let s = (k as f64 * STEP) % len;
            k += 1;
            let p = p64.at(s);
            let pose = Pose::new(p.x - 0.2 * p.sin, p.y + 0.2 * p.cos, p.heading());
            let pose32 = Pose::new(pose.x as f32, pose.y as f32, pose.heading as f32);
            let (Ok(a), Ok(b)) = (t32.update(&p32, &pose32), t64.update(&p64, &pose)) else {
                panic!("tracking failed at update {k}");
            };
            let mut d = (f64::from(a.station) - b.station).abs();
            // Across the start of the loop the two may sit on either side.
            d = d.min(len - d);
            if s < JOINT || s > len - JOINT {
                worst.0 = worst.0.max(d);
            } else {
                worst.1 = worst.1.max(d);
            }
        }
        out.push(worst);
    }
    out
}
