//! One line per diagnostic, `file:line:column: severity: message [code]`,
//! the form editors and `grep`-style tooling understand.

use crate::base::diagnostic::Diagnostic;
use crate::file::runner::{ReactionReport, Sink, Summary};
use std::io::{self, Write};

pub struct GnuSink<W: Write> {
    out: W,
}

impl<W: Write> GnuSink<W> {
    pub fn new(out: W) -> Self {
        GnuSink { out }
    }

    fn write(&mut self, source: &str, d: &Diagnostic) -> io::Result<()> {
        write!(
            self.out,
            "{source}:{}:{}: {}: {} [{}]",
            d.line,
            d.column,
            d.severity.as_str(),
            d.message,
            d.code
        )?;
        if let Some(help) = &d.help {
            write!(self.out, " (help: {help})")?;
        }
        writeln!(self.out)
    }
}

impl<W: Write> Sink for GnuSink<W> {
    fn reaction(&mut self, report: &ReactionReport<'_>) -> io::Result<()> {
        for d in &report.diagnostics {
            self.write(report.source, d)?;
        }
        Ok(())
    }

    fn line_problem(
        &mut self,
        source: &str,
        _line_text: &str,
        diagnostic: &Diagnostic,
    ) -> io::Result<()> {
        self.write(source, diagnostic)
    }

    fn wants_passing(&self) -> bool {
        false
    }

    fn finish(&mut self, _summary: &Summary) -> io::Result<()> {
        self.out.flush()
    }
}
