//! The Q32.32 fixed-point figures: `Tracker::update` and `Guidance::step`
//! (each law) on a line, an arc and a clothoid, min / median / max
//! instructions over 256 consecutive cycles, printed like the main binary's
//! (`@cost call;case;min;median;max`) so `cost_table.py` puts them beside
//! the `f32` rows.
//!
//! `cargo run --release --bin fixed-point [--target ...]`

#![no_std]
#![no_main]

#[path = "../bench_fixed.rs"]
mod bench_fixed;
#[path = "../meter.rs"]
mod meter;

use cortex_m_rt::{entry, exception, ExceptionFrame};
use cortex_m_semihosting::{debug, hprintln};

use meter::Stats;

#[entry]
fn main() -> ! {
    let mut meter = match cortex_m::Peripherals::take() {
        Some(p) => meter::Meter::new(p.SYST),
        None => fail("peripherals taken twice"),
    };
    hprintln!("instructions per call over 256 consecutive cycles: min / median / max");
    bench_fixed::run(&mut meter);
    hprintln!("all checks passed");
    debug::exit(debug::EXIT_SUCCESS);
    loop {
        cortex_m::asm::wfi();
    }
}

/// One figure, as a table line and as an `@cost` line.
pub fn report(call: &str, case: &str, st: &Stats) {
    hprintln!(
        "{:<40} {:<32} {:>7} {:>7} {:>7}",
        call,
        case,
        st.min,
        st.median,
        st.max
    );
    hprintln!(
        "@cost {};{};{};{};{}",
        call,
        case,
        st.min,
        st.median,
        st.max
    );
}

/// Prints why and exits with a failure.
pub fn fail(why: &str) -> ! {
    hprintln!("FAIL: {}", why);
    debug::exit(debug::EXIT_FAILURE);
    loop {
        cortex_m::asm::wfi();
    }
}

/// Fails unless `ok`.
pub fn check(ok: bool, why: &str) {
    if !ok {
        fail(why);
    }
}

#[exception]
unsafe fn HardFault(_frame: &ExceptionFrame) -> ! {
    hprintln!("FAIL: hard fault");
    debug::exit(debug::EXIT_FAILURE);
    loop {
        cortex_m::asm::wfi();
    }
}

#[panic_handler]
fn panic(_info: &core::panic::PanicInfo) -> ! {
    hprintln!("FAIL: panic");
    debug::exit(debug::EXIT_FAILURE);
    loop {
        cortex_m::asm::wfi();
    }
}
