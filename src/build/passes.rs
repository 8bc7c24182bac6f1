//! Field passes: pass `n` is the reference path shifted sideways by
//! `n * swath` metres (left positive). No segment is copied: every pass is
//! evaluated from the reference.
//!
//! # Geometry of an offset curve
//!
//! With the reference point `p(s)`, unit tangent `T(s)`, left normal `N(s)`
//! and curvature `kappa(s)`, the pass at offset `d` is `q(s) = p(s) + d N(s)`.
//! From the Frenet equations `N' = -kappa T`, so `q'(s) = (1 - kappa d) T`:
//!
//! * the pass has the reference's heading wherever `1 - kappa d > 0`;
//! * its station is `s_d(s) = int_0^s (1 - kappa d) ds = s - d (theta(s) -
//!   theta(0))` (theta unwrapped), see [`Pass::station`];
//! * its curvature is `kappa / (1 - kappa d)` ([`offset_curvature`]), the
//!   feedforward a steering law should use on the pass;
//! * where `kappa d >= 1` the offset curve has a cusp (it folds back on
//!   itself: the pass is inside the reference's centre of curvature) and the
//!   pass cannot be driven: [`PassError::Cusp`], with the station where.
//!
//! # Tracking on a pass
//!
//! Project the control point onto the **reference** with the core
//! [`crate::Tracker`], telling it the pass offset ([`Pass::update`], or
//! [`crate::Tracker::update_offset`] and then [`Pass::track`]): the
//! cross-track to pass `n` is the reference cross-track minus `n * swath`;
//! heading error is unchanged (offset curves share their normals);
//! curvatures become offset curvatures. The tracker judges loss by the
//! distance to the pass, not to the reference (a pass 12 m beside the
//! reference is not "lost"), and its window keeps it on its station even
//! though the neighbouring passes lie one swath to the side.
//!
//! ```
//! use kappaline::{PathBuilder, Passes, Pose, Segment, Side, TrackStatus, Tracker, TrackerConfig};
//! # fn main() -> Result<(), Box<dyn core::error::Error>> {
//! let reference = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))?
//!     .push(Segment::line(200.0)?)?
//!     .build()?;
//! let passes = Passes::new(6.0)?; // 6 m swath
//! let pass = passes.pass(passes.next(0, Side::Left, 1)?); // skip one: pass 2
//! assert_eq!(pass.index, 2);
//! let mut tracker = Tracker::new(TrackerConfig::tractor())?;
//! let (t, on_pass) = pass.update(&mut tracker, &reference, &Pose::new(50.0, 12.1, 0.0))?;
//! assert_eq!(t.status, TrackStatus::OnPath); // on pass 2, 12 m from the reference
//! assert!(tracker.is_acquired());
//! assert!((on_pass.cross_track - 0.1).abs() < 1e-9); // 10 cm left of pass 2
//! # Ok(()) }
//! ```

use crate::num::real::Real;
use crate::path::anchored::{Path, PathBuilder};
use crate::path::error::PathError;
use crate::path::pose::{PathPoint, Pose};
use crate::path::segment::Segment;
use crate::track::tracker::{Tracker, Tracking};

/// Why a pass cannot be formed or driven.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum PassError<T> {
    /// The swath is not positive and finite, or an input is NaN or infinite.
    BadInput,
    /// The pass index overflowed (sequencing past `i32` range).
    IndexOverflow,
    /// `kappa * offset >= 1`: the offset curve cusps (folds back) from
    /// `station` (metres, on the reference) on, in reference segment `segment`.
    Cusp {
        /// First reference station where `kappa * offset >= 1`, metres.
        station: T,
        /// Reference segment index.
        segment: usize,
        /// `kappa * offset` there (>= 1).
        ratio: T,
    },
}

impl<T: Real> core::fmt::Display for PassError<T> {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            PassError::BadInput => f.write_str("swath or input not positive and finite"),
            PassError::IndexOverflow => f.write_str("pass index out of range"),
            PassError::Cusp { station, segment, .. } => write!(
                f,
                "pass would cusp (kappa * offset >= 1) from reference station {station} m (segment {segment})"
            ),
        }
    }
}

impl<T: Real> core::error::Error for PassError<T> {}

/// Which way the next pass lies.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Side {
    /// Towards increasing pass index (left of the reference direction).
    Left,
    /// Towards decreasing pass index (right of the reference direction).
    Right,
}

/// The passes of a field: a swath width. Pass `n` lies at `n * swath`
/// metres left of the reference (negative `n`: right).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Passes<T> {
    swath: T,
}

impl<T: Real> Passes<T> {
    /// Passes `swath` metres apart (> 0, finite).
    ///
    /// # Errors
    /// [`PassError::BadInput`] otherwise.
    pub fn new(swath: T) -> Result<Self, PassError<T>> {
        if swath.is_finite() && swath > T::ZERO {
            Ok(Self { swath })
        } else {
            Err(PassError::BadInput)
        }
    }

    /// The swath width, metres.
    pub fn swath(&self) -> T {
        self.swath
    }

    /// Offset of pass `n`, metres (left positive): `n * swath`.
    pub fn offset(&self, n: i32) -> T {
        int_to_real::<T>(n) * self.swath
    }

    /// Pass `n`.
    pub fn pass(&self, n: i32) -> Pass<T> {
        Pass {
            index: n,
            offset: self.offset(n),
        }
    }

    /// The index of the pass after `n` on `side`, skipping `skip` passes
    /// (0: the neighbour; 1: every other pass, as in a skip-row pattern).
    ///
    /// # Errors
    /// [`PassError::IndexOverflow`] past the `i32` range.
    pub fn next(&self, n: i32, side: Side, skip: u16) -> Result<i32, PassError<T>> {
        let step = i32::from(skip) + 1;
        match side {
            Side::Left => n.checked_add(step),
            Side::Right => n.checked_sub(step),
        }
        .ok_or(PassError::IndexOverflow)
    }
}

/// One pass: its index and its offset from the reference.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Pass<T> {
    /// Pass index (0: the reference itself).
    pub index: i32,
    /// Offset from the reference, metres, left positive.
    pub offset: T,
}

/// The state of a pass at one reference station.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PassPoint<T> {
    /// Station on the reference, metres.
    pub reference_station: T,
    /// Station along the pass itself, metres (see [`Pass::station`]).
    pub station: T,
    /// Position on the pass, metres.
    pub x: T,
    /// Position on the pass, metres.
    pub y: T,
    /// Unit tangent (the reference's), `x` part.
    pub cos: T,
    /// Unit tangent, `y` part.
    pub sin: T,
    /// Curvature of the pass, 1/m: `kappa / (1 - kappa * offset)`.
    pub curvature: T,
}

impl<T: Real> PassPoint<T> {
    /// Heading of the pass, radians in `[-pi, pi]` (one `atan2`).
    pub fn heading(&self) -> T {
        self.sin.atan2(self.cos)
    }
    /// The pose on the pass (metres, radians).
    pub fn pose(&self) -> Pose<T> {
        Pose::new(self.x, self.y, self.heading())
    }
}

/// Tracking errors relative to a pass.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PassTracking<T> {
    /// Station on the reference, metres.
    pub reference_station: T,
    /// Cross-track to the pass, metres, positive left of the pass.
    pub cross_track: T,
    /// Heading error, radians, as on the reference.
    pub heading_error: T,
    /// Pass curvature at the foot point, 1/m (feedforward).
    pub curvature: T,
    /// Pass curvature at the lookahead station, 1/m.
    pub curvature_ahead: T,
}

/// The curvature of an offset curve: `kappa / (1 - kappa * offset)` (1/m),
/// for reference curvature `kappa` (1/m) and `offset` metres to the left.
///
/// # Errors
/// [`PassError::Cusp`] (station 0, segment 0: the caller knows where) when
/// `kappa * offset >= 1`; [`PassError::BadInput`] for non-finite input.
pub fn offset_curvature<T: Real>(kappa: T, offset: T) -> Result<T, PassError<T>> {
    if !(kappa.is_finite() && offset.is_finite()) {
        return Err(PassError::BadInput);
    }
    let ratio = kappa * offset;
    if ratio >= T::ONE {
        return Err(PassError::Cusp {
            station: T::ZERO,
            segment: 0,
            ratio,
        });
    }
    Ok(kappa / (T::ONE - ratio))
}

impl<T: Real> Pass<T> {
    /// Checks the whole reference: `Ok` when `kappa * offset < 1` everywhere.
    /// Cost: one look at each segment's end curvatures (curvature is linear
    /// within a segment, so its extremes are at the ends).
    ///
    /// # Errors
    /// [`PassError::Cusp`] with the first station where the pass cusps.
    pub fn check<const N: usize>(&self, reference: &Path<T, N>) -> Result<(), PassError<T>> {
        let d = self.offset;
        for segment in 0..reference.len() {
            let (Some(seg), Some(start)) =
                (reference.segment(segment), reference.segment_start(segment))
            else {
                break;
            };
            let r0 = seg.kappa0() * d;
            let r1 = seg.kappa_end() * d;
            if r0 >= T::ONE {
                return Err(PassError::Cusp {
                    station: start,
                    segment,
                    ratio: r0,
                });
            }
            if r1 >= T::ONE {
                // kappa(u) d = r0 + (r1 - r0) u / L reaches 1 at this u.
                let u = (T::ONE - r0) / (r1 - r0) * seg.length();
                return Err(PassError::Cusp {
                    station: start + u.clamp_to(T::ZERO, seg.length()),
                    segment,
                    ratio: r1,
                });
            }
        }
        Ok(())
    }

    /// The pass at reference station `s` (clamped or wrapped as
    /// [`Path::at`] does).
    ///
    /// # Errors
    /// [`PassError::Cusp`] if `kappa(s) * offset >= 1` there;
    /// [`PassError::BadInput`] for a non-finite station.
    pub fn point<const N: usize>(
        &self,
        reference: &Path<T, N>,
        s: T,
    ) -> Result<PassPoint<T>, PassError<T>> {
        if !s.is_finite() {
            return Err(PassError::BadInput);
        }
        let p = reference.at(s);
        let curvature = offset_curvature(p.curvature, self.offset).map_err(|e| match e {
            PassError::Cusp { ratio, .. } => PassError::Cusp {
                station: p.station,
                segment: p.segment,
                ratio,
            },
            other => other,
        })?;
        Ok(PassPoint {
            reference_station: p.station,
            station: self.station_at(reference, &p),
            x: p.x - self.offset * p.sin,
            y: p.y + self.offset * p.cos,
            cos: p.cos,
            sin: p.sin,
            curvature,
        })
    }

    /// Station along the pass at reference station `s`, metres:
    /// `s_d = s - d (theta(s) - theta(0))`, the integral of `1 - kappa d`
    /// (valid while the pass is cusp-free; see [`Pass::check`]).
    /// Cost: O(segments before `s`).
    pub fn station<const N: usize>(&self, reference: &Path<T, N>, s: T) -> T {
        let p = reference.at(s);
        self.station_at(reference, &p)
    }

    /// Length of the whole pass, metres.
    pub fn length<const N: usize>(&self, reference: &Path<T, N>) -> T {
        self.station(reference, reference.length())
    }

    fn station_at<const N: usize>(&self, reference: &Path<T, N>, p: &PathPoint<T>) -> T {
        p.station - self.offset * turned_to(reference, p)
    }

    /// Tracking errors relative to this pass from a tracking state on the
    /// reference, as [`Tracker::update_offset`] returns it for this pass's
    /// offset (see the module documentation and [`Pass::update`]).
    ///
    /// # Errors
    /// [`PassError::Cusp`] where the foot point or the lookahead point lies
    /// where the pass cusps.
    pub fn track(&self, t: &Tracking<T>) -> Result<PassTracking<T>, PassError<T>> {
        let here = |pp: &PathPoint<T>| {
            offset_curvature(pp.curvature, self.offset).map_err(|e| match e {
                PassError::Cusp { ratio, .. } => PassError::Cusp {
                    station: pp.station,
                    segment: pp.segment,
                    ratio,
                },
                other => other,
            })
        };
        Ok(PassTracking {
            reference_station: t.station,
            cross_track: t.cross_track - self.offset,
            heading_error: t.heading_error,
            curvature: here(&t.foot)?,
            curvature_ahead: here(&t.ahead)?,
        })
    }

    /// One tracking update on this pass: projects `pose` onto `reference`
    /// with [`Tracker::update_offset`] at this pass's offset (so loss is
    /// judged by the distance to the pass) and turns the result into errors
    /// relative to the pass ([`Pass::track`]). Returns both: the reference
    /// tracking carries the station and [`crate::TrackStatus`].
    ///
    /// # Errors
    /// [`PassError::BadInput`] if the pose is not finite (the tracker is
    /// unchanged); [`PassError::Cusp`] as [`Pass::track`] (the tracker has
    /// moved).
    pub fn update<const N: usize>(
        &self,
        tracker: &mut Tracker<T>,
        reference: &Path<T, N>,
        pose: &Pose<T>,
    ) -> Result<(Tracking<T>, PassTracking<T>), PassError<T>> {
        let t = tracker
            .update_offset(reference, pose, self.offset)
            .map_err(|_| PassError::BadInput)?;
        Ok((t, self.track(&t)?))
    }

    /// Where the pass starts: position and heading at reference station 0.
    ///
    /// # Errors
    /// As [`Pass::point`].
    pub fn start_pose<const N: usize>(
        &self,
        reference: &Path<T, N>,
    ) -> Result<Pose<T>, PassError<T>> {
        Ok(self.point(reference, T::ZERO)?.pose())
    }

    /// Where the pass ends: position and heading at the reference's end.
    ///
    /// # Errors
    /// As [`Pass::point`].
    pub fn end_pose<const N: usize>(
        &self,
        reference: &Path<T, N>,
    ) -> Result<Pose<T>, PassError<T>> {
        Ok(self.point(reference, reference.length())?.pose())
    }
}

/// Unwrapped heading change of the reference from station 0 to the point `p`.
fn turned_to<T: Real, const N: usize>(reference: &Path<T, N>, p: &PathPoint<T>) -> T {
    let mut turned = T::ZERO;
    for i in 0..p.segment.min(reference.len()) {
        if let Some(seg) = reference.segment(i) {
            turned += seg.heading_change(seg.length());
        }
    }
    let into = reference
        .segment_start(p.segment)
        .map_or(T::ZERO, |start| p.station - start);
    if let Some(seg) = reference.segment(p.segment) {
        turned += seg.heading_change(into);
    }
    turned
}

/// The reference driven the other way: same curve, from its end to its
/// start, headings turned by pi and curvatures negated (a left turn driven
/// backwards along the curve is a right turn). Pass `n` of the reference is
/// pass `-n` of the reversed path: use it for the passes driven against the
/// reference direction in a back-and-forth field pattern.
///
/// Each segment keeps its driving direction, so a cusp of the reference
/// (a joint where the direction changes) is a cusp of the reversed path at
/// the same place: the tangent of the reversed legs turns by pi there too.
///
/// Cost: O(N), once per field, not per control cycle.
///
/// # Errors
/// As [`PathBuilder::push`].
pub fn reversed_path<T: Real, const N: usize>(
    reference: &Path<T, N>,
) -> Result<Path<T, N>, PathError> {
    let end = reference.end_pose();
    let mut b =
        PathBuilder::<T, N>::new(Pose::new(end.x, end.y, (end.heading + T::PI).wrap_angle()))?;
    let mut after: Option<Segment<T>> = None;
    for i in (0..reference.len()).rev() {
        if let Some(seg) = reference.segment(i) {
            let r = Segment::clothoid(seg.length(), -seg.kappa_end(), seg.sigma())?
                .with_direction(seg.direction());
            if after.is_some_and(|a| a.direction() != seg.direction()) {
                b.try_push_cusp(r)?;
            } else {
                b.try_push(r)?;
            }
            after = Some(seg);
        }
    }
    b.build()
}

/// `n` as `T`, exactly for |n| < 2^24 in `f32` and for all `i32` in `f64`.
fn int_to_real<T: Real>(n: i32) -> T {
    let mag = T::from_u32(n.unsigned_abs());
    if n < 0 {
        -mag
    } else {
        mag
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{Segment, Tracker, TrackerConfig};

    fn curved() -> Path<f64, 8> {
        PathBuilder::new(Pose::new(0.0, 0.0, 0.2))
            .unwrap()
            .push(Segment::line(30.0).unwrap())
            .unwrap()
            .push(Segment::transition(10.0, 0.0, 0.05).unwrap())
            .unwrap()
            .push(Segment::arc(20.0, 0.05).unwrap())
            .unwrap()
            .push(Segment::transition(10.0, 0.05, 0.0).unwrap())
            .unwrap()
            .build()
            .unwrap()
    }

    #[test]
    fn sequencing() {
        let p = Passes::new(3.0f64).unwrap();
        assert_eq!(p.next(0, Side::Left, 0), Ok(1));
        assert_eq!(p.next(0, Side::Right, 0), Ok(-1));
        assert_eq!(p.next(4, Side::Right, 2), Ok(1));
        assert_eq!(
            p.next(i32::MAX, Side::Left, 0),
            Err(PassError::IndexOverflow)
        );
        assert_eq!(p.offset(-3), -9.0);
        assert_eq!(Passes::new(0.0f64), Err(PassError::BadInput));
        assert_eq!(Passes::new(f64::NAN), Err(PassError::BadInput));
    }

    #[test]
    fn cusp_is_found_where_it_starts() {
        // Radius 20 m: a pass 25 m to the left (inside) cusps; kappa d
        // reaches 1 at kappa = 0.04, 8 m into the entry clothoid.
        let r = curved();
        let pass = Passes::new(25.0).unwrap().pass(1);
        match pass.check(&r) {
            Err(PassError::Cusp {
                station, segment, ..
            }) => {
                assert_eq!(segment, 1);
                assert!((station - 38.0).abs() < 1e-12, "{station}");
            }
            other => panic!("{other:?}"),
        }
        assert!(Passes::new(25.0).unwrap().pass(-1).check(&r).is_ok());
        assert!(matches!(
            pass.point(&r, 45.0),
            Err(PassError::Cusp { segment: 2, .. })
        ));
    }

    #[test]
    fn station_relation_on_an_arc() {
        // On an arc of radius R, a pass at offset d has radius R - d, so its
        // length is (R - d)/R of the reference (elementary geometry).
        let r = PathBuilder::<f64, 2>::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap()
            .push(Segment::arc(30.0, 0.05).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let pass = Passes::new(4.0).unwrap().pass(-2); // 8 m right: outside
        assert!((pass.length(&r) - 30.0 * (20.0 + 8.0) / 20.0).abs() < 1e-12);
    }

    #[test]
    fn reversed_path_retraces_the_curve() {
        let r = curved();
        let back = reversed_path(&r).unwrap();
        assert!((back.length() - r.length()).abs() < 1e-12);
        let e = back.end_pose();
        assert!(e.x.abs() < 1e-9 && e.y.abs() < 1e-9);
        assert!(((e.heading - 0.2).wrap_angle() - core::f64::consts::PI).abs() < 1e-9);
        let a = r.at(37.0);
        let b = back.at(r.length() - 37.0);
        assert!((a.x - b.x).abs() < 1e-9 && (a.y - b.y).abs() < 1e-9);
        assert!((a.curvature + b.curvature).abs() < 1e-12);
        // Pass 1 of the reference is pass -1 of the reversed path.
        let p = Passes::new(3.0).unwrap();
        let q1 = p.pass(1).point(&r, 37.0).unwrap();
        let q2 = p.pass(-1).point(&back, r.length() - 37.0).unwrap();
        assert!((q1.x - q2.x).abs() < 1e-9 && (q1.y - q2.y).abs() < 1e-9);
    }

    #[test]
    fn reversed_path_keeps_cusps() {
        // Forward 10 m along +x, cusp, reverse 5 m (elementary geometry:
        // the reference visits (0,0) -> (10,0) -> (5,0)).
        let mut b = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0)).unwrap();
        b.try_push(Segment::line(10.0).unwrap()).unwrap();
        b.try_push_cusp(Segment::line(5.0).unwrap().reversed())
            .unwrap();
        let r = b.build().unwrap();
        let e = r.end_pose();
        assert!((e.x - 5.0).abs() < 1e-12 && e.y.abs() < 1e-12);
        let back = reversed_path(&r).unwrap();
        // The same points in reverse order: (5,0) -> (10,0) -> (0,0).
        let e = back.end_pose();
        assert!(e.x.abs() < 1e-12 && e.y.abs() < 1e-12, "{e:?}");
        for s in [0.0, 2.0, 5.0, 7.5, 12.0, 15.0] {
            let a = r.at(s);
            let q = back.at(back.length() - s);
            assert!(
                (a.x - q.x).abs() < 1e-12 && (a.y - q.y).abs() < 1e-12,
                "s {s}"
            );
        }
        // Directions in reverse order, the cusp where it was.
        assert_eq!(back.at(2.0).direction, crate::Direction::Reverse);
        assert_eq!(back.at(10.0).direction, crate::Direction::Forward);
        assert!((back.at(2.0).heading()).abs() < 1e-12);
        assert!((back.at(10.0).heading().abs() - core::f64::consts::PI).abs() < 1e-12);
        // Curved legs: forward arc left, cusp, reverse clothoid.
        let mut b = PathBuilder::<f64, 4>::new(Pose::new(1.0, 2.0, 0.3)).unwrap();
        b.try_push(Segment::arc(8.0, 0.1).unwrap()).unwrap();
        b.try_push_cusp(Segment::transition(6.0, 0.05, -0.1).unwrap().reversed())
            .unwrap();
        b.try_push(Segment::line(3.0).unwrap().reversed()).unwrap();
        let r = b.build().unwrap();
        let back = reversed_path(&r).unwrap();
        assert!((back.length() - r.length()).abs() < 1e-12);
        for i in 0..=34 {
            let s = 0.5 * f64::from(i);
            let a = r.at(s);
            let q = back.at(back.length() - s);
            assert!((a.x - q.x).hypot(a.y - q.y) < 1e-9, "s {s}: {a:?} {q:?}");
            // Body heading turned by pi: each leg keeps its driving
            // direction while its tangent turns round.
            if (s - 8.0).abs() > 1e-9 {
                assert!(
                    (a.body_heading() - q.body_heading() - core::f64::consts::PI)
                        .wrap_angle()
                        .abs()
                        < 1e-9,
                    "s {s}"
                );
            }
        }
        let e = back.end_pose();
        assert!((e.x - 1.0).abs() < 1e-9 && (e.y - 2.0).abs() < 1e-9);
    }

    #[test]
    fn track_subtracts_the_offset() {
        let r = curved();
        let pass = Passes::new(3.0).unwrap().pass(2);
        let q = pass.point(&r, 50.0).unwrap();
        let mut t = Tracker::new(TrackerConfig::tractor()).unwrap();
        let (tr, on) = pass.update(&mut t, &r, &q.pose()).unwrap();
        // 6 m from the reference, but on the pass: not lost.
        assert_eq!(tr.status, crate::TrackStatus::OnPath);
        assert!(t.is_acquired());
        assert!((tr.station - 50.0).abs() < 1e-9);
        assert!(on.cross_track.abs() < 1e-9);
        // Offset-curve curvature kappa / (1 - kappa d) (parallel curves, see
        // the module documentation).
        assert!((on.curvature - 0.05 / (1.0 - 0.05 * 6.0)).abs() < 1e-12);
    }

    #[test]
    fn driving_along_a_pass_nine_metres_out_stays_on_it() {
        // Pass 3 of a 3 m swath: 9 m left of the reference, inside its
        // 20 m radius (kappa d = 0.45), 0.2 m left of the pass.
        let r = curved();
        let pass = Passes::new(3.0).unwrap().pass(3);
        pass.check(&r).unwrap();
        let mut t = Tracker::new(TrackerConfig::tractor()).unwrap();
        let mut last = f64::NEG_INFINITY;
        let steps = 350; // 0.2 m of reference station per step
        for i in 0..=steps {
            let s = 0.1 + (r.length() - 0.2) * f64::from(i) / f64::from(steps);
            let q = pass.point(&r, s).unwrap();
            let pose = Pose::new(q.x - 0.2 * q.sin, q.y + 0.2 * q.cos, q.heading());
            let (tr, on) = pass.update(&mut t, &r, &pose).unwrap();
            assert_eq!(tr.status, crate::TrackStatus::OnPath, "step {i}");
            // Acquired on the first step and never lost: no whole-path search after it.
            assert!(t.is_acquired(), "step {i}");
            assert!(tr.station > last, "station went back at step {i}");
            assert!(
                (tr.station - s).abs() < 1e-9,
                "step {i}: {} vs {s}",
                tr.station
            );
            assert!((on.cross_track - 0.2).abs() < 1e-9, "step {i}");
            last = tr.station;
        }
    }

    #[test]
    fn offset_update_judges_loss_from_the_pass() {
        let r = curved();
        // (station, offset) on the reference's first line (heading 0.2 rad
        // from the origin) to plane coordinates.
        let (sn, cs) = 0.2f64.sin_cos();
        let at = |s: f64, d: f64| Pose::new(s * cs - d * sn, s * sn + d * cs, 0.2);
        let mut t = Tracker::new(TrackerConfig::tractor()).unwrap();
        // 9 m left of the reference at station 10.
        let on_pass = at(10.0, 9.0);
        let tr = t.update_offset(&r, &on_pass, 9.0).unwrap();
        assert_eq!(tr.status, crate::TrackStatus::OnPath);
        assert!((tr.station - 10.0).abs() < 1e-9);
        assert!((tr.cross_track - 9.0).abs() < 1e-9);
        // The same point is lost from a pass 3 m out (6 m away > 2 m)...
        let mut u = Tracker::new(TrackerConfig::tractor()).unwrap();
        assert_eq!(
            u.update_offset(&r, &on_pass, 3.0).unwrap().status,
            crate::TrackStatus::Lost
        );
        assert!(!u.is_acquired());
        // ...and from the reference itself, as `update` judges it.
        assert_eq!(
            u.update(&r, &on_pass).unwrap().status,
            crate::TrackStatus::Lost
        );
        // Beyond the start, the lateral offset from the pass decides.
        let before = at(-1.0, 9.5);
        let mut v = Tracker::new(TrackerConfig::tractor()).unwrap();
        let tb = v.update_offset(&r, &before, 9.0).unwrap();
        assert_eq!(tb.status, crate::TrackStatus::BeforeStart);
        assert!((tb.station + 1.0).abs() < 1e-9 && (tb.cross_track - 9.5).abs() < 1e-9);
        let mut w = Tracker::new(TrackerConfig::tractor()).unwrap();
        assert_eq!(
            w.update_offset(&r, &at(-1.0, 12.0), 9.0).unwrap().status,
            crate::TrackStatus::Lost
        );
        // Bad offset: typed error, tracker unchanged.
        let kept = t;
        assert_eq!(
            t.update_offset(&r, &before, f64::NAN),
            Err(crate::TrackError::NonFinite)
        );
        assert_eq!(t, kept);
    }
}
