//! The supervisor's thresholds, each tested at its edge and either side of
//! it, through the public `Guidance` API: the fix age, a fix stamped ahead of
//! `now`, time going backwards and equal timestamps, the jump tolerance (with
//! its growth over time and dead reckoning along a heading other than 0),
//! the agreement count of re-acquisition, the quality gate, the hold time and
//! the ranges of `SupervisorConfig::check`.
//!
//! The reference for each edge is the supervisor's documented contract (the
//! module docs of `src/guide/supervisor.rs` and the field docs of
//! `SupervisorConfig`): a fix is usable if it is "not older than
//! `max_fix_age` at `now` (nor stamped more than `max_fix_age` after
//! `now`)", "its time does not go backwards", and it lies "within `max_jump +
//! jump_growth * elapsed` of where dead reckoning puts it". Dead reckoning is
//! textbook kinematics: straight on at the fix's speed along its heading,
//! `p + v t (cos h, sin h)`. Times are whole microseconds and the distances
//! at the exact edges are binary fractions (0.5, 0.625 ...), so the edge
//! value itself is computed without rounding.

use kappaline::{
    Command, Fix, FixQuality, FixUpdate, Guidance, GuidanceInput, GuidanceStatus, Micros, Path,
    PathBuilder, Pose, PurePursuit, Reason, Segment, SteerError, SupervisorConfig, TrackerConfig,
    Vehicle,
};

/// The control period, microseconds.
const DT_US: u32 = 50_000;
/// The first instant used (1 s, away from the wrap of `Micros`).
const T0: Micros = Micros(1_000_000);
/// A small distance, m: beyond the rounding of every position used here
/// (coordinates below 100 m: 1.4e-14 m) and far below every tolerance.
const EPS: f64 = 1e-6;

fn vehicle() -> Vehicle<f64> {
    Vehicle::front_steered(2.5, 35f64.to_radians(), 40f64.to_radians()).unwrap()
}

/// A 200 m line from `(x0, y0)` with heading `h`.
fn line(x0: f64, y0: f64, h: f64) -> Path<f64, 4> {
    PathBuilder::new(Pose::new(x0, y0, h))
        .unwrap()
        .push(Segment::line(200.0).unwrap())
        .unwrap()
        .build()
        .unwrap()
}

/// Defaults for the test vehicle with a jump tolerance of exactly 0.5 m
/// plus 0.5 m/s (binary fractions), as `default_for` gives (checked below).
fn config() -> SupervisorConfig<f64> {
    SupervisorConfig::default_for(&vehicle())
}

struct Rig {
    g: Guidance<f64, PurePursuit<f64>>,
    path: Path<f64, 4>,
    now: Micros,
}

impl Rig {
    fn new(cfg: SupervisorConfig<f64>) -> Self {
        Self::on(cfg, line(0.0, 0.0, 0.0))
    }
    fn on(cfg: SupervisorConfig<f64>, path: Path<f64, 4>) -> Self {
        let v = vehicle();
        Self {
            g: Guidance::new(v, PurePursuit::tractor(), TrackerConfig::tractor(), cfg).unwrap(),
            path,
            now: T0,
        }
    }
    /// One cycle at `now` (not advanced).
    fn cycle(&mut self, update: FixUpdate<f64>) -> Command<f64> {
        let c = self
            .g
            .step(&self.path, &GuidanceInput::new(update, self.now, DT_US));
        assert!(
            c.curvature.is_finite() && c.speed_limit.is_finite(),
            "{c:?}"
        );
        c
    }
    /// Advances `now` by `us` microseconds, then one cycle.
    fn after(&mut self, us: u32, update: FixUpdate<f64>) -> Command<f64> {
        self.now = self.now.add_micros(us);
        self.cycle(update)
    }
    /// A new fix at `(x, y)`, heading `h`, 2 m/s, stamped `now`, after `us`.
    fn fix_after(&mut self, us: u32, x: f64, y: f64, h: f64) -> Command<f64> {
        let f = Fix::new(x, y, h, 2.0, self.now.add_micros(us));
        self.after(us, FixUpdate::New(f))
    }
}

fn new(f: Fix<f64>) -> FixUpdate<f64> {
    FixUpdate::New(f)
}

#[test]
fn default_jump_tolerance_is_the_documented_one() {
    // The tests below rely on `default_for`'s documented "jump 0.5 m +
    // 0.5 m/s" and "stale after 0.3 s".
    let c = config();
    assert_eq!((c.max_jump, c.jump_growth, c.max_fix_age), (0.5, 0.5, 0.3));
    assert_eq!((c.hold_time, c.confirm_fixes), (0.5, 5));
}

#[test]
fn default_tolerances_switch_at_two_metres_per_second() {
    // `default_for`: end and cusp tolerances 0.1 m, "0.05 m for vehicles at
    // most 2 m/s": at 2 m/s exactly and below 0.05 m, above 0.1 m.
    for (v_max, want) in [(1.9, 0.05), (2.0, 0.05), (2.0 + 1e-9, 0.1), (4.0, 0.1)] {
        let v = vehicle().with_max_speed(v_max).unwrap();
        let c = SupervisorConfig::default_for(&v);
        assert_eq!((c.end_tolerance, c.cusp_tolerance), (want, want), "{v_max}");
    }
}

#[test]
fn config_ranges_at_their_edges() {
    // The ranges documented on each field of SupervisorConfig: "> 0" refuses
    // 0, ">= 0" takes 0 and refuses the next value below it, and the heading
    // limit is "0 < x <= pi".
    let ok = config();
    assert_eq!(ok.check(), Ok(()));
    let below = -f64::MIN_POSITIVE;
    type Set = fn(&mut SupervisorConfig<f64>, f64);
    let strictly_positive: [(&str, Set); 6] = [
        ("max_fix_age", |c, v| c.max_fix_age = v),
        ("max_cross_track", |c, v| c.max_cross_track = v),
        ("max_heading_error", |c, v| c.max_heading_error = v),
        ("max_jump", |c, v| c.max_jump = v),
        ("stopped_speed", |c, v| c.stopped_speed = v),
        ("max_sigma", |c, v| c.max_sigma = Some(v)),
    ];
    for (name, set) in strictly_positive {
        for (v, want) in [
            (0.0, Err(SteerError::OutOfRange)),
            (below, Err(SteerError::OutOfRange)),
            (f64::MIN_POSITIVE, Ok(())),
            (f64::NAN, Err(SteerError::NonFinite)),
        ] {
            let mut c = ok;
            set(&mut c, v);
            assert_eq!(c.check(), want, "{name} = {v}");
            let made = Guidance::new(
                vehicle(),
                PurePursuit::tractor(),
                TrackerConfig::tractor(),
                c,
            );
            assert_eq!(made.err(), want.err(), "Guidance::new with {name} = {v}");
        }
    }
    let non_negative: [(&str, Set); 4] = [
        ("hold_time", |c, v| c.hold_time = v),
        ("jump_growth", |c, v| c.jump_growth = v),
        ("end_tolerance", |c, v| c.end_tolerance = v),
        ("cusp_tolerance", |c, v| c.cusp_tolerance = v),
    ];
    for (name, set) in non_negative {
        for (v, want) in [
            (0.0, Ok(())),
            (below, Err(SteerError::OutOfRange)),
            (f64::INFINITY, Err(SteerError::NonFinite)),
            (f64::NAN, Err(SteerError::NonFinite)),
        ] {
            let mut c = ok;
            set(&mut c, v);
            assert_eq!(c.check(), want, "{name} = {v}");
        }
    }
    let pi = core::f64::consts::PI;
    for (v, want) in [
        (pi, Ok(())),
        (pi * (1.0 + f64::EPSILON), Err(SteerError::OutOfRange)),
    ] {
        let c = SupervisorConfig {
            max_heading_error: v,
            ..ok
        };
        assert_eq!(c.check(), want, "max_heading_error = {v}");
    }
    for (n, want) in [(0, Err(SteerError::OutOfRange)), (1, Ok(()))] {
        let c = SupervisorConfig {
            confirm_fixes: n,
            ..ok
        };
        assert_eq!(c.check(), want, "confirm_fixes = {n}");
    }
    let no_gate = SupervisorConfig {
        max_sigma: None,
        ..ok
    };
    assert_eq!(no_gate.check(), Ok(()));
}

/// Following on the line `y = 0` at `x = 10` at T0 (the first fix).
fn following(cfg: SupervisorConfig<f64>) -> Rig {
    let mut r = Rig::new(cfg);
    let c = r.cycle(new(Fix::new(10.0, 0.0, 0.0, 2.0, T0)));
    assert_eq!(c.status, GuidanceStatus::Following, "{c:?}");
    r
}

#[test]
fn fix_age_at_the_edge_is_fresh() {
    // max_fix_age 0.3 s: a fix 0.3 s old at `now` is usable, 1 us older is stale.
    for (age_us, want) in [
        (299_999, None),
        (300_000, None),
        (300_001, Some(Reason::StaleFix)),
    ] {
        let mut r = Rig::new(config());
        r.now = T0.add_micros(age_us);
        let c = r.cycle(new(Fix::new(10.0, 0.0, 0.0, 2.0, T0)));
        assert_eq!(c.reason, want, "age {age_us} us: {c:?}");
        let status = if want.is_none() {
            GuidanceStatus::Following
        } else {
            GuidanceStatus::Acquiring
        };
        assert_eq!(c.status, status, "age {age_us} us");
    }
}

#[test]
fn fix_stamped_ahead_of_now_at_the_edge() {
    // "nor stamped more than max_fix_age after now": 0.3 s ahead is usable,
    // 1 us more is refused as stale.
    for (ahead_us, want) in [(300_000, None), (300_001, Some(Reason::StaleFix))] {
        let mut r = Rig::new(config());
        let c = r.cycle(new(Fix::new(10.0, 0.0, 0.0, 2.0, T0.add_micros(ahead_us))));
        assert_eq!(c.reason, want, "ahead {ahead_us} us: {c:?}");
    }
}

#[test]
fn no_new_fix_is_dead_reckoned_up_to_max_fix_age_exactly() {
    // FixUpdate::Unchanged uses the last new fix "while it is younger than
    // max_fix_age": usable at 0.3 s, stale 1 us later.
    for (age_us, want) in [
        (300_000, GuidanceStatus::Following),
        (300_001, GuidanceStatus::Degraded),
    ] {
        let mut r = following(config());
        let c = r.after(age_us, FixUpdate::Unchanged);
        assert_eq!(c.status, want, "{age_us} us: {c:?}");
        if want == GuidanceStatus::Following {
            // Dead-reckoned straight on at 2 m/s: x = 10 + 2 * 0.3.
            let t = c.tracking.unwrap();
            assert!((t.station - 10.6).abs() < 1e-9, "{}", t.station);
        } else {
            assert_eq!(c.reason, Some(Reason::StaleFix));
        }
    }
}

#[test]
fn held_fix_stamped_ahead_at_the_edge_is_still_usable() {
    // A fix stamped exactly max_fix_age after `now` is usable; a cycle without
    // a new fix at the same `now` (time not going backwards) still uses it.
    let mut r = Rig::new(config());
    let ahead = Fix::new(10.0, 0.0, 0.0, 2.0, T0.add_micros(300_000));
    assert_eq!(r.cycle(new(ahead)).status, GuidanceStatus::Following);
    let c = r.cycle(FixUpdate::Unchanged);
    assert_eq!(c.status, GuidanceStatus::Following, "{c:?}");
}

#[test]
fn equal_timestamps_are_not_time_going_backwards() {
    // The same fix delivered again (its time equal to the last one's) does
    // not go backwards; a fix 1 us older than the last one does ("its time
    // does not go backwards").
    let mut r = following(config());
    let again = r.after(DT_US, new(Fix::new(10.0, 0.0, 0.0, 2.0, T0)));
    assert_eq!(again.status, GuidanceStatus::Following, "{again:?}");
    let mut r = following(config());
    let older = r.after(DT_US, new(Fix::new(10.0, 0.0, 0.0, 2.0, T0.sub_micros(1))));
    assert_eq!(older.status, GuidanceStatus::Degraded, "{older:?}");
    assert_eq!(older.reason, Some(Reason::BadFix));
}

#[test]
fn plausible_fix_going_back_in_time_is_refused() {
    // Fresh, finite and where dead reckoning puts it, but stamped before the
    // last fix: refused (BadFix), not followed.
    let mut r = following(config());
    let c = r.fix_after(100_000, 10.2, 0.0, 0.0);
    assert_eq!(c.status, GuidanceStatus::Following);
    let back = Fix::new(10.1, 0.0, 0.0, 2.0, r.now.sub_micros(50_000));
    let c = r.after(DT_US, new(back));
    assert_eq!(
        (c.status, c.reason),
        (GuidanceStatus::Degraded, Some(Reason::BadFix))
    );
}

/// The status of the second fix, `dx`, `dy` (path frame) from where dead
/// reckoning puts it 0.25 s after the first: the tolerance is then
/// `0.5 + 0.5 * 0.25 = 0.625` m.
fn second_fix(dx: f64, dy: f64) -> Command<f64> {
    let mut r = following(config());
    // 2 m/s along heading 0 for 0.25 s: 0.5 m on, to x = 10.5.
    r.fix_after(250_000, 10.5 + dx, dy, 0.0)
}

#[test]
fn jump_tolerance_at_its_edge_in_each_direction() {
    // At 0.625 m from the dead-reckoned position (ahead, behind, left,
    // right) the fix is consistent; 1 um farther it has jumped.
    for (ux, uy) in [(1.0, 0.0), (-1.0, 0.0), (0.0, 1.0), (0.0, -1.0)] {
        let edge = second_fix(0.625 * ux, 0.625 * uy);
        assert_eq!(
            edge.status,
            GuidanceStatus::Following,
            "({ux}, {uy}) {edge:?}"
        );
        let out = second_fix((0.625 + EPS) * ux, (0.625 + EPS) * uy);
        assert_eq!(
            (out.status, out.reason),
            (GuidanceStatus::Degraded, Some(Reason::Jump)),
            "({ux}, {uy})"
        );
    }
    // Diagonally: 0.625 m in all is the edge (sqrt(dx^2 + dy^2), Euclid).
    let d = 0.625 / 2f64.sqrt();
    assert_eq!(
        second_fix(d - EPS, d - EPS).status,
        GuidanceStatus::Following
    );
    assert_eq!(
        second_fix(d + EPS, d + EPS).status,
        GuidanceStatus::Degraded
    );
}

#[test]
fn jump_tolerance_grows_with_the_time_since_the_last_accepted_fix() {
    // max_jump + jump_growth * elapsed: 0.5 m after 0 s, 0.75 m after 0.5 s
    // (0.5 s without a fix is within the hold time).
    for (gap_us, tol) in [(0, 0.5), (100_000, 0.55), (500_000, 0.75)] {
        for (off, want) in [
            (tol - EPS, GuidanceStatus::Following),
            (tol + EPS, GuidanceStatus::Degraded),
        ] {
            let mut r = following(config());
            let gap = f64::from(gap_us) * 1e-6;
            let c = r.fix_after(gap_us, 10.0 + 2.0 * gap, off, 0.0);
            assert_eq!(c.status, want, "gap {gap_us} us, off {off}: {c:?}");
        }
    }
}

#[test]
fn dead_reckoning_along_a_heading_other_than_zero() {
    // A line at heading 0.6 rad through (3, -4); the vehicle on it at 2 m/s.
    // After 0.25 s dead reckoning puts it 0.5 m further along the heading,
    // (x, y) + 0.5 (cos 0.6, sin 0.6); the tolerance is 0.625 m. Offsets
    // across and along that direction, at the edge less and more 1 um.
    let h: f64 = 0.6;
    let (s, co) = h.sin_cos();
    let at = |along: f64, left: f64| (3.0 + along * co - left * s, -4.0 + along * s + left * co);
    for (da, dl) in [(1.0, 0.0), (-1.0, 0.0), (0.0, 1.0), (0.0, -1.0)] {
        for (r_off, want) in [
            (0.625 - EPS, GuidanceStatus::Following),
            (0.625 + EPS, GuidanceStatus::Degraded),
        ] {
            let mut r = Rig::on(config(), line(3.0, -4.0, h));
            let (x0, y0) = at(10.0, 0.0);
            let c = r.cycle(new(Fix::new(x0, y0, h, 2.0, T0)));
            assert_eq!(c.status, GuidanceStatus::Following);
            let (x, y) = at(10.5 + r_off * da, r_off * dl);
            let c = r.fix_after(250_000, x, y, h);
            assert_eq!(c.status, want, "({da}, {dl}) {r_off}: {c:?}");
            if want == GuidanceStatus::Following {
                let t = c.tracking.unwrap();
                assert!((t.station - (10.5 + r_off * da)).abs() < 1e-9);
                assert!((t.cross_track - r_off * dl).abs() < 1e-9);
            }
        }
    }
}

/// Lost after a dropout longer than the hold time, with
/// `confirm_fixes` = `confirm`; returns the rig and the next x along y = 0.
fn lost(confirm: u32) -> (Rig, f64) {
    let cfg = SupervisorConfig {
        confirm_fixes: confirm,
        ..config()
    };
    let mut r = following(cfg);
    // 0.6 s without a fix (hold_time 0.5 s).
    for _ in 0..12 {
        r.after(DT_US, FixUpdate::NoFix);
    }
    assert_eq!(r.g.status(), GuidanceStatus::Lost);
    // The vehicle has gone on (dead reckoning would put it at 11.2), and the
    // first fix comes 5 m beyond: consistent with nothing before it.
    (r, 16.2)
}

#[test]
fn reacquisition_needs_consecutive_fixes_within_the_jump_tolerance() {
    // confirm_fixes 2: the second fix after the loss re-acquires if it lies
    // within 0.625 m (0.5 m + 0.5 m/s * 0.25 s) of where the first fix
    // dead-reckons to, not if it lies farther.
    for (off, want) in [
        (0.625 - EPS, GuidanceStatus::Following),
        (0.625 + EPS, GuidanceStatus::Lost),
        (-0.625 + EPS, GuidanceStatus::Following),
        (-0.625 - EPS, GuidanceStatus::Lost),
    ] {
        let (mut r, x) = lost(2);
        let first = r.fix_after(DT_US, x, 0.0, 0.0);
        assert_eq!(
            first.status,
            GuidanceStatus::Lost,
            "one fix does not re-acquire"
        );
        let c = r.fix_after(250_000, x + 0.5, off, 0.0);
        assert_eq!(c.status, want, "off {off}: {c:?}");
        // Along the path too.
        let (mut r, x) = lost(2);
        r.fix_after(DT_US, x, 0.0, 0.0);
        let c = r.fix_after(250_000, x + 0.5 + off, 0.0, 0.0);
        assert_eq!(c.status, want, "along {off}: {c:?}");
    }
}

#[test]
fn refused_fixes_break_the_run_of_agreeing_fixes() {
    // confirm_fixes 2. A fix between two consistent ones that is refused
    // (going back in time, stamped far ahead, non-finite, below the quality
    // gate) starts the count again: the fix after it is the first of a new
    // run, and re-acquisition waits for the next.
    let gate = SupervisorConfig {
        max_sigma: Some(0.1),
        confirm_fixes: 2,
        ..config()
    };
    let sigma = |f: Fix<f64>, s: f64| {
        f.with_quality(FixQuality {
            sigma: Some(s),
            ..FixQuality::default()
        })
    };
    type Spoil = fn(Fix<f64>, Micros) -> Fix<f64>;
    let spoilers: [(&str, Spoil); 4] = [
        ("back in time", |f, _| Fix {
            time: f.time.sub_micros(200_000),
            ..f
        }),
        ("from the future", |f, now| Fix {
            time: now.add_micros(400_000),
            ..f
        }),
        ("not finite", |f, _| Fix {
            heading: f64::NAN,
            ..f
        }),
        ("large sigma", |f, _| Fix {
            quality: FixQuality {
                sigma: Some(0.2),
                ..f.quality
            },
            ..f
        }),
    ];
    for (name, spoil) in spoilers {
        // Following on rated fixes (sigma 0.05 m), then lost after 0.6 s
        // without a fix (hold time 0.5 s).
        let mut r = Rig::new(gate);
        let c = r.cycle(new(sigma(Fix::new(10.0, 0.0, 0.0, 2.0, T0), 0.05)));
        assert_eq!(c.status, GuidanceStatus::Following, "{name}: {c:?}");
        for _ in 0..12 {
            r.after(DT_US, FixUpdate::NoFix);
        }
        assert_eq!(r.g.status(), GuidanceStatus::Lost);
        let mut x = 16.2;
        let good = |r: &Rig, x: f64| sigma(Fix::new(x, 0.0, 0.0, 2.0, r.now), 0.05);
        r.now = r.now.add_micros(DT_US);
        let a = good(&r, x);
        assert_eq!(r.cycle(new(a)).status, GuidanceStatus::Lost, "{name}");
        x += 0.1;
        r.now = r.now.add_micros(DT_US);
        let b = spoil(good(&r, x), r.now);
        let c = r.cycle(new(b));
        assert_eq!(c.status, GuidanceStatus::Lost, "{name}: {c:?}");
        x += 0.1;
        r.now = r.now.add_micros(DT_US);
        let c = r.cycle(new(good(&r, x)));
        assert_eq!(
            c.status,
            GuidanceStatus::Lost,
            "{name}: the count starts again"
        );
        x += 0.1;
        r.now = r.now.add_micros(DT_US);
        let c = r.cycle(new(good(&r, x)));
        assert_eq!(c.status, GuidanceStatus::Following, "{name}: {c:?}");
    }
}

#[test]
fn after_reacquiring_from_a_jump_cycles_without_a_new_fix_dead_reckon() {
    // Re-acquisition takes the jumped fix as the new reference: a cycle
    // without a new fix after it is dead-reckoned from it (Following at the
    // dead-reckoned station), not refused for the jump.
    let (mut r, x) = lost(2);
    r.fix_after(DT_US, x, 0.0, 0.0);
    let c = r.fix_after(DT_US, x + 0.1, 0.0, 0.0);
    assert_eq!(c.status, GuidanceStatus::Following, "{c:?}");
    let c = r.after(DT_US, FixUpdate::Unchanged);
    assert_eq!(c.status, GuidanceStatus::Following, "{c:?}");
    let t = c.tracking.unwrap();
    assert!((t.station - (x + 0.2)).abs() < 1e-9, "{}", t.station);
    // And the next fix where it should be is consistent with it.
    let c = r.fix_after(DT_US, x + 0.3, 0.0, 0.0);
    assert_eq!(c.status, GuidanceStatus::Following, "{c:?}");
}

#[test]
fn sigma_gate_at_its_edge() {
    // max_sigma 0.125 m: a fix with sigma 0.125 is steered with, one with
    // the next larger sigma counts as missing (LargeSigma), then Lost after
    // the hold time, as a missing fix.
    let cfg = SupervisorConfig {
        max_sigma: Some(0.125),
        ..config()
    };
    let with = |f: Fix<f64>, s: f64| {
        f.with_quality(FixQuality {
            sigma: Some(s),
            ..FixQuality::default()
        })
    };
    let mut r = Rig::new(cfg);
    let c = r.cycle(new(with(Fix::new(10.0, 0.0, 0.0, 2.0, T0), 0.125)));
    assert_eq!(c.status, GuidanceStatus::Following, "{c:?}");
    let above = 0.125 + f64::EPSILON / 8.0;
    let mut x = 10.0;
    let mut statuses = Vec::new();
    for _ in 0..12 {
        x += 0.1;
        let f = with(Fix::new(x, 0.0, 0.0, 2.0, r.now.add_micros(DT_US)), above);
        let c = r.after(DT_US, new(f));
        assert_eq!(c.reason, Some(Reason::LargeSigma));
        statuses.push(c.status);
    }
    // Degraded from the first, Lost once more than 0.5 s have passed.
    assert!(
        statuses[..11]
            .iter()
            .all(|s| *s == GuidanceStatus::Degraded),
        "{statuses:?}"
    );
    assert_eq!(statuses[11], GuidanceStatus::Lost, "{statuses:?}");
}

#[test]
fn hold_time_at_its_edge() {
    // Degraded -> Lost "after hold_time without a usable fix": at exactly
    // 0.5 s after the first missing fix still Degraded, 1 us later Lost.
    for (us, want) in [
        (500_000, GuidanceStatus::Degraded),
        (500_001, GuidanceStatus::Lost),
    ] {
        let mut r = following(config());
        assert_eq!(
            r.after(DT_US, FixUpdate::NoFix).status,
            GuidanceStatus::Degraded
        );
        let c = r.after(us, FixUpdate::NoFix);
        assert_eq!(c.status, want, "{us} us");
        assert_eq!(c.reason, Some(Reason::NoFix));
    }
}
