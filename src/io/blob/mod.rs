//! The path blob: a compact, versioned binary form of a [`Path`], made to
//! cross a slow link or sit in flash, and to be loaded in pieces.
//!
//! * [`encode`] writes a path into a byte slice (host and target alike);
//! * [`Decoder`] takes the bytes in chunks of any size, from one byte to
//!   the whole blob, and builds a fixed-capacity [`Path`] segment by
//!   segment as each record completes. It holds one record (25 bytes),
//!   never the whole blob. Each anchor is recomputed from the segment
//!   before and checked against the stored one;
//! * [`decode`] does the same for a blob that is all in memory.
//!
//! Every corruption has its own [`BlobError`]; a decoder that failed stays
//! failed, and the path already in use is never touched (a new one is
//! built beside it and handed over only when the CRC has matched).
//!
//! # Layout, format version 1
//!
//! All integers are little-endian. A blob is a 16-byte header, an optional
//! 20-byte origin block, `count` segment records of 25 bytes and a 4-byte
//! CRC: `16 + 20 (if origin) + 25 count + 4` bytes.
//!
//! Header:
//!
//! | offset | size | type | field |
//! |---|---|---|---|
//! | 0 | 4 | bytes | magic `4B 4C 50 42` (`"KLPB"`) |
//! | 4 | 1 | u8 | format version, 1 |
//! | 5 | 1 | u8 | flags: bit 0 closed path, bit 1 the path has cusps, bit 2 origin block present; bits 3-7 zero |
//! | 6 | 2 | u16 | segment count, 1 to 65535 |
//! | 8 | 1 | u8 | length exponent `eL`, 0 to 6: lengths and positions are in units of `10^-eL` m (3: millimetres) |
//! | 9 | 1 | u8 | curvature exponent `eK`, 0 to 15: curvatures in units of `10^-eK` 1/m |
//! | 10 | 1 | u8 | sharpness exponent `eS`, 0 to 18: sharpness in units of `10^-eS` 1/m^2 |
//! | 11 | 1 | u8 | reserved, zero |
//! | 12 | 2 | u16 | position tolerance of a joint, length units |
//! | 14 | 2 | u16 | heading tolerance of a joint, microradians |
//!
//! Origin block (only if flag bit 2), the geodetic origin of the local
//! east-north frame on WGS84:
//!
//! | offset | size | type | field |
//! |---|---|---|---|
//! | 16 | 8 | i64 | latitude, nanodegrees (north positive, within ±90°) |
//! | 24 | 8 | i64 | longitude, nanodegrees (east positive, within ±180°) |
//! | 32 | 4 | i32 | ellipsoidal height, millimetres |
//!
//! Segment record `i` (at `16 (+20) + 25 i`):
//!
//! | offset | size | type | field |
//! |---|---|---|---|
//! | 0 | 4 | i32 | anchor `x` (east), length units |
//! | 4 | 4 | i32 | anchor `y` (north), length units |
//! | 8 | 4 | u32 | anchor heading, `2^-32` turn, counter-clockwise from `+x` |
//! | 12 | 4 | u32 | length, length units, at least 1 |
//! | 16 | 4 | i32 | start curvature, curvature units (positive turning left) |
//! | 20 | 4 | i32 | sharpness `d kappa / d s`, sharpness units |
//! | 24 | 1 | u8 | flags: bit 0 driven in reverse; bits 1-7 zero |
//!
//! The anchor is where the segment starts: its position and the heading of
//! the path tangent there (the direction of travel along increasing
//! station; at a cusp it turns by pi while the body heading stays).
//! Stations are not stored: segment `i` starts at the sum of the lengths
//! before it.
//!
//! CRC (at the end): CRC-32 (the ISO-HDLC parameters: polynomial
//! `0x04C11DB7` reflected, initial value and final XOR `0xFFFFFFFF`; check
//! value `0xCBF43926` for the ASCII bytes `123456789`) over every byte
//! before it, as a u32.
//!
//! # Quantisation
//!
//! With the default millimetre unit a position or length is within 0.5 mm
//! of the path's, a heading within `2^-33` turn (7.3e-10 rad), a curvature
//! within half a curvature unit. The encoder picks for each path the finest
//! curvature and sharpness units in which every value fits an `i32`, then
//! recomputes every joint from the quantised values and refuses the path
//! ([`EncodeError::Tolerance`]) if one is off by more than the tolerance
//! it writes into the header (default 2 mm and 1 mrad: the quantised
//! anchors and lengths put a joint at most 1.9 mm off). A decoded blob,
//! decoded into `f64`, encodes to the same bytes.
//!
//! The layout is this project's own design.

mod decode;
mod encode;
mod narrow;

pub use decode::{decode, Decoder, Progress};
pub use encode::{encode, encoded_len, EncodeError, EncodeOptions};

use core::fmt;

use crate::path::error::PathError;

#[allow(unused_imports)] // for the links in the documentation
use crate::path::anchored::Path;

/// The four bytes every blob starts with.
pub const MAGIC: [u8; 4] = *b"KLPB";
/// The format version this crate writes and reads.
pub const VERSION: u8 = 1;
/// Bytes in the header.
pub const HEADER_LEN: usize = 16;
/// Bytes in the origin block.
pub const ORIGIN_LEN: usize = 20;
/// Bytes in one segment record.
pub const RECORD_LEN: usize = 25;
/// Bytes in the CRC at the end.
pub const CRC_LEN: usize = 4;

/// Header flag: the path is closed (a loop).
pub(crate) const FLAG_CLOSED: u8 = 1;
/// Header flag: the driving direction changes somewhere (cusps).
pub(crate) const FLAG_CUSPS: u8 = 2;
/// Header flag: the origin block follows the header.
pub(crate) const FLAG_ORIGIN: u8 = 4;
/// Record flag: the segment is driven in reverse.
pub(crate) const RECORD_REVERSE: u8 = 1;

/// Largest length exponent (micrometres).
pub const MAX_LENGTH_EXPONENT: u8 = 6;
/// Largest curvature exponent.
pub const MAX_CURVATURE_EXPONENT: u8 = 15;
/// Largest sharpness exponent.
pub const MAX_SHARPNESS_EXPONENT: u8 = 18;

/// The CRC-32 of the blob (ISO-HDLC parameters, from the `crc` crate).
pub(crate) static CRC32: crc::Crc<u32> = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC);

/// Units of a blob's integers: lengths and positions in `10^-length` m,
/// curvature in `10^-curvature` 1/m, sharpness in `10^-sharpness` 1/m^2.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Units {
    /// Length exponent, 0 to [`MAX_LENGTH_EXPONENT`] (3: millimetres).
    pub length: u8,
    /// Curvature exponent, 0 to [`MAX_CURVATURE_EXPONENT`].
    pub curvature: u8,
    /// Sharpness exponent, 0 to [`MAX_SHARPNESS_EXPONENT`].
    pub sharpness: u8,
}

impl Units {
    /// `true` if every exponent is in its range.
    pub fn is_valid(&self) -> bool {
        self.length <= MAX_LENGTH_EXPONENT
            && self.curvature <= MAX_CURVATURE_EXPONENT
            && self.sharpness <= MAX_SHARPNESS_EXPONENT
    }
}

/// The geodetic origin of the path's local east-north frame (WGS84), as
/// the blob stores it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Origin {
    /// Latitude, nanodegrees, north positive.
    pub latitude_nanodeg: i64,
    /// Longitude, nanodegrees, east positive.
    pub longitude_nanodeg: i64,
    /// Ellipsoidal height, millimetres.
    pub height_mm: i32,
}

impl Origin {
    /// The origin at `latitude`, `longitude` (degrees) and `height`
    /// (metres), rounded to nanodegrees and millimetres.
    ///
    /// # Errors
    /// [`BlobError::BadOrigin`] for a latitude beyond ±90°, a longitude
    /// beyond ±180°, a height beyond ±2000 km or a non-finite value.
    pub fn from_degrees(latitude: f64, longitude: f64, height: f64) -> Result<Self, BlobError> {
        let ok = latitude.is_finite()
            && longitude.is_finite()
            && height.is_finite()
            && libm::fabs(latitude) <= 90.0
            && libm::fabs(longitude) <= 180.0
            && libm::fabs(height) <= 2.0e6;
        if !ok {
            return Err(BlobError::BadOrigin);
        }
        // In range, so the casts below are exact roundings, not saturations.
        Ok(Self {
            latitude_nanodeg: libm::round(latitude * 1e9) as i64,
            longitude_nanodeg: libm::round(longitude * 1e9) as i64,
            height_mm: libm::round(height * 1e3) as i32,
        })
    }

    /// `(latitude, longitude, height)` in degrees, degrees and metres.
    pub fn to_degrees(&self) -> (f64, f64, f64) {
        (
            self.latitude_nanodeg as f64 / 1e9,
            self.longitude_nanodeg as f64 / 1e9,
            f64::from(self.height_mm) / 1e3,
        )
    }

    /// `true` if latitude and longitude are within their ranges.
    pub fn is_valid(&self) -> bool {
        self.latitude_nanodeg.unsigned_abs() <= 90_000_000_000
            && self.longitude_nanodeg.unsigned_abs() <= 180_000_000_000
    }
}

/// What a blob's header says about the path in it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct BlobInfo {
    /// Format version (1).
    pub version: u8,
    /// The path is a loop.
    pub closed: bool,
    /// The driving direction changes somewhere on the path.
    pub cusps: bool,
    /// Number of segments.
    pub segments: u16,
    /// Units of the integers.
    pub units: Units,
    /// Joint tolerance, length units.
    pub position_tolerance: u16,
    /// Joint tolerance, microradians.
    pub heading_tolerance_urad: u16,
    /// Geodetic origin of the local frame, if stored.
    pub origin: Option<Origin>,
}

impl BlobInfo {
    /// Bytes of the whole blob this header describes.
    pub fn blob_len(&self) -> usize {
        encoded_len(usize::from(self.segments), self.origin.is_some())
    }

    /// The joint tolerance in metres and radians.
    pub fn tolerance(&self) -> crate::path::anchored::Continuity {
        crate::path::anchored::Continuity {
            position: f64::from(self.position_tolerance) / pow10(self.units.length),
            heading: f64::from(self.heading_tolerance_urad) * 1e-6,
        }
    }
}

/// Why a blob was refused. Each kind of corruption has its own variant.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum BlobError {
    /// The first four bytes are not [`MAGIC`].
    BadMagic,
    /// A format version this crate does not read (a newer one, or 0).
    UnsupportedVersion {
        /// The version in the blob.
        found: u8,
    },
    /// Header flag bits this version does not define are set.
    UnknownFlags {
        /// The flag byte.
        flags: u8,
    },
    /// A reserved byte or bit is not zero (offset of the byte in the blob).
    ReservedNotZero {
        /// Byte offset.
        offset: usize,
    },
    /// A unit exponent is out of its range.
    BadUnits,
    /// The segment count is zero.
    NoSegments,
    /// More segments than the decoder's path can hold.
    TooManySegments {
        /// Segments in the blob.
        count: u16,
        /// Capacity of the path.
        capacity: usize,
    },
    /// The origin's latitude or longitude is out of range.
    BadOrigin,
    /// A decoded segment was refused by the path: a value out of range
    /// after decoding (zero length, curvature or sharpness beyond the
    /// backend's bound, a position beyond [`crate::MAX_COORDINATE`]) or a
    /// stored anchor that does not match the one recomputed from the
    /// segment before (`PositionGap`, `HeadingGap`; index 0 for the joint
    /// that closes a loop).
    Segment(PathError),
    /// The cusp flag does not match the segments' driving directions.
    CuspFlagMismatch,
    /// The CRC does not match the bytes.
    CrcMismatch {
        /// CRC stored in the blob.
        stored: u32,
        /// CRC of the bytes received.
        computed: u32,
    },
    /// The input ended before the blob did.
    Truncated {
        /// Bytes received.
        received: usize,
    },
    /// Bytes follow the end of the blob ([`decode`] only; a [`Decoder`]
    /// reports how much of its last chunk it used instead).
    TrailingBytes {
        /// Bytes after the blob.
        extra: usize,
    },
}

impl fmt::Display for BlobError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            BlobError::BadMagic => f.write_str("not a path blob (magic)"),
            BlobError::UnsupportedVersion { found } => {
                write!(
                    f,
                    "path blob version {found} is not supported (reads {VERSION})"
                )
            }
            BlobError::UnknownFlags { flags } => write!(f, "unknown header flags 0x{flags:02x}"),
            BlobError::ReservedNotZero { offset } => {
                write!(f, "reserved byte or bit at offset {offset} is not zero")
            }
            BlobError::BadUnits => f.write_str("unit exponent out of range"),
            BlobError::NoSegments => f.write_str("blob holds no segments"),
            BlobError::TooManySegments { count, capacity } => {
                write!(f, "{count} segments, the path holds {capacity}")
            }
            BlobError::BadOrigin => f.write_str("origin latitude or longitude out of range"),
            BlobError::Segment(e) => write!(f, "segment refused: {e}"),
            BlobError::CuspFlagMismatch => {
                f.write_str("cusp flag does not match the driving directions")
            }
            BlobError::CrcMismatch { stored, computed } => {
                write!(
                    f,
                    "CRC mismatch: stored 0x{stored:08x}, computed 0x{computed:08x}"
                )
            }
            BlobError::Truncated { received } => {
                write!(f, "blob ends early, after {received} bytes")
            }
            BlobError::TrailingBytes { extra } => write!(f, "{extra} bytes after the blob"),
        }
    }
}

impl core::error::Error for BlobError {}

/// `10^e` for `e <= 22` (exact in `f64`).
pub(crate) fn pow10(e: u8) -> f64 {
    let mut v = 1.0f64;
    let mut i = 0u8;
    while i < e && i < 22 {
        v *= 10.0;
        i += 1;
    }
    v
}

/// The path tangent's heading as a fraction of a turn in `2^-32` units.
pub(crate) fn heading_to_turns(heading: f64) -> u32 {
    let turns = heading / core::f64::consts::TAU;
    let frac = turns - libm::floor(turns);
    // frac in [0, 1]: the product is in [0, 2^32]; 2^32 wraps to 0 (a turn).
    let units = libm::round(frac * 4_294_967_296.0);
    if units >= 4_294_967_296.0 || units.is_nan() {
        0
    } else {
        units as u32
    }
}

/// Radians in `(-pi, pi]` from `2^-32` turn units.
pub(crate) fn turns_to_heading(units: u32) -> f64 {
    // As a signed count the angle lands in [-pi, pi).
    f64::from(units as i32) * (core::f64::consts::TAU / 4_294_967_296.0)
}
