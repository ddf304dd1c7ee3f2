//! The JSON shapes of the commands' results (feature `serde`): one
//! serializable type per report, filled from the library's result types.
//! The commands print these and nothing else; their keys are a contract
//! other tools read.
//!
//! The law and scan reports keep their keys in alphabetical order (the
//! order they have always been printed in); the others keep theirs in
//! declaration order.

pub mod balance;
pub mod dope;
pub mod fit;
pub mod law;
pub mod native;
pub mod scan;

use crate::base::diagnostic::Diagnostic;
use serde::Serialize;

/// A diagnostic with its source, keys in alphabetical order, as the law
/// and scan reports write it.
#[derive(Debug, Serialize)]
pub struct SourcedDiagnostic<'a> {
    pub code: &'static str,
    pub column: u32,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub help: Option<&'a str>,
    pub line: u32,
    pub message: &'a str,
    pub severity: &'static str,
    pub source: &'a str,
}

impl<'a> SourcedDiagnostic<'a> {
    pub fn new(d: &'a Diagnostic, source: &'a str) -> Self {
        SourcedDiagnostic {
            code: d.code.as_str(),
            column: d.column,
            help: d.help.as_deref(),
            line: d.line,
            message: &d.message,
            severity: d.severity.as_str(),
            source,
        }
    }
}
