//! Field passes as offsets of a reference (issue 4).
//!
//! External facts used: the offset curve `q = p + d N` of a plane curve has
//! tangent `(1 - kappa d) T` and curvature `kappa / (1 - kappa d)`
//! (differential geometry of parallel curves, e.g. do Carmo, "Differential
//! Geometry of Curves and Surfaces", sec. 1-5, exercise on parallel curves);
//! the numerical checks below use the three-point (Menger) curvature
//! `4 * area / (|ab| |bc| |ca|)` of the circle through three points and the
//! chord-length sum as arc length, neither of which uses the formulas under test.

use kappaline::{Passes, PathBuilder, Pose, Segment, TrackStatus, Tracker, TrackerConfig};
use proptest::prelude::*;

fn reference() -> kappaline::Path<f64, 8> {
    PathBuilder::new(Pose::new(0.0, 0.0, 0.4))
        .unwrap()
        .push(Segment::line(25.0).unwrap())
        .unwrap()
        .push(Segment::transition(15.0, 0.0, 0.02).unwrap())
        .unwrap()
        .push(Segment::arc(30.0, 0.02).unwrap())
        .unwrap()
        .push(Segment::transition(15.0, 0.02, -0.01).unwrap())
        .unwrap()
        .push(Segment::line(25.0).unwrap())
        .unwrap()
        .build()
        .unwrap()
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]
    #[test]
    fn a_point_on_pass_n_projects_to_cross_track_zero(s in 0.5f64..109.5, n in -4i32..=4) {
        let r = reference();
        let pass = Passes::new(4.5).unwrap().pass(n);
        let q = pass.point(&r, s).unwrap();
        let mut t = Tracker::new(TrackerConfig::tractor()).unwrap();
        let (tr, on) = pass.update(&mut t, &r, &q.pose()).unwrap();
        prop_assert_eq!(tr.status, TrackStatus::OnPath);
        prop_assert!(on.cross_track.abs() < 1e-9, "cross-track {}", on.cross_track);
        prop_assert!((tr.station - s).abs() < 1e-9);
        prop_assert!(on.heading_error.abs() < 1e-9);
    }
}

/// Signed curvature of the circle through three points (Menger curvature).
fn menger(a: (f64, f64), b: (f64, f64), c: (f64, f64)) -> f64 {
    let cross = (b.0 - a.0) * (c.1 - a.1) - (b.1 - a.1) * (c.0 - a.0);
    let d = |p: (f64, f64), q: (f64, f64)| ((p.0 - q.0).powi(2) + (p.1 - q.1).powi(2)).sqrt();
    2.0 * cross / (d(a, b) * d(b, c) * d(c, a))
}

#[test]
fn offset_curvature_matches_the_curve_numerically() {
    let r = reference();
    let passes = Passes::new(6.0).unwrap();
    for n in [-3, -1, 1, 3, 5] {
        let pass = passes.pass(n);
        for s in [10.0, 30.0, 47.0, 55.0, 75.0, 80.0, 100.0] {
            let h = 1e-3;
            let xy = |s: f64| {
                let p = pass.point(&r, s).unwrap();
                (p.x, p.y)
            };
            let num = menger(xy(s - h), xy(s), xy(s + h));
            let got = pass.point(&r, s).unwrap().curvature;
            assert!((num - got).abs() < 1e-6, "n {n} s {s}: {num} vs {got}");
        }
    }
}

#[test]
fn pass_station_is_the_offset_curve_arc_length() {
    let r = reference();
    for n in [-4, -2, 2, 4] {
        let pass = Passes::new(5.0).unwrap().pass(n);
        // Chord-length sum over 20 000 steps: error ~ L h^2 kappa^2 / 24.
        let steps = 20_000;
        let mut len = 0.0;
        let mut prev = pass.point(&r, 0.0).unwrap();
        for i in 1..=steps {
            let q = pass
                .point(&r, r.length() * i as f64 / steps as f64)
                .unwrap();
            len += ((q.x - prev.x).powi(2) + (q.y - prev.y).powi(2)).sqrt();
            prev = q;
        }
        assert!(
            (len - pass.length(&r)).abs() < 1e-6,
            "n {n}: {len} vs {}",
            pass.length(&r)
        );
        assert!((prev.station - pass.length(&r)).abs() < 1e-12);
    }
}

#[test]
fn cusp_station_is_reported() {
    let r = reference();
    // Radius 50 m on the arc: a pass 51 m to the left cusps there; the entry
    // clothoid reaches kappa = 1/51 at 15 * 50/51 m.
    let pass = Passes::new(51.0).unwrap().pass(1);
    match pass.check(&r) {
        Err(kappaline::PassError::Cusp {
            station,
            segment,
            ratio,
        }) => {
            assert_eq!(segment, 1);
            assert!(
                (station - (25.0 + 15.0 * 50.0 / 51.0)).abs() < 1e-9,
                "{station}"
            );
            assert!(ratio >= 1.0);
        }
        other => panic!("expected a cusp, got {other:?}"),
    }
}
