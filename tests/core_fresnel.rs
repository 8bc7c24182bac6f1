//! Fresnel integrals C(x), S(x) against outside references.
//!
//! Convention: C(x) = int_0^x cos(pi t^2 / 2) dt, S(x) = int_0^x sin(pi t^2 / 2) dt
//! (Abramowitz & Stegun 7.3.1-7.3.2, DLMF 7.2(iii)).

use kappaline::fresnel;

// FRESNEL_TABLE: (x, C, S) from mpmath 1.3.0 (mpmath.fresnelc, mpmath.fresnels),
// mp.dps = 40, made by tests/reference/fresnel_mpmath.py.
include!("reference/fresnel_table.rs");

/// Issue 2: f64 within 1e-14 absolute.
const TOL_F64: f64 = 1e-14;
/// Issue 2: f32 within 1e-6 absolute.
const TOL_F32: f64 = 1e-6;

#[test]
fn f64_matches_mpmath_table() {
    let mut worst = (0.0f64, 0.0f64);
    for &(x, cw, sw) in FRESNEL_TABLE.iter() {
        let (c, s) = fresnel(x);
        let e = (c - cw).abs().max((s - sw).abs());
        assert!(
            e <= TOL_F64,
            "x = {x:e}: C = {c:e} (mpmath {cw:e}), S = {s:e} (mpmath {sw:e})"
        );
        if e > worst.1 {
            worst = (x, e);
        }
    }
    println!(
        "fresnel f64 vs mpmath: {} points, max abs error {:.3e} at x = {}",
        FRESNEL_TABLE.len(),
        worst.1,
        worst.0
    );
}

#[test]
#[cfg_attr(
    feature = "fast-math",
    ignore = "fast-math f32 trigonometry is about 1e-3 accurate (README)"
)]
fn f32_matches_mpmath_table() {
    let mut worst = (0.0f64, 0.0f64);
    for &(x, _, _) in FRESNEL_TABLE.iter() {
        // The f32 argument differs from x; compare with the f64 value at the
        // same (rounded) argument, itself checked against mpmath above.
        let xf = x as f32;
        let (cw, sw) = fresnel(xf as f64);
        let (c, s) = fresnel(xf);
        let e = (c as f64 - cw).abs().max((s as f64 - sw).abs());
        assert!(
            e <= TOL_F32,
            "x = {xf:e}: C = {c:e} ({cw:e}), S = {s:e} ({sw:e})"
        );
        if e > worst.1 {
            worst = (x, e);
        }
    }
    // Arguments that are exact in f32 compare straight with the table.
    for &(x, cw, sw) in FRESNEL_TABLE.iter() {
        if (x as f32) as f64 == x {
            let (c, s) = fresnel(x as f32);
            let e = (c as f64 - cw).abs().max((s as f64 - sw).abs());
            assert!(e <= TOL_F32, "x = {x}: {c} {s} vs mpmath {cw} {sw}");
            if e > worst.1 {
                worst = (x, e);
            }
        }
    }
    println!(
        "fresnel f32 vs mpmath: max abs error {:.3e} at x = {}",
        worst.1, worst.0
    );
}

#[test]
// The published values are quoted digit for digit as printed.
#[allow(clippy::excessive_precision)]
fn published_points() {
    // (x, C, S, tolerance, source).
    let rows: [(f64, f64, f64, f64, &str); 6] = [
        (
            0.5,
            0.49234422587144644,
            0.064732432859999287,
            1e-15,
            "scipy test suite, TestFresnel",
        ),
        (
            1.0,
            0.7798934003768228,
            0.4382591473903548,
            1e-15,
            "J. Burkardt test_values, fresnel_cos/sin_values",
        ),
        (
            2.0,
            0.4882534060753408,
            0.3434156783636982,
            1e-15,
            "J. Burkardt test_values",
        ),
        (
            3.0,
            0.6057207892976856,
            0.4963129989673750,
            1e-15,
            "J. Burkardt test_values",
        ),
        // Printed to 8 digits: check to half a unit in the last place.
        (6.0, 0.49953147, 0.44696076, 5e-9, "scipy test suite"),
        (
            10.0,
            0.49989869,
            0.46816998,
            5e-9,
            "scipy documentation example",
        ),
    ];
    for (x, cw, sw, tol, src) in rows {
        let (c, s) = fresnel(x);
        assert!(
            (c - cw).abs() <= tol && (s - sw).abs() <= tol,
            "{src}: x = {x}: ({c}, {s}) vs ({cw}, {sw})"
        );
        let (cf, sf) = fresnel(x as f32);
        assert!(
            (cf as f64 - cw).abs() <= TOL_F32.max(tol)
                && (sf as f64 - sw).abs() <= TOL_F32.max(tol),
            "{src}: f32 x = {x}"
        );
        // Odd functions (A&S 7.3.17).
        assert_eq!(fresnel(-x), (-c, -s));
    }
}

#[test]
fn limits_and_special_values() {
    // C, S -> 1/2 as x -> inf (A&S 7.3.20); |C - 1/2|, |S - 1/2| <= 1 / (pi x)
    // from the auxiliary functions f, g (DLMF 7.5.3, 7.12.1: f ~ 1/(pi x)).
    for x in [1e3f64, 1e5, 1e8, 1e12, 1e16, 1e100, 1e154, 1e200, f64::MAX] {
        let (c, s) = fresnel(x);
        let bound = 1.0 / (core::f64::consts::PI * x) + 1e-16;
        assert!(c.is_finite() && s.is_finite(), "x = {x:e}: ({c}, {s})");
        assert!(
            (c - 0.5).abs() <= bound && (s - 0.5).abs() <= bound,
            "x = {x:e}: ({c}, {s})"
        );
        let (cn, sn) = fresnel(-x);
        assert_eq!((cn, sn), (-c, -s));
    }
    for x in [1e3f32, 1e7, 1e19, 1e30, f32::MAX] {
        let (c, s) = fresnel(x);
        assert!(c.is_finite() && s.is_finite(), "x = {x:e}: ({c}, {s})");
        let bound = 1.0 / (core::f32::consts::PI * x) + 1e-7;
        assert!(
            (c - 0.5).abs() <= bound && (s - 0.5).abs() <= bound,
            "x = {x:e}"
        );
    }
    assert_eq!(fresnel(f64::INFINITY), (0.5, 0.5));
    assert_eq!(fresnel(f32::NEG_INFINITY), (-0.5, -0.5));
    let (c, s) = fresnel(f64::NAN);
    assert!(c.is_nan() && s.is_nan());
    // C(x) ~ x, S(x) ~ pi x^3 / 6 near 0 (A&S 7.3.11, 7.3.13 first terms).
    let (c, s) = fresnel(1e-5f64);
    assert!((c - 1e-5).abs() < 1e-20);
    assert!((s - core::f64::consts::PI * 1e-15 / 6.0).abs() < 1e-30);
}
