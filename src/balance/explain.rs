//! Explanations for the outcomes that are not a single clean reaction: which
//! conservation law cannot be met and what kind of species would fix it,
//! and why written coefficients conflict.
//!
//! In: the balancer's linear system. Out: diagnostics whose help names the
//! fix (an anion-site species, an electronic defect, O2(g), …), found by
//! dropping one law at a time and balancing what is left.

use super::build::{Builder, gas, term};
use super::matrix::{TooLarge, nullspace};
use super::{Law, Status, System, Unknown, orient};
use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::elements::symbol;
use crate::base::number::{self, Q, signed};
use crate::host::Sublattice;
use crate::notation::{
    Entity, Formula, MarkStyle, Occupant, Site, Species, Style, VacancySpelling, render_reaction,
    render_species, render_term,
};

impl System<'_> {
    /// The written coefficients cannot hold: say so, and give the free answer
    /// when there is one.
    pub(super) fn conflict(&self, fixed: &[(usize, Q)]) -> Result<Vec<Diagnostic>, TooLarge> {
        let written: Vec<String> = fixed
            .iter()
            .map(|&(j, _)| render_term(self.unknowns[j].term, Style::Unicode))
            .collect();
        let mut d = Diagnostic::new(
            Code::WrittenCoefficients,
            self.reaction.span.clone(),
            format!(
                "with the coefficients as written ({}) no choice of the others balances",
                written.join(", ")
            ),
        );
        let free = self.solve_free()?;
        let mut out = Vec::new();
        match free.status {
            Status::Unique => {
                if let Some(b) = free.reactions.first() {
                    d.help = Some(format!(
                        "leave the coefficients out and it balances as {}",
                        render_reaction(&b.reaction, Style::Unicode)
                    ));
                }
            }
            Status::Several => {
                d.help = Some(
                    "leave the coefficients out: the species balance in more than one way".into(),
                );
            }
            Status::None => {
                d.help = Some("the species do not balance with any coefficients either".into());
                out.extend(free.diagnostics);
            }
        }
        out.insert(0, d);
        Ok(out)
    }

    /// Names the law that cannot be met: the one whose removal lets the
    /// species balance, with the kind of species that would fix it, and
    /// the single standard species whose addition balances the reaction.
    pub(super) fn explain_none(&self) -> Result<Vec<Diagnostic>, TooLarge> {
        let mut groups: Vec<Law> = Vec::new();
        for law in &self.laws {
            if !groups.contains(law) {
                groups.push(*law);
            }
        }
        let rows_of = |g: &[Law]| -> Vec<usize> {
            (0..self.laws.len())
                .filter(|&i| g.contains(&self.laws[i]))
                .collect()
        };
        let mut fixes = self.additions(&groups)?;
        fixes.sort_by_key(|f| (f.rank, f.moved));
        let fix_text = |d: &mut Diagnostic, fixes: &mut Vec<Fix>, laws: &[Law]| {
            // Species that carry exactly the failing laws first.
            fixes.sort_by_key(|f| (f.laws != laws, f.rank, f.moved));
            let shown: Vec<String> = fixes
                .iter()
                .take(3)
                .map(|f| format!("adding {} balances it: {}", f.species, f.reaction))
                .collect();
            if !shown.is_empty() {
                let before = d.help.take().unwrap_or_default();
                d.help = Some(format!("{before}; {}", shown.join("; or ")));
            }
        };
        // Each law whose removal lets the species balance is a candidate.
        // Prefer the one a single added species fixes, then the one whose
        // balance uses every species on its written side, then charge and
        // sites over mass: a mark or a forgotten site partner is the usual
        // slip, an element with no source is rarer.
        // (ranking key, law, diagnostic); the smallest key wins.
        type Candidate = ((bool, bool, bool, u8), Law, Diagnostic);
        let mut best: Option<Candidate> = None;
        for law in &groups {
            let basis = nullspace(&self.matrix.without_rows(&rows_of(&[*law])))?;
            if basis.is_empty() {
                continue;
            }
            let mut v = basis[0].clone();
            orient(&mut v);
            let unique = basis.len() == 1;
            let full = v.iter().all(|x| *x != 0);
            let consistent = v.iter().all(|x| *x > 0);
            let fixed = fixes.iter().any(|f| f.laws == [*law]);
            let key = (!fixed, !(full && consistent), !full, law_order(*law));
            if best.as_ref().is_none_or(|(k, _, _)| key < *k) {
                best = Some((
                    key,
                    *law,
                    self.law_diagnostic(*law, unique.then_some(v.as_slice())),
                ));
            }
        }
        if let Some((_, law, mut d)) = best {
            fix_text(&mut d, &mut fixes, &[law]);
            return Ok(vec![d]);
        }
        // No single law is at fault. The likeliest forgotten species names the laws.
        if let Some(laws) = fixes.first().map(|f| f.laws.clone()) {
            let names: Vec<String> = laws.iter().map(|l| self.law_name(*l)).collect();
            let mut d = Diagnostic::new(
                Code::CannotBalance,
                self.reaction.span.clone(),
                format!(
                    "cannot balance: {} cannot {} be met with these species",
                    names.join(" and "),
                    if names.len() == 2 { "both" } else { "all" }
                ),
            );
            d.help = Some(
                laws.iter()
                    .map(|l| self.law_fix(*l, None))
                    .collect::<Vec<_>>()
                    .join("; and "),
            );
            fix_text(&mut d, &mut fixes, &laws);
            return Ok(vec![d]);
        }
        let mut best_pair: Option<((bool, bool, u8), Law, Law)> = None;
        for (i, a) in groups.iter().enumerate() {
            for b in groups[i..].iter().skip(1) {
                let basis = nullspace(&self.matrix.without_rows(&rows_of(&[*a, *b])))?;
                let Some(v) = basis.first() else { continue };
                let mut v = v.clone();
                orient(&mut v);
                let full = v.iter().all(|x| *x != 0);
                let consistent = v.iter().all(|x| *x > 0);
                // Orders are at most 2, so the sum cannot saturate.
                let key = (
                    !(full && consistent),
                    !full,
                    law_order(*a).saturating_add(law_order(*b)),
                );
                if best_pair.as_ref().is_none_or(|(k, _, _)| key < *k) {
                    best_pair = Some((key, *a, *b));
                }
            }
        }
        if let Some((_, a, b)) = best_pair {
            let d = Diagnostic::new(
                Code::CannotBalance,
                self.reaction.span.clone(),
                format!(
                    "cannot balance: {} and {} cannot both be met with these species",
                    self.law_name(a),
                    self.law_name(b)
                ),
            )
            .with_help(format!(
                "{}; and {}",
                self.law_fix(a, None),
                self.law_fix(b, None)
            ));
            return Ok(vec![d]);
        }
        Ok(vec![
            Diagnostic::new(
                Code::CannotBalance,
                self.reaction.span.clone(),
                "cannot balance: these species cannot conserve mass, charge and sites together",
            )
            .with_help("more species are needed: each element needs a source and a sink, charge needs a compensating defect, and the host's sites need their partners (e.g. `O_O×`)"),
        ])
    }

    /// Standard species of the host (regular and vacant sites, host-ion
    /// interstitials, e′, h•, the anion gas) whose addition alone makes the
    /// reaction balance in exactly one way with every written species on
    /// its side: (species, balanced reaction, laws it carries).
    fn additions(&self, groups: &[Law]) -> Result<Vec<Fix>, TooLarge> {
        let mut candidates: Vec<(Entity, u8)> = Vec::new();
        if let Some(host) = self.host {
            let present: Vec<u8> = self
                .unknowns
                .iter()
                .flat_map(|u| u.content.elements.iter().map(|(z, _)| *z))
                .collect();
            let b = Builder::new(host, &present);
            for i in 0..host.sublattices.len() {
                let sub = &host.sublattices[i];
                candidates.extend(b.regular(i).map(|s| (Entity::Species(s), 0)));
                candidates.extend(b.vacancy(i).map(|s| (Entity::Species(s), 3)));
                if sub.charge.is_integer() {
                    candidates.extend(
                        b.interstitial(sub.element, *sub.charge.numer())
                            .map(|s| (Entity::Species(s), 4)),
                    );
                }
                if sub.charge < Q::from_integer(0) {
                    candidates.push((gas(sub.element), 1));
                }
            }
            candidates.push((Entity::Species(b.electron()), 2));
            candidates.push((Entity::Species(b.hole()), 2));
        }
        let written: Vec<String> = self
            .unknowns
            .iter()
            .map(|u| render_term(&super::plain_term(u.term), Style::Unicode))
            .collect();
        let mut out = Vec::new();
        for (candidate, rank) in candidates {
            let added = term(candidate);
            let text = render_term(&added, Style::Unicode);
            if written.contains(&text) {
                continue;
            }
            let mut trial = self.reaction.clone();
            trial.right.retain(|t| t.entity != Entity::Nil);
            trial.right.push(added.clone());
            for t in trial.left.iter_mut().chain(trial.right.iter_mut()) {
                t.coefficient_written = false;
            }
            let Ok(mut system) = System::build(&trial, self.host) else {
                continue;
            };
            system.explain = false;
            let outcome = system.solve_free()?;
            if outcome.status != Status::Unique {
                continue;
            }
            let Some(balanced) = outcome.reactions.first() else {
                continue;
            };
            let n = balanced.terms.len();
            let clean = balanced.terms.iter().enumerate().all(|(i, t)| {
                t.coefficient > Q::from_integer(0)
                    && (Some(i) == n.checked_sub(1) || t.side == t.written)
            });
            if !clean {
                continue;
            }
            let moved = balanced.terms.last().is_some_and(|t| t.side != t.written);
            let content = super::content_of(&added.entity, self.host, &(0..0)).ok();
            let laws: Vec<Law> = groups
                .iter()
                .copied()
                .filter(|law| {
                    content.as_ref().is_some_and(|c| match law {
                        Law::Element(z) => c.count(*z) != Q::from_integer(0),
                        Law::Charge => c.charge != Q::from_integer(0),
                        Law::Sites => c.sites.iter().any(|s| *s != Q::from_integer(0)),
                    })
                })
                .collect();
            out.push(Fix {
                species: text,
                reaction: render_reaction(&balanced.conventional, Style::Unicode),
                laws,
                rank,
                moved,
            });
        }
        Ok(out)
    }

    fn law_name(&self, law: Law) -> String {
        match law {
            Law::Element(z) => format!("the mass of {}", symbol(z)),
            Law::Charge => "charge".into(),
            Law::Sites => match self.host {
                Some(h) => format!("the {} site ratio {}", h.formula_text, h.ratio_text()),
                None => "the site ratio".into(),
            },
        }
    }

    fn law_diagnostic(&self, law: Law, v: Option<&[i64]>) -> Diagnostic {
        Diagnostic::new(
            Code::CannotBalance,
            self.reaction.span.clone(),
            format!(
                "cannot balance: no choice of coefficients conserves {}",
                self.law_name(law)
            ),
        )
        .with_help(self.law_fix(law, v))
    }

    /// What kind of species would fix a law, using the balance that holds
    /// without it (when that balance is unique) to say which side needs what.
    fn law_fix(&self, law: Law, v: Option<&[i64]>) -> String {
        // `None` also when a sum leaves the exact range: the help is then
        // the general one, never a wrapped number.
        let excess = |value: &dyn Fn(&Unknown<'_>) -> Q| -> Option<Q> {
            let v = v?;
            let mut total = Q::from_integer(0);
            for (u, x) in self.unknowns.iter().zip(v) {
                let x = Q::from_integer(u.side.sign().checked_mul(*x)?);
                total = number::add(total, number::mul(x, value(u)).ok()?).ok()?;
            }
            Some(total)
        };
        match law {
            Law::Element(z) => {
                let kinds = self.carriers(z);
                match excess(&|u| u.content.count(z)) {
                    Some(d) if d > Q::from_integer(0) => format!(
                        "balanced in everything else, the right side has more {}: add a species that brings {} on the left or takes it away on the right, e.g. {kinds}",
                        symbol(z),
                        symbol(z)
                    ),
                    Some(d) if d < Q::from_integer(0) => format!(
                        "balanced in everything else, the left side has more {}: add a species that takes {} up on the right or brings it on the left, e.g. {kinds}",
                        symbol(z),
                        symbol(z)
                    ),
                    _ => format!("add a species that carries {}, e.g. {kinds}", symbol(z)),
                }
            }
            Law::Charge => match excess(&|u| u.content.charge) {
                Some(d) if d > Q::from_integer(0) => format!(
                    "balanced in everything else, the right side is {} more positive: add an electronic defect (e′ on the right, or h• on the left) or a negatively charged defect",
                    number::to_plain(d)
                ),
                Some(d) if d < Q::from_integer(0) => format!(
                    "balanced in everything else, the right side is {} more negative: add an electronic defect (h• on the right, or e′ on the left) or a positively charged defect",
                    d.checked_abs()
                        .map_or_else(|_| "(beyond the exact range)".to_string(), number::to_plain)
                ),
                _ => "add an electronic defect (e′ or h•) or a charged defect".into(),
            },
            Law::Sites => self.site_fix(v),
        }
    }

    /// Examples of species that carry element `z` in this host.
    fn carriers(&self, z: u8) -> String {
        let s = symbol(z);
        let Some(host) = self.host else {
            return format!("a compound that contains {s}");
        };
        let on_site: Vec<&Sublattice> =
            host.sublattices.iter().filter(|x| x.element == z).collect();
        match on_site.first() {
            Some(sub) if sub.charge < Q::from_integer(0) => format!(
                "{s}2(g) (exchange with the gas), an {s}-site species such as {} or {}",
                site_species_text(sub, false),
                site_species_text(sub, true)
            ),
            Some(sub) => format!(
                "a compound of {s}, {} or {s}_i",
                site_species_text(sub, false)
            ),
            None => format!("a compound that contains {s}"),
        }
    }

    fn site_fix(&self, v: Option<&[i64]>) -> String {
        let Some(host) = self.host else {
            return "add species on the host's regular sites".into();
        };
        let kind_examples = |sub: &Sublattice| {
            let kind = if sub.charge < Q::from_integer(0) {
                "an anion-site species"
            } else {
                "a cation-site species"
            };
            format!(
                "{kind} such as {} or {}",
                site_species_text(sub, false),
                site_species_text(sub, true)
            )
        };
        let counted = host
            .sublattices
            .iter()
            .all(|s| s.count > Q::from_integer(0));
        // Net site changes and their ratio to the host's counts; `None` when
        // a sum leaves the exact range.
        let changes = || -> Option<(Vec<Q>, Vec<Q>)> {
            let v = v?;
            let mut delta = vec![Q::from_integer(0); host.sublattices.len()];
            for (u, x) in self.unknowns.iter().zip(v) {
                let x = Q::from_integer(u.side.sign().checked_mul(*x)?);
                for (d, s) in delta.iter_mut().zip(&u.content.sites) {
                    *d = number::add(*d, number::mul(x, *s).ok()?).ok()?;
                }
            }
            let lambda = delta
                .iter()
                .zip(&host.sublattices)
                .map(|(d, s)| d.checked_div(s.count).ok())
                .collect::<Option<Vec<Q>>>()?;
            Some((delta, lambda))
        };
        let (Some((delta, lambda)), true) = (counted.then(changes).flatten(), counted) else {
            let all: Vec<String> = host.sublattices.iter().map(kind_examples).collect();
            return format!(
                "regular sites are created only in the ratio {}: add {}",
                host.ratio_text(),
                all.join(", or ")
            );
        };
        let most = lambda.iter().copied().max().unwrap_or_default();
        let changes: Vec<String> = host
            .sublattices
            .iter()
            .zip(&delta)
            .map(|(s, d)| format!("{} {}", s.name(), signed(*d)))
            .collect();
        let short: Vec<String> = host
            .sublattices
            .iter()
            .zip(&lambda)
            .filter(|(_, l)| **l < most)
            .map(|(s, l)| {
                format!(
                    "{} {} more ({})",
                    s.name(),
                    number::sub(most, *l)
                        .and_then(|x| number::mul(x, s.count))
                        .map_or_else(|_| "(beyond the exact range)".to_string(), number::to_plain),
                    kind_examples(s)
                )
            })
            .collect();
        format!(
            "balanced in everything else, the sites change by {} but the ratio is {}: the right side needs {}",
            changes.join(", "),
            host.ratio_text(),
            short.join("; ")
        )
    }
}

/// A species whose addition balances the reaction.
struct Fix {
    /// The added species as text.
    species: String,
    /// The balanced reaction with it.
    reaction: String,
    /// The laws the species carries (of those in the reaction).
    laws: Vec<Law>,
    /// How often such a species is the one forgotten: regular lattice
    /// species and the gas first, then carriers, vacancies, interstitials.
    rank: u8,
    /// It had to go to the left.
    moved: bool,
}

/// Charge first, then sites, then mass (see `explain_none`).
fn law_order(law: Law) -> u8 {
    match law {
        Law::Charge => 0,
        Law::Sites => 1,
        Law::Element(_) => 2,
    }
}

/// `O_O×` (regular) or `V_O••` (fully ionised vacancy) for a sublattice, as text.
fn site_species_text(sub: &Sublattice, vacancy: bool) -> String {
    let charge = if vacancy {
        let Ok(charge) = sub.charge.checked_neg() else {
            return format!("V_{}", sub.name());
        };
        charge
    } else {
        Q::from_integer(0)
    };
    if !charge.is_integer() {
        return format!("V_{}", sub.name());
    }
    let species = Species {
        occupant: if vacancy {
            Occupant::Vacancy(VacancySpelling::Bare)
        } else {
            Occupant::Atoms {
                formula: Formula {
                    atoms: vec![(sub.element, Q::from_integer(1))],
                },
                escaped: false,
            }
        },
        site: Some(Site::Lattice {
            element: sub.element,
            label: sub.label.clone(),
        }),
        charge: i32::try_from(*charge.numer()).unwrap_or(0),
        marks: MarkStyle::Unicode,
        span: 0..0,
    };
    render_species(&species, Style::Unicode)
}
