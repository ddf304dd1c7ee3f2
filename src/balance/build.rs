//! Builds species, compounds and reactions in code, for the commands that
//! generate reactions (`dope`, `native`) rather than read them.
//!
//! In: a host and what sits where (an element with its real charge on a
//! sublattice, a vacancy, an interstitial, a carrier, a compound). Out:
//! notation AST values with empty spans, whose effective charges follow from
//! the host's formal charges. A vacancy is spelled `Vac` and vanadium `el:V`
//! whenever vanadium is around, so that the printed text reads back the same.

use crate::base::number::Q;
use crate::host::{Host, Sublattice};
use crate::notation::{
    Arrow, Compound, Entity, Formula, MarkStyle, Occupant, Phase, Reaction, Site, Species, Term,
    VacancySpelling,
};
use num_integer::Integer;

const VANADIUM: u8 = 23;

/// Makes species for one host (and the extra elements that will appear).
#[derive(Debug, Clone)]
pub struct Builder<'h> {
    pub host: &'h Host,
    /// Vanadium is present: write vacancies as `Vac` and vanadium as `el:V`.
    vanadium: bool,
}

impl<'h> Builder<'h> {
    /// `extra` lists elements that will appear besides the host's (a dopant).
    pub fn new(host: &'h Host, extra: &[u8]) -> Self {
        Builder {
            host,
            vanadium: host.contains_element(VANADIUM) || extra.contains(&VANADIUM),
        }
    }

    fn occupant(&self, z: u8) -> Occupant {
        Occupant::Atoms {
            formula: Formula {
                atoms: vec![(z, Q::from_integer(1))],
            },
            escaped: self.vanadium && z == VANADIUM,
        }
    }

    fn site(sub: &Sublattice) -> Site {
        Site::Lattice {
            element: sub.element,
            label: sub.label.clone(),
        }
    }

    fn species(occupant: Occupant, site: Option<Site>, charge: i32) -> Species {
        Species {
            occupant,
            site,
            charge,
            marks: MarkStyle::Unicode,
            span: 0..0,
        }
    }

    fn sublattice(&self, index: usize) -> Option<&'h Sublattice> {
        self.host.sublattices.get(index)
    }

    /// Element `z` with real charge `real` on sublattice `index`; `None`
    /// when the effective charge is not an integer (or not in range).
    pub fn on_site(&self, z: u8, real: i64, index: usize) -> Option<Species> {
        let sub = self.sublattice(index)?;
        let effective = Q::from_integer(real).checked_sub(sub.charge).ok()?;
        let charge = integer_charge(effective)?;
        Some(Self::species(
            self.occupant(z),
            Some(Self::site(sub)),
            charge,
        ))
    }

    /// The host's own ion on its own site: `O_O×`.
    pub fn regular(&self, index: usize) -> Option<Species> {
        let sub = self.sublattice(index)?;
        Some(Self::species(
            self.occupant(sub.element),
            Some(Self::site(sub)),
            0,
        ))
    }

    /// The fully ionised vacancy: `V_O••`, `V_Zr′′′′`.
    pub fn vacancy(&self, index: usize) -> Option<Species> {
        let sub = self.sublattice(index)?;
        let charge = integer_charge(sub.charge.checked_neg().ok()?)?;
        let spelling = if self.vanadium {
            VacancySpelling::Word
        } else {
            VacancySpelling::Bare
        };
        Some(Self::species(
            Occupant::Vacancy(spelling),
            Some(Self::site(sub)),
            charge,
        ))
    }

    /// Element `z` with real charge `real` on an interstitial site.
    pub fn interstitial(&self, z: u8, real: i64) -> Option<Species> {
        let charge = i32::try_from(real).ok()?;
        Some(Self::species(
            self.occupant(z),
            Some(Site::Interstitial),
            charge,
        ))
    }

    pub fn electron(&self) -> Species {
        Self::species(Occupant::Electron, None, -1)
    }

    pub fn hole(&self) -> Species {
        Self::species(Occupant::Hole, None, 1)
    }
}

fn integer_charge(q: Q) -> Option<i32> {
    if q.is_integer() {
        i32::try_from(*q.numer()).ok()
    } else {
        None
    }
}

/// The neutral binary compound of a cation and an anion at these charges:
/// `(Y, +3, O, −2)` is Y2O3. `None` unless the cation is positive and the
/// anion negative.
pub fn binary(cation: u8, cation_charge: i64, anion: u8, anion_charge: i64) -> Option<Formula> {
    if cation_charge <= 0 || anion_charge >= 0 {
        return None;
    }
    let g = cation_charge.gcd(&anion_charge);
    let cations = anion_charge.checked_neg()?.checked_div(g)?;
    let anions = cation_charge.checked_div(g)?;
    Some(Formula {
        atoms: vec![
            (cation, Q::from_integer(cations)),
            (anion, Q::from_integer(anions)),
        ],
    })
}

/// Whether every sublattice has sites (a formula such as `Zr0O0` with
/// explicit charges gives empty ones, which nothing can be balanced against).
pub fn has_sites(host: &Host) -> bool {
    !host.sublattices.is_empty()
        && host
            .sublattices
            .iter()
            .all(|s| s.count > Q::from_integer(0))
}

/// The first anion sublattice of a host (the one dopant compounds and
/// co-reactant oxides are written with).
pub fn main_anion(host: &Host) -> Option<usize> {
    host.sublattices
        .iter()
        .position(|s| s.charge < Q::from_integer(0) && s.charge.is_integer())
}

/// The binary compound of a sublattice's ion with the host's main anion:
/// `TiO2` for the Ti site of BaTiO3, the co-reactant that keeps its sites.
pub fn component(host: &Host, index: usize) -> Option<Formula> {
    let sub = host.sublattices.get(index)?;
    let anion = host.sublattices.get(main_anion(host)?)?;
    if !sub.charge.is_integer() {
        return None;
    }
    binary(
        sub.element,
        *sub.charge.numer(),
        anion.element,
        *anion.charge.numer(),
    )
}

/// A condensed compound such as `TiO2`.
pub fn compound(formula: Formula) -> Entity {
    Entity::Compound(Compound {
        formula,
        phase: None,
        span: 0..0,
    })
}

/// The diatomic gas of an element: `O2(g)`, `Cl2(g)`.
pub fn gas(element: u8) -> Entity {
    Entity::Compound(Compound {
        formula: Formula {
            atoms: vec![(element, Q::from_integer(2))],
        },
        phase: Some(Phase::Gas),
        span: 0..0,
    })
}

/// A term with coefficient one that the balancer is free to change.
pub fn term(entity: Entity) -> Term {
    Term {
        coefficient: Q::from_integer(1),
        coefficient_written: false,
        entity,
        span: 0..0,
    }
}

/// A reaction from its two sides (an empty side becomes `nil`).
pub fn reaction(left: Vec<Entity>, right: Vec<Entity>) -> Reaction {
    let side = |entities: Vec<Entity>| -> Vec<Term> {
        if entities.is_empty() {
            vec![term(Entity::Nil)]
        } else {
            entities.into_iter().map(term).collect()
        }
    };
    Reaction {
        left: side(left),
        right: side(right),
        arrow: Arrow::Forward,
        span: 0..0,
    }
}
