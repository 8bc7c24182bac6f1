//! The plots of one run: two maps (path and track; the deviation
//! exaggerated), cross-track error along the path and its histogram, and
//! against time the steering command with its limits, the heading error,
//! the speed against the speed limit and the supervisor status, each with
//! the injected faults shaded and every limit that applies drawn and
//! labelled.

use kappaline::SupervisorConfig;

use super::svg::{palette, Band, HLine, Marker, Plot, Series, Shape, Style};
use crate::closed_loop::{RunOutput, TraceRow};
use crate::controller::vehicle_of;
use crate::firmware::SupervisorStatus;
use crate::metrics::Metrics;
use crate::scenario::{Scenario, VehicleSpec};

/// Most points a series keeps (every k-th sample beyond).
const MAX_POINTS: usize = 8000;

/// Every `k`-th item so that at most `max` remain.
fn thin<T: Copy>(v: &[T], max: usize) -> Vec<T> {
    let k = v.len().div_ceil(max.max(1)).max(1);
    v.iter().step_by(k).copied().collect()
}

/// Every plot with its file name.
pub fn files(scenario: &Scenario, m: &Metrics, run: &RunOutput) -> Vec<(&'static str, Plot)> {
    vec![
        ("path.svg", path_plot(scenario, run)),
        ("deviation.svg", deviation_plot(scenario, run)),
        ("cross_track.svg", cross_track_plot(scenario, run)),
        (
            "cross_track_histogram.svg",
            histogram_plot(scenario, m, run),
        ),
        ("steering.svg", steering_plot(scenario, run)),
        ("heading_error.svg", heading_plot(scenario, run)),
        ("speed.svg", speed_plot(scenario, run)),
        ("status.svg", status_plot(scenario, run)),
    ]
}

/// Every plot with a heading for the HTML page.
pub fn all(scenario: &Scenario, m: &Metrics, run: &RunOutput) -> Vec<(&'static str, Plot)> {
    let titles = [
        "Path and driven track",
        "Deviation, exaggerated",
        "Cross-track error along the path",
        "Straight-pass cross-track distribution",
        "Steering command",
        "Heading error",
        "Speed",
        "Supervisor status",
    ];
    titles
        .into_iter()
        .zip(files(scenario, m, run))
        .map(|(t, (_, p))| (t, p))
        .collect()
}

/// The supervisor's cross-track and heading limits the run used (the
/// scenario's, else the core's defaults for the vehicle): metres, degrees.
pub fn supervisor_limits(scenario: &Scenario) -> (f64, f64) {
    let sv = &scenario.spec.controller.supervisor;
    let core = vehicle_of::<f64>(&scenario.spec.vehicle)
        .ok()
        .map(|v| SupervisorConfig::default_for(&v));
    let xte = sv
        .max_cross_track_m
        .or(core.map(|c| c.max_cross_track))
        .unwrap_or(f64::NAN);
    let head = sv
        .max_heading_error_deg
        .or(core.map(|c| c.max_heading_error.to_degrees()))
        .unwrap_or(f64::NAN);
    (xte, head)
}

fn fault_bands(scenario: &Scenario) -> Vec<Band> {
    scenario
        .spec
        .faults
        .iter()
        .map(|f| {
            let (a, b) = f.window();
            Band {
                from: a,
                // A relocalisation step is an instant: show a sliver.
                to: if b > a { b } else { a + 0.2 },
                colour: palette::FAULT,
                label: f.kind().replace('_', " "),
            }
        })
        .collect()
}

/// The distance along the path driven by time `t`.
fn progress_at(run: &RunOutput, t: f64) -> f64 {
    run.trace
        .iter()
        .find(|r| r.t_s >= t)
        .or(run.trace.last())
        .map_or(0.0, |r| r.progress_m)
}

fn path_points(scenario: &Scenario) -> Vec<(f64, f64)> {
    let p = &*scenario.path;
    let len = p.length();
    let n = ((len / 0.25).ceil() as usize).clamp(2, MAX_POINTS);
    (0..=n)
        .map(|i| {
            let pt = p.at(len * i as f64 / n as f64);
            (pt.x, pt.y)
        })
        .collect()
}

/// Start, end, direction arrows along the path and its cusps.
fn path_markers(scenario: &Scenario) -> Vec<Marker> {
    let p = &*scenario.path;
    let len = p.length();
    let mut out = Vec::new();
    for i in 1..8 {
        let pt = p.at(len * i as f64 / 8.0);
        let heading = pt.sin.atan2(pt.cos)
            + if pt.direction.sign::<f64>() < 0.0 {
                std::f64::consts::PI
            } else {
                0.0
            };
        out.push(Marker {
            at: (pt.x, pt.y),
            shape: Shape::Arrow(heading),
            colour: palette::PATH,
            label: "direction of travel".into(),
        });
    }
    for i in 1..p.len() {
        let (Some(a), Some(b)) = (p.segment(i - 1), p.segment(i)) else {
            continue;
        };
        if a.direction() != b.direction() {
            if let Some(at) = p.anchor(i) {
                out.push(Marker {
                    at: (at.x, at.y),
                    shape: Shape::Diamond,
                    colour: palette::CUSP,
                    label: "cusp (direction change)".into(),
                });
            }
        }
    }
    let s = p.at(0.0);
    out.push(Marker {
        at: (s.x, s.y),
        shape: Shape::Circle,
        colour: palette::START,
        label: "path start".into(),
    });
    if !p.is_closed() {
        let e = p.at(len);
        out.push(Marker {
            at: (e.x, e.y),
            shape: Shape::Square,
            colour: palette::END,
            label: "path end".into(),
        });
    }
    out
}

/// Markers on the track where a fault began and where the status changed.
fn event_markers(
    scenario: &Scenario,
    run: &RunOutput,
    exaggerate: Option<(f64, &Scenario)>,
) -> Vec<Marker> {
    let place = |r: &TraceRow| match exaggerate {
        Some((k, s)) if r.on_path => exaggerated(s, r, k),
        _ => (r.point_x_m, r.point_y_m),
    };
    let at_time = |t: f64| run.trace.iter().find(|r| r.t_s >= t);
    let mut out = Vec::new();
    for f in &scenario.spec.faults {
        if let Some(r) = at_time(f.window().0) {
            out.push(Marker {
                at: place(r),
                shape: Shape::Square,
                colour: palette::FAULT,
                label: "fault begins".into(),
            });
        }
    }
    for c in run.statuses.iter().skip(1).take(200) {
        if let Some(r) = at_time(c.t_s) {
            out.push(Marker {
                at: place(r),
                shape: Shape::Circle,
                colour: palette::status(c.status.name()),
                label: format!("became {}", c.status.name()),
            });
        }
    }
    out
}

/// The map: path (sampled from the continuous path) and the driven track.
pub fn path_plot(scenario: &Scenario, run: &RunOutput) -> Plot {
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
    let mut p = Plot::new(
        &format!("{}: path and driven track", scenario.name()),
        "east [m]",
        "north [m]",
        (900.0, 640.0),
    );
    p.equal = true;
    p.series = vec![
        Series::line("antenna fixes", palette::FIX, thin(&fixes, 6000)).stroke(1.0, ""),
        Series::line("path", palette::PATH, path_points(scenario)).stroke(2.0, "6 4"),
        Series::line(
            "driven (true point)",
            palette::TRACK,
            thin(&track, MAX_POINTS),
        ),
    ];
    p.markers = path_markers(scenario);
    p.markers.extend(event_markers(scenario, run, None));
    p
}

/// The foot point moved off the path by `k` times the cross-track error.
fn exaggerated(scenario: &Scenario, r: &TraceRow, k: f64) -> (f64, f64) {
    let f = scenario.path.at(r.station_m);
    // Left of the path is positive: the left normal is (-sin, cos).
    (
        f.x - k * r.cross_track_m * f.sin,
        f.y + k * r.cross_track_m * f.cos,
    )
}

/// The deviation made visible at field scale: the track drawn at its foot
/// points, moved off the path by the cross-track error times a factor that
/// makes the largest error about 4 % of the map.
pub fn deviation_plot(scenario: &Scenario, run: &RunOutput) -> Plot {
    let pts = path_points(scenario);
    let (mut lo, mut hi) = (
        (f64::INFINITY, f64::INFINITY),
        (f64::NEG_INFINITY, f64::NEG_INFINITY),
    );
    for &(x, y) in &pts {
        lo = (lo.0.min(x), lo.1.min(y));
        hi = (hi.0.max(x), hi.1.max(y));
    }
    let size = (hi.0 - lo.0).max(hi.1 - lo.1).max(1.0);
    let worst = run
        .trace
        .iter()
        .filter(|r| r.on_path)
        .map(|r| r.cross_track_m.abs())
        .fold(0.0, f64::max)
        .max(1e-4);
    // A round factor, so that the note reads well.
    let raw = (0.04 * size / worst).max(1.0);
    let mag = 10f64.powf(raw.log10().floor());
    let k = [1.0, 2.0, 5.0]
        .iter()
        .map(|m| m * mag)
        .rev()
        .find(|v| *v <= raw)
        .unwrap_or(mag);
    let on: Vec<&TraceRow> = run.trace.iter().filter(|r| r.on_path).collect();
    let track: Vec<(f64, f64)> = on.iter().map(|r| exaggerated(scenario, r, k)).collect();
    let mut p = Plot::new(
        &format!(
            "{}: deviation from the path, exaggerated {k}x",
            scenario.name()
        ),
        "east [m]",
        "north [m]",
        (900.0, 640.0),
    );
    p.equal = true;
    p.note = format!(
        "the track is drawn {k} times farther from the path than it was (largest |cross-track| {worst:.3} m); the scale bar is for the map, not the deviation"
    );
    p.series = vec![
        Series::line("path", palette::PATH, pts).stroke(1.5, "6 4"),
        Series::line(
            &format!("driven, deviation x{k}"),
            palette::TRACK,
            thin(&track, MAX_POINTS),
        ),
    ];
    p.markers = path_markers(scenario);
    p.markers
        .extend(event_markers(scenario, run, Some((k, scenario))));
    p
}

fn pm_lines(v: Option<f64>, colour: &'static str, name: &str, unit: &str) -> Vec<HLine> {
    match v {
        Some(l) if l.is_finite() => vec![
            HLine::new(l, colour, &format!("{name} +{l} {unit}")),
            HLine::new(-l, colour, &format!("{name} -{l} {unit}")),
        ],
        _ => Vec::new(),
    }
}

/// Cross-track error against distance along the path, with every
/// cross-track limit of the scenario and the supervisor's.
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
    let t = &scenario.spec.thresholds;
    let mut p = Plot::new(
        &format!("{}: cross-track error (left positive)", scenario.name()),
        "distance along the path [m]",
        "cross-track error [m]",
        (900.0, 380.0),
    );
    p.h_lines.push(HLine::new(0.0, palette::ZERO, ""));
    p.h_lines.extend(pm_lines(
        t.straight_max_m,
        palette::LIMIT,
        "straight max",
        "m",
    ));
    p.h_lines.extend(pm_lines(
        t.straight_p95_m,
        palette::LIMIT,
        "straight p95",
        "m",
    ));
    p.h_lines.extend(pm_lines(
        t.overall_max_m,
        palette::LIMIT,
        "overall max",
        "m",
    ));
    p.h_lines.extend(pm_lines(
        Some(scenario.spec.metrics.settle_band_m),
        palette::SECOND,
        "settle band",
        "m",
    ));
    let (sup_xte, _) = supervisor_limits(scenario);
    let shown = all.iter().map(|q| q.1.abs()).fold(0.0, f64::max);
    if sup_xte <= 3.0 * shown.max(0.05) {
        p.h_lines.extend(pm_lines(
            Some(sup_xte),
            palette::BOUND,
            "supervisor max",
            "m",
        ));
    }
    p.bands = fault_bands(scenario)
        .into_iter()
        .map(|b| Band {
            from: progress_at(run, b.from),
            to: progress_at(run, b.to).max(progress_at(run, b.from) + 0.5),
            ..b
        })
        .collect();
    p.series = vec![
        Series::line("all on-path", palette::MUTED, thin(&all, MAX_POINTS)).stroke(1.0, ""),
        Series::line(
            "straight passes",
            palette::STRAIGHT,
            thin(&straight, MAX_POINTS),
        ),
    ];
    // Limits on statistics are not bounds on single samples: stated, not drawn.
    let stats: Vec<String> = [
        ("straight RMS", t.straight_rms_m),
        ("curved RMS", t.curved_rms_m),
    ]
    .iter()
    .filter_map(|(n, v)| v.map(|l| format!("{n} <= {l} m")))
    .collect();
    if !stats.is_empty() {
        p.note = format!(
            "limits on statistics, not drawn as lines: {}",
            stats.join(", ")
        );
    }
    p
}

/// About 40 bins of a round width (1, 2 or 5 times a power of ten) over
/// the samples, symmetric about zero: `(centre, count)` and the width.
fn fine_bins(samples: &[f64]) -> (Vec<(f64, f64)>, f64) {
    let worst = samples.iter().map(|v| v.abs()).fold(0.0, f64::max);
    if !(worst.is_finite() && worst > 0.0) {
        return (Vec::new(), 0.01);
    }
    let raw = worst / 20.0;
    let mag = 10f64.powf(raw.log10().floor());
    let width = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|w| *w >= raw)
        .unwrap_or(10.0 * mag);
    let n = (worst / width).floor() as i64 + 1;
    let mut counts = vec![0usize; (2 * n) as usize];
    for v in samples {
        let i = ((v / width).floor() as i64 + n).clamp(0, 2 * n - 1) as usize;
        if let Some(c) = counts.get_mut(i) {
            *c += 1;
        }
    }
    let bins = counts
        .iter()
        .enumerate()
        .map(|(i, c)| (((i as i64 - n) as f64 + 0.5) * width, *c as f64))
        .collect();
    (bins, width)
}

/// Histogram of the straight-pass cross-track error, with its limits.
pub fn histogram_plot(scenario: &Scenario, m: &Metrics, run: &RunOutput) -> Plot {
    let samples: Vec<f64> = run
        .trace
        .iter()
        .filter(|r| r.straight_pass)
        .map(|r| r.cross_track_m)
        .collect();
    let (bars, width) = fine_bins(&samples);
    let t = &scenario.spec.thresholds;
    let mut p = Plot::new(
        &format!(
            "{}: straight-pass cross-track error, {} samples",
            scenario.name(),
            m.straight.count
        ),
        "cross-track error [m] (left positive)",
        "samples per bin",
        (900.0, 340.0),
    );
    p.note = format!("bins {width} m wide");
    p.series =
        vec![Series::line("samples per bin", palette::STRAIGHT, bars).styled(Style::Bars(width))];
    for (v, name) in [
        (t.straight_max_m, "straight max"),
        (t.straight_p95_m, "straight p95"),
    ] {
        if let Some(l) = v {
            p.v_lines
                .push(HLine::new(l, palette::LIMIT, &format!("{name} +{l} m")));
            p.v_lines
                .push(HLine::new(-l, palette::LIMIT, &format!("{name} -{l} m")));
        }
    }
    p.v_lines.push(HLine::new(
        m.straight.p95_abs,
        palette::SECOND,
        &format!("measured p95 |e| {:.3} m", m.straight.p95_abs),
    ));
    p
}

fn time_plot(scenario: &Scenario, title: &str, y_label: &str) -> Plot {
    let mut p = Plot::new(
        &format!("{}: {title}", scenario.name()),
        "time [s]",
        y_label,
        (900.0, 320.0),
    );
    // Faults with a window are shaded; an instant one (a single
    // relocalisation step) is a labelled line.
    for f in &scenario.spec.faults {
        let (a, b) = f.window();
        if b > a {
            p.bands.push(Band {
                from: a,
                to: b,
                colour: palette::FAULT,
                label: f.kind().replace('_', " "),
            });
        } else {
            p.v_lines
                .push(HLine::new(a, palette::FAULT, &f.kind().replace('_', " ")));
        }
    }
    p
}

/// The steering command and the actual steering angle against time, with
/// the steering limits (curvature for a differential drive).
pub fn steering_plot(scenario: &Scenario, run: &RunOutput) -> Plot {
    match scenario.spec.vehicle {
        VehicleSpec::Bicycle { max_steer_deg, .. } => {
            let mut p = time_plot(
                scenario,
                "steering angle",
                "steering angle [deg] (left positive)",
            );
            let cmd: Vec<(f64, f64)> = run
                .trace
                .iter()
                .map(|r| (r.t_s, r.cmd_steer_rad.to_degrees()))
                .collect();
            let act: Vec<(f64, f64)> = run
                .trace
                .iter()
                .map(|r| (r.t_s, r.steer_rad.to_degrees()))
                .collect();
            p.series = vec![
                Series::line("commanded", palette::PATH, thin(&cmd, MAX_POINTS)),
                Series::line("actual (actuator)", palette::TRACK, thin(&act, MAX_POINTS))
                    .stroke(1.0, "3 2"),
            ];
            limit_in_view(&mut p, max_steer_deg, "steering limit", "deg");
            p
        }
        VehicleSpec::Differential {
            max_curvature_per_m,
            ..
        } => {
            let mut p = time_plot(
                scenario,
                "commanded curvature",
                "curvature [1/m] (left positive)",
            );
            let cmd: Vec<(f64, f64)> = run
                .trace
                .iter()
                .map(|r| (r.t_s, r.cmd_curvature_per_m))
                .collect();
            let path: Vec<(f64, f64)> = run
                .trace
                .iter()
                .map(|r| (r.t_s, r.path_curvature_per_m))
                .collect();
            p.series = vec![
                Series::line("commanded", palette::PATH, thin(&cmd, MAX_POINTS)),
                Series::line(
                    "path at the foot point",
                    palette::SECOND,
                    thin(&path, MAX_POINTS),
                )
                .stroke(1.0, "3 2"),
            ];
            p.h_lines = pm_lines(
                Some(max_curvature_per_m),
                palette::BOUND,
                "curvature limit",
                "1/m",
            );
            p
        }
    }
}

/// Draws `±limit` when the data come within a third of it; otherwise
/// states it in the note, so that small commands stay readable.
fn limit_in_view(p: &mut Plot, limit: f64, name: &str, unit: &str) {
    let shown = p
        .series
        .iter()
        .flat_map(|s| s.points.iter().map(|q| q.1.abs()))
        .filter(|v| v.is_finite())
        .fold(0.0, f64::max);
    if shown >= limit / 3.0 {
        p.h_lines
            .extend(pm_lines(Some(limit), palette::BOUND, name, unit));
    } else {
        p.note = format!(
            "{name} +-{limit} {unit}, off the scale: the largest command used {:.0} % of it",
            100.0 * shown / limit
        );
    }
    p.h_lines.push(HLine::new(0.0, palette::ZERO, ""));
}

/// Heading error against time, with the supervisor's limit when it is in view.
pub fn heading_plot(scenario: &Scenario, run: &RunOutput) -> Plot {
    let mut p = time_plot(scenario, "heading error", "heading error [deg]");
    let pts: Vec<(f64, f64)> = run
        .trace
        .iter()
        .map(|r| {
            (
                r.t_s,
                if r.on_path {
                    r.heading_error_rad.to_degrees()
                } else {
                    f64::NAN
                },
            )
        })
        .collect();
    let shown = pts
        .iter()
        .map(|q| q.1.abs())
        .filter(|v| v.is_finite())
        .fold(0.0, f64::max);
    p.series = vec![Series::line(
        "heading error",
        palette::PATH,
        thin(&pts, MAX_POINTS),
    )];
    p.h_lines.push(HLine::new(0.0, palette::ZERO, ""));
    let (_, sup) = supervisor_limits(scenario);
    if sup <= 3.0 * shown.max(1.0) {
        p.h_lines
            .extend(pm_lines(Some(sup), palette::BOUND, "supervisor max", "deg"));
    }
    if let Some(l) = scenario.spec.thresholds.heading_rms_deg {
        p.h_lines
            .extend(pm_lines(Some(l), palette::LIMIT, "RMS limit", "deg"));
    }
    p
}

/// Speed against the guidance speed limit, the set speed and the
/// vehicle's top speed.
pub fn speed_plot(scenario: &Scenario, run: &RunOutput) -> Plot {
    let mut p = time_plot(scenario, "speed", "speed [m/s]");
    let v: Vec<(f64, f64)> = run.trace.iter().map(|r| (r.t_s, r.speed_m_s)).collect();
    let lim: Vec<(f64, f64)> = run
        .trace
        .iter()
        .map(|r| (r.t_s, r.speed_limit_m_s))
        .collect();
    let top = match scenario.spec.vehicle {
        VehicleSpec::Bicycle { max_speed_m_s, .. }
        | VehicleSpec::Differential { max_speed_m_s, .. } => max_speed_m_s,
    };
    p.series = vec![
        Series::line("speed (true)", palette::TRACK, thin(&v, MAX_POINTS)),
        Series::line(
            "guidance speed limit",
            palette::PATH,
            thin(&lim, MAX_POINTS),
        )
        .styled(Style::Steps)
        .stroke(1.2, "4 3"),
    ];
    p.h_lines = vec![
        HLine::new(top, palette::BOUND, &format!("vehicle max {top} m/s")),
        HLine::new(
            scenario.spec.controller.speed_m_s,
            palette::SECOND,
            &format!("set speed {} m/s", scenario.spec.controller.speed_m_s),
        ),
        HLine::new(0.0, palette::ZERO, ""),
    ];
    p
}

/// The supervisor status against time, with the faults shaded.
pub fn status_plot(scenario: &Scenario, run: &RunOutput) -> Plot {
    let mut p = time_plot(scenario, "supervisor status", "status");
    let mut pts: Vec<(f64, f64)> = run
        .statuses
        .iter()
        .map(|c| (c.t_s, c.status.index() as f64))
        .collect();
    if let Some(last) = run.statuses.last() {
        pts.push((run.sim_time_s, last.status.index() as f64));
    }
    p.series = vec![Series::line("status", palette::PATH, pts)
        .styled(Style::Steps)
        .stroke(2.0, "")];
    p.y_names = SupervisorStatus::ALL
        .iter()
        .map(|s| (s.index() as f64, s.name().to_string()))
        .collect();
    for (i, c) in run.statuses.iter().enumerate().take(500) {
        let end = run.statuses.get(i + 1).map_or(run.sim_time_s, |n| n.t_s);
        if c.status != SupervisorStatus::Following {
            p.bands.push(Band {
                from: c.t_s,
                to: end.max(c.t_s + 0.05),
                colour: palette::status(c.status.name()),
                label: String::new(),
            });
        }
    }
    p
}
