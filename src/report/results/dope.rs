//! The JSON shape of `lacuna dope --format json`.

use crate::base::diagnostic::Diagnostic;
use crate::base::number;
use crate::generate::dope::compound_text;
use crate::generate::dope::level::{self, Composition};
use crate::generate::dope::{
    CAVEAT, Dopant, Gas, Report, SizeMatch, compensating_text, reaction_text, site_name,
};
use crate::host::Host;
use crate::notation::Style;
use crate::report::json::JsonDiagnostic;
use crate::solve::scan::composition_note;
use serde::Serialize;

#[derive(Debug, Serialize)]
pub struct JsonSite {
    pub site: String,
    pub cn: u8,
    pub source: &'static str,
}

#[derive(Debug, Serialize)]
pub struct JsonRadius {
    pub dopant_pm: f64,
    pub host_pm: f64,
    pub cn: u8,
    pub dopant_cn_used: u8,
    pub host_cn_used: u8,
    pub mismatch_percent: f64,
}

impl JsonRadius {
    fn from(s: &SizeMatch) -> Self {
        JsonRadius {
            dopant_pm: s.dopant.pm,
            host_pm: s.host.pm,
            cn: s.dopant.cn,
            dopant_cn_used: s.dopant.cn_used,
            host_cn_used: s.host.cn_used,
            mismatch_percent: (s.mismatch * 1000.0).round() / 10.0,
        }
    }
}

#[derive(Debug, Serialize)]
pub struct JsonMechanism {
    pub rank: usize,
    pub site: String,
    pub family: &'static str,
    pub compensation: String,
    pub reaction: String,
    pub integer: String,
    pub radius: Option<JsonRadius>,
    pub second_site_radius: Option<JsonRadius>,
    pub effective_charge: i64,
    pub gas: &'static str,
    pub score: f64,
    pub dominates: &'static str,
    pub notes: Vec<String>,
}

#[derive(Debug, Serialize)]
pub struct JsonDefect {
    pub species: String,
    pub fraction: String,
    pub basis: String,
}

#[derive(Debug, Serialize)]
pub struct JsonLevel {
    pub mechanism: usize,
    pub formula: String,
    pub formula_exact: String,
    pub mol_fraction: String,
    pub cation_fraction: String,
    pub defects: Vec<JsonDefect>,
    dopant_per_cm3: Option<f64>,
    pub note: Option<&'static str>,
}

#[derive(Debug, Serialize)]
pub struct JsonDopant {
    pub written: String,
    pub element: &'static str,
    pub charge: i64,
    pub compound: String,
}

#[derive(Debug, Serialize)]
pub struct JsonStructure {
    pub name: &'static str,
    pub detail: Option<String>,
    pub sites: Vec<JsonSite>,
}

#[derive(Debug, Serialize)]
pub struct JsonDope<'a> {
    pub host: String,
    pub dopant: JsonDopant,
    pub structure: JsonStructure,
    pub mechanisms: Vec<JsonMechanism>,
    pub level: Option<JsonLevel>,
    pub caveat: &'static str,
    pub diagnostics: Vec<JsonDiagnostic<'a>>,
}

/// What `dope_json` writes about.
pub struct DopeInput<'a> {
    pub host: &'a Host,
    pub dopant: &'a Dopant,
    pub report: &'a Report,
    pub style: Style,
    /// Reactions in smallest integers instead of with fractional gases.
    pub integers: bool,
}

/// The JSON of `lacuna dope --format json`: the ranking, and the level
/// converted with the mechanism of rank `level.1` when one was asked for.
pub fn dope_json<'a>(
    input: &DopeInput<'_>,
    level: Option<(&Composition, usize)>,
    diagnostics: &'a [Diagnostic],
) -> JsonDope<'a> {
    let DopeInput {
        host,
        dopant,
        report,
        style,
        integers,
    } = *input;
    JsonDope {
        host: host.formula_text.clone(),
        dopant: JsonDopant {
            written: dopant.written.clone(),
            element: dopant.symbol(),
            charge: dopant.charge,
            compound: compound_text(dopant),
        },
        structure: JsonStructure {
            name: report.structure.name,
            detail: report.structure.detail.clone(),
            sites: report
                .structure
                .sites
                .iter()
                .map(|s| JsonSite {
                    site: host
                        .sublattices
                        .get(s.sublattice)
                        .map_or("?".into(), |x| x.name()),
                    cn: s.cn,
                    source: s.source.as_str(),
                })
                .collect(),
        },
        mechanisms: report
            .mechanisms
            .iter()
            .map(|m| JsonMechanism {
                rank: m.rank,
                site: site_name(host, m.site),
                family: m.compensation.family(),
                compensation: compensating_text(host, m, style),
                reaction: reaction_text(m, integers, style),
                integer: reaction_text(m, true, style),
                radius: m.size.as_ref().map(JsonRadius::from),
                second_site_radius: m.second_size.as_ref().map(JsonRadius::from),
                effective_charge: m.effective_charge,
                gas: match m.gas {
                    Gas::None => "none",
                    Gas::Releases => "releases",
                    Gas::TakesUp => "takes up",
                },
                score: (m.score * 100.0).round() / 100.0,
                dominates: m.compensation.conditions(),
                notes: m.notes.clone(),
            })
            .collect(),
        level: level.map(|(c, rank)| JsonLevel {
            mechanism: rank,
            formula: level::formula_text(&c.formula),
            formula_exact: level::formula_exact(&c.formula),
            mol_fraction: number::to_plain(c.mol_fraction),
            cation_fraction: number::to_plain(c.cation_fraction),
            defects: c
                .defects
                .iter()
                .map(|d| JsonDefect {
                    species: d.species.clone(),
                    fraction: number::to_plain(d.fraction),
                    basis: d.basis.clone(),
                })
                .collect(),
            dopant_per_cm3: c.per_cm3,
            note: composition_note(c),
        }),
        caveat: CAVEAT,
        diagnostics: diagnostics.iter().map(JsonDiagnostic::from).collect(),
    }
}
