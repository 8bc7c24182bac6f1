//! The simulated world: vehicle plants, actuators, terrain and sensors.

pub mod actuator;
pub mod faults;
pub mod sensors;
pub mod terrain;
pub mod vehicle_model;

pub use actuator::LagActuator;
pub use faults::{FaultInjector, StreamFault};
pub use sensors::{GnssFault, GnssModel, Measurement, SensorSuite};
pub use terrain::Terrain;
pub use vehicle_model::{Bicycle, BodyState, DiffDrive, Drive, Plant};
