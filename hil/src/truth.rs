//! Where the true machine is relative to the path, for the metrics.
//!
//! The true representative point is projected onto the continuous path
//! with the core's [`Tracker`] (exact projection onto lines, arcs and
//! clothoids), never onto recorded or sampled points. A path with cusps is
//! split into its legs (runs of one driving direction): near a cusp the
//! reversing leg runs back alongside the leg before it, and a projection
//! over both would jump between them. The current leg is left for the next
//! once the point is past its end.

use kappaline::{Pose, Segment, TrackStatus, Tracker, TrackerConfig};

use crate::scenario::{HostPath, MAX_SEGMENTS};

/// The truth's view of one sample.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TruthFoot {
    /// Station on the whole path, metres.
    pub station: f64,
    /// Signed cross-track error, metres, left of the path positive.
    pub cross_track: f64,
    /// Heading error, rad (body heading minus the heading it should have).
    pub heading_error: f64,
    /// Path curvature at the foot point, 1/m.
    pub curvature: f64,
    /// Path sharpness at the foot point, 1/m^2.
    pub sharpness: f64,
    /// Distance from the start of the foot point's segment, metres.
    pub into_segment: f64,
    /// Where the point is relative to the (current leg of the) path.
    pub status: TrackStatus,
}

struct Leg {
    path: HostPath,
    /// Station of the leg's start on the whole path, metres.
    offset: f64,
}

/// Projects the true machine onto the path, leg by leg.
pub struct TruthProjector {
    legs: Vec<Leg>,
    current: usize,
    config: TrackerConfig<f64>,
    tracker: Tracker<f64>,
}

impl TruthProjector {
    /// A projector over `path` whose window follows a machine moving up to
    /// `reach` metres between two samples.
    ///
    /// # Errors
    /// If a leg cannot be rebuilt (not expected for a path that built).
    pub fn new(path: &HostPath, reach: f64) -> anyhow::Result<Self> {
        let config = TrackerConfig {
            window_back: 2.0,
            window_ahead: 2.0 + 4.0 * reach,
            lost_distance: 1e4,
            lookahead: 0.0,
            heading_weight: 1.0,
        };
        let tracker = Tracker::new(config).map_err(|e| anyhow::anyhow!("truth tracker: {e}"))?;
        Ok(Self {
            legs: legs_of(path)?,
            current: 0,
            config,
            tracker,
        })
    }

    /// Projects the point `pose` (metres, body heading in rad).
    pub fn project(&mut self, pose: &Pose<f64>) -> Option<TruthFoot> {
        loop {
            let leg = self.legs.get(self.current)?;
            let t = self.tracker.update(&leg.path, pose).ok()?;
            let more = self.current + 1 < self.legs.len();
            if t.status == TrackStatus::PastEnd && more {
                self.current += 1;
                self.tracker = Tracker::new(self.config).ok()?;
                continue;
            }
            let seg_start = leg.path.segment_start(t.foot.segment).unwrap_or(0.0);
            return Some(TruthFoot {
                station: leg.offset + t.station,
                cross_track: t.cross_track,
                heading_error: t.heading_error,
                curvature: t.foot.curvature,
                sharpness: t.foot.sharpness,
                into_segment: t.station - seg_start,
                status: t.status,
            });
        }
    }
}

/// The path cut at its cusps.
fn legs_of(path: &HostPath) -> anyhow::Result<Vec<Leg>> {
    let mut runs: Vec<(usize, usize)> = Vec::new();
    for i in 0..path.len() {
        let d = path.segment(i).map(|s| s.direction());
        let joins = i > 0 && path.segment(i - 1).map(|s| s.direction()) == d;
        match runs.last_mut() {
            Some(r) if joins => r.1 = i + 1,
            _ => runs.push((i, i + 1)),
        }
    }
    if runs.len() <= 1 {
        return Ok(vec![Leg {
            path: path.clone(),
            offset: 0.0,
        }]);
    }
    let mut legs = Vec::with_capacity(runs.len());
    for (a, b) in runs {
        let start = path
            .anchor(a)
            .ok_or_else(|| anyhow::anyhow!("leg start {a} missing"))?;
        let segs: Vec<Segment<f64>> = (a..b).filter_map(|i| path.segment(i)).collect();
        let leg = kappaline::Path::<f64, MAX_SEGMENTS>::from_segments(start, &segs)
            .map_err(|e| anyhow::anyhow!("leg from segment {a}: {e}"))?;
        legs.push(Leg {
            path: leg,
            offset: path.segment_start(a).unwrap_or(0.0),
        });
    }
    Ok(legs)
}
