//! A small kinematic vehicle simulation for the steering tests (the full
//! simulator is the HIL harness's). Rear-axle unicycle/bicycle kinematics
//! (e.g. Rajamani, *Vehicle Dynamics and Control*, 2nd ed., 2012, sec. 2.2 (from memory),
//! zero slip), an ideal actuator that takes the commanded curvature (the
//! command is already rate limited), a speed that follows
//! `min(target, speed_limit)` at bounded acceleration, optional constant
//! side slip, exact arc integration in sub-steps.
#![allow(dead_code)]

use kappaline::{
    Command, Direction, Fix, FixUpdate, Guidance, GuidanceInput, GuidanceStatus, Micros, Path,
    SteeringLaw, Vehicle,
};

/// Rear-axle state.
#[derive(Debug, Clone, Copy)]
pub struct State {
    pub x: f64,
    pub y: f64,
    pub heading: f64,
    /// Signed body speed, m/s.
    pub speed: f64,
    pub curvature: f64,
}

/// One recorded control cycle.
#[derive(Debug, Clone, Copy)]
pub struct Sample {
    pub time: f64,
    pub distance: f64,
    pub cp: (f64, f64),
    pub heading: f64,
    pub command: Command<f64>,
}

pub struct Sim {
    pub state: State,
    pub control_point: f64,
    pub dt: f64,
    pub substeps: u32,
    pub target_speed: f64,
    pub accel: f64,
    pub decel: f64,
    pub side_slip: f64,
    pub time: f64,
    pub distance: f64,
}

impl Sim {
    /// A simulation of `vehicle` starting with its control point at
    /// `(x, y)` and body heading `heading`, speed `speed` (signed).
    pub fn new(vehicle: &Vehicle<f64>, x: f64, y: f64, heading: f64, speed: f64) -> Self {
        let a = vehicle.control_point();
        Self {
            state: State {
                x: x - a * heading.cos(),
                y: y - a * heading.sin(),
                heading,
                speed,
                curvature: 0.0,
            },
            control_point: a,
            dt: 0.05,
            substeps: 10,
            target_speed: speed.abs(),
            accel: 0.5,
            decel: vehicle.max_deceleration(),
            side_slip: 0.0,
            time: 0.0,
            distance: 0.0,
        }
    }

    pub fn control_point(&self) -> (f64, f64) {
        let s = &self.state;
        (
            s.x + self.control_point * s.heading.cos(),
            s.y + self.control_point * s.heading.sin(),
        )
    }

    pub fn fix(&self) -> Fix<f64> {
        let (x, y) = self.control_point();
        Fix::new(
            x,
            y,
            self.state.heading,
            self.state.speed,
            micros(self.time),
        )
    }

    /// Applies a command for one control period.
    pub fn apply(&mut self, cmd: &Command<f64>) {
        self.state.curvature = cmd.curvature;
        let sign = match cmd.tracking.map(|t| t.foot.direction) {
            Some(Direction::Reverse) => -1.0,
            Some(Direction::Forward) => 1.0,
            None => self.state.speed.signum(),
        };
        let want = sign * self.target_speed.min(cmd.speed_limit);
        let h = self.dt / f64::from(self.substeps);
        for _ in 0..self.substeps {
            let v = self.state.speed;
            // Change of direction only through zero.
            let dv = want - v;
            let rate = if want * v < 0.0 || want.abs() < v.abs() {
                self.decel
            } else {
                self.accel
            };
            self.state.speed = v + dv.clamp(-rate * h, rate * h);
            let ds = self.state.speed * h;
            let k = self.state.curvature;
            let turn = k * ds;
            let dir = self.state.heading + self.side_slip;
            // Exact arc: chord length ds * sinc(turn / 2) at the mid heading.
            let half = 0.5 * turn;
            let sinc = if half.abs() < 1e-9 {
                1.0
            } else {
                half.sin() / half
            };
            self.state.x += ds * sinc * (dir + half).cos();
            self.state.y += ds * sinc * (dir + half).sin();
            self.state.heading += turn;
            self.distance += ds.abs();
        }
        self.time += self.dt;
    }
}

/// The instant `t` seconds after start-up, on the core's wrapping
/// microsecond clock.
pub fn micros(t: f64) -> Micros {
    Micros((t * 1e6).round() as u64 as u32)
}

/// A control period of `dt` seconds in microseconds.
pub fn period_us(dt: f64) -> u32 {
    (dt * 1e6).round() as u32
}

/// Runs the closed loop until `distance` metres are driven or `max_time`
/// seconds pass; `stop` ends it early on a status.
pub fn run<L: SteeringLaw<f64>, const N: usize>(
    sim: &mut Sim,
    guidance: &mut Guidance<f64, L>,
    path: &Path<f64, N>,
    distance: f64,
    max_time: f64,
) -> Vec<Sample> {
    let mut out = Vec::new();
    while sim.distance < distance && sim.time < max_time {
        let input = GuidanceInput::new(
            FixUpdate::New(sim.fix()),
            micros(sim.time),
            period_us(sim.dt),
        );
        let cmd = guidance.step(path, &input);
        out.push(Sample {
            time: sim.time,
            distance: sim.distance,
            cp: sim.control_point(),
            heading: sim.state.heading,
            command: cmd,
        });
        sim.apply(&cmd);
        if cmd.status == GuidanceStatus::EndOfPath && sim.state.speed.abs() < 1e-6 {
            break;
        }
    }
    out
}

/// Checks the steering range and rate on every step; returns the largest
/// |steer| and |steer rate| seen.
pub fn check_limits(samples: &[Sample], vehicle: &Vehicle<f64>, dt: f64) -> (f64, f64) {
    let mut max_abs = 0.0f64;
    let mut max_rate = 0.0f64;
    let mut prev: Option<f64> = None;
    for s in samples {
        let (value, range, rate_limit) = match vehicle.wheelbase() {
            Some(_) => (
                s.command.steer_angle,
                vehicle.max_steer(),
                vehicle.max_steer_rate(),
            ),
            None => (
                s.command.curvature,
                vehicle.max_curvature(),
                vehicle.max_curvature_rate(),
            ),
        };
        assert!(
            value.abs() <= range + 1e-12,
            "range exceeded: {value} at t = {}",
            s.time
        );
        if let Some(p) = prev {
            let rate = (value - p).abs() / dt;
            assert!(
                rate <= rate_limit * (1.0 + 1e-9) + 1e-12,
                "rate exceeded: {rate} at t = {}",
                s.time
            );
            max_rate = max_rate.max(rate);
        }
        max_abs = max_abs.max(value.abs());
        prev = Some(value);
    }
    (max_abs, max_rate)
}

/// Settling figures of a cross-track history `(distance, error)`.
#[derive(Debug, Clone, Copy)]
pub struct Settling {
    /// Largest excursion to the other side of the path from the start, m.
    pub overshoot: f64,
    /// Distance driven until the error stays within `band` for good, m.
    pub settle_distance: f64,
    /// Largest |error| over the last `tail` metres, m.
    pub steady: f64,
}

pub fn settling(history: &[(f64, f64)], band: f64, tail: f64) -> Settling {
    let d0 = history.first().map(|h| h.1).unwrap_or(0.0);
    let side = d0.signum();
    let overshoot = history
        .iter()
        .map(|h| (-side * h.1).max(0.0))
        .fold(0.0, f64::max);
    let end = history.last().map(|h| h.0).unwrap_or(0.0);
    let settle_distance = history
        .iter()
        .rev()
        .find(|h| h.1.abs() > band)
        .map(|h| h.0)
        .unwrap_or(0.0);
    let steady = history
        .iter()
        .filter(|h| h.0 >= end - tail)
        .map(|h| h.1.abs())
        .fold(0.0, f64::max);
    Settling {
        overshoot,
        settle_distance,
        steady,
    }
}
