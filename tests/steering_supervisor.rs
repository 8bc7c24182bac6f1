//! Supervisor transitions, one test each (see the table in
//! `src/guide/supervisor.rs`), and a property test that no input sequence makes
//! the guidance output a non-finite value or break the steering limits.
//! The expected commands come from the supervisor's documented contract
//! (hold / straighten / stop); the limits from the vehicle description.

use kappaline::{
    Command, Fix, Guidance, GuidanceInput, GuidanceStatus, Path, PathBuilder, Pose, PurePursuit,
    Segment, SupervisorConfig, TrackerConfig, Vehicle,
};
use proptest::prelude::*;

const DT: f64 = 0.05;

fn vehicle() -> Vehicle<f64> {
    Vehicle::front_steered(2.5, 35f64.to_radians(), 40f64.to_radians()).unwrap()
}

fn line(len: f64) -> Path<f64, 4> {
    PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(len).unwrap())
        .unwrap()
        .build()
        .unwrap()
}

fn guidance() -> Guidance<f64, PurePursuit<f64>> {
    let v = vehicle();
    Guidance::new(
        v,
        PurePursuit::tractor(),
        TrackerConfig::tractor(),
        SupervisorConfig::default_for(&v),
    )
    .unwrap()
}

/// A test driver: time advances by DT per step; the fix is stamped now.
struct Drive {
    g: Guidance<f64, PurePursuit<f64>>,
    path: Path<f64, 4>,
    now: f64,
    last: Option<Command<f64>>,
}

impl Drive {
    fn new() -> Self {
        Self {
            g: guidance(),
            path: line(200.0),
            now: 0.0,
            last: None,
        }
    }
    fn raw(&mut self, fix: Option<Fix<f64>>, now: f64, dt: f64) -> Command<f64> {
        let cmd = self.g.step(&self.path, &GuidanceInput { fix, now, dt });
        assert_finite(&cmd);
        if let (Some(prev), true) = (self.last, dt.is_finite() && dt > 0.0) {
            let rate = (cmd.steer_angle - prev.steer_angle).abs() / dt;
            assert!(
                rate <= vehicle().max_steer_rate() * (1.0 + 1e-9) + 1e-12,
                "rate {rate}"
            );
        }
        assert!(cmd.steer_angle.abs() <= vehicle().max_steer() + 1e-12);
        self.last = Some(cmd);
        cmd
    }
    /// A step with a fix at (x, y), heading h, speed 2 m/s, stamped now.
    fn at(&mut self, x: f64, y: f64, h: f64) -> Command<f64> {
        self.now += DT;
        let f = Fix {
            x,
            y,
            heading: h,
            speed: 2.0,
            time: self.now,
        };
        self.raw(Some(f), self.now, DT)
    }
    fn with(&mut self, fix: Option<Fix<f64>>) -> Command<f64> {
        self.now += DT;
        self.raw(fix, self.now, DT)
    }
    /// Follows the path for `n` steps at y offset `y`, moving 0.1 m a step.
    fn follow(&mut self, x0: f64, y: f64, n: usize) -> f64 {
        let mut x = x0;
        for _ in 0..n {
            let c = self.at(x, y, 0.0);
            assert_eq!(c.status, GuidanceStatus::Following);
            x += 2.0 * DT;
        }
        x
    }
}

fn assert_finite(c: &Command<f64>) {
    for v in [
        c.curvature,
        c.steer_angle,
        c.yaw_rate,
        c.wheel_speeds.0,
        c.wheel_speeds.1,
        c.speed_limit,
    ] {
        assert!(v.is_finite(), "{c:?}");
    }
    assert!(c.speed_limit >= 0.0);
}

#[test]
fn acquiring_to_following() {
    let mut d = Drive::new();
    let c = d.with(None);
    assert_eq!(c.status, GuidanceStatus::Acquiring);
    assert_eq!(c.speed_limit, 0.0);
    let c = d.at(10.0, 0.3, 0.0);
    assert_eq!(c.status, GuidanceStatus::Following);
    assert!(c.speed_limit > 0.0);
    assert!(c.curvature < 0.0);
}

#[test]
fn acquiring_stays_while_far_from_path() {
    let mut d = Drive::new();
    // 5 m off: beyond the tracker's lost distance (2 m).
    for _ in 0..5 {
        let c = d.at(10.0, 5.0, 0.0);
        assert_eq!(c.status, GuidanceStatus::Acquiring);
        assert_eq!(c.speed_limit, 0.0);
        assert_eq!(c.curvature, 0.0);
    }
    assert_eq!(d.at(10.0, 0.5, 0.0).status, GuidanceStatus::Following);
}

#[test]
fn nan_fix_holds_then_lost_then_straightens() {
    let mut d = Drive::new();
    let x = d.follow(10.0, 0.8, 10);
    let before = d.last.unwrap();
    assert!(before.curvature.abs() > 1e-3);
    let nan = Fix {
        x: f64::NAN,
        y: 0.0,
        heading: 0.0,
        speed: 2.0,
        time: d.now + DT,
    };
    let c = d.with(Some(nan));
    assert_eq!(c.status, GuidanceStatus::Degraded);
    assert_eq!(c.curvature, before.curvature); // hold
    assert_eq!(c.speed_limit, before.speed_limit);
    // hold_time 0.5 s: Lost after more than 10 more cycles.
    let mut lost_at = None;
    for i in 0..30 {
        let f = Fix {
            heading: f64::INFINITY,
            ..nan
        };
        let c = d.with(Some(f));
        if c.status == GuidanceStatus::Lost {
            lost_at.get_or_insert(i);
            assert_eq!(c.speed_limit, 0.0);
        } else {
            assert_eq!(c.status, GuidanceStatus::Degraded);
            assert_eq!(c.curvature, before.curvature);
        }
    }
    let lost_at = lost_at.expect("never lost");
    assert!((9..=11).contains(&lost_at), "lost after {lost_at} cycles");
    // Straightened at the rate limit: 0.698 rad/s * 0.05 s per step.
    assert!(d.last.unwrap().curvature.abs() < 1e-12);
    let _ = x;
}

#[test]
fn stale_fix_degrades() {
    let mut d = Drive::new();
    d.follow(10.0, 0.2, 5);
    let stale = Fix {
        x: 11.0,
        y: 0.2,
        heading: 0.0,
        speed: 2.0,
        time: d.now - 1.0,
    };
    assert_eq!(d.with(Some(stale)).status, GuidanceStatus::Degraded);
}

#[test]
fn fix_time_going_backwards_degrades() {
    let mut d = Drive::new();
    d.follow(10.0, 0.2, 5);
    let t = d.now;
    let old = Fix {
        x: 11.0,
        y: 0.2,
        heading: 0.0,
        speed: 2.0,
        time: t - 0.1,
    };
    assert_eq!(d.with(Some(old)).status, GuidanceStatus::Degraded);
}

#[test]
fn short_dropout_recovers_directly() {
    let mut d = Drive::new();
    let mut x = d.follow(10.0, 0.2, 5);
    for _ in 0..6 {
        // 0.3 s without fixes (hold_time 0.5 s); the vehicle keeps going.
        assert_eq!(d.with(None).status, GuidanceStatus::Degraded);
        x += 2.0 * DT;
    }
    x += 2.0 * DT;
    assert_eq!(d.at(x, 0.2, 0.0).status, GuidanceStatus::Following);
}

#[test]
fn window_coasts_through_a_dropout() {
    // A narrow tracker window (0.5 m ahead, lost at 0.5 m) and a 2 s hold:
    // 1.5 s without fixes at 2 m/s moves the vehicle 3 m, far beyond the
    // window. The guidance moves the window on by dead reckoning, so the
    // first fix after the gap is followed, not lost. (Contract of
    // `Guidance`: Degraded holds and coasts; see src/guide/guidance.rs.)
    let v = vehicle();
    let tracker = TrackerConfig {
        window_back: 0.5,
        window_ahead: 0.5,
        lost_distance: 0.5,
        ..TrackerConfig::tractor()
    };
    let supervisor = SupervisorConfig {
        hold_time: 2.0,
        ..SupervisorConfig::default_for(&v)
    };
    let mut d = Drive::new();
    d.g = Guidance::new(v, PurePursuit::tractor(), tracker, supervisor).unwrap();
    let mut x = d.follow(10.0, 0.0, 10);
    for _ in 0..30 {
        assert_eq!(d.with(None).status, GuidanceStatus::Degraded);
        x += 2.0 * DT;
    }
    let c = d.at(x, 0.0, 0.0);
    assert_eq!(c.status, GuidanceStatus::Following);
    let t = c.tracking.unwrap();
    assert!((t.station - x).abs() < 0.05, "station {} vs {x}", t.station);
}

#[test]
fn input_stops_arriving() {
    let mut d = Drive::new();
    d.follow(10.0, 0.5, 10);
    let held = d.last.unwrap().curvature;
    let mut statuses = Vec::new();
    for _ in 0..60 {
        statuses.push(d.with(None));
    }
    let first_lost = statuses
        .iter()
        .position(|c| c.status == GuidanceStatus::Lost)
        .unwrap();
    assert!(statuses[..first_lost]
        .iter()
        .all(|c| c.status == GuidanceStatus::Degraded && c.curvature == held));
    assert!(statuses[first_lost..]
        .iter()
        .all(|c| c.status == GuidanceStatus::Lost && c.speed_limit == 0.0));
    // 0.5 s hold at 20 Hz.
    assert!((10..=11).contains(&first_lost), "{first_lost}");
    assert_eq!(statuses.last().unwrap().curvature, 0.0);
}

#[test]
fn jump_of_5_m_sideways_is_lost_until_back_and_confirmed() {
    let mut d = Drive::new();
    let mut x = d.follow(10.0, 0.2, 10);
    // 5 m jump to the side: Degraded (held), then Lost; re-acquisition is
    // tried after 5 agreeing fixes but fails (5.2 m off the path).
    let mut seen = Vec::new();
    for _ in 0..40 {
        seen.push(d.at(x, 5.2, 0.0).status);
        x += 2.0 * DT;
    }
    assert_eq!(seen[0], GuidanceStatus::Degraded);
    assert!(seen
        .iter()
        .all(|s| matches!(s, GuidanceStatus::Degraded | GuidanceStatus::Lost)));
    assert_eq!(*seen.last().unwrap(), GuidanceStatus::Lost);
    // Back near the path: a jump again (from 5.2 to 0.3), so 5 agreeing fixes
    // are needed before the supervisor resets and re-acquires the tracker.
    let mut back = Vec::new();
    for _ in 0..8 {
        back.push(d.at(x, 0.3, 0.0).status);
        x += 2.0 * DT;
    }
    let first = back
        .iter()
        .position(|s| *s == GuidanceStatus::Following)
        .unwrap();
    assert!(back[..first].iter().all(|s| *s == GuidanceStatus::Lost));
    assert_eq!(first, 4, "{back:?}"); // the 5th fix at the new place
}

#[test]
fn jump_of_5_m_along_the_path_reacquires() {
    let mut d = Drive::new();
    let mut x = d.follow(10.0, 0.2, 10);
    x += 5.0;
    let mut seen = Vec::new();
    for _ in 0..30 {
        seen.push(d.at(x, 0.2, 0.0));
        x += 2.0 * DT;
    }
    assert_eq!(seen[0].status, GuidanceStatus::Degraded);
    let following = seen
        .iter()
        .position(|c| c.status == GuidanceStatus::Following)
        .unwrap();
    assert!(seen[..following]
        .iter()
        .any(|c| c.status == GuidanceStatus::Lost));
    let t = seen.last().unwrap().tracking.unwrap();
    assert!((t.station - (x - 2.0 * DT)).abs() < 1e-9, "{}", t.station);
}

#[test]
fn cross_track_beyond_limit_is_lost() {
    let mut d = Drive::new();
    let x = d.follow(10.0, 1.4, 5);
    // 1.6 m: within the tracker's 2 m but beyond the 1.5 m limit.
    let c = d.at(x, 1.6, 0.0);
    assert_eq!(c.status, GuidanceStatus::Lost);
    assert_eq!(c.speed_limit, 0.0);
}

#[test]
fn heading_error_beyond_limit_is_lost() {
    let mut d = Drive::new();
    let x = d.follow(10.0, 0.1, 5);
    let c = d.at(x, 0.1, 1.2); // limit 1.0 rad
    assert_eq!(c.status, GuidanceStatus::Lost);
    // Back within the limits, consistent: re-acquired.
    let mut x = x;
    let mut last = c.status;
    for _ in 0..6 {
        x += 2.0 * DT;
        last = d.at(x, 0.1, 0.0).status;
    }
    assert_eq!(last, GuidanceStatus::Following);
}

#[test]
fn end_of_open_path() {
    let mut d = Drive::new();
    d.path = line(20.0);
    // Approaching the end the speed cap falls (stop at the end, 1 m/s^2).
    let c = d.at(15.0, 0.0, 0.0);
    // The cap is taken where the vehicle will be after one period (2 m/s *
    // 0.05 s further): sqrt(2 a_dec (20 - 15.1)).
    assert!(
        (c.speed_limit - (2.0f64 * 1.0 * 4.9).sqrt()).abs() < 1e-9,
        "{}",
        c.speed_limit
    );
    let mut x = 15.0;
    let end_at = loop {
        x += 2.0 * DT;
        let c = d.at(x, 0.0, 0.0);
        if c.status == GuidanceStatus::EndOfPath {
            assert_eq!(c.speed_limit, 0.0);
            break x;
        }
        assert_eq!(c.status, GuidanceStatus::Following);
        assert!(x < 20.0);
    };
    // end_tolerance 0.1 m for this vehicle (max speed above 2 m/s).
    assert!(end_at >= 19.9 - 1e-9, "{end_at}");
    // Latched, even back on the path, until reset.
    assert_eq!(d.at(19.0, 0.0, 0.0).status, GuidanceStatus::EndOfPath);
    d.g.reset();
    assert_eq!(d.with(None).status, GuidanceStatus::Acquiring);
    assert_eq!(d.at(5.0, 0.0, 0.0).status, GuidanceStatus::Following);
}

#[test]
fn bad_time_is_a_fault_for_that_cycle() {
    let mut d = Drive::new();
    let x = d.follow(10.0, 0.5, 5);
    let held = d.last.unwrap().curvature;
    let f = Fix {
        x: x - 0.1,
        y: 0.5,
        heading: 0.0,
        speed: 2.0,
        time: d.now,
    };
    for (now, dt) in [
        (f64::NAN, DT),
        (d.now + DT, 0.0),
        (d.now + DT, f64::NAN),
        (d.now - 1.0, DT),
        (f64::INFINITY, DT),
    ] {
        let c = d.raw(Some(f), now, dt);
        assert_eq!(c.status, GuidanceStatus::Fault);
        assert_eq!(c.speed_limit, 0.0);
        assert_eq!(c.curvature, held);
    }
    assert_eq!(d.at(x, 0.5, 0.0).status, GuidanceStatus::Following);
}

#[test]
fn a_fix_stamped_in_the_future_is_refused_and_forgotten() {
    // A receiver time glitch: one fix stamped 1e6 s ahead. It is not usable
    // (Degraded), and it must not poison the fix history: the next genuine
    // fixes are followed again at once (contract: src/guide/supervisor.rs, "A fix
    // is usable if ...").
    let mut d = Drive::new();
    let mut x = d.follow(10.0, 0.2, 10);
    d.now += DT;
    let glitch = Fix {
        x,
        y: 0.2,
        heading: 0.0,
        speed: 2.0,
        time: 1e6,
    };
    assert_eq!(
        d.raw(Some(glitch), d.now, DT).status,
        GuidanceStatus::Degraded
    );
    x += 2.0 * DT;
    d.follow(x, 0.2, 5);
}

#[test]
fn one_bogus_now_does_not_latch_the_fault() {
    // `now` jumps to 1e6 s for one cycle and comes back: the cycles after it
    // go back in time (Fault); after FAULT_CYCLES_TO_RESTART of them the new
    // time base is taken, the guidance starts again and follows.
    let mut d = Drive::new();
    let mut x = d.follow(10.0, 0.2, 10);
    let bogus = d.raw(None, 1e6, DT);
    assert_ne!(bogus.status, GuidanceStatus::Following);
    let mut statuses = Vec::new();
    for _ in 0..6 {
        statuses.push(d.at(x, 0.2, 0.0).status);
        x += 2.0 * DT;
    }
    let faults = kappaline::FAULT_CYCLES_TO_RESTART as usize - 1;
    assert!(
        statuses[..faults]
            .iter()
            .all(|s| *s == GuidanceStatus::Fault),
        "{statuses:?}"
    );
    assert_eq!(
        *statuses.last().unwrap(),
        GuidanceStatus::Following,
        "{statuses:?}"
    );
}

fn value() -> impl Strategy<Value = f64> {
    prop_oneof![
        4 => -3.0..3.0f64,
        1 => Just(f64::NAN),
        1 => Just(f64::INFINITY),
        1 => Just(-1e300),
        1 => -50.0..50.0f64,
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]
    #[test]
    fn never_non_finite(steps in prop::collection::vec((prop::option::of((value(), value(), value(), value(), value())), value(), value()), 1..60)) {
        let mut d = Drive::new();
        let mut now = 0.0;
        for (fix, dnow, dt) in steps {
            now += dnow.abs().min(1.0);
            let fix = fix.map(|(x, y, h, v, t)| Fix { x: 10.0 + x, y, heading: h, speed: v, time: now - t.abs().min(1.0) });
            let dt = if dt.is_finite() { dt.abs().min(0.2) } else { dt };
            let cmd = d.raw(fix, if dnow.is_nan() { dnow } else { now }, dt);
            prop_assert!(cmd.curvature.abs() <= vehicle().max_curvature() * (1.0 + 1e-12));
        }
    }
}
