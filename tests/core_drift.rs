//! Drift of the stepped foot point over a long run: 10^6 `f32` tracker
//! updates around a closed loop of lines, arcs and clothoids, compared with
//! the loop's `f64` closed-form evaluation (the construction of each control
//! point). The foot is stepped from exact bases (track/foot.rs), so its
//! error must not grow with the number of cycles: station and cross-track
//! stay within 1 mm throughout.
//!
//! The loop is invented demo geometry (a made-up yard loop); the reference
//! is the definition of the foot point: a point `d` along the normal at
//! station `s`, with `|kappa d| < 1`, has its foot at `s` and cross-track `d`.

use kappaline::{
    Continuity, Cursor, Path, PathBuilder, Pose, Segment, TrackStatus, Tracker, TrackerConfig,
};

/// A rounded rectangle: sides of 40 m and 20 m, corners of a clothoid
/// (0 to 0.1 /m over 5 m), an arc of radius 10 m and a clothoid back, each
/// corner turning a quarter (closes by symmetry).
fn yard_loop<T: kappaline::Real>() -> Path<T, 16> {
    let t = |v: f64| T::from_f64(v);
    let k = 0.1;
    let lc = 5.0;
    let arc = (core::f64::consts::FRAC_PI_2 - k * lc) / k;
    let mut b = PathBuilder::new(Pose::new(t(120.0), t(-35.0), t(0.4))).unwrap();
    for side in [40.0, 20.0, 40.0, 20.0] {
        b.try_push(Segment::line(t(side)).unwrap()).unwrap();
        b.try_push(Segment::transition(t(lc), t(0.0), t(k)).unwrap())
            .unwrap();
        b.try_push(Segment::arc(t(arc), t(k)).unwrap()).unwrap();
        b.try_push(Segment::transition(t(lc), t(k), t(0.0)).unwrap())
            .unwrap();
    }
    b.close(Continuity::DEFAULT).unwrap()
}

/// Updates in the run.
const UPDATES: u32 = 1_000_000;

#[test]
fn a_million_f32_updates_stay_within_a_millimetre() {
    let p64 = yard_loop::<f64>();
    let p32 = yard_loop::<f32>();
    let len = p64.length();
    let mut truth = Cursor::<f64>::start();
    let mut tracker = Tracker::<f32>::new(TrackerConfig::tractor()).unwrap();
    let (mut worst_s, mut worst_d) = (0.0f64, 0.0f64);
    for i in 0..UPDATES {
        // 5 cm a cycle (50 km, about 250 laps), a slow lateral swing and a
        // quick wiggle; now and then a step back.
        let ds = if i % 97 == 0 { -0.03 } else { 0.05 };
        let (p, _) = truth.advance(&p64, ds).unwrap();
        let fi = f64::from(i);
        let d = 0.3 * (fi * 1e-3).sin() + 0.04 * (fi * 0.37).sin();
        let q = Pose::new(
            (p.x - d * p.sin) as f32,
            (p.y + d * p.cos) as f32,
            p.heading() as f32,
        );
        let r = tracker.update(&p32, &q).unwrap();
        assert_eq!(r.status, TrackStatus::OnPath, "update {i}");
        let mut es = (f64::from(r.station) - p.station).abs();
        es = es.min(len - es);
        let ed = (f64::from(r.cross_track) - d).abs();
        worst_s = worst_s.max(es);
        worst_d = worst_d.max(ed);
        assert!(
            es < 1e-3,
            "update {i}: station {} vs {}",
            r.station,
            p.station
        );
        assert!(
            ed < 1e-3,
            "update {i}: cross-track {} vs {d}",
            r.cross_track
        );
    }
    println!("worst over {UPDATES} updates: station {worst_s:e} m, cross-track {worst_d:e} m");
}
