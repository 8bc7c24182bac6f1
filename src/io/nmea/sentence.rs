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

/// Most significant digits a field may carry: below 2^53, so the digits
/// are an exact `f64` integer (NMEA 0183 fields carry about a dozen).
const MAX_DIGITS: u32 = 15;

/// A decimal number (sign, digits, at most one point; no exponent).
///
/// Parsed by hand rather than with `str::parse::<f64>`: core's parser
/// keeps bounds checks on its slow path that survive LTO (a panic path
/// the link-time proof in `firmware/nopanic` finds), and costs about 140
/// instructions per byte in soft-float. With at most [`MAX_DIGITS`]
/// digits `m` and `k` of them after the point, `m / 10^k` is one
/// correctly rounded IEEE division of two exact values: the nearest
/// `f64`, as `str::parse` gives (compared in the tests).
fn number(f: &[u8]) -> Option<f64> {
    let (negative, body) = match f.split_first() {
        Some((b'-', rest)) => (true, rest),
        Some((b'+', rest)) => (false, rest),
        _ => (false, f),
    };
    let mut mantissa: u64 = 0;
    let (mut digits, mut after_point, mut seen_point, mut any) = (0u32, 0u32, false, false);
    for &b in body {
        match b {
            b'.' if !seen_point => seen_point = true,
            b'0'..=b'9' => {
                any = true;
                if mantissa == 0 && b == b'0' && !seen_point {
                    continue; // leading zeros carry nothing
                }
                if mantissa != 0 || b != b'0' {
                    digits += 1;
                }
                if digits > MAX_DIGITS || after_point >= POWERS_OF_TEN.len() as u32 - 1 {
                    return None;
                }
                mantissa = mantissa * 10 + u64::from(b - b'0');
                if seen_point {
                    after_point += 1;
                }
            }
            _ => return None,
        }
    }
    let scale = POWERS_OF_TEN.get(after_point as usize).copied()?;
    let v = mantissa as f64 / scale;
    any.then_some(if negative { -v } else { v })
}

/// `10^k` for `k = 0..=22`, each exact in `f64`.
const POWERS_OF_TEN: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

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

#[cfg(test)]
mod tests {
    use super::*;

    /// The field parser against core's `str::parse::<f64>` (the reference:
    /// correctly rounded decimal conversion) on fields of the shapes NMEA
    /// 0183 uses, from a fixed pseudo-random sequence.
    #[test]
    fn number_equals_core_parse_on_nmea_shaped_fields() {
        let mut state: u64 = 0x9E37_79B9_7F4A_7C15;
        let mut next = move || {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            state >> 33
        };
        let mut buf = [0u8; 24];
        for _ in 0..200_000 {
            let mut n = 0;
            if next() % 4 == 0 {
                buf[n] = b'-';
                n += 1;
            }
            let int_digits = (next() % 6) as usize;
            let frac_digits = (next() % 10) as usize;
            for _ in 0..int_digits {
                buf[n] = b'0' + (next() % 10) as u8;
                n += 1;
            }
            if frac_digits > 0 || next() % 2 == 0 {
                buf[n] = b'.';
                n += 1;
            }
            for _ in 0..frac_digits {
                buf[n] = b'0' + (next() % 10) as u8;
                n += 1;
            }
            let field = &buf[..n];
            let text = core::str::from_utf8(field).unwrap();
            let reference = text.parse::<f64>().ok();
            assert_eq!(number(field), reference, "field {text:?}");
        }
    }

    #[test]
    fn number_refuses_what_is_not_a_plain_decimal() {
        for bad in [
            &b""[..],
            b".",
            b"-",
            b"+",
            b"1.2.3",
            b"1e5",
            b"12a",
            b" 1",
            b"--1",
            b"0x10",
        ] {
            assert_eq!(number(bad), None, "{:?}", core::str::from_utf8(bad));
        }
        // More significant digits than an exact f64 integer holds.
        assert_eq!(number(b"1234567890123456"), None);
        assert_eq!(number(b"0000000000000000001.5"), Some(1.5));
        assert_eq!(number(b"-0.000001"), Some(-1e-6));
    }
}
