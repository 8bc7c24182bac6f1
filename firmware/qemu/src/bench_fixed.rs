//! The Q32.32 fixed-point backend (`kappaline::Q32x32`, feature
//! `fixed-point`): the same motion, checks and figures as `bench.rs` for
//! `Tracker::update` and `Guidance::step`, so the two backends print side
//! by side (calls suffixed ", Q32.32"). Also the cost of the backend's
//! primitive operations. Built as its own binary (`src/bin/fixed-point.rs`):
//! the micro:bit's 256 KiB of flash do not hold both backends' figures.

use cortex_m_semihosting::hprintln;
use kappaline::{
    Continuity, Fix, FixUpdate, FrenetFeedback, Guidance, GuidanceInput, GuidanceStatus, Micros,
    Path, PathBuilder, Pose, PurePursuit, Q32x32, Real, Segment, Stanley, SteeringLaw,
    SupervisorConfig, TrackStatus, Tracker, TrackerConfig, Vehicle,
};

use crate::meter::{Meter, Stats};
use crate::{check, fail, report};

/// Consecutive calls per figure.
const CALLS: usize = 256;
/// Station of the first measured cycle, metres (as `bench.rs`).
const START: f64 = 10.0;
/// Station travelled per cycle, metres.
const STEP: f64 = 0.1;
/// Control period, us.
const PERIOD_US: u32 = 100_000;

fn q(v: f64) -> Q32x32 {
    Q32x32::from_f64(v)
}

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

    /// The geometry of `bench.rs`, built in Q32.32 (anchors from `f64`).
    fn path(self) -> Path<Q32x32, 4> {
        let built = match self {
            Case::Line => PathBuilder::new(Pose::new(q(0.0), q(0.0), q(0.3)))
                .and_then(|b| b.push(Segment::line(q(500.0))?))
                .and_then(|b| b.build()),
            Case::Arc => PathBuilder::new(Pose::new(q(0.0), q(0.0), q(0.0)))
                .and_then(|b| {
                    b.push(Segment::arc(
                        q(2.0 * core::f64::consts::PI * 20.0),
                        q(0.05),
                    )?)
                })
                .and_then(|b| b.close(Continuity::DEFAULT)),
            Case::Clothoid => PathBuilder::new(Pose::new(q(0.0), q(0.0), q(0.0)))
                .and_then(|b| b.push(Segment::transition(q(100.0), q(0.0), q(0.1))?))
                .and_then(|b| b.build()),
        };
        built.unwrap_or_else(|_| fail("fixed case path"))
    }
}

/// Lateral offset of cycle `i`, metres (left positive), as `bench.rs`.
fn lateral(i: usize) -> f64 {
    0.2 + 0.05 * libm::sin(0.9 * i as f64)
}

/// The control point of cycle `i` and its station.
fn pose_at<const N: usize>(path: &Path<Q32x32, N>, i: usize) -> (Pose<Q32x32>, f64) {
    let s = START + STEP * i as f64;
    let p = path.at(q(s));
    let d = q(lateral(i));
    let h = p.heading() + q(0.03 * libm::sin(0.5 * i as f64));
    (Pose::new(p.x - d * p.sin, p.y + d * p.cos, h), s)
}

/// Runs every fixed-point figure.
pub fn run(m: &mut Meter) {
    hprintln!("Q32.32 fixed point (Q32x32), same motion:");
    primitives(m);
    for case in [Case::Line, Case::Arc, Case::Clothoid] {
        tracker(m, case);
        guidance(
            m,
            case,
            PurePursuit::tractor(),
            "Guidance::step, pure pursuit, Q32.32",
        );
        guidance(
            m,
            case,
            Stanley::tractor(),
            "Guidance::step, Stanley, Q32.32",
        );
        guidance(
            m,
            case,
            FrenetFeedback::tractor(),
            "Guidance::step, Frenet, Q32.32",
        );
    }
}

/// One primitive over 256 inputs.
fn primitive<R>(m: &mut Meter, label: &str, f: impl Fn(Q32x32) -> R) {
    let mut counts = [0u32; CALLS];
    for (i, c) in counts.iter_mut().enumerate() {
        let x = core::hint::black_box(q(0.013 * i as f64 - 1.7));
        *c = m.instructions(|| f(x)).0;
    }
    report(label, "-", &Stats::of(&mut counts));
}

#[inline(never)]
fn primitives(m: &mut Meter) {
    let y = core::hint::black_box(q(0.77));
    primitive(m, "a * b (Q32.32)", |x| x * y);
    primitive(m, "a / b (Q32.32)", |x| y / x);
    primitive(m, "sqrt (Q32.32)", |x| (x + q(2.0)).sqrt());
    primitive(m, "sin_cos (Q32.32)", |x| x.sin_cos());
    primitive(m, "atan2 (Q32.32)", |x| x.atan2(y));
}

#[inline(never)]
fn tracker(m: &mut Meter, case: Case) {
    let path = case.path();
    let mut t = Tracker::new(TrackerConfig::tractor()).unwrap_or_else(|_| fail("cfg"));
    let (p0, _) = pose_at(&path, 0);
    check(t.update(&path, &p0).is_ok(), "fixed acquire");
    let mut counts = [0u32; CALLS];
    for (i, c) in counts.iter_mut().enumerate() {
        let (pose, s) = pose_at(&path, i + 1);
        let (n, r) = m.instructions(|| t.update(&path, &pose));
        *c = n;
        match r {
            Ok(r) if r.status == TrackStatus::OnPath => {
                check(
                    (r.station.to_f64() - s).abs() < 5e-4,
                    "fixed tracker station",
                );
                check(
                    (r.cross_track.to_f64() - lateral(i + 1)).abs() < 5e-5,
                    "fixed tracker cross-track",
                );
            }
            _ => fail("fixed tracker update"),
        }
    }
    report(
        "Tracker::update, Q32.32",
        case.name(),
        &Stats::of(&mut counts),
    );
}

#[inline(never)]
fn guidance<L: SteeringLaw<Q32x32>>(m: &mut Meter, case: Case, law: L, label: &str) {
    let path = case.path();
    let vehicle =
        Vehicle::front_steered(q(2.5), q(0.6), q(0.6)).unwrap_or_else(|_| fail("vehicle"));
    let supervisor = SupervisorConfig::default_for(&vehicle);
    let mut g = Guidance::new(vehicle, law, TrackerConfig::tractor(), supervisor)
        .unwrap_or_else(|_| fail("fixed guidance"));
    let input = |i: usize| {
        let (pose, _) = pose_at(&path, i);
        let now = Micros(PERIOD_US * i as u32);
        let fix = Fix::new(pose.x, pose.y, pose.heading, q(STEP / 0.1), now);
        GuidanceInput::new(FixUpdate::New(fix), now, PERIOD_US)
    };
    let mut first = 0;
    while g.status() != GuidanceStatus::Following || first < 8 {
        check(first < 64, "fixed guidance acquires");
        let _ = g.step(&path, &input(first));
        first += 1;
    }
    let mut counts = [0u32; CALLS];
    for (i, c) in counts.iter_mut().enumerate() {
        let inp = input(i + first);
        let (n, cmd) = m.instructions(|| g.step(&path, &inp));
        *c = n;
        check(cmd.curvature.is_finite(), "fixed command finite");
        check(
            cmd.status == GuidanceStatus::Following,
            "fixed guidance following",
        );
    }
    report(label, case.name(), &Stats::of(&mut counts));
}
