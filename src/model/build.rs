//! Building a `Model` from a read `Document`: the species, the equilibria
//! with their K(T), the gases, the fixed totals and the network.

use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::number::{self, Overflow, Q};
use crate::host::{Host, SiteLookup};
use crate::model::law::{self, Factor, FactorKind, mass_action_law};
use crate::model::network::{self, NetworkError, Row};
use crate::model::thermo::{Thermo, sig};
use crate::model::{
    Basis, DEFAULT_PO2_RANGE, DataLine, Datum, Document, Equilibrium, FixLine, Gas, Model,
    ModelSpecies, Overrides, Total, label_problems,
};
use crate::notation::{Entity, Occupant, Site, Span, Species, Style};
use std::collections::BTreeMap;

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
                    format!("{text} contains no {}", crate::base::elements::symbol(z)),
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
        let Some(host) = model_host(doc, &mut errors) else {
            return Err(errors);
        };
        let temperature = overrides.temperature.or(doc.temperature.map(|(t, _)| t));
        let po2_range = overrides
            .po2_range
            .or(doc.po2.map(|(r, _)| r))
            .unwrap_or(DEFAULT_PO2_RANGE);

        errors.extend(label_problems(doc));

        let Reactions {
            mut factor_species,
            mut gases,
            equilibria,
            reference_only,
        } = equilibria_of(doc, &host, overrides, &mut errors, &mut notes);
        gas_pressures(doc, &mut gases, &equilibria, &mut errors, &mut notes);
        let totals = fixed_totals(doc, &host, &mut factor_species, &mut errors);

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

        let network = model_network(doc, &equilibria, &totals, &factor_species, gases.len())?;
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
}

/// The model's host: the last one in force (a second `host` line of the
/// file is an error); `None`, with the error, when there is none.
fn model_host(doc: &Document, errors: &mut Vec<Diagnostic>) -> Option<Host> {
    let locate = |line: u32, d: Diagnostic| d.locate(line, doc.line_text(line));
    match doc.hosts.as_slice() {
        [] => {
            errors.push(
                Diagnostic::new(Code::NoHost, 0..0, "the model has no host")
                    .with_help("add a `host ZrO2` line at the top, or pass --host")
                    .locate(1, doc.line_text(1)),
            );
            None
        }
        [(host, _)] => Some(host.clone()),
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
            Some(host.clone())
        }
    }
}

/// What the reactions give: the species and gases they name, the
/// equilibria (reactions with data) and the reactions shown for reference.
struct Reactions {
    factor_species: Vec<ModelSpecies>,
    gases: Vec<Gas>,
    equilibria: Vec<Equilibrium>,
    reference_only: Vec<String>,
}

/// Equilibria: reactions with data.
fn equilibria_of(
    doc: &Document,
    host: &Host,
    overrides: Overrides,
    errors: &mut Vec<Diagnostic>,
    notes: &mut Vec<Diagnostic>,
) -> Reactions {
    let locate = |line: u32, d: Diagnostic| d.locate(line, doc.line_text(line));
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
                            let Ok(species) = model_species(f, host) else {
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
                            overflow |= number::add(*slot, f.exponent).map(|v| *slot = v).is_err();
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
    Reactions {
        factor_species,
        gases,
        equilibria,
        reference_only,
    }
}

/// Gas pressures: O2 is swept, the others need a `pressure` line.
fn gas_pressures(
    doc: &Document,
    gases: &mut [Gas],
    equilibria: &[Equilibrium],
    errors: &mut Vec<Diagnostic>,
    notes: &mut Vec<Diagnostic>,
) {
    let locate = |line: u32, d: Diagnostic| d.locate(line, doc.line_text(line));
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
    for g in gases.iter() {
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
}

/// Fixed totals: the amount per formula unit of each `fix` line and its
/// weight in each species; a charged dopant in no reaction joins the
/// species as a fixed defect.
fn fixed_totals(
    doc: &Document,
    host: &Host,
    factor_species: &mut Vec<ModelSpecies>,
    errors: &mut Vec<Diagnostic>,
) -> Vec<Total> {
    let locate = |line: u32, d: Diagnostic| d.locate(line, doc.line_text(line));
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
                    match model_species(&f, host) {
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
        match amount_per_formula_unit(fix, host) {
            Ok((amount, description)) => {
                let subject_unicode = crate::notation::render_species(&fix.subject, Style::Unicode);
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
    totals
}

/// The exact log-linear network of the equilibria, electroneutrality and
/// the fixed totals; one that cannot be built is one located error.
fn model_network(
    doc: &Document,
    equilibria: &[Equilibrium],
    totals: &[Total],
    factor_species: &[ModelSpecies],
    gases: usize,
) -> Result<network::Network, Vec<Diagnostic>> {
    let rows: Vec<Row> = equilibria.iter().map(|e| e.row.clone()).collect();
    let charges: Vec<i32> = factor_species.iter().map(|s| s.charge).collect();
    let total_weights: Vec<Vec<Q>> = totals.iter().map(|t| t.weights.clone()).collect();
    network::build(factor_species.len(), gases, &rows, &charges, &total_weights).map_err(|e| {
        vec![network_diagnostic(
            e,
            doc,
            equilibria,
            totals,
            factor_species,
        )]
    })
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
    use crate::model::read;

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
