//! What a run leaves behind: a summary table on the terminal, a CSV trace,
//! SVG plots, a machine-readable `result.json`, the resolved scenario and
//! an HTML page embedding the plots, in one directory per scenario.

pub mod plots;
pub mod svg;
pub mod sweep_report;

use std::fmt::Write as _;
use std::fs;
use std::path::{Path as FsPath, PathBuf};

use anyhow::Context as _;

use crate::closed_loop::RunOutput;
use crate::firmware::SupervisorStatus;
use crate::metrics::{status_log, Check, ErrorStats, Metrics};
use crate::scenario::Scenario;
use svg::esc;

/// The tool and its version, as reports name it.
pub fn tool_version() -> String {
    format!("kappaline-hil {}", env!("CARGO_PKG_VERSION"))
}

/// The files [`write_all`] writes.
pub const FILES: [&str; 13] = [
    "report.html",
    "summary.txt",
    "result.json",
    "scenario.toml",
    "trace.csv",
    "path.svg",
    "deviation.svg",
    "cross_track.svg",
    "cross_track_histogram.svg",
    "steering.svg",
    "heading_error.svg",
    "speed.svg",
    "status.svg",
];

/// Most status changes the summary lists (all are in `result.json`).
const STATUS_LOG_LINES: usize = 60;

/// How the supervisor answered one injected fault.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct FaultReaction {
    /// The fault, in words.
    pub fault: String,
    /// Its window, s.
    pub from_s: f64,
    /// End of the window, s.
    pub until_s: f64,
    /// Status when it began.
    pub status_at_onset: String,
    /// Statuses entered from the onset until [`REACTION_AFTER_S`] after its end.
    pub statuses_seen: Vec<String>,
    /// Time from the onset to the first status change, s (`None`: no change).
    pub first_change_after_s: Option<f64>,
    /// First time back in `following` after leaving it, s (`None`: it did
    /// not leave it, or never came back).
    pub following_again_at_s: Option<f64>,
    /// Largest |cross-track| from the onset until [`REACTION_AFTER_S`] after the end, metres.
    pub max_cross_track_m: f64,
}

/// How long after a fault its effects are still counted, s.
pub const REACTION_AFTER_S: f64 = 10.0;

/// The supervisor's reaction to each fault of the scenario.
pub fn fault_reactions(scenario: &Scenario, run: &RunOutput) -> Vec<FaultReaction> {
    scenario
        .spec
        .faults
        .iter()
        .map(|f| {
            let (a, b) = f.window();
            let z = b + REACTION_AFTER_S;
            let at_onset = run
                .statuses
                .iter()
                .take_while(|c| c.t_s <= a)
                .last()
                .map_or("none".to_string(), |c| c.status.name().to_string());
            let mut seen: Vec<String> = Vec::new();
            for c in run.statuses.iter().filter(|c| c.t_s > a && c.t_s <= z) {
                let n = c.status.name().to_string();
                if !seen.contains(&n) {
                    seen.push(n);
                }
            }
            let first = run
                .statuses
                .iter()
                .find(|c| c.t_s > a)
                .map(|c| c.t_s - a)
                .filter(|d| a + d <= z);
            // Back in following after the fault, if it ever left it.
            let again = run
                .statuses
                .iter()
                .find(|c| c.t_s > a && c.status == SupervisorStatus::Following)
                .map(|c| c.t_s)
                .filter(|_| !seen.is_empty());
            let max_xte = run
                .trace
                .iter()
                .filter(|r| r.t_s >= a && r.t_s <= z && r.on_path)
                .map(|r| r.cross_track_m.abs())
                .fold(0.0, f64::max);
            FaultReaction {
                fault: f.describe(),
                from_s: a,
                until_s: b,
                status_at_onset: at_onset,
                statuses_seen: seen,
                first_change_after_s: first,
                following_again_at_s: again,
                max_cross_track_m: max_xte,
            }
        })
        .collect()
}

/// The summary of one run, for the terminal: the figures, then the checks.
pub fn summary(scenario: &Scenario, m: &Metrics, checks: &[Check], run: &RunOutput) -> String {
    let mut s = figures(scenario, m, run);
    let _ = writeln!(s);
    s.push_str(&checks_table(checks));
    s
}

fn checks_table(checks: &[Check]) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "{:<30} {:>16} {:>22}  result",
        "check", "measured", "limit"
    );
    for c in checks {
        let _ = writeln!(
            s,
            "{:<30} {:>16} {:>22}  {}",
            c.name,
            c.measured,
            c.limit,
            if c.pass { "pass" } else { "FAIL" }
        );
    }
    let pass = checks.iter().all(|c| c.pass);
    let _ = writeln!(s, "\nresult: {}", if pass { "PASS" } else { "FAIL" });
    s
}

/// The figures of one run without the checks table.
fn figures(scenario: &Scenario, m: &Metrics, run: &RunOutput) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "scenario  {}  (seed {}, {})",
        scenario.name(),
        scenario.spec.seed,
        tool_version()
    );
    if !scenario.spec.description.is_empty() {
        let _ = writeln!(s, "          {}", scenario.spec.description);
    }
    let _ = writeln!(
        s,
        "simulated {:.1} s, {:.1} m along a {:.1} m path (completion {:.3})",
        m.sim_time_s,
        m.distance_m,
        scenario.path.length(),
        m.completion
    );
    if let Some(why) = &run.stopped_early {
        let _ = writeln!(s, "STOPPED EARLY: {why}");
    }
    if run.trace_every > 1 {
        let _ = writeln!(
            s,
            "note: long run, the trace keeps one record tick in {} ({:.2} Hz) to stay within {} rows",
            run.trace_every,
            scenario.spec.metrics.record_hz / run.trace_every as f64,
            crate::closed_loop::MAX_TRACE_ROWS
        );
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "{:<22} {:>7} {:>9} {:>9} {:>9} {:>9} {:>9} {:>9}",
        "cross-track [m]", "samples", "mean", "std", "RMS", "p95 |e|", "p99 |e|", "max |e|"
    );
    let row = |s: &mut String, name: &str, e: &ErrorStats| {
        let _ = writeln!(
            s,
            "{:<22} {:>7} {:>9.4} {:>9.4} {:>9.4} {:>9.4} {:>9.4} {:>9.4}",
            name, e.count, e.mean, e.std_dev, e.rms, e.p95_abs, e.p99_abs, e.max_abs
        );
    };
    row(&mut s, "straight passes", &m.straight);
    row(&mut s, "curved parts", &m.curved);
    row(&mut s, "all on-path", &m.overall);
    let _ = writeln!(s);
    let _ = writeln!(s, "heading error RMS      {:.3} deg", m.heading_rms_deg);
    let _ = writeln!(
        s,
        "settling distance      {}",
        m.settle_distance_m
            .map_or("not settled".to_string(), |d| format!("{d:.2} m"))
    );
    let _ = writeln!(
        s,
        "steering activity      {:.3} (total variation), {:.3} per 100 m",
        m.steer_total_variation, m.steer_variation_per_100m
    );
    let mut times = String::new();
    for st in SupervisorStatus::ALL {
        let t = m.time_in(st);
        if t > 0.0 {
            let _ = write!(times, "{st} {t:.2} s  ");
        }
    }
    let _ = writeln!(s, "time in status         {}", times.trim_end());
    let log = status_log(run);
    let mut words = log.split(' ');
    let shown: Vec<&str> = words.by_ref().take(STATUS_LOG_LINES).collect();
    let more = words.count() + run.statuses_dropped;
    let _ = writeln!(
        s,
        "status changes         {}{}",
        shown.join(" "),
        if more > 0 {
            format!(" ... and {more} more (result.json has the kept ones)")
        } else {
            String::new()
        }
    );
    let reactions = fault_reactions(scenario, run);
    if !reactions.is_empty() {
        let _ = writeln!(s, "\ninjected faults and the supervisor's reaction:");
        for r in &reactions {
            let _ = writeln!(
                s,
                "  {}\n    status at onset {}; then {}; first change after {}; following again {}; max |cross-track| {:.3} m",
                r.fault,
                r.status_at_onset,
                if r.statuses_seen.is_empty() {
                    "no change".to_string()
                } else {
                    r.statuses_seen.join(", ")
                },
                r.first_change_after_s
                    .map_or("-".into(), |d| format!("{d:.2} s")),
                match (r.following_again_at_s, r.statuses_seen.is_empty()) {
                    (Some(t), _) => format!("at {t:.2} s"),
                    (None, true) => "-".into(),
                    (None, false) => "never".into(),
                },
                r.max_cross_track_m
            );
        }
    }
    s
}

/// Writes the trace as CSV.
///
/// # Errors
/// I/O and serialisation errors.
pub fn write_csv(path: &FsPath, run: &RunOutput) -> anyhow::Result<()> {
    let mut w =
        csv::Writer::from_path(path).with_context(|| format!("creating {}", path.display()))?;
    for r in &run.trace {
        w.serialize(r)?;
    }
    w.flush()?;
    Ok(())
}

/// The machine-readable result: every metric, check (measured, threshold,
/// pass), the seed, the tool version, the faults and how the supervisor
/// answered them.
pub fn result_json(
    scenario: &Scenario,
    m: &Metrics,
    checks: &[Check],
    run: &RunOutput,
) -> serde_json::Value {
    let statuses: Vec<serde_json::Value> = run
        .statuses
        .iter()
        .map(|c| serde_json::json!({ "t_s": c.t_s, "status": c.status.name() }))
        .collect();
    serde_json::json!({
        "tool": tool_version(),
        "scenario": scenario.name(),
        "description": scenario.spec.description,
        "seed": scenario.spec.seed,
        "pass": checks.iter().all(|c| c.pass),
        "checks": checks,
        "metrics": m,
        "faults": fault_reactions(scenario, run),
        "status_changes": statuses,
        "status_changes_dropped": run.statuses_dropped,
        "trace_rows": run.trace.len(),
        "trace_every_record_ticks": run.trace_every,
        "stopped_early": run.stopped_early,
    })
}

/// The HTML page: verdict, checks (once), figures, faults, every plot inline.
pub fn html(scenario: &Scenario, m: &Metrics, checks: &[Check], run: &RunOutput) -> String {
    let mut s = String::new();
    let pass = checks.iter().all(|c| c.pass);
    let _ = write!(
        s,
        "<!doctype html>\n<html><head><meta charset=\"utf-8\"><title>kappaline-hil: {name}</title>\
<style>body{{font-family:sans-serif;max-width:960px;margin:2em auto;color:#222}}\
table{{border-collapse:collapse}}td,th{{border:1px solid #ccc;padding:3px 8px;text-align:right}}\
th{{background:#f3f3f3}}.pass{{color:#2f7a4e}}.fail{{color:#a3242f;font-weight:bold}}\
pre{{background:#f7f7f7;padding:8px;overflow-x:auto}}</style></head><body>\n\
<h1>Scenario {name}: <span class=\"{cls}\">{verdict}</span></h1>\n<p>{desc}</p>\n",
        name = esc(scenario.name()),
        desc = esc(&scenario.spec.description),
        cls = if pass { "pass" } else { "fail" },
        verdict = if pass { "PASS" } else { "FAIL" },
    );
    let _ = writeln!(
        s,
        "<p>Seed {}; simulated {:.1} s; {:.1} m driven along a {:.1} m path; {}.</p>",
        scenario.spec.seed,
        m.sim_time_s,
        m.distance_m,
        scenario.path.length(),
        esc(&tool_version())
    );
    s.push_str("<h2>Checks</h2>\n<table><tr><th>check</th><th>measured</th><th>limit</th><th>result</th></tr>\n");
    for c in checks {
        let _ = writeln!(
            s,
            "<tr><td style=\"text-align:left\">{}</td><td>{}</td><td>{}</td><td class=\"{}\">{}</td></tr>",
            esc(&c.name),
            esc(&c.measured),
            esc(&c.limit),
            if c.pass { "pass" } else { "fail" },
            if c.pass { "pass" } else { "FAIL" }
        );
    }
    s.push_str("</table>\n<h2>Figures</h2>\n<pre>");
    s.push_str(&esc(&figures(scenario, m, run)));
    s.push_str("</pre>\n");
    if !scenario.spec.faults.is_empty() {
        s.push_str("<h2>Injected faults and the supervisor's reaction</h2>\n<table><tr><th>fault</th><th>status at onset</th><th>statuses after</th><th>first change after [s]</th><th>following again at [s]</th><th>max |cross-track| [m]</th></tr>\n");
        for r in fault_reactions(scenario, run) {
            let _ = writeln!(
                s,
                "<tr><td style=\"text-align:left\">{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{:.3}</td></tr>",
                esc(&r.fault),
                esc(&r.status_at_onset),
                esc(&r.statuses_seen.join(", ")),
                r.first_change_after_s.map_or("-".into(), |d| format!("{d:.2}")),
                match (r.following_again_at_s, r.statuses_seen.is_empty()) {
                    (Some(t), _) => format!("{t:.2}"),
                    (None, true) => "-".into(),
                    (None, false) => "never".into(),
                },
                r.max_cross_track_m
            );
        }
        s.push_str("</table>\n");
    }
    for (title, plot) in plots::all(scenario, m, run) {
        let _ = writeln!(s, "<h2>{}</h2>", esc(title));
        s.push_str(&plot.render());
    }
    s.push_str("<h2>Resolved scenario</h2>\n<p>After every <code>--set</code> and <code>--param</code>; also in <code>scenario.toml</code>.</p>\n<pre>");
    s.push_str(&esc(&scenario.resolved_toml()));
    s.push_str("</pre>\n<p>Cross-track errors are distances of the true representative point to the continuous path (exact projection). \
This harness is a test aid, not a certified safety function: keep an independent emergency stop and follow the functional-safety standards that apply to the machine.</p>\n</body></html>\n");
    s
}

/// Writes trace, plots, result and page for one run under
/// `out_dir/<scenario name>/`; returns that directory.
///
/// # Errors
/// I/O errors, naming the file.
pub fn write_all(
    out_dir: &FsPath,
    scenario: &Scenario,
    m: &Metrics,
    checks: &[Check],
    run: &RunOutput,
) -> anyhow::Result<PathBuf> {
    let dir = out_dir.join(scenario.name());
    fs::create_dir_all(&dir).with_context(|| format!("creating {}", dir.display()))?;
    let put = |name: &str, text: String| {
        let p = dir.join(name);
        fs::write(&p, text).with_context(|| format!("writing {}", p.display()))
    };
    write_csv(&dir.join("trace.csv"), run)?;
    for (file, plot) in plots::files(scenario, m, run) {
        put(file, plot.render())?;
    }
    put("report.html", html(scenario, m, checks, run))?;
    put("summary.txt", summary(scenario, m, checks, run))?;
    let json = serde_json::to_string_pretty(&result_json(scenario, m, checks, run))?;
    put("result.json", json + "\n")?;
    put("scenario.toml", scenario.resolved_toml())?;
    Ok(dir)
}
