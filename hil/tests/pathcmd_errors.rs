//! `build-path` on bad input files: every message names the line (CSV) or
//! the feature and coordinate (GeoJSON) at fault.

use std::path::PathBuf;
use std::sync::atomic::{AtomicUsize, Ordering};

/// Tests run in parallel: each call gets its own directory.
static CALLS: AtomicUsize = AtomicUsize::new(0);

fn try_file(name: &str, text: &str, extra: &[&str]) -> String {
    let dir = std::env::temp_dir().join(format!(
        "kappaline-pathcmd-bad-{}-{}-{}",
        std::process::id(),
        CALLS.fetch_add(1, Ordering::Relaxed),
        name.replace('.', "_")
    ));
    std::fs::create_dir_all(&dir).unwrap();
    let input: PathBuf = dir.join(name);
    std::fs::write(&input, text).unwrap();
    let mut args: Vec<String> = vec![
        "--input".into(),
        input.display().to_string(),
        "--out-rs".into(),
        dir.join("out.rs").display().to_string(),
    ];
    args.extend(extra.iter().map(|s| s.to_string()));
    let err = kappaline_hil::pathcmd::run(&args).expect_err("bad input must fail");
    let _ = std::fs::remove_dir_all(&dir);
    format!("{err:#}")
}

#[test]
fn csv_errors_name_the_line() {
    let m = try_file("a.csv", "# comment\nx,y\n0,0\n10,zero\n", &[]);
    assert!(m.contains("line 4") && m.contains("\"zero\""), "{m}");
    let m = try_file("b.csv", "x,z\n0,0\n", &[]);
    assert!(m.contains("line 1") && m.contains("header"), "{m}");
    let m = try_file("c.csv", "lat,lon\n46.9,7.4\n95.0,7.4\n", &[]);
    assert!(m.contains("line 3") && m.contains("latitude"), "{m}");
    let m = try_file("d.csv", "x,y\n0,0\n50,0\n50,0\n50,40\n", &[]);
    assert!(m.contains("line 4") && m.contains("repeats"), "{m}");
    let m = try_file("e.csv", "x,y\n0,0\n50,0\n52,2\n90,2\n", &["--radius", "20"]);
    assert!(m.contains("line 4") && m.contains("too short"), "{m}");
    let m = try_file("f.csv", "x,y\n0,0\n50,0\n0,0\n", &[]);
    assert!(m.contains("line 3") && m.contains("double back"), "{m}");
    let m = try_file("g.csv", "x,y\n0,0\n", &[]);
    assert!(m.contains("at least two"), "{m}");
    let m = try_file(
        "h.csv",
        "x,y,heading_deg\n0,0,\n10,0,NaN\n",
        &["--mode", "spline"],
    );
    assert!(m.contains("line 3") && m.contains("heading_deg"), "{m}");
}

#[test]
fn geojson_errors_name_the_feature() {
    let m = try_file(
        "a.geojson",
        "{\"type\": \"LineString\",\n \"coordinates\": [[7.4, 46.9], [7.5, 46.9],]}",
        &[],
    );
    assert!(m.contains("line 2") && m.contains("JSON"), "{m}");
    let fc = |geoms: &str| format!("{{\"type\":\"FeatureCollection\",\"features\":[{geoms}]}}");
    let feat = |name: &str, g: &str| {
        format!("{{\"type\":\"Feature\",\"properties\":{{\"name\":\"{name}\"}},\"geometry\":{g}}}")
    };
    let line = "{\"type\":\"LineString\",\"coordinates\":[[7.40,46.90],[7.41,46.90],[7.41,46.91]]}";
    let bad =
        "{\"type\":\"LineString\",\"coordinates\":[[7.40,46.90],[7.41,\"north\"],[7.41,46.91]]}";
    let poly =
        "{\"type\":\"Polygon\",\"coordinates\":[[[7.4,46.9],[7.5,46.9],[7.5,47.0],[7.4,46.9]]]}";
    let m = try_file(
        "b.geojson",
        &fc(&[feat("gate", poly), feat("ditch", bad)].join(",")),
        &[],
    );
    assert!(
        m.contains("feature 1 (\"ditch\")") && m.contains("coordinate 1"),
        "{m}"
    );
    let m = try_file("c.geojson", &fc(&feat("field", poly)), &[]);
    assert!(m.contains("no feature has a LineString"), "{m}");
    let m = try_file(
        "d.geojson",
        &fc(&[feat("one", line), feat("two", line)].join(",")),
        &[],
    );
    assert!(
        m.contains("feature 1 (\"two\")") && m.contains("second LineString"),
        "{m}"
    );
    let far = "{\"type\":\"LineString\",\"coordinates\":[[7.40,46.90],[187.0,46.90]]}";
    let m = try_file("e.geojson", &feat("edge", far), &[]);
    assert!(m.contains("coordinate 1") && m.contains("longitude"), "{m}");
}

#[test]
fn bad_options_are_named() {
    let m = try_file("a.csv", "x,y\n0,0\n10,0\n", &["--radius", "-3"]);
    assert!(m.contains("--radius"), "{m}");
    let m = try_file("b.csv", "x,y\n0,0\n10,0\n", &["--speed", "2"]);
    assert!(m.contains("--max-curvature-rate"), "{m}");
}
