//! Guidance: the per-cycle call, fix in, limited steering command out.
//!
//! The cycle's input and output types ([`Fix`] with its [`FixQuality`],
//! [`FixUpdate`], [`GuidanceInput`], [`Command`], [`GuidanceStatus`],
//! [`Reason`]), the integer time base ([`time::Micros`]), the operator
//! controls (engage, standby, manual override, pass, line shift), the supervisor that decides whether
//! the law may steer ([`SupervisorConfig`]), and [`Guidance`], which runs
//! tracker, law, limits, speed cap and supervisor once per control cycle.
//! Uses every layer below it ([`crate::num`], [`crate::path`],
//! [`crate::track`], [`crate::steer`], [`crate::build`]); within it,
//! `time` is used by `cycle`, `cycle` by `supervisor` and `operator`, and
//! all of them by `guidance`.
//!
//! See [`guidance`] for the order of work within one cycle and its cost,
//! and [`supervisor`] for the states and transitions.

pub(crate) mod cycle;
pub mod guidance;
pub mod operator;
pub mod supervisor;
pub mod time;

pub use cycle::{
    Command, Fix, FixQuality, FixUpdate, GuidanceInput, GuidanceStatus, Reason, Solution,
};
pub use guidance::{Guidance, FAULT_CYCLES_TO_RESTART, PROJECTION_STEPS};
pub use supervisor::SupervisorConfig;
pub use time::{Micros, MICROS_PER_SECOND};
