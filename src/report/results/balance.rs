//! The JSON shape of `lacuna balance --format json`.

use crate::balance::{Balancing, Status};
use crate::base::diagnostic::Diagnostic;
use crate::base::number;
use crate::notation::{Style, render_reaction};
use crate::report::json::JsonDiagnostic;
use serde::Serialize;

#[derive(Debug, Serialize)]
pub struct JsonTerm<'a> {
    pub species: &'a str,
    pub side: &'static str,
    pub coefficient: String,
}

#[derive(Debug, Serialize)]
pub struct JsonReaction<'a> {
    pub text: String,
    pub terms: Vec<JsonTerm<'a>>,
}

#[derive(Debug, Serialize)]
pub struct JsonReport<'a> {
    pub status: &'static str,
    pub reactions: Vec<JsonReaction<'a>>,
    pub diagnostics: Vec<JsonDiagnostic<'a>>,
}

/// The JSON of `lacuna balance --format json`: `text` is the reaction as
/// written (the terms' spans point into it); `conventional` writes gases
/// with fractional coefficients.
pub fn balance_json<'a>(
    text: &'a str,
    outcome: Option<&Balancing>,
    diagnostics: &'a [Diagnostic],
    style: Style,
    conventional: bool,
) -> JsonReport<'a> {
    let status = outcome.map_or(Status::None, |o| o.status);
    let reactions = outcome
        .map(|o| o.reactions.as_slice())
        .unwrap_or_default()
        .iter()
        .map(|b| {
            let reaction = if conventional {
                &b.conventional
            } else {
                &b.reaction
            };
            let terms = b
                .terms
                .iter()
                .map(|t| JsonTerm {
                    species: text.get(t.span.clone()).unwrap_or(""),
                    side: t.side.as_str(),
                    coefficient: number::to_plain(if conventional {
                        t.conventional
                    } else {
                        t.coefficient
                    }),
                })
                .collect();
            JsonReaction {
                text: render_reaction(reaction, style),
                terms,
            }
        })
        .collect();
    JsonReport {
        status: status.as_str(),
        reactions,
        diagnostics: diagnostics.iter().map(JsonDiagnostic::from).collect(),
    }
}
