//! A fixed-capacity path of segments, each placed at its anchor.
//!
//! Each segment is stored with its **anchor**: the station, position and
//! heading (as a unit vector) where it starts. Anchors are computed once, when
//! the path is built, in `f64` whatever `T` is, and every evaluation inside a
//! segment is relative to its anchor. An `f32` path therefore stays accurate
//! over kilometres: the error of one evaluation is that of one segment, not
//! the sum over all segments before it.
//!
//! A placed segment takes 32 bytes with `f32` (seven numbers and the driving
//! direction; the length is the difference of consecutive stations), so a
//! 500 m straight pass costs 32 bytes, not thousands of points.
//!
//! Paths are open or closed. On a closed path stations wrap modulo the total
//! length and the last segment must end where the first begins.

use heapless::Vec;

use crate::num::complex::Cplx;
use crate::num::real::Real;
use crate::path::error::PathError;
use crate::path::pose::{Direction, PathPoint, Pose};
use crate::path::segment::Segment;

/// How far apart consecutive segments may be and still count as joined.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Continuity {
    /// Largest gap between the end of one segment and the start of the next, metres (G0).
    pub position: f64,
    /// Largest heading jump at a joint, radians (G1).
    pub heading: f64,
}

impl Continuity {
    /// 1 mm and 1 mrad: tight enough for guidance, loose enough for a path
    /// stored in millimetres and micro-radians.
    pub const DEFAULT: Self = Self {
        position: 1e-3,
        heading: 1e-3,
    };

    fn check(&self) -> Result<(), PathError> {
        let ok = |v: f64| v.is_finite() && v >= 0.0;
        if ok(self.position) && ok(self.heading) {
            Ok(())
        } else {
            Err(PathError::OutOfRange)
        }
    }
}

impl Default for Continuity {
    fn default() -> Self {
        Self::DEFAULT
    }
}

/// A segment placed on the path: its shape and its anchor.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Placed<T> {
    pub station: T,
    pub kappa0: T,
    pub sigma: T,
    pub x: T,
    pub y: T,
    pub cos: T,
    pub sin: T,
    pub direction: Direction,
}

/// An anchor computed in `f64`: where a segment starts.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Anchor64 {
    station: f64,
    x: f64,
    y: f64,
    /// Unwrapped heading, radians.
    theta: f64,
}

impl Anchor64 {
    /// The anchor at a pose, its heading wrapped exactly (see
    /// [`wrap_exactly`]) so that the turns added to it keep their digits.
    fn from_pose(p: Pose<f64>) -> Self {
        Self {
            station: 0.0,
            x: p.x,
            y: p.y,
            theta: wrap_exactly(p.heading),
        }
    }

    /// The anchor at the end of `seg` started here.
    fn after(&self, seg: &Segment<f64>) -> Self {
        let lp = seg.local(seg.length());
        let start = Cplx::expi(self.theta);
        let d = lp.offset * start;
        Self {
            station: self.station + seg.length(),
            x: self.x + d.re,
            y: self.y + d.im,
            theta: self.theta + seg.heading_change(seg.length()),
        }
    }

    fn place<T: Real>(&self, seg: &Segment<T>) -> Placed<T> {
        Placed {
            kappa0: seg.kappa0(),
            sigma: seg.sigma(),
            direction: seg.direction(),
            ..self.place_point()
        }
    }

    /// The anchor as a record with zero curvature (the path's end pose).
    fn place_point<T: Real>(&self) -> Placed<T> {
        let (s, c) = libm::sincos(self.theta);
        Placed {
            station: T::from_f64(self.station),
            kappa0: T::ZERO,
            sigma: T::ZERO,
            x: T::from_f64(self.x),
            y: T::from_f64(self.y),
            cos: T::from_f64(c),
            sin: T::from_f64(s),
            direction: Direction::Forward,
        }
    }

    /// The same anchor with its tangent turned by pi if `cusp` (the start
    /// of a segment driven the other way).
    fn turned(&self, cusp: bool) -> Self {
        let mut a = *self;
        if cusp {
            a.theta += core::f64::consts::PI;
        }
        a
    }

    /// Gaps (position metres, heading radians wrapped) to another anchor.
    fn gaps(&self, other: &Self) -> (f64, f64) {
        let dx = other.x - self.x;
        let dy = other.y - self.y;
        let dp = libm::sqrt(dx * dx + dy * dy);
        let dh = libm::fabs((other.theta - self.theta).wrap_angle());
        (dp, dh)
    }
}

/// Builds a [`Path`] segment by segment from a start pose, so that every
/// segment starts exactly where the previous one ends (G0 and G1 continuous
/// by construction).
///
/// ```
/// use kappaline::{PathBuilder, Pose, Segment};
/// # fn main() -> Result<(), kappaline::PathError> {
/// let path = PathBuilder::<f64, 8>::new(Pose::new(0.0, 0.0, 0.0))?
///     .push(Segment::line(50.0)?)?
///     .push(Segment::transition(10.0, 0.0, 0.1)?)?
///     .push(Segment::arc(20.0, 0.1)?)?
///     .build()?;
/// assert_eq!(path.len(), 3);
/// assert!((path.length() - 80.0).abs() < 1e-12);
/// # Ok(()) }
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct PathBuilder<T: Real, const N: usize> {
    placed: Vec<Placed<T>, N>,
    start: Anchor64,
    next: Anchor64,
}

impl<T: Real, const N: usize> PathBuilder<T, N> {
    /// Starts a path at `start` (metres, radians).
    ///
    /// # Errors
    /// [`PathError::NonFinite`] if the pose is not finite.
    pub fn new(start: Pose<T>) -> Result<Self, PathError> {
        if !start.is_finite() {
            return Err(PathError::NonFinite { index: usize::MAX });
        }
        if !within_plane::<T>(start.x.to_f64()) || !within_plane::<T>(start.y.to_f64()) {
            return Err(PathError::OutOfRange);
        }
        let a = Anchor64::from_pose(Pose::new(
            start.x.to_f64(),
            start.y.to_f64(),
            start.heading.to_f64(),
        ));
        Ok(Self {
            placed: Vec::new(),
            start: a,
            next: a,
        })
    }

    /// Appends a segment starting where the last one ends.
    ///
    /// # Errors
    /// [`PathError::CapacityExceeded`] when `N` segments are already held;
    /// [`PathError::NonFinite`] if the segment's end would lie at a
    /// non-finite position (in `f64` or in `T`);
    /// [`PathError::NonPositiveLength`] if the segment is shorter than the
    /// resolution of `T` at its station (its end station would not move).
    /// `push` consumes the builder, so on error it is gone; use
    /// [`PathBuilder::try_push`] to keep it.
    pub fn push(mut self, seg: Segment<T>) -> Result<Self, PathError> {
        self.try_push(seg)?;
        Ok(self)
    }

    /// Appends a segment in place (for loops that build a path from data).
    ///
    /// # Errors
    /// As [`PathBuilder::push`]; the builder is unchanged on error.
    pub fn try_push(&mut self, seg: Segment<T>) -> Result<(), PathError> {
        let index = self.placed.len();
        if index >= N {
            return Err(PathError::CapacityExceeded);
        }
        let after = self.next.after(&seg.cast::<f64>());
        check_after::<T>(&self.next, &after, index)?;
        self.placed
            .push(self.next.place(&seg))
            .map_err(|_| PathError::CapacityExceeded)?;
        self.next = after;
        Ok(())
    }

    /// Appends a segment after a cusp: the vehicle stops where the last
    /// segment ends and drives on in the other direction, so the path
    /// tangent (the direction of travel) turns by pi at the joint while the
    /// body heading stays put. Give `seg` the opposite [`Direction`] of the
    /// segment before it (e.g. with [`Segment::reversed`]).
    ///
    /// # Errors
    /// As [`PathBuilder::push`]; the builder is unchanged on error.
    pub fn try_push_cusp(&mut self, seg: Segment<T>) -> Result<(), PathError> {
        let before = self.next;
        self.next.theta += core::f64::consts::PI;
        let pushed = self.try_push(seg);
        if pushed.is_err() {
            self.next = before;
        }
        pushed
    }

    /// Number of segments so far.
    pub fn len(&self) -> usize {
        self.placed.len()
    }

    /// `true` before the first segment.
    pub fn is_empty(&self) -> bool {
        self.placed.is_empty()
    }

    /// Where the next segment would start: `(x, y, heading)` in metres and
    /// radians (heading unwrapped: the start heading, wrapped into
    /// `[-pi, pi]`, plus all turns since the start).
    pub fn end_pose(&self) -> Pose<f64> {
        Pose::new(self.next.x, self.next.y, self.next.theta)
    }

    /// Finishes an open path.
    ///
    /// # Errors
    /// [`PathError::Empty`] if no segment was pushed.
    pub fn build(self) -> Result<Path<T, N>, PathError> {
        self.finish(false)
    }

    /// Finishes a closed path (a loop): stations wrap at the end.
    ///
    /// # Errors
    /// [`PathError::Empty`] if no segment was pushed;
    /// [`PathError::PositionGap`] or [`PathError::HeadingGap`] (with
    /// `index` 0) if the end is farther from the start than `tolerance`.
    pub fn close(self, tolerance: Continuity) -> Result<Path<T, N>, PathError> {
        tolerance.check()?;
        let (dp, dh) = self.next.gaps(&self.start);
        if dp > tolerance.position {
            return Err(PathError::PositionGap { index: 0 });
        }
        if dh > tolerance.heading {
            return Err(PathError::HeadingGap { index: 0 });
        }
        self.finish(true)
    }

    fn finish(self, closed: bool) -> Result<Path<T, N>, PathError> {
        if self.placed.is_empty() {
            return Err(PathError::Empty);
        }
        Ok(Path {
            placed: self.placed,
            total: T::from_f64(self.next.station),
            end: self.next.place_point(),
            closed,
        })
    }
}

/// A segment with the anchor it was stored with (for loading a stored path).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AnchoredSegment<T> {
    /// The segment's shape.
    pub segment: Segment<T>,
    /// Where it starts: metres and radians.
    pub start: Pose<T>,
}

/// Assembles a [`Path`] from stored segments one at a time, as
/// [`Path::from_anchored`] does for a whole slice: each segment carries its
/// own start pose, which must lie within the tolerance of the end of the
/// segment before (recomputed in `f64`); the stored anchors are kept.
///
/// This is the incremental form a streaming loader needs (the path blob
/// decoder in [`crate::io`] feeds it segment by segment, holding no more
/// than one record of the blob).
///
/// ```
/// use kappaline::{AnchoredBuilder, AnchoredSegment, Continuity, Pose, Segment};
/// # fn main() -> Result<(), kappaline::PathError> {
/// let mut b = AnchoredBuilder::<f32, 4>::new(Continuity::DEFAULT)?;
/// b.try_push(AnchoredSegment { segment: Segment::line(10.0)?, start: Pose::new(0.0, 0.0, 0.0) })?;
/// b.try_push(AnchoredSegment { segment: Segment::line(5.0)?, start: Pose::new(10.0, 0.0, 0.0) })?;
/// let path = b.finish(false)?;
/// assert_eq!(path.len(), 2);
/// # Ok(()) }
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct AnchoredBuilder<T: Real, const N: usize> {
    placed: Vec<Placed<T>, N>,
    tolerance: Continuity,
    first: Option<(Anchor64, Direction)>,
    /// End of the last segment pushed and its driving direction.
    last: Option<(Anchor64, Direction)>,
}

impl<T: Real, const N: usize> AnchoredBuilder<T, N> {
    /// An empty builder checking joints against `tolerance`.
    ///
    /// # Errors
    /// [`PathError::OutOfRange`] if a tolerance is negative or not finite.
    pub fn new(tolerance: Continuity) -> Result<Self, PathError> {
        tolerance.check()?;
        Ok(Self {
            placed: Vec::new(),
            tolerance,
            first: None,
            last: None,
        })
    }

    /// Number of segments so far.
    pub fn len(&self) -> usize {
        self.placed.len()
    }

    /// `true` before the first segment.
    pub fn is_empty(&self) -> bool {
        self.placed.is_empty()
    }

    /// Appends `part`, checking its start against the end of the segment
    /// before (turned by pi where the driving direction changes: a cusp, as
    /// [`PathBuilder::try_push_cusp`] builds it).
    ///
    /// # Errors
    /// [`PathError::CapacityExceeded`], [`PathError::NonFinite`],
    /// [`PathError::OutOfRange`] (a start or end beyond
    /// [`MAX_COORDINATE`]), [`PathError::NonPositiveLength`],
    /// [`PathError::PositionGap`] and [`PathError::HeadingGap`], each with
    /// the index the segment would have. The builder is unchanged on error.
    pub fn try_push(&mut self, part: AnchoredSegment<T>) -> Result<(), PathError> {
        self.push_part(part, true)
    }

    /// As [`AnchoredBuilder::try_push`], without the joint check if
    /// `!check_joint`: for a loader that has checked the joint itself on
    /// the exact stored values (the blob decoder, in `f64`), where the
    /// same check on the values rounded to `T` could fail by `T`'s
    /// rounding alone.
    pub(crate) fn push_part(
        &mut self,
        part: AnchoredSegment<T>,
        check_joint_here: bool,
    ) -> Result<(), PathError> {
        let index = self.placed.len();
        if index >= N {
            return Err(PathError::CapacityExceeded);
        }
        if !part.start.is_finite() {
            return Err(PathError::NonFinite { index });
        }
        if !within_plane::<T>(part.start.x.to_f64()) || !within_plane::<T>(part.start.y.to_f64()) {
            return Err(PathError::OutOfRange);
        }
        let mut a = Anchor64::from_pose(Pose::new(
            part.start.x.to_f64(),
            part.start.y.to_f64(),
            part.start.heading.to_f64(),
        ));
        let direction = part.segment.direction();
        if let Some((end, before)) = self.last {
            a.station = end.station;
            if check_joint_here {
                check_joint(&end.turned(before != direction), &a, self.tolerance, index)?;
            }
        }
        let end = a.after(&part.segment.cast::<f64>());
        check_after::<T>(&a, &end, index)?;
        self.placed
            .push(a.place(&part.segment))
            .map_err(|_| PathError::CapacityExceeded)?;
        self.first.get_or_insert((a, direction));
        self.last = Some((end, direction));
        Ok(())
    }

    /// Finishes the path; if `closed`, the last segment must end within the
    /// tolerance of the first one's start (turned by pi at a cusp).
    ///
    /// # Errors
    /// [`PathError::Empty`] if no segment was pushed;
    /// [`PathError::PositionGap`] or [`PathError::HeadingGap`] with `index`
    /// 0 for the closing joint.
    pub fn finish(self, closed: bool) -> Result<Path<T, N>, PathError> {
        self.finish_part(closed, true)
    }

    /// As [`AnchoredBuilder::finish`], without the closing check if
    /// `!check_closing` (see [`AnchoredBuilder::push_part`]).
    pub(crate) fn finish_part(
        self,
        closed: bool,
        check_closing: bool,
    ) -> Result<Path<T, N>, PathError> {
        let (Some((end, last_dir)), Some((first, first_dir))) = (self.last, self.first) else {
            return Err(PathError::Empty);
        };
        if closed && check_closing {
            check_joint(
                &end.turned(first_dir != last_dir),
                &first,
                self.tolerance,
                0,
            )?;
        }
        Ok(Path {
            placed: self.placed,
            total: T::from_f64(end.station),
            end: end.place_point(),
            closed,
        })
    }
}

/// A reference path: up to `N` segments, each placed at its anchor.
///
/// Built with [`PathBuilder`] or [`Path::from_anchored`]; always holds at
/// least one segment. See the module documentation for the storage layout.
#[derive(Debug, Clone, PartialEq)]
pub struct Path<T: Real, const N: usize> {
    placed: Vec<Placed<T>, N>,
    total: T,
    /// The end pose of the last segment, stored as a placed record.
    end: Placed<T>,
    closed: bool,
}

impl<T: Real, const N: usize> Path<T, N> {
    /// A path from records a loader has placed and checked itself (the
    /// blob decoder on a backend narrower than `f64`, which does so from
    /// the blob's integers without `f64` arithmetic): `placed` not empty,
    /// stations increasing, `total` the end station and `end` the end pose
    /// as a record with zero curvature.
    pub(crate) fn from_placed(
        placed: Vec<Placed<T>, N>,
        total: T,
        end: Placed<T>,
        closed: bool,
    ) -> Self {
        Self {
            placed,
            total,
            end,
            closed,
        }
    }

    /// Builds an open path from a start pose and a list of segments.
    ///
    /// # Errors
    /// As [`PathBuilder::push`] and [`PathBuilder::build`]; a segment error
    /// carries the index of the segment at fault.
    pub fn from_segments(start: Pose<T>, segments: &[Segment<T>]) -> Result<Self, PathError> {
        let mut b = PathBuilder::new(start)?;
        for s in segments {
            b.try_push(*s)?;
        }
        b.build()
    }

    /// Builds a path from segments that carry their own start poses, as a
    /// stored path does, checking that each start lies within `tolerance` of
    /// the end of the segment before (and, if `closed`, that the last ends
    /// within `tolerance` of the first's start).
    ///
    /// The stored anchors are kept (not the recomputed ones), so tiny gaps
    /// within the tolerance stay tiny instead of adding up along the path.
    /// Where the driving direction changes (a cusp), the start heading is
    /// compared with the previous end heading turned by pi, as
    /// [`PathBuilder::try_push_cusp`] builds it.
    ///
    /// # Errors
    /// [`PathError::Empty`], [`PathError::CapacityExceeded`],
    /// [`PathError::NonFinite`], [`PathError::OutOfRange`] (bad tolerance),
    /// [`PathError::PositionGap`] and [`PathError::HeadingGap`], each with
    /// the index of the segment whose start is off (0 for the closing joint).
    pub fn from_anchored(
        parts: &[AnchoredSegment<T>],
        tolerance: Continuity,
        closed: bool,
    ) -> Result<Self, PathError> {
        if parts.len() > N {
            tolerance.check()?;
            return Err(PathError::CapacityExceeded);
        }
        let mut b = AnchoredBuilder::new(tolerance)?;
        for part in parts {
            b.try_push(*part)?;
        }
        b.finish(closed)
    }

    /// Number of segments.
    #[inline]
    pub fn len(&self) -> usize {
        self.placed.len()
    }

    /// Always `false`: a path holds at least one segment.
    #[inline]
    pub fn is_empty(&self) -> bool {
        self.placed.is_empty()
    }

    /// Total length, metres.
    #[inline]
    pub fn length(&self) -> T {
        self.total
    }

    /// `true` for a loop, where stations wrap modulo [`Path::length`].
    #[inline]
    pub fn is_closed(&self) -> bool {
        self.closed
    }

    /// Segment `index` (shape and direction), or `None` past the end.
    pub fn segment(&self, index: usize) -> Option<Segment<T>> {
        let p = self.placed.get(index)?;
        let len = self.segment_length(index);
        // Checked when placed (and the station grows, so `len > 0`).
        Some(Segment::stored(len, p.kappa0, p.sigma, p.direction))
    }

    /// Station where segment `index` starts, metres, or `None` past the end.
    pub fn segment_start(&self, index: usize) -> Option<T> {
        self.placed.get(index).map(|p| p.station)
    }

    /// The start pose of segment `index` (its anchor), or `None` past the end.
    pub fn anchor(&self, index: usize) -> Option<Pose<T>> {
        self.placed
            .get(index)
            .map(|p| Pose::new(p.x, p.y, p.sin.atan2(p.cos)))
    }

    /// The jump in curvature at the start of segment `index` (1/m): its
    /// start curvature minus the end curvature of the segment before
    /// (on a closed path, segment 0 is preceded by the last). `None` for the
    /// first segment of an open path and past the end. Zero means G2.
    pub fn curvature_jump(&self, index: usize) -> Option<T> {
        let here = self.placed.get(index)?;
        let before = if index == 0 {
            if !self.closed {
                return None;
            }
            self.len() - 1
        } else {
            index - 1
        };
        let b = self.placed.get(before)?;
        let end_kappa = b.kappa0 + b.sigma * self.segment_length(before);
        Some(here.kappa0 - end_kappa)
    }

    /// The path at `station` metres. On an open path the station is clamped
    /// to `[0, length]`; on a closed path it wraps. A NaN station gives a
    /// NaN point (never a panic); [`Path::try_at`] refuses it instead.
    ///
    /// Cost: a binary search over the segments (O(log N)) and one segment
    /// evaluation. Use a [`crate::Cursor`] for stepping along the path.
    pub fn at(&self, station: T) -> PathPoint<T> {
        let s = self.normalize_station(station);
        let i = self.find_segment(s);
        self.eval_in(i, s - self.placed_at(i).station)
    }

    /// As [`Path::at`], refusing a station that is NaN or infinite (where
    /// [`Path::at`] gives a NaN point).
    ///
    /// # Errors
    /// [`PathError::NonFinite`] (with `index` `usize::MAX`).
    pub fn try_at(&self, station: T) -> Result<PathPoint<T>, PathError> {
        if station.is_finite() {
            Ok(self.at(station))
        } else {
            Err(PathError::NonFinite { index: usize::MAX })
        }
    }

    /// The end pose of the path (metres, radians).
    pub fn end_pose(&self) -> Pose<T> {
        Pose::new(self.end.x, self.end.y, self.end.sin.atan2(self.end.cos))
    }

    /// Length of segment `index`, metres (difference of stations).
    #[inline]
    pub(crate) fn segment_length(&self, index: usize) -> T {
        let start = self.placed_at(index).station;
        match self.placed.get(index.saturating_add(1)) {
            Some(n) => n.station - start,
            None => self.total - start,
        }
    }

    /// Where segment `index` ends: the next anchor, or the path's end.
    #[inline]
    pub(crate) fn segment_end(&self, index: usize) -> (T, T) {
        let e = self
            .placed
            .get(index.saturating_add(1))
            .unwrap_or(&self.end);
        (e.x, e.y)
    }

    /// Placed segment `index`, clamped to the last one (never panics).
    #[inline]
    pub(crate) fn placed_at(&self, index: usize) -> &Placed<T> {
        // In range (every call on the per-cycle path): one bounds check.
        // Past the end: the last segment. A path always holds at least one
        // segment; the fallback keeps the function total without a panic path.
        match self.placed.get(index) {
            Some(p) => p,
            None => self.placed.last().unwrap_or(&self.end),
        }
    }

    /// Placed segment `index` and the station where it ends (the next
    /// anchor's, or the path's length), or `None` past the end.
    #[inline]
    pub(crate) fn placed_with_end(&self, index: usize) -> Option<(&Placed<T>, T)> {
        let p = self.placed.get(index)?;
        let end = match self.placed.get(index.saturating_add(1)) {
            Some(n) => n.station,
            None => self.total,
        };
        Some((p, end))
    }

    /// Wraps (closed) or clamps (open) a station into the path.
    pub(crate) fn normalize_station(&self, s: T) -> T {
        if self.closed {
            if s >= T::ZERO && s < self.total {
                return s;
            }
            let k = (s / self.total).floor();
            let r = s - k * self.total;
            if r < T::ZERO || r >= self.total {
                T::ZERO
            } else {
                r
            }
        } else {
            s.clamp_to(T::ZERO, self.total)
        }
    }

    /// The segment holding station `s` (already normalised): binary search.
    pub(crate) fn find_segment(&self, s: T) -> usize {
        let idx = self.placed.partition_point(|p| p.station <= s);
        idx.saturating_sub(1)
    }

    /// The path point `u` metres into segment `index` (not clamped).
    pub(crate) fn eval_in(&self, index: usize, u: T) -> PathPoint<T> {
        let p = self.placed_at(index);
        let lp = crate::path::segment::local_pose(p.kappa0, p.sigma, u);
        let start = Cplx::new(p.cos, p.sin);
        let d = lp.offset * start;
        let t = lp.turn * start;
        PathPoint {
            station: p.station + u,
            x: p.x + d.re,
            y: p.y + d.im,
            cos: t.re,
            sin: t.im,
            curvature: lp.curvature,
            sharpness: p.sigma,
            segment: index.min(self.placed.len().saturating_sub(1)),
            direction: p.direction,
        }
    }
}

/// Checks the anchor `after` that a segment started at `before` reaches:
/// finite in `T` as well as in `f64`, and a station that moves forward in
/// `T` (a segment shorter than the station's resolution in `T`, e.g. 0.1 mm
/// at 2 km in `f32`, would have zero length there).
fn check_after<T: Real>(
    before: &Anchor64,
    after: &Anchor64,
    index: usize,
) -> Result<(), PathError> {
    let in_t = |v: f64| v.is_finite() && T::from_f64(v).is_finite();
    if !(in_t(after.x) && in_t(after.y) && in_t(after.station) && after.theta.is_finite()) {
        return Err(PathError::NonFinite { index });
    }
    if !(within_plane::<T>(after.x)
        && within_plane::<T>(after.y)
        && within_plane::<T>(after.station))
    {
        return Err(PathError::OutOfRange);
    }
    if T::from_f64(after.station) <= T::from_f64(before.station) {
        return Err(PathError::NonPositiveLength { index });
    }
    Ok(())
}

/// Largest coordinate or station a path may have, metres (10,000 km: room
/// for any local plane, and UTM-sized numbers in `f64`). Keeping every
/// position below it keeps every squared distance the tracker forms finite,
/// in `f32` too.
pub const MAX_COORDINATE: f64 = 1.0e7;

/// `|v| <= MAX_COORDINATE` and within the backend's plane
/// ([`Real::PLANE`], the same bound for `f32` and `f64`).
#[inline]
pub(crate) fn within_plane<T: Real>(v: f64) -> bool {
    libm::fabs(v) <= MAX_COORDINATE && libm::fabs(v) <= T::PLANE.to_f64()
}

/// `theta` wrapped into `[-pi, pi]` as the angle whose sine and cosine
/// libm gives for it (unchanged if already in `(-pi, pi]`). libm reduces
/// its argument exactly (by a many-digit `2 pi`), and the path places a
/// segment at `sincos(theta)`; wrapping with a rounded `2 pi` instead is
/// off by `k ulp(2 pi)` after `k` turns (0.25 mrad at 10^12 turns), and a
/// heading of many turns plus a small turn loses the small turn. Build
/// time only (two libm calls).
pub(crate) fn wrap_exactly(theta: f64) -> f64 {
    if theta > -core::f64::consts::PI && theta <= core::f64::consts::PI {
        return theta;
    }
    let (s, c) = libm::sincos(theta);
    libm::atan2(s, c)
}

/// Position and heading gaps (metres, radians) between the end of `seg`
/// started at `start` and the stored start `next` of the segment after it
/// (the end's tangent turned by pi at a cusp), computed exactly as
/// [`AnchoredBuilder::try_push`] checks a joint. For encoders that must
/// know before writing whether a loader will accept their quantised values.
pub(crate) fn joint_gaps(
    start: Pose<f64>,
    seg: &Segment<f64>,
    next: Pose<f64>,
    cusp: bool,
) -> (f64, f64) {
    let end = Anchor64::from_pose(start).after(seg).turned(cusp);
    end.gaps(&Anchor64::from_pose(next))
}

fn check_joint(
    end: &Anchor64,
    next: &Anchor64,
    tol: Continuity,
    index: usize,
) -> Result<(), PathError> {
    let (dp, dh) = end.gaps(next);
    if dp.is_nan() || dp > tol.position {
        return Err(PathError::PositionGap { index });
    }
    if dh.is_nan() || dh > tol.heading {
        return Err(PathError::HeadingGap { index });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn demo() -> Path<f64, 8> {
        PathBuilder::new(Pose::new(1.0, 2.0, 0.3))
            .unwrap()
            .push(Segment::line(10.0).unwrap())
            .unwrap()
            .push(Segment::transition(5.0, 0.0, 0.2).unwrap())
            .unwrap()
            .push(Segment::arc(7.0, 0.2).unwrap())
            .unwrap()
            .build()
            .unwrap()
    }

    #[test]
    fn placed_segment_is_32_bytes_in_f32() {
        assert!(core::mem::size_of::<Placed<f32>>() <= 32);
    }

    #[test]
    fn builder_rejects_and_keeps_state() {
        let mut b = PathBuilder::<f64, 1>::new(Pose::new(0.0, 0.0, 0.0)).unwrap();
        b.try_push(Segment::line(1.0).unwrap()).unwrap();
        let before = b.end_pose();
        assert_eq!(
            b.try_push(Segment::line(1.0).unwrap()),
            Err(PathError::CapacityExceeded)
        );
        assert_eq!(b.end_pose(), before);
        assert_eq!(b.len(), 1);
        assert_eq!(
            PathBuilder::<f64, 1>::new(Pose::new(f64::NAN, 0.0, 0.0)).err(),
            Some(PathError::NonFinite { index: usize::MAX })
        );
        assert_eq!(
            PathBuilder::<f64, 1>::new(Pose::new(0.0, 0.0, 0.0))
                .unwrap()
                .build()
                .err(),
            Some(PathError::Empty)
        );
    }

    #[test]
    fn segments_read_back() {
        let p = demo();
        assert_eq!(p.len(), 3);
        let s = p.segment(1).unwrap();
        assert!((s.length() - 5.0).abs() < 1e-12);
        assert!((s.kappa_end() - 0.2).abs() < 1e-12);
        assert!(p.segment(3).is_none());
        assert_eq!(p.curvature_jump(0), None);
        assert!(p.curvature_jump(1).unwrap().abs() < 1e-15);
        assert!(p.curvature_jump(2).unwrap().abs() < 1e-12);
    }

    #[test]
    fn stations_clamp_on_open_paths() {
        let p = demo();
        assert_eq!(p.at(-5.0).station, 0.0);
        assert!((p.at(100.0).station - 22.0).abs() < 1e-12);
        let a = p.at(3.0);
        assert!((a.x - (1.0 + 3.0 * libm::cos(0.3))).abs() < 1e-12);
    }
}
