//! A first-order actuator with saturation and a rate limit.
//!
//! The output follows `y' = (u - y) / tau` towards the saturated command
//! `u = clamp(command, -max, max)`, and its rate of change never exceeds
//! `max_rate`. Each physics step applies the exact discrete solution of the
//! lag for a command held over the step, `y + (u - y) (1 - exp(-h / tau))`,
//! and then limits the change to `max_rate * h`: exact when either the lag
//! or the rate limit alone is active.

/// Settings of a first-order actuator.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LagActuator {
    /// Time constant, s (>= 0; 0 follows the command at once, within the rate limit).
    pub tau_s: f64,
    /// Largest output magnitude, in the actuator's unit (rad for steering, m/s for speed).
    pub max: f64,
    /// Largest rate of change, unit per second (`f64::INFINITY` for none).
    pub max_rate: f64,
}

impl LagActuator {
    /// The output after one step of `h` seconds from `y` with `command` held.
    pub fn step(&self, y: f64, command: f64, h: f64) -> f64 {
        let u = if command.is_finite() {
            command.clamp(-self.max, self.max)
        } else {
            // A non-finite command is ignored: the actuator holds.
            y
        };
        let target = if self.tau_s > 0.0 {
            y + (u - y) * (-(-h / self.tau_s).exp_m1())
        } else {
            u
        };
        let limit = self.max_rate * h;
        y + (target - y).clamp(-limit, limit)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn saturates_and_limits_rate() {
        let a = LagActuator {
            tau_s: 0.0,
            max: 0.5,
            max_rate: 1.0,
        };
        // Rate limited: 1 rad/s for 0.1 s.
        assert!((a.step(0.0, 2.0, 0.1) - 0.1).abs() < 1e-15);
        // Saturated at 0.5 once reached.
        let mut y = 0.0;
        for _ in 0..100 {
            y = a.step(y, 2.0, 0.01);
        }
        assert!((y - 0.5).abs() < 1e-15);
        // NaN command holds the output.
        assert_eq!(a.step(0.3, f64::NAN, 0.01), 0.3);
    }
}
