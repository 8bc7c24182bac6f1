//! The smallest useful firmware, for measuring flash: a 100-segment path,
//! `Guidance` with pure pursuit, a loop of control cycles. Built with
//! `cargo build --profile minimal --bin minimal` (opt-level "s", LTO) and
//! measured with `llvm-size` / `llvm-nm --size-sort` on the ELF. It runs
//! under QEMU like the main firmware and exits once the path is done.

#![no_std]
#![no_main]

use cortex_m_rt::entry;
use cortex_m_semihosting::{debug, hprintln};
use kappaline::{
    Fix, FixUpdate, Guidance, GuidanceInput, GuidanceStatus, Micros, PathBuilder, Pose,
    PurePursuit, Segment, SupervisorConfig, TrackerConfig, Vehicle,
};

#[entry]
fn main() -> ! {
    let ok = run();
    hprintln!("minimal: {} cycles following", ok);
    debug::exit(if ok > 0 {
        debug::EXIT_SUCCESS
    } else {
        debug::EXIT_FAILURE
    });
    loop {
        cortex_m::asm::wfi();
    }
}

/// Cycles in Following along the path (0 on any setup error).
fn run() -> u32 {
    let Ok(mut b) = PathBuilder::<f32, 100>::new(Pose::new(0.0, 0.0, 0.0)) else {
        return 0;
    };
    for i in 0..100u32 {
        let seg = match i % 4 {
            0 => Segment::line(10.0),
            1 => Segment::transition(4.0, 0.0, 0.1),
            2 => Segment::arc(4.0, 0.1),
            _ => Segment::transition(4.0, 0.1, 0.0),
        };
        if seg.and_then(|s| b.try_push(s)).is_err() {
            return 0;
        }
    }
    let Ok(path) = b.build() else { return 0 };
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
