//! The SVG preview of `build-path`: a map with named axes, a scale bar and
//! a legend, showing the path, the waypoints and their polyline, the start
//! and end, the direction of travel, the corners and every limit violation.

use kappaline::ViolationKind;

use super::output::Described;
use crate::report::svg::{palette, Marker, Plot, Series, Shape, Style};

/// The preview as an SVG document (north up, equal scale).
pub fn svg<const N: usize, const M: usize>(d: &Described<'_, N, M>) -> String {
    let len = d.path.length();
    let samples = ((len / 0.25).ceil() as usize).clamp(2, 20_000);
    let pts: Vec<(f64, f64)> = (0..=samples)
        .map(|i| {
            let p = d.path.at(len * i as f64 / samples as f64);
            (p.x, p.y)
        })
        .collect();
    let mut p = Plot::new(
        &format!("{}: {:.1} m, {} segments", d.input, len, d.path.len()),
        "east [m]",
        "north [m]",
        (900.0, 680.0),
    );
    p.equal = true;
    p.note = format!(
        "{}; {}",
        d.method,
        if d.report.is_feasible() {
            "within the limits checked".to_string()
        } else {
            format!("{} limit violation(s), marked", d.report.total)
        }
    );
    p.series = vec![
        Series::line("waypoint polyline", palette::FIX, d.waypoints.to_vec()).stroke(1.0, "5 4"),
        Series::line("path", palette::PATH, pts).stroke(2.0, ""),
        Series::line("waypoints", palette::END, d.waypoints.to_vec()).styled(Style::Dots(3.0)),
    ];
    for i in 1..8 {
        let q = d.path.at(len * i as f64 / 8.0);
        let back = if q.direction.sign::<f64>() < 0.0 {
            std::f64::consts::PI
        } else {
            0.0
        };
        p.markers.push(Marker {
            at: (q.x, q.y),
            shape: Shape::Arrow(q.sin.atan2(q.cos) + back),
            colour: palette::PATH,
            label: "direction of travel".into(),
        });
    }
    for c in d.corners {
        if let Some(&at) = d.waypoints.get(c.vertex) {
            p.markers.push(Marker {
                at,
                shape: Shape::Diamond,
                colour: palette::STRAIGHT,
                label: "corner vertex".into(),
            });
        }
    }
    for v in d.report.violations.iter() {
        let q = d.path.at(v.station);
        let what = match v.kind {
            ViolationKind::Curvature => "limit violation: curvature",
            ViolationKind::Sharpness => "limit violation: sharpness",
            ViolationKind::CurvatureJump => "limit violation: curvature step",
        };
        p.markers.push(Marker {
            at: (q.x, q.y),
            shape: Shape::Square,
            colour: palette::FAULT,
            label: what.into(),
        });
    }
    let s = d.path.at(0.0);
    p.markers.push(Marker {
        at: (s.x, s.y),
        shape: Shape::Circle,
        colour: palette::START,
        label: "start".into(),
    });
    if !d.path.is_closed() {
        let e = d.path.end_pose();
        p.markers.push(Marker {
            at: (e.x, e.y),
            shape: Shape::Square,
            colour: palette::END,
            label: "end".into(),
        });
    }
    p.render()
}
