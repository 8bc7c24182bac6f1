//! A link-time proof that no panic path survives in kappaline's per-cycle
//! calls and in the path blob decoder.
//!
//! Every entry point is called with inputs the optimiser cannot see
//! through (read with `read_volatile` from a RAM buffer that nothing in
//! the program writes), and every result is written out the same way, so
//! nothing is folded away. The panic handler calls a function that is
//! declared but defined nowhere: if any panic path is still reachable
//! after LTO, the handler is kept, and the link fails with an undefined
//! reference to `kappaline_nopanic_a_panic_path_survived`. A clean link is
//! the proof; the binary is never run.
//!
//! The per-cycle calls, the laws, the passes and the blob decoder and
//! encoder run on `f32` and, with the feature `fixed-point`, on the Q32.32
//! backend too (the same generic code, on opaque raw values of each).
//!
//! Build (CI does it for both targets, with and without `fixed-point`):
//! `cargo build --release [--features fixed-point]` (thumbv7em-none-eabihf)
//! and `cargo build --release --target thumbv6m-none-eabi [--features fixed-point]`.

#![no_std]
#![no_main]

use core::panic::PanicInfo;
use core::ptr::{addr_of, addr_of_mut};

use cortex_m_rt::entry;
use kappaline::io::blob::{decode, encode, Decoder};
use kappaline::io::nmea::{EpochAssembler, EpochConfig, HeadingSource, NmeaReader};
use kappaline::{
    control_point, local_speed_limit, speed_cap, AnchoredBuilder, AnchoredSegment, Continuity,
    Cursor, Direction, Fix, FixUpdate, FrenetFeedback, Geodetic, Guidance, GuidanceInput, LeverArm,
    LocalFrame, Micros, Passes, Path, PathBuilder, Pose, PurePursuit, Real, Segment, Stanley,
    SteerLimiter, SteeringInput, SteeringLaw, SupervisorConfig, Tracker, TrackerConfig, Vehicle,
};

/// Segments the paths hold.
const N: usize = 8;
/// Bytes of opaque input.
const INPUT_LEN: usize = 512;

/// Opaque input: the optimiser must assume any content.
static mut INPUT: [u8; INPUT_LEN] = [0; INPUT_LEN];
/// Where results go, so they are not dropped.
static mut SINK: [u32; 4] = [0; 4];

extern "C" {
    /// Defined nowhere: referencing it fails the link.
    fn kappaline_nopanic_a_panic_path_survived() -> !;
}

#[panic_handler]
fn panic(_: &PanicInfo) -> ! {
    // SAFETY: never executed in a program that links; if a panic path
    // survives, this reference is what makes the link fail.
    unsafe { kappaline_nopanic_a_panic_path_survived() }
}

/// Byte `i` of the opaque input.
fn byte(i: usize) -> u8 {
    // SAFETY: a volatile read of a static in bounds (`i % INPUT_LEN`); the
    // program is single-threaded and nothing writes INPUT.
    unsafe { core::ptr::read_volatile(addr_of!(INPUT).cast::<u8>().add(i % INPUT_LEN)) }
}

/// An `f32` made of four opaque bytes (any bit pattern: NaN, inf, huge).
fn f(i: usize) -> f32 {
    f32::from_bits(u32::from_le_bytes([
        byte(4 * i),
        byte(4 * i + 1),
        byte(4 * i + 2),
        byte(4 * i + 3),
    ]))
}

/// A `u32` made of four opaque bytes.
fn u(i: usize) -> u32 {
    f(i).to_bits()
}

/// A number type the proof runs on: made of opaque bytes (any bit
/// pattern), and folded back into bits for the sink.
trait Opaque: Real {
    /// The value made of the opaque bytes at `i`.
    fn opaque(i: usize) -> Self;
    /// 32 bits that depend on every bit of the value.
    fn bits(self) -> u32;
}

impl Opaque for f32 {
    fn opaque(i: usize) -> Self {
        f(i)
    }
    fn bits(self) -> u32 {
        self.to_bits()
    }
}

#[cfg(feature = "fixed-point")]
impl Opaque for kappaline::Q32x32 {
    /// Any raw value, the reserved overflow values included.
    fn opaque(i: usize) -> Self {
        let lo = u64::from(u(2 * i));
        let hi = u64::from(u(2 * i + 1));
        Self::from_bits(((hi << 32) | lo) as i64)
    }
    fn bits(self) -> u32 {
        let raw = self.to_bits();
        (raw as u32) ^ ((raw >> 32) as u32)
    }
}

/// An opaque value of the type the proof runs on.
fn arg<T: Opaque>(i: usize) -> T {
    T::opaque(i)
}

/// `T` from a constant (`T::from_f64`, the load-time conversion).
fn constant<T: Real>(v: f64) -> T {
    T::from_f64(v)
}

/// Writes a result where the optimiser must keep it.
fn sink<T: Opaque>(v: T) {
    // SAFETY: a volatile write of a static in bounds; single-threaded.
    unsafe {
        let p = addr_of_mut!(SINK).cast::<u32>();
        core::ptr::write_volatile(p, core::ptr::read_volatile(p) ^ v.bits());
    }
}

fn sink_u(v: u32) {
    // SAFETY: as in `sink`.
    unsafe {
        let p = addr_of_mut!(SINK).cast::<u32>().add(1);
        core::ptr::write_volatile(p, core::ptr::read_volatile(p) ^ v);
    }
}

/// An opaque segment (any values; most are refused, which is fine).
fn segment<T: Opaque>(i: usize) -> Option<Segment<T>> {
    let s = Segment::clothoid(arg(i), arg(i + 1), arg(i + 2)).ok()?;
    Some(if byte(i) & 1 == 0 {
        s
    } else {
        s.with_direction(Direction::Reverse)
    })
}

/// A path through the builder and one through the stored-path loaders.
#[inline(never)]
fn paths<T: Opaque>() -> (Option<Path<T, N>>, Option<Path<T, N>>) {
    let mut b = PathBuilder::<T, N>::new(Pose::new(arg(0), arg(1), arg(2))).ok();
    for k in 0..N {
        if let (Some(b), Some(s)) = (b.as_mut(), segment(3 + 3 * k)) {
            let _ = if byte(k) & 2 == 0 {
                b.try_push(s)
            } else {
                b.try_push_cusp(s)
            };
        }
    }
    let built = b.and_then(|b| {
        if byte(7) & 1 == 0 {
            b.build().ok()
        } else {
            b.close(Continuity::DEFAULT).ok()
        }
    });
    let Ok(unit) = Segment::line(T::ONE) else {
        return (built, None);
    };
    let mut parts = [AnchoredSegment {
        segment: unit,
        start: Pose::new(T::ZERO, T::ZERO, T::ZERO),
    }; N];
    let mut n = 0;
    for (k, p) in parts.iter_mut().enumerate() {
        if let Some(s) = segment(40 + 6 * k) {
            *p = AnchoredSegment {
                segment: s,
                start: Pose::new(arg(43 + 6 * k), arg(44 + 6 * k), arg(45 + 6 * k)),
            };
            n += 1;
        }
    }
    let tol = Continuity {
        position: f64::from(f(90)),
        heading: f64::from(f(91)),
    };
    let stored = Path::from_anchored(parts.get(..n).unwrap_or_default(), tol, byte(9) & 1 == 1);
    let mut ab = AnchoredBuilder::<T, N>::new(tol).ok();
    for p in parts.iter().take(n) {
        if let Some(ab) = ab.as_mut() {
            let _ = ab.try_push(*p);
        }
    }
    let again = ab.and_then(|ab| ab.finish(byte(10) & 1 == 1).ok());
    if let Some(p) = &again {
        sink(p.length());
    }
    (built, stored.ok())
}

/// The per-cycle calls on one path.
#[inline(never)]
fn per_cycle<T: Opaque>(path: &Path<T, N>) {
    let p = path.at(arg(100));
    sink(p.x + p.y + p.cos + p.sin + p.curvature);
    if let Ok(p) = path.try_at(arg(101)) {
        sink(p.x);
    }
    sink(path.end_pose().heading);
    if let Some(j) = path.curvature_jump(usize::from(byte(102))) {
        sink(j);
    }
    // Cursor stepping and lookahead.
    let mut c = Cursor::at(path, arg(103)).unwrap_or(Cursor::start());
    if let Ok((p, _)) = c.advance(path, arg(104)) {
        sink(p.station);
    }
    if let Ok(p) = c.ahead(path, arg(105)) {
        sink(p.x);
    }
    sink(c.station(path) + c.point(path).y);
    // Tracking.
    let cfg = TrackerConfig::<T>::tractor();
    if let Ok(mut t) = Tracker::new(cfg) {
        let pose = Pose::new(arg(106), arg(107), arg(108));
        if let Ok(e) = t.update(path, &pose) {
            sink(e.cross_track + e.heading_error + e.station);
        }
        if let Ok(e) = t.update_offset(path, &pose, arg(109)) {
            sink(e.cross_track);
        }
        if let Ok(e) = t.update_driving(path, &pose, Direction::Reverse) {
            sink(e.station);
        }
        if let Ok(e) = t.acquire(path, &pose) {
            sink(e.station);
        }
        if let Ok(p) = t.ahead(path, arg(114)) {
            sink(p.x + p.y);
        }
        t.reset();
        for _ in 0..4 {
            if let Ok(kappaline::Acquisition::Done(e)) = t.acquire_step(path, &pose) {
                sink(e.station);
            }
        }
        let _ = t.set_lookahead(arg(110));
        t.resume_at(c);
        t.reset();
    }
    // Speed.
    let v = Vehicle::<T>::front_steered(arg(111), arg(112), arg(113));
    if let Ok(v) = v {
        sink(local_speed_limit(&v, arg(114), arg(115), arg(116)));
        sink(speed_cap(path, &v, arg(117), Some(arg(118))));
        sink(speed_cap(path, &v, arg(119), None));
        let mut lim = SteerLimiter::new();
        lim.seed(&v, arg(120));
        sink(lim.apply(&v, arg(121), arg(122)).curvature);
        sink(lim.hold().curvature);
        sink(v.steer_from_curvature(arg(123)) + v.curvature_from_steer(arg(124)));
        let (l, r) = v.wheel_speeds(arg(125), arg(126));
        sink(l + r);
    }
}

/// The steering laws on an opaque input.
#[inline(never)]
fn laws<T: Opaque>() {
    let input = SteeringInput {
        cross_track: arg(130),
        heading_error: arg(131),
        curvature: arg(132),
        sharpness: arg(133),
        speed: arg(134),
        goal: (arg(135), arg(136)),
        control_point: arg(137),
        reference_point: arg(138),
        dt: arg(139),
        saturated: byte(140) & 1 == 1,
        path_direction: (arg(141), arg(142)),
    };
    let mut pp = PurePursuit::<T>::tractor();
    let mut st = Stanley::<T>::tractor();
    let mut fr = FrenetFeedback::<T>::tractor();
    sink(pp.curvature(&input) + st.curvature(&input) + fr.curvature(&input));
    sink(pp.lookahead(arg(143)) + st.reference_point(Some(arg(144))));
    sink(arg::<T>(145).wrap_angle());
    let (s, c) = arg::<T>(146).sin_cos();
    sink(s + c + arg::<T>(147).atan2(arg(148)));
}

/// The receiver's side of a cycle: geodetic fix to the local plane, antenna
/// to control point, and tracking a field pass on its reference.
#[inline(never)]
fn receiver_and_pass<T: Opaque>(path: &Path<T, N>) {
    let origin = Geodetic::from_degrees(f64::from(f(150)), f64::from(f(151)), f64::from(f(152)));
    if let Ok(frame) = origin.and_then(LocalFrame::new) {
        let fix = Geodetic::from_degrees(f64::from(f(153)), f64::from(f(154)), f64::from(f(155)));
        if let Ok(e) = fix.and_then(|g| frame.to_enu(&g)) {
            sink(e.east as f32 + e.north as f32 + e.up as f32);
        }
    }
    if let Ok(arm) = LeverArm::<T>::new(arg(156), arg(157), arg(158)) {
        if let Ok(c) = control_point((arg(159), arg(160), arg(161)), arg(162), arg(163), &arm) {
            sink(c.x + c.y + c.z);
        }
    }
    if let (Ok(passes), Ok(mut t)) = (
        Passes::new(arg(164)),
        Tracker::new(TrackerConfig::tractor()),
    ) {
        let pass = passes.pass(i32::from(byte(165)) - 128);
        if let Ok((t, p)) = pass.update(&mut t, path, &Pose::new(arg(166), arg(167), arg(168))) {
            sink(t.station);
            core::hint::black_box(p);
        }
    }
}

/// `Guidance::step` with one law, over a few cycles of opaque input.
#[inline(never)]
fn guidance<T: Opaque, L: SteeringLaw<T>>(path: &Path<T, N>, law: L, base: usize) {
    let Ok(vehicle) = Vehicle::<T>::front_steered(constant(2.5), constant(0.6), constant(0.5))
    else {
        return;
    };
    let sup = SupervisorConfig::default_for(&vehicle);
    let Ok(mut g) = Guidance::new(vehicle, law, TrackerConfig::tractor(), sup) else {
        return;
    };
    g.seed_curvature(arg(base));
    for k in 0..4 {
        let i = base + 8 * k;
        let fix = match byte(i) % 3 {
            0 => FixUpdate::New(Fix::new(
                arg(i + 1),
                arg(i + 2),
                arg(i + 3),
                arg(i + 4),
                Micros(u(i + 5)),
            )),
            1 => FixUpdate::Unchanged,
            _ => FixUpdate::NoFix,
        };
        let mut input = GuidanceInput::new(fix, Micros(u(i + 6)), u(i + 7));
        input.manual_override = byte(i + 1) & 1 == 1;
        match byte(i + 2) % 4 {
            0 => g.engage(),
            1 => g.standby(),
            2 => {
                let _ = g.set_line_shift(path, arg(i + 3));
            }
            _ => {}
        }
        let cmd = g.step(path, &input);
        sink(cmd.curvature + cmd.steer_angle + cmd.speed_limit + cmd.yaw_rate);
        sink_u(cmd.status as u32);
    }
    g.reset();
}

/// The blob decoder in chunks of opaque sizes, the whole-slice decoder,
/// and the encoder.
#[inline(never)]
fn blob<T: Opaque>() {
    let mut bytes = [0u8; 256];
    for (k, b) in bytes.iter_mut().enumerate() {
        *b = byte(200 + k);
    }
    let mut d = Decoder::<T, N>::new();
    let mut at = 0usize;
    while at < bytes.len() {
        let size = usize::from(byte(at) % 32) + 1;
        let end = (at + size).min(bytes.len());
        match d.feed(bytes.get(at..end).unwrap_or_default()) {
            Ok(p) => sink_u(matches!(p, kappaline::io::blob::Progress::Done { .. }) as u32),
            Err(_) => break,
        }
        at = end;
    }
    if let Some(i) = d.info() {
        sink_u(u32::from(i.segments));
    }
    if let Ok((p, _)) = d.finish() {
        sink(p.length());
        let mut out = [0u8; 300];
        if let Ok(n) = encode(&p, &Default::default(), &mut out) {
            sink_u(n as u32);
        }
    }
    let len = usize::from(byte(199));
    if let Ok((p, info)) = decode::<T, N>(bytes.get(..len).unwrap_or_default()) {
        sink(p.length() + T::from_u32(u32::from(info.segments)));
    }
}

/// The NMEA reader byte by byte over opaque input and the epoch assembler
/// on whatever it reads (the receive interrupt's work).
#[inline(never)]
fn receiver_bytes() {
    let Ok(origin) = Geodetic::new(f64::from(f(60)), f64::from(f(61)), f64::from(f(62))) else {
        return;
    };
    let Ok(frame) = LocalFrame::new(origin) else {
        return;
    };
    let Ok(arm) = LeverArm::new(f(63), f(64), f(65)) else {
        return;
    };
    let heading = if byte(66) & 1 == 0 {
        HeadingSource::TrueHeading
    } else {
        HeadingSource::Course {
            min_speed_m_s: f64::from(f(67)),
        }
    };
    let config = EpochConfig {
        frame,
        arm,
        heading,
        latency_us: u(68),
        expect_gst: byte(69) & 1 == 1,
    };
    let mut reader = NmeaReader::new();
    let mut epochs = EpochAssembler::<f32>::new(config);
    for i in 0..INPUT_LEN {
        if let Some(Ok(sentence)) = reader.push(byte(i)) {
            epochs.push(&sentence, Micros(u(i)));
            if let FixUpdate::New(fix) = epochs.take() {
                sink(fix.x + fix.y + fix.heading + fix.speed);
            }
        }
    }
}

/// Every generic entry point on one number type.
fn run<T: Opaque>() {
    let (built, stored) = paths::<T>();
    blob::<T>();
    laws::<T>();
    for path in [built, stored].iter().flatten() {
        per_cycle(path);
        receiver_and_pass(path);
        guidance(path, PurePursuit::<T>::tractor(), 300);
        guidance(path, Stanley::<T>::tractor(), 340);
        guidance(path, FrenetFeedback::<T>::tractor(), 380);
    }
}

#[entry]
fn main() -> ! {
    receiver_bytes();
    run::<f32>();
    #[cfg(feature = "fixed-point")]
    run::<kappaline::Q32x32>();
    loop {
        core::hint::spin_loop();
    }
}
