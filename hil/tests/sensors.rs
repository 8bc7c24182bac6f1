//! Sensor models: statistics, timing, faults and reproducibility.

use kappaline_hil::sim::sensors::AntennaMount;
use kappaline_hil::sim::{BodyState, GnssFault, GnssModel, SensorSuite, Terrain};

fn model(noise: f64, bias: f64) -> GnssModel {
    GnssModel {
        rate_hz: 10.0,
        latency_s: 0.05,
        noise_m: noise,
        bias_sigma_m: bias,
        bias_tau_s: 30.0,
        speed_noise_m_s: 0.0,
        heading_noise_rad: 0.0,
        heading_bias_rad: 0.0,
        roll_noise_rad: 0.0,
        roll_bias_rad: 0.0,
        solution: kappaline::Solution::Fixed,
    }
}

/// Samples the suite at 1 kHz for `secs`; returns (delivery time, measurement).
fn collect(s: &mut SensorSuite, secs: f64) -> Vec<(f64, kappaline_hil::sim::Measurement)> {
    let body = BodyState::at(0.0, 0.0, 0.0);
    let mut out = Vec::new();
    for k in 0..=(secs * 1000.0) as u64 {
        let t = k as f64 * 1e-3;
        s.observe(t, &body, 0.0, 0.0);
        if let Some(m) = s.deliver(t) {
            out.push((t, m));
        }
    }
    out
}

#[test]
fn white_noise_has_its_standard_deviation_and_rate_and_latency() {
    let mut s = SensorSuite::new(model(0.02, 0.0), AntennaMount::default(), vec![], 42);
    let got = collect(&mut s, 2000.0);
    // 10 Hz for 2000 s (the last sample may still be in flight).
    assert!((got.len() as i64 - 20_000).abs() <= 1);
    for (t, m) in &got {
        assert!((t - m.time_s - 0.05).abs() < 1e-9, "latency");
    }
    let n = got.len() as f64;
    let var: f64 = got.iter().map(|(_, m)| m.x * m.x + m.y * m.y).sum::<f64>() / (2.0 * n);
    // Sample standard deviation of 40000 normal draws: within 2 % (about
    // 4 standard errors of sigma / sqrt(2 n)).
    assert!(
        (var.sqrt() - 0.02).abs() < 0.02 * 0.02,
        "sigma {}",
        var.sqrt()
    );
}

/// First-order Gauss-Markov: lag-k autocorrelation exp(-k dt / tau) and
/// variance sigma^2 (Brown & Hwang, Introduction to Random Signals and
/// Applied Kalman Filtering, first-order Gauss-Markov process).
#[test]
fn bias_wanders_as_a_gauss_markov_process() {
    let mut s = SensorSuite::new(model(0.0, 0.05), AntennaMount::default(), vec![], 7);
    let got = collect(&mut s, 20_000.0);
    let xs: Vec<f64> = got.iter().map(|(_, m)| m.x).collect();
    let n = xs.len() as f64;
    let mean = xs.iter().sum::<f64>() / n;
    let var = xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n;
    assert!(
        (var.sqrt() - 0.05).abs() < 0.05 * 0.15,
        "sigma {}",
        var.sqrt()
    );
    // Lag of 30 s (300 samples): exp(-1).
    let lag = 300;
    let cov = xs
        .iter()
        .zip(xs.iter().skip(lag))
        .map(|(a, b)| (a - mean) * (b - mean))
        .sum::<f64>()
        / (n - lag as f64);
    let rho = cov / var;
    assert!((rho - (-1f64).exp()).abs() < 0.1, "rho {rho}");
}

#[test]
fn dropout_and_jump_happen_when_scheduled() {
    let faults = vec![
        GnssFault::Dropout {
            from_s: 2.0,
            until_s: 4.0,
        },
        GnssFault::Jump {
            from_s: 6.0,
            until_s: 7.0,
            dx_m: 3.0,
            dy_m: 0.0,
        },
    ];
    let mut s = SensorSuite::new(model(0.0, 0.0), AntennaMount::default(), faults, 1);
    let got = collect(&mut s, 10.0);
    assert!(got.iter().all(|(_, m)| !(2.0..4.0).contains(&m.time_s)));
    assert!(got.iter().any(|(_, m)| (1.9..2.0).contains(&m.time_s)));
    for (_, m) in &got {
        let jumped = (6.0..7.0).contains(&m.time_s);
        assert_eq!((m.x - 3.0).abs() < 1e-12, jumped, "t {}", m.time_s);
    }
}

#[test]
fn same_seed_same_numbers_other_seed_other_numbers() {
    let run = |seed| {
        let mut s = SensorSuite::new(model(0.02, 0.01), AntennaMount::default(), vec![], seed);
        collect(&mut s, 5.0)
    };
    assert_eq!(run(9), run(9));
    assert_ne!(run(9), run(10));
}

/// A 3 m high antenna on a 5 degree side slope sits 3 sin(5 deg) = 26 cm
/// to the low side of the wheels' track (common practice, terrain
/// compensation).
#[test]
fn tall_antenna_swings_to_the_low_side() {
    let terrain = Terrain {
        grade_y: 5f64.to_radians().tan(),
        ..Terrain::default()
    };
    let body = BodyState::at(10.0, 0.0, 0.0);
    let roll = terrain.roll(body.x, body.y, body.heading);
    let mount = AntennaMount {
        ahead_m: 0.0,
        left_m: 0.0,
        height_m: 3.0,
    };
    let (x, y) = mount.position(&body, roll);
    assert!((x - 10.0).abs() < 1e-12);
    // Ground rises to the north (left of an east-bound body): the mast
    // leans south (right), by 3 sin(5 deg) = 0.2615 m.
    assert!((y + 3.0 * 5f64.to_radians().sin()).abs() < 1e-12);
    assert!((y + 0.2615).abs() < 1e-4);
}
