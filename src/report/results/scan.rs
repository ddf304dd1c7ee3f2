//! The JSON shape of `lacuna brouwer --format json`: `model`, `sweep`,
//! `regimes`, `points`, `warnings`, `notes` (keys in alphabetical order).

use super::SourcedDiagnostic;
use crate::base::number;
use crate::model::Model;
use crate::notation::Style;
use crate::solve::scan::{DILUTE_LIMIT, Mode, Scan};
use serde::Serialize;
use std::collections::BTreeMap;

#[derive(Debug, Serialize)]
pub struct ScanReport<'a> {
    pub model: ModelJson<'a>,
    pub notes: &'a [String],
    pub points: Vec<PointJson>,
    pub regimes: Vec<RegimeJson>,
    pub sweep: SweepJson<'a>,
    pub warnings: Vec<SourcedDiagnostic<'a>>,
}

#[derive(Debug, Serialize)]
pub struct ModelJson<'a> {
    pub equilibria: Vec<EquilibriumJson<'a>>,
    pub host: &'a str,
    pub neutrality: String,
    pub source: &'a str,
    pub species: Vec<SpeciesJson<'a>>,
    pub temperature: Option<f64>,
    pub totals: Vec<TotalJson<'a>>,
    pub units: String,
}

#[derive(Debug, Serialize)]
pub struct EquilibriumJson<'a> {
    pub label: &'a str,
    pub law: String,
    pub reaction: &'a str,
}

#[derive(Debug, Serialize)]
pub struct SpeciesJson<'a> {
    pub ascii: &'a str,
    pub charge: i32,
    pub symbol: &'a str,
}

#[derive(Debug, Serialize)]
pub struct TotalJson<'a> {
    pub description: &'a str,
    pub per_formula_unit: f64,
    pub subject: &'a str,
}

#[derive(Debug, Serialize)]
pub struct SweepJson<'a> {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub frozen_from: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub po2: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub temperature: Option<f64>,
    /// Along a dopant: the fixed total varied.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub total: Option<&'a str>,
    pub variable: &'static str,
}

#[derive(Debug, Serialize)]
pub struct RegimeJson {
    pub dopant_slopes: BTreeMap<String, BTreeMap<String, String>>,
    #[serde(rename = "enthalpies_eV")]
    pub enthalpies_ev: BTreeMap<String, Option<f64>>,
    pub neutrality: String,
    pub po2_from: f64,
    pub po2_to: f64,
    pub power_laws: BTreeMap<String, String>,
    pub slopes: BTreeMap<String, String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub temperature_from: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub temperature_to: Option<f64>,
    pub totals: Vec<String>,
}

#[derive(Debug, Serialize)]
pub struct PointJson {
    pub concentrations: BTreeMap<String, f64>,
    pub converged: bool,
    pub defect_site_fraction: f64,
    pub dilute: bool,
    /// Along a dopant: the amount of the total, per formula unit.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub dopant: Option<f64>,
    pub po2: f64,
    pub residual: f64,
    pub temperature: f64,
}

/// The report of `scan` on `model`.
pub fn scan_report<'a>(model: &'a Model, scan: &'a Scan) -> ScanReport<'a> {
    let names: Vec<String> = (0..model.species.len())
        .map(|s| model.symbol(s, Style::Unicode).to_string())
        .collect();
    let per_species = |f: &dyn Fn(usize) -> String| -> BTreeMap<String, String> {
        (0..model.species.len())
            .map(|s| (names[s].clone(), f(s)))
            .collect()
    };
    let (temperature, sweep) = match scan.mode {
        Mode::Po2 { temperature } => (
            Some(temperature),
            SweepJson {
                frozen_from: None,
                po2: None,
                temperature: Some(temperature),
                total: None,
                variable: "po2",
            },
        ),
        Mode::Temperature { po2 } => (
            None,
            SweepJson {
                frozen_from: None,
                po2: Some(po2),
                temperature: None,
                total: None,
                variable: "temperature",
            },
        ),
        Mode::FrozenPo2 { high, low } => (
            Some(high),
            SweepJson {
                frozen_from: Some(high),
                po2: None,
                temperature: Some(low),
                total: None,
                variable: "po2",
            },
        ),
        Mode::Dopant {
            temperature,
            po2,
            total,
        } => (
            Some(temperature),
            SweepJson {
                frozen_from: None,
                po2: Some(po2),
                temperature: Some(temperature),
                total: model.totals.get(total).map(|t| t.subject_unicode.as_str()),
                variable: "dopant",
            },
        ),
        Mode::FrozenTemperature { high, po2 } => (
            Some(high),
            SweepJson {
                frozen_from: Some(high),
                po2: Some(po2),
                temperature: None,
                total: None,
                variable: "temperature",
            },
        ),
    };
    let regimes = scan
        .regimes
        .iter()
        .map(|r| {
            let (po2_from, po2_to, t_range) = match scan.mode {
                Mode::Temperature { po2 } => (po2, po2, Some((r.from, r.to))),
                _ => (r.from, r.to, None),
            };
            RegimeJson {
                dopant_slopes: model
                    .totals
                    .iter()
                    .enumerate()
                    .map(|(j, t)| {
                        (
                            t.subject_unicode.clone(),
                            per_species(&|s| number::to_plain(r.laws.total[s][j])),
                        )
                    })
                    .collect(),
                enthalpies_ev: (0..model.species.len())
                    .map(|s| (names[s].clone(), r.enthalpy(model, s)))
                    .collect(),
                neutrality: r.neutrality(model, Style::Unicode),
                po2_from,
                po2_to,
                power_laws: per_species(&|s| r.power_law_text(model, s, Style::Unicode)),
                slopes: per_species(&|s| number::to_plain(r.slope(model, s))),
                temperature_from: t_range.map(|(a, _)| a),
                temperature_to: t_range.map(|(_, b)| b),
                totals: r.total_conditions(model, Style::Unicode),
            }
        })
        .collect();
    let points = scan
        .points
        .iter()
        .enumerate()
        .map(|(i, p)| PointJson {
            concentrations: (0..model.species.len())
                .map(|s| (names[s].clone(), p.concentration(s)))
                .collect(),
            converged: p.converged,
            defect_site_fraction: p.site_fraction,
            dilute: p.site_fraction <= DILUTE_LIMIT,
            dopant: scan.dopant.get(i).copied(),
            po2: p.po2,
            residual: p.residual.max(p.total_residual),
            temperature: p.temperature,
        })
        .collect();
    ScanReport {
        model: ModelJson {
            equilibria: model
                .equilibria
                .iter()
                .map(|e| EquilibriumJson {
                    label: &e.label,
                    law: e.law.text(Style::Unicode),
                    reaction: &e.law.reaction_unicode,
                })
                .collect(),
            host: &model.host.formula_text,
            neutrality: model.neutrality(Style::Unicode),
            source: &model.source,
            species: model
                .species
                .iter()
                .enumerate()
                .map(|(s, sp)| SpeciesJson {
                    ascii: &sp.ascii,
                    charge: sp.charge,
                    symbol: model.symbol(s, Style::Unicode),
                })
                .collect(),
            temperature,
            totals: model
                .totals
                .iter()
                .map(|t| TotalJson {
                    description: &t.description,
                    per_formula_unit: t.amount,
                    subject: &t.subject_unicode,
                })
                .collect(),
            units: format!(
                "defects per formula unit of {}; pO2 in bar",
                model.host.formula_text
            ),
        },
        notes: &scan.notes,
        points,
        regimes,
        sweep,
        warnings: scan
            .warnings
            .iter()
            .map(|w| SourcedDiagnostic::new(w, &model.source))
            .collect(),
    }
}
