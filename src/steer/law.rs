//! The steering-law interface: what a law sees each cycle and what it
//! returns (see the [`crate::steer`] layer docs for the travel frame).

use core::fmt;

use crate::num::real::Real;
use crate::track::error::TrackError;

/// Why a vehicle, law, limiter or guidance configuration was refused.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum SteerError {
    /// A value is NaN or infinite.
    NonFinite,
    /// A value is outside its documented range.
    OutOfRange,
    /// The tracker configuration was refused.
    Tracker(TrackError),
}

impl fmt::Display for SteerError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            SteerError::NonFinite => f.write_str("non-finite value"),
            SteerError::OutOfRange => f.write_str("value out of range"),
            SteerError::Tracker(e) => write!(f, "tracker configuration: {e}"),
        }
    }
}

impl core::error::Error for SteerError {}

impl From<TrackError> for SteerError {
    fn from(e: TrackError) -> Self {
        SteerError::Tracker(e)
    }
}

/// What a law sees each cycle, all in the travel frame (see the module docs).
///
/// Distances in metres, angles in radians, curvature in 1/m; positive
/// cross-track is left of the path, positive heading error is the body
/// turned counter-clockwise from the path, positive curvature turns left.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SteeringInput<T> {
    /// Cross-track error of the law's reference point, metres, left positive.
    pub cross_track: T,
    /// Heading error at the reference point's foot, radians in `(-pi, pi]`:
    /// travel heading minus path heading.
    pub heading_error: T,
    /// Path curvature at the reference point's foot, 1/m.
    pub curvature: T,
    /// Path sharpness there, 1/m^2.
    pub sharpness: T,
    /// Speed along the direction of travel, m/s (>= 0).
    pub speed: T,
    /// The lookahead goal point in the travel frame with its origin at the
    /// rear axle: `(ahead, left)` metres. The path point at
    /// [`SteeringLaw::lookahead`] beyond the rear axle's station (on the
    /// tangent extension past a path end or a cusp), shifted to where the
    /// rear axle runs when the control point is on the path (see
    /// [`crate::guide::guidance`]).
    pub goal: (T, T),
    /// The control point, metres ahead of the rear axle along the direction
    /// of travel (the vehicle's control point times the driving sign).
    pub control_point: T,
    /// The law's reference point, metres ahead of the rear axle along the
    /// direction of travel (what [`SteeringLaw::reference_point`] returned).
    pub reference_point: T,
    /// Control period, s (> 0).
    pub dt: T,
    /// `true` if the previous command was cut by a limit (for anti-windup).
    pub saturated: bool,
    /// Unit tangent of the path at the reference point's foot in the
    /// direction of travel, in the local plane: `(cos, sin)` of the travel
    /// heading of the path. Laws that keep state tied to the ground (the
    /// Frenet law's side-slip integral) use it; `(0, 0)` when unknown.
    pub path_direction: (T, T),
}

/// A steering law: a rear-axle curvature command from the tracking state.
///
/// Implementations must return a finite value for finite input; the
/// guidance replaces a non-finite result by its fault command anyway.
pub trait SteeringLaw<T: Real> {
    /// The body point the law wants its errors at, metres ahead of the rear
    /// axle along the direction of travel. `wheelbase` is the vehicle's
    /// (`None` for differential drive).
    fn reference_point(&self, wheelbase: Option<T>) -> T {
        let _ = wheelbase;
        T::ZERO
    }

    /// Lookahead distance from the rear axle at travel speed `speed`
    /// (m/s, >= 0), metres. The guidance sets the tracker's lookahead from
    /// it and passes the goal in [`SteeringInput::goal`]. Laws that do not
    /// look ahead return 0.
    fn lookahead(&self, speed: T) -> T {
        let _ = speed;
        T::ZERO
    }

    /// The curvature command in the travel frame, 1/m, before limits.
    fn curvature(&mut self, input: &SteeringInput<T>) -> T;

    /// Forgets internal state (integrators); called on every re-acquisition.
    fn reset(&mut self) {}
}

/// Clamps `x` to `[-limit, limit]`.
#[inline]
pub(crate) fn symmetric_clamp<T: Real>(x: T, limit: T) -> T {
    x.clamp_to(-limit, limit)
}
