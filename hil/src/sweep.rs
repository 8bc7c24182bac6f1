//! Monte-Carlo sweeps: every combination of parameter values times a range
//! of seeds, run on all cores with rayon, each metric reported as a
//! distribution (min, 5th percentile, median, mean, 95th percentile, max).

use std::fmt::Write as _;
use std::ops::Range;
use std::path::Path as FsPath;

use rayon::prelude::*;

use crate::closed_loop::RunOptions;
use crate::metrics::{percentile_sorted, Metrics};
use crate::scenario::{overrides, source_text, Scenario};
use crate::{firmware::SupervisorStatus, runner};

/// One swept parameter: a dotted scenario key and its values.
#[derive(Debug, Clone, PartialEq)]
pub struct Param {
    /// Dotted key, e.g. `gnss.noise_m`.
    pub key: String,
    /// Values to try.
    pub values: Vec<toml::Value>,
}

/// Parses `KEY=LO:HI:N` (N evenly spaced floats) or `KEY=A,B,C`.
///
/// # Errors
/// A message for a malformed range.
pub fn parse_param(s: &str) -> anyhow::Result<Param> {
    let (key, spec) = s
        .split_once('=')
        .ok_or_else(|| anyhow::anyhow!("--param `{s}`: expected KEY=LO:HI:N or KEY=A,B,C"))?;
    let parts: Vec<&str> = spec.split(':').collect();
    let values = if parts.len() == 3 {
        let lo: f64 = parts[0].trim().parse()?;
        let hi: f64 = parts[1].trim().parse()?;
        let n: usize = parts[2].trim().parse()?;
        anyhow::ensure!(n >= 1, "--param `{s}`: N must be >= 1");
        (0..n)
            .map(|i| {
                let t = if n == 1 {
                    0.0
                } else {
                    i as f64 / (n - 1) as f64
                };
                toml::Value::Float(lo + (hi - lo) * t)
            })
            .collect()
    } else {
        spec.split(',')
            .map(|v| overrides::literal(v.trim()))
            .collect()
    };
    Ok(Param {
        key: key.trim().to_string(),
        values,
    })
}

/// What to sweep.
#[derive(Debug, Clone)]
pub struct Plan {
    /// Scenario file or built-in name.
    pub source: String,
    /// Fixed overrides applied first.
    pub base: Vec<(String, toml::Value)>,
    /// Swept parameters (every combination).
    pub params: Vec<Param>,
    /// Seeds for each combination.
    pub seeds: Range<u64>,
    /// Override of the duration, s.
    pub duration_s: Option<f64>,
}

/// One run of a sweep: the parameter values and seed.
#[derive(Debug, Clone)]
pub struct Job {
    /// Values of [`Plan::params`], in order.
    pub values: Vec<toml::Value>,
    /// Seed.
    pub seed: u64,
    /// The checked scenario.
    pub scenario: Scenario,
}

/// The figures of one run.
#[derive(Debug, Clone)]
pub struct RunResult {
    /// Parameter values.
    pub values: Vec<toml::Value>,
    /// Seed.
    pub seed: u64,
    /// Figures.
    pub metrics: Metrics,
    /// Every check passed.
    pub pass: bool,
}

impl Plan {
    /// Every job of the plan, each scenario checked.
    ///
    /// # Errors
    /// Unknown source or a combination that does not check (the error names
    /// the field and the values).
    pub fn jobs(&self) -> anyhow::Result<Vec<Job>> {
        let (text, source) = source_text(&self.source)?;
        let mut base: toml::Value =
            toml::from_str(&text).map_err(|e| anyhow::anyhow!("{source}: {}", e.message()))?;
        for (k, v) in &self.base {
            overrides::set(&mut base, k, v.clone()).map_err(anyhow::Error::msg)?;
        }
        let mut combos: Vec<Vec<toml::Value>> = vec![Vec::new()];
        for p in &self.params {
            combos = combos
                .into_iter()
                .flat_map(|c| {
                    p.values.iter().map(move |v| {
                        let mut c = c.clone();
                        c.push(v.clone());
                        c
                    })
                })
                .collect();
        }
        let mut jobs = Vec::new();
        for combo in combos {
            let mut value = base.clone();
            for (p, v) in self.params.iter().zip(&combo) {
                overrides::set(&mut value, &p.key, v.clone()).map_err(anyhow::Error::msg)?;
            }
            // Check each combination once; seeds only change the seed.
            let checked = Scenario::from_value(value.clone(), &source)
                .map_err(|e| anyhow::anyhow!("{e} (with {})", describe(&self.params, &combo)))?;
            for seed in self.seeds.clone() {
                let mut s = checked.clone();
                s.spec.seed = seed;
                jobs.push(Job {
                    values: combo.clone(),
                    seed,
                    scenario: s,
                });
            }
        }
        Ok(jobs)
    }
}

fn describe(params: &[Param], values: &[toml::Value]) -> String {
    params
        .iter()
        .zip(values)
        .map(|(p, v)| format!("{}={v}", p.key))
        .collect::<Vec<_>>()
        .join(" ")
}

/// Runs every job on all cores; `tick` is called after each.
///
/// # Errors
/// If a controller cannot be built.
pub fn run(plan: &Plan, jobs: &[Job], tick: &(dyn Fn() + Sync)) -> anyhow::Result<Vec<RunResult>> {
    let opts = RunOptions {
        duration_s: plan.duration_s,
    };
    jobs.par_iter()
        .map(|j| {
            let out = runner::run(&j.scenario, opts, None)?;
            tick();
            Ok(RunResult {
                values: j.values.clone(),
                seed: j.seed,
                pass: out.pass(),
                metrics: out.metrics,
            })
        })
        .collect()
}

/// A reported metric: name, unit, and how to read it from a run's figures.
pub type Column = (&'static str, &'static str, fn(&Metrics) -> f64);

/// The metrics a sweep reports.
pub fn columns() -> Vec<Column> {
    vec![
        ("straight RMS", "m", |m| m.straight.rms),
        ("straight p95 abs", "m", |m| m.straight.p95_abs),
        ("straight max abs", "m", |m| m.straight.max_abs),
        ("curved RMS", "m", |m| m.curved.rms),
        ("overall max abs", "m", |m| m.overall.max_abs),
        ("heading RMS", "deg", |m| m.heading_rms_deg),
        ("settling distance", "m", |m| {
            m.settle_distance_m.unwrap_or(f64::NAN)
        }),
        ("steering per 100 m", "", |m| m.steer_variation_per_100m),
        ("completion", "", |m| m.completion),
        ("time degraded", "s", |m| {
            m.time_in(SupervisorStatus::Degraded)
        }),
        ("time lost", "s", |m| m.time_in(SupervisorStatus::Lost)),
    ]
}

/// Distribution of each metric, per parameter combination.
pub fn summary(plan: &Plan, results: &[RunResult]) -> String {
    let mut s = String::new();
    let mut groups: Vec<(Vec<toml::Value>, Vec<&RunResult>)> = Vec::new();
    for r in results {
        match groups.iter_mut().find(|(v, _)| *v == r.values) {
            Some((_, g)) => g.push(r),
            None => groups.push((r.values.clone(), vec![r])),
        }
    }
    for (values, group) in groups {
        let pass = group.iter().filter(|r| r.pass).count();
        let _ = writeln!(
            s,
            "\n{} seeds{}: {} of {} pass",
            group.len(),
            if plan.params.is_empty() {
                String::new()
            } else {
                format!(" with {}", describe(&plan.params, &values))
            },
            pass,
            group.len()
        );
        let _ = writeln!(
            s,
            "{:<24} {:>10} {:>10} {:>10} {:>10} {:>10} {:>10}",
            "metric", "min", "p5", "median", "mean", "p95", "max"
        );
        for (name, unit, f) in columns() {
            let mut v: Vec<f64> = group
                .iter()
                .map(|r| f(&r.metrics))
                .filter(|x| x.is_finite())
                .collect();
            v.sort_by(f64::total_cmp);
            let label = if unit.is_empty() {
                name.to_string()
            } else {
                format!("{name} [{unit}]")
            };
            if v.is_empty() {
                let _ = writeln!(s, "{label:<24} {:>10}", "n/a");
                continue;
            }
            let mean = v.iter().sum::<f64>() / v.len() as f64;
            let _ = writeln!(
                s,
                "{label:<24} {:>10.4} {:>10.4} {:>10.4} {:>10.4} {:>10.4} {:>10.4}",
                v.first().copied().unwrap_or(f64::NAN),
                percentile_sorted(&v, 0.05),
                percentile_sorted(&v, 0.5),
                mean,
                percentile_sorted(&v, 0.95),
                v.last().copied().unwrap_or(f64::NAN)
            );
        }
    }
    s
}

/// Writes one row per run.
///
/// # Errors
/// I/O errors.
pub fn write_csv(path: &FsPath, plan: &Plan, results: &[RunResult]) -> anyhow::Result<()> {
    let mut w = csv::Writer::from_path(path)?;
    let mut header: Vec<String> = plan.params.iter().map(|p| p.key.clone()).collect();
    header.push("seed".into());
    for (name, unit, _) in columns() {
        header.push(if unit.is_empty() {
            name.replace(' ', "_")
        } else {
            format!("{}_{unit}", name.replace(' ', "_"))
        });
    }
    header.push("pass".into());
    w.write_record(&header)?;
    for r in results {
        let mut row: Vec<String> = r.values.iter().map(|v| v.to_string()).collect();
        row.push(r.seed.to_string());
        for (_, _, f) in columns() {
            let x = f(&r.metrics);
            row.push(if x.is_finite() {
                format!("{x}")
            } else {
                String::new()
            });
        }
        row.push(r.pass.to_string());
        w.write_record(&row)?;
    }
    w.flush()?;
    Ok(())
}
