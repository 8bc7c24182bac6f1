//! Results on target against geometry worked out by hand.

use core::f32::consts::PI;

use kappaline::{Continuity, PathBuilder, Pose, Segment, Tracker, TrackerConfig};

use crate::{check, fail};

/// Runs every check; exits on the first mismatch.
pub fn run() {
    line();
    arc();
}

// Its own stack frame: the micro:bit's 16 KiB of RAM cannot hold every test at once.
#[inline(never)]
fn line() {
    let path = match PathBuilder::<f32, 4>::new(Pose::new(0.0, 0.0, 0.3))
        .and_then(|b| b.push(Segment::line(500.0)?))
        .and_then(|b| b.build())
    {
        Ok(p) => p,
        Err(_) => fail("line path"),
    };
    // A point 0.25 m left of station 40 on a line at 0.3 rad.
    let (s, c) = (libm::sinf(0.3), libm::cosf(0.3));
    let mut t = Tracker::new(TrackerConfig::tractor()).unwrap_or_else(|_| fail("cfg"));
    let r = t
        .update(
            &path,
            &Pose::new(40.0 * c - 0.25 * s, 40.0 * s + 0.25 * c, 0.4),
        )
        .unwrap_or_else(|_| fail("line update"));
    check((r.station - 40.0).abs() < 1e-4, "line station");
    check((r.cross_track - 0.25).abs() < 1e-5, "line cross-track");
    check((r.heading_error - 0.1).abs() < 1e-5, "line heading error");
}

#[inline(never)]
fn arc() {
    let path = match PathBuilder::<f32, 4>::new(Pose::new(0.0, 0.0, 0.0))
        .and_then(|b| b.push(Segment::arc(2.0 * PI * 20.0, 0.05)?))
        .and_then(|b| b.close(Continuity::DEFAULT))
    {
        Ok(p) => p,
        Err(_) => fail("arc path"),
    };
    // Circle of radius 20 about (0, 20); the point (20.5, 20) is a quarter
    // turn round (station 10 pi), 0.5 m outside (to the right).
    let mut t = Tracker::new(TrackerConfig::tractor()).unwrap_or_else(|_| fail("cfg"));
    let r = t
        .update(&path, &Pose::new(20.5, 20.0, PI / 2.0))
        .unwrap_or_else(|_| fail("arc update"));
    check((r.station - 10.0 * PI).abs() < 1e-4, "arc station");
    check((r.cross_track + 0.5).abs() < 1e-5, "arc cross-track");
    // Then along the circle, 0.1 m a step, 0.3 m inside: station and
    // cross-track from the circle's own geometry.
    for i in 1..200u32 {
        let s = 10.0 * PI + 0.1 * i as f32;
        let a = s / 20.0;
        let q = Pose::new(19.7 * libm::sinf(a), 20.0 - 19.7 * libm::cosf(a), a);
        let r = t.update(&path, &q).unwrap_or_else(|_| fail("arc step"));
        check((r.station - s).abs() < 2e-4, "arc stepped station");
        check(
            (r.cross_track - 0.3).abs() < 2e-5,
            "arc stepped cross-track",
        );
    }
}
