//! The guidance supervisor: decides, each cycle, whether the steering law
//! may steer, and what to command when it may not.
//!
//! # States and commands
//!
//! | state ([`GuidanceStatus`]) | entered when | command |
//! |---|---|---|
//! | `Acquiring` | start, [`crate::Guidance::reset`] | straighten, stop request |
//! | `Following` | the path is acquired and every check passes | steering law, speed cap |
//! | `Degraded` | the fix is missing, stale, non-finite, jumped or below the quality gate | hold the last curvature and speed limit |
//! | `Lost` | `Degraded` for longer than `hold_time`; cross-track or heading error beyond its limit; the tracker lost the path | straighten, stop request |
//! | `EndOfPath` | within `end_tolerance` of the end of an open path | hold the last curvature, stop request |
//! | `Standby` | [`crate::Guidance::standby`], or a manual override | neutral (zero curvature), stop request; the tracker kept on the path |
//! | `Fault` | a zero period, or time going backwards (this cycle only; after `FAULT_CYCLES_TO_RESTART` such cycles in a row the new time base is taken and the guidance starts again in `Acquiring`) | hold the last curvature, stop request |
//!
//! "Straighten" ramps the curvature to zero at the steering-rate limit;
//! "stop request" is `speed_limit = 0`. Every command passes the limiter,
//! and a last check replaces anything non-finite by the `Fault` command,
//! so no state outputs NaN.
//!
//! # Transitions
//!
//! * `Acquiring` -> `Following`: a usable fix, the tracker finds the path
//!   within `lost_distance`, and the errors are within their limits.
//! * `Following` -> `Degraded`: no usable fix this cycle. `Degraded` ->
//!   `Following`: a usable fix consistent with the last accepted one
//!   (within `max_jump + jump_growth * elapsed` of where dead reckoning puts
//!   it).
//! * `Degraded` -> `Lost`: after `hold_time` without a usable fix.
//! * `Following` -> `Lost`: a limit is exceeded or the tracker reports
//!   `Lost`.
//! * `Lost` -> `Following`: re-acquisition. The tracker never re-acquires
//!   on its own (a position jump may put it near the wrong pass); the
//!   supervisor resets it and runs a full acquisition once
//!   `confirm_fixes` consecutive fixes agree with each other (so a single
//!   outlier cannot pull the tracker onto another pass), and accepts the
//!   result only within the cross-track and heading limits.
//! * `Following` -> `EndOfPath`: near the end of an open path; latched
//!   until [`crate::Guidance::reset`].
//!
//! A fix is *usable* if every field is finite, it is not older than
//! `max_fix_age` at `now` (nor stamped more than `max_fix_age` after `now`),
//! its time does not go backwards, its quality passes the gate
//! (`min_solution`, `max_sigma`) and it is consistent with the last
//! accepted fix (no jump). A cycle with [`FixUpdate::Unchanged`] (no new
//! fix) uses the last new fix, if it was usable, dead-reckoned to `now`
//! while it is younger than `max_fix_age`: at 20 Hz control and 10 Hz fixes
//! every cycle is `Following`. [`FixUpdate::NoFix`] is a missing fix at once.
//!
//! Every command that is not plain following carries its
//! [`Reason`] (`Command::reason`): for
//! `Degraded` the current cause, for `Lost` what led there.
//!
//! Times are [`Micros`] (integer, wrapping); only differences of two
//! instants are turned into seconds, so the checks are the same after 200
//! days of uptime as at start-up.
//!
//! Caution: this supervisor is a guidance function, not a certified safety
//! function; keep an independent emergency stop and the machine's own
//! safety functions (e.g. ISO 25119, ISO 18497, ISO 3691-4, IEC 61508).

use crate::guide::cycle::{Fix, FixQuality, FixUpdate, GuidanceStatus, Reason, Solution};
use crate::guide::time::Micros;
use crate::num::real::{c, Real};
use crate::steer::law::SteerError;
use crate::steer::vehicle::Vehicle;

/// Supervisor limits. Times in seconds, distances in metres, angles in radians.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SupervisorConfig<T> {
    /// A fix older than this at `now` is stale, s (> 0).
    pub max_fix_age: T,
    /// How long the last curvature is held without a usable fix, s (>= 0).
    pub hold_time: T,
    /// Largest cross-track error steered back from, m (> 0).
    pub max_cross_track: T,
    /// Largest heading error steered back from, rad (0 < x <= pi).
    pub max_heading_error: T,
    /// Largest disagreement of a fix with dead reckoning from the last
    /// accepted fix, m (> 0): beyond it the fix has jumped.
    pub max_jump: T,
    /// Growth of that tolerance with the time since the last accepted fix,
    /// m/s (>= 0).
    pub jump_growth: T,
    /// Consecutive mutually consistent fixes needed to re-acquire (>= 1).
    pub confirm_fixes: u32,
    /// Distance before the end of an open path that counts as arrived, m (>= 0).
    pub end_tolerance: T,
    /// Distance before a cusp at which the vehicle is asked to stop, m (>= 0).
    pub cusp_tolerance: T,
    /// Speed below which the vehicle counts as stopped at a cusp, m/s (> 0).
    pub stopped_speed: T,
    /// Lowest solution steered with (`None`: no gate). A fix below it (or
    /// [`Solution::Unrated`]) counts as missing, with
    /// [`Reason::LowSolution`]: `Degraded`, then `Lost` after `hold_time`.
    /// A carrier-phase machine would set `Some(Solution::Fixed)`, or
    /// `Some(Solution::Float)` to ride through short float spells.
    pub min_solution: Option<Solution>,
    /// Largest position sigma steered with, metres (> 0; `None`: no gate).
    /// A fix with a larger [`FixQuality::sigma`], or none, counts as
    /// missing, with [`Reason::LargeSigma`].
    pub max_sigma: Option<T>,
}

impl<T: Real> SupervisorConfig<T> {
    /// Defaults for `vehicle` (common practice, tune for the machine):
    /// fixes stale after 0.3 s, hold 0.5 s, cross-track limit 1.5 m,
    /// heading limit 1.0 rad, jump 0.5 m + 0.5 m/s, 5 confirming fixes, end
    /// and cusp tolerances 0.1 m (0.05 m for vehicles at most 2 m/s),
    /// stopped below 0.05 m/s, no quality gate.
    pub fn default_for(vehicle: &Vehicle<T>) -> Self {
        let small = vehicle.max_speed() <= c(2.0);
        let tol = if small { c(0.05) } else { c(0.1) };
        Self {
            max_fix_age: c(0.3),
            hold_time: c(0.5),
            max_cross_track: c(1.5),
            max_heading_error: c(1.0),
            max_jump: c(0.5),
            jump_growth: c(0.5),
            confirm_fixes: 5,
            end_tolerance: tol,
            cusp_tolerance: tol,
            stopped_speed: c(0.05),
            min_solution: None,
            max_sigma: None,
        }
    }

    /// Checks every field against its documented range.
    ///
    /// # Errors
    /// [`SteerError::NonFinite`] or [`SteerError::OutOfRange`].
    pub fn check(&self) -> Result<(), SteerError> {
        let all = [
            self.max_fix_age,
            self.hold_time,
            self.max_cross_track,
            self.max_heading_error,
            self.max_jump,
            self.jump_growth,
            self.end_tolerance,
            self.cusp_tolerance,
            self.stopped_speed,
            self.max_sigma.unwrap_or(T::ONE),
        ];
        if all.iter().any(|v| !v.is_finite()) {
            return Err(SteerError::NonFinite);
        }
        let ok = self.max_fix_age > T::ZERO
            && self.hold_time >= T::ZERO
            && self.max_cross_track > T::ZERO
            && self.max_heading_error > T::ZERO
            && self.max_heading_error <= T::PI
            && self.max_jump > T::ZERO
            && self.jump_growth >= T::ZERO
            && self.confirm_fixes >= 1
            && self.end_tolerance >= T::ZERO
            && self.cusp_tolerance >= T::ZERO
            && self.stopped_speed > T::ZERO
            && self.max_sigma.is_none_or(|s| s > T::ZERO);
        if ok {
            Ok(())
        } else {
            Err(SteerError::OutOfRange)
        }
    }
}

/// The supervisor's state (the persistent part of [`GuidanceStatus`]).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) enum Mode {
    Acquiring,
    Following,
    /// Holding since the given time.
    Degraded(Micros),
    Lost,
    EndOfPath,
}

impl Mode {
    pub(crate) fn status(&self) -> GuidanceStatus {
        match self {
            Mode::Acquiring => GuidanceStatus::Acquiring,
            Mode::Following => GuidanceStatus::Following,
            Mode::Degraded(_) => GuidanceStatus::Degraded,
            Mode::Lost => GuidanceStatus::Lost,
            Mode::EndOfPath => GuidanceStatus::EndOfPath,
        }
    }
}

/// What the fix checks found.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Verdict<T> {
    /// Usable: the fix extrapolated to `now` (position, heading, speed).
    Usable(Fix<T>),
    /// Finite and fresh but inconsistent with the last accepted fix; carries
    /// it extrapolated to `now`.
    Jumped(Fix<T>),
    /// Missing, stale, non-finite, going back in time or below the
    /// quality gate, for the reason given.
    Unusable(Reason),
}

impl<T> Verdict<T> {
    /// Why the fix cannot be steered with, if it cannot.
    pub(crate) fn reason(&self) -> Option<Reason> {
        match self {
            Verdict::Usable(_) => None,
            Verdict::Jumped(_) => Some(Reason::Jump),
            Verdict::Unusable(r) => Some(*r),
        }
    }
}

/// The fix checks and their memory.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct FixMonitor<T> {
    accepted: Option<Oriented<T>>,
    raw: Option<Oriented<T>>,
    /// Consecutive finite, fresh fixes consistent with the one before.
    pub(crate) agreeing: u32,
    /// `true` if the last new fix (`raw`) was usable when it came: dead
    /// reckoning on cycles without a new fix starts from it. (A flag, not a
    /// second copy of the fix: one copy less per cycle.)
    held: bool,
    /// Why the last new fix was not usable (for cycles without a new one).
    refused: Reason,
    /// The heading of the last verdict's fix (rad; NaN: none) and its unit
    /// vector `(sin, cos)` (see [`FixMonitor::direction`]).
    last: (T, (T, T)),
}

/// A fix with the unit vector of its heading, `(sin, cos)`: one `sin_cos`
/// per new fix; dead reckoning rotates the vector by a series in the
/// small turn instead of evaluating the trigonometry again.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Oriented<T> {
    fix: Fix<T>,
    dir: (T, T),
}

impl<T: Real> Oriented<T> {
    fn of(fix: Fix<T>) -> Self {
        Self {
            fix,
            dir: fix.heading.sin_cos(),
        }
    }
}

/// Largest angle (rad) [`rotate`] uses its series for: the first omitted
/// terms (`a^10 / 10!`, `a^11 / 11!`) stay below half an ulp of `T`.
fn series_limit<T: Real>() -> T {
    if T::EPSILON > c(1e-10) {
        c(0.5)
    } else {
        c(0.1)
    }
}

/// `(sin a, cos a)` by the Taylor series (Horner in `a^2`, through `a^8`
/// for the cosine and `a^9` for the sine), or `None` if `|a|` is beyond
/// [`series_limit`] (or not finite). Within the limit it is exact to the
/// rounding of `T` (truncation below `0.5^10 / 10! = 2.7e-10` in `f32`,
/// `0.1^10 / 10! = 2.8e-17` in `f64`).
fn small_sin_cos<T: Real>(a: T) -> Option<(T, T)> {
    let within = a.abs() <= series_limit::<T>();
    if !within {
        return None;
    }
    let z = a * a;
    let cos = T::ONE
        - z * T::HALF
            * (T::ONE
                - z * c(1.0 / 12.0) * (T::ONE - z * c(1.0 / 30.0) * (T::ONE - z * c(1.0 / 56.0))));
    let sin = a
        * (T::ONE
            - z * c(1.0 / 6.0)
                * (T::ONE
                    - z * c(1.0 / 20.0)
                        * (T::ONE - z * c(1.0 / 42.0) * (T::ONE - z * c(1.0 / 72.0)))));
    Some((sin, cos))
}

/// The unit vector `(sin, cos)` of `dir` turned counter-clockwise by `r = (sin a, cos a)`.
fn rotate<T: Real>(dir: (T, T), r: (T, T)) -> (T, T) {
    let (s, co) = dir;
    let (rs, rc) = r;
    (s * rc + co * rs, co * rc - s * rs)
}

fn predicts<T: Real>(from: &Oriented<T>, to: &Fix<T>, tol: T) -> bool {
    let (s, co) = from.dir;
    let from = &from.fix;
    let dt = to.time.seconds_since::<T>(from.time);
    let px = from.x + from.speed * dt * co;
    let py = from.y + from.speed * dt * s;
    let ex = to.x - px;
    let ey = to.y - py;
    ex * ex + ey * ey <= tol * tol
}

impl<T: Real> FixMonitor<T> {
    pub(crate) fn new() -> Self {
        Self {
            accepted: None,
            raw: None,
            agreeing: 0,
            held: false,
            refused: Reason::NoFix,
            last: (c(f64::NAN), (T::ZERO, T::ONE)),
        }
    }

    /// `(sin, cos)` of `heading` (rad): the unit vector dead reckoning
    /// carried if `heading` is that of the last verdict's fix (no
    /// trigonometry on the per-cycle path), else `sin_cos`.
    pub(crate) fn direction(&self, heading: T) -> (T, T) {
        let (h, dir) = self.last;
        if h == heading {
            dir
        } else {
            heading.sin_cos()
        }
    }

    /// Forgets the last accepted fix (after re-acquisition accepts a new
    /// one). The last new fix, even if it was refused as a jump, becomes
    /// the one cycles without a new fix dead-reckon from.
    pub(crate) fn forget_accepted(&mut self) {
        self.accepted = None;
        self.held = self.raw.is_some();
    }

    /// Marks `fix` as accepted (the guidance steered with it).
    pub(crate) fn accept(&mut self, fix: Fix<T>) {
        let dir = self.direction(fix.heading);
        self.accepted = Some(Oriented { fix, dir });
    }

    /// Checks one cycle's fix update at time `now`; `curvature` (1/m) is
    /// the body curvature being driven, for the latency compensation.
    pub(crate) fn check(
        &mut self,
        update: &FixUpdate<T>,
        now: Micros,
        cfg: &SupervisorConfig<T>,
        curvature: T,
    ) -> Verdict<T> {
        match update {
            FixUpdate::NoFix => {
                self.held = false;
                self.refused = Reason::NoFix;
                Verdict::Unusable(Reason::NoFix)
            }
            FixUpdate::Unchanged => self.check_held(now, cfg, curvature),
            FixUpdate::New(f) => {
                let f = Oriented::of(*f);
                let verdict = self.check_new(&f, now, cfg, curvature);
                match verdict {
                    // `check_new` kept `f` as the last raw fix.
                    Verdict::Usable(_) => self.held = true,
                    Verdict::Jumped(_) | Verdict::Unusable(_) => {
                        self.held = false;
                        self.refused = verdict.reason().unwrap_or(Reason::BadFix);
                    }
                }
                verdict
            }
        }
    }

    /// No new fix this cycle: the last one, dead-reckoned to `now`, while
    /// it is fresh. It was checked when it came; it is not counted again
    /// towards `agreeing`.
    fn check_held(&mut self, now: Micros, cfg: &SupervisorConfig<T>, curvature: T) -> Verdict<T> {
        let Some(f) = self.raw.filter(|_| self.held) else {
            return Verdict::Unusable(self.refused);
        };
        let age = now.seconds_since::<T>(f.fix.time);
        if age > cfg.max_fix_age || age < -cfg.max_fix_age {
            return Verdict::Unusable(Reason::StaleFix);
        }
        let e = extrapolate(&f, now, curvature);
        self.last = (e.fix.heading, e.dir);
        Verdict::Usable(e.fix)
    }

    fn check_new(
        &mut self,
        of: &Oriented<T>,
        now: Micros,
        cfg: &SupervisorConfig<T>,
        curvature: T,
    ) -> Verdict<T> {
        let f = &of.fix;
        let finite =
            f.x.is_finite() && f.y.is_finite() && f.heading.is_finite() && f.speed.is_finite();
        let age = now.seconds_since::<T>(f.time);
        let backwards = self
            .raw
            .is_some_and(|r| f.time.micros_since(r.fix.time) < 0);
        let fresh = age <= cfg.max_fix_age;
        // A fix stamped later than `now` by more than the allowed age is a
        // clock fault (a receiver time glitch). Kept as the last raw fix it
        // would make every later, genuine fix look as if it went back in time.
        let from_future = age < -cfg.max_fix_age;
        if !finite || backwards || from_future {
            self.agreeing = 0;
        }
        // A late fix is usually older than the one before it too: report
        // it as stale, the more useful cause.
        if !finite {
            return Verdict::Unusable(Reason::BadFix);
        }
        if from_future || !fresh {
            return Verdict::Unusable(Reason::StaleFix);
        }
        if backwards {
            return Verdict::Unusable(Reason::BadFix);
        }
        if let Err(reason) = gate(&f.quality, cfg) {
            // Not counted towards re-acquisition, but remembered as the
            // last raw fix so the first good one after it can agree with it.
            self.agreeing = 0;
            self.raw = Some(*of);
            return Verdict::Unusable(reason);
        }
        // Consistency with the previous raw fix (for re-acquisition).
        let agrees = self.raw.is_some_and(|r| {
            let tol = cfg.max_jump + cfg.jump_growth * f.time.seconds_since::<T>(r.fix.time);
            predicts(&r, f, tol)
        });
        self.agreeing = if agrees {
            self.agreeing.saturating_add(1)
        } else {
            1
        };
        self.raw = Some(*of);
        let now_fix = extrapolate(of, now, curvature);
        self.last = (now_fix.fix.heading, now_fix.dir);
        let now_fix = now_fix.fix;
        match self.accepted {
            Some(a) => {
                let since = f.time.seconds_since::<T>(a.fix.time).max(T::ZERO);
                let tol = cfg.max_jump + cfg.jump_growth * since;
                if predicts(&a, f, tol) {
                    Verdict::Usable(now_fix)
                } else {
                    Verdict::Jumped(now_fix)
                }
            }
            None => Verdict::Usable(now_fix),
        }
    }
}

/// The quality gate: `Err` with the reason if the fix's rating is below
/// the configured minimum.
fn gate<T: Real>(q: &FixQuality<T>, cfg: &SupervisorConfig<T>) -> Result<(), Reason> {
    if q.solution == Solution::Invalid {
        return Err(Reason::NoFix);
    }
    if cfg.min_solution.is_some_and(|min| !q.solution.meets(min)) {
        return Err(Reason::LowSolution);
    }
    if let Some(max) = cfg.max_sigma {
        let ok = q.sigma.is_some_and(|s| s.is_finite() && s <= max);
        if !ok {
            return Err(Reason::LargeSigma);
        }
    }
    Ok(())
}

/// Dead-reckons a fix forward to `now` (latency compensation; the age is
/// at most `max_fix_age`) along the arc of the body curvature being driven:
/// the heading turns by `curvature * speed * age` and the position moves
/// along the chord of that arc.
///
/// Carrying the fix's own heading forward unchanged would leave it late by
/// the yaw during the latency (0.02 rad at 0.2 1/m, 2 m/s and 50 ms); the
/// laws read that as a heading error and settle off the path on every
/// curve (by `k_theta / k_d` times it for the Frenet law: 8 cm in the
/// field scenario's headland turns).
///
/// The heading's unit vector is turned by the series of [`small_sin_cos`]
/// (exact to the rounding of `T` within [`series_limit`]; `sin_cos` of
/// the headings beyond it).
fn extrapolate<T: Real>(o: &Oriented<T>, now: Micros, curvature: T) -> Oriented<T> {
    let f = &o.fix;
    let age = now.seconds_since::<T>(f.time).max(T::ZERO);
    let distance = f.speed * age;
    let turn = if curvature.is_finite() {
        curvature * distance
    } else {
        T::ZERO
    };
    // Chord of the arc: length distance * sinc(turn / 2), along the mid heading.
    let half = T::HALF * turn;
    let chord = distance * (T::ONE - half * half / c(6.0));
    // Straight on (no turn): the vector as it is.
    let (mid, end) = if half == T::ZERO {
        (o.dir, o.dir)
    } else if let Some(r) = small_sin_cos(half) {
        let mid = rotate(o.dir, r);
        (mid, rotate(mid, r))
    } else {
        ((f.heading + half).sin_cos(), (f.heading + turn).sin_cos())
    };
    let (s, co) = mid;
    // The extrapolated fix is stamped with the time it now stands for: it
    // becomes the accepted fix, from which the next fix is predicted, and
    // keeping the old stamp would count the latency displacement twice
    // (a false jump of `speed * age`, 0.4 m at 8 m/s and 50 ms).
    let fix = Fix {
        x: f.x + chord * co,
        y: f.y + chord * s,
        heading: f.heading + turn,
        time: if now.is_after(f.time) { now } else { f.time },
        ..*f
    };
    Oriented { fix, dir: end }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Microseconds of `t` seconds.
    fn us(t: f64) -> Micros {
        Micros((t * 1e6).round() as u32)
    }

    fn fix(x: f64, t: f64) -> Fix<f64> {
        Fix::new(x, 0.0, 0.0, 1.0, us(t))
    }

    fn new(f: Fix<f64>) -> FixUpdate<f64> {
        FixUpdate::New(f)
    }

    #[test]
    fn config_checks() {
        let v = Vehicle::<f64>::front_steered(2.5, 0.6, 0.5).unwrap();
        let cfg = SupervisorConfig::default_for(&v);
        assert!(cfg.check().is_ok());
        let bad = SupervisorConfig {
            confirm_fixes: 0,
            ..cfg
        };
        assert_eq!(bad.check(), Err(SteerError::OutOfRange));
        let bad = SupervisorConfig {
            hold_time: f64::NAN,
            ..cfg
        };
        assert_eq!(bad.check(), Err(SteerError::NonFinite));
        let bad = SupervisorConfig {
            max_sigma: Some(0.0),
            ..cfg
        };
        assert_eq!(bad.check(), Err(SteerError::OutOfRange));
        let bad = SupervisorConfig {
            max_sigma: Some(f64::INFINITY),
            ..cfg
        };
        assert_eq!(bad.check(), Err(SteerError::NonFinite));
    }

    #[test]
    fn monitor_flags_jumps_stale_and_nan() {
        let v = Vehicle::<f64>::front_steered(2.5, 0.6, 0.5).unwrap();
        let cfg = SupervisorConfig::default_for(&v);
        let mut m = FixMonitor::new();
        let a = fix(0.0, 0.0);
        assert!(matches!(
            m.check(&new(a), us(0.0), &cfg, 0.0),
            Verdict::Usable(_)
        ));
        m.accept(a);
        let b = fix(0.1, 0.1);
        assert!(matches!(
            m.check(&new(b), us(0.1), &cfg, 0.0),
            Verdict::Usable(_)
        ));
        let far = fix(5.2, 0.2);
        assert!(matches!(
            m.check(&new(far), us(0.2), &cfg, 0.0),
            Verdict::Jumped(_)
        ));
        assert_eq!(m.agreeing, 1);
        // No new fix after a jumped one: still not usable, for the jump.
        assert_eq!(
            m.check(&FixUpdate::Unchanged, us(0.25), &cfg, 0.0),
            Verdict::Unusable(Reason::Jump)
        );
        let stale = fix(0.3, 0.3);
        assert_eq!(
            m.check(&new(stale), us(1.0), &cfg, 0.0),
            Verdict::Unusable(Reason::StaleFix)
        );
        let nan = fix(f64::NAN, 1.0);
        assert_eq!(
            m.check(&new(nan), us(1.0), &cfg, 0.0),
            Verdict::Unusable(Reason::BadFix)
        );
        assert_eq!(m.agreeing, 0);
        assert_eq!(
            m.check(&FixUpdate::NoFix, us(1.0), &cfg, 0.0),
            Verdict::Unusable(Reason::NoFix)
        );
    }

    #[test]
    fn no_new_fix_dead_reckons_until_stale() {
        let v = Vehicle::<f64>::front_steered(2.5, 0.6, 0.5).unwrap();
        let cfg = SupervisorConfig::default_for(&v); // max_fix_age 0.3 s
        let mut m = FixMonitor::new();
        assert!(matches!(
            m.check(&new(fix(0.0, 0.0)), us(0.0), &cfg, 0.0),
            Verdict::Usable(_)
        ));
        // 0.2 s later without a new fix: 1 m/s straight on, 0.2 m further.
        match m.check(&FixUpdate::Unchanged, us(0.2), &cfg, 0.0) {
            Verdict::Usable(f) => assert!((f.x - 0.2).abs() < 1e-12 && f.time == us(0.2)),
            other => panic!("{other:?}"),
        }
        assert_eq!(m.agreeing, 1, "a held fix is not counted again");
        assert_eq!(
            m.check(&FixUpdate::Unchanged, us(0.31), &cfg, 0.0),
            Verdict::Unusable(Reason::StaleFix)
        );
    }

    #[test]
    fn quality_gate() {
        let v = Vehicle::<f64>::front_steered(2.5, 0.6, 0.5).unwrap();
        let cfg = SupervisorConfig {
            min_solution: Some(Solution::Float),
            max_sigma: Some(0.1),
            ..SupervisorConfig::default_for(&v)
        };
        let rated = |solution, sigma| {
            fix(0.0, 0.0).with_quality(FixQuality {
                solution,
                sigma,
                ..FixQuality::default()
            })
        };
        let cases = [
            (rated(Solution::Fixed, Some(0.02)), None),
            (rated(Solution::Float, Some(0.1)), None),
            (
                rated(Solution::Differential, Some(0.02)),
                Some(Reason::LowSolution),
            ),
            (
                rated(Solution::Unrated, Some(0.02)),
                Some(Reason::LowSolution),
            ),
            (rated(Solution::Invalid, Some(0.02)), Some(Reason::NoFix)),
            (rated(Solution::Fixed, Some(0.11)), Some(Reason::LargeSigma)),
            (rated(Solution::Fixed, None), Some(Reason::LargeSigma)),
            (
                rated(Solution::Fixed, Some(f64::NAN)),
                Some(Reason::LargeSigma),
            ),
        ];
        for (f, want) in cases {
            let mut m = FixMonitor::new();
            let got = m.check(&new(f), us(0.0), &cfg, 0.0).reason();
            assert_eq!(got, want, "{:?}", f.quality);
        }
        // Without a gate an unrated fix is used.
        let mut m = FixMonitor::new();
        let open = SupervisorConfig::default_for(&v);
        assert_eq!(
            m.check(&new(fix(0.0, 0.0)), us(0.0), &open, 0.0).reason(),
            None
        );
    }

    #[test]
    fn small_turn_series_matches_libm() {
        // Reference: libm::sinf / cosf and libm::sin / cos.
        for i in -100..=100 {
            let a = 0.5 * f64::from(i) / 100.0;
            let (s, co) = small_sin_cos(a as f32).unwrap();
            let want = (libm::sinf(a as f32), libm::cosf(a as f32));
            assert!(
                (s - want.0).abs() <= 1.5 * f32::EPSILON * want.0.abs().max(1e-30),
                "{a}"
            );
            assert!((co - want.1).abs() <= 1.5 * f32::EPSILON, "{a}");
            let a = a / 5.0;
            let (s, co) = small_sin_cos(a).unwrap();
            assert!(
                (s - libm::sin(a)).abs() <= 2.0 * f64::EPSILON * libm::sin(a).abs(),
                "{a}"
            );
            assert!((co - libm::cos(a)).abs() <= 2.0 * f64::EPSILON, "{a}");
        }
        assert!(small_sin_cos(0.6_f32).is_none() && small_sin_cos(f64::NAN).is_none());
    }

    #[test]
    fn latency_compensation_follows_the_arc() {
        // On a circle of radius 5 m about the origin, counter-clockwise at
        // 2 m/s: the fix at (5, 0) heading pi/2, 50 ms old, lands where the
        // circle is 0.1 m further on (elementary geometry: angle 0.02 rad).
        let f = Fix::new(5.0, 0.0, core::f64::consts::FRAC_PI_2, 2.0, us(0.0));
        let e = extrapolate(&Oriented::of(f), us(0.05), 0.2).fix;
        assert!((e.x - 5.0 * libm::cos(0.02)).abs() < 1e-9, "{e:?}");
        assert!((e.y - 5.0 * libm::sin(0.02)).abs() < 1e-9, "{e:?}");
        assert!((e.heading - (core::f64::consts::FRAC_PI_2 + 0.02)).abs() < 1e-15);
        assert_eq!(e.time, us(0.05));
        // Straight ahead when the curvature is zero (or not finite).
        let s = extrapolate(&Oriented::of(f), us(0.05), f64::NAN).fix;
        assert!(s.x == 5.0 && (s.y - 0.1).abs() < 1e-15 && s.heading == f.heading);
    }
}
