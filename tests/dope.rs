//! `lacuna dope` end to end: the ranked table, JSON, the level helper and
//! the exit codes. Self-contained.

use assert_cmd::cargo::cargo_bin_cmd;
use serde_json::Value;

fn dope(args: &[&str]) -> (i32, String, String) {
    let output = cargo_bin_cmd!("lacuna")
        .arg("dope")
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
    let mut all = args.to_vec();
    all.extend_from_slice(&["--format", "json"]);
    let (code, out, err) = dope(&all);
    let v = serde_json::from_str(&out).unwrap_or_else(|e| panic!("{e}: {out} {err}"));
    (code, v)
}

#[test]
fn yttria_in_zirconia_table() {
    let (code, out, _) = dope(&["ZrO2", "Y2O3"]);
    assert_eq!(code, 0);
    assert!(
        out.starts_with("Y2O3 in ZrO2: Y3+ from Y2O3\nstructure: fluorite"),
        "{out}"
    );
    assert!(
        out.contains("Zr: CN 8 (assumed from the structure; override with --cn Zr=N)"),
        "{out}"
    );
    // source: Smyth 2000, ch. 6 (from memory): the first-ranked row is the textbook reaction.
    let first = out
        .lines()
        .find(|l| l.trim_start().starts_with("1 "))
        .expect("row 1");
    assert!(first.contains("V_O••"), "{first}");
    assert!(
        first.contains("+21.3 % (101.9 vs 84.0 pm, CN 8)"),
        "{first}"
    );
    assert!(
        first.ends_with("Y2O3 → 2 Y_Zr′ + 3 O_O× + V_O••"),
        "{first}"
    );
    assert!(out.contains("it is a guide, not a prediction"), "{out}");
}

#[test]
fn json_mechanisms_and_level() {
    let (code, v) = json(&["ZrO2", "Y2O3", "--level", "8mol%", "--style", "ascii"]);
    assert_eq!(code, 0);
    assert_eq!(v["host"], "ZrO2");
    assert_eq!(v["dopant"]["element"], "Y");
    assert_eq!(v["dopant"]["charge"], 3);
    assert_eq!(v["structure"]["sites"][0]["cn"], 8);
    assert_eq!(v["structure"]["sites"][0]["source"], "assumed");
    let first = &v["mechanisms"][0];
    assert_eq!(first["rank"], 1);
    assert_eq!(first["site"], "Zr");
    assert_eq!(first["family"], "anion vacancy");
    assert_eq!(first["compensation"], "V_O..");
    assert_eq!(first["reaction"], "Y2O3 -> 2 Y_Zr' + 3 O_Ox + V_O..");
    assert_eq!(first["effective_charge"], -1);
    assert_eq!(first["gas"], "none");
    // source: IUPAC Red Book 2005, IR-11.3 formula rule: 8 mol % Y2O3 in ZrO2
    // is Zr0.852Y0.148O1.926 with 1/27 (3.7 %) of the oxygen sites vacant.
    let level = &v["level"];
    assert_eq!(level["formula"], "Zr0.852Y0.148O1.926");
    assert_eq!(level["mol_fraction"], "2/25");
    assert_eq!(level["cation_fraction"], "4/27");
    let vacancy = level["defects"]
        .as_array()
        .expect("defects")
        .iter()
        .find(|d| d["species"] == "V_O••")
        .expect("vacancy");
    assert_eq!(vacancy["fraction"], "1/27");
    assert_eq!(vacancy["basis"], "of O sites");
    assert!(
        level["note"]
            .as_str()
            .is_some_and(|n| n.contains("dilute picture does not hold")),
        "{level}"
    );
}

#[test]
fn level_in_other_units_and_per_cm3() {
    let (code, out, _) = dope(&["ZrO2", "Y2O3", "--level", "3.7037site%"]);
    assert_eq!(code, 0);
    assert!(
        out.contains("level 3.7037site% with mechanism 1: Zr0.852Y0.148O1.926"),
        "{out}"
    );
    assert!(
        out.contains("note: above about 1 % defects interact"),
        "{out}"
    );
    let (code, v) = json(&["ZrO2", "Y2O3", "--level", "8mol%", "--cell", "5.14"]);
    assert_eq!(code, 0);
    // 4 formula units in a 5.14 Å fluorite cell, 4/27 Y each: 4.36e21 per cm³.
    let n = v["level"]["dopant_per_cm3"].as_f64().expect("per cm3");
    assert!((n - 4.364e21).abs() / 4.364e21 < 1e-3, "{n}");
    let (code, out, _) = dope(&["ZrO2", "Y2O3", "--level", "1e21/cm3"]);
    assert_eq!(code, 1);
    assert!(out.contains("error[K607]"), "{out}");
}

#[test]
fn lanthanum_in_barium_titanate_goes_to_the_a_site() {
    let (code, v) = json(&["BaTiO3", "La2O3"]);
    assert_eq!(code, 0);
    assert_eq!(v["mechanisms"][0]["site"], "Ba");
    // source: Chan & Smyth, J. Am. Ceram. Soc. 67 (1984) (from memory)
    let reactions: Vec<&str> = v["mechanisms"]
        .as_array()
        .expect("mechanisms")
        .iter()
        .filter_map(|m| m["reaction"].as_str())
        .collect();
    assert!(
        reactions.contains(&"La2O3 + 2 TiO2 → 2 La_Ba• + 6 O_O× + 2 Ti_Ti× + 2 e′ + ½ O2(g)"),
        "{reactions:?}"
    );
}

#[test]
fn forced_site_and_coordination_override() {
    let (code, v) = json(&["BaTiO3", "La+3", "--site", "Ti", "--cn", "Ti=6"]);
    assert_eq!(code, 0);
    let mechanisms = v["mechanisms"].as_array().expect("mechanisms");
    assert!(!mechanisms.is_empty());
    assert!(mechanisms.iter().all(|m| m["site"] == "Ti"));
    assert_eq!(v["structure"]["sites"][1]["source"], "given");
}

#[test]
fn every_printed_reaction_passes_check() {
    for (host, dopant) in [
        ("ZrO2", "CaO"),
        ("MgO", "Al2O3"),
        ("NiO", "Li2O"),
        ("KCl", "CaCl2"),
    ] {
        let (code, v) = json(&[host, dopant, "--style", "ascii"]);
        assert_eq!(code, 0);
        for m in v["mechanisms"].as_array().expect("mechanisms") {
            for key in ["reaction", "integer"] {
                let text = m[key].as_str().expect("text");
                let check = cargo_bin_cmd!("lacuna")
                    .args(["check", "--host", host, "--reaction", text])
                    .output()
                    .expect("run check");
                assert_eq!(check.status.code(), Some(0), "{host} {dopant}: {text}");
            }
        }
    }
}

#[test]
fn bad_arguments_are_usage_errors_with_a_column() {
    for (args, needle) in [
        (vec!["ZrO2", "Y+9"], "does not take"),
        (vec!["ZrO2", "Fe3O4"], "average charge"),
        (vec!["ZrO2", "Y2O3", "--site", "Ce"], "no Ce site"),
        (vec!["ZrO2", "Y2O3", "--cn", "Zr=99"], "coordination number"),
        (vec!["ZrO2", "Y2O3", "--level", "8 parsecs"], "not a unit"),
        (vec!["Qq", "Y2O3"], "--host"),
        (vec!["ZrO2", "Y2O3", "--density", "0"], "positive"),
    ] {
        let (code, _, err) = dope(&args);
        assert_eq!(code, 2, "{args:?}");
        assert!(err.contains(needle), "{args:?}: {err}");
    }
    let (_, _, err) = dope(&["ZrO2", "Y+9"]);
    assert!(err.contains("DOPANT:1:1"), "{err}");
}

#[test]
fn no_mechanism_is_an_input_problem() {
    // A host with no anion cannot balance a dopant compound.
    let (code, _, err) = dope(&["Al", "Y2O3"]);
    assert_eq!(code, 2);
    assert!(err.contains("no anion"), "{err}");
}
