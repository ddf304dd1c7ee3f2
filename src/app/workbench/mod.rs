//! The interactive workbench: a session of reactions checked as they are
//! typed, kept, named, saved and typeset.
//!
//! In: lines of input — a reaction (plain notation or LaTeX), a reaction-file
//! line (`label: reaction`, `host ZrO2`, `# comment`) or a command starting
//! with `/`. Out: text written to a `Write` (verdicts, diagnostics as `check`
//! prints them, listings), and the session's state. Nothing here touches the
//! terminal: `driver` runs the line editor or reads a script, `helper` gives
//! the editor completion, hints and colour.
//!
//! Commands live in one table, `COMMANDS`: one entry per command with its
//! name, aliases, one-line help, usage and handler. A command added by another
//! module is one more entry there; `chemistry` holds the handlers that are
//! thin layers over the balancer, dopants, laws and Brouwer regimes.
//! Documentation: grammar/repl.md.

mod chemistry;
mod commands;
pub mod driver;
pub mod helper;
mod store;

pub use commands::COMMANDS;

use crate::base::diagnostic::{Code, Diagnostic, Severity};
use crate::check::Verdict;
use crate::file::reader::{self, HostHandle, HostTracker, Line};
use crate::file::runner::check_line;
use crate::host::Host;
use crate::notation::{
    ARROWS, Entity, MarkStyle, Reaction, Span, Style, render_reaction, render_term,
};
use crate::report::Palette;
use crate::report::human::{write_diagnostic, write_table};
use std::io::{self, Write};
use std::path::PathBuf;
use std::rc::Rc;
use std::time::SystemTime;

/// The sigil that starts a command.
pub const SIGIL: char = '/';

/// Finds a balanced form of a reaction, keeping the coefficients the user
/// wrote. `None` when there is none.
pub type BalanceHook = fn(&Reaction, Option<&Host>) -> Option<Reaction>;

/// The exact balancer offers the balanced form of a reaction that does not balance.
const BALANCER: Option<BalanceHook> = Some(crate::balance::balanced_form);

/// A host the session knows: its specification as written and the parsed host.
#[derive(Debug, Clone, PartialEq)]
pub struct HostSlot {
    pub spec: String,
    pub host: Host,
    /// The `host` line to write when saving (the file's own line when loaded).
    pub line: String,
}

impl HostSlot {
    fn new(spec: &str, host: Host) -> Rc<HostSlot> {
        Rc::new(HostSlot {
            spec: spec.trim().to_string(),
            line: format!("host {}", spec.trim()),
            host,
        })
    }
}

impl HostHandle for Rc<HostSlot> {
    fn host(&self) -> &Host {
        &self.host
    }

    fn from_arrow(host: Host, over: &str) -> Self {
        HostSlot::new(over, host)
    }
}

/// One reaction of the session.
#[derive(Debug, Clone)]
pub struct Entry {
    pub label: Option<String>,
    /// The reaction as it is saved: the user's text, or plain notation made
    /// from LaTeX input or from a balanced form.
    pub text: String,
    pub reaction: Reaction,
    /// The host it is checked against.
    pub host: Option<Rc<HostSlot>>,
    /// Whether it passed every check when last checked.
    pub ok: bool,
    /// Whether it is wrong in itself (a balance fails, or an error other
    /// than a missing host): a reaction typed to correct it replaces it.
    pub wrong: bool,
    /// Lines above it in the file it came from (comments, model lines,
    /// lines that did not parse), written back before it when saving.
    pub preamble: Vec<String>,
    /// A trailing `# comment` on its line.
    pub comment: Option<String>,
}

impl Entry {
    /// The line as a reaction file holds it.
    pub fn file_line(&self) -> String {
        let mut line = match &self.label {
            Some(label) => format!("{label}: {}", self.text),
            None => self.text.clone(),
        };
        if let Some(comment) = &self.comment {
            line.push_str("  ");
            line.push_str(comment);
        }
        line
    }
}

/// The file the session reads from and writes to by default.
#[derive(Debug, Clone)]
pub(crate) struct OwnFile {
    pub path: PathBuf,
    /// Modification time and length when last read or written, to notice
    /// changes made by another program.
    pub stamp: Option<(SystemTime, u64)>,
    /// Parts of the file could not be kept (bad UTF-8), so it is never
    /// overwritten without `--replace`.
    pub lossy: bool,
}

/// A balanced form on offer for one entry.
#[derive(Debug, Clone)]
struct Offer {
    entry: usize,
    reaction: Reaction,
}

/// Words the editor completes: gathered from the session after each input.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Vocabulary {
    /// Site subscripts of the host (`O`, `Zr`, `{Fe:A}`) and `i`.
    pub sites: Vec<String>,
    /// Species, associates and compounds already used, as written.
    pub species: Vec<String>,
    /// Labels of the session's reactions.
    pub labels: Vec<String>,
    /// Number of reactions.
    pub entries: usize,
}

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
    fn parse(line: &'a str) -> Args<'a> {
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

/// The style a reaction was written in, so text made for it matches.
fn style_of(reaction: &Reaction) -> Style {
    fn marks(e: &Entity) -> Option<MarkStyle> {
        match e {
            Entity::Species(s) => Some(s.marks),
            Entity::Associate(a) => Some(a.marks),
            _ => None,
        }
    }
    let unicode = reaction
        .terms()
        .filter_map(|(_, t)| marks(&t.entity))
        .any(|m| m == MarkStyle::Unicode);
    if unicode {
        Style::Unicode
    } else {
        Style::Ascii
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

/// A workbench session.
pub struct Session {
    host: Option<Rc<HostSlot>>,
    entries: Vec<Entry>,
    own_file: Option<OwnFile>,
    /// Lines after the last reaction of loaded files.
    trailer: Vec<String>,
    offer: Option<Offer>,
    palette: Palette,
    /// The name diagnostics give as their source: `<repl>` or `<stdin>`.
    source: String,
    /// Whether the "no host" explanation was printed once already.
    told_no_host: bool,
    balancer: Option<BalanceHook>,
    /// Inputs that had errors (reactions that fail, commands that failed).
    pub problems: u64,
    quit: bool,
}

impl Session {
    pub fn new(palette: Palette, source: &str) -> Session {
        Session {
            host: None,
            entries: Vec::new(),
            own_file: None,
            trailer: Vec::new(),
            offer: None,
            palette,
            source: source.to_string(),
            told_no_host: false,
            balancer: BALANCER,
            problems: 0,
            quit: false,
        }
    }

    /// Uses `hook` to offer balanced forms (tests and the integrator).
    pub fn with_balancer(mut self, hook: BalanceHook) -> Session {
        self.balancer = Some(hook);
        self
    }

    pub fn entries(&self) -> &[Entry] {
        &self.entries
    }

    pub fn host(&self) -> Option<&Host> {
        self.host.as_ref().map(|h| &h.host)
    }

    /// Whether `/quit` was given.
    pub fn wants_to_quit(&self) -> bool {
        self.quit
    }

    /// Sets the host from a specification, as `--host` does.
    pub fn set_host_spec(&mut self, spec: &str) -> Result<(), Vec<Diagnostic>> {
        let host = Host::from_spec(spec)?;
        self.host = Some(HostSlot::new(spec, host));
        Ok(())
    }

    /// The prompt: plain and coloured (same width).
    pub fn prompt(&self) -> (String, String) {
        let name = self
            .host
            .as_ref()
            .map_or_else(|| "no host".to_string(), |h| h.host.formula_text.clone());
        let raw = format!("{name} › ");
        let styled = format!("{} › ", self.palette.frame(&name));
        (raw, styled)
    }

    /// What the editor completes.
    pub fn vocabulary(&self) -> Vocabulary {
        let mut v = Vocabulary {
            entries: self.entries.len(),
            ..Vocabulary::default()
        };
        if let Some(slot) = &self.host {
            for s in &slot.host.sublattices {
                v.sites.push(match &s.label {
                    Some(_) => format!("{{{}}}", s.name()),
                    None => s.name(),
                });
            }
        }
        v.sites.push("i".to_string());
        for entry in &self.entries {
            if let Some(label) = &entry.label {
                v.labels.push(label.clone());
            }
            let style = style_of(&entry.reaction);
            for (_, term) in entry.reaction.terms() {
                if term.entity == Entity::Nil {
                    continue;
                }
                let mut bare = term.clone();
                bare.coefficient = crate::base::number::int(1);
                let written = render_term(&bare, style);
                if !v.species.contains(&written) {
                    v.species.push(written);
                }
            }
        }
        v
    }

    /// Handles a block of input (one or more lines). `first_line` numbers the
    /// first line for diagnostics.
    pub fn handle_block(
        &mut self,
        block: &str,
        first_line: u32,
        out: &mut dyn Write,
    ) -> io::Result<()> {
        for (line, index) in logical_lines(block) {
            let number = first_line.saturating_add(u32::try_from(index).unwrap_or(u32::MAX));
            self.handle_line(&line, number, out)?;
            if self.quit {
                break;
            }
        }
        Ok(())
    }

    /// Handles one logical line.
    pub fn handle_line(&mut self, line: &str, number: u32, out: &mut dyn Write) -> io::Result<()> {
        let trimmed = line.trim();
        if trimmed.is_empty() {
            return Ok(());
        }
        if trimmed.starts_with(SIGIL) {
            return self.command(line, number, out);
        }
        // Words a newcomer tries first: answer them rather than fail.
        match trimmed {
            "help" | "?" => return self.command("/help", number, out),
            "quit" | "exit" | "bye" => return self.command("/quit", number, out),
            _ => {}
        }
        match reader::classify(line) {
            Line::Blank | Line::Comment => Ok(()),
            Line::Host(span) => {
                let spec_line = format!("/host {}", &line[span]);
                self.command(&spec_line, number, out)
            }
            Line::Model { keyword, .. } => {
                // integration point: model lines (K, dH, dS, ...) belong to the
                // equilibrium model (src/law.rs); hand them over once it exists.
                let d = Diagnostic::new(
                    Code::WorkbenchCommand,
                    keyword,
                    "model lines are not available in this build yet",
                )
                .with_help("type reactions and commands; model lines are kept when a file is loaded and saved");
                self.problems += 1;
                self.print_diagnostic(out, line, number, d)
            }
            Line::Reaction { label, reaction } => {
                self.enter_reaction(line, label, reaction, number, out)
            }
        }
    }

    fn command(&mut self, line: &str, number: u32, out: &mut dyn Write) -> io::Result<()> {
        let args = Args::parse(line);
        let word = line
            .get(args.command.clone())
            .unwrap_or("")
            .trim_start_matches(SIGIL);
        let Some(spec) = find_command(word) else {
            let mut d = args.usage_error(
                None,
                if word.is_empty() {
                    "a `/` with no command".to_string()
                } else {
                    format!("`/{word}` is not a command")
                },
            );
            d.help = Some(match closest_command(word) {
                Some(name) => format!("did you mean `/{name}`? `/help` lists the commands"),
                None => "`/help` lists the commands".to_string(),
            });
            self.problems += 1;
            return self.print_diagnostic(out, line, number, d);
        };
        match (spec.run)(self, &args, out) {
            Ok(()) => Ok(()),
            Err(Failure::Io(e)) => Err(e),
            Err(Failure::User(diagnostics)) => {
                self.problems += 1;
                for d in diagnostics {
                    self.print_diagnostic(out, line, number, d)?;
                }
                Ok(())
            }
        }
    }

    fn print_diagnostic(
        &self,
        out: &mut dyn Write,
        line: &str,
        number: u32,
        d: Diagnostic,
    ) -> io::Result<()> {
        let d = if d.line == 0 {
            d.locate(number, line)
        } else {
            d
        };
        write_diagnostic(out, self.palette, &self.source, line, &d)
    }

    fn label_index(&self, label: &str) -> Option<usize> {
        self.entries
            .iter()
            .position(|e| e.label.as_deref() == Some(label))
    }

    fn enter_reaction(
        &mut self,
        line: &str,
        label: Option<Span>,
        span: Span,
        number: u32,
        out: &mut dyn Write,
    ) -> io::Result<()> {
        let analysis = analyse(line, span.clone(), self.host.as_ref());
        let comment = reader::comment(line).map(str::to_string);
        let label = label.map(|l| line[l].to_string());
        if let Some(slot) = &analysis.host_from_arrow {
            writeln!(
                out,
                "host {} taken from over the arrow",
                self.palette.strong(&slot.spec)
            )?;
            self.host = Some(slot.clone());
        }
        let Some(reaction) = analysis.reaction.clone() else {
            self.problems += 1;
            for d in analysis.diagnostics {
                self.print_diagnostic(out, line, number, d)?;
            }
            return Ok(());
        };
        let ok = analysis.verdict.as_ref().is_some_and(Verdict::ok)
            && !analysis.diagnostics.iter().any(Diagnostic::is_error);
        let text = if analysis.from_latex {
            render_reaction(&reaction, Style::Unicode)
        } else {
            analysis.text.clone()
        };
        let entry = Entry {
            label: label.clone(),
            text,
            reaction,
            host: self.host.clone(),
            ok,
            wrong: is_wrong(&analysis),
            preamble: Vec::new(),
            comment,
        };
        // A reaction typed to fix one that is wrong takes its place: the
        // most recent wrong reaction it corrects (same reaction give or take
        // a term).
        let corrected = if label.is_none() {
            (0..self.entries.len()).rev().find(|&i| {
                self.entries[i].wrong && corrects(&self.entries[i].reaction, &entry.reaction)
            })
        } else {
            None
        };
        let (index, replaced) = match label
            .as_deref()
            .and_then(|l| self.label_index(l))
            .or(corrected)
        {
            Some(i) => {
                let mut entry = entry;
                entry.preamble = std::mem::take(&mut self.entries[i].preamble);
                entry.comment = entry.comment.or_else(|| self.entries[i].comment.take());
                if entry.label.is_none() {
                    entry.label = self.entries[i].label.take();
                }
                self.entries[i] = entry;
                (i, true)
            }
            None => {
                self.entries.push(entry);
                (self.entries.len() - 1, false)
            }
        };
        self.offer = None;
        if !ok {
            self.problems += 1;
        }
        self.write_verdict(out, index, &analysis, replaced)?;
        let shown: Vec<Diagnostic> = analysis
            .diagnostics
            .iter()
            .filter(|d| d.code != Code::NoHost || !self.told_no_host)
            .cloned()
            .map(|d| {
                if d.code == Code::NoHost {
                    d.with_help("set it with `/host SPEC`, e.g. `/host ZrO2`; the reactions typed so far are checked again then")
                } else {
                    d
                }
            })
            .collect();
        if analysis.diagnostics.iter().any(|d| d.code == Code::NoHost) {
            self.told_no_host = true;
        }
        for d in shown {
            self.print_diagnostic(out, line, number, d)?;
        }
        if let Some(verdict) = &analysis.verdict {
            let b = verdict.balance;
            if !b.mass || !b.charge || b.site == Some(false) {
                let host = self.entries[index].host.as_ref().map(|h| &h.host);
                write_table(out, self.palette, &verdict.table, host, b.site)?;
                self.offer_balanced(out, index)?;
            }
        }
        Ok(())
    }

    /// Offers a balanced form of entry `index` when a balancer is present.
    fn offer_balanced(&mut self, out: &mut dyn Write, index: usize) -> io::Result<()> {
        let Some(balance) = self.balancer else {
            return Ok(());
        };
        let Some(entry) = self.entries.get(index) else {
            return Ok(());
        };
        if let Some(balanced) = balance(&entry.reaction, entry.host.as_ref().map(|h| &h.host)) {
            writeln!(
                out,
                "  {} {}   ({} keeps it)",
                self.palette.good("balanced:"),
                render_reaction(&balanced, Style::Unicode),
                self.palette.strong("/take")
            )?;
            self.offer = Some(Offer {
                entry: index,
                reaction: balanced,
            });
        }
        Ok(())
    }

    /// The one-line verdict on entry `index`.
    fn write_verdict(
        &self,
        out: &mut dyn Write,
        index: usize,
        analysis: &Analysis,
        replaced: bool,
    ) -> io::Result<()> {
        let Some(entry) = self.entries.get(index) else {
            return Ok(());
        };
        let p = self.palette;
        let status = verdict_text(p, analysis.verdict.as_ref(), &analysis.diagnostics);
        let replaced = if replaced {
            "  (in place of the one that failed)"
        } else {
            ""
        };
        writeln!(
            out,
            "{} {}  {}{replaced}",
            p.strong(&self.entry_tag(index)),
            status,
            render_reaction(&entry.reaction, Style::Unicode)
        )
    }

    /// `[3]` or `[3 red]`.
    fn entry_tag(&self, index: usize) -> String {
        match self.entries.get(index).and_then(|e| e.label.as_deref()) {
            Some(label) => format!("[{} {label}]", index + 1),
            None => format!("[{}]", index + 1),
        }
    }

    /// Resolves `WHICH` words (numbers, labels, `all`) to entry indices.
    fn select(&self, args: &Args<'_>, words: &[(&str, Span)]) -> Result<Vec<usize>, Failure> {
        if words.is_empty() || words.iter().any(|(w, _)| *w == "all") {
            return Ok((0..self.entries.len()).collect());
        }
        let mut chosen = Vec::new();
        for (word, span) in words {
            let index = match word.parse::<usize>() {
                Ok(n) if n >= 1 && n <= self.entries.len() => Some(n - 1),
                Ok(_) => None,
                Err(_) => self.label_index(word),
            };
            match index {
                Some(i) if !chosen.contains(&i) => chosen.push(i),
                Some(_) => {}
                None => {
                    let help = if self.entries.is_empty() {
                        "the session has no reactions yet".to_string()
                    } else {
                        format!(
                            "name a reaction by its number (1 to {}) or its label; `/list` shows them",
                            self.entries.len()
                        )
                    };
                    return Err(args
                        .usage_error(Some(span.clone()), format!("no reaction `{word}`"))
                        .with_help(help)
                        .into());
                }
            }
        }
        Ok(chosen)
    }

    /// Re-checks entry `index` against its host; returns the analysis.
    fn recheck(&mut self, index: usize) -> Option<(String, Analysis)> {
        let entry = self.entries.get(index)?;
        let line = entry.file_line();
        let start = entry.label.as_ref().map_or(0, |l| l.len() + 2);
        let span = start..start + entry.text.len();
        let analysis = analyse(&line, span, entry.host.as_ref());
        let ok = analysis.verdict.as_ref().is_some_and(Verdict::ok)
            && !analysis.diagnostics.iter().any(Diagnostic::is_error);
        let wrong = is_wrong(&analysis);
        let entry = self.entries.get_mut(index)?;
        entry.ok = ok;
        entry.wrong = wrong;
        if let Some(r) = &analysis.reaction {
            entry.reaction = r.clone();
        }
        Some((line, analysis))
    }
}

/// Whether a reaction is wrong in itself: a balance fails, or there is an
/// error other than a missing host.
fn is_wrong(analysis: &Analysis) -> bool {
    analysis
        .verdict
        .as_ref()
        .is_some_and(|v| !v.balance.mass || !v.balance.charge || v.balance.site == Some(false))
        || analysis
            .diagnostics
            .iter()
            .any(|d| d.is_error() && d.code != Code::NoHost)
}

/// What a term is, ignoring its coefficient and charges: the skeleton a
/// correction keeps.
fn skeleton_of(term: &crate::notation::Term) -> String {
    match &term.entity {
        Entity::Species(s) => {
            let mut key = s.key();
            key.charge = 0;
            format!("{:?}{:?}", key.occupant, key.site)
        }
        Entity::Associate(a) => {
            let mut parts: Vec<String> = a.parts.iter().map(skeleton_of).collect();
            parts.sort();
            format!("({})", parts.join(" "))
        }
        Entity::Compound(c) => format!("{:?}{:?}", c.formula.atoms, c.phase),
        Entity::Nil => "nil".to_string(),
    }
}

/// Whether `new` looks like a correction of `old`: one side the same and
/// the other the same give or take terms (charges and coefficients aside).
fn corrects(old: &Reaction, new: &Reaction) -> bool {
    let side = |terms: &[crate::notation::Term]| {
        let mut s: Vec<String> = terms.iter().map(skeleton_of).collect();
        s.sort();
        s
    };
    let within = |a: &[String], b: &[String]| {
        let (small, large) = if a.len() <= b.len() { (a, b) } else { (b, a) };
        let mut rest = large.to_vec();
        small
            .iter()
            .all(|t| match rest.iter().position(|r| r == t) {
                Some(i) => {
                    rest.remove(i);
                    true
                }
                None => false,
            })
    };
    let (ol, or, nl, nr) = (
        side(&old.left),
        side(&old.right),
        side(&new.left),
        side(&new.right),
    );
    (ol == nl && within(&or, &nr)) || (or == nr && within(&ol, &nl))
}

/// `✓ balanced`, `✗ fails charge, sites`, `? sites unchecked (no host)`.
fn verdict_text(p: Palette, verdict: Option<&Verdict>, diagnostics: &[Diagnostic]) -> String {
    let Some(v) = verdict else {
        return p.bad("✗ unreadable");
    };
    let b = v.balance;
    let mut failed = Vec::new();
    if !b.mass {
        failed.push("mass");
    }
    if !b.charge {
        failed.push("charge");
    }
    if b.site == Some(false) {
        failed.push("sites");
    }
    let errors = diagnostics
        .iter()
        .filter(|d| d.severity == Severity::Error && d.code != Code::NoHost)
        .count();
    if !failed.is_empty() {
        return p.bad(&format!("✗ fails {}", failed.join(", ")));
    }
    if errors > 0 {
        return p.bad(&format!(
            "✗ balances, but {errors} error{}",
            if errors == 1 { "" } else { "s" }
        ));
    }
    if b.site.is_none() {
        return p.severity(Severity::Warning, "? sites unchecked (no host)");
    }
    p.good("✓ balanced")
}

/// The command name nearest to a mistyped one (one it starts, else one at
/// most two edits away), for "did you mean".
fn closest_command(word: &str) -> Option<&'static str> {
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
fn edit_distance(a: &str, b: &str) -> usize {
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

#[cfg(test)]
mod tests;
