//! The notation parser. Grammar: grammar/notation.md; each function quotes
//! the rule it implements.
//!
//! A reaction is split at its arrow and at top-level `+` signs first, so that
//! a bad term is reported and the remaining terms are still read: one line can
//! yield several diagnostics. Terms themselves are read with nom combinators
//! over `&str`; spans are byte offsets into the caller's line.

use super::{
    Arrow, Associate, Compound, Entity, Formula, MarkStyle, Occupant, Phase, Reaction, Site, Span,
    Species, Term, VacancySpelling,
};
use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::elements;
use crate::base::number::{self, NumberError, Q};
use nom::branch::alt;
use nom::bytes::complete::{tag, take_while, take_while1};
use nom::character::complete::{char, digit1, satisfy};
use nom::combinator::{opt, recognize};
use nom::{IResult, Parser};

/// Parses the reaction at `within` (a byte range of `source`, the whole line).
/// Returns the reaction when every term parsed, and every problem found.
pub fn parse_reaction(source: &str, within: Span) -> (Option<Reaction>, Vec<Diagnostic>) {
    let mut parser = Parser_ {
        src: source,
        diags: Vec::new(),
        depth: 0,
    };
    let reaction = parser.reaction(within);
    (reaction, parser.diags)
}

/// Parses one species, associate or compound written on its own (as on a
/// command line), with spans relative to `text`.
pub fn parse_species_text(text: &str) -> Result<Term, Vec<Diagnostic>> {
    let mut parser = Parser_ {
        src: text,
        diags: Vec::new(),
        depth: 0,
    };
    let trimmed = trim_span(text, 0..text.len());
    match parser.term(trimmed) {
        Some(term) if parser.diags.iter().all(|d| !d.is_error()) => Ok(term),
        _ => Err(parser.diags),
    }
}

/// Parses a compound formula (`ZrO2`, `La0.9Sr0.1MnO3`, `Ba(OH)2`) found at
/// `within` of `source`; no phase tag, nothing after it.
pub fn parse_formula(source: &str, within: Span) -> Result<Formula, Vec<Diagnostic>> {
    let mut parser = Parser_ {
        src: source,
        diags: Vec::new(),
        depth: 0,
    };
    let text = &source[within];
    match parser.formula(text, true) {
        Some((rest, formula)) if rest.is_empty() && !formula.atoms.is_empty() => Ok(formula),
        Some((rest, _)) => {
            let span = parser.span_of(if rest.is_empty() { text } else { rest });
            parser.diags.push(
                Diagnostic::new(
                    Code::HostFormula,
                    span,
                    format!("`{text}` is not a formula"),
                )
                .with_help("write a formula such as `ZrO2`, `BaTiO3` or `La0.9Sr0.1MnO3`"),
            );
            Err(parser.diags)
        }
        None => Err(parser.diags),
    }
}

struct Parser_<'a> {
    src: &'a str,
    diags: Vec<Diagnostic>,
    /// How deep in parenthesised formula groups the parser is.
    depth: usize,
}

/// Formula groups nest at most this deep (`Ca3(PO4)2` needs one level); the
/// limit keeps hostile input from exhausting the stack.
const MAX_NESTING: usize = 16;

/// User text quoted in a message: at most 32 characters, control characters escaped.
pub fn quoted(text: &str) -> String {
    let mut out = String::new();
    for (i, c) in text.chars().enumerate() {
        if i == 32 {
            out.push('…');
            break;
        }
        if c.is_control() {
            out.extend(c.escape_default());
        } else {
            out.push(c);
        }
    }
    out
}

/// Every arrow spelling Lacuna reads, longest first where one is a prefix of
/// another: plain, Unicode and LaTeX. The one table: the parser reads these,
/// the file reader tells reactions from model lines with them, the LaTeX
/// reader rewrites the commands among them (`\to` becomes `->`), and the
/// workbench paints them. A LaTeX command matches only as a whole command
/// name (`\to`, never the start of `\top`). Spellings starting with `\x`
/// take an optional `[..]` and a `{..}` argument: the text set over the arrow.
pub const ARROWS: &[(&str, Arrow)] = &[
    ("\\xrightleftharpoons", Arrow::Equilibrium),
    ("\\xleftrightharpoons", Arrow::Equilibrium),
    ("\\xrightarrow", Arrow::Forward),
    ("\\rightleftharpoons", Arrow::Equilibrium),
    ("\\leftrightharpoons", Arrow::Equilibrium),
    ("\\longleftrightarrow", Arrow::Equilibrium),
    ("\\rightleftarrows", Arrow::Equilibrium),
    ("\\leftrightarrows", Arrow::Equilibrium),
    ("\\leftrightarrow", Arrow::Equilibrium),
    ("\\longrightarrow", Arrow::Forward),
    ("\\Longrightarrow", Arrow::Forward),
    ("\\rightarrow", Arrow::Forward),
    ("\\to", Arrow::Forward),
    ("<=>", Arrow::Equilibrium),
    ("<->", Arrow::Equilibrium),
    ("-->", Arrow::Forward),
    ("->", Arrow::Forward),
    ("→", Arrow::Forward),
    ("⟶", Arrow::Forward),
    ("⇌", Arrow::Equilibrium),
    ("⇄", Arrow::Equilibrium),
    ("=", Arrow::Equals),
];

/// Whether an arrow spelling takes the text over the arrow as an argument.
pub fn takes_text_over(spelling: &str) -> bool {
    spelling.starts_with("\\x")
}

// Byte offsets and indices below stay within one line of input, so their
// sums and differences are bounded by its length: saturating steps never
// saturate there, and spell out that no overflow check is wanted.

const NIL_SPELLINGS: &[&str] = &["nil", "null", "0", "∅", "Ø", "\\emptyset", "\\varnothing"];

fn trim_span(src: &str, span: Span) -> Span {
    // A span from a caller may be empty, reversed or off a character
    // boundary; treat anything unusable as empty rather than panic.
    let Some(text) = src.get(span.clone()) else {
        let at = span.start.min(src.len());
        return at..at;
    };
    let start = span
        .start
        .saturating_add(text.len().saturating_sub(text.trim_start().len()));
    let end = span
        .end
        .saturating_sub(text.len().saturating_sub(text.trim_end().len()));
    start..end.max(start)
}

/// Finds an arrow at the start of `s`: its length and kind. An arrow that
/// takes the text over it (`\xrightarrow`) includes its optional `[..]`
/// and `{..}` arguments.
pub fn arrow_at(s: &str) -> Option<(usize, Arrow)> {
    let bytes = s.as_bytes();
    let first = *bytes.first()?;
    // Most characters cannot start an arrow: reject them on the first byte,
    // and the charge marks that share a lead byte with the Unicode arrows
    // (`•` `′`) on the second.
    if !matches!(first, b'\\' | b'<' | b'-' | b'=' | 0xE2) {
        return None;
    }
    if first == 0xE2
        && !bytes
            .get(1)
            .is_some_and(|&b| UNICODE_SECOND[usize::from(b)])
    {
        return None;
    }
    let (spelling, arrow) = ARROWS.iter().find(|(spelling, _)| {
        spelling.as_bytes().first() == Some(&first)
            && s.starts_with(spelling)
            && !(first == b'\\'
                && bytes
                    .get(spelling.len())
                    .is_some_and(u8::is_ascii_alphabetic))
    })?;
    let mut len = spelling.len();
    if takes_text_over(spelling) {
        let mut rest = &s[len..];
        for (open, close) in [('[', ']'), ('{', '}')] {
            if rest.starts_with(open) {
                let end = rest.find(close)?.saturating_add(1);
                len = len.saturating_add(end);
                rest = &rest[end..];
            }
        }
    }
    Some((len, *arrow))
}

/// Second bytes of the arrow spellings that start with the byte 0xE2.
const UNICODE_SECOND: [bool; 256] = {
    let mut table = [false; 256];
    let mut i = 0;
    while i < ARROWS.len() {
        let b = ARROWS[i].0.as_bytes();
        if b.len() > 1 && b[0] == 0xE2 {
            table[b[1] as usize] = true;
        }
        i += 1;
    }
    table
};

/// The first arrow anywhere in `text` (brackets not considered), with its
/// span and kind.
pub fn find_arrow(text: &str) -> Option<(Span, Arrow)> {
    text.char_indices().find_map(|(i, _)| {
        arrow_at(&text[i..]).map(|(len, arrow)| (i..i.saturating_add(len), arrow))
    })
}

fn closing(open: char) -> char {
    match open {
        '(' => ')',
        '{' => '}',
        _ => ']',
    }
}

impl<'a> Parser_<'a> {
    fn pos(&self, s: &str) -> usize {
        (s.as_ptr() as usize).saturating_sub(self.src.as_ptr() as usize)
    }

    fn span_of(&self, s: &str) -> Span {
        let p = self.pos(s);
        p..p.saturating_add(s.len())
    }

    fn error(&mut self, code: Code, span: Span, message: impl Into<String>) -> &mut Diagnostic {
        self.diags.push(Diagnostic::new(code, span, message));
        let last = self.diags.len().saturating_sub(1);
        &mut self.diags[last]
    }

    /// `reaction = side arrow side ;  side = term { "+" term } ;`
    fn reaction(&mut self, within: Span) -> Option<Reaction> {
        let within = trim_span(self.src, within);
        let text = &self.src[within.clone()];
        let mut stack: Vec<(char, usize)> = Vec::new();
        let mut arrow: Option<(Span, Arrow)> = None;
        let mut ok = true;
        // Top-level `+` positions; those before `arrow_plus` are on the left.
        let mut pluses: Vec<usize> = Vec::with_capacity(8);
        let mut arrow_plus = 0;
        // Bytes, not chars: every character that matters here is ASCII or
        // starts with a lead byte, so each hit is on a character boundary.
        let bytes = text.as_bytes();
        let mut i = 0;
        while let Some(&byte) = bytes.get(i) {
            let at = within.start.saturating_add(i);
            let c = char::from(byte);
            if stack.is_empty() && matches!(byte, b'\\' | b'<' | b'-' | b'=' | 0xE2) {
                if let Some((len, kind)) = arrow_at(&text[i..]) {
                    if let Some((first, _)) = &arrow {
                        let first_col = crate::base::diagnostic::column_of(self.src, first.start);
                        self.error(
                            Code::ExtraArrow,
                            at..at.saturating_add(len),
                            "a second arrow in one reaction",
                        )
                        .help = Some(format!(
                            "the first arrow is at column {first_col}; write each reaction on its own line"
                        ));
                        ok = false;
                    } else {
                        arrow = Some((at..at.saturating_add(len), kind));
                        arrow_plus = pluses.len();
                    }
                    i = i.saturating_add(len);
                    continue;
                }
            }
            match c {
                '(' | '{' | '[' => stack.push((c, at)),
                ')' | '}' | ']' => match stack.pop() {
                    Some((open, _)) if closing(open) == c => {}
                    Some((open, open_at)) => {
                        self.error(
                            Code::Brackets,
                            open_at..at.saturating_add(1),
                            format!("`{open}` is closed by `{c}`"),
                        )
                        .help = Some(format!("close it with `{}`", closing(open)));
                        ok = false;
                    }
                    None => {
                        self.error(
                            Code::Brackets,
                            at..at.saturating_add(1),
                            format!("`{c}` closes nothing"),
                        );
                        ok = false;
                    }
                },
                '+' if stack.is_empty() => pluses.push(at),
                _ => {}
            }
            i = i.saturating_add(1);
        }
        for (open, at) in stack.drain(..) {
            self.error(
                Code::Brackets,
                at..at.saturating_add(open.len_utf8()),
                format!("`{open}` is never closed"),
            )
            .help = Some(format!("add `{}` at the end of the term", closing(open)));
            ok = false;
        }
        let Some((arrow_span, arrow)) = arrow else {
            self.error(Code::MissingArrow, within.clone(), "no arrow between the two sides")
                .help = Some("write reactants, an arrow (`->`, `=`, `<=>`), then products: `O_O -> V_O.. + 2e' + 1/2 O2(g)`".into());
            return None;
        };
        if !ok {
            return None;
        }
        let (plus_left, plus_right) = pluses.split_at(arrow_plus.min(pluses.len()));
        let left = self.side(within.start..arrow_span.start, plus_left, "left");
        let right = self.side(arrow_span.end..within.end, plus_right, "right");
        Some(Reaction {
            left: left?,
            right: right?,
            arrow,
            span: within,
        })
    }

    fn side(&mut self, span: Span, pluses: &[usize], name: &str) -> Option<Vec<Term>> {
        // Term i runs from after `+` number i - 1 to before `+` number i.
        let starts = std::iter::once(span.start).chain(pluses.iter().map(|p| p.saturating_add(1)));
        let ends = pluses.iter().copied().chain(std::iter::once(span.end));
        let mut terms = Vec::with_capacity(pluses.len().saturating_add(1));
        let mut ok = true;
        for (start, end) in starts.zip(ends) {
            let term_span = trim_span(self.src, start..end);
            if term_span.is_empty() {
                let at = if term_span.start > span.start {
                    term_span.start.saturating_sub(1)
                } else {
                    term_span.start
                };
                self.error(
                    Code::EmptyTerm,
                    at..at.saturating_add(1).min(self.src.len()).max(at),
                    format!("the {name} side has an empty term"),
                )
                .help = Some("remove the extra `+`, or write `nil` for the perfect crystal".into());
                ok = false;
                continue;
            }
            match self.term(term_span) {
                Some(t) => terms.push(t),
                None => ok = false,
            }
        }
        ok.then_some(terms)
    }

    /// An optional coefficient at the start of `text`, checked: `None` after
    /// reporting a zero or an unreadable number.
    fn read_coefficient<'s>(&mut self, text: &'s str) -> Option<(&'s str, Option<Q>)> {
        let Ok((rest, Some(digits))) = coefficient(text) else {
            return Some((text, None));
        };
        match number_value(digits) {
            Ok(q) if q == Q::from_integer(0) => {
                self.error(Code::Number, self.span_of(digits), "a coefficient of zero")
                    .help = Some("drop the term instead".into());
                None
            }
            Ok(q) => Some((rest, Some(q))),
            Err(e) => {
                self.error(
                    Code::Number,
                    self.span_of(digits),
                    format!("coefficient `{digits}`: {e}"),
                );
                None
            }
        }
    }

    /// `term = [ coefficient ] entity | nil ;`
    fn term(&mut self, span: Span) -> Option<Term> {
        let text = &self.src[span.clone()];
        if NIL_SPELLINGS.contains(&text) {
            return Some(Term {
                coefficient: Q::from_integer(1),
                coefficient_written: false,
                entity: Entity::Nil,
                span,
            });
        }
        let (rest, coefficient) = self.read_coefficient(text)?;
        if rest.is_empty() {
            self.error(Code::EmptyTerm, span, "a coefficient with nothing after it")
                .help = Some("write the species it multiplies, e.g. `2 e'`".into());
            return None;
        }
        let (remaining, entity) = self.entity(rest)?;
        if !remaining.is_empty() {
            self.unexpected(remaining, &entity);
            return None;
        }
        Some(Term {
            coefficient: coefficient.unwrap_or(Q::from_integer(1)),
            coefficient_written: coefficient.is_some(),
            entity,
            span,
        })
    }

    fn unexpected(&mut self, remaining: &str, entity: &Entity) {
        let span = self.span_of(remaining);
        let first = remaining.chars().next().unwrap_or(' ');
        let d = self.error(
            Code::Syntax,
            span,
            format!("unexpected `{}`", quoted(remaining)),
        );
        if is_mark_char(first) {
            if let Entity::Compound(c) = entity {
                d.span.start = c.span.start;
                d.code = Code::MissingSite;
                d.message = "a charged species needs a site subscript".into();
                d.help = Some("write the site after `_`, e.g. `V_O..`, `Y_Zr'`, `O_i''`".into());
            }
        } else if first.is_whitespace() {
            d.help = Some(
                "terms are joined with `+`; inside an associate, wrap the parts in parentheses"
                    .into(),
            );
        }
    }

    /// `entity = associate | species | compound ;`
    fn entity<'s>(&mut self, text: &'s str) -> Option<(&'s str, Entity)> {
        let first = text.chars().next()?;
        if matches!(first, '(' | '{' | '[') {
            let close = matching_close(text)?;
            let inner = &text[1..close];
            if inner.contains('_') || inner.split_whitespace().any(is_electronic_token) {
                return self.associate(text, close);
            }
            return self.compound(text);
        }
        if text.contains('_')
            || text.starts_with('□')
            || text.starts_with("el:")
            || is_electronic_start(text)
        {
            let (rest, species) = self.species(text)?;
            return Some((rest, Entity::Species(species)));
        }
        self.compound(text)
    }

    /// `associate = ( "(" parts ")" | "{" parts "}" ) [ charge ] ;`
    fn associate<'s>(&mut self, text: &'s str, close: usize) -> Option<(&'s str, Entity)> {
        let braces = text.starts_with('{');
        let mut inner = &text[1..close];
        let mut parts = Vec::new();
        let mut ok = true;
        loop {
            inner = inner.trim_start_matches(|c: char| {
                c.is_whitespace() || c == ',' || c == ':' || c == '+' || c == '~'
            });
            if inner.is_empty() {
                break;
            }
            let part_start = inner;
            let (rest, coefficient) = self.read_coefficient(inner)?;
            match self.species(rest) {
                Some((rest, species)) => {
                    let span = self.pos(part_start)..self.pos(rest);
                    parts.push(Term {
                        coefficient: coefficient.unwrap_or(Q::from_integer(1)),
                        coefficient_written: coefficient.is_some(),
                        entity: Entity::Species(species),
                        span,
                    });
                    inner = rest;
                }
                None => {
                    ok = false;
                    break;
                }
            }
        }
        if !ok {
            return None;
        }
        if parts.is_empty() {
            self.error(
                Code::EmptyTerm,
                self.span_of(&text[..=close]),
                "an empty associate",
            );
            return None;
        }
        let after = &text[close..][1..];
        let (rest, marks) = self.charge(after)?;
        let span = self.pos(text)..self.pos(rest);
        let (charge, style) = match marks {
            Some((c, s)) => (Some(c), s),
            None => (None, MarkStyle::Unmarked),
        };
        Some((
            rest,
            Entity::Associate(Associate {
                parts,
                charge,
                marks: style,
                braces,
                span,
            }),
        ))
    }

    /// `species = occupant "_" site [ charge ] | ( "e" | "h" ) [ charge ] ;`
    fn species<'s>(&mut self, text: &'s str) -> Option<(&'s str, Species)> {
        let start = text;
        if is_electronic_start(text) {
            let electron = text.starts_with('e');
            let rest = &text[1..];
            let (rest, marks) = self.charge(rest)?;
            if rest.starts_with('_') {
                let site_end = rest
                    .find(|c: char| c.is_whitespace() || c == '+' || c == ')' || c == '}')
                    .unwrap_or(rest.len());
                let name = if electron { "an electron" } else { "a hole" };
                self.error(
                    Code::ElectronicSpecies,
                    self.pos(start)..self.pos(rest).saturating_add(site_end),
                    format!("{name} carries no site"),
                )
                .help = Some(format!(
                    "write `{}` without a subscript",
                    if electron { "e'" } else { "h." }
                ));
                return None;
            }
            let (charge, style) =
                marks.unwrap_or((if electron { -1 } else { 1 }, MarkStyle::Unmarked));
            let occupant = if electron {
                Occupant::Electron
            } else {
                Occupant::Hole
            };
            let span = self.pos(start)..self.pos(rest);
            return Some((
                rest,
                Species {
                    occupant,
                    site: None,
                    charge,
                    marks: style,
                    span,
                },
            ));
        }
        let (rest, occupant) = self.occupant(text)?;
        let Some(rest) = rest.strip_prefix('_') else {
            let span = self.span_of(&start[..start.len().saturating_sub(rest.len())]);
            self.error(Code::MissingSite, span, "a defect needs a site subscript")
                .help = Some("write `_` and the site: `V_O..`, `Y_Zr'`, `O_i''`".into());
            return None;
        };
        let (rest, site) = self.site(rest)?;
        let (rest, marks) = self.charge(rest)?;
        let (charge, style) = marks.unwrap_or((0, MarkStyle::Unmarked));
        let span = self.pos(start)..self.pos(rest);
        Some((
            rest,
            Species {
                occupant,
                site: Some(site),
                charge,
                marks: style,
                span,
            },
        ))
    }

    /// `occupant = "V" | "Vac" | "□" | "el:" formula | formula ;`
    fn occupant<'s>(&mut self, text: &'s str) -> Option<(&'s str, Occupant)> {
        if let Some(rest) = text.strip_prefix('□') {
            return Some((rest, Occupant::Vacancy(VacancySpelling::Box)));
        }
        if let Some(rest) = text.strip_prefix("Vac").filter(|r| r.starts_with('_')) {
            return Some((rest, Occupant::Vacancy(VacancySpelling::Word)));
        }
        if let Some(rest) = text.strip_prefix('V').filter(|r| r.starts_with('_')) {
            return Some((rest, Occupant::Vacancy(VacancySpelling::Bare)));
        }
        let (escaped, body) = match text.strip_prefix("el:") {
            Some(body) => (true, body),
            None => (false, text),
        };
        let (rest, formula) = self.formula(body, false)?;
        if formula.atoms.is_empty() {
            let shown: String = body.chars().take(1).collect();
            self.error(
                Code::Syntax,
                self.span_of(&body[..shown.len()]),
                format!("`{shown}` cannot start a species"),
            )
            .help = Some(if looks_like_name(body) {
                "a reaction name is followed by `:` and a space: `red: O_O -> …`".into()
            } else {
                "a species starts with an element, `V` (vacancy), `e` or `h`".into()
            });
            return None;
        }
        if !escaped {
            self.case_warning(&body[..body.len().saturating_sub(rest.len())], &formula);
        }
        Some((rest, Occupant::Atoms { formula, escaped }))
    }

    /// Warns about groups like `CO` or `NI` that are one element in the wrong case.
    fn case_warning(&mut self, written: &str, formula: &Formula) {
        if formula.atoms.len() == 2 && written.len() == 2 && written.is_ascii() {
            let mut candidate = written[..1].to_string();
            candidate.push_str(&written[1..].to_ascii_lowercase());
            if elements::by_symbol(&candidate).is_some() {
                self.diags.push(
                    Diagnostic::new(
                        Code::CaseSuspect,
                        self.span_of(written),
                        format!("`{written}` is read as a group of two elements"),
                    )
                    .with_help(format!("if you meant the element, write `{candidate}`")),
                );
            }
        }
    }

    /// `site = "i" | symbol [ ":" label ] | "{" site "}" ;`
    fn site<'s>(&mut self, text: &'s str) -> Option<(&'s str, Site)> {
        let (inner, braced) = match text.strip_prefix('{') {
            Some(inner) => (inner, true),
            None => (text, false),
        };
        let result: IResult<&str, &str> = alt((tag("i"), element_symbol)).parse(inner);
        let Ok((rest, name)) = result else {
            if inner.starts_with(|c: char| c.is_ascii_uppercase()) {
                let len = inner[1..]
                    .find(|c: char| !c.is_ascii_lowercase())
                    .unwrap_or(inner.len().saturating_sub(1))
                    .saturating_add(1);
                self.unknown_element(&inner[..len]);
                return None;
            }
            let shown: String = inner
                .chars()
                .take_while(|c| c.is_alphanumeric())
                .take(4)
                .collect();
            let span = self.span_of(&inner[..shown.len()]);
            let d = self.error(
                Code::UnknownSite,
                span,
                if shown.is_empty() {
                    "a site subscript is missing".to_string()
                } else {
                    format!("`{shown}` is not a site")
                },
            );
            d.help = Some("a site is an element symbol of the host (`O`, `Zr`, `Fe:A`) or `i` for interstitial".into());
            if shown.starts_with(|c: char| c.is_ascii_digit()) {
                d.help = Some("for a compound write its formula without `_`, e.g. `Y2O3`".into());
            }
            return None;
        };
        if name == "i" && rest.starts_with(|c: char| c.is_ascii_lowercase() && !is_mark_char(c)) {
            self.error(
                Code::UnknownSite,
                self.span_of(&inner[..2.min(inner.len())]),
                "a site symbol starts with a capital letter",
            )
            .help = Some(
                "write the element symbol with a capital (`In`, `Ir`), or `i` for interstitial"
                    .into(),
            );
            return None;
        }
        let site = if name == "i" {
            Site::Interstitial
        } else {
            let Some(element) = elements::by_symbol(name) else {
                self.unknown_element(name);
                return None;
            };
            Site::Lattice {
                element: element.z,
                label: None,
            }
        };
        let (rest, site) = match (rest.strip_prefix(':'), site) {
            (Some(after), Site::Lattice { element, .. }) => {
                let label_len = after
                    .find(|c: char| !c.is_ascii_alphanumeric())
                    .unwrap_or(after.len());
                if label_len == 0 {
                    self.error(
                        Code::UnknownSite,
                        self.span_of(&rest[..1]),
                        "a `:` with no sublattice label after it",
                    );
                    return None;
                }
                (
                    &after[label_len..],
                    Site::Lattice {
                        element,
                        label: Some(after[..label_len].into()),
                    },
                )
            }
            (_, site) => (rest, site),
        };
        if braced {
            let Some(rest) = rest.strip_prefix('}') else {
                self.error(
                    Code::Brackets,
                    self.span_of(&text[..1]),
                    "the site's `{` is not closed right after the site",
                );
                return None;
            };
            return Some((rest, site));
        }
        Some((rest, site))
    }

    fn unknown_element(&mut self, name: &str) {
        let span = self.span_of(name);
        let d = self.error(
            Code::UnknownElement,
            span,
            format!("`{name}` is not an element symbol"),
        );
        let mut fixed = name.to_string();
        if let Some(first) = fixed.get(..1) {
            fixed = first.to_ascii_uppercase() + &fixed[1..].to_ascii_lowercase();
        }
        if fixed != name && elements::by_symbol(&fixed).is_some() {
            d.help = Some(format!(
                "symbols are case-sensitive: did you mean `{fixed}`?"
            ));
        } else {
            d.help = Some(
                "symbols are case-sensitive: one capital letter, then at most one small letter"
                    .into(),
            );
        }
    }

    /// `charge = [ "^" ] ( marks | "{" marks "}" ) ;`
    fn charge<'s>(&mut self, text: &'s str) -> Option<(&'s str, Option<(i32, MarkStyle)>)> {
        let (body, caret) = match text.strip_prefix('^') {
            Some(b) => (b, true),
            None => (text, false),
        };
        let (body, braced) = match body.strip_prefix('{') {
            Some(b) if caret || b.starts_with(is_mark_start) => (b, true),
            _ => (body, false),
        };
        let mut rest = body;
        let (mut plus, mut minus, mut cross) = (0i32, 0i32, 0i32);
        let mut style = None;
        loop {
            if braced {
                rest = rest.trim_start();
            }
            let Some((len, value, mark_style)) = mark_at(rest) else {
                break;
            };
            style.get_or_insert(mark_style);
            match value {
                v if v > 0 => plus = plus.saturating_add(v),
                v if v < 0 => minus = minus.saturating_sub(v),
                _ => cross = cross.saturating_add(1),
            }
            rest = &rest[len..];
        }
        if braced {
            let Some(after) = rest.strip_prefix('}') else {
                let span = self.span_of(
                    rest.get(..rest.chars().next().map_or(0, char::len_utf8))
                        .unwrap_or(""),
                );
                self.error(Code::ChargeMark, span, "the charge's `{` is not closed")
                    .help = Some("write the marks inside the braces, e.g. `V_O^{..}`".into());
                return None;
            };
            rest = after;
        }
        let written = &text[..text.len().saturating_sub(rest.len())];
        if style.is_none() {
            if caret {
                self.error(
                    Code::ChargeMark,
                    self.span_of(written),
                    "`^` with no charge marks after it",
                )
                .help = Some("write `.` per +1, `'` per −1 or `x` for neutral".into());
                return None;
            }
            return Some((text, None));
        }
        let span = self.span_of(written);
        if plus > 0 && minus > 0 {
            self.error(
                Code::ChargeMark,
                span,
                "positive and negative marks mixed in one charge",
            )
            .help = Some(
                "an effective charge has one sign: dots for positive, primes for negative".into(),
            );
            return None;
        }
        if cross > 0 && (plus > 0 || minus > 0 || cross > 1) {
            self.error(Code::ChargeMark, span, "a cross mixed with other marks")
                .help = Some("a cross alone means neutral; drop it or the other marks".into());
            return None;
        }
        Some((
            rest,
            // Both non-negative and one of them zero (mixed signs are refused).
            Some((
                plus.saturating_sub(minus),
                style.unwrap_or(MarkStyle::Ascii),
            )),
        ))
    }

    /// `compound = group { group } [ phase ] ;  group = ( symbol | "(" compound ")" ) [ count ] ;`
    fn compound<'s>(&mut self, text: &'s str) -> Option<(&'s str, Entity)> {
        let (rest, formula) = self.formula(text, true)?;
        if formula.atoms.is_empty() {
            let shown: String = text
                .chars()
                .take_while(|c| !c.is_whitespace())
                .take(12)
                .collect();
            let d = self.error(
                Code::Syntax,
                self.span_of(&text[..shown.len()]),
                format!("`{shown}` is not a species, compound or `nil`"),
            );
            d.help = Some(if shown.starts_with(|c: char| c.is_lowercase()) {
                "element symbols start with a capital letter; the perfect crystal is `nil`".into()
            } else {
                "see grammar/notation.md for the accepted forms".into()
            });
            return None;
        }
        let (rest, phase) = phase_tag(rest);
        let span = self.pos(text)..self.pos(rest);
        Some((
            rest,
            Entity::Compound(Compound {
                formula,
                phase,
                span,
            }),
        ))
    }

    /// Reads element symbols with counts. With `groups`, parenthesised
    /// groups are allowed too (compounds); occupants take none.
    fn formula<'s>(&mut self, text: &'s str, groups: bool) -> Option<(&'s str, Formula)> {
        let mut atoms: Vec<(u8, Q)> = Vec::new();
        let mut rest = text;
        loop {
            if groups && rest.starts_with('(') && phase_tag(rest).1.is_none() {
                let close = matching_close(rest)?;
                if self.depth >= MAX_NESTING {
                    self.error(
                        Code::Brackets,
                        self.span_of(&rest[..1]),
                        format!("groups nested deeper than {MAX_NESTING} levels"),
                    )
                    .help = Some("a formula needs at most a few levels of parentheses".into());
                    return None;
                }
                // Bounded by MAX_NESTING above.
                self.depth = self.depth.saturating_add(1);
                let inner = self.formula(&rest[1..close], true);
                self.depth = self.depth.saturating_sub(1);
                let (inner_rest, inner) = inner?;
                if !inner_rest.is_empty() || inner.atoms.is_empty() {
                    self.error(
                        Code::Syntax,
                        self.span_of(&rest[..=close]),
                        "a parenthesised group must hold a formula",
                    );
                    return None;
                }
                let (after, count) = self.count(&rest[close..][1..])?;
                for (z, n) in inner.atoms {
                    atoms.push((z, number::mul(n, count).ok()?));
                }
                rest = after;
                continue;
            }
            let Some(first) = rest.chars().next() else {
                break;
            };
            if !first.is_ascii_uppercase() {
                break;
            }
            let two = rest
                .get(..2)
                .filter(|s| s.as_bytes()[1].is_ascii_lowercase());
            let symbol = match two {
                Some(s) if elements::by_symbol(s).is_some() => s,
                Some(s) if elements::by_symbol(&s[..1]).is_none() => {
                    self.unknown_element(s);
                    return None;
                }
                _ => &rest[..1],
            };
            let Some(element) = elements::by_symbol(symbol) else {
                self.unknown_element(symbol);
                return None;
            };
            let (after, count) = self.count(&rest[symbol.len()..])?;
            atoms.push((element.z, count));
            rest = after;
        }
        Some((rest, Formula { atoms }))
    }

    /// `count = digits [ "." digits ] | subscript-digits ;`
    fn count<'s>(&mut self, text: &'s str) -> Option<(&'s str, Q)> {
        let plain: IResult<&str, &str> = recognize((digit1, opt((char('.'), digit1)))).parse(text);
        if let Ok((rest, digits)) = plain {
            return match number::parse_decimal(digits) {
                Ok(q) => Some((rest, q)),
                Err(e) => {
                    self.error(
                        Code::Number,
                        self.span_of(digits),
                        format!("count `{digits}`: {e}"),
                    );
                    None
                }
            };
        }
        let subscript: IResult<&str, &str> =
            take_while1(|c: char| ('₀'..='₉').contains(&c)).parse(text);
        if let Ok((rest, digits)) = subscript {
            let ascii: String = digits
                .chars()
                .map(|c| {
                    // `₀`..`₉` are consecutive code points, as are `0`..`9`.
                    char::from_digit(u32::from(c).saturating_sub(u32::from('₀')), 10).unwrap_or('0')
                })
                .collect();
            return match number::parse_decimal(&ascii) {
                Ok(q) => Some((rest, q)),
                Err(e) => {
                    self.error(
                        Code::Number,
                        self.span_of(digits),
                        format!("count `{digits}`: {e}"),
                    );
                    None
                }
            };
        }
        Some((text, Q::from_integer(1)))
    }
}

fn number_value(digits: &str) -> Result<Q, NumberError> {
    let glyph = match digits {
        "½" => Some((1, 2)),
        "⅓" => Some((1, 3)),
        "⅔" => Some((2, 3)),
        "¼" => Some((1, 4)),
        "¾" => Some((3, 4)),
        _ => None,
    };
    match glyph {
        Some((n, d)) => Ok(Q::new(n, d)),
        None => number::parse(digits),
    }
}

/// `coefficient = digits [ ( "/" | "." ) digits ] | "½" | "⅓" | … ;` followed
/// by optional space (`\,` and `~` from LaTeX count as space).
fn coefficient(text: &str) -> IResult<&str, Option<&str>> {
    let number = alt((
        recognize((digit1, opt(alt(((char('/'), digit1), (char('.'), digit1)))))),
        recognize(satisfy(|c| matches!(c, '½' | '⅓' | '⅔' | '¼' | '¾'))),
    ));
    let spacing = take_while(|c: char| c.is_whitespace() || c == '~');
    let (rest, found) = opt((
        number,
        spacing,
        opt(alt((tag("\\,"), tag("\\;"), tag("\\ ")))),
        take_while(char::is_whitespace),
    ))
    .parse(text)?;
    Ok((rest, found.map(|(n, ..)| n)))
}

fn element_symbol(text: &str) -> IResult<&str, &str> {
    let two: IResult<&str, &str> = recognize((
        satisfy(|c| c.is_ascii_uppercase()),
        satisfy(|c| c.is_ascii_lowercase()),
    ))
    .parse(text);
    if let Ok((rest, s)) = two {
        if elements::by_symbol(s).is_some() {
            return Ok((rest, s));
        }
    }
    let (rest, s) = recognize(satisfy(|c| c.is_ascii_uppercase())).parse(text)?;
    if elements::by_symbol(s).is_some() {
        Ok((rest, s))
    } else {
        Err(nom::Err::Error(nom::error::Error::new(
            text,
            nom::error::ErrorKind::Tag,
        )))
    }
}

fn phase_tag(text: &str) -> (&str, Option<Phase>) {
    for (tag, phase) in [
        ("(g)", Phase::Gas),
        ("(s)", Phase::Solid),
        ("(l)", Phase::Liquid),
        ("(cr)", Phase::Solid),
    ] {
        if let Some(rest) = text.strip_prefix(tag) {
            return (rest, Some(phase));
        }
    }
    (text, None)
}

/// Index of the bracket that closes the one at the start of `text`.
fn matching_close(text: &str) -> Option<usize> {
    let mut depth = 0usize;
    for (i, c) in text.char_indices() {
        match c {
            '(' | '{' | '[' => depth = depth.saturating_add(1),
            ')' | '}' | ']' => {
                depth = depth.checked_sub(1)?;
                if depth == 0 {
                    return Some(i);
                }
            }
            _ => {}
        }
    }
    None
}

/// `red:O_O`: a name glued to its reaction.
fn looks_like_name(text: &str) -> bool {
    text.find(':').is_some_and(|colon| {
        colon > 0
            && text[..colon]
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || c == '-' || c == '.')
    })
}

fn is_mark_char(c: char) -> bool {
    matches!(
        c,
        '.' | '*' | '•' | '∙' | '·' | '\'' | '′' | '’' | '″' | '‴' | 'x' | 'X' | '×' | '^'
    )
}

fn is_mark_start(c: char) -> bool {
    is_mark_char(c) || c == '\\'
}

/// One charge mark at the start of `text`: (bytes, value, style).
fn mark_at(text: &str) -> Option<(usize, i32, MarkStyle)> {
    for (macro_name, value) in [
        ("\\bullet", 1),
        ("\\cdot", 1),
        ("\\prime", -1),
        ("\\times", 0),
    ] {
        if text.starts_with(macro_name)
            && !text[macro_name.len()..].starts_with(|c: char| c.is_ascii_alphabetic())
        {
            return Some((macro_name.len(), value, MarkStyle::Latex));
        }
    }
    let c = text.chars().next()?;
    let (value, style) = match c {
        '.' => (1, MarkStyle::Ascii),
        '*' => (1, MarkStyle::Star),
        '•' | '∙' | '·' => (1, MarkStyle::Unicode),
        '\'' => (-1, MarkStyle::Ascii),
        '′' | '’' => (-1, MarkStyle::Unicode),
        '″' => (-2, MarkStyle::Unicode),
        '‴' => (-3, MarkStyle::Unicode),
        'x' | 'X' => (0, MarkStyle::Ascii),
        '×' => (0, MarkStyle::Unicode),
        _ => return None,
    };
    Some((c.len_utf8(), value, style))
}

fn is_electronic_start(text: &str) -> bool {
    let mut chars = text.chars();
    matches!(chars.next(), Some('e' | 'h'))
        && chars.next().is_none_or(|c| {
            is_mark_start(c) || c == '_' || c == '{' || c.is_whitespace() || c == ')' || c == '}'
        })
}

fn is_electronic_token(token: &str) -> bool {
    is_electronic_start(token)
}

#[cfg(test)]
mod tests;
