//! Sweeps over seeds and parameters, the report files and the command line.

use std::process::Command;

use kappaline_hil::closed_loop::RunOptions;
use kappaline_hil::scenario::load;
use kappaline_hil::sweep::{self, parse_param, Plan};
use kappaline_hil::{report, runner};

/// A sweep of 1000 seeds finishes (short runs: 4 s of the warehouse loop
/// each, so the whole sweep is 4000 simulated seconds), every run yields
/// finite figures, and the seeds really differ.
#[test]
fn sweep_of_a_thousand_seeds_finishes() {
    let plan = Plan {
        source: "warehouse".into(),
        base: Vec::new(),
        params: Vec::new(),
        seeds: 0..1000,
        duration_s: Some(4.0),
    };
    let jobs = plan.jobs().unwrap();
    assert_eq!(jobs.len(), 1000);
    let results = sweep::run(&plan, &jobs, &|| ()).unwrap();
    assert_eq!(results.len(), 1000);
    let mut rms: Vec<f64> = results.iter().map(|r| r.metrics.overall.rms).collect();
    assert!(rms.iter().all(|v| v.is_finite() && *v > 0.0));
    assert!(results.iter().all(|r| r.metrics.non_finite == 0));
    rms.sort_by(f64::total_cmp);
    rms.dedup();
    assert!(rms.len() > 900, "seeds should give different runs");
    let text = sweep::summary(&plan, &results);
    assert!(text.contains("1000 seeds"), "{text}");
}

#[test]
fn parameter_sweep_runs_every_combination_and_noise_hurts() {
    let plan = Plan {
        source: "field".into(),
        base: vec![
            ("gnss.bias_sigma_m".into(), toml::Value::Float(0.0)),
            ("terrain.slope_y_deg".into(), toml::Value::Float(0.0)),
            ("start.left_m".into(), toml::Value::Float(0.0)),
            ("start.heading_deg".into(), toml::Value::Float(0.0)),
        ],
        params: vec![parse_param("gnss.noise_m=0.01,0.10").unwrap()],
        seeds: 1..4,
        duration_s: Some(45.0),
    };
    let jobs = plan.jobs().unwrap();
    assert_eq!(jobs.len(), 6);
    let results = sweep::run(&plan, &jobs, &|| ()).unwrap();
    let mean = |noise: f64| {
        let v: Vec<f64> = results
            .iter()
            .filter(|r| r.values[0].as_float() == Some(noise))
            .map(|r| r.metrics.straight.rms)
            .collect();
        v.iter().sum::<f64>() / v.len() as f64
    };
    assert!(
        mean(0.10) > 2.0 * mean(0.01),
        "{} vs {}",
        mean(0.10),
        mean(0.01)
    );
    let dir = tempdir("sweep");
    let csv_path = dir.join("sweep.csv");
    sweep::write_csv(&csv_path, &plan, &results).unwrap();
    let text = std::fs::read_to_string(&csv_path).unwrap();
    assert_eq!(text.lines().count(), 7);
    assert!(text.starts_with("gnss.noise_m,seed,straight_RMS_m"));
}

#[test]
fn parameter_ranges_parse() {
    let p = parse_param("gnss.noise_m=0.01:0.03:3").unwrap();
    assert_eq!(p.values.len(), 3);
    assert!((p.values[1].as_float().unwrap() - 0.02).abs() < 1e-12);
    assert!(parse_param("gnss.noise_m").is_err());
    // A swept value outside its range is refused naming the field.
    let plan = Plan {
        source: "field".into(),
        base: Vec::new(),
        params: vec![parse_param("vehicle.wheelbase_m=-1.0").unwrap()],
        seeds: 0..1,
        duration_s: None,
    };
    let e = plan.jobs().unwrap_err().to_string();
    assert!(e.contains("vehicle.wheelbase_m"), "{e}");
}

fn tempdir(tag: &str) -> std::path::PathBuf {
    let d = std::env::temp_dir().join(format!("kappaline-hil-{tag}-{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// The report of every built-in scenario carries every plot (each SVG
/// exists, is not empty, draws something and names both axes), the checks
/// table once, `result.json` with every check's numbers, and the resolved
/// scenario.
#[test]
fn report_of_each_builtin_has_every_plot_result_json_and_scenario() {
    for b in kappaline_hil::scenario::builtin::BUILTINS {
        let s = load(b.name, &[]).unwrap();
        let o = runner::run(
            &s,
            RunOptions {
                duration_s: Some(30.0),
                ..RunOptions::default()
            },
            None,
        )
        .unwrap();
        let dir = tempdir(&format!("report-{}", b.name));
        let out = report::write_all(&dir, &s, &o.metrics, &o.checks, &o.run).unwrap();
        for f in report::FILES {
            let len = std::fs::metadata(out.join(f)).map_or(0, |m| m.len());
            assert!(len > 0, "{}: {f} missing or empty", b.name);
        }
        let csv = std::fs::read_to_string(out.join("trace.csv")).unwrap();
        assert_eq!(csv.lines().count(), o.run.trace.len() + 1);
        assert!(csv.lines().next().unwrap().contains("cross_track_m"));
        let svgs: Vec<&str> = report::FILES
            .iter()
            .copied()
            .filter(|f| f.ends_with(".svg"))
            .collect();
        assert_eq!(svgs.len(), 8);
        for svg in &svgs {
            let text = std::fs::read_to_string(out.join(svg)).unwrap();
            assert!(text.starts_with("<svg"), "{svg}");
            assert!(
                text.contains("<path d=\"M") || text.contains("<rect x="),
                "{}: {svg} draws nothing",
                b.name
            );
            for axis in ["class=\"x-axis\"", "class=\"y-axis\""] {
                let at = text
                    .find(axis)
                    .unwrap_or_else(|| panic!("{svg}: no {axis}"));
                let name = text[at..].split('>').nth(1).unwrap_or("");
                assert!(
                    name.len() > 5 && !name.starts_with('<'),
                    "{svg}: unnamed axis"
                );
            }
        }
        let html = std::fs::read_to_string(out.join("report.html")).unwrap();
        assert_eq!(html.matches("<svg").count(), 8, "every plot embedded");
        assert_eq!(html.matches("<h2>Checks</h2>").count(), 1);
        assert_eq!(
            html.matches("non-finite values").count(),
            1,
            "the checks are listed once"
        );
        assert!(
            html.contains("kappaline-hil "),
            "tool version in the report"
        );
        assert!(html.contains("Resolved scenario"));
        let json: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(out.join("result.json")).unwrap())
                .unwrap();
        assert_eq!(json["seed"].as_u64(), Some(s.spec.seed));
        assert_eq!(json["pass"].as_bool(), Some(o.pass()));
        assert!(json["tool"].as_str().unwrap().starts_with("kappaline-hil "));
        let checks = json["checks"].as_array().unwrap();
        assert_eq!(checks.len(), o.checks.len());
        assert!(checks.iter().all(|c| c["pass"].is_boolean()));
        assert!(json["metrics"]["straight"]["rms"].is_number());
        let again = std::fs::read_to_string(out.join("scenario.toml")).unwrap();
        let back = kappaline_hil::scenario::Scenario::parse(&again, "scenario.toml").unwrap();
        assert_eq!(
            back.spec, s.spec,
            "{}: the resolved scenario reloads",
            b.name
        );
    }
}

fn hil() -> Command {
    Command::new(env!("CARGO_BIN_EXE_kappaline-hil"))
}

#[test]
fn command_line_exit_codes() {
    let dir = tempdir("cli");
    let ok = hil()
        .args([
            "run",
            "warehouse",
            "-q",
            "--duration",
            "30",
            "--set",
            "thresholds.min_completion=0.3",
            "--out",
        ])
        .arg(&dir)
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&ok.stdout);
    assert_eq!(ok.status.code(), Some(0), "{text}");
    assert!(text.contains("result: PASS"));
    assert!(dir.join("warehouse").join("report.html").exists());

    let fail = hil()
        .args([
            "run",
            "warehouse",
            "-q",
            "--no-report",
            "--duration",
            "30",
            "--set",
            "thresholds.straight_rms_m=0.0001",
        ])
        .output()
        .unwrap();
    assert_eq!(fail.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&fail.stdout).contains("FAIL"));

    let bad = dir.join("bad.toml");
    let text = include_str!("../scenarios/warehouse.toml")
        .replace("track_width_m = 0.45", "track_width_m = -0.45");
    std::fs::write(&bad, text).unwrap();
    let refused = hil().arg("run").arg(&bad).output().unwrap();
    assert_eq!(refused.status.code(), Some(2));
    let err = String::from_utf8_lossy(&refused.stderr);
    assert!(err.contains("vehicle.track_width_m"), "{err}");

    let list = hil().arg("list").output().unwrap();
    let text = String::from_utf8_lossy(&list.stdout);
    for name in ["field", "warehouse", "highspeed"] {
        assert!(text.contains(name), "{text}");
    }
}

/// `check` and `bench` take `--set`; `list` says where scenario files live;
/// a malformed `--param` gets the format; `--help` states what `--out` is
/// relative to.
#[test]
fn verbs_take_set_and_explain_themselves() {
    let out = |args: &[&str]| {
        let o = hil().args(args).output().unwrap();
        (
            o.status.code(),
            String::from_utf8_lossy(&o.stdout).to_string(),
            String::from_utf8_lossy(&o.stderr).to_string(),
        )
    };
    let (code, _, err) = out(&["check", "field", "--set", "gnss.latency_s=0.5"]);
    assert_eq!(code, Some(2));
    assert!(err.contains("gnss.latency_s"), "{err}");
    let (code, text, _) = out(&["check", "field", "--set", "gnss.noise_m=0.05"]);
    assert_eq!(code, Some(0), "{text}");
    let (code, text, err) = out(&[
        "bench",
        "warehouse",
        "--runs",
        "2",
        "--duration",
        "2",
        "--set",
        "controller.precision=\"f64\"",
    ]);
    assert_eq!(code, Some(0), "{err}");
    assert!(text.contains("simulated s per wall s"), "{text}");
    let (_, text, _) = out(&["list"]);
    assert!(
        text.contains("hil/scenarios/") && text.contains("init"),
        "{text}"
    );
    let (code, _, err) = out(&["sweep", "-q", "--param", "gnss.noise_m=0.01:0.02"]);
    assert_eq!(code, Some(2));
    assert!(
        err.contains("KEY=LO:HI:N") && err.contains("KEY=A,B,C"),
        "{err}"
    );
    let (_, text, _) = out(&["run", "--help"]);
    assert!(
        text.contains("current directory") && text.contains("repository root"),
        "{text}"
    );
}
