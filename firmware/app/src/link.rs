//! Link mode (feature `link`): UART0 carries link frames
//! (`kappaline::io::link`) instead of raw receiver bytes, and the host
//! drives the control cycle in lockstep instead of the timer.
//!
//! * After reset the device sends a hello frame.
//! * Path chunk frames are fed to the blob decoder in order; each is
//!   acknowledged (more, loaded, refused, out of order). A chunk at
//!   offset 0 starts a new upload; the path in use stays until the new
//!   one is complete and its CRC matched.
//! * Receiver frames carry the receiver's bytes (NMEA 0183 sentences):
//!   they go through the same `Receiver` (reader and epoch assembler) as
//!   in the interrupt-driven build, stamped with the time of the coming
//!   cycle.
//! * A cycle frame sets the operator inputs and the clock, runs one
//!   control cycle and answers with a status frame: the command, the
//!   cycle's cost in SysTick ticks (the counter runs free at the core
//!   clock; under QEMU `-icount shift=0` one tick is 40 instructions) and
//!   the stack high-water mark.
//!
//! Frames that fail their checks (COBS, CRC, version, payload) are
//! dropped, as are repeated and reordered ones: the host sees no answer
//! and stops on its timeout. A loss (a sequence number skipped) is taken
//! as it comes.

use cortex_m::peripheral::SYST;
use kappaline::io::blob::{Decoder, Progress};
use kappaline::io::link::frame::{encode, AckState, Inputs, Message, Status, MAX_ENCODED};
use kappaline::io::link::reader::FrameReader;
use kappaline::io::link::sequence::SequenceCheck;
use kappaline::io::link::LinkError;
use kappaline::{GuidanceStatus, Micros};

use crate::app::{App, PATH_SEGMENTS};
use crate::board::active::{self as hw, PanelPin, ReportedPwm, Uart};
use crate::receiver::Receiver;

/// The controller in link mode.
pub type LinkApp = App<ReportedPwm, PanelPin<'static>, PanelPin<'static>>;

/// The SysTick counter is 24 bits wide.
const SYST_MASK: u32 = 0x00FF_FFFF;

/// The largest blob this build takes: header, origin, every segment, CRC.
const MAX_BLOB: u32 = (16 + 20 + 25 * PATH_SEGMENTS + 4) as u32;

/// The status code on the link (the host maps it back).
fn status_code(s: GuidanceStatus) -> u8 {
    match s {
        GuidanceStatus::Acquiring => 0,
        GuidanceStatus::Following => 1,
        GuidanceStatus::Degraded => 2,
        GuidanceStatus::Lost => 3,
        GuidanceStatus::EndOfPath => 4,
        GuidanceStatus::Standby => 5,
        _ => 6,
    }
}

/// Starts SysTick as a free-running down-counter at the core clock, no
/// interrupt.
pub fn start_counter(mut syst: SYST) {
    use cortex_m::peripheral::syst::SystClkSource;
    syst.set_clock_source(SystClkSource::Core);
    syst.set_reload(SYST_MASK);
    syst.clear_current();
    syst.disable_interrupt();
    syst.enable_counter();
}

/// The device state of the link mode.
pub struct Device<F: FnMut(kappaline::Path<f32, PATH_SEGMENTS>) -> Option<LinkApp>> {
    uart: Uart,
    seq_out: u16,
    seq_in: SequenceCheck,
    decoder: Option<Decoder<f32, PATH_SEGMENTS>>,
    accepted: u32,
    app: Option<LinkApp>,
    build: F,
    receiver: Receiver,
    next_time: Micros,
    period_us: u32,
    /// Frames dropped (bad or out of order), for a debugger.
    pub dropped: u32,
}

impl<F: FnMut(kappaline::Path<f32, PATH_SEGMENTS>) -> Option<LinkApp>> Device<F> {
    /// The link device on `uart`, building its controller with `build`
    /// once a path has arrived.
    pub fn new(uart: Uart, receiver: Receiver, period_us: u32, build: F) -> Self {
        Self {
            uart,
            seq_out: 0,
            seq_in: SequenceCheck::expecting(0),
            decoder: None,
            accepted: 0,
            app: None,
            build,
            receiver,
            next_time: Micros(0),
            period_us,
            dropped: 0,
        }
    }

    fn send(&mut self, message: &Message<'_>) {
        let mut out = [0u8; MAX_ENCODED];
        if let Ok(n) = encode(self.seq_out, message, &mut out) {
            let _ = embedded_io::Write::write_all(&mut self.uart, out.get(..n).unwrap_or(&[]));
        }
        self.seq_out = self.seq_out.wrapping_add(1);
    }

    /// Serves the link for ever.
    pub fn run(mut self) -> ! {
        let mut reader = FrameReader::new();
        self.send(&Message::Hello {
            version: u32::from(kappaline::io::link::frame::VERSION),
            max_blob: MAX_BLOB,
        });
        loop {
            let Some(b) = self.uart.try_read() else {
                continue;
            };
            match reader.push(b) {
                None => {}
                Some(Err(_)) => self.dropped = self.dropped.wrapping_add(1),
                Some(Ok(frame)) => match self.seq_in.check(frame.seq) {
                    Ok(()) | Err(LinkError::Lost { .. }) => self.handle(&frame.message),
                    Err(_) => self.dropped = self.dropped.wrapping_add(1),
                },
            }
        }
    }

    fn handle(&mut self, message: &Message<'_>) {
        match *message {
            Message::PathChunk {
                offset,
                total,
                bytes,
            } => self.on_chunk(offset, total, bytes),
            Message::Receiver(bytes) => {
                for &b in bytes {
                    self.receiver.on_byte(b, self.next_time);
                }
            }
            Message::Cycle {
                cycle,
                time_us,
                inputs,
            } => self.on_cycle(cycle, time_us, inputs),
            _ => self.dropped = self.dropped.wrapping_add(1),
        }
    }

    fn on_chunk(&mut self, offset: u32, total: u32, bytes: &[u8]) {
        if offset == 0 {
            self.decoder = Some(Decoder::new());
            self.accepted = 0;
        }
        let state = match self.decoder.as_mut() {
            _ if offset != self.accepted || total > MAX_BLOB => AckState::OutOfOrder,
            None => AckState::OutOfOrder,
            Some(d) => match d.feed(bytes) {
                Ok(Progress::NeedMore) => {
                    self.accepted = self.accepted.wrapping_add(bytes.len() as u32);
                    AckState::More
                }
                Ok(Progress::Done { used }) => {
                    self.accepted = self.accepted.wrapping_add(used as u32);
                    self.install()
                }
                Err(_) => {
                    self.decoder = None;
                    AckState::Refused
                }
            },
        };
        let accepted = self.accepted;
        self.send(&Message::PathAck { accepted, state });
    }

    fn install(&mut self) -> AckState {
        let Some(d) = self.decoder.take() else {
            return AckState::Refused;
        };
        match d.finish().ok().and_then(|(path, _)| (self.build)(path)) {
            Some(app) => {
                self.app = Some(app);
                AckState::Loaded
            }
            None => AckState::Refused,
        }
    }

    fn on_cycle(&mut self, cycle: u32, time_us: u32, inputs: Inputs) {
        critical_section::with(|cs| {
            hw::ENGAGE.borrow(cs).set(inputs.engage);
            hw::OVERRIDE.borrow(cs).set(inputs.manual_override);
        });
        let now = Micros(time_us);
        self.next_time = Micros(time_us.wrapping_add(self.period_us));
        let Some(app) = self.app.as_mut() else {
            // No path yet: a status of its own, no command.
            let status = Status {
                cycle,
                status: 6,
                steer_angle: 0.0,
                curvature: 0.0,
                speed_limit: 0.0,
                cross_track: f32::NAN,
                cost: 0,
                stack_high_water: hw::stack_used() as u32,
            };
            self.send(&Message::Status(status));
            return;
        };
        let fix = self.receiver.take();
        let before = SYST::get_current();
        let report = core::hint::black_box(app.cycle(now, core::hint::black_box(fix)));
        let after = SYST::get_current();
        let cost = before.wrapping_sub(after) & SYST_MASK;
        let c = &report.command;
        let status = Status {
            cycle,
            status: status_code(c.status),
            steer_angle: c.steer_angle,
            curvature: c.curvature,
            speed_limit: c.speed_limit,
            cross_track: c.tracking.map_or(f32::NAN, |t| t.cross_track),
            cost,
            stack_high_water: hw::stack_used() as u32,
        };
        self.send(&Message::Status(status));
    }
}
