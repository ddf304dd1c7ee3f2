//! `lacuna native` end to end. Self-contained.

use assert_cmd::cargo::cargo_bin_cmd;
use serde_json::Value;

fn native(args: &[&str]) -> (i32, String, String) {
    let output = cargo_bin_cmd!("lacuna")
        .arg("native")
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

#[test]
fn magnesia_catalogue_as_text() {
    let (code, out, _) = native(&["MgO", "--style", "ascii"]);
    assert_eq!(code, 0);
    // source: Chiang, Birnie & Kingery, Physical Ceramics, 1997, ch. 2: Schottky
    // disorder in MgO and the redox reactions of a rock-salt oxide (from memory)
    for line in [
        "native defect reactions of MgO (Mg : O = 1 : 1)",
        "Schottky                      nil <=> V_Mg'' + V_O..",
        "Frenkel (Mg)                  Mg_Mgx <=> Mg_i.. + V_Mg''",
        "reduction (O vacancies)       O_Ox <=> V_O.. + 2 e' + 1/2 O2(g)",
        "oxidation (cation vacancies)  1/2 O2(g) <=> O_Ox + V_Mg'' + 2 h.",
    ] {
        assert!(
            out.lines().any(|l| l.trim() == line.trim()),
            "{line}\n{out}"
        );
    }
}

#[test]
fn json_lists_families_and_every_reaction_checks() {
    let (code, out, _) = native(&["BaTiO3", "--format", "json", "--style", "ascii"]);
    assert_eq!(code, 0);
    let v: Value = serde_json::from_str(&out).expect("json");
    assert_eq!(v["host"], "BaTiO3");
    let reactions = v["reactions"].as_array().expect("reactions");
    assert!(reactions.len() >= 8);
    for r in reactions {
        let text = r["text"].as_str().expect("text");
        let check = cargo_bin_cmd!("lacuna")
            .args(["check", "--host", "BaTiO3", "--reaction", text])
            .output()
            .expect("run check");
        assert_eq!(check.status.code(), Some(0), "{}: {text}", r["family"]);
    }
}

#[test]
fn an_unusable_host_is_a_usage_error() {
    let (code, _, err) = native(&["Fe3O4"]);
    assert_eq!(code, 2);
    assert!(err.contains("8/3"), "{err}");
}
