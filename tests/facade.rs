//! The library's facade used as a program would use it: a model built in
//! code and the same model read from text solve alike.

use lacuna::base::number::to_plain;
use lacuna::model::{Basis, Model};
use lacuna::solve::scan::{Along, Scan};
use lacuna::{ModelBuilder, ScanOptions, scan};

const ACCEPTOR: &str = "host ZrO2\n\
    temperature 1273 K\n\
    po2 1e-40 to 1e5 bar\n\
    red: O_O -> V_O.. + 2e' + 1/2 O2(g)\n\
    K red = 1e-20\n\
    dH red = 6 eV\n\
    i: nil -> e' + h.\n\
    dH i = 3 eV\n\
    dS i = 1e-4 eV/K\n\
    fix Y_Zr' = 0.001 site fraction\n";

fn built() -> Model {
    ModelBuilder::new(lacuna::host("ZrO2").expect("host"))
        .temperature(1273.0)
        .po2_range(1e-40, 1e5)
        .reaction_text("red", "O_O -> V_O.. + 2e' + 1/2 O2(g)")
        .k("red", 1e-20, None)
        .enthalpy("red", 6.0)
        .reaction_text("i", "nil -> e' + h.")
        .enthalpy("i", 3.0)
        .entropy("i", 1e-4)
        .fix("Y_Zr'", 0.001, Basis::SiteFraction)
        .build()
        .expect("the built model")
}

fn read() -> Model {
    lacuna::read_model("acceptor.kvr", ACCEPTOR, None).expect("the read model")
}

fn slopes(model: &Model, scan: &Scan) -> Vec<Vec<String>> {
    scan.regimes
        .iter()
        .map(|r| {
            (0..model.species.len())
                .map(|s| {
                    format!(
                        "{} {}",
                        model.species[s].unicode,
                        to_plain(r.slope(model, s))
                    )
                })
                .collect()
        })
        .collect()
}

#[test]
fn a_model_built_in_code_solves_as_the_same_model_read_from_text() {
    let (a, b) = (built(), read());
    assert_eq!(a.species, b.species);
    // The same totals; only the line numbers differ (the text has a host line).
    let unplaced = |m: &Model| {
        let mut totals = m.totals.clone();
        for t in &mut totals {
            t.line = 0;
        }
        totals
    };
    assert_eq!(unplaced(&a), unplaced(&b));
    assert_eq!(a.gases, b.gases);
    assert_eq!(a.temperature, b.temperature);
    assert_eq!(a.po2_range, b.po2_range);
    assert_eq!(
        a.neutrality(lacuna::notation::Style::Unicode),
        b.neutrality(lacuna::notation::Style::Unicode)
    );
    let laws = |m: &Model| -> Vec<(String, String, Option<f64>)> {
        m.equilibria
            .iter()
            .map(|e| {
                (
                    e.label.clone(),
                    e.law.text(lacuna::notation::Style::Ascii),
                    e.thermo.as_ref().and_then(|t| t.ln_k(1000.0).ok()),
                )
            })
            .collect()
    };
    assert_eq!(laws(&a), laws(&b));
    for options in [
        ScanOptions::po2().per_decade(2),
        ScanOptions::new(Along::Temperature {
            from: 900.0,
            to: 1500.0,
            po2: 0.21,
        })
        .steps(7),
        ScanOptions::new(Along::FrozenPo2 { quench: 600.0 }).per_decade(1),
        ScanOptions::new(Along::Dopant {
            total: 0,
            from: 1e-5,
            to: 1e-2,
            po2: 1e-3,
        }),
    ] {
        let (sa, sb) = (
            scan(&a, &options).expect("scan"),
            scan(&b, &options).expect("scan"),
        );
        assert_eq!(sa.points, sb.points, "{options:?}");
        assert_eq!(slopes(&a, &sa), slopes(&b, &sb), "{options:?}");
        assert_eq!(sa.notes, sb.notes);
        assert_eq!(sa.warnings, sb.warnings);
        assert_eq!(sa.dopant, sb.dopant);
    }
}

#[test]
fn the_acceptor_model_has_the_textbook_regimes() {
    // source: common practice (Brouwer approximation for an acceptor-doped
    // oxide; Smyth, The Defect Chemistry of Metal Oxides, 2000, from
    // memory): reduced, n = 2[V_O••] with n ∝ pO2^(−1/6); extrinsic,
    // 2[V_O••] = [Y_Zr′] with n ∝ pO2^(−1/4) and p ∝ pO2^(+1/4).
    let model = built();
    let result = scan(&model, &ScanOptions::po2().per_decade(1)).expect("scan");
    assert!(result.converged());
    let n = model
        .species
        .iter()
        .position(|s| s.unicode == "n")
        .expect("n");
    let p = model
        .species
        .iter()
        .position(|s| s.unicode == "p")
        .expect("p");
    let first = &result.regimes[0];
    assert_eq!(to_plain(first.slope(&model, n)), "-1/6");
    let extrinsic = result
        .regimes
        .iter()
        .find(|r| to_plain(r.slope(&model, n)) == "-1/4")
        .expect("an extrinsic regime");
    assert_eq!(to_plain(extrinsic.slope(&model, p)), "1/4");
}

#[test]
fn builder_problems_are_located_on_the_items_lines() {
    let host = lacuna::host("ZrO2").expect("host");
    let problems = ModelBuilder::new(host)
        .temperature(1273.0)
        .reaction_text("red", "O_O -> V_O.. + e' + 1/2 O2(g)")
        .k("red", 1e-20, None)
        .build()
        .expect_err("the charge does not balance");
    let located = problems
        .iter()
        .find(|d| d.code.to_string() == "B302")
        .expect("the charge balance fails");
    assert_eq!(located.line, 2, "{located}");
    assert!(
        located.to_string().starts_with("error[B302] at line 2"),
        "{located}"
    );
}

#[test]
fn a_dopant_scan_follows_the_extrinsic_power_laws() {
    // source: common practice (acceptor-doped oxide in the extrinsic
    // regime; Smyth, The Defect Chemistry of Metal Oxides, 2000, from
    // memory): 2[V_O••] = [A′] fixes [V_O••] ∝ [A′]; K_red = [V_O••] n²
    // pO2^½ then gives n ∝ [A′]^(−1/2), and n·p = K_i gives p ∝ [A′]^(+1/2).
    let model = built();
    let options = ScanOptions::new(Along::Dopant {
        total: 0,
        from: 5e-4,
        to: 5e-3,
        po2: 1e-10,
    })
    .per_decade(4);
    let result = scan(&model, &options).expect("scan");
    assert!(result.converged());
    assert_eq!(result.dopant.len(), result.points.len());
    assert_eq!(result.points.len(), 5);
    // Here n and p stay below 0.5 % of [Y_Zr′] and the defects below 1 % of
    // the sites: the limiting slopes hold to about that.
    let slope = |name: &str| {
        let s = model
            .species
            .iter()
            .position(|x| x.unicode == name)
            .expect(name);
        let (a, b) = (&result.points[0], result.points.last().expect("points"));
        let (xa, xb) = (result.dopant[0], *result.dopant.last().expect("amounts"));
        (b.ln_c[s] - a.ln_c[s]) / (xb.ln() - xa.ln())
    };
    assert!(
        (slope("[V_O••]") - 1.0).abs() < 1e-2,
        "{}",
        slope("[V_O••]")
    );
    assert!((slope("n") + 0.5).abs() < 1e-2, "{}", slope("n"));
    assert!((slope("p") - 0.5).abs() < 1e-2, "{}", slope("p"));
    assert!(result.warnings.is_empty(), "{:?}", result.warnings);
    // Beyond 1 % of the sites the dilute model is flagged, with where.
    let heavy = scan(
        &model,
        &ScanOptions::new(Along::Dopant {
            total: 0,
            from: 1e-3,
            to: 0.1,
            po2: 1e-5,
        }),
    )
    .expect("scan");
    let warning = heavy
        .warnings
        .iter()
        .find(|w| w.code.to_string() == "M713")
        .expect("a dilute-limit warning");
    assert!(
        warning.message.contains("for totals from"),
        "{}",
        warning.message
    );
    // A total the model does not have is refused, not guessed.
    let none = scan(
        &model,
        &ScanOptions::new(Along::Dopant {
            total: 3,
            from: 1e-4,
            to: 1e-2,
            po2: 1e-5,
        }),
    );
    assert!(none.is_err());
}
