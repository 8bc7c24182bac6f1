//! Pure pursuit (R. C. Coulter, "Implementation of the Pure Pursuit Path
//! Tracking Algorithm", Carnegie Mellon University, CMU-RI-TR-92-01, 1992).
//!
//! The law steers the rear axle onto the circle that is tangent to the body
//! axis at the rear axle and passes through a goal point on the path one
//! lookahead distance ahead. With the goal at `(ahead, left) = (x_g, y_g)`
//! in the vehicle frame and `l^2 = x_g^2 + y_g^2`, the curvature is
//! (Coulter 1992, "gamma = 2x / l^2" (section not checked here) with his `x` the lateral offset)
//!
//! ```text
//! kappa = 2 y_g / l^2     (equivalently 2 sin(alpha) / l, alpha the bearing of the goal)
//! ```
//!
//! # Lookahead schedule
//!
//! `l(v) = clamp(base + time * v, min, max)`: a lookahead that grows with
//! speed keeps the response the same in *time*; Coulter discusses the
//! trade-off (short: oscillation; long: corner cutting) but gives no
//! schedule, so the linear one is common practice.
//!
//! # Stability (derived here, small errors on a straight line)
//!
//! With the goal on the path `l` ahead, cross-track `y` and heading error
//! `theta`: `y_g = -(y + l theta)`, so in distance `s` along the path
//! `y'' + (2 / l) y' + (2 / l^2) y = 0`: natural frequency `sqrt(2) / l`
//! (1/m), damping ratio `1/sqrt(2)` whatever `l`, stable for any `l > 0`.
//! Steering lag, rate limits and dead time reduce the margin; keep `l`
//! several times the distance driven during the steering lag. On a circle
//! of radius `R > l/2` with the rear axle on it, the goal is on the same
//! circle, so the command is exactly the path curvature: no steady-state
//! error for the rear axle (a control point elsewhere on the body sits off
//! the path by about `a^2 kappa / 2`).

use crate::num::real::{c, Real};
use crate::steer::law::{SteerError, SteeringInput, SteeringLaw};

/// Pure pursuit with a speed-scheduled lookahead. See the module docs.
///
/// ```
/// use kappaline::{PurePursuit, SteeringInput, SteeringLaw};
/// # fn main() -> Result<(), kappaline::SteerError> {
/// let mut pp = PurePursuit::<f64>::new(5.0, 0.0, 5.0, 5.0)?;
/// // Coulter 1992: goal 1 m to the left at l = 5 m -> 2 * 1 / 25 = 0.08 1/m.
/// let goal_ahead = (25.0f64 - 1.0).sqrt();
/// let input = SteeringInput { goal: (goal_ahead, 1.0), speed: 2.0, dt: 0.05, ..Default::default() };
/// assert!((pp.curvature(&input) - 0.08).abs() < 1e-12);
/// # Ok(()) }
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PurePursuit<T> {
    base: T,
    time: T,
    min: T,
    max: T,
}

impl<T: Real> PurePursuit<T> {
    /// A pure pursuit law with lookahead `clamp(base + time * v, min, max)`:
    /// `base` metres (>= 0), `time` seconds (>= 0), `0 < min <= max` metres.
    ///
    /// # Errors
    /// [`SteerError::NonFinite`] or [`SteerError::OutOfRange`].
    pub fn new(base: T, time: T, min: T, max: T) -> Result<Self, SteerError> {
        let all = [base, time, min, max];
        if all.iter().any(|v| !v.is_finite()) {
            return Err(SteerError::NonFinite);
        }
        if base < T::ZERO || time < T::ZERO || min <= T::ZERO || max < min {
            return Err(SteerError::OutOfRange);
        }
        Ok(Self {
            base,
            time,
            min,
            max,
        })
    }

    /// A field tractor at 1-4 m/s: `l = 2 m + 1 s * v`, within 3-6 m (4 m at
    /// 2 m/s). Chosen so that 1 m offset and 0.2 rad heading error settle
    /// with under 10 % overshoot (see `tests/steering_closed_loop.rs`).
    pub fn tractor() -> Self {
        Self {
            base: c(2.0),
            time: c(1.0),
            min: c(3.0),
            max: c(6.0),
        }
    }

    /// A small robot at 0.3-2 m/s: `l = 0.4 m + 0.8 s * v`, within 0.6-2 m.
    pub fn small_robot() -> Self {
        Self {
            base: c(0.4),
            time: c(0.8),
            min: c(0.6),
            max: c(2.0),
        }
    }

    /// A road vehicle at 5-15 m/s: `l = 3 m + 0.8 s * v`, within 5-15 m
    /// (11 m at 10 m/s). A lookahead of about one second of travel is
    /// common practice at road speeds; shorter ones oscillate.
    pub fn road_vehicle() -> Self {
        Self {
            base: c(3.0),
            time: c(0.8),
            min: c(5.0),
            max: c(15.0),
        }
    }
}

impl<T: Real> SteeringLaw<T> for PurePursuit<T> {
    fn lookahead(&self, speed: T) -> T {
        let v = if speed.is_finite() {
            speed.abs()
        } else {
            T::ZERO
        };
        (self.base + self.time * v).clamp_to(self.min, self.max)
    }

    /// `2 y_g / l^2` (Coulter 1992); 0 if the goal coincides with the rear axle.
    fn curvature(&mut self, input: &SteeringInput<T>) -> T {
        let (x, y) = input.goal;
        let l2 = x * x + y * y;
        let far_enough = l2 > T::EPSILON;
        if !far_enough {
            return T::ZERO;
        }
        T::TWO * y / l2
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn coulter_check_value_and_sine_form() {
        // Coulter, CMU-RI-TR-92-01 (1992), gamma = 2x / l^2: x = 1 m, l = 5 m
        // gives 2 / 25 = 0.08 1/m; also the equivalent 2 sin(alpha) / l.
        let mut pp = PurePursuit::<f64>::tractor();
        let alpha = 0.3f64;
        let l = 4.0;
        let input = SteeringInput {
            goal: (l * libm::cos(alpha), l * libm::sin(alpha)),
            ..Default::default()
        };
        assert!((pp.curvature(&input) - 2.0 * libm::sin(alpha) / l).abs() < 1e-12);
        let input = SteeringInput {
            goal: (24f64.sqrt(), -1.0),
            ..Default::default()
        };
        assert!((pp.curvature(&input) + 0.08).abs() < 1e-12);
    }

    #[test]
    fn lookahead_schedule_and_checks() {
        let pp = PurePursuit::<f64>::tractor();
        assert_eq!(pp.lookahead(2.0), 4.0);
        assert_eq!(pp.lookahead(0.0), 3.0);
        assert_eq!(pp.lookahead(10.0), 6.0);
        assert_eq!(pp.lookahead(f64::NAN), 3.0);
        assert!(PurePursuit::<f64>::new(1.0, 0.0, 0.0, 1.0).is_err());
        assert!(PurePursuit::<f64>::new(1.0, f64::NAN, 1.0, 1.0).is_err());
    }
}
