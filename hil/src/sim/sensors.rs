//! Sensor models: a GNSS receiver (with a heading and a roll channel, as a
//! dual-antenna receiver with a tilt sensor gives), seeded and reproducible.
//!
//! * Position: the antenna's ground-plane position (mount ahead, left and
//!   height above the reference point; the body's roll swings a tall antenna
//!   sideways by `height sin(roll)`), plus white noise of `noise_m` per axis,
//!   plus a slowly wandering bias per axis: a first-order Gauss-Markov
//!   process of steady-state deviation `bias_sigma_m` and correlation time
//!   `bias_tau_s`, advanced with its exact discrete form
//!   `b' = b exp(-dt/tau) + sigma sqrt(1 - exp(-2 dt/tau)) w` (any
//!   stochastic-processes text, e.g. Brown & Hwang, *Introduction to Random
//!   Signals and Applied Kalman Filtering*, first-order Gauss-Markov).
//! * Timing: samples at `rate_hz`, each delivered `latency_s` later and
//!   stamped with the time it was taken.
//! * Faults: dropouts (no samples) and jumps (a position offset held for a
//!   while), at scheduled times.
//! * Solution quality: each epoch reports the kind of solution (carrier-
//!   phase fixed by default) and its position sigma (the model's white
//!   noise, as a receiver's GST would estimate it). A solution drop (from
//!   fixed to float, say) reports the lower kind and adds its extra white
//!   noise for a while.
//! * Heading and roll: truth plus white noise plus a constant bias.
//!
//! Every random draw comes from a ChaCha8 stream seeded by the scenario seed,
//! so a run is reproducible bit for bit.

use std::collections::VecDeque;

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal};

use kappaline::Solution;

use super::vehicle_model::BodyState;

/// Receiver and attitude-sensor settings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GnssModel {
    /// Update rate, Hz (> 0).
    pub rate_hz: f64,
    /// Delay from sampling to delivery, s (>= 0).
    pub latency_s: f64,
    /// White position noise, metres, standard deviation per axis.
    pub noise_m: f64,
    /// Steady-state standard deviation of the wandering bias, metres per axis.
    pub bias_sigma_m: f64,
    /// Correlation time of the bias, s (> 0).
    pub bias_tau_s: f64,
    /// White noise on the measured speed, m/s.
    pub speed_noise_m_s: f64,
    /// White noise on the heading, rad.
    pub heading_noise_rad: f64,
    /// Constant heading bias, rad.
    pub heading_bias_rad: f64,
    /// White noise on the roll, rad.
    pub roll_noise_rad: f64,
    /// Constant roll bias, rad.
    pub roll_bias_rad: f64,
    /// The kind of solution reported outside solution drops.
    pub solution: Solution,
}

/// Where the antenna sits on the body, metres from the reference point.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct AntennaMount {
    /// Ahead of the reference point, metres.
    pub ahead_m: f64,
    /// Left of the reference point, metres.
    pub left_m: f64,
    /// Above the ground, metres.
    pub height_m: f64,
}

impl AntennaMount {
    /// Ground-plane position of the antenna for a body at `state` rolled by
    /// `roll` (rad, left side up positive), metres.
    pub fn position(&self, state: &BodyState, roll: f64) -> (f64, f64) {
        let (s, c) = roll.sin_cos();
        let lateral = self.left_m * c - self.height_m * s;
        state.point(self.ahead_m, lateral)
    }
}

/// A scheduled sensor fault.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum GnssFault {
    /// No samples in `[from_s, until_s)`.
    Dropout {
        /// Start, s.
        from_s: f64,
        /// End, s.
        until_s: f64,
    },
    /// Samples in `[from_s, until_s)` are offset by `(dx_m, dy_m)`.
    Jump {
        /// Start, s.
        from_s: f64,
        /// End, s.
        until_s: f64,
        /// Offset east, metres.
        dx_m: f64,
        /// Offset north, metres.
        dy_m: f64,
    },
    /// Samples in `[from_s, until_s)` report `solution` and carry
    /// `extra_noise_m` more white noise per axis (reported in the sigma).
    SolutionDrop {
        /// Start, s.
        from_s: f64,
        /// End, s.
        until_s: f64,
        /// The solution reported meanwhile.
        solution: Solution,
        /// Extra white position noise, metres per axis.
        extra_noise_m: f64,
    },
}

/// One receiver epoch as firmware gets it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Measurement {
    /// When the sample was taken, s.
    pub time_s: f64,
    /// Antenna position, metres.
    pub x: f64,
    /// Antenna position, metres.
    pub y: f64,
    /// Body heading, rad, CCW from +x, wrapped to (-pi, pi].
    pub heading: f64,
    /// Speed along the body axis, m/s.
    pub speed: f64,
    /// Body roll, rad, left side up positive.
    pub roll: f64,
    /// The kind of solution.
    pub solution: Solution,
    /// The receiver's position sigma, metres per axis.
    pub sigma_m: f64,
}

/// The sensors of one run, with their random state and delivery queue.
#[derive(Debug, Clone)]
pub struct SensorSuite {
    model: GnssModel,
    mount: AntennaMount,
    faults: Vec<GnssFault>,
    rng: ChaCha8Rng,
    bias: (f64, f64),
    next_sample_s: f64,
    last_sample_s: Option<f64>,
    pending: VecDeque<(f64, Measurement)>,
}

impl SensorSuite {
    /// Sensors with their random streams seeded from `seed`.
    pub fn new(model: GnssModel, mount: AntennaMount, faults: Vec<GnssFault>, seed: u64) -> Self {
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        let bias = (
            model.bias_sigma_m * gauss(&mut rng),
            model.bias_sigma_m * gauss(&mut rng),
        );
        Self {
            model,
            mount,
            faults,
            rng,
            bias,
            next_sample_s: 0.0,
            last_sample_s: None,
            pending: VecDeque::new(),
        }
    }

    /// The antenna mount.
    pub fn mount(&self) -> AntennaMount {
        self.mount
    }

    /// Takes a sample if one is due at time `t` (s), from the true `state`,
    /// its speed along the body (m/s) and roll (rad).
    pub fn observe(&mut self, t: f64, state: &BodyState, speed: f64, roll: f64) {
        // Half a microsecond of slack absorbs rounding of the step grid.
        if t + 5e-7 < self.next_sample_s {
            return;
        }
        self.next_sample_s += 1.0 / self.model.rate_hz;
        let dt = self.last_sample_s.map_or(0.0, |l| t - l);
        self.last_sample_s = Some(t);
        self.advance_bias(dt);
        // Draw every number even during a dropout, so that a fault does not
        // shift the noise of the samples after it.
        let m = &self.model;
        let n = [
            gauss(&mut self.rng),
            gauss(&mut self.rng),
            gauss(&mut self.rng),
            gauss(&mut self.rng),
            gauss(&mut self.rng),
        ];
        // Drawn only during a solution drop (so scenarios without one keep
        // their noise sequence bit for bit).
        let mut solution = m.solution;
        let mut extra = 0.0;
        let mut dropped = false;
        let (mut jx, mut jy) = (0.0, 0.0);
        for f in &self.faults {
            match *f {
                GnssFault::Dropout { from_s, until_s } if t >= from_s && t < until_s => {
                    dropped = true;
                }
                GnssFault::Jump {
                    from_s,
                    until_s,
                    dx_m,
                    dy_m,
                } if t >= from_s && t < until_s => {
                    jx += dx_m;
                    jy += dy_m;
                }
                GnssFault::SolutionDrop {
                    from_s,
                    until_s,
                    solution: s,
                    extra_noise_m,
                } if t >= from_s && t < until_s => {
                    solution = s;
                    extra += extra_noise_m;
                }
                _ => {}
            }
        }
        if dropped {
            return;
        }
        let (ex, ey) = if extra > 0.0 {
            (extra * gauss(&mut self.rng), extra * gauss(&mut self.rng))
        } else {
            (0.0, 0.0)
        };
        let m = &self.model;
        let (ax, ay) = self.mount.position(state, roll);
        let meas = Measurement {
            time_s: t,
            x: ax + self.bias.0 + m.noise_m * n[0] + jx + ex,
            y: ay + self.bias.1 + m.noise_m * n[1] + jy + ey,
            heading: wrap(state.heading + m.heading_bias_rad + m.heading_noise_rad * n[2]),
            speed: speed + m.speed_noise_m_s * n[3],
            roll: roll + m.roll_bias_rad + m.roll_noise_rad * n[4],
            solution,
            sigma_m: (m.noise_m * m.noise_m + m.bias_sigma_m * m.bias_sigma_m + extra * extra)
                .sqrt(),
        };
        self.pending.push_back((t + m.latency_s, meas));
    }

    /// The newest measurement delivered by time `t` (s) since the last call,
    /// if any; older ones delivered in the meantime are dropped, as a
    /// firmware loop that reads only the latest epoch would.
    pub fn deliver(&mut self, t: f64) -> Option<Measurement> {
        let mut latest = None;
        while let Some((at, m)) = self.pending.front().copied() {
            if at > t + 5e-7 {
                break;
            }
            latest = Some(m);
            self.pending.pop_front();
        }
        latest
    }

    fn advance_bias(&mut self, dt: f64) {
        let m = &self.model;
        if m.bias_sigma_m <= 0.0 || dt <= 0.0 {
            return;
        }
        let a = (-dt / m.bias_tau_s).exp();
        let q = m.bias_sigma_m * (1.0 - a * a).max(0.0).sqrt();
        self.bias.0 = self.bias.0 * a + q * gauss(&mut self.rng);
        self.bias.1 = self.bias.1 * a + q * gauss(&mut self.rng);
    }
}

fn gauss(rng: &mut ChaCha8Rng) -> f64 {
    StandardNormal.sample(rng)
}

/// Wraps an angle to (-pi, pi].
pub fn wrap(a: f64) -> f64 {
    use std::f64::consts::{PI, TAU};
    let w = a - TAU * ((a + PI) / TAU).floor();
    if w <= -PI {
        w + TAU
    } else {
        w
    }
}
