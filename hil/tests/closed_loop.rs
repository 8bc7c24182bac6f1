//! The closed loop with the real controller: built-in scenarios, RTK-grade
//! accuracy, dropouts and jumps.

use kappaline_hil::closed_loop::{RunOptions, RunOutput};
use kappaline_hil::firmware::SupervisorStatus;
use kappaline_hil::runner::{self, Outcome};
use kappaline_hil::scenario::builtin::BUILTINS;
use kappaline_hil::scenario::{load, overrides::parse_assignment, Scenario};

fn scenario(name: &str, sets: &[&str]) -> Scenario {
    let o: Vec<_> = sets.iter().map(|s| parse_assignment(s).unwrap()).collect();
    load(name, &o).unwrap_or_else(|e| panic!("{name}: {e:#}"))
}

fn run(s: &Scenario) -> Outcome {
    runner::run(s, RunOptions::default(), None).expect("controller builds")
}

fn failed(o: &Outcome) -> Vec<String> {
    o.checks
        .iter()
        .filter(|c| !c.pass)
        .map(|c| format!("{}: {} (limit {})", c.name, c.measured, c.limit))
        .collect()
}

/// The statuses in order, repeats removed.
fn sequence(run: &RunOutput) -> Vec<SupervisorStatus> {
    run.statuses.iter().map(|c| c.status).collect()
}

fn first_after(run: &RunOutput, status: SupervisorStatus, t: f64) -> Option<f64> {
    run.statuses
        .iter()
        .find(|c| c.status == status && c.t_s >= t)
        .map(|c| c.t_s)
}

/// "No NaN anywhere in the trace": every number of every row, as written to
/// the CSV, is finite.
fn assert_trace_finite(o: &Outcome) {
    assert_eq!(o.metrics.non_finite, 0);
    let mut w = csv::Writer::from_writer(Vec::new());
    for r in &o.run.trace {
        w.serialize(r).unwrap();
    }
    let text = String::from_utf8(w.into_inner().unwrap()).unwrap();
    let lower = text.to_ascii_lowercase();
    assert!(
        !lower.contains("nan") && !lower.contains("inf"),
        "non-finite value in the trace"
    );
    assert!(o.run.trace.len() > 100);
}

#[test]
fn every_builtin_scenario_meets_its_thresholds() {
    for b in BUILTINS {
        let s = scenario(b.name, &[]);
        let o = run(&s);
        assert!(o.pass(), "{}: {:?}", b.name, failed(&o));
        assert_trace_finite(&o);
        assert!(o.metrics.straight.count > 1000, "{}", b.name);
    }
}

/// Acceptance figure of the project (issue 5, DESIGN.md "Targets"): with
/// RTK-grade input, 2 cm white noise per axis at 10 Hz and 50 ms latency
/// (RTK about 1-2 cm: common practice), the cross-track RMS on
/// straight passes is at most 1.5 times the noise. Field scenario, flat
/// ground, no wandering bias, several seeds.
#[test]
fn rtk_noise_gives_straight_pass_rms_within_one_and_a_half_noise() {
    let noise = 0.02;
    for seed in 1..=4 {
        let s = scenario(
            "field",
            &[
                "gnss.noise_m=0.02",
                "gnss.rate_hz=10.0",
                "gnss.latency_s=0.05",
                "gnss.bias_sigma_m=0.0",
                "terrain.slope_y_deg=0.0",
                &format!("seed={seed}"),
            ],
        );
        let o = run(&s);
        let rms = o.metrics.straight.rms;
        assert!(o.metrics.straight.count > 5000);
        assert!(
            rms <= 1.5 * noise,
            "seed {seed}: straight RMS {rms} m > 1.5 x {noise} m"
        );
        // Not trivially zero: the noise does move the machine.
        assert!(rms > 0.001, "seed {seed}: RMS {rms}");
    }
}

/// Side slope without terrain compensation: a 3 m mast on a 4 degree slope
/// puts the antenna 3 sin(4 deg) = 0.21 m to the low side (common practice),
/// and the machine drives that far off; with compensation it does not.
#[test]
fn terrain_compensation_removes_the_mast_lean() {
    let base = ["gnss.bias_sigma_m=0.0", "terrain.crab_gain=0.0"];
    let on = run(&scenario("field", &base));
    let mut off_sets = base.to_vec();
    off_sets.push("controller.terrain_compensation=false");
    let off = run(&scenario("field", &off_sets));
    let lean = 3.0 * 4f64.to_radians().sin();
    assert!(
        on.metrics.straight.mean.abs() < 0.02,
        "{}",
        on.metrics.straight.mean
    );
    // Passes alternate direction, so the lean alternates sign: the RMS
    // carries it.
    assert!(
        (off.metrics.straight.rms - lean).abs() < 0.05,
        "off: RMS {} vs lean {lean}",
        off.metrics.straight.rms
    );
}

/// A 2 s GNSS dropout at 8 m/s with a hold time longer than the dropout:
/// following -> degraded once the last fix is stale (max_fix_age 0.3 s
/// after it was taken) -> following at the first fix after the dropout;
/// never lost; no NaN; the machine stays on the line.
#[test]
fn dropout_of_two_seconds_is_held_through() {
    let s = scenario("highspeed", &[]);
    let o = run(&s);
    use SupervisorStatus::*;
    assert_eq!(
        sequence(&o.run),
        vec![Acquiring, Following, Degraded, Following, EndOfPath]
    );
    let deg = first_after(&o.run, Degraded, 0.0).unwrap();
    // Last fix taken at 19.9 s, stale 0.3 s later (one control period of slack).
    assert!(
        (20.2 - 1e-9..=20.25 + 1e-9).contains(&deg),
        "degraded at {deg}"
    );
    let back = first_after(&o.run, Following, deg).unwrap();
    // First fix after the dropout taken at 22.0 s, delivered 50 ms later.
    assert!(
        (22.05 - 1e-9..=22.1 + 1e-9).contains(&back),
        "following at {back}"
    );
    assert_trace_finite(&o);
    let during = o
        .run
        .trace
        .iter()
        .filter(|r| (20.0..24.0).contains(&r.t_s))
        .map(|r| r.cross_track_m.abs())
        .fold(0.0, f64::max);
    assert!(during < 0.1, "cross-track during the dropout {during}");
}

/// The same dropout with the core's default hold time (0.5 s): degraded,
/// then lost (stop requested) after the hold time, then re-acquired once
/// `confirm_fixes` (5) mutually consistent fixes are in; no NaN.
#[test]
fn dropout_longer_than_the_hold_time_goes_lost_and_reacquires() {
    let s = scenario(
        "field",
        &[
            "faults=[{ type = \"gnss_dropout\", at_s = 30.0, duration_s = 2.0 }]",
            "thresholds.forbid_status=[]",
            "thresholds.max_lost_s=5.0",
        ],
    );
    let o = run(&s);
    use SupervisorStatus::*;
    let seq = sequence(&o.run);
    assert_eq!(
        seq,
        vec![Acquiring, Following, Degraded, Lost, Following, EndOfPath],
        "{seq:?}"
    );
    let deg = first_after(&o.run, Degraded, 0.0).unwrap();
    let lost = first_after(&o.run, Lost, deg).unwrap();
    let back = first_after(&o.run, Following, lost).unwrap();
    assert!(
        (30.2 - 1e-9..=30.25 + 1e-9).contains(&deg),
        "degraded at {deg}"
    );
    assert!((lost - deg - 0.5).abs() <= 0.05 + 1e-9, "lost at {lost}");
    // Fixes resume at 32.0 s (delivered 32.05 s). Re-acquisition needs
    // `confirm_fixes` consecutive raw fixes that agree with each other; the
    // last fixes before the gap agree with the first after it (dead
    // reckoning within max_jump + jump_growth * gap), so it may come with
    // the first fix and must come within five.
    assert!(
        (32.05 - 1e-9..=32.55).contains(&back),
        "re-acquired at {back}"
    );
    assert!(o.pass(), "{:?}", failed(&o));
    assert_trace_finite(&o);
}

/// A 3 m position jump (a receiver fixing on a wrong solution) held for 5 s:
/// the supervisor flags it (degraded), stops steering on it (lost after the
/// hold time; re-acquisition on the jumped fixes is refused because they lie
/// beyond the cross-track limit), and re-acquires when the fixes come back.
/// The true machine never follows the jump.
#[test]
fn three_metre_jump_is_rejected_and_survived() {
    let s = scenario(
        "field",
        &[
            "faults=[{ type = \"gnss_jump\", at_s = 30.0, duration_s = 5.0, east_m = 0.0, north_m = 3.0 }]",
            "thresholds.forbid_status=[]",
            "thresholds.max_lost_s=10.0",
        ],
    );
    let o = run(&s);
    use SupervisorStatus::*;
    let seq = sequence(&o.run);
    assert_eq!(
        seq,
        vec![Acquiring, Following, Degraded, Lost, Following, EndOfPath],
        "{seq:?}"
    );
    let deg = first_after(&o.run, Degraded, 0.0).unwrap();
    assert!(
        (30.05 - 1e-9..=30.1 + 1e-9).contains(&deg),
        "degraded at {deg}"
    );
    let back = first_after(&o.run, Following, deg).unwrap();
    assert!(back > 35.0 && back < 36.0, "re-acquired at {back}");
    let worst = o
        .run
        .trace
        .iter()
        .filter(|r| (29.0..40.0).contains(&r.t_s))
        .map(|r| r.cross_track_m.abs())
        .fold(0.0, f64::max);
    assert!(worst < 0.15, "machine followed the jump: {worst} m");
    assert!(o.pass(), "{:?}", failed(&o));
    assert_trace_finite(&o);
}

/// A short 3 m jump (0.3 s, within the hold time): degraded, then following
/// again, never lost.
#[test]
fn short_three_metre_jump_is_held_through() {
    let s = scenario(
        "field",
        &["faults=[{ type = \"gnss_jump\", at_s = 30.0, duration_s = 0.3, east_m = 0.0, north_m = 3.0 }]"],
    );
    let o = run(&s);
    use SupervisorStatus::*;
    assert_eq!(
        sequence(&o.run),
        vec![Acquiring, Following, Degraded, Following, EndOfPath]
    );
    assert!(o.pass(), "{:?}", failed(&o));
    assert_trace_finite(&o);
}

#[test]
fn runs_are_reproducible_by_seed() {
    let a = run(&scenario("warehouse", &["duration_s=20.0"]));
    let b = run(&scenario("warehouse", &["duration_s=20.0"]));
    let c = run(&scenario("warehouse", &["duration_s=20.0", "seed=99"]));
    assert_eq!(a.metrics, b.metrics);
    assert_eq!(a.run.trace, b.run.trace);
    assert_ne!(a.metrics.straight.rms, c.metrics.straight.rms);
}

/// All three laws of the core, in both precisions, follow the field.
#[test]
fn every_controller_law_and_precision_runs() {
    for law in [
        "{ kind = \"pure_pursuit\", lookahead_base_m = 2.0, lookahead_time_s = 1.0, lookahead_min_m = 3.0, lookahead_max_m = 6.0 }",
        "{ kind = \"stanley\", gain_per_s = 1.0, softening_m_s = 1.0 }",
        "{ kind = \"frenet\", cross_track_gain_per_m2 = 0.25, heading_gain_per_m = 1.0 }",
    ] {
        for precision in ["\"f32\"", "\"f64\""] {
            let s = scenario(
                "field",
                &[
                    &format!("controller.law={law}"),
                    &format!("controller.precision={precision}"),
                    "duration_s=60.0",
                ],
            );
            let o = run(&s);
            assert_trace_finite(&o);
            assert!(o.metrics.straight.rms < 0.2, "{law} {precision}: {}", o.metrics.straight.rms);
            assert_eq!(o.metrics.time_in(SupervisorStatus::Lost), 0.0);
        }
    }
}

/// Passes closer than the turning circle with reversing allowed: the core
/// builds forward-reverse-forward headland turns with cusps; the machine
/// stops at each cusp, backs up and goes on, and the truth projection
/// follows it leg by leg (the reversing leg runs back alongside the turn).
#[test]
fn reversing_headland_turns_are_driven_through_their_cusps() {
    let s = scenario(
        "field",
        &[
            "path.swath_m=6.0",
            "path.allow_reverse=true",
            "vehicle.speed_lag_s=0.3",
            "vehicle.max_accel_m_s2=1.5",
            "thresholds.forbid_status=[\"fault\", \"lost\"]",
            "thresholds.max_lost_s=0.0",
        ],
    );
    let cusps = (1..s.path.len())
        .filter(|&i| {
            s.path.segment(i).map(|a| a.direction()) != s.path.segment(i - 1).map(|b| b.direction())
        })
        .count();
    assert_eq!(cusps, 6, "two cusps per turn, three turns");
    let o = run(&s);
    assert!(o.pass(), "{:?}", failed(&o));
    assert!(
        o.run.trace.iter().any(|r| r.speed_m_s < -1.0),
        "never reversed"
    );
    assert!(
        o.metrics.curved.max_abs < 0.4,
        "{}",
        o.metrics.curved.max_abs
    );
    assert_trace_finite(&o);
}

/// A steering actuator stuck for 1.5 s at the entry of the first headland
/// turn: the machine runs wide (the error grows well beyond the fault-free
/// run), then recovers; no NaN.
#[test]
fn stuck_steering_runs_wide_and_recovers() {
    let clean = run(&scenario("field", &["duration_s=90.0"]));
    let stuck = run(&scenario(
        "field",
        &[
            "duration_s=90.0",
            "faults=[{ type = \"steer_stuck\", at_s = 50.0, duration_s = 1.5 }]",
            "thresholds={}",
        ],
    ));
    assert!(
        stuck.metrics.curved.max_abs > clean.metrics.curved.max_abs + 0.1,
        "{} vs {}",
        stuck.metrics.curved.max_abs,
        clean.metrics.curved.max_abs
    );
    let late = stuck
        .run
        .trace
        .iter()
        .filter(|r| r.t_s > 85.0)
        .map(|r| r.cross_track_m.abs())
        .fold(0.0, f64::max);
    assert!(late < 0.1, "not recovered: {late}");
    assert_trace_finite(&stuck);
}

/// The receiver drops from fixed to float for 10 s with steering gated on
/// a fixed solution (hil/scenarios/field_float.toml): degraded at the first
/// float epoch (60.0 s, delivered 60.05 s), lost after hold_time (0.5 s),
/// following again once confirm_fixes (5) fixed epochs agree (from 70.05 s
/// delivery, 10 Hz: at 70.45 s) and the whole-path search has run (spread
/// over control cycles by `Tracker::acquire_step`, about one 20 Hz cycle
/// per clothoid piece of the headland turns near the vehicle: measured
/// 70.65 s; bounded here by 0.5 s of search), with no flicker between.
#[test]
fn fixed_to_float_for_ten_seconds_degrades_loses_and_recovers() {
    let path = concat!(env!("CARGO_MANIFEST_DIR"), "/scenarios/field_float.toml");
    let o = run(&scenario(path, &[]));
    use SupervisorStatus::*;
    assert_eq!(
        sequence(&o.run),
        vec![Acquiring, Following, Degraded, Lost, Following, EndOfPath]
    );
    let deg = first_after(&o.run, Degraded, 0.0).unwrap();
    let lost = first_after(&o.run, Lost, deg).unwrap();
    let back = first_after(&o.run, Following, lost).unwrap();
    assert!((deg - 60.05).abs() < 1e-6, "degraded at {deg}");
    assert!((lost - deg - 0.5).abs() <= 0.05 + 1e-9, "lost at {lost}");
    assert!((70.45..=70.95).contains(&back), "following at {back}");
    assert!(o.pass(), "{:?}", failed(&o));
    // Gated on float instead, it rides through the drop.
    let o = run(&scenario(
        path,
        &["controller.supervisor.min_solution=\"float\""],
    ));
    assert_eq!(
        sequence(&o.run),
        vec![Acquiring, Following, EndOfPath],
        "gated on float"
    );
}
