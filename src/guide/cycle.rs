//! What goes into one control cycle and what comes out of it: the fix and
//! its quality, the cycle's input, the status, its reason and the command. The supervisor and the
//! guidance both speak these types, so they live below both.

use crate::guide::time::Micros;
use crate::num::real::Real;
use crate::track::tracker::Tracking;

/// The kind of position solution a receiver reports, lowest first in
/// [`Solution::rank`] order (the order a minimum in
/// [`crate::SupervisorConfig::min_solution`] is judged by).
///
/// The names follow the GGA quality indicator of NMEA 0183 (see
/// [`Solution::from_gga_indicator`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Solution {
    /// No position (GGA indicator 0). A fix of this kind is never used.
    Invalid,
    /// The source gives no rating (a sensor without one, a test). Passes
    /// only when no minimum solution is configured.
    #[default]
    Unrated,
    /// Simulator output (indicator 8).
    Simulated,
    /// Position entered by hand (indicator 7).
    Manual,
    /// Dead reckoning by the receiver (indicator 6).
    Estimated,
    /// Code solution without corrections (indicator 1; also 3, PPS).
    Autonomous,
    /// Code solution with differential corrections (indicator 2).
    Differential,
    /// Carrier-phase solution, ambiguities float (indicator 5).
    Float,
    /// Carrier-phase solution, ambiguities fixed (indicator 4).
    Fixed,
}

impl Solution {
    /// Rank for the minimum-solution gate: 0 for `Invalid` up to 8 for
    /// `Fixed`, in declaration order.
    pub const fn rank(self) -> u8 {
        self as u8
    }

    /// The solution of a GGA quality indicator (NMEA 0183, field 6 of GGA:
    /// 0 invalid, 1 GPS, 2 differential, 3 PPS, 4 RTK fixed, 5 RTK float,
    /// 6 estimated, 7 manual input, 8 simulator); `None` for other digits.
    pub const fn from_gga_indicator(digit: u8) -> Option<Self> {
        Some(match digit {
            0 => Solution::Invalid,
            1 | 3 => Solution::Autonomous,
            2 => Solution::Differential,
            4 => Solution::Fixed,
            5 => Solution::Float,
            6 => Solution::Estimated,
            7 => Solution::Manual,
            8 => Solution::Simulated,
            _ => return None,
        })
    }

    /// `true` if this solution meets the minimum `min` (an `Unrated` fix
    /// meets none: nothing shows it is good enough).
    pub const fn meets(self, min: Solution) -> bool {
        !matches!(self, Solution::Unrated | Solution::Invalid) && self.rank() >= min.rank()
    }
}

/// What the receiver says about a fix. Every field is optional except the
/// solution kind: sources differ in what they report.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FixQuality<T> {
    /// The kind of solution.
    pub solution: Solution,
    /// Satellites used in the solution.
    pub satellites: Option<u8>,
    /// Horizontal dilution of precision (dimensionless, > 0).
    pub hdop: Option<T>,
    /// Age of the differential corrections, s (>= 0).
    pub correction_age: Option<T>,
    /// Position standard deviation, metres: the larger of the north and
    /// east 1-sigma errors the receiver estimates (GST in NMEA 0183).
    pub sigma: Option<T>,
}

/// A position fix of the control point.
///
/// ```
/// use kappaline::{Fix, Micros};
/// // 12.5 m east, 3 m north, heading north-east, 2 m/s, taken at t = 4 s.
/// let fix = Fix::new(12.5f32, 3.0, core::f32::consts::FRAC_PI_4, 2.0, Micros(4_000_000));
/// assert_eq!(fix.quality.solution, kappaline::Solution::Unrated);
/// ```
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
    /// When the position was measured, on the clock of `now` (the
    /// receiver's epoch mapped to it, not the time the fix arrived).
    pub time: Micros,
    /// The receiver's rating of the fix.
    pub quality: FixQuality<T>,
}

impl<T: Real> Fix<T> {
    /// A fix of position (m), heading (rad), speed (m/s) and time, without
    /// a quality rating ([`Solution::Unrated`]).
    pub fn new(x: T, y: T, heading: T, speed: T, time: Micros) -> Self {
        Self {
            x,
            y,
            heading,
            speed,
            time,
            quality: FixQuality {
                solution: Solution::Unrated,
                satellites: None,
                hdop: None,
                correction_age: None,
                sigma: None,
            },
        }
    }

    /// The same fix with the receiver's rating.
    #[must_use]
    pub fn with_quality(self, quality: FixQuality<T>) -> Self {
        Self { quality, ..self }
    }
}

/// What the receiver gave this cycle. Control usually runs faster than the
/// receiver, so most cycles have no *new* fix: that is not the same as
/// having none.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum FixUpdate<T> {
    /// A fix that arrived since the last cycle.
    New(Fix<T>),
    /// Nothing new since the last cycle: the guidance dead-reckons from the
    /// last new fix while it is younger than `max_fix_age`, and keeps
    /// `Following`.
    Unchanged,
    /// The receiver reports no position (or is silent): treated as a
    /// missing fix at once (`Degraded`, then `Lost`).
    #[default]
    NoFix,
}

/// One control cycle's input.
///
/// ```
/// use kappaline::{Fix, FixUpdate, GuidanceInput, Micros};
/// let fix = Fix::new(1.0f32, 2.0, 0.0, 1.5, Micros(990_000));
/// // A cycle at t = 1 s with a new fix, 50 ms (20 Hz) control period:
/// let input = GuidanceInput::new(FixUpdate::New(fix), Micros(1_000_000), 50_000);
/// // The next cycle, no new fix yet:
/// let next = GuidanceInput::<f32>::new(FixUpdate::Unchanged, Micros(1_050_000), 50_000);
/// assert!(!input.manual_override && !next.manual_override);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct GuidanceInput<T> {
    /// This cycle's fix, if a new one arrived (see [`FixUpdate`]).
    pub fix: FixUpdate<T>,
    /// Time now (monotonic, wrapping; see [`Micros`]).
    pub now: Micros,
    /// Control period, us (> 0; at most 2^31 - 1).
    pub period_us: u32,
    /// `true` while the operator steers by hand (a wheel or joystick
    /// sensor the firmware reads): guidance disengages at once, into
    /// `Standby`, until [`crate::Guidance::engage`].
    pub manual_override: bool,
}

impl<T> GuidanceInput<T> {
    /// A cycle's input without manual override.
    pub fn new(fix: FixUpdate<T>, now: Micros, period_us: u32) -> Self {
        Self {
            fix,
            now,
            period_us,
            manual_override: false,
        }
    }
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
    /// Holding the last command for a short time (missing, stale, non-finite,
    /// jumped or poor fix: see [`Command::reason`]).
    Degraded,
    /// Off the path or without usable fixes for too long; straightening and
    /// requesting a stop.
    Lost,
    /// At the end of an open path; holding the steering and requesting a stop.
    EndOfPath,
    /// Invalid `now`/`period_us`; holding the steering and requesting a stop.
    Fault,
    /// Disengaged (by [`crate::Guidance::standby`] or a manual override):
    /// no steering output (neutral), stop request; the tracker follows the
    /// fixes so engaging needs no new acquisition.
    Standby,
}

/// Why the guidance is not simply following: the cause behind a
/// `Degraded`, `Lost`, `Fault` or `Standby` status.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum Reason {
    /// The receiver reports no position ([`FixUpdate::NoFix`], or a fix of
    /// [`Solution::Invalid`]).
    NoFix,
    /// The last fix is older than `max_fix_age` (or stamped too far ahead).
    StaleFix,
    /// A fix with a non-finite field, or a time going backwards.
    BadFix,
    /// The fix disagrees with dead reckoning from the last accepted one.
    Jump,
    /// The solution is below `min_solution`.
    LowSolution,
    /// The position sigma is above `max_sigma` (or missing while required).
    LargeSigma,
    /// Cross-track or heading error beyond its limit.
    OffLimits,
    /// The tracker lost the path (or the whole-path search found it
    /// nowhere within `lost_distance`).
    PathLost,
    /// The whole-path search is still running (a bounded part of it each
    /// cycle; see [`crate::Tracker::acquire_step`]).
    Searching,
    /// `now` or the period is invalid, or time went backwards.
    BadTime,
    /// Disengaged by [`crate::Guidance::standby`] (or never engaged).
    Standby,
    /// Disengaged by a manual override.
    ManualOverride,
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
    /// The cause when the status is not `Following`, `Acquiring` or
    /// `EndOfPath` (for `Lost`, what led there; `None` otherwise).
    pub reason: Option<Reason>,
    /// The control point's tracking state on the current leg, when known.
    /// `foot.direction` is the direction to drive in.
    pub tracking: Option<Tracking<T>>,
}

/// `true` if the tracking state a command reports is finite (or absent).
pub(crate) fn tracking_is_finite<T: Real>(t: Option<&Tracking<T>>) -> bool {
    t.is_none_or(|t| {
        t.station.is_finite()
            && t.cross_track.is_finite()
            && t.heading_error.is_finite()
            && t.curvature.is_finite()
    })
}
