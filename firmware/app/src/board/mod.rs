//! The board: everything a port to another board rewrites (UARTs, the
//! timer, the PWM and the operator inputs, the interrupt vectors).
//!
//! * [`mps2`]: the emulated MPS2 AN385 / AN386 boards (Cortex-M3, M4F, and
//!   the M0 build on the AN385), interrupt-driven or in link mode;
//! * `microbit` (feature `board-microbit`, with `link`): the emulated
//!   micro:bit, a Cortex-M0 core, link mode only.
//!
//! [`active`] is the one this build runs on.

pub mod panel;
pub mod stack;

#[cfg(feature = "board-microbit")]
pub mod microbit;
#[cfg(not(feature = "board-microbit"))]
pub mod mps2;

#[cfg(feature = "board-microbit")]
pub use microbit as active;
#[cfg(not(feature = "board-microbit"))]
pub use mps2 as active;

#[cfg(all(feature = "board-microbit", not(feature = "link")))]
compile_error!(
    "the micro:bit board runs the link mode only: build with --features link,board-microbit"
);
