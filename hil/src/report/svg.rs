//! Small, dependency-free SVG plots: axes with ticks and names, line, dot,
//! step and bar series, labelled limit lines, shaded time bands (faults,
//! statuses), point markers (start, end, direction, cusps) and a scale bar
//! for maps.
//!
//! Hand-written rather than a plotting crate: the plots are simple, the
//! module is small and tested, needs no font or image libraries on the
//! build machine, and it gives the exact SVG the reports embed inline.

use std::fmt::Write as _;

/// The harness's colours (chosen for this project; readable on white and
/// told apart by lightness as well as hue).
pub mod palette {
    /// The reference path.
    pub const PATH: &str = "#2b4c7e";
    /// The driven track.
    pub const TRACK: &str = "#c8553d";
    /// Raw fixes, secondary data.
    pub const FIX: &str = "#b9b2a6";
    /// Straight-pass samples.
    pub const STRAIGHT: &str = "#3d7a5a";
    /// All on-path samples.
    pub const MUTED: &str = "#8d99a6";
    /// A pass/fail limit.
    pub const LIMIT: &str = "#8e3b8a";
    /// A physical limit (steering, speed).
    pub const BOUND: &str = "#6a5d4d";
    /// A second quantity on the same axes.
    pub const SECOND: &str = "#d09a2c";
    /// Zero lines and grids.
    pub const ZERO: &str = "#55606e";
    /// Fault bands.
    pub const FAULT: &str = "#b23a48";
    /// Start marker.
    pub const START: &str = "#2f8f4e";
    /// End marker.
    pub const END: &str = "#222222";
    /// Cusp marker.
    pub const CUSP: &str = "#d4792a";

    /// The colour of a supervisor status.
    pub fn status(name: &str) -> &'static str {
        match name {
            "acquiring" => "#d9b44a",
            "following" => "#6b9e78",
            "degraded" => "#e08e45",
            "lost" => "#b23a48",
            "end_of_path" => "#7a7f8a",
            _ => "#5b2a86",
        }
    }
}

/// How a series is drawn.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Style {
    /// A polyline; a non-finite point breaks it.
    Line,
    /// Dots of this radius, px.
    Dots(f64),
    /// A step line (value held until the next point).
    Steps,
    /// Bars from zero of this width in data units, centred on x.
    Bars(f64),
}

/// One series of a plot.
#[derive(Debug, Clone)]
pub struct Series {
    /// Legend text (empty: not in the legend).
    pub label: String,
    /// CSS colour.
    pub colour: &'static str,
    /// Line width, px.
    pub width: f64,
    /// Dash pattern (`""` for solid).
    pub dash: &'static str,
    /// Points; a non-finite point breaks the line.
    pub points: Vec<(f64, f64)>,
    /// How it is drawn.
    pub style: Style,
}

impl Series {
    /// A solid line.
    pub fn line(label: &str, colour: &'static str, points: Vec<(f64, f64)>) -> Self {
        Self {
            label: label.into(),
            colour,
            width: 1.2,
            dash: "",
            points,
            style: Style::Line,
        }
    }

    /// The same drawn another way.
    #[must_use]
    pub fn styled(mut self, style: Style) -> Self {
        self.style = style;
        self
    }

    /// The same with another width and dash pattern.
    #[must_use]
    pub fn stroke(mut self, width: f64, dash: &'static str) -> Self {
        self.width = width;
        self.dash = dash;
        self
    }
}

/// A horizontal line across the plot, labelled at its left end (the legend
/// sits at the right).
#[derive(Debug, Clone)]
pub struct HLine {
    /// Value on the vertical axis.
    pub value: f64,
    /// CSS colour.
    pub colour: &'static str,
    /// Text beside the line (empty: none).
    pub label: String,
}

impl HLine {
    /// A labelled line.
    pub fn new(value: f64, colour: &'static str, label: &str) -> Self {
        Self {
            value,
            colour,
            label: label.into(),
        }
    }
}

/// A shaded band over a range of the horizontal axis (a time window).
#[derive(Debug, Clone)]
pub struct Band {
    /// Start, horizontal-axis units.
    pub from: f64,
    /// End.
    pub to: f64,
    /// CSS colour (drawn translucent).
    pub colour: &'static str,
    /// Text at the top of the band.
    pub label: String,
}

/// Marker shapes.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Shape {
    /// A filled circle.
    Circle,
    /// A filled square.
    Square,
    /// An arrowhead pointing along this angle, rad (counter-clockwise from
    /// the horizontal axis, in data space).
    Arrow(f64),
    /// A diamond.
    Diamond,
}

/// A marked point.
#[derive(Debug, Clone)]
pub struct Marker {
    /// Position, data units.
    pub at: (f64, f64),
    /// Shape.
    pub shape: Shape,
    /// CSS colour.
    pub colour: &'static str,
    /// Legend text (markers with the same text share one legend entry).
    pub label: String,
}

/// A plot to render.
#[derive(Debug, Clone)]
pub struct Plot {
    /// Title above the plot.
    pub title: String,
    /// Label of the horizontal axis.
    pub x_label: String,
    /// Label of the vertical axis.
    pub y_label: String,
    /// Equal scale on both axes (a map; draws a scale bar).
    pub equal: bool,
    /// Width and height, px.
    pub size: (f64, f64),
    /// The series.
    pub series: Vec<Series>,
    /// Horizontal lines such as limits.
    pub h_lines: Vec<HLine>,
    /// Vertical lines (the value is on the horizontal axis), labelled near the
    /// bottom (the legend sits at the top).
    pub v_lines: Vec<HLine>,
    /// Shaded bands over the horizontal axis.
    pub bands: Vec<Band>,
    /// Marked points.
    pub markers: Vec<Marker>,
    /// Names for vertical-axis values (replacing the numeric ticks).
    pub y_names: Vec<(f64, String)>,
    /// A note under the title (e.g. an exaggeration factor).
    pub note: String,
}

const MARGIN_L: f64 = 90.0;
const MARGIN_R: f64 = 20.0;
const MARGIN_T: f64 = 44.0;
const MARGIN_B: f64 = 50.0;

impl Plot {
    /// An empty plot with a title, axis names and a size.
    pub fn new(title: &str, x_label: &str, y_label: &str, size: (f64, f64)) -> Self {
        Self {
            title: title.into(),
            x_label: x_label.into(),
            y_label: y_label.into(),
            equal: false,
            size,
            series: Vec::new(),
            h_lines: Vec::new(),
            v_lines: Vec::new(),
            bands: Vec::new(),
            markers: Vec::new(),
            y_names: Vec::new(),
            note: String::new(),
        }
    }

    /// The plot as a standalone SVG document.
    pub fn render(&self) -> String {
        let (w, h) = self.size;
        let (pw, ph) = (w - MARGIN_L - MARGIN_R, h - MARGIN_T - MARGIN_B);
        let (mut x0, mut x1, mut y0, mut y1) = self.bounds();
        if self.equal {
            let sx = (x1 - x0) / pw;
            let sy = (y1 - y0) / ph;
            let s = sx.max(sy);
            let (cx, cy) = (0.5 * (x0 + x1), 0.5 * (y0 + y1));
            x0 = cx - 0.5 * s * pw;
            x1 = cx + 0.5 * s * pw;
            y0 = cy - 0.5 * s * ph;
            y1 = cy + 0.5 * s * ph;
        }
        let mx = |x: f64| MARGIN_L + (x - x0) / (x1 - x0) * pw;
        let my = |y: f64| MARGIN_T + ph - (y - y0) / (y1 - y0) * ph;
        let mut s = String::new();
        let _ = write!(
            s,
            r#"<svg xmlns="http://www.w3.org/2000/svg" width="{w}" height="{h}" viewBox="0 0 {w} {h}" font-family="sans-serif" font-size="12">"#
        );
        let _ = write!(s, r#"<rect width="{w}" height="{h}" fill="white"/>"#);
        let _ = write!(
            s,
            r#"<text x="{}" y="20" text-anchor="middle" font-size="14">{}</text>"#,
            w / 2.0,
            esc(&self.title)
        );
        if !self.note.is_empty() {
            let _ = write!(
                s,
                r##"<text x="{}" y="36" text-anchor="middle" font-size="11" fill="#555">{}</text>"##,
                w / 2.0,
                esc(&self.note)
            );
        }
        for b in &self.bands {
            let (a, z) = (b.from.max(x0), b.to.min(x1));
            if z <= a {
                continue;
            }
            let (xa, xz) = (mx(a), mx(z));
            let _ = write!(
                s,
                r#"<rect x="{xa:.1}" y="{MARGIN_T}" width="{:.1}" height="{ph:.1}" fill="{}" fill-opacity="0.16"/>"#,
                (xz - xa).max(1.0),
                b.colour
            );
            if !b.label.is_empty() {
                let _ = write!(
                    s,
                    r#"<text x="{:.1}" y="{:.1}" font-size="10" fill="{}">{}</text>"#,
                    xa + 2.0,
                    MARGIN_T + 11.0,
                    b.colour,
                    esc(&b.label)
                );
            }
        }
        for t in ticks(x0, x1) {
            let x = mx(t);
            let _ = write!(
                s,
                r##"<line x1="{x:.1}" y1="{:.1}" x2="{x:.1}" y2="{:.1}" stroke="#e3e3e3"/><text x="{x:.1}" y="{:.1}" text-anchor="middle">{}</text>"##,
                MARGIN_T,
                MARGIN_T + ph,
                MARGIN_T + ph + 16.0,
                fmt_tick(t)
            );
        }
        let y_ticks: Vec<(f64, String)> = if self.y_names.is_empty() {
            ticks(y0, y1)
                .into_iter()
                .map(|t| (t, fmt_tick(t)))
                .collect()
        } else {
            self.y_names.clone()
        };
        for (t, name) in y_ticks {
            let y = my(t);
            let _ = write!(
                s,
                r##"<line x1="{:.1}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="#e3e3e3"/><text x="{:.1}" y="{:.1}" text-anchor="end">{}</text>"##,
                MARGIN_L,
                MARGIN_L + pw,
                MARGIN_L - 6.0,
                y + 4.0,
                esc(&name)
            );
        }
        let _ = write!(
            s,
            r#"<rect x="{MARGIN_L}" y="{MARGIN_T}" width="{pw}" height="{ph}" fill="none" stroke="black"/>"#
        );
        let _ = write!(
            s,
            r#"<text class="x-axis" x="{:.1}" y="{:.1}" text-anchor="middle">{}</text>"#,
            MARGIN_L + pw / 2.0,
            h - 10.0,
            esc(&self.x_label)
        );
        let _ = write!(
            s,
            r#"<text class="y-axis" x="16" y="{:.1}" text-anchor="middle" transform="rotate(-90 16 {:.1})">{}</text>"#,
            MARGIN_T + ph / 2.0,
            MARGIN_T + ph / 2.0,
            esc(&self.y_label)
        );
        for l in &self.h_lines {
            if l.value >= y0 && l.value <= y1 {
                let y = my(l.value);
                let _ = write!(
                    s,
                    r#"<line x1="{MARGIN_L}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="{}" stroke-dasharray="5 3"/>"#,
                    MARGIN_L + pw,
                    l.colour
                );
                if !l.label.is_empty() {
                    let _ = write!(
                        s,
                        r#"<text x="{:.1}" y="{:.1}" font-size="10" fill="{}">{}</text>"#,
                        MARGIN_L + 4.0,
                        y - 3.0,
                        l.colour,
                        esc(&l.label)
                    );
                }
            }
        }
        for (i, l) in self.v_lines.iter().enumerate() {
            if l.value >= x0 && l.value <= x1 {
                let x = mx(l.value);
                let _ = write!(
                    s,
                    r#"<line x1="{x:.1}" y1="{MARGIN_T}" x2="{x:.1}" y2="{:.1}" stroke="{}" stroke-dasharray="5 3"/>"#,
                    MARGIN_T + ph,
                    l.colour
                );
                if !l.label.is_empty() {
                    // Right of the line, or left of it near the right edge.
                    let (tx, anchor) = if x > MARGIN_L + 0.7 * pw {
                        (x - 3.0, "end")
                    } else {
                        (x + 3.0, "start")
                    };
                    let _ = write!(
                        s,
                        r#"<text x="{tx:.1}" y="{:.1}" text-anchor="{anchor}" font-size="10" fill="{}">{}</text>"#,
                        MARGIN_T + ph - 6.0 - 12.0 * (i % 4) as f64,
                        l.colour,
                        esc(&l.label)
                    );
                }
            }
        }
        let mut legend: Vec<(String, &'static str, &'static str, Option<Shape>)> = Vec::new();
        for ser in &self.series {
            draw_series(&mut s, ser, &mx, &my, (x1 - x0) / pw);
            if !ser.label.is_empty() {
                let shape = matches!(ser.style, Style::Dots(_)).then_some(Shape::Circle);
                legend.push((ser.label.clone(), ser.colour, ser.dash, shape));
            }
        }
        for m in &self.markers {
            let (x, y) = m.at;
            if x.is_finite() && y.is_finite() {
                draw_marker(&mut s, m.shape, mx(x), my(y), m.colour);
                if !m.label.is_empty() && !legend.iter().any(|l| l.0 == m.label) {
                    legend.push((m.label.clone(), m.colour, "", Some(m.shape)));
                }
            }
        }
        if self.equal {
            self.scale_bar(&mut s, (x1 - x0) / pw, pw, ph);
        }
        let lw = legend
            .iter()
            .map(|l| l.0.chars().count())
            .max()
            .unwrap_or(0) as f64
            * 6.5
            + 44.0;
        if !legend.is_empty() {
            let lx = MARGIN_L + pw - lw - 6.0;
            let _ = write!(
                s,
                r##"<rect x="{lx:.1}" y="{:.1}" width="{lw:.1}" height="{:.1}" fill="white" fill-opacity="0.85" stroke="#ccc"/>"##,
                MARGIN_T + 4.0,
                16.0 * legend.len() as f64 + 6.0
            );
        }
        for (i, (label, colour, dash, shape)) in legend.iter().enumerate() {
            let ly = MARGIN_T + 20.0 + 16.0 * i as f64;
            let lx = MARGIN_L + pw - lw;
            match shape {
                Some(sh) => draw_marker(&mut s, *sh, lx + 12.0, ly - 4.0, colour),
                None => {
                    let _ = write!(
                        s,
                        r#"<line x1="{lx:.1}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="{colour}" stroke-width="3" stroke-dasharray="{dash}"/>"#,
                        ly - 4.0,
                        lx + 24.0,
                        ly - 4.0,
                    );
                }
            }
            let _ = write!(
                s,
                r#"<text x="{:.1}" y="{ly:.1}">{}</text>"#,
                lx + 30.0,
                esc(label)
            );
        }
        s.push_str("</svg>\n");
        s
    }

    /// A scale bar of a round length at the lower left of a map.
    fn scale_bar(&self, s: &mut String, units_per_px: f64, pw: f64, ph: f64) {
        let target = units_per_px * pw / 5.0;
        if !(target.is_finite() && target > 0.0) {
            return;
        }
        let mag = 10f64.powf(target.log10().floor());
        let len = [1.0, 2.0, 5.0]
            .iter()
            .map(|m| m * mag)
            .rev()
            .find(|l| *l <= target)
            .unwrap_or(mag);
        let px = len / units_per_px;
        let (x, y) = (MARGIN_L + 14.0, MARGIN_T + ph - 14.0);
        let _ = write!(
            s,
            r##"<g class="scale-bar"><rect x="{x:.1}" y="{:.1}" width="{px:.1}" height="5" fill="#222"/><text x="{:.1}" y="{:.1}" text-anchor="middle" font-size="11">{} m</text></g>"##,
            y - 5.0,
            x + px / 2.0,
            y - 9.0,
            fmt_tick(len)
        );
    }

    fn bounds(&self) -> (f64, f64, f64, f64) {
        let mut b = (
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::INFINITY,
            f64::NEG_INFINITY,
        );
        let mut take = |x: f64, y: f64| {
            if x.is_finite() && y.is_finite() {
                b.0 = b.0.min(x);
                b.1 = b.1.max(x);
                b.2 = b.2.min(y);
                b.3 = b.3.max(y);
            }
        };
        for ser in &self.series {
            for p in &ser.points {
                take(p.0, p.1);
                if let Style::Bars(w) = ser.style {
                    take(p.0 - w / 2.0, 0.0);
                    take(p.0 + w / 2.0, 0.0);
                }
            }
        }
        for m in &self.markers {
            take(m.at.0, m.at.1);
        }
        if !b.0.is_finite() {
            return (0.0, 1.0, 0.0, 1.0);
        }
        for l in &self.v_lines {
            if l.value.is_finite() {
                b.0 = b.0.min(l.value);
                b.1 = b.1.max(l.value);
            }
        }
        let named = self.y_names.iter().map(|(v, _)| *v);
        for v in self.h_lines.iter().map(|l| l.value).chain(named) {
            if v.is_finite() {
                b.2 = b.2.min(v);
                b.3 = b.3.max(v);
            }
        }
        let pad = |lo: f64, hi: f64| {
            let span = (hi - lo).max(1e-6);
            (lo - 0.05 * span, hi + 0.05 * span)
        };
        let (x0, x1) = pad(b.0, b.1);
        // Room at the top for the legend.
        let (y0, y1) = pad(b.2, b.3);
        (x0, x1, y0, y1 + 0.12 * (y1 - y0))
    }
}

fn draw_series(
    s: &mut String,
    ser: &Series,
    mx: &dyn Fn(f64) -> f64,
    my: &dyn Fn(f64) -> f64,
    _units_per_px: f64,
) {
    let finite = |p: &&(f64, f64)| p.0.is_finite() && p.1.is_finite();
    match ser.style {
        Style::Line | Style::Steps => {
            let mut d = String::new();
            let mut pen: Option<f64> = None;
            for &(x, y) in &ser.points {
                if !(x.is_finite() && y.is_finite()) {
                    pen = None;
                    continue;
                }
                match pen {
                    None => {
                        let _ = write!(d, "M{:.2} {:.2}", mx(x), my(y));
                    }
                    Some(prev) if ser.style == Style::Steps => {
                        let _ =
                            write!(d, "L{:.2} {:.2}L{:.2} {:.2}", mx(x), my(prev), mx(x), my(y));
                    }
                    Some(_) => {
                        let _ = write!(d, "L{:.2} {:.2}", mx(x), my(y));
                    }
                }
                pen = Some(y);
            }
            let _ = write!(
                s,
                r#"<path d="{d}" fill="none" stroke="{}" stroke-width="{}" stroke-dasharray="{}" stroke-linejoin="round"/>"#,
                ser.colour, ser.width, ser.dash
            );
        }
        Style::Dots(r) => {
            let _ = write!(s, r#"<g fill="{}" fill-opacity="0.7">"#, ser.colour);
            for &(x, y) in ser.points.iter().filter(finite) {
                let _ = write!(
                    s,
                    r#"<circle cx="{:.1}" cy="{:.1}" r="{r}"/>"#,
                    mx(x),
                    my(y)
                );
            }
            s.push_str("</g>");
        }
        Style::Bars(wd) => {
            let _ = write!(s, r#"<g fill="{}">"#, ser.colour);
            for &(x, y) in ser.points.iter().filter(finite) {
                let (xa, xz) = (mx(x - wd / 2.0), mx(x + wd / 2.0));
                let (ya, yz) = (my(y.max(0.0)), my(y.min(0.0)));
                let _ = write!(
                    s,
                    r#"<rect x="{xa:.1}" y="{ya:.1}" width="{:.1}" height="{:.1}"/>"#,
                    (xz - xa - 1.0).max(0.5),
                    (yz - ya).max(0.0)
                );
            }
            s.push_str("</g>");
        }
    }
}

fn draw_marker(s: &mut String, shape: Shape, x: f64, y: f64, colour: &str) {
    let _ = match shape {
        Shape::Circle => write!(
            s,
            r#"<circle cx="{x:.1}" cy="{y:.1}" r="6" fill="{colour}" stroke="white"/>"#
        ),
        Shape::Square => write!(
            s,
            r#"<rect x="{:.1}" y="{:.1}" width="11" height="11" fill="{colour}" stroke="white"/>"#,
            x - 5.5,
            y - 5.5
        ),
        Shape::Diamond => write!(
            s,
            r#"<path d="M{x:.1} {:.1}L{:.1} {y:.1}L{x:.1} {:.1}L{:.1} {y:.1}Z" fill="{colour}" stroke="white"/>"#,
            y - 7.0,
            x + 7.0,
            y + 7.0,
            x - 7.0
        ),
        Shape::Arrow(angle) => {
            // Screen y grows downwards: the angle turns the other way.
            let deg = -angle.to_degrees();
            write!(
                s,
                r#"<path d="M8 0L-5 5L-2 0L-5 -5Z" transform="translate({x:.1} {y:.1}) rotate({deg:.1})" fill="{colour}"/>"#
            )
        }
    };
}

/// About six round tick values covering `[lo, hi]`.
fn ticks(lo: f64, hi: f64) -> Vec<f64> {
    let span = hi - lo;
    if !(span.is_finite() && span > 0.0) {
        return Vec::new();
    }
    let raw = span / 6.0;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag);
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (first..=last).map(|i| i as f64 * step).collect()
}

fn fmt_tick(v: f64) -> String {
    let a = v.abs();
    if a < 1e-12 {
        "0".into()
    } else if a >= 100.0 {
        format!("{v:.0}")
    } else if a >= 1.0 {
        format!("{v:.1}")
    } else if a >= 0.01 {
        format!("{v:.3}")
    } else {
        format!("{v:.1e}")
    }
}

/// Escapes text for XML.
pub fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_are_round_and_cover_the_range() {
        let t = ticks(0.0, 10.0);
        assert_eq!(t.first().copied(), Some(0.0));
        assert_eq!(t.last().copied(), Some(10.0));
        assert!(t.len() >= 4 && t.len() <= 12);
    }

    #[test]
    fn a_map_has_a_scale_bar_and_named_axes() {
        let mut p = Plot::new("t", "east [m]", "north [m]", (400.0, 300.0));
        p.equal = true;
        p.series.push(Series::line(
            "a",
            palette::PATH,
            vec![(0.0, 0.0), (100.0, 50.0)],
        ));
        let svg = p.render();
        assert!(svg.contains("scale-bar"), "{svg}");
        assert!(svg.contains("east [m]") && svg.contains("north [m]"));
    }
}
