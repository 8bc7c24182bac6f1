//! Scenario files: the built-ins check, bad files are refused naming the field.

use kappaline_hil::scenario::builtin::{builtin, BUILTINS};
use kappaline_hil::scenario::{Scenario, ScenarioError};

const FIELD: &str = include_str!("../scenarios/field.toml");

#[test]
fn every_builtin_parses_and_builds_its_path() {
    for b in BUILTINS {
        let s = builtin(b.name)
            .expect("listed")
            .unwrap_or_else(|e| panic!("{}: {e}", b.name));
        assert_eq!(s.name(), b.name);
        assert!(s.path.length() > 10.0);
    }
    assert!(builtin("no-such-scenario").is_none());
}

fn refuse(text: &str) -> ScenarioError {
    match Scenario::parse(text, "bad.toml") {
        Ok(_) => panic!("accepted a bad file"),
        Err(e) => e,
    }
}

#[test]
fn missing_field_is_named() {
    let text = FIELD.replace("wheelbase_m = 2.7\n", "");
    let e = refuse(&text);
    let msg = e.to_string();
    assert!(msg.contains("wheelbase_m"), "{msg}");
    assert!(msg.contains("vehicle"), "{msg}");
    assert!(msg.contains("bad.toml"), "{msg}");
}

#[test]
fn wrong_unit_is_an_unknown_field_named_in_the_error() {
    let text = FIELD.replace("wheelbase_m = 2.7", "wheelbase_ft = 8.9");
    let msg = refuse(&text).to_string();
    assert!(msg.contains("wheelbase_ft"), "{msg}");
    let text = FIELD.replace("duration_s = 400.0", "duration_min = 7.0");
    let msg = refuse(&text).to_string();
    assert!(msg.contains("duration_min"), "{msg}");
}

#[test]
fn negative_wheelbase_is_refused_by_field() {
    let text = FIELD.replace("wheelbase_m = 2.7", "wheelbase_m = -2.7");
    let e = refuse(&text);
    assert_eq!(e.field(), "vehicle.wheelbase_m");
    assert!(e.to_string().contains("-2.7"), "{e}");
}

#[test]
fn wrong_type_is_named() {
    let text = FIELD.replace("noise_m = 0.02", "noise_m = \"2 cm\"");
    let e = refuse(&text);
    assert_eq!(e.field(), "gnss.noise_m", "{e}");
}

const HIGHSPEED: &str = include_str!("../scenarios/highspeed.toml");
const WAREHOUSE: &str = include_str!("../scenarios/warehouse.toml");

#[test]
fn path_that_does_not_validate_is_refused_naming_the_segment() {
    // A zero-length segment.
    let text = HIGHSPEED.replacen(
        "{ type = \"line\", length_m = 400.0 }",
        "{ type = \"line\", length_m = 0.0 }",
        1,
    );
    let e = refuse(&text);
    assert_eq!(e.field(), "path.segments[0]", "{e}");
    // A NaN curvature.
    let text = HIGHSPEED.replacen(
        "curvature_start_per_m = 0.0",
        "curvature_start_per_m = nan",
        1,
    );
    let e = refuse(&text);
    assert_eq!(e.field(), "path.segments[1]", "{e}");
    // A loop that does not close.
    let text = WAREHOUSE.replacen("length_m = 22.4", "length_m = 21.0", 1);
    let e = refuse(&text);
    assert_eq!(e.field(), "path.closed", "{e}");
    // A field with no passes, and with a negative swath.
    let e = refuse(&FIELD.replace("passes = 4", "passes = 0"));
    assert_eq!(e.field(), "path.passes", "{e}");
    let e = refuse(&FIELD.replace("swath_m = 12.0", "swath_m = -12.0"));
    assert_eq!(e.field(), "path.swath_m", "{e}");
    // Waypoints whose legs are too short for the corner radius.
    let text = HIGHSPEED.replace(
        "kind = \"segments\"",
        "kind = \"waypoints\"\npoints_m = [[0.0, 0.0], [2.0, 0.0], [2.0, 2.0]]\ncorner_radius_m = 10.0",
    );
    let a = text.find("start = {").unwrap();
    let b = text.find("[vehicle]").unwrap();
    let text = format!("{}{}", &text[..a], &text[b..]);
    let e = refuse(&text);
    assert_eq!(e.field(), "path.points_m", "{e}");
}

#[test]
fn unknown_segment_type_and_bad_status_names_are_named() {
    let text = HIGHSPEED.replacen("type = \"line\"", "type = \"spline\"", 1);
    let msg = refuse(&text).to_string();
    assert!(msg.contains("spline"), "{msg}");
    let text = FIELD.replace(
        "forbid_status = [\"fault\", \"lost\"]",
        "forbid_status = [\"panic\"]",
    );
    let e = refuse(&text);
    assert_eq!(e.field(), "thresholds.forbid_status[0]", "{e}");
}

#[test]
fn not_toml_is_refused() {
    let e = refuse("name = \"x\"\nduration_s = [\n");
    assert!(e.to_string().contains("bad.toml"));
}
