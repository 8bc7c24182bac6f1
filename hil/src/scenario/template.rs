//! The commented starting scenario `init` writes for a machine kind: a
//! short invented test course, the machine's limits, a receiver, the
//! core's preset gains and tracker settings for the kind, and thresholds
//! loose enough to pass on the first run, to be tightened from a sweep.

use std::fmt::Write as _;

use super::presets::MachineKind;

/// The TOML text of a starting scenario for `kind`, named `name`.
pub fn starting_scenario(kind: MachineKind, name: &str) -> String {
    let (kd, kh) = kind.frenet();
    let (pb, pt, pmin, pmax) = kind.pure_pursuit();
    let (sg, ss, sw) = kind.stanley();
    let (wb, wa, lost, look, hw) = kind.tracker();
    let mut s = String::new();
    let _ = writeln!(
        s,
        "# A starting scenario for a {} (written by `kappaline-hil init --kind {}`).",
        kind.name().replace('_', " "),
        kind.name()
    );
    s.push_str(
        "# Every key is described in hil/SCENARIOS.md; check the file with\n\
         # `kappaline-hil check FILE` and run it with `kappaline-hil run FILE`.\n\
         # Gains and tracker settings are the core's presets for this kind of machine;\n\
         # the thresholds are loose: tighten them from a sweep\n\
         # (`kappaline-hil sweep FILE --seeds 200`).\n\
         # Caution: a passing simulation is not a safety case. Keep an independent\n\
         # emergency stop on the machine.\n\n",
    );
    let _ = writeln!(s, "name = \"{name}\"");
    let (body, speed) = match kind {
        MachineKind::Tractor => (TRACTOR, 2.5),
        MachineKind::SmallRobot => (SMALL_ROBOT, 1.0),
        MachineKind::RoadVehicle => (ROAD_VEHICLE, 8.0),
    };
    s.push_str(body);
    let _ = write!(
        s,
        "\n[controller]\n\
         rate_hz = {rate:.1}                 # control rate; must divide physics_hz (1000)\n\
         speed_m_s = {speed:.1}               # set speed, capped by the guidance speed limit\n\
         precision = \"f32\"             # \"f32\" as on a single-precision FPU, \"f64\", or \"q32\" (Q32.32 fixed point)\n\
         # The Frenet law with the core's preset for this kind; the other two laws with\n\
         # their presets (switch on the command line with --set controller.law.kind=stanley):\n\
         law = {{ kind = \"frenet\", cross_track_gain_per_m2 = {kd:?}, heading_gain_per_m = {kh:?} }}\n\
         # law = {{ kind = \"pure_pursuit\", lookahead_base_m = {pb:?}, lookahead_time_s = {pt:?}, lookahead_min_m = {pmin:?}, lookahead_max_m = {pmax:?} }}\n\
         # law = {{ kind = \"stanley\", gain_per_s = {sg:?}, softening_m_s = {ss:?}, virtual_wheelbase_m = {sw:?} }}\n\
         tracker = {{ window_back_m = {wb:?}, window_ahead_m = {wa:?}, lost_distance_m = {lost:?}, lookahead_m = {look:?}, heading_weight_m = {hw:?} }}\n\
         # supervisor = {{ max_fix_age_s = 0.3, hold_time_s = 0.5 }}   # the core's defaults when absent\n",
        rate = if kind == MachineKind::SmallRobot { 50.0 } else { 20.0 },
    );
    s.push_str(THRESHOLDS);
    s
}

const TRACTOR: &str = r#"description = "Tractor on two passes of an invented test strip"
seed = 1
duration_s = 150.0            # simulated time, s (an open path ends 1 s after its end)

[path]                        # two 80 m passes 10 m apart with a headland U-turn
kind = "field"
start = { x_m = 0.0, y_m = 0.0, heading_deg = 0.0 }
pass_length_m = 80.0
swath_m = 10.0
passes = 2
turn_max_curvature_per_m = 0.2
turn_max_sharpness_per_m2 = 0.05

[vehicle]
kind = "bicycle"
wheelbase_m = 2.7
max_steer_deg = 40.0
max_steer_rate_deg_s = 40.0
steer_lag_s = 0.15
max_speed_m_s = 5.0
antenna = { ahead_m = 1.2, left_m = 0.0, height_m = 3.0 }

[start]                       # offset from the path start
left_m = 0.3
speed_m_s = 2.5

[gnss]                        # an RTK-grade receiver
rate_hz = 10.0
latency_s = 0.05
noise_m = 0.02
heading_noise_deg = 0.1
roll_noise_deg = 0.1
"#;

const SMALL_ROBOT: &str = r#"description = "Small robot on an invented L-shaped aisle"
seed = 1
duration_s = 60.0             # simulated time, s (an open path ends 1 s after its end)

[path]                        # an aisle with one corner
kind = "waypoints"
points_m = [[0.0, 0.0], [12.0, 0.0], [12.0, 8.0]]
corner_radius_m = 1.0
corner_max_sharpness_per_m2 = 2.0

[vehicle]
kind = "differential"
track_width_m = 0.45
wheel_lag_s = 0.08
max_speed_m_s = 1.5
max_curvature_per_m = 4.0
max_curvature_rate_per_m_s = 20.0
antenna = { ahead_m = 0.15, left_m = 0.0, height_m = 0.4 }

[start]
left_m = -0.05

[gnss]                        # an indoor positioning source
rate_hz = 20.0
latency_s = 0.03
noise_m = 0.008
heading_noise_deg = 0.3
"#;

const ROAD_VEHICLE: &str = r#"description = "Road vehicle on an invented test track straight and bend"
seed = 1
duration_s = 120.0            # simulated time, s (an open path ends 1 s after its end)

[path]
kind = "segments"
start = { x_m = 0.0, y_m = 0.0, heading_deg = 0.0 }
segments = [
  { type = "line", length_m = 300.0 },
  { type = "clothoid", length_m = 30.0, curvature_start_per_m = 0.0, curvature_end_per_m = 0.01 },
  { type = "turn", angle_deg = 30.0, radius_m = 100.0 },
  { type = "clothoid", length_m = 30.0, curvature_start_per_m = 0.01, curvature_end_per_m = 0.0 },
  { type = "line", length_m = 200.0 },
]

[vehicle]
kind = "bicycle"
wheelbase_m = 3.0
max_steer_deg = 35.0
max_steer_rate_deg_s = 30.0
steer_lag_s = 0.1
speed_lag_s = 1.5
max_speed_m_s = 12.0
antenna = { ahead_m = 1.5, left_m = 0.0, height_m = 1.8 }

[start]
left_m = 0.2
speed_m_s = 8.0

[gnss]
rate_hz = 10.0
latency_s = 0.05
noise_m = 0.02
heading_noise_deg = 0.1
"#;

const THRESHOLDS: &str = r#"
# [[faults]]                  # inject faults; hil/SCENARIOS.md lists every type
# type = "gnss_dropout"
# at_s = 20.0
# duration_s = 1.0

[metrics]
straight_entry_skip_m = 5.0   # straight-pass samples start this far into a straight

[thresholds]                  # pass/fail limits; an absent limit is not checked
straight_rms_m = 0.10
overall_max_m = 0.50
min_completion = 0.95
forbid_status = ["fault", "lost"]
"#;
