//! `build-path`: waypoints (CSV or GeoJSON) to a drivable kappaline path,
//! checked against vehicle limits, written as a Rust source file for
//! firmware (a segment table and a ready loader `fn`), a path blob beside
//! it and an SVG preview.
//!
//! ```text
//! build-path --input FILE (.csv | .geojson | .json) --out-rs FILE
//!            [--out-blob FILE] [--out-svg FILE]
//!            [--mode corners|spline] [--radius M] [--max-sharpness S]
//!            [--max-curvature K] [--max-curvature-rate R --speed V]
//!            [--origin LAT,LON[,HEIGHT]] [--name IDENT] [--strict]
//! ```
//!
//! * `--mode corners` (default): lines joined by clothoid-arc-clothoid
//!   corners of radius `--radius` (default 6 m) and clothoid sharpness
//!   `--max-sharpness` (1/m^2; default `1 / radius^2`, a clothoid as long
//!   as the radius on each side of the arc, so the curvature is continuous);
//! * `--mode spline`: a G1 clothoid spline through the waypoints, at the
//!   headings of the `heading_deg` column or estimated by the Bessel
//!   (three-point) rule; its curvature steps at the waypoints;
//! * limits for the feasibility check: maximum curvature `--max-curvature`
//!   (default `1 / radius`), maximum sharpness `--max-sharpness`, or the
//!   curvature rate `--max-curvature-rate` (1/m/s) divided by `--speed`
//!   (m/s); curvature steps larger than `--max-curvature-jump` (1/m) are
//!   reported, by default 1e-6 1/m when a sharpness limit applies (a
//!   machine that steers at a finite rate cannot follow a step) and not
//!   checked otherwise;
//! * `--strict` makes a limit violation an error (the files are still written).
//!
//! Input formats: see [`input`]. Outputs: the Rust file of
//! [`output::rust_const`] (its `load_NAME()` returns a
//! `Result<Path<f32, N>, PathError>`, nothing left to write by hand) and the
//! path blob of `kappaline::io::blob` (millimetres, with the geodetic origin
//! when the input had one), by default beside the Rust file with the
//! extension `.kpath`. Both are read back before the command succeeds: the
//! Rust table through the core's anchor check in `f32`, the blob through
//! the core's decoder in `f64` (re-encoding to the same bytes) and in `f32`.
//! The SVG preview: [`preview::svg`].
//!
//! Caution: a generated path is not a safety function. Check it in the
//! preview and on the machine at low speed, with an independent emergency
//! stop (see the kappaline crate documentation).

pub mod input;
pub mod output;
pub mod preview;

use std::path::PathBuf;

use anyhow::{anyhow, bail, Context, Result};
use kappaline::io::blob::{decode, encode, encoded_len, EncodeOptions, Origin};
use kappaline::{
    check_path, clothoid_spline, corner_path, AnchoredSegment, Continuity, Corner, CornerConfig,
    CornerError, FeasibilityReport, FitError, Path, PathLimits, Pose, Segment, ViolationKind,
    Waypoint,
};

/// Most segments a built path may have.
pub const MAX_SEGMENTS: usize = 512;
/// Most violations listed (all are counted).
pub const MAX_VIOLATIONS: usize = 64;

/// How to join the waypoints.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum Mode {
    /// Lines and clothoid-arc-clothoid corners.
    Corners,
    /// A G1 clothoid spline.
    Spline,
}

/// Options of `build-path`.
#[derive(Debug, Clone, PartialEq, clap::Parser)]
#[command(
    name = "build-path",
    about = "Waypoints (CSV or GeoJSON) to a checked kappaline path: a Rust source file, a path blob and an SVG preview"
)]
pub struct Options {
    /// Waypoint file: .csv, .geojson or .json.
    #[arg(long)]
    pub input: PathBuf,
    /// Rust source to write.
    #[arg(long = "out-rs")]
    pub out_rs: PathBuf,
    /// Path blob to write (default: the Rust file with the extension `.kpath`).
    #[arg(long = "out-blob")]
    pub out_blob: Option<PathBuf>,
    /// SVG preview to write, if any.
    #[arg(long = "out-svg")]
    pub out_svg: Option<PathBuf>,
    /// Corners (lines and clothoid-arc-clothoid corners) or a G1 clothoid spline.
    #[arg(long, value_enum, default_value_t = Mode::Corners)]
    pub mode: Mode,
    /// Corner radius, metres.
    #[arg(long, default_value_t = 6.0, value_parser = positive, allow_negative_numbers = true)]
    pub radius: f64,
    /// Clothoid sharpness for corners and limit for the check, 1/m^2
    /// (corners: default 1 / radius^2; spline: default none).
    #[arg(long = "max-sharpness", value_parser = positive, allow_negative_numbers = true)]
    pub max_sharpness: Option<f64>,
    /// Largest curvature step tolerated at a joint, 1/m (default 1e-6 when
    /// a sharpness limit applies, else not checked).
    #[arg(long = "max-curvature-jump", value_parser = non_negative, allow_negative_numbers = true)]
    pub max_curvature_jump: Option<f64>,
    /// Curvature limit for the check, 1/m (default `1 / radius`).
    #[arg(long = "max-curvature", value_parser = positive, allow_negative_numbers = true)]
    pub max_curvature: Option<f64>,
    /// Curvature-rate limit, 1/m/s (with `--speed`, gives the sharpness limit).
    #[arg(long = "max-curvature-rate", value_parser = positive, requires = "speed", allow_negative_numbers = true)]
    pub max_curvature_rate: Option<f64>,
    /// Planned speed, m/s (with `--max-curvature-rate`).
    #[arg(long, value_parser = positive, requires = "max_curvature_rate", allow_negative_numbers = true)]
    pub speed: Option<f64>,
    /// Geodetic origin of the local frame: LAT,LON or LAT,LON,HEIGHT (degrees, degrees, metres).
    #[arg(long, value_parser = parse_origin)]
    pub origin: Option<(f64, f64, f64)>,
    /// Prefix of the generated constants (an identifier; upper-cased).
    #[arg(long, default_value = "PATH", value_parser = identifier)]
    pub name: String,
    /// Fail on a limit violation (the files are still written).
    #[arg(long)]
    pub strict: bool,
}

/// Parses the arguments after the verb (a leading `build-path` is skipped).
///
/// # Errors
/// A usage error naming the option at fault (clap's message).
pub fn parse_args(args: &[String]) -> Result<Options> {
    use clap::Parser;
    let rest = match args.first() {
        Some(a) if a == "build-path" => args.get(1..).unwrap_or_default(),
        _ => args,
    };
    let argv = std::iter::once("build-path").chain(rest.iter().map(String::as_str));
    Options::try_parse_from(argv).map_err(|e| {
        let text = e.render().to_string();
        anyhow!("{}", text.trim_start_matches("error: ").trim_end())
    })
}

fn positive(v: &str) -> std::result::Result<f64, String> {
    let x: f64 = v
        .parse()
        .map_err(|_| format!("cannot read {v:?} as a number"))?;
    if x.is_finite() && x > 0.0 {
        Ok(x)
    } else {
        Err(format!("{v} must be positive and finite"))
    }
}

fn non_negative(v: &str) -> std::result::Result<f64, String> {
    let x: f64 = v
        .parse()
        .map_err(|_| format!("cannot read {v:?} as a number"))?;
    if x.is_finite() && x >= 0.0 {
        Ok(x)
    } else {
        Err(format!("{v} must be zero or positive and finite"))
    }
}

fn identifier(n: &str) -> std::result::Result<String, String> {
    let ok = n.chars().next().is_some_and(|c| c.is_ascii_alphabetic())
        && n.chars().all(|c| c.is_ascii_alphanumeric() || c == '_');
    if ok {
        Ok(n.to_ascii_uppercase())
    } else {
        Err(format!("{n:?} is not an identifier"))
    }
}

fn parse_origin(v: &str) -> std::result::Result<(f64, f64, f64), String> {
    let parts: Vec<f64> = v
        .split(',')
        .map(|p| p.trim().parse::<f64>())
        .collect::<std::result::Result<_, _>>()
        .map_err(|_| format!("cannot read {v:?} as LAT,LON[,HEIGHT]"))?;
    match parts.as_slice() {
        [lat, lon] => Ok((*lat, *lon, 0.0)),
        [lat, lon, h] => Ok((*lat, *lon, *h)),
        _ => Err(format!("{v:?} is not LAT,LON[,HEIGHT]")),
    }
}

/// A built path and what was found about it.
pub struct Built {
    /// The path (boxed: it holds up to [`MAX_SEGMENTS`] segments).
    pub path: Box<Path<f64, MAX_SEGMENTS>>,
    /// Corners (corner mode).
    pub corners: Vec<Corner<f64>>,
    /// Feasibility against the limits.
    pub report: FeasibilityReport<f64, MAX_VIOLATIONS>,
    /// The waypoints, local metres.
    pub waypoints: input::Waypoints,
    /// The limits checked.
    pub limits: PathLimits<f64>,
}

/// Curvature-step tolerance when a sharpness limit applies, 1/m.
pub const JUMP_TOLERANCE: f64 = 1e-6;

/// The limits the options describe: the sharpness limit given (or, in
/// corner mode, the corners' default `1 / radius^2`), and curvature steps
/// checked only when a sharpness limit applies or a tolerance is given.
pub fn limits(o: &Options) -> Result<PathLimits<f64>> {
    let given = match (o.max_sharpness, o.max_curvature_rate, o.speed) {
        (Some(s), _, _) => Some(s),
        (None, Some(r), Some(v)) => Some(r / v),
        _ => None,
    };
    let sharp = match o.mode {
        Mode::Corners => given.or(Some(1.0 / (o.radius * o.radius))),
        Mode::Spline => given,
    };
    let jump = o.max_curvature_jump.unwrap_or(if sharp.is_some() {
        JUMP_TOLERANCE
    } else {
        f64::MAX
    });
    PathLimits::new(o.max_curvature.unwrap_or(1.0 / o.radius), sharp, jump)
        .map_err(|e| anyhow!("vehicle limits: {e}"))
}

/// One violation in words: what is broken, where, by how much, and what
/// to change.
pub fn explain(v: &kappaline::Violation<f64>, mode: Mode) -> String {
    match v.kind {
        ViolationKind::Curvature => format!(
            "too tight at station {:.1} m (segment {}): curvature {:.4} 1/m is a radius of {:.2} m, tighter than the vehicle's {:.2} m (limit {:.4} 1/m); raise --radius{}, or move the waypoints apart",
            v.station,
            v.segment,
            v.value,
            1.0 / v.value,
            1.0 / v.limit,
            v.limit,
            if mode == Mode::Spline { " (it sets the curvature limit)" } else { "" }
        ),
        ViolationKind::Sharpness => format!(
            "curvature changes too fast at station {:.1} m (segment {}): {:.4} 1/m^2 against a limit of {:.4} 1/m^2 (at the planned speed the steering could not keep up); lower the speed, or let the corners use a gentler --max-sharpness",
            v.station, v.segment, v.value, v.limit
        ),
        ViolationKind::CurvatureJump => format!(
            "curvature steps by {:.4} 1/m at station {:.1} m (segment {}): a machine that steers at a finite rate cannot follow a step (tolerance {:.1e} 1/m); {}",
            v.value,
            v.station,
            v.segment,
            v.limit,
            match mode {
                Mode::Corners => "corners with clothoids (--max-sharpness) have none",
                Mode::Spline => "a G1 spline steps at its waypoints: use --mode corners for continuous curvature, or tolerate the steps with --max-curvature-jump",
            }
        ),
    }
}

/// Reads the waypoints and builds and checks the path (no files written).
pub fn build(o: &Options) -> Result<Built> {
    let wp = input::read_waypoints(&o.input, o.origin)?;
    let limits = limits(o)?;
    let src = |i: usize| {
        wp.sources
            .get(i)
            .cloned()
            .unwrap_or_else(|| format!("waypoint {i}"))
    };
    let (path, corners) = match o.mode {
        Mode::Corners => {
            let pts: Vec<(f64, f64)> = wp.points.iter().map(|p| (p.0, p.1)).collect();
            let cfg = CornerConfig {
                radius: o.radius,
                max_sharpness: limits.max_sharpness,
            };
            let (p, c) = corner_path::<f64, MAX_SEGMENTS, MAX_SEGMENTS>(&pts, &cfg)
                .map_err(|e| corner_message(e, &src))?;
            (Box::new(p), c.into_iter().collect())
        }
        Mode::Spline => {
            let pts: Vec<Waypoint<f64>> = wp
                .points
                .iter()
                .map(|&(x, y, heading)| Waypoint { x, y, heading })
                .collect();
            let p = clothoid_spline::<f64, MAX_SEGMENTS>(&pts).map_err(|e| match e {
                FitError::BadWaypoint { index } => {
                    anyhow!(
                        "{}: waypoint repeats the one before it or is not finite",
                        src(index)
                    )
                }
                other => anyhow!("clothoid spline: {other}"),
            })?;
            (Box::new(p), Vec::new())
        }
    };
    let report = check_path::<f64, MAX_SEGMENTS, MAX_VIOLATIONS>(&path, &limits);
    Ok(Built {
        path,
        corners,
        report,
        waypoints: wp,
        limits,
    })
}

fn corner_message(e: CornerError, src: &dyn Fn(usize) -> String) -> anyhow::Error {
    match e {
        CornerError::NonFinite { index } => anyhow!("{}: not a finite position", src(index)),
        CornerError::Repeated { index } => anyhow!("{}: repeats the waypoint before it", src(index)),
        CornerError::Reversal { index } => {
            anyhow!("{}: the waypoints double back here; no corner can turn 180 degrees", src(index))
        }
        CornerError::LegTooShort { index } => anyhow!(
            "{}: the leg ending here is too short for the corners at its ends (lower --radius or move the points apart)",
            src(index)
        ),
        other => anyhow!("corners: {other}"),
    }
}

/// Loads the path the way firmware does from the `const` tuples (anchors
/// checked by [`Path::from_anchored`]), in `f32`.
pub fn reload_f32(path: &Path<f64, MAX_SEGMENTS>) -> Result<Path<f32, MAX_SEGMENTS>> {
    let mut parts = Vec::with_capacity(path.len());
    for i in 0..path.len() {
        let (Some(a), Some(s)) = (path.anchor(i), path.segment(i)) else {
            bail!("segment {i} missing");
        };
        let seg = Segment::clothoid(s.length() as f32, s.kappa0() as f32, s.sigma() as f32)
            .map_err(|e| anyhow!("segment {i}: {e}"))?
            .with_direction(s.direction());
        parts.push(AnchoredSegment {
            segment: seg,
            start: Pose::new(a.x as f32, a.y as f32, a.heading as f32),
        });
    }
    Path::from_anchored(&parts, Continuity::DEFAULT, false)
        .map_err(|e| anyhow!("reload in f32: {e}"))
}

/// The path as a blob (millimetres; the geodetic origin when known),
/// checked by decoding it: in `f64` it must re-encode to the same bytes,
/// in `f32` it must load at all.
///
/// # Errors
/// The encoder's or decoder's message.
pub fn blob(path: &Path<f64, MAX_SEGMENTS>, origin: Option<(f64, f64, f64)>) -> Result<Vec<u8>> {
    let origin = origin
        .map(|(lat, lon, h)| Origin::from_degrees(lat, lon, h))
        .transpose()
        .map_err(|e| anyhow!("blob origin: {e}"))?;
    let options = EncodeOptions {
        origin,
        ..EncodeOptions::DEFAULT
    };
    let mut bytes = vec![0u8; encoded_len(path.len(), origin.is_some())];
    encode(path, &options, &mut bytes).map_err(|e| anyhow!("path blob: {e}"))?;
    let (back, info) = decode::<f64, MAX_SEGMENTS>(&bytes)
        .map_err(|e| anyhow!("path blob read back in f64: {e}"))?;
    let mut again = vec![0u8; bytes.len()];
    encode(&back, &EncodeOptions::matching(&info), &mut again)
        .map_err(|e| anyhow!("path blob re-encoded: {e}"))?;
    if again != bytes {
        bail!("path blob: re-encoding the decoded path gave other bytes");
    }
    decode::<f32, MAX_SEGMENTS>(&bytes).map_err(|e| anyhow!("path blob read back in f32: {e}"))?;
    Ok(bytes)
}

/// Runs `build-path` with the arguments after the verb.
pub fn run(args: &[String]) -> Result<()> {
    if args.iter().any(|a| a == "--help" || a == "-h") {
        use clap::CommandFactory;
        println!("{}", Options::command().render_help());
        return Ok(());
    }
    let o = parse_args(args)?;
    let b = build(&o)?;
    reload_f32(&b.path)?;
    let pts: Vec<(f64, f64)> = b.waypoints.points.iter().map(|p| (p.0, p.1)).collect();
    let method = match o.mode {
        Mode::Corners => format!(
            "corners, radius {} m, sharpness {}",
            o.radius,
            match (
                b.limits.max_sharpness,
                o.max_sharpness.is_some() || o.max_curvature_rate.is_some()
            ) {
                (Some(s), true) => format!("{s:.4} 1/m^2"),
                (Some(s), false) => format!("{s:.4} 1/m^2 (default 1 / radius^2)"),
                (None, _) => "unlimited (plain arcs)".to_string(),
            }
        ),
        Mode::Spline => "G1 clothoid spline".to_string(),
    };
    let input_name = o.input.display().to_string();
    let blob_bytes = blob(&b.path, b.waypoints.origin)?;
    let blob_path = o
        .out_blob
        .clone()
        .unwrap_or_else(|| o.out_rs.with_extension("kpath"));
    let blob_name = blob_path.file_name().map_or_else(
        || blob_path.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    );
    let d = output::Described {
        path: &b.path,
        report: &b.report,
        corners: &b.corners,
        waypoints: &pts,
        origin: b.waypoints.origin,
        input: &input_name,
        method: &method,
        name: &o.name,
        blob: Some((&blob_name, blob_bytes.len())),
    };
    std::fs::write(&o.out_rs, output::rust_const(&d))
        .with_context(|| format!("cannot write {}", o.out_rs.display()))?;
    std::fs::write(&blob_path, &blob_bytes)
        .with_context(|| format!("cannot write {}", blob_path.display()))?;
    if let Some(svg) = &o.out_svg {
        std::fs::write(svg, preview::svg(&d))
            .with_context(|| format!("cannot write {}", svg.display()))?;
    }
    println!(
        "build-path: {} waypoints -> {} segments, {:.3} m ({method})",
        pts.len(),
        b.path.len(),
        b.path.length()
    );
    for c in &b.corners {
        println!(
            "  corner at {}: deflection {:.1} deg, deviation {:.3} m, peak curvature {:.4} 1/m",
            b.waypoints
                .sources
                .get(c.vertex)
                .map_or("?", String::as_str),
            c.deflection.to_degrees(),
            c.deviation,
            c.peak_curvature
        );
    }
    if b.report.is_feasible() {
        println!(
            "  feasible: peak curvature {:.4} 1/m, peak sharpness {:.4} 1/m^2",
            b.report.peak_curvature, b.report.peak_sharpness
        );
    } else {
        println!("  {} limit violation(s):", b.report.total);
        for v in b.report.violations.iter() {
            println!("    {}", explain(v, o.mode));
        }
        let more = b.report.total.saturating_sub(b.report.violations.len());
        if more > 0 {
            println!("    ... and {more} more");
        }
    }
    if b.limits.max_curvature_jump >= f64::MAX {
        println!(
            "  curvature steps not checked (no sharpness limit given: --max-sharpness, or --max-curvature-rate with --speed)"
        );
    }
    println!(
        "  wrote {} (fn {}()), {} ({} bytes){}",
        o.out_rs.display(),
        output::loader_name(&o.name),
        blob_path.display(),
        blob_bytes.len(),
        o.out_svg
            .as_ref()
            .map_or(String::new(), |p| format!(", {}", p.display()))
    );
    if o.strict && !b.report.is_feasible() {
        bail!("{} limit violation(s) (--strict)", b.report.total);
    }
    Ok(())
}
