//! What the fuzz targets check, shared by the cargo-fuzz targets
//! (`fuzz/fuzz_targets/`, nightly) and the corpus replay that the normal
//! stable test run does (`tests/fuzz_corpus.rs`).
//!
//! Each function takes arbitrary bytes and panics only when the library
//! breaks a promise: a panic inside the library, a non-finite value from
//! an accepted input, a decoded blob that does not re-encode to its bytes,
//! a chunked decode that differs from a whole one, a G1 fit that is `Ok`
//! with a non-finite field or does not close.

#![allow(dead_code)]

use kappaline::io::blob::{
    decode, encode, encoded_len, BlobError, Decoder, EncodeOptions, Progress,
};
use kappaline::{
    AnchoredSegment, Continuity, Direction, Fix, FixUpdate, FrenetFeedback, Guidance,
    GuidanceInput, Micros, Path, PathBuilder, PathPoint, Pose, PurePursuit, Real, Segment, Stanley,
    SteeringLaw, SupervisorConfig, Tracker, TrackerConfig, Vehicle,
};

/// Capacity of the fuzzed paths.
const N: usize = 8;

/// Reads values out of the fuzz input (zeros past its end).
struct Bytes<'a> {
    data: &'a [u8],
    at: usize,
}

impl<'a> Bytes<'a> {
    fn new(data: &'a [u8]) -> Self {
        Self { data, at: 0 }
    }
    fn u8(&mut self) -> u8 {
        let v = self.data.get(self.at).copied().unwrap_or(0);
        self.at += 1;
        v
    }
    fn u16(&mut self) -> u16 {
        u16::from_le_bytes([self.u8(), self.u8()])
    }
    fn u32(&mut self) -> u32 {
        u32::from_le_bytes([self.u8(), self.u8(), self.u8(), self.u8()])
    }
    fn u64(&mut self) -> u64 {
        u64::from(self.u32()) | (u64::from(self.u32()) << 32)
    }
    /// Mostly a value in `[lo, hi]`; one time in eight any bit pattern
    /// (NaN, infinities, huge and subnormal values).
    fn f64_in(&mut self, lo: f64, hi: f64) -> f64 {
        if self.u8() < 224 {
            lo + (hi - lo) * f64::from(self.u16()) / 65535.0
        } else {
            f64::from_bits(self.u64())
        }
    }
    fn f32_in(&mut self, lo: f32, hi: f32) -> f32 {
        if self.u8() < 224 {
            lo + (hi - lo) * f32::from(self.u16()) / 65535.0
        } else {
            f32::from_bits(self.u32())
        }
    }
}

fn point_is_finite<T: Real>(p: &PathPoint<T>) -> bool {
    p.x.is_finite()
        && p.y.is_finite()
        && p.cos.is_finite()
        && p.sin.is_finite()
        && p.curvature.is_finite()
        && p.station.is_finite()
}

/// Every point of an accepted path is finite.
fn assert_path_finite<T: Real, const M: usize>(p: &Path<T, M>) {
    let len = p.length();
    assert!(len.is_finite() && len > T::ZERO);
    for k in 0..=64u32 {
        let s = len * T::from_u32(k) / T::from_u32(64);
        let q = p.at(s);
        assert!(
            point_is_finite(&q),
            "non-finite point at station {s}: {q:?}"
        );
    }
}

/// The blob decoder on arbitrary bytes: whole into `f32` and `f64`, and in
/// chunks of several patterns, which must give exactly the whole result.
/// A blob that decodes in `f64` re-encodes to the same bytes.
pub fn blob(data: &[u8]) {
    blob_as_given(data);
    // The same bytes with their last four replaced by the CRC of the rest:
    // mutations then reach the checks behind the CRC (segment values,
    // anchors, flags, re-encoding) instead of stopping at it.
    if data.len() > 4 {
        let mut fixed = data.to_vec();
        let n = fixed.len() - 4;
        let crc = crc32fast::hash(&fixed[..n]);
        fixed[n..].copy_from_slice(&crc.to_le_bytes());
        blob_as_given(&fixed);
    }
}

fn blob_as_given(data: &[u8]) {
    let whole32 = decode::<f32, N>(data);
    let whole64 = decode::<f64, N>(data);
    if let Ok((p, info)) = &whole64 {
        assert_path_finite(p);
        let mut out = vec![0u8; encoded_len(p.len(), info.origin.is_some())];
        let n = encode(p, &EncodeOptions::matching(info), &mut out)
            .unwrap_or_else(|e| panic!("a decoded blob does not encode: {e}"));
        assert_eq!(&out[..n], data, "a decoded blob re-encodes to other bytes");
    }
    if let Ok((p, _)) = &whole32 {
        assert_path_finite(p);
    }
    for pattern in [1usize, 7, 1 + data.len() % 13] {
        chunked(data, pattern, &whole32);
    }
}

/// Feeds `data` in chunks whose sizes follow `pattern`; the outcome must be
/// that of the whole decode.
fn chunked(
    data: &[u8],
    pattern: usize,
    whole: &Result<(Path<f32, N>, kappaline::io::blob::BlobInfo), BlobError>,
) {
    let mut d = Decoder::<f32, N>::new();
    let mut at = 0usize;
    let mut k = 0usize;
    while at < data.len() {
        let size = if pattern == 1 {
            1
        } else {
            1 + (pattern * (k + 3)) % 29
        };
        let end = (at + size).min(data.len());
        match d.feed(&data[at..end]) {
            Ok(Progress::NeedMore) => {}
            Ok(Progress::Done { used }) => {
                let blob_end = at + used;
                let r = d.finish();
                if blob_end == data.len() {
                    assert_eq!(&r, whole, "chunks of pattern {pattern}");
                } else {
                    assert_eq!(
                        whole.as_ref().err(),
                        Some(&BlobError::TrailingBytes {
                            extra: data.len() - blob_end
                        })
                    );
                    assert_eq!(r, decode::<f32, N>(&data[..blob_end]));
                }
                return;
            }
            Err(e) => {
                assert_eq!(
                    whole.as_ref().err(),
                    Some(&e),
                    "chunks of pattern {pattern}"
                );
                // A failed decoder stays failed.
                assert_eq!(d.feed(data), Err(e));
                return;
            }
        }
        at = end;
        k += 1;
    }
    let r = d.finish();
    assert_eq!(
        r.as_ref().err(),
        Some(&BlobError::Truncated {
            received: data.len()
        })
    );
    assert_eq!(&r, whole);
}

/// A path from the input, built with `PathBuilder` and again from its own
/// anchors (nudged) with `from_anchored`; then tracking and
/// `Guidance::step` with each law along and around it.
pub fn path_guidance(data: &[u8]) {
    let mut b = Bytes::new(data);
    let start = Pose::new(
        b.f32_in(-1e3, 1e3),
        b.f32_in(-1e3, 1e3),
        b.f32_in(-10.0, 10.0),
    );
    let Ok(mut builder) = PathBuilder::<f32, N>::new(start) else {
        return;
    };
    let count = 1 + usize::from(b.u8()) % N;
    for _ in 0..count {
        let kind = b.u8();
        let length = b.f32_in(0.0, 200.0);
        let k0 = b.f32_in(-2.0, 2.0);
        let k1 = b.f32_in(-2.0, 2.0);
        let seg = match kind % 3 {
            0 => Segment::line(length),
            1 => Segment::arc(length, k0),
            _ => Segment::transition(length, k0, k1),
        };
        let Ok(seg) = seg else { continue };
        let _ = if kind & 0x80 != 0 {
            builder.try_push_cusp(seg.reversed())
        } else {
            builder.try_push(seg)
        };
    }
    let closed = b.u8() & 1 == 1;
    let built = if closed {
        builder.close(Continuity {
            position: f64::from(b.f32_in(0.0, 1e3)),
            heading: f64::from(b.f32_in(0.0, 7.0)),
        })
    } else {
        builder.build()
    };
    let Ok(path) = built else { return };
    assert_path_finite(&path);
    // The stored form: its own anchors, each nudged by up to 2 mm.
    let mut parts = Vec::new();
    for i in 0..path.len() {
        let (Some(a), Some(s)) = (path.anchor(i), path.segment(i)) else {
            panic!("segment {i} of a built path cannot be read back");
        };
        let nudge = f32::from(b.u8()) / 255.0 * 2e-3 - 1e-3;
        parts.push(AnchoredSegment {
            segment: s,
            start: Pose::new(a.x + nudge, a.y - nudge, a.heading),
        });
    }
    if let Ok(stored) = Path::<f32, N>::from_anchored(&parts, Continuity::DEFAULT, path.is_closed())
    {
        assert_path_finite(&stored);
        drive(&stored, &mut b);
    }
    drive(&path, &mut b);
}

/// Tracking and guidance on `path` with poses around it from the input.
fn drive(path: &Path<f32, N>, b: &mut Bytes<'_>) {
    let Ok(mut tracker) = Tracker::new(TrackerConfig::<f32>::tractor()) else {
        panic!("the tractor preset is refused");
    };
    let len = path.length();
    let mut poses = Vec::new();
    for _ in 0..6 {
        let s = b.f32_in(-10.0, len + 10.0);
        let p = path.at(s);
        let off = b.f32_in(-5.0, 5.0);
        let pose = Pose::new(
            p.x - off * p.sin + b.f32_in(-0.1, 0.1),
            p.y + off * p.cos,
            p.heading() + b.f32_in(-1.0, 1.0),
        );
        poses.push(pose);
        if let Ok(t) = tracker.update(path, &pose) {
            assert!(
                t.station.is_finite()
                    && t.cross_track.is_finite()
                    && t.heading_error.is_finite()
                    && t.curvature.is_finite()
                    && t.curvature_ahead.is_finite()
                    && t.distance_to_end.is_finite(),
                "non-finite tracking from a finite pose: {t:?}"
            );
        }
        let _ = tracker.update_driving(path, &pose, Direction::Reverse);
    }
    guide(path, PurePursuit::<f32>::tractor(), &poses, b);
    guide(path, Stanley::<f32>::tractor(), &poses, b);
    guide(path, FrenetFeedback::<f32>::tractor(), &poses, b);
}

fn guide<L: SteeringLaw<f32>>(path: &Path<f32, N>, law: L, poses: &[Pose<f32>], b: &mut Bytes<'_>) {
    let Ok(vehicle) = Vehicle::<f32>::front_steered(3.0, 0.6, 0.5) else {
        panic!("vehicle refused");
    };
    let sup = SupervisorConfig::default_for(&vehicle);
    let Ok(mut g) = Guidance::new(vehicle, law, TrackerConfig::tractor(), sup) else {
        panic!("guidance refused");
    };
    let mut now = Micros(b.u32());
    for pose in poses.iter().cycle().take(12) {
        let period_us = u32::from(b.u8()) * 1_000;
        now = now.add_micros(100_000);
        let fix = match b.u8() {
            0..=199 => FixUpdate::New(Fix::new(
                pose.x,
                pose.y,
                pose.heading,
                b.f32_in(-3.0, 6.0),
                now.sub_micros(u32::from(b.u8()) * 1_200),
            )),
            200..=229 => FixUpdate::Unchanged,
            _ => FixUpdate::NoFix,
        };
        let mut input = GuidanceInput::new(fix, now, period_us);
        input.manual_override = b.u8() > 250;
        if b.u8() > 240 {
            g.engage();
        }
        let cmd = g.step(path, &input);
        assert!(
            cmd.curvature.is_finite()
                && cmd.steer_angle.is_finite()
                && cmd.yaw_rate.is_finite()
                && cmd.wheel_speeds.0.is_finite()
                && cmd.wheel_speeds.1.is_finite()
                && cmd.speed_limit.is_finite()
                && cmd.speed_limit >= 0.0,
            "non-finite command: {cmd:?}"
        );
    }
}

/// `fit_g1` on arbitrary poses: `Ok` only with finite fields, and then
/// (for a well-conditioned fit) a clothoid that closes.
pub fn fit_g1(data: &[u8]) {
    let mut b = Bytes::new(data);
    let from = Pose::new(
        b.f64_in(-1e3, 1e3),
        b.f64_in(-1e3, 1e3),
        b.f64_in(-1e3, 1e3),
    );
    let to = Pose::new(
        b.f64_in(-1e3, 1e3),
        b.f64_in(-1e3, 1e3),
        b.f64_in(-1e3, 1e3),
    );
    if let Ok(f) = kappaline::fit_g1(
        Pose::new(from.x as f32, from.y as f32, from.heading as f32),
        Pose::new(to.x as f32, to.y as f32, to.heading as f32),
    ) {
        assert!(
            finite_fit(&f),
            "f32 poses: Ok with a non-finite field: {f:?}"
        );
    }
    let Ok(f) = kappaline::fit_g1(from, to) else {
        return;
    };
    assert!(finite_fit(&f), "Ok with a non-finite field: {f:?}");
    let r = (to.x - from.x).hypot(to.y - from.y);
    if !(1e-2..=2e3).contains(&r) || f.length > 100.0 * r {
        return;
    }
    let Ok(seg) = f.segment::<f64>() else { return };
    let Ok(path) = PathBuilder::<f64, 1>::new(from)
        .and_then(|p| p.push(seg))
        .and_then(|p| p.build())
    else {
        return;
    };
    let e = path.end_pose();
    let gap = (e.x - to.x).hypot(e.y - to.y);
    assert!(
        gap <= 1e-8 * f.length.max(1.0),
        "fit does not close: {gap} m for {f:?}"
    );
}

fn finite_fit(f: &kappaline::G1Fit) -> bool {
    f.kappa0.is_finite() && f.sharpness.is_finite() && f.length.is_finite() && f.kappa1.is_finite()
}

/// Link frames (`io::link`): arbitrary bytes into the frame reader. Every
/// frame it accepts must encode back to the same raw frame it was read
/// from (the run between two delimiters with COBS undone), and a
/// sequence check fed its numbers must not panic.
pub fn link(data: &[u8]) {
    use kappaline::io::link::frame::{encode, MAX_ENCODED};
    use kappaline::io::link::reader::{decode_cobs, FrameReader};
    use kappaline::io::link::sequence::SequenceCheck;
    let mut reader = FrameReader::new();
    let mut seqs = SequenceCheck::new();
    let mut run_start = 0;
    for (i, &b) in data.iter().enumerate() {
        let got = reader.push(b);
        if b != 0 {
            continue;
        }
        let run = &data[run_start..=i];
        run_start = i + 1;
        if let Some(Ok(frame)) = got {
            let _ = seqs.check(frame.seq);
            let mut out = [0u8; MAX_ENCODED];
            let n = encode(frame.seq, &frame.message, &mut out)
                .unwrap_or_else(|e| panic!("accepted frame does not re-encode: {e}"));
            let mut theirs = run[..run.len() - 1].to_vec();
            let their_len = decode_cobs(&mut theirs).expect("it was accepted");
            let our_len = decode_cobs(&mut out[..n - 1]).expect("our own encoding");
            assert_eq!(
                &out[..our_len],
                &theirs[..their_len],
                "accepted frame re-encodes differently"
            );
        }
    }
}
