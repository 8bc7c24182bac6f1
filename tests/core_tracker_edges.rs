//! The tracker's edges against hand geometry: the loss distance at and
//! either side of it (on the path, past an open end, with an offset curve),
//! the window behind the foot across a joint, the cap on the segments a
//! window covers, overrunning a cusp on the reverse leg, and the bound of
//! the whole-path search.
//!
//! On a line along x the foot of `(x, y)` is `(x, 0)`: station `x - x0`,
//! cross-track `y` (elementary geometry); past an open end the station is
//! measured along the end tangent and the cross-track across it (contract
//! of `TrackStatus::PastEnd` / `BeforeStart`). Distances at the exact edges
//! are binary fractions, so the edge itself is computed without rounding.

use kappaline::{
    Direction, Path, PathBuilder, Pose, Segment, TrackStatus, Tracker, TrackerConfig,
    MAX_WINDOW_SEGMENTS,
};

/// A small distance, m: beyond the rounding of the coordinates used (below
/// 100 m: 1.4e-14 m), far below every tolerance.
const EPS: f64 = 1e-9;

fn line(len: f64) -> Path<f64, 4> {
    PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(len).unwrap())
        .unwrap()
        .build()
        .unwrap()
}

/// Tractor settings (lost at 2 m) with no heading weight.
fn config() -> TrackerConfig<f64> {
    TrackerConfig {
        heading_weight: 0.0,
        ..TrackerConfig::tractor()
    }
}

/// A tracker that has acquired the 20 m line at x = 10, y = 0.
fn on_line(cfg: TrackerConfig<f64>) -> (Tracker<f64>, Path<f64, 4>) {
    let path = line(20.0);
    let mut t = Tracker::new(cfg).unwrap();
    let r = t.update(&path, &Pose::new(10.0, 0.0, 0.0)).unwrap();
    assert_eq!(r.status, TrackStatus::OnPath);
    (t, path)
}

#[test]
fn lost_beyond_lost_distance_not_at_it() {
    // "Above this distance from the path ... Lost": 2 m to either side is
    // on the path, 1 nm more is lost (and the tracker keeps its station).
    for side in [1.0, -1.0] {
        let (mut t, path) = on_line(config());
        let r = t.update(&path, &Pose::new(10.5, 2.0 * side, 0.0)).unwrap();
        assert_eq!(r.status, TrackStatus::OnPath, "{side}");
        assert_eq!((r.station, r.cross_track), (10.5, 2.0 * side));
        let (mut t, path) = on_line(config());
        let before = t;
        let r = t
            .update(&path, &Pose::new(10.5, (2.0 + EPS) * side, 0.0))
            .unwrap();
        assert_eq!(r.status, TrackStatus::Lost, "{side}");
        assert_eq!(t, before, "a lost update leaves the tracker as it was");
    }
}

#[test]
fn past_an_open_end_only_the_lateral_offset_counts() {
    // 5 m past the end of the 20 m line (farther than lost_distance from
    // the end point): PastEnd at station 25 while the lateral offset is
    // within 2 m; Lost beyond it. Before the start likewise.
    for (x, status) in [
        (25.0, TrackStatus::PastEnd),
        (-5.0, TrackStatus::BeforeStart),
    ] {
        let path = line(20.0);
        for (y, want) in [
            (2.0, status),
            (-2.0, status),
            (2.0 + EPS, TrackStatus::Lost),
        ] {
            let mut t = Tracker::new(config()).unwrap();
            let r = t.update(&path, &Pose::new(x, y, 0.0)).unwrap();
            assert_eq!(r.status, want, "({x}, {y})");
            if want != TrackStatus::Lost {
                assert!((r.station - x).abs() < 1e-12, "{}", r.station);
                assert!((r.cross_track - y).abs() < 1e-12);
                assert!((r.distance_to_end - (20.0 - x)).abs() < 1e-12);
            }
        }
    }
}

#[test]
fn the_end_itself_is_on_the_path() {
    // At the end point and straight beside it the foot is the end: OnPath
    // (the distance along the tangent is 0, not beyond).
    let path = line(20.0);
    let mut t = Tracker::new(config()).unwrap();
    let r = t.update(&path, &Pose::new(20.0, 0.5, 0.0)).unwrap();
    assert_eq!(r.status, TrackStatus::OnPath);
    assert!((r.station - 20.0).abs() < 1e-12);
    let mut t = Tracker::new(config()).unwrap();
    let r = t.update(&path, &Pose::new(0.0, -0.5, 0.0)).unwrap();
    assert_eq!(r.status, TrackStatus::OnPath);
    assert!(r.station.abs() < 1e-12);
}

#[test]
fn offset_curve_loss_at_its_edge() {
    // update_offset: loss "judged by the distance to that curve",
    // |cross_track - offset|. The curve 3 m left of the line: a point 5 m
    // left is 2 m from it (kept), 1 nm more is lost; a point 1 m left is
    // 2 m from it on the other side.
    let path = line(20.0);
    for (y, want) in [
        (5.0, TrackStatus::OnPath),
        (1.0, TrackStatus::OnPath),
        (5.0 + EPS, TrackStatus::Lost),
        (1.0 - EPS, TrackStatus::Lost),
    ] {
        let mut t = Tracker::new(config()).unwrap();
        let r = t
            .update_offset(&path, &Pose::new(10.0, 3.0, 0.0), 3.0)
            .unwrap();
        assert_eq!(r.status, TrackStatus::OnPath);
        let r = t
            .update_offset(&path, &Pose::new(10.5, y, 0.0), 3.0)
            .unwrap();
        assert_eq!(r.status, want, "y = {y}: {r:?}");
        if want == TrackStatus::OnPath {
            assert!((r.cross_track - y).abs() < 1e-12 && (r.station - 10.5).abs() < 1e-12);
        }
    }
    // Past the end, beside the offset curve: only the lateral distance.
    let mut t = Tracker::new(config()).unwrap();
    let r = t
        .update_offset(&path, &Pose::new(24.0, 4.5, 0.0), 3.0)
        .unwrap();
    assert_eq!(r.status, TrackStatus::PastEnd);
}

/// A 10 m line along x, then a 10 m arc of curvature 0.05 turning left.
fn line_then_arc() -> Path<f64, 4> {
    PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(10.0).unwrap())
        .unwrap()
        .push(Segment::arc(10.0, 0.05).unwrap())
        .unwrap()
        .build()
        .unwrap()
}

#[test]
fn window_reaches_back_onto_the_previous_segment() {
    // Foot on the arc at station 10.3; the vehicle backs 0.7 m onto the line
    // (window_back 1 m): the foot is found there, station 9.6. Then 1.1 m
    // back from 9.6 (beyond the window): the foot stops at the window's
    // edge, 1 m behind, and the distance along counts towards loss.
    let path = line_then_arc();
    let mut t = Tracker::new(config()).unwrap();
    let p = path.at(10.3);
    let r = t.update(&path, &Pose::new(p.x, p.y, p.heading())).unwrap();
    assert!((r.station - 10.3).abs() < 1e-9, "{}", r.station);
    let r = t.update(&path, &Pose::new(9.6, 0.25, 0.0)).unwrap();
    assert_eq!(r.status, TrackStatus::OnPath);
    assert!((r.station - 9.6).abs() < 1e-9, "{}", r.station);
    assert!((r.cross_track - 0.25).abs() < 1e-9);
    let r = t.update(&path, &Pose::new(8.5, 0.0, 0.0)).unwrap();
    assert_eq!(r.status, TrackStatus::OnPath);
    assert!((r.station - 8.6).abs() < 1e-9, "window edge: {}", r.station);
    // And forwards again across the joint onto the arc.
    let q = path.at(11.0);
    let r = t.update(&path, &Pose::new(q.x, q.y, q.heading())).unwrap();
    assert!((r.station - 11.0).abs() < 1e-9, "{}", r.station);
}

#[test]
fn window_covers_at_most_half_the_segment_cap_on_each_side() {
    // 100 collinear lines of 0.0625 m along x; window 3 m each way (48
    // segments) but "at most MAX_WINDOW_SEGMENTS segments, half of them
    // behind the last foot point and half ahead (its own segment counts on
    // both sides)". From a foot in segment 40 a point 1.5 m ahead (segment
    // 64) is found only as far as the end of segment 40 + 15 = 55, station
    // 56 * 0.0625 = 3.5; 1.5 m behind, as far back as the start of segment
    // 40 - 15 = 25, station 1.5625.
    let seg = 0.0625;
    let half = MAX_WINDOW_SEGMENTS / 2;
    let mut b = PathBuilder::<f64, 128>::new(Pose::new(0.0, 0.0, 0.0)).unwrap();
    for _ in 0..100 {
        b.try_push(Segment::line(seg).unwrap()).unwrap();
    }
    let path = b.build().unwrap();
    let cfg = TrackerConfig {
        window_back: 3.0,
        window_ahead: 3.0,
        ..config()
    };
    let foot = 40.5 * seg;
    for (dx, want) in [
        (1.5, (40 + half) as f64 * seg),
        (-1.5, (40 + 1 - half) as f64 * seg),
        (0.5, foot + 0.5),
        (-0.5, foot - 0.5),
    ] {
        let mut t = Tracker::new(cfg).unwrap();
        t.update(&path, &Pose::new(foot, 0.0, 0.0)).unwrap();
        let r = t.update(&path, &Pose::new(foot + dx, 0.0, 0.0)).unwrap();
        assert!(
            (r.station - want).abs() < 1e-9,
            "{dx}: {} vs {want}",
            r.station
        );
    }
}

#[test]
fn overrunning_a_cusp_backwards_is_judged_by_the_lateral_offset() {
    // Forward 20 m along x, cusp, 20 m reversing back along it. Reversing
    // from x = 15 towards the cusp and 2.5 m beyond it (x = 22.5): on the
    // reverse leg the point lies behind its start, farther than 2 m from the
    // cusp point, but only its offset across the line decides: 0.5 m and
    // 2 m - 1 nm are on the path, 2 m + 1 nm lost (the reverse leg's tangent
    // is (cos pi, sin pi), whose rounded sine moves the exact edge by 4e-16 m).
    // Left of the reverse tangent (-x) is -y.
    let mut b = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0)).unwrap();
    b.try_push(Segment::line(20.0).unwrap()).unwrap();
    b.try_push_cusp(Segment::line(20.0).unwrap().reversed())
        .unwrap();
    let path = b.build().unwrap();
    for (y, want) in [
        (0.5, TrackStatus::OnPath),
        (2.0 - EPS, TrackStatus::OnPath),
        (2.0 + EPS, TrackStatus::Lost),
    ] {
        let mut t = Tracker::new(config()).unwrap();
        let mut x = 15.0;
        let mut last = None;
        while x <= 22.5 + 1e-9 {
            let r = t
                .update_driving(&path, &Pose::new(x, 0.5, 0.0), Direction::Reverse)
                .unwrap();
            assert_eq!(r.foot.direction, Direction::Reverse, "{x}");
            assert_ne!(r.status, TrackStatus::Lost, "{x}");
            last = Some(x);
            x += 0.25;
        }
        assert_eq!(last, Some(22.5));
        let r = t
            .update_driving(&path, &Pose::new(22.5, y, 0.0), Direction::Reverse)
            .unwrap();
        assert_eq!(r.status, want, "y = {y}: {r:?}");
        if want != TrackStatus::Lost {
            assert!((r.cross_track + y).abs() < 1e-12, "{}", r.cross_track);
            // The foot sticks to the cusp (station 20).
            assert!((r.foot.station - 20.0).abs() < 1e-12);
        }
    }
}

/// A U: 10 m along x, a half circle of radius 5 m to the left, 10 m back
/// along y = 10.
fn u_turn() -> Path<f64, 4> {
    PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(10.0).unwrap())
        .unwrap()
        .push(Segment::arc(5.0 * core::f64::consts::PI, 0.2).unwrap())
        .unwrap()
        .push(Segment::line(10.0).unwrap())
        .unwrap()
        .build()
        .unwrap()
}

#[test]
fn whole_path_search_finds_the_nearest_segment_after_a_nearer_bound() {
    // Near the end of the U's last leg, at (0.5, 9): 1 m from it (foot at
    // (0.5, 10), station 10 + 5 pi + 9.5), 9 m from the first leg. The last
    // leg is examined after the first has given a best of 9 m; every point
    // of it lies within 5 m (half its length) of its chord's midpoint (5,
    // 10), so its distance is at least |q - mid| - 5 = 0.52 m: it must be
    // searched. Also from (-0.5, 10.5), beyond its end (1 m from (0, 10)
    // along the tangent: the bound is tight there).
    let path = u_turn();
    let end = 10.0 + 5.0 * core::f64::consts::PI + 10.0;
    for (x, y, station, cross) in [
        (0.5, 9.0, end - 0.5, 1.0),
        (-0.5, 10.0, end + 0.5, 0.0),
        (0.5, 0.75, 0.5, 0.75),
        (15.0 - 0.25, 5.0, 10.0 + 2.5 * core::f64::consts::PI, 0.25),
    ] {
        for acquire_step in [false, true] {
            let mut t = Tracker::new(config()).unwrap();
            let pose = Pose::new(x, y, 0.0);
            let r = if acquire_step {
                loop {
                    match t.acquire_step(&path, &pose).unwrap() {
                        kappaline::Acquisition::Done(r) => break r,
                        kappaline::Acquisition::Searching { .. } => {}
                    }
                }
            } else {
                t.acquire(&path, &pose).unwrap()
            };
            assert!(
                (r.station - station).abs() < 1e-9,
                "({x}, {y}): {} vs {station}",
                r.station
            );
            assert!(
                (r.cross_track - cross).abs() < 1e-9,
                "({x}, {y}): {}",
                r.cross_track
            );
        }
    }
}
