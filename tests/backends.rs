//! One accuracy suite for every numeric backend, written once over
//! `T: Real` and instantiated per backend by `backend_suite!` (f64, f32 and,
//! with the `fixed-point` feature, Q32.32).
//!
//! The reference is the same computation in `f64`: the path's closed-form
//! evaluation (`Path<f64>::at`, which the `f64` suites in core_geometry.rs
//! and core_clothoid.rs check against published Fresnel tables), the `f64`
//! tracker and the `f64` guidance on the same inputs. Every input is a
//! dyadic number (lengths in metres, curvatures 2^-k 1/m, sharpness
//! 2^-k 1/m^2) so each backend holds it exactly and only its arithmetic
//! differs.
//!
//! Thresholds (issue 14): pose within 1 mm and heading within 1e-4 rad over
//! a 2.1 km path of lines, arcs and clothoids whose anchors lie up to 2 km
//! from the origin; projection within 1 mm; steering command within 0.1 %
//! of `f64` (plus 1e-6 1/m absolute, for commands near zero). `f32` meets
//! the same thresholds except the command's absolute part, whose own value
//! is given in its instantiation (its ulp at 2 km is 1.2e-4 m). `f64`, the
//! reference, runs only the checks with a reference of their own: its
//! projection against the construction and its input checks.
//!
//! Measured worst cases (Q32.32): pose 1.1e-7 m, heading 7e-10 rad,
//! projection 1.5e-6 m, command 7e-7 relative.

use kappaline::{
    Fix, FixUpdate, FrenetFeedback, Guidance, GuidanceInput, GuidanceStatus, Micros, Path,
    PathBuilder, PathError, Pose, PurePursuit, Real, Segment, Stanley, SteeringLaw,
    SupervisorConfig, TrackStatus, Tracker, TrackerConfig, Vehicle,
};

/// Segments of the test path: (length m, start curvature 1/m, end curvature 1/m).
const SEGMENTS: [(f64, f64, f64); 11] = [
    (300.0, 0.0, 0.0),
    (128.0, 0.0, 0.03125),
    (200.0, 0.03125, 0.03125),
    (128.0, 0.03125, 0.0),
    (256.0, 0.0, 0.0),
    (64.0, 0.0, -0.0625),
    (100.0, -0.0625, -0.0625),
    (64.0, -0.0625, 0.0),
    (400.0, 0.0, 0.0),
    (300.0, 0.0078125, 0.0078125),
    (200.0, 0.0, 0.0),
];
/// Start pose: 1.5 km east and 1.25 km south of the origin, heading 0.375 rad.
const START: (f64, f64, f64) = (1500.0, -1250.0, 0.375);
const N: usize = 16;

/// The test path in backend `T`.
fn path<T: Real>() -> Path<T, N> {
    let c = T::from_f64;
    let mut b = PathBuilder::new(Pose::new(c(START.0), c(START.1), c(START.2))).expect("start");
    for (l, k0, k1) in SEGMENTS {
        let seg = if k0 == k1 {
            Segment::arc(c(l), c(k0))
        } else {
            Segment::transition(c(l), c(k0), c(k1))
        };
        b = b.push(seg.expect("segment")).expect("push");
    }
    b.build().expect("build")
}

/// Lateral offset of sample `i`, metres (left positive).
fn lateral(i: usize) -> f64 {
    0.3 * libm::sin(0.37 * i as f64)
}

/// The control pose of sample `i` at station `s`, from the f64 path.
fn pose_at(reference: &Path<f64, N>, s: f64, i: usize) -> (f64, f64, f64) {
    let p = reference.at(s);
    let d = lateral(i);
    (
        p.x - d * p.sin,
        p.y + d * p.cos,
        p.heading() + 0.02 * libm::sin(0.5 * i as f64),
    )
}

fn angle_diff(a: f64, b: f64) -> f64 {
    let d = (a - b).rem_euclid(2.0 * core::f64::consts::PI);
    d.min(2.0 * core::f64::consts::PI - d)
}

/// Pose and heading along the whole path every 0.25 m against f64.
fn pose_accuracy<T: Real>(pos_tol: f64, heading_tol: f64) {
    let (p, r) = (path::<T>(), path::<f64>());
    let len = r.length();
    assert!((p.length().to_f64() - len).abs() < pos_tol);
    let mut worst = (0.0f64, 0.0f64);
    let mut s = 0.0;
    while s <= len {
        let a = p.at(T::from_f64(s));
        let b = r.at(s);
        let e = (a.x.to_f64() - b.x).abs().max((a.y.to_f64() - b.y).abs());
        let h = angle_diff(a.heading().to_f64(), b.heading());
        worst = (worst.0.max(e), worst.1.max(h));
        s += 0.25;
    }
    eprintln!("pose: {} m, heading {} rad", worst.0, worst.1);
    assert!(worst.0 <= pos_tol, "position error {} m", worst.0);
    assert!(worst.1 <= heading_tol, "heading error {} rad", worst.1);
}

/// Tracker station, cross-track and heading error against the f64 tracker
/// and the construction, along the whole path at 0.1 m per cycle.
fn projection_accuracy<T: Real>(tol: f64) {
    let (p, r) = (path::<T>(), path::<f64>());
    let mut t = Tracker::new(TrackerConfig::<T>::tractor()).expect("tracker");
    let mut u = Tracker::new(TrackerConfig::<f64>::tractor()).expect("tracker");
    let mut worst = 0.0f64;
    let mut i = 0;
    let mut s = 1.0;
    while s < r.length() - 1.0 {
        let (x, y, h) = pose_at(&r, s, i);
        let c = T::from_f64;
        let a = t.update(&p, &Pose::new(c(x), c(y), c(h))).expect("update");
        let b = u.update(&r, &Pose::new(x, y, h)).expect("update f64");
        assert_eq!(a.status, TrackStatus::OnPath);
        // f64 against the construction (the pose was built at s, lateral d).
        assert!((b.station - s).abs() < 1e-6 && (b.cross_track - lateral(i)).abs() < 1e-6);
        let e = (a.station.to_f64() - b.station)
            .abs()
            .max((a.cross_track.to_f64() - b.cross_track).abs());
        worst = worst.max(e);
        assert!(
            (a.heading_error.to_f64() - b.heading_error).abs() < 1e-4,
            "heading error at {s}"
        );
        s += 0.1;
        i += 1;
    }
    eprintln!("projection: {worst} m");
    assert!(worst <= tol, "projection error {worst} m");
}

/// The guidance's curvature command for each law against f64 on the same
/// fixes, over 2,000 cycles.
fn steering_accuracy<T: Real, L: SteeringLaw<T>, M: SteeringLaw<f64>>(
    law: L,
    law64: M,
    rel: f64,
    floor: f64,
) {
    let (p, r) = (path::<T>(), path::<f64>());
    let c = T::from_f64;
    let v = Vehicle::front_steered(c(2.5), c(0.6), c(0.6)).expect("vehicle");
    let v64 = Vehicle::front_steered(2.5, 0.6, 0.6).expect("vehicle");
    let mut g = Guidance::new(
        v,
        law,
        TrackerConfig::tractor(),
        SupervisorConfig::default_for(&v),
    )
    .expect("guidance");
    let mut h = Guidance::new(
        v64,
        law64,
        TrackerConfig::tractor(),
        SupervisorConfig::default_for(&v64),
    )
    .expect("guidance");
    let (step, period) = (0.1, 100_000u32);
    let mut worst = 0.0f64;
    let mut following = 0;
    let mut max_abs = 0.0f64;
    for i in 0..2000usize {
        let s = 5.0 + step * i as f64;
        let (x, y, hd) = pose_at(&r, s, i);
        let now = Micros(period * i as u32);
        let fix = Fix::new(c(x), c(y), c(hd), c(step / 0.1), now);
        let fix64 = Fix::new(x, y, hd, step / 0.1, now);
        let a = g.step(&p, &GuidanceInput::new(FixUpdate::New(fix), now, period));
        let b = h.step(&r, &GuidanceInput::new(FixUpdate::New(fix64), now, period));
        assert_eq!(a.status, b.status, "cycle {i}");
        if b.status == GuidanceStatus::Following {
            following += 1;
            let d = (a.curvature.to_f64() - b.curvature).abs();
            let allowed = rel * b.curvature.abs() + floor;
            max_abs = max_abs.max(d);
            worst = worst.max(d / allowed);
        }
    }
    eprintln!("command: {worst} of the allowance, largest difference {max_abs} 1/m");
    assert!(following > 1900, "following {following} of 2000 cycles");
    assert!(worst <= 1.0, "command error {worst} of the allowance");
}

/// Out-of-range inputs give typed errors and leave the state untouched.
fn range_edges<T: Real>() {
    let c = T::from_f64;
    // Curvature beyond the backend's bound.
    let too_sharp = T::MAX_CURVATURE * c(2.0);
    if too_sharp.is_finite() {
        assert!(matches!(
            Segment::arc(c(1.0), too_sharp),
            Err(PathError::CurvatureOutOfRange { .. })
        ));
    }
    // Non-finite or unrepresentable input.
    assert!(matches!(
        Segment::<T>::line(c(f64::NAN)),
        Err(PathError::NonFinite { .. })
    ));
    let p = path::<T>();
    let mut t = Tracker::new(TrackerConfig::<T>::tractor()).expect("tracker");
    let good = Pose::new(c(1500.0), c(-1250.0), c(0.375));
    let first = t.update(&p, &good).expect("acquire");
    for bad in [f64::NAN, f64::INFINITY, 1e300] {
        assert!(t.update(&p, &Pose::new(c(bad), c(0.0), c(0.0))).is_err());
        assert!(t.update(&p, &Pose::new(c(1500.0), c(bad), c(0.0))).is_err());
    }
    // State untouched: the same pose gives the same answer.
    let again = t.update(&p, &good).expect("again");
    assert_eq!(first.station, again.station);
}

macro_rules! backend_suite {
    ($name:ident, $t:ty, pos = $pos:expr, heading = $hd:expr, proj = $proj:expr, steer = $st:expr, floor = $fl:expr) => {
        mod $name {
            use super::*;
            #[test]
            fn pose_within_tolerance_of_f64() {
                pose_accuracy::<$t>($pos, $hd);
            }
            #[test]
            fn projection_within_tolerance_of_f64() {
                projection_accuracy::<$t>($proj);
            }
            #[test]
            fn pure_pursuit_command_within_tolerance_of_f64() {
                steering_accuracy::<$t, _, _>(
                    PurePursuit::tractor(),
                    PurePursuit::tractor(),
                    $st,
                    $fl,
                );
            }
            #[test]
            fn stanley_command_within_tolerance_of_f64() {
                steering_accuracy::<$t, _, _>(Stanley::tractor(), Stanley::tractor(), $st, $fl);
            }
            #[test]
            fn frenet_command_within_tolerance_of_f64() {
                steering_accuracy::<$t, _, _>(
                    FrenetFeedback::tractor(),
                    FrenetFeedback::tractor(),
                    $st,
                    $fl,
                );
            }
            #[test]
            fn out_of_range_input_is_a_typed_error() {
                range_edges::<$t>();
            }
        }
    };
}

// f64 is the reference: its pose and commands are not compared with
// themselves; its projection is checked against the construction (the
// pose built at station s, lateral d) and its input checks as for the rest.
mod f64_reference {
    use super::*;
    #[test]
    fn projection_matches_the_construction() {
        projection_accuracy::<f64>(1e-9);
    }
    #[test]
    fn out_of_range_input_is_a_typed_error() {
        range_edges::<f64>();
    }
}
// f32: the command is within 0.1 % of f64 plus 1e-4 1/m, not 1e-6 1/m: at
// 2 km from the origin an f32 coordinate holds 1.2e-4 m, which moves the
// cross-track error, and so a command near zero, by up to 3.5e-5 1/m
// (measured, worst over the three laws).
backend_suite!(
    f32_backend,
    f32,
    pos = 1e-3,
    heading = 1e-4,
    proj = 1e-3,
    steer = 1e-3,
    floor = 1e-4
);
#[cfg(feature = "fixed-point")]
backend_suite!(
    fixed_backend,
    kappaline::Q32x32,
    pos = 1e-3,
    heading = 1e-4,
    proj = 1e-3,
    steer = 1e-3,
    floor = 1e-6
);
