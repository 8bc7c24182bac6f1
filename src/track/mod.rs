//! Tracking: where the vehicle is relative to the path, cycle after cycle.
//!
//! The [`Tracker`] keeps the last foot point, projects the control point
//! inside a window around it and reports station, cross-track error,
//! heading error, curvature at the foot and ahead, and a status. Uses
//! [`crate::num`] and [`crate::path`].

pub(crate) mod error;
pub(crate) mod foot;
pub(crate) mod tracker;

pub use error::TrackError;
pub use foot::{CLOTHOID_REACH, MAX_REACH, MAX_TERMS, MAX_TURN};
pub use tracker::{
    Acquisition, TrackStatus, Tracker, TrackerConfig, Tracking, ACQUIRE_PIECE, ACQUIRE_WORK,
    MAX_WINDOW_SEGMENTS, NEWTON_STEPS,
};
