//! The sentences read, field by field, and their errors.
//!
//! Field layouts are those of NMEA 0183 version 4.10 (June 2012), written
//! here from memory of its field definitions; later fields a receiver adds
//! (mode indicators, navigational status) are read where they matter and
//! otherwise ignored.

use core::fmt;

/// Why a sentence was refused. After any of them the reader is ready for
/// the next sentence (it waits for the next `$`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum NmeaError {
    /// The checksum after `*` does not match the sentence.
    BadChecksum,
    /// No `*hh` checksum before the line end (or not two hex digits).
    MissingChecksum,
    /// More than [`crate::io::nmea::MAX_SENTENCE`] characters before the line end.
    TooLong,
    /// A byte that is not printable ASCII inside a sentence.
    NonAscii,
    /// A new `$` before the line end: the sentence before it was cut off.
    Truncated,
    /// A sentence or talker this reader does not handle (its address).
    Unsupported,
    /// A required field is missing or unreadable; the field's number
    /// (1 = the first after the address).
    BadField(u8),
}

impl fmt::Display for NmeaError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            NmeaError::BadChecksum => f.write_str("checksum mismatch"),
            NmeaError::MissingChecksum => f.write_str("no checksum"),
            NmeaError::TooLong => f.write_str("sentence too long"),
            NmeaError::NonAscii => f.write_str("non-ASCII byte in sentence"),
            NmeaError::Truncated => f.write_str("sentence cut off by a new one"),
            NmeaError::Unsupported => f.write_str("unsupported sentence or talker"),
            NmeaError::BadField(n) => write!(f, "field {n} missing or unreadable"),
        }
    }
}

impl core::error::Error for NmeaError {}

/// The talker (the first two letters of the address).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Talker {
    /// GPS (`GP`).
    Gps,
    /// Several constellations combined (`GN`).
    Combined,
    /// GLONASS (`GL`).
    Glonass,
    /// Galileo (`GA`).
    Galileo,
    /// BeiDou (`GB`).
    Beidou,
}

/// A UTC time of day, milliseconds since midnight.
pub type TimeOfDay = u32;

/// A position in degrees (WGS84 as the receiver gives it).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LatLon {
    /// Latitude, degrees, north positive.
    pub lat_deg: f64,
    /// Longitude, degrees, east positive.
    pub lon_deg: f64,
}

/// GGA: the fix.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Gga {
    /// UTC time of the position (field 1).
    pub time: Option<TimeOfDay>,
    /// Position (fields 2-5); `None` when empty (no fix).
    pub position: Option<LatLon>,
    /// Quality indicator (field 6): 0 invalid, 1 GPS, 2 differential,
    /// 3 PPS, 4 RTK fixed, 5 RTK float, 6 estimated, 7 manual, 8 simulator.
    pub quality: u8,
    /// Satellites in use (field 7).
    pub satellites: Option<u8>,
    /// Horizontal dilution of precision (field 8).
    pub hdop: Option<f64>,
    /// Antenna altitude above mean sea level, metres (field 9).
    pub altitude_m: Option<f64>,
    /// Geoid separation (ellipsoid above geoid), metres (field 11).
    pub geoid_separation_m: Option<f64>,
    /// Age of the differential corrections, s (field 13).
    pub correction_age_s: Option<f64>,
}

/// RMC: recommended minimum data.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Rmc {
    /// UTC time (field 1).
    pub time: Option<TimeOfDay>,
    /// Status (field 2): `true` for `A` (valid), `false` for `V`.
    pub valid: bool,
    /// Position (fields 3-6).
    pub position: Option<LatLon>,
    /// Speed over ground, knots (field 7).
    pub speed_knots: Option<f64>,
    /// Course over ground, degrees true, clockwise from north (field 8).
    pub course_deg: Option<f64>,
}

/// VTG: course and speed over ground.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Vtg {
    /// Course over ground, degrees true (field 1).
    pub course_deg: Option<f64>,
    /// Speed over ground, knots (field 5).
    pub speed_knots: Option<f64>,
    /// Speed over ground, km/h (field 7).
    pub speed_kmh: Option<f64>,
}

/// HDT: true heading.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Hdt {
    /// Heading, degrees true, clockwise from north (field 1).
    pub heading_deg: f64,
}

/// GST: pseudorange error statistics.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Gst {
    /// UTC time (field 1).
    pub time: Option<TimeOfDay>,
    /// Standard deviation of the latitude error, metres (field 6).
    pub sigma_lat_m: Option<f64>,
    /// Standard deviation of the longitude error, metres (field 7).
    pub sigma_lon_m: Option<f64>,
    /// Standard deviation of the altitude error, metres (field 8).
    pub sigma_alt_m: Option<f64>,
}

/// One sentence read.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Sentence {
    /// GGA.
    Gga(Talker, Gga),
    /// RMC.
    Rmc(Talker, Rmc),
    /// VTG.
    Vtg(Talker, Vtg),
    /// HDT.
    Hdt(Talker, Hdt),
    /// GST.
    Gst(Talker, Gst),
}

/// The fields after the address, numbered from 1.
struct Fields<'a> {
    body: &'a [u8],
}

impl<'a> Fields<'a> {
    /// Field `n` (1-based), empty if absent.
    fn get(&self, n: u8) -> &'a [u8] {
        self.body
            .split(|b| *b == b',')
            .nth(usize::from(n))
            .unwrap_or(&[])
    }

    fn opt_f64(&self, n: u8) -> Result<Option<f64>, NmeaError> {
        let f = self.get(n);
        if f.is_empty() {
            return Ok(None);
        }
        number(f).map(Some).ok_or(NmeaError::BadField(n))
    }

    fn opt_u8(&self, n: u8) -> Result<Option<u8>, NmeaError> {
        let f = self.get(n);
        if f.is_empty() {
            return Ok(None);
        }
        core::str::from_utf8(f)
            .ok()
            .and_then(|s| s.parse::<u8>().ok())
            .map(Some)
            .ok_or(NmeaError::BadField(n))
    }

    fn time(&self, n: u8) -> Result<Option<TimeOfDay>, NmeaError> {
        let f = self.get(n);
        if f.is_empty() {
            return Ok(None);
        }
        time_of_day(f).map(Some).ok_or(NmeaError::BadField(n))
    }

    /// Latitude and longitude in fields `n .. n + 3`, both or neither.
    fn position(&self, n: u8) -> Result<Option<LatLon>, NmeaError> {
        let (lat, ns, lon, ew) = (
            self.get(n),
            self.get(n + 1),
            self.get(n + 2),
            self.get(n + 3),
        );
        if lat.is_empty() && lon.is_empty() {
            return Ok(None);
        }
        let lat = angle(lat, 90.0).ok_or(NmeaError::BadField(n))?;
        let lat = match ns {
            b"N" => lat,
            b"S" => -lat,
            _ => return Err(NmeaError::BadField(n + 1)),
        };
        let lon = angle(lon, 180.0).ok_or(NmeaError::BadField(n + 2))?;
        let lon = match ew {
            b"E" => lon,
            b"W" => -lon,
            _ => return Err(NmeaError::BadField(n + 3)),
        };
        Ok(Some(LatLon {
            lat_deg: lat,
            lon_deg: lon,
        }))
    }
}

/// A decimal number (sign, digits, at most one point; no exponent).
fn number(f: &[u8]) -> Option<f64> {
    let plain = f
        .iter()
        .enumerate()
        .all(|(i, b)| b.is_ascii_digit() || *b == b'.' || (i == 0 && (*b == b'-' || *b == b'+')));
    if !plain || f.iter().filter(|b| **b == b'.').count() > 1 {
        return None;
    }
    let v = core::str::from_utf8(f).ok()?.parse::<f64>().ok()?;
    v.is_finite().then_some(v)
}

/// `(d)ddmm.mmmm` to degrees, at most `max`.
fn angle(f: &[u8], max: f64) -> Option<f64> {
    let v = number(f)?;
    if v < 0.0 {
        return None;
    }
    let degrees = libm::floor(v / 100.0);
    let minutes = v - degrees * 100.0;
    let deg = degrees + minutes / 60.0;
    (minutes < 60.0 && deg <= max).then_some(deg)
}

/// `hhmmss(.sss)` to milliseconds of the day.
fn time_of_day(f: &[u8]) -> Option<TimeOfDay> {
    let digits = |r: core::ops::Range<usize>| -> Option<u32> {
        let part = f.get(r)?;
        part.iter().try_fold(0u32, |acc, b| {
            b.is_ascii_digit().then(|| acc * 10 + u32::from(b - b'0'))
        })
    };
    let (h, m) = (digits(0..2)?, digits(2..4)?);
    let secs = number(f.get(4..)?)?;
    // 60 allows a leap second.
    if h > 23 || m > 59 || !(0.0..61.0).contains(&secs) || f.get(4..6)?.contains(&b'.') {
        return None;
    }
    let ms = libm::round(secs * 1000.0) as u32;
    Some((h * 3600 + m * 60) * 1000 + ms)
}

fn talker(a: &[u8]) -> Option<Talker> {
    Some(match a {
        b"GP" => Talker::Gps,
        b"GN" => Talker::Combined,
        b"GL" => Talker::Glonass,
        b"GA" => Talker::Galileo,
        b"GB" => Talker::Beidou,
        _ => return None,
    })
}

/// Parses the text between `$` and `*` (checksum already verified).
pub(crate) fn parse(body: &[u8]) -> Result<Sentence, NmeaError> {
    let address = body.split(|b| *b == b',').next().unwrap_or(&[]);
    let (Some(who), Some(what), 5) = (address.get(..2), address.get(2..), address.len()) else {
        return Err(NmeaError::Unsupported);
    };
    let t = talker(who).ok_or(NmeaError::Unsupported)?;
    let f = Fields { body };
    Ok(match what {
        b"GGA" => Sentence::Gga(t, gga(&f)?),
        b"RMC" => Sentence::Rmc(t, rmc(&f)?),
        b"VTG" => Sentence::Vtg(t, vtg(&f)?),
        b"HDT" => Sentence::Hdt(t, hdt(&f)?),
        b"GST" => Sentence::Gst(t, gst(&f)?),
        _ => return Err(NmeaError::Unsupported),
    })
}

fn gga(f: &Fields) -> Result<Gga, NmeaError> {
    let quality = match f.get(6) {
        [d] if d.is_ascii_digit() && *d <= b'8' => d - b'0',
        _ => return Err(NmeaError::BadField(6)),
    };
    let position = f.position(2)?;
    if quality != 0 && position.is_none() {
        return Err(NmeaError::BadField(2));
    }
    Ok(Gga {
        time: f.time(1)?,
        position,
        quality,
        satellites: f.opt_u8(7)?,
        hdop: f.opt_f64(8)?,
        altitude_m: f.opt_f64(9)?,
        geoid_separation_m: f.opt_f64(11)?,
        correction_age_s: f.opt_f64(13)?,
    })
}

fn rmc(f: &Fields) -> Result<Rmc, NmeaError> {
    let valid = match f.get(2) {
        b"A" => true,
        b"V" => false,
        _ => return Err(NmeaError::BadField(2)),
    };
    let position = f.position(3)?;
    if valid && position.is_none() {
        return Err(NmeaError::BadField(3));
    }
    Ok(Rmc {
        time: f.time(1)?,
        valid,
        position,
        speed_knots: f.opt_f64(7)?,
        course_deg: f.opt_f64(8)?,
    })
}

fn vtg(f: &Fields) -> Result<Vtg, NmeaError> {
    Ok(Vtg {
        course_deg: f.opt_f64(1)?,
        speed_knots: f.opt_f64(5)?,
        speed_kmh: f.opt_f64(7)?,
    })
}

fn hdt(f: &Fields) -> Result<Hdt, NmeaError> {
    let heading_deg = f.opt_f64(1)?.ok_or(NmeaError::BadField(1))?;
    if f.get(2) != b"T" || !(0.0..=360.0).contains(&heading_deg) {
        return Err(NmeaError::BadField(2));
    }
    Ok(Hdt { heading_deg })
}

fn gst(f: &Fields) -> Result<Gst, NmeaError> {
    let sigma = |n| -> Result<Option<f64>, NmeaError> {
        match f.opt_f64(n)? {
            Some(v) if v < 0.0 => Err(NmeaError::BadField(n)),
            v => Ok(v),
        }
    };
    Ok(Gst {
        time: f.time(1)?,
        sigma_lat_m: sigma(6)?,
        sigma_lon_m: sigma(7)?,
        sigma_alt_m: sigma(8)?,
    })
}
