//! Kröger–Vink notation: the syntax tree, its parser and its renderers.
//!
//! In: one reaction (or species) as text. Out: a `Reaction` whose every term
//! carries its byte span in the source line, or diagnostics that say where and
//! why the text is not notation. Meaning (does it balance, is the charge
//! plausible) is the checker's business, not the parser's.

#![deny(clippy::arithmetic_side_effects)]

pub mod latex_input;
mod parse;
mod render;

pub use parse::{
    ARROWS, arrow_at, find_arrow, parse_formula, parse_reaction, parse_species_text, quoted,
    takes_text_over,
};
pub use render::{
    Style, escape_html, render_formula, render_reaction, render_reaction_over, render_species,
    render_term,
};

use crate::base::number::{self, Overflow, Q};
use std::ops::Range;

/// Byte range within the source line.
pub type Span = Range<usize>;

/// What sits on a site: atoms, nothing, or a free charge carrier.
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum Occupant {
    /// An element or a group such as `OH`. `escaped` is set for `el:V`, the
    /// spelling that says "vanadium" where a bare `V` would be ambiguous.
    Atoms {
        formula: Formula,
        escaped: bool,
    },
    Vacancy(VacancySpelling),
    Electron,
    Hole,
}

/// How a vacancy was written; only a bare `V` can clash with vanadium.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum VacancySpelling {
    /// `V`
    Bare,
    /// `Vac`
    Word,
    /// `□`
    Box,
}

/// Atoms with exact counts, in the order written (`La0.9Sr0.1MnO3`).
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord, Default)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Formula {
    /// (atomic number, count); an element may appear more than once as written.
    pub atoms: Vec<(u8, Q)>,
}

impl Formula {
    /// Count of one element, summed over every place it is written, or
    /// `Overflow` when the sum leaves the exact range.
    pub fn count(&self, z: u8) -> Result<Q, Overflow> {
        number::sum(self.atoms.iter().filter(|(e, _)| *e == z).map(|(_, n)| *n))
    }

    pub fn contains(&self, z: u8) -> bool {
        self.atoms.iter().any(|(e, _)| *e == z)
    }

    /// A single atom of one element, as most occupants are.
    pub fn single_element(&self) -> Option<u8> {
        match self.atoms.as_slice() {
            [(z, n)] if *n == Q::from_integer(1) => Some(*z),
            _ => None,
        }
    }
}

/// The site subscript of a species.
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum Site {
    /// A regular site, named by the element that occupies it in the perfect
    /// host, with an optional sublattice label (`Fe:A`).
    Lattice {
        element: u8,
        label: Option<Box<str>>,
    },
    /// `i`
    Interstitial,
}

/// Which family of charge marks a species was written with (for style rules).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum MarkStyle {
    /// No mark at all: neutral by convention.
    Unmarked,
    /// `.` `'` `x`
    Ascii,
    /// `*` for dots
    Star,
    /// `•` `′` `×`
    Unicode,
    /// `\bullet` `\prime` `\times`
    Latex,
}

/// A point defect, a regular lattice species or a free carrier.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Species {
    pub occupant: Occupant,
    pub site: Option<Site>,
    /// Effective charge in units of the elementary charge.
    pub charge: i32,
    pub marks: MarkStyle,
    pub span: Span,
}

/// A species without its span and spelling: what it *is*, for comparing,
/// hashing and collecting.
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct SpeciesKey {
    pub occupant: Occupant,
    pub site: Option<Site>,
    pub charge: i32,
}

impl Species {
    /// Whether two species are the same defect, however they were spelled.
    pub fn same_as(&self, other: &Species) -> bool {
        let occupants = match (&self.occupant, &other.occupant) {
            (Occupant::Vacancy(_), Occupant::Vacancy(_)) => true,
            (Occupant::Atoms { formula: a, .. }, Occupant::Atoms { formula: b, .. }) => a == b,
            (a, b) => a == b,
        };
        occupants && self.site == other.site && self.charge == other.charge
    }

    pub fn key(&self) -> SpeciesKey {
        let occupant = match &self.occupant {
            Occupant::Vacancy(_) => Occupant::Vacancy(VacancySpelling::Bare),
            Occupant::Atoms { formula, .. } => Occupant::Atoms {
                formula: formula.clone(),
                escaped: false,
            },
            other => other.clone(),
        };
        SpeciesKey {
            occupant,
            site: self.site.clone(),
            charge: self.charge,
        }
    }
}

/// A cluster of defects written in parentheses or braces, with an optional
/// net charge.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Associate {
    pub parts: Vec<Term>,
    /// The declared net charge; `None` when no mark was written.
    pub charge: Option<i32>,
    pub marks: MarkStyle,
    pub braces: bool,
    pub span: Span,
}

impl Associate {
    /// Sum of the parts' effective charges times their coefficients, or
    /// `Overflow` when it leaves the exact range.
    pub fn parts_charge(&self) -> Result<Q, Overflow> {
        number::sum_checked(self.parts.iter().map(|t| {
            match &t.entity {
                Entity::Species(s) => t
                    .coefficient
                    .checked_mul(Q::from_integer(i64::from(s.charge))),
                _ => Ok(Q::from_integer(0)),
            }
        }))
    }

    /// The net charge: as declared, or the parts' sum when none was written.
    pub fn net_charge(&self) -> Result<Q, Overflow> {
        self.charge.map_or_else(
            || self.parts_charge(),
            |c| Ok(Q::from_integer(i64::from(c))),
        )
    }
}

/// Physical state tag of a compound.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum Phase {
    Gas,
    Solid,
    Liquid,
}

/// A compound or gas outside the host lattice: `Y2O3`, `O2(g)`, `H2O(g)`.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Compound {
    pub formula: Formula,
    pub phase: Option<Phase>,
    pub span: Span,
}

/// What a term stands for.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum Entity {
    Species(Species),
    Associate(Associate),
    Compound(Compound),
    /// The perfect crystal (`nil`, `null`, `0`, `∅`).
    Nil,
}

/// A coefficient and what it multiplies.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Term {
    pub coefficient: Q,
    /// Whether the user wrote the coefficient (the balancer keeps those fixed).
    pub coefficient_written: bool,
    pub entity: Entity,
    pub span: Span,
}

/// How the two sides are joined.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum Arrow {
    /// `->`, `→`
    Forward,
    /// `<=>`, `⇌`
    Equilibrium,
    /// `=`
    Equals,
}

/// A defect reaction: reactants, arrow, products.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Reaction {
    pub left: Vec<Term>,
    pub right: Vec<Term>,
    pub arrow: Arrow,
    pub span: Span,
}

impl Reaction {
    /// Every term with its side: `false` for the left, `true` for the right.
    pub fn terms(&self) -> impl Iterator<Item = (bool, &Term)> {
        self.left
            .iter()
            .map(|t| (false, t))
            .chain(self.right.iter().map(|t| (true, t)))
    }
}
