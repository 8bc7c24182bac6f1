//! `sin_cos` for `f32` in `f32` arithmetic.
//!
//! libm's `sinf`/`cosf` reduce and evaluate in `f64` to be correctly rounded;
//! on a Cortex-M4F, whose FPU is single precision, that is soft-float `f64`
//! and costs about a thousand instructions a call. This version stays in
//! `f32`: a three-part Cody–Waite reduction by `pi/2` (the first two parts
//! have 11 significant bits, so `k * part` is exact for `|k| < 2^13`), then
//! the Taylor polynomials of `sin` and `cos` on `[-pi/4, pi/4]` (degree 9 and
//! 10; the truncation error is below 2e-9, a thirtieth of an `f32` ulp at 1).
//!
//! # Accuracy
//! Within 2 ulp of the true value (absolute error below 1.2e-7) for
//! `|x| <= 12_000` rad, checked against libm's `f64` `sin`/`cos` in the
//! tests. Larger arguments go to libm. NaN and infinities give NaN.

/// `pi/2` split into parts: 11 bits, 11 bits, and the `f32` rest.
const PIO2_1: f32 = 1.570_312_5;
const PIO2_2: f32 = 4.837_513e-4;
const PIO2_3: f32 = 7.549_79e-8;
/// `2/pi`.
const TWO_OVER_PI: f32 = core::f32::consts::FRAC_2_PI;
/// Above this `|x|`, `k` could exceed 2^13 and the reduction lose bits.
const REDUCE_LIMIT: f32 = 12_000.0;

/// `(sin x, cos x)` for `f32` without `f64` arithmetic.
pub(crate) fn sin_cos_f32(x: f32) -> (f32, f32) {
    if x.is_nan() || x.abs() > REDUCE_LIMIT {
        // Huge, infinite or NaN: libm handles all of these correctly.
        return libm::sincosf(x);
    }
    // Round to nearest without `round()` (not in core): add and subtract.
    let kf = libm::floorf(x * TWO_OVER_PI + 0.5);
    let r = ((x - kf * PIO2_1) - kf * PIO2_2) - kf * PIO2_3;
    let (s, c) = kernel(r);
    // kf is a whole number below 2^13 in magnitude: the cast is exact.
    match (kf as i32) & 3 {
        0 => (s, c),
        1 => (c, -s),
        2 => (-s, -c),
        _ => (-c, s),
    }
}

/// Taylor polynomials of sin and cos on `|r| <= pi/4` (Horner form).
#[inline]
fn kernel(r: f32) -> (f32, f32) {
    let z = r * r;
    // sin r = r (1 - z/3! + z^2/5! - z^3/7! + z^4/9!)
    let s = r
        * (1.0
            + z * (-1.0 / 6.0 + z * (1.0 / 120.0 + z * (-1.0 / 5040.0 + z * (1.0 / 362_880.0)))));
    // cos r = 1 - z/2! + z^2/4! - z^3/6! + z^4/8! - z^5/10!
    let c = 1.0
        + z * (-0.5
            + z * (1.0 / 24.0
                + z * (-1.0 / 720.0 + z * (1.0 / 40_320.0 + z * (-1.0 / 3_628_800.0)))));
    (s, c)
}

#[cfg(test)]
mod tests {
    extern crate std;
    use super::*;

    /// Largest allowed absolute error against libm's f64 sin/cos.
    const TOL: f64 = 1.2e-7;

    #[test]
    fn matches_libm_f64_over_the_reduced_range() {
        // Reference: libm 0.2 `sin`/`cos` in f64 (correctly rounded to f64,
        // far more precise than f32), evaluated at the same f32 input.
        let mut worst = 0.0f64;
        let n = 200_000;
        for i in 0..=n {
            let x = -12_000.0 + 24_000.0 * (i as f64) / (n as f64);
            let xf = x as f32;
            let (s, c) = sin_cos_f32(xf);
            let xs = xf as f64;
            let es = (s as f64 - libm::sin(xs)).abs();
            let ec = (c as f64 - libm::cos(xs)).abs();
            worst = worst.max(es).max(ec);
        }
        std::println!("worst |error| over [-12000, 12000]: {worst:e}");
        assert!(worst < TOL, "worst error {worst}");
    }

    #[test]
    fn small_angles_keep_relative_precision() {
        for x in [1e-30f32, 1e-10, 1e-4, -3e-3, 0.1] {
            let (s, c) = sin_cos_f32(x);
            let rel = ((s as f64) - libm::sin(x as f64)).abs() / (x as f64).abs();
            assert!(rel < 1.2e-7, "x = {x}: rel {rel}");
            assert!(((c as f64) - libm::cos(x as f64)).abs() < 1e-7);
        }
        assert_eq!(sin_cos_f32(0.0), (0.0, 1.0));
    }

    #[test]
    fn special_values_go_to_libm() {
        let (s, c) = sin_cos_f32(f32::NAN);
        assert!(s.is_nan() && c.is_nan());
        let (s, c) = sin_cos_f32(f32::INFINITY);
        assert!(s.is_nan() && c.is_nan());
        let (s, c) = sin_cos_f32(1e7);
        let (ws, wc) = libm::sincosf(1e7);
        assert_eq!((s, c), (ws, wc));
    }
}
