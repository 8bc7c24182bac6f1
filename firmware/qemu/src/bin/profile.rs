//! A per-cycle profile helper: the benchmark's `Guidance::step` (pure
//! pursuit) on the case chosen at build time (`KAPPALINE_PROFILE_CASE` =
//! `line`, `arc` or `clothoid`; arc by default), 64 consecutive cycles
//! between calls of `profile_begin` and `profile_end`. Run it under QEMU with
//! one instruction per translation block and the execution log
//! (`profile.py` does that) to count instructions per source line.

#![no_std]
#![no_main]

#[allow(dead_code)]
#[path = "../meter.rs"]
mod meter;

use cortex_m_rt::entry;
use cortex_m_semihosting::{debug, hprintln};
use kappaline::{
    Continuity, Fix, FixUpdate, Guidance, GuidanceInput, GuidanceStatus, Micros, Path, PathBuilder,
    Pose, PurePursuit, Segment, SupervisorConfig, TrackerConfig, Vehicle,
};
use meter::Meter;

const CYCLES: usize = 64;
const START: f32 = 10.0;
const STEP: f32 = 0.1;
const PERIOD_US: u32 = 100_000;

fn path() -> Option<Path<f32, 4>> {
    let case = option_env!("KAPPALINE_PROFILE_CASE").unwrap_or("arc");
    let built = match case.as_bytes() {
        b"line" => PathBuilder::new(Pose::new(0.0, 0.0, 0.3))
            .and_then(|b| b.push(Segment::line(500.0)?))
            .and_then(|b| b.build()),
        b"clothoid" => PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
            .and_then(|b| b.push(Segment::transition(100.0, 0.0, 0.1)?))
            .and_then(|b| b.build()),
        _ => PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
            .and_then(|b| b.push(Segment::arc(2.0 * core::f32::consts::PI * 20.0, 0.05)?))
            .and_then(|b| b.close(Continuity::DEFAULT)),
    };
    built.ok()
}

fn input(path: &Path<f32, 4>, i: usize) -> GuidanceInput<f32> {
    let s = START + STEP * i as f32;
    let p = path.at(s);
    let d = 0.2 + 0.05 * libm::sinf(0.9 * i as f32);
    let h = p.heading() + 0.03 * libm::sinf(0.5 * i as f32);
    let now = Micros(PERIOD_US * i as u32);
    let fix = Fix::new(p.x - d * p.sin, p.y + d * p.cos, h, 1.0, now);
    GuidanceInput::new(FixUpdate::New(fix), now, PERIOD_US)
}

#[inline(never)]
#[no_mangle]
pub extern "C" fn profile_begin() {
    core::hint::black_box(0x600d_u32);
}

#[inline(never)]
#[no_mangle]
pub extern "C" fn profile_end() {
    core::hint::black_box(0x0e4d_u32);
}

/// As `bench::guidance` (the same loop, measured with the same meter, so
/// the code around `Guidance::step` is compiled as in the benchmark).
#[inline(never)]
fn guidance(m: &Meter, path: &Path<f32, 4>) -> bool {
    let Ok(vehicle) = Vehicle::front_steered(2.5f32, 0.6, 0.6) else {
        return false;
    };
    let sup = SupervisorConfig::default_for(&vehicle);
    let Ok(mut g) = Guidance::new(
        vehicle,
        PurePursuit::tractor(),
        TrackerConfig::tractor(),
        sup,
    ) else {
        return false;
    };
    let mut first = 0;
    while g.status() != GuidanceStatus::Following || first < 8 {
        if first >= 64 {
            return false;
        }
        let _ = g.step(path, &input(path, first));
        first += 1;
    }
    let mut counts = [0u32; CYCLES];
    let mut ok = true;
    profile_begin();
    for (i, c) in counts.iter_mut().enumerate() {
        let inp = input(path, i + first);
        let (n, cmd) = m.instructions(|| g.step(path, &inp));
        *c = n;
        ok &= cmd.curvature.is_finite() && cmd.status == GuidanceStatus::Following;
    }
    profile_end();
    core::hint::black_box(&counts);
    ok
}

#[entry]
fn main() -> ! {
    let Some(p) = cortex_m::Peripherals::take() else {
        debug::exit(debug::EXIT_FAILURE);
        loop {
            cortex_m::asm::wfi();
        }
    };
    let m = Meter::new(p.SYST);
    let ok = path().is_some_and(|path| guidance(&m, &path));
    hprintln!("profile: {}", if ok { "following" } else { "FAILED" });
    debug::exit(if ok {
        debug::EXIT_SUCCESS
    } else {
        debug::EXIT_FAILURE
    });
    loop {
        cortex_m::asm::wfi();
    }
}

#[panic_handler]
fn panic(_info: &core::panic::PanicInfo) -> ! {
    debug::exit(debug::EXIT_FAILURE);
    loop {
        cortex_m::asm::wfi();
    }
}
