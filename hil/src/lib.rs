//! Host-side harness for kappaline: simulated vehicles and sensors, the
//! controller in a closed loop, metrics, reports and Monte-Carlo sweeps.
//!
//! A run: [`scenario::Scenario`] (parsed from TOML) -> [`closed_loop::run`]
//! with the controller behind the [`firmware::Firmware`] trait ->
//! [`metrics::compute`] and [`metrics::check`] -> [`report`].
//!
//! [`pathcmd`] is the `build-path` command (waypoints from CSV or GeoJSON
//! to a firmware `const` source file and an SVG preview).
//!
//! # Safety of use
//! A simulation passing its thresholds is evidence, not proof: this harness
//! is not a certified safety function. A machine steered by kappaline needs
//! an independent emergency stop and a safety case under the standards that
//! apply to it (e.g. ISO 25119, ISO 18497, ISO 3691-4, IEC 61508).

pub mod cli;
pub mod closed_loop;
pub mod controller;
pub mod firmware;
pub mod link;
pub mod metrics;
pub mod pathcmd;
pub mod report;
pub mod runner;
pub mod scenario;
pub mod shards;
pub mod sim;
pub mod sweep;
pub mod truth;
