//! Instructions per call from SysTick under `qemu -icount shift=6`.
//!
//! At `shift=6` each retired instruction advances virtual time by 64 ns, so
//! SysTick (25 MHz on the mps2 boards, 16 MHz on the micro:bit) gains 1.6
//! or 1.024 ticks per instruction. The rate is measured here against a
//! `subs`/`bne` loop of known length (two instructions per pass), and the
//! cost of the two SysTick reads around an empty call is subtracted, so a
//! measurement is in instructions to within one.

use cortex_m::peripheral::{syst::SystClkSource, SYST};

/// The 24-bit SysTick counter's mask (it counts down and wraps).
const MASK: u32 = 0x00FF_FFFF;

/// Converts SysTick ticks into instructions.
pub struct Meter {
    _syst: SYST,
    /// Ticks per 4096 instructions.
    ticks_per_4k: u32,
    /// Ticks of an empty measurement.
    overhead: u32,
}

impl Meter {
    /// Starts SysTick free-running and calibrates it.
    pub fn new(mut syst: SYST) -> Self {
        syst.set_clock_source(SystClkSource::Core);
        syst.set_reload(MASK);
        syst.clear_current();
        syst.enable_counter();
        let short = ticks_of_loop(2_000);
        let long = ticks_of_loop(52_000);
        // 50,000 more passes = 100,000 more instructions.
        let ticks_per_4k = ((long.wrapping_sub(short) & MASK) as u64 * 4096 / 100_000) as u32;
        let mut m = Self {
            _syst: syst,
            ticks_per_4k: ticks_per_4k.max(1),
            overhead: 0,
        };
        let mut least = u32::MAX;
        for _ in 0..16 {
            least = least.min(m.ticks(|| ()));
        }
        m.overhead = least;
        m
    }

    /// SysTick ticks taken by `f` (its result kept alive).
    #[inline(always)]
    fn ticks<R>(&self, f: impl FnOnce() -> R) -> u32 {
        let t0 = SYST::get_current();
        let r = f();
        core::hint::black_box(&r);
        let t1 = SYST::get_current();
        t0.wrapping_sub(t1) & MASK
    }

    /// Instructions retired by `f`, rounded to the nearest, and its result.
    #[inline(always)]
    pub fn instructions<R>(&self, f: impl FnOnce() -> R) -> (u32, R) {
        let t0 = SYST::get_current();
        let r = f();
        core::hint::black_box(&r);
        let t1 = SYST::get_current();
        let t = ((t0.wrapping_sub(t1) & MASK).saturating_sub(self.overhead)) as u64;
        let n = (t * 4096 + self.ticks_per_4k as u64 / 2) / self.ticks_per_4k as u64;
        (n as u32, r)
    }
}

/// Ticks for `passes` passes of a two-instruction loop.
#[inline(never)]
fn ticks_of_loop(passes: u32) -> u32 {
    let t0 = SYST::get_current();
    // SAFETY: a register-only countdown loop; touches no memory.
    unsafe {
        core::arch::asm!(
            "2:",
            "subs {n}, {n}, #1",
            "bne 2b",
            n = inout(reg) passes => _,
            options(nomem, nostack),
        );
    }
    let t1 = SYST::get_current();
    t0.wrapping_sub(t1) & MASK
}

/// Min, median and max of one call kind over consecutive calls.
pub struct Stats {
    pub min: u32,
    pub median: u32,
    pub max: u32,
}

impl Stats {
    /// From the per-call counts (sorted in place).
    pub fn of(counts: &mut [u32]) -> Self {
        counts.sort_unstable();
        let n = counts.len();
        Self {
            min: counts.first().copied().unwrap_or(0),
            median: counts.get(n / 2).copied().unwrap_or(0),
            max: counts.last().copied().unwrap_or(0),
        }
    }
}
