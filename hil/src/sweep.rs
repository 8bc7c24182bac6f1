//! Monte-Carlo sweeps: every combination of parameter values times a range
//! of seeds, run on all cores with rayon, each metric reported as a
//! distribution (min, 5th percentile, median, mean, 95th percentile, max).

use std::fmt::Write as _;
use std::ops::Range;
use std::path::Path as FsPath;
use std::sync::Arc;

use rayon::prelude::*;

pub use crate::report::sweep_report::write_report;
pub use crate::shards::{merge, write_shard, Stored};

use crate::closed_loop::RunOptions;
use crate::metrics::{percentile_sorted, Metrics};
use crate::scenario::{overrides, source_text, Scenario};
use crate::{firmware::SupervisorStatus, runner};

/// One swept parameter: a dotted scenario key and its values.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Param {
    /// Dotted key, e.g. `gnss.noise_m`.
    pub key: String,
    /// Values to try.
    pub values: Vec<toml::Value>,
}

/// Most values one `--param` may take.
pub const MAX_PARAM_VALUES: usize = 10_000;
/// Most parameter combinations of a sweep.
pub const MAX_COMBINATIONS: usize = 100_000;
/// Most runs one process does (after `--shard`): their results stay in
/// memory until the summary is written. Split a larger sweep into shards.
pub const MAX_RUNS_PER_PROCESS: u64 = 200_000;

const PARAM_HINT: &str = "expected KEY=LO:HI:N (N evenly spaced values from LO to HI, e.g. gnss.noise_m=0.01:0.05:5) or KEY=A,B,C (a list, e.g. controller.precision=f32,f64)";

/// Parses `KEY=LO:HI:N` (N evenly spaced floats) or `KEY=A,B,C`.
///
/// # Errors
/// A message with the expected format for a malformed range, and for
/// more than [`MAX_PARAM_VALUES`] values.
pub fn parse_param(s: &str) -> anyhow::Result<Param> {
    let bad = |why: String| anyhow::anyhow!("--param `{s}`: {why}; {PARAM_HINT}");
    let (key, spec) = s.split_once('=').ok_or_else(|| bad("no `=`".into()))?;
    let key = key.trim();
    if key.is_empty() {
        return Err(bad("empty KEY".into()));
    }
    if spec.trim().is_empty() {
        return Err(bad("no values".into()));
    }
    let parts: Vec<&str> = spec.split(':').collect();
    let values = if parts.len() > 1 {
        let [lo, hi, n] = parts.as_slice() else {
            return Err(bad(format!(
                "a range has three parts LO:HI:N, got {}",
                parts.len()
            )));
        };
        let num = |what: &str, v: &str| -> anyhow::Result<f64> {
            match v.trim().parse::<f64>() {
                Ok(x) if x.is_finite() => Ok(x),
                _ => Err(bad(format!("{what} `{v}` is not a finite number"))),
            }
        };
        let lo = num("LO", lo)?;
        let hi = num("HI", hi)?;
        let n: usize = n
            .trim()
            .parse()
            .map_err(|_| bad(format!("N `{n}` is not a whole number")))?;
        if !(1..=MAX_PARAM_VALUES).contains(&n) {
            return Err(bad(format!(
                "N must lie in [1, {MAX_PARAM_VALUES}], got {n}"
            )));
        }
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
        let items: Vec<&str> = spec.split(',').collect();
        if items.len() > MAX_PARAM_VALUES {
            return Err(bad(format!(
                "at most {MAX_PARAM_VALUES} values, got {}",
                items.len()
            )));
        }
        if items.iter().any(|v| v.trim().is_empty()) {
            return Err(bad("an empty value in the list".into()));
        }
        items.iter().map(|v| overrides::literal(v.trim())).collect()
    };
    Ok(Param {
        key: key.to_string(),
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
    pub values: Arc<Vec<toml::Value>>,
    /// Seed.
    pub seed: u64,
    /// The checked scenario of the combination (its seed is set at run time).
    pub scenario: Arc<Scenario>,
}

/// The figures of one run.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct RunResult {
    /// Parameter values.
    pub values: Vec<toml::Value>,
    /// Seed.
    pub seed: u64,
    /// Figures (without the histogram, to keep a large sweep small).
    pub metrics: Metrics,
    /// Every check passed.
    pub pass: bool,
}

/// The `K`-th of `N` disjoint slices of a sweep (`K` in `1..=N`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct Shard {
    /// Which slice, from 1.
    pub index: u64,
    /// How many slices.
    pub count: u64,
}

impl Shard {
    /// The whole sweep.
    pub const WHOLE: Shard = Shard { index: 1, count: 1 };

    /// Parses `K/N`.
    ///
    /// # Errors
    /// A message naming `--shard` unless `1 <= K <= N <= 100000`.
    pub fn parse(s: &str) -> Result<Self, String> {
        let hint = "expected K/N with 1 <= K <= N <= 100000, e.g. --shard 3/8";
        let (k, n) = s.split_once('/').ok_or_else(|| format!("`{s}`: {hint}"))?;
        let k: u64 = k.trim().parse().map_err(|_| format!("`{s}`: {hint}"))?;
        let n: u64 = n.trim().parse().map_err(|_| format!("`{s}`: {hint}"))?;
        if k >= 1 && k <= n && n <= 100_000 {
            Ok(Self { index: k, count: n })
        } else {
            Err(format!("`{s}`: {hint}"))
        }
    }

    /// The half-open range of flat run indices of this slice of `total`
    /// runs: contiguous, so that the shards in order are the whole sweep.
    pub fn range(&self, total: u64) -> Range<u64> {
        let at = |k: u64| ((u128::from(total) * u128::from(k)) / u128::from(self.count)) as u64;
        at(self.index - 1)..at(self.index)
    }
}

impl Plan {
    /// Number of runs: combinations times seeds.
    pub fn total_runs(&self) -> u64 {
        let combos = self
            .params
            .iter()
            .fold(1u64, |a, p| a.saturating_mul(p.values.len() as u64));
        combos.saturating_mul(self.seeds.end.saturating_sub(self.seeds.start))
    }

    /// The scenario value with the base overrides applied, and its source name.
    ///
    /// # Errors
    /// Unknown source, bad TOML or a bad override.
    pub fn base_value(&self) -> anyhow::Result<(toml::Value, String)> {
        let (text, source) = source_text(&self.source)?;
        let mut base: toml::Value =
            toml::from_str(&text).map_err(|e| anyhow::anyhow!("{source}: {}", e.message()))?;
        for (k, v) in &self.base {
            overrides::apply(&mut base, k, v.clone()).map_err(|e| anyhow::anyhow!("--set {e}"))?;
        }
        Ok((base, source))
    }

    /// Every job of the plan, each combination checked.
    ///
    /// # Errors
    /// As [`Plan::shard_jobs`].
    pub fn jobs(&self) -> anyhow::Result<Vec<Job>> {
        self.shard_jobs(Shard::WHOLE)
    }

    /// The jobs of one shard, in the order of the whole sweep (combination
    /// by combination, seeds in order within each).
    ///
    /// # Errors
    /// Unknown source, too many combinations or runs (the message names
    /// the option), or a combination that does not check (the error names
    /// the field and the values).
    pub fn shard_jobs(&self, shard: Shard) -> anyhow::Result<Vec<Job>> {
        let combos = self
            .params
            .iter()
            .fold(1usize, |a, p| a.saturating_mul(p.values.len()));
        anyhow::ensure!(
            combos <= MAX_COMBINATIONS,
            "--param: {combos} combinations, more than {MAX_COMBINATIONS}; sweep fewer values"
        );
        anyhow::ensure!(!self.seeds.is_empty(), "--seeds: must be at least 1");
        let per = self.seeds.end - self.seeds.start;
        let total = self.total_runs();
        let range = shard.range(total);
        let mine = range.end - range.start;
        anyhow::ensure!(
            mine <= MAX_RUNS_PER_PROCESS,
            "--seeds/--param: {mine} runs in one process, more than {MAX_RUNS_PER_PROCESS}; split the sweep with --shard K/N (at least {} shards)",
            total.div_ceil(MAX_RUNS_PER_PROCESS)
        );
        let (base, source) = self.base_value()?;
        let mut jobs = Vec::with_capacity(mine as usize);
        let mut checked: Option<(u64, Arc<Vec<toml::Value>>, Arc<Scenario>)> = None;
        for i in range {
            let c = i / per;
            if checked.as_ref().is_none_or(|(k, _, _)| *k != c) {
                let combo = Arc::new(self.combination(c as usize));
                let mut value = base.clone();
                for (p, v) in self.params.iter().zip(combo.iter()) {
                    overrides::apply(&mut value, &p.key, v.clone())
                        .map_err(|e| anyhow::anyhow!("--param {e}"))?;
                }
                let s = Scenario::from_value(value, &source).map_err(|e| {
                    anyhow::anyhow!("{e} (with {})", describe(&self.params, &combo))
                })?;
                checked = Some((c, combo, Arc::new(s)));
            }
            if let Some((_, values, scenario)) = &checked {
                jobs.push(Job {
                    values: values.clone(),
                    seed: self.seeds.start + i % per,
                    scenario: scenario.clone(),
                });
            }
        }
        Ok(jobs)
    }

    /// The `c`-th combination of parameter values (the last parameter
    /// varies fastest).
    fn combination(&self, mut c: usize) -> Vec<toml::Value> {
        let mut out = vec![toml::Value::Boolean(false); self.params.len()];
        for (slot, p) in out.iter_mut().zip(&self.params).rev() {
            let n = p.values.len().max(1);
            if let Some(v) = p.values.get(c % n) {
                *slot = v.clone();
            }
            c /= n;
        }
        out
    }
}

/// `key=value` for each parameter.
pub fn describe(params: &[Param], values: &[toml::Value]) -> String {
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
        ..RunOptions::default()
    };
    jobs.par_iter()
        .map(|j| {
            let mut s = (*j.scenario).clone();
            s.spec.seed = j.seed;
            let out = runner::run(&s, opts, None)?;
            tick();
            let pass = out.pass();
            let mut metrics = out.metrics;
            metrics.straight_histogram = Vec::new();
            Ok(RunResult {
                values: (*j.values).clone(),
                seed: j.seed,
                pass,
                metrics,
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
