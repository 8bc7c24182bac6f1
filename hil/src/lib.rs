//! Host-side harness for kappaline.
//!
//! Modules: [`pathcmd`], the `build-path` command (waypoints from CSV or
//! GeoJSON to a firmware `const` source file and an SVG preview).

pub mod pathcmd;
