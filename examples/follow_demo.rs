//! Follows a built-in demo path and prints the tracking errors.
//!
//! The scene is invented: the first two rows of the "Kestrel Flats" test
//! plot, 60 m long, joined by a clothoid-arc-clothoid
//! turn-around. A point drives along the path with a slowly swinging
//! lateral offset and heading error, and the tracker reports what it sees,
//! exactly as firmware would call it once per control cycle (10 Hz here).

use core::f64::consts::PI;
use kappaline::{Path, PathBuilder, Pose, Segment, TrackStatus, Tracker, TrackerConfig};

fn demo_path() -> Result<Path<f32, 16>, kappaline::PathError> {
    // Turn-around: two 2 m transitions to 1/1.5 1/m and an arc closing the half turn.
    let k = 1.0 / 1.5;
    let spiral = 2.0;
    let spiral_turn = 0.5 * k * spiral; // heading change of each transition
    let arc_len = (PI - 2.0 * spiral_turn) / k;
    PathBuilder::new(Pose::new(0.0, 0.0, 0.0))?
        .push(Segment::line(60.0)?)?
        .push(Segment::transition(spiral as f32, 0.0, k as f32)?)?
        .push(Segment::arc(arc_len as f32, k as f32)?)?
        .push(Segment::transition(spiral as f32, k as f32, 0.0)?)?
        .push(Segment::line(60.0)?)?
        .build()
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let path = demo_path()?;
    let mut tracker = Tracker::new(TrackerConfig::tractor())?;
    let mut cursor = kappaline::Cursor::start();
    let speed = 2.0f32; // m/s
    let dt = 0.1f32; // 10 Hz
    println!("   time  station  cross-track  heading-err  curvature  ahead-curv  status");
    let mut t = 0.0f32;
    loop {
        let (p, travel) = cursor.advance(&path, speed * dt)?;
        // The vehicle: the path point shifted sideways by a slow swing.
        let offset = 0.2 * (0.3 * t).sin();
        let yaw_err = 0.05 * (0.3 * t).cos();
        let vehicle = Pose::new(
            p.x - offset * p.sin,
            p.y + offset * p.cos,
            p.heading() + yaw_err,
        );
        let tr = tracker.update(&path, &vehicle)?;
        if (t * 10.0).round() as i32 % 20 == 0 || tr.status != TrackStatus::OnPath {
            println!(
                "{t:7.1} {:8.2} {:12.4} {:12.4} {:10.4} {:11.4}  {:?}",
                tr.station,
                tr.cross_track,
                tr.heading_error,
                tr.curvature,
                tr.curvature_ahead,
                tr.status
            );
        }
        if travel != kappaline::Travel::Within {
            break;
        }
        t += dt;
    }
    println!(
        "path length {:.3} m in {} segments",
        path.length(),
        path.len()
    );
    Ok(())
}
