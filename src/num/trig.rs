//! `sin_cos` for `f32` in `f32` arithmetic.
//!
//! libm's `sinf`/`cosf` reduce and evaluate in `f64` to be correctly rounded;
//! on a Cortex-M4F, whose FPU is single precision, that is soft-float `f64`
//! and costs about a thousand instructions a call (and its `f64` routines
//! several kilobytes of flash). This version stays in `f32` and integers.
//! Up to `|x| = 12_000` rad: a three-part Cody–Waite reduction by `pi/2`
//! (the first two parts have 11 significant bits, so `k * part` is exact
//! for `|k| < 2^13`). Beyond: the Payne–Hanek reduction in integers, `x`'s
//! 24-bit significand times a 64-bit window of the bits of `2/pi` taken at
//! `x`'s exponent (the product's low 64 bits are `x * 2/pi` modulo 4, to
//! `2^-40`). Then the Taylor polynomials of `sin` and `cos` on
//! `[-pi/4, pi/4]` (degree 9 and 10; the truncation error is below 2e-9, a
//! thirtieth of an `f32` ulp at 1).
//!
//! # Accuracy
//! Against libm's `f64` `sin`/`cos` of the same `f32` input (the tests):
//! absolute error below 1.2e-7 (2 ulp) for `|x| <= 12_000` rad, below
//! 2.5e-7 for every larger finite `x`. NaN and infinities give NaN.

/// `pi/2` split into parts: 11 bits, 11 bits, and the `f32` rest.
const PIO2_1: f32 = 1.570_312_5;
const PIO2_2: f32 = 4.837_513e-4;
const PIO2_3: f32 = 7.549_79e-8;
/// `2/pi`.
const TWO_OVER_PI: f32 = core::f32::consts::FRAC_2_PI;
/// Above this `|x|`, `k` could exceed 2^13 and the reduction lose bits.
const REDUCE_LIMIT: f32 = 12_000.0;
/// The first 192 bits of the binary fraction of `2/pi`, most significant
/// first (computed with mpmath at 400 bits: `floor(2/pi * 2^192)`). The
/// largest `f32` (exponent 127, `skip` 102) reads bits 103 to 166.
const TWO_OVER_PI_BITS: [u32; 6] = [
    0xA2F9_836E,
    0x4E44_1529,
    0xFC27_57D1,
    0xF534_DDC0,
    0xDB62_9599,
    0x3C43_9041,
];
/// `pi/2 / 2^62`: the quadrant fraction's scale.
const PIO2_OVER_2_62: f32 = core::f32::consts::FRAC_PI_2 / 4_611_686_018_427_387_904.0;

/// `(sin x, cos x)` for `f32` without `f64` arithmetic.
pub(crate) fn sin_cos_f32(x: f32) -> (f32, f32) {
    if !x.is_finite() {
        return (f32::NAN, f32::NAN);
    }
    let (quadrant, r) = if x.abs() > REDUCE_LIMIT {
        reduce_large(x)
    } else {
        reduce_small(x)
    };
    let (s, c) = kernel(r);
    match quadrant & 3 {
        0 => (s, c),
        1 => (c, -s),
        2 => (-s, -c),
        _ => (-c, s),
    }
}

/// `x = k pi/2 + r`, `|r| <= pi/4`, for `|x| <= REDUCE_LIMIT` (Cody–Waite).
fn reduce_small(x: f32) -> (u32, f32) {
    // Round to nearest without `round()` (not in core): add and subtract.
    let kf = libm::floorf(x * TWO_OVER_PI + 0.5);
    let r = ((x - kf * PIO2_1) - kf * PIO2_2) - kf * PIO2_3;
    // kf is a whole number below 2^13 in magnitude: the cast is exact, and
    // only its two low bits (two's complement) are used.
    (kf as i32 as u32, r)
}

/// `x = k pi/2 + r`, `|r| <= pi/4`, for finite `|x| > 2^13` (Payne–Hanek).
///
/// `|x| = m 2^e` with `m < 2^24` and `e >= -10`. Write `2^(e-2) 2/pi = I + F`
/// (`I` whole, `0 <= F < 1`): then `|x| 2/pi = 4 m I + 4 m F`, so modulo 4 it
/// is `4 frac(m F)`, and `frac(m F)` is the low 64 bits of `m W / 2^64`,
/// `W = floor(F 2^64)` the 64 bits of `2/pi` after bit `e - 2` (the error,
/// `m 2^-64`, is below `2^-40`).
fn reduce_large(x: f32) -> (u32, f32) {
    let bits = x.abs().to_bits();
    let exponent = (bits >> 23) as i32 - 150;
    let m = u64::from((bits & 0x007F_FFFF) | 0x0080_0000);
    let window = two_over_pi_after(exponent - 2);
    // The quarter turns of |x| in the top 2 bits, the rest below; adding half
    // a quarter rounds to the nearest quadrant.
    let turns = m.wrapping_mul(window).wrapping_add(1 << 61);
    let quadrant = (turns >> 62) as u32;
    let rest = (turns & ((1 << 62) - 1)) as i64 - (1 << 61);
    let r = rest as f32 * PIO2_OVER_2_62;
    if x < 0.0 {
        // sin(-x) = -sin x: the quadrant and the rest change sign.
        (quadrant.wrapping_neg(), -r)
    } else {
        (quadrant, r)
    }
}

/// The 64 bits of `2/pi` after its first `skip` fraction bits (`skip >= -12`:
/// the bits before the binary point are zeros).
fn two_over_pi_after(skip: i32) -> u64 {
    (u64::from(two_over_pi_word(skip)) << 32) | u64::from(two_over_pi_word(skip + 32))
}

/// The 32 fraction bits of `2/pi` after its first `skip`, zeros outside the table.
fn two_over_pi_word(skip: i32) -> u32 {
    let word = |i: i32| {
        usize::try_from(i)
            .ok()
            .and_then(|i| TWO_OVER_PI_BITS.get(i))
            .copied()
            .unwrap_or(0)
    };
    if skip < 0 {
        return word(0) >> skip.unsigned_abs().min(31);
    }
    let (i, shift) = (skip / 32, (skip % 32) as u32);
    if shift == 0 {
        word(i)
    } else {
        (word(i) << shift) | (word(i + 1) >> (32 - shift))
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
    fn special_values_give_nan() {
        for x in [f32::NAN, f32::INFINITY, f32::NEG_INFINITY] {
            let (s, c) = sin_cos_f32(x);
            assert!(s.is_nan() && c.is_nan(), "{x}");
        }
    }

    /// The error against libm's `f64` `sin`/`cos` of the same input.
    fn error_at(xf: f32) -> f64 {
        let (s, c) = sin_cos_f32(xf);
        let x = f64::from(xf);
        (f64::from(s) - libm::sin(x))
            .abs()
            .max((f64::from(c) - libm::cos(x)).abs())
    }

    #[test]
    fn large_arguments_match_libm_f64_to_every_exponent() {
        // Reference: libm 0.2 `sin`/`cos` in f64 (its own Payne–Hanek
        // reduction for large arguments). Every exponent from 2^13 to the
        // largest f32, many significands each, both signs, and the edge of
        // the small-argument reduction.
        let mut worst = 0.0f64;
        let mut seed = 0x2545_f491u32;
        for exponent in 13..=127 {
            for _ in 0..2_000 {
                seed ^= seed << 13;
                seed ^= seed >> 17;
                seed ^= seed << 5;
                let bits = ((exponent + 127) << 23) | (seed & 0x007f_ffff);
                let x = f32::from_bits(bits);
                worst = worst.max(error_at(x)).max(error_at(-x));
            }
        }
        for x in [12_000.001f32, 16_384.0, 1e7, f32::MAX, -f32::MAX] {
            worst = worst.max(error_at(x));
        }
        std::println!("worst |error| beyond 12000: {worst:e}");
        assert!(worst < 2.5e-7, "worst error {worst}");
    }

    #[test]
    fn large_arguments_near_a_multiple_of_a_quarter_turn() {
        // The f32 nearest to multiples of pi/2 (computed in f64, far more
        // precise): sin or cos is small there, and an inexact reduction shows
        // as an absolute error of its size.
        let mut worst = 0.0f64;
        for k in [8_000u64, 123_457, 5_000_001, 1 << 40, 987_654_321_987] {
            let x = (k as f64 * core::f64::consts::FRAC_PI_2) as f32;
            worst = worst.max(error_at(x)).max(error_at(-x));
        }
        assert!(worst < 2.5e-7, "worst error {worst}");
    }
}
