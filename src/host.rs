//! The host crystal: its sublattices, their formal charges and site ratio.
//!
//! In: a host specification such as `ZrO2` or
//! `Fe3O4 sites Fe:A +3 x1, Fe:B +5/2 x2, O -2 x4`. Out: a `Host` whose
//! sublattices the checker balances against, or diagnostics. Formal charges
//! are inferred from the usual oxidation states when not given; an ambiguous
//! formula is an error that asks for them, never a guess.

#![deny(clippy::arithmetic_side_effects)]

use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::elements;
use crate::base::number::{self, Q};
use crate::notation::{Formula, Span, parse_formula};
use std::fmt::Write;

/// One sublattice of regular sites.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Sublattice {
    pub element: u8,
    /// Distinguishes two sublattices of one element (`Fe:A`, `Fe:B`).
    pub label: Option<Box<str>>,
    /// Formal (real) charge of the ion on this site in the perfect crystal.
    pub charge: Q,
    /// Sites per formula unit.
    pub count: Q,
}

impl Sublattice {
    /// `Fe:A` or `O`.
    pub fn name(&self) -> String {
        let symbol = elements::symbol(self.element);
        match &self.label {
            Some(label) => format!("{symbol}:{label}"),
            None => symbol.to_string(),
        }
    }
}

/// A host crystal.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Host {
    /// The formula as written.
    pub formula_text: String,
    pub formula: Formula,
    pub sublattices: Vec<Sublattice>,
    /// Whether the formal charges were inferred rather than stated.
    pub inferred: bool,
}

/// What looking a site up in the host found.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum SiteLookup {
    Found(usize),
    /// The element has several labelled sublattices and none was named.
    NeedsLabel,
    Missing,
}

/// Elements taken as anions at their usual oxidation state when inferring.
const ANIONS: &[(&str, i64)] = &[
    ("O", -2),
    ("S", -2),
    ("Se", -2),
    ("Te", -2),
    ("F", -1),
    ("Cl", -1),
    ("Br", -1),
    ("I", -1),
    ("N", -3),
];

impl Host {
    /// Parses a host specification at `within` of `source` (spans refer to `source`).
    ///
    /// `host = formula [ "sites" site-decl { "," site-decl } ] ;`
    pub fn parse(source: &str, within: Span) -> Result<Host, Vec<Diagnostic>> {
        let text = &source[within.clone()];
        let lead = text.len().saturating_sub(text.trim_start().len());
        let text = text.trim();
        let start = byte_at(within.start, lead);
        let (formula_part, sites_part) =
            match text.find(" sites ").or_else(|| text.find("\tsites ")) {
                Some(i) => {
                    let after = byte_at(i, " sites ".len());
                    (&text[..i], Some((byte_at(start, after), &text[after..])))
                }
                None => match text.strip_suffix(" sites") {
                    Some(f) => (f, Some((byte_at(start, text.len()), ""))),
                    None => (text, None),
                },
            };
        let formula_span = start..byte_at(start, formula_part.trim_end().len());
        if formula_span.is_empty() {
            return Err(vec![
                Diagnostic::new(Code::HostFormula, within, "the host has no formula")
                    .with_help("write a formula such as `host ZrO2`"),
            ]);
        }
        let formula = merge(parse_formula(source, formula_span.clone())?).map_err(|o| {
            vec![too_large(
                formula_span.clone(),
                "the element counts of the host formula",
                o,
            )]
        })?;
        if let Some((z, _)) = formula.atoms.iter().find(|(_, n)| *n <= Q::from_integer(0)) {
            return Err(vec![Diagnostic::new(Code::HostFormula, formula_span, format!("{} has a count of zero in the host formula", elements::symbol(*z)))
                .with_help("every element of a host occurs at least once per formula unit; drop it or give its count")]);
        }
        let formula_text = source[formula_span.clone()].to_string();
        let sublattices = match sites_part {
            Some((offset, decl)) => explicit_sites(offset, decl, &formula, &formula_span)?,
            None => infer_sites(&formula, &formula_text)
                .map_err(|d| vec![d.with_span(formula_span.clone())])?,
        };
        Ok(Host {
            formula_text,
            formula,
            sublattices,
            inferred: sites_part.is_none(),
        })
    }

    /// Parses a whole specification string, as given with `--host`.
    pub fn from_spec(spec: &str) -> Result<Host, Vec<Diagnostic>> {
        Host::parse(spec, 0..spec.len())
    }

    /// Finds the sublattice for a site written as `element[:label]`.
    pub fn lookup(&self, element: u8, label: Option<&str>) -> SiteLookup {
        let mut of_element = self
            .sublattices
            .iter()
            .enumerate()
            .filter(|(_, s)| s.element == element);
        match label {
            Some(label) => of_element
                .find(|(_, s)| s.label.as_deref() == Some(label))
                .map_or(SiteLookup::Missing, |(i, _)| SiteLookup::Found(i)),
            None => match (of_element.next(), of_element.next()) {
                (Some((i, s)), None) if s.label.is_none() => SiteLookup::Found(i),
                (Some(_), _) => SiteLookup::NeedsLabel,
                (None, _) => SiteLookup::Missing,
            },
        }
    }

    /// Whether an element occurs in the host.
    pub fn contains_element(&self, z: u8) -> bool {
        self.formula.contains(z)
    }

    /// `Zr:O = 1:2`.
    pub fn ratio_text(&self) -> String {
        let names: Vec<String> = self.sublattices.iter().map(Sublattice::name).collect();
        let counts: Vec<String> = self
            .sublattices
            .iter()
            .map(|s| number::to_plain(s.count))
            .collect();
        format!("{} = {}", names.join(" : "), counts.join(" : "))
    }

    /// One line per sublattice, for `--verbose` output and the REPL.
    pub fn describe(&self) -> String {
        let mut out = format!("host {} ({}", self.formula_text, self.ratio_text());
        out.push_str(if self.inferred {
            "; charges inferred)"
        } else {
            ")"
        });
        for s in &self.sublattices {
            let _ = write!(
                out,
                "\n  {:<6} formal charge {:>5}  sites {}",
                s.name(),
                number::signed(s.charge),
                number::to_plain(s.count)
            );
        }
        out
    }
}

/// Sums repeated elements (`CH3COOH` style formulas) into one count each.
fn merge(formula: Formula) -> Result<Formula, number::Overflow> {
    let mut atoms: Vec<(u8, Q)> = Vec::new();
    for (z, n) in formula.atoms {
        match atoms.iter_mut().find(|(e, _)| *e == z) {
            Some((_, m)) => *m = number::add(*m, n)?,
            None => atoms.push((z, n)),
        }
    }
    Ok(Formula { atoms })
}

/// `at + len` for byte offsets within one source text: the sum is at most
/// the text's length, so it never saturates.
fn byte_at(at: usize, len: usize) -> usize {
    at.saturating_add(len)
}

/// An H201 at `span` saying that `what` left the exact range.
fn too_large(span: Span, what: &str, overflow: number::Overflow) -> Diagnostic {
    Diagnostic::new(Code::HostFormula, span, format!("{what}: {overflow}")).with_help(
        "Lacuna keeps counts and charges exact; write the formula unit with smaller counts",
    )
}

trait WithSpan {
    fn with_span(self, span: Span) -> Self;
}

impl WithSpan for Diagnostic {
    fn with_span(mut self, span: Span) -> Self {
        self.span = span;
        self
    }
}

/// Infers formal charges: anions at their usual state, cations from the
/// combinations of their common states that make the formula neutral.
fn infer_sites(formula: &Formula, text: &str) -> Result<Vec<Sublattice>, Diagnostic> {
    let explicit_help = || {
        let mut example = format!("state the charges, e.g. `host {text} sites ");
        let parts: Vec<String> = formula
            .atoms
            .iter()
            .map(|(z, _)| format!("{} <charge>", elements::symbol(*z)))
            .collect();
        example.push_str(&parts.join(", "));
        example.push('`');
        example
    };
    if let [(z, n)] = formula.atoms.as_slice() {
        return Ok(vec![Sublattice {
            element: *z,
            label: None,
            charge: Q::from_integer(0),
            count: *n,
        }]);
    }
    let mut anion_charge = Q::from_integer(0);
    let mut cations: Vec<(u8, Q)> = Vec::new();
    let mut charges: Vec<(u8, Q)> = Vec::new();
    for (z, n) in &formula.atoms {
        match ANIONS.iter().find(|(s, _)| *s == elements::symbol(*z)) {
            Some((_, state)) => {
                anion_charge = Q::from_integer(*state)
                    .checked_mul(*n)
                    .and_then(|c| number::add(anion_charge, c))
                    .map_err(|o| too_large(0..0, "the anion charge of the host formula", o))?;
                charges.push((*z, Q::from_integer(*state)));
            }
            None => cations.push((*z, *n)),
        }
    }
    if cations.is_empty() || anion_charge == Q::from_integer(0) {
        return Err(Diagnostic::new(
            Code::HostAmbiguous,
            0..0,
            format!("cannot tell the cations from the anions in `{text}`"),
        )
        .with_help(explicit_help()));
    }
    let options: Vec<Vec<i64>> = cations
        .iter()
        .map(|(z, _)| {
            elements::by_z(*z)
                .map(|e| {
                    e.common_states
                        .iter()
                        .filter(|s| **s > 0)
                        .map(|s| i64::from(*s))
                        .collect()
                })
                .unwrap_or_default()
        })
        .collect();
    let mut solutions: Vec<Vec<i64>> = Vec::new();
    // Saturating: fifty cations with three states each would overflow.
    let total = options
        .iter()
        .fold(1usize, |acc, o| acc.saturating_mul(o.len().max(1)));
    if total > 100_000 {
        return Err(Diagnostic::new(
            Code::HostAmbiguous,
            0..0,
            format!(
                "`{}` has too many cations ({}) to try every combination of oxidation states",
                crate::notation::quoted(text),
                cations.len()
            ),
        )
        .with_help(explicit_help()));
    }
    if options.iter().all(|o| !o.is_empty()) {
        let mut index = vec![0usize; cations.len()];
        'outer: loop {
            let sum = number::sum_checked(
                cations
                    .iter()
                    .zip(&index)
                    .zip(&options)
                    .map(|(((_, n), i), o)| Q::from_integer(o[*i]).checked_mul(*n))
                    .chain([Ok(anion_charge)]),
            );
            // The sum is exact whenever it fits, so an overflowing one is not zero.
            if sum == Ok(Q::from_integer(0)) {
                solutions.push(index.iter().zip(&options).map(|(i, o)| o[*i]).collect());
            }
            for k in 0..index.len() {
                // An index into a list of at most a few oxidation states.
                index[k] = index[k].saturating_add(1);
                if index[k] < options[k].len() {
                    continue 'outer;
                }
                index[k] = 0;
            }
            break;
        }
    }
    match solutions.as_slice() {
        [one] => {
            for ((z, _), state) in cations.iter().zip(one) {
                charges.push((*z, Q::from_integer(*state)));
            }
        }
        [] => {
            let message = if cations.len() == 1 {
                let average = anion_charge
                    .checked_neg()
                    .and_then(|a| a.checked_div(cations[0].1))
                    .map_err(|o| too_large(0..0, "the average cation charge", o))?;
                format!(
                    "`{text}` needs {} at an average charge of {}, which is not one of its common oxidation states",
                    elements::symbol(cations[0].0),
                    number::to_plain(average)
                )
            } else {
                format!("no combination of common oxidation states makes `{text}` neutral")
            };
            return Err(
                Diagnostic::new(Code::HostAmbiguous, 0..0, message).with_help(explicit_help())
            );
        }
        many => {
            let shown: Vec<String> = many
                .iter()
                .take(4)
                .map(|states| {
                    cations
                        .iter()
                        .zip(states)
                        .map(|((z, _), s)| format!("{}{:+}", elements::symbol(*z), s))
                        .collect::<Vec<_>>()
                        .join(" ")
                })
                .collect();
            return Err(Diagnostic::new(
                Code::HostAmbiguous,
                0..0,
                format!(
                    "`{text}` fits more than one set of oxidation states: {}",
                    shown.join("; ")
                ),
            )
            .with_help(explicit_help()));
        }
    }
    Ok(formula
        .atoms
        .iter()
        .map(|(z, n)| {
            let charge = charges
                .iter()
                .find(|(e, _)| e == z)
                .map_or(Q::from_integer(0), |(_, c)| *c);
            Sublattice {
                element: *z,
                label: None,
                charge,
                count: *n,
            }
        })
        .collect())
}

/// `site-decl = symbol [ ":" label ] signed-number [ ( "x" | "×" | "*" ) number ] ;`
fn explicit_sites(
    offset: usize,
    decl: &str,
    formula: &Formula,
    formula_span: &Span,
) -> Result<Vec<Sublattice>, Vec<Diagnostic>> {
    let mut diags = Vec::new();
    let mut sites: Vec<(Sublattice, Span, bool)> = Vec::new();
    let mut at = offset;
    for entry in decl.split(',') {
        let span_all = at..byte_at(at, entry.len());
        at = byte_at(span_all.end, 1);
        let lead = entry.len().saturating_sub(entry.trim_start().len());
        let entry_start = byte_at(span_all.start, lead);
        let entry_span = entry_start..byte_at(entry_start, entry.trim().len());
        let words: Vec<&str> = entry.split_whitespace().collect();
        let bad = |msg: String| {
            Diagnostic::new(Code::HostFormula, entry_span.clone(), msg).with_help(
                "write each site as `Element[:label] charge [xcount]`, e.g. `Fe:A +3 x1`",
            )
        };
        let (name, charge_text, count_text) = match words.as_slice() {
            [name, charge] => (*name, *charge, None),
            [name, charge, count] => (*name, *charge, Some(*count)),
            _ => {
                diags.push(bad(format!("`{}` is not a site declaration", entry.trim())));
                continue;
            }
        };
        let (symbol_text, label) = match name.split_once(':') {
            Some((s, l)) if !l.is_empty() && l.chars().all(|c| c.is_ascii_alphanumeric()) => {
                (s, Some(Box::<str>::from(l)))
            }
            Some(_) => {
                diags.push(bad(format!("`{name}` has an empty or invalid label")));
                continue;
            }
            None => (name, None),
        };
        let Some(element) = elements::by_symbol(symbol_text) else {
            diags.push(bad(format!("`{symbol_text}` is not an element symbol")));
            continue;
        };
        if !formula.contains(element.z) {
            diags.push(bad(format!("the formula has no {symbol_text}")));
            continue;
        }
        let Ok(charge) = number::parse(charge_text) else {
            diags.push(bad(format!("`{charge_text}` is not a charge")));
            continue;
        };
        let count = match count_text.map(|c| c.trim_start_matches(['x', '×', '*'])) {
            Some(c) => match number::parse(c) {
                Ok(q) if q > Q::from_integer(0) => Some(q),
                _ => {
                    diags.push(bad(format!("`{c}` is not a site count")));
                    continue;
                }
            },
            None => None,
        };
        let given = count.is_some();
        let count = match count {
            Some(q) => q,
            None => match formula.count(element.z) {
                Ok(q) => q,
                Err(o) => {
                    diags.push(too_large(
                        entry_span,
                        "the element's count in the formula",
                        o,
                    ));
                    continue;
                }
            },
        };
        sites.push((
            Sublattice {
                element: element.z,
                label,
                charge,
                count,
            },
            entry_span,
            given,
        ));
    }
    if !diags.is_empty() {
        return Err(diags);
    }
    for (z, n) in &formula.atoms {
        let of: Vec<&(Sublattice, Span, bool)> =
            sites.iter().filter(|(s, _, _)| s.element == *z).collect();
        if of.is_empty() {
            diags.push(
                Diagnostic::new(
                    Code::HostFormula,
                    formula_span.clone(),
                    format!("{} has no site declared", elements::symbol(*z)),
                )
                .with_help(format!(
                    "add `{} <charge>` to the sites",
                    elements::symbol(*z)
                )),
            );
            continue;
        }
        if of.len() > 1 && of.iter().any(|(_, _, given)| !given) {
            diags.push(
                Diagnostic::new(
                    Code::HostFormula,
                    of[0].1.clone(),
                    format!(
                        "{} sits on {} sublattices; give each a count",
                        elements::symbol(*z),
                        of.len()
                    ),
                )
                .with_help("e.g. `Fe:A +3 x1, Fe:B +5/2 x2`"),
            );
            continue;
        }
        let Ok(sum) = number::sum(of.iter().map(|(s, _, _)| s.count)) else {
            let counts: Vec<String> = of
                .iter()
                .map(|(s, _, _)| number::to_plain(s.count))
                .collect();
            let last = of.last().map_or(of[0].1.end, |(_, span, _)| span.end);
            diags.push(
                Diagnostic::new(
                    Code::HostFormula,
                    of[0].1.start..last,
                    format!(
                        "the {} site counts {} add up to more than Lacuna holds exactly (about 9.2e18)",
                        elements::symbol(*z),
                        counts.join(" + ")
                    ),
                )
                .with_help(format!(
                    "the counts of a sublattice are sites per formula unit; make the {} counts add up to {}",
                    elements::symbol(*z),
                    number::to_plain(*n)
                )),
            );
            continue;
        };
        if sum != *n {
            diags.push(Diagnostic::new(
                Code::HostFormula,
                of[0].1.clone(),
                format!(
                    "the {} sites add up to {} per formula unit, the formula has {}",
                    elements::symbol(*z),
                    number::to_plain(sum),
                    number::to_plain(*n)
                ),
            ));
        }
        let mut labels: Vec<Option<&str>> = of.iter().map(|(s, _, _)| s.label.as_deref()).collect();
        labels.sort();
        if labels.windows(2).any(|w| w[0] == w[1]) {
            diags.push(Diagnostic::new(
                Code::HostFormula,
                of[0].1.clone(),
                format!("{} sublattices need distinct labels", elements::symbol(*z)),
            ));
        }
    }
    let net = number::sum_checked(sites.iter().map(|(s, _, _)| s.charge.checked_mul(s.count)));
    let Ok(net) = net else {
        if diags.is_empty() {
            diags.push(
                Diagnostic::new(
                    Code::HostFormula,
                    offset..self::byte_at(offset, decl.len()),
                    "the declared charges times site counts add up to more than Lacuna holds exactly (about 9.2e18)",
                )
                .with_help("formal charges times site counts must add up to zero; use smaller site counts"),
            );
        }
        return Err(diags);
    };
    if diags.is_empty() && net != Q::from_integer(0) {
        diags.push(
            Diagnostic::new(
                Code::HostFormula,
                offset..self::byte_at(offset, decl.len()),
                format!(
                    "the declared charges leave the formula unit with charge {}",
                    number::minus_text(net)
                ),
            )
            .with_help("formal charges times site counts must add up to zero"),
        );
    }
    if diags.is_empty() {
        Ok(sites.into_iter().map(|(s, _, _)| s).collect())
    } else {
        Err(diags)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn charges(spec: &str) -> Vec<(String, String, String)> {
        let host = Host::from_spec(spec).unwrap_or_else(|d| panic!("{spec}: {d:?}"));
        host.sublattices
            .iter()
            .map(|s| {
                (
                    s.name(),
                    number::to_plain(s.charge),
                    number::to_plain(s.count),
                )
            })
            .collect()
    }

    fn row(name: &str, charge: &str, count: &str) -> (String, String, String) {
        (name.into(), charge.into(), count.into())
    }

    // source: common practice (formal oxidation states of these hosts are textbook facts).
    #[test]
    fn infers_common_hosts() {
        assert_eq!(
            charges("ZrO2"),
            vec![row("Zr", "4", "1"), row("O", "-2", "2")]
        );
        assert_eq!(
            charges("BaTiO3"),
            vec![
                row("Ba", "2", "1"),
                row("Ti", "4", "1"),
                row("O", "-2", "3")
            ]
        );
        assert_eq!(
            charges("Al2O3"),
            vec![row("Al", "3", "2"), row("O", "-2", "3")]
        );
        assert_eq!(
            charges("MgAl2O4"),
            vec![
                row("Mg", "2", "1"),
                row("Al", "3", "2"),
                row("O", "-2", "4")
            ]
        );
        assert_eq!(
            charges("Fe2O3"),
            vec![row("Fe", "3", "2"), row("O", "-2", "3")]
        );
        assert_eq!(
            charges("NaCl"),
            vec![row("Na", "1", "1"), row("Cl", "-1", "1")]
        );
        assert_eq!(charges("Al"), vec![row("Al", "0", "1")]);
    }

    #[test]
    fn a_charged_formula_unit_is_named_with_a_true_minus() {
        // Zr at +3 with two O at -2: 3 - 4 = -1 per formula unit
        // (source: common practice, formal charges times site counts).
        let err = Host::from_spec("ZrO2 sites Zr +3, O -2").unwrap_err();
        assert_eq!(
            err[0].message,
            "the declared charges leave the formula unit with charge \u{2212}1"
        );
    }

    #[test]
    fn mixed_valence_needs_explicit_states() {
        let err = Host::from_spec("Fe3O4").unwrap_err();
        assert_eq!(err[0].code, Code::HostAmbiguous);
        assert!(err[0].message.contains("8/3"), "{}", err[0].message);
        assert_eq!(
            charges("Fe3O4 sites Fe:A +3 x1, Fe:B +5/2 x2, O -2"),
            vec![
                row("Fe:A", "3", "1"),
                row("Fe:B", "5/2", "2"),
                row("O", "-2", "4")
            ]
        );
    }

    #[test]
    fn explicit_sites_are_validated() {
        for (spec, needle) in [
            ("Fe3O4 sites Fe:A +3 x1, Fe:B +3 x2, O -2", "charge"),
            ("Fe3O4 sites Fe:A +3, Fe:B +5/2, O -2", "give each a count"),
            ("ZrO2 sites Zr +4", "O has no site"),
            ("ZrO2 sites Zr +4, O -2, Y +3", "no Y"),
        ] {
            let err = Host::from_spec(spec).unwrap_err();
            assert!(
                err.iter().any(|d| d.message.contains(needle)),
                "{spec}: {err:?}"
            );
        }
    }

    #[test]
    fn lookup_by_label() {
        let host = Host::from_spec("Fe3O4 sites Fe:A +3 x1, Fe:B +5/2 x2, O -2").unwrap();
        let fe = elements::by_symbol("Fe").unwrap().z;
        assert_eq!(host.lookup(fe, None), SiteLookup::NeedsLabel);
        assert_eq!(host.lookup(fe, Some("B")), SiteLookup::Found(1));
        assert_eq!(host.lookup(fe, Some("C")), SiteLookup::Missing);
        assert_eq!(host.ratio_text(), "Fe:A : Fe:B : O = 1 : 2 : 4");
    }
}
