//! Byte-at-a-time framing: `$`, the sentence, `*hh`, CR LF.

use crate::io::nmea::sentence::{parse, NmeaError, Sentence};

/// Longest sentence read: 82 characters from `$` to LF inclusive (the
/// NMEA 0183 limit), so 79 between `$` and CR.
pub const MAX_SENTENCE: usize = 82;

/// Bytes kept between `$` and CR: the address, fields and `*hh`.
const BODY: usize = MAX_SENTENCE - 3;

/// A byte-at-a-time NMEA 0183 reader with a fixed buffer: feed it the
/// receiver's bytes as they come (from the UART's receive interrupt, say);
/// it answers with a sentence or a typed error at each line end, and is
/// ready for the next sentence after either.
///
/// ```
/// use kappaline::io::nmea::{NmeaReader, Sentence};
/// let mut r = NmeaReader::new();
/// let mut got = None;
/// for &b in b"$GPHDT,274.07,T*03\r\n" {
///     if let Some(s) = r.push(b) {
///         got = Some(s);
///     }
/// }
/// assert!(matches!(got, Some(Ok(Sentence::Hdt(_, h))) if h.heading_deg == 274.07));
/// ```
#[derive(Debug, Clone)]
pub struct NmeaReader {
    buf: [u8; BODY],
    len: usize,
    state: State,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum State {
    /// Waiting for `$` (also after an error, until the next one).
    Idle,
    /// Inside a sentence.
    Body,
    /// After CR, expecting LF.
    Cr,
}

impl Default for NmeaReader {
    fn default() -> Self {
        Self::new()
    }
}

impl NmeaReader {
    /// A reader waiting for the first `$`.
    pub const fn new() -> Self {
        Self {
            buf: [0; BODY],
            len: 0,
            state: State::Idle,
        }
    }

    /// Takes one byte. Returns `Some` at the end of a sentence (LF, or a
    /// bare CR followed by anything) or when one is refused, `None`
    /// otherwise. Bytes outside sentences are skipped.
    pub fn push(&mut self, byte: u8) -> Option<Result<Sentence, NmeaError>> {
        match (self.state, byte) {
            (State::Idle, b'$') => self.start(),
            (State::Idle, _) => None,
            (State::Body, b'$') | (State::Cr, b'$') => {
                let was_cr = self.state == State::Cr;
                let done = if was_cr { Some(self.finish()) } else { None };
                self.start();
                Some(done.unwrap_or(Err(NmeaError::Truncated)))
            }
            (State::Body, b'\r') => {
                self.state = State::Cr;
                None
            }
            (State::Body | State::Cr, b'\n') => {
                self.state = State::Idle;
                Some(self.finish())
            }
            (State::Cr, _) => {
                // A CR not followed by LF: take the sentence, drop the byte.
                self.state = State::Idle;
                Some(self.finish())
            }
            (State::Body, b) if !(0x20..0x7f).contains(&b) => self.fail(NmeaError::NonAscii),
            (State::Body, b) => match self.buf.get_mut(self.len) {
                Some(slot) => {
                    *slot = b;
                    self.len += 1;
                    None
                }
                None => self.fail(NmeaError::TooLong),
            },
        }
    }

    fn start(&mut self) -> Option<Result<Sentence, NmeaError>> {
        self.len = 0;
        self.state = State::Body;
        None
    }

    fn fail(&mut self, e: NmeaError) -> Option<Result<Sentence, NmeaError>> {
        self.len = 0;
        self.state = State::Idle;
        Some(Err(e))
    }

    fn finish(&mut self) -> Result<Sentence, NmeaError> {
        let n = self.len;
        self.len = 0;
        let text = self.buf.get(..n).unwrap_or(&[]);
        let body = checked(text)?;
        parse(body)
    }
}

/// The text before `*hh` if the checksum (XOR of every byte between `$`
/// and `*`, two hex digits) matches.
fn checked(text: &[u8]) -> Result<&[u8], NmeaError> {
    let star = text
        .iter()
        .rposition(|b| *b == b'*')
        .ok_or(NmeaError::MissingChecksum)?;
    let (body, tail) = (
        text.get(..star).unwrap_or(&[]),
        text.get(star + 1..).unwrap_or(&[]),
    );
    let [hi, lo] = tail else {
        return Err(NmeaError::MissingChecksum);
    };
    let hex = |c: u8| (c as char).to_digit(16);
    let (Some(h), Some(l)) = (hex(*hi), hex(*lo)) else {
        return Err(NmeaError::MissingChecksum);
    };
    let sum = body.iter().fold(0u8, |a, b| a ^ b);
    if u32::from(sum) == h * 16 + l {
        Ok(body)
    } else {
        Err(NmeaError::BadChecksum)
    }
}
