//! The device behind the link as the harness's [`Firmware`].

use std::time::{Duration, Instant};

use kappaline::io::blob::{encode as encode_blob, encoded_len, EncodeOptions};
use kappaline::io::link::frame::{
    encode, AckState, Inputs, Message, Status, MAX_CHUNK, MAX_ENCODED,
};
use kappaline::io::link::reader::FrameReader;
use kappaline::io::link::sequence::SequenceCheck;
use kappaline::io::link::LinkError;

use crate::controller::micros_of;
use crate::firmware::{Actuation, Cycle, Firmware, SupervisorStatus};
use crate::link::faults::{FaultPlan, InjectedFault, LinkFault};
use crate::link::nmea::NmeaWriter;
use crate::link::transport::Transport;
use crate::scenario::HostPath;
use crate::sim::Drive;

/// Why a run over the link stopped.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum LinkFailure {
    /// The device did not answer in time.
    #[error("link timeout: no {waiting_for} from the device within {ms} ms")]
    Timeout {
        /// What the harness waited for.
        waiting_for: &'static str,
        /// How long, milliseconds.
        ms: u128,
    },
    /// A frame failed its checks.
    #[error("bad frame from the device: {0}")]
    BadFrame(LinkError),
    /// A frame out of sequence (lost, repeated, reordered).
    #[error("frame out of sequence from the device: {0}")]
    Sequence(LinkError),
    /// The device said hello in the middle of a run: it restarted.
    #[error("the device reset during the run (hello frame at cycle {cycle})")]
    DeviceReset {
        /// The harness's cycle count when it came.
        cycle: u64,
    },
    /// The device refused the path.
    #[error("the device refused the path: {0}")]
    PathRefused(String),
    /// A frame the protocol does not allow here.
    #[error("unexpected frame from the device: {0}")]
    Unexpected(String),
    /// The stream itself failed.
    #[error("link I/O: {0}")]
    Io(String),
}

/// How long the device gets for a hello, a path acknowledgement and a
/// cycle answer.
#[derive(Debug, Clone, Copy)]
pub struct Timeouts {
    /// Hello after start.
    pub hello: Duration,
    /// Each path acknowledgement.
    pub ack: Duration,
    /// Each cycle's status.
    pub cycle: Duration,
}

impl Default for Timeouts {
    fn default() -> Self {
        Self {
            hello: Duration::from_secs(10),
            ack: Duration::from_secs(5),
            cycle: Duration::from_secs(5),
        }
    }
}

/// What the device reported about itself over a run.
#[derive(Debug, Clone, Default)]
pub struct DeviceLog {
    /// Cost of each cycle, core-clock ticks (40 instructions each on the
    /// MPS2 boards, 62.5 on the micro:bit, under
    /// QEMU `-icount shift=0` on the MPS2 boards).
    pub cost_ticks: Vec<u32>,
    /// Round-trip time of each cycle exchange, seconds (host clock).
    pub round_trip_s: Vec<f64>,
    /// Highest stack high-water mark reported, bytes.
    pub stack_high_water: u32,
    /// Each cycle's answer, for the faithfulness comparison.
    pub statuses: Vec<Status>,
    /// The largest blob the device takes (from its hello), bytes.
    pub max_blob: u32,
    /// Each fault injected on the link, in cycle order.
    pub injected: Vec<InjectedFault>,
    /// The harness's cycles that had no answer (a fault that silences
    /// it): the actuators held the device's last command.
    pub held: Vec<u64>,
    /// The device's status in its first answer and at every change:
    /// (the harness's cycle, the device's status code).
    pub status_changes: Vec<(u64, u8)>,
}

/// The blob the device is sent for `path` (default encoding: lengths to
/// 1 mm, curvatures and sharpness to their decimal units, see
/// `kappaline::io::blob`).
///
/// # Errors
/// If the encoder refuses the path.
pub fn path_blob(path: &HostPath) -> anyhow::Result<Vec<u8>> {
    let mut blob = vec![0u8; encoded_len(path.len(), false)];
    let n = encode_blob(path, &EncodeOptions::default(), &mut blob)
        .map_err(|e| anyhow::anyhow!("path blob: {e:?}"))?;
    blob.truncate(n);
    Ok(blob)
}

/// The device on the far side of `T`, driven one exchange per cycle.
pub struct LinkFirmware<T: Transport> {
    link: T,
    reader: FrameReader,
    seq_in: SequenceCheck,
    seq_out: u16,
    nmea: NmeaWriter,
    timeouts: Timeouts,
    speed_set: f64,
    /// Cycles answered.
    cycle: u64,
    /// Cycles run by the harness, answered or not.
    host_cycle: u64,
    faults: FaultPlan,
    /// Frames held back by a `delay` fault, sent after the next cycle's.
    delayed: Vec<Vec<u8>>,
    /// The device's last command, held while a cycle goes unanswered.
    last: Option<Actuation>,
    /// The device's reports.
    pub log: DeviceLog,
    /// The first failure; no exchange after it.
    pub failure: Option<LinkFailure>,
}

/// A frame's contents, owned (the reader's frame borrows its buffer).
enum Got {
    Ack(u32, AckState),
    Status(Status),
    Hello(u32),
    Other(String),
}

impl<T: Transport> LinkFirmware<T> {
    /// Waits for the device's hello, then uploads `path` in chunks, each
    /// acknowledged.
    ///
    /// # Errors
    /// A [`LinkFailure`], or a path the blob encoder refuses.
    pub fn connect(
        link: T,
        path: &HostPath,
        nmea: NmeaWriter,
        speed_set: f64,
        timeouts: Timeouts,
    ) -> anyhow::Result<Self> {
        let mut fw = Self {
            link,
            reader: FrameReader::new(),
            seq_in: SequenceCheck::expecting(0),
            seq_out: 0,
            nmea,
            timeouts,
            speed_set,
            cycle: 0,
            host_cycle: 0,
            faults: FaultPlan::none(),
            delayed: Vec::new(),
            last: None,
            log: DeviceLog::default(),
            failure: None,
        };
        match fw.receive("hello", timeouts.hello)? {
            Got::Hello(max_blob) => fw.log.max_blob = max_blob,
            Got::Ack(..) | Got::Status(_) => {
                return Err(LinkFailure::Unexpected("a frame before the hello".into()).into())
            }
            Got::Other(m) => {
                return Err(LinkFailure::Unexpected(format!("{m} before the hello")).into())
            }
        }
        fw.upload(path)?;
        Ok(fw)
    }

    /// Injects the faults of `plan` on the frames sent to the device.
    pub fn with_faults(mut self, plan: FaultPlan) -> Self {
        self.faults = plan;
        self
    }

    fn upload(&mut self, path: &HostPath) -> anyhow::Result<()> {
        let blob = path_blob(path)?;
        let n = blob.len();
        anyhow::ensure!(
            n <= self.log.max_blob as usize,
            "the path's blob is {n} bytes; the device takes at most {} (fewer segments, or a build with more)",
            self.log.max_blob
        );
        let total = n as u32;
        let mut offset = 0usize;
        for chunk in blob.chunks(MAX_CHUNK) {
            self.send(&Message::PathChunk {
                offset: offset as u32,
                total,
                bytes: chunk,
            })?;
            offset += chunk.len();
            match self.receive("path acknowledgement", self.timeouts.ack)? {
                Got::Ack(_, AckState::More) if offset < n => {}
                Got::Ack(_, AckState::Loaded) if offset == n => return Ok(()),
                Got::Ack(accepted, state) => {
                    return Err(LinkFailure::PathRefused(format!(
                        "{state:?} after {accepted} of {n} bytes"
                    ))
                    .into())
                }
                Got::Status(_) | Got::Hello(_) => {
                    return Err(LinkFailure::Unexpected("not a path acknowledgement".into()).into())
                }
                Got::Other(m) => {
                    return Err(LinkFailure::Unexpected(format!(
                        "{m} instead of a path acknowledgement"
                    ))
                    .into())
                }
            }
        }
        Err(LinkFailure::PathRefused(format!("no load after all {n} bytes")).into())
    }

    fn send(&mut self, m: &Message<'_>) -> Result<(), LinkFailure> {
        let frame = self.frame(m)?;
        self.write(&frame)
    }

    /// `m` as the next frame in sequence (the number is used up even if
    /// the frame is never sent).
    fn frame(&mut self, m: &Message<'_>) -> Result<Vec<u8>, LinkFailure> {
        let mut out = [0u8; MAX_ENCODED];
        let n = encode(self.seq_out, m, &mut out).map_err(LinkFailure::BadFrame)?;
        self.seq_out = self.seq_out.wrapping_add(1);
        Ok(out.get(..n).unwrap_or_default().to_vec())
    }

    fn write(&mut self, frame: &[u8]) -> Result<(), LinkFailure> {
        self.link
            .send(frame)
            .map_err(|e| LinkFailure::Io(e.to_string()))
    }

    fn write_all(&mut self, frames: &[Vec<u8>], times: usize) -> Result<(), LinkFailure> {
        for f in frames {
            for _ in 0..times {
                self.write(f)?;
            }
        }
        Ok(())
    }

    /// The next frame, within `timeout`.
    fn receive(&mut self, what: &'static str, timeout: Duration) -> Result<Got, LinkFailure> {
        let deadline = Instant::now() + timeout;
        let mut byte = [0u8; 1];
        loop {
            let n = self
                .link
                .recv(&mut byte, deadline)
                .map_err(|e| LinkFailure::Io(e.to_string()))?;
            if n == 0 {
                return Err(LinkFailure::Timeout {
                    waiting_for: what,
                    ms: timeout.as_millis(),
                });
            }
            let Some(frame) = self.reader.push(byte[0]) else {
                continue;
            };
            let frame = frame.map_err(LinkFailure::BadFrame)?;
            if let Message::Hello { max_blob, .. } = frame.message {
                if self.cycle > 0 || self.log.max_blob > 0 {
                    return Err(LinkFailure::DeviceReset { cycle: self.cycle });
                }
                self.seq_in
                    .check(frame.seq)
                    .map_err(LinkFailure::Sequence)?;
                return Ok(Got::Hello(max_blob));
            }
            self.seq_in
                .check(frame.seq)
                .map_err(LinkFailure::Sequence)?;
            return Ok(match frame.message {
                Message::PathAck { accepted, state } => Got::Ack(accepted, state),
                Message::Status(s) => Got::Status(s),
                other => Got::Other(format!("{other:?}")),
            });
        }
    }

    /// One cycle's frames through `fault`; the device's answer, or `None`
    /// when the fault leaves the device nothing to answer.
    fn exchange(
        &mut self,
        input: &Cycle,
        fault: Option<LinkFault>,
    ) -> Result<Option<Status>, LinkFailure> {
        let mut receiver = Vec::new();
        if let Some(m) = input.measurement {
            let mut bytes = Vec::new();
            self.nmea.epoch(&m, &mut bytes);
            for chunk in bytes.chunks(MAX_CHUNK) {
                receiver.push(self.frame(&Message::Receiver(chunk))?);
            }
        }
        let cycle = self.host_cycle as u32;
        let mut cycle_frame = self.frame(&Message::Cycle {
            cycle,
            time_us: micros_of(input.now).0,
            inputs: Inputs {
                engage: true,
                manual_override: false,
            },
        })?;
        let late = std::mem::take(&mut self.delayed);
        let start = Instant::now();
        match fault {
            None => {
                self.write_all(&receiver, 1)?;
                self.write(&cycle_frame)?;
            }
            Some(LinkFault::Drop) => {}
            Some(LinkFault::Corrupt) => {
                self.write_all(&receiver, 1)?;
                corrupt(&mut cycle_frame);
                self.write(&cycle_frame)?;
            }
            Some(LinkFault::Duplicate) => {
                receiver.push(cycle_frame);
                self.write_all(&receiver, 2)?;
            }
            Some(LinkFault::Delay) => {
                receiver.push(cycle_frame);
                self.delayed = receiver;
            }
            Some(LinkFault::DropReceiver) => self.write(&cycle_frame)?,
        }
        // Frames held back from the cycle before arrive after this
        // cycle's: out of order.
        self.write_all(&late, 1)?;
        if fault.is_some_and(|f| !f.expects_answer()) {
            return Ok(None);
        }
        match self.receive("cycle status", self.timeouts.cycle)? {
            Got::Status(s) if s.cycle == cycle => {
                self.log.round_trip_s.push(start.elapsed().as_secs_f64());
                Ok(Some(s))
            }
            Got::Status(s) => Err(LinkFailure::Unexpected(format!(
                "status of cycle {} for cycle {cycle}",
                s.cycle
            ))),
            Got::Ack(..) | Got::Hello(_) => {
                Err(LinkFailure::Unexpected("not a cycle status".into()))
            }
            Got::Other(m) => Err(LinkFailure::Unexpected(format!(
                "{m} instead of a cycle status"
            ))),
        }
    }
}

/// Changes one byte in the middle of `frame` (never to the delimiter 0),
/// so that its checks fail.
fn corrupt(frame: &mut [u8]) {
    let mid = frame.len().saturating_sub(1) / 2;
    if let Some(b) = frame.get_mut(mid) {
        *b = if *b == 0x20 { 0x60 } else { *b ^ 0x20 };
    }
}

/// The harness's status for the device's code (see `io::link`).
fn status_of_code(code: u8) -> SupervisorStatus {
    match code {
        0 => SupervisorStatus::Acquiring,
        1 => SupervisorStatus::Following,
        2 => SupervisorStatus::Degraded,
        3 => SupervisorStatus::Lost,
        4 => SupervisorStatus::EndOfPath,
        // Standby has no harness status of its own: the machine is not
        // steered by the controller, as in a fault.
        _ => SupervisorStatus::Fault,
    }
}

/// Neutral steering, stopped: what the harness applies once the link
/// has failed.
fn stopped() -> Actuation {
    Actuation {
        drive: Drive::Steer {
            angle: 0.0,
            speed: 0.0,
        },
        status: SupervisorStatus::Fault,
        curvature: 0.0,
        steer_angle: 0.0,
        speed_limit: 0.0,
        cross_track_estimate: None,
    }
}

impl<T: Transport> Firmware for LinkFirmware<T> {
    fn halted(&self) -> Option<String> {
        self.failure.as_ref().map(ToString::to_string)
    }

    fn cycle(&mut self, input: &Cycle) -> Actuation {
        if self.failure.is_some() {
            return stopped();
        }
        let host_cycle = self.host_cycle;
        let fault = self.faults.at(host_cycle);
        let answer = self.exchange(input, fault);
        self.host_cycle += 1;
        if let (Some(fault), Ok(answer)) = (fault, &answer) {
            self.log.injected.push(InjectedFault {
                cycle: host_cycle,
                fault,
                device_status: answer.map(|s| s.status),
            });
        }
        match answer {
            Ok(None) => {
                self.log.held.push(host_cycle);
                self.last.unwrap_or_else(stopped)
            }
            Ok(Some(s)) => {
                self.cycle += 1;
                if self.log.status_changes.last().map(|c| c.1) != Some(s.status) {
                    self.log.status_changes.push((host_cycle, s.status));
                }
                self.log.cost_ticks.push(s.cost);
                self.log.stack_high_water = self.log.stack_high_water.max(s.stack_high_water);
                self.log.statuses.push(s);
                let steer = f64::from(s.steer_angle);
                let actuation = Actuation {
                    drive: Drive::Steer {
                        angle: steer,
                        speed: self.speed_set.min(f64::from(s.speed_limit)),
                    },
                    status: status_of_code(s.status),
                    curvature: f64::from(s.curvature),
                    steer_angle: steer,
                    speed_limit: f64::from(s.speed_limit),
                    cross_track_estimate: (!s.cross_track.is_nan())
                        .then_some(f64::from(s.cross_track)),
                };
                self.last = Some(actuation);
                actuation
            }
            Err(e) => {
                self.failure = Some(e);
                stopped()
            }
        }
    }
}

/// Minimum, median and maximum of `v` (`None` when empty).
pub fn spread<V: Copy + PartialOrd>(v: &[V]) -> Option<(V, V, V)> {
    let mut s = v.to_vec();
    s.sort_by(|a, b| a.partial_cmp(b).unwrap_or(std::cmp::Ordering::Equal));
    Some((*s.first()?, *s.get(s.len() / 2)?, *s.last()?))
}

/// A text histogram of `ticks` in `bins` equal bins, labelled in
/// instructions at `per_tick` instructions per tick
/// ([`crate::link::transport::Board::instructions_per_tick`]).
pub fn cost_histogram(ticks: &[u32], bins: usize, per_tick: f64) -> String {
    let Some((lo, _, hi)) = spread(ticks) else {
        return "no cycles\n".into();
    };
    let bins = bins.max(1);
    let width = ((hi - lo) as usize / bins).max(1);
    let mut counts = vec![0usize; bins];
    for &t in ticks {
        let i = ((t - lo) as usize / width).min(bins - 1);
        if let Some(c) = counts.get_mut(i) {
            *c += 1;
        }
    }
    let top = counts.iter().copied().max().unwrap_or(1).max(1);
    let mut out = String::new();
    for (i, c) in counts.iter().enumerate() {
        let from = ((lo as usize + i * width) as f64 * per_tick).round();
        let bar = "#".repeat((c * 50).div_ceil(top));
        out.push_str(&format!("{from:>9} instr  {c:>6}  {bar}\n"));
    }
    out
}
