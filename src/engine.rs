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
use crate::lint::{FileLints, Levels};
use crate::notation::latex_input::{looks_like_latex, normalise};
use crate::notation::{Reaction, parse_reaction};
use std::io::{self, BufRead};
use std::sync::Arc;

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
    default_host: Option<Arc<Host>>,
    levels: Levels,
    sink: &'s mut dyn Sink,
    pub summary: Summary,
}

/// State that lives for one source: the current host and the cross-line rules.
struct SourceState {
    host: Option<Arc<Host>>,
    lints: FileLints,
    /// The line of a `host` declaration that failed, so later reactions say why they have no host.
    broken_host_line: Option<u32>,
}

impl<'s> Checker<'s> {
    pub fn new(default_host: Option<Host>, sink: &'s mut dyn Sink) -> Self {
        Checker {
            default_host: default_host.map(Arc::new),
            levels: Levels::default(),
            sink,
            summary: Summary::default(),
        }
    }

    /// Sets the rule levels (from `lacuna.toml` and the command line).
    pub fn with_levels(mut self, levels: Levels) -> Self {
        self.levels = levels;
        self
    }

    /// Checks a reaction file (or stdin) read line by line.
    pub fn check_reader(&mut self, name: &str, mut reader: impl BufRead) -> io::Result<()> {
        self.summary.sources += 1;
        let mut state = SourceState {
            host: self.default_host.clone(),
            lints: FileLints::default(),
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
        // Model lines may name reactions written further down, so names are
        // resolved once the whole source is read.
        for (line_text, diagnostic) in state.lints.unresolved_references() {
            let mut diagnostics = vec![diagnostic];
            self.levels.apply(&mut diagnostics, &line_text);
            for d in diagnostics {
                self.summary.count(std::slice::from_ref(&d));
                self.sink.line_problem(name, &line_text, &d)?;
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
                        state.host = Some(Arc::new(host));
                        state.broken_host_line = None;
                    }
                    Err(diagnostics) => {
                        state.host = None;
                        state.broken_host_line = Some(number);
                        let mut diagnostics: Vec<Diagnostic> = diagnostics
                            .into_iter()
                            .map(|d| d.locate(number, text))
                            .collect();
                        self.levels.apply(&mut diagnostics, text);
                        for d in diagnostics {
                            self.summary.count(std::slice::from_ref(&d));
                            self.sink.line_problem(name, text, &d)?;
                        }
                    }
                }
                Ok(())
            }
            Line::Model { keyword, rest } => {
                // Model lines are read by the equilibrium commands; `check`
                // only notes the reactions they name (rule L504).
                if matches!(&text[keyword], "K" | "dH" | "dS") {
                    let after = &text[rest.clone()];
                    let lead = after.len() - after.trim_start().len();
                    let name_len = after
                        .trim_start()
                        .find(|c: char| c.is_whitespace() || c == '=')
                        .unwrap_or(after.trim_start().len());
                    let start = rest.start + lead;
                    if name_len > 0 {
                        state.lints.reference(number, text, start..start + name_len);
                    }
                }
                Ok(())
            }
            Line::Reaction { label, reaction } => {
                // LaTeX pasted from a manuscript is rewritten as plain notation
                // first, unless the parser reads it as it is.
                let (mut parsed, mut diagnostics) = parse_reaction(text, reaction.clone());
                let mut latex = None;
                let latex_source = &text[reaction.clone()];
                if parsed.is_none() && looks_like_latex(latex_source) {
                    match normalise(latex_source) {
                        Ok(n) => {
                            let (p, d) = parse_reaction(&n.text, 0..n.text.len());
                            parsed = p;
                            diagnostics = d;
                            diagnostics.extend(n.notes.iter().cloned());
                            latex = Some(n);
                        }
                        Err(d) => diagnostics = vec![relocate_by(d, reaction.start)],
                    }
                }
                let verdict = parsed
                    .as_ref()
                    .map(|r| check_reaction(r, state.host.as_deref()));
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
                if let Some(r) = &parsed {
                    let named = label.clone().map(|l| (&text[l.clone()], l));
                    diagnostics.extend(state.lints.reaction(
                        number,
                        named,
                        r,
                        state.host.as_deref(),
                    ));
                }
                if let Some(n) = &latex {
                    diagnostics = diagnostics
                        .into_iter()
                        .map(|d| {
                            if d.code == Code::DuplicateLabel {
                                d
                            } else {
                                n.relocate(d, reaction.start)
                            }
                        })
                        .collect();
                }
                let mut diagnostics: Vec<Diagnostic> = diagnostics
                    .into_iter()
                    .map(|d| d.locate(number, text))
                    .collect();
                self.levels.apply(&mut diagnostics, text);
                let report = ReactionReport {
                    source: name,
                    line: number,
                    line_text: text,
                    label: label.map(|l| &text[l]),
                    text: &text[reaction],
                    reaction: parsed,
                    verdict,
                    diagnostics,
                    host: state.host.clone(),
                };
                self.summary.reactions += 1;
                if !report.ok() {
                    self.summary.failed += 1;
                }
                self.summary.count(&report.diagnostics);
                if report.diagnostics.is_empty() && !self.sink.wants_passing() {
                    return Ok(());
                }
                self.sink.reaction(&report)
            }
        }
    }

    /// Reports a problem that belongs to no line (an unreadable file).
    pub fn report_problem(&mut self, name: &str, diagnostic: Diagnostic) -> io::Result<()> {
        self.summary.count(std::slice::from_ref(&diagnostic));
        self.sink.line_problem(name, "", &diagnostic)
    }

    /// Adds totals of sources checked elsewhere (on other threads).
    pub fn absorb(&mut self, summary: &Summary) {
        self.summary.merge(summary);
    }

    /// The sink, for replaying recordings made on other threads.
    pub fn sink(&mut self) -> &mut dyn Sink {
        self.sink
    }

    /// Ends the run: hands the summary to the sink and returns it.
    pub fn finish(self) -> io::Result<Summary> {
        self.sink.finish(&self.summary)?;
        Ok(self.summary)
    }
}

fn relocate_by(mut d: Diagnostic, offset: usize) -> Diagnostic {
    d.span = d.span.start + offset..d.span.end + offset;
    d
}

/// A reaction report that owns its data, for checking files on other threads
/// and replaying the results in a stable order.
#[derive(Debug)]
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
