//! The results of a scan as people and plotting tools read them: the
//! terminal table, CSV and SVG of `lacuna brouwer`.
//!
//! In: a `Model` and a `Scan` (plain data from `crate::solve::scan`). Out:
//! text.

use crate::base::diagnostic::Diagnostic;
use crate::base::number;
use crate::base::text::pad;
use crate::model::Model;
use crate::model::thermo::{sig, temperature_text};
use crate::notation::Style;
use crate::report::regimes::{self, Along};
use crate::report::svg::{self, Plot, SegmentLabel, Series};
use crate::report::{Palette, csv};
use crate::solve::equilibrium::Point;
use crate::solve::scan::{DILUTE_LIMIT, Mode, Scan};
use std::fmt::Write as _;
use std::io::{self, Write};

/// The warnings of a scan, one line each with its help (standard error
/// for formats other than the table).
pub fn write_warnings(
    out: &mut dyn Write,
    palette: Palette,
    warnings: &[Diagnostic],
) -> io::Result<()> {
    for w in warnings {
        let head = format!("{}[{}]", w.severity.as_str(), w.code);
        writeln!(
            out,
            "{}: {}",
            palette.severity(w.severity, &head),
            w.message
        )?;
        if let Some(help) = &w.help {
            writeln!(out, "  {} {help}", palette.frame("= help:"))?;
        }
    }
    Ok(())
}

/// The heading lines: model, units, neutrality, fixed totals.
pub fn describe_model(model: &Model, run: &Scan) -> Vec<String> {
    let mut lines = Vec::new();
    let when = match run.mode {
        Mode::Po2 { temperature } => format!("at {}", temperature_text(temperature)),
        Mode::Temperature { po2 } => format!("at pO₂ = {} bar", sig(po2, 4)),
        Mode::FrozenPo2 { high, low } => format!(
            "equilibrated at {}, frozen-in at {}",
            temperature_text(high),
            temperature_text(low)
        ),
        Mode::FrozenTemperature { high, po2 } => format!(
            "equilibrated at {} and pO₂ = {} bar, then frozen-in",
            temperature_text(high),
            sig(po2, 4)
        ),
        Mode::Dopant {
            temperature, po2, ..
        } => format!(
            "at {} and pO₂ = {} bar",
            temperature_text(temperature),
            sig(po2, 4)
        ),
    };
    lines.push(format!(
        "model       {}: host {} {when}",
        model.source, model.host.formula_text
    ));
    lines.push(format!(
        "units       [X] in defects per formula unit of {}; pO₂ in bar",
        model.host.formula_text
    ));
    lines.push(format!("neutrality  {}", model.neutrality(Style::Unicode)));
    for t in &model.totals {
        lines.push(format!(
            "fixed       {}: {}",
            t.subject_unicode, t.description
        ));
    }
    lines
}

/// `lacuna brouwer --format table`: the model, the regimes, the points,
/// notes and warnings.
pub fn table_text(model: &Model, run: &Scan) -> String {
    let mut out = String::new();
    for line in describe_model(model, run) {
        let _ = writeln!(out, "{line}");
    }
    let (names, width) = regimes::species_columns(model);
    if !run.regimes.is_empty() {
        let along = if matches!(run.mode, Mode::Temperature { .. }) {
            Along::Temperature
        } else {
            Along::Po2
        };
        out.push_str(&regimes::regimes_table(model, &run.regimes, along));
    }
    let what = match run.mode {
        Mode::Po2 { .. } | Mode::Temperature { .. } | Mode::Dopant { .. } => {
            "Full solution, every term kept"
        }
        _ => "Frozen-in solution",
    };
    let _ = writeln!(out, "\n{what} (concentrations per formula unit):");
    let first = match run.mode {
        Mode::Po2 { .. } | Mode::FrozenPo2 { .. } => "pO₂/bar",
        Mode::Dopant { .. } => "total/f.u.",
        _ => "T/K",
    };
    let mut header = pad(first, 11);
    for n in &names {
        header.push_str(&pad(n, width));
    }
    header.push_str(&pad("site frac", 11));
    header.push_str("ok");
    let _ = writeln!(out, "{header}");
    for (i, p) in run.points.iter().enumerate() {
        let x = match run.mode {
            Mode::Po2 { .. } | Mode::FrozenPo2 { .. } => sig(p.po2, 3),
            Mode::Dopant { .. } => sig(run.dopant.get(i).copied().unwrap_or(f64::NAN), 3),
            _ => sig(p.temperature, 5),
        };
        let mut row = pad(&x, 11);
        for s in 0..model.species.len() {
            row.push_str(&pad(&format!("{:.3e}", p.concentration(s)), width));
        }
        let flag = if p.site_fraction > DILUTE_LIMIT {
            "!"
        } else {
            ""
        };
        row.push_str(&pad(&format!("{:.2e}{flag}", p.site_fraction), 11));
        row.push_str(if p.converged { "yes" } else { "NO" });
        let _ = writeln!(out, "{row}");
    }
    for n in &run.notes {
        let _ = writeln!(out, "note: {n}");
    }
    for w in &run.warnings {
        let _ = writeln!(out, "{}[{}]: {}", w.severity.as_str(), w.code, w.message);
        if let Some(help) = &w.help {
            let _ = writeln!(out, "  = help: {help}");
        }
    }
    out
}

/// `lacuna brouwer --format csv`: one row per point (RFC 4180).
pub fn csv_text(model: &Model, run: &Scan) -> String {
    let mut out = Vec::new();
    let along_dopant = matches!(run.mode, Mode::Dopant { .. });
    let mut header = Vec::new();
    if along_dopant {
        header.push("dopant_per_formula_unit".to_string());
    }
    header.extend(["po2_bar".to_string(), "temperature_K".to_string()]);
    header.extend((0..model.species.len()).map(|s| model.symbol(s, Style::Ascii).to_string()));
    header.extend([
        "defect_site_fraction".to_string(),
        "converged".to_string(),
        "residual".to_string(),
    ]);
    let _ = csv::write_row(&mut out, &header);
    for (i, p) in run.points.iter().enumerate() {
        let mut row = Vec::new();
        if along_dopant {
            row.push(csv::number(run.dopant.get(i).copied().unwrap_or(f64::NAN)));
        }
        row.extend([csv::number(p.po2), csv::number(p.temperature)]);
        row.extend((0..model.species.len()).map(|s| csv::number(p.concentration(s))));
        row.push(csv::number(p.site_fraction));
        row.push(p.converged.to_string());
        row.push(csv::number(p.residual.max(p.total_residual)));
        let _ = csv::write_row(&mut out, &row);
    }
    String::from_utf8_lossy(&out).into_owned()
}

/// `lacuna brouwer --format svg`: log concentration against log pO2 (or
/// 1000/T), regimes numbered, slopes on the lines, the non-dilute range
/// shaded.
pub fn svg_text(model: &Model, run: &Scan) -> String {
    let by_po2 = matches!(run.mode, Mode::Po2 { .. } | Mode::FrozenPo2 { .. });
    let along_dopant = matches!(run.mode, Mode::Dopant { .. });
    let x_of = |i: usize, p: &Point| {
        if along_dopant {
            run.dopant.get(i).map_or(f64::NAN, |a| a.log10())
        } else if by_po2 {
            p.po2.log10()
        } else {
            1000.0 / p.temperature
        }
    };
    let series: Vec<Series> = (0..model.species.len())
        .map(|s| Series {
            label: model.symbol(s, Style::Unicode).to_string(),
            points: run
                .points
                .iter()
                .enumerate()
                .filter(|(_, p)| p.converged)
                .map(|(i, p)| (x_of(i, p), p.ln_c[s] / std::f64::consts::LN_10))
                .collect(),
        })
        .collect();
    let to_x = |v: f64| if by_po2 { v.log10() } else { 1000.0 / v };
    let mut boundaries = Vec::new();
    let mut region_names = Vec::new();
    let mut segment_labels = Vec::new();
    let mut footnotes = Vec::new();
    for (i, r) in run.regimes.iter().enumerate() {
        let (a, b) = (to_x(r.from), to_x(r.to));
        if i > 0 {
            boundaries.push(a);
        }
        let centre = (a + b) / 2.0;
        region_names.push((centre, format!("{}", i + 1)));
        footnotes.push(format!(
            "{}: {}",
            i + 1,
            r.neutrality(model, Style::Unicode)
        ));
        for s in 0..model.species.len() {
            let text = if by_po2 {
                number::signed(r.slope(model, s))
            } else {
                match r.enthalpy(model, s) {
                    Some(h) => format!("{} eV", sig(h, 3)),
                    None => continue,
                }
            };
            segment_labels.push(SegmentLabel {
                series: s,
                x: centre,
                text,
            });
        }
    }
    let mut shaded = Vec::new();
    let mut start: Option<f64> = None;
    let mut previous = None;
    for (i, p) in run.points.iter().enumerate() {
        let x = x_of(i, p);
        let over = p.site_fraction > DILUTE_LIMIT;
        match (over, start) {
            (true, None) => start = Some(x),
            (false, Some(s)) => {
                shaded.push((s, previous.unwrap_or(x)));
                start = None;
            }
            _ => {}
        }
        previous = Some(x);
    }
    if let (Some(s), Some(e)) = (start, previous) {
        shaded.push((s, e));
    }
    let (title, x_label) = match run.mode {
        Mode::Po2 { temperature } => (
            format!(
                "Defect concentrations in {} at {}",
                model.host.formula_text,
                temperature_text(temperature)
            ),
            "log₁₀(pO₂ / bar)".to_string(),
        ),
        Mode::Temperature { po2 } => (
            format!(
                "Defect concentrations in {} at pO₂ = {} bar",
                model.host.formula_text,
                sig(po2, 3)
            ),
            "1000 K / T".to_string(),
        ),
        Mode::FrozenPo2 { high, low } => (
            format!(
                "Frozen-in defects in {}: equilibrated at {}, quenched to {}",
                model.host.formula_text,
                sig(high, 5),
                temperature_text(low)
            ),
            "log₁₀(pO₂ / bar) at equilibration".to_string(),
        ),
        Mode::FrozenTemperature { high, po2 } => (
            format!(
                "Frozen-in defects in {} (equilibrated at {} K, pO₂ = {} bar)",
                model.host.formula_text,
                sig(high, 5),
                sig(po2, 3)
            ),
            "1000 K / T".to_string(),
        ),
        Mode::Dopant {
            temperature,
            po2,
            total,
        } => {
            let subject = model
                .totals
                .get(total)
                .map_or("?", |t| t.subject_unicode.as_str());
            (
                format!(
                    "Defect concentrations in {} against total {subject} at {}, pO₂ = {} bar",
                    model.host.formula_text,
                    temperature_text(temperature),
                    sig(po2, 3)
                ),
                format!("log₁₀(total {subject} per formula unit)"),
            )
        }
    };
    footnotes.insert(
        0,
        format!("neutrality: {}", model.neutrality(Style::Unicode)),
    );
    if by_po2 && !run.regimes.is_empty() {
        footnotes.insert(
            1,
            "numbers on the lines: exact slopes d log[X] / d log pO₂ in each regime".to_string(),
        );
    } else if !run.regimes.is_empty() {
        footnotes.insert(
            1,
            "numbers on the lines: apparent enthalpies −k d ln[X] / d(1/T)".to_string(),
        );
    }
    let plot = Plot {
        title,
        x_label,
        y_label: format!("log₁₀[X] (per formula unit of {})", model.host.formula_text),
        series,
        boundaries,
        region_names,
        segment_labels,
        shaded,
        shaded_note: Some(format!(
            "shaded: more than {} % of the sites defective; the dilute ideal model is not trustworthy there",
            DILUTE_LIMIT * 100.0
        )),
        footnotes,
    };
    svg::render(&plot, 40.0)
}
