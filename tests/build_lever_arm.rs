//! Lever-arm correction (issue 4).

use kappaline::{control_point, LeverArm};
use proptest::prelude::*;

#[test]
fn terrain_compensation_fact() {
    // Common practice (facts of the trade): a 3 m high antenna on a
    // 5 degree side slope sits about 3 sin(5 deg) = 26 cm sideways of the
    // wheels' track.
    let arm = LeverArm::new(0.0, 0.0, 3.0).unwrap();
    for heading in [0.0f64, 1.0, -2.5] {
        let c = control_point((0.0, 0.0, 3.0), heading, 5f64.to_radians(), &arm).unwrap();
        let sideways = c.x.hypot(c.y);
        assert!((sideways - 0.26).abs() < 0.005, "{sideways}");
        // Left side up: the mast leans right, so the wheels are left of the antenna.
        let left = -heading.sin() * c.x + heading.cos() * c.y;
        assert!(left > 0.0);
    }
}

/// 3x3 matrix product, the rotation built the textbook way (no shared code).
fn matmul(a: [[f64; 3]; 3], b: [[f64; 3]; 3]) -> [[f64; 3]; 3] {
    let mut m = [[0.0; 3]; 3];
    for i in 0..3 {
        for j in 0..3 {
            m[i][j] = (0..3).map(|k| a[i][k] * b[k][j]).sum();
        }
    }
    m
}

proptest! {
    #[test]
    fn matches_rotation_matrices(
        heading in -7.0f64..7.0, roll in -1.2f64..1.2,
        ahead in -3.0f64..3.0, left in -2.0f64..2.0, up in 0.0f64..4.0,
    ) {
        // Body-to-level rotation Rz(heading) Rx(roll): the elementary rotation
        // matrices about z and x (right-handed).
        let rz = [[heading.cos(), -heading.sin(), 0.0], [heading.sin(), heading.cos(), 0.0], [0.0, 0.0, 1.0]];
        let rx = [[1.0, 0.0, 0.0], [0.0, roll.cos(), -roll.sin()], [0.0, roll.sin(), roll.cos()]];
        let r = matmul(rz, rx);
        let v = [ahead, left, up];
        let d: Vec<f64> = (0..3).map(|i| (0..3).map(|k| r[i][k] * v[k]).sum()).collect();
        let arm = LeverArm::new(ahead, left, up).unwrap();
        let c = control_point((100.0, -40.0, 2.0), heading, roll, &arm).unwrap();
        prop_assert!((c.x - (100.0 - d[0])).abs() < 1e-12);
        prop_assert!((c.y - (-40.0 - d[1])).abs() < 1e-12);
        prop_assert!((c.z - (2.0 - d[2])).abs() < 1e-12);
    }
}
