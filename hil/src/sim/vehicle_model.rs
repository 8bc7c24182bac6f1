//! Vehicle plants: a kinematic bicycle with lagged, rate-limited, saturated
//! steering and a lagged speed, and a differential-drive robot with lagged
//! wheel speeds; both with an optional crab (side-slip) angle.
//!
//! The state's `(x, y)` is the reference point: the rear-axle centre of the
//! bicycle, the centre between the wheels of the robot. Over one physics step
//! the actuators move by their exact discrete solution (see
//! [`super::actuator`]) and the pose moves along the arc of the mean speed
//! and mean curvature of the step, `p += v h sinc(w h / 2) (cos, sin)(theta +
//! w h / 2 + crab)`: exact when the inputs are constant over the step, so a
//! constant steering angle drives a circle of radius `L / tan(delta)`.

use super::actuator::LagActuator;

/// A front-steered vehicle (kinematic bicycle, rear-axle reference).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Bicycle {
    /// Wheelbase, metres (> 0).
    pub wheelbase_m: f64,
    /// Steering actuator (rad, rad/s).
    pub steer: LagActuator,
    /// Speed response (m/s, m/s^2).
    pub speed: LagActuator,
}

/// A differential-drive robot.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DiffDrive {
    /// Distance between the wheel contact lines, metres (> 0).
    pub track_width_m: f64,
    /// Each wheel's speed response (m/s, m/s^2).
    pub wheel: LagActuator,
}

/// The simulated machine.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Plant {
    /// Front-steered.
    Bicycle(Bicycle),
    /// Differential drive.
    DiffDrive(DiffDrive),
}

/// What the controller asks of the actuators.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Drive {
    /// Steering angle (rad, left positive) and speed (m/s) for a bicycle.
    Steer {
        /// Front wheel angle, rad.
        angle: f64,
        /// Speed along the body axis, m/s.
        speed: f64,
    },
    /// Left and right wheel speeds, m/s, for a differential drive.
    Wheels {
        /// Left wheel, m/s.
        left: f64,
        /// Right wheel, m/s.
        right: f64,
    },
}

/// The true state of the machine.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct BodyState {
    /// Reference point, metres.
    pub x: f64,
    /// Reference point, metres.
    pub y: f64,
    /// Body heading, rad, CCW from +x (not wrapped).
    pub heading: f64,
    /// Front wheel angle, rad (bicycle).
    pub steer: f64,
    /// Speed of the reference point along the body, m/s (bicycle).
    pub speed: f64,
    /// Left wheel speed, m/s (differential drive).
    pub left: f64,
    /// Right wheel speed, m/s (differential drive).
    pub right: f64,
}

impl BodyState {
    /// A machine at rest at `(x, y)` heading `heading`.
    pub fn at(x: f64, y: f64, heading: f64) -> Self {
        Self {
            x,
            y,
            heading,
            ..Self::default()
        }
    }

    /// The ground point `ahead_m` in front of and `left_m` to the left of
    /// the reference point, metres.
    pub fn point(&self, ahead_m: f64, left_m: f64) -> (f64, f64) {
        let (s, c) = self.heading.sin_cos();
        (
            self.x + ahead_m * c - left_m * s,
            self.y + ahead_m * s + left_m * c,
        )
    }
}

impl Plant {
    /// Speed (m/s) and curvature (1/m) of the reference point in `state`.
    pub fn motion(&self, state: &BodyState) -> (f64, f64) {
        match self {
            Plant::Bicycle(b) => (state.speed, state.steer.tan() / b.wheelbase_m),
            Plant::DiffDrive(d) => {
                let v = 0.5 * (state.left + state.right);
                let w = (state.right - state.left) / d.track_width_m;
                let k = if v.abs() > 1e-9 { w / v } else { 0.0 };
                (v, k)
            }
        }
    }

    /// Moves `state` by `h` seconds with `drive` held and the body crabbing
    /// at `crab` rad (velocity direction minus heading, CCW positive).
    pub fn step(&self, state: &mut BodyState, drive: &Drive, crab: f64, h: f64) {
        let before = *state;
        let (v, w) = match (self, drive) {
            (Plant::Bicycle(b), Drive::Steer { angle, speed }) => {
                state.steer = b.steer.step(state.steer, *angle, h);
                state.speed = b.speed.step(state.speed, *speed, h);
                let v = 0.5 * (before.speed + state.speed);
                let delta = 0.5 * (before.steer + state.steer);
                (v, v * delta.tan() / b.wheelbase_m)
            }
            (Plant::DiffDrive(d), Drive::Wheels { left, right }) => {
                state.left = d.wheel.step(state.left, *left, h);
                state.right = d.wheel.step(state.right, *right, h);
                let l = 0.5 * (before.left + state.left);
                let r = 0.5 * (before.right + state.right);
                (0.5 * (l + r), (r - l) / d.track_width_m)
            }
            // A command of the wrong kind: actuators hold, the body coasts.
            (p, _) => {
                let (v, k) = p.motion(state);
                (v, v * k)
            }
        };
        let turn = w * h;
        let half = 0.5 * turn;
        let chord = v * h * sinc(half);
        let dir = before.heading + half + crab;
        state.x += chord * dir.cos();
        state.y += chord * dir.sin();
        state.heading += turn;
    }
}

/// `sin(x) / x`, 1 at 0.
fn sinc(x: f64) -> f64 {
    if x.abs() < 1e-4 {
        1.0 - x * x / 6.0
    } else {
        x.sin() / x
    }
}
