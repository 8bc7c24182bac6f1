//! Receiver input: NMEA 0183 sentences read a byte at a time
//! ([`NmeaReader`]) and assembled per epoch into a [`crate::Fix`] in the
//! local frame ([`EpochAssembler`]).
//!
//! Sentences: GGA, RMC, VTG, HDT and GST from the talkers GP, GN, GL, GA
//! and GB; checksum required. Field layouts follow NMEA 0183 version
//! 4.10, written from memory of the standard's field definitions. Every
//! malformed or unsupported sentence is a typed [`NmeaError`] after which
//! the reader is ready for the next one. Fixed buffer, no allocation.
//!
//! Behind the `nmea` feature.

pub mod epoch;
pub mod reader;
pub mod sentence;

pub use epoch::{EpochAssembler, EpochConfig, HeadingSource};
pub use reader::{NmeaReader, MAX_SENTENCE};
pub use sentence::{Gga, Gst, Hdt, LatLon, NmeaError, Rmc, Sentence, Talker, TimeOfDay, Vtg};
