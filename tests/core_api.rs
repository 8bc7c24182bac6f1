//! Compile-time checks of the public types' auto traits: everything can live
//! in a `static` or move between an interrupt and the main loop (Send + Sync),
//! and the small value types are Copy. A failure here is a compile error.

use kappaline::{
    AnchoredSegment, Continuity, Cursor, Direction, Path, PathBuilder, PathError, PathPoint, Pose,
    Segment, SegmentKind, TrackError, TrackStatus, Tracker, TrackerConfig, Tracking, Travel,
};

fn send_sync<T: Send + Sync>() {}
fn copy<T: Copy>() {}
fn error<T: core::error::Error + Send + Sync + 'static>() {}

fn for_real<T: kappaline::Real>() {
    send_sync::<Path<T, 8>>();
    send_sync::<PathBuilder<T, 8>>();
    send_sync::<Cursor<T>>();
    send_sync::<Tracker<T>>();
    send_sync::<Tracking<T>>();
    copy::<Segment<T>>();
    copy::<Pose<T>>();
    copy::<PathPoint<T>>();
    copy::<Cursor<T>>();
    copy::<Tracker<T>>();
    copy::<TrackerConfig<T>>();
    copy::<Tracking<T>>();
    copy::<AnchoredSegment<T>>();
}

#[test]
fn auto_traits() {
    for_real::<f32>();
    for_real::<f64>();
    copy::<Continuity>();
    copy::<Direction>();
    copy::<SegmentKind>();
    copy::<TrackStatus>();
    copy::<Travel>();
    copy::<PathError>();
    copy::<TrackError>();
    error::<PathError>();
    error::<TrackError>();
}

/// A public value in a `static` (needs `Sync`).
static DIRECTION: Direction = Direction::Forward;

#[test]
fn sizes_are_small() {
    // A placed segment is 32 bytes in f32 (module docs of path.rs); a path of
    // 64 segments stays near 2 KiB.
    assert!(
        core::mem::size_of::<Path<f32, 64>>() <= 64 * 32 + 64,
        "{}",
        core::mem::size_of::<Path<f32, 64>>()
    );
    // The tracker carries its foot point and three exact bases with their
    // series coefficients (src/track/foot.rs) from cycle to cycle.
    let tracker = core::mem::size_of::<Tracker<f32>>();
    assert!(tracker <= 640, "{tracker}");
    assert_eq!(DIRECTION.sign::<f64>(), 1.0);
}
