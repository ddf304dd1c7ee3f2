//! Reaction files: the one reader. Grammar: grammar/reaction-file.md.
//!
//! In: one line of text. Out: an item — blank, comment, host declaration,
//! reaction with an optional name, or model keyword line — with byte spans
//! into the line; a reaction is read whether it is written in plain
//! notation, Unicode or LaTeX, with the text set over its arrow. Lines are
//! independent, so files stream and one bad line never hides the rest; the
//! one thing carried from line to line is the host in force, and
//! `HostTracker` is the one place that carries it.
//!
//! Every command that reads reaction text (`check`, `fmt`, the model
//! commands, `typeset`, the workbench) reads it here, so they agree on what
//! each line is.

use crate::base::diagnostic::{Code, Diagnostic};
use crate::host::Host;
use crate::notation::latex_input::{self, Normalised, looks_like_latex};
use crate::notation::{
    ARROWS, Arrow, Entity, Reaction, Span, Term, find_arrow, parse_reaction, takes_text_over,
};
use std::sync::Arc;

/// The conventional extension of Lacuna reaction files.
pub const EXTENSION: &str = "kvr";

/// Keywords that start a model line (see the model grammar); any other line
/// that is not a comment, blank or `host` line is a reaction.
pub const MODEL_KEYWORDS: &[&str] = &["K", "dH", "dS", "fix", "temperature", "po2", "pressure"];

/// What one line of a reaction file holds.
#[derive(Debug, Clone, PartialEq, Eq)]
#[non_exhaustive]
pub enum Line {
    Blank,
    Comment,
    /// `host <spec>`: the span of the spec.
    Host(Span),
    /// `[label:] reaction`: the label's span (without the colon) and the reaction's.
    Reaction {
        label: Option<Span>,
        reaction: Span,
    },
    /// A model keyword line: the keyword's span and the rest's.
    Model {
        keyword: Span,
        rest: Span,
    },
}

/// Classifies one line (without its line terminator).
pub fn classify(line: &str) -> Line {
    let content_end = comment_start(line).unwrap_or(line.len());
    let content = &line[..content_end];
    let trimmed = content.trim_start();
    if trimmed.trim_end().is_empty() {
        return if content_end < line.len() {
            Line::Comment
        } else {
            Line::Blank
        };
    }
    let start = content.len() - trimmed.len();
    let end = start + trimmed.trim_end().len();
    let first_word_len = trimmed
        .find(char::is_whitespace)
        .unwrap_or(trimmed.trim_end().len());
    let first_word = &trimmed[..first_word_len];
    if first_word == "host" {
        return Line::Host(start + first_word_len..end);
    }
    if MODEL_KEYWORDS.contains(&first_word)
        && first_word_len < trimmed.trim_end().len()
        && !holds_reaction_arrow(trimmed)
    {
        return Line::Model {
            keyword: start..start + first_word_len,
            rest: start + first_word_len..end,
        };
    }
    if let Some(label_len) = label_len(trimmed) {
        let after = &trimmed[label_len + 1..];
        let gap = after.len() - after.trim_start().len();
        // `a: ` (a name and nothing after it): the gap runs past the
        // trimmed end, so the reaction is empty rather than reversed.
        return Line::Reaction {
            label: Some(start..start + label_len),
            reaction: (start + label_len + 1 + gap).min(end)..end,
        };
    }
    Line::Reaction {
        label: None,
        reaction: start..end,
    }
}

/// Whether `text` holds an arrow of the one arrow table other than `=`
/// (model lines hold `=`): such a line is a reaction even if it starts with
/// a model keyword (`K -> K_i. + e'` and `K ⟶ K_i. + e'` are about potassium).
fn holds_reaction_arrow(text: &str) -> bool {
    let mut rest = text;
    while let Some((span, arrow)) = find_arrow(rest) {
        if arrow != Arrow::Equals {
            return true;
        }
        rest = rest.get(span.end..).unwrap_or("");
    }
    false
}

/// Byte offset of a `#` that starts a comment.
pub fn comment_start(line: &str) -> Option<usize> {
    line.find('#')
}

/// The trailing comment of a line, `#` included, without trailing white space.
pub fn comment(line: &str) -> Option<&str> {
    comment_start(line).map(|at| line[at..].trim_end())
}

/// The lines of a text, numbered from 1, without their line endings
/// (`\n` or `\r\n`), as every reader of whole texts walks them.
pub fn numbered_lines(text: &str) -> impl Iterator<Item = (u32, &str)> {
    (1u32..).zip(text.lines())
}

/// `label = letter { letter | digit | "_" | "-" | "." } ":"` followed by white space.
fn label_len(text: &str) -> Option<usize> {
    let colon = text.find(':')?;
    let label = &text[..colon];
    let after = &text[colon + 1..];
    let valid = label
        .chars()
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic())
        && label
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || matches!(c, '_' | '-' | '.'))
        && !label.contains('_')
        && (after.is_empty() || after.starts_with(char::is_whitespace));
    valid.then_some(colon)
}

// ---------------------------------------------------------------------------
// Reactions: plain, Unicode or LaTeX.

/// A reaction as read from its line.
#[derive(Debug, Clone)]
#[non_exhaustive]
pub struct ReadReaction {
    /// The reaction's span in the line (label and comment excluded).
    pub span: Span,
    /// The reaction, when it parsed. Its spans are byte ranges of the line,
    /// also when it was written in LaTeX.
    pub reaction: Option<Reaction>,
    /// Problems and notes from reading it, spans in the line.
    pub diagnostics: Vec<Diagnostic>,
    /// The plain notation the LaTeX was rewritten as, when it was LaTeX.
    pub latex: Option<Normalised>,
    /// The text set over the arrow (`\xrightarrow{\mathrm{ZrO_2}}` gives
    /// `ZrO2`), with its span in the line.
    pub over_arrow: Option<(String, Span)>,
}

impl ReadReaction {
    /// Whether the reaction was read from LaTeX.
    pub fn from_latex(&self) -> bool {
        self.latex.is_some()
    }
}

/// Reads the reaction at `span` of `line`. Plain and Unicode notation are
/// parsed as they are; a reaction that does not parse and holds a
/// backslash or a dollar sign is read as LaTeX math pasted from a
/// manuscript (see grammar/repl.md, "LaTeX input").
pub fn read_reaction(line: &str, span: Span) -> ReadReaction {
    let source = line.get(span.clone()).unwrap_or("");
    let (parsed, diagnostics) = parse_reaction(line, span.clone());
    if parsed.is_some() || !looks_like_latex(source) {
        // Plain notation may still carry a LaTeX arrow with text over it.
        let over_arrow = if source.contains('\\') {
            plain_over_arrow(source)
                .map(|(text, s)| (text, s.start + span.start..s.end + span.start))
        } else {
            None
        };
        return ReadReaction {
            span,
            reaction: parsed,
            diagnostics,
            latex: None,
            over_arrow,
        };
    }
    let offset = span.start;
    match latex_input::normalise(source) {
        Ok(n) => {
            let (mut parsed, found) = parse_reaction(&n.text, 0..n.text.len());
            let mut diagnostics: Vec<Diagnostic> =
                found.into_iter().map(|d| n.relocate(d, offset)).collect();
            diagnostics.extend(n.notes.iter().map(|d| shift(d.clone(), offset)));
            if let Some(reaction) = &mut parsed {
                move_spans(reaction, &|s: Span| {
                    let s = n.source_span(s);
                    s.start + offset..s.end + offset
                });
            }
            let over_arrow = n
                .over_arrow
                .as_ref()
                .map(|(text, s)| (text.clone(), s.start + offset..s.end + offset));
            ReadReaction {
                span,
                reaction: parsed,
                diagnostics,
                latex: Some(n),
                over_arrow,
            }
        }
        Err(d) => ReadReaction {
            span,
            reaction: None,
            diagnostics: vec![shift(d, offset)],
            latex: None,
            over_arrow: None,
        },
    }
}

/// The text over a `\xrightarrow{..}` in otherwise plain notation, read as
/// the LaTeX reader reads it, with its span in `source`.
fn plain_over_arrow(source: &str) -> Option<(String, Span)> {
    let (arrow, _) = find_arrow(source)?;
    let written = source.get(arrow.clone())?;
    let spelling = ARROWS
        .iter()
        .map(|(s, _)| *s)
        .find(|s| written.starts_with(s))?;
    if !takes_text_over(spelling) {
        return None;
    }
    let open = arrow.start + written.rfind('{')?;
    let close = arrow.end.checked_sub(1)?;
    if source.get(close..arrow.end) != Some("}") || open >= close {
        return None;
    }
    let inner = source.get(open + 1..close)?;
    let text = latex_input::normalise(inner).ok()?.text;
    (!text.is_empty()).then(|| (text, open + 1..close))
}

fn shift(mut d: Diagnostic, offset: usize) -> Diagnostic {
    d.span = d.span.start + offset..d.span.end + offset;
    d
}

/// Applies `f` to every span of a reaction.
fn move_spans(reaction: &mut Reaction, f: &impl Fn(Span) -> Span) {
    fn term(t: &mut Term, f: &impl Fn(Span) -> Span) {
        t.span = f(t.span.clone());
        match &mut t.entity {
            Entity::Species(s) => s.span = f(s.span.clone()),
            Entity::Associate(a) => {
                a.span = f(a.span.clone());
                for part in &mut a.parts {
                    term(part, f);
                }
            }
            Entity::Compound(c) => c.span = f(c.span.clone()),
            Entity::Nil => {}
        }
    }
    reaction.span = f(reaction.span.clone());
    for t in reaction.left.iter_mut().chain(reaction.right.iter_mut()) {
        term(t, f);
    }
}

// ---------------------------------------------------------------------------
// Whole items.

/// One line read: what it is, and for hosts and reactions what they say.
#[derive(Debug, Clone)]
#[non_exhaustive]
pub enum Item {
    Blank,
    Comment,
    /// A `host` line: the spec's span, and the host or why it is not one
    /// (spans in the line).
    Host {
        spec: Span,
        host: Result<Host, Vec<Diagnostic>>,
    },
    /// A reaction line with its optional name.
    Reaction {
        label: Option<Span>,
        read: ReadReaction,
    },
    /// A model line (`K`, `dH`, `dS`, `fix`, ...): read by `crate::model`.
    Model {
        keyword: Span,
        rest: Span,
    },
}

/// Reads one line (without its line terminator) into an item.
pub fn read_line(line: &str) -> Item {
    match classify(line) {
        Line::Blank => Item::Blank,
        Line::Comment => Item::Comment,
        Line::Host(spec) => Item::Host {
            host: Host::parse(line, spec.clone()),
            spec,
        },
        Line::Reaction { label, reaction } => Item::Reaction {
            label,
            read: read_reaction(line, reaction),
        },
        Line::Model { keyword, rest } => Item::Model { keyword, rest },
    }
}

// ---------------------------------------------------------------------------
// The host in force.

/// How a reader of reaction lines holds a host: `Arc<Host>` for the
/// checker (shared by its threads), the workbench its own slot that keeps
/// the spec as written.
pub trait HostHandle: Clone {
    fn host(&self) -> &Host;
    /// A host read from over an arrow; `over` is the formula as read there.
    fn from_arrow(host: Host, over: &str) -> Self;
}

/// A shared handle to a front-end's own host record (the workbench keeps
/// the host's specification beside it).
impl<T: HostHandle> HostHandle for std::rc::Rc<T> {
    fn host(&self) -> &Host {
        T::host(self)
    }

    fn from_arrow(host: Host, over: &str) -> Self {
        std::rc::Rc::new(T::from_arrow(host, over))
    }
}

impl HostHandle for Arc<Host> {
    fn host(&self) -> &Host {
        self
    }

    fn from_arrow(host: Host, _over: &str) -> Self {
        Arc::new(host)
    }
}

/// What the text over a reaction's arrow does to the host the reaction is
/// checked against, as `HostTracker` decides it.
#[derive(Debug, Clone)]
#[non_exhaustive]
pub struct ReactionHost<H = Arc<Host>> {
    /// No host was in force, so the host written over the arrow is used:
    /// the host and its formula as read there. It stays in force for the
    /// lines after it (`HostTracker::follow`).
    pub taken: Option<(H, String)>,
    /// The arrow names another host than the one in force (warning T804,
    /// span in the line).
    pub warning: Option<Diagnostic>,
}

impl<H> Default for ReactionHost<H> {
    fn default() -> Self {
        ReactionHost {
            taken: None,
            warning: None,
        }
    }
}

/// The host in force while walking the lines of one source: the default
/// (`--host`, the session's host), then each `host` line, and — where no
/// host is in force — the host written over a reaction's arrow. The one
/// place that decides it, for every command that walks reaction lines.
#[derive(Debug, Clone)]
pub struct HostTracker<H = Arc<Host>> {
    host: Option<H>,
    /// The line of a `host` declaration that failed, so later reactions say
    /// why they have no host.
    broken_line: Option<u32>,
}

impl<H: HostHandle> HostTracker<H> {
    /// Starts a source with `default` in force.
    pub fn new(default: Option<H>) -> HostTracker<H> {
        HostTracker {
            host: default,
            broken_line: None,
        }
    }

    /// The host in force.
    pub fn host(&self) -> Option<&H> {
        self.host.as_ref()
    }

    /// The line of the failed `host` declaration that left no host in force.
    pub fn broken_line(&self) -> Option<u32> {
        self.broken_line
    }

    /// A `host` line on line `line`: it is in force from here on, or, when
    /// it has errors, no host is.
    pub fn declare<E>(&mut self, line: u32, result: &Result<H, E>) {
        match result {
            Ok(host) => {
                self.host = Some(host.clone());
                self.broken_line = None;
            }
            Err(_) => {
                self.host = None;
                self.broken_line = Some(line);
            }
        }
    }

    /// What the text over the arrow of `read` does to its host, without
    /// changing the tracker (lines may be prepared on several threads);
    /// `host_for` then gives the host to check against, and `follow` keeps
    /// what the line changed.
    pub fn for_reaction(&self, read: &ReadReaction) -> ReactionHost<H> {
        let mut chosen = ReactionHost::default();
        let Some((over, span)) = &read.over_arrow else {
            return chosen;
        };
        // Text over the arrow that is not a formula (a temperature) says
        // nothing about the host.
        let Ok(named) = Host::from_spec(over) else {
            return chosen;
        };
        match &self.host {
            None => chosen.taken = Some((H::from_arrow(named, over), over.clone())),
            Some(current) if !same_formula(&named, current.host()) => {
                chosen.warning = Some(
                    Diagnostic::new(
                        Code::HostOverArrow,
                        span.clone(),
                        format!(
                            "the arrow names the host {over} but the reaction is checked against {}",
                            current.host().formula_text
                        ),
                    )
                    .with_help("set the host the reaction is meant for (a `host` line, `--host` or `/host`), or fix the text over the arrow"),
                );
            }
            Some(_) => {}
        }
        chosen
    }

    /// The host a reaction is checked against: the one taken from over its
    /// arrow, else the one in force.
    pub fn host_for<'a>(&'a self, chosen: &'a ReactionHost<H>) -> Option<&'a H> {
        chosen
            .taken
            .as_ref()
            .map(|(host, _)| host)
            .or(self.host.as_ref())
    }

    /// Keeps what a reaction line changed: a host taken from over its arrow
    /// stays in force for the lines after it.
    pub fn follow(&mut self, chosen: &ReactionHost<H>) {
        if let Some((host, _)) = &chosen.taken {
            self.host = Some(host.clone());
            self.broken_line = None;
        }
    }
}

/// Whether two hosts have the same formula (atoms in any order).
pub fn same_formula(a: &Host, b: &Host) -> bool {
    let mut x = a.formula.atoms.clone();
    let mut y = b.formula.atoms.clone();
    x.sort();
    y.sort();
    x == y
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn classifies_lines() {
        assert_eq!(classify(""), Line::Blank);
        assert_eq!(classify("   "), Line::Blank);
        assert_eq!(classify("# a note"), Line::Comment);
        assert_eq!(classify("host ZrO2  # cubic"), Line::Host(4..9));
        assert_eq!(
            classify("O_O -> V_O.. + 2e' + 1/2 O2(g)"),
            Line::Reaction {
                label: None,
                reaction: 0..30
            }
        );
        assert_eq!(
            classify("red: O_O -> V_O.."),
            Line::Reaction {
                label: Some(0..3),
                reaction: 5..17
            }
        );
        // A name with nothing after it, even with a space: an empty reaction
        // (the parser then says the arrow is missing), never a reversed span.
        for line in ["a:", "a: ", "a:  \t"] {
            assert_eq!(
                classify(line),
                Line::Reaction {
                    label: Some(0..1),
                    reaction: 2..2
                },
                "{line:?}"
            );
        }
        assert_eq!(
            classify("K -> K_i. + e'"),
            Line::Reaction {
                label: None,
                reaction: 0..14
            }
        );
        assert_eq!(
            classify("K red 1e-20"),
            Line::Model {
                keyword: 0..1,
                rest: 1..11
            }
        );
    }

    #[test]
    fn every_arrow_of_the_table_makes_a_keyword_line_a_reaction() {
        // source: common practice (potassium interstitials in KCl are
        // written K_i.; the keyword `K` must not swallow the line).
        for (spelling, arrow) in ARROWS {
            let line = if takes_text_over(spelling) {
                format!("K {spelling}{{KCl}} K_i. + e'")
            } else {
                format!("K {spelling} K_i. + e'")
            };
            let expected = *arrow != Arrow::Equals;
            assert_eq!(
                matches!(classify(&line), Line::Reaction { .. }),
                expected,
                "{line}"
            );
        }
        assert!(matches!(classify("K red = 1e-20"), Line::Model { .. }));
        assert!(matches!(classify("dH red = -4.5 eV"), Line::Model { .. }));
        assert!(matches!(
            classify("po2 1e-30 to 1e5 bar"),
            Line::Model { .. }
        ));
    }

    #[test]
    fn site_labels_are_not_reaction_labels() {
        // `Fe_Fe:A` has an underscore before the colon, so it is a species.
        assert_eq!(
            classify("Fe_Fe:A.. -> x"),
            Line::Reaction {
                label: None,
                reaction: 0..14
            }
        );
        // A colon not followed by white space is not a label either.
        assert_eq!(
            classify("a:b -> c"),
            Line::Reaction {
                label: None,
                reaction: 0..8
            }
        );
    }

    #[test]
    fn latex_reactions_have_spans_in_the_line_and_the_host_over_the_arrow() {
        // source: IUPAC, Nomenclature of Inorganic Chemistry (Recommendations
        // 2005), IR-11.4: V for the vacancy, bullets and primes as charges.
        let line = r"dope: \mathrm{Y_2O_3} \xrightarrow{\mathrm{ZrO_2}} 2\mathrm{Y}_{\mathrm{Zr}}^{\prime} + 3\mathrm{O}_{\mathrm{O}}^{\times} + V_{\mathrm{O}}^{\bullet\bullet}";
        let Item::Reaction { label, read } = read_line(line) else {
            panic!("not a reaction");
        };
        assert_eq!(label, Some(0..4));
        assert!(read.from_latex());
        let (over, span) = read.over_arrow.clone().expect("host over the arrow");
        assert_eq!(over, "ZrO2");
        assert_eq!(&line[span], r"\mathrm{ZrO_2}");
        let reaction = read.reaction.expect("reads");
        let first = &reaction.left[0];
        assert_eq!(&line[first.span.clone()], r"\mathrm{Y_2O_3}");
        let vacancy = &reaction.right[2];
        assert!(
            line[vacancy.span.clone()].starts_with("V_{"),
            "{:?}",
            vacancy.span
        );
    }

    #[test]
    fn plain_notation_with_text_over_a_latex_arrow() {
        // source: common practice (Y2O3 dissolving in ZrO2); the condition
        // under the arrow is not a host and is passed over.
        let line = r"Y2O3 \xrightarrow[1273 K]{\mathrm{ZrO_2}} 2Y_Zr' + 3O_O + V_O..";
        let read = read_reaction(line, 0..line.len());
        assert!(read.reaction.is_some(), "{:?}", read.diagnostics);
        let (over, span) = read.over_arrow.expect("text over the arrow");
        assert_eq!(over, "ZrO2");
        assert_eq!(&line[span], r"\mathrm{ZrO_2}");
        // A temperature over the arrow is no host: nothing is taken.
        let line = r"Y2O3 \xrightarrow{1273 K} 2Y_Zr' + 3O_O + V_O..";
        let read = read_reaction(line, 0..line.len());
        let tracker: HostTracker = HostTracker::new(None);
        let chosen = tracker.for_reaction(&read);
        assert!(chosen.taken.is_none() && chosen.warning.is_none());
    }

    #[test]
    fn the_tracker_takes_the_host_over_the_arrow_only_when_none_is_in_force() {
        let text = r"\mathrm{Y_2O_3} \xrightarrow{\mathrm{ZrO_2}} 2\mathrm{Y}_{\mathrm{Zr}}^{\prime} + 3\mathrm{O}_{\mathrm{O}}^{\times} + V_{\mathrm{O}}^{\bullet\bullet}";
        let read = read_reaction(text, 0..text.len());
        let mut tracker: HostTracker = HostTracker::new(None);
        let chosen = tracker.for_reaction(&read);
        assert_eq!(
            chosen.taken.as_ref().map(|(_, over)| over.as_str()),
            Some("ZrO2")
        );
        assert_eq!(
            tracker.host_for(&chosen).map(|h| h.formula_text.as_str()),
            Some("ZrO2")
        );
        assert!(tracker.host().is_none(), "for_reaction changes nothing");
        tracker.follow(&chosen);
        assert_eq!(
            tracker.host().map(|h| h.formula_text.as_str()),
            Some("ZrO2")
        );
        let ceria = HostTracker::new(Some(Arc::new(Host::from_spec("CeO2").expect("host"))));
        let chosen = ceria.for_reaction(&read);
        assert!(chosen.taken.is_none());
        assert_eq!(chosen.warning.map(|d| d.code), Some(Code::HostOverArrow));
        // A broken `host` line leaves no host; one over an arrow repairs that.
        let mut broken: HostTracker = HostTracker::new(None);
        broken.declare(3, &Err(()));
        assert_eq!(broken.broken_line(), Some(3));
        let chosen = broken.for_reaction(&read);
        broken.follow(&chosen);
        assert_eq!(broken.broken_line(), None);
    }
}
