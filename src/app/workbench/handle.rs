//! The line handler: each logical line is a command, a file line (`host`,
//! a comment) or a reaction, which is checked, kept, corrected or offered
//! its balanced form.

use super::analysis::{Analysis, analyse, logical_lines};
use super::args::{Args, Failure, SIGIL, closest_command, find_command};
use super::session::{Entry, Offer, Session};
use lacuna::base::diagnostic::{Code, Diagnostic, Severity};
use lacuna::check::Verdict;
use lacuna::file::reader::{self, Line};
use lacuna::notation::{Entity, Reaction, Span, Style, render_reaction};
use lacuna::report::Palette;
use lacuna::report::human::{write_diagnostic, write_table};
use std::io::{self, Write};

impl Session {
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
                // Model lines (K, dH, dS, ...) typed at the prompt are not
                // taken yet; those of a loaded file are kept and used.
                let d = Diagnostic::new(
                    Code::WorkbenchCommand,
                    keyword,
                    "model lines are not taken at the prompt yet",
                )
                .with_help("write them in a reaction file and `/load` it: its model lines are kept, used by /law and /brouwer, and saved");
                self.problems += 1;
                self.print_diagnostic(out, line, number, d)
            }
            Line::Reaction { label, reaction } => {
                self.enter_reaction(line, label, reaction, number, out)
            }
            // Other lines leave the session as it is.
            _ => Ok(()),
        }
    }

    pub(super) fn command(
        &mut self,
        line: &str,
        number: u32,
        out: &mut dyn Write,
    ) -> io::Result<()> {
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

    pub(super) fn print_diagnostic(
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

    pub(super) fn label_index(&self, label: &str) -> Option<usize> {
        self.entries
            .iter()
            .position(|e| e.label.as_deref() == Some(label))
    }

    pub(super) fn enter_reaction(
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
        // The reading's note (T806) says so, as every command does.
        if let Some(slot) = &analysis.host_from_arrow {
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
    pub(super) fn offer_balanced(&mut self, out: &mut dyn Write, index: usize) -> io::Result<()> {
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
    pub(super) fn write_verdict(
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
    pub(super) fn entry_tag(&self, index: usize) -> String {
        match self.entries.get(index).and_then(|e| e.label.as_deref()) {
            Some(label) => format!("[{} {label}]", index + 1),
            None => format!("[{}]", index + 1),
        }
    }

    /// Resolves `WHICH` words (numbers, labels, `all`) to entry indices.
    pub(super) fn select(
        &self,
        args: &Args<'_>,
        words: &[(&str, Span)],
    ) -> Result<Vec<usize>, Failure> {
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
    pub(super) fn recheck(&mut self, index: usize) -> Option<(String, Analysis)> {
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
pub(crate) fn is_wrong(analysis: &Analysis) -> bool {
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
pub(crate) fn skeleton_of(term: &lacuna::notation::Term) -> String {
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
        other => format!("{other:?}"),
    }
}

/// Whether `new` looks like a correction of `old`: one side the same and
/// the other the same give or take terms (charges and coefficients aside).
pub(crate) fn corrects(old: &Reaction, new: &Reaction) -> bool {
    let side = |terms: &[lacuna::notation::Term]| {
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
pub(crate) fn verdict_text(
    p: Palette,
    verdict: Option<&Verdict>,
    diagnostics: &[Diagnostic],
) -> String {
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
