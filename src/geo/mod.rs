//! Geodesy: from a receiver's coordinates to the local plane the path lives in.
//!
//! WGS84 to ECEF to local east-north-up ([`LocalFrame`]) and the antenna's
//! lever arm to the control point ([`control_point`]). Uses only
//! [`crate::num`].

pub(crate) mod geodesy;
pub(crate) mod lever_arm;

pub use geodesy::{
    Ecef, Enu, GeoError, Geodetic, LocalFrame, WGS84_A, WGS84_B, WGS84_E2, WGS84_F, WGS84_INV_F,
};
pub use lever_arm::{control_point, ControlPoint, LeverArm, LeverArmError};
