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
//!
//! Then the guidance's edges, each at and either side of it (the contract in
//! the module docs of `src/guide/guidance.rs` and `src/guide/supervisor.rs`):
//! the stop request and the change of leg at a cusp (`cusp_tolerance`,
//! `stopped_speed`), the end of an open path (`end_tolerance`), the
//! cross-track and heading limits, and the last check that replaces a
//! non-finite command by the `Fault` command.

use kappaline::{
    AnchoredSegment, Command, Continuity, Direction, Fix, FixUpdate, Guidance, GuidanceInput,
    GuidanceStatus, Micros, Path, PathBuilder, Pose, PurePursuit, Reason, Segment,
    SupervisorConfig, TrackerConfig, Vehicle,
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
    // A circle of radius r about (0, r), driven counter-clockwise at v from
    // 1 m along it, fixes `age` seconds old. Once the command has settled on
    // the circle's curvature, each fix dead-reckoned to `now` is the point
    // of the circle where the vehicle is now: no cross-track or heading
    // error, the station 1 + v t. Carried straight on instead it would be
    // v age / r rad late (0.04, 0.25) and outside the circle. The second
    // case turns by more than the small-angle series covers (half-turn
    // 0.125 rad).
    for (r, v_ms, age, wheelbase) in [(5.0f64, 2.0f64, 0.1f64, 2.5), (2.5, 2.5, 0.25, 1.5)] {
        let k = 1.0 / r;
        let path: Path<f64, 4> = PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap()
            .push(Segment::arc(30.0, k).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let v = Vehicle::front_steered(wheelbase, 40f64.to_radians(), 40f64.to_radians()).unwrap();
        let mut g = Guidance::new(
            v,
            PurePursuit::tractor(),
            TrackerConfig::tractor(),
            SupervisorConfig::default_for(&v),
        )
        .unwrap();
        let start = 1.0;
        let on_circle = |s: f64| {
            let a = s / r;
            (r * a.sin(), r - r * a.cos(), a)
        };
        let mut now = Micros(1_000_000);
        let age_us = (age * 1e6) as u32;
        for n in 0..100 {
            let t = f64::from(n) * DT;
            let (x, y, a) = on_circle(start + v_ms * (t - age));
            let fix = Fix::new(x, y, a, v_ms, now.sub_micros(age_us));
            let c = g.step(&path, &GuidanceInput::new(FixUpdate::New(fix), now, DT_US));
            assert_eq!(c.status, GuidanceStatus::Following, "{r} {n}: {c:?}");
            let e = c.tracking.unwrap();
            if n >= 60 {
                assert!((c.curvature - k).abs() < 1e-3, "{r} {n}: {}", c.curvature);
                let turn_err = (c.curvature - k).abs() * v_ms * age;
                assert!(
                    e.heading_error.abs() < 1e-6 + turn_err,
                    "{r} {n}: {}",
                    e.heading_error
                );
                assert!(e.cross_track.abs() < 1e-4, "{r} {n}: {}", e.cross_track);
                assert!(
                    (e.station - (start + v_ms * t)).abs() < 1e-4,
                    "{r} {n}: {}",
                    e.station
                );
            }
            now = now.add_micros(DT_US);
        }
    }
}

fn tractor() -> Vehicle<f64> {
    Vehicle::front_steered(2.5, 35f64.to_radians(), 40f64.to_radians()).unwrap()
}

/// Tolerances that are binary fractions, so the edges are exact.
fn edges_config() -> SupervisorConfig<f64> {
    SupervisorConfig {
        cusp_tolerance: 0.125,
        end_tolerance: 0.125,
        stopped_speed: 0.25,
        ..SupervisorConfig::default_for(&tractor())
    }
}

/// A 20 m line forward from the origin along x, a cusp at (20, 0), and 20 m
/// reversing back along it (the body still heading along +x): the two legs
/// lie on top of each other, so only the leg carried from cycle to cycle
/// says which one is driven.
fn there_and_back() -> Path<f64, 4> {
    let parts = [
        AnchoredSegment {
            segment: Segment::line(20.0).unwrap(),
            start: Pose::new(0.0, 0.0, 0.0),
        },
        AnchoredSegment {
            segment: Segment::line(20.0).unwrap().reversed(),
            start: Pose::new(20.0, 0.0, core::f64::consts::PI),
        },
    ];
    // The cusp flips the path tangent by pi (the body heading stays).
    let joint = Continuity {
        position: 1e-9,
        heading: core::f64::consts::PI,
    };
    Path::from_anchored(&parts, joint, false).unwrap()
}

/// Guidance on `path`, driven by fixes on the x axis from x = 15 at 2 m/s
/// (0.1 m per 50 ms cycle) to x = 19.8, then one fix at `x` with `speed`;
/// the last command.
fn approach(path: &Path<f64, 4>, x: f64, speed: f64) -> Command<f64> {
    let v = tractor();
    let mut g = Guidance::new(
        v,
        PurePursuit::tractor(),
        TrackerConfig::tractor(),
        edges_config(),
    )
    .unwrap();
    let mut now = Micros(1_000_000);
    for n in 0..=48 {
        let fx = 15.0 + 0.1 * f64::from(n);
        let c = g.step(
            path,
            &GuidanceInput::new(FixUpdate::New(Fix::new(fx, 0.0, 0.0, 2.0, now)), now, DT_US),
        );
        assert_eq!(c.status, GuidanceStatus::Following, "{fx}: {c:?}");
        assert_eq!(
            c.tracking.unwrap().foot.direction,
            Direction::Forward,
            "{fx}"
        );
        now = now.add_micros(DT_US);
    }
    let fix = Fix::new(x, 0.0, 0.0, speed, now);
    g.step(path, &GuidanceInput::new(FixUpdate::New(fix), now, DT_US))
}

#[test]
fn stop_request_before_a_cusp_starts_at_cusp_tolerance() {
    // "once it is within cusp_tolerance of the cusp" the vehicle is asked to
    // stop: at 20 - 0.125 m the speed limit is 0; 1 um before it the speed
    // cap still allows the braking speed sqrt(2 a d) (a = 1 m/s^2, d the
    // distance left after one period at 0.5 m/s: kinematics).
    let path = there_and_back();
    let before = approach(&path, 19.875 - 1e-6, 0.5);
    assert_eq!(before.status, GuidanceStatus::Following);
    let d = 20.0 - (19.875 - 1e-6 + 0.5 * DT);
    assert!(
        (before.speed_limit - (2.0 * d).sqrt()).abs() < 1e-9,
        "{}",
        before.speed_limit
    );
    let at = approach(&path, 19.875, 0.5);
    assert_eq!(
        (at.status, at.speed_limit),
        (GuidanceStatus::Following, 0.0)
    );
    // Still on the forward leg: not stopped yet (0.5 m/s > 0.25 m/s).
    assert_eq!(at.tracking.unwrap().foot.direction, Direction::Forward);
}

#[test]
fn next_leg_only_once_stopped_within_cusp_tolerance() {
    // The next leg becomes current "once it is within cusp_tolerance of the
    // cusp and slower than stopped_speed" (at stopped_speed itself too).
    let path = there_and_back();
    for (x, speed, want) in [
        (19.875, 0.25, Direction::Reverse),
        (19.875, 0.0, Direction::Reverse),
        (19.875, -0.25, Direction::Reverse),
        (19.875, 0.25 + 1e-9, Direction::Forward),
        (19.875 - 1e-6, 0.0, Direction::Forward),
        (20.0, 0.1, Direction::Reverse),
    ] {
        let c = approach(&path, x, speed);
        assert_eq!(c.status, GuidanceStatus::Following, "{x} {speed}: {c:?}");
        let t = c.tracking.unwrap();
        assert_eq!(t.foot.direction, want, "{x} {speed}");
        if want == Direction::Reverse {
            // On the reverse leg, projected from its start: the station is
            // the cusp's (20 m), within the tolerance, and the cap is that
            // of the 20 m leg ahead (no stop request).
            assert!((t.station - 20.0).abs() < 0.13, "{}", t.station);
            assert!(c.speed_limit > 0.0, "{x} {speed}: {}", c.speed_limit);
        } else if x >= 19.875 {
            assert_eq!(c.speed_limit, 0.0, "{x} {speed}");
        } else {
            // The braking speed over what is left after one period.
            let d = 20.0 - (x + speed * DT);
            assert!(
                (c.speed_limit - (2.0 * d).sqrt()).abs() < 1e-9,
                "{}",
                c.speed_limit
            );
        }
    }
}

#[test]
fn end_of_path_at_end_tolerance() {
    // EndOfPath "within end_tolerance of the end of an open path": at
    // 20 - 0.125 m, not 1 um before.
    let path: Path<f64, 4> = PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(20.0).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let before = approach(&path, 19.875 - 1e-6, 0.5);
    assert_eq!(before.status, GuidanceStatus::Following);
    let at = approach(&path, 19.875, 0.5);
    assert_eq!(
        (at.status, at.speed_limit),
        (GuidanceStatus::EndOfPath, 0.0)
    );
}

/// The first command of a guidance given one fix at `(x, y)`, heading `h`
/// on the line y = 0.
fn first(x: f64, y: f64, h: f64) -> Command<f64> {
    let path: Path<f64, 4> = PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(100.0).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let v = tractor();
    let mut g = Guidance::new(
        v,
        PurePursuit::tractor(),
        TrackerConfig::tractor(),
        edges_config(),
    )
    .unwrap();
    let fix = Fix::new(x, y, h, 2.0, Micros(0));
    g.step(
        &path,
        &GuidanceInput::new(FixUpdate::New(fix), Micros(0), DT_US),
    )
}

#[test]
fn acquisition_within_the_error_limits_at_their_edges() {
    // Acquired "only within the cross-track and heading limits" (1.5 m,
    // 1.0 rad): at the limit it follows, beyond it it stays acquiring with
    // OffLimits; on either side of the path.
    for side in [1.0, -1.0] {
        let at = first(10.0, 1.5 * side, 0.0);
        assert_eq!(at.status, GuidanceStatus::Following, "{at:?}");
        let out = first(10.0, (1.5 + 1e-6) * side, 0.0);
        assert_eq!(
            (out.status, out.reason),
            (GuidanceStatus::Acquiring, Some(Reason::OffLimits))
        );
        let at = first(10.0, 0.0, (1.0 - 1e-9) * side);
        assert_eq!(at.status, GuidanceStatus::Following, "{at:?}");
        let out = first(10.0, 0.0, (1.0 + 1e-9) * side);
        assert_eq!(
            (out.status, out.reason),
            (GuidanceStatus::Acquiring, Some(Reason::OffLimits))
        );
    }
}

#[test]
fn a_command_that_would_not_be_finite_is_the_fault_command() {
    // "a last check replaces anything non-finite by the Fault command". A
    // 0.1 m wheelbase with 80 degrees of steering turns at up to
    // tan(80 deg) / 0.1 = 57 1/m; a fix reporting f64::MAX m/s (finite, so
    // it passes the fix checks) on a tight arc makes the yaw rate,
    // curvature times speed, overflow to infinity.
    // A slow actuator (0.1 rad/s: 1 1/m/s at this wheelbase) seeded at
    // 2 1/m keeps the curvature above 1.9 1/m whatever the law asks.
    let v = Vehicle::front_steered(0.1, 80f64.to_radians(), 0.1).unwrap();
    let path: Path<f64, 4> = PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::arc(3.0, 2.0).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let mut g = Guidance::new(
        v,
        PurePursuit::tractor(),
        TrackerConfig::small_robot(),
        edges_config(),
    )
    .unwrap();
    g.seed_curvature(2.0);
    let p = path.at(1.0);
    let fix = Fix::new(p.x, p.y, p.heading(), f64::MAX, Micros(0));
    let c = g.step(
        &path,
        &GuidanceInput::new(FixUpdate::New(fix), Micros(0), DT_US),
    );
    assert_eq!(
        (c.status, c.reason),
        (GuidanceStatus::Fault, Some(Reason::BadFix)),
        "{c:?}"
    );
    assert!(c.curvature.is_finite() && c.yaw_rate == 0.0 && c.speed_limit == 0.0);
}

/// A stadium track, closed: 20 m along x from the origin, a half circle of
/// radius 5 m to the left (centre (20, 5)), 20 m back along y = 10, a half
/// circle about (0, 5) back to the start. Length 40 + 10 pi.
fn stadium() -> Path<f64, 8> {
    let mut b = PathBuilder::<f64, 8>::new(Pose::new(0.0, 0.0, 0.0)).unwrap();
    for _ in 0..2 {
        b.try_push(Segment::line(20.0).unwrap()).unwrap();
        b.try_push(Segment::arc(5.0 * core::f64::consts::PI, 0.2).unwrap())
            .unwrap();
    }
    b.close(Continuity::DEFAULT).unwrap()
}

/// The stadium's point and heading at station `s` (hand geometry).
fn stadium_at(s: f64) -> (f64, f64, f64) {
    let pi = core::f64::consts::PI;
    let len = 40.0 + 10.0 * pi;
    let s = s.rem_euclid(len);
    if s < 20.0 {
        (s, 0.0, 0.0)
    } else if s < 20.0 + 5.0 * pi {
        let a = (s - 20.0) / 5.0;
        (20.0 + 5.0 * a.sin(), 5.0 - 5.0 * a.cos(), a)
    } else if s < 40.0 + 5.0 * pi {
        (20.0 - (s - 20.0 - 5.0 * pi), 10.0, pi)
    } else {
        let a = (s - 40.0 - 5.0 * pi) / 5.0;
        (-5.0 * a.sin(), 5.0 + 5.0 * a.cos(), pi + a)
    }
}

#[test]
fn laps_of_a_closed_path_never_stop_at_the_seam() {
    // A closed path driven in one direction is one leg without an end
    // ("stations wrap"): laps go on Following through the seam, the station
    // counts modulo the length, the speed cap never asks for a stop, and a
    // dropout across the seam is coasted through (the window moved on by
    // dead reckoning). Fixes 0.3 m left of the track at 2 m/s.
    let path = stadium();
    let len = 40.0 + 10.0 * core::f64::consts::PI;
    assert!((path.length() - len).abs() < 1e-9);
    let v = tractor();
    let mut g = Guidance::new(
        v,
        PurePursuit::tractor(),
        TrackerConfig::tractor(),
        SupervisorConfig::default_for(&v),
    )
    .unwrap();
    let mut now = Micros(1_000_000);
    let mut s = len - 12.0;
    let mut seams = 0;
    let mut last_station = None;
    while s < 2.5 * len {
        // No fixes for 0.4 s as the vehicle crosses the seam on the second
        // lap (within the 0.5 s hold time).
        let dropout = s > 2.0 * len - 0.4 && s < 2.0 * len + 0.4;
        let (x, y, h) = stadium_at(s);
        let update = if dropout {
            FixUpdate::NoFix
        } else {
            FixUpdate::New(Fix::new(x - 0.3 * h.sin(), y + 0.3 * h.cos(), h, 2.0, now))
        };
        let c = g.step(&path, &GuidanceInput::new(update, now, DT_US));
        if dropout {
            assert_eq!(c.status, GuidanceStatus::Degraded, "{s}");
        } else {
            assert_eq!(c.status, GuidanceStatus::Following, "{s}: {c:?}");
            assert!(c.speed_limit > 1.0, "{s}: {}", c.speed_limit);
            let t = c.tracking.unwrap();
            let want = s.rem_euclid(len);
            let mut e = (t.station - want).abs();
            e = e.min(len - e);
            assert!(e < 1e-6, "{s}: station {} vs {want}", t.station);
            assert!((t.cross_track - 0.3).abs() < 1e-6, "{s}: {}", t.cross_track);
            assert!((t.distance_to_end - (len - t.station)).abs() < 1e-9);
            if last_station.is_some_and(|l| t.station < l) {
                seams += 1;
            }
            last_station = Some(t.station);
        }
        s += 0.1;
        now = now.add_micros(DT_US);
    }
    assert_eq!(seams, 2, "two seams crossed with fixes");
}

#[test]
fn losing_the_path_and_leaving_the_limits_say_why() {
    // Following -> Lost "a limit is exceeded or the tracker reports Lost",
    // each with its reason: with a cross-track limit of 3 m beyond the
    // tracker's 2 m, a vehicle drifting off sideways (0.25 m per cycle,
    // within the jump tolerance) is lost by the tracker first (PathLost);
    // with the 1.5 m limit inside it, by the limit (OffLimits).
    for (limit, reason, at) in [(3.0, Reason::PathLost, 2.0), (1.5, Reason::OffLimits, 1.5)] {
        let v = tractor();
        let cfg = SupervisorConfig {
            max_cross_track: limit,
            ..SupervisorConfig::default_for(&v)
        };
        let path: Path<f64, 4> = PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap()
            .push(Segment::line(100.0).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let mut g =
            Guidance::new(v, PurePursuit::tractor(), TrackerConfig::tractor(), cfg).unwrap();
        let mut now = Micros(0);
        let mut lost_at = None;
        for n in 0..12 {
            let (x, y) = (10.0 + 0.1 * f64::from(n), 0.25 * f64::from(n));
            let c = g.step(
                &path,
                &GuidanceInput::new(FixUpdate::New(Fix::new(x, y, 0.0, 2.0, now)), now, DT_US),
            );
            if c.status == GuidanceStatus::Lost {
                // (Later cycles try to re-acquire, with their own reasons.)
                if lost_at.is_none() {
                    assert_eq!(c.reason, Some(reason), "{limit}");
                    lost_at = Some(y);
                }
            } else {
                assert_eq!(c.status, GuidanceStatus::Following, "{limit} {y}");
            }
            now = now.add_micros(DT_US);
        }
        // The first fix beyond the edge (2 m, 1.5 m) is the first lost one.
        assert_eq!(lost_at, Some(at + 0.25), "{limit}");
    }
}
