//! Nearest point on one segment to a query point.
//!
//! The foot point of `q` on a curve `p(u)` is where the tangent is
//! perpendicular to `p - q`: `f(u) = (p(u) - q) . T(u) = 0`, with
//! `f'(u) = 1 - kappa(u) d(u)` and `d = (q - p) . N` the signed lateral offset.
//!
//! * Line: `u = (q - p0) . T0`, clamped.
//! * Arc: the angle of `q` seen from the centre, written so that the centre
//!   never appears (it is at infinity for a straight-ish arc):
//!   `kappa u = atan2(kappa qx, 1 - kappa qy)` in the segment frame, plus
//!   whole turns, clamped. Exact for radii from millimetres to 1e12 m.
//! * Clothoid: the search interval is cut into pieces turning at most
//!   pi/4 each (up to 256 pieces, a turn of 200 rad); where `f` changes sign from negative to positive (a local
//!   minimum of the distance) a Newton iteration refines it, safeguarded by
//!   bisection so it never leaves the bracket. The inside of a tight curve,
//!   where `f' -> 0`, falls back to bisection.
//!
//! The interval ends are always candidates, so the result is the nearest
//! point on the closed interval, not merely a stationary point.

use crate::num::real::{c, Real};
use crate::path::anchored::{Path, Placed};

/// At most this many pieces per clothoid interval (bounded cost). Enough for
/// a turn of 200 rad (32 laps) in one interval at pi/4 per piece; beyond that
/// the pieces turn more and a local minimum can be missed. A window of a few
/// metres needs one or two pieces; the whole-path acquisition of a long,
/// tight spiral needs dozens.
const MAX_PIECES: u32 = 256;
/// Newton/bisection iterations per bracket.
const MAX_ITER: u32 = 48;

/// A candidate foot point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Foot<T> {
    pub segment: usize,
    /// Distance into the segment, metres.
    pub offset: T,
    /// Squared distance to the query point, m^2.
    pub dist2: T,
}

/// What one evaluation of the segment tells about the query point.
#[derive(Debug, Clone, Copy)]
struct Probe<T> {
    /// Squared distance, m^2.
    dist2: T,
    /// `f(u) = (p - q) . T`, metres.
    f: T,
    /// `f'(u) = 1 - kappa d`.
    slope: T,
}

/// Evaluates segment `i` at `u` once and derives everything the search needs.
fn probe<T: Real, const N: usize>(path: &Path<T, N>, i: usize, u: T, qx: T, qy: T) -> Probe<T> {
    let p = path.eval_in(i, u);
    let ex = p.x - qx;
    let ey = p.y - qy;
    let f = ex * p.cos + ey * p.sin;
    let d = ey * p.cos - ex * p.sin; // (p - q) . N, minus the lateral offset
    Probe {
        dist2: ex * ex + ey * ey,
        f,
        slope: T::ONE + p.curvature * d,
    }
}

/// The nearest point to `(qx, qy)` on segment `i` restricted to `[lo, hi]`
/// (metres into the segment, `0 <= lo <= hi <= length`).
pub(crate) fn nearest_on_segment<T: Real, const N: usize>(
    path: &Path<T, N>,
    i: usize,
    lo: T,
    hi: T,
    qx: T,
    qy: T,
) -> Foot<T> {
    let pl = *path.placed_at(i);
    let at_lo = probe(path, i, lo, qx, qy);
    let at_hi = if hi > lo {
        probe(path, i, hi, qx, qy)
    } else {
        at_lo
    };
    let mut best = Foot {
        segment: i,
        offset: lo,
        dist2: at_lo.dist2,
    };
    if at_hi.dist2 < best.dist2 {
        best.offset = hi;
        best.dist2 = at_hi.dist2;
    }
    let mut offer = |u: T, dist2: T| {
        if dist2 < best.dist2 {
            best.offset = u;
            best.dist2 = dist2;
        }
    };
    let mut consider = |u: T| {
        // The ends are already in `best`: a candidate outside the interval
        // would clamp to one of them, so skip its evaluation (and its trig).
        if u > lo && u < hi {
            offer(u, probe(path, i, u, qx, qy).dist2);
        }
    };
    // q in the segment's own frame.
    let dx = qx - pl.x;
    let dy = qy - pl.y;
    let lx = dx * pl.cos + dy * pl.sin;
    let ly = dy * pl.cos - dx * pl.sin;
    if pl.sigma == T::ZERO {
        let k = pl.kappa0;
        if k == T::ZERO {
            consider(lx);
        } else {
            let u0 = (k * lx).atan2(T::ONE - k * ly) / k;
            let period = T::TWO * T::PI / k.abs();
            // The feet are u0 + n period; the first one at or past `lo` has
            // n = n_lo. Its neighbours cover any interval up to two laps long
            // (the window is far shorter). u0 itself is used unshifted when
            // n = 0: for a radius of 1e12 m the period is 6e12 m, and
            // `u0 - period + period` would keep only millimetres of u0.
            let n_lo = -((u0 - lo) / period).floor();
            for j in 0..4u32 {
                let n = n_lo - T::ONE + T::from_u32(j);
                let u = if n == T::ZERO { u0 } else { u0 + n * period };
                if u > hi + period {
                    break;
                }
                consider(u);
            }
        }
    } else {
        let probe_at = |u: T| probe(path, i, u, qx, qy);
        clothoid_roots(&pl, lo, hi, at_lo, at_hi, &probe_at, &mut offer);
    }
    best
}

/// Local minima of the distance on a clothoid interval, each passed to
/// `found` with its squared distance (at most one per piece, at most
/// `MAX_PIECES` pieces). The ends were probed by the caller.
fn clothoid_roots<T: Real>(
    pl: &Placed<T>,
    lo: T,
    hi: T,
    at_lo: Probe<T>,
    at_hi: Probe<T>,
    probe_at: &impl Fn(T) -> Probe<T>,
    found: &mut impl FnMut(T, T),
) {
    let kappa_lo = (pl.kappa0 + pl.sigma * lo).abs();
    let kappa_hi = (pl.kappa0 + pl.sigma * hi).abs();
    let turn = kappa_lo.max(kappa_hi) * (hi - lo);
    let quarter: T = c(core::f64::consts::FRAC_PI_4);
    // One piece per started quarter turn; NaN gives one piece.
    let pieces = (whole_part_capped(turn / quarter, MAX_PIECES - 1) + 1).min(MAX_PIECES);
    let width = (hi - lo) / T::from_u32(pieces);
    let mut a = lo;
    let mut fa = at_lo.f;
    for k in 1..=pieces {
        let (b, fb) = if k == pieces {
            (hi, at_hi.f)
        } else {
            let b = lo + width * T::from_u32(k);
            (b, probe_at(b).f)
        };
        // `>=`: a foot exactly on a piece boundary is a root of this piece.
        if fa < T::ZERO && fb >= T::ZERO {
            let (u, dist2) = refine(a, b, fa, fb, probe_at);
            found(u, dist2);
        }
        a = b;
        fa = fb;
    }
}

/// The largest whole `n <= cap` with `n <= v` (0 for a negative or NaN `v`),
/// by bisection on `T::from_u32`: no conversion through `f64`, which on an
/// `f32` build would pull in soft-float `f64` routines.
fn whole_part_capped<T: Real>(v: T, cap: u32) -> u32 {
    let (mut lo, mut hi) = (0u32, cap);
    while lo < hi {
        let mid = lo + (hi - lo).div_ceil(2);
        if T::from_u32(mid) <= v {
            lo = mid;
        } else {
            hi = mid - 1;
        }
    }
    lo
}

/// Safeguarded Newton in the bracket `[a, b]` with `f(a) < 0 <= f(b)`.
/// Returns the last evaluated point and its squared distance: it lies
/// within the convergence tolerance of the root, so a final evaluation at
/// the Newton step would change nothing but the cost.
fn refine<T: Real>(mut a: T, mut b: T, fa: T, fb: T, probe_at: &impl Fn(T) -> Probe<T>) -> (T, T) {
    // Start from the secant point: good when the piece is nearly straight.
    let mut u = a - fa * (b - a) / (fb - fa);
    let mut last = probe_at(u);
    for _ in 0..MAX_ITER {
        if last.f < T::ZERO {
            a = u;
        } else if last.f > T::ZERO {
            b = u;
        } else {
            break;
        }
        let mut next = if last.slope > T::ZERO {
            u - last.f / last.slope
        } else {
            a // forces bisection below
        };
        if !(next > a && next < b) {
            next = T::HALF * (a + b);
        }
        let tol = T::EPSILON * c(4.0) * (T::ONE + u.abs());
        let step = (next - u).abs();
        if step <= tol || (b - a) <= tol {
            break;
        }
        u = next;
        last = probe_at(u);
    }
    (u, last.dist2)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::path::anchored::PathBuilder;
    use crate::path::pose::Pose;
    use crate::path::segment::Segment;

    #[test]
    fn whole_part_capped_is_floor_clamped() {
        // Reference: libm's `floor`, clamped to [0, cap] (NaN to 0).
        for cap in [0u32, 1, 7, 255, 256] {
            for v in [
                -3.5f64, -0.0, 0.0, 0.25, 1.0, 1.999, 2.0, 6.5, 7.0, 254.99, 255.0, 1e9,
            ] {
                let want = libm::floor(v).clamp(0.0, f64::from(cap)) as u32;
                assert_eq!(whole_part_capped(v, cap), want, "v {v}, cap {cap}");
                assert_eq!(
                    whole_part_capped(v as f32, cap),
                    want,
                    "f32 v {v}, cap {cap}"
                );
            }
            assert_eq!(whole_part_capped(f64::NAN, cap), 0);
            assert_eq!(whole_part_capped(f32::INFINITY, cap), cap);
        }
    }

    #[test]
    fn arc_of_several_laps_finds_the_foot_on_the_lap_in_the_window() {
        // Hand geometry: an arc of radius 1 m (kappa = 1) from the origin
        // heading +x, four laps long, centre (0, 1). A point 1.2 m from the
        // centre at pi/6 of turn has its feet at u = pi/6 + 2 pi n on the
        // circle, 0.2 m away. A window covering part of lap n holds only
        // that lap's foot.
        let lap = 2.0 * core::f64::consts::PI;
        let path = PathBuilder::<f64, 2>::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap()
            .push(Segment::arc(4.0 * lap, 1.0).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let phi = core::f64::consts::FRAC_PI_6;
        let (qx, qy) = (1.2 * libm::sin(phi), 1.0 - 1.2 * libm::cos(phi));
        for (lo, hi, n) in [
            (0.0, 0.5, 0.0),
            (0.5, 1.5, 1.0),
            (1.9, 2.2, 2.0),
            (2.5, 3.5, 3.0),
            (3.05, 4.0, 3.0),
        ] {
            let (lo, hi) = (lo * lap, hi * lap);
            let foot = nearest_on_segment(&path, 0, lo, hi, qx, qy);
            let want = phi + n * lap;
            assert!(
                (foot.offset - want).abs() < 1e-9,
                "[{lo}, {hi}]: {}",
                foot.offset
            );
            assert!((foot.dist2 - 0.04).abs() < 1e-12, "{}", foot.dist2);
        }
        // No foot inside [3.1, 4] laps: the nearer end, lo (at 36 degrees of
        // turn, 6 degrees past the foot; hi is 30 degrees before it).
        let (lo, hi) = (3.1 * lap, 4.0 * lap);
        assert_eq!(nearest_on_segment(&path, 0, lo, hi, qx, qy).offset, lo);
    }
}
