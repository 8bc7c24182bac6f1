//! Stanley (G. M. Hoffmann, C. J. Tomlin, M. Montemerlo, S. Thrun,
//! "Autonomous Automobile Trajectory Tracking for Off-Road Driving:
//! Controller Design, Experimental Validation and Racing", American Control
//! Conference, 2007), kinematic form with the softening term.
//!
//! The law sets the front wheels' direction relative to the path at the
//! front axle: the heading error there is cancelled and a term pulls the
//! front axle onto the path. In the paper's notation
//! `delta = psi + atan(k e / v)`, clipped to the steering range, with `e`
//! the front axle's cross-track error; for low speeds the softened
//! `atan(k e / (k_soft + v))`. In this crate's signs (cross-track and
//! heading error positive left/counter-clockwise, steer positive left):
//!
//! ```text
//! delta = -theta_f - atan(k e_f / (k_soft + v)),    kappa = tan(delta) / L
//! ```
//!
//! `e_f`, `theta_f` are the cross-track and heading errors of the front
//! axle (the guidance projects it onto the path), `kappa` the rear axle's
//! curvature for that steering angle (kinematic bicycle).
//!
//! # Convergence (derived here from the kinematic model)
//!
//! The front axle moves along the wheels, at `theta_f + delta` to the path,
//! so on a straight path `de_f/dt = v sin(theta_f + delta)
//! = -v k e_f / sqrt((k_soft + v)^2 + (k e_f)^2)`: `e_f` decreases
//! monotonically whatever its size, and for small errors exponentially at
//! rate `k v / (k_soft + v)` (1/s; `k` itself when `v >> k_soft`), as long as
//! the command stays inside the steering range. The paper proves this
//! global convergence for its kinematic model (from memory: sec. III,
//! without the softening term); `k > 0`, `k_soft > 0` is all it asks.
//! The rear axle follows the front axle with a lag of about one wheelbase.
//!
//! # Arcs and the control point (an addition of this crate)
//!
//! On an arc, the law above puts the *front axle* on the path; the rear
//! axle then runs inside it by about `L^2 kappa / 2` (15.6 cm for
//! `L = 2.5 m`, `R = 20 m`). With `rear_offset` enabled (the presets) the
//! front axle is instead steered onto the concentric circle it lies on when
//! the control point `a` is on the path: radius `sqrt(R^2 - a^2 + L^2)`, an
//! offset `e_ss = kappa (a^2 - L^2) / (1 + sqrt(1 + kappa^2 (L^2 - a^2)))`,
//! and the law uses `e_f - e_ss`. The heading error is unchanged (concentric
//! circles share their normals), so the paper's convergence argument holds
//! for the shifted circle.
//!
//! # Reversing
//!
//! The front wheels trail when reversing, and the law referred to the
//! trailing axle is unstable. In the travel frame the guidance refers it to
//! a virtual axle `L` *behind* the rear axle (ahead in the travel
//! direction) and converts with `kappa = tan(delta) / L`: for the rear
//! axle, which moves as a unicycle, that is exactly a forward-driven
//! bicycle.

use crate::num::real::{c, Real};
use crate::steer::law::{SteerError, SteeringInput, SteeringLaw};
use crate::steer::vehicle::{atan, tan};

/// Largest angle the law computes with before `tan`, rad (80 degrees); the
/// vehicle limiter then clips to the real steering range.
const DELTA_CEILING: f64 = 1.396_263_401_595_463_6;

/// Stanley steering with the softening term. See the module docs.
///
/// ```
/// use kappaline::{Stanley, SteeringInput, SteeringLaw};
/// # fn main() -> Result<(), kappaline::SteerError> {
/// // Hoffmann, Tomlin, Montemerlo, Thrun (ACC 2007), delta = psi + atan(k e / (k_soft + v)):
/// // psi = 0 and k e = k_soft + v give delta = atan(1) = pi / 4.
/// let st = Stanley::<f64>::new(2.0, 1.0, 2.5)?;
/// let (k, soft, v) = (2.0, 1.0, 2.0);
/// let e = -(soft + v) / k; // right of the path: steer left
/// assert!((st.steer_angle(e, 0.0, v) - core::f64::consts::FRAC_PI_4).abs() < 1e-12);
/// # Ok(()) }
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Stanley<T> {
    gain: T,
    softening: T,
    virtual_wheelbase: T,
    rear_offset: bool,
}

impl<T: Real> Stanley<T> {
    /// Stanley with gain `k` (1/s, positive), softening speed `k_soft` (m/s,
    /// positive) and the wheelbase used for a differential-drive robot, which
    /// has no steered axle (metres, positive; front-steered vehicles use their own).
    /// The rear-offset correction is on; see [`Stanley::with_rear_offset`].
    ///
    /// # Errors
    /// [`SteerError::NonFinite`] or [`SteerError::OutOfRange`].
    pub fn new(gain: T, softening: T, virtual_wheelbase: T) -> Result<Self, SteerError> {
        let all = [gain, softening, virtual_wheelbase];
        if all.iter().any(|v| !v.is_finite()) {
            return Err(SteerError::NonFinite);
        }
        if all.iter().any(|v| *v <= T::ZERO) {
            return Err(SteerError::OutOfRange);
        }
        Ok(Self {
            gain,
            softening,
            virtual_wheelbase,
            rear_offset: true,
        })
    }

    /// Turns the arc correction for the control point on or off (off: the
    /// paper's law exactly, the front axle on the path).
    #[must_use]
    pub fn with_rear_offset(mut self, on: bool) -> Self {
        self.rear_offset = on;
        self
    }

    /// A field tractor at 1-4 m/s: `k = 1.0 /s`, `k_soft = 1.0 m/s`,
    /// virtual wheelbase 2.5 m.
    pub fn tractor() -> Self {
        Self {
            gain: c(1.0),
            softening: c(1.0),
            virtual_wheelbase: c(2.5),
            rear_offset: true,
        }
    }

    /// A small robot at 0.3-2 m/s: `k = 2.5 /s`, `k_soft = 0.3 m/s`,
    /// virtual wheelbase 0.4 m.
    pub fn small_robot() -> Self {
        Self {
            gain: c(2.5),
            softening: c(0.3),
            virtual_wheelbase: c(0.4),
            rear_offset: true,
        }
    }

    /// A road vehicle at 5-15 m/s: `k = 0.8 /s`, `k_soft = 2.0 m/s`,
    /// virtual wheelbase 3.0 m: a softer pull than the tractor's, so that
    /// an offset is taken out over some seconds of travel rather than a
    /// wheelbase or two (common practice at road speeds).
    pub fn road_vehicle() -> Self {
        Self {
            gain: c(0.8),
            softening: c(2.0),
            virtual_wheelbase: c(3.0),
            rear_offset: true,
        }
    }

    /// The paper's steering angle, rad, positive left: `-theta_f -
    /// atan(k e_f / (k_soft + v))` for front-axle cross-track `e_f` (m),
    /// heading error `theta_f` (rad) and travel speed `v` (m/s, its
    /// magnitude is used), limited to +-80 degrees.
    pub fn steer_angle(&self, e_f: T, theta_f: T, v: T) -> T {
        let speed = if v.is_finite() { v.abs() } else { T::ZERO };
        let pull = atan(self.gain * e_f / (self.softening + speed));
        let limit = c::<T>(DELTA_CEILING);
        (-theta_f - pull).clamp_to(-limit, limit)
    }

    /// Where the steered axle sits on the arc when the control point `a`
    /// (m ahead of the rear axle) is on it: cross-track `e_ss` for an axle
    /// `l` ahead of the rear axle, curvature `kappa` (see the module docs).
    pub fn arc_offset(kappa: T, a: T, l: T) -> T {
        let inside = (T::ONE + kappa * kappa * (l * l - a * a)).max(T::ZERO);
        kappa * (a * a - l * l) / (T::ONE + inside.sqrt())
    }
}

impl<T: Real> SteeringLaw<T> for Stanley<T> {
    /// The steered axle: `L` (or the virtual wheelbase) ahead of the rear
    /// axle in the direction of travel.
    fn reference_point(&self, wheelbase: Option<T>) -> T {
        wheelbase.unwrap_or(self.virtual_wheelbase)
    }

    fn curvature(&mut self, input: &SteeringInput<T>) -> T {
        let l = input.reference_point;
        let has_axle = l > T::ZERO;
        if !has_axle {
            return T::ZERO;
        }
        let target = if self.rear_offset {
            Self::arc_offset(input.curvature, input.control_point, l)
        } else {
            T::ZERO
        };
        let delta = self.steer_angle(input.cross_track - target, input.heading_error, input.speed);
        tan(delta) / l
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn check_value_pi_over_4() {
        // Hoffmann, Tomlin, Montemerlo, Thrun (ACC 2007), delta = psi + atan(k e / (k_soft + v)):
        // psi = 0, k e = k_soft + v -> delta = atan(1) = pi/4.
        let st = Stanley::<f64>::new(1.5, 0.5, 2.0).unwrap();
        let v = 3.0;
        let e = (0.5 + v) / 1.5;
        assert!((st.steer_angle(-e, 0.0, v) - core::f64::consts::FRAC_PI_4).abs() < 1e-12);
        assert!((st.steer_angle(e, 0.0, v) + core::f64::consts::FRAC_PI_4).abs() < 1e-12);
        // Zero cross-track: the heading error alone is cancelled.
        assert!((st.steer_angle(0.0, 0.1, v) + 0.1).abs() < 1e-15);
    }

    #[test]
    fn arc_offset_is_concentric_circle() {
        // Rear axle on R = 20 m (a = 0), L = 2.5 m: the front axle runs on
        // sqrt(R^2 + L^2), i.e. sqrt(406.25) - 20 = 0.1556 m outside.
        let e = Stanley::<f64>::arc_offset(0.05, 0.0, 2.5);
        assert!((e + (libm::sqrt(406.25) - 20.0)).abs() < 1e-12);
        // Control point on the front axle: no offset.
        assert!(Stanley::<f64>::arc_offset(0.05, 2.5, 2.5).abs() < 1e-15);
        assert_eq!(Stanley::<f64>::arc_offset(0.0, 0.0, 2.5), 0.0);
    }

    #[test]
    fn rejects_bad_gains() {
        assert!(Stanley::<f64>::new(0.0, 1.0, 1.0).is_err());
        assert!(Stanley::<f64>::new(1.0, f64::NAN, 1.0).is_err());
    }
}
