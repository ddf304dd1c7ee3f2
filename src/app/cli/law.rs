//! `lacuna law`: the mass-action law of each reaction, with K(T) and the
//! units of K, as Unicode, plain text, LaTeX or JSON.

use super::model_input::{Source, gather, print_diagnostics};
use super::shared::output_failed;
use super::shared::{ColorChoice, fail, host_argument};
use clap::{Args, ValueEnum};
use lacuna::base::diagnostic::Diagnostic;
use lacuna::model::laws::{LawEntry, document_laws, document_neutrality};
use lacuna::model::thermo;
use lacuna::model::{self, Document};
use lacuna::notation::Style;
use lacuna::report::law::write_law_text;
use lacuna::report::results::law::law_report;
use std::io::{self, BufWriter, Write};
use std::path::PathBuf;
use std::process::ExitCode;

/// Output format of `law`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum LawFormat {
    /// Kröger–Vink with Unicode marks (•, ′, ×) and superscripts.
    Unicode,
    /// Plain ASCII text (`V_O..`, `n^2`).
    Text,
    /// LaTeX math, one equation per law.
    Latex,
    /// Machine-readable (stable keys: laws, factors, assumptions).
    Json,
}

#[derive(Debug, Args)]
pub struct LawArgs {
    /// Reaction files (`.kvr`, the same files `check` reads); `-` reads standard input.
    #[arg(value_name = "FILE")]
    pub files: Vec<PathBuf>,
    /// A reaction (repeatable); uses --host. Model lines such as
    /// `dH red = 4.5 eV` may be given the same way.
    #[arg(short, long = "reaction", value_name = "TEXT")]
    pub reactions: Vec<String>,
    /// Host for inline reactions and files without a `host` line.
    #[arg(long, value_name = "SPEC")]
    pub host: Option<String>,
    /// Temperature at which to evaluate K(T), e.g. `1273 K` or `1000 °C`
    /// (default: the file's `temperature` line).
    #[arg(long, value_name = "T")]
    pub temperature: Option<String>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = LawFormat::Unicode)]
    pub format: LawFormat,
    /// When to use colour (diagnostics).
    #[arg(long, value_enum, default_value_t = ColorChoice::Auto, value_name = "WHEN")]
    pub color: ColorChoice,
}

pub fn run(args: &LawArgs) -> ExitCode {
    if args.files.is_empty() && args.reactions.is_empty() {
        return fail(
            "no reactions: name reaction files, `-` for standard input, or give --reaction TEXT",
        );
    }
    let host = match args.host.as_deref().map(host_argument).transpose() {
        Ok(h) => h,
        Err(code) => return code,
    };
    let temperature = match args.temperature.as_deref().map(thermo::parse_temperature) {
        None => None,
        Some(Ok(t)) => Some(t),
        Some(Err(e)) => return fail(format!("--temperature: {}; {}", e.message, e.help)),
    };
    let sources = match gather(&args.files, &args.reactions) {
        Ok(s) => s,
        Err(code) => return code,
    };
    let mut entries = Vec::new();
    let mut problems: Vec<(String, Vec<String>, Vec<Diagnostic>)> = Vec::new();
    let mut neutralities: Vec<(String, String, String)> = Vec::new();
    let mut any_error = false;
    let mut temperatures: Vec<Option<f64>> = Vec::new();
    for source in &sources {
        let (doc, diags) = read_source(source, host.clone());
        any_error |= diags.iter().any(Diagnostic::is_error);
        let t = temperature.or(doc.temperature.map(|(t, _)| t));
        let laws = document_laws(&doc);
        let thermo_problems = laws.problems();
        any_error |= laws.has_errors();
        let found: Vec<LawEntry> = laws.laws().cloned().collect();
        let mut all = diags;
        all.extend(thermo_problems);
        all.sort_by_key(|d| {
            (
                d.line,
                d.severity == lacuna::base::diagnostic::Severity::Note,
                d.column,
            )
        });
        if !all.is_empty() {
            problems.push((source.name.clone(), doc.lines.clone(), all));
        }
        if let Some((unicode, ascii)) = document_neutrality(&found, &doc) {
            neutralities.push((source.name.clone(), unicode, ascii));
        }
        for _ in &found {
            temperatures.push(t);
        }
        entries.extend(found);
    }
    let palette = args.color.palette();
    let stdout = io::stdout();
    let mut out = BufWriter::new(stdout.lock());
    let mut stderr = io::stderr();
    let written = match args.format {
        LawFormat::Json => write_json(&mut out, &entries, &temperatures, &neutralities, &problems),
        format => {
            let mut result = Ok(());
            for (name, lines, diags) in &problems {
                if let Err(e) = print_diagnostics(&mut stderr, palette, name, lines, diags) {
                    result = Err(e);
                }
            }
            result
                .and_then(|()| write_text(&mut out, format, &entries, &temperatures, &neutralities))
        }
    };
    match written.and_then(|()| out.flush()) {
        Ok(()) if any_error => ExitCode::from(1),
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => output_failed(&e),
    }
}

fn read_source(source: &Source, host: Option<lacuna::host::Host>) -> (Document, Vec<Diagnostic>) {
    let doc = model::read(&source.name, &source.text, host);
    let mut diags = doc.diagnostics.clone();
    diags.extend(model::label_problems(&doc));
    if let Some((d, _)) = &source.problem {
        diags.push(d.clone());
    }
    (doc, diags)
}

fn write_text(
    out: &mut dyn Write,
    format: LawFormat,
    entries: &[LawEntry],
    temperatures: &[Option<f64>],
    neutralities: &[(String, String, String)],
) -> io::Result<()> {
    let style = match format {
        LawFormat::Text => Style::Ascii,
        LawFormat::Latex => Style::Latex,
        _ => Style::Unicode,
    };
    for (e, t) in entries.iter().zip(temperatures) {
        let place = format!("{}:{}", e.source, e.line);
        write_law_text(
            out,
            &e.law,
            e.thermo.as_ref(),
            *t,
            e.host.as_deref(),
            &place,
            style,
        )?;
    }
    for (source, unicode, ascii) in neutralities {
        let text = if style == Style::Ascii {
            ascii
        } else {
            unicode
        };
        let lead = if style == Style::Latex { "% " } else { "" };
        writeln!(
            out,
            "{lead}electroneutrality of {source} (every charged species): {text}"
        )?;
    }
    Ok(())
}

fn write_json(
    out: &mut dyn Write,
    entries: &[LawEntry],
    temperatures: &[Option<f64>],
    neutralities: &[(String, String, String)],
    problems: &[(String, Vec<String>, Vec<Diagnostic>)],
) -> io::Result<()> {
    let report = law_report(
        entries,
        temperatures,
        neutralities,
        problems
            .iter()
            .map(|(name, _, diags)| (name.as_str(), diags.as_slice())),
    );
    serde_json::to_writer_pretty(&mut *out, &report).map_err(io::Error::other)?;
    writeln!(out)
}
