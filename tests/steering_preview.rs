//! The steering-lag preview of the curvature feedforward
//! (`Vehicle::with_steer_lag`). Expected values follow from the kinematic
//! bicycle `delta = atan(L kappa)` (Rajamani, "Vehicle Dynamics and
//! Control", 2nd ed., 2012, sec. 2.2, from memory) and the
//! definition of the preview: feedforward taken `speed * lag` metres ahead.

use kappaline::{
    FrenetFeedback, Guidance, GuidanceInput, PathBuilder, Pose, Segment, SteerError,
    SupervisorConfig, TrackerConfig, Vehicle,
};

fn command_before_arc(lag: f64) -> f64 {
    // 20 m straight into an arc of 10 m radius; the vehicle sits on the path
    // 0.5 m before the arc, driving at 2 m/s.
    let path = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(20.0).unwrap())
        .unwrap()
        .push(Segment::arc(20.0, 0.1).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let v = Vehicle::front_steered(2.5, 0.6, 10.0)
        .unwrap()
        .with_steer_lag(lag)
        .unwrap();
    let mut g = Guidance::new(
        v,
        FrenetFeedback::tractor(),
        TrackerConfig::tractor(),
        SupervisorConfig::default_for(&v),
    )
    .unwrap();
    let mut cmd = None;
    // A few cycles on the path (the limiter ramps at 10 rad/s: no cut here).
    for k in 0..3 {
        let now = kappaline::Micros(100_000 * k);
        let fix = kappaline::Fix::new(19.5, 0.0, 0.0, 2.0, now);
        cmd = Some(g.step(
            &path,
            &GuidanceInput::new(kappaline::FixUpdate::New(fix), now, 100_000),
        ));
    }
    cmd.unwrap().curvature
}

#[test]
fn lag_brings_the_feedforward_forward() {
    // No lag: on a straight with zero errors the command is zero.
    assert!(command_before_arc(0.0).abs() < 1e-12);
    // 0.5 s at 2 m/s looks 1 m ahead, into the arc: the command is the
    // arc's curvature (errors are zero, so only the feedforward acts).
    let k = command_before_arc(0.5);
    assert!((k - 0.1).abs() < 1e-3, "{k}");
    // 0.1 s looks 0.2 m ahead: still on the straight.
    assert!(command_before_arc(0.1).abs() < 1e-12);
}

#[test]
fn lag_is_checked() {
    let v = Vehicle::front_steered(2.5f64, 0.6, 0.5).unwrap();
    assert_eq!(v.with_steer_lag(-0.1).err(), Some(SteerError::OutOfRange));
    assert_eq!(
        v.with_steer_lag(f64::NAN).err(),
        Some(SteerError::NonFinite)
    );
    assert_eq!(v.with_steer_lag(0.2).unwrap().steer_lag(), 0.2);
    assert_eq!(v.steer_lag(), 0.0);
}
