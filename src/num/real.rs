//! The numeric backend: one small trait over `f32` and `f64`.
//!
//! Every algorithm in the crate is written against [`Real`], so the same code
//! runs on a Cortex-M0 in soft-float `f32`, on an M4F in hardware `f32` and on
//! the host in `f64`. The trait asks only for what a fixed-point type can also
//! give (the four operations, comparison, a square root, `sin_cos`, `atan2`
//! and conversion from `f64` at load time); the Q32.32 backend
//! (`num::fixed`, feature `fixed-point`) implements it.
//!
//! Accuracy: `f64` uses libm (correctly rounded or within 1 ulp for the
//! functions used here); `f32` uses an `f32`-only `sin_cos` (within 2 ulp,
//! see `trig.rs`) and libm's `atan2f`, or micromath's approximations with the
//! `fast-math` feature (about 1e-3 relative; see the README's accuracy table
//! before enabling it).

use core::fmt::{Debug, Display};
use core::ops::{Add, AddAssign, Div, Mul, MulAssign, Neg, Sub, SubAssign};

/// A real-number type the algorithms can run on.
///
/// Implemented for `f32`, `f64` and (feature `fixed-point`) `Q32x32`. Non-finite values are never produced by
/// the crate from finite input; inputs are checked with [`Real::is_finite`]
/// at every public entry point.
pub trait Real:
    Copy
    + Debug
    + Display
    + Default
    + PartialOrd
    + Add<Output = Self>
    + Sub<Output = Self>
    + Mul<Output = Self>
    + Div<Output = Self>
    + Neg<Output = Self>
    + AddAssign
    + SubAssign
    + MulAssign
    + Send
    + Sync
    + 'static
{
    /// 0.
    const ZERO: Self;
    /// 1.
    const ONE: Self;
    /// 2.
    const TWO: Self;
    /// 1/2.
    const HALF: Self;
    /// pi.
    const PI: Self;
    /// The spacing of the type's values near 1 (machine epsilon).
    const EPSILON: Self;
    /// Largest curvature magnitude a segment may have anywhere on it, 1/m.
    /// Together with [`Real::MAX_SHARPNESS`] and the segment length bound
    /// it keeps every intermediate of a segment evaluation (heading
    /// `kappa u`, the clothoid arguments `sigma u^2`, `(kappa0 u)^2`)
    /// finite in this type, with orders of magnitude to spare.
    const MAX_CURVATURE: Self;
    /// Largest sharpness magnitude `|d kappa / d s|` a segment may have, 1/m^2.
    const MAX_SHARPNESS: Self;
    /// Largest coordinate a path's anchors may have in this type, metres;
    /// the tracker accepts positions up to twice it. Chosen so that every
    /// squared distance between a position and a path point stays finite:
    /// `1e7` (the crate's `MAX_COORDINATE`) for `f32` and `f64`, smaller for
    /// a fixed-point type.
    const PLANE: Self;

    /// Converts from `f64`, rounding to the nearest representable value.
    fn from_f64(v: f64) -> Self;
    /// Converts to `f64` exactly (for `f32` and `f64`).
    fn to_f64(self) -> f64;
    /// Converts a small integer exactly.
    fn from_u32(v: u32) -> Self;
    /// Converts a signed integer, rounding to the nearest representable
    /// value (exact below 2^24 in magnitude for `f32`). One hardware
    /// conversion on an `f32` FPU, where going through `f64` would not be.
    #[inline]
    fn from_i32(v: i32) -> Self {
        Self::from_f64(f64::from(v))
    }
    /// Square root; NaN for negative input.
    fn sqrt(self) -> Self;
    /// Absolute value.
    fn abs(self) -> Self;
    /// Sine and cosine of an angle in radians, as `(sin, cos)`.
    fn sin_cos(self) -> (Self, Self);
    /// Four-quadrant arctangent of `self / x`, in radians in `[-pi, pi]`.
    fn atan2(self, x: Self) -> Self;
    /// Largest integer not greater than `self`.
    fn floor(self) -> Self;
    /// `true` unless NaN or infinite.
    fn is_finite(self) -> bool;

    /// The smaller of two values (`self` if they compare equal or either is NaN).
    #[inline]
    fn min(self, other: Self) -> Self {
        if other < self {
            other
        } else {
            self
        }
    }
    /// The larger of two values (`self` if they compare equal or either is NaN).
    #[inline]
    fn max(self, other: Self) -> Self {
        if other > self {
            other
        } else {
            self
        }
    }
    /// Clamps into `[lo, hi]` (`lo <= hi` is the caller's duty). Never panics.
    #[inline]
    fn clamp_to(self, lo: Self, hi: Self) -> Self {
        self.max(lo).min(hi)
    }
    /// Wraps an angle in radians into `(-pi, pi]`.
    ///
    /// Exact for angles already in range; for others one `floor`, so the
    /// cost does not depend on how many turns the input holds. Any finite
    /// input lands in range (huge ones through `sin_cos` and `atan2`); NaN
    /// and infinities give NaN.
    #[inline]
    fn wrap_angle(self) -> Self {
        if self > -Self::PI && self <= Self::PI {
            return self;
        }
        let turn = Self::TWO * Self::PI;
        let k = ((self + Self::PI) / turn).floor();
        let mut r = self - k * turn;
        // Rounding can leave r a hair outside the half-open interval.
        if r <= -Self::PI {
            r += turn;
        } else if r > Self::PI {
            r -= turn;
        }
        if r > -Self::PI && r <= Self::PI {
            return r;
        }
        if !self.is_finite() {
            // NaN in, NaN out (infinity has no angle either: 0 * inf is NaN).
            return self * Self::ZERO;
        }
        // |self| so large that k * turn is off by more than a turn (beyond
        // about 1e15 rad in f64, 1e7 rad in f32): the angle is meaningless at
        // that size, but the result must still be in range.
        let (s, c) = self.sin_cos();
        let w = s.atan2(c);
        if w > -Self::PI && w <= Self::PI {
            w
        } else {
            Self::PI
        }
    }
}

impl Real for f64 {
    const ZERO: Self = 0.0;
    const ONE: Self = 1.0;
    const TWO: Self = 2.0;
    const HALF: Self = 0.5;
    const PI: Self = core::f64::consts::PI;
    const EPSILON: Self = f64::EPSILON;
    /// A radius of 1 micrometre.
    const MAX_CURVATURE: Self = 1.0e6;
    const MAX_SHARPNESS: Self = 1.0e12;
    const PLANE: Self = 1.0e7;

    #[inline]
    fn from_f64(v: f64) -> Self {
        v
    }
    #[inline]
    fn to_f64(self) -> f64 {
        self
    }
    #[inline]
    fn from_u32(v: u32) -> Self {
        v as f64
    }
    #[inline]
    fn sqrt(self) -> Self {
        libm::sqrt(self)
    }
    #[inline]
    fn abs(self) -> Self {
        libm::fabs(self)
    }
    #[inline]
    fn sin_cos(self) -> (Self, Self) {
        libm::sincos(self)
    }
    #[inline]
    fn atan2(self, x: Self) -> Self {
        libm::atan2(self, x)
    }
    #[inline]
    fn floor(self) -> Self {
        libm::floor(self)
    }
    #[inline]
    fn is_finite(self) -> bool {
        f64::is_finite(self)
    }
}

impl Real for f32 {
    const ZERO: Self = 0.0;
    const ONE: Self = 1.0;
    const TWO: Self = 2.0;
    const HALF: Self = 0.5;
    const PI: Self = core::f32::consts::PI;
    const EPSILON: Self = f32::EPSILON;
    /// A radius of 1 millimetre.
    const MAX_CURVATURE: Self = 1.0e3;
    const MAX_SHARPNESS: Self = 1.0e6;
    const PLANE: Self = 1.0e7;

    #[inline]
    fn from_f64(v: f64) -> Self {
        v as f32
    }
    #[inline]
    fn to_f64(self) -> f64 {
        self as f64
    }
    #[inline]
    fn from_u32(v: u32) -> Self {
        v as f32
    }
    #[inline]
    fn from_i32(v: i32) -> Self {
        v as f32
    }
    #[inline]
    fn sqrt(self) -> Self {
        libm::sqrtf(self)
    }
    #[inline]
    fn abs(self) -> Self {
        libm::fabsf(self)
    }
    #[cfg(not(feature = "fast-math"))]
    #[inline]
    fn sin_cos(self) -> (Self, Self) {
        crate::num::trig::sin_cos_f32(self)
    }
    #[cfg(feature = "fast-math")]
    #[inline]
    fn sin_cos(self) -> (Self, Self) {
        use micromath::F32Ext;
        (F32Ext::sin(self), F32Ext::cos(self))
    }
    #[cfg(not(feature = "fast-math"))]
    #[inline]
    fn atan2(self, x: Self) -> Self {
        libm::atan2f(self, x)
    }
    #[cfg(feature = "fast-math")]
    #[inline]
    fn atan2(self, x: Self) -> Self {
        micromath::F32Ext::atan2(self, x)
    }
    #[inline]
    fn floor(self) -> Self {
        libm::floorf(self)
    }
    #[inline]
    fn is_finite(self) -> bool {
        f32::is_finite(self)
    }
}

/// Converts an `f64` constant into `T` (shorthand used throughout the crate).
#[inline]
pub(crate) fn c<T: Real>(v: f64) -> T {
    T::from_f64(v)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wrap_angle_lands_in_half_open_interval() {
        // (value, expected) — exact multiples of pi from the definition of the interval.
        let pi = core::f64::consts::PI;
        let cases = [
            (0.0, 0.0),
            (pi, pi),
            (-pi, pi),
            (3.0 * pi, pi),
            (-3.0 * pi, pi),
            (2.5 * pi, 0.5 * pi),
            (-2.5 * pi, -0.5 * pi),
            (100.0, 100.0 - 32.0 * pi),
        ];
        for (v, want) in cases {
            let got = v.wrap_angle();
            assert!((got - want).abs() < 1e-12, "{v} -> {got}, want {want}");
            assert!(got > -pi && got <= pi);
        }
    }

    #[test]
    fn min_max_clamp() {
        assert_eq!(3.0f32.clamp_to(0.0, 1.0), 1.0);
        assert_eq!((-3.0f64).clamp_to(0.0, 1.0), 0.0);
        assert_eq!(2.0f64.min(1.0), 1.0);
        assert_eq!(2.0f64.max(1.0), 2.0);
    }
}
