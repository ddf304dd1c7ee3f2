//! Reading a model file: every line of a reaction file read into a
//! `Document` (hosts, reactions, data, fixed totals, conditions), every
//! problem a located diagnostic. Lines are classified by the one file reader
//! (`crate::file::reader`); this module reads what the model lines say.
//! Grammar: grammar/model.md.

use super::{law, thermo};
use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::number::Q;
use crate::file::reader::{HostTracker, Line, classify, numbered_lines};
use crate::file::runner::check_line;
use crate::host::Host;
use crate::notation::{
    Entity, Formula, Reaction, Span, Species, parse_formula, parse_species_text,
};
use std::collections::BTreeMap;
use std::sync::Arc;

/// A reaction line of the file.
#[derive(Debug, Clone)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
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
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
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
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct DataLine {
    pub label: String,
    pub label_span: Span,
    pub datum: Datum,
    pub line: u32,
    pub span: Span,
}

/// How a fixed amount is expressed.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
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
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
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
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
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
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
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
/// first `host` line. Lines are read by the one file reader, reactions
/// checked as `check` checks them (plain, Unicode or LaTeX, with the host
/// over the arrow where no host is in force).
pub fn read(source: &str, text: &str, default_host: Option<Host>) -> Document {
    let mut doc = Document {
        source: source.to_string(),
        lines: text.lines().map(str::to_string).collect(),
        ..Document::default()
    };
    let mut hosts = HostTracker::new(default_host.map(Arc::new));
    if let Some(host) = hosts.host() {
        doc.hosts.push(((**host).clone(), 0));
    }
    // Index into `doc.hosts` of the host in force.
    let mut current_host = if doc.hosts.is_empty() { None } else { Some(0) };
    for (number, line) in numbered_lines(text) {
        match classify(line) {
            Line::Blank | Line::Comment => {}
            Line::Host(span) => {
                let result = Host::parse(line, span).map(Arc::new);
                hosts.declare(number, &result);
                match result {
                    Ok(host) => {
                        doc.hosts.push(((*host).clone(), number));
                        current_host = Some(doc.hosts.len() - 1);
                    }
                    Err(diags) => {
                        current_host = None;
                        for d in diags {
                            doc.push(number, d);
                        }
                    }
                }
            }
            Line::Reaction { label, reaction } => {
                let checked = check_line(line, reaction, &hosts);
                hosts.follow(&checked.host);
                if let Some((host, _)) = &checked.host.taken {
                    doc.hosts.push(((**host).clone(), number));
                    current_host = Some(doc.hosts.len() - 1);
                }
                let ok = checked.verdict.as_ref().is_some_and(|v| v.ok());
                for d in checked.diagnostics {
                    doc.push(number, d);
                }
                if let Some(reaction) = checked.reaction {
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
                read_model_line(&mut doc, number, line, &line[keyword], rest);
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

pub(crate) fn read_model_line(
    doc: &mut Document,
    number: u32,
    line: &str,
    keyword: &str,
    rest: Span,
) {
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
