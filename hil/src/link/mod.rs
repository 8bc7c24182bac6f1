//! The harness on one side of a serial line, the controller firmware on
//! the other, in lockstep (`kappaline-hil run <scenario> --link qemu`).
//!
//! * [`nmea`]: the receiver's sentences (GGA, VTG, HDT, GST) for each
//!   epoch of the sensor model, as a rig sends them to the device;
//! * [`transport`]: the byte stream to the device with bounded waits
//!   (a TCP serial port of QEMU, [`transport::Qemu`]);
//! * [`faults`]: faults injected on the frames to the device
//!   (`--link-faults`);
//! * [`device`]: [`device::LinkFirmware`], the device behind the link as
//!   a [`crate::firmware::Firmware`]: path upload, then one exchange per
//!   control cycle, with the device's cost and the round-trip time kept.
//!
//! Every wait is bounded: a timeout, a bad frame, a frame out of sequence
//! or a device that restarted is a [`device::LinkFailure`] with a clear
//! message; the run stops there and keeps what it had.

pub mod device;
pub mod faults;
pub mod nmea;
pub mod transport;
