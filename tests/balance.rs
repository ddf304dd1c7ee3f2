//! `lacuna balance` end to end: the real binary, its stdout, JSON and exit
//! codes. Self-contained so it can be folded into one harness later.

use assert_cmd::cargo::cargo_bin_cmd;
use serde_json::Value;

/// Runs `lacuna balance ARGS` and returns (exit code, stdout, stderr).
fn balance(args: &[&str]) -> (i32, String, String) {
    let output = cargo_bin_cmd!("lacuna")
        .arg("balance")
        .args(args)
        .env("NO_COLOR", "1")
        .output()
        .expect("run lacuna");
    (
        output.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&output.stdout).into_owned(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

fn json(args: &[&str]) -> (i32, Value) {
    let mut all = vec!["--format", "json"];
    all.extend_from_slice(args);
    let (code, stdout, stderr) = balance(&all);
    let value = serde_json::from_str(&stdout).unwrap_or_else(|e| panic!("{e}: {stdout} {stderr}"));
    (code, value)
}

#[test]
fn unique_in_smallest_integers_and_conventional_form() {
    // source: D. M. Smyth, The Defect Chemistry of Metal Oxides, 2000, donor-doped TiO2 (from memory)
    let (code, out, _) = balance(&[
        "--host",
        "TiO2",
        "--reaction",
        "Nb2O5 -> Nb_Ti. + O_O + e' + O2(g)",
    ]);
    assert_eq!(code, 0);
    assert_eq!(out, "2 Nb2O5 → 4 Nb_Ti• + 8 O_O× + 4 e′ + O2(g)\n");
    let (code, out, _) = balance(&[
        "--host",
        "TiO2",
        "--conventional",
        "Nb2O5 -> Nb_Ti. + O_O + e' + O2(g)",
    ]);
    assert_eq!(code, 0);
    assert_eq!(out, "Nb2O5 → 2 Nb_Ti• + 4 O_O× + 2 e′ + ½ O2(g)\n");
    let (_, out, _) = balance(&[
        "--host",
        "TiO2",
        "--style",
        "ascii",
        "--conventional",
        "Nb2O5 -> Nb_Ti. + O_O + e' + O2(g)",
    ]);
    assert_eq!(out, "Nb2O5 -> 2 Nb_Ti. + 4 O_Ox + 2 e' + 1/2 O2(g)\n");
}

#[test]
fn json_keys_and_exact_coefficients() {
    let (code, v) = json(&[
        "--host",
        "TiO2",
        "--conventional",
        "Nb2O5 -> Nb_Ti. + O_O + e' + O2(g)",
    ]);
    assert_eq!(code, 0);
    assert_eq!(v["status"], "unique");
    let terms = v["reactions"][0]["terms"].as_array().expect("terms");
    let got: Vec<(String, String, String)> = terms
        .iter()
        .map(|t| {
            (
                t["species"].as_str().unwrap_or("").to_string(),
                t["side"].as_str().unwrap_or("").to_string(),
                t["coefficient"].as_str().unwrap_or("").to_string(),
            )
        })
        .collect();
    let want = [
        ("Nb2O5", "left", "1"),
        ("Nb_Ti.", "right", "2"),
        ("O_O", "right", "4"),
        ("e'", "right", "2"),
        ("O2(g)", "right", "1/2"),
    ];
    assert_eq!(
        got,
        want.map(|(a, b, c)| (a.to_string(), b.to_string(), c.to_string()))
    );
    assert_eq!(v["diagnostics"], Value::Array(vec![]));
    assert_eq!(
        v["reactions"][0]["text"],
        "Nb2O5 → 2 Nb_Ti• + 4 O_O× + 2 e′ + ½ O2(g)"
    );
}

#[test]
fn several_lists_a_basis_and_exits_zero() {
    let (code, v) = json(&["--host", "ZrO2", "Y2O3 -> Y_Zr' + O_O + V_O.. + O_i''"]);
    assert_eq!(code, 0);
    assert_eq!(v["status"], "several");
    let texts: Vec<&str> = v["reactions"]
        .as_array()
        .expect("reactions")
        .iter()
        .filter_map(|r| r["text"].as_str())
        .collect();
    assert_eq!(
        texts,
        ["Y2O3 → 2 Y_Zr′ + 3 O_O× + V_O••", "O_O× → V_O•• + O_i′′"]
    );
    assert_eq!(v["diagnostics"][0]["code"], "K604");
    assert_eq!(v["diagnostics"][0]["severity"], "note");
}

#[test]
fn none_explains_and_exits_one() {
    let (code, out, _) = balance(&["--host", "ZrO2", "Y2O3 -> Y_Zr' + O_O + V_O."]);
    assert_eq!(code, 1);
    assert!(
        out.contains("error[K601]: cannot balance: no choice of coefficients conserves charge"),
        "{out}"
    );
    assert!(out.contains("--> --reaction:1:1"), "{out}");
    let (code, v) = json(&["--host", "ZrO2", "Y2O3 -> Y_Zr' + O_O + V_O."]);
    assert_eq!(code, 1);
    assert_eq!(v["status"], "none");
    assert_eq!(v["reactions"], Value::Array(vec![]));
    assert_eq!(v["diagnostics"][0]["code"], "K601");
}

#[test]
fn negative_coefficient_moves_the_species() {
    let (code, out, _) = balance(&["--host", "ZrO2", "Y2O3 -> Y_Zr' + O_O + O_i''"]);
    assert_eq!(code, 0);
    assert!(
        out.starts_with("Y2O3 + O_i′′ → 2 Y_Zr′ + 4 O_O×\n"),
        "{out}"
    );
    assert!(out.contains("warning[K602]"), "{out}");
    assert!(out.contains("belongs on the left side"), "{out}");
}

#[test]
fn written_coefficients_are_kept_unless_free() {
    let (_, out, _) = balance(&["--host", "TiO2", "Nb2O5 -> 2 Nb_Ti. + O_O + e' + O2(g)"]);
    assert_eq!(out, "Nb2O5 → 2 Nb_Ti• + 4 O_O× + 2 e′ + ½ O2(g)\n");
    let (_, out, _) = balance(&[
        "--host",
        "TiO2",
        "--free",
        "Nb2O5 -> 2 Nb_Ti. + O_O + e' + O2(g)",
    ]);
    assert_eq!(out, "2 Nb2O5 → 4 Nb_Ti• + 8 O_O× + 4 e′ + O2(g)\n");
}

#[test]
fn bad_input_is_located_and_never_crashes() {
    // A syntax error: exit 1 with line and column.
    let (code, out, _) = balance(&["--host", "ZrO2", "Y2O3 -> Y_Zr' + + V_O.."]);
    assert_eq!(code, 1);
    assert!(out.contains("--reaction:1:"), "{out}");
    // An implausible species stops the balancer (Y5+ does not exist).
    let (code, v) = json(&["--host", "ZrO2", "Y2O3 -> Y_Zr. + O_O + V_O''"]);
    assert_eq!(code, 1);
    assert_eq!(v["status"], "none");
    // A bad host and a missing reaction are usage errors.
    let (code, _, err) = balance(&["--host", "Qq2O3", "Y2O3 -> Y_Zr'"]);
    assert_eq!(code, 2);
    assert!(err.contains("--host"), "{err}");
    let (code, _, err) = balance(&[]);
    assert_eq!(code, 2);
    assert!(err.contains("nothing to balance"), "{err}");
}

#[test]
fn check_help_shows_the_balanced_form() {
    let output = cargo_bin_cmd!("lacuna")
        .args([
            "check",
            "--host",
            "ZrO2",
            "--reaction",
            "Y2O3 -> Y_Zr' + O_O + V_O..",
        ])
        .env("NO_COLOR", "1")
        .output()
        .expect("run lacuna");
    let out = String::from_utf8_lossy(&output.stdout);
    assert_eq!(output.status.code(), Some(1));
    assert!(
        out.contains("= help: balanced, it reads: Y2O3 → 2 Y_Zr′ + 3 O_O× + V_O••"),
        "{out}"
    );
}
