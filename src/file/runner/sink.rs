//! What receives the runner's reports: the `Sink` trait, the report of one
//! reaction, the totals (`Summary`), and a `Recording` that keeps reports to
//! replay them into another sink.

use crate::base::diagnostic::{Diagnostic, Severity};
use crate::check::Verdict;
use crate::host::Host;
use crate::notation::Reaction;
use std::io;
use std::sync::Arc;

/// Everything known about one reaction line after checking it.
#[derive(Debug)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct ReactionReport<'a> {
    /// The source's name: a path, `<stdin>` or `<inline>`.
    pub source: &'a str,
    pub line: u32,
    /// The whole line as read.
    pub line_text: &'a str,
    pub label: Option<&'a str>,
    /// The reaction's own text (without label and comment).
    pub text: &'a str,
    /// The parsed reaction; `None` when it did not parse.
    pub reaction: Option<Reaction>,
    /// The checker's verdict; `None` when the reaction did not parse.
    pub verdict: Option<Verdict>,
    /// Parse and check diagnostics, located (line and column set).
    pub diagnostics: Vec<Diagnostic>,
    /// The host the reaction was checked against.
    pub host: Option<Arc<Host>>,
}

impl ReactionReport<'_> {
    /// False when a balance fails or any error was reported.
    pub fn ok(&self) -> bool {
        self.verdict.as_ref().is_some_and(Verdict::ok)
            && !self.diagnostics.iter().any(Diagnostic::is_error)
    }
}

/// Receives reports as they are produced.
pub trait Sink {
    fn reaction(&mut self, report: &ReactionReport<'_>) -> io::Result<()>;
    /// A problem on a line that is not a reaction (a host declaration, an
    /// unknown keyword, bad encoding), or not tied to a line at all (line 0).
    fn line_problem(
        &mut self,
        source: &str,
        line_text: &str,
        diagnostic: &Diagnostic,
    ) -> io::Result<()>;
    fn finish(&mut self, summary: &Summary) -> io::Result<()>;
    /// Whether reactions with no diagnostics are printed at all; when not,
    /// the engine may skip building their reports.
    fn wants_passing(&self) -> bool {
        true
    }
}

/// Totals over everything checked.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Summary {
    pub sources: u64,
    pub reactions: u64,
    pub failed: u64,
    pub errors: u64,
    pub warnings: u64,
}

impl Summary {
    /// True when nothing failed and no error was reported anywhere.
    pub fn clean(&self) -> bool {
        self.failed == 0 && self.errors == 0
    }

    pub(super) fn count(&mut self, diagnostics: &[Diagnostic]) {
        for d in diagnostics {
            match d.severity {
                Severity::Error => self.errors += 1,
                Severity::Warning => self.warnings += 1,
                Severity::Note => {}
            }
        }
    }
}

/// A reaction report that owns its data, for checking files on other threads
/// and replaying the results in a stable order.
#[derive(Debug)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct OwnedReport {
    pub source: Arc<str>,
    pub line: u32,
    pub line_text: String,
    pub label: Option<String>,
    pub text: String,
    pub reaction: Option<Reaction>,
    pub verdict: Option<Verdict>,
    pub diagnostics: Vec<Diagnostic>,
    pub host: Option<Arc<Host>>,
}

/// What a `Recording` captured, in order.
#[derive(Debug)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum Event {
    Reaction(Box<OwnedReport>),
    Problem {
        source: Arc<str>,
        line_text: String,
        diagnostic: Diagnostic,
    },
}

/// A sink that keeps what it is given, to be replayed into another sink.
#[derive(Debug, Default)]
pub struct Recording {
    pub events: Vec<Event>,
    /// Keep reactions that pass too (the target sink prints them).
    pub keep_passing: bool,
}

impl Sink for Recording {
    fn reaction(&mut self, report: &ReactionReport<'_>) -> io::Result<()> {
        if !self.keep_passing && report.diagnostics.is_empty() {
            return Ok(());
        }
        self.events.push(Event::Reaction(Box::new(OwnedReport {
            source: Arc::from(report.source),
            line: report.line,
            line_text: report.line_text.to_string(),
            label: report.label.map(str::to_string),
            text: report.text.to_string(),
            reaction: report.reaction.clone(),
            verdict: report.verdict.clone(),
            diagnostics: report.diagnostics.clone(),
            host: report.host.clone(),
        })));
        Ok(())
    }

    fn line_problem(
        &mut self,
        source: &str,
        line_text: &str,
        diagnostic: &Diagnostic,
    ) -> io::Result<()> {
        self.events.push(Event::Problem {
            source: Arc::from(source),
            line_text: line_text.to_string(),
            diagnostic: diagnostic.clone(),
        });
        Ok(())
    }

    fn finish(&mut self, _summary: &Summary) -> io::Result<()> {
        Ok(())
    }

    fn wants_passing(&self) -> bool {
        self.keep_passing
    }
}

impl Recording {
    /// Sends every recorded event to `sink`, in the order recorded.
    pub fn replay(self, sink: &mut dyn Sink) -> io::Result<()> {
        for event in self.events {
            match event {
                Event::Reaction(r) => {
                    let report = ReactionReport {
                        source: &r.source,
                        line: r.line,
                        line_text: &r.line_text,
                        label: r.label.as_deref(),
                        text: &r.text,
                        reaction: r.reaction,
                        verdict: r.verdict,
                        diagnostics: r.diagnostics,
                        host: r.host,
                    };
                    sink.reaction(&report)?;
                }
                Event::Problem {
                    source,
                    line_text,
                    diagnostic,
                } => sink.line_problem(&source, &line_text, &diagnostic)?,
            }
        }
        Ok(())
    }
}

impl Summary {
    /// Adds another run's totals to these.
    pub fn merge(&mut self, other: &Summary) {
        self.sources += other.sources;
        self.reactions += other.reactions;
        self.failed += other.failed;
        self.errors += other.errors;
        self.warnings += other.warnings;
    }
}
