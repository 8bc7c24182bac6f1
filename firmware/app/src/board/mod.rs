//! The board: everything a port to another board rewrites (UARTs, the
//! timer, the PWM and the operator inputs, the interrupt vectors).

pub mod mps2;
