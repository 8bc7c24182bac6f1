//! Actuator outputs against embedded-hal-mock 0.11 (crates.io; `eh1::pwm`
//! and `eh1::digital` mocks, which fail on any call not expected, in
//! order). Expected duties are worked out by hand from the calibration:
//! linear interpolation between table points, rounded to the nearest
//! count. The servo figures (50 Hz, 1.5 ms neutral) are common practice.

use embedded_hal_mock::eh1::digital::{Mock as Pin, State, Transaction as PinT};
use embedded_hal_mock::eh1::pwm::{Mock as Pwm, Transaction as PwmT};
use kappaline::io::actuator::{
    CalibrationError, SteeringCalibration, SteeringOutput, Wheel, WheelOutput,
};
use kappaline::{Command, GuidanceStatus};

fn cmd(status: GuidanceStatus, steer_angle: f64, wheels: (f64, f64)) -> Command<f64> {
    Command {
        curvature: 0.0,
        steer_angle,
        yaw_rate: 0.0,
        wheel_speeds: wheels,
        speed_limit: 1.0,
        status,
        reason: None,
        tracking: None,
    }
}

/// A valve driver measured at three points: full left 0.2 rad at 80 %,
/// straight at 50 %, full right at 15 % (asymmetric, as valves are).
fn valve() -> SteeringCalibration<f64> {
    SteeringCalibration::table(&[(-0.2, 0.15), (0.0, 0.5), (0.2, 0.8)], 0.01, (0.1, 0.9)).unwrap()
}

#[test]
fn steering_duty_from_the_table_and_neutral_when_not_steering() {
    // Full scale 1000 counts. 0.1 rad: halfway from 0.5 to 0.8 = 0.65 ->
    // 650; -0.05 rad: a quarter of the way from 0.5 to 0.15 = 0.4125 -> 413
    // (412.5 rounded up); 0.005 rad: inside the 0.01 rad deadband -> 500;
    // 0.5 rad: beyond the table -> 0.8 -> 800; Standby, Fault, Lost -> 500.
    let mut expect = Vec::new();
    for duty in [650, 413, 500, 800, 500, 500, 500, 650] {
        expect.push(PwmT::max_duty_cycle(1000));
        expect.push(PwmT::set_duty_cycle(duty));
    }
    let mut out = SteeringOutput::new(Pwm::new(&expect), valve());
    use GuidanceStatus::*;
    for (status, angle, want) in [
        (Following, 0.1, 650),
        (Following, -0.05, 413),
        (Degraded, 0.005, 500),
        (Following, 0.5, 800),
        (Standby, 0.1, 500),
        (Fault, 0.1, 500),
        (Lost, 0.1, 500),
        (EndOfPath, 0.1, 650),
    ] {
        assert_eq!(out.apply(&cmd(status, angle, (0.0, 0.0))).unwrap(), want);
    }
    out.release().done();
}

#[test]
fn hobby_servo_linear_calibration() {
    // 50 Hz: 20 ms period; 1.5 ms = 7.5 %, 0.5 ms per 45 degrees = 2.5 %
    // per pi/4 rad. At 30 degrees: 7.5 + 2.5 * 30 / 45 = 9.1667 % of
    // 20000 counts (1 us each) = 1833.3 -> 1833 (1.833 ms).
    let q = core::f64::consts::FRAC_PI_4;
    let cal = SteeringCalibration::linear(0.075, 0.025 / q, q, 0.0, (0.05, 0.10)).unwrap();
    let expect = [
        PwmT::max_duty_cycle(20000),
        PwmT::set_duty_cycle(1833),
        PwmT::max_duty_cycle(20000),
        PwmT::set_duty_cycle(1500),
    ];
    let mut out = SteeringOutput::new(Pwm::new(&expect), cal);
    assert_eq!(
        out.apply(&cmd(
            GuidanceStatus::Following,
            30f64.to_radians(),
            (0.0, 0.0)
        ))
        .unwrap(),
        1833
    );
    assert_eq!(out.neutral().unwrap(), 1500);
    out.release().done();
}

#[test]
fn bad_calibrations_are_refused() {
    let lim = (0.0, 1.0);
    assert_eq!(
        SteeringCalibration::table(&[(0.0, 0.5)], 0.0, lim),
        Err(CalibrationError::OutOfRange)
    );
    assert_eq!(
        SteeringCalibration::table(&[(0.1, 0.5), (0.0, 0.6)], 0.0, lim),
        Err(CalibrationError::OutOfRange)
    );
    assert_eq!(
        SteeringCalibration::table(&[(-0.1, 0.5), (0.1, 1.5)], 0.0, lim),
        Err(CalibrationError::OutOfRange)
    );
    assert_eq!(
        SteeringCalibration::table(&[(-0.1, 0.5), (f64::NAN, 0.6)], 0.0, lim),
        Err(CalibrationError::NonFinite)
    );
    assert_eq!(
        SteeringCalibration::table(&[(-0.1, 0.4), (0.1, 0.6)], -0.1, lim),
        Err(CalibrationError::OutOfRange)
    );
    // Neutral (0.5) outside the limits.
    assert_eq!(
        SteeringCalibration::table(&[(-0.1, 0.4), (0.1, 0.6)], 0.0, (0.6, 0.9)),
        Err(CalibrationError::OutOfRange)
    );
    assert_eq!(
        SteeringCalibration::<f64>::table(&[(0.0, 0.5); 9], 0.0, lim),
        Err(CalibrationError::OutOfRange)
    );
}

#[test]
fn differential_drive_duties_and_directions() {
    // Full speed 2 m/s on 1000 counts: left 1.0 m/s forward -> 500, pin
    // high; right -0.5 m/s -> 250, pin low. Standby: zero duty, pins
    // untouched.
    let lp = Pwm::new(&[
        PwmT::max_duty_cycle(1000),
        PwmT::set_duty_cycle(500),
        PwmT::max_duty_cycle(1000),
        PwmT::set_duty_cycle(0),
    ]);
    let rp = Pwm::new(&[
        PwmT::max_duty_cycle(1000),
        PwmT::set_duty_cycle(250),
        PwmT::max_duty_cycle(1000),
        PwmT::set_duty_cycle(0),
    ]);
    let ld = Pin::new(&[PinT::set(State::High)]);
    let rd = Pin::new(&[PinT::set(State::Low)]);
    let mut out = WheelOutput::new(
        Wheel {
            pwm: lp,
            direction: ld,
        },
        Wheel {
            pwm: rp,
            direction: rd,
        },
        2.0,
    )
    .unwrap();
    assert_eq!(
        out.apply(&cmd(GuidanceStatus::Following, 0.0, (1.0, -0.5)))
            .unwrap(),
        (500, 250)
    );
    assert_eq!(
        out.apply(&cmd(GuidanceStatus::Standby, 0.0, (1.0, -0.5)))
            .unwrap(),
        (0, 0)
    );
    let (mut l, mut r) = out.release();
    l.pwm.done();
    l.direction.done();
    r.pwm.done();
    r.direction.done();
}
