//! The host side of the link never hangs: a silent device, a device that
//! restarts, a corrupted answer and an answer out of sequence each stop
//! the run with their own `LinkFailure`, and the run keeps the cycles it
//! had. Faults injected by the harness (`--link-faults`) reach the device
//! as planned: a dropped, corrupted or delayed cycle goes unanswered and
//! the actuators hold, a duplicated one is answered once, and left-out
//! receiver bytes show in the device's status. The device here is a scripted stand-in speaking the link frames
//! of `kappaline::io::link` (the emulated board is exercised in CI by
//! `kappaline-hil run hil/scenarios/lockstep.toml --link qemu`).

use std::cell::RefCell;
use std::collections::VecDeque;
use std::io;
use std::rc::Rc;
use std::time::{Duration, Instant};

use kappaline::io::link::frame::{encode, AckState, Message, Status, MAX_ENCODED};
use kappaline::io::link::reader::FrameReader;
use kappaline::io::link::sequence::SequenceCheck;
use kappaline::io::link::LinkError;
use kappaline_hil::closed_loop::RunOptions;
use kappaline_hil::link::device::{LinkFailure, LinkFirmware, Timeouts};
use kappaline_hil::link::faults::{FaultPlan, InjectedFault, LinkFault};
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

/// What the stand-in saw, shared with the test.
#[derive(Default)]
struct Seen {
    /// Frames that failed their checks (COBS, CRC, ...).
    bad: u32,
    /// Frames dropped as repeated or reordered.
    out_of_order: u32,
    /// Sequence gaps taken as losses.
    lost: u32,
    /// Frames taken (in sequence, or after a loss).
    taken: u32,
}

struct Scripted {
    reader: FrameReader,
    /// `None`: a faulty stand-in that answers every frame it decodes.
    seq_in: Option<SequenceCheck>,
    seen: Rc<RefCell<Seen>>,
    /// Cycles since the last receiver frame (the stand-in's supervisor:
    /// degraded after more than 2).
    without_fix: u32,
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
            seq_in: Some(SequenceCheck::expecting(0)),
            seen: Rc::default(),
            without_fix: 0,
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

fn status(cycle: u32, code: u8) -> Status {
    Status {
        cycle,
        status: code,
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
                Some(Ok(f)) => match self.seq_in.as_mut().map(|s| s.check(f.seq)) {
                    None | Some(Ok(())) => {
                        self.seen.borrow_mut().taken += 1;
                        Some(f.message)
                    }
                    Some(Err(LinkError::Lost { .. })) => {
                        let mut seen = self.seen.borrow_mut();
                        seen.lost += 1;
                        seen.taken += 1;
                        Some(f.message)
                    }
                    Some(Err(_)) => {
                        self.seen.borrow_mut().out_of_order += 1;
                        None
                    }
                },
                Some(Err(_)) => {
                    self.seen.borrow_mut().bad += 1;
                    None
                }
                None => None,
            };
            if matches!(got, Some(Message::Receiver(_))) {
                self.without_fix = 0;
            }
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
                    self.without_fix += 1;
                    let code = if self.without_fix > 2 { 2 } else { 1 };
                    let fault = if self.cycles == self.fault_at {
                        self.fault
                    } else {
                        Fault::None
                    };
                    match fault {
                        Fault::None => self.reply(&Message::Status(status(cycle, code))),
                        Fault::Silent => self.fault_at = self.cycles + 1, // silent from here on
                        Fault::Reset => {
                            self.seq = 0;
                            self.reply(&Message::Hello {
                                version: 1,
                                max_blob: 4096,
                            });
                        }
                        Fault::Corrupt => {
                            let mut f = self.frame(&Message::Status(status(cycle, code)));
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
    let (fw, _, secs) = run_planned(Scripted::new(fault_at, fault), FaultPlan::none());
    (fw.log.statuses.len(), fw.failure, secs)
}

/// A run of the lockstep scenario against `device` with `plan` injected:
/// the harness's side, what the device saw, the wall time in seconds.
fn run_planned(
    device: Scripted,
    plan: FaultPlan,
) -> (LinkFirmware<Scripted>, Rc<RefCell<Seen>>, f64) {
    let s = kappaline_hil::scenario::load("hil/scenarios/lockstep.toml", &[])
        .or_else(|_| kappaline_hil::scenario::load("scenarios/lockstep.toml", &[]))
        .unwrap();
    let seen = device.seen.clone();
    let mut fw = LinkFirmware::connect(
        device,
        &s.path,
        NmeaWriter::demo_firmware().unwrap(),
        2.0,
        short(),
    )
    .unwrap()
    .with_faults(plan);
    let wall = Instant::now();
    let run = kappaline_hil::closed_loop::run(&s, &mut fw, RunOptions::default(), None);
    assert!(run.sim_time_s > 0.0);
    (fw, seen, wall.elapsed().as_secs_f64())
}

fn healthy() -> Scripted {
    Scripted::new(u32::MAX, Fault::None)
}

fn plan(text: &str) -> FaultPlan {
    FaultPlan::parse(text).unwrap()
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
fn the_run_stops_at_a_link_failure_and_keeps_what_it_had() {
    let s = kappaline_hil::scenario::load("hil/scenarios/lockstep.toml", &[])
        .or_else(|_| kappaline_hil::scenario::load("scenarios/lockstep.toml", &[]))
        .unwrap();
    let mut fw = LinkFirmware::connect(
        Scripted::new(30, Fault::Silent),
        &s.path,
        NmeaWriter::demo_firmware().unwrap(),
        2.0,
        short(),
    )
    .unwrap();
    let run = kappaline_hil::closed_loop::run(&s, &mut fw, RunOptions::default(), None);
    // Cycle 30 (counted from 0) goes unanswered: it runs at 30 / 20 Hz =
    // 1.5 s of the scenario's 20 s, and the simulation ends there.
    assert_eq!(fw.log.statuses.len(), 29, "the cycles answered are kept");
    assert!(
        run.sim_time_s <= 1.5 + 1e-9,
        "ran on to {} s",
        run.sim_time_s
    );
    assert!(run.sim_time_s > 1.4, "stopped at {} s", run.sim_time_s);
    let why = run.stopped_early.expect("the run says why it stopped");
    assert!(
        why.contains("stopped answering") && why.contains("cycle status"),
        "{why}"
    );
    assert!(!run.trace.is_empty(), "the trace until then is kept");
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

// Link fault injection (`--link-faults`). What the device must do with
// each frame follows the sequence rules of `kappaline::io::link::sequence`
// (a gap is a loss and is taken, a repeated or older number is dropped)
// and CRC-32's guarantee that every error confined to 32 consecutive bits
// is detected (Koopman, "32-Bit Cyclic Redundancy Codes for Internet
// Applications", DSN 2002, burst-error property of any degree-32 CRC).

#[test]
fn a_plan_reads_single_cycles_and_spans() {
    let p = plan("drop@3, corrupt@5,duplicate@7,delay@9,drop-receiver@11-13");
    let got: Vec<_> = (0..15).map(|c| p.at(c)).collect();
    use LinkFault::*;
    assert_eq!(
        got,
        [
            None,
            None,
            None,
            Some(Drop),
            None,
            Some(Corrupt),
            None,
            Some(Duplicate),
            None,
            Some(Delay),
            None,
            Some(DropReceiver),
            Some(DropReceiver),
            Some(DropReceiver),
            None
        ]
    );
    assert!(FaultPlan::parse("").unwrap().is_empty());
}

#[test]
fn a_bad_plan_is_a_typed_error_naming_the_item() {
    for (text, why) in [
        ("drop", "no `@`"),
        ("lose@3", "unknown kind"),
        ("drop@x", "a cycle is not a whole number up to 86400000"),
        ("drop@-1", "a cycle is not a whole number up to 86400000"),
        (
            "drop@99999999999",
            "a cycle is not a whole number up to 86400000",
        ),
        ("drop@9-3", "the span runs backwards"),
        ("drop@3,corrupt@1-4", "a cycle is named twice"),
        ("drop@0-200000", "more than 100000 cycles in all"),
    ] {
        let e = FaultPlan::parse(text).unwrap_err();
        assert_eq!(e.why, why, "{text}");
        assert!(e.to_string().contains("expected KIND@N"), "{e}");
    }
}

#[test]
fn a_dropped_cycle_is_held_and_the_device_takes_the_gap_as_a_loss() {
    let (fw, seen, _) = run_planned(healthy(), plan("drop@40"));
    assert_eq!(fw.failure, None);
    assert_eq!(fw.log.held, [40]);
    assert_eq!(
        fw.log.injected,
        [InjectedFault {
            cycle: 40,
            fault: LinkFault::Drop,
            device_status: None
        }]
    );
    assert_eq!(fw.log.statuses.len(), 400, "401 cycles, one unanswered");
    assert!(fw.log.statuses.iter().all(|s| s.cycle != 40));
    assert_eq!(seen.borrow().lost, 1);
}

#[test]
fn a_corrupted_cycle_frame_fails_its_checks_on_the_device() {
    let (fw, seen, _) = run_planned(healthy(), plan("corrupt@60"));
    assert_eq!(fw.failure, None);
    assert_eq!(fw.log.held, [60]);
    let seen = seen.borrow();
    assert_eq!(seen.bad, 1, "one bad frame");
    assert_eq!(seen.lost, 1, "its sequence number is missed next cycle");
}

#[test]
fn a_duplicated_cycle_is_answered_once() {
    let (_, clean, _) = run_planned(healthy(), FaultPlan::none());
    let (fw, seen, _) = run_planned(healthy(), plan("duplicate@80-81"));
    assert_eq!(fw.failure, None);
    assert!(fw.log.held.is_empty());
    assert_eq!(fw.log.statuses.len(), 401);
    // Every repeat dropped, none taken: the same frames taken as in a
    // clean run, and at least the two cycle frames repeated.
    let (seen, clean) = (seen.borrow(), clean.borrow());
    assert_eq!(seen.taken, clean.taken);
    assert!(seen.out_of_order >= 2, "{}", seen.out_of_order);
    assert_eq!(seen.lost, 0);
    assert!(fw
        .log
        .injected
        .iter()
        .all(|f| f.fault == LinkFault::Duplicate && f.device_status == Some(1)));
}

#[test]
fn a_delayed_cycle_arrives_out_of_order_and_is_dropped() {
    let (fw, seen, _) = run_planned(healthy(), plan("delay@100"));
    assert_eq!(fw.failure, None);
    assert_eq!(fw.log.held, [100]);
    let seen = seen.borrow();
    assert_eq!(seen.lost, 1, "cycle 101's frames skip 100's numbers");
    assert!(seen.out_of_order >= 1, "100's frames come after 101's");
    assert_eq!(fw.log.statuses.len(), 400);
}

#[test]
fn receiver_bytes_left_out_show_in_the_device_status() {
    let (fw, _, _) = run_planned(healthy(), plan("drop-receiver@120-129"));
    assert_eq!(fw.failure, None);
    assert!(fw.log.held.is_empty(), "the cycle frames go through");
    // The stand-in degrades at its third cycle without a fix. Epochs come
    // at 10 Hz to 20 Hz cycles, so the last one before the gap came with
    // cycle 118 or 119: degraded from 120 or 121 through 129, back once
    // the first epoch after the gap arrives (cycle 130 or 131).
    let degraded: Vec<u64> = fw
        .log
        .injected
        .iter()
        .filter(|f| f.device_status == Some(2))
        .map(|f| f.cycle)
        .collect();
    assert!(
        (9..=10).contains(&degraded.len()) && degraded.last() == Some(&129),
        "{degraded:?}"
    );
    let changes = &fw.log.status_changes;
    assert_eq!(changes.len(), 3, "{changes:?}");
    assert_eq!(changes[0], (0, 1));
    assert!(
        changes[1] == (120, 2) || changes[1] == (121, 2),
        "{changes:?}"
    );
    assert!(
        changes[2] == (130, 1) || changes[2] == (131, 1),
        "{changes:?}"
    );
}

#[test]
fn a_device_that_answers_a_frame_it_should_drop_stops_the_run() {
    // A device without the sequence check answers the repeated cycle frame
    // too: its second answer is out of lockstep at the next cycle.
    let mut device = healthy();
    device.seq_in = None;
    let (fw, _, _) = run_planned(device, plan("duplicate@50"));
    assert_eq!(
        fw.failure,
        Some(LinkFailure::Unexpected(
            "status of cycle 50 for cycle 51".into()
        ))
    );
    assert_eq!(fw.log.statuses.len(), 51, "cycles 0 to 50 are kept");
}

#[test]
fn a_device_that_falls_silent_after_faults_still_stops_within_its_timeout() {
    let (fw, _, secs) = run_planned(Scripted::new(30, Fault::Silent), plan("drop@10,delay@20"));
    assert_eq!(fw.log.held, [10, 20]);
    assert_eq!(
        fw.failure,
        Some(LinkFailure::Timeout {
            waiting_for: "cycle status",
            ms: 200
        })
    );
    assert!(secs < 5.0, "bounded: {secs} s");
}
