//! The scenario file format (TOML). Every table rejects unknown keys, and
//! every quantity carries its unit in its name (`_m`, `_s`, `_hz`, `_deg`,
//! `_m_s`, `_per_m`), so a value written in the wrong unit (`wheelbase_ft`)
//! is an unknown field, named in the error. See `hil/SCENARIOS.md`.

use serde::Deserialize;

/// A whole scenario file.
#[derive(Debug, Clone, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct ScenarioFile {
    /// Short name, used for the report directory.
    pub name: String,
    /// One line on what the scenario shows.
    #[serde(default)]
    pub description: String,
    /// Seed of every random stream of the run.
    #[serde(default)]
    pub seed: u64,
    /// Simulated time, s (the run also ends at the end of an open path).
    pub duration_s: f64,
    /// Physics rate, Hz.
    #[serde(default = "default_physics_hz")]
    pub physics_hz: f64,
    /// The reference path.
    pub path: PathSpec,
    /// The machine.
    pub vehicle: VehicleSpec,
    /// Where the machine starts relative to the path start.
    #[serde(default)]
    pub start: StartSpec,
    /// Ground under the machine.
    #[serde(default)]
    pub terrain: TerrainSpec,
    /// Receiver and attitude sensors.
    pub gnss: GnssSpec,
    /// The controller under test.
    pub controller: ControllerSpec,
    /// Faults injected at given times.
    #[serde(default)]
    pub faults: Vec<FaultSpec>,
    /// How the run is measured.
    #[serde(default)]
    pub metrics: MetricsSpec,
    /// Pass/fail limits.
    #[serde(default)]
    pub thresholds: ThresholdSpec,
}

fn default_physics_hz() -> f64 {
    1000.0
}

/// A start pose of the path.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq, Default)]
#[serde(deny_unknown_fields)]
pub struct PoseSpec {
    /// East, metres.
    pub x_m: f64,
    /// North, metres.
    pub y_m: f64,
    /// Heading, degrees CCW from east.
    pub heading_deg: f64,
}

/// The reference path.
#[derive(Debug, Clone, Deserialize, PartialEq)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum PathSpec {
    /// An explicit list of segments from a start pose.
    Segments {
        /// Start pose.
        start: PoseSpec,
        /// `true` for a loop (the last segment must end at the start).
        #[serde(default)]
        closed: bool,
        /// The segments in order.
        segments: Vec<SegmentSpec>,
    },
    /// A field: parallel straight passes of an A-B line joined by headland
    /// turns (built by the core's pass and headland-turn builders).
    Field {
        /// Start of the first pass (the A point) and the A-B heading.
        start: PoseSpec,
        /// Length of each pass, metres.
        pass_length_m: f64,
        /// Swath width (spacing of the passes), metres.
        swath_m: f64,
        /// Number of passes.
        passes: u32,
        /// Side on which the next pass lies.
        #[serde(default)]
        turn_side: TurnSide,
        /// Largest curvature of the turns, 1/m.
        turn_max_curvature_per_m: f64,
        /// Largest sharpness of the turns, 1/m^2 (absent: plain arcs).
        #[serde(default)]
        turn_max_sharpness_per_m2: Option<f64>,
        /// Turns may reverse when a U-turn does not fit.
        #[serde(default)]
        allow_reverse: bool,
    },
    /// A route through waypoints with clothoid-arc-clothoid corners (built
    /// by the core's corner builder).
    Waypoints {
        /// The points, metres, as `[east, north]` pairs.
        points_m: Vec<[f64; 2]>,
        /// Radius of the corner arcs, metres.
        corner_radius_m: f64,
        /// Sharpness of the corner clothoids, 1/m^2 (absent: plain arcs).
        #[serde(default)]
        corner_max_sharpness_per_m2: Option<f64>,
    },
}

/// Which side the next pass of a field lies on.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq, Eq, Default)]
#[serde(rename_all = "snake_case")]
pub enum TurnSide {
    /// To the left of the first pass's direction.
    #[default]
    Left,
    /// To the right.
    Right,
}

/// One path segment.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq)]
#[serde(tag = "type", rename_all = "snake_case", deny_unknown_fields)]
pub enum SegmentSpec {
    /// A straight line.
    Line {
        /// Length, metres.
        length_m: f64,
        /// Driven backwards.
        #[serde(default)]
        reverse: bool,
    },
    /// A circular arc.
    Arc {
        /// Length, metres.
        length_m: f64,
        /// Signed radius, metres: positive turns left.
        radius_m: f64,
        /// Driven backwards.
        #[serde(default)]
        reverse: bool,
    },
    /// A circular arc given by its turning angle.
    Turn {
        /// Heading change, degrees, positive left.
        angle_deg: f64,
        /// Radius, metres (> 0).
        radius_m: f64,
    },
    /// A clothoid from one curvature to another.
    Clothoid {
        /// Length, metres.
        length_m: f64,
        /// Curvature at the start, 1/m, positive left.
        curvature_start_per_m: f64,
        /// Curvature at the end, 1/m.
        curvature_end_per_m: f64,
        /// Driven backwards.
        #[serde(default)]
        reverse: bool,
    },
}

/// The machine.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum VehicleSpec {
    /// Front-steered (kinematic bicycle).
    Bicycle {
        /// Wheelbase, metres.
        wheelbase_m: f64,
        /// Steering saturation, degrees.
        max_steer_deg: f64,
        /// Steering rate limit, degrees per second.
        max_steer_rate_deg_s: f64,
        /// Steering actuator time constant, s.
        steer_lag_s: f64,
        /// Speed time constant, s.
        #[serde(default = "default_speed_lag")]
        speed_lag_s: f64,
        /// Largest acceleration, m/s^2.
        #[serde(default = "default_accel")]
        max_accel_m_s2: f64,
        /// Largest speed, m/s.
        max_speed_m_s: f64,
        /// Antenna mount.
        antenna: AntennaSpec,
        /// Point the controller steers, metres ahead of the rear axle.
        #[serde(default)]
        control_point_ahead_m: f64,
        /// Lateral acceleration the speed cap allows, m/s^2.
        #[serde(default = "default_lat")]
        max_lateral_accel_m_s2: f64,
        /// Deceleration the speed cap plans with, m/s^2.
        #[serde(default = "default_accel")]
        max_decel_m_s2: f64,
    },
    /// Differential drive.
    Differential {
        /// Distance between the wheel contact lines, metres.
        track_width_m: f64,
        /// Wheel speed time constant, s.
        wheel_lag_s: f64,
        /// Largest wheel acceleration, m/s^2.
        #[serde(default = "default_accel")]
        max_accel_m_s2: f64,
        /// Largest wheel speed, m/s.
        max_speed_m_s: f64,
        /// Largest curvature the controller may command, 1/m.
        max_curvature_per_m: f64,
        /// Largest rate of change of curvature, 1/m per s.
        max_curvature_rate_per_m_s: f64,
        /// Antenna (or localisation) mount.
        antenna: AntennaSpec,
        /// Point the controller steers, metres ahead of the axle centre.
        #[serde(default)]
        control_point_ahead_m: f64,
        /// Lateral acceleration the speed cap allows, m/s^2.
        #[serde(default = "default_lat")]
        max_lateral_accel_m_s2: f64,
        /// Deceleration the speed cap plans with, m/s^2.
        #[serde(default = "default_accel")]
        max_decel_m_s2: f64,
    },
}

fn default_speed_lag() -> f64 {
    0.5
}
fn default_accel() -> f64 {
    1.0
}
fn default_lat() -> f64 {
    1.5
}

/// Antenna position on the body.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq, Default)]
#[serde(deny_unknown_fields)]
pub struct AntennaSpec {
    /// Ahead of the reference point, metres.
    #[serde(default)]
    pub ahead_m: f64,
    /// Left of the reference point, metres.
    #[serde(default)]
    pub left_m: f64,
    /// Above the ground, metres.
    #[serde(default)]
    pub height_m: f64,
}

/// Start offset from the path's start pose.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq, Default)]
#[serde(deny_unknown_fields)]
pub struct StartSpec {
    /// Along the start tangent, metres (negative: behind the start).
    #[serde(default)]
    pub ahead_m: f64,
    /// To the left of the start, metres.
    #[serde(default)]
    pub left_m: f64,
    /// Heading offset, degrees.
    #[serde(default)]
    pub heading_deg: f64,
    /// Initial speed, m/s.
    #[serde(default)]
    pub speed_m_s: f64,
}

/// Terrain and side-slip.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq, Default)]
#[serde(deny_unknown_fields)]
pub struct TerrainSpec {
    /// Ground slope rising towards +x, degrees.
    #[serde(default)]
    pub slope_x_deg: f64,
    /// Ground slope rising towards +y, degrees.
    #[serde(default)]
    pub slope_y_deg: f64,
    /// Amplitude of waves along x, metres.
    #[serde(default)]
    pub wave_amplitude_m: f64,
    /// Wavelength of those waves, metres.
    #[serde(default)]
    pub wave_length_m: f64,
    /// Crab angle per unit roll (dimensionless): sliding to the low side.
    #[serde(default)]
    pub crab_gain: f64,
    /// Constant crab angle, degrees (e.g. a side wind or a pulled implement).
    #[serde(default)]
    pub crab_deg: f64,
}

/// Receiver and attitude-sensor model.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct GnssSpec {
    /// Update rate, Hz.
    pub rate_hz: f64,
    /// Sampling-to-delivery delay, s.
    pub latency_s: f64,
    /// White position noise, metres per axis (standard deviation).
    pub noise_m: f64,
    /// Wandering bias, metres per axis (steady-state standard deviation).
    #[serde(default)]
    pub bias_sigma_m: f64,
    /// Bias correlation time, s.
    #[serde(default = "default_bias_tau")]
    pub bias_tau_s: f64,
    /// White speed noise, m/s.
    #[serde(default)]
    pub speed_noise_m_s: f64,
    /// White heading noise, degrees.
    #[serde(default)]
    pub heading_noise_deg: f64,
    /// Constant heading bias, degrees.
    #[serde(default)]
    pub heading_bias_deg: f64,
    /// White roll noise, degrees.
    #[serde(default)]
    pub roll_noise_deg: f64,
    /// Constant roll bias, degrees.
    #[serde(default)]
    pub roll_bias_deg: f64,
    /// The kind of solution the receiver reports (outside solution drops).
    #[serde(default)]
    pub solution: SolutionSpec,
}

/// A receiver solution kind by name (the core's `kappaline::Solution`).
#[derive(Debug, Clone, Copy, Deserialize, PartialEq, Eq, Default)]
#[serde(rename_all = "snake_case")]
pub enum SolutionSpec {
    /// Carrier phase, ambiguities fixed.
    #[default]
    Fixed,
    /// Carrier phase, ambiguities float.
    Float,
    /// Code with differential corrections.
    Differential,
    /// Code alone.
    Autonomous,
    /// Receiver dead reckoning.
    Estimated,
}

impl SolutionSpec {
    /// The core's solution kind.
    pub fn core(self) -> kappaline::Solution {
        match self {
            SolutionSpec::Fixed => kappaline::Solution::Fixed,
            SolutionSpec::Float => kappaline::Solution::Float,
            SolutionSpec::Differential => kappaline::Solution::Differential,
            SolutionSpec::Autonomous => kappaline::Solution::Autonomous,
            SolutionSpec::Estimated => kappaline::Solution::Estimated,
        }
    }
}

fn default_bias_tau() -> f64 {
    60.0
}

/// The controller under test.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct ControllerSpec {
    /// Control rate, Hz.
    pub rate_hz: f64,
    /// Commanded travel speed, m/s (capped by the guidance speed limit).
    pub speed_m_s: f64,
    /// Correct the antenna position for roll using the measured roll.
    #[serde(default = "yes")]
    pub terrain_compensation: bool,
    /// The steering law and its gains.
    pub law: LawSpec,
    /// Projection settings.
    #[serde(default)]
    pub tracker: TrackerSpec,
    /// Supervisor limits.
    #[serde(default)]
    pub supervisor: SupervisorSpec,
    /// Numeric type of the controller: `f32` (as on a microcontroller with
    /// a single-precision FPU), `f64`, or `q32` (the Q32.32 fixed-point
    /// backend `kappaline::Q32x32`, as on a core without an FPU).
    #[serde(default)]
    pub precision: Precision,
}

/// Numeric type the controller runs in.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq, Eq, Default)]
#[serde(rename_all = "snake_case")]
pub enum Precision {
    /// Single precision.
    #[default]
    F32,
    /// Double precision.
    F64,
    /// Q32.32 fixed point (`kappaline::Q32x32`).
    Q32,
}

fn yes() -> bool {
    true
}

/// A steering law and its gains.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum LawSpec {
    /// Pure pursuit with lookahead `clamp(base + time * v, min, max)`.
    PurePursuit {
        /// Lookahead at standstill, metres.
        lookahead_base_m: f64,
        /// Lookahead growth with speed, s.
        #[serde(default)]
        lookahead_time_s: f64,
        /// Smallest lookahead, metres.
        lookahead_min_m: f64,
        /// Largest lookahead, metres.
        lookahead_max_m: f64,
    },
    /// Stanley with softening.
    Stanley {
        /// Cross-track gain, 1/s.
        gain_per_s: f64,
        /// Softening speed, m/s.
        #[serde(default = "default_soft")]
        softening_m_s: f64,
        /// Wheelbase assumed for a differential drive, metres.
        #[serde(default = "default_virtual_wheelbase")]
        virtual_wheelbase_m: f64,
    },
    /// Frenet-frame (chained-form) feedback with curvature feedforward.
    Frenet {
        /// Cross-track gain, 1/m^2.
        cross_track_gain_per_m2: f64,
        /// Heading gain, 1/m.
        heading_gain_per_m: f64,
        /// Integral gain, 1/m^3 (absent: no integral term).
        #[serde(default)]
        integral_gain_per_m3: Option<f64>,
        /// Integral output limit, 1/m.
        #[serde(default = "default_integral_limit")]
        integral_limit_per_m: f64,
        /// |cross-track| band within which it integrates, metres.
        #[serde(default = "default_integral_band")]
        integral_band_m: f64,
    },
}

fn default_soft() -> f64 {
    1.0
}
fn default_virtual_wheelbase() -> f64 {
    0.5
}
fn default_integral_limit() -> f64 {
    0.02
}
fn default_integral_band() -> f64 {
    0.3
}

/// Supervisor limits; each absent one keeps the core's default for the vehicle.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq, Default)]
#[serde(deny_unknown_fields)]
pub struct SupervisorSpec {
    /// A fix older than this is stale, s.
    pub max_fix_age_s: Option<f64>,
    /// Lowest solution steered with (absent: no gate).
    pub min_solution: Option<SolutionSpec>,
    /// Largest position sigma steered with, metres (absent: no gate).
    pub max_sigma_m: Option<f64>,
    /// How long the last command is held without a usable fix, s.
    pub hold_time_s: Option<f64>,
    /// Largest cross-track error steered back from, metres.
    pub max_cross_track_m: Option<f64>,
    /// Largest heading error steered back from, degrees.
    pub max_heading_error_deg: Option<f64>,
    /// Largest disagreement of a fix with dead reckoning, metres.
    pub max_jump_m: Option<f64>,
    /// Growth of that tolerance with time since the last good fix, m/s.
    pub jump_growth_m_s: Option<f64>,
    /// Consistent fixes needed to re-acquire.
    pub confirm_fixes: Option<u32>,
    /// Distance before the end of an open path that counts as arrived, metres.
    pub end_tolerance_m: Option<f64>,
}

/// Projection window and loss settings (see `kappaline::TrackerConfig`).
#[derive(Debug, Clone, Copy, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct TrackerSpec {
    /// Window behind the last foot point, metres.
    #[serde(default = "d_back")]
    pub window_back_m: f64,
    /// Window ahead of the last foot point, metres.
    #[serde(default = "d_ahead")]
    pub window_ahead_m: f64,
    /// Lost beyond this distance from the path, metres.
    #[serde(default = "d_lost")]
    pub lost_distance_m: f64,
    /// Curvature lookahead, metres.
    #[serde(default = "d_look")]
    pub lookahead_m: f64,
    /// Heading weight during acquisition, metres per radian.
    #[serde(default = "d_hw")]
    pub heading_weight_m: f64,
}

// Tracker defaults are the core's field defaults (`TrackerConfig::tractor`).
fn d_back() -> f64 {
    kappaline::TrackerConfig::<f64>::tractor().window_back
}
fn d_ahead() -> f64 {
    kappaline::TrackerConfig::<f64>::tractor().window_ahead
}
fn d_lost() -> f64 {
    kappaline::TrackerConfig::<f64>::tractor().lost_distance
}
fn d_look() -> f64 {
    kappaline::TrackerConfig::<f64>::tractor().lookahead
}
fn d_hw() -> f64 {
    kappaline::TrackerConfig::<f64>::tractor().heading_weight
}

impl Default for TrackerSpec {
    fn default() -> Self {
        Self {
            window_back_m: d_back(),
            window_ahead_m: d_ahead(),
            lost_distance_m: d_lost(),
            lookahead_m: d_look(),
            heading_weight_m: d_hw(),
        }
    }
}

/// A fault injected during the run.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq)]
#[serde(tag = "type", rename_all = "snake_case", deny_unknown_fields)]
pub enum FaultSpec {
    /// The receiver gives no fixes.
    GnssDropout {
        /// Start, s.
        at_s: f64,
        /// Length, s.
        duration_s: f64,
    },
    /// The receiver's position is offset.
    GnssJump {
        /// Start, s.
        at_s: f64,
        /// Length, s.
        duration_s: f64,
        /// Offset east, metres.
        east_m: f64,
        /// Offset north, metres.
        north_m: f64,
    },
    /// The receiver's solution drops (from fixed to float, say): it
    /// reports `solution` and its position is noisier by `extra_noise_m`.
    SolutionDrop {
        /// Start, s.
        at_s: f64,
        /// Length, s.
        duration_s: f64,
        /// The solution reported meanwhile.
        solution: SolutionSpec,
        /// Extra white position noise, metres per axis.
        #[serde(default)]
        extra_noise_m: f64,
    },
    /// The steering actuator stops following its command and holds where
    /// it is (a differential drive holds both wheel speeds).
    SteerStuck {
        /// Start, s.
        at_s: f64,
        /// Length, s.
        duration_s: f64,
    },
    /// Fixes with non-finite numbers (NaN position and heading), as a
    /// receiver or driver bug would send them.
    GnssNonFinite {
        /// Start, s.
        at_s: f64,
        /// Length, s.
        duration_s: f64,
    },
    /// A stale stream: the receiver keeps sending its last epoch before the
    /// fault, with the same time stamp, as a hung driver does.
    GnssStale {
        /// Start, s.
        at_s: f64,
        /// Length, s.
        duration_s: f64,
    },
    /// Epochs sampled in the window arrive `extra_latency_s` late (and
    /// everything behind them waits: delivery stays in order).
    LatencySpike {
        /// Start, s.
        at_s: f64,
        /// Length, s.
        duration_s: f64,
        /// Added delay, s.
        extra_latency_s: f64,
    },
    /// An indoor positioning source re-matching its map: the reported pose
    /// steps by the offset at `at_s`, and again every `every_s` for `count`
    /// steps; the steps add up and stay.
    Relocalisation {
        /// First step, s.
        at_s: f64,
        /// Number of steps.
        #[serde(default = "one")]
        count: u32,
        /// Time between steps, s (needed when `count` > 1).
        #[serde(default)]
        every_s: f64,
        /// Step east, metres.
        #[serde(default)]
        east_m: f64,
        /// Step north, metres.
        #[serde(default)]
        north_m: f64,
        /// Step of the reported heading, degrees.
        #[serde(default)]
        heading_deg: f64,
    },
}

fn one() -> u32 {
    1
}

impl FaultSpec {
    /// The scenario-file name of the fault's type.
    pub fn kind(&self) -> &'static str {
        match self {
            FaultSpec::GnssDropout { .. } => "gnss_dropout",
            FaultSpec::GnssJump { .. } => "gnss_jump",
            FaultSpec::SteerStuck { .. } => "steer_stuck",
            FaultSpec::GnssNonFinite { .. } => "gnss_non_finite",
            FaultSpec::GnssStale { .. } => "gnss_stale",
            FaultSpec::LatencySpike { .. } => "latency_spike",
            FaultSpec::Relocalisation { .. } => "relocalisation",
            FaultSpec::SolutionDrop { .. } => "solution_drop",
        }
    }

    /// The time window the fault acts in, s (a relocalisation: from its
    /// first to its last step).
    pub fn window(&self) -> (f64, f64) {
        match *self {
            FaultSpec::GnssDropout { at_s, duration_s }
            | FaultSpec::GnssJump {
                at_s, duration_s, ..
            }
            | FaultSpec::SteerStuck { at_s, duration_s }
            | FaultSpec::GnssNonFinite { at_s, duration_s }
            | FaultSpec::GnssStale { at_s, duration_s }
            | FaultSpec::LatencySpike {
                at_s, duration_s, ..
            }
            | FaultSpec::SolutionDrop {
                at_s, duration_s, ..
            } => (at_s, at_s + duration_s),
            FaultSpec::Relocalisation {
                at_s,
                count,
                every_s,
                ..
            } => (at_s, at_s + f64::from(count.saturating_sub(1)) * every_s),
        }
    }

    /// One line for reports: type, window and parameters.
    pub fn describe(&self) -> String {
        let (a, b) = self.window();
        let extra = match *self {
            FaultSpec::GnssJump {
                east_m, north_m, ..
            } => format!(", offset {east_m} m east, {north_m} m north"),
            FaultSpec::LatencySpike {
                extra_latency_s, ..
            } => format!(", {extra_latency_s} s added"),
            FaultSpec::Relocalisation {
                count,
                every_s,
                east_m,
                north_m,
                heading_deg,
                ..
            } => {
                let step = format!("{east_m} m east, {north_m} m north, {heading_deg} deg");
                if count > 1 {
                    format!(", {count} steps every {every_s} s of {step}")
                } else {
                    format!(", a step of {step}")
                }
            }
            FaultSpec::SolutionDrop {
                solution,
                extra_noise_m,
                ..
            } => format!(", {solution:?} solution, {extra_noise_m} m more noise"),
            _ => String::new(),
        };
        format!("{} from {a} s to {b} s{extra}", self.kind())
    }
}

/// How the run is measured.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct MetricsSpec {
    /// The representative point, metres ahead of the reference point.
    #[serde(default)]
    pub point_ahead_m: f64,
    /// Straight-pass samples start this far into a straight segment, metres
    /// (skips the exit of the turn before it).
    #[serde(default = "d_skip")]
    pub straight_entry_skip_m: f64,
    /// Settled once |cross-track| stays within this band, metres.
    #[serde(default = "d_band")]
    pub settle_band_m: f64,
    /// ... for this distance, metres.
    #[serde(default = "d_hold")]
    pub settle_hold_m: f64,
    /// Trace sampling rate, Hz.
    #[serde(default = "d_rec")]
    pub record_hz: f64,
}

fn d_skip() -> f64 {
    10.0
}
fn d_band() -> f64 {
    0.1
}
fn d_hold() -> f64 {
    10.0
}
fn d_rec() -> f64 {
    50.0
}

impl Default for MetricsSpec {
    fn default() -> Self {
        Self {
            point_ahead_m: 0.0,
            straight_entry_skip_m: d_skip(),
            settle_band_m: d_band(),
            settle_hold_m: d_hold(),
            record_hz: d_rec(),
        }
    }
}

/// Pass/fail limits; an absent limit is not checked.
#[derive(Debug, Clone, Deserialize, PartialEq, Default)]
#[serde(deny_unknown_fields)]
pub struct ThresholdSpec {
    /// Cross-track RMS on straight passes, metres.
    pub straight_rms_m: Option<f64>,
    /// 95th percentile of |cross-track| on straight passes, metres.
    pub straight_p95_m: Option<f64>,
    /// Largest |cross-track| on straight passes, metres.
    pub straight_max_m: Option<f64>,
    /// Cross-track RMS on curved parts, metres.
    pub curved_rms_m: Option<f64>,
    /// Largest |cross-track| anywhere, metres.
    pub overall_max_m: Option<f64>,
    /// Heading error RMS, degrees.
    pub heading_rms_deg: Option<f64>,
    /// Settling distance, metres.
    pub settle_distance_m: Option<f64>,
    /// Smallest share of the path length driven (laps on a loop; 0.98 = 98 % of an open path).
    pub min_completion: Option<f64>,
    /// Longest total time in the lost status, s.
    pub max_lost_s: Option<f64>,
    /// Statuses that must be seen within time windows.
    #[serde(default)]
    pub expect_status: Vec<StatusExpectation>,
    /// Statuses that must never be seen.
    #[serde(default)]
    pub forbid_status: Vec<String>,
}

/// A supervisor status that must appear within a time window.
#[derive(Debug, Clone, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct StatusExpectation {
    /// Status name (`acquiring`, `following`, `degraded`, `lost`, `end_of_path`, `fault`).
    pub status: String,
    /// Earliest time, s.
    pub from_s: f64,
    /// Latest time, s.
    pub until_s: f64,
}
