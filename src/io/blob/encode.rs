//! Writing a path blob (layout in the module documentation of
//! [`crate::io::blob`]).

use core::fmt;

use crate::io::blob::{
    heading_to_turns, pow10, turns_to_heading, BlobInfo, Origin, Units, CRC32, CRC_LEN,
    FLAG_CLOSED, FLAG_CUSPS, FLAG_ORIGIN, HEADER_LEN, MAGIC, MAX_CURVATURE_EXPONENT,
    MAX_SHARPNESS_EXPONENT, ORIGIN_LEN, RECORD_LEN, RECORD_REVERSE, VERSION,
};
use crate::num::real::Real;
use crate::path::anchored::{joint_gaps, Path};
use crate::path::pose::{Direction, Pose};
use crate::path::segment::Segment;

/// How to write a blob.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct EncodeOptions {
    /// Length exponent: lengths and positions in `10^-e` m (3: millimetres).
    pub length_exponent: u8,
    /// Curvature exponent, or `None` for the finest in which every start
    /// curvature fits an `i32`.
    pub curvature_exponent: Option<u8>,
    /// Sharpness exponent, or `None` for the finest that fits.
    pub sharpness_exponent: Option<u8>,
    /// Largest gap at a joint, length units (written into the header; the
    /// decoder checks every joint against it).
    pub position_tolerance: u16,
    /// Largest heading jump at a joint, microradians.
    pub heading_tolerance_urad: u16,
    /// Geodetic origin of the local frame, if any.
    pub origin: Option<Origin>,
}

impl EncodeOptions {
    /// Millimetres, automatic curvature and sharpness units, joints within
    /// 2 mm and 1 mrad, no origin.
    pub const DEFAULT: Self = Self {
        length_exponent: 3,
        curvature_exponent: None,
        sharpness_exponent: None,
        position_tolerance: 2,
        heading_tolerance_urad: 1000,
        origin: None,
    };

    /// The options a blob was written with (to write the same bytes again).
    pub fn matching(info: &BlobInfo) -> Self {
        Self {
            length_exponent: info.units.length,
            curvature_exponent: Some(info.units.curvature),
            sharpness_exponent: Some(info.units.sharpness),
            position_tolerance: info.position_tolerance,
            heading_tolerance_urad: info.heading_tolerance_urad,
            origin: info.origin,
        }
    }
}

impl Default for EncodeOptions {
    fn default() -> Self {
        Self::DEFAULT
    }
}

/// Why a path could not be written.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum EncodeError {
    /// The output slice is shorter than the blob.
    BufferTooSmall {
        /// Bytes the blob needs ([`encoded_len`]).
        needed: usize,
    },
    /// More than 65535 segments.
    TooManySegments,
    /// A unit exponent is out of range.
    BadUnits,
    /// The origin's latitude or longitude is out of range.
    BadOrigin,
    /// A value of segment `index` does not fit its integer in these units
    /// (position, length, curvature or sharpness), or its length rounds to
    /// zero.
    ValueOutOfRange {
        /// Segment at fault.
        index: usize,
    },
    /// After quantisation the start of segment `index` (0: the joint that
    /// closes a loop) is farther from the end of the segment before than
    /// the tolerance: the decoder would refuse the blob. Use finer units
    /// or a looser tolerance.
    Tolerance {
        /// Segment whose start is off.
        index: usize,
    },
}

impl fmt::Display for EncodeError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            EncodeError::BufferTooSmall { needed } => {
                write!(f, "output buffer too small: the blob needs {needed} bytes")
            }
            EncodeError::TooManySegments => f.write_str("more than 65535 segments"),
            EncodeError::BadUnits => f.write_str("unit exponent out of range"),
            EncodeError::BadOrigin => f.write_str("origin out of range"),
            EncodeError::ValueOutOfRange { index } => {
                write!(f, "a value of segment {index} does not fit the blob's units")
            }
            EncodeError::Tolerance { index } => write!(
                f,
                "after quantisation segment {index} starts farther from the one before than the tolerance"
            ),
        }
    }
}

impl core::error::Error for EncodeError {}

/// Bytes of a blob with `segments` segments, with or without an origin.
pub const fn encoded_len(segments: usize, origin: bool) -> usize {
    let o = if origin { ORIGIN_LEN } else { 0 };
    HEADER_LEN + o + segments.saturating_mul(RECORD_LEN) + CRC_LEN
}

/// One segment in the blob's integers.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Record {
    x: i32,
    y: i32,
    heading: u32,
    length: u32,
    kappa0: i32,
    sigma: i32,
    reverse: bool,
}

impl Record {
    fn bytes(&self) -> [u8; RECORD_LEN] {
        let mut b = [0u8; RECORD_LEN];
        put(&mut b, 0, &self.x.to_le_bytes());
        put(&mut b, 4, &self.y.to_le_bytes());
        put(&mut b, 8, &self.heading.to_le_bytes());
        put(&mut b, 12, &self.length.to_le_bytes());
        put(&mut b, 16, &self.kappa0.to_le_bytes());
        put(&mut b, 20, &self.sigma.to_le_bytes());
        put(&mut b, 24, &[if self.reverse { RECORD_REVERSE } else { 0 }]);
        b
    }
}

/// Writes `path` into `out` as a blob; returns the number of bytes written
/// ([`encoded_len`]). Works in `f64` whatever `T` is; no allocation.
///
/// ```
/// use kappaline::io::blob::{decode, encode, encoded_len, EncodeOptions};
/// use kappaline::{Path, PathBuilder, Pose, Segment};
/// # fn main() -> Result<(), Box<dyn core::error::Error>> {
/// let path = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))?
///     .push(Segment::line(20.0)?)?
///     .push(Segment::arc(10.0, 0.1)?)?
///     .build()?;
/// let mut bytes = [0u8; encoded_len(2, false)];
/// let n = encode(&path, &EncodeOptions::DEFAULT, &mut bytes)?;
/// assert_eq!(n, 16 + 2 * 25 + 4);
/// let (back, info): (Path<f32, 4>, _) = decode(&bytes)?;
/// assert_eq!(back.len(), 2);
/// assert!((back.length() - 30.0).abs() < 1e-3);
/// assert_eq!(info.units.length, 3); // millimetres
/// # Ok(()) }
/// ```
///
/// # Errors
/// [`EncodeError`]: the output too small, too many segments, bad options,
/// a value that does not fit its integer, or quantised joints beyond the
/// tolerance. `out` may be partly written on error.
pub fn encode<T: Real, const N: usize>(
    path: &Path<T, N>,
    options: &EncodeOptions,
    out: &mut [u8],
) -> Result<usize, EncodeError> {
    let n = path.len();
    let count = u16::try_from(n).map_err(|_| EncodeError::TooManySegments)?;
    if options.origin.is_some_and(|o| !o.is_valid()) {
        return Err(EncodeError::BadOrigin);
    }
    let needed = encoded_len(n, options.origin.is_some());
    if out.len() < needed {
        return Err(EncodeError::BufferTooSmall { needed });
    }
    let units = Units {
        length: options.length_exponent,
        curvature: match options.curvature_exponent {
            Some(e) => e,
            None => finest_exponent(path, MAX_CURVATURE_EXPONENT, |s| s.kappa0()),
        },
        sharpness: match options.sharpness_exponent {
            Some(e) => e,
            None => finest_exponent(path, MAX_SHARPNESS_EXPONENT, |s| s.sigma()),
        },
    };
    if !units.is_valid() {
        return Err(EncodeError::BadUnits);
    }
    let cusps = has_cusps(path);
    let mut flags = 0u8;
    if path.is_closed() {
        flags |= FLAG_CLOSED;
    }
    if cusps {
        flags |= FLAG_CUSPS;
    }
    if options.origin.is_some() {
        flags |= FLAG_ORIGIN;
    }
    let mut header = [0u8; HEADER_LEN];
    put(&mut header, 0, &MAGIC);
    put(&mut header, 4, &[VERSION, flags]);
    put(&mut header, 6, &count.to_le_bytes());
    put(
        &mut header,
        8,
        &[units.length, units.curvature, units.sharpness, 0],
    );
    put(&mut header, 12, &options.position_tolerance.to_le_bytes());
    put(
        &mut header,
        14,
        &options.heading_tolerance_urad.to_le_bytes(),
    );
    put(out, 0, &header);
    let mut at = HEADER_LEN;
    if let Some(o) = options.origin {
        let mut b = [0u8; ORIGIN_LEN];
        put(&mut b, 0, &o.latitude_nanodeg.to_le_bytes());
        put(&mut b, 8, &o.longitude_nanodeg.to_le_bytes());
        put(&mut b, 16, &o.height_mm.to_le_bytes());
        put(out, at, &b);
        at += ORIGIN_LEN;
    }
    let info = BlobInfo {
        version: VERSION,
        closed: path.is_closed(),
        cusps,
        segments: count,
        units,
        position_tolerance: options.position_tolerance,
        heading_tolerance_urad: options.heading_tolerance_urad,
        origin: options.origin,
    };
    let first = record(path, 0, &units)?;
    let mut here = first;
    for index in 0..n {
        put(out, at, &here.bytes());
        at += RECORD_LEN;
        let next = if index + 1 < n {
            Some((record(path, index + 1, &units)?, index + 1))
        } else if path.is_closed() {
            Some((first, 0))
        } else {
            None
        };
        if let Some((next, joint)) = next {
            check_joint(&here, &next, &info, index, joint)?;
            here = next;
        }
    }
    let crc = CRC32.checksum(out.get(..at).unwrap_or_default());
    put(out, at, &crc.to_le_bytes());
    Ok(at + CRC_LEN)
}

/// The finest exponent (largest, at most `max`) in which `value` of every
/// segment rounds into an `i32`.
fn finest_exponent<T: Real, const N: usize>(
    path: &Path<T, N>,
    max: u8,
    value: impl Fn(&Segment<T>) -> T,
) -> u8 {
    let mut largest = 0.0f64;
    for i in 0..path.len() {
        if let Some(s) = path.segment(i) {
            largest = largest.max(libm::fabs(value(&s).to_f64()));
        }
    }
    let mut e = max;
    while e > 0 && libm::round(largest * pow10(e)) > f64::from(i32::MAX) {
        e -= 1;
    }
    e
}

/// `true` where the driving direction changes between segments (or across
/// the closing joint of a loop).
fn has_cusps<T: Real, const N: usize>(path: &Path<T, N>) -> bool {
    let dir = |i: usize| path.segment(i).map(|s| s.direction());
    let inner = (1..path.len()).any(|i| dir(i) != dir(i - 1));
    let closing = path.is_closed() && dir(0) != dir(path.len().saturating_sub(1));
    inner || closing
}

/// `v * 10^e` rounded, if it fits an `i32`.
fn to_i32(v: f64, e: u8) -> Option<i32> {
    let q = libm::round(v * pow10(e));
    if q.is_finite() && q >= f64::from(i32::MIN) && q <= f64::from(i32::MAX) {
        // In range and whole: the cast is exact.
        Some(q as i32)
    } else {
        None
    }
}

/// Segment `index` of `path` in the blob's integers.
fn record<T: Real, const N: usize>(
    path: &Path<T, N>,
    index: usize,
    units: &Units,
) -> Result<Record, EncodeError> {
    let bad = EncodeError::ValueOutOfRange { index };
    let (Some(a), Some(s)) = (path.anchor(index), path.segment(index)) else {
        return Err(bad);
    };
    let length = libm::round(s.length().to_f64() * pow10(units.length));
    if !(length >= 1.0 && length <= f64::from(u32::MAX)) {
        return Err(bad);
    }
    Ok(Record {
        x: to_i32(a.x.to_f64(), units.length).ok_or(bad)?,
        y: to_i32(a.y.to_f64(), units.length).ok_or(bad)?,
        heading: heading_to_turns(a.heading.to_f64()),
        // In [1, u32::MAX] and whole: the cast is exact.
        length: length as u32,
        kappa0: to_i32(s.kappa0().to_f64(), units.curvature).ok_or(bad)?,
        sigma: to_i32(s.sigma().to_f64(), units.sharpness).ok_or(bad)?,
        reverse: s.direction() == Direction::Reverse,
    })
}

/// The record's anchor and segment in metres, radians, 1/m and 1/m^2, as
/// the decoder reads them (in `f64`).
pub(crate) fn dequantise(
    x: i32,
    y: i32,
    heading: u32,
    length: u32,
    kappa0: i32,
    sigma: i32,
    units: &Units,
) -> (Pose<f64>, f64, f64, f64) {
    let l = pow10(units.length);
    (
        Pose::new(
            f64::from(x) / l,
            f64::from(y) / l,
            turns_to_heading(heading),
        ),
        f64::from(length) / l,
        f64::from(kappa0) / pow10(units.curvature),
        f64::from(sigma) / pow10(units.sharpness),
    )
}

/// Checks the joint from `here` to `next` as the decoder will.
fn check_joint(
    here: &Record,
    next: &Record,
    info: &BlobInfo,
    index: usize,
    joint: usize,
) -> Result<(), EncodeError> {
    let u = &info.units;
    let (start, len, k0, sg) = dequantise(
        here.x,
        here.y,
        here.heading,
        here.length,
        here.kappa0,
        here.sigma,
        u,
    );
    let (next_start, ..) = dequantise(
        next.x,
        next.y,
        next.heading,
        next.length,
        next.kappa0,
        next.sigma,
        u,
    );
    let seg = Segment::clothoid(len, k0, sg).map_err(|_| EncodeError::ValueOutOfRange { index })?;
    let (dp, dh) = joint_gaps(start, &seg, next_start, here.reverse != next.reverse);
    let tol = info.tolerance();
    if dp.is_nan() || dp > tol.position || dh.is_nan() || dh > tol.heading {
        return Err(EncodeError::Tolerance { index: joint });
    }
    Ok(())
}

/// Copies `bytes` into `out` from `at` on (as far as `out` reaches; the
/// callers have checked the length).
pub(crate) fn put(out: &mut [u8], at: usize, bytes: &[u8]) {
    if let Some(dst) = out.get_mut(at..) {
        for (d, s) in dst.iter_mut().zip(bytes) {
            *d = *s;
        }
    }
}
