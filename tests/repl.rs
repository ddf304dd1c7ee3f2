//! The workbench end to end: `lacuna repl` driven through piped standard
//! input (every command, bad input, save and load), and through a
//! pseudo-terminal for completion, history and Ctrl-C / Ctrl-D.
//!
//! The reactions are the textbook ones a practitioner types first.
//! source: common practice — oxygen-vacancy formation by reduction
//! (O_O -> V_O•• + 2e′ + ½O₂), Y2O3 dissolving in ZrO₂ with one oxygen
//! vacancy per two Y′_Zr, Schottky disorder (nil -> V_Zr'''' + 2V_O••);
//! e.g. Smyth, The Defect Chemistry of Metal Oxides (2000), ch. 3-5 (from memory).

use assert_cmd::cargo::cargo_bin_cmd;
use predicates::prelude::*;
use std::fs;
use std::path::Path;

const REDUCTION: &str = "O_O -> V_O.. + 2e' + 1/2 O2(g)";
const YTTRIA: &str = "Y2O3 -> 2Y_Zr' + V_O.. + 3O_Ox";
const SCHOTTKY: &str = "nil -> V_Zr'''' + 2V_O..";

/// Runs `lacuna repl ARGS` in `dir` with `input` on stdin.
fn repl(dir: &Path, args: &[&str], input: &str) -> assert_cmd::assert::Assert {
    cargo_bin_cmd!("lacuna")
        .current_dir(dir)
        .arg("repl")
        .args(args)
        .env("NO_COLOR", "1")
        .write_stdin(input.to_string())
        .assert()
}

fn output(dir: &Path, args: &[&str], input: &str) -> (String, i32) {
    let out = repl(dir, args, input).get_output().clone();
    (
        String::from_utf8(out.stdout).expect("UTF-8 output"),
        out.status.code().unwrap_or(-1),
    )
}

#[test]
fn typed_reactions_are_checked_against_the_host() {
    let dir = tempfile::tempdir().unwrap();
    let input = format!("/host ZrO2\n{REDUCTION}\nred: {YTTRIA}\n{SCHOTTKY}\n");
    let (out, code) = output(dir.path(), &[], &input);
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("Zr     formal charge    +4  sites 1"), "{out}");
    // A true minus sign (U+2212) in text for people, as in every other table.
    assert!(
        out.contains("O      formal charge    \u{2212}2  sites 2"),
        "{out}"
    );
    assert!(
        out.contains("[1] ✓ balanced  O_O× → V_O•• + 2 e′ + ½ O2(g)"),
        "{out}"
    );
    assert!(
        out.contains("[2 red] ✓ balanced  Y2O3 → 2 Y_Zr′ + V_O•• + 3 O_O×"),
        "{out}"
    );
    assert!(
        out.contains("[3] ✓ balanced  ∅ → V_Zr′′′′ + 2 V_O••"),
        "{out}"
    );
}

#[test]
fn a_reaction_that_does_not_balance_is_explained_as_check_does() {
    let dir = tempfile::tempdir().unwrap();
    // One Y′_Zr instead of two: mass, charge and sites all fail.
    let (out, code) = output(
        dir.path(),
        &["--host", "ZrO2"],
        "Y2O3 -> Y_Zr' + V_O.. + 3O_Ox\n",
    );
    assert_eq!(code, 1);
    assert!(out.contains("[1] ✗ fails mass, charge, sites"), "{out}");
    assert!(
        out.contains("error[B301]: mass does not balance: Y left 2, right 1"),
        "{out}"
    );
    assert!(out.contains(" --> <stdin>:1:1"), "{out}");
    assert!(
        out.contains("  mass Y                2        1  ✗"),
        "{out}"
    );
}

#[test]
fn every_command_answers() {
    let dir = tempfile::tempdir().unwrap();
    let input = [
        "/help",
        "/help ts",
        "/host",
        "/host ZrO2",
        REDUCTION,
        YTTRIA,
        "/list",
        "/ls",
        "/name 2 yttria",
        "/check yttria",
        "/species",
        "/typeset",
        "/ts unicode 1",
        "/ts ascii yttria",
        "/ts html 2",
        "/ts markdown",
        "/save session.kvr",
        "/drop 1",
        "/list",
        "/load session.kvr",
        "/list",
        "/quit",
        "this line is never read",
    ]
    .join("\n");
    let (out, code) = output(dir.path(), &[], &input);
    assert_eq!(code, 0, "{out}");
    for expected in [
        "/typeset [FORM] [WHICH...|all]",
        "no host yet",
        "[2 yttria] named",
        "[2 yttria] ✓ balanced",
        "1 of 1 pass",
        "  V_O••  in [1] [2]",
        "\\mathrm{O}_{\\mathrm{O}}^{\\times} \\longrightarrow V_{\\mathrm{O}}^{\\bullet\\bullet} + 2\\,e^{\\prime} + \\tfrac{1}{2}\\,\\mathrm{O_{2}(g)}",
        "\\mathrm{Y_{2}O_{3}} \\xrightarrow{\\mathrm{ZrO_{2}}} 2\\,\\mathrm{Y}_{\\mathrm{Zr}}^{\\prime}",
        "O_O× → V_O•• + 2 e′ + ½ O2(g)",
        "yttria: Y2O3 -> 2 Y_Zr' + V_O.. + 3 O_Ox",
        "<ruby>→<rp>(</rp><rt>ZrO<sub>2</sub></rt><rp>)</rp></ruby>",
        "- **yttria**: Y<sub>2</sub>O<sub>3</sub>",
        "saved 2 reactions to",
        "dropped [1]",
        "loaded 2 reactions from",
        "added to the session",
    ] {
        assert!(out.contains(expected), "missing {expected:?} in\n{out}");
    }
    assert!(!out.contains("never read"));
}

#[test]
fn balance_finds_the_coefficients_and_offers_them_for_take() {
    let dir = tempfile::tempdir().unwrap();
    // source: common practice — Y2O3 in ZrO2 is written
    // Y2O3 -> 2 Y_Zr' + V_O•• + 3 O_O× (Smyth 2000, ch. 5, from memory).
    let input = [
        "Y2O3 -> Y_Zr' + V_O.. + O_O",
        "/balance 1",
        "/take",
        "/list",
        "/balance 1",
    ]
    .join("\n");
    let (out, code) = output(dir.path(), &["--host", "ZrO2"], &input);
    // The first line fails to balance, so the session reports a problem.
    assert_eq!(code, 1, "{out}");
    assert!(
        out.contains("Y2O3 → 2 Y_Zr′ + V_O•• + 3 O_O×\n  /take keeps it in place of [1]"),
        "{out}"
    );
    assert!(
        out.contains("[1] ✓ balanced  Y2O3 → 2 Y_Zr′ + V_O•• + 3 O_O×"),
        "{out}"
    );
    assert!(out.contains("[1] is balanced as written"), "{out}");
    // Coefficients written are kept, as `lacuna balance` keeps them;
    // `--free` lets them go.
    let (out, code) = output(
        dir.path(),
        &["--host", "ZrO2"],
        "Y2O3 -> 2Y_Zr' + 2V_O.. + 3O_O\n/balance 1\n/balance 1 --free\n",
    );
    assert_eq!(code, 1, "{out}");
    assert!(out.contains("error[K605]"), "{out}");
    assert!(out.contains("/take keeps it in place of [1]"), "{out}");
}

#[test]
fn balance_reports_several_and_none_as_the_command_does() {
    let dir = tempfile::tempdir().unwrap();
    // Two independent reactions share these species: reduction and the
    // band gap (common practice).
    let (several, code) = output(
        dir.path(),
        &["--host", "ZrO2"],
        "O_O -> V_O.. + e' + h. + O2(g)\n/balance 1 --free\n",
    );
    let cli = cargo_bin_cmd!("lacuna")
        .args([
            "balance",
            "--host",
            "ZrO2",
            "--free",
            "O_O -> V_O.. + e' + h. + O2(g)",
        ])
        .env("NO_COLOR", "1")
        .output()
        .unwrap();
    let cli = String::from_utf8(cli.stdout).unwrap();
    let first = cli.lines().next().unwrap_or_default();
    assert!(first.contains("independent balanced reactions"), "{cli}");
    assert!(several.contains(first), "{several}\n---\n{cli}");
    assert!(!several.contains("/take keeps"), "{several}");
    assert_eq!(code, 1);
    // Nothing balances a lone vacancy; the reason is given.
    let (none, code) = output(
        dir.path(),
        &["--host", "ZrO2"],
        "nil -> V_O..\n/balance 1\n",
    );
    assert_eq!(code, 1);
    assert!(none.contains("error[K601]"), "{none}");
}

#[test]
fn dope_ranks_the_mechanisms_in_the_session_host() {
    let dir = tempfile::tempdir().unwrap();
    // source: common practice — Y2O3 in ZrO2 is compensated by oxygen
    // vacancies (yttria-stabilised zirconia), so that mechanism ranks first.
    let (out, code) = output(
        dir.path(),
        &["--host", "ZrO2"],
        "/dope Y2O3\n/dope Y2O3 Zr\n",
    );
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("Y2O3 in ZrO2: Y3+ from Y2O3"), "{out}");
    assert!(
        out.contains("1  Zr    V_O••                +21.3 %"),
        "{out}"
    );
    assert!(out.contains("Y2O3 → 2 Y_Zr′ + 3 O_O× + V_O••"), "{out}");
    assert!(out.contains("it is a guide, not a prediction"), "{out}");
    // The same table as `lacuna dope`.
    let cli = cargo_bin_cmd!("lacuna")
        .args(["dope", "ZrO2", "Y2O3"])
        .env("NO_COLOR", "1")
        .output()
        .unwrap();
    let cli = String::from_utf8(cli.stdout).unwrap();
    for line in cli.lines().skip(3) {
        assert!(out.contains(line), "missing {line:?} in\n{out}");
    }
}

#[test]
fn dope_explains_bad_input() {
    let dir = tempfile::tempdir().unwrap();
    let (out, code) = output(dir.path(), &[], "/dope Y2O3\n");
    assert_eq!(code, 1);
    assert!(out.contains("no host yet"), "{out}");
    assert!(out.contains("/host ZrO2"), "{out}");
    let (out, code) = output(
        dir.path(),
        &["--host", "ZrO2"],
        "/dope Qq2O3\n/dope Y2O3 O\n/dope\n",
    );
    assert_eq!(code, 1);
    assert!(out.contains("`Qq` is not an element symbol"), "{out}");
    assert!(out.contains(" --> <stdin>:1:7"), "{out}");
    assert!(out.contains("O is not a cation site"), "{out}");
    assert!(out.contains(" --> <stdin>:2:12"), "{out}");
    assert!(out.contains("`/dope` takes a dopant"), "{out}");
}

#[test]
fn law_writes_the_mass_action_law_as_the_command_does() {
    let dir = tempfile::tempdir().unwrap();
    // source: common practice — K_red = [V_O••]·n²·pO2^½ for the reduction
    // (Smyth 2000, ch. 3, from memory).
    let (out, code) = output(
        dir.path(),
        &["--host", "ZrO2"],
        &format!("red: {REDUCTION}\n/law red\n/law 2\n"),
    );
    assert_eq!(code, 1, "{out}");
    assert!(
        out.contains("red: O_O× → V_O•• + 2 e′ + ½ O2(g)    (reaction 1)"),
        "{out}"
    );
    assert!(
        out.contains("K_red = [V_O••]·n²·pO₂^(1/2) / [O_O×] ≈ [V_O••]·n²·pO₂^(1/2)"),
        "{out}"
    );
    assert!(out.contains("no reaction `2`"), "{out}");
    // With the data of a loaded file, K(T) too.
    let (out, code) = output(dir.path(), &[], &format!("/load {}\n/law red\n", example()));
    assert_eq!(code, 0, "{out}");
    assert!(
        out.contains("K_red(T) = exp(ΔS/k)·exp(−ΔH/kT) with ΔH = 4.6 eV"),
        "{out}"
    );
    // Without a host the reaction cannot be checked, so no law.
    let (out, code) = output(dir.path(), &[], &format!("{REDUCTION}\n/law 1\n"));
    assert_eq!(code, 1);
    assert!(out.contains("no mass-action law is written"), "{out}");
    assert!(out.contains("/host ZrO2"), "{out}");
}

/// The demo model: an acceptor-doped zirconia with invented data.
fn example() -> String {
    format!(
        "{}/examples/electrolyte-notebook.kvr",
        env!("CARGO_MANIFEST_DIR")
    )
}

#[test]
fn brouwer_orders_the_regimes_of_a_loaded_model_as_the_command_does() {
    let dir = tempfile::tempdir().unwrap();
    let (out, code) = output(dir.path(), &[], &format!("/load {}\n/brouwer\n", example()));
    assert_eq!(code, 0, "{out}");
    // source: D. M. Smyth, The Defect Chemistry of Metal Oxides (2000),
    // acceptor-doped oxides (from memory): n = 2[V_O••] gives −1/6, the
    // acceptor-fixed regime n −1/4 and p +1/4, [A′] = p gives [V_O••] −1/2.
    assert!(
        out.contains(
            " 2  [Y_Zr′] = 2[V_O••]  2.01e-22   0.0216     0           −1/4        +1/4        0"
        ),
        "{out}"
    );
    // The regimes part is the same text `lacuna brouwer` prints.
    let cli = cargo_bin_cmd!("lacuna")
        .args(["brouwer", &example()])
        .env("NO_COLOR", "1")
        .output()
        .unwrap();
    let cli = String::from_utf8(cli.stdout).unwrap();
    let start = cli.find("Brouwer regimes along pO₂").unwrap();
    let end = cli.find("Full solution").unwrap();
    assert!(
        out.contains(cli[start..end].trim_end()),
        "{out}\n---\n{cli}"
    );
    assert!(
        out.contains("note: shown for reference only (no data): dope"),
        "{out}"
    );
}

#[test]
fn brouwer_without_k_values_gives_every_regime_and_says_why_unordered() {
    let dir = tempfile::tempdir().unwrap();
    // source: P. Kofstad, Nonstoichiometry, Diffusion and Electrical
    // Conductivity in Binary Metal Oxides (1972) (from memory): reduction
    // with n = 2[V_O••] gives −1/6; n = p leaves [V_O••] ∝ pO2^(−1/2).
    let input = format!("red: {REDUCTION}\ngap: nil -> e' + h.\n/brouwer\n/brouwer red\n");
    let (out, code) = output(dir.path(), &["--host", "CeO2"], &input);
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("not ordered"), "{out}");
    assert!(
        out.contains(" 1  n = 2[V_O••]  −1/6        −1/6        +1/6"),
        "{out}"
    );
    assert!(
        out.contains(" 2  n = p         −1/2        0           0"),
        "{out}"
    );
    assert!(
        out.contains("K values are needed to order the regimes along pO₂"),
        "{out}"
    );
    assert!(out.contains("model       [1 red] on host CeO2"), "{out}");
}

#[test]
fn brouwer_explains_bad_input() {
    let dir = tempfile::tempdir().unwrap();
    let (out, code) = output(dir.path(), &[], "/brouwer\n");
    assert_eq!(code, 1);
    assert!(out.contains("the session has no reactions"), "{out}");
    // No host.
    let (out, code) = output(dir.path(), &[], &format!("{REDUCTION}\n/brouwer\n"));
    assert_eq!(code, 1);
    assert!(
        out.contains("[1] has no host, and a model needs one"),
        "{out}"
    );
    // Unknown reaction, and two hosts in one model.
    let input = format!("{REDUCTION}\n/brouwer 7\n/host CeO2\nnil -> e' + h.\n/brouwer\n");
    let (out, code) = output(dir.path(), &["--host", "ZrO2"], &input);
    assert_eq!(code, 1);
    assert!(out.contains("no reaction `7`"), "{out}");
    assert!(out.contains(" --> <stdin>:2:10"), "{out}");
    assert!(out.contains("a model has one host"), "{out}");
    assert!(out.contains("`/brouwer 1`"), "{out}");
    // A reaction that does not balance: the model's problem, shown on it.
    let (out, code) = output(
        dir.path(),
        &["--host", "ZrO2"],
        "O_O -> V_O. + 2e' + 1/2 O2(g)\n/brouwer\n",
    );
    assert_eq!(code, 1);
    assert!(out.contains(" --> reaction 1:1:"), "{out}");
    assert!(out.contains("no model: nothing was solved"), "{out}");
    // A loaded line that did not parse is no reaction of the session: left out, and said.
    fs::write(
        dir.path().join("slip.kvr"),
        format!("host CeO2\nred: {REDUCTION}\nslip: O_O => => V_O\n"),
    )
    .unwrap();
    let (out, _) = output(dir.path(), &["slip.kvr"], "/brouwer\n");
    assert!(out.contains(" 1  n = 2[V_O••]  −1/6        −1/6"), "{out}");
    assert!(out.contains("left out 1 line of a loaded file"), "{out}");
}

#[test]
fn bad_input_is_reported_and_the_session_goes_on() {
    let dir = tempfile::tempdir().unwrap();
    let input = [
        "/frobnicate",
        "/hots ZrO2",
        "/host Qq2",
        "O_O => V_O..",
        "Y_Zr' V_O..",
        "/name 7 red",
        "/drop",
        "/ts rtf",
        "/load missing.kvr",
        "/load .",
        "/save",
        "V_{\\mathrm{O}}^{2+} -> nil",
        "\\mathrm{O}_{\\mathrm{O}} \\leadsto V_O..",
        "/host ZrO2",
        REDUCTION,
    ]
    .join("\n");
    let (out, code) = output(dir.path(), &[], &format!("{input}\n"));
    assert_eq!(code, 1);
    for expected in [
        "error[T810]: `/frobnicate` is not a command",
        "did you mean `/host`?",
        "error[P102]",
        "error[T810]: no reaction `7`",
        "error[T810]: `/drop` needs the reactions to remove",
        "error[T810]: `rtf` is not a form or a reaction",
        "error[T811]: cannot read `missing.kvr`",
        "cannot read `.`: it is a folder",
        "error[T810]: no file to save to yet",
        "error[T803]: a real ionic charge in a Kröger–Vink superscript",
        "error[T801]: `\\leadsto` is not a command the reaction reader knows",
        "[1] ✓ balanced",
    ] {
        assert!(out.contains(expected), "missing {expected:?} in\n{out}");
    }
    // The LaTeX error points at the command in the pasted line.
    assert!(out.contains("<stdin>:13:25"), "{out}");
}

#[test]
fn invalid_utf8_and_control_characters_do_not_crash() {
    let dir = tempfile::tempdir().unwrap();
    let mut input = b"/host ZrO2\n\xff\xfe O_O\n\x00\x1b[A\n".to_vec();
    input.extend_from_slice(REDUCTION.as_bytes());
    input.push(b'\n');
    let out = cargo_bin_cmd!("lacuna")
        .current_dir(dir.path())
        .arg("repl")
        .write_stdin(input)
        .assert()
        .code(1)
        .get_output()
        .clone();
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("error[P110]"), "{text}");
    assert!(text.contains("[1] ✓ balanced"), "{text}");
}

#[test]
fn a_reaction_may_continue_on_the_next_line() {
    let dir = tempfile::tempdir().unwrap();
    let (out, code) = output(
        dir.path(),
        &["--host", "ZrO2"],
        "O_O ->\n  V_O.. + 2e' +\n  1/2 O2(g)\n(Y_Zr' V_O..\nO_O -> O_i'' + V_O..\n",
    );
    assert_eq!(code, 1, "{out}");
    assert!(
        out.contains("[1] ✓ balanced  O_O× → V_O•• + 2 e′ + ½ O2(g)"),
        "{out}"
    );
    // An unclosed bracket is an error on its own line; it does not swallow
    // the next reaction.
    assert!(out.contains("error[P108]"), "{out}");
    assert!(
        out.contains("[2] ✓ balanced  O_O× → O_i′′ + V_O••"),
        "{out}"
    );
}

#[test]
fn save_and_load_round_trip_the_reaction_file() {
    let dir = tempfile::tempdir().unwrap();
    let input = format!(
        "/host ZrO2\nred: {REDUCTION}\n{YTTRIA}\n/host CeO2\nschottky: nil -> V_Ce'''' + 2V_O..\n/save doped.kvr\n"
    );
    let (out, code) = output(dir.path(), &[], &input);
    assert_eq!(code, 0, "{out}");
    let saved = fs::read_to_string(dir.path().join("doped.kvr")).unwrap();
    assert_eq!(
        saved,
        format!(
            "host ZrO2\nred: {REDUCTION}\n{YTTRIA}\nhost CeO2\nschottky: nil -> V_Ce'''' + 2V_O..\n"
        )
    );
    // `lacuna check` reads what the workbench wrote.
    cargo_bin_cmd!("lacuna")
        .current_dir(dir.path())
        .args(["check", "doped.kvr"])
        .assert()
        .success()
        .stdout(predicate::str::contains("3 reactions in 1 source: 3 pass"));
    // Loading it and saving again gives the same file, byte for byte.
    let (out, code) = output(dir.path(), &["doped.kvr"], "/list\n/save\n");
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("loaded 3 reactions from"), "{out}");
    assert!(out.contains("host is now CeO2 (from the file)"), "{out}");
    assert!(out.contains("host ZrO2\n[1 red] ✓"), "{out}");
    assert!(out.contains("host CeO2\n[3 schottky] ✓"), "{out}");
    assert_eq!(
        fs::read_to_string(dir.path().join("doped.kvr")).unwrap(),
        saved
    );
}

#[test]
fn loading_keeps_comments_model_lines_and_broken_lines() {
    let dir = tempfile::tempdir().unwrap();
    let original = format!(
        "# Doped zirconia, notes for the paper\nhost ZrO2  # cubic\n\nred: {REDUCTION}  # reduction\nK red 1e-20\nO_O -> V_Q..\n{YTTRIA}\n# end\n"
    );
    fs::write(dir.path().join("notes.kvr"), &original).unwrap();
    let (out, code) = output(dir.path(), &["notes.kvr"], &format!("{SCHOTTKY}\n/save\n"));
    assert_eq!(code, 1, "the file has a line that does not parse: {out}");
    assert!(
        out.contains("1 line did not parse and is kept as written"),
        "{out}"
    );
    let saved = fs::read_to_string(dir.path().join("notes.kvr")).unwrap();
    // Everything comes back in place; the new reaction goes before the
    // lines that followed the file's last reaction.
    let expected = original.replace("# end\n", &format!("{SCHOTTKY}\n# end\n"));
    assert_eq!(saved, expected);
}

#[test]
fn a_typed_correction_fixes_a_reaction_of_the_loaded_file_in_place() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("draft.kvr");
    fs::write(
        &path,
        format!("host ZrO2\nyttria: Y2O3 -> 2Y_Zr' + V_O..  # forgot the oxygen\n{SCHOTTKY}\n"),
    )
    .unwrap();
    let (out, code) = output(dir.path(), &["draft.kvr"], &format!("{YTTRIA}\n/save\n"));
    assert_eq!(code, 1, "the file had a failing reaction: {out}");
    assert!(out.contains("[1 yttria] ✓ balanced"), "{out}");
    assert!(out.contains("in place of the one that failed"), "{out}");
    assert_eq!(
        fs::read_to_string(&path).unwrap(),
        format!("host ZrO2\nyttria: {YTTRIA}  # forgot the oxygen\n{SCHOTTKY}\n")
    );
}

#[test]
fn saving_never_overwrites_a_file_it_does_not_own() {
    let dir = tempfile::tempdir().unwrap();
    let other = dir.path().join("manuscript.kvr");
    fs::write(&other, "# someone else's work\n").unwrap();
    let input = format!("/host ZrO2\n{REDUCTION}\n/save manuscript.kvr\n");
    let (out, code) = output(dir.path(), &[], &input);
    assert_eq!(code, 1);
    assert!(
        out.contains("exists and is not this session's file"),
        "{out}"
    );
    assert!(out.contains("add `--replace`"), "{out}");
    assert_eq!(
        fs::read_to_string(&other).unwrap(),
        "# someone else's work\n"
    );
    let input = format!("/host ZrO2\n{REDUCTION}\n/save manuscript.kvr --replace\n");
    let (out, code) = output(dir.path(), &[], &input);
    assert_eq!(code, 0, "{out}");
    assert_eq!(
        fs::read_to_string(&other).unwrap(),
        format!("host ZrO2\n{REDUCTION}\n")
    );
    // No temporary file is left beside it.
    let names: Vec<_> = fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(names.len(), 1, "{names:?}");
}

#[test]
fn saving_notices_a_file_changed_by_another_program() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("work.kvr");
    fs::write(&path, format!("host ZrO2\n{REDUCTION}\n")).unwrap();
    // The session loads the file; meanwhile an editor appends a line; the
    // session's /save must not throw that line away.
    let script = format!("{YTTRIA}\n/save\n",);
    let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_lacuna"))
        .current_dir(dir.path())
        .args(["repl", "work.kvr"])
        .stdin(std::process::Stdio::piped())
        .stdout(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    std::thread::sleep(std::time::Duration::from_millis(300));
    fs::write(
        &path,
        format!("host ZrO2\n{REDUCTION}\n# added in an editor\n"),
    )
    .unwrap();
    {
        use std::io::Write;
        let mut stdin = child.stdin.take().unwrap();
        stdin.write_all(script.as_bytes()).unwrap();
    }
    let out = child.wait_with_output().unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("was changed by another program"), "{text}");
    assert!(
        fs::read_to_string(&path)
            .unwrap()
            .contains("# added in an editor")
    );
}

#[test]
fn latex_pasted_from_a_manuscript_is_read() {
    let dir = tempfile::tempdir().unwrap();
    // source: IUPAC, Nomenclature of Inorganic Chemistry (Recommendations
    // 2005), IR-11.4.2 and IR-11.4.4: italic V, bullet and prime superscripts.
    let latex = r"$\mathrm{Y_2O_3} \xrightarrow{\mathrm{ZrO_2}} 2\,\mathrm{Y}_{\mathrm{Zr}}^{\prime} + V_{\mathrm{O}}^{\bullet\bullet} + 3\,\mathrm{O}_{\mathrm{O}}^{\times}$";
    let (out, code) = output(dir.path(), &[], &format!("{latex}\n/save paper.kvr\n"));
    assert_eq!(code, 0, "{out}");
    assert!(
        out.contains("no host was set: the reaction is checked against ZrO2"),
        "{out}"
    );
    assert!(
        out.contains("[1] ✓ balanced  Y2O3 → 2 Y_Zr′ + V_O•• + 3 O_O×"),
        "{out}"
    );
    assert_eq!(
        fs::read_to_string(dir.path().join("paper.kvr")).unwrap(),
        "host ZrO2\nY2O3 → 2 Y_Zr′ + V_O•• + 3 O_O×\n"
    );
}

#[test]
fn no_arguments_off_a_terminal_prints_help_and_exits_2() {
    cargo_bin_cmd!("lacuna")
        .write_stdin("")
        .assert()
        .code(2)
        .stderr(predicate::str::contains("Usage: lacuna"))
        .stderr(predicate::str::contains("repl"));
}

#[cfg(unix)]
mod terminal {
    //! The line editor through a pseudo-terminal: completion, history,
    //! Ctrl-C and Ctrl-D.
    use super::*;
    use rexpect::reader::Options;
    use rexpect::session::spawn_with_options;

    /// Lets the editor switch the terminal back to raw mode: input sent
    /// while it is between two lines may be flushed, as a person never types
    /// that fast.
    fn settle() {
        std::thread::sleep(std::time::Duration::from_millis(300));
    }

    /// Sends keys without a newline (the writer only flushes at newlines).
    fn keys(p: &mut rexpect::session::PtySession, keys: &str) {
        p.send(keys).unwrap();
        p.flush().unwrap();
    }

    // The pty reader decodes bytes one by one, so the needles below are ASCII.
    fn spawn(history: &Path, dir: &Path) -> rexpect::session::PtySession {
        let mut command = std::process::Command::new(env!("CARGO_BIN_EXE_lacuna"));
        command
            .current_dir(dir)
            .args(["repl", "--history"])
            .arg(history)
            .env("NO_COLOR", "1")
            .env("TERM", "xterm");
        spawn_with_options(
            command,
            Options::new()
                .timeout_ms(Some(10_000))
                .strip_ansi_escape_codes(true),
        )
        .expect("a pseudo-terminal")
    }

    #[test]
    fn lacuna_alone_on_a_terminal_starts_the_workbench() {
        let dir = tempfile::tempdir().unwrap();
        let mut command = std::process::Command::new(env!("CARGO_BIN_EXE_lacuna"));
        command
            .current_dir(dir.path())
            .env("LACUNA_HISTORY", dir.path().join("history.txt"))
            .env("NO_COLOR", "1")
            .env("TERM", "xterm");
        let mut p = spawn_with_options(command, Options::new().timeout_ms(Some(10_000)))
            .expect("a pseudo-terminal");
        p.exp_string("lacuna workbench").unwrap();
        p.exp_string("no host yet").unwrap();
        p.send_line("/host ZrO2").unwrap();
        p.exp_string("formal charge").unwrap();
        settle();
        p.send_control('d').unwrap();
        p.exp_eof().unwrap();
        assert!(dir.path().join("history.txt").exists());
    }

    #[test]
    fn completion_history_and_leaving() {
        let dir = tempfile::tempdir().unwrap();
        let history = dir.path().join("state").join("history.txt");
        let mut p = spawn(&history, dir.path());
        p.exp_string("lacuna workbench").unwrap();
        // Tab completes the command name.
        keys(&mut p, "/ho\t");
        p.send_line("ZrO2").unwrap();
        p.exp_string("formal charge").unwrap();
        p.send_line(REDUCTION).unwrap();
        p.exp_string("[1] ").unwrap();
        p.exp_string("balanced").unwrap();
        // Tab completes the only site of the host that starts with Z.
        keys(&mut p, "Y2O3 -> 2Y_Z\t");
        p.send_line("' + V_O.. + 3O_Ox").unwrap();
        p.exp_string("[2] ").unwrap();
        p.exp_string("balanced").unwrap();
        // Ctrl-C abandons a half-typed line; the session goes on.
        keys(&mut p, "O_O -> nonsense");
        p.send_control('c').unwrap();
        settle();
        // Up arrow brings the last line back.
        keys(&mut p, "\x1b[A");
        keys(&mut p, "\r");
        p.exp_string("[3] ").unwrap();
        p.exp_string("balanced").unwrap();
        p.send_line("/list").unwrap();
        p.exp_string("[3] ").unwrap();
        // Ctrl-D leaves.
        p.send_control('d').unwrap();
        p.exp_eof().unwrap();
        let kept = fs::read_to_string(&history).expect("history written on first run");
        assert!(kept.contains("Y2O3 -> 2Y_Zr' + V_O.. + 3O_Ox"), "{kept}");
        assert!(!kept.contains("nonsense"), "{kept}");

        // A new session finds the history of the last one.
        let mut p = spawn(&history, dir.path());
        p.exp_string("lacuna workbench").unwrap();
        p.send_line("/host ZrO2").unwrap();
        p.exp_string("formal charge").unwrap();
        settle();
        // Up twice: past `/host ZrO2` to `/list`, three times to the yttria line.
        keys(&mut p, "\x1b[A\x1b[A\x1b[A");
        keys(&mut p, "\r");
        p.exp_string("[1] ").unwrap();
        p.exp_string("balanced").unwrap();
        p.send_line("/quit").unwrap();
        p.exp_eof().unwrap();
    }
}
