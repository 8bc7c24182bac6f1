//! The controller under test, driven exactly as firmware drives it: each
//! control cycle the newest receiver epoch (antenna position, heading,
//! speed, roll) is turned into the control point with the core's lever-arm
//! correction ([`kappaline::control_point`]), handed to
//! [`kappaline::Guidance::step`] as a [`kappaline::Fix`], and the command's
//! steering angle (or wheel speeds) and speed limit go to the actuators.
//!
//! With [`ControllerInputs::AsOverLink`] the controller gets its inputs
//! the way the firmware on the link gets them instead: the path as the
//! link's blob carries it (`kappaline::io::blob`: lengths to 1 mm,
//! curvatures and sharpness to decimal units) and each epoch written as
//! the receiver's NMEA 0183 sentences and read back by the core's reader
//! and epoch assembler (`kappaline::io::nmea`); the resolution of both is
//! then part of the run.
//!
//! The controller runs in `f32` by default, as on a microcontroller with a
//! single-precision FPU, on its own copy of the path rebuilt from the host
//! path's segments; the harness measures in `f64` against the host path.

use kappaline::io::nmea::{EpochAssembler, EpochConfig, HeadingSource, NmeaReader};
use kappaline::{
    control_point, Continuity, Direction, Fix, FixQuality, FixUpdate, FrenetFeedback, Guidance,
    GuidanceInput, GuidanceStatus, LeverArm, Micros, Path, PathBuilder, Pose, PurePursuit, Real,
    Segment, Stanley, SteeringLaw, SupervisorConfig, TrackerConfig, Vehicle,
};

use crate::firmware::{Actuation, Cycle, Firmware, SupervisorStatus};
use crate::link::nmea::NmeaWriter;
use crate::scenario::{HostPath, LawSpec, Precision, Scenario, VehicleSpec, MAX_SEGMENTS};
use crate::sim::{Drive, Measurement};

/// A [`Guidance`] with its path, lever arm and speed set-point: one
/// machine's firmware.
pub struct GuidanceFirmware<T: Real, L> {
    guidance: Guidance<T, L>,
    path: Path<T, MAX_SEGMENTS>,
    arm: LeverArm<T>,
    terrain_compensation: bool,
    speed_set: f64,
    differential: bool,
    last: Option<Measurement>,
    sentences: Option<SentencePath<T>>,
}

/// How the controller receives its path and the sensor model's epochs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum ControllerInputs {
    /// The host path's segments rounded to the controller's type, each
    /// epoch a [`Fix`] at once (no receiver in between).
    #[default]
    Direct,
    /// As the firmware on the link receives them: the path decoded from
    /// the blob the device is sent, each epoch as NMEA 0183 sentences read
    /// back by the core's reader and epoch assembler, stamped with the
    /// time of the cycle they arrive for.
    AsOverLink,
}

/// Epochs written as sentences and read back as the firmware reads them.
struct SentencePath<T: Real> {
    writer: NmeaWriter,
    reader: NmeaReader,
    epochs: EpochAssembler<T>,
    /// Arrival time of the sentence being read.
    started: Micros,
    bytes: Vec<u8>,
}

impl<T: Real> SentencePath<T> {
    /// The fix update of a cycle at `now` that delivered `measurement`.
    fn update(&mut self, measurement: Option<&Measurement>, now: Micros) -> FixUpdate<T> {
        if let Some(m) = measurement {
            self.bytes.clear();
            self.writer.epoch(m, &mut self.bytes);
            for &b in &self.bytes {
                // The device stamps a sentence with the time of the cycle
                // its `$` arrived for (`firmware/app`, link mode).
                if b == b'$' {
                    self.started = now;
                }
                if let Some(Ok(sentence)) = self.reader.push(b) {
                    self.epochs.push(&sentence, self.started);
                }
            }
        }
        self.epochs.take()
    }
}

/// The firmware's clock: harness seconds as the core's wrapping
/// microsecond count (wrapping every 71.6 min of simulated time, as a
/// 32-bit timer would).
pub fn micros_of(t_s: f64) -> Micros {
    Micros((t_s * 1e6).round() as u64 as u32)
}

fn steer_err(field: &str) -> impl Fn(kappaline::SteerError) -> anyhow::Error + '_ {
    move |e| anyhow::anyhow!("{field}: refused by the core: {e:?}")
}

/// The path in the controller's number type: the host path's segments
/// rounded to `T` and chained again from its start pose (cusps where the
/// driving direction changes), as a path loaded on the target would be.
///
/// # Errors
/// If the core refuses the converted path.
pub fn convert_path<T: Real>(host: &HostPath) -> anyhow::Result<Path<T, MAX_SEGMENTS>> {
    let f = T::from_f64;
    let start = host.anchor(0).unwrap_or_default();
    let mut b =
        PathBuilder::<T, MAX_SEGMENTS>::new(Pose::new(f(start.x), f(start.y), f(start.heading)))
            .map_err(|e| anyhow::anyhow!("path start: {e}"))?;
    let mut prev: Option<Direction> = None;
    for i in 0..host.len() {
        let Some(seg) = host.segment(i) else {
            anyhow::bail!("path: segment {i} missing");
        };
        let s = Segment::clothoid(f(seg.length()), f(seg.kappa0()), f(seg.sigma()))
            .map_err(|e| anyhow::anyhow!("path segment {i}: {e}"))?
            .with_direction(seg.direction());
        let pushed = if prev.is_some_and(|d| d != s.direction()) {
            b.try_push_cusp(s)
        } else {
            b.try_push(s)
        };
        pushed.map_err(|e| anyhow::anyhow!("path segment {i} in controller precision: {e}"))?;
        prev = Some(s.direction());
    }
    let path = if host.is_closed() {
        // Rounding the segments to f32 leaves the loop a few micrometres open.
        b.close(Continuity {
            position: 1e-3,
            heading: 1e-3,
        })
    } else {
        b.build()
    };
    path.map_err(|e| anyhow::anyhow!("path in controller precision: {e}"))
}

/// The core's vehicle description of the scenario's machine.
///
/// # Errors
/// If the core refuses a value (the field is named).
pub fn vehicle_of<T: Real>(v: &VehicleSpec) -> anyhow::Result<Vehicle<T>> {
    let f = T::from_f64;
    // The chassis with its actuator lag, then the limits both kinds share.
    let (base, shared) = match *v {
        VehicleSpec::Bicycle {
            wheelbase_m,
            max_steer_deg,
            max_steer_rate_deg_s,
            max_speed_m_s,
            control_point_ahead_m,
            max_lateral_accel_m_s2,
            max_decel_m_s2,
            steer_lag_s,
            ..
        } => (
            Vehicle::front_steered(
                f(wheelbase_m),
                f(max_steer_deg.to_radians()),
                f(max_steer_rate_deg_s.to_radians()),
            )
            .map_err(steer_err("vehicle"))?
            // The firmware is configured with the actuator's measured lag.
            .with_steer_lag(f(steer_lag_s))
            .map_err(steer_err("vehicle.steer_lag_s"))?,
            (
                control_point_ahead_m,
                max_speed_m_s,
                max_lateral_accel_m_s2,
                max_decel_m_s2,
            ),
        ),
        VehicleSpec::Differential {
            track_width_m,
            max_speed_m_s,
            max_curvature_per_m,
            max_curvature_rate_per_m_s,
            control_point_ahead_m,
            max_lateral_accel_m_s2,
            max_decel_m_s2,
            wheel_lag_s,
            ..
        } => (
            Vehicle::differential(
                f(track_width_m),
                f(max_curvature_per_m),
                f(max_curvature_rate_per_m_s),
            )
            .map_err(steer_err("vehicle"))?
            // The wheels' lag is the lag of the curvature they drive.
            .with_steer_lag(f(wheel_lag_s))
            .map_err(steer_err("vehicle.wheel_lag_s"))?,
            (
                control_point_ahead_m,
                max_speed_m_s,
                max_lateral_accel_m_s2,
                max_decel_m_s2,
            ),
        ),
    };
    let (control_point, max_speed, max_lateral_accel, max_decel) = shared;
    with_limits(base, control_point, max_speed, max_lateral_accel, max_decel)
}

/// The limits both chassis kinds share, each error naming its field.
fn with_limits<T: Real>(
    vehicle: Vehicle<T>,
    control_point_ahead_m: f64,
    max_speed_m_s: f64,
    max_lateral_accel_m_s2: f64,
    max_decel_m_s2: f64,
) -> anyhow::Result<Vehicle<T>> {
    let f = T::from_f64;
    vehicle
        .with_control_point(f(control_point_ahead_m))
        .map_err(steer_err("vehicle.control_point_ahead_m"))?
        .with_max_speed(f(max_speed_m_s))
        .map_err(steer_err("vehicle.max_speed_m_s"))?
        .with_max_lateral_acceleration(f(max_lateral_accel_m_s2))
        .map_err(steer_err("vehicle.max_lateral_accel_m_s2"))?
        .with_max_deceleration(f(max_decel_m_s2))
        .map_err(steer_err("vehicle.max_decel_m_s2"))
}

fn supervisor_of<T: Real>(s: &Scenario, vehicle: &Vehicle<T>) -> SupervisorConfig<T> {
    let f = T::from_f64;
    let sv = &s.spec.controller.supervisor;
    let mut c = SupervisorConfig::default_for(vehicle);
    if let Some(v) = sv.max_fix_age_s {
        c.max_fix_age = f(v);
    }
    c.min_solution = sv.min_solution.map(|s| s.core());
    c.max_sigma = sv.max_sigma_m.map(f);
    if let Some(v) = sv.hold_time_s {
        c.hold_time = f(v);
    }
    if let Some(v) = sv.max_cross_track_m {
        c.max_cross_track = f(v);
    }
    if let Some(v) = sv.max_heading_error_deg {
        c.max_heading_error = f(v.to_radians());
    }
    if let Some(v) = sv.max_jump_m {
        c.max_jump = f(v);
    }
    if let Some(v) = sv.jump_growth_m_s {
        c.jump_growth = f(v);
    }
    if let Some(v) = sv.confirm_fixes {
        c.confirm_fixes = v;
    }
    if let Some(v) = sv.end_tolerance_m {
        c.end_tolerance = f(v);
    }
    c
}

fn tracker_of<T: Real>(s: &Scenario) -> TrackerConfig<T> {
    let t = &s.spec.controller.tracker;
    let f = T::from_f64;
    TrackerConfig {
        window_back: f(t.window_back_m),
        window_ahead: f(t.window_ahead_m),
        lost_distance: f(t.lost_distance_m),
        lookahead: f(t.lookahead_m),
        heading_weight: f(t.heading_weight_m),
    }
}

impl<T: Real, L: SteeringLaw<T>> GuidanceFirmware<T, L> {
    /// Firmware for `scenario` running `law`.
    ///
    /// # Errors
    /// If the core refuses the vehicle, lever arm, tracker or supervisor
    /// settings (the field is named), or the path.
    pub fn new(scenario: &Scenario, law: L) -> anyhow::Result<Self> {
        let spec = &scenario.spec;
        let vehicle = vehicle_of::<T>(&spec.vehicle)?;
        let supervisor = supervisor_of(scenario, &vehicle);
        let (antenna, cp, differential) = match &spec.vehicle {
            VehicleSpec::Bicycle {
                antenna,
                control_point_ahead_m,
                ..
            } => (antenna, *control_point_ahead_m, false),
            VehicleSpec::Differential {
                antenna,
                control_point_ahead_m,
                ..
            } => (antenna, *control_point_ahead_m, true),
        };
        let f = T::from_f64;
        let arm = LeverArm::new(
            f(antenna.ahead_m - cp),
            f(antenna.left_m),
            f(antenna.height_m),
        )
        .map_err(|e| anyhow::anyhow!("vehicle.antenna: refused by the core: {e}"))?;
        let guidance = Guidance::new(vehicle, law, tracker_of(scenario), supervisor)
            .map_err(steer_err("controller"))?;
        Ok(Self {
            guidance,
            path: convert_path(&scenario.path)?,
            arm,
            terrain_compensation: spec.controller.terrain_compensation,
            speed_set: spec.controller.speed_m_s,
            differential,
            last: None,
            sentences: None,
        })
    }

    /// The same firmware on the path decoded from the link's blob, taking
    /// its fixes as NMEA sentences in the frame of `writer`
    /// ([`ControllerInputs::AsOverLink`]). The sentences carry no roll:
    /// terrain compensation does not apply on this input.
    ///
    /// # Errors
    /// If the blob codec refuses the path, or the scenario's receiver
    /// latency does not fit in microseconds.
    pub fn as_over_link(mut self, scenario: &Scenario, writer: NmeaWriter) -> anyhow::Result<Self> {
        let blob = crate::link::device::path_blob(&scenario.path)?;
        let (path, _) = kappaline::io::blob::decode::<T, MAX_SEGMENTS>(&blob)
            .map_err(|e| anyhow::anyhow!("path through the blob: {e:?}"))?;
        self.path = path;
        let latency_s = scenario.spec.gnss.latency_s;
        let latency_us = (latency_s * 1e6).round();
        anyhow::ensure!(
            (0.0..=f64::from(u32::MAX)).contains(&latency_us),
            "gnss.latency_s = {latency_s}: out of range for the receiver input"
        );
        let config = EpochConfig {
            frame: writer.frame(),
            arm: self.arm,
            heading: HeadingSource::TrueHeading,
            latency_us: latency_us as u32,
            expect_gst: true,
        };
        self.sentences = Some(SentencePath {
            writer,
            reader: NmeaReader::new(),
            epochs: EpochAssembler::new(config),
            started: Micros(0),
            bytes: Vec::new(),
        });
        Ok(self)
    }

    /// The fix firmware derives from one receiver epoch: the control point
    /// under the antenna, corrected for heading and (if enabled) roll.
    fn fix_of(&self, m: &Measurement) -> Option<Fix<T>> {
        let f = T::from_f64;
        let roll = if self.terrain_compensation {
            m.roll
        } else {
            0.0
        };
        // A fix with non-finite numbers is handed on as it came (judging it
        // is the supervisor's job); any other refusal drops the epoch.
        let finite = [m.x, m.y, m.heading, roll].iter().all(|v| v.is_finite());
        let (x, y) = match control_point(
            (f(m.x), f(m.y), self.arm.up()),
            f(m.heading),
            f(roll),
            &self.arm,
        ) {
            Ok(c) => (c.x, c.y),
            Err(_) if !finite => (f(m.x), f(m.y)),
            Err(_) => return None,
        };
        let quality = FixQuality {
            solution: m.solution,
            sigma: Some(f(m.sigma_m)),
            ..FixQuality::default()
        };
        Some(Fix::new(x, y, f(m.heading), f(m.speed), micros_of(m.time_s)).with_quality(quality))
    }
}

/// The harness's name for a core status.
pub fn status_of(s: GuidanceStatus) -> SupervisorStatus {
    match s {
        GuidanceStatus::Acquiring => SupervisorStatus::Acquiring,
        GuidanceStatus::Following => SupervisorStatus::Following,
        GuidanceStatus::Degraded => SupervisorStatus::Degraded,
        GuidanceStatus::Lost => SupervisorStatus::Lost,
        GuidanceStatus::EndOfPath => SupervisorStatus::EndOfPath,
        _ => SupervisorStatus::Fault,
    }
}

impl<T: Real, L: SteeringLaw<T>> Firmware for GuidanceFirmware<T, L> {
    fn cycle(&mut self, input: &Cycle) -> Actuation {
        // A new epoch is a new fix; a cycle between epochs says "no new
        // fix" (the supervisor dead-reckons from the last one and judges
        // its age); an epoch the lever arm cannot place is no fix.
        let fix = match (&mut self.sentences, input.measurement) {
            (Some(sentences), m) => sentences.update(m.as_ref(), micros_of(input.now)),
            (None, Some(m)) => {
                self.last = Some(m);
                self.fix_of(&m).map_or(FixUpdate::NoFix, FixUpdate::New)
            }
            (None, None) if self.last.is_some() => FixUpdate::Unchanged,
            (None, None) => FixUpdate::NoFix,
        };
        let period_us = (input.dt * 1e6).round().clamp(1.0, f64::from(i32::MAX)) as u32;
        let cmd = self.guidance.step(
            &self.path,
            &GuidanceInput::new(fix, micros_of(input.now), period_us),
        );
        let sign = cmd.tracking.map_or(1.0, |t| t.foot.direction.sign::<f64>());
        let speed = sign * self.speed_set.min(cmd.speed_limit.to_f64());
        let drive = if self.differential {
            let (l, r) = self
                .guidance
                .vehicle()
                .wheel_speeds(cmd.curvature, T::from_f64(speed));
            Drive::Wheels {
                left: l.to_f64(),
                right: r.to_f64(),
            }
        } else {
            Drive::Steer {
                angle: cmd.steer_angle.to_f64(),
                speed,
            }
        };
        Actuation {
            drive,
            status: status_of(cmd.status),
            curvature: cmd.curvature.to_f64(),
            steer_angle: cmd.steer_angle.to_f64(),
            speed_limit: cmd.speed_limit.to_f64(),
            cross_track_estimate: cmd.tracking.map(|t| t.cross_track.to_f64()),
        }
    }
}

/// `firmware` as a box, on the receiver input `input`.
fn boxed_on<T: Real + Send + 'static, L: SteeringLaw<T> + Send + 'static>(
    s: &Scenario,
    firmware: GuidanceFirmware<T, L>,
    input: ControllerInputs,
) -> anyhow::Result<Box<dyn Firmware + Send>> {
    Ok(match input {
        ControllerInputs::Direct => Box::new(firmware),
        ControllerInputs::AsOverLink => {
            Box::new(firmware.as_over_link(s, NmeaWriter::demo_firmware()?)?)
        }
    })
}

fn boxed<T: Real + Send + 'static>(
    s: &Scenario,
    input: ControllerInputs,
) -> anyhow::Result<Box<dyn Firmware + Send>> {
    let f = T::from_f64;
    let bad = |field: &'static str| steer_err(field);
    Ok(match s.spec.controller.law {
        LawSpec::PurePursuit {
            lookahead_base_m,
            lookahead_time_s,
            lookahead_min_m,
            lookahead_max_m,
        } => {
            let law = PurePursuit::new(
                f(lookahead_base_m),
                f(lookahead_time_s),
                f(lookahead_min_m),
                f(lookahead_max_m),
            )
            .map_err(bad("controller.law"))?;
            boxed_on(s, GuidanceFirmware::<T, _>::new(s, law)?, input)?
        }
        LawSpec::Stanley {
            gain_per_s,
            softening_m_s,
            virtual_wheelbase_m,
        } => {
            let law = Stanley::new(f(gain_per_s), f(softening_m_s), f(virtual_wheelbase_m))
                .map_err(bad("controller.law"))?;
            boxed_on(s, GuidanceFirmware::<T, _>::new(s, law)?, input)?
        }
        LawSpec::Frenet {
            cross_track_gain_per_m2,
            heading_gain_per_m,
            integral_gain_per_m3,
            integral_limit_per_m,
            integral_band_m,
        } => {
            let mut law = FrenetFeedback::new(f(cross_track_gain_per_m2), f(heading_gain_per_m))
                .map_err(bad("controller.law"))?;
            if let Some(k_i) = integral_gain_per_m3 {
                law = law
                    .with_integral(f(k_i), f(integral_limit_per_m), f(integral_band_m))
                    .map_err(bad("controller.law.integral_gain_per_m3"))?;
            }
            boxed_on(s, GuidanceFirmware::<T, _>::new(s, law)?, input)?
        }
    })
}

/// The firmware a scenario asks for (law, gains, precision).
///
/// # Errors
/// If the core refuses a setting; the message names the field.
pub fn firmware_for(s: &Scenario) -> anyhow::Result<Box<dyn Firmware + Send>> {
    firmware_on(s, ControllerInputs::Direct)
}

/// The firmware a scenario asks for, taking its fixes on `input` (the
/// sentences are in the demo firmware's frame, [`NmeaWriter::demo_firmware`]).
///
/// # Errors
/// As [`firmware_for`].
pub fn firmware_on(
    s: &Scenario,
    input: ControllerInputs,
) -> anyhow::Result<Box<dyn Firmware + Send>> {
    match s.spec.controller.precision {
        Precision::F32 => boxed::<f32>(s, input),
        Precision::F64 => boxed::<f64>(s, input),
        Precision::Q32 => boxed::<kappaline::Q32x32>(s, input),
    }
}
