//! Runs the checker over reaction sources and streams reports to a sink.
//!
//! In: named sources (files, stdin, inline text) and a default host. Out:
//! one `ReactionReport` per reaction and one call per problem on a
//! non-reaction line, in source order, then a `Summary`. Memory does not grow
//! with the length of a file: each line is read, checked, reported and dropped.

use crate::check::{Verdict, check_reaction};
use crate::diagnostic::{Code, Diagnostic, Severity};
use crate::document::{Line, classify};
use crate::host::Host;
use crate::notation::{Reaction, parse_reaction};
use std::io::{self, BufRead};

/// Everything known about one reaction line after checking it.
#[derive(Debug)]
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
    pub host: Option<&'a Host>,
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
}

/// Totals over everything checked.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
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

    fn count(&mut self, diagnostics: &[Diagnostic]) {
        for d in diagnostics {
            match d.severity {
                Severity::Error => self.errors += 1,
                Severity::Warning => self.warnings += 1,
                Severity::Note => {}
            }
        }
    }
}

/// Checks reaction sources one after another, keeping per-source state.
pub struct Checker<'s> {
    default_host: Option<Host>,
    sink: &'s mut dyn Sink,
    pub summary: Summary,
}

/// State that lives for one source: the current host.
struct SourceState {
    host: Option<Host>,
    /// The line of a `host` declaration that failed, so later reactions say why they have no host.
    broken_host_line: Option<u32>,
}

impl<'s> Checker<'s> {
    pub fn new(default_host: Option<Host>, sink: &'s mut dyn Sink) -> Self {
        Checker {
            default_host,
            sink,
            summary: Summary::default(),
        }
    }

    /// Checks a reaction file (or stdin) read line by line.
    pub fn check_reader(&mut self, name: &str, mut reader: impl BufRead) -> io::Result<()> {
        self.summary.sources += 1;
        let mut state = SourceState {
            host: self.default_host.clone(),
            broken_host_line: None,
        };
        let mut buffer = Vec::with_capacity(256);
        let mut number: u32 = 0;
        loop {
            buffer.clear();
            if reader.read_until(b'\n', &mut buffer)? == 0 {
                break;
            }
            number = number.saturating_add(1);
            let bytes = buffer.strip_suffix(b"\n").unwrap_or(&buffer);
            let bytes = bytes.strip_suffix(b"\r").unwrap_or(bytes);
            match std::str::from_utf8(bytes) {
                Ok(text) => self.check_line(name, number, text, &mut state)?,
                Err(e) => {
                    let valid = String::from_utf8_lossy(&bytes[..e.valid_up_to()]).into_owned();
                    let shown = String::from_utf8_lossy(bytes).into_owned();
                    let diagnostic = Diagnostic::new(
                        Code::Encoding,
                        valid.len()..valid.len() + 1,
                        format!(
                            "line {number} is not valid UTF-8 (byte {} of the line)",
                            e.valid_up_to() + 1
                        ),
                    )
                    .with_help("save the file as UTF-8; the rest of the file is still checked")
                    .locate(number, &valid);
                    self.summary.count(std::slice::from_ref(&diagnostic));
                    self.sink.line_problem(name, &shown, &diagnostic)?;
                }
            }
        }
        Ok(())
    }

    /// Checks reactions given as text (several lines allowed), as from `--reaction`.
    pub fn check_text(&mut self, name: &str, text: &str) -> io::Result<()> {
        self.check_reader(name, text.as_bytes())
    }

    fn check_line(
        &mut self,
        name: &str,
        number: u32,
        text: &str,
        state: &mut SourceState,
    ) -> io::Result<()> {
        match classify(text) {
            Line::Blank | Line::Comment => Ok(()),
            Line::Host(span) => {
                match Host::parse(text, span) {
                    Ok(host) => {
                        state.host = Some(host);
                        state.broken_host_line = None;
                    }
                    Err(diagnostics) => {
                        state.host = None;
                        state.broken_host_line = Some(number);
                        for d in diagnostics {
                            let d = d.locate(number, text);
                            self.summary.count(std::slice::from_ref(&d));
                            self.sink.line_problem(name, text, &d)?;
                        }
                    }
                }
                Ok(())
            }
            Line::Model { keyword, .. } => {
                // Model lines are read by the equilibrium commands; `check` only
                // needs to know they are not reactions.
                let _ = keyword;
                Ok(())
            }
            Line::Reaction { label, reaction } => {
                let (parsed, mut diagnostics) = parse_reaction(text, reaction.clone());
                let verdict = parsed
                    .as_ref()
                    .map(|r| check_reaction(r, state.host.as_ref()));
                if let Some(v) = &verdict {
                    for d in &v.diagnostics {
                        if d.code == Code::NoHost {
                            if let Some(line) = state.broken_host_line {
                                diagnostics.push(
                                    Diagnostic::new(Code::NoHost, d.span.clone(), format!("no usable host: the host declaration on line {line} has errors"))
                                        .with_help("fix that line; sites and effective charges are checked against it"),
                                );
                                continue;
                            }
                        }
                        diagnostics.push(d.clone());
                    }
                }
                let diagnostics: Vec<Diagnostic> = diagnostics
                    .into_iter()
                    .map(|d| d.locate(number, text))
                    .collect();
                let report = ReactionReport {
                    source: name,
                    line: number,
                    line_text: text,
                    label: label.map(|l| &text[l]),
                    text: &text[reaction],
                    reaction: parsed,
                    verdict,
                    diagnostics,
                    host: state.host.as_ref(),
                };
                self.summary.reactions += 1;
                if !report.ok() {
                    self.summary.failed += 1;
                }
                self.summary.count(&report.diagnostics);
                self.sink.reaction(&report)
            }
        }
    }

    /// Reports a problem that belongs to no line (an unreadable file).
    pub fn report_problem(&mut self, name: &str, diagnostic: Diagnostic) -> io::Result<()> {
        self.summary.count(std::slice::from_ref(&diagnostic));
        self.sink.line_problem(name, "", &diagnostic)
    }

    /// Ends the run: hands the summary to the sink and returns it.
    pub fn finish(self) -> io::Result<Summary> {
        self.sink.finish(&self.summary)?;
        Ok(self.summary)
    }
}
