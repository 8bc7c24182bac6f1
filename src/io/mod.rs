//! Input and output at the edge of the controller: what crosses the
//! boundary between the library and the machine or the host.
//!
//! * [`blob`]: the path blob, a compact versioned binary form of a path,
//!   written by [`blob::encode`] and read in chunks of any size by
//!   [`blob::Decoder`].
//!
//! It is also the home of the link frames for the host harness, receiver
//! input and actuator outputs. It may use every layer below it; nothing
//! below uses it.

pub mod blob;
