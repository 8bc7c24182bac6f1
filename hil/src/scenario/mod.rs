//! Scenarios: parsing, validation and the built-in set.
//!
//! A scenario file is TOML in the schema of [`schema`]; [`Scenario::parse`]
//! reads it, checks every value (naming the field at fault) and builds the
//! reference path with the core, so that a path the core would refuse is
//! refused here, with the index of the segment.

pub mod builtin;
pub mod schema;
mod validate;

use std::sync::Arc;

use kappaline::{Direction, Path, PathBuilder, Pose, Segment};

pub use schema::*;

/// Segments a host-side path may hold.
pub const MAX_SEGMENTS: usize = 256;

/// The reference path in `f64`, as the harness measures against it.
pub type HostPath = Path<f64, MAX_SEGMENTS>;

/// Why a scenario was refused.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ScenarioError {
    /// The file is not valid TOML or does not match the schema.
    #[error("{source_name}: field `{field}`: {message}")]
    Schema {
        /// File or built-in name.
        source_name: String,
        /// Dotted path of the field (the table, for a missing key).
        field: String,
        /// What is wrong.
        message: String,
    },
    /// A value is out of its range, or the path does not validate.
    #[error("{source_name}: field `{field}`: {message}")]
    Invalid {
        /// File or built-in name.
        source_name: String,
        /// Dotted path of the field.
        field: String,
        /// What is wrong.
        message: String,
    },
}

impl ScenarioError {
    /// The dotted path of the field at fault.
    pub fn field(&self) -> &str {
        match self {
            ScenarioError::Schema { field, .. } | ScenarioError::Invalid { field, .. } => field,
        }
    }
}

/// A checked scenario, ready to run.
#[derive(Debug, Clone)]
pub struct Scenario {
    /// The file as read.
    pub spec: ScenarioFile,
    /// The reference path.
    pub path: Arc<HostPath>,
    /// Its segments in order (to build the controller's own copy).
    pub segments: Vec<Segment<f64>>,
    /// Its start pose.
    pub start: Pose<f64>,
}

impl Scenario {
    /// Parses and checks a scenario from TOML text; `source_name` names it in errors.
    ///
    /// # Errors
    /// [`ScenarioError::Schema`] for bad TOML, a missing or unknown field or a
    /// wrong type; [`ScenarioError::Invalid`] for a value out of range or a
    /// path the core refuses.
    pub fn parse(text: &str, source_name: &str) -> Result<Self, ScenarioError> {
        let value: toml::Value = toml::from_str(text).map_err(|e| ScenarioError::Schema {
            source_name: source_name.to_string(),
            field: "(file)".to_string(),
            message: e.message().to_string() + &line_of(text, e.span()),
        })?;
        Self::from_value(value, source_name)
    }

    /// Checks a scenario given as a TOML value (used by sweeps, which edit
    /// the value before checking it).
    ///
    /// # Errors
    /// As [`Scenario::parse`].
    pub fn from_value(value: toml::Value, source_name: &str) -> Result<Self, ScenarioError> {
        let spec: ScenarioFile = serde_path_to_error::deserialize(value).map_err(|e| {
            let field = e.path().to_string();
            ScenarioError::Schema {
                source_name: source_name.to_string(),
                field: if field == "." {
                    "(top level)".into()
                } else {
                    field
                },
                message: e.into_inner().to_string(),
            }
        })?;
        Self::from_spec(spec, source_name)
    }

    /// Checks an already deserialised scenario.
    ///
    /// # Errors
    /// [`ScenarioError::Invalid`].
    pub fn from_spec(spec: ScenarioFile, source_name: &str) -> Result<Self, ScenarioError> {
        let invalid = |(field, message): (String, String)| ScenarioError::Invalid {
            source_name: source_name.to_string(),
            field,
            message,
        };
        validate::check(&spec).map_err(invalid)?;
        let (start, segments) = segments_of(&spec.path).map_err(invalid)?;
        let path = build_path(&spec.path, start, &segments).map_err(invalid)?;
        Ok(Self {
            spec,
            path: Arc::new(path),
            segments,
            start,
        })
    }

    /// The scenario's name.
    pub fn name(&self) -> &str {
        &self.spec.name
    }
}

fn line_of(text: &str, span: Option<std::ops::Range<usize>>) -> String {
    match span {
        Some(r) => {
            let line = text.get(..r.start).map_or(0, |t| t.lines().count().max(1));
            format!(" (line {line})")
        }
        None => String::new(),
    }
}

type FieldError = (String, String);

fn segments_of(path: &PathSpec) -> Result<(Pose<f64>, Vec<Segment<f64>>), FieldError> {
    match path {
        PathSpec::Segments {
            start, segments, ..
        } => {
            let pose = Pose::new(start.x_m, start.y_m, start.heading_deg.to_radians());
            if segments.is_empty() {
                return Err(("path.segments".into(), "needs at least one segment".into()));
            }
            let mut out = Vec::with_capacity(segments.len());
            for (i, s) in segments.iter().enumerate() {
                let field = format!("path.segments[{i}]");
                out.push(segment_of(s).map_err(|m| (field, m))?);
            }
            Ok((pose, out))
        }
    }
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

fn build_path(
    spec: &PathSpec,
    start: Pose<f64>,
    segments: &[Segment<f64>],
) -> Result<HostPath, FieldError> {
    let closed = matches!(spec, PathSpec::Segments { closed: true, .. });
    if segments.len() > MAX_SEGMENTS {
        return Err((
            "path.segments".into(),
            format!("{} segments, at most {MAX_SEGMENTS}", segments.len()),
        ));
    }
    let mut b = PathBuilder::<f64, MAX_SEGMENTS>::new(start)
        .map_err(|e| ("path.start".to_string(), e.to_string()))?;
    for (i, s) in segments.iter().enumerate() {
        b.try_push(*s)
            .map_err(|e| (format!("path.segments[{i}]"), e.to_string()))?;
    }
    let result = if closed {
        b.close(kappaline::Continuity::DEFAULT)
    } else {
        b.build()
    };
    result.map_err(|e| {
        let field = if closed {
            "path.closed".to_string()
        } else {
            "path.segments".to_string()
        };
        (field, format!("path does not validate: {e}"))
    })
}
