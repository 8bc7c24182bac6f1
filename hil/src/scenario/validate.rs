//! Range checks of a deserialised scenario; each failure names its field.

use super::schema::*;

/// A check: `Err((dotted field, message))` on failure.
pub type Check = Result<(), (String, String)>;

fn fail(field: &str, msg: String) -> Check {
    Err((field.to_string(), msg))
}

/// A number for a message: plain when moderate, in exponent form when huge
/// or tiny (so that `1e300` reads as such).
pub fn show(v: f64) -> String {
    let a = v.abs();
    if v.is_finite() && a != 0.0 && !(1e-4..1e7).contains(&a) {
        format!("{v:e}")
    } else {
        format!("{v}")
    }
}

fn finite(field: &str, v: f64) -> Check {
    if v.is_finite() {
        Ok(())
    } else {
        fail(field, format!("must be a finite number, got {}", show(v)))
    }
}

fn positive(field: &str, v: f64) -> Check {
    if v.is_finite() && v > 0.0 {
        Ok(())
    } else {
        fail(field, format!("must be > 0, got {}", show(v)))
    }
}

fn non_negative(field: &str, v: f64) -> Check {
    if v.is_finite() && v >= 0.0 {
        Ok(())
    } else {
        fail(field, format!("must be >= 0, got {}", show(v)))
    }
}

fn within(field: &str, v: f64, lo: f64, hi: f64) -> Check {
    if v.is_finite() && (lo..=hi).contains(&v) {
        Ok(())
    } else {
        fail(field, format!("must lie in [{lo}, {hi}], got {}", show(v)))
    }
}

/// Longest simulated time a scenario may ask for, s (about 28 hours; a
/// longer test is a sweep of shorter runs).
pub const MAX_DURATION_S: f64 = 100_000.0;
/// Most physics steps of one run (`duration_s * physics_hz`).
pub const MAX_PHYSICS_STEPS: f64 = 1e9;
/// Most faults a scenario may list.
pub const MAX_FAULTS: usize = 1000;
/// Most status expectations a scenario may list.
pub const MAX_EXPECTATIONS: usize = 1000;
/// Largest seed in a scenario file: TOML integers are signed 64-bit.
pub const MAX_FILE_SEED: u64 = i64::MAX as u64;

/// A duration, s: finite, > 0 and at most [`MAX_DURATION_S`].
pub fn duration(field: &str, v: f64) -> Check {
    if v.is_finite() && v > 0.0 && v <= MAX_DURATION_S {
        Ok(())
    } else {
        fail(
            field,
            format!(
                "must be a duration in (0, {MAX_DURATION_S}] s, got {}",
                show(v)
            ),
        )
    }
}

/// A time of a fault or window, s: finite, >= 0 and at most [`MAX_DURATION_S`].
fn instant(field: &str, v: f64) -> Check {
    within(field, v, 0.0, MAX_DURATION_S)
}

/// Status names a scenario may use.
pub const STATUS_NAMES: [&str; 6] = [
    "acquiring",
    "following",
    "degraded",
    "lost",
    "end_of_path",
    "fault",
];

pub(super) fn check(s: &ScenarioFile) -> Check {
    if s.seed > MAX_FILE_SEED {
        return fail(
            "seed",
            format!("must be at most {MAX_FILE_SEED}, got {}", s.seed),
        );
    }
    if s.name.trim().is_empty() {
        return fail("name", "must not be empty".into());
    }
    if !s
        .name
        .chars()
        .all(|c| c.is_ascii_alphanumeric() || c == '-' || c == '_')
    {
        return fail(
            "name",
            format!("use letters, digits, '-' and '_' only, got {:?}", s.name),
        );
    }
    duration("duration_s", s.duration_s)?;
    within("physics_hz", s.physics_hz, 10.0, 100_000.0)?;
    let steps = s.duration_s * s.physics_hz;
    if steps > MAX_PHYSICS_STEPS {
        return fail(
            "duration_s",
            format!(
                "{} s at physics_hz {} is {steps:.3e} physics steps, more than {MAX_PHYSICS_STEPS:.0e}: shorten the run or lower physics_hz",
                s.duration_s, s.physics_hz
            ),
        );
    }
    if s.faults.len() > MAX_FAULTS {
        return fail(
            "faults",
            format!("at most {MAX_FAULTS} faults, got {}", s.faults.len()),
        );
    }
    check_path(&s.path)?;
    check_vehicle(&s.vehicle)?;
    check_start(&s.start)?;
    check_start_speed(&s.start, &s.vehicle)?;
    check_terrain(&s.terrain)?;
    check_gnss(&s.gnss)?;
    check_controller(&s.controller, s.physics_hz)?;
    check_fix_age(&s.gnss, &s.controller.supervisor)?;
    // Both are sampled on the physics grid: a faster rate would silently
    // become the physics rate.
    for (field, rate) in [
        ("gnss.rate_hz", s.gnss.rate_hz),
        ("metrics.record_hz", s.metrics.record_hz),
    ] {
        if rate > s.physics_hz {
            return fail(
                field,
                format!(
                    "{} Hz is faster than physics_hz ({} Hz), which samples it",
                    show(rate),
                    show(s.physics_hz)
                ),
            );
        }
    }
    for (i, f) in s.faults.iter().enumerate() {
        check_fault(&format!("faults[{i}]"), f)?;
    }
    check_metrics(&s.metrics)?;
    check_thresholds(&s.thresholds)
}

fn check_start_pose(start: &PoseSpec) -> Check {
    finite("path.start.x_m", start.x_m)?;
    finite("path.start.y_m", start.y_m)?;
    finite("path.start.heading_deg", start.heading_deg)
}

fn check_path(p: &PathSpec) -> Check {
    match p {
        PathSpec::Segments { start, .. } => check_start_pose(start),
        PathSpec::Field {
            start,
            pass_length_m,
            swath_m,
            passes,
            turn_max_curvature_per_m,
            turn_max_sharpness_per_m2,
            ..
        } => {
            check_start_pose(start)?;
            positive("path.pass_length_m", *pass_length_m)?;
            positive("path.swath_m", *swath_m)?;
            if !(1..=100).contains(passes) {
                return fail("path.passes", format!("must lie in [1, 100], got {passes}"));
            }
            positive("path.turn_max_curvature_per_m", *turn_max_curvature_per_m)?;
            if let Some(s) = turn_max_sharpness_per_m2 {
                positive("path.turn_max_sharpness_per_m2", *s)?;
            }
            Ok(())
        }
        PathSpec::Waypoints {
            points_m,
            corner_radius_m,
            corner_max_sharpness_per_m2,
        } => {
            if points_m.len() < 2 {
                return fail(
                    "path.points_m",
                    format!("needs at least 2 points, got {}", points_m.len()),
                );
            }
            for (i, p) in points_m.iter().enumerate() {
                finite(&format!("path.points_m[{i}]"), p[0])?;
                finite(&format!("path.points_m[{i}]"), p[1])?;
            }
            positive("path.corner_radius_m", *corner_radius_m)?;
            if let Some(s) = corner_max_sharpness_per_m2 {
                positive("path.corner_max_sharpness_per_m2", *s)?;
            }
            Ok(())
        }
    }
}

fn check_antenna(a: &AntennaSpec) -> Check {
    finite("vehicle.antenna.ahead_m", a.ahead_m)?;
    finite("vehicle.antenna.left_m", a.left_m)?;
    within("vehicle.antenna.height_m", a.height_m, 0.0, 20.0)
}

fn check_vehicle(v: &VehicleSpec) -> Check {
    match *v {
        VehicleSpec::Bicycle {
            wheelbase_m,
            max_steer_deg,
            max_steer_rate_deg_s,
            steer_lag_s,
            speed_lag_s,
            max_accel_m_s2,
            max_speed_m_s,
            antenna,
            control_point_ahead_m,
            max_lateral_accel_m_s2,
            max_decel_m_s2,
        } => {
            positive("vehicle.wheelbase_m", wheelbase_m)?;
            if !(max_steer_deg > 0.0 && max_steer_deg < 89.0) {
                return fail(
                    "vehicle.max_steer_deg",
                    format!("must lie in (0, 89) degrees, got {max_steer_deg}"),
                );
            }
            positive("vehicle.max_steer_rate_deg_s", max_steer_rate_deg_s)?;
            non_negative("vehicle.steer_lag_s", steer_lag_s)?;
            non_negative("vehicle.speed_lag_s", speed_lag_s)?;
            positive("vehicle.max_accel_m_s2", max_accel_m_s2)?;
            positive("vehicle.max_speed_m_s", max_speed_m_s)?;
            finite("vehicle.control_point_ahead_m", control_point_ahead_m)?;
            positive("vehicle.max_lateral_accel_m_s2", max_lateral_accel_m_s2)?;
            positive("vehicle.max_decel_m_s2", max_decel_m_s2)?;
            check_antenna(&antenna)
        }
        VehicleSpec::Differential {
            track_width_m,
            wheel_lag_s,
            max_accel_m_s2,
            max_speed_m_s,
            max_curvature_per_m,
            max_curvature_rate_per_m_s,
            antenna,
            control_point_ahead_m,
            max_lateral_accel_m_s2,
            max_decel_m_s2,
        } => {
            positive("vehicle.track_width_m", track_width_m)?;
            non_negative("vehicle.wheel_lag_s", wheel_lag_s)?;
            positive("vehicle.max_accel_m_s2", max_accel_m_s2)?;
            positive("vehicle.max_speed_m_s", max_speed_m_s)?;
            positive("vehicle.max_curvature_per_m", max_curvature_per_m)?;
            positive(
                "vehicle.max_curvature_rate_per_m_s",
                max_curvature_rate_per_m_s,
            )?;
            finite("vehicle.control_point_ahead_m", control_point_ahead_m)?;
            positive("vehicle.max_lateral_accel_m_s2", max_lateral_accel_m_s2)?;
            positive("vehicle.max_decel_m_s2", max_decel_m_s2)?;
            check_antenna(&antenna)
        }
    }
}

fn check_start(s: &StartSpec) -> Check {
    finite("start.ahead_m", s.ahead_m)?;
    finite("start.left_m", s.left_m)?;
    within("start.heading_deg", s.heading_deg, -180.0, 180.0)?;
    finite("start.speed_m_s", s.speed_m_s)
}

/// Farthest the start may lie from the path start, as a share of the path
/// length (with [`MIN_START_REACH_M`] for short paths): a machine placed
/// farther away is not following this path at all.
pub const START_REACH_PER_LENGTH: f64 = 1.0;
/// Start offset always allowed, metres.
pub const MIN_START_REACH_M: f64 = 20.0;

/// The start offset against the size of the path (`length_m`, metres).
pub fn check_start_offset(s: &StartSpec, length_m: f64) -> Check {
    let reach = (START_REACH_PER_LENGTH * length_m).max(MIN_START_REACH_M);
    for (field, v) in [("start.ahead_m", s.ahead_m), ("start.left_m", s.left_m)] {
        if v.abs() > reach {
            return fail(
                field,
                format!(
                    "{} m puts the machine farther from the path start than {reach:.1} m (the path is {length_m:.1} m long): it would never meet the path",
                    show(v)
                ),
            );
        }
    }
    Ok(())
}

fn check_start_speed(s: &StartSpec, v: &VehicleSpec) -> Check {
    let top = match *v {
        VehicleSpec::Bicycle { max_speed_m_s, .. }
        | VehicleSpec::Differential { max_speed_m_s, .. } => max_speed_m_s,
    };
    if s.speed_m_s.abs() > top {
        return fail(
            "start.speed_m_s",
            format!(
                "{} m/s is faster than the vehicle can go (vehicle.max_speed_m_s = {top})",
                show(s.speed_m_s)
            ),
        );
    }
    Ok(())
}

/// The core's default stale-fix age when the scenario sets none, s
/// (`SupervisorConfig::default_for`; it does not depend on the vehicle).
pub const CORE_DEFAULT_MAX_FIX_AGE_S: f64 = 0.3;

/// A fix is judged by its age: `latency` when it arrives, growing to
/// `latency + 1 / rate` just before the next one. If that exceeds the
/// supervisor's stale age, every epoch goes stale (or arrives stale) and
/// the run never settles into following.
fn check_fix_age(g: &GnssSpec, sv: &SupervisorSpec) -> Check {
    let (age, field, origin) = match sv.max_fix_age_s {
        Some(a) => (a, "controller.supervisor.max_fix_age_s", "set"),
        None => (
            CORE_DEFAULT_MAX_FIX_AGE_S,
            "gnss.latency_s",
            "the core's default",
        ),
    };
    if g.latency_s >= age {
        return fail(
            "gnss.latency_s",
            format!(
                "{} s is not below controller.supervisor.max_fix_age_s ({age} s, {origin}): every fix would arrive stale and the run never leave acquiring; raise max_fix_age_s or lower the latency",
                g.latency_s
            ),
        );
    }
    let worst = g.latency_s + 1.0 / g.rate_hz;
    if worst > age {
        return fail(
            field,
            format!(
                "fixes reach an age of {worst:.3} s (latency {} s + one period at {} Hz) before the next one arrives, more than max_fix_age_s ({age} s, {origin}): the supervisor would call every epoch stale; raise controller.supervisor.max_fix_age_s",
                g.latency_s, g.rate_hz
            ),
        );
    }
    Ok(())
}

fn check_terrain(t: &TerrainSpec) -> Check {
    within("terrain.slope_x_deg", t.slope_x_deg, -45.0, 45.0)?;
    within("terrain.slope_y_deg", t.slope_y_deg, -45.0, 45.0)?;
    non_negative("terrain.wave_amplitude_m", t.wave_amplitude_m)?;
    if t.wave_amplitude_m > 0.0 {
        positive("terrain.wave_length_m", t.wave_length_m)?;
    } else {
        non_negative("terrain.wave_length_m", t.wave_length_m)?;
    }
    within("terrain.crab_gain", t.crab_gain, 0.0, 10.0)?;
    within("terrain.crab_deg", t.crab_deg, -30.0, 30.0)
}

fn check_gnss(g: &GnssSpec) -> Check {
    within("gnss.rate_hz", g.rate_hz, 0.1, 1000.0)?;
    within("gnss.latency_s", g.latency_s, 0.0, 5.0)?;
    non_negative("gnss.noise_m", g.noise_m)?;
    non_negative("gnss.bias_sigma_m", g.bias_sigma_m)?;
    positive("gnss.bias_tau_s", g.bias_tau_s)?;
    non_negative("gnss.speed_noise_m_s", g.speed_noise_m_s)?;
    non_negative("gnss.heading_noise_deg", g.heading_noise_deg)?;
    finite("gnss.heading_bias_deg", g.heading_bias_deg)?;
    non_negative("gnss.roll_noise_deg", g.roll_noise_deg)?;
    finite("gnss.roll_bias_deg", g.roll_bias_deg)
}

fn check_controller(c: &ControllerSpec, physics_hz: f64) -> Check {
    within("controller.rate_hz", c.rate_hz, 1.0, physics_hz)?;
    let steps = physics_hz / c.rate_hz;
    if (steps - steps.round()).abs() > 1e-9 {
        return fail(
            "controller.rate_hz",
            format!(
                "must divide physics_hz ({physics_hz}) evenly, got {}",
                c.rate_hz
            ),
        );
    }
    positive("controller.speed_m_s", c.speed_m_s)?;
    match c.law {
        LawSpec::PurePursuit {
            lookahead_base_m,
            lookahead_time_s,
            lookahead_min_m,
            lookahead_max_m,
        } => {
            non_negative("controller.law.lookahead_base_m", lookahead_base_m)?;
            non_negative("controller.law.lookahead_time_s", lookahead_time_s)?;
            positive("controller.law.lookahead_min_m", lookahead_min_m)?;
            if !(lookahead_max_m.is_finite() && lookahead_max_m >= lookahead_min_m) {
                return fail(
                    "controller.law.lookahead_max_m",
                    format!(
                        "must be >= lookahead_min_m ({lookahead_min_m}), got {lookahead_max_m}"
                    ),
                );
            }
        }
        LawSpec::Stanley {
            gain_per_s,
            softening_m_s,
            virtual_wheelbase_m,
        } => {
            positive("controller.law.gain_per_s", gain_per_s)?;
            positive("controller.law.softening_m_s", softening_m_s)?;
            positive("controller.law.virtual_wheelbase_m", virtual_wheelbase_m)?;
        }
        LawSpec::Frenet {
            cross_track_gain_per_m2,
            heading_gain_per_m,
            integral_gain_per_m3,
            integral_limit_per_m,
            integral_band_m,
        } => {
            positive(
                "controller.law.cross_track_gain_per_m2",
                cross_track_gain_per_m2,
            )?;
            positive("controller.law.heading_gain_per_m", heading_gain_per_m)?;
            if let Some(k_i) = integral_gain_per_m3 {
                let top = cross_track_gain_per_m2 * heading_gain_per_m;
                if !(k_i > 0.0 && k_i < top) {
                    return fail(
                        "controller.law.integral_gain_per_m3",
                        format!("must lie in (0, cross_track_gain * heading_gain = {top}) for stability, got {k_i}"),
                    );
                }
                positive("controller.law.integral_limit_per_m", integral_limit_per_m)?;
                positive("controller.law.integral_band_m", integral_band_m)?;
            }
        }
    }
    let sv = &c.supervisor;
    let opt = |field: &str, v: Option<f64>, strict: bool| -> Check {
        match v {
            Some(v) if strict => positive(field, v),
            Some(v) => non_negative(field, v),
            None => Ok(()),
        }
    };
    opt(
        "controller.supervisor.max_fix_age_s",
        sv.max_fix_age_s,
        true,
    )?;
    opt("controller.supervisor.hold_time_s", sv.hold_time_s, false)?;
    opt("controller.supervisor.max_sigma_m", sv.max_sigma_m, true)?;
    opt(
        "controller.supervisor.max_cross_track_m",
        sv.max_cross_track_m,
        true,
    )?;
    if let Some(h) = sv.max_heading_error_deg {
        if !(h > 0.0 && h <= 180.0) {
            return fail(
                "controller.supervisor.max_heading_error_deg",
                format!("must lie in (0, 180], got {h}"),
            );
        }
    }
    opt("controller.supervisor.max_jump_m", sv.max_jump_m, true)?;
    opt(
        "controller.supervisor.jump_growth_m_s",
        sv.jump_growth_m_s,
        false,
    )?;
    opt(
        "controller.supervisor.end_tolerance_m",
        sv.end_tolerance_m,
        false,
    )?;
    if sv.confirm_fixes == Some(0) {
        return fail(
            "controller.supervisor.confirm_fixes",
            "must be >= 1, got 0".into(),
        );
    }
    let t = &c.tracker;
    non_negative("controller.tracker.window_back_m", t.window_back_m)?;
    positive("controller.tracker.window_ahead_m", t.window_ahead_m)?;
    positive("controller.tracker.lost_distance_m", t.lost_distance_m)?;
    non_negative("controller.tracker.lookahead_m", t.lookahead_m)?;
    non_negative("controller.tracker.heading_weight_m", t.heading_weight_m)
}

fn check_fault(field: &str, f: &FaultSpec) -> Check {
    let at = |v: f64| instant(&format!("{field}.at_s"), v);
    let dur = |v: f64| duration(&format!("{field}.duration_s"), v);
    match *f {
        FaultSpec::GnssDropout { at_s, duration_s }
        | FaultSpec::SteerStuck { at_s, duration_s }
        | FaultSpec::GnssNonFinite { at_s, duration_s }
        | FaultSpec::GnssStale { at_s, duration_s } => {
            at(at_s)?;
            dur(duration_s)
        }
        FaultSpec::SolutionDrop {
            at_s,
            duration_s,
            extra_noise_m,
            ..
        } => {
            within(&format!("{field}.extra_noise_m"), extra_noise_m, 0.0, 100.0)?;
            at(at_s)?;
            dur(duration_s)
        }
        FaultSpec::GnssJump {
            at_s,
            duration_s,
            east_m,
            north_m,
        } => {
            within(&format!("{field}.east_m"), east_m, -1e4, 1e4)?;
            within(&format!("{field}.north_m"), north_m, -1e4, 1e4)?;
            at(at_s)?;
            dur(duration_s)
        }
        FaultSpec::LatencySpike {
            at_s,
            duration_s,
            extra_latency_s,
        } => {
            at(at_s)?;
            dur(duration_s)?;
            // Bounded so that the queue of held epochs stays small.
            within(
                &format!("{field}.extra_latency_s"),
                extra_latency_s,
                0.0,
                10.0,
            )
        }
        FaultSpec::Relocalisation {
            at_s,
            count,
            every_s,
            east_m,
            north_m,
            heading_deg,
        } => {
            at(at_s)?;
            if !(1..=10_000).contains(&count) {
                return fail(
                    &format!("{field}.count"),
                    format!("must lie in [1, 10000], got {count}"),
                );
            }
            if count > 1 {
                duration(&format!("{field}.every_s"), every_s)?;
            } else {
                instant(&format!("{field}.every_s"), every_s)?;
            }
            within(&format!("{field}.east_m"), east_m, -1e4, 1e4)?;
            within(&format!("{field}.north_m"), north_m, -1e4, 1e4)?;
            within(&format!("{field}.heading_deg"), heading_deg, -180.0, 180.0)
        }
    }
}

fn check_metrics(m: &MetricsSpec) -> Check {
    finite("metrics.point_ahead_m", m.point_ahead_m)?;
    non_negative("metrics.straight_entry_skip_m", m.straight_entry_skip_m)?;
    positive("metrics.settle_band_m", m.settle_band_m)?;
    non_negative("metrics.settle_hold_m", m.settle_hold_m)?;
    within("metrics.record_hz", m.record_hz, 0.1, 10_000.0)
}

fn check_thresholds(t: &ThresholdSpec) -> Check {
    let limits = [
        ("thresholds.straight_rms_m", t.straight_rms_m),
        ("thresholds.straight_p95_m", t.straight_p95_m),
        ("thresholds.straight_max_m", t.straight_max_m),
        ("thresholds.curved_rms_m", t.curved_rms_m),
        ("thresholds.overall_max_m", t.overall_max_m),
        ("thresholds.heading_rms_deg", t.heading_rms_deg),
        ("thresholds.settle_distance_m", t.settle_distance_m),
        ("thresholds.max_lost_s", t.max_lost_s),
    ];
    for (field, v) in limits {
        if let Some(v) = v {
            non_negative(field, v)?;
        }
    }
    if let Some(c) = t.min_completion {
        within("thresholds.min_completion", c, 0.0, 1000.0)?;
    }
    if t.expect_status.len() > MAX_EXPECTATIONS {
        return fail(
            "thresholds.expect_status",
            format!(
                "at most {MAX_EXPECTATIONS} entries, got {}",
                t.expect_status.len()
            ),
        );
    }
    for (i, e) in t.expect_status.iter().enumerate() {
        let f = format!("thresholds.expect_status[{i}]");
        status_name(&format!("{f}.status"), &e.status)?;
        instant(&format!("{f}.from_s"), e.from_s)?;
        if !(e.until_s.is_finite() && e.until_s >= e.from_s) {
            return fail(
                &format!("{f}.until_s"),
                format!("must be >= from_s ({}), got {}", e.from_s, e.until_s),
            );
        }
    }
    for (i, s) in t.forbid_status.iter().enumerate() {
        status_name(&format!("thresholds.forbid_status[{i}]"), s)?;
    }
    Ok(())
}

fn status_name(field: &str, s: &str) -> Check {
    if STATUS_NAMES.contains(&s) {
        Ok(())
    } else {
        fail(
            field,
            format!("unknown status {s:?}, expected one of {STATUS_NAMES:?}"),
        )
    }
}
