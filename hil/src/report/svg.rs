//! Small, dependency-free SVG line plots: axes with ticks, several series,
//! optional equal scaling for maps.

use std::fmt::Write as _;

/// One polyline of a plot.
#[derive(Debug, Clone)]
pub struct Series {
    /// Legend text.
    pub label: String,
    /// CSS colour.
    pub colour: &'static str,
    /// Line width, px.
    pub width: f64,
    /// Dash pattern (`""` for solid).
    pub dash: &'static str,
    /// Points; a non-finite point breaks the line.
    pub points: Vec<(f64, f64)>,
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
    /// Equal scale on both axes (a map).
    pub equal: bool,
    /// Width and height, px.
    pub size: (f64, f64),
    /// The series.
    pub series: Vec<Series>,
    /// Horizontal lines (value, colour) such as limits.
    pub h_lines: Vec<(f64, &'static str)>,
}

const MARGIN_L: f64 = 70.0;
const MARGIN_R: f64 = 20.0;
const MARGIN_T: f64 = 36.0;
const MARGIN_B: f64 = 50.0;

impl Plot {
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
        for t in ticks(x0, x1) {
            let x = mx(t);
            let _ = write!(
                s,
                r##"<line x1="{x:.1}" y1="{:.1}" x2="{x:.1}" y2="{:.1}" stroke="#ddd"/><text x="{x:.1}" y="{:.1}" text-anchor="middle">{}</text>"##,
                MARGIN_T,
                MARGIN_T + ph,
                MARGIN_T + ph + 16.0,
                fmt_tick(t)
            );
        }
        for t in ticks(y0, y1) {
            let y = my(t);
            let _ = write!(
                s,
                r##"<line x1="{:.1}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="#ddd"/><text x="{:.1}" y="{:.1}" text-anchor="end">{}</text>"##,
                MARGIN_L,
                MARGIN_L + pw,
                MARGIN_L - 6.0,
                y + 4.0,
                fmt_tick(t)
            );
        }
        let _ = write!(
            s,
            r#"<rect x="{MARGIN_L}" y="{MARGIN_T}" width="{pw}" height="{ph}" fill="none" stroke="black"/>"#
        );
        let _ = write!(
            s,
            r#"<text x="{:.1}" y="{:.1}" text-anchor="middle">{}</text>"#,
            MARGIN_L + pw / 2.0,
            h - 10.0,
            esc(&self.x_label)
        );
        let _ = write!(
            s,
            r#"<text x="16" y="{:.1}" text-anchor="middle" transform="rotate(-90 16 {:.1})">{}</text>"#,
            MARGIN_T + ph / 2.0,
            MARGIN_T + ph / 2.0,
            esc(&self.y_label)
        );
        for (v, colour) in &self.h_lines {
            if *v >= y0 && *v <= y1 {
                let y = my(*v);
                let _ = write!(
                    s,
                    r#"<line x1="{MARGIN_L}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="{colour}" stroke-dasharray="4 3"/>"#,
                    MARGIN_L + pw
                );
            }
        }
        for (i, ser) in self.series.iter().enumerate() {
            let mut d = String::new();
            let mut pen_down = false;
            for &(x, y) in &ser.points {
                if !(x.is_finite() && y.is_finite()) {
                    pen_down = false;
                    continue;
                }
                let cmd = if pen_down { 'L' } else { 'M' };
                let _ = write!(d, "{cmd}{:.2} {:.2}", mx(x), my(y));
                pen_down = true;
            }
            let _ = write!(
                s,
                r#"<path d="{d}" fill="none" stroke="{}" stroke-width="{}" stroke-dasharray="{}" stroke-linejoin="round"/>"#,
                ser.colour, ser.width, ser.dash
            );
            let ly = MARGIN_T + 16.0 + 16.0 * i as f64;
            let lx = MARGIN_L + pw - 170.0;
            let _ = write!(
                s,
                r#"<line x1="{lx:.1}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="{}" stroke-width="3" stroke-dasharray="{}"/><text x="{:.1}" y="{ly:.1}">{}</text>"#,
                ly - 4.0,
                lx + 24.0,
                ly - 4.0,
                ser.colour,
                ser.dash,
                lx + 30.0,
                esc(&ser.label)
            );
        }
        s.push_str("</svg>\n");
        s
    }

    fn bounds(&self) -> (f64, f64, f64, f64) {
        let mut b = (
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::INFINITY,
            f64::NEG_INFINITY,
        );
        for p in self.series.iter().flat_map(|s| s.points.iter()) {
            if p.0.is_finite() && p.1.is_finite() {
                b.0 = b.0.min(p.0);
                b.1 = b.1.max(p.0);
                b.2 = b.2.min(p.1);
                b.3 = b.3.max(p.1);
            }
        }
        for (v, _) in &self.h_lines {
            b.2 = b.2.min(*v);
            b.3 = b.3.max(*v);
        }
        if !b.0.is_finite() {
            return (0.0, 1.0, 0.0, 1.0);
        }
        let pad = |lo: f64, hi: f64| {
            let span = (hi - lo).max(1e-6);
            (lo - 0.05 * span, hi + 0.05 * span)
        };
        let (x0, x1) = pad(b.0, b.1);
        let (y0, y1) = pad(b.2, b.3);
        (x0, x1, y0, y1)
    }
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
    if a == 0.0 {
        "0".into()
    } else if a >= 100.0 {
        format!("{v:.0}")
    } else if a >= 1.0 {
        format!("{v:.1}")
    } else {
        format!("{v:.3}")
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
}
