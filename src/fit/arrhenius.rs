//! Arrhenius fits across isotherms: ln(σ·T) (or ln σ) versus 1/T for each
//! term of the decomposition, giving an activation energy with its standard
//! error; and, where the regime ties a term to one reaction constant, that
//! reaction's enthalpy.
//!
//! In: one estimate per isotherm and component. Out: `ArrheniusFit` and
//! `Enthalpy`, each saying which form was fitted and what was assumed.

use super::decompose::Estimate;
use super::linalg::{critical_value, fit_line};
use crate::base::number::Q;

/// Boltzmann constant in eV/K (CODATA; exact since the 2019 SI).
pub const K_B_EV: f64 = 8.617_333_262e-5;
/// kJ/mol per eV: e·N_A/1000 (CODATA; exact since the 2019 SI).
pub const KJ_PER_MOL_PER_EV: f64 = 96.485_332_12;

/// Which quantity is fitted against 1/T.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[cfg_attr(feature = "serde", serde(rename_all = "kebab-case"))]
#[non_exhaustive]
pub enum ArrheniusForm {
    /// ln(σ·T) = ln A − E_a/(k_B·T): the form of thermally activated hopping.
    SigmaT,
    /// ln σ = ln A − E_a/(k_B·T).
    Sigma,
}

impl ArrheniusForm {
    pub fn describe(self) -> &'static str {
        match self {
            ArrheniusForm::SigmaT => "ln(σ·T) = ln A − E_a/(k_B·T)",
            ArrheniusForm::Sigma => "ln σ = ln A − E_a/(k_B·T)",
        }
    }
}

/// One isotherm's value of a component.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct ComponentPoint {
    pub isotherm: String,
    pub temperature_k: f64,
    pub estimate: Estimate,
}

#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct ArrheniusFit {
    /// `ion`, `n` or `p`.
    pub component: String,
    pub form: ArrheniusForm,
    pub isotherms_used: Vec<String>,
    /// Isotherms left out, with the reason.
    pub skipped: Vec<String>,
    pub t_min_k: f64,
    pub t_max_k: f64,
    pub activation_ev: f64,
    pub activation_ev_se: Option<f64>,
    pub activation_kj_mol: f64,
    pub activation_kj_mol_se: Option<f64>,
    /// ln A in the units of the fitted quantity (S/cm or S·K/cm, per bar^exponent).
    pub ln_prefactor: f64,
    pub ln_prefactor_se: Option<f64>,
    /// `uncertainties` when every point had a standard error, else `unweighted`.
    pub weighting: &'static str,
    pub dof: usize,
    pub chi2_reduced: Option<f64>,
    /// Half-width of the confidence interval of E_a (eV) at the report's level.
    pub activation_ev_interval: Option<f64>,
}

/// Fits one component across temperatures. Needs two isotherms where the
/// term was detected.
pub fn fit_component(
    component: &str,
    points: &[ComponentPoint],
    form: ArrheniusForm,
    confidence: f64,
) -> Result<ArrheniusFit, String> {
    let mut skipped = Vec::new();
    let mut used = Vec::new();
    for p in points {
        if p.estimate.at_bound || !(p.estimate.value > 0.0) {
            skipped.push(format!("{}: term not detected", p.isotherm));
        } else {
            used.push(p);
        }
    }
    if used.len() < 2 {
        return Err(format!(
            "detected at {} temperature{}; an Arrhenius fit needs two",
            used.len(),
            if used.len() == 1 { "" } else { "s" }
        ));
    }
    let x: Vec<f64> = used.iter().map(|p| 1.0 / p.temperature_k).collect();
    let y: Vec<f64> = used
        .iter()
        .map(|p| match form {
            ArrheniusForm::SigmaT => (p.estimate.value * p.temperature_k).ln(),
            ArrheniusForm::Sigma => p.estimate.value.ln(),
        })
        .collect();
    let relative: Option<Vec<f64>> = used
        .iter()
        .map(|p| p.estimate.se.map(|se| se / p.estimate.value))
        .collect();
    let weights: Option<Vec<f64>> = relative
        .filter(|r| r.iter().all(|v| *v > 0.0))
        .map(|r| r.iter().map(|v| 1.0 / (v * v)).collect());
    let distinct = x.iter().any(|v| (v - x[0]).abs() > 1e-15);
    if !distinct {
        return Err("all isotherms where it was detected share one temperature".into());
    }
    let fit = fit_line(&x, &y, weights.as_deref(), weights.is_some())
        .ok_or("the temperatures do not determine a line")?;
    let ev = -fit.slope * K_B_EV;
    let ev_se = fit.slope_se.map(|s| s * K_B_EV);
    let (t_min, t_max) = used.iter().fold((f64::INFINITY, 0.0f64), |(l, h), p| {
        (l.min(p.temperature_k), h.max(p.temperature_k))
    });
    Ok(ArrheniusFit {
        component: component.to_string(),
        form,
        isotherms_used: used.iter().map(|p| p.isotherm.clone()).collect(),
        skipped,
        t_min_k: t_min,
        t_max_k: t_max,
        activation_ev: ev,
        activation_ev_se: ev_se,
        activation_kj_mol: ev * KJ_PER_MOL_PER_EV,
        activation_kj_mol_se: ev_se.map(|s| s * KJ_PER_MOL_PER_EV),
        ln_prefactor: fit.intercept,
        ln_prefactor_se: fit.intercept_se,
        weighting: if weights.is_some() {
            "uncertainties"
        } else {
            "unweighted"
        },
        dof: fit.dof,
        chi2_reduced: fit.chi2_reduced,
        activation_ev_interval: ev_se.map(|s| s * critical_value(confidence, fit.se_dof)),
    })
}

/// A reaction enthalpy read from a term's activation energy.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Enthalpy {
    /// The reaction's name and equation.
    pub reaction: String,
    pub equation: String,
    /// The term it comes from: `n`, `p` or `ion`.
    pub component: String,
    /// ΔH = factor × (E_a − E_μ); the factor is 1/e for a term ∝ K^e.
    pub factor: Q,
    pub value_ev: f64,
    pub se_ev: Option<f64>,
    pub value_kj_mol: f64,
    pub se_kj_mol: Option<f64>,
    /// The mobility activation energy subtracted, and whether it was given.
    pub mobility_ev: f64,
    pub mobility_given: bool,
    /// What the number rests on, in a sentence.
    pub assumption: String,
}
