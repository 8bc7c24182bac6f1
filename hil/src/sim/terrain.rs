//! Ground under the vehicle: a tilted plane with optional waves, which gives
//! the body its roll (and so swings a tall antenna sideways) and, through a
//! crab gain, makes the vehicle slide downhill.
//!
//! Elevation `z(x, y) = gx x + gy y + a sin(2 pi x / lx)` (metres); the roll
//! of a body heading `theta` is `atan(dz/dl)` along its left axis
//! `l = (-sin theta, cos theta)`: positive when the left side is higher
//! (the top of a mast then leans to the right).

use std::f64::consts::TAU;

/// Terrain settings.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Terrain {
    /// Slope of the ground along +x (rise over run, dimensionless).
    pub grade_x: f64,
    /// Slope of the ground along +y (rise over run).
    pub grade_y: f64,
    /// Amplitude of waves running along x, metres (0 for none).
    pub wave_amplitude_m: f64,
    /// Wavelength of those waves, metres (> 0 when the amplitude is not 0).
    pub wave_length_m: f64,
    /// Crab angle per radian of roll (dimensionless, >= 0): the body slides
    /// towards the low side at `crab_gain * roll` radians off its heading.
    pub crab_gain: f64,
}

impl Terrain {
    /// Gradient of the elevation at `(x, y)`, (dz/dx, dz/dy).
    pub fn gradient(&self, x: f64, _y: f64) -> (f64, f64) {
        let mut gx = self.grade_x;
        if self.wave_amplitude_m != 0.0 && self.wave_length_m > 0.0 {
            let k = TAU / self.wave_length_m;
            gx += self.wave_amplitude_m * k * (k * x).cos();
        }
        (gx, self.grade_y)
    }

    /// Body roll at `(x, y)` heading `heading` (rad), radians, positive when
    /// the left side is higher.
    pub fn roll(&self, x: f64, y: f64, heading: f64) -> f64 {
        let (gx, gy) = self.gradient(x, y);
        let (s, c) = heading.sin_cos();
        (-s * gx + c * gy).atan()
    }

    /// Crab angle (rad, CCW positive) for a body with `roll`: it slides to
    /// the low side, i.e. to the right (negative) when the left is higher.
    pub fn crab(&self, roll: f64) -> f64 {
        -self.crab_gain * roll
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn side_slope_rolls_the_body() {
        // Ground rising to the north at 5 degrees; a body heading east has
        // its left (north) side up by 5 degrees.
        let t = Terrain {
            grade_y: 5f64.to_radians().tan(),
            ..Terrain::default()
        };
        assert!((t.roll(0.0, 0.0, 0.0) - 5f64.to_radians()).abs() < 1e-12);
        assert!(t.roll(0.0, 0.0, std::f64::consts::FRAC_PI_2).abs() < 1e-12);
    }
}
