//! The tracker at a cusp: a forward line, a cusp, and a reversing line that
//! runs straight back over it (the worst case: both legs coincide). The
//! expected stations follow from the construction (stations add up along
//! the path; the reverse leg's tangent is the forward one turned by pi).

use kappaline::{Direction, PathBuilder, Pose, Segment, TrackStatus, Tracker, TrackerConfig};

fn there_and_back() -> kappaline::Path<f64, 4> {
    let mut b = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0)).unwrap();
    b.try_push(Segment::line(20.0).unwrap()).unwrap();
    b.try_push_cusp(Segment::line(20.0).unwrap().reversed())
        .unwrap();
    b.build().unwrap()
}

#[test]
fn reversing_over_the_same_line_stays_on_the_reverse_leg() {
    let path = there_and_back();
    let mut t = Tracker::new(TrackerConfig::tractor()).unwrap();
    // Forwards to the cusp at x = 20 (station 20).
    let mut x = 15.0;
    while x < 19.95 {
        let r = t
            .update_driving(&path, &Pose::new(x, 0.05, 0.0), Direction::Forward)
            .unwrap();
        assert!((r.station - x).abs() < 1e-9, "{} at x = {x}", r.station);
        x += 0.1;
    }
    // Backwards from the cusp: the body keeps heading +x, the point moves -x,
    // and the station on the reverse leg is 20 + (20 - x).
    let mut x = 20.0;
    while x > 10.0 {
        let r = t
            .update_driving(&path, &Pose::new(x, 0.05, 0.0), Direction::Reverse)
            .unwrap();
        assert_eq!(r.status, TrackStatus::OnPath);
        assert!(
            (r.station - (40.0 - x)).abs() < 1e-9,
            "{} at x = {x}",
            r.station
        );
        assert_eq!(r.foot.direction, Direction::Reverse);
        // Left of the reverse leg's tangent (-x) is -y: the point is right of it.
        assert!((r.cross_track + 0.05).abs() < 1e-9);
        assert!(r.heading_error.abs() < 1e-12);
        x -= 0.1;
    }
}

#[test]
fn overrunning_a_cusp_is_not_a_loss() {
    // The vehicle stops 2.5 m late, beyond the cusp, 0.1 m to the side:
    // farther from the cusp point than `lost_distance` (2 m), but only
    // 0.1 m off the line it is on.
    let path = there_and_back();
    let mut t = Tracker::new(TrackerConfig::tractor()).unwrap();
    let mut x = 17.0;
    while x < 22.5 {
        let r = t
            .update_driving(&path, &Pose::new(x, 0.1, 0.0), Direction::Forward)
            .unwrap();
        assert_ne!(r.status, TrackStatus::Lost, "x = {x}");
        x += 0.1;
    }
    // Off to the side beyond the cusp is still a loss.
    let r = t
        .update_driving(&path, &Pose::new(22.5, 2.5, 0.0), Direction::Forward)
        .unwrap();
    assert_eq!(r.status, TrackStatus::Lost);
}

#[test]
fn a_stored_path_with_a_cusp_loads_back() {
    // Store each segment with its anchor, as a path file does, and load it
    // through the checking loader: the pi turn of the tangent at the cusp
    // is what `try_push_cusp` builds, not a heading gap.
    let path = there_and_back();
    let parts: Vec<kappaline::AnchoredSegment<f64>> = (0..path.len())
        .map(|i| kappaline::AnchoredSegment {
            segment: path.segment(i).unwrap(),
            start: path.anchor(i).unwrap(),
        })
        .collect();
    let back =
        kappaline::Path::<f64, 4>::from_anchored(&parts, kappaline::Continuity::DEFAULT, false)
            .unwrap();
    assert!((back.length() - 40.0).abs() < 1e-12);
    let end = back.end_pose();
    assert!(end.x.abs() < 1e-12 && end.y.abs() < 1e-12, "{end:?}");
    // A real heading gap at a cusp is still refused.
    let mut bad = parts.clone();
    bad[1].start.heading += 0.1;
    assert_eq!(
        kappaline::Path::<f64, 4>::from_anchored(&bad, kappaline::Continuity::DEFAULT, false).err(),
        Some(kappaline::PathError::HeadingGap { index: 1 })
    );
}
