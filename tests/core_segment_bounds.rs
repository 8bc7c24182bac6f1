//! Curvature and sharpness are bounded per backend, so that no accepted
//! segment evaluates to a non-finite value anywhere on it.
//!
//! The first three tests are the adversarial findings of issue 10 (each
//! was accepted before the bounds and evaluated to NaN); the property test
//! sweeps the whole accepted range. Finiteness is the check here: no
//! outside reference is needed to tell NaN from a number.

use kappaline::{Path, PathBuilder, PathError, Pose, Real, Segment};
use proptest::prelude::*;

/// `Segment::arc(164.17, f32::MAX)` built, and `at(23.45)` was NaN.
#[test]
fn arc_of_f32_max_curvature_is_refused() {
    assert_eq!(
        Segment::<f32>::arc(164.17, f32::MAX),
        Err(PathError::CurvatureOutOfRange { index: 0 })
    );
    // Through the stored-path loader too: the segment cannot be made.
    assert!(Segment::<f32>::clothoid(164.17, f32::MAX, 0.0).is_err());
}

/// Curvature 1e38 on a 10 m arc gave NaN at 319 of 1000 stations.
#[test]
fn arc_of_curvature_1e38_is_refused() {
    assert_eq!(
        Segment::<f32>::arc(10.0, 1e38),
        Err(PathError::CurvatureOutOfRange { index: 0 })
    );
    assert_eq!(
        Segment::<f64>::arc(10.0, 1e38),
        Err(PathError::CurvatureOutOfRange { index: 0 })
    );
}

/// A clothoid whose end curvature reached about 2^44 1/m gave
/// `try_at(L) = Ok(NaN)`.
#[test]
fn clothoid_ending_at_curvature_2_pow_44_is_refused() {
    let end = 2.0f32.powi(44);
    assert_eq!(
        Segment::<f32>::transition(1000.0, 0.0, end),
        Err(PathError::CurvatureOutOfRange { index: 0 })
    );
    // Sharpness alone beyond the bound, with both end curvatures inside.
    assert_eq!(
        Segment::<f32>::clothoid(1e-4, -0.5e3, 2e6),
        Err(PathError::SharpnessOutOfRange { index: 0 })
    );
}

#[test]
fn bounds_are_inclusive_and_length_is_bounded() {
    assert!(Segment::<f32>::arc(1.0, f32::MAX_CURVATURE).is_ok());
    assert!(Segment::<f64>::arc(1.0, -f64::MAX_CURVATURE).is_ok());
    assert_eq!(
        Segment::<f64>::line(2.0 * kappaline::MAX_SEGMENT_LENGTH),
        Err(PathError::OutOfRange)
    );
}

/// A value `10^e` with a sign, for log-uniform sampling.
fn signed_pow(sign: bool, e: f64) -> f64 {
    let v = 10f64.powf(e);
    if sign {
        v
    } else {
        -v
    }
}

/// Every station of every accepted segment evaluates finite, in the path
/// (through `PathBuilder` and `from_anchored`) and on its own.
fn check_finite<T: Real>(length: f64, kappa0: f64, sigma: f64) -> Result<(), TestCaseError> {
    let Ok(seg) =
        Segment::<T>::clothoid(T::from_f64(length), T::from_f64(kappa0), T::from_f64(sigma))
    else {
        return Ok(());
    };
    let Ok(path) = PathBuilder::<T, 2>::new(Pose::new(T::ZERO, T::ZERO, T::ZERO))
        .and_then(|b| b.push(seg))
        .and_then(|b| b.build())
    else {
        // Refused by the path (end beyond MAX_COORDINATE): nothing to evaluate.
        return Ok(());
    };
    let len = path.length().to_f64();
    for i in 0..=1000u32 {
        let s = T::from_f64(len * f64::from(i) / 1000.0);
        let p = path
            .try_at(s)
            .map_err(|e| TestCaseError::fail(format!("{e}")))?;
        let finite = p.x.is_finite()
            && p.y.is_finite()
            && p.cos.is_finite()
            && p.sin.is_finite()
            && p.curvature.is_finite();
        prop_assert!(
            finite,
            "L={length} k0={kappa0} sigma={sigma}: non-finite at station {s}: {p:?}"
        );
        let h = seg.heading_change(s);
        prop_assert!(h.is_finite() && seg.curvature_at(s).is_finite());
    }
    // The stored form of the same path loads and evaluates the same way.
    let parts = [kappaline::AnchoredSegment {
        segment: seg,
        start: Pose::new(T::ZERO, T::ZERO, T::ZERO),
    }];
    let again = Path::<T, 2>::from_anchored(&parts, kappaline::Continuity::DEFAULT, false);
    prop_assert!(again.is_ok());
    Ok(())
}

proptest! {
    #[test]
    fn accepted_segments_evaluate_finite_everywhere(
        le in -3.0f64..7.0,
        ks in any::<bool>(), ke in -6.0f64..6.5,
        ss in any::<bool>(), se in -12.0f64..12.5,
        zero_sigma in any::<bool>(),
    ) {
        let length = 10f64.powf(le);
        let kappa0 = signed_pow(ks, ke);
        let sigma = if zero_sigma { 0.0 } else { signed_pow(ss, se) };
        check_finite::<f32>(length, kappa0, sigma)?;
        check_finite::<f64>(length, kappa0, sigma)?;
        // At the bounds themselves: the largest curvature over the longest
        // segment, and a clothoid from one curvature bound to the other.
        check_finite::<f32>(length, f64::from(f32::MAX_CURVATURE), 0.0)?;
        check_finite::<f32>(length, -f64::from(f32::MAX_CURVATURE), 2.0 * f64::from(f32::MAX_CURVATURE) / length)?;
        check_finite::<f64>(length, -f64::MAX_CURVATURE, 2.0 * f64::MAX_CURVATURE / length)?;
    }
}

/// A segment accepted at the curvature bound reads back from the path,
/// although its length there (a difference of stations) rounds differently.
#[test]
fn segments_at_the_bound_read_back_from_the_path() {
    for k in 0..2000 {
        let len = 0.37f32 + k as f32 * 0.013;
        let Ok(s) = Segment::<f32>::transition(len, -f32::MAX_CURVATURE, f32::MAX_CURVATURE) else {
            continue;
        };
        let p = PathBuilder::<f32, 4>::new(Pose::new(0.0, 0.0, 0.0))
            .and_then(|b| b.push(Segment::line(1234.567)?))
            .and_then(|b| b.push(s))
            .and_then(|b| b.build())
            .unwrap();
        let back = p.segment(1).expect("segment 1 reads back");
        assert!((back.kappa0() - s.kappa0()).abs() == 0.0);
        assert!((back.length() - len).abs() < 2e-4);
    }
}
