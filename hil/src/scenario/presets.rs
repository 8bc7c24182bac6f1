//! Machine kinds: the numbers of the core's presets
//! (`TrackerConfig::tractor()`, `PurePursuit::small_robot()`, ...) as
//! scenario values, for `init` and for switching the steering law with
//! `--set controller.law.kind=...`. The tests compare each with the core's
//! preset, so the two cannot drift apart.

use toml::{Table, Value};

/// A machine kind the core has presets for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum MachineKind {
    /// A field tractor at 1-4 m/s (front-steered).
    Tractor,
    /// A small differential-drive robot at 0.3-2 m/s.
    #[value(name = "small_robot", alias = "small-robot")]
    SmallRobot,
    /// A road vehicle at 5-15 m/s (front-steered).
    #[value(name = "road_vehicle", alias = "road-vehicle")]
    RoadVehicle,
}

/// Gains of pure pursuit: base (m), time (s), min (m), max (m).
pub type PurePursuitGains = (f64, f64, f64, f64);
/// Gains of Stanley: gain (1/s), softening (m/s), virtual wheelbase (m).
pub type StanleyGains = (f64, f64, f64);
/// Gains of the Frenet law: cross-track (1/m^2), heading (1/m).
pub type FrenetGains = (f64, f64);
/// Tracker: window back, window ahead, lost distance, lookahead (m),
/// heading weight (m/rad).
pub type TrackerValues = (f64, f64, f64, f64, f64);

impl MachineKind {
    /// The scenario-file name of the kind.
    pub fn name(self) -> &'static str {
        match self {
            MachineKind::Tractor => "tractor",
            MachineKind::SmallRobot => "small_robot",
            MachineKind::RoadVehicle => "road_vehicle",
        }
    }

    /// `PurePursuit::<kind>()`.
    pub fn pure_pursuit(self) -> PurePursuitGains {
        match self {
            MachineKind::Tractor => (2.0, 1.0, 3.0, 6.0),
            MachineKind::SmallRobot => (0.4, 0.8, 0.6, 2.0),
            MachineKind::RoadVehicle => (3.0, 0.8, 5.0, 15.0),
        }
    }

    /// `Stanley::<kind>()`.
    pub fn stanley(self) -> StanleyGains {
        match self {
            MachineKind::Tractor => (1.0, 1.0, 2.5),
            MachineKind::SmallRobot => (2.5, 0.3, 0.4),
            MachineKind::RoadVehicle => (0.8, 2.0, 3.0),
        }
    }

    /// `FrenetFeedback::<kind>()`.
    pub fn frenet(self) -> FrenetGains {
        match self {
            MachineKind::Tractor => (0.09, 0.6),
            MachineKind::SmallRobot => (1.44, 2.4),
            MachineKind::RoadVehicle => (0.0225, 0.3),
        }
    }

    /// `TrackerConfig::<kind>()`.
    pub fn tracker(self) -> TrackerValues {
        match self {
            MachineKind::Tractor => (1.0, 3.0, 2.0, 3.0, 1.0),
            MachineKind::SmallRobot => (0.5, 1.0, 0.5, 0.8, 0.5),
            MachineKind::RoadVehicle => (2.0, 4.0, 2.0, 8.0, 1.0),
        }
    }

    /// The kind a scenario's vehicle table is closest to: a differential
    /// drive is a small robot, a front-steered machine faster than 6 m/s a
    /// road vehicle, any other a tractor.
    pub fn of_vehicle(vehicle: Option<&Value>) -> Self {
        let kind = vehicle.and_then(|v| v.get("kind")).and_then(Value::as_str);
        let top = vehicle
            .and_then(|v| v.get("max_speed_m_s"))
            .and_then(|v| v.as_float().or_else(|| v.as_integer().map(|i| i as f64)))
            .unwrap_or(0.0);
        match kind {
            Some("differential") => MachineKind::SmallRobot,
            _ if top > 6.0 => MachineKind::RoadVehicle,
            _ => MachineKind::Tractor,
        }
    }

    /// The `[controller.law]` table of `law` (`frenet`, `pure_pursuit`,
    /// `stanley`) with this kind's gains.
    ///
    /// # Errors
    /// A message listing the laws for an unknown name.
    pub fn law_table(self, law: &str) -> Result<Table, String> {
        let mut t = Table::new();
        t.insert("kind".into(), Value::String(law.into()));
        let mut put = |k: &str, v: f64| {
            t.insert(k.into(), Value::Float(v));
        };
        match law {
            "frenet" => {
                let (kd, kh) = self.frenet();
                put("cross_track_gain_per_m2", kd);
                put("heading_gain_per_m", kh);
            }
            "pure_pursuit" => {
                let (b, tm, lo, hi) = self.pure_pursuit();
                put("lookahead_base_m", b);
                put("lookahead_time_s", tm);
                put("lookahead_min_m", lo);
                put("lookahead_max_m", hi);
            }
            "stanley" => {
                let (g, soft, wb) = self.stanley();
                put("gain_per_s", g);
                put("softening_m_s", soft);
                put("virtual_wheelbase_m", wb);
            }
            other => {
                return Err(format!(
                    "unknown steering law {other:?}; expected \"frenet\", \"pure_pursuit\" or \"stanley\""
                ))
            }
        }
        Ok(t)
    }
}
