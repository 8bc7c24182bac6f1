//! Supervisor transitions, one test each (see the table in
//! `src/guide/supervisor.rs`), and a property test that no input sequence makes
//! the guidance output a non-finite value or break the steering limits.
//! The expected commands come from the supervisor's documented contract
//! (hold / straighten / stop); the limits from the vehicle description.

use kappaline::{
    Command, Fix, FixUpdate, Guidance, GuidanceInput, GuidanceStatus, Micros, Path, PathBuilder,
    Pose, PurePursuit, Reason, Segment, SupervisorConfig, TrackerConfig, Vehicle,
};
use proptest::prelude::*;

const DT: f64 = 0.05;
/// The control period in microseconds.
const DT_US: u32 = 50_000;

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
    now: Micros,
    last: Option<Command<f64>>,
}

impl Drive {
    fn new() -> Self {
        Self {
            g: guidance(),
            path: line(200.0),
            now: Micros(0),
            last: None,
        }
    }
    fn raw(&mut self, fix: FixUpdate<f64>, now: Micros, period_us: u32) -> Command<f64> {
        self.input(&GuidanceInput::new(fix, now, period_us))
    }
    fn input(&mut self, input: &GuidanceInput<f64>) -> Command<f64> {
        let cmd = self.g.step(&self.path, input);
        assert_finite(&cmd);
        let dt = f64::from(input.period_us) * 1e-6;
        // Standby's neutral output is no steering command: no rate limit.
        let standby = |c: &Command<f64>| c.status == GuidanceStatus::Standby;
        let limited = cmd.status != GuidanceStatus::Fault && !standby(&cmd);
        if let (Some(prev), true) = (self.last.filter(|c| !standby(c)), limited) {
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
        self.now = self.now.add_micros(DT_US);
        let f = Fix::new(x, y, h, 2.0, self.now);
        self.raw(FixUpdate::New(f), self.now, DT_US)
    }
    /// A step with a new fix, or with none (`FixUpdate::NoFix`).
    fn with(&mut self, fix: Option<Fix<f64>>) -> Command<f64> {
        self.now = self.now.add_micros(DT_US);
        let update = fix.map_or(FixUpdate::NoFix, FixUpdate::New);
        self.raw(update, self.now, DT_US)
    }
    /// A step with `update`.
    fn update(&mut self, update: FixUpdate<f64>) -> Command<f64> {
        self.now = self.now.add_micros(DT_US);
        self.raw(update, self.now, DT_US)
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
    let nan = Fix::new(f64::NAN, 0.0, 0.0, 2.0, d.now.add_micros(DT_US));
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
    let stale = Fix::new(11.0, 0.2, 0.0, 2.0, d.now.sub_micros(1_000_000));
    let c = d.with(Some(stale));
    assert_eq!(c.status, GuidanceStatus::Degraded);
    assert_eq!(c.reason, Some(Reason::StaleFix));
}

#[test]
fn fix_time_going_backwards_degrades() {
    let mut d = Drive::new();
    d.follow(10.0, 0.2, 5);
    let t = d.now;
    let old = Fix::new(11.0, 0.2, 0.0, 2.0, t.sub_micros(100_000));
    let c = d.with(Some(old));
    assert_eq!(c.status, GuidanceStatus::Degraded);
    assert_eq!(c.reason, Some(Reason::BadFix));
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
    let f = Fix::new(x - 0.1, 0.5, 0.0, 2.0, d.now);
    for (now, period) in [
        (d.now.add_micros(DT_US), 0),
        (d.now.add_micros(DT_US), u32::MAX),
        (d.now.add_micros(DT_US), 1 << 31),
        (d.now.sub_micros(1_000_000), DT_US),
    ] {
        let c = d.raw(FixUpdate::New(f), now, period);
        assert_eq!(c.status, GuidanceStatus::Fault);
        assert_eq!(c.reason, Some(Reason::BadTime));
        assert_eq!(c.speed_limit, 0.0);
        assert_eq!(c.curvature, held);
    }
    assert_eq!(d.at(x, 0.5, 0.0).status, GuidanceStatus::Following);
}

#[test]
fn a_fix_stamped_in_the_future_is_refused_and_forgotten() {
    // A receiver time glitch: one fix stamped 1000 s ahead. It is not usable
    // (Degraded), and it must not poison the fix history: the next genuine
    // fixes are followed again at once (contract: src/guide/supervisor.rs, "A fix
    // is usable if ...").
    let mut d = Drive::new();
    let mut x = d.follow(10.0, 0.2, 10);
    d.now = d.now.add_micros(DT_US);
    let glitch = Fix::new(x, 0.2, 0.0, 2.0, d.now.add_micros(1_000_000_000));
    assert_eq!(
        d.raw(FixUpdate::New(glitch), d.now, DT_US).status,
        GuidanceStatus::Degraded
    );
    x += 2.0 * DT;
    d.follow(x, 0.2, 5);
}

#[test]
fn one_bogus_now_does_not_latch_the_fault() {
    // `now` jumps 1000 s ahead for one cycle and comes back: the cycles after it
    // go back in time (Fault); after FAULT_CYCLES_TO_RESTART of them the new
    // time base is taken, the guidance starts again and follows.
    let mut d = Drive::new();
    let mut x = d.follow(10.0, 0.2, 10);
    let bogus = d.raw(FixUpdate::NoFix, d.now.add_micros(1_000_000_000), DT_US);
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

/// Microseconds: mostly a control period's worth, sometimes anything.
fn micros() -> impl Strategy<Value = u32> {
    prop_oneof![
        6 => 0..200_000u32,
        1 => any::<u32>(),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]
    #[test]
    fn never_non_finite(steps in prop::collection::vec((prop::option::of((value(), value(), value(), value(), micros())), 0..3u8, micros(), micros(), any::<bool>()), 1..60)) {
        let mut d = Drive::new();
        let mut now = Micros(0);
        for (fix, kind, step, period, manual) in steps {
            now = now.add_micros(step);
            let update = match (fix, kind) {
                (Some((x, y, h, v, age)), 0) => FixUpdate::New(Fix::new(10.0 + x, y, h, v, now.sub_micros(age))),
                (_, 1) => FixUpdate::Unchanged,
                _ => FixUpdate::NoFix,
            };
            let input = GuidanceInput { manual_override: manual && kind == 2, ..GuidanceInput::new(update, now, period) };
            let cmd = d.input(&input);
            prop_assert!(cmd.curvature.abs() <= vehicle().max_curvature() * (1.0 + 1e-12));
            if cmd.status == GuidanceStatus::Standby {
                prop_assert_eq!((cmd.curvature, cmd.speed_limit), (0.0, 0.0));
                d.g.engage();
            }
        }
    }
}

#[test]
fn twenty_hz_control_with_ten_hz_fixes_keeps_following() {
    // 400 cycles at 20 Hz, a new fix on every other cycle. Saying "no new
    // fix" (Unchanged) on the others keeps Following on all 400; saying "no
    // fix" (NoFix) is a missing fix, Degraded on each of those 200 cycles.
    // (Contract: src/guide/supervisor.rs, "A cycle with FixUpdate::Unchanged".)
    for (between, want_following) in [(FixUpdate::Unchanged, 400), (FixUpdate::NoFix, 200)] {
        let mut d = Drive::new();
        let mut x = 10.0;
        let mut following = 0;
        for k in 0..400 {
            let c = if k % 2 == 0 {
                d.at(x, 0.1, 0.0)
            } else {
                d.update(between)
            };
            following += usize::from(c.status == GuidanceStatus::Following);
            x += 2.0 * DT;
        }
        assert_eq!(following, want_following, "{between:?}");
    }
}

#[test]
fn unchanged_goes_stale_after_max_fix_age() {
    let mut d = Drive::new();
    d.follow(10.0, 0.1, 5);
    // max_fix_age 0.3 s: six 50 ms cycles without a new fix are fresh, the
    // seventh (0.35 s) is not.
    for _ in 0..6 {
        assert_eq!(
            d.update(FixUpdate::Unchanged).status,
            GuidanceStatus::Following
        );
    }
    let c = d.update(FixUpdate::Unchanged);
    assert_eq!(c.status, GuidanceStatus::Degraded);
    assert_eq!(c.reason, Some(Reason::StaleFix));
}

fn rated(fix: Fix<f64>, solution: kappaline::Solution) -> Fix<f64> {
    fix.with_quality(kappaline::FixQuality {
        solution,
        sigma: Some(0.02),
        ..Default::default()
    })
}

#[test]
fn quality_below_the_gate_degrades_then_loses_with_its_reason() {
    use kappaline::Solution::{Fixed, Float};
    let v = vehicle();
    let cfg = SupervisorConfig {
        min_solution: Some(Fixed),
        ..SupervisorConfig::default_for(&v)
    };
    let mut d = Drive::new();
    d.g = Guidance::new(v, PurePursuit::tractor(), TrackerConfig::tractor(), cfg).unwrap();
    let mut x = 10.0;
    let mut step = |d: &mut Drive, s| {
        d.now = d.now.add_micros(DT_US);
        let f = rated(Fix::new(x, 0.1, 0.0, 2.0, d.now), s);
        x += 2.0 * DT;
        d.raw(FixUpdate::New(f), d.now, DT_US)
    };
    for _ in 0..10 {
        assert_eq!(step(&mut d, Fixed).status, GuidanceStatus::Following);
    }
    // 1 s of float: Degraded for hold_time (0.5 s), then Lost; the reason
    // stays LowSolution throughout.
    let spell: Vec<_> = (0..20).map(|_| step(&mut d, Float)).collect();
    assert!(spell.iter().all(|c| c.reason == Some(Reason::LowSolution)));
    let lost = spell
        .iter()
        .position(|c| c.status == GuidanceStatus::Lost)
        .unwrap();
    assert!(spell[..lost]
        .iter()
        .all(|c| c.status == GuidanceStatus::Degraded));
    assert!((10..=11).contains(&lost), "{lost}");
    // Fixed again: confirm_fixes (5) agreeing fixes, then Following.
    let back: Vec<_> = (0..6).map(|_| step(&mut d, Fixed).status).collect();
    assert_eq!(back[4], GuidanceStatus::Following, "{back:?}");
    assert!(back[..4].iter().all(|s| *s == GuidanceStatus::Lost));
}

#[test]
fn standby_is_neutral_keeps_the_tracker_and_engages_at_once() {
    let mut d = Drive::new();
    let mut x = d.follow(10.0, 0.4, 10);
    d.g.standby();
    assert!(!d.g.is_engaged());
    for _ in 0..10 {
        let c = d.at(x, 0.4, 0.0);
        assert_eq!(c.status, GuidanceStatus::Standby);
        assert_eq!(c.reason, Some(Reason::Standby));
        assert_eq!((c.curvature, c.steer_angle, c.speed_limit), (0.0, 0.0, 0.0));
        // The tracker follows: station and cross-track stay known.
        let t = c.tracking.unwrap();
        assert!((t.station - x).abs() < 1e-9 && (t.cross_track - 0.4).abs() < 1e-9);
        x += 2.0 * DT;
    }
    d.g.engage();
    let c = d.at(x, 0.4, 0.0);
    assert_eq!(c.status, GuidanceStatus::Following);
    assert!(c.curvature < 0.0 && c.speed_limit > 0.0);
}

#[test]
fn manual_override_disengages_until_engaged() {
    let mut d = Drive::new();
    let mut x = d.follow(10.0, 0.2, 5);
    d.now = d.now.add_micros(DT_US);
    let f = Fix::new(x, 0.2, 0.0, 2.0, d.now);
    let c = d.input(&GuidanceInput {
        manual_override: true,
        ..GuidanceInput::new(FixUpdate::New(f), d.now, DT_US)
    });
    assert_eq!(c.status, GuidanceStatus::Standby);
    assert_eq!(c.reason, Some(Reason::ManualOverride));
    assert_eq!(c.speed_limit, 0.0);
    // The operator lets go of the wheel: still standing by, and saying why.
    x += 2.0 * DT;
    let c = d.at(x, 0.2, 0.0);
    assert_eq!(
        (c.status, c.reason),
        (GuidanceStatus::Standby, Some(Reason::ManualOverride))
    );
    d.g.engage();
    x += 2.0 * DT;
    assert_eq!(d.at(x, 0.2, 0.0).status, GuidanceStatus::Following);
}

#[test]
fn line_shift_moves_the_line_followed() {
    let mut d = Drive::new();
    let path = d.path.clone();
    // 0.3 m left of the reference with a 0.3 m shift to the left: on the
    // line, so no cross-track and (pure pursuit, on a straight) no curvature.
    d.g.set_line_shift(&path, 0.3).unwrap();
    assert_eq!(d.g.line_shift(), 0.3);
    let c = d.at(10.0, 0.3, 0.0);
    assert_eq!(c.status, GuidanceStatus::Following);
    let t = c.tracking.unwrap();
    assert!(t.cross_track.abs() < 1e-12, "{}", t.cross_track);
    assert!(c.curvature.abs() < 1e-12, "{}", c.curvature);
    // Bad shifts are refused and change nothing.
    assert!(d.g.set_line_shift(&path, f64::NAN).is_err());
    assert_eq!(d.g.line_shift(), 0.3);
}

#[test]
fn following_pass_n_through_guidance() {
    use kappaline::{FrenetFeedback, Passes};
    // A left arc of radius 20 m; pass 1 of a 2 m swath lies 2 m left, on
    // the concentric circle of radius 18 m (elementary geometry: the offset
    // of a circle is a circle), curvature 1/18.
    let r = 20.0;
    let path: Path<f64, 4> = PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::arc(r * 2.0, 1.0 / r).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let v = vehicle();
    let mut g = Guidance::new(
        v,
        FrenetFeedback::tractor(),
        TrackerConfig::tractor(),
        SupervisorConfig::default_for(&v),
    )
    .unwrap();
    let passes = Passes::new(2.0).unwrap();
    g.follow_pass(&path, &passes, 1).unwrap();
    assert_eq!((g.pass(), g.line_offset()), (Some(1), 2.0));
    // On pass 1 a quarter of the way round, heading along it (the circle
    // about (0, 20) of radius 18, at angle phi from the start).
    let mut cmd = None;
    // Ten cycles: the steering ramps from straight at its rate limit.
    for k in 0..10u32 {
        let phi = 0.5 + 0.0025 * f64::from(k);
        let (x, y) = (18.0 * phi.sin(), 20.0 - 18.0 * phi.cos());
        let now = Micros(k * DT_US);
        let fix = Fix::new(x, y, phi, 0.9, now);
        cmd = Some(g.step(&path, &GuidanceInput::new(FixUpdate::New(fix), now, DT_US)));
    }
    let c = cmd.unwrap();
    assert_eq!(c.status, GuidanceStatus::Following);
    let t = c.tracking.unwrap();
    assert!(t.cross_track.abs() < 1e-9, "{}", t.cross_track);
    assert!((c.curvature - 1.0 / 18.0).abs() < 1e-9, "{}", c.curvature);
    // A pass that would cusp (offset 20 m = the radius) is refused.
    assert!(g.follow_pass(&path, &passes, 10).is_err());
    assert_eq!(g.pass(), Some(1));
}
