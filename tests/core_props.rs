//! Property tests on random valid paths (proptest; set PROPTEST_CASES for longer runs).
//! The checks are definitions: a point on the path is at distance 0 from it;
//! the heading error is wrapped into (-pi, pi]; moving by a then b is moving by a + b.

use kappaline::{
    Continuity, Cursor, Path, PathBuilder, Pose, Real, Segment, Tracker, TrackerConfig,
};
use proptest::prelude::*;

const N: usize = 16;

/// One random segment: line, arc (radius >= 2.5 m) or clothoid.
fn segment() -> impl Strategy<Value = Segment<f64>> {
    prop_oneof![
        (0.5f64..150.0).prop_map(|l| Segment::line(l).unwrap()),
        (0.5f64..60.0, -0.4f64..0.4).prop_map(|(l, k)| Segment::arc(l, k).unwrap()),
        (0.5f64..60.0, -0.4f64..0.4, -0.4f64..0.4)
            .prop_map(|(l, a, b)| Segment::transition(l, a, b).unwrap()),
        (1.0f64..300.0, -0.01f64..0.01, -12.0f64..-5.0, any::<bool>()).prop_map(
            |(l, k, e, neg)| Segment::clothoid(l, k, if neg { -1.0 } else { 1.0 } * 10f64.powf(e))
                .unwrap()
        ),
    ]
}

fn start() -> impl Strategy<Value = Pose<f64>> {
    (-2000.0f64..2000.0, -2000.0f64..2000.0, -10.0f64..10.0)
        .prop_map(|(x, y, h)| Pose::new(x, y, h))
}

fn open_path() -> impl Strategy<Value = Path<f64, N>> {
    (start(), prop::collection::vec(segment(), 1..12))
        .prop_map(|(p, segs)| Path::from_segments(p, &segs).unwrap())
}

/// A closed loop: a rounded rectangle (sides w, h; four quarter turns of
/// radius r, either way round), split arcs optional.
fn closed_path() -> impl Strategy<Value = Path<f64, N>> {
    (
        start(),
        1.0f64..200.0,
        1.0f64..200.0,
        2.5f64..40.0,
        any::<bool>(),
        any::<bool>(),
    )
        .prop_map(|(p, w, h, r, cw, split)| {
            let k = if cw { -1.0 / r } else { 1.0 / r };
            let quarter = core::f64::consts::FRAC_PI_2 * r;
            let mut b = PathBuilder::new(p).unwrap();
            for side in [w, h, w, h] {
                b.try_push(Segment::line(side).unwrap()).unwrap();
                if split {
                    b.try_push(Segment::arc(quarter * 0.3, k).unwrap()).unwrap();
                    b.try_push(Segment::arc(quarter * 0.7, k).unwrap()).unwrap();
                } else {
                    b.try_push(Segment::arc(quarter, k).unwrap()).unwrap();
                }
            }
            b.close(Continuity::DEFAULT).unwrap()
        })
}

fn any_path() -> impl Strategy<Value = Path<f64, N>> {
    prop_oneof![open_path(), closed_path()]
}

fn exact_config() -> TrackerConfig<f64> {
    TrackerConfig {
        heading_weight: 0.0,
        ..TrackerConfig::tractor()
    }
}

/// Headings: ordinary, near and at multiples of pi, and huge.
fn heading() -> impl Strategy<Value = f64> {
    prop_oneof![
        -10.0f64..10.0,
        (-20i32..20, -1e-12f64..1e-12).prop_map(|(k, e)| k as f64 * core::f64::consts::PI + e),
        Just(core::f64::consts::PI),
        Just(-core::f64::consts::PI),
        (-1e20f64..1e20),
        Just(f64::MAX),
        Just(-f64::MAX),
    ]
}

proptest! {
    #[test]
    fn points_on_the_path_project_onto_themselves(path in any_path(), frac in 0.0f64..1.0) {
        let s = frac * path.length();
        let p = path.at(s);
        // Windowed: tracker placed 0.5 m behind, so the branch is known
        // (a multi-lap arc passes through the same point on every lap).
        let mut t = Tracker::new(exact_config()).unwrap();
        t.resume_at(Cursor::at(&path, s - 0.5).unwrap());
        let r = t.update(&path, &p.pose()).unwrap();
        prop_assert!(r.cross_track.abs() < 1e-7, "d = {}", r.cross_track);
        let mut ds = (r.station - s).abs();
        if path.is_closed() { ds = ds.min(path.length() - ds); }
        prop_assert!(ds < 1e-6, "station {} vs {}", r.station, s);
        // Whole-path acquisition: distance 0, possibly on another branch
        // through the same point (self-crossings), so compare positions.
        let mut fresh = Tracker::new(exact_config()).unwrap();
        let a = fresh.update(&path, &p.pose()).unwrap();
        prop_assert!(a.cross_track.abs() < 1e-7);
        let q = path.at(a.station);
        prop_assert!((q.x - p.x).hypot(q.y - p.y) < 1e-6);
    }

    #[test]
    fn heading_error_is_wrapped(path in any_path(), frac in 0.0f64..1.0, h in heading(), d in -1.5f64..1.5) {
        let p = path.at(frac * path.length());
        let q = Pose::new(p.x - d * p.sin, p.y + d * p.cos, h);
        let mut t = Tracker::new(TrackerConfig::tractor()).unwrap();
        let r = t.update(&path, &q).unwrap();
        let pi = core::f64::consts::PI;
        prop_assert!(r.heading_error > -pi && r.heading_error <= pi, "{}", r.heading_error);
        // Again in f32.
        let h32 = h as f32;
        prop_assert!(h32.is_finite() || h.abs() > f32::MAX as f64);
        if h32.is_finite() {
            let w = h32.wrap_angle();
            prop_assert!(w > -core::f32::consts::PI && w <= core::f32::consts::PI, "{} -> {}", h32, w);
        }
        let w = h.wrap_angle();
        prop_assert!(w > -pi && w <= pi);
        // For moderate angles the wrap keeps the angle modulo 2 pi.
        if h.abs() < 1e6 {
            prop_assert!((w.sin() - h.sin()).abs() < 1e-9 && (w.cos() - h.cos()).abs() < 1e-9);
        }
    }

    #[test]
    fn advance_a_then_b_is_advance_a_plus_b(path in any_path(), f0 in 0.0f64..1.0, fa in -1.0f64..1.0, fb in -1.0f64..1.0, laps in -2.0f64..2.0) {
        let len = path.length();
        let s0 = f0 * len;
        // On open paths keep both stops inside (the ends clamp by design);
        // on closed ones go round up to two laps either way.
        let (a, b) = if path.is_closed() {
            (fa * len * laps, fb * len)
        } else {
            let a = fa.abs() * (len - s0) * if fa < 0.0 { -s0 / (len - s0).max(1e-9) } else { 1.0 };
            let s1 = (s0 + a).clamp(0.0, len);
            let b = if fb >= 0.0 { fb * (len - s1) } else { fb * s1 };
            (a, b)
        };
        let mut c1 = Cursor::at(&path, s0).unwrap();
        c1.advance(&path, a).unwrap();
        let (p1, _) = c1.advance(&path, b).unwrap();
        let mut c2 = Cursor::at(&path, s0).unwrap();
        let (p2, _) = c2.advance(&path, a + b).unwrap();
        let tol = 1e-9 * (1.0 + len + a.abs() + b.abs());
        prop_assert!((p1.x - p2.x).hypot(p1.y - p2.y) < tol, "{:?} vs {:?}", (p1.x, p1.y), (p2.x, p2.y));
        let mut ds = (c1.station(&path) - c2.station(&path)).abs();
        if path.is_closed() { ds = ds.min(len - ds); }
        prop_assert!(ds < tol);
        // The lookahead agrees with advancing.
        let c3 = Cursor::at(&path, s0).unwrap();
        let p3 = c3.ahead(&path, a + b).unwrap();
        prop_assert!((p3.x - p2.x).hypot(p3.y - p2.y) < tol);
    }

    #[test]
    fn f32_cursor_additivity(path in any_path(), f0 in 0.0f64..1.0, steps in prop::collection::vec((1u32..2000).prop_map(|k| k as f32 * 1e-3), 1..200)) {
        // Many small forward steps in f32 land where one step of their sum does.
        let p32 = f32_copy(&path);
        let len = p32.length();
        let s0 = (f0 as f32) * len * 0.5;
        let total: f64 = steps.iter().map(|&s| s as f64).sum();
        prop_assume!(path.is_closed() || (s0 as f64) + total < len as f64);
        let mut c1 = Cursor::at(&p32, s0).unwrap();
        let mut p1 = c1.point(&p32);
        for &s in &steps {
            p1 = c1.advance(&p32, s).unwrap().0;
        }
        let mut c2 = Cursor::at(&p32, s0).unwrap();
        let (p2, _) = c2.advance(&p32, total as f32).unwrap();
        prop_assert!(((p1.x - p2.x) as f64).hypot((p1.y - p2.y) as f64) < 1e-3);
    }
}

/// The same path in f32 (segments and start pose narrowed).
fn f32_copy(path: &Path<f64, N>) -> Path<f32, N> {
    let a = path.anchor(0).unwrap();
    let mut b = PathBuilder::new(Pose::new(a.x as f32, a.y as f32, a.heading as f32)).unwrap();
    for i in 0..path.len() {
        let s = path.segment(i).unwrap();
        b.try_push(
            Segment::clothoid(s.length() as f32, s.kappa0() as f32, s.sigma() as f32).unwrap(),
        )
        .unwrap();
    }
    if path.is_closed() {
        b.close(Continuity {
            position: 0.05,
            heading: 1e-3,
        })
        .unwrap()
    } else {
        b.build().unwrap()
    }
}

/// Motions along a path: steps of station (mostly forwards, some back) and
/// lateral offsets, well inside every radius of the random paths (>= 2.5 m).
fn motions() -> impl Strategy<Value = Vec<(f64, f64)>> {
    prop::collection::vec((-0.3f64..0.6, -0.3f64..0.3), 1..60)
}

proptest! {
    // The foot stepped from cycle to cycle (track/foot.rs) against the
    // closed-form evaluation of the path (`Path::at`, checked against mpmath
    // in core_clothoid.rs): a point put `d` along the normal at station `s`,
    // with |kappa d| < 1 there, has its foot at `s` (definition of the foot
    // point), and the lookahead is the closed-form point `lookahead` beyond.
    #[test]
    fn stepped_foot_equals_the_closed_form_projection(
        path in any_path(),
        frac in 0.0f64..1.0,
        moves in motions(),
    ) {
        let margin = 6.0;
        let len = path.length();
        prop_assume!(len > 3.0 * margin);
        let mut s = margin + frac * (len - 3.0 * margin);
        let mut t = Tracker::new(exact_config()).unwrap();
        t.resume_at(Cursor::at(&path, s).unwrap());
        for (ds, d) in moves {
            s = (s + ds).clamp(margin, len - 2.0 * margin);
            let p = path.at(s);
            let q = Pose::new(p.x - d * p.sin, p.y + d * p.cos, p.heading());
            let r = t.update(&path, &q).unwrap();
            let mut e = (r.station - s).abs();
            if path.is_closed() {
                e = e.min(len - e);
            }
            prop_assert!(e < 1e-6, "station {} vs {s}", r.station);
            prop_assert!((r.cross_track - d).abs() < 1e-6, "cross-track {} vs {d}", r.cross_track);
            prop_assert!((r.foot.x - p.x).abs() < 1e-6 && (r.foot.y - p.y).abs() < 1e-6);
            let a = path.at(s + t.config().lookahead);
            prop_assert!((r.ahead.x - a.x).abs() < 1e-6 && (r.ahead.y - a.y).abs() < 1e-6);
            prop_assert!((r.ahead.cos - a.cos).abs() < 1e-9 && (r.ahead.sin - a.sin).abs() < 1e-9);
        }
    }
}
