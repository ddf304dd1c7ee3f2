//! Recovery tests: data generated in the test from known parameters (with
//! seeded noise) are fitted back within stated tolerances. These are test
//! fixtures, not measurements. One test rebuilds a published set of
//! conductivity laws for yttria-stabilised zirconia and recovers them.

use super::arrhenius::{ArrheniusForm, K_B_EV};
use super::csv_input::BAR_PER_ATM;
use super::regimes::SlopeVerdict;
use super::*;
use crate::base::number::Q;

/// SplitMix64 (Steele, Lea and Flood, OOPSLA 2014) with Box–Muller normals:
/// deterministic, so every run sees the same noise.
struct Rng(u64);

impl Rng {
    fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    fn uniform(&mut self) -> f64 {
        ((self.next_u64() >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }

    fn normal(&mut self) -> f64 {
        let (u, v) = (self.uniform(), self.uniform());
        (-2.0 * u.ln()).sqrt() * (2.0 * std::f64::consts::PI * v).cos()
    }
}

fn isotherm(label: &str, t: f64, points: Vec<(f64, f64, Option<f64>)>) -> Isotherm {
    Isotherm {
        label: label.into(),
        temperature_k: t,
        temperature_spread_k: 0.0,
        points: points
            .into_iter()
            .enumerate()
            .map(|(i, (p, s, e))| Point {
                line: i as u32 + 2,
                temperature_k: t,
                po2_bar: p,
                sigma: s,
                sigma_err: e,
            })
            .collect(),
    }
}

fn measurements(isotherms: Vec<Isotherm>, errors: bool) -> Measurements {
    Measurements {
        source: "generated".into(),
        temperature_column: "T_K".into(),
        pressure_column: "pO2_bar".into(),
        sigma_column: "sigma_S_per_cm".into(),
        uncertainty_column: errors.then(|| "sigma_err".into()),
        ignored_columns: Vec::new(),
        isotherms,
    }
}

#[test]
fn piecewise_slopes_and_breaks_are_recovered_from_noisy_data() {
    // Fixture: three exact regimes (−1/4, 0, +1/4 in log σ vs log pO2,
    // breaks at 10^−15 and 10^−5 bar), 31 points, 0.01-decade Gaussian noise.
    let mut rng = Rng(20_240_611);
    let truth = |x: f64| -> f64 {
        if x < -15.0 {
            -2.0 - 0.25 * (x + 15.0)
        } else if x < -5.0 {
            -2.0
        } else {
            -2.0 + 0.25 * (x + 5.0)
        }
    };
    let pts: Vec<(f64, f64, Option<f64>)> = (0..31)
        .map(|k| {
            let x = -25.0 + 0.8 * k as f64 + 0.1;
            (
                10f64.powf(x),
                10f64.powf(truth(x) + 0.01 * rng.normal()),
                None,
            )
        })
        .collect();
    let m = measurements(vec![isotherm("fixture", 1000.0, pts)], false);
    // At 99.9 % confidence a correct slope fails to match once in a
    // thousand; three slopes at 95 % would fail one run in seven.
    let options = FitOptions {
        confidence: 0.999,
        ..FitOptions::default()
    };
    let r = analyse(&m, None, &options).unwrap();
    let segs = &r.isotherms[0].segments;
    assert_eq!(segs.len(), 3, "{segs:#?}");
    for (s, want) in segs.iter().zip([-0.25, 0.0, 0.25]) {
        let se = s.slope_se.unwrap();
        // Tolerance: 4 standard errors, and the SE itself below 0.02.
        assert!((s.slope - want).abs() < 4.0 * se && se < 0.02, "{s:#?}");
        assert_eq!(s.matching.verdict, SlopeVerdict::Match, "{s:#?}");
    }
    // Breaks within one point spacing (0.8 decades) of the truth.
    assert!((segs[0].po2_max_bar.log10() + 15.0).abs() < 0.81 + 0.5);
    assert!((segs[2].po2_min_bar.log10() + 5.0).abs() < 0.81 + 0.5);
    assert!(r.isotherms[0].delta_bic.unwrap() > 2.0);
}

/// Known parameters of an invented acceptor-doped oxide, σ·T Arrhenius form.
struct Truth {
    ln_a: [f64; 3],
    ea: [f64; 3],
}

impl Truth {
    fn terms(&self, t: f64) -> [f64; 3] {
        let f = |i: usize| (self.ln_a[i] - self.ea[i] / (K_B_EV * t)).exp() / t;
        [f(0), f(1), f(2)]
    }
}

fn generated(errors: bool, seed: u64) -> (Truth, Measurements) {
    let truth = Truth {
        ln_a: [12.1, 20.07, 15.35],
        ea: [0.8, 2.6, 1.2],
    };
    let mut rng = Rng(seed);
    let mut isos = Vec::new();
    for t in [973.15, 1073.15, 1173.15] {
        let [si, sn, sp] = truth.terms(t);
        let pts = (0..25)
            .map(|k| {
                let p = 10f64.powf(-24.0 + k as f64);
                let s = si + sn * p.powf(-0.25) + sp * p.powf(0.25);
                let noisy = s * (1.0 + 0.02 * rng.normal());
                (p, noisy, errors.then_some(0.02 * s))
            })
            .collect();
        isos.push(isotherm(&format!("{t} K"), t, pts));
    }
    (truth, measurements(isos, errors))
}

#[test]
fn decomposition_and_activation_energies_are_recovered() {
    for errors in [false, true] {
        let (truth, m) = generated(errors, 7 + errors as u64);
        let r = analyse(&m, None, &FitOptions::default()).unwrap();
        for iso in &r.isotherms {
            let d = iso.decomposition.as_ref().unwrap();
            let want = truth.terms(iso.temperature_k);
            for (est, w) in [
                (d.sigma_ion, want[0]),
                (d.sigma_n, want[1]),
                (d.sigma_p, want[2]),
            ] {
                let se = est.se.unwrap();
                // 2 % noise on 25 points: within 4 SE, and the SE honest
                // (below 20 % of the value for every term here).
                assert!((est.value - w).abs() < 4.0 * se, "{errors} {est:?} vs {w}");
                assert!(se < 0.2 * w, "{est:?}");
            }
            assert!(!d.poor, "{d:#?}");
            if errors {
                let c = d.chi2_reduced.unwrap();
                assert!(c > 0.4 && c < 2.0, "χ²/dof {c}");
            }
        }
        let fit = |c: &str| {
            r.arrhenius
                .iter()
                .find(|o| o.component == c)
                .and_then(|o| o.fit.clone())
                .unwrap()
        };
        for (c, ea) in [("ion", 0.8), ("n", 2.6), ("p", 1.2)] {
            let f = fit(c);
            let se = f.activation_ev_se.unwrap();
            assert!((f.activation_ev - ea).abs() < 4.0 * se, "{c}: {f:#?}");
            assert!((f.activation_kj_mol - f.activation_ev * 96.485_332_12).abs() < 1e-9);
        }
        // n ∝ K_red^(1/2) with vacancies fixed: ΔH_red = 2·E_a(n) = 5.2 eV.
        let red = r.enthalpies.iter().find(|h| h.reaction == "red").unwrap();
        assert_eq!(red.factor, Q::new(2, 1));
        assert!((red.value_ev - 5.2).abs() < 4.0 * red.se_ev.unwrap());
        assert!(red.assumption.contains("neglected"));
        let ox = r.enthalpies.iter().find(|h| h.reaction == "ox").unwrap();
        assert!((ox.value_ev - 2.4).abs() < 4.0 * ox.se_ev.unwrap());
        assert!(
            r.interpretations
                .iter()
                .any(|i| i.contains("migration enthalpy"))
        );
    }
}

#[test]
fn a_slope_of_another_mechanism_is_not_forced_onto_a_regime() {
    // Fixture: a clean power law with slope −0.21 (between −1/4 and −1/6).
    let mut rng = Rng(99);
    let pts = (0..20)
        .map(|k| {
            let x = -20.0 + k as f64;
            (
                10f64.powf(x),
                10f64.powf(-3.0 - 0.21 * x + 0.003 * rng.normal()),
                None,
            )
        })
        .collect();
    let m = measurements(vec![isotherm("fixture", 1000.0, pts)], false);
    let r = analyse(&m, None, &FitOptions::default()).unwrap();
    // However the line is cut, no piece may be called a regime's slope.
    for s in &r.isotherms[0].segments {
        assert_eq!(s.matching.verdict, SlopeVerdict::NoMatch, "{s:#?}");
    }
    // Its decomposition with −1/4 cannot follow −0.21 and says so.
    assert!(r.isotherms[0].decomposition.as_ref().unwrap().poor);
}

#[test]
fn published_zirconia_laws_are_recovered_with_their_boundaries() {
    // source: J.-H. Park and R. N. Blumenthal, "Electronic transport in 8 mole
    // percent Y2O3–ZrO2", J. Electrochem. Soc. 136 (1989) 2867 (from memory):
    //   σ_ion = 1.63e2·exp(−0.79 eV/kT) S/cm,
    //   σ_n   = 1.31e7·exp(−3.88 eV/kT)·pO2^(−1/4) S/cm,
    //   σ_p   = 2.35e2·exp(−1.67 eV/kT)·pO2^(+1/4) S/cm, pO2 in atm.
    // Total σ is synthesised from these laws (no noise) at 800, 900 and
    // 1000 °C over 10^−25…1 atm; the fit must give the laws back, in bar.
    let law = |t: f64| -> [f64; 3] {
        let kt = K_B_EV * t;
        [
            1.63e2 * (-0.79 / kt).exp(),
            1.31e7 * (-3.88 / kt).exp(),
            2.35e2 * (-1.67 / kt).exp(),
        ]
    };
    let mut isos = Vec::new();
    for t in [1073.15, 1173.15, 1273.15] {
        let [si, sn, sp] = law(t);
        let pts = (0..26)
            .map(|k| {
                let p_atm = 10f64.powf(-25.0 + k as f64);
                let s = si + sn * p_atm.powf(-0.25) + sp * p_atm.powf(0.25);
                (p_atm * BAR_PER_ATM, s, None)
            })
            .collect();
        isos.push(isotherm(&format!("{t} K"), t, pts));
    }
    let m = measurements(isos, false);
    let options = FitOptions {
        arrhenius: ArrheniusForm::Sigma,
        ..FitOptions::default()
    };
    let r = analyse(&m, None, &options).unwrap();
    // Prefactors per bar: σ_n = A_n·(p_bar/1.01325)^(−1/4) = A_n·1.01325^(1/4)·p_bar^(−1/4).
    for (iso, t) in r.isotherms.iter().zip([1073.15, 1173.15, 1273.15]) {
        let d = iso.decomposition.as_ref().unwrap();
        let [si, sn, sp] = law(t);
        assert!((d.sigma_ion.value / si - 1.0).abs() < 1e-6);
        assert!((d.sigma_n.value / (sn * BAR_PER_ATM.powf(0.25)) - 1.0).abs() < 1e-5);
        assert!((d.sigma_p.value / (sp * BAR_PER_ATM.powf(-0.25)) - 1.0).abs() < 1e-3);
        // σ_n = σ_ion at P_n = (σ_n°/σ_ion)^4 atm: about 10^−30 atm at
        // 1000 °C, the classic edge of zirconia's electrolytic domain, far
        // outside these data and so labelled extrapolated.
        let bn = d.boundary_n.unwrap();
        let want = 4.0 * (sn / si).log10() + BAR_PER_ATM.log10();
        assert!(
            (bn.log10_po2 - want).abs() < 1e-4,
            "{} vs {want}",
            bn.log10_po2
        );
        assert!(bn.extrapolated);
    }
    let fit = |c: &str| {
        r.arrhenius
            .iter()
            .find(|o| o.component == c)
            .unwrap()
            .fit
            .clone()
            .unwrap()
    };
    assert!((fit("ion").activation_ev - 0.79).abs() < 1e-6);
    assert!((fit("n").activation_ev - 3.88).abs() < 1e-5);
    assert!((fit("p").activation_ev - 1.67).abs() < 1e-3);
    assert!((fit("ion").ln_prefactor - 163f64.ln()).abs() < 1e-4);
    // With the vacancies fixed by yttria and mobilities not activated, the
    // n branch implies ΔH_red = 2 × 3.88 eV.
    let red = r.enthalpies.iter().find(|h| h.reaction == "red").unwrap();
    assert!((red.value_ev - 7.76).abs() < 1e-4);
}

#[test]
fn the_library_refuses_bad_measurements_and_choices() {
    let m = measurements(vec![isotherm("a", 1000.0, vec![(1.0, 1.0, None)])], false);
    assert!(matches!(
        analyse(&m, None, &FitOptions::default()),
        Err(FitError::Data(_))
    ));
    let m = measurements(
        vec![isotherm(
            "a",
            1000.0,
            vec![(1.0, 1.0, None), (-1.0, 1.0, None)],
        )],
        false,
    );
    assert!(matches!(
        analyse(&m, None, &FitOptions::default()),
        Err(FitError::Data(_))
    ));
    let (_, m) = generated(false, 1);
    let options = FitOptions {
        regime: Some("reduced-intrinsic".into()),
        ..FitOptions::default()
    };
    // Regime found, but its ionic and n slopes coincide: reported per isotherm.
    let r = analyse(&m, None, &options).unwrap();
    assert!(r.isotherms[0].decomposition_problem.is_some());
    let options = FitOptions {
        regime: Some("nonexistent".into()),
        ..FitOptions::default()
    };
    assert!(matches!(
        analyse(&m, None, &options),
        Err(FitError::Usage(_))
    ));
}

#[test]
fn model_regimes_replace_the_textbook_set() {
    // A one-regime model whose decomposition uses −1/6 and +1/6 with a
    // pO2-independent ionic term: the exponents must be taken from it.
    let model = regimes::ModelRegimes {
        source: "test model".into(),
        reactions: Vec::new(),
        regimes: vec![regimes::Regime {
            name: "sixths".into(),
            neutrality: "test".into(),
            ionic_defect: "V_O••".into(),
            n: regimes::CarrierLaw::new(Q::new(-1, 6), &[]),
            p: regimes::CarrierLaw::new(Q::new(1, 6), &[]),
            ion: regimes::CarrierLaw::new(Q::new(0, 1), &[]),
        }],
        default_decomposition: None,
    };
    let pts = (0..20)
        .map(|k| {
            let p = 10f64.powf(-20.0 + k as f64);
            (
                p,
                1e-3 + 1e-6 * p.powf(-1.0 / 6.0) + 1e-5 * p.powf(1.0 / 6.0),
                None,
            )
        })
        .collect();
    let m = measurements(vec![isotherm("x", 1000.0, pts)], false);
    let r = analyse(&m, Some(&model), &FitOptions::default()).unwrap();
    assert_eq!(r.regime.name, "sixths");
    let d = r.isotherms[0].decomposition.as_ref().unwrap();
    assert!((d.sigma_n.value / 1e-6 - 1.0).abs() < 1e-6);
    assert_eq!(r.regimes_source, "test model");
}

#[test]
fn straight_noisy_lines_are_rarely_cut() {
    // Fixture: 100 straight lines (slope −0.21, 20 points, 0.003-decade
    // noise). A cut is a false regime change; the segmentation's penalty is
    // set so that this happens to about 3 % of such lines. Allow up to 8 %.
    let mut cut = 0;
    for seed in 0..100u64 {
        let mut rng = Rng(seed * 7919 + 1);
        let pts = (0..20)
            .map(|k| {
                let x = -20.0 + k as f64;
                (
                    10f64.powf(x),
                    10f64.powf(-3.0 - 0.21 * x + 0.003 * rng.normal()),
                    None,
                )
            })
            .collect();
        let m = measurements(vec![isotherm("fixture", 1000.0, pts)], false);
        let r = analyse(&m, None, &FitOptions::default()).unwrap();
        if r.isotherms[0].segments.len() > 1 {
            cut += 1;
        }
    }
    assert!(cut <= 8, "{cut} of 100 straight lines were cut");
}
