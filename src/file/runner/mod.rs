//! Runs the checker over reaction sources and streams reports to a sink.
//!
//! In: named sources (files, stdin, inline text) and a default host. Out:
//! one `ReactionReport` per reaction and one call per problem on a
//! non-reaction line, in source order, then a `Summary`. Memory does not grow
//! with the length of a file: each line is read, checked, reported and dropped
//! (`check_reader`, in `stream.rs`), or each chunk of lines
//! (`check_reader_parallel`, in `chunked.rs`, which parses and checks a
//! file's lines on all cores and reports them in order). `line.rs` reads and
//! checks one line, `sink.rs` holds what receives the reports, `files.rs`
//! checks many files side by side.

mod chunked;
mod files;
mod line;
mod sink;
mod stream;

pub use line::{CheckedReaction, check_line};
pub use sink::{Event, OwnedReport, ReactionReport, Recording, Sink, Summary};

use crate::base::diagnostic::Diagnostic;
use crate::check::rules::RuleLevels;
use crate::host::Host;
use std::io;
use std::sync::Arc;

/// Checks reaction sources one after another, keeping per-source state.
pub struct Runner<'s> {
    default_host: Option<Arc<Host>>,
    levels: RuleLevels,
    sink: &'s mut dyn Sink,
    pub summary: Summary,
}

impl<'s> Runner<'s> {
    pub fn new(default_host: Option<Host>, sink: &'s mut dyn Sink) -> Self {
        Runner {
            default_host: default_host.map(Arc::new),
            levels: RuleLevels::default(),
            sink,
            summary: Summary::default(),
        }
    }

    /// Sets the rule levels (from `lacuna.toml` and the command line).
    pub fn with_levels(mut self, levels: RuleLevels) -> Self {
        self.levels = levels;
        self
    }

    /// Checks reactions given as text (several lines allowed), as from `--reaction`.
    pub fn check_text(&mut self, name: &str, text: &str) -> io::Result<()> {
        self.check_reader(name, text.as_bytes())
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
