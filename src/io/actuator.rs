//! Actuator outputs over embedded-hal 1.0: the command of one cycle onto a
//! steering PWM (servo or proportional-valve driver) or two wheel PWMs
//! with direction pins.
//!
//! Both go neutral (steering: the calibration's neutral duty; wheels: zero
//! duty) when the status is `Standby`, `Fault` or `Lost`: the guidance is
//! not steering then, and a valve or servo left at its last duty would.
//! Neutral is not a stop: keep an independent emergency stop, and a valve
//! that centres (or blocks) on its own when the signal fails.

use embedded_hal::digital::OutputPin;
use embedded_hal::pwm::SetDutyCycle;

use crate::guide::cycle::{Command, GuidanceStatus};
use crate::num::real::Real;

/// Most points of a calibration table.
pub const MAX_CALIBRATION_POINTS: usize = 8;

/// Why a calibration was refused.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum CalibrationError {
    /// A value is not finite.
    NonFinite,
    /// Fewer than 2 or more than [`MAX_CALIBRATION_POINTS`] points, angles
    /// not strictly increasing, a duty outside `[0, 1]`, a negative
    /// deadband, or limits with `min > max`.
    OutOfRange,
}

/// Steering angle (rad, positive left) to duty (a fraction of the PWM's
/// full scale, 0 to 1): a table interpolated linearly, a deadband about
/// straight ahead, and duty limits.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SteeringCalibration<T> {
    points: [(T, T); MAX_CALIBRATION_POINTS],
    len: usize,
    neutral: T,
    deadband: T,
    min_duty: T,
    max_duty: T,
}

impl<T: Real> SteeringCalibration<T> {
    /// A straight line: `duty = neutral + gain * angle` over
    /// `[-max_angle, max_angle]`, clipped to `[min_duty, max_duty]`.
    /// A hobby servo at 50 Hz, 1.5 ms neutral and 0.5 ms per 45 degrees
    /// (common practice) is `linear(0.075, 0.025 / (PI / 4), ...)`.
    ///
    /// # Errors
    /// [`CalibrationError`] as for [`SteeringCalibration::table`].
    pub fn linear(
        neutral: T,
        gain_per_rad: T,
        max_angle: T,
        deadband: T,
        (min_duty, max_duty): (T, T),
    ) -> Result<Self, CalibrationError> {
        let at = |a: T| neutral + gain_per_rad * a;
        let mut c = Self::table(
            &[(-max_angle, at(-max_angle)), (max_angle, at(max_angle))],
            deadband,
            (min_duty, max_duty),
        )?;
        c.neutral = neutral;
        c.check_neutral()?;
        Ok(c)
    }

    /// A measured table of `(angle rad, duty)` points, angles strictly
    /// increasing (2 to [`MAX_CALIBRATION_POINTS`] of them); beyond its ends
    /// the end duties hold. Neutral is the table's duty at angle 0.
    ///
    /// # Errors
    /// [`CalibrationError::NonFinite`] or [`CalibrationError::OutOfRange`].
    pub fn table(
        points: &[(T, T)],
        deadband: T,
        (min_duty, max_duty): (T, T),
    ) -> Result<Self, CalibrationError> {
        let finite = points.iter().all(|(a, d)| a.is_finite() && d.is_finite())
            && deadband.is_finite()
            && min_duty.is_finite()
            && max_duty.is_finite();
        if !finite {
            return Err(CalibrationError::NonFinite);
        }
        let duty_ok = |d: T| d >= T::ZERO && d <= T::ONE;
        let increasing = points.windows(2).all(|w| matches!(w, [a, b] if b.0 > a.0));
        let ok = (2..=MAX_CALIBRATION_POINTS).contains(&points.len())
            && increasing
            && points.iter().all(|p| duty_ok(p.1))
            && deadband >= T::ZERO
            && duty_ok(min_duty)
            && duty_ok(max_duty)
            && min_duty <= max_duty;
        if !ok {
            return Err(CalibrationError::OutOfRange);
        }
        let mut table = [(T::ZERO, T::ZERO); MAX_CALIBRATION_POINTS];
        for (slot, p) in table.iter_mut().zip(points) {
            *slot = *p;
        }
        let mut c = Self {
            points: table,
            len: points.len(),
            neutral: T::ZERO,
            deadband,
            min_duty,
            max_duty,
        };
        c.neutral = c.interpolate(T::ZERO);
        c.check_neutral()?;
        Ok(c)
    }

    fn check_neutral(&self) -> Result<(), CalibrationError> {
        if self.neutral >= self.min_duty && self.neutral <= self.max_duty {
            Ok(())
        } else {
            Err(CalibrationError::OutOfRange)
        }
    }

    /// The neutral duty (0 to 1).
    pub fn neutral(&self) -> T {
        self.neutral
    }

    /// The duty (0 to 1) for a steering angle (rad, positive left); a
    /// non-finite angle gives neutral.
    pub fn duty(&self, angle: T) -> T {
        if !angle.is_finite() || angle.abs() <= self.deadband {
            return self.neutral;
        }
        self.interpolate(angle)
            .clamp_to(self.min_duty, self.max_duty)
    }

    fn interpolate(&self, angle: T) -> T {
        let pts = self.points.get(..self.len).unwrap_or(&[]);
        let (Some(first), Some(last)) = (pts.first(), pts.last()) else {
            return self.neutral;
        };
        if angle <= first.0 {
            return first.1;
        }
        for w in pts.windows(2) {
            if let [a, b] = w {
                if angle <= b.0 {
                    return a.1 + (b.1 - a.1) * (angle - a.0) / (b.0 - a.0);
                }
            }
        }
        last.1
    }
}

/// `true` if the command is to be put out; `false` for the neutral output.
fn steering(status: GuidanceStatus) -> bool {
    !matches!(
        status,
        GuidanceStatus::Standby | GuidanceStatus::Fault | GuidanceStatus::Lost
    )
}

/// A duty fraction as a PWM count of `max`, rounded to the nearest.
fn counts<T: Real>(fraction: T, max: u16) -> u16 {
    let f = fraction.clamp_to(T::ZERO, T::ONE).to_f64();
    let c = f * f64::from(max) + 0.5;
    if c >= f64::from(max) {
        max
    } else if c > 0.0 {
        c as u16
    } else {
        0
    }
}

/// A steering output on one PWM channel.
#[derive(Debug)]
pub struct SteeringOutput<P, T> {
    pwm: P,
    calibration: SteeringCalibration<T>,
}

impl<P: SetDutyCycle, T: Real> SteeringOutput<P, T> {
    /// The output on `pwm` with its calibration.
    pub fn new(pwm: P, calibration: SteeringCalibration<T>) -> Self {
        Self { pwm, calibration }
    }

    /// Puts out one cycle's command: its steering angle, or neutral for
    /// `Standby`, `Fault` and `Lost`. Returns the duty set (in counts).
    ///
    /// # Errors
    /// The PWM driver's error.
    pub fn apply(&mut self, cmd: &Command<T>) -> Result<u16, P::Error> {
        let fraction = if steering(cmd.status) {
            self.calibration.duty(cmd.steer_angle)
        } else {
            self.calibration.neutral()
        };
        self.set(fraction)
    }

    /// Neutral, whatever the command (start-up, emergency).
    ///
    /// # Errors
    /// The PWM driver's error.
    pub fn neutral(&mut self) -> Result<u16, P::Error> {
        self.set(self.calibration.neutral())
    }

    fn set(&mut self, fraction: T) -> Result<u16, P::Error> {
        let duty = counts(fraction, self.pwm.max_duty_cycle());
        self.pwm.set_duty_cycle(duty)?;
        Ok(duty)
    }

    /// The PWM channel back.
    pub fn release(self) -> P {
        self.pwm
    }
}

/// One wheel's output failed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum WheelError<P, D> {
    /// The PWM driver's error.
    Pwm(P),
    /// The direction pin's error.
    Direction(D),
}

/// One wheel: a PWM for the magnitude and a pin for the direction (high:
/// forward).
#[derive(Debug)]
pub struct Wheel<P, D> {
    /// Speed magnitude.
    pub pwm: P,
    /// Direction, high for forward.
    pub direction: D,
}

/// A differential-drive output: the command's wheel speeds (m/s) as duty
/// `|v| / full_speed` and a direction pin per wheel.
#[derive(Debug)]
pub struct WheelOutput<LP, LD, RP, RD, T> {
    left: Wheel<LP, LD>,
    right: Wheel<RP, RD>,
    full_speed: T,
}

impl<LP, LD, RP, RD, T> WheelOutput<LP, LD, RP, RD, T>
where
    LP: SetDutyCycle,
    RP: SetDutyCycle,
    LD: OutputPin,
    RD: OutputPin,
    T: Real,
{
    /// The output; `full_speed` (m/s, > 0) is the wheel speed at full duty.
    ///
    /// # Errors
    /// [`CalibrationError`] for a `full_speed` not finite or not positive.
    pub fn new(
        left: Wheel<LP, LD>,
        right: Wheel<RP, RD>,
        full_speed: T,
    ) -> Result<Self, CalibrationError> {
        if !full_speed.is_finite() {
            return Err(CalibrationError::NonFinite);
        }
        if full_speed <= T::ZERO {
            return Err(CalibrationError::OutOfRange);
        }
        Ok(Self {
            left,
            right,
            full_speed,
        })
    }

    /// Puts out one cycle's wheel speeds, or zero duty for `Standby`,
    /// `Fault` and `Lost` (directions left as they were). Returns the
    /// duties set `(left, right)` in counts.
    ///
    /// # Errors
    /// The first driver error, by side (the left wheel may already be set
    /// when the right one fails).
    #[allow(clippy::type_complexity)]
    pub fn apply(
        &mut self,
        cmd: &Command<T>,
    ) -> Result<(u16, u16), Side<WheelFault<LP, LD>, WheelFault<RP, RD>>> {
        let (l, r) = if steering(cmd.status) {
            cmd.wheel_speeds
        } else {
            (T::ZERO, T::ZERO)
        };
        let full = self.full_speed;
        let left = drive(&mut self.left, l, full).map_err(Side::Left)?;
        let right = drive(&mut self.right, r, full).map_err(Side::Right)?;
        Ok((left, right))
    }

    /// The wheels back `(left, right)`.
    pub fn release(self) -> (Wheel<LP, LD>, Wheel<RP, RD>) {
        (self.left, self.right)
    }
}

/// Which wheel's driver failed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side<L, R> {
    /// The left wheel.
    Left(L),
    /// The right wheel.
    Right(R),
}

/// A wheel's own error: its PWM's or its pin's.
pub type WheelFault<P, D> = WheelError<
    <P as embedded_hal::pwm::ErrorType>::Error,
    <D as embedded_hal::digital::ErrorType>::Error,
>;

fn drive<P: SetDutyCycle, D: OutputPin, T: Real>(
    w: &mut Wheel<P, D>,
    speed: T,
    full: T,
) -> Result<u16, WheelFault<P, D>> {
    let v = if speed.is_finite() { speed } else { T::ZERO };
    if v > T::ZERO {
        w.direction.set_high().map_err(WheelError::Direction)?;
    } else if v < T::ZERO {
        w.direction.set_low().map_err(WheelError::Direction)?;
    }
    let duty = counts(v.abs() / full, w.pwm.max_duty_cycle());
    w.pwm.set_duty_cycle(duty).map_err(WheelError::Pwm)?;
    Ok(duty)
}
