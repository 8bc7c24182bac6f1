//! A speed cap along the path, looked ahead far enough to brake.
//!
//! Three limits at each point of the path ahead, all kinematic:
//!
//! * lateral acceleration: `v^2 |kappa| <= a_lat`, so `v <= sqrt(a_lat / |kappa|)`;
//! * steering rate on a clothoid: a front-steered vehicle at speed `v` on
//!   sharpness `sigma` needs `d delta / dt = v L sigma / (1 + (L kappa)^2)`
//!   (from `delta = atan(L kappa)`), so
//!   `v <= max_steer_rate (1 + (L kappa)^2) / (L |sigma|)`; a
//!   differential-drive robot needs `d kappa / dt = v sigma`, so
//!   `v <= max_curvature_rate / |sigma|`;
//! * the vehicle's own speed limit, and a stop at `stop_at` (a cusp or the
//!   end of an open path).
//!
//! A limit `v_i` at distance `x_i` ahead allows `v^2 <= v_i^2 + 2 a_dec x_i`
//! now (constant deceleration `a_dec`). The scan looks at each segment that
//! starts within the braking distance `v_max^2 / (2 a_dec)` plus a margin:
//! curvature is linear along a segment, so its extreme values over the part
//! in view are at the ends of that part, and the limit is applied at the
//! nearest point of that part (conservative, exact for the sharpest point).
//! At most [`SPEED_SCAN_SEGMENTS`] segments are scanned; if they do not
//! cover the braking distance, the cap plans a stop at the end of what was
//! scanned (safe, slower on paths of very many short segments).
//!
//! Curvature steps at joints of segments that are only G1 continuous have
//! infinite sharpness: no speed follows them exactly, so they are left to
//! the steering-rate limiter and are not capped here.

use crate::num::real::{c, Real};
use crate::path::anchored::Path;
use crate::steer::vehicle::{Chassis, Vehicle};

/// Most segments the speed scan looks at per call.
pub const SPEED_SCAN_SEGMENTS: usize = 24;

/// Extra distance beyond the braking distance the scan covers, metres.
const SCAN_MARGIN: f64 = 2.0;

/// The speed limit at one point from curvature `kappa` (1/m, the largest
/// magnitude over the stretch), `kappa_min` (1/m, the smallest magnitude
/// over it) and sharpness `sigma` (1/m^2), m/s.
pub fn local_speed_limit<T: Real>(vehicle: &Vehicle<T>, kappa: T, kappa_min: T, sigma: T) -> T {
    local_speed_limit_sq(vehicle, kappa, kappa_min, sigma).sqrt()
}

/// The square of [`local_speed_limit`], m^2/s^2 (no square root: the speed
/// cap compares squares and takes one root at the end).
fn local_speed_limit_sq<T: Real>(vehicle: &Vehicle<T>, kappa: T, kappa_min: T, sigma: T) -> T {
    let vmax = vehicle.max_speed();
    let mut v2 = vmax * vmax;
    let k = kappa.abs();
    if k > T::ZERO {
        v2 = v2.min(vehicle.max_lateral_acceleration() / k);
    }
    let s = sigma.abs();
    if s > T::ZERO {
        let rate_cap = match vehicle.chassis() {
            Chassis::FrontSteered { wheelbase } => {
                let lk = wheelbase * kappa_min;
                vehicle.max_steer_rate() * (T::ONE + lk * lk) / (wheelbase * s)
            }
            Chassis::DifferentialDrive { .. } => vehicle.max_curvature_rate() / s,
        };
        v2 = v2.min(rate_cap * rate_cap);
    }
    v2
}

/// The speed cap at `station` (m) on `path`, m/s: the largest speed from
/// which the vehicle can meet every limit ahead (see the module docs),
/// stopping at `stop_at` (a station, m) if given. Always finite and `>= 0`.
///
/// ```
/// use kappaline::{speed_cap, PathBuilder, Pose, Segment, Vehicle};
/// # fn main() -> Result<(), Box<dyn core::error::Error>> {
/// let path = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))?
///     .push(Segment::line(20.0)?)?
///     .push(Segment::arc(30.0, 0.25)?)? // 4 m radius
///     .build()?;
/// let v = Vehicle::front_steered(2.5, 0.7, 0.6)?
///     .with_max_lateral_acceleration(1.0)?
///     .with_max_deceleration(0.5)?;
/// // On the arc: sqrt(1.0 / 0.25) = 2 m/s.
/// assert!((speed_cap(&path, &v, 30.0, None) - 2.0).abs() < 1e-12);
/// // 4 m before it: sqrt(2^2 + 2 * 0.5 * 4) = 2.83 m/s.
/// assert!((speed_cap(&path, &v, 16.0, None) - 8f64.sqrt()).abs() < 1e-12);
/// # Ok(()) }
/// ```
pub fn speed_cap<T: Real, const N: usize>(
    path: &Path<T, N>,
    vehicle: &Vehicle<T>,
    station: T,
    stop_at: Option<T>,
) -> T {
    cap_from_square(speed_cap_sq(path, vehicle, station, stop_at))
}

/// The speed cap from its square (see [`speed_cap_sq`]), m/s: finite and
/// `>= 0`.
#[inline]
pub(crate) fn cap_from_square<T: Real>(v2: T) -> T {
    let v = v2.max(T::ZERO).sqrt();
    if v.is_finite() {
        v
    } else {
        T::ZERO
    }
}

/// The square of [`speed_cap`] before its root, m^2/s^2 (0 for a station
/// that is not finite): the guidance keeps the last root and takes a new
/// one only when this changes (on an arc or a line it does not).
#[inline]
pub(crate) fn speed_cap_sq<T: Real, const N: usize>(
    path: &Path<T, N>,
    vehicle: &Vehicle<T>,
    station: T,
    stop_at: Option<T>,
) -> T {
    speed_cap_sq_memo(path, vehicle, station, stop_at, &mut ScanMemo::new())
}

/// What a scan found when the whole braking window lay in one segment of
/// constant curvature: that segment's limit term. While the window stays
/// there, the limit is the same whatever the station (curvature does not
/// vary along the segment), so the next scan skips the segment search and
/// the limit; only the window's end is checked again. Keyed on the
/// segment's index, start station and curvature, read from the path on
/// each use (another path with the same segment gives the same term); the
/// vehicle must be the one it was found with.
#[derive(Debug, Clone, Copy)]
pub(crate) struct ScanMemo<T> {
    /// The segment, `usize::MAX` for none.
    seg: usize,
    /// Its start station, m.
    start: T,
    /// Its curvature, 1/m.
    kappa0: T,
    /// The term the scan took the minimum with (the segment's squared
    /// limit), m^2/s^2.
    term: T,
    /// The vehicle's top speed squared (m^2/s^2) and the scan's reach (m),
    /// once found: a division and two products each cycle otherwise, some
    /// hundred instructions each in soft float on an M0.
    reach: Option<(T, T)>,
}

impl<T: Real> ScanMemo<T> {
    /// No memo: the next scan runs in full.
    pub(crate) fn new() -> Self {
        Self {
            seg: usize::MAX,
            start: T::ZERO,
            kappa0: T::ZERO,
            term: T::ZERO,
            reach: None,
        }
    }
}

/// [`speed_cap_sq`] with a memo of the last scan (see [`ScanMemo`]): the
/// same result bit for bit, the scan skipped while the window stays in the
/// memo's segment. `vehicle` must be the same on every call with one memo.
pub(crate) fn speed_cap_sq_memo<T: Real, const N: usize>(
    path: &Path<T, N>,
    vehicle: &Vehicle<T>,
    station: T,
    stop_at: Option<T>,
    memo: &mut ScanMemo<T>,
) -> T {
    if !station.is_finite() {
        return T::ZERO;
    }
    let a = vehicle.max_deceleration();
    let (vmax2, horizon) = match memo.reach {
        Some(r) => r,
        None => {
            let vmax = vehicle.max_speed();
            let r = (vmax * vmax, vmax * vmax / (T::TWO * a) + c(SCAN_MARGIN));
            memo.reach = Some(r);
            r
        }
    };
    let mut v2 = vmax2;
    if let Some(stop) = stop_at {
        if stop.is_finite() {
            v2 = v2.min(T::TWO * a * (stop - station).max(T::ZERO));
        }
    }
    let s0 = path.normalize_station(station);
    if let Some(term) = memo_term(path, memo, s0, horizon) {
        return v2.min(term);
    }
    let mut seg = path.find_segment(s0);
    let mut offset = s0 - path.placed_at(seg).station;
    let mut ahead = T::ZERO; // distance from `station` to the start of the part in view
    let mut covered = false;
    for i in 0..SPEED_SCAN_SEGMENTS {
        let Some(shape) = path.segment(seg) else {
            covered = true;
            break;
        };
        let len = path.segment_length(seg);
        let u0 = offset.clamp_to(T::ZERO, len);
        let u1 = (u0 + (horizon - ahead)).min(len);
        let k0 = shape.kappa0() + shape.sigma() * u0;
        let k1 = shape.kappa0() + shape.sigma() * u1;
        let k_max = k0.abs().max(k1.abs());
        let k_min = if (k0 > T::ZERO) != (k1 > T::ZERO) && k0 != T::ZERO && k1 != T::ZERO {
            T::ZERO
        } else {
            k0.abs().min(k1.abs())
        };
        let vl2 = local_speed_limit_sq(vehicle, k_max, k_min, shape.sigma());
        let term = vl2 + T::TWO * a * ahead;
        v2 = v2.min(term);
        ahead += len - u0;
        if ahead >= horizon {
            // The whole window in the first segment, of constant
            // curvature: its term holds while the window stays there.
            // (A memo left from before stays valid: each use checks it.)
            if i == 0 && shape.sigma() == T::ZERO {
                *memo = ScanMemo {
                    seg,
                    start: path.placed_at(seg).station,
                    kappa0: shape.kappa0(),
                    term,
                    reach: Some((vmax2, horizon)),
                };
            }
            covered = true;
            break;
        }
        offset = T::ZERO;
        seg = if seg + 1 < path.len() {
            seg + 1
        } else if path.is_closed() {
            0
        } else {
            covered = true;
            break;
        };
    }
    if !covered {
        v2 = v2.min(T::TWO * a * ahead);
    }
    v2
}

/// The memo's term if the window from `s0` (normalised, m) over `horizon`
/// (m) lies in the memo's segment as the full scan would find it: the
/// segment holding `s0` (as `Path::find_segment`), with its start and
/// curvature unchanged, constant curvature, and the window's end within it.
#[inline]
fn memo_term<T: Real, const N: usize>(
    path: &Path<T, N>,
    memo: &ScanMemo<T>,
    s0: T,
    horizon: T,
) -> Option<T> {
    let (p, end) = path.placed_with_end(memo.seg)?;
    let holds = p.station == memo.start
        && p.kappa0 == memo.kappa0
        && p.sigma == T::ZERO
        && p.station <= s0
        && (s0 < end || memo.seg.saturating_add(1) == path.len());
    if !holds {
        return None;
    }
    // As the scan: the offset into the segment, clamped, and what is left
    // of the segment beyond it must cover the window.
    let len = end - p.station;
    let u0 = (s0 - p.station).clamp_to(T::ZERO, len);
    if T::ZERO + (len - u0) >= horizon {
        Some(memo.term)
    } else {
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{PathBuilder, Pose, Segment};

    #[test]
    fn steering_rate_cap_on_clothoid() {
        // d delta/ds = L sigma / (1 + (L kappa)^2): at kappa = 0, L = 2.5 m,
        // sigma = 0.01 /m^2, max rate 0.2 rad/s -> v <= 0.2 / 0.025 = 8 m/s;
        // with max rate 0.05 rad/s -> 2 m/s.
        let v = Vehicle::<f64>::front_steered(2.5, 0.6, 0.05)
            .unwrap()
            .with_max_speed(5.0)
            .unwrap()
            .with_max_lateral_acceleration(10.0)
            .unwrap();
        assert!((local_speed_limit(&v, 0.0, 0.0, 0.01) - 2.0).abs() < 1e-12);
        let path = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap()
            .push(Segment::transition(10.0, 0.0, 0.1).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let cap = speed_cap(&path, &v, 0.0, None);
        // The cap at the start of the clothoid uses kappa_min = 0.
        assert!((cap - 2.0).abs() < 1e-12, "{cap}");
    }

    /// The machine of the memo tests: 4 m/s, 1 m/s^2 lateral and braking.
    fn memo_vehicle() -> Vehicle<f32> {
        Vehicle::<f32>::front_steered(2.5, 0.6, 0.5)
            .and_then(|v| v.with_max_speed(4.0))
            .and_then(|v| v.with_max_lateral_acceleration(1.0))
            .and_then(|v| v.with_max_deceleration(1.0))
            .unwrap()
    }

    #[test]
    fn memo_scan_matches_full_scan() {
        // Driving along a line, an arc and a clothoid with one memo: each
        // result equals a fresh scan bit for bit, and on the arc, far from
        // its ends, it is the lateral limit v^2 = a_lat / |kappa|
        // (textbook circular motion: a = v^2 / r).
        let v = memo_vehicle();
        let path = PathBuilder::<f32, 4>::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap()
            .push(Segment::line(30.0).unwrap())
            .unwrap()
            .push(Segment::arc(40.0, -0.2).unwrap())
            .unwrap()
            .push(Segment::transition(20.0, -0.2, 0.1).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let mut memo = ScanMemo::new();
        let mut hits = 0;
        for i in 0..1000 {
            let s = i as f32 * 0.1;
            for stop in [None, Some(85.0)] {
                let fast = speed_cap_sq_memo(&path, &v, s, stop, &mut memo);
                let full = speed_cap_sq(&path, &v, s, stop);
                assert_eq!(fast.to_bits(), full.to_bits(), "at {s} m, stop {stop:?}");
                hits += usize::from(memo.seg != usize::MAX);
            }
        }
        assert!(hits > 0);
        let mid = speed_cap_sq_memo(&path, &v, 45.0, None, &mut memo);
        assert!((mid - 1.0 / 0.2).abs() < 1e-5, "{mid}");
        // Another path under the same memo: its own result.
        let other = PathBuilder::<f32, 4>::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap()
            .push(Segment::line(30.0).unwrap())
            .unwrap()
            .push(Segment::arc(40.0, 0.5).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let fast = speed_cap_sq_memo(&other, &v, 45.0, None, &mut memo);
        assert_eq!(
            fast.to_bits(),
            speed_cap_sq(&other, &v, 45.0, None).to_bits()
        );
        assert!((fast - 1.0 / 0.5).abs() < 1e-5, "{fast}");
    }

    #[test]
    fn memo_is_not_used_past_its_segment_either_way() {
        // A gentle arc between two tight ones (line 30 m, kappa 0.05 over
        // 40 m, 0.2 over 20 m, 0.05 over 40 m): near the end of a gentle
        // arc the tight one ahead binds, v^2 = a_lat / 0.2 + 2 a d at a
        // distance d from it (circular motion, a = v^2 / r; braking at
        // constant deceleration, v^2 = 2 a d), below the gentle arc's
        // a_lat / 0.05, so a memo reused beyond its segment shows. Driven
        // forward, then back from the last arc into the tight one, with one
        // memo; every result equals a fresh scan bit for bit.
        let v = memo_vehicle();
        let path = PathBuilder::<f32, 8>::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap()
            .push(Segment::line(30.0).unwrap())
            .unwrap()
            .push(Segment::arc(40.0, 0.05).unwrap())
            .unwrap()
            .push(Segment::arc(20.0, 0.2).unwrap())
            .unwrap()
            .push(Segment::arc(40.0, 0.05).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let mut memo = ScanMemo::new();
        let forward = (0..1300).map(|i| i as f32 * 0.1);
        let back = (0..400).map(|i| 125.0 - i as f32 * 0.1);
        for s in forward.chain(back) {
            let fast = speed_cap_sq_memo(&path, &v, s, None, &mut memo);
            let full = speed_cap_sq(&path, &v, s, None);
            assert_eq!(fast.to_bits(), full.to_bits(), "at {s} m");
        }
        // 2 m before the tight arc: 1 / 0.2 + 2 * 1 * 2 = 9 m^2/s^2, under
        // the gentle arc's 1 / 0.05 = 20 and the top speed's 16.
        let mut memo = ScanMemo::new();
        let _ = speed_cap_sq_memo(&path, &v, 40.0, None, &mut memo);
        let near = speed_cap_sq_memo(&path, &v, 68.0, None, &mut memo);
        assert!((near - 9.0).abs() < 1e-4, "{near}");
        // Back in the tight arc after a memo of the last one: 1 / 0.2 = 5.
        let _ = speed_cap_sq_memo(&path, &v, 100.0, None, &mut memo);
        let tight = speed_cap_sq_memo(&path, &v, 85.0, None, &mut memo);
        assert!((tight - 5.0).abs() < 1e-4, "{tight}");
    }

    #[test]
    fn differential_rate_and_lateral_caps() {
        // d kappa / dt = v sigma <= 2 1/m/s with sigma = 4 /m^2 -> 0.5 m/s;
        // a_lat = 1 m/s^2 on kappa = 0.25 1/m -> 2 m/s (capped at 1.5).
        let v = Vehicle::<f64>::differential(0.4, 2.0, 2.0).unwrap();
        assert!((local_speed_limit(&v, 0.0, 0.0, 4.0) - 0.5).abs() < 1e-12);
        assert!((local_speed_limit(&v, 0.25, 0.25, 0.0) - 1.5).abs() < 1e-12);
        let v = v.with_max_speed(3.0).unwrap();
        assert!((local_speed_limit(&v, 0.25, 0.25, 0.0) - 2.0).abs() < 1e-12);
    }

    #[test]
    fn part_of_a_clothoid_in_view_ends_at_the_braking_horizon() {
        // Braking distance from 4 m/s at 0.4 m/s^2: v^2 / (2 a) = 20 m
        // (constant-deceleration kinematics); the scan looks SCAN_MARGIN
        // beyond it (module docs). A line of 10 m, then a clothoid 0.02 ->
        // 0.32 1/m over 30 m (sigma = 0.01 1/m^2) that runs past the horizon:
        // the part in view ends at the horizon, where kappa = 0.02 + 0.01 *
        // (horizon - 10), and that kappa's limit sqrt(a_lat / kappa) (v^2 / r
        // = a_lat) is applied at the clothoid's start, v^2 + 2 a x.
        let v = Vehicle::<f64>::front_steered(2.5, 0.6, 0.5)
            .unwrap()
            .with_max_deceleration(0.4)
            .unwrap()
            .with_max_lateral_acceleration(0.3)
            .unwrap();
        let path = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap()
            .push(Segment::line(10.0).unwrap())
            .unwrap()
            .push(Segment::transition(30.0, 0.02, 0.32).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let horizon = 4.0 * 4.0 / (2.0 * 0.4) + SCAN_MARGIN;
        for station in [0.0, 3.0] {
            let x = 10.0 - station; // distance to the clothoid
            let kappa = 0.02 + 0.01 * (horizon - x);
            let want = libm::sqrt(0.3 / kappa + 2.0 * 0.4 * x);
            let cap = speed_cap(&path, &v, station, None);
            assert!((cap - want).abs() < 1e-12, "{station}: {cap} vs {want}");
        }
    }

    #[test]
    fn stop_and_bounded_scan() {
        let v = Vehicle::<f64>::front_steered(2.5, 0.6, 0.5).unwrap();
        let path = PathBuilder::<f64, 64>::new(Pose::new(0.0, 0.0, 0.0)).unwrap();
        let mut b = path;
        for _ in 0..60 {
            b.try_push(Segment::line(0.1).unwrap()).unwrap();
        }
        let path = b.build().unwrap();
        // 24 segments of 0.1 m cover 2.4 m < braking distance 8 m + margin:
        // plan a stop at 2.4 m: sqrt(2 * 1 * 2.4).
        let cap = speed_cap(&path, &v, 0.0, None);
        assert!((cap - libm::sqrt(4.8)).abs() < 1e-9, "{cap}");
        assert_eq!(speed_cap(&path, &v, 1.0, Some(1.0)), 0.0);
        assert_eq!(speed_cap(&path, &v, f64::NAN, None), 0.0);
    }
}
