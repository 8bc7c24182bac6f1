//! G1 clothoid fitting: the one clothoid segment that leaves a pose and
//! arrives at another, after Bertolazzi & Frego, "G1 fitting with
//! clothoids", Math. Methods Appl. Sci. 38(5), 2015; and a clothoid spline
//! through waypoints built from such fits.
//!
//! # The method
//!
//! For the poses `(x0, y0, theta0)` and `(x1, y1, theta1)`, with
//! `r = |p1 - p0|` and `phi` the direction of the chord, the angles
//! `phi0 = theta0 - phi`, `phi1 = theta1 - phi` (both wrapped into
//! `(-pi, pi]`) and `delta = phi1 - phi0` leave a single unknown `A`, root of
//!
//! `g(A) = Y_0(2A, delta - A, phi0) = 0`,
//!
//! with the generalised Fresnel integrals and their moments
//! `X_k(a, b, c) + i Y_k(a, b, c) = int_0^1 t^k exp(i (a t^2/2 + b t + c)) dt`
//! ([`fresnel_moments`]). `g'(A) = X_2 - X_1` (same arguments), so Newton's
//! method applies; it starts from the paper's approximation
//! `A ~ (phi0 + phi1) (c1 + c2 phi0' phi1' + c3 (phi0'^2 + phi1'^2))`,
//! `phi' = phi / pi`, `c1 = 3.070645`, `c2 = 0.947923`, `c3 = -0.673029`
//! (coefficients from memory of the paper; only the speed of convergence
//! depends on them, and the result is checked). Then
//! `L = r / X_0(2A, delta - A, phi0)`, `kappa0 = (delta - A) / L`,
//! `sigma = 2A / L^2`. The total turn `kappa0 L + sigma L^2 / 2 = delta`, so
//! the end heading is exact by construction.
//!
//! All of it runs in `f64` (soft-float on a Cortex-M0: a fit costs a few
//! dozen Fresnel evaluations), with loops bounded by [`MAX_NEWTON_STEPS`].
//!
//! ```
//! use kappaline::{fit_g1, Pose};
//! # fn main() -> Result<(), kappaline::FitError> {
//! // A symmetric S-curve; values from a reference computation of the
//! // Bertolazzi-Frego equation with mpmath 1.3.0 `findroot`
//! // (tests/build_reference/fresnel_moments.py, first fit).
//! let fit = fit_g1(Pose::new(0.5, 0.0, 1.0), Pose::new(0.5, 0.5, 1.0))?;
//! assert!((fit.kappa0 - 6.609597043).abs() < 1e-8);
//! assert!((fit.sharpness + 25.59225875).abs() < 1e-7);
//! assert!((fit.length - 0.516530964).abs() < 1e-9);
//! # Ok(()) }
//! ```

use heapless::Vec;

use crate::num::complex::Cplx;
use crate::num::real::Real;
use crate::path::anchored::{wrap_exactly, Path, PathBuilder};
use crate::path::error::PathError;
use crate::path::fresnel::clothoid_integral;
use crate::path::pose::Pose;
use crate::path::segment::Segment;

/// Newton steps allowed before a fit is declared failed.
pub const MAX_NEWTON_STEPS: u32 = 40;

/// Below this `|a|` the moments are summed as a power series in `a`.
const A_SERIES: f64 = 1.0;
/// Series terms in `a` at most: `(1/2)^n / n!` is below 1e-24 at n = 20.
const A_TERMS: usize = 20;
/// Highest moment `int t^m exp(i b t)` the series needs.
const M_MAX: usize = 2 + 2 * A_TERMS;
/// Below this `|b|` the moments of `exp(i b t)` come from their power series.
const B_SERIES: f64 = 4.0;
/// Terms of that power series at most (|b|^j / j! < 1e-17 by j = 60 for |b| < 4).
const B_TERMS: u32 = 80;

/// Why a fit failed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum FitError {
    /// A pose is NaN or infinite.
    NonFinite,
    /// The two positions coincide (no chord to fit along).
    CoincidentPoints,
    /// Newton's method did not converge within [`MAX_NEWTON_STEPS`].
    NoConvergence,
    /// Fewer than two waypoints, or a waypoint list longer than the path.
    TooFewPoints,
    /// Waypoint `index` repeats the one before it, or is not finite.
    BadWaypoint {
        /// Waypoint at fault.
        index: usize,
    },
    /// The path builder refused a segment.
    Path(PathError),
    /// The fitted curve's length, curvature or sharpness would not be a
    /// finite number (a chord far too short or too long for its turn).
    NonFiniteResult,
}

impl core::fmt::Display for FitError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            FitError::NonFinite => f.write_str("pose not finite"),
            FitError::CoincidentPoints => f.write_str("the two positions coincide"),
            FitError::NoConvergence => f.write_str("the G1 fit did not converge"),
            FitError::TooFewPoints => f.write_str("fewer than two waypoints"),
            FitError::BadWaypoint { index } => {
                write!(
                    f,
                    "waypoint {index} is not finite or repeats the one before it"
                )
            }
            FitError::Path(e) => write!(f, "path: {e}"),
            FitError::NonFiniteResult => {
                f.write_str("the fitted curve's length, curvature or sharpness is not finite")
            }
        }
    }
}

impl core::error::Error for FitError {}

impl From<PathError> for FitError {
    fn from(e: PathError) -> Self {
        FitError::Path(e)
    }
}

/// The generalised Fresnel integrals and their first two moments:
/// `[(X_0, Y_0), (X_1, Y_1), (X_2, Y_2)]` with
/// `X_k + i Y_k = int_0^1 t^k exp(i (a t^2/2 + b t + c)) dt` (radians).
///
/// For `|a| < 1`: the series `sum_n (i a/2)^n / n! M_(k+2n)(b)` over the
/// moments `M_m(b) = int_0^1 t^m exp(i b t) dt` (power series in `b` for
/// `|b| < 4`, else the recurrence `M_m = (exp(i b) - m M_(m-1)) / (i b)`).
/// For `|a| >= 1`: `J_0` from [`crate::generalized_fresnel`]'s algorithm and
/// the recurrence from integrating `t^k (a t + b) exp(i psi)` by parts:
/// `a J_(k+1) = -i (exp(i psi(1)) - [k = 0]) + i k J_(k-1) - b J_k`.
///
/// Accuracy (f64, checked against mpmath quadrature in
/// `tests/build_fit.rs`): about 1e-15 absolute for `|a| <= 50`, `|b| <= 30`.
pub fn fresnel_moments(a: f64, b: f64, c: f64) -> [(f64, f64); 3] {
    let rot = Cplx::expi(c);
    let j = if libm::fabs(a) < A_SERIES {
        moments_small_a(a, b)
    } else {
        moments_by_recurrence(a, b)
    };
    let [j0, j1, j2] = j.map(|v| {
        let r = v * rot;
        (r.re, r.im)
    });
    [j0, j1, j2]
}

fn moments_small_a(a: f64, b: f64) -> [Cplx<f64>; 3] {
    // Number of terms: stop when (|a|/2)^n / n! is negligible.
    let mut terms = 0usize;
    let mut w = 1.0f64;
    while terms < A_TERMS {
        w *= libm::fabs(a) * 0.5 / (terms as f64 + 1.0);
        terms += 1;
        if w < 1e-18 {
            break;
        }
    }
    let mut m = [Cplx::new(0.0, 0.0); M_MAX + 1];
    exp_moments(b, 2 + 2 * terms, &mut m);
    let mut out = [Cplx::new(0.0, 0.0); 3];
    for (k, o) in out.iter_mut().enumerate() {
        let mut coef = Cplx::new(1.0, 0.0);
        let step = Cplx::new(0.0, 0.5 * a);
        let mut sum = Cplx::new(0.0, 0.0);
        for n in 0..=terms {
            if let Some(mv) = m.get(k + 2 * n) {
                sum = sum + coef * *mv;
            }
            coef = (coef * step).scale(1.0 / (n as f64 + 1.0));
        }
        *o = sum;
    }
    out
}

/// `M_m(b) = int_0^1 t^m exp(i b t) dt` for `m = 0..=upto`.
fn exp_moments(b: f64, upto: usize, out: &mut [Cplx<f64>; M_MAX + 1]) {
    if libm::fabs(b) < B_SERIES {
        for (m, o) in out.iter_mut().enumerate().take(upto + 1) {
            // sum_j (i b)^j / (j! (m + j + 1))
            let mut p = Cplx::new(1.0, 0.0);
            let mut sum = Cplx::new(1.0 / (m as f64 + 1.0), 0.0);
            let ib = Cplx::new(0.0, b);
            for j in 1..B_TERMS {
                p = (p * ib).scale(1.0 / f64::from(j));
                let t = p.scale(1.0 / (m as f64 + f64::from(j) + 1.0));
                sum = sum + t;
                if t.l1() < 1e-18 * sum.l1() {
                    break;
                }
            }
            *o = sum;
        }
    } else {
        let e = Cplx::expi(b);
        let inv_ib = Cplx::new(0.0, -1.0 / b);
        let mut prev = (e - Cplx::new(1.0, 0.0)) * inv_ib;
        for (m, o) in out.iter_mut().enumerate().take(upto + 1) {
            if m > 0 {
                prev = (e - prev.scale(m as f64)) * inv_ib;
            }
            *o = prev;
        }
    }
}

fn moments_by_recurrence(a: f64, b: f64) -> [Cplx<f64>; 3] {
    let j0 = clothoid_integral(a, b);
    let e1 = Cplx::expi(0.5 * a + b);
    let minus_i = Cplx::new(0.0, -1.0);
    let i = Cplx::new(0.0, 1.0);
    let inv_a = 1.0 / a;
    let j1 = (minus_i * (e1 - Cplx::new(1.0, 0.0)) - j0.scale(b)).scale(inv_a);
    let j2 = (minus_i * e1 + i * j0 - j1.scale(b)).scale(inv_a);
    [j0, j1, j2]
}

/// A fitted clothoid (f64 values; [`G1Fit::segment`] converts).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct G1Fit {
    /// Start curvature, 1/m.
    pub kappa0: f64,
    /// Sharpness, 1/m^2.
    pub sharpness: f64,
    /// Length, metres.
    pub length: f64,
    /// Curvature at the end, 1/m.
    pub kappa1: f64,
    /// Newton steps taken.
    pub iterations: u32,
}

impl G1Fit {
    /// The fitted curve as a segment in `T`.
    ///
    /// # Errors
    /// [`PathError::NonFinite`] if a value does not fit `T`.
    pub fn segment<T: Real>(&self) -> Result<Segment<T>, PathError> {
        Segment::clothoid(
            T::from_f64(self.length),
            T::from_f64(self.kappa0),
            T::from_f64(self.sharpness),
        )
    }
}

/// The clothoid from pose `from` to pose `to` (metres, radians), matching
/// position and heading at both ends (G1). Among the infinitely many
/// solutions (the end heading is matched modulo `2 pi`) this is the one of
/// the method, turning `delta` with `|delta| < 2 pi` as set out in the
/// module documentation.
///
/// Headings may hold any number of turns: they are wrapped (exactly, as
/// the path builder places them) before the chord angle is subtracted, so
/// the fit and its closure do not depend on `2 pi k` added to either.
///
/// # Errors
/// [`FitError::NonFinite`], [`FitError::CoincidentPoints`],
/// [`FitError::NoConvergence`], [`FitError::NonFiniteResult`] (never `Ok`
/// with a non-finite field).
pub fn fit_g1<T: Real>(from: Pose<T>, to: Pose<T>) -> Result<G1Fit, FitError> {
    if !(from.is_finite() && to.is_finite()) {
        return Err(FitError::NonFinite);
    }
    let dx = to.x.to_f64() - from.x.to_f64();
    let dy = to.y.to_f64() - from.y.to_f64();
    let r = libm::hypot(dx, dy);
    // Finite poses give a finite chord; a zero one has no direction.
    if r == 0.0 || !r.is_finite() {
        return Err(FitError::CoincidentPoints);
    }
    let phi = libm::atan2(dy, dx);
    // Wrap the headings first: the chord angle subtracted from a heading of
    // many turns would lose its low bits.
    let phi0 = (wrap_exactly(from.heading.to_f64()) - phi).wrap_angle();
    let phi1 = (wrap_exactly(to.heading.to_f64()) - phi).wrap_angle();
    let delta = phi1 - phi0;
    let (a, iterations) = solve_angle(phi0, phi1)?;
    let [(x0, _), _, _] = fresnel_moments(2.0 * a, delta - a, phi0);
    if x0.is_nan() || x0 <= 0.0 {
        return Err(FitError::NoConvergence);
    }
    let length = r / x0;
    let kappa0 = (delta - a) / length;
    let sharpness = 2.0 * a / (length * length);
    let kappa1 = kappa0 + sharpness * length;
    if !(length.is_finite() && kappa0.is_finite() && sharpness.is_finite() && kappa1.is_finite()) {
        return Err(FitError::NonFiniteResult);
    }
    Ok(G1Fit {
        kappa0,
        sharpness,
        length,
        kappa1,
        iterations,
    })
}

/// Newton's method on `g(A) = Y_0(2A, delta - A, phi0)` from the paper's guess.
///
/// Stops at `|g| <= 1e-14` (a few ulps: near the root rounding makes the
/// iterates hop between neighbouring values) or a step below `8 eps |A|`;
/// after [`MAX_NEWTON_STEPS`] it keeps the best iterate if `|g| <= 1e-12`.
fn solve_angle(phi0: f64, phi1: f64) -> Result<(f64, u32), FitError> {
    let delta = phi1 - phi0;
    let (u0, u1) = (phi0 / core::f64::consts::PI, phi1 / core::f64::consts::PI);
    let mut a = (phi0 + phi1) * (3.070645 + 0.947923 * u0 * u1 - 0.673029 * (u0 * u0 + u1 * u1));
    let mut best = (f64::INFINITY, a);
    for step in 0..MAX_NEWTON_STEPS {
        let [(_, g), (x1, _), (x2, _)] = fresnel_moments(2.0 * a, delta - a, phi0);
        if libm::fabs(g) < best.0 {
            best = (libm::fabs(g), a);
        }
        if libm::fabs(g) <= 1e-14 {
            return Ok((a, step));
        }
        let dg = x2 - x1;
        if !(dg.is_finite() && dg != 0.0) {
            break;
        }
        let da = g / dg;
        a -= da;
        if !a.is_finite() {
            break;
        }
        if libm::fabs(da) <= 8.0 * f64::EPSILON * (1.0 + libm::fabs(a)) {
            return Ok((a, step + 1));
        }
    }
    if best.0 <= 1e-12 {
        Ok((best.1, MAX_NEWTON_STEPS))
    } else {
        Err(FitError::NoConvergence)
    }
}

/// A waypoint for [`clothoid_spline`]: position in metres and, optionally,
/// the heading to pass it with (radians, counter-clockwise from `+x`).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Waypoint<T> {
    /// East (first) coordinate, metres.
    pub x: T,
    /// North (second) coordinate, metres.
    pub y: T,
    /// Heading, radians, or `None` to estimate it.
    pub heading: Option<T>,
}

/// Headings for waypoints that lack one, by the Bessel (three-point) rule:
/// the tangent of the parabola through a point and its two neighbours,
/// parameterised by chord length. With the chords `h0`, `h1` and their unit
/// directions `d0`, `d1` on either side of an interior point, the tangent is
/// `h1 d0 + h0 d1`; at the first point `(2 h0 + h1) d0 - h0 d1`, at the last
/// `(2 h1 + h0) d1 - h1 d0` (from the same parabola). Two points: the chord.
/// Given headings are kept.
///
/// # Errors
/// [`FitError::TooFewPoints`] if fewer than two points or more than `N`;
/// [`FitError::BadWaypoint`] for a non-finite point or one repeating its
/// predecessor.
pub fn estimate_headings<T: Real, const N: usize>(
    points: &[Waypoint<T>],
) -> Result<Vec<f64, N>, FitError> {
    if points.len() < 2 || points.len() > N {
        return Err(FitError::TooFewPoints);
    }
    let xy = |i: usize| points.get(i).map(|p| (p.x.to_f64(), p.y.to_f64()));
    for (index, p) in points.iter().enumerate() {
        let finite = p.x.is_finite() && p.y.is_finite() && p.heading.is_none_or(|h| h.is_finite());
        if !finite {
            return Err(FitError::BadWaypoint { index });
        }
    }
    // Chord i runs from point i to i + 1: (length, unit direction).
    let chord = |i: usize| -> Option<(f64, (f64, f64))> {
        let (a, b) = (xy(i)?, xy(i + 1)?);
        let (dx, dy) = (b.0 - a.0, b.1 - a.1);
        let h = libm::hypot(dx, dy);
        Some((h, (dx / h, dy / h)))
    };
    for i in 0..points.len() - 1 {
        if chord(i).is_none_or(|(h, _)| h.is_nan() || h <= 0.0) {
            return Err(FitError::BadWaypoint { index: i + 1 });
        }
    }
    let last = points.len() - 1;
    let mut out = Vec::new();
    for (i, p) in points.iter().enumerate() {
        let h = if let Some(h) = p.heading {
            h.to_f64()
        } else {
            let (v0, v1) = match (i.checked_sub(1).and_then(chord), chord(i)) {
                (Some((h0, d0)), Some((h1, d1))) => (h1 * d0.0 + h0 * d1.0, h1 * d0.1 + h0 * d1.1),
                (None, Some((h0, d0))) => match chord(1) {
                    Some((h1, d1)) if last >= 2 => (
                        (2.0 * h0 + h1) * d0.0 - h0 * d1.0,
                        (2.0 * h0 + h1) * d0.1 - h0 * d1.1,
                    ),
                    _ => d0,
                },
                (Some((h1, d1)), None) => match i.checked_sub(2).and_then(chord) {
                    Some((h0, d0)) => (
                        (2.0 * h1 + h0) * d1.0 - h1 * d0.0,
                        (2.0 * h1 + h0) * d1.1 - h1 * d0.1,
                    ),
                    None => d1,
                },
                (None, None) => return Err(FitError::TooFewPoints),
            };
            libm::atan2(v1, v0)
        };
        out.push(h).map_err(|_| FitError::TooFewPoints)?;
    }
    Ok(out)
}

/// A G1 clothoid spline through `points`: one fitted clothoid per pair of
/// consecutive waypoints, at the given headings or those of
/// [`estimate_headings`]. Curvature generally jumps at the waypoints (G1,
/// not G2): check it with [`crate::check_path`].
///
/// Each segment is fitted from its waypoint, and placed by the path builder
/// where the previous one ends, so the path passes every waypoint to the
/// fitting accuracy (about 1e-12 m per segment in f64).
///
/// # Errors
/// As [`estimate_headings`] and [`fit_g1`]; [`FitError::Path`] when the path
/// needs more than `N` segments.
pub fn clothoid_spline<T: Real, const N: usize>(
    points: &[Waypoint<T>],
) -> Result<Path<T, N>, FitError> {
    let headings = estimate_headings::<T, N>(points)?;
    let pose = |i: usize| -> Option<Pose<f64>> {
        let p = points.get(i)?;
        Some(Pose::new(p.x.to_f64(), p.y.to_f64(), *headings.get(i)?))
    };
    let Some(p0) = pose(0) else {
        return Err(FitError::TooFewPoints);
    };
    let mut b = PathBuilder::<T, N>::new(Pose::new(
        T::from_f64(p0.x),
        T::from_f64(p0.y),
        T::from_f64(p0.heading),
    ))?;
    for i in 0..points.len() - 1 {
        let (Some(a), Some(z)) = (pose(i), pose(i + 1)) else {
            return Err(FitError::TooFewPoints);
        };
        let fit = fit_g1(a, z).map_err(|e| match e {
            FitError::CoincidentPoints | FitError::NonFinite => {
                FitError::BadWaypoint { index: i + 1 }
            }
            other => other,
        })?;
        b.try_push(fit.segment::<T>()?)?;
    }
    Ok(b.build()?)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn straight_line_and_symmetric_arc() {
        let f = fit_g1(
            Pose::new(1.0f64, 1.0, 0.3),
            Pose::new(
                1.0 + 10.0 * libm::cos(0.3),
                1.0 + 10.0 * libm::sin(0.3),
                0.3,
            ),
        )
        .unwrap();
        assert!(f.kappa0.abs() < 1e-14 && f.sharpness.abs() < 1e-14);
        assert!((f.length - 10.0).abs() < 1e-12);
        // A quarter circle of radius 5: from (0,0,0) to (5,5,pi/2).
        let f = fit_g1(
            Pose::new(0.0f64, 0.0, 0.0),
            Pose::new(5.0, 5.0, core::f64::consts::FRAC_PI_2),
        )
        .unwrap();
        assert!((f.kappa0 - 0.2).abs() < 1e-12, "{f:?}");
        assert!(f.sharpness.abs() < 1e-12);
        assert!((f.length - 2.5 * core::f64::consts::PI).abs() < 1e-12);
    }

    #[test]
    fn bad_input() {
        let p = Pose::new(0.0f64, 0.0, 0.0);
        assert_eq!(fit_g1(p, p), Err(FitError::CoincidentPoints));
        assert_eq!(
            fit_g1(p, Pose::new(f64::NAN, 0.0, 0.0)),
            Err(FitError::NonFinite)
        );
    }

    #[test]
    fn bessel_headings_on_a_circle() {
        // Equally spaced points on a circle: the parabola's tangent at an
        // interior point is the circle's tangent (symmetry).
        let pts: [Waypoint<f64>; 5] = core::array::from_fn(|i| {
            let t = 0.3 * i as f64;
            Waypoint {
                x: 10.0 * libm::sin(t),
                y: 10.0 - 10.0 * libm::cos(t),
                heading: None,
            }
        });
        let h = estimate_headings::<f64, 8>(&pts).unwrap();
        for (i, hi) in h.iter().enumerate().take(4).skip(1) {
            assert!((hi - 0.3 * i as f64).abs() < 1e-12);
        }
    }
}
