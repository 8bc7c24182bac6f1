//! Numbers: the numeric backend every other layer is generic over.
//!
//! Holds [`Real`] (implemented for `f32`, `f64` and, with the `fixed-point`
//! feature, the Q32.32 type `fixed::Q32x32`), the `f32`-only
//! `sin_cos` kernel and a small private complex type. Uses nothing else in
//! the crate; every other layer may use it.

pub(crate) mod complex;
#[cfg(feature = "fixed-point")]
pub mod fixed;
pub(crate) mod real;
#[cfg_attr(feature = "fast-math", allow(dead_code))]
pub(crate) mod trig;

#[cfg(feature = "fixed-point")]
pub use fixed::Q32x32;
pub use real::Real;
