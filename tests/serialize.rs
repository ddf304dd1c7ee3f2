//! The facade's results serialize (feature `serde`): each entry point's
//! result goes through serde_json and the JSON holds the chemistry, with
//! every exact number as its exact text, never a float.

use lacuna::base::number::{self, Q};
use lacuna::{ModelBuilder, ScanOptions};
use proptest::prelude::*;
use serde_json::{Value, json};

fn to_json<T: serde::Serialize>(value: &T) -> Value {
    serde_json::to_value(value).expect("serializes")
}

fn zirconia() -> lacuna::host::Host {
    lacuna::host("ZrO2").expect("host")
}

/// The coefficients of one side of a serialized reaction, as written.
fn coefficients(side: &Value) -> Vec<&str> {
    side.as_array()
        .expect("a side is an array")
        .iter()
        .map(|t| t["coefficient"].as_str().expect("a coefficient is text"))
        .collect()
}

#[test]
fn exact_numbers_are_their_exact_text() {
    // The text to_plain writes, as a JSON string: 1/3 stays 1/3.
    for (q, text) in [
        (Q::new(1, 2), "1/2"),
        (Q::new(-3, 1), "-3"),
        (Q::new(0, 5), "0"),
        (Q::new(1, 3), "1/3"),
        (Q::new(-6, 4), "-3/2"),
        (Q::from_integer(i64::MAX), "9223372036854775807"),
        (Q::new(1, i64::MAX), "1/9223372036854775807"),
        (Q::from_integer(i64::MIN), "-9223372036854775808"),
    ] {
        assert_eq!(to_json(&q), Value::String(text.into()));
        assert_eq!(serde_json::to_string(&q).unwrap(), format!("\"{text}\""));
    }
}

proptest! {
    #[test]
    fn q_round_trips_its_text(n in (i64::MIN + 1)..=i64::MAX, d in 1..=i64::MAX) {
        // i64::MIN is left out: its text serializes exactly, but the number
        // reader refuses a magnitude of 2^63 (beyond i64) by design.
        let q = Q::new(n, d);
        let Value::String(text) = to_json(&q) else {
            panic!("a Q serializes as a string");
        };
        prop_assert_eq!(number::parse(&text), Ok(q));
    }
}

#[test]
fn a_host_serializes_with_its_formal_charges() {
    // source: common practice (fluorite ZrO2: Zr⁴⁺, O²⁻, two oxygen sites
    // per zirconium).
    let host = to_json(&zirconia());
    assert_eq!(host["formula_text"], "ZrO2");
    assert_eq!(host["formula"]["atoms"], json!([[40, "1"], [8, "2"]]));
    let sites: Vec<(u64, &str, &str)> = host["sublattices"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| {
            (
                s["element"].as_u64().unwrap(),
                s["charge"].as_str().unwrap(),
                s["count"].as_str().unwrap(),
            )
        })
        .collect();
    assert_eq!(sites, [(40, "4", "1"), (8, "-2", "2")]);
    // source: common practice (magnetite, an inverse spinel: Fe³⁺ on the
    // tetrahedral A site, Fe²⁺ and Fe³⁺ sharing the octahedral B sites,
    // mean charge +5/2).
    let magnetite = lacuna::host("Fe3O4 sites Fe:A +3 x1, Fe:B +5/2 x2, O -2 x4").unwrap();
    let magnetite = to_json(&magnetite);
    assert_eq!(magnetite["sublattices"][1]["label"], "B");
    assert_eq!(magnetite["sublattices"][1]["charge"], "5/2");
    assert_eq!(magnetite["sublattices"][1]["count"], "2");
}

#[test]
fn a_read_reaction_serializes_its_terms() {
    // source: common practice (reduction of an oxide in Kröger–Vink
    // notation: an oxygen ion leaves as ½ O₂, its two electrons stay).
    let r = lacuna::parse_reaction("O_O -> V_O.. + 2e' + 1/2 O2(g)").unwrap();
    let r = to_json(&r);
    assert_eq!(r["arrow"], "Forward");
    assert_eq!(coefficients(&r["left"]), ["1"]);
    assert_eq!(coefficients(&r["right"]), ["1", "2", "1/2"]);
    let vacancy = &r["right"][0]["entity"]["Species"];
    assert_eq!(vacancy["occupant"], json!({"Vacancy": "Bare"}));
    assert_eq!(
        vacancy["site"],
        json!({"Lattice": {"element": 8, "label": null}})
    );
    assert_eq!(vacancy["charge"], 2);
    assert_eq!(r["right"][1]["entity"]["Species"]["occupant"], "Electron");
    assert_eq!(r["right"][1]["entity"]["Species"]["charge"], -1);
    let oxygen = &r["right"][2]["entity"]["Compound"];
    assert_eq!(oxygen["formula"]["atoms"], json!([[8, "2"]]));
    assert_eq!(oxygen["phase"], "Gas");
    // Spans are byte ranges of the text: `V_O..` is bytes 7 to 12.
    assert_eq!(r["right"][0]["span"], json!({"start": 7, "end": 12}));

    // Text that is not a reaction: the reasons serialize, located.
    let refused = lacuna::parse_reaction("O_O V_O..").unwrap_err();
    let refused = to_json(&refused);
    assert_eq!(refused[0]["code"], "P103");
    assert_eq!(refused[0]["severity"], "error");
}

#[test]
fn a_checked_reaction_serializes_its_balances_as_exact_numbers() {
    // source: common practice (yttria-stabilised zirconia: Y2O3 in ZrO2
    // gives two Y_Zr′ and one oxygen vacancy per formula unit; mass,
    // charge and the 1:2 site ratio balance).
    let text = "Y2O3 -> 2Y_Zr' + 3O_O + V_O..";
    let checked = lacuna::check_text("<inline>", text, Some(zirconia())).unwrap();
    assert!(checked.ok());
    let json = to_json(&checked);
    let report = &json["reactions"][0];
    assert_eq!(report["text"], text);
    assert_eq!(report["host"]["formula_text"], "ZrO2");
    let verdict = &report["verdict"];
    assert_eq!(
        verdict["balance"],
        json!({"mass": true, "charge": true, "site": true})
    );
    assert_eq!(verdict["table"]["charge"], json!(["0", "0"]));
    assert_eq!(
        verdict["table"]["elements"],
        json!([[39, "2", "2"], [8, "3", "3"]])
    );
    // (sublattice, sites per formula unit, left, right): 2 Zr sites and 4
    // O sites made, in the host's ratio 1:2.
    assert_eq!(
        verdict["table"]["sites"],
        json!([[0, "1", "0", "2"], [1, "2", "0", "4"]])
    );
    assert_eq!(json["summary"]["reactions"], 1);
    assert_eq!(json["summary"]["failed"], 0);

    // source: common practice (an oxygen vacancy carries two positive
    // effective charges; one electron leaves the reduction one short).
    let short = lacuna::check_text(
        "<inline>",
        "O_O -> V_O.. + e' + 1/2 O2(g)",
        Some(zirconia()),
    )
    .unwrap();
    let json = to_json(&short);
    let verdict = &json["reactions"][0]["verdict"];
    assert_eq!(verdict["balance"]["charge"], false);
    assert_eq!(verdict["table"]["charge"], json!(["0", "1"]));
    let diagnostic = &json["reactions"][0]["diagnostics"][0];
    assert_eq!(diagnostic["code"], "B302");
    assert_eq!(diagnostic["line"], 1);
    assert_eq!(json["summary"]["failed"], 1);
}

#[test]
fn a_checked_file_serializes_its_line_problems() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let path = dir.path().join("notebook.kvr");
    // source: common practice (Schottky disorder in ZrO2: one Zr vacancy
    // (−4) and two oxygen vacancies (+2 each)).
    std::fs::write(&path, "host Qq2\nhost ZrO2\nnil -> V_Zr'''' + 2V_O..\n").unwrap();
    let checked = lacuna::check_file(&path, None).unwrap();
    let json = to_json(&checked);
    let (line, problem) = (&json["line_problems"][0][0], &json["line_problems"][0][1]);
    assert_eq!(line, "host Qq2");
    assert_eq!(problem["line"], 1);
    // `Qq` is no element symbol: refused where it stands, column 6.
    assert_eq!(problem["code"], "P102");
    assert_eq!(problem["column"], 6);
    let report = &json["reactions"][0];
    assert_eq!(report["line"], 3);
    assert_eq!(report["source"], path.display().to_string());
    assert_eq!(report["verdict"]["table"]["charge"], json!(["0", "0"]));
    assert_eq!(
        coefficients(&report["reaction"]["right"]),
        ["1", "2"],
        "{report}"
    );
}

#[test]
fn a_balanced_reaction_serializes_its_coefficients() {
    // source: common practice (reduction of an oxide:
    // O_O× → V_O•• + 2 e′ + ½ O2(g)).
    let r = lacuna::parse_reaction("O_O -> V_O.. + e' + O2(g)").unwrap();
    let outcome = lacuna::balance(&r, Some(&zirconia()));
    let json = to_json(&outcome);
    assert_eq!(json["status"], "Unique");
    let terms = json["reactions"][0]["terms"].as_array().unwrap();
    let conventional: Vec<&str> = terms
        .iter()
        .map(|t| t["conventional"].as_str().unwrap())
        .collect();
    assert_eq!(conventional, ["1", "1", "2", "1/2"]);
    let integers: Vec<&str> = terms
        .iter()
        .map(|t| t["coefficient"].as_str().unwrap())
        .collect();
    assert_eq!(integers, ["2", "2", "4", "1"]);
    assert!(terms.iter().all(|t| t["side"] == t["written"]));
    let conventional = &json["reactions"][0]["conventional"];
    assert_eq!(coefficients(&conventional["right"]), ["1", "2", "1/2"]);
    assert_eq!(
        coefficients(&json["reactions"][0]["reaction"]["right"]),
        ["2", "4", "1"]
    );
}

#[test]
fn a_dope_report_serializes_its_ranked_mechanisms() {
    // source: common practice (yttria-stabilised zirconia: Y on Zr sites
    // compensated by oxygen vacancies, Y2O3 → 2 Y_Zr′ + 3 O_O× + V_O••).
    let report = lacuna::dope(&zirconia(), "Y2O3", &Default::default()).unwrap();
    let json = to_json(&report);
    assert_eq!(json["structure"]["name"], "fluorite");
    assert_eq!(json["structure"]["sites"][0]["cn"], 8);
    let first = &json["mechanisms"][0];
    assert_eq!(first["rank"], 1);
    assert_eq!(first["site"], json!({"Lattice": 0}));
    assert_eq!(first["compensation"], json!({"AnionVacancy": 1}));
    assert_eq!(first["effective_charge"], -1);
    assert_eq!(coefficients(&first["integer"]["left"]), ["1"]);
    assert_eq!(coefficients(&first["integer"]["right"]), ["2", "3", "1"]);
    // source: Shannon, Acta Cryst. A32 (1976) 751, table 1: Y³⁺ in
    // eight-fold coordination 1.019 Å, Zr⁴⁺ 0.84 Å.
    assert_eq!(first["size"]["dopant"]["pm"], 101.9);
    assert_eq!(first["size"]["host"]["pm"], 84.0);
    assert_eq!(first["size"]["dopant"]["cn"], 8);
}

#[test]
fn a_native_catalogue_serializes_its_families() {
    // source: common practice (ZrO2: Schottky ∅ → V_Zr⁗ + 2 V_O••; Frenkel
    // on Zr: Zr_Zr → Zr_i•••• + V_Zr⁗).
    let catalogue = lacuna::native(&zirconia());
    let json = to_json(&catalogue);
    let reactions = json["reactions"].as_array().unwrap();
    let schottky = reactions
        .iter()
        .find(|r| r["family"] == "Schottky")
        .expect("Schottky");
    assert_eq!(schottky["reaction"]["left"][0]["entity"], "Nil");
    assert_eq!(coefficients(&schottky["reaction"]["right"]), ["1", "2"]);
    let charges: Vec<i64> = schottky["reaction"]["right"]
        .as_array()
        .unwrap()
        .iter()
        .map(|t| t["entity"]["Species"]["charge"].as_i64().unwrap())
        .collect();
    assert_eq!(charges, [-4, 2]);
    let frenkel = reactions
        .iter()
        .find(|r| r["family"] == json!({"Frenkel": 0}))
        .expect("Frenkel on Zr");
    assert_eq!(frenkel["name"], "Frenkel (Zr)");
    assert_eq!(
        frenkel["reaction"]["right"][0]["entity"]["Species"]["site"],
        "Interstitial"
    );
    assert_eq!(json["skipped"], json!([]));
}

#[test]
fn laws_serialize_their_exponents_and_refusals() {
    // source: common practice (mass-action law of the reduction:
    // K = [V_O••] n² pO2^½ / [O_O×]).
    let text = "host ZrO2\nred: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = 1e-20 at 1273 K\n";
    let doc = lacuna::model::read("<inline>", text, None);
    let json = to_json(&lacuna::laws(&doc));
    let entry = &json["reactions"][0]["law"]["Ok"];
    assert_eq!(entry["host"], "ZrO2");
    assert_eq!(entry["line"], 2);
    assert_eq!(entry["law"]["label"], "red");
    let exponents: Vec<(&str, &str)> = entry["law"]["factors"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| {
            (
                f["ascii"].as_str().unwrap(),
                f["exponent"].as_str().unwrap(),
            )
        })
        .collect();
    assert_eq!(
        exponents,
        [
            ("[O_Ox]", "-1"),
            ("[V_O..]", "1"),
            ("n", "2"),
            ("pO2", "1/2")
        ]
    );
    assert_eq!(entry["law"]["factors"][1]["kind"], "Defect");
    assert_eq!(
        entry["thermo"],
        json!({"Fixed": {"k": 1e-20, "at": 1273.0}})
    );

    // Exponents beyond the exact range: refused with a located P107.
    let big = "host NiO\nx: 1/3037000499 h. + 1/3037000499 e' -> 1/3037000507 h. + 1/3037000507 e'";
    let doc = lacuna::model::read("big.kvr", big, None);
    let json = to_json(&lacuna::laws(&doc));
    let refused = &json["reactions"][0]["law"]["Err"];
    assert_eq!(refused["code"], "P107");
    assert_eq!(
        (refused["line"].as_u64(), refused["column"].as_u64()),
        (Some(2), Some(4))
    );
}

const REDUCIBLE: &str = "host ZrO2\n\
    temperature 1273 K\n\
    po2 1e-20 to 1 bar\n\
    red: O_O -> V_O.. + 2e' + 1/2 O2(g)\n\
    K red = 1e-20\n\
    i: nil -> e' + h.\n\
    K i = 1e-10\n";

#[test]
fn a_model_serializes_its_species_and_exact_network() {
    let read = lacuna::read_model("reducible.kvr", REDUCIBLE, None).unwrap();
    let json = to_json(&read);
    assert_eq!(json["source"], "reducible.kvr");
    assert_eq!(json["temperature"], 1273.0);
    assert_eq!(json["po2_range"], json!([1e-20, 1.0]));
    let species: Vec<(&str, i64)> = json["species"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| {
            (
                s["unicode"].as_str().unwrap(),
                s["charge"].as_i64().unwrap(),
            )
        })
        .collect();
    assert_eq!(species, [("[V_O••]", 2), ("n", -1), ("p", 1)]);
    // The reduction's row: [V_O••]¹ n² pO2^½, exact.
    let red = &json["equilibria"][0];
    assert_eq!(red["label"], "red");
    assert_eq!(red["row"]["species"], json!([[0, "1"], [1, "2"]]));
    assert_eq!(red["row"]["gases"], json!([[0, "1/2"]]));
    // Electroneutrality weighs each species by its charge.
    assert_eq!(json["network"]["weights"], json!([["2", "-1", "1"]]));

    // The same model built in code serializes to the same species and rows.
    let built = ModelBuilder::new(zirconia())
        .temperature(1273.0)
        .po2_range(1e-20, 1.0)
        .reaction_text("red", "O_O -> V_O.. + 2e' + 1/2 O2(g)")
        .k("red", 1e-20, None)
        .reaction_text("i", "nil -> e' + h.")
        .k("i", 1e-10, None)
        .build()
        .unwrap();
    let built = to_json(&built);
    assert_eq!(built["species"], json["species"]);
    assert_eq!(built["network"], json["network"]);
    assert_eq!(built["equilibria"][0]["row"], red["row"]);
}

#[test]
fn a_scan_serializes_its_points_and_exact_regimes() {
    let model = lacuna::read_model("reducible.kvr", REDUCIBLE, None).unwrap();
    let scan = lacuna::scan(&model, &ScanOptions::po2().per_decade(1)).unwrap();
    let json = to_json(&scan);
    assert_eq!(json["mode"], json!({"Po2": {"temperature": 1273.0}}));
    let points = json["points"].as_array().unwrap();
    assert_eq!(points.len(), 21);
    for (i, point) in points.iter().enumerate() {
        let po2 = point["po2"].as_f64().unwrap();
        let want = 10f64.powi(i as i32 - 20);
        assert!((po2 / want - 1.0).abs() < 1e-9, "point {i}: {po2}");
        assert_eq!(point["temperature"], 1273.0);
        assert_eq!(point["converged"], true);
        assert_eq!(point["ln_c"].as_array().unwrap().len(), 3);
    }
    // source: common practice (Brouwer approximation). Reducing side,
    // n = 2[V_O••]: n and [V_O••] ∝ pO2^(−1/6), p ∝ pO2^(+1/6). Oxidizing
    // side, n = p: both flat, [V_O••] ∝ pO2^(−1/2).
    let regimes = json["regimes"].as_array().unwrap();
    assert_eq!(regimes.len(), 2, "{regimes:?}");
    assert_eq!(
        regimes[0]["laws"]["gas"],
        json!([["-1/6"], ["-1/6"], ["1/6"]])
    );
    assert_eq!(regimes[0]["dominance"]["positive"], 0);
    assert_eq!(regimes[0]["dominance"]["negative"], 1);
    assert_eq!(regimes[1]["laws"]["gas"], json!([["-1/2"], ["0"], ["0"]]));
    assert_eq!(regimes[0]["from"], 1e-20);
    assert_eq!(regimes[1]["to"], 1.0);

    // A scan that cannot run says why, as data: this model fixes no total.
    let refused = lacuna::scan(
        &model,
        &ScanOptions::new(lacuna::solve::scan::Along::Dopant {
            total: 0,
            from: 1e-4,
            to: 1e-2,
            po2: 1e-5,
        }),
    )
    .unwrap_err();
    assert_eq!(
        to_json(&refused),
        json!({"NoSuchTotal": {"index": 0, "totals": 0}})
    );
}

#[test]
fn a_fit_serializes_its_exact_candidate_slopes() {
    // source: common practice (Brouwer approximation): electronic
    // conduction by electrons with n = 2[V_O••] goes as pO2^(−1/6).
    let mut csv = String::from("T_K,pO2_bar,sigma_S_per_cm\n");
    for i in 0..9 {
        let po2 = 10f64.powi(-20 + 2 * i);
        csv.push_str(&format!("1000,{po2:e},{:e}\n", 2.0 * po2.powf(-1.0 / 6.0)));
    }
    let data = lacuna::read_measurements(&csv, "<inline>").unwrap();
    let measured = to_json(&data);
    assert_eq!(
        measured["isotherms"][0]["points"].as_array().unwrap().len(),
        9
    );
    assert_eq!(measured["isotherms"][0]["temperature_k"], 1000.0);
    let report = lacuna::fit(&data, &Default::default()).unwrap();
    let json = to_json(&report);
    let matching = &json["isotherms"][0]["segments"][0]["match"];
    assert_eq!(matching["nearest"], "-1/6");
    assert!(
        matching["within"]
            .as_array()
            .unwrap()
            .contains(&json!("-1/6")),
        "{matching}"
    );
}

#[test]
fn element_data_serializes() {
    // source: Shannon, Acta Cryst. A32 (1976) 751: Zr⁴⁺ in eight-fold
    // coordination, 0.84 Å.
    let zr = lacuna::base::elements::by_symbol("Zr").unwrap();
    let json = to_json(zr);
    assert_eq!(json["z"], 40);
    assert_eq!(json["symbol"], "Zr");
    assert!(
        json["radii"]
            .as_array()
            .unwrap()
            .iter()
            .any(|r| r["charge"] == 4 && r["coordination"] == 8 && r["radius_pm"] == 84.0),
        "{}",
        json["radii"]
    );
}
