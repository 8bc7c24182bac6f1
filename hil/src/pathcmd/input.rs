//! Waypoint files: CSV and GeoJSON (RFC 7946) LineStrings.
//!
//! # CSV
//!
//! Comma-separated, one waypoint per line. Blank lines and lines starting
//! with `#` are skipped. The first other line is a header naming the
//! columns (any order, case-insensitive, surrounding spaces ignored):
//!
//! | columns | meaning |
//! |---|---|
//! | `x`, `y` (or `east`, `north`) | local metres |
//! | `lat`, `lon` (or `latitude`, `longitude`) | WGS84 degrees |
//! | `height` (optional, with `lat`/`lon`) | metres above the ellipsoid (default 0) |
//! | `heading_deg` (optional) | heading to pass the point with, degrees counter-clockwise from east (`+x`); an empty cell means "estimate it" |
//!
//! Other columns are ignored. Geodetic points are mapped into the east-north
//! plane of the first point (or the `--origin` given).
//!
//! # GeoJSON
//!
//! A `LineString` geometry, a `Feature` holding one, or a
//! `FeatureCollection` with exactly one `LineString` feature (features of
//! other geometry types are skipped). Positions are `[longitude, latitude]`
//! or `[longitude, latitude, height]` in WGS84 degrees (RFC 7946, 3.1.1).

use anyhow::{anyhow, bail, Context, Result};
use kappaline::{Geodetic, LocalFrame};
use serde_json::Value;

/// One waypoint as read, before mapping to local metres.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RawPoint {
    /// `x` metres, or longitude degrees.
    pub a: f64,
    /// `y` metres, or latitude degrees.
    pub b: f64,
    /// Height, metres (geodetic input only).
    pub height: f64,
    /// Heading, degrees counter-clockwise from east, if given.
    pub heading_deg: Option<f64>,
}

/// Waypoints in local metres.
#[derive(Debug, Clone, PartialEq)]
pub struct Waypoints {
    /// `(x, y)` metres and optional heading (radians, CCW from `+x`).
    pub points: Vec<(f64, f64, Option<f64>)>,
    /// The geodetic origin (degrees, degrees, metres) when the input was geodetic.
    pub origin: Option<(f64, f64, f64)>,
    /// Where each point came from ("line 7", "coordinate 3"), for messages.
    pub sources: Vec<String>,
}

/// Coordinates of a file: local metres or geodetic degrees.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Coords {
    /// `x`/`y` metres.
    Local,
    /// Longitude/latitude degrees.
    Geodetic,
}

/// Reads CSV text (`name` is used in messages).
pub fn parse_csv(name: &str, text: &str) -> Result<(Coords, Vec<RawPoint>, Vec<String>)> {
    let mut header: Option<Header> = None;
    let mut points = Vec::new();
    let mut sources = Vec::new();
    for (i, line) in text.lines().enumerate() {
        let lineno = i + 1;
        let trimmed = line.trim();
        if trimmed.is_empty() || trimmed.starts_with('#') {
            continue;
        }
        let cells: Vec<&str> = trimmed.split(',').map(str::trim).collect();
        let Some((coords, ia, ib, ih, ihd)) = header else {
            header = Some(parse_header(name, lineno, &cells)?);
            continue;
        };
        let cell = |idx: usize, what: &str| -> Result<f64> {
            let raw = cells.get(idx).copied().unwrap_or("");
            let v: f64 = raw.parse().map_err(|_| {
                anyhow!(
                    "{name} line {lineno}: column {} ({what}): cannot read {raw:?} as a number",
                    idx + 1
                )
            })?;
            if !v.is_finite() {
                bail!(
                    "{name} line {lineno}: column {} ({what}): {raw:?} is not finite",
                    idx + 1
                );
            }
            Ok(v)
        };
        let (na, nb) = match coords {
            Coords::Local => ("x", "y"),
            Coords::Geodetic => ("lon", "lat"),
        };
        let a = cell(ia, na)?;
        let b = cell(ib, nb)?;
        let height = match ih {
            Some(idx) => cell(idx, "height")?,
            None => 0.0,
        };
        let heading_deg = match ihd {
            Some(idx) if cells.get(idx).is_some_and(|c| !c.is_empty()) => {
                Some(cell(idx, "heading_deg")?)
            }
            _ => None,
        };
        if coords == Coords::Geodetic {
            check_lon_lat(a, b).map_err(|e| anyhow!("{name} line {lineno}: {e}"))?;
        }
        points.push(RawPoint {
            a,
            b,
            height,
            heading_deg,
        });
        sources.push(format!("{name} line {lineno}"));
    }
    if header.is_none() {
        bail!("{name}: no header line (expected columns x,y or lat,lon)");
    }
    let coords = header.map_or(Coords::Local, |h| h.0);
    Ok((coords, points, sources))
}

type Header = (Coords, usize, usize, Option<usize>, Option<usize>);

fn parse_header(name: &str, lineno: usize, cells: &[&str]) -> Result<Header> {
    let find = |names: &[&str]| {
        cells
            .iter()
            .position(|c| names.iter().any(|n| c.eq_ignore_ascii_case(n)))
    };
    let x = find(&["x", "east"]);
    let y = find(&["y", "north"]);
    let lat = find(&["lat", "latitude"]);
    let lon = find(&["lon", "longitude"]);
    let heading = find(&["heading_deg"]);
    let height = find(&["height"]);
    match (x, y, lat, lon) {
        (Some(x), Some(y), None, None) => Ok((Coords::Local, x, y, None, heading)),
        (None, None, Some(lat), Some(lon)) => Ok((Coords::Geodetic, lon, lat, height, heading)),
        _ => bail!(
            "{name} line {lineno}: header must name the columns x,y (local metres) or lat,lon (degrees), found {:?}",
            cells.join(",")
        ),
    }
}

fn check_lon_lat(lon: f64, lat: f64) -> Result<()> {
    if !(-180.0..=180.0).contains(&lon) {
        bail!("longitude {lon} outside [-180, 180]");
    }
    if !(-90.0..=90.0).contains(&lat) {
        bail!("latitude {lat} outside [-90, 90]");
    }
    Ok(())
}

/// Reads GeoJSON text (`name` is used in messages).
pub fn parse_geojson(name: &str, text: &str) -> Result<(Vec<RawPoint>, Vec<String>)> {
    let root: Value = serde_json::from_str(text).map_err(|e| {
        anyhow!(
            "{name} line {} column {}: not valid JSON: {e}",
            e.line(),
            e.column()
        )
    })?;
    let kind = root.get("type").and_then(Value::as_str).unwrap_or("");
    match kind {
        "LineString" => line_string(name, "geometry", &root),
        "Feature" => {
            let geom = root
                .get("geometry")
                .filter(|g| !g.is_null())
                .ok_or_else(|| anyhow!("{name}: the Feature has no geometry"))?;
            line_string(name, &format!("feature 0{}", feature_name(&root)), geom)
        }
        "FeatureCollection" => {
            let features = root
                .get("features")
                .and_then(Value::as_array)
                .ok_or_else(|| anyhow!("{name}: FeatureCollection without a \"features\" array"))?;
            let mut found: Option<(usize, &Value)> = None;
            for (i, f) in features.iter().enumerate() {
                let g = f.get("geometry");
                let gt = g.and_then(|g| g.get("type")).and_then(Value::as_str);
                if gt == Some("LineString") {
                    if let Some((first, _)) = found {
                        bail!(
                            "{name}: feature {i}{} is a second LineString (feature {first} is the first); give one",
                            feature_name(f)
                        );
                    }
                    found = Some((i, f));
                }
            }
            let (i, f) = found.ok_or_else(|| anyhow!("{name}: no feature has a LineString geometry"))?;
            let label = format!("feature {i}{}", feature_name(f));
            let geom = f.get("geometry").ok_or_else(|| anyhow!("{name}: {label}: no geometry"))?;
            line_string(name, &label, geom)
        }
        "" => bail!("{name}: the top-level object has no \"type\""),
        other => bail!(
            "{name}: top-level type {other:?} holds no LineString (expected LineString, Feature or FeatureCollection)"
        ),
    }
}

fn feature_name(f: &Value) -> String {
    f.get("properties")
        .and_then(|p| p.get("name"))
        .and_then(Value::as_str)
        .map(|n| format!(" ({n:?})"))
        .unwrap_or_default()
}

fn line_string(name: &str, label: &str, geom: &Value) -> Result<(Vec<RawPoint>, Vec<String>)> {
    let gt = geom.get("type").and_then(Value::as_str).unwrap_or("");
    if gt != "LineString" {
        bail!("{name}: {label}: geometry type {gt:?}, expected \"LineString\"");
    }
    let coords = geom
        .get("coordinates")
        .and_then(Value::as_array)
        .ok_or_else(|| anyhow!("{name}: {label}: LineString without a \"coordinates\" array"))?;
    let mut points = Vec::new();
    let mut sources = Vec::new();
    for (j, c) in coords.iter().enumerate() {
        let here = format!("{name}: {label}: coordinate {j}");
        let arr = c
            .as_array()
            .ok_or_else(|| anyhow!("{here}: not a position array [lon, lat]"))?;
        if arr.len() < 2 || arr.len() > 3 {
            bail!(
                "{here}: a position has 2 or 3 numbers (lon, lat[, height]), found {}",
                arr.len()
            );
        }
        let num = |k: usize| {
            arr.get(k)
                .and_then(Value::as_f64)
                .ok_or_else(|| anyhow!("{here}: element {k} is not a number"))
        };
        let lon = num(0)?;
        let lat = num(1)?;
        let height = if arr.len() == 3 { num(2)? } else { 0.0 };
        check_lon_lat(lon, lat).map_err(|e| anyhow!("{here}: {e}"))?;
        points.push(RawPoint {
            a: lon,
            b: lat,
            height,
            heading_deg: None,
        });
        sources.push(format!("{label} coordinate {j}"));
    }
    Ok((points, sources))
}

/// Maps raw points to local metres (geodetic ones into the ENU plane of
/// `origin`, or of the first point).
pub fn to_local(
    coords: Coords,
    raw: &[RawPoint],
    sources: Vec<String>,
    origin: Option<(f64, f64, f64)>,
) -> Result<Waypoints> {
    let heading = |p: &RawPoint| p.heading_deg.map(f64::to_radians);
    match coords {
        Coords::Local => Ok(Waypoints {
            points: raw.iter().map(|p| (p.a, p.b, heading(p))).collect(),
            origin: None,
            sources,
        }),
        Coords::Geodetic => {
            let first = raw.first().ok_or_else(|| anyhow!("no waypoints"))?;
            let o = origin.unwrap_or((first.b, first.a, first.height));
            let frame = LocalFrame::new(
                Geodetic::from_degrees(o.0, o.1, o.2).map_err(|e| anyhow!("origin: {e}"))?,
            )
            .map_err(|e| anyhow!("origin: {e}"))?;
            let mut points = Vec::with_capacity(raw.len());
            for (p, src) in raw.iter().zip(&sources) {
                let g = Geodetic::from_degrees(p.b, p.a, p.height)
                    .map_err(|e| anyhow!("{src}: {e}"))?;
                let enu = frame.to_enu(&g).map_err(|e| anyhow!("{src}: {e}"))?;
                if enu.east.hypot(enu.north) > 10_000.0 {
                    eprintln!(
                        "warning: {src} is {:.0} m from the origin; the local plane is meant for 10 km",
                        enu.east.hypot(enu.north)
                    );
                }
                points.push((enu.east, enu.north, heading(p)));
            }
            Ok(Waypoints {
                points,
                origin: Some(o),
                sources,
            })
        }
    }
}

/// Reads a waypoint file, CSV or GeoJSON by extension (`.csv`; `.geojson` or `.json`).
pub fn read_waypoints(
    path: &std::path::Path,
    origin: Option<(f64, f64, f64)>,
) -> Result<Waypoints> {
    let name = path.display().to_string();
    let text = std::fs::read_to_string(path).with_context(|| format!("cannot read {name}"))?;
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .unwrap_or("")
        .to_ascii_lowercase();
    let (coords, raw, sources) = match ext.as_str() {
        "csv" => parse_csv(&name, &text)?,
        "geojson" | "json" => {
            let (raw, sources) = parse_geojson(&name, &text)?;
            (Coords::Geodetic, raw, sources)
        }
        other => bail!("{name}: unknown extension {other:?} (use .csv, .geojson or .json)"),
    };
    if raw.len() < 2 {
        bail!("{name}: needs at least two waypoints, found {}", raw.len());
    }
    to_local(coords, &raw, sources, origin)
}
