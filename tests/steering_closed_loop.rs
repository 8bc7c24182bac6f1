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
    // Common practice (CHECKS.md, facts of the trade): wheelbase 2.2-3.2 m,
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
    let mut g = Guidance::new(vehicle, law, TrackerConfig::field(), sup).unwrap();
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
