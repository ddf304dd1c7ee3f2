//! End-to-end tests of `lacuna law`: the binary, its outputs and exit codes.

use assert_cmd::cargo::cargo_bin_cmd;
use predicates::prelude::*;
use serde_json::Value;
use std::io::Write;

const BOLTZMANN_EV_PER_K: f64 = 8.617_333_262e-5; // source: CODATA 2018 (exact since 2019)

fn law() -> assert_cmd::Command {
    let mut cmd = cargo_bin_cmd!("lacuna");
    cmd.args(["law", "--color", "never"]);
    cmd
}

fn json(args: &[&str], stdin: Option<&str>) -> Value {
    let mut cmd = law();
    cmd.args(args).args(["--format", "json"]);
    if let Some(input) = stdin {
        cmd.write_stdin(input);
    }
    let output = cmd.output().expect("runs");
    serde_json::from_slice(&output.stdout).expect("JSON on stdout")
}

#[test]
fn reduction_law_in_unicode() {
    // source: common practice; O_O× ⇌ V_O•• + 2e′ + ½O2(g) gives
    // K_red = [V_O••] n² pO2^½ (Kofstad 1972, from memory).
    law()
        .args([
            "-r",
            "red: O_O -> V_O.. + 2e' + 1/2 O2(g)",
            "--host",
            "ZrO2",
        ])
        .assert()
        .success()
        .stdout(predicate::str::contains(
            "K_red = [V_O••]·n²·pO₂^(1/2) / [O_O×] ≈ [V_O••]·n²·pO₂^(1/2)",
        ))
        .stdout(predicate::str::contains(
            "[O_O×] ≈ 1: regular lattice species at activity 1",
        ))
        .stdout(predicate::str::contains(
            "electroneutrality of <inline> (every charged species): n = 2[V_O••]",
        ));
}

#[test]
fn plain_text_and_latex() {
    law()
        .args([
            "-r",
            "O_O -> V_O.. + 2e' + 1/2 O2(g)",
            "--host",
            "ZrO2",
            "--format",
            "text",
        ])
        .assert()
        .success()
        .stdout(predicate::str::contains(
            "K = [V_O..] n^2 pO2^(1/2) / [O_Ox] ~ [V_O..] n^2 pO2^(1/2)",
        ));
    law()
        .args(["-r", "O_O -> V_O.. + 2e' + 1/2 O2(g)", "--host", "ZrO2", "--format", "latex"])
        .assert()
        .success()
        .stdout(predicate::str::contains("\\begin{equation}"))
        .stdout(predicate::str::contains(
            "K = \\frac{[V_{\\mathrm{O}}^{\\bullet\\bullet}]\\,n^{2}\\,p_{\\mathrm{O_{2}}}^{1/2}}{[\\mathrm{O}_{\\mathrm{O}}^{\\times}]}",
        ));
}

#[test]
fn json_has_the_stable_keys_and_exact_exponents() {
    // source: common practice, hydration of an acceptor-doped perovskite
    // (Kjølseth, Wang, Haugsrud and Norby, Solid State Ionics 181 (2010)
    // 1740, from memory): K = [OH_O•]² / ([V_O••][O_O×] pH2O).
    let v = json(
        &[
            "-r",
            "hyd: H2O(g) + V_O.. + O_O -> 2OH_O.",
            "--host",
            "BaZrO3",
        ],
        None,
    );
    let law = &v["laws"][0];
    for key in ["reaction", "text", "latex", "factors", "assumptions"] {
        assert!(law.get(key).is_some(), "missing key {key}");
    }
    let factors = law["factors"].as_array().expect("factors");
    let find = |symbol: &str| {
        factors
            .iter()
            .find(|f| f["symbol"] == symbol)
            .unwrap_or_else(|| panic!("no factor {symbol}: {factors:?}"))
    };
    assert_eq!(find("pH₂O")["exponent"], "-1");
    assert_eq!(find("pH₂O")["kind"], "gas");
    assert_eq!(find("[V_O••]")["exponent"], "-1");
    assert_eq!(find("[V_O••]")["kind"], "defect");
    assert_eq!(find("[O_O×]")["kind"], "lattice");
    assert_eq!(find("[OH_O•]")["exponent"], "2");
    assert!(
        law["text"]
            .as_str()
            .expect("text")
            .starts_with("K_hyd = [OH_O•]²")
    );
}

#[test]
fn dopant_oxide_is_a_pure_phase_and_gas_without_tag_is_flagged() {
    let v = json(
        &["-r", "Y2O3 -> 2Y_Zr' + 3O_O + V_O..", "--host", "ZrO2"],
        None,
    );
    let factors = v["laws"][0]["factors"].as_array().expect("factors").clone();
    let phase = factors
        .iter()
        .find(|f| f["kind"] == "phase")
        .expect("phase factor");
    assert_eq!(phase["exponent"], "-1");
    assert_eq!(phase["symbol"], "a(Y₂O₃)");
    let v = json(
        &["-r", "O_O -> V_O.. + 2e' + 1/2 O2", "--host", "ZrO2"],
        None,
    );
    let assumptions = v["laws"][0]["assumptions"].to_string();
    assert!(assumptions.contains("has no (g) tag"), "{assumptions}");
}

#[test]
fn k_of_t_from_a_file_with_enthalpy_and_entropy() {
    // K(T) = exp(ΔS/k)·exp(−ΔH/kT), k from CODATA; ΔH given in kJ/mol is
    // converted with e·N_A = 96.485332 kJ/mol per eV (CODATA, exact).
    let file = "host ZrO2\ntemperature 1000 °C\n\
                red: O_O -> V_O.. + 2e' + 1/2 O2(g)\n\
                dH red = 434.18 kJ/mol\n\
                dS red = 115.8 J/(mol K)\n";
    let v = json(&["-"], Some(file));
    let k = &v["laws"][0]["k"];
    let dh_ev = 434.18 / 96.485_332_123_310_01;
    let ds = 115.8e-3 / 96.485_332_123_310_01;
    assert!((k["dH_eV"].as_f64().expect("dH") - dh_ev).abs() < 1e-12);
    let t = 1273.15;
    let expected = (ds / BOLTZMANN_EV_PER_K - dh_ev / (BOLTZMANN_EV_PER_K * t)).exp();
    let got = k["K"].as_f64().expect("K");
    assert!((got / expected - 1.0).abs() < 1e-12, "{got} vs {expected}");
    assert_eq!(k["temperature_K"].as_f64(), Some(t));
}

#[test]
fn units_of_k_are_stated() {
    law()
        .args(["-r", "nil -> e' + h.", "--host", "ZrO2"])
        .assert()
        .success()
        .stdout(predicate::str::contains(
            "units: K is a pure number: concentrations per formula unit of ZrO2 to the power 2; with concentrations in cm⁻³ instead it would carry cm^-6",
        ));
}

#[test]
fn vacancy_formation_states_the_configurational_entropy() {
    law()
        .args(["-r", "nil -> V_Al", "--host", "Al"])
        .assert()
        .success()
        .stdout(predicate::str::contains("k ln[(N+n)!/(N! n!)]"));
    law()
        .args(["-r", "nil -> V_Na' + V_Cl.", "--host", "NaCl"])
        .assert()
        .success()
        .stdout(predicate::str::contains("K^(1/2) for a pair"));
}

#[test]
fn unbalanced_reaction_gets_no_law_and_exit_1() {
    law()
        .args(["-r", "O_O -> V_O. + 2e' + 1/2 O2(g)", "--host", "ZrO2"])
        .assert()
        .code(1)
        .stdout(predicate::str::is_empty())
        .stderr(predicate::str::contains(
            "error[B302]: charge does not balance",
        ))
        .stderr(predicate::str::contains("<inline>:1:8"))
        .stderr(predicate::str::contains("note[M715]"));
}

#[test]
fn model_line_problems_are_located() {
    let mut file = tempfile::NamedTempFile::new().expect("temp file");
    write!(
        file,
        "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK redd = 1e-20 at 1273 K\ndH red = 4.5 parsecs\n"
    )
    .expect("write");
    law()
        .arg(file.path())
        .assert()
        .code(1)
        .stderr(predicate::str::contains(
            "error[M702]: no reaction is labelled `redd`",
        ))
        .stderr(predicate::str::contains(":3:3"))
        .stderr(predicate::str::contains("labels in this file: red"))
        .stderr(predicate::str::contains(
            "error[M705]: `parsecs` is not an energy unit",
        ))
        .stderr(predicate::str::contains(":4:10"));
}

#[test]
fn fixed_k_elsewhere_is_not_extrapolated() {
    let file = "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20 at 1273 K\n";
    law()
        .args(["-", "--temperature", "900 K"])
        .write_stdin(file)
        .assert()
        .success()
        .stdout(predicate::str::contains(
            "K_red = 1e-20 at 1273 K (999.85 °C); without ΔH it is not known at other temperatures",
        ));
}

#[test]
fn usage_errors_exit_2() {
    law()
        .assert()
        .code(2)
        .stderr(predicate::str::contains("no reactions"));
    law()
        .args([
            "-r",
            "nil -> e' + h.",
            "--host",
            "ZrO2",
            "--temperature",
            "300",
        ])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("has no unit"));
    law()
        .arg("/nonexistent/file.kvr")
        .assert()
        .code(2)
        .stderr(predicate::str::contains("cannot read"));
}

#[test]
fn invalid_utf8_is_reported_with_its_line() {
    let mut file = tempfile::NamedTempFile::new().expect("temp file");
    file.write_all(b"host ZrO2\nnil -> e' + h.\n\xff\xfe bad\n")
        .expect("write");
    law()
        .arg(file.path())
        .assert()
        .code(1)
        .stderr(predicate::str::contains(
            "error[P110]: line 3 is not valid UTF-8",
        ));
}

#[test]
fn overflowing_law_is_refused_alike_by_the_command_and_the_workbench() {
    // source: common practice (i64 range, 2^63 − 1 ≈ 9.22e18): the
    // exponents 1/3037000499 − 1/3037000507 = 8/(3037000499·3037000507)
    // need a denominator near 9.22e18, beyond what exact i64 fractions hold.
    let dir = tempfile::tempdir().expect("temp dir");
    let line = "x: 1/3037000499 h. + 1/3037000499 e' -> 1/3037000507 h. + 1/3037000507 e'";
    std::fs::write(dir.path().join("big.kvr"), format!("host NiO\n{line}\n")).expect("writes");
    let cli = law()
        .current_dir(dir.path())
        .arg("big.kvr")
        .output()
        .expect("runs");
    assert_eq!(cli.status.code(), Some(1), "the command fails");
    let cli_err = String::from_utf8_lossy(&cli.stderr).to_string();
    assert!(cli.stdout.is_empty(), "no law is printed");
    assert!(
        cli_err.contains("error[P107]: the exponents of this law grew beyond the exact range"),
        "{cli_err}"
    );
    assert!(cli_err.contains("big.kvr:2:4"), "{cli_err}");
    let bench = cargo_bin_cmd!("lacuna")
        .current_dir(dir.path())
        .args(["repl", "--color", "never", "--no-history"])
        .write_stdin("/load big.kvr\n/law all\n")
        .output()
        .expect("runs");
    assert_ne!(
        bench.status.code(),
        Some(0),
        "the workbench reports a problem"
    );
    let bench_out = String::from_utf8_lossy(&bench.stdout).to_string();
    // The same verdict, code, message, column and help from both.
    for part in [
        "error[P107]: the exponents of this law grew beyond the exact range",
        "= help: scale the coefficients down",
    ] {
        assert!(cli_err.contains(part), "{cli_err}");
        assert!(bench_out.contains(part), "{bench_out}");
    }
    assert!(bench_out.contains("reaction 1:1:4"), "{bench_out}");
}

#[test]
fn the_workbench_locates_a_refused_law_on_the_line_it_shows() {
    // A loaded line spaced differently from the line the workbench shows
    // (`bad:  O_O` is shown `bad: O_O`): the error points at the reaction
    // in the shown line, column 6, as the command points at it in the file,
    // column 7. source: common practice (charge balance, e′ alone cannot
    // balance V_O••).
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(
        dir.path().join("spaced.kvr"),
        "host ZrO2\nbad:  O_O -> V_O.. + e' + 1/2 O2(g)\n",
    )
    .expect("writes");
    let cli = law()
        .current_dir(dir.path())
        .arg("spaced.kvr")
        .output()
        .expect("runs");
    assert_eq!(cli.status.code(), Some(1));
    let cli_err = String::from_utf8_lossy(&cli.stderr).to_string();
    assert!(
        cli_err.contains("[M715]") && cli_err.contains("spaced.kvr:2:7"),
        "{cli_err}"
    );
    let bench = cargo_bin_cmd!("lacuna")
        .current_dir(dir.path())
        .args(["repl", "--color", "never", "--no-history"])
        .write_stdin("/load spaced.kvr\n/law all\n")
        .output()
        .expect("runs");
    let out = String::from_utf8_lossy(&bench.stdout).to_string();
    assert!(
        out.contains("[M715]") && out.contains(" --> reaction 1:1:6"),
        "{out}"
    );
    assert!(
        out.contains("1 | bad: O_O -> V_O.. + e' + 1/2 O2(g)\n  |      ^"),
        "{out}"
    );
}
