//! Arcs against circle geometry, heading closure on closed circles, station
//! wrapping, and continuity at the joints of long mixed paths.

use kappaline::{Continuity, Cursor, Path, PathBuilder, PathError, Pose, Segment};
use std::f64::consts::PI;

/// Issue 2: pose at the end of segment i equals the anchor of segment i+1 to 1e-9 m (f64).
const JOINT_TOL: f64 = 1e-9;

/// Point `u` metres along a circle of radius `r` (signed, positive left)
/// from `(x0, y0)` with heading `th0`, by elementary geometry in the start
/// frame: (r sin x, r (1 - cos x)) with x = u / r, the second written as
/// 2 r sin^2(x / 2) so that it does not cancel for huge radii.
fn circle_point(x0: f64, y0: f64, th0: f64, r: f64, u: f64) -> (f64, f64) {
    let x = u / r;
    let lx = r * x.sin();
    let ly = 2.0 * r * (0.5 * x).sin().powi(2);
    (
        x0 + lx * th0.cos() - ly * th0.sin(),
        y0 + lx * th0.sin() + ly * th0.cos(),
    )
}

#[test]
fn arcs_match_circle_geometry() {
    let mut worst = 0.0f64;
    // Radii from 2 m to 1e12 m, both turning directions, several start poses.
    for &r in &[2.0f64, -2.0, 9.0, 150.0, -1e3, 1e6, -1e9, 1e12] {
        for &(x0, y0, th0) in &[(0.0, 0.0, 0.0), (1500.0, -800.0, 2.2), (-3.0, 7.0, -3.0)] {
            let len = (PI * r.abs()).min(500.0);
            let path: Path<f64, 1> = PathBuilder::new(Pose::new(x0, y0, th0))
                .unwrap()
                .push(Segment::arc(len, 1.0 / r).unwrap())
                .unwrap()
                .build()
                .unwrap();
            for k in 0..=40 {
                let u = len * k as f64 / 40.0;
                let p = path.at(u);
                let (wx, wy) = circle_point(x0, y0, th0, r, u);
                let e = (p.x - wx).hypot(p.y - wy);
                // Rounding of the start coordinates (~2e-13 m at 1.5 km) plus 1e-12 relative.
                let tol = 1e-12 * (1.0 + u) + 4.0 * f64::EPSILON * (x0.abs() + y0.abs());
                assert!(e <= tol, "r={r} start=({x0},{y0},{th0}) u={u}: error {e:e}");
                worst = worst.max(e);
                // Heading th0 + u / r (Frenet: theta' = kappa).
                let th = th0 + u / r;
                assert!((p.cos - th.cos()).abs() < 1e-14 && (p.sin - th.sin()).abs() < 1e-14);
                assert_eq!(p.curvature, 1.0 / r);
                // For small radii the distance to the centre is the radius
                // (centre = start + r * left normal).
                if r.abs() < 1e4 {
                    let (cx, cy) = (x0 - r * th0.sin(), y0 + r * th0.cos());
                    let d = (p.x - cx).hypot(p.y - cy);
                    assert!(
                        (d - r.abs()).abs() < 1e-12 * (1.0 + r.abs()) + 1e-12,
                        "r={r} u={u}: |p - c| = {d}"
                    );
                }
            }
        }
    }
    println!("arc vs circle geometry: max error {worst:.3e} m");
}

fn closed_circle(r: f64, pieces: usize, th0: f64) -> Path<f64, 16> {
    let mut b = PathBuilder::new(Pose::new(10.0, -20.0, th0)).unwrap();
    let k = if r > 0.0 { 1.0 / r } else { -1.0 / r.abs() };
    for _ in 0..pieces {
        b.try_push(Segment::arc(2.0 * PI * r.abs() / pieces as f64, k).unwrap())
            .unwrap();
    }
    b.close(Continuity::DEFAULT).unwrap()
}

#[test]
fn closed_circle_heading_closure_and_wrapping() {
    let mut worst = 0.0f64;
    for &r in &[2.0f64, -5.0, 75.0, -1e4] {
        for pieces in [1usize, 3, 4, 16] {
            let path = closed_circle(r, pieces, 0.4);
            assert!(path.is_closed());
            let len = path.length();
            assert!((len - 2.0 * PI * r.abs()).abs() < 1e-12 * len);
            // Full heading closure: the unwrapped heading changes by +-2 pi.
            let mut total_turn = 0.0;
            for i in 0..path.len() {
                total_turn += path
                    .segment(i)
                    .unwrap()
                    .heading_change(path.segment(i).unwrap().length());
            }
            assert!(
                (total_turn - 2.0 * PI * r.signum()).abs() < 1e-12,
                "turn {total_turn}"
            );
            let start = path.at(0.0);
            let mut c = Cursor::at(&path, path.segment_start(path.len() - 1).unwrap()).unwrap();
            let (end, _) = c
                .advance(&path, path.segment(path.len() - 1).unwrap().length())
                .unwrap();
            // Eval at the very end of the last segment, not wrapped back.
            assert_eq!(end.segment, path.len() - 1);
            let gap = (end.x - start.x).hypot(end.y - start.y);
            let hgap = (end.cos - start.cos).hypot(end.sin - start.sin);
            assert!(
                gap < 1e-12 * (1.0 + r.abs()),
                "r={r} pieces={pieces}: gap {gap:e}"
            );
            assert!(hgap < 1e-14, "heading gap {hgap:e}");
            worst = worst.max(gap);
            let e = path.end_pose();
            assert!((e.heading - 0.4).abs() < 1e-14);
            // Stations wrap: s + k L is the same point as s.
            for s in [0.0, 0.3, len * 0.5, len - 1e-9] {
                let p = path.at(s);
                for k in [-3.0, -1.0, 1.0, 2.0, 7.0] {
                    let q = path.at(s + k * len);
                    assert!(
                        (q.x - p.x).hypot(q.y - p.y) < 1e-9 * (1.0 + r.abs()),
                        "s={s} k={k}"
                    );
                    assert!(
                        (q.station - p.station).abs() < 1e-9 * len
                            || (q.station - p.station).abs() > len * 0.99
                    );
                }
            }
            // A cursor driven twice round in 1 m steps comes back where it started.
            let mut cur = Cursor::at(&path, 0.0).unwrap();
            let steps = (2.0 * len).floor() as usize;
            for _ in 0..steps {
                cur.advance(&path, 1.0).unwrap();
            }
            let rest = 2.0 * len - steps as f64;
            let (p, _) = cur.advance(&path, rest).unwrap();
            let q = path.at(0.0);
            assert!(
                (p.x - q.x).hypot(p.y - q.y) < 1e-9 * (1.0 + r.abs()),
                "two laps: {:?}",
                (p.x, p.y, q.x, q.y)
            );
        }
    }
    println!("closed circle: max closure gap {worst:.3e} m");
}

#[test]
fn close_refuses_open_ends() {
    // Three quarters of a circle do not close.
    let mut b = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0)).unwrap();
    b.try_push(Segment::arc(1.5 * PI * 10.0, 0.1).unwrap())
        .unwrap();
    assert_eq!(
        b.clone().close(Continuity::DEFAULT).err(),
        Some(PathError::PositionGap { index: 0 })
    );
    // A circle missing 2 mrad of turn ends 2 mrad off in heading and 2 cm off in position.
    let mut b = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.0)).unwrap();
    b.try_push(Segment::arc(2.0 * PI * 10.0 - 0.02, 0.1).unwrap())
        .unwrap();
    let loose = Continuity {
        position: 0.05,
        heading: 1e-3,
    };
    assert_eq!(
        b.clone().close(loose).err(),
        Some(PathError::HeadingGap { index: 0 })
    );
    assert!(b
        .clone()
        .close(Continuity {
            position: 0.05,
            heading: 3e-3
        })
        .is_ok());
    // Bad tolerances are refused.
    for bad in [f64::NAN, -1.0, f64::INFINITY] {
        assert_eq!(
            b.clone()
                .close(Continuity {
                    position: bad,
                    heading: 1e-3
                })
                .err(),
            Some(PathError::OutOfRange)
        );
    }
}

/// A deterministic pseudo-random generator (64-bit LCG, Knuth's MMIX constants).
struct Lcg(u64);
impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
    fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.next()
    }
}

/// A long mixed path: lines, arcs (radius 2 m .. 1e6 m) and clothoids (including
/// inflections and tiny sharpness), about `n` segments.
fn mixed_segments(seed: u64, n: usize) -> Vec<Segment<f64>> {
    let mut g = Lcg(seed);
    let mut v = Vec::new();
    for _ in 0..n {
        let pick = g.next();
        let seg = if pick < 0.25 {
            Segment::line(g.range(0.05, 400.0))
        } else if pick < 0.5 {
            let r = 10f64.powf(g.range(0.3, 6.0)) * if g.next() < 0.5 { -1.0 } else { 1.0 };
            Segment::arc(g.range(0.1, 60.0), 1.0 / r)
        } else if pick < 0.8 {
            Segment::transition(g.range(0.5, 80.0), g.range(-0.3, 0.3), g.range(-0.3, 0.3))
        } else {
            Segment::clothoid(
                g.range(10.0, 500.0),
                g.range(-0.01, 0.01),
                10f64.powf(g.range(-12.0, -5.0)) * if g.next() < 0.5 { -1.0 } else { 1.0 },
            )
        };
        v.push(seg.unwrap());
    }
    v
}

#[test]
fn joints_are_continuous_on_long_mixed_paths() {
    let mut worst = (0.0f64, 0.0f64);
    for seed in 1..=6u64 {
        let segs = mixed_segments(seed, 120);
        let path: Path<f64, 128> =
            Path::from_segments(Pose::new(-1234.5, 987.25, 0.7), &segs).unwrap();
        for i in 0..path.len() - 1 {
            // Evaluate segment i at its own length (a cursor at its start,
            // advanced by the length, stays on segment i).
            let mut c = Cursor::at(&path, path.segment_start(i).unwrap()).unwrap();
            assert_eq!(c.segment(), i);
            let (end, _) = c.advance(&path, path.segment(i).unwrap().length()).unwrap();
            assert_eq!(end.segment, i);
            let next = path.anchor(i + 1).unwrap();
            let e = (end.x - next.x).hypot(end.y - next.y);
            let (s, co) = next.heading.sin_cos();
            let eh = (end.cos - co).hypot(end.sin - s);
            assert!(e <= JOINT_TOL, "seed {seed} joint {i}: gap {e:e} m");
            assert!(eh <= 1e-12, "seed {seed} joint {i}: heading gap {eh:e}");
            // And the curvature is the segment's own end curvature.
            let seg = path.segment(i).unwrap();
            assert!((end.curvature - seg.kappa_end()).abs() < 1e-12);
            worst = (worst.0.max(e), worst.1.max(eh));
        }
    }
    println!(
        "joint continuity f64: max position gap {:.3e} m, max heading gap {:.3e}",
        worst.0, worst.1
    );
}

#[test]
fn stored_anchors_load_and_check_continuity() {
    use kappaline::AnchoredSegment;
    let segs = mixed_segments(42, 40);
    let path: Path<f64, 64> = Path::from_segments(Pose::new(5.0, 6.0, -1.0), &segs).unwrap();
    let parts: Vec<AnchoredSegment<f64>> = (0..path.len())
        .map(|i| AnchoredSegment {
            segment: path.segment(i).unwrap(),
            start: path.anchor(i).unwrap(),
        })
        .collect();
    let loaded: Path<f64, 64> = Path::from_anchored(&parts, Continuity::DEFAULT, false).unwrap();
    for k in 0..=2000 {
        let s = path.length() * k as f64 / 2000.0;
        let (a, b) = (path.at(s), loaded.at(s));
        assert!((a.x - b.x).hypot(a.y - b.y) < 1e-9, "s = {s}");
    }
    // A stored start moved by 2 mm is refused with the index of the joint.
    let mut bad = parts.clone();
    bad[7].start.x += 2e-3;
    assert_eq!(
        Path::<f64, 64>::from_anchored(&bad, Continuity::DEFAULT, false).err(),
        Some(PathError::PositionGap { index: 7 })
    );
    let mut bad = parts.clone();
    bad[9].start.heading += 2e-3;
    assert_eq!(
        Path::<f64, 64>::from_anchored(&bad, Continuity::DEFAULT, false).err(),
        Some(PathError::HeadingGap { index: 9 })
    );
}
