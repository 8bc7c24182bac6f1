//! Why a tracker update or configuration was refused. A refused update
//! leaves the tracker unchanged.

use core::fmt;

/// Why a tracker update or configuration was refused.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum TrackError {
    /// The pose or a distance given is NaN or infinite.
    NonFinite,
    /// A configuration value is negative, zero where it must be positive, or
    /// otherwise out of range; or a position beyond twice
    /// [`crate::MAX_COORDINATE`].
    OutOfRange,
}

impl fmt::Display for TrackError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            TrackError::NonFinite => f.write_str("non-finite input"),
            TrackError::OutOfRange => f.write_str("configuration value out of range"),
        }
    }
}

impl core::error::Error for TrackError {}
