//! SARIF 2.1.0 (OASIS) output for code-scanning services: one run, one rule
//! per diagnostic code, one result per diagnostic. Columns count Unicode
//! code points, as the `columnKind` says.

use crate::base::diagnostic::{Code, Diagnostic, Severity};
use crate::file::runner::{ReactionReport, Sink, Summary};
use serde::Serialize;
use std::io::{self, Write};

#[derive(Serialize)]
struct Log {
    #[serde(rename = "$schema")]
    schema: &'static str,
    version: &'static str,
    runs: Vec<Run>,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Run {
    tool: Tool,
    column_kind: &'static str,
    results: Vec<SarifResult>,
}

#[derive(Serialize)]
struct Tool {
    driver: Driver,
}

#[derive(Serialize)]
struct Driver {
    name: &'static str,
    version: &'static str,
    rules: Vec<Rule>,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Rule {
    id: &'static str,
    name: String,
    short_description: Text,
    full_description: Text,
    default_configuration: Configuration,
}

#[derive(Serialize)]
struct Configuration {
    level: &'static str,
}

#[derive(Serialize)]
struct Text {
    text: String,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct SarifResult {
    rule_id: &'static str,
    rule_index: usize,
    level: &'static str,
    message: Text,
    locations: Vec<Location>,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Location {
    physical_location: PhysicalLocation,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct PhysicalLocation {
    artifact_location: ArtifactLocation,
    #[serde(skip_serializing_if = "Option::is_none")]
    region: Option<Region>,
}

#[derive(Serialize)]
struct ArtifactLocation {
    uri: String,
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct Region {
    start_line: u32,
    start_column: u32,
    end_column: u32,
}

fn level(severity: Severity) -> &'static str {
    match severity {
        Severity::Error => "error",
        Severity::Warning => "warning",
        Severity::Note => "note",
    }
}

fn rule_name(code: Code) -> String {
    let mut name = String::new();
    for word in code.title().split([' ', '-']) {
        let mut chars = word.chars();
        if let Some(first) = chars.next() {
            name.extend(first.to_uppercase());
            name.push_str(chars.as_str());
        }
    }
    name
}

/// Collects results and writes the whole log at the end (SARIF is one document).
pub struct SarifSink<W: Write> {
    out: W,
    results: Vec<SarifResult>,
}

impl<W: Write> SarifSink<W> {
    pub fn new(out: W) -> Self {
        SarifSink {
            out,
            results: Vec::new(),
        }
    }

    fn add(&mut self, source: &str, line_text: &str, d: &Diagnostic) {
        let rule_index = Code::ALL.iter().position(|c| *c == d.code).unwrap_or(0);
        let region = (d.line > 0).then(|| {
            let width = line_text
                .get(d.span.clone())
                .map_or(1, |s| s.chars().count().max(1));
            Region {
                start_line: d.line,
                start_column: d.column.max(1),
                end_column: d.column.max(1) + u32::try_from(width).unwrap_or(1),
            }
        });
        let mut message = d.message.clone();
        if let Some(help) = &d.help {
            message.push_str(". Help: ");
            message.push_str(help);
        }
        self.results.push(SarifResult {
            rule_id: d.code.as_str(),
            rule_index,
            level: level(d.severity),
            message: Text { text: message },
            locations: vec![Location {
                physical_location: PhysicalLocation {
                    artifact_location: ArtifactLocation {
                        uri: source.replace('\\', "/"),
                    },
                    region,
                },
            }],
        });
    }
}

impl<W: Write> Sink for SarifSink<W> {
    fn reaction(&mut self, report: &ReactionReport<'_>) -> io::Result<()> {
        for d in &report.diagnostics {
            self.add(report.source, report.line_text, d);
        }
        Ok(())
    }

    fn line_problem(
        &mut self,
        source: &str,
        line_text: &str,
        diagnostic: &Diagnostic,
    ) -> io::Result<()> {
        self.add(source, line_text, diagnostic);
        Ok(())
    }

    fn wants_passing(&self) -> bool {
        false
    }

    fn finish(&mut self, _summary: &Summary) -> io::Result<()> {
        let rules = Code::ALL
            .iter()
            .map(|c| Rule {
                id: c.as_str(),
                name: rule_name(*c),
                short_description: Text {
                    text: c.title().to_string(),
                },
                full_description: Text {
                    text: c.explanation().to_string(),
                },
                default_configuration: Configuration {
                    level: level(c.default_severity()),
                },
            })
            .collect();
        let log = Log {
            schema: "https://json.schemastore.org/sarif-2.1.0.json",
            version: "2.1.0",
            runs: vec![Run {
                tool: Tool {
                    driver: Driver {
                        name: "lacuna",
                        version: env!("CARGO_PKG_VERSION"),
                        rules,
                    },
                },
                column_kind: "unicodeCodePoints",
                results: std::mem::take(&mut self.results),
            }],
        };
        serde_json::to_writer_pretty(&mut self.out, &log).map_err(io::Error::from)?;
        writeln!(self.out)?;
        self.out.flush()
    }
}
