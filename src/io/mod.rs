//! Input and output at the edge of the controller: what crosses the
//! boundary between the library and the machine or the host.
//!
//! * [`blob`]: the path blob, a compact versioned binary form of a path,
//!   written by [`blob::encode`] and read in chunks of any size by
//!   [`blob::Decoder`].
//! * `nmea` (feature `nmea`): receiver input, NMEA 0183 sentences into
//!   fixes.
//! * `actuator` (feature `embedded-hal`): steering and wheel outputs over
//!   embedded-hal 1.0.
//! * [`link`]: link frames between the host harness and the device (COBS,
//!   CRC-32, sequence numbers).
//!
//! It may use every layer below it; nothing below uses it.

#[cfg(feature = "embedded-hal")]
pub mod actuator;
pub mod blob;
pub mod link;
#[cfg(feature = "nmea")]
pub mod nmea;
