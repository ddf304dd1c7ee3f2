//! The line editor's helper: completion, hints, multi-line input and colour.
//!
//! In: the line being edited and the session's `Vocabulary` (host sites,
//! species used, labels), refreshed by the driver after every input. Out:
//! completion candidates (commands, element symbols, the host's site labels,
//! species already used, reaction numbers and labels, forms, file names),
//! a hint (the rest of a command and its usage, or a line from history),
//! whether the input is complete, and the line with colour. Colour only wraps
//! characters in escape sequences, so the display width never changes.

use super::{ArgKind, COMMANDS, SIGIL, Vocabulary, continues, find_command};
use lacuna::base::elements;
use lacuna::file::reader::{self, Line};
use lacuna::notation::arrow_at;
use lacuna::typeset::Form;
use rustyline::completion::{Completer, FilenameCompleter, Pair};
use rustyline::highlight::{CmdKind, Highlighter};
use rustyline::hint::{Hint, Hinter, HistoryHinter};
use rustyline::validate::{ValidationContext, ValidationResult, Validator};
use rustyline::{Completer, Context, Helper, Hinter, Validator};
use std::borrow::Cow;
use std::cell::RefCell;
use std::rc::Rc;

/// Shared between the helper's parts; the driver replaces it after each input.
pub type SharedVocabulary = Rc<RefCell<Vocabulary>>;

/// The editor helper: each part is its own type, testable without a terminal.
#[derive(Helper, Completer, Hinter, Validator)]
pub struct WorkbenchHelper {
    #[rustyline(Completer)]
    completer: WorkbenchCompleter,
    #[rustyline(Hinter)]
    hinter: WorkbenchHinter,
    #[rustyline(Validator)]
    validator: BlockValidator,
    highlighter: WorkbenchHighlighter,
    vocabulary: SharedVocabulary,
}

impl WorkbenchHelper {
    /// `color`: whether to colour the line (off for NO_COLOR or no terminal).
    pub fn new(color: bool) -> WorkbenchHelper {
        let vocabulary = SharedVocabulary::default();
        WorkbenchHelper {
            completer: WorkbenchCompleter {
                vocabulary: vocabulary.clone(),
                files: FilenameCompleter::new(),
            },
            hinter: WorkbenchHinter {
                history: HistoryHinter::new(),
            },
            validator: BlockValidator,
            highlighter: WorkbenchHighlighter { enabled: color },
            vocabulary,
        }
    }

    pub fn set_vocabulary(&self, vocabulary: Vocabulary) {
        *self.vocabulary.borrow_mut() = vocabulary;
    }
}

impl Highlighter for WorkbenchHelper {
    fn highlight<'l>(&self, line: &'l str, pos: usize) -> Cow<'l, str> {
        self.highlighter.highlight(line, pos)
    }

    fn highlight_prompt<'b, 's: 'b, 'p: 'b>(
        &'s self,
        prompt: &'p str,
        default: bool,
    ) -> Cow<'b, str> {
        self.highlighter.highlight_prompt(prompt, default)
    }

    fn highlight_hint<'h>(&self, hint: &'h str) -> Cow<'h, str> {
        self.highlighter.highlight_hint(hint)
    }

    fn highlight_char(&self, line: &str, pos: usize, kind: CmdKind) -> bool {
        self.highlighter.highlight_char(line, pos, kind)
    }
}

// ---------------------------------------------------------------------------
// Completion

/// Completes commands, element symbols, site labels, species, reactions,
/// forms and file names.
pub struct WorkbenchCompleter {
    vocabulary: SharedVocabulary,
    files: FilenameCompleter,
}

impl Completer for WorkbenchCompleter {
    type Candidate = Pair;

    fn complete(
        &self,
        line: &str,
        pos: usize,
        ctx: &Context<'_>,
    ) -> rustyline::Result<(usize, Vec<Pair>)> {
        let Some(before) = line.get(..pos) else {
            return Ok((pos, Vec::new()));
        };
        if let Some(spec) = command_of(before) {
            if spec.arguments == ArgKind::Path && before.contains(char::is_whitespace) {
                return self.files.complete(line, pos, ctx);
            }
        }
        Ok(complete_at(&self.vocabulary.borrow(), line, pos))
    }
}

/// The command whose arguments are being typed on the last line of `before`.
fn command_of(before: &str) -> Option<&'static super::CommandSpec> {
    let current = before.rsplit('\n').next().unwrap_or(before).trim_start();
    let word = current.strip_prefix(SIGIL)?.split_whitespace().next()?;
    find_command(word)
}

fn pair(display: &str, replacement: String) -> Pair {
    Pair {
        display: display.to_string(),
        replacement,
    }
}

fn push_unique(out: &mut Vec<Pair>, candidate: Pair) {
    if !out.iter().any(|p| p.replacement == candidate.replacement) {
        out.push(candidate);
    }
}

/// Candidates for the word before `pos`: the start of the text they replace,
/// and the candidates. Pure, for tests.
pub fn complete_at(vocabulary: &Vocabulary, line: &str, pos: usize) -> (usize, Vec<Pair>) {
    let Some(before) = line.get(..pos) else {
        return (pos, Vec::new());
    };
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    let current = &before[line_start..];
    let word_start = line_start
        + current
            .rfind(|c: char| c.is_whitespace() || c == '+' || c == '(')
            .map_or(0, |i| {
                i + current[i..].chars().next().map_or(1, char::len_utf8)
            });
    let word = &before[word_start..];
    let mut out = Vec::new();
    let trimmed = current.trim_start();
    if let Some(command_text) = trimmed.strip_prefix(SIGIL) {
        if !command_text.contains(char::is_whitespace) {
            // Still typing the command's name.
            for spec in COMMANDS {
                if spec.name.starts_with(command_text) {
                    push_unique(
                        &mut out,
                        pair(
                            &format!("{SIGIL}{}", spec.name),
                            format!("{SIGIL}{} ", spec.name),
                        ),
                    );
                }
            }
            return (word_start, out);
        }
        let Some(spec) = command_text
            .split_whitespace()
            .next()
            .and_then(find_command)
        else {
            return (pos, out);
        };
        let argument_index =
            command_text.split_whitespace().count() - 1 - usize::from(!word.is_empty());
        let entries = |out: &mut Vec<Pair>| {
            for n in 1..=vocabulary.entries {
                let n = n.to_string();
                if n.starts_with(word) {
                    push_unique(out, pair(&n, n.clone()));
                }
            }
            for label in &vocabulary.labels {
                if label.starts_with(word) {
                    push_unique(out, pair(label, label.clone()));
                }
            }
            if "all".starts_with(word) {
                push_unique(out, pair("all", "all".to_string()));
            }
        };
        match spec.arguments {
            ArgKind::Command => {
                for c in COMMANDS {
                    if c.name.starts_with(word.trim_start_matches(SIGIL)) {
                        push_unique(&mut out, pair(c.name, c.name.to_string()));
                    }
                }
            }
            ArgKind::Entries => entries(&mut out),
            ArgKind::FormThenEntries => {
                if argument_index == 0 {
                    for form in Form::ALL {
                        if form.name().starts_with(word) {
                            push_unique(&mut out, pair(form.name(), form.name().to_string()));
                        }
                    }
                }
                entries(&mut out);
            }
            ArgKind::Host => {
                // Complete the element symbol being typed at the end of the formula.
                let symbol_start = word
                    .char_indices()
                    .rev()
                    .find(|(_, c)| c.is_ascii_uppercase())
                    .map_or(word.len(), |(i, _)| i);
                let prefix = &word[symbol_start..];
                if !prefix.is_empty() {
                    for e in elements::all() {
                        if e.symbol.starts_with(prefix) {
                            push_unique(&mut out, pair(e.symbol, e.symbol.to_string()));
                        }
                    }
                }
                return (word_start + symbol_start, out);
            }
            ArgKind::Path | ArgKind::None => {}
        }
        return (word_start, out);
    }
    // Reaction text. A site after `_`:
    if let Some(underscore) = word.rfind('_') {
        let prefix = &word[underscore + 1..];
        for site in &vocabulary.sites {
            if site.starts_with(prefix) {
                push_unique(&mut out, pair(site, site.clone()));
            }
        }
        return (word_start + underscore + 1, out);
    }
    // Skip a coefficient written against the species (`2V_O`).
    let coefficient = word
        .find(|c: char| !(c.is_ascii_digit() || c == '/' || c == '.' || "½⅓⅔¼¾".contains(c)))
        .unwrap_or(word.len());
    let start = word_start + coefficient;
    let prefix = &word[coefficient..];
    for species in &vocabulary.species {
        if species.starts_with(prefix) {
            push_unique(&mut out, pair(species, species.clone()));
        }
    }
    if !prefix.is_empty() {
        for e in elements::all() {
            if e.symbol.starts_with(prefix) {
                push_unique(&mut out, pair(e.symbol, e.symbol.to_string()));
            }
        }
        if "nil".starts_with(prefix) {
            push_unique(&mut out, pair("nil", "nil".to_string()));
        }
    }
    (start, out)
}

// ---------------------------------------------------------------------------
// Hints

/// A hint: what is shown greyed after the cursor, and what → inserts.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct WorkbenchHint {
    display: String,
    completion: Option<String>,
}

impl Hint for WorkbenchHint {
    fn display(&self) -> &str {
        &self.display
    }

    fn completion(&self) -> Option<&str> {
        self.completion.as_deref()
    }
}

/// Hints the rest of a command with its usage; otherwise a line from history.
pub struct WorkbenchHinter {
    history: HistoryHinter,
}

impl Hinter for WorkbenchHinter {
    type Hint = WorkbenchHint;

    fn hint(&self, line: &str, pos: usize, ctx: &Context<'_>) -> Option<WorkbenchHint> {
        if pos < line.len() || line.contains('\n') {
            return None;
        }
        if line.trim_start().starts_with(SIGIL) {
            return command_hint(line);
        }
        self.history.hint(line, pos, ctx).map(|h| WorkbenchHint {
            completion: Some(h.clone()),
            display: h,
        })
    }
}

/// The hint for a command line being typed. Pure, for tests.
pub fn command_hint(line: &str) -> Option<WorkbenchHint> {
    let text = line.trim_start().strip_prefix(SIGIL)?;
    if !text.contains(char::is_whitespace) {
        let matching: Vec<_> = COMMANDS
            .iter()
            .filter(|c| !text.is_empty() && c.name.starts_with(text))
            .collect();
        let [spec] = matching.as_slice() else {
            return None;
        };
        let rest = &spec.name[text.len()..];
        let usage = if spec.usage.is_empty() {
            String::new()
        } else {
            format!(" {}", spec.usage)
        };
        return Some(WorkbenchHint {
            display: format!("{rest}{usage}"),
            completion: Some(rest.to_string()),
        });
    }
    let (word, after) = text.split_once(char::is_whitespace)?;
    let spec = find_command(word)?;
    if after.trim().is_empty() && !spec.usage.is_empty() {
        let pad = if line.ends_with(' ') { "" } else { " " };
        return Some(WorkbenchHint {
            display: format!("{pad}{}", spec.usage),
            completion: None,
        });
    }
    None
}

// ---------------------------------------------------------------------------
// Multi-line input

/// Keeps the input open while a reaction is unfinished (trailing `+`, arrow,
/// lone `\`, open bracket).
pub struct BlockValidator;

impl Validator for BlockValidator {
    fn validate(&self, ctx: &mut ValidationContext<'_>) -> rustyline::Result<ValidationResult> {
        Ok(if continues(ctx.input()) {
            ValidationResult::Incomplete
        } else {
            ValidationResult::Valid(None)
        })
    }
}

// ---------------------------------------------------------------------------
// Colour

/// Colours species, charge marks, arrows, labels, comments and commands.
pub struct WorkbenchHighlighter {
    pub enabled: bool,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Paint {
    Command,
    Species,
    Positive,
    Negative,
    Neutral,
    Arrow,
    Label,
    Comment,
}

impl Paint {
    /// Our own palette: SGR codes.
    fn code(self) -> &'static str {
        match self {
            Paint::Command => "\x1b[1;34m",
            Paint::Species => "\x1b[35m",
            Paint::Positive => "\x1b[1;33m",
            Paint::Negative => "\x1b[1;36m",
            Paint::Neutral => "\x1b[32m",
            Paint::Arrow => "\x1b[1m",
            Paint::Label => "\x1b[4m",
            Paint::Comment => "\x1b[2m",
        }
    }
}

const RESET: &str = "\x1b[0m";

impl Highlighter for WorkbenchHighlighter {
    fn highlight<'l>(&self, line: &'l str, _pos: usize) -> Cow<'l, str> {
        if !self.enabled || line.is_empty() {
            return Cow::Borrowed(line);
        }
        Cow::Owned(highlight_line(line))
    }

    fn highlight_prompt<'b, 's: 'b, 'p: 'b>(
        &'s self,
        prompt: &'p str,
        _default: bool,
    ) -> Cow<'b, str> {
        Cow::Borrowed(prompt)
    }

    fn highlight_hint<'h>(&self, hint: &'h str) -> Cow<'h, str> {
        if !self.enabled {
            return Cow::Borrowed(hint);
        }
        Cow::Owned(format!("\x1b[2m{hint}{RESET}"))
    }

    fn highlight_char(&self, _line: &str, _pos: usize, _kind: CmdKind) -> bool {
        // Any character can change how the rest of the line reads.
        self.enabled
    }
}

fn mark_paint(c: char) -> Option<Paint> {
    match c {
        '.' | '*' | '•' | '∙' | '·' => Some(Paint::Positive),
        '\'' | '′' | '’' | '″' | '‴' => Some(Paint::Negative),
        'x' | 'X' | '×' => Some(Paint::Neutral),
        _ => None,
    }
}

/// The line with escape sequences around species, marks, arrows, labels,
/// comments and the command word. Removing the escapes gives `line` back.
pub fn highlight_line(line: &str) -> String {
    let chars: Vec<(usize, char)> = line.char_indices().collect();
    let mut paint: Vec<Option<Paint>> = vec![None; chars.len()];
    let index_of = |byte: usize| {
        chars
            .iter()
            .position(|(b, _)| *b >= byte)
            .unwrap_or(chars.len())
    };
    let fill = |paint: &mut Vec<Option<Paint>>, from: usize, to: usize, p: Paint| {
        for slot in paint.iter_mut().take(to.min(chars.len())).skip(from) {
            *slot = Some(p);
        }
    };
    let trimmed = line.trim_start();
    if trimmed.starts_with(SIGIL) {
        let start = line.len() - trimmed.len();
        let end = start + trimmed.find(char::is_whitespace).unwrap_or(trimmed.len());
        fill(&mut paint, index_of(start), index_of(end), Paint::Command);
        return paint_string(&chars, &paint);
    }
    for (i, single) in line.lines().scan(0usize, |offset, l| {
        let at = *offset;
        *offset += l.len() + 1;
        Some((at, l))
    }) {
        let body_end = reader::comment_start(single).unwrap_or(single.len());
        if body_end < single.len() {
            fill(
                &mut paint,
                index_of(i + body_end),
                index_of(i + single.len()),
                Paint::Comment,
            );
        }
        let mut start = 0;
        if let Line::Reaction {
            label: Some(label),
            reaction,
        } = reader::classify(single)
        {
            fill(
                &mut paint,
                index_of(i + label.start),
                index_of(i + label.end),
                Paint::Label,
            );
            start = reaction.start;
        }
        paint_reaction(&chars, &mut paint, i + start, i + body_end);
    }
    paint_string(&chars, &paint)
}

/// The number of characters of an arrow of the one arrow table
/// (`lacuna::notation::ARROWS`) that starts at character `k`, within bytes `..to`.
fn arrow_here(chars: &[(usize, char)], k: usize, to: usize) -> Option<usize> {
    let first = chars.get(k)?.1;
    let mut buffer = [0u8; 4];
    let lead = first.encode_utf8(&mut buffer).as_bytes().first().copied();
    if !matches!(lead, Some(b'\\' | b'<' | b'-' | b'=' | 0xE2)) {
        return None;
    }
    let rest: String = chars
        .get(k..)?
        .iter()
        .take_while(|(b, _)| *b < to)
        .map(|(_, c)| *c)
        .collect();
    let (len, _) = arrow_at(&rest)?;
    Some(rest.get(..len)?.chars().count())
}

/// Paints arrows, species and marks of the reaction text in `from..to` (bytes).
fn paint_reaction(chars: &[(usize, char)], paint: &mut [Option<Paint>], from: usize, to: usize) {
    #[derive(Clone, Copy, PartialEq, Eq)]
    enum State {
        Occupant,
        SiteStart,
        SiteSymbol(char),
        SiteBraced,
        SiteLabel,
        Marks,
    }
    let mut state = State::Occupant;
    let mut species_start: Option<usize> = None;
    let mut k = chars
        .iter()
        .position(|(b, _)| *b >= from)
        .unwrap_or(chars.len());
    while k < chars.len() && chars[k].0 < to {
        let c = chars[k].1;
        // Arrows first: they end whatever came before.
        if state != State::Marks || !matches!(c, '\'' | '.') {
            if let Some(n) = arrow_here(chars, k, to) {
                for slot in paint.iter_mut().skip(k).take(n) {
                    *slot = Some(Paint::Arrow);
                }
                k += n;
                state = State::Occupant;
                species_start = None;
                continue;
            }
        }
        let next = chars.get(k + 1).map(|(_, c)| *c);
        match state {
            State::Occupant => match c {
                '_' => {
                    let from = species_start.unwrap_or(k);
                    for slot in paint.iter_mut().take(k + 1).skip(from) {
                        *slot = Some(Paint::Species);
                    }
                    state = State::SiteStart;
                }
                ')' | '}' | ']' => {
                    state = State::Marks;
                    species_start = None;
                }
                'e' | 'h'
                    if species_start.is_none()
                        && next.is_none_or(|n| mark_paint(n).is_some() || n == '^') =>
                {
                    paint[k] = Some(Paint::Species);
                    state = State::Marks;
                }
                c if c.is_whitespace() || matches!(c, '+' | '(' | '{' | '[') => {
                    species_start = None
                }
                c if c.is_ascii_digit() && species_start.is_none() => {}
                '/' | '½' | '⅓' | '⅔' | '¼' | '¾' if species_start.is_none() => {}
                _ => {
                    species_start.get_or_insert(k);
                }
            },
            State::SiteStart => {
                paint[k] = Some(Paint::Species);
                state = match c {
                    '{' => State::SiteBraced,
                    'i' => State::Marks,
                    c if c.is_ascii_uppercase() => State::SiteSymbol(c),
                    _ => State::Occupant,
                };
            }
            State::SiteSymbol(first) => {
                let two: String = [first, c].iter().collect();
                if c.is_ascii_lowercase() && elements::by_symbol(&two).is_some() {
                    paint[k] = Some(Paint::Species);
                    state = State::Marks;
                } else if c == ':' {
                    paint[k] = Some(Paint::Species);
                    state = State::SiteLabel;
                } else {
                    state = State::Marks;
                    continue;
                }
            }
            State::SiteBraced => {
                paint[k] = Some(Paint::Species);
                if c == '}' {
                    state = State::Marks;
                }
            }
            State::SiteLabel => {
                if c.is_ascii_alphanumeric() {
                    paint[k] = Some(Paint::Species);
                } else {
                    state = State::Marks;
                    continue;
                }
            }
            State::Marks => {
                if c == ':'
                    && paint.get(k.wrapping_sub(1)).copied().flatten() == Some(Paint::Species)
                {
                    paint[k] = Some(Paint::Species);
                    state = State::SiteLabel;
                } else if let Some(p) = mark_paint(c) {
                    paint[k] = Some(p);
                } else if matches!(c, '^' | '{' | '}') {
                    // Carets and braces around marks stay plain.
                } else {
                    state = State::Occupant;
                    species_start = None;
                    continue;
                }
            }
        }
        k += 1;
    }
}

fn paint_string(chars: &[(usize, char)], paint: &[Option<Paint>]) -> String {
    let mut out = String::new();
    let mut current: Option<Paint> = None;
    for (k, (_, c)) in chars.iter().enumerate() {
        let p = paint.get(k).copied().flatten();
        if p != current {
            if current.is_some() {
                out.push_str(RESET);
            }
            if let Some(p) = p {
                out.push_str(p.code());
            }
            current = p;
        }
        out.push(*c);
    }
    if current.is_some() {
        out.push_str(RESET);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn strip(text: &str) -> String {
        let mut out = String::new();
        let mut chars = text.chars();
        while let Some(c) = chars.next() {
            if c == '\x1b' {
                for c in chars.by_ref() {
                    if c == 'm' {
                        break;
                    }
                }
            } else {
                out.push(c);
            }
        }
        out
    }

    fn vocabulary() -> Vocabulary {
        Vocabulary {
            sites: vec!["Zr".into(), "O".into(), "i".into()],
            species: vec!["V_O..".into(), "Y_Zr'".into(), "O_Ox".into()],
            labels: vec!["red".into()],
            entries: 2,
        }
    }

    fn replacements(v: &Vocabulary, line: &str) -> (usize, Vec<String>) {
        let (start, pairs) = complete_at(v, line, line.len());
        (start, pairs.into_iter().map(|p| p.replacement).collect())
    }

    #[test]
    fn completes_command_names() {
        let (start, found) = replacements(&vocabulary(), "/ho");
        assert_eq!(start, 0);
        assert_eq!(found, vec!["/host "]);
        let (_, found) = replacements(&vocabulary(), "/");
        assert_eq!(found.len(), COMMANDS.len());
    }

    #[test]
    fn completes_sites_of_the_host_after_an_underscore() {
        let (start, found) = replacements(&vocabulary(), "Y2O3 -> 2Y_Z");
        assert_eq!(start, "Y2O3 -> 2Y_".len());
        assert_eq!(found, vec!["Zr"]);
        let (_, found) = replacements(&vocabulary(), "O_O -> V_");
        assert_eq!(found, vec!["Zr", "O", "i"]);
    }

    #[test]
    fn completes_species_used_and_element_symbols() {
        let (start, found) = replacements(&vocabulary(), "nil -> 2V");
        assert_eq!(start, "nil -> 2".len());
        assert_eq!(found[0], "V_O..");
        assert!(found.contains(&"V".to_string()));
        let (_, found) = replacements(&vocabulary(), "Zr");
        assert_eq!(found, vec!["Zr"]);
    }

    #[test]
    fn completes_reactions_forms_and_host_symbols() {
        let (_, found) = replacements(&vocabulary(), "/ts la");
        assert_eq!(found, vec!["latex"]);
        let (_, found) = replacements(&vocabulary(), "/drop r");
        assert_eq!(found, vec!["red"]);
        let (_, found) = replacements(&vocabulary(), "/check ");
        assert_eq!(found, vec!["1", "2", "red", "all"]);
        let (start, found) = replacements(&vocabulary(), "/host BaT");
        assert_eq!(start, "/host Ba".len());
        assert!(found.contains(&"Ti".to_string()));
        let (_, found) = replacements(&vocabulary(), "/help ty");
        assert_eq!(found, vec!["typeset"]);
    }

    #[test]
    fn hints_commands_and_their_usage() {
        let h = command_hint("/typ").unwrap();
        assert_eq!(h.display(), "eset [FORM] [WHICH...|all]");
        assert_eq!(h.completion(), Some("eset"));
        let h = command_hint("/name ").unwrap();
        assert_eq!(h.display(), "WHICH LABEL");
        assert_eq!(h.completion(), None);
        assert!(command_hint("/zz").is_none());
        assert!(command_hint("/name 1 red").is_none());
    }

    #[test]
    fn highlighting_keeps_the_text_and_colours_marks() {
        for line in [
            "O_O -> V_O.. + 2e' + 1/2 O2(g)",
            "red: Y2O3 -> 2Y_Zr′ + V_O•• + 3O_O×  # dope",
            "(Y_Zr' V_O..). + Fe_{Fe:A}x",
            "/host ZrO2",
            "_ _{ ^ ' . x ( ) } -> <=",
            "ä→ß__''",
            "",
        ] {
            let painted = highlight_line(line);
            assert_eq!(strip(&painted), line, "{painted:?}");
        }
        let painted = highlight_line("V_O..");
        assert!(
            painted.contains("\x1b[35mV_O\x1b[0m\x1b[1;33m..\x1b[0m"),
            "{painted:?}"
        );
        let painted = highlight_line("e'");
        assert!(painted.contains("\x1b[1;36m'"), "{painted:?}");
    }

    #[test]
    fn no_colour_when_disabled() {
        let h = WorkbenchHighlighter { enabled: false };
        assert_eq!(h.highlight("V_O..", 0), "V_O..");
        assert_eq!(h.highlight_hint("x"), "x");
        assert!(!h.highlight_char("V", 1, CmdKind::Other));
        let h = WorkbenchHighlighter { enabled: true };
        assert!(h.highlight_char("V", 1, CmdKind::Other));
    }

    proptest::proptest! {
        #[test]
        fn highlighting_never_changes_text(line in "[ -~•′×→⇌□½₂]{0,40}") {
            proptest::prop_assert_eq!(strip(&highlight_line(&line)), line);
        }

        #[test]
        fn completion_never_fails(line in "[ -~•′×→]{0,30}") {
            let (start, _) = complete_at(&vocabulary(), &line, line.len());
            proptest::prop_assert!(start <= line.len());
            proptest::prop_assert!(line.is_char_boundary(start));
        }
    }
}
