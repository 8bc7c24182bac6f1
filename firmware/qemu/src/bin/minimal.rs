//! The smallest useful firmware, for measuring flash: a 100-segment path
//! received as a blob (here embedded in flash: `build.rs` writes it on the
//! host, as a planner would, and the firmware decodes and checks it in
//! `f32`), `Guidance` with pure pursuit, a loop of control cycles. Built
//! with `cargo build --profile minimal --bin minimal` (opt-level "s", LTO)
//! and measured with `llvm-size` / `python3 flash_breakdown.py` on the
//! ELF. It runs under QEMU like the main firmware and exits once the path
//! is done. It prints through semihosting without `core::fmt` (a number
//! written by hand), as a firmware that reports by frames would.

#![no_std]
#![no_main]

use cortex_m_rt::entry;
use cortex_m_semihosting::{debug, hio};
use kappaline::io::blob::decode;
use kappaline::{
    Fix, FixUpdate, Guidance, GuidanceInput, GuidanceStatus, Micros, Path, PurePursuit,
    SupervisorConfig, TrackerConfig, Vehicle,
};

/// The path blob `build.rs` writes (100 segments, millimetre units).
static BLOB: &[u8] = include_bytes!(concat!(env!("OUT_DIR"), "/minimal.kpath"));

#[entry]
fn main() -> ! {
    let ok = run();
    if let Ok(mut out) = hio::hstdout() {
        let mut line = *b"minimal: 0000000000 cycles following\n";
        decimal(ok, &mut line[9..19]);
        let _ = out.write_all(&line);
    }
    debug::exit(if ok > 0 {
        debug::EXIT_SUCCESS
    } else {
        debug::EXIT_FAILURE
    });
    loop {
        cortex_m::asm::wfi();
    }
}

/// `v` in decimal into `digits`, right-aligned, zero-padded.
fn decimal(mut v: u32, digits: &mut [u8]) {
    for d in digits.iter_mut().rev() {
        *d = b'0' + (v % 10) as u8;
        v /= 10;
    }
}

/// Cycles in Following along the path (0 on any setup error).
fn run() -> u32 {
    let Ok((path, _)) = decode::<f32, 100>(BLOB) else {
        return 0;
    };
    let path: Path<f32, 100> = path;
    let Ok(vehicle) = Vehicle::front_steered(2.5f32, 0.6, 0.6) else {
        return 0;
    };
    let sup = SupervisorConfig::default_for(&vehicle);
    let Ok(mut g) = Guidance::new(
        vehicle,
        PurePursuit::tractor(),
        TrackerConfig::tractor(),
        sup,
    ) else {
        return 0;
    };
    let mut following = 0;
    for i in 0..500u32 {
        let now = Micros(100_000 * i);
        let p = path.at(1.0 + 0.2 * i as f32);
        let fix = Fix::new(p.x - 0.1 * p.sin, p.y + 0.1 * p.cos, p.heading(), 2.0, now);
        let cmd = g.step(
            &path,
            &GuidanceInput::new(FixUpdate::New(fix), now, 100_000),
        );
        if cmd.status == GuidanceStatus::Following {
            following += 1;
        }
    }
    following
}

#[panic_handler]
fn panic(_info: &core::panic::PanicInfo) -> ! {
    debug::exit(debug::EXIT_FAILURE);
    loop {
        cortex_m::asm::wfi();
    }
}
