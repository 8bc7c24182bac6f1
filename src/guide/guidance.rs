//! The per-cycle guidance call: fix in, limited steering command out.
//!
//! [`Guidance::step`] runs, in a bounded amount of work whatever the input:
//!
//! 1. the supervisor's fix checks (finite, fresh, monotonic, quality gate,
//!    no jump) and latency compensation (the fix, new or the last one on a
//!    cycle without a new fix, is dead-reckoned to `now`); then the
//!    operator state (standby or manual override: neutral command, the
//!    tracker kept on the path) and the line offset (pass, line shift:
//!    see [`crate::guide::operator`]);
//! 2. the [`Tracker`] update of the control point (lookahead set from the
//!    law's speed schedule);
//! 3. the projection of the control point, the law's reference point and
//!    its lookahead goal onto the current **leg** (a run of segments with
//!    one driving direction; legs meet at cusps), in the travel frame;
//! 4. the steering law, then the vehicle limits ([`SteerLimiter`]) and the
//!    speed cap ([`speed_cap`](crate::speed_cap));
//! 5. the supervisor's state machine (see [`crate::guide::supervisor`]) choosing
//!    between that command, hold, straighten and stop.
//!
//! # Driving direction and cusps
//!
//! The command's `tracking.foot.direction` is the direction to drive in. On
//! approaching a cusp (the end of a leg followed by one of the other
//! direction) the speed cap brings the vehicle to a stop at the cusp; once
//! it is within `cusp_tolerance` of the cusp and slower than
//! `stopped_speed`, the next leg becomes current. Projections never leave
//! the current leg, so the nearly coincident stretches either side of a
//! cusp cannot be confused.
//!
//! # Mapping the control point to the law
//!
//! The fix is the control point `a` metres ahead of the rear axle. In the
//! travel frame (headings turned by pi when reversing) it sits
//! `u = sign * a` ahead of the rear axle, and a law's reference point `b`
//! (0 for the rear axle, `L` for Stanley's steered axle) sits `b - u` ahead
//! of the control point along the travel heading. That point is projected
//! onto the leg (Newton on the foot-point condition, warm-started from the
//! control point's station, at most [`PROJECTION_STEPS`] evaluations) for
//! the law's cross-track, heading error, curvature and sharpness. The goal
//! (pure pursuit) is the leg point `max(l - u, 0)` beyond the control
//! point's station (continued along the tangent past a leg end), given
//! relative to the rear axle. On an arc a control point off the rear axle
//! is on the path only when the rear axle runs on the concentric circle of
//! radius `sqrt(R^2 - u^2)`, about `u^2 kappa / 2` inside; the goal is
//! shifted onto that circle (so pure pursuit's circle through the rear axle
//! and the goal is that circle), the Frenet law subtracts the same offset
//! from its cross-track, and Stanley steers its axle onto the matching
//! circle. The law's travel-frame curvature times the driving sign is the
//! rear-axle curvature command.
//!
//! # Cost
//!
//! Per cycle: one tracker update (its bounded window), at most
//! `2 * PROJECTION_STEPS + 2` path evaluations for the control point, the
//! reference point and the goal, and a speed scan of at most
//! [`crate::SPEED_SCAN_SEGMENTS`] segments (arithmetic only), whatever the
//! path's length. Acquisition and each change of leg walk the path's
//! segments once (bounded by `N`).
//!
//! # Limitations
//!
//! * Call [`Guidance::reset`] when the path changes: the current leg and
//!   station belong to the path of the previous calls.
//! * Acquisition takes the leg the tracker finds (nearest, weighted by
//!   heading). Where two legs overlap with the same body heading (a reverse
//!   leg driven back over a forward one), start near the intended leg's
//!   start or re-acquire there.
//! * The kinematic model has no tyre slip, steering lag or dead time; tune
//!   the gains for the machine (the HIL harness models those).
//!
//! Caution: this is not a certified safety function. Keep an independent
//! emergency stop; the standards that apply to the machine (e.g. ISO 25119,
//! ISO 18497, ISO 3691-4, ISO 26262, IEC 61508) decide what else it needs.

use crate::build::passes::{PassError, Passes};
use crate::guide::cycle::{
    tracking_is_finite, Command, Fix, GuidanceInput, GuidanceStatus, Reason,
};
use crate::guide::operator::Operator;
use crate::guide::supervisor::{FixMonitor, Mode, SupervisorConfig, Verdict};
use crate::guide::time::{Micros, MICROS_PER_SECOND};
use crate::num::real::{c, Real};
use crate::path::anchored::Path;
use crate::path::cursor::Cursor;
use crate::path::pose::{Direction, PathPoint, Pose};
use crate::steer::law::{SteerError, SteeringInput, SteeringLaw};
use crate::steer::limits::{Limited, SteerLimiter};
use crate::steer::speed::{cap_from_square, speed_cap_sq_memo, ScanMemo};
use crate::steer::vehicle::{rear_axle_offset, Vehicle};
use crate::track::tracker::{Acquisition, TrackStatus, Tracker, TrackerConfig, Tracking};

/// Consecutive cycles with `now` going backwards after which the guidance
/// takes the new time base and starts again in `Acquiring`.
pub const FAULT_CYCLES_TO_RESTART: u32 = 3;

/// Most path evaluations of one projection onto a leg.
pub const PROJECTION_STEPS: usize = 4;

/// Largest Newton step of a projection, metres.
const MAX_NEWTON_STEP: f64 = 5.0;

/// A run of consecutive segments with one driving direction.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Leg<T> {
    first: usize,
    last: usize,
    start: T,
    end: T,
    direction: Direction,
    /// `false` for a closed path driven in one direction (stations wrap).
    bounded: bool,
    /// The segment after the leg's end (wrapping on a closed path).
    next: Option<usize>,
    /// `true` if the vehicle must stop at the leg's end: the end of an open
    /// path or a cusp (the next leg has the other direction).
    stop_at_end: bool,
}

/// A point projected onto a leg.
#[derive(Debug, Clone, Copy, PartialEq)]
struct OnLeg<T> {
    station: T,
    point: PathPoint<T>,
    cross_track: T,
    heading_error: T,
}

fn leg_of<T: Real, const N: usize>(path: &Path<T, N>, index: usize) -> Leg<T> {
    let n = path.len();
    let i = index.min(n.saturating_sub(1));
    let dir = |k: usize| path.segment(k).map(|s| s.direction());
    let here = dir(i).unwrap_or_default();
    let mut first = i;
    for _ in 0..N {
        if first == 0 || dir(first - 1) != Some(here) {
            break;
        }
        first -= 1;
    }
    let mut last = i;
    for _ in 0..N {
        if last + 1 >= n || dir(last + 1) != Some(here) {
            break;
        }
        last += 1;
    }
    let bounded = !(path.is_closed() && first == 0 && last + 1 == n);
    let start = path.segment_start(first).unwrap_or(T::ZERO);
    let end = path
        .segment_start(last + 1)
        .unwrap_or_else(|| path.length());
    let next = if last + 1 < n {
        Some(last + 1)
    } else if path.is_closed() {
        Some(0)
    } else {
        None
    };
    let stop_at_end = bounded && next.is_none_or(|k| dir(k) != Some(here));
    Leg {
        first,
        last,
        start,
        end,
        direction: here,
        bounded,
        next,
        stop_at_end,
    }
}

fn clamp_on<T: Real>(leg: &Leg<T>, s: T) -> T {
    if leg.bounded {
        s.clamp_to(leg.start, leg.end)
    } else {
        s
    }
}

/// The path point at station `s`, restricted to the leg's segments.
fn eval_on_leg<T: Real, const N: usize>(path: &Path<T, N>, leg: &Leg<T>, s: T) -> PathPoint<T> {
    if !leg.bounded {
        return path.at(s);
    }
    let sc = s.clamp_to(leg.start, leg.end);
    let i = path.find_segment(sc).max(leg.first).min(leg.last);
    let u = sc - path.segment_start(i).unwrap_or(T::ZERO);
    path.eval_in(i, u.clamp_to(T::ZERO, path.segment_length(i)))
}

/// The station of the tracker's foot for the leg: exactly the leg's end
/// (start) when the foot sticks to it, so that `on_leg_at` continues along
/// the tangent beyond it.
fn foot_station<T: Real, const N: usize>(
    path: &Path<T, N>,
    leg: &Leg<T>,
    t: &Tracking<T>,
    foot: Cursor<T>,
) -> T {
    if !leg.bounded {
        return t.foot.station;
    }
    let (seg, u) = (foot.segment(), foot.offset());
    if seg == leg.last && u >= path.segment_length(seg) {
        leg.end
    } else if seg == leg.first && u <= T::ZERO {
        leg.start
    } else {
        t.foot.station
    }
}

/// The leg point at station `s` (`p`, evaluated at `s` clamped onto the
/// leg), continued along the tangent past its ends, shifted `left` metres
/// along the path's left normal there.
fn extended_from<T: Real>(leg: &Leg<T>, p: PathPoint<T>, s: T, left: T) -> (T, T) {
    let beyond = if leg.bounded {
        s - clamp_on(leg, s)
    } else {
        T::ZERO
    };
    // Past the end the curvature is taken as zero (the tangent line).
    let shift = if beyond == T::ZERO { left } else { T::ZERO };
    (
        p.x + beyond * p.cos - shift * p.sin,
        p.y + beyond * p.sin + shift * p.cos,
    )
}

/// Projects `(qx, qy)` with travel heading `(sin, cos)` onto the leg,
/// starting from station `guess`, evaluating by the closed form.
fn project<T: Real, const N: usize>(
    path: &Path<T, N>,
    leg: &Leg<T>,
    guess: T,
    q: (T, T),
    travel: (T, T),
) -> OnLeg<T> {
    project_with(leg, guess, q, travel, |s| eval_on_leg(path, leg, s))
}

/// As [`project`], evaluating leg points with `eval` (a station already
/// clamped onto the leg in, the path point there out).
fn project_with<T: Real>(
    leg: &Leg<T>,
    guess: T,
    q: (T, T),
    travel: (T, T),
    mut eval: impl FnMut(T) -> PathPoint<T>,
) -> OnLeg<T> {
    let (qx, qy) = q;
    let mut s = clamp_on(leg, guess);
    let mut p = eval(s);
    for _ in 0..PROJECTION_STEPS {
        let along = p.along_offset(qx, qy);
        let lat = p.lateral_offset(qx, qy);
        let scale = (T::ONE - p.curvature * lat).max(c(0.2));
        let step = (along / scale).clamp_to(-c::<T>(MAX_NEWTON_STEP), c(MAX_NEWTON_STEP));
        let next = clamp_on(leg, s + step);
        let tiny = T::EPSILON * c(16.0) * (T::ONE + s.abs());
        let moved = (next - s).abs() > tiny;
        if !moved {
            break;
        }
        s = next;
        p = eval(s);
    }
    on_leg_at(leg, s, p, q, travel)
}

/// The leg point `p` at station `s` as the projection of `q` (travel
/// heading `(sin, cos)`): continued along the tangent when `q` lies beyond
/// a leg end (`s` at the end).
fn on_leg_at<T: Real>(leg: &Leg<T>, s: T, p: PathPoint<T>, q: (T, T), travel: (T, T)) -> OnLeg<T> {
    let (ts, tc) = travel;
    let cross = p.cos * ts - p.sin * tc;
    let dot = p.cos * tc + p.sin * ts;
    on_leg_with(leg, s, p, q, cross.atan2(dot))
}

/// As [`on_leg_at`] with the heading error (radians) already known.
fn on_leg_with<T: Real>(
    leg: &Leg<T>,
    s: T,
    p: PathPoint<T>,
    q: (T, T),
    heading_error: T,
) -> OnLeg<T> {
    let (qx, qy) = q;
    let along = p.along_offset(qx, qy);
    let at_end =
        leg.bounded && ((s >= leg.end && along > T::ZERO) || (s <= leg.start && along < T::ZERO));
    let station = if at_end { s + along } else { p.station };
    OnLeg {
        station,
        point: p,
        cross_track: p.lateral_offset(qx, qy),
        heading_error,
    }
}

/// A copy of `t` field by field: a whole `Tracking` moved at once is a
/// call of `memcpy` (its 100 bytes in `f32` exceed what the compiler copies
/// inline on a Cortex-M: 92 instructions on an M4F), its parts are copied
/// inline.
#[inline(always)]
fn copy_tracking<T: Copy>(t: &Tracking<T>) -> Tracking<T> {
    Tracking {
        station: t.station,
        cross_track: t.cross_track,
        heading_error: t.heading_error,
        curvature: t.curvature,
        curvature_ahead: t.curvature_ahead,
        distance_to_end: t.distance_to_end,
        foot: t.foot,
        ahead: copy_point(&t.ahead),
        status: t.status,
    }
}

/// A copy of `p` field by field (see [`copy_tracking`]).
#[inline(always)]
fn copy_point<T: Copy>(p: &PathPoint<T>) -> PathPoint<T> {
    PathPoint {
        station: p.station,
        x: p.x,
        y: p.y,
        cos: p.cos,
        sin: p.sin,
        curvature: p.curvature,
        sharpness: p.sharpness,
        segment: p.segment,
        direction: p.direction,
    }
}

/// The guidance: tracker, steering law, limiter and supervisor.
///
/// ```
/// use kappaline::{
///     Fix, FixUpdate, Guidance, GuidanceInput, GuidanceStatus, Micros, PathBuilder, Pose,
///     PurePursuit, Segment, SupervisorConfig, TrackerConfig, Vehicle,
/// };
/// # fn main() -> Result<(), Box<dyn core::error::Error>> {
/// let path = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))?
///     .push(Segment::line(100.0)?)?
///     .build()?;
/// let vehicle = Vehicle::front_steered(2.5, 0.6, 0.7)?;
/// let mut g = Guidance::new(
///     vehicle,
///     PurePursuit::tractor(),
///     TrackerConfig::tractor(),
///     SupervisorConfig::default_for(&vehicle),
/// )?;
/// let fix = Fix::new(10.0, 0.5, 0.0, 2.0, Micros(0));
/// let cmd = g.step(&path, &GuidanceInput::new(FixUpdate::New(fix), Micros(0), 50_000));
/// assert_eq!(cmd.status, GuidanceStatus::Following);
/// assert!(cmd.curvature < 0.0); // left of the path: steer right
/// assert!(cmd.speed_limit > 0.0);
/// // 50 ms later, no new fix yet: still following, dead-reckoned.
/// let cmd = g.step(&path, &GuidanceInput::new(FixUpdate::Unchanged, Micros(50_000), 50_000));
/// assert_eq!(cmd.status, GuidanceStatus::Following);
/// // The operator disengages: neutral output, stop request.
/// g.standby();
/// let cmd = g.step(&path, &GuidanceInput::new(FixUpdate::Unchanged, Micros(100_000), 50_000));
/// assert_eq!((cmd.status, cmd.curvature, cmd.speed_limit), (GuidanceStatus::Standby, 0.0, 0.0));
/// # Ok(()) }
/// ```
#[derive(Debug, Clone)]
pub struct Guidance<T: Real, L> {
    vehicle: Vehicle<T>,
    law: L,
    tracker: Tracker<T>,
    config: SupervisorConfig<T>,
    limiter: SteerLimiter<T>,
    monitor: FixMonitor<T>,
    mode: Mode,
    leg: Option<Leg<T>>,
    station: T,
    speed: T,
    speed_limit: T,
    saturated: bool,
    last_now: Option<Micros>,
    /// Consecutive cycles with `now` going backwards.
    backwards: u32,
    /// Estimate of the body curvature actually driven, 1/m: the commands
    /// through the actuator's first-order lag (`Vehicle::steer_lag`).
    driven: T,
    /// The cause behind the current status, when it is not following.
    reason: Option<Reason>,
    /// Engage state, pass and line shift.
    operator: Operator<T>,
    /// The last speed cap's square and the cap (m^2/s^2, m/s), so that an
    /// unchanged square costs no square root.
    cap_memo: (T, T),
    /// The speed scan's last single-segment window (for `self.vehicle`).
    scan_memo: ScanMemo<T>,
}

/// Where the control point is, found during one cycle.
struct Situation<T> {
    leg: Leg<T>,
    cp: OnLeg<T>,
    tracking: Tracking<T>,
    /// `(sin, cos)` of the fix's body heading (from the fix checks).
    body: (T, T),
    /// `true` if `cp` is the tracker's foot (its lookahead then starts there).
    from_foot: bool,
    /// The law's lookahead at the fix's speed, metres (asked once a cycle).
    look: T,
}

impl<T: Real, L: SteeringLaw<T>> Guidance<T, L> {
    /// Guidance for `vehicle` with steering law `law`.
    ///
    /// # Errors
    /// [`SteerError::Tracker`] for a bad tracker configuration;
    /// [`SteerError::NonFinite`] or [`SteerError::OutOfRange`] for a bad
    /// supervisor configuration.
    pub fn new(
        vehicle: Vehicle<T>,
        law: L,
        tracker: TrackerConfig<T>,
        supervisor: SupervisorConfig<T>,
    ) -> Result<Self, SteerError> {
        supervisor.check()?;
        Ok(Self {
            vehicle,
            law,
            tracker: Tracker::new(tracker)?,
            config: supervisor,
            limiter: SteerLimiter::new(),
            monitor: FixMonitor::new(),
            mode: Mode::Acquiring,
            leg: None,
            station: T::ZERO,
            speed: T::ZERO,
            speed_limit: T::ZERO,
            saturated: false,
            last_now: None,
            backwards: 0,
            driven: T::ZERO,
            reason: None,
            operator: Operator::new(),
            cap_memo: (T::ZERO, T::ZERO),
            scan_memo: ScanMemo::new(),
        })
    }

    /// Back to `Acquiring`: forgets the station, the leg, the fix history
    /// and the law's integrators. The steering limiter keeps its last
    /// output (the wheels do not jump). Call it when the path changes.
    /// The operator's settings (engaged or not, pass, line shift) stay.
    pub fn reset(&mut self) {
        self.tracker.reset();
        self.law.reset();
        self.monitor = FixMonitor::new();
        self.mode = Mode::Acquiring;
        self.leg = None;
        self.speed_limit = T::ZERO;
        self.saturated = false;
        self.last_now = None;
    }

    /// Tells the limiter the measured curvature (1/m), e.g. from a
    /// steering-angle sensor at start-up; by default it assumes straight.
    pub fn seed_curvature(&mut self, kappa: T) {
        self.limiter.seed(&self.vehicle, kappa);
    }

    /// The current status (that of the last command, except `Fault`).
    pub fn status(&self) -> GuidanceStatus {
        self.mode.status()
    }

    /// The vehicle.
    pub fn vehicle(&self) -> &Vehicle<T> {
        &self.vehicle
    }

    /// The steering law.
    pub fn law(&self) -> &L {
        &self.law
    }

    /// The tracker (for its cursor and configuration).
    pub fn tracker(&self) -> &Tracker<T> {
        &self.tracker
    }

    /// One control cycle: never NaN, bounded work (see the module docs).
    pub fn step<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        input: &GuidanceInput<T>,
    ) -> Command<T> {
        // Every way out of the cycle builds its command where the caller
        // receives it, checked as it is built (`Guidance::command`,
        // `Guidance::stand_by`, `Guidance::fault`): a command kept in a local
        // and checked here was copied whole (128 bytes in `f32`) each cycle.
        self.cycle(path, input)
    }

    #[inline(always)]
    fn cycle<const N: usize>(&mut self, path: &Path<T, N>, input: &GuidanceInput<T>) -> Command<T> {
        let now = input.now;
        // A period beyond the 2^31 us horizon of `Micros` is refused too.
        let period_ok = input.period_us > 0 && input.period_us <= i32::MAX as u32;
        if !period_ok {
            return self.fault(Reason::BadTime);
        }
        let dt = T::from_u32(input.period_us) / T::from_u32(MICROS_PER_SECOND);
        if self.last_now.is_some_and(|t| now.micros_since(t) < 0) {
            // Time going backwards: a fault for this cycle. If it keeps
            // doing so, the last `now` was the glitch (one bogus time far in
            // the future would otherwise latch the fault for ever): take
            // the new time base and start again.
            self.backwards = self.backwards.saturating_add(1);
            if self.backwards < FAULT_CYCLES_TO_RESTART {
                return self.fault(Reason::BadTime);
            }
            self.reset();
        }
        self.backwards = 0;
        self.last_now = Some(now);
        self.track_driven_curvature(dt);
        let verdict = self
            .monitor
            .check(&input.fix, now, &self.config, self.driven);
        if input.manual_override {
            self.operator.disengage(Reason::ManualOverride);
        }
        if !self.operator.is_engaged() {
            return self.stand_by(path, verdict);
        }
        if let Some(r) = verdict.reason() {
            self.reason = Some(r);
        }
        match (self.mode, verdict) {
            (Mode::EndOfPath, _) => self.hold(GuidanceStatus::EndOfPath, true),
            (Mode::Acquiring, Verdict::Usable(f) | Verdict::Jumped(f)) => {
                self.acquire(path, f, dt, Mode::Acquiring)
            }
            (Mode::Acquiring, Verdict::Unusable(_)) => {
                self.straighten(GuidanceStatus::Acquiring, dt)
            }
            (Mode::Following | Mode::Degraded(_), Verdict::Usable(f)) => {
                self.mode = Mode::Following;
                self.follow(path, f, dt)
            }
            (Mode::Following, _) => {
                self.mode = Mode::Degraded(now);
                self.coast(path, dt);
                self.hold(GuidanceStatus::Degraded, false)
            }
            (Mode::Degraded(since), _) => {
                if now.seconds_since::<T>(since) > self.config.hold_time {
                    self.mode = Mode::Lost;
                    self.straighten(GuidanceStatus::Lost, dt)
                } else {
                    self.coast(path, dt);
                    self.hold(GuidanceStatus::Degraded, false)
                }
            }
            (Mode::Lost, Verdict::Usable(f) | Verdict::Jumped(f))
                if self.monitor.agreeing >= self.config.confirm_fixes =>
            {
                // Once: a whole-path search spread over cycles is under way
                // while the tracker is not acquired.
                if self.tracker.is_acquired() {
                    self.tracker.reset();
                }
                self.law.reset();
                self.leg = None;
                self.acquire(path, f, dt, Mode::Lost)
            }
            (Mode::Lost, _) => self.straighten(GuidanceStatus::Lost, dt),
        }
    }

    /// Full acquisition; on failure stays in `fail` (straighten, stop).
    fn acquire<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        f: Fix<T>,
        dt: T,
        fail: Mode,
    ) -> Command<T> {
        // A shifted line acquires in one call through `update_offset`.
        let on_line = self.operator.onto_reference(&mut self.tracker, path, f);
        // The whole-path search, a bounded part per cycle.
        if !self.tracker.is_acquired() {
            let pose = Pose::new(on_line.x, on_line.y, on_line.heading);
            let reason = match self.tracker.acquire_step(path, &pose) {
                Ok(Acquisition::Done(t)) if t.status != TrackStatus::Lost => None,
                Ok(Acquisition::Searching { .. }) => Some(Reason::Searching),
                _ => Some(Reason::PathLost),
            };
            if reason.is_some() {
                self.reason = reason;
                self.mode = fail;
                return self.straighten(fail.status(), dt);
            }
        }
        match self.locate(path, &on_line) {
            Some(sit) if self.within_limits(&sit.cp) => {
                self.mode = Mode::Following;
                self.reason = None;
                self.monitor.forget_accepted();
                self.monitor.accept(f);
                self.speed = f.speed;
                self.drive(path, &on_line, &sit, dt)
            }
            found => {
                self.reason = Some(Self::why_not(found.is_some()));
                // Search the whole path again next time.
                self.tracker.reset();
                self.mode = fail;
                self.straighten(fail.status(), dt)
            }
        }
    }

    /// Steering along the path with a usable fix.
    #[inline(always)]
    fn follow<const N: usize>(&mut self, path: &Path<T, N>, f: Fix<T>, dt: T) -> Command<T> {
        self.monitor.accept(f);
        self.speed = f.speed;
        let on_line = self.operator.onto_reference(&mut self.tracker, path, f);
        match self.locate(path, &on_line) {
            Some(sit) if self.within_limits(&sit.cp) => {
                self.reason = None;
                self.drive(path, &on_line, &sit, dt)
            }
            found => {
                self.reason = Some(Self::why_not(found.is_some()));
                self.mode = Mode::Lost;
                self.straighten(GuidanceStatus::Lost, dt)
            }
        }
    }

    /// The reason a located fix is not steered with: beyond the limits if
    /// the tracker found the path, else the path lost.
    fn why_not(found: bool) -> Reason {
        if found {
            Reason::OffLimits
        } else {
            Reason::PathLost
        }
    }

    fn within_limits(&self, cp: &OnLeg<T>) -> bool {
        cp.cross_track.abs() <= self.config.max_cross_track
            && cp.heading_error.abs() <= self.config.max_heading_error
    }

    /// The travel heading's `(sin, cos)` on a leg of direction `dir`, from
    /// the body heading's `(sin, cos)`.
    fn travel(body: (T, T), dir: Direction) -> (T, T) {
        let (s, co) = body;
        match dir {
            Direction::Forward => (s, co),
            Direction::Reverse => (-s, -co),
        }
    }

    /// Tracker update and projection of the control point onto its leg
    /// (switching legs at a reached cusp). `None` if the tracker lost the path.
    #[inline(always)]
    fn locate<const N: usize>(&mut self, path: &Path<T, N>, f: &Fix<T>) -> Option<Situation<T>> {
        let dir = self.leg.map(|l| l.direction).unwrap_or_default();
        let u_cp = dir.sign::<T>() * self.vehicle.control_point();
        let mut look = self.law.lookahead(f.speed.abs());
        let reach = (look - u_cp).max(T::ZERO);
        // A lookahead the tracker refuses (not finite) keeps the old one.
        let _ = self.tracker.set_lookahead(reach);
        let pose = Pose::new(f.x, f.y, f.heading);
        // On a leg, only feet of its driving direction count (cusps).
        let found = match self.leg {
            Some(l) => self.tracker.update_driving(path, &pose, l.direction),
            None => self.tracker.update(path, &pose),
        };
        // By reference: moving the tracking state out copies it.
        let Ok(t) = &found else {
            return None;
        };
        if t.status == TrackStatus::Lost {
            return None;
        }
        let valid = |l: &Leg<T>| l.last < path.len();
        let mut leg = match self.leg {
            Some(l) if valid(&l) => l,
            _ => {
                let l = leg_of(path, t.foot.segment);
                self.station = t.station;
                l
            }
        };
        let on_leg = t.foot.segment >= leg.first && t.foot.segment <= leg.last;
        // The dead-reckoned heading vector of the fix checks: no `sin_cos`.
        let body = self.monitor.direction(f.heading);
        let travel = Self::travel(body, leg.direction);
        let mut from_foot = on_leg;
        let mut cp = if on_leg {
            // The tracker's foot is the projection onto the leg: one
            // projection per cycle.
            let s = foot_station(path, &leg, t, self.tracker.cursor());
            // The tracker's heading error is this one (the foot's segment
            // is on the leg, so of its direction), without an `atan2`.
            on_leg_with(&leg, s, t.foot, (f.x, f.y), t.heading_error)
        } else {
            project(path, &leg, self.station, (f.x, f.y), travel)
        };
        // Leaving the leg at its end: onto the next leg, at once if it has
        // the same direction (the seam of a loop), after a stop at a cusp.
        if leg.bounded && cp.station >= leg.end - self.config.cusp_tolerance {
            if let Some(n) = leg.next {
                let seamless = !leg.stop_at_end;
                let stopped = f.speed.abs() <= self.config.stopped_speed;
                if (seamless && cp.station >= leg.end) || (!seamless && stopped) {
                    // The only walk over the path's segments outside
                    // acquisition: once per leg change.
                    leg = leg_of(path, n);
                    self.law.reset();
                    // Asked again after the reset, as before it.
                    look = self.law.lookahead(f.speed.abs());
                    from_foot = false;
                    cp = project(
                        path,
                        &leg,
                        leg.start,
                        (f.x, f.y),
                        Self::travel(body, leg.direction),
                    );
                }
            }
        }
        self.leg = Some(leg);
        self.station = cp.station;
        let tracking = Tracking {
            station: cp.station,
            cross_track: cp.cross_track,
            heading_error: cp.heading_error,
            curvature: cp.point.curvature,
            curvature_ahead: t.curvature_ahead,
            distance_to_end: path.length() - cp.station,
            foot: cp.point,
            ahead: t.ahead,
            status: t.status,
        };
        Some(Situation {
            leg,
            cp,
            tracking,
            body,
            from_foot,
            look,
        })
    }

    /// The law's command, limited, with the speed cap; or the end of path.
    #[inline(always)]
    fn drive<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        f: &Fix<T>,
        sit: &Situation<T>,
        dt: T,
    ) -> Command<T> {
        // By reference: the tracking state is copied once, into the command.
        let Situation {
            leg,
            cp,
            tracking,
            body,
            from_foot,
            look,
        } = sit;
        let (leg, cp, body, from_foot, look) = (*leg, *cp, *body, *from_foot, *look);
        let last_leg = leg.last + 1 >= path.len() && !path.is_closed();
        if last_leg && cp.station >= leg.end - self.config.end_tolerance {
            self.mode = Mode::EndOfPath;
            self.speed_limit = T::ZERO;
            let held = self.limiter.hold();
            return self.command(held, T::ZERO, GuidanceStatus::EndOfPath, Some(tracking));
        }
        let sign = leg.direction.sign::<T>();
        let travel = Self::travel(body, leg.direction);
        let (ts, tc) = travel;
        let u_cp = sign * self.vehicle.control_point();
        let b = self.law.reference_point(self.vehicle.wheelbase());
        let shift = b - u_cp;
        let (first, last) = (leg.first, leg.last);
        let reference = if shift == T::ZERO {
            cp
        } else {
            let q = (f.x + shift * tc, f.y + shift * ts);
            // The start: the foot of q on the circle of curvature at the
            // control point's foot (exact on an arc to fourth order, as the
            // tracker's step), so one evaluation usually settles it.
            let p = cp.point;
            let (a, b) = (p.along_offset(q.0, q.1), p.lateral_offset(q.0, q.1));
            let scale = (T::ONE - p.curvature * b).max(c(0.2));
            let newton = a / scale;
            let x = p.curvature * newton;
            let guess = cp.station + newton * (T::ONE - x * x * c(1.0 / 3.0));
            let tracker = &mut self.tracker;
            project_with(&leg, guess, q, travel, |s| {
                tracker.point_near(path, s, first, last, false)
            })
        };
        let speed = f.speed.abs();
        let goal = if look > T::ZERO {
            let at = cp.station + (look - u_cp).max(T::ZERO);
            let on = clamp_on(&leg, at);
            // The tracker's lookahead is this point when the control point
            // is the tracker's foot and the goal lies on the leg: reuse it.
            let a = tracking.ahead;
            let same = from_foot
                && on == at
                && a.segment >= first
                && a.segment <= last
                && (a.station - at).abs() <= T::EPSILON * c(16.0) * (T::ONE + at.abs());
            let p = if same {
                a
            } else {
                self.tracker.point_near(path, on, first, last, true)
            };
            let shift = rear_axle_offset(p.curvature, u_cp);
            let (gx, gy) = extended_from(&leg, p, at, shift);
            let rx = f.x - u_cp * tc;
            let ry = f.y - u_cp * ts;
            let (dx, dy) = (gx - rx, gy - ry);
            (dx * tc + dy * ts, dy * tc - dx * ts)
        } else {
            (T::ZERO, T::ZERO)
        };
        // Feedforward taken the actuator's lag ahead (Vehicle::with_steer_lag).
        let preview = speed * self.vehicle.steer_lag();
        let ahead = if preview > T::ZERO {
            let at = clamp_on(&leg, reference.station + preview);
            self.tracker.point_near(path, at, first, last, false)
        } else {
            reference.point
        };
        let (curvature, sharpness) = self
            .operator
            .line_curvature(ahead.curvature, ahead.sharpness);
        let input = SteeringInput {
            cross_track: reference.cross_track,
            heading_error: reference.heading_error,
            curvature,
            sharpness,
            speed,
            goal,
            control_point: u_cp,
            reference_point: b,
            dt,
            saturated: self.saturated,
            path_direction: (sign * reference.point.cos, sign * reference.point.sin),
        };
        let kappa = sign * self.law.curvature(&input);
        let limited = self.limiter.apply(&self.vehicle, kappa, dt);
        self.saturated = limited.saturated;
        // Stop at a cusp or the path end; otherwise the cap ahead.
        let stop = if leg.stop_at_end { Some(leg.end) } else { None };
        // The command holds for one period: cap where the vehicle will be
        // at its end.
        let v2 = speed_cap_sq_memo(
            path,
            &self.vehicle,
            cp.station + speed * dt,
            stop,
            &mut self.scan_memo,
        );
        // The same square as last cycle (an arc, a line): the same root.
        // (Compared bit for bit: NaN never repeats, so it is rooted afresh.)
        let (last_v2, last_cap) = self.cap_memo;
        let mut limit = if v2 == last_v2 {
            last_cap
        } else {
            let cap = cap_from_square(v2);
            self.cap_memo = (v2, cap);
            cap
        };
        if stop.is_some_and(|e| cp.station >= e - self.config.cusp_tolerance) {
            limit = T::ZERO;
        }
        self.speed_limit = limit;
        self.command(limited, limit, GuidanceStatus::Following, Some(tracking))
    }

    /// The command for a limited curvature, a speed limit and a status;
    /// a fault if any of it is not finite (never expected). The reason is
    /// the one behind the status (none when following or at the end).
    #[inline(always)]
    fn command(
        &mut self,
        lim: Limited<T>,
        limit: T,
        status: GuidanceStatus,
        tracking: Option<&Tracking<T>>,
    ) -> Command<T> {
        let v = self.speed.clamp_to(-limit, limit);
        let yaw_rate = lim.curvature * self.speed;
        let wheel_speeds = self.vehicle.wheel_speeds(lim.curvature, v);
        let finite = lim.curvature.is_finite()
            && lim.steer_angle.is_finite()
            && yaw_rate.is_finite()
            && wheel_speeds.0.is_finite()
            && wheel_speeds.1.is_finite()
            && limit.is_finite()
            && tracking_is_finite(tracking);
        if !finite {
            return self.fault(Reason::BadFix);
        }
        Command {
            curvature: lim.curvature,
            steer_angle: lim.steer_angle,
            yaw_rate,
            wheel_speeds,
            speed_limit: limit,
            status,
            reason: match status {
                GuidanceStatus::Following | GuidanceStatus::EndOfPath => None,
                _ => self.reason,
            },
            tracking: tracking.map(copy_tracking),
        }
    }

    /// Moves the driven-curvature estimate one period `dt` (s) towards the
    /// last command, through the actuator lag (first order). It is what the
    /// vehicle turned with while the fix was on its way, for the latency
    /// compensation.
    fn track_driven_curvature(&mut self, dt: T) {
        let tau = self.vehicle.steer_lag();
        let target = self.limiter.hold().curvature;
        let gain = dt / (tau + dt);
        let next = self.driven + (target - self.driven) * gain;
        self.driven = if next.is_finite() { next } else { target };
    }

    /// Dead reckoning in station while fixes are missing: moves the
    /// tracker's window on by the distance driven at the last speed, so it
    /// is still around the vehicle when fixes return (stations increase in
    /// the direction of travel on forward and reverse legs alike).
    fn coast<const N: usize>(&mut self, path: &Path<T, N>, dt: T) {
        let ds = self.speed.abs() * dt;
        if !ds.is_finite() {
            return;
        }
        let (moved, _) = self.tracker.cursor().moved(path, ds);
        self.tracker.resume_at(moved);
        self.station += ds;
    }

    /// Holds the last curvature; `stop` requests a stop, else keeps the last limit.
    fn hold(&mut self, status: GuidanceStatus, stop: bool) -> Command<T> {
        if stop {
            self.speed_limit = T::ZERO;
        }
        let held = self.limiter.hold();
        self.command(held, self.speed_limit, status, None)
    }

    /// Ramps the curvature to zero and requests a stop.
    fn straighten(&mut self, status: GuidanceStatus, dt: T) -> Command<T> {
        self.speed_limit = T::ZERO;
        let lim = self.limiter.apply(&self.vehicle, T::ZERO, dt);
        self.saturated = false;
        self.command(lim, T::ZERO, status, None)
    }

    /// Invalid time input, or (never expected) a non-finite result.
    fn fault(&mut self, reason: Reason) -> Command<T> {
        self.speed_limit = T::ZERO;
        self.reason = Some(reason);
        let lim = self.limiter.hold();
        let finite = lim.curvature.is_finite() && lim.steer_angle.is_finite();
        let (k, d) = if finite {
            (lim.curvature, lim.steer_angle)
        } else {
            (T::ZERO, T::ZERO)
        };
        Command {
            curvature: k,
            steer_angle: d,
            yaw_rate: T::ZERO,
            wheel_speeds: (T::ZERO, T::ZERO),
            speed_limit: T::ZERO,
            status: GuidanceStatus::Fault,
            reason: Some(reason),
            tracking: None,
        }
    }
}

/// Operator controls (the state is in [`crate::guide::operator`]).
impl<T: Real, L: SteeringLaw<T>> Guidance<T, L> {
    /// Engages: from the next cycle the guidance steers again, from the
    /// state the tracker kept while standing by (no new acquisition if it
    /// stayed on the path). The law's integrators start from zero and the
    /// steering ramps from straight (the neutral output of standby) at the
    /// rate limit; call [`Guidance::seed_curvature`] first with the measured
    /// curvature if a steering-angle sensor says otherwise.
    pub fn engage(&mut self) {
        if !self.operator.is_engaged() {
            self.law.reset();
            self.saturated = false;
        }
        self.operator.engage();
    }

    /// Disengages: status `Standby`, neutral command (zero curvature and
    /// steering angle, zero wheel speeds, stop request) until
    /// [`Guidance::engage`]; the tracker keeps following the fixes.
    pub fn standby(&mut self) {
        self.operator.disengage(Reason::Standby);
    }

    /// `true` while engaged (`Guidance::new` starts engaged; firmware with
    /// an engage switch calls [`Guidance::standby`] after construction).
    pub fn is_engaged(&self) -> bool {
        self.operator.is_engaged()
    }

    /// Shifts the line followed sideways by `shift` metres (left of the
    /// reference direction positive), on top of the pass: an operator
    /// matching last season's rows. Takes effect from the next cycle, as a
    /// step in cross-track.
    ///
    /// # Errors
    /// [`PassError::BadInput`] if not finite; [`PassError::Cusp`] if the
    /// offset line would cusp somewhere on `path` (`kappa * offset >= 1`).
    /// The settings are unchanged on error.
    pub fn set_line_shift<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        shift: T,
    ) -> Result<(), PassError<T>> {
        let pass_offset = self.operator.offset() - self.operator.shift();
        self.operator
            .set_line(path, self.operator.pass(), pass_offset, shift)
    }

    /// The line shift, metres, left positive.
    pub fn line_shift(&self) -> T {
        self.operator.shift()
    }

    /// Follows pass `n` of `passes` (`n * swath` metres left of the
    /// reference `path`, which stays the path given to [`Guidance::step`]).
    /// The guidance acquires the pass afresh (`Acquiring`): within
    /// `max_cross_track` of it.
    ///
    /// # Errors
    /// [`PassError::Cusp`] if the pass (with the line shift) would cusp on
    /// `path`; [`PassError::BadInput`] if its offset is not finite. The
    /// settings are unchanged on error.
    pub fn follow_pass<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        passes: &Passes<T>,
        n: i32,
    ) -> Result<(), PassError<T>> {
        self.operator.set_pass(path, passes, n)?;
        self.reacquire();
        Ok(())
    }

    /// The pass followed (`None`: the reference itself, with the shift).
    pub fn pass(&self) -> Option<i32> {
        self.operator.pass()
    }

    /// Offset of the line followed from the reference, metres, left
    /// positive: the pass's plus the line shift.
    pub fn line_offset(&self) -> T {
        self.operator.offset()
    }

    /// Acquires afresh on the next cycle, keeping the fix history.
    fn reacquire(&mut self) {
        self.tracker.reset();
        self.law.reset();
        self.leg = None;
        if self.mode != Mode::EndOfPath {
            self.mode = Mode::Acquiring;
        }
    }

    /// A cycle while disengaged: the tracker follows usable fixes (so
    /// engaging needs no acquisition), the output is neutral.
    fn stand_by<const N: usize>(&mut self, path: &Path<T, N>, verdict: Verdict<T>) -> Command<T> {
        let tracking = match verdict {
            Verdict::Usable(f) | Verdict::Jumped(f) => {
                if matches!(verdict, Verdict::Jumped(_)) {
                    // Start afresh from this fix, as an acquisition would.
                    self.reacquire();
                    self.monitor.forget_accepted();
                }
                self.monitor.accept(f);
                self.speed = f.speed;
                let on_line = self.operator.onto_reference(&mut self.tracker, path, f);
                match self.locate(path, &on_line) {
                    Some(sit) if self.within_limits(&sit.cp) => {
                        if self.mode != Mode::EndOfPath {
                            self.mode = Mode::Following;
                        }
                        Some(sit.tracking)
                    }
                    _ => {
                        self.reacquire();
                        None
                    }
                }
            }
            Verdict::Unusable(_) => {
                self.reacquire();
                None
            }
        };
        self.reason = Some(self.operator.disengaged_by());
        self.speed_limit = T::ZERO;
        self.saturated = false;
        // The output is neutral: the limiter ramps from straight on engage.
        self.limiter.seed(&self.vehicle, T::ZERO);
        if !tracking_is_finite(tracking.as_ref()) {
            return self.fault(Reason::BadFix);
        }
        Command {
            curvature: T::ZERO,
            steer_angle: T::ZERO,
            yaw_rate: T::ZERO,
            wheel_speeds: (T::ZERO, T::ZERO),
            speed_limit: T::ZERO,
            status: GuidanceStatus::Standby,
            reason: self.reason,
            tracking,
        }
    }
}
