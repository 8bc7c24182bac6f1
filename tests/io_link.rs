//! Link frames (src/io/link): round trips, corruption at every byte,
//! truncation, version and sequence checks, and arbitrary bytes.
//!
//! The CRC is checked against an independent implementation (`crc32fast`,
//! `crc32fast::hash`, CRC-32 ISO-HDLC); the COBS property that a frame on
//! the wire has no zero but its delimiter is from the COBS definition
//! (Cheshire and Baker, "Consistent Overhead Byte Stuffing", IEEE/ACM
//! Transactions on Networking 7(2), 1999).

use kappaline::io::link::frame::{
    encode, parse, AckState, Frame, Inputs, Message, Status, CRC_LEN, HEADER_LEN, MAX_CHUNK,
    MAX_ENCODED, VERSION,
};
use kappaline::io::link::reader::{decode_cobs, FrameReader};
use kappaline::io::link::sequence::SequenceCheck;
use kappaline::io::link::LinkError;
use proptest::prelude::*;

fn samples() -> Vec<Message<'static>> {
    static CHUNK: [u8; MAX_CHUNK] = {
        let mut c = [0u8; MAX_CHUNK];
        let mut i = 0;
        while i < MAX_CHUNK {
            c[i] = (i * 37 % 256) as u8; // zeros included, on purpose
            i += 1;
        }
        c
    };
    vec![
        Message::PathChunk {
            offset: 192,
            total: 1_000,
            bytes: &CHUNK,
        },
        Message::PathChunk {
            offset: 0,
            total: 1,
            bytes: &[0],
        },
        Message::PathAck {
            accepted: 288,
            state: AckState::More,
        },
        Message::PathAck {
            accepted: 1_000,
            state: AckState::Loaded,
        },
        Message::PathAck {
            accepted: 0,
            state: AckState::Refused,
        },
        Message::PathAck {
            accepted: 96,
            state: AckState::OutOfOrder,
        },
        Message::Receiver(b"$GPVTG,90.0,T,,M,1.50,N,2.78,K,D*00\r\n"),
        Message::Cycle {
            cycle: 41,
            time_us: 2_050_000,
            inputs: Inputs {
                engage: true,
                manual_override: false,
            },
        },
        Message::Cycle {
            cycle: u32::MAX,
            time_us: u32::MAX,
            inputs: Inputs {
                engage: false,
                manual_override: true,
            },
        },
        Message::Status(Status {
            cycle: 41,
            status: 3,
            steer_angle: -0.125,
            curvature: -0.05,
            speed_limit: 2.5,
            cross_track: 0.031,
            cost: 12_345,
            stack_high_water: 6_200,
        }),
        Message::Hello {
            version: 1,
            max_blob: 4_096,
        },
    ]
}

fn wire(seq: u16, m: &Message<'_>) -> Vec<u8> {
    let mut out = [0u8; MAX_ENCODED];
    let n = encode(seq, m, &mut out).unwrap();
    out[..n].to_vec()
}

/// Every frame the reader gives for these bytes.
fn read_all(bytes: &[u8]) -> Vec<Result<(u16, String), LinkError>> {
    let mut r = FrameReader::new();
    let mut got = Vec::new();
    for &b in bytes {
        if let Some(f) = r.push(b) {
            got.push(f.map(|f: Frame<'_>| (f.seq, format!("{:?}", f.message))));
        }
    }
    got
}

#[test]
fn every_message_round_trips_through_the_reader() {
    for (i, m) in samples().iter().enumerate() {
        let seq = (i as u16).wrapping_mul(4099);
        let w = wire(seq, m);
        assert_eq!(w.last(), Some(&0));
        assert!(!w[..w.len() - 1].contains(&0), "COBS leaves no zero inside");
        let got = read_all(&w);
        assert_eq!(got, vec![Ok((seq, format!("{m:?}")))]);
    }
}

#[test]
fn the_crc_is_iso_hdlc_crc32_over_header_and_payload() {
    for m in samples() {
        let mut w = wire(9, &m);
        let n = w.len() - 1;
        let len = decode_cobs(&mut w[..n]).unwrap();
        let raw = &w[..len];
        let (body, crc) = raw.split_at(len - CRC_LEN);
        assert_eq!(body[0], VERSION);
        assert_eq!(&body[2..4], &9u16.to_le_bytes());
        assert_eq!(crc, crc32fast::hash(body).to_le_bytes());
    }
}

#[test]
fn a_status_with_nan_cross_track_keeps_its_bits() {
    let m = Message::Status(Status {
        cycle: 1,
        status: 0,
        steer_angle: 0.0,
        curvature: 0.0,
        speed_limit: f32::INFINITY,
        cross_track: f32::NAN,
        cost: 0,
        stack_high_water: 0,
    });
    let mut w = wire(0, &m);
    let n = w.len() - 1;
    let len = decode_cobs(&mut w[..n]).unwrap();
    let Message::Status(s) = parse(&w[..len]).unwrap().message else {
        panic!("not a status")
    };
    assert_eq!(s.cross_track.to_bits(), f32::NAN.to_bits());
    assert_eq!(s.speed_limit, f32::INFINITY);
}

#[test]
fn a_corrupted_byte_anywhere_never_yields_a_frame() {
    for m in samples() {
        let w = wire(77, &m);
        for at in 0..w.len() - 1 {
            for mask in [0x01u8, 0x80, 0xFF, 0x5A] {
                let mut bad = w.clone();
                bad[at] ^= mask;
                for got in read_all(&bad) {
                    assert!(got.is_err(), "byte {at} ^ {mask:#x} of {m:?} gave {got:?}");
                }
            }
        }
    }
}

#[test]
fn a_corrupted_payload_byte_is_a_crc_error() {
    let m = Message::Receiver(b"$GPGGA,1,2,3*00\r\n");
    let mut w = wire(3, &m);
    let n = w.len() - 1;
    let len = decode_cobs(&mut w[..n]).unwrap();
    for at in 0..len {
        let mut raw = w[..len].to_vec();
        raw[at] ^= 0x10;
        assert!(
            matches!(parse(&raw), Err(LinkError::Crc { .. })),
            "byte {at}"
        );
    }
}

#[test]
fn a_truncated_frame_is_an_error_and_the_next_frame_still_reads() {
    let m = Message::Cycle {
        cycle: 5,
        time_us: 250_000,
        inputs: Inputs::default(),
    };
    let w = wire(5, &m);
    let next = wire(6, &m);
    for cut in 1..w.len() - 1 {
        let mut bytes = w[..cut].to_vec();
        bytes.push(0);
        bytes.extend_from_slice(&next);
        let got = read_all(&bytes);
        assert_eq!(got.len(), 2, "cut at {cut}");
        assert!(got[0].is_err(), "cut at {cut}: {:?}", got[0]);
        assert_eq!(got[1], Ok((6, format!("{m:?}"))));
    }
}

/// A raw frame with a correct CRC, COBS-encoded with a delimiter.
fn raw_to_wire(body: &[u8]) -> Vec<u8> {
    let mut raw = body.to_vec();
    raw.extend_from_slice(&crc32fast::hash(body).to_le_bytes());
    let mut out = vec![0u8; raw.len() + raw.len() / 254 + 2];
    let n = corncobs_encode(&raw, &mut out);
    out.truncate(n);
    out
}

fn corncobs_encode(raw: &[u8], out: &mut [u8]) -> usize {
    // The COBS definition, written out here as an independent encoder:
    // each run of up to 254 non-zero bytes is led by its length + 1.
    let mut o = 0;
    let mut code_at = 0;
    let mut code = 1u8;
    o += 1;
    for &b in raw {
        if b == 0 {
            out[code_at] = code;
            code_at = o;
            o += 1;
            code = 1;
        } else {
            out[o] = b;
            o += 1;
            code += 1;
            if code == 0xFF {
                out[code_at] = code;
                code_at = o;
                o += 1;
                code = 1;
            }
        }
    }
    out[code_at] = code;
    out[o] = 0;
    o + 1
}

#[test]
fn the_independent_cobs_encoder_agrees_with_the_link() {
    for m in samples() {
        let w = wire(300, &m);
        let mut dec = w.clone();
        let n = dec.len() - 1;
        let len = decode_cobs(&mut dec[..n]).unwrap();
        let body = &dec[..len - CRC_LEN];
        assert_eq!(raw_to_wire(body), w, "{m:?}");
    }
}

#[test]
fn a_wrong_version_an_unknown_type_and_a_bad_payload_are_typed_errors() {
    let cycle_payload = [1, 0, 0, 0, 0, 0, 0, 0, 1];
    let mut v2 = vec![2u8, 0x04, 0, 0];
    v2.extend_from_slice(&cycle_payload);
    assert_eq!(
        read_all(&raw_to_wire(&v2)),
        vec![Err(LinkError::Version { found: 2 })]
    );

    let mut unknown = vec![VERSION, 0x7E, 0, 0];
    unknown.extend_from_slice(&cycle_payload);
    assert_eq!(
        read_all(&raw_to_wire(&unknown)),
        vec![Err(LinkError::UnknownType { found: 0x7E })]
    );

    let short_cycle = [VERSION, 0x04, 0, 0, 1, 0, 0, 0, 0, 0, 0, 0];
    assert_eq!(
        read_all(&raw_to_wire(&short_cycle)),
        vec![Err(LinkError::Payload { kind: 0x04, len: 8 })]
    );

    let reserved_bits = [VERSION, 0x04, 0, 0, 1, 0, 0, 0, 0, 0, 0, 0, 0x04];
    assert_eq!(
        read_all(&raw_to_wire(&reserved_bits)),
        vec![Err(LinkError::Payload { kind: 0x04, len: 9 })]
    );

    let bad_ack = [VERSION, 0x02, 0, 0, 0, 0, 0, 0, 9];
    assert_eq!(
        read_all(&raw_to_wire(&bad_ack)),
        vec![Err(LinkError::Payload { kind: 0x02, len: 5 })]
    );

    let empty_receiver = [VERSION, 0x03, 0, 0];
    assert_eq!(
        read_all(&raw_to_wire(&empty_receiver)),
        vec![Err(LinkError::Payload { kind: 0x03, len: 0 })]
    );

    assert_eq!(
        parse(&[VERSION, 0x04, 0]),
        Err(LinkError::TooShort { len: 3 })
    );
    assert_eq!(HEADER_LEN + CRC_LEN, 8);
}

#[test]
fn an_overlong_run_is_dropped_to_the_next_delimiter() {
    let mut bytes = vec![0x11u8; 3 * MAX_ENCODED];
    bytes.push(0);
    let good = wire(1, &Message::Receiver(b"$"));
    bytes.extend_from_slice(&good);
    let got = read_all(&bytes);
    assert_eq!(got[0], Err(LinkError::TooLong));
    assert!(got[1].is_ok());
}

#[test]
fn an_oversized_chunk_and_a_small_buffer_are_refused() {
    let big = [1u8; MAX_CHUNK + 1];
    let mut out = [0u8; MAX_ENCODED];
    assert_eq!(
        encode(0, &Message::Receiver(&big), &mut out),
        Err(LinkError::Payload {
            kind: 0x03,
            len: MAX_CHUNK + 1
        })
    );
    let mut small = [0xAAu8; 8];
    assert!(matches!(
        encode(0, &Message::Receiver(b"$GPGGA"), &mut small),
        Err(LinkError::BufferTooSmall { .. })
    ));
    assert_eq!(small, [0xAA; 8], "untouched");
}

#[test]
fn sequence_numbers_tell_lost_repeated_and_reordered_apart() {
    let mut s = SequenceCheck::expecting(0);
    assert_eq!(s.check(0), Ok(()));
    assert_eq!(s.check(1), Ok(()));
    assert_eq!(s.check(1), Err(LinkError::Repeated { found: 1 }));
    assert_eq!(s.check(2), Ok(()), "a repeat does not move the count");
    assert_eq!(
        s.check(5),
        Err(LinkError::Lost {
            expected: 3,
            found: 5
        })
    );
    assert_eq!(s.check(6), Ok(()), "a loss moves the count on");
    assert_eq!(
        s.check(4),
        Err(LinkError::Reordered {
            expected: 7,
            found: 4
        })
    );
    assert_eq!(s.check(7), Ok(()));

    let mut w = SequenceCheck::expecting(u16::MAX);
    assert_eq!(w.check(u16::MAX), Ok(()));
    assert_eq!(w.check(0), Ok(()), "wraps");
    assert_eq!(w.check(0), Err(LinkError::Repeated { found: 0 }));

    let mut fresh = SequenceCheck::new();
    assert_eq!(fresh.check(1234), Ok(()));
    assert_eq!(fresh.check(1235), Ok(()));
    fresh.reset();
    assert_eq!(fresh.check(0), Ok(()));
}

proptest! {
    #[test]
    fn arbitrary_bytes_never_panic_the_reader(bytes in proptest::collection::vec(any::<u8>(), 0..600)) {
        let mut r = FrameReader::new();
        for b in bytes {
            let _ = r.push(b);
        }
    }

    #[test]
    fn arbitrary_raw_frames_never_panic_the_parser(raw in proptest::collection::vec(any::<u8>(), 0..200)) {
        let _ = parse(&raw);
        let mut copy = raw.clone();
        let _ = decode_cobs(&mut copy);
    }

    #[test]
    fn receiver_chunks_of_any_content_round_trip(
        bytes in proptest::collection::vec(any::<u8>(), 1..=MAX_CHUNK),
        seq in any::<u16>(),
    ) {
        let m = Message::Receiver(&bytes);
        let got = read_all(&wire(seq, &m));
        prop_assert_eq!(got, vec![Ok((seq, format!("{m:?}")))]);
    }
}
