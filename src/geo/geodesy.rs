//! WGS84 geodetic coordinates, Earth-centred Earth-fixed (ECEF) and a local
//! east-north-up (ENU) tangent plane around an origin, in `f64`.
//!
//! Constants: WGS84 as defined in NIMA TR8350.2 (3rd ed., 2000), table 3.1:
//! semi-major axis `a = 6378137.0 m`, flattening `1/f = 298.257223563`;
//! derived `b = a (1 - f)`, `e^2 = f (2 - f)`.
//!
//! * geodetic to ECEF: the closed form with the prime-vertical radius
//!   `N = a / sqrt(1 - e^2 sin^2 lat)`;
//! * ECEF to geodetic: Bowring's parametric-latitude iteration (Bowring,
//!   "Transformation from spatial to geographical coordinates", Survey
//!   Review 23(181), 1976), four fixed iterations (each gains many digits;
//!   the first already gives sub-millimetre height for terrestrial points),
//!   then the height `p cos lat + z sin lat - a sqrt(1 - e^2 sin^2 lat)`,
//!   which holds at every latitude, poles included;
//! * ECEF to ENU: the rotation by the origin's longitude and latitude of the
//!   offset from the origin's ECEF position.
//!
//! In `f64` the round trip loses nothing measurable (ECEF coordinates of
//! about 6.4e6 m carry about 1e-9 m of rounding), so points within 10 km of
//! the origin are placed to far better than 1 mm (checked against
//! geographiclib-rs in `tests/build_geodesy.rs`). On a device without an
//! FPU `f64` is soft-float: convert fixes at the GNSS rate, not in a tight
//! loop, and hand the local metres to the `f32` path code.
//!
//! ```
//! use kappaline::{Geodetic, LocalFrame};
//! # fn main() -> Result<(), kappaline::GeoError> {
//! let origin = Geodetic::from_degrees(47.25, 8.5, 450.0)?; // an invented field
//! let frame = LocalFrame::new(origin)?;
//! let p = Geodetic::from_degrees(47.251, 8.502, 452.0)?;
//! let enu = frame.to_enu(&p)?;
//! assert!(enu.east > 140.0 && enu.east < 160.0 && enu.north > 100.0 && enu.north < 120.0);
//! let back = frame.to_geodetic(&enu)?;
//! assert!((back.lat - p.lat).abs() < 1e-13 && (back.height - p.height).abs() < 1e-6);
//! # Ok(()) }
//! ```

/// WGS84 semi-major axis, metres (NIMA TR8350.2, table 3.1).
pub const WGS84_A: f64 = 6_378_137.0;
/// WGS84 inverse flattening (NIMA TR8350.2, table 3.1).
pub const WGS84_INV_F: f64 = 298.257_223_563;
/// WGS84 flattening.
pub const WGS84_F: f64 = 1.0 / WGS84_INV_F;
/// WGS84 semi-minor axis, metres: `a (1 - f)`.
pub const WGS84_B: f64 = WGS84_A * (1.0 - WGS84_F);
/// WGS84 first eccentricity squared: `f (2 - f)`.
pub const WGS84_E2: f64 = WGS84_F * (2.0 - WGS84_F);
/// WGS84 second eccentricity squared: `e^2 / (1 - e^2)`.
const WGS84_EP2: f64 = WGS84_E2 / (1.0 - WGS84_E2);

/// Bowring iterations (fixed: no loop depends on the data).
const BOWRING_STEPS: u32 = 4;

/// Why a conversion was refused.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum GeoError {
    /// An input is NaN or infinite.
    NonFinite,
    /// Latitude outside [-90, 90] degrees, or a height or distance beyond
    /// 1e7 m (not near the Earth's surface, where the ENU frame is meant for).
    OutOfRange,
}

impl core::fmt::Display for GeoError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            GeoError::NonFinite => f.write_str("non-finite coordinate"),
            GeoError::OutOfRange => f.write_str("coordinate out of range"),
        }
    }
}

impl core::error::Error for GeoError {}

/// Largest height, ENU component or ECEF offset accepted, metres.
const MAX_DISTANCE: f64 = 1e7;

/// A WGS84 geodetic position: latitude and longitude in radians, height
/// above the ellipsoid in metres.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Geodetic {
    /// Latitude, radians, north positive, in [-pi/2, pi/2].
    pub lat: f64,
    /// Longitude, radians, east positive.
    pub lon: f64,
    /// Height above the WGS84 ellipsoid, metres.
    pub height: f64,
}

impl Geodetic {
    /// A position from radians and metres.
    ///
    /// # Errors
    /// [`GeoError::NonFinite`], [`GeoError::OutOfRange`] (latitude beyond
    /// +-pi/2, |height| > 1e7 m).
    pub fn new(lat: f64, lon: f64, height: f64) -> Result<Self, GeoError> {
        let g = Self { lat, lon, height };
        g.check()?;
        Ok(g)
    }

    /// A position from degrees and metres.
    ///
    /// # Errors
    /// As [`Geodetic::new`].
    pub fn from_degrees(lat_deg: f64, lon_deg: f64, height: f64) -> Result<Self, GeoError> {
        let k = core::f64::consts::PI / 180.0;
        Self::new(lat_deg * k, lon_deg * k, height)
    }

    fn check(&self) -> Result<(), GeoError> {
        if !(self.lat.is_finite() && self.lon.is_finite() && self.height.is_finite()) {
            return Err(GeoError::NonFinite);
        }
        let half_pi = core::f64::consts::FRAC_PI_2;
        if self.lat.abs() > half_pi || self.height.abs() > MAX_DISTANCE {
            return Err(GeoError::OutOfRange);
        }
        Ok(())
    }

    /// Earth-centred Earth-fixed coordinates, metres.
    ///
    /// # Errors
    /// As [`Geodetic::new`] (for a value built by hand).
    pub fn to_ecef(&self) -> Result<Ecef, GeoError> {
        self.check()?;
        let (sl, cl) = libm::sincos(self.lat);
        let (so, co) = libm::sincos(self.lon);
        let n = WGS84_A / libm::sqrt(1.0 - WGS84_E2 * sl * sl);
        Ok(Ecef {
            x: (n + self.height) * cl * co,
            y: (n + self.height) * cl * so,
            z: (n * (1.0 - WGS84_E2) + self.height) * sl,
        })
    }
}

/// Earth-centred Earth-fixed coordinates, metres.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Ecef {
    /// Towards latitude 0, longitude 0, metres.
    pub x: f64,
    /// Towards latitude 0, longitude 90 degrees east, metres.
    pub y: f64,
    /// Towards the north pole, metres.
    pub z: f64,
}

impl Ecef {
    /// The geodetic position (Bowring's iteration, see the module docs).
    ///
    /// # Errors
    /// [`GeoError::NonFinite`]; [`GeoError::OutOfRange`] for points farther
    /// than 1e7 m from the ellipsoid's surface region (including the
    /// Earth's centre, where latitude is undefined).
    pub fn to_geodetic(&self) -> Result<Geodetic, GeoError> {
        if !(self.x.is_finite() && self.y.is_finite() && self.z.is_finite()) {
            return Err(GeoError::NonFinite);
        }
        let p = libm::hypot(self.x, self.y);
        let r = libm::hypot(p, self.z);
        if !(r > WGS84_A - MAX_DISTANCE * 0.5 && r < WGS84_A + MAX_DISTANCE) {
            return Err(GeoError::OutOfRange);
        }
        let (a, b, z) = (WGS84_A, WGS84_B, self.z);
        // Parametric latitude u: tan u = (b / a) tan lat.
        let mut u = libm::atan2(a * z, b * p);
        let mut lat = 0.0;
        for _ in 0..BOWRING_STEPS {
            let (su, cu) = libm::sincos(u);
            lat = libm::atan2(
                z + WGS84_EP2 * b * su * su * su,
                p - WGS84_E2 * a * cu * cu * cu,
            );
            let (sl, cl) = libm::sincos(lat);
            u = libm::atan2(b * sl, a * cl);
        }
        let (sl, cl) = libm::sincos(lat);
        let height = p * cl + z * sl - a * libm::sqrt(1.0 - WGS84_E2 * sl * sl);
        Ok(Geodetic {
            lat,
            lon: libm::atan2(self.y, self.x),
            height,
        })
    }
}

/// East, north, up in metres from a local frame's origin.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Enu {
    /// East, metres (the path's `x`).
    pub east: f64,
    /// North, metres (the path's `y`).
    pub north: f64,
    /// Up along the origin's ellipsoid normal, metres.
    pub up: f64,
}

/// A local tangent plane (east-north-up) at an origin.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LocalFrame {
    origin: Geodetic,
    origin_ecef: Ecef,
    sin_lat: f64,
    cos_lat: f64,
    sin_lon: f64,
    cos_lon: f64,
}

impl LocalFrame {
    /// The frame at `origin`.
    ///
    /// # Errors
    /// As [`Geodetic::new`].
    pub fn new(origin: Geodetic) -> Result<Self, GeoError> {
        let origin_ecef = origin.to_ecef()?;
        let (sin_lat, cos_lat) = libm::sincos(origin.lat);
        let (sin_lon, cos_lon) = libm::sincos(origin.lon);
        Ok(Self {
            origin,
            origin_ecef,
            sin_lat,
            cos_lat,
            sin_lon,
            cos_lon,
        })
    }

    /// The origin.
    pub fn origin(&self) -> Geodetic {
        self.origin
    }

    /// ECEF to local ENU, metres.
    ///
    /// # Errors
    /// [`GeoError::NonFinite`].
    pub fn ecef_to_enu(&self, p: &Ecef) -> Result<Enu, GeoError> {
        if !(p.x.is_finite() && p.y.is_finite() && p.z.is_finite()) {
            return Err(GeoError::NonFinite);
        }
        let dx = p.x - self.origin_ecef.x;
        let dy = p.y - self.origin_ecef.y;
        let dz = p.z - self.origin_ecef.z;
        let t = self.cos_lon * dx + self.sin_lon * dy;
        Ok(Enu {
            east: -self.sin_lon * dx + self.cos_lon * dy,
            north: -self.sin_lat * t + self.cos_lat * dz,
            up: self.cos_lat * t + self.sin_lat * dz,
        })
    }

    /// Local ENU to ECEF, metres.
    ///
    /// # Errors
    /// [`GeoError::NonFinite`], [`GeoError::OutOfRange`] (a component above 1e7 m).
    pub fn enu_to_ecef(&self, e: &Enu) -> Result<Ecef, GeoError> {
        if !(e.east.is_finite() && e.north.is_finite() && e.up.is_finite()) {
            return Err(GeoError::NonFinite);
        }
        if e.east.abs().max(e.north.abs()).max(e.up.abs()) > MAX_DISTANCE {
            return Err(GeoError::OutOfRange);
        }
        let t = -self.sin_lat * e.north + self.cos_lat * e.up;
        Ok(Ecef {
            x: self.origin_ecef.x - self.sin_lon * e.east + self.cos_lon * t,
            y: self.origin_ecef.y + self.cos_lon * e.east + self.sin_lon * t,
            z: self.origin_ecef.z + self.cos_lat * e.north + self.sin_lat * e.up,
        })
    }

    /// Geodetic to local ENU, metres.
    ///
    /// # Errors
    /// As [`Geodetic::new`].
    pub fn to_enu(&self, p: &Geodetic) -> Result<Enu, GeoError> {
        self.ecef_to_enu(&p.to_ecef()?)
    }

    /// Local ENU to geodetic.
    ///
    /// # Errors
    /// As [`LocalFrame::enu_to_ecef`] and [`Ecef::to_geodetic`].
    pub fn to_geodetic(&self, e: &Enu) -> Result<Geodetic, GeoError> {
        self.enu_to_ecef(e)?.to_geodetic()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn refuses_bad_input() {
        assert_eq!(Geodetic::new(f64::NAN, 0.0, 0.0), Err(GeoError::NonFinite));
        assert_eq!(Geodetic::new(1.6, 0.0, 0.0), Err(GeoError::OutOfRange));
        assert_eq!(
            Ecef {
                x: 0.0,
                y: 0.0,
                z: 0.0
            }
            .to_geodetic(),
            Err(GeoError::OutOfRange)
        );
        let f = LocalFrame::new(Geodetic::default()).unwrap();
        assert_eq!(
            f.to_geodetic(&Enu {
                east: f64::INFINITY,
                north: 0.0,
                up: 0.0
            }),
            Err(GeoError::NonFinite)
        );
    }

    #[test]
    fn poles_round_trip() {
        for lat in [90.0, -90.0, 89.9999] {
            let g = Geodetic::from_degrees(lat, 30.0, 100.0).unwrap();
            let back = g.to_ecef().unwrap().to_geodetic().unwrap();
            assert!((back.lat - g.lat).abs() < 1e-14);
            assert!((back.height - 100.0).abs() < 1e-8);
        }
    }
}
