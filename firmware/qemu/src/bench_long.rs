//! Cost against path length: the same motion on paths of 10 and 10,000
//! segments, and acquisition on the long one. The 10,000-segment path
//! (320 KB) needs the mps2 boards' RAM; the micro:bit has 16 KiB.

use crate::meter::Meter;

/// Runs the figures this board has room for.
#[cfg(armv6m)]
pub fn run(_m: &mut Meter) {
    cortex_m_semihosting::hprintln!("(the 10,000-segment figures need the RAM of the mps2 boards)");
}

/// Runs the figures this board has room for.
#[cfg(not(armv6m))]
pub fn run(m: &mut Meter) {
    long::flat::<10>(m, "10 segments");
    long::flat::<10_000>(m, "10,000 segments");
}

#[cfg(not(armv6m))]
mod long {
    use kappaline::{Path, PathBuilder, Pose, Segment, TrackStatus, Tracker, TrackerConfig};

    use crate::bench::{lateral, pose_at, report};
    use crate::meter::{Meter, Stats};
    use crate::{check, fail};

    const CALLS: usize = 256;

    /// Lines of 8 m and arcs of 2 m (curvature +-0.05 /m), alternating.
    fn zigzag<const N: usize>() -> Path<f32, N> {
        let mut b = PathBuilder::<f32, N>::new(Pose::new(0.0, 0.0, 0.0))
            .unwrap_or_else(|_| fail("builder"));
        for i in 0..N {
            let seg = if i % 2 == 0 {
                Segment::line(8.0)
            } else {
                Segment::arc(2.0, if i % 4 == 1 { 0.05 } else { -0.05 })
            };
            check(seg.and_then(|s| b.try_push(s)).is_ok(), "push");
        }
        b.build().unwrap_or_else(|_| fail("zigzag"))
    }

    #[inline(never)]
    pub fn flat<const N: usize>(m: &mut Meter, label: &str) {
        let path = zigzag::<N>();
        let mut t = Tracker::new(TrackerConfig::tractor()).unwrap_or_else(|_| fail("cfg"));
        let (p0, _) = pose_at(&path, 0);
        let (n, r) = m.instructions(|| t.acquire(&path, &p0));
        check(r.is_ok(), "acquire");
        report(
            "acquisition, whole path in one call",
            label,
            &Stats {
                min: n,
                median: n,
                max: n,
            },
        );
        let (q, s) = pose_at(&path, 40);
        crate::bench::spread(m, &path, &q, s, label);
        let mut counts = [0u32; CALLS];
        for (i, c) in counts.iter_mut().enumerate() {
            let (pose, s) = pose_at(&path, i + 1);
            let (n, r) = m.instructions(|| t.update(&path, &pose));
            *c = n;
            match r {
                Ok(r) if r.status == TrackStatus::OnPath => {
                    check((r.station - s).abs() < 5e-4, "station");
                    check((r.cross_track - lateral(i + 1)).abs() < 5e-5, "cross-track");
                }
                _ => fail("update"),
            }
        }
        report(
            "Tracker::update, line/arc zigzag",
            label,
            &Stats::of(&mut counts),
        );
    }
}
