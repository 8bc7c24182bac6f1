//! Closed loop in a small kinematic simulation (tests/steering_sim): each law
//! from 1 m of lateral offset and 0.2 rad of heading error, on a straight
//! line and on a 20 m radius arc at 2 m/s, for a tractor and a small robot.
//!
//! Cross-track errors here are measured by plain geometry (distance to the
//! line, distance to the arc's centre), independently of the crate's
//! projection.
//!
//! Run with `cargo test --test steering_closed_loop -- --nocapture` to see
//! the figures.

mod steering_sim;

use kappaline::{
    FrenetFeedback, Guidance, GuidanceStatus, Path, PathBuilder, Pose, PurePursuit, Segment,
    Stanley, SteeringLaw, SupervisorConfig, TrackerConfig, Vehicle,
};
use steering_sim::{check_limits, run, settling, Sim};

const RADIUS: f64 = 20.0;

fn tractor() -> Vehicle<f64> {
    // Common practice (facts of the trade): wheelbase 2.2-3.2 m,
    // steering 35-55 degrees, 20-60 degrees/s.
    Vehicle::front_steered(2.5, 35f64.to_radians(), 40f64.to_radians())
        .unwrap()
        .with_max_speed(4.0)
        .unwrap()
        .with_max_lateral_acceleration(2.0)
        .unwrap()
}

fn robot() -> Vehicle<f64> {
    // Invented small front-steered robot.
    Vehicle::front_steered(0.5, 30f64.to_radians(), 120f64.to_radians())
        .unwrap()
        .with_max_speed(2.0)
        .unwrap()
        .with_max_lateral_acceleration(2.0)
        .unwrap()
}

fn straight() -> Path<f64, 4> {
    PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(400.0).unwrap())
        .unwrap()
        .build()
        .unwrap()
}

fn arc() -> Path<f64, 4> {
    // Centre (0, 20); a full turn and a half so the run never ends.
    PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::arc(3.0 * core::f64::consts::PI * RADIUS, 1.0 / RADIUS).unwrap())
        .unwrap()
        .build()
        .unwrap()
}

#[derive(Debug, Clone, Copy)]
struct Figures {
    overshoot: f64,
    settle: f64,
    steady: f64,
    max_steer: f64,
    max_rate: f64,
}

/// One run; `on_arc` picks the path; `(d0, th0)` the initial errors.
fn one<L: SteeringLaw<f64>>(
    vehicle: Vehicle<f64>,
    law: L,
    on_arc: bool,
    d0: f64,
    th0: f64,
    length: f64,
) -> Figures {
    let sup = SupervisorConfig::default_for(&vehicle);
    let mut g = Guidance::new(vehicle, law, TrackerConfig::tractor(), sup).unwrap();
    // Start: path point at station 0 (origin, heading 0), offset d0 to the
    // left, heading error th0.
    let mut sim = Sim::new(&vehicle, 0.0, d0, th0, 2.0);
    let samples = if on_arc {
        run(&mut sim, &mut g, &arc(), length, 200.0)
    } else {
        run(&mut sim, &mut g, &straight(), length, 200.0)
    };
    assert!(samples
        .iter()
        .all(|s| s.command.status == GuidanceStatus::Following));
    let history: Vec<(f64, f64)> = samples
        .iter()
        .map(|s| {
            let (x, y) = s.cp;
            let d = if on_arc {
                RADIUS - (x * x + (y - RADIUS) * (y - RADIUS)).sqrt()
            } else {
                y
            };
            (s.distance, d)
        })
        .collect();
    let st = settling(&history, 0.05, 20.0);
    let (max_steer, max_rate) = check_limits(&samples, &vehicle, 0.05);
    Figures {
        overshoot: st.overshoot,
        settle: st.settle_distance,
        steady: st.steady,
        max_steer,
        max_rate,
    }
}

fn sweep<L: SteeringLaw<f64> + Clone>(
    name: &str,
    vehicle: Vehicle<f64>,
    law: L,
    settle_bound: f64,
) {
    for on_arc in [false, true] {
        for (d0, th0) in [(1.0, -0.2), (1.0, 0.2), (-1.0, 0.2), (-1.0, -0.2)] {
            let f = one(vehicle, law.clone(), on_arc, d0, th0, 120.0);
            println!(
                "{name:<22} {:<8} d0 {d0:+.1} th0 {th0:+.1}: overshoot {:.3} m ({:.1} %), settles (5 cm) in {:.1} m, steady {:.1e} m, max steer {:.3}, max rate {:.3}",
                if on_arc { "arc R20" } else { "straight" },
                f.overshoot,
                100.0 * f.overshoot / d0.abs(),
                f.settle,
                f.steady,
                f.max_steer,
                f.max_rate,
            );
            assert!(
                f.overshoot <= 0.1 * d0.abs(),
                "{name}: overshoot {}",
                f.overshoot
            );
            assert!(
                f.settle <= settle_bound,
                "{name}: settles in {} m",
                f.settle
            );
            assert!(f.steady < 0.02, "{name}: steady-state {}", f.steady);
        }
    }
}

#[test]
fn pure_pursuit_tractor() {
    sweep(
        "pure pursuit tractor",
        tractor(),
        PurePursuit::tractor(),
        25.0,
    );
}

#[test]
fn stanley_tractor() {
    sweep("Stanley tractor", tractor(), Stanley::tractor(), 25.0);
}

#[test]
fn frenet_tractor() {
    sweep("Frenet tractor", tractor(), FrenetFeedback::tractor(), 25.0);
}

#[test]
fn pure_pursuit_robot() {
    sweep(
        "pure pursuit robot",
        robot(),
        PurePursuit::small_robot(),
        8.0,
    );
}

#[test]
fn stanley_robot() {
    sweep("Stanley robot", robot(), Stanley::small_robot(), 8.0);
}

#[test]
fn frenet_robot() {
    sweep("Frenet robot", robot(), FrenetFeedback::small_robot(), 8.0);
}

fn differential() -> Vehicle<f64> {
    // Invented small differential-drive robot: 0.4 m track, up to 2 1/m,
    // curvature rate 4 1/m/s; speed limit 1.5 m/s (the default).
    Vehicle::differential(0.4, 2.0, 4.0).unwrap()
}

/// `overshoot_bound` in metres (the start is 1 m off).
fn sweep_at<L: SteeringLaw<f64> + Clone>(
    name: &str,
    vehicle: Vehicle<f64>,
    law: L,
    speed: f64,
    settle_bound: f64,
    overshoot_bound: f64,
) {
    for on_arc in [false, true] {
        for (d0, th0) in [(1.0, -0.2), (1.0, 0.2)] {
            // Wider supervisor limits: a control point behind the rear axle
            // first swings further out when the vehicle turns back.
            let sup = SupervisorConfig {
                max_cross_track: 2.5,
                ..SupervisorConfig::default_for(&vehicle)
            };
            let tracker = TrackerConfig {
                lost_distance: 3.0,
                ..TrackerConfig::tractor()
            };
            let mut g = Guidance::new(vehicle, law.clone(), tracker, sup).unwrap();
            let mut sim = Sim::new(&vehicle, 0.0, d0, th0, speed);
            let samples = if on_arc {
                run(&mut sim, &mut g, &arc(), 60.0, 200.0)
            } else {
                run(&mut sim, &mut g, &straight(), 60.0, 200.0)
            };
            check_limits(&samples, &vehicle, sim.dt);
            assert!(
                samples
                    .iter()
                    .all(|s| s.command.status == GuidanceStatus::Following),
                "{name}"
            );
            let history: Vec<(f64, f64)> = samples
                .iter()
                .map(|s| {
                    let (x, y) = s.cp;
                    let d = if on_arc {
                        RADIUS - (x * x + (y - RADIUS).powi(2)).sqrt()
                    } else {
                        y
                    };
                    (s.distance, d)
                })
                .collect();
            let st = settling(&history, 0.05, 20.0);
            println!(
                "{name:<22} {:<8} d0 {d0:+.1} th0 {th0:+.1}: largest |d| {:.3} m, overshoot {:.3} m, settles in {:.1} m, steady {:.1e} m",
                if on_arc { "arc R20" } else { "straight" },
                history.iter().map(|h| h.1.abs()).fold(0.0, f64::max),
                st.overshoot,
                st.settle_distance,
                st.steady
            );
            assert!(st.overshoot <= overshoot_bound, "{name}");
            assert!(st.settle_distance <= settle_bound, "{name}");
            assert!(st.steady < 0.02, "{name}");
        }
    }
}

#[test]
fn differential_drive_all_laws() {
    let v = differential();
    sweep_at(
        "PP differential",
        v,
        PurePursuit::small_robot(),
        1.5,
        8.0,
        0.1,
    );
    sweep_at(
        "Stanley differential",
        v,
        Stanley::small_robot(),
        1.5,
        8.0,
        0.1,
    );
    sweep_at(
        "Frenet differential",
        v,
        FrenetFeedback::small_robot(),
        1.5,
        8.0,
        0.1,
    );
}

#[test]
fn control_point_ahead_of_rear_axle() {
    // Tractor guided by a point 1 m ahead of the rear axle (an invented
    // front-mounted tool) and by a hitch 1.5 m behind it: on the arc the
    // rear axle has to run on the concentric circle of radius
    // sqrt(R^2 - a^2) for the control point to be on the path.
    let v = tractor().with_control_point(1.0).unwrap();
    sweep_at("PP cp +1 m", v, PurePursuit::tractor(), 2.0, 25.0, 0.1);
    sweep_at("Stanley cp +1 m", v, Stanley::tractor(), 2.0, 25.0, 0.1);
    sweep_at(
        "Frenet cp +1 m",
        v,
        FrenetFeedback::tractor(),
        2.0,
        25.0,
        0.1,
    );
    // A hitch 1.5 m behind the rear axle. Its lateral motion answers a
    // steering change first in the wrong direction (it swings out as the
    // vehicle turns back), so its overshoot is larger: bound 0.25 m here,
    // the 10 % requirement is for the rear-axle and front points above.
    let v = tractor().with_control_point(-1.5).unwrap();
    sweep_at("PP cp -1.5 m", v, PurePursuit::tractor(), 2.0, 25.0, 0.25);
    sweep_at("Stanley cp -1.5 m", v, Stanley::tractor(), 2.0, 25.0, 0.25);
    sweep_at(
        "Frenet cp -1.5 m",
        v,
        FrenetFeedback::tractor(),
        2.0,
        25.0,
        0.25,
    );
}

/// The arc steady state of one law, measured at the control point.
fn arc_steady<L: SteeringLaw<f64>>(
    vehicle: Vehicle<f64>,
    law: L,
    slip: f64,
    length: f64,
) -> (f64, f64) {
    let sup = SupervisorConfig::default_for(&vehicle);
    let mut g = Guidance::new(vehicle, law, TrackerConfig::tractor(), sup).unwrap();
    let mut sim = Sim::new(&vehicle, 0.0, 1.0, 0.2, 2.0);
    sim.side_slip = slip;
    let samples = run(&mut sim, &mut g, &straight(), length, 400.0);
    let history: Vec<(f64, f64)> = samples.iter().map(|s| (s.distance, s.cp.1)).collect();
    let st = settling(&history, 0.05, 20.0);
    let last = history.last().unwrap().1;
    (last, st.overshoot)
}

#[test]
fn side_slip_and_the_integral_term() {
    // Crabbing at beta = 0.05 rad on a straight line. Without the integral,
    // the Frenet law settles where u = 0 with theta = -beta:
    // d = k_theta tan(beta) / k_d = 0.6 tan(0.05) / 0.09 = 0.3336 m (derived
    // from the law, src/steer/frenet.rs).
    let v = tractor();
    let (d, _) = arc_steady(v, FrenetFeedback::tractor(), 0.05, 150.0);
    let want = 0.6 * 0.05f64.tan() / 0.09;
    println!("Frenet, side slip 0.05 rad, no integral: steady d = {d:.4} m (predicted {want:.4})");
    assert!((d - want).abs() < 1e-3, "{d} vs {want}");
    // With the integral (k_i = 0.01 < k_theta k_d = 0.054) it goes to zero;
    // started 1 m off (outside the 0.5 m band: no wind-up on the way in).
    let law = FrenetFeedback::tractor()
        .with_integral(0.01, 0.05, 0.5)
        .unwrap();
    let (d, overshoot) = arc_steady(v, law, 0.05, 250.0);
    println!("Frenet, side slip 0.05 rad, integral: d after 250 m = {d:.4} m, overshoot {overshoot:.3} m");
    assert!(d.abs() < 0.02, "{d}");
    assert!(overshoot <= 0.1, "{overshoot}");
}

#[test]
fn stanley_as_published_puts_the_front_axle_on_the_arc() {
    // Without the rear-offset correction the rear axle (the control point
    // here) runs inside the arc by R - sqrt(R^2 - L^2) ... precisely: the
    // front axle is on R, the rear on sqrt(R^2 - L^2) = 19.843 m, 0.157 m
    // inside (kinematic bicycle geometry).
    let v = tractor();
    let sup = SupervisorConfig::default_for(&v);
    let law = Stanley::tractor().with_rear_offset(false);
    let mut g = Guidance::new(v, law, TrackerConfig::tractor(), sup).unwrap();
    let mut sim = Sim::new(&v, 0.0, 0.0, 0.0, 2.0);
    let samples = run(&mut sim, &mut g, &arc(), 120.0, 200.0);
    let (x, y) = samples.last().unwrap().cp;
    let r = (x * x + (y - RADIUS).powi(2)).sqrt();
    let want = (RADIUS * RADIUS - 2.5 * 2.5f64).sqrt();
    println!("Stanley without rear offset: rear axle on r = {r:.4} m (geometry {want:.4})");
    assert!((r - want).abs() < 1e-3, "{r} vs {want}");
}

#[test]
fn speed_cap_slows_before_a_tight_turn() {
    // Line, a short clothoid into a 5 m radius arc, and out again. Limits:
    // a_lat 1 m/s^2 -> 2.236 m/s on the arc; steering rate 20 deg/s on the
    // 2 m clothoids (sigma = 0.1 /m^2) -> 0.349 / (2.5 * 0.1) = 1.396 m/s at
    // its straight end. The driver asks for 4 m/s and obeys the cap.
    let v = Vehicle::front_steered(2.5, 40f64.to_radians(), 20f64.to_radians())
        .unwrap()
        .with_max_speed(4.0)
        .unwrap()
        .with_max_lateral_acceleration(1.0)
        .unwrap();
    let path = PathBuilder::<f64, 8>::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(40.0).unwrap())
        .unwrap()
        .push(Segment::transition(2.0, 0.0, 0.2).unwrap())
        .unwrap()
        .push(Segment::arc(10.0, 0.2).unwrap())
        .unwrap()
        .push(Segment::transition(2.0, 0.2, 0.0).unwrap())
        .unwrap()
        .push(Segment::line(30.0).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let sup = SupervisorConfig::default_for(&v);
    let mut g = Guidance::new(v, FrenetFeedback::tractor(), TrackerConfig::tractor(), sup).unwrap();
    let mut sim = Sim::new(&v, 0.0, 0.0, 0.0, 4.0);
    let samples = run(&mut sim, &mut g, &path, 80.0, 200.0);
    check_limits(&samples, &v, sim.dt);
    let mut worst_lat = 0.0f64;
    let mut worst_d = 0.0f64;
    let mut entry_speed = f64::NAN;
    for (i, s) in samples.iter().enumerate() {
        let Some(t) = s.command.tracking else {
            continue;
        };
        // Speed actually driven during this step (the sim's next sample).
        let speed = samples
            .get(i + 1)
            .map(|n| (n.distance - s.distance) / sim.dt)
            .unwrap_or(0.0);
        worst_lat = worst_lat.max(speed * speed * t.curvature.abs());
        worst_d = worst_d.max(t.cross_track.abs());
        if entry_speed.is_nan() && t.station >= 40.0 {
            entry_speed = speed;
        }
    }
    println!("speed cap: entry speed {entry_speed:.3} m/s (cap 1.396), worst lateral acceleration {worst_lat:.3} m/s^2 (limit 1), worst cross-track {worst_d:.3} m");
    assert!(entry_speed <= 1.396 + 0.05, "{entry_speed}");
    assert!(worst_lat <= 1.0 + 0.05, "{worst_lat}");
    assert!(worst_d < 0.10, "{worst_d}");
}

#[test]
fn f32_guidance_matches_f64() {
    // The same closed loop with the guidance in f32 (the vehicle simulation
    // stays f64): the cross-track history agrees to well under a centimetre.
    let v64 = tractor();
    let v32 = Vehicle::<f32>::front_steered(2.5, 35f32.to_radians(), 40f32.to_radians())
        .unwrap()
        .with_max_speed(4.0)
        .unwrap()
        .with_max_lateral_acceleration(2.0)
        .unwrap();
    let path32 = PathBuilder::<f32, 4>::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::arc(3.0 * core::f32::consts::PI * 20.0, 0.05).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let mut g32 = Guidance::new(
        v32,
        FrenetFeedback::<f32>::tractor(),
        TrackerConfig::tractor(),
        SupervisorConfig::default_for(&v32),
    )
    .unwrap();
    let mut g64 = Guidance::new(
        v64,
        FrenetFeedback::<f64>::tractor(),
        TrackerConfig::tractor(),
        SupervisorConfig::default_for(&v64),
    )
    .unwrap();
    let mut a = Sim::new(&v64, 0.0, 1.0, 0.2, 2.0);
    let mut b = Sim::new(&v64, 0.0, 1.0, 0.2, 2.0);
    let path64 = arc();
    let mut worst = 0.0f64;
    for _ in 0..1200 {
        let f = a.fix();
        let fix32 = kappaline::Fix::new(
            f.x as f32,
            f.y as f32,
            f.heading as f32,
            f.speed as f32,
            f.time,
        );
        let c32 = g32.step(
            &path32,
            &kappaline::GuidanceInput::new(
                kappaline::FixUpdate::New(fix32),
                steering_sim::micros(a.time),
                50_000,
            ),
        );
        let c64 = g64.step(
            &path64,
            &kappaline::GuidanceInput::new(
                kappaline::FixUpdate::New(b.fix()),
                steering_sim::micros(b.time),
                50_000,
            ),
        );
        assert_eq!(c32.status, GuidanceStatus::Following);
        let cmd = kappaline::Command {
            curvature: f64::from(c32.curvature),
            steer_angle: f64::from(c32.steer_angle),
            yaw_rate: 0.0,
            wheel_speeds: (0.0, 0.0),
            speed_limit: f64::from(c32.speed_limit),
            status: c32.status,
            reason: None,
            tracking: None,
        };
        a.apply(&cmd);
        b.apply(&c64);
        let (ax, ay) = a.control_point();
        let (bx, by) = b.control_point();
        worst = worst.max(((ax - bx).powi(2) + (ay - by).powi(2)).sqrt());
    }
    println!(
        "f32 vs f64 guidance over 120 m on the arc: largest position difference {worst:.2e} m"
    );
    assert!(worst < 5e-3, "{worst}");
}
