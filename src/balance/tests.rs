//! Balancer tables: textbook reactions rebuilt from their species alone, and
//! the three outcomes with their explanations.

use super::*;
use crate::check::check_reaction;
use crate::notation::parse_reaction;

fn parse(text: &str) -> Reaction {
    let (reaction, diags) = parse_reaction(text, 0..text.len());
    reaction.unwrap_or_else(|| panic!("{text}: {diags:?}"))
}

fn host(spec: &str) -> Host {
    Host::from_spec(spec).unwrap_or_else(|d| panic!("{spec}: {d:?}"))
}

fn run(host_spec: &str, text: &str, keep_written: bool) -> Balancing {
    let host = host(host_spec);
    balance(
        &parse(text),
        Some(&host),
        Options {
            keep_written,
            explain: true,
        },
    )
}

/// Balances `species` (no coefficients) and compares with `expected`, a
/// balanced reaction from a textbook, term by term after parsing both.
fn rebuilds(host_spec: &str, species: &str, expected: &str, source: &str) {
    let outcome = run(host_spec, species, true);
    assert_eq!(
        outcome.status,
        Status::Unique,
        "{species} ({source}): {:?}",
        outcome.diagnostics
    );
    let balanced = &outcome.reactions[0];
    let want = parse(expected);
    let text = render_reaction(&balanced.conventional, Style::Ascii);
    assert!(
        same_reaction(&balanced.conventional, &want),
        "{species} ({source}): got {text}, textbook {expected}"
    );
    // What the balancer prints must pass the checker, read back from text.
    for shown in [&balanced.reaction, &balanced.conventional] {
        for style in [Style::Ascii, Style::Unicode] {
            let printed = render_reaction(shown, style);
            let verdict = check_reaction(&parse(&printed), Some(&host(host_spec)));
            assert!(verdict.ok(), "{printed}: {:?}", verdict.diagnostics);
        }
    }
}

/// Same species with the same coefficients on the same sides, in any order.
fn same_reaction(a: &Reaction, b: &Reaction) -> bool {
    let side = |terms: &[Term]| -> Vec<String> {
        let mut v: Vec<String> = terms.iter().map(|t| render_term(t, Style::Ascii)).collect();
        v.sort();
        v
    };
    side(&a.left) == side(&b.left) && side(&a.right) == side(&b.right)
}

#[test]
fn textbook_doping_reactions_from_their_species() {
    let cases = [
        // source: D. M. Smyth, The Defect Chemistry of Metal Oxides, 2000, ch. 6 (from memory)
        (
            "ZrO2",
            "Y2O3 -> Y_Zr' + O_O + V_O..",
            "Y2O3 -> 2Y_Zr' + 3O_O + V_O..",
            "Smyth 2000",
        ),
        // source: Y.-M. Chiang, D. Birnie, W. D. Kingery, Physical Ceramics, 1997, ch. 2 (from memory)
        (
            "ZrO2",
            "CaO -> Ca_Zr'' + O_O + V_O..",
            "CaO -> Ca_Zr'' + O_O + V_O..",
            "Chiang, Birnie & Kingery 1997",
        ),
        // source: common practice (gadolinia-doped ceria electrolytes)
        (
            "CeO2",
            "Gd2O3 -> Gd_Ce' + O_O + V_O..",
            "Gd2O3 -> 2Gd_Ce' + 3O_O + V_O..",
            "common practice",
        ),
        // source: Smyth 2000, donor-doped TiO2, electronic compensation (from memory)
        (
            "TiO2",
            "Nb2O5 -> Nb_Ti. + O_O + e' + O2(g)",
            "Nb2O5 -> 2Nb_Ti. + 4O_O + 2e' + 1/2 O2(g)",
            "Smyth 2000",
        ),
        // source: Smyth 2000, donor-doped TiO2 compensated by titanium vacancies (from memory)
        (
            "TiO2",
            "Nb2O5 -> Nb_Ti. + V_Ti'''' + O_O",
            "2Nb2O5 -> 4Nb_Ti. + V_Ti'''' + 10O_O",
            "Smyth 2000",
        ),
        // source: N.-H. Chan and D. M. Smyth, J. Am. Ceram. Soc. 67 (1984); Smyth 2000, ch. 10: La on the Ba site (from memory)
        (
            "BaTiO3",
            "La2O3 + TiO2 -> La_Ba. + Ti_Ti + O_O + e' + O2(g)",
            "La2O3 + 2TiO2 -> 2La_Ba. + 2Ti_Ti + 6O_O + 2e' + 1/2 O2(g)",
            "Chan & Smyth 1984",
        ),
        // source: Smyth 2000, ch. 10: La on the Ba site compensated by barium vacancies (from memory)
        (
            "BaTiO3",
            "La2O3 + TiO2 -> La_Ba. + V_Ba'' + Ti_Ti + O_O",
            "La2O3 + 3TiO2 -> 2La_Ba. + V_Ba'' + 3Ti_Ti + 9O_O",
            "Smyth 2000",
        ),
        // source: Chiang, Birnie & Kingery 1997, ch. 2: Al2O3 in MgO (from memory)
        (
            "MgO",
            "Al2O3 -> Al_Mg. + V_Mg'' + O_O",
            "Al2O3 -> 2Al_Mg. + V_Mg'' + 3O_O",
            "Chiang, Birnie & Kingery 1997",
        ),
        // source: Chiang, Birnie & Kingery 1997, ch. 2: Li2O in NiO with holes (from memory)
        (
            "NiO",
            "Li2O + O2(g) -> Li_Ni' + O_O + h.",
            "Li2O + 1/2 O2(g) -> 2Li_Ni' + 2O_O + 2h.",
            "Chiang, Birnie & Kingery 1997",
        ),
        // source: IUPAC, Nomenclature of Inorganic Chemistry, Recommendations 2005, IR-11.4.5: CaCl2 in KCl as (Ca_K V_K)×
        (
            "KCl",
            "CaCl2 -> (Ca_K. V_K')x + Cl_Cl",
            "CaCl2 -> (Ca_K. V_K')x + 2Cl_Cl",
            "IUPAC Red Book 2005",
        ),
        // source: P. Kofstad, Nonstoichiometry, Diffusion and Electrical Conductivity in Binary Metal Oxides, 1972 (from memory)
        (
            "ZrO2",
            "O_O -> V_O.. + e' + O2(g)",
            "O_O -> V_O.. + 2e' + 1/2 O2(g)",
            "Kofstad 1972",
        ),
        // source: common practice (Schottky disorder in the host ratio)
        (
            "ZrO2",
            "nil -> V_Zr'''' + V_O..",
            "nil -> V_Zr'''' + 2V_O..",
            "common practice",
        ),
        // source: common practice (hydration of an acceptor-doped perovskite)
        (
            "BaZrO3",
            "H2O(g) + V_O.. + O_O -> OH_O.",
            "H2O(g) + V_O.. + O_O -> 2OH_O.",
            "common practice",
        ),
    ];
    for (host_spec, species, expected, source) in cases {
        rebuilds(host_spec, species, expected, source);
    }
}

#[test]
fn smallest_integers_and_conventional_form() {
    // source: Smyth 2000 (from memory) for the reaction; the two forms are the same reaction scaled.
    let outcome = run("TiO2", "Nb2O5 -> Nb_Ti. + O_O + e' + O2(g)", true);
    let b = &outcome.reactions[0];
    assert_eq!(
        render_reaction(&b.reaction, Style::Unicode),
        "2 Nb2O5 → 4 Nb_Ti• + 8 O_O× + 4 e′ + O2(g)"
    );
    assert_eq!(
        render_reaction(&b.conventional, Style::Unicode),
        "Nb2O5 → 2 Nb_Ti• + 4 O_O× + 2 e′ + ½ O2(g)"
    );
    let coefficients: Vec<String> = b
        .terms
        .iter()
        .map(|t| number::to_plain(t.coefficient))
        .collect();
    assert_eq!(coefficients, ["2", "4", "8", "4", "1"]);
}

#[test]
fn written_coefficients_stay_fixed() {
    let outcome = run("TiO2", "Nb2O5 -> 2 Nb_Ti. + O_O + e' + O2(g)", true);
    assert_eq!(outcome.status, Status::Unique);
    assert_eq!(
        render_reaction(&outcome.reactions[0].reaction, Style::Unicode),
        "Nb2O5 → 2 Nb_Ti• + 4 O_O× + 2 e′ + ½ O2(g)"
    );
    // Ignored when the caller asks for free coefficients.
    let free = run("TiO2", "Nb2O5 -> 2 Nb_Ti. + O_O + e' + O2(g)", false);
    assert_eq!(
        render_reaction(&free.reactions[0].reaction, Style::Ascii),
        "2 Nb2O5 -> 4 Nb_Ti. + 8 O_Ox + 4 e' + O2(g)"
    );
}

#[test]
fn conflicting_written_coefficients_are_reported() {
    // Two Y2O3 cannot make three Y_Zr′.
    let outcome = run("ZrO2", "2 Y2O3 -> 3 Y_Zr' + O_O + V_O..", true);
    assert_eq!(outcome.status, Status::None);
    let d = &outcome.diagnostics[0];
    assert_eq!(d.code, Code::WrittenCoefficients);
    assert!(
        d.help
            .as_deref()
            .is_some_and(|h| h.contains("Y2O3 → 2 Y_Zr′ + 3 O_O× + V_O••")),
        "{d:?}"
    );
}

#[test]
fn a_species_on_the_wrong_side_is_moved() {
    // O_i'' written as a product must be a reactant for Y2O3 in ZrO2.
    let outcome = run("ZrO2", "Y2O3 -> Y_Zr' + O_O + O_i''", true);
    assert_eq!(outcome.status, Status::Unique);
    assert_eq!(
        render_reaction(&outcome.reactions[0].reaction, Style::Ascii),
        "Y2O3 + O_i'' -> 2 Y_Zr' + 4 O_Ox"
    );
    let moved: Vec<&Diagnostic> = outcome
        .diagnostics
        .iter()
        .filter(|d| d.code == Code::OtherSide)
        .collect();
    assert_eq!(moved.len(), 1);
    assert!(
        moved[0].message.contains("belongs on the left"),
        "{moved:?}"
    );
    let term = &outcome.reactions[0].terms[3];
    assert_eq!((term.written, term.side), (Side::Right, Side::Left));
}

#[test]
fn a_species_that_takes_no_part() {
    let outcome = run("ZrO2", "Y2O3 -> Y_Zr' + O_O + V_O.. + e'", true);
    assert_eq!(outcome.status, Status::Unique);
    assert!(
        outcome
            .diagnostics
            .iter()
            .any(|d| d.code == Code::NoPart && d.message.contains("e′")),
        "{:?}",
        outcome.diagnostics
    );
}

fn none_codes(host_spec: &str, text: &str) -> Vec<Diagnostic> {
    let outcome = run(host_spec, text, true);
    assert_eq!(outcome.status, Status::None, "{text}");
    assert!(outcome.reactions.is_empty());
    outcome.diagnostics
}

#[test]
fn none_names_the_law_and_the_fix() {
    // The vacancy written singly charged: only charge fails; the right side
    // is short of positive charge.
    let d = none_codes("ZrO2", "Y2O3 -> Y_Zr' + O_O + V_O.");
    assert_eq!(d.len(), 1, "{d:?}");
    assert!(d[0].message.contains("charge"), "{d:?}");
    assert!(
        d[0].help.as_deref().is_some_and(|h| h.contains("h•")),
        "{d:?}"
    );
    // Reduced TiO2 with titanium interstitials but no gas: oxygen is lost.
    let d = none_codes("TiO2", "Ti_Ti + O_O -> Ti_i.... + e'");
    assert_eq!(d.len(), 1, "{d:?}");
    assert!(d[0].message.contains("mass of O"), "{d:?}");
    assert!(
        d[0].help.as_deref().is_some_and(|h| h.contains("O2(g)")),
        "{d:?}"
    );
    // Electronic compensation of Al in MgO without the gas: the oxygen
    // has nowhere to go, and O2(g) is the species that fixes it.
    // source: Chiang, Birnie & Kingery 1997, ch. 2 (from memory) for the fixed form.
    let d = none_codes("MgO", "Al2O3 -> Al_Mg. + O_O + e'");
    assert_eq!(d.len(), 1, "{d:?}");
    assert!(d[0].message.contains("mass of O"), "{d:?}");
    assert!(
        d[0].help
            .as_deref()
            .is_some_and(|h| h
                .contains("adding O2(g) balances it: Al2O3 → 2 Al_Mg• + 2 O_O× + 2 e′ + ½ O2(g)")),
        "{d:?}"
    );
    // A cation leaving its site for an interstitial one without its vacancy:
    // only the site ratio fails, short of a cation-site species.
    let d = none_codes("ZrO2", "Zr_Zr -> Zr_i.... + e'");
    assert_eq!(d.len(), 1, "{d:?}");
    assert!(d[0].message.contains("site ratio"), "{d:?}");
    assert!(
        d[0].help
            .as_deref()
            .is_some_and(|h| h.contains("Zr 1 more (a cation-site species")),
        "{d:?}"
    );
    // The same species twice is refused, not turned into X → X.
    let d = none_codes("MgO", "NiO -> Ni_Mg + O_O + O_O");
    assert_eq!(d[0].code, Code::WrittenTwice, "{d:?}");
}

#[test]
fn none_proposes_the_forgotten_species() {
    // O_O× forgotten: oxygen mass and the site ratio fail together, and
    // adding the regular oxide ion is the first fix offered.
    let d = none_codes("ZrO2", "Y2O3 -> Y_Zr' + V_O..");
    assert_eq!(d.len(), 1, "{d:?}");
    assert!(
        d[0].message
            .contains("the mass of O and the ZrO2 site ratio"),
        "{d:?}"
    );
    let help = d[0].help.as_deref().unwrap_or("");
    assert!(
        help.contains("adding O_O× balances it: Y2O3 → 2 Y_Zr′ + V_O•• + 3 O_O×"),
        "{help}"
    );
    // The gas forgotten in a reduction.
    let d = none_codes("CeO2", "O_O -> V_O.. + e'");
    let help = d[0].help.as_deref().unwrap_or("");
    assert!(
        help.contains("adding O2(g) balances it: O_O× → V_O•• + 2 e′ + ½ O2(g)"),
        "{help}"
    );
}

#[test]
fn several_gives_a_basis_and_names_the_free_species() {
    // V_O•• and O_i′′ together: the anti-Frenkel pair can be added in any amount.
    let outcome = run("ZrO2", "Y2O3 -> Y_Zr' + O_O + V_O.. + O_i''", true);
    assert_eq!(outcome.status, Status::Several);
    let texts: Vec<String> = outcome
        .reactions
        .iter()
        .map(|b| render_reaction(&b.reaction, Style::Unicode))
        .collect();
    assert_eq!(
        texts,
        ["Y2O3 → 2 Y_Zr′ + 3 O_O× + V_O••", "O_O× → V_O•• + O_i′′"]
    );
    let d = &outcome.diagnostics[0];
    assert_eq!(d.code, Code::SeveralBalanced);
    assert!(d.message.contains("2 independent"), "{d:?}");
    assert!(
        d.help
            .as_deref()
            .is_some_and(|h| h.starts_with("O_i′′ makes it free")),
        "{d:?}"
    );
}

#[test]
fn without_a_host_mass_and_charge_only() {
    // source: common practice (water formation)
    let reaction = parse("H2 + O2(g) -> H2O(g)");
    let outcome = balance(
        &reaction,
        None,
        Options {
            keep_written: true,
            explain: true,
        },
    );
    assert_eq!(outcome.status, Status::Unique);
    assert_eq!(
        render_reaction(&outcome.reactions[0].reaction, Style::Ascii),
        "2 H2 + O2(g) -> 2 H2O(g)"
    );
}

#[test]
fn an_unknown_site_is_an_error_not_a_guess() {
    let outcome = run("ZrO2", "Y2O3 -> Y_Ce' + O_O + V_O..", true);
    assert_eq!(outcome.status, Status::None);
    assert_eq!(outcome.diagnostics[0].code, Code::UnknownSite);
}

#[test]
fn check_hint_shows_the_balanced_form() {
    let h = host("ZrO2");
    let verdict = super::hint::check_with_hint(&parse("Y2O3 -> Y_Zr' + O_O + V_O.."), Some(&h));
    let helps: Vec<&str> = verdict
        .diagnostics
        .iter()
        .filter_map(|d| d.help.as_deref())
        .collect();
    assert!(
        helps.contains(&"balanced, it reads: Y2O3 → 2 Y_Zr′ + 3 O_O× + V_O••"),
        "{helps:?}"
    );
    // Species that cannot balance get no such hint.
    let verdict = super::hint::check_with_hint(&parse("Y2O3 -> 2Y_Zr' + 3O_O + V_O."), Some(&h));
    assert!(
        verdict.diagnostics.iter().all(|d| !d
            .help
            .as_deref()
            .unwrap_or("")
            .contains("balanced, it reads")),
        "{:?}",
        verdict.diagnostics
    );
}

#[test]
fn the_checker_alone_never_calls_the_balancer() {
    // The hint is the caller's (`hint::check_with_hint`); the checker's own
    // verdict holds the balances and their diagnostics only.
    let h = host("ZrO2");
    let verdict = check_reaction(&parse("Y2O3 -> Y_Zr' + O_O + V_O.."), Some(&h));
    assert!(!verdict.ok());
    assert!(
        verdict.diagnostics.iter().all(|d| !d
            .help
            .as_deref()
            .unwrap_or("")
            .contains("balanced, it reads")),
        "{:?}",
        verdict.diagnostics
    );
}
