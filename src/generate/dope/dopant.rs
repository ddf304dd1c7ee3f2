//! Reads a dopant as the user spells it.
//!
//! In: text such as `Y2O3`, `CaCl2`, `Y+3`, `Y3+`, `Fe(III)` or `Y`, and the
//! host. Out: the dopant element, its oxidation state and the compound it
//! comes from (built from the host's main anion when an ion was given), or
//! a diagnostic with the span and a way forward. Grammar: grammar/balance.md.

use crate::balance::build::{binary, main_anion};
use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::elements;
use crate::base::number::{self, Q};
use crate::host::Host;
use crate::notation::{Formula, parse_formula};

/// A dopant cation and its source compound.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Dopant {
    pub element: u8,
    /// Oxidation state (real charge), positive.
    pub charge: i64,
    /// The compound it is added as: `Y2O3`.
    pub compound: Formula,
    /// The text the user wrote.
    pub written: String,
}

impl Dopant {
    pub fn symbol(&self) -> &'static str {
        elements::symbol(self.element)
    }

    /// `Y3+`.
    pub fn ion(&self) -> String {
        ion_text(self.symbol(), self.charge)
    }
}

/// `Y3+`, `Li+`.
pub fn ion_text(symbol: &str, charge: i64) -> String {
    match charge {
        1 => format!("{symbol}+"),
        -1 => format!("{symbol}−"),
        c if c > 0 => format!("{symbol}{c}+"),
        c => format!("{symbol}{}−", -c),
    }
}

const ROMAN: &[&str] = &["I", "II", "III", "IV", "V", "VI", "VII", "VIII"];

fn error(text: &str, span: std::ops::Range<usize>, message: String, help: &str) -> Box<Diagnostic> {
    Box::new(
        Diagnostic::new(Code::Dopant, span, message)
            .with_help(help)
            .locate(1, text),
    )
}

const SPELLINGS: &str = "write the dopant as its compound (`Y2O3`, `Nb2O5`, `Li2O`) or as an ion with its charge (`Y+3`, `Y3+`, `Fe(III)`)";

/// Reads a dopant for `host`.
///
/// `dopant = compound | ion | symbol ;`
/// `ion = symbol ( "+" digits | digits "+" | "+" | "(" roman ")" ) ;`
pub fn parse_dopant(text: &str, host: &Host) -> Result<Dopant, Box<Diagnostic>> {
    let trimmed = text.trim();
    let lead = text.len() - text.trim_start().len();
    let all = lead..lead + trimmed.len();
    if trimmed.is_empty() {
        return Err(error(text, 0..0, "no dopant given".into(), SPELLINGS));
    }
    if !crate::balance::build::has_sites(host) {
        return Err(error(
            text,
            all,
            format!("{} has a sublattice with no sites", host.formula_text),
            "give every sublattice a count above zero",
        ));
    }
    let Some(anion) = main_anion(host).and_then(|i| host.sublattices.get(i)) else {
        return Err(error(
            text,
            all,
            format!(
                "{} has no anion sublattice to balance a dopant against",
                host.formula_text
            ),
            "dopant mechanisms need a host with cations and anions, e.g. ZrO2 or KCl",
        ));
    };
    let anion_charge = *anion.charge.numer();
    let symbol_len = trimmed
        .char_indices()
        .skip(1)
        .find(|(_, c)| !c.is_ascii_lowercase())
        .map_or(trimmed.len(), |(i, _)| i);
    let (symbol_text, rest) = trimmed.split_at(symbol_len);
    let ion_charge = ion_suffix(rest);
    let (element, charge, compound) =
        if let Some(charge) = ion_charge.or_else(|| rest.is_empty().then_some(0)) {
            let Some(element) = elements::by_symbol(symbol_text) else {
                return Err(error(
                    text,
                    lead..lead + symbol_text.len(),
                    format!("`{symbol_text}` is not an element symbol"),
                    "symbols are case-sensitive: one capital letter, then at most one small letter",
                ));
            };
            let charge = if charge == 0 {
                // A bare symbol: only when one positive state is common.
                let positive: Vec<i8> = element
                    .common_states
                    .iter()
                    .copied()
                    .filter(|s| *s > 0)
                    .collect();
                match positive.as_slice() {
                    [one] => i64::from(*one),
                    _ => {
                        let shown: Vec<String> = positive
                            .iter()
                            .map(|s| format!("`{}+{s}`", element.symbol))
                            .collect();
                        return Err(error(
                            text,
                            all,
                            format!(
                                "{} has {} common positive oxidation states; say which",
                                element.name,
                                if positive.is_empty() {
                                    "no".to_string()
                                } else {
                                    positive.len().to_string()
                                }
                            ),
                            &if shown.is_empty() {
                                SPELLINGS.to_string()
                            } else {
                                format!("write {}", shown.join(" or "))
                            },
                        ));
                    }
                }
            } else {
                charge
            };
            let compound = binary(element.z, charge, anion.element, anion_charge);
            (element, charge, compound)
        } else {
            let formula = parse_formula(text, all.clone()).map_err(|d| {
                let mut first = d
                    .into_iter()
                    .next()
                    .unwrap_or_else(|| Diagnostic::new(Code::Dopant, all.clone(), "not a dopant"));
                first.code = Code::Dopant;
                first.severity = Code::Dopant.default_severity();
                first.help = Some(SPELLINGS.into());
                Box::new(first.locate(1, text))
            })?;
            let (element, charge) = compound_cation(text, &all, &formula, host)?;
            let merged = merge(&formula).map_err(|o| too_large(text, &all, o))?;
            (element, charge, Some(merged))
        };
    if charge <= 0 {
        return Err(error(
            text,
            all,
            format!(
                "{} is an anion; dopants here go on cation sites or interstitials",
                ion_text(element.symbol, charge)
            ),
            "anion dopants (N on O sites, F on O sites) are not supported yet",
        ));
    }
    let Ok(state) = i8::try_from(charge) else {
        return Err(error(
            text,
            all,
            format!("an oxidation state of +{charge} does not exist"),
            SPELLINGS,
        ));
    };
    if !element.is_known_state(state) {
        let known: Vec<String> = element
            .known_states
            .iter()
            .filter(|s| **s > 0)
            .map(|s| format!("+{s}"))
            .collect();
        return Err(error(
            text,
            all,
            format!(
                "{} does not take the oxidation state +{charge} (known: {})",
                element.name,
                if known.is_empty() {
                    "none positive".into()
                } else {
                    known.join(", ")
                }
            ),
            SPELLINGS,
        ));
    }
    if host
        .sublattices
        .iter()
        .any(|s| s.element == element.z && s.charge < Q::from_integer(0))
    {
        return Err(error(
            text,
            all,
            format!("{} is an anion of {}", element.symbol, host.formula_text),
            "a dopant is a cation added to the host",
        ));
    }
    let Some(compound) = compound else {
        return Err(error(
            text,
            all,
            "no neutral compound can be written for this dopant".into(),
            SPELLINGS,
        ));
    };
    Ok(Dopant {
        element: element.z,
        charge,
        compound,
        written: trimmed.to_string(),
    })
}

/// `+3`, `3+`, `+`, `(III)` after the symbol: the charge. `None` when the
/// rest is not an ion suffix (it may be a formula).
fn ion_suffix(rest: &str) -> Option<i64> {
    if rest == "+" {
        return Some(1);
    }
    if let Some(digits) = rest.strip_prefix('+').or_else(|| rest.strip_suffix('+')) {
        if !digits.is_empty() && digits.len() <= 2 && digits.bytes().all(|b| b.is_ascii_digit()) {
            return digits.parse().ok();
        }
    }
    let roman = rest.strip_prefix('(')?.strip_suffix(')')?;
    ROMAN
        .iter()
        .position(|r| *r == roman)
        .and_then(|i| i64::try_from(i + 1).ok())
}

fn merge(formula: &Formula) -> Result<Formula, number::Overflow> {
    let mut atoms: Vec<(u8, Q)> = Vec::new();
    for (z, n) in &formula.atoms {
        match atoms.iter_mut().find(|(e, _)| e == z) {
            Some((_, m)) => *m = number::add(*m, *n)?,
            None => atoms.push((*z, *n)),
        }
    }
    Ok(Formula { atoms })
}

/// A K606 for a dopant whose counts or charges leave the exact range.
fn too_large(
    text: &str,
    all: &std::ops::Range<usize>,
    overflow: number::Overflow,
) -> Box<Diagnostic> {
    error(
        text,
        all.clone(),
        format!("`{}`: {overflow}", text.trim()),
        "write the dopant with the small counts of its formula unit, e.g. `Y2O3`",
    )
}

/// The one cation of a dopant compound and its oxidation state, from the
/// host's anion charges.
fn compound_cation(
    text: &str,
    all: &std::ops::Range<usize>,
    formula: &Formula,
    host: &Host,
) -> Result<(&'static elements::Element, i64), Box<Diagnostic>> {
    let formula = merge(formula).map_err(|o| too_large(text, all, o))?;
    let anion_of = |z: u8| {
        host.sublattices
            .iter()
            .find(|s| s.element == z && s.charge < Q::from_integer(0))
            .map(|s| s.charge)
    };
    let others: Vec<(u8, Q)> = formula
        .atoms
        .iter()
        .filter(|(z, _)| anion_of(*z).is_none())
        .copied()
        .collect();
    let anions: Vec<String> = host
        .sublattices
        .iter()
        .filter(|s| s.charge < Q::from_integer(0))
        .map(|s| elements::symbol(s.element).to_string())
        .collect();
    let [(cation, count)] = others.as_slice() else {
        let names: Vec<&str> = others.iter().map(|(z, _)| elements::symbol(*z)).collect();
        return Err(error(
            text,
            all.clone(),
            if others.is_empty() {
                format!("`{}` has no cation", text.trim())
            } else {
                format!(
                    "`{}` brings {}, but a dopant compound holds one cation and the host's anions ({})",
                    text.trim(),
                    names.join(" and "),
                    anions.join(", ")
                )
            },
            "write the dopant ion instead, e.g. `Ca+2`; the compound is then formed with the host's anion",
        ));
    };
    let mut negative = Q::from_integer(0);
    for (z, n) in &formula.atoms {
        if let Some(q) = anion_of(*z) {
            negative = number::mul(q, *n)
                .and_then(|x| number::add(negative, x))
                .map_err(|o| too_large(text, all, o))?;
        }
    }
    let state = negative
        .checked_neg()
        .and_then(|x| x.checked_div(*count))
        .map_err(|o| too_large(text, all, o))?;
    let element = elements::by_z(*cation)
        .ok_or_else(|| error(text, all.clone(), "unknown element".into(), SPELLINGS))?;
    if !state.is_integer() {
        return Err(error(
            text,
            all.clone(),
            format!(
                "`{}` puts {} at the average charge {}, not one oxidation state",
                text.trim(),
                element.symbol,
                crate::base::number::to_plain(state)
            ),
            &format!("write the ion, e.g. `{}+3`", element.symbol),
        ));
    }
    Ok((element, *state.numer()))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn host(spec: &str) -> Host {
        Host::from_spec(spec).unwrap()
    }

    fn read(text: &str, host_spec: &str) -> (String, i64, String) {
        let d = parse_dopant(text, &host(host_spec)).unwrap_or_else(|e| panic!("{text}: {e:?}"));
        let compound = crate::notation::render_term(
            &crate::balance::build::term(crate::balance::build::compound(d.compound.clone())),
            crate::notation::Style::Ascii,
        );
        (d.symbol().to_string(), d.charge, compound)
    }

    #[test]
    fn spellings() {
        // source: common practice (oxidation states of these dopants)
        let want = |s: &str, c: i64, f: &str| (s.to_string(), c, f.to_string());
        assert_eq!(read("Y2O3", "ZrO2"), want("Y", 3, "Y2O3"));
        assert_eq!(read("Nb2O5", "TiO2"), want("Nb", 5, "Nb2O5"));
        assert_eq!(read("Li2O", "NiO"), want("Li", 1, "Li2O"));
        assert_eq!(read("CaCl2", "KCl"), want("Ca", 2, "CaCl2"));
        assert_eq!(read("Y+3", "ZrO2"), want("Y", 3, "Y2O3"));
        assert_eq!(read("Y3+", "ZrO2"), want("Y", 3, "Y2O3"));
        assert_eq!(read("Li+", "NiO"), want("Li", 1, "Li2O"));
        assert_eq!(read("Fe(III)", "MgO"), want("Fe", 3, "Fe2O3"));
        assert_eq!(read("Y", "ZrO2"), want("Y", 3, "Y2O3"));
        assert_eq!(read("Ca+2", "CaF2"), want("Ca", 2, "CaF2"));
        assert_eq!(read(" Gd2O3 ", "CeO2"), want("Gd", 3, "Gd2O3"));
    }

    #[test]
    fn mistakes_are_explained() {
        let h = host("ZrO2");
        for (text, needle) in [
            ("Fe", "say which"),
            ("Qq+3", "not an element"),
            ("Y+5", "does not take"),
            ("Fe3O4", "average charge 8/3"),
            ("CaF2", "brings Ca and F"),
            ("O2", "has no cation"),
            ("Y2O3!", "Y2O3!"),
            ("", "no dopant"),
            ("O+2", "anion"),
        ] {
            let e = parse_dopant(text, &h).expect_err(text);
            assert_eq!(e.code, Code::Dopant, "{text}");
            assert!(
                e.message.contains(needle)
                    || e.help.as_deref().unwrap_or("").contains(needle)
                    || needle == "Y2O3!",
                "{text}: {e:?}"
            );
            assert_eq!(e.line, 1);
        }
    }
}
