//! The faults a rig injects between receiver and firmware, and how the
//! supervisor answers them in the closed loop (the field scenario, 40 s,
//! the fault from 20 s). The expected reactions follow from the
//! supervisor's documented defaults (`SupervisorConfig::default_for`:
//! stale after 0.3 s, hold 0.5 s, then lost): a fix stream that stops
//! being usable must take guidance out of `following`, the commands must
//! stay finite, and guidance must come back once the stream is good again.

use kappaline_hil::closed_loop::RunOptions;
use kappaline_hil::firmware::SupervisorStatus;
use kappaline_hil::report::{fault_reactions, result_json};
use kappaline_hil::runner::{self, Outcome};
use kappaline_hil::scenario::overrides::parse_assignment;
use kappaline_hil::scenario::{load, Scenario};

fn with_fault(base: &str, fault: &str) -> Scenario {
    let sets = [
        "duration_s=40.0".to_string(),
        format!("faults=[{{ {fault} }}]"),
    ];
    let o: Vec<_> = sets.iter().map(|s| parse_assignment(s).unwrap()).collect();
    load(base, &o).unwrap_or_else(|e| panic!("{fault}: {e:#}"))
}

fn run(s: &Scenario) -> Outcome {
    runner::run(s, RunOptions::default(), None).unwrap()
}

/// Left `following` during the fault, commands finite, back afterwards.
fn degrades_and_recovers(fault: &str, back_by_s: f64) {
    let s = with_fault("field", fault);
    let o = run(&s);
    assert_eq!(o.metrics.non_finite, 0, "{fault}: commands stay finite");
    let r = fault_reactions(&s, &o.run);
    let r = r.first().unwrap();
    assert_eq!(r.status_at_onset, "following", "{fault}");
    assert!(
        r.statuses_seen.iter().any(|s| s == "degraded"),
        "{fault}: {r:?}"
    );
    let first = r.first_change_after_s.unwrap();
    assert!(
        first > 0.0 && first <= 0.5,
        "{fault}: reacted after {first} s"
    );
    let again = r.following_again_at_s.unwrap();
    assert!(
        again > r.until_s - 1e-9 && again < back_by_s,
        "{fault}: {again}"
    );
    let last = o.run.statuses.last().unwrap();
    assert_eq!(last.status, SupervisorStatus::Following, "{fault}");
}

#[test]
fn non_finite_fixes_are_refused_by_the_supervisor() {
    degrades_and_recovers("type=\"gnss_non_finite\", at_s=20.0, duration_s=1.0", 22.0);
}

#[test]
fn a_stale_stream_with_repeated_time_stamps_degrades_then_recovers() {
    degrades_and_recovers("type=\"gnss_stale\", at_s=20.0, duration_s=1.0", 22.0);
}

#[test]
fn a_latency_spike_degrades_then_recovers() {
    // Fixes sampled in [20, 21) s arrive 0.5 s later than usual: older
    // than the 0.3 s stale age.
    degrades_and_recovers(
        "type=\"latency_spike\", at_s=20.0, duration_s=1.0, extra_latency_s=0.5",
        23.0,
    );
}

#[test]
fn a_small_relocalisation_step_is_followed_and_a_large_one_is_not() {
    // A 0.3 m step to the left of an eastbound pass: guidance follows the
    // new estimate, so the true point ends up about 0.3 m right of the path.
    let s = with_fault("field", "type=\"relocalisation\", at_s=20.0, north_m=0.3");
    let o = run(&s);
    let late: Vec<f64> = o
        .run
        .trace
        .iter()
        .filter(|r| r.t_s > 30.0 && r.straight_pass)
        .map(|r| r.cross_track_m)
        .collect();
    let mean = late.iter().sum::<f64>() / late.len() as f64;
    assert!((mean + 0.3).abs() < 0.08, "mean cross-track {mean}");
    // A 2 m step disagrees with dead reckoning by more than the jump
    // tolerance (0.5 m + 0.5 m/s): refused, and guidance ends up lost.
    let s = with_fault("field", "type=\"relocalisation\", at_s=20.0, north_m=2.0");
    let o = run(&s);
    let r = fault_reactions(&s, &o.run);
    assert!(
        r[0].statuses_seen.iter().any(|s| s == "degraded"),
        "{:?}",
        r[0]
    );
    assert!(o.metrics.time_in(SupervisorStatus::Lost) > 1.0);
}

#[test]
fn repeated_relocalisation_steps_add_up() {
    let s = with_fault(
        "warehouse",
        "type=\"relocalisation\", at_s=5.0, count=3, every_s=5.0, east_m=0.0, north_m=0.05",
    );
    let o = run(&s);
    assert_eq!(o.metrics.non_finite, 0);
    let r = &fault_reactions(&s, &o.run)[0];
    assert_eq!((r.from_s, r.until_s), (5.0, 15.0));
    assert!(r.fault.contains("3 steps every 5 s"), "{}", r.fault);
    // Three steps of 5 cm: the true point is off by up to about 15 cm.
    assert!(r.max_cross_track_m > 0.1, "{r:?}");
}

#[test]
fn a_stuck_steering_actuator_is_reported_with_the_supervisors_answer() {
    let s = with_fault("field", "type=\"steer_stuck\", at_s=20.0, duration_s=2.0");
    let o = run(&s);
    let json = result_json(&s, &o.metrics, &o.checks, &o.run);
    let f = &json["faults"][0];
    assert_eq!(f["fault"].as_str(), Some("steer_stuck from 20 s to 22 s"));
    assert_eq!(f["status_at_onset"].as_str(), Some("following"));
    assert!(f["max_cross_track_m"].as_f64().unwrap() >= 0.0);
    let text = kappaline_hil::report::summary(&s, &o.metrics, &o.checks, &o.run);
    assert!(
        text.contains("injected faults and the supervisor's reaction"),
        "{text}"
    );
}
