//! Prints the G1 fit's closure errors over a million random pose pairs
//! (headings uniform in (-pi, pi), chord 1..201 m), release build:
//! `cargo run --release --example fit_closure_scan`.
//!
//! Closure: the fitted segment, placed by the core path builder at the start
//! pose, must end at the end pose. Reported: worst absolute position error,
//! worst position error relative to the curve length, worst heading error,
//! most Newton steps, and how many pairs miss 1e-10 m (only near-closed
//! loops longer than 1 km do; `tests/build_fit.rs` holds those to 1e-14 of
//! their length).

use kappaline::{fit_g1, PathBuilder, Pose, Real};

fn main() {
    let mut state: u64 = 987;
    let mut uniform = || {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((state >> 11) as f64) / ((1u64 << 53) as f64)
    };
    let pi = core::f64::consts::PI;
    let (mut fails, mut worst_abs, mut worst_rel, mut worst_h, mut steps) =
        (0, 0.0f64, 0.0f64, 0.0f64, 0);
    let (mut worst_short, n) = (0.0f64, 1_000_000);
    let (mut loops, mut over) = (0u32, 0u32);
    let mut worst_pair = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
    for _ in 0..n {
        let t0 = pi * (2.0 * uniform() - 1.0);
        let t1 = pi * (2.0 * uniform() - 1.0);
        let d = 1.0 + 200.0 * uniform();
        let (from, to) = (Pose::new(0.0, 0.0, t0), Pose::new(d, 0.0, t1));
        let Ok(f) = fit_g1(from, to) else {
            fails += 1;
            continue;
        };
        steps = steps.max(f.iterations);
        let Ok(seg) = f.segment::<f64>() else {
            fails += 1;
            continue;
        };
        let Ok(b) = PathBuilder::<f64, 1>::new(from).and_then(|b| b.push(seg)) else {
            fails += 1;
            continue;
        };
        let e = b.end_pose();
        let dp = (e.x - to.x).hypot(e.y - to.y);
        if dp > worst_abs {
            worst_abs = dp;
            worst_pair = (t0, d, t1, f.length);
        }
        worst_rel = worst_rel.max(dp / f.length);
        if f.length <= 1000.0 {
            worst_short = worst_short.max(dp);
        } else {
            loops += 1;
        }
        if dp >= 1e-10 {
            over += 1;
        }
        worst_h = worst_h.max((e.heading - t1).wrap_angle().abs());
    }
    println!("pairs {n}, failures {fails}, most Newton steps {steps}");
    println!("worst position closure {worst_abs:.3e} m (curves <= 1 km: {worst_short:.3e} m)");
    let (t0, d, t1, len) = worst_pair;
    println!("  at (0, 0, {t0:?}) -> ({d:?}, 0, {t1:?}), length {len:.4e} m");
    println!("worst position closure / length {worst_rel:.3e}");
    println!("worst heading closure {worst_h:.3e} rad");
    println!("fits over 1 km {loops}, pairs at or over 1e-10 m {over}");
}
