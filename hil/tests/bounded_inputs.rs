//! Bad inputs found by a probe of the command line and the scenario check:
//! each used to crash, abort out of memory or be accepted silently; each is
//! now refused with exit code 2 and a message naming the key or option.

use std::process::{Command, Output};

use kappaline_hil::closed_loop::{RunOptions, MAX_TRACE_ROWS};
use kappaline_hil::runner;
use kappaline_hil::scenario::overrides::parse_assignment;
use kappaline_hil::scenario::{load, Scenario};

const FIELD: &str = include_str!("../scenarios/field.toml");

fn hil(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_kappaline-hil"))
        .args(args)
        .output()
        .expect("binary runs")
}

/// Exit code 2 and a message on stderr that contains every `needle`.
fn refused(args: &[&str], needles: &[&str]) {
    let o = hil(args);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
    for n in needles {
        assert!(err.contains(n), "{args:?}: `{n}` not in: {err}");
    }
    assert!(!err.contains("panicked"), "{args:?}: {err}");
}

fn refused_by_check(sets: &[&str], field: &str) -> String {
    let o: Vec<_> = sets.iter().map(|s| parse_assignment(s).unwrap()).collect();
    match load("field", &o) {
        Ok(_) => panic!("{sets:?} accepted"),
        Err(e) => {
            let msg = format!("{e:#}");
            assert!(msg.contains(&format!("`{field}`")), "{msg}");
            msg
        }
    }
}

#[test]
fn a_huge_duration_in_the_file_is_refused_by_check_and_run() {
    // Used to pass `check` and then panic in `run` (capacity overflow), or
    // abort on a 104 GB allocation for 1e7 s.
    for d in ["1e300", "1e7", "0.0", "-5.0", "nan", "inf"] {
        let text = FIELD.replace("duration_s = 400.0", &format!("duration_s = {d}"));
        let e = Scenario::parse(&text, "long.toml").expect_err(d);
        assert_eq!(e.field(), "duration_s", "{d}: {e}");
    }
    let dir = std::env::temp_dir().join(format!("kappaline-hil-bounded-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("long.toml");
    std::fs::write(
        &file,
        FIELD.replace("duration_s = 400.0", "duration_s = 1e300"),
    )
    .unwrap();
    let f = file.to_str().unwrap();
    refused(&["check", f], &["duration_s", "1e300"]);
    refused(&["run", "-q", "--no-report", f], &["duration_s"]);
}

#[test]
fn bad_durations_on_the_command_line_are_usage_errors() {
    // Used to panic (inf, 1e300) or simulate 0 s and report FAIL (0, nan, -5).
    for d in ["inf", "1e300", "0", "nan", "-5"] {
        refused(
            &["run", "-q", "--no-report", "--duration", d],
            &["--duration"],
        );
    }
    refused(
        &["sweep", "-q", "--seeds", "2", "--duration", "0"],
        &["--duration"],
    );
}

#[test]
fn sweeps_too_large_for_memory_are_refused_before_they_start() {
    // Both used to abort out of memory.
    refused(
        &["sweep", "highspeed", "-q", "--seeds", "1000000000"],
        &["--seeds", "--shard"],
    );
    refused(
        &[
            "sweep",
            "-q",
            "--param",
            "gnss.noise_m=0.01:0.02:1000000000",
        ],
        &["--param", "N must lie in"],
    );
    refused(&["sweep", "-q", "--seeds", "0"], &["--seeds"]);
}

#[test]
fn seeds_out_of_range_are_named_not_wrapped() {
    // Used to wrap silently.
    refused(
        &[
            "sweep",
            "-q",
            "--first-seed",
            "18446744073709551615",
            "--seeds",
            "2",
        ],
        &["--first-seed"],
    );
    refused(
        &[
            "sweep",
            "-q",
            "--first-seed",
            "9223372036854775807",
            "--seeds",
            "2",
        ],
        &["--first-seed", "--seeds", "last seed"],
    );
    // A single seed means nothing to a sweep: refused, not ignored.
    refused(
        &["sweep", "-q", "--seeds", "2", "--seed", "5"],
        &["--seed", "--first-seed"],
    );
    // Used to be reported as "invalid value: integer `-1`".
    let o = hil(&["run", "-q", "--no-report", "--seed", "18446744073709551615"]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("--seed") && !err.contains("-1`"), "{err}");
}

#[test]
fn a_csv_into_a_missing_folder_is_refused_before_the_sweep_naming_the_file() {
    // Used to run the whole sweep and then fail without naming the file.
    let o = hil(&[
        "sweep",
        "-q",
        "--seeds",
        "3",
        "--duration",
        "5",
        "--csv",
        "/no/such/folder/runs.csv",
    ]);
    let err = String::from_utf8_lossy(&o.stderr);
    let out = String::from_utf8_lossy(&o.stdout);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("/no/such/folder/runs.csv") && err.contains("--csv"),
        "{err}"
    );
    assert!(!out.contains("runs,"), "the sweep ran first: {out}");
}

#[test]
fn meaningless_start_and_timing_values_are_refused_naming_the_field() {
    // Start speed far beyond the vehicle's limit (max_speed_m_s = 5).
    let msg = refused_by_check(&["start.speed_m_s=1e6"], "start.speed_m_s");
    assert!(msg.contains("max_speed_m_s"), "{msg}");
    // Used to simulate 0 s and report "non-finite values 1".
    let msg = refused_by_check(&["start.left_m=1e9"], "start.left_m");
    assert!(msg.contains("1e9"), "{msg}");
    // Latency beyond the default stale age (0.3 s): never left acquiring.
    let msg = refused_by_check(&["gnss.latency_s=0.5"], "gnss.latency_s");
    assert!(msg.contains("max_fix_age_s"), "{msg}");
    // A rate so low that every epoch goes stale before the next one.
    refused_by_check(&["gnss.rate_hz=2.0"], "gnss.latency_s");
    // ... accepted once the stale age allows it.
    let o: Vec<_> = [
        "gnss.rate_hz=2.0",
        "controller.supervisor.max_fix_age_s=0.6",
    ]
    .iter()
    .map(|s| parse_assignment(s).unwrap())
    .collect();
    load("field", &o).expect("consistent timing is accepted");
    // Sampled on the physics grid: a faster rate used to be lowered silently.
    refused_by_check(&["metrics.record_hz=5000.0"], "metrics.record_hz");
    // A fault longer than any run.
    refused_by_check(
        &["faults=[{type=\"gnss_stale\", at_s=1.0, duration_s=1e300}]"],
        "faults[0].duration_s",
    );
}

#[test]
fn the_trace_stays_bounded_on_a_run_longer_than_it_holds() {
    // 10 kHz physics recorded at every step for 30 s: 300 001 record ticks,
    // more than the trace keeps.
    let sets: Vec<_> = [
        "physics_hz=10000.0",
        "metrics.record_hz=10000.0",
        "duration_s=30.0",
    ]
    .iter()
    .map(|s| parse_assignment(s).unwrap())
    .collect();
    let s = load("warehouse", &sets).unwrap();
    let out = runner::run(&s, RunOptions::default(), None).unwrap();
    let trace = &out.run.trace;
    assert!(trace.len() <= MAX_TRACE_ROWS, "{}", trace.len());
    assert_eq!(out.run.trace_every, 2);
    // Thinned evenly over the whole run, not cut off.
    let last = trace.last().map_or(0.0, |r| r.t_s);
    assert!(last > 29.9, "trace ends at {last} s");
    let dt = trace[1].t_s - trace[0].t_s;
    assert!((dt - 2e-4).abs() < 1e-9, "{dt}");
    assert!(out.metrics.overall.count > 100_000);
    let text = kappaline_hil::report::summary(&s, &out.metrics, &out.checks, &out.run);
    assert!(text.contains("one record tick in 2"), "{text}");
}

#[test]
fn inputs_option_is_refused_over_a_link_and_when_unknown() {
    // Over a link the device gets its inputs over the link: the in-process
    // option would mean nothing, so it is refused before QEMU is started.
    refused(
        &[
            "run",
            "field",
            "--link",
            "qemu",
            "--inputs",
            "as-link",
            "--no-report",
        ],
        &["--inputs", "in-process"],
    );
    refused(&["run", "field", "--inputs", "sideways"], &["sideways"]);
    refused(
        &["run", "field", "--link", "qemu", "--board", "m7"],
        &["m7", "m4f, m3, m0 or microbit"],
    );
}
