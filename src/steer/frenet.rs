//! A Frenet-frame nonlinear path-following law with curvature feedforward:
//! the chained-form path-following feedback of C. Samson, "Control of
//! chained systems: application to path following and time-varying
//! point-stabilization of mobile robots", IEEE Trans. Automatic Control
//! 40(1), 64-77, 1995, as presented in A. De Luca, G. Oriolo, C. Samson,
//! "Feedback control of a nonholonomic car-like robot", in J.-P. Laumond
//! (ed.), *Robot Motion Planning and Control*, LNCIS 229, Springer, 1998,
//! section "Path following" (the chained-form coordinates
//! `z1 = s`, `z2 = d`, `z3 = (1 - c(s) d) tan(theta_e)`; equation numbers
//! not given here because we quote them from memory).
//!
//! # Model and law
//!
//! The rear axle (the point whose velocity lies along the body) in the
//! Frenet frame of the path, travel speed `v > 0`, body curvature `u`,
//! path curvature `kappa(s)` and sharpness `sigma = kappa'(s)`:
//!
//! ```text
//! s' = v cos(theta) / (1 - kappa d),  d' = v sin(theta),  theta' = v u - kappa s'
//! ```
//!
//! With `z2 = d`, `z3 = (1 - kappa d) tan(theta)` one has `dz2/ds = z3` and
//! `dz3/ds = w`, where `w` is a new input related to `u` by
//!
//! ```text
//! u = kappa cos(theta) / (1 - kappa d)
//!   + cos^3(theta) / (1 - kappa d)^2 * (w + (sigma d + kappa (1 - kappa d) tan(theta)) tan(theta))
//! ```
//!
//! (derived here from the model; the first term is the curvature
//! feedforward: on the path, `u = kappa`). The linear feedback of the
//! chained form, `w = -k_d z2 - k_theta z3 - k_i int z2 ds`, makes the
//! cross-track error obey, *in distance travelled along the path*,
//!
//! ```text
//! d'' + k_theta d' + k_d d = 0        (k_i = 0)
//! d''' + k_theta d'' + k_d d' + k_i d = 0
//! ```
//!
//! exactly (not only linearised) wherever the transformation is valid.
//!
//! # Stability conditions (Samson 1995; Routh-Hurwitz for the integral)
//!
//! * `k_d > 0`, `k_theta > 0`; with the integral `0 < k_i < k_theta k_d`.
//! * The transformation is valid for `|theta| < pi/2` and `1 - kappa d > 0`
//!   (the vehicle on the near side of the path's centre of curvature). Out
//!   of that domain the law turns at full curvature towards the path.
//! * `v` may vary and need not be known: the response is fixed in distance.
//!   The steering limits cap the command; from large errors the response is
//!   then slower than the linear one.
//!
//! Gains from a response in distance: natural frequency `omega` (1/m) and
//! damping `zeta` give `k_d = omega^2`, `k_theta = 2 zeta omega`
//! ([`FrenetFeedback::from_response`]).
//!
//! # Integral term (steady side slip)
//!
//! Crabbing on a slope adds a steady slip angle `beta` to the heading; the
//! proportional law then settles at `d = -k_theta tan(beta) / k_d`. The
//! optional integral removes it. Anti-windup: integrate only while the
//! previous command was not saturated and `|d|` is inside a band, and keep
//! `|k_i int d ds|` under a limit (1/m, the same units as `w`).
//!
//! The state is kept in the local plane, not across the path (an addition
//! of this crate): each step adds `d ds` times the path's left normal `N`
//! (from [`SteeringInput::path_direction`]) to a vector, and the law uses
//! that vector's component along the current `N`. Slip on a side slope
//! pushes downhill whichever way the vehicle drives, so after a headland
//! turn the stored correction points the right way at once, instead of
//! having to unwind from the opposite sign over the next pass. Without a
//! path direction the normal is fixed and the integral is the plain scalar.
//!
//! # Control point (an addition of this crate)
//!
//! The law steers the rear axle. With the control point `a` ahead of it
//! (travel frame), the rear axle must run `kappa a^2 / (1 + sqrt(1 -
//! kappa^2 a^2))` left of an arc for the control point to be on it (the
//! concentric circle of radius `sqrt(R^2 - a^2)`). The law follows that
//! parallel curve: `d` measured from it, its curvature
//! `kappa / (1 - kappa shift)` and sharpness `sigma / (1 - kappa shift)^2`
//! (exact for arcs, first order on clothoids).

use crate::num::real::{c, Real};
use crate::steer::law::{symmetric_clamp, SteerError, SteeringInput, SteeringLaw};
use crate::steer::vehicle::rear_axle_offset;

/// Heading errors beyond this (rad, about 80 degrees) are outside the law's
/// domain: turn at full curvature instead.
const THETA_DOMAIN: f64 = 1.4;
/// Smallest `1 - kappa d` the law divides by.
const MIN_FRAME_SCALE: f64 = 0.2;
/// "Full curvature" out of the domain, 1/m; the vehicle limiter clips it.
const FULL_TURN: f64 = 1.0e3;

/// The chained-form path-following law. See the module docs.
///
/// ```
/// use kappaline::{FrenetFeedback, SteeringInput, SteeringLaw};
/// # fn main() -> Result<(), kappaline::SteerError> {
/// let mut law = FrenetFeedback::<f64>::new(0.09, 0.6)?;
/// // On a 20 m radius arc, on the path: the feedforward alone, 0.05 1/m.
/// let on_arc = SteeringInput { curvature: 0.05, speed: 2.0, dt: 0.05, ..Default::default() };
/// assert!((law.curvature(&on_arc) - 0.05).abs() < 1e-15);
/// # Ok(()) }
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FrenetFeedback<T> {
    k_d: T,
    k_theta: T,
    k_i: T,
    integral_limit: T,
    integral_band: T,
    /// `int d N ds` in the local plane, m^2 (see "Integral term").
    integral: (T, T),
    /// The left normal of the last call, to read the integral back.
    normal: (T, T),
}

impl<T: Real> FrenetFeedback<T> {
    /// The law with gains `k_d` (1/m^2, > 0) and `k_theta` (1/m, > 0), no
    /// integral term.
    ///
    /// # Errors
    /// [`SteerError::NonFinite`] or [`SteerError::OutOfRange`].
    pub fn new(k_d: T, k_theta: T) -> Result<Self, SteerError> {
        if !(k_d.is_finite() && k_theta.is_finite()) {
            return Err(SteerError::NonFinite);
        }
        if k_d <= T::ZERO || k_theta <= T::ZERO {
            return Err(SteerError::OutOfRange);
        }
        Ok(Self {
            k_d,
            k_theta,
            k_i: T::ZERO,
            integral_limit: T::ZERO,
            integral_band: T::ZERO,
            integral: (T::ZERO, T::ZERO),
            normal: (T::ZERO, T::ONE),
        })
    }

    /// Gains for natural frequency `omega` (1/m, > 0) and damping ratio
    /// `zeta` (> 0) in distance: `k_d = omega^2`, `k_theta = 2 zeta omega`.
    ///
    /// # Errors
    /// As [`FrenetFeedback::new`].
    pub fn from_response(omega: T, zeta: T) -> Result<Self, SteerError> {
        if !(omega.is_finite() && zeta.is_finite()) {
            return Err(SteerError::NonFinite);
        }
        if omega <= T::ZERO || zeta <= T::ZERO {
            return Err(SteerError::OutOfRange);
        }
        Self::new(omega * omega, T::TWO * zeta * omega)
    }

    /// Adds the integral term: gain `k_i` (1/m^3, `0 < k_i < k_theta k_d`
    /// for stability), output limit `limit` (1/m, > 0) and the band of
    /// `|d|` (m, > 0) inside which it integrates.
    ///
    /// # Errors
    /// [`SteerError::NonFinite`] or [`SteerError::OutOfRange`]; `self` is
    /// consumed only on success (the error carries no half-set law).
    pub fn with_integral(mut self, k_i: T, limit: T, band: T) -> Result<Self, SteerError> {
        let all = [k_i, limit, band];
        if all.iter().any(|v| !v.is_finite()) {
            return Err(SteerError::NonFinite);
        }
        if all.iter().any(|v| *v <= T::ZERO) || k_i >= self.k_theta * self.k_d {
            return Err(SteerError::OutOfRange);
        }
        self.k_i = k_i;
        self.integral_limit = limit;
        self.integral_band = band;
        self.integral = (T::ZERO, T::ZERO);
        Ok(self)
    }

    /// A field tractor at 1-4 m/s: `omega = 0.3 /m`, `zeta = 1`
    /// (`k_d = 0.09 /m^2`, `k_theta = 0.6 /m`): 1 m of offset settles to
    /// 5 cm in about 16 m, whatever the speed. No integral term.
    pub fn tractor() -> Self {
        Self {
            k_d: c(0.09),
            k_theta: c(0.6),
            k_i: T::ZERO,
            integral_limit: T::ZERO,
            integral_band: T::ZERO,
            integral: (T::ZERO, T::ZERO),
            normal: (T::ZERO, T::ONE),
        }
    }

    /// A small robot at 0.3-2 m/s: `omega = 1.2 /m`, `zeta = 1`
    /// (`k_d = 1.44 /m^2`, `k_theta = 2.4 /m`): 1 m settles in about 4 m.
    pub fn small_robot() -> Self {
        Self {
            k_d: c(1.44),
            k_theta: c(2.4),
            k_i: T::ZERO,
            integral_limit: T::ZERO,
            integral_band: T::ZERO,
            integral: (T::ZERO, T::ZERO),
            normal: (T::ZERO, T::ONE),
        }
    }

    /// A road vehicle at 5-15 m/s: `omega = 0.15 /m`, `zeta = 1`
    /// (`k_d = 0.0225 /m^2`, `k_theta = 0.3 /m`): 1 m settles to 5 cm in
    /// about 32 m, whatever the speed (the gains of the harness's
    /// `highspeed` scenario).
    pub fn road_vehicle() -> Self {
        Self {
            k_d: c(0.0225),
            k_theta: c(0.3),
            k_i: T::ZERO,
            integral_limit: T::ZERO,
            integral_band: T::ZERO,
            integral: (T::ZERO, T::ZERO),
            normal: (T::ZERO, T::ONE),
        }
    }

    /// The integral state `int d ds` as seen across the path at the last
    /// call, m^2 (the stored state is a vector in the local plane).
    pub fn integral(&self) -> T {
        self.integral.0 * self.normal.0 + self.integral.1 * self.normal.1
    }

    /// The path's left normal in the local plane from the input, or a fixed
    /// one when the input does not give the path direction (the integral
    /// then works in the path frame, as a plain scalar).
    fn left_normal(input: &SteeringInput<T>) -> (T, T) {
        let (tx, ty) = input.path_direction;
        if tx * tx + ty * ty > T::HALF {
            (-ty, tx)
        } else {
            (T::ZERO, T::ONE)
        }
    }

    /// The law's body curvature for chained-form input `w` (see the module docs).
    fn curvature_for(&self, input: &SteeringInput<T>, d: T, kappa: T, sigma: T, w: T) -> T {
        let theta = input.heading_error;
        let scale = (T::ONE - kappa * d).max(c(MIN_FRAME_SCALE));
        let (sn, cs) = theta.sin_cos();
        let tn = sn / cs;
        let feedforward = kappa * cs / scale;
        let cos3 = cs * cs * cs;
        feedforward + cos3 / (scale * scale) * (w + (sigma * d + kappa * scale * tn) * tn)
    }
}

impl<T: Real> SteeringLaw<T> for FrenetFeedback<T> {
    fn curvature(&mut self, input: &SteeringInput<T>) -> T {
        let theta = input.heading_error;
        // Steer the rear axle along the parallel curve it must follow for
        // the control point to be on the path (see the module docs): offset
        // `shift`, curvature `kappa / (1 - kappa shift)`. Both are the path's
        // own with the control point on the rear axle.
        let shift = rear_axle_offset(input.curvature, input.control_point);
        let parallel = (T::ONE - input.curvature * shift).max(c(MIN_FRAME_SCALE));
        let kappa = input.curvature / parallel;
        let sigma = input.sharpness / (parallel * parallel);
        let d = input.cross_track - shift;
        if theta.abs() >= c(THETA_DOMAIN) {
            // Pointing across the path: turn the heading back towards it.
            let toward = if theta > T::ZERO { -T::ONE } else { T::ONE };
            return toward * c(FULL_TURN);
        }
        if T::ONE - kappa * d <= c(MIN_FRAME_SCALE) {
            // Near the path's centre of curvature (inside a tight arc):
            // turn away from that side, back out towards the path.
            let toward = if d > T::ZERO { -T::ONE } else { T::ONE };
            return toward * c(FULL_TURN);
        }
        let scale = T::ONE - kappa * d;
        let (sn, cs) = theta.sin_cos();
        let z3 = scale * sn / cs;
        self.normal = Self::left_normal(input);
        let integral_term = symmetric_clamp(self.k_i * self.integral(), self.integral_limit);
        let w = -self.k_d * d - self.k_theta * z3 - integral_term;
        let u = self.curvature_for(input, d, kappa, sigma, w);
        // Anti-windup: conditional integration inside the band, clamped state.
        if self.k_i > T::ZERO && !input.saturated && d.abs() < self.integral_band {
            let ds = input.speed.abs() * input.dt * cs / scale;
            let (nx, ny) = self.normal;
            let next = (self.integral.0 + d * ds * nx, self.integral.1 + d * ds * ny);
            let cap = self.integral_limit / self.k_i;
            let norm = (next.0 * next.0 + next.1 * next.1).sqrt();
            if norm.is_finite() {
                let k = if norm > cap { cap / norm } else { T::ONE };
                self.integral = (next.0 * k, next.1 * k);
            }
        }
        u
    }

    fn reset(&mut self) {
        self.integral = (T::ZERO, T::ZERO);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn input(d: f64, theta: f64, kappa: f64) -> SteeringInput<f64> {
        SteeringInput {
            cross_track: d,
            heading_error: theta,
            curvature: kappa,
            speed: 2.0,
            dt: 0.05,
            ..Default::default()
        }
    }

    #[test]
    fn straight_line_is_linear_feedback() {
        // kappa = 0: u = cos^3(theta) (-k_d d - k_theta tan(theta)) (the
        // formula of the module docs with kappa = sigma = 0).
        let mut law = FrenetFeedback::<f64>::new(0.09, 0.6).unwrap();
        let (d, th) = (1.0, 0.2);
        let want = libm::pow(libm::cos(th), 3.0) * (-0.09 * d - 0.6 * libm::tan(th));
        assert!((law.curvature(&input(d, th, 0.0)) - want).abs() < 1e-15);
    }

    #[test]
    fn chained_form_derivative_matches_w() {
        // Check dz3/ds = w numerically from the model equations: integrate
        // a tiny step in s with the law's u and compare.
        let mut law = FrenetFeedback::<f64>::new(0.3, 0.8).unwrap();
        let (d, th, k) = (0.4, -0.3, 0.05);
        let u = law.curvature(&input(d, th, k));
        let z3 = |d: f64, th: f64| (1.0 - k * d) * libm::tan(th);
        let h = 1e-6; // ds
        let dd = libm::tan(th) * (1.0 - k * d) * h;
        let dth = (u * (1.0 - k * d) / libm::cos(th) - k) * h;
        let dz3 = (z3(d + dd, th + dth) - z3(d, th)) / h;
        let w = -0.3 * d - 0.8 * z3(d, th);
        assert!((dz3 - w).abs() < 1e-5, "{dz3} vs {w}");
    }

    #[test]
    fn chained_form_derivative_on_a_clothoid() {
        // As above on a clothoid, kappa(s) = kappa0 + sigma s: the model's
        // d' = (1 - kappa d) tan(theta), theta' = u (1 - kappa d) / cos(theta)
        // - kappa (per unit station), with the law's u, must give dz3/ds = w
        // for z3 = (1 - kappa(s) d) tan(theta).
        let (k_d, k_theta) = (0.3, 0.8);
        let mut law = FrenetFeedback::<f64>::new(k_d, k_theta).unwrap();
        for (d, th, k0, sigma) in [(0.4, -0.3, 0.05, 0.02), (-0.6, 0.4, -0.1, -0.05)] {
            let mut i = input(d, th, k0);
            i.sharpness = sigma;
            let u = law.curvature(&i);
            let kappa = |s: f64| k0 + sigma * s;
            let z3 = |s: f64, d: f64, th: f64| (1.0 - kappa(s) * d) * libm::tan(th);
            let h = 1e-6;
            let dd = libm::tan(th) * (1.0 - k0 * d) * h;
            let dth = (u * (1.0 - k0 * d) / libm::cos(th) - k0) * h;
            let dz3 = (z3(h, d + dd, th + dth) - z3(0.0, d, th)) / h;
            let w = -k_d * d - k_theta * z3(0.0, d, th);
            assert!((dz3 - w).abs() < 1e-5, "{dz3} vs {w}");
        }
    }

    #[test]
    fn integral_checks_and_windup() {
        let law = FrenetFeedback::<f64>::new(0.09, 0.6).unwrap();
        assert!(law.with_integral(0.06, 0.05, 0.5).is_err()); // k_i >= k_theta k_d
        let mut law = law.with_integral(0.01, 0.02, 0.5).unwrap();
        let mut i = input(0.3, 0.0, 0.0);
        for _ in 0..10_000 {
            law.curvature(&i);
        }
        assert!((law.integral() * 0.01).abs() <= 0.02 + 1e-15);
        let frozen = law.integral();
        i.saturated = true;
        law.curvature(&i);
        assert_eq!(law.integral(), frozen);
        law.reset();
        assert_eq!(law.integral(), 0.0);
    }

    #[test]
    fn integral_is_held_in_the_local_plane() {
        // Driving east with the vehicle 0.1 m left of the path: the integral
        // builds up along the left normal, +y. Turned round to drive west,
        // the same ground correction is read across the new path: the left
        // normal is now -y, so the integral reads back with the opposite
        // sign, as a downhill push does on the return pass.
        let mut law = FrenetFeedback::<f64>::tractor()
            .with_integral(0.01, 0.05, 0.5)
            .unwrap();
        let mut east = input(0.1, 0.0, 0.0);
        east.path_direction = (1.0, 0.0);
        for _ in 0..200 {
            law.curvature(&east);
        }
        let built = law.integral();
        // 200 steps of 0.1 m at d = 0.1 m: int d ds = 2 m^2.
        assert!((built - 2.0).abs() < 1e-9, "{built}");
        let mut west = input(0.0, 0.0, 0.0);
        west.path_direction = (-1.0, 0.0);
        law.curvature(&west);
        assert!((law.integral() + built).abs() < 1e-9, "{}", law.integral());
        // Heading north (up or down the slope, no push across the path).
        let mut north = input(0.0, 0.0, 0.0);
        north.path_direction = (0.0, 1.0);
        law.curvature(&north);
        assert!(law.integral().abs() < 1e-9);
        // Without a direction the integral is the plain scalar of the path frame.
        let mut plain = FrenetFeedback::<f64>::tractor()
            .with_integral(0.01, 0.05, 0.5)
            .unwrap();
        for _ in 0..200 {
            plain.curvature(&input(0.1, 0.0, 0.0));
        }
        assert!((plain.integral() - 2.0).abs() < 1e-9);
    }

    #[test]
    fn near_the_centre_of_a_tight_arc_turns_out_towards_the_path() {
        // Inside a left arc of 0.8 m radius (kappa = 1.25), 0.7 m left of
        // the path, heading along it: 1 - kappa d = 0.125 is outside the
        // chained form's domain. The way back is to the right (negative).
        let mut law = FrenetFeedback::<f64>::small_robot();
        assert!(law.curvature(&input(0.7, 0.0, 1.25)) < -1.0);
        assert!(law.curvature(&input(0.7, -0.1, 1.25)) < -1.0);
        // The mirror case inside a right arc turns left.
        assert!(law.curvature(&input(-0.7, 0.0, -1.25)) > 1.0);
    }

    #[test]
    fn gains_from_a_second_order_response() {
        // d'' + k_theta d' + k_d d = 0 against the standard second-order form
        // s^2 + 2 zeta omega s + omega^2 (e.g. Ogata, Modern Control
        // Engineering, on second-order systems; from memory): omega = 0.3 /m,
        // zeta = 0.7 give k_d = 0.09 /m^2 and k_theta = 0.42 /m.
        let mut law = FrenetFeedback::<f64>::from_response(0.3, 0.7).unwrap();
        // On a straight line u = cos^3(theta) (-k_d d - k_theta tan(theta)):
        // d = 1 m alone gives -k_d, theta alone -k_theta cos^3 tan.
        assert!((law.curvature(&input(1.0, 0.0, 0.0)) + 0.09).abs() < 1e-15);
        let th = 0.1f64;
        let want = -0.42 * libm::pow(libm::cos(th), 3.0) * libm::tan(th);
        assert!((law.curvature(&input(0.0, th, 0.0)) - want).abs() < 1e-15);
        for (omega, zeta) in [(0.0, 1.0), (-0.3, 1.0), (0.3, 0.0), (0.3, -1.0)] {
            assert_eq!(
                FrenetFeedback::<f64>::from_response(omega, zeta),
                Err(SteerError::OutOfRange),
                "{omega} {zeta}"
            );
        }
        // Non-finite wins over out of range, as in `new`.
        for (omega, zeta) in [(f64::NAN, 1.0), (0.3, f64::INFINITY), (f64::NAN, -1.0)] {
            assert_eq!(
                FrenetFeedback::<f64>::from_response(omega, zeta),
                Err(SteerError::NonFinite)
            );
        }
    }

    #[test]
    fn left_normal_from_the_path_direction() {
        // Left normal of a unit tangent: rotated +90 degrees.
        let normal = |t: (f64, f64)| {
            FrenetFeedback::<f64>::left_normal(&SteeringInput {
                path_direction: t,
                ..Default::default()
            })
        };
        assert_eq!(normal((1.0, 0.0)), (0.0, 1.0));
        assert_eq!(normal((0.0, 1.0)), (-1.0, 0.0));
        assert_eq!(normal((0.0, -1.0)), (1.0, 0.0));
        assert_eq!(normal((-1.0, 0.0)), (0.0, -1.0));
        // Unknown direction (0, 0): the fixed normal of the path frame. The
        // edge is |t|^2 = 1/2 (a unit tangent is far above it): at the edge
        // the fixed normal, just above it the tangent's own.
        assert_eq!(normal((0.0, 0.0)), (0.0, 1.0));
        assert_eq!(normal((0.5, 0.5)), (0.0, 1.0));
        assert_eq!(normal((0.5, 0.5 + 1e-9)), (-(0.5 + 1e-9), 0.5));
    }

    #[test]
    fn edge_of_the_frame_domain_near_the_centre_of_curvature() {
        // The chained form needs 1 - kappa d > 0; below MIN_FRAME_SCALE the
        // law turns at full curvature out towards the path (module docs).
        // kappa = 0.5 1/m: 1 - kappa d = 0.19 (inside the edge) and 0.21
        // (outside it), on both sides of a left and a right arc.
        let mut law = FrenetFeedback::<f64>::tractor();
        let d_at = |scale: f64, kappa: f64| (1.0 - scale) / kappa;
        for kappa in [0.5, -0.5] {
            let beyond = law.curvature(&input(d_at(0.19, kappa), 0.0, kappa));
            assert_eq!(beyond, -kappa.signum() * FULL_TURN, "{kappa}");
            let within = law.curvature(&input(d_at(0.21, kappa), 0.0, kappa));
            assert!(within.is_finite() && within.abs() < FULL_TURN, "{within}");
            // Within the domain the law still turns out, away from the centre.
            assert!(within * kappa < 0.0, "{within}");
        }
    }

    #[test]
    fn rear_axle_on_the_concentric_circle_of_the_control_point() {
        // Arc of radius R = 5 m, control point a = 2 m ahead of the rear
        // axle. Hand geometry: with the control point on the arc and the body
        // tangent to the circle the rear axle runs on, that circle has radius
        // sqrt(R^2 - a^2) = sqrt(21) m, 5 - sqrt(21) = 0.417 m left of the
        // arc. There the law must command that circle's curvature exactly.
        let mut law = FrenetFeedback::<f64>::tractor();
        for kappa in [0.2f64, -0.2] {
            let r = 1.0 / kappa.abs();
            let inner = libm::sqrt(r * r - 4.0);
            let on = SteeringInput {
                cross_track: kappa.signum() * (r - inner),
                curvature: kappa,
                control_point: 2.0,
                speed: 2.0,
                dt: 0.05,
                ..Default::default()
            };
            let u = law.curvature(&on);
            assert!((u - kappa.signum() / inner).abs() < 1e-12, "{u}");
        }
    }

    #[test]
    fn integral_advances_with_the_station_rate_of_the_frenet_model() {
        // Frenet-frame kinematics (module docs, the model of Samson 1995):
        // s' = v cos(theta) / (1 - kappa d). One step of dt adds d * ds with
        // ds = v dt cos(theta) / (1 - kappa d): v = 2 m/s, dt = 0.05 s,
        // theta = 0.3 rad, kappa = 0.2 1/m, d = 0.4 m -> 1 - kappa d = 0.92.
        let mut law = FrenetFeedback::<f64>::tractor()
            .with_integral(0.01, 0.05, 0.5)
            .unwrap();
        let ds = 2.0 * 0.05 * libm::cos(0.3) / 0.92;
        // Driving north (left normal -x, so the integral is stored along x)
        // and north-north-east (both components).
        let mut step = input(0.4, 0.3, 0.2);
        for direction in [(0.0, 1.0), (0.6, 0.8)] {
            law.reset();
            step.path_direction = direction;
            law.curvature(&step);
            assert!(
                (law.integral() - 0.4 * ds).abs() < 1e-15,
                "{}",
                law.integral()
            );
            law.curvature(&step);
            assert!(
                (law.integral() - 0.8 * ds).abs() < 1e-15,
                "{}",
                law.integral()
            );
        }
        // Reversing speed: the distance travelled is |v| dt.
        let mut back = FrenetFeedback::<f64>::tractor()
            .with_integral(0.01, 0.05, 0.5)
            .unwrap();
        let mut rev = step;
        rev.speed = -2.0;
        back.curvature(&rev);
        assert!((back.integral() - 0.4 * ds).abs() < 1e-15);
    }

    #[test]
    fn integral_band_edge_and_no_integral_without_gain() {
        // Integrates while |d| < band (0.5 m): at 0.5 m not, just inside yes.
        let mut law = FrenetFeedback::<f64>::tractor()
            .with_integral(0.01, 0.05, 0.5)
            .unwrap();
        law.curvature(&input(0.5, 0.0, 0.0));
        assert_eq!(law.integral(), 0.0);
        law.curvature(&input(-0.5, 0.0, 0.0));
        assert_eq!(law.integral(), 0.0);
        law.curvature(&input(0.499, 0.0, 0.0));
        assert!((law.integral() - 0.499 * 0.1).abs() < 1e-15); // ds = 2 * 0.05
                                                               // Anti-windup: the state stops at |k_i int d ds| = limit (0.05 1/m),
                                                               // i.e. 5 m^2, in any direction on the ground (here north-north-east).
        let mut long = FrenetFeedback::<f64>::tractor()
            .with_integral(0.01, 0.05, 0.5)
            .unwrap();
        let mut nne = input(0.3, 0.0, 0.0);
        nne.path_direction = (0.6, 0.8);
        for _ in 0..400 {
            long.curvature(&nne); // 400 * 0.3 * 0.1 = 12 m^2 unclamped
        }
        assert!((long.integral() - 5.0).abs() < 1e-12, "{}", long.integral());
        // Without an integral term nothing is integrated.
        let mut plain = FrenetFeedback::<f64>::tractor();
        for _ in 0..10 {
            plain.curvature(&input(0.1, 0.0, 0.0));
        }
        assert_eq!(plain.integral(), 0.0);
    }

    #[test]
    fn outside_domain_turns_toward_path() {
        let mut law = FrenetFeedback::<f64>::tractor();
        assert!(law.curvature(&input(0.0, 2.0, 0.0)) < -1.0);
        assert!(law.curvature(&input(0.0, -2.0, 0.0)) > 1.0);
    }
}
