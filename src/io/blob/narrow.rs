//! Reading records into a backend narrower than `f64` (`f32`) without any
//! `f64` arithmetic: an `f32` firmware that loads its path from a blob then
//! carries no soft-float `f64` and no `f64` trigonometry.
//!
//! The records are read from their integers: positions and lengths divided
//! by the unit in `T`, the anchor heading reduced exactly in integer turns
//! to a quarter turn and an angle within pi/4, stations summed in integers.
//! The joint check is the wide decoder's (the segment before evaluated from
//! its stored anchor and compared with the next stored anchor), done in
//! `T`: the difference of two stored anchors is exact in integers, the
//! segment's end offset comes from its closed form in `T`. The tolerance
//! is widened by `SLACK` units of `T::EPSILON` times the lengths involved
//! (for `f32`, 0.2 mm for 50 m of segment and 50 m between the anchors) to
//! cover that rounding: a blob the encoder accepted (checked in `f64`)
//! decodes, and a joint off by more than the tolerance plus the slack is
//! refused, as in `f64`.

use heapless::Vec;

use crate::io::blob::{BlobError, BlobInfo, Units};
use crate::num::complex::Cplx;
use crate::num::real::{c, Real};
use crate::path::anchored::{Placed, MAX_COORDINATE};
use crate::path::error::PathError;
use crate::path::pose::Direction;
use crate::path::segment::Segment;

/// `true` if `T` holds `f64`'s digits: the decoder then reads the records
/// in `f64`, exactly as the encoder checked them.
#[inline]
pub(crate) fn is_wide<T: Real>() -> bool {
    core::mem::size_of::<T>() >= core::mem::size_of::<f64>()
}

/// Rounding allowance of the joint check in `T`, in units of
/// `T::EPSILON` times the lengths (metres) or angles (radians) involved
/// (one segment evaluation, one rotation, a few conversions: each a few
/// units of rounding; common practice for an error budget).
const SLACK: f64 = 16.0;

/// `2 pi / 2^32`: radians per heading unit.
const RAD_PER_UNIT: f64 = core::f64::consts::TAU / 4_294_967_296.0;

/// A segment record's integers, as stored.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Raw {
    pub x: i32,
    pub y: i32,
    pub heading: u32,
    pub length: u32,
    pub kappa0: i32,
    pub sigma: i32,
    pub direction: Direction,
}

/// `10^e` in `T` (exact to `10^10` in `f32`).
fn pow10<T: Real>(e: u8) -> T {
    let ten = T::from_u32(10);
    let mut v = T::ONE;
    let mut i = 0u8;
    while i < e && i < 22 {
        v *= ten;
        i += 1;
    }
    v
}

/// A count of units below `2^44` in magnitude (stations, anchor
/// differences), in `T`: two exact parts, one rounding in their sum.
fn from_i64<T: Real>(v: i64) -> T {
    let v = v.clamp(-(1 << 44), 1 << 44);
    let high = (v >> 20) as i32;
    let low = (v & 0xF_FFFF) as u32;
    T::from_i32(high) * T::from_u32(1 << 20) + T::from_u32(low)
}

/// The unit tangent at a heading of `turns` `2^-32` turn.
fn tangent<T: Real>(turns: u32) -> Cplx<T> {
    // Nearest quarter turn, and the rest within +-1/8 turn: exact in
    // integers, so the sine and cosine see an angle within pi/4.
    let quarter = turns.wrapping_add(1 << 29) >> 30;
    let rest = turns.wrapping_sub(quarter << 30) as i32;
    let (s, co) = (T::from_i32(rest) * c(RAD_PER_UNIT)).sin_cos();
    match quarter & 3 {
        0 => Cplx::new(co, s),
        1 => Cplx::new(-s, co),
        2 => Cplx::new(-co, -s),
        _ => Cplx::new(s, -co),
    }
}

fn within_plane<T: Real>(v: T) -> bool {
    v.is_finite() && v.abs() <= c(MAX_COORDINATE)
}

/// The record's segment in `T`, with the index it has in the blob.
pub(crate) fn segment<T: Real>(
    raw: &Raw,
    units: &Units,
    index: usize,
) -> Result<Segment<T>, PathError> {
    Segment::clothoid(
        T::from_u32(raw.length) / pow10(units.length),
        T::from_i32(raw.kappa0) / pow10(units.curvature),
        T::from_i32(raw.sigma) / pow10(units.sharpness),
    )
    .map(|s| s.with_direction(raw.direction))
    .map_err(|e| super::decode::at_index(e, index))
}

/// The record placed at its stored anchor, `station` units along the
/// path, and the station (units) where it ends. Refuses what the wide
/// decoder refuses: a segment out of range, a start or end that is not
/// finite or beyond [`MAX_COORDINATE`], a length that does not move the
/// station in `T`.
pub(crate) fn place<T: Real>(
    raw: &Raw,
    units: &Units,
    station: u64,
    index: usize,
) -> Result<(Placed<T>, u64), PathError> {
    let seg = segment::<T>(raw, units, index)?;
    let unit = pow10::<T>(units.length);
    let (x, y) = (T::from_i32(raw.x) / unit, T::from_i32(raw.y) / unit);
    if !(within_plane(x) && within_plane(y)) {
        return Err(PathError::OutOfRange);
    }
    let t = tangent::<T>(raw.heading);
    let placed = Placed {
        station: from_i64::<T>(station as i64) / unit,
        kappa0: seg.kappa0(),
        sigma: seg.sigma(),
        x,
        y,
        cos: t.re,
        sin: t.im,
        direction: raw.direction,
    };
    let end_station = station.saturating_add(u64::from(raw.length));
    let end = end_of(&placed, &seg, end_station, unit);
    // As the wide decoder: not finite in `T` first, then out of the plane.
    if !(end.x.is_finite() && end.y.is_finite() && end.station.is_finite()) {
        return Err(PathError::NonFinite { index });
    }
    if !(within_plane(end.x) && within_plane(end.y) && within_plane(end.station)) {
        return Err(PathError::OutOfRange);
    }
    if end.station <= placed.station {
        return Err(PathError::NonPositiveLength { index });
    }
    Ok((placed, end_station))
}

/// The end of `seg` placed as `placed`, as a record with zero curvature
/// (the path's end pose), at `end_station` units.
pub(crate) fn end_of<T: Real>(
    placed: &Placed<T>,
    seg: &Segment<T>,
    end_station: u64,
    unit: T,
) -> Placed<T> {
    let lp = seg.local(seg.length());
    let start = Cplx::new(placed.cos, placed.sin);
    let d = lp.offset * start;
    let t = lp.turn * start;
    Placed {
        station: from_i64::<T>(end_station as i64) / unit,
        kappa0: T::ZERO,
        sigma: T::ZERO,
        x: placed.x + d.re,
        y: placed.y + d.im,
        cos: t.re,
        sin: t.im,
        direction: Direction::Forward,
    }
}

/// Checks the joint between the segment of `before` (placed as `placed`)
/// and the stored anchor of `next`, the end tangent turned by pi at a
/// cusp: the same gaps the wide decoder computes, within the tolerance
/// plus the rounding allowance of `T`.
///
/// # Errors
/// `PositionGap` or `HeadingGap` with `index`.
pub(crate) fn check_joint<T: Real>(
    before: &Raw,
    placed: &Placed<T>,
    next: &Raw,
    info: &BlobInfo,
    cusp: bool,
    index: usize,
) -> Result<(), BlobError> {
    let units = &info.units;
    let seg = segment::<T>(before, units, index).map_err(BlobError::Segment)?;
    let unit = pow10::<T>(units.length);
    let len = seg.length();
    let d = seg.local(len).offset * Cplx::new(placed.cos, placed.sin);
    // The stored anchors' difference, exact in integers.
    let sx = from_i64::<T>(i64::from(next.x) - i64::from(before.x)) / unit;
    let sy = from_i64::<T>(i64::from(next.y) - i64::from(before.y)) / unit;
    let (gx, gy) = (sx - d.re, sy - d.im);
    let dp = (gx * gx + gy * gy).sqrt();
    let slack = T::EPSILON * c(SLACK);
    let position = T::from_u32(u32::from(info.position_tolerance)) / unit
        + slack * (len + (sx * sx + sy * sy).sqrt());
    if !(dp.is_finite() && dp <= position) {
        return Err(BlobError::Segment(PathError::PositionGap { index }));
    }
    let mut turn = next.heading.wrapping_sub(before.heading);
    if cusp {
        turn = turn.wrapping_add(1 << 31);
    }
    let change = seg.heading_change(len);
    let dh = (T::from_i32(turn as i32) * c(RAD_PER_UNIT) - change)
        .wrap_angle()
        .abs();
    let heading = T::from_u32(u32::from(info.heading_tolerance_urad)) * c(1e-6)
        + slack * (change.abs() + T::PI);
    if !(dh.is_finite() && dh <= heading) {
        return Err(BlobError::Segment(PathError::HeadingGap { index }));
    }
    Ok(())
}

/// The end record of a path whose last segment is `last`, placed as the
/// last record of `placed`, ending `station` units along.
pub(crate) fn path_end<T: Real, const N: usize>(
    last: &Raw,
    placed: &Vec<Placed<T>, N>,
    station: u64,
    units: &Units,
) -> Result<Placed<T>, BlobError> {
    let Some(p) = placed.last() else {
        return Err(BlobError::NoSegments);
    };
    let index = placed.len().saturating_sub(1);
    let seg = segment::<T>(last, units, index).map_err(BlobError::Segment)?;
    Ok(end_of(p, &seg, station, pow10(units.length)))
}
