//! The foot point carried from cycle to cycle, stepped along the path with a
//! local series of the Frenet equations.
//!
//! # The series
//!
//! On a segment, `theta' = kappa(u)`, `kappa(u) = kappa0 + sigma u`, and the
//! unit tangent `E = exp(i theta)` (a complex number) obeys
//! `E' = i kappa E`. Around a **base** point at `u0` with curvature `k` and
//! sharpness `sigma`, write the tangent relative to the base's
//! `E(h) = sum_n e_n h^n`; then `e_0 = 1`, `e_1 = i k` and
//!
//! `(n + 1) e_(n+1) = i (k e_n + sigma e_(n-1))`,
//!
//! and the displacement from the base is `P(h) = int_0^h E = sum_n e_n
//! h^(n+1) / (n + 1)`. Both are polynomials in `h` whose coefficients are
//! computed once per base (only `P`'s are kept: `E = P'`); a point near the
//! base then costs one Horner evaluation with its derivative and a rotation
//! into the plane, with no trigonometry.
//!
//! # Bases, re-anchoring and the error bound
//!
//! A base is always evaluated exactly: at a segment's anchor (stored in the
//! path: no evaluation at all) or by the closed form of
//! `crate::path::segment` from that anchor. A point is stepped only from a
//! base on its own segment and within the base's **reach**: at most
//! [`MAX_REACH`] metres away ([`CLOTHOID_REACH`] on a clothoid; on a line
//! the whole segment, where the series is exact) and no farther than where the tangent has turned by
//! [`MAX_TURN`] radians. Outside the reach, and whenever the point lies on
//! another segment (a joint is crossed), a new base is made there. So no
//! point is the sum of earlier steps, and the error does not depend on the
//! history: however many cycles run, each point is one series step from an
//! exact evaluation.
//!
//! The coefficients are bounded by those of the majorant
//! `exp(|k| h + |sigma| h^2 / 2)` (each `|e_n| <= m_n` with
//! `(n + 1) m_(n+1) = |k| m_n + |sigma| m_(n-1)`); the series is cut where
//! two consecutive `m_n r^n` (with `r` the reach) fall below the type's
//! tolerance together ([`series_tolerance`]: `1e-8` relative in `f32`,
//! `1e-16` in `f64`). With `|k| r <= 1/2` and `|sigma| r^2 <= 1` (the turn
//! limit) each later term is at most `(m_n + m_(n+1)) / (n + 2)`, so the
//! truncation error of the tangent is below twice the tolerance and the
//! position error below `r` times that:
//! at most `2e-8 * 8 m = 1.6e-7 m` in `f32`, the `f32` rounding of a
//! coordinate near 2 m. Where the turn comes from the sharpness the series
//! has twice the degree for the same turn; if [`MAX_TERMS`] coefficients do
//! not reach the tolerance the reach is halved until they do.
//!
//! Rounding: the point is the base (exact to the type's rounding) plus a
//! displacement of at most `MAX_REACH` formed in a few operations, so its
//! error is that of the closed form plus a few ulps of `MAX_REACH`.
//!
//! # For a fixed-point backend
//! The stepper asks of `T` only the four operations, comparison, `abs` and
//! `from_u32`; bases use the closed form (`sin_cos` on arcs, the Fresnel
//! kernel on clothoids), and the tolerances come from `T::EPSILON`.

use crate::num::complex::Cplx;
use crate::num::real::{c, Real};
use crate::path::anchored::Path;
use crate::path::pose::PathPoint;
use crate::path::segment::local_pose;

/// Farthest a point is stepped from its base, metres.
pub const MAX_REACH: f64 = 8.0;
/// Farthest a point is stepped from its base on a clothoid, metres.
pub const CLOTHOID_REACH: f64 = 2.0;
/// Largest turn of the tangent between a base and a point stepped from it,
/// radians.
pub const MAX_TURN: f64 = 0.5;
/// Most series coefficients a base holds; where more would be needed the
/// reach is halved (at most `REACH_HALVINGS` times).
pub const MAX_TERMS: usize = 12;
/// How often a base's reach may be halved to fit the series in `MAX_TERMS`.
const REACH_HALVINGS: usize = 6;

/// Relative truncation tolerance of the series in `T`.
#[inline]
pub(crate) fn series_tolerance<T: Real>() -> T {
    if T::EPSILON > c(1e-10) {
        c(1e-8)
    } else {
        c(1e-16)
    }
}

/// An exactly evaluated point of a segment and the series around it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Base<T> {
    /// The segment the base lies on.
    pub segment: usize,
    /// Offset of the base into its segment, metres.
    pub u0: T,
    /// Offsets into the segment the series may be used for, metres.
    lo: T,
    hi: T,
    x: T,
    y: T,
    cos: T,
    sin: T,
    kappa: T,
    sigma: T,
    /// Heading of the base tangent, radians (one `atan2` per base), so a
    /// stepped point's heading is `theta + k h + sigma h^2 / 2`.
    theta: T,
    /// Coefficients in use, at least 1.
    terms: usize,
    /// Displacement coefficients `p_n = e_n / (n + 1)`: `P(h) = h R(h)`
    /// with `R = sum_n p_n h^n`, and the tangent is `E = P' = R + h R'`.
    p: [Cplx<T>; MAX_TERMS],
    /// `false` until made (a default base covers nothing).
    valid: bool,
}

impl<T: Real> Default for Base<T> {
    fn default() -> Self {
        let zero = Cplx::new(T::ZERO, T::ZERO);
        Self {
            segment: 0,
            u0: T::ZERO,
            lo: T::ZERO,
            hi: T::ZERO,
            x: T::ZERO,
            y: T::ZERO,
            cos: T::ONE,
            sin: T::ZERO,
            kappa: T::ZERO,
            sigma: T::ZERO,
            theta: T::ZERO,
            terms: 1,
            p: [zero; MAX_TERMS],
            valid: false,
        }
    }
}

impl<T: Real> Base<T> {
    /// `true` if `u` metres into `segment` can be stepped to from here.
    #[inline]
    pub fn covers(&self, segment: usize, u: T) -> bool {
        self.valid && segment == self.segment && u >= self.lo && u <= self.hi
    }

    /// A base `u` metres into segment `index` (`0 <= u <= length`), by the
    /// closed form from the segment's anchor (the anchor itself when
    /// `u == 0`: no evaluation).
    pub fn make<const N: usize>(path: &Path<T, N>, index: usize, u: T) -> Self {
        let pl = *path.placed_at(index);
        let len = path.segment_length(index);
        let (x, y, cos, sin) = if u == T::ZERO {
            (pl.x, pl.y, pl.cos, pl.sin)
        } else {
            let lp = local_pose(pl.kappa0, pl.sigma, u);
            let start = Cplx::new(pl.cos, pl.sin);
            let d = lp.offset * start;
            let t = lp.turn * start;
            (pl.x + d.re, pl.y + d.im, t.re, t.im)
        };
        let kappa = pl.kappa0 + pl.sigma * u;
        let mut b = Self {
            segment: index.min(path.len().saturating_sub(1)),
            u0: u,
            x,
            y,
            cos,
            sin,
            kappa,
            sigma: pl.sigma,
            theta: sin.atan2(cos),
            ..Self::default()
        };
        // Where the sharpness dominates, the series has twice the degree for
        // the same turn: shorten the reach until MAX_TERMS hold it.
        let mut reach = reach_of(kappa, pl.sigma);
        for _ in 0..REACH_HALVINGS {
            if b.fill(reach) {
                break;
            }
            reach *= T::HALF;
        }
        b.lo = (u - reach).max(T::ZERO);
        b.hi = (u + reach).min(len);
        b.valid = true;
        b
    }

    /// The coefficients up to where the majorant's terms at `reach` fall
    /// below the tolerance (see the module docs); `false` if `MAX_TERMS`
    /// are not enough for that.
    fn fill(&mut self, reach: T) -> bool {
        if self.sigma == T::ZERO {
            return self.fill_arc(reach);
        }
        let one = Cplx::new(T::ONE, T::ZERO);
        let zero = Cplx::new(T::ZERO, T::ZERO);
        let (k, s) = (self.kappa, self.sigma);
        let (ka, sa) = (k.abs(), s.abs());
        let tol = series_tolerance::<T>();
        let mut e_prev = zero;
        let mut e = one;
        // Majorant terms m_n r^n, carried as (m_(n-1) r^(n-1), m_n r^n).
        let (mut m_prev, mut m) = (T::ZERO, T::ONE);
        let mut terms = 0;
        for n in 0..MAX_TERMS {
            let r = T::ONE / T::from_u32(n as u32 + 1);
            if let Some(pn) = self.p.get_mut(n) {
                *pn = e.scale(r);
            }
            terms = n + 1;
            // e_(n+1) = i (k e_n + sigma e_(n-1)) / (n + 1).
            let w = (e.scale(k) + e_prev.scale(s)).scale(r);
            e_prev = e;
            e = Cplx::new(-w.im, w.re);
            let m_next = (ka * reach * m + sa * reach * reach * m_prev) * r;
            m_prev = m;
            m = m_next;
            // Two terms: the recurrence has two steps, so one majorant term
            // can vanish (`k = 0`) while the next does not.
            if m + m_prev <= tol {
                self.terms = terms;
                return true;
            }
        }
        self.terms = terms;
        false
    }

    /// On a line or an arc (`sigma = 0`) the series are those of `cos` and
    /// `sin` in `theta = k h`: `E = (1 - z B, theta A)` and `P = h (A, theta B)`
    /// with `z = theta^2`, `A = sum_j (-z)^j / (2j + 1)!` and
    /// `B = sum_j (-z)^j / (2j + 2)!`, real polynomials in `z` kept as
    /// `p_j = (a_j, b_j)`, cut where `|k| r`'s term falls below the
    /// tolerance. On a line `theta = 0`: one term, exact.
    fn fill_arc(&mut self, reach: T) -> bool {
        let tol = series_tolerance::<T>();
        let t2 = {
            let t = self.kappa.abs() * reach;
            t * t
        };
        let (mut a, mut b) = (T::ONE, T::HALF);
        // |theta|^(2j) / (2j + 1)! at the reach.
        let mut w = T::ONE;
        for j in 0..MAX_TERMS {
            if let Some(pj) = self.p.get_mut(j) {
                *pj = Cplx::new(a, b);
            }
            let n = T::from_u32(2 * j as u32);
            // a_(j+1) = -a_j / ((2j + 2)(2j + 3)), b_(j+1) = -b_j / ((2j + 3)(2j + 4)).
            let r = T::ONE / ((n + c(2.0)) * (n + c(3.0)));
            let r2 = T::ONE / ((n + c(3.0)) * (n + c(4.0)));
            a = -a * r;
            b = -b * r2;
            w = w * t2 * r;
            if w <= tol {
                self.terms = j + 1;
                return true;
            }
        }
        self.terms = MAX_TERMS;
        false
    }

    /// The coefficients in use.
    #[inline]
    fn used(&self) -> &[Cplx<T>] {
        let n = self.terms.min(MAX_TERMS);
        self.p.get(..n).unwrap_or(&self.p)
    }

    /// Tangent and displacement `h` metres from the base, in the base's frame.
    #[inline]
    fn series(&self, h: T) -> (Cplx<T>, Cplx<T>) {
        if self.sigma == T::ZERO {
            return self.series_arc(h);
        }
        // Horner for R and its derivative together. (A sub-slice iterated
        // backwards: `iter().take(n).rev()` cost about 40 instructions of
        // iterator bookkeeping per call on an M4F.)
        let mut r = Cplx::new(T::ZERO, T::ZERO);
        let mut d = r;
        for pn in self.used().iter().rev() {
            d = Cplx::new(d.re * h + r.re, d.im * h + r.im);
            r = Cplx::new(r.re * h + pn.re, r.im * h + pn.im);
        }
        let e = Cplx::new(r.re + h * d.re, r.im + h * d.im);
        (e, r.scale(h))
    }

    /// [`Base::series`] on a line or an arc (see [`Base::fill_arc`]).
    #[inline]
    fn series_arc(&self, h: T) -> (Cplx<T>, Cplx<T>) {
        let theta = self.kappa * h;
        let z = theta * theta;
        let (mut a, mut b) = (T::ZERO, T::ZERO);
        for pj in self.used().iter().rev() {
            a = a * z + pj.re;
            b = b * z + pj.im;
        }
        let e = Cplx::new(T::ONE - z * b, theta * a);
        (e, Cplx::new(h * a, h * theta * b))
    }

    /// The path heading `u` metres into the base's segment (the caller
    /// checks [`Base::covers`]), radians, not wrapped: no trigonometry.
    #[inline]
    pub fn heading(&self, u: T) -> T {
        let h = u - self.u0;
        self.theta + h * (self.kappa + T::HALF * self.sigma * h)
    }

    /// The path point `u` metres into the base's segment (the caller checks
    /// [`Base::covers`]); `station` is the segment's start station.
    pub fn point(&self, u: T, station: T, direction: crate::path::pose::Direction) -> PathPoint<T> {
        let h = u - self.u0;
        let (e, p) = self.series(h);
        let t = Cplx::new(self.cos, self.sin);
        let d = p * t;
        let tan = e * t;
        PathPoint {
            station: station + u,
            x: self.x + d.re,
            y: self.y + d.im,
            cos: tan.re,
            sin: tan.im,
            curvature: self.kappa + self.sigma * h,
            sharpness: self.sigma,
            segment: self.segment,
            direction,
        }
    }
}

/// How far a base of curvature `kappa` and sharpness `sigma` reaches:
/// `MAX_REACH`, less where the turn over it would exceed `MAX_TURN`;
/// unbounded on a line (the series is exact there).
fn reach_of<T: Real>(kappa: T, sigma: T) -> T {
    if kappa == T::ZERO && sigma == T::ZERO {
        return c(MAX_REACH * 1e12);
    }
    // A clothoid's series is complex and twice the degree for a turn from
    // the sharpness: a shorter reach keeps it to a few terms.
    let max: T = if sigma == T::ZERO {
        c(MAX_REACH)
    } else {
        c(CLOTHOID_REACH)
    };
    // |theta(h)| <= |kappa| h + |sigma| h^2 / 2 <= (|kappa| + |sigma| MAX_REACH / 2) h.
    let rate = kappa.abs() + sigma.abs() * max * T::HALF;
    let turn: T = c(MAX_TURN);
    if rate * max <= turn {
        max
    } else {
        turn / rate
    }
}

/// Three bases (around the foot, the lookahead and other points) and the
/// stepping between them: the path point at any offset near either is a
/// series step; elsewhere one of them is re-anchored there.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Stepper<T> {
    near: Base<T>,
    far: Base<T>,
    /// For other points near the foot (the guidance's reference point and
    /// preview), so that they do not move the foot's base away.
    spare: Base<T>,
}

impl<T: Real> Default for Stepper<T> {
    fn default() -> Self {
        Self {
            near: Base::default(),
            far: Base::default(),
            spare: Base::default(),
        }
    }
}

impl<T: Real> Stepper<T> {
    /// The point `u` metres into segment `seg` (`0 <= u <= length`) by a
    /// series step from the base near the foot (re-anchored there if it
    /// does not cover it).
    pub fn near_point<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        seg: usize,
        u: T,
    ) -> PathPoint<T> {
        Self::via(&mut self.near, [&self.far, &self.spare], path, seg, u)
    }

    /// As [`Stepper::near_point`] for points away from the foot (the
    /// lookahead): re-anchors the far base, never the near one.
    pub fn far_point<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        seg: usize,
        u: T,
    ) -> PathPoint<T> {
        Self::via(&mut self.far, [&self.near, &self.spare], path, seg, u)
    }

    /// The path heading `u` metres into segment `seg` (radians, not
    /// wrapped) if a base covers it, without trigonometry.
    pub fn heading(&self, seg: usize, u: T) -> Option<T> {
        // The near base first: it covers the foot on almost every call.
        if self.near.covers(seg, u) {
            Some(self.near.heading(u))
        } else if self.far.covers(seg, u) {
            Some(self.far.heading(u))
        } else if self.spare.covers(seg, u) {
            Some(self.spare.heading(u))
        } else {
            None
        }
    }

    /// As [`Stepper::near_point`] for other points near the foot:
    /// re-anchors the spare base only.
    pub fn other_point<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        seg: usize,
        u: T,
    ) -> PathPoint<T> {
        Self::via(&mut self.spare, [&self.near, &self.far], path, seg, u)
    }

    fn via<const N: usize>(
        mine: &mut Base<T>,
        others: [&Base<T>; 2],
        path: &Path<T, N>,
        seg: usize,
        u: T,
    ) -> PathPoint<T> {
        let pl = path.placed_at(seg);
        let (station, direction) = (pl.station, pl.direction);
        if mine.covers(seg, u) {
            return mine.point(u, station, direction);
        }
        for other in others {
            if other.covers(seg, u) {
                return other.point(u, station, direction);
            }
        }
        // Re-anchor: at the segment's anchor if it reaches (no evaluation),
        // else here.
        if u <= reach_of(pl.kappa0, pl.sigma) {
            *mine = Base::make(path, seg, T::ZERO);
        }
        if !mine.covers(seg, u) {
            *mine = Base::make(path, seg, u);
        }
        mine.point(u, station, direction)
    }
}

#[cfg(feature = "defmt")]
impl<T> defmt::Format for Stepper<T> {
    fn format(&self, f: defmt::Formatter<'_>) {
        // A cache of exact evaluations: nothing a log needs.
        defmt::write!(f, "Stepper")
    }
}

#[cfg(test)]
mod tests {
    extern crate std;
    use super::*;
    use crate::path::anchored::PathBuilder;
    use crate::path::pose::Pose;
    use crate::path::segment::Segment;

    /// The stepped point agrees with the closed form (`Path::eval_in`).
    fn agree<const N: usize>(path: &Path<f64, N>, tol: f64) {
        let mut st = Stepper::default();
        let mut worst = 0.0f64;
        for i in 0..path.len() {
            let len = path.segment_length(i);
            let n = 400;
            for k in 0..=n {
                let u = len * k as f64 / n as f64;
                let a = st.near_point(path, i, u);
                let b = path.eval_in(i, u);
                let e = (a.x - b.x).abs().max((a.y - b.y).abs());
                let t = (a.cos - b.cos).abs().max((a.sin - b.sin).abs());
                worst = worst.max(e).max(t);
                assert!(e < tol && t < tol, "seg {i} u {u}: {e:e} {t:e}");
                assert!((a.curvature - b.curvature).abs() < 1e-15);
                // The point says where it is: its segment, station and
                // driving direction are those of the closed form's.
                assert_eq!(
                    (a.segment, a.direction),
                    (b.segment, b.direction),
                    "seg {i}"
                );
                assert!((a.station - b.station).abs() < 1e-12, "seg {i} u {u}");
                // And the base that served it lies on that segment.
                assert!(st.near.covers(i, u), "seg {i} u {u}");
            }
        }
        std::println!("worst stepped vs closed form: {worst:e}");
    }

    #[test]
    fn stepped_points_match_the_closed_form_in_f64() {
        // The closed form of crate::path::segment is the reference here; it
        // is itself checked against mpmath in tests/core_clothoid.rs.
        let path = PathBuilder::<f64, 8>::new(Pose::new(3.0, -2.0, 0.7))
            .unwrap()
            .push(Segment::line(30.0).unwrap())
            .unwrap()
            .push(Segment::transition(12.0, 0.0, 0.8).unwrap())
            .unwrap()
            .push(Segment::arc(9.0, 0.8).unwrap())
            .unwrap()
            .push(Segment::transition(40.0, 0.8, -0.3).unwrap())
            .unwrap()
            .push(Segment::arc(100.0, 1e-7).unwrap())
            .unwrap()
            .build()
            .unwrap();
        // The closed form itself is good to about 1e-12 on a 40 m clothoid
        // (README accuracy table: 1.2e-12 m against quadrature).
        agree(&path, 5e-12);
    }

    #[test]
    fn terms_stay_within_capacity() {
        let path = PathBuilder::<f64, 2>::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap()
            .push(Segment::transition(50.0, 5.0, -5.0).unwrap())
            .unwrap()
            .build()
            .unwrap();
        // Sharpness only at u = 25 (kappa = 0): the reach shrinks to fit.
        let b = Base::make(&path, 0, 25.0);
        assert!(b.terms <= MAX_TERMS, "{}", b.terms);
        assert!(b.hi > b.u0 && b.hi - b.u0 > 0.1, "{}", b.hi - b.u0);
        let bf = Base::<f32>::make(
            &PathBuilder::<f32, 2>::new(Pose::new(0.0, 0.0, 0.0))
                .unwrap()
                .push(Segment::transition(50.0, 5.0, -5.0).unwrap())
                .unwrap()
                .build()
                .unwrap(),
            0,
            25.0,
        );
        assert!(bf.terms <= MAX_TERMS, "{}", bf.terms);
        assert!(bf.hi - bf.u0 > 0.3, "{}", bf.hi - bf.u0);
    }

    /// A one-segment path of `seg`.
    fn single(seg: Segment<f64>) -> Path<f64, 2> {
        PathBuilder::<f64, 2>::new(Pose::new(1.0, 2.0, 0.3))
            .unwrap()
            .push(seg)
            .unwrap()
            .build()
            .unwrap()
    }

    #[test]
    fn reach_is_the_documented_one() {
        // Module docs: a point is stepped "at most MAX_REACH metres away
        // (CLOTHOID_REACH on a clothoid) ... and no farther than where the
        // tangent has turned by MAX_TURN radians", the turn bounded by
        // (|kappa| + |sigma| reach / 2) h on a clothoid. So on an arc the
        // reach is min(8, 0.5 / |kappa|); on a clothoid min(2, 0.5 / (|kappa|
        // + |sigma|)); on a line the whole segment.
        // A clothoid's reach may be shorter still: "if MAX_TERMS
        // coefficients do not reach the tolerance the reach is halved until
        // they do" (there the bound is an upper one).
        let cases: [(Segment<f64>, f64, f64); 6] = [
            (Segment::line(100.0).unwrap(), 50.0, 100.0),
            (Segment::arc(100.0, 0.05).unwrap(), 50.0, 8.0),
            (Segment::arc(100.0, -0.0625).unwrap(), 50.0, 8.0),
            (Segment::arc(100.0, 0.25).unwrap(), 50.0, 2.0),
            // kappa 0.0625 at u = 50 (0.0 + 0.00125 * 50), sigma 0.00125.
            (Segment::transition(100.0, 0.0, 0.125).unwrap(), 50.0, 2.0),
            // kappa 0.5 at u = 50: 0.5 / (0.5 + 0.005) < 2.
            (
                Segment::transition(100.0, 0.0, 1.0).unwrap(),
                50.0,
                0.5 / (0.5 + 0.01),
            ),
        ];
        for (seg, u, reach) in cases {
            let path = single(seg);
            let b = Base::make(&path, 0, u);
            let len = path.segment_length(0);
            let clothoid = seg.sigma() != 0.0;
            let reach = if clothoid {
                (b.hi - u).min(reach)
            } else {
                reach
            };
            assert!(reach > 0.0 && b.terms <= MAX_TERMS);
            let (lo, hi) = ((u - reach).max(0.0), (u + reach).min(len));
            assert!(
                (b.lo - lo).abs() < 1e-12 && (b.hi - hi).abs() < 1e-12,
                "{seg:?}: [{}, {}] vs [{lo}, {hi}]",
                b.lo,
                b.hi
            );
            // Within the reach, and at its edges: this base; beyond: not.
            assert!(b.covers(0, lo) && b.covers(0, hi) && b.covers(0, u));
            assert!(!b.covers(1, u), "another segment");
            if hi < len {
                assert!(!b.covers(0, hi + 1e-9));
            }
            if lo > 0.0 {
                assert!(!b.covers(0, lo - 1e-9));
            }
            // The turn over the reach stays within MAX_TURN (0.5 rad).
            let turn = |h: f64| (b.heading(u + h) - b.heading(u)).abs();
            assert!(turn(hi - u) <= MAX_TURN + 1e-12 && turn(lo - u) <= MAX_TURN + 1e-12);
        }
        assert!(
            !Base::<f64>::default().covers(0, 0.0),
            "a default base covers nothing"
        );
    }

    #[test]
    fn points_within_a_base_are_stepped_beyond_it_re_anchored() {
        // An arc of curvature 0.1 (reach 5 m): the near base made at the
        // anchor serves every point up to 5 m; at 5 m + 1 nm a new base is
        // made there (u0 = the point), not at the anchor.
        let path = single(Segment::arc(40.0, 0.1).unwrap());
        let mut st = Stepper::default();
        for u in [0.0, 1.0, 4.0, 5.0] {
            st.near_point(&path, 0, u);
            assert_eq!((st.near.u0, st.near.valid), (0.0, true), "{u}");
        }
        let u = 5.0 + 1e-9;
        st.near_point(&path, 0, u);
        assert_eq!(st.near.u0, u);
        // The far base serves the lookahead and leaves the near one; the
        // near one is reused for a far point it covers.
        let near = st.near;
        st.far_point(&path, 0, 30.0);
        assert_eq!((st.near, st.far.u0), (near, 30.0));
        st.far_point(&path, 0, 6.0);
        assert_eq!(st.far.u0, 30.0, "served by the near base");
        st.other_point(&path, 0, 20.0);
        assert_eq!((st.near, st.far.u0, st.spare.u0), (near, 30.0, 20.0));
        // The heading where a base covers, none elsewhere.
        assert!(st.heading(0, 12.0).is_none());
        // Not wrapped from the base's heading (which atan2 gives in
        // (-pi, pi]): equal to 0.3 + 0.1 u up to whole turns.
        let h = st.heading(0, 31.0).unwrap();
        let want = 0.3 + 0.1 * 31.0;
        let turns = ((h - want) / core::f64::consts::TAU).round();
        assert!(
            (h - want - turns * core::f64::consts::TAU).abs() < 1e-12,
            "{h} vs {want}"
        );
    }

    #[test]
    fn stepped_heading_matches_the_closed_form_on_a_clothoid() {
        // theta(u) = theta0 + kappa0 u + sigma u^2 / 2 (definition of a
        // clothoid: curvature linear in arc length).
        let (k0, k1, len) = (-0.2, 0.3, 25.0);
        let path = single(Segment::transition(len, k0, k1).unwrap());
        let sigma = (k1 - k0) / len;
        let mut st = Stepper::default();
        for i in 0..=100 {
            let u = len * f64::from(i) / 100.0;
            let p = st.near_point(&path, 0, u);
            let h = st.heading(0, u).unwrap();
            let want = 0.3 + k0 * u + 0.5 * sigma * u * u;
            assert!((h - want).abs() < 1e-12, "{u}: {h} vs {want}");
            assert!(
                (p.sin.atan2(p.cos) - libm::atan2(libm::sin(want), libm::cos(want))).abs() < 1e-11
            );
            assert!((p.curvature - (k0 + sigma * u)).abs() < 1e-15 && p.sharpness == sigma);
            assert!((p.station - u).abs() < 1e-15);
        }
    }

    #[test]
    fn stepped_points_match_the_closed_form_in_f32() {
        // Module docs: truncation below 2e-8 * 8 m = 1.6e-7 m in f32, plus
        // the rounding of a few operations on coordinates of a few metres
        // (f32 epsilon 1.2e-7 relative, four of them), against the closed
        // form evaluated in f64 (crate::path::segment, checked against mpmath
        // in tests/core_clothoid.rs).
        let segs: [(f32, f32, f32); 4] = [
            (30.0, 0.0, 0.0),
            (12.0, 0.0, 0.4),
            (9.0, 0.4, 0.4),
            (20.0, 0.4, -0.2),
        ];
        let mut b32 = PathBuilder::<f32, 8>::new(Pose::new(3.0, -2.0, 0.7)).unwrap();
        let mut b64 = PathBuilder::<f64, 8>::new(Pose::new(3.0, -2.0, 0.7)).unwrap();
        for (len, k0, k1) in segs {
            let s32 = if k0 == k1 {
                Segment::arc(len, k0)
            } else {
                Segment::transition(len, k0, k1)
            };
            let s64 = if k0 == k1 {
                Segment::arc(f64::from(len), f64::from(k0))
            } else {
                Segment::transition(f64::from(len), f64::from(k0), f64::from(k1))
            };
            b32.try_push(s32.unwrap()).unwrap();
            b64.try_push(s64.unwrap()).unwrap();
        }
        let (p32, p64) = (b32.build().unwrap(), b64.build().unwrap());
        let mut st = Stepper::<f32>::default();
        for i in 0..p32.len() {
            let len = p32.segment_length(i);
            for k in 0..=200 {
                let u = len * k as f32 / 200.0;
                let a = st.near_point(&p32, i, u);
                let b = p64.eval_in(i, f64::from(u));
                let e = (f64::from(a.x) - b.x)
                    .abs()
                    .max((f64::from(a.y) - b.y).abs());
                let t = (f64::from(a.cos) - b.cos)
                    .abs()
                    .max((f64::from(a.sin) - b.sin).abs());
                let round = 4.0 * f64::from(f32::EPSILON) * (b.x.abs() + b.y.abs());
                assert!(e < 1.6e-7 + round && t < 1e-6, "seg {i} u {u}: {e:e} {t:e}");
            }
        }
    }

    #[test]
    fn reach_in_f32_and_where_the_first_base_goes() {
        // f32 reaches as far as f64 on an arc (the documented rule does not
        // depend on the type): min(8, 0.5 / 0.05) = 8 m.
        let path = PathBuilder::<f32, 2>::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap()
            .push(Segment::arc(40.0, 0.05).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let b = Base::make(&path, 0, 20.0);
        assert_eq!((b.lo, b.hi), (12.0, 28.0));
        // The first point within the anchor's reach is stepped from a base
        // at the anchor (no evaluation: "at a segment's anchor"); one beyond
        // it gets a base of its own.
        let arc = single(Segment::arc(40.0, 0.1).unwrap());
        for (u, u0) in [(3.0, 0.0), (5.0, 0.0), (7.0, 7.0)] {
            let mut st = Stepper::default();
            st.near_point(&arc, 0, u);
            assert_eq!(st.near.u0, u0, "{u}");
        }
    }

    /// Nodes and weights of the n-point Gauss-Legendre rule on [-1, 1]
    /// (Abramowitz & Stegun 25.4.29), the nodes by Newton's method on the
    /// Legendre polynomial from its three-term recurrence.
    fn gauss_legendre(n: usize) -> std::vec::Vec<(f64, f64)> {
        let mut out = std::vec::Vec::new();
        for i in 1..=n {
            let mut x = libm::cos(core::f64::consts::PI * (i as f64 - 0.25) / (n as f64 + 0.5));
            let mut dp = 0.0;
            for _ in 0..100 {
                let (mut p0, mut p1) = (1.0, x);
                for k in 2..=n {
                    let k = k as f64;
                    let p2 = ((2.0 * k - 1.0) * x * p1 - (k - 1.0) * p0) / k;
                    p0 = p1;
                    p1 = p2;
                }
                dp = n as f64 * (x * p1 - p0) / (x * x - 1.0);
                let dx = p1 / dp;
                x -= dx;
                if dx.abs() < 1e-17 {
                    break;
                }
            }
            out.push((x, 2.0 / ((1.0 - x * x) * dp * dp)));
        }
        out
    }

    #[test]
    fn series_step_matches_quadrature_of_the_definition() {
        // From a base with curvature k and sharpness s the curve is
        // x' = cos theta, y' = sin theta, theta = k h + s h^2 / 2 (in the
        // base's frame): its displacement by 20-point Gauss-Legendre
        // quadrature, exact here to the rounding of f64, against the series
        // step. Module docs: truncation below twice the tolerance (1e-16)
        // times the reach; the rest is the rounding of a dozen Horner steps
        // on h (a few 1e-16 m per metre).
        let gl = gauss_legendre(20);
        let cases: [(Segment<f64>, f64); 6] = [
            (Segment::arc(30.0, 0.05).unwrap(), 11.0),
            (Segment::arc(30.0, -0.5).unwrap(), 3.0),
            (Segment::transition(30.0, 0.0, 0.3).unwrap(), 0.0),
            (Segment::transition(30.0, 0.3, -0.4).unwrap(), 17.0),
            (Segment::transition(50.0, 5.0, -5.0).unwrap(), 25.0),
            (Segment::transition(12.0, -0.8, 0.8).unwrap(), 6.0),
        ];
        for (seg, u0) in cases {
            let path = single(seg);
            let b = Base::make(&path, 0, u0);
            let (k, sg) = (b.kappa, b.sigma);
            let mut worst = 0.0f64;
            for j in 0..=40 {
                let u = b.lo + (b.hi - b.lo) * f64::from(j) / 40.0;
                let h = u - u0;
                let (mut x, mut y) = (0.0, 0.0);
                for &(t, w) in &gl {
                    let v = 0.5 * h * (t + 1.0);
                    let th = k * v + 0.5 * sg * v * v;
                    x += 0.5 * h * w * libm::cos(th);
                    y += 0.5 * h * w * libm::sin(th);
                }
                let th = k * h + 0.5 * sg * h * h;
                let (e, d) = b.series(h);
                let err = (d.re - x).abs().max((d.im - y).abs());
                let terr = (e.re - libm::cos(th))
                    .abs()
                    .max((e.im - libm::sin(th)).abs());
                worst = worst.max(err);
                let tol = 1e-15 * (1.0 + h.abs());
                assert!(
                    err < tol && terr < tol,
                    "{seg:?} u0 {u0} h {h}: {err:e} {terr:e}"
                );
            }
            std::println!("{seg:?}: worst series vs quadrature {worst:e}");
        }
    }

    /// The number of coefficients the module docs' cut rule asks for at
    /// reach `r`, or `None` beyond `MAX_TERMS`: on a clothoid the first `n`
    /// where two consecutive majorant terms `m_n r^n` (with `(n + 1)
    /// m_(n+1) = |k| m_n + |sigma| m_(n-1)`, `m_0 = 1`) are below the
    /// tolerance together; on an arc the first `j` where the term
    /// `(|k| r)^(2j + 2) / (2j + 3)!` of the sine's series is.
    fn documented_terms(k: f64, sigma: f64, r: f64, tol: f64) -> Option<usize> {
        if sigma == 0.0 {
            let mut w = 1.0;
            for j in 0..MAX_TERMS {
                let n = 2.0 * j as f64;
                w *= (k * r) * (k * r) / ((n + 2.0) * (n + 3.0));
                if w <= tol {
                    return Some(j + 1);
                }
            }
            return None;
        }
        let (mut m_prev, mut m) = (0.0, 1.0);
        for n in 0..MAX_TERMS {
            let next = (k.abs() * r * m + sigma.abs() * r * r * m_prev) / (n as f64 + 1.0);
            m_prev = m;
            m = next;
            if m + m_prev <= tol {
                return Some(n + 1);
            }
        }
        None
    }

    #[test]
    fn terms_and_reach_follow_the_documented_cut_rule() {
        // "the series is cut where two consecutive m_n r^n ... fall below the
        // type's tolerance together"; "if MAX_TERMS coefficients do not
        // reach the tolerance the reach is halved until they do". The reach
        // before halving is the documented one (see reach_is_the_documented_one).
        let cases: [(Segment<f64>, f64, f64); 7] = [
            (Segment::arc(100.0, 0.05).unwrap(), 50.0, 8.0),
            (Segment::arc(100.0, 0.25).unwrap(), 50.0, 2.0),
            (Segment::arc(100.0, 3.0).unwrap(), 50.0, 0.5 / 3.0),
            (Segment::transition(100.0, 0.0, 0.125).unwrap(), 50.0, 2.0),
            (
                Segment::transition(100.0, 0.0, 1.0).unwrap(),
                50.0,
                0.5 / 0.51,
            ),
            (
                Segment::transition(50.0, 5.0, -5.0).unwrap(),
                25.0,
                0.5 / 0.2,
            ),
            (Segment::transition(30.0, 0.3, -0.4).unwrap(), 3.0, 2.0),
        ];
        for (seg, u, reach0) in cases {
            let path = single(seg);
            let b = Base::make(&path, 0, u);
            let (k, sg) = (b.kappa, b.sigma);
            // The documented turn bound, (|k| + |sigma| max / 2) r <= MAX_TURN.
            let max = if sg == 0.0 { MAX_REACH } else { CLOTHOID_REACH };
            let rate = k.abs() + sg.abs() * max / 2.0;
            let mut r = if rate * max <= MAX_TURN {
                max
            } else {
                MAX_TURN / rate
            };
            assert!(r <= reach0 + 1e-12, "{seg:?}: {r} vs {reach0}");
            let mut want = None;
            for _ in 0..REACH_HALVINGS {
                want = documented_terms(k, sg, r, 1e-16);
                if want.is_some() {
                    break;
                }
                r *= 0.5;
            }
            assert_eq!(Some(b.terms), want, "{seg:?} at {u}");
            assert!(
                (b.hi - u - r).abs() < 1e-12 && (u - b.lo - r).abs() < 1e-12,
                "{seg:?}: reach {} vs {r}",
                b.hi - u
            );
        }
        // f32: tolerance 1e-8.
        let path = PathBuilder::<f32, 2>::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap()
            .push(Segment::transition(40.0, 0.1, 0.5).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let b = Base::make(&path, 0, 20.0);
        let want = documented_terms(
            f64::from(b.kappa),
            f64::from(b.sigma),
            f64::from(b.hi - 20.0),
            1e-8,
        );
        assert_eq!(Some(b.terms), want);
    }
}
