use super::analysis::logical_lines;
use super::args::{closest_command, edit_distance};
use super::*;
use lacuna::host::Host;
use lacuna::notation::Reaction;
use lacuna::notation::parse_reaction;
use lacuna::report::Palette;

fn run(session: &mut Session, input: &str) -> String {
    let mut out = Vec::new();
    session
        .handle_block(input, 1, &mut out)
        .expect("writing to a Vec does not fail");
    String::from_utf8(out).expect("output is UTF-8")
}

fn zirconia() -> Session {
    let mut s = Session::new(Palette::PLAIN, "<test>");
    s.set_host_spec("ZrO2").expect("ZrO2 is a host");
    s
}

/// A stand-in balancer for the hook: it knows one reaction's balanced form.
// source: common practice — Y2O3 dissolving in ZrO2 is written
// Y2O3 -> 2Y_Zr' + V_O.. + 3O_Ox in every defect-chemistry text.
fn knows_yttria(reaction: &Reaction, _host: Option<&Host>) -> Option<Reaction> {
    let text = "Y2O3 -> 2Y_Zr' + V_O.. + 3O_Ox";
    let (balanced, _) = parse_reaction(text, 0..text.len());
    let balanced = balanced?;
    let same_species =
        reaction.left.len() == balanced.left.len() && reaction.right.len() == balanced.right.len();
    same_species.then_some(balanced)
}

#[test]
fn a_typed_reaction_is_checked_and_kept() {
    let mut s = zirconia();
    // source: common practice — the reduction of an oxide, e.g. Smyth, The
    // Defect Chemistry of Metal Oxides (2000), ch. 5 (from memory).
    let out = run(&mut s, "O_O -> V_O.. + 2e' + 1/2 O2(g)");
    assert!(
        out.starts_with("[1] ✓ balanced  O_O× → V_O•• + 2 e′ + ½ O2(g)"),
        "{out}"
    );
    assert_eq!(s.entries().len(), 1);
    assert!(s.entries()[0].ok);
    assert_eq!(s.problems, 0);
}

#[test]
fn a_failing_reaction_prints_the_diagnostics_and_table() {
    let mut s = zirconia();
    let out = run(&mut s, "O_O -> V_O. + 2e' + 1/2 O2(g)");
    assert!(out.contains("✗ fails charge"), "{out}");
    assert!(out.contains("error[B302]"), "{out}");
    assert!(out.contains("balance            left    right"), "{out}");
    assert_eq!(s.problems, 1);
    assert!(!s.entries()[0].ok);
}

#[test]
fn the_balanced_form_is_offered_and_taken() {
    let mut s = zirconia().with_balancer(knows_yttria);
    let out = run(&mut s, "Y2O3 -> Y_Zr' + V_O.. + 3O_Ox");
    assert!(
        out.contains("balanced: Y2O3 → 2 Y_Zr′ + V_O•• + 3 O_O×"),
        "{out}"
    );
    let out = run(&mut s, "/take");
    assert!(out.contains("✓ balanced"), "{out}");
    assert_eq!(s.entries()[0].text, "Y2O3 -> 2 Y_Zr' + V_O.. + 3 O_Ox");
    assert!(s.entries()[0].ok);
    let out = run(&mut s, "/take");
    assert!(out.contains("no balanced form is on offer"), "{out}");
}

#[test]
fn the_exact_balancer_offers_and_only_when_unique() {
    // source: DOMAIN worked example, Y2O3 in ZrO2 (common practice).
    let mut s = zirconia();
    let out = run(&mut s, "Y2O3 -> Y_Zr' + V_O.. + 3O_Ox");
    assert!(
        out.contains("balanced: Y2O3 → 2 Y_Zr′ + V_O•• + 3 O_O×"),
        "{out}"
    );
    // O_i'' adds a second mechanism: no single balanced form, so no offer.
    let out = run(&mut s, "Y2O3 -> Y_Zr' + V_O.. + O_O + O_i''");
    assert!(!out.contains("balanced:"), "{out}");
}

#[test]
fn a_correction_takes_the_place_of_the_failing_draft() {
    let mut s = zirconia();
    run(&mut s, "O_O -> V_O. + 2e' + 1/2 O2(g)");
    let out = run(&mut s, "O_O -> V_O.. + 2e' + 1/2 O2(g)");
    assert!(out.starts_with("[1] ✓ balanced"), "{out}");
    assert!(out.contains("in place of the one that failed"), "{out}");
    // A forgotten term added: still the same reaction.
    run(&mut s, "Y2O3 -> 2Y_Zr' + V_O..");
    let out = run(&mut s, "Y2O3 -> 2Y_Zr' + V_O.. + 3O_Ox");
    assert!(out.starts_with("[2] ✓ balanced"), "{out}");
    // A different reaction after a failing one is a new entry...
    run(&mut s, "O_O -> V_O. + 2e' + 1/2 O2(g)");
    let out = run(&mut s, "O_O -> O_i'' + V_O..");
    assert!(out.starts_with("[4] ✓ balanced"), "{out}");
    // ...and the correction typed after it still finds the failing one.
    let out = run(&mut s, "O_O -> V_O.. + 2e' + 1/2 O2(g)");
    assert!(out.starts_with("[3] ✓ balanced"), "{out}");
    assert_eq!(s.entries().len(), 4);
    // A passing reaction is never replaced by a look-alike.
    let out = run(&mut s, "O_O -> O_i'' + V_O..");
    assert!(out.starts_with("[5]"), "{out}");
}

#[test]
fn labels_name_and_replace() {
    let mut s = zirconia();
    run(&mut s, "red: O_O -> V_O. + 2e' + 1/2 O2(g)");
    let out = run(&mut s, "red: O_O -> V_O.. + 2e' + 1/2 O2(g)");
    assert!(out.contains("[1 red] ✓ balanced"), "{out}");
    assert!(out.contains("in place of the one that failed"), "{out}");
    assert_eq!(s.entries().len(), 1);
    let out = run(&mut s, "/name red 3x");
    assert!(out.contains("`3x` cannot be a label"), "{out}");
    run(&mut s, "/name 1 reduction");
    assert_eq!(s.entries()[0].label.as_deref(), Some("reduction"));
    run(&mut s, "/name reduction -");
    assert_eq!(s.entries()[0].label, None);
}

#[test]
fn latex_input_is_checked_with_columns_in_the_latex() {
    let mut s = zirconia();
    let line = r"\mathrm{O}_{\mathrm{O}}^{\times} \longrightarrow V_{\mathrm{O}}^{\bullet} + 2\,e^{\prime} + \tfrac{1}{2}\,\mathrm{O_2(g)}";
    let out = run(&mut s, line);
    assert!(out.contains("✗ fails charge"), "{out}");
    // The charge diagnostic underlines the vacancy as it was pasted.
    let column = line.find(r"V_{").unwrap() + 1;
    assert!(out.contains(&format!("<test>:1:{column}")), "{out}");
    assert_eq!(s.entries()[0].text, "O_O× → V_O• + 2 e′ + ½ O2(g)");
    let out = run(&mut s, r"V_{\mathrm{O}}^{\bullet\bullet} \to \foo");
    assert!(out.contains("error[T801]"), "{out}");
    assert!(out.contains(r"`\foo` is not a command"), "{out}");
}

#[test]
fn the_host_over_the_arrow_is_used_or_compared() {
    let mut s = Session::new(Palette::PLAIN, "<test>");
    let out = run(
        &mut s,
        r"\mathrm{Y_2O_3} \xrightarrow{\mathrm{ZrO_2}} 2\,\mathrm{Y}_{\mathrm{Zr}}^{\prime} + V_{\mathrm{O}}^{\bullet\bullet} + 3\,\mathrm{O}_{\mathrm{O}}^{\times}",
    );
    assert!(out.contains("note[T806]"), "{out}");
    assert!(
        out.contains("checked against ZrO2, written over its arrow"),
        "{out}"
    );
    assert!(out.contains("✓ balanced"), "{out}");
    let out = run(
        &mut s,
        r"\mathrm{O}_{\mathrm{O}}^{\times} \xrightarrow{\mathrm{CeO_2}} V_{\mathrm{O}}^{\bullet\bullet} + 2e' + \frac{1}{2}\mathrm{O_2(g)}",
    );
    assert!(out.contains("warning[T804]"), "{out}");
}

#[test]
fn without_a_host_the_explanation_comes_once() {
    let mut s = Session::new(Palette::PLAIN, "<test>");
    let first = run(&mut s, "O_O -> V_O.. + 2e' + 1/2 O2(g)");
    assert!(first.contains("? sites unchecked (no host)"), "{first}");
    assert!(first.contains("error[H203]"), "{first}");
    let second = run(&mut s, "O_O -> V_O.. + 2e' + 1/2 O2(g)");
    assert!(!second.contains("H203"), "{second}");
    // Setting the host checks the earlier reactions against it.
    let out = run(&mut s, "/host ZrO2");
    assert!(
        out.contains("checked 2 earlier reactions against it: 2 pass"),
        "{out}"
    );
    assert!(s.entries().iter().all(|e| e.ok));
}

#[test]
fn bad_input_never_stops_the_session() {
    let mut s = zirconia();
    for line in [
        "->",
        "O_O ->",
        "((((",
        "/",
        "/name",
        "/name 9 x",
        "/drop 0",
        "/ts klingon",
        "/load",
        "/save",
        "/host Xx2O3",
        "K red 1e-20",
        "\u{0}\u{7f}",
        r"\mathrm{",
        "V_O^{2+} -> nil",
        "1/0 O2(g) -> O2(g)",
    ] {
        let out = run(&mut s, line);
        assert!(out.contains("error"), "{line:?} gave {out}");
    }
    assert!(!s.wants_to_quit());
    assert_eq!(s.entries().len(), 0);
}

#[test]
fn newcomers_words_work() {
    let mut s = zirconia();
    assert!(run(&mut s, "help").contains("Commands:"));
    run(&mut s, "quit");
    assert!(s.wants_to_quit());
}

#[test]
fn lines_continue_after_plus_arrow_or_open_bracket() {
    assert!(continues("O_O ->"));
    assert!(continues("O_O -> V_O.. +"));
    assert!(!continues("(Y_Zr' V_O.."));
    assert!(continues(r"O_O \"));
    assert!(!continues(r"O_O -> V_O.. \\"));
    assert!(!continues("O_O -> V_O.."));
    assert!(!continues("/ts latex"));
    assert!(!continues("# x ->"));
    let lines = logical_lines("O_O ->\n V_O.. + 2e' +\n1/2 O2(g)\nnil -> V_Zr'''' + 2V_O..");
    assert_eq!(
        lines,
        vec![
            ("O_O -> V_O.. + 2e' + 1/2 O2(g)".to_string(), 0),
            ("nil -> V_Zr'''' + 2V_O..".to_string(), 3)
        ]
    );
    assert_eq!(logical_lines("a \\\nb"), vec![("a b".to_string(), 0)]);
}

#[test]
fn a_block_of_reactions_is_read_line_by_line() {
    let mut s = zirconia();
    // source: common practice — Schottky disorder in ZrO2 (nil -> V_Zr'''' + 2V_O..)
    // and anion Frenkel disorder (O_O -> O_i'' + V_O..).
    let out = run(&mut s, "nil -> V_Zr'''' + 2V_O..\nO_O -> O_i'' + V_O..\n");
    assert!(out.contains("[1] ✓"), "{out}");
    assert!(out.contains("[2] ✓"), "{out}");
}

#[test]
fn the_file_keeps_comments_model_lines_and_host_changes() {
    let mut s = zirconia();
    run(&mut s, "red: O_O -> V_O.. + 2e' + 1/2 O2(g)  # reduction");
    run(&mut s, "/host CeO2");
    run(&mut s, "nil -> V_Ce'''' + 2V_O..");
    s.entries[1].preamble.push("K red 1e-20".to_string());
    s.trailer.push("# end".to_string());
    assert_eq!(
        store::file_text(&s),
        "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)  # reduction\nK red 1e-20\nhost CeO2\nnil -> V_Ce'''' + 2V_O..\n# end\n"
    );
}

#[test]
fn the_command_table_is_consistent() {
    let mut names = std::collections::HashSet::new();
    for spec in COMMANDS {
        assert!(
            !spec.summary.is_empty() && !spec.details.is_empty(),
            "{}",
            spec.name
        );
        for word in std::iter::once(spec.name).chain(spec.aliases.iter().copied()) {
            assert!(names.insert(word), "`{word}` is used twice");
            assert!(std::ptr::eq(find_command(word).unwrap(), spec));
        }
    }
    let mut s = zirconia();
    let help = run(&mut s, "/help");
    for spec in COMMANDS {
        assert!(help.contains(&format!("/{}", spec.name)), "{}", spec.name);
        let detail = run(&mut s, &format!("/help {}", spec.name));
        assert!(detail.contains(spec.summary), "{}", spec.name);
    }
}

#[test]
fn the_vocabulary_has_sites_species_and_labels() {
    let mut s = zirconia();
    run(&mut s, "red: O_O -> V_O.. + 2e' + 1/2 O2(g)");
    let v = s.vocabulary();
    assert_eq!(v.sites, vec!["Zr", "O", "i"]);
    assert!(v.species.contains(&"V_O..".to_string()), "{:?}", v.species);
    assert!(v.species.contains(&"O2(g)".to_string()), "{:?}", v.species);
    assert_eq!(v.labels, vec!["red"]);
    assert_eq!(v.entries, 1);
    let mut magnetite = Session::new(Palette::PLAIN, "<test>");
    magnetite
        .set_host_spec("Fe3O4 sites Fe:A +3 x1, Fe:B +5/2 x2, O -2 x4")
        .unwrap();
    assert_eq!(
        magnetite.vocabulary().sites,
        vec!["{Fe:A}", "{Fe:B}", "O", "i"]
    );
}

#[test]
fn mistyped_commands_get_a_suggestion() {
    assert_eq!(closest_command("hots"), Some("host"));
    assert_eq!(closest_command("lst"), Some("list"));
    assert_eq!(closest_command("typ"), Some("typeset"));
    assert_eq!(closest_command("frobnicate"), None);
    assert_eq!(edit_distance("kitten", "sitting"), 3);
}

#[test]
fn args_split_with_spans() {
    let a = Args::parse("/save  my file.kvr --replace ");
    assert_eq!(&a.line[a.command.clone()], "/save");
    assert_eq!(a.rest_text(), "my file.kvr --replace");
    assert_eq!(a.words.len(), 3);
    assert_eq!(&a.line[a.words[1].1.clone()], "file.kvr");
}

#[test]
fn the_document_lists_every_command_and_code() {
    let doc = include_str!("../../../grammar/repl.md");
    for spec in COMMANDS {
        assert!(
            doc.contains(&format!("| `/{}` |", spec.name)),
            "grammar/repl.md lacks /{}",
            spec.name
        );
        for alias in spec.aliases {
            assert!(
                doc.contains(&format!("`/{alias}`")),
                "grammar/repl.md lacks /{alias}"
            );
        }
    }
    for code in lacuna::base::diagnostic::Code::ALL {
        if code.as_str().starts_with('T') {
            assert!(
                doc.contains(&format!("| {} |", code.as_str())),
                "grammar/repl.md lacks {code}"
            );
        }
    }
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig::with_cases(400))]

    /// No input ends the session with a crash. (Commands that touch files
    /// are left out so the test writes nothing.)
    #[test]
    fn no_input_crashes_the_session(
        lines in proptest::collection::vec(
            r"(/(host|list|ls|name|drop|check|species|ts|typeset|take|help|balance|bal|dope|law|brouwer|q) ?)?[a-zA-Z0-9_^{}()\\\\$'.*x+<=>/:#%& •′×→⇌½₂□-]{0,40}",
            1..6,
        )
    ) {
        let mut s = zirconia().with_balancer(knows_yttria);
        for line in &lines {
            let mut out = Vec::new();
            proptest::prop_assert!(s.handle_block(line, 1, &mut out).is_ok());
        }
        let mut out = Vec::new();
        for command in ["/list", "/species", "/ts", "/ts html", "/check", "/name all x", "/name 1 x", "/law", "/brouwer", "/balance 1", "/dope Y2O3"] {
            proptest::prop_assert!(s.handle_line(command, 1, &mut out).is_ok());
        }
    }
}
