//! f32 evaluation against f64 over a 2 km multi-segment path.
//!
//! Both paths are built from the same segment values (the f32 values, widened
//! exactly to f64), so the difference is the f32 arithmetic alone.
//! Issue 2: within 1 mm everywhere, sampled densely.

use kappaline::{Cursor, Path, PathBuilder, Pose, Segment};

/// Issue 2: f32 within 1 mm of f64.
const TOL: f64 = 1e-3;

/// (length, kappa0, sigma) of a ~2 km field-like route: long passes, headland
/// arcs, clothoid transitions (with an inflection), a tight 2 m radius turn and
/// a near-straight 1e5 m radius arc. Invented demo geometry.
fn route() -> Vec<(f32, f32, f32)> {
    let t = |len: f32, k0: f32, k1: f32| (len, k0, (k1 - k0) / len);
    vec![
        (420.0, 0.0, 0.0),
        t(12.0, 0.0, 0.125),
        (25.132742, 0.125, 0.0),
        t(12.0, 0.125, 0.0),
        (380.0, 0.0, 0.0),
        t(20.0, 0.0, -0.1),
        t(30.0, -0.1, 0.08), // inflection inside
        (40.0, 0.08, 0.0),
        t(15.0, 0.08, 0.0),
        (310.0, 1e-5, 0.0),
        (6.2831855, 0.5, 0.0), // R = 2 m, half a turn... plus
        (3.0, 0.0, 0.0),
        (9.0, -0.5, 0.0),
        t(60.0, 0.0, 0.02),
        t(60.0, 0.02, -0.02),
        (300.0, 0.0, 0.0),
        t(8.0, 0.0, 0.3),
        (10.0, 0.3, 0.0),
        t(8.0, 0.3, 0.0),
        (250.0, -2e-4, 0.0),
        (55.0, 0.0, 1e-7),
    ]
}

fn paths() -> (Path<f32, 32>, Path<f64, 32>) {
    // Start 1.3 km east and 0.9 km north of the origin, so that coordinates
    // reach about 2 km.
    let start = (1300.0f32, 900.0f32, 0.3f32);
    let mut b32 = PathBuilder::new(Pose::new(start.0, start.1, start.2)).unwrap();
    let mut b64 =
        PathBuilder::new(Pose::new(start.0 as f64, start.1 as f64, start.2 as f64)).unwrap();
    for (len, k0, sg) in route() {
        b32.try_push(Segment::clothoid(len, k0, sg).unwrap())
            .unwrap();
        b64.try_push(Segment::clothoid(len as f64, k0 as f64, sg as f64).unwrap())
            .unwrap();
    }
    (b32.build().unwrap(), b64.build().unwrap())
}

#[test]
#[cfg_attr(
    feature = "fast-math",
    ignore = "fast-math f32 trigonometry is about 1e-3 accurate (README)"
)]
fn f32_within_1mm_of_f64_every_10cm() {
    let (p32, p64) = paths();
    let len = p64.length();
    assert!(len > 2000.0, "route is {len} m");
    let mut max_coord = 0.0f64;
    let mut worst = (0.0f64, 0.0f64, 0.0f64); // position, heading, station of worst
    let n = (len / 0.1).floor() as usize;
    for k in 0..=n {
        // Stations that are exact in f32 (and so the same in both).
        let s32 = (k as f64 * 0.1) as f32;
        let a = p32.at(s32);
        let b = p64.at(s32 as f64);
        let e = (a.x as f64 - b.x).hypot(a.y as f64 - b.y);
        let eh = (a.cos as f64 - b.cos).hypot(a.sin as f64 - b.sin);
        assert!(
            e <= TOL,
            "s = {s32}: f32 ({}, {}) vs f64 ({}, {}): {e:e} m",
            a.x,
            a.y,
            b.x,
            b.y
        );
        // f32 anchors sit at f32 stations: a station shift of up to half an
        // ulp of the station turns the heading by curvature * shift.
        let shift = 0.5 * (s32.max(1.0) * f32::EPSILON) as f64;
        assert!(
            eh <= 2e-6 + 2.0 * b.curvature.abs() * shift,
            "s = {s32}: heading differs by {eh:e}"
        );
        assert!((a.curvature as f64 - b.curvature).abs() < 1e-5);
        max_coord = max_coord.max(b.x.abs()).max(b.y.abs());
        if e > worst.0 {
            worst = (e, worst.1, s32 as f64);
        }
        worst.1 = worst.1.max(eh);
    }
    assert!(max_coord > 1500.0);
    println!(
        "f32 vs f64 over {len:.1} m ({} samples, |coord| up to {max_coord:.0} m): max position {:.3e} m at s = {:.1}, max heading {:.3e} rad",
        n + 1,
        worst.0,
        worst.2,
        worst.1
    );
}

#[test]
#[cfg_attr(
    feature = "fast-math",
    ignore = "fast-math f32 trigonometry is about 1e-3 accurate (README)"
)]
fn f32_cursor_small_steps_stay_within_1mm() {
    let (p32, p64) = paths();
    for step in [0.1f32, 0.037, 0.0125] {
        let mut c = Cursor::<f32>::start();
        let mut driven = 0.0f64; // the same steps summed in f64
        let mut worst = (0.0f64, 0.0f64);
        loop {
            let (pt, travel) = c.advance(&p32, step).unwrap();
            driven += step as f64;
            if travel != kappaline::Travel::Within {
                break;
            }
            // Where the cursor is against where f64 says the driven distance is.
            let b = p64.at(driven);
            let e = (pt.x as f64 - b.x).hypot(pt.y as f64 - b.y);
            // And the cursor's point for its own station (no drift allowed there).
            let own = p64.at(c.station(&p32) as f64);
            let e_own = (pt.x as f64 - own.x).hypot(pt.y as f64 - own.y);
            worst = (worst.0.max(e), worst.1.max(e_own));
        }
        println!(
            "f32 cursor, steps of {step} m over {:.0} m: max error vs driven distance {:.3e} m, vs its own station {:.3e} m",
            driven, worst.0, worst.1
        );
        assert!(
            worst.1 <= TOL,
            "step {step}: point off its own station by {:e}",
            worst.1
        );
        assert!(
            worst.0 <= TOL,
            "step {step}: cursor drifted {:e} m from the driven distance",
            worst.0
        );
    }
}

#[test]
#[cfg_attr(
    feature = "fast-math",
    ignore = "fast-math f32 trigonometry is about 1e-3 accurate (README)"
)]
fn f32_lookahead_matches_f64() {
    let (p32, p64) = paths();
    let mut c = Cursor::<f32>::start();
    let mut worst = 0.0f64;
    for _ in 0..400 {
        c.advance(&p32, 5.3).unwrap();
        for d in [0.5f32, 3.0, 12.0, -2.0] {
            let a = c.ahead(&p32, d).unwrap();
            let b = p64.at(c.station(&p32) as f64 + d as f64);
            let e = (a.x as f64 - b.x).hypot(a.y as f64 - b.y);
            worst = worst.max(e);
        }
    }
    assert!(worst <= TOL, "{worst:e}");
    println!("f32 lookahead vs f64: max {worst:.3e} m");
}
