//! The JSON shape of `lacuna law --format json`: `laws`, `neutrality`,
//! `diagnostics`.

use super::SourcedDiagnostic;
use crate::base::diagnostic::Diagnostic;
use crate::base::number;
use crate::model::laws::LawEntry;
use crate::model::thermo::Thermo;
use crate::notation::Style;
use crate::report::law::k_of_t_text;
use serde::Serialize;

#[derive(Debug, Serialize)]
pub struct LawReport<'a> {
    pub diagnostics: Vec<SourcedDiagnostic<'a>>,
    pub laws: Vec<LawJson<'a>>,
    pub neutrality: Vec<NeutralityJson<'a>>,
}

#[derive(Debug, Serialize)]
pub struct LawJson<'a> {
    pub ascii: String,
    pub assumptions: &'a [String],
    pub factors: Vec<FactorJson<'a>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub k: Option<KJson>,
    pub label: Option<&'a str>,
    pub latex: String,
    pub line: u32,
    pub reaction: &'a str,
    pub source: &'a str,
    pub text: String,
    pub units: String,
}

#[derive(Debug, Serialize)]
pub struct FactorJson<'a> {
    pub exponent: String,
    pub kind: &'static str,
    pub species: &'a str,
    pub symbol: &'a str,
}

/// K(T): the fixed K or ΔH and ΔS, and K at the temperature asked for.
#[derive(Debug, Serialize)]
pub struct KJson {
    #[serde(rename = "K", skip_serializing_if = "Option::is_none")]
    pub k: Option<f64>,
    #[serde(rename = "dH_eV", skip_serializing_if = "Option::is_none")]
    pub dh_ev: Option<f64>,
    #[serde(rename = "dS_eV_per_K", skip_serializing_if = "Option::is_none")]
    pub ds_ev_per_k: Option<f64>,
    #[serde(rename = "temperature_K", skip_serializing_if = "Option::is_none")]
    pub temperature_k: Option<f64>,
    pub text: String,
}

#[derive(Debug, Serialize)]
pub struct NeutralityJson<'a> {
    pub source: &'a str,
    pub text: &'a str,
}

fn k_json(entry: &LawEntry, thermo: &Thermo, at: Option<f64>) -> KJson {
    let mut k = KJson {
        k: None,
        dh_ev: None,
        ds_ev_per_k: None,
        temperature_k: None,
        text: k_of_t_text(&entry.law, thermo, at, Style::Unicode),
    };
    match *thermo {
        Thermo::Fixed { k: value, at } => {
            k.k = Some(value);
            k.temperature_k = Some(at);
        }
        Thermo::Arrhenius {
            dh_ev, ds_ev_per_k, ..
        } => {
            k.dh_ev = Some(dh_ev);
            k.ds_ev_per_k = Some(ds_ev_per_k);
            if let Some(t) = at {
                if let Ok(ln_k) = thermo.ln_k(t) {
                    k.k = Some(ln_k.exp());
                    k.temperature_k = Some(t);
                }
            }
        }
    }
    k
}

/// The report: each law with the temperature its K is evaluated at, the
/// electroneutrality of each source `(source, unicode, ascii)`, and the
/// problems of each source `(source, diagnostics)`.
pub fn law_report<'a>(
    entries: &'a [LawEntry],
    temperatures: &[Option<f64>],
    neutralities: &'a [(String, String, String)],
    problems: impl IntoIterator<Item = (&'a str, &'a [Diagnostic])>,
) -> LawReport<'a> {
    let laws = entries
        .iter()
        .zip(temperatures)
        .map(|(e, t)| LawJson {
            ascii: e.law.text(Style::Ascii),
            assumptions: &e.law.assumptions,
            factors: e
                .law
                .factors
                .iter()
                .map(|f| FactorJson {
                    exponent: number::to_plain(f.exponent),
                    kind: f.kind.as_str(),
                    species: &f.species,
                    symbol: &f.unicode,
                })
                .collect(),
            k: e.thermo.as_ref().map(|thermo| k_json(e, thermo, *t)),
            label: e.law.label.as_deref(),
            latex: e.law.text(Style::Latex),
            line: e.line,
            reaction: &e.law.reaction_unicode,
            source: &e.source,
            text: e.law.text(Style::Unicode),
            units: e.law.units_text(e.host.as_deref()),
        })
        .collect();
    LawReport {
        diagnostics: problems
            .into_iter()
            .flat_map(|(name, diags)| diags.iter().map(move |d| SourcedDiagnostic::new(d, name)))
            .collect(),
        laws,
        neutrality: neutralities
            .iter()
            .map(|(s, u, _)| NeutralityJson { source: s, text: u })
            .collect(),
    }
}
