//! Ten million `f32` tracker updates round an invented racetrack loop,
//! compared with the same tracker in `f64` (see `tests/soak/mod.rs`).
//! Prints the largest station difference in each million updates (within
//! 1 cm of the loop's closing joint and elsewhere) and their min / median /
//! max. A drift would make them grow from one million to the next.
//!
//! `cargo run --release --example soak_f32`

#[path = "../tests/soak/mod.rs"]
mod soak;

fn main() {
    let worst = soak::soak(10, 1_000_000);
    for (i, (joint, elsewhere)) in worst.iter().enumerate() {
        println!(
            "updates {:>2}M-{:>2}M: worst |s_f32 - s_f64| = {:.2e} m, at the closing joint {:.2e} m",
            i,
            i + 1,
            elsewhere,
            joint
        );
    }
    let elsewhere: Vec<f64> = worst.iter().map(|w| w.1).collect();
    let joint: Vec<f64> = worst.iter().map(|w| w.0).collect();
    for (what, mut v) in [("elsewhere", elsewhere), ("at the closing joint", joint)] {
        v.sort_by(f64::total_cmp);
        println!(
            "per million updates, {what}: min {:.2e} m, median {:.2e} m, max {:.2e} m",
            v[0],
            v[v.len() / 2],
            v[v.len() - 1]
        );
    }
}
