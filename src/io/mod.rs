//! Input and output at the edge of the controller: what crosses the
//! boundary between the library and the machine or the host.
//!
//! * `nmea` (feature `nmea`): receiver input, NMEA 0183 sentences into
//!   fixes.
//! * `actuator` (feature `embedded-hal`): steering and wheel outputs over
//!   embedded-hal 1.0.
//!
//! It may use every layer below it; nothing below uses it.

#[cfg(feature = "embedded-hal")]
pub mod actuator;
#[cfg(feature = "nmea")]
pub mod nmea;
