//! Reading one input: a reaction line checked as `check` checks it (the
//! one path, `file::runner::check_line`), and lines that continue on the
//! next one joined into logical lines.

use super::args::SIGIL;
use super::session::HostSlot;
use lacuna::base::diagnostic::Diagnostic;
use lacuna::check::Verdict;
use lacuna::file::reader::HostTracker;
use lacuna::file::runner::check_line;
use lacuna::notation::{ARROWS, Reaction, Span, Style, render_reaction};
use std::rc::Rc;

/// What checking one reaction line found.
#[derive(Debug)]
pub struct Analysis {
    pub reaction: Option<Reaction>,
    /// The reaction in plain notation (the LaTeX made plain, else as written).
    pub text: String,
    pub from_latex: bool,
    /// Problems, spans in the line; not yet located.
    pub diagnostics: Vec<Diagnostic>,
    pub verdict: Option<Verdict>,
    /// A host read from over the arrow and used because none was set.
    pub host_from_arrow: Option<Rc<HostSlot>>,
}

/// Reads and checks the reaction at `span` of `line`, as plain notation or
/// LaTeX, against `host` (or the host over the arrow when there is none).
pub fn analyse(line: &str, span: Span, host: Option<&Rc<HostSlot>>) -> Analysis {
    analyse_in(line, span, &HostTracker::new(host.cloned()))
}

/// `analyse` with the host in force as a file walk has it: the file
/// reader's and `check`'s own path (`file::runner::check_line`).
pub(crate) fn analyse_in(line: &str, span: Span, hosts: &HostTracker<Rc<HostSlot>>) -> Analysis {
    let checked = check_line(line, span.clone(), hosts);
    let host_from_arrow = checked.host.taken.map(|(slot, _)| slot);
    let text = if checked.from_latex {
        checked
            .reaction
            .as_ref()
            .map(|r| render_reaction(r, Style::Unicode))
            .unwrap_or_default()
    } else {
        line.get(span).unwrap_or("").trim().to_string()
    };
    Analysis {
        reaction: checked.reaction,
        text,
        from_latex: checked.from_latex,
        diagnostics: checked.diagnostics,
        verdict: checked.verdict,
        host_from_arrow,
    }
}

/// Whether a line asks for more input: it ends with `+`, an arrow or a lone
/// `\\` (a LaTeX row break `\\\\` does not count). Commands and comments never
/// continue. Open brackets do not continue a line: one typo would swallow
/// every line after it.
pub fn continues(text: &str) -> bool {
    let last = text.lines().last().unwrap_or("").trim_end();
    let first = text.trim_start();
    if first.starts_with(SIGIL) || first.starts_with('#') || last.is_empty() {
        return false;
    }
    let lone_backslash = last.ends_with('\\') && !last.ends_with("\\\\");
    let open_end = last.ends_with('+') || ARROWS.iter().any(|(arrow, _)| last.ends_with(arrow));
    lone_backslash || open_end
}

/// Splits a block of input into logical lines: a line that `continues` is
/// joined to the next with a space (a lone trailing `\` is dropped). Each
/// logical line comes with the index of its first physical line.
pub fn logical_lines(block: &str) -> Vec<(String, usize)> {
    let mut lines = Vec::new();
    let mut pending: Option<(String, usize)> = None;
    for (i, raw) in block.lines().enumerate() {
        let (mut text, first) = match pending.take() {
            Some((mut text, first)) => {
                text.push(' ');
                text.push_str(raw.trim());
                (text, first)
            }
            None => (raw.to_string(), i),
        };
        if continues(&text) {
            let trimmed = text.trim_end();
            if trimmed.ends_with('\\') && !trimmed.ends_with("\\\\") {
                text = trimmed[..trimmed.len() - 1].trim_end().to_string();
            }
            pending = Some((text, first));
        } else {
            lines.push((text, first));
        }
    }
    if let Some(p) = pending {
        lines.push(p);
    }
    lines
}
