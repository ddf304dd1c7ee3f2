//! Dopant compensation: every balanced incorporation mechanism of a dopant
//! in a host, ranked.
//!
//! In: a `Host`, a `Dopant` (see [`dopant`]) and options (a forced site,
//! coordination overrides). Out: a `Report` with the structure guess and
//! the mechanisms, best first. For each plausible site (each cation
//! sublattice, an interstitial) and each compensation family (anion
//! vacancy, cation vacancy on each sublattice, host-ion or anion
//! interstitial, the dopant on a second site, electrons with the anion gas
//! released, holes with it taken up) the species are assembled here and the
//! coefficients found by the balancer; what cannot balance with every
//! species on its side is dropped. The other cation sublattices of a
//! multi-cation host keep their sites through their binary compounds
//! (`La2O3 + 3 TiO2 → 2 La_Ba• + V_Ba′′ + 3 Ti_Ti× + 9 O_O×`).
//!
//! Ranking weighs the Shannon-radius mismatch at the site's coordination,
//! the charge mismatch, the cost of the compensating defect and whether gas
//! must be exchanged, with fixed rough weights: a guide, not a prediction.

pub mod dopant;
pub mod level;
pub mod structure;

pub use dopant::{Dopant, parse_dopant};
pub use structure::{CnSource, Radius, SiteCn, Structure};

use crate::balance::build::{Builder, component, compound, gas, main_anion, reaction};
use crate::balance::{self, Options, Status};
use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::elements;
use crate::base::number::Q;
use crate::host::{Host, SiteLookup};
use crate::notation::{Entity, Reaction, Species, Style, render_reaction, render_species};
use structure::radius;

/// Where the dopant goes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum DopantSite {
    /// The cation sublattice with this index.
    Lattice(usize),
    Interstitial,
}

/// What compensates the dopant's effective charge.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum Compensation {
    /// Isovalent: nothing to compensate.
    None,
    AnionVacancy(usize),
    CationVacancy(usize),
    /// A host cation on an interstitial site.
    CationInterstitial(usize),
    AnionInterstitial(usize),
    /// The dopant itself on a second site.
    SelfCompensation(DopantSite),
    /// Electrons, the anion leaving as gas.
    Electrons,
    /// Holes, the anion gas taken up.
    Holes,
}

impl Compensation {
    /// A short family name.
    pub fn family(self) -> &'static str {
        match self {
            Compensation::None => "isovalent",
            Compensation::AnionVacancy(_) => "anion vacancy",
            Compensation::CationVacancy(_) => "cation vacancy",
            Compensation::CationInterstitial(_) => "host cation interstitial",
            Compensation::AnionInterstitial(_) => "anion interstitial",
            Compensation::SelfCompensation(_) => "self-compensation",
            Compensation::Electrons => "electrons",
            Compensation::Holes => "holes",
        }
    }

    /// When the family usually dominates (common practice).
    pub fn conditions(self) -> &'static str {
        match self {
            Compensation::None => {
                "isovalent: no compensation needed; solubility is set by the size match"
            }
            Compensation::AnionVacancy(_) => {
                "ionic compensation of an acceptor: usually dominant over a wide pO2 range and at high dopant levels, above all where the anion sublattice is open (fluorite, perovskite); independent of pO2"
            }
            Compensation::CationVacancy(_) => {
                "ionic compensation of a donor: favoured under oxidizing conditions and at high donor levels; cation vacancies equilibrate slowly, so they are often frozen in"
            }
            Compensation::CationInterstitial(_) => {
                "ionic compensation by a highly charged host interstitial: seldom dominant in close-packed oxides"
            }
            Compensation::AnionInterstitial(_) => {
                "ionic compensation of a donor by anion interstitials: found in open fluorite-related or layered structures under oxidizing conditions"
            }
            Compensation::SelfCompensation(_) => {
                "the dopant compensates itself on two sites (amphoteric): set by the host's cation ratio and the size fit on each site rather than by pO2"
            }
            Compensation::Electrons => {
                "electronic compensation of a donor: dominates under reducing conditions and at low donor levels (n-type)"
            }
            Compensation::Holes => {
                "electronic compensation of an acceptor: needs oxidizing conditions and an oxidizable host cation; dominates at low acceptor levels (p-type)"
            }
        }
    }
}

/// Gas exchange a mechanism needs.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum Gas {
    None,
    Releases,
    TakesUp,
}

/// Dopant and host radius at one site.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct SizeMatch {
    pub dopant: Radius,
    pub host: Radius,
    /// (r_dopant − r_host) / r_host.
    pub mismatch: f64,
}

/// One balanced incorporation mechanism.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Mechanism {
    /// 1 is the best guess.
    pub rank: usize,
    pub site: DopantSite,
    pub compensation: Compensation,
    /// The compensating species as text (`V_O••`, `e′ + O2(g) released`).
    pub compensating: String,
    /// The compensating species itself (none for isovalent).
    pub compensating_species: Option<Species>,
    /// Conventional form (gases fractional).
    pub reaction: Reaction,
    /// Smallest integers.
    pub integer: Reaction,
    /// Size match at the dopant's site (none for an interstitial).
    pub size: Option<SizeMatch>,
    /// Size match at the second site (self-compensation).
    pub second_size: Option<SizeMatch>,
    /// Effective charge of the dopant on its site.
    pub effective_charge: i64,
    pub gas: Gas,
    /// Lower is more likely.
    pub score: f64,
    pub notes: Vec<String>,
}

/// Options of a `dope` run.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
#[non_exhaustive]
pub struct DopeOptions {
    /// Only this site.
    pub site: Option<DopantSite>,
    /// Coordination overrides: (sublattice, CN).
    pub coordination: Vec<(usize, u8)>,
}

/// Everything `dope` found.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Report {
    pub structure: Structure,
    pub mechanisms: Vec<Mechanism>,
}

/// The statement that goes with every ranking.
pub const CAVEAT: &str = "the ranking weighs Shannon-radius mismatch, charge mismatch, the cost of the compensating defect and gas exchange with fixed rough weights: it is a guide, not a prediction; which mechanism dominates depends on pO2, temperature, dopant level and kinetics";

/// Host cations that take electrons easily (n-type oxides), by element and
/// formal charge. Source: common practice.
const REDUCIBLE: &[(&str, i64)] = &[
    ("Ti", 4),
    ("V", 5),
    ("Nb", 5),
    ("Ta", 5),
    ("Mo", 6),
    ("W", 6),
    ("Ce", 4),
    ("Pr", 4),
    ("Tb", 4),
    ("Sn", 4),
    ("Zn", 2),
    ("In", 3),
    ("Cd", 2),
    ("Ga", 3),
    ("Fe", 3),
    ("Mn", 4),
    ("Cu", 2),
];

/// Host cations that give up electrons easily (p-type oxides). Source:
/// common practice.
const OXIDIZABLE: &[(&str, i64)] = &[
    ("Ni", 2),
    ("Co", 2),
    ("Mn", 2),
    ("Mn", 3),
    ("Fe", 2),
    ("Cu", 1),
    ("Cr", 3),
    ("Co", 3),
    ("Pr", 3),
    ("Tb", 3),
    ("Ce", 3),
    ("U", 4),
    ("Ag", 1),
];

/// Reads a `--site` value: `i` for interstitial, or a cation site (`Zr`, `Fe:A`).
pub fn parse_site(text: &str, host: &Host) -> Result<DopantSite, Box<Diagnostic>> {
    let t = text.trim();
    let bad = |message: String| {
        Box::new(
            Diagnostic::new(Code::Dopant, 0..text.len(), message)
                .with_help(format!(
                    "name a cation site of {} (e.g. `{}`) or `i` for an interstitial",
                    host.formula_text,
                    host.sublattices
                        .iter()
                        .find(|s| s.charge > Q::from_integer(0))
                        .map_or("i".into(), |s| s.name())
                ))
                .locate(1, text),
        )
    };
    if t == "i" {
        return Ok(DopantSite::Interstitial);
    }
    let (symbol_text, label) = match t.split_once(':') {
        Some((s, l)) => (s, Some(l)),
        None => (t, None),
    };
    let Some(element) = elements::by_symbol(symbol_text) else {
        return Err(bad(format!("`{t}` is not a site")));
    };
    match host.lookup(element.z, label) {
        SiteLookup::Found(i) if host.sublattices[i].charge > Q::from_integer(0) => {
            Ok(DopantSite::Lattice(i))
        }
        SiteLookup::Found(_) => Err(bad(format!("{t} is not a cation site"))),
        SiteLookup::NeedsLabel => Err(bad(format!(
            "{} has several sublattices in {}; name one with its label",
            element.symbol, host.formula_text
        ))),
        SiteLookup::Missing => Err(bad(format!("{} has no {t} site", host.formula_text))),
    }
}

/// The role of a species in a draft mechanism, for judging the balance.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Role {
    /// The dopant compound: must be consumed.
    Source,
    /// The dopant on its site: must be produced.
    Dopant,
    /// Host lattice species and co-reactant compounds: any side, or absent.
    Lattice,
    /// The compensating species: must appear on the side it was put on.
    Compensation,
}

/// The two sides of a mechanism before balancing, each species with its role.
type Draft = (Vec<(Entity, Role)>, Vec<(Entity, Role)>);

struct Generator<'a> {
    host: &'a Host,
    dopant: &'a Dopant,
    build: Builder<'a>,
    cations: Vec<usize>,
    anions: Vec<usize>,
    anion: usize,
    structure: Structure,
}

/// Finds, balances and ranks every incorporation mechanism.
pub fn mechanisms(
    host: &Host,
    dopant: &Dopant,
    options: &DopeOptions,
) -> Result<Report, Box<Diagnostic>> {
    let zero = Q::from_integer(0);
    let integer = |i: &usize| host.sublattices[*i].charge.is_integer();
    let cations: Vec<usize> = (0..host.sublattices.len())
        .filter(|&i| host.sublattices[i].charge > zero)
        .filter(integer)
        .collect();
    let anions: Vec<usize> = (0..host.sublattices.len())
        .filter(|&i| host.sublattices[i].charge < zero)
        .filter(integer)
        .collect();
    let unsuitable = |message: String| {
        Box::new(
            Diagnostic::new(Code::HostUnsuitable, 0..0, message).with_help(
                "dopant mechanisms need cation and anion sublattices with integer formal charges; state them with `sites`",
            ),
        )
    };
    if !crate::balance::build::has_sites(host) {
        return Err(unsuitable(format!(
            "{} has a sublattice with no sites",
            host.formula_text
        )));
    }
    let Some(anion) = main_anion(host) else {
        return Err(unsuitable(format!(
            "{} has no anion sublattice",
            host.formula_text
        )));
    };
    if cations.is_empty() {
        return Err(unsuitable(format!(
            "{} has no cation sublattice with an integer charge",
            host.formula_text
        )));
    }
    let generator = Generator {
        host,
        dopant,
        build: Builder::new(host, &[dopant.element]),
        cations,
        anions,
        anion,
        structure: structure::infer(host, &options.coordination),
    };
    let mut found: Vec<Mechanism> = Vec::new();
    let mut seen: Vec<Vec<String>> = Vec::new();
    let sites: Vec<DopantSite> = generator
        .cations
        .iter()
        .map(|&i| DopantSite::Lattice(i))
        .chain(std::iter::once(DopantSite::Interstitial))
        .filter(|s| options.site.is_none_or(|wanted| wanted == *s))
        .filter(|s| !generator.is_host_ion(*s))
        .collect();
    for site in sites {
        for compensation in generator.families(site) {
            let Some(mechanism) = generator.mechanism(site, compensation) else {
                continue;
            };
            let key = signature(&mechanism.reaction);
            match seen.iter().position(|k| *k == key) {
                Some(i) if found[i].score <= mechanism.score => {}
                Some(i) => found[i] = mechanism,
                None => {
                    seen.push(key);
                    found.push(mechanism);
                }
            }
        }
    }
    found.sort_by(|a, b| a.score.total_cmp(&b.score));
    for (i, m) in found.iter_mut().enumerate() {
        m.rank = i + 1;
    }
    Ok(Report {
        structure: generator.structure,
        mechanisms: found,
    })
}

/// A reaction's terms as sorted text, to spot the same mechanism reached twice.
fn signature(reaction: &Reaction) -> Vec<String> {
    let side = |terms: &[crate::notation::Term], tag: &str| -> Vec<String> {
        terms
            .iter()
            .map(|t| format!("{tag}{}", crate::notation::render_term(t, Style::Ascii)))
            .collect()
    };
    let mut all = side(&reaction.left, "L ");
    all.extend(side(&reaction.right, "R "));
    all.sort();
    all
}

impl Generator<'_> {
    /// The dopant is the host's own ion on that site (nothing to dope).
    fn is_host_ion(&self, site: DopantSite) -> bool {
        match site {
            DopantSite::Lattice(i) => {
                let s = &self.host.sublattices[i];
                s.element == self.dopant.element && s.charge == Q::from_integer(self.dopant.charge)
            }
            DopantSite::Interstitial => false,
        }
    }

    fn families(&self, site: DopantSite) -> Vec<Compensation> {
        let mut out = vec![Compensation::None];
        out.extend(self.anions.iter().map(|&a| Compensation::AnionVacancy(a)));
        out.extend(self.cations.iter().map(|&c| Compensation::CationVacancy(c)));
        out.extend(
            self.cations
                .iter()
                .map(|&c| Compensation::CationInterstitial(c)),
        );
        out.extend(
            self.anions
                .iter()
                .map(|&a| Compensation::AnionInterstitial(a)),
        );
        out.extend(
            self.cations
                .iter()
                .map(|&c| DopantSite::Lattice(c))
                .chain(std::iter::once(DopantSite::Interstitial))
                .filter(|s| *s != site && !self.is_host_ion(*s))
                .map(Compensation::SelfCompensation),
        );
        out.push(Compensation::Electrons);
        out.push(Compensation::Holes);
        out
    }

    fn dopant_on(&self, site: DopantSite) -> Option<Species> {
        match site {
            DopantSite::Lattice(i) => {
                self.build
                    .on_site(self.dopant.element, self.dopant.charge, i)
            }
            DopantSite::Interstitial => self
                .build
                .interstitial(self.dopant.element, self.dopant.charge),
        }
    }

    /// The species of one mechanism with their roles; `reference` is the
    /// cation sublattice left without its co-reactant when the dopant is
    /// interstitial (all of them would let the host itself grow freely).
    fn draft(
        &self,
        site: DopantSite,
        compensation: Compensation,
        reference: usize,
    ) -> Option<Draft> {
        let b = &self.build;
        let sp = Entity::Species;
        let mut left = vec![(compound(self.dopant.compound.clone()), Role::Source)];
        let mut right = vec![(sp(self.dopant_on(site)?), Role::Dopant)];
        for &a in &self.anions {
            right.push((sp(b.regular(a)?), Role::Lattice));
        }
        let excluded = match site {
            DopantSite::Lattice(i) => i,
            DopantSite::Interstitial => reference,
        };
        for &c in &self.cations {
            if c != excluded {
                right.push((sp(b.regular(c)?), Role::Lattice));
                left.push((compound(component(self.host, c)?), Role::Lattice));
            }
        }
        let charge = |i: usize| *self.host.sublattices[i].charge.numer();
        let element = |i: usize| self.host.sublattices[i].element;
        match compensation {
            Compensation::None => {}
            Compensation::AnionVacancy(i) | Compensation::CationVacancy(i) => {
                right.push((sp(b.vacancy(i)?), Role::Compensation));
            }
            Compensation::CationInterstitial(i) => {
                right.push((
                    sp(b.interstitial(element(i), charge(i))?),
                    Role::Compensation,
                ));
                if i == excluded {
                    left.push((compound(component(self.host, i)?), Role::Lattice));
                }
            }
            Compensation::AnionInterstitial(i) => {
                right.push((
                    sp(b.interstitial(element(i), charge(i))?),
                    Role::Compensation,
                ));
            }
            Compensation::SelfCompensation(second) => {
                if second == site {
                    return None;
                }
                right.push((sp(self.dopant_on(second)?), Role::Compensation));
            }
            Compensation::Electrons => {
                right.push((sp(b.electron()), Role::Compensation));
                right.push((gas(element(self.anion)), Role::Compensation));
            }
            Compensation::Holes => {
                right.push((sp(b.hole()), Role::Compensation));
                left.push((gas(element(self.anion)), Role::Compensation));
            }
        }
        Some((left, right))
    }

    fn mechanism(&self, site: DopantSite, compensation: Compensation) -> Option<Mechanism> {
        let references: Vec<usize> = match site {
            DopantSite::Lattice(i) => vec![i],
            DopantSite::Interstitial => self.cations.clone(),
        };
        references
            .into_iter()
            .find_map(|reference| self.try_balance(site, compensation, reference))
    }

    fn try_balance(
        &self,
        site: DopantSite,
        compensation: Compensation,
        reference: usize,
    ) -> Option<Mechanism> {
        let (left, right) = self.draft(site, compensation, reference)?;
        let roles: Vec<Role> = left.iter().chain(&right).map(|(_, r)| *r).collect();
        let built = reaction(
            left.into_iter().map(|(e, _)| e).collect(),
            right.into_iter().map(|(e, _)| e).collect(),
        );
        let outcome = balance::balance(&built, Some(self.host), Options::default());
        if outcome.status != Status::Unique {
            return None;
        }
        let balanced = outcome.reactions.into_iter().next()?;
        let zero = Q::from_integer(0);
        let clean = balanced
            .terms
            .iter()
            .zip(&roles)
            .all(|(t, role)| match role {
                Role::Lattice => true,
                _ => t.side == t.written && t.coefficient > zero,
            });
        if !clean {
            return None;
        }
        let expelled: Vec<String> = balanced
            .terms
            .iter()
            .zip(&roles)
            .filter(|(t, role)| {
                **role == Role::Lattice
                    && t.side == balance::Side::Right
                    && t.written == balance::Side::Left
            })
            .filter_map(|(t, _)| built.left.get(t.input).map(|term| term.entity.clone()))
            .filter_map(|e| match e {
                Entity::Compound(c) => Some(crate::notation::render_term(
                    &crate::balance::build::term(Entity::Compound(c)),
                    Style::Unicode,
                )),
                _ => None,
            })
            .collect();
        Some(self.describe(site, compensation, balanced, expelled))
    }

    fn size_at(&self, site: DopantSite, notes: &mut Vec<String>) -> Option<SizeMatch> {
        let DopantSite::Lattice(i) = site else {
            return None;
        };
        let sub = &self.host.sublattices[i];
        let cn = self.structure.cn(i).map_or(6, |s| s.cn);
        let d = radius(self.dopant.element, self.dopant.charge, cn);
        let h = radius(sub.element, *sub.charge.numer(), cn);
        let ion = |z: u8, q: i64| dopant::ion_text(elements::symbol(z), q);
        match (d, h) {
            (Some(d), Some(h)) => {
                for (r, z, q) in [
                    (d, self.dopant.element, self.dopant.charge),
                    (h, sub.element, *sub.charge.numer()),
                ] {
                    if r.cn_used != r.cn {
                        notes.push(format!(
                            "{} has no Shannon radius at CN {}; the CN {} value is used",
                            ion(z, q),
                            r.cn,
                            r.cn_used
                        ));
                    }
                }
                Some(SizeMatch {
                    dopant: d,
                    host: h,
                    mismatch: (d.pm - h.pm) / h.pm,
                })
            }
            (None, _) => {
                notes.push(format!(
                    "no Shannon radius for {}: size not ranked",
                    ion(self.dopant.element, self.dopant.charge)
                ));
                None
            }
            (_, None) => {
                notes.push(format!(
                    "no Shannon radius for {}: size not ranked",
                    ion(sub.element, *sub.charge.numer())
                ));
                None
            }
        }
    }

    /// Score of putting the dopant on `site`: size and charge mismatch.
    fn site_score(&self, site: DopantSite, size: Option<&SizeMatch>) -> f64 {
        let q = match site {
            DopantSite::Lattice(i) => self.dopant.charge - *self.host.sublattices[i].charge.numer(),
            DopantSite::Interstitial => self.dopant.charge,
        };
        let charge = 0.5 * q.unsigned_abs() as f64;
        match (site, size) {
            // Interstitials fit open structures; close-packed ones hardly.
            (DopantSite::Interstitial, _) if self.structure.open_interstitials() => 3.0 + charge,
            (DopantSite::Interstitial, _) => 6.0 + charge,
            (_, Some(s)) => 10.0 * s.mismatch.abs() + charge,
            (_, None) => 2.5 + charge,
        }
    }

    fn host_has(&self, list: &[(&str, i64)]) -> bool {
        self.cations.iter().any(|&i| {
            let s = &self.host.sublattices[i];
            list.iter().any(|(sym, q)| {
                elements::symbol(s.element) == *sym && s.charge == Q::from_integer(*q)
            })
        })
    }

    fn describe(
        &self,
        site: DopantSite,
        compensation: Compensation,
        balanced: balance::Balanced,
        expelled: Vec<String>,
    ) -> Mechanism {
        let mut notes = Vec::new();
        let size = self.size_at(site, &mut notes);
        let mut score = self.site_score(site, size.as_ref());
        let mut second_size = None;
        let gas_name = format!(
            "{}2(g)",
            elements::symbol(self.host.sublattices[self.anion].element)
        );
        let b = &self.build;
        let text =
            |s: Option<Species>| s.map_or_else(String::new, |s| render_species(&s, Style::Unicode));
        let charge_of = |i: usize| *self.host.sublattices[i].charge.numer();
        let species = match compensation {
            Compensation::None => None,
            Compensation::AnionVacancy(i) | Compensation::CationVacancy(i) => b.vacancy(i),
            Compensation::CationInterstitial(i) | Compensation::AnionInterstitial(i) => {
                b.interstitial(self.host.sublattices[i].element, charge_of(i))
            }
            Compensation::SelfCompensation(second) => self.dopant_on(second),
            Compensation::Electrons => Some(b.electron()),
            Compensation::Holes => Some(b.hole()),
        };
        let (compensating, cost, gas) = match compensation {
            Compensation::None => ("none".to_string(), 0.0, Gas::None),
            Compensation::AnionVacancy(i) => {
                let cost = if self.structure.open_anion_sublattice() {
                    0.2
                } else {
                    0.5
                };
                (text(b.vacancy(i)), cost, Gas::None)
            }
            Compensation::CationVacancy(i) => (
                text(b.vacancy(i)),
                0.5 + 0.1 * charge_of(i).unsigned_abs() as f64,
                Gas::None,
            ),
            Compensation::CationInterstitial(i) => (
                text(b.interstitial(self.host.sublattices[i].element, charge_of(i))),
                1.5 + 0.1 * charge_of(i).unsigned_abs() as f64,
                Gas::None,
            ),
            Compensation::AnionInterstitial(i) => {
                let cost = if self.structure.name == "fluorite" {
                    0.6
                } else {
                    1.5
                };
                (
                    text(b.interstitial(self.host.sublattices[i].element, charge_of(i))),
                    cost,
                    Gas::None,
                )
            }
            Compensation::SelfCompensation(second) => {
                let mut second_notes = Vec::new();
                second_size = self.size_at(second, &mut second_notes);
                notes.extend(second_notes);
                (
                    text(self.dopant_on(second)),
                    0.3 + self.site_score(second, second_size.as_ref()),
                    Gas::None,
                )
            }
            Compensation::Electrons => {
                let easy = self.host_has(REDUCIBLE);
                if !easy {
                    notes.push("the host cations are not easily reduced: electrons need strongly reducing conditions".into());
                }
                (
                    format!("e′ + {gas_name} released"),
                    if easy { 0.4 } else { 1.0 },
                    Gas::Releases,
                )
            }
            Compensation::Holes => {
                let easy = self.host_has(OXIDIZABLE);
                if !easy {
                    notes.push("the host cations are not easily oxidized: holes need strongly oxidizing conditions".into());
                }
                (
                    format!("h• + {gas_name} taken up"),
                    if easy { 0.4 } else { 1.0 },
                    Gas::TakesUp,
                )
            }
        };
        score += cost;
        match gas {
            Gas::Releases => notes.push(format!("releases {gas_name}: favoured at low pO2")),
            Gas::TakesUp => notes.push(format!("takes up {gas_name}: favoured at high pO2")),
            Gas::None => {}
        }
        for e in expelled {
            notes.push(format!(
                "sets {e} free (a second phase, or taken up elsewhere)"
            ));
        }
        let effective_charge = match site {
            DopantSite::Lattice(i) => self.dopant.charge - charge_of(i),
            DopantSite::Interstitial => self.dopant.charge,
        };
        Mechanism {
            rank: 0,
            site,
            compensation,
            compensating,
            compensating_species: species,
            reaction: balanced.conventional,
            integer: balanced.reaction,
            size,
            second_size,
            effective_charge,
            gas,
            score,
            notes,
        }
    }
}

/// The dopant compound in Unicode, e.g. `Y₂O₃`.
pub fn compound_text(dopant: &Dopant) -> String {
    crate::notation::render_term(
        &crate::balance::build::term(crate::balance::build::compound(dopant.compound.clone())),
        Style::Unicode,
    )
}

/// `Zr` or `i`: a dopant site as text.
pub fn site_name(host: &Host, site: DopantSite) -> String {
    match site {
        DopantSite::Lattice(i) => host.sublattices.get(i).map_or("?".into(), |s| s.name()),
        DopantSite::Interstitial => "i".into(),
    }
}

/// The compensating species in the chosen style, with the gas it needs.
pub fn compensating_text(host: &Host, m: &Mechanism, style: Style) -> String {
    let Some(species) = &m.compensating_species else {
        return "none".into();
    };
    let text = render_species(species, style);
    let gas = main_anion(host)
        .and_then(|i| host.sublattices.get(i))
        .map_or_else(String::new, |s| {
            format!("{}2(g)", elements::symbol(s.element))
        });
    match m.gas {
        Gas::None => text,
        Gas::Releases => format!("{text} + {gas} released"),
        Gas::TakesUp => format!("{text} + {gas} taken up"),
    }
}

/// The mechanism's reaction as text, conventional or in smallest integers.
pub fn reaction_text(m: &Mechanism, integer: bool, style: Style) -> String {
    render_reaction(if integer { &m.integer } else { &m.reaction }, style)
}

#[cfg(test)]
mod tests;
