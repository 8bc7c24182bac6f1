//! A minimal complex number, private to the crate.
//!
//! The Fresnel integrals and the clothoid's generalised Fresnel integrals are
//! most naturally written in complex form (`exp(i phi)` is a unit heading
//! vector), and a rotation of a heading by an angle is a complex product.

use crate::num::real::Real;
use core::ops::{Add, Mul, Sub};

/// `re + i im`.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub(crate) struct Cplx<T> {
    pub re: T,
    pub im: T,
}

impl<T: Real> Cplx<T> {
    #[inline]
    pub const fn new(re: T, im: T) -> Self {
        Self { re, im }
    }

    /// `exp(i angle)`, the unit vector at `angle` radians.
    #[inline]
    pub fn expi(angle: T) -> Self {
        let (s, c) = angle.sin_cos();
        Self::new(c, s)
    }

    #[inline]
    pub fn conj(self) -> Self {
        Self::new(self.re, -self.im)
    }

    #[inline]
    pub fn scale(self, k: T) -> Self {
        Self::new(self.re * k, self.im * k)
    }

    /// `|re| + |im|`, a cheap magnitude for convergence tests.
    #[inline]
    pub fn l1(self) -> T {
        self.re.abs() + self.im.abs()
    }

    /// `1 / z`; the caller keeps `z` away from zero.
    #[inline]
    pub fn recip(self) -> Self {
        let d = self.re * self.re + self.im * self.im;
        Self::new(self.re / d, -self.im / d)
    }
}

impl<T: Real> Add for Cplx<T> {
    type Output = Self;
    #[inline]
    fn add(self, o: Self) -> Self {
        Self::new(self.re + o.re, self.im + o.im)
    }
}

impl<T: Real> Sub for Cplx<T> {
    type Output = Self;
    #[inline]
    fn sub(self, o: Self) -> Self {
        Self::new(self.re - o.re, self.im - o.im)
    }
}

impl<T: Real> Mul for Cplx<T> {
    type Output = Self;
    #[inline]
    fn mul(self, o: Self) -> Self {
        Self::new(
            self.re * o.re - self.im * o.im,
            self.re * o.im + self.im * o.re,
        )
    }
}
