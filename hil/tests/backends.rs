//! The closed loop with each numeric backend of the core (`f32`, `f64`,
//! Q32.32 fixed point): the same scenario, seed and law give the same
//! metrics to within 2 mm RMS (issue 14), the `f64` run being the reference.

use kappaline_hil::closed_loop::RunOptions;
use kappaline_hil::firmware::SupervisorStatus;
use kappaline_hil::runner::{self, Outcome};
use kappaline_hil::scenario::{load, overrides::parse_assignment};

fn run(name: &str, precision: &str, law: &str) -> Outcome {
    let sets = [
        format!("controller.precision=\"{precision}\""),
        format!("controller.law.kind=\"{law}\""),
    ];
    let o: Vec<_> = sets.iter().map(|s| parse_assignment(s).unwrap()).collect();
    let s = load(name, &o).unwrap_or_else(|e| panic!("{name}: {e:#}"));
    runner::run(&s, RunOptions::default(), None).expect("controller builds")
}

#[test]
fn every_backend_gives_the_same_metrics_within_2_mm_rms() {
    for name in ["warehouse", "field"] {
        for law in ["pure_pursuit", "stanley", "frenet"] {
            let reference = run(name, "f64", law);
            for precision in ["f32", "q32"] {
                let o = run(name, precision, law);
                let m = &o.metrics;
                let r = &reference.metrics;
                for (what, a, b) in [
                    ("straight", m.straight.rms, r.straight.rms),
                    ("curved", m.curved.rms, r.curved.rms),
                    ("overall", m.overall.rms, r.overall.rms),
                ] {
                    assert!(
                        (a - b).abs() <= 2e-3,
                        "{name} {law} {precision} {what} RMS {a} vs f64 {b}"
                    );
                }
                assert_eq!(
                    m.time_in(SupervisorStatus::Lost),
                    r.time_in(SupervisorStatus::Lost),
                    "{name} {law} {precision}"
                );
                assert!((m.completion - r.completion).abs() < 1e-2);
            }
        }
    }
}
