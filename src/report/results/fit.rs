//! The JSON of `lacuna fit --format json` when nothing could be fitted (the
//! fit itself is `crate::fit::FitReport`, serialized as it is).

use crate::base::diagnostic::Diagnostic;
use serde::Serialize;

#[derive(Debug, Serialize)]
pub struct FitFailure<'a> {
    pub diagnostics: Vec<FitDiagnostic<'a>>,
    pub source: &'a str,
}

/// A diagnostic, keys in alphabetical order, `help` null when there is none.
#[derive(Debug, Serialize)]
pub struct FitDiagnostic<'a> {
    pub code: &'static str,
    pub column: u32,
    pub help: Option<&'a str>,
    pub line: u32,
    pub message: &'a str,
    pub severity: &'static str,
}

/// The problems of `source` that stopped the fit.
pub fn fit_failure<'a>(source: &'a str, diagnostics: &'a [Diagnostic]) -> FitFailure<'a> {
    FitFailure {
        diagnostics: diagnostics
            .iter()
            .map(|d| FitDiagnostic {
                code: d.code.as_str(),
                column: d.column,
                help: d.help.as_deref(),
                line: d.line,
                message: &d.message,
                severity: d.severity.as_str(),
            })
            .collect(),
        source,
    }
}
