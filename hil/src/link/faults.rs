//! Faults injected on the link by the host (`--link-faults`): the frames
//! of chosen control cycles are dropped, corrupted, duplicated or
//! delayed on their way to the device, to see what the device does.
//!
//! A plan is written `KIND@CYCLES[,KIND@CYCLES...]`, cycles counted from 0
//! as the harness counts them, `CYCLES` one cycle `N` or a span `N-M`
//! (both ends included):
//!
//! * `drop`: none of the cycle's frames (receiver bytes, cycle) is sent;
//!   the device sees a gap in the sequence numbers next time;
//! * `corrupt`: the cycle frame is sent with one byte changed, so that its
//!   CRC fails; the device must drop it;
//! * `duplicate`: every frame of the cycle is sent twice; the device must
//!   drop the repeats and answer once;
//! * `delay`: the cycle's frames are held back and sent after the next
//!   cycle's, out of order; the device must drop them as reordered;
//! * `drop-receiver`: only the receiver's bytes are left out; the device
//!   runs its cycle on stale input and its supervisor decides.
//!
//! A cycle with no answer expected (`drop`, `corrupt`, `delay`) keeps the
//! actuators at the device's last command, as an actuator without a new
//! set-point does; an answer that comes anyway is out of lockstep and
//! stops the run.

use std::collections::BTreeMap;
use std::fmt;

/// What is done to the frames of one cycle.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum LinkFault {
    /// No frame of the cycle is sent.
    Drop,
    /// The cycle frame is sent with one byte changed.
    Corrupt,
    /// Every frame of the cycle is sent twice.
    Duplicate,
    /// The cycle's frames are sent after the next cycle's.
    Delay,
    /// The receiver's bytes are not sent; the cycle frame is.
    DropReceiver,
}

impl LinkFault {
    /// Every kind, in report order.
    pub const ALL: [LinkFault; 5] = [
        LinkFault::Drop,
        LinkFault::Corrupt,
        LinkFault::Duplicate,
        LinkFault::Delay,
        LinkFault::DropReceiver,
    ];

    /// The name used in `--link-faults` and in the report.
    pub fn name(self) -> &'static str {
        match self {
            LinkFault::Drop => "drop",
            LinkFault::Corrupt => "corrupt",
            LinkFault::Duplicate => "duplicate",
            LinkFault::Delay => "delay",
            LinkFault::DropReceiver => "drop-receiver",
        }
    }

    /// Whether the device must stay silent for a cycle with this fault.
    pub fn expects_answer(self) -> bool {
        matches!(self, LinkFault::Duplicate | LinkFault::DropReceiver)
    }
}

impl fmt::Display for LinkFault {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// The highest cycle a plan may name (a day at 1 kHz; larger is a typo).
pub const MAX_FAULT_CYCLE: u64 = 86_400_000;

/// The most cycles a plan may name in all, so that it stays small.
pub const MAX_FAULT_CYCLES: usize = 100_000;

/// Which fault, if any, each cycle gets.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct FaultPlan {
    by_cycle: BTreeMap<u64, LinkFault>,
}

/// A plan that cannot be read.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("--link-faults `{item}`: {why} (expected KIND@N or KIND@N-M, KIND one of drop, corrupt, duplicate, delay, drop-receiver)")]
pub struct FaultPlanError {
    /// The part of the plan at fault.
    pub item: String,
    /// What is wrong with it.
    pub why: &'static str,
}

impl FaultPlan {
    /// No faults.
    pub fn none() -> Self {
        Self::default()
    }

    /// Reads `KIND@CYCLES[,KIND@CYCLES...]` (see the module docs).
    ///
    /// # Errors
    /// An unknown kind, a cycle that is not a number or above
    /// [`MAX_FAULT_CYCLE`], a span that runs backwards, more than
    /// [`MAX_FAULT_CYCLES`] cycles in all, or a cycle named twice.
    pub fn parse(text: &str) -> Result<Self, FaultPlanError> {
        let mut plan = Self::default();
        for item in text.split(',').map(str::trim).filter(|s| !s.is_empty()) {
            let bad = |why| FaultPlanError {
                item: item.to_string(),
                why,
            };
            let (kind, cycles) = item.split_once('@').ok_or_else(|| bad("no `@`"))?;
            let kind = LinkFault::ALL
                .into_iter()
                .find(|k| k.name() == kind.trim())
                .ok_or_else(|| bad("unknown kind"))?;
            let (from, to) = match cycles.split_once('-') {
                Some((a, b)) => (cycle_number(a), cycle_number(b)),
                None => (cycle_number(cycles), cycle_number(cycles)),
            };
            let (from, to) = from
                .zip(to)
                .ok_or_else(|| bad("a cycle is not a whole number up to 86400000"))?;
            if from > to {
                return Err(bad("the span runs backwards"));
            }
            if plan.by_cycle.len() as u64 + (to - from + 1) > MAX_FAULT_CYCLES as u64 {
                return Err(bad("more than 100000 cycles in all"));
            }
            for c in from..=to {
                if plan.by_cycle.insert(c, kind).is_some() {
                    return Err(bad("a cycle is named twice"));
                }
            }
        }
        Ok(plan)
    }

    /// The fault of `cycle`, if any.
    pub fn at(&self, cycle: u64) -> Option<LinkFault> {
        self.by_cycle.get(&cycle).copied()
    }

    /// Whether the plan injects nothing.
    pub fn is_empty(&self) -> bool {
        self.by_cycle.is_empty()
    }
}

fn cycle_number(s: &str) -> Option<u64> {
    s.trim()
        .parse::<u64>()
        .ok()
        .filter(|c| *c <= MAX_FAULT_CYCLE)
}

/// One fault as it was injected, and what the device did.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct InjectedFault {
    /// The harness's cycle.
    pub cycle: u64,
    /// What was done to its frames.
    pub fault: LinkFault,
    /// The device's status code in that cycle's answer, `None` when no
    /// answer was expected (the actuators held the last command).
    pub device_status: Option<u8>,
}

/// The device's status codes by name (`io::link` status frame).
pub fn status_name(code: u8) -> &'static str {
    match code {
        0 => "acquiring",
        1 => "following",
        2 => "degraded",
        3 => "lost",
        4 => "end_of_path",
        5 => "standby",
        _ => "fault",
    }
}
