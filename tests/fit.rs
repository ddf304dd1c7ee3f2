//! `lacuna fit` end to end: the real binary on the demo file, on data
//! generated here from known parameters, and on broken files (row, column,
//! exit codes). Its own helpers; assert_cmd for the runs.

use assert_cmd::Command;
use predicates::prelude::*;
use serde_json::Value;
use std::fmt::Write as _;

fn lacuna() -> Command {
    let mut c = assert_cmd::cargo::cargo_bin_cmd!("lacuna");
    c.current_dir(env!("CARGO_MANIFEST_DIR"))
        .env("NO_COLOR", "1")
        .env_remove("CLICOLOR_FORCE");
    c
}

fn json_of(out: &[u8]) -> Value {
    serde_json::from_slice(out).expect("fit --format json prints JSON")
}

const DEMO: &str = "examples/pump-cell-conductivity.csv";

/// Builds a CSV from known parameters: σ = σ_ion + σ_n°·p^−¼ + σ_p°·p^¼ in
/// the σ·T Arrhenius form, with deterministic ±1 % alternating scatter.
/// A test fixture, not a measurement.
fn generated_csv(ea: [f64; 3], ln_a: [f64; 3]) -> String {
    let k_b = 8.617_333_262e-5; // CODATA, eV/K
    let mut text = String::from("T_K,log10_pO2_bar,sigma_S_per_m\n");
    for t in [900.0, 1000.0, 1100.0] {
        for k in 0..20 {
            let lp = -24.0 + 1.25 * k as f64;
            let p: f64 = 10f64.powf(lp);
            let term = |i: usize| (ln_a[i] - ea[i] / (k_b * t)).exp() / t;
            let s = term(0) + term(1) * p.powf(-0.25) + term(2) * p.powf(0.25);
            let wiggle = if k % 2 == 0 { 1.01 } else { 0.99 };
            // S/m column: 100 × S/cm.
            let _ = writeln!(text, "{t},{lp},{}", 100.0 * s * wiggle);
        }
    }
    text
}

#[test]
fn demo_file_table_names_regimes_transitions_and_extrapolation() {
    lacuna()
        .args(["fit", DEMO])
        .assert()
        .code(0)
        .stdout(predicate::str::contains("3 isotherms"))
        .stdout(predicate::str::contains(
            "decomposition in regime acceptor-fixed",
        ))
        .stdout(predicate::str::contains("transition"))
        .stdout(predicate::str::contains("extrapolated, outside the data"))
        .stdout(predicate::str::contains("ΔH_red = 2 × (E_a(n) − E_μ)"))
        .stdout(predicate::str::contains(
            "ln(σ·T) = ln A − E_a/(k_B·T) fitted",
        ))
        .stdout(predicate::str::contains("neglected"));
}

#[test]
fn json_carries_every_number_and_the_flags() {
    let out = lacuna()
        .args(["fit", DEMO, "--format", "json"])
        .assert()
        .code(0)
        .get_output()
        .stdout
        .clone();
    let v = json_of(&out);
    assert_eq!(v["regime"]["name"], "acceptor-fixed");
    assert_eq!(v["regime"]["exponents"]["n"], "-1/4");
    assert_eq!(v["arrhenius_form"], "sigma-t");
    assert_eq!(v["constants"]["k_b_ev_per_k"], 8.617333262e-5);
    let isos = v["isotherms"].as_array().unwrap();
    assert_eq!(isos.len(), 3);
    for iso in isos {
        let d = &iso["decomposition"];
        assert!(d["sigma_ion"]["value"].as_f64().unwrap() > 0.0);
        assert!(d["boundary_n"]["extrapolated"].is_boolean());
        for s in iso["segments"].as_array().unwrap() {
            let verdict = s["match"]["verdict"].as_str().unwrap();
            assert!(["match", "ambiguous", "no-match", "untested"].contains(&verdict));
        }
    }
    let ion = v["arrhenius"]
        .as_array()
        .unwrap()
        .iter()
        .find(|o| o["component"] == "ion")
        .unwrap();
    assert!(ion["fit"]["activation_ev"].as_f64().is_some());
}

#[test]
fn generated_data_are_fitted_back_through_the_binary() {
    // Known parameters (fixture): E_a = 0.9, 2.0, 1.1 eV in the σ·T form.
    let csv = generated_csv([0.9, 2.0, 1.1], [13.0, 16.0, 13.0]);
    let out = lacuna()
        .args(["fit", "-", "--format", "json"])
        .write_stdin(csv)
        .assert()
        .code(0)
        .get_output()
        .stdout
        .clone();
    let v = json_of(&out);
    for (component, ea) in [("ion", 0.9), ("n", 2.0), ("p", 1.1)] {
        let fit = &v["arrhenius"]
            .as_array()
            .unwrap()
            .iter()
            .find(|o| o["component"] == component)
            .unwrap()["fit"];
        let got = fit["activation_ev"].as_f64().unwrap();
        // ±1 % scatter on 20 points per isotherm: within 0.03 eV.
        assert!((got - ea).abs() < 0.03, "{component}: {got} vs {ea}");
    }
    let red = v["enthalpies"]
        .as_array()
        .unwrap()
        .iter()
        .find(|h| h["reaction"] == "red")
        .unwrap();
    assert_eq!(red["factor"], "2");
    assert!((red["value_ev"].as_f64().unwrap() - 4.0).abs() < 0.06);
}

#[test]
fn curves_and_svg_files_are_written() {
    let dir = tempfile::tempdir().unwrap();
    let curves = dir.path().join("curves.csv");
    let svg = dir.path().join("plot.svg");
    lacuna()
        .args(["fit", DEMO, "--curves"])
        .arg(&curves)
        .arg("--svg")
        .arg(&svg)
        .assert()
        .code(0);
    let text = std::fs::read_to_string(&curves).unwrap();
    let mut lines = text.lines();
    assert_eq!(
        lines.next().unwrap(),
        "isotherm,T_K,pO2_bar,sigma_fit_S_per_cm,sigma_ion_S_per_cm,sigma_n_S_per_cm,sigma_p_S_per_cm,t_ion,segment,segment_fit_S_per_cm"
    );
    let rows: Vec<&str> = lines.collect();
    assert_eq!(rows.len(), 3 * 41);
    for row in &rows {
        let cells: Vec<&str> = row.split(',').collect();
        let total: f64 = cells[3].parse().unwrap();
        let parts: f64 = cells[4..7].iter().map(|c| c.parse::<f64>().unwrap()).sum();
        assert!((total - parts).abs() <= 1e-12 * total, "{row}");
        let t: f64 = cells[7].parse().unwrap();
        assert!((0.0..=1.0).contains(&t));
    }
    let drawing = std::fs::read_to_string(&svg).unwrap();
    assert!(drawing.starts_with("<svg xmlns=\"http://www.w3.org/2000/svg\""));
    assert!(drawing.trim_end().ends_with("</svg>"));
    assert_eq!(drawing.matches("<circle").count(), 45 + 3);
    assert!(drawing.contains("stroke-dasharray"));
}

#[test]
fn missing_column_names_the_header_and_exits_1() {
    lacuna()
        .args(["fit", "-"])
        .write_stdin("T_C,pO2,sigma_S_per_cm\n700,1,0.01\n700,1e-5,0.01\n")
        .assert()
        .code(1)
        .stdout("")
        .stderr(predicate::str::contains(
            "error[F902]: the header has no oxygen pressure column",
        ))
        .stderr(predicate::str::contains("<stdin>:1:1"))
        .stderr(predicate::str::contains("unrecognised columns here: `pO2`"));
}

#[test]
fn non_positive_values_carry_row_line_and_column() {
    let text = "# invented fixture\nT_K,pO2_bar,sigma_S_per_cm\n1000,1,0.01\n1000,0,0.01\n1000,1e-5,-0.2\n1000,1e-9,abc\n";
    let run = lacuna()
        .args(["fit", "-"])
        .write_stdin(text)
        .assert()
        .code(1);
    let stderr = String::from_utf8(run.get_output().stderr.clone()).unwrap();
    let expected = [
        "error[F904]: data row 2: `pO2_bar` must be positive, found 0",
        " --> <stdin>:4:6",
        "error[F904]: data row 3: `sigma_S_per_cm` must be positive, found -0.2",
        " --> <stdin>:5:11",
        "error[F903]: data row 4: `sigma_S_per_cm` is not a number: `abc`",
        " --> <stdin>:6:11",
        "lacuna: 3 problems in <stdin>; nothing was fitted",
    ];
    for line in expected {
        assert!(stderr.contains(line), "missing `{line}` in:\n{stderr}");
    }
}

#[test]
fn a_single_point_isotherm_is_refused() {
    lacuna()
        .args(["fit", "-", "--format", "json"])
        .write_stdin("T_C,pO2_bar,sigma_S_per_cm\n700,1,0.01\n700,1e-5,0.011\n800,1,0.02\n")
        .assert()
        .code(1)
        .stderr(predicate::str::contains(
            "error[F905]: isotherm 800 °C has a single row",
        ))
        .stderr(predicate::str::contains("<stdin>:4:1"))
        .stdout(predicate::str::contains("\"code\":\"F905\""));
}

#[test]
fn usage_and_io_problems_exit_2() {
    lacuna()
        .args(["fit", "/no/such/file.csv"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("cannot read /no/such/file.csv"));
    lacuna()
        .args(["fit", DEMO, "--regime", "no-such-regime"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("no regime named `no-such-regime`"));
    lacuna()
        .args(["fit", DEMO, "--confidence", "1.5"])
        .assert()
        .code(2);
    // A model file with two hosts and slips: every problem with its line, exit 1.
    lacuna()
        .args(["fit", DEMO, "--model", "examples/notebook.kvr"])
        .assert()
        .code(1)
        .stderr(predicate::str::contains("examples/notebook.kvr:19:1"))
        .stderr(predicate::str::contains("a model has one host"))
        .stderr(predicate::str::contains("nothing was fitted"));
    lacuna()
        .args(["fit", DEMO, "--model", "/no/such/model.kvr"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("cannot read /no/such/model.kvr"));
    lacuna()
        .args(["fit", DEMO, "--svg", "/no/such/dir/plot.svg"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains("cannot write"));
}

#[test]
fn another_regime_changes_the_exponents() {
    let out = lacuna()
        .args(["fit", DEMO, "--regime", "donor-ionic", "--format", "json"])
        .assert()
        .code(0)
        .get_output()
        .stdout
        .clone();
    let v = json_of(&out);
    assert_eq!(v["regime"]["name"], "donor-ionic");
    // donor-ionic: n ∝ K_i·K_oxm^(−1/2): no single enthalpy from σ_n°.
    let interpretations = v["interpretations"].to_string();
    assert!(
        interpretations.contains("cannot separate"),
        "{interpretations}"
    );
}

#[test]
fn mobility_activation_is_subtracted_when_given() {
    let base = json_of(
        &lacuna()
            .args(["fit", DEMO, "--format", "json"])
            .assert()
            .code(0)
            .get_output()
            .stdout,
    );
    let with = json_of(
        &lacuna()
            .args([
                "fit",
                DEMO,
                "--format",
                "json",
                "--electron-mobility-ea",
                "0.3",
            ])
            .assert()
            .code(0)
            .get_output()
            .stdout,
    );
    let red = |v: &Value| {
        v["enthalpies"]
            .as_array()
            .unwrap()
            .iter()
            .find(|h| h["reaction"] == "red")
            .unwrap()["value_ev"]
            .as_f64()
            .unwrap()
    };
    // ΔH_red = 2·(E_a − E_μ): giving E_μ = 0.3 eV lowers it by 0.6 eV.
    assert!((red(&base) - red(&with) - 0.6).abs() < 1e-9);
}

/// The lines of every fenced block with the given info string.
fn blocks(markdown: &str, info: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut current: Option<String> = None;
    for line in markdown.lines() {
        if let Some(tag) = line.strip_prefix("```") {
            match current.take() {
                Some(block) => out.push(block),
                None if tag.trim() == info => current = Some(String::new()),
                None => {}
            }
            continue;
        }
        if let Some(block) = current.as_mut() {
            block.push_str(line);
            block.push('\n');
        }
    }
    out
}

#[test]
fn every_measurement_example_in_the_grammar_reads_or_is_refused() {
    let path = format!("{}/grammar/measurements.md", env!("CARGO_MANIFEST_DIR"));
    let doc = std::fs::read_to_string(path).unwrap();
    let valid = blocks(&doc, "csv");
    let invalid = blocks(&doc, "csv-invalid");
    assert!(valid.len() >= 2 && invalid.len() >= 2);
    for block in valid {
        lacuna()
            .args(["fit", "-"])
            .write_stdin(block)
            .assert()
            .code(0);
    }
    for block in invalid {
        lacuna()
            .args(["fit", "-"])
            .write_stdin(block)
            .assert()
            .code(1);
    }
}

#[test]
fn every_walkthrough_command_runs() {
    let path = format!("{}/README.md", env!("CARGO_MANIFEST_DIR"));
    let doc = std::fs::read_to_string(path).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let mut ran = 0;
    for block in blocks(&doc, "console") {
        for line in block.lines() {
            let Some(args) = line
                .strip_prefix("$ lacuna ")
                .filter(|a| a.starts_with("fit "))
            else {
                continue;
            };
            // Run in a scratch folder so written files stay out of the tree.
            let words: Vec<String> = args
                .split_whitespace()
                .map(|w| match w.strip_prefix("examples/") {
                    Some(rest) => format!("{}/examples/{rest}", env!("CARGO_MANIFEST_DIR")),
                    None => w.to_string(),
                })
                .collect();
            lacuna()
                .args(&words)
                .current_dir(dir.path())
                .assert()
                .code(0);
            ran += 1;
        }
    }
    assert!(ran >= 3);
    assert!(dir.path().join("fit.svg").exists());
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig::with_cases(64))]

    /// Arbitrary text never makes the reader or the analysis panic.
    #[test]
    fn arbitrary_files_never_panic(body in "[0-9eE.,;\\-# a-zT_CKpO2sigmabrt\n]{0,300}") {
        let text = format!("T_K,pO2_bar,sigma_S_per_cm\n{body}");
        if let Ok(m) = lacuna::fit::csv_input::read_measurements(&text, "p.csv") {
            let _ = lacuna::fit::analyse(&m, None, &lacuna::fit::FitOptions::default());
        }
        let _ = lacuna::fit::csv_input::read_measurements(&body, "p.csv");
    }

    /// Any positive data with two or more pressures per isotherm fit.
    #[test]
    fn positive_data_always_fit(
        values in proptest::collection::vec((-30.0f64..2.0, -8.0f64..2.0), 2..40),
    ) {
        let mut text = String::from("T_K,log10_pO2_bar,sigma_S_per_cm\n");
        for (lp, ls) in &values {
            text.push_str(&format!("1000,{lp},{}\n", 10f64.powf(*ls)));
        }
        if let Ok(m) = lacuna::fit::csv_input::read_measurements(&text, "p.csv") {
            let r = lacuna::fit::analyse(&m, None, &lacuna::fit::FitOptions::default());
            proptest::prop_assert!(r.is_ok());
            let r = r.unwrap();
            let _ = lacuna::report::svg::render_fit(&r);
            let mut sink = Vec::new();
            lacuna::report::fit::write_table(&mut sink, &r, lacuna::report::Palette::PLAIN).unwrap();
        }
    }
}

#[test]
fn a_model_file_replaces_the_textbook_regimes_by_name() {
    // The demo model (invented numbers) is an acceptor-doped oxide with
    // reduction and band gap; its regimes must carry the textbook slopes of
    // that case. source: D. M. Smyth, The Defect Chemistry of Metal Oxides
    // (Oxford UP 2000), acceptor-doped oxides (from memory): n −1/4 and
    // p +1/4 where [A′] = 2[V_O••]; n = 2[V_O••] gives −1/6.
    let model = "examples/electrolyte-notebook.kvr";
    let assert = lacuna()
        .args(["fit", DEMO, "--model", model])
        .assert()
        .code(0)
        .stdout(predicate::str::contains(format!("regimes: model {model}")))
        .stdout(predicate::str::contains("ionic term V_O••"))
        .stdout(predicate::str::contains(
            "decomposition in regime Y_Zr=2V_O ([Y_Zr′] = 2[V_O••]",
        ))
        .stdout(predicate::str::contains(
            "Y_Zr=2V_O  n  −1/4  p  +1/4  V_O••     0  [Y_Zr′] = 2[V_O••]",
        ))
        .stdout(predicate::str::contains(
            "n=2V_O     n  −1/6  p  +1/6  V_O••  −1/6  n = 2[V_O••]",
        ))
        .stdout(predicate::str::contains("V_O•• in Y_Zr=2V_O"))
        .stdout(predicate::str::contains("acceptor-fixed").not())
        // The reference-only dissolution reaction is noted, not used.
        .stderr(predicate::str::contains("`dope` has no K or dH/dS"));
    drop(assert);
    // The names work with --regime, and the JSON lists every regime.
    let out = lacuna()
        .args([
            "fit", DEMO, "--model", model, "--regime", "n=2V_O", "--format", "json",
        ])
        .assert()
        .code(0)
        .get_output()
        .stdout
        .clone();
    let v = json_of(&out);
    assert_eq!(v["regime"]["name"], "n=2V_O");
    assert_eq!(v["regime"]["exponents"]["n"], "-1/6");
    let names: Vec<&str> = v["regimes"]
        .as_array()
        .expect("regimes listed")
        .iter()
        .filter_map(|r| r["name"].as_str())
        .collect();
    assert_eq!(names, ["n=2V_O", "Y_Zr=2V_O", "Y_Zr=p", "n=p"]);
    assert!(
        v["regimes_source"]
            .as_str()
            .is_some_and(|s| s.contains("electrolyte-notebook.kvr")),
        "{}",
        v["regimes_source"]
    );
    lacuna()
        .args(["fit", DEMO, "--model", model, "--regime", "acceptor-fixed"])
        .assert()
        .code(2)
        .stderr(predicate::str::contains(
            "the regimes are: n=2V_O, Y_Zr=2V_O",
        ));
}

#[test]
fn a_model_without_what_the_fit_needs_is_refused_with_its_place() {
    let dir = tempfile::tempdir().expect("a temporary folder");
    let path = dir.path().join("reduction-only.kvr");
    // Reduction alone: electrons and vacancies but no holes.
    std::fs::write(
        &path,
        "host CeO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20 at 1273 K\n",
    )
    .expect("the model is written");
    let shown = path.display().to_string();
    lacuna()
        .args(["fit", DEMO, "--model", &shown])
        .assert()
        .code(1)
        .stderr(predicate::str::contains(
            "error[F906]: the model has no holes",
        ))
        .stderr(predicate::str::contains(format!("{shown}:1:1")))
        .stderr(predicate::str::contains("gap: nil -> e' + h."));
    // A model line with a unit error: its line and column.
    std::fs::write(
        &path,
        "host CeO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20 at 1273 furlongs\n",
    )
    .expect("the model is written");
    lacuna()
        .args(["fit", DEMO, "--model", &shown])
        .assert()
        .code(1)
        .stderr(predicate::str::contains(format!("{shown}:3:")));
}

/// Human output writes negative slopes, logarithms and statistics with a
/// true minus sign (U+2212), as the exact slopes beside them already are.
/// source: common practice (typeset mathematics uses U+2212 for minus).
#[test]
fn human_report_uses_a_true_minus_sign() {
    let run = crate::support::lacuna(
        &[
            "fit",
            &crate::support::repo("examples/pump-cell-conductivity.csv"),
        ],
        None,
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(run.stdout.contains("runs z −"), "{}", run.stdout);
    assert!(run.stdout.contains("(log10 −"), "{}", run.stdout);
    for line in run.stdout.lines() {
        for ascii in [" -0.", "z -", "log10 -"] {
            assert!(!line.contains(ascii), "ASCII minus in: {line}");
        }
    }
}
