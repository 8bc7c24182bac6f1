//! Where the vehicle is relative to the path: station, cross-track error,
//! heading error, curvature here and ahead.
//!
//! # Projection window
//!
//! Each update projects the control point onto the path only within a
//! window of stations around the last foot point: `window_back` metres
//! behind, `window_ahead` metres ahead (set it to what the vehicle can drive
//! in one control period, plus a margin). The window is what keeps the
//! tracker on its pass when a neighbouring pass of a field lies 3 m to the
//! side, and on its branch where a path crosses itself: those points are
//! close in the plane but far in station.
//!
//! # Acquisition and loss
//!
//! The first update after [`Tracker::new`] or [`Tracker::reset`] runs a
//! search of the whole path (bounded: one bounding-circle test per segment,
//! and a projection only on segments that can beat the best so far). When
//! the nearest point in the window is farther than `lost_distance`, the
//! update reports [`TrackStatus::Lost`] and the tracker keeps its last good
//! station: it does not re-acquire on its own, because after a position jump
//! the nearest path may well be the wrong pass. Call [`Tracker::reset`] (or
//! [`Tracker::acquire`]) when the supervisor decides to re-acquire.
//!
//! To follow a curve beside the path (a field pass tracked on its
//! reference), use [`Tracker::update_offset`]: loss is then judged by the
//! distance to that curve.
//!
//! # Cost
//!
//! Lines: no trigonometry. Arcs: one `sin_cos` and one `atan2` per segment
//! in the window. Clothoids: a few generalised Fresnel evaluations. Plus one
//! evaluation for the lookahead point and one `atan2` for the heading error.
//! The work is bounded by [`MAX_WINDOW_SEGMENTS`] whatever the input.

use crate::num::real::{c, Real};
use crate::path::anchored::Path;
use crate::path::cursor::{Cursor, Travel};
use crate::path::pose::{Direction, PathPoint, Pose};
use crate::path::project::{nearest_on_segment, Foot};
use crate::track::error::TrackError;
use crate::track::foot::Stepper;

/// Most Newton evaluations of one stepped update (the first uses the foot
/// carried from the last cycle and costs none).
pub const NEWTON_STEPS: usize = 4;

/// Work one call of [`Tracker::acquire_step`] may do, in units: 1 per
/// segment ruled out by its bounding circle, 4 per line or arc projected,
/// 40 (all of a call) per clothoid piece projected (at most [`ACQUIRE_PIECE`] metres and a
/// turn of pi/4). A sweep therefore takes at most
/// `ceil(4 lines_and_arcs / 40) + clothoid_pieces + 1` calls (every
/// segment a candidate) and at least `ceil(n / 40) + 1` for `n` segments
/// (all but a few ruled out), the last call settling on the best foot.
pub const ACQUIRE_WORK: u32 = 40;
/// Longest clothoid piece one unit of acquisition work projects onto, metres.
pub const ACQUIRE_PIECE: f64 = 4.0;

/// What one call of [`Tracker::acquire_step`] did.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Acquisition<T> {
    /// Still sweeping the path: `examined` of `segments` segments done.
    Searching {
        /// Segments examined so far.
        examined: usize,
        /// Segments in the path.
        segments: usize,
    },
    /// The sweep is over: the tracking state at the best foot (its status
    /// says whether the path was found within `lost_distance`).
    Done(Tracking<T>),
}

/// A whole-path search in progress.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct Sweep<T> {
    running: bool,
    /// The next segment to examine, and how far into it (clothoid pieces).
    next: usize,
    from: T,
    /// The best score so far (metres) and its foot.
    best: Option<(T, Foot<T>)>,
}

impl<T: Real> Sweep<T> {
    fn idle() -> Self {
        Self {
            running: false,
            next: 0,
            from: T::ZERO,
            best: None,
        }
    }
}

/// The Newton iteration on the foot condition stops when its step is below
/// this, metres (`1e-6` in `f32`, `1e-12` in `f64`), plus the resolution of
/// the coordinates in `T` (`4 epsilon (|x| + |y|)`: 6e-5 m at 1 km in `f32`,
/// below which no evaluation can resolve the foot).
#[inline]
pub(crate) fn foot_tolerance<T: Real>(x: T, y: T) -> T {
    let abs: T = if T::EPSILON > c(1e-10) {
        c(1e-6)
    } else {
        c(1e-12)
    };
    abs + T::EPSILON * c(4.0) * (x.abs() + y.abs())
}

/// The projection window covers at most this many segments, half of them
/// behind the last foot point and half ahead (its own segment counts on both
/// sides); a window over more (very short) segments is cut at its far ends,
/// so the segments next to the foot are always searched.
pub const MAX_WINDOW_SEGMENTS: usize = 32;

/// Tracker settings. All distances in metres.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TrackerConfig<T> {
    /// How far behind the last foot point the projection looks, metres (>= 0).
    pub window_back: T,
    /// How far ahead of the last foot point the projection looks, metres (> 0).
    /// At least the distance driven in one control period plus a margin.
    pub window_ahead: T,
    /// Above this distance from the path (lateral offset beyond the ends of
    /// an open path) the update reports [`TrackStatus::Lost`], metres (> 0).
    pub lost_distance: T,
    /// Distance ahead of the foot point for [`Tracking::ahead`], metres (>= 0).
    pub lookahead: T,
    /// During acquisition, metres of distance one radian of heading error is
    /// worth (>= 0): with it, a vehicle between two passes driven in opposite
    /// directions picks the one it is heading along. 0 picks the nearest.
    pub heading_weight: T,
}

impl<T: Real> TrackerConfig<T> {
    /// A field tractor at up to 5 m/s, 10 Hz or faster: window 1 m back and
    /// 3 m ahead, lost at 2 m, lookahead 3 m, heading weight 1 m/rad.
    pub fn tractor() -> Self {
        Self {
            window_back: c(1.0),
            window_ahead: c(3.0),
            lost_distance: c(2.0),
            lookahead: c(3.0),
            heading_weight: c(1.0),
        }
    }

    /// A small robot at up to 2 m/s, 20 Hz or faster, on a path with
    /// corners of about 1 m radius: window 0.5 m back and 1 m ahead, lost at
    /// 0.5 m, lookahead 0.8 m, heading weight 0.5 m/rad.
    pub fn small_robot() -> Self {
        Self {
            window_back: c(0.5),
            window_ahead: c(1.0),
            lost_distance: c(0.5),
            lookahead: c(0.8),
            heading_weight: c(0.5),
        }
    }

    /// A road vehicle at up to 15 m/s, 20 Hz or faster: window 2 m back and
    /// 4 m ahead (0.75 m driven per cycle at 15 m/s leaves margin for a
    /// late cycle), lost at 2 m, lookahead 8 m, heading weight 1 m/rad.
    pub fn road_vehicle() -> Self {
        Self {
            window_back: c(2.0),
            window_ahead: c(4.0),
            lost_distance: c(2.0),
            lookahead: c(8.0),
            heading_weight: c(1.0),
        }
    }

    fn check(&self) -> Result<(), TrackError> {
        let all = [
            self.window_back,
            self.window_ahead,
            self.lost_distance,
            self.lookahead,
            self.heading_weight,
        ];
        if all.iter().any(|v| !v.is_finite()) {
            return Err(TrackError::NonFinite);
        }
        let ok = self.window_back >= T::ZERO
            && self.window_ahead > T::ZERO
            && self.lost_distance > T::ZERO
            && self.lookahead >= T::ZERO
            && self.heading_weight >= T::ZERO;
        if ok {
            Ok(())
        } else {
            Err(TrackError::OutOfRange)
        }
    }
}

/// How the control point relates to the path.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
// Word-sized: the structs that hold it (path points, tracking states) then
// have no byte-sized tail, and moving them copies words, not bytes (a
// byte-wise `memcpy` of a tracking state cost 800 instructions on an M4F).
#[repr(u32)]
pub enum TrackStatus {
    /// The foot point lies on the path.
    OnPath,
    /// Behind the start of an open path: station is negative (distance
    /// along the start tangent), cross-track is to the extended start line.
    BeforeStart,
    /// Past the end of an open path: station exceeds the length, cross-track
    /// is to the extended end line.
    PastEnd,
    /// Farther than `lost_distance` from the path within the window: the
    /// errors are those of the nearest point found, the tracker's state did
    /// not move.
    Lost,
}

/// The tracking state for one update.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Tracking<T> {
    /// Station of the control point, metres (extrapolated before the start
    /// and past the end of an open path).
    pub station: T,
    /// Signed cross-track error, metres, positive when the control point is
    /// left of the path (along the normal `(-sin, cos)` of the path heading).
    pub cross_track: T,
    /// Vehicle body heading minus the heading it should have here (path
    /// heading, plus pi on reverse segments), radians in `(-pi, pi]`,
    /// positive counter-clockwise.
    pub heading_error: T,
    /// Path curvature at the foot point, 1/m, positive left.
    pub curvature: T,
    /// Path curvature at the lookahead station, 1/m.
    pub curvature_ahead: T,
    /// Distance left to the end of the path (open) or of the lap (closed),
    /// metres; negative past the end.
    pub distance_to_end: T,
    /// The foot point itself.
    pub foot: PathPoint<T>,
    /// The path point `lookahead` metres beyond the foot point.
    pub ahead: PathPoint<T>,
    /// Where the control point is.
    pub status: TrackStatus,
}

/// Projects a control point onto a path, one control cycle at a time.
///
/// ```
/// use kappaline::{PathBuilder, Pose, Segment, TrackStatus, Tracker, TrackerConfig};
/// # fn main() -> Result<(), Box<dyn core::error::Error>> {
/// let path = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))?
///     .push(Segment::line(100.0)?)?
///     .build()?;
/// let mut tracker = Tracker::new(TrackerConfig::tractor())?;
/// // 0.25 m left of the path at station 40, heading 0.1 rad to the left.
/// let t = tracker.update(&path, &Pose::new(40.0, 0.25, 0.1))?;
/// assert_eq!(t.status, TrackStatus::OnPath);
/// assert!((t.station - 40.0).abs() < 1e-12);
/// assert!((t.cross_track - 0.25).abs() < 1e-12);
/// assert!((t.heading_error - 0.1).abs() < 1e-12);
/// # Ok(()) }
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Tracker<T> {
    config: TrackerConfig<T>,
    cursor: Cursor<T>,
    acquired: bool,
    /// The path point at `cursor`, carried to the next cycle (valid when
    /// `foot_valid`).
    foot: PathPoint<T>,
    foot_valid: bool,
    /// Exact bases near the foot and the lookahead, and the series around them.
    stepper: Stepper<T>,
    /// A whole-path search spread over calls ([`Tracker::acquire_step`]).
    sweep: Sweep<T>,
}

impl<T: Real> Tracker<T> {
    /// A tracker that will acquire the path on its first update.
    ///
    /// # Errors
    /// [`TrackError::NonFinite`] or [`TrackError::OutOfRange`] for a bad
    /// configuration (see [`TrackerConfig`] for the ranges).
    pub fn new(config: TrackerConfig<T>) -> Result<Self, TrackError> {
        config.check()?;
        Ok(Self {
            config,
            cursor: Cursor::start(),
            acquired: false,
            foot: PathPoint::default(),
            foot_valid: false,
            stepper: Stepper::default(),
            sweep: Sweep::idle(),
        })
    }

    /// The configuration in use.
    pub fn config(&self) -> &TrackerConfig<T> {
        &self.config
    }

    /// Changes the lookahead distance (e.g. scheduled with speed), metres.
    ///
    /// # Errors
    /// [`TrackError::NonFinite`] or [`TrackError::OutOfRange`] (negative);
    /// the tracker is unchanged on error.
    pub fn set_lookahead(&mut self, lookahead: T) -> Result<(), TrackError> {
        // The rest of the configuration was checked by `Tracker::new`: only
        // the new value needs the checks of `TrackerConfig` (every cycle).
        if !lookahead.is_finite() {
            return Err(TrackError::NonFinite);
        }
        if lookahead < T::ZERO {
            return Err(TrackError::OutOfRange);
        }
        self.config.lookahead = lookahead;
        Ok(())
    }

    /// `true` once an update has found the path.
    pub fn is_acquired(&self) -> bool {
        self.acquired
    }

    /// The cursor at the last good foot point.
    pub fn cursor(&self) -> Cursor<T> {
        self.cursor
    }

    /// The path point `distance` metres beyond the last good foot point
    /// (behind it if negative): a lookahead query, clamped at the ends of an
    /// open path and wrapped on a closed one, as [`Cursor::ahead`].
    ///
    /// Evaluated by a series step from an exact base near the foot or near
    /// the last lookahead (re-anchored when neither reaches; see
    /// `track/foot.rs`), so it agrees with the closed form of
    /// [`Path::at`] to the rounding of `T`; `&mut self` because the base is
    /// kept for the next call.
    ///
    /// # Errors
    /// [`TrackError::NonFinite`] if `distance` is NaN or infinite; nothing
    /// changes.
    pub fn ahead<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        distance: T,
    ) -> Result<PathPoint<T>, TrackError> {
        if !distance.is_finite() {
            return Err(TrackError::NonFinite);
        }
        let (to, _) = moved_by(path, self.cursor, distance);
        Ok(self.stepper.far_point(path, to.segment(), to.offset()))
    }

    /// The path point at `station` (metres, near the last foot point),
    /// restricted to segments `first..=last` (a run of one driving
    /// direction; the point sticks to its ends), by a series step from a
    /// base near the foot (`far`: the base near the lookahead).
    ///
    /// For the guidance's reference point, goal and preview: one projection
    /// per cycle (the tracker's), the rest stepped from its foot.
    pub(crate) fn point_near<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        station: T,
        first: usize,
        last: usize,
        far: bool,
    ) -> PathPoint<T> {
        let from = self.cursor;
        let ds = station - from.station(path);
        let (to, _) = moved_by(path, from, if ds.is_finite() { ds } else { T::ZERO });
        let (seg, u) = if to.segment() > last {
            (last, path.segment_length(last))
        } else if to.segment() < first {
            (first, T::ZERO)
        } else {
            (to.segment(), to.offset())
        };
        if far {
            self.stepper.far_point(path, seg, u)
        } else {
            self.stepper.other_point(path, seg, u)
        }
    }

    /// Forgets the station: the next update searches the whole path.
    pub fn reset(&mut self) {
        self.acquired = false;
        self.foot_valid = false;
        self.sweep = Sweep::idle();
    }

    /// Takes a known position on the path (e.g. resuming a pass at a
    /// recorded station, or a supervisor's choice between candidate passes):
    /// the tracker counts as acquired there and the next update searches the
    /// window around it, with no whole-path search.
    ///
    /// The cursor must belong to the path later passed to [`Tracker::update`];
    /// an index past its end is clamped to its last segment.
    pub fn resume_at(&mut self, cursor: Cursor<T>) {
        self.cursor = cursor;
        self.acquired = true;
        // The next update searches the window once and carries on from there.
        self.foot_valid = false;
    }

    /// Projects `pose` (control point position in metres, body heading in
    /// radians) onto `path` within the window around the last foot point, or
    /// over the whole path if the tracker has not acquired it yet.
    ///
    /// # Errors
    /// [`TrackError::NonFinite`] if the pose is not finite,
    /// [`TrackError::OutOfRange`] if it lies beyond twice
    /// [`crate::MAX_COORDINATE`]; the tracker is unchanged.
    pub fn update<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        pose: &Pose<T>,
    ) -> Result<Tracking<T>, TrackError> {
        if !self.acquired {
            return self.acquire(path, pose);
        }
        check_input(pose, T::ZERO)?;
        Ok(self.locate(path, pose, None, T::ZERO))
    }

    /// As [`Tracker::update`], for a control point that should follow the
    /// curve `offset` metres beside `path` (left positive), such as a field
    /// pass tracked on its reference (see [`crate::Pass::update`]).
    ///
    /// The projection, the window and the reported errors are those of
    /// [`Tracker::update`] (cross-track is still to `path`); only the loss
    /// test and acquisition change: the distance judged against
    /// `lost_distance` is the one to the offset curve, `|cross_track -
    /// offset|` (plus any distance along the tangent beyond the window or an
    /// end), and the whole-path search scores candidates by it. With
    /// [`Tracker::update`] a vehicle on a pass more than `lost_distance`
    /// from the reference would be lost on every update.
    ///
    /// The reference foot moves `1 / (1 - kappa offset)` times as fast as a
    /// vehicle on the offset curve: on the inside of tight curves give
    /// `window_ahead` that much more room.
    ///
    /// # Errors
    /// [`TrackError::NonFinite`] if the pose or the offset is not finite,
    /// [`TrackError::OutOfRange`] beyond twice [`crate::MAX_COORDINATE`];
    /// the tracker is unchanged.
    pub fn update_offset<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        pose: &Pose<T>,
        offset: T,
    ) -> Result<Tracking<T>, TrackError> {
        check_input(pose, offset)?;
        if !self.acquired {
            return self.acquire_with(path, pose, None, offset);
        }
        Ok(self.locate(path, pose, None, offset))
    }

    /// As [`Tracker::update`], for a vehicle that is driving in `direction`:
    /// within the window (and in the whole-path search before acquisition),
    /// foot points on segments driven that way win over nearer ones on
    /// segments driven the other way, which count only when there are none
    /// of the right direction.
    ///
    /// Around a cusp the legs on either side lie close together, the
    /// reversing leg often right alongside the one before it; by distance
    /// alone the foot can slide back along the wrong leg while the vehicle
    /// reverses, until it is lost.
    ///
    /// # Errors
    /// As [`Tracker::update`].
    pub fn update_driving<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        pose: &Pose<T>,
        direction: Direction,
    ) -> Result<Tracking<T>, TrackError> {
        if !self.acquired {
            return self.acquire_driving(path, pose, Some(direction));
        }
        check_input(pose, T::ZERO)?;
        Ok(self.locate(path, pose, Some(direction), T::ZERO))
    }

    /// Searches the whole path for the control point (bounded by the path's
    /// segment count) and, if found within `lost_distance`, moves there.
    ///
    /// # Errors
    /// [`TrackError::NonFinite`] if the pose is not finite,
    /// [`TrackError::OutOfRange`] if it lies beyond twice
    /// [`crate::MAX_COORDINATE`]; the tracker is unchanged.
    pub fn acquire<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        pose: &Pose<T>,
    ) -> Result<Tracking<T>, TrackError> {
        self.acquire_driving(path, pose, None)
    }

    /// One bounded part of a whole-path search ([`ACQUIRE_WORK`] units of
    /// work): the acquisition of [`Tracker::acquire`], spread over as many
    /// calls as the path needs, so that no call takes much longer than a
    /// tracker update. Returns [`Acquisition::Searching`] until the sweep
    /// has examined every segment; the call after it (the same call, if the
    /// sweep took at most half of it) settles on the best foot with its own
    /// pose (as an update from there) and returns
    /// [`Acquisition::Done`] (and the tracker is acquired if that foot is
    /// within `lost_distance`). Once acquired, a call is an update.
    ///
    /// Each segment is scored against the pose of the call that examines it
    /// (distance plus `heading_weight` times the heading error, as
    /// [`Tracker::acquire`]): a vehicle should stand still, or nearly, while
    /// the sweep runs (the guidance requests a stop while acquiring).
    ///
    /// # Errors
    /// As [`Tracker::update`]; the search state is unchanged.
    pub fn acquire_step<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        pose: &Pose<T>,
    ) -> Result<Acquisition<T>, TrackError> {
        check_input(pose, T::ZERO)?;
        if self.acquired {
            return Ok(Acquisition::Done(self.locate(path, pose, None, T::ZERO)));
        }
        let mut sweep = if self.sweep.running {
            self.sweep
        } else {
            Sweep::idle()
        };
        if !(sweep.running && sweep.next >= path.len()) {
            // Sweeping; the call that finishes the sweep settles too if the
            // sweep took at most half of its work (a short path: one call).
            sweep.running = true;
            let work = self.sweep_some(path, pose, &mut sweep);
            self.sweep = sweep;
            if sweep.next < path.len() || work > ACQUIRE_WORK / 2 {
                return Ok(Acquisition::Searching {
                    examined: sweep.next,
                    segments: path.len(),
                });
            }
        }
        self.sweep = Sweep::idle();
        let Some((_, best)) = sweep.best else {
            return Ok(Acquisition::Searching {
                examined: 0,
                segments: path.len(),
            });
        };
        // Settle with this call's pose: Newton from the best foot (the
        // window search where that is not sure to find the window's nearest).
        let before = (self.cursor, self.foot, self.foot_valid);
        self.cursor = Cursor::on(best.segment, best.offset);
        self.foot = self.stepper.near_point(path, best.segment, best.offset);
        self.foot_valid = true;
        let result = self.locate(path, pose, None, T::ZERO);
        if result.status == TrackStatus::Lost {
            (self.cursor, self.foot, self.foot_valid) = before;
        } else {
            self.acquired = true;
        }
        Ok(Acquisition::Done(result))
    }

    /// Examines segments from where `sweep` stands until the work of one
    /// call is spent; returns the work done.
    fn sweep_some<const N: usize>(
        &self,
        path: &Path<T, N>,
        pose: &Pose<T>,
        sweep: &mut Sweep<T>,
    ) -> u32 {
        let w = self.config.heading_weight;
        let (hs, hc) = pose.heading.sin_cos();
        let quarter: T = c(core::f64::consts::FRAC_PI_4);
        let piece: T = c(ACQUIRE_PIECE);
        let mut work = 0u32;
        // Each pass of the loop spends at least one unit: bounded.
        for _ in 0..ACQUIRE_WORK {
            if work >= ACQUIRE_WORK || sweep.next >= path.len() {
                return work;
            }
            let i = sweep.next;
            let pl = *path.placed_at(i);
            let len = path.segment_length(i);
            let lower = lower_bound(path, i, pose.x, pose.y);
            if sweep.from == T::ZERO && sweep.best.is_some_and(|(b, _)| lower > b) {
                work += 1;
                sweep.next += 1;
                continue;
            }
            // Lines and arcs whole; clothoids a piece at a time.
            let (lo, hi) = if pl.sigma == T::ZERO {
                work += 4;
                (T::ZERO, len)
            } else {
                work += ACQUIRE_WORK;
                let bend = pl.kappa0.abs().max((pl.kappa0 + pl.sigma * len).abs());
                let span = if bend * piece > quarter {
                    quarter / bend
                } else {
                    piece
                };
                (sweep.from, (sweep.from + span).min(len))
            };
            let f = nearest_on_segment(path, i, lo, hi, pose.x, pose.y);
            let mut score = f.dist2.sqrt();
            if w > T::ZERO {
                let p = path.eval_in(i, f.offset);
                let sign = p.direction.sign::<T>();
                let cross = (p.cos * hs - p.sin * hc) * sign;
                let dot = (p.cos * hc + p.sin * hs) * sign;
                score += w * cross.atan2(dot).abs();
            }
            if sweep.best.is_none_or(|(b, _)| score < b) {
                sweep.best = Some((score, f));
            }
            if hi >= len {
                sweep.next += 1;
                sweep.from = T::ZERO;
            } else {
                sweep.from = hi;
            }
        }
        work
    }

    /// Acquisition preferring segments driven in `driving`.
    fn acquire_driving<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        pose: &Pose<T>,
        driving: Option<Direction>,
    ) -> Result<Tracking<T>, TrackError> {
        self.acquire_with(path, pose, driving, T::ZERO)
    }

    /// Acquisition preferring segments driven in `driving`, of the curve
    /// `offset` metres left of `path`.
    fn acquire_with<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        pose: &Pose<T>,
        driving: Option<Direction>,
        offset: T,
    ) -> Result<Tracking<T>, TrackError> {
        check_input(pose, offset)?;
        let foot = self.search_all(path, pose, driving, offset);
        let result = self.settle(path, pose, foot, offset);
        if result.status != TrackStatus::Lost {
            self.acquired = true;
        }
        Ok(result)
    }

    /// Turns a foot point into the tracking state, moving the cursor there
    /// unless the point is lost from the curve `offset` metres left of the
    /// path (0: the path itself).
    fn settle<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        pose: &Pose<T>,
        foot: Foot<T>,
        offset: T,
    ) -> Tracking<T> {
        let cursor = Cursor::on(foot.segment, foot.offset);
        let point = self.stepper.near_point(path, foot.segment, foot.offset);
        self.settle_at(path, pose, cursor, point, foot.dist2, offset)
    }

    /// The window search in general, the stepped foot when it is sure to
    /// give the same foot (see [`Tracker::step_foot`]).
    fn locate<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        pose: &Pose<T>,
        driving: Option<Direction>,
        offset: T,
    ) -> Tracking<T> {
        if let Some((cursor, point)) = self.step_foot(path, pose, driving) {
            let ex = point.x - pose.x;
            let ey = point.y - pose.y;
            return self.settle_at(path, pose, cursor, point, ex * ex + ey * ey, offset);
        }
        let foot = self.search_window(path, pose, driving);
        self.settle(path, pose, foot, offset)
    }

    /// As [`Tracker::settle`] for a foot already evaluated (`point` at
    /// `cursor`, `dist2` m^2 from the control point).
    fn settle_at<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        pose: &Pose<T>,
        cursor: Cursor<T>,
        point: PathPoint<T>,
        dist2: T,
        offset: T,
    ) -> Tracking<T> {
        let foot = Foot {
            segment: cursor.segment(),
            offset: cursor.offset(),
            dist2,
        };
        let lateral = point.lateral_offset(pose.x, pose.y);
        let along = point.along_offset(pose.x, pose.y);
        let mut station = path.normalize_station(point.station);
        let mut status = TrackStatus::OnPath;
        // Beyond the ends of an open path the foot sticks to the end point;
        // measure along and across its tangent instead.
        let tiny = T::EPSILON * c(64.0) * (T::ONE + path.length());
        if !path.is_closed() {
            if station <= T::ZERO && along < -tiny {
                station = along;
                status = TrackStatus::BeforeStart;
            } else if station >= path.length() && along > tiny {
                station = path.length() + along;
                status = TrackStatus::PastEnd;
            }
        }
        // A vehicle that ran past a cusp (stopping late before reversing) is
        // beyond both legs: like beyond an end, only its lateral offset
        // (from the offset curve) says whether it is off the path.
        let lost = self.config.lost_distance;
        let beside = lateral - offset;
        let on_a_leg = status == TrackStatus::OnPath && !beyond_cusp(path, &foot, along);
        let off_path = if !on_a_leg {
            beside.abs() > lost
        } else if offset == T::ZERO {
            // The squared distance to the foot, as found.
            foot.dist2 > lost * lost
        } else {
            // The point of the offset curve beside the foot lies `offset`
            // along the normal; `along` is nonzero only at a window edge.
            along * along + beside * beside > lost * lost
        };
        if off_path {
            status = TrackStatus::Lost;
        } else {
            self.cursor = cursor;
            self.foot = point;
            self.foot_valid = true;
        }
        // The path heading from the base's angle (no atan2 when stepped).
        let body_heading = match self.stepper.heading(cursor.segment(), cursor.offset()) {
            Some(h) if point.direction == Direction::Reverse => h + T::PI,
            Some(h) => h,
            None => point.body_heading(),
        };
        let (to, _) = moved_by(path, cursor, self.config.lookahead);
        let ahead = self.stepper.far_point(path, to.segment(), to.offset());
        Tracking {
            station,
            cross_track: lateral,
            heading_error: (pose.heading - body_heading).wrap_angle(),
            curvature: point.curvature,
            curvature_ahead: ahead.curvature,
            distance_to_end: path.length() - station,
            foot: point,
            ahead,
            status,
        }
    }

    /// The foot by Newton on the foot condition (with a curvature
    /// correction that makes it exact to fourth order on a circle), stepped
    /// from the foot of the last cycle (at most [`NEWTON_STEPS`] series
    /// evaluations), or `None` where the window search must decide.
    ///
    /// The stepped foot is the window's nearest point when the foot
    /// condition `f(s) = (p(s) - q) . T(s)` is increasing over the whole
    /// window: then it has one root there. `f' = 1 - kappa d` with `d` the
    /// lateral offset, and `|d| <= |q - foot| + span` over a window of
    /// `span` metres, so `kappa_max (|q - foot| + span) < 1` (with
    /// `kappa_max` over the window's segments, all of one driving
    /// direction: a cusp turns the tangent) is sufficient. Past an end of an
    /// open path, outside the window, or without convergence the window
    /// search runs instead.
    fn step_foot<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        pose: &Pose<T>,
        driving: Option<Direction>,
    ) -> Option<(Cursor<T>, PathPoint<T>)> {
        if !self.foot_valid {
            return None;
        }
        let (back, ahead) = (self.config.window_back, self.config.window_ahead);
        let span = back + ahead;
        if path.is_closed() && span >= path.length() {
            return None;
        }
        let here = self.cursor.segment();
        let dir = path.placed_at(here).direction;
        if driving.is_some_and(|d| d != dir) {
            return None;
        }
        let kmax = window_curvature(path, here, self.cursor.offset(), back, ahead, dir)?;
        let mut cur = self.cursor;
        let mut p = self.foot;
        let mut moved = T::ZERO;
        let tol = foot_tolerance(pose.x, pose.y);
        let mut converged = false;
        for k in 0..=NEWTON_STEPS {
            let along = p.along_offset(pose.x, pose.y);
            let lat = p.lateral_offset(pose.x, pose.y);
            let scale = T::ONE - p.curvature * lat;
            // Also refuses NaN.
            if !scale.is_finite() || scale <= T::HALF {
                return None;
            }
            // Newton's step `along / scale`, corrected for the curvature:
            // on a circle the foot is `atan(x) / kappa` away with
            // `x = kappa along / scale`, and `atan(x) / x = 1 - x^2 / 3 + ...`
            // (exact to x^4: one evaluation then meets the tolerance on arcs
            // and on the gentle clothoids of a field).
            let newton = along / scale;
            let x = p.curvature * newton;
            let step = newton * (T::ONE - x * x * c(1.0 / 3.0));
            if newton.abs() <= tol {
                converged = kmax * (lat.abs() + span) < T::ONE;
                break;
            }
            if k == NEWTON_STEPS {
                break;
            }
            moved += step;
            if moved < -back || moved > ahead {
                return None;
            }
            let (next, travel) = moved_by(path, cur, step);
            if travel != Travel::Within {
                return None;
            }
            cur = next;
            p = self.stepper.near_point(path, cur.segment(), cur.offset());
        }
        if converged {
            Some((cur, p))
        } else {
            None
        }
    }

    /// Nearest point within the station window around the cursor.
    ///
    /// Walks forwards from the cursor to the window's far end and backwards
    /// to its near end, each walk over at most half of
    /// [`MAX_WINDOW_SEGMENTS`] segments, so the segments next to the foot
    /// are always searched however short the segments are, and a window
    /// that wraps round a closed path onto the segment it started on is
    /// searched on both sides of the cursor.
    fn search_window<const N: usize>(
        &self,
        path: &Path<T, N>,
        pose: &Pose<T>,
        driving: Option<Direction>,
    ) -> Foot<T> {
        let span = self.config.window_back + self.config.window_ahead;
        if path.is_closed() && span >= path.length() {
            return nearest_anywhere(path, pose.x, pose.y);
        }
        let last = path.len().saturating_sub(1);
        let here = self.cursor.segment().min(last);
        let offset = self
            .cursor
            .offset()
            .clamp_to(T::ZERO, path.segment_length(here));
        let (from, _) = self.cursor.moved(path, -self.config.window_back);
        let (to, _) = self.cursor.moved(path, self.config.window_ahead);
        let mut best = Foot {
            segment: here,
            offset,
            dist2: T::ZERO,
        };
        // The best foot overall, and the best on segments of the wanted direction.
        let mut found = false;
        let mut best_driven: Option<Foot<T>> = None;
        let mut keep = |f: Foot<T>| {
            if !found || f.dist2 < best.dist2 {
                best = f;
                found = true;
            }
            let driven = driving.is_some_and(|d| path.placed_at(f.segment).direction == d);
            if driven && best_driven.is_none_or(|b| f.dist2 < b.dist2) {
                best_driven = Some(f);
            }
        };
        // Forwards: [offset, end of segment], the next segments, up to `to`.
        let mut seg = here;
        let mut lo = offset;
        for _ in 0..HALF_WINDOW {
            let at_end = seg == to.segment() && to.offset() >= lo;
            let hi = if at_end {
                to.offset()
            } else {
                path.segment_length(seg)
            };
            keep(nearest_on_segment(
                path,
                seg,
                lo,
                hi.max(lo),
                pose.x,
                pose.y,
            ));
            if at_end {
                break;
            }
            match next_segment(path, seg) {
                Some(n) => seg = n,
                None => break,
            }
            lo = T::ZERO;
        }
        // Backwards: [start of segment, offset], the segments before, down to `from`.
        let mut seg = here;
        let mut hi = offset;
        for _ in 0..HALF_WINDOW {
            let at_start = seg == from.segment() && from.offset() <= hi;
            let lo = if at_start { from.offset() } else { T::ZERO };
            keep(nearest_on_segment(
                path,
                seg,
                lo,
                hi.max(lo),
                pose.x,
                pose.y,
            ));
            if at_start {
                break;
            }
            match previous_segment(path, seg) {
                Some(p) => seg = p,
                None => break,
            }
            hi = path.segment_length(seg);
        }
        best_driven.unwrap_or(best)
    }

    /// Nearest point on the whole path, with the heading weight applied.
    fn search_all<const N: usize>(
        &self,
        path: &Path<T, N>,
        pose: &Pose<T>,
        driving: Option<Direction>,
        offset: T,
    ) -> Foot<T> {
        driving
            .and_then(|d| self.search_all_of(path, pose, Some(d), offset))
            .or_else(|| self.search_all_of(path, pose, None, offset))
            .unwrap_or(Foot {
                segment: 0,
                offset: T::ZERO,
                dist2: T::ZERO,
            })
    }

    /// The best-scoring foot on the segments driven in `only` (all if `None`),
    /// for the curve `offset` metres left of the path.
    fn search_all_of<const N: usize>(
        &self,
        path: &Path<T, N>,
        pose: &Pose<T>,
        only: Option<Direction>,
        offset: T,
    ) -> Option<Foot<T>> {
        let w = self.config.heading_weight;
        let (hs, hc) = pose.heading.sin_cos();
        // Score = distance to the offset curve + w * |heading error|. The
        // bounding circle bounds the distance to the segment from below, and
        // that distance minus |offset| bounds the first part: enough to prune.
        let mut best: Option<(T, Foot<T>)> = None;
        for i in 0..path.len() {
            if only.is_some_and(|d| path.placed_at(i).direction != d) {
                continue;
            }
            let lower = lower_bound(path, i, pose.x, pose.y) - offset.abs();
            if let Some((score, _)) = best {
                if lower > score {
                    continue;
                }
            }
            let f = nearest_on_segment(path, i, T::ZERO, path.segment_length(i), pose.x, pose.y);
            let mut score = f.dist2.sqrt();
            if offset == T::ZERO && w <= T::ZERO {
                if best.is_none_or(|(s, _)| score < s) {
                    best = Some((score, f));
                }
                continue;
            }
            let p = path.eval_in(i, f.offset);
            if offset != T::ZERO {
                // Distance to the point of the offset curve beside the foot.
                let along = p.along_offset(pose.x, pose.y);
                let beside = p.lateral_offset(pose.x, pose.y) - offset;
                score = (along * along + beside * beside).sqrt();
            }
            if w > T::ZERO {
                let sign = p.direction.sign::<T>();
                // Heading error from the unit vectors: atan2(cross, dot).
                let cross = (p.cos * hs - p.sin * hc) * sign;
                let dot = (p.cos * hc + p.sin * hs) * sign;
                score += w * cross.atan2(dot).abs();
            }
            if best.is_none_or(|(s, _)| score < s) {
                best = Some((score, f));
            }
        }
        best.map(|(_, f)| f)
    }
}

/// Refuses a non-finite pose or offset, and positions so far out that the
/// squared distances of the projection could overflow (`f32` included):
/// beyond twice [`Real::PLANE`] (for `f32` and `f64` [`crate::MAX_COORDINATE`]),
/// the bound of every path anchor.
fn check_input<T: Real>(pose: &Pose<T>, offset: T) -> Result<(), TrackError> {
    if !pose.is_finite() || !offset.is_finite() {
        return Err(TrackError::NonFinite);
    }
    // In `T`: on an `f32` target, `f64` arithmetic here would be soft-float
    // on the per-cycle path.
    let limit: T = T::PLANE + T::PLANE;
    let far = |v: T| v.abs() > limit;
    if far(pose.x) || far(pose.y) || far(offset) {
        return Err(TrackError::OutOfRange);
    }
    Ok(())
}

/// `cursor` moved by `ds` metres (finite): within its segment by one
/// addition, across joints by [`Cursor::moved`].
#[inline]
fn moved_by<T: Real, const N: usize>(
    path: &Path<T, N>,
    cursor: Cursor<T>,
    ds: T,
) -> (Cursor<T>, Travel) {
    let u = cursor.offset() + ds;
    if u >= T::ZERO && u <= path.segment_length(cursor.segment()) {
        return (Cursor::on(cursor.segment(), u), Travel::Within);
    }
    cursor.moved(path, ds)
}

/// Segments searched on each side of the foot (its own counts on both).
const HALF_WINDOW: usize = MAX_WINDOW_SEGMENTS / 2;

/// The segment after `seg`: wraps on a closed path, `None` past the end of an open one.
fn next_segment<T: Real, const N: usize>(path: &Path<T, N>, seg: usize) -> Option<usize> {
    if seg + 1 < path.len() {
        Some(seg + 1)
    } else if path.is_closed() {
        Some(0)
    } else {
        None
    }
}

/// The segment before `seg`: wraps on a closed path, `None` before the start of an open one.
fn previous_segment<T: Real, const N: usize>(path: &Path<T, N>, seg: usize) -> Option<usize> {
    if seg > 0 {
        Some(seg - 1)
    } else if path.is_closed() {
        Some(path.len().saturating_sub(1))
    } else {
        None
    }
}

/// `true` when the foot is a cusp (a joint where the driving direction
/// changes) and the point lies beyond it: ahead of the end of the segment
/// arriving there, or behind the start of the segment leaving it.
fn beyond_cusp<T: Real, const N: usize>(path: &Path<T, N>, foot: &Foot<T>, along: T) -> bool {
    let here = path.placed_at(foot.segment).direction;
    let other = if along > T::ZERO && foot.offset >= path.segment_length(foot.segment) {
        next_segment(path, foot.segment)
    } else if along < T::ZERO && foot.offset <= T::ZERO {
        previous_segment(path, foot.segment)
    } else {
        None
    };
    other.is_some_and(|o| path.placed_at(o).direction != here)
}

/// The largest `|curvature|` over the segments the window from `back`
/// metres behind `offset` into segment `here` to `ahead` metres beyond it
/// touches, or `None` if one of them has another driving direction than
/// `dir` or the window spans more than half of [`MAX_WINDOW_SEGMENTS`] on a
/// side (the window search cuts it there).
fn window_curvature<T: Real, const N: usize>(
    path: &Path<T, N>,
    here: usize,
    offset: T,
    back: T,
    ahead: T,
    dir: Direction,
) -> Option<T> {
    let bend = |i: usize| {
        let p = path.placed_at(i);
        let end = p.kappa0 + p.sigma * path.segment_length(i);
        p.kappa0.abs().max(end.abs())
    };
    let mut kmax = bend(here);
    // Forwards.
    let mut seg = here;
    let mut rest = offset + ahead - path.segment_length(here);
    let mut k = 0;
    while rest > T::ZERO {
        let Some(n) = next_segment(path, seg) else {
            break;
        };
        k += 1;
        if k >= HALF_WINDOW || path.placed_at(n).direction != dir {
            return None;
        }
        seg = n;
        kmax = kmax.max(bend(seg));
        rest -= path.segment_length(seg);
    }
    // Backwards.
    let mut seg = here;
    let mut rest = back - offset;
    let mut k = 0;
    while rest > T::ZERO {
        let Some(p) = previous_segment(path, seg) else {
            break;
        };
        k += 1;
        if k >= HALF_WINDOW || path.placed_at(p).direction != dir {
            return None;
        }
        seg = p;
        kmax = kmax.max(bend(seg));
        rest -= path.segment_length(seg);
    }
    Some(kmax)
}

/// Nearest point on the whole path by distance alone.
fn nearest_anywhere<T: Real, const N: usize>(path: &Path<T, N>, qx: T, qy: T) -> Foot<T> {
    let mut best: Option<Foot<T>> = None;
    for i in 0..path.len() {
        if let Some(b) = best {
            let lower = lower_bound(path, i, qx, qy);
            if lower > T::ZERO && lower * lower > b.dist2 {
                continue;
            }
        }
        let f = nearest_on_segment(path, i, T::ZERO, path.segment_length(i), qx, qy);
        if best.is_none_or(|b| f.dist2 < b.dist2) {
            best = Some(f);
        }
    }
    best.unwrap_or(Foot {
        segment: 0,
        offset: T::ZERO,
        dist2: T::ZERO,
    })
}

/// A lower bound on the distance from `q` to segment `i`: every point of a
/// curve of length `L` lies within `L/2` of the midpoint of its chord (the
/// sum of its distances to the two ends is at most `L`).
fn lower_bound<T: Real, const N: usize>(path: &Path<T, N>, i: usize, qx: T, qy: T) -> T {
    let a = path.placed_at(i);
    let len = path.segment_length(i);
    let (bx, by) = path.segment_end(i);
    let mx = T::HALF * (a.x + bx);
    let my = T::HALF * (a.y + by);
    let dx = qx - mx;
    let dy = qy - my;
    (dx * dx + dy * dy).sqrt() - T::HALF * len
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::path::anchored::PathBuilder;
    use crate::path::segment::Segment;

    /// In steady driving the foot is stepped (no window search), and the
    /// stepped foot is the one the window search finds: the point put `d`
    /// along the normal at station `s` has its foot at `s` (definition).
    #[test]
    fn steady_updates_are_stepped() {
        let path = PathBuilder::<f32, 8>::new(Pose::new(5.0, -3.0, 0.2))
            .unwrap()
            .push(Segment::line(30.0).unwrap())
            .unwrap()
            .push(Segment::transition(20.0, 0.0, 0.1).unwrap())
            .unwrap()
            .push(Segment::arc(30.0, 0.1).unwrap())
            .unwrap()
            .push(Segment::transition(20.0, 0.1, -0.05).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let mut t = Tracker::new(TrackerConfig::tractor()).unwrap();
        let mut stepped = 0;
        let n = 900;
        for i in 0..n {
            let s = 2.0 + 0.1 * i as f32;
            let p = path.at(s);
            let d = 0.3 * libm::sinf(0.05 * i as f32);
            let q = Pose::new(p.x - d * p.sin, p.y + d * p.cos, p.heading());
            let mut probe = t;
            if t.is_acquired() && probe.step_foot(&path, &q, None).is_some() {
                stepped += 1;
            }
            let r = t.update(&path, &q).unwrap();
            assert!((r.station - s).abs() < 2e-4, "{i}: {} vs {s}", r.station);
            assert!(
                (r.cross_track - d).abs() < 2e-5,
                "{i}: {} vs {d}",
                r.cross_track
            );
        }
        // All but the first (acquisition) update.
        assert_eq!(stepped, n - 1);
    }
}
