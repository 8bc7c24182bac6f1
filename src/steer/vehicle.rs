//! Vehicle geometry and limits: what the machine can steer, how fast, and
//! where on its body the guided point sits.
//!
//! Two chassis are covered, both kinematic (no tyre slip):
//!
//! * **front-steered** (kinematic bicycle, curvature referred to the rear
//!   axle): a wheelbase `L` and a front-wheel angle `delta` give the rear
//!   axle's path curvature `kappa = tan(delta) / L`, so
//!   `delta = atan(L kappa)` (e.g. Rajamani, *Vehicle Dynamics and
//!   Control*, 2nd ed., 2012, sec. 2.2 (section from memory), with zero slip angles);
//! * **differential drive**: two driven wheels `b` apart on one axle; a
//!   curvature `kappa` at speed `v` needs wheel speeds
//!   `v (1 - kappa b / 2)` (left) and `v (1 + kappa b / 2)` (right)
//!   (e.g. Siegwart, Nourbakhsh, Scaramuzza, *Introduction to Autonomous
//!   Mobile Robots*, 2nd ed., 2011, sec. 3.2 (section from memory)).
//!
//! Curvature is positive turning left (counter-clockwise) and always refers
//! to the rear axle (the wheel axle of a differential-drive robot). The yaw
//! rate is `kappa * v` with `v` the signed body speed (negative reversing),
//! so the same curvature gives the same circle forwards and backwards.
//!
//! The **control point** is the point of the body that the path describes
//! (a hitch, an implement, a tool), `control_point` metres ahead of the rear
//! axle along the body axis (negative behind). The [`crate::Guidance`] gets
//! fixes of that point and maps them to whatever point each steering law
//! wants its errors at.
//!
//! Caution: these limits describe the machine for the guidance; they are not
//! a safety function. Keep an independent emergency stop and follow the
//! applicable standards (e.g. ISO 25119, ISO 18497, ISO 3691-4, IEC 61508).

use crate::num::real::{c, Real};
use crate::steer::law::SteerError;

/// The kind of chassis and its one geometric dimension.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Chassis<T> {
    /// Front-steered (kinematic bicycle): wheelbase in metres; curvature refers to the rear axle.
    FrontSteered {
        /// Distance between the axles, metres (> 0).
        wheelbase: T,
    },
    /// Differential drive: track width in metres between the wheel contact lines.
    DifferentialDrive {
        /// Distance between the wheels' contact lines, metres (> 0).
        track_width: T,
    },
}

/// A checked vehicle description: geometry, steering limits and speed limits.
///
/// Build with [`Vehicle::front_steered`] or [`Vehicle::differential`], then
/// the `with_*` setters. Every value is checked; a rejected setter leaves
/// nothing half-changed (it returns an error instead of the new vehicle).
///
/// ```
/// use kappaline::{Chassis, Vehicle};
/// # fn main() -> Result<(), kappaline::SteerError> {
/// // 2.5 m wheelbase, 35 degree steering, 40 degree/s steering rate.
/// let v = Vehicle::<f64>::front_steered(2.5, 35f64.to_radians(), 40f64.to_radians())?
///     .with_max_speed(4.0)?;
/// // A 10 m radius needs atan(2.5 / 10) = 14.036 degrees (kinematic bicycle).
/// assert!((v.steer_from_curvature(0.1).to_degrees() - 14.036).abs() < 1e-3);
/// assert!(matches!(v.chassis(), Chassis::FrontSteered { .. }));
/// # Ok(()) }
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Vehicle<T> {
    chassis: Chassis<T>,
    /// rad (front-steered) ; 0 for differential drive.
    max_steer: T,
    /// rad/s (front-steered) ; 0 for differential drive.
    max_steer_rate: T,
    /// 1/m.
    max_curvature: T,
    /// 1/m/s (differential drive); for front-steered the value at zero steer.
    max_curvature_rate: T,
    control_point: T,
    max_lateral_acceleration: T,
    max_speed: T,
    max_deceleration: T,
    steer_lag: T,
}

/// Largest steering angle accepted, rad (80 degrees: keeps `tan` finite and sane).
const STEER_CEILING: f64 = 1.396_263_401_595_463_6;

fn positive<T: Real>(v: T) -> Result<T, SteerError> {
    if !v.is_finite() {
        Err(SteerError::NonFinite)
    } else if v > T::ZERO {
        Ok(v)
    } else {
        Err(SteerError::OutOfRange)
    }
}

/// `tan` from `sin_cos` (the backend has no `tan`); finite for |x| < pi/2.
pub(crate) fn tan<T: Real>(x: T) -> T {
    let (s, co) = x.sin_cos();
    s / co
}

/// `atan` from `atan2`.
pub(crate) fn atan<T: Real>(x: T) -> T {
    x.atan2(T::ONE)
}

impl<T: Real> Vehicle<T> {
    /// A front-steered vehicle: `wheelbase` metres (> 0), steering range
    /// `+-max_steer` radians (0 < max_steer <= 80 degrees), steering rate up
    /// to `max_steer_rate` rad/s (> 0).
    ///
    /// Defaults: control point on the rear axle, lateral acceleration
    /// 1.5 m/s^2, speed 4 m/s, deceleration 1 m/s^2 (a field tractor;
    /// common practice, set your own).
    ///
    /// # Errors
    /// [`SteerError::NonFinite`] or [`SteerError::OutOfRange`].
    pub fn front_steered(
        wheelbase: T,
        max_steer: T,
        max_steer_rate: T,
    ) -> Result<Self, SteerError> {
        let wheelbase = positive(wheelbase)?;
        let max_steer = positive(max_steer)?;
        let max_steer_rate = positive(max_steer_rate)?;
        if max_steer > c(STEER_CEILING) {
            return Err(SteerError::OutOfRange);
        }
        let max_curvature = tan(max_steer) / wheelbase;
        Ok(Self {
            chassis: Chassis::FrontSteered { wheelbase },
            max_steer,
            max_steer_rate,
            max_curvature,
            // d kappa / d t = (1 + tan^2 delta) / L * d delta / d t; the
            // smallest value (delta = 0) is the conservative one.
            max_curvature_rate: max_steer_rate / wheelbase,
            control_point: T::ZERO,
            max_lateral_acceleration: c(1.5),
            max_speed: c(4.0),
            max_deceleration: c(1.0),
            steer_lag: T::ZERO,
        })
    }

    /// A differential-drive robot: `track_width` metres (> 0), curvature up
    /// to `max_curvature` 1/m (> 0), changed at up to `max_curvature_rate`
    /// 1/m/s (> 0).
    ///
    /// Defaults: control point on the wheel axle, lateral acceleration
    /// 1 m/s^2, speed 1.5 m/s, deceleration 1 m/s^2 (a small robot; common
    /// practice, set your own).
    ///
    /// # Errors
    /// [`SteerError::NonFinite`] or [`SteerError::OutOfRange`].
    pub fn differential(
        track_width: T,
        max_curvature: T,
        max_curvature_rate: T,
    ) -> Result<Self, SteerError> {
        Ok(Self {
            chassis: Chassis::DifferentialDrive {
                track_width: positive(track_width)?,
            },
            max_steer: T::ZERO,
            max_steer_rate: T::ZERO,
            max_curvature: positive(max_curvature)?,
            max_curvature_rate: positive(max_curvature_rate)?,
            control_point: T::ZERO,
            max_lateral_acceleration: c(1.0),
            max_speed: c(1.5),
            max_deceleration: c(1.0),
            steer_lag: T::ZERO,
        })
    }

    /// The same vehicle with its control point `x` metres ahead of the rear
    /// axle along the body axis (negative behind), |x| <= 20 m.
    ///
    /// # Errors
    /// [`SteerError::NonFinite`] or [`SteerError::OutOfRange`].
    pub fn with_control_point(mut self, x: T) -> Result<Self, SteerError> {
        if !x.is_finite() {
            return Err(SteerError::NonFinite);
        }
        if x.abs() > c(20.0) {
            return Err(SteerError::OutOfRange);
        }
        self.control_point = x;
        Ok(self)
    }

    /// The same vehicle with a lateral-acceleration limit, m/s^2 (> 0).
    ///
    /// # Errors
    /// [`SteerError::NonFinite`] or [`SteerError::OutOfRange`].
    pub fn with_max_lateral_acceleration(mut self, a: T) -> Result<Self, SteerError> {
        self.max_lateral_acceleration = positive(a)?;
        Ok(self)
    }

    /// The same vehicle with a speed limit, m/s (> 0), forwards and backwards.
    ///
    /// # Errors
    /// [`SteerError::NonFinite`] or [`SteerError::OutOfRange`].
    pub fn with_max_speed(mut self, v: T) -> Result<Self, SteerError> {
        self.max_speed = positive(v)?;
        Ok(self)
    }

    /// The same vehicle with the deceleration the speed cap plans with, m/s^2 (> 0).
    ///
    /// # Errors
    /// [`SteerError::NonFinite`] or [`SteerError::OutOfRange`].
    pub fn with_max_deceleration(mut self, a: T) -> Result<Self, SteerError> {
        self.max_deceleration = positive(a)?;
        Ok(self)
    }

    /// The same vehicle with the time constant of its steering actuator, s
    /// (>= 0; 0, the default, for an actuator much faster than the control
    /// period). The guidance takes the curvature feedforward this much
    /// travel time ahead, so that the wheels, arriving late by the lag,
    /// turn in where the path does.
    ///
    /// # Errors
    /// [`SteerError::NonFinite`] or [`SteerError::OutOfRange`] (negative).
    pub fn with_steer_lag(mut self, tau: T) -> Result<Self, SteerError> {
        if !tau.is_finite() {
            return Err(SteerError::NonFinite);
        }
        if tau < T::ZERO {
            return Err(SteerError::OutOfRange);
        }
        self.steer_lag = tau;
        Ok(self)
    }

    /// Steering actuator time constant the guidance compensates, s.
    pub fn steer_lag(&self) -> T {
        self.steer_lag
    }

    /// The chassis kind and dimension.
    pub fn chassis(&self) -> Chassis<T> {
        self.chassis
    }

    /// Wheelbase in metres for a front-steered vehicle, `None` for differential drive.
    pub fn wheelbase(&self) -> Option<T> {
        match self.chassis {
            Chassis::FrontSteered { wheelbase } => Some(wheelbase),
            Chassis::DifferentialDrive { .. } => None,
        }
    }

    /// Largest curvature magnitude, 1/m: `tan(max_steer) / L`, or the given
    /// value for differential drive.
    pub fn max_curvature(&self) -> T {
        self.max_curvature
    }

    /// Smallest turning radius of the rear axle, metres.
    pub fn min_turning_radius(&self) -> T {
        T::ONE / self.max_curvature
    }

    /// Steering range, rad (0 for differential drive).
    pub fn max_steer(&self) -> T {
        self.max_steer
    }

    /// Steering-rate limit, rad/s (0 for differential drive).
    pub fn max_steer_rate(&self) -> T {
        self.max_steer_rate
    }

    /// Curvature-rate limit, 1/m/s: the given value for differential drive;
    /// for a front-steered vehicle the rate at zero steer, `max_steer_rate / L`.
    pub fn max_curvature_rate(&self) -> T {
        self.max_curvature_rate
    }

    /// Control point, metres ahead of the rear axle (negative behind).
    pub fn control_point(&self) -> T {
        self.control_point
    }

    /// Lateral-acceleration limit, m/s^2.
    pub fn max_lateral_acceleration(&self) -> T {
        self.max_lateral_acceleration
    }

    /// Speed limit, m/s.
    pub fn max_speed(&self) -> T {
        self.max_speed
    }

    /// Planning deceleration, m/s^2.
    pub fn max_deceleration(&self) -> T {
        self.max_deceleration
    }

    /// Front-wheel angle for a rear-axle curvature, rad, positive left:
    /// `atan(L kappa)` (kinematic bicycle). 0 for differential drive.
    pub fn steer_from_curvature(&self, kappa: T) -> T {
        match self.chassis {
            Chassis::FrontSteered { wheelbase } => atan(wheelbase * kappa),
            Chassis::DifferentialDrive { .. } => T::ZERO,
        }
    }

    /// Rear-axle curvature for a front-wheel angle, 1/m: `tan(delta) / L`,
    /// with `delta` clamped to the steering range first (so the result is
    /// always finite). 0 for differential drive, which has no steering angle.
    pub fn curvature_from_steer(&self, delta: T) -> T {
        match self.chassis {
            Chassis::FrontSteered { wheelbase } => {
                let d = if delta.is_finite() { delta } else { T::ZERO };
                tan(d.clamp_to(-self.max_steer, self.max_steer)) / wheelbase
            }
            Chassis::DifferentialDrive { .. } => T::ZERO,
        }
    }

    /// Wheel speeds `(left, right)` in m/s for curvature `kappa` (1/m) at
    /// body speed `v` (m/s, negative reversing): `v (1 -+ kappa b / 2)` for
    /// differential drive, `(v, v)` for a front-steered vehicle.
    pub fn wheel_speeds(&self, kappa: T, v: T) -> (T, T) {
        match self.chassis {
            Chassis::DifferentialDrive { track_width } => {
                let half = kappa * track_width * T::HALF;
                (v * (T::ONE - half), v * (T::ONE + half))
            }
            Chassis::FrontSteered { .. } => (v, v),
        }
    }
}

/// Where the rear axle runs, left of the path (m), when a control point `a`
/// metres ahead of it is on an arc of curvature `kappa`: the concentric
/// circle of radius `sqrt(R^2 - a^2)`, i.e.
/// `kappa a^2 / (1 + sqrt(1 - kappa^2 a^2))` (plain geometry).
pub(crate) fn rear_axle_offset<T: Real>(kappa: T, a: T) -> T {
    // On a line or with the control point on the axle the offset is zero
    // (of the sign the formula gives): no square root.
    if kappa == T::ZERO || a == T::ZERO {
        return kappa * a * a;
    }
    let inside = (T::ONE - kappa * kappa * a * a).max(T::ZERO);
    kappa * a * a / (T::ONE + inside.sqrt())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bicycle_check_value() {
        // Kinematic bicycle delta = atan(L / R) (Rajamani, "Vehicle Dynamics and Control", 2nd ed., Springer
        // 2012, sec. 2.2 (from memory)):
        // L = 2.5 m, R = 10 m -> atan(0.25) = 14.036 degrees.
        let v = Vehicle::<f64>::front_steered(2.5, 0.6, 0.5).unwrap();
        let d = v.steer_from_curvature(0.1);
        assert!((d.to_degrees() - 14.036).abs() < 5e-4);
        assert!((v.curvature_from_steer(d) - 0.1).abs() < 1e-12);
        assert!((v.max_curvature() - libm::tan(0.6) / 2.5).abs() < 1e-12);
    }

    #[test]
    fn differential_wheel_speeds() {
        // Siegwart et al. 2011, sec. 3.2 (section from memory): v_l,r = v (1 -+ kappa b / 2).
        // b = 0.5 m, R = 2 m, v = 1 m/s: inner wheel on R - b/2 = 1.75 m,
        // outer on 2.25 m, speeds in the ratio of the radii.
        let v = Vehicle::<f64>::differential(0.5, 2.0, 4.0).unwrap();
        let (l, r) = v.wheel_speeds(0.5, 1.0);
        assert!((l - 0.875).abs() < 1e-12 && (r - 1.125).abs() < 1e-12);
        assert_eq!(v.steer_from_curvature(0.5), 0.0);
    }

    #[test]
    fn rejects_bad_values() {
        assert_eq!(
            Vehicle::<f64>::front_steered(f64::NAN, 0.5, 0.5).err(),
            Some(SteerError::NonFinite)
        );
        assert_eq!(
            Vehicle::<f64>::front_steered(2.0, 1.6, 0.5).err(),
            Some(SteerError::OutOfRange)
        );
        assert_eq!(
            Vehicle::<f64>::differential(0.5, 0.0, 1.0).err(),
            Some(SteerError::OutOfRange)
        );
        let v = Vehicle::<f64>::differential(0.5, 1.0, 1.0).unwrap();
        assert!(v.with_max_speed(-1.0).is_err());
        assert!(v.with_control_point(f64::INFINITY).is_err());
        assert_eq!(v.curvature_from_steer(f64::NAN), 0.0);
    }
}
