//! Mass-action laws of defect reactions.
//!
//! In: a parsed (and checked) `Reaction`, its label, and optionally its
//! thermodynamic data. Out: a `Law`: one factor per distinct species with an
//! exact exponent (positive for products, negative for reactants), written
//! as ASCII, Unicode and LaTeX in the field's conventions (defects as
//! concentrations in brackets, n and p for electrons and holes, gases as
//! partial pressures over 1 bar, pure condensed phases at activity 1, the
//! regular lattice species shown and then set to 1 with the dilute
//! approximation said out loud), plus the units K carries.

use crate::base::elements;
use crate::base::number::{self, Overflow, Q};
use crate::notation::{
    Associate, Compound, Entity, Occupant, Phase, Reaction, Site, Species, Style, VacancySpelling,
    render_reaction, render_species,
};
use std::fmt::Write;

/// What a factor of a mass-action law stands for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub enum FactorKind {
    /// A point defect or an associate: a concentration `[X]`.
    Defect,
    /// `e′`: written `n`.
    Electron,
    /// `h•`: written `p`.
    Hole,
    /// A gas: its partial pressure over 1 bar.
    Gas,
    /// A regular lattice species such as `O_O×`: activity ≈ 1 when dilute.
    Lattice,
    /// A pure condensed phase such as `Y2O3`: activity 1.
    Phase,
}

impl FactorKind {
    /// The stable name used in JSON.
    pub fn as_str(self) -> &'static str {
        match self {
            FactorKind::Defect => "defect",
            FactorKind::Electron => "electron",
            FactorKind::Hole => "hole",
            FactorKind::Gas => "gas",
            FactorKind::Lattice => "lattice",
            FactorKind::Phase => "phase",
        }
    }

    /// Whether the factor is a concentration that the equilibrium solves for.
    pub fn is_concentration(self) -> bool {
        matches!(
            self,
            FactorKind::Defect | FactorKind::Electron | FactorKind::Hole
        )
    }
}

/// One factor of a mass-action law.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Factor {
    /// Identity of the species, independent of spelling (for collecting).
    pub key: String,
    pub kind: FactorKind,
    /// The species as written in Unicode notation (`V_O••`, `O2(g)`).
    pub species: String,
    /// `[V_O..]`, `n`, `pO2`, `a(Y2O3)`.
    pub ascii: String,
    /// `[V_O••]`, `n`, `pO₂`, `a(Y₂O₃)`.
    pub unicode: String,
    /// `[V_{\mathrm{O}}^{\bullet\bullet}]`, `p_{\mathrm{O_2}}`.
    pub latex: String,
    /// Net exponent: products positive, reactants negative.
    pub exponent: Q,
    /// Effective charge of a concentration species (0 otherwise).
    pub charge: i32,
    /// The entity the factor came from (first occurrence).
    pub entity: Entity,
}

/// The mass-action law of one reaction.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Law {
    pub label: Option<String>,
    /// The reaction in each notation.
    pub reaction_ascii: String,
    pub reaction_unicode: String,
    pub reaction_latex: String,
    pub factors: Vec<Factor>,
    /// Conventions this law relies on, in words.
    pub assumptions: Vec<String>,
}

/// Formulas that are gases at defect-chemistry temperatures; written without
/// `(g)` they are read as condensed phases, which the law says out loud.
const USUAL_GASES: &[&str] = &[
    "O2", "H2", "N2", "H2O", "CO2", "CO", "Cl2", "F2", "SO2", "NH3", "NO", "NO2", "H2S", "Br2",
    "I2",
];

/// Identity of a species independent of how it was written.
pub fn species_key(species: &Species) -> String {
    let mut normal = species.clone();
    normal.span = 0..0;
    normal.occupant = match &species.occupant {
        Occupant::Vacancy(_) => Occupant::Vacancy(VacancySpelling::Word),
        Occupant::Atoms { formula, .. } => Occupant::Atoms {
            formula: formula.clone(),
            escaped: false,
        },
        other => other.clone(),
    };
    render_species(&normal, Style::Ascii)
}

/// Identity of an associate: its parts (sorted) and net charge.
pub fn associate_key(associate: &Associate) -> String {
    let mut parts: Vec<String> = associate
        .parts
        .iter()
        .map(|t| {
            let inner = match &t.entity {
                Entity::Species(s) => species_key(s),
                Entity::Associate(a) => associate_key(a),
                Entity::Compound(c) => compound_text(c, Style::Ascii),
                Entity::Nil => "nil".to_string(),
            };
            format!("{} {inner}", number::to_plain(t.coefficient))
        })
        .collect();
    parts.sort();
    format!(
        "({}){}",
        parts.join(" "),
        // A net charge beyond the exact range cannot occur once the reaction
        // passed its checks; the key then says so instead of a number.
        associate
            .net_charge()
            .map_or_else(|_| "(beyond the exact range)".to_string(), number::to_plain)
    )
}

/// Whether a species is a regular lattice species (`O_O×`, `Fe_{Fe:A}×`).
pub fn is_lattice(species: &Species) -> bool {
    match (&species.occupant, &species.site) {
        (Occupant::Atoms { formula, .. }, Some(Site::Lattice { element, .. })) => {
            species.charge == 0 && formula.single_element() == Some(*element)
        }
        _ => false,
    }
}

/// `O2`, `O₂` or `O_2` for a compound's formula (without phase tag).
fn compound_text(compound: &Compound, style: Style) -> String {
    let mut out = String::new();
    for (z, n) in &compound.formula.atoms {
        out.push_str(elements::symbol(*z));
        if *n == Q::from_integer(1) {
            continue;
        }
        let count = number::to_plain(*n);
        match style {
            Style::Ascii => out.push_str(&count),
            Style::Unicode | Style::Html | Style::Markdown => {
                out.extend(count.chars().map(subscript))
            }
            Style::Latex => {
                let _ = write!(out, "_{{{count}}}");
            }
        }
    }
    out
}

fn subscript(c: char) -> char {
    match c {
        '0'..='9' => char::from_u32(0x2080 + (c as u32 - '0' as u32)).unwrap_or(c),
        other => other,
    }
}

fn superscript_integer(n: i64) -> String {
    n.to_string()
        .chars()
        .map(|c| match c {
            '1' => '¹',
            '2' => '²',
            '3' => '³',
            '-' => '⁻',
            d @ '0'..='9' => char::from_u32(0x2070 + (d as u32 - '0' as u32)).unwrap_or(d),
            other => other,
        })
        .collect()
}

/// Classifies one entity into a factor with exponent zero, or `None` for nil.
pub fn factor_of(entity: &Entity) -> Option<Factor> {
    let (key, kind, species, ascii, unicode, latex, charge) = match entity {
        Entity::Nil => return None,
        Entity::Species(s) => {
            let unicode_name = render_species(s, Style::Unicode);
            match s.occupant {
                Occupant::Electron => (
                    species_key(s),
                    FactorKind::Electron,
                    unicode_name,
                    "n".to_string(),
                    "n".to_string(),
                    "n".to_string(),
                    -1,
                ),
                Occupant::Hole => (
                    species_key(s),
                    FactorKind::Hole,
                    unicode_name,
                    "p".to_string(),
                    "p".to_string(),
                    "p".to_string(),
                    1,
                ),
                _ => {
                    let kind = if is_lattice(s) {
                        FactorKind::Lattice
                    } else {
                        FactorKind::Defect
                    };
                    (
                        species_key(s),
                        kind,
                        unicode_name.clone(),
                        format!("[{}]", render_species(s, Style::Ascii)),
                        format!("[{unicode_name}]"),
                        format!("[{}]", render_species(s, Style::Latex)),
                        if kind == FactorKind::Defect {
                            s.charge
                        } else {
                            0
                        },
                    )
                }
            }
        }
        Entity::Associate(a) => {
            let term = crate::notation::Term {
                coefficient: Q::from_integer(1),
                coefficient_written: false,
                entity: entity.clone(),
                span: 0..0,
            };
            let unicode_name = crate::notation::render_term(&term, Style::Unicode);
            let charge = a.net_charge();
            (
                associate_key(a),
                FactorKind::Defect,
                unicode_name.clone(),
                format!("[{}]", crate::notation::render_term(&term, Style::Ascii)),
                format!("[{unicode_name}]"),
                format!("[{}]", crate::notation::render_term(&term, Style::Latex)),
                match charge {
                    Ok(charge) if charge.is_integer() => {
                        i32::try_from(*charge.numer()).unwrap_or(0)
                    }
                    _ => 0,
                },
            )
        }
        Entity::Compound(c) => {
            let gas = c.phase == Some(Phase::Gas);
            let ascii_formula = compound_text(c, Style::Ascii);
            let unicode_formula = compound_text(c, Style::Unicode);
            let latex_formula = compound_text(c, Style::Latex);
            let phase_tag = match c.phase {
                Some(Phase::Gas) => "(g)",
                Some(Phase::Solid) => "(s)",
                Some(Phase::Liquid) => "(l)",
                None => "",
            };
            if gas {
                (
                    format!("gas {ascii_formula}"),
                    FactorKind::Gas,
                    format!("{unicode_formula}{phase_tag}"),
                    format!("p{ascii_formula}"),
                    format!("p{unicode_formula}"),
                    format!("p_{{\\mathrm{{{latex_formula}}}}}"),
                    0,
                )
            } else {
                (
                    format!("phase {ascii_formula}{phase_tag}"),
                    FactorKind::Phase,
                    format!("{unicode_formula}{phase_tag}"),
                    format!("a({ascii_formula})"),
                    format!("a({unicode_formula})"),
                    format!("a_{{\\mathrm{{{latex_formula}}}}}"),
                    0,
                )
            }
        }
    };
    Some(Factor {
        key,
        kind,
        species,
        ascii,
        unicode,
        latex,
        exponent: Q::from_integer(0),
        charge,
        entity: entity.clone(),
    })
}

/// Builds the mass-action law of `reaction`. Exponents are exact; a sum that
/// leaves the exact range is an `Overflow`, never a rounded number.
pub fn mass_action_law(reaction: &Reaction, label: Option<&str>) -> Result<Law, Overflow> {
    let mut factors: Vec<Factor> = Vec::new();
    for (right, term) in reaction.terms() {
        let Some(mut factor) = factor_of(&term.entity) else {
            continue;
        };
        let signed = if right {
            term.coefficient
        } else {
            term.coefficient.checked_neg()?
        };
        match factors.iter_mut().find(|f| f.key == factor.key) {
            Some(existing) => existing.exponent = number::add(existing.exponent, signed)?,
            None => {
                factor.exponent = signed;
                factors.push(factor);
            }
        }
    }
    let cancelled: Vec<String> = factors
        .iter()
        .filter(|f| f.exponent == Q::from_integer(0))
        .map(|f| f.unicode.clone())
        .collect();
    factors.retain(|f| f.exponent != Q::from_integer(0));
    let mut assumptions = Vec::new();
    if factors.iter().any(|f| f.kind.is_concentration()) {
        assumptions.push(
            "ideal dilute solution: activities of defects equal their concentrations [X], in defects per formula unit of the host"
                .to_string(),
        );
    }
    if factors
        .iter()
        .any(|f| matches!(f.kind, FactorKind::Electron | FactorKind::Hole))
    {
        assumptions.push("n = [e′] and p = [h•], electrons and holes per formula unit (non-degenerate statistics)".to_string());
    }
    for f in &factors {
        match f.kind {
            FactorKind::Lattice => assumptions.push(format!(
                "{} ≈ 1: regular lattice species at activity 1 (dilute approximation: defects are a small fraction of the sites)",
                f.unicode
            )),
            FactorKind::Phase => {
                let formula = f.ascii.trim_start_matches("a(").trim_end_matches(')');
                if USUAL_GASES.contains(&formula) && !f.species.ends_with("(s)") && !f.species.ends_with("(l)") {
                    assumptions.push(format!(
                        "{} has no (g) tag, so it is read as a pure condensed phase with activity 1; write {}(g) if the gas is meant",
                        f.species, f.species
                    ));
                } else {
                    assumptions.push(format!("{} = 1: pure condensed phase", f.unicode));
                }
            }
            FactorKind::Gas => assumptions.push(format!(
                "{}: partial pressure of {} in bar, relative to a standard pressure of 1 bar (ideal gas)",
                f.unicode, f.species
            )),
            _ => {}
        }
    }
    let from_perfect_crystal = reaction
        .left
        .iter()
        .all(|t| matches!(t.entity, Entity::Nil))
        && reaction
            .right
            .iter()
            .all(|t| factor_of(&t.entity).is_some_and(|f| f.kind.is_concentration()));
    if from_perfect_crystal {
        let defects = factors.iter().filter(|f| f.kind.is_concentration()).count();
        assumptions.push(if defects == 1 {
            "formation from the perfect crystal: the configurational entropy k ln[(N+n)!/(N! n!)] of n defects on N sites makes the equilibrium fraction n/(N+n) = exp(ΔS/k)·exp(−ΔH/kT) = K".to_string()
        } else {
            "formation from the perfect crystal: with configurational entropy and neutrality making the partners equal, each fraction is K^(1/2) for a pair (Schottky, Frenkel), so ΔH and ΔS enter halved".to_string()
        });
    }
    if !cancelled.is_empty() {
        assumptions.push(format!(
            "{} appear on both sides and cancel",
            cancelled.join(", ")
        ));
    }
    Ok(Law {
        label: label.map(str::to_string),
        reaction_ascii: render_reaction(reaction, Style::Ascii),
        reaction_unicode: render_reaction(reaction, Style::Unicode),
        reaction_latex: render_reaction(reaction, Style::Latex),
        factors,
        assumptions,
    })
}

fn power(base: &str, exponent: Q, style: Style) -> String {
    if exponent == Q::from_integer(1) {
        return base.to_string();
    }
    match style {
        Style::Ascii if exponent.is_integer() => format!("{base}^{}", exponent.numer()),
        Style::Ascii => format!("{base}^({})", number::to_plain(exponent)),
        Style::Unicode | Style::Html | Style::Markdown if exponent.is_integer() => {
            format!("{base}{}", superscript_integer(*exponent.numer()))
        }
        Style::Unicode | Style::Html | Style::Markdown => {
            format!("{base}^({})", number::to_plain(exponent))
        }
        Style::Latex => format!("{base}^{{{}}}", number::to_plain(exponent)),
    }
}

impl Factor {
    /// The factor's symbol in a style.
    pub fn symbol(&self, style: Style) -> &str {
        match style {
            Style::Ascii => &self.ascii,
            Style::Unicode | Style::Html | Style::Markdown => &self.unicode,
            Style::Latex => &self.latex,
        }
    }
}

impl Law {
    /// `K_red`, `K_{\mathrm{red}}`, or `K` without a label.
    pub fn k_symbol(&self, style: Style) -> String {
        match (&self.label, style) {
            (None, _) => "K".to_string(),
            (Some(l), Style::Latex) => format!("K_{{\\mathrm{{{l}}}}}"),
            (Some(l), _) => format!("K_{l}"),
        }
    }

    fn product(&self, style: Style, keep: impl Fn(&Factor) -> bool, sign: i64) -> Vec<String> {
        self.factors
            .iter()
            .filter(|f| keep(f))
            .filter_map(|f| {
                // Only i64::MIN has no negative; such an exponent is left out
                // rather than written wrapped.
                let e = f.exponent.checked_mul_int(sign).ok()?;
                (e > Q::from_integer(0)).then(|| power(f.symbol(style), e, style))
            })
            .collect()
    }

    fn side(&self, style: Style, keep: impl Fn(&Factor) -> bool + Copy) -> String {
        let (join, latex) = match style {
            Style::Ascii => (" ", false),
            Style::Unicode | Style::Html | Style::Markdown => ("·", false),
            Style::Latex => ("\\,", true),
        };
        let top = self.product(style, keep, 1);
        let bottom = self.product(style, keep, -1);
        let top_text = if top.is_empty() {
            "1".to_string()
        } else {
            top.join(join)
        };
        if bottom.is_empty() {
            top_text
        } else if latex {
            format!("\\frac{{{top_text}}}{{{}}}", bottom.join(join))
        } else if bottom.len() == 1 {
            format!("{top_text} / {}", bottom.join(join))
        } else {
            format!("{top_text} / ({})", bottom.join(join))
        }
    }

    /// The law written out: all factors first, then (when lattice species or
    /// phases occur) the form with their activities set to 1.
    pub fn text(&self, style: Style) -> String {
        let full = self.side(style, |_| true);
        let has_lattice = self.factors.iter().any(|f| f.kind == FactorKind::Lattice);
        let has_phase = self.factors.iter().any(|f| f.kind == FactorKind::Phase);
        let mut out = format!("{} = {full}", self.k_symbol(style));
        if has_lattice || has_phase {
            let simple = self.side(style, |f| {
                !matches!(f.kind, FactorKind::Lattice | FactorKind::Phase)
            });
            let relation = match (has_lattice, style) {
                (true, Style::Ascii) => "~",
                (true, Style::Unicode | Style::Html | Style::Markdown) => "≈",
                (true, Style::Latex) => "\\approx",
                (false, _) => "=",
            };
            let _ = write!(out, " {relation} {simple}");
        }
        out
    }

    /// Sum of exponents over concentrations (lattice species set to 1).
    pub fn concentration_order(&self) -> Result<Q, Overflow> {
        number::sum(
            self.factors
                .iter()
                .filter(|f| f.kind.is_concentration())
                .map(|f| f.exponent),
        )
    }

    /// Sum of exponents over gas pressures.
    pub fn pressure_order(&self) -> Result<Q, Overflow> {
        number::sum(
            self.factors
                .iter()
                .filter(|f| f.kind == FactorKind::Gas)
                .map(|f| f.exponent),
        )
    }

    /// The units K carries, in words.
    pub fn units_text(&self, host: Option<&str>) -> String {
        let (Ok(c), Ok(p)) = (self.concentration_order(), self.pressure_order()) else {
            return format!(
                "the orders of {} are beyond the exact range (about 9.2e18)",
                self.k_symbol(Style::Unicode)
            );
        };
        let zero = Q::from_integer(0);
        let per = host.map_or_else(
            || "per formula unit of the host".to_string(),
            |h| format!("per formula unit of {h}"),
        );
        let mut parts = Vec::new();
        if c != zero {
            parts.push(format!(
                "concentrations {per} to the power {}",
                number::to_plain(c)
            ));
        }
        if p != zero {
            parts.push(format!(
                "pressures over 1 bar to the power {}",
                number::to_plain(p)
            ));
        }
        if parts.is_empty() {
            return format!(
                "{} is a pure number (no concentrations or pressures)",
                self.k_symbol(Style::Unicode)
            );
        }
        let mut text = format!(
            "{} is a pure number: {}",
            self.k_symbol(Style::Unicode),
            parts.join(", ")
        );
        if c != zero {
            let _ = write!(
                text,
                "; with concentrations in cm⁻³ instead it would carry cm^{}",
                c.checked_mul_int(-3)
                    .map_or_else(|_| "(beyond the exact range)".to_string(), number::to_plain)
            );
        }
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::notation::parse_reaction;

    fn law(text: &str, label: Option<&str>) -> Law {
        let (reaction, diags) = parse_reaction(text, 0..text.len());
        assert!(diags.iter().all(|d| !d.is_error()), "{diags:?}");
        mass_action_law(&reaction.expect("parses"), label).expect("no overflow")
    }

    fn exponent_of(law: &Law, symbol: &str) -> Option<String> {
        law.factors
            .iter()
            .find(|f| f.unicode == symbol)
            .map(|f| number::to_plain(f.exponent))
    }

    #[test]
    fn reduction_law() {
        // source: common practice; K_red = [V_O••] n² pO2^½ for
        // O_O× ⇌ V_O•• + 2e′ + ½O2(g) (Kofstad 1972, ch. 2, from memory)
        let l = law("O_O -> V_O.. + 2e' + 1/2 O2(g)", Some("red"));
        assert_eq!(exponent_of(&l, "[V_O••]").as_deref(), Some("1"));
        assert_eq!(exponent_of(&l, "n").as_deref(), Some("2"));
        assert_eq!(exponent_of(&l, "pO₂").as_deref(), Some("1/2"));
        assert_eq!(exponent_of(&l, "[O_O×]").as_deref(), Some("-1"));
        assert_eq!(
            l.text(Style::Unicode),
            "K_red = [V_O••]·n²·pO₂^(1/2) / [O_O×] ≈ [V_O••]·n²·pO₂^(1/2)"
        );
        assert_eq!(
            l.text(Style::Ascii),
            "K_red = [V_O..] n^2 pO2^(1/2) / [O_Ox] ~ [V_O..] n^2 pO2^(1/2)"
        );
        assert!(l.text(Style::Latex).contains("\\frac{"));
        assert!(l.assumptions.iter().any(|a| a.contains("[O_O×] ≈ 1")));
        assert_eq!(l.concentration_order(), Ok(Q::from_integer(3)));
        assert_eq!(l.pressure_order(), Ok(Q::new(1, 2)));
    }

    #[test]
    fn dopant_phase_has_activity_one() {
        let l = law("Y2O3 -> 2Y_Zr' + 3O_O + V_O..", None);
        assert_eq!(exponent_of(&l, "a(Y₂O₃)").as_deref(), Some("-1"));
        assert_eq!(exponent_of(&l, "[Y_Zr′]").as_deref(), Some("2"));
        assert!(
            l.assumptions
                .iter()
                .any(|a| a.contains("pure condensed phase"))
        );
        assert!(l.text(Style::Unicode).starts_with("K = "));
    }

    #[test]
    fn gas_without_tag_is_flagged() {
        let l = law("O_O -> V_O.. + 2e' + 1/2 O2", None);
        assert!(l.assumptions.iter().any(|a| a.contains("no (g) tag")));
    }

    #[test]
    fn intrinsic_has_no_denominator() {
        let l = law("nil -> e' + h.", Some("i"));
        assert_eq!(l.text(Style::Ascii), "K_i = n p");
        assert!(
            l.units_text(Some("ZrO2")).contains(
                "to the power 2; with concentrations in cm⁻³ instead it would carry cm^-6"
            )
        );
    }
}
