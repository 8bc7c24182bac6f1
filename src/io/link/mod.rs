//! Link frames between the host harness and the device: our own message
//! layout, framed with COBS (the `corncobs` crate) and checked with a
//! CRC-32 (the `crc` crate). `no_std`, allocation-free and panic-free on
//! both the encoding and the decoding side.
//!
//! * [`frame`]: the byte layout, [`frame::encode`] and [`frame::parse`];
//! * [`reader`]: [`reader::FrameReader`], bytes off a serial line into
//!   frames, one byte at a time;
//! * [`sequence`]: [`sequence::SequenceCheck`], which tells a lost, a
//!   repeated and a reordered frame apart.
//!
//! # Layout, link version 1
//!
//! A frame on the wire is the COBS encoding of the raw frame below,
//! followed by one `0x00` delimiter. COBS removes every zero from the
//! frame, so a receiver that lost its place resynchronises at the next
//! zero. All integers are little-endian; floats are IEEE 754 `binary32`
//! bit patterns in a u32.
//!
//! Raw frame:
//!
//! | offset | size | type | field |
//! |---|---|---|---|
//! | 0 | 1 | u8 | link version, 1 |
//! | 1 | 1 | u8 | message type (below) |
//! | 2 | 2 | u16 | sequence number: per direction, starts at 0 after a reset, +1 per frame, wraps |
//! | 4 | n | bytes | payload, 0 to [`frame::MAX_PAYLOAD`] bytes, layout by type |
//! | 4 + n | 4 | u32 | CRC-32 (ISO-HDLC: polynomial `0x04C11DB7` reflected, init and final XOR `0xFFFFFFFF`) over bytes `0 .. 4 + n` |
//!
//! Message types and payloads (offsets within the payload):
//!
//! | type | name | direction | payload |
//! |---|---|---|---|
//! | `0x01` | path chunk | host to device | 0: u32 offset of the chunk in the blob (bytes); 4: u32 total blob length (bytes); 8: the chunk, 1 to 96 bytes |
//! | `0x02` | path acknowledgement | device to host | 0: u32 bytes of the blob accepted so far; 4: u8 state: 0 more wanted, 1 path loaded, 2 refused (blob error), 3 out of order (offset not the next expected) |
//! | `0x03` | receiver bytes | host to device | the bytes as the receiver sent them (NMEA 0183 sentences), 1 to 96 bytes |
//! | `0x04` | cycle | host to device | 0: u32 cycle number; 4: u32 time of the cycle on the device clock (microseconds, wrapping; the host drives the clock); 8: u8 operator inputs: bit 0 engage switch, bit 1 manual override; bits 2-7 zero |
//! | `0x05` | status | device to host | 0: u32 cycle number; 4: u8 guidance status code: 0 acquiring, 1 following, 2 degraded, 3 lost, 4 end of path, 5 standby, 6 fault or no path; 5: f32 steering angle command (rad, positive steering left); 9: f32 curvature command (1/m, positive turning left); 13: f32 speed limit (m/s); 17: f32 cross-track error (m, left of path positive; NaN: no estimate); 21: u32 cost of the cycle in core-clock timer ticks (under QEMU `-icount shift=0` on the MPS2 boards one tick is 40 retired instructions); 25: u32 stack high-water mark (bytes) |
//! | `0x06` | hello | device to host | 0: u32 link version of the firmware; 4: u32 largest path blob it takes (bytes). Sent once after every reset: one arriving mid-run means the device restarted |
//!
//! A frame of an unknown type, a payload of the wrong length for its type,
//! a CRC mismatch, a frame longer than the reader holds, a COBS error and
//! a version other than 1 are each their own [`LinkError`].
//!
//! Caution: the link carries commands for a machine, but it is not a
//! safety-rated channel. Keep an independent emergency stop.

pub mod frame;
pub mod reader;
pub mod sequence;

use core::fmt;

/// What went wrong with a frame or with the order of frames.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum LinkError {
    /// The COBS encoding is broken (a run longer than the bytes left).
    Cobs,
    /// Fewer bytes than a version, type, sequence number and CRC.
    TooShort {
        /// Raw bytes in the frame.
        len: usize,
    },
    /// More bytes arrived before the delimiter than a frame can hold; the
    /// bytes up to the next zero were dropped.
    TooLong,
    /// The output buffer cannot hold the encoded frame.
    BufferTooSmall {
        /// Bytes the encoded frame needs.
        needed: usize,
    },
    /// A link version other than [`frame::VERSION`].
    Version {
        /// The version byte found.
        found: u8,
    },
    /// The CRC stored in the frame is not that of its bytes.
    Crc {
        /// The CRC in the frame.
        stored: u32,
        /// The CRC of the bytes received.
        computed: u32,
    },
    /// A message type this version does not define.
    UnknownType {
        /// The type byte found.
        found: u8,
    },
    /// The payload length does not fit the message type, or a field of it
    /// is out of range (reserved bits set, an empty chunk).
    Payload {
        /// The message type.
        kind: u8,
        /// The payload length found (bytes).
        len: usize,
    },
    /// Frames were lost: the sequence number jumped ahead.
    Lost {
        /// The sequence number expected.
        expected: u16,
        /// The one received.
        found: u16,
    },
    /// The frame before was sent again (same sequence number).
    Repeated {
        /// The repeated sequence number.
        found: u16,
    },
    /// An older frame arrived after a newer one.
    Reordered {
        /// The sequence number expected.
        expected: u16,
        /// The older one received.
        found: u16,
    },
}

impl fmt::Display for LinkError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match *self {
            LinkError::Cobs => write!(f, "link frame: broken COBS encoding"),
            LinkError::TooShort { len } => {
                write!(f, "link frame: {len} bytes, shorter than a frame")
            }
            LinkError::TooLong => write!(f, "link frame: longer than a frame can be"),
            LinkError::BufferTooSmall { needed } => {
                write!(
                    f,
                    "link frame: output buffer too small ({needed} bytes needed)"
                )
            }
            LinkError::Version { found } => {
                write!(
                    f,
                    "link frame: version {found}, expected {}",
                    frame::VERSION
                )
            }
            LinkError::Crc { stored, computed } => write!(
                f,
                "link frame: CRC mismatch (stored {stored:#010x}, computed {computed:#010x})"
            ),
            LinkError::UnknownType { found } => {
                write!(f, "link frame: unknown message type {found:#04x}")
            }
            LinkError::Payload { kind, len } => write!(
                f,
                "link frame: payload of {len} bytes does not fit message type {kind:#04x}"
            ),
            LinkError::Lost { expected, found } => write!(
                f,
                "link: frames lost (sequence {found}, expected {expected})"
            ),
            LinkError::Repeated { found } => {
                write!(f, "link: frame {found} received twice")
            }
            LinkError::Reordered { expected, found } => write!(
                f,
                "link: frame {found} arrived out of order (expected {expected})"
            ),
        }
    }
}

impl core::error::Error for LinkError {}
