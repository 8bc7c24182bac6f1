//! What a run leaves behind: a summary table on the terminal, a CSV trace,
//! SVG plots and an HTML page embedding them, in one directory per scenario.

pub mod svg;

use std::fmt::Write as _;
use std::fs;
use std::path::{Path as FsPath, PathBuf};

use anyhow::Context as _;

use crate::closed_loop::RunOutput;
use crate::firmware::SupervisorStatus;
use crate::metrics::{status_log, Check, ErrorStats, Metrics};
use crate::scenario::Scenario;
use svg::{esc, Plot, Series};

/// The summary table of one run, for the terminal.
pub fn summary(scenario: &Scenario, m: &Metrics, checks: &[Check], run: &RunOutput) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "scenario  {}  (seed {})",
        scenario.name(),
        scenario.spec.seed
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
    let _ = writeln!(s, "status changes         {}", status_log(run));
    let _ = writeln!(s);
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

/// Every `k`-th item so that at most `max` remain.
fn thin<T: Copy>(v: &[T], max: usize) -> Vec<T> {
    let k = v.len().div_ceil(max.max(1)).max(1);
    v.iter().step_by(k).copied().collect()
}

/// The map: path (sampled from the continuous path) and the driven track.
pub fn path_plot(scenario: &Scenario, run: &RunOutput) -> Plot {
    let p = &*scenario.path;
    let len = p.length();
    let n = ((len / 0.25).ceil() as usize).clamp(2, 8000);
    let path_pts: Vec<(f64, f64)> = (0..=n)
        .map(|i| {
            let pt = p.at(len * i as f64 / n as f64);
            (pt.x, pt.y)
        })
        .collect();
    let track: Vec<(f64, f64)> = run
        .trace
        .iter()
        .map(|r| (r.point_x_m, r.point_y_m))
        .collect();
    let fixes: Vec<(f64, f64)> = run
        .trace
        .iter()
        .filter_map(|r| Some((r.fix_x_m?, r.fix_y_m?)))
        .collect();
    Plot {
        title: format!("{}: path and driven track", scenario.name()),
        x_label: "east [m]".into(),
        y_label: "north [m]".into(),
        equal: true,
        size: (900.0, 640.0),
        series: vec![
            Series {
                label: "antenna fixes".into(),
                colour: "#bbbbbb",
                width: 1.0,
                dash: "",
                points: thin(&fixes, 6000),
            },
            Series {
                label: "path".into(),
                colour: "#1f5fbf",
                width: 2.0,
                dash: "6 4",
                points: path_pts,
            },
            Series {
                label: "driven (true point)".into(),
                colour: "#d2462b",
                width: 1.2,
                dash: "",
                points: thin(&track, 8000),
            },
        ],
        h_lines: Vec::new(),
    }
}

/// Cross-track error against distance along the path.
pub fn cross_track_plot(scenario: &Scenario, run: &RunOutput) -> Plot {
    let straight: Vec<(f64, f64)> = run
        .trace
        .iter()
        .map(|r| {
            if r.straight_pass {
                (r.progress_m, r.cross_track_m)
            } else {
                (f64::NAN, f64::NAN)
            }
        })
        .collect();
    let all: Vec<(f64, f64)> = run
        .trace
        .iter()
        .filter(|r| r.on_path)
        .map(|r| (r.progress_m, r.cross_track_m))
        .collect();
    let mut h_lines = vec![(0.0, "#444")];
    if let Some(l) = scenario.spec.thresholds.straight_max_m {
        h_lines.push((l, "#a00"));
        h_lines.push((-l, "#a00"));
    }
    Plot {
        title: format!("{}: cross-track error (left positive)", scenario.name()),
        x_label: "distance along the path [m]".into(),
        y_label: "cross-track error [m]".into(),
        equal: false,
        size: (900.0, 360.0),
        series: vec![
            Series {
                label: "all on-path".into(),
                colour: "#999999",
                width: 1.0,
                dash: "",
                points: thin(&all, 8000),
            },
            Series {
                label: "straight passes".into(),
                colour: "#1f7f3f",
                width: 1.2,
                dash: "",
                points: thin(&straight, 8000),
            },
        ],
        h_lines,
    }
}

/// The HTML page with the summary, the checks and both plots inline.
pub fn html(scenario: &Scenario, m: &Metrics, checks: &[Check], run: &RunOutput) -> String {
    let mut s = String::new();
    let pass = checks.iter().all(|c| c.pass);
    let _ = write!(
        s,
        "<!doctype html>\n<html><head><meta charset=\"utf-8\"><title>kappaline-hil: {name}</title>\
<style>body{{font-family:sans-serif;max-width:960px;margin:2em auto;color:#222}}\
table{{border-collapse:collapse}}td,th{{border:1px solid #ccc;padding:3px 8px;text-align:right}}\
th{{background:#f3f3f3}}.pass{{color:#176a2f}}.fail{{color:#b00;font-weight:bold}}\
pre{{background:#f7f7f7;padding:8px;overflow-x:auto}}</style></head><body>\n\
<h1>Scenario {name}: <span class=\"{cls}\">{verdict}</span></h1>\n<p>{desc}</p>\n",
        name = esc(scenario.name()),
        desc = esc(&scenario.spec.description),
        cls = if pass { "pass" } else { "fail" },
        verdict = if pass { "PASS" } else { "FAIL" },
    );
    let _ = writeln!(
        s,
        "<p>Seed {}; simulated {:.1} s; {:.1} m driven along a {:.1} m path.</p>",
        scenario.spec.seed,
        m.sim_time_s,
        m.distance_m,
        scenario.path.length()
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
    s.push_str("</table>\n<h2>Summary</h2>\n<pre>");
    s.push_str(&esc(&summary(scenario, m, checks, run)));
    s.push_str("</pre>\n<h2>Path and driven track</h2>\n");
    s.push_str(&path_plot(scenario, run).render());
    s.push_str("<h2>Cross-track error</h2>\n");
    s.push_str(&cross_track_plot(scenario, run).render());
    s.push_str("<h2>Straight-pass cross-track distribution</h2>\n<table><tr><th>from [m]</th><th>to [m]</th><th>samples</th></tr>\n");
    for b in m.straight_histogram.iter().filter(|b| b.count > 0) {
        let _ = writeln!(
            s,
            "<tr><td>{:.3}</td><td>{:.3}</td><td>{}</td></tr>",
            b.from_m, b.to_m, b.count
        );
    }
    s.push_str("</table>\n<p>Cross-track errors are distances of the true representative point to the continuous path (exact projection). \
This harness is a test aid, not a certified safety function: keep an independent emergency stop and follow the functional-safety standards that apply to the machine.</p>\n</body></html>\n");
    s
}

/// Writes trace, plots and page for one run under `out_dir/<scenario name>/`;
/// returns that directory.
///
/// # Errors
/// I/O errors.
pub fn write_all(
    out_dir: &FsPath,
    scenario: &Scenario,
    m: &Metrics,
    checks: &[Check],
    run: &RunOutput,
) -> anyhow::Result<PathBuf> {
    let dir = out_dir.join(scenario.name());
    fs::create_dir_all(&dir).with_context(|| format!("creating {}", dir.display()))?;
    write_csv(&dir.join("trace.csv"), run)?;
    fs::write(dir.join("path.svg"), path_plot(scenario, run).render())?;
    fs::write(
        dir.join("cross_track.svg"),
        cross_track_plot(scenario, run).render(),
    )?;
    fs::write(dir.join("report.html"), html(scenario, m, checks, run))?;
    fs::write(dir.join("summary.txt"), summary(scenario, m, checks, run))?;
    Ok(dir)
}
