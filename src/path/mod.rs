//! The path: segments whose curvature is linear in arc length, placed at
//! anchors, evaluated exactly, stepped along and projected onto.
//!
//! [`Segment`] (line, arc, clothoid), the Fresnel integrals that evaluate
//! clothoids, [`Path`] and [`PathBuilder`] (anchors computed in `f64`),
//! [`Cursor`] (O(1) stepping and lookahead), the nearest point on one
//! segment, poses and path points, and [`PathError`]. Uses only
//! [`crate::num`].

pub(crate) mod anchored;
pub(crate) mod cursor;
pub(crate) mod error;
pub mod fresnel;
pub(crate) mod pose;
pub(crate) mod project;
pub(crate) mod segment;

pub use anchored::{
    AnchoredBuilder, AnchoredSegment, Continuity, Path, PathBuilder, MAX_COORDINATE,
};
pub use cursor::{Cursor, Travel};
pub use error::PathError;
pub use fresnel::{fresnel, generalized_fresnel};
pub use pose::{Direction, PathPoint, Pose};
pub use segment::{Segment, SegmentKind, MAX_SEGMENT_LENGTH};
