//! Brouwer slopes against the textbook regimes.
//!
//! The slopes are the classic results of the Brouwer method found in
//! P. Kofstad, Nonstoichiometry, Diffusion and Electrical Conductivity in
//! Binary Metal Oxides (Wiley-Interscience 1972), D. M. Smyth, The Defect
//! Chemistry of Metal Oxides (Oxford UP 2000) and J. Maier, Physical
//! Chemistry of Ionic Materials (Wiley 2004). Page numbers were not checked
//! against the books: the values are "from memory" of those texts, and each
//! is re-derived by hand in the comment beside its check.

use super::*;
use crate::model::Model;

use crate::solve::test_support::{index, model};

fn slope(m: &Model, regime: &Regime, symbol: &str) -> String {
    number::to_plain(regime.slope(m, index(m, symbol)))
}

fn regimes_of(m: &Model) -> Vec<Regime> {
    let t = m.temperature.expect("temperature");
    regimes(m, Sweep::Po2 { temperature: t }, m.po2_range).expect("regimes")
}

#[test]
fn reduced_mo2_with_doubly_ionised_vacancies_gives_minus_one_sixth() {
    // source: Kofstad 1972 (from memory); K_red = [V_O••] n² pO2^½ with
    // n = 2[V_O••] gives n³ = 2 K_red pO2^(−½), so n ∝ pO2^(−1/6).
    let m = model(
        "host CeO2\ntemperature 1273 K\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20\n",
    );
    let r = regimes_of(&m);
    assert_eq!(r.len(), 1);
    assert_eq!(r[0].neutrality(&m, Style::Unicode), "n = 2[V_O••]");
    assert_eq!(slope(&m, &r[0], "n"), "-1/6");
    assert_eq!(slope(&m, &r[0], "[V_O••]"), "-1/6");
    // n = 2^(1/3) K_red^(1/3) pO2^(−1/6): the prefactor of the closed form.
    assert_eq!(
        r[0].power_law_text(&m, index(&m, "n"), Style::Ascii),
        "n = 2^(1/3) K_red^(1/3) pO2^(-1/6)"
    );
}

#[test]
fn singly_ionised_vacancies_give_minus_one_quarter() {
    // source: Kofstad 1972 (from memory); K = [V_O•] n pO2^½ with n = [V_O•]
    // gives n² ∝ pO2^(−½).
    let m = model(
        "host CeO2\ntemperature 1273 K\nred1: O_O -> V_O. + e' + 1/2 O2(g)\nK red1 = 1e-10\n",
    );
    let r = regimes_of(&m);
    assert_eq!(r.len(), 1);
    assert_eq!(slope(&m, &r[0], "n"), "-1/4");
    assert_eq!(slope(&m, &r[0], "[V_O•]"), "-1/4");
}

const ACCEPTOR: &str = "host ZrO2\n\
    temperature 1273 K\n\
    po2 1e-40 to 1e5 bar\n\
    red: O_O -> V_O.. + 2e' + 1/2 O2(g)\n\
    K red = 1e-20\n\
    i: nil -> e' + h.\n\
    K i = 1e-10\n\
    fix Y_Zr' = 0.01 site fraction\n";

#[test]
fn acceptor_doped_oxide_has_the_three_classic_regimes() {
    // source: Smyth 2000, the acceptor-doped oxide Brouwer diagram (from
    // memory); with [A′] = 2[V_O••] fixed, K_red = [V_O••] n² pO2^½ gives
    // n ∝ pO2^(−1/4), and n p = K_i gives p ∝ pO2^(+1/4).
    let m = model(ACCEPTOR);
    let r = regimes_of(&m);
    let conditions: Vec<String> = r.iter().map(|x| x.neutrality(&m, Style::Ascii)).collect();
    assert_eq!(
        conditions,
        vec!["n = 2[V_O..]", "[Y_Zr'] = 2[V_O..]", "[Y_Zr'] = p"]
    );
    let middle = &r[1];
    assert_eq!(slope(&m, middle, "[V_O••]"), "0");
    assert_eq!(slope(&m, middle, "n"), "-1/4");
    assert_eq!(slope(&m, middle, "p"), "1/4");
    assert_eq!(slope(&m, middle, "[Y_Zr′]"), "0");
    // Dopant slopes: [V_O••] = [A′]/2 goes as [A′]¹, n = (K_red/[V])^½ pO2^−¼ as [A′]^−½.
    let v = index(&m, "[V_O••]");
    let n = index(&m, "n");
    assert_eq!(middle.laws.total[v][0], Q::from_integer(1));
    assert_eq!(middle.laws.total[n][0], Q::new(-1, 2));
    // Low pO2: n = 2[V_O••] again gives −1/6; high pO2: [A′] = p gives flat p
    // and [V_O••] ∝ pO2^(−1/2).
    assert_eq!(slope(&m, &r[0], "n"), "-1/6");
    assert_eq!(slope(&m, &r[2], "p"), "0");
    assert_eq!(slope(&m, &r[2], "[V_O••]"), "-1/2");
    // The regimes tile the range: each ends where the next begins.
    assert_eq!(r[0].from, 1e-40);
    assert_eq!(r[2].to, 1e5);
    for pair in r.windows(2) {
        let (a, b) = (pair[0].to, pair[1].from);
        assert!((a / b - 1.0).abs() < 1e-9, "gap between {a} and {b}");
    }
}

#[test]
fn regime_boundaries_are_where_the_approximations_meet() {
    // source: common practice (Brouwer's construction): the boundary between
    // n = 2[V_O••] and [A′] = 2[V_O••] is where n = [A′] in either regime:
    // with [V_O••] = [A′]/2, n² = 2K_red/([A′] pO2^½) = [A′]² gives
    // pO2 = (2K_red/[A′]³)².
    let m = model(ACCEPTOR);
    let r = regimes_of(&m);
    let a: f64 = 0.01;
    let expected = (2.0 * 1e-20 / (a * a * a)).powi(2);
    assert!(
        (r[0].to / expected - 1.0).abs() < 1e-9,
        "{} vs {expected}",
        r[0].to
    );
}

#[test]
fn metal_deficient_mo_gives_plus_one_sixth() {
    // source: Kofstad 1972 on NiO/CoO (from memory); ½O2 ⇌ O_O + V_M″ + 2h•
    // with p = 2[V_M″] gives p³ ∝ pO2^½.
    let m =
        model("host NiO\ntemperature 1273 K\nox: 1/2 O2(g) -> O_O + V_Ni'' + 2h.\nK ox = 1e-12\n");
    let r = regimes_of(&m);
    assert_eq!(r.len(), 1);
    assert_eq!(r[0].neutrality(&m, Style::Unicode), "2[V_Ni′′] = p");
    assert_eq!(slope(&m, &r[0], "p"), "1/6");
    assert_eq!(slope(&m, &r[0], "[V_Ni′′]"), "1/6");
}

#[test]
fn cation_interstitials_in_mo2_give_minus_one_fifth() {
    // source: Kofstad 1972 on TiO2 (from memory); Ti_Ti + 2O_O ⇌ Ti_i••••
    // + 4e′ + O2 with n = 4[Ti_i••••] gives n⁵ ∝ pO2^(−1).
    let m = model(
        "host TiO2\ntemperature 1273 K\nint: Ti_Ti + 2O_O -> Ti_i.... + 4e' + O2(g)\nK int = 1e-30\n",
    );
    let r = regimes_of(&m);
    assert_eq!(r.len(), 1);
    assert_eq!(slope(&m, &r[0], "n"), "-1/5");
    assert_eq!(slope(&m, &r[0], "[Ti_i••••]"), "-1/5");
}

#[test]
fn donor_doped_with_electronic_compensation_has_flat_n() {
    // source: N.-H. Chan and D. M. Smyth, J. Am. Ceram. Soc. 67 (1984)
    // (from memory): in donor-doped BaTiO3 at low pO2 the donors are
    // compensated by electrons, n = [D•], independent of pO2; below that,
    // reduction takes over with n = 2[V_O••] and slope −1/6.
    let m = model(
        "host BaTiO3\ntemperature 1273 K\npo2 1e-30 to 1 bar\n\
         red: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20\n\
         fix La_Ba. = 0.002 site fraction\n",
    );
    let r = regimes_of(&m);
    let conditions: Vec<String> = r.iter().map(|x| x.neutrality(&m, Style::Unicode)).collect();
    assert_eq!(conditions, vec!["n = 2[V_O••]", "n = [La_Ba•]"]);
    assert_eq!(slope(&m, &r[1], "n"), "0");
    assert_eq!(slope(&m, &r[1], "[V_O••]"), "-1/2");
    assert_eq!(slope(&m, &r[0], "n"), "-1/6");
}

#[test]
fn schottky_pair_halves_the_enthalpy() {
    // source: common practice (configurational entropy of a pair): K_S =
    // [V_Na′][V_Cl•] with [V_Na′] = [V_Cl•] gives x = K_S^½, so the apparent
    // formation enthalpy is ΔH_S/2.
    let m = model(
        "host NaCl\ntemperature 900 K\ns: nil -> V_Na' + V_Cl.\ndH s = 2.12 eV\ndS s = 0 k\n",
    );
    let r = regimes_of(&m);
    assert_eq!(r.len(), 1);
    let v = index(&m, "[V_Na′]");
    assert_eq!(r[0].laws.k[v][0], Q::new(1, 2));
    let h = r[0].enthalpy(&m, v).expect("enthalpy known");
    assert!((h - 1.06).abs() < 1e-12);
}

#[test]
fn dominance_of_numbers_matches_the_regimes() {
    // The numerically dominant terms at the centre of each exact regime are
    // the regime's own (a check of the algebra against the plain numbers).
    let m = model(ACCEPTOR);
    let t = m.temperature.expect("temperature");
    for r in regimes_of(&m) {
        let centre = (r.from.ln() + r.to.ln()) / 2.0;
        let p = centre.exp();
        let ln_c: Vec<f64> = (0..m.species.len())
            .map(|s| r.ln_concentration(&m, s, t, p).expect("K known"))
            .collect();
        assert_eq!(dominance_at(&m, &ln_c), r.dominance);
    }
}
