//! The closed loop: fixed-step physics with the controller at its own rate.
//!
//! Each physics step (default 1 kHz): the sensors sample the true state if
//! an epoch is due; on a control tick the controller gets the newest
//! delivered epoch (after the stream faults of [`crate::sim::faults`]) and
//! returns set-points, which the actuators then follow;
//! on a record tick the representative point is projected onto the
//! continuous path with the core's exact projection
//! ([`crate::truth::TruthProjector`]) and a trace row is stored.
//!
//! Time is counted in whole physics steps, so the control and sensor ticks
//! never drift against each other. Memory is bounded whatever the
//! duration: the trace is thinned when it fills ([`MAX_TRACE_ROWS`]) and
//! the status log is capped ([`MAX_STATUS_CHANGES`]).

use kappaline::{Pose, TrackStatus};

use crate::firmware::{Actuation, Cycle, Firmware, SupervisorStatus};
use crate::scenario::{FaultSpec, Scenario, VehicleSpec};
use crate::sim::sensors::AntennaMount;
use crate::sim::{
    Bicycle, BodyState, DiffDrive, Drive, FaultInjector, GnssFault, GnssModel, LagActuator, Plant,
    SensorSuite, StreamFault, Terrain,
};
use crate::truth::TruthProjector;

/// One recorded sample of the run.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct TraceRow {
    /// Time, s.
    pub t_s: f64,
    /// True reference point, metres.
    pub x_m: f64,
    /// True reference point, metres.
    pub y_m: f64,
    /// True heading, rad.
    pub heading_rad: f64,
    /// True steering angle, rad.
    pub steer_rad: f64,
    /// True speed, m/s.
    pub speed_m_s: f64,
    /// Representative point, metres.
    pub point_x_m: f64,
    /// Representative point, metres.
    pub point_y_m: f64,
    /// Station of its foot point on the path, metres.
    pub station_m: f64,
    /// Its cross-track error to the continuous path, metres, left positive.
    pub cross_track_m: f64,
    /// Heading error, rad.
    pub heading_error_rad: f64,
    /// Path curvature at the foot point, 1/m.
    pub path_curvature_per_m: f64,
    /// `true` on a straight segment past the entry skip.
    pub straight_pass: bool,
    /// `true` on a curved (arc or clothoid) segment.
    pub curved: bool,
    /// `true` when the foot point lies on the path (not beyond its ends).
    pub on_path: bool,
    /// Distance driven along the path since the start, metres.
    pub progress_m: f64,
    /// Supervisor status.
    pub status: &'static str,
    /// Commanded curvature, 1/m.
    pub cmd_curvature_per_m: f64,
    /// Commanded steering angle, rad.
    pub cmd_steer_rad: f64,
    /// Guidance speed limit, m/s.
    pub speed_limit_m_s: f64,
    /// Last antenna fix received, metres (empty before the first).
    pub fix_x_m: Option<f64>,
    /// Last antenna fix received, metres.
    pub fix_y_m: Option<f64>,
    /// Age of that fix, s.
    pub fix_age_s: Option<f64>,
    /// Terrain roll, rad.
    pub roll_rad: f64,
}

/// A status change.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StatusChange {
    /// When, s.
    pub t_s: f64,
    /// New status.
    pub status: SupervisorStatus,
}

/// Most trace rows a run keeps in memory. When a long run fills them, every
/// second row is dropped and from then on only every second record tick is
/// kept (and so on), so the trace covers the whole run at a coarser rate
/// and memory stays bounded whatever the duration; the report says so.
pub const MAX_TRACE_ROWS: usize = 250_000;
/// Most status changes a run keeps (the rest are counted).
pub const MAX_STATUS_CHANGES: usize = 100_000;

/// What a run produced.
#[derive(Debug, Clone)]
pub struct RunOutput {
    /// Recorded samples (at most [`MAX_TRACE_ROWS`]).
    pub trace: Vec<TraceRow>,
    /// Every how many record ticks a row was kept at the end (1 unless the
    /// run was long enough to thin the trace).
    pub trace_every: u64,
    /// Status changes in order (the first entry is the first status; at
    /// most [`MAX_STATUS_CHANGES`]).
    pub statuses: Vec<StatusChange>,
    /// Status changes not kept because the log was full.
    pub statuses_dropped: usize,
    /// Why the run stopped before its duration, if it did for a reason
    /// other than reaching the end of an open path.
    pub stopped_early: Option<String>,
    /// Time spent in each status, s, indexed by [`SupervisorStatus::index`].
    pub status_time_s: [f64; 6],
    /// Simulated time, s.
    pub sim_time_s: f64,
    /// Control period, s.
    pub control_dt_s: f64,
    /// Sum of |change| of the steering command, rad (curvature, 1/m, for
    /// a differential drive).
    pub steer_total_variation: f64,
    /// Number of non-finite numbers seen in commands and trace.
    pub non_finite: usize,
}

/// The machine from the scenario's vehicle table.
pub fn plant_of(v: &VehicleSpec) -> Plant {
    match *v {
        VehicleSpec::Bicycle {
            wheelbase_m,
            max_steer_deg,
            max_steer_rate_deg_s,
            steer_lag_s,
            speed_lag_s,
            max_accel_m_s2,
            max_speed_m_s,
            ..
        } => Plant::Bicycle(Bicycle {
            wheelbase_m,
            steer: LagActuator {
                tau_s: steer_lag_s,
                max: max_steer_deg.to_radians(),
                max_rate: max_steer_rate_deg_s.to_radians(),
            },
            speed: LagActuator {
                tau_s: speed_lag_s,
                max: max_speed_m_s,
                max_rate: max_accel_m_s2,
            },
        }),
        VehicleSpec::Differential {
            track_width_m,
            wheel_lag_s,
            max_accel_m_s2,
            max_speed_m_s,
            ..
        } => Plant::DiffDrive(DiffDrive {
            track_width_m,
            wheel: LagActuator {
                tau_s: wheel_lag_s,
                max: max_speed_m_s,
                max_rate: max_accel_m_s2,
            },
        }),
    }
}

/// The antenna mount of the scenario's vehicle.
pub fn mount_of(v: &VehicleSpec) -> AntennaMount {
    let a = match v {
        VehicleSpec::Bicycle { antenna, .. } | VehicleSpec::Differential { antenna, .. } => antenna,
    };
    AntennaMount {
        ahead_m: a.ahead_m,
        left_m: a.left_m,
        height_m: a.height_m,
    }
}

/// The sensor model of the scenario.
pub fn gnss_of(s: &Scenario) -> GnssModel {
    let g = &s.spec.gnss;
    GnssModel {
        rate_hz: g.rate_hz,
        latency_s: g.latency_s,
        noise_m: g.noise_m,
        bias_sigma_m: g.bias_sigma_m,
        bias_tau_s: g.bias_tau_s,
        speed_noise_m_s: g.speed_noise_m_s,
        heading_noise_rad: g.heading_noise_deg.to_radians(),
        heading_bias_rad: g.heading_bias_deg.to_radians(),
        roll_noise_rad: g.roll_noise_deg.to_radians(),
        roll_bias_rad: g.roll_bias_deg.to_radians(),
        solution: g.solution.core(),
    }
}

/// The terrain of the scenario.
pub fn terrain_of(s: &Scenario) -> Terrain {
    let t = &s.spec.terrain;
    Terrain {
        grade_x: t.slope_x_deg.to_radians().tan(),
        grade_y: t.slope_y_deg.to_radians().tan(),
        wave_amplitude_m: t.wave_amplitude_m,
        wave_length_m: t.wave_length_m,
        crab_gain: t.crab_gain,
    }
}

fn sensor_faults(s: &Scenario) -> Vec<GnssFault> {
    s.spec
        .faults
        .iter()
        .filter_map(|f| match *f {
            FaultSpec::GnssDropout { at_s, duration_s } => Some(GnssFault::Dropout {
                from_s: at_s,
                until_s: at_s + duration_s,
            }),
            FaultSpec::GnssJump {
                at_s,
                duration_s,
                east_m,
                north_m,
            } => Some(GnssFault::Jump {
                from_s: at_s,
                until_s: at_s + duration_s,
                dx_m: east_m,
                dy_m: north_m,
            }),
            FaultSpec::SolutionDrop {
                at_s,
                duration_s,
                solution,
                extra_noise_m,
            } => Some(GnssFault::SolutionDrop {
                from_s: at_s,
                until_s: at_s + duration_s,
                solution: solution.core(),
                extra_noise_m,
            }),
            _ => None,
        })
        .collect()
}

/// The faults of the epoch stream (between receiver and firmware).
pub fn stream_faults(s: &Scenario) -> Vec<StreamFault> {
    let mut out = Vec::new();
    for f in &s.spec.faults {
        match *f {
            FaultSpec::GnssNonFinite { at_s, duration_s } => out.push(StreamFault::NonFinite {
                from_s: at_s,
                until_s: at_s + duration_s,
            }),
            FaultSpec::GnssStale { at_s, duration_s } => out.push(StreamFault::Stale {
                from_s: at_s,
                until_s: at_s + duration_s,
            }),
            FaultSpec::LatencySpike {
                at_s,
                duration_s,
                extra_latency_s,
            } => out.push(StreamFault::Delay {
                from_s: at_s,
                until_s: at_s + duration_s,
                extra_s: extra_latency_s,
            }),
            FaultSpec::Relocalisation {
                at_s,
                count,
                every_s,
                east_m,
                north_m,
                heading_deg,
            } => {
                for i in 0..count {
                    out.push(StreamFault::Step {
                        at_s: at_s + f64::from(i) * every_s,
                        dx_m: east_m,
                        dy_m: north_m,
                        dheading_rad: heading_deg.to_radians(),
                    });
                }
            }
            _ => {}
        }
    }
    out
}

fn steer_stuck(s: &Scenario, t: f64) -> bool {
    s.spec.faults.iter().any(|f| match *f {
        FaultSpec::SteerStuck { at_s, duration_s } => t >= at_s && t < at_s + duration_s,
        _ => false,
    })
}

/// The true starting state: the path start moved by the scenario's offset.
pub fn start_state(s: &Scenario) -> BodyState {
    let st = &s.spec.start;
    let p = s.start;
    let origin = BodyState::at(p.x, p.y, p.heading);
    let (x, y) = origin.point(st.ahead_m, st.left_m);
    let mut b = BodyState::at(x, y, p.heading + st.heading_deg.to_radians());
    b.speed = st.speed_m_s;
    b.left = st.speed_m_s;
    b.right = st.speed_m_s;
    b
}

/// Options of one run.
#[derive(Debug, Clone, Copy, Default)]
pub struct RunOptions {
    /// Override of the scenario's duration, s.
    pub duration_s: Option<f64>,
    /// How an in-process controller receives its path and fixes (not
    /// used over a link, where the device gets them over the link).
    pub inputs: crate::controller::ControllerInputs,
}

/// A callback told the simulated time now and then (for a progress bar).
pub type Progress<'a> = &'a (dyn Fn(f64) + Sync);

/// Runs `scenario` with `firmware` in the loop.
pub fn run<F: Firmware + ?Sized>(
    scenario: &Scenario,
    firmware: &mut F,
    options: RunOptions,
    progress: Option<Progress<'_>>,
) -> RunOutput {
    let spec = &scenario.spec;
    let path = &*scenario.path;
    let plant = plant_of(&spec.vehicle);
    let terrain = terrain_of(scenario);
    let crab_const = spec.terrain.crab_deg.to_radians();
    let mut sensors = SensorSuite::new(
        gnss_of(scenario),
        mount_of(&spec.vehicle),
        sensor_faults(scenario),
        spec.seed,
    );
    let h = 1.0 / spec.physics_hz;
    let per_cycle = (spec.physics_hz / spec.controller.rate_hz).round().max(1.0) as u64;
    let per_record = (spec.physics_hz / spec.metrics.record_hz).round().max(1.0) as u64;
    let control_dt = per_cycle as f64 * h;
    let duration = options.duration_s.unwrap_or(spec.duration_s);
    // The scenario check bounds the duration; a caller's override is
    // bounded here too, so the step count always fits.
    let duration = if duration.is_finite() {
        duration.clamp(0.0, crate::scenario::validate::MAX_DURATION_S)
    } else {
        0.0
    };
    let steps = (duration / h).round() as u64;
    let mut injector = FaultInjector::new(stream_faults(scenario));
    let top_speed = match spec.vehicle {
        VehicleSpec::Bicycle { max_speed_m_s, .. }
        | VehicleSpec::Differential { max_speed_m_s, .. } => max_speed_m_s,
    };
    let record_dt = per_record as f64 * h;
    let mut truth = TruthProjector::new(path, top_speed * record_dt).ok();
    let mut state = start_state(scenario);
    let mut drive = match plant {
        Plant::Bicycle(_) => Drive::Steer {
            angle: 0.0,
            speed: state.speed,
        },
        Plant::DiffDrive(_) => Drive::Wheels {
            left: state.left,
            right: state.right,
        },
    };
    let mut last: Option<Actuation> = None;
    let mut last_fix: Option<crate::sim::Measurement> = None;
    let mut out = RunOutput {
        trace: Vec::with_capacity(((steps / per_record + 1) as usize).min(MAX_TRACE_ROWS)),
        trace_every: 1,
        statuses: Vec::new(),
        statuses_dropped: 0,
        stopped_early: None,
        status_time_s: [0.0; 6],
        sim_time_s: 0.0,
        control_dt_s: control_dt,
        steer_total_variation: 0.0,
        non_finite: 0,
    };
    let mut progress_m = 0.0;
    let mut record_tick: u64 = 0;
    let mut last_station: Option<f64> = None;
    let mut past_end_since: Option<f64> = None;
    let point_ahead = spec.metrics.point_ahead_m;
    let skip = spec.metrics.straight_entry_skip_m;
    for k in 0..=steps {
        let t = k as f64 * h;
        let roll = terrain.roll(state.x, state.y, state.heading);
        let (speed, _) = plant.motion(&state);
        sensors.observe(t, &state, speed, roll);
        if k % per_cycle == 0 {
            let m = injector.filter(t, sensors.deliver(t));
            if m.is_some() {
                last_fix = m;
            }
            let a = firmware.cycle(&Cycle {
                now: t,
                dt: control_dt,
                measurement: m,
            });
            let finite = [a.curvature, a.steer_angle, a.speed_limit]
                .iter()
                .all(|v| v.is_finite())
                && match a.drive {
                    Drive::Steer { angle, speed } => angle.is_finite() && speed.is_finite(),
                    Drive::Wheels { left, right } => left.is_finite() && right.is_finite(),
                };
            if !finite {
                out.non_finite += 1;
            }
            if let Some(why) = firmware.halted() {
                out.stopped_early = Some(format!(
                    "at {t:.3} s the controller stopped answering: {why}"
                ));
                break;
            }
            if let Some(p) = last {
                let d = match plant {
                    Plant::Bicycle(_) => a.steer_angle - p.steer_angle,
                    Plant::DiffDrive(_) => a.curvature - p.curvature,
                };
                if d.is_finite() {
                    out.steer_total_variation += d.abs();
                }
            }
            if last.map(|p| p.status) != Some(a.status) {
                if out.statuses.len() < MAX_STATUS_CHANGES {
                    out.statuses.push(StatusChange {
                        t_s: t,
                        status: a.status,
                    });
                } else {
                    out.statuses_dropped += 1;
                }
            }
            if k < steps {
                *out.status_time_s
                    .get_mut(a.status.index())
                    .unwrap_or(&mut 0.0) += control_dt.min(duration - t);
            }
            drive = a.drive;
            last = Some(a);
        }
        if steer_stuck(scenario, t) {
            drive = match drive {
                Drive::Steer { speed, .. } => Drive::Steer {
                    angle: state.steer,
                    speed,
                },
                Drive::Wheels { .. } => Drive::Wheels {
                    left: state.left,
                    right: state.right,
                },
            };
        }
        if k % per_record == 0 {
            let (px, py) = state.point(point_ahead, 0.0);
            let pose = Pose::new(px, py, state.heading);
            let tr = truth.as_mut().and_then(|tr| tr.project(&pose));
            let row = match tr {
                Some(tr) => {
                    if let Some(ls) = last_station {
                        let mut ds = tr.station - ls;
                        if path.is_closed() {
                            let len = path.length();
                            ds -= len * (ds / len).round();
                        }
                        progress_m += ds;
                    }
                    last_station = Some(tr.station);
                    let on = tr.status == TrackStatus::OnPath;
                    let straight = on && tr.curvature == 0.0 && tr.sharpness == 0.0;
                    let into = tr.into_segment;
                    if tr.status == TrackStatus::PastEnd {
                        past_end_since.get_or_insert(t);
                    } else {
                        past_end_since = None;
                    }
                    TraceRow {
                        t_s: t,
                        x_m: state.x,
                        y_m: state.y,
                        heading_rad: state.heading,
                        steer_rad: state.steer,
                        speed_m_s: speed,
                        point_x_m: px,
                        point_y_m: py,
                        station_m: tr.station,
                        cross_track_m: tr.cross_track,
                        heading_error_rad: tr.heading_error,
                        path_curvature_per_m: tr.curvature,
                        straight_pass: straight && into >= skip,
                        curved: on && !straight,
                        on_path: on,
                        progress_m,
                        status: last.map_or("none", |a| a.status.name()),
                        cmd_curvature_per_m: last.map_or(0.0, |a| a.curvature),
                        cmd_steer_rad: last.map_or(0.0, |a| a.steer_angle),
                        speed_limit_m_s: last.map_or(0.0, |a| a.speed_limit),
                        fix_x_m: last_fix.map(|m| m.x),
                        fix_y_m: last_fix.map(|m| m.y),
                        fix_age_s: last_fix.map(|m| t - m.time_s),
                        roll_rad: roll,
                    }
                }
                None => {
                    out.non_finite += 1;
                    out.stopped_early = Some(format!(
                        "at {t:.3} s the true point ({px:.3}, {py:.3}) m could not be projected onto the path (non-finite state, or the path's projector failed)"
                    ));
                    break;
                }
            };
            if !row_is_finite(&row) {
                out.non_finite += 1;
            }
            if record_tick % out.trace_every == 0 {
                if out.trace.len() >= MAX_TRACE_ROWS {
                    thin_in_place(&mut out.trace);
                    out.trace_every *= 2;
                }
                if record_tick % out.trace_every == 0 {
                    out.trace.push(row);
                }
            }
            record_tick += 1;
            if let Some(p) = progress {
                if k % (per_record * 500) == 0 {
                    p(t);
                }
            }
        }
        out.sim_time_s = t;
        // An open path is done once the point has been past its end for a
        // second, or the supervisor reports the end and the machine stands.
        let ended =
            last.is_some_and(|a| a.status == SupervisorStatus::EndOfPath) && speed.abs() < 0.02;
        if past_end_since.is_some_and(|t0| t - t0 > 1.0) || ended {
            break;
        }
        if k < steps {
            let crab = terrain.crab(roll) + crab_const;
            plant.step(&mut state, &drive, crab, h);
        }
    }
    if let Some(p) = progress {
        p(out.sim_time_s);
    }
    out
}

/// Keeps every second row (the first, third, ...).
fn thin_in_place(trace: &mut Vec<TraceRow>) {
    let mut i = 0;
    trace.retain(|_| {
        i += 1;
        i % 2 == 1
    });
}

/// The true state and the commands are finite (the last fix is what the
/// receiver sent: an injected non-finite fix is not a defect of the loop).
fn row_is_finite(r: &TraceRow) -> bool {
    [
        r.t_s,
        r.x_m,
        r.y_m,
        r.heading_rad,
        r.steer_rad,
        r.speed_m_s,
        r.point_x_m,
        r.point_y_m,
        r.station_m,
        r.cross_track_m,
        r.heading_error_rad,
        r.path_curvature_per_m,
        r.progress_m,
        r.cmd_curvature_per_m,
        r.cmd_steer_rad,
        r.speed_limit_m_s,
        r.roll_rad,
    ]
    .iter()
    .all(|v| v.is_finite())
}
