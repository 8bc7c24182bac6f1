//! Poses and sampled path points.
//!
//! Conventions, used everywhere in the crate: a right-handed local plane with
//! `x` east and `y` north (or any right-handed pair), positions in metres,
//! headings in radians measured counter-clockwise from `+x`, curvature in 1/m,
//! positive when the path turns left (counter-clockwise).

use crate::num::real::Real;

/// Which way the vehicle drives along a segment.
///
/// Stations always increase along the path. On a [`Direction::Reverse`]
/// segment the vehicle travels towards increasing station backwards, so its
/// body points opposite to the path tangent (a cusp joins a forward and a
/// reverse segment).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
// Word-sized: the structs that hold it (path points, tracking states) then
// have no byte-sized tail, and moving them copies words, not bytes (a
// byte-wise `memcpy` of a tracking state cost 800 instructions on an M4F).
#[repr(u32)]
pub enum Direction {
    /// Driving forwards: the body heading equals the path heading.
    #[default]
    Forward,
    /// Driving backwards: the body heading is the path heading plus pi.
    Reverse,
}

impl Direction {
    /// `+1` forwards, `-1` backwards.
    #[inline]
    pub fn sign<T: Real>(self) -> T {
        match self {
            Direction::Forward => T::ONE,
            Direction::Reverse => -T::ONE,
        }
    }
}

/// A position and heading in the local plane.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Pose<T> {
    /// East (or first) coordinate, metres.
    pub x: T,
    /// North (or second) coordinate, metres.
    pub y: T,
    /// Heading, radians, counter-clockwise from `+x`.
    pub heading: T,
}

impl<T: Real> Pose<T> {
    /// A pose from its parts (metres, metres, radians).
    #[inline]
    pub const fn new(x: T, y: T, heading: T) -> Self {
        Self { x, y, heading }
    }

    /// `true` if every field is finite.
    #[inline]
    pub fn is_finite(&self) -> bool {
        self.x.is_finite() && self.y.is_finite() && self.heading.is_finite()
    }
}

/// The path's state at one station: where it is, where it points and how it bends.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PathPoint<T> {
    /// Distance along the path from its start, metres.
    pub station: T,
    /// Position, metres.
    pub x: T,
    /// Position, metres.
    pub y: T,
    /// Cosine of the path heading (unit tangent, `x` part).
    pub cos: T,
    /// Sine of the path heading (unit tangent, `y` part).
    pub sin: T,
    /// Curvature, 1/m, positive turning left.
    pub curvature: T,
    /// Sharpness (rate of change of curvature with station), 1/m^2.
    pub sharpness: T,
    /// Index of the segment the station lies on.
    pub segment: usize,
    /// Driving direction on that segment.
    pub direction: Direction,
}

impl<T: Real> PathPoint<T> {
    /// Path heading, radians in `[-pi, pi]`, counter-clockwise from `+x`.
    ///
    /// Costs one `atan2`: the hot path carries the heading as `(cos, sin)`.
    #[inline]
    pub fn heading(&self) -> T {
        self.sin.atan2(self.cos)
    }

    /// The heading the vehicle's body should have here: the path heading,
    /// plus pi on a reverse segment; radians in `(-pi, pi]`.
    #[inline]
    pub fn body_heading(&self) -> T {
        match self.direction {
            Direction::Forward => self.heading(),
            Direction::Reverse => (self.heading() + T::PI).wrap_angle(),
        }
    }

    /// The pose (position and path heading).
    #[inline]
    pub fn pose(&self) -> Pose<T> {
        Pose::new(self.x, self.y, self.heading())
    }

    /// Signed lateral offset of `(x, y)` from this point along the left
    /// normal `(-sin, cos)`, metres: positive left of the path.
    #[inline]
    pub fn lateral_offset(&self, x: T, y: T) -> T {
        (y - self.y) * self.cos - (x - self.x) * self.sin
    }

    /// Offset of `(x, y)` along the tangent, metres: positive ahead.
    #[inline]
    pub fn along_offset(&self, x: T, y: T) -> T {
        (x - self.x) * self.cos + (y - self.y) * self.sin
    }
}
