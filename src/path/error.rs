//! Why a segment or path was refused. Every fallible call leaves the state
//! it was called on unchanged.

use core::fmt;

/// Why a segment or path was refused.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum PathError {
    /// The path has no segments.
    Empty,
    /// A length, curvature, sharpness, pose or tolerance is NaN or infinite
    /// (`index` is the segment, or `usize::MAX` for a value not tied to one).
    NonFinite {
        /// Segment at fault.
        index: usize,
    },
    /// A segment's length is zero or negative.
    NonPositiveLength {
        /// Segment at fault.
        index: usize,
    },
    /// More segments than the path's capacity `N`.
    CapacityExceeded,
    /// The start of segment `index` is farther from the end of the previous
    /// segment than the position tolerance (G0).
    PositionGap {
        /// Segment whose start is off.
        index: usize,
    },
    /// The heading at the start of segment `index` differs from the heading at
    /// the end of the previous segment by more than the heading tolerance (G1).
    HeadingGap {
        /// Segment whose start heading is off.
        index: usize,
    },
    /// A tolerance or other parameter is negative or out of its range, or a
    /// position or station beyond [`crate::MAX_COORDINATE`].
    OutOfRange,
    /// A station outside the path (open paths only).
    StationOutOfRange,
    /// The start or end curvature of segment `index` is beyond the
    /// backend's [`crate::num::real::Real::MAX_CURVATURE`].
    CurvatureOutOfRange {
        /// Segment at fault.
        index: usize,
    },
    /// The sharpness of segment `index` is beyond the backend's
    /// [`crate::num::real::Real::MAX_SHARPNESS`].
    SharpnessOutOfRange {
        /// Segment at fault.
        index: usize,
    },
}

impl fmt::Display for PathError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            PathError::Empty => f.write_str("path has no segments"),
            PathError::NonFinite { index } => write!(f, "non-finite value at segment {index}"),
            PathError::NonPositiveLength { index } => {
                write!(f, "segment {index} has zero or negative length")
            }
            PathError::CapacityExceeded => f.write_str("more segments than the path can hold"),
            PathError::PositionGap { index } => {
                write!(
                    f,
                    "segment {index} does not start where the previous one ends"
                )
            }
            PathError::HeadingGap { index } => write!(
                f,
                "segment {index} does not start with the heading the previous one ends with"
            ),
            PathError::OutOfRange => f.write_str("parameter out of range"),
            PathError::StationOutOfRange => f.write_str("station outside the path"),
            PathError::CurvatureOutOfRange { index } => {
                write!(
                    f,
                    "segment {index} has a curvature beyond the backend's bound"
                )
            }
            PathError::SharpnessOutOfRange { index } => {
                write!(
                    f,
                    "segment {index} has a sharpness beyond the backend's bound"
                )
            }
        }
    }
}

impl core::error::Error for PathError {}
