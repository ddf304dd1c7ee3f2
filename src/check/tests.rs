//! Checker tables: published reactions that must pass, and classic mistakes
//! that must fail with the right code.

use super::*;
use crate::notation::parse_reaction;

/// Checks `text` against `host` and returns the codes of errors and warnings.
fn codes(host: &str, text: &str) -> Vec<&'static str> {
    let host = Host::from_spec(host).unwrap_or_else(|d| panic!("host {host}: {d:?}"));
    let (reaction, parse_diags) = parse_reaction(text, 0..text.len());
    let reaction = reaction.unwrap_or_else(|| panic!("{text}: {parse_diags:?}"));
    let verdict = check_reaction(&reaction, Some(&host));
    let mut codes: Vec<&str> = parse_diags
        .iter()
        .chain(&verdict.diagnostics)
        .map(|d| d.code.as_str())
        .collect();
    if verdict.ok() {
        assert!(codes.iter().all(|c| {
            Code::from_str_id(c).is_none_or(|c| c.default_severity() != Severity::Error)
        }));
    }
    codes.sort_unstable();
    codes
}

fn passes(host: &str, text: &str, source: &str) {
    let got = codes(host, text);
    assert!(got.is_empty(), "{host}: {text} ({source}) reported {got:?}");
}

#[test]
fn textbook_reactions_pass() {
    let cases = [
        // source: DOMAIN worked example; also D. M. Smyth, The Defect Chemistry of Metal Oxides, 2000, ch. 6 (from memory)
        ("ZrO2", "Y2O3 -> 2Y_Zr' + 3O_O + V_O..", "Smyth 2000"),
        // source: W. D. Kingery, H. K. Bowen, D. R. Uhlmann, Introduction to Ceramics, 2nd ed., 1976, ch. 4 (from memory)
        ("ZrO2", "CaO -> Ca_Zr'' + O_O + V_O..", "Kingery 1976"),
        // source: P. Kofstad, Nonstoichiometry, Diffusion and Electrical Conductivity in Binary Metal Oxides, 1972 (from memory)
        ("ZrO2", "O_O -> V_O.. + 2e' + 1/2 O2(g)", "Kofstad 1972"),
        ("CeO2", "O_Ox ⇌ V_O•• + 2e′ + ½O2(g)", "Kofstad 1972"),
        // source: Kingery 1976, Schottky disorder in MgO (from memory)
        ("MgO", "nil -> V_Mg'' + V_O..", "Kingery 1976"),
        // source: common practice (Schottky pair in rock-salt NaCl)
        ("NaCl", "nil -> V_Na' + V_Cl.", "common practice"),
        // source: common practice (cation Frenkel pair in AgBr)
        ("AgBr", "Ag_Ag -> Ag_i. + V_Ag'", "common practice"),
        // source: common practice (anion Frenkel pair in fluorite CaF2)
        ("CaF2", "F_F -> F_i' + V_F.", "common practice"),
        // source: common practice (band-gap excitation)
        ("ZrO2", "nil -> e' + h.", "common practice"),
        // source: K. D. Kreuer, Annu. Rev. Mater. Res. 33 (2003) 333, hydration of acceptor-doped perovskites (from memory)
        ("BaZrO3", "H2O(g) + V_O.. + O_O -> 2OH_O.", "Kreuer 2003"),
        // source: Smyth 2000, donor doping of TiO2 with electronic compensation (from memory)
        (
            "TiO2",
            "Nb2O5 -> 2Nb_Ti. + 4O_O + 2e' + 1/2 O2(g)",
            "Smyth 2000",
        ),
        // source: Smyth 2000, donor doping of TiO2 compensated by titanium vacancies (from memory)
        ("TiO2", "2Nb2O5 -> 4Nb_Ti. + V_Ti'''' + 10O_O", "Smyth 2000"),
        // source: Kingery 1976, Li2O in NiO compensated by holes (from memory)
        (
            "NiO",
            "Li2O + 1/2 O2(g) -> 2Li_Ni' + 2O_O + 2h.",
            "Kingery 1976",
        ),
        // source: Kingery 1976, Al2O3 in MgO compensated by magnesium vacancies (from memory)
        ("MgO", "Al2O3 -> 2Al_Mg. + V_Mg'' + 3O_O", "Kingery 1976"),
        // source: Smyth 2000; N.-H. Chan and D. M. Smyth, J. Am. Ceram. Soc. 67 (1984): La on the Ba site of BaTiO3, electronic compensation (from memory)
        (
            "BaTiO3",
            "La2O3 + 2TiO2 -> 2La_Ba. + 2Ti_Ti + 6O_O + 2e' + 1/2 O2(g)",
            "Chan & Smyth 1984",
        ),
        // source: IUPAC, Nomenclature of Inorganic Chemistry (Red Book) 2005, IR-11.4.5: CaCl2 in KCl as the associate (Ca_K V_K)
        ("KCl", "CaCl2 -> (Ca_K. V_K')x + 2Cl_Cl", "IUPAC IR-11.4.5"),
        // source: common practice (gadolinia-doped ceria)
        ("CeO2", "Gd2O3 -> 2Gd_Ce' + 3O_O + V_O..", "common practice"),
        // source: common practice (inverse spinel exchange in MgAl2O4)
        (
            "MgAl2O4",
            "Mg_Mg + Al_Al -> Mg_Al' + Al_Mg.",
            "common practice",
        ),
        // source: common practice (vacancy in an elemental metal)
        ("Al", "Al_Al -> V_Al + Al(s)", "common practice"),
    ];
    for (host, text, source) in cases {
        passes(host, text, source);
    }
}

#[test]
fn classic_mistakes_fail_with_their_codes() {
    let cases: &[(&str, &str, &[&str])] = &[
        // The vacancy left singly charged: the charge no longer balances.
        ("ZrO2", "Y2O3 -> 2Y_Zr' + 3O_O + V_O.", &["B302"]),
        // Y5+ does not exist: Y_Zr• is implausible, and the charges break.
        ("ZrO2", "Y2O3 -> 2Y_Zr. + 3O_O + V_O..", &["B302", "V401"]),
        // An oxygen vacancy cannot be negative.
        ("ZrO2", "O_O + 2h. -> V_O' + 1/2 O2(g)", &["B302", "V403"]),
        // O_O forgotten: mass and the 1:2 site ratio both break.
        ("ZrO2", "Y2O3 -> 2Y_Zr' + V_O..", &["B301", "B303"]),
        // A site the host lacks.
        ("ZrO2", "Y2O3 -> 2Y_Ce' + 3O_O + V_O..", &["H204"]),
        // Schottky in the wrong ratio for ZrO2 (needs 1:2).
        ("ZrO2", "nil -> V_Zr'''' + V_O..", &["B302", "B303"]),
        // La on the Ba site without the B-site partner: sites break the 1:1:3 ratio.
        (
            "BaTiO3",
            "La2O3 -> 2La_Ba. + 2O_O + 2e' + 1/2 O2(g)",
            &["B303"],
        ),
        // An electron written with a dot.
        ("ZrO2", "nil -> e. + h.", &["B302", "V408"]),
        // Unmarked electron: read as e′ but warned.
        ("ZrO2", "O_O -> V_O.. + 2e + 1/2 O2(g)", &["V409"]),
        // The associate's declared charge disagrees with its parts.
        ("KCl", "CaCl2 -> (Ca_K. V_K')' + 2Cl_Cl", &["B302", "V404"]),
        // A vacancy on an interstitial site.
        ("ZrO2", "nil -> V_i", &["V411"]),
        // Same species on both sides.
        ("ZrO2", "O_O + V_O.. -> O_O + V_O..", &["V407", "V407"]),
    ];
    for (host, text, expected) in cases {
        assert_eq!(codes(host, text), *expected, "{host}: {text}");
    }
}

#[test]
fn vanadium_makes_a_bare_v_ambiguous() {
    // source: IUPAC Red Book 2005, IR-11.4.2: a box may replace V for the vacancy to avoid confusion with vanadium.
    assert_eq!(
        codes("V2O5", "O_O -> V_O.. + 2e' + 1/2 O2(g)"),
        vec!["V406"]
    );
    assert!(codes("V2O5", "O_O -> Vac_O.. + 2e' + 1/2 O2(g)").is_empty());
    assert!(codes("V2O5", "O_O -> □_O.. + 2e' + 1/2 O2(g)").is_empty());
    // Read as a vacancy the V carries no mass, so the mass balance fails too.
    assert_eq!(
        codes("TiO2", "V2O5 -> 2V_Ti. + 4O_O + 2e' + 1/2 O2(g)"),
        vec!["B301", "V406"]
    );
    assert!(codes("TiO2", "V2O5 -> 2el:V_Ti. + 4O_O + 2e' + 1/2 O2(g)").is_empty());
}

#[test]
fn labelled_sublattices() {
    // source: common practice (magnetite as Fe3+[Fe2+Fe3+]O4, an inverse spinel)
    let host = "Fe3O4 sites Fe:A +3 x1, Fe:B +2 x1, Fe:C +3 x1, O -2";
    passes(
        host,
        "nil -> V_{Fe:A}''' + V_{Fe:B}'' + V_{Fe:C}''' + 4V_O..",
        "Schottky in 1:1:1:4",
    );
    assert_eq!(codes(host, "nil -> V_Fe''' + V_O.."), vec!["B302", "H204"]);
    assert!(codes(host, "Fe_{Fe:B} + Fe_{Fe:C} -> Fe_{Fe:B}. + Fe_{Fe:C}'").is_empty());
}

#[test]
fn the_charge_culprit_is_pointed_at() {
    let text = "Y2O3 -> 2Y_Zr' + 3O_O + V_O.";
    let host = Host::from_spec("ZrO2").unwrap();
    let (reaction, _) = parse_reaction(text, 0..text.len());
    let verdict = check_reaction(&reaction.unwrap(), Some(&host));
    let d = verdict
        .diagnostics
        .iter()
        .find(|d| d.code == Code::ChargeBalance)
        .expect("charge error");
    assert_eq!(&text[d.span.clone()], "V_O.");
    assert_eq!(d.message, "charge does not balance: left 0, right −1");
    assert!(
        d.label.as_deref().is_some_and(|l| l.contains("V_O••")),
        "{:?}",
        d.label
    );
}

#[test]
fn without_a_host_sites_are_not_evaluated() {
    let text = "O_O -> V_O.. + 2e' + 1/2 O2(g)";
    let (reaction, _) = parse_reaction(text, 0..text.len());
    let verdict = check_reaction(&reaction.unwrap(), None);
    assert_eq!(
        verdict.balance,
        Balance {
            mass: true,
            charge: true,
            site: None
        }
    );
    assert!(!verdict.ok());
}
