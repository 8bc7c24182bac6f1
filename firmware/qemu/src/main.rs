//! kappaline on an emulated Cortex-M.
//!
//! Checks the tracker's results against geometry worked out by hand (exits
//! non-zero on a mismatch), then measures instructions per call (see
//! `bench.rs`). Run under QEMU with `-icount shift=6` (the runners in
//! `.cargo/config.toml`): virtual time advances a fixed step per retired
//! instruction, so SysTick counts instructions exactly and repeatably once
//! calibrated against a loop of known length. These are retired
//! instructions, not cycles (QEMU models no pipeline, FPU latency or flash
//! wait states).

#![no_std]
#![no_main]

mod bench;
mod bench_long;
mod blob_check;
mod checks;
mod meter;
mod nmea_bench;

use cortex_m_rt::{entry, exception, ExceptionFrame};
use cortex_m_semihosting::{debug, hprintln};

#[entry]
fn main() -> ! {
    let mut meter = match cortex_m::Peripherals::take() {
        Some(p) => meter::Meter::new(p.SYST),
        None => fail("peripherals taken twice"),
    };
    checks::run();
    bench::run(&mut meter);
    nmea_bench::run(&meter);
    blob_check::run(&meter);
    hprintln!("all checks passed");
    debug::exit(debug::EXIT_SUCCESS);
    loop {
        cortex_m::asm::wfi();
    }
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
