//! The command line: `run`, `list`, `check`, `sweep`, `bench`, `build-path`.

use std::path::PathBuf;
use std::process::ExitCode;
use std::time::Instant;

use clap::{Args, Parser, Subcommand};
use indicatif::{ProgressBar, ProgressStyle};

use crate::closed_loop::RunOptions;
use crate::scenario::{self, builtin::BUILTINS, overrides};
use crate::{report, runner, sweep};

/// Host-side harness for kappaline: runs the controller in a simulated
/// closed loop and measures it. Not a certified safety function: keep an
/// independent emergency stop on every machine.
#[derive(Debug, Parser)]
#[command(name = "kappaline-hil", version, about)]
struct Cli {
    #[command(subcommand)]
    verb: Option<Verb>,
}

#[derive(Debug, Subcommand)]
enum Verb {
    /// Run one scenario (default: the built-in field), print the metrics,
    /// write the report; exit 1 if a threshold is missed.
    Run(RunArgs),
    /// List the built-in scenarios.
    List,
    /// Check a scenario file without running it.
    Check {
        /// Scenario file or built-in name.
        scenario: String,
    },
    /// Monte-Carlo sweep over seeds and parameter ranges, on all cores.
    Sweep(SweepArgs),
    /// Measure simulated seconds per wall-clock second.
    Bench(BenchArgs),
    /// Build a path from waypoints (CSV or GeoJSON) into a firmware source
    /// file and an SVG preview; `build-path --help` lists its options.
    #[command(disable_help_flag = true)]
    BuildPath {
        /// Arguments of the path-building command.
        #[arg(trailing_var_arg = true, allow_hyphen_values = true)]
        args: Vec<String>,
    },
}

#[derive(Debug, Args)]
struct Common {
    /// Override a scenario value, e.g. `--set gnss.noise_m=0.05` (repeatable).
    #[arg(long = "set", value_name = "KEY=VALUE")]
    set: Vec<String>,
    /// Seed of the random streams (default: the scenario's).
    #[arg(long)]
    seed: Option<u64>,
    /// Simulated duration, s (default: the scenario's).
    #[arg(long)]
    duration: Option<f64>,
}

#[derive(Debug, Args)]
struct RunArgs {
    /// Scenario file (TOML) or built-in name.
    #[arg(default_value = "field")]
    scenario: String,
    #[command(flatten)]
    common: Common,
    /// Directory for the report (one sub-directory per scenario).
    #[arg(long, default_value = "hil/out")]
    out: PathBuf,
    /// Do not write the report.
    #[arg(long)]
    no_report: bool,
    /// No progress bar.
    #[arg(long, short)]
    quiet: bool,
}

#[derive(Debug, Args)]
struct SweepArgs {
    /// Scenario file (TOML) or built-in name.
    #[arg(default_value = "field")]
    scenario: String,
    #[command(flatten)]
    common: Common,
    /// Number of seeds per parameter combination.
    #[arg(long, default_value_t = 100)]
    seeds: u64,
    /// First seed.
    #[arg(long, default_value_t = 1)]
    first_seed: u64,
    /// A parameter range `KEY=LO:HI:N` (N values from LO to HI) or a list
    /// `KEY=A,B,C` (repeatable; the sweep runs every combination).
    #[arg(long = "param", value_name = "KEY=RANGE")]
    params: Vec<String>,
    /// Write every run's figures to this CSV file.
    #[arg(long)]
    csv: Option<PathBuf>,
    /// No progress bar.
    #[arg(long, short)]
    quiet: bool,
}

#[derive(Debug, Args)]
struct BenchArgs {
    /// Scenario file (TOML) or built-in name.
    #[arg(default_value = "field")]
    scenario: String,
    /// Runs on all cores for the parallel figure.
    #[arg(long, default_value_t = 8)]
    runs: u64,
}

/// Runs the command line; the exit code is 0 on success and pass, 1 when a
/// threshold is missed, 2 on a usage or input error.
pub fn main() -> ExitCode {
    let cli = Cli::parse();
    match dispatch(cli.verb.unwrap_or(Verb::Run(RunArgs {
        scenario: "field".into(),
        common: Common {
            set: Vec::new(),
            seed: None,
            duration: None,
        },
        out: PathBuf::from("hil/out"),
        no_report: false,
        quiet: false,
    }))) {
        Ok(true) => ExitCode::SUCCESS,
        Ok(false) => ExitCode::from(1),
        Err(e) => {
            eprintln!("error: {e:#}");
            ExitCode::from(2)
        }
    }
}

fn overrides_of(c: &Common) -> anyhow::Result<Vec<(String, toml::Value)>> {
    let mut out = Vec::new();
    for s in &c.set {
        out.push(overrides::parse_assignment(s).map_err(anyhow::Error::msg)?);
    }
    if let Some(seed) = c.seed {
        out.push(("seed".into(), toml::Value::Integer(seed as i64)));
    }
    Ok(out)
}

fn bar(total: f64, quiet: bool, unit: &str) -> ProgressBar {
    if quiet {
        return ProgressBar::hidden();
    }
    let pb = ProgressBar::new(total.ceil().max(1.0) as u64);
    let style = ProgressStyle::with_template(&format!(
        "{{spinner}} [{{elapsed_precise}}] {{bar:40}} {{pos}}/{{len}} {unit} ({{eta}})"
    ))
    .unwrap_or_else(|_| ProgressStyle::default_bar());
    pb.set_style(style);
    pb
}

fn dispatch(verb: Verb) -> anyhow::Result<bool> {
    match verb {
        Verb::List => {
            for b in BUILTINS {
                let s = scenario::Scenario::parse(b.text, b.name)?;
                println!(
                    "{:<12} {:>7.1} m path, {:>6.1} s  {}",
                    b.name,
                    s.path.length(),
                    s.spec.duration_s,
                    s.spec.description
                );
            }
            Ok(true)
        }
        Verb::Check { scenario } => {
            let s = scenario::load(&scenario, &[])?;
            println!(
                "{}: ok ({} segments, {:.1} m)",
                scenario,
                s.path.len(),
                s.path.length()
            );
            Ok(true)
        }
        Verb::Run(a) => run_verb(a),
        Verb::Sweep(a) => sweep_verb(a),
        Verb::Bench(a) => bench_verb(a),
        Verb::BuildPath { args } => {
            crate::pathcmd::run(&args)?;
            Ok(true)
        }
    }
}

fn run_verb(a: RunArgs) -> anyhow::Result<bool> {
    let s = scenario::load(&a.scenario, &overrides_of(&a.common)?)?;
    let duration = a.common.duration.unwrap_or(s.spec.duration_s);
    let pb = bar(duration, a.quiet, "sim s");
    let tick = |t: f64| pb.set_position(t as u64);
    let opts = RunOptions {
        duration_s: a.common.duration,
    };
    let wall = Instant::now();
    let out = runner::run(&s, opts, Some(&tick))?;
    pb.finish_and_clear();
    let secs = wall.elapsed().as_secs_f64();
    print!(
        "{}",
        report::summary(&s, &out.metrics, &out.checks, &out.run)
    );
    println!(
        "wall time {secs:.2} s ({:.0} simulated s per wall s)",
        out.run.sim_time_s / secs.max(1e-9)
    );
    if !a.no_report {
        let dir = report::write_all(&a.out, &s, &out.metrics, &out.checks, &out.run)?;
        println!(
            "report: {}  (trace.csv, path.svg, cross_track.svg, summary.txt)",
            dir.join("report.html").display()
        );
    }
    Ok(out.pass())
}

fn sweep_verb(a: SweepArgs) -> anyhow::Result<bool> {
    let base = overrides_of(&a.common)?;
    let mut params = Vec::new();
    for p in &a.params {
        params.push(sweep::parse_param(p)?);
    }
    let plan = sweep::Plan {
        source: a.scenario.clone(),
        base,
        params,
        seeds: a.first_seed..a.first_seed + a.seeds,
        duration_s: a.common.duration,
    };
    let jobs = plan.jobs()?;
    let pb = bar(jobs.len() as f64, a.quiet, "runs");
    let wall = Instant::now();
    let results = sweep::run(&plan, &jobs, &|| pb.inc(1))?;
    pb.finish_and_clear();
    let secs = wall.elapsed().as_secs_f64();
    print!("{}", sweep::summary(&plan, &results));
    let sim: f64 = results.iter().map(|r| r.metrics.sim_time_s).sum();
    println!(
        "{} runs, {:.0} simulated s in {:.2} wall s on {} threads: {:.0} simulated s per wall s",
        results.len(),
        sim,
        secs,
        rayon::current_num_threads(),
        sim / secs.max(1e-9)
    );
    if let Some(path) = &a.csv {
        sweep::write_csv(path, &plan, &results)?;
        println!("runs written to {}", path.display());
    }
    Ok(results.iter().all(|r| r.pass))
}

fn bench_verb(a: BenchArgs) -> anyhow::Result<bool> {
    let s = scenario::load(&a.scenario, &[])?;
    let wall = Instant::now();
    let one = runner::run(&s, RunOptions::default(), None)?;
    let single = wall.elapsed().as_secs_f64();
    println!(
        "{}: one run, one thread: {:.1} simulated s in {:.3} wall s = {:.0} simulated s per wall s",
        s.name(),
        one.run.sim_time_s,
        single,
        one.run.sim_time_s / single.max(1e-9)
    );
    let plan = sweep::Plan {
        source: a.scenario.clone(),
        base: Vec::new(),
        params: Vec::new(),
        seeds: 1..1 + a.runs,
        duration_s: None,
    };
    let jobs = plan.jobs()?;
    let wall = Instant::now();
    let results = sweep::run(&plan, &jobs, &|| ())?;
    let secs = wall.elapsed().as_secs_f64();
    let sim: f64 = results.iter().map(|r| r.metrics.sim_time_s).sum();
    println!(
        "{}: {} runs on {} threads: {:.1} simulated s in {:.3} wall s = {:.0} simulated s per wall s",
        s.name(),
        results.len(),
        rayon::current_num_threads(),
        sim,
        secs,
        sim / secs.max(1e-9)
    );
    Ok(true)
}
