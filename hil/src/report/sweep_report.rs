//! The report of a sweep (whole, or merged from shards): `summary.txt`,
//! `result.json` (every run's figures and pass/fail, the plan, the pass
//! rate, the tool version) and one plot per metric against the swept
//! parameter (or the seed, when nothing is swept) with its pass limit.

use std::path::{Path as FsPath, PathBuf};

use anyhow::Context as _;

use super::svg::{palette, HLine, Plot, Series, Style};
use crate::scenario::ThresholdSpec;
use crate::shards::Stored;
use crate::sweep::{columns, Column};

/// The pass limit of a sweep column, and whether it is a lower bound.
pub fn limit_of(name: &str, t: &ThresholdSpec) -> Option<(f64, bool)> {
    let upper = |v: Option<f64>| v.map(|l| (l, false));
    match name {
        "straight RMS" => upper(t.straight_rms_m),
        "straight p95 abs" => upper(t.straight_p95_m),
        "straight max abs" => upper(t.straight_max_m),
        "curved RMS" => upper(t.curved_rms_m),
        "overall max abs" => upper(t.overall_max_m),
        "heading RMS" => upper(t.heading_rms_deg),
        "settling distance" => upper(t.settle_distance_m),
        "completion" => t.min_completion.map(|l| (l, true)),
        "time lost" => upper(t.max_lost_s),
        _ => None,
    }
}

/// File name of a column's plot.
pub fn plot_file(name: &str) -> String {
    format!("sweep_{}.svg", name.replace(' ', "_"))
}

/// The plot of one metric of the sweep: each run a dot against the first
/// numeric swept parameter (else against the seed), the median of each
/// value as a line, and the pass limit.
pub fn metric_plot(stored: &Stored, col: &Column, t: &ThresholdSpec) -> Plot {
    let (name, unit, f) = *col;
    let numeric = stored.params.iter().position(|p| {
        p.values
            .iter()
            .all(|v| v.as_float().is_some() || v.as_integer().is_some())
    });
    let x_of = |r: &crate::sweep::RunResult| -> f64 {
        match numeric {
            Some(i) => r
                .values
                .get(i)
                .and_then(|v| v.as_float().or_else(|| v.as_integer().map(|n| n as f64)))
                .unwrap_or(f64::NAN),
            None => r.seed as f64,
        }
    };
    let x_label = match numeric {
        Some(i) => stored
            .params
            .get(i)
            .map_or("seed".into(), |p| p.key.clone()),
        None => "seed".to_string(),
    };
    let pts: Vec<(f64, f64)> = stored
        .results
        .iter()
        .map(|r| (x_of(r), f(&r.metrics)))
        .collect();
    let y_label = if unit.is_empty() {
        name.to_string()
    } else {
        format!("{name} [{unit}]")
    };
    let mut p = Plot::new(
        &format!(
            "sweep of {}: {name}, {} runs",
            stored.source,
            stored.results.len()
        ),
        &x_label,
        &y_label,
        (900.0, 340.0),
    );
    let dots = Series::line("one run", palette::TRACK, thin(&pts, 20_000)).styled(Style::Dots(2.0));
    p.series.push(dots);
    if numeric.is_some() {
        let mut xs: Vec<f64> = pts.iter().map(|q| q.0).filter(|x| x.is_finite()).collect();
        xs.sort_by(f64::total_cmp);
        xs.dedup();
        let median: Vec<(f64, f64)> = xs
            .iter()
            .map(|&x| {
                let mut v: Vec<f64> = pts
                    .iter()
                    .filter(|q| q.0 == x && q.1.is_finite())
                    .map(|q| q.1)
                    .collect();
                v.sort_by(f64::total_cmp);
                (x, crate::metrics::percentile_sorted(&v, 0.5))
            })
            .collect();
        p.series
            .push(Series::line("median", palette::PATH, median).stroke(2.0, ""));
    }
    if let Some((l, lower)) = limit_of(name, t) {
        let what = if lower {
            "pass limit (at least)"
        } else {
            "pass limit (at most)"
        };
        p.h_lines
            .push(HLine::new(l, palette::LIMIT, &format!("{what} {l} {unit}")));
    }
    p
}

fn thin<T: Copy>(v: &[T], max: usize) -> Vec<T> {
    let k = v.len().div_ceil(max.max(1)).max(1);
    v.iter().step_by(k).copied().collect()
}

/// The machine-readable result of a sweep.
pub fn result_json(stored: &Stored, t: &ThresholdSpec) -> serde_json::Value {
    let pass = stored.results.iter().filter(|r| r.pass).count();
    let limits: serde_json::Map<String, serde_json::Value> = columns()
        .iter()
        .filter_map(|(name, unit, _)| {
            limit_of(name, t).map(|(l, lower)| {
                (
                    (*name).to_string(),
                    serde_json::json!({ "limit": l, "unit": unit, "at_least": lower }),
                )
            })
        })
        .collect();
    serde_json::json!({
        "tool": stored.tool,
        "scenario": stored.source_name,
        "set": stored.base,
        "params": stored.params,
        "first_seed": stored.first_seed,
        "end_seed": stored.end_seed,
        "duration_s": stored.duration_s,
        "runs": stored.results.len(),
        "passed": pass,
        "pass": pass == stored.results.len(),
        "limits": limits,
        "results": stored.results,
    })
}

/// Writes the sweep report into `dir`; returns it.
///
/// # Errors
/// I/O errors naming the file, or a stored scenario that no longer checks.
pub fn write_report(dir: &FsPath, stored: &Stored) -> anyhow::Result<PathBuf> {
    std::fs::create_dir_all(dir).with_context(|| format!("creating {}", dir.display()))?;
    let scenario = stored.scenario()?;
    let t = &scenario.spec.thresholds;
    let put = |name: &str, text: String| {
        let p = dir.join(name);
        std::fs::write(&p, text).with_context(|| format!("writing {}", p.display()))
    };
    put("summary.txt", stored.summary())?;
    put(
        "result.json",
        serde_json::to_string_pretty(&result_json(stored, t))? + "\n",
    )?;
    for col in columns() {
        put(&plot_file(col.0), metric_plot(stored, &col, t).render())?;
    }
    Ok(dir.to_path_buf())
}
