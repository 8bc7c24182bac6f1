//! Bad input gets a typed error and leaves the prior state unchanged
//! (issue 2; project rules: "Bad input ... gets a typed error and leaves
//! prior state untouched"). Each check compares the state before and after.

use kappaline::{
    AnchoredSegment, Continuity, Cursor, Path, PathBuilder, PathError, Pose, Segment, TrackError,
    Tracker, TrackerConfig,
};

const BAD: [f64; 3] = [f64::NAN, f64::INFINITY, f64::NEG_INFINITY];

#[test]
fn segment_constructors() {
    let nonfinite = Err(PathError::NonFinite { index: 0 });
    let nonpositive = Err(PathError::NonPositiveLength { index: 0 });
    for b in BAD {
        assert_eq!(Segment::line(b), nonfinite);
        assert_eq!(Segment::arc(b, 0.1), nonfinite);
        assert_eq!(Segment::arc(1.0, b), nonfinite);
        assert_eq!(Segment::clothoid(b, 0.0, 0.0), nonfinite);
        assert_eq!(Segment::clothoid(1.0, b, 0.0), nonfinite);
        assert_eq!(Segment::clothoid(1.0, 0.0, b), nonfinite);
        assert_eq!(Segment::transition(b, 0.0, 0.1), nonfinite);
        assert_eq!(Segment::transition(1.0, b, 0.1), nonfinite);
        assert_eq!(Segment::transition(1.0, 0.0, b), nonfinite);
        assert_eq!(
            Segment::line(b as f32),
            Err(PathError::NonFinite { index: 0 })
        );
    }
    for l in [0.0, -0.0, -1.0, -1e300, -f64::MIN_POSITIVE] {
        assert_eq!(Segment::line(l), nonpositive);
        assert_eq!(Segment::arc(l, 0.2), nonpositive);
        assert_eq!(Segment::clothoid(l, 0.2, 0.01), nonpositive);
        assert_eq!(Segment::transition(l, 0.0, 0.2), nonpositive);
        let l32 = l as f32; // -1e300 becomes -inf in f32: refused as non-finite
        let want32 = if l32.is_finite() {
            PathError::NonPositiveLength { index: 0 }
        } else {
            PathError::NonFinite { index: 0 }
        };
        assert_eq!(Segment::line(l32), Err(want32));
    }
    // End curvature overflows; the transition's sharpness overflows.
    assert_eq!(Segment::clothoid(1e300, 0.0, 1e300), nonfinite);
    assert_eq!(Segment::transition(1e-300, -1e300, 1e300), nonfinite);
    assert_eq!(
        Segment::clothoid(1e30f32, 0.0, 1e30),
        Err(PathError::NonFinite { index: 0 })
    );
}

fn good_builder() -> PathBuilder<f64, 3> {
    PathBuilder::new(Pose::new(1.0, 2.0, 0.5))
        .unwrap()
        .push(Segment::line(10.0).unwrap())
        .unwrap()
        .push(Segment::arc(5.0, 0.1).unwrap())
        .unwrap()
}

#[test]
fn builder() {
    for b in BAD {
        for pose in [
            Pose::new(b, 0.0, 0.0),
            Pose::new(0.0, b, 0.0),
            Pose::new(0.0, 0.0, b),
        ] {
            assert_eq!(
                PathBuilder::<f64, 4>::new(pose).err(),
                Some(PathError::NonFinite { index: usize::MAX })
            );
        }
    }
    // Out of capacity: typed error, builder unchanged.
    let mut full = good_builder();
    full.try_push(Segment::line(1.0).unwrap()).unwrap();
    let before = full.clone();
    assert_eq!(
        full.try_push(Segment::line(1.0).unwrap()),
        Err(PathError::CapacityExceeded)
    );
    assert_eq!(full, before);
    assert_eq!(
        full.clone().push(Segment::line(1.0).unwrap()).err(),
        Some(PathError::CapacityExceeded)
    );
    // Positions beyond MAX_COORDINATE (1e7 m) are refused: a start there...
    assert_eq!(
        PathBuilder::<f64, 4>::new(Pose::new(f64::MAX, 0.0, 0.0)).err(),
        Some(PathError::OutOfRange)
    );
    assert_eq!(
        PathBuilder::<f32, 4>::new(Pose::new(0.0, -3.0e38, 0.0)).err(),
        Some(PathError::OutOfRange)
    );
    // ... and an end there, leaving the builder as it was.
    let mut far = PathBuilder::<f64, 4>::new(Pose::new(9.0e6, 0.0, 0.0)).unwrap();
    let before = far.clone();
    assert_eq!(
        far.try_push(Segment::line(2.0e6).unwrap()),
        Err(PathError::OutOfRange)
    );
    assert_eq!(far, before);
    // Longer than MAX_SEGMENT_LENGTH: refused when the segment is made.
    assert_eq!(Segment::line(1e300f64), Err(PathError::OutOfRange));
    assert_eq!(far, before);
    // An end heading that overflows f64 (kappa L = 1e310): the length and
    // the curvature are refused by their bounds before it is formed.
    assert_eq!(Segment::arc(1e300f64, 1e10), Err(PathError::OutOfRange));
    assert_eq!(
        Segment::arc(1e3f64, 1e10),
        Err(PathError::CurvatureOutOfRange { index: 0 })
    );
    // f32: an end beyond f32's range although it is finite in f64.
    assert_eq!(Segment::line(3.0e38f32), Err(PathError::OutOfRange));
    let mut far32 = PathBuilder::<f32, 4>::new(Pose::new(9.0e6, 0.0, 0.0)).unwrap();
    let before = far32.clone();
    assert_eq!(
        far32.try_push(Segment::line(2.0e6).unwrap()),
        Err(PathError::OutOfRange)
    );
    assert_eq!(far32, before);
    // f32: a segment shorter than half the station's resolution (50 um at
    // 2 km, where an f32 ulp is 0.12 mm) would have zero length in the path.
    let mut b32 = PathBuilder::<f32, 4>::new(Pose::new(0.0, 0.0, 0.0)).unwrap();
    b32.try_push(Segment::line(2000.0).unwrap()).unwrap();
    let before = b32.clone();
    assert_eq!(
        b32.try_push(Segment::line(5e-5).unwrap()),
        Err(PathError::NonPositiveLength { index: 1 })
    );
    // One ulp long is accepted.
    assert!(b32.clone().try_push(Segment::line(1.3e-4).unwrap()).is_ok());
    assert_eq!(b32, before);
    // Empty builders do not build.
    let empty = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0)).unwrap();
    assert_eq!(empty.clone().build().err(), Some(PathError::Empty));
    assert_eq!(
        empty.close(Continuity::DEFAULT).err(),
        Some(PathError::Empty)
    );
    // Bad tolerances.
    for b in [f64::NAN, f64::INFINITY, -1e-3] {
        for tol in [
            Continuity {
                position: b,
                heading: 1e-3,
            },
            Continuity {
                position: 1e-3,
                heading: b,
            },
        ] {
            assert_eq!(good_builder().close(tol).err(), Some(PathError::OutOfRange));
        }
    }
}

#[test]
fn path_from_segments_and_anchored() {
    let segs = [Segment::line(1.0).unwrap(); 5];
    let start = Pose::new(0.0, 0.0, 0.0);
    assert_eq!(
        Path::<f64, 4>::from_segments(start, &segs).err(),
        Some(PathError::CapacityExceeded)
    );
    assert_eq!(
        Path::<f64, 4>::from_segments(start, &[]).err(),
        Some(PathError::Empty)
    );
    assert_eq!(
        Path::<f64, 4>::from_segments(Pose::new(0.0, f64::NAN, 0.0), &segs[..2]).err(),
        Some(PathError::NonFinite { index: usize::MAX })
    );
    let path = Path::<f64, 8>::from_segments(start, &segs).unwrap();
    let parts: Vec<AnchoredSegment<f64>> = (0..path.len())
        .map(|i| AnchoredSegment {
            segment: path.segment(i).unwrap(),
            start: path.anchor(i).unwrap(),
        })
        .collect();
    assert!(Path::<f64, 8>::from_anchored(&parts, Continuity::DEFAULT, false).is_ok());
    assert_eq!(
        Path::<f64, 4>::from_anchored(&parts, Continuity::DEFAULT, false).err(),
        Some(PathError::CapacityExceeded)
    );
    assert_eq!(
        Path::<f64, 4>::from_anchored(&[], Continuity::DEFAULT, false).err(),
        Some(PathError::Empty)
    );
    for b in BAD {
        let mut bad = parts.clone();
        bad[2].start.y = b;
        assert_eq!(
            Path::<f64, 8>::from_anchored(&bad, Continuity::DEFAULT, false).err(),
            Some(PathError::NonFinite { index: 2 })
        );
        let tol = Continuity {
            position: b,
            heading: 1e-3,
        };
        assert_eq!(
            Path::<f64, 8>::from_anchored(&parts, tol, false).err(),
            Some(PathError::OutOfRange)
        );
    }
    // An open line path is not closed.
    assert_eq!(
        Path::<f64, 8>::from_anchored(&parts, Continuity::DEFAULT, true).err(),
        Some(PathError::PositionGap { index: 0 })
    );
    // Queries: try_at refuses non-finite stations; at never panics.
    for b in BAD {
        assert_eq!(
            path.try_at(b).err(),
            Some(PathError::NonFinite { index: usize::MAX })
        );
        let p = path.at(b);
        assert!(p.x.is_nan() || p.x.is_finite());
    }
    assert!(path.try_at(2.5).is_ok());
    // Out-of-range indices give None.
    assert!(
        path.segment(99).is_none() && path.anchor(99).is_none() && path.segment_start(99).is_none()
    );
    assert!(path.curvature_jump(usize::MAX).is_none());
}

#[test]
fn cursor() {
    let path = good_builder().build().unwrap();
    for b in BAD {
        assert_eq!(
            Cursor::at(&path, b).err(),
            Some(PathError::NonFinite { index: usize::MAX })
        );
        let mut c = Cursor::at(&path, 12.0).unwrap();
        let before = c;
        assert_eq!(
            c.advance(&path, b).err(),
            Some(PathError::NonFinite { index: usize::MAX })
        );
        assert_eq!(c, before);
        assert_eq!(
            c.ahead(&path, b).err(),
            Some(PathError::NonFinite { index: usize::MAX })
        );
        assert_eq!(c, before);
        // f32 too.
        let p32 = PathBuilder::<f32, 2>::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap()
            .push(Segment::line(3.0).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let mut c32 = Cursor::at(&p32, 1.0).unwrap();
        let before = c32;
        assert!(c32.advance(&p32, b as f32).is_err());
        assert_eq!(c32, before);
    }
    // A cursor from a longer path used on a shorter one does not panic.
    let long =
        Path::<f64, 8>::from_segments(Pose::new(0.0, 0.0, 0.0), &[Segment::line(1.0).unwrap(); 8])
            .unwrap();
    let mut c = Cursor::at(&long, 7.5).unwrap();
    assert_eq!(c.segment(), 7);
    let p = c.point(&path);
    assert!(p.x.is_finite());
    assert!(c.advance(&path, 1.0).is_ok());
    assert!(c.ahead(&path, -100.0).is_ok());
}

fn configs_with(b: f64) -> [TrackerConfig<f64>; 5] {
    let f = TrackerConfig::tractor();
    [
        TrackerConfig {
            window_back: b,
            ..f
        },
        TrackerConfig {
            window_ahead: b,
            ..f
        },
        TrackerConfig {
            lost_distance: b,
            ..f
        },
        TrackerConfig { lookahead: b, ..f },
        TrackerConfig {
            heading_weight: b,
            ..f
        },
    ]
}

#[test]
fn tracker_config() {
    for b in BAD {
        for cfg in configs_with(b) {
            assert_eq!(Tracker::new(cfg).err(), Some(TrackError::NonFinite));
        }
    }
    for cfg in configs_with(-1.0) {
        assert_eq!(Tracker::new(cfg).err(), Some(TrackError::OutOfRange));
    }
    // Zero is refused where the value must be positive.
    let f = TrackerConfig::<f64>::tractor();
    assert_eq!(
        Tracker::new(TrackerConfig {
            window_ahead: 0.0,
            ..f
        })
        .err(),
        Some(TrackError::OutOfRange)
    );
    assert_eq!(
        Tracker::new(TrackerConfig {
            lost_distance: 0.0,
            ..f
        })
        .err(),
        Some(TrackError::OutOfRange)
    );
    assert!(Tracker::new(TrackerConfig {
        window_back: 0.0,
        lookahead: 0.0,
        heading_weight: 0.0,
        ..f
    })
    .is_ok());
    let mut t = Tracker::new(f).unwrap();
    let before = t;
    for b in [f64::NAN, f64::INFINITY, -1.0] {
        assert!(t.set_lookahead(b).is_err());
        assert_eq!(t, before);
    }
    assert_eq!(t.set_lookahead(f64::NAN), Err(TrackError::NonFinite));
    assert_eq!(t.set_lookahead(-0.5), Err(TrackError::OutOfRange));
}

#[test]
fn tracker_updates() {
    let path = good_builder().build().unwrap();
    let mut t = Tracker::new(TrackerConfig::tractor()).unwrap();
    for b in BAD {
        for pose in [
            Pose::new(b, 2.0, 0.0),
            Pose::new(3.0, b, 0.0),
            Pose::new(3.0, 2.0, b),
        ] {
            // Before acquisition.
            let before = t;
            assert_eq!(t.update(&path, &pose), Err(TrackError::NonFinite));
            assert_eq!(t.acquire(&path, &pose), Err(TrackError::NonFinite));
            assert_eq!(t, before);
            assert!(!t.is_acquired());
        }
    }
    let on = path.at(4.0).pose();
    t.update(&path, &on).unwrap();
    assert!(t.is_acquired());
    for b in BAD {
        for pose in [
            Pose::new(b, 2.0, 0.0),
            Pose::new(3.0, b, 0.0),
            Pose::new(3.0, 2.0, b),
        ] {
            let before = t;
            assert_eq!(t.update(&path, &pose), Err(TrackError::NonFinite));
            assert_eq!(t, before);
            assert_eq!(t.acquire(&path, &pose), Err(TrackError::NonFinite));
            assert_eq!(t, before);
        }
    }
    // A pose far away (finite) is Lost, state unchanged.
    let before = t;
    let r = t.update(&path, &Pose::new(1e6, -1e6, 0.0)).unwrap();
    assert_eq!(r.status, kappaline::TrackStatus::Lost);
    assert_eq!(t, before);
    // Huge but finite coordinates: refused (their squared distances would
    // overflow to infinity), state unchanged; a huge heading is fine.
    for q in [
        Pose::new(1e300, 1e300, 0.0),
        Pose::new(-f64::MAX, f64::MAX, 0.0),
        Pose::new(0.0, 2.1e7, 0.0),
    ] {
        let before = t;
        assert_eq!(t.update(&path, &q), Err(TrackError::OutOfRange));
        assert_eq!(t.acquire(&path, &q), Err(TrackError::OutOfRange));
        assert_eq!(t, before);
    }
    let mut fresh = Tracker::new(TrackerConfig::tractor()).unwrap();
    let r = fresh.update(&path, &Pose::new(3.0, 2.0, 1e300)).unwrap();
    assert!(r.heading_error.is_finite() && r.cross_track.is_finite());
    // f32: 3e38 is finite in f32 but its square is not.
    let path32 = PathBuilder::<f32, 2>::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(10.0).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let mut t32 = Tracker::new(TrackerConfig::<f32>::tractor()).unwrap();
    assert_eq!(
        t32.update(&path32, &Pose::new(3.0e38, -3.0e38, 0.0)),
        Err(TrackError::OutOfRange)
    );
    // The largest accepted position still gives finite errors in f32.
    let r = t32.update(&path32, &Pose::new(1.9e7, -1.9e7, 0.0)).unwrap();
    assert!(r.cross_track.is_finite() && r.station.is_finite());
}
