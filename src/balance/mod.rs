//! The balancer: the user lists the species, Lacuna finds the coefficients.
//!
//! In: a parsed `Reaction` (its coefficients are ignored, or kept where the
//! user wrote them) and the host. Out: a `Balancing` that is *unique* (one
//! balanced reaction, smallest integers), *several* (a basis of independent
//! balanced reactions and what makes the coefficients free) or *none* (which
//! conservation law cannot be met and what kind of species would fix it).
//!
//! The unknowns are the coefficients; each conservation law (mass of one
//! element, charge, the host's site ratio) is one linear equation with
//! integer entries, so the balanced reactions are the integer nullspace of a
//! small matrix (the `matrix` module). Everything is exact: no floating point.

#![deny(clippy::arithmetic_side_effects)]

pub mod build;
pub mod checked;
mod explain;
pub mod hint;
mod matrix;

use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::number::{self, Q};
use crate::host::{Host, SiteLookup};
use crate::notation::{
    Entity, Occupant, Phase, Reaction, Site, Span, Style, Term, render_reaction, render_species,
    render_term,
};
use matrix::{Matrix, TooLarge, nullspace, primitive, rank};
use num_integer::Integer;

/// Which side of the arrow a term is on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub enum Side {
    Left,
    Right,
}

impl Side {
    pub fn as_str(self) -> &'static str {
        match self {
            Side::Left => "left",
            Side::Right => "right",
        }
    }

    fn other(self) -> Side {
        match self {
            Side::Left => Side::Right,
            Side::Right => Side::Left,
        }
    }

    /// Sign of a term's contribution in `right − left`.
    fn sign(self) -> i64 {
        match self {
            Side::Left => -1,
            Side::Right => 1,
        }
    }
}

/// How many balanced reactions the species allow.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum Status {
    Unique,
    Several,
    None,
}

impl Status {
    pub fn as_str(self) -> &'static str {
        match self {
            Status::Unique => "unique",
            Status::Several => "several",
            Status::None => "none",
        }
    }
}

/// What the balancer may change.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
#[non_exhaustive]
pub struct Options {
    /// Keep the coefficients the user wrote (the `balance` command). Off,
    /// every coefficient is unknown (the hint `check` gives).
    pub keep_written: bool,
    /// Explain a failure: name the law and try out species that would fix
    /// it. Costs a dozen more balances; callers that only need the answer
    /// (the `check` hint, `dope`, `native`) leave it off.
    pub explain: bool,
}

/// One input term's coefficient in a balanced reaction.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct TermCoefficient {
    /// Position among the input's terms other than `nil`, left side first.
    pub input: usize,
    /// The term as written, without its coefficient: a byte range of the source.
    pub span: Span,
    /// The side the user wrote it on.
    pub written: Side,
    /// The side it ends up on: the other one when it came out negative.
    pub side: Side,
    /// Never negative; zero when the term takes no part.
    pub coefficient: Q,
    /// The coefficient in the conventional form (gases may be fractional).
    pub conventional: Q,
}

/// One balanced reaction.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Balanced {
    /// Every input term other than `nil`, in input order.
    pub terms: Vec<TermCoefficient>,
    /// Smallest integer coefficients (the user's own where they were kept).
    pub reaction: Reaction,
    /// The conventional form: condensed species in smallest integers, gases
    /// free to be fractional (`½ O2(g)`).
    pub conventional: Reaction,
}

/// The balancer's answer.
#[derive(Debug, Clone)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Balancing {
    pub status: Status,
    /// One reaction (unique), a basis (several) or none.
    pub reactions: Vec<Balanced>,
    /// Why it is not unique, what cannot be met, which species move or drop out.
    pub diagnostics: Vec<Diagnostic>,
}

/// Balances the species of `reaction` against `host` (mass and charge only
/// when there is no host).
pub fn balance(reaction: &Reaction, host: Option<&Host>, options: Options) -> Balancing {
    let mut system = match System::build(reaction, host) {
        Ok(s) => s,
        Err(diagnostics) => return none(diagnostics),
    };
    system.explain = options.explain;
    if system.unknowns.is_empty() {
        return none(vec![
            Diagnostic::new(
                Code::CannotBalance,
                reaction.span.clone(),
                "nothing to balance: the reaction has no species",
            )
            .with_help("list the species on both sides, e.g. `Y2O3 -> Y_Zr' + O_O + V_O..`"),
        ]);
    }
    let fixed: Vec<(usize, Q)> = if options.keep_written {
        system
            .unknowns
            .iter()
            .enumerate()
            .filter(|(_, u)| u.term.coefficient_written)
            .map(|(j, u)| (j, u.term.coefficient))
            .collect()
    } else {
        Vec::new()
    };
    let result = if fixed.is_empty() {
        system.solve_free()
    } else {
        system.solve_fixed(&fixed)
    };
    result.unwrap_or_else(|TooLarge| {
        none(vec![
            Diagnostic::new(
                Code::CannotBalance,
                reaction.span.clone(),
                "the coefficients grow beyond the exact range (about 9.2e18)",
            )
            .with_help("check the formulas for very long decimal counts"),
        ])
    })
}

/// The balanced form of a failing reaction when its species allow exactly
/// one and every species takes part; with fractional gas coefficients when
/// the user wrote a fraction somewhere. (The workbench offers it.)
pub fn balanced_form(reaction: &Reaction, host: Option<&Host>) -> Option<Reaction> {
    let outcome = balance(reaction, host, Options::default());
    if outcome.status != Status::Unique {
        return None;
    }
    let balanced = outcome.reactions.into_iter().next()?;
    if balanced
        .terms
        .iter()
        .any(|t| t.coefficient == Q::from_integer(0))
    {
        return None;
    }
    let fractions = reaction.terms().any(|(_, t)| !t.coefficient.is_integer());
    Some(if fractions {
        balanced.conventional
    } else {
        balanced.reaction
    })
}

/// For `check`: `balanced_form` as Unicode text.
pub fn balanced_text(reaction: &Reaction, host: Option<&Host>) -> Option<String> {
    balanced_form(reaction, host).map(|r| render_reaction(&r, Style::Unicode))
}

fn none(diagnostics: Vec<Diagnostic>) -> Balancing {
    Balancing {
        status: Status::None,
        reactions: Vec::new(),
        diagnostics,
    }
}

/// Mass, charge and sites one unit of a term brings.
#[derive(Debug, Clone, Default)]
struct Content {
    elements: Vec<(u8, Q)>,
    charge: Q,
    /// Sites per host sublattice.
    sites: Vec<Q>,
}

impl Content {
    fn add_element(&mut self, z: u8, n: Q) -> Result<(), number::Overflow> {
        match self.elements.iter_mut().find(|(e, _)| *e == z) {
            Some((_, m)) => *m = number::add(*m, n)?,
            None => self.elements.push((z, n)),
        }
        Ok(())
    }

    fn count(&self, z: u8) -> Q {
        self.elements
            .iter()
            .find(|(e, _)| *e == z)
            .map_or(Q::from_integer(0), |(_, n)| *n)
    }
}

/// One unknown coefficient.
struct Unknown<'r> {
    input: usize,
    side: Side,
    term: &'r Term,
    content: Content,
    gas: bool,
}

/// A conservation law: one row of the matrix, or (sites) several.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Law {
    Element(u8),
    Charge,
    Sites,
}

/// The linear system of one reaction.
struct System<'r> {
    reaction: &'r Reaction,
    host: Option<&'r Host>,
    unknowns: Vec<Unknown<'r>>,
    /// The law behind each matrix row.
    laws: Vec<Law>,
    matrix: Matrix,
    /// Explain a failure (off when trying out additions, which must not recurse).
    explain: bool,
}

/// The span of what a term multiplies (the term without its coefficient).
fn entity_span(term: &Term) -> Span {
    match &term.entity {
        Entity::Species(s) => s.span.clone(),
        Entity::Associate(a) => a.span.clone(),
        Entity::Compound(c) => c.span.clone(),
        Entity::Nil => term.span.clone(),
    }
}

fn content_of(
    entity: &Entity,
    host: Option<&Host>,
    span: &Span,
) -> Result<Content, Box<Diagnostic>> {
    let sublattices = host.map_or(0, |h| h.sublattices.len());
    let mut content = Content {
        sites: vec![Q::from_integer(0); sublattices],
        ..Content::default()
    };
    let overflow = |_| {
        Box::new(Diagnostic::new(
            Code::Number,
            span.clone(),
            "the counts of this term grow beyond the exact range",
        ))
    };
    match entity {
        Entity::Nil => {}
        Entity::Compound(c) => {
            for (z, n) in &c.formula.atoms {
                content.add_element(*z, *n).map_err(overflow)?;
            }
        }
        Entity::Species(s) => {
            if let Occupant::Atoms { formula, .. } = &s.occupant {
                for (z, n) in &formula.atoms {
                    content.add_element(*z, *n).map_err(overflow)?;
                }
            }
            content.charge = Q::from_integer(i64::from(s.charge));
            if let (Some(Site::Lattice { element, label }), Some(host)) = (&s.site, host) {
                match host.lookup(*element, label.as_deref()) {
                    SiteLookup::Found(i) => {
                        if let Some(slot) = content.sites.get_mut(i) {
                            *slot = number::add(*slot, Q::from_integer(1)).map_err(overflow)?;
                        }
                    }
                    SiteLookup::NeedsLabel | SiteLookup::Missing => {
                        let names: Vec<String> = host
                            .sublattices
                            .iter()
                            .map(|x| format!("`{}`", x.name()))
                            .collect();
                        return Err(Box::new(
                            Diagnostic::new(
                                Code::UnknownSite,
                                s.span.clone(),
                                format!(
                                    "{} is not on a site of {}, so its sites cannot be counted",
                                    render_species(s, Style::Unicode),
                                    host.formula_text
                                ),
                            )
                            .with_help(format!(
                                "its sites are {}, and `i` for an interstitial",
                                names.join(", ")
                            )),
                        ));
                    }
                }
            }
        }
        Entity::Associate(a) => {
            for part in &a.parts {
                let inner = content_of(&part.entity, host, span)?;
                for (z, n) in inner.elements {
                    let n = number::mul(n, part.coefficient).map_err(overflow)?;
                    content.add_element(z, n).map_err(overflow)?;
                }
                for (slot, n) in content.sites.iter_mut().zip(inner.sites) {
                    *slot = number::add(*slot, number::mul(n, part.coefficient).map_err(overflow)?)
                        .map_err(overflow)?;
                }
            }
            content.charge = a.net_charge().map_err(overflow)?;
        }
    }
    Ok(content)
}

/// What a term stands for, without spans or spelling: equal for the same
/// species written twice.
#[derive(Debug, PartialEq, Eq)]
enum Identity {
    Species(crate::notation::SpeciesKey),
    Compound(crate::notation::Formula, Option<Phase>),
    Other(String),
}

fn identity(entity: &Entity) -> Identity {
    match entity {
        Entity::Species(s) => Identity::Species(s.key()),
        Entity::Compound(c) => Identity::Compound(c.formula.clone(), c.phase),
        other => Identity::Other(render_term(
            &Term {
                coefficient: Q::from_integer(1),
                coefficient_written: false,
                entity: other.clone(),
                span: 0..0,
            },
            Style::Ascii,
        )),
    }
}

/// Scales a row of fractions to coprime integers with the same ratios.
fn integer_row(row: &[Q]) -> Result<Vec<i64>, TooLarge> {
    let mut lcm: i64 = 1;
    for q in row {
        lcm = lcm.lcm(q.denom());
        if lcm > (1 << 40) {
            return Err(TooLarge);
        }
    }
    let mut out = Vec::with_capacity(row.len());
    for q in row {
        let scaled = number::mul(*q, Q::from_integer(lcm)).map_err(|_| TooLarge)?;
        out.push(*scaled.numer());
    }
    primitive(&mut out);
    Ok(out)
}

impl<'r> System<'r> {
    fn build(reaction: &'r Reaction, host: Option<&'r Host>) -> Result<Self, Vec<Diagnostic>> {
        let mut unknowns = Vec::new();
        let mut diagnostics = Vec::new();
        let sides = reaction
            .left
            .iter()
            .map(|t| (Side::Left, t))
            .chain(reaction.right.iter().map(|t| (Side::Right, t)));
        for (side, term) in sides {
            if term.entity == Entity::Nil {
                continue;
            }
            // A count of the terms read so far: far below usize::MAX.
            let input = unknowns.len().saturating_add(diagnostics.len());
            match content_of(&term.entity, host, &term.span) {
                Ok(content) => {
                    let gas =
                        matches!(&term.entity, Entity::Compound(c) if c.phase == Some(Phase::Gas));
                    unknowns.push(Unknown {
                        input,
                        side,
                        term,
                        content,
                        gas,
                    });
                }
                Err(d) => diagnostics.push(*d),
            }
        }
        // The same species twice would only add the freedom X → X.
        let keys: Vec<Identity> = unknowns.iter().map(|u| identity(&u.term.entity)).collect();
        for (i, u) in unknowns.iter().enumerate() {
            if keys[..i].contains(&keys[i]) {
                let text = render_term(&plain_term(u.term), Style::Unicode);
                diagnostics.push(
                    Diagnostic::new(
                        Code::WrittenTwice,
                        entity_span(u.term),
                        format!("{text} is written twice"),
                    )
                    .with_help("write each species once; the balancer finds its coefficient"),
                );
            }
        }
        if !diagnostics.is_empty() {
            return Err(diagnostics);
        }
        let mut laws = Vec::new();
        let mut rows: Vec<Vec<Q>> = Vec::new();
        // Negation, not multiplication by −1: no gcd work.
        let signed = |u: &Unknown<'_>, q: Q| match u.side {
            Side::Left => q.checked_neg(),
            Side::Right => Ok(q),
        };
        let too_large = |_| {
            vec![
                Diagnostic::new(
                    Code::CannotBalance,
                    reaction.span.clone(),
                    "the counts of this reaction grow beyond the exact range",
                )
                .with_help("use smaller counts; the balancer works exactly and cannot approximate"),
            ]
        };
        let mut seen: Vec<u8> = Vec::new();
        for u in &unknowns {
            for (z, _) in &u.content.elements {
                if !seen.contains(z) {
                    seen.push(*z);
                }
            }
        }
        for z in seen {
            laws.push(Law::Element(z));
            rows.push(
                unknowns
                    .iter()
                    .map(|u| signed(u, u.content.count(z)))
                    .collect::<Result<_, _>>()
                    .map_err(too_large)?,
            );
        }
        laws.push(Law::Charge);
        rows.push(
            unknowns
                .iter()
                .map(|u| signed(u, u.content.charge))
                .collect::<Result<_, _>>()
                .map_err(too_large)?,
        );
        if let Some(host) = host {
            // Net site changes Δ_k must be λ·c_k: c_0·Δ_k − c_k·Δ_0 = 0 for k ≥ 1.
            if let Some(first) = host.sublattices.first() {
                for (k, sub) in host.sublattices.iter().enumerate().skip(1) {
                    let row: Vec<Q> = unknowns
                        .iter()
                        .map(|u| {
                            let s0 = u.content.sites.first().copied().unwrap_or_default();
                            let sk = u.content.sites.get(k).copied().unwrap_or_default();
                            number::mul(first.count, sk)
                                .and_then(|a| number::sub(a, number::mul(sub.count, s0)?))
                                .and_then(|d| signed(u, d))
                        })
                        .collect::<Result<_, _>>()
                        .map_err(too_large)?;
                    laws.push(Law::Sites);
                    rows.push(row);
                }
            }
        }
        let mut integer_rows = Vec::with_capacity(rows.len());
        let mut kept_laws = Vec::with_capacity(rows.len());
        for (row, law) in rows.iter().zip(laws) {
            if row.iter().all(|q| *q == Q::from_integer(0)) {
                continue;
            }
            let row = integer_row(row).map_err(|_| {
                vec![Diagnostic::new(
                    Code::CannotBalance,
                    reaction.span.clone(),
                    "the counts of this reaction grow beyond the exact range",
                )]
            })?;
            integer_rows.push(row);
            kept_laws.push(law);
        }
        let cols = unknowns.len();
        Ok(System {
            reaction,
            host,
            unknowns,
            laws: kept_laws,
            matrix: Matrix::new(integer_rows, cols),
            explain: true,
        })
    }

    fn n(&self) -> usize {
        self.unknowns.len()
    }

    /// Every coefficient unknown.
    fn solve_free(&self) -> Result<Balancing, TooLarge> {
        let basis = nullspace(&self.matrix)?;
        match basis.len() {
            0 if self.explain => Ok(none(self.explain_none()?)),
            0 => Ok(none(Vec::new())),
            1 => {
                let mut v = basis.into_iter().next().unwrap_or_default();
                orient(&mut v);
                let q: Vec<Q> = v.iter().map(|x| Q::from_integer(*x)).collect();
                Ok(self.unique(&q, true))
            }
            k => {
                let circuits = circuits(&self.matrix, k)?;
                let chosen = choose_basis(false, circuits, &basis, k)?;
                Ok(self.several(
                    chosen
                        .iter()
                        .map(|v| v.iter().map(|x| Q::from_integer(*x)).collect())
                        .collect(),
                    None,
                ))
            }
        }
    }

    /// Some coefficients fixed as written: homogenise with a scale column
    /// `t` and rows `den·x_j − num·t = 0`; solutions are those with t = 1.
    fn solve_fixed(&self, fixed: &[(usize, Q)]) -> Result<Balancing, TooLarge> {
        let n = self.n();
        let mut rows: Vec<Vec<i64>> = self
            .matrix
            .rows
            .iter()
            .map(|r| {
                let mut r = r.clone();
                r.push(0);
                r
            })
            .collect();
        let width = n.checked_add(1).ok_or(TooLarge)?;
        for &(j, c) in fixed {
            let mut row = vec![0i64; width];
            row[j] = *c.denom();
            row[n] = c.numer().checked_neg().ok_or(TooLarge)?;
            rows.push(row);
        }
        let augmented = Matrix::new(rows, width);
        let basis = nullspace(&augmented)?;
        let Some(with_scale) = basis.iter().position(|v| v[n] != 0) else {
            return Ok(none(self.conflict(fixed)?));
        };
        let particular = &basis[with_scale];
        let t = particular[n];
        let p: Vec<Q> = particular[..n].iter().map(|x| Q::new(*x, t)).collect();
        // The rest, with t removed: solutions of the homogeneous system in
        // which the fixed coefficients are zero.
        let mut homogeneous = Vec::new();
        for (i, w) in basis.iter().enumerate() {
            if i == with_scale {
                continue;
            }
            let mut h = Vec::with_capacity(n);
            for j in 0..n {
                // Products of two i64 fit in i128; the difference is checked.
                let value = i128::from(w[j])
                    .checked_mul(i128::from(t))
                    .zip(i128::from(particular[j]).checked_mul(i128::from(w[n])))
                    .and_then(|(a, b)| a.checked_sub(b))
                    .ok_or(TooLarge)?;
                // i64::MIN is refused as in `nullspace`: every entry has a negative.
                let value = i64::try_from(value)
                    .ok()
                    .filter(|v| *v != i64::MIN)
                    .ok_or(TooLarge)?;
                h.push(value);
            }
            primitive(&mut h);
            if h.iter().any(|x| *x != 0) {
                homogeneous.push(h);
            }
        }
        if homogeneous.is_empty() {
            return Ok(self.unique(&p, false));
        }
        let mut fixed_rows = self.matrix.rows.clone();
        for &(j, _) in fixed {
            let mut row = vec![0i64; n];
            row[j] = 1;
            fixed_rows.push(row);
        }
        let k = homogeneous.len();
        let sub = Matrix::new(fixed_rows, n);
        let circuits = circuits(&sub, k)?;
        let chosen = choose_basis(true, circuits, &homogeneous, k)?;
        let mut reactions = vec![p];
        reactions.extend(
            chosen
                .iter()
                .map(|v| v.iter().map(|x| Q::from_integer(*x)).collect()),
        );
        Ok(self.several(reactions, Some(fixed)))
    }

    /// One balanced reaction; `scalable` when no coefficient was fixed, so
    /// the conventional form may rescale it.
    fn unique(&self, v: &[Q], scalable: bool) -> Balancing {
        let mut diagnostics = Vec::new();
        for (u, c) in self.unknowns.iter().zip(v) {
            // Rendered only for a message: most coefficients need none.
            let shown = || render_term(&plain_term(u.term), Style::Unicode);
            if *c < Q::from_integer(0) {
                diagnostics.push(
                    Diagnostic::new(
                        Code::OtherSide,
                        entity_span(u.term),
                        format!(
                            "{} would need the coefficient {} on the {} side: it belongs on the {} side",
                            shown(),
                            number::signed(*c),
                            u.side.as_str(),
                            u.side.other().as_str()
                        ),
                    )
                    .with_label(format!("move to the {}", u.side.other().as_str())),
                );
            } else if *c == Q::from_integer(0) {
                diagnostics.push(
                    Diagnostic::new(
                        Code::NoPart,
                        entity_span(u.term),
                        format!("{} takes no part: its coefficient comes out zero", shown()),
                    )
                    .with_help("drop it, or add the species it should pair with"),
                );
            }
        }
        Balancing {
            status: Status::Unique,
            reactions: vec![self.balanced(v, scalable)],
            diagnostics,
        }
    }

    fn several(&self, reactions: Vec<Vec<Q>>, fixed: Option<&[(usize, Q)]>) -> Balancing {
        // With fixed coefficients the list starts with the particular solution.
        let k = reactions.len().saturating_sub(usize::from(fixed.is_some()));
        let rank = rank(&self.matrix).unwrap_or(0);
        let support = |v: &Vec<Q>| -> Vec<usize> {
            (0..v.len())
                .filter(|&j| v[j] != Q::from_integer(0))
                .collect()
        };
        let primary = reactions.first().map(support).unwrap_or_default();
        let mut free: Vec<usize> = Vec::new();
        for v in reactions.iter().skip(1) {
            for j in support(v) {
                if !primary.contains(&j) && !free.contains(&j) {
                    free.push(j);
                }
            }
        }
        if free.is_empty() {
            for v in reactions.iter().skip(1) {
                for j in support(v) {
                    if !free.contains(&j) {
                        free.push(j);
                    }
                }
            }
        }
        free.sort_unstable();
        let names: Vec<String> = free
            .iter()
            .map(|&j| render_term(&plain_term(self.unknowns[j].term), Style::Unicode))
            .collect();
        let message = match fixed {
            None => format!(
                "the coefficients are not determined: {} species, {} independent conservation laws, so {k} independent balanced reactions; every combination of them balances",
                self.n(),
                rank
            ),
            Some(_) => format!(
                "with the coefficients you wrote, {k} more independent reaction{} can be added to the first in any amount",
                if k == 1 { "" } else { "s" }
            ),
        };
        let secondary: Vec<String> = reactions
            .iter()
            .skip(1)
            .map(|v| render_reaction(&self.rebuild(v), Style::Unicode))
            .collect();
        let help = format!(
            "{} make{} it free: with {} the species also balance as {}; fix a coefficient or remove one of them to get one answer",
            names.join(", "),
            if names.len() == 1 { "s" } else { "" },
            if names.len() == 1 { "it" } else { "them" },
            secondary.join("; ")
        );
        let diagnostic =
            Diagnostic::new(Code::SeveralBalanced, self.reaction.span.clone(), message)
                .with_help(help);
        Balancing {
            status: Status::Several,
            reactions: reactions
                .iter()
                .enumerate()
                .map(|(i, v)| self.balanced(v, fixed.is_none() || i > 0))
                .collect(),
            diagnostics: vec![diagnostic],
        }
    }

    /// Builds the reaction for signed coefficients `v`: each term on its
    /// written side when positive, moved across when negative, left out at zero.
    fn rebuild(&self, v: &[Q]) -> Reaction {
        let zero = Q::from_integer(0);
        let mut left = Vec::new();
        let mut right = Vec::new();
        let mut moved_left = Vec::new();
        let mut moved_right = Vec::new();
        for (u, c) in self.unknowns.iter().zip(v) {
            if *c == zero {
                continue;
            }
            let mut term = u.term.clone();
            // Entries come from primitive i64 vectors, never i64::MIN (see
            // `matrix`), so the size always exists.
            term.coefficient = c.checked_abs().unwrap_or(*c);
            term.coefficient_written = true;
            match (u.side, *c > zero) {
                (Side::Left, true) => left.push(term),
                (Side::Right, true) => right.push(term),
                (Side::Left, false) => moved_right.push(term),
                (Side::Right, false) => moved_left.push(term),
            }
        }
        left.extend(moved_left);
        right.extend(moved_right);
        let nil = || Term {
            coefficient: Q::from_integer(1),
            coefficient_written: false,
            entity: Entity::Nil,
            span: 0..0,
        };
        if left.is_empty() {
            left.push(nil());
        }
        if right.is_empty() {
            right.push(nil());
        }
        Reaction {
            left,
            right,
            arrow: self.reaction.arrow,
            span: self.reaction.span.clone(),
        }
    }

    fn balanced(&self, v: &[Q], scalable: bool) -> Balanced {
        let conventional = if scalable {
            conventional_scale(v, &self.unknowns)
        } else {
            v.to_vec()
        };
        Balanced {
            terms: self
                .unknowns
                .iter()
                .zip(v.iter().zip(&conventional))
                .map(|(u, (c, conv))| TermCoefficient {
                    input: u.input,
                    span: entity_span(u.term),
                    written: u.side,
                    side: if *c < Q::from_integer(0) {
                        u.side.other()
                    } else {
                        u.side
                    },
                    // Coefficients come from the i64 nullspace vector made
                    // primitive, so none is i64::MIN; `abs` cannot fail.
                    coefficient: c.checked_abs().unwrap_or(*c),
                    conventional: conv.checked_abs().unwrap_or(*conv),
                })
                .collect(),
            reaction: self.rebuild(v),
            conventional: self.rebuild(&conventional),
        }
    }
}

/// The term with coefficient one, for naming it in messages.
fn plain_term(term: &Term) -> Term {
    let mut t = term.clone();
    t.coefficient = Q::from_integer(1);
    t
}

/// Flips `v` so that most entries are positive (ties: the first non-zero).
fn orient(v: &mut [i64]) {
    let positive = v.iter().filter(|x| **x > 0).count();
    let negative = v.iter().filter(|x| **x < 0).count();
    let first_negative = v.iter().find(|x| **x != 0).is_some_and(|x| *x < 0);
    if negative > positive || (negative == positive && first_negative) {
        for x in v.iter_mut() {
            // Entries come from `nullspace` and `solve_fixed`, which refuse
            // i64::MIN, so the negation is exact (never saturates).
            *x = x.saturating_neg();
        }
    }
}

/// Scales `v` so that the condensed (non-gas) coefficients are coprime
/// integers; gases may then be fractional.
fn conventional_scale(v: &[Q], unknowns: &[Unknown<'_>]) -> Vec<Q> {
    let mut g: i64 = 0;
    for (x, u) in v.iter().zip(unknowns) {
        if !u.gas && x.is_integer() {
            g = g.gcd(x.numer());
        } else if !u.gas {
            return v.to_vec();
        }
    }
    if g <= 1 {
        return v.to_vec();
    }
    // g > 1 divides every condensed coefficient, so the quotients are exact
    // and smaller; a failure cannot happen, and would leave `v` unscaled.
    v.iter()
        .map(|x| x.checked_div(Q::from_integer(g)))
        .collect::<Result<_, _>>()
        .unwrap_or_else(|_| v.to_vec())
}

/// Elementary balanced reactions: null vectors of minimal support, found by
/// forcing k − 1 coefficients to zero in every way and keeping the choices
/// that leave exactly one reaction. Limited to small systems.
fn circuits(m: &Matrix, k: usize) -> Result<Vec<Vec<i64>>, TooLarge> {
    let n = m.cols;
    let zeroed = k.saturating_sub(1);
    if zeroed > n || binomial(n, zeroed) > 4000 {
        return Ok(Vec::new());
    }
    let mut found: Vec<Vec<i64>> = Vec::new();
    let mut combo: Vec<usize> = (0..zeroed).collect();
    loop {
        let keep: Vec<usize> = (0..n).filter(|c| !combo.contains(c)).collect();
        let basis = nullspace(&m.columns(&keep))?;
        if basis.len() == 1 {
            let mut v = vec![0i64; n];
            for (c, x) in keep.iter().zip(&basis[0]) {
                v[*c] = *x;
            }
            orient(&mut v);
            if !found.contains(&v) {
                found.push(v);
            }
        }
        // Next combination in lexicographic order.
        // Indices stay below n and zeroed ≤ n, so the saturating steps
        // below never saturate.
        let mut i = zeroed;
        loop {
            let Some(previous) = i.checked_sub(1) else {
                return Ok(found);
            };
            i = previous;
            if combo[i] < n.saturating_sub(zeroed).saturating_add(i) {
                combo[i] = combo[i].saturating_add(1);
                for j in i.saturating_add(1)..zeroed {
                    combo[j] = combo[j.saturating_sub(1)].saturating_add(1);
                }
                break;
            }
        }
    }
}

fn binomial(n: usize, k: usize) -> usize {
    let mut r: usize = 1;
    for i in 0..k {
        // i < k ≤ n; the divisor is at least 1.
        r = r
            .saturating_mul(n.saturating_sub(i))
            .checked_div(i.saturating_add(1))
            .unwrap_or(usize::MAX);
    }
    r
}

/// Picks k independent reactions: first the simplest one with every species
/// on its written side (the primary mechanism), then the smallest others.
/// `after_particular` is set when a particular solution already leads.
fn choose_basis(
    after_particular: bool,
    circuits: Vec<Vec<i64>>,
    fallback: &[Vec<i64>],
    k: usize,
) -> Result<Vec<Vec<i64>>, TooLarge> {
    let support = |v: &Vec<i64>| v.iter().filter(|x| **x != 0).count();
    let weight = |v: &Vec<i64>| v.iter().map(|x| x.unsigned_abs()).sum::<u64>();
    let consistent = |v: &Vec<i64>| v.iter().all(|x| *x >= 0);
    let mut ordered = circuits;
    ordered.sort_by(|a, b| {
        (support(a), !consistent(a), weight(a), a).cmp(&(support(b), !consistent(b), weight(b), b))
    });
    if !after_particular {
        let primary = ordered.iter().position(consistent).unwrap_or_default();
        if primary < ordered.len() {
            let v = ordered.remove(primary);
            ordered.insert(0, v);
        }
    }
    let mut chosen: Vec<Vec<i64>> = Vec::new();
    for v in ordered.iter().chain(fallback) {
        if chosen.len() == k {
            break;
        }
        let mut trial = chosen.clone();
        trial.push(v.clone());
        let cols = v.len();
        if rank(&Matrix::new(trial.clone(), cols))? == trial.len() {
            chosen = trial;
        }
    }
    Ok(chosen)
}

#[cfg(test)]
mod tests;
