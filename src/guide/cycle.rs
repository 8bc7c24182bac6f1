//! What goes into one control cycle and what comes out of it: the fix, the
//! cycle's input, the status and the command. The supervisor and the
//! guidance both speak these types, so they live below both.

use crate::num::real::Real;
use crate::track::tracker::Tracking;

/// A position fix of the control point.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Fix<T> {
    /// Control point, metres (lever-arm correction already applied).
    pub x: T,
    /// Control point, metres.
    pub y: T,
    /// Body heading, rad, counter-clockwise from `+x`.
    pub heading: T,
    /// Speed along the body axis, m/s, negative when reversing.
    pub speed: T,
    /// Time of the measurement, s (monotonic, same clock as `now`).
    pub time: T,
}

/// One control cycle's input.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct GuidanceInput<T> {
    /// The latest fix, if any arrived (repeating the last one is fine while
    /// it is younger than `max_fix_age`).
    pub fix: Option<Fix<T>>,
    /// Time now, s.
    pub now: T,
    /// Control period, s (> 0).
    pub dt: T,
}

/// What the guidance is doing, for the firmware to show and act on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum GuidanceStatus {
    /// Looking for the path; straightening and requesting a stop.
    Acquiring,
    /// Steering along the path.
    Following,
    /// Holding the last command for a short time (missing, stale, non-finite or jumped fix).
    Degraded,
    /// Off the path or without fixes for too long; straightening and requesting a stop.
    Lost,
    /// At the end of an open path; holding the steering and requesting a stop.
    EndOfPath,
    /// Invalid `now`/`dt`; holding the steering and requesting a stop.
    Fault,
}

/// One cycle's command. Every field is finite.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Command<T> {
    /// Rear-axle curvature after limits, 1/m, positive left.
    pub curvature: T,
    /// Front-wheel angle, rad, positive left (0 for differential drive).
    pub steer_angle: T,
    /// Yaw rate, rad/s: `curvature * speed` with the last measured speed.
    pub yaw_rate: T,
    /// Wheel speeds `(left, right)`, m/s: differential drive at the last
    /// measured speed clipped to `speed_limit`; `(v, v)` otherwise.
    pub wheel_speeds: (T, T),
    /// Speed limit, m/s (>= 0), from the curvature ahead and the limits; 0 requests a stop.
    pub speed_limit: T,
    /// The supervisor's status.
    pub status: GuidanceStatus,
    /// The control point's tracking state on the current leg, when known.
    /// `foot.direction` is the direction to drive in.
    pub tracking: Option<Tracking<T>>,
}

impl<T: Real> Command<T> {
    pub(crate) fn is_finite(&self) -> bool {
        let t_ok = self.tracking.is_none_or(|t| {
            t.station.is_finite()
                && t.cross_track.is_finite()
                && t.heading_error.is_finite()
                && t.curvature.is_finite()
        });
        self.curvature.is_finite()
            && self.steer_angle.is_finite()
            && self.yaw_rate.is_finite()
            && self.wheel_speeds.0.is_finite()
            && self.wheel_speeds.1.is_finite()
            && self.speed_limit.is_finite()
            && t_ok
    }
}
