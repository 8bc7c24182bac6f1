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
//! let mut tracker = Tracker::new(TrackerConfig::tractor())?;
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
//! | [`Guidance`] | the per-cycle call: tracker, [`SteeringLaw`], limits, speed cap, supervisor, operator controls |
//! | [`Micros`], [`FixUpdate`], [`FixQuality`] | the integer time base; new fix, no new fix or none; the receiver's rating |
//! | [`PurePursuit`], [`Stanley`], [`FrenetFeedback`] | steering laws giving a curvature command |
//! | [`Vehicle`] | wheelbase or track width, steering range and rate, control point |
//! | [`fit_g1`], [`clothoid_spline`], [`corner_path`] | paths from poses and waypoints |
//! | [`Passes`], [`HeadlandTurn`] | field passes as offsets of a reference, turns between them |
//! | [`LocalFrame`], [`control_point`] | WGS84 to local east-north-up; antenna lever arm |
//! | [`check_path`] | a path against a vehicle's curvature and sharpness limits |
//! | [`Real`] | the numeric backend (`f32`, `f64`) |
//! | [`fresnel()`], [`generalized_fresnel`] | Fresnel integrals in `no_std` |
//! | [`io::blob`] | the path blob: [`io::blob::encode`], chunk-by-chunk [`io::blob::Decoder`] |
//!
//! # Conventions
//! Metres, radians, 1/m. Headings counter-clockwise from `+x`; curvature
//! positive turning left; cross-track positive left of the path.
//!
//! # Optional Cargo features
//! * `defmt`: `defmt::Format` for the public types.
//! * `fast-math`: micromath's `f32` trigonometry instead of libm's (faster,
//!   about 1e-3 accurate: not for evaluation over long segments).
//! * `nmea`: `io::nmea`, the NMEA 0183 reader and epoch assembler.
//! * `embedded-hal`: `io::actuator`, steering and wheel outputs over
//!   embedded-hal 1.0.
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

// The layers, lowest first. A layer uses only the layers above it in this
// list (`.ci/layers` checks it); one control cycle runs
// num -> path -> track -> steer -> guide, with io at the edges.
pub mod build;
pub mod geo;
pub mod guide;
pub mod io;
pub mod num;
pub mod path;
pub mod steer;
pub mod track;

pub use build::*;
pub use geo::*;
pub use guide::{
    Command, Fix, FixQuality, FixUpdate, Guidance, GuidanceInput, GuidanceStatus, Micros, Reason,
    Solution, SupervisorConfig, FAULT_CYCLES_TO_RESTART, MICROS_PER_SECOND, PROJECTION_STEPS,
};
pub use num::*;
pub use path::{
    fresnel, generalized_fresnel, AnchoredBuilder, AnchoredSegment, Continuity, Cursor, Direction,
    Path, PathBuilder, PathError, PathPoint, Pose, Segment, SegmentKind, Travel, MAX_COORDINATE,
    MAX_SEGMENT_LENGTH,
};
pub use steer::{
    local_speed_limit, speed_cap, Chassis, FrenetFeedback, Limited, PurePursuit, Stanley,
    SteerError, SteerLimiter, SteeringInput, SteeringLaw, Vehicle, SPEED_SCAN_SEGMENTS,
};
pub use track::*;

// The module paths of earlier releases, kept so code written against them
// still compiles (`kappaline::fresnel` is the module and the function, as
// before, through the `path` re-export above).
#[doc(hidden)]
pub use guide::{guidance, supervisor};

/// The README's example is compiled and run as a doctest.
#[cfg(doctest)]
#[doc = include_str!("../README.md")]
struct ReadmeDoctests;
