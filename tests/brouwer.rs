//! End-to-end tests of `lacuna brouwer`: models in, regimes, points,
//! CSV, SVG and JSON out, exit codes.

use assert_cmd::cargo::cargo_bin_cmd;
use predicates::prelude::*;
use serde_json::Value;

const BOLTZMANN_EV_PER_K: f64 = 8.617_333_262e-5; // source: CODATA 2018 (exact since 2019)

const ACCEPTOR: &str = "host ZrO2\n\
    temperature 1273 K\n\
    po2 1e-40 to 1e5 bar\n\
    red: O_O -> V_O.. + 2e' + 1/2 O2(g)\n\
    K red = 1e-20\n\
    i: nil -> e' + h.\n\
    K i = 1e-10\n\
    fix Y_Zr' = 0.001 site fraction\n";

fn brouwer(model: &str, args: &[&str]) -> assert_cmd::assert::Assert {
    cargo_bin_cmd!("lacuna")
        .args(["brouwer", "-", "--color", "never"])
        .args(args)
        .write_stdin(model)
        .assert()
}

fn json(model: &str, args: &[&str]) -> Value {
    let output = cargo_bin_cmd!("lacuna")
        .args(["brouwer", "-", "--color", "never", "--format", "json"])
        .args(args)
        .write_stdin(model)
        .output()
        .expect("runs");
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&output.stdout).expect("JSON")
}

#[test]
fn acceptor_regimes_and_slopes_in_json() {
    // source: Smyth 2000 (from memory): the acceptor-doped oxide has
    // n = 2[V_O••] (−1/6), [A′] = 2[V_O••] (n −1/4, p +1/4), [A′] = p.
    let v = json(ACCEPTOR, &[]);
    let regimes = v["regimes"].as_array().expect("regimes");
    let conditions: Vec<&str> = regimes
        .iter()
        .map(|r| r["neutrality"].as_str().expect("text"))
        .collect();
    assert_eq!(
        conditions,
        ["n = 2[V_O••]", "[Y_Zr′] = 2[V_O••]", "[Y_Zr′] = p"]
    );
    assert_eq!(regimes[0]["slopes"]["n"], "-1/6");
    assert_eq!(regimes[1]["slopes"]["n"], "-1/4");
    assert_eq!(regimes[1]["slopes"]["p"], "1/4");
    assert_eq!(regimes[1]["slopes"]["[V_O••]"], "0");
    assert_eq!(regimes[1]["dopant_slopes"]["Y_Zr′"]["n"], "-1/2");
    assert_eq!(regimes[0]["po2_from"].as_f64(), Some(1e-40));
    assert_eq!(regimes[2]["po2_to"].as_f64(), Some(1e5));
    // The boundary between regimes 1 and 2 is where n = [A′] in either
    // approximation: pO2 = (2 K_red / [A′]³)² (common practice).
    let boundary: f64 = (2.0 * 1e-20 / 1e-9f64).powi(2);
    let got = regimes[0]["po2_to"].as_f64().expect("number");
    assert!((got / boundary - 1.0).abs() < 1e-9, "{got} vs {boundary}");
    let points = v["points"].as_array().expect("points");
    assert_eq!(
        points.len(),
        451,
        "45 decades at 10 points per decade, plus one"
    );
    for p in points {
        assert_eq!(p["converged"], true);
        assert!(p["residual"].as_f64().expect("residual") <= 1e-12);
        for key in ["po2", "temperature", "concentrations"] {
            assert!(p.get(key).is_some(), "missing {key}");
        }
    }
    assert_eq!(v["model"]["neutrality"], "n + [Y_Zr′] = 2[V_O••] + p");
}

#[test]
fn table_shows_regimes_and_points() {
    brouwer(ACCEPTOR, &[])
        .success()
        .stdout(predicate::str::contains(
            "neutrality  n + [Y_Zr′] = 2[V_O••] + p",
        ))
        .stdout(predicate::str::contains("Brouwer regimes along pO₂"))
        .stdout(predicate::str::contains("[Y_Zr′] = 2[V_O••]"))
        .stdout(predicate::str::contains("−1/4"))
        .stdout(predicate::str::contains("Full solution, every term kept"));
}

#[test]
fn csv_has_a_header_and_one_row_per_point() {
    let output = cargo_bin_cmd!("lacuna")
        .args([
            "brouwer",
            "-",
            "--format",
            "csv",
            "--per-decade",
            "2",
            "--po2-range",
            "1e-20 to 1 bar",
        ])
        .write_stdin(ACCEPTOR)
        .output()
        .expect("runs");
    assert!(output.status.success());
    let text = String::from_utf8(output.stdout).expect("UTF-8");
    let lines: Vec<&str> = text.split("\r\n").filter(|l| !l.is_empty()).collect();
    assert_eq!(
        lines[0],
        "po2_bar,temperature_K,[V_O..],n,p,[Y_Zr'],defect_site_fraction,converged,residual"
    );
    assert_eq!(lines.len(), 1 + 41);
    assert!(lines[1].starts_with("1e-20,1.273e3,"));
    assert!(lines.iter().skip(1).all(|l| l.contains(",true,")));
}

#[test]
fn svg_diagram_has_lines_labels_boundaries_and_slopes() {
    let output = cargo_bin_cmd!("lacuna")
        .args(["brouwer", "-", "--format", "svg"])
        .write_stdin(ACCEPTOR)
        .output()
        .expect("runs");
    assert!(output.status.success());
    let svg = String::from_utf8(output.stdout).expect("UTF-8");
    assert!(svg.starts_with("<svg xmlns=\"http://www.w3.org/2000/svg\""));
    assert!(svg.trim_end().ends_with("</svg>"));
    assert!(svg.contains("log₁₀(pO₂ / bar)"));
    assert_eq!(
        svg.matches("stroke-dasharray").count(),
        2,
        "two regime boundaries"
    );
    assert!(svg.contains(">−1/6<"));
    assert!(svg.contains(">−1/4<"));
    assert!(svg.contains(">+1/4<"));
    assert_eq!(svg.matches("<path ").count(), 4, "one line per species");
}

#[test]
fn output_file_is_written() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("diagram.svg");
    brouwer(
        ACCEPTOR,
        &["--format", "svg", "-o", path.to_str().expect("path")],
    )
    .success()
    .stdout(predicate::str::is_empty());
    let svg = std::fs::read_to_string(&path).expect("written");
    assert!(svg.contains("</svg>"));
}

#[test]
fn aluminium_vacancy_fraction_at_the_melting_point() {
    // source: R. O. Simmons and R. W. Balluffi, Phys. Rev. 117, 52 (1960)
    // (as cited in the project notes, from memory): exp(2.4)·exp(−0.76 eV/kT)
    // gives about 8.7e-4 at the melting point, 933.47 K (common practice).
    let model =
        "host Al\ntemperature 933.47 K\nvac: nil -> V_Al\ndH vac = 0.76 eV\ndS vac = 2.4 k\n";
    let v = json(model, &["--po2-range", "0.1 to 1 bar", "--per-decade", "1"]);
    let c = v["points"][0]["concentrations"]["[V_Al×]"]
        .as_f64()
        .expect("fraction");
    assert!((c / 8.7e-4 - 1.0).abs() < 0.01, "{c}");
    let expected = (2.4 - 0.76 / (BOLTZMANN_EV_PER_K * 933.47)).exp();
    assert!((c / expected - 1.0).abs() < 1e-12);
}

#[test]
fn schottky_temperature_sweep_reports_half_the_enthalpy() {
    // source: R. W. Dreyfus and A. S. Nowick, J. Appl. Phys. 33, 473 (1962)
    // (as cited in the project notes, from memory): NaCl Schottky pair
    // enthalpy 2.12 eV; the pair fraction goes as exp(−ΔH/2kT).
    let model =
        "host NaCl\ntemperature 1000 K\ns: nil -> V_Na' + V_Cl.\ndH s = 2.12 eV\ndS s = 0 k\n";
    let v = json(
        model,
        &[
            "--sweep-temperature",
            "600 to 1000 K",
            "--po2",
            "1 bar",
            "--steps",
            "5",
        ],
    );
    let regime = &v["regimes"][0];
    assert!((regime["enthalpies_eV"]["[V_Na′]"].as_f64().expect("eV") - 1.06).abs() < 1e-12);
    assert_eq!(regime["temperature_from"].as_f64(), Some(600.0));
    let points = v["points"].as_array().expect("points");
    assert_eq!(points.len(), 5);
    for p in points {
        let t = p["temperature"].as_f64().expect("T");
        let c = p["concentrations"]["[V_Cl•]"].as_f64().expect("c");
        let expected = (-2.12 / (2.0 * BOLTZMANN_EV_PER_K * t)).exp();
        assert!(
            (c / expected - 1.0).abs() < 1e-10,
            "{c} vs {expected} at {t}"
        );
    }
}

#[test]
fn frozen_in_keeps_the_vacancies_of_the_high_temperature() {
    let model = "host ZrO2\ntemperature 1273 K\n\
        red: O_O -> V_O.. + 2e' + 1/2 O2(g)\ndH red = 5.5 eV\ndS red = 8 k\n\
        i: nil -> e' + h.\ndH i = 3 eV\ndS i = 1 k\n\
        fix Y_Zr' = 1e-6 site fraction\n";
    let range = ["--po2-range", "1e-20 to 1 bar", "--per-decade", "1"];
    let high = json(model, &range);
    let mut args = range.to_vec();
    args.extend(["--quench-to", "700 K"]);
    let low = json(model, &args);
    let (hp, lp) = (
        high["points"].as_array().expect("points"),
        low["points"].as_array().expect("points"),
    );
    assert_eq!(hp.len(), lp.len());
    for (h, l) in hp.iter().zip(lp) {
        assert_eq!(l["temperature"].as_f64(), Some(700.0));
        assert_eq!(l["converged"], true);
        let (vh, vl) = (
            h["concentrations"]["[V_O••]"].as_f64().expect("V"),
            l["concentrations"]["[V_O••]"].as_f64().expect("V"),
        );
        assert!((vl / vh - 1.0).abs() < 1e-10);
    }
    assert!(low["notes"].to_string().contains("frozen-in"));
}

#[test]
fn dilute_limit_is_said_in_the_output() {
    let heavy = ACCEPTOR.replace("0.001 site fraction", "0.08 site fraction");
    brouwer(&heavy, &[])
        .success()
        .stdout(predicate::str::contains(
            "warning[M713]: defects exceed 1 % of the sites",
        ))
        .stdout(predicate::str::contains("not trustworthy"));
    let v = json(&heavy, &[]);
    assert_eq!(v["points"][0]["dilute"], false);
    assert!(v["warnings"][0]["code"] == "M713");
}

#[test]
fn model_errors_are_located_and_exit_1() {
    let missing_pressure = "host BaZrO3\ntemperature 873 K\nhyd: H2O(g) + V_O.. + O_O -> 2OH_O.\nK hyd = 10\nfix Y_Zr' = 0.1 site fraction\n";
    brouwer(missing_pressure, &[])
        .code(1)
        .stderr(predicate::str::contains(
            "error[M711]: pH₂O is in an equilibrium but has no pressure",
        ))
        .stderr(predicate::str::contains("<stdin>:3:1"))
        .stderr(predicate::str::contains("add `pressure H2O = 0.03 bar`"));
    let free = "host ZrO2\ntemperature 1273 K\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20\nt: V_O.. + e' -> V_O.\n";
    // With two trapping levels and the gap the model is closed; without the
    // gap, electrons and holes are not tied to each other.
    let trapped = format!("{free}K t = 1\nu: V_O. -> V_Ox + h.\nK u = 2\n");
    brouwer(&format!("{trapped}i: nil -> e' + h.\nK i = 1e-12\n"), &[]).success();
    brouwer(&trapped, &[])
        .code(1)
        .stderr(predicate::str::contains("error[M708]"))
        .stderr(predicate::str::contains("<stdin>:3:1"));
    let underdetermined = "host ZrO2\ntemperature 1273 K\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20\nfr: Zr_Zr -> Zr_i.... + V_Zr''''\nK fr = 1e-30\n";
    brouwer(underdetermined, &[])
        .code(1)
        .stderr(predicate::str::contains(
            "error[M708]: the equilibria, electroneutrality and fixed totals leave a combination of",
        ));
    let wrong_temperature =
        "host ZrO2\ntemperature 1273 K\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20\n";
    brouwer(wrong_temperature, &["--temperature", "900 K"])
        .code(1)
        .stderr(predicate::str::contains(
            "error[M706]: K of `red` is known only at 1273 K",
        ))
        .stderr(predicate::str::contains("<stdin>:4:1"));
}

#[test]
fn usage_errors_exit_2() {
    brouwer(ACCEPTOR, &["--sweep-temperature", "600 to 900 K"])
        .code(2)
        .stderr(predicate::str::contains("needs --po2"));
    brouwer(ACCEPTOR, &["--po2-range", "1 to 1e-5 bar"])
        .code(2)
        .stderr(predicate::str::contains("low to high"));
    brouwer(ACCEPTOR, &["--temperature", "hot"])
        .code(2)
        .stderr(predicate::str::contains("--temperature"));
}
