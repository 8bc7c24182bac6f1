//! One piece of path whose curvature is linear in arc length.
//!
//! `kappa(u) = kappa0 + sigma u` for `0 <= u <= L`: a line (`kappa0 = sigma = 0`),
//! a circular arc (`sigma = 0`) or a clothoid (`sigma != 0`). The planar Frenet
//! equations `theta' = kappa(u)`, `x' = cos theta`, `y' = sin theta` then have
//! closed-form solutions, evaluated here in the segment's own frame (start at
//! the origin, start heading zero) so that the path can place them at their
//! anchors without error piling up along a long path:
//!
//! * line: `(u, 0)`, no trigonometry;
//! * arc: the chord form `u sinc(kappa u / 2) exp(i kappa u / 2)`, which needs
//!   no division by a small curvature and is exact for any radius;
//! * clothoid: `u J(sigma u^2, kappa0 u)` with the generalised Fresnel integral
//!   `J` of [`crate::path::fresnel`].

use crate::num::complex::Cplx;
use crate::num::real::{c, Real};
use crate::path::anchored::MAX_COORDINATE;
use crate::path::error::PathError;
use crate::path::fresnel::clothoid_integral;
use crate::path::pose::Direction;

/// Longest segment, metres: [`MAX_COORDINATE`], the longest station a
/// path may reach.
pub const MAX_SEGMENT_LENGTH: f64 = MAX_COORDINATE;

/// What shape a segment has.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SegmentKind {
    /// Zero curvature.
    Line,
    /// Constant, non-zero curvature.
    Arc,
    /// Curvature changing linearly with station (non-zero sharpness).
    Clothoid,
}

/// A segment: length, start curvature, sharpness and driving direction.
///
/// Constructed through [`Segment::line`], [`Segment::arc`],
/// [`Segment::clothoid`] or [`Segment::transition`], which check the values,
/// so a `Segment` always has a finite positive length and a curvature and
/// sharpness within the bounds of its backend `T` ([`Real::MAX_CURVATURE`],
/// [`Real::MAX_SHARPNESS`]): every point on it evaluates finite.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Segment<T> {
    length: T,
    kappa0: T,
    sigma: T,
    direction: Direction,
}

/// A displacement and a rotation in a segment's own frame.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct LocalPose<T> {
    /// Displacement from the segment start, start heading along `+re`.
    pub offset: Cplx<T>,
    /// `exp(i delta_theta)`: the heading change as a unit vector.
    pub turn: Cplx<T>,
    /// Curvature at the point, 1/m.
    pub curvature: T,
}

impl<T: Real> Segment<T> {
    /// A general segment: `length` metres, start curvature `kappa0` (1/m,
    /// positive left) and sharpness `sigma` (1/m^2).
    ///
    /// The bounds keep every evaluation finite: the curvature stays within
    /// [`Real::MAX_CURVATURE`] at both ends (so everywhere on the segment,
    /// curvature being linear), the sharpness within [`Real::MAX_SHARPNESS`]
    /// and the length within [`MAX_SEGMENT_LENGTH`]; then no station on the
    /// segment evaluates to a non-finite position, heading or curvature in
    /// `T`.
    ///
    /// # Errors
    /// [`PathError::NonFinite`] if any value is NaN or infinite (or the end
    /// curvature overflows), [`PathError::NonPositiveLength`] if `length <= 0`,
    /// [`PathError::OutOfRange`] if `length > MAX_SEGMENT_LENGTH`,
    /// [`PathError::CurvatureOutOfRange`] if the start or end curvature is
    /// beyond [`Real::MAX_CURVATURE`], [`PathError::SharpnessOutOfRange`] if
    /// the sharpness is beyond [`Real::MAX_SHARPNESS`].
    /// The `index` in the error is 0 (a segment on its own has none).
    pub fn clothoid(length: T, kappa0: T, sigma: T) -> Result<Self, PathError> {
        if !(length.is_finite() && kappa0.is_finite() && sigma.is_finite()) {
            return Err(PathError::NonFinite { index: 0 });
        }
        if length <= T::ZERO {
            return Err(PathError::NonPositiveLength { index: 0 });
        }
        let kappa_end = kappa0 + sigma * length;
        if !kappa_end.is_finite() {
            return Err(PathError::NonFinite { index: 0 });
        }
        if length.to_f64() > MAX_SEGMENT_LENGTH {
            return Err(PathError::OutOfRange);
        }
        if kappa0.abs() > T::MAX_CURVATURE || kappa_end.abs() > T::MAX_CURVATURE {
            return Err(PathError::CurvatureOutOfRange { index: 0 });
        }
        if sigma.abs() > T::MAX_SHARPNESS {
            return Err(PathError::SharpnessOutOfRange { index: 0 });
        }
        Ok(Self {
            length,
            kappa0,
            sigma,
            direction: Direction::Forward,
        })
    }

    /// A straight line of `length` metres.
    ///
    /// # Errors
    /// As [`Segment::clothoid`].
    pub fn line(length: T) -> Result<Self, PathError> {
        Self::clothoid(length, T::ZERO, T::ZERO)
    }

    /// A circular arc of `length` metres and curvature `kappa` (1/m, positive
    /// turning left; radius `1 / |kappa|`).
    ///
    /// # Errors
    /// As [`Segment::clothoid`].
    pub fn arc(length: T, kappa: T) -> Result<Self, PathError> {
        Self::clothoid(length, kappa, T::ZERO)
    }

    /// A clothoid of `length` metres whose curvature goes linearly from
    /// `kappa_start` to `kappa_end` (1/m).
    ///
    /// # Errors
    /// As [`Segment::clothoid`].
    pub fn transition(length: T, kappa_start: T, kappa_end: T) -> Result<Self, PathError> {
        if !(length.is_finite() && kappa_start.is_finite() && kappa_end.is_finite()) {
            return Err(PathError::NonFinite { index: 0 });
        }
        if length <= T::ZERO {
            return Err(PathError::NonPositiveLength { index: 0 });
        }
        Self::clothoid(length, kappa_start, (kappa_end - kappa_start) / length)
    }

    /// A segment read back from a path, whose values were checked when it
    /// was made: its length there is the difference of two stations, which
    /// can round a hair above the original and put an end curvature that
    /// sat on [`Real::MAX_CURVATURE`] a rounding beyond it.
    pub(crate) fn stored(length: T, kappa0: T, sigma: T, direction: Direction) -> Self {
        Self {
            length,
            kappa0,
            sigma,
            direction,
        }
    }

    /// The same segment driven in the given direction.
    #[must_use]
    pub fn with_direction(mut self, direction: Direction) -> Self {
        self.direction = direction;
        self
    }

    /// The same segment driven backwards (towards increasing station, body
    /// pointing against the tangent).
    #[must_use]
    pub fn reversed(self) -> Self {
        self.with_direction(Direction::Reverse)
    }

    /// Length, metres.
    #[inline]
    pub fn length(&self) -> T {
        self.length
    }
    /// Curvature at the start, 1/m.
    #[inline]
    pub fn kappa0(&self) -> T {
        self.kappa0
    }
    /// Sharpness `d kappa / d s`, 1/m^2.
    #[inline]
    pub fn sigma(&self) -> T {
        self.sigma
    }
    /// Curvature at the end, 1/m.
    #[inline]
    pub fn kappa_end(&self) -> T {
        self.kappa0 + self.sigma * self.length
    }
    /// Driving direction.
    #[inline]
    pub fn direction(&self) -> Direction {
        self.direction
    }

    /// Line, arc or clothoid.
    pub fn kind(&self) -> SegmentKind {
        if self.sigma != T::ZERO {
            SegmentKind::Clothoid
        } else if self.kappa0 != T::ZERO {
            SegmentKind::Arc
        } else {
            SegmentKind::Line
        }
    }

    /// Curvature at `u` metres from the segment start (1/m); `u` is clamped
    /// into `[0, length]`.
    #[inline]
    pub fn curvature_at(&self, u: T) -> T {
        self.kappa0 + self.sigma * u.clamp_to(T::ZERO, self.length)
    }

    /// Heading change from the segment start to `u` metres along it, radians
    /// (counter-clockwise positive): `kappa0 u + sigma u^2 / 2`, `u` clamped.
    #[inline]
    pub fn heading_change(&self, u: T) -> T {
        let u = u.clamp_to(T::ZERO, self.length);
        u * (self.kappa0 + T::HALF * self.sigma * u)
    }

    /// The same segment in another precision.
    pub(crate) fn cast<U: Real>(&self) -> Segment<U> {
        Segment {
            length: U::from_f64(self.length.to_f64()),
            kappa0: U::from_f64(self.kappa0.to_f64()),
            sigma: U::from_f64(self.sigma.to_f64()),
            direction: self.direction,
        }
    }

    /// Pose `u` metres along the segment in its own frame (`u` is not clamped:
    /// the formulas continue the curve smoothly, which the projection uses).
    pub(crate) fn local(&self, u: T) -> LocalPose<T> {
        local_pose(self.kappa0, self.sigma, u)
    }
}

/// Pose at `u` along a curve of start curvature `kappa0` and sharpness
/// `sigma`, in the curve's own frame.
pub(crate) fn local_pose<T: Real>(kappa0: T, sigma: T, u: T) -> LocalPose<T> {
    let curvature = kappa0 + sigma * u;
    if sigma == T::ZERO {
        if kappa0 == T::ZERO {
            return LocalPose {
                offset: Cplx::new(u, T::ZERO),
                turn: Cplx::new(T::ONE, T::ZERO),
                curvature,
            };
        }
        // Chord form: |chord| = u sinc(h), direction h, with h = kappa u / 2.
        let h = T::HALF * kappa0 * u;
        let (sh, ch) = h.sin_cos();
        let sinc = if h.abs() < c(1e-4) {
            let h2 = h * h;
            T::ONE - h2 / c(6.0) + h2 * h2 / c(120.0)
        } else {
            sh / h
        };
        let half = Cplx::new(ch, sh);
        return LocalPose {
            offset: half.scale(u * sinc),
            turn: half * half,
            curvature,
        };
    }
    let j = clothoid_integral(sigma * u * u, kappa0 * u);
    let dtheta = u * (kappa0 + T::HALF * sigma * u);
    LocalPose {
        offset: j.scale(u),
        turn: Cplx::expi(dtheta),
        curvature,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn constructors_reject_bad_values() {
        assert_eq!(
            Segment::line(0.0f64),
            Err(PathError::NonPositiveLength { index: 0 })
        );
        assert_eq!(
            Segment::line(-1.0f64),
            Err(PathError::NonPositiveLength { index: 0 })
        );
        assert_eq!(
            Segment::arc(1.0f64, f64::NAN),
            Err(PathError::NonFinite { index: 0 })
        );
        assert_eq!(
            Segment::clothoid(f64::INFINITY, 0.0, 0.0),
            Err(PathError::NonFinite { index: 0 })
        );
        assert_eq!(
            Segment::clothoid(1e300f64, 0.0, 1e300),
            Err(PathError::NonFinite { index: 0 })
        );
        assert_eq!(
            Segment::transition(0.0f32, 0.0, 1.0),
            Err(PathError::NonPositiveLength { index: 0 })
        );
    }

    #[test]
    fn kinds_and_curvature() {
        let s = Segment::transition(10.0f64, 0.0, 0.1).unwrap();
        assert_eq!(s.kind(), SegmentKind::Clothoid);
        assert!((s.sigma() - 0.01).abs() < 1e-15);
        assert!((s.kappa_end() - 0.1).abs() < 1e-15);
        assert!((s.heading_change(10.0) - 0.5).abs() < 1e-15);
        assert_eq!(Segment::arc(1.0f64, 0.5).unwrap().kind(), SegmentKind::Arc);
        assert_eq!(Segment::line(1.0f64).unwrap().kind(), SegmentKind::Line);
    }

    #[test]
    fn arc_matches_circle_geometry() {
        // Circle of radius R through the origin, tangent +x, centre (0, R):
        // p(u) = (R sin(u/R), R (1 - cos(u/R))) (elementary geometry).
        for (r, u) in [(10.0f64, 3.0), (1e6, 250.0), (0.5, 2.0), (-20.0, 15.0)] {
            let lp = local_pose(1.0 / r, 0.0, u);
            // r (1 - cos(u/r)) written as 2 r sin^2(u/2r), free of cancellation.
            let want = (
                r * libm::sin(u / r),
                2.0 * r * libm::sin(u / (2.0 * r)).powi(2),
            );
            assert!((lp.offset.re - want.0).abs() < 1e-12, "R={r}");
            assert!((lp.offset.im - want.1).abs() < 1e-12, "R={r}");
            assert!((lp.turn.re - libm::cos(u / r)).abs() < 1e-15);
            assert!((lp.turn.im - libm::sin(u / r)).abs() < 1e-15);
        }
    }
}
