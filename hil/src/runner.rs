//! One scenario, end to end: firmware built from the scenario, the closed
//! loop, the metrics and the checks.

use crate::closed_loop::{self, Progress, RunOptions, RunOutput};
use crate::controller::firmware_on;
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

/// Runs `scenario` with the controller it names, in-process, taking its
/// path and fixes as `options.inputs` says.
///
/// # Errors
/// If the core refuses the controller settings.
pub fn run(
    scenario: &Scenario,
    options: RunOptions,
    progress: Option<Progress<'_>>,
) -> anyhow::Result<Outcome> {
    let mut fw = firmware_on(scenario, options.inputs)?;
    let run = closed_loop::run(scenario, fw.as_mut(), options, progress);
    let metrics = metrics::compute(scenario, &run);
    let checks = metrics::check(&scenario.spec.thresholds, &metrics, &run);
    Ok(Outcome {
        run,
        metrics,
        checks,
    })
}

/// What a run over the link adds to an [`Outcome`].
pub struct LinkOutcome {
    /// The run, its metrics and checks, as in-process.
    pub outcome: Outcome,
    /// The device's costs, round-trip times and answers.
    pub device: crate::link::device::DeviceLog,
    /// Why the run stopped early, if it did (the outcome then holds what
    /// was run until then).
    pub failure: Option<crate::link::device::LinkFailure>,
}

/// Runs `scenario` with the controller on the device behind `link`,
/// with the link faults of `faults` injected.
///
/// # Errors
/// If the link does not come up or the device refuses the path.
pub fn run_over_link<T: crate::link::transport::Transport>(
    scenario: &Scenario,
    link: T,
    faults: crate::link::faults::FaultPlan,
    options: RunOptions,
    progress: Option<Progress<'_>>,
) -> anyhow::Result<LinkOutcome> {
    use crate::link::device::{LinkFirmware, Timeouts};
    let mut fw = LinkFirmware::connect(
        link,
        &scenario.path,
        crate::link::nmea::NmeaWriter::demo_firmware()?,
        scenario.spec.controller.speed_m_s,
        Timeouts::default(),
    )?
    .with_faults(faults);
    let run = closed_loop::run(scenario, &mut fw, options, progress);
    let metrics = metrics::compute(scenario, &run);
    let checks = metrics::check(&scenario.spec.thresholds, &metrics, &run);
    Ok(LinkOutcome {
        outcome: Outcome {
            run,
            metrics,
            checks,
        },
        device: fw.log,
        failure: fw.failure,
    })
}
