//! `lacuna native`: the intrinsic defect reactions of a host, balanced.

use super::shared::output_failed;
use super::shared::{ColorChoice, host_argument};
use super::shared::{NotationStyle, OutputFormat, print_json};
use clap::Args;
use lacuna::base::diagnostic::{Code, Diagnostic};
use lacuna::base::text;
use lacuna::generate::native::catalogue;
use lacuna::notation::render_reaction;
use lacuna::report::human::write_diagnostic;
use lacuna::report::results::native::native_json;
use std::io::{self, Write};
use std::process::ExitCode;

#[derive(Debug, Args)]
pub struct NativeArgs {
    /// The host crystal, e.g. `ZrO2`, `BaTiO3` or
    /// "Fe3O4 sites Fe:A +3 x1, Fe:B +2 x1, Fe:C +3 x1, O -2".
    #[arg(value_name = "HOST")]
    pub host: String,
    /// Output format.
    #[arg(long, value_enum, default_value_t = OutputFormat::Human)]
    pub format: OutputFormat,
    /// How to write the notation.
    #[arg(long, value_enum, default_value_t = NotationStyle::Unicode)]
    pub style: NotationStyle,
    /// When to use colour.
    #[arg(long, value_enum, default_value_t = ColorChoice::Auto, value_name = "WHEN")]
    pub color: ColorChoice,
}

pub fn run(args: &NativeArgs) -> ExitCode {
    let host = match host_argument(&args.host) {
        Ok(host) => host,
        Err(code) => return code,
    };
    let catalogue = catalogue(&host);
    let style = args.style.style();
    let mut diagnostics = Vec::new();
    if !catalogue.skipped.is_empty() {
        let mut d = Diagnostic::new(
            Code::HostUnsuitable,
            0..args.host.len(),
            format!(
                "{} {} a fractional formal charge: {} vacancies and interstitials are left out",
                catalogue.skipped.join(", "),
                if catalogue.skipped.len() == 1 {
                    "has"
                } else {
                    "have"
                },
                if catalogue.skipped.len() == 1 {
                    "its"
                } else {
                    "their"
                },
            ),
        )
        .with_help(
            "state integer charges with `sites` (e.g. Fe:B +2 x1, Fe:C +3 x1) to include them",
        );
        d.severity = lacuna::base::diagnostic::Severity::Warning;
        diagnostics.push(d.locate(1, &args.host));
    }
    if catalogue.reactions.is_empty() {
        diagnostics.push(
            Diagnostic::new(
                Code::HostUnsuitable,
                0..args.host.len(),
                "no native defect reaction can be written for this host",
            )
            .with_help("give the sublattices integer formal charges with `sites`")
            .locate(1, &args.host),
        );
    }
    let result = match args.format {
        OutputFormat::Json => print_json(&native_json(&host, &catalogue, style, &diagnostics)),
        OutputFormat::Human => (|| {
            let palette = args.color.palette();
            let mut out = io::stdout().lock();
            writeln!(
                out,
                "native defect reactions of {} ({})",
                host.formula_text,
                host.ratio_text()
            )?;
            let width = catalogue
                .reactions
                .iter()
                .map(|r| text::width(&r.name))
                .max()
                .unwrap_or(0);
            for r in &catalogue.reactions {
                writeln!(
                    out,
                    "  {:<width$}  {}",
                    r.name,
                    palette.strong(&render_reaction(&r.reaction, style))
                )?;
            }
            for d in &diagnostics {
                writeln!(out)?;
                write_diagnostic(&mut out, palette, "host", &args.host, d)?;
            }
            out.flush()
        })(),
    };
    match result {
        Err(e) => output_failed(&e),
        Ok(()) if catalogue.reactions.is_empty() => ExitCode::from(1),
        Ok(()) => ExitCode::SUCCESS,
    }
}
