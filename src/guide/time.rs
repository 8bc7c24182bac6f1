//! The time base of the per-cycle call: a monotonic `u32` count of
//! microseconds that wraps around.
//!
//! Seconds in `f32` lose resolution with uptime (62 ms at 10^6 s, 12 days;
//! 1 s at 10^7 s, 4 months), and with it every age, hold and jump tolerance
//! the supervisor computes. An integer count does not: only *differences*
//! of two instants are ever turned into seconds, and those are short.
//!
//! A free-running 32-bit microsecond counter (a hardware timer at 1 MHz, or
//! a wider counter truncated) wraps every 2^32 us = 71 min 35 s. Differences
//! are taken modulo 2^32 and read as signed, so they are right across the
//! wrap as long as the two instants lie less than 2^31 us (35 min 47 s)
//! apart, which every interval the guidance measures does (fix ages, hold
//! times, control periods). A caller that stops calling for longer sees its
//! next `now` as "going backwards" (a fault, then a restart in
//! `Acquiring`, see [`crate::guide::supervisor`]).

use crate::num::real::Real;

/// An instant: a monotonic count of microseconds, wrapping at 2^32.
///
/// ```
/// use kappaline::Micros;
/// let before = Micros(u32::MAX - 9); // 10 us before the wrap
/// let after = before.add_micros(30); // 20 us after it
/// assert_eq!(after, Micros(20));
/// assert_eq!(after.micros_since(before), 30);
/// assert_eq!(before.micros_since(after), -30);
/// assert_eq!(after.seconds_since::<f32>(before), 30e-6);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Micros(pub u32);

/// Microseconds in one second.
pub const MICROS_PER_SECOND: u32 = 1_000_000;

impl Micros {
    /// The instant `us` microseconds after this one (wrapping).
    #[must_use]
    pub const fn add_micros(self, us: u32) -> Self {
        Self(self.0.wrapping_add(us))
    }

    /// The instant `us` microseconds before this one (wrapping).
    #[must_use]
    pub const fn sub_micros(self, us: u32) -> Self {
        Self(self.0.wrapping_sub(us))
    }

    /// Microseconds from `earlier` to `self`, negative if `self` is before
    /// it; right across the wrap while the two lie less than 2^31 us apart.
    pub const fn micros_since(self, earlier: Micros) -> i32 {
        // Two's complement: the wrapped difference read as signed.
        self.0.wrapping_sub(earlier.0) as i32
    }

    /// Seconds from `earlier` to `self` (see [`Micros::micros_since`]).
    pub fn seconds_since<T: Real>(self, earlier: Micros) -> T {
        T::from_i32(self.micros_since(earlier)) / T::from_u32(MICROS_PER_SECOND)
    }

    /// `true` if `self` is after `other` (within the 2^31 us horizon).
    pub const fn is_after(self, other: Micros) -> bool {
        self.micros_since(other) > 0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn differences_across_the_wrap() {
        let t = Micros(u32::MAX);
        assert_eq!(t.add_micros(1), Micros(0));
        assert_eq!(Micros(5).micros_since(Micros(u32::MAX - 4)), 10);
        assert!(Micros(5).is_after(Micros(u32::MAX)));
        assert!(!Micros(u32::MAX).is_after(Micros(5)));
        // The horizon: 2^31 - 1 us ahead is still ahead.
        assert_eq!(
            Micros(0)
                .add_micros(i32::MAX as u32)
                .micros_since(Micros(0)),
            i32::MAX
        );
        assert_eq!(Micros(7).sub_micros(10), Micros(u32::MAX - 2));
    }

    #[test]
    fn seconds_of_micros() {
        let s: f64 = Micros(1_500_000).seconds_since(Micros(500_000));
        assert_eq!(s, 1.0);
        let s: f32 = Micros(0).seconds_since(Micros(50_000));
        assert_eq!(s, -0.05);
    }
}
