//! Dopant levels: converting between mol % of the dopant compound, cation
//! fraction, defect site fractions, the IUPAC-style formula and atoms per
//! cm³, for one incorporation mechanism.
//!
//! In: a balanced incorporation reaction, the host, the dopant and a level
//! in one unit. Out: the composition at that level. A mixture of m mol of
//! dopant compound with (1 − m) mol of host formula units (co-reactant
//! oxides such as the TiO2 in `La2O3 + 3 TiO2 → …` are extra) gives, per
//! formula unit of sites, counts that are ratios of linear functions of m;
//! so every exact unit converts exactly (rationals), and inverting is exact
//! too. Per cm³ needs a density or a cubic cell and is floating point.
//!
//! Check value: 8 mol % Y2O3 in ZrO2 with oxygen vacancies is
//! Zr0.852Y0.148O1.926 with 1/27 (3.7 %) of the oxygen sites vacant.

use super::dopant::Dopant;
use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::elements;
use crate::base::number::{self, Overflow, Q};
use crate::host::{Host, SiteLookup};
use crate::notation::{Entity, Occupant, Reaction, Site, Species, Style, render_species};

/// The unit a level is given in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum Unit {
    /// mol % of the dopant compound (`8mol%`).
    MolPercent,
    /// Dopant cations per 100 cations (`14.8cat%`).
    CationPercent,
    /// Compensating defects per 100 sites of their sublattice, or per 100
    /// formula units for interstitials and carriers (`3.7site%`).
    SitePercent,
    /// Dopant atoms per cm³ (`1e21/cm3`).
    PerCm3,
}

/// A dopant level as the user gave it.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub enum DopantLevel {
    Exact(Q, Unit),
    /// Only per cm³ is read as a float.
    PerCm3(f64),
}

/// Reads `8mol%`, `8 mol%`, `14.8cat%`, `3.7site%`, `1.5e21/cm3`.
///
/// `level = number unit ; unit = "mol%" | "cat%" | "site%" | "/cm3" | "cm-3" ;`
pub fn parse_level(text: &str) -> Result<DopantLevel, Box<Diagnostic>> {
    let t = text.trim();
    let bad = |message: String| {
        Box::new(
            Diagnostic::new(Code::Level, 0..text.len(), message)
                .with_help(
                    "write a number and a unit: `8mol%`, `14.8cat%`, `3.7site%` or `1e21/cm3`",
                )
                .locate(1, text),
        )
    };
    let split = t
        .find(|c: char| {
            !(c.is_ascii_digit() || c == '.' || c == 'e' || c == 'E' || c == '+' || c == '-')
        })
        .unwrap_or(t.len());
    // `1e21/cm3`: the exponent belongs to the number; `cm-3` to the unit.
    let (number_text, unit_text) = t.split_at(split);
    let unit_text = unit_text.trim();
    let unit = match unit_text.to_ascii_lowercase().as_str() {
        "mol%" | "mol %" | "mol-%" => Unit::MolPercent,
        "cat%" | "cation%" => Unit::CationPercent,
        "site%" => Unit::SitePercent,
        "/cm3" | "/cm^3" | "cm-3" | "cm^-3" | "/cm³" | "cm⁻³" => Unit::PerCm3,
        "" => return Err(bad(format!("`{t}` has no unit"))),
        other => return Err(bad(format!("`{other}` is not a unit of dopant level"))),
    };
    if unit == Unit::PerCm3 {
        return match number_text.parse::<f64>() {
            Ok(v) if v.is_finite() && v > 0.0 => Ok(DopantLevel::PerCm3(v)),
            _ => Err(bad(format!("`{number_text}` is not a positive number"))),
        };
    }
    match number::parse(number_text) {
        Ok(q) if q > Q::from_integer(0) => match q.checked_div(Q::from_integer(100)) {
            Ok(y) => Ok(DopantLevel::Exact(y, unit)),
            Err(e) => Err(bad(format!("`{number_text}`: {e}"))),
        },
        Ok(_) => Err(bad("a dopant level must be above zero".into())),
        Err(e) => Err(bad(format!(
            "`{number_text}`: {e} (exact units take plain decimals, e.g. 8 or 0.5)"
        ))),
    }
}

/// `a + b·m`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
struct Linear {
    a: Q,
    b: Q,
}

impl Linear {
    fn at(self, m: Q) -> Result<Q, Overflow> {
        number::add(self.a, number::mul(self.b, m)?)
    }

    /// `self + other`, term by term.
    fn plus(self, other: Linear) -> Result<Linear, Overflow> {
        Ok(Linear {
            a: number::add(self.a, other.a)?,
            b: number::add(self.b, other.b)?,
        })
    }
}

/// `num(m) / den(m)`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct Ratio {
    num: Linear,
    den: Linear,
}

impl Ratio {
    /// The value at m; `None` where the denominator is zero.
    fn at(self, m: Q) -> Result<Option<Q>, Overflow> {
        let d = self.den.at(m)?;
        if d == Q::from_integer(0) {
            return Ok(None);
        }
        self.num.at(m)?.checked_div(d).map(Some)
    }

    /// The m at which the ratio equals y.
    fn solve(self, y: Q) -> Result<Option<Q>, Overflow> {
        let denominator = number::sub(self.num.b, number::mul(self.den.b, y)?)?;
        if denominator == Q::from_integer(0) {
            return Ok(None);
        }
        number::sub(number::mul(self.den.a, y)?, self.num.a)?
            .checked_div(denominator)
            .map(Some)
    }
}

/// One defect's amount at the level.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct DefectFraction {
    /// `V_O••` (Unicode).
    pub species: String,
    pub fraction: Q,
    /// `of O sites` or `per formula unit`.
    pub basis: String,
}

/// The doped crystal at one level, per formula unit of sites.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Composition {
    /// Mole fraction of the dopant compound, m.
    pub mol_fraction: Q,
    /// (element, count per formula unit) in formula order.
    pub formula: Vec<(u8, Q)>,
    /// Dopant cations over all cations.
    pub cation_fraction: Q,
    /// The dopant defect and each compensating defect.
    pub defects: Vec<DefectFraction>,
    /// Dopant atoms per cm³, when a density or cell was given.
    pub per_cm3: Option<f64>,
}

/// How to turn formula units into volume.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub enum Volume {
    /// Density in g/cm³.
    Density(f64),
    /// Cubic lattice parameter in Å and formula units per cell.
    Cell { angstrom: f64, units: u32 },
}

/// Avogadro constant, exact in the SI since 2019 (CODATA).
const AVOGADRO: f64 = 6.022_140_76e23;

/// One defect of the model.
struct ModelDefect {
    /// `V_O••` (Unicode).
    text: String,
    count: Linear,
    /// Sites of its sublattice; `None` counts per formula unit.
    sites: Option<Linear>,
    basis: String,
    /// The dopant itself rather than a compensating defect.
    is_dopant: bool,
}

impl ModelDefect {
    fn fraction(&self, units: Linear) -> Ratio {
        Ratio {
            num: self.count,
            den: self.sites.unwrap_or(units),
        }
    }
}

/// The linear model of one mechanism.
struct Model {
    /// Formula units of sites, F(m).
    units: Linear,
    /// Element totals (before dividing by F).
    elements: Vec<(u8, Linear)>,
    /// Dopant atoms.
    dopant: Linear,
    /// Atoms of cation elements.
    cations: Linear,
    defects: Vec<ModelDefect>,
}

/// Why a composition could not be worked out.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct LevelError(pub String);

impl From<Overflow> for LevelError {
    fn from(_: Overflow) -> Self {
        LevelError("the exact amounts at this level grow beyond the exact range (about 9.2e18); give the level with fewer digits".into())
    }
}

fn model(host: &Host, dopant: &Dopant, reaction: &Reaction) -> Result<Model, LevelError> {
    let zero = Q::from_integer(0);
    let source = reaction
        .left
        .iter()
        .find(|t| matches!(&t.entity, Entity::Compound(c) if c.formula == dopant.compound))
        .ok_or_else(|| LevelError("the reaction has no dopant compound".into()))?;
    let per = source.coefficient.checked_recip()?;
    // Host part: (1 − m) formula units.
    let mut sites: Vec<Linear> = host
        .sublattices
        .iter()
        .map(|s| {
            Ok(Linear {
                a: s.count,
                b: s.count.checked_neg()?,
            })
        })
        .collect::<Result<_, Overflow>>()?;
    let mut elements: Vec<(u8, Linear)> = Vec::new();
    let mut add = |z: u8, a: Q, b: Q| -> Result<(), Overflow> {
        match elements.iter_mut().find(|(e, _)| *e == z) {
            Some((_, l)) => *l = l.plus(Linear { a, b })?,
            None => elements.push((z, Linear { a, b })),
        }
        Ok(())
    };
    for s in &host.sublattices {
        add(s.element, s.count, s.count.checked_neg()?)?;
    }
    let mut dopant_atoms = Linear::default();
    let mut defects: Vec<(Species, Q)> = Vec::new();
    for (right, term) in reaction.terms() {
        let sign =
            if right { Ok(per) } else { per.checked_neg() }?.checked_mul(term.coefficient)?;
        let Entity::Species(s) = &term.entity else {
            continue;
        };
        if let Occupant::Atoms { formula, .. } = &s.occupant {
            for (z, count) in &formula.atoms {
                add(*z, zero, number::mul(sign, *count)?)?;
                if *z == dopant.element && !is_regular(s, host) {
                    dopant_atoms.b = number::add(dopant_atoms.b, number::mul(sign, *count)?)?;
                }
            }
        }
        if let Some(Site::Lattice { element, label }) = &s.site {
            if let SiteLookup::Found(i) = host.lookup(*element, label.as_deref()) {
                if let Some(slot) = sites.get_mut(i) {
                    slot.b = number::add(slot.b, sign)?;
                }
            }
        }
        if !is_regular(s, host) && sign > zero {
            defects.push((s.clone(), sign));
        }
    }
    // F(m): sites of the first sublattice over its count per formula unit.
    let first = host
        .sublattices
        .first()
        .ok_or_else(|| LevelError("the host has no sites".into()))?;
    let units = Linear {
        a: sites[0].a.checked_div(first.count)?,
        b: sites[0].b.checked_div(first.count)?,
    };
    let cation_elements: Vec<u8> = host
        .sublattices
        .iter()
        .filter(|s| s.charge > zero)
        .map(|s| s.element)
        .chain(std::iter::once(dopant.element))
        .collect();
    let mut cations = Linear::default();
    for (z, l) in &elements {
        if cation_elements.contains(z) {
            cations = cations.plus(*l)?;
        }
    }
    let defects = defects
        .into_iter()
        .map(|(s, count)| {
            let site = match &s.site {
                Some(Site::Lattice { element, label }) => {
                    match host.lookup(*element, label.as_deref()) {
                        SiteLookup::Found(i) => Some((sites[i], host.sublattices[i].name())),
                        _ => None,
                    }
                }
                _ => None,
            };
            let is_dopant = matches!(&s.occupant, Occupant::Atoms { formula, .. } if formula.contains(dopant.element));
            ModelDefect {
                text: render_species(&s, Style::Unicode),
                count: Linear { a: zero, b: count },
                sites: site.as_ref().map(|(l, _)| *l),
                basis: site.map_or_else(
                    || "per formula unit".to_string(),
                    |(_, name)| format!("of {name} sites"),
                ),
                is_dopant,
            }
        })
        .collect();
    Ok(Model {
        units,
        elements,
        dopant: dopant_atoms,
        cations,
        defects,
    })
}

/// The host's own ion on its own site (`O_O×`, `Ti_Ti×`): not a defect.
fn is_regular(s: &Species, host: &Host) -> bool {
    match (&s.occupant, &s.site) {
        (Occupant::Atoms { formula, .. }, Some(Site::Lattice { element, label })) => {
            s.charge == 0
                && formula.single_element() == Some(*element)
                && matches!(
                    host.lookup(*element, label.as_deref()),
                    SiteLookup::Found(_)
                )
        }
        _ => false,
    }
}

impl Model {
    fn per_unit(&self, l: Linear) -> Ratio {
        Ratio {
            num: l,
            den: self.units,
        }
    }

    /// The first compensating defect (the dopant's own defect when there is none).
    fn compensating(&self) -> Option<Ratio> {
        self.defects
            .iter()
            .find(|d| !d.is_dopant)
            .or_else(|| self.defects.first())
            .map(|d| d.fraction(self.units))
    }

    fn molar_mass(&self, m: Q) -> Option<f64> {
        let mut total = 0.0;
        for (z, l) in &self.elements {
            let w = elements::by_z(*z)?.atomic_weight;
            if w.is_nan() {
                return None;
            }
            // A float context: M(m) in floating point.
            total += w * (to_f64(l.a) + to_f64(l.b) * to_f64(m));
        }
        Some(total)
    }
}

fn to_f64(q: Q) -> f64 {
    *q.numer() as f64 / *q.denom() as f64
}

/// The mole fraction of dopant compound that gives `level`.
pub fn mol_fraction(
    host: &Host,
    dopant: &Dopant,
    reaction: &Reaction,
    level: &DopantLevel,
    volume: Option<Volume>,
) -> Result<Q, LevelError> {
    let model = model(host, dopant, reaction)?;
    let out_of_range = || {
        LevelError("this level cannot be reached by this mechanism (it would need a mole fraction of dopant compound outside 0 to 1)".into())
    };
    let m = match level {
        DopantLevel::Exact(y, Unit::MolPercent) => *y,
        DopantLevel::Exact(y, Unit::CationPercent) => Ratio {
            num: model.dopant,
            den: model.cations,
        }
        .solve(*y)?
        .ok_or_else(out_of_range)?,
        DopantLevel::Exact(y, Unit::SitePercent) => model
            .compensating()
            .ok_or_else(|| LevelError("this mechanism has no compensating defect".into()))?
            .solve(*y)?
            .ok_or_else(out_of_range)?,
        DopantLevel::Exact(y, Unit::PerCm3) => {
            return mol_fraction(
                host,
                dopant,
                reaction,
                &DopantLevel::PerCm3(to_f64(*y)),
                volume,
            );
        }
        DopantLevel::PerCm3(value) => {
            let volume = volume.ok_or_else(|| {
                LevelError(
                    "atoms per cm³ need a density (--density) or a cubic cell (--cell)".into(),
                )
            })?;
            per_cm3_inverse(&model, *value, volume)?
        }
    };
    if m <= Q::from_integer(0) || m >= Q::from_integer(1) {
        return Err(out_of_range());
    }
    Ok(m)
}

/// Solves dopant-per-cm³ = value for m in floating point, then takes the
/// nearest fraction with a modest denominator.
fn per_cm3_inverse(model: &Model, value: f64, volume: Volume) -> Result<Q, LevelError> {
    let (da, db) = (to_f64(model.dopant.a), to_f64(model.dopant.b));
    let m = match volume {
        Volume::Cell { angstrom, units } => {
            // dopant/F · units/a³ = value  ⇒  (da + db m) = y (Fa + Fb m)
            let per_unit = value * (angstrom * 1e-8).powi(3) / f64::from(units);
            let (fa, fb) = (to_f64(model.units.a), to_f64(model.units.b));
            (per_unit * fa - da) / (db - per_unit * fb)
        }
        Volume::Density(rho) => {
            // dopant/F · ρ N_A / (M/F) = value: F cancels; M(m) = Ma + Mb m.
            let ma = model.molar_mass(Q::from_integer(0)).ok_or_else(no_weight)?;
            let mb = model.molar_mass(Q::from_integer(1)).ok_or_else(no_weight)? - ma;
            let y = value / (rho * AVOGADRO);
            (y * ma - da) / (db - y * mb)
        }
    };
    if !m.is_finite() || m <= 0.0 || m >= 1.0 {
        return Err(LevelError(
            "this many atoms per cm³ cannot be reached by this mechanism".into(),
        ));
    }
    // Exactness ends at the float: keep nine significant digits.
    let scale = 1_000_000_000i64;
    Ok(Q::new((m * scale as f64).round() as i64, scale))
}

fn no_weight() -> LevelError {
    LevelError("an element here has no standard atomic weight, so no density conversion".into())
}

/// The composition at mole fraction `m` of dopant compound.
pub fn composition(
    host: &Host,
    dopant: &Dopant,
    reaction: &Reaction,
    m: Q,
    volume: Option<Volume>,
) -> Result<Composition, LevelError> {
    let model = model(host, dopant, reaction)?;
    let undefined = || LevelError("the composition is undefined at this level".into());
    let mut formula: Vec<(u8, Q)> = Vec::new();
    for (z, l) in &model.elements {
        let count = model.per_unit(*l).at(m)?.ok_or_else(undefined)?;
        if count != Q::from_integer(0) {
            formula.push((*z, count));
        }
    }
    order_formula(&mut formula, host, dopant);
    let cation_fraction = Ratio {
        num: model.dopant,
        den: model.cations,
    }
    .at(m)?
    .ok_or_else(undefined)?;
    let mut defects = Vec::new();
    for d in &model.defects {
        defects.push(DefectFraction {
            species: d.text.clone(),
            fraction: d.fraction(model.units).at(m)?.ok_or_else(undefined)?,
            basis: d.basis.clone(),
        });
    }
    let per_unit_dopant = model.per_unit(model.dopant).at(m)?.ok_or_else(undefined)?;
    let per_cm3 = match volume {
        None => None,
        Some(Volume::Cell { angstrom, units }) => {
            Some(to_f64(per_unit_dopant) * f64::from(units) / (angstrom * 1e-8).powi(3))
        }
        Some(Volume::Density(rho)) => {
            let per_unit_mass =
                model.molar_mass(m).ok_or_else(no_weight)? / to_f64(model.units.at(m)?);
            Some(to_f64(per_unit_dopant) * rho * AVOGADRO / per_unit_mass)
        }
    };
    Ok(Composition {
        mol_fraction: m,
        formula,
        cation_fraction,
        defects,
        per_cm3,
    })
}

/// Host cations in host order with the dopant right after the cation it
/// replaces, then the anions: `Zr0.852Y0.148O1.926`.
fn order_formula(formula: &mut [(u8, Q)], host: &Host, dopant: &Dopant) {
    let zero = Q::from_integer(0);
    let rank = |z: u8| -> (usize, usize) {
        if let Some(i) = host.sublattices.iter().position(|s| s.element == z) {
            let anion = host.sublattices[i].charge < zero;
            (if anion { 2 } else { 0 }, i * 2)
        } else if z == dopant.element {
            (0, usize::MAX - 1)
        } else {
            (1, 0)
        }
    };
    formula.sort_by_key(|(z, _)| rank(*z));
    // Put the dopant after the first host cation it follows in the formula.
    if let Some(d) = formula.iter().position(|(z, _)| *z == dopant.element) {
        let last_cation = formula.iter().rposition(|(z, _)| {
            host.sublattices
                .iter()
                .any(|s| s.element == *z && s.charge > zero)
        });
        if let Some(c) = last_cation {
            if d > c + 1 {
                formula[c + 1..=d].rotate_right(1);
            }
        }
    }
}

/// `Zr0.852Y0.148O1.926` (three decimals).
pub fn formula_text(formula: &[(u8, Q)]) -> String {
    formula
        .iter()
        .map(|(z, n)| {
            let v = to_f64(*n);
            if n.is_integer() && *n == Q::from_integer(1) {
                elements::symbol(*z).to_string()
            } else if n.is_integer() {
                format!("{}{}", elements::symbol(*z), n.numer())
            } else {
                let shown = format!("{v:.3}");
                format!(
                    "{}{}",
                    elements::symbol(*z),
                    shown.trim_end_matches('0').trim_end_matches('.')
                )
            }
        })
        .collect()
}

/// `Zr23/27 Y4/27 O52/27`: the exact counts.
pub fn formula_exact(formula: &[(u8, Q)]) -> String {
    formula
        .iter()
        .map(|(z, n)| format!("{}{}", elements::symbol(*z), number::to_plain(*n)))
        .collect::<Vec<_>>()
        .join(" ")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::generate::dope::dopant::parse_dopant;
    use crate::notation::parse_reaction;

    fn setup(host: &str, dopant: &str, reaction: &str) -> (Host, Dopant, Reaction) {
        let h = Host::from_spec(host).unwrap();
        let d = parse_dopant(dopant, &h).unwrap();
        let (r, diags) = parse_reaction(reaction, 0..reaction.len());
        (h, d, r.unwrap_or_else(|| panic!("{diags:?}")))
    }

    #[test]
    fn eight_mol_percent_yttria_in_zirconia() {
        // source: IUPAC, Nomenclature of Inorganic Chemistry (Red Book) 2005, IR-11.3:
        // the formula rule Ca_xZr1−xO2−x, applied to Y: (Y2O3)0.08(ZrO2)0.92
        // = Zr0.852Y0.148O1.926 per cation, with (2 − 1.926)/2 = 3.7 % of O sites vacant.
        let (h, d, r) = setup("ZrO2", "Y2O3", "Y2O3 -> 2Y_Zr' + 3O_O + V_O..");
        let m = mol_fraction(&h, &d, &r, &parse_level("8mol%").unwrap(), None).unwrap();
        assert_eq!(m, Q::new(2, 25));
        let c = composition(&h, &d, &r, m, None).unwrap();
        assert_eq!(formula_text(&c.formula), "Zr0.852Y0.148O1.926");
        assert_eq!(formula_exact(&c.formula), "Zr23/27 Y4/27 O52/27");
        assert_eq!(c.cation_fraction, Q::new(4, 27));
        let vacancy = c.defects.iter().find(|x| x.species == "V_O••").unwrap();
        assert_eq!(vacancy.fraction, Q::new(1, 27));
        assert_eq!(vacancy.basis, "of O sites");
        let dopant = c.defects.iter().find(|x| x.species == "Y_Zr′").unwrap();
        assert_eq!(dopant.fraction, Q::new(4, 27));
    }

    #[test]
    fn every_exact_unit_inverts_to_the_same_mixture() {
        let (h, d, r) = setup("ZrO2", "Y2O3", "Y2O3 -> 2Y_Zr' + 3O_O + V_O..");
        let from_cation = mol_fraction(
            &h,
            &d,
            &r,
            &DopantLevel::Exact(Q::new(4, 27), Unit::CationPercent),
            None,
        )
        .unwrap();
        let from_site = mol_fraction(
            &h,
            &d,
            &r,
            &DopantLevel::Exact(Q::new(1, 27), Unit::SitePercent),
            None,
        )
        .unwrap();
        assert_eq!(from_cation, Q::new(2, 25));
        assert_eq!(from_site, Q::new(2, 25));
    }

    #[test]
    fn calcia_follows_the_iupac_formula_rule() {
        // source: IUPAC Red Book 2005, IR-11.3: Ca_xZr1−xO2−x. At x = 0.15 the
        // formula is Ca0.15Zr0.85O1.85.
        let (h, d, r) = setup("ZrO2", "CaO", "CaO -> Ca_Zr'' + O_O + V_O..");
        let m = mol_fraction(&h, &d, &r, &parse_level("15cat%").unwrap(), None).unwrap();
        assert_eq!(m, Q::new(3, 20));
        let c = composition(&h, &d, &r, m, None).unwrap();
        assert_eq!(formula_text(&c.formula), "Zr0.85Ca0.15O1.85");
    }

    #[test]
    fn density_and_cell_agree_for_magnesia() {
        // source: CRC Handbook of Chemistry and Physics (from memory): MgO is rock
        // salt with a = 4.2112 Å and density 3.58 g/cm³; both give about 5.35e22
        // Mg per cm³. Checked here for 1 cat% Li in NiO-like bookkeeping on MgO.
        let (h, d, r) = setup("MgO", "Li2O", "Li2O + 1/2 O2(g) -> 2Li_Mg' + 2O_O + 2h.");
        let m = mol_fraction(&h, &d, &r, &parse_level("1cat%").unwrap(), None).unwrap();
        let cell = composition(
            &h,
            &d,
            &r,
            m,
            Some(Volume::Cell {
                angstrom: 4.2112,
                units: 4,
            }),
        )
        .unwrap();
        let dense = composition(&h, &d, &r, m, Some(Volume::Density(3.58))).unwrap();
        let (a, b) = (cell.per_cm3.unwrap(), dense.per_cm3.unwrap());
        assert!((a - 5.355e20).abs() / 5.355e20 < 0.01, "{a}");
        assert!((a - b).abs() / a < 0.01, "{a} {b}");
        // And back: per cm³ inverts to the same mixture within the float.
        let back = mol_fraction(
            &h,
            &d,
            &r,
            &DopantLevel::PerCm3(a),
            Some(Volume::Cell {
                angstrom: 4.2112,
                units: 4,
            }),
        )
        .unwrap();
        assert!((to_f64(back) - to_f64(m)).abs() < 1e-8);
    }

    #[test]
    fn bad_levels() {
        for bad in [
            "8", "8mol", "x mol%", "-3mol%", "0mol%", "1e21", "abc/cm3", "0/cm3",
        ] {
            let e = parse_level(bad).expect_err(bad);
            assert_eq!(e.code, Code::Level, "{bad}");
        }
        let (h, d, r) = setup("ZrO2", "Y2O3", "Y2O3 -> 2Y_Zr' + 3O_O + V_O..");
        assert!(mol_fraction(&h, &d, &r, &parse_level("120mol%").unwrap(), None).is_err());
        // Half the O sites empty would need more than pure Y2O3.
        assert!(mol_fraction(&h, &d, &r, &parse_level("50site%").unwrap(), None).is_err());
        assert!(mol_fraction(&h, &d, &r, &parse_level("1e21/cm3").unwrap(), None).is_err());
    }
}
