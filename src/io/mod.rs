//! Input and output at the edge of the controller: what crosses the
//! boundary between the library and the machine or the host.
//!
//! Empty for now. It is the home of the path blob, the link frames for the
//! host harness, receiver input and actuator outputs. It may use every
//! layer below it; nothing below uses it.
