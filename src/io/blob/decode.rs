//! Reading a path blob in chunks of any size (layout in the module
//! documentation of [`crate::io::blob`]).

use core::fmt;

use crate::io::blob::encode::dequantise;
use crate::io::blob::narrow::{self, is_wide, Raw};
use crate::io::blob::{
    BlobError, BlobInfo, Origin, Units, CRC32, CRC_LEN, FLAG_CLOSED, FLAG_CUSPS, FLAG_ORIGIN,
    HEADER_LEN, MAGIC, ORIGIN_LEN, RECORD_LEN, RECORD_REVERSE, VERSION,
};
use crate::num::real::Real;
use crate::path::anchored::{
    joint_gaps, AnchoredBuilder, AnchoredSegment, Continuity, Path, Placed,
};
use crate::path::error::PathError;
use crate::path::pose::{Direction, Pose};
use crate::path::segment::Segment;
use heapless::Vec;

/// How far a [`Decoder`] has got after a chunk.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Progress {
    /// The blob is not complete yet: feed the next chunk.
    NeedMore,
    /// The blob is complete and checked; [`Decoder::finish`] hands over
    /// the path. `used` bytes of the last chunk belonged to the blob; any
    /// after them belong to whatever follows it on the link.
    Done {
        /// Bytes of the last chunk that were part of the blob.
        used: usize,
    },
}

/// Where the decoder is in the blob.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Stage {
    Header,
    Origin,
    Records,
    Crc,
    Done,
    Failed(BlobError),
}

impl Stage {
    /// Bytes of the field this stage reads.
    fn field_len(self) -> usize {
        match self {
            Stage::Header => HEADER_LEN,
            Stage::Origin => ORIGIN_LEN,
            Stage::Records => RECORD_LEN,
            Stage::Crc => CRC_LEN,
            Stage::Done | Stage::Failed(_) => 0,
        }
    }
}

/// The path under construction, then the finished one (one buffer of `N`
/// segments, not two).
#[derive(Debug, Clone, PartialEq)]
enum Body<T: Real, const N: usize> {
    Waiting,
    Building(AnchoredBuilder<T, N>),
    /// The records placed so far on a backend narrower than `f64`.
    Placing(Vec<Placed<T>, N>),
    Built(Path<T, N>),
}

/// What the decoder keeps of the records before, for the joints.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Joints {
    /// `f64` backends: the stored values in `f64`.
    Wide {
        /// The first record's anchor and driving direction (for the joint
        /// that closes a loop).
        first: Option<(Pose<f64>, Direction)>,
        /// The last record: anchor, segment and driving direction (for the
        /// joint with the next one).
        last: Option<(Pose<f64>, Segment<f64>, Direction)>,
    },
    /// Narrower backends (`f32`): the stored integers, and the station
    /// reached, in length units (see `narrow.rs`).
    Narrow {
        first: Option<Raw>,
        last: Option<Raw>,
        station: u64,
    },
}

/// A streaming decoder: feed it the blob in chunks of any size, in order;
/// it builds the path segment by segment and checks each anchor as its
/// record completes.
///
/// Memory: the path being built (`N` segments, as [`Path`]) and one record
/// of 25 bytes; never the whole blob. Cost per byte is constant; each
/// completed record costs two segment evaluations (the anchor check and
/// the placement), in `f64` for an `f64` path; an `f32` path is read
/// without `f64` arithmetic, its joints checked in `f32` within the
/// tolerance plus an allowance for `f32`'s rounding (16 `f32::EPSILON`
/// times the segment's length and the anchors' distance: 0.2 mm for 50 m).
///
/// ```
/// use kappaline::io::blob::{encode, encoded_len, Decoder, EncodeOptions, Progress};
/// use kappaline::{Path, PathBuilder, Pose, Segment};
/// # fn main() -> Result<(), Box<dyn core::error::Error>> {
/// # let path = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))?
/// #     .push(Segment::line(20.0)?)?.push(Segment::arc(10.0, 0.1)?)?.build()?;
/// # let mut blob = [0u8; encoded_len(2, false)];
/// # encode(&path, &EncodeOptions::DEFAULT, &mut blob)?;
/// // `blob` arrives over a link, 7 bytes at a time.
/// let mut decoder = Decoder::<f32, 16>::new();
/// for chunk in blob.chunks(7) {
///     if let Progress::Done { .. } = decoder.feed(chunk)? {
///         break;
///     }
/// }
/// let (path, info) = decoder.finish()?;
/// assert_eq!((path.len(), info.segments), (2, 2));
/// # Ok(()) }
/// ```
#[derive(Clone)]
pub struct Decoder<T: Real, const N: usize> {
    stage: Stage,
    /// The field being read.
    field: [u8; RECORD_LEN],
    /// Bytes of it received.
    filled: usize,
    /// Bytes of the blob received.
    received: usize,
    digest: crc::Digest<'static, u32>,
    info: Option<BlobInfo>,
    body: Body<T, N>,
    /// Records completed.
    records: u16,
    /// The first and last records, exactly as stored.
    joints: Joints,
    /// A change of driving direction between records.
    saw_cusp: bool,
}

impl<T: Real, const N: usize> fmt::Debug for Decoder<T, N> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_struct("Decoder")
            .field("stage", &self.stage)
            .field("received", &self.received)
            .field("records", &self.records)
            .field("info", &self.info)
            .finish_non_exhaustive()
    }
}

impl<T: Real, const N: usize> Default for Decoder<T, N> {
    fn default() -> Self {
        Self::new()
    }
}

impl<T: Real, const N: usize> Decoder<T, N> {
    /// A decoder waiting for the first byte.
    pub fn new() -> Self {
        Self {
            stage: Stage::Header,
            field: [0; RECORD_LEN],
            filled: 0,
            received: 0,
            digest: CRC32.digest(),
            info: None,
            body: Body::Waiting,
            records: 0,
            joints: if is_wide::<T>() {
                Joints::Wide {
                    first: None,
                    last: None,
                }
            } else {
                Joints::Narrow {
                    first: None,
                    last: None,
                    station: 0,
                }
            },
            saw_cusp: false,
        }
    }

    /// The header, once its 16 bytes (and the origin block, if any) have
    /// arrived: segment count, flags, units, tolerance, origin. Lets a unit
    /// refuse or prepare for a blob before the segments arrive.
    pub fn info(&self) -> Option<&BlobInfo> {
        match self.stage {
            Stage::Header | Stage::Origin => None,
            _ => self.info.as_ref(),
        }
    }

    /// Bytes of the blob received so far.
    pub fn received(&self) -> usize {
        self.received
    }

    /// Segments decoded and checked so far.
    pub fn segments_done(&self) -> u16 {
        self.records
    }

    /// Takes the next chunk (any length, including zero).
    ///
    /// Returns [`Progress::NeedMore`] until the last byte of the blob, then
    /// [`Progress::Done`] with the number of bytes of this chunk that were
    /// part of it. After `Done`, further chunks are not read (`used: 0`).
    ///
    /// # Errors
    /// The first [`BlobError`] met. The decoder then stays failed: every
    /// later call returns the same error, and nothing it built is handed
    /// out.
    pub fn feed(&mut self, chunk: &[u8]) -> Result<Progress, BlobError> {
        if let Stage::Failed(e) = self.stage {
            return Err(e);
        }
        if self.stage == Stage::Done {
            return Ok(Progress::Done { used: 0 });
        }
        let mut used = 0usize;
        // Each pass takes at least one byte, so the loop ends within
        // `chunk.len()` passes.
        while let Some(rest) = chunk.get(used..) {
            if rest.is_empty() {
                break;
            }
            let want = self.stage.field_len().saturating_sub(self.filled);
            let take = want.min(rest.len());
            let part = rest.get(..take).unwrap_or_default();
            if let Some(dst) = self.field.get_mut(self.filled..) {
                for (d, s) in dst.iter_mut().zip(part) {
                    *d = *s;
                }
            }
            if self.stage != Stage::Crc {
                self.digest.update(part);
            }
            self.filled += take;
            self.received += take;
            used += take;
            if self.filled < self.stage.field_len() {
                continue;
            }
            self.filled = 0;
            match self.complete_field() {
                Ok(true) => return Ok(Progress::Done { used }),
                Ok(false) => {}
                Err(e) => {
                    self.stage = Stage::Failed(e);
                    self.body = Body::Waiting;
                    return Err(e);
                }
            }
            if take == 0 {
                break;
            }
        }
        Ok(Progress::NeedMore)
    }

    /// Hands over the path and its header after [`Progress::Done`].
    ///
    /// # Errors
    /// The error the decoder failed with, or [`BlobError::Truncated`] if
    /// the blob is not complete.
    pub fn finish(self) -> Result<(Path<T, N>, BlobInfo), BlobError> {
        match (self.stage, self.body, self.info) {
            (Stage::Failed(e), _, _) => Err(e),
            (Stage::Done, Body::Built(path), Some(info)) => Ok((path, info)),
            _ => Err(BlobError::Truncated {
                received: self.received,
            }),
        }
    }

    /// Acts on a complete field; `Ok(true)` when the blob is complete.
    fn complete_field(&mut self) -> Result<bool, BlobError> {
        match self.stage {
            Stage::Header => self.read_header().map(|()| false),
            Stage::Origin => self.read_origin().map(|()| false),
            Stage::Records => self.read_record().map(|()| false),
            Stage::Crc => self.read_crc().map(|()| true),
            Stage::Done => Ok(true),
            Stage::Failed(e) => Err(e),
        }
    }

    fn read_header(&mut self) -> Result<(), BlobError> {
        let b = &self.field;
        if b.get(..4) != Some(&MAGIC[..]) {
            return Err(BlobError::BadMagic);
        }
        let version = byte(b, 4);
        if version != VERSION {
            return Err(BlobError::UnsupportedVersion { found: version });
        }
        let flags = byte(b, 5);
        if flags & !(FLAG_CLOSED | FLAG_CUSPS | FLAG_ORIGIN) != 0 {
            return Err(BlobError::UnknownFlags { flags });
        }
        if byte(b, 11) != 0 {
            return Err(BlobError::ReservedNotZero { offset: 11 });
        }
        let units = Units {
            length: byte(b, 8),
            curvature: byte(b, 9),
            sharpness: byte(b, 10),
        };
        if !units.is_valid() {
            return Err(BlobError::BadUnits);
        }
        let count = u16_at(b, 6);
        if count == 0 {
            return Err(BlobError::NoSegments);
        }
        if usize::from(count) > N {
            return Err(BlobError::TooManySegments { count, capacity: N });
        }
        let info = BlobInfo {
            version,
            closed: flags & FLAG_CLOSED != 0,
            cusps: flags & FLAG_CUSPS != 0,
            segments: count,
            units,
            position_tolerance: u16_at(b, 12),
            heading_tolerance_urad: u16_at(b, 14),
            origin: None,
        };
        self.body = if is_wide::<T>() {
            let tolerance: Continuity = info.tolerance();
            Body::Building(AnchoredBuilder::new(tolerance).map_err(BlobError::Segment)?)
        } else {
            Body::Placing(Vec::new())
        };
        self.info = Some(info);
        self.stage = if flags & FLAG_ORIGIN != 0 {
            Stage::Origin
        } else {
            Stage::Records
        };
        Ok(())
    }

    fn read_origin(&mut self) -> Result<(), BlobError> {
        let b = &self.field;
        let origin = Origin {
            latitude_nanodeg: i64::from_le_bytes(array_at(b, 0)),
            longitude_nanodeg: i64::from_le_bytes(array_at(b, 8)),
            height_mm: i32::from_le_bytes(array_at(b, 16)),
        };
        if !origin.is_valid() {
            return Err(BlobError::BadOrigin);
        }
        if let Some(info) = self.info.as_mut() {
            info.origin = Some(origin);
        }
        self.stage = Stage::Records;
        Ok(())
    }

    fn read_record(&mut self) -> Result<(), BlobError> {
        let Some(info) = self.info else {
            return Err(BlobError::Truncated {
                received: self.received,
            });
        };
        let index = usize::from(self.records);
        let b = &self.field;
        let flags = byte(b, 24);
        if flags & !RECORD_REVERSE != 0 {
            let start = self.received.saturating_sub(RECORD_LEN);
            return Err(BlobError::ReservedNotZero { offset: start + 24 });
        }
        let direction = if flags & RECORD_REVERSE != 0 {
            Direction::Reverse
        } else {
            Direction::Forward
        };
        if !is_wide::<T>() {
            let raw = Raw {
                x: i32::from_le_bytes(array_at(b, 0)),
                y: i32::from_le_bytes(array_at(b, 4)),
                heading: u32::from_le_bytes(array_at(b, 8)),
                length: u32::from_le_bytes(array_at(b, 12)),
                kappa0: i32::from_le_bytes(array_at(b, 16)),
                sigma: i32::from_le_bytes(array_at(b, 20)),
                direction,
            };
            return self.place_record(&info, raw, index);
        }
        let (start, length, kappa0, sigma) = dequantise(
            i32::from_le_bytes(array_at(b, 0)),
            i32::from_le_bytes(array_at(b, 4)),
            u32::from_le_bytes(array_at(b, 8)),
            u32::from_le_bytes(array_at(b, 12)),
            i32::from_le_bytes(array_at(b, 16)),
            i32::from_le_bytes(array_at(b, 20)),
            &info.units,
        );
        let refused = |e| BlobError::Segment(at_index(e, index));
        // The joint is checked on the stored values themselves, in f64, as
        // the encoder checked it: a blob that was written decodes in every
        // backend, whatever `T` rounds the anchors to.
        let exact = Segment::<f64>::clothoid(length, kappa0, sigma).map_err(refused)?;
        let tolerance = info.tolerance();
        let Joints::Wide { first, last } = &mut self.joints else {
            return Err(BlobError::Truncated {
                received: self.received,
            });
        };
        if let Some((before, seg, dir)) = last {
            let (dp, dh) = joint_gaps(*before, seg, start, *dir != direction);
            if dp.is_nan() || dp > tolerance.position {
                return Err(BlobError::Segment(PathError::PositionGap { index }));
            }
            if dh.is_nan() || dh > tolerance.heading {
                return Err(BlobError::Segment(PathError::HeadingGap { index }));
            }
        }
        let segment =
            Segment::clothoid(T::from_f64(length), T::from_f64(kappa0), T::from_f64(sigma))
                .map_err(refused)?
                .with_direction(direction);
        let part = AnchoredSegment {
            segment,
            start: Pose::new(
                T::from_f64(start.x),
                T::from_f64(start.y),
                T::from_f64(start.heading),
            ),
        };
        let Body::Building(builder) = &mut self.body else {
            return Err(BlobError::Truncated {
                received: self.received,
            });
        };
        builder.push_part(part, false).map_err(refused)?;
        if last.is_some_and(|(_, _, d)| d != direction) {
            self.saw_cusp = true;
        }
        first.get_or_insert((start, direction));
        *last = Some((start, exact.with_direction(direction), direction));
        self.record_done(&info);
        Ok(())
    }

    /// Counts a record in; the CRC follows the last one.
    fn record_done(&mut self, info: &BlobInfo) {
        self.records = self.records.saturating_add(1);
        if self.records >= info.segments {
            self.stage = Stage::Crc;
        }
    }

    /// [`Decoder::read_record`] on a backend narrower than `f64`: the same
    /// checks, from the integers, in `T` (see `narrow.rs`).
    fn place_record(&mut self, info: &BlobInfo, raw: Raw, index: usize) -> Result<(), BlobError> {
        let (
            Joints::Narrow {
                first,
                last,
                station,
            },
            Body::Placing(placed),
        ) = (&mut self.joints, &mut self.body)
        else {
            return Err(BlobError::Truncated {
                received: self.received,
            });
        };
        if let (Some(before), Some(p)) = (last.as_ref(), placed.last()) {
            narrow::check_joint(
                before,
                p,
                &raw,
                info,
                before.direction != raw.direction,
                index,
            )?;
        }
        let (p, end) =
            narrow::place::<T>(&raw, &info.units, *station, index).map_err(BlobError::Segment)?;
        placed
            .push(p)
            .map_err(|_| BlobError::Segment(PathError::CapacityExceeded))?;
        if last.is_some_and(|l| l.direction != raw.direction) {
            self.saw_cusp = true;
        }
        first.get_or_insert(raw);
        *last = Some(raw);
        *station = end;
        self.record_done(info);
        Ok(())
    }

    fn read_crc(&mut self) -> Result<(), BlobError> {
        let stored = u32::from_le_bytes(array_at(&self.field, 0));
        let computed = self.digest.clone().finalize();
        if stored != computed {
            return Err(BlobError::CrcMismatch { stored, computed });
        }
        let Some(info) = self.info else {
            return Err(BlobError::Truncated {
                received: self.received,
            });
        };
        if let Joints::Narrow {
            first,
            last,
            station,
        } = self.joints
        {
            return self.finish_placing(&info, first, last, station);
        }
        let Joints::Wide {
            first: Some((first, first_dir)),
            last: Some((before, seg, last_dir)),
        } = self.joints
        else {
            return Err(BlobError::NoSegments);
        };
        let closing_cusp = info.closed && first_dir != last_dir;
        if info.cusps != (self.saw_cusp || closing_cusp) {
            return Err(BlobError::CuspFlagMismatch);
        }
        if info.closed {
            let tolerance = info.tolerance();
            let (dp, dh) = joint_gaps(before, &seg, first, closing_cusp);
            if dp.is_nan() || dp > tolerance.position {
                return Err(BlobError::Segment(PathError::PositionGap { index: 0 }));
            }
            if dh.is_nan() || dh > tolerance.heading {
                return Err(BlobError::Segment(PathError::HeadingGap { index: 0 }));
            }
        }
        let Body::Building(builder) = core::mem::replace(&mut self.body, Body::Waiting) else {
            return Err(BlobError::Truncated {
                received: self.received,
            });
        };
        let path = builder
            .finish_part(info.closed, false)
            .map_err(BlobError::Segment)?;
        self.body = Body::Built(path);
        self.stage = Stage::Done;
        Ok(())
    }

    /// The end of [`Decoder::read_crc`] on a backend narrower than `f64`.
    fn finish_placing(
        &mut self,
        info: &BlobInfo,
        first: Option<Raw>,
        last: Option<Raw>,
        station: u64,
    ) -> Result<(), BlobError> {
        let (Some(first), Some(last)) = (first, last) else {
            return Err(BlobError::NoSegments);
        };
        let closing_cusp = info.closed && first.direction != last.direction;
        if info.cusps != (self.saw_cusp || closing_cusp) {
            return Err(BlobError::CuspFlagMismatch);
        }
        let Body::Placing(placed) = core::mem::replace(&mut self.body, Body::Waiting) else {
            return Err(BlobError::Truncated {
                received: self.received,
            });
        };
        if info.closed {
            if let Some(p) = placed.last() {
                narrow::check_joint(&last, p, &first, info, closing_cusp, 0)?;
            }
        }
        let end = narrow::path_end(&last, &placed, station, &info.units)?;
        self.body = Body::Built(Path::from_placed(placed, end.station, end, info.closed));
        self.stage = Stage::Done;
        Ok(())
    }
}

/// Decodes a blob held whole in memory (flash, a received buffer).
///
/// # Errors
/// As [`Decoder::feed`] and [`Decoder::finish`], and
/// [`BlobError::TrailingBytes`] if `bytes` runs on past the blob.
pub fn decode<T: Real, const N: usize>(bytes: &[u8]) -> Result<(Path<T, N>, BlobInfo), BlobError> {
    let mut d = Decoder::<T, N>::new();
    match d.feed(bytes)? {
        Progress::Done { used } if used < bytes.len() => Err(BlobError::TrailingBytes {
            extra: bytes.len() - used,
        }),
        _ => d.finish(),
    }
}

/// The segment error with the index the segment has in the blob.
pub(crate) fn at_index(e: PathError, index: usize) -> PathError {
    match e {
        PathError::NonFinite { .. } => PathError::NonFinite { index },
        PathError::NonPositiveLength { .. } => PathError::NonPositiveLength { index },
        PathError::CurvatureOutOfRange { .. } => PathError::CurvatureOutOfRange { index },
        PathError::SharpnessOutOfRange { .. } => PathError::SharpnessOutOfRange { index },
        other => other,
    }
}

fn byte(b: &[u8], at: usize) -> u8 {
    b.get(at).copied().unwrap_or(0)
}

fn u16_at(b: &[u8], at: usize) -> u16 {
    u16::from_le_bytes(array_at(b, at))
}

/// `K` bytes of `b` from `at` (zero where `b` ends: never the case for the
/// fixed offsets used here).
fn array_at<const K: usize>(b: &[u8], at: usize) -> [u8; K] {
    let mut out = [0u8; K];
    if let Some(src) = b.get(at..) {
        for (d, s) in out.iter_mut().zip(src) {
            *d = *s;
        }
    }
    out
}
