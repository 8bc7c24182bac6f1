//! Sequence numbers: a lost, a repeated and a reordered frame told apart.

use crate::io::link::LinkError;

/// Frames further ahead than this count as lost; further behind as
/// reordered (half the u16 range, the usual serial-number arithmetic).
const HALF: u16 = 0x8000;

/// Checks the sequence numbers of one direction of the link.
///
/// The first frame after [`SequenceCheck::new`] or
/// [`SequenceCheck::reset`] sets the count. Then a frame with the next
/// number is accepted; one ahead of it is accepted and reported as
/// [`LinkError::Lost`] (the count moves on to it); the number just before
/// is [`LinkError::Repeated`] and an older one [`LinkError::Reordered`]
/// (neither moves the count: the frame is to be dropped).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct SequenceCheck {
    expected: Option<u16>,
}

impl SequenceCheck {
    /// A check that takes whatever number comes first.
    pub const fn new() -> Self {
        Self { expected: None }
    }

    /// A check that expects `first` next (0 after a device reset).
    pub const fn expecting(first: u16) -> Self {
        Self {
            expected: Some(first),
        }
    }

    /// Forgets the count (after a reset of the other side).
    pub fn reset(&mut self) {
        self.expected = None;
    }

    /// Checks `seq` against the count; see the type's description.
    pub fn check(&mut self, seq: u16) -> Result<(), LinkError> {
        let Some(expected) = self.expected else {
            self.expected = Some(seq.wrapping_add(1));
            return Ok(());
        };
        let ahead = seq.wrapping_sub(expected);
        if ahead == 0 {
            self.expected = Some(seq.wrapping_add(1));
            Ok(())
        } else if ahead == u16::MAX {
            Err(LinkError::Repeated { found: seq })
        } else if ahead < HALF {
            self.expected = Some(seq.wrapping_add(1));
            Err(LinkError::Lost {
                expected,
                found: seq,
            })
        } else {
            Err(LinkError::Reordered {
                expected,
                found: seq,
            })
        }
    }
}
