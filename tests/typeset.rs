//! `lacuna typeset` and the typesetting library: snapshots of species and
//! reactions in every form, LaTeX that compiles in principle, LaTeX input,
//! and the round trip parse(typeset(x)) = x for the forms Lacuna reads.

use assert_cmd::cargo::cargo_bin_cmd;
use lacuna::base::number::Q;
use lacuna::host::Host;
use lacuna::notation::latex_input::normalise;
use lacuna::notation::{
    Arrow, Associate, Compound, Entity, Formula, Occupant, Phase, Reaction, Site, Species, Term,
    VacancySpelling, parse_reaction,
};
use lacuna::typeset::{self, Form};
use predicates::prelude::*;
use proptest::prelude::*;

fn typeset_species(form: &str, species: &[&str]) -> String {
    let mut cmd = cargo_bin_cmd!("lacuna");
    cmd.args(["typeset", "--to", form]);
    for s in species {
        cmd.args(["--species", s]);
    }
    let out = cmd.assert().success().get_output().stdout.clone();
    String::from_utf8(out).unwrap()
}

// source: IUPAC, Nomenclature of Inorganic Chemistry (Recommendations 2005),
// IR-11.4.2 (italic V for a vacancy, upright V for vanadium, subscript i for
// an interstitial), IR-11.4.4 (superscript dot, prime and cross for
// effective charges), IR-11.4.5 (clusters in parentheses with their net
// charge: (Ca_K V_K)× in KCl, (V_Pb V_Cl)′ in PbCl2), Table IR-11.1 (an
// M²⁺(X⁻)₂ crystal, here CaF2: V_M′′, X_i′, Q³⁺ on M²⁺ as Q_M•).
const IUPAC_SPECIES: &[&str] = &[
    "V_O..",
    "e'",
    "h.",
    "Ag_i.",
    "(Ca_K. V_K')x",
    "(V_Pb'' V_Cl.)'",
    "V_Ca''",
    "F_i'",
    "Y_Ca.",
    "O_Ox",
    "el:V_Ti.",
];

#[test]
fn species_in_latex() {
    assert_eq!(
        typeset_species("latex", IUPAC_SPECIES),
        r"V_{\mathrm{O}}^{\bullet\bullet}
e^{\prime}
h^{\bullet}
\mathrm{Ag}_{i}^{\bullet}
(\mathrm{Ca}_{\mathrm{K}}^{\bullet}\,V_{\mathrm{K}}^{\prime})^{\times}
(V_{\mathrm{Pb}}^{\prime\prime}\,V_{\mathrm{Cl}}^{\bullet})^{\prime}
V_{\mathrm{Ca}}^{\prime\prime}
\mathrm{F}_{i}^{\prime}
\mathrm{Y}_{\mathrm{Ca}}^{\bullet}
\mathrm{O}_{\mathrm{O}}^{\times}
\mathrm{V}_{\mathrm{Ti}}^{\bullet}
"
    );
}

#[test]
fn species_in_unicode_and_ascii() {
    assert_eq!(
        typeset_species("unicode", IUPAC_SPECIES),
        "V_O••\ne′\nh•\nAg_i•\n(Ca_K• V_K′)×\n(V_Pb′′ V_Cl•)′\nV_Ca′′\nF_i′\nY_Ca•\nO_O×\nel:V_Ti•\n"
    );
    assert_eq!(
        typeset_species("ascii", IUPAC_SPECIES),
        "V_O..\ne'\nh.\nAg_i.\n(Ca_K. V_K')x\n(V_Pb'' V_Cl.)'\nV_Ca''\nF_i'\nY_Ca.\nO_Ox\nel:V_Ti.\n"
    );
}

#[test]
fn species_in_html_and_markdown() {
    let html = typeset_species("html", IUPAC_SPECIES);
    assert_eq!(
        html,
        "<i>V</i><sub>O</sub><sup>••</sup>
<i>e</i><sup>′</sup>
<i>h</i><sup>•</sup>
Ag<sub><i>i</i></sub><sup>•</sup>
(Ca<sub>K</sub><sup>•</sup> <i>V</i><sub>K</sub><sup>′</sup>)<sup>×</sup>
(<i>V</i><sub>Pb</sub><sup>′′</sup> <i>V</i><sub>Cl</sub><sup>•</sup>)<sup>′</sup>
<i>V</i><sub>Ca</sub><sup>′′</sup>
F<sub><i>i</i></sub><sup>′</sup>
Y<sub>Ca</sub><sup>•</sup>
O<sub>O</sub><sup>×</sup>
V<sub>Ti</sub><sup>•</sup>
"
    );
    assert_eq!(typeset_species("markdown", IUPAC_SPECIES), html);
}

// source: common practice — cation Frenkel disorder in AgCl
// (Ag_Ag -> Ag_i• + V_Ag′) and Y2O3 in ZrO2, with the host over the arrow.
#[test]
fn reactions_with_the_host_over_the_arrow() {
    cargo_bin_cmd!("lacuna")
        .args(["typeset", "--host", "AgCl", "--host-over-arrow", "always", "-r", "frenkel: Ag_Ag -> Ag_i. + V_Ag'"])
        .assert()
        .success()
        .stdout(
            "\\mathrm{Ag}_{\\mathrm{Ag}}^{\\times} \\xrightarrow{\\mathrm{AgCl}} \\mathrm{Ag}_{i}^{\\bullet} + V_{\\mathrm{Ag}}^{\\prime} % frenkel\n",
        );
    cargo_bin_cmd!("lacuna")
        .args(["typeset", "--host", "ZrO2", "--to", "html", "-r", "Y2O3 <=> 2Y_Zr' + V_O.. + 3O_Ox"])
        .assert()
        .success()
        .stdout("Y<sub>2</sub>O<sub>3</sub> <ruby>⇌<rp>(</rp><rt>ZrO<sub>2</sub></rt><rp>)</rp></ruby> 2 Y<sub>Zr</sub><sup>′</sup> + <i>V</i><sub>O</sub><sup>••</sup> + 3 O<sub>O</sub><sup>×</sup>\n");
    cargo_bin_cmd!("lacuna")
        .args(["typeset", "--host", "ZrO2", "--to", "markdown", "-r", "red: O_O -> V_O.. + 2e' + 1/2 O2(g)"])
        .assert()
        .success()
        .stdout("- **red**: O<sub>O</sub><sup>×</sup> → <i>V</i><sub>O</sub><sup>••</sup> + 2 <i>e</i><sup>′</sup> + ½ O<sub>2</sub>(g)\n");
    cargo_bin_cmd!("lacuna")
        .args([
            "typeset",
            "--host",
            "ZrO2",
            "--to",
            "unicode",
            "-r",
            "nil -> V_Zr'''' + 2V_O..",
        ])
        .assert()
        .success()
        .stdout("∅ → V_Zr′′′′ + 2 V_O••\n");
}

/// Commands of the LaTeX kernel and amsmath that the LaTeX form may use.
const KNOWN_MACROS: &[&str] = &[
    "mathrm",
    "bullet",
    "prime",
    "times",
    "longrightarrow",
    "rightleftharpoons",
    "xrightarrow",
    "overset",
    "varnothing",
    "tfrac",
    ",",
    "{",
    "}",
];

/// Checks what a TeX run would: braces pair up, every command is known, no
/// double superscript or subscript, no math shift inside the fragment.
fn compiles_in_principle(latex: &str) -> Result<(), String> {
    let chars: Vec<char> = latex.chars().collect();
    let mut depth = 0i32;
    let mut i = 0;
    // The script (`^` or `_`) just closed at each depth, to catch `x^{a}^{b}`.
    let mut last_script: Vec<Option<char>> = vec![None];
    while i < chars.len() {
        let c = chars[i];
        match c {
            '\\' => {
                let start = i + 1;
                let mut end = start;
                while end < chars.len() && chars[end].is_ascii_alphabetic() {
                    end += 1;
                }
                if end == start {
                    end = (start + 1).min(chars.len());
                }
                let name: String = chars[start..end].iter().collect();
                if !KNOWN_MACROS.contains(&name.as_str()) {
                    return Err(format!("unknown command \\{name} in {latex}"));
                }
                i = end;
                if let Some(slot) = last_script.last_mut() {
                    *slot = None;
                }
                continue;
            }
            '{' => {
                depth += 1;
                last_script.push(None);
            }
            '}' => {
                depth -= 1;
                if depth < 0 {
                    return Err(format!("unbalanced `}}` in {latex}"));
                }
                last_script.pop();
            }
            '^' | '_' => {
                let previous = last_script.last().copied().flatten();
                if previous == Some(c) {
                    return Err(format!("double {c} in {latex}"));
                }
                if chars.get(i + 1) != Some(&'{') {
                    return Err(format!("{c} without braces in {latex}"));
                }
                // Find the group's end and remember the script at this depth.
                let mut d = 0;
                let mut j = i + 1;
                while j < chars.len() {
                    match chars[j] {
                        '\\' => j += 1,
                        '{' => d += 1,
                        '}' => {
                            d -= 1;
                            if d == 0 {
                                break;
                            }
                        }
                        _ => {}
                    }
                    j += 1;
                }
                if j >= chars.len() {
                    return Err(format!("unclosed {c} group in {latex}"));
                }
                // The group's inside must compile on its own.
                let inner: String = chars[i + 2..j].iter().collect();
                compiles_in_principle(&inner)?;
                i = j + 1;
                if let Some(slot) = last_script.last_mut() {
                    *slot = Some(c);
                }
                continue;
            }
            '$' => return Err(format!("math shift inside the fragment: {latex}")),
            _ => {
                if !c.is_whitespace() {
                    if let Some(slot) = last_script.last_mut() {
                        // `_{..}^{..}` is fine; a new base resets the memory.
                        if !matches!(c, '^' | '_') {
                            *slot = None;
                        }
                    }
                }
            }
        }
        i += 1;
    }
    if depth != 0 {
        return Err(format!("unbalanced braces in {latex}"));
    }
    Ok(())
}

#[test]
fn the_lint_itself_catches_broken_latex() {
    assert!(compiles_in_principle(r"V_{\mathrm{O}}^{\bullet}").is_ok());
    assert!(compiles_in_principle(r"V_{\mathrm{O}}^{\bullet").is_err());
    assert!(compiles_in_principle(r"V_{O}^{a}^{b}").is_err());
    assert!(compiles_in_principle(r"\ce{V_O}").is_err());
    assert!(compiles_in_principle(r"V^\bullet").is_err());
    assert!(compiles_in_principle(r"$V$").is_err());
}

#[test]
fn the_latex_form_compiles_in_principle() {
    let out = typeset_species("latex", IUPAC_SPECIES);
    for line in out.lines() {
        compiles_in_principle(line).unwrap();
    }
    for reaction in [
        "O_O -> V_O.. + 2e' + 1/2 O2(g)",
        "Y2O3 <=> 2Y_Zr' + V_O.. + 3O_Ox",
        "nil = V_Zr'''' + 2V_O..",
        "{Y_Zr' V_O..}. + 2/3 La0.9Sr0.1MnO3 -> Fe_{Fe:A}x + 1/3 H2O(g)",
    ] {
        let (r, d) = parse_reaction(reaction, 0..reaction.len());
        assert!(d.is_empty(), "{d:?}");
        let r = r.unwrap();
        let host = Host::from_spec("ZrO2").unwrap();
        for with_host in [None, Some(&host)] {
            let latex = typeset::reaction(&r, Form::Latex, with_host);
            compiles_in_principle(&latex).unwrap();
        }
    }
}

#[test]
fn latex_output_reads_back_through_the_cli() {
    let plain = "Y2O3 -> 2Y_Zr' + V_O.. + 3O_Ox";
    let latex = cargo_bin_cmd!("lacuna")
        .args(["typeset", "--host", "ZrO2", "-r", plain])
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let latex = String::from_utf8(latex).unwrap();
    // No --host: the host is read from over the arrow.
    cargo_bin_cmd!("lacuna")
        .args(["typeset", "--to", "ascii", "-r", latex.trim()])
        .assert()
        .success()
        .stdout("Y2O3 -> 2 Y_Zr' + V_O.. + 3 O_Ox\n");
}

#[test]
fn latex_input_errors_point_at_the_column() {
    let latex =
        r"\mathrm{O}_{\mathrm{O}}^{\times} \rightarrow \mathcal{V}_{\mathrm{O}}^{\bullet\bullet}";
    cargo_bin_cmd!("lacuna")
        .args(["typeset", "-r", latex])
        .assert()
        .code(1)
        .stdout("")
        .stderr(predicate::str::contains(
            "error[T801]: `\\mathcal` is not a command the reaction reader knows",
        ))
        .stderr(predicate::str::contains(format!(
            "--> <inline>:1:{}",
            latex.find(r"\mathcal").unwrap() + 1
        )));
    cargo_bin_cmd!("lacuna")
        .args(["typeset", "-s", r"\mathrm{O}_{\mathrm{O}}^{2-}"])
        .assert()
        .code(1)
        .stderr(predicate::str::contains("error[T803]"))
        .stderr(predicate::str::contains("--> --species:1:27"));
}

#[test]
fn typeset_checks_and_says_what_it_could_not_check() {
    // Unbalanced: still typeset as written, but the problem is reported.
    cargo_bin_cmd!("lacuna")
        .args([
            "typeset",
            "--to",
            "unicode",
            "--host",
            "ZrO2",
            "-r",
            "O_O -> V_O. + 2e' + 1/2 O2(g)",
        ])
        .assert()
        .code(1)
        .stdout("O_O× → V_O• + 2 e′ + ½ O2(g)\n")
        .stderr(predicate::str::contains("error[B302]"));
    cargo_bin_cmd!("lacuna")
        .args([
            "typeset",
            "--no-check",
            "--to",
            "unicode",
            "-r",
            "O_O -> V_O. + 2e' + 1/2 O2(g)",
        ])
        .assert()
        .success();
    cargo_bin_cmd!("lacuna")
        .args([
            "typeset",
            "--to",
            "unicode",
            "-r",
            "O_O -> V_O.. + 2e' + 1/2 O2(g)",
        ])
        .assert()
        .success()
        .stderr(predicate::str::contains(
            "note: no host, so sites and effective charges were not checked",
        ));
    cargo_bin_cmd!("lacuna")
        .args(["typeset"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("nothing to typeset"));
    cargo_bin_cmd!("lacuna")
        .args(["typeset", "--to", "rtf", "-s", "V_O.."])
        .assert()
        .code(2);
}

#[test]
fn typeset_reads_reaction_files() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("doped.kvr");
    std::fs::write(
        &file,
        "# notes\nhost CeO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red 1e-20\nhost ZrO2\nY2O3 -> 2Y_Zr' + V_O.. + 3O_Ox\n",
    )
    .unwrap();
    cargo_bin_cmd!("lacuna")
        .arg("typeset")
        .arg(&file)
        .assert()
        .success()
        .stdout(
            "\\mathrm{O}_{\\mathrm{O}}^{\\times} \\longrightarrow V_{\\mathrm{O}}^{\\bullet\\bullet} + 2\\,e^{\\prime} + \\tfrac{1}{2}\\,\\mathrm{O_{2}(g)} % red\n\\mathrm{Y_{2}O_{3}} \\xrightarrow{\\mathrm{ZrO_{2}}} 2\\,\\mathrm{Y}_{\\mathrm{Zr}}^{\\prime} + V_{\\mathrm{O}}^{\\bullet\\bullet} + 3\\,\\mathrm{O}_{\\mathrm{O}}^{\\times}\n",
        );
    // The ascii form of a file is a reaction file again.
    let ascii = cargo_bin_cmd!("lacuna")
        .args(["typeset", "--to", "ascii"])
        .arg(&file)
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    assert_eq!(
        String::from_utf8(ascii).unwrap(),
        "red: O_Ox -> V_O.. + 2 e' + 1/2 O2(g)\nY2O3 -> 2 Y_Zr' + V_O.. + 3 O_Ox\n"
    );
}

// ---------------------------------------------------------------------------
// parse(typeset(x, form)) has the meaning of x, for the forms Lacuna reads.

/// What a term means, without spans or spelling.
#[derive(Debug, PartialEq, Eq)]
enum Meaning {
    Species(lacuna::notation::SpeciesKey),
    Associate(Vec<(Q, Meaning)>, Option<i32>),
    Compound(Vec<(u8, Q)>, Option<Phase>),
    Nil,
}

fn meaning(term: &Term) -> (Q, Meaning) {
    let m = match &term.entity {
        Entity::Species(s) => Meaning::Species(s.key()),
        Entity::Associate(a) => Meaning::Associate(a.parts.iter().map(meaning).collect(), a.charge),
        Entity::Compound(c) => Meaning::Compound(c.formula.atoms.clone(), c.phase),
        Entity::Nil => Meaning::Nil,
        _ => panic!("an entity this test does not know: {term:?}"),
    };
    (term.coefficient, m)
}

type SideMeaning = Vec<(Q, Meaning)>;

fn reaction_meaning(r: &Reaction) -> (SideMeaning, Arrow, SideMeaning) {
    (
        r.left.iter().map(meaning).collect(),
        r.arrow,
        r.right.iter().map(meaning).collect(),
    )
}

fn term(entity: Entity, coefficient: Q) -> Term {
    Term {
        coefficient,
        coefficient_written: coefficient != Q::from_integer(1),
        entity,
        span: 0..0,
    }
}

/// Elements that make ordinary hosts and dopants (never V: a bare V is the vacancy).
const ELEMENTS: &[u8] = &[
    1, 8, 9, 11, 12, 13, 17, 19, 20, 22, 25, 26, 38, 39, 40, 47, 57, 58, 64, 82,
];

fn site() -> impl Strategy<Value = Site> {
    prop_oneof![
        3 => (prop::sample::select(ELEMENTS), prop::option::weighted(0.2, prop::sample::select(vec!["A", "B", "oct"])))
            .prop_map(|(element, label)| Site::Lattice { element, label: label.map(Into::into) }),
        1 => Just(Site::Interstitial),
    ]
}

fn species() -> impl Strategy<Value = Species> {
    let occupant = prop_oneof![
        4 => prop::sample::select(ELEMENTS).prop_map(|z| Occupant::Atoms {
            formula: Formula { atoms: vec![(z, Q::from_integer(1))] },
            escaped: false,
        }),
        1 => Just(Occupant::Atoms { formula: Formula { atoms: vec![(23, Q::from_integer(1))] }, escaped: true }),
        1 => Just(Occupant::Atoms {
            formula: Formula { atoms: vec![(8, Q::from_integer(1)), (1, Q::from_integer(1))] },
            escaped: false,
        }),
        3 => prop::sample::select(vec![VacancySpelling::Bare, VacancySpelling::Word, VacancySpelling::Box])
            .prop_map(Occupant::Vacancy),
    ];
    prop_oneof![
        6 => (occupant, site(), -4i32..=4).prop_map(|(occupant, site, charge)| Species {
            occupant,
            site: Some(site),
            charge,
            marks: lacuna::notation::MarkStyle::Ascii,
            span: 0..0,
        }),
        1 => Just(Species { occupant: Occupant::Electron, site: None, charge: -1, marks: lacuna::notation::MarkStyle::Ascii, span: 0..0 }),
        1 => Just(Species { occupant: Occupant::Hole, site: None, charge: 1, marks: lacuna::notation::MarkStyle::Ascii, span: 0..0 }),
    ]
}

fn coefficient() -> impl Strategy<Value = Q> {
    prop::sample::select(vec![
        Q::from_integer(1),
        Q::from_integer(1),
        Q::from_integer(2),
        Q::from_integer(3),
        Q::new(1, 2),
        Q::new(3, 2),
        Q::new(1, 3),
        Q::new(2, 3),
        Q::new(1, 4),
    ])
}

fn compound() -> impl Strategy<Value = Compound> {
    let count = prop::sample::select(vec![
        Q::from_integer(1),
        Q::from_integer(2),
        Q::from_integer(3),
        Q::new(9, 10),
        Q::new(1, 10),
    ]);
    (
        prop::collection::vec((prop::sample::select(ELEMENTS), count), 1..4),
        prop::option::of(prop::sample::select(vec![
            Phase::Gas,
            Phase::Solid,
            Phase::Liquid,
        ])),
    )
        .prop_map(|(atoms, phase)| Compound {
            formula: Formula { atoms },
            phase,
            span: 0..0,
        })
}

fn entity() -> impl Strategy<Value = Entity> {
    prop_oneof![
        5 => species().prop_map(Entity::Species),
        2 => compound().prop_map(Entity::Compound),
        1 => (prop::collection::vec(species(), 2..4), any::<bool>(), any::<bool>()).prop_map(|(parts, declare, braces)| {
            let parts: Vec<Term> = parts.into_iter().map(|s| term(Entity::Species(s), Q::from_integer(1))).collect();
            let associate = Associate { parts, charge: None, marks: lacuna::notation::MarkStyle::Ascii, braces, span: 0..0 };
            let charge = declare.then(|| *associate.parts_charge().expect("small charges").numer() as i32);
            Entity::Associate(Associate { charge, ..associate })
        }),
    ]
}

fn side() -> impl Strategy<Value = Vec<Term>> {
    prop_oneof![
        8 => prop::collection::vec((entity(), coefficient()).prop_map(|(e, c)| term(e, c)), 1..4),
        1 => Just(vec![term(Entity::Nil, Q::from_integer(1))]),
    ]
}

fn reaction() -> impl Strategy<Value = Reaction> {
    (
        side(),
        prop::sample::select(vec![Arrow::Forward, Arrow::Equilibrium, Arrow::Equals]),
        side(),
    )
        .prop_map(|(left, arrow, right)| Reaction {
            left,
            right,
            arrow,
            span: 0..0,
        })
}

fn read_back(text: &str, form: Form) -> Result<Reaction, String> {
    let plain = if form == Form::Latex {
        normalise(text).map_err(|d| d.message)?.text
    } else {
        text.to_string()
    };
    let (parsed, diagnostics) = parse_reaction(&plain, 0..plain.len());
    let errors: Vec<_> = diagnostics
        .iter()
        .filter(|d| d.is_error())
        .map(|d| d.message.clone())
        .collect();
    match parsed {
        Some(r) if errors.is_empty() => Ok(r),
        _ => Err(format!("{plain}: {errors:?}")),
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(600))]

    #[test]
    fn typeset_then_parse_keeps_the_meaning(r in reaction(), host_over_arrow in any::<bool>()) {
        let host = Host::from_spec("ZrO2").unwrap();
        for form in [Form::Ascii, Form::Unicode, Form::Latex] {
            let text = typeset::reaction(&r, form, host_over_arrow.then_some(&host));
            let back = read_back(&text, form).map_err(|e| TestCaseError::fail(format!("{form}: {text}\n{e}")))?;
            prop_assert_eq!(reaction_meaning(&back), reaction_meaning(&r), "{}: {}", form, text);
        }
        let latex = typeset::reaction(&r, Form::Latex, host_over_arrow.then_some(&host));
        prop_assert!(compiles_in_principle(&latex).is_ok(), "{}", latex);
    }
}
