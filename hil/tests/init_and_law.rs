//! `init` writes a starting scenario per machine kind that checks and runs,
//! its gains are the core's presets for that kind, and `--set
//! controller.law.kind=...` switches the steering law.

use std::process::Command;

use kappaline::{FrenetFeedback, PurePursuit, Stanley, TrackerConfig};
use kappaline_hil::closed_loop::RunOptions;
use kappaline_hil::runner;
use kappaline_hil::scenario::overrides::parse_assignment;
use kappaline_hil::scenario::presets::MachineKind;
use kappaline_hil::scenario::template::starting_scenario;
use kappaline_hil::scenario::{load, LawSpec, Scenario};

const KINDS: [MachineKind; 3] = [
    MachineKind::Tractor,
    MachineKind::SmallRobot,
    MachineKind::RoadVehicle,
];

/// The numbers the harness writes are the core's presets (compared with
/// the core's own constructors, so they cannot drift apart).
#[test]
fn preset_numbers_are_the_cores() {
    for k in KINDS {
        let (b, t, lo, hi) = k.pure_pursuit();
        let (g, s, w) = k.stanley();
        let (kd, kh) = k.frenet();
        let (wb, wa, lost, look, hw) = k.tracker();
        let (pp, st, fr, tr) = match k {
            MachineKind::Tractor => (
                PurePursuit::<f64>::tractor(),
                Stanley::<f64>::tractor(),
                FrenetFeedback::<f64>::tractor(),
                TrackerConfig::<f64>::tractor(),
            ),
            MachineKind::SmallRobot => (
                PurePursuit::small_robot(),
                Stanley::small_robot(),
                FrenetFeedback::small_robot(),
                TrackerConfig::small_robot(),
            ),
            MachineKind::RoadVehicle => (
                PurePursuit::road_vehicle(),
                Stanley::road_vehicle(),
                FrenetFeedback::road_vehicle(),
                TrackerConfig::road_vehicle(),
            ),
        };
        assert_eq!(PurePursuit::new(b, t, lo, hi).unwrap(), pp, "{k:?}");
        assert_eq!(Stanley::new(g, s, w).unwrap(), st, "{k:?}");
        assert_eq!(FrenetFeedback::new(kd, kh).unwrap(), fr, "{k:?}");
        let mine = TrackerConfig {
            window_back: wb,
            window_ahead: wa,
            lost_distance: lost,
            lookahead: look,
            heading_weight: hw,
        };
        assert_eq!(mine, tr, "{k:?}");
    }
}

#[test]
fn each_starting_scenario_checks_runs_and_passes() {
    for k in KINDS {
        let text = starting_scenario(k, "start");
        let s = Scenario::parse(&text, k.name()).unwrap_or_else(|e| panic!("{k:?}: {e}"));
        assert!(text.contains("# "), "commented");
        let o = runner::run(&s, RunOptions::default(), None).unwrap();
        let failed: Vec<_> = o.checks.iter().filter(|c| !c.pass).collect();
        assert!(failed.is_empty(), "{k:?}: {failed:?}");
        // Every law the file offers in its comments checks too.
        for line in text.lines().filter(|l| l.starts_with("# law = ")) {
            let law = line.trim_start_matches("# ");
            let swapped =
                text.replace(text.lines().find(|l| l.starts_with("law = ")).unwrap(), law);
            Scenario::parse(&swapped, k.name()).unwrap_or_else(|e| panic!("{k:?} {law}: {e}"));
        }
    }
}

#[test]
fn init_writes_a_file_and_refuses_to_overwrite_it() {
    let dir = std::env::temp_dir().join(format!("kappaline-hil-init-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("robot.toml");
    let _ = std::fs::remove_file(&file);
    let hil = env!("CARGO_BIN_EXE_kappaline-hil");
    let o = Command::new(hil)
        .args(["init", "--kind", "small_robot"])
        .arg(&file)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0), "{o:?}");
    let check = Command::new(hil).arg("check").arg(&file).output().unwrap();
    assert_eq!(check.status.code(), Some(0), "{check:?}");
    let again = Command::new(hil).arg("init").arg(&file).output().unwrap();
    assert_eq!(again.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&again.stderr).contains("--force"));
}

fn with(sets: &[&str]) -> Scenario {
    let o: Vec<_> = sets.iter().map(|s| parse_assignment(s).unwrap()).collect();
    load("field", &o).unwrap_or_else(|e| panic!("{sets:?}: {e:#}"))
}

#[test]
fn set_switches_the_steering_law_with_preset_gains() {
    // The field vehicle is a 5 m/s front-steered machine: tractor presets.
    let s = with(&["controller.law.kind=stanley"]);
    let (g, soft, wb) = MachineKind::Tractor.stanley();
    assert_eq!(
        s.spec.controller.law,
        LawSpec::Stanley {
            gain_per_s: g,
            softening_m_s: soft,
            virtual_wheelbase_m: wb
        }
    );
    // A gain set after the switch applies to the new law.
    let s = with(&[
        "controller.law=pure_pursuit",
        "controller.law.lookahead_max_m=8.0",
    ]);
    assert!(matches!(
        s.spec.controller.law,
        LawSpec::PurePursuit { lookahead_max_m, .. } if lookahead_max_m == 8.0
    ));
    // Naming the current law keeps its gains.
    let s = with(&["controller.law.kind=frenet"]);
    assert!(matches!(
        s.spec.controller.law,
        LawSpec::Frenet {
            integral_gain_per_m3: Some(_),
            ..
        }
    ));
    let o: Vec<_> = ["controller.law.kind=bang_bang"]
        .iter()
        .map(|s| parse_assignment(s).unwrap())
        .collect();
    let e = format!("{:#}", load("field", &o).unwrap_err());
    assert!(e.contains("pure_pursuit") && e.contains("bang_bang"), "{e}");
}
