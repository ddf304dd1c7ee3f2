//! The JSON report. Its keys are a contract other tools read: `reactions`
//! (source, line, text, ok, balance, diagnostics) and `summary`; problems
//! on lines that are not reactions go to a top-level `diagnostics` array.
//! Reactions are written as they arrive, so memory stays flat.

use crate::base::diagnostic::Diagnostic;
use crate::file::runner::{ReactionReport, Sink, Summary};
use serde::Serialize;
use std::io::{self, Write};

/// One diagnostic as every JSON output of Lacuna writes it.
#[derive(Debug, Serialize)]
pub struct JsonDiagnostic<'a> {
    severity: &'static str,
    code: &'static str,
    message: &'a str,
    line: u32,
    column: u32,
    #[serde(skip_serializing_if = "Option::is_none")]
    help: Option<&'a str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    source: Option<&'a str>,
}

impl<'a> JsonDiagnostic<'a> {
    /// A diagnostic whose source is clear from where it is written.
    pub fn from(d: &'a Diagnostic) -> Self {
        JsonDiagnostic::located(d, None)
    }

    /// A diagnostic that names its source (problems outside reactions).
    pub fn located(d: &'a Diagnostic, source: Option<&'a str>) -> Self {
        JsonDiagnostic {
            severity: d.severity.as_str(),
            code: d.code.as_str(),
            message: &d.message,
            line: d.line,
            column: d.column,
            help: d.help.as_deref(),
            source,
        }
    }
}

#[derive(Serialize)]
struct JsonBalance {
    mass: bool,
    charge: bool,
    site: Option<bool>,
}

#[derive(Serialize)]
struct JsonReaction<'a> {
    source: &'a str,
    line: u32,
    #[serde(skip_serializing_if = "Option::is_none")]
    label: Option<&'a str>,
    text: &'a str,
    ok: bool,
    balance: Option<JsonBalance>,
    diagnostics: Vec<JsonDiagnostic<'a>>,
}

pub struct JsonSink<W: Write> {
    out: W,
    reactions: usize,
    problems: Vec<serde_json::Value>,
}

impl<W: Write> JsonSink<W> {
    pub fn new(out: W) -> Self {
        JsonSink {
            out,
            reactions: 0,
            problems: Vec::new(),
        }
    }
}

/// Keeps the kind of a failed write (a closed pipe stays a closed pipe).
fn to_io(e: serde_json::Error) -> io::Error {
    io::Error::from(e)
}

impl<W: Write> Sink for JsonSink<W> {
    fn reaction(&mut self, report: &ReactionReport<'_>) -> io::Result<()> {
        self.out.write_all(if self.reactions == 0 {
            b"{\"reactions\": [\n  "
        } else {
            b",\n  "
        })?;
        self.reactions += 1;
        let record = JsonReaction {
            source: report.source,
            line: report.line,
            label: report.label,
            text: report.text,
            ok: report.ok(),
            balance: report.verdict.as_ref().map(|v| JsonBalance {
                mass: v.balance.mass,
                charge: v.balance.charge,
                site: v.balance.site,
            }),
            diagnostics: report
                .diagnostics
                .iter()
                .map(JsonDiagnostic::from)
                .collect(),
        };
        serde_json::to_writer(&mut self.out, &record).map_err(to_io)
    }

    fn line_problem(
        &mut self,
        source: &str,
        _line_text: &str,
        diagnostic: &Diagnostic,
    ) -> io::Result<()> {
        let value = serde_json::to_value(JsonDiagnostic::located(diagnostic, Some(source)))
            .map_err(to_io)?;
        self.problems.push(value);
        Ok(())
    }

    fn finish(&mut self, summary: &Summary) -> io::Result<()> {
        if self.reactions == 0 {
            self.out.write_all(b"{\"reactions\": [")?;
        } else {
            self.out.write_all(b"\n")?;
        }
        self.out.write_all(b"],\n\"diagnostics\": ")?;
        serde_json::to_writer(&mut self.out, &self.problems).map_err(to_io)?;
        let summary = serde_json::json!({
            "reactions": summary.reactions,
            "failed": summary.failed,
            "errors": summary.errors,
            "warnings": summary.warnings,
            "sources": summary.sources,
        });
        self.out.write_all(b",\n\"summary\": ")?;
        serde_json::to_writer(&mut self.out, &summary).map_err(to_io)?;
        self.out.write_all(b"}\n")?;
        self.out.flush()
    }
}
