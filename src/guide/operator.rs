//! Operator controls: engaged or standing by, manual override, the line
//! followed (a pass of the reference, shifted sideways).
//!
//! The state lives here; [`crate::Guidance`] asks it each cycle whether to
//! steer and which line to steer on.
//!
//! # The line followed
//!
//! The guidance follows the curve `offset` metres left of the reference
//! path (right for negative), with `offset = pass offset + line shift`:
//! the pass `n` of a [`Passes`] (`n * swath`) and the operator's shift of a
//! few centimetres (to meet last season's rows). The fix is moved by
//! `-offset` along the reference's left normal at its foot point, so the
//! tracker, the projections and the supervisor's limits all work on the
//! reference as before, and the cross-track in the command is the one to
//! the offset line. The steering law's feedforward curvature is that of the
//! offset curve, `kappa / (1 - kappa offset)` (see
//! [`crate::build::passes::offset_curvature`]).
//!
//! Limitations: the speed cap reads the reference's curvature, and pure
//! pursuit's goal is taken on the reference moved rigidly by the offset at
//! the foot point (on a curve the goal sits about `offset * lookahead *
//! kappa` off the true offset curve): on strongly curved references with
//! large offsets prefer a pass built as its own path.

use crate::build::passes::{offset_curvature, Pass, PassError, Passes};
use crate::guide::cycle::{Fix, Reason};
use crate::num::real::c;
use crate::num::real::Real;
use crate::path::anchored::Path;
use crate::path::cursor::Cursor;
use crate::path::pose::{PathPoint, Pose};
use crate::track::tracker::Tracker;

/// The operator's settings and the engage state.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Operator<T> {
    engaged: bool,
    /// Why it is not engaged (`Standby` or `ManualOverride`).
    disengaged_by: Reason,
    pass: Option<i32>,
    pass_offset: T,
    shift: T,
}

impl<T: Real> Operator<T> {
    /// Engaged, on the reference itself, no shift.
    pub(crate) fn new() -> Self {
        Self {
            engaged: true,
            disengaged_by: Reason::Standby,
            pass: None,
            pass_offset: T::ZERO,
            shift: T::ZERO,
        }
    }

    pub(crate) fn is_engaged(&self) -> bool {
        self.engaged
    }

    /// The reason to report while disengaged.
    pub(crate) fn disengaged_by(&self) -> Reason {
        self.disengaged_by
    }

    pub(crate) fn engage(&mut self) {
        self.engaged = true;
    }

    pub(crate) fn disengage(&mut self, why: Reason) {
        if self.engaged {
            self.disengaged_by = why;
        }
        self.engaged = false;
    }

    pub(crate) fn pass(&self) -> Option<i32> {
        self.pass
    }

    pub(crate) fn shift(&self) -> T {
        self.shift
    }

    /// The offset of the line followed, metres, left positive.
    pub(crate) fn offset(&self) -> T {
        self.pass_offset + self.shift
    }

    /// Takes pass `pass` (offset `pass_offset`) and line shift `shift` if
    /// the offset line they make has no cusp on `path`; else unchanged.
    pub(crate) fn set_line<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        pass: Option<i32>,
        pass_offset: T,
        shift: T,
    ) -> Result<(), PassError<T>> {
        let total = pass_offset + shift;
        if !(shift.is_finite() && total.is_finite()) {
            return Err(PassError::BadInput);
        }
        Pass {
            index: pass.unwrap_or(0),
            offset: total,
        }
        .check(path)?;
        self.pass = pass;
        self.pass_offset = pass_offset;
        self.shift = shift;
        Ok(())
    }

    /// Pass `n` of `passes` with the current shift.
    pub(crate) fn set_pass<const N: usize>(
        &mut self,
        path: &Path<T, N>,
        passes: &Passes<T>,
        n: i32,
    ) -> Result<(), PassError<T>> {
        self.set_line(path, Some(n), passes.offset(n), self.shift)
    }

    /// The fix moved onto the reference: by `-offset` along the reference's
    /// left normal at the tracker's foot point. Before the tracker has the
    /// path, it acquires it with the loss judged by the distance to the
    /// offset line. A fix it cannot place is returned unchanged (the
    /// tracker then reports the loss).
    pub(crate) fn onto_reference<const N: usize>(
        &self,
        tracker: &mut Tracker<T>,
        path: &Path<T, N>,
        f: Fix<T>,
    ) -> Fix<T> {
        let d = self.offset();
        if d == T::ZERO {
            return f;
        }
        if !tracker.is_acquired() {
            let pose = Pose::new(f.x, f.y, f.heading);
            if tracker.update_offset(path, &pose, d).is_err() {
                return f;
            }
        }
        let p = foot_near(tracker.cursor(), path, f.x, f.y);
        Fix {
            x: f.x + d * p.sin,
            y: f.y - d * p.cos,
            ..f
        }
    }

    /// The feedforward curvature (1/m) and sharpness (1/m^2) of the offset
    /// line for the reference's `kappa` and `sigma` there (per metre along
    /// the offset line: `sigma / (1 - kappa d)^3`); the reference's own if
    /// the line would cusp there.
    pub(crate) fn line_curvature(&self, kappa: T, sigma: T) -> (T, T) {
        let d = self.offset();
        if d == T::ZERO {
            return (kappa, sigma);
        }
        match offset_curvature(kappa, d) {
            Ok(k) => {
                let stretch = T::ONE / (T::ONE - kappa * d);
                (k, sigma * stretch * stretch * stretch)
            }
            Err(_) => (kappa, sigma),
        }
    }
}

/// Newton steps on the foot-point condition from the tracker's last foot:
/// the reference point whose normal passes through `(x, y)`.
pub(crate) const FOOT_STEPS: usize = 2;

/// The foot of `(x, y)` on `path` near `from` ([`FOOT_STEPS`] Newton steps,
/// each one path evaluation): the normal there is the one to shift along.
/// The last foot is a cycle old; on a curve its normal is turned by
/// `kappa * distance driven`, which would leave the shifted fix
/// `offset * (1 - cos)` off (25 um at 2 m, 0.05 1/m and 0.1 m).
fn foot_near<T: Real, const N: usize>(
    from: Cursor<T>,
    path: &Path<T, N>,
    x: T,
    y: T,
) -> PathPoint<T> {
    let mut cursor = from;
    let mut p = cursor.point(path);
    for _ in 0..FOOT_STEPS {
        let along = p.along_offset(x, y);
        let scale = (T::ONE - p.curvature * p.lateral_offset(x, y)).max(c(0.2));
        let step = along / scale;
        if !step.is_finite() {
            break;
        }
        cursor = cursor.moved(path, step).0;
        p = cursor.point(path);
    }
    p
}
