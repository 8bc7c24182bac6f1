//! Sweeps across machines: the results of one shard (`sweep --shard K/N`)
//! stored as JSON with everything needed to check that shards belong to
//! the same sweep, and `merge`, which puts the shards back in the order of
//! the whole sweep, so that the merged summary, plots and pass rate are
//! those of one unsharded run.
//!
//! A shard file holds the scenario text itself, so `merge` can run on a
//! machine that does not have the scenario file.

use std::path::{Path as FsPath, PathBuf};

use anyhow::{bail, Context as _};

use crate::report::tool_version;
use crate::scenario::{overrides, source_text, Scenario};
use crate::sweep::{summary, Param, Plan, RunResult, Shard};

/// The results of a sweep (or of one shard of it) with its plan.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Stored {
    /// The tool that ran it.
    pub tool: String,
    /// Scenario file or built-in name as given.
    pub source: String,
    /// Name of the source in messages (`builtin:field`, a path).
    pub source_name: String,
    /// The scenario's TOML text.
    pub scenario_text: String,
    /// `--set` overrides, in order.
    pub base: Vec<(String, toml::Value)>,
    /// Swept parameters.
    pub params: Vec<Param>,
    /// First seed.
    pub first_seed: u64,
    /// One past the last seed.
    pub end_seed: u64,
    /// Duration override, s.
    pub duration_s: Option<f64>,
    /// Which slice these results are.
    pub shard: Shard,
    /// Number of runs in the whole sweep.
    pub total_runs: u64,
    /// The results, in sweep order.
    pub results: Vec<RunResult>,
}

impl Stored {
    /// The results of `plan` (or of `shard` of it).
    ///
    /// # Errors
    /// If the scenario source cannot be read.
    pub fn of(plan: &Plan, shard: Shard, results: Vec<RunResult>) -> anyhow::Result<Self> {
        let (text, name) = source_text(&plan.source)?;
        Ok(Self {
            tool: tool_version(),
            source: plan.source.clone(),
            source_name: name,
            scenario_text: text,
            base: plan.base.clone(),
            params: plan.params.clone(),
            first_seed: plan.seeds.start,
            end_seed: plan.seeds.end,
            duration_s: plan.duration_s,
            shard,
            total_runs: plan.total_runs(),
            results,
        })
    }

    /// The plan the results came from.
    pub fn plan(&self) -> Plan {
        Plan {
            source: self.source.clone(),
            base: self.base.clone(),
            params: self.params.clone(),
            seeds: self.first_seed..self.end_seed,
            duration_s: self.duration_s,
        }
    }

    /// The scenario with the `--set` overrides, from the stored text (for
    /// its thresholds and name).
    ///
    /// # Errors
    /// If the stored text no longer checks.
    pub fn scenario(&self) -> anyhow::Result<Scenario> {
        let mut v: toml::Value = toml::from_str(&self.scenario_text)
            .map_err(|e| anyhow::anyhow!("{}: {}", self.source_name, e.message()))?;
        for (k, val) in &self.base {
            overrides::apply(&mut v, k, val.clone()).map_err(anyhow::Error::msg)?;
        }
        Ok(Scenario::from_value(v, &self.source_name)?)
    }

    /// The summary printed after a sweep: each metric's distribution per
    /// parameter combination, then the pass rate.
    pub fn summary(&self) -> String {
        let mut s = summary(&self.plan(), &self.results);
        let pass = self.results.iter().filter(|r| r.pass).count();
        let n = self.results.len();
        s.push_str(&format!(
            "\npass rate: {pass} of {n} runs ({:.1} %)\n",
            if n == 0 {
                0.0
            } else {
                100.0 * pass as f64 / n as f64
            }
        ));
        s
    }

    /// `true` when `other` is a shard of the same sweep.
    fn same_sweep(&self, other: &Stored) -> bool {
        self.source_name == other.source_name
            && self.scenario_text == other.scenario_text
            && self.base == other.base
            && self.params == other.params
            && self.first_seed == other.first_seed
            && self.end_seed == other.end_seed
            && self.duration_s == other.duration_s
            && self.total_runs == other.total_runs
            && self.shard.count == other.shard.count
    }
}

/// The file name of shard `K` of `N`.
pub fn shard_file_name(shard: Shard) -> String {
    format!("shard-{}-of-{}.json", shard.index, shard.count)
}

/// Writes one shard's results into `dir`; returns the file.
///
/// # Errors
/// I/O errors, naming the file.
pub fn write_shard(
    dir: &FsPath,
    plan: &Plan,
    shard: Shard,
    results: &[RunResult],
) -> anyhow::Result<PathBuf> {
    let stored = Stored::of(plan, shard, results.to_vec())?;
    let path = dir.join(shard_file_name(shard));
    let text = serde_json::to_string(&stored)?;
    std::fs::write(&path, text).with_context(|| format!("writing {}", path.display()))?;
    Ok(path)
}

/// Reads the shard files of one sweep and puts them together.
///
/// # Errors
/// An unreadable file, shards of different sweeps, a shard missing or
/// given twice (each named), or results that do not add up.
pub fn merge(files: &[PathBuf]) -> anyhow::Result<Stored> {
    let mut shards: Vec<Stored> = Vec::with_capacity(files.len());
    for f in files {
        let text =
            std::fs::read_to_string(f).with_context(|| format!("reading {}", f.display()))?;
        let s: Stored = serde_json::from_str(&text)
            .with_context(|| format!("{}: not a shard file of `sweep --shard`", f.display()))?;
        if let Some(first) = shards.first() {
            if !first.same_sweep(&s) {
                bail!(
                    "{} is a shard of another sweep than {} (scenario, --set, --param, seeds, duration and N must all match)",
                    f.display(),
                    files.first().map_or(String::new(), |p| p.display().to_string())
                );
            }
        }
        shards.push(s);
    }
    let Some(first) = shards.first() else {
        bail!("merge: no shard files given");
    };
    let n = first.shard.count;
    shards.sort_by_key(|s| s.shard.index);
    for k in 1..=n {
        let count = shards.iter().filter(|s| s.shard.index == k).count();
        if count == 0 {
            bail!(
                "merge: shard {k}/{n} is missing ({} expected)",
                shard_file_name(Shard { index: k, count: n })
            );
        }
        if count > 1 {
            bail!("merge: shard {k}/{n} is given {count} times");
        }
    }
    let mut merged = shards.remove(0);
    for s in shards {
        merged.results.extend(s.results);
    }
    if merged.results.len() as u64 != merged.total_runs {
        bail!(
            "merge: {} runs in the shards, but the sweep has {}",
            merged.results.len(),
            merged.total_runs
        );
    }
    merged.shard = Shard::WHOLE;
    merged.tool = tool_version();
    Ok(merged)
}
