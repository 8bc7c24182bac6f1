//! A fixed-point backend: [`Q32x32`], signed Q32.32 in an `i64`.
//!
//! # Format
//! A value `v` is held as the integer `raw = round(v * 2^32)` in an `i64`
//! (two's complement; 32 integer bits including the sign, 32 fraction
//! bits). One format for every quantity, so the algorithms run unchanged:
//!
//! | quantity | unit | range without saturation | resolution |
//! |---|---|---|---|
//! | any value | - | `±(2^31 - 2^-31)` (about ±2.1e9) | `2^-32` (2.3e-10) |
//! | path anchor, station (so also path and segment length) | m | ±10 km ([`Q32x32::PLANE`]; a path beyond it is refused with `PathError::OutOfRange`) | 0.23 nm |
//! | position given to the tracker | m | ±20 km (beyond: `TrackError::OutOfRange`), so squared distances stay below 2^31 m² | 0.23 nm |
//! | heading, angle | rad | `(-pi, pi]` after wrapping | 2.3e-10 rad |
//! | curvature | 1/m | ±[`Q32x32::MAX_CURVATURE`] = ±100 (1 cm radius) | 2.3e-10 (1e-5 1/m is held to 2.3e-5 relative) |
//! | sharpness | 1/m² | ±[`Q32x32::MAX_SHARPNESS`] = ±1e4 | 2.3e-10 |
//!
//! # Saturation, never wrapping
//! Every operation saturates. The two extreme raw values `i64::MAX` and
//! `i64::MIN` are reserved as "overflowed" (positive and negative): a
//! result beyond the finite range, a division by zero, the square root of a
//! negative number and any operation with an overflowed operand give one of
//! them, and [`Real::is_finite`] is `false` for them. So an overflow
//! propagates like an `f32` NaN or infinity and is caught by the same
//! `is_finite` checks at the public entry points, which turn it into the
//! existing typed errors. Nothing wraps and nothing panics: the plain
//! operators of `i64` panic on overflow in debug builds and wrap in release
//! builds, so they are used only inside the operations, on values whose
//! bounds are stated beside them (a wider type, `checked_*` or a range
//! proven by the format).
//! [`Real::from_f64`] gives the overflowed value for NaN, infinities and
//! anything beyond the finite range.
//!
//! # Rounding
//! Multiplication, division, square root and conversion from `f64` round to
//! nearest (ties away from zero); addition and subtraction are exact.
//!
//! # Functions
//! * `sqrt`: the digit-by-digit (two bits per step) integer square root
//!   of `raw * 2^32`, correctly rounded (within 0.5 ulp).
//! * `sin_cos`: range reduction by `pi/2` carried in Q3.60, then CORDIC in
//!   rotation mode (J. E. Volder, "The CORDIC trigonometric computing
//!   technique", IRE Trans. Electronic Computers EC-8(3), 1959), 36
//!   iterations in Q3.60: within 2 ulp (4.7e-10) of `libm::sin` / `libm::cos`
//!   for `|x| <= 1000` (tested).
//! * `atan2`: CORDIC in vectoring mode on the operands scaled to 60 bits,
//!   then the quadrant: within 2 ulp of `libm::atan2` (tested).
//! * `floor`: clearing the fraction bits (exact).
//!
//! # Cost
//! A multiply is four 32 × 32 → 64-bit partial products (one `umull` each on Cortex-M3/M4; four `muls` each on
//! Cortex-M0, which has no 64-bit product). A division is one 64-bit
//! division and 32 steps of long division. `sin_cos` and `atan2` are 36
//! shift-and-add steps with no multiply.

use core::cmp::Ordering;
use core::fmt;
use core::ops::{Add, AddAssign, Div, Mul, MulAssign, Neg, Sub, SubAssign};

use crate::num::real::Real;

/// Raw value of the positive overflow.
const OVER: i64 = i64::MAX;
/// Raw value of the negative overflow.
const UNDER: i64 = i64::MIN;
/// Raw value of 1.
const ONE_RAW: i64 = 1 << 32;
/// Fraction bits of the CORDIC working format Q3.60.
const WORK_BITS: u32 = 60;
/// CORDIC iterations: the residual angle after them is below
/// `atan(2^-35) < 2^-35`, an eighth of an ulp of Q32.32.
const CORDIC_STEPS: usize = 36;
/// `atan(2^-i)` in Q3.60, `i = 0..36` (computed in double precision,
/// correct to about 2^-53, far below the 2^-32 that is kept).
const ATAN_TABLE: [i64; CORDIC_STEPS] = [
    0x0c90_fdaa_2216_8c00,
    0x076b_19c1_586e_d3c0,
    0x03eb_6ebf_2590_1ba0,
    0x01fd_5ba9_aac2_f6e0,
    0x00ff_aadd_b967_ef50,
    0x007f_f556_eea5_d890,
    0x003f_feaa_b776_e540,
    0x001f_ffd5_55bb_ba98,
    0x000f_fffa_aaad_ddde,
    0x0007_ffff_5555_6eef,
    0x0003_ffff_eaaa_ab77,
    0x0001_ffff_fd55_5556,
    0x0000_ffff_ffaa_aaab,
    0x0000_7fff_fff5_5555,
    0x0000_3fff_fffe_aaab,
    0x0000_1fff_ffff_d555,
    0x0000_0fff_ffff_faab,
    0x0000_07ff_ffff_ff55,
    0x0000_03ff_ffff_ffeb,
    0x0000_01ff_ffff_fffd,
    0x0000_0100_0000_0000,
    0x0000_0080_0000_0000,
    0x0000_0040_0000_0000,
    0x0000_0020_0000_0000,
    0x0000_0010_0000_0000,
    0x0000_0008_0000_0000,
    0x0000_0004_0000_0000,
    0x0000_0002_0000_0000,
    0x0000_0001_0000_0000,
    0x0000_0000_8000_0000,
    0x0000_0000_4000_0000,
    0x0000_0000_2000_0000,
    0x0000_0000_1000_0000,
    0x0000_0000_0800_0000,
    0x0000_0000_0400_0000,
    0x0000_0000_0200_0000,
];
/// The CORDIC gain's reciprocal `prod 1 / sqrt(1 + 2^-2i)` in Q3.60.
const CORDIC_K: i64 = 0x09b7_4eda_8435_e680;
/// `pi / 2` in Q3.60.
const HALF_PI_WORK: i64 = 1_811_004_864_519_280_640;
/// `pi` in Q3.60.
const PI_WORK: i64 = 3_622_009_729_038_561_280;
/// `2 / pi` in Q1.62.
const TWO_OVER_PI_Q62: i128 = 2_935_890_503_282_001_408;

/// A signed Q32.32 fixed-point number (see the module documentation for
/// range, resolution and saturation).
///
/// ```
/// use kappaline::{Q32x32, Real};
/// let x = Q32x32::from_f64(1.5);
/// assert_eq!((x * x).to_f64(), 2.25);
/// // Beyond the range: overflowed, not wrapped.
/// let big = Q32x32::from_f64(2.0e9);
/// assert!(!(big + big).is_finite());
/// assert!(!(Q32x32::ONE / Q32x32::ZERO).is_finite());
/// ```
#[derive(Clone, Copy, Default, PartialEq, Eq, Hash)]
pub struct Q32x32(i64);

impl Q32x32 {
    /// The value with raw representation `raw` (`value = raw / 2^32`).
    /// `i64::MAX` and `i64::MIN` are the overflowed values.
    #[inline]
    pub const fn from_bits(raw: i64) -> Self {
        Self(raw)
    }
    /// The raw representation (`value * 2^32`).
    #[inline]
    pub const fn to_bits(self) -> i64 {
        self.0
    }
    /// Largest finite value, `2^31 - 2^-31`.
    pub const MAX: Self = Self(OVER - 1);
    /// Smallest finite value, `-(2^31 - 2^-31)`.
    pub const MIN: Self = Self(UNDER + 1);

    /// Neither overflowed value: `raw - (i64::MIN + 1)`, as unsigned, is
    /// below `2^64 - 2` (one subtraction and one comparison).
    #[inline]
    const fn finite(self) -> bool {
        (self.0.wrapping_add(i64::MAX) as u64) < u64::MAX - 1
    }
}

/// Saturates a wide result into the finite range or an overflowed value.
#[inline]
fn saturate(v: i128) -> Q32x32 {
    if v >= OVER as i128 {
        Q32x32(OVER)
    } else if v <= UNDER as i128 {
        Q32x32(UNDER)
    } else {
        Q32x32(v as i64)
    }
}

/// The overflowed value with the sign of `negative`.
#[inline]
const fn overflowed(negative: bool) -> Q32x32 {
    if negative {
        Q32x32(UNDER)
    } else {
        Q32x32(OVER)
    }
}

/// `a * b` for 32-bit operands, as 64 bits.
///
/// ARMv6-M (Cortex-M0/M0+, recognised as the Arm cores without 32-bit
/// compare-and-swap) has only `muls`, 32 × 32 → 32 bits: there a 64-bit
/// product is a call to the runtime's general 64 × 64 multiply. Four 16-bit
/// partial products in `muls` are shorter. Elsewhere one `umull`.
#[inline(always)]
fn mul_wide(a: u32, b: u32) -> u64 {
    #[cfg(all(target_arch = "arm", not(target_has_atomic = "32")))]
    {
        mul_halves(a, b)
    }
    #[cfg(not(all(target_arch = "arm", not(target_has_atomic = "32"))))]
    {
        a as u64 * b as u64
    }
}

/// `a * b` from four 16 × 16 → 32-bit products (every partial product and
/// sum fits: `(2^16 - 1)^2 < 2^32`, the middle sum is below 2^33).
#[inline(always)]
#[cfg_attr(
    not(all(target_arch = "arm", not(target_has_atomic = "32"))),
    allow(dead_code)
)]
fn mul_halves(a: u32, b: u32) -> u64 {
    let (a1, a0) = (a >> 16, a & 0xffff);
    let (b1, b0) = (b >> 16, b & 0xffff);
    let mid = (a0 * b1) as u64 + (a1 * b0) as u64;
    (((a1 * b1) as u64) << 32) + (mid << 16) + (a0 * b0) as u64
}

/// `(a * b + 2^31) >> 32` for raw values (rounded to nearest, ties away
/// from zero), saturating. Magnitudes are split into 32-bit halves:
/// `|a| |b| = ah bh 2^64 + (ah bl + al bh) 2^32 + al bl`, four 32 × 32 → 64
/// products and no 128-bit arithmetic. Not inlined: the
/// product is too long to copy into every expression of the algorithms
/// (flash), and a call costs a few instructions against its tens.
#[inline(never)]
fn mul_raw(a: i64, b: i64) -> Q32x32 {
    let (qa, qb) = (Q32x32(a), Q32x32(b));
    let neg = (a < 0) != (b < 0);
    if !(qa.finite() && qb.finite()) {
        return overflowed(neg);
    }
    let (ua, ub) = (a.unsigned_abs(), b.unsigned_abs());
    let (ah, al) = ((ua >> 32) as u32, ua as u32);
    let (bh, bl) = ((ub >> 32) as u32, ub as u32);
    // The low product's top half, rounded on its bit 31; then the other
    // partial products, each only when its high half is not zero (values
    // below 1 in magnitude, such as unit-vector components, curvatures and
    // small angles, need one or two of the four).
    let low = mul_wide(al, bl);
    let mut acc = (low >> 32) + ((low >> 31) & 1);
    if bh != 0 {
        // al bh < 2^63 and acc < 2^33: no overflow.
        acc += mul_wide(al, bh);
    }
    if ah != 0 {
        let Some(m) = acc.checked_add(mul_wide(ah, bl)) else {
            return overflowed(neg);
        };
        acc = m;
        if bh != 0 {
            // The integer part ah bh must stay below 2^31.
            let hh = mul_wide(ah, bh);
            let Some(m) = (hh < 1 << 31).then(|| acc.checked_add(hh << 32)).flatten() else {
                return overflowed(neg);
            };
            acc = m;
        }
    }
    if acc >= OVER as u64 {
        return overflowed(neg);
    }
    let m = acc as i64;
    Q32x32(if neg { -m } else { m })
}

impl Add for Q32x32 {
    type Output = Self;
    #[inline(always)]
    fn add(self, o: Self) -> Self {
        let (r, carry) = self.0.overflowing_add(o.0);
        let r = Self(r);
        if carry || !(self.finite() && o.finite() && r.finite()) {
            return add_slow(self, o);
        }
        r
    }
}

/// The sum when an operand is overflowed or the result leaves the range.
#[cold]
#[inline(never)]
fn add_slow(a: Q32x32, b: Q32x32) -> Q32x32 {
    if !a.finite() {
        return a;
    }
    if !b.finite() {
        return b;
    }
    saturate(a.0 as i128 + b.0 as i128)
}

impl Sub for Q32x32 {
    type Output = Self;
    #[inline(always)]
    fn sub(self, o: Self) -> Self {
        let (r, borrow) = self.0.overflowing_sub(o.0);
        let r = Self(r);
        if borrow || !(self.finite() && o.finite() && r.finite()) {
            return add_slow(self, -o);
        }
        r
    }
}

impl Neg for Q32x32 {
    type Output = Self;
    #[inline(always)]
    fn neg(self) -> Self {
        // The finite range is symmetric; the two overflowed values swap.
        match self.0 {
            OVER => Self(UNDER),
            UNDER => Self(OVER),
            r => Self(-r),
        }
    }
}

impl Mul for Q32x32 {
    type Output = Self;
    #[inline(always)]
    fn mul(self, o: Self) -> Self {
        mul_raw(self.0, o.0)
    }
}

impl Div for Q32x32 {
    type Output = Self;
    /// Rounded to nearest; division by zero gives the overflowed value of
    /// the dividend's sign (positive for `0 / 0`).
    #[inline(never)]
    fn div(self, o: Self) -> Self {
        if !(self.finite() && o.finite()) || o.0 == 0 {
            return overflowed((self.0 < 0) != (o.0 < 0));
        }
        let neg = (self.0 < 0) != (o.0 < 0);
        let (n, d) = (self.0.unsigned_abs(), o.0.unsigned_abs());
        // Integer part in one 64-bit division, then the 32 fraction bits by
        // restoring long division (shift, compare, subtract): no 128-bit
        // division, which is a long runtime routine on 32-bit cores.
        let int = n / d;
        if int >= 1 << 31 {
            return overflowed(neg);
        }
        let mut r = n - int * d;
        let mut q = int;
        for _ in 0..32 {
            // r < d < 2^63: the shift does not overflow.
            r <<= 1;
            q <<= 1;
            if r >= d {
                r -= d;
                q |= 1;
            }
        }
        // Round half away from zero: 2 r >= d (2 r < 2^64).
        if 2 * r >= d {
            q += 1;
        }
        if q >= OVER as u64 {
            return overflowed(neg);
        }
        let q = q as i64;
        Q32x32(if neg { -q } else { q })
    }
}

impl AddAssign for Q32x32 {
    #[inline]
    fn add_assign(&mut self, o: Self) {
        *self = *self + o;
    }
}

impl SubAssign for Q32x32 {
    #[inline]
    fn sub_assign(&mut self, o: Self) {
        *self = *self - o;
    }
}

impl MulAssign for Q32x32 {
    #[inline]
    fn mul_assign(&mut self, o: Self) {
        *self = *self * o;
    }
}

impl PartialOrd for Q32x32 {
    #[inline]
    fn partial_cmp(&self, o: &Self) -> Option<Ordering> {
        Some(self.cmp(o))
    }
}

impl Ord for Q32x32 {
    /// The order of the values; the overflowed values sort beyond every
    /// finite one.
    #[inline]
    fn cmp(&self, o: &Self) -> Ordering {
        self.0.cmp(&o.0)
    }
}

impl fmt::Display for Q32x32 {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.0 {
            OVER => f.write_str("+overflow"),
            UNDER => f.write_str("-overflow"),
            _ => fmt::Display::fmt(&self.to_f64(), f),
        }
    }
}

impl fmt::Debug for Q32x32 {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "Q32x32({self})")
    }
}

/// Digit-by-digit square root of `raw * 2^32` (two bits per step),
/// rounded to nearest. `raw > 0`.
#[inline(never)]
fn isqrt_scaled(raw: u64) -> u64 {
    // The radicand is raw followed by 32 zero bits; its bit pairs are taken
    // from the top (constant shifts of a moving copy), after skipping the
    // leading zero pairs.
    let lz = raw.leading_zeros() & !1;
    let mut src = raw << lz;
    let pairs = (64 - lz) / 2 + 16;
    let mut rem: u64 = 0;
    let mut root: u64 = 0;
    for _ in 0..pairs {
        let two = src >> 62;
        src <<= 2;
        // rem <= 2 root < 2^49 before the shift: no overflow.
        rem = (rem << 2) | two;
        let trial = (root << 2) | 1;
        if rem >= trial {
            rem -= trial;
            root = (root << 1) | 1;
        } else {
            root <<= 1;
        }
    }
    // radicand = root^2 + rem; nearer root + 1 when rem > root.
    if rem > root {
        root + 1
    } else {
        root
    }
}

/// Calls `$step!(i)` for `i = 0..36`, unrolled, so every CORDIC shift is by
/// a constant (a 64-bit shift by a variable amount is a runtime call on
/// Cortex-M0).
macro_rules! each_cordic_step {
    ($step:ident) => {
        $step!(0);
        $step!(1);
        $step!(2);
        $step!(3);
        $step!(4);
        $step!(5);
        $step!(6);
        $step!(7);
        $step!(8);
        $step!(9);
        $step!(10);
        $step!(11);
        $step!(12);
        $step!(13);
        $step!(14);
        $step!(15);
        $step!(16);
        $step!(17);
        $step!(18);
        $step!(19);
        $step!(20);
        $step!(21);
        $step!(22);
        $step!(23);
        $step!(24);
        $step!(25);
        $step!(26);
        $step!(27);
        $step!(28);
        $step!(29);
        $step!(30);
        $step!(31);
        $step!(32);
        $step!(33);
        $step!(34);
        $step!(35);
    };
}

/// CORDIC rotation: `(sin z, cos z)` in Q3.60 for `|z| <= pi/4` in Q3.60.
#[inline(never)]
#[rustfmt::skip]
// The last step's update of the angle is not read (unrolled loop).
#[allow(unused_assignments)]
fn cordic_rotate(mut z: i64) -> (i64, i64) {
    let (mut x, mut y) = (CORDIC_K, 0i64);
    macro_rules! step {
        ($i:expr) => {
            let (dx, dy) = (y >> $i, x >> $i);
            if z >= 0 {
                x -= dx;
                y += dy;
                z -= ATAN_TABLE[$i];
            } else {
                x += dx;
                y -= dy;
                z += ATAN_TABLE[$i];
            }
        };
    }
    each_cordic_step!(step);
    (y, x)
}

/// CORDIC vectoring: `atan(y / x)` in Q3.60 for `x, y >= 0`, not both 0,
/// each below 2^61.
#[inline(never)]
#[rustfmt::skip]
// The last step's update of x and y is not read (unrolled loop).
#[allow(unused_assignments)]
fn cordic_vector(mut x: i64, mut y: i64) -> i64 {
    let mut z = 0i64;
    macro_rules! step {
        ($i:expr) => {
            let (dx, dy) = (y >> $i, x >> $i);
            if y > 0 {
                x += dx;
                y -= dy;
                z += ATAN_TABLE[$i];
            } else {
                x -= dx;
                y += dy;
                z -= ATAN_TABLE[$i];
            }
        };
    }
    each_cordic_step!(step);
    z
}

/// Q3.60 to Q32.32, rounded to nearest.
#[inline]
fn from_work(v: i64) -> Q32x32 {
    Q32x32((v >> (WORK_BITS - 32)) + ((v >> (WORK_BITS - 33)) & 1))
}

impl Real for Q32x32 {
    const ZERO: Self = Self(0);
    const ONE: Self = Self(ONE_RAW);
    const TWO: Self = Self(2 * ONE_RAW);
    const HALF: Self = Self(ONE_RAW / 2);
    /// `round(pi * 2^32) / 2^32`, within 1.2e-10 of pi.
    const PI: Self = Self(13_493_037_705);
    /// One ulp, `2^-32`.
    const EPSILON: Self = Self(1);
    /// A radius of 1 cm. The builder keeps every station within
    /// [`Self::PLANE`] (10 km), so a segment is at most 1e4 m long: the
    /// heading change `kappa u` stays below 1e6 rad, `u^2` below 1e8 and
    /// `sigma u^2` (at most `2 kappa_max u`) below 2e6, all far inside the
    /// range of ±2.1e9.
    const MAX_CURVATURE: Self = Self(100 * ONE_RAW);
    /// Large enough for any transition reaching [`Self::MAX_CURVATURE`] over
    /// 1 cm; `sigma u` is bounded by the end curvatures, and `sigma u^2`
    /// is formed as `(sigma u) u`.
    const MAX_SHARPNESS: Self = Self(10_000 * ONE_RAW);
    /// 10 km: path anchors within ±10 km and positions within ±20 km keep
    /// the squared distance `dx^2 + dy^2 <= 2 (3e4)^2 = 1.8e9` below 2^31.
    const PLANE: Self = Self(10_000 * ONE_RAW);

    /// Rounds to nearest (ties away from zero); NaN, infinities and values
    /// beyond the range give the overflowed value (positive for NaN).
    /// Always inlined and free of calls, so the constants the algorithms
    /// write as `c(1e-9)` fold at compile time instead of costing a
    /// soft-float conversion per use.
    #[inline(always)]
    fn from_f64(v: f64) -> Self {
        // 2^63 is exactly representable; the finite range ends below it.
        const LIMIT: f64 = 9_223_372_036_854_774_784.0; // 2^63 - 1024
        let scaled = v * (ONE_RAW as f64);
        if scaled.is_nan() {
            return Self(OVER);
        }
        if scaled >= LIMIT {
            return Self(OVER);
        }
        if scaled <= -LIMIT {
            return Self(UNDER);
        }
        // `as` truncates towards zero; |scaled| < 2^63 - 1024 fits.
        let half = if scaled < 0.0 { -0.5 } else { 0.5 };
        Self((scaled + half) as i64)
    }
    /// Exact below 2^21 in magnitude (53 significant bits); the overflowed
    /// values give `±inf`.
    fn to_f64(self) -> f64 {
        match self.0 {
            OVER => f64::INFINITY,
            UNDER => f64::NEG_INFINITY,
            r => r as f64 / ONE_RAW as f64,
        }
    }
    /// Exact up to 2^31 - 1; larger values give the overflowed value.
    #[inline]
    fn from_u32(v: u32) -> Self {
        if v > i32::MAX as u32 {
            Self(OVER)
        } else {
            Self((v as i64) << 32)
        }
    }
    /// Exact for every `i32` except `i32::MIN` (= -2^31, just outside the
    /// finite range), which gives the negative overflowed value.
    #[inline]
    fn from_i32(v: i32) -> Self {
        if v == i32::MIN {
            Self(UNDER)
        } else {
            Self((v as i64) << 32)
        }
    }
    /// Correctly rounded; negative input gives the overflowed value (the
    /// analogue of NaN), 0 gives 0.
    fn sqrt(self) -> Self {
        if !self.finite() || self.0 < 0 {
            return Self(OVER);
        }
        if self.0 == 0 {
            return self;
        }
        Self(isqrt_scaled(self.0 as u64) as i64)
    }
    #[inline]
    fn abs(self) -> Self {
        if self.0 < 0 {
            -self
        } else {
            self
        }
    }
    /// Range reduction to `[-pi/4, pi/4]` with `pi/2` in Q3.60, then
    /// CORDIC rotation. Overflowed input gives overflowed output.
    #[inline(never)]
    fn sin_cos(self) -> (Self, Self) {
        if !self.finite() {
            return (Self(OVER), Self(OVER));
        }
        // k = round(x * 2 / pi): x (Q32.32) times 2/pi (Q1.62) is Q33.94.
        let p = self.0 as i128 * TWO_OVER_PI_Q62;
        let k = (p + (1i128 << 93)) >> 94;
        // r = x - k pi/2 in Q3.60: x << 28 minus k * (pi/2 in Q3.60); both
        // terms are below 2^91, the difference below pi/4.
        let r = ((self.0 as i128) << (WORK_BITS - 32)) - k * HALF_PI_WORK as i128;
        let (s, c) = cordic_rotate(r as i64);
        let (s, c) = (from_work(s), from_work(c));
        match k & 3 {
            0 => (s, c),
            1 => (c, -s),
            2 => (-s, -c),
            _ => (-c, s),
        }
    }
    /// CORDIC vectoring on `(|x|, |y|)` scaled to 60 bits, then the
    /// quadrant; `atan2(0, 0) = 0`, overflowed input gives overflowed
    /// output.
    #[inline(never)]
    fn atan2(self, x: Self) -> Self {
        if !(self.finite() && x.finite()) {
            return Self(OVER);
        }
        let (ax, ay) = (x.0.unsigned_abs(), self.0.unsigned_abs());
        let top = ax.max(ay);
        if top == 0 {
            return Self::ZERO;
        }
        // Scale both so the larger has its top bit at 60: the vectoring
        // gain (1.65) times sqrt(2) keeps x below 2^63.
        let lz = top.leading_zeros() as i32 - 3;
        let (sx, sy) = if lz >= 0 {
            ((ax << lz) as i64, (ay << lz) as i64)
        } else {
            ((ax >> -lz) as i64, (ay >> -lz) as i64)
        };
        let mut a = cordic_vector(sx, sy);
        if x.0 < 0 {
            a = PI_WORK - a;
        }
        let a = from_work(a);
        if self.0 < 0 {
            -a
        } else {
            a
        }
    }
    #[inline]
    fn floor(self) -> Self {
        if !self.finite() {
            return self;
        }
        Self(self.0 & !(ONE_RAW - 1))
    }
    #[inline]
    fn is_finite(self) -> bool {
        self.finite()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The Cortex-M0 product from 16-bit halves against the host's 64-bit
    /// multiply, at the corners and on a pseudo-random sweep (xorshift32).
    #[test]
    fn halves_product_equals_the_wide_product() {
        let corners = [
            0u32,
            1,
            0xffff,
            0x1_0000,
            0x7fff_ffff,
            0x8000_0000,
            u32::MAX,
        ];
        for &a in &corners {
            for &b in &corners {
                assert_eq!(mul_halves(a, b), a as u64 * b as u64, "{a} {b}");
            }
        }
        let mut x = 0x9e37_79b9u32;
        for _ in 0..100_000 {
            x ^= x << 13;
            x ^= x >> 17;
            x ^= x << 5;
            let y = x.rotate_left(11) ^ 0x5bd1_e995;
            assert_eq!(mul_halves(x, y), x as u64 * y as u64);
        }
    }
}
