//! Rules beyond the three balances, and the levels every rule runs at.
//!
//! In: each reaction of a file in order, with its verdict. Out: extra
//! diagnostics (mixed mark styles, repeated reactions, duplicate names,
//! fractional coefficients in an integer file, unmarked defects) and the
//! final severity of every diagnostic after configuration (`lacuna.toml`,
//! `--deny`/`--warn`/`--allow`) and per-line `# lacuna-allow:` comments.

use crate::base::diagnostic::{Code, Diagnostic, Severity};
use crate::base::number::{self, Q};
use crate::host::{Host, SiteLookup};
use crate::notation::{
    Entity, MarkStyle, Occupant, Phase, Reaction, Site, Span, Species, SpeciesKey, Term,
};
use std::collections::HashMap;
use std::collections::hash_map::Entry;
use std::hash::{BuildHasherDefault, Hash, Hasher};
use std::path::{Path, PathBuf};

/// The comment that silences codes on its own line: `# lacuna-allow: L501 V402`.
pub const ALLOW_COMMENT: &str = "lacuna-allow:";

/// The configuration file looked for at the repository root.
pub const CONFIG_FILE: &str = "lacuna.toml";

/// What to do with a rule's diagnostics.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum RuleLevel {
    Allow,
    Warn,
    Deny,
}

impl RuleLevel {
    pub fn parse(text: &str) -> Option<RuleLevel> {
        match text.to_ascii_lowercase().as_str() {
            "allow" | "off" => Some(RuleLevel::Allow),
            "warn" | "warning" => Some(RuleLevel::Warn),
            "deny" | "error" => Some(RuleLevel::Deny),
            _ => None,
        }
    }
}

/// A rule level per code, plus the blanket "warnings are errors" switch.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct RuleLevels {
    pub by_code: HashMap<Code, RuleLevel>,
    pub deny_warnings: bool,
}

impl RuleLevels {
    /// Sets a level from a command-line or config name: a code (`L501`), a
    /// rule name (`mixed-marks`) or `warnings` (for deny only).
    pub fn set(&mut self, name: &str, level: RuleLevel) -> Result<(), String> {
        if name.eq_ignore_ascii_case("warnings") && level == RuleLevel::Deny {
            self.deny_warnings = true;
            return Ok(());
        }
        let code = Code::from_str_id(name)
            .or_else(|| Code::ALL.iter().copied().find(|c| rule_name(*c) == name));
        match code {
            Some(code) => {
                self.by_code.insert(code, level);
                Ok(())
            }
            None => Err(format!(
                "`{name}` is not a rule: use a code such as `L501` or a name such as `mixed-marks` (`lacuna explain` lists them)"
            )),
        }
    }

    /// Applies levels and line suppressions to one line's diagnostics.
    pub fn apply(&self, diagnostics: &mut Vec<Diagnostic>, line_text: &str) {
        if diagnostics.is_empty()
            || self.by_code.is_empty() && !self.deny_warnings && !line_text.contains(ALLOW_COMMENT)
        {
            return;
        }
        let allowed = allowed_on_line(line_text);
        diagnostics.retain_mut(|d| {
            if allowed.contains(&d.code) {
                return false;
            }
            match self.by_code.get(&d.code) {
                Some(RuleLevel::Allow) => return false,
                Some(RuleLevel::Deny) => d.severity = Severity::Error,
                Some(RuleLevel::Warn) => d.severity = Severity::Warning,
                None => {}
            }
            if self.deny_warnings && d.severity == Severity::Warning {
                d.severity = Severity::Error;
            }
            true
        });
    }

    /// Reads `lacuna.toml`: a `[rules]` table of `name-or-code = "allow|warn|deny"`.
    pub fn from_config(text: &str, path: &Path) -> Result<RuleLevels, String> {
        let value: toml::Table = text
            .parse()
            .map_err(|e: toml::de::Error| format!("{}: {e}", path.display()))?;
        let mut levels = RuleLevels::default();
        for (key, item) in &value {
            if key != "rules" {
                return Err(format!(
                    "{}: unknown section `{key}`; the file holds a `[rules]` table",
                    path.display()
                ));
            }
            let Some(rules) = item.as_table() else {
                return Err(format!("{}: `rules` must be a table", path.display()));
            };
            for (name, level) in rules {
                let level = level.as_str().and_then(RuleLevel::parse).ok_or_else(|| {
                    format!(
                        "{}: rule `{name}` needs \"allow\", \"warn\" or \"deny\"",
                        path.display()
                    )
                })?;
                levels
                    .set(name, level)
                    .map_err(|e| format!("{}: {e}", path.display()))?;
            }
        }
        Ok(levels)
    }
}

/// Finds `lacuna.toml` in `start` or its parents, stopping at a repository root.
pub fn find_config(start: &Path) -> Option<PathBuf> {
    let mut dir = Some(start);
    while let Some(d) = dir {
        let candidate = d.join(CONFIG_FILE);
        if candidate.is_file() {
            return Some(candidate);
        }
        if d.join(".git").exists() {
            return None;
        }
        dir = d.parent();
    }
    None
}

/// A rule's kebab-case name, from its title.
pub fn rule_name(code: Code) -> String {
    code.title().replace(' ', "-")
}

fn allowed_on_line(line_text: &str) -> Vec<Code> {
    let Some(at) = line_text.find(ALLOW_COMMENT) else {
        return Vec::new();
    };
    line_text[at..][ALLOW_COMMENT.len()..]
        .split(|c: char| c.is_whitespace() || c == ',')
        .filter_map(Code::from_str_id)
        .collect()
}

/// Above this many distinct reactions a file's repeats are no longer tracked,
/// so memory stays bounded on huge generated files.
const REPEAT_TRACKING_LIMIT: usize = 100_000;

/// Per-file state of the rules that look across lines.
#[derive(Debug, Default)]
pub struct FileLints {
    dot_style: Option<(MarkStyle, u32)>,
    other_style: Option<(MarkStyle, u32)>,
    /// Reactions seen so far by the hash of their scaled net stoichiometry,
    /// with the line and the net itself: a hash match is only a candidate,
    /// the nets are compared exactly before anything is reported.
    seen: HashMap<u64, Vec<(u32, Net)>, KeyIsHash>,
    /// Names seen so far, by hash (bounded memory on huge files): the line
    /// and where the name's text starts in `label_text`. A hash match is only
    /// a candidate; the names themselves are compared before L503 or L504.
    labels: HashMap<NameKey, (u32, u32), KeyIsHash>,
    /// The first-seen names, each ended by a newline (a name holds none).
    label_text: String,
    /// Names that could not go in `labels`: a different name had their hash
    /// (or `label_text` outgrew u32 offsets). With the line of first use.
    label_others: Vec<(Box<str>, u32)>,
    /// Names used by model lines: (line, line text, span of the name).
    references: Vec<(u32, String, Span)>,
    integer_reactions: u32,
    fractional_reactions: u32,
    repeat_limit_noted: bool,
}

/// What the cross-line rules need to know about one reaction, worked out
/// without the file's context (so on any thread): hashes, marks, the first
/// fractional coefficient, and the diagnostics that need no context.
#[derive(Debug, Clone)]
pub struct ReactionFacts {
    /// Hash and span of the reaction's name.
    label: Option<(u64, Span)>,
    /// (charge is positive, style as tracked, span) of each marked species, in order.
    marks: Vec<(bool, MarkStyle, Span)>,
    /// The net stoichiometry and its hashes, forwards and reversed.
    repeat: Option<Repeat>,
    span: Span,
    /// The first fractional coefficient's span, if any.
    fractional: Option<Span>,
    /// Rules that need only the reaction and its host (unmarked defects).
    local: Vec<Diagnostic>,
}

impl ReactionFacts {
    pub fn of(label: Option<(&str, Span)>, reaction: &Reaction, host: Option<&Host>) -> Self {
        let label = label.map(|(name, span)| {
            let mut h = fnv();
            h.write(name.as_bytes());
            (h.finish(), span)
        });
        let mut marks = Vec::new();
        for_each_species(reaction, &mut |species| {
            if species.marks == MarkStyle::Unmarked {
                return;
            }
            // Dots have four spellings; primes and crosses three (a star user
            // writes ASCII primes), so the two are tracked apart.
            let positive = species.charge > 0;
            let style = if !positive && species.marks == MarkStyle::Star {
                MarkStyle::Ascii
            } else {
                species.marks
            };
            marks.push((positive, style, species.span.clone()));
        });
        // Gases are conventionally fractional (`1/2 O2(g)`), so only the
        // condensed species count.
        let fractional = reaction
            .terms()
            .find(|(_, t)| {
                !t.coefficient.is_integer()
                    && !matches!(&t.entity, Entity::Compound(c) if c.phase == Some(crate::notation::Phase::Gas))
            })
            .map(|(_, t)| t.span.clone());
        let mut local = Vec::new();
        if let Some(host) = host {
            implicit_neutral(reaction, host, &mut local);
        }
        ReactionFacts {
            label,
            marks,
            repeat: normalized_hashes(reaction),
            span: reaction.span.clone(),
            fractional,
            local,
        }
    }
}

impl FileLints {
    /// Diagnostics for one reaction at `line`, in the context of the file so far.
    pub fn reaction(
        &mut self,
        line: u32,
        label: Option<(&str, std::ops::Range<usize>)>,
        reaction: &Reaction,
        host: Option<&Host>,
    ) -> Vec<Diagnostic> {
        let name = label.as_ref().map(|(name, _)| *name);
        let facts = ReactionFacts::of(label.clone(), reaction, host);
        self.apply(line, name, facts)
    }

    /// Diagnostics for one reaction at `line` from its facts, in the context
    /// of the file so far; `name` is the reaction's name as written.
    pub fn apply(
        &mut self,
        line: u32,
        name: Option<&str>,
        facts: ReactionFacts,
    ) -> Vec<Diagnostic> {
        let mut out = Vec::new();
        if let Some((key, span)) = facts.label {
            let name = name.unwrap_or_default();
            if let Some(first) = self.first_use(key, name, line) {
                out.push(
                    Diagnostic::new(Code::DuplicateLabel, span, format!("the name `{name}` is already used on line {first}"))
                        .with_help("names identify reactions in models and reports; give this one another name"),
                );
            }
        }
        self.mark_styles(line, facts.marks, &mut out);
        if let Some(repeat) = facts.repeat {
            self.repeats(line, repeat, facts.span, &mut out);
        }
        self.fractions(facts.fractional, &mut out);
        out.extend(facts.local);
        out
    }

    /// The names declared so far, for rules that check references.
    /// Notes a model line's use of a reaction name, resolved at the end.
    pub fn reference(&mut self, line: u32, line_text: &str, name: Span) {
        self.references.push((line, line_text.to_string(), name));
    }

    /// Model lines that name no reaction of the file, as located diagnostics
    /// with their line's text.
    pub fn unresolved_references(&mut self) -> Vec<(String, Diagnostic)> {
        let references = std::mem::take(&mut self.references);
        references
            .into_iter()
            .filter_map(|(line, text, span)| {
                let name = text.get(span.clone())?.to_string();
                if self.knows_label(&name) {
                    return None;
                }
                let d = Diagnostic::new(
                    Code::UnknownReaction,
                    span,
                    format!(
                        "no reaction in this file is named `{}`",
                        crate::notation::quoted(&name)
                    ),
                )
                .with_help(
                    "name the reaction with `name: reaction`, or fix the spelling of the name here",
                )
                .locate(line, &text);
                Some((text, d))
            })
            .collect()
    }

    pub fn knows_label(&self, name: &str) -> bool {
        let mut h = fnv();
        h.write(name.as_bytes());
        let stored = self
            .labels
            .get(&NameKey::new(h.finish()))
            .is_some_and(|(_, at)| stored_name(&self.label_text, *at) == name);
        stored || self.label_others.iter().any(|(n, _)| &**n == name)
    }

    /// Records the first use of a name and returns `None`, or returns the
    /// line of its first use. One probe of the (large, cache-cold) table per
    /// name; on a hash match the names are compared.
    fn first_use(&mut self, key: u64, name: &str, line: u32) -> Option<u32> {
        match self.labels.entry(NameKey::new(key)) {
            Entry::Occupied(first) => {
                let (first_line, at) = *first.get();
                if stored_name(&self.label_text, at) == name {
                    return Some(first_line);
                }
            }
            Entry::Vacant(slot) => {
                if let Ok(at) = u32::try_from(self.label_text.len()) {
                    slot.insert((line, at));
                    self.label_text.push_str(name);
                    self.label_text.push('\n');
                    return None;
                }
            }
        }
        // A different name with the same hash, or no room for offsets.
        if let Some((_, first)) = self.label_others.iter().find(|(n, _)| &**n == name) {
            return Some(*first);
        }
        self.label_others.push((name.into(), line));
        None
    }

    fn mark_styles(
        &mut self,
        line: u32,
        marks: Vec<(bool, MarkStyle, Span)>,
        out: &mut Vec<Diagnostic>,
    ) {
        for (positive, style, span) in marks {
            let slot = if positive {
                &mut self.dot_style
            } else {
                &mut self.other_style
            };
            match slot {
                None => *slot = Some((style, line)),
                Some((first, first_line)) if *first != style => {
                    let (first, first_line) = (*first, *first_line);
                    out.push(
                        Diagnostic::new(Code::MixedMarks, span, format!("charge marks written in {} style; line {first_line} uses {} style", style_name(style), style_name(first)))
                            .with_help("use one spelling of the marks in a file; `lacuna fmt --write` rewrites them"),
                    );
                }
                Some(_) => {}
            }
        }
    }

    fn repeats(&mut self, line: u32, repeat: Repeat, span: Span, out: &mut Vec<Diagnostic>) {
        // The hashes may collide (and wrap by design): they only pick the
        // candidates, and the nets themselves decide.
        let earlier = [repeat.forward, repeat.backward]
            .iter()
            .filter_map(|h| self.seen.get(h))
            .flatten()
            .find_map(|(first, net)| {
                proportional(net, &repeat.net).map(|same_way| {
                    (
                        *first,
                        if same_way {
                            "a multiple"
                        } else {
                            "the reverse"
                        },
                    )
                })
            });
        if let Some((first, what)) = earlier {
            out.push(
                Diagnostic::new(
                    Code::RepeatedReaction,
                    span,
                    format!("this reaction is {what} of the one on line {first}"),
                )
                .with_help(
                    "a repeated reaction adds no information; remove it or name the one you mean",
                ),
            );
            return;
        }
        if self.seen.len() < REPEAT_TRACKING_LIMIT {
            self.seen
                .entry(repeat.forward)
                .or_default()
                .push((line, repeat.net));
        } else if !self.repeat_limit_noted {
            self.repeat_limit_noted = true;
            let mut note = Diagnostic::new(
                Code::RepeatedReaction,
                span,
                format!(
                    "more than {REPEAT_TRACKING_LIMIT} distinct reactions: later repeats are not looked for"
                ),
            );
            note.severity = Severity::Note;
            out.push(note);
        }
    }

    fn fractions(&mut self, fractional: Option<Span>, out: &mut Vec<Diagnostic>) {
        match fractional {
            // Counts of reactions in one file: u32 saturates, never wraps.
            None => self.integer_reactions = self.integer_reactions.saturating_add(1),
            Some(span) => {
                if self.integer_reactions > self.fractional_reactions {
                    out.push(
                        Diagnostic::new(Code::FractionalCoefficients, span, "a fractional coefficient on a condensed species in a file that otherwise uses whole numbers")
                            .with_help("multiply the reaction through to whole numbers, or keep fractions throughout the file"),
                    );
                }
                self.fractional_reactions = self.fractional_reactions.saturating_add(1);
            }
        }
    }
}

fn style_name(style: MarkStyle) -> &'static str {
    match style {
        MarkStyle::Unmarked => "unmarked",
        MarkStyle::Ascii => "ASCII (`.` `'` `x`)",
        MarkStyle::Star => "star (`*`)",
        MarkStyle::Unicode => "Unicode (`•` `′` `×`)",
        MarkStyle::Latex => "LaTeX (`\\bullet` `\\prime`)",
    }
}

/// Calls `f` on every species of a reaction, associates' parts included.
fn for_each_species<'a>(reaction: &'a Reaction, f: &mut dyn FnMut(&'a Species)) {
    fn visit<'a>(term: &'a Term, f: &mut dyn FnMut(&'a Species)) {
        match &term.entity {
            Entity::Species(s) => f(s),
            Entity::Associate(a) => a.parts.iter().for_each(|p| visit(p, f)),
            _ => {}
        }
    }
    for (_, t) in reaction.terms() {
        visit(t, f);
    }
}

/// The name stored at byte `at` of `text` (up to its newline).
fn stored_name(text: &str, at: u32) -> &str {
    let at = usize::try_from(at).unwrap_or(usize::MAX);
    text.get(at..)
        .and_then(|rest| rest.split('\n').next())
        .unwrap_or_default()
}

/// A name's 64-bit hash stored as two halves: with the line number and the
/// name's offset beside it a table entry takes 16 bytes instead of 24, which
/// matters for files with a million names.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct NameKey([u32; 2]);

impl NameKey {
    fn new(hash: u64) -> NameKey {
        NameKey([(hash >> 32) as u32, hash as u32])
    }
}

impl Hash for NameKey {
    fn hash<H: Hasher>(&self, state: &mut H) {
        state.write_u64(u64::from(self.0[0]) << 32 | u64::from(self.0[1]));
    }
}

/// Maps keyed by a hash already computed need no second hashing.
type KeyIsHash = BuildHasherDefault<PassThrough>;

#[derive(Default)]
struct PassThrough(u64);

impl Hasher for PassThrough {
    fn finish(&self) -> u64 {
        self.0
    }

    fn write(&mut self, bytes: &[u8]) {
        for b in bytes {
            self.0 = self.0.rotate_left(8) ^ u64::from(*b);
        }
    }

    fn write_u64(&mut self, n: u64) {
        self.0 = n;
    }
}

/// A small, fast hasher (FNV-1a); repeat detection hashes every reaction,
/// and SipHash's resistance to crafted collisions buys nothing here.
struct Fnv(u64);

impl Hasher for Fnv {
    fn finish(&self) -> u64 {
        self.0
    }

    fn write(&mut self, bytes: &[u8]) {
        for b in bytes {
            self.0 = (self.0 ^ u64::from(*b)).wrapping_mul(0x0100_0000_01b3);
        }
    }

    /// Whole words at once (most of what is hashed), mixed with the
    /// SplitMix64 finaliser: a few cycles instead of eight FNV rounds.
    fn write_u64(&mut self, n: u64) {
        let mut z = self.0 ^ n;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        self.0 = z ^ (z >> 31);
    }

    fn write_usize(&mut self, n: usize) {
        self.write_u64(n as u64);
    }
}

/// Feeds an exact number to a hasher. `Q` values are kept in lowest terms,
/// so numerator and denominator identify the value (num-rational's own
/// `Hash` runs Euclid's algorithm to allow for unreduced values).
fn hash_q(q: Q, h: &mut Fnv) {
    h.write_i64(*q.numer());
    h.write_i64(*q.denom());
}

/// Feeds a formula's atoms, in the order written, to a hasher.
fn hash_atoms(atoms: &[(u8, Q)], h: &mut Fnv) {
    h.write_usize(atoms.len());
    for (z, n) in atoms {
        h.write_u8(*z);
        hash_q(*n, h);
    }
}

fn fnv() -> Fnv {
    Fnv(0xcbf2_9ce4_8422_2325)
}

/// Feeds what a species *is* (not how it is spelled) to a hasher.
fn hash_species(s: &Species, h: &mut Fnv) {
    match &s.occupant {
        Occupant::Vacancy(_) => h.write_u8(1),
        Occupant::Electron => h.write_u8(2),
        Occupant::Hole => h.write_u8(3),
        Occupant::Atoms { formula, .. } => {
            h.write_u8(4);
            hash_atoms(&formula.atoms, h);
        }
    }
    s.site.hash(h);
    h.write_i32(s.charge);
}

/// A hash of what a term stands for; `None` for the perfect crystal.
fn entity_hash(term: &Term) -> Option<u64> {
    let mut h = fnv();
    match &term.entity {
        Entity::Species(s) => hash_species(s, &mut h),
        Entity::Compound(c) => {
            h.write_u8(5);
            // Atoms in any order (`O2Ti` is `TiO2`): combine their hashes
            // commutatively, which needs no sorted copy.
            let mut sum = 0u64;
            for atom in &c.formula.atoms {
                let mut ah = fnv();
                hash_atoms(std::slice::from_ref(atom), &mut ah);
                sum = sum.wrapping_add(ah.finish());
            }
            h.write_u64(sum);
            c.phase.hash(&mut h);
        }
        Entity::Associate(a) => {
            h.write_u8(6);
            // Parts in any order: combine their hashes commutatively.
            let mut sum = 0u64;
            for part in &a.parts {
                if let Entity::Species(s) = &part.entity {
                    let mut ph = fnv();
                    hash_species(s, &mut ph);
                    hash_q(part.coefficient, &mut ph);
                    sum = sum.wrapping_add(ph.finish());
                }
            }
            h.write_u64(sum);
            a.charge.hash(&mut h);
        }
        Entity::Nil => return None,
    }
    Some(h.finish())
}

/// What a term stands for, exactly: spelling, spans and the order of a
/// compound's atoms or an associate's parts do not matter. The repeat rule
/// compares these once hashes have found a candidate.
#[derive(Debug, Clone, PartialEq, Eq)]
enum Thing {
    Species(SpeciesKey),
    /// Atoms sorted, and the phase.
    Compound(Vec<(u8, Q)>, Option<Phase>),
    /// Species parts with their coefficients, sorted, and the declared charge.
    Associate(Vec<(SpeciesKey, Q)>, Option<i32>),
}

impl Thing {
    /// The same identity `entity_hash` hashes; `None` for the perfect crystal.
    fn of(entity: &Entity) -> Option<Thing> {
        Some(match entity {
            Entity::Species(s) => Thing::Species(s.key()),
            Entity::Compound(c) => {
                let mut atoms = c.formula.atoms.clone();
                atoms.sort_unstable();
                Thing::Compound(atoms, c.phase)
            }
            Entity::Associate(a) => {
                let mut parts: Vec<(SpeciesKey, Q)> = a
                    .parts
                    .iter()
                    .filter_map(|p| match &p.entity {
                        Entity::Species(s) => Some((s.key(), p.coefficient)),
                        _ => None,
                    })
                    .collect();
                parts.sort_unstable();
                Thing::Associate(parts, a.charge)
            }
            Entity::Nil => return None,
        })
    }
}

/// A reaction's net stoichiometry: each thing once, with its coefficient
/// (positive on the right), none zero.
type Net = Box<[(Thing, Q)]>;

/// A reaction's net stoichiometry with the hashes that find candidates.
#[derive(Debug, Clone)]
struct Repeat {
    forward: u64,
    backward: u64,
    net: Net,
}

/// `Some(true)` when `b` is a positive multiple of `a`, `Some(false)` when a
/// negative one (the reverse), `None` otherwise. Exact, whatever the sizes.
fn proportional(a: &[(Thing, Q)], b: &[(Thing, Q)]) -> Option<bool> {
    let ((t0, a0), rest) = a.split_first()?;
    if a.len() != b.len() {
        return None;
    }
    let b0 = b.iter().find(|(t, _)| t == t0)?.1;
    for (t, ak) in rest {
        let bk = b.iter().find(|(u, _)| u == t)?.1;
        // b = λ a  ⇔  ak·b0 = bk·a0 for every k.
        if !number::products_equal(*ak, b0, bk, *a0) {
            return None;
        }
    }
    Some(a0.is_positive() == b0.is_positive())
}

/// The reaction's net stoichiometry and its hashes scaled to a canonical
/// size, forwards and reversed: a multiple or the reverse of a reaction has
/// one of its hashes. `None` when the net leaves the exact range (the checker
/// reports that) or is empty.
fn normalized_hashes(reaction: &Reaction) -> Option<Repeat> {
    let mut net: Vec<(u64, Thing, Q)> =
        Vec::with_capacity(reaction.left.len().saturating_add(reaction.right.len()));
    for (right, term) in reaction.terms() {
        let (Some(key), Some(thing)) = (entity_hash(term), Thing::of(&term.entity)) else {
            continue;
        };
        let signed = if right {
            term.coefficient
        } else {
            term.coefficient.checked_neg().ok()?
        };
        match net.iter_mut().find(|(k, t, _)| *k == key && *t == thing) {
            Some((_, _, q)) => *q = number::add(*q, signed).ok()?,
            None => net.push((key, thing, signed)),
        }
    }
    net.retain(|(_, _, q)| *q != Q::from_integer(0));
    net.sort_unstable_by_key(|(k, _, _)| *k);
    // Scale by the size of the first coefficient: a reversed reaction then
    // hashes as the negation of the original.
    let scale = net.first()?.2.checked_abs().ok()?;
    let hash = |sign: i64| {
        let mut h = fnv();
        for (key, _, q) in &net {
            h.write_u64(*key);
            // The size of q/scale, exact, or a mark when it does not fit in
            // i64 parts (the same for every multiple, since the quotient is
            // the same number); the sign apart, so the reverse negates it.
            match q.checked_abs().and_then(|m| m.checked_div(scale)) {
                Ok(ratio) => {
                    h.write_i64(*ratio.numer());
                    h.write_i64(*ratio.denom());
                }
                Err(_) => h.write_u8(0xff),
            }
            // (−1, 0 or 1) × ±1 cannot overflow.
            h.write_i64(q.numer().signum().wrapping_mul(sign));
        }
        h.finish()
    };
    let (forward, backward) = (hash(1), hash(-1));
    Some(Repeat {
        forward,
        backward,
        net: net.into_iter().map(|(_, t, q)| (t, q)).collect(),
    })
}

/// Vacancies and interstitials written without a mark on a charged site.
fn implicit_neutral(reaction: &Reaction, host: &Host, out: &mut Vec<Diagnostic>) {
    for_each_species(reaction, &mut |species| {
        if species.marks != MarkStyle::Unmarked {
            return;
        }
        let usual = match (&species.occupant, &species.site) {
            (Occupant::Vacancy(_), Some(Site::Lattice { element, label })) => {
                match host.lookup(*element, label.as_deref()) {
                    SiteLookup::Found(i) => {
                        let charge = host.sublattices[i].charge.checked_neg().ok();
                        charge.and_then(|charge| {
                            (charge != Q::from_integer(0) && charge.is_integer())
                                .then(|| *charge.numer())
                        })
                    }
                    _ => None,
                }
            }
            (Occupant::Atoms { formula, .. }, Some(Site::Interstitial)) => formula
                .single_element()
                .and_then(|z| host.sublattices.iter().find(|s| s.element == z))
                .filter(|s| s.charge.is_integer() && s.charge != Q::from_integer(0))
                .map(|s| *s.charge.numer()),
            _ => None,
        };
        let Some(usual) = usual else { return };
        let mut fixed = species.clone();
        fixed.charge = i32::try_from(usual).unwrap_or(0);
        let fixed_text = crate::notation::render_species(&fixed, crate::notation::Style::Unicode);
        let mut neutral = species.clone();
        neutral.marks = MarkStyle::Unicode;
        let neutral_text =
            crate::notation::render_species(&neutral, crate::notation::Style::Unicode);
        out.push(
            Diagnostic::new(Code::ImplicitNeutral, species.span.clone(), format!("no charge mark, so this reads as the neutral {neutral_text}"))
                .with_help(format!("in this host the fully ionised form is {fixed_text}; write `×` if the neutral defect is meant")),
        );
    });
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::notation::parse_reaction;

    fn repeat_of(text: &str) -> Repeat {
        let (reaction, _) = parse_reaction(text, 0..text.len());
        normalized_hashes(&reaction.expect("parses")).expect("a net stoichiometry")
    }

    /// Names are compared after a hash match: a collision is not a duplicate.
    #[test]
    fn a_name_hash_collision_is_not_a_duplicate() {
        let mut lints = FileLints::default();
        assert_eq!(lints.first_use(7, "red", 1), None);
        assert_eq!(lints.first_use(7, "ox", 2), None, "same hash, other name");
        assert_eq!(lints.first_use(7, "ox", 3), Some(2));
        assert_eq!(lints.first_use(7, "red", 4), Some(1));
        assert_eq!(lints.first_use(8, "gap", 5), None);
        assert_eq!(lints.first_use(8, "gap", 6), Some(5));
        // knows_label hashes for itself: the names stored under key 7 and 8
        // are not found under their real hashes unless compared.
        let mut named = FileLints::default();
        let mut h = fnv();
        h.write(b"red");
        assert_eq!(named.first_use(h.finish(), "red", 1), None);
        assert!(named.knows_label("red"));
        assert!(!named.knows_label("re"));
        assert!(!named.knows_label("redd"));
    }

    /// A hash match alone never reports: the nets are compared. Collisions
    /// are forced by giving unrelated reactions the same hashes.
    #[test]
    fn a_hash_collision_is_not_a_repeat() {
        let mut lints = FileLints::default();
        let mut out = Vec::new();
        let first = repeat_of("O_O -> V_O.. + 2e' + 1/2 O2(g)");
        let (forward, backward) = (first.forward, first.backward);
        lints.repeats(1, first, 0..1, &mut out);
        // Different reaction, same hashes (as a collision would give).
        let mut other = repeat_of("nil -> e' + h.");
        other.forward = forward;
        other.backward = backward;
        lints.repeats(2, other, 0..1, &mut out);
        // Same stoichiometry up to a factor of 3: proportional, reported
        // whatever hash it carries among the candidates.
        let mut tripled = repeat_of("3O_O -> 3V_O.. + 6e' + 3/2 O2(g)");
        assert_eq!(tripled.forward, forward, "a multiple hashes alike");
        tripled.backward = 12345;
        lints.repeats(3, tripled, 0..1, &mut out);
        let reversed = repeat_of("V_O.. + 2e' + 1/2 O2(g) -> O_O");
        assert_eq!(
            reversed.backward, forward,
            "the reverse hashes as the negation"
        );
        lints.repeats(4, reversed, 0..1, &mut out);
        let messages: Vec<&str> = out.iter().map(|d| d.message.as_str()).collect();
        assert_eq!(
            messages,
            vec![
                "this reaction is a multiple of the one on line 1",
                "this reaction is the reverse of the one on line 1"
            ]
        );
    }

    // The measured case: coefficients near 5e18 whose net would wrap. The net
    // leaves the exact range, so the rule stays silent (the checker reports
    // the overflow) instead of matching a wrapped number.
    #[test]
    fn coefficients_near_the_limit_are_not_repeats() {
        let lines = [
            "nil -> 8446744073709551616 e' + 8446744073709551616 h.",
            "5000000000000000000 e' + 5000000000000000000 e' + 5000000000000000000 h. + 5000000000000000000 h. -> nil",
            "nil -> 4611686018427387904 e' + 4611686018427387903 h.",
            "nil -> 4611686018427387903 e' + 4611686018427387904 h.",
        ];
        assert!(
            lint("ZrO2", &lines).is_empty(),
            "{:?}",
            lint("ZrO2", &lines)
        );
        assert!(proportional(&repeat_of(lines[2]).net, &repeat_of(lines[3]).net).is_none());
        assert_eq!(
            proportional(
                &repeat_of("nil -> 4611686018427387903 e' + 4611686018427387903 h.").net,
                &repeat_of("nil -> e' + h.").net
            ),
            Some(true)
        );
    }

    fn lint(host: &str, lines: &[&str]) -> Vec<(u32, &'static str)> {
        let host = Host::from_spec(host).expect("host");
        let mut lints = FileLints::default();
        let mut found = Vec::new();
        for (i, text) in lines.iter().enumerate() {
            let (reaction, _) = parse_reaction(text, 0..text.len());
            let line = u32::try_from(i).expect("few lines").saturating_add(1);
            for d in lints.reaction(line, None, &reaction.expect("parses"), Some(&host)) {
                found.push((line, d.code.as_str()));
            }
        }
        found
    }

    #[test]
    fn mixed_marks_are_found_across_lines() {
        assert_eq!(
            lint(
                "ZrO2",
                &["O_O -> V_O.. + 2e' + 1/2 O2(g)", "nil -> V_Zr′′′′ + 2V_O••"]
            ),
            vec![(2, "L501"), (2, "L501")]
        );
        assert!(
            lint(
                "ZrO2",
                &["O_O -> V_O** + 2e' + 1/2 O2(g)", "nil -> e' + h*"]
            )
            .is_empty()
        );
    }

    #[test]
    fn multiples_and_reverses_are_found() {
        let found = lint(
            "ZrO2",
            &[
                "O_O -> V_O.. + 2e' + 1/2 O2(g)",
                "2O_O -> 2V_O.. + 4e' + O2(g)",
                "V_O.. + 2e' + 1/2 O2(g) -> O_O",
                "nil -> e' + h.",
            ],
        );
        assert_eq!(found, vec![(2, "L502"), (3, "L502")]);
    }

    #[test]
    fn fractions_in_an_integer_file() {
        let found = lint(
            "ZrO2",
            &[
                "nil -> e' + h.",
                "Y2O3 -> 2Y_Zr' + 3O_O + V_O..",
                "O_O -> V_O.. + 2e' + 1/2 O2(g)",
                "1/2 CaO -> 1/2 Ca_Zr'' + 1/2 O_O + 1/2 V_O..",
            ],
        );
        // A half O2(g) is the convention; half a formula unit of CaO is not.
        assert_eq!(found, vec![(4, "L505")]);
    }

    #[test]
    fn reverses_are_told_from_multiples() {
        let host = Host::from_spec("ZrO2").expect("host");
        let mut lints = FileLints::default();
        let mut messages = Vec::new();
        let lines = [
            "O_O -> V_O.. + 2e' + 1/2 O2(g)",
            "2O_O -> 2V_O.. + 4e' + O2(g)",
            "V_O.. + 2e' + 1/2 O2(g) -> O_O",
        ];
        for (i, text) in lines.iter().enumerate() {
            let (reaction, _) = parse_reaction(text, 0..text.len());
            for d in lints.reaction(i as u32 + 1, None, &reaction.expect("parses"), Some(&host)) {
                messages.push(d.message);
            }
        }
        assert_eq!(
            messages,
            vec![
                "this reaction is a multiple of the one on line 1",
                "this reaction is the reverse of the one on line 1"
            ]
        );
    }

    #[test]
    fn unmarked_vacancies_in_charged_sites() {
        assert_eq!(
            lint("ZrO2", &["nil -> V_Zr + 2V_O"]),
            vec![(1, "L506"), (1, "L506")]
        );
        assert!(lint("Al", &["Al_Al -> V_Al + Al(s)"]).is_empty());
    }

    #[test]
    fn levels_and_line_suppressions() {
        let mut levels = RuleLevels::default();
        levels
            .set("mixed-marks", RuleLevel::Deny)
            .expect("known rule");
        levels.set("warnings", RuleLevel::Deny).expect("blanket");
        levels.set("V407", RuleLevel::Allow).expect("code");
        assert!(levels.set("no-such-rule", RuleLevel::Warn).is_err());
        let mut ds = vec![
            Diagnostic::new(Code::MixedMarks, 0..1, "m"),
            Diagnostic::new(Code::SameOnBothSides, 0..1, "s"),
            Diagnostic::new(Code::RareOxidationState, 0..1, "r"),
            Diagnostic::new(Code::FractionalCoefficients, 0..1, "f"),
        ];
        levels.apply(&mut ds, "x # lacuna-allow: L505");
        let got: Vec<(&str, Severity)> = ds.iter().map(|d| (d.code.as_str(), d.severity)).collect();
        assert_eq!(
            got,
            vec![("L501", Severity::Error), ("V402", Severity::Error)]
        );
    }

    #[test]
    fn config_files() {
        let levels = RuleLevels::from_config(
            "[rules]\nL501 = \"allow\"\nrepeated-reaction = \"deny\"\n",
            Path::new("lacuna.toml"),
        )
        .expect("valid");
        assert_eq!(
            levels.by_code.get(&Code::MixedMarks),
            Some(&RuleLevel::Allow)
        );
        assert_eq!(
            levels.by_code.get(&Code::RepeatedReaction),
            Some(&RuleLevel::Deny)
        );
        assert!(
            RuleLevels::from_config("[rules]\nL501 = \"sometimes\"\n", Path::new("x")).is_err()
        );
        assert!(RuleLevels::from_config("[other]\n", Path::new("x")).is_err());
    }
}
