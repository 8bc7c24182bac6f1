//! `build-path` on the sample inputs in `hil/data/`: the `const` file it
//! writes is parsed back here (independently of the writer) and loaded with
//! the core's `Path::from_anchored`, which checks every stored anchor
//! against the end of the segment before it (1 mm / 1 mrad).

use std::path::PathBuf;

use kappaline::{AnchoredSegment, Continuity, Geodetic, LocalFrame, Path, Pose, Segment};

type Tuple = (f64, f64, f64, f64, f64, f64, bool);

fn data(name: &str) -> String {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("data")
        .join(name)
        .display()
        .to_string()
}

fn out_dir(tag: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("kappaline-pathcmd-{}-{tag}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// Reads the `(x, y, heading, length, kappa0, sigma, reverse)` tuples back.
fn parse_segments(text: &str) -> Vec<Tuple> {
    let start = text.find("_SEGMENTS:").expect("segment table");
    let body = &text[start..];
    let body = &body[body.find("= [").unwrap() + 3..body.find("];").unwrap()];
    body.lines()
        .map(str::trim)
        .filter(|l| l.starts_with('('))
        .map(|l| {
            let inner = l.trim_start_matches('(').trim_end_matches("),");
            let f: Vec<&str> = inner.split(", ").collect();
            assert_eq!(f.len(), 7, "{l}");
            let n = |i: usize| f[i].parse::<f64>().unwrap();
            (n(0), n(1), n(2), n(3), n(4), n(5), f[6] == "true")
        })
        .collect()
}

fn load<T: kappaline::Real>(t: &[Tuple]) -> Path<T, 512> {
    let parts: Vec<AnchoredSegment<T>> = t
        .iter()
        .map(|&(x, y, h, l, k, s, r)| {
            let seg = Segment::clothoid(T::from_f64(l), T::from_f64(k), T::from_f64(s)).unwrap();
            AnchoredSegment {
                segment: if r { seg.reversed() } else { seg },
                start: Pose::new(T::from_f64(x), T::from_f64(y), T::from_f64(h)),
            }
        })
        .collect();
    Path::from_anchored(&parts, Continuity::DEFAULT, false).unwrap()
}

fn run(input: &str, tag: &str, extra: &[&str]) -> (String, String) {
    let dir = out_dir(tag);
    let rs = dir.join("path.rs");
    let svg = dir.join("path.svg");
    let mut args: Vec<String> = vec![
        "build-path".into(),
        "--input".into(),
        data(input),
        "--out-rs".into(),
        rs.display().to_string(),
        "--out-svg".into(),
        svg.display().to_string(),
    ];
    args.extend(extra.iter().map(|s| s.to_string()));
    kappaline_hil::pathcmd::run(&args).unwrap();
    let out = (
        std::fs::read_to_string(&rs).unwrap(),
        std::fs::read_to_string(&svg).unwrap(),
    );
    let _ = std::fs::remove_dir_all(&dir);
    out
}

fn check_ends(t: &[Tuple], first: (f64, f64), last: (f64, f64)) {
    let p64 = load::<f64>(t);
    let p32 = load::<f32>(t);
    let a = p64.at(0.0);
    assert!((a.x - first.0).hypot(a.y - first.1) < 1e-9);
    let e = p64.end_pose();
    assert!(
        (e.x - last.0).hypot(e.y - last.1) < 1e-6,
        "{e:?} vs {last:?}"
    );
    let e32 = p32.end_pose();
    assert!(((e32.x as f64) - last.0).hypot((e32.y as f64) - last.1) < 0.01);
}

#[test]
fn local_csv_corners_and_spline() {
    for (mode, extra) in [
        ("corners", &["--radius", "8", "--max-sharpness", "0.03"][..]),
        ("spline", &[][..]),
    ] {
        let mut args = vec!["--mode", mode];
        args.extend_from_slice(extra);
        let (rs, svg) = run("orchard_rows.csv", mode, &args);
        let t = parse_segments(&rs);
        assert!(t.len() >= 5);
        check_ends(&t, (0.0, 0.0), (-10.0, 80.0));
        assert!(rs.contains("PATH_ORIGIN: Option<(f64, f64, f64)> = None"));
        assert!(svg.starts_with("<svg") && svg.contains("<path d=\"M"));
        for part in ["east [m]", "north [m]", "scale-bar", "start", "waypoints"] {
            assert!(svg.contains(part), "preview without {part}");
        }
    }
}

#[test]
fn geodetic_csv_and_geojson() {
    // Last waypoints mapped into the plane of the first with the core's geodesy.
    let frame = |lat: f64, lon: f64, h: f64| {
        LocalFrame::new(Geodetic::from_degrees(lat, lon, h).unwrap()).unwrap()
    };
    let f = frame(46.93010, 7.41020, 560.0);
    let last = f
        .to_enu(&Geodetic::from_degrees(46.93420, 7.41600, 563.1).unwrap())
        .unwrap();
    let (rs, _) = run(
        "meadow_track.csv",
        "meadow",
        &[
            "--radius",
            "10",
            "--max-curvature-rate",
            "0.04",
            "--speed",
            "2.5",
            "--name",
            "meadow",
        ],
    );
    assert!(rs.contains("MEADOW_SEGMENTS") && rs.contains("Some((46.9301, 7.4102, 560.0))"));
    check_ends(&parse_segments(&rs), (0.0, 0.0), (last.east, last.north));

    let f = frame(46.92500, 7.42010, 555.0);
    let last = f
        .to_enu(&Geodetic::from_degrees(46.92790, 7.42060, 555.5).unwrap())
        .unwrap();
    let (rs, _) = run("pond_loop.geojson", "pond", &["--mode", "spline"]);
    check_ends(&parse_segments(&rs), (0.0, 0.0), (last.east, last.north));
}

#[test]
fn violations_are_listed_in_the_file() {
    // A 4 m corner radius checked against a 0.1 1/m curvature limit.
    let (rs, svg) = run(
        "orchard_rows.csv",
        "tight",
        &["--radius", "4", "--max-curvature", "0.1"],
    );
    assert!(rs.contains("violation(s) of the vehicle limits"), "{rs}");
    assert!(rs.contains("Curvature at station"));
    assert!(svg.contains("limit violation: curvature"), "{svg}");
}

/// Every sample file, in both modes, with default options: the path
/// passes its own feasibility check (the defaults used to report 6-8
/// curvature steps on each, and the spline of `pond_loop.geojson` failed).
#[test]
fn default_options_are_feasible_on_every_sample() {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("data");
    let mut n = 0;
    for entry in std::fs::read_dir(dir).unwrap() {
        let name = entry.unwrap().file_name().to_string_lossy().to_string();
        for mode in ["corners", "spline"] {
            let out = out_dir(&format!("default-{name}-{mode}"));
            let args: Vec<String> = [
                "--input",
                &data(&name),
                "--mode",
                mode,
                "--out-rs",
                &out.join("p.rs").display().to_string(),
            ]
            .iter()
            .map(|s| s.to_string())
            .collect();
            let o = kappaline_hil::pathcmd::parse_args(&args).unwrap();
            let b = kappaline_hil::pathcmd::build(&o).unwrap();
            assert!(
                b.report.is_feasible(),
                "{name} {mode}: {} violation(s), first {:?}",
                b.report.total,
                b.report.violations.iter().next()
            );
            // --strict agrees.
            let mut strict = args.clone();
            strict.push("--strict".into());
            kappaline_hil::pathcmd::run(&strict).unwrap();
            let _ = std::fs::remove_dir_all(&out);
            n += 1;
        }
    }
    assert_eq!(n, 6, "three sample files, two modes");
}

/// A violation is explained in words: what, where, and what to change.
#[test]
fn violations_are_explained_in_words() {
    let args: Vec<String> = [
        "--input",
        &data("orchard_rows.csv"),
        "--out-rs",
        "/dev/null",
        "--radius",
        "4",
        "--max-curvature",
        "0.1",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    let o = kappaline_hil::pathcmd::parse_args(&args).unwrap();
    let b = kappaline_hil::pathcmd::build(&o).unwrap();
    let v = b.report.violations.iter().next().expect("a violation");
    let text = kappaline_hil::pathcmd::explain(v, o.mode);
    assert!(
        text.contains("too tight") && text.contains("radius"),
        "{text}"
    );
    assert!(text.contains("--radius"), "{text}");
}
