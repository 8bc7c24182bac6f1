//! The path blob: layout, round trips, and every kind of corruption.
//!
//! Outside references: the byte layout table in `src/io/blob/mod.rs` (the
//! golden blob below is worked out by hand from it), the CRC-32 of
//! `crc32fast` 1.x (`crc32fast::hash`, an independent implementation of
//! the same ISO-HDLC CRC), and the CRC catalogue's check value
//! `0xCBF43926` for `"123456789"` (Greg Cook's CRC RevEng catalogue,
//! CRC-32/ISO-HDLC).

use kappaline::io::blob::{
    decode, encode, encoded_len, BlobError, BlobInfo, Decoder, EncodeError, EncodeOptions, Origin,
    Progress, CRC_LEN, HEADER_LEN, RECORD_LEN,
};
use kappaline::{Continuity, Direction, Path, PathBuilder, PathError, Pose, Real, Segment};
use proptest::prelude::*;

const CAP: usize = 32;

fn to_vec<T: Real, const N: usize>(path: &Path<T, N>, o: &EncodeOptions) -> Vec<u8> {
    let mut out = vec![0u8; encoded_len(path.len(), o.origin.is_some())];
    let n = encode(path, o, &mut out).expect("encode");
    assert_eq!(n, out.len());
    out
}

/// Rewrites the CRC after a deliberate change, so the change itself is
/// what the decoder meets.
fn fix_crc(b: &mut [u8]) {
    let n = b.len() - CRC_LEN;
    let crc = crc32fast::hash(&b[..n]);
    b[n..].copy_from_slice(&crc.to_le_bytes());
}

fn sample() -> Path<f64, CAP> {
    PathBuilder::new(Pose::new(1.0, 2.0, 0.0))
        .unwrap()
        .push(Segment::line(20.0).unwrap())
        .unwrap()
        .push(Segment::arc(10.0, 0.1).unwrap())
        .unwrap()
        .build()
        .unwrap()
}

/// A path with every feature: clothoids, a cusp, an origin.
fn rich() -> (Path<f64, CAP>, EncodeOptions) {
    let mut b = PathBuilder::<f64, CAP>::new(Pose::new(-35.2, 12.5, 2.0)).unwrap();
    b.try_push(Segment::line(12.0).unwrap()).unwrap();
    b.try_push(Segment::transition(4.0, 0.0, 0.2).unwrap())
        .unwrap();
    b.try_push(Segment::arc(6.0, 0.2).unwrap()).unwrap();
    b.try_push_cusp(Segment::line(5.0).unwrap().reversed())
        .unwrap();
    b.try_push(Segment::transition(3.0, -0.1, 0.05).unwrap().reversed())
        .unwrap();
    let o = EncodeOptions {
        origin: Some(Origin::from_degrees(47.123456789, -8.5, 431.25).unwrap()),
        ..EncodeOptions::DEFAULT
    };
    (b.build().unwrap(), o)
}

#[test]
fn golden_blob_matches_the_layout_table() {
    let bytes = to_vec(&sample(), &EncodeOptions::DEFAULT);
    #[rustfmt::skip]
    let want_body: [u8; HEADER_LEN + 2 * RECORD_LEN] = [
        // magic "KLPB", version 1, flags 0, count 2
        0x4B, 0x4C, 0x50, 0x42, 1, 0, 2, 0,
        // mm; curvature 1e-10 1/m (0.1 * 1e10 fits an i32, 1e11 would not);
        // sharpness 1e-18 (all zero); reserved; tolerance 2 mm, 1000 urad
        3, 10, 18, 0, 2, 0, 0xE8, 0x03,
        // x 1000 mm, y 2000 mm, heading 0, length 20000 mm, kappa 0, sigma 0, forward
        0xE8, 0x03, 0, 0, 0xD0, 0x07, 0, 0, 0, 0, 0, 0, 0x20, 0x4E, 0, 0,
        0, 0, 0, 0, 0, 0, 0, 0, 0,
        // x 21000 mm, y 2000 mm, heading 0, length 10000 mm, kappa 1e9 units, sigma 0
        0x08, 0x52, 0, 0, 0xD0, 0x07, 0, 0, 0, 0, 0, 0, 0x10, 0x27, 0, 0,
        0x00, 0xCA, 0x9A, 0x3B, 0, 0, 0, 0, 0,
    ];
    assert_eq!(bytes.len(), 70);
    assert_eq!(&bytes[..66], &want_body[..]);
    assert_eq!(
        &bytes[66..],
        &crc32fast::hash(&want_body).to_le_bytes(),
        "CRC-32 of everything before it, little-endian"
    );
    // The CRC parameters: the catalogue's check value.
    assert_eq!(crc32fast::hash(b"123456789"), 0xCBF4_3926);
}

#[test]
fn heading_is_a_fraction_of_a_turn() {
    // A start heading of a quarter turn counter-clockwise: 2^30 units.
    let p = PathBuilder::<f64, 2>::new(Pose::new(0.0, 0.0, core::f64::consts::FRAC_PI_2))
        .unwrap()
        .push(Segment::line(1.0).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let b = to_vec(&p, &EncodeOptions::DEFAULT);
    assert_eq!(
        &b[HEADER_LEN + 8..HEADER_LEN + 12],
        &(1u32 << 30).to_le_bytes()
    );
    // -pi/2 is three quarters of a turn.
    let p = PathBuilder::<f64, 2>::new(Pose::new(0.0, 0.0, -core::f64::consts::FRAC_PI_2))
        .unwrap()
        .push(Segment::line(1.0).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let b = to_vec(&p, &EncodeOptions::DEFAULT);
    assert_eq!(
        &b[HEADER_LEN + 8..HEADER_LEN + 12],
        &(3u32 << 30).to_le_bytes()
    );
}

#[test]
fn rich_path_round_trips_and_re_encodes_identically() {
    let (path, o) = rich();
    let bytes = to_vec(&path, &o);
    let (back, info): (Path<f64, CAP>, BlobInfo) = decode(&bytes).unwrap();
    assert!(info.cusps && !info.closed);
    assert_eq!(info.origin, o.origin);
    let (lat, lon, h) = info.origin.unwrap().to_degrees();
    assert!((lat - 47.123456789).abs() < 1e-12 && (lon + 8.5).abs() < 1e-12 && h == 431.25);
    assert_eq!(back.len(), path.len());
    assert_eq!(
        back.segment(3).unwrap().direction(),
        Direction::Reverse,
        "the cusp survives"
    );
    assert_eq!(to_vec(&back, &EncodeOptions::matching(&info)), bytes);
}

#[test]
fn closed_loop_round_trips() {
    // A circle of radius 10 m in four arcs (common geometry).
    let q = core::f64::consts::FRAC_PI_2 * 10.0;
    let mut b = PathBuilder::<f64, CAP>::new(Pose::new(5.0, 0.0, 0.0)).unwrap();
    for _ in 0..4 {
        b.try_push(Segment::arc(q, 0.1).unwrap()).unwrap();
    }
    let path = b.close(Continuity::DEFAULT).unwrap();
    let bytes = to_vec(&path, &EncodeOptions::DEFAULT);
    let (back, info): (Path<f32, CAP>, _) = decode(&bytes).unwrap();
    assert!(info.closed && back.is_closed());
    assert!((back.length() - 20.0 * core::f32::consts::PI).abs() < 2e-3);
}

#[test]
fn truncation_at_every_offset() {
    let (path, o) = rich();
    let bytes = to_vec(&path, &o);
    for k in 0..bytes.len() {
        assert_eq!(
            decode::<f32, CAP>(&bytes[..k]).err(),
            Some(BlobError::Truncated { received: k }),
            "cut at {k}"
        );
    }
    assert!(decode::<f32, CAP>(&bytes).is_ok());
}

#[test]
fn a_flipped_bit_anywhere_is_refused() {
    let (path, o) = rich();
    let bytes = to_vec(&path, &o);
    let records = HEADER_LEN + 20;
    for i in 0..bytes.len() {
        for bit in 0..8 {
            let mut b = bytes.clone();
            b[i] ^= 1 << bit;
            let e = decode::<f64, CAP>(&b).err();
            let Some(e) = e else {
                panic!("bit {bit} of byte {i} flipped and the blob was accepted");
            };
            let expected = match i {
                0..=3 => matches!(e, BlobError::BadMagic),
                4 => matches!(e, BlobError::UnsupportedVersion { .. }),
                // flags, count, units, reserved, tolerances, origin: the
                // field's own check, or the CRC, or a refused segment when
                // the header misreads what follows.
                5..=35 => !matches!(
                    e,
                    BlobError::BadMagic | BlobError::UnsupportedVersion { .. }
                ),
                _ if i >= bytes.len() - CRC_LEN => matches!(e, BlobError::CrcMismatch { .. }),
                _ => matches!(
                    e,
                    BlobError::CrcMismatch { .. }
                        | BlobError::Segment(_)
                        | BlobError::ReservedNotZero { .. }
                ),
            };
            assert!(expected, "bit {bit} of byte {i}: {e:?}");
            if i >= records
                && i < bytes.len() - CRC_LEN
                && (i - records) % RECORD_LEN == 24
                && bit > 0
            {
                assert_eq!(
                    e,
                    BlobError::ReservedNotZero { offset: i },
                    "reserved record flag"
                );
            }
            if i == 5 && bit >= 3 {
                assert_eq!(e, BlobError::UnknownFlags { flags: b[5] });
            }
        }
    }
}

#[test]
fn chunk_boundaries_at_every_offset() {
    let (path, o) = rich();
    let bytes = to_vec(&path, &o);
    let (whole, info): (Path<f32, CAP>, _) = decode(&bytes).unwrap();
    for k in 0..=bytes.len() {
        let mut d = Decoder::<f32, CAP>::new();
        let first = d.feed(&bytes[..k]).unwrap();
        let second = d.feed(&bytes[k..]).unwrap();
        if k == bytes.len() {
            assert_eq!(first, Progress::Done { used: k });
            assert_eq!(second, Progress::Done { used: 0 });
        } else {
            assert_eq!(first, Progress::NeedMore);
            assert_eq!(
                second,
                Progress::Done {
                    used: bytes.len() - k
                }
            );
        }
        let (p, i) = d.finish().unwrap();
        assert_eq!((p, i), (whole.clone(), info), "split at {k}");
    }
    // Every chunk size, and an empty chunk between them.
    for size in 1..=bytes.len() {
        let mut d = Decoder::<f32, CAP>::new();
        for c in bytes.chunks(size) {
            assert_eq!(d.feed(&[]).unwrap(), Progress::NeedMore);
            let _ = d.feed(c).unwrap();
        }
        assert_eq!(d.finish().unwrap().0, whole, "chunks of {size}");
    }
}

#[test]
fn header_is_known_before_the_segments() {
    let (path, o) = rich();
    let bytes = to_vec(&path, &o);
    let mut d = Decoder::<f32, CAP>::new();
    d.feed(&bytes[..HEADER_LEN]).unwrap();
    assert!(d.info().is_none(), "origin block still to come");
    d.feed(&bytes[HEADER_LEN..HEADER_LEN + 20]).unwrap();
    let info = *d.info().unwrap();
    assert_eq!(usize::from(info.segments), path.len());
    assert_eq!(info.blob_len(), bytes.len());
    assert_eq!(d.segments_done(), 0);
    d.feed(&bytes[HEADER_LEN + 20..HEADER_LEN + 20 + RECORD_LEN])
        .unwrap();
    assert_eq!(d.segments_done(), 1);
}

#[test]
fn each_corruption_has_its_own_error() {
    let bytes = to_vec(&sample(), &EncodeOptions::DEFAULT);
    let rec = |i: usize| HEADER_LEN + i * RECORD_LEN;
    let with = |f: &dyn Fn(&mut Vec<u8>)| {
        let mut b = bytes.clone();
        f(&mut b);
        fix_crc(&mut b);
        decode::<f32, CAP>(&b).err()
    };
    assert_eq!(with(&|b| b[0] = b'X'), Some(BlobError::BadMagic));
    assert_eq!(
        with(&|b| b[4] = 2),
        Some(BlobError::UnsupportedVersion { found: 2 }),
        "a newer version"
    );
    assert_eq!(
        with(&|b| b[5] = 0x80),
        Some(BlobError::UnknownFlags { flags: 0x80 })
    );
    assert_eq!(
        with(&|b| b[11] = 1),
        Some(BlobError::ReservedNotZero { offset: 11 })
    );
    assert_eq!(with(&|b| b[8] = 7), Some(BlobError::BadUnits));
    assert_eq!(with(&|b| b[6] = 0), Some(BlobError::NoSegments));
    assert_eq!(
        decode::<f32, 1>(&bytes).err(),
        Some(BlobError::TooManySegments {
            count: 2,
            capacity: 1
        })
    );
    assert_eq!(
        with(&|b| b[rec(1) + 24] = 4),
        Some(BlobError::ReservedNotZero {
            offset: rec(1) + 24
        })
    );
    // Out of range after decoding: zero length; curvature beyond the f32
    // bound (1e3 1/m) once the unit is 1 1/m; a position beyond
    // MAX_COORDINATE once the unit is a metre.
    assert_eq!(
        with(&|b| b[rec(0) + 12..rec(0) + 16].copy_from_slice(&0u32.to_le_bytes())),
        Some(BlobError::Segment(PathError::NonPositiveLength {
            index: 0
        }))
    );
    assert_eq!(
        with(&|b| {
            b[9] = 0;
            b[rec(1) + 16..rec(1) + 20].copy_from_slice(&5000i32.to_le_bytes());
        }),
        Some(BlobError::Segment(PathError::CurvatureOutOfRange {
            index: 1
        }))
    );
    assert_eq!(
        with(&|b| {
            b[8] = 0;
            b[rec(0)..rec(0) + 4].copy_from_slice(&i32::MAX.to_le_bytes());
        }),
        Some(BlobError::Segment(PathError::OutOfRange))
    );
    // Stored anchors that do not match the recomputed ones: 5 mm off in
    // position, 2 mrad off in heading (tolerance 2 mm, 1 mrad).
    assert_eq!(
        with(&|b| b[rec(1) + 4..rec(1) + 8].copy_from_slice(&2005i32.to_le_bytes())),
        Some(BlobError::Segment(PathError::PositionGap { index: 1 }))
    );
    let two_mrad = (0.002 / core::f64::consts::TAU * 4_294_967_296.0) as u32;
    assert_eq!(
        with(&|b| b[rec(1) + 8..rec(1) + 12].copy_from_slice(&two_mrad.to_le_bytes())),
        Some(BlobError::Segment(PathError::HeadingGap { index: 1 }))
    );
    assert_eq!(with(&|b| b[5] = 2), Some(BlobError::CuspFlagMismatch));
    // Closed although the end is 30 m from the start.
    assert_eq!(
        with(&|b| b[5] = 1),
        Some(BlobError::Segment(PathError::PositionGap { index: 0 }))
    );
    // An origin at latitude 91 degrees.
    let mut o = EncodeOptions::DEFAULT;
    o.origin = Some(Origin::from_degrees(45.0, 7.0, 0.0).unwrap());
    let mut b = to_vec(&sample(), &o);
    b[HEADER_LEN..HEADER_LEN + 8].copy_from_slice(&91_000_000_000i64.to_le_bytes());
    fix_crc(&mut b);
    assert_eq!(decode::<f32, CAP>(&b).err(), Some(BlobError::BadOrigin));
    // The CRC itself.
    // (the start of segment 1 moved by 1 mm: within the tolerance, so only
    // the CRC can tell)
    let mut b = bytes.clone();
    b[rec(1)] ^= 0x01;
    let stored = u32::from_le_bytes(b[66..70].try_into().unwrap());
    assert_eq!(
        decode::<f32, CAP>(&b).err(),
        Some(BlobError::CrcMismatch {
            stored,
            computed: crc32fast::hash(&b[..66])
        })
    );
    // Bytes after the blob.
    let mut b = bytes.clone();
    b.extend_from_slice(&[0, 1, 2]);
    assert_eq!(
        decode::<f32, CAP>(&b).err(),
        Some(BlobError::TrailingBytes { extra: 3 })
    );
    let mut d = Decoder::<f32, CAP>::new();
    assert_eq!(d.feed(&b).unwrap(), Progress::Done { used: 70 });
}

#[test]
fn a_failed_decoder_stays_failed_and_the_path_in_use_is_untouched() {
    let bytes = to_vec(&sample(), &EncodeOptions::DEFAULT);
    let (mut in_use, _): (Path<f32, CAP>, _) = decode(&bytes).unwrap();
    let before = in_use.clone();
    let mut bad = bytes.clone();
    bad[HEADER_LEN + 4] ^= 0x40; // anchor y of segment 0 moved by 16 m
    let mut d = Decoder::<f32, CAP>::new();
    let mut failed = None;
    for c in bad.chunks(9) {
        match d.feed(c) {
            Ok(_) => {}
            Err(e) => {
                failed = Some(e);
                break;
            }
        }
    }
    let e = failed.expect("refused");
    // The rest of a good blob does not revive it.
    assert_eq!(d.feed(&bytes[30..]), Err(e));
    assert_eq!(d.clone().finish().err(), Some(e));
    // The loading pattern: replace the path in use only on success.
    if let Ok((p, _)) = d.finish() {
        in_use = p;
    }
    assert_eq!(in_use, before);
}

#[test]
fn encoder_errors() {
    let p = sample();
    let mut small = [0u8; 10];
    assert_eq!(
        encode(&p, &EncodeOptions::DEFAULT, &mut small),
        Err(EncodeError::BufferTooSmall { needed: 70 })
    );
    let mut out = [0u8; 70];
    let o = EncodeOptions {
        length_exponent: 9,
        ..EncodeOptions::DEFAULT
    };
    assert_eq!(encode(&p, &o, &mut out), Err(EncodeError::BadUnits));
    // Metres as the unit: the 1 m anchor survives but a 0.4 m segment
    // rounds to zero length.
    let short = PathBuilder::<f64, 2>::new(Pose::new(0.0, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(0.4).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let o = EncodeOptions {
        length_exponent: 0,
        ..EncodeOptions::DEFAULT
    };
    assert_eq!(
        encode(&short, &o, &mut out),
        Err(EncodeError::ValueOutOfRange { index: 0 })
    );
    // Centimetres with a zero tolerance: the quantised joints do not meet.
    let arc = PathBuilder::<f64, 4>::new(Pose::new(0.0, 0.0, 0.3))
        .unwrap()
        .push(Segment::arc(10.123, 0.1).unwrap())
        .unwrap()
        .push(Segment::line(3.0).unwrap())
        .unwrap()
        .build()
        .unwrap();
    let o = EncodeOptions {
        length_exponent: 2,
        position_tolerance: 0,
        ..EncodeOptions::DEFAULT
    };
    assert_eq!(
        encode(&arc, &o, &mut out),
        Err(EncodeError::Tolerance { index: 1 })
    );
    // Positions beyond an i32 of millimetres (2147 km).
    let far = PathBuilder::<f64, 2>::new(Pose::new(3.0e6, 0.0, 0.0))
        .unwrap()
        .push(Segment::line(1.0).unwrap())
        .unwrap()
        .build()
        .unwrap();
    assert_eq!(
        encode(&far, &EncodeOptions::DEFAULT, &mut out),
        Err(EncodeError::ValueOutOfRange { index: 0 })
    );
    assert!(Origin::from_degrees(0.0, 181.0, 0.0).is_err());
}

/// A random drivable path: lines, arcs and clothoids with headings and
/// positions anywhere in a 20 km square, a cusp now and then.
fn arb_path() -> impl Strategy<Value = Path<f64, CAP>> {
    let seg = (0u8..3, 0.05f64..400.0, -0.5f64..0.5, -0.5f64..0.5, 0u8..8);
    (
        -1.0e4f64..1.0e4,
        -1.0e4f64..1.0e4,
        -10.0f64..10.0,
        prop::collection::vec(seg, 1..CAP),
    )
        .prop_map(|(x, y, h, segs)| {
            let mut b = PathBuilder::<f64, CAP>::new(Pose::new(x, y, h)).unwrap();
            let mut reverse = false;
            for (kind, len, k0, k1, cusp) in segs {
                let s = match kind {
                    0 => Segment::line(len),
                    1 => Segment::arc(len, k0),
                    _ => Segment::transition(len, k0, k1),
                }
                .unwrap();
                if cusp == 0 {
                    reverse = !reverse;
                    let s = s.with_direction(if reverse {
                        Direction::Reverse
                    } else {
                        Direction::Forward
                    });
                    let _ = b.try_push_cusp(s);
                } else {
                    let s = s.with_direction(if reverse {
                        Direction::Reverse
                    } else {
                        Direction::Forward
                    });
                    let _ = b.try_push(s);
                }
            }
            if b.is_empty() {
                b.try_push(Segment::line(1.0).unwrap()).unwrap();
            }
            b.build().unwrap()
        })
}

proptest! {
    /// Path -> bytes -> path equal within the quantisation; bytes -> path
    /// -> bytes identical (decoded in f64).
    #[test]
    fn random_paths_round_trip(path in arb_path(), chunk in 1usize..80) {
        let o = EncodeOptions::DEFAULT;
        let mut bytes = vec![0u8; encoded_len(path.len(), false)];
        match encode(&path, &o, &mut bytes) {
            Ok(_) => {}
            // One unit for the whole path: a short, sharp clothoid makes the
            // sharpness unit coarse, and a long clothoid elsewhere then
            // misses its joint by more than the tolerance (3 in 2000 cases
            // here). Such a path is refused, never written wrong.
            Err(EncodeError::Tolerance { .. }) => return Ok(()),
            Err(e) => return Err(TestCaseError::fail(format!("{e}"))),
        }
        let (back, info): (Path<f64, CAP>, _) = decode(&bytes).map_err(|e| TestCaseError::fail(format!("{e}")))?;
        prop_assert_eq!(back.len(), path.len());
        let kq = 0.5 / 10f64.powi(i32::from(info.units.curvature));
        let sq = 0.5 / 10f64.powi(i32::from(info.units.sharpness));
        for i in 0..path.len() {
            let (a, b) = (path.anchor(i).unwrap(), back.anchor(i).unwrap());
            prop_assert!((a.x - b.x).abs() <= 0.5e-3 + 1e-9 && (a.y - b.y).abs() <= 0.5e-3 + 1e-9);
            let dh = (a.heading - b.heading).wrap_angle().abs();
            prop_assert!(dh <= core::f64::consts::PI / 2f64.powi(32) + 1e-12, "heading {}", dh);
            let (s, t) = (path.segment(i).unwrap(), back.segment(i).unwrap());
            prop_assert!((s.length() - t.length()).abs() <= 0.5e-3 + 1e-6);
            prop_assert!((s.kappa0() - t.kappa0()).abs() <= kq * (1.0 + 1e-9));
            prop_assert!((s.sigma() - t.sigma()).abs() <= sq * (1.0 + 1e-9));
            prop_assert_eq!(s.direction(), t.direction());
        }
        let mut again = vec![0u8; bytes.len()];
        encode(&back, &EncodeOptions::matching(&info), &mut again).unwrap();
        prop_assert_eq!(&again, &bytes);
        // The same bytes in chunks, into f32: the same as whole.
        let mut d = Decoder::<f32, CAP>::new();
        for c in bytes.chunks(chunk) {
            d.feed(c).map_err(|e| TestCaseError::fail(format!("{e}")))?;
        }
        let (p32, _) = d.finish().map_err(|e| TestCaseError::fail(format!("{e}")))?;
        let (w32, _): (Path<f32, CAP>, _) = decode(&bytes).unwrap();
        prop_assert_eq!(p32, w32);
    }
}

/// The README's size table (`cargo test --test io_blob sizes -- --nocapture`).
#[test]
fn sizes() {
    use core::mem::size_of;
    let per_f32 = size_of::<Path<f32, 17>>() - size_of::<Path<f32, 16>>();
    let per_f64 = size_of::<Path<f64, 17>>() - size_of::<Path<f64, 16>>();
    let decoder = size_of::<Decoder<f32, 16>>() - size_of::<Path<f32, 16>>();
    let field = std::fs::read(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/firmware/qemu/data/meadow.kpath"
    ))
    .unwrap();
    println!(
        "bytes per segment: blob {RECORD_LEN}, Path<f32> {per_f32}, Path<f64> {per_f64}; \
         decoder beyond its path {decoder}; sample field blob {}",
        field.len()
    );
    assert_eq!((RECORD_LEN, per_f32, per_f64), (25, 32, 64));
    assert_eq!(field.len(), encoded_len(11, true));
    assert!(decoder <= 320, "{decoder}");
}

/// An `f32` path is read from the blob's integers without `f64` arithmetic
/// (`src/io/blob/narrow.rs`). Reference: the `f64` path the blob was
/// written from (closed-form anchors of `PathBuilder` in `f64`): every
/// anchor, and the pose every metre, agree within the blob's quantisation
/// (0.5 mm, half a `2^-32` turn) plus `f32` rounding at these coordinates
/// (below 1e-5 m); and the joint check refuses and accepts what the `f64`
/// decoder does near the tolerance (2 mm, 1 mrad), the `f32` allowance
/// (16 eps x 40 m = 0.08 mm) being far below the margins tried.
#[test]
fn f32_reading_agrees_with_the_f64_path_and_checks_joints_alike() {
    let (path, o) = rich();
    let bytes = to_vec(&path, &o);
    let (p32, _): (Path<f32, CAP>, _) = decode(&bytes).unwrap();
    assert_eq!(p32.len(), path.len());
    for i in 0..path.len() {
        let (a, b) = (path.anchor(i).unwrap(), p32.anchor(i).unwrap());
        let dp = (a.x - f64::from(b.x)).hypot(a.y - f64::from(b.y));
        assert!(dp <= 0.71e-3 + 1e-5, "anchor {i}: {dp}");
        let dh = (a.heading - f64::from(b.heading)).wrap_angle().abs();
        assert!(dh <= 1e-6, "anchor {i} heading: {dh}");
    }
    assert!((path.length() - f64::from(p32.length())).abs() <= 3e-3);
    let mut s = 0.0;
    while s <= path.length() {
        let (a, b) = (path.at(s), p32.at(s as f32));
        let dp = (a.x - f64::from(b.x)).hypot(a.y - f64::from(b.y));
        // Quantised anchors and lengths: 0.71 mm in position, plus the
        // station shift (up to 5 x 0.5 mm of lengths) along the path.
        assert!(dp <= 3.5e-3, "at {s}: {dp}");
        s += 1.0;
    }

    let bytes = to_vec(&sample(), &EncodeOptions::DEFAULT);
    let rec1 = HEADER_LEN + RECORD_LEN;
    let shifted = |dy_mm: i32, dturn: u32| {
        let mut b = bytes.clone();
        let y = i32::from_le_bytes(b[rec1 + 4..rec1 + 8].try_into().unwrap()) + dy_mm;
        b[rec1 + 4..rec1 + 8].copy_from_slice(&y.to_le_bytes());
        let h = u32::from_le_bytes(b[rec1 + 8..rec1 + 12].try_into().unwrap());
        b[rec1 + 8..rec1 + 12].copy_from_slice(&h.wrapping_add(dturn).to_le_bytes());
        fix_crc(&mut b);
        (decode::<f32, CAP>(&b).err(), decode::<f64, CAP>(&b).err())
    };
    let mrad = |m: f64| (m * 1e-3 / core::f64::consts::TAU * 4_294_967_296.0) as u32;
    let gap = Some(BlobError::Segment(PathError::PositionGap { index: 1 }));
    let turn = Some(BlobError::Segment(PathError::HeadingGap { index: 1 }));
    assert_eq!(shifted(1, 0), (None, None));
    assert_eq!(shifted(3, 0), (gap, gap));
    assert_eq!(shifted(-3, 0), (gap, gap));
    assert_eq!(shifted(0, mrad(0.9)), (None, None));
    assert_eq!(shifted(0, mrad(1.1)), (turn, turn));
    assert_eq!(shifted(0, mrad(1.1).wrapping_neg()), (turn, turn));
}

/// The `f32` reading reduces the anchor heading in integer turns to a
/// quarter turn and a rest: every quarter and the turn's wrap-around give
/// the tangent and the end point of a 30 m line that the `f64` path has
/// (reference: `libm::sincos` of the heading, through `PathBuilder<f64>`),
/// within the quantisation (0.5 mm, 7.3e-10 rad) and `f32` rounding.
#[test]
fn f32_reading_places_anchors_in_every_quarter_turn() {
    for k in -16..=16 {
        let heading = f64::from(k) * core::f64::consts::FRAC_PI_8 + 0.01;
        let path = PathBuilder::<f64, CAP>::new(Pose::new(5.0, -3.0, heading))
            .unwrap()
            .push(Segment::line(30.0).unwrap())
            .unwrap()
            .push(Segment::arc(10.0, 0.05).unwrap())
            .unwrap()
            .build()
            .unwrap();
        let bytes = to_vec(&path, &EncodeOptions::DEFAULT);
        let (p32, _): (Path<f32, CAP>, _) = decode(&bytes).unwrap();
        for i in 0..2 {
            let (a, b) = (path.anchor(i).unwrap(), p32.anchor(i).unwrap());
            let dh = (a.heading - f64::from(b.heading)).wrap_angle().abs();
            assert!(dh <= 2e-7, "k {k} anchor {i}: heading off by {dh}");
            let dp = (a.x - f64::from(b.x)).hypot(a.y - f64::from(b.y));
            assert!(dp <= 0.71e-3 + 1e-5, "k {k} anchor {i}: {dp}");
        }
        let (e, f) = (path.at(path.length()), p32.at(p32.length()));
        let dp = (e.x - f64::from(f.x)).hypot(e.y - f64::from(f.y));
        assert!(dp <= 2e-3, "k {k}: end off by {dp}");
    }
}
