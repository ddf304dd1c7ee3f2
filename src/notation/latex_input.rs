//! Reads a reaction written in LaTeX math, as pasted from a manuscript, and
//! rewrites it as plain notation the parser reads.
//!
//! In: one line of LaTeX (`V_{\mathrm{O}}^{\bullet\bullet}`,
//! `\mathrm{O}_{\mathrm{O}}^{\times} \xrightarrow{\mathrm{ZrO_2}} ...`). Out: a
//! `Normalised` text (`V_O^..`) with, for every byte of it, the byte range of
//! the LaTeX it came from, so a diagnostic found in the plain text points at
//! the right column of what the user pasted; the text set over the arrow (the
//! host, as manuscripts write it); notes on readings worth knowing. Commands
//! it does not know are errors with their column, never guesses.
//! Grammar and the list of commands: grammar/repl.md, "LaTeX input".

// Byte offsets and indices here stay within one line of input, so their
// sums are bounded by its length: saturating steps never saturate there, and
// spell out that no overflow check is wanted.

use super::{ARROWS, Arrow, Span, takes_text_over};
use crate::base::diagnostic::{Code, Diagnostic};

/// Plain notation made from LaTeX, with a map back to the LaTeX.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Normalised {
    /// The reaction in plain notation.
    pub text: String,
    /// For each byte of `text`, the byte range of the source it came from.
    map: Vec<Span>,
    source_len: usize,
    /// What was written over the arrow (`\xrightarrow{..}`, `\overset{..}{..}`),
    /// as plain text, with its span in the source. Usually the host formula.
    pub over_arrow: Option<(String, Span)>,
    /// Readings worth telling the user about (an upright V read as vanadium).
    pub notes: Vec<Diagnostic>,
}

impl Normalised {
    /// The span of the source that a span of `text` came from.
    pub fn source_span(&self, span: Span) -> Span {
        let at = |i: usize| self.map.get(i).cloned();
        if span.start >= span.end {
            return match at(span.start) {
                Some(s) => s.start..s.start,
                None => self.source_len..self.source_len,
            };
        }
        let start = at(span.start).map_or(self.source_len, |s| s.start);
        let end = at(span.end.saturating_sub(1)).map_or(self.source_len, |s| s.end);
        start..end.max(start)
    }

    /// Moves a diagnostic found in `text` onto the source, whose first byte
    /// sits at `offset` of the line the user sees.
    pub fn relocate(&self, mut diagnostic: Diagnostic, offset: usize) -> Diagnostic {
        let span = self.source_span(diagnostic.span.clone());
        diagnostic.span = span.start.saturating_add(offset)..span.end.saturating_add(offset);
        diagnostic
    }
}

/// Whether a line should be read as LaTeX: plain notation never holds a
/// backslash or a dollar sign.
pub fn looks_like_latex(text: &str) -> bool {
    text.contains('\\') || text.contains('$')
}

/// Rewrites LaTeX math as plain notation. Spans in errors refer to `source`.
pub fn normalise(source: &str) -> Result<Normalised, Diagnostic> {
    let mut reader = Reader {
        src: source,
        out: String::with_capacity(source.len()),
        map: Vec::with_capacity(source.len()),
        over_arrow: None,
        notes: Vec::new(),
        lead: None,
    };
    reader.run(0..source.len(), Mode::Math)?;
    // Trim the spaces that layout commands leave at either end.
    let lead = reader
        .out
        .len()
        .saturating_sub(reader.out.trim_start().len());
    let text = reader.out.trim().to_string();
    let map = reader
        .map
        .get(lead..lead.saturating_add(text.len()))
        .map(<[Span]>::to_vec)
        .unwrap_or_default();
    Ok(Normalised {
        text,
        map,
        source_len: source.len(),
        over_arrow: reader.over_arrow,
        notes: reader.notes,
    })
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Mode {
    /// Ordinary math: terms, arrows, formulas.
    Math,
    /// Inside `_{..}`: a site or a count; spaces mean nothing.
    Subscript,
}

/// Commands that take one argument and only set the font of it.
const FONT_COMMANDS: &[&str] = &[
    "mathrm",
    "mathit",
    "text",
    "textrm",
    "textit",
    "mathnormal",
    "mathup",
];
/// Font commands that set upright type (IUPAC: upright V is vanadium).
const UPRIGHT_COMMANDS: &[&str] = &["mathrm", "text", "textrm", "mathup"];
const SPACES: &[&str] = &[",", ";", ":", " ", "quad", "qquad", "enspace", "thinspace"];
/// Commands that only lay out an equation; dropped with their argument.
const LAYOUT_WITH_ARGUMENT: &[&str] = &["label", "tag"];
const LAYOUT: &[&str] = &["nonumber", "notag", "displaystyle", "textstyle"];
const ENVIRONMENTS: &[&str] = &[
    "equation",
    "equation*",
    "align",
    "align*",
    "aligned",
    "gather",
    "gather*",
    "multline",
    "multline*",
    "eqnarray",
    "eqnarray*",
    "math",
    "displaymath",
];

/// The commands the reader knows, for the help of an unknown one.
const KNOWN_HELP: &str = "known here: \\mathrm \\mathit \\text \\frac \\tfrac \\bullet \\prime \\times \\cdot \\, \\; \\longrightarrow \\rightarrow \\rightleftharpoons \\xrightarrow \\overset \\varnothing \\square \\{ \\} \\left \\right \\label; see grammar/repl.md";

/// The plain arrow a LaTeX command spells (`rightarrow` → `->`), from the
/// one arrow table, and whether the command takes the text over the arrow.
fn arrow_command(name: &str) -> Option<(&'static str, bool)> {
    ARROWS
        .iter()
        .find(|(spelling, _)| spelling.strip_prefix('\\') == Some(name))
        .map(|(spelling, arrow)| {
            let plain = match arrow {
                Arrow::Forward => "->",
                Arrow::Equilibrium => "<=>",
                Arrow::Equals => "=",
            };
            (plain, takes_text_over(spelling))
        })
}

struct Reader<'a> {
    src: &'a str,
    out: String,
    map: Vec<Span>,
    over_arrow: Option<(String, Span)>,
    notes: Vec<Diagnostic>,
    /// Where markup that wrote nothing itself began (`\mathrm{`, `{`, `$`):
    /// the next byte written is mapped from there, so a diagnostic on it
    /// underlines the markup too.
    lead: Option<usize>,
}

fn error(code: Code, span: Span, message: impl Into<String>) -> Diagnostic {
    Diagnostic::new(code, span, message)
}

impl Reader<'_> {
    fn emit(&mut self, text: &str, from: Span) {
        let from = match self.lead.take() {
            Some(l) if l < from.start => l..from.end,
            _ => from,
        };
        self.out.push_str(text);
        for _ in 0..text.len() {
            self.map.push(from.clone());
        }
    }

    /// An arrow or other word that stands between spaces.
    fn emit_spaced(&mut self, text: &str, from: Span) {
        if !self.out.is_empty() && !self.out.ends_with(' ') {
            self.emit(" ", from.clone());
        }
        self.emit(text, from.clone());
        self.emit(" ", from);
    }

    /// Markup starts at `at` and writes nothing yet.
    fn begin_markup(&mut self, at: usize) {
        self.lead = Some(self.lead.map_or(at, |l| l.min(at)));
    }

    /// Markup that began when the output was `before` bytes long ends at
    /// `end`: the last byte it wrote is mapped up to there (a closing brace).
    fn end_markup(&mut self, before: usize, end: usize) {
        if self.out.len() > before {
            if let Some(last) = self.map.last_mut() {
                last.end = last.end.max(end);
            }
        }
    }

    fn char_at(&self, i: usize) -> Option<char> {
        self.src.get(i..).and_then(|s| s.chars().next())
    }

    fn skip_spaces(&self, mut i: usize, end: usize) -> usize {
        while i < end && self.char_at(i).is_some_and(char::is_whitespace) {
            i = i.saturating_add(self.char_at(i).map_or(1, char::len_utf8));
        }
        i
    }

    /// Reads a command name after the backslash at `i`: letters, or one other
    /// character. Returns the name and the index after it.
    fn command_at(&self, i: usize, end: usize) -> Result<(&str, usize), Diagnostic> {
        let start = i.saturating_add(1);
        let letters = self.src.get(start..end).map_or(0, |s| {
            s.find(|c: char| !c.is_ascii_alphabetic())
                .unwrap_or(s.len())
        });
        if letters > 0 {
            let end = start.saturating_add(letters);
            return Ok((&self.src[start..end], end));
        }
        match self.char_at(start) {
            Some(c) if start < end => {
                let end = start.saturating_add(c.len_utf8());
                Ok((&self.src[start..end], end))
            }
            _ => Err(error(
                Code::LatexCommand,
                i..i.saturating_add(1),
                "a backslash with no command after it",
            )
            .with_help("remove the stray `\\`")),
        }
    }

    /// Index of the `}` closing the `{` at `open`, skipping `\{` and `\}`.
    fn closing_brace(&self, open: usize, end: usize) -> Result<usize, Diagnostic> {
        let mut depth = 0usize;
        let mut i = open;
        while i < end {
            let Some(c) = self.char_at(i) else { break };
            match c {
                '\\' => {
                    let next = i.saturating_add(1);
                    i = next.saturating_add(self.char_at(next).map_or(0, char::len_utf8));
                    continue;
                }
                '{' => depth = depth.saturating_add(1),
                '}' => {
                    depth = depth.saturating_sub(1);
                    if depth == 0 {
                        return Ok(i);
                    }
                }
                _ => {}
            }
            i = i.saturating_add(c.len_utf8());
        }
        Err(error(
            Code::LatexBraces,
            open..open.saturating_add(1),
            "this `{` is never closed",
        )
        .with_help("add the matching `}`"))
    }

    /// The argument starting at `i` (after spaces): a `{group}`, a command
    /// with its own arguments, or one character. Returns the argument's inner
    /// span and the index after it.
    fn argument(&self, i: usize, end: usize, owner: Span) -> Result<(Span, usize), Diagnostic> {
        let i = self.skip_spaces(i, end);
        match self.char_at(i) {
            Some('{') if i < end => {
                let close = self.closing_brace(i, end)?;
                Ok((i.saturating_add(1)..close, close.saturating_add(1)))
            }
            Some('\\') if i < end => {
                let (name, mut next) = self.command_at(i, end)?;
                let arity = match name {
                    n if FONT_COMMANDS.contains(&n) => 1,
                    "frac" | "tfrac" | "dfrac" => 2,
                    _ => 0,
                };
                for _ in 0..arity {
                    let (_, after) = self.argument(next, end, i..next)?;
                    next = after;
                }
                Ok((i..next, next))
            }
            Some(c) if i < end && c != '}' => Ok((
                i..i.saturating_add(c.len_utf8()),
                i.saturating_add(c.len_utf8()),
            )),
            _ => Err(error(
                Code::LatexBraces,
                owner.clone(),
                format!(
                    "`{}` needs an argument",
                    self.src.get(self.span_text_range(&owner)).unwrap_or("")
                ),
            )
            .with_help("write it in braces, e.g. `_{\\mathrm{O}}` or `\\frac{1}{2}`")),
        }
    }

    fn span_text_range(&self, span: &Span) -> Span {
        span.start.min(self.src.len())..span.end.min(self.src.len())
    }

    /// An optional `[..]` argument at `i`: the index after it.
    fn skip_optional(&self, i: usize, end: usize) -> Result<usize, Diagnostic> {
        let j = self.skip_spaces(i, end);
        if self.char_at(j) != Some('[') || j >= end {
            return Ok(i);
        }
        match self.src.get(j..end).and_then(|s| s.find(']')) {
            Some(close) => Ok(j.saturating_add(close).saturating_add(1)),
            None => Err(error(
                Code::LatexBraces,
                j..j.saturating_add(1),
                "this `[` is never closed",
            )
            .with_help("add the matching `]`")),
        }
    }

    fn run(&mut self, range: Span, mode: Mode) -> Result<(), Diagnostic> {
        let end = range.end.min(self.src.len());
        let mut i = range.start;
        while i < end {
            let Some(c) = self.char_at(i) else { break };
            let here = i..i.saturating_add(c.len_utf8());
            match c {
                c if c.is_whitespace() => {
                    let next = self.skip_spaces(i, end);
                    let follows = self.char_at(next);
                    // Math mode ignores spaces; keep one where it separates terms.
                    if mode == Mode::Math
                        && next < end
                        && !matches!(follows, Some('_' | '^' | '\''))
                        && !self.out.ends_with(' ')
                    {
                        self.emit(" ", i..next);
                    }
                    i = next;
                }
                '$' | '&' => {
                    self.begin_markup(i);
                    i = i.saturating_add(1);
                }
                '%' => return Ok(()),
                '~' => {
                    self.emit(" ", here);
                    i = i.saturating_add(1);
                }
                '{' => {
                    let close = self.closing_brace(i, end)?;
                    let before = self.out.len();
                    self.begin_markup(i);
                    self.run(i.saturating_add(1)..close, mode)?;
                    self.end_markup(before, close.saturating_add(1));
                    i = close.saturating_add(1);
                }
                '}' => {
                    return Err(error(Code::LatexBraces, here, "this `}` closes nothing")
                        .with_help("remove it, or add the `{` it belongs to"));
                }
                '_' => i = self.subscript(i, end)?,
                '^' => i = self.superscript(i, end)?,
                '\\' => i = self.command(i, end, mode)?,
                _ => {
                    let text = &self.src[here.clone()];
                    self.emit(text, here);
                    i = i.saturating_add(c.len_utf8());
                }
            }
        }
        Ok(())
    }

    /// `_x`, `_{..}`: a site (`_O`, `_{Fe:A}`) or, when only a number, a count
    /// in a formula (`O_2` -> `O2`).
    fn subscript(&mut self, at: usize, end: usize) -> Result<usize, Diagnostic> {
        let (inner, next) = self.argument(at.saturating_add(1), end, at..at.saturating_add(1))?;
        let before = self.out.len();
        self.run(inner.clone(), Mode::Subscript)?;
        let written = &self.out[before..];
        if written.is_empty() {
            return Err(error(Code::LatexBraces, at..next, "an empty subscript")
                .with_help("write the site, e.g. `_{\\mathrm{O}}`, or remove the `_`"));
        }
        let is_count = written.chars().all(|c| c.is_ascii_digit() || c == '.');
        if !is_count {
            let braced = !written.chars().all(|c| c.is_ascii_alphanumeric());
            let (open, close) = if braced { ("_{", "}") } else { ("_", "") };
            self.out.insert_str(before, open);
            for k in 0..open.len() {
                self.map
                    .insert(before.saturating_add(k), at..at.saturating_add(1));
            }
            if braced {
                self.emit(close, next.saturating_sub(1)..next);
            }
        }
        self.end_markup(before, next);
        Ok(next)
    }

    /// `^x`, `^{..}`: an effective charge, written as `^` and ASCII marks.
    fn superscript(&mut self, at: usize, end: usize) -> Result<usize, Diagnostic> {
        let (inner, next) = self.argument(at.saturating_add(1), end, at..at.saturating_add(1))?;
        self.emit("^", at..at.saturating_add(1));
        let before = self.out.len();
        self.marks(inner, at)?;
        if self.out.len() == before {
            return Err(error(
                Code::LatexCharge,
                at..next,
                "a superscript with no charge marks",
            )
            .with_help("write `\\bullet` per +1, `\\prime` per −1, or `\\times` for neutral"));
        }
        self.end_markup(before, next);
        Ok(next)
    }

    /// Charge marks inside a superscript.
    fn marks(&mut self, range: Span, caret: usize) -> Result<(), Diagnostic> {
        let mut i = range.start;
        let mut repeat: Option<(usize, Span)> = None;
        while i < range.end {
            let Some(c) = self.char_at(i) else { break };
            let here = i..i.saturating_add(c.len_utf8());
            let (mark, next) = match c {
                c if c.is_whitespace() => {
                    i = i.saturating_add(c.len_utf8());
                    continue;
                }
                '{' => {
                    let close = self.closing_brace(i, range.end)?;
                    self.marks(i.saturating_add(1)..close, caret)?;
                    i = close.saturating_add(1);
                    continue;
                }
                '0'..='9' => {
                    let digits_end = self.src[i..range.end]
                        .find(|c: char| !c.is_ascii_digit())
                        .map_or(range.end, |n| i.saturating_add(n));
                    let n: usize = self.src[i..digits_end].parse().unwrap_or(usize::MAX);
                    if n == 0 || n > 8 {
                        return Err(error(
                            Code::LatexCharge,
                            i..digits_end,
                            format!("a charge count of {}", &self.src[i..digits_end]),
                        )
                        .with_help(
                            "an effective charge counts 1 to 8 marks, e.g. `^{2\\bullet}`",
                        ));
                    }
                    repeat = Some((n, i..digits_end));
                    i = digits_end;
                    continue;
                }
                '.' | '*' | '•' | '∙' | '·' => (".", here.end),
                '\'' | '′' | '’' => ("'", here.end),
                '″' => ("''", here.end),
                'x' | 'X' | '×' => ("x", here.end),
                '+' | '-' | '−' => {
                    return Err(error(
                        Code::LatexCharge,
                        here,
                        "a real ionic charge in a Kröger–Vink superscript",
                    )
                    .with_help("effective charges are marks: `\\bullet` per +1, `\\prime` per −1, `\\times` for neutral"));
                }
                '\\' => {
                    let (name, next) = self.command_at(i, range.end)?;
                    let mark = match name {
                        "bullet" | "cdot" => ".",
                        "prime" => "'",
                        "times" => "x",
                        "," | ";" | ":" | " " | "!" => {
                            i = next;
                            continue;
                        }
                        _ => {
                            return Err(error(
                                Code::LatexCharge,
                                i..next,
                                format!("`\\{name}` is not a charge mark"),
                            )
                            .with_help("write `\\bullet` per +1, `\\prime` per −1, or `\\times` for neutral"));
                        }
                    };
                    (mark, next)
                }
                _ => {
                    return Err(error(
                        Code::LatexCharge,
                        here,
                        format!("`{c}` is not a charge mark"),
                    )
                    .with_help(
                        "write `\\bullet` per +1, `\\prime` per −1, or `\\times` for neutral",
                    ));
                }
            };
            let (count, from) = match repeat.take() {
                Some((n, digits)) => (n, digits.start..next),
                None => (1, i..next),
            };
            self.emit(&mark.repeat(count), from);
            i = next;
        }
        if let Some((_, digits)) = repeat {
            return Err(error(
                Code::LatexCharge,
                digits,
                "a count with no charge mark after it",
            )
            .with_help("write the mark after the count, e.g. `^{2\\bullet}`; real charges such as `2+` are not effective charges")
            .with_label(format!("superscript at column {}", caret.saturating_add(1))));
        }
        Ok(())
    }

    /// A command at `at` (the backslash). Returns the index after it and its arguments.
    fn command(&mut self, at: usize, end: usize, mode: Mode) -> Result<usize, Diagnostic> {
        let (name, mut next) = self.command_at(at, end)?;
        let name = name.to_string();
        let before = self.out.len();
        self.begin_markup(at);
        let here = at..next;
        // TeX swallows the spaces after a command spelled with letters.
        let after_spaces = |r: &Self, n: usize| {
            if name.chars().all(|c| c.is_ascii_alphabetic()) {
                r.skip_spaces(n, end)
            } else {
                n
            }
        };
        match name.as_str() {
            n if FONT_COMMANDS.contains(&n) => {
                let (inner, after) = self.argument(next, end, here.clone())?;
                let upright_v = UPRIGHT_COMMANDS.contains(&n)
                    && mode == Mode::Math
                    && self.src.get(inner.clone()).map(str::trim) == Some("V")
                    && self.char_at(self.skip_spaces(after, end)) == Some('_');
                if upright_v {
                    self.emit("el:V", inner.clone());
                    self.notes.push(
                        Diagnostic::new(
                            Code::UprightV,
                            at..after,
                            "an upright V is read as vanadium",
                        )
                        .with_help("IUPAC writes the vacancy as an italic V: for a vacancy write `V` or `\\mathit{V}`"),
                    );
                } else {
                    self.run(inner, mode)?;
                }
                self.end_markup(before, after);
                Ok(after)
            }
            "frac" | "tfrac" | "dfrac" => {
                let (numerator, after) = self.argument(next, end, here.clone())?;
                let (denominator, after) = self.argument(after, end, here)?;
                self.run(numerator, mode)?;
                self.emit("/", at..after);
                self.run(denominator, mode)?;
                self.end_markup(before, after);
                Ok(after)
            }
            "bullet" | "cdot" => {
                self.emit(".", here);
                Ok(after_spaces(self, next))
            }
            "prime" => {
                self.emit("'", here);
                Ok(after_spaces(self, next))
            }
            "times" => {
                self.emit("x", here);
                Ok(after_spaces(self, next))
            }
            "!" => Ok(next),
            n if SPACES.contains(&n) => {
                if mode == Mode::Math && !self.out.ends_with(' ') {
                    self.emit(" ", here);
                }
                Ok(after_spaces(self, next))
            }
            "{" | "}" => {
                self.emit(&name, here);
                Ok(next)
            }
            "left" | "right" | "bigl" | "bigr" | "Bigl" | "Bigr" | "big" | "Big" => {
                let n = self.skip_spaces(next, end);
                // `\left.` is an invisible delimiter.
                Ok(if self.char_at(n) == Some('.') { n.saturating_add(1) } else { n })
            }
            n if arrow_command(n).is_some() => {
                let (arrow, over) = arrow_command(n).unwrap_or(("->", false));
                if over {
                    next = self.skip_optional(next, end)?;
                    let (over, after) = self.argument(next, end, here.clone())?;
                    self.note_over_arrow(over);
                    self.emit_spaced(arrow, at..after);
                    Ok(after)
                } else {
                    self.emit_spaced(arrow, here);
                    Ok(after_spaces(self, next))
                }
            }
            "overset" | "stackrel" => {
                let (over, after) = self.argument(next, end, here.clone())?;
                let (base, after) = self.argument(after, end, here)?;
                self.note_over_arrow(over);
                let before = self.out.len();
                self.run(base.clone(), Mode::Math)?;
                let written = self.out[before..].trim().to_string();
                if !matches!(written.as_str(), "->" | "<=>" | "=") {
                    return Err(error(
                        Code::LatexCommand,
                        base,
                        format!("`\\{name}` is read over an arrow only"),
                    )
                    .with_help("write `\\overset{\\mathrm{ZrO_2}}{\\longrightarrow}`, or drop the annotation"));
                }
                Ok(after)
            }
            "varnothing" | "emptyset" => {
                self.emit("nil", here);
                Ok(after_spaces(self, next))
            }
            "square" | "Box" => {
                self.emit("□", here);
                Ok(after_spaces(self, next))
            }
            "\\" => {
                // A row break in an aligned block: drop it and its `[..]` spacing.
                self.skip_optional(next, end)
            }
            "(" | ")" | "[" | "]" => Ok(next),
            n if LAYOUT.contains(&n) => Ok(after_spaces(self, next)),
            n if LAYOUT_WITH_ARGUMENT.contains(&n) => {
                let (_, after) = self.argument(next, end, here)?;
                Ok(after)
            }
            "begin" | "end" => {
                let (inner, after) = self.argument(next, end, here)?;
                let environment = self.src.get(inner.clone()).unwrap_or("");
                if ENVIRONMENTS.contains(&environment) {
                    Ok(after)
                } else {
                    Err(error(
                        Code::LatexCommand,
                        inner,
                        format!("the `{environment}` environment is not read here"),
                    )
                    .with_help("paste the reaction itself, or an equation/align block"))
                }
            }
            "ce" | "pu" => Err(error(
                Code::LatexCommand,
                here,
                format!("`\\{name}{{..}}` chemistry-package input is not read"),
            )
            .with_help("paste the math form, e.g. `V_{\\mathrm{O}}^{\\bullet\\bullet}`, or type plain notation `V_O..`")),
            _ => Err(error(
                Code::LatexCommand,
                here,
                format!("`\\{name}` is not a command the reaction reader knows"),
            )
            .with_help(KNOWN_HELP)),
        }
    }

    /// Reads what is set over an arrow. It is an annotation (a host, a
    /// temperature), so a part the reader cannot turn into text is dropped.
    fn note_over_arrow(&mut self, span: Span) {
        let mut sub = Reader {
            src: self.src,
            out: String::new(),
            map: Vec::new(),
            over_arrow: None,
            notes: Vec::new(),
            lead: None,
        };
        if sub.run(span.clone(), Mode::Math).is_ok() {
            let text = sub.out.trim().to_string();
            if !text.is_empty() && self.over_arrow.is_none() {
                self.over_arrow = Some((text, span));
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn plain(latex: &str) -> String {
        match normalise(latex) {
            Ok(n) => n.text,
            Err(d) => panic!("{latex}: {} at {:?}", d.message, d.span),
        }
    }

    // source: IUPAC, Nomenclature of Inorganic Chemistry (Recommendations
    // 2005), IR-11.4.2 to IR-11.4.5 and Table IR-11.1: italic V for the
    // vacancy, dots and primes as superscripts, `i` for interstitial sites.
    #[test]
    fn reads_species_as_manuscripts_write_them() {
        assert_eq!(plain(r"V_{\mathrm{O}}^{\bullet\bullet}"), "V_O^..");
        assert_eq!(plain(r"V_{\mathrm{O}}^{2\bullet}"), "V_O^..");
        assert_eq!(plain(r"\mathrm{Y}_{\mathrm{Zr}}^{\prime}"), "Y_Zr^'");
        assert_eq!(plain(r"\mathrm{O}_\mathrm{O}^\times"), "O_O^x");
        assert_eq!(plain(r"\mathrm{Ag}_{i}^{\bullet}"), "Ag_i^.");
        assert_eq!(plain(r"e^{\prime}"), "e^'");
        assert_eq!(plain(r"h^{\bullet}"), "h^.");
        assert_eq!(plain(r"e'"), "e'");
        assert_eq!(plain(r"\mathrm{Fe}_{\mathrm{Fe}\mathrm{:A}}"), "Fe_{Fe:A}");
        assert_eq!(
            plain(r"(\mathrm{Ca}_{\mathrm{K}}^{\prime} V_{\mathrm{K}}^{\prime})^{\times}"),
            "(Ca_K^' V_K^')^x"
        );
    }

    #[test]
    fn reads_reactions_with_arrows_fractions_and_gases() {
        let n = normalise(
            r"$\mathrm{O}_{\mathrm{O}}^{\times} \xrightarrow{\mathrm{ZrO_2}} V_{\mathrm{O}}^{\bullet\bullet} + 2\,e^{\prime} + \tfrac{1}{2}\,\mathrm{O_{2}(g)}$",
        )
        .unwrap();
        assert_eq!(n.text, "O_O^x -> V_O^.. + 2 e^' + 1/2 O2(g)");
        assert_eq!(n.over_arrow.as_ref().map(|(t, _)| t.as_str()), Some("ZrO2"));
        assert_eq!(
            plain(r"\varnothing \rightleftharpoons V_{Zr}'''' + 2V_O^{\bullet\bullet}"),
            "nil <=> V_Zr'''' + 2V_O^.."
        );
        assert_eq!(plain(r"\mathrm{La}_{0.9}\mathrm{Sr}_{0.1}"), "La0.9Sr0.1");
    }

    #[test]
    fn upright_v_is_vanadium_with_a_note() {
        let n = normalise(r"\mathrm{V}_{\mathrm{Ti}}^{\bullet}").unwrap();
        assert_eq!(n.text, "el:V_Ti^.");
        assert_eq!(n.notes.len(), 1);
        assert_eq!(n.notes[0].code, Code::UprightV);
        assert_eq!(plain(r"\mathit{V}_{\mathrm{O}}^{\bullet}"), "V_O^.");
    }

    #[test]
    fn errors_point_at_the_latex() {
        let source = r"V_{\mathrm{O}}^{\bullet} + \foo{x}";
        let d = normalise(source).unwrap_err();
        assert_eq!(d.code, Code::LatexCommand);
        assert_eq!(&source[d.span.clone()], r"\foo");
        let d = normalise(r"\mathrm{O}^{2-}").unwrap_err();
        assert_eq!(d.code, Code::LatexCharge);
        let d = normalise(r"\mathrm{O}_{\mathrm{O}").unwrap_err();
        assert_eq!(d.code, Code::LatexBraces);
        let d = normalise(r"V_").unwrap_err();
        assert_eq!(d.code, Code::LatexBraces);
        assert!(normalise("\\").is_err());
    }

    #[test]
    fn spans_map_back_to_the_source() {
        let source = r"\mathrm{Y}_{\mathrm{Zr}}^{\prime} + \mathrm{Xq}_{i}";
        let n = normalise(source).unwrap();
        let at = n.text.find("Xq").unwrap();
        let span = n.source_span(at..at + 2);
        assert_eq!(&source[span], r"\mathrm{Xq}");
        let end = n.source_span(n.text.len()..n.text.len());
        assert_eq!(end, source.len()..source.len());
        // A span over a whole term covers its markup, braces included.
        let whole = n.source_span(0..n.text.find(' ').unwrap());
        assert_eq!(&source[whole], r"\mathrm{Y}_{\mathrm{Zr}}^{\prime}");
        let all = n.source_span(0..n.text.len());
        assert_eq!(all, 0..source.len());
    }
}
