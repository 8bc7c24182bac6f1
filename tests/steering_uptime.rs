//! The integer time base: the same drive gives bit-identical commands at
//! start-up, after 200 days of uptime and across the wrap of the `u32`
//! microsecond clock, in `f32` as on a single-precision FPU.
//!
//! The reference is the drive itself at start-up (the contract of
//! `Micros`: only differences of instants enter the arithmetic). For
//! scale: an `f32` clock in seconds has a resolution of 1 s at 200 days
//! (1.7e7 s lies in [2^24, 2^25), IEEE 754 binary32 spacing 2), far beyond
//! the 0.3 s fix age it would have to judge.

use kappaline::{
    Command, Fix, FixUpdate, FrenetFeedback, Guidance, GuidanceInput, GuidanceStatus, Micros, Path,
    PathBuilder, Pose, Segment, SupervisorConfig, TrackerConfig, Vehicle,
};

/// 100 Hz control.
const PERIOD_US: u32 = 10_000;
/// A new fix every 10 cycles (10 Hz), delivered 30 ms after it was taken.
const FIX_EVERY: u32 = 10;
const LATENCY_US: u32 = 30_000;

fn path() -> Path<f32, 8> {
    PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(20.0).unwrap())
        .unwrap()
        .push(Segment::transition(8.0, 0.0, 0.1).unwrap())
        .unwrap()
        .push(Segment::arc(15.0, 0.1).unwrap())
        .unwrap()
        .push(Segment::line(30.0).unwrap())
        .unwrap()
        .build()
        .unwrap()
}

/// Drives 30 s (3000 cycles) from 0.5 m left of the start with the clock
/// starting at `start`; returns every command.
fn drive(start: Micros) -> Vec<Command<f32>> {
    let path = path();
    let vehicle = Vehicle::front_steered(2.5f32, 0.6, 0.6).unwrap();
    let mut g = Guidance::new(
        vehicle,
        FrenetFeedback::tractor(),
        TrackerConfig::tractor(),
        SupervisorConfig::default_for(&vehicle),
    )
    .unwrap();
    // Kinematic bicycle at the rear axle, in f64 on the host.
    let (mut x, mut y, mut h) = (0.0f64, 0.5f64, 0.0f64);
    let speed = 2.0f64;
    let mut pending: Option<(Micros, Fix<f32>)> = None;
    let mut out = Vec::new();
    for k in 0..3000u32 {
        let now = start.add_micros(k * PERIOD_US);
        if k % FIX_EVERY == 0 {
            let f = Fix::new(x as f32, y as f32, h as f32, speed as f32, now);
            pending = Some((now.add_micros(LATENCY_US), f));
        }
        let update = match pending {
            Some((due, f)) if now.micros_since(due) >= 0 => {
                pending = None;
                FixUpdate::New(f)
            }
            _ => FixUpdate::Unchanged,
        };
        let cmd = g.step(&path, &GuidanceInput::new(update, now, PERIOD_US));
        let dt = f64::from(PERIOD_US) * 1e-6;
        let kappa = f64::from(cmd.curvature);
        let v = speed.min(f64::from(cmd.speed_limit));
        x += v * dt * h.cos();
        y += v * dt * h.sin();
        h += v * dt * kappa;
        out.push(cmd);
    }
    out
}

#[test]
fn same_commands_after_200_days_and_across_the_wrap() {
    let at_start = drive(Micros(0));
    // The drive is a real one: it settles onto the path and follows it.
    let following = at_start
        .iter()
        .filter(|c| c.status == GuidanceStatus::Following)
        .count();
    assert!(following > 2900, "{following} of 3000 following");
    let last = at_start.last().unwrap().tracking.unwrap();
    assert!(last.cross_track.abs() < 0.05, "{}", last.cross_track);
    // 200 days of uptime at 100 Hz: 1.728e9 cycles of 10 ms, the clock
    // having wrapped 4023 times.
    let days_200 = Micros((200u64 * 86_400 * 1_000_000 % (1u64 << 32)) as u32);
    // And a drive that crosses the wrap 10 s in.
    let before_wrap = Micros(u32::MAX - 9_999_999);
    for start in [days_200, before_wrap] {
        let later = drive(start);
        assert_eq!(later.len(), at_start.len());
        for (i, (a, b)) in at_start.iter().zip(&later).enumerate() {
            assert_eq!(a, b, "cycle {i} from {start:?}");
        }
    }
}
