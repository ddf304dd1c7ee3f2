//! Writes a `FitReport` for people (a table) and for plotting programs (the
//! fitted curves as CSV). JSON is the report itself, through serde.
//!
//! In: the report. Out: text on a writer. Colour comes from the caller's
//! `Palette`.

use super::Palette;
use crate::base::number;
use crate::base::text::{self, pad};
use crate::fit::regimes::SlopeVerdict;
use crate::fit::{FitReport, IsothermReport, sci};
use std::io::{self, Write};

/// `value ± se` with `digits` decimals, or the value alone.
fn pm(value: f64, se: Option<f64>, digits: usize) -> String {
    match se {
        Some(s) => format!("{} ± {s:.digits$}", text::signed_decimal(value, digits)),
        None => format!("{} (no SE)", text::signed_decimal(value, digits)),
    }
}

fn pm_sci(value: f64, se: Option<f64>) -> String {
    match se {
        Some(s) => format!("{} ± {}", sci(value), sci(s)),
        None => sci(value),
    }
}

/// Exponent as written beside a prefactor unit: `bar^(−1/4)`.
fn unit_for(exponent: crate::base::number::Q) -> String {
    if exponent == crate::base::number::Q::from_integer(0) {
        "S/cm".into()
    } else {
        format!("S/cm at 1 bar, × pO2^({})", number::signed(exponent))
    }
}

/// The table.
pub fn write_table(out: &mut dyn Write, r: &FitReport, p: Palette) -> io::Result<()> {
    let points: usize = r.isotherms.iter().map(|i| i.data.len()).sum();
    writeln!(
        out,
        "{} {} — {points} points in {} isotherm{} (columns {}{})",
        p.strong("fit"),
        r.source,
        r.isotherms.len(),
        if r.isotherms.len() == 1 { "" } else { "s" },
        r.columns.join(", "),
        if r.ignored_columns.is_empty() {
            String::new()
        } else {
            format!("; ignored {}", r.ignored_columns.join(", "))
        }
    )?;
    let e = r.regime.exponents;
    writeln!(
        out,
        "regimes: {}; decomposition in regime {} ({}):",
        r.regimes_source, r.regime.name, r.regime.neutrality
    )?;
    let term = |name: &str, q: crate::base::number::Q| {
        if q == crate::base::number::Q::from_integer(0) {
            name.to_string()
        } else {
            format!("{name}·pO2^({})", number::signed(q))
        }
    };
    writeln!(
        out,
        "  σ = {} + {} + {}, pO2 in bar, non-negative terms",
        term("σ_ion°", e.ion),
        term("σ_n°", e.n),
        term("σ_p°", e.p)
    )?;
    write_regimes(out, r)?;
    for iso in &r.isotherms {
        writeln!(out)?;
        write_isotherm(out, r, iso, p)?;
    }
    writeln!(out)?;
    write_arrhenius(out, r, p)?;
    if !r.notes.is_empty() {
        writeln!(out)?;
        writeln!(out, "{}", p.strong("notes"))?;
        for n in &r.notes {
            writeln!(out, "  - {n}")?;
        }
    }
    Ok(())
}

/// The regimes the slopes are compared with: name, exact slopes, condition.
fn write_regimes(out: &mut dyn Write, r: &FitReport) -> io::Result<()> {
    writeln!(
        out,
        "  regimes compared (exact slopes d log c / d log pO2 of n, p and the ionic term):"
    )?;
    let width = r
        .regimes
        .iter()
        .map(|g| text::width(&g.name))
        .max()
        .unwrap_or(0);
    let ion_width = r
        .regimes
        .iter()
        .map(|g| text::width(&g.ionic_defect))
        .max()
        .unwrap_or(0);
    for g in &r.regimes {
        writeln!(
            out,
            "    {}  n {:>5}  p {:>5}  {} {:>5}  {}",
            pad(&g.name, width),
            number::signed(g.n.slope),
            number::signed(g.p.slope),
            pad(&g.ionic_defect, ion_width),
            number::signed(g.ion.slope),
            g.neutrality
        )?;
    }
    Ok(())
}

fn write_isotherm(
    out: &mut dyn Write,
    r: &FitReport,
    iso: &IsothermReport,
    p: Palette,
) -> io::Result<()> {
    writeln!(
        out,
        "{} ({:.2} K): {} points, pO2 {} … {} bar",
        p.strong(&format!("isotherm {}", iso.label)),
        iso.temperature_k,
        iso.data.len(),
        sci(iso.po2_min_bar),
        sci(iso.po2_max_bar)
    )?;
    let tried = iso.bic.len();
    let dropped = iso.bic_segments.saturating_sub(iso.segments.len());
    writeln!(
        out,
        "  segments (continuous broken line): BIC chose {} of 1…{tried}{}{}",
        iso.bic_segments,
        iso.delta_bic
            .map(|d| format!(" (next best ΔBIC {d:.1})"))
            .unwrap_or_default(),
        match dropped {
            0 => String::new(),
            d => format!(
                "; {d} knot{} dropped, slope change not significant",
                if d == 1 { "" } else { "s" }
            ),
        }
    )?;
    writeln!(
        out,
        "    {:<22} {:>3}  {:<22} {:>7}  {:<11} regimes predicting it",
        "pO2 range (bar)", "n", "slope ± SE", "nearest", "verdict"
    )?;
    for s in &iso.segments {
        let verdict = s.matching.verdict;
        let verdict_text = match verdict {
            _ if s.mixed => "transition".to_string(),
            SlopeVerdict::Match => p.good(verdict.as_str()),
            SlopeVerdict::NoMatch => p.bad(verdict.as_str()),
            _ => verdict.as_str().to_string(),
        };
        let predicted = if verdict == SlopeVerdict::NoMatch {
            "none within the interval".to_string()
        } else if s.matching.predicted_by.is_empty() {
            "no regime of the model".to_string()
        } else {
            let list = &s.matching.predicted_by;
            let shown = list.iter().take(4).cloned().collect::<Vec<_>>().join("; ");
            if list.len() > 4 {
                format!("{shown}; {} more", list.len() - 4)
            } else {
                shown
            }
        };
        let predicted = match &s.dominant {
            Some((term, share)) if s.mixed => format!(
                "none: carriers mixed ({term} carries down to {:.0} %), an apparent slope",
                share * 100.0
            ),
            _ => predicted,
        };
        let also = if verdict == SlopeVerdict::Ambiguous {
            format!(
                " (also {})",
                s.matching
                    .within
                    .iter()
                    .filter(|q| **q != s.matching.nearest)
                    .map(|q| number::signed(*q))
                    .collect::<Vec<_>>()
                    .join(", ")
            )
        } else {
            String::new()
        };
        writeln!(
            out,
            "    {:<22} {:>3}  {:<22} {:>7}  {:<11} {predicted}{also}",
            format!("{} … {}", sci(s.po2_min_bar), sci(s.po2_max_bar)),
            s.points,
            pm(s.slope, s.slope_se, 4),
            number::signed(s.matching.nearest),
            verdict_text,
        )?;
    }
    match (&iso.decomposition, &iso.decomposition_problem) {
        (Some(d), _) => {
            writeln!(
                out,
                "  decomposition ({} weights; {} dof):",
                if d.weighting == "uncertainties" {
                    "1/s²"
                } else {
                    "1/σ², constant relative error"
                },
                d.dof
            )?;
            let e = d.exponents;
            for (name, est, exp) in [
                ("σ_ion°", d.sigma_ion, e.ion),
                ("σ_n°", d.sigma_n, e.n),
                ("σ_p°", d.sigma_p, e.p),
            ] {
                if est.at_bound {
                    writeln!(out, "    {name:<7} not detected (fitted at zero)")?;
                } else {
                    writeln!(
                        out,
                        "    {name:<7} {}  {}",
                        pm_sci(est.value, est.se),
                        unit_for(exp)
                    )?;
                }
            }
            let quality = if d.poor || d.systematic {
                p.bad("poor fit")
            } else {
                p.good("fits")
            };
            writeln!(
                out,
                "    residuals: rms {:.4}, max {:.4} decades{}{} — {quality}",
                d.residual_rms_log10,
                d.residual_max_log10,
                d.chi2_reduced
                    .map(|c| format!(", χ²/dof {c:.2}"))
                    .unwrap_or_default(),
                d.runs_z
                    .map(|z| format!(", runs z {}", text::signed_decimal(z, 1)))
                    .unwrap_or_default()
            )?;
            for (name, b, term) in [
                ("σ_n = σ_ion", d.boundary_n, "σ_n°"),
                ("σ_p = σ_ion", d.boundary_p, "σ_p°"),
            ] {
                match b {
                    Some(b) => writeln!(
                        out,
                        "    {name} at pO2 = {} bar (log10 {}{}){}",
                        sci(b.po2_bar),
                        text::signed_decimal(b.log10_po2, 2),
                        b.log10_se.map(|s| format!(" ± {s:.2}")).unwrap_or_default(),
                        if b.extrapolated {
                            format!(" {}", p.bad("extrapolated, outside the data"))
                        } else {
                            " within the data".into()
                        }
                    )?,
                    None => writeln!(out, "    {name}: none ({term} or σ_ion not detected)")?,
                }
            }
            if let (Some(first), Some(last)) = (d.curve.first(), d.curve.last()) {
                let min = d
                    .curve
                    .iter()
                    .map(|c| c.t_ion)
                    .fold(f64::INFINITY, f64::min);
                let max = d.curve.iter().map(|c| c.t_ion).fold(0.0f64, f64::max);
                writeln!(
                    out,
                    "    t_ion: {:.3} at {} bar, {:.3} at {} bar (range {:.3} … {:.3})",
                    first.t_ion,
                    sci(first.po2_bar),
                    last.t_ion,
                    sci(last.po2_bar),
                    min,
                    max
                )?;
            }
        }
        (None, Some(problem)) => writeln!(out, "  decomposition: not made: {problem}")?,
        (None, None) => {}
    }
    let _ = r;
    Ok(())
}

fn write_arrhenius(out: &mut dyn Write, r: &FitReport, p: Palette) -> io::Result<()> {
    writeln!(
        out,
        "{} ({} fitted; k_B = {:e} eV/K, 1 eV = {} kJ/mol)",
        p.strong("arrhenius"),
        r.arrhenius_form.describe(),
        r.constants.k_b_ev_per_k,
        r.constants.kj_per_mol_per_ev
    )?;
    if r.arrhenius.is_empty() {
        writeln!(out, "  none: fewer than two isotherms")?;
        return Ok(());
    }
    writeln!(
        out,
        "    {:<6} {:<18} {:<18} {:<16} {:<14} isotherms",
        "term", "E_a (eV)", "E_a (kJ/mol)", "ln A", "T range (K)"
    )?;
    for o in &r.arrhenius {
        let name = match o.component.as_str() {
            "ion" => "σ_ion",
            "n" => "σ_n°",
            _ => "σ_p°",
        };
        match (&o.fit, &o.problem) {
            (Some(f), _) => writeln!(
                out,
                "    {name:<6} {:<18} {:<18} {:<16} {:<14} {}{}",
                pm(f.activation_ev, f.activation_ev_se, 3).trim_start_matches('+'),
                pm(f.activation_kj_mol, f.activation_kj_mol_se, 1).trim_start_matches('+'),
                pm(f.ln_prefactor, f.ln_prefactor_se, 2),
                format!("{:.0} … {:.0}", f.t_min_k, f.t_max_k),
                f.isotherms_used.len(),
                if f.skipped.is_empty() {
                    String::new()
                } else {
                    format!(" (left out: {})", f.skipped.join("; "))
                }
            )?,
            (None, Some(problem)) => writeln!(out, "    {name:<6} no fit: {problem}")?,
            (None, None) => {}
        }
    }
    for h in &r.enthalpies {
        writeln!(
            out,
            "  ΔH_{} = {} × (E_a({}) − E_μ) = {} eV = {} kJ/mol   [{}]",
            h.reaction,
            crate::base::number::to_plain(h.factor),
            h.component,
            pm(h.value_ev, h.se_ev, 3).trim_start_matches('+'),
            pm(h.value_kj_mol, h.se_kj_mol, 1).trim_start_matches('+'),
            h.equation
        )?;
        writeln!(out, "      assumes: {}", h.assumption)?;
    }
    for i in &r.interpretations {
        writeln!(out, "  {i}")?;
    }
    Ok(())
}

/// The fitted curves: for each isotherm a grid over its measured pressures
/// with the decomposition's terms, t_ion, and the straight piece's value
/// where the grid point lies inside one.
pub fn write_curves_csv(out: &mut dyn Write, r: &FitReport) -> io::Result<()> {
    writeln!(
        out,
        "isotherm,T_K,pO2_bar,sigma_fit_S_per_cm,sigma_ion_S_per_cm,sigma_n_S_per_cm,sigma_p_S_per_cm,t_ion,segment,segment_fit_S_per_cm"
    )?;
    for iso in &r.isotherms {
        let label = csv_field(&iso.label);
        let grid: Vec<f64> = match &iso.decomposition {
            Some(d) => d.curve.iter().map(|c| c.po2_bar).collect(),
            None => iso.data.iter().map(|d| d.po2_bar).collect(),
        };
        for po2 in grid {
            let lp = po2.log10();
            let seg = iso.segments.iter().enumerate().find(|(_, s)| {
                lp >= s.po2_min_bar.log10() - 1e-9 && lp <= s.po2_max_bar.log10() + 1e-9
            });
            let (seg_index, seg_value) = match seg {
                Some((i, s)) => (
                    i.to_string(),
                    format!("{:e}", 10f64.powf(s.intercept + s.slope * lp)),
                ),
                None => (String::new(), String::new()),
            };
            match &iso.decomposition {
                Some(d) => {
                    let c = d.curve_point(po2);
                    writeln!(
                        out,
                        "{label},{:.2},{:e},{:e},{:e},{:e},{:e},{},{seg_index},{seg_value}",
                        iso.temperature_k, po2, c.sigma, c.sigma_ion, c.sigma_n, c.sigma_p, c.t_ion
                    )?;
                }
                None => writeln!(
                    out,
                    "{label},{:.2},{:e},,,,,,{seg_index},{seg_value}",
                    iso.temperature_k, po2
                )?,
            }
        }
    }
    Ok(())
}

fn csv_field(text: &str) -> String {
    if text.contains([',', '"', '\n']) {
        format!("\"{}\"", text.replace('"', "\"\""))
    } else {
        text.to_string()
    }
}
