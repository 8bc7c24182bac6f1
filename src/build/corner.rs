//! Corners with limits: a polyline of waypoints turned into lines joined by
//! clothoid–arc–clothoid turns that respect a minimum turning radius and a
//! maximum sharpness.
//!
//! A corner of deflection `delta` (the change of direction at the vertex,
//! counter-clockwise positive) is built from a [`TurnShape`]: a clothoid from
//! zero curvature up to `kappa = 1/R`, an arc, and the mirror clothoid back
//! to zero, each clothoid `kappa / sigma` long, where `sigma` is the
//! sharpness limit. When `delta < kappa^2 / sigma` there is no room for the
//! arc and the two clothoids meet at the lower peak curvature
//! `sqrt(|delta| sigma)`. Without a sharpness limit the corner is a plain
//! arc (curvature jumps at its ends).
//!
//! The turn is symmetric about the vertex's bisector, so it begins and ends
//! the same *tangent length* `T` from the vertex, and passes the vertex at
//! its *deviation* `|y_m| / cos(delta/2)`, where `(x_m, y_m)` is the turn's
//! midpoint in the frame of its start.
//!
//! ```
//! use kappaline::{corner_path, CornerConfig};
//! # fn main() -> Result<(), Box<dyn core::error::Error>> {
//! // An L-shaped headland track: 50 m east, then 40 m north.
//! let pts = [(0.0, 0.0), (50.0, 0.0), (50.0, 40.0)];
//! let cfg = CornerConfig { radius: 6.0, max_sharpness: Some(0.05) };
//! let (path, corners) = corner_path::<f64, 8, 4>(&pts, &cfg)?;
//! assert_eq!(corners.len(), 1);
//! let end = path.end_pose();
//! assert!((end.x - 50.0).abs() < 1e-9 && (end.y - 40.0).abs() < 1e-9);
//! assert!(corners[0].deviation > 0.0 && corners[0].deviation < 6.0);
//! # Ok(()) }
//! ```

use heapless::Vec;

use crate::num::real::Real;
use crate::path::anchored::{Path, PathBuilder};
use crate::path::error::PathError;
use crate::path::pose::Pose;
use crate::path::segment::Segment;

/// Below this (radians) a deflection counts as none: the vertex is dropped.
const STRAIGHT: f64 = 1e-12;
/// Shorter lines than this (metres) are left out of a path.
const TINY: f64 = 1e-9;

/// A symmetric turn: clothoid in, arc, clothoid out (f64, metres and 1/m).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TurnShape {
    /// Signed peak curvature, 1/m (positive turning left).
    pub kappa: f64,
    /// Length of each clothoid, metres (0 for a plain arc).
    pub transition: f64,
    /// Length of the arc, metres (0 when the clothoids meet).
    pub arc: f64,
}

impl TurnShape {
    /// The turn through `deflection` radians (sign: direction, `|deflection|
    /// < 2 pi`) at peak curvature `kappa` (1/m, > 0) with sharpness
    /// `sharpness` (1/m^2, > 0, or `None` for a plain arc).
    ///
    /// # Errors
    /// [`PathError::NonFinite`] for non-finite input, [`PathError::OutOfRange`]
    /// for a non-positive curvature or sharpness.
    pub fn new(deflection: f64, kappa: f64, sharpness: Option<f64>) -> Result<Self, PathError> {
        if !(deflection.is_finite() && kappa.is_finite()) {
            return Err(PathError::NonFinite { index: usize::MAX });
        }
        if kappa <= 0.0 || libm::fabs(deflection) >= 2.0 * core::f64::consts::PI {
            return Err(PathError::OutOfRange);
        }
        let sign = if deflection < 0.0 { -1.0 } else { 1.0 };
        let turn = libm::fabs(deflection);
        match sharpness {
            None => Ok(Self {
                kappa: sign * kappa,
                transition: 0.0,
                arc: turn / kappa,
            }),
            Some(s) if !s.is_finite() => Err(PathError::NonFinite { index: usize::MAX }),
            Some(s) if s <= 0.0 => Err(PathError::OutOfRange),
            Some(s) => {
                // Each clothoid turns kappa^2 / (2 s).
                if turn >= kappa * kappa / s {
                    Ok(Self {
                        kappa: sign * kappa,
                        transition: kappa / s,
                        arc: (turn - kappa * kappa / s) / kappa,
                    })
                } else {
                    let peak = libm::sqrt(turn * s);
                    Ok(Self {
                        kappa: sign * peak,
                        transition: peak / s,
                        arc: 0.0,
                    })
                }
            }
        }
    }

    /// Total length, metres.
    pub fn length(&self) -> f64 {
        2.0 * self.transition + self.arc
    }

    /// The turn's segments (up to three), in `T`.
    ///
    /// # Errors
    /// Never for a shape from [`TurnShape::new`] with a non-zero turn;
    /// [`PathError::CapacityExceeded`] cannot occur (three at most).
    pub fn segments<T: Real>(&self) -> Result<Vec<Segment<T>, 3>, PathError> {
        let mut v = Vec::new();
        let k = T::from_f64(self.kappa);
        if self.transition > 0.0 {
            let l = T::from_f64(self.transition);
            v.push(Segment::transition(l, T::ZERO, k)?)
                .map_err(|_| PathError::CapacityExceeded)?;
        }
        if self.arc > 0.0 {
            v.push(Segment::arc(T::from_f64(self.arc), k)?)
                .map_err(|_| PathError::CapacityExceeded)?;
        }
        if self.transition > 0.0 {
            let l = T::from_f64(self.transition);
            v.push(Segment::transition(l, k, T::ZERO)?)
                .map_err(|_| PathError::CapacityExceeded)?;
        }
        Ok(v)
    }

    /// Where the turn ends, in the frame of its start (start at the origin,
    /// heading 0): `(x, y, heading)`, metres and radians.
    pub fn end(&self) -> Pose<f64> {
        self.end_of(false)
    }

    /// The turn's midpoint in the frame of its start.
    pub fn midpoint(&self) -> Pose<f64> {
        self.end_of(true)
    }

    fn end_of(&self, half: bool) -> Pose<f64> {
        let mut b = match PathBuilder::<f64, 3>::new(Pose::new(0.0, 0.0, 0.0)) {
            Ok(b) => b,
            Err(_) => return Pose::new(f64::NAN, f64::NAN, f64::NAN),
        };
        let k = self.kappa;
        let mut push = |s: Result<Segment<f64>, PathError>| {
            if let Ok(s) = s {
                let _ = b.try_push(s);
            }
        };
        if self.transition > 0.0 {
            push(Segment::transition(self.transition, 0.0, k));
        }
        let arc = if half { 0.5 * self.arc } else { self.arc };
        if arc > 0.0 {
            push(Segment::arc(arc, k));
        }
        if self.transition > 0.0 && !half {
            push(Segment::transition(self.transition, k, 0.0));
        }
        b.end_pose()
    }

    /// Distance from the vertex (the crossing of the entry and exit
    /// tangent lines) to where the turn begins (and ends), metres.
    /// For `|deflection| >= pi` there is no vertex: NaN.
    pub fn tangent_length(&self) -> f64 {
        let m = self.midpoint();
        let half = m.heading;
        if libm::fabs(half) >= 0.5 * core::f64::consts::PI {
            return f64::NAN;
        }
        m.x + m.y * libm::tan(half)
    }

    /// Distance from the vertex to the turn's midpoint, metres.
    pub fn deviation(&self) -> f64 {
        let m = self.midpoint();
        libm::fabs(m.y) / libm::cos(m.heading)
    }
}

/// How corners are rounded.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CornerConfig<T> {
    /// Radius of the corner arcs, metres (> 0): at least the vehicle's
    /// minimum turning radius.
    pub radius: T,
    /// Sharpness of the clothoids, 1/m^2 (> 0), or `None` for plain arcs.
    pub max_sharpness: Option<T>,
}

/// What became of one vertex.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Corner<T> {
    /// Index of the vertex in the waypoint list.
    pub vertex: usize,
    /// Deflection at the vertex, radians (counter-clockwise positive).
    pub deflection: T,
    /// Distance from the vertex to the path's closest approach (the turn's
    /// midpoint), metres.
    pub deviation: T,
    /// Distance from the vertex where the turn begins and ends, metres.
    pub tangent_length: T,
    /// Peak curvature of the turn, 1/m (signed).
    pub peak_curvature: T,
    /// Station where the turn begins, metres.
    pub station: T,
}

/// Why a polyline could not be cornered.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum CornerError {
    /// Fewer than two waypoints.
    TooFewPoints,
    /// Waypoint `index` is NaN or infinite.
    NonFinite {
        /// Waypoint at fault.
        index: usize,
    },
    /// Waypoint `index` coincides with the one before it.
    Repeated {
        /// Waypoint at fault.
        index: usize,
    },
    /// The path reverses at vertex `index` (deflection of pi): no corner can turn it.
    Reversal {
        /// Vertex at fault.
        index: usize,
    },
    /// The leg ending at waypoint `index` is shorter than the corners at its
    /// two ends need: move the points apart or allow a smaller radius.
    LegTooShort {
        /// Waypoint ending the leg.
        index: usize,
    },
    /// The radius or sharpness is not positive and finite.
    BadConfig,
    /// The path or the corner list needs more capacity.
    Capacity,
    /// The path builder refused a segment.
    Path(PathError),
}

impl core::fmt::Display for CornerError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            CornerError::TooFewPoints => f.write_str("fewer than two waypoints"),
            CornerError::NonFinite { index } => write!(f, "waypoint {index} is not finite"),
            CornerError::Repeated { index } => {
                write!(f, "waypoint {index} repeats the one before it")
            }
            CornerError::Reversal { index } => {
                write!(f, "the polyline doubles back at waypoint {index}")
            }
            CornerError::LegTooShort { index } => write!(
                f,
                "the leg ending at waypoint {index} is too short for the corners at its ends"
            ),
            CornerError::BadConfig => f.write_str("corner radius or sharpness out of range"),
            CornerError::Capacity => f.write_str("not enough capacity for the path"),
            CornerError::Path(e) => write!(f, "path: {e}"),
        }
    }
}

impl core::error::Error for CornerError {}

impl From<PathError> for CornerError {
    fn from(e: PathError) -> Self {
        match e {
            PathError::CapacityExceeded => CornerError::Capacity,
            other => CornerError::Path(other),
        }
    }
}

/// Lines joined by clothoid–arc–clothoid corners through `points` (metres).
///
/// The path starts at the first point heading for the second and ends at the
/// last point; every corner is reported in the returned list (up to `M`).
/// Cost: O(points), a few Fresnel evaluations per corner, in `f64`.
///
/// # Errors
/// See [`CornerError`]; nothing is built on error.
pub fn corner_path<T: Real, const N: usize, const M: usize>(
    points: &[(T, T)],
    config: &CornerConfig<T>,
) -> Result<(Path<T, N>, Vec<Corner<T>, M>), CornerError> {
    let radius = config.radius.to_f64();
    let sharp = config.max_sharpness.map(|s| s.to_f64());
    if !(radius.is_finite() && radius > 0.0) || sharp.is_some_and(|s| !(s.is_finite() && s > 0.0)) {
        return Err(CornerError::BadConfig);
    }
    if points.len() < 2 {
        return Err(CornerError::TooFewPoints);
    }
    for (index, p) in points.iter().enumerate() {
        if !(p.0.is_finite() && p.1.is_finite()) {
            return Err(CornerError::NonFinite { index });
        }
    }
    let pt = |i: usize| points.get(i).map(|p| (p.0.to_f64(), p.1.to_f64()));
    let leg = |i: usize| -> Option<(f64, f64)> {
        // Leg i runs from point i to point i + 1: (length, direction).
        let (a, b) = (pt(i)?, pt(i + 1)?);
        let (dx, dy) = (b.0 - a.0, b.1 - a.1);
        Some((libm::hypot(dx, dy), libm::atan2(dy, dx)))
    };
    let legs = points.len() - 1;
    for i in 0..legs {
        if leg(i).is_none_or(|(l, _)| l <= TINY) {
            return Err(CornerError::Repeated { index: i + 1 });
        }
    }
    // Tangent length used at each interior vertex (0 for a straight-through one).
    let mut shapes: Vec<Option<(f64, TurnShape)>, M> = Vec::new();
    for v in 1..legs {
        let (Some((_, a)), Some((_, b))) = (leg(v - 1), leg(v)) else {
            return Err(CornerError::TooFewPoints);
        };
        let deflection = (b - a).wrap_angle();
        if libm::fabs(deflection) <= STRAIGHT {
            shapes.push(None).map_err(|_| CornerError::Capacity)?;
            continue;
        }
        if libm::fabs(deflection) >= core::f64::consts::PI - 1e-9 {
            return Err(CornerError::Reversal { index: v });
        }
        let shape = TurnShape::new(deflection, 1.0 / radius, sharp)?;
        shapes
            .push(Some((deflection, shape)))
            .map_err(|_| CornerError::Capacity)?;
    }
    let tan_of = |v: usize| -> f64 {
        // Vertex v sits at shapes[v - 1].
        match v.checked_sub(1).and_then(|i| shapes.get(i)) {
            Some(Some((_, s))) => s.tangent_length(),
            _ => 0.0,
        }
    };
    for i in 0..legs {
        let Some((len, _)) = leg(i) else {
            return Err(CornerError::TooFewPoints);
        };
        let need = tan_of(i) + tan_of(i + 1);
        if need.is_nan() || need > len + 1e-9 {
            return Err(CornerError::LegTooShort { index: i + 1 });
        }
    }
    let (Some(p0), Some((_, h0))) = (pt(0), leg(0)) else {
        return Err(CornerError::TooFewPoints);
    };
    let mut b = PathBuilder::<T, N>::new(Pose::new(
        T::from_f64(p0.0),
        T::from_f64(p0.1),
        T::from_f64(h0),
    ))?;
    let mut corners = Vec::new();
    let mut station = 0.0f64;
    for i in 0..legs {
        let Some((len, _)) = leg(i) else {
            return Err(CornerError::TooFewPoints);
        };
        let straight = len - tan_of(i) - tan_of(i + 1);
        if straight > TINY {
            b.try_push(Segment::line(T::from_f64(straight))?)?;
            station += straight;
        }
        if let Some(Some((deflection, shape))) = shapes.get(i) {
            let start_station = station;
            for s in shape.segments::<T>()? {
                b.try_push(s)?;
            }
            station += shape.length();
            corners
                .push(Corner {
                    vertex: i + 1,
                    deflection: T::from_f64(*deflection),
                    deviation: T::from_f64(shape.deviation()),
                    tangent_length: T::from_f64(shape.tangent_length()),
                    peak_curvature: T::from_f64(shape.kappa),
                    station: T::from_f64(start_station),
                })
                .map_err(|_| CornerError::Capacity)?;
        }
    }
    Ok((b.build()?, corners))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn plain_arc_corner_matches_circle_geometry() {
        // Circular fillet of radius R and deflection delta: tangent length
        // R tan(delta/2), vertex-to-arc distance R (1/cos(delta/2) - 1)
        // (elementary road-alignment geometry, "simple curve").
        for delta in [0.3f64, 1.0, core::f64::consts::FRAC_PI_2, 2.5, -1.2] {
            let s = TurnShape::new(delta, 0.1, None).unwrap();
            let h = libm::fabs(delta) / 2.0;
            assert!((s.tangent_length() - 10.0 * libm::tan(h)).abs() < 1e-9);
            assert!((s.deviation() - 10.0 * (1.0 / libm::cos(h) - 1.0)).abs() < 1e-9);
        }
    }

    #[test]
    fn clothoid_corner_ends_on_the_exit_line() {
        let pts = [
            (0.0f64, 0.0),
            (40.0, 0.0),
            (40.0 + 30.0, 30.0),
            (120.0, 30.0),
        ];
        let cfg = CornerConfig {
            radius: 8.0,
            max_sharpness: Some(0.02),
        };
        let (path, corners) = corner_path::<f64, 16, 4>(&pts, &cfg).unwrap();
        assert_eq!(corners.len(), 2);
        let end = path.end_pose();
        assert!((end.x - 120.0).abs() < 1e-9 && (end.y - 30.0).abs() < 1e-9);
        assert!(end.heading.abs() < 1e-12);
        // Corner 1 begins its tangent length before the vertex on the first leg.
        assert!((corners[0].station - (40.0 - corners[0].tangent_length)).abs() < 1e-9);
        // Curvature continuous everywhere (lines, clothoids from/to zero).
        for i in 1..path.len() {
            assert!(path.curvature_jump(i).unwrap().abs() < 1e-12);
        }
    }

    #[test]
    fn bad_polylines_are_refused() {
        let cfg = CornerConfig {
            radius: 5.0f64,
            max_sharpness: None,
        };
        let r = corner_path::<f64, 8, 4>(&[(0.0, 0.0), (0.0, 0.0)], &cfg);
        assert_eq!(r.err(), Some(CornerError::Repeated { index: 1 }));
        let r = corner_path::<f64, 8, 4>(&[(0.0, 0.0), (10.0, 0.0), (0.0, 0.0)], &cfg);
        assert_eq!(r.err(), Some(CornerError::Reversal { index: 1 }));
        let r = corner_path::<f64, 8, 4>(&[(0.0, 0.0), (3.0, 0.0), (3.0, 3.0)], &cfg);
        assert_eq!(r.err(), Some(CornerError::LegTooShort { index: 1 }));
        let r = corner_path::<f64, 8, 4>(&[(0.0, 0.0), (f64::NAN, 0.0)], &cfg);
        assert_eq!(r.err(), Some(CornerError::NonFinite { index: 1 }));
    }
}
