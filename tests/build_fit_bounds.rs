//! `fit_g1` never returns `Ok` with a non-finite field, and its closure
//! does not depend on how many turns the input headings hold.
//!
//! Regression tests for two findings of issue 10. The closure check
//! evaluates the fitted clothoid with the crate's own path builder, whose
//! segment placement is checked against outside references in
//! `tests/core_clothoid.rs`; the heading of `theta + 2 pi k` is the same
//! angle for every whole `k` (definition of an angle), so the gap must not
//! grow with `k`.

use core::f64::consts::PI;

use kappaline::{fit_g1, FitError, PathBuilder, Pose};

fn all_finite(f: &kappaline::G1Fit) -> bool {
    f.kappa0.is_finite() && f.sharpness.is_finite() && f.length.is_finite() && f.kappa1.is_finite()
}

/// Before: `Ok` with `kappa0 = -inf`, `sharpness = inf`.
#[test]
fn a_subnormal_chord_is_an_error() {
    let r = fit_g1(Pose::new(0.0f64, 0.0, 0.0), Pose::new(5e-324, 0.0, 1.0));
    assert!(r.as_ref().is_ok_and(all_finite) || r.is_err(), "{r:?}");
    assert_eq!(r, Err(FitError::NonFiniteResult));
}

/// Before: `Ok` with `length = inf`.
#[test]
fn a_chord_near_f64_max_is_an_error() {
    let r = fit_g1(Pose::new(0.0f64, 0.0, 2.5), Pose::new(1e308, 0.0, -2.5));
    assert_eq!(r, Err(FitError::NonFiniteResult));
}

/// Position gap (m) and heading gap (rad) between the end of the fitted
/// clothoid, placed at `from`, and `to`.
fn closure(from: Pose<f64>, to: Pose<f64>) -> (f64, f64) {
    let fit = fit_g1(from, to).expect("fit");
    let path = PathBuilder::<f64, 1>::new(from)
        .and_then(|b| b.push(fit.segment().expect("segment")))
        .and_then(|b| b.build())
        .expect("path");
    let e = path.end_pose();
    let dp = libm::hypot(e.x - to.x, e.y - to.y);
    // Each heading wrapped on its own (libm reduces exactly), then compared:
    // subtracting a heading of many turns first would round the difference.
    let wrap = |h: f64| {
        let (s, c) = libm::sincos(h);
        libm::atan2(s, c)
    };
    (dp, wrap(wrap(e.heading) - wrap(to.heading)).abs())
}

/// Before: 9e-15 m at k = 0, 9e-9 m at k = 1e6, 6.8 mm at k = 1e12, 6.75 m
/// at k = 1e15 (for a 10.2 m fit of the probe).
#[test]
fn closure_does_not_depend_on_whole_turns_in_the_headings() {
    let from = Pose::new(0.0, 0.0, 0.4);
    let to = Pose::new(9.0, 3.0, 1.1);
    let (dp0, dh0) = closure(from, to);
    assert!(dp0 < 1e-12 && dh0 < 1e-12, "k = 0: {dp0} m, {dh0} rad");
    for k in [1.0, -3.0, 1e6, 1e12, 1e15, -1e15] {
        let turned = |p: Pose<f64>| Pose::new(p.x, p.y, p.heading + 2.0 * PI * k);
        for (f, t) in [
            (turned(from), to),
            (from, turned(to)),
            (turned(from), turned(to)),
        ] {
            let (dp, dh) = closure(f, t);
            assert!(dp < 1e-9 && dh < 1e-9, "k = {k}: gap {dp} m, {dh} rad");
        }
    }
}

/// Before: `Ok` with a 1.56 cm gap for a start heading of `-f64::MAX`.
#[test]
fn closure_with_a_start_heading_of_minus_f64_max() {
    for h in [-f64::MAX, f64::MAX, 1e300, -7.5e200] {
        let (dp, dh) = closure(Pose::new(0.0, 0.0, h), Pose::new(9.0, 3.0, 1.1));
        assert!(dp < 1e-9 && dh < 1e-9, "heading {h}: gap {dp} m, {dh} rad");
    }
}
