//! Instructions per call, min / median / max over consecutive control
//! cycles, for each call kind on a line, an arc and a clothoid.
//!
//! The control point moves 0.1 m of station per cycle, with a lateral
//! wiggle (0.2 m +- 0.05 m) and a heading wiggle (+- 0.03 rad) so no two
//! cycles see the same geometry. Each call's input is prepared outside the
//! measured region. Every result is checked against the construction.
//!
//! Besides the table, each figure is printed as a line
//! `@cost <call>;<case>;<min>;<median>;<max>` for `cost_table.py`.

use cortex_m_semihosting::hprintln;
use kappaline::{
    Acquisition, Continuity, Fix, FixUpdate, FrenetFeedback, Guidance, GuidanceInput,
    GuidanceStatus, Micros, Path, PathBuilder, Pose, PurePursuit, Real, Segment, Stanley,
    SteeringLaw, SupervisorConfig, TrackStatus, Tracker, TrackerConfig, Vehicle,
};

use crate::meter::{Meter, Stats};

use crate::{check, fail};

/// Consecutive calls per figure.
const CALLS: usize = 256;
/// Station of the first measured cycle, metres.
const START: f32 = 10.0;
/// Station travelled per cycle, metres.
const STEP: f32 = 0.1;
/// Control period, s (so the speed is `STEP / DT`).
const DT: f32 = 0.1;
/// Control period, us (`DT` as the per-cycle input takes it).
const PERIOD_US: u32 = 100_000;
/// Lookahead distance for the lookahead figure, metres.
const LOOKAHEAD: f32 = 5.0;

#[derive(Clone, Copy)]
enum Case {
    Line,
    Arc,
    Clothoid,
}

impl Case {
    fn name(self) -> &'static str {
        match self {
            Case::Line => "line",
            Case::Arc => "arc R = 20 m",
            Case::Clothoid => "clothoid 0 to 0.1 /m over 100 m",
        }
    }

    fn path(self) -> Path<f32, 4> {
        let built = match self {
            Case::Line => PathBuilder::new(Pose::new(0.0, 0.0, 0.3))
                .and_then(|b| b.push(Segment::line(500.0)?))
                .and_then(|b| b.build()),
            Case::Arc => PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
                .and_then(|b| b.push(Segment::arc(2.0 * core::f32::consts::PI * 20.0, 0.05)?))
                .and_then(|b| b.close(Continuity::DEFAULT)),
            Case::Clothoid => PathBuilder::new(Pose::new(0.0, 0.0, 0.0))
                .and_then(|b| b.push(Segment::transition(100.0, 0.0, 0.1)?))
                .and_then(|b| b.build()),
        };
        built.unwrap_or_else(|_| fail("case path"))
    }
}

/// Lateral offset of cycle `i`, metres (left positive).
pub fn lateral(i: usize) -> f32 {
    0.2 + 0.05 * libm::sinf(0.9 * i as f32)
}

/// The control point of cycle `i` (station `START + STEP i`) and its station.
pub fn pose_at<const N: usize>(path: &Path<f32, N>, i: usize) -> (Pose<f32>, f32) {
    let s = START + STEP * i as f32;
    let p = path.at(s);
    let d = lateral(i);
    let h = p.heading() + 0.03 * libm::sinf(0.5 * i as f32);
    (Pose::new(p.x - d * p.sin, p.y + d * p.cos, h), s)
}

pub fn report(call: &str, case: &str, st: &Stats) {
    hprintln!(
        "{:<34} {:<32} {:>7} {:>7} {:>7}",
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

/// Runs every figure.
pub fn run(m: &mut Meter) {
    hprintln!(
        "instructions per call over {} consecutive cycles: min / median / max",
        CALLS
    );
    trig(m);
    for case in [Case::Line, Case::Arc, Case::Clothoid] {
        tracker(m, case);
        lookahead(m, case);
        guidance(
            m,
            case,
            PurePursuit::tractor(),
            "Guidance::step, pure pursuit",
        );
        guidance(m, case, Stanley::tractor(), "Guidance::step, Stanley");
        guidance(m, case, FrenetFeedback::tractor(), "Guidance::step, Frenet");
        acquisition(m, case);
    }
    crate::bench_long::run(m);
}

#[inline(never)]
fn trig(m: &mut Meter) {
    let mut counts = [0u32; CALLS];
    for (i, c) in counts.iter_mut().enumerate() {
        let x = core::hint::black_box(0.01 * i as f32);
        *c = m.instructions(|| x.sin_cos()).0;
    }
    report("sin_cos (kappaline)", "-", &Stats::of(&mut counts));
    for (i, c) in counts.iter_mut().enumerate() {
        let x = core::hint::black_box(0.01 * i as f32);
        *c = m.instructions(|| libm::sincosf(x)).0;
    }
    report("sincosf (libm)", "-", &Stats::of(&mut counts));
    for (i, c) in counts.iter_mut().enumerate() {
        let x = core::hint::black_box(0.01 * i as f32 - 1.0);
        *c = m.instructions(|| libm::atan2f(x, 0.8)).0;
    }
    report("atan2f (libm)", "-", &Stats::of(&mut counts));
    for (i, c) in counts.iter_mut().enumerate() {
        let x = core::hint::black_box(0.01 * i as f32 + 0.5);
        *c = m.instructions(|| Real::sqrt(x)).0;
    }
    report("sqrt (Real, f32)", "-", &Stats::of(&mut counts));
    for (i, c) in counts.iter_mut().enumerate() {
        let x = core::hint::black_box(0.01 * i as f32 + 0.5);
        *c = m.instructions(|| Real::wrap_angle(x * 2.0)).0;
    }
    report("wrap_angle (Real, f32)", "-", &Stats::of(&mut counts));
}

#[inline(never)]
fn tracker(m: &mut Meter, case: Case) {
    let path = case.path();
    let mut t = Tracker::new(TrackerConfig::tractor()).unwrap_or_else(|_| fail("cfg"));
    let (p0, _) = pose_at(&path, 0);
    check(t.update(&path, &p0).is_ok(), "acquire");
    let mut counts = [0u32; CALLS];
    for (i, c) in counts.iter_mut().enumerate() {
        let (pose, s) = pose_at(&path, i + 1);
        let (n, r) = m.instructions(|| t.update(&path, &pose));
        *c = n;
        match r {
            Ok(r) if r.status == TrackStatus::OnPath => {
                check((r.station - s).abs() < 5e-4, "tracker station");
                check(
                    (r.cross_track - lateral(i + 1)).abs() < 5e-5,
                    "tracker cross-track",
                );
            }
            _ => fail("tracker update"),
        }
    }
    report("Tracker::update", case.name(), &Stats::of(&mut counts));
}

#[inline(never)]
fn lookahead(m: &mut Meter, case: Case) {
    let path = case.path();
    let mut t = Tracker::new(TrackerConfig::tractor()).unwrap_or_else(|_| fail("cfg"));
    let mut stepped = [0u32; CALLS];
    let mut closed = [0u32; CALLS];
    for i in 0..CALLS {
        let (pose, _) = pose_at(&path, i);
        check(t.update(&path, &pose).is_ok(), "update");
        let (n, a) = m.instructions(|| t.ahead(&path, LOOKAHEAD));
        let cursor = t.cursor();
        let (k, b) = m.instructions(|| cursor.ahead(&path, LOOKAHEAD));
        if let (Some(c), Some(d)) = (stepped.get_mut(i), closed.get_mut(i)) {
            *c = n;
            *d = k;
        }
        match (a, b) {
            (Ok(a), Ok(b)) => {
                let e = (a.x - b.x).abs().max((a.y - b.y).abs());
                check(e < 1e-4, "stepped lookahead vs closed form");
            }
            _ => fail("lookahead"),
        }
    }
    report(
        "lookahead 5 m, stepped",
        case.name(),
        &Stats::of(&mut stepped),
    );
    report(
        "lookahead 5 m, closed form",
        case.name(),
        &Stats::of(&mut closed),
    );
}

#[inline(never)]
fn guidance<L: SteeringLaw<f32>>(m: &mut Meter, case: Case, law: L, label: &str) {
    let path = case.path();
    let vehicle = Vehicle::front_steered(2.5f32, 0.6, 0.6).unwrap_or_else(|_| fail("vehicle"));
    let supervisor = SupervisorConfig::default_for(&vehicle);
    let mut g = Guidance::new(vehicle, law, TrackerConfig::tractor(), supervisor)
        .unwrap_or_else(|_| fail("guidance"));
    let input = |i: usize| {
        let (pose, _) = pose_at(&path, i);
        let now = Micros(PERIOD_US * i as u32);
        let fix = Fix::new(pose.x, pose.y, pose.heading, STEP / DT, now);
        GuidanceInput::new(FixUpdate::New(fix), now, PERIOD_US)
    };
    // Into Following first (acquisition, spread over cycles, is measured on
    // its own), then a few cycles more.
    let mut first = 0;
    while g.status() != GuidanceStatus::Following || first < 8 {
        check(first < 64, "guidance acquires");
        let _ = g.step(&path, &input(first));
        first += 1;
    }
    let mut counts = [0u32; CALLS];
    for (i, c) in counts.iter_mut().enumerate() {
        let inp = input(i + first);
        let (n, cmd) = m.instructions(|| g.step(&path, &inp));
        *c = n;
        check(cmd.curvature.is_finite(), "command finite");
        check(
            cmd.status == GuidanceStatus::Following,
            "guidance following",
        );
    }
    report(label, case.name(), &Stats::of(&mut counts));
}

#[inline(never)]
fn acquisition(m: &mut Meter, case: Case) {
    let path = case.path();
    let (pose, s) = pose_at(&path, 40);
    let mut t = Tracker::new(TrackerConfig::tractor()).unwrap_or_else(|_| fail("cfg"));
    let (n, r) = m.instructions(|| t.acquire(&path, &pose));
    match r {
        Ok(r) => check((r.station - s).abs() < 5e-4, "acquired station"),
        Err(_) => fail("acquire"),
    }
    report(
        "acquisition, whole path in one call",
        case.name(),
        &Stats {
            min: n,
            median: n,
            max: n,
        },
    );
    spread(m, &path, &pose, s, case.name());
}

/// The spread acquisition: calls of `Tracker::acquire_step` until done;
/// min / median / max per call and the number of calls.
pub fn spread<const N: usize>(
    m: &mut Meter,
    path: &Path<f32, N>,
    pose: &Pose<f32>,
    s: f32,
    label: &str,
) {
    let mut t = Tracker::new(TrackerConfig::tractor()).unwrap_or_else(|_| fail("cfg"));
    let mut counts = [0u32; 1024];
    let mut calls = 0usize;
    loop {
        let (n, r) = m.instructions(|| t.acquire_step(path, pose));
        if let Some(c) = counts.get_mut(calls) {
            *c = n;
        }
        calls += 1;
        match r {
            Ok(Acquisition::Searching { .. }) if calls < counts.len() => {}
            Ok(Acquisition::Done(r)) => {
                check((r.station - s).abs() < 5e-4, "spread acquisition station");
                break;
            }
            _ => fail("spread acquisition"),
        }
    }
    let st = Stats::of(counts.get_mut(..calls).unwrap_or(&mut []));
    report("acquisition, spread: one call", label, &st);
    let c = calls as u32;
    report(
        "acquisition, spread: calls",
        label,
        &Stats {
            min: c,
            median: c,
            max: c,
        },
    );
}
