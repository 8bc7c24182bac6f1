//! Numbers: the numeric backend every other layer is generic over.
//!
//! Holds [`Real`] (implemented for `f32` and `f64`), the `f32`-only
//! `sin_cos` kernel and a small private complex type. Uses nothing else in
//! the crate; every other layer may use it.

pub(crate) mod complex;
pub(crate) mod real;
#[cfg_attr(feature = "fast-math", allow(dead_code))]
pub(crate) mod trig;

pub use real::Real;
