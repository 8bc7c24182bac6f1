//! NMEA 0183 sentences from the sensor model's epochs: GGA (position,
//! solution kind), VTG (course and speed), HDT (true heading), GST
//! (position error statistics). Field layouts as NMEA 0183 defines them;
//! the checksum is the XOR of the characters between `$` and `*`
//! (NMEA 0183, section 5.2.1).

use std::fmt::Write as _;

use kappaline::{Enu, Geodetic, LocalFrame, Solution};

use crate::sim::Measurement;

/// Turns epochs into sentences in the device's local frame.
#[derive(Debug, Clone, Copy)]
pub struct NmeaWriter {
    frame: LocalFrame,
    /// Antenna height above the frame's origin, metres.
    antenna_up: f64,
}

/// The GGA quality indicator of a solution kind (NMEA 0183 GGA field 6).
fn indicator(s: Solution) -> u8 {
    match s {
        Solution::Invalid => 0,
        Solution::Autonomous | Solution::Unrated => 1,
        Solution::Differential => 2,
        Solution::Fixed => 4,
        Solution::Float => 5,
        Solution::Estimated => 6,
        Solution::Manual => 7,
        Solution::Simulated => 8,
    }
}

/// Degrees as `d..dmm.mmmmmmm` with `width` degree digits.
fn degrees_minutes(deg: f64, width: usize) -> String {
    let a = deg.abs();
    let d = a.floor();
    let mut m = (a - d) * 60.0;
    let mut d = d as u32;
    // 59.99999999 rounds up to 60.0000000 at 7 decimals: carry it.
    if m >= 59.999_999_95 {
        m = 0.0;
        d += 1;
    }
    format!("{d:0width$}{m:010.7}")
}

fn sentence(out: &mut Vec<u8>, body: &str) {
    let sum = body.bytes().fold(0u8, |a, b| a ^ b);
    out.extend_from_slice(format!("${body}*{sum:02X}\r\n").as_bytes());
}

impl NmeaWriter {
    /// Sentences in `frame`, the antenna `antenna_up` metres above the
    /// frame's origin.
    pub fn new(frame: LocalFrame, antenna_up: f64) -> Self {
        Self { frame, antenna_up }
    }

    /// The frame of the demo firmware (`firmware/app`): the invented
    /// field's corner at 47.25 N, 8.5 E, 450 m, the antenna 2 m up.
    ///
    /// # Errors
    /// Never for these figures.
    pub fn demo_firmware() -> anyhow::Result<Self> {
        let origin = Geodetic::from_degrees(47.25, 8.5, 450.0)
            .map_err(|e| anyhow::anyhow!("frame origin: {e:?}"))?;
        let frame = LocalFrame::new(origin).map_err(|e| anyhow::anyhow!("frame: {e:?}"))?;
        Ok(Self::new(frame, 2.0))
    }

    /// The local frame the sentences are written in.
    pub fn frame(&self) -> LocalFrame {
        self.frame
    }

    /// The sentences of one epoch, appended to `out`. An epoch whose
    /// position cannot be placed on the ellipsoid gives no sentences.
    pub fn epoch(&self, m: &Measurement, out: &mut Vec<u8>) {
        let enu = Enu {
            east: m.x,
            north: m.y,
            up: self.antenna_up,
        };
        let Ok(g) = self.frame.to_geodetic(&enu) else {
            return;
        };
        let (lat, lon) = (g.lat.to_degrees(), g.lon.to_degrees());
        let t = m.time_s.rem_euclid(86_400.0);
        let (hh, mm, ss) = ((t / 3600.0) as u32, ((t / 60.0) as u32) % 60, t % 60.0);
        let mut utc = String::new();
        let _ = write!(utc, "{hh:02}{mm:02}{ss:05.2}");
        let course = (90.0 - m.heading.to_degrees()).rem_euclid(360.0);
        let speed = m.speed.abs();
        sentence(
            out,
            &format!(
                "GNGGA,{utc},{},{},{},{},{},16,0.7,{:.2},M,0.0,M,,",
                degrees_minutes(lat, 2),
                if lat >= 0.0 { 'N' } else { 'S' },
                degrees_minutes(lon, 3),
                if lon >= 0.0 { 'E' } else { 'W' },
                indicator(m.solution),
                g.height
            ),
        );
        sentence(
            out,
            &format!(
                "GNVTG,{course:.3},T,,M,{:.4},N,{:.4},K,D",
                speed * 3600.0 / 1852.0,
                speed * 3.6
            ),
        );
        sentence(out, &format!("GNHDT,{course:.4},T"));
        let s = m.sigma_m;
        sentence(
            out,
            &format!(
                "GNGST,{utc},{s:.4},{s:.4},{s:.4},0.0,{s:.4},{s:.4},{:.4}",
                2.0 * s
            ),
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// An epoch of the sensor model at `time_s`, 10 m east and 5 m south
    /// of the origin, heading 0.3 rad, 2 m/s, RTK fixed.
    fn epoch_at(time_s: f64) -> Measurement {
        Measurement {
            time_s,
            x: 10.0,
            y: -5.0,
            heading: 0.3,
            speed: 2.0,
            roll: 0.0,
            solution: Solution::Fixed,
            sigma_m: 0.02,
        }
    }

    #[test]
    fn sentences_keep_the_length_limit_checksum_and_field_counts() {
        // NMEA 0183 rules (from memory of the standard's framing: at most 82
        // characters, XOR checksum of the body in two hex digits); that the
        // core reads them back is the next test.
        let w = NmeaWriter::demo_firmware().unwrap();
        let m = epoch_at(3723.4);
        let mut out = Vec::new();
        w.epoch(&m, &mut out);
        let text = String::from_utf8(out).unwrap();
        let lines: Vec<&str> = text.split_terminator("\r\n").collect();
        assert_eq!(lines.len(), 4);
        for l in &lines {
            assert!(
                l.len() + 2 <= 82,
                "NMEA 0183 sentences are at most 82 characters: {l}"
            );
            let (body, sum) = l[1..].split_once('*').unwrap();
            let x = body.bytes().fold(0u8, |a, b| a ^ b);
            assert_eq!(format!("{x:02X}"), sum);
        }
        assert!(lines[0].starts_with("$GNGGA,010203.40,4714.99"));
        assert_eq!(lines[0].split(',').count(), 15);
        // Course: 90 deg - 0.3 rad, clockwise from north.
        assert!(lines[2].starts_with("$GNHDT,72.8113,T"), "{}", lines[2]);
    }

    #[test]
    fn the_core_reader_and_assembler_take_the_epoch() {
        use kappaline::io::nmea::{EpochAssembler, EpochConfig, HeadingSource, NmeaReader};
        use kappaline::{FixUpdate, LeverArm, Micros};
        let w = NmeaWriter::demo_firmware().unwrap();
        let m = epoch_at(12.3);
        let mut out = Vec::new();
        w.epoch(&m, &mut out);
        let mut reader = NmeaReader::new();
        let mut epochs = EpochAssembler::new(EpochConfig {
            frame: w.frame,
            arm: LeverArm::new(0.0f64, 0.0, 2.0).unwrap(),
            heading: HeadingSource::TrueHeading,
            latency_us: 0,
            expect_gst: true,
        });
        for b in out {
            if let Some(s) = reader.push(b) {
                epochs.push(&s.unwrap(), Micros(1000));
            }
        }
        let FixUpdate::New(fix) = epochs.take() else {
            panic!("no fix")
        };
        assert!(
            (fix.x - 10.0).abs() < 1e-3 && (fix.y + 5.0).abs() < 1e-3,
            "{fix:?}"
        );
        assert!((fix.heading - 0.3).abs() < 1e-5, "{fix:?}");
    }

    #[test]
    fn minutes_carry_into_degrees() {
        assert_eq!(degrees_minutes(8.999_999_999_9, 3), "00900.0000000");
        assert_eq!(degrees_minutes(47.5, 2), "4730.0000000");
    }
}
