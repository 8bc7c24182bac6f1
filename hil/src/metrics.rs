//! Figures of merit of one run, and the pass/fail check against the
//! scenario's thresholds.
//!
//! Every cross-track figure is taken from the trace, whose cross-track error
//! is the distance of the true representative point to the *continuous*
//! path (the core's exact projection), not to the nearest recorded or
//! sampled path point: nearest-point figures overestimate the error
//! (Transactions of the ASABE 59(6), 2016, on measuring guidance accuracy).
//!
//! On straight passes the distribution is reported in the manner of
//! ISO 12188-2 (test of satellite-based auto-guidance during straight and
//! level travel): the signed error's mean and standard deviation, the RMS,
//! percentiles of the absolute error, and a histogram. Which exact
//! statistics the standard prescribes is from memory; the harness reports a
//! superset of those commonly quoted (mean, standard deviation, 95th
//! percentile).

use std::fmt::Write as _;

use crate::closed_loop::{RunOutput, TraceRow};
use crate::firmware::SupervisorStatus;
use crate::scenario::{Scenario, ThresholdSpec};

/// Summary statistics of a set of signed errors.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct ErrorStats {
    /// Number of samples.
    pub count: usize,
    /// Mean (signed), same unit as the samples.
    pub mean: f64,
    /// Standard deviation about the mean.
    pub std_dev: f64,
    /// Root mean square.
    pub rms: f64,
    /// 50th percentile of the absolute value.
    pub p50_abs: f64,
    /// 95th percentile of the absolute value.
    pub p95_abs: f64,
    /// 99th percentile of the absolute value.
    pub p99_abs: f64,
    /// Largest absolute value.
    pub max_abs: f64,
}

impl ErrorStats {
    /// Statistics of the finite `samples` (all zero when there are none);
    /// non-finite samples are skipped (the run counts them in
    /// [`Metrics::non_finite`], and its check fails on them), so that every
    /// figure stays a number.
    pub fn of(samples: &[f64]) -> Self {
        let finite: Vec<f64> = samples.iter().copied().filter(|v| v.is_finite()).collect();
        let samples = finite.as_slice();
        let n = samples.len();
        if n == 0 {
            return Self::default();
        }
        let nf = n as f64;
        let mean = samples.iter().sum::<f64>() / nf;
        let ms = samples.iter().map(|v| v * v).sum::<f64>() / nf;
        let var = samples.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / nf;
        let mut abs: Vec<f64> = samples.iter().map(|v| v.abs()).collect();
        abs.sort_by(f64::total_cmp);
        Self {
            count: n,
            mean,
            std_dev: var.sqrt(),
            rms: ms.sqrt(),
            p50_abs: percentile_sorted(&abs, 0.50),
            p95_abs: percentile_sorted(&abs, 0.95),
            p99_abs: percentile_sorted(&abs, 0.99),
            max_abs: abs.last().copied().unwrap_or(0.0),
        }
    }
}

/// The `q`-quantile (0..1) of sorted data, linear between order statistics
/// (the "type 7" definition of Hyndman & Fan, The American Statistician
/// 50(4), 1996; numpy's default).
pub fn percentile_sorted(sorted: &[f64], q: f64) -> f64 {
    let n = sorted.len();
    if n == 0 {
        return 0.0;
    }
    let pos = q.clamp(0.0, 1.0) * (n - 1) as f64;
    let lo = pos.floor() as usize;
    let hi = (lo + 1).min(n - 1);
    let f = pos - lo as f64;
    let a = sorted.get(lo).copied().unwrap_or(0.0);
    let b = sorted.get(hi).copied().unwrap_or(a);
    a + (b - a) * f
}

/// One histogram bin of the straight-pass cross-track error.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Bin {
    /// Lower edge, metres.
    pub from_m: f64,
    /// Upper edge, metres.
    pub to_m: f64,
    /// Samples in `[from, to)`.
    pub count: usize,
}

/// All figures of one run.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Metrics {
    /// Cross-track error on straight passes (past the entry skip), metres.
    pub straight: ErrorStats,
    /// Cross-track error on arcs and clothoids, metres.
    pub curved: ErrorStats,
    /// Cross-track error over every on-path sample, metres.
    pub overall: ErrorStats,
    /// Histogram of the straight-pass cross-track error.
    pub straight_histogram: Vec<Bin>,
    /// Heading error RMS over every on-path sample, degrees.
    pub heading_rms_deg: f64,
    /// Distance along the path until |cross-track| stays within the settle
    /// band for the hold distance, metres (`None`: never settled).
    pub settle_distance_m: Option<f64>,
    /// Total variation of the steering command, rad (1/m for a differential drive).
    pub steer_total_variation: f64,
    /// The same per 100 m driven.
    pub steer_variation_per_100m: f64,
    /// Time in each status, s, in [`SupervisorStatus::ALL`] order.
    pub status_time_s: [f64; 6],
    /// Share of the path length driven (may exceed 1 on a loop).
    pub completion: f64,
    /// Distance driven along the path, metres.
    pub distance_m: f64,
    /// Simulated time, s.
    pub sim_time_s: f64,
    /// Non-finite numbers seen in commands and trace.
    pub non_finite: usize,
}

impl Metrics {
    /// Time spent in `status`, s.
    pub fn time_in(&self, status: SupervisorStatus) -> f64 {
        self.status_time_s
            .get(status.index())
            .copied()
            .unwrap_or(0.0)
    }
}

/// Computes the figures of a run.
pub fn compute(scenario: &Scenario, run: &RunOutput) -> Metrics {
    let m = &scenario.spec.metrics;
    let on_path: Vec<&TraceRow> = run.trace.iter().filter(|r| r.on_path).collect();
    let straight: Vec<f64> = run
        .trace
        .iter()
        .filter(|r| r.straight_pass)
        .map(|r| r.cross_track_m)
        .collect();
    let curved: Vec<f64> = run
        .trace
        .iter()
        .filter(|r| r.curved)
        .map(|r| r.cross_track_m)
        .collect();
    let overall: Vec<f64> = on_path.iter().map(|r| r.cross_track_m).collect();
    let heading: Vec<f64> = on_path
        .iter()
        .map(|r| r.heading_error_rad.to_degrees())
        .collect();
    let distance = run.trace.last().map_or(0.0, |r| r.progress_m);
    let length = scenario.path.length();
    Metrics {
        straight: ErrorStats::of(&straight),
        curved: ErrorStats::of(&curved),
        overall: ErrorStats::of(&overall),
        straight_histogram: histogram(&straight),
        heading_rms_deg: ErrorStats::of(&heading).rms,
        settle_distance_m: settle_distance(&run.trace, m.settle_band_m, m.settle_hold_m),
        steer_total_variation: run.steer_total_variation,
        steer_variation_per_100m: if distance > 1.0 {
            run.steer_total_variation * 100.0 / distance
        } else {
            0.0
        },
        status_time_s: run.status_time_s,
        completion: if length > 0.0 { distance / length } else { 0.0 },
        distance_m: distance,
        sim_time_s: run.sim_time_s,
        non_finite: run.non_finite,
    }
}

/// Bins the errors 1 cm wide (wider when they spread over more than 40 bins).
fn histogram(samples: &[f64]) -> Vec<Bin> {
    let Some(max) = samples.iter().map(|v| v.abs()).reduce(f64::max) else {
        return Vec::new();
    };
    let mut width = 0.01;
    while max / width > 20.0 {
        width *= 2.0;
    }
    let n = (max / width).floor() as i64 + 1;
    let mut bins: Vec<Bin> = (-n..n)
        .map(|i| Bin {
            from_m: i as f64 * width,
            to_m: (i + 1) as f64 * width,
            count: 0,
        })
        .collect();
    for v in samples {
        let i = ((v / width).floor() as i64 + n).clamp(0, 2 * n - 1) as usize;
        if let Some(b) = bins.get_mut(i) {
            b.count += 1;
        }
    }
    bins
}

/// Distance driven along the path until the error enters the band and stays
/// in it for `hold` metres.
fn settle_distance(trace: &[TraceRow], band: f64, hold: f64) -> Option<f64> {
    let start = trace.first()?.progress_m;
    let mut inside_since: Option<f64> = None;
    for r in trace {
        if r.cross_track_m.abs() <= band {
            let s0 = *inside_since.get_or_insert(r.progress_m);
            if r.progress_m - s0 >= hold {
                return Some(s0 - start);
            }
        } else {
            inside_since = None;
        }
    }
    None
}

/// One pass/fail line.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Check {
    /// What is checked.
    pub name: String,
    /// Measured value (as text, with unit).
    pub measured: String,
    /// Limit (as text, with unit).
    pub limit: String,
    /// `true` when met.
    pub pass: bool,
    /// The measured number, when the check has one (for `result.json`).
    pub value: Option<f64>,
    /// The limit's number, when it has one.
    pub threshold: Option<f64>,
    /// Unit of both (`m`, `deg`, `s`, empty for a ratio or count).
    pub unit: String,
}

/// Checks the metrics and status log against the thresholds.
pub fn check(t: &ThresholdSpec, m: &Metrics, run: &RunOutput) -> Vec<Check> {
    let mut out = Vec::new();
    let mut at_most = |name: &str, v: f64, lim: Option<f64>, unit: &str| {
        if let Some(lim) = lim {
            out.push(Check {
                name: name.to_string(),
                measured: format!("{v:.4} {unit}"),
                limit: format!("<= {lim} {unit}"),
                pass: v <= lim,
                value: Some(v),
                threshold: Some(lim),
                unit: unit.into(),
            });
        }
    };
    at_most(
        "straight cross-track RMS",
        m.straight.rms,
        t.straight_rms_m,
        "m",
    );
    at_most(
        "straight |cross-track| p95",
        m.straight.p95_abs,
        t.straight_p95_m,
        "m",
    );
    at_most(
        "straight |cross-track| max",
        m.straight.max_abs,
        t.straight_max_m,
        "m",
    );
    at_most("curved cross-track RMS", m.curved.rms, t.curved_rms_m, "m");
    at_most(
        "overall |cross-track| max",
        m.overall.max_abs,
        t.overall_max_m,
        "m",
    );
    at_most(
        "heading error RMS",
        m.heading_rms_deg,
        t.heading_rms_deg,
        "deg",
    );
    at_most(
        "time lost",
        m.time_in(SupervisorStatus::Lost),
        t.max_lost_s,
        "s",
    );
    if let Some(lim) = t.settle_distance_m {
        out.push(Check {
            name: "settling distance".into(),
            measured: m
                .settle_distance_m
                .map_or("never".into(), |d| format!("{d:.2} m")),
            limit: format!("<= {lim} m"),
            pass: m.settle_distance_m.is_some_and(|d| d <= lim),
            value: m.settle_distance_m,
            threshold: Some(lim),
            unit: "m".into(),
        });
    }
    if let Some(lim) = t.min_completion {
        out.push(Check {
            name: "path completed".into(),
            measured: format!("{:.3}", m.completion),
            limit: format!(">= {lim}"),
            pass: m.completion >= lim,
            value: Some(m.completion),
            threshold: Some(lim),
            unit: String::new(),
        });
    }
    out.push(Check {
        name: "non-finite values".into(),
        measured: m.non_finite.to_string(),
        limit: "= 0".into(),
        pass: m.non_finite == 0,
        value: Some(m.non_finite as f64),
        threshold: Some(0.0),
        unit: String::new(),
    });
    for e in &t.expect_status {
        let seen = status_seen(run, &e.status, e.from_s, e.until_s);
        out.push(Check {
            name: format!("status {} seen", e.status),
            measured: if seen { "yes".into() } else { "no".into() },
            limit: format!("within [{}, {}] s", e.from_s, e.until_s),
            pass: seen,
            value: None,
            threshold: None,
            unit: "s".into(),
        });
    }
    for s in &t.forbid_status {
        let seen = status_seen(run, s, 0.0, f64::INFINITY);
        out.push(Check {
            name: format!("status {s} never seen"),
            measured: if seen {
                "seen".into()
            } else {
                "not seen".into()
            },
            limit: "never".into(),
            pass: !seen,
            value: None,
            threshold: None,
            unit: String::new(),
        });
    }
    out
}

/// `true` if `status` held at any time within `[from, until]`.
pub fn status_seen(run: &RunOutput, status: &str, from: f64, until: f64) -> bool {
    run.statuses.iter().enumerate().any(|(i, c)| {
        let end = run.statuses.get(i + 1).map_or(f64::INFINITY, |n| n.t_s);
        c.status.name() == status && c.t_s <= until && end > from
    })
}

/// The status log as one line: `following@0.00 degraded@30.10 ...`.
pub fn status_log(run: &RunOutput) -> String {
    let mut s = String::new();
    for c in &run.statuses {
        let _ = write!(s, "{}@{:.2} ", c.status, c.t_s);
    }
    s.trim_end().to_string()
}
