//! Parser tables: every accepted spelling, and every error with its column.

use super::*;
use crate::base::diagnostic::column_of;
use crate::notation::{Style, render_reaction, render_species};

/// Parses `text` as a reaction and renders it in ASCII, or returns the
/// diagnostics as `CODE@column message` lines.
fn parse(text: &str) -> Result<String, Vec<String>> {
    let (reaction, diags) = parse_reaction(text, 0..text.len());
    let errors: Vec<String> = diags
        .iter()
        .filter(|d| d.is_error())
        .map(|d| format!("{}@{} {}", d.code, column_of(text, d.span.start), d.message))
        .collect();
    match reaction {
        Some(r) if errors.is_empty() => Ok(render_reaction(&r, Style::Ascii)),
        _ => Err(errors),
    }
}

fn species(text: &str) -> String {
    match parse_species_text(text) {
        Ok(Term {
            entity: Entity::Species(s),
            ..
        }) => render_species(&s, Style::Ascii),
        Ok(other) => format!("not a species: {other:?}"),
        Err(d) => format!(
            "error: {:?}",
            d.iter().map(|d| d.code.as_str()).collect::<Vec<_>>()
        ),
    }
}

// source: DOMAIN conventions and IUPAC Red Book 2005, IR-11.4 (charge marks:
// dots for positive, primes for negative, cross for neutral).
#[test]
fn every_charge_spelling() {
    let cases = [
        ("V_O..", "V_O.."),
        ("V_O**", "V_O.."),
        ("V_O••", "V_O.."),
        ("V_O∙∙", "V_O.."),
        ("V_O··", "V_O.."),
        ("V_O^{..}", "V_O.."),
        ("V_O^..", "V_O.."),
        ("V_{O}^{\\bullet\\bullet}", "V_O.."),
        ("V_O^{\\bullet \\bullet}", "V_O.."),
        ("V_O^\\bullet", "V_O."),
        ("Y_Zr'", "Y_Zr'"),
        ("Y_Zr′", "Y_Zr'"),
        ("Y_Zr’", "Y_Zr'"),
        ("V_Zr''''", "V_Zr''''"),
        ("V_Zr″″", "V_Zr''''"),
        ("V_Zr^{\\prime\\prime}", "V_Zr''"),
        ("O_Ox", "O_Ox"),
        ("O_OX", "O_Ox"),
        ("O_O×", "O_Ox"),
        ("O_O^{\\times}", "O_Ox"),
        ("O_O", "O_Ox"),
        ("O_i''", "O_i''"),
        ("Zr_i....", "Zr_i...."),
        ("e'", "e'"),
        ("e′", "e'"),
        ("h.", "h."),
        ("h•", "h."),
        ("OH_O.", "OH_O."),
        ("Vac_O..", "Vac_O.."),
        ("□_O••", "□_O.."),
        ("el:V_Ti.", "el:V_Ti."),
        ("Fe_{Fe:A}x", "Fe_{Fe:A}x"),
        ("Fe_Fe:B'", "Fe_{Fe:B}'"),
        ("V_{Fe:A}'''", "V_{Fe:A}'''"),
    ];
    for (input, expected) in cases {
        assert_eq!(species(input), expected, "input {input}");
    }
}

#[test]
fn every_coefficient_arrow_and_nil_spelling() {
    let cases = [
        (
            "O_O -> V_O.. + 2e' + 1/2 O2(g)",
            "O_Ox -> V_O.. + 2 e' + 1/2 O2(g)",
        ),
        (
            "O_O → V_O•• + 2e′ + ½O2(g)",
            "O_Ox -> V_O.. + 2 e' + 1/2 O2(g)",
        ),
        (
            "O_O <=> V_O.. + 2 e' + 0.5 O2(g)",
            "O_Ox <=> V_O.. + 2 e' + 1/2 O2(g)",
        ),
        (
            "O_O ⇌ V_O.. + 2e' + 0.5O2(g)",
            "O_Ox <=> V_O.. + 2 e' + 1/2 O2(g)",
        ),
        (
            "O_O = V_O.. + 2e' + 1/2O2(g)",
            "O_Ox = V_O.. + 2 e' + 1/2 O2(g)",
        ),
        ("nil -> V_Zr'''' + 2V_O..", "nil -> V_Zr'''' + 2 V_O.."),
        ("null -> e' + h.", "nil -> e' + h."),
        ("0 -> e' + h.", "nil -> e' + h."),
        ("∅ -> e' + h.", "nil -> e' + h."),
        (
            "Y2O3 -> 2Y_Zr' + 3O_O + V_O..",
            "Y2O3 -> 2 Y_Zr' + 3 O_Ox + V_O..",
        ),
        (
            "Y₂O₃ -> 2Y_Zr' + 3O_O + V_O..",
            "Y2O3 -> 2 Y_Zr' + 3 O_Ox + V_O..",
        ),
        (
            "H2O(g) + V_O.. + O_O -> 2OH_O.",
            "H2O(g) + V_O.. + O_Ox -> 2 OH_O.",
        ),
        ("Ba(OH)2 -> x_x", "err"),
        (
            "CaCl2 -> (Ca_K V_K)x + 2Cl_Cl",
            "CaCl2 -> (Ca_Kx V_Kx)x + 2 Cl_Clx",
        ),
        (
            "CaCl2 -> {Ca_K. V_K'}^x + 2Cl_Cl",
            "CaCl2 -> {Ca_K. V_K'}x + 2 Cl_Clx",
        ),
        (
            "La0.9Sr0.1MnO3 -> La0.9Sr0.1MnO3",
            "La0.9Sr0.1MnO3 -> La0.9Sr0.1MnO3",
        ),
        (
            "2 Y_Zr' + V_O.. -> (2Y_Zr' V_O..)x",
            "2 Y_Zr' + V_O.. -> (2 Y_Zr' V_O..)x",
        ),
        ("O_O \\xrightarrow{ZrO_2} V_O..", "O_Ox -> V_O.."),
        (
            "O_O \\rightleftharpoons V_O.. + 2e^{\\prime}",
            "O_Ox <=> V_O.. + 2 e'",
        ),
        ("O_O -> V_O.. + 2\\,e' + \\tfrac", "err"),
    ];
    for (input, expected) in cases {
        let got = parse(input);
        if expected == "err" {
            assert!(got.is_err(), "{input} parsed as {got:?}");
        } else {
            assert_eq!(got.as_deref(), Ok(expected), "input {input}");
        }
    }
}

#[test]
fn the_associate_charge_is_kept_as_declared() {
    // source: IUPAC Red Book 2005, IR-11.4.5: (Ca_K V_K)× for CaCl2 in KCl.
    let text = "(Ca_K. V_K')x";
    match parse_species_text(text) {
        Ok(Term {
            entity: Entity::Associate(a),
            ..
        }) => {
            assert_eq!(a.charge, Some(0));
            assert_eq!(a.parts.len(), 2);
            assert_eq!(a.parts_charge(), Ok(Q::from_integer(0)));
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn exact_coefficients_and_counts() {
    let (r, _) = parse_reaction("0.25 O2(g) + 1/3 La0.9Sr0.1MnO3 -> nil", 0..38);
    let r = r.expect("parses");
    assert_eq!(r.left[0].coefficient, Q::new(1, 4));
    assert_eq!(r.left[1].coefficient, Q::new(1, 3));
    match &r.left[1].entity {
        Entity::Compound(c) => assert_eq!(c.formula.atoms[0].1, Q::new(9, 10)),
        other => panic!("{other:?}"),
    }
}

/// Every error the parser reports, with its code and 1-based character column.
#[test]
fn errors_with_columns() {
    let cases: &[(&str, &str)] = &[
        ("O_O V_O..", "P103@1"),
        ("O_O -> V_O.. -> x", "P104@14"),
        ("O_O ->", "P105@"),
        ("-> V_O..", "P105@"),
        ("O_O -> V_O.. + + 2e'", "P105@"),
        ("O_O -> V_O.' + 2e'", "P106@11"),
        ("O_O -> V_O^ + 2e'", "P106@11"),
        ("O_O -> V_Ox. + 2e'", "P106@11"),
        ("O_O -> V_Qq..", "P102@10"),
        ("co_Ni -> x", "P101@1"),
        ("O_O -> V_O.. + 10000000000000000000000000e'", "P107@16"),
        ("O_O -> V_O.. + 0e'", "P107@16"),
        ("(0Y_Zr' V_O..). -> x", "P107@2"),
        ("O_O -> (V_O.. + 2e'", "P108@8"),
        ("O_O -> V_O..) + 2e'", "P108@13"),
        ("O_O -> V.. + 2e'", "V405@8"),
        ("O_O -> V_O.. + 2e_O'", "V408@17"),
        ("O_O -> V_O.. + 2 e' + ½", "P105@"),
        ("Y_Zr' -> Y_zr'", "H204@12"),
        ("O_O -> V_O.. + 2e' + 1/0 O2(g)", "P107@22"),
        ("O_O -> V_2..", "H204@10"),
    ];
    for (input, expected) in cases {
        let got = parse(input);
        let errors = got.expect_err(input);
        assert!(
            errors.iter().any(|e| e.starts_with(expected)),
            "input {input}: expected {expected}, got {errors:?}"
        );
    }
}

#[test]
fn one_line_reports_every_bad_term() {
    let text = "Qq_O + O_O -> V_O^ + Zz";
    let (reaction, diags) = parse_reaction(text, 0..text.len());
    assert!(reaction.is_none());
    let codes: Vec<&str> = diags.iter().map(|d| d.code.as_str()).collect();
    assert_eq!(codes, vec!["P102", "P106", "P102"], "{diags:?}");
}

#[test]
fn spans_point_into_the_line() {
    let line = "red: Y2O3 -> 2Y_Zr' + 3O_O + V_O..  # note";
    let (reaction, _) = parse_reaction(line, 5..34);
    let reaction = reaction.expect("parses");
    let last = reaction.right.last().expect("terms");
    assert_eq!(&line[last.span.clone()], "V_O..");
    assert_eq!(&line[reaction.left[0].span.clone()], "Y2O3");
}

#[test]
fn case_suspects_warn() {
    let text = "CO_Ni -> CO_Ni";
    let (_, diags) = parse_reaction(text, 0..text.len());
    assert!(
        diags
            .iter()
            .any(|d| d.code.as_str() == "V410"
                && d.help.as_deref().is_some_and(|h| h.contains("Co")))
    );
}

#[test]
fn formulas_parse_with_groups_and_decimals() {
    let f = parse_formula("Ba(OH)2", 0..7).expect("parses");
    let ba = crate::base::elements::by_symbol("Ba").unwrap().z;
    let h = crate::base::elements::by_symbol("H").unwrap().z;
    assert_eq!(f.count(ba), Ok(Q::from_integer(1)));
    assert_eq!(f.count(h), Ok(Q::from_integer(2)));
    assert!(parse_formula("ZrO2x", 0..5).is_err());
    assert!(parse_formula("Zz2", 0..3).is_err());
}
