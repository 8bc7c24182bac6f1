//! The simulator against closed forms.

use kappaline_hil::sim::{Bicycle, BodyState, DiffDrive, Drive, LagActuator, Plant};

fn tractor(steer_tau: f64) -> Bicycle {
    Bicycle {
        wheelbase_m: 2.5,
        steer: LagActuator {
            tau_s: steer_tau,
            max: 40f64.to_radians(),
            max_rate: f64::INFINITY,
        },
        speed: LagActuator {
            tau_s: 0.0,
            max: 10.0,
            max_rate: f64::INFINITY,
        },
    }
}

/// Kinematic bicycle, rear-axle reference: turning radius R = L / tan(delta)
/// (standard vehicle kinematics, e.g. Rajamani, *Vehicle Dynamics and
/// Control*, 2nd ed., section 2.2, the kinematic model with the rear axle
/// as reference). Checked: every point of the driven track lies at R from
/// the circle's centre, to 1e-6 relative, over more than one full lap.
#[test]
fn constant_steering_drives_a_circle_of_radius_l_over_tan_delta() {
    for delta_deg in [3.0f64, 14.036, 30.0, -22.0] {
        let delta = delta_deg.to_radians();
        let plant = Plant::Bicycle(tractor(0.0));
        let mut s = BodyState::at(5.0, -3.0, 0.7);
        s.steer = delta;
        s.speed = 3.0;
        let r = 2.5 / delta.tan();
        // Centre: R to the left of the rear axle (right for negative R).
        let (cx, cy) = s.point(0.0, r);
        let drive = Drive::Steer {
            angle: delta,
            speed: 3.0,
        };
        let h = 1e-3;
        let lap = std::f64::consts::TAU * r.abs() / 3.0;
        let steps = (1.2 * lap / h) as usize;
        let mut worst = 0.0f64;
        for _ in 0..steps {
            plant.step(&mut s, &drive, 0.0, h);
            let d = ((s.x - cx).powi(2) + (s.y - cy).powi(2)).sqrt();
            worst = worst.max((d - r.abs()).abs() / r.abs());
        }
        assert!(
            worst < 1e-6,
            "delta {delta_deg} deg: relative radius error {worst:e}"
        );
        // And the heading turned at v / R.
        let turned = s.heading - 0.7;
        let expect = 3.0 * steps as f64 * h / r;
        assert!((turned - expect).abs() < 1e-9 * expect.abs().max(1.0));
    }
}

/// First-order lag y' = (u - y) / tau: unit step response 1 - exp(-t/tau)
/// (any control text, e.g. Ogata, *Modern Control Engineering*, 5th ed.,
/// section 5-2, first-order systems).
#[test]
fn steering_lag_step_response_is_one_minus_exp() {
    let tau = 0.2;
    let plant = Plant::Bicycle(tractor(tau));
    let mut s = BodyState::at(0.0, 0.0, 0.0);
    s.speed = 1.0;
    let u = 0.3; // rad, within saturation
    let drive = Drive::Steer {
        angle: u,
        speed: 1.0,
    };
    let h = 1e-3;
    for k in 1..=2000 {
        plant.step(&mut s, &drive, 0.0, h);
        let t = k as f64 * h;
        let expect = u * (1.0 - (-t / tau).exp());
        assert!(
            (s.steer - expect).abs() < 1e-12,
            "t = {t}: {} vs {expect}",
            s.steer
        );
    }
}

/// With a rate limit the actuator ramps at exactly the limit, then follows
/// the lag; saturation caps it.
#[test]
fn rate_limit_and_saturation() {
    let a = LagActuator {
        tau_s: 0.0,
        max: 0.5,
        max_rate: 0.5,
    };
    let mut y = 0.0;
    for k in 1..=500 {
        y = a.step(y, 1.0, 1e-3);
        let t = k as f64 * 1e-3;
        assert!((y - 0.5 * t).abs() < 1e-12);
    }
    for _ in 0..2000 {
        y = a.step(y, 1.0, 1e-3);
    }
    assert!((y - 0.5).abs() < 1e-15);
}

/// Differential drive: wheel speeds v(1 -+ kappa b / 2) drive a circle of
/// radius 1 / kappa (common practice, unicycle kinematics).
#[test]
fn differential_drive_circle() {
    let plant = Plant::DiffDrive(DiffDrive {
        track_width_m: 0.5,
        wheel: LagActuator {
            tau_s: 0.0,
            max: 5.0,
            max_rate: f64::INFINITY,
        },
    });
    let (v, k, b) = (1.0, 0.5, 0.5);
    let (l, r) = (v * (1.0 - k * b / 2.0), v * (1.0 + k * b / 2.0));
    let mut s = BodyState::at(0.0, 0.0, 0.0);
    s.left = l;
    s.right = r;
    let drive = Drive::Wheels { left: l, right: r };
    for _ in 0..20_000 {
        plant.step(&mut s, &drive, 0.0, 1e-3);
        let d = (s.x.powi(2) + (s.y - 2.0).powi(2)).sqrt();
        assert!((d - 2.0).abs() < 1e-9);
    }
}

/// A constant crab angle moves the body along heading + crab.
#[test]
fn crab_angle_moves_sideways() {
    let plant = Plant::Bicycle(tractor(0.0));
    let mut s = BodyState::at(0.0, 0.0, 0.0);
    s.speed = 2.0;
    let drive = Drive::Steer {
        angle: 0.0,
        speed: 2.0,
    };
    let crab = 2f64.to_radians();
    for _ in 0..1000 {
        plant.step(&mut s, &drive, crab, 1e-3);
    }
    assert!((s.x - 2.0 * crab.cos()).abs() < 1e-12);
    assert!((s.y - 2.0 * crab.sin()).abs() < 1e-12);
    assert!(s.heading.abs() < 1e-15);
}
