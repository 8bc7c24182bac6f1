//! The receiver side, run in the UART's receive interrupt: bytes into the
//! NMEA reader, sentences into the epoch assembler, each sentence stamped
//! with the time its `$` arrived. Board-independent.

use kappaline::io::nmea::{EpochAssembler, EpochConfig, NmeaError, NmeaReader};
use kappaline::{FixUpdate, Micros};

/// Counts of what the receiver refused, for the status output.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Refused {
    /// Sentences refused by the reader (checksum, format, unsupported).
    pub sentences: u32,
}

/// Reader, assembler and the arrival time of the sentence being read.
pub struct Receiver {
    reader: NmeaReader,
    epochs: EpochAssembler<f32>,
    started: Micros,
    refused: Refused,
}

impl Receiver {
    /// A receiver assembling fixes with `config`.
    pub fn new(config: EpochConfig<f32>) -> Self {
        Self {
            reader: NmeaReader::new(),
            epochs: EpochAssembler::new(config),
            started: Micros(0),
            refused: Refused::default(),
        }
    }

    /// One byte from the UART at time `now`.
    pub fn on_byte(&mut self, byte: u8, now: Micros) {
        if byte == b'$' {
            self.started = now;
        }
        match self.reader.push(byte) {
            Some(Ok(sentence)) => self.epochs.push(&sentence, self.started),
            Some(Err(NmeaError::Unsupported)) | None => {}
            Some(Err(_)) => self.refused.sentences = self.refused.sentences.wrapping_add(1),
        }
    }

    /// The fix update for this control cycle (see `EpochAssembler::take`).
    pub fn take(&mut self) -> FixUpdate<f32> {
        self.epochs.take()
    }

    /// What was refused so far.
    pub fn refused(&self) -> Refused {
        self.refused
    }
}
