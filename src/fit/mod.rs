//! From measurements back to mechanisms: fitting total conductivity σ versus
//! pO2 and temperature.
//!
//! In: `Measurements` (isotherms of σ(pO2), read by `csv_input` or built by
//! the caller), optional `ModelRegimes` (the textbook set by default) and
//! `FitOptions`. Out: a `FitReport` holding, per isotherm, the straight
//! pieces of log σ versus log pO2 with their slopes matched to exact regime
//! slopes (`segment`), the decomposition σ = σ_ion + σ_n°·pO2^a + σ_p°·pO2^b
//! with transference numbers and electrolytic domain boundaries
//! (`decompose`), and across isotherms the Arrhenius fits of each term with
//! the reaction enthalpies the regime implies (`arrhenius`). The result is plain
//! data: `crate::report::fit` writes it as a table and fitted-curve CSV,
//! `crate::report::svg::render_fit` draws it.
//!
//! Everything that can mislead is carried in the report, not hidden: poor
//! fits, slopes that match no regime, terms not detected, boundaries
//! outside the measured range (extrapolated), and the assumptions behind
//! every enthalpy.

// `!(x > 0.0)` is meant throughout: unlike `x <= 0.0` it also refuses NaN.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

pub mod arrhenius;
pub mod csv_input;
pub mod decompose;
pub mod from_model;
pub mod linalg;
pub mod regimes;
pub mod segment;

#[cfg(test)]
mod tests;

use crate::base::number;
use arrhenius::{ArrheniusFit, ArrheniusForm, ComponentPoint, Enthalpy, KJ_PER_MOL_PER_EV};
use decompose::{DecomposeOptions, Decomposition, Exponents};
use linalg::critical_value;
use regimes::{CarrierLaw, ModelRegimes, Regime, SlopeMatch, match_slope};
use segment::{BicEntry, SegmentOptions};
use std::fmt;

/// 1 atm in bar (exact by definition: 101 325 Pa).
pub const BAR_PER_ATM: f64 = 1.01325;

/// A number in compact scientific form: `1.23e-20`.
pub fn sci(v: f64) -> String {
    if v == 0.0 {
        return "0".into();
    }
    format!("{v:.2e}")
}

/// One measurement, in kelvin, bar and S/cm.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Point {
    /// Line of the source file (0 when built in code).
    pub line: u32,
    pub temperature_k: f64,
    pub po2_bar: f64,
    pub sigma: f64,
    /// One standard deviation of σ, S/cm.
    pub sigma_err: Option<f64>,
}

/// The points measured at one temperature.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Isotherm {
    pub label: String,
    /// Mean temperature of its points.
    pub temperature_k: f64,
    /// Highest minus lowest temperature of its points.
    pub temperature_spread_k: f64,
    pub points: Vec<Point>,
}

/// A measurement file, read.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct Measurements {
    pub source: String,
    pub temperature_column: String,
    pub pressure_column: String,
    pub sigma_column: String,
    pub uncertainty_column: Option<String>,
    pub ignored_columns: Vec<String>,
    /// Sorted by temperature.
    pub isotherms: Vec<Isotherm>,
}

/// Choices of the analysis.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct FitOptions {
    /// Regime whose exponents the decomposition uses (by name).
    pub regime: Option<String>,
    /// Confidence level of slope matching and intervals, e.g. 0.95.
    pub confidence: f64,
    pub segments: SegmentOptions,
    pub arrhenius: ArrheniusForm,
    /// Activation energies of the mobilities (eV, in the fitted form);
    /// `None` means neglected and said so.
    pub electron_mobility_ea: Option<f64>,
    pub hole_mobility_ea: Option<f64>,
    pub ion_mobility_ea: Option<f64>,
    /// Without uncertainties, the decomposition is poor above this rms
    /// residual (decades of σ).
    pub rms_limit: f64,
    /// Points per isotherm in the fitted curves.
    pub grid_points: usize,
}

impl Default for FitOptions {
    fn default() -> Self {
        FitOptions {
            regime: None,
            confidence: 0.95,
            segments: SegmentOptions::default(),
            arrhenius: ArrheniusForm::SigmaT,
            electron_mobility_ea: None,
            hole_mobility_ea: None,
            ion_mobility_ea: None,
            rms_limit: 0.03,
            grid_points: 41,
        }
    }
}

/// Why an analysis could not run.
#[derive(Debug, Clone, PartialEq, Eq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub enum FitError {
    /// The data cannot be fitted (exit code 1 in the CLI).
    Data(String),
    /// A choice does not fit the model (exit code 2 in the CLI).
    Usage(String),
}

impl fmt::Display for FitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            FitError::Data(m) | FitError::Usage(m) => f.write_str(m),
        }
    }
}

impl std::error::Error for FitError {}

/// One straight piece of an isotherm.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct SegmentReport {
    pub po2_min_bar: f64,
    pub po2_max_bar: f64,
    pub points: usize,
    /// d log10 σ / d log10 pO2.
    pub slope: f64,
    pub slope_se: Option<f64>,
    /// Half-width of the slope's confidence interval.
    pub slope_interval: Option<f64>,
    pub intercept: f64,
    pub rms_log10: f64,
    pub chi2_reduced: Option<f64>,
    #[cfg_attr(feature = "serde", serde(rename = "match"))]
    pub matching: SlopeMatch,
    /// From the decomposition: the term carrying most of σ over this piece
    /// (`ion`, `n`, `p`) and its smallest share there. Below
    /// `DOMINANT_SHARE` the piece is a transition and its slope apparent.
    pub dominant: Option<(String, f64)>,
    /// Carriers are mixed over this piece: its slope is not a regime's.
    pub mixed: bool,
}

/// A piece whose leading term carries less than this share of σ somewhere
/// is reported as a transition between regimes.
pub const DOMINANT_SHARE: f64 = 0.9;

/// A measured point with its place in the fit.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct DataPoint {
    pub line: u32,
    pub po2_bar: f64,
    pub sigma: f64,
    pub sigma_err: Option<f64>,
    /// Index of the segment it belongs to.
    pub segment: usize,
    /// log10(σ/σ_fit) of the decomposition, when there is one.
    pub residual_log10: Option<f64>,
}

#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct IsothermReport {
    pub label: String,
    pub temperature_k: f64,
    pub temperature_spread_k: f64,
    pub po2_min_bar: f64,
    pub po2_max_bar: f64,
    pub segments: Vec<SegmentReport>,
    pub bic: Vec<BicEntry>,
    pub delta_bic: Option<f64>,
    /// Pieces BIC chose, before knots with an insignificant change of slope
    /// were dropped.
    pub bic_segments: usize,
    pub decomposition: Option<Decomposition>,
    /// Why there is no decomposition.
    pub decomposition_problem: Option<String>,
    /// Sorted by pO2.
    pub data: Vec<DataPoint>,
}

/// An Arrhenius fit of one term, or why there is none.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct ArrheniusOutcome {
    pub component: String,
    pub fit: Option<ArrheniusFit>,
    pub problem: Option<String>,
}

/// The regime the decomposition used.
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct RegimeSummary {
    pub name: String,
    pub neutrality: String,
    pub exponents: Exponents,
}

/// Constants the numbers rest on.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct Constants {
    pub k_b_ev_per_k: f64,
    pub kj_per_mol_per_ev: f64,
    pub bar_per_atm: f64,
}

#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
#[non_exhaustive]
pub struct FitReport {
    pub source: String,
    pub columns: Vec<String>,
    pub uncertainties: bool,
    pub ignored_columns: Vec<String>,
    pub regimes_source: String,
    /// Every regime the slopes were compared with.
    pub regimes: Vec<Regime>,
    pub regime: RegimeSummary,
    pub confidence: f64,
    pub arrhenius_form: ArrheniusForm,
    pub constants: Constants,
    pub isotherms: Vec<IsothermReport>,
    pub arrhenius: Vec<ArrheniusOutcome>,
    pub enthalpies: Vec<Enthalpy>,
    /// What the activation energies mean where no single enthalpy follows.
    pub interpretations: Vec<String>,
    /// Warnings and caveats, in plain sentences.
    pub notes: Vec<String>,
}

/// Runs the whole analysis. `regimes` defaults to the textbook set.
pub fn analyse(
    measurements: &Measurements,
    regimes: Option<&ModelRegimes>,
    options: &FitOptions,
) -> Result<FitReport, FitError> {
    let textbook;
    let model = match regimes {
        Some(m) => m,
        None => {
            textbook = ModelRegimes::textbook();
            &textbook
        }
    };
    if !(options.confidence > 0.0 && options.confidence < 1.0) {
        return Err(FitError::Usage(format!(
            "the confidence level must lie between 0 and 1, not {}",
            options.confidence
        )));
    }
    let regime = model
        .decomposition_regime(options.regime.as_deref())
        .map_err(FitError::Usage)?;
    let exponents = Exponents {
        ion: regime.ion.slope,
        n: regime.n.slope,
        p: regime.p.slope,
    };
    validate(measurements)?;
    let candidates = model.candidates();
    let uncertainties = measurements.uncertainty_column.is_some()
        || measurements
            .isotherms
            .iter()
            .flat_map(|i| &i.points)
            .all(|p| p.sigma_err.is_some());
    let mut notes = Vec::new();
    let mut isotherms = Vec::new();
    for iso in &measurements.isotherms {
        isotherms.push(analyse_isotherm(
            iso,
            exponents,
            &candidates,
            uncertainties,
            options,
            &mut notes,
        ));
    }
    let (arrhenius, enthalpies, interpretations) =
        across_temperatures(&isotherms, regime, model, options);
    for o in &arrhenius {
        if let Some(f) = &o.fit {
            if f.activation_ev_se
                .is_some_and(|se| se > 0.25 * f.activation_ev.abs().max(0.1))
            {
                notes.push(format!(
                    "the activation energy of the {} term is poorly determined ({:.2} ± {:.2} eV): the term is weak in these data, so read it and any enthalpy from it as an order of magnitude",
                    o.component,
                    f.activation_ev,
                    f.activation_ev_se.unwrap_or(0.0)
                ));
            }
        }
    }
    if isotherms.len() < 2 {
        notes.push(
            "one isotherm only: no Arrhenius fits; measure at two or more temperatures".into(),
        );
    }
    notes.push(
        "mass-action laws assume dilute, ideal defects; above about a percent of defects, interactions and association bend slopes and activation energies".into(),
    );
    let mut columns = vec![
        measurements.temperature_column.clone(),
        measurements.pressure_column.clone(),
        measurements.sigma_column.clone(),
    ];
    if let Some(u) = &measurements.uncertainty_column {
        columns.push(u.clone());
    }
    Ok(FitReport {
        source: measurements.source.clone(),
        columns,
        uncertainties,
        ignored_columns: measurements.ignored_columns.clone(),
        regimes_source: model.source.clone(),
        regimes: model.regimes.clone(),
        regime: RegimeSummary {
            name: regime.name.clone(),
            neutrality: regime.neutrality.clone(),
            exponents,
        },
        confidence: options.confidence,
        arrhenius_form: options.arrhenius,
        constants: Constants {
            k_b_ev_per_k: arrhenius::K_B_EV,
            kj_per_mol_per_ev: KJ_PER_MOL_PER_EV,
            bar_per_atm: BAR_PER_ATM,
        },
        isotherms,
        arrhenius,
        enthalpies,
        interpretations,
        notes,
    })
}

/// Checks what `csv_input` checks, for callers that build `Measurements`
/// themselves.
fn validate(m: &Measurements) -> Result<(), FitError> {
    if m.isotherms.is_empty() {
        return Err(FitError::Data("no isotherms to fit".into()));
    }
    for iso in &m.isotherms {
        let bad = iso.points.iter().find(|p| {
            let positive = |v: f64| v > 0.0 && v.is_finite();
            !(positive(p.temperature_k) && positive(p.po2_bar) && positive(p.sigma))
                || p.sigma_err.is_some_and(|e| !(e > 0.0 && e.is_finite()))
        });
        if let Some(p) = bad {
            return Err(FitError::Data(format!(
                "isotherm {}: temperature, pO2, σ and uncertainty must be positive and finite (line {})",
                iso.label, p.line
            )));
        }
        let first = iso.points.first().map(|p| p.po2_bar);
        if iso.points.len() < 2 || iso.points.iter().all(|p| Some(p.po2_bar) == first) {
            return Err(FitError::Data(format!(
                "isotherm {} needs at least two different pressures",
                iso.label
            )));
        }
    }
    Ok(())
}

fn analyse_isotherm(
    iso: &Isotherm,
    exponents: Exponents,
    candidates: &[regimes::Candidate],
    uncertainties: bool,
    options: &FitOptions,
    notes: &mut Vec<String>,
) -> IsothermReport {
    let mut points: Vec<&Point> = iso.points.iter().collect();
    points.sort_by(|a, b| a.po2_bar.total_cmp(&b.po2_bar));
    let x: Vec<f64> = points.iter().map(|p| p.po2_bar.log10()).collect();
    let y: Vec<f64> = points.iter().map(|p| p.sigma.log10()).collect();
    let ln10 = std::f64::consts::LN_10;
    // s(log10 σ) = s(σ)/(σ·ln 10).
    let weights: Option<Vec<f64>> = uncertainties.then(|| {
        points
            .iter()
            .map(|p| {
                let s = p.sigma_err.unwrap_or(p.sigma) / (p.sigma * ln10);
                1.0 / (s * s)
            })
            .collect()
    });
    let segment_options = SegmentOptions {
        confidence: options.confidence,
        ..options.segments
    };
    let segmentation = segment::segment(&x, &y, weights.as_deref(), uncertainties, segment_options);
    let mut segments = Vec::new();
    let mut data: Vec<DataPoint> = points
        .iter()
        .map(|p| DataPoint {
            line: p.line,
            po2_bar: p.po2_bar,
            sigma: p.sigma,
            sigma_err: p.sigma_err,
            segment: 0,
            residual_log10: None,
        })
        .collect();
    let (bic, delta_bic, bic_segments) = match &segmentation {
        Some(s) => (s.bic.clone(), s.delta_bic, s.bic_segments),
        None => (Vec::new(), None, 1),
    };
    for (index, piece) in segmentation.iter().flat_map(|s| &s.pieces).enumerate() {
        let crit = critical_value(options.confidence, piece.fit.se_dof);
        let matching = match_slope(piece.fit.slope, piece.fit.slope_se, crit, candidates);
        for d in data.get_mut(piece.start..piece.end).into_iter().flatten() {
            d.segment = index;
        }
        let lo = x.get(piece.start).copied().unwrap_or(0.0);
        let hi = x.get(piece.end.saturating_sub(1)).copied().unwrap_or(0.0);
        segments.push(SegmentReport {
            po2_min_bar: 10f64.powf(lo),
            po2_max_bar: 10f64.powf(hi),
            points: piece.end - piece.start,
            slope: piece.fit.slope,
            slope_se: piece.fit.slope_se,
            slope_interval: piece.fit.slope_se.map(|s| s * crit),
            intercept: piece.fit.intercept,
            rms_log10: piece.fit.rms,
            chi2_reduced: piece.fit.chi2_reduced,
            matching,
            dominant: None,
            mixed: false,
        });
    }
    let po2: Vec<f64> = points.iter().map(|p| p.po2_bar).collect();
    let sigma: Vec<f64> = points.iter().map(|p| p.sigma).collect();
    let errs: Option<Vec<f64>> = if uncertainties {
        points.iter().map(|p| p.sigma_err).collect()
    } else {
        None
    };
    let decomposition = decompose::decompose(
        &po2,
        &sigma,
        errs.as_deref(),
        exponents,
        DecomposeOptions {
            rms_limit: options.rms_limit,
            grid_points: options.grid_points,
        },
    );
    let (decomposition, decomposition_problem) = match decomposition {
        Ok(d) => {
            for (point, r) in data.iter_mut().zip(&d.residuals_log10) {
                point.residual_log10 = Some(*r);
            }
            if !(d.poor || d.systematic) {
                for (index, seg) in segments.iter_mut().enumerate() {
                    seg.dominant = dominant_term(&d, data.iter().filter(|p| p.segment == index));
                    seg.mixed = seg
                        .dominant
                        .as_ref()
                        .is_some_and(|(_, share)| *share < DOMINANT_SHARE);
                    if seg.mixed && seg.matching.verdict != regimes::SlopeVerdict::NoMatch {
                        notes.push(format!(
                            "isotherm {}: the piece {} … {} bar has slope {}, near {}, but the decomposition shares its conductivity between carriers there: an apparent slope of a transition, not evidence for a regime",
                            iso.label,
                            sci(seg.po2_min_bar),
                            sci(seg.po2_max_bar),
                            crate::base::text::signed_decimal(seg.slope, 3),
                            number::signed(seg.matching.nearest)
                        ));
                    }
                }
            }
            for (name, b) in [("σ_n = σ_ion", d.boundary_n), ("σ_p = σ_ion", d.boundary_p)] {
                if let Some(b) = b.filter(|b| b.extrapolated) {
                    notes.push(format!(
                        "isotherm {}: the boundary {name} at pO2 = {} bar lies outside the measured {} … {} bar; it is extrapolated along the fitted power laws",
                        iso.label,
                        sci(b.po2_bar),
                        sci(po2.first().copied().unwrap_or(0.0)),
                        sci(po2.last().copied().unwrap_or(0.0)),
                    ));
                }
            }
            if d.poor || d.systematic {
                notes.push(format!(
                    "isotherm {}: the decomposition fits poorly (rms residual {:.3} decades{}{}); its numbers describe the model, not necessarily the sample",
                    iso.label,
                    d.residual_rms_log10,
                    d.chi2_reduced
                        .map(|c| format!(", χ²/dof {c:.2}"))
                        .unwrap_or_default(),
                    if d.systematic {
                        ", residuals run in long same-sign stretches"
                    } else {
                        ""
                    }
                ));
            }
            (Some(d), None)
        }
        Err(e) => (None, Some(e)),
    };
    if iso.temperature_spread_k > 2.0 {
        notes.push(format!(
            "isotherm {}: its temperatures spread over {:.1} K; the fit uses their mean {:.2} K",
            iso.label, iso.temperature_spread_k, iso.temperature_k
        ));
    }
    IsothermReport {
        label: iso.label.clone(),
        temperature_k: iso.temperature_k,
        temperature_spread_k: iso.temperature_spread_k,
        po2_min_bar: po2.first().copied().unwrap_or(0.0),
        po2_max_bar: po2.last().copied().unwrap_or(0.0),
        segments,
        bic,
        delta_bic,
        bic_segments,
        decomposition,
        decomposition_problem,
        data,
    }
}

/// The term with the largest mean share of σ over `points`, and its
/// smallest share among them.
fn dominant_term<'a>(
    d: &Decomposition,
    points: impl Iterator<Item = &'a DataPoint>,
) -> Option<(String, f64)> {
    let shares: Vec<[f64; 3]> = points
        .map(|p| {
            let (i, n, q) = d.terms(p.po2_bar);
            let total = i + n + q;
            if total > 0.0 {
                [i / total, n / total, q / total]
            } else {
                [0.0; 3]
            }
        })
        .collect();
    if shares.is_empty() {
        return None;
    }
    let mean = |k: usize| shares.iter().map(|s| s[k]).sum::<f64>();
    let k = (0..3).max_by(|&a, &b| mean(a).total_cmp(&mean(b)))?;
    let min = shares.iter().map(|s| s[k]).fold(1.0f64, f64::min);
    Some((["ion", "n", "p"][k].to_string(), min))
}

type AcrossTemperatures = (Vec<ArrheniusOutcome>, Vec<Enthalpy>, Vec<String>);

fn across_temperatures(
    isotherms: &[IsothermReport],
    regime: &Regime,
    model: &ModelRegimes,
    options: &FitOptions,
) -> AcrossTemperatures {
    let mut outcomes = Vec::new();
    let mut enthalpies = Vec::new();
    let mut interpretations = Vec::new();
    if isotherms.len() < 2 {
        return (outcomes, enthalpies, interpretations);
    }
    let components: [(&str, &CarrierLaw, Option<f64>, &str); 3] = [
        (
            "ion",
            &regime.ion,
            options.ion_mobility_ea,
            "--ion-mobility-ea",
        ),
        (
            "n",
            &regime.n,
            options.electron_mobility_ea,
            "--electron-mobility-ea",
        ),
        (
            "p",
            &regime.p,
            options.hole_mobility_ea,
            "--hole-mobility-ea",
        ),
    ];
    for (component, law, mobility, flag) in components {
        let points: Vec<ComponentPoint> = isotherms
            .iter()
            .filter_map(|iso| {
                let d = iso.decomposition.as_ref()?;
                let estimate = match component {
                    "ion" => d.sigma_ion,
                    "n" => d.sigma_n,
                    _ => d.sigma_p,
                };
                Some(ComponentPoint {
                    isotherm: iso.label.clone(),
                    temperature_k: iso.temperature_k,
                    estimate,
                })
            })
            .collect();
        match arrhenius::fit_component(component, &points, options.arrhenius, options.confidence) {
            Ok(fit) => {
                read_enthalpy(
                    &fit,
                    law,
                    regime,
                    model,
                    mobility,
                    flag,
                    options.arrhenius,
                    &mut enthalpies,
                    &mut interpretations,
                );
                outcomes.push(ArrheniusOutcome {
                    component: component.into(),
                    fit: Some(fit),
                    problem: None,
                });
            }
            Err(problem) => outcomes.push(ArrheniusOutcome {
                component: component.into(),
                fit: None,
                problem: Some(problem),
            }),
        }
    }
    (outcomes, enthalpies, interpretations)
}

/// Turns a term's activation energy into the enthalpy of the reaction its
/// law names: a term ∝ μ·K^e gives E_a = e·ΔH + E_μ, so ΔH = (E_a − E_μ)/e.
#[allow(clippy::too_many_arguments)]
fn read_enthalpy(
    fit: &ArrheniusFit,
    law: &CarrierLaw,
    regime: &Regime,
    model: &ModelRegimes,
    mobility: Option<f64>,
    flag: &str,
    form: ArrheniusForm,
    enthalpies: &mut Vec<Enthalpy>,
    interpretations: &mut Vec<String>,
) {
    let term = match fit.component.as_str() {
        "ion" => format!("σ_ion ({})", regime.ionic_defect),
        "n" => "σ_n°".to_string(),
        _ => "σ_p°".to_string(),
    };
    let nonzero: Vec<&(String, crate::base::number::Q)> = law
        .k_exponents
        .iter()
        .filter(|(_, e)| *e != crate::base::number::Q::from_integer(0))
        .collect();
    let form_text = match form {
        ArrheniusForm::SigmaT => "σ·T",
        ArrheniusForm::Sigma => "σ",
    };
    match nonzero.as_slice() {
        [] => interpretations.push(if fit.component == "ion" {
            format!(
                "{term}: in regime {} ({}) the {} concentration is fixed, so E_a(ion) = {:.3} eV is the migration enthalpy of {} (plus any association enthalpy where defects associate)",
                regime.name, regime.neutrality, regime.ionic_defect, fit.activation_ev, regime.ionic_defect
            )
        } else {
            format!(
                "{term}: in regime {} ({}) this carrier's concentration is fixed, so E_a = {:.3} eV is the activation of its mobility",
                regime.name, regime.neutrality, fit.activation_ev
            )
        }),
        [(name, e)] => {
            // e is non-zero; only an exponent at the edge of the exact range
            // has no exact reciprocal, and then no enthalpy is read.
            let Ok(factor) = e.checked_recip() else {
                interpretations.push(format!(
                    "{term}: the exponent of K_{name} is beyond the exact range, so no enthalpy is read"
                ));
                return;
            };
            let f = decompose::q_to_f64(factor);
            let mu = mobility.unwrap_or(0.0);
            let value = f * (fit.activation_ev - mu);
            let se = fit.activation_ev_se.map(|s| s * f.abs());
            let reaction = model.reactions.iter().find(|r| &r.name == name);
            let equation = reaction.map(|r| r.equation.clone()).unwrap_or_default();
            let mobility_text = match mobility {
                Some(m) => format!("the mobility activation E_μ = {m} eV (as given, {form_text} form) is subtracted"),
                None => format!(
                    "the mobility's own activation is neglected (E_μ = 0; give it with {flag})"
                ),
            };
            enthalpies.push(Enthalpy {
                reaction: name.clone(),
                equation,
                component: fit.component.clone(),
                factor,
                value_ev: value,
                se_ev: se,
                value_kj_mol: value * KJ_PER_MOL_PER_EV,
                se_kj_mol: se.map(|s| s * KJ_PER_MOL_PER_EV),
                mobility_ev: mu,
                mobility_given: mobility.is_some(),
                assumption: format!(
                    "{term} ∝ K_{name}^({}) in regime {} ({}), so ΔH_{name} = {} × (E_a − E_μ); the fixed concentrations do not change with temperature; {mobility_text}; E_a from the {form_text} form",
                    crate::base::number::to_plain(*e),
                    regime.name,
                    regime.neutrality,
                    crate::base::number::to_plain(factor),
                ),
            });
        }
        several => {
            let sum = several
                .iter()
                .map(|(n, e)| format!("{}·ΔH_{n}", crate::base::number::to_plain(*e)))
                .collect::<Vec<_>>()
                .join(" + ");
            interpretations.push(format!(
                "{term}: in regime {} E_a − E_μ = {sum}; one term cannot separate these enthalpies",
                regime.name
            ));
        }
    }
}
