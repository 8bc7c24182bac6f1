//! Reverse driving along a path, and a path with a cusp (a forward leg
//! followed by a reverse leg), in the kinematic simulation of
//! tests/steering_sim. Errors are measured against the analytic geometry of
//! each piece, independently of the crate's projection.
//!
//! `cargo test --test steering_reverse -- --nocapture` prints the figures.

mod steering_sim;

use core::f64::consts::PI;

use kappaline::{
    AnchoredSegment, Continuity, Direction, FrenetFeedback, Guidance, GuidanceStatus, Path,
    PathBuilder, Pose, PurePursuit, Segment, Stanley, SteeringLaw, SupervisorConfig, TrackerConfig,
    Vehicle,
};
use steering_sim::{check_limits, run, Sim};

fn tractor() -> Vehicle<f64> {
    Vehicle::front_steered(2.5, 35f64.to_radians(), 40f64.to_radians())
        .unwrap()
        .with_max_speed(3.0)
        .unwrap()
}

/// Joins paths built separately into one, keeping every anchor. A cusp
/// flips the path tangent by pi while the body heading stays put; the core's
/// joint check compares path tangents, so a heading tolerance of pi is
/// needed to accept the flip (position is still checked to 1 mm).
fn join(parts: &[&Path<f64, 4>]) -> Path<f64, 8> {
    let mut all = Vec::new();
    for p in parts {
        for i in 0..p.len() {
            all.push(AnchoredSegment {
                segment: p.segment(i).unwrap(),
                start: p.anchor(i).unwrap(),
            });
        }
    }
    Path::from_anchored(
        &all,
        Continuity {
            position: 1e-3,
            heading: PI,
        },
        false,
    )
    .unwrap()
}

/// The distance from `(x, y)` to the path within stations `[lo, hi]`, by
/// sampling every 5 mm around `near` (+-2 m) and a golden-section refinement
/// of the best sample (independent of the crate's projection). Returns the
/// distance and the station found.
fn distance_to<const N: usize>(
    path: &Path<f64, N>,
    x: f64,
    y: f64,
    lo: f64,
    hi: f64,
    near: f64,
) -> (f64, f64) {
    let d = |s: f64| {
        let p = path.at(s.clamp(lo, hi));
        ((p.x - x).powi(2) + (p.y - y).powi(2)).sqrt()
    };
    let a = (near - 2.0).max(lo);
    let b = (near + 2.0).min(hi);
    let n = ((b - a) / 0.005).ceil().max(1.0) as usize;
    let best = (0..=n)
        .map(|i| a + (b - a) * i as f64 / n as f64)
        .min_by(|p, q| d(*p).total_cmp(&d(*q)))
        .unwrap();
    let (mut l, mut r) = ((best - 0.005).max(lo), (best + 0.005).min(hi));
    let g = 0.5 * (5f64.sqrt() - 1.0);
    for _ in 0..40 {
        let m1 = r - g * (r - l);
        let m2 = l + g * (r - l);
        if d(m1) < d(m2) {
            r = m2;
        } else {
            l = m1;
        }
    }
    let s = 0.5 * (l + r);
    (d(s), s)
}

fn last_station(samples: &[steering_sim::Sample]) -> f64 {
    samples
        .iter()
        .rev()
        .find_map(|s| s.command.tracking.map(|t| t.station))
        .unwrap_or(f64::NAN)
}

fn reverse_run<L: SteeringLaw<f64>>(name: &str, law: L) {
    let vehicle = tractor();
    // Reversing along +x: path heading 0, body heading pi.
    let path = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(40.0).unwrap().reversed())
        .unwrap()
        .push(Segment::arc(30.0, 0.05).unwrap().reversed())
        .unwrap()
        .build()
        .unwrap();
    let sup = SupervisorConfig::default_for(&vehicle);
    let mut g = Guidance::new(vehicle, law, TrackerConfig::tractor(), sup).unwrap();
    // 0.5 m left of the path, body turned 0.1 rad from pi.
    let mut sim = Sim::new(&vehicle, 0.0, 0.5, PI + 0.1, -1.5);
    let samples = run(&mut sim, &mut g, &path, 200.0, 120.0);
    check_limits(&samples, &vehicle, sim.dt);
    assert!(samples.iter().all(|s| s
        .command
        .tracking
        .is_none_or(|t| t.foot.direction == Direction::Reverse)));
    assert!(samples
        .iter()
        .all(|s| s.heading.cos() < 0.0 || s.distance > 40.0));
    let last = samples.last().unwrap();
    assert_eq!(last.command.status, GuidanceStatus::EndOfPath, "{name}");
    // Error on the line (after settling) and on the arc, by geometry.
    let mut worst_line = 0.0f64;
    let mut worst_arc = 0.0f64;
    for s in &samples {
        let (x, y) = s.cp;
        if (30.0..37.0).contains(&x) {
            worst_line = worst_line.max(y.abs());
        }
        // The last 10 m of the arc (stations 60-70): past the transient of
        // the curvature step at its start.
        let into_arc = (x - 40.0).atan2(20.0 - y) * 20.0;
        if (20.0..28.0).contains(&into_arc) {
            // Arc: centre (40, 20), radius 20.
            let r = ((x - 40.0).powi(2) + (y - 20.0).powi(2)).sqrt();
            worst_arc = worst_arc.max((r - 20.0).abs());
        }
    }
    let overshoot = samples
        .iter()
        .filter(|s| s.cp.0 < 40.0)
        .map(|s| (-s.cp.1).max(0.0))
        .fold(0.0, f64::max);
    println!(
        "{name:<14} reversing: overshoot {overshoot:.3} m, |d| on the line (x 30-37 m) {worst_line:.4} m, on the arc's last 10 m {worst_arc:.4} m, stopped at station {:.3}",
        last_station(&samples)
    );
    assert!(overshoot <= 0.05, "{name}: overshoot {overshoot}");
    assert!(worst_line < 0.02, "{name}: {worst_line}");
    assert!(worst_arc < 0.02, "{name}: {worst_arc}");
}

#[test]
fn reverse_pure_pursuit() {
    reverse_run("pure pursuit", PurePursuit::tractor());
}

#[test]
fn reverse_stanley() {
    reverse_run("Stanley", Stanley::tractor());
}

#[test]
fn reverse_frenet() {
    reverse_run("Frenet", FrenetFeedback::tractor());
}

fn cusp_path() -> Path<f64, 8> {
    // Forward: 15 m line, 8 m left arc (R = 10 m); cusp; reverse: 8 m arc
    // (the steering swings from full left to right while stopped, as in a
    // three-point turn), 25 m line heading away. An invented yard manoeuvre.
    let fwd = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(15.0).unwrap())
        .unwrap()
        .push(Segment::arc(8.0, 0.1).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let end = fwd.end_pose();
    let back = PathBuilder::<f64, 4>::new(Pose::new(end.x, end.y, end.heading + PI))
        .unwrap()
        .push(Segment::arc(8.0, 0.1).unwrap().reversed())
        .unwrap()
        .push(Segment::line(25.0).unwrap().reversed())
        .unwrap()
        .build()
        .unwrap();
    join(&[&fwd, &back])
}

fn cusp_run<L: SteeringLaw<f64>>(name: &str, law: L) {
    let vehicle = tractor();
    let path = cusp_path();
    let cusp = 23.0;
    let sup = SupervisorConfig::default_for(&vehicle);
    let mut g = Guidance::new(vehicle, law, TrackerConfig::tractor(), sup).unwrap();
    let mut sim = Sim::new(&vehicle, 0.0, 0.3, 0.05, 1.5);
    let samples = run(&mut sim, &mut g, &path, 200.0, 200.0);
    check_limits(&samples, &vehicle, sim.dt);
    assert!(
        samples.iter().all(|s| matches!(
            s.command.status,
            GuidanceStatus::Following | GuidanceStatus::EndOfPath
        )),
        "{name}"
    );
    let last = samples.last().unwrap();
    assert_eq!(last.command.status, GuidanceStatus::EndOfPath, "{name}");
    // Where the direction changed: the vehicle must have stopped at the cusp.
    let switch = samples
        .iter()
        .position(|s| {
            s.command
                .tracking
                .is_some_and(|t| t.foot.direction == Direction::Reverse)
        })
        .unwrap();
    let at_switch = &samples[switch];
    let cusp_pt = path.at(cusp - 1e-9);
    let miss = ((at_switch.cp.0 - cusp_pt.x).powi(2) + (at_switch.cp.1 - cusp_pt.y).powi(2)).sqrt();
    // Geometric distance to the leg being driven, after the first 10 m;
    // the worst is the transient where the curvature steps (line to arc,
    // and the cusp's arc to arc), the last is the steady state at the end.
    let mut worst_fwd = 0.0f64;
    let mut worst_back = 0.0f64;
    let mut near = 10.0;
    let mut at_end = 0.0;
    for (i, s) in samples.iter().enumerate() {
        let (x, y) = s.cp;
        if i < switch && s.distance > 10.0 {
            let (d, st) = distance_to(&path, x, y, 0.0, cusp, near);
            worst_fwd = worst_fwd.max(d);
            near = st;
        } else if i > switch {
            let (d, st) = distance_to(&path, x, y, cusp, path.length(), near.max(cusp));
            worst_back = worst_back.max(d);
            near = st;
            if s.command.status == GuidanceStatus::Following {
                at_end = d;
            }
        }
    }
    println!(
        "{name:<14} cusp: stopped {miss:.3} m from the cusp, worst distance to path forward {worst_fwd:.4} m, reversing {worst_back:.4} m, at the last following step {at_end:.4} m, end station {:.3} of {:.3}",
        last_station(&samples),
        path.length()
    );
    assert!(miss < 0.15, "{name}: {miss}");
    assert!(worst_fwd < 0.15, "{name}: {worst_fwd}");
    assert!(worst_back < 0.15, "{name}: {worst_back}");
    assert!(at_end < 0.02, "{name}: {at_end}");
}

#[test]
fn cusp_pure_pursuit() {
    cusp_run("pure pursuit", PurePursuit::tractor());
}

#[test]
fn cusp_stanley() {
    cusp_run("Stanley", Stanley::tractor());
}

#[test]
fn cusp_frenet() {
    cusp_run("Frenet", FrenetFeedback::tractor());
}
