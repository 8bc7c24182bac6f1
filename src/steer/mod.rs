//! Steering: the vehicle, the laws that turn tracking errors into a
//! curvature command, and the vehicle's limits on that command.
//!
//! [`Vehicle`] (front-steered or differential drive), [`SteeringLaw`] and
//! its implementations [`PurePursuit`], [`Stanley`] and [`FrenetFeedback`],
//! the [`SteerLimiter`] (saturation and rate) and the speed cap along the
//! path ([`speed_cap`]). Uses [`crate::num`], [`crate::path`] and
//! [`crate::track`].
//!
//! Every law implements [`SteeringLaw`]. The [`crate::Guidance`] prepares a
//! [`SteeringInput`] for it each control cycle and applies the vehicle's
//! limits to the curvature it returns.
//!
//! # The travel frame
//!
//! Laws are written for a vehicle driving forwards. On a reverse segment the
//! guidance hands them the **travel frame**: headings turned by pi (so the
//! body's back is its "front"), the speed as a magnitude, body points
//! measured along the direction of travel. The heading error and
//! cross-track error of the core's [`crate::Tracking`] already are
//! travel-frame errors (heading error against the body heading the path
//! asks for, cross-track left of the path tangent). The rear axle moves as a
//! unicycle, which is symmetric under this mirror: the body curvature is the
//! law's curvature with the sign of the driving direction,
//! `kappa_body = sign * kappa_travel`, so every law is as stable reversing
//! as forwards *in the kinematic model* (real reversing adds tyre and
//! hitch effects the model does not have).
//!
//! # Reference points
//!
//! A law names the body point it wants its errors at with
//! [`SteeringLaw::reference_point`], in metres ahead of the rear axle along
//! the direction of travel. The guidance projects that point onto the path
//! (from the control point's tracking state, a bounded Newton iteration) and
//! fills in [`SteeringInput`]. Pure pursuit and the Frenet law use the rear
//! axle (0), Stanley the steered axle (`L` ahead; reversing, a virtual axle
//! `L` behind the rear axle, see [`Stanley`]).
//!
//! Caution: these laws are not a certified safety function; keep an
//! independent emergency stop and follow the applicable standards (e.g.
//! ISO 25119, ISO 18497, ISO 3691-4, ISO 26262, IEC 61508).

mod frenet;
pub(crate) mod law;
pub(crate) mod limits;
mod pure_pursuit;
pub(crate) mod speed;
mod stanley;
pub(crate) mod vehicle;

pub use frenet::FrenetFeedback;
pub use law::{SteerError, SteeringInput, SteeringLaw};
pub use limits::{Limited, SteerLimiter};
pub use pure_pursuit::PurePursuit;
pub use speed::{local_speed_limit, speed_cap, SPEED_SCAN_SEGMENTS};
pub use stanley::Stanley;
pub use vehicle::{Chassis, Vehicle};
