//! Terminal output: each problem with the line it is on, the offending text
//! underlined, help where a fix is clear, the balance table of each failing
//! reaction, and one summary line.

use super::Palette;
use crate::base::diagnostic::{Diagnostic, Severity};
use crate::base::elements;
use crate::base::number;
use crate::check::{BalanceTable, site_name};
use crate::file::runner::{ReactionReport, Sink, Summary};
use crate::host::Host;
use std::io::{self, Write};

pub struct HumanSink<W: Write> {
    out: W,
    palette: Palette,
    /// Also list reactions that pass.
    pub verbose: bool,
    /// Print only the summary line.
    pub quiet: bool,
}

impl<W: Write> HumanSink<W> {
    pub fn new(out: W, palette: Palette) -> Self {
        HumanSink {
            out,
            palette,
            verbose: false,
            quiet: false,
        }
    }
}

/// Lines longer than this many characters are shown as a window around the span.
const MAX_SHOWN: usize = 160;

/// The part of a line to show, with control characters made visible, and the
/// underline's offset and width in characters.
fn window(line: &str, start: usize, end: usize) -> (String, usize, usize) {
    let start = start.min(line.len());
    let end = end.clamp(start, line.len());
    let before = line.get(..start).map_or(0, |s| s.chars().count());
    let inside = line.get(start..end).map_or(0, |s| s.chars().count());
    let total = line.chars().count();
    let (from, to) = if total <= MAX_SHOWN {
        (0, total)
    } else {
        let from = before.saturating_sub(40);
        (
            from,
            (before + inside.min(MAX_SHOWN - 80) + 40)
                .min(total)
                .max(from),
        )
    };
    let mut shown = String::new();
    if from > 0 {
        shown.push('…');
    }
    for c in line.chars().skip(from).take(to - from) {
        shown.push(match c {
            '\t' => ' ',
            c if c.is_control() => '\u{fffd}',
            c => c,
        });
    }
    if to < total {
        shown.push('…');
    }
    let lead = before - from + usize::from(from > 0);
    let width = inside.min(to.saturating_sub(before)).max(1);
    (shown, lead, width)
}

/// Writes one diagnostic with its source line and underline.
pub fn write_diagnostic(
    out: &mut dyn Write,
    palette: Palette,
    source: &str,
    line_text: &str,
    d: &Diagnostic,
) -> io::Result<()> {
    let p = palette;
    let head = format!("{}[{}]", d.severity.as_str(), d.code);
    writeln!(
        out,
        "{}: {}",
        p.severity(d.severity, &head),
        p.strong(&d.message)
    )?;
    if d.line == 0 {
        writeln!(out, "  {} {source}", p.frame("at"))?;
        return help(out, p, d);
    }
    let number = d.line.to_string();
    let gutter = " ".repeat(number.len());
    writeln!(
        out,
        "{gutter}{} {source}:{}:{}",
        p.frame("-->"),
        d.line,
        d.column
    )?;
    writeln!(out, "{gutter} {}", p.frame("|"))?;
    let (shown, lead, width) = window(line_text, d.span.start, d.span.end);
    writeln!(out, "{} {} {}", p.frame(&number), p.frame("|"), shown)?;
    let marks = p.severity(d.severity, &"^".repeat(width));
    let label = d
        .label
        .as_deref()
        .map(|l| format!(" {}", p.severity(d.severity, l)))
        .unwrap_or_default();
    writeln!(
        out,
        "{gutter} {} {}{marks}{label}",
        p.frame("|"),
        " ".repeat(lead)
    )?;
    help(out, p, d)
}

fn help(out: &mut dyn Write, p: Palette, d: &Diagnostic) -> io::Result<()> {
    if let Some(help) = &d.help {
        writeln!(out, "  {} {help}", p.frame("= help:"))?;
    }
    Ok(())
}

/// The numbers behind a failing reaction's balances, one row each.
pub fn write_table(
    out: &mut dyn Write,
    p: Palette,
    table: &BalanceTable,
    host: Option<&Host>,
    site_ok: Option<bool>,
) -> io::Result<()> {
    let mark = |ok: bool| if ok { p.good("✓") } else { p.bad("✗") };
    writeln!(
        out,
        "  {} {:>8} {:>8}",
        // Pad before painting: escape codes would count as width.
        p.strong(&format!("{:<14}", "balance")),
        "left",
        "right"
    )?;
    for (z, l, r) in &table.elements {
        let symbol = elements::symbol(*z);
        writeln!(
            out,
            "  {:<14} {:>8} {:>8}  {}",
            format!("mass {symbol}"),
            number::minus_text(*l),
            number::minus_text(*r),
            mark(l == r)
        )?;
    }
    let (l, r) = table.charge;
    writeln!(
        out,
        "  {:<14} {:>8} {:>8}  {}",
        "charge",
        number::minus_text(l),
        number::minus_text(r),
        mark(l == r)
    )?;
    if let (Some(ok), Some(host)) = (site_ok, host) {
        let changes: Vec<String> = table
            .sites
            .iter()
            .map(|(n, _, l, r)| {
                format!(
                    "{} {}",
                    site_name(host, *n),
                    match number::sub(*r, *l) {
                        // No change reads `+0` in this row, as it always has.
                        Ok(d) if d.is_zero() => "+0".to_string(),
                        Ok(d) => number::signed(d),
                        Err(_) => "beyond the exact range".to_string(),
                    }
                )
            })
            .collect();
        writeln!(
            out,
            "  {:<14} {:>17}  {}  net {}; host {}",
            "sites",
            "",
            mark(ok),
            changes.join(", "),
            host.ratio_text()
        )?;
    }
    Ok(())
}

impl<W: Write> Sink for HumanSink<W> {
    fn reaction(&mut self, report: &ReactionReport<'_>) -> io::Result<()> {
        if self.quiet {
            return Ok(());
        }
        if report.diagnostics.is_empty() {
            if self.verbose {
                writeln!(
                    self.out,
                    "{} {}:{}  {}",
                    self.palette.good("ok"),
                    report.source,
                    report.line,
                    report.text
                )?;
            }
            return Ok(());
        }
        for d in &report.diagnostics {
            write_diagnostic(
                &mut self.out,
                self.palette,
                report.source,
                report.line_text,
                d,
            )?;
        }
        if let Some(verdict) = &report.verdict {
            let b = verdict.balance;
            let overflowed = report
                .diagnostics
                .iter()
                .any(|d| d.code == crate::base::diagnostic::Code::Number);
            if (!b.mass || !b.charge || b.site == Some(false)) && !overflowed {
                write_table(
                    &mut self.out,
                    self.palette,
                    &verdict.table,
                    report.host.as_deref(),
                    b.site,
                )?;
            }
        }
        writeln!(self.out)
    }

    fn line_problem(
        &mut self,
        source: &str,
        line_text: &str,
        diagnostic: &Diagnostic,
    ) -> io::Result<()> {
        if self.quiet {
            return Ok(());
        }
        write_diagnostic(&mut self.out, self.palette, source, line_text, diagnostic)?;
        writeln!(self.out)
    }

    fn wants_passing(&self) -> bool {
        self.verbose && !self.quiet
    }

    fn finish(&mut self, s: &Summary) -> io::Result<()> {
        let p = self.palette;
        let plural = |n: u64, word: &str| {
            if n == 1 {
                format!("{n} {word}")
            } else {
                format!("{n} {word}s")
            }
        };
        let balanced = s.reactions - s.failed;
        let mut line = format!(
            "{} in {}: ",
            plural(s.reactions, "reaction"),
            plural(s.sources, "source")
        );
        line.push_str(&p.good(&format!("{balanced} pass")));
        if s.failed > 0 {
            line.push_str(&format!(
                ", {}",
                p.severity(Severity::Error, &format!("{} fail", s.failed))
            ));
        }
        let mut counts = Vec::new();
        if s.errors > 0 {
            counts.push(plural(s.errors, "error"));
        }
        if s.warnings > 0 {
            counts.push(plural(s.warnings, "warning"));
        }
        if !counts.is_empty() {
            line.push_str(&format!(" ({})", counts.join(", ")));
        }
        writeln!(self.out, "{line}")?;
        self.out.flush()
    }
}
