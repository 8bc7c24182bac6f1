//! Each law against its published formula on hand-computed cases, through
//! the public API, and the guidance's mapping from the control point to each
//! law's reference point (hand-computed geometry).
//!
//! Sources: Coulter, CMU-RI-TR-92-01 (1992), gamma = 2x/l^2; kinematic
//! bicycle delta = atan(L kappa) (Rajamani 2012, sec. 2.2, from memory); Hoffmann,
//! Tomlin, Montemerlo, Thrun, ACC 2007, delta = psi + atan(k e / (k_soft + v));
//! Samson 1995 / De Luca, Oriolo, Samson 1998, chained-form path following
//! (the curvature formula as written out in src/steer/frenet.rs). The check
//! values follow from those formulas: 0.08 1/m (x = 1 m, l = 5 m),
//! 14.036 degrees (L = 2.5 m, R = 10 m) and pi/4 (k e = k_soft + v).

use core::f64::consts::{FRAC_PI_4, PI};

use kappaline::{
    Fix, FixUpdate, FrenetFeedback, Guidance, GuidanceInput, GuidanceStatus, Micros, PathBuilder,
    Pose, PurePursuit, Segment, Stanley, SteeringInput, SteeringLaw, SupervisorConfig,
    TrackerConfig, Vehicle,
};

#[test]
fn pure_pursuit_coulter_check_value() {
    // x = 1 m lateral, l = 5 m: gamma = 2 * 1 / 25 = 0.08 1/m.
    let mut pp = PurePursuit::<f64>::new(5.0, 0.0, 5.0, 5.0).unwrap();
    let input = SteeringInput {
        goal: (24f64.sqrt(), 1.0),
        ..Default::default()
    };
    assert!((pp.curvature(&input) - 0.08).abs() < 1e-15);
    assert_eq!(pp.lookahead(3.0), 5.0);
}

#[test]
fn bicycle_check_value() {
    // L = 2.5 m, R = 10 m: delta = atan(0.25) = 14.036 degrees.
    let v = Vehicle::<f64>::front_steered(2.5, 40f64.to_radians(), 1.0).unwrap();
    assert!((v.steer_from_curvature(0.1).to_degrees() - 14.036).abs() < 5e-4);
    assert!((v.steer_from_curvature(-0.1).to_degrees() + 14.036).abs() < 5e-4);
}

#[test]
fn stanley_check_value() {
    // psi = 0, k e = k_soft + v: delta = atan(1) = pi/4 (sign: right of the
    // path, steer left, in this crate's convention).
    let st = Stanley::<f64>::tractor();
    let (k, soft, v) = (1.0, 1.0, 2.5);
    assert!((st.steer_angle(-(soft + v) / k, 0.0, v) - FRAC_PI_4).abs() < 1e-15);
    // Through the trait, with the paper's law (no rear offset): kappa = tan(delta) / L.
    let mut st = st.with_rear_offset(false);
    let input = SteeringInput {
        cross_track: -(soft + v) / k,
        speed: v,
        reference_point: 2.5,
        ..Default::default()
    };
    assert!((st.curvature(&input) - 1.0 / 2.5).abs() < 1e-12);
}

#[test]
fn frenet_feedforward_on_the_path() {
    // On the path (d = 0, theta = 0): u = kappa exactly (curvature feedforward).
    let mut f = FrenetFeedback::<f64>::tractor();
    for kappa in [-0.2, -0.05, 0.0, 0.05, 0.2] {
        let input = SteeringInput {
            curvature: kappa,
            speed: 2.0,
            dt: 0.05,
            ..Default::default()
        };
        assert!((f.curvature(&input) - kappa).abs() < 1e-15);
    }
}

fn fast_vehicle(control_point: f64) -> Vehicle<f64> {
    // Steering rate high enough that the first cycle is not rate limited.
    Vehicle::front_steered(2.5, 35f64.to_radians(), 100.0)
        .unwrap()
        .with_control_point(control_point)
        .unwrap()
}

fn first_command<L: SteeringLaw<f64>>(
    vehicle: Vehicle<f64>,
    law: L,
    reverse: bool,
    arc: bool,
    fix: Fix<f64>,
) -> f64 {
    let seg = if arc {
        Segment::arc(60.0, 0.05).unwrap()
    } else {
        Segment::line(60.0).unwrap()
    };
    let seg = if reverse { seg.reversed() } else { seg };
    let path = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(seg)
        .unwrap()
        .build()
        .unwrap();
    let mut g = Guidance::new(
        vehicle,
        law,
        TrackerConfig::tractor(),
        SupervisorConfig::default_for(&vehicle),
    )
    .unwrap();
    let cmd = g.step(
        &path,
        &GuidanceInput::new(FixUpdate::New(fix), Micros(0), 50_000),
    );
    assert_eq!(cmd.status, GuidanceStatus::Following);
    assert!((cmd.steer_angle - vehicle.steer_from_curvature(cmd.curvature)).abs() < 1e-12);
    cmd.curvature
}

fn fix(x: f64, y: f64, heading: f64, speed: f64) -> Fix<f64> {
    Fix::new(x, y, heading, speed, Micros(0))
}

#[test]
fn guidance_pure_pursuit_goal() {
    // Rear axle at (10, 0.5), heading 0, 2 m/s: lookahead 2 + 1 * 2 = 4 m,
    // goal (14, 0), in the vehicle frame (4, -0.5): kappa = -1 / 16.25.
    let k = first_command(
        fast_vehicle(0.0),
        PurePursuit::tractor(),
        false,
        false,
        fix(10.0, 0.5, 0.0, 2.0),
    );
    assert!((k + 1.0 / 16.25).abs() < 1e-12, "{k}");
}

#[test]
fn guidance_pure_pursuit_with_control_point_behind() {
    // Control point 1.5 m behind the rear axle at (10, 0.5), heading 0.1:
    // rear axle at (10 + 1.5 cos 0.1, 0.5 + 1.5 sin 0.1); goal 4 m ahead of
    // the rear axle's station, i.e. 5.5 m beyond the control point's: (15.5, 0).
    let h: f64 = 0.1;
    let (rx, ry) = (10.0 + 1.5 * h.cos(), 0.5 + 1.5 * h.sin());
    let (dx, dy) = (15.5 - rx, -ry);
    let ahead = dx * h.cos() + dy * h.sin();
    let left = -dx * h.sin() + dy * h.cos();
    let want = 2.0 * left / (ahead * ahead + left * left);
    let k = first_command(
        fast_vehicle(-1.5),
        PurePursuit::tractor(),
        false,
        false,
        fix(10.0, 0.5, h, 2.0),
    );
    assert!((k - want).abs() < 1e-12, "{k} vs {want}");
}

#[test]
fn guidance_stanley_front_axle() {
    // Rear axle at (10, 0.5), heading 0: front axle (12.5, 0.5), e_f = 0.5,
    // psi = 0, v = 2: delta = -atan(1 * 0.5 / (1 + 2)), kappa = tan(delta) / 2.5 = -1/15.
    let law = Stanley::tractor().with_rear_offset(false);
    let k = first_command(
        fast_vehicle(0.0),
        law,
        false,
        false,
        fix(10.0, 0.5, 0.0, 2.0),
    );
    assert!((k + 1.0 / 15.0).abs() < 1e-12, "{k}");
    // Control point on the front axle: the same front-axle errors.
    let k = first_command(
        fast_vehicle(2.5),
        law,
        false,
        false,
        fix(12.5, 0.5, 0.0, 2.0),
    );
    assert!((k + 1.0 / 15.0).abs() < 1e-12, "{k}");
}

#[test]
fn guidance_frenet_on_arc() {
    // Arc R = 20 m centred at (0, 20); rear axle at (0, 0.5), heading 0:
    // d = 0.5, theta = 0, kappa = 0.05: u = kappa / (1 - kappa d) - k_d d / (1 - kappa d)^2.
    let s: f64 = 1.0 - 0.05 * 0.5;
    let want = 0.05 / s - 0.09 * 0.5 / (s * s);
    let k = first_command(
        fast_vehicle(0.0),
        FrenetFeedback::tractor(),
        false,
        true,
        fix(0.0, 0.5, 0.0, 2.0),
    );
    assert!((k - want).abs() < 1e-12, "{k} vs {want}");
}

#[test]
fn guidance_reverse_mirrors_the_laws() {
    // Reversing along +x (body heading pi, speed -2), rear axle at (10, 0.5):
    // in the travel frame the same geometry as forwards, so the travel-frame
    // curvature is the forward one and the body curvature its negative.
    let k = first_command(
        fast_vehicle(0.0),
        PurePursuit::tractor(),
        true,
        false,
        fix(10.0, 0.5, PI, -2.0),
    );
    assert!((k - 1.0 / 16.25).abs() < 1e-12, "{k}");
    // Stanley refers to a virtual axle 2.5 m behind the rear axle: (12.5, 0.5).
    let law = Stanley::tractor().with_rear_offset(false);
    let k = first_command(
        fast_vehicle(0.0),
        law,
        true,
        false,
        fix(10.0, 0.5, PI, -2.0),
    );
    assert!((k - 1.0 / 15.0).abs() < 1e-12, "{k}");
    // Yaw rate = kappa * v < 0: the travel direction turns clockwise, back
    // towards the path (which lies to the right of the direction of travel).
    assert!(k * -2.0 < 0.0);
}

#[test]
fn differential_drive_command() {
    // Siegwart, Nourbakhsh, Scaramuzza 2011, sec. 3.2 (from memory): wheel speeds
    // v (1 -+ kappa b / 2); yaw rate kappa v. Pure pursuit goal as in
    // guidance_pure_pursuit_goal, small-robot lookahead 0.4 + 0.8 * 1 = 1.2 m:
    // goal (11.2, 0), vehicle frame (1.2, -0.2): kappa = -0.4 / 1.48.
    let v = Vehicle::differential(0.4, 2.0, 100.0).unwrap();
    let path = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(60.0).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let mut g = Guidance::new(
        v,
        PurePursuit::small_robot(),
        TrackerConfig::tractor(),
        SupervisorConfig::default_for(&v),
    )
    .unwrap();
    let cmd = g.step(
        &path,
        &GuidanceInput::new(FixUpdate::New(fix(10.0, 0.2, 0.0, 1.0)), Micros(0), 50_000),
    );
    let k = -0.4 / 1.48;
    assert!((cmd.curvature - k).abs() < 1e-12, "{}", cmd.curvature);
    assert_eq!(cmd.steer_angle, 0.0);
    assert!((cmd.yaw_rate - k).abs() < 1e-12);
    let (l, r) = cmd.wheel_speeds;
    assert!((l - (1.0 - k * 0.2)).abs() < 1e-12 && (r - (1.0 + k * 0.2)).abs() < 1e-12);
}

#[test]
fn pure_pursuit_lookahead_schedule_between_its_bounds() {
    // l(v) = clamp(base + time * v, min, max) (module docs, common practice):
    // tractor 2 m + 1 s * v within 3-6 m: 5 m at 3 m/s, 4.5 m at 2.5 m/s,
    // reversing speeds by magnitude; the bounds at and beyond their edges.
    let pp = PurePursuit::<f64>::tractor();
    assert_eq!(pp.lookahead(3.0), 5.0);
    assert_eq!(pp.lookahead(2.5), 4.5);
    assert_eq!(pp.lookahead(-3.0), 5.0);
    assert_eq!(pp.lookahead(1.0), 3.0);
    assert_eq!(pp.lookahead(0.5), 3.0);
    assert_eq!(pp.lookahead(4.0), 6.0);
    assert_eq!(pp.lookahead(4.5), 6.0);
    let robot = PurePursuit::<f64>::small_robot(); // 0.4 + 0.8 v within 0.6-2
    assert!((robot.lookahead(1.0) - 1.2).abs() < 1e-15);
    let road = PurePursuit::<f64>::road_vehicle(); // 3 + 0.8 v within 5-15
    assert!((road.lookahead(10.0) - 11.0).abs() < 1e-12);
}

#[test]
fn pure_pursuit_goal_at_the_rear_axle_gives_no_command() {
    // kappa = 2 y_g / l^2 (Coulter 1992) is undefined for l -> 0: a goal
    // within sqrt(EPSILON) of the rear axle gives 0; just beyond, the formula.
    let mut pp = PurePursuit::<f64>::tractor();
    let edge = f64::EPSILON.sqrt(); // l^2 = EPSILON exactly
    let at = |pp: &mut PurePursuit<f64>, goal| {
        pp.curvature(&SteeringInput {
            goal,
            ..Default::default()
        })
    };
    assert_eq!(at(&mut pp, (0.0, edge)), 0.0);
    assert_eq!(at(&mut pp, (0.0, 0.0)), 0.0);
    let beyond = 2.0 * edge;
    let k = at(&mut pp, (0.0, beyond));
    assert!((k - 2.0 / beyond).abs() < 1e-6 * k, "{k}");
}

#[test]
fn stanley_arc_offset_for_a_control_point_between_and_beyond_the_axles() {
    // Hand geometry on an arc of radius R: the control point a ahead of the
    // rear axle is on the arc when the rear axle runs at sqrt(R^2 - a^2); the
    // front axle L ahead then runs at sqrt(R^2 - a^2 + L^2), its cross-track
    // R - sqrt(R^2 - a^2 + L^2) (left positive, centre on the left).
    for (kappa, a, l) in [
        (0.05f64, 1.0f64, 2.5f64),
        (0.05, 4.0, 2.5),
        (-0.05, 1.0, 2.5),
        (0.2, 3.0, 0.4),
    ] {
        let r = 1.0 / kappa.abs();
        let want = kappa.signum() * (r - (r * r - a * a + l * l).sqrt());
        let got = Stanley::<f64>::arc_offset(kappa, a, l);
        assert!(
            (got - want).abs() < 1e-12,
            "{kappa} {a} {l}: {got} vs {want}"
        );
    }
}

#[test]
fn stanley_without_a_steered_axle_gives_no_command() {
    // The law needs the axle it steers (reference point > 0); at 0 (or
    // behind) it returns 0, just ahead of it the paper's law.
    let mut st = Stanley::<f64>::tractor().with_rear_offset(false);
    let input = |reference_point| SteeringInput {
        cross_track: -1.0,
        speed: 2.0,
        reference_point,
        dt: 0.05,
        ..Default::default()
    };
    assert_eq!(st.curvature(&input(0.0)), 0.0);
    assert_eq!(st.curvature(&input(-1.0)), 0.0);
    // delta = atan(k e / (k_soft + v)) = atan(1 / 3), kappa = tan(delta) / L.
    let k = st.curvature(&input(2.5));
    assert!((k - (1.0 / 3.0) / 2.5).abs() < 1e-12, "{k}");
}
