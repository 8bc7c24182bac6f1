//! kappaline on an emulated Cortex-M.
//!
//! Runs the tracker on a few paths, checks its results against geometry
//! worked out by hand (exits non-zero on a mismatch), and prints how many
//! instructions each call retires. Under QEMU with `-icount shift=0` virtual
//! time advances one fixed step per instruction, so SysTick counts
//! instructions exactly and repeatably: 40 per tick on the mps2 boards,
//! 62.5 on the micro:bit. These are retired instructions, not cycles (QEMU
//! models no pipeline, FPU latency or flash wait states).

#![no_std]
#![no_main]

mod blob_check;

use core::f32::consts::PI;

use cortex_m::peripheral::{syst::SystClkSource, SYST};
use cortex_m_rt::{entry, exception, ExceptionFrame};
use cortex_m_semihosting::{debug, hprintln};
use kappaline::{
    Cursor, Fix, FixUpdate, FrenetFeedback, Guidance, GuidanceInput, GuidanceStatus, Micros, Path,
    PathBuilder, Pose, PurePursuit, Real, Segment, Stanley, SteeringLaw, SupervisorConfig,
    TrackStatus, Tracker, TrackerConfig, Vehicle,
};

/// Instructions per SysTick tick, times 10 (mps2: 40; micro:bit: 62.5).
#[cfg(not(armv6m))]
const TENTHS_PER_TICK: u32 = 400;
#[cfg(armv6m)]
const TENTHS_PER_TICK: u32 = 625;

/// Calls per measurement.
const REPS: u32 = 64;

#[entry]
fn main() -> ! {
    let mut syst = match cortex_m::Peripherals::take() {
        Some(p) => p.SYST,
        None => fail("peripherals taken twice"),
    };
    syst.set_clock_source(SystClkSource::Core);
    syst.set_reload(0x00FF_FFFF);
    syst.clear_current();
    syst.enable_counter();

    hprintln!(
        "kappaline on target: instructions per call (mean of {} calls)",
        REPS
    );
    measure_trig(&mut syst);
    line_path(&mut syst);
    arc_path(&mut syst);
    clothoid_path(&mut syst);
    long_path(&mut syst);
    guidance(&mut syst);
    nmea(&mut syst);
    blob_check::run(&mut syst);
    hprintln!("all checks passed");
    debug::exit(debug::EXIT_SUCCESS);
    loop {
        cortex_m::asm::wfi();
    }
}

/// Mean instructions per call of `f` over `REPS` calls.
fn count(syst: &mut SYST, mut f: impl FnMut(u32)) -> u32 {
    syst.clear_current();
    let start = SYST::get_current();
    for i in 0..REPS {
        f(i);
    }
    let end = SYST::get_current();
    let ticks = start.wrapping_sub(end) & 0x00FF_FFFF;
    ticks * TENTHS_PER_TICK / 10 / REPS
}

fn report(what: &str, instructions: u32) {
    hprintln!("{:<44} {:>7}", what, instructions);
}

fn fail(why: &str) -> ! {
    hprintln!("FAIL: {}", why);
    debug::exit(debug::EXIT_FAILURE);
    loop {
        cortex_m::asm::wfi();
    }
}

fn check(ok: bool, why: &str) {
    if !ok {
        fail(why);
    }
}

// Its own stack frame: the 16 KiB of RAM cannot hold every test at once.
#[inline(never)]
fn measure_trig(syst: &mut SYST) {
    let mut acc = 0.0f32;
    let n = count(syst, |i| {
        let (s, c) = (0.01 * i as f32).sin_cos();
        acc += s + c;
    });
    report("sin_cos f32 (kappaline)", n);
    let m = count(syst, |i| {
        let (s, c) = libm::sincosf(0.01 * i as f32);
        acc += s + c;
    });
    report("sincosf f32 (libm)", m);
    check(acc.is_finite(), "trig");
}

/// Runs the tracker along a path, a step of 0.1 m per call, 0.2 m left.
// Its own stack frame: the 16 KiB of RAM cannot hold every test at once.
#[inline(never)]
fn drive<const N: usize>(syst: &mut SYST, path: &Path<f32, N>, label: &str) {
    let mut tracker = match Tracker::new(TrackerConfig::tractor()) {
        Ok(t) => t,
        Err(_) => fail("config"),
    };
    let mut cursor = Cursor::start();
    // Acquire first (a whole-path search), then time the steady updates.
    let p0 = cursor.point(path);
    let start = Pose::new(p0.x - 0.2 * p0.sin, p0.y + 0.2 * p0.cos, p0.heading());
    check(tracker.update(path, &start).is_ok(), "acquire");
    let mut worst = 0.0f32;
    let n = count(syst, |_| {
        let p = match cursor.advance(path, 0.1) {
            Ok((p, _)) => p,
            Err(_) => fail("advance"),
        };
        let pose = Pose::new(p.x - 0.2 * p.sin, p.y + 0.2 * p.cos, p.heading());
        match tracker.update(path, &pose) {
            Ok(t) if t.status == TrackStatus::OnPath => {
                worst = worst
                    .max((t.cross_track - 0.2).abs())
                    .max((t.station - p.station).abs());
            }
            _ => fail("update"),
        }
    });
    report(label, n);
    check(worst < 1e-4, "tracking error on target");
    let mut c2 = Cursor::start();
    let m = count(syst, |_| {
        if c2.advance(path, 0.1).is_err() {
            fail("advance");
        }
    });
    report("  cursor advance by 0.1 m", m);
}

// Its own stack frame: the 16 KiB of RAM cannot hold every test at once.
#[inline(never)]
fn line_path(syst: &mut SYST) {
    let path = match PathBuilder::<f32, 4>::new(Pose::new(0.0, 0.0, 0.3))
        .and_then(|b| b.push(Segment::line(500.0)?))
        .and_then(|b| b.build())
    {
        Ok(p) => p,
        Err(_) => fail("line path"),
    };
    // Hand geometry: a point 0.25 m left of station 40 on a line at 0.3 rad.
    let (s, c) = (libm::sinf(0.3), libm::cosf(0.3));
    let mut t = Tracker::new(TrackerConfig::tractor()).unwrap_or_else(|_| fail("cfg"));
    let r = t
        .update(
            &path,
            &Pose::new(40.0 * c - 0.25 * s, 40.0 * s + 0.25 * c, 0.4),
        )
        .unwrap_or_else(|_| fail("line update"));
    check((r.station - 40.0).abs() < 1e-4, "line station");
    check((r.cross_track - 0.25).abs() < 1e-5, "line cross-track");
    check((r.heading_error - 0.1).abs() < 1e-5, "line heading error");
    drive(syst, &path, "tracker update, line");
}

// Its own stack frame: the 16 KiB of RAM cannot hold every test at once.
#[inline(never)]
fn arc_path(syst: &mut SYST) {
    let path = match PathBuilder::<f32, 4>::new(Pose::new(0.0, 0.0, 0.0))
        .and_then(|b| b.push(Segment::arc(2.0 * PI * 20.0, 0.05)?))
        .and_then(|b| b.close(kappaline::Continuity::DEFAULT))
    {
        Ok(p) => p,
        Err(_) => fail("arc path"),
    };
    // Hand geometry: circle of radius 20 about (0, 20); the point (20, 20.5)
    // is a quarter turn round (station 10 pi), 0.5 m outside (to the right).
    let mut t = Tracker::new(TrackerConfig::tractor()).unwrap_or_else(|_| fail("cfg"));
    let r = t
        .update(&path, &Pose::new(20.5, 20.0, PI / 2.0))
        .unwrap_or_else(|_| fail("arc update"));
    check((r.station - 10.0 * PI).abs() < 1e-4, "arc station");
    check((r.cross_track + 0.5).abs() < 1e-5, "arc cross-track");
    drive(syst, &path, "tracker update, arc (closed circle)");
}

// Its own stack frame: the 16 KiB of RAM cannot hold every test at once.
#[inline(never)]
fn clothoid_path(syst: &mut SYST) {
    let path = match PathBuilder::<f32, 4>::new(Pose::new(0.0, 0.0, 0.0))
        .and_then(|b| b.push(Segment::transition(60.0, 0.0, 0.1)?))
        .and_then(|b| b.build())
    {
        Ok(p) => p,
        Err(_) => fail("clothoid path"),
    };
    drive(syst, &path, "tracker update, clothoid");
}

// Its own stack frame: the 16 KiB of RAM cannot hold every test at once.
#[inline(never)]
fn long_path(syst: &mut SYST) {
    // 200 segments: the cost of an update must not grow with path length.
    let mut b =
        PathBuilder::<f32, 200>::new(Pose::new(0.0, 0.0, 0.0)).unwrap_or_else(|_| fail("b"));
    for i in 0..200u32 {
        let seg = if i % 2 == 0 {
            Segment::line(5.0)
        } else {
            Segment::arc(2.0, if i % 4 == 1 { 0.05 } else { -0.05 })
        };
        let ok = seg.and_then(|s| b.try_push(s));
        check(ok.is_ok(), "long path push");
    }
    let path = b.build().unwrap_or_else(|_| fail("long path"));
    drive(syst, &path, "tracker update, 200 line/arc segments");
}

/// One full control update: tracker, steering law, limits, speed cap and
/// supervisor, on a field pass with a clothoid entry into a turn.
// Its own stack frame: the 16 KiB of RAM cannot hold every test at once.
#[inline(never)]
fn guidance(syst: &mut SYST) {
    let path = match PathBuilder::<f32, 8>::new(Pose::new(0.0, 0.0, 0.0))
        .and_then(|b| b.push(Segment::line(30.0)?))
        .and_then(|b| b.push(Segment::transition(6.0, 0.0, 0.125)?))
        .and_then(|b| b.push(Segment::arc(10.0, 0.125)?))
        .and_then(|b| b.push(Segment::transition(6.0, 0.125, 0.0)?))
        .and_then(|b| b.push(Segment::line(30.0)?))
        .and_then(|b| b.build())
    {
        Ok(p) => p,
        Err(_) => fail("guidance path"),
    };
    let vehicle = Vehicle::front_steered(2.5f32, 0.6, 0.6).unwrap_or_else(|_| fail("vehicle"));
    guidance_with(
        syst,
        &path,
        vehicle,
        PurePursuit::tractor(),
        "guidance, pure pursuit,",
    );
    guidance_with(
        syst,
        &path,
        vehicle,
        Stanley::tractor(),
        "guidance, Stanley,",
    );
    guidance_with(
        syst,
        &path,
        vehicle,
        FrenetFeedback::tractor(),
        "guidance, Frenet,",
    );
}

// Its own stack frame: the 16 KiB of RAM cannot hold every test at once.
#[inline(never)]
fn guidance_with<L: SteeringLaw<f32>>(
    syst: &mut SYST,
    path: &Path<f32, 8>,
    vehicle: Vehicle<f32>,
    law: L,
    label: &str,
) {
    let supervisor = SupervisorConfig::default_for(&vehicle);
    let mut g = Guidance::new(vehicle, law, TrackerConfig::tractor(), supervisor)
        .unwrap_or_else(|_| fail("guidance"));
    let dt = 0.1f32;
    let period_us = 100_000u32;
    let speed = 2.0f32;
    let mut cursor = Cursor::start();
    let mut now = Micros(0);
    let input = |cursor: &mut Cursor<f32>, now: Micros| {
        let p = match cursor.advance(path, speed * dt) {
            Ok((p, _)) => p,
            Err(_) => fail("advance"),
        };
        let fix = Fix::new(
            p.x - 0.1 * p.sin,
            p.y + 0.1 * p.cos,
            p.heading(),
            speed,
            now,
        );
        GuidanceInput::new(FixUpdate::New(fix), now, period_us)
    };
    // Settle into Following first (acquisition is not the steady cost).
    for _ in 0..20 {
        now = now.add_micros(period_us);
        let i = input(&mut cursor, now);
        let _ = g.step(path, &i);
    }
    for part in ["straight", "clothoid and arc"] {
        if part != "straight" {
            // Drive on to the clothoid that starts at station 30.
            while cursor.station(path) < 30.0 {
                now = now.add_micros(period_us);
                let i = input(&mut cursor, now);
                let _ = g.step(path, &i);
            }
        }
        let mut following = 0u32;
        let n = count(syst, |_| {
            now = now.add_micros(period_us);
            let i = input(&mut cursor, now);
            let cmd = g.step(path, &i);
            check(
                cmd.curvature.is_finite() && cmd.speed_limit.is_finite(),
                "command finite",
            );
            if cmd.status == GuidanceStatus::Following {
                following += 1;
            }
        });
        hprintln!("{:<24}{:<20} {:>7}", label, part, n);
        check(following == REPS, "guidance following");
    }
}

/// Receiver input: one epoch of four sentences (GGA, VTG, HDT, GST)
/// through the reader, and the assembler turning them into a fix (geodesy
/// in f64, soft-float on these cores).
// Its own stack frame: the 16 KiB of RAM cannot hold every test at once.
#[inline(never)]
fn nmea(syst: &mut SYST) {
    use kappaline::io::nmea::{EpochAssembler, EpochConfig, HeadingSource, NmeaReader, Sentence};
    use kappaline::{FixUpdate, Geodetic, LeverArm, LocalFrame};
    const EPOCH: &[u8] =
        b"$GNGGA,080000.10,4715.000298,N,00829.997621,E,4,16,0.7,452.0,M,0.0,M,1.0,1*56\r\n\
$GNVTG,90.00,T,,M,4.860,N,9.000,K,D*1C\r\n\
$GNHDT,90.000,T*12\r\n\
$GNGST,080000.10,0.5,0.02,0.01,0.0,0.012,0.011,0.02*77\r\n";
    let Some(frame) = Geodetic::from_degrees(47.25, 8.5, 450.0)
        .ok()
        .and_then(|g| LocalFrame::new(g).ok())
    else {
        fail("frame")
    };
    let Ok(arm) = LeverArm::new(1.0f32, 0.0, 2.0) else {
        fail("arm")
    };
    let mut reader = NmeaReader::new();
    let mut sentences: [Option<Sentence>; 4] = [None; 4];
    let n = count(syst, |_| {
        let mut k = 0;
        for &b in EPOCH {
            if let Some(r) = reader.push(b) {
                match (r, sentences.get_mut(k)) {
                    (Ok(s), Some(slot)) => *slot = Some(s),
                    _ => fail("nmea sentence"),
                }
                k += 1;
            }
        }
    });
    report("NMEA reader, one epoch (4 sentences, 195 B)", n);
    let config = EpochConfig {
        frame,
        arm,
        heading: HeadingSource::TrueHeading,
        latency_us: 0,
        expect_gst: true,
    };
    let mut epochs = EpochAssembler::new(config);
    let mut fixes = 0u32;
    let m = count(syst, |i| {
        for s in sentences.iter().flatten() {
            epochs.push(s, kappaline::Micros(i));
        }
        if matches!(epochs.take(), FixUpdate::New(_)) {
            fixes += 1;
        }
        // The next repetition is a new epoch.
        epochs = EpochAssembler::new(config);
    });
    report("epoch assembler, 4 sentences into a fix", m);
    check(fixes == REPS, "nmea fixes");
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
