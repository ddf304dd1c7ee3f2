//! The three balances (mass, charge, sites) and the plausibility checks.
//!
//! In: a parsed `Reaction` and the host it is written for. Out: a `Verdict`
//! with the balance flags, the numbers behind them and diagnostics. Pure:
//! no I/O, no colour, no knowledge of where the text came from, and no
//! call into the balancer: the balanced form shown as a hint on a failing
//! reaction is attached by the caller (`crate::balance::hint`).

#![deny(clippy::arithmetic_side_effects)]

pub mod rules;

use crate::base::diagnostic::{Code, Diagnostic, Severity};
use crate::base::elements;
use crate::base::number::{self, Q};
use crate::host::{Host, SiteLookup};
use crate::notation::{
    Entity, Occupant, Reaction, Site, Span, Species, Style, Term, render_species,
};

/// Which balances hold. `site` is `None` when it could not be evaluated
/// (no host, or a site the host lacks).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Balance {
    pub mass: bool,
    pub charge: bool,
    pub site: Option<bool>,
}

/// The numbers behind the balances, left and right.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct BalanceTable {
    /// (atomic number, left, right) in order of first appearance.
    pub elements: Vec<(u8, Q, Q)>,
    pub charge: (Q, Q),
    /// (index into the host's sublattices, sites per formula unit, left, right).
    pub sites: Vec<(usize, Q, Q, Q)>,
}

/// The outcome of checking one reaction.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Verdict {
    pub balance: Balance,
    pub table: BalanceTable,
    pub diagnostics: Vec<Diagnostic>,
}

impl Verdict {
    /// True when every balance holds and no error was reported.
    pub fn ok(&self) -> bool {
        self.balance.mass
            && self.balance.charge
            && self.balance.site != Some(false)
            && !self
                .diagnostics
                .iter()
                .any(|d| d.severity == Severity::Error)
    }
}

const VANADIUM: u8 = 23;

/// Checks one reaction against its host.
pub fn check_reaction(reaction: &Reaction, host: Option<&Host>) -> Verdict {
    let mut checker = Checker {
        host,
        diags: Vec::new(),
        sites_known: host.is_some(),
        vanadium: false,
    };
    checker.vanadium =
        host.is_some_and(|h| h.contains_element(VANADIUM)) || mentions_vanadium(reaction);
    let mut table = BalanceTable::default();
    // The first term at which a sum left the exact range.
    let mut overflow: Option<Span> = None;
    for (right, term) in reaction.terms() {
        checker.validate_term(term);
        if checker
            .accumulate(&mut table, term, Q::from_integer(1), right)
            .is_err()
        {
            overflow.get_or_insert_with(|| term.span.clone());
        }
    }
    let site_holds = if checker.sites_known {
        site_ratio_holds(&table.sites).map(Some)
    } else {
        Ok(None)
    };
    if overflow.is_some() || site_holds.is_err() {
        // The sums are not trustworthy: report that alone, and no balance.
        let mut diagnostic = Diagnostic::new(Code::Number, reaction.span.clone(), "the sums of this reaction grew beyond the exact range (about 9.2e18)")
            .with_help("use smaller coefficients; the balances are exact, so they cannot be evaluated approximately");
        if let Some(span) = overflow {
            diagnostic.span = span;
            diagnostic.label = Some("the sums leave the exact range at this term".into());
        }
        // An associate whose own parts overflowed has said so already.
        if !checker.diags.iter().any(|d| d.code == Code::Number) {
            checker.diags.push(diagnostic);
        }
        return Verdict {
            balance: Balance {
                mass: false,
                charge: false,
                site: None,
            },
            table,
            diagnostics: checker.diags,
        };
    }
    let mass = table.elements.iter().all(|(_, l, r)| l == r);
    let charge = table.charge.0 == table.charge.1;
    let site = site_holds.unwrap_or(None);
    if host.is_none() {
        checker.diags.push(
            Diagnostic::new(
                Code::NoHost,
                reaction.span.clone(),
                "no host declared, so sites and effective charges cannot be checked",
            )
            .with_help("add a `host ZrO2` line above the reaction, or pass `--host`"),
        );
    }
    if !mass {
        checker.mass_diagnostic(reaction, &table);
    }
    if !charge {
        // A single wrong mark is the likely slip only when the rest balances.
        checker.charge_diagnostic(reaction, &table, mass && site != Some(false));
    }
    if site == Some(false) {
        checker.site_diagnostic(reaction, &table);
    }
    checker.same_on_both_sides(reaction);
    Verdict {
        balance: Balance { mass, charge, site },
        table,
        diagnostics: checker.diags,
    }
}

fn mentions_vanadium(reaction: &Reaction) -> bool {
    fn term_has(term: &Term) -> bool {
        match &term.entity {
            Entity::Compound(c) => c.formula.contains(VANADIUM),
            Entity::Species(s) => {
                matches!(&s.occupant, Occupant::Atoms { formula, .. } if formula.contains(VANADIUM))
                    || matches!(
                        s.site,
                        Some(Site::Lattice {
                            element: VANADIUM,
                            ..
                        })
                    )
            }
            Entity::Associate(a) => a.parts.iter().any(term_has),
            Entity::Nil => false,
        }
    }
    reaction.terms().any(|(_, t)| term_has(t))
}

/// Net site changes must be proportional to the host's site counts.
fn site_ratio_holds(sites: &[(usize, Q, Q, Q)]) -> Result<bool, number::Overflow> {
    let Some((_, count0, l0, r0)) = sites.first() else {
        return Ok(true);
    };
    if *count0 == Q::from_integer(0) {
        return Ok(false);
    }
    let lambda = number::sub(*r0, *l0)?.checked_div(*count0)?;
    for (_, count, l, r) in sites {
        if number::sub(*r, *l)? != number::mul(lambda, *count)? {
            return Ok(false);
        }
    }
    Ok(true)
}

/// The text of a number computed for a message, or a plain statement when
/// it left the exact range (never a wrapped number).
fn exact_text(q: Result<Q, number::Overflow>, text: fn(Q) -> String) -> String {
    q.map_or_else(|_| "beyond the exact range".to_string(), text)
}

/// A P107 at `span`: `what` left the exact range.
fn overflow_at(span: Span, what: &str) -> Diagnostic {
    Diagnostic::new(
        Code::Number,
        span,
        format!("{what} is beyond the exact range (about 9.2e18)"),
    )
    .with_help("use smaller numbers; charges and counts are exact, so they cannot be approximated")
}

struct Checker<'h> {
    host: Option<&'h Host>,
    diags: Vec<Diagnostic>,
    sites_known: bool,
    vanadium: bool,
}

impl Checker<'_> {
    fn push(&mut self, diagnostic: Diagnostic) {
        self.diags.push(diagnostic);
    }

    fn validate_term(&mut self, term: &Term) {
        match &term.entity {
            Entity::Species(s) => self.validate_species(s),
            Entity::Associate(a) => {
                for part in &a.parts {
                    self.validate_term(part);
                }
                if let Some(declared) = a.charge {
                    let Ok(parts) = a.parts_charge() else {
                        self.push(
                            Diagnostic::new(Code::Number, a.span.clone(), "the charges of this associate's parts add up to more than Lacuna holds exactly (about 9.2e18)")
                                .with_help("use smaller coefficients inside the associate; charges are exact, so they cannot be added approximately"),
                        );
                        return;
                    };
                    if parts != Q::from_integer(i64::from(declared)) {
                        self.push(
                            Diagnostic::new(Code::AssociateCharge, a.span.clone(), format!(
                                "the associate is marked {} but its parts add up to {}",
                                number::minus_text(Q::from_integer(i64::from(declared))),
                                number::minus_text(parts)
                            ))
                            .with_help("the net charge of an associate is the sum of its parts' effective charges"),
                        );
                    }
                }
            }
            Entity::Compound(_) | Entity::Nil => {}
        }
    }

    fn validate_species(&mut self, s: &Species) {
        match &s.occupant {
            Occupant::Electron | Occupant::Hole => {
                let (want, name, mark) = if s.occupant == Occupant::Electron {
                    (-1, "an electron", "e′")
                } else {
                    (1, "a hole", "h•")
                };
                if s.charge != want {
                    self.push(
                        Diagnostic::new(
                            Code::ElectronicSpecies,
                            s.span.clone(),
                            format!(
                                "{name} has effective charge {}, not {}",
                                number::minus_text(Q::from_integer(want.into())),
                                number::minus_text(Q::from_integer(s.charge.into()))
                            ),
                        )
                        .with_help(format!("write `{mark}`")),
                    );
                } else if s.marks == crate::notation::MarkStyle::Unmarked {
                    self.push(
                        Diagnostic::new(
                            Code::ImplicitElectronic,
                            s.span.clone(),
                            format!("{name} written without its charge mark"),
                        )
                        .with_help(format!("write `{mark}`")),
                    );
                }
                return;
            }
            Occupant::Vacancy(crate::notation::VacancySpelling::Bare) if self.vanadium => {
                self.push(
                    Diagnostic::new(Code::AmbiguousV, s.span.start..s.span.start.saturating_add(1), "`V` could be vanadium or a vacancy here: vanadium occurs in this host or reaction")
                        .with_label("vanadium or vacancy?")
                        .with_help(format!("for a vacancy write `Vac{rest}` or `□{rest}`; for vanadium write `el:V{rest}`", rest = &render_species(s, Style::Unicode)[1..])),
                );
                return;
            }
            _ => {}
        }
        let Some(site) = &s.site else { return };
        let site_charge = match site {
            Site::Interstitial => {
                if matches!(s.occupant, Occupant::Vacancy(_)) {
                    self.push(
                        Diagnostic::new(Code::InterstitialVacancy, s.span.clone(), "a vacancy on an interstitial site")
                            .with_help("interstitial sites are empty in the perfect crystal; a vacancy sits on a regular site such as `V_O`"),
                    );
                    return;
                }
                Some(Q::from_integer(0))
            }
            Site::Lattice { element, label } => self.site_charge(s, *element, label.as_deref()),
        };
        let Some(site_charge) = site_charge else {
            return;
        };
        let effective = Q::from_integer(i64::from(s.charge));
        match &s.occupant {
            Occupant::Vacancy(_) => self.vacancy_range(s, site_charge),
            Occupant::Atoms { formula, .. } => {
                if let Some(z) = formula.single_element() {
                    match number::add(effective, site_charge) {
                        Ok(real) => self.oxidation_state(s, z, real, site_charge),
                        Err(_) => self.push(overflow_at(
                            s.span.clone(),
                            "the real charge of this species",
                        )),
                    }
                }
            }
            _ => {}
        }
    }

    fn site_charge(&mut self, s: &Species, element: u8, label: Option<&str>) -> Option<Q> {
        let host = self.host?;
        let site_span = site_span(s);
        match host.lookup(element, label) {
            SiteLookup::Found(i) => Some(host.sublattices[i].charge),
            SiteLookup::NeedsLabel => {
                self.sites_known = false;
                let names: Vec<String> = host
                    .sublattices
                    .iter()
                    .filter(|x| x.element == element)
                    .map(|x| format!("`{}`", x.name()))
                    .collect();
                self.push(
                    Diagnostic::new(
                        Code::UnknownSite,
                        site_span,
                        format!(
                            "{} has {} sublattices in {}; name one",
                            elements::symbol(element),
                            names.len(),
                            host.formula_text
                        ),
                    )
                    .with_help(format!("write the site as {}", names.join(" or "))),
                );
                None
            }
            SiteLookup::Missing => {
                self.sites_known = false;
                let written = label.map_or_else(
                    || elements::symbol(element).to_string(),
                    |l| format!("{}:{l}", elements::symbol(element)),
                );
                let names: Vec<String> = host
                    .sublattices
                    .iter()
                    .map(|x| format!("`{}`", x.name()))
                    .collect();
                self.push(
                    Diagnostic::new(
                        Code::UnknownSite,
                        site_span,
                        format!("{} has no {written} site", host.formula_text),
                    )
                    .with_label("not a site of this host")
                    .with_help(format!(
                        "its sites are {}, and `i` for an interstitial",
                        names.join(", ")
                    )),
                );
                None
            }
        }
    }

    fn vacancy_range(&mut self, s: &Species, site_charge: Q) {
        let q = Q::from_integer(i64::from(s.charge));
        let zero = Q::from_integer(0);
        let Ok(limit) = site_charge.checked_neg() else {
            self.push(overflow_at(s.span.clone(), "the charge of this site"));
            return;
        };
        let inside = if limit >= zero {
            q >= zero && q <= limit
        } else {
            q <= zero && q >= limit
        };
        if inside {
            return;
        }
        let shown = render_species(s, Style::Unicode);
        let full = limit.trunc();
        let mut fixed = s.clone();
        fixed.charge = i32::try_from(*full.numer()).unwrap_or(0);
        let fixed_text = render_species(&fixed, Style::Unicode);
        let zero_text = {
            let mut z = s.clone();
            z.charge = 0;
            render_species(&z, Style::Unicode)
        };
        self.push(
            Diagnostic::new(Code::VacancyCharge, s.span.clone(), format!(
                "{shown} has effective charge {}, but a vacancy on a site of formal charge {} ranges from 0 to {}",
                number::minus_text(q), number::minus_text(site_charge), number::minus_text(full)
            ))
            .with_label(format!("write {zero_text} … {fixed_text}"))
            .with_help(format!("the fully ionised vacancy is {fixed_text}")),
        );
    }

    fn oxidation_state(&mut self, s: &Species, z: u8, real: Q, site_charge: Q) {
        let Some(element) = elements::by_z(z) else {
            return;
        };
        if !real.is_integer() || element.known_states.is_empty() {
            return;
        }
        let Ok(state) = i8::try_from(*real.numer()) else {
            self.push(Diagnostic::new(
                Code::OxidationState,
                s.span.clone(),
                format!(
                    "{} implies an impossible charge of {}",
                    render_species(s, Style::Unicode),
                    number::minus_text(real)
                ),
            ));
            return;
        };
        let interstitial = matches!(s.site, Some(Site::Interstitial));
        let elemental_host = self
            .host
            .is_some_and(|h| h.sublattices.iter().all(|x| x.charge == Q::from_integer(0)));
        if element.is_common_state(state) || (state == 0 && (interstitial || elemental_host)) {
            return;
        }
        let shown = render_species(s, Style::Unicode);
        let ion = ion_text(element.symbol, state);
        let suggestion = element
            .common_states
            .iter()
            .copied()
            .filter(|c| *c != 0)
            .min_by_key(|c| i64::from(*c).abs_diff(*site_charge.numer()))
            .map(|common| {
                let mut fixed = s.clone();
                // An i8 state minus a site charge that fits i32 cannot leave i64;
                // the result is clamped into i32 like the site charge above.
                let site = i64::from(i32::try_from(*site_charge.numer()).unwrap_or(0));
                let charge = i64::from(common).saturating_sub(site);
                fixed.charge = i32::try_from(charge).unwrap_or(0);
                format!(
                    "{} on this site is {}",
                    ion_text(element.symbol, common),
                    render_species(&fixed, Style::Unicode)
                )
            });
        if element.is_known_state(state) {
            let mut d = Diagnostic::new(
                Code::RareOxidationState,
                s.span.clone(),
                format!(
                    "{shown} implies {ion}, an uncommon oxidation state of {}",
                    element.name.to_lowercase()
                ),
            );
            d.help = suggestion.map(|t| format!("check the charge marks; {t}"));
            self.push(d);
        } else {
            let known: Vec<String> = element
                .known_states
                .iter()
                .map(|k| {
                    if *k == 0 {
                        "0".to_string()
                    } else {
                        format!("{k:+}")
                    }
                })
                .collect();
            let mut d = Diagnostic::new(
                Code::OxidationState,
                s.span.clone(),
                format!(
                    "{shown} implies {ion}, a state {} does not take (known: {})",
                    element.name.to_lowercase(),
                    known.join(", ")
                ),
            )
            .with_label(format!("implies {ion}"));
            d.help = suggestion;
            self.push(d);
        }
    }

    /// Adds a term's mass, charge and sites to the table, `scale` times.
    fn accumulate(
        &mut self,
        table: &mut BalanceTable,
        term: &Term,
        scale: Q,
        right: bool,
    ) -> Result<(), number::Overflow> {
        let amount = number::mul(scale, term.coefficient)?;
        let add = |slot: &mut Q, by: Q| -> Result<(), number::Overflow> {
            *slot = number::add(*slot, by)?;
            Ok(())
        };
        let add_element = |table: &mut BalanceTable, z: u8, n: Q| -> Result<(), number::Overflow> {
            let by = number::mul(amount, n)?;
            let index = match table.elements.iter().position(|(e, _, _)| *e == z) {
                Some(i) => i,
                None => {
                    table
                        .elements
                        .push((z, Q::from_integer(0), Q::from_integer(0)));
                    // Just pushed: the vector is not empty.
                    table.elements.len().saturating_sub(1)
                }
            };
            let row = &mut table.elements[index];
            if right {
                add(&mut row.2, by)
            } else {
                add(&mut row.1, by)
            }
        };
        match &term.entity {
            Entity::Nil => {}
            Entity::Compound(c) => {
                for (z, n) in &c.formula.atoms {
                    add_element(table, *z, *n)?;
                }
            }
            Entity::Associate(a) => {
                for part in &a.parts {
                    self.accumulate(table, part, amount, right)?;
                }
                let declared = a.charge.map(|c| Q::from_integer(i64::from(c)));
                if let Some(declared) = declared {
                    // The parts already added their own charges; replace them by the declared net.
                    let correction =
                        number::mul(amount, number::sub(declared, a.parts_charge()?)?)?;
                    if right {
                        add(&mut table.charge.1, correction)?
                    } else {
                        add(&mut table.charge.0, correction)?
                    }
                }
            }
            Entity::Species(s) => {
                if let Occupant::Atoms { formula, .. } = &s.occupant {
                    for (z, n) in &formula.atoms {
                        add_element(table, *z, *n)?;
                    }
                }
                let by = number::mul(amount, Q::from_integer(i64::from(s.charge)))?;
                if right {
                    add(&mut table.charge.1, by)?
                } else {
                    add(&mut table.charge.0, by)?
                }
                if let (Some(Site::Lattice { element, label }), Some(host)) = (&s.site, self.host) {
                    if let SiteLookup::Found(i) = host.lookup(*element, label.as_deref()) {
                        if table.sites.is_empty() {
                            table.sites = site_rows(host);
                        }
                        let row = &mut table.sites[i];
                        if right {
                            add(&mut row.3, amount)?
                        } else {
                            add(&mut row.2, amount)?
                        }
                    }
                }
            }
        }
        if table.sites.is_empty() {
            if let Some(host) = self.host {
                table.sites = site_rows(host);
            }
        }
        Ok(())
    }

    fn mass_diagnostic(&mut self, reaction: &Reaction, table: &BalanceTable) {
        let off: Vec<String> = table
            .elements
            .iter()
            .filter(|(_, l, r)| l != r)
            .map(|(z, l, r)| {
                format!(
                    "{} left {}, right {}",
                    elements::symbol(*z),
                    number::to_plain(*l),
                    number::to_plain(*r)
                )
            })
            .collect();
        self.push(
            Diagnostic::new(Code::MassBalance, reaction.span.clone(), format!("mass does not balance: {}", off.join("; ")))
                .with_help("every element must appear in the same amount on both sides; vacancies, electrons and holes carry no mass"),
        );
    }

    fn charge_diagnostic(
        &mut self,
        reaction: &Reaction,
        table: &BalanceTable,
        look_for_culprit: bool,
    ) {
        let (left, right) = table.charge;
        let message = format!(
            "charge does not balance: left {}, right {}",
            number::minus_text(left),
            number::minus_text(right)
        );
        let mut diagnostic = Diagnostic::new(Code::ChargeBalance, reaction.span.clone(), message);
        // Point at one species whose charge mark, corrected, would balance the
        // reaction with a plausible charge: usually the typo.
        if let Some((span, fixed, note)) = look_for_culprit
            .then(|| number::sub(right, left).ok())
            .flatten()
            .and_then(|excess| self.charge_culprit(reaction, excess))
        {
            diagnostic.span = span;
            diagnostic.label = Some(note);
            diagnostic.help = Some(format!("with {fixed} the charges balance"));
        } else {
            diagnostic.help = Some(
                "the sum of effective charges times coefficients must be equal on both sides"
                    .into(),
            );
        }
        self.push(diagnostic);
    }

    fn charge_culprit(
        &self,
        reaction: &Reaction,
        excess_right: Q,
    ) -> Option<(Span, String, String)> {
        let host = self.host?;
        let mut candidates = Vec::new();
        for (right, term) in reaction.terms() {
            let Entity::Species(s) = &term.entity else {
                continue;
            };
            let Some(Site::Lattice { element, label }) = &s.site else {
                continue;
            };
            let SiteLookup::Found(i) = host.lookup(*element, label.as_deref()) else {
                continue;
            };
            let site_charge = host.sublattices[i].charge;
            let delta = if right {
                excess_right.checked_neg()
            } else {
                Ok(excess_right)
            }
            .and_then(|d| d.checked_div(term.coefficient));
            let Ok(delta) = delta else { continue };
            if !delta.is_integer() {
                continue;
            }
            let Some(new_charge) = i64::from(s.charge).checked_add(*delta.numer()) else {
                continue;
            };
            let Ok(new_charge) = i32::try_from(new_charge) else {
                continue;
            };
            let mut fixed = s.clone();
            fixed.charge = new_charge;
            let fixed_text = render_species(&fixed, Style::Unicode);
            let q = Q::from_integer(i64::from(new_charge));
            let (plausible, note) = match &s.occupant {
                Occupant::Vacancy(_) => {
                    let Ok(full) = site_charge.checked_neg() else {
                        continue;
                    };
                    let ok = if full >= Q::from_integer(0) {
                        q >= Q::from_integer(0) && q <= full
                    } else {
                        q <= Q::from_integer(0) && q >= full
                    };
                    let site_name = elements::by_z(*element)
                        .map_or("", |e| e.name)
                        .to_lowercase();
                    let note = if q == full {
                        let carriers = if full > Q::from_integer(0) {
                            "electrons"
                        } else {
                            "holes"
                        };
                        format!(
                            "a{} {site_name} vacancy with all its {carriers} released is {fixed_text}",
                            if site_name.starts_with(['a', 'e', 'i', 'o', 'u']) {
                                "n"
                            } else {
                                ""
                            }
                        )
                    } else {
                        format!("balances as {fixed_text}")
                    };
                    (ok, note)
                }
                Occupant::Atoms { formula, .. } => {
                    let ok = formula
                        .single_element()
                        .and_then(elements::by_z)
                        .is_some_and(|e| {
                            number::add(q, site_charge).is_ok_and(|real| {
                                real.is_integer()
                                    && i8::try_from(*real.numer())
                                        .is_ok_and(|st| e.is_common_state(st))
                            })
                        });
                    (ok, format!("balances as {fixed_text}"))
                }
                _ => (false, String::new()),
            };
            if plausible {
                candidates.push((s.span.clone(), fixed_text, note));
            }
        }
        if candidates.len() == 1 {
            candidates.pop()
        } else {
            None
        }
    }

    fn site_diagnostic(&mut self, reaction: &Reaction, table: &BalanceTable) {
        let Some(host) = self.host else { return };
        let changes: Vec<String> = table
            .sites
            .iter()
            .map(|(i, _, l, r)| {
                format!(
                    "{} {}",
                    site_name(host, *i),
                    exact_text(number::sub(*r, *l), number::signed)
                )
            })
            .collect();
        let mut message = format!(
            "sites break the {} ratio {}: net change {}",
            host.formula_text,
            host.ratio_text(),
            changes.join(", ")
        );
        // Say what the other sublattices would need, scaled to the first that changed.
        if let Some((first, count, l, r)) = table.sites.iter().find(|(_, _, l, r)| l != r) {
            let name = site_name(host, *first);
            let lambda = number::sub(*r, *l).and_then(|d| d.checked_div(*count));
            let needed: Vec<String> = table
                .sites
                .iter()
                .filter(|(n, ..)| n != first)
                .map(|(n, c, ..)| {
                    let need = lambda.and_then(|x| number::mul(x, *c));
                    format!(
                        "{} {}",
                        site_name(host, *n),
                        exact_text(need, number::signed)
                    )
                })
                .collect();
            message.push_str(&format!(
                " (for {name} {} the host needs {})",
                exact_text(number::sub(*r, *l), number::signed),
                needed.join(", ")
            ));
        }
        self.push(
            Diagnostic::new(Code::SiteBalance, reaction.span.clone(), message)
                .with_help("regular sites are created or destroyed only in the host ratio; a forgotten `O_O×` is the usual cause"),
        );
    }

    fn same_on_both_sides(&mut self, reaction: &Reaction) {
        for right in &reaction.right {
            let Entity::Species(r) = &right.entity else {
                continue;
            };
            let repeated = reaction
                .left
                .iter()
                .any(|left| matches!(&left.entity, Entity::Species(l) if l.same_as(r)));
            if repeated {
                self.push(
                    Diagnostic::new(
                        Code::SameOnBothSides,
                        r.span.clone(),
                        "this species appears on both sides",
                    )
                    .with_help("cancel it from both sides, or check for a typo"),
                );
            }
        }
    }
}

fn site_rows(host: &Host) -> Vec<(usize, Q, Q, Q)> {
    let zero = Q::from_integer(0);
    host.sublattices
        .iter()
        .enumerate()
        .map(|(i, x)| (i, x.count, zero, zero))
        .collect()
}

/// The name of sublattice `i` of `host` (`O`, `Fe:A`).
pub fn site_name(host: &Host, i: usize) -> String {
    host.sublattices
        .get(i)
        .map_or_else(|| "?".to_string(), |x| x.name())
}

fn site_span(s: &Species) -> Span {
    s.span.clone()
}

fn ion_text(symbol: &str, state: i8) -> String {
    match state {
        0 => format!("{symbol}0"),
        1 => format!("{symbol}+"),
        -1 => format!("{symbol}−"),
        s if s > 0 => format!("{symbol}{s}+"),
        s => format!("{symbol}{}−", s.unsigned_abs()),
    }
}

#[cfg(test)]
mod tests;
