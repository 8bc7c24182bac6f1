//! The host side of the link never hangs: a silent device, a device that
//! restarts, a corrupted answer and an answer out of sequence each stop
//! the run with their own `LinkFailure`, and the run keeps the cycles it
//! had. The device here is a scripted stand-in speaking the link frames
//! of `kappaline::io::link` (the emulated board is exercised in CI by
//! `kappaline-hil run hil/scenarios/lockstep.toml --link qemu`).

use std::collections::VecDeque;
use std::io;
use std::time::{Duration, Instant};

use kappaline::io::link::frame::{encode, AckState, Message, Status, MAX_ENCODED};
use kappaline::io::link::reader::FrameReader;
use kappaline::io::link::LinkError;
use kappaline_hil::closed_loop::RunOptions;
use kappaline_hil::link::device::{LinkFailure, LinkFirmware, Timeouts};
use kappaline_hil::link::nmea::NmeaWriter;
use kappaline_hil::link::transport::Transport;

/// What the stand-in does at its `n`-th cycle.
#[derive(Clone, Copy, PartialEq)]
enum Fault {
    None,
    Silent,
    Reset,
    Corrupt,
    Repeat,
}

struct Scripted {
    reader: FrameReader,
    out: VecDeque<u8>,
    seq: u16,
    cycles: u32,
    fault_at: u32,
    fault: Fault,
    last: Vec<u8>,
}

impl Scripted {
    fn new(fault_at: u32, fault: Fault) -> Self {
        let mut s = Self {
            reader: FrameReader::new(),
            out: VecDeque::new(),
            seq: 0,
            cycles: 0,
            fault_at,
            fault,
            last: Vec::new(),
        };
        s.reply(&Message::Hello {
            version: 1,
            max_blob: 4096,
        });
        s
    }

    fn frame(&mut self, m: &Message<'_>) -> Vec<u8> {
        let mut buf = [0u8; MAX_ENCODED];
        let n = encode(self.seq, m, &mut buf).unwrap();
        self.seq = self.seq.wrapping_add(1);
        buf[..n].to_vec()
    }

    fn reply(&mut self, m: &Message<'_>) {
        let f = self.frame(m);
        self.out.extend(f.iter().copied());
        self.last = f;
    }
}

fn status(cycle: u32) -> Status {
    Status {
        cycle,
        status: 1,
        steer_angle: 0.0,
        curvature: 0.0,
        speed_limit: 2.0,
        cross_track: 0.0,
        cost: 100,
        stack_high_water: 4000,
    }
}

impl Transport for Scripted {
    fn send(&mut self, bytes: &[u8]) -> io::Result<()> {
        for &b in bytes {
            let got = match self.reader.push(b) {
                Some(Ok(f)) => Some(f.message),
                _ => None,
            };
            let got = got.map(|m| match m {
                Message::PathChunk {
                    offset,
                    total,
                    bytes,
                } => Some((offset + bytes.len() as u32, total, true)),
                Message::Cycle { cycle, .. } => Some((cycle, 0, false)),
                _ => None,
            });
            match got.flatten() {
                Some((end, total, true)) => {
                    let state = if end >= total {
                        AckState::Loaded
                    } else {
                        AckState::More
                    };
                    self.reply(&Message::PathAck {
                        accepted: end,
                        state,
                    });
                }
                Some((cycle, _, false)) => {
                    self.cycles += 1;
                    let fault = if self.cycles == self.fault_at {
                        self.fault
                    } else {
                        Fault::None
                    };
                    match fault {
                        Fault::None => self.reply(&Message::Status(status(cycle))),
                        Fault::Silent => self.fault_at = self.cycles + 1, // silent from here on
                        Fault::Reset => {
                            self.seq = 0;
                            self.reply(&Message::Hello {
                                version: 1,
                                max_blob: 4096,
                            });
                        }
                        Fault::Corrupt => {
                            let mut f = self.frame(&Message::Status(status(cycle)));
                            f[3] ^= 0x20;
                            self.out.extend(f);
                        }
                        Fault::Repeat => {
                            let again = self.last.clone();
                            self.out.extend(again);
                        }
                    }
                }
                None => {}
            }
        }
        Ok(())
    }

    fn recv(&mut self, buf: &mut [u8], deadline: Instant) -> io::Result<usize> {
        if self.fault == Fault::Silent && self.cycles >= self.fault_at && self.out.is_empty() {
            std::thread::sleep(deadline.saturating_duration_since(Instant::now()));
            return Ok(0);
        }
        let mut n = 0;
        while n < buf.len() {
            let Some(b) = self.out.pop_front() else { break };
            buf[n] = b;
            n += 1;
        }
        if n == 0 {
            std::thread::sleep(deadline.saturating_duration_since(Instant::now()));
        }
        Ok(n)
    }
}

fn short() -> Timeouts {
    Timeouts {
        hello: Duration::from_millis(200),
        ack: Duration::from_millis(200),
        cycle: Duration::from_millis(200),
    }
}

fn run_with(fault_at: u32, fault: Fault) -> (usize, Option<LinkFailure>, f64) {
    let s = kappaline_hil::scenario::load("hil/scenarios/lockstep.toml", &[])
        .or_else(|_| kappaline_hil::scenario::load("scenarios/lockstep.toml", &[]))
        .unwrap();
    let mut fw = LinkFirmware::connect(
        Scripted::new(fault_at, fault),
        &s.path,
        NmeaWriter::demo_firmware().unwrap(),
        2.0,
        short(),
    )
    .unwrap();
    let wall = Instant::now();
    let run = kappaline_hil::closed_loop::run(&s, &mut fw, RunOptions::default(), None);
    assert!(run.sim_time_s > 0.0);
    (
        fw.log.statuses.len(),
        fw.failure,
        wall.elapsed().as_secs_f64(),
    )
}

#[test]
fn a_healthy_stand_in_answers_every_cycle() {
    let (cycles, failure, _) = run_with(u32::MAX, Fault::None);
    assert_eq!(failure, None);
    assert_eq!(cycles, 401, "20 s at 20 Hz, both ends counted");
}

#[test]
fn a_silent_device_stops_the_run_within_its_timeout() {
    let (cycles, failure, secs) = run_with(30, Fault::Silent);
    assert_eq!(cycles, 29, "the cycles before it are kept");
    assert_eq!(
        failure,
        Some(LinkFailure::Timeout {
            waiting_for: "cycle status",
            ms: 200
        })
    );
    assert!(secs < 5.0, "bounded: {secs} s");
}

#[test]
fn a_device_reset_is_reported_as_such() {
    let (cycles, failure, _) = run_with(10, Fault::Reset);
    assert_eq!(cycles, 9);
    assert_eq!(failure, Some(LinkFailure::DeviceReset { cycle: 9 }));
}

#[test]
fn a_corrupted_answer_is_a_bad_frame() {
    let (cycles, failure, _) = run_with(5, Fault::Corrupt);
    assert_eq!(cycles, 4);
    assert!(
        matches!(failure, Some(LinkFailure::BadFrame(LinkError::Crc { .. }))),
        "{failure:?}"
    );
}

#[test]
fn a_repeated_answer_is_out_of_sequence() {
    let (cycles, failure, _) = run_with(7, Fault::Repeat);
    assert_eq!(cycles, 6);
    assert!(
        matches!(
            failure,
            Some(LinkFailure::Sequence(LinkError::Repeated { .. }))
        ),
        "{failure:?}"
    );
}

#[test]
fn a_device_that_never_says_hello_is_a_timeout() {
    let mut dead = Scripted::new(0, Fault::Silent);
    dead.out.clear();
    let s = kappaline_hil::scenario::load("hil/scenarios/lockstep.toml", &[])
        .or_else(|_| kappaline_hil::scenario::load("scenarios/lockstep.toml", &[]))
        .unwrap();
    let wall = Instant::now();
    let err = LinkFirmware::connect(
        dead,
        &s.path,
        NmeaWriter::demo_firmware().unwrap(),
        2.0,
        short(),
    )
    .err()
    .unwrap();
    assert!(
        err.to_string()
            .contains("no hello from the device within 200 ms"),
        "{err}"
    );
    assert!(wall.elapsed() < Duration::from_secs(5));
}
