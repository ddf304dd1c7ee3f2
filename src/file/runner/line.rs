//! One line read and checked: the work that needs no cross-line state
//! (classifying, parsing, the balances, the facts the cross-line rules
//! need), shared by the line-by-line and the chunked runs.

use crate::balance::hint::check_with_hint;
use crate::base::diagnostic::{Code, Diagnostic};
use crate::check::Verdict;
use crate::check::rules::ReactionFacts;
use crate::file::reader::{HostHandle, HostTracker, Line, ReactionHost, classify, read_reaction};
use crate::host::Host;
use crate::notation::{Reaction, Span};
use std::sync::Arc;

/// A line after the work that needs no cross-line state.
pub(super) enum Prepared {
    /// Blank or comment line.
    Skip,
    /// A model line; the span of the reaction name it refers to, if any (rule L504).
    Model(Option<Span>),
    /// A `host` line; its diagnostics are not yet located.
    Host(Result<Arc<Host>, Vec<Diagnostic>>),
    /// Not UTF-8 (the diagnostic is located).
    Encoding(Diagnostic),
    Reaction(Box<PreparedReaction>),
}

/// A reaction line parsed and checked, before the cross-line rules.
pub(super) struct PreparedReaction {
    pub(super) label: Option<Span>,
    pub(super) reaction: Span,
    pub(super) checked: CheckedReaction,
    /// What the cross-line rules need, when the reaction parsed.
    pub(super) facts: Option<ReactionFacts>,
}

/// A reaction line read and checked against the host in force: the one
/// path from a reaction's text to its verdict, for `check`, the model
/// reader, `typeset` and the workbench.
#[derive(Debug)]
#[non_exhaustive]
pub struct CheckedReaction<H = Arc<Host>> {
    /// The reaction, when it parsed; its spans are byte ranges of the line.
    pub reaction: Option<Reaction>,
    /// Whether it was read from LaTeX.
    pub from_latex: bool,
    /// What the text over the arrow did to the host (`HostTracker::host_for`
    /// gives the host it was checked against).
    pub host: ReactionHost<H>,
    /// The checker's verdict; `None` when the reaction did not parse.
    pub verdict: Option<Verdict>,
    /// Reading and checking problems, spans in the line, not yet located.
    pub diagnostics: Vec<Diagnostic>,
}

impl<H> CheckedReaction<H> {
    /// False when a balance fails or any error was reported.
    pub fn ok(&self) -> bool {
        self.verdict.as_ref().is_some_and(Verdict::ok)
            && !self.diagnostics.iter().any(Diagnostic::is_error)
    }
}

/// Reads the reaction at `span` of `line` (plain, Unicode or LaTeX) and
/// checks it against the host `hosts` has in force (or the one over its
/// arrow when none is). The tracker is not changed: call
/// `hosts.follow(&checked.host)` to keep a host taken from over the arrow.
pub fn check_line<H: HostHandle>(
    line: &str,
    span: Span,
    hosts: &HostTracker<H>,
) -> CheckedReaction<H> {
    let read = read_reaction(line, span);
    let chosen = hosts.for_reaction(&read);
    let from_latex = read.from_latex();
    let mut diagnostics = read.diagnostics;
    diagnostics.extend(chosen.warning.iter().cloned());
    if let (Some((_, spec)), Some((_, span))) = (&chosen.taken, &read.over_arrow) {
        diagnostics.push(
            Diagnostic::new(
                Code::HostFromArrow,
                span.clone(),
                format!("no host was set: the reaction is checked against {spec}, written over its arrow"),
            )
            .with_help("a `host` line or --host makes the host explicit"),
        );
    }
    let verdict = read
        .reaction
        .as_ref()
        .map(|r| check_with_hint(r, hosts.host_for(&chosen).map(H::host)));
    if let Some(v) = &verdict {
        for d in &v.diagnostics {
            if d.code == Code::NoHost {
                if let Some(line) = hosts.broken_line() {
                    diagnostics.push(
                        Diagnostic::new(
                            Code::NoHost,
                            d.span.clone(),
                            format!(
                                "no usable host: the host declaration on line {line} has errors"
                            ),
                        )
                        .with_help(
                            "fix that line; sites and effective charges are checked against it",
                        ),
                    );
                    continue;
                }
            }
            diagnostics.push(d.clone());
        }
    }
    CheckedReaction {
        reaction: read.reaction,
        from_latex,
        host: chosen,
        verdict,
        diagnostics,
    }
}

/// The reaction name a `K`, `dH` or `dS` model line refers to.
fn model_reference(text: &str, keyword: Span, rest: Span) -> Option<Span> {
    if !matches!(text.get(keyword), Some("K" | "dH" | "dS")) {
        return None;
    }
    let after = text.get(rest.clone())?;
    let trimmed = after.trim_start();
    let start = rest.start + (after.len() - trimmed.len());
    let len = trimmed
        .find(|c: char| c.is_whitespace() || c == '=')
        .unwrap_or(trimmed.len());
    (len > 0).then(|| start..start + len)
}

/// A line without its line ending.
pub(super) fn line_content(buffer: &[u8]) -> &[u8] {
    let bytes = buffer.strip_suffix(b"\n").unwrap_or(buffer);
    bytes.strip_suffix(b"\r").unwrap_or(bytes)
}

/// Classifies, parses and checks one line against the host in force.
pub(super) fn prepare_line(number: u32, bytes: &[u8], hosts: &HostTracker) -> Prepared {
    let text = match std::str::from_utf8(bytes) {
        Ok(text) => text,
        Err(e) => {
            let valid = String::from_utf8_lossy(bytes.get(..e.valid_up_to()).unwrap_or_default())
                .into_owned();
            return Prepared::Encoding(
                Diagnostic::new(
                    Code::Encoding,
                    valid.len()..valid.len() + 1,
                    format!(
                        "line {number} is not valid UTF-8 (byte {} of the line)",
                        e.valid_up_to() + 1
                    ),
                )
                .with_help("save the file as UTF-8; the rest of the file is still checked")
                .locate(number, &valid),
            );
        }
    };
    match classify(text) {
        Line::Blank | Line::Comment => Prepared::Skip,
        Line::Model { keyword, rest } => Prepared::Model(model_reference(text, keyword, rest)),
        Line::Host(span) => Prepared::Host(Host::parse(text, span).map(Arc::new)),
        Line::Reaction { label, reaction } => {
            let checked = check_line(text, reaction.clone(), hosts);
            let facts = checked.reaction.as_ref().map(|r| {
                let named = label
                    .clone()
                    .map(|l| (text.get(l.clone()).unwrap_or(""), l));
                ReactionFacts::of(named, r, hosts.host_for(&checked.host).map(|h| &**h))
            });
            Prepared::Reaction(Box::new(PreparedReaction {
                label,
                reaction,
                checked,
                facts,
            }))
        }
    }
}

/// Keeps what a prepared line changed about the host in force.
pub(super) fn follow(hosts: &mut HostTracker, number: u32, prepared: &Prepared) {
    match prepared {
        Prepared::Host(result) => hosts.declare(number, result),
        Prepared::Reaction(r) => hosts.follow(&r.checked.host),
        _ => {}
    }
}
