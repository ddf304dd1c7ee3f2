//! Properties of everything Lacuna generates, over random hosts and dopants
//! drawn from the element table: every reaction `dope` and `native` print
//! reads back and passes `check`, and balancing is invariant under
//! reordering, moving and scaling the species. Self-contained.

use lacuna::balance::{Options, Side, Status, balance};
use lacuna::base::elements;
use lacuna::base::number::Q;
use lacuna::check::check_reaction;
use lacuna::generate::dope::{DopeOptions, mechanisms, parse_dopant};
use lacuna::generate::native::native_reactions;
use lacuna::host::Host;
use lacuna::notation::{Reaction, Style, Term, parse_reaction, render_reaction, render_term};
use proptest::prelude::*;

/// Metals with a common positive oxidation state: (symbol, state).
fn cations() -> Vec<(&'static str, i8)> {
    elements::all()
        .iter()
        .filter(|e| e.z <= 96 && e.electronegativity < 2.2 && e.symbol != "H")
        .flat_map(|e| {
            e.common_states
                .iter()
                .filter(|s| **s > 0 && **s <= 6)
                .map(move |s| (e.symbol, *s))
        })
        .collect()
}

const ANIONS: &[(&str, i8)] = &[("O", -2), ("F", -1), ("Cl", -1), ("S", -2)];

fn gcd(a: i64, b: i64) -> i64 {
    if b == 0 { a.abs() } else { gcd(b, a % b) }
}

fn count(n: i64) -> String {
    if n == 1 { String::new() } else { n.to_string() }
}

/// A host spec with explicit charges (so inference never has to guess):
/// one or two cations, one anion, the smallest neutral formula.
fn host_spec() -> impl Strategy<Value = String> {
    let list = cations();
    let n = list.len();
    (0..n, 0..n, 0..ANIONS.len(), prop::bool::ANY, 1i64..=2).prop_filter_map(
        "two distinct cations and a neutral integer formula",
        move |(i, j, k, two, ratio)| {
            let (a, qa) = list[i];
            let (x, qx) = ANIONS[k];
            let qx = i64::from(-qx);
            if !two {
                let g = gcd(i64::from(qa), qx);
                let (ca, cx) = (qx / g, i64::from(qa) / g);
                return Some(format!(
                    "{a}{}{x}{} sites {a} +{qa}, {x} -{qx}",
                    count(ca),
                    count(cx)
                ));
            }
            let (b, qb) = list[j];
            if a == b {
                return None;
            }
            let positive = i64::from(qa) + ratio * i64::from(qb);
            if positive % qx != 0 {
                return None;
            }
            let cx = positive / qx;
            Some(format!(
                "{a}{b}{}{x}{} sites {a} +{qa}, {b} +{qb}, {x} -{qx}",
                count(ratio),
                count(cx)
            ))
        },
    )
}

fn dopant_spec() -> impl Strategy<Value = String> {
    let list = cations();
    (0..list.len()).prop_map(move |i| format!("{}+{}", list[i].0, list[i].1))
}

/// Renders, reads back and checks; returns the failure, if any.
fn passes_check(reaction: &Reaction, host: &Host) -> Result<(), String> {
    for style in [Style::Ascii, Style::Unicode] {
        let text = render_reaction(reaction, style);
        let (parsed, diags) = parse_reaction(&text, 0..text.len());
        let parsed = parsed.ok_or_else(|| format!("{text} does not read back: {diags:?}"))?;
        let verdict = check_reaction(&parsed, Some(host));
        if !verdict.ok() {
            return Err(format!("{text} fails check: {:?}", verdict.diagnostics));
        }
    }
    Ok(())
}

/// (side, species text, coefficient) of every term, sorted.
fn terms_of(reaction: &Reaction) -> Vec<(bool, String, Q)> {
    let mut v: Vec<(bool, String, Q)> = reaction
        .terms()
        .filter(|(_, t)| t.entity != lacuna::notation::Entity::Nil)
        .map(|(right, t)| {
            let mut plain = t.clone();
            plain.coefficient = Q::from_integer(1);
            (right, render_term(&plain, Style::Ascii), t.coefficient)
        })
        .collect();
    v.sort();
    v
}

/// Text of the reaction with the given species, coefficients written only
/// when `scale` is set (then times `scale`).
fn species_text(left: &[Term], right: &[Term], scale: Option<i64>) -> String {
    let side = |terms: &[Term]| -> String {
        if terms.is_empty() {
            return "nil".into();
        }
        terms
            .iter()
            .map(|t| {
                let mut t = t.clone();
                match scale {
                    Some(k) => {
                        t.coefficient = t
                            .coefficient
                            .checked_mul(Q::from_integer(k))
                            .expect("small coefficients");
                        let c = t.coefficient;
                        t.coefficient = Q::from_integer(1);
                        format!(
                            "{}/{} {}",
                            c.numer(),
                            c.denom(),
                            render_term(&t, Style::Ascii)
                        )
                    }
                    None => {
                        t.coefficient = Q::from_integer(1);
                        render_term(&t, Style::Ascii)
                    }
                }
            })
            .collect::<Vec<_>>()
            .join(" + ")
    };
    format!("{} -> {}", side(left), side(right))
}

fn parse(text: &str) -> Reaction {
    let (r, d) = parse_reaction(text, 0..text.len());
    r.unwrap_or_else(|| panic!("{text}: {d:?}"))
}

fn without_nil(terms: &[Term]) -> Vec<Term> {
    terms
        .iter()
        .filter(|t| t.entity != lacuna::notation::Entity::Nil)
        .cloned()
        .collect()
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 96, ..ProptestConfig::default() })]

    #[test]
    fn everything_generated_passes_check(spec in host_spec(), dopant in dopant_spec()) {
        let host = Host::from_spec(&spec).map_err(|d| TestCaseError::fail(format!("{spec}: {d:?}")))?;
        for (name, reaction) in native_reactions(&host) {
            passes_check(&reaction, &host).map_err(|e| TestCaseError::fail(format!("{spec} native {name}: {e}")))?;
        }
        let Ok(d) = parse_dopant(&dopant, &host) else {
            // Some states have no neutral compound with this anion; that is an error, not a crash.
            return Ok(());
        };
        let report = mechanisms(&host, &d, &DopeOptions::default())
            .map_err(|e| TestCaseError::fail(format!("{spec} {dopant}: {e:?}")))?;
        for m in &report.mechanisms {
            for r in [&m.reaction, &m.integer] {
                passes_check(r, &host).map_err(|e| TestCaseError::fail(format!("{spec} + {dopant}: {e}")))?;
            }
        }
    }

    #[test]
    fn balancing_ignores_order_side_and_scale(
        spec in host_spec(),
        dopant in dopant_spec(),
        pick in any::<prop::sample::Index>(),
        rotate in 0usize..8,
        moved in any::<prop::sample::Index>(),
        scale in 1i64..6,
    ) {
        let host = Host::from_spec(&spec).map_err(|d| TestCaseError::fail(format!("{d:?}")))?;
        let Ok(d) = parse_dopant(&dopant, &host) else { return Ok(()) };
        let Ok(report) = mechanisms(&host, &d, &DopeOptions::default()) else { return Ok(()) };
        let mut reactions: Vec<Reaction> = report.mechanisms.iter().map(|m| m.integer.clone()).collect();
        reactions.extend(native_reactions(&host).into_iter().map(|(_, r)| r).filter(|r| {
            // Only reactions whose species fix their own coefficients.
            let text = species_text(&without_nil(&r.left), &without_nil(&r.right), None);
            balance(&parse(&text), Some(&host), Options::default()).status == Status::Unique
        }));
        prop_assume!(!reactions.is_empty());
        let original = &reactions[pick.index(reactions.len())];
        // Integer form: the smallest integers, as the balancer gives them.
        let integer = {
            let text = species_text(&without_nil(&original.left), &without_nil(&original.right), None);
            let outcome = balance(&parse(&text), Some(&host), Options::default());
            prop_assert_eq!(outcome.status, Status::Unique, "{}", text);
            outcome.reactions[0].reaction.clone()
        };

        // Reordered within each side.
        let mut left = without_nil(&integer.left);
        let mut right = without_nil(&integer.right);
        if !left.is_empty() { let n = left.len(); left.rotate_left(rotate % n); }
        if !right.is_empty() { let n = right.len(); right.rotate_right(rotate % n); left.reverse(); }
        let text = species_text(&left, &right, None);
        let outcome = balance(&parse(&text), Some(&host), Options::default());
        prop_assert_eq!(outcome.status, Status::Unique);
        prop_assert_eq!(terms_of(&outcome.reactions[0].reaction), terms_of(&integer), "{}", text);
        // What balance prints passes check, in both forms.
        for shown in [&outcome.reactions[0].reaction, &outcome.reactions[0].conventional] {
            passes_check(shown, &host).map_err(|e| TestCaseError::fail(format!("balance {text}: {e}")))?;
        }

        // One species written on the wrong side comes back to its own side.
        let total = left.len() + right.len();
        let k = moved.index(total);
        let (mut l2, mut r2) = (left.clone(), right.clone());
        if k < l2.len() { let t = l2.remove(k); r2.push(t); } else { let t = r2.remove(k - l2.len()); l2.push(t); }
        let text = species_text(&l2, &r2, None);
        let outcome = balance(&parse(&text), Some(&host), Options::default());
        prop_assert_eq!(outcome.status, Status::Unique);
        // When as many species would move one way as the other, the direction
        // is a tie that keeps the first term where it was written: the same
        // reaction, possibly reversed.
        let got = terms_of(&outcome.reactions[0].reaction);
        let reversed: Vec<(bool, String, Q)> = {
            let mut v: Vec<_> = terms_of(&integer).into_iter().map(|(s, t, c)| (!s, t, c)).collect();
            v.sort();
            v
        };
        prop_assert!(got == terms_of(&integer) || got == reversed, "{}: {:?}", text, got);
        prop_assert!(outcome.reactions[0].terms.iter().any(|t| t.side != t.written));
        prop_assert!(outcome.reactions[0].terms.iter().all(|t| t.side == Side::Left || t.side == Side::Right));

        // Every coefficient written, times `scale`: kept exactly, and still balanced.
        let text = species_text(&left, &right, Some(scale));
        let outcome = balance(&parse(&text), Some(&host), {
            let mut options = Options::default();
            options.keep_written = true;
            options
        });
        prop_assert_eq!(outcome.status, Status::Unique, "{}", text);
        let scaled: Vec<(bool, String, Q)> = terms_of(&integer)
            .into_iter()
            .map(|(s, t, c)| (s, t, c.checked_mul(Q::from_integer(scale)).expect("small coefficients")))
            .collect();
        prop_assert_eq!(terms_of(&outcome.reactions[0].reaction), scaled);
        // And ignoring the written coefficients gives the smallest integers again.
        let outcome = balance(&parse(&text), Some(&host), Options::default());
        prop_assert_eq!(terms_of(&outcome.reactions[0].reaction), terms_of(&integer));
    }
}
