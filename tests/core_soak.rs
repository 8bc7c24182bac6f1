//! The `f32` tracker does not drift: a short soak in the normal test run
//! (see `tests/soak/mod.rs`; `cargo run --release --example soak_f32` runs
//! ten million updates). The reference is the same tracker in `f64`; the
//! bound away from the closing joint is three `f32` station ulps at 350 m
//! (31 um each) with room for the projection's rounding (the stations
//! sampled here stay a few millimetres clear of the other joints, where
//! the long run finds up to 1.2 mm): a drift would grow past it.

mod soak;

#[test]
fn f32_station_stays_with_f64_over_laps() {
    // 20,000 updates: 2 km, almost six laps of the 350 m loop.
    let worst = soak::soak(4, 5_000);
    println!("f32 vs f64 station, worst per 5000 updates: {worst:?}");
    for (i, (at_joint, elsewhere)) in worst.iter().enumerate() {
        assert!(*elsewhere < 1e-4, "block {i}: {elsewhere} m");
        assert!(
            *at_joint < 1e-2,
            "block {i}: {at_joint} m at the closing joint"
        );
    }
}
