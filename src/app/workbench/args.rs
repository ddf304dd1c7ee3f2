//! What a command is and how its line is read: the `CommandSpec` each entry
//! of `COMMANDS` is, the words of a command line (`Args`), why a command
//! failed, and the nearest command name for a typo.

use super::commands::COMMANDS;
use super::session::Session;
use lacuna::base::diagnostic::{Code, Diagnostic};
use lacuna::notation::Span;
use std::io::{self, Write};

/// The sigil that starts a command.
pub const SIGIL: char = '/';

/// Why a command did not complete.
#[derive(Debug)]
pub enum Failure {
    Io(io::Error),
    /// Problems with the user's input, spans in the command line.
    User(Vec<Diagnostic>),
}

impl From<io::Error> for Failure {
    fn from(e: io::Error) -> Self {
        Failure::Io(e)
    }
}

impl From<Diagnostic> for Failure {
    fn from(d: Diagnostic) -> Self {
        Failure::User(vec![d])
    }
}

impl From<Vec<Diagnostic>> for Failure {
    fn from(d: Vec<Diagnostic>) -> Self {
        Failure::User(d)
    }
}

/// What kind of arguments a command takes, for completion and hints.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ArgKind {
    None,
    /// A host specification (element symbols).
    Host,
    /// Reaction numbers or labels.
    Entries,
    /// A typeset form, then reaction numbers or labels.
    FormThenEntries,
    /// A file path.
    Path,
    /// A command name.
    Command,
}

/// A command's handler.
pub type Handler = fn(&mut Session, &Args<'_>, &mut dyn Write) -> Result<(), Failure>;

/// One command of the workbench.
pub struct CommandSpec {
    pub name: &'static str,
    pub aliases: &'static [&'static str],
    /// One line for the command list.
    pub summary: &'static str,
    /// The arguments, e.g. `[FORM] [WHICH...]`.
    pub usage: &'static str,
    /// A few lines for `/help NAME`.
    pub details: &'static str,
    pub arguments: ArgKind,
    pub run: Handler,
}

impl CommandSpec {
    /// Whether `word` (without the sigil) names this command.
    pub fn answers_to(&self, word: &str) -> bool {
        self.name == word || self.aliases.contains(&word)
    }
}

/// Finds a command by name or alias.
pub fn find_command(word: &str) -> Option<&'static CommandSpec> {
    COMMANDS.iter().find(|c| c.answers_to(word))
}

/// A command line split into words, with byte spans into the line.
#[derive(Debug)]
pub struct Args<'a> {
    pub line: &'a str,
    /// The command word, sigil included.
    pub command: Span,
    /// The words after the command.
    pub words: Vec<(&'a str, Span)>,
    /// Everything after the command word, trimmed.
    pub rest: Span,
}

impl<'a> Args<'a> {
    pub(super) fn parse(line: &'a str) -> Args<'a> {
        let mut words = Vec::new();
        let mut start = None;
        for (i, c) in line
            .char_indices()
            .chain(std::iter::once((line.len(), ' ')))
        {
            match (c.is_whitespace(), start) {
                (true, Some(s)) => {
                    words.push((&line[s..i], s..i));
                    start = None;
                }
                (false, None) => start = Some(i),
                _ => {}
            }
        }
        let command = words.first().map_or(0..0, |(_, s)| s.clone());
        let after = &line[command.end..];
        let lead = after.len() - after.trim_start().len();
        let rest = command.end + lead..command.end + lead + after.trim().len();
        Args {
            line,
            command,
            words: words.into_iter().skip(1).collect(),
            rest,
        }
    }

    pub fn rest_text(&self) -> &'a str {
        &self.line[self.rest.clone()]
    }

    /// A usage error pointing at `span` (the command word when empty).
    pub fn usage_error(&self, span: Option<Span>, message: impl Into<String>) -> Diagnostic {
        Diagnostic::new(
            Code::WorkbenchCommand,
            span.unwrap_or(self.command.clone()),
            message,
        )
    }
}

/// The command name nearest to a mistyped one (one it starts, else one at
/// most two edits away), for "did you mean".
pub(crate) fn closest_command(word: &str) -> Option<&'static str> {
    if word.is_empty() {
        return None;
    }
    let names = || {
        COMMANDS
            .iter()
            .flat_map(|c| std::iter::once(c.name).chain(c.aliases.iter().copied()))
    };
    names()
        .find(|name| name.starts_with(word) && word.len() >= 2)
        .or_else(|| {
            names()
                .map(|name| (edit_distance(word, name), name))
                .filter(|(d, _)| *d <= 2)
                .min_by_key(|(d, _)| *d)
                .map(|(_, name)| name)
        })
        .and_then(|name| find_command(name).map(|c| c.name))
}

/// Levenshtein distance, counting an exchange of two neighbours as one edit.
pub(crate) fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut rows = vec![vec![0usize; b.len() + 1]; a.len() + 1];
    for (i, row) in rows.iter_mut().enumerate() {
        row[0] = i;
    }
    for (j, cell) in rows[0].iter_mut().enumerate() {
        *cell = j;
    }
    for i in 1..=a.len() {
        for j in 1..=b.len() {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            let mut best = (rows[i - 1][j] + 1)
                .min(rows[i][j - 1] + 1)
                .min(rows[i - 1][j - 1] + cost);
            if i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1] {
                best = best.min(rows[i - 2][j - 2] + 1);
            }
            rows[i][j] = best;
        }
    }
    rows[a.len()][b.len()]
}
