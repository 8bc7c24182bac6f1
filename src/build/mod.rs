//! Building paths: from poses, waypoints and field layouts to a [`crate::Path`].
//!
//! G1 clothoid fitting and splines ([`fit_g1`], [`clothoid_spline`]),
//! corners within a radius and sharpness ([`corner_path`]), field passes as
//! offsets of a reference ([`Passes`]), headland turns between them
//! ([`HeadlandTurn`]) and feasibility against a vehicle ([`check_path`]).
//! Runs at build time, on the host or once on the target; not on the
//! per-cycle path. Uses [`crate::num`], [`crate::path`], [`crate::track`]
//! (a pass is tracked on its reference) and [`crate::steer`] (the vehicle's
//! limits).

pub(crate) mod corner;
pub(crate) mod feasibility;
pub(crate) mod fit;
pub(crate) mod headland;
pub(crate) mod passes;

pub use corner::{corner_path, Corner, CornerConfig, CornerError, TurnShape};
pub use feasibility::{check_path, FeasibilityReport, PathLimits, Violation, ViolationKind};
pub use fit::{
    clothoid_spline, estimate_headings, fit_g1, fresnel_moments, FitError, G1Fit, Waypoint,
    MAX_NEWTON_STEPS,
};
pub use headland::{
    FieldEnd, HeadlandError, HeadlandTurn, TurnKind, TurnPolicy, MAX_TURN_SEGMENTS,
};
pub use passes::{
    offset_curvature, reversed_path, Pass, PassError, PassPoint, PassTracking, Passes, Side,
};
