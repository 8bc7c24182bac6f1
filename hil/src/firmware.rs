//! The boundary between the simulated machine and the code under test.
//!
//! Each control cycle the closed loop hands the controller what the
//! machine's firmware would have: the newest receiver epoch delivered since
//! the last cycle (if any), the time and the control period. The controller
//! answers with actuator set-points and its supervisor status.

use std::fmt;

use crate::sim::{Drive, Measurement};

/// What firmware gets in one control cycle.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cycle {
    /// Time now, s.
    pub now: f64,
    /// Control period, s.
    pub dt: f64,
    /// The newest epoch delivered since the last cycle.
    pub measurement: Option<Measurement>,
}

/// The supervisor status as the harness records it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum SupervisorStatus {
    /// Looking for the path.
    Acquiring,
    /// On the path, all inputs fresh.
    Following,
    /// Following on stale or doubtful input.
    Degraded,
    /// Off the path or without input for too long.
    Lost,
    /// At the end of the path.
    EndOfPath,
    /// A fault stopped guidance.
    Fault,
}

impl SupervisorStatus {
    /// Every status, in report order.
    pub const ALL: [SupervisorStatus; 6] = [
        SupervisorStatus::Acquiring,
        SupervisorStatus::Following,
        SupervisorStatus::Degraded,
        SupervisorStatus::Lost,
        SupervisorStatus::EndOfPath,
        SupervisorStatus::Fault,
    ];

    /// The snake_case name used in scenario files and reports.
    pub fn name(self) -> &'static str {
        match self {
            SupervisorStatus::Acquiring => "acquiring",
            SupervisorStatus::Following => "following",
            SupervisorStatus::Degraded => "degraded",
            SupervisorStatus::Lost => "lost",
            SupervisorStatus::EndOfPath => "end_of_path",
            SupervisorStatus::Fault => "fault",
        }
    }

    /// The status of a name, if it is one.
    pub fn from_name(name: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|s| s.name() == name)
    }

    /// Position in [`SupervisorStatus::ALL`].
    pub fn index(self) -> usize {
        Self::ALL.iter().position(|s| *s == self).unwrap_or(0)
    }
}

impl fmt::Display for SupervisorStatus {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// What the controller answers.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Actuation {
    /// Actuator set-points.
    pub drive: Drive,
    /// Supervisor status.
    pub status: SupervisorStatus,
    /// Commanded curvature, 1/m.
    pub curvature: f64,
    /// Commanded steering angle, rad (0 for a differential drive).
    pub steer_angle: f64,
    /// Speed limit from guidance, m/s.
    pub speed_limit: f64,
    /// The controller's own cross-track estimate, metres, if it has one.
    pub cross_track_estimate: Option<f64>,
}

/// A controller in the loop.
pub trait Firmware {
    /// One control cycle.
    fn cycle(&mut self, input: &Cycle) -> Actuation;

    /// Why the controller can no longer be asked (a link that failed), if
    /// so: the closed loop stops the run there and keeps what it had.
    fn halted(&self) -> Option<String> {
        None
    }
}
