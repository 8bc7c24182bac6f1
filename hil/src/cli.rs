//! The command line: `run`, `list`, `check`, `sweep`, `bench`, `build-path`.

use std::path::{Path as FsPath, PathBuf};
use std::process::ExitCode;
use std::time::Instant;

use clap::{Args, Parser, Subcommand};
use indicatif::{ProgressBar, ProgressStyle};

use crate::closed_loop::RunOptions;
use crate::scenario::presets::MachineKind;
use crate::scenario::{self, builtin::BUILTINS, overrides, validate};
use crate::sweep::Shard;
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
    /// List the built-in scenarios and where scenario files live.
    List,
    /// Check a scenario file (with any `--set`) without running it.
    Check(CheckArgs),
    /// Write a commented starting scenario for a machine kind.
    Init(InitArgs),
    /// Monte-Carlo sweep over seeds and parameter ranges, on all cores
    /// (`--shard K/N` runs one slice; `merge` combines the slices).
    Sweep(SweepArgs),
    /// Combine the shard files of one sweep into the summary, plots and
    /// pass rate of the whole sweep.
    Merge(MergeArgs),
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

/// `--seed`: a whole number a scenario file can hold.
fn seed_value(v: &str) -> Result<u64, String> {
    let max = validate::MAX_FILE_SEED;
    match v.trim().parse::<u64>() {
        Ok(n) if n <= max => Ok(n),
        _ => Err(format!(
            "`{v}`: a seed is a whole number from 0 to {max} (a scenario file's integers are signed 64-bit)"
        )),
    }
}

/// `--duration`: finite, > 0, at most the scenario limit.
fn duration_value(v: &str) -> Result<f64, String> {
    let max = validate::MAX_DURATION_S;
    match v.trim().parse::<f64>() {
        Ok(d) if d.is_finite() && d > 0.0 && d <= max => Ok(d),
        _ => Err(format!(
            "`{v}`: a duration in seconds, > 0 and at most {max}"
        )),
    }
}

/// `--seeds`: at least 1.
fn seed_count(v: &str) -> Result<u64, String> {
    match v.trim().parse::<u64>() {
        Ok(n) if n >= 1 => Ok(n),
        _ => Err(format!("`{v}`: the number of seeds, a whole number >= 1")),
    }
}

/// `--runs`: 1 to 10000.
fn run_count(v: &str) -> Result<u64, String> {
    match v.trim().parse::<u64>() {
        Ok(n) if (1..=10_000).contains(&n) => Ok(n),
        _ => Err(format!("`{v}`: a whole number from 1 to 10000")),
    }
}

#[derive(Debug, Args, Default)]
struct Common {
    /// Override a scenario value, e.g. `--set gnss.noise_m=0.05` (repeatable,
    /// applied in order). `--set controller.law.kind=stanley` switches the
    /// steering law, with the core's preset gains for the vehicle's kind.
    #[arg(long = "set", value_name = "KEY=VALUE")]
    set: Vec<String>,
    /// Seed of the random streams (default: the scenario's), 0 to 2^63-1.
    #[arg(long, value_parser = seed_value, allow_hyphen_values = true)]
    seed: Option<u64>,
    /// Simulated duration, s (default: the scenario's), > 0 and at most 100000.
    #[arg(long, value_parser = duration_value, allow_hyphen_values = true)]
    duration: Option<f64>,
}

#[derive(Debug, Args)]
struct RunArgs {
    /// Scenario file (TOML) or built-in name.
    #[arg(default_value = "field")]
    scenario: String,
    #[command(flatten)]
    common: Common,
    /// Directory for the report (one sub-directory per scenario). A relative
    /// path is taken from the current directory: the default `hil/out`
    /// assumes the command runs from the repository root, as `cargo run`
    /// from there does.
    #[arg(long, default_value = "hil/out")]
    out: PathBuf,
    /// Do not write the report.
    #[arg(long)]
    no_report: bool,
    /// No progress bar.
    #[arg(long, short)]
    quiet: bool,
    /// Run the controller on a device over a link instead of in-process:
    /// `qemu` starts the emulated Cortex-M4F board (`qemu-system-arm
    /// -machine mps2-an386`) on the firmware ELF given by `--elf`;
    /// `serial:PORT[,BAUD]` talks to a board on a serial port (115200
    /// baud by default).
    #[arg(long, value_name = "LINK")]
    link: Option<String>,
    /// The firmware ELF for `--link qemu` (built with the `link` feature;
    /// default: the build for `--board`, under
    /// `firmware/app/target/link/TARGET/release/kappaline-app`, or
    /// `target/link-microbit/...` for the micro:bit).
    #[arg(long)]
    elf: Option<PathBuf>,
    /// The emulated board for `--link qemu`: `m4f` (Cortex-M4F,
    /// `mps2-an386`), `m3` (Cortex-M3, `mps2-an385`), `m0` (the Cortex-M0
    /// build on `mps2-an385`, whose core is an M3) or `microbit` (the
    /// Cortex-M0 build on an M0 core, QEMU `microbit`; see
    /// hil/SCENARIOS.md).
    #[arg(long, default_value = "m4f", value_parser = board_value)]
    board: crate::link::transport::Board,
    /// Faults injected on the frames to the device, e.g.
    /// `drop@40,corrupt@60,duplicate@80,delay@100,drop-receiver@120-150`
    /// (cycles counted from 0; see hil/SCENARIOS.md).
    #[arg(long, value_name = "PLAN", value_parser = fault_plan_value)]
    link_faults: Option<crate::link::faults::FaultPlan>,
    /// How the in-process controller receives its path and fixes:
    /// `direct` (the path's segments rounded to the controller's type, the
    /// sensor model's numbers) or `as-link` (as the firmware over `--link`
    /// receives them: the path through the blob, each epoch as NMEA 0183
    /// sentences read back by the core's reader; with the scenario set as
    /// the firmware is, the device's commands bit for bit).
    #[arg(long, value_enum, default_value_t = InputsArg::Direct)]
    inputs: InputsArg,
}

/// `--inputs`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
enum InputsArg {
    /// The host path rounded, the sensor model's numbers.
    Direct,
    /// The path through the blob, the epochs through NMEA sentences.
    AsLink,
}

impl InputsArg {
    fn inputs(self) -> crate::controller::ControllerInputs {
        match self {
            InputsArg::Direct => crate::controller::ControllerInputs::Direct,
            InputsArg::AsLink => crate::controller::ControllerInputs::AsOverLink,
        }
    }
}

fn board_value(s: &str) -> Result<crate::link::transport::Board, String> {
    crate::link::transport::Board::from_name(s)
        .ok_or_else(|| format!("`{s}`: expected m4f, m3, m0 or microbit"))
}

fn fault_plan_value(s: &str) -> Result<crate::link::faults::FaultPlan, String> {
    crate::link::faults::FaultPlan::parse(s).map_err(|e| e.to_string())
}

#[derive(Debug, Args)]
struct CheckArgs {
    /// Scenario file (TOML) or built-in name.
    scenario: String,
    #[command(flatten)]
    common: Common,
}

#[derive(Debug, Args)]
struct InitArgs {
    /// File to write (refused if it exists, unless --force).
    file: PathBuf,
    /// Kind of machine: its core presets give the gains and tracker settings.
    #[arg(long, value_enum, default_value_t = MachineKind::Tractor)]
    kind: MachineKind,
    /// Overwrite an existing file.
    #[arg(long)]
    force: bool,
}

#[derive(Debug, Args)]
struct SweepArgs {
    /// Scenario file (TOML) or built-in name.
    #[arg(default_value = "field")]
    scenario: String,
    #[command(flatten)]
    common: Common,
    /// Number of seeds per parameter combination (>= 1).
    #[arg(long, default_value_t = 100, value_parser = seed_count, allow_hyphen_values = true)]
    seeds: u64,
    /// First seed; the last one, first + seeds - 1, must stay within 0 to 2^63-1.
    #[arg(long, default_value_t = 1, value_parser = seed_value, allow_hyphen_values = true)]
    first_seed: u64,
    /// A parameter range `KEY=LO:HI:N` (N values from LO to HI) or a list
    /// `KEY=A,B,C` (repeatable; the sweep runs every combination).
    #[arg(long = "param", value_name = "KEY=RANGE")]
    params: Vec<String>,
    /// Run only the K-th of N disjoint slices of the sweep (1 <= K <= N), and
    /// write its results to `--out`/shard-K-of-N.json for `merge`.
    #[arg(long, value_name = "K/N", value_parser = Shard::parse)]
    shard: Option<Shard>,
    /// Directory for the sweep report (summary.txt, result.json, one plot
    /// per metric against the first numeric swept parameter, or the seed)
    /// or the shard file. A
    /// relative path is taken from the current directory.
    #[arg(long, default_value = "hil/out/sweep")]
    out: PathBuf,
    /// Write every run's figures to this CSV file as well.
    #[arg(long)]
    csv: Option<PathBuf>,
    /// No progress bar.
    #[arg(long, short)]
    quiet: bool,
}

#[derive(Debug, Args)]
struct MergeArgs {
    /// The shard files (`shard-K-of-N.json`) of one sweep, all N of them.
    #[arg(required = true)]
    shards: Vec<PathBuf>,
    /// Directory for the merged sweep report. A relative path is taken from
    /// the current directory.
    #[arg(long, default_value = "hil/out/sweep")]
    out: PathBuf,
    /// Write every run's figures to this CSV file as well.
    #[arg(long)]
    csv: Option<PathBuf>,
}

#[derive(Debug, Args)]
struct BenchArgs {
    /// Scenario file (TOML) or built-in name.
    #[arg(default_value = "field")]
    scenario: String,
    #[command(flatten)]
    common: Common,
    /// Runs on all cores for the parallel figure (1 to 10000).
    #[arg(long, default_value_t = 8, value_parser = run_count, allow_hyphen_values = true)]
    runs: u64,
}

/// Runs the command line; the exit code is 0 on success and pass, 1 when a
/// threshold is missed, 2 on a usage or input error.
pub fn main() -> ExitCode {
    let cli = Cli::parse();
    match dispatch(cli.verb.unwrap_or(Verb::Run(RunArgs {
        scenario: "field".into(),
        common: Common::default(),
        out: PathBuf::from("hil/out"),
        no_report: false,
        quiet: false,
        link: None,
        elf: None,
        board: crate::link::transport::Board::M4f,
        link_faults: None,
        inputs: InputsArg::Direct,
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
        out.push(overrides::parse_assignment(s).map_err(|e| anyhow::anyhow!("--set {e}"))?);
    }
    if let Some(seed) = c.seed {
        let seed = i64::try_from(seed).map_err(|_| anyhow::anyhow!("--seed: too large"))?;
        out.push(("seed".into(), toml::Value::Integer(seed)));
    }
    if let Some(d) = c.duration {
        out.push(("duration_s".into(), toml::Value::Float(d)));
    }
    Ok(out)
}

/// Checks that `path` can be created before a long run, naming the option.
fn writable_file(option: &str, path: &FsPath) -> anyhow::Result<()> {
    let parent = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(FsPath::new("."));
    anyhow::ensure!(
        parent.is_dir(),
        "{option} {}: the folder {} does not exist",
        path.display(),
        parent.display()
    );
    Ok(())
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
        Verb::List => list_verb(),
        Verb::Check(a) => {
            let s = scenario::load(&a.scenario, &overrides_of(&a.common)?)?;
            println!(
                "{}: ok ({} segments, {:.1} m, {:.1} s, {} fault(s))",
                a.scenario,
                s.path.len(),
                s.path.length(),
                s.spec.duration_s,
                s.spec.faults.len()
            );
            Ok(true)
        }
        Verb::Init(a) => init_verb(a),
        Verb::Run(a) => run_verb(a),
        Verb::Sweep(a) => sweep_verb(a),
        Verb::Merge(a) => merge_verb(a),
        Verb::Bench(a) => bench_verb(a),
        Verb::BuildPath { args } => {
            crate::pathcmd::run(&args)?;
            Ok(true)
        }
    }
}

fn list_verb() -> anyhow::Result<bool> {
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
    println!();
    println!("The built-ins are compiled in; their files are hil/scenarios/*.toml in the");
    println!("repository (copy one to start your own, or write one with `init FILE --kind KIND`).");
    println!("Any other scenario is a TOML file given by its path, relative to the current");
    println!("directory; hil/SCENARIOS.md describes every key.");
    Ok(true)
}

fn init_verb(a: InitArgs) -> anyhow::Result<bool> {
    anyhow::ensure!(
        a.force || !a.file.exists(),
        "{} exists; pass --force to overwrite it",
        a.file.display()
    );
    writable_file("init", &a.file)?;
    let stem = a
        .file
        .file_stem()
        .map(|s| s.to_string_lossy().to_string())
        .unwrap_or_default();
    let name: String = stem
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '-' || c == '_' {
                c
            } else {
                '_'
            }
        })
        .collect();
    let name = if name.is_empty() {
        "my_scenario".into()
    } else {
        name
    };
    let text = scenario::template::starting_scenario(a.kind, &name);
    // What is written must check.
    scenario::Scenario::parse(&text, &a.file.display().to_string())?;
    std::fs::write(&a.file, text)
        .map_err(|e| anyhow::anyhow!("writing {}: {e}", a.file.display()))?;
    println!(
        "wrote {} (a {} scenario); check it with `check {}`, run it with `run {}`",
        a.file.display(),
        a.kind.name(),
        a.file.display(),
        a.file.display()
    );
    Ok(true)
}

fn run_verb(a: RunArgs) -> anyhow::Result<bool> {
    if a.link.is_some() {
        anyhow::ensure!(
            a.inputs == InputsArg::Direct,
            "--inputs: over a link the device gets its path and fixes over the link; the option is for in-process runs"
        );
        return run_link_verb(a);
    }
    anyhow::ensure!(
        a.link_faults.is_none(),
        "--link-faults: faults on the link need a run over one (--link qemu or --link serial:PORT[,BAUD])"
    );
    let s = scenario::load(&a.scenario, &overrides_of(&a.common)?)?;
    let duration = s.spec.duration_s;
    let pb = bar(duration, a.quiet, "sim s");
    let tick = |t: f64| pb.set_position(t as u64);
    let wall = Instant::now();
    let options = RunOptions {
        inputs: a.inputs.inputs(),
        ..RunOptions::default()
    };
    let out = runner::run(&s, options, Some(&tick))?;
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
            "report: {}  ({})",
            dir.join("report.html").display(),
            report::FILES.join(", ")
        );
    }
    Ok(out.pass())
}

fn run_link_verb(a: RunArgs) -> anyhow::Result<bool> {
    use crate::link::device::{cost_histogram, spread};
    use crate::link::transport::{Qemu, Serial};
    let s = scenario::load(&a.scenario, &overrides_of(&a.common)?)?;
    let spec = a.link.as_deref().unwrap_or_default();
    let faults = a.link_faults.clone().unwrap_or_default();
    let lo = if spec == "qemu" {
        let elf = a.elf.clone().unwrap_or_else(|| a.board.default_elf());
        let link = Qemu::start(&elf, a.board)?;
        run_link_scenario(&s, link, faults, a.quiet)?
    } else if let Some(port) = spec.strip_prefix("serial:") {
        run_link_scenario(&s, Serial::open(port)?, faults, a.quiet)?
    } else {
        anyhow::bail!(
            "--link {spec}: expected `qemu` (an emulated board, --board) or `serial:PORT[,BAUD]`"
        )
    };
    let (lo, secs) = lo;
    let out = &lo.outcome;
    print!(
        "{}",
        report::summary(&s, &out.metrics, &out.checks, &out.run)
    );
    let d = &lo.device;
    // Under QEMU's -icount a tick is a fixed count of instructions; on a
    // real board it is a core clock cycle, reported as such.
    let (per_tick, unit) = if spec == "qemu" {
        (
            a.board.instructions_per_tick(),
            "instructions, SysTick under -icount shift=0",
        )
    } else {
        (1.0, "core clock cycles, SysTick")
    };
    println!(
        "device: {} cycles over the link, wall time {secs:.2} s",
        d.cost_ticks.len()
    );
    if let Some((lo_t, med, hi)) = spread(&d.cost_ticks) {
        println!(
            "device cost per cycle ({unit}, {per_tick} per tick): min {} median {} max {}",
            (f64::from(lo_t) * per_tick).round(),
            (f64::from(med) * per_tick).round(),
            (f64::from(hi) * per_tick).round()
        );
        print!("{}", cost_histogram(&d.cost_ticks, 10, per_tick));
    }
    if let Some((lo_r, med, hi)) = spread(&d.round_trip_s) {
        println!(
            "link round trip per cycle (ms): min {:.3} median {:.3} max {:.3}",
            lo_r * 1e3,
            med * 1e3,
            hi * 1e3
        );
    }
    println!("device stack high-water mark: {} bytes", d.stack_high_water);
    print!("{}", fault_summary(d));
    if !a.no_report {
        let dir = report::write_all(&a.out, &s, &out.metrics, &out.checks, &out.run)?;
        let mut csv = String::from("cycle,status,steer_angle_rad,curvature_per_m,speed_limit_m_s,cross_track_m,cost_ticks,round_trip_s\n");
        for (i, st) in d.statuses.iter().enumerate() {
            csv.push_str(&format!(
                "{},{},{:e},{:e},{:e},{:e},{},{:e}\n",
                st.cycle,
                st.status,
                st.steer_angle,
                st.curvature,
                st.speed_limit,
                st.cross_track,
                st.cost,
                d.round_trip_s.get(i).copied().unwrap_or(f64::NAN)
            ));
        }
        std::fs::write(dir.join("device.csv"), csv)?;
        let mut faults = String::from("cycle,fault,device_status\n");
        for f in &d.injected {
            let answer = f.device_status.map_or("no answer (held)", status_name);
            faults.push_str(&format!("{},{},{answer}\n", f.cycle, f.fault));
        }
        std::fs::write(dir.join("link_faults.csv"), faults)?;
        println!(
            "report: {} (device.csv: the device's answers per cycle; link_faults.csv: the faults injected)",
            dir.join("report.html").display()
        );
    }
    if let Some(f) = &lo.failure {
        anyhow::bail!(
            "the run over the link stopped after {} cycles: {f}",
            d.cost_ticks.len()
        );
    }
    Ok(out.pass())
}

use crate::link::faults::status_name;

/// The faults injected, the cycles held and the device's status changes,
/// as text (nothing when no fault was injected).
fn fault_summary(d: &crate::link::device::DeviceLog) -> String {
    use crate::link::faults::LinkFault;
    if d.injected.is_empty() {
        return String::new();
    }
    let counts: Vec<String> = LinkFault::ALL
        .iter()
        .map(|k| {
            let n = d.injected.iter().filter(|f| f.fault == *k).count();
            format!("{k} {n}")
        })
        .collect();
    let mut out = format!("link faults injected: {}\n", counts.join(", "));
    let shown: Vec<String> = d.held.iter().take(20).map(u64::to_string).collect();
    out.push_str(&format!(
        "cycles without an answer, actuators held at the last command: {}{}{}\n",
        d.held.len(),
        if shown.is_empty() { "" } else { ": " },
        shown.join(" ") + if d.held.len() > 20 { " ..." } else { "" }
    ));
    let changes: Vec<String> = d
        .status_changes
        .iter()
        .take(20)
        .map(|(c, s)| format!("{c}:{}", status_name(*s)))
        .collect();
    out.push_str(&format!(
        "device status (cycle:status, first and each change): {}\n",
        changes.join(" ")
    ));
    out
}

/// One run over `link`, with a progress bar; the wall time in seconds.
fn run_link_scenario<T: crate::link::transport::Transport>(
    s: &scenario::Scenario,
    link: T,
    faults: crate::link::faults::FaultPlan,
    quiet: bool,
) -> anyhow::Result<(runner::LinkOutcome, f64)> {
    let pb = bar(s.spec.duration_s, quiet, "sim s");
    let tick = |t: f64| pb.set_position(t as u64);
    let wall = Instant::now();
    let lo = runner::run_over_link(s, link, faults, RunOptions::default(), Some(&tick))?;
    pb.finish_and_clear();
    Ok((lo, wall.elapsed().as_secs_f64()))
}

fn sweep_plan(a: &SweepArgs) -> anyhow::Result<sweep::Plan> {
    anyhow::ensure!(
        a.common.seed.is_none(),
        "--seed: a sweep takes its seeds from --first-seed and --seeds"
    );
    // The duration stays an override, so that each combination checks it.
    let base = overrides_of(&a.common)?;
    let mut params = Vec::new();
    for p in &a.params {
        params.push(sweep::parse_param(p)?);
    }
    let last = a
        .first_seed
        .checked_add(a.seeds - 1)
        .filter(|l| *l <= validate::MAX_FILE_SEED)
        .ok_or_else(|| {
            anyhow::anyhow!(
                "--first-seed {} --seeds {}: the last seed would pass {}",
                a.first_seed,
                a.seeds,
                validate::MAX_FILE_SEED
            )
        })?;
    Ok(sweep::Plan {
        source: a.scenario.clone(),
        base,
        params,
        seeds: a.first_seed..last + 1,
        duration_s: None,
    })
}

fn sweep_verb(a: SweepArgs) -> anyhow::Result<bool> {
    let plan = sweep_plan(&a)?;
    if let Some(csv) = &a.csv {
        writable_file("--csv", csv)?;
    }
    let shard = a.shard.unwrap_or(Shard::WHOLE);
    let jobs = plan.shard_jobs(shard)?;
    std::fs::create_dir_all(&a.out)
        .map_err(|e| anyhow::anyhow!("--out {}: {e}", a.out.display()))?;
    let pb = bar(jobs.len() as f64, a.quiet, "runs");
    let wall = Instant::now();
    let results = sweep::run(&plan, &jobs, &|| pb.inc(1))?;
    pb.finish_and_clear();
    let secs = wall.elapsed().as_secs_f64();
    let sim: f64 = results.iter().map(|r| r.metrics.sim_time_s).sum();
    let speed = format!(
        "{} runs, {:.0} simulated s in {:.2} wall s on {} threads: {:.0} simulated s per wall s",
        results.len(),
        sim,
        secs,
        rayon::current_num_threads(),
        sim / secs.max(1e-9)
    );
    if a.shard.is_some() {
        let file = sweep::write_shard(&a.out, &plan, shard, &results)?;
        println!(
            "shard {}/{}: {speed}\nresults: {} (combine all {} with `merge`)",
            shard.index,
            shard.count,
            file.display(),
            shard.count
        );
        return Ok(results.iter().all(|r| r.pass));
    }
    let stored = sweep::Stored::of(&plan, Shard::WHOLE, results)?;
    finish_sweep(&stored, &a.out, a.csv.as_deref())?;
    println!("{speed}");
    Ok(stored.results.iter().all(|r| r.pass))
}

fn finish_sweep(stored: &sweep::Stored, out: &FsPath, csv: Option<&FsPath>) -> anyhow::Result<()> {
    print!("{}", stored.summary());
    let dir = sweep::write_report(out, stored)?;
    println!("sweep report: {}", dir.display());
    if let Some(path) = csv {
        sweep::write_csv(path, &stored.plan(), &stored.results)?;
        println!("runs written to {}", path.display());
    }
    Ok(())
}

fn merge_verb(a: MergeArgs) -> anyhow::Result<bool> {
    if let Some(csv) = &a.csv {
        writable_file("--csv", csv)?;
    }
    let stored = sweep::merge(&a.shards)?;
    finish_sweep(&stored, &a.out, a.csv.as_deref())?;
    Ok(stored.results.iter().all(|r| r.pass))
}

fn bench_verb(a: BenchArgs) -> anyhow::Result<bool> {
    let base = overrides_of(&a.common)?;
    let s = scenario::load(&a.scenario, &base)?;
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
        base: base.into_iter().filter(|(k, _)| k != "seed").collect(),
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
