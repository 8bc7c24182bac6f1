//! Guidance: the per-cycle call, fix in, limited steering command out.
//!
//! The cycle's input and output types ([`Fix`], [`GuidanceInput`],
//! [`Command`], [`GuidanceStatus`]), the supervisor that decides whether
//! the law may steer ([`SupervisorConfig`]), and [`Guidance`], which runs
//! tracker, law, limits, speed cap and supervisor once per control cycle.
//! Uses every layer below it ([`crate::num`], [`crate::path`],
//! [`crate::track`], [`crate::steer`], [`crate::build`]); within it,
//! `cycle` is used by `supervisor`, and both by `guidance`.
//!
//! See [`guidance`] for the order of work within one cycle and its cost,
//! and [`supervisor`] for the states and transitions.

pub(crate) mod cycle;
pub mod guidance;
pub mod supervisor;

pub use cycle::{Command, Fix, GuidanceInput, GuidanceStatus};
pub use guidance::{Guidance, FAULT_CYCLES_TO_RESTART, PROJECTION_STEPS};
pub use supervisor::SupervisorConfig;
