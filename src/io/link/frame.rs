//! The raw frame and its messages (layout in [`crate::io::link`]).

use crate::io::link::LinkError;

/// The link version this code writes and accepts.
pub const VERSION: u8 = 1;
/// Version, type and sequence number (bytes).
pub const HEADER_LEN: usize = 4;
/// The CRC at the end (bytes).
pub const CRC_LEN: usize = 4;
/// The largest payload of any message (bytes).
pub const MAX_PAYLOAD: usize = 104;
/// The largest chunk of a path blob or of receiver bytes in one frame (bytes).
pub const MAX_CHUNK: usize = 96;
/// The largest raw frame (bytes).
pub const MAX_RAW: usize = HEADER_LEN + MAX_PAYLOAD + CRC_LEN;
/// The largest frame on the wire: COBS overhead and the `0x00` delimiter
/// included (bytes).
pub const MAX_ENCODED: usize = corncobs::max_encoded_len(MAX_RAW);

/// CRC-32, ISO-HDLC parameters.
static CRC32: crc::Crc<u32> = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC);

const TYPE_PATH_CHUNK: u8 = 0x01;
const TYPE_PATH_ACK: u8 = 0x02;
const TYPE_RECEIVER: u8 = 0x03;
const TYPE_CYCLE: u8 = 0x04;
const TYPE_STATUS: u8 = 0x05;
const TYPE_HELLO: u8 = 0x06;

const STATUS_LEN: usize = 29;

/// The device's answer to a path chunk.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum AckState {
    /// The chunk was taken; send the next one.
    More,
    /// The blob is complete, its CRC matched and the path is in use.
    Loaded,
    /// The blob was refused (a blob error); the old path stays.
    Refused,
    /// The chunk's offset was not the next one expected; nothing taken.
    OutOfOrder,
}

impl AckState {
    fn code(self) -> u8 {
        match self {
            AckState::More => 0,
            AckState::Loaded => 1,
            AckState::Refused => 2,
            AckState::OutOfOrder => 3,
        }
    }

    fn from_code(code: u8) -> Option<Self> {
        match code {
            0 => Some(AckState::More),
            1 => Some(AckState::Loaded),
            2 => Some(AckState::Refused),
            3 => Some(AckState::OutOfOrder),
            _ => None,
        }
    }
}

/// The operator inputs sent with each cycle.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Inputs {
    /// The engage switch is on.
    pub engage: bool,
    /// The manual-override sensor says the operator is steering.
    pub manual_override: bool,
}

/// The device's answer to one cycle: its command, its status and what the
/// cycle cost it.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Status {
    /// The cycle number this answers.
    pub cycle: u32,
    /// The guidance status as a code (the firmware's own numbering).
    pub status: u8,
    /// Steering angle command (rad, positive steering left).
    pub steer_angle: f32,
    /// Curvature command (1/m, positive turning left).
    pub curvature: f32,
    /// Speed limit (m/s).
    pub speed_limit: f32,
    /// Cross-track error estimate (m, left of path positive); NaN when the
    /// device has none.
    pub cross_track: f32,
    /// Cost of the cycle: retired instructions under an emulator, timer
    /// ticks on a board.
    pub cost: u32,
    /// Stack high-water mark (bytes).
    pub stack_high_water: u32,
}

/// One message, its variable parts borrowed from the frame's buffer.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Message<'a> {
    /// A piece of a path blob (host to device).
    PathChunk {
        /// Where the chunk starts in the blob (bytes).
        offset: u32,
        /// The whole blob's length (bytes).
        total: u32,
        /// The chunk, 1 to [`MAX_CHUNK`] bytes.
        bytes: &'a [u8],
    },
    /// The device's answer to a path chunk.
    PathAck {
        /// Bytes of the blob accepted so far.
        accepted: u32,
        /// What became of the chunk.
        state: AckState,
    },
    /// Receiver bytes as the receiver sent them, 1 to [`MAX_CHUNK`] bytes
    /// (host to device).
    Receiver(&'a [u8]),
    /// Run one control cycle (host to device).
    Cycle {
        /// The cycle number.
        cycle: u32,
        /// The time of the cycle on the device's clock (microseconds,
        /// wrapping): the host drives the clock in lockstep.
        time_us: u32,
        /// The operator inputs for it.
        inputs: Inputs,
    },
    /// The answer to a cycle (device to host).
    Status(Status),
    /// Sent by the device once after each reset.
    Hello {
        /// The firmware's link version.
        version: u32,
        /// The largest path blob the device takes (bytes).
        max_blob: u32,
    },
}

/// A parsed frame: its sequence number and message.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Frame<'a> {
    /// The sequence number.
    pub seq: u16,
    /// The message.
    pub message: Message<'a>,
}

/// A little writer into a fixed buffer that refuses to run past its end.
struct Put<'b> {
    buf: &'b mut [u8],
    at: usize,
}

impl Put<'_> {
    fn bytes(&mut self, b: &[u8]) -> Result<(), LinkError> {
        let end = self.at.checked_add(b.len()).ok_or(LinkError::TooLong)?;
        let dst = self.buf.get_mut(self.at..end).ok_or(LinkError::TooLong)?;
        dst.copy_from_slice(b);
        self.at = end;
        Ok(())
    }
}

fn payload_into(message: &Message<'_>, put: &mut Put<'_>) -> Result<u8, LinkError> {
    match *message {
        Message::PathChunk {
            offset,
            total,
            bytes,
        } => {
            check_chunk(TYPE_PATH_CHUNK, bytes)?;
            put.bytes(&offset.to_le_bytes())?;
            put.bytes(&total.to_le_bytes())?;
            put.bytes(bytes)?;
            Ok(TYPE_PATH_CHUNK)
        }
        Message::PathAck { accepted, state } => {
            put.bytes(&accepted.to_le_bytes())?;
            put.bytes(&[state.code()])?;
            Ok(TYPE_PATH_ACK)
        }
        Message::Receiver(bytes) => {
            check_chunk(TYPE_RECEIVER, bytes)?;
            put.bytes(bytes)?;
            Ok(TYPE_RECEIVER)
        }
        Message::Cycle {
            cycle,
            time_us,
            inputs,
        } => {
            put.bytes(&cycle.to_le_bytes())?;
            put.bytes(&time_us.to_le_bytes())?;
            let flags = u8::from(inputs.engage) | (u8::from(inputs.manual_override) << 1);
            put.bytes(&[flags])?;
            Ok(TYPE_CYCLE)
        }
        Message::Status(s) => {
            put.bytes(&s.cycle.to_le_bytes())?;
            put.bytes(&[s.status])?;
            put.bytes(&s.steer_angle.to_bits().to_le_bytes())?;
            put.bytes(&s.curvature.to_bits().to_le_bytes())?;
            put.bytes(&s.speed_limit.to_bits().to_le_bytes())?;
            put.bytes(&s.cross_track.to_bits().to_le_bytes())?;
            put.bytes(&s.cost.to_le_bytes())?;
            put.bytes(&s.stack_high_water.to_le_bytes())?;
            Ok(TYPE_STATUS)
        }
        Message::Hello { version, max_blob } => {
            put.bytes(&version.to_le_bytes())?;
            put.bytes(&max_blob.to_le_bytes())?;
            Ok(TYPE_HELLO)
        }
    }
}

fn check_chunk(kind: u8, bytes: &[u8]) -> Result<(), LinkError> {
    if bytes.is_empty() || bytes.len() > MAX_CHUNK {
        return Err(LinkError::Payload {
            kind,
            len: bytes.len(),
        });
    }
    Ok(())
}

/// Writes `message` with sequence number `seq` as a frame on the wire
/// (COBS-encoded, delimiter included) into `out`; returns the bytes used.
///
/// `out` of [`MAX_ENCODED`] bytes holds any frame. A chunk that is empty or
/// longer than [`MAX_CHUNK`] is [`LinkError::Payload`]; a short `out` is
/// [`LinkError::BufferTooSmall`], and `out` is then left untouched.
///
/// ```
/// use kappaline::io::link::frame::{encode, parse, Message, MAX_ENCODED};
/// use kappaline::io::link::reader::decode_cobs;
/// let mut wire = [0u8; MAX_ENCODED];
/// let n = encode(7, &Message::Receiver(b"$GPGGA"), &mut wire).unwrap();
/// assert_eq!(wire[n - 1], 0); // the delimiter
/// let len = decode_cobs(&mut wire[..n - 1]).unwrap();
/// let frame = parse(&wire[..len]).unwrap();
/// assert_eq!(frame.seq, 7);
/// assert_eq!(frame.message, Message::Receiver(b"$GPGGA"));
/// ```
pub fn encode(seq: u16, message: &Message<'_>, out: &mut [u8]) -> Result<usize, LinkError> {
    let mut raw = [0u8; MAX_RAW];
    let mut put = Put {
        buf: &mut raw,
        at: HEADER_LEN,
    };
    let kind = payload_into(message, &mut put)?;
    let body_len = put.at;
    let [s0, s1] = seq.to_le_bytes();
    let header = [VERSION, kind, s0, s1];
    raw.get_mut(..HEADER_LEN)
        .ok_or(LinkError::TooLong)?
        .copy_from_slice(&header);
    let crc = CRC32.checksum(raw.get(..body_len).ok_or(LinkError::TooLong)?);
    let mut put = Put {
        buf: &mut raw,
        at: body_len,
    };
    put.bytes(&crc.to_le_bytes())?;
    let raw_len = put.at;
    let raw_frame = raw.get(..raw_len).ok_or(LinkError::TooLong)?;
    let needed = corncobs::max_encoded_len(raw_frame.len());
    if out.len() < needed {
        return Err(LinkError::BufferTooSmall { needed });
    }
    // `out` holds the worst case, checked above: `encode_buf` cannot run
    // past its end.
    Ok(corncobs::encode_buf(raw_frame, out))
}

fn u32_at(p: &[u8], at: usize) -> Option<u32> {
    let end = at.checked_add(4)?;
    let b: [u8; 4] = p.get(at..end)?.try_into().ok()?;
    Some(u32::from_le_bytes(b))
}

fn f32_at(p: &[u8], at: usize) -> Option<f32> {
    u32_at(p, at).map(f32::from_bits)
}

/// Reads a raw frame (COBS already undone, no delimiter): checks the
/// length, the CRC, the version, the type and the payload length, in
/// that order, and returns the frame. Sequence numbers are checked
/// separately ([`crate::io::link::sequence`]).
pub fn parse(raw: &[u8]) -> Result<Frame<'_>, LinkError> {
    let len = raw.len();
    if len < HEADER_LEN + CRC_LEN {
        return Err(LinkError::TooShort { len });
    }
    if len > MAX_RAW {
        return Err(LinkError::TooLong);
    }
    let body_len = len - CRC_LEN;
    let (body, crc_bytes) = raw.split_at(body_len);
    let stored = u32_at(crc_bytes, 0).ok_or(LinkError::TooShort { len })?;
    let computed = CRC32.checksum(body);
    if stored != computed {
        return Err(LinkError::Crc { stored, computed });
    }
    let (header, payload) = body.split_at(HEADER_LEN);
    let &[version, kind, s0, s1] = header else {
        return Err(LinkError::TooShort { len });
    };
    if version != VERSION {
        return Err(LinkError::Version { found: version });
    }
    let message = parse_payload(kind, payload)?;
    Ok(Frame {
        seq: u16::from_le_bytes([s0, s1]),
        message,
    })
}

fn parse_payload(kind: u8, p: &[u8]) -> Result<Message<'_>, LinkError> {
    let bad = LinkError::Payload { kind, len: p.len() };
    let exact = |n: usize| if p.len() == n { Ok(()) } else { Err(bad) };
    match kind {
        TYPE_PATH_CHUNK => {
            let bytes = p.get(8..).ok_or(bad)?;
            check_chunk(kind, bytes).map_err(|_| bad)?;
            Ok(Message::PathChunk {
                offset: u32_at(p, 0).ok_or(bad)?,
                total: u32_at(p, 4).ok_or(bad)?,
                bytes,
            })
        }
        TYPE_PATH_ACK => {
            exact(5)?;
            let state = p.get(4).copied().and_then(AckState::from_code).ok_or(bad)?;
            Ok(Message::PathAck {
                accepted: u32_at(p, 0).ok_or(bad)?,
                state,
            })
        }
        TYPE_RECEIVER => {
            check_chunk(kind, p).map_err(|_| bad)?;
            Ok(Message::Receiver(p))
        }
        TYPE_CYCLE => {
            exact(9)?;
            let flags = p.get(8).copied().ok_or(bad)?;
            if flags & !0b11 != 0 {
                return Err(bad);
            }
            Ok(Message::Cycle {
                cycle: u32_at(p, 0).ok_or(bad)?,
                time_us: u32_at(p, 4).ok_or(bad)?,
                inputs: Inputs {
                    engage: flags & 1 != 0,
                    manual_override: flags & 2 != 0,
                },
            })
        }
        TYPE_STATUS => {
            exact(STATUS_LEN)?;
            Ok(Message::Status(Status {
                cycle: u32_at(p, 0).ok_or(bad)?,
                status: p.get(4).copied().ok_or(bad)?,
                steer_angle: f32_at(p, 5).ok_or(bad)?,
                curvature: f32_at(p, 9).ok_or(bad)?,
                speed_limit: f32_at(p, 13).ok_or(bad)?,
                cross_track: f32_at(p, 17).ok_or(bad)?,
                cost: u32_at(p, 21).ok_or(bad)?,
                stack_high_water: u32_at(p, 25).ok_or(bad)?,
            }))
        }
        TYPE_HELLO => {
            exact(8)?;
            Ok(Message::Hello {
                version: u32_at(p, 0).ok_or(bad)?,
                max_blob: u32_at(p, 4).ok_or(bad)?,
            })
        }
        found => Err(LinkError::UnknownType { found }),
    }
}
