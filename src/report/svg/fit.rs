//! A hand-written SVG of a fit: log σ versus log pO2, measured points per
//! isotherm, the decomposition's total curve, the straight pieces dashed and
//! each piece's slope written beside it.
//!
//! In: a `FitReport`. Out: one self-contained SVG document as a string,
//! drawn with the SVG writer's shared pieces (`super`).

use super::{close, escape, frame, open};
use crate::base::number;
use crate::base::text::signed_decimal;
use crate::fit::FitReport;
use crate::fit::regimes::SlopeVerdict;
use std::fmt::Write;

const WIDTH: f64 = 760.0;
const HEIGHT: f64 = 500.0;
const LEFT: f64 = 72.0;
const RIGHT: f64 = 170.0;
const TOP: f64 = 40.0;
const BOTTOM: f64 = 56.0;
/// Colour-blind-safe qualitative colours (Okabe and Ito, 2008).
const COLOURS: &[&str] = &[
    "#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000",
];

/// Axis range rounded out to whole decades, and a tick step giving at
/// most about ten ticks.
fn axis(lo: f64, hi: f64) -> (f64, f64, f64) {
    let (mut lo, mut hi) = (lo.floor(), hi.ceil());
    if hi - lo < 1.0 {
        lo -= 1.0;
        hi += 1.0;
    }
    let span = hi - lo;
    let step = [1.0, 2.0, 5.0, 10.0, 20.0]
        .into_iter()
        .find(|s| span / s <= 10.0)
        .unwrap_or(50.0);
    ((lo / step).floor() * step, (hi / step).ceil() * step, step)
}

/// Draws the report.
pub fn render_fit(r: &FitReport) -> String {
    let points = r.isotherms.iter().flat_map(|i| &i.data);
    let (mut xlo, mut xhi, mut ylo, mut yhi) = (
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
    );
    for p in points {
        xlo = xlo.min(p.po2_bar.log10());
        xhi = xhi.max(p.po2_bar.log10());
        ylo = ylo.min(p.sigma.log10());
        yhi = yhi.max(p.sigma.log10());
    }
    if !(xlo.is_finite() && xhi.is_finite() && ylo.is_finite() && yhi.is_finite()) {
        (xlo, xhi, ylo, yhi) = (-1.0, 0.0, -1.0, 0.0);
    }
    let (x0, x1, xs) = axis(xlo, xhi);
    let (y0, y1, ys) = axis(ylo - 0.1, yhi + 0.1);
    let pw = WIDTH - LEFT - RIGHT;
    let ph = HEIGHT - TOP - BOTTOM;
    let px = |x: f64| LEFT + (x - x0) / (x1 - x0) * pw;
    let py = |y: f64| TOP + (y1 - y) / (y1 - y0) * ph;
    let mut s = String::new();
    open(&mut s, WIDTH, HEIGHT, 12);
    let _ = writeln!(
        s,
        r#"<text x="{LEFT}" y="22" font-size="14">{}</text>"#,
        escape(&format!("σ versus pO₂ — {}", r.source))
    );
    // Frame, grid and ticks.
    frame(&mut s, LEFT, TOP, pw, ph);
    let mut t = x0;
    while t <= x1 + 1e-9 {
        let x = px(t);
        let _ = writeln!(
            s,
            r##"<line x1="{x:.1}" y1="{TOP}" x2="{x:.1}" y2="{:.1}" stroke="#ddd"/><text x="{x:.1}" y="{:.1}" text-anchor="middle">{}</text>"##,
            TOP + ph,
            TOP + ph + 16.0,
            super::tick_text(t)
        );
        t += xs;
    }
    let mut t = y0;
    while t <= y1 + 1e-9 {
        let y = py(t);
        let _ = writeln!(
            s,
            r##"<line x1="{LEFT}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="#ddd"/><text x="{:.1}" y="{:.1}" text-anchor="end">{}</text>"##,
            LEFT + pw,
            LEFT - 6.0,
            y + 4.0,
            super::tick_text(t)
        );
        t += ys;
    }
    let _ = writeln!(
        s,
        r#"<text x="{:.1}" y="{:.1}" text-anchor="middle">log₁₀(pO₂ / bar)</text>"#,
        LEFT + pw / 2.0,
        HEIGHT - 14.0
    );
    let _ = writeln!(
        s,
        r#"<text transform="translate(18 {:.1}) rotate(-90)" text-anchor="middle">log₁₀(σ / S cm⁻¹)</text>"#,
        TOP + ph / 2.0
    );
    for (k, iso) in r.isotherms.iter().enumerate() {
        let colour = COLOURS[k % COLOURS.len()];
        let _ = writeln!(s, r#"<g stroke="{colour}" fill="{colour}">"#);
        if let Some(d) = &iso.decomposition {
            let path: Vec<String> = d
                .curve
                .iter()
                .filter(|c| c.sigma > 0.0)
                .map(|c| format!("{:.1},{:.1}", px(c.po2_bar.log10()), py(c.sigma.log10())))
                .collect();
            let _ = writeln!(
                s,
                r#"<polyline fill="none" stroke-width="1.5" points="{}"/>"#,
                path.join(" ")
            );
        }
        for seg in &iso.segments {
            let (a, b) = (seg.po2_min_bar.log10(), seg.po2_max_bar.log10());
            let ya = seg.intercept + seg.slope * a;
            let yb = seg.intercept + seg.slope * b;
            let _ = writeln!(
                s,
                r#"<line x1="{:.1}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke-width="3" stroke-dasharray="7 4" opacity="0.55"/>"#,
                px(a),
                py(ya),
                px(b),
                py(yb)
            );
            let slope = signed_decimal(seg.slope, 3);
            let label = match seg.matching.verdict {
                _ if seg.mixed => format!("transition ({slope})"),
                SlopeVerdict::Match => {
                    format!("{} ({slope})", number::signed(seg.matching.nearest))
                }
                SlopeVerdict::Ambiguous => {
                    format!("{}? ({slope})", number::signed(seg.matching.nearest))
                }
                SlopeVerdict::NoMatch => format!("no match ({slope})"),
                SlopeVerdict::Untested => slope,
            };
            let (mx, my) = ((a + b) / 2.0, seg.intercept + seg.slope * (a + b) / 2.0);
            let _ = writeln!(
                s,
                r#"<text x="{:.1}" y="{:.1}" stroke="none" text-anchor="middle" font-size="11">{}</text>"#,
                px(mx),
                py(my) - 9.0,
                escape(&label)
            );
        }
        for p in &iso.data {
            let _ = writeln!(
                s,
                r#"<circle cx="{:.1}" cy="{:.1}" r="3.2" fill-opacity="0.85"/>"#,
                px(p.po2_bar.log10()),
                py(p.sigma.log10())
            );
        }
        let ly = TOP + 12.0 + 20.0 * k as f64;
        let lx = LEFT + pw + 16.0;
        let _ = writeln!(
            s,
            r#"<circle cx="{lx:.1}" cy="{ly:.1}" r="3.2"/><text x="{:.1}" y="{:.1}" stroke="none">{}</text>"#,
            lx + 10.0,
            ly + 4.0,
            escape(&format!("{} ({:.0} K)", iso.label, iso.temperature_k))
        );
        let _ = writeln!(s, "</g>");
    }
    let ly = TOP + 20.0 + 20.0 * r.isotherms.len() as f64;
    let lx = LEFT + pw + 10.0;
    let _ = writeln!(
        s,
        r##"<g font-size="11" fill="#333"><line x1="{lx:.1}" y1="{ly:.1}" x2="{:.1}" y2="{ly:.1}" stroke="#333" stroke-width="1.5"/><text x="{:.1}" y="{:.1}">decomposition</text><line x1="{lx:.1}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="#333" stroke-width="3" stroke-dasharray="7 4" opacity="0.55"/><text x="{:.1}" y="{:.1}">segment, slope</text></g>"##,
        lx + 22.0,
        lx + 28.0,
        ly + 4.0,
        ly + 18.0,
        lx + 22.0,
        ly + 18.0,
        lx + 28.0,
        ly + 22.0
    );
    close(&mut s);
    s
}
