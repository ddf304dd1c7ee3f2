//! Properties: render then parse gives the same species; reactions built
//! balanced pass; one changed coefficient or charge mark makes them fail.

use lacuna::base::elements;
use lacuna::base::number::Q;
use lacuna::check::check_reaction;
use lacuna::host::Host;
use lacuna::notation::{
    Arrow, Entity, Formula, MarkStyle, Occupant, Reaction, Site, Species, Style, Term,
    VacancySpelling, parse_reaction, parse_species_text, render_reaction, render_species,
};
use proptest::prelude::*;

fn z(symbol: &str) -> u8 {
    elements::by_symbol(symbol).expect("element").z
}

fn species(occupant: Occupant, site: Option<Site>, charge: i32) -> Species {
    Species {
        occupant,
        site,
        charge,
        marks: MarkStyle::Ascii,
        span: 0..0,
    }
}

fn atoms(symbol: &str) -> Occupant {
    Occupant::Atoms {
        formula: Formula {
            atoms: vec![(z(symbol), Q::from_integer(1))],
        },
        escaped: false,
    }
}

fn term(coefficient: i64, species: Species) -> Term {
    Term {
        coefficient: Q::from_integer(coefficient),
        coefficient_written: true,
        entity: Entity::Species(species),
        span: 0..0,
    }
}

fn arb_species() -> impl Strategy<Value = Species> {
    let symbols = prop::sample::select(vec![
        "O", "Zr", "Y", "Ce", "Gd", "Ba", "Ti", "Nb", "Li", "Ni", "Mg", "Al", "F", "Cl", "Na", "K",
        "Fe", "Sc", "Sr", "La",
    ]);
    let occupant = prop_oneof![
        symbols.clone().prop_map(atoms),
        Just(Occupant::Vacancy(VacancySpelling::Bare)),
        Just(Occupant::Vacancy(VacancySpelling::Box)),
        Just(Occupant::Vacancy(VacancySpelling::Word)),
    ];
    let site = prop_oneof![
        symbols.prop_map(|s| Site::Lattice {
            element: z(s),
            label: None
        }),
        Just(Site::Interstitial),
        Just(Site::Lattice {
            element: 26,
            label: Some("B".into())
        }),
    ];
    prop_oneof![
        (occupant, site, -4i32..=4).prop_map(|(o, s, c)| species(o, Some(s), c)),
        Just(species(Occupant::Electron, None, -1)),
        Just(species(Occupant::Hole, None, 1)),
    ]
}

proptest! {
    #[test]
    fn render_then_parse_gives_the_same_species(s in arb_species(), unicode in any::<bool>()) {
        let style = if unicode { Style::Unicode } else { Style::Ascii };
        let text = render_species(&s, style);
        let parsed = parse_species_text(&text);
        match parsed {
            Ok(Term { entity: Entity::Species(back), .. }) => {
                prop_assert_eq!(back.key(), s.key(), "{}", text);
                prop_assert_eq!(&back.occupant, &s.occupant, "spelling kept: {}", text);
            }
            other => prop_assert!(false, "{} did not parse back: {:?}", text, other),
        }
    }
}

/// A host with one cation sublattice of charge `c` (count `a`) and one anion
/// sublattice of charge `-x` (count `b`), and its symbols.
struct Binary {
    host: Host,
    cation: &'static str,
    anion: &'static str,
    c: i32,
    x: i32,
    a: i64,
    b: i64,
}

fn binaries() -> Vec<Binary> {
    [
        ("ZrO2", "Zr", "O", 4, 2, 1, 2),
        ("CeO2", "Ce", "O", 4, 2, 1, 2),
        ("MgO", "Mg", "O", 2, 2, 1, 1),
        ("Al2O3", "Al", "O", 3, 2, 2, 3),
        ("NaCl", "Na", "Cl", 1, 1, 1, 1),
        ("CaF2", "Ca", "F", 2, 1, 1, 2),
        ("NiO", "Ni", "O", 2, 2, 1, 1),
    ]
    .into_iter()
    .map(|(formula, cation, anion, c, x, a, b)| Binary {
        host: Host::from_spec(formula).expect("host"),
        cation,
        anion,
        c,
        x,
        a,
        b,
    })
    .collect()
}

/// The balanced building blocks of a binary host, as (left, right) terms.
fn blocks(h: &Binary) -> Vec<(Vec<Term>, Vec<Term>)> {
    let (cz, az) = (z(h.cation), z(h.anion));
    let vac_c = species(
        Occupant::Vacancy(VacancySpelling::Bare),
        Some(Site::Lattice {
            element: cz,
            label: None,
        }),
        -h.c,
    );
    let vac_a = species(
        Occupant::Vacancy(VacancySpelling::Bare),
        Some(Site::Lattice {
            element: az,
            label: None,
        }),
        h.x,
    );
    let regular_c = species(
        atoms(h.cation),
        Some(Site::Lattice {
            element: cz,
            label: None,
        }),
        0,
    );
    let regular_a = species(
        atoms(h.anion),
        Some(Site::Lattice {
            element: az,
            label: None,
        }),
        0,
    );
    let inter_c = species(atoms(h.cation), Some(Site::Interstitial), h.c);
    let inter_a = species(atoms(h.anion), Some(Site::Interstitial), -h.x);
    let e = species(Occupant::Electron, None, -1);
    let p = species(Occupant::Hole, None, 1);
    vec![
        (
            vec![],
            vec![term(h.a, vac_c.clone()), term(h.b, vac_a.clone())],
        ),
        (
            vec![term(1, regular_c)],
            vec![term(1, inter_c), term(1, vac_c)],
        ),
        (
            vec![term(1, regular_a)],
            vec![term(1, inter_a), term(1, vac_a)],
        ),
        (vec![], vec![term(1, e), term(1, p)]),
    ]
}

fn assemble(h: &Binary, picks: &[(usize, i64, bool)]) -> Reaction {
    let blocks = blocks(h);
    let (mut left, mut right) = (Vec::new(), Vec::new());
    for (index, times, reversed) in picks {
        let (l, r) = &blocks[index % blocks.len()];
        let scale = |terms: &Vec<Term>| {
            terms
                .iter()
                .map(|t| Term {
                    coefficient: t
                        .coefficient
                        .checked_mul(Q::from_integer(*times))
                        .expect("small coefficients"),
                    ..t.clone()
                })
                .collect::<Vec<_>>()
        };
        let (l, r) = if *reversed {
            (scale(r), scale(l))
        } else {
            (scale(l), scale(r))
        };
        left.extend(l);
        right.extend(r);
    }
    let nil = || Term {
        coefficient: Q::from_integer(1),
        coefficient_written: false,
        entity: Entity::Nil,
        span: 0..0,
    };
    if left.is_empty() {
        left.push(nil());
    }
    if right.is_empty() {
        right.push(nil());
    }
    Reaction {
        left,
        right,
        arrow: Arrow::Forward,
        span: 0..0,
    }
}

proptest! {
    #[test]
    fn balanced_by_construction_passes_and_any_change_fails(
        host_index in 0usize..7,
        picks in prop::collection::vec((0usize..4, 1i64..4, any::<bool>()), 1..4),
        victim in any::<prop::sample::Index>(),
        change_charge in any::<bool>(),
    ) {
        let hosts = binaries();
        let h = &hosts[host_index];
        let reaction = assemble(h, &picks);
        // Through text, as a user would write it.
        let text = render_reaction(&reaction, Style::Ascii);
        let (parsed, diags) = parse_reaction(&text, 0..text.len());
        let parsed = parsed.ok_or_else(|| TestCaseError::fail(format!("{text}: {diags:?}")))?;
        let verdict = check_reaction(&parsed, Some(&h.host));
        prop_assert!(verdict.ok(), "{} in {}: {:?}", text, h.host.formula_text, verdict.diagnostics);

        let mut broken = parsed.clone();
        let species_terms: Vec<(bool, usize)> = broken.left.iter().enumerate().map(|(i, _)| (false, i))
            .chain(broken.right.iter().enumerate().map(|(i, _)| (true, i)))
            .filter(|(side, i)| {
                let t = if *side { &broken.right[*i] } else { &broken.left[*i] };
                matches!(t.entity, Entity::Species(_))
            })
            .collect();
        prop_assume!(!species_terms.is_empty());
        let (side, i) = species_terms[victim.index(species_terms.len())];
        let t = if side { &mut broken.right[i] } else { &mut broken.left[i] };
        if change_charge {
            if let Entity::Species(s) = &mut t.entity { s.charge += 1; }
        } else {
            t.coefficient = t.coefficient.checked_mul(Q::from_integer(2)).expect("small coefficients");
        }
        let text = render_reaction(&broken, Style::Ascii);
        let (parsed, _) = parse_reaction(&text, 0..text.len());
        let parsed = parsed.ok_or_else(|| TestCaseError::fail(text.clone()))?;
        let verdict = check_reaction(&parsed, Some(&h.host));
        prop_assert!(!verdict.ok(), "{} should fail", text);
        let b = verdict.balance;
        prop_assert!(!b.mass || !b.charge || b.site == Some(false), "{}: a balance must break: {:?}", text, b);
    }
}

#[test]
fn scaling_and_reordering_keep_a_verdict() {
    // source: DOMAIN worked example (Y2O3 in ZrO2).
    let host = Host::from_spec("ZrO2").expect("host");
    for text in [
        "Y2O3 -> 2Y_Zr' + 3O_O + V_O..",
        "Y2O3 -> V_O.. + 3O_O + 2Y_Zr'",
        "2Y2O3 -> 4Y_Zr' + 6O_O + 2V_O..",
        "1/2 Y2O3 -> Y_Zr' + 3/2 O_O + 1/2 V_O..",
    ] {
        let (r, _) = parse_reaction(text, 0..text.len());
        assert!(
            check_reaction(&r.expect("parses"), Some(&host)).ok(),
            "{text}"
        );
    }
}

/// Reactions, each in several spellings, for building random files.
const SPELLINGS: &[&[&str]] = &[
    &[
        "Y2O3 -> 2Y_Zr' + 3O_O + V_O..",
        "Y2O3 → 2 Y_Zr′ + 3 O_O× + V_O••",
        "Y2O3->2Y_Zr'+3O_Ox+V_O**",
    ],
    &[
        "O_O -> V_O.. + 2e' + 1/2 O2(g)",
        "O_O ⇌ V_O^{••} + 2 e′ + ½ O2(g)",
        "O_O<=>V_O^{..}+2e'+0.5O2(g)",
    ],
    &["nil -> e' + h.", "∅ → e′ + h•", "0 = e' + h*"],
    &[
        "Y2O3 -> 2Y_Zr' + 3O_O + V_O.",
        "Y2O3 → 2 Y_Zr′ + 3 O_O + V_O•",
    ],
    &[
        "CaO -> Ca_Zr'' + O_O + V_O..",
        "CaO → Ca_Zr″ + O_O× + V_O••",
    ],
    &["nil -> V_Zr + 2V_O", "nil → V_Zr + 2 V_O"],
    &["Ba(OH)2 -> Ba(OH)2", "Ba(OH)2 = Ba(OH)2"],
    &[
        "(Y_Zr' V_O..). + Y_Zr' -> (2Y_Zr' V_O..)x",
        "{Y_Zr′ V_O••}• + Y_Zr′ → (2 Y_Zr′ V_O••)×",
    ],
];

fn arb_file() -> impl Strategy<Value = String> {
    let line = prop_oneof![
        3 => (0usize..SPELLINGS.len(), any::<prop::sample::Index>(), prop::option::of("[a-z]{1,4}"), any::<bool>()).prop_map(|(r, s, label, comment)| {
            let spelling = SPELLINGS[r][s.index(SPELLINGS[r].len())];
            let mut line = match label { Some(l) => format!("{l}: {spelling}"), None => spelling.to_string() };
            if comment { line.push_str("   # note"); }
            line
        }),
        1 => Just(String::new()),
        1 => Just("# a comment".to_string()),
        1 => Just("host  CeO2".to_string()),
    ];
    prop::collection::vec(line, 0..12)
        .prop_map(|lines| format!("host ZrO2\n{}\n", lines.join("\n")))
}

/// Mass, charge and site balance of one reaction.
type Balances = (bool, bool, Option<bool>);

/// Per reaction: line, ok, and the balances.
fn verdicts(text: &str) -> Vec<(u32, bool, Option<Balances>)> {
    use lacuna::file::runner::{Event, Recording, Runner};
    let mut recording = Recording {
        events: Vec::new(),
        keep_passing: true,
    };
    let mut checker = Runner::new(None, &mut recording);
    checker.check_text("x", text).expect("in memory");
    let _ = checker.finish();
    recording
        .events
        .iter()
        .filter_map(|e| match e {
            Event::Reaction(r) => {
                let ok = !r.diagnostics.iter().any(|d| d.is_error()) && r.verdict.is_some();
                Some((
                    r.line,
                    ok,
                    r.verdict
                        .as_ref()
                        .map(|v| (v.balance.mass, v.balance.charge, v.balance.site)),
                ))
            }
            Event::Problem { .. } => None,
            _ => None,
        })
        .collect()
}

proptest! {
    #[test]
    fn fmt_is_idempotent_and_keeps_every_verdict(file in arb_file(), unicode in any::<bool>()) {
        use lacuna::file::layout::{MarkSpelling, format_text};
        let marks = if unicode { MarkSpelling::Unicode } else { MarkSpelling::Ascii };
        // Duplicate names are an error before and after; formatting must not change that either.
        let once = format_text(&file, marks).map_err(|e| TestCaseError::fail(format!("{file}\n{e:?}")))?;
        let twice = format_text(&once, marks).map_err(|e| TestCaseError::fail(format!("{once}\n{e:?}")))?;
        prop_assert_eq!(&twice, &once);
        prop_assert_eq!(verdicts(&once), verdicts(&file), "{}\n--- formatted ---\n{}", file, once);
    }
}
