//! Corners (issue 4) against the spiral-curve-spiral relations of road
//! alignment design (symmetric clothoid transitions; e.g. AASHTO "A Policy
//! on Geometric Design of Highways and Streets", spiral curve elements, and
//! standard route-surveying texts): with transition length `Ls`, radius `R`,
//! transition angle `ts = Ls / 2R`, transition end `(xs, ys)`:
//! shift `p = ys - R (1 - cos ts)`, `k = xs - R sin ts`,
//! tangent length `Ts = (R + p) tan(D/2) + k`,
//! external distance `E = (R + p) / cos(D/2) - R` (vertex to curve midpoint).
//! The transition end uses the clothoid relations of road alignment
//! (common practice; Fresnel integrals as in Abramowitz & Stegun 7.3.1-7.3.2):
//! `xs = A sqrt(pi) C(Ls / (A sqrt(pi)))`, `ys = A sqrt(pi) S(...)`, `A^2 = R Ls`.

use kappaline::{check_path, corner_path, fresnel, CornerConfig, PathLimits, TurnShape};

#[test]
fn clothoid_corner_matches_spiral_curve_spiral_elements() {
    let pi = core::f64::consts::PI;
    for (r, sharp, deflection) in [
        (8.0, 0.025, 1.2),
        (12.0, 0.01, 0.9),
        (6.0, 0.05, -2.0),
        (20.0, 0.004, 2.6),
    ] {
        let shape = TurnShape::new(deflection, 1.0 / r, Some(sharp)).unwrap();
        let ls: f64 = (1.0 / r) / sharp;
        assert!((shape.transition - ls).abs() < 1e-12);
        let a = (r * ls).sqrt();
        let w = a * pi.sqrt();
        let (c, s) = fresnel(ls / w);
        let (xs, ys) = (w * c, w * s);
        let ts = ls / (2.0 * r);
        let p = ys - r * (1.0 - ts.cos());
        let k = xs - r * ts.sin();
        let half = deflection.abs() / 2.0;
        let tangent = (r + p) * half.tan() + k;
        let external = (r + p) / half.cos() - r;
        assert!(
            (shape.tangent_length() - tangent).abs() < 1e-9,
            "T {} vs {tangent}",
            shape.tangent_length()
        );
        assert!(
            (shape.deviation() - external).abs() < 1e-9,
            "E {} vs {external}",
            shape.deviation()
        );
    }
}

#[test]
fn corners_respect_the_limits_and_report_deviation() {
    // An invented vineyard service track.
    let pts = [
        (0.0, 0.0),
        (60.0, 0.0),
        (90.0, 40.0),
        (60.0, 90.0),
        (0.0, 100.0),
    ];
    let (r, sharp) = (7.0, 0.03);
    let cfg = CornerConfig {
        radius: r,
        max_sharpness: Some(sharp),
    };
    let (path, corners) = corner_path::<f64, 32, 8>(&pts, &cfg).unwrap();
    assert_eq!(corners.len(), 3);
    let limits = PathLimits::new(1.0 / r, Some(sharp), 1e-9).unwrap();
    let report = check_path::<f64, 32, 8>(&path, &limits);
    assert!(report.is_feasible(), "{:?}", report.violations);
    for c in &corners {
        // The path's closest approach to the vertex is the reported deviation.
        let (vx, vy) = pts[c.vertex];
        let n = 20_000;
        let closest = (0..=n)
            .map(|i| {
                let q = path.at(path.length() * i as f64 / n as f64);
                (q.x - vx).hypot(q.y - vy)
            })
            .fold(f64::INFINITY, f64::min);
        assert!(
            (closest - c.deviation).abs() < 1e-3,
            "vertex {}: {closest} vs {}",
            c.vertex,
            c.deviation
        );
    }
    let e = path.end_pose();
    assert!((e.x - 0.0).abs() < 1e-9 && (e.y - 100.0).abs() < 1e-9);
}
