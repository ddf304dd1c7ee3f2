//! The one SVG writer: light, hand-written line diagrams.
//!
//! The shared pieces (document, background, frame, escaping) are here, with
//! the diagram for defect concentrations. In: a `Plot` (labelled series of
//! (x, y) points in log units, regime boundaries, per-segment labels such
//! as slopes, shaded ranges with a note). Out: one self-contained SVG
//! document as a string. Species names are typeset in Kröger–Vink notation
//! with real subscripts and superscripts. Nothing here knows chemistry: the
//! caller decides what the axes mean. `fit` draws a fit report with the
//! same pieces.

mod fit;

pub use fit::render_fit;

use std::fmt::Write;

/// One labelled line.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    /// Kröger–Vink symbol in Unicode (`[V_O••]`, `n`).
    pub label: String,
    /// (x, y); non-finite y leaves a gap.
    pub points: Vec<(f64, f64)>,
}

/// A text written beside one series inside one x range (a slope).
#[derive(Debug, Clone, PartialEq)]
pub struct SegmentLabel {
    pub series: usize,
    pub x: f64,
    pub text: String,
}

/// Everything the diagram shows.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Plot {
    pub title: String,
    pub x_label: String,
    pub y_label: String,
    pub series: Vec<Series>,
    /// Vertical dashed lines (regime boundaries).
    pub boundaries: Vec<f64>,
    /// Names written at the top of each region between boundaries.
    pub region_names: Vec<(f64, String)>,
    pub segment_labels: Vec<SegmentLabel>,
    /// Shaded x ranges and the note that explains them.
    pub shaded: Vec<(f64, f64)>,
    pub shaded_note: Option<String>,
    /// Lines of small print under the diagram.
    pub footnotes: Vec<String>,
}

const WIDTH: f64 = 960.0;
/// Height of the plot without footnotes; each footnote line adds 16 px.
const HEIGHT: f64 = 640.0;
const LEFT: f64 = 90.0;
const RIGHT: f64 = 150.0;
const TOP: f64 = 70.0;
const BOTTOM: f64 = 110.0;

/// Line colours, chosen to stay apart on screen and in grey print.
const COLOURS: &[&str] = &[
    "#1b4f9c", "#c0392b", "#1e8449", "#8e44ad", "#d68910", "#117a65", "#6e2c00", "#2e4053",
    "#b03a2e", "#5b2c6f", "#196f3d", "#7d6608",
];

fn escape(text: &str) -> String {
    text.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Opens a document `width` × `height` with a white background.
fn open(svg: &mut String, width: f64, height: f64, font_size: u32) {
    let _ = writeln!(
        svg,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{width}\" height=\"{height}\" viewBox=\"0 0 {width} {height}\" font-family=\"DejaVu Sans, Helvetica, Arial, sans-serif\" font-size=\"{font_size}\">"
    );
    let _ = writeln!(svg, "<rect width=\"100%\" height=\"100%\" fill=\"white\"/>");
}

/// The frame around the plotting area.
fn frame(svg: &mut String, left: f64, top: f64, width: f64, height: f64) {
    let _ = writeln!(
        svg,
        "<rect x=\"{left}\" y=\"{top}\" width=\"{width}\" height=\"{height}\" fill=\"none\" stroke=\"#333\"/>"
    );
}

/// Closes the document.
fn close(svg: &mut String) {
    svg.push_str("</svg>\n");
}

fn is_mark(c: char) -> bool {
    matches!(c, '•' | '′' | '×' | '″' | '‴' | '⁗')
}

/// Kröger–Vink text as SVG tspans: `V_O••` → V, subscript O, superscript ••.
pub fn kroger_vink_tspans(text: &str) -> String {
    #[derive(PartialEq, Clone, Copy)]
    enum Mode {
        Main,
        Sub,
        Sup,
    }
    let mut out = String::new();
    let mut mode = Mode::Main;
    let mut braces = 0;
    let mut run = String::new();
    let flush = |out: &mut String, run: &mut String, mode: Mode| {
        if run.is_empty() {
            return;
        }
        let body = escape(run);
        match mode {
            Mode::Main => out.push_str(&format!("<tspan>{body}</tspan>")),
            Mode::Sub => out.push_str(&format!(
                "<tspan font-size=\"75%\" dy=\"4\">{body}</tspan><tspan dy=\"-4\"></tspan>"
            )),
            Mode::Sup => out.push_str(&format!(
                "<tspan font-size=\"75%\" dy=\"-6\">{body}</tspan><tspan dy=\"6\"></tspan>"
            )),
        }
        run.clear();
    };
    for c in text.chars() {
        match c {
            '_' if mode == Mode::Main => {
                flush(&mut out, &mut run, mode);
                mode = Mode::Sub;
            }
            '{' if mode == Mode::Sub => braces += 1,
            '}' if mode == Mode::Sub && braces > 0 => braces -= 1,
            c if is_mark(c) => {
                if mode != Mode::Sup {
                    flush(&mut out, &mut run, mode);
                    mode = Mode::Sup;
                }
                run.push(c);
            }
            c if mode == Mode::Sub && braces == 0 && (c == ' ' || c == ')' || c == ']') => {
                flush(&mut out, &mut run, mode);
                mode = Mode::Main;
                run.push(c);
            }
            c => {
                if mode == Mode::Sup {
                    flush(&mut out, &mut run, mode);
                    mode = Mode::Main;
                }
                run.push(c);
            }
        }
    }
    flush(&mut out, &mut run, mode);
    out
}

fn nice_step(span: f64, target: f64) -> f64 {
    let raw = (span / target).max(1e-12);
    let magnitude = 10f64.powf(raw.log10().floor());
    for m in [1.0, 2.0, 5.0, 10.0] {
        if raw <= m * magnitude {
            return m * magnitude;
        }
    }
    10.0 * magnitude
}

pub(super) fn tick_text(v: f64) -> String {
    if (v - v.round()).abs() < 1e-9 {
        let r = v.round() as i64;
        if r < 0 {
            format!("−{}", -r)
        } else {
            r.to_string()
        }
    } else {
        let text = format!("{v:.2}");
        let text = text.trim_end_matches('0').trim_end_matches('.').to_string();
        text.replacen('-', "−", 1)
    }
}

/// Renders the plot. `y_floor` limits how many decades below the top are drawn.
pub fn render(plot: &Plot, y_decades: f64) -> String {
    let xs = plot
        .series
        .iter()
        .flat_map(|s| s.points.iter().map(|p| p.0));
    let (mut x_min, mut x_max) = xs.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
        (a.min(x), b.max(x))
    });
    if !x_min.is_finite() || !x_max.is_finite() || x_max <= x_min {
        x_min = 0.0;
        x_max = 1.0;
    }
    let y_top_data = plot
        .series
        .iter()
        .flat_map(|s| s.points.iter().map(|p| p.1))
        .filter(|y| y.is_finite())
        .fold(f64::NEG_INFINITY, f64::max);
    let y_max = if y_top_data.is_finite() {
        y_top_data.ceil() + 1.0
    } else {
        1.0
    };
    let y_bottom_data = plot
        .series
        .iter()
        .flat_map(|s| s.points.iter().map(|p| p.1))
        .filter(|y| y.is_finite())
        .fold(f64::INFINITY, f64::min);
    let y_min = if y_bottom_data.is_finite() {
        y_bottom_data.floor().max(y_max - y_decades)
    } else {
        y_max - 10.0
    };
    let notes =
        plot.footnotes.len() + usize::from(plot.shaded_note.is_some() && !plot.shaded.is_empty());
    let total_height = HEIGHT + 16.0 * notes.saturating_sub(2) as f64;
    let plot_w = WIDTH - LEFT - RIGHT;
    let plot_h = HEIGHT - TOP - BOTTOM;
    let sx = |x: f64| LEFT + (x - x_min) / (x_max - x_min) * plot_w;
    let sy = |y: f64| TOP + (y_max - y) / (y_max - y_min) * plot_h;
    let mut svg = String::new();
    open(&mut svg, WIDTH, total_height, 13);
    let _ = writeln!(
        svg,
        "<text x=\"{}\" y=\"30\" font-size=\"16\" font-weight=\"bold\">{}</text>",
        LEFT,
        escape(&plot.title)
    );
    // Shaded ranges first, under everything else.
    for &(a, b) in &plot.shaded {
        let (xa, xb) = (sx(a.max(x_min)), sx(b.min(x_max)));
        if xb > xa {
            let _ = writeln!(
                svg,
                "<rect x=\"{xa:.1}\" y=\"{TOP}\" width=\"{:.1}\" height=\"{plot_h}\" fill=\"#000\" fill-opacity=\"0.07\"/>",
                xb - xa
            );
        }
    }
    // Frame and ticks.
    frame(&mut svg, LEFT, TOP, plot_w, plot_h);
    let x_step = nice_step(x_max - x_min, 10.0);
    let mut t = (x_min / x_step).ceil() * x_step;
    while t <= x_max + 1e-9 {
        let x = sx(t);
        let _ = writeln!(
            svg,
            "<line x1=\"{x:.1}\" y1=\"{}\" x2=\"{x:.1}\" y2=\"{}\" stroke=\"#333\"/><text x=\"{x:.1}\" y=\"{}\" text-anchor=\"middle\">{}</text>",
            TOP + plot_h,
            TOP + plot_h + 6.0,
            TOP + plot_h + 22.0,
            tick_text(t)
        );
        t += x_step;
    }
    let y_step = nice_step(y_max - y_min, 10.0).max(1.0);
    let mut t = (y_min / y_step).ceil() * y_step;
    while t <= y_max + 1e-9 {
        let y = sy(t);
        let _ = writeln!(
            svg,
            "<line x1=\"{}\" y1=\"{y:.1}\" x2=\"{LEFT}\" y2=\"{y:.1}\" stroke=\"#333\"/><line x1=\"{LEFT}\" y1=\"{y:.1}\" x2=\"{}\" y2=\"{y:.1}\" stroke=\"#ddd\"/><text x=\"{}\" y=\"{:.1}\" text-anchor=\"end\">{}</text>",
            LEFT - 6.0,
            LEFT + plot_w,
            LEFT - 10.0,
            y + 4.0,
            tick_text(t)
        );
        t += y_step;
    }
    let _ = writeln!(
        svg,
        "<text x=\"{:.1}\" y=\"{}\" text-anchor=\"middle\">{}</text>",
        LEFT + plot_w / 2.0,
        TOP + plot_h + 48.0,
        kroger_vink_tspans(&plot.x_label)
    );
    let _ = writeln!(
        svg,
        "<text transform=\"translate(24 {:.1}) rotate(-90)\" text-anchor=\"middle\">{}</text>",
        TOP + plot_h / 2.0,
        kroger_vink_tspans(&plot.y_label)
    );
    // Regime boundaries and names.
    for &b in &plot.boundaries {
        if b > x_min && b < x_max {
            let x = sx(b);
            let _ = writeln!(
                svg,
                "<line x1=\"{x:.1}\" y1=\"{TOP}\" x2=\"{x:.1}\" y2=\"{}\" stroke=\"#555\" stroke-dasharray=\"6 4\"/>",
                TOP + plot_h
            );
        }
    }
    for (x, name) in &plot.region_names {
        if *x >= x_min && *x <= x_max {
            let _ = writeln!(
                svg,
                "<text x=\"{:.1}\" y=\"{}\" text-anchor=\"middle\" font-size=\"12\" fill=\"#333\">{}</text>",
                sx(*x),
                TOP - 10.0,
                kroger_vink_tspans(name)
            );
        }
    }
    // Clip lines to the plot area.
    let _ = writeln!(
        svg,
        "<clipPath id=\"area\"><rect x=\"{LEFT}\" y=\"{TOP}\" width=\"{plot_w}\" height=\"{plot_h}\"/></clipPath>"
    );
    let mut end_labels: Vec<(f64, usize)> = Vec::new();
    for (i, s) in plot.series.iter().enumerate() {
        let colour = COLOURS[i % COLOURS.len()];
        let mut path = String::new();
        let mut pen_down = false;
        for &(x, y) in &s.points {
            if !y.is_finite() || y < y_min - 5.0 {
                pen_down = false;
                continue;
            }
            let _ = write!(
                path,
                "{}{:.2} {:.2} ",
                if pen_down { "L" } else { "M" },
                sx(x),
                sy(y)
            );
            pen_down = true;
        }
        if !path.is_empty() {
            let _ = writeln!(
                svg,
                "<path d=\"{}\" fill=\"none\" stroke=\"{colour}\" stroke-width=\"2\" clip-path=\"url(#area)\"/>",
                path.trim_end()
            );
        }
        if let Some(&(_, y)) = s.points.iter().rev().find(|p| p.1.is_finite()) {
            end_labels.push((sy(y.clamp(y_min, y_max)), i));
        }
    }
    // Labels at the right end, nudged apart.
    end_labels.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut last = f64::NEG_INFINITY;
    for (y, _) in &mut end_labels {
        if *y < last + 15.0 {
            *y = last + 15.0;
        }
        last = *y;
    }
    for (y, i) in &end_labels {
        let _ = writeln!(
            svg,
            "<text x=\"{:.1}\" y=\"{:.1}\" fill=\"{}\">{}</text>",
            LEFT + plot_w + 8.0,
            y + 4.0,
            COLOURS[i % COLOURS.len()],
            kroger_vink_tspans(&plot.series[*i].label)
        );
    }
    // Segment labels sit just above their line; one that would cover an
    // earlier label moves below its line instead, then further down.
    let mut placed: Vec<(f64, f64)> = Vec::new();
    for label in &plot.segment_labels {
        let Some(series) = plot.series.get(label.series) else {
            continue;
        };
        let y = interpolate(&series.points, label.x);
        if let Some(y) = y.filter(|y| *y >= y_min && *y <= y_max) {
            let x = sx(label.x);
            let mut ty = sy(y) - 6.0;
            let clashes = |ty: f64, placed: &[(f64, f64)]| {
                placed
                    .iter()
                    .any(|(px, py)| (px - x).abs() < 34.0 && (py - ty).abs() < 12.0)
            };
            if clashes(ty, &placed) {
                ty = sy(y) + 15.0;
                while clashes(ty, &placed) {
                    ty += 13.0;
                }
            }
            placed.push((x, ty));
            let _ = writeln!(
                svg,
                "<text x=\"{x:.1}\" y=\"{ty:.1}\" text-anchor=\"middle\" font-size=\"11\" fill=\"{}\" stroke=\"white\" stroke-width=\"3\" paint-order=\"stroke\">{}</text>",
                COLOURS[label.series % COLOURS.len()],
                escape(&label.text)
            );
        }
    }
    let mut foot_y = HEIGHT - BOTTOM + 70.0;
    if let Some(note) = &plot.shaded_note {
        if !plot.shaded.is_empty() {
            let _ = writeln!(
                svg,
                "<rect x=\"{LEFT}\" y=\"{:.1}\" width=\"14\" height=\"10\" fill=\"#000\" fill-opacity=\"0.07\" stroke=\"#999\"/><text x=\"{:.1}\" y=\"{:.1}\" font-size=\"12\">{}</text>",
                foot_y - 9.0,
                LEFT + 20.0,
                foot_y,
                escape(note)
            );
            foot_y += 16.0;
        }
    }
    for line in &plot.footnotes {
        let _ = writeln!(
            svg,
            "<text x=\"{LEFT}\" y=\"{foot_y:.1}\" font-size=\"12\" fill=\"#333\">{}</text>",
            escape(line)
        );
        foot_y += 16.0;
    }
    close(&mut svg);
    svg
}

/// Linear interpolation of y at x over points sorted by x.
fn interpolate(points: &[(f64, f64)], x: f64) -> Option<f64> {
    let mut sorted: Vec<(f64, f64)> = points.iter().copied().filter(|p| p.1.is_finite()).collect();
    sorted.sort_by(|a, b| a.0.total_cmp(&b.0));
    sorted.windows(2).find_map(|w| {
        let ((x0, y0), (x1, y1)) = (w[0], w[1]);
        (x >= x0 && x <= x1 && x1 > x0).then(|| y0 + (y1 - y0) * (x - x0) / (x1 - x0))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn kroger_vink_is_typeset() {
        let t = kroger_vink_tspans("[V_O••]");
        assert!(t.contains("<tspan>[V</tspan>"));
        assert!(t.contains("dy=\"4\">O</tspan>"));
        assert!(t.contains("dy=\"-6\">••</tspan>"));
        assert!(kroger_vink_tspans("a < b").contains("&lt;"));
    }

    #[test]
    fn renders_a_plot() {
        let plot = Plot {
            title: "test".into(),
            x_label: "log₁₀(pO₂ / bar)".into(),
            y_label: "log₁₀ [X]".into(),
            series: vec![Series {
                label: "n".into(),
                points: vec![(-10.0, -3.0), (0.0, -5.0)],
            }],
            boundaries: vec![-5.0],
            region_names: vec![(-7.5, "1".into())],
            segment_labels: vec![SegmentLabel {
                series: 0,
                x: -7.5,
                text: "−1/5".into(),
            }],
            shaded: vec![(-10.0, -8.0)],
            shaded_note: Some("note".into()),
            footnotes: vec!["foot".into()],
        };
        let svg = render(&plot, 40.0);
        assert!(svg.starts_with("<svg"));
        assert!(svg.trim_end().ends_with("</svg>"));
        assert!(svg.contains("stroke-dasharray"));
        assert!(svg.contains("−1/5"));
        assert_eq!(interpolate(&plot.series[0].points, -5.0), Some(-4.0));
    }
}
