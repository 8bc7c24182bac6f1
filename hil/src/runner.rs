//! One scenario, end to end: firmware built from the scenario, the closed
//! loop, the metrics and the checks.

use crate::closed_loop::{self, Progress, RunOptions, RunOutput};
use crate::controller::firmware_for;
use crate::metrics::{self, Check, Metrics};
use crate::scenario::Scenario;

/// The result of one run.
#[derive(Debug, Clone)]
pub struct Outcome {
    /// Trace and status log.
    pub run: RunOutput,
    /// Figures of merit.
    pub metrics: Metrics,
    /// Pass/fail lines.
    pub checks: Vec<Check>,
}

impl Outcome {
    /// `true` when every check passed.
    pub fn pass(&self) -> bool {
        self.checks.iter().all(|c| c.pass)
    }
}

/// Runs `scenario` with the controller it names.
///
/// # Errors
/// If the core refuses the controller settings.
pub fn run(
    scenario: &Scenario,
    options: RunOptions,
    progress: Option<Progress<'_>>,
) -> anyhow::Result<Outcome> {
    let mut fw = firmware_for(scenario)?;
    let run = closed_loop::run(scenario, fw.as_mut(), options, progress);
    let metrics = metrics::compute(scenario, &run);
    let checks = metrics::check(&scenario.spec.thresholds, &metrics, &run);
    Ok(Outcome {
        run,
        metrics,
        checks,
    })
}
