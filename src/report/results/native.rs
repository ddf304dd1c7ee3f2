//! The JSON shape of `lacuna native --format json`.

use crate::base::diagnostic::Diagnostic;
use crate::generate::native::Catalogue;
use crate::host::Host;
use crate::notation::{Style, render_reaction};
use crate::report::json::JsonDiagnostic;
use serde::Serialize;

#[derive(Debug, Serialize)]
pub struct JsonFamily {
    pub family: String,
    pub text: String,
}

#[derive(Debug, Serialize)]
pub struct JsonNative<'a> {
    pub host: &'a str,
    pub ratio: String,
    pub reactions: Vec<JsonFamily>,
    pub skipped: Vec<String>,
    pub diagnostics: Vec<JsonDiagnostic<'a>>,
}

/// The JSON of `lacuna native --format json`.
pub fn native_json<'a>(
    host: &'a Host,
    catalogue: &Catalogue,
    style: Style,
    diagnostics: &'a [Diagnostic],
) -> JsonNative<'a> {
    JsonNative {
        host: &host.formula_text,
        ratio: host.ratio_text(),
        reactions: catalogue
            .reactions
            .iter()
            .map(|r| JsonFamily {
                family: r.name.clone(),
                text: render_reaction(&r.reaction, style),
            })
            .collect(),
        skipped: catalogue.skipped.clone(),
        diagnostics: diagnostics.iter().map(JsonDiagnostic::from).collect(),
    }
}
