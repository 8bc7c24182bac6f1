//! Instructions of the receiver input path: the NMEA reader over one
//! epoch's bytes and the epoch assembler turning its sentences into a fix,
//! min / median / max over consecutive epochs.

use kappaline::io::nmea::{EpochAssembler, EpochConfig, HeadingSource, NmeaReader, Sentence};
use kappaline::{FixUpdate, Geodetic, LeverArm, LocalFrame, Micros};

use crate::bench::report;
use crate::meter::{Meter, Stats};
use crate::{check, fail};

/// Consecutive epochs per figure.
const EPOCHS: usize = 256;

/// One epoch of an invented dual-antenna receiver at 10 Hz: GGA (RTK
/// fixed), VTG, HDT and GST, 195 bytes.
const EPOCH: &[u8] =
    b"$GNGGA,080000.10,4715.000298,N,00829.997621,E,4,16,0.7,452.0,M,0.0,M,1.0,1*56\r\n\
$GNVTG,90.00,T,,M,4.860,N,9.000,K,D*1C\r\n\
$GNHDT,90.000,T*12\r\n\
$GNGST,080000.10,0.5,0.02,0.01,0.0,0.012,0.011,0.02*77\r\n";

/// Measures and prints both figures; fails on a sentence or fix missing.
#[inline(never)]
pub fn run(meter: &Meter) {
    let mut reader = NmeaReader::new();
    let mut sentences: [Option<Sentence>; 4] = [None; 4];
    let mut counts = [0u32; EPOCHS];
    for n in counts.iter_mut() {
        let (cost, read) = meter.instructions(|| read_epoch(&mut reader, &mut sentences));
        check(read == 4, "nmea: four sentences per epoch");
        *n = cost;
    }
    report(
        "NMEA reader",
        "one epoch, 4 sentences, 195 B",
        &Stats::of(&mut counts),
    );

    let config = epoch_config();
    let mut fixes = 0usize;
    for (i, n) in counts.iter_mut().enumerate() {
        // Each repetition a new epoch, as the receiver's next one would be.
        let mut epochs = EpochAssembler::<f32>::new(config);
        let at = Micros(i as u32 * 100_000);
        let (cost, update) = meter.instructions(|| {
            for s in sentences.iter().flatten() {
                epochs.push(s, at);
            }
            epochs.take()
        });
        fixes += usize::from(matches!(update, FixUpdate::New(_)));
        *n = cost;
    }
    check(fixes == EPOCHS, "nmea: a fix per epoch");
    report(
        "epoch assembler",
        "4 sentences into a fix",
        &Stats::of(&mut counts),
    );
}

/// Feeds the epoch's bytes; returns how many sentences were read.
fn read_epoch(reader: &mut NmeaReader, sentences: &mut [Option<Sentence>; 4]) -> usize {
    let mut k = 0;
    for &b in EPOCH {
        if let Some(r) = reader.push(b) {
            match (r, sentences.get_mut(k)) {
                (Ok(s), Some(slot)) => *slot = Some(s),
                _ => return k,
            }
            k += 1;
        }
    }
    k
}

fn epoch_config() -> EpochConfig<f32> {
    let Some(frame) = Geodetic::from_degrees(47.25, 8.5, 450.0)
        .ok()
        .and_then(|g| LocalFrame::new(g).ok())
    else {
        fail("nmea: frame")
    };
    let Ok(arm) = LeverArm::new(1.0f32, 0.0, 2.0) else {
        fail("nmea: lever arm")
    };
    EpochConfig {
        frame,
        arm,
        heading: HeadingSource::TrueHeading,
        latency_us: 0,
        expect_gst: true,
    }
}
