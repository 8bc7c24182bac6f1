//! Per-update cost on the host, `f32`, one process, interleaved: the
//! tracker (foot stepped from cycle to cycle) beside two baselines written
//! here, at the accuracy each reaches, with the memory each representation
//! of the same 2 km path takes.
//!
//! * Projection: a polyline sampled every 1 cm, the nearest vertex found by
//!   hill-climbing from the last one, the foot on the better of its two
//!   edges (a textbook approach).
//! * Lookahead 5 m beyond the foot: the classic fourth-order Runge-Kutta
//!   method on the Frenet equations (`x' = cos theta`, `y' = sin theta`,
//!   `theta' = kappa(s)`), 10 steps, from the foot.
//!
//! Accuracy is measured against the path's `f64` closed form (the
//! construction of every control point). `cargo bench -p kappaline-hil
//! --bench tracker_cost`.

use std::hint::black_box;
use std::time::Instant;

use kappaline::{Path, PathBuilder, Pose, Segment, Tracker, TrackerConfig};

const SEGMENTS: usize = 572;
/// Control points, 0.1 m apart (the whole path).
const UPDATES: usize = 19_000;
/// Updates per timed batch; batches alternate between the contenders.
const BATCH: usize = 500;
const LOOKAHEAD: f64 = 5.0;
const RK4_STEPS: usize = 10;

/// A 2 km path of 572 segments: lines, clothoids into and out of arcs,
/// alternately left and right (invented demo geometry).
fn path<T: kappaline::Real>() -> Path<T, SEGMENTS> {
    let t = T::from_f64;
    let mut b = PathBuilder::new(Pose::new(t(350.0), t(-120.0), t(0.3))).unwrap();
    for i in 0..SEGMENTS / 4 {
        let k = if i % 2 == 0 { 0.05 } else { -0.05 };
        b.try_push(Segment::line(t(5.0)).unwrap()).unwrap();
        b.try_push(Segment::transition(t(3.0), t(0.0), t(k)).unwrap())
            .unwrap();
        b.try_push(Segment::arc(t(3.0), t(k)).unwrap()).unwrap();
        b.try_push(Segment::transition(t(3.0), t(k), t(0.0)).unwrap())
            .unwrap();
    }
    b.build().unwrap()
}

/// The polyline baseline: vertices every `step` metres, and the last index.
struct Polyline {
    pts: Vec<(f32, f32)>,
    step: f64,
    last: usize,
}

impl Polyline {
    fn new(p: &Path<f64, SEGMENTS>, step: f64) -> Self {
        let n = (p.length() / step) as usize;
        let pts = (0..n)
            .map(|i| {
                let q = p.at(i as f64 * step);
                (q.x as f32, q.y as f32)
            })
            .collect();
        Self { pts, step, last: 0 }
    }

    fn d2(&self, i: usize, x: f32, y: f32) -> f32 {
        let (px, py) = self.pts[i];
        (px - x) * (px - x) + (py - y) * (py - y)
    }

    /// Station, cross-track (left positive) and heading error of `q`.
    fn update(&mut self, q: &Pose<f32>) -> (f32, f32, f32) {
        let n = self.pts.len();
        let mut i = self.last;
        let mut d = self.d2(i, q.x, q.y);
        while i + 1 < n && self.d2(i + 1, q.x, q.y) < d {
            i += 1;
            d = self.d2(i, q.x, q.y);
        }
        while i > 0 && self.d2(i - 1, q.x, q.y) < d {
            i -= 1;
            d = self.d2(i, q.x, q.y);
        }
        self.last = i;
        // The foot on the edge towards the nearer neighbour.
        let j = if i + 1 < n && (i == 0 || self.d2(i + 1, q.x, q.y) < self.d2(i - 1, q.x, q.y)) {
            i
        } else {
            i - 1
        };
        let (ax, ay) = self.pts[j];
        let (bx, by) = self.pts[j + 1];
        let (ex, ey) = (bx - ax, by - ay);
        let len = (ex * ex + ey * ey).sqrt();
        let (tx, ty) = (ex / len, ey / len);
        let along = (q.x - ax) * tx + (q.y - ay) * ty;
        let cross = (q.y - ay) * tx - (q.x - ax) * ty;
        let station = (j as f64 * self.step) as f32 + along;
        let heading = ty.atan2(tx);
        let mut e = q.heading - heading;
        if e > std::f32::consts::PI {
            e -= 2.0 * std::f32::consts::PI;
        } else if e <= -std::f32::consts::PI {
            e += 2.0 * std::f32::consts::PI;
        }
        (station, cross, e)
    }
}

/// RK4 on the Frenet equations from the foot over `distance` metres; the
/// curvature `kappa0 + sigma (s - start)` of the segment holding `s`, found
/// by walking on from the foot's segment (no evaluation of the path).
fn rk4(p: &Path<f32, SEGMENTS>, foot: &kappaline::PathPoint<f32>, distance: f32) -> (f32, f32) {
    let h = distance / RK4_STEPS as f32;
    let (mut x, mut y, mut th) = (foot.x, foot.y, foot.sin.atan2(foot.cos));
    let mut s = foot.station;
    let mut seg = foot.segment;
    let mut kappa = |s: f32| {
        while seg + 1 < p.len() && p.segment_start(seg + 1).is_some_and(|b| s >= b) {
            seg += 1;
        }
        let start = p.segment_start(seg).unwrap_or(0.0);
        p.segment(seg)
            .map(|g| g.kappa0() + g.sigma() * (s - start))
            .unwrap_or(0.0)
    };
    for _ in 0..RK4_STEPS {
        let k1 = kappa(s);
        let k2 = kappa(s + 0.5 * h);
        let k4 = kappa(s + h);
        let (s1, c1) = th.sin_cos();
        let th2 = th + 0.5 * h * k1;
        let (s2, c2) = th2.sin_cos();
        let th3 = th + 0.5 * h * k2;
        let (s3, c3) = th3.sin_cos();
        let th4 = th + h * k2;
        let (s4, c4) = th4.sin_cos();
        x += h / 6.0 * (c1 + 2.0 * c2 + 2.0 * c3 + c4);
        y += h / 6.0 * (s1 + 2.0 * s2 + 2.0 * s3 + s4);
        th += h / 6.0 * (k1 + 4.0 * k2 + k4);
        s += h;
    }
    (x, y)
}

/// Min, median and max of the batch means, ns per call.
fn spread(v: &mut [f64]) -> (f64, f64, f64) {
    v.sort_by(|a, b| a.partial_cmp(b).unwrap());
    (v[0], v[v.len() / 2], v[v.len() - 1])
}

/// Worst station / cross-track error of the tracker and of the polyline
/// over every control point (untimed, fresh instances).
fn worst_errors(
    p32: &Path<f32, SEGMENTS>,
    p64: &Path<f64, SEGMENTS>,
    truth: &[(f64, f64, Pose<f32>)],
) -> (f64, f64) {
    let mut tracker = Tracker::new(TrackerConfig::tractor()).unwrap();
    let mut poly = Polyline::new(p64, 0.01);
    let (mut e_tr, mut e_pl) = (0.0f64, 0.0f64);
    for (s, d, q) in truth {
        let r = tracker.update(p32, q).unwrap();
        e_tr = e_tr
            .max((r.station as f64 - s).abs())
            .max((r.cross_track as f64 - d).abs());
        let (ps, pd, _) = poly.update(q);
        e_pl = e_pl.max((ps as f64 - s).abs()).max((pd as f64 - d).abs());
    }
    (e_tr, e_pl)
}

fn main() {
    let p64 = path::<f64>();
    let p32 = path::<f32>();
    // Control points: 0.1 m apart from station 1, a lateral and a heading wiggle.
    let truth: Vec<(f64, f64, Pose<f32>)> = (0..UPDATES)
        .map(|i| {
            let s = 1.0 + 0.1 * i as f64;
            let q = p64.at(s);
            let d = 0.2 + 0.05 * (0.9 * i as f64).sin();
            let h = q.heading() + 0.03 * (0.5 * i as f64).sin();
            (
                s,
                d,
                Pose::new((q.x - d * q.sin) as f32, (q.y + d * q.cos) as f32, h as f32),
            )
        })
        .collect();

    let mut tracker = Tracker::new(TrackerConfig::tractor()).unwrap();
    tracker.update(&p32, &truth[0].2).unwrap();
    let mut poly = Polyline::new(&p64, 0.01);
    poly.update(&truth[0].2);

    let (mut t_tr, mut t_pl, mut t_la, mut t_rk) = (vec![], vec![], vec![], vec![]);
    let (mut e_tr, mut e_pl, mut e_la, mut e_rk) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
    for chunk in truth.chunks(BATCH) {
        // Projection: tracker, then polyline, on the same control points.
        let t0 = Instant::now();
        for (_, _, q) in chunk {
            black_box(tracker.update(&p32, black_box(q)).unwrap());
        }
        t_tr.push(t0.elapsed().as_nanos() as f64 / chunk.len() as f64);
        let t0 = Instant::now();
        for (_, _, q) in chunk {
            black_box(poly.update(black_box(q)));
        }
        t_pl.push(t0.elapsed().as_nanos() as f64 / chunk.len() as f64);
        // Accuracy of both at the end of the batch (untimed).
        if let Some((s, d, q)) = chunk.last() {
            let r = tracker.update(&p32, q).unwrap();
            e_tr = e_tr
                .max((r.station as f64 - s).abs())
                .max((r.cross_track as f64 - d).abs());
            let (ps, pd, _) = poly.update(q);
            e_pl = e_pl.max((ps as f64 - s).abs()).max((pd as f64 - d).abs());
            // Lookahead from this foot: stepped, then RK4.
            let want = p64.at(s + LOOKAHEAD);
            let n = 200;
            let t0 = Instant::now();
            for _ in 0..n {
                black_box(tracker.ahead(&p32, black_box(LOOKAHEAD as f32)).unwrap());
            }
            t_la.push(t0.elapsed().as_nanos() as f64 / n as f64);
            let a = tracker.ahead(&p32, LOOKAHEAD as f32).unwrap();
            e_la = e_la.max((a.x as f64 - want.x).hypot(a.y as f64 - want.y));
            let t0 = Instant::now();
            for _ in 0..n {
                black_box(rk4(&p32, black_box(&r.foot), black_box(LOOKAHEAD as f32)));
            }
            t_rk.push(t0.elapsed().as_nanos() as f64 / n as f64);
            let (x, y) = rk4(&p32, &r.foot, LOOKAHEAD as f32);
            e_rk = e_rk.max((x as f64 - want.x).hypot(y as f64 - want.y));
        }
    }
    let (tr, pl) = (spread(&mut t_tr), spread(&mut t_pl));
    let (la, rk) = (spread(&mut t_la), spread(&mut t_rk));
    // Over every control point, not only the batch ends.
    let (e_tr, e_pl) = {
        let (a, b) = worst_errors(&p32, &p64, &truth);
        (a.max(e_tr), b.max(e_pl))
    };
    let ns = |(lo, mid, hi): (f64, f64, f64)| format!("{lo:.1} / {mid:.1} / {hi:.1}");
    let path_bytes = std::mem::size_of::<Path<f32, SEGMENTS>>();
    let poly_bytes = poly.pts.len() * std::mem::size_of::<(f32, f32)>();
    println!("2 km path, {SEGMENTS} segments, f32, {UPDATES} control points 0.1 m apart");
    println!(
        "{:<44} {:>22} {:>14} {:>12}",
        "", "ns/call min/med/max", "worst error", "memory"
    );
    println!(
        "{:<44} {:>22} {:>12.1e} m {:>10} B",
        "Tracker::update (foot stepped)",
        ns(tr),
        e_tr,
        path_bytes
    );
    println!(
        "{:<44} {:>22} {:>12.1e} m {:>10} B",
        "1 cm polyline, hill-climbing",
        ns(pl),
        e_pl,
        poly_bytes
    );
    println!(
        "{:<44} {:>22.2}",
        "  ratio of medians, polyline / tracker (> 1: tracker faster)",
        pl.1 / tr.1
    );
    println!(
        "{:<44} {:>22} {:>12.1e} m",
        "lookahead 5 m, stepped (Tracker::ahead)",
        ns(la),
        e_la
    );
    println!(
        "{:<44} {:>22} {:>12.1e} m",
        "lookahead 5 m, RK4 10 steps",
        ns(rk),
        e_rk
    );
    println!(
        "{:<44} {:>22.2}",
        "  ratio of medians, RK4 / stepped",
        rk.1 / la.1
    );
    println!(
        "(min / median / max of the means of {} interleaved batches of {BATCH} updates, \
         200 lookaheads; update errors over all {UPDATES} control points, lookahead \
         errors at the {} batch ends)",
        t_tr.len(),
        t_la.len()
    );
}
