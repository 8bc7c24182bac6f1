//! The speed cap along the path (`speed_cap`, `local_speed_limit`) against
//! textbook kinematics, on hand-computed paths.
//!
//! Sources, named again beside each check:
//! * lateral acceleration on a curve, `a = v^2 / r = v^2 |kappa|` (uniform
//!   circular motion; e.g. Halliday, Resnick, Walker, *Fundamentals of
//!   Physics*, chapter on motion in two dimensions, from memory), so
//!   `v <= sqrt(a_lat / |kappa|)`;
//! * constant deceleration `a`: `v^2 = v0^2 - 2 a d` (the same chapter on
//!   motion with constant acceleration), so from distance `d` before a point
//!   with limit `v1` the speed now is at most `sqrt(v1^2 + 2 a d)`, and the
//!   braking distance from `v` is `v^2 / (2 a)`;
//! * the kinematic bicycle with the rear axle as reference, `tan(delta) = L
//!   kappa` (Rajamani, *Vehicle Dynamics and Control*, 2nd ed. 2012,
//!   sec. 2.2, from memory): at speed `v` the steering angle changes at
//!   `d delta / dt = v d delta / ds`, so a rate limit `r` allows
//!   `v <= r / |d delta / ds|`. The tests take `d delta / ds` by central
//!   differences of `atan(L kappa(s))` along the path, not from the
//!   module's closed form.
//!
//! Every test also checks that the cap is safe: never above the envelope
//! `min_x sqrt(v_limit(x)^2 + 2 a x)` sampled densely along the path ahead
//! ([`envelope`]). Where the module's rule is conservative (it applies the
//! sharpest curvature of a segment's part in view at the nearest point of
//! that part, see `src/steer/speed.rs`), the expected value is worked out
//! by hand from that documented rule and the formulas above.

use kappaline::{
    local_speed_limit, speed_cap, Continuity, Path, PathBuilder, Pose, Segment, Vehicle,
    SPEED_SCAN_SEGMENTS,
};

const TOL: f64 = 1e-12;

/// A field tractor for these tests: wheelbase 2.5 m, steering range 0.6 rad,
/// 4 m/s, planning deceleration 0.5 m/s^2 (braking distance from 4 m/s:
/// 4^2 / (2 * 0.5) = 16 m), lateral acceleration `a_lat`, steering rate
/// `rate` rad/s.
fn tractor(a_lat: f64, rate: f64) -> Vehicle<f64> {
    Vehicle::front_steered(2.5, 0.6, rate)
        .unwrap()
        .with_max_speed(4.0)
        .unwrap()
        .with_max_deceleration(0.5)
        .unwrap()
        .with_max_lateral_acceleration(a_lat)
        .unwrap()
}

fn open(segments: &[Segment<f64>]) -> Path<f64, 40> {
    let mut b = PathBuilder::<f64, 40>::new(Pose::new(0.0, 0.0, 0.0)).unwrap();
    for s in segments {
        b.try_push(*s).unwrap();
    }
    b.build().unwrap()
}

/// The limit at each sampled point ahead from the textbook formulas (module
/// docs of this file), carried back to `station` by `v^2 + 2 a x`; the
/// smallest over `distance` metres ahead, sampled every `step` metres inside
/// each segment (curvature steps at joints are not capped, as documented).
fn envelope<const N: usize>(path: &Path<f64, N>, v: &Vehicle<f64>, station: f64) -> f64 {
    let a = v.max_deceleration();
    let distance = v.max_speed() * v.max_speed() / (2.0 * a) + 5.0;
    let step = 1e-3;
    let h = 1e-5;
    let mut best = v.max_speed() * v.max_speed();
    let mut x = 0.0;
    while x <= distance {
        let s = station + x;
        if !path.is_closed() && s > path.length() {
            break;
        }
        let k = |s: f64| path.at(s).curvature;
        let mut limit = v.max_speed();
        let kappa = k(s).abs();
        if kappa > 0.0 {
            limit = limit.min((v.max_lateral_acceleration() / kappa).sqrt());
        }
        // Central difference, skipped where it would straddle a joint.
        if !near_joint(path, s, 2.0 * h) {
            let rate_per_metre = match v.wheelbase() {
                Some(l) => ((l * k(s + h)).atan() - (l * k(s - h)).atan()) / (2.0 * h),
                None => (k(s + h) - k(s - h)) / (2.0 * h),
            }
            .abs();
            if rate_per_metre > 1e-12 {
                let rate = match v.wheelbase() {
                    Some(_) => v.max_steer_rate(),
                    None => v.max_curvature_rate(),
                };
                limit = limit.min(rate / rate_per_metre);
            }
        }
        best = best.min(limit * limit + 2.0 * a * x);
        x += step;
    }
    best.sqrt()
}

/// `true` if station `s` is within `eps` of a segment joint (or the wrap).
fn near_joint<const N: usize>(path: &Path<f64, N>, s: f64, eps: f64) -> bool {
    let s = if path.is_closed() {
        s.rem_euclid(path.length())
    } else {
        s
    };
    (0..path.len())
        .filter_map(|i| path.segment_start(i))
        .chain([path.length()])
        .any(|joint| (s - joint).abs() < eps)
}

/// The cap is never above the textbook envelope (safe).
fn assert_safe<const N: usize>(path: &Path<f64, N>, v: &Vehicle<f64>, station: f64) {
    let cap = speed_cap(path, v, station, None);
    let env = envelope(path, v, station);
    assert!(
        cap <= env + 1e-6,
        "cap {cap} above the envelope {env} at {station}"
    );
}

#[test]
fn lateral_acceleration_on_an_arc_and_braking_before_it() {
    // Line 20 m into an arc of radius 10 m (kappa = 0.1 1/m), a_lat = 0.3
    // m/s^2: on the arc v = sqrt(0.3 / 0.1) = sqrt(3) = 1.732 m/s (a = v^2 /
    // r). x metres before it: v = sqrt(3 + 2 * 0.5 * x) (v^2 = v0^2 - 2 a d),
    // up to 4 m/s from x = 13 m.
    for kappa in [0.1, -0.1] {
        let path = open(&[
            Segment::line(20.0).unwrap(),
            Segment::arc(30.0, kappa).unwrap(),
        ]);
        let v = tractor(0.3, 0.5);
        for (station, want) in [
            (0.0, 4.0),           // x = 20 m, beyond the braking distance
            (7.0, 4.0),           // x = 13 m: sqrt(3 + 13) = 4, the edge
            (8.0, 15f64.sqrt()),  // x = 12 m, just inside it
            (10.0, 13f64.sqrt()), // x = 10 m, mid-segment
            (17.0, 6f64.sqrt()),  // x = 3 m
            (20.0, 3f64.sqrt()),  // at the start of the arc
            (35.0, 3f64.sqrt()),  // on the arc
        ] {
            let cap = speed_cap(&path, &v, station, None);
            assert!(
                (cap - want).abs() < TOL,
                "kappa {kappa} station {station}: {cap} vs {want}"
            );
            assert_safe(&path, &v, station);
            // Here the rule is exact: the envelope itself (to the sampling step).
            let env = envelope(&path, &v, station);
            assert!((cap - env).abs() < 1e-3, "{cap} vs envelope {env}");
        }
    }
}

#[test]
fn stop_at_a_station_is_the_braking_distance() {
    // v = sqrt(2 a d) (braking distance d = v^2 / (2 a)): a = 0.5 m/s^2,
    // d = 4 m gives 2 m/s; d = 16 m exactly the 4 m/s limit; behind: 0.
    let path = open(&[Segment::line(60.0).unwrap()]);
    let v = tractor(1.0, 0.5);
    let cap = |station: f64, stop: f64| speed_cap(&path, &v, station, Some(stop));
    assert!((cap(10.0, 14.0) - 2.0).abs() < TOL);
    assert!((cap(10.0, 11.0) - 1.0).abs() < TOL); // sqrt(2 * 0.5 * 1)
    assert!((cap(10.0, 26.0) - 4.0).abs() < TOL); // 16 m: the speed limit
    assert!((cap(10.0, 25.0) - 15f64.sqrt()).abs() < TOL); // just inside
    assert_eq!(cap(10.0, 10.0), 0.0);
    assert_eq!(cap(10.0, 5.0), 0.0);
    // A stop that is not finite is ignored.
    assert_eq!(speed_cap(&path, &v, 10.0, Some(f64::NAN)), 4.0);
}

#[test]
fn end_of_an_open_path_is_a_stop_only_when_asked() {
    // The caller names the stop (`stop_at`); a short open path alone does not
    // limit the speed (the docs of `speed_cap`).
    let path = open(&[Segment::line(5.0).unwrap()]);
    let v = tractor(1.0, 0.5);
    assert_eq!(speed_cap(&path, &v, 0.0, None), 4.0);
    assert!((speed_cap(&path, &v, 0.0, Some(5.0)) - 5f64.sqrt()).abs() < TOL);
}

#[test]
fn s_bend_clothoid_is_limited_by_the_steering_rate_at_the_inflection() {
    // A clothoid from -0.1 to +0.1 1/m over 10 m (sigma = 0.02 1/m^2), L =
    // 2.5 m, steering rate 0.1 rad/s. delta = atan(L kappa) changes fastest
    // where kappa = 0 (d delta / ds = L sigma / (1 + (L kappa)^2), largest at
    // kappa = 0): L sigma = 0.05 rad/m, so v <= 0.1 / 0.05 = 2 m/s there.
    // Lateral acceleration (a_lat = 2: sqrt(2 / 0.1) = 4.47 m/s) does not bind.
    for (k0, k1) in [(-0.1, 0.1), (0.1, -0.1)] {
        let path = open(&[Segment::transition(10.0, k0, k1).unwrap()]);
        let v = tractor(2.0, 0.1);
        // From the start, 5 m before the inflection, the module applies the
        // inflection's limit at once (its documented, conservative rule).
        let cap = speed_cap(&path, &v, 0.0, None);
        assert!((cap - 2.0).abs() < TOL, "{k0} -> {k1}: {cap}");
        assert_safe(&path, &v, 0.0);
        // 0.1 m before the inflection that is the textbook limit itself: the
        // numerical derivative of atan(L kappa(s)) gives 2 m/s there, carried
        // back by 2 a x = 0.1 (m/s)^2, and 2.00005 m/s where the vehicle is.
        let cap = speed_cap(&path, &v, 4.9, None);
        let env = envelope(&path, &v, 4.9);
        assert!((cap - 2.0).abs() < TOL, "{cap}");
        assert!(cap <= env && env - cap < 1e-4, "{cap} vs envelope {env}");
    }
}

#[test]
fn clothoid_of_one_sign_is_limited_where_its_curvature_is_smallest() {
    // 0.1 -> 0.3 1/m over 10 m (sigma = 0.02): d delta / ds is largest at the
    // smallest |kappa| = 0.1: L sigma / (1 + (L kappa)^2) = 0.05 / 1.0625, so
    // v <= 0.1 * 1.0625 / 0.05 = 2.125 m/s; a_lat = 2 gives sqrt(2 / 0.3) =
    // 2.58 m/s on the sharp end, which does not bind. Mirrored for a right
    // turn. Here the smallest curvature is where the vehicle is, and the
    // cap is the envelope itself.
    for (k0, k1) in [(0.1, 0.3), (-0.1, -0.3)] {
        let path = open(&[Segment::transition(10.0, k0, k1).unwrap()]);
        let v = tractor(2.0, 0.1);
        let cap = speed_cap(&path, &v, 0.0, None);
        assert!((cap - 2.125).abs() < TOL, "{k0} -> {k1}: {cap}");
        // (to the sampling step of the envelope, 1 mm: 3e-4 m/s here).
        let env = envelope(&path, &v, 0.0);
        assert!(cap <= env && env - cap < 1e-3, "{cap} vs envelope {env}");
    }
    // Falling curvature, 0.3 -> 0.1: the same 2.125 m/s is applied at the
    // near end (the documented rule; conservative, the envelope is higher).
    let path = open(&[Segment::transition(10.0, 0.3, 0.1).unwrap()]);
    let v = tractor(2.0, 0.1);
    assert!((speed_cap(&path, &v, 0.0, None) - 2.125).abs() < TOL);
    assert_safe(&path, &v, 0.0);
    // Ending exactly at kappa = 0: the rate there is L sigma again (2 m/s).
    let path = open(&[Segment::transition(10.0, 0.2, 0.0).unwrap()]);
    assert!((speed_cap(&path, &v, 0.0, None) - 2.0).abs() < TOL);
    assert_safe(&path, &v, 0.0);
}

#[test]
fn local_limit_of_the_steering_rate_away_from_zero_curvature() {
    // L = 2.5 m, kappa = 0.2 1/m, sigma = 0.04 1/m^2, rate 0.5 rad/s:
    // d delta / ds = L sigma / (1 + (L kappa)^2) = 0.1 / 1.25, so v <= 0.5 *
    // 1.25 / 0.1 = 6.25 m/s. Lateral 20 m/s^2 (10 m/s) and the 8 m/s speed
    // limit do not bind.
    let v = Vehicle::<f64>::front_steered(2.5, 0.6, 0.5)
        .unwrap()
        .with_max_speed(8.0)
        .unwrap()
        .with_max_lateral_acceleration(20.0)
        .unwrap();
    let lim = local_speed_limit(&v, 0.2, 0.2, 0.04);
    assert!((lim - 6.25).abs() < TOL, "{lim}");
    // The same from the numerical derivative of atan(L kappa).
    let h = 1e-6;
    let ddelta_ds = ((2.5f64 * (0.2 + h)).atan() - (2.5f64 * (0.2 - h)).atan()) / (2.0 * h) * 0.04;
    assert!((lim - 0.5 / ddelta_ds).abs() < 1e-6);
    // Sharpness of either sign; no sharpness, no rate limit.
    assert!((local_speed_limit(&v, 0.2, 0.2, -0.04) - 6.25).abs() < TOL);
    assert!((local_speed_limit(&v, 0.2, 0.2, 0.0) - 8.0).abs() < TOL);
    // Lateral limit alone: sqrt(20 / 0.5) = 6.32 m/s on kappa = -0.5.
    assert!((local_speed_limit(&v, -0.5, 0.5, 0.0) - 40f64.sqrt()).abs() < TOL);
    // Differential drive: d kappa / dt = v sigma <= 0.3 1/m/s, sigma = 0.2:
    // 1.5 m/s, whatever the curvature.
    let d = Vehicle::<f64>::differential(0.5, 2.0, 0.3)
        .unwrap()
        .with_max_speed(3.0)
        .unwrap()
        .with_max_lateral_acceleration(100.0)
        .unwrap();
    assert!((local_speed_limit(&d, 0.5, 0.5, 0.2) - 1.5).abs() < TOL);
    assert!((local_speed_limit(&d, 0.0, 0.0, -0.2) - 1.5).abs() < TOL);
}

#[test]
fn curvature_falling_inside_a_clothoid_is_limited_at_the_current_point() {
    // Line 10 m, then a clothoid 0.32 -> 0.02 1/m over 30 m (sigma = -0.01),
    // then a line. At station 14 (4 m into the clothoid) kappa = 0.28 1/m,
    // the sharpest point ahead: v = sqrt(0.3 / 0.28) = 1.035 m/s (a = v^2 r).
    let path = open(&[
        Segment::line(10.0).unwrap(),
        Segment::transition(30.0, 0.32, 0.02).unwrap(),
        Segment::line(30.0).unwrap(),
    ]);
    let v = tractor(0.3, 0.5);
    let cap = speed_cap(&path, &v, 14.0, None);
    assert!((cap - (0.3f64 / 0.28).sqrt()).abs() < TOL, "{cap}");
    let env = envelope(&path, &v, 14.0);
    assert!((cap - env).abs() < 1e-6, "{cap} vs envelope {env}");
    // 26 m into it: kappa = 0.06, sqrt(5) = 2.236 m/s.
    let cap = speed_cap(&path, &v, 36.0, None);
    assert!((cap - 5f64.sqrt()).abs() < TOL, "{cap}");
    assert_safe(&path, &v, 36.0);
}

#[test]
fn scan_bound_plans_a_stop_at_the_end_of_what_it_scanned() {
    // 30 lines of 0.5 m: the scan stops after SPEED_SCAN_SEGMENTS (12 m),
    // short of the braking distance (16 m), and plans a stop there (module
    // docs): v = sqrt(2 a d) = sqrt(2 * 0.5 * 12) = 3.46 m/s.
    let segments = [Segment::line(0.5).unwrap(); 30];
    let path = open(&segments);
    let v = tractor(1.0, 0.5);
    let scanned = SPEED_SCAN_SEGMENTS as f64 * 0.5;
    let cap = speed_cap(&path, &v, 0.0, None);
    assert!((cap - (2.0 * 0.5 * scanned).sqrt()).abs() < TOL, "{cap}");
    // Half-way into the first segment the scan ends 0.25 m nearer.
    let cap = speed_cap(&path, &v, 0.25, None);
    assert!(
        (cap - (2.0 * 0.5 * (scanned - 0.25)).sqrt()).abs() < TOL,
        "{cap}"
    );
}

#[test]
fn scan_wraps_round_a_closed_path() {
    // A loop: half turn of radius 5 m (kappa = 0.2), line 20 m, half turn,
    // line 20 m, back at the start. a_lat = 0.3: on the arcs v = sqrt(0.3 /
    // 0.2) = sqrt(1.5). 3 m before the end of the loop the first arc is 3 m
    // ahead: v = sqrt(1.5 + 2 * 0.5 * 3) = sqrt(4.5) (v^2 = v0^2 - 2 a d).
    let half = core::f64::consts::PI / 0.2;
    let mut b = PathBuilder::<f64, 8>::new(Pose::new(0.0, 0.0, 0.0)).unwrap();
    for s in [
        Segment::arc(half, 0.2).unwrap(),
        Segment::line(20.0).unwrap(),
        Segment::arc(half, 0.2).unwrap(),
        Segment::line(20.0).unwrap(),
    ] {
        b.try_push(s).unwrap();
    }
    let path = b.close(Continuity::DEFAULT).unwrap();
    let v = tractor(0.3, 0.5);
    let total = path.length();
    let cap = speed_cap(&path, &v, total - 3.0, None);
    assert!((cap - 4.5f64.sqrt()).abs() < 1e-9, "{cap}");
    assert_safe(&path, &v, total - 3.0);
    // A station past the end wraps onto the first arc.
    let cap = speed_cap(&path, &v, total + 5.0, None);
    assert!((cap - 1.5f64.sqrt()).abs() < 1e-9, "{cap}");
}
