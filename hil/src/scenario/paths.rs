//! From the `[path]` table to a checked reference path, with the core's
//! builders: segments pushed one by one, a field of passes and headland
//! turns, or waypoints with cornering turns. Errors name the field.

use kappaline::{
    corner_path, Continuity, Corner, CornerConfig, Direction, FieldEnd, HeadlandTurn, Passes,
    PathBuilder, PathLimits, Pose, Segment, TurnPolicy, MAX_TURN_SEGMENTS,
};

use super::schema::{PathSpec, PoseSpec, SegmentSpec, TurnSide};
use super::{HostPath, MAX_SEGMENTS};

type FieldError = (String, String);

fn pose_of(p: &PoseSpec) -> Pose<f64> {
    Pose::new(p.x_m, p.y_m, p.heading_deg.to_radians())
}

/// Builds the reference path of a `[path]` table.
///
/// # Errors
/// The dotted field at fault and what is wrong with it.
pub fn build(spec: &PathSpec) -> Result<HostPath, FieldError> {
    match spec {
        PathSpec::Segments {
            start,
            closed,
            segments,
        } => from_segments(pose_of(start), *closed, segments),
        PathSpec::Field {
            start,
            pass_length_m,
            swath_m,
            passes,
            turn_side,
            turn_max_curvature_per_m,
            turn_max_sharpness_per_m2,
            allow_reverse,
        } => field(
            pose_of(start),
            *pass_length_m,
            *swath_m,
            *passes,
            *turn_side,
            *turn_max_curvature_per_m,
            *turn_max_sharpness_per_m2,
            *allow_reverse,
        ),
        PathSpec::Waypoints {
            points_m,
            corner_radius_m,
            corner_max_sharpness_per_m2,
        } => {
            let pts: Vec<(f64, f64)> = points_m.iter().map(|p| (p[0], p[1])).collect();
            let cfg = CornerConfig {
                radius: *corner_radius_m,
                max_sharpness: *corner_max_sharpness_per_m2,
            };
            corner_path::<f64, MAX_SEGMENTS, MAX_SEGMENTS>(&pts, &cfg)
                .map(|(p, _corners): (HostPath, heapless::Vec<Corner<f64>, MAX_SEGMENTS>)| p)
                .map_err(|e| {
                    (
                        "path.points_m".into(),
                        format!("path does not validate: {e}"),
                    )
                })
        }
    }
}

fn from_segments(
    start: Pose<f64>,
    closed: bool,
    segments: &[SegmentSpec],
) -> Result<HostPath, FieldError> {
    if segments.is_empty() {
        return Err(("path.segments".into(), "needs at least one segment".into()));
    }
    if segments.len() > MAX_SEGMENTS {
        return Err((
            "path.segments".into(),
            format!("{} segments, at most {MAX_SEGMENTS}", segments.len()),
        ));
    }
    let mut b = PathBuilder::<f64, MAX_SEGMENTS>::new(start)
        .map_err(|e| ("path.start".to_string(), e.to_string()))?;
    let mut prev: Option<Direction> = None;
    for (i, s) in segments.iter().enumerate() {
        let field = format!("path.segments[{i}]");
        let seg = segment_of(s).map_err(|m| (field.clone(), m))?;
        push(&mut b, &mut prev, seg).map_err(|e| (field, e.to_string()))?;
    }
    let result = if closed {
        b.close(Continuity::DEFAULT)
    } else {
        b.build()
    };
    result.map_err(|e| {
        let field = if closed {
            "path.closed"
        } else {
            "path.segments"
        };
        (field.to_string(), format!("path does not validate: {e}"))
    })
}

/// Pushes a segment, as a cusp where the driving direction changes.
fn push(
    b: &mut PathBuilder<f64, MAX_SEGMENTS>,
    prev: &mut Option<Direction>,
    seg: Segment<f64>,
) -> Result<(), kappaline::PathError> {
    if prev.is_some_and(|d| d != seg.direction()) {
        b.try_push_cusp(seg)?;
    } else {
        b.try_push(seg)?;
    }
    *prev = Some(seg.direction());
    Ok(())
}

fn segment_of(s: &SegmentSpec) -> Result<Segment<f64>, String> {
    let dir = |reverse: bool| {
        if reverse {
            Direction::Reverse
        } else {
            Direction::Forward
        }
    };
    let seg = match *s {
        SegmentSpec::Line { length_m, reverse } => Segment::line(length_m)
            .map_err(|e| format!("length_m: {e}"))?
            .with_direction(dir(reverse)),
        SegmentSpec::Arc {
            length_m,
            radius_m,
            reverse,
        } => {
            if radius_m == 0.0 || !radius_m.is_finite() {
                return Err(format!(
                    "radius_m: must be finite and non-zero, got {radius_m}"
                ));
            }
            Segment::arc(length_m, 1.0 / radius_m)
                .map_err(|e| format!("length_m: {e}"))?
                .with_direction(dir(reverse))
        }
        SegmentSpec::Turn {
            angle_deg,
            radius_m,
        } => {
            if !(radius_m > 0.0 && radius_m.is_finite()) {
                return Err(format!("radius_m: must be > 0, got {radius_m}"));
            }
            if !(angle_deg != 0.0 && angle_deg.is_finite()) {
                return Err(format!(
                    "angle_deg: must be finite and non-zero, got {angle_deg}"
                ));
            }
            let len = angle_deg.to_radians().abs() * radius_m;
            Segment::arc(len, angle_deg.signum() / radius_m).map_err(|e| e.to_string())?
        }
        SegmentSpec::Clothoid {
            length_m,
            curvature_start_per_m,
            curvature_end_per_m,
            reverse,
        } => Segment::transition(length_m, curvature_start_per_m, curvature_end_per_m)
            .map_err(|e| format!("{e}"))?
            .with_direction(dir(reverse)),
    };
    Ok(seg)
}

/// Passes of an A-B line driven back and forth, joined by headland turns.
#[allow(clippy::too_many_arguments)]
fn field(
    start: Pose<f64>,
    pass_length: f64,
    swath: f64,
    passes: u32,
    side: TurnSide,
    max_curvature: f64,
    max_sharpness: Option<f64>,
    allow_reverse: bool,
) -> Result<HostPath, FieldError> {
    let reference = PathBuilder::<f64, 1>::new(start)
        .and_then(|b| b.push(Segment::line(pass_length)?))
        .and_then(|b| b.build())
        .map_err(|e| ("path.pass_length_m".to_string(), e.to_string()))?;
    let set = Passes::new(swath).map_err(|e| ("path.swath_m".to_string(), format!("{e:?}")))?;
    let limits = PathLimits::new(max_curvature, max_sharpness, 1e-9)
        .map_err(|e| ("path.turn_max_curvature_per_m".to_string(), e.to_string()))?;
    let policy = if allow_reverse {
        TurnPolicy::AllowReverse
    } else {
        TurnPolicy::ForwardOnly
    };
    let step: i32 = match side {
        TurnSide::Left => 1,
        TurnSide::Right => -1,
    };
    let mut b = PathBuilder::<f64, MAX_SEGMENTS>::new(start)
        .map_err(|e| ("path.start".to_string(), e.to_string()))?;
    let mut prev = None;
    let too_many = |e: kappaline::PathError| ("path.passes".to_string(), format!("{e}"));
    push(
        &mut b,
        &mut prev,
        Segment::line(pass_length).map_err(too_many)?,
    )
    .map_err(too_many)?;
    for i in 1..passes as i32 {
        let (from, to) = ((i - 1) * step, i * step);
        // Odd passes run against the A-B direction: their turn is at the B end.
        let at = if i % 2 == 1 {
            FieldEnd::End
        } else {
            FieldEnd::Start
        };
        let turn = HeadlandTurn::<f64, MAX_TURN_SEGMENTS>::between_passes(
            &reference, &set, from, to, at, &limits, policy,
        )
        .map_err(|e| {
            (
                "path.turn_max_curvature_per_m".to_string(),
                format!("no headland turn from pass {from} to pass {to}: {e}"),
            )
        })?;
        for seg in turn.segments.iter() {
            push(&mut b, &mut prev, *seg).map_err(too_many)?;
        }
        push(
            &mut b,
            &mut prev,
            Segment::line(pass_length).map_err(too_many)?,
        )
        .map_err(too_many)?;
    }
    b.build()
        .map_err(|e| ("path".to_string(), format!("path does not validate: {e}")))
}
