//! Simulation throughput: simulated seconds per wall-clock second for each
//! built-in scenario, one run on one thread and a batch on all cores.
//! `cargo bench -p kappaline-hil` (set `HIL_BENCH_RUNS` for the batch size).

use std::time::Instant;

use kappaline_hil::closed_loop::RunOptions;
use kappaline_hil::runner;
use kappaline_hil::scenario::builtin::BUILTINS;
use kappaline_hil::scenario::load;
use kappaline_hil::sweep::{self, Plan};

fn main() -> anyhow::Result<()> {
    let runs: u64 = std::env::var("HIL_BENCH_RUNS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(16);
    println!(
        "{:<12} {:>14} {:>16} {:>22}",
        "scenario",
        "sim s per run",
        "1 thread [s/s]",
        format!("{} threads [s/s]", rayon::current_num_threads())
    );
    for b in BUILTINS {
        let s = load(b.name, &[])?;
        // Warm up once, then time three single runs and keep the best.
        runner::run(&s, RunOptions::default(), None)?;
        let mut best = f64::INFINITY;
        let mut sim = 0.0;
        for _ in 0..3 {
            let t = Instant::now();
            let o = runner::run(&s, RunOptions::default(), None)?;
            best = best.min(t.elapsed().as_secs_f64());
            sim = o.run.sim_time_s;
        }
        let plan = Plan {
            source: b.name.into(),
            base: Vec::new(),
            params: Vec::new(),
            seeds: 0..runs,
            duration_s: None,
        };
        let jobs = plan.jobs()?;
        let t = Instant::now();
        let results = sweep::run(&plan, &jobs, &|| ())?;
        let wall = t.elapsed().as_secs_f64();
        let total: f64 = results.iter().map(|r| r.metrics.sim_time_s).sum();
        println!(
            "{:<12} {:>14.1} {:>16.0} {:>22.0}",
            b.name,
            sim,
            sim / best,
            total / wall
        );
    }
    Ok(())
}
