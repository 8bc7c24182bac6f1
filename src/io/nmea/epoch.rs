//! The epoch assembler: the sentences of one receiver epoch into a [`Fix`]
//! in the local frame, with its quality.
//!
//! An epoch is the set of sentences with one UTC time (GGA, RMC, GST carry
//! it; VTG and HDT, which do not, join the epoch being collected). It is
//! complete, and its fix ready, when its GGA, a speed (RMC or VTG) and a
//! heading are in (and its GST, if asked for); a GGA with quality 0 makes it a "no fix" epoch at
//! once. The fix is stamped with the local time its first sentence began
//! to arrive, less the receiver's output latency you configure, so it
//! lies on the clock of `now`.
//!
//! The geodesy runs in `f64` (once per epoch, not per control cycle).

use crate::geo::geodesy::{Geodetic, LocalFrame};
use crate::geo::lever_arm::{control_point, LeverArm};
use crate::guide::cycle::{Fix, FixQuality, FixUpdate, Solution};
use crate::guide::time::Micros;
use crate::io::nmea::sentence::{Gga, Gst, Hdt, Rmc, Sentence, TimeOfDay, Vtg};
use crate::num::real::Real;

/// Metres per second in one knot (1852 m per hour, by definition).
const M_S_PER_KNOT: f64 = 1852.0 / 3600.0;

/// Where the heading comes from.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum HeadingSource {
    /// HDT only (a dual-antenna receiver); an epoch waits for its HDT.
    TrueHeading,
    /// Course over ground (RMC or VTG) above `min_speed_m_s`; below it
    /// the last heading is kept (none before the first: no fix).
    Course {
        /// Slowest speed at which course over ground is trusted, m/s (> 0).
        min_speed_m_s: f64,
    },
}

/// Assembler settings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EpochConfig<T> {
    /// The local frame the path is in.
    pub frame: LocalFrame,
    /// Antenna position relative to the control point (body axes, metres).
    pub arm: LeverArm<T>,
    /// The heading's source.
    pub heading: HeadingSource,
    /// Receiver output latency, us: from the epoch's measurement to the
    /// first byte of its first sentence.
    pub latency_us: u32,
    /// Wait for each epoch's GST (for the position sigma).
    pub expect_gst: bool,
}

#[derive(Debug, Clone, Copy, Default)]
struct Partial {
    /// Sentences taken into this epoch.
    count: u8,
    time: Option<TimeOfDay>,
    started: Micros,
    gga: Option<Gga>,
    rmc: Option<Rmc>,
    vtg: Option<Vtg>,
    hdt: Option<Hdt>,
    gst: Option<Gst>,
    done: bool,
}

impl Partial {
    fn is_empty(&self) -> bool {
        self.count == 0
    }
}

/// Sentences in, fixes out; see the module docs.
///
/// ```
/// use kappaline::io::nmea::{EpochAssembler, EpochConfig, HeadingSource, NmeaReader};
/// use kappaline::{FixUpdate, Geodetic, LeverArm, LocalFrame, Micros, Solution};
/// # fn main() -> Result<(), Box<dyn core::error::Error>> {
/// let frame = LocalFrame::new(Geodetic::from_degrees(48.1173, 11.0 + 31.0 / 60.0, 592.3)?)?;
/// let mut epochs = EpochAssembler::new(EpochConfig {
///     frame,
///     arm: LeverArm::new(0.0f64, 0.0, 0.0)?,
///     heading: HeadingSource::Course { min_speed_m_s: 0.5 },
///     latency_us: 0,
///     expect_gst: false,
/// });
/// let mut reader = NmeaReader::new();
/// let text = b"$GPGGA,123519,4807.038,N,01131.000,E,4,08,0.9,545.4,M,46.9,M,,*42\r\n\
///              $GPRMC,123519,A,4807.038,N,01131.000,E,022.4,084.4,230394,003.1,W*6A\r\n";
/// for &b in text.iter() {
///     if let Some(Ok(s)) = reader.push(b) {
///         epochs.push(&s, Micros(1_000));
///     }
/// }
/// let FixUpdate::New(fix) = epochs.take() else { panic!() };
/// assert_eq!(fix.quality.solution, Solution::Fixed);
/// assert!(fix.x.abs() < 1e-6 && fix.y.abs() < 1e-6); // at the frame's origin
/// assert!(matches!(epochs.take(), FixUpdate::Unchanged)); // nothing new since
/// # Ok(()) }
/// ```
#[derive(Debug, Clone)]
pub struct EpochAssembler<T> {
    config: EpochConfig<T>,
    epoch: Partial,
    ready: Option<FixUpdate<T>>,
    /// UTC time of the epoch whose update is (or was last) ready.
    ready_time: Option<TimeOfDay>,
    last_heading: Option<f64>,
}

impl<T: Real> EpochAssembler<T> {
    /// An assembler with no epoch yet.
    pub fn new(config: EpochConfig<T>) -> Self {
        Self {
            config,
            epoch: Partial::default(),
            ready: None,
            ready_time: None,
            last_heading: None,
        }
    }

    /// Takes a sentence that began to arrive at `at` (local clock).
    pub fn push(&mut self, sentence: &Sentence, at: Micros) {
        let time = match sentence {
            Sentence::Gga(_, g) => g.time,
            Sentence::Rmc(_, r) => r.time,
            Sentence::Gst(_, g) => g.time,
            Sentence::Vtg(..) | Sentence::Hdt(..) => None,
        };
        match (time, self.epoch.time) {
            // The same epoch.
            (Some(t), Some(current)) if t == current => {}
            // A new epoch: the one before is dropped if it never completed.
            (Some(_), Some(_)) => self.restart(time, at),
            (Some(_), None) if self.epoch.done => self.restart(time, at),
            // Untimed sentences (VTG, HDT) came first: they belong to it.
            (Some(_), None) => self.epoch.time = time,
            // VTG or HDT after a finished epoch: the start of the next one.
            (None, _) if self.epoch.done => self.restart(None, at),
            (None, _) => {}
        }
        if self.epoch.is_empty() {
            self.epoch.started = at;
        }
        let e = &mut self.epoch;
        e.count = e.count.saturating_add(1);
        match *sentence {
            Sentence::Gga(_, g) => e.gga = Some(g),
            Sentence::Rmc(_, r) => e.rmc = Some(r),
            Sentence::Vtg(_, v) => e.vtg = Some(v),
            Sentence::Hdt(_, h) => e.hdt = Some(h),
            Sentence::Gst(_, g) => e.gst = Some(g),
        }
        if !self.epoch.done {
            if let Some(update) = self.complete() {
                self.epoch.done = true;
                self.ready = Some(update);
                self.ready_time = self.epoch.time;
            }
        }
    }

    fn restart(&mut self, time: Option<TimeOfDay>, at: Micros) {
        self.epoch = Partial {
            time,
            started: at,
            ..Partial::default()
        };
    }

    /// The newest epoch's fix since the last call ([`FixUpdate::New`], or
    /// [`FixUpdate::NoFix`] if the receiver had none), else
    /// [`FixUpdate::Unchanged`]: what one control cycle hands to
    /// [`crate::Guidance::step`].
    pub fn take(&mut self) -> FixUpdate<T> {
        self.ready.take().unwrap_or(FixUpdate::Unchanged)
    }

    /// The receiver's UTC time of day (ms) of the epoch behind the last
    /// update made ready (what [`EpochAssembler::take`] returns or
    /// returned last), if its sentences carried one.
    pub fn fix_epoch_time(&self) -> Option<TimeOfDay> {
        self.ready_time
    }

    /// The UTC time of day of the epoch being collected, ms, if known.
    pub fn epoch_time(&self) -> Option<TimeOfDay> {
        self.epoch.time
    }

    /// The fix of the epoch if it is complete.
    fn complete(&mut self) -> Option<FixUpdate<T>> {
        let e = self.epoch;
        let gga = e.gga?;
        let solution = Solution::from_gga_indicator(gga.quality).unwrap_or(Solution::Invalid);
        let Some(pos) = gga.position.filter(|_| solution != Solution::Invalid) else {
            return Some(FixUpdate::NoFix);
        };
        if self.config.expect_gst && e.gst.is_none() {
            return None;
        }
        let (course, speed) = self.course_and_speed();
        // The speed is part of the fix: wait for its RMC or VTG.
        let speed = speed?;
        let heading = match self.config.heading {
            HeadingSource::TrueHeading => e.hdt?.heading_deg,
            HeadingSource::Course { min_speed_m_s } => {
                let c = course?;
                if speed >= min_speed_m_s {
                    c
                } else {
                    self.last_heading?
                }
            }
        };
        self.last_heading = Some(heading);
        // Reversing: course over ground points backwards against a true heading.
        let backwards = matches!((e.hdt, course), (Some(h), Some(c))
            if libm::cos((h.heading_deg - c).to_radians()) < 0.0);
        let speed = if backwards { -speed } else { speed };
        let height = match (gga.altitude_m, gga.geoid_separation_m) {
            (Some(a), Some(n)) => a + n,
            (Some(a), None) => a,
            _ => self.config.frame.origin().height,
        };
        let enu = Geodetic::from_degrees(pos.lat_deg, pos.lon_deg, height)
            .and_then(|g| self.config.frame.to_enu(&g))
            .ok()?;
        // Clockwise from north to counter-clockwise from east.
        let yaw = wrap(core::f64::consts::FRAC_PI_2 - heading.to_radians());
        let f = T::from_f64;
        let cp = control_point(
            (f(enu.east), f(enu.north), f(enu.up)),
            f(yaw),
            T::ZERO,
            &self.config.arm,
        )
        .ok()?;
        let sigma = match e.gst {
            Some(g) => match (g.sigma_lat_m, g.sigma_lon_m) {
                (Some(a), Some(b)) => Some(f(a.max(b))),
                _ => None,
            },
            None => None,
        };
        let quality = FixQuality {
            solution,
            satellites: gga.satellites,
            hdop: gga.hdop.map(f),
            correction_age: gga.correction_age_s.map(f),
            sigma,
        };
        let time = e.started.sub_micros(self.config.latency_us);
        Some(FixUpdate::New(
            Fix::new(cp.x, cp.y, f(yaw), f(speed), time).with_quality(quality),
        ))
    }

    /// Course over ground (degrees true) and speed (m/s) from RMC, else VTG.
    fn course_and_speed(&self) -> (Option<f64>, Option<f64>) {
        let e = &self.epoch;
        let rmc = e.rmc.filter(|r| r.valid);
        let course = rmc
            .and_then(|r| r.course_deg)
            .or(e.vtg.and_then(|v| v.course_deg));
        let speed = rmc
            .and_then(|r| r.speed_knots)
            .or(e.vtg.and_then(|v| v.speed_knots))
            .map(|k| k * M_S_PER_KNOT)
            .or(e.vtg.and_then(|v| v.speed_kmh).map(|k| k / 3.6));
        (course, speed)
    }
}

/// An angle in radians into `(-pi, pi]`.
fn wrap(a: f64) -> f64 {
    let tau = core::f64::consts::TAU;
    let w = a - tau * libm::floor((a + core::f64::consts::PI) / tau);
    if w <= -core::f64::consts::PI {
        w + tau
    } else {
        w
    }
}
