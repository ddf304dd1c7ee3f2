//! The line-by-line run: each line of a source read, checked, reported
//! and dropped, so interactive input streams; and the part of every line's
//! work that depends on the lines before it (the cross-line rules, rule
//! levels, totals, the sink), which the chunked run shares.

use super::Runner;
use super::line::{
    CheckedReaction, Prepared, PreparedReaction, follow, line_content, prepare_line,
};
use super::sink::ReactionReport;
use crate::base::diagnostic::Diagnostic;
use crate::check::Verdict;
use crate::check::rules::FileLints;
use crate::file::reader::HostTracker;
use crate::host::Host;
use crate::notation::Reaction;
use std::io::{self, BufRead};
use std::sync::Arc;

/// State that lives for one source: the host in force and the cross-line rules.
pub(super) struct SourceState {
    pub(super) hosts: HostTracker,
    pub(super) lints: FileLints,
    /// What reported lines leave behind, to be dropped later (elsewhere).
    pub(super) leftovers: Vec<Leftover>,
}

/// The owned parts of a reaction report after the sink has seen it.
pub(super) type Leftover = (Option<Reaction>, Option<Verdict>, Vec<Diagnostic>);

impl SourceState {
    pub(super) fn new(default_host: Option<Arc<Host>>) -> SourceState {
        SourceState {
            hosts: HostTracker::new(default_host),
            lints: FileLints::default(),
            leftovers: Vec::new(),
        }
    }
}

impl Runner<'_> {
    /// Checks a reaction file (or stdin) read line by line; each line is
    /// reported as soon as it is read, so interactive input streams.
    pub fn check_reader(&mut self, name: &str, mut reader: impl BufRead) -> io::Result<()> {
        self.summary.sources += 1;
        let mut state = SourceState::new(self.default_host.clone());
        let mut buffer = Vec::with_capacity(256);
        let mut number: u32 = 0;
        loop {
            buffer.clear();
            if reader.read_until(b'\n', &mut buffer)? == 0 {
                break;
            }
            number = number.saturating_add(1);
            let bytes = line_content(&buffer);
            let prepared = prepare_line(number, bytes, &state.hosts);
            follow(&mut state.hosts, number, &prepared);
            self.finish_line(name, number, bytes, prepared, &mut state)?;
            state.leftovers.clear();
        }
        self.finish_source(name, &mut state)
    }

    /// What can only be said once a whole source is read: model lines that
    /// name no reaction of the file.
    pub(super) fn finish_source(&mut self, name: &str, state: &mut SourceState) -> io::Result<()> {
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

    /// The part of a line's work that depends on what came before: the
    /// cross-line rules, rule levels, totals and the sink.
    pub(super) fn finish_line(
        &mut self,
        name: &str,
        number: u32,
        bytes: &[u8],
        prepared: Prepared,
        state: &mut SourceState,
    ) -> io::Result<()> {
        match prepared {
            Prepared::Skip | Prepared::Host(Ok(_)) => Ok(()),
            Prepared::Model(reference) => {
                // Model lines may name reactions written further down, so
                // names are resolved when the whole source is read.
                if let Some(span) = reference {
                    let text = std::str::from_utf8(bytes).unwrap_or_default();
                    state.lints.reference(number, text, span);
                }
                Ok(())
            }
            Prepared::Encoding(diagnostic) => {
                let shown = String::from_utf8_lossy(bytes);
                self.summary.count(std::slice::from_ref(&diagnostic));
                self.sink.line_problem(name, &shown, &diagnostic)
            }
            Prepared::Host(Err(diagnostics)) => {
                let text = std::str::from_utf8(bytes).unwrap_or_default();
                let mut diagnostics: Vec<Diagnostic> = diagnostics
                    .into_iter()
                    .map(|d| d.locate(number, text))
                    .collect();
                self.levels.apply(&mut diagnostics, text);
                for d in diagnostics {
                    self.summary.count(std::slice::from_ref(&d));
                    self.sink.line_problem(name, text, &d)?;
                }
                Ok(())
            }
            Prepared::Reaction(prepared) => {
                let text = std::str::from_utf8(bytes).unwrap_or_default();
                let PreparedReaction {
                    label,
                    reaction,
                    checked,
                    facts,
                } = *prepared;
                let CheckedReaction {
                    reaction: parsed,
                    host: chosen,
                    verdict,
                    mut diagnostics,
                    ..
                } = checked;
                // The host in force was updated for this line already.
                let host = chosen
                    .taken
                    .map(|(host, _)| host)
                    .or_else(|| state.hosts.host().cloned());
                if let Some(facts) = facts {
                    let name = label.clone().and_then(|l| text.get(l));
                    diagnostics.extend(state.lints.apply(number, name, facts));
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
                    label: label.and_then(|l| text.get(l)),
                    text: text.get(reaction).unwrap_or(""),
                    reaction: parsed,
                    verdict,
                    diagnostics,
                    host,
                };
                self.summary.reactions += 1;
                if !report.ok() {
                    self.summary.failed += 1;
                }
                self.summary.count(&report.diagnostics);
                if !report.diagnostics.is_empty() || self.sink.wants_passing() {
                    self.sink.reaction(&report)?;
                }
                state
                    .leftovers
                    .push((report.reaction, report.verdict, report.diagnostics));
                Ok(())
            }
        }
    }
}
