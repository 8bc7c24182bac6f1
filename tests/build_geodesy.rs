//! Geodesy (issue 4) against published constants (NIMA TR8350.2), the ECEF
//! example of the GeographicLib CartConvert documentation and geographiclib-rs 0.2.7 (crates.io; `Geodesic::wgs84()`,
//! `DirectGeodesic::direct`, `InverseGeodesic::inverse`), a general-purpose
//! geodesic library.
//!
//! geographiclib-rs has geodesics but no ENU conversion, so the checks use
//! what a geodesic fixes about the ENU vector of a surface point at distance
//! `s` and azimuth `alpha` from the origin:
//! * its horizontal direction is the normal-section azimuth, which differs
//!   from the geodesic azimuth by about `(e^2/12)(s/N)^2` rad, i.e. under
//!   1e-5 m of horizontal position at 10 km;
//! * its length (the chord) is `2 R sin(s / 2R)` with `R` the radius of
//!   curvature in that azimuth (Euler: `1/R = cos^2 a / M + sin^2 a / N`);
//!   the change of `R` over 10 km moves this by about 1e-8 m;
//! * its up component is `-2 R sin^2(s / 2R)`, good to about 1e-4 m at 10 km
//!   (the same radius change, times the 8 m drop).
//!
//! Tolerances: 0.1 mm horizontal and chord, 1 mm up (the issue asks 1 mm).

use geographiclib_rs::{DirectGeodesic, Geodesic, InverseGeodesic};
use kappaline::{Ecef, Enu, Geodetic, LocalFrame, WGS84_A, WGS84_B, WGS84_E2, WGS84_F};

#[test]
fn constants_of_nima_tr8350_2() {
    // NIMA TR8350.2 table 3.1: a = 6378137.0 m, 1/f = 298.257223563; derived
    // b = a (1 - f) = 6356752.31424518 m, e^2 = f (2 - f) = 0.00669437999014132
    // (NIMA TR8350.2 table 3.3 lists them to fewer digits; table number from memory).
    assert_eq!(WGS84_A, 6378137.0);
    assert!((1.0 / WGS84_F - 298.257223563).abs() < 1e-9);
    assert!((WGS84_B - 6356752.31424518).abs() < 1e-8);
    assert!((WGS84_E2 - 0.00669437999014132).abs() < 1e-17);
    // geographiclib-rs uses the same ellipsoid.
    let g = Geodesic::wgs84();
    assert_eq!(g.a, WGS84_A);
    assert!((g.f - WGS84_F).abs() < 1e-18);
}

#[test]
fn ecef_examples_of_cartconvert_docs() {
    // GeographicLib CartConvert documentation (C. Karney, GeographicLib,
    // "CartConvert" man page, EXAMPLES section), geodetic to geocentric:
    // (33.3 deg, 44.4 deg, 6000 m) -> (3816209.60, 3737108.55, 3485109.57) m,
    // printed to the centimetre.
    let e = Geodetic::from_degrees(33.3, 44.4, 6000.0)
        .unwrap()
        .to_ecef()
        .unwrap();
    assert!((e.x - 3816209.60).abs() < 0.006, "{e:?}");
    assert!((e.y - 3737108.55).abs() < 0.006, "{e:?}");
    assert!((e.z - 3485109.57).abs() < 0.006, "{e:?}");
    let back = e.to_geodetic().unwrap();
    assert!((back.lat.to_degrees() - 33.3).abs() < 1e-12);
    assert!((back.lon.to_degrees() - 44.4).abs() < 1e-12);
    assert!((back.height - 6000.0).abs() < 1e-8);
    // (0, 0, 0) -> (a, 0, 0); (90 deg, any, 0) -> (0, 0, b).
    let e = Geodetic::from_degrees(0.0, 0.0, 0.0)
        .unwrap()
        .to_ecef()
        .unwrap();
    assert_eq!((e.x, e.y, e.z), (WGS84_A, 0.0, 0.0));
    let e = Geodetic::from_degrees(90.0, 123.0, 0.0)
        .unwrap()
        .to_ecef()
        .unwrap();
    assert!(e.x.abs() < 1e-9 && e.y.abs() < 1e-9 && (e.z - WGS84_B).abs() < 1e-9);
}

/// Radius of curvature of the normal section at latitude `lat` in azimuth `azi` (rad).
fn euler_radius(lat: f64, azi: f64) -> f64 {
    let w2 = 1.0 - WGS84_E2 * lat.sin().powi(2);
    let n = WGS84_A / w2.sqrt();
    let m = WGS84_A * (1.0 - WGS84_E2) / w2.powf(1.5);
    1.0 / (azi.cos().powi(2) / m + azi.sin().powi(2) / n)
}

#[test]
fn enu_within_10_km_matches_geodesics() {
    let g = Geodesic::wgs84();
    // Invented origins, from the equator to the high north and south.
    let origins = [
        (0.0, 0.0),
        (47.4, 8.6),
        (-33.9, 151.2),
        (64.1, -21.9),
        (-77.8, 166.7),
        (89.5, 10.0),
    ];
    let (mut worst_h, mut worst_c, mut worst_u, mut worst_rt) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
    for (lat0, lon0) in origins {
        let frame = LocalFrame::new(Geodetic::from_degrees(lat0, lon0, 0.0).unwrap()).unwrap();
        for i in 0..24 {
            let azi = -180.0 + 15.0 * i as f64 + 3.7;
            for s in [10.0, 250.0, 1000.0, 4000.0, 10_000.0] {
                let (lat2, lon2): (f64, f64) = g.direct(lat0, lon0, azi, s);
                let p = Geodetic::from_degrees(lat2, lon2, 0.0).unwrap();
                let enu = frame.to_enu(&p).unwrap();
                let horiz = enu.east.hypot(enu.north);
                // Horizontal direction vs the geodesic azimuth, as a distance.
                let dir = enu.east.atan2(enu.north);
                let dazi = (dir - azi.to_radians() + 3.0 * std::f64::consts::PI)
                    .rem_euclid(2.0 * std::f64::consts::PI)
                    - std::f64::consts::PI;
                worst_h = worst_h.max((dazi * horiz).abs());
                let r = euler_radius(lat0.to_radians(), azi.to_radians());
                let chord = 2.0 * r * (s / (2.0 * r)).sin();
                let len = (horiz * horiz + enu.up * enu.up).sqrt();
                worst_c = worst_c.max((len - chord).abs());
                let up = -2.0 * r * (s / (2.0 * r)).sin().powi(2);
                worst_u = worst_u.max((enu.up - up).abs());
                // Back to geodetic: the geodesic distance to the library's point.
                let back = frame.to_geodetic(&enu).unwrap();
                let d: f64 = g.inverse(lat2, lon2, back.lat.to_degrees(), back.lon.to_degrees());
                worst_rt = worst_rt.max(d).max(back.height.abs());
            }
        }
    }
    println!(
        "ENU vs geographiclib within 10 km: horizontal {worst_h:.2e} m, chord {worst_c:.2e} m, up {worst_u:.2e} m, round trip {worst_rt:.2e} m"
    );
    assert!(worst_h < 1e-4, "horizontal {worst_h}");
    assert!(worst_c < 1e-4, "chord {worst_c}");
    assert!(worst_u < 1e-3, "up {worst_u}");
    assert!(worst_rt < 1e-6, "round trip {worst_rt}");
}

#[test]
fn distances_between_local_points_match_geodesics() {
    // Two points, each within 10 km of the origin: the chord between their
    // ENU positions against the geodesic distance between them.
    let g = Geodesic::wgs84();
    let frame = LocalFrame::new(Geodetic::from_degrees(52.1, 5.2, 0.0).unwrap()).unwrap();
    let mut worst = 0.0f64;
    for i in 0..40 {
        let a1 = 9.0 * i as f64;
        let a2 = 137.0 + 23.0 * i as f64;
        let (la1, lo1): (f64, f64) = g.direct(52.1, 5.2, a1, 9000.0 - 100.0 * i as f64);
        let (la2, lo2): (f64, f64) = g.direct(52.1, 5.2, a2, 500.0 + 200.0 * i as f64);
        let e1 = frame
            .to_enu(&Geodetic::from_degrees(la1, lo1, 0.0).unwrap())
            .unwrap();
        let e2 = frame
            .to_enu(&Geodetic::from_degrees(la2, lo2, 0.0).unwrap())
            .unwrap();
        let (s12, azi1, _, _): (f64, f64, f64, f64) = g.inverse(la1, lo1, la2, lo2);
        let r = euler_radius(la1.to_radians(), azi1.to_radians());
        let chord = 2.0 * r * (s12 / (2.0 * r)).sin();
        let len =
            ((e1.east - e2.east).powi(2) + (e1.north - e2.north).powi(2) + (e1.up - e2.up).powi(2))
                .sqrt();
        worst = worst.max((len - chord).abs());
    }
    println!("pairwise chord vs geodesic distance: {worst:.2e} m");
    assert!(worst < 1e-4);
}

#[test]
fn heights_and_inverse_round_trip() {
    let frame = LocalFrame::new(Geodetic::from_degrees(-12.5, 130.9, 35.0).unwrap()).unwrap();
    for (e, n, u) in [
        (0.0, 0.0, 0.0),
        (9000.0, -4000.0, 120.0),
        (-7000.0, 7000.0, -30.0),
    ] {
        let enu = Enu {
            east: e,
            north: n,
            up: u,
        };
        let back = frame.to_enu(&frame.to_geodetic(&enu).unwrap()).unwrap();
        assert!(
            (back.east - e).abs() < 1e-8
                && (back.north - n).abs() < 1e-8
                && (back.up - u).abs() < 1e-8
        );
    }
    // Straight up from the origin: height grows one for one.
    let g = frame
        .to_geodetic(&Enu {
            east: 0.0,
            north: 0.0,
            up: 100.0,
        })
        .unwrap();
    assert!((g.height - 135.0).abs() < 1e-8);
    assert!(Ecef {
        x: f64::NAN,
        y: 0.0,
        z: 0.0
    }
    .to_geodetic()
    .is_err());
}
