//! Path following for embedded controllers: a reference path made of lines,
//! arcs and clothoids, evaluated exactly, stepped along at the control rate,
//! and the vehicle projected onto it for its tracking errors.
//!
//! `no_std`, no allocation, no `unsafe`, no panics on any input: every
//! fallible call returns a typed error and leaves its state unchanged.
//!
//! ```
//! use kappaline::{PathBuilder, Pose, Segment, Tracker, TrackerConfig};
//! # fn main() -> Result<(), Box<dyn core::error::Error>> {
//! // A 40 m row, a 6 m radius turn-around and the return row.
//! let path = PathBuilder::<f32, 8>::new(Pose::new(0.0, 0.0, 0.0))?
//!     .push(Segment::line(40.0)?)?
//!     .push(Segment::arc(core::f32::consts::PI * 6.0, 1.0 / 6.0)?)?
//!     .push(Segment::line(40.0)?)?
//!     .build()?;
//! let mut tracker = Tracker::new(TrackerConfig::field())?;
//! let t = tracker.update(&path, &Pose::new(12.0, -0.3, 0.05))?;
//! assert!((t.station - 12.0).abs() < 1e-4);
//! assert!((t.cross_track + 0.3).abs() < 1e-4); // right of the path: negative
//! # Ok(()) }
//! ```
//!
//! | type | what it is |
//! |---|---|
//! | [`Segment`] | length, start curvature, sharpness, driving direction |
//! | [`PathBuilder`], [`Path`] | up to `N` segments placed at anchors computed in `f64` |
//! | [`Cursor`] | a position on the path, advanced in O(1) per step; lookahead |
//! | [`Tracker`] | windowed projection: station, cross-track, heading error, curvature |
//! | [`Guidance`] | the per-cycle call: tracker, [`SteeringLaw`], limits, speed cap, supervisor |
//! | [`PurePursuit`], [`Stanley`], [`FrenetFeedback`] | steering laws giving a curvature command |
//! | [`Vehicle`] | wheelbase or track width, steering range and rate, control point |
//! | [`fit_g1`], [`clothoid_spline`], [`corner_path`] | paths from poses and waypoints |
//! | [`Passes`], [`HeadlandTurn`] | field passes as offsets of a reference, turns between them |
//! | [`LocalFrame`], [`control_point`] | WGS84 to local east-north-up; antenna lever arm |
//! | [`check_path`] | a path against a vehicle's curvature and sharpness limits |
//! | [`Real`] | the numeric backend (`f32`, `f64`) |
//! | [`fresnel()`], [`generalized_fresnel`] | Fresnel integrals in `no_std` |
//!
//! # Conventions
//! Metres, radians, 1/m. Headings counter-clockwise from `+x`; curvature
//! positive turning left; cross-track positive left of the path.
//!
//! # Optional Cargo features
//! * `defmt`: `defmt::Format` for the public types.
//! * `fast-math`: micromath's `f32` trigonometry instead of libm's (faster,
//!   about 1e-3 accurate: not for evaluation over long segments).
//!
//! # Safety of use
//! This is not a certified safety function. A machine steered with it needs
//! an independent emergency stop and a safety case under the standards that
//! apply to it (e.g. ISO 25119, ISO 18497, ISO 3691-4, IEC 61508).

#![no_std]
#![forbid(unsafe_code)]
#![warn(missing_docs)]
#![cfg_attr(docsrs, feature(doc_cfg))]
#![warn(
    clippy::float_cmp_const,
    clippy::indexing_slicing,
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic
)]
#![cfg_attr(
    test,
    allow(clippy::unwrap_used, clippy::indexing_slicing, clippy::panic)
)]

// The path and where the vehicle is on it.
mod complex;
mod cursor;
mod error;
pub mod fresnel;
mod path;
mod pose;
mod project;
mod real;
mod segment;
mod tracker;
#[cfg_attr(feature = "fast-math", allow(dead_code))]
mod trig;

// Building paths.
mod corner;
mod feasibility;
mod fit;
mod geodesy;
mod headland;
mod lever_arm;
mod passes;

// Steering.
pub mod guidance;
mod limits;
mod speed;
pub mod steer;
pub mod supervisor;
mod vehicle;

pub use cursor::{Cursor, Travel};
pub use error::{PathError, TrackError};
pub use fresnel::{fresnel, generalized_fresnel};
pub use path::{AnchoredSegment, Continuity, Path, PathBuilder, MAX_COORDINATE};
pub use pose::{Direction, PathPoint, Pose};
pub use real::Real;
pub use segment::{Segment, SegmentKind};
pub use tracker::{TrackStatus, Tracker, TrackerConfig, Tracking, MAX_WINDOW_SEGMENTS};

pub use corner::{corner_path, Corner, CornerConfig, CornerError, TurnShape};
pub use feasibility::{check_path, FeasibilityReport, PathLimits, Violation, ViolationKind};
pub use fit::{
    clothoid_spline, estimate_headings, fit_g1, fresnel_moments, FitError, G1Fit, Waypoint,
    MAX_NEWTON_STEPS,
};
pub use geodesy::{
    Ecef, Enu, GeoError, Geodetic, LocalFrame, WGS84_A, WGS84_B, WGS84_E2, WGS84_F, WGS84_INV_F,
};
pub use headland::{
    FieldEnd, HeadlandError, HeadlandTurn, TurnKind, TurnPolicy, MAX_TURN_SEGMENTS,
};
pub use lever_arm::{control_point, ControlPoint, LeverArm, LeverArmError};
pub use passes::{
    offset_curvature, reversed_path, Pass, PassError, PassPoint, PassTracking, Passes, Side,
};

pub use guidance::{
    Command, Fix, Guidance, GuidanceInput, GuidanceStatus, FAULT_CYCLES_TO_RESTART,
    PROJECTION_STEPS,
};
pub use limits::{Limited, SteerLimiter};
pub use speed::{local_speed_limit, speed_cap, SPEED_SCAN_SEGMENTS};
pub use steer::{FrenetFeedback, PurePursuit, Stanley, SteerError, SteeringInput, SteeringLaw};
pub use supervisor::SupervisorConfig;
pub use vehicle::{Chassis, Vehicle};

/// The README's example is compiled and run as a doctest.
#[cfg(doctest)]
#[doc = include_str!("../README.md")]
struct ReadmeDoctests;
