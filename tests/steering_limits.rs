//! The steering limiter (`SteerLimiter`) against the definitions of a
//! saturation and a rate limit, on hand-computed sequences.
//!
//! Sources, named again beside each check:
//! * saturation and rate limit of an actuator: the output is the command
//!   clipped to the range, moved from the previous output by at most
//!   `rate * dt` per period (common practice; e.g. Astrom and Murray,
//!   *Feedback Systems*, 2008, on actuator saturation and rate limits, from
//!   memory);
//! * the kinematic bicycle with the rear axle as reference, `tan(delta) = L
//!   kappa` (Rajamani, *Vehicle Dynamics and Control*, 2nd ed. 2012,
//!   sec. 2.2, from memory).

use kappaline::{Limited, SteerLimiter, Vehicle};

const TOL: f64 = 1e-12;

/// Wheelbase 2.5 m, range +-0.6 rad, 0.5 rad/s: 0.05 rad per 0.1 s period.
fn tractor() -> Vehicle<f64> {
    Vehicle::front_steered(2.5, 0.6, 0.5).unwrap()
}

/// Curvature +-2 1/m, changed at 4 1/m/s: 0.4 1/m per 0.1 s period.
fn robot() -> Vehicle<f64> {
    Vehicle::differential(0.4, 2.0, 4.0).unwrap()
}

#[test]
fn steering_angle_moves_by_the_rate_times_the_period_each_way() {
    // Rate limit: at most 0.5 rad/s * 0.1 s = 0.05 rad per period, towards a
    // command beyond the range (atan(2.5 * 1) = 1.19 rad > 0.6 rad), until
    // the range; then back the other way at the same rate.
    let v = tractor();
    let mut lim = SteerLimiter::new();
    for n in 1..=15 {
        let out = lim.apply(&v, 1.0, 0.1);
        let want = (0.05 * n as f64).min(0.6);
        assert!(
            (out.steer_angle - want).abs() < TOL,
            "step {n}: {}",
            out.steer_angle
        );
        // Curvature of the angle driven (tan(delta) = L kappa).
        assert!((out.curvature - want.tan() / 2.5).abs() < TOL);
        assert!(out.saturated);
    }
    for n in 1..=30 {
        let out = lim.apply(&v, -1.0, 0.1);
        let want = (0.6 - 0.05 * n as f64).max(-0.6);
        assert!(
            (out.steer_angle - want).abs() < TOL,
            "back {n}: {}",
            out.steer_angle
        );
        assert!(out.saturated);
    }
    // A fresh limiter to the right: -0.05 rad after one period.
    let mut lim = SteerLimiter::new();
    let out = lim.apply(&v, -1.0, 0.1);
    assert!((out.steer_angle + 0.05).abs() < TOL, "{}", out.steer_angle);
}

#[test]
fn command_within_range_and_rate_is_passed_unchanged() {
    // kappa = 0.01 1/m: delta = atan(0.025) = 0.025 rad < 0.05 rad per period
    // and inside the range, so the output is the command (not saturated),
    // left and right.
    let v = tractor();
    for kappa in [0.01, -0.01, 0.0] {
        let mut lim = SteerLimiter::new();
        let out = lim.apply(&v, kappa, 0.1);
        assert!((out.curvature - kappa).abs() < TOL, "{}", out.curvature);
        assert!((out.steer_angle - (2.5f64 * kappa).atan()).abs() < TOL);
        assert!(!out.saturated);
        assert_eq!(
            lim.hold(),
            Limited {
                saturated: false,
                ..out
            }
        );
    }
    // At the range: 0.6 rad, kappa = tan(0.6) / 2.5, reached from a seed
    // there, is not cut; just past it, it is.
    let edge = 0.6f64.tan() / 2.5;
    let mut lim = SteerLimiter::new();
    lim.seed(&v, edge);
    let out = lim.apply(&v, edge, 0.1);
    assert!((out.steer_angle - 0.6).abs() < TOL && !out.saturated);
    let out = lim.apply(&v, edge * 1.001, 0.1);
    assert!((out.steer_angle - 0.6).abs() < TOL && out.saturated);
    let mut lim = SteerLimiter::new();
    lim.seed(&v, -edge);
    let out = lim.apply(&v, -edge * 1.001, 0.1);
    assert!((out.steer_angle + 0.6).abs() < TOL && out.saturated);
}

#[test]
fn a_period_that_is_not_positive_holds_the_last_output() {
    // dt = 0 (and negative, NaN, infinite): no time has passed, so nothing
    // may move; the output is the last one, not flagged as cut (`hold`).
    for v in [tractor(), robot()] {
        let mut lim = SteerLimiter::new();
        lim.apply(&v, 0.01, 0.1);
        let last = lim.hold();
        for dt in [0.0, -0.1, f64::NAN, f64::INFINITY] {
            let out = lim.apply(&v, 1.0, dt);
            assert_eq!(out, last, "dt {dt}");
            assert!(!out.saturated);
            assert_eq!(lim.hold(), last);
        }
        // The smallest positive period moves (by next to nothing).
        let out = lim.apply(&v, 1.0, 1e-9);
        assert!(out.saturated && out.curvature > last.curvature);
        // A command that is not finite holds as well.
        let last = lim.hold();
        assert_eq!(lim.apply(&v, f64::NAN, 0.1), last);
        assert_eq!(lim.apply(&v, f64::INFINITY, 0.1), last);
    }
}

#[test]
fn differential_drive_curvature_moves_by_the_rate_times_the_period() {
    // 4 1/m/s * 0.1 s = 0.4 1/m per period, range 2 1/m; no steering angle.
    let v = robot();
    let mut lim = SteerLimiter::new();
    for n in 1..=7 {
        let out = lim.apply(&v, 10.0, 0.1);
        let want = (0.4 * n as f64).min(2.0);
        assert!(
            (out.curvature - want).abs() < TOL,
            "step {n}: {}",
            out.curvature
        );
        assert_eq!(out.steer_angle, 0.0);
        assert!(out.saturated);
    }
    for n in 1..=12 {
        let out = lim.apply(&v, -10.0, 0.1);
        let want = (2.0 - 0.4 * n as f64).max(-2.0);
        assert!(
            (out.curvature - want).abs() < TOL,
            "back {n}: {}",
            out.curvature
        );
    }
    // Within range and rate: passed unchanged, not saturated.
    let mut lim = SteerLimiter::new();
    let out = lim.apply(&v, -0.3, 0.1);
    assert_eq!(out.curvature, -0.3);
    assert!(!out.saturated);
    let out = lim.apply(&v, 0.1, 0.1); // 0.4 away: exactly one step
    assert!((out.curvature - 0.1).abs() < TOL && !out.saturated);
    // At the range edge: 2 1/m is not cut, 2.001 is.
    let mut lim = SteerLimiter::new();
    lim.seed(&v, 2.0);
    assert!(!lim.apply(&v, 2.0, 0.1).saturated);
    assert!(lim.apply(&v, 2.001, 0.1).saturated);
    lim.seed(&v, -2.0);
    let out = lim.apply(&v, -2.5, 0.1);
    assert_eq!(out.curvature, -2.0);
    assert!(out.saturated);
}

#[test]
fn seed_clips_to_the_range_on_both_sides() {
    // A measured curvature beyond the range seeds the range (either side).
    let v = tractor();
    let mut lim = SteerLimiter::new();
    lim.seed(&v, -10.0);
    assert!((lim.hold().steer_angle + 0.6).abs() < TOL);
    lim.seed(&v, -0.1);
    assert!((lim.hold().curvature + 0.1).abs() < TOL);
    assert!((lim.hold().steer_angle + 0.25f64.atan()).abs() < TOL);
    lim.seed(&v, f64::NAN);
    assert!((lim.hold().curvature + 0.1).abs() < TOL);
    let r = robot();
    let mut lim = SteerLimiter::new();
    lim.seed(&r, -3.0);
    assert_eq!(lim.hold().curvature, -2.0);
    lim.seed(&r, 0.5);
    assert_eq!(lim.hold().curvature, 0.5);
}
