//! The regimes of a defect model, in the shape the fit compares slopes with.
//!
//! In: a `Model` (a reaction file read by `crate::model`). Out:
//! `ModelRegimes`: one `Regime` per exact Brouwer regime of the model
//! (`crate::solve::regimes::all_regimes`), with the exact pO2 slope and the K
//! exponents of n (the electron), p (the hole) and one ionic defect, and one
//! `ReactionInfo` per equilibrium. Or a located diagnostic saying what the
//! model lacks for a fit (O2 exchange, electrons, holes, a mobile ionic
//! defect) and how to add it.
//!
//! Every regime the reactions allow is kept, whatever the K values: the
//! measurements may lie at other temperatures than the model's. When the
//! model has K values at its temperature, the regimes that occur there come
//! first, in order of pO2, and each says where it holds.
//!
//! The ionic defect of a regime is the ionic species that carries charge in
//! its neutrality condition (the positive one when both sides are ionic);
//! a dopant held by a `fix` line is never taken, since its concentration is
//! set, not exchanged with the gas. Where the neutrality holds no such
//! species (`n = p`, `[A′] = p`), the model's main ionic defect is taken:
//! the one that is dominant in the most regimes. The choice is written into
//! each regime's description and into the source line of the report.

use super::regimes::{CarrierLaw, ModelRegimes, ReactionInfo, Regime};
use crate::base::diagnostic::{Code, Diagnostic};
use crate::base::number::Q;
use crate::model::Model;
use crate::model::law::FactorKind;
use crate::model::thermo::{sig, temperature_text};
use crate::notation::Style;
use crate::solve::regimes::{self, Dominance, PowerLaws, Sweep};

/// A diagnostic about the model as a whole, placed at its first line.
fn whole_model(model: &Model, message: String, help: &str) -> Diagnostic {
    Diagnostic::new(Code::FitModel, 0..0, message)
        .with_help(help)
        .locate(1, model.line_text(1))
}

/// A name usable on the command line (`--regime`): the neutrality with
/// brackets and charge marks dropped, e.g. `n=2V_O`, `Y_Zr=p`.
fn slug(symbol: &str) -> String {
    symbol
        .trim_start_matches('[')
        .trim_end_matches(']')
        .chars()
        .filter_map(|c| match c {
            '.' | '\'' | '(' | ')' | '{' | '}' | '[' | ']' => None,
            ' ' => Some('+'),
            c => Some(c),
        })
        .collect()
}

fn term_slug(model: &Model, s: usize) -> String {
    let z = model
        .species
        .get(s)
        .map_or(1, |sp| sp.charge.unsigned_abs());
    let body = slug(model.symbol(s, Style::Ascii));
    if z == 1 { body } else { format!("{z}{body}") }
}

/// Where a regime holds along pO2 at the model's temperature.
enum Place {
    /// From, to (bar), at this temperature (kelvin).
    Occurs(f64, f64, f64),
    /// Not self-consistent anywhere in the model's pO2 range at this temperature.
    Absent(f64),
    /// The model cannot say (no temperature or no K values there).
    Unknown,
}

impl ModelRegimes {
    /// The exact regimes of a defect model (see `model_regimes`). Defined
    /// here, beside the conversion, so that `regimes` never reaches back.
    pub fn from_model(model: &Model) -> Result<Self, Diagnostic> {
        model_regimes(model)
    }
}

/// Converts a model's exact regimes for the fit.
pub fn model_regimes(model: &Model) -> Result<ModelRegimes, Diagnostic> {
    let Some(oxygen) = model.oxygen() else {
        return Err(whole_model(
            model,
            "no equilibrium of the model exchanges O2(g), so no concentration depends on pO2 and there is nothing to compare the measured slopes with".into(),
            "add the reduction with its data, e.g. `red: O_O -> V_O.. + 2e' + 1/2 O2(g)` and `K red = 1e-20 at 1273 K`",
        ));
    };
    let kind = |k: FactorKind| model.species.iter().position(|s| s.kind == k);
    let Some(electron) = kind(FactorKind::Electron) else {
        return Err(whole_model(
            model,
            "the model has no electrons (e′), so it gives no law for the n term of the conductivity".into(),
            "add an equilibrium that makes them, e.g. `red: O_O -> V_O.. + 2e' + 1/2 O2(g)` with its K, or `gap: nil -> e' + h.` with its K",
        ));
    };
    let Some(hole) = kind(FactorKind::Hole) else {
        return Err(whole_model(
            model,
            "the model has no holes (h•), so it gives no law for the p term of the conductivity"
                .into(),
            "add the band gap with its data, e.g. `gap: nil -> e' + h.` and `K gap = 1e-10 at 1273 K`",
        ));
    };
    // Dopants held by a `fix` line are set, not exchanged: never the ionic term.
    let fixed = |s: usize| {
        model
            .totals
            .iter()
            .any(|t| t.weights.get(s).is_some_and(|w| *w != Q::from_integer(0)))
    };
    let mobile: Vec<usize> = (0..model.species.len())
        .filter(|&s| {
            let sp = &model.species[s];
            sp.kind == FactorKind::Defect && sp.charge != 0 && !fixed(s)
        })
        .collect();
    if mobile.is_empty() {
        return Err(whole_model(
            model,
            "the model has no charged ionic defect other than fixed dopants, so it gives no law for the ionic term of the conductivity".into(),
            "add the equilibrium of the mobile ionic defect, e.g. `red: O_O -> V_O.. + 2e' + 1/2 O2(g)` with its K",
        ));
    }
    let all = regimes::all_regimes(model).map_err(|d| d.locate(1, model.line_text(1)))?;
    if all.is_empty() {
        return Err(whole_model(
            model,
            "no choice of dominant terms gives a solvable regime: the model's equilibria do not fix every concentration".into(),
            "check that each charged species takes part in an equilibrium with data, or is fixed by a `fix` line",
        ));
    }
    let in_neutrality = |d: &Dominance| -> Option<usize> {
        [d.positive, d.negative]
            .into_iter()
            .flatten()
            .find(|s| mobile.contains(s))
    };
    // The model's main ionic defect: dominant in the most regimes (the first
    // in the model's order on a tie).
    let main = mobile
        .iter()
        .copied()
        .max_by_key(|&s| {
            let count = all
                .iter()
                .filter(|(d, _)| in_neutrality(d) == Some(s))
                .count();
            (count, std::cmp::Reverse(s))
        })
        .unwrap_or(mobile[0]);

    let (places, unordered) = places(model, &all);
    let mut order: Vec<usize> = (0..all.len()).collect();
    order.sort_by(|&a, &b| {
        let key = |i: usize| match places[i] {
            Place::Occurs(from, _, _) => (0, from),
            _ => (1, i as f64),
        };
        let (ka, kb) = (key(a), key(b));
        ka.0.cmp(&kb.0).then(ka.1.total_cmp(&kb.1))
    });

    let alternatives = model.totals.iter().any(|t| {
        t.weights
            .iter()
            .filter(|w| **w > Q::from_integer(0))
            .count()
            > 1
    });
    let mut regimes: Vec<Regime> = Vec::new();
    let mut picks: Vec<usize> = Vec::new();
    for &i in &order {
        let (dominance, laws) = &all[i];
        let shell = regimes::Regime {
            dominance: dominance.clone(),
            laws: laws.clone(),
            from: f64::NAN,
            to: f64::NAN,
        };
        let (ion, ion_reason) = match in_neutrality(dominance) {
            Some(s) => (s, "in the neutrality"),
            None => (
                main,
                "the model's main ionic defect; none is in this neutrality",
            ),
        };
        if !picks.contains(&ion) {
            picks.push(ion);
        }
        let mut name = match (dominance.negative, dominance.positive) {
            (Some(n), Some(p)) => format!("{}={}", term_slug(model, n), term_slug(model, p)),
            _ => "uncharged".to_string(),
        };
        let totals = shell.total_conditions(model, Style::Unicode);
        if alternatives {
            for &d in &dominance.totals {
                name.push('@');
                name.push_str(&slug(model.symbol(d, Style::Ascii)));
            }
        }
        if regimes.iter().any(|r| r.name == name) {
            let mut k = 2;
            while regimes.iter().any(|r| r.name == format!("{name}-{k}")) {
                k += 1;
            }
            name = format!("{name}-{k}");
        }
        let mut neutrality = shell.neutrality(model, Style::Unicode);
        if alternatives && !totals.is_empty() {
            neutrality.push_str(&format!(" with {}", totals.join(", ")));
        }
        match places[i] {
            Place::Occurs(from, to, t) => neutrality.push_str(&format!(
                "; at {} from pO2 {} to {} bar",
                temperature_text(t),
                sig(from, 3),
                sig(to, 3)
            )),
            Place::Absent(t) => neutrality.push_str(&format!(
                "; not reached at {} in the model's pO2 range",
                temperature_text(t)
            )),
            Place::Unknown => {}
        }
        neutrality.push_str(&format!(
            "; ionic term {} ({ion_reason})",
            unicode_name(model, ion)
        ));
        regimes.push(Regime {
            name,
            neutrality,
            ionic_defect: unicode_name(model, ion),
            n: carrier_law(model, laws, electron, oxygen),
            p: carrier_law(model, laws, hole, oxygen),
            ion: carrier_law(model, laws, ion, oxygen),
        });
    }
    let reactions = model
        .equilibria
        .iter()
        .map(|e| ReactionInfo {
            name: e.label.clone(),
            equation: e.law.reaction_unicode.clone(),
            law: e.law.text(Style::Unicode),
        })
        .collect();
    let ordering = match (unordered, model.temperature) {
        (None, Some(t)) => format!(
            "those occurring at {} first, in order of pO2",
            temperature_text(t)
        ),
        (Some(why), _) => format!("not ordered: {why}"),
        (None, None) => "not ordered".to_string(),
    };
    let picked: Vec<String> = picks.iter().map(|&s| unicode_name(model, s)).collect();
    Ok(ModelRegimes {
        source: format!(
            "model {} (host {}; {} regime{}, {ordering}; electron n, hole p, ionic term {})",
            model.source,
            model.host.formula_text,
            regimes.len(),
            if regimes.len() == 1 { "" } else { "s" },
            picked.join(" or ")
        ),
        reactions,
        regimes,
        default_decomposition: None,
    })
}

/// `V_O••` for `[V_O••]`; `n`, `p` as they are.
fn unicode_name(model: &Model, s: usize) -> String {
    model
        .symbol(s, Style::Unicode)
        .trim_start_matches('[')
        .trim_end_matches(']')
        .to_string()
}

fn carrier_law(model: &Model, laws: &PowerLaws, s: usize, oxygen: usize) -> CarrierLaw {
    let slope = laws
        .gas
        .get(s)
        .and_then(|g| g.get(oxygen))
        .copied()
        .unwrap_or(Q::from_integer(0));
    let k_exponents = model
        .equilibria
        .iter()
        .enumerate()
        .filter_map(|(r, e)| {
            let x = laws.k.get(s).and_then(|k| k.get(r)).copied()?;
            (x != Q::from_integer(0)).then(|| (e.label.clone(), x))
        })
        .collect();
    CarrierLaw { slope, k_exponents }
}

/// Where each regime holds at the model's temperature, when the model can say.
fn places(model: &Model, all: &[(Dominance, PowerLaws)]) -> (Vec<Place>, Option<String>) {
    let unknown = |why: &str| {
        (
            all.iter().map(|_| Place::Unknown).collect(),
            Some(why.to_string()),
        )
    };
    if model.equilibria.iter().any(|e| e.thermo.is_none()) {
        return unknown("the model has no K values");
    }
    let Some(t) = model.temperature else {
        return unknown("the model gives no temperature");
    };
    if model.ln_k(t).is_err() {
        return unknown("K is not known at the model's temperature");
    }
    let Ok(found) = regimes::regimes(model, Sweep::Po2 { temperature: t }, model.po2_range) else {
        return unknown("its regimes could not be placed along pO2");
    };
    let places = all
        .iter()
        .map(|(d, _)| match found.iter().find(|r| r.dominance == *d) {
            Some(r) => Place::Occurs(r.from, r.to, t),
            None => Place::Absent(t),
        })
        .collect();
    (places, None)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::base::number;
    use crate::model::{Overrides, read};

    fn build(text: &str) -> Model {
        let doc = read("<test>", text, None);
        match Model::build(&doc, Overrides::for_slopes(&doc)) {
            Ok(m) => m,
            Err(e) => panic!("model did not build: {e:#?}"),
        }
    }

    fn q(n: i64, d: i64) -> Q {
        Q::new(n, d)
    }

    fn k(law: &CarrierLaw, name: &str) -> Q {
        law.k_exponents
            .iter()
            .find(|(n, _)| n == name)
            .map_or(q(0, 1), |(_, e)| *e)
    }

    /// An acceptor-doped oxide: reduction, band gap, a fixed acceptor.
    const ACCEPTOR: &str = "host ZrO2\n\
        temperature 1273 K\n\
        po2 1e-40 to 1e5 bar\n\
        red: O_O -> V_O.. + 2e' + 1/2 O2(g)\n\
        K red = 1e-20\n\
        gap: nil -> e' + h.\n\
        K gap = 1e-10\n\
        fix Y_Zr' = 0.01 site fraction\n";

    #[test]
    fn acceptor_doped_oxide_gives_the_textbook_slopes_and_constants() {
        // source: D. M. Smyth, The Defect Chemistry of Metal Oxides (Oxford
        // UP 2000), acceptor-doped oxides (from memory): with [A′] = 2[V_O••]
        // the vacancies are fixed, K_red = [V_O••]·n²·pO2^½ gives
        // n ∝ K_red^½·pO2^(−1/4) and n·p = K_i gives p ∝ K_i·K_red^(−½)·pO2^(+1/4).
        // At high pO2, [A′] = p leaves p flat and [V_O••] ∝ pO2^(−1/2).
        let m = build(ACCEPTOR);
        let regimes = ModelRegimes::from_model(&m).expect("the model gives regimes");
        let names: Vec<&str> = regimes.regimes.iter().map(|r| r.name.as_str()).collect();
        // The three that occur at 1273 K come first, in order of pO2.
        assert_eq!(names[..3], ["n=2V_O", "Y_Zr=2V_O", "Y_Zr=p"]);
        assert!(names.contains(&"n=p"), "{names:?}");
        let fixed = &regimes.regimes[1];
        assert_eq!(fixed.ionic_defect, "V_O••");
        assert_eq!(
            (fixed.n.slope, fixed.p.slope, fixed.ion.slope),
            (q(-1, 4), q(1, 4), q(0, 1))
        );
        assert_eq!(k(&fixed.n, "red"), q(1, 2));
        assert_eq!(
            (k(&fixed.p, "gap"), k(&fixed.p, "red")),
            (q(1, 1), q(-1, 2))
        );
        assert!(fixed.ion.k_exponents.is_empty());
        assert!(
            fixed.neutrality.contains("[Y_Zr′] = 2[V_O••]"),
            "{}",
            fixed.neutrality
        );
        // The decomposition takes the first regime with n falling, p rising
        // and a distinct ionic slope: the acceptor-fixed one.
        assert_eq!(
            regimes.decomposition_regime(None).map(|r| r.name.as_str()),
            Ok("Y_Zr=2V_O")
        );
        // Pure reduction, n = 2[V_O••]: −1/6 for n and the vacancies.
        // source: P. Kofstad, Nonstoichiometry, Diffusion and Electrical
        // Conductivity in Binary Metal Oxides (Wiley 1972) (from memory).
        let reduced = &regimes.regimes[0];
        assert_eq!((reduced.n.slope, reduced.ion.slope), (q(-1, 6), q(-1, 6)));
        assert_eq!(k(&reduced.n, "red"), q(1, 3));
        // [A′] = p: no mobile defect in the neutrality, so the model's main
        // ionic defect is taken, and said so.
        let p_type = &regimes.regimes[2];
        assert_eq!(p_type.ionic_defect, "V_O••");
        assert_eq!((p_type.p.slope, p_type.ion.slope), (q(0, 1), q(-1, 2)));
        assert!(
            p_type.neutrality.contains("main ionic defect"),
            "{}",
            p_type.neutrality
        );
        // The dopant is never the ionic term.
        assert!(regimes.regimes.iter().all(|r| r.ionic_defect != "Y_Zr′"));
        assert!(
            regimes.source.contains("ionic term V_O••"),
            "{}",
            regimes.source
        );
        assert_eq!(regimes.reactions.len(), 2);
    }

    #[test]
    fn every_regime_satisfies_the_mass_action_laws() {
        // Independent of the solver: in each regime, the exponents of n, p and
        // [V_O••] in pO2 and in each K must satisfy K_red = [V]·n²·pO2^½ and
        // K_gap = n·p identically (the laws of the model text above).
        let m = build(ACCEPTOR);
        let regimes = ModelRegimes::from_model(&m).expect("regimes");
        for r in &regimes.regimes {
            let combine = |a: &CarrierLaw, x: i64, b: &CarrierLaw, y: i64, name: &str| {
                number::sum_checked([
                    k(a, name).checked_mul(q(x, 1)),
                    k(b, name).checked_mul(q(y, 1)),
                ])
                .expect("small exponents")
            };
            // red: [V] + 2n, with pO2^½
            assert_eq!(
                number::sum_checked([Ok(r.ion.slope), r.n.slope.checked_mul(q(2, 1)), Ok(q(1, 2))]),
                Ok(q(0, 1)),
                "{}",
                r.name
            );
            assert_eq!(combine(&r.ion, 1, &r.n, 2, "red"), q(1, 1), "{}", r.name);
            assert_eq!(combine(&r.ion, 1, &r.n, 2, "gap"), q(0, 1), "{}", r.name);
            // gap: n + p
            assert_eq!(number::add(r.n.slope, r.p.slope), Ok(q(0, 1)), "{}", r.name);
            assert_eq!(combine(&r.n, 1, &r.p, 1, "gap"), q(1, 1), "{}", r.name);
            assert_eq!(combine(&r.n, 1, &r.p, 1, "red"), q(0, 1), "{}", r.name);
        }
    }

    #[test]
    fn reactions_without_data_still_give_slopes_unordered() {
        let m = build("host CeO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\ngap: nil -> e' + h.\n");
        let regimes = ModelRegimes::from_model(&m).expect("regimes from slopes alone");
        let names: Vec<&str> = regimes.regimes.iter().map(|r| r.name.as_str()).collect();
        assert_eq!(names, ["n=2V_O", "n=p"]);
        assert!(
            regimes
                .source
                .contains("not ordered: the model has no K values"),
            "{}",
            regimes.source
        );
    }

    #[test]
    fn what_a_fit_needs_is_asked_for_with_a_way_forward() {
        let no_holes =
            build("host CeO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20 at 1273 K\n");
        let d = ModelRegimes::from_model(&no_holes).expect_err("no holes");
        assert_eq!(d.code, Code::FitModel);
        assert!(d.message.contains("no holes"), "{}", d.message);
        assert!(
            d.help
                .as_deref()
                .is_some_and(|h| h.contains("gap: nil -> e' + h."))
        );
        assert_eq!(d.line, 1);

        let no_oxygen = build("host CeO2\ngap: nil -> e' + h.\nK gap = 1e-10 at 1273 K\n");
        let d = ModelRegimes::from_model(&no_oxygen).expect_err("no O2");
        assert!(d.message.contains("O2(g)"), "{}", d.message);
    }
}
