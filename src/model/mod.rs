//! Defect models: reaction files read as equilibria with data.
//! Grammar: grammar/model.md.
//!
//! In: the text of a reaction file (host, labelled reactions, model lines:
//! `K`, `dH`, `dS`, `fix`, `temperature`, `po2`, `pressure`). Out: first a
//! `Document` (every line read, every problem a located diagnostic), then a
//! `Model`: the concentration species, the equilibria with their
//! thermodynamic data, the fixed totals converted to amounts per formula
//! unit, the automatically built electroneutrality, and the exact
//! log-linear `Network` the solvers work on.

pub mod law;
pub mod network;
pub mod thermo;

use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::number::{self, Overflow, Q};
use crate::check::check_reaction;
use crate::file::reader::{Line, classify};
use crate::host::{Host, SiteLookup};
use crate::model::law::{Factor, FactorKind, Law, mass_action_law};
use crate::model::network::{NetworkError, Row};
use crate::model::thermo::{Thermo, sig};
use crate::notation::{
    Entity, Formula, Occupant, Reaction, Site, Span, Species, Style, parse_formula, parse_reaction,
    parse_species_text,
};
use std::collections::BTreeMap;

/// Default pO2 range of a sweep, in bar.
pub const DEFAULT_PO2_RANGE: (f64, f64) = (1e-30, 1e5);

/// A reaction line of the file.
#[derive(Debug, Clone)]
pub struct ReactionLine {
    pub label: Option<String>,
    pub label_span: Option<Span>,
    pub reaction: Reaction,
    pub line: u32,
    /// Index into `Document::hosts` of the host in force on this line.
    pub host: Option<usize>,
    /// Whether the reaction passed the balance checks.
    pub ok: bool,
}

/// A `K`, `dH` or `dS` line.
#[derive(Debug, Clone, PartialEq)]
pub enum Datum {
    /// K, and the temperature it holds at (`None`: the model temperature).
    K {
        value: f64,
        at: Option<f64>,
    },
    Enthalpy(f64),
    Entropy(f64),
}

/// One line of thermodynamic data.
#[derive(Debug, Clone)]
pub struct DataLine {
    pub label: String,
    pub label_span: Span,
    pub datum: Datum,
    pub line: u32,
    pub span: Span,
}

/// How a fixed amount is expressed.
#[derive(Debug, Clone, PartialEq)]
pub enum Basis {
    /// Fraction of the sites of the subject's sublattice.
    SiteFraction,
    /// Fraction of all cation sites.
    CationFraction,
    /// Per formula unit of the host.
    PerFormulaUnit,
    /// Mole percent of a dopant compound mixed with the host.
    MolPercent { formula: Formula, text: String },
}

/// A `fix` line.
#[derive(Debug, Clone)]
pub struct FixLine {
    pub subject: Species,
    pub subject_span: Span,
    pub amount: f64,
    pub amount_span: Span,
    pub basis: Basis,
    pub line: u32,
}

/// A `pressure` line.
#[derive(Debug, Clone)]
pub struct PressureLine {
    /// Gas identity as the law module keys it (`gas H2O`).
    pub key: String,
    pub text: String,
    pub bar: f64,
    pub line: u32,
    pub span: Span,
}

/// Everything read from a reaction file, before it is assembled into a model.
#[derive(Debug, Clone, Default)]
pub struct Document {
    pub source: String,
    pub lines: Vec<String>,
    pub hosts: Vec<(Host, u32)>,
    pub reactions: Vec<ReactionLine>,
    pub data: Vec<DataLine>,
    pub fixes: Vec<FixLine>,
    pub temperature: Option<(f64, u32)>,
    pub po2: Option<((f64, f64), u32)>,
    pub pressures: Vec<PressureLine>,
    /// Located diagnostics, in line order.
    pub diagnostics: Vec<Diagnostic>,
}

impl Document {
    /// The text of line `n` (1-based), or "".
    pub fn line_text(&self, n: u32) -> &str {
        n.checked_sub(1)
            .and_then(|i| self.lines.get(i as usize))
            .map_or("", String::as_str)
    }

    /// Whether any error was reported.
    pub fn has_errors(&self) -> bool {
        self.diagnostics.iter().any(Diagnostic::is_error)
    }

    fn push(&mut self, line: u32, d: Diagnostic) {
        let text = self.line_text(line).to_string();
        self.diagnostics.push(d.locate(line, &text));
    }
}

/// Byte span of `piece` within `line`; `piece` must be a slice of `line`.
fn span_of(line: &str, piece: &str) -> Span {
    let start = (piece.as_ptr() as usize).saturating_sub(line.as_ptr() as usize);
    let start = start.min(line.len());
    start..(start + piece.len()).min(line.len())
}

/// Reads a reaction file (or inline text). `default_host` applies until the
/// first `host` line.
pub fn read(source: &str, text: &str, default_host: Option<Host>) -> Document {
    let mut doc = Document {
        source: source.to_string(),
        lines: text.lines().map(str::to_string).collect(),
        ..Document::default()
    };
    if let Some(host) = default_host {
        doc.hosts.push((host, 0));
    }
    let mut current_host = if doc.hosts.is_empty() { None } else { Some(0) };
    for index in 0..doc.lines.len() {
        let number = u32::try_from(index + 1).unwrap_or(u32::MAX);
        let line = doc.lines[index].clone();
        match classify(&line) {
            Line::Blank | Line::Comment => {}
            Line::Host(span) => match Host::parse(&line, span) {
                Ok(host) => {
                    doc.hosts.push((host, number));
                    current_host = Some(doc.hosts.len() - 1);
                }
                Err(diags) => {
                    current_host = None;
                    for d in diags {
                        doc.push(number, d);
                    }
                }
            },
            Line::Reaction { label, reaction } => {
                let (parsed, mut diags) = parse_reaction(&line, reaction);
                let host = current_host.and_then(|i| doc.hosts.get(i)).map(|(h, _)| h);
                let mut ok = false;
                if let Some(r) = &parsed {
                    let verdict = check_reaction(r, host);
                    ok = verdict.ok();
                    diags.extend(verdict.diagnostics);
                }
                for d in diags {
                    doc.push(number, d);
                }
                if let Some(reaction) = parsed {
                    doc.reactions.push(ReactionLine {
                        label: label.clone().map(|l| line[l].to_string()),
                        label_span: label,
                        reaction,
                        line: number,
                        host: current_host,
                        ok,
                    });
                }
            }
            Line::Model { keyword, rest } => {
                read_model_line(&mut doc, number, &line, &line[keyword], rest);
            }
        }
    }
    doc
}

fn syntax(span: Span, message: impl Into<String>, help: &str) -> Diagnostic {
    Diagnostic::new(Code::ModelSyntax, span, message).with_help(help)
}

fn unit_diagnostic(span: Span, e: thermo::UnitError) -> Diagnostic {
    Diagnostic::new(Code::ModelUnit, span, e.message).with_help(e.help)
}

/// Splits `label = value` into the label and the value text (slices of `line`).
fn label_and_value<'a>(
    line: &'a str,
    rest: &'a str,
    example: &str,
) -> Result<(&'a str, &'a str), Diagnostic> {
    let trimmed = rest.trim();
    let Some((label, value)) = trimmed.split_once('=') else {
        return Err(syntax(
            span_of(line, trimmed),
            "expected `label = value`",
            example,
        ));
    };
    let label = label.trim();
    let value = value.trim();
    if label.is_empty() || label.contains(char::is_whitespace) {
        return Err(syntax(
            span_of(line, if label.is_empty() { trimmed } else { label }),
            "expected one reaction label before `=`",
            example,
        ));
    }
    if value.is_empty() {
        return Err(syntax(span_of(line, trimmed), "nothing after `=`", example));
    }
    Ok((label, value))
}

fn read_model_line(doc: &mut Document, number: u32, line: &str, keyword: &str, rest: Span) {
    let rest_text = &line[rest.clone()];
    let result = match keyword {
        "K" => read_k(line, rest_text).map(|d| doc.data.push(with_line(d, number))),
        "dH" => {
            read_energy_datum(line, rest_text, true).map(|d| doc.data.push(with_line(d, number)))
        }
        "dS" => {
            read_energy_datum(line, rest_text, false).map(|d| doc.data.push(with_line(d, number)))
        }
        "temperature" => {
            let value = rest_text.trim();
            match thermo::parse_temperature(value) {
                Ok(t) => match doc.temperature {
                    Some((_, first)) => Err(Diagnostic::new(
                        Code::ModelDuplicate,
                        span_of(line, value),
                        format!("the temperature is already given on line {first}"),
                    )
                    .with_help("keep one `temperature` line; sweep temperatures with `--sweep-temperature`")),
                    None => {
                        doc.temperature = Some((t, number));
                        Ok(())
                    }
                },
                Err(e) => Err(unit_diagnostic(span_of(line, value), e)),
            }
        }
        "po2" => read_po2(line, rest_text).and_then(|range| match doc.po2 {
            Some((_, first)) => Err(Diagnostic::new(
                Code::ModelDuplicate,
                span_of(line, rest_text.trim()),
                format!("the pO2 range is already given on line {first}"),
            )
            .with_help("keep one `po2` line")),
            None => {
                doc.po2 = Some((range, number));
                Ok(())
            }
        }),
        "pressure" => read_pressure(line, rest_text).map(|mut p| {
            p.line = number;
            doc.pressures.push(p);
        }),
        "fix" => read_fix(line, rest_text).map(|mut f| {
            f.line = number;
            doc.fixes.push(f);
        }),
        other => Err(syntax(
            span_of(line, other),
            format!("`{other}` is reserved for models but not used"),
            "model lines start with K, dH, dS, fix, temperature, po2 or pressure",
        )),
    };
    if let Err(d) = result {
        doc.push(number, d);
    }
}

fn with_line(mut d: DataLine, number: u32) -> DataLine {
    d.line = number;
    d
}

/// `K label = number [at temperature]`
fn read_k(line: &str, rest: &str) -> Result<DataLine, Diagnostic> {
    const EXAMPLE: &str =
        "write `K red = 1e-20 at 1273 K` (or without `at`, for the model temperature)";
    let (label, value) = label_and_value(line, rest, EXAMPLE)?;
    let (number_text, at_text) = match value.split_once(" at ") {
        Some((n, t)) => (n.trim(), Some(t.trim())),
        None => (value, None),
    };
    let k = thermo::parse_number(number_text)
        .map_err(|e| syntax(span_of(line, number_text), e.message, EXAMPLE))?;
    if k <= 0.0 {
        return Err(Diagnostic::new(
            Code::ThermoData,
            span_of(line, number_text),
            format!("an equilibrium constant is positive, not {number_text}"),
        )
        .with_help(
            "give K > 0; a reaction that does not happen has a very small K such as 1e-40",
        ));
    }
    let at = match at_text {
        Some(t) => {
            Some(thermo::parse_temperature(t).map_err(|e| unit_diagnostic(span_of(line, t), e))?)
        }
        None => None,
    };
    Ok(DataLine {
        label: label.to_string(),
        label_span: span_of(line, label),
        datum: Datum::K { value: k, at },
        line: 0,
        span: span_of(line, rest.trim()),
    })
}

/// `dH label = energy` or `dS label = entropy`
fn read_energy_datum(line: &str, rest: &str, enthalpy: bool) -> Result<DataLine, Diagnostic> {
    let example = if enthalpy {
        "write `dH red = 4.5 eV` (or kJ/mol)"
    } else {
        "write `dS red = 1.2e-3 eV/K` (or `13.9 k`, or J/(mol K))"
    };
    let (label, value) = label_and_value(line, rest, example)?;
    let parsed = if enthalpy {
        thermo::parse_energy(value).map(Datum::Enthalpy)
    } else {
        thermo::parse_entropy(value).map(Datum::Entropy)
    };
    let datum = parsed.map_err(|e| unit_diagnostic(span_of(line, value), e))?;
    Ok(DataLine {
        label: label.to_string(),
        label_span: span_of(line, label),
        datum,
        line: 0,
        span: span_of(line, rest.trim()),
    })
}

/// `po2 1e-30 to 1e5 bar`
fn read_po2(line: &str, rest: &str) -> Result<(f64, f64), Diagnostic> {
    let text = rest.trim();
    let Some((low, high)) = text.split_once(" to ") else {
        return Err(syntax(
            span_of(line, text),
            "expected a range `low to high unit`",
            "write `po2 1e-30 to 1e5 bar`",
        ));
    };
    let (low, high) = (low.trim(), high.trim());
    let high_value =
        thermo::parse_pressure(high).map_err(|e| unit_diagnostic(span_of(line, high), e))?;
    let unit = high.trim_start_matches(|c: char| {
        c.is_ascii_digit() || matches!(c, '.' | '+' | '-' | 'e' | 'E')
    });
    let low_value =
        if low.chars().any(char::is_alphabetic) && !low.ends_with(|c: char| c.is_ascii_digit()) {
            thermo::parse_pressure(low)
        } else {
            thermo::parse_pressure(&format!("{low} {}", unit.trim()))
        }
        .map_err(|e| unit_diagnostic(span_of(line, low), e))?;
    if low_value >= high_value {
        return Err(Diagnostic::new(
            Code::ModelSyntax,
            span_of(line, text),
            "the pO2 range must run from low to high",
        )
        .with_help("write the smaller pressure first, e.g. `po2 1e-30 to 1e5 bar`"));
    }
    Ok((low_value, high_value))
}

/// `pressure H2O = 0.03 bar`
fn read_pressure(line: &str, rest: &str) -> Result<PressureLine, Diagnostic> {
    const EXAMPLE: &str = "write `pressure H2O = 0.03 bar`";
    let (gas, value) = label_and_value(line, rest, EXAMPLE)?;
    let name = gas.strip_suffix("(g)").unwrap_or(gas);
    let span = span_of(line, name);
    let formula = parse_formula(line, span.clone()).map_err(|mut diags| {
        diags
            .pop()
            .unwrap_or_else(|| syntax(span.clone(), "not a gas formula", EXAMPLE))
    })?;
    let bar =
        thermo::parse_pressure(value).map_err(|e| unit_diagnostic(span_of(line, value), e))?;
    let compound = crate::notation::Compound {
        formula,
        phase: Some(crate::notation::Phase::Gas),
        span: 0..0,
    };
    let key = law::factor_of(&Entity::Compound(compound)).map_or_else(String::new, |f| f.key);
    Ok(PressureLine {
        key,
        text: name.to_string(),
        bar,
        line: 0,
        span: span_of(line, rest.trim()),
    })
}

/// `fix Species = amount basis`
fn read_fix(line: &str, rest: &str) -> Result<FixLine, Diagnostic> {
    const EXAMPLE: &str = "write `fix Y_Zr' = 8 mol% Y2O3`, `fix Y_Zr' = 0.148 site fraction`, `fix Gd_Ce' = 0.1 cation fraction` or `fix Y_Zr' = 0.16 per formula unit`";
    let (subject_text, value) = label_and_value(line, rest, EXAMPLE)?;
    let subject_span = span_of(line, subject_text);
    let subject = match parse_species_text(subject_text) {
        Ok(term) => match term.entity {
            Entity::Species(mut s) if term.coefficient == Q::from_integer(1) => {
                s.span = subject_span.clone();
                s
            }
            _ => {
                return Err(Diagnostic::new(
                    Code::FixedTotal,
                    subject_span,
                    format!("`{subject_text}` is not a single species"),
                )
                .with_help("fix one species on one site, e.g. `fix Y_Zr' = 8 mol% Y2O3`"));
            }
        },
        Err(diags) => {
            let first = diags.into_iter().next();
            let message = first.map_or_else(
                || format!("`{subject_text}` is not a species"),
                |d| d.message,
            );
            return Err(Diagnostic::new(Code::FixedTotal, subject_span, message).with_help(EXAMPLE));
        }
    };
    let value = value.trim();
    let split = value
        .char_indices()
        .find(|&(i, c)| {
            !(c.is_ascii_digit()
                || c == '.'
                || ((c == 'e' || c == 'E')
                    && value[i + 1..]
                        .chars()
                        .next()
                        .is_some_and(|n| n.is_ascii_digit() || n == '-' || n == '+'))
                || ((c == '-' || c == '+') && i > 0 && value[..i].ends_with(['e', 'E'])))
        })
        .map_or(value.len(), |(i, _)| i);
    let (amount_text, basis_text) = value.split_at(split);
    let amount_span = span_of(line, amount_text);
    let amount = thermo::parse_number(amount_text)
        .map_err(|e| syntax(amount_span.clone(), e.message, EXAMPLE))?;
    let basis_trimmed = basis_text.trim();
    let words: Vec<&str> = basis_trimmed.split_whitespace().collect();
    let basis = match words.as_slice() {
        ["site", "fraction"] => Basis::SiteFraction,
        ["cation", "fraction"] => Basis::CationFraction,
        ["per", "formula", "unit"] => Basis::PerFormulaUnit,
        ["mol%", formula] | ["mol", "%", formula] | ["%", formula] => {
            let piece = basis_trimmed
                .rfind(formula)
                .map_or(*formula, |i| &basis_trimmed[i..]);
            let span = span_of(line, piece);
            let parsed = parse_formula(line, span.clone()).map_err(|mut diags| {
                diags
                    .pop()
                    .unwrap_or_else(|| syntax(span.clone(), "not a formula", EXAMPLE))
            })?;
            Basis::MolPercent {
                formula: parsed,
                text: (*formula).to_string(),
            }
        }
        [] => {
            return Err(Diagnostic::new(
                Code::ModelUnit,
                amount_span,
                format!("the amount {amount_text} has no basis"),
            )
            .with_help(EXAMPLE));
        }
        _ => {
            return Err(Diagnostic::new(
                Code::ModelUnit,
                span_of(line, basis_trimmed),
                format!("`{basis_trimmed}` is not a basis for an amount"),
            )
            .with_help("use `site fraction`, `cation fraction`, `per formula unit` or `mol% <dopant oxide>`"));
        }
    };
    Ok(FixLine {
        subject,
        subject_span,
        amount,
        amount_span,
        basis,
        line: 0,
    })
}

// ---------------------------------------------------------------------------
// The assembled model.

/// A species whose concentration the model solves for.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelSpecies {
    pub key: String,
    pub kind: FactorKind,
    pub charge: i32,
    /// `[V_O..]`, `n`.
    pub ascii: String,
    /// `[V_O••]`, `n`.
    pub unicode: String,
    pub latex: String,
    /// (sublattice index, sites taken) per formula unit of the species.
    pub sites: Vec<(usize, Q)>,
    /// Ionic content `(occupant-on-site identity, count)`, charges ignored:
    /// what a `fix` counts.
    pub content: Vec<(String, Q)>,
    /// What stays fixed when ionic defects are frozen in (`None` for e′, h•).
    pub frozen_identity: Option<String>,
}

/// An equilibrium with data.
#[derive(Debug, Clone)]
pub struct Equilibrium {
    pub label: String,
    pub law: Law,
    /// `None` only in a model built with `Overrides::slopes_only` from a
    /// reaction without data: its K is unknown and never evaluated.
    pub thermo: Option<Thermo>,
    pub row: Row,
    /// Only electrons and holes change: it still runs when ionic defects are frozen.
    pub electronic: bool,
    /// The line of the reaction and of its first data line.
    pub line: u32,
    pub data_line: u32,
}

/// A gas in the model: O2 is swept, the others have fixed pressures.
#[derive(Debug, Clone, PartialEq)]
pub struct Gas {
    pub key: String,
    pub ascii: String,
    pub unicode: String,
    pub latex: String,
    /// `None` for O2 (swept).
    pub pressure: Option<f64>,
}

/// A fixed total (a dopant level).
#[derive(Debug, Clone, PartialEq)]
pub struct Total {
    pub subject_unicode: String,
    pub subject_ascii: String,
    pub identity: String,
    /// Weight of each model species (count of the subject in it).
    pub weights: Vec<Q>,
    /// Amount per formula unit of the host.
    pub amount: f64,
    /// How the amount was given and what it became.
    pub description: String,
    pub line: u32,
}

/// A model ready to solve.
#[derive(Debug, Clone)]
pub struct Model {
    pub source: String,
    pub host: Host,
    pub species: Vec<ModelSpecies>,
    pub equilibria: Vec<Equilibrium>,
    pub gases: Vec<Gas>,
    pub totals: Vec<Total>,
    /// Kelvin.
    pub temperature: Option<f64>,
    pub po2_range: (f64, f64),
    pub network: network::Network,
    /// Labels (or texts) of reactions without data, shown for reference.
    pub reference_only: Vec<String>,
    /// Notes worth printing with results (located diagnostics that are not errors).
    pub notes: Vec<Diagnostic>,
    /// The document's lines, for rendering diagnostics raised later.
    pub lines: Vec<String>,
}

/// Settings from the command line that take precedence over the file.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Overrides {
    pub temperature: Option<f64>,
    pub po2_range: Option<(f64, f64)>,
    /// Reactions without data become equilibria whose K is unknown instead
    /// of references: the model then gives the exact regime slopes (which
    /// do not depend on K) but no ranges and no concentrations.
    pub slopes_only: bool,
}

impl Overrides {
    /// Settings for the exact regimes alone: when no reaction of `doc` has
    /// data (no `K`, `dH` or `dS` line), every reaction becomes an
    /// equilibrium with K unknown (`slopes_only`); otherwise the reactions
    /// without data stay references, as `brouwer` reads the file.
    pub fn for_slopes(doc: &Document) -> Overrides {
        Overrides {
            slopes_only: doc.data.is_empty(),
            ..Overrides::default()
        }
    }
}

/// Identity of a species' occupant on its site, charge ignored (`Y_Zr`).
fn content_key(species: &Species) -> String {
    let mut neutral = species.clone();
    neutral.charge = 0;
    law::species_key(&neutral)
}

fn content_of(entity: &Entity, factor: Q, out: &mut Vec<(String, Q)>) -> Result<(), Overflow> {
    match entity {
        Entity::Species(s) => {
            if matches!(s.occupant, Occupant::Electron | Occupant::Hole) {
                return Ok(());
            }
            let key = content_key(s);
            match out.iter_mut().find(|(k, _)| *k == key) {
                Some((_, n)) => *n = number::add(*n, factor)?,
                None => out.push((key, factor)),
            }
        }
        Entity::Associate(a) => {
            for part in &a.parts {
                content_of(&part.entity, number::mul(factor, part.coefficient)?, out)?;
            }
        }
        Entity::Compound(_) | Entity::Nil => {}
    }
    Ok(())
}

fn sites_of(
    entity: &Entity,
    host: &Host,
    factor: Q,
    out: &mut Vec<(usize, Q)>,
) -> Result<(), Overflow> {
    match entity {
        Entity::Species(s) => {
            if let Some(Site::Lattice { element, label }) = &s.site {
                if let SiteLookup::Found(i) = host.lookup(*element, label.as_deref()) {
                    match out.iter_mut().find(|(k, _)| *k == i) {
                        Some((_, n)) => *n = number::add(*n, factor)?,
                        None => out.push((i, factor)),
                    }
                }
            }
        }
        Entity::Associate(a) => {
            for part in &a.parts {
                sites_of(
                    &part.entity,
                    host,
                    number::mul(factor, part.coefficient)?,
                    out,
                )?;
            }
        }
        Entity::Compound(_) | Entity::Nil => {}
    }
    Ok(())
}

/// A P107 for a model line whose exact sums left the `i64` range.
fn model_overflow(span: Span, what: &str) -> Diagnostic {
    Diagnostic::new(
        Code::Number,
        span,
        format!("{what} grew beyond the exact range (about 9.2e18)"),
    )
    .with_help("scale the coefficients down")
}

fn frozen_identity(entity: &Entity) -> Result<Option<String>, Overflow> {
    Ok(match entity {
        Entity::Species(s) => match s.occupant {
            Occupant::Electron | Occupant::Hole => None,
            _ => Some(content_key(s)),
        },
        Entity::Associate(_) => {
            let mut content = Vec::new();
            content_of(entity, Q::from_integer(1), &mut content)?;
            content.sort();
            let parts: Vec<String> = content
                .iter()
                .map(|(k, n)| format!("{} {k}", number::to_plain(*n)))
                .collect();
            Some(format!("({})", parts.join(" ")))
        }
        _ => None,
    })
}

fn model_species(factor: &Factor, host: &Host) -> Result<ModelSpecies, Overflow> {
    let mut content = Vec::new();
    content_of(&factor.entity, Q::from_integer(1), &mut content)?;
    let mut sites = Vec::new();
    sites_of(&factor.entity, host, Q::from_integer(1), &mut sites)?;
    Ok(ModelSpecies {
        key: factor.key.clone(),
        kind: factor.kind,
        charge: factor.charge,
        ascii: factor.ascii.clone(),
        unicode: factor.unicode.clone(),
        latex: factor.latex.clone(),
        sites,
        content,
        frozen_identity: frozen_identity(&factor.entity)?,
    })
}

/// Resolves the data lines of one label into K(T).
pub fn resolve_thermo(
    lines: &[&DataLine],
    temperature: Option<f64>,
    reaction_line: u32,
) -> Result<Option<(Thermo, u32)>, (u32, Diagnostic)> {
    let mut k: Option<&DataLine> = None;
    let mut dh: Option<&DataLine> = None;
    let mut ds: Option<&DataLine> = None;
    for line in lines {
        let slot = match line.datum {
            Datum::K { .. } => &mut k,
            Datum::Enthalpy(_) => &mut dh,
            Datum::Entropy(_) => &mut ds,
        };
        if let Some(first) = slot {
            return Err((
                line.line,
                Diagnostic::new(
                    Code::ModelDuplicate,
                    line.span.clone(),
                    format!(
                        "this value for `{}` is already given on line {}",
                        line.label, first.line
                    ),
                )
                .with_help("keep one K, one dH and one dS per reaction"),
            ));
        }
        *slot = Some(line);
    }
    let first_line = lines.iter().map(|l| l.line).min().unwrap_or(reaction_line);
    let k_at = |line: &DataLine| -> Result<(f64, f64), (u32, Diagnostic)> {
        match line.datum {
            Datum::K { value, at: Some(t) } => Ok((value, t)),
            Datum::K { value, at: None } => match temperature {
                Some(t) => Ok((value, t)),
                None => Err((
                    line.line,
                    Diagnostic::new(
                        Code::ModelTemperature,
                        line.span.clone(),
                        format!(
                            "K for `{}` has no temperature and the model gives none",
                            line.label
                        ),
                    )
                    .with_help("add `at 1273 K` to this line, or a `temperature 1273 K` line"),
                )),
            },
            _ => Err((
                line.line,
                Diagnostic::new(Code::ThermoData, line.span.clone(), "not a K"),
            )),
        }
    };
    let value = |line: Option<&DataLine>| match line.map(|l| &l.datum) {
        Some(Datum::Enthalpy(v) | Datum::Entropy(v)) => *v,
        _ => 0.0,
    };
    let thermo = match (k, dh, ds) {
        (None, None, None) => return Ok(None),
        (Some(kl), None, None) => {
            let (value, at) = k_at(kl)?;
            Thermo::Fixed { k: value, at }
        }
        (Some(kl), Some(_), None) => {
            let (kv, at) = k_at(kl)?;
            Thermo::from_k_and_enthalpy(kv, at, value(dh))
        }
        (None, Some(_), Some(_)) => Thermo::Arrhenius {
            dh_ev: value(dh),
            ds_ev_per_k: value(ds),
            from_k: None,
        },
        (Some(kl), Some(_), Some(_)) => {
            return Err((
                kl.line,
                Diagnostic::new(
                    Code::ThermoData,
                    kl.span.clone(),
                    format!("`{}` has K, dH and dS: one too many", kl.label),
                )
                .with_help("give either dH and dS, or K at a temperature with dH"),
            ));
        }
        (None, Some(l), None) | (None, None, Some(l)) | (Some(_), None, Some(l)) => {
            let missing = if matches!(l.datum, Datum::Enthalpy(_)) {
                "dS (or K at a temperature)"
            } else {
                "dH"
            };
            return Err((
                l.line,
                Diagnostic::new(
                    Code::ThermoData,
                    l.span.clone(),
                    format!("`{}` needs {missing} as well", l.label),
                )
                .with_help("K(T) = exp(dS/k)·exp(−dH/kT) needs dH with dS, or dH with K at one temperature"),
            ));
        }
    };
    Ok(Some((thermo, first_line)))
}

/// Amount per formula unit for a `fix` line, with a description.
fn amount_per_formula_unit(fix: &FixLine, host: &Host) -> Result<(f64, String), Diagnostic> {
    let bad = |message: String, help: &str| {
        Diagnostic::new(Code::FixedTotal, fix.amount_span.clone(), message).with_help(help)
    };
    let sublattice = match &fix.subject.site {
        Some(Site::Lattice { element, label }) => match host.lookup(*element, label.as_deref()) {
            SiteLookup::Found(i) => host.sublattices.get(i),
            _ => None,
        },
        _ => None,
    };
    let x = fix.amount;
    if x.is_nan() || x <= 0.0 {
        return Err(bad(
            format!("a fixed amount is positive, not {x}"),
            "give the dopant level as a positive number",
        ));
    }
    let count = |q: Q| *q.numer() as f64 / *q.denom() as f64;
    let need_site = || {
        Diagnostic::new(
            Code::FixedTotal,
            fix.subject_span.clone(),
            "this basis needs the species on a regular site of the host",
        )
        .with_help("use `per formula unit` for interstitials, or name a host site")
    };
    match &fix.basis {
        Basis::PerFormulaUnit => Ok((x, format!("{} per formula unit", sig(x, 4)))),
        Basis::SiteFraction => {
            let s = sublattice.ok_or_else(need_site)?;
            if x > 1.0 {
                return Err(bad(
                    format!("a site fraction is at most 1, not {x}"),
                    "give a fraction such as 0.148, not a percentage",
                ));
            }
            let per = x * count(s.count);
            Ok((
                per,
                format!(
                    "site fraction {} of the {} sites = {} per formula unit",
                    sig(x, 4),
                    s.name(),
                    sig(per, 4)
                ),
            ))
        }
        Basis::CationFraction => {
            let cations: f64 = host
                .sublattices
                .iter()
                .filter(|s| s.charge > Q::from_integer(0))
                .map(|s| count(s.count))
                .sum();
            if cations <= 0.0 {
                return Err(bad(
                    "the host has no cation sites".to_string(),
                    "use `site fraction` or `per formula unit`",
                ));
            }
            if x > 1.0 {
                return Err(bad(
                    format!("a cation fraction is at most 1, not {x}"),
                    "give a fraction such as 0.1, not a percentage",
                ));
            }
            let per = x * cations;
            Ok((
                per,
                format!(
                    "cation fraction {} = {} per formula unit",
                    sig(x, 4),
                    sig(per, 4)
                ),
            ))
        }
        Basis::MolPercent { formula, text } => {
            let s = sublattice.ok_or_else(need_site)?;
            let element = match &fix.subject.occupant {
                Occupant::Atoms { formula: f, .. } => f.single_element(),
                _ => None,
            };
            let Some(z) = element else {
                return Err(need_site());
            };
            // A float context: sum the written counts as floats, never overflowing.
            let a: f64 = formula
                .atoms
                .iter()
                .filter(|(e, _)| *e == z)
                .map(|(_, n)| count(*n))
                .sum();
            if a <= 0.0 {
                return Err(bad(
                    format!(
                        "{text} contains no {}",
                        crate::base::elements::by_z(z).map_or("?", |e| e.symbol)
                    ),
                    "name the dopant compound that supplies the fixed species",
                ));
            }
            if x >= 100.0 {
                return Err(bad(
                    format!("{x} mol% leaves no host"),
                    "give a mole percentage below 100",
                ));
            }
            let mole = x / 100.0;
            let n = count(s.count);
            // (1−x) host + x dopant: a·x dopant cations on (a·x + n·(1−x)) sites.
            let fraction = a * mole / (a * mole + n * (1.0 - mole));
            let per = fraction * n;
            Ok((
                per,
                format!(
                    "{} mol% {text} = site fraction {} of the {} sites = {} per formula unit",
                    sig(x, 4),
                    sig(fraction, 4),
                    s.name(),
                    sig(per, 4)
                ),
            ))
        }
    }
}

/// Duplicate reaction labels and data lines naming no reaction.
pub fn label_problems(doc: &Document) -> Vec<Diagnostic> {
    let mut errors = Vec::new();
    let locate = |line: u32, d: Diagnostic| d.locate(line, doc.line_text(line));
    let mut labels: BTreeMap<&str, u32> = BTreeMap::new();
    for r in &doc.reactions {
        if let (Some(label), Some(span)) = (&r.label, &r.label_span) {
            if let Some(first) = labels.insert(label.as_str(), r.line) {
                errors.push(locate(
                    r.line,
                    Diagnostic::new(
                        Code::ModelDuplicate,
                        span.clone(),
                        format!("the label `{label}` is already used on line {first}"),
                    )
                    .with_help("give each reaction its own label"),
                ));
            }
        }
    }
    for d in &doc.data {
        if !labels.contains_key(d.label.as_str()) {
            let known: Vec<&str> = labels.keys().copied().collect();
            let help = if known.is_empty() {
                "label the reaction, e.g. `red: O_O -> V_O.. + 2e' + 1/2 O2(g)`".to_string()
            } else {
                format!("labels in this file: {}", known.join(", "))
            };
            errors.push(locate(
                d.line,
                Diagnostic::new(
                    Code::UnknownLabel,
                    d.label_span.clone(),
                    format!("no reaction is labelled `{}`", d.label),
                )
                .with_help(help),
            ));
        }
    }
    errors
}

impl Model {
    /// Assembles a model from a document. Errors come back as located diagnostics.
    pub fn build(doc: &Document, overrides: Overrides) -> Result<Model, Vec<Diagnostic>> {
        let mut errors: Vec<Diagnostic> = doc
            .diagnostics
            .iter()
            .filter(|d| d.is_error())
            .cloned()
            .collect();
        let mut notes: Vec<Diagnostic> = doc
            .diagnostics
            .iter()
            .filter(|d| !d.is_error())
            .cloned()
            .collect();
        let locate = |line: u32, d: Diagnostic| d.locate(line, doc.line_text(line));
        let host = match doc.hosts.as_slice() {
            [] => {
                errors.push(
                    Diagnostic::new(Code::NoHost, 0..0, "the model has no host")
                        .with_help("add a `host ZrO2` line at the top, or pass --host")
                        .locate(1, doc.line_text(1)),
                );
                return Err(errors);
            }
            [(host, _)] => host.clone(),
            [.., (host, line)] => {
                let file_hosts: Vec<_> = doc.hosts.iter().filter(|(_, l)| *l > 0).collect();
                if file_hosts.len() > 1 {
                    errors.push(locate(
                        *line,
                        Diagnostic::new(
                            Code::ModelDuplicate,
                            0..doc.line_text(*line).len(),
                            "a model has one host; this is a second `host` line",
                        )
                        .with_help("split the file into one model per host"),
                    ));
                }
                host.clone()
            }
        };
        let temperature = overrides.temperature.or(doc.temperature.map(|(t, _)| t));
        let po2_range = overrides
            .po2_range
            .or(doc.po2.map(|(r, _)| r))
            .unwrap_or(DEFAULT_PO2_RANGE);

        errors.extend(label_problems(doc));

        // Equilibria: reactions with data.
        let mut factor_species: Vec<ModelSpecies> = Vec::new();
        let mut gases: Vec<Gas> = Vec::new();
        let mut equilibria: Vec<Equilibrium> = Vec::new();
        let mut reference_only = Vec::new();
        for r in &doc.reactions {
            let data: Vec<&DataLine> = match &r.label {
                Some(label) => doc.data.iter().filter(|d| &d.label == label).collect(),
                None => Vec::new(),
            };
            // A K without `at` holds at the file's temperature, never at a
            // temperature given on the command line for this run.
            let file_temperature = doc.temperature.map(|(t, _)| t);
            let thermo = match resolve_thermo(&data, file_temperature, r.line) {
                Ok(t) => t,
                Err((line, d)) => {
                    errors.push(locate(line, d));
                    continue;
                }
            };
            let name = r
                .label
                .clone()
                .unwrap_or_else(|| crate::notation::render_reaction(&r.reaction, Style::Unicode));
            let (thermo, data_line) = match thermo {
                Some((thermo, line)) => (Some(thermo), line),
                None if overrides.slopes_only => (None, r.line),
                None => {
                    reference_only.push(name.clone());
                    notes.push(locate(
                    r.line,
                    Diagnostic::new(
                        Code::NoThermoData,
                        r.reaction.span.clone(),
                        format!("`{name}` has no K or dH/dS: shown for reference, not part of the equilibrium"),
                    )
                    .with_help(if r.label.is_some() {
                        "add `K label = ...` or `dH`/`dS` lines to make it an equilibrium"
                    } else {
                        "label it (`red: ...`) and add `K red = ...` to make it an equilibrium"
                    }),
                ));
                    continue;
                }
            };
            if !r.ok {
                // The balance diagnostics are already in `errors`.
                continue;
            }
            let law = match mass_action_law(&r.reaction, r.label.as_deref()) {
                Ok(l) => l,
                Err(_) => {
                    errors.push(locate(
                        r.line,
                        Diagnostic::new(
                            Code::Number,
                            r.reaction.span.clone(),
                            "the exponents of this law grew beyond the exact range",
                        )
                        .with_help("scale the coefficients down"),
                    ));
                    continue;
                }
            };
            let mut row = Row::default();
            let mut identity_change: BTreeMap<String, Q> = BTreeMap::new();
            let too_large = || {
                locate(
                    r.line,
                    model_overflow(r.reaction.span.clone(), "the species of this reaction"),
                )
            };
            let mut overflow = false;
            let mut electronic = true;
            for f in &law.factors {
                match f.kind {
                    FactorKind::Gas => {
                        electronic = false;
                        let index = match gases.iter().position(|g| g.key == f.key) {
                            Some(i) => i,
                            None => {
                                gases.push(Gas {
                                    key: f.key.clone(),
                                    ascii: f.ascii.clone(),
                                    unicode: f.unicode.clone(),
                                    latex: f.latex.clone(),
                                    pressure: None,
                                });
                                gases.len() - 1
                            }
                        };
                        row.gases.push((index, f.exponent));
                    }
                    FactorKind::Phase => electronic = false,
                    FactorKind::Lattice => match frozen_identity(&f.entity) {
                        Ok(Some(id)) => {
                            let slot = identity_change.entry(id).or_default();
                            overflow |= number::add(*slot, f.exponent).map(|v| *slot = v).is_err();
                        }
                        Ok(None) => {}
                        Err(_) => overflow = true,
                    },
                    _ => {
                        let index = match factor_species.iter().position(|s| s.key == f.key) {
                            Some(i) => i,
                            None => {
                                let Ok(species) = model_species(f, &host) else {
                                    overflow = true;
                                    continue;
                                };
                                factor_species.push(species);
                                factor_species.len() - 1
                            }
                        };
                        row.species.push((index, f.exponent));
                        match frozen_identity(&f.entity) {
                            Ok(Some(id)) => {
                                let slot = identity_change.entry(id).or_default();
                                overflow |=
                                    number::add(*slot, f.exponent).map(|v| *slot = v).is_err();
                            }
                            Ok(None) => {}
                            Err(_) => overflow = true,
                        }
                    }
                }
            }
            if overflow {
                errors.push(too_large());
                continue;
            }
            if identity_change.values().any(|v| *v != Q::from_integer(0)) {
                electronic = false;
            }
            equilibria.push(Equilibrium {
                label: name,
                law,
                thermo,
                row,
                electronic,
                line: r.line,
                data_line,
            });
        }

        // Gas pressures: O2 is swept, the others need a `pressure` line.
        for p in &doc.pressures {
            if p.key == "gas O2" {
                errors.push(locate(
                    p.line,
                    Diagnostic::new(Code::GasPressure, p.span.clone(), "pO2 is swept, not fixed")
                        .with_help("set its range with `po2 1e-30 to 1e5 bar`"),
                ));
                continue;
            }
            match gases.iter_mut().find(|g| g.key == p.key) {
                Some(g) if g.pressure.is_none() => g.pressure = Some(p.bar),
                Some(_) => errors.push(locate(
                    p.line,
                    Diagnostic::new(
                        Code::ModelDuplicate,
                        p.span.clone(),
                        format!("the pressure of {} is already given", p.text),
                    )
                    .with_help("keep one `pressure` line per gas"),
                )),
                None => notes.push(locate(
                    p.line,
                    Diagnostic::new(
                        Code::NoThermoData,
                        p.span.clone(),
                        format!(
                            "{} takes part in no equilibrium with data; its pressure is not used",
                            p.text
                        ),
                    )
                    .with_help("remove the line, or give data for a reaction with this gas"),
                )),
            }
        }
        for g in &gases {
            if g.key != "gas O2" && g.pressure.is_none() {
                let line = equilibria
                    .iter()
                    .find(|e| e.law.factors.iter().any(|f| f.key == g.key))
                    .map_or(0, |e| e.line);
                let formula = g.ascii.trim_start_matches('p');
                errors.push(locate(
                    line,
                    Diagnostic::new(
                        Code::GasPressure,
                        0..doc.line_text(line).len(),
                        format!("{} is in an equilibrium but has no pressure", g.unicode),
                    )
                    .with_help(format!("add `pressure {formula} = 0.03 bar` (your value)")),
                ));
            }
        }

        // Fixed totals.
        let mut totals: Vec<Total> = Vec::new();
        for fix in &doc.fixes {
            let identity = content_key(&fix.subject);
            let mut present = factor_species
                .iter()
                .any(|s| s.content.iter().any(|(k, _)| *k == identity));
            let exact_key = law::species_key(&fix.subject);
            let written_charge = fix.subject.marks != crate::notation::MarkStyle::Unmarked;
            if written_charge && !factor_species.iter().any(|s| s.key == exact_key) {
                // A dopant that takes part in no reaction: a fixed charged species.
                if let Some(f) = law::factor_of(&Entity::Species(fix.subject.clone())) {
                    if f.kind == FactorKind::Defect {
                        match model_species(&f, &host) {
                            Ok(species) => {
                                factor_species.push(species);
                                present = true;
                            }
                            Err(_) => {
                                errors.push(locate(
                                    fix.line,
                                    model_overflow(0..0, "the species of this line"),
                                ));
                                continue;
                            }
                        }
                    }
                }
            }
            if !present {
                errors.push(locate(
                    fix.line,
                    Diagnostic::new(
                        Code::FixedTotal,
                        fix.subject_span.clone(),
                        "this species is in no equilibrium and has no charge written",
                    )
                    .with_help("write its charge (e.g. `Y_Zr'`) to add it as a fixed defect"),
                ));
                continue;
            }
            if totals.iter().any(|t| t.identity == identity) {
                errors.push(locate(
                    fix.line,
                    Diagnostic::new(
                        Code::ModelDuplicate,
                        fix.subject_span.clone(),
                        "this total is already fixed",
                    )
                    .with_help("keep one `fix` line per dopant"),
                ));
                continue;
            }
            match amount_per_formula_unit(fix, &host) {
                Ok((amount, description)) => {
                    let subject_unicode =
                        crate::notation::render_species(&fix.subject, Style::Unicode);
                    let subject_ascii = crate::notation::render_species(&fix.subject, Style::Ascii);
                    totals.push(Total {
                        subject_unicode,
                        subject_ascii,
                        identity,
                        weights: Vec::new(),
                        amount,
                        description,
                        line: fix.line,
                    });
                }
                Err(d) => errors.push(locate(fix.line, d)),
            }
        }
        for t in &mut totals {
            t.weights = factor_species
                .iter()
                .map(|s| {
                    number::sum(
                        s.content
                            .iter()
                            .filter(|(k, _)| *k == t.identity)
                            .map(|(_, n)| *n),
                    )
                })
                .collect::<Result<_, _>>()
                .unwrap_or_else(|_| {
                    errors.push(locate(
                        t.line,
                        model_overflow(0..0, "the amounts of this total"),
                    ));
                    Vec::new()
                });
        }

        if !errors.is_empty() {
            return Err(errors);
        }
        if equilibria.is_empty() && totals.is_empty() {
            return Err(vec![Diagnostic::new(
                Code::Underdetermined,
                0..0,
                "the file has no equilibrium with data and no fixed total, so there is nothing to solve",
            )
            .with_help("label a reaction and give its data, e.g. `red: O_O -> V_O.. + 2e' + 1/2 O2(g)` and `K red = 1e-20 at 1273 K`")
            .locate(1, doc.line_text(1))]);
        }

        let rows: Vec<Row> = equilibria.iter().map(|e| e.row.clone()).collect();
        let charges: Vec<i32> = factor_species.iter().map(|s| s.charge).collect();
        let total_weights: Vec<Vec<Q>> = totals.iter().map(|t| t.weights.clone()).collect();
        let network = match network::build(
            factor_species.len(),
            gases.len(),
            &rows,
            &charges,
            &total_weights,
        ) {
            Ok(n) => n,
            Err(e) => {
                return Err(vec![network_diagnostic(
                    e,
                    doc,
                    &equilibria,
                    &totals,
                    &factor_species,
                )]);
            }
        };
        Ok(Model {
            source: doc.source.clone(),
            host,
            species: factor_species,
            equilibria,
            gases,
            totals,
            temperature,
            po2_range,
            network,
            reference_only,
            notes,
            lines: doc.lines.clone(),
        })
    }

    /// The text of line `n` (1-based), or "".
    pub fn line_text(&self, n: u32) -> &str {
        n.checked_sub(1)
            .and_then(|i| self.lines.get(i as usize))
            .map_or("", String::as_str)
    }

    /// The symbol of species `s` in a style.
    pub fn symbol(&self, s: usize, style: Style) -> &str {
        self.species.get(s).map_or("?", |sp| match style {
            Style::Ascii => sp.ascii.as_str(),
            Style::Unicode | Style::Html | Style::Markdown => sp.unicode.as_str(),
            Style::Latex => sp.latex.as_str(),
        })
    }

    /// Electroneutrality with every charged species: negative side = positive side.
    pub fn neutrality(&self, style: Style) -> String {
        let side = |positive: bool| -> String {
            let terms: Vec<String> = self
                .species
                .iter()
                .enumerate()
                .filter(|(_, s)| if positive { s.charge > 0 } else { s.charge < 0 })
                .map(|(i, s)| {
                    let n = s.charge.unsigned_abs();
                    let symbol = self.symbol(i, style);
                    if n == 1 {
                        symbol.to_string()
                    } else {
                        format!("{n}{symbol}")
                    }
                })
                .collect();
            terms.join(" + ")
        };
        if self.species.iter().all(|s| s.charge == 0) {
            return "no charged species".to_string();
        }
        format!("{} = {}", side(false), side(true))
    }

    /// ln K of every equilibrium at `t` kelvin, or a diagnostic naming the
    /// reaction whose K is not known there.
    pub fn ln_k(&self, t: f64) -> Result<Vec<f64>, Diagnostic> {
        self.equilibria
            .iter()
            .map(|e| {
                let line = e.data_line;
                let Some(thermo) = e.thermo else {
                    return Err(Diagnostic::new(
                        Code::NoThermoData,
                        0..self.line_text(line).len(),
                        format!("`{}` has no K or dH/dS, so no value of K is known", e.label),
                    )
                    .with_help(match &e.law.label {
                        Some(l) => format!("add `K {l} = ...` (at a temperature) or `dH {l}`/`dS {l}` lines"),
                        None => "label the reaction (`red: ...`) and add `K red = ...` or dH/dS lines".to_string(),
                    })
                    .locate(line, self.line_text(line)));
                };
                thermo.ln_k(t).map_err(|err| {
                    Diagnostic::new(
                        Code::ModelTemperature,
                        0..self.line_text(line).len(),
                        format!("K of `{}` is known only at {}, not at {}", e.label, thermo::temperature_text(err.known_at), thermo::temperature_text(err.asked)),
                    )
                    .with_help(format!("add `dH {} = ...` so K can be extrapolated, or run at the temperature K was given for", e.label))
                    .locate(line, self.line_text(line))
                })
            })
            .collect()
    }

    /// The model temperature, or a diagnostic asking for one.
    pub fn require_temperature(&self) -> Result<f64, Diagnostic> {
        self.temperature.ok_or_else(|| {
            Diagnostic::new(
                Code::ModelTemperature,
                0..0,
                "the model gives no temperature",
            )
            .with_help("add a `temperature 1273 K` line, or pass --temperature")
            .locate(1, self.line_text(1))
        })
    }

    /// Index of the O2 gas, if any equilibrium involves it.
    pub fn oxygen(&self) -> Option<usize> {
        self.gases.iter().position(|g| g.key == "gas O2")
    }

    /// Sites per formula unit over all sublattices.
    pub fn total_sites(&self) -> f64 {
        self.host
            .sublattices
            .iter()
            .map(|s| *s.count.numer() as f64 / *s.count.denom() as f64)
            .sum()
    }

    /// The largest defect site fraction at concentrations `ln_c`: per
    /// sublattice, defects on it over its sites; interstitials, electrons
    /// and holes counted against all sites.
    pub fn defect_site_fraction(&self, ln_c: &[f64]) -> f64 {
        let mut per_sublattice = vec![0.0f64; self.host.sublattices.len()];
        let mut elsewhere = 0.0f64;
        for (s, &l) in self.species.iter().zip(ln_c) {
            let c = l.exp();
            if s.sites.is_empty() {
                elsewhere += c;
            }
            for &(i, n) in &s.sites {
                if let Some(slot) = per_sublattice.get_mut(i) {
                    *slot += c * (*n.numer() as f64 / *n.denom() as f64);
                }
            }
        }
        let mut worst = elsewhere / self.total_sites().max(1e-300);
        for (slot, sub) in per_sublattice.iter().zip(&self.host.sublattices) {
            let count = *sub.count.numer() as f64 / *sub.count.denom() as f64;
            if count > 0.0 {
                worst = worst.max(slot / count);
            }
        }
        worst
    }
}

fn network_diagnostic(
    e: NetworkError,
    doc: &Document,
    equilibria: &[Equilibrium],
    totals: &[Total],
    species: &[ModelSpecies],
) -> Diagnostic {
    let at_reaction = |i: usize, d: Diagnostic| {
        let line = equilibria.get(i).map_or(0, |e| e.line);
        let text = doc.line_text(line);
        let mut d = d;
        d.span = 0..text.len();
        d.locate(line, text)
    };
    let at_total = |i: usize, d: Diagnostic| {
        let line = totals.get(i).map_or(0, |t| t.line);
        let text = doc.line_text(line);
        let mut d = d;
        d.span = 0..text.len();
        d.locate(line, text)
    };
    let label = |i: usize| equilibria.get(i).map_or("?", |e| e.label.as_str());
    // The first line (an equilibrium or a `fix`) that mentions one of `which`.
    let at_species = |which: &[usize], d: Diagnostic| {
        let from_equilibria = equilibria
            .iter()
            .filter(|e| e.row.species.iter().any(|(s, _)| which.contains(s)))
            .map(|e| e.line);
        let from_totals = totals
            .iter()
            .filter(|t| {
                which
                    .iter()
                    .any(|&s| t.weights.get(s).is_some_and(|w| *w > Q::from_integer(0)))
            })
            .map(|t| t.line);
        let line = from_equilibria.chain(from_totals).min().unwrap_or(1);
        let text = doc.line_text(line);
        let mut d = d;
        d.span = 0..text.len();
        d.locate(line, text)
    };
    match e {
        NetworkError::DependentEquilibria { index } => at_reaction(
            index,
            Diagnostic::new(
                Code::DependentEquilibria,
                0..0,
                format!("`{}` is a combination of the equilibria above it", label(index)),
            )
            .with_help("its K follows from theirs: remove its data lines (keep the reaction for reference)"),
        ),
        NetworkError::TotalNotConserved { total, equilibrium } => at_total(
            total,
            Diagnostic::new(
                Code::FixedTotal,
                0..0,
                format!(
                    "`{}` changes the amount of {} that this line fixes",
                    label(equilibrium),
                    totals.get(total).map_or("?", |t| t.subject_unicode.as_str())
                ),
            )
            .with_help("a fixed dopant level cannot also be in equilibrium with a dopant phase: drop the data of that reaction or the `fix`"),
        ),
        NetworkError::ChargeNotConserved { equilibrium } => at_reaction(
            equilibrium,
            Diagnostic::new(Code::ChargeBalance, 0..0, format!("`{}` does not conserve charge", label(equilibrium)))
                .with_help("balance the effective charges"),
        ),
        NetworkError::RedundantTotal { total } => at_total(
            total,
            Diagnostic::new(
                Code::FixedTotal,
                0..0,
                "this total follows from electroneutrality and the other totals",
            )
            .with_help("remove this `fix` line or add the defects that compensate it"),
        ),
        NetworkError::OneSignedCharge { positive } => {
            let sign = if positive { "positive" } else { "negative" };
            let charged: Vec<usize> = (0..species.len()).filter(|&s| species[s].charge != 0).collect();
            let names: Vec<&str> = charged.iter().map(|&s| species[s].unicode.as_str()).collect();
            at_species(
                &charged,
                Diagnostic::new(
                    Code::Neutrality,
                    0..0,
                    format!("every charged species is {sign} ({}), so electroneutrality cannot hold", names.join(", ")),
                )
                .with_help("add the compensating defects or carriers through an equilibrium, e.g. `i: nil -> e' + h.`"),
            )
        }
        NetworkError::Underdetermined { species: free } => {
            let names: Vec<&str> = free
                .iter()
                .filter_map(|&s| species.get(s))
                .map(|s| s.unicode.as_str())
                .collect();
            at_species(
                &free,
                Diagnostic::new(
                    Code::Underdetermined,
                    0..0,
                    format!(
                        "the equilibria, electroneutrality and fixed totals leave a combination of {} free",
                        names.join(", ")
                    ),
                )
                .with_help("add an equilibrium with data that ties these to the others (for example the gap `nil -> e' + h.`), or a `fix` line for a dopant"),
            )
        }
        NetworkError::Overflow => Diagnostic::new(
            Code::Number,
            0..0,
            "the exact solution of the model's equilibria grew beyond the exact range",
        )
        .with_help("simplify the coefficients of the reactions"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn doc(text: &str) -> Document {
        read("<test>", text, None)
    }

    #[test]
    fn reads_model_lines() {
        let d = doc("host ZrO2\n\
             temperature 1000 °C\n\
             po2 1e-25 to 1 bar\n\
             red: O_O -> V_O.. + 2e' + 1/2 O2(g)\n\
             K red = 1e-20 at 1273 K\n\
             i: nil -> e' + h.\n\
             dH i = 2.5 eV\n\
             dS i = 2 k\n\
             fix Y_Zr' = 8 mol% Y2O3\n");
        assert!(!d.has_errors(), "{:?}", d.diagnostics);
        assert_eq!(d.temperature.map(|t| t.0), Some(1273.15));
        assert_eq!(d.po2.map(|p| p.0), Some((1e-25, 1.0)));
        assert_eq!(d.data.len(), 3);
        let m = Model::build(&d, Overrides::default()).expect("model");
        assert_eq!(m.species.len(), 4);
        assert_eq!(m.neutrality(Style::Unicode), "n + [Y_Zr′] = 2[V_O••] + p");
        // source: common practice; 8 mol% Y2O3 in ZrO2 is Zr0.852Y0.148O1.926,
        // i.e. 2x/(1+x) = 0.1481 Y per cation site.
        let total = &m.totals[0];
        assert!(
            (total.amount - 0.16 / 1.08).abs() < 1e-12,
            "{}",
            total.amount
        );
    }

    #[test]
    fn errors_have_places_and_help() {
        for (text, code) in [
            ("host ZrO2\nK red = 1e-20 at 1273 K\n", Code::UnknownLabel),
            (
                "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20 at 1273\n",
                Code::ModelUnit,
            ),
            (
                "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\ndH red = 4 eV\n",
                Code::ThermoData,
            ),
            (
                "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20\n",
                Code::ModelTemperature,
            ),
            (
                "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = -1 at 1273 K\n",
                Code::ThermoData,
            ),
            (
                "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red 1e-20\n",
                Code::ModelSyntax,
            ),
            (
                "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20 at 1273 K\nfix Y_Zr = 0.1 site fraction\n",
                Code::FixedTotal,
            ),
            (
                "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20 at 1273 K\nfix Y_Zr' = 1.5 site fraction\n",
                Code::FixedTotal,
            ),
            (
                "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20 at 1273 K\nred1: O_O -> V_O. + e' + 1/2 O2(g)\n",
                Code::NoThermoData,
            ),
            (
                "host ZrO2\nhyd: H2O(g) + V_O.. + O_O -> 2OH_O.\nK hyd = 1 at 1273 K\n",
                Code::GasPressure,
            ),
        ] {
            let d = doc(text);
            let result = Model::build(&d, Overrides::default());
            let diags = match result {
                Ok(m) => m.notes,
                Err(e) => e,
            };
            let found = diags.iter().find(|x| x.code == code);
            let Some(found) = found else {
                panic!("{text}: expected {code}, got {diags:?}");
            };
            assert!(found.help.is_some(), "{text}: no help");
            if code != Code::GasPressure {
                assert!(
                    found.line > 0 && found.column > 0,
                    "{text}: not located: {found:?}"
                );
            }
        }
    }

    #[test]
    fn network_problems_are_reported() {
        let under = doc(
            "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20 at 1273 K\nt: V_O.. + e' -> V_O.\nK t = 1 at 1273 K\nu: O_O -> V_Ox + 1/2 O2(g)\n",
        );
        assert!(Model::build(&under, Overrides::default()).is_ok());
        let dependent = doc(
            "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20 at 1273 K\nred2: 2O_O -> 2V_O.. + 4e' + O2(g)\nK red2 = 1e-40 at 1273 K\n",
        );
        let err = Model::build(&dependent, Overrides::default()).expect_err("dependent");
        assert_eq!(err[0].code, Code::DependentEquilibria);
        assert_eq!(err[0].line, 4);
        let one_sign = doc("host ZrO2\nfix Y_Zr' = 0.1 site fraction\n");
        let err = Model::build(&one_sign, Overrides::default()).expect_err("one sign");
        assert_eq!(err[0].code, Code::Neutrality);
    }
}
