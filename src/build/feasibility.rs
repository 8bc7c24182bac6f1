//! Is a path drivable? Curvature, sharpness and curvature jumps checked
//! against a vehicle's limits, with the stations where each limit is broken.
//!
//! The limits are plain numbers ([`PathLimits`]), so a planner can check a
//! path without a full vehicle description; [`PathLimits::for_vehicle`]
//! derives them from a [`Vehicle`]:
//!
//! * **curvature**: `|kappa| <= max_curvature` (1/m), the tightest turn the
//!   vehicle can steer (for a front-steered vehicle `tan(delta_max) / L`);
//! * **sharpness**: `|d kappa / d s| <= max_sharpness` (1/m^2). A steering
//!   rate limit `d kappa / d t <= r` (1/m/s) at a planned speed `v` (m/s)
//!   gives `max_sharpness = r / v`, because `d kappa / d s = (d kappa / d t) / v`;
//! * **curvature jumps** at segment joints (G2 breaks): a jump asks for an
//!   infinite steering rate, so only jumps within `max_curvature_jump` (1/m)
//!   pass. Jumps at cusps (where the vehicle stops) are not reported.
//!
//! ```
//! use kappaline::{check_path, PathBuilder, PathLimits, Pose, Segment, ViolationKind};
//! # fn main() -> Result<(), Box<dyn core::error::Error>> {
//! // A line straight into a 5 m radius arc: the curvature jumps by 0.2 1/m.
//! let path = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))?
//!     .push(Segment::line(10.0)?)?
//!     .push(Segment::arc(5.0, 0.2)?)?
//!     .build()?;
//! let limits = PathLimits::new(0.25, Some(0.05), 1e-6)?;
//! let report = check_path::<f64, 4, 8>(&path, &limits);
//! let v = report.violations.first().ok_or("expected a violation")?;
//! assert_eq!(v.kind, ViolationKind::CurvatureJump);
//! assert!((v.station - 10.0).abs() < 1e-12);
//! # Ok(()) }
//! ```
//!
//! Caution: passing this check does not make a path safe to drive; it is
//! not a certified safety function (see the crate documentation).

use heapless::Vec;

use crate::num::real::Real;
use crate::path::anchored::Path;
use crate::path::error::PathError;
use crate::path::pose::Direction;
use crate::steer::vehicle::{Chassis, Vehicle};

/// A vehicle's limits as they bear on a path's shape.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PathLimits<T> {
    /// Largest curvature magnitude the vehicle can steer, 1/m (> 0).
    pub max_curvature: T,
    /// Largest sharpness magnitude `|d kappa / d s|`, 1/m^2 (> 0), or
    /// `None` when curvature may change stepwise (the vehicle stops to steer,
    /// or steering is fast compared with the speed).
    pub max_sharpness: Option<T>,
    /// Largest curvature jump tolerated at a joint, 1/m (>= 0).
    pub max_curvature_jump: T,
}

impl<T: Real> PathLimits<T> {
    /// Limits from their values (1/m, 1/m^2, 1/m).
    ///
    /// # Errors
    /// [`PathError::NonFinite`] (with `index: usize::MAX`) for NaN or
    /// infinite values, [`PathError::OutOfRange`] for a curvature or
    /// sharpness that is not positive or a negative jump tolerance.
    pub fn new(
        max_curvature: T,
        max_sharpness: Option<T>,
        max_curvature_jump: T,
    ) -> Result<Self, PathError> {
        let l = Self {
            max_curvature,
            max_sharpness,
            max_curvature_jump,
        };
        l.check()?;
        Ok(l)
    }

    /// Limits of a front-steered vehicle (kinematic bicycle, curvature at
    /// the rear axle): wheelbase `L` (m), steering angle limit `delta_max`
    /// (rad, in `(0, pi/2)`), steering rate limit `rate` (rad/s, > 0) at the
    /// planned `speed` (m/s, > 0).
    ///
    /// `max_curvature = tan(delta_max) / L`; `max_sharpness = rate / (L v)`,
    /// the value at straight-ahead steering (`d kappa / d delta =
    /// 1 / (L cos^2 delta)` is smallest there, so this is the conservative
    /// bound). The jump tolerance is 1e-6 1/m.
    ///
    /// # Errors
    /// As [`PathLimits::new`].
    pub fn front_steered(
        wheelbase: T,
        max_steer: T,
        max_steer_rate: T,
        speed: T,
    ) -> Result<Self, PathError> {
        let all = [wheelbase, max_steer, max_steer_rate, speed];
        if all.iter().any(|v| !v.is_finite()) {
            return Err(PathError::NonFinite { index: usize::MAX });
        }
        let half_pi = T::HALF * T::PI;
        let positive = wheelbase > T::ZERO && max_steer_rate > T::ZERO && speed > T::ZERO;
        if !(positive && max_steer > T::ZERO && max_steer < half_pi) {
            return Err(PathError::OutOfRange);
        }
        let (s, c) = max_steer.sin_cos();
        Self::new(
            s / (c * wheelbase),
            Some(max_steer_rate / (wheelbase * speed)),
            T::from_f64(1e-6),
        )
    }

    /// The limits of a [`Vehicle`] driving at the planned `speed` (m/s, > 0):
    /// [`PathLimits::front_steered`] for a front-steered vehicle; for a
    /// differential drive its curvature limit and `max_curvature_rate / v`.
    ///
    /// # Errors
    /// As [`PathLimits::new`], and [`PathError::OutOfRange`] for a speed
    /// that is not positive.
    pub fn for_vehicle(vehicle: &Vehicle<T>, speed: T) -> Result<Self, PathError> {
        if !speed.is_finite() {
            return Err(PathError::NonFinite { index: usize::MAX });
        }
        if speed <= T::ZERO {
            return Err(PathError::OutOfRange);
        }
        match vehicle.chassis() {
            Chassis::FrontSteered { wheelbase } => Self::front_steered(
                wheelbase,
                vehicle.max_steer(),
                vehicle.max_steer_rate(),
                speed,
            ),
            Chassis::DifferentialDrive { .. } => Self::new(
                vehicle.max_curvature(),
                Some(vehicle.max_curvature_rate() / speed),
                T::from_f64(1e-6),
            ),
        }
    }

    /// Minimum turning radius, metres: `1 / max_curvature`.
    pub fn min_radius(&self) -> T {
        T::ONE / self.max_curvature
    }

    pub(crate) fn check(&self) -> Result<(), PathError> {
        let sharp_ok = match self.max_sharpness {
            Some(s) if !s.is_finite() => return Err(PathError::NonFinite { index: usize::MAX }),
            Some(s) => s > T::ZERO,
            None => true,
        };
        if !(self.max_curvature.is_finite() && self.max_curvature_jump.is_finite()) {
            return Err(PathError::NonFinite { index: usize::MAX });
        }
        if sharp_ok && self.max_curvature > T::ZERO && self.max_curvature_jump >= T::ZERO {
            Ok(())
        } else {
            Err(PathError::OutOfRange)
        }
    }
}

/// Which limit a stretch of path breaks.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ViolationKind {
    /// `|kappa| > max_curvature` from `station` on.
    Curvature,
    /// `|sigma| > max_sharpness` on the segment starting at `station`.
    Sharpness,
    /// A curvature jump larger than `max_curvature_jump` at `station`.
    CurvatureJump,
}

/// One broken limit.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Violation<T> {
    /// What is broken.
    pub kind: ViolationKind,
    /// Segment index.
    pub segment: usize,
    /// First station where it is broken, metres.
    pub station: T,
    /// The worst value on the segment: |curvature| (1/m), |sharpness|
    /// (1/m^2) or |jump| (1/m).
    pub value: T,
    /// The limit it exceeds, same unit.
    pub limit: T,
}

/// The result of [`check_path`]: the first `M` violations in station order
/// (per segment: jump, then curvature, then sharpness) and a count of all.
#[derive(Debug, Clone, PartialEq)]
pub struct FeasibilityReport<T, const M: usize> {
    /// Violations found, up to `M`.
    pub violations: Vec<Violation<T>, M>,
    /// How many violations there are in all (more than `M` when the list was cut).
    pub total: usize,
    /// Largest |curvature| on the path, 1/m.
    pub peak_curvature: T,
    /// Largest |sharpness| on the path, 1/m^2.
    pub peak_sharpness: T,
}

impl<T, const M: usize> FeasibilityReport<T, M> {
    /// `true` when no limit is broken.
    pub fn is_feasible(&self) -> bool {
        self.total == 0
    }
}

/// Checks every segment of `path` against `limits` (cost: one pass over the
/// segments, O(N)). Curvature and sharpness are compared with a relative
/// allowance of 1e-9 (`value > limit * (1 + 1e-9)` is a violation), so that
/// a turn built at exactly the limit is not flagged for its rounding. The limits are assumed valid (see [`PathLimits::new`]);
/// invalid ones (NaN) make every comparison fail and report nothing.
pub fn check_path<T: Real, const N: usize, const M: usize>(
    path: &Path<T, N>,
    limits: &PathLimits<T>,
) -> FeasibilityReport<T, M> {
    let mut report = FeasibilityReport {
        violations: Vec::new(),
        total: 0,
        peak_curvature: T::ZERO,
        peak_sharpness: T::ZERO,
    };
    let allowance = T::ONE + T::from_f64(1e-9);
    let max_k = limits.max_curvature * allowance;
    let mut prev_dir: Option<Direction> = None;
    for index in 0..path.len() {
        let (Some(seg), Some(start)) = (path.segment(index), path.segment_start(index)) else {
            break;
        };
        let cusp = prev_dir.is_some_and(|d| d != seg.direction());
        prev_dir = Some(seg.direction());
        if let Some(jump) = path.curvature_jump(index) {
            if !cusp && jump.abs() > limits.max_curvature_jump {
                report.note(Violation {
                    kind: ViolationKind::CurvatureJump,
                    segment: index,
                    station: start,
                    value: jump.abs(),
                    limit: limits.max_curvature_jump,
                });
            }
        }
        let k0 = seg.kappa0();
        let k1 = seg.kappa_end();
        let peak = k0.abs().max(k1.abs());
        report.peak_curvature = report.peak_curvature.max(peak);
        report.peak_sharpness = report.peak_sharpness.max(seg.sigma().abs());
        if peak > max_k {
            let u =
                first_excess(k0, seg.sigma(), limits.max_curvature).clamp_to(T::ZERO, seg.length());
            report.note(Violation {
                kind: ViolationKind::Curvature,
                segment: index,
                station: start + u,
                value: peak,
                limit: limits.max_curvature,
            });
        }
        if let Some(max_s) = limits.max_sharpness {
            if seg.sigma().abs() > max_s * allowance {
                report.note(Violation {
                    kind: ViolationKind::Sharpness,
                    segment: index,
                    station: start,
                    value: seg.sigma().abs(),
                    limit: max_s,
                });
            }
        }
    }
    report
}

impl<T: Real, const M: usize> FeasibilityReport<T, M> {
    fn note(&mut self, v: Violation<T>) {
        self.total = self.total.saturating_add(1);
        // A full list keeps the first M: the count still tells how many more.
        let _ = self.violations.push(v);
    }
}

/// Distance from a segment start where `|kappa0 + sigma u|` first exceeds
/// `limit` (0 if it already does at the start).
fn first_excess<T: Real>(kappa0: T, sigma: T, limit: T) -> T {
    if kappa0.abs() > limit || sigma == T::ZERO {
        return T::ZERO;
    }
    // Curvature is linear: it reaches +limit or -limit, whichever it heads for.
    let target = if sigma > T::ZERO { limit } else { -limit };
    (target - kappa0) / sigma
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{PathBuilder, Pose, Segment};

    #[test]
    fn limits_are_checked() {
        assert_eq!(
            PathLimits::new(0.0f64, None, 0.0),
            Err(PathError::OutOfRange)
        );
        assert_eq!(
            PathLimits::new(0.2f64, Some(-1.0), 0.0),
            Err(PathError::OutOfRange)
        );
        assert!(matches!(
            PathLimits::new(f64::NAN, None, 0.0),
            Err(PathError::NonFinite { .. })
        ));
        // Kinematic bicycle: L = 2.5 m, delta = 14.036 deg gives R = 10 m
        // (kinematic bicycle delta = atan(L kappa): Rajamani, "Vehicle Dynamics and Control", 2nd ed., Springer 2012, sec. 2.2 (from memory)).
        let l = PathLimits::front_steered(2.5f64, libm::atan(0.25), 0.5, 2.0).unwrap();
        assert!((l.min_radius() - 10.0).abs() < 1e-12);
        assert!((l.max_sharpness.unwrap() - 0.1).abs() < 1e-15);
    }

    #[test]
    fn finds_stations_of_each_kind() {
        // Clothoid from 0 to 0.3 1/m over 6 m: sharpness 0.05, passes 0.2 at u = 4.
        let path = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap()
            .push(Segment::line(10.0).unwrap())
            .unwrap()
            .push(Segment::transition(6.0, 0.0, 0.3).unwrap())
            .unwrap()
            .push(Segment::arc(2.0, 0.1).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let limits = PathLimits::new(0.2, Some(0.04), 1e-9).unwrap();
        let r = check_path::<f64, 4, 8>(&path, &limits);
        assert_eq!(r.total, 3);
        let kinds: [ViolationKind; 3] = [
            ViolationKind::Curvature,
            ViolationKind::Sharpness,
            ViolationKind::CurvatureJump,
        ];
        for (v, k) in r.violations.iter().zip(kinds) {
            assert_eq!(v.kind, k);
        }
        assert!((r.violations[0].station - 14.0).abs() < 1e-12);
        assert!((r.violations[1].station - 10.0).abs() < 1e-12);
        assert!((r.violations[2].station - 16.0).abs() < 1e-12);
        assert!((r.violations[2].value - 0.2).abs() < 1e-12);
        assert!(!r.is_feasible());
        // The list is cut at M, the count is not.
        let short = check_path::<f64, 4, 1>(&path, &limits);
        assert_eq!((short.violations.len(), short.total), (1, 3));
    }

    #[test]
    fn limits_from_a_vehicle() {
        // Same bicycle as above: R = 10 m, sharpness rate / (L v) = 0.5 / 5.
        let v = Vehicle::front_steered(2.5f64, libm::atan(0.25), 0.5).unwrap();
        let l = PathLimits::for_vehicle(&v, 2.0).unwrap();
        assert!((l.min_radius() - 10.0).abs() < 1e-12);
        assert!((l.max_sharpness.unwrap() - 0.1).abs() < 1e-15);
        assert_eq!(PathLimits::for_vehicle(&v, 0.0), Err(PathError::OutOfRange));
        assert!(PathLimits::for_vehicle(&v, f64::NAN).is_err());
        // Differential drive: its own curvature and curvature-rate limits.
        let d = Vehicle::differential(0.5f64, 2.0, 4.0).unwrap();
        let l = PathLimits::for_vehicle(&d, 1.0).unwrap();
        assert!((l.max_curvature - 2.0).abs() < 1e-15);
        assert!((l.max_sharpness.unwrap() - 4.0).abs() < 1e-15);
    }
}
