//! Property: random defect models built from a small catalogue of native
//! defect families always solve, and every solved point satisfies
//! electroneutrality, the fixed totals and each mass-action law, checked
//! here from the concentrations alone (not from the solver's own residual).
//! Freezing the ionic defects at the same temperature changes nothing.
//!
//! The catalogue is the textbook set for an MO2 oxide (common practice):
//! reduction, intrinsic ionisation across the gap, vacancy ionisation,
//! Schottky, anti-Frenkel, Frenkel, acceptor and donor dopants, and
//! dopant–vacancy association.

use lacuna::model::{Model, Overrides, read};
use lacuna::solve::equilibrium::{frozen_sweep, log_grid, po2_sweep};
use proptest::prelude::*;

#[derive(Debug, Clone)]
struct Choice {
    ionisation: Option<(f64, Option<f64>)>,
    schottky: Option<(f64, Option<f64>)>,
    anti_frenkel: Option<f64>,
    acceptor: Option<(f64, Option<f64>)>,
    donor: Option<f64>,
    k_red: f64,
    k_i: f64,
    temperature: f64,
}

fn ten(exponent: f64) -> f64 {
    10f64.powf(exponent)
}

fn model_text(c: &Choice) -> String {
    let mut text = format!(
        "host ZrO2\ntemperature {} K\n\
         red: O_O -> V_O.. + 2e' + 1/2 O2(g)\nK red = {:e}\n\
         i: nil -> e' + h.\nK i = {:e}\n",
        c.temperature,
        ten(c.k_red),
        ten(c.k_i)
    );
    if let Some((k_ion, trap)) = c.ionisation {
        text.push_str(&format!(
            "ion: V_O. -> V_O.. + e'\nK ion = {:e}\n",
            ten(k_ion)
        ));
        if let Some(k_trap) = trap {
            text.push_str(&format!(
                "trap: V_Ox -> V_O. + e'\nK trap = {:e}\n",
                ten(k_trap)
            ));
        }
    }
    if let Some((k_s, frenkel)) = c.schottky {
        text.push_str(&format!(
            "s: nil -> V_Zr'''' + 2V_O..\nK s = {:e}\n",
            ten(k_s)
        ));
        if let Some(k_f) = frenkel {
            text.push_str(&format!(
                "f: Zr_Zr -> Zr_i.... + V_Zr''''\nK f = {:e}\n",
                ten(k_f)
            ));
        }
    }
    if let Some(k_af) = c.anti_frenkel {
        text.push_str(&format!(
            "af: O_O -> O_i'' + V_O..\nK af = {:e}\n",
            ten(k_af)
        ));
    }
    if let Some((level, assoc)) = c.acceptor {
        text.push_str(&format!("fix Y_Zr' = {:e} site fraction\n", ten(level)));
        if let Some(k_a) = assoc {
            text.push_str(&format!(
                "assoc: Y_Zr' + V_O.. -> (Y_Zr' V_O..).\nK assoc = {:e}\n",
                ten(k_a)
            ));
        }
    }
    if let Some(level) = c.donor {
        text.push_str(&format!("fix Nb_Zr. = {:e} site fraction\n", ten(level)));
    }
    text
}

fn choices() -> impl Strategy<Value = Choice> {
    (
        proptest::option::of((-10.0..5.0f64, proptest::option::of(-10.0..5.0f64))),
        proptest::option::of((-40.0..-5.0f64, proptest::option::of(-40.0..-5.0f64))),
        proptest::option::of(-30.0..-5.0f64),
        proptest::option::of((-6.0..-1.0f64, proptest::option::of(-2.0..6.0f64))),
        proptest::option::of(-6.0..-1.0f64),
        -40.0..-10.0f64,
        -40.0..-5.0f64,
        600.0..1800.0f64,
    )
        .prop_map(
            |(ionisation, schottky, anti_frenkel, acceptor, donor, k_red, k_i, temperature)| {
                Choice {
                    ionisation,
                    schottky,
                    anti_frenkel,
                    acceptor,
                    donor,
                    k_red,
                    k_i,
                    temperature,
                }
            },
        )
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    #[test]
    fn random_catalogue_models_converge_and_are_neutral(choice in choices()) {
        let text = model_text(&choice);
        let doc = read("<property>", &text, None);
        let model = Model::build(&doc, Overrides::default())
            .unwrap_or_else(|e| panic!("catalogue model did not build:\n{text}\n{e:#?}"));
        let t = choice.temperature;
        let po2s = log_grid(1e-30, 1e5, 15);
        let points = po2_sweep(&model, t, &po2s).expect("K known at the model temperature");
        let ln_k = model.ln_k(t).expect("K known");
        for p in &points {
            prop_assert!(p.converged, "not converged at pO2 {}:\n{text}", p.po2);
            let c: Vec<f64> = p.ln_c.iter().map(|l| l.exp()).collect();
            // Electroneutrality from the concentrations themselves.
            let (mut net, mut gross) = (0.0f64, 0.0f64);
            for (s, sp) in model.species.iter().enumerate() {
                let q = f64::from(sp.charge) * c[s];
                net += q;
                gross += q.abs();
            }
            if gross > 0.0 {
                prop_assert!(net.abs() <= 1e-12 * gross, "residual {} at {}:\n{text}", net.abs() / gross, p.po2);
            }
            // Fixed totals.
            for total in &model.totals {
                let sum: f64 = total.weights.iter().zip(&c)
                    .map(|(w, ci)| (*w.numer() as f64 / *w.denom() as f64) * ci)
                    .sum();
                prop_assert!((sum / total.amount - 1.0).abs() <= 1e-11, "total {} vs {}", sum, total.amount);
            }
            // Each mass-action law, in logs.
            for (r, e) in model.equilibria.iter().enumerate() {
                let mut lhs = 0.0;
                for &(s, nu) in &e.row.species {
                    lhs += (*nu.numer() as f64 / *nu.denom() as f64) * p.ln_c[s];
                }
                for &(g, nu) in &e.row.gases {
                    let pressure = model.gases[g].pressure.unwrap_or(p.po2);
                    lhs += (*nu.numer() as f64 / *nu.denom() as f64) * pressure.ln();
                }
                prop_assert!((lhs - ln_k[r]).abs() <= 1e-9 * (1.0 + ln_k[r].abs()), "law {} off by {}", e.label, lhs - ln_k[r]);
            }
        }
        // Freezing the ionic defects and re-equilibrating the electrons at
        // the same temperature must give back the same state.
        let frozen = frozen_sweep(&model, t, &po2s, &[t]).expect("electronic K known");
        for (a, b) in points.iter().zip(&frozen) {
            prop_assert!(b.converged, "frozen state not converged at {}:\n{text}", a.po2);
            for (x, y) in a.ln_c.iter().zip(&b.ln_c) {
                prop_assert!((x - y).abs() <= 1e-8, "frozen {} vs equilibrium {} at {}:\n{text}", y, x, a.po2);
            }
        }
    }
}
