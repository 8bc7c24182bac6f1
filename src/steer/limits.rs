//! Steering saturation and rate limiting at the control rate.
//!
//! A curvature command becomes something the machine can do in one control
//! period: clipped to the vehicle's curvature (front-steered: steering
//! angle) range, then moved from the previous output by at most the rate
//! limit times the period. Front-steered vehicles are limited in steering
//! angle (`|delta| <= max_steer`, `|d delta / dt| <= max_steer_rate`),
//! differential-drive robots in curvature.
//!
//! Caution: a command limiter is not a safety function; the machine's own
//! actuator limits and an independent emergency stop stay in charge.

use crate::num::real::Real;
use crate::steer::vehicle::{atan, tan, Chassis, Vehicle};

/// One limited command.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Limited<T> {
    /// Rear-axle curvature after the limits, 1/m.
    pub curvature: T,
    /// Front-wheel angle, rad (0 for differential drive).
    pub steer_angle: T,
    /// `true` if the range or the rate limit changed the command.
    pub saturated: bool,
}

/// Saturation and rate limit with memory of the last output.
///
/// ```
/// use kappaline::{SteerLimiter, Vehicle};
/// # fn main() -> Result<(), kappaline::SteerError> {
/// let v = Vehicle::<f64>::front_steered(2.5, 0.6, 0.5)?; // 0.5 rad/s
/// let mut lim = SteerLimiter::new();
/// let out = lim.apply(&v, 1.0, 0.1); // asks for far more than the range
/// assert!((out.steer_angle - 0.05).abs() < 1e-12); // 0.5 rad/s * 0.1 s
/// assert!(out.saturated);
/// # Ok(()) }
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SteerLimiter<T> {
    curvature: T,
    steer: T,
}

impl<T: Real> SteerLimiter<T> {
    /// A limiter whose last output is straight ahead (curvature 0).
    pub fn new() -> Self {
        Self {
            curvature: T::ZERO,
            steer: T::ZERO,
        }
    }

    /// Sets the last output to a measured curvature (1/m), e.g. from a
    /// steering-angle sensor at start-up; clipped to the range, ignored if
    /// not finite.
    pub fn seed(&mut self, vehicle: &Vehicle<T>, kappa: T) {
        if !kappa.is_finite() {
            return;
        }
        let k = kappa.clamp_to(-vehicle.max_curvature(), vehicle.max_curvature());
        self.curvature = match vehicle.chassis() {
            Chassis::FrontSteered { .. } => {
                self.steer = vehicle
                    .steer_from_curvature(k)
                    .clamp_to(-vehicle.max_steer(), vehicle.max_steer());
                vehicle.curvature_from_steer(self.steer)
            }
            Chassis::DifferentialDrive { .. } => k,
        };
    }

    /// The last output without change (rate zero).
    pub fn hold(&self) -> Limited<T> {
        Limited {
            curvature: self.curvature,
            steer_angle: self.steer,
            saturated: false,
        }
    }

    /// Limits `kappa` (1/m) for a control period `dt` (s). A non-finite
    /// command or a period that is not finite and positive holds the last
    /// output.
    pub fn apply(&mut self, vehicle: &Vehicle<T>, kappa: T, dt: T) -> Limited<T> {
        if !(kappa.is_finite() && dt.is_finite() && dt > T::ZERO) {
            return self.hold();
        }
        match vehicle.chassis() {
            Chassis::FrontSteered { wheelbase } => {
                let range = vehicle.max_steer();
                let wanted = atan(wheelbase * kappa);
                let clipped = wanted.clamp_to(-range, range);
                let step = vehicle.max_steer_rate() * dt;
                let steer = clipped.clamp_to(self.steer - step, self.steer + step);
                // Keep the result inside the range even if rounding drifted.
                let steer = steer.clamp_to(-range, range);
                self.steer = steer;
                // Unlimited: the curvature asked for (no tan(atan(.)) round trip).
                self.curvature = if steer == wanted {
                    kappa
                } else {
                    tan(steer) / wheelbase
                };
                Limited {
                    curvature: self.curvature,
                    steer_angle: steer,
                    saturated: steer != wanted,
                }
            }
            Chassis::DifferentialDrive { .. } => {
                let range = vehicle.max_curvature();
                let clipped = kappa.clamp_to(-range, range);
                let step = vehicle.max_curvature_rate() * dt;
                let k = clipped.clamp_to(self.curvature - step, self.curvature + step);
                self.curvature = k;
                self.steer = T::ZERO;
                Limited {
                    curvature: k,
                    steer_angle: T::ZERO,
                    saturated: k != kappa,
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn range_and_rate_hold_for_any_sequence() {
        let v = Vehicle::<f64>::front_steered(2.5, 0.6, 0.7).unwrap();
        let mut lim = SteerLimiter::new();
        let mut prev = 0.0;
        let cmds = [5.0, -5.0, 0.01, f64::NAN, 1e300, -0.2, 0.0, 0.3];
        for (i, k) in cmds.iter().cycle().take(200).enumerate() {
            let dt = if i % 7 == 0 { 0.01 } else { 0.05 };
            let out = lim.apply(&v, *k, dt);
            assert!(out.steer_angle.abs() <= 0.6);
            assert!((out.steer_angle - prev).abs() <= 0.7 * dt + 1e-15);
            assert!((v.steer_from_curvature(out.curvature) - out.steer_angle).abs() < 1e-12);
            prev = out.steer_angle;
        }
    }

    #[test]
    fn differential_limits_curvature() {
        let v = Vehicle::<f64>::differential(0.4, 2.0, 4.0).unwrap();
        let mut lim = SteerLimiter::new();
        let out = lim.apply(&v, 10.0, 0.1);
        assert!((out.curvature - 0.4).abs() < 1e-12 && out.saturated);
        for _ in 0..10 {
            lim.apply(&v, 10.0, 0.1);
        }
        assert_eq!(lim.hold().curvature, 2.0);
        let held = lim.apply(&v, 0.0, f64::NAN);
        assert_eq!(held.curvature, 2.0);
    }

    #[test]
    fn seed_sets_last_output() {
        let v = Vehicle::<f64>::front_steered(2.5, 0.6, 0.7).unwrap();
        let mut lim = SteerLimiter::new();
        lim.seed(&v, 0.1);
        assert!((lim.hold().curvature - 0.1).abs() < 1e-12);
        lim.seed(&v, 10.0);
        assert!((lim.hold().steer_angle - 0.6).abs() < 1e-12);
    }
}
