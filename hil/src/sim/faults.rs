//! Faults between the receiver and the firmware: what a rig injects into
//! the stream of epochs after the sensor model made them.
//!
//! The sensor model ([`super::sensors`]) has the faults of the signal
//! itself (dropouts, position jumps); this module has those of the link
//! and of other position sources, applied to each delivered epoch:
//!
//! * non-finite fixes (NaN position and heading);
//! * a stale stream: the last epoch before the fault sent again and again
//!   with its old time stamp;
//! * a latency spike: epochs sampled in the window held back longer, with
//!   delivery kept in order;
//! * relocalisation steps of an indoor positioning source: the reported
//!   pose moves by a fixed step at given times, and the steps add up.
//!
//! Every fault acts in a half-open window `[from, until)` of simulated time.

use std::collections::VecDeque;

use super::sensors::{wrap, Measurement};

/// One fault of the epoch stream.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum StreamFault {
    /// Epochs in `[from_s, until_s)` carry NaN position and heading.
    NonFinite {
        /// Start, s.
        from_s: f64,
        /// End, s.
        until_s: f64,
    },
    /// Epochs delivered in `[from_s, until_s)` are replaced by the last one
    /// delivered before `from_s` (same time stamp).
    Stale {
        /// Start, s.
        from_s: f64,
        /// End, s.
        until_s: f64,
    },
    /// Epochs sampled in `[from_s, until_s)` are held `extra_s` longer.
    Delay {
        /// Start, s.
        from_s: f64,
        /// End, s.
        until_s: f64,
        /// Added delay, s (>= 0).
        extra_s: f64,
    },
    /// The reported pose steps by `(dx_m, dy_m, dheading_rad)` at `at_s`.
    Step {
        /// When, s.
        at_s: f64,
        /// Step east, metres.
        dx_m: f64,
        /// Step north, metres.
        dy_m: f64,
        /// Step of heading, rad.
        dheading_rad: f64,
    },
}

/// Most epochs held back by delays at once; an older one is let through
/// first when the queue is full, so memory stays bounded.
pub const MAX_HELD: usize = 100_000;

/// Applies [`StreamFault`]s to the delivered epochs.
#[derive(Debug, Clone, Default)]
pub struct FaultInjector {
    faults: Vec<StreamFault>,
    held: VecDeque<(f64, Measurement)>,
    last_good: Option<Measurement>,
}

fn active(t: f64, from: f64, until: f64) -> bool {
    t >= from && t < until
}

impl FaultInjector {
    /// An injector of `faults`.
    pub fn new(faults: Vec<StreamFault>) -> Self {
        Self {
            faults,
            held: VecDeque::new(),
            last_good: None,
        }
    }

    /// `true` when there is nothing to inject.
    pub fn is_empty(&self) -> bool {
        self.faults.is_empty()
    }

    /// The epoch firmware gets at time `t` (s), given the one the receiver
    /// delivered (if any).
    pub fn filter(&mut self, t: f64, delivered: Option<Measurement>) -> Option<Measurement> {
        if self.faults.is_empty() {
            return delivered;
        }
        let released = self.delay(t, delivered);
        let m = released.map(|m| self.step(m));
        let stale = self.faults.iter().any(
            |f| matches!(*f, StreamFault::Stale { from_s, until_s } if active(t, from_s, until_s)),
        );
        let m = if stale {
            // A hung link repeats its last epoch on every read.
            self.last_good
        } else {
            if m.is_some() {
                self.last_good = m;
            }
            m
        };
        m.map(|m| self.non_finite(m))
    }

    /// Holds epochs sampled inside a delay window; lets the oldest due one
    /// through, in order.
    fn delay(&mut self, t: f64, delivered: Option<Measurement>) -> Option<Measurement> {
        if let Some(m) = delivered {
            let extra: f64 = self
                .faults
                .iter()
                .filter_map(|f| match *f {
                    StreamFault::Delay {
                        from_s,
                        until_s,
                        extra_s,
                    } if active(m.time_s, from_s, until_s) => Some(extra_s),
                    _ => None,
                })
                .sum();
            if self.held.len() >= MAX_HELD {
                self.held.pop_front();
            }
            self.held.push_back((t + extra, m));
        }
        let mut out = None;
        while let Some(&(due, m)) = self.held.front() {
            if due > t + 5e-7 {
                break;
            }
            out = Some(m);
            self.held.pop_front();
        }
        out
    }

    fn step(&self, mut m: Measurement) -> Measurement {
        for f in &self.faults {
            if let StreamFault::Step {
                at_s,
                dx_m,
                dy_m,
                dheading_rad,
            } = *f
            {
                if m.time_s >= at_s {
                    m.x += dx_m;
                    m.y += dy_m;
                    m.heading = wrap(m.heading + dheading_rad);
                }
            }
        }
        m
    }

    fn non_finite(&self, mut m: Measurement) -> Measurement {
        let bad = self.faults.iter().any(|f| {
            matches!(*f, StreamFault::NonFinite { from_s, until_s } if active(m.time_s, from_s, until_s))
        });
        if bad {
            m.x = f64::NAN;
            m.y = f64::NAN;
            m.heading = f64::NAN;
        }
        m
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn epoch(t: f64) -> Measurement {
        Measurement {
            time_s: t,
            x: t,
            y: 0.0,
            heading: 0.0,
            speed: 1.0,
            roll: 0.0,
            solution: kappaline::Solution::Fixed,
            sigma_m: 0.02,
        }
    }

    #[test]
    fn stale_repeats_the_last_epoch_with_its_time_stamp() {
        let mut f = FaultInjector::new(vec![StreamFault::Stale {
            from_s: 1.0,
            until_s: 2.0,
        }]);
        assert_eq!(f.filter(0.9, Some(epoch(0.9))).map(|m| m.time_s), Some(0.9));
        assert_eq!(f.filter(1.5, Some(epoch(1.5))).map(|m| m.time_s), Some(0.9));
        assert_eq!(f.filter(1.6, None).map(|m| m.time_s), Some(0.9));
        assert_eq!(f.filter(2.0, Some(epoch(2.0))).map(|m| m.time_s), Some(2.0));
    }

    #[test]
    fn delay_holds_epochs_in_order() {
        let mut f = FaultInjector::new(vec![StreamFault::Delay {
            from_s: 1.0,
            until_s: 1.1,
            extra_s: 0.5,
        }]);
        assert!(f.filter(1.0, Some(epoch(1.0))).is_none());
        // The next epoch is not delayed but waits behind the held one.
        assert!(f.filter(1.2, Some(epoch(1.2))).is_none());
        assert_eq!(f.filter(1.5, None).map(|m| m.time_s), Some(1.2));
    }

    #[test]
    fn steps_add_up_and_non_finite_is_nan() {
        let mut f = FaultInjector::new(vec![
            StreamFault::Step {
                at_s: 1.0,
                dx_m: 0.5,
                dy_m: 0.0,
                dheading_rad: 0.0,
            },
            StreamFault::Step {
                at_s: 2.0,
                dx_m: 0.5,
                dy_m: 0.0,
                dheading_rad: 0.0,
            },
            StreamFault::NonFinite {
                from_s: 3.0,
                until_s: 4.0,
            },
        ]);
        assert_eq!(f.filter(2.5, Some(epoch(2.5))).map(|m| m.x), Some(3.5));
        assert!(f
            .filter(3.5, Some(epoch(3.5)))
            .is_some_and(|m| m.x.is_nan()));
    }
}
