//! The Q32.32 backend's arithmetic and functions against libm's `f64`
//! functions (the reference named at each check), and its saturation.
//!
//! An ulp of Q32.32 is 2^-32 (2.3e-10). The `f64` reference is exact to
//! far below that for the magnitudes used (53 significant bits).

#![cfg(feature = "fixed-point")]

use kappaline::{Q32x32, Real};
use proptest::prelude::*;

const ULP: f64 = 1.0 / 4_294_967_296.0;

fn q(v: f64) -> Q32x32 {
    Q32x32::from_f64(v)
}

/// Distance in ulps between a fixed-point result and an `f64` reference.
fn ulps(got: Q32x32, want: f64) -> f64 {
    (got.to_f64() - want).abs() / ULP
}

#[test]
fn conversion_rounds_to_nearest_and_is_exact_on_the_grid() {
    // Values on the 2^-32 grid convert exactly both ways.
    for v in [0.0, 1.0, -1.0, 0.5, 1234.5678901234, -2.0e9, ULP, -ULP] {
        let g = (v / ULP).round() * ULP;
        assert_eq!(q(g).to_f64(), g, "{v}");
    }
    // Rounding to nearest: 0.4 ulp down, 0.6 ulp up.
    assert_eq!(q(0.4 * ULP).to_bits(), 0);
    assert_eq!(q(0.6 * ULP).to_bits(), 1);
    assert_eq!(q(-0.6 * ULP).to_bits(), -1);
    assert_eq!(Q32x32::from_i32(-7).to_f64(), -7.0);
    assert_eq!(Q32x32::from_u32(123_456).to_f64(), 123_456.0);
}

#[test]
fn out_of_range_conversions_are_overflowed_never_wrapped() {
    for v in [
        f64::NAN,
        f64::INFINITY,
        f64::NEG_INFINITY,
        2.2e9,
        -2.2e9,
        1e300,
    ] {
        let x = q(v);
        assert!(!x.is_finite(), "{v} -> {x}");
    }
    assert!(q(2.2e9) > Q32x32::MAX && q(-2.2e9) < Q32x32::MIN);
    // The finite range ends just below 2^31.
    assert!(q(2_147_483_647.0).is_finite());
    assert!(!q(2_147_483_648.0).is_finite());
    assert!(!Q32x32::from_u32(u32::MAX).is_finite());
    assert!(!Q32x32::from_i32(i32::MIN).is_finite());
    assert_eq!(Q32x32::MAX.to_f64(), 2_147_483_648.0 - 2.0 * ULP);
}

#[test]
fn every_operation_saturates_and_overflow_is_sticky() {
    let big = Q32x32::MAX;
    let one = Q32x32::ONE;
    assert!(!(big + one).is_finite());
    assert!(!(-big - one).is_finite());
    assert!((-big - one) < Q32x32::MIN);
    assert!(!(big * q(2.0)).is_finite());
    assert!(!(q(65536.0) * q(65536.0)).is_finite());
    assert!(!(q(-65536.0) * q(65536.0)).is_finite());
    assert!((q(-65536.0) * q(65536.0)) < Q32x32::ZERO);
    assert!(!(q(1e6) / q(1e-6)).is_finite());
    // Division by zero.
    assert!(!(one / Q32x32::ZERO).is_finite());
    assert!(!(-one / Q32x32::ZERO).is_finite());
    assert!(!(Q32x32::ZERO / Q32x32::ZERO).is_finite());
    // Square root of a negative number (NaN in f64).
    assert!(!(-one).sqrt().is_finite());
    // Once overflowed, finite operands never bring a value back.
    let o = big + one;
    for x in [one, -one, -big, Q32x32::ZERO] {
        assert!(!(o + x).is_finite());
        assert!(!(o - x).is_finite());
        assert!(!(o * x).is_finite());
        assert!(!(o / q(3.0)).is_finite());
        assert!(!(x / o).is_finite());
    }
    assert!(!o.sqrt().is_finite());
    assert!(!o.sin_cos().0.is_finite() && !o.sin_cos().1.is_finite());
    assert!(!o.atan2(one).is_finite() && !one.atan2(o).is_finite());
    assert!(!o.floor().is_finite());
    assert!(!(-o).is_finite() && !o.abs().is_finite());
    assert!(o.to_f64().is_infinite());
}

#[test]
fn functions_at_their_special_points() {
    // libm::atan2 conventions: atan2(0, -1) = pi, atan2(0, 0) = 0.
    assert!(ulps(Q32x32::ZERO.atan2(-Q32x32::ONE), core::f64::consts::PI) <= 1.0);
    assert_eq!(Q32x32::ZERO.atan2(Q32x32::ZERO), Q32x32::ZERO);
    assert_eq!(Q32x32::ZERO.sqrt(), Q32x32::ZERO);
    assert_eq!(q(4.0).sqrt(), q(2.0));
    assert_eq!(q(-2.5).floor(), q(-3.0));
    assert_eq!(q(2.5).floor(), q(2.0));
    assert_eq!(Q32x32::EPSILON.to_f64(), ULP);
    assert!(ulps(Q32x32::PI, core::f64::consts::PI) <= 0.5);
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 4000, ..ProptestConfig::default() })]

    /// Sum, difference (exact), product and quotient (within 1 ulp) against
    /// the same operation in f64 on the converted operands.
    #[test]
    fn four_operations_against_f64(a in -1000.0f64..1000.0, b in -1000.0f64..1000.0) {
        let (x, y) = (q(a), q(b));
        let (fa, fb) = (x.to_f64(), y.to_f64());
        prop_assert_eq!((x + y).to_f64(), fa + fb);
        prop_assert_eq!((x - y).to_f64(), fa - fb);
        // f64's own rounding of the product is below 1e-16 * 1e6 = 0.5 ulp.
        prop_assert!(ulps(x * y, fa * fb) <= 1.0);
        if fb.abs() > 1e-3 && (fa / fb).abs() < 1e9 {
            prop_assert!(ulps(x / y, fa / fb) <= 1.0);
        }
    }

    /// Square root against libm::sqrt, within 0.5 ulp plus f64's rounding.
    #[test]
    fn sqrt_against_libm(a in 0.0f64..2.0e9) {
        let x = q(a);
        prop_assert!(ulps(x.sqrt(), libm::sqrt(x.to_f64())) <= 0.51);
    }

    /// Square root of small values (the fraction bits only).
    #[test]
    fn sqrt_small_against_libm(a in 0.0f64..1e-3) {
        let x = q(a);
        prop_assert!(ulps(x.sqrt(), libm::sqrt(x.to_f64())) <= 0.51);
    }

    /// sin_cos against libm::sin and libm::cos over +-1000 rad, within 2 ulp.
    #[test]
    fn sin_cos_against_libm(a in -1000.0f64..1000.0) {
        let x = q(a);
        let (s, c) = x.sin_cos();
        let v = x.to_f64();
        prop_assert!(ulps(s, libm::sin(v)) <= 2.0, "sin {} {}", v, ulps(s, libm::sin(v)));
        prop_assert!(ulps(c, libm::cos(v)) <= 2.0, "cos {} {}", v, ulps(c, libm::cos(v)));
    }

    /// sin_cos near zero and near the quadrant joints.
    #[test]
    fn sin_cos_small_against_libm(a in -4.0f64..4.0) {
        let x = q(a);
        let (s, c) = x.sin_cos();
        let v = x.to_f64();
        prop_assert!(ulps(s, libm::sin(v)) <= 2.0);
        prop_assert!(ulps(c, libm::cos(v)) <= 2.0);
    }

    /// atan2 against libm::atan2 over all four quadrants and magnitudes
    /// from 1e-6 to 1e6, within 2 ulp.
    #[test]
    fn atan2_against_libm(
        r in -6.0f64..6.0,
        t in -core::f64::consts::PI..core::f64::consts::PI,
    ) {
        let m = libm::pow(10.0, r);
        let (y, x) = (q(m * libm::sin(t)), q(m * libm::cos(t)));
        let want = libm::atan2(y.to_f64(), x.to_f64());
        prop_assert!(ulps(y.atan2(x), want) <= 2.0, "{} {}", t, ulps(y.atan2(x), want));
    }

    /// floor against libm::floor, exact.
    #[test]
    fn floor_against_libm(a in -2.0e9f64..2.0e9) {
        let x = q(a);
        prop_assert_eq!(x.floor().to_f64(), libm::floor(x.to_f64()));
    }
}

mod plane_edges {
    //! The documented ranges of the Q32.32 backend at their edges: inside
    //! them the results agree with f64, beyond them a typed error.

    use kappaline::{
        PathBuilder, PathError, Pose, Q32x32, Real, Segment, TrackError, Tracker, TrackerConfig,
    };

    fn q(v: f64) -> Q32x32 {
        Q32x32::from_f64(v)
    }

    #[test]
    fn positions_up_to_twice_the_plane_track_like_f64_and_beyond_are_refused() {
        // A line anchored 9.9 km east, heading north: every anchor inside
        // the 10 km plane.
        let p = PathBuilder::<Q32x32, 4>::new(Pose::new(q(9_900.0), q(-50.0), q(1.5)))
            .and_then(|b| b.push(Segment::line(q(100.0))?))
            .and_then(|b| b.build())
            .expect("path inside the plane");
        let r = PathBuilder::<f64, 4>::new(Pose::new(9_900.0, -50.0, 1.5))
            .and_then(|b| b.push(Segment::line(100.0)?))
            .and_then(|b| b.build())
            .expect("f64 path");
        for (x, y) in [(-19_999.0, 0.0), (19_999.0, 19_999.0), (9_900.5, 10.0)] {
            let mut t = Tracker::new(TrackerConfig::<Q32x32>::tractor()).expect("tracker");
            let mut u = Tracker::new(TrackerConfig::<f64>::tractor()).expect("tracker");
            let a = t
                .update(&p, &Pose::new(q(x), q(y), q(0.0)))
                .expect("inside");
            let b = u.update(&r, &Pose::new(x, y, 0.0)).expect("f64");
            // The f64 tracker on the same input is the reference.
            assert!(
                (a.cross_track.to_f64() - b.cross_track).abs() < 1e-3,
                "{x} {y}"
            );
            assert!((a.station.to_f64() - b.station).abs() < 1e-3, "{x} {y}");
            assert_eq!(a.status, b.status);
        }
        let mut t = Tracker::new(TrackerConfig::<Q32x32>::tractor()).expect("tracker");
        for (x, y) in [
            (20_001.0, 0.0),
            (0.0, -20_001.0),
            (5.0e5, 0.0),
            (2.0e9, 0.0),
        ] {
            assert_eq!(
                t.update(&p, &Pose::new(q(x), q(y), q(0.0))),
                Err(TrackError::OutOfRange),
                "{x} {y}"
            );
        }
        // Not representable at all: NonFinite.
        assert_eq!(
            t.update(&p, &Pose::new(q(3.0e9), q(0.0), q(0.0))),
            Err(TrackError::NonFinite)
        );
        assert!(!t.is_acquired());
    }

    #[test]
    fn paths_beyond_the_plane_are_refused() {
        assert_eq!(
            PathBuilder::<Q32x32, 4>::new(Pose::new(q(10_001.0), q(0.0), q(0.0))).err(),
            Some(PathError::OutOfRange)
        );
        // Starts inside, its end crosses 10 km.
        let built = PathBuilder::<Q32x32, 4>::new(Pose::new(q(9_950.0), q(0.0), q(0.0)))
            .and_then(|b| b.push(Segment::line(q(100.0))?))
            .and_then(|b| b.build());
        assert_eq!(built.err(), Some(PathError::OutOfRange));
        // Inside the plane in x and y (a 100 m circle, 80 turns), but its
        // stations pass 10 km: refused too (so no segment is longer than
        // 10 km, which bounds kappa u and sigma u^2; see MAX_CURVATURE).
        let built = PathBuilder::<Q32x32, 4>::new(Pose::new(q(0.0), q(0.0), q(0.0)))
            .and_then(|b| b.push(Segment::arc(q(50_000.0), q(0.01))?))
            .and_then(|b| b.build());
        assert_eq!(built.err(), Some(PathError::OutOfRange));
    }

    #[test]
    fn curvature_and_sharpness_bounds_are_typed_errors() {
        assert_eq!(Q32x32::MAX_CURVATURE.to_f64(), 100.0);
        assert!(Segment::arc(q(1.0), q(100.0)).is_ok());
        assert_eq!(
            Segment::arc(q(1.0), q(100.5)).err(),
            Some(PathError::CurvatureOutOfRange { index: 0 })
        );
        assert_eq!(
            Segment::clothoid(q(1e-3), q(-5.0), q(10_001.0)).err(),
            Some(PathError::SharpnessOutOfRange { index: 0 })
        );
        // The smallest curvature the issue asks for, 1e-5 1/m, is held to
        // 2.3e-5 relative.
        let k = q(1e-5).to_f64();
        assert!((k - 1e-5).abs() / 1e-5 < 2.4e-5);
        // An end curvature that overflows the format itself.
        assert_eq!(
            Segment::clothoid(q(2.0e6), q(0.0), q(2000.0)).err(),
            Some(PathError::NonFinite { index: 0 })
        );
    }
}

mod blob {
    //! The path blob decodes straight into a Q32.32 path (issue 14: the
    //! decoder produces the fixed-point path directly), matching the `f64`
    //! decode of the same bytes.

    use kappaline::io::blob::{decode, encode, encoded_len, EncodeOptions};
    use kappaline::{Path, PathBuilder, Pose, Q32x32, Real, Segment};

    #[test]
    fn a_blob_decodes_into_q32_like_into_f64() {
        let path: Path<f64, 8> = PathBuilder::new(Pose::new(120.0, -40.0, 0.4))
            .and_then(|b| b.push(Segment::line(80.0)?))
            .and_then(|b| b.push(Segment::transition(30.0, 0.0, 0.05)?))
            .and_then(|b| b.push(Segment::arc(40.0, 0.05)?))
            .and_then(|b| b.build())
            .expect("path");
        let o = EncodeOptions::DEFAULT;
        let mut bytes = vec![0u8; encoded_len(path.len(), o.origin.is_some())];
        let n = encode(&path, &o, &mut bytes).expect("encode");
        let (fx, _) = decode::<Q32x32, 8>(&bytes[..n]).expect("decode q32");
        let (fl, _) = decode::<f64, 8>(&bytes[..n]).expect("decode f64");
        assert_eq!(fx.len(), fl.len());
        let mut s = 0.0;
        while s <= fl.length() {
            let (a, b) = (fx.at(Q32x32::from_f64(s)), fl.at(s));
            assert!(
                (a.x.to_f64() - b.x).abs() < 1e-6 && (a.y.to_f64() - b.y).abs() < 1e-6,
                "{s}"
            );
            s += 0.5;
        }
    }
}
