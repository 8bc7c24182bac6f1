//! From the GNSS antenna to the control point: the lever arm rotated by the
//! vehicle's heading and roll (terrain compensation).
//!
//! The lever arm is the antenna's position relative to the control point
//! (e.g. the middle of the rear axle on the ground) in body axes: `ahead`
//! along the body's forward axis, `left` to its left, `up` along its up
//! axis, metres. On a side slope the body rolls and a tall mast leans
//! downhill: the antenna is no longer above the wheels' track. The antenna
//! position minus the rotated lever arm is the control point.
//!
//! Rotation: body to local level frame is `R = Rz(heading) Rx(roll)`, with
//! `heading` counter-clockwise from `+x` and `roll` right-handed about the
//! forward axis (positive: left side up, so the mast leans right). Pitch is
//! not included: on a slope along the direction of travel its effect is
//! along the path, where guidance is insensitive; add it with an inertial
//! unit if stations must be exact.
//!
//! ```
//! use kappaline::{control_point, LeverArm};
//! # fn main() -> Result<(), kappaline::LeverArmError> {
//! // A 3 m mast straight above the control point, 5 degrees of roll
//! // (left side up), driving along +x: the antenna sits 3 sin(5 deg) = 0.26 m
//! // to the right of the wheels, so the control point is 0.26 m to its left.
//! let arm = LeverArm::new(0.0, 0.0, 3.0)?;
//! let c = control_point((100.0, 50.0, 3.0), 0.0, 5f64.to_radians(), &arm)?;
//! assert!((c.y - 50.0 - 3.0 * 5f64.to_radians().sin()).abs() < 1e-12);
//! assert!((c.x - 100.0).abs() < 1e-12);
//! # Ok(()) }
//! ```

use crate::num::real::Real;

/// Why a lever-arm correction was refused.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum LeverArmError {
    /// An input is NaN or infinite.
    NonFinite,
    /// The roll is not within (-pi/2, pi/2): the vehicle would be on its side.
    RollOutOfRange,
}

impl core::fmt::Display for LeverArmError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            LeverArmError::NonFinite => f.write_str("non-finite lever-arm input"),
            LeverArmError::RollOutOfRange => f.write_str("roll outside (-90, 90) degrees"),
        }
    }
}

impl core::error::Error for LeverArmError {}

/// The antenna's offset from the control point in body axes, metres.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LeverArm<T> {
    ahead: T,
    left: T,
    up: T,
}

impl<T: Real> LeverArm<T> {
    /// The antenna `ahead` metres in front of the control point (negative:
    /// behind), `left` metres to its left and `up` metres above it.
    ///
    /// # Errors
    /// [`LeverArmError::NonFinite`] for NaN or infinite values.
    pub fn new(ahead: T, left: T, up: T) -> Result<Self, LeverArmError> {
        if ahead.is_finite() && left.is_finite() && up.is_finite() {
            Ok(Self { ahead, left, up })
        } else {
            Err(LeverArmError::NonFinite)
        }
    }
    /// Metres ahead.
    pub fn ahead(&self) -> T {
        self.ahead
    }
    /// Metres left.
    pub fn left(&self) -> T {
        self.left
    }
    /// Metres up.
    pub fn up(&self) -> T {
        self.up
    }
}

/// The control point in the local frame, metres.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ControlPoint<T> {
    /// East (first) coordinate, metres.
    pub x: T,
    /// North (second) coordinate, metres.
    pub y: T,
    /// Height, metres (antenna height minus the rotated arm's vertical part).
    pub z: T,
}

/// The control point under an antenna at `antenna = (x, y, z)` metres (local
/// frame), for body `heading` (rad, counter-clockwise from `+x`) and `roll`
/// (rad, positive left side up).
///
/// Cost: two `sin_cos`.
///
/// # Errors
/// [`LeverArmError::NonFinite`], [`LeverArmError::RollOutOfRange`].
pub fn control_point<T: Real>(
    antenna: (T, T, T),
    heading: T,
    roll: T,
    arm: &LeverArm<T>,
) -> Result<ControlPoint<T>, LeverArmError> {
    let all = [antenna.0, antenna.1, antenna.2, heading, roll];
    if all.iter().any(|v| !v.is_finite()) {
        return Err(LeverArmError::NonFinite);
    }
    if roll.abs() >= T::HALF * T::PI {
        return Err(LeverArmError::RollOutOfRange);
    }
    let (d_east, d_north, d_up) = rotated_arm(heading, roll, arm);
    Ok(ControlPoint {
        x: antenna.0 - d_east,
        y: antenna.1 - d_north,
        z: antenna.2 - d_up,
    })
}

/// The lever arm in the local level frame: `Rz(heading) Rx(roll) (ahead, left, up)`.
fn rotated_arm<T: Real>(heading: T, roll: T, arm: &LeverArm<T>) -> (T, T, T) {
    let (sr, cr) = roll.sin_cos();
    let (sh, ch) = heading.sin_cos();
    // Rx(roll): the left axis tilts up, the up axis tilts to the right.
    let lateral = arm.left * cr - arm.up * sr;
    let vertical = arm.left * sr + arm.up * cr;
    (
        arm.ahead * ch - lateral * sh,
        arm.ahead * sh + lateral * ch,
        vertical,
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn refuses_bad_input() {
        let arm = LeverArm::new(0.0f64, 0.0, 3.0).unwrap();
        assert_eq!(
            control_point((0.0, 0.0, 0.0), 0.0, 1.6, &arm),
            Err(LeverArmError::RollOutOfRange)
        );
        assert_eq!(
            control_point((f64::NAN, 0.0, 0.0), 0.0, 0.0, &arm),
            Err(LeverArmError::NonFinite)
        );
        assert_eq!(
            LeverArm::new(0.0, f64::INFINITY, 1.0),
            Err(LeverArmError::NonFinite)
        );
    }

    #[test]
    fn level_ground_is_a_plain_rotation() {
        // No roll: the arm rotates with the heading only (2-D rotation).
        let arm = LeverArm::new(1.5f64, -0.5, 2.0).unwrap();
        let h = 0.7f64;
        let c = control_point((10.0, 20.0, 2.0), h, 0.0, &arm).unwrap();
        let (s, co) = (libm::sin(h), libm::cos(h));
        assert!((c.x - (10.0 - (1.5 * co + 0.5 * s))).abs() < 1e-12);
        assert!((c.y - (20.0 - (1.5 * s - 0.5 * co))).abs() < 1e-12);
        assert!(c.z.abs() < 1e-12);
    }
}
