//! The tracker on field-like paths: it stays on its pass beside parallel
//! passes 3 m apart, stays on its branch through a self-crossing, and keeps
//! its window right on closed loops and on paths of many short segments.
//! Geometry here is invented demo data (a made-up field); the checks are
//! geometric facts of the construction (station of a point beside a straight
//! pass is its along-pass coordinate).

use kappaline::{
    Continuity, Path, PathBuilder, Pose, Segment, TrackStatus, Tracker, TrackerConfig,
};
use std::f64::consts::PI;

const SWATH: f64 = 3.0;
const PASS: f64 = 120.0;
const PASSES: usize = 6;

/// Deterministic noise (64-bit LCG, Knuth's MMIX constants), uniform in [-1, 1).
struct Lcg(u64);
impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        2.0 * ((self.0 >> 11) as f64 / (1u64 << 53) as f64) - 1.0
    }
}

/// Boustrophedon: PASSES passes of PASS metres, SWATH apart, joined by
/// half-circle headland turns of radius SWATH / 2, alternating left and right.
fn field<T: kappaline::Real>() -> Path<T, 16> {
    let mut b = PathBuilder::new(Pose::new(
        T::from_f64(0.0),
        T::from_f64(0.0),
        T::from_f64(0.0),
    ))
    .unwrap();
    for i in 0..PASSES {
        b.try_push(Segment::line(T::from_f64(PASS)).unwrap())
            .unwrap();
        if i + 1 < PASSES {
            let k = if i % 2 == 0 {
                2.0 / SWATH
            } else {
                -2.0 / SWATH
            };
            b.try_push(Segment::arc(T::from_f64(PI * SWATH / 2.0), T::from_f64(k)).unwrap())
                .unwrap();
        }
    }
    b.build().unwrap()
}

/// Start station of pass i.
fn pass_start(i: usize) -> f64 {
    i as f64 * (PASS + PI * SWATH / 2.0)
}

/// Which pass (or turn) a station belongs to: Some(i) on pass i.
fn pass_of(s: f64) -> Option<usize> {
    (0..PASSES).find(|&i| s >= pass_start(i) - 1e-9 && s <= pass_start(i) + PASS + 1e-9)
}

/// Drives pass `n` from end to end at `step` metres per update with lateral
/// noise up to `noise` metres and heading noise up to 0.3 rad; returns the
/// largest station error.
fn drive_pass<T: kappaline::Real>(n: usize, noise: f64, step: f64, seed: u64) -> f64 {
    let path = field::<T>();
    let mut rng = Lcg(seed);
    let mut tracker = Tracker::new(TrackerConfig::tractor()).unwrap();
    let y = n as f64 * SWATH;
    let dir = if n % 2 == 0 { 1.0 } else { -1.0 };
    let heading = if n % 2 == 0 { 0.0 } else { PI };
    let mut worst = 0.0f64;
    let mut along = 0.0;
    while along <= PASS {
        let x = if dir > 0.0 { along } else { PASS - along };
        // Left of the path is +y on even passes, -y on odd ones.
        let d = noise * rng.next();
        let pose = Pose::new(
            T::from_f64(x),
            T::from_f64(y + dir * d),
            T::from_f64(heading + 0.3 * rng.next()),
        );
        let t = tracker.update(&path, &pose).unwrap();
        let s = t.station.to_f64();
        let truth = pass_start(n) + along;
        // Never a station on a neighbouring pass.
        if let Some(p) = pass_of(s) {
            assert_eq!(
                p, n,
                "pass {n}: at along {along} reported station {s} (pass {p})"
            );
        }
        assert_ne!(t.status, TrackStatus::Lost, "pass {n} along {along}");
        // Beside a straight pass, away from its ends, the foot is exact.
        if along > 2.0 && along < PASS - 2.0 {
            assert!(
                (s - truth).abs() < 1e-3,
                "pass {n} along {along}: {s} vs {truth}"
            );
            assert!(
                (t.cross_track.to_f64() - d).abs() < 1e-3,
                "cross-track {} vs {d}",
                t.cross_track
            );
        }
        worst = worst.max((s - truth).abs());
        along += step;
    }
    worst
}

#[test]
fn stays_on_its_pass_with_lateral_noise() {
    let mut worst = 0.0f64;
    for n in 0..PASSES {
        for (noise, seed) in [(0.0, 1), (0.5, 2), (1.4, 3), (1.4, 4)] {
            let e64 = drive_pass::<f64>(n, noise, 0.3, seed);
            let e32 = drive_pass::<f32>(n, noise, 0.3, seed);
            // Near the pass ends the foot may slip onto the headland turn,
            // which lies ahead of the pass end or behind its start: a fraction
            // of a metre.
            assert!(
                e64 < 1.5 && e32 < 1.5,
                "pass {n} noise {noise}: {e64} {e32}"
            );
            worst = worst.max(e64).max(e32);
        }
    }
    println!(
        "passes with +-1.4 m noise: max station error {worst:.3e} m (ends of passes included)"
    );
}

#[test]
fn keeps_its_pass_when_nearer_the_neighbour() {
    // 1.7 m left of pass 2 is 1.3 m from pass 3: the nearest point overall
    // is on pass 3, but the windowed tracker stays on pass 2.
    let path = field::<f64>();
    let n = 2;
    let mut tracker = Tracker::new(TrackerConfig::tractor()).unwrap();
    tracker
        .update(&path, &Pose::new(10.0, n as f64 * SWATH, 0.0))
        .unwrap();
    let mut x = 10.0;
    while x < 100.0 {
        let q = Pose::new(x, n as f64 * SWATH + 1.7, 0.0);
        let t = tracker.update(&path, &q).unwrap();
        assert_eq!(
            pass_of(t.station),
            Some(n),
            "x = {x}: station {}",
            t.station
        );
        assert!((t.cross_track - 1.7).abs() < 1e-9);
        x += 0.5;
    }
    // The test discriminates: a whole-path search from the same point (what a
    // tracker without a window would do) lands on pass 3.
    let mut fresh = Tracker::new(TrackerConfig {
        heading_weight: 0.0,
        ..TrackerConfig::tractor()
    })
    .unwrap();
    let t = fresh
        .update(&path, &Pose::new(50.0, n as f64 * SWATH + 1.7, 0.0))
        .unwrap();
    assert_eq!(pass_of(t.station), Some(n + 1));
}

#[test]
fn follows_the_whole_field_through_the_headlands() {
    // Drive the path itself (with lateral noise) from start to end; the
    // reported station follows the true one.
    let path = field::<f64>();
    let mut rng = Lcg(9);
    let mut tracker = Tracker::new(TrackerConfig::tractor()).unwrap();
    let mut s = 0.0;
    let mut worst = 0.0f64;
    while s <= path.length() {
        let p = path.at(s);
        let k = p.curvature.abs();
        // Keep the noise inside the headland turns' radius (0.9 R) on the inside.
        let lim = if k > 0.0 { (0.9 / k).min(1.4) } else { 1.4 };
        let d = lim * rng.next();
        let q = Pose::new(p.x - d * p.sin, p.y + d * p.cos, p.heading());
        let t = tracker.update(&path, &q).unwrap();
        assert_eq!(t.status, TrackStatus::OnPath, "s = {s}");
        worst = worst.max((t.station - s).abs());
        assert!(
            (t.station - s).abs() < 1e-6,
            "s = {s}: reported {}",
            t.station
        );
        s += 0.45;
    }
    println!("field drive: max station error {worst:.3e} m");
}

/// Figure-eight from two circles of radius r tangent to the lines y = +-x,
/// crossing at the origin: line r (NE), right loop clockwise 270 degrees,
/// line 2r (NW through the origin), left loop counter-clockwise 270 degrees,
/// line r back to the origin.
fn figure_eight(r: f64) -> Path<f64, 8> {
    PathBuilder::new(Pose::new(0.0, 0.0, PI / 4.0))
        .unwrap()
        .push(Segment::line(r).unwrap())
        .unwrap()
        .push(Segment::arc(1.5 * PI * r, -1.0 / r).unwrap())
        .unwrap()
        .push(Segment::line(2.0 * r).unwrap())
        .unwrap()
        .push(Segment::arc(1.5 * PI * r, 1.0 / r).unwrap())
        .unwrap()
        .push(Segment::line(r).unwrap())
        .unwrap()
        .close(Continuity::DEFAULT)
        .unwrap()
}

#[test]
fn figure_eight_stays_on_its_branch() {
    let r = 20.0;
    let path = figure_eight(r);
    let len = path.length();
    // The crossing is at the origin: station 0 (= len) and station 2r + 1.5 pi r.
    let p = path.at(2.0 * r + 1.5 * PI * r);
    assert!(p.x.hypot(p.y) < 1e-12);
    for (noise, seed) in [(0.0, 5), (1.4, 6), (1.4, 7)] {
        let mut rng = Lcg(seed);
        let mut tracker = Tracker::new(TrackerConfig::tractor()).unwrap();
        // Three laps in 0.4 m steps.
        let mut s = 0.0;
        while s < 3.0 * len {
            let p = path.at(s);
            let d = noise * rng.next();
            let q = Pose::new(
                p.x - d * p.sin,
                p.y + d * p.cos,
                p.heading() + 0.2 * rng.next(),
            );
            let t = tracker.update(&path, &q).unwrap();
            let truth = s % len;
            let mut e = (t.station - truth).abs();
            e = e.min(len - e); // stations wrap
                                // Lateral noise on lines and arcs leaves the station unchanged.
            assert!(
                e < 1e-6,
                "noise {noise}: s = {truth}: reported {}",
                t.station
            );
            s += 0.4;
        }
    }
}

#[test]
fn single_arc_closed_circle_window_wraps() {
    // One segment closing on itself: the window around the joint covers the
    // end and the start of the same segment.
    let r = 10.0;
    let path: Path<f64, 2> = PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::arc(2.0 * PI * r, 1.0 / r).unwrap())
        .unwrap()
        .close(Continuity::DEFAULT)
        .unwrap();
    let len = path.length();
    let mut tracker = Tracker::new(TrackerConfig::tractor()).unwrap();
    let mut s = 0.0;
    while s < 3.0 * len {
        let p = path.at(s);
        let q = Pose::new(p.x + 0.3 * p.sin, p.y - 0.3 * p.cos, p.heading());
        let t = tracker.update(&path, &q).unwrap();
        let truth = s % len;
        let mut e = (t.station - truth).abs();
        e = e.min(len - e);
        assert!(
            e < 1e-9,
            "s = {truth}: reported {} ({:?})",
            t.station,
            t.status
        );
        assert!((t.cross_track + 0.3).abs() < 1e-9);
        s += 0.5;
    }
}

#[test]
fn many_short_segments_keep_the_foot_in_the_window() {
    // 100 segments of 5 cm each (e.g. a densely fitted curve), window 3 m
    // back and 3 m ahead: 120 segments, more than MAX_WINDOW_SEGMENTS. The
    // segments near the foot must still be searched.
    let mut b = PathBuilder::<f64, 128>::new(Pose::new(0.0, 0.0, 0.0)).unwrap();
    for i in 0..100 {
        let k = 0.05 * ((i as f64) * 0.1).sin();
        b.try_push(Segment::arc(0.05, k).unwrap()).unwrap();
    }
    let path = b.build().unwrap();
    let cfg = TrackerConfig {
        window_back: 3.0,
        window_ahead: 3.0,
        ..TrackerConfig::tractor()
    };
    let mut tracker = Tracker::new(cfg).unwrap();
    let mut s = 0.0;
    while s <= path.length() {
        let p = path.at(s);
        let q = Pose::new(p.x - 0.2 * p.sin, p.y + 0.2 * p.cos, p.heading());
        let t = tracker.update(&path, &q).unwrap();
        assert!(
            (t.station - s).abs() < 1e-6,
            "s = {s}: reported {} ({:?})",
            t.station,
            t.status
        );
        s += 0.07;
    }
}

#[test]
fn ends_of_open_paths_and_loss() {
    let path = field::<f64>();
    let mut tracker = Tracker::new(TrackerConfig::tractor()).unwrap();
    // 0.8 m before the start, 0.2 m left: BeforeStart, station -0.8.
    let t = tracker.update(&path, &Pose::new(-0.8, 0.2, 0.0)).unwrap();
    assert_eq!(t.status, TrackStatus::BeforeStart);
    assert!((t.station + 0.8).abs() < 1e-12 && (t.cross_track - 0.2).abs() < 1e-12);
    // A jump of 2.5 m sideways (onto the next pass's side) is reported lost
    // and the tracker keeps its station.
    let t = tracker.update(&path, &Pose::new(5.0, 0.0, 0.0)).unwrap();
    assert_eq!(t.status, TrackStatus::OnPath);
    let before = tracker;
    let t = tracker.update(&path, &Pose::new(5.5, 2.6, 0.0)).unwrap();
    assert_eq!(t.status, TrackStatus::Lost);
    assert_eq!(tracker, before);
    // Past the end of the last pass.
    let end = path.end_pose();
    let mut t2 = Tracker::new(TrackerConfig::tractor()).unwrap();
    let q = Pose::new(
        end.x + 1.0 * end.heading.cos(),
        end.y + 1.0 * end.heading.sin(),
        end.heading,
    );
    let t = t2.update(&path, &q).unwrap();
    assert_eq!(t.status, TrackStatus::PastEnd);
    assert!((t.station - path.length() - 1.0).abs() < 1e-9);
    assert!((t.distance_to_end + 1.0).abs() < 1e-9);
}
