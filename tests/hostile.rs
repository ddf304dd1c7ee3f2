//! Hostile input: nothing a user can feed in may panic, hang or use memory
//! without bound. Every case runs the real binary, so a panic (exit 101) or a
//! stack overflow fails the test.

use crate::support::lacuna;
use lacuna::check::check_reaction;
use lacuna::file::layout::{MarkSpelling, format_text};
use lacuna::file::runner::{Recording, Runner};
use lacuna::host::Host;
use lacuna::notation::parse_reaction;
use proptest::prelude::*;

fn check_stdin(input: &[u8]) -> crate::support::Run {
    let run = lacuna(&["check", "--format", "gnu", "-"], Some(input));
    assert!(
        run.code == 0 || run.code == 1,
        "exit {}: {}",
        run.code,
        run.stderr
    );
    run
}

#[test]
fn a_ten_megabyte_line() {
    let mut line = String::from("host ZrO2\n");
    while line.len() < 10_000_000 {
        line.push_str("O_O + ");
    }
    line.push_str("O_O -> V_O..\n");
    let run = check_stdin(line.as_bytes());
    assert!(
        run.stdout.len() < 10_000,
        "diagnostics stay short: {} bytes",
        run.stdout.len()
    );
    let mut junk = "host ZrO2\nO_O -> ".to_string();
    junk.push_str(&"Q".repeat(10_000_000));
    let run = check_stdin(junk.as_bytes());
    assert!(run.stdout.len() < 10_000, "{} bytes", run.stdout.len());
}

#[test]
fn a_hundred_thousand_nested_parentheses() {
    let depth = 100_000;
    let text = format!(
        "host ZrO2\n{}O{} -> O_O\n",
        "(".repeat(depth),
        ")".repeat(depth)
    );
    let run = check_stdin(text.as_bytes());
    assert!(
        run.stdout.contains("P108"),
        "{}",
        &run.stdout[..run.stdout.len().min(400)]
    );
    let text = format!(
        "host ZrO2\n{}V_O..{} -> O_O\n",
        "(".repeat(depth),
        ")".repeat(depth)
    );
    check_stdin(text.as_bytes());
    let text = format!("host ZrO2\nO_O -> {}\n", "(".repeat(depth));
    check_stdin(text.as_bytes());
}

#[test]
fn huge_coefficients_are_clear_errors() {
    let run = check_stdin(
        b"host ZrO2\n10000000000000000000000000000000000000000 O_O -> V_O.. + 2e' + 1/2 O2(g)\n",
    );
    assert!(
        run.stdout.contains("[P107]") && run.stdout.contains("too large"),
        "{}",
        run.stdout
    );
    // Large but representable coefficients whose products overflow.
    let run = check_stdin(b"host ZrO2\n9000000000000000000 Y2O3 -> 9000000000000000000 V_O..\n");
    assert_eq!(run.code, 1, "{}", run.stdout);
}

#[test]
fn nul_bytes_and_invalid_utf8() {
    let run = check_stdin(b"host ZrO2\nO_O\0 -> V_O..\n\xff\xfe\n\0\0\0\nnil -> e' + h.\n");
    assert!(run.stdout.contains("not valid UTF-8"), "{}", run.stdout);
    assert!(!run.stdout.contains('\0'), "NUL bytes are not echoed");
}

#[test]
fn ten_million_empty_lines() {
    let mut input = vec![b'\n'; 10_000_000];
    input.extend_from_slice(b"host ZrO2\nnil -> e' + h.\n");
    let run = lacuna(&["check", "-"], Some(&input));
    assert_eq!(run.code, 0, "{}", run.stdout);
    assert!(
        run.stdout.contains("1 reaction in 1 source"),
        "{}",
        run.stdout
    );
}

#[test]
fn a_host_with_fifty_elements() {
    let symbols = [
        "Li", "Na", "K", "Rb", "Cs", "Be", "Mg", "Ca", "Sr", "Ba", "Sc", "Y", "La", "Ce", "Pr",
        "Nd", "Sm", "Eu", "Gd", "Tb", "Dy", "Ho", "Er", "Tm", "Yb", "Lu", "Ti", "Zr", "Hf", "V",
        "Nb", "Ta", "Cr", "Mo", "W", "Mn", "Fe", "Co", "Ni", "Cu", "Zn", "Al", "Ga", "In", "Si",
        "Ge", "Sn", "Pb", "Bi", "O",
    ];
    assert_eq!(symbols.len(), 50);
    let formula: String = symbols.concat();
    let run = lacuna(&["check", "--host", &formula, "-r", "nil -> e' + h."], None);
    assert_eq!(
        run.code, 2,
        "an uninferable host is a usage error: {}",
        run.stderr
    );
    assert!(
        run.stderr.contains("[H202]") && run.stderr.contains("state the charges"),
        "{}",
        run.stderr
    );
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 512, ..ProptestConfig::default() })]

    /// Arbitrary text built from the notation's own characters never panics
    /// the parser, checker, linter or formatter.
    #[test]
    fn arbitrary_notation_never_panics(text in "[A-Za-z_.'*x0-9()\\[\\]{}+<=>^ /½•′×→⇌∅□:\\\\-]{0,60}") {
        let host = Host::from_spec("ZrO2").expect("host");
        let (reaction, _) = parse_reaction(&text, 0..text.len());
        if let Some(r) = reaction {
            let _ = check_reaction(&r, Some(&host));
        }
        let file = format!("host ZrO2\n{text}\n{text}\n");
        let mut recording = Recording::default();
        let mut checker = Runner::new(None, &mut recording);
        prop_assert!(checker.check_text("x", &file).is_ok());
        let _ = format_text(&file, MarkSpelling::Unicode);
    }

    /// Arbitrary bytes through the whole engine.
    #[test]
    fn arbitrary_bytes_never_panic(bytes in prop::collection::vec(any::<u8>(), 0..200)) {
        let mut recording = Recording::default();
        let mut checker = Runner::new(None, &mut recording);
        prop_assert!(checker.check_reader("x", bytes.as_slice()).is_ok());
    }
}

#[test]
fn a_name_with_nothing_after_it() {
    for text in ["a: \n", "a:\n", "a:   # note\n", "r: -> \n"] {
        let run = lacuna(&["check", "--host", "ZrO2", "-"], Some(text.as_bytes()));
        assert_eq!(run.code, 1, "{text:?}: {}", run.stdout);
        let run = lacuna(&["fmt", "-"], Some(text.as_bytes()));
        assert!(run.code == 0 || run.code == 1, "{text:?}: {}", run.stderr);
        let run = lacuna(&["repl"], Some(format!("/host ZrO2\n{text}").as_bytes()));
        assert!(run.code == 0 || run.code == 1, "{text:?}: {}", run.stderr);
    }
}
