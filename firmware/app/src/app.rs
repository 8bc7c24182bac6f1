//! The control cycle, board-independent: generic over the embedded-hal
//! traits of its steering PWM and its operator inputs, and over an
//! embedded-io writer for the status output.
//!
//! Once per timer interrupt: read the operator inputs (engage switch,
//! manual-override sensor), take the receiver's fix update, run
//! `Guidance::step`, put the command out on the steering PWM (neutral on
//! standby, fault and lost) and report one status line.

use core::fmt::Write as _;

use embedded_hal::digital::InputPin;
use embedded_hal::pwm::SetDutyCycle;
use kappaline::io::actuator::{SteeringCalibration, SteeringOutput};
use kappaline::{
    Command, FixUpdate, Guidance, GuidanceInput, GuidanceStatus, Micros, Path, PurePursuit,
    SteerError, SupervisorConfig, TrackerConfig, Vehicle,
};

/// Segments of the path held in RAM.
pub const PATH_SEGMENTS: usize = 8;

/// What one cycle did, for the status output.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Report {
    /// Cycle number since start.
    pub cycle: u32,
    /// The command of the cycle.
    pub command: Command<f32>,
    /// The duty put out, counts.
    pub duty: u16,
}

/// The controller: guidance, path, steering output and operator inputs.
pub struct App<S, E, O> {
    guidance: Guidance<f32, PurePursuit<f32>>,
    path: Path<f32, PATH_SEGMENTS>,
    steering: SteeringOutput<S, f32>,
    engage: E,
    manual: O,
    period_us: u32,
    cycle: u32,
    /// The engage switch at the last cycle.
    switch_was: bool,
}

impl<S: SetDutyCycle, E: InputPin, O: InputPin> App<S, E, O> {
    /// The controller for `vehicle` on `path` at a control period of
    /// `period_us`; it starts in standby until the engage switch is on.
    ///
    /// # Errors
    /// If the core refuses the settings.
    pub fn new(
        vehicle: Vehicle<f32>,
        path: Path<f32, PATH_SEGMENTS>,
        steering: SteeringOutput<S, f32>,
        (engage, manual): (E, O),
        period_us: u32,
    ) -> Result<Self, SteerError> {
        let mut guidance = Guidance::new(
            vehicle,
            PurePursuit::tractor(),
            TrackerConfig::tractor(),
            SupervisorConfig::default_for(&vehicle),
        )?;
        guidance.standby();
        Ok(Self {
            guidance,
            path,
            steering,
            engage,
            manual,
            period_us,
            cycle: 0,
            switch_was: false,
        })
    }

    /// One control cycle at `now` with the receiver's `fix` update. A pin
    /// that cannot be read counts as off (standby; no override).
    pub fn cycle(&mut self, now: Micros, fix: FixUpdate<f32>) -> Report {
        let engage = self.engage.is_high().unwrap_or(false);
        let manual = self.manual.is_high().unwrap_or(false);
        // The switch engages on its rising edge only, so after a manual
        // override the operator turns it off and on again; off is standby.
        if engage && !self.switch_was && !manual {
            self.guidance.engage();
        } else if !engage {
            self.guidance.standby();
        }
        self.switch_was = engage;
        let input = GuidanceInput {
            manual_override: manual,
            ..GuidanceInput::new(fix, now, self.period_us)
        };
        let command = self.guidance.step(&self.path, &input);
        // A PWM that refuses the duty leaves the last one; the status line
        // shows duty 0 then.
        let duty = self.steering.apply(&command).unwrap_or(0);
        self.cycle = self.cycle.wrapping_add(1);
        Report {
            cycle: self.cycle,
            command,
            duty,
        }
    }
}

/// The steering calibration of the demo machine: a valve driver, 50 %
/// neutral, 30 % per rad, 0.6 rad either way, 5 mrad deadband.
///
/// # Errors
/// Never for these figures; a board with other figures may.
pub fn demo_calibration(
) -> Result<SteeringCalibration<f32>, kappaline::io::actuator::CalibrationError> {
    SteeringCalibration::linear(0.5, 0.3, 0.6, 0.005, (0.3, 0.7))
}

/// Short status names (the status line carries no floats: formatting
/// them costs about 20 KB of flash).
fn status_code(s: GuidanceStatus) -> &'static str {
    match s {
        GuidanceStatus::Acquiring => "ACQ",
        GuidanceStatus::Following => "FOL",
        GuidanceStatus::Degraded => "DEG",
        GuidanceStatus::Lost => "LOST",
        GuidanceStatus::EndOfPath => "END",
        GuidanceStatus::Standby => "STBY",
        _ => "FAULT",
    }
}

/// A fixed-capacity line buffer (no allocation).
pub mod heapless_line {
    /// Up to 96 bytes of text.
    pub struct Line {
        buf: [u8; 96],
        len: usize,
    }

    impl Line {
        /// An empty line.
        pub const fn new() -> Self {
            Self {
                buf: [0; 96],
                len: 0,
            }
        }

        /// The text written so far.
        pub fn bytes(&self) -> &[u8] {
            self.buf.get(..self.len).unwrap_or(&[])
        }
    }

    impl Default for Line {
        fn default() -> Self {
            Self::new()
        }
    }

    impl core::fmt::Write for Line {
        fn write_str(&mut self, s: &str) -> core::fmt::Result {
            let end = self.len + s.len();
            let slot = self.buf.get_mut(self.len..end).ok_or(core::fmt::Error)?;
            slot.copy_from_slice(s.as_bytes());
            self.len = end;
            Ok(())
        }
    }
}

/// Rounds to the nearest integer, saturating (`as` does both in Rust).
fn int(v: f32) -> i32 {
    if v >= 0.0 {
        (v + 0.5) as i32
    } else {
        (v - 0.5) as i32
    }
}

/// Writes the report's status line to `out`: `S <cycle> <status> <steer
/// angle urad> <speed limit mm/s> <duty counts> <cross-track mm or ->`.
///
/// # Errors
/// The writer's.
pub fn write_status<W: embedded_io::Write>(out: &mut W, r: &Report) -> Result<(), W::Error> {
    let mut line = heapless_line::Line::new();
    let c = &r.command;
    let _ = write!(
        line,
        "S {} {} {} {} {} ",
        r.cycle,
        status_code(c.status),
        int(c.steer_angle * 1e6),
        int(c.speed_limit * 1e3),
        r.duty
    );
    let _ = match c.tracking {
        Some(t) => writeln!(line, "{}", int(t.cross_track * 1e3)),
        None => writeln!(line, "-"),
    };
    out.write_all(line.bytes())
}
