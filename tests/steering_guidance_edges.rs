//! The guidance's latency compensation and the driven-curvature estimate
//! behind it, checked against textbook kinematics, through the public API.
//!
//! A fix `age` seconds old is dead-reckoned to `now` along the arc of the
//! body curvature being driven (`src/guide/supervisor.rs`, "Dead-reckons a
//! fix forward"): the heading turns by `kappa v age` and the position moves
//! along the chord of that arc, `2 sin(turn / 2) / kappa` long, at half the
//! turn (elementary circle geometry). The curvature being driven is the
//! commanded curvature through the actuator's first-order lag
//! (`Vehicle::with_steer_lag`, time constant `tau`), discretised as
//! `d += (u - d) dt / (tau + dt)` (backward Euler on `tau d' = u - d`, any
//! control text), with `u` the command of the cycle before.

use kappaline::{
    Fix, FixUpdate, Guidance, GuidanceInput, GuidanceStatus, Micros, Path, PathBuilder, Pose,
    PurePursuit, Segment, SupervisorConfig, TrackerConfig, Vehicle,
};

const DT_US: u32 = 50_000;
const DT: f64 = 0.05;

/// The chord of an arc of length `len` and curvature `k`, and its turn.
fn chord(len: f64, k: f64) -> (f64, f64) {
    let turn = k * len;
    if turn == 0.0 {
        (len, 0.0)
    } else {
        (2.0 * (0.5 * turn).sin() / k, turn)
    }
}

#[test]
fn late_fixes_are_carried_along_the_arc_of_the_lagged_command() {
    // A 200 m line at heading 0.6 rad from (3, -4); fixes 0.2 s old, 0.5 m
    // left of it, heading along it at 2 m/s; actuator lag 0.1 s.
    let (h, tau, age) = (0.6f64, 0.1, 0.2);
    let (s, co) = h.sin_cos();
    let path: Path<f64, 4> = PathBuilder::new(Pose::new(3.0, -4.0, h))
        .unwrap()
        .push(Segment::line(200.0).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let v = Vehicle::front_steered(2.5, 35f64.to_radians(), 40f64.to_radians())
        .unwrap()
        .with_steer_lag(tau)
        .unwrap();
    let mut g = Guidance::new(
        v,
        PurePursuit::tractor(),
        TrackerConfig::tractor(),
        SupervisorConfig::default_for(&v),
    )
    .unwrap();
    let mut now = Micros(1_000_000);
    let (mut driven, mut last_command) = (0.0f64, 0.0f64);
    let mut turned = 0.0f64;
    for n in 0..60 {
        let along = 10.0 + 0.1 * f64::from(n);
        let (x, y) = (3.0 + along * co - 0.5 * s, -4.0 + along * s + 0.5 * co);
        let fix = Fix::new(x, y, h, 2.0, now.sub_micros(200_000));
        let c = g.step(&path, &GuidanceInput::new(FixUpdate::New(fix), now, DT_US));
        assert_eq!(c.status, GuidanceStatus::Following, "{n}: {c:?}");
        driven += (last_command - driven) * DT / (tau + DT);
        let (len, turn) = chord(2.0 * age, driven);
        let t = c.tracking.unwrap();
        // In the path's frame: along by the chord's projection, left by its
        // other side; the heading error is the turn.
        let (want_s, want_d) = (
            along + len * (0.5 * turn).cos(),
            0.5 + len * (0.5 * turn).sin(),
        );
        assert!(
            (t.heading_error - turn).abs() < 1e-12,
            "{n}: {} vs {turn}",
            t.heading_error
        );
        assert!(
            (t.station - want_s).abs() < 1e-7,
            "{n}: {} vs {want_s}",
            t.station
        );
        assert!(
            (t.cross_track - want_d).abs() < 1e-7,
            "{n}: {} vs {want_d}",
            t.cross_track
        );
        turned = turned.max(turn.abs());
        last_command = c.curvature;
        now = now.add_micros(DT_US);
    }
    // The law did steer (so the checks above saw turns, not only zeros).
    assert!(turned > 0.01, "{turned}");
}

#[test]
fn on_a_circle_a_late_fix_lands_on_the_circle() {
    // Circle of radius 5 m (curvature 0.2 1/m) about (0, 5), driven
    // counter-clockwise at 2 m/s from the origin, fixes 0.1 s old. Once the
    // command has settled on 0.2 1/m, each fix dead-reckoned to `now` is
    // the point of the circle where the vehicle is now: no cross-track or
    // heading error, the station 2 m/s * t. Carried straight on instead it
    // would be 0.04 rad late and outside the circle.
    let (r, v_ms, age) = (5.0f64, 2.0f64, 0.1f64);
    let path: Path<f64, 4> = PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::arc(30.0, 1.0 / r).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let v = Vehicle::front_steered(2.5, 35f64.to_radians(), 40f64.to_radians()).unwrap();
    let mut g = Guidance::new(
        v,
        PurePursuit::tractor(),
        TrackerConfig::tractor(),
        SupervisorConfig::default_for(&v),
    )
    .unwrap();
    let start = 1.0; // metres along the circle at t = 0
    let on_circle = |s: f64| {
        let a = s / r;
        (r * a.sin(), r - r * a.cos(), a)
    };
    let mut now = Micros(1_000_000);
    for n in 0..100 {
        let t = f64::from(n) * DT;
        let (x, y, a) = on_circle(start + v_ms * (t - age));
        let fix = Fix::new(x, y, a, v_ms, now.sub_micros(100_000));
        let c = g.step(&path, &GuidanceInput::new(FixUpdate::New(fix), now, DT_US));
        assert_eq!(c.status, GuidanceStatus::Following, "{n}: {c:?}");
        let k = c.tracking.unwrap();
        if n >= 60 {
            assert!((c.curvature - 0.2).abs() < 1e-3, "{n}: {}", c.curvature);
            assert!(k.heading_error.abs() < 2e-4, "{n}: {}", k.heading_error);
            assert!(k.cross_track.abs() < 1e-4, "{n}: {}", k.cross_track);
            assert!(
                (k.station - (start + v_ms * t)).abs() < 1e-4,
                "{n}: {}",
                k.station
            );
        }
        now = now.add_micros(DT_US);
    }
}
