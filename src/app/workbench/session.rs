//! The session's state: the reactions kept, the host in force, the file
//! it reads from and writes to, the balanced form on offer, and what the
//! editor completes.

use lacuna::base::diagnostic::Diagnostic;
use lacuna::file::reader::HostHandle;
use lacuna::host::Host;
use lacuna::notation::{Entity, MarkStyle, Reaction, Style, render_term};
use lacuna::report::Palette;
use std::path::PathBuf;
use std::rc::Rc;
use std::time::SystemTime;

/// Finds a balanced form of a reaction, keeping the coefficients the user
/// wrote. `None` when there is none.
pub type BalanceHook = fn(&Reaction, Option<&Host>) -> Option<Reaction>;

/// The exact balancer offers the balanced form of a reaction that does not balance.
const BALANCER: Option<BalanceHook> = Some(lacuna::balance::balanced_form);

/// A host the session knows: its specification as written and the parsed host.
#[derive(Debug, Clone, PartialEq)]
pub struct HostSlot {
    pub spec: String,
    pub host: Host,
    /// The `host` line to write when saving (the file's own line when loaded).
    pub line: String,
}

impl HostSlot {
    pub(super) fn new(spec: &str, host: Host) -> Rc<HostSlot> {
        Rc::new(HostSlot {
            spec: spec.trim().to_string(),
            line: format!("host {}", spec.trim()),
            host,
        })
    }
}

impl HostHandle for HostSlot {
    fn host(&self) -> &Host {
        &self.host
    }

    fn from_arrow(host: Host, over: &str) -> Self {
        Rc::unwrap_or_clone(HostSlot::new(over, host))
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
pub(crate) struct Offer {
    pub(super) entry: usize,
    pub(super) reaction: Reaction,
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

/// The style a reaction was written in, so text made for it matches.
pub(crate) fn style_of(reaction: &Reaction) -> Style {
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

/// A workbench session.
pub struct Session {
    pub(super) host: Option<Rc<HostSlot>>,
    pub(super) entries: Vec<Entry>,
    pub(super) own_file: Option<OwnFile>,
    /// Lines after the last reaction of loaded files.
    pub(super) trailer: Vec<String>,
    pub(super) offer: Option<Offer>,
    pub(super) palette: Palette,
    /// The name diagnostics give as their source: `<repl>` or `<stdin>`.
    pub(super) source: String,
    /// Whether the "no host" explanation was printed once already.
    pub(super) told_no_host: bool,
    pub(super) balancer: Option<BalanceHook>,
    /// Inputs that had errors (reactions that fail, commands that failed).
    pub problems: u64,
    pub(super) quit: bool,
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

    /// Uses `hook` to offer balanced forms instead of the balancer.
    #[cfg(test)]
    pub fn with_balancer(mut self, hook: BalanceHook) -> Session {
        self.balancer = Some(hook);
        self
    }

    #[cfg(test)]
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
                bare.coefficient = lacuna::base::number::int(1);
                let written = render_term(&bare, style);
                if !v.species.contains(&written) {
                    v.species.push(written);
                }
            }
        }
        v
    }
}
