//! Headland turns: from the end of one pass to the start of another driven
//! the opposite way, within the vehicle's curvature and sharpness limits.
//!
//! In the frame of the end pose (origin there, `+x` along the heading) the
//! next pass starts at `(e, w)` heading back (`pi`): `w` is the spacing
//! (`k * swath` for pass `n + k`, left positive), `e` the stagger of the
//! pass ends (0 when both passes end at the same reference station). With
//! the turn shapes of [`crate::TurnShape`] (clothoid–arc–clothoid at the
//! peak curvature `kappa_max` and the sharpness limit; plain arcs when the
//! limits give no sharpness bound) three kinds of turn are built:
//!
//! * [`TurnKind::UTurn`], when the spacing allows the turning circle
//!   (`|w| >= D`, where `D` is the width of the tightest 180 degree turn,
//!   `2 R` for plain arcs): a quarter turn, a straight across and a quarter
//!   turn; below the width of two quarter turns a single 180 degree turn at
//!   the curvature that fits exactly.
//! * [`TurnKind::Loop`] (a bulb), when it does not and reversing is not
//!   allowed: a turn away by `alpha`, a turn towards by `pi + 2 alpha` and
//!   a turn away by `alpha`, with `alpha` solved (bisection) so that the
//!   loop lands on the next pass. It needs headland depth: see
//!   [`HeadlandTurn::depth`].
//! * [`TurnKind::Reversing`], when it does not and reversing is allowed: a
//!   forward quarter turn, a straight reverse of `2 T - |w|` (`T` the
//!   quarter turn's tangent length) and a forward quarter turn. The
//!   direction changes are cusps (the vehicle stops there); curvature is
//!   zero on both sides of each.
//!
//! The turns start and end at zero curvature, so they join straight pass
//! ends curvature-continuously whenever clothoids are used.
//!
//! ```
//! use kappaline::{HeadlandTurn, PathLimits, Pose, TurnKind, TurnPolicy};
//! # fn main() -> Result<(), Box<dyn core::error::Error>> {
//! // Minimum radius 5 m, sharpness up to 0.1 1/m^2, passes 12 m apart.
//! let limits = PathLimits::new(0.2, Some(0.1), 1e-9)?;
//! let end = Pose::new(100.0, 0.0, 0.0);
//! let next = Pose::new(100.0, 12.0, core::f64::consts::PI);
//! let turn = HeadlandTurn::<f64, 12>::between(end, next, &limits, TurnPolicy::ForwardOnly)?;
//! assert_eq!(turn.kind, TurnKind::UTurn);
//! let path = turn.to_path::<12>()?;
//! let e = path.end_pose();
//! assert!((e.x - 100.0).abs() < 1e-9 && (e.y - 12.0).abs() < 1e-9);
//! # Ok(()) }
//! ```
//!
//! Caution: a headland turn leaves the worked area; check that the headland
//! is wide enough ([`HeadlandTurn::depth`]) and free of obstacles. This is
//! not a certified safety function (see the crate documentation).

use heapless::Vec;

use crate::build::corner::TurnShape;
use crate::build::feasibility::PathLimits;
use crate::build::passes::{PassError, Passes};
use crate::num::real::Real;
use crate::path::anchored::{Path, PathBuilder};
use crate::path::error::PathError;
use crate::path::pose::Pose;
use crate::path::segment::Segment;

/// Most segments any turn needs (three turn shapes, a straight and a stagger line).
pub const MAX_TURN_SEGMENTS: usize = 11;

/// Samples per segment for [`HeadlandTurn::depth`].
const DEPTH_SAMPLES: u32 = 32;
/// Bisection steps (each halves the bracket; 80 reach f64 resolution).
const BISECTION_STEPS: u32 = 80;

/// The shape of a headland turn.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum TurnKind {
    /// Forward only, within the spacing.
    UTurn,
    /// Forward only, looping out to the side (bulb).
    Loop,
    /// Forward, reverse, forward (two cusps).
    Reversing,
}

/// What the vehicle may do when the spacing is below its turning circle.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum TurnPolicy {
    /// Never reverse: loop around when a U-turn does not fit.
    ForwardOnly,
    /// Reverse when a U-turn does not fit.
    AllowReverse,
}

/// At which end of the reference the passes are joined.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum FieldEnd {
    /// At the reference's last station: the pass `from` is driven along
    /// the reference, the pass `to` against it.
    End,
    /// At station 0: `from` is driven against the reference, `to` along it.
    Start,
}

/// Why no turn was built.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum HeadlandError {
    /// A pose or limit is NaN or infinite, or a limit is out of range.
    BadInput,
    /// The start pose's heading is not opposite to the end pose's (within 1e-6 rad).
    NotOpposite,
    /// The turn needs more than `M` segments.
    Capacity,
    /// A pass end lies where its pass cusps.
    Pass(PassError<f64>),
    /// The path builder refused a segment.
    Path(PathError),
    /// The construction missed its target (not expected; reported rather
    /// than returned as a wrong turn).
    NoSolution,
}

impl core::fmt::Display for HeadlandError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            HeadlandError::BadInput => f.write_str("turn input not finite or out of range"),
            HeadlandError::NotOpposite => f.write_str("pass headings are not opposite"),
            HeadlandError::Capacity => {
                f.write_str("turn needs more segments than the buffer holds")
            }
            HeadlandError::Pass(e) => write!(f, "pass: {e}"),
            HeadlandError::Path(e) => write!(f, "path: {e}"),
            HeadlandError::NoSolution => f.write_str("no turn found for this geometry"),
        }
    }
}

impl core::error::Error for HeadlandError {}

impl From<PathError> for HeadlandError {
    fn from(e: PathError) -> Self {
        match e {
            PathError::CapacityExceeded => HeadlandError::Capacity,
            other => HeadlandError::Path(other),
        }
    }
}

/// A headland turn: a start pose and up to `M` segments. Consecutive
/// segments of opposite [`crate::Direction`] meet at a cusp.
#[derive(Debug, Clone, PartialEq)]
pub struct HeadlandTurn<T, const M: usize> {
    /// Which kind of turn.
    pub kind: TurnKind,
    /// Where it starts (the end of the pass it leaves), metres and radians.
    pub start: Pose<T>,
    /// Its segments in driving order.
    pub segments: Vec<Segment<T>, M>,
    /// Spacing `w` it was built for, metres (left positive).
    pub spacing: T,
}

impl<T: Real, const M: usize> HeadlandTurn<T, M> {
    /// The turn from pose `from` (end of a pass) to pose `to` (start of the
    /// next pass, heading opposite), within `limits`.
    ///
    /// # Errors
    /// [`HeadlandError::BadInput`], [`HeadlandError::NotOpposite`],
    /// [`HeadlandError::Capacity`], [`HeadlandError::NoSolution`].
    pub fn between(
        from: Pose<T>,
        to: Pose<T>,
        limits: &PathLimits<T>,
        policy: TurnPolicy,
    ) -> Result<Self, HeadlandError> {
        if !(from.is_finite() && to.is_finite()) || limits.check().is_err() {
            return Err(HeadlandError::BadInput);
        }
        let f = pose64(from);
        let t = pose64(to);
        if libm::fabs((t.heading - f.heading - core::f64::consts::PI).wrap_angle()) > 1e-6 {
            return Err(HeadlandError::NotOpposite);
        }
        let (s, c) = libm::sincos(f.heading);
        let (dx, dy) = (t.x - f.x, t.y - f.y);
        let e = dx * c + dy * s;
        let w = -dx * s + dy * c;
        let kappa = limits.max_curvature.to_f64();
        let sharp = limits.max_sharpness.map(|v| v.to_f64());
        let plan = plan(e, w, kappa, sharp, policy)?;
        let mut segments = Vec::new();
        for seg in plan.segments.iter() {
            let converted = Segment::clothoid(
                T::from_f64(seg.length()),
                T::from_f64(seg.kappa0()),
                T::from_f64(seg.sigma()),
            )?
            .with_direction(seg.direction());
            segments
                .push(converted)
                .map_err(|_| HeadlandError::Capacity)?;
        }
        let turn = Self {
            kind: plan.kind,
            start: from,
            segments,
            spacing: T::from_f64(w),
        };
        // Check the construction against its target before handing it out.
        let end = turn.end_pose64()?;
        let miss = libm::hypot(end.x - t.x, end.y - t.y);
        // Rounding of the segments to T (f32 on a device) moves the end a little.
        let scale = 1.0 + libm::fabs(w) + libm::fabs(e) + turn.length().to_f64();
        let tol = (1e-6 + 100.0 * T::EPSILON.to_f64()) * scale;
        if miss.is_nan() || miss > tol || libm::fabs((end.heading - t.heading).wrap_angle()) > 1e-6
        {
            return Err(HeadlandError::NoSolution);
        }
        Ok(turn)
    }

    /// The turn at one end of a field from pass `from` to pass `to` of
    /// `passes` over `reference` (see [`FieldEnd`]).
    ///
    /// # Errors
    /// As [`HeadlandTurn::between`], and [`HeadlandError::Pass`] if either
    /// pass cusps at that end.
    pub fn between_passes<const N: usize>(
        reference: &Path<T, N>,
        passes: &Passes<T>,
        from: i32,
        to: i32,
        at: FieldEnd,
        limits: &PathLimits<T>,
        policy: TurnPolicy,
    ) -> Result<Self, HeadlandError> {
        let station = match at {
            FieldEnd::End => reference.length(),
            FieldEnd::Start => T::ZERO,
        };
        let point = |n: i32| {
            passes
                .pass(n)
                .point(reference, station)
                .map(|p| p.pose())
                .map_err(|e| HeadlandError::Pass(pass_error64(e)))
        };
        let (mut a, mut b) = (point(from)?, point(to)?);
        match at {
            FieldEnd::End => b.heading = (b.heading + T::PI).wrap_angle(),
            FieldEnd::Start => a.heading = (a.heading + T::PI).wrap_angle(),
        }
        Self::between(a, b, limits, policy)
    }

    /// Total length driven, metres (forward and reverse).
    pub fn length(&self) -> T {
        let mut l = T::ZERO;
        for s in self.segments.iter() {
            l += s.length();
        }
        l
    }

    /// The turn as a path (cusps where the direction changes).
    ///
    /// # Errors
    /// [`HeadlandError::Capacity`] if `N` is too small.
    pub fn to_path<const N: usize>(&self) -> Result<Path<T, N>, HeadlandError> {
        Ok(self.builder::<N>()?.build()?)
    }

    /// The turn's segments pushed onto a builder started at [`Self::start`]
    /// (to append the next pass, for instance).
    ///
    /// # Errors
    /// [`HeadlandError::Capacity`] if `N` is too small.
    pub fn builder<const N: usize>(&self) -> Result<PathBuilder<T, N>, HeadlandError> {
        let mut b = PathBuilder::<T, N>::new(self.start)?;
        push_all(&mut b, self.segments.iter().copied())?;
        Ok(b)
    }

    /// How far the turn reaches beyond the pass end along the pass
    /// direction (the headland depth it needs), metres (>= 0, finite);
    /// sampled at 32 points per segment.
    ///
    /// # Errors
    /// The fields are public, so a turn may not come from
    /// [`HeadlandTurn::between`]: [`HeadlandError::Path`] if its segments do
    /// not form a path from [`Self::start`] (no segments, a start that is
    /// not finite, an end that would not be finite);
    /// [`HeadlandError::Capacity`] for more than [`MAX_TURN_SEGMENTS`]
    /// segments; [`HeadlandError::BadInput`] if the depth does not fit in
    /// `T` (`f32` beyond its range).
    pub fn depth(&self) -> Result<T, HeadlandError> {
        let path = self.path64()?;
        let s = self.start;
        let (sn, cs) = libm::sincos(s.heading.to_f64());
        let (x0, y0) = (s.x.to_f64(), s.y.to_f64());
        let mut depth = 0.0f64;
        let n = path.len() as u32 * DEPTH_SAMPLES;
        for i in 0..=n {
            let st = path.length() * f64::from(i) / f64::from(n.max(1));
            let p = path.at(st);
            depth = depth.max((p.x - x0) * cs + (p.y - y0) * sn);
        }
        let depth = T::from_f64(depth);
        if depth.is_finite() {
            Ok(depth)
        } else {
            Err(HeadlandError::BadInput)
        }
    }

    fn path64(&self) -> Result<Path<f64, MAX_TURN_SEGMENTS>, HeadlandError> {
        let mut b = PathBuilder::<f64, MAX_TURN_SEGMENTS>::new(pose64(self.start))?;
        push_all(&mut b, segs64(&self.segments)?.into_iter())?;
        Ok(b.build()?)
    }

    fn end_pose64(&self) -> Result<Pose<f64>, HeadlandError> {
        let mut b = PathBuilder::<f64, MAX_TURN_SEGMENTS>::new(pose64(self.start))?;
        push_all(&mut b, segs64(&self.segments)?.into_iter())?;
        let mut e = b.end_pose();
        // Body heading at the end: the last segment is driven forward.
        e.heading = e.heading.wrap_angle();
        Ok(e)
    }
}

/// Pushes segments, with a cusp wherever the direction changes.
fn push_all<T: Real, const N: usize>(
    b: &mut PathBuilder<T, N>,
    segs: impl Iterator<Item = Segment<T>>,
) -> Result<(), PathError> {
    let mut prev = None;
    for s in segs {
        if prev.is_some_and(|d| d != s.direction()) {
            b.try_push_cusp(s)?;
        } else {
            b.try_push(s)?;
        }
        prev = Some(s.direction());
    }
    Ok(())
}

fn pose64<T: Real>(p: Pose<T>) -> Pose<f64> {
    Pose::new(p.x.to_f64(), p.y.to_f64(), p.heading.to_f64())
}

fn seg64<T: Real>(s: &Segment<T>) -> Result<Segment<f64>, PathError> {
    Ok(
        Segment::clothoid(s.length().to_f64(), s.kappa0().to_f64(), s.sigma().to_f64())?
            .with_direction(s.direction()),
    )
}

/// The segments in f64, for checks and sampling.
fn segs64<T: Real, const M: usize>(
    segs: &Vec<Segment<T>, M>,
) -> Result<Vec<Segment<f64>, MAX_TURN_SEGMENTS>, HeadlandError> {
    let mut v = Vec::new();
    for s in segs.iter() {
        v.push(seg64(s)?).map_err(|_| HeadlandError::Capacity)?;
    }
    Ok(v)
}

fn pass_error64<T: Real>(e: PassError<T>) -> PassError<f64> {
    match e {
        PassError::Cusp {
            station,
            segment,
            ratio,
        } => PassError::Cusp {
            station: station.to_f64(),
            segment,
            ratio: ratio.to_f64(),
        },
        PassError::IndexOverflow => PassError::IndexOverflow,
        _ => PassError::BadInput,
    }
}

/// A planned turn in f64.
struct Plan {
    kind: TurnKind,
    segments: Vec<Segment<f64>, MAX_TURN_SEGMENTS>,
}

impl Plan {
    fn new(kind: TurnKind) -> Self {
        Self {
            kind,
            segments: Vec::new(),
        }
    }
    fn push(&mut self, s: Segment<f64>) -> Result<(), HeadlandError> {
        self.segments.push(s).map_err(|_| HeadlandError::Capacity)
    }
    fn shape(&mut self, shape: &TurnShape, mirror: f64) -> Result<(), HeadlandError> {
        for s in shape.segments::<f64>()? {
            let m = Segment::clothoid(s.length(), mirror * s.kappa0(), mirror * s.sigma())?;
            self.push(m)?;
        }
        Ok(())
    }
    fn line(&mut self, length: f64, reverse: bool) -> Result<(), HeadlandError> {
        if length > 1e-9 {
            let l = Segment::line(length)?;
            self.push(if reverse { l.reversed() } else { l })?;
        }
        Ok(())
    }
}

/// Width (lateral displacement) of a 180 degree turn at peak curvature `kappa`.
fn half_turn_width(kappa: f64, sharp: Option<f64>) -> Result<f64, HeadlandError> {
    Ok(TurnShape::new(core::f64::consts::PI, kappa, sharp)?.end().y)
}

/// Lateral displacement of the loop with turn-away angle `alpha`.
fn loop_width(alpha: f64, kappa: f64, sharp: Option<f64>) -> Result<f64, HeadlandError> {
    let away = TurnShape::new(-alpha, kappa, sharp)?;
    let back = TurnShape::new(core::f64::consts::PI + 2.0 * alpha, kappa, sharp)?;
    let mut b = PathBuilder::<f64, 9>::new(Pose::new(0.0, 0.0, 0.0))?;
    for s in away
        .segments::<f64>()?
        .into_iter()
        .chain(back.segments::<f64>()?)
        .chain(away.segments::<f64>()?)
    {
        b.try_push(s)?;
    }
    Ok(b.end_pose().y)
}

/// Bisection for `g(x) = 0` on `[lo, hi]` with `g(lo) > 0 > g(hi)` (or the
/// other way round); bounded by [`BISECTION_STEPS`].
fn bisect(
    mut lo: f64,
    mut hi: f64,
    mut g: impl FnMut(f64) -> Result<f64, HeadlandError>,
) -> Result<f64, HeadlandError> {
    let g_lo = g(lo)?;
    let g_hi = g(hi)?;
    if (g_lo * g_hi).is_nan() || g_lo * g_hi > 0.0 {
        return Err(HeadlandError::NoSolution);
    }
    let rising = g_lo < g_hi;
    for _ in 0..BISECTION_STEPS {
        let mid = 0.5 * (lo + hi);
        let v = g(mid)?;
        if (v < 0.0) == rising {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Ok(0.5 * (lo + hi))
}

/// Plans the turn to `(e, w)` heading back, in the frame of the start.
fn plan(
    e: f64,
    w: f64,
    kappa: f64,
    sharp: Option<f64>,
    policy: TurnPolicy,
) -> Result<Plan, HeadlandError> {
    // Work with the target to the left; mirror the curvatures for the right.
    let mirror = if w < 0.0 { -1.0 } else { 1.0 };
    let width = libm::fabs(w);
    let quarter = TurnShape::new(core::f64::consts::FRAC_PI_2, kappa, sharp)?;
    let two_quarters = 2.0 * quarter.tangent_length();
    let tightest = half_turn_width(kappa, sharp)?;
    // Rounding must not turn an exact fit into a loop.
    let slack = 1e-9 * (1.0 + width);
    let kind = if width >= tightest - slack {
        TurnKind::UTurn
    } else if policy == TurnPolicy::AllowReverse {
        TurnKind::Reversing
    } else {
        TurnKind::Loop
    };
    let mut p = Plan::new(kind);
    // A staggered target ahead: drive up to it first.
    p.line(e, false)?;
    match kind {
        TurnKind::UTurn if width >= two_quarters - slack => {
            p.shape(&quarter, mirror)?;
            p.line(width - two_quarters, false)?;
            p.shape(&quarter, mirror)?;
        }
        TurnKind::UTurn => {
            // One 180 degree turn at the curvature whose width is the spacing;
            // plain arcs of that width have curvature 2/width, a lower bound.
            let k = if width <= tightest {
                kappa
            } else {
                bisect(2.0 / width, kappa, |k| {
                    Ok(half_turn_width(k, sharp)? - width)
                })?
            };
            p.shape(&TurnShape::new(core::f64::consts::PI, k, sharp)?, mirror)?;
        }
        TurnKind::Loop => {
            let alpha = bisect(0.0, core::f64::consts::FRAC_PI_2 - 1e-6, |a| {
                Ok(loop_width(a, kappa, sharp)? - width)
            })?;
            let away = TurnShape::new(-alpha, kappa, sharp)?;
            let back = TurnShape::new(core::f64::consts::PI + 2.0 * alpha, kappa, sharp)?;
            p.shape(&away, mirror)?;
            p.shape(&back, mirror)?;
            p.shape(&away, mirror)?;
        }
        TurnKind::Reversing => {
            p.shape(&quarter, mirror)?;
            p.line(two_quarters - width, true)?;
            p.shape(&quarter, mirror)?;
        }
    }
    // A staggered target behind: drive on to it after the turn.
    p.line(-e, false)?;
    Ok(p)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn limits() -> PathLimits<f64> {
        PathLimits::new(0.2, Some(0.1), 1e-9).unwrap()
    }

    #[test]
    fn kinds_follow_the_spacing() {
        let from = Pose::new(0.0, 0.0, 0.0);
        let pi = core::f64::consts::PI;
        for (w, policy, want) in [
            (20.0, TurnPolicy::ForwardOnly, TurnKind::UTurn),
            (11.0, TurnPolicy::ForwardOnly, TurnKind::UTurn),
            (4.0, TurnPolicy::ForwardOnly, TurnKind::Loop),
            (4.0, TurnPolicy::AllowReverse, TurnKind::Reversing),
            (-6.0, TurnPolicy::ForwardOnly, TurnKind::Loop),
            (-30.0, TurnPolicy::AllowReverse, TurnKind::UTurn),
        ] {
            let to = Pose::new(0.0, w, pi);
            let t = HeadlandTurn::<f64, 12>::between(from, to, &limits(), policy).unwrap();
            assert_eq!(t.kind, want, "w = {w}");
        }
    }

    #[test]
    fn depth_is_finite_or_a_typed_error() {
        let pi = core::f64::consts::PI;
        let half_circle = |start: Pose<f64>| {
            let mut segments = Vec::new();
            segments.push(Segment::arc(5.0 * pi, 0.2).unwrap()).unwrap();
            HeadlandTurn::<f64, 4> {
                kind: TurnKind::UTurn,
                start,
                segments,
                spacing: 10.0,
            }
        };
        // A half circle of radius 5 m reaches 5 m beyond its start along
        // the start heading (elementary geometry; sampled at its apex).
        let t = half_circle(Pose::new(1.0, 2.0, 0.5));
        assert!((t.depth().unwrap() - 5.0).abs() < 1e-12);
        // Hand-built turns that are no path: typed errors, not NaN.
        let t = half_circle(Pose::new(f64::NAN, 0.0, 0.0));
        assert!(matches!(t.depth(), Err(HeadlandError::Path(_))));
        let mut t = half_circle(Pose::new(0.0, 0.0, 0.0));
        t.segments.clear();
        assert_eq!(t.depth(), Err(HeadlandError::Path(PathError::Empty)));
        // A turn from `between` always has one.
        let t = HeadlandTurn::<f64, 12>::between(
            Pose::new(0.0, 0.0, 0.0),
            Pose::new(0.0, 4.0, pi),
            &limits(),
            TurnPolicy::AllowReverse,
        )
        .unwrap();
        assert!(t.depth().unwrap().is_finite());
    }

    #[test]
    fn refuses_non_opposite_headings() {
        let r = HeadlandTurn::<f64, 12>::between(
            Pose::new(0.0, 0.0, 0.0),
            Pose::new(0.0, 10.0, 1.0),
            &limits(),
            TurnPolicy::ForwardOnly,
        );
        assert_eq!(r.err(), Some(HeadlandError::NotOpposite));
        let r = HeadlandTurn::<f64, 2>::between(
            Pose::new(0.0, 0.0, 0.0),
            Pose::new(0.0, 30.0, core::f64::consts::PI),
            &limits(),
            TurnPolicy::ForwardOnly,
        );
        assert_eq!(r.err(), Some(HeadlandError::Capacity));
    }
}
