//! Headland turns (issue 4): within the limits, tangent to the passes, for
//! spacings below, at and above the turning diameter.
//!
//! What the checks rest on: the limits are the inputs themselves (a turn
//! must not exceed them); "tangent to the passes" is the pass end and start
//! pose computed by the pass geometry; the turning diameter is `2 / kappa_max`
//! (elementary geometry: the circle of minimum radius).

use kappaline::{
    check_path, Direction, FieldEnd, HeadlandTurn, Passes, PathBuilder, PathLimits, Pose, Real,
    Segment, TurnKind, TurnPolicy, ViolationKind,
};

const PI: f64 = core::f64::consts::PI;

fn reference() -> kappaline::Path<f64, 8> {
    // A gently curving reference whose last 30 m are straight.
    PathBuilder::new(Pose::new(10.0, -5.0, 0.3))
        .unwrap()
        .push(Segment::line(40.0).unwrap())
        .unwrap()
        .push(Segment::transition(20.0, 0.0, 0.004).unwrap())
        .unwrap()
        .push(Segment::transition(20.0, 0.004, 0.0).unwrap())
        .unwrap()
        .push(Segment::line(30.0).unwrap())
        .unwrap()
        .build()
        .unwrap()
}

fn check_turn(
    turn: &HeadlandTurn<f64, 12>,
    limits: &PathLimits<f64>,
    from: Pose<f64>,
    to: Pose<f64>,
) {
    let path = turn.to_path::<12>().unwrap();
    // Limits: curvature and sharpness never above the vehicle's (jumps only
    // where the limits allow them, i.e. without a sharpness bound).
    let report = check_path::<f64, 12, 16>(&path, limits);
    for v in report.violations.iter() {
        assert!(
            v.kind == ViolationKind::CurvatureJump && limits.max_sharpness.is_none(),
            "{v:?}"
        );
    }
    assert!(report.peak_curvature <= limits.max_curvature * (1.0 + 1e-12));
    if let Some(s) = limits.max_sharpness {
        assert!(report.peak_sharpness <= s * (1.0 + 1e-12));
        // Curvature-continuous: zero curvature where it meets the straight passes.
        assert!(path.at(0.0).curvature.abs() < 1e-12);
        assert!(path.at(path.length()).curvature.abs() < 1e-12);
    }
    // Begins on the pass end, tangent to it.
    let a = path.at(0.0);
    assert!((a.x - from.x).abs() < 1e-12 && (a.y - from.y).abs() < 1e-12);
    assert!((a.body_heading() - from.heading).wrap_angle().abs() < 1e-12);
    // Ends on the next pass start, tangent to it, driving forwards.
    let b = path.at(path.length());
    assert!(
        (b.x - to.x).abs() < 1e-9 && (b.y - to.y).abs() < 1e-9,
        "{b:?} vs {to:?}"
    );
    assert!((b.body_heading() - to.heading).wrap_angle().abs() < 1e-9);
    assert_eq!(b.direction, Direction::Forward);
    // Body heading is continuous at every joint, cusps included.
    for i in 1..path.len() {
        let s = path.segment_start(i).unwrap();
        let before = path.at(s - 1e-7).body_heading();
        let after = path.at(s + 1e-7).body_heading();
        assert!((after - before).wrap_angle().abs() < 1e-5, "joint {i}");
    }
}

#[test]
fn spacing_below_at_and_above_the_turning_diameter() {
    let r = reference();
    let kappa_max = 0.2; // R = 5 m, turning diameter 10 m
    let diameter = 2.0 / kappa_max;
    let with_clothoids = PathLimits::new(kappa_max, Some(0.08), 1e-9).unwrap();
    let plain_arcs = PathLimits::new(kappa_max, None, 1e-9).unwrap();
    for limits in [with_clothoids, plain_arcs] {
        for spacing in [
            0.35 * diameter,
            0.8 * diameter,
            diameter,
            1.3 * diameter,
            3.0 * diameter,
        ] {
            for k in [1, -1] {
                let passes = Passes::new(spacing).unwrap();
                for policy in [TurnPolicy::ForwardOnly, TurnPolicy::AllowReverse] {
                    let turn = HeadlandTurn::<f64, 12>::between_passes(
                        &r,
                        &passes,
                        2,
                        2 + k,
                        FieldEnd::End,
                        &limits,
                        policy,
                    )
                    .unwrap();
                    let from = passes.pass(2).end_pose(&r).unwrap();
                    let mut to = passes.pass(2 + k).end_pose(&r).unwrap();
                    to.heading = (to.heading + PI).wrap_angle();
                    check_turn(&turn, &limits, from, to);
                    // Plain arcs: exactly the turning diameter is a U-turn of
                    // two quarter circles; with clothoids it needs more room.
                    let fits = spacing >= diameter - 1e-12
                        && (limits.max_sharpness.is_none() || spacing > 1.2 * diameter);
                    if fits {
                        assert_eq!(turn.kind, TurnKind::UTurn, "spacing {spacing}");
                    }
                    if spacing < diameter {
                        let want = match policy {
                            TurnPolicy::ForwardOnly => TurnKind::Loop,
                            TurnPolicy::AllowReverse => TurnKind::Reversing,
                        };
                        assert_eq!(turn.kind, want, "spacing {spacing}");
                    }
                    if turn.kind == TurnKind::Reversing {
                        let dirs: Vec<_> = turn.segments.iter().map(|s| s.direction()).collect();
                        assert!(dirs.contains(&Direction::Reverse));
                    }
                    // The headland depth is at least the turn radius (a turn
                    // through 90 degrees at radius >= R goes R ahead).
                    assert!(turn.depth().unwrap() >= 1.0 / kappa_max - 1e-9);
                }
            }
        }
    }
}

#[test]
fn turns_at_the_start_end_and_staggered_ends() {
    let r = reference();
    let limits = PathLimits::new(0.25, Some(0.1), 1e-9).unwrap();
    let passes = Passes::new(3.0).unwrap();
    // At station 0: pass 1 was driven against the reference, pass 4 along it.
    let turn = HeadlandTurn::<f64, 12>::between_passes(
        &r,
        &passes,
        1,
        4,
        FieldEnd::Start,
        &limits,
        TurnPolicy::ForwardOnly,
    )
    .unwrap();
    let mut from = passes.pass(1).start_pose(&r).unwrap();
    from.heading = (from.heading + PI).wrap_angle();
    let to = passes.pass(4).start_pose(&r).unwrap();
    check_turn(&turn, &limits, from, to);
    // Ends staggered by 7 m either way.
    for e in [7.0, -7.0] {
        let from = Pose::new(0.0, 0.0, 0.0);
        let to = Pose::new(e, 4.0, PI);
        let t =
            HeadlandTurn::<f64, 12>::between(from, to, &limits, TurnPolicy::AllowReverse).unwrap();
        check_turn(&t, &limits, from, to);
    }
}

#[test]
fn reversing_turn_in_f32_on_a_device_sized_buffer() {
    let limits = PathLimits::new(0.2f32, Some(0.1), 1e-6).unwrap();
    let from = Pose::new(500.0f32, 200.0, 1.0);
    let (s, c) = (1.0f32).sin_cos();
    let to = Pose::new(
        500.0 - 3.0 * s,
        200.0 + 3.0 * c,
        1.0 + core::f32::consts::PI,
    );
    let t = HeadlandTurn::<f32, 8>::between(from, to, &limits, TurnPolicy::AllowReverse).unwrap();
    assert_eq!(t.kind, TurnKind::Reversing);
    let p = t.to_path::<8>().unwrap();
    let e = p.end_pose();
    assert!((e.x - to.x).abs() < 1e-3 && (e.y - to.y).abs() < 1e-3);
}

#[test]
fn bad_input_is_refused() {
    let limits = PathLimits::new(0.2, Some(0.1), 1e-9).unwrap();
    let r = HeadlandTurn::<f64, 12>::between(
        Pose::new(f64::NAN, 0.0, 0.0),
        Pose::new(0.0, 3.0, PI),
        &limits,
        TurnPolicy::ForwardOnly,
    );
    assert_eq!(r.err(), Some(kappaline::HeadlandError::BadInput));
}

mod random {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(300))]
        #[test]
        fn any_spacing_and_limits(
            w in -40.0f64..40.0, e in -5.0f64..5.0, heading in -3.0f64..3.0,
            kappa in 0.05f64..0.5, sharp in 0.01f64..0.5, reverse in any::<bool>(),
        ) {
            prop_assume!(w.abs() > 0.05);
            let limits = PathLimits::new(kappa, Some(sharp), 1e-9).unwrap();
            let from = Pose::new(30.0, -20.0, heading);
            let (s, c) = heading.sin_cos();
            let to = Pose::new(30.0 + e * c - w * s, -20.0 + e * s + w * c, (heading + PI).wrap_angle());
            let policy = if reverse { TurnPolicy::AllowReverse } else { TurnPolicy::ForwardOnly };
            let turn = HeadlandTurn::<f64, 12>::between(from, to, &limits, policy).unwrap();
            check_turn(&turn, &limits, from, to);
        }
    }
}
