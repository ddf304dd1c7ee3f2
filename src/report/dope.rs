//! The ranked table of incorporation mechanisms, as `lacuna dope` prints it
//! (and the workbench's `/dope`).
//!
//! In: the host, the dopant and the `Report` of `mechanisms`. Out: text for
//! people: what the dopant is, the structure guess with each site's
//! coordination, one row per mechanism (rank, site, compensation, radius
//! mismatch, reaction) with when it usually dominates, and the caveat that
//! the ranking is a guide. Colour comes from the caller's `Palette`.

use super::Palette;
use crate::base::text::{self, pad, width};
use crate::generate::dope::{CAVEAT, CnSource, Dopant, Mechanism, Report, SizeMatch};
use crate::generate::dope::{compensating_text, compound_text, reaction_text, site_name};
use crate::host::Host;
use crate::notation::Style;
use std::io::{self, Write};

/// What the table shows.
pub struct TableInput<'a> {
    pub host: &'a Host,
    pub dopant: &'a Dopant,
    pub report: &'a Report,
    pub style: Style,
    /// Reactions in smallest integers instead of with fractional gases.
    pub integers: bool,
}

fn size_text(s: &SizeMatch) -> String {
    format!(
        "{} % ({:.1} vs {:.1} pm, CN {})",
        text::signed_decimal(s.mismatch * 100.0, 1),
        s.dopant.pm,
        s.host.pm,
        s.dopant.cn
    )
}

fn mismatch_text(m: &Mechanism) -> String {
    m.size
        .as_ref()
        .map_or_else(|| "— (interstitial)".to_string(), size_text)
}

/// Writes the table. `cn_override` says how to override an assumed
/// coordination number of a site (by its name), in the caller's terms.
pub fn write_report(
    out: &mut dyn Write,
    palette: Palette,
    input: &TableInput<'_>,
    cn_override: &dyn Fn(&str) -> String,
) -> io::Result<()> {
    let TableInput {
        host,
        dopant,
        report,
        style,
        ..
    } = *input;
    writeln!(
        out,
        "{} in {}: {} from {}",
        palette.strong(&dopant.written),
        palette.strong(&host.formula_text),
        dopant.ion(),
        compound_text(dopant)
    )?;
    let s = &report.structure;
    writeln!(
        out,
        "structure: {}{}",
        s.name,
        s.detail
            .as_ref()
            .map_or(String::new(), |d| format!(" ({d})"))
    )?;
    for site in &s.sites {
        let name = host
            .sublattices
            .get(site.sublattice)
            .map_or("?".into(), |x| x.name());
        let how = match site.source {
            CnSource::Given => "given".to_string(),
            CnSource::Assumed => {
                format!("assumed from the structure; {}", cn_override(&name))
            }
            CnSource::Fallback => {
                format!("assumed, structure not recognised; {}", cn_override(&name))
            }
        };
        writeln!(out, "  {name}: CN {} ({how})", site.cn)?;
    }
    if !report.mechanisms.is_empty() {
        let rows: Vec<[String; 5]> = report
            .mechanisms
            .iter()
            .map(|m| {
                [
                    m.rank.to_string(),
                    site_name(host, m.site),
                    compensating_text(host, m, style),
                    mismatch_text(m),
                    reaction_text(m, input.integers, style),
                ]
            })
            .collect();
        let head = ["#", "site", "compensation", "radius mismatch", "reaction"];
        let mut widths = head.map(width);
        for row in &rows {
            for (w, cell) in widths.iter_mut().zip(row) {
                *w = (*w).max(width(cell));
            }
        }
        writeln!(out)?;
        let line = |cells: &[String; 5]| {
            let mut text = String::new();
            for (i, cell) in cells.iter().enumerate() {
                if i == 4 {
                    text.push_str(cell);
                } else if i == 0 {
                    text.push_str(&format!(
                        "{}{}  ",
                        " ".repeat(widths[0] - width(cell)),
                        cell
                    ));
                } else {
                    text.push_str(&pad(cell, widths[i]));
                    text.push_str("  ");
                }
            }
            text
        };
        writeln!(out, "{}", palette.frame(&line(&head.map(String::from))))?;
        let indent = " ".repeat(widths[0] + 2);
        for (m, row) in report.mechanisms.iter().zip(&rows) {
            writeln!(out, "{}", line(row))?;
            writeln!(
                out,
                "{indent}{} {}",
                palette.frame("when:"),
                m.compensation.conditions()
            )?;
            if let Some(second) = &m.second_size {
                writeln!(
                    out,
                    "{indent}{} second site {}",
                    palette.frame("size:"),
                    size_text(second)
                )?;
            }
            for note in &m.notes {
                writeln!(out, "{indent}{} {note}", palette.frame("note:"))?;
            }
        }
        writeln!(out)?;
        writeln!(out, "{} {CAVEAT}", palette.frame("note:"))?;
    }
    Ok(())
}
