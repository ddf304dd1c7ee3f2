//! `lacuna balance`: find the coefficients of a reaction from its species.
//! Exit 0 when the species balance (uniquely or in several ways), 1 when
//! they cannot or the reaction has errors, 2 for usage errors.

use super::shared::output_failed;
use super::shared::{ColorChoice, NotationStyle, OutputFormat, fail, host_argument, print_json};
use clap::Args;
use lacuna::balance::checked::check_and_balance;
use lacuna::balance::{Balancing, Status};
use lacuna::base::diagnostic::Diagnostic;
use lacuna::host::Host;
use lacuna::notation::parse_reaction;
use lacuna::report::balance::write_outcome;
use lacuna::report::{Palette, human::write_diagnostic};
use std::io::{self, Write};
use std::process::ExitCode;

#[derive(Debug, Args)]
pub struct BalanceArgs {
    /// The reaction to balance, e.g. "Nb2O5 -> Nb_Ti. + O_O + e' + O2(g)".
    /// Coefficients you write are kept; the others are found.
    #[arg(value_name = "REACTION", conflicts_with = "reaction")]
    pub positional: Option<String>,
    /// The reaction to balance (same as the positional argument).
    #[arg(short, long, value_name = "TEXT")]
    pub reaction: Option<String>,
    /// The host crystal, e.g. `TiO2` or `Fe3O4 sites Fe:A +3 x1, Fe:B +5/2 x2, O -2`.
    /// Without it only mass and charge are balanced.
    #[arg(long, value_name = "SPEC")]
    pub host: Option<String>,
    /// Write the conventional form: condensed species in smallest integers,
    /// gases fractional (`½ O2(g)`).
    #[arg(long)]
    pub conventional: bool,
    /// Treat every coefficient as unknown, also the ones written.
    #[arg(long)]
    pub free: bool,
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

use lacuna::report::results::balance::balance_json;

pub fn run(args: &BalanceArgs) -> ExitCode {
    let Some(text) = args.positional.as_ref().or(args.reaction.as_ref()) else {
        return fail(
            "nothing to balance: give the reaction, e.g. `lacuna balance --host TiO2 \"Nb2O5 -> Nb_Ti. + O_O + e' + O2(g)\"`",
        );
    };
    let text = text.replace(['\n', '\r'], " ");
    let host = match args.host.as_deref().map(host_argument).transpose() {
        Ok(host) => host,
        Err(code) => return code,
    };
    if host
        .as_ref()
        .is_some_and(|h| !lacuna::balance::build::has_sites(h))
    {
        return fail("the --host value has a sublattice with no sites (a zero count)");
    }
    let (outcome, diagnostics) = balance_text(&text, host.as_ref(), !args.free);
    let result = match args.format {
        OutputFormat::Human => human(args, &text, outcome.as_ref(), &diagnostics),
        OutputFormat::Json => print_json(&balance_json(
            &text,
            outcome.as_ref(),
            &diagnostics,
            args.style.style(),
            args.conventional,
        )),
    };
    match result {
        Err(e) => output_failed(&e),
        Ok(()) => match outcome.map(|o| o.status) {
            Some(Status::Unique | Status::Several) => ExitCode::SUCCESS,
            _ => ExitCode::from(1),
        },
    }
}

/// Parses, validates and balances; returns the outcome (none when the text
/// has errors) and every diagnostic, located on line 1 of `text`.
fn balance_text(
    text: &str,
    host: Option<&Host>,
    keep_written: bool,
) -> (Option<Balancing>, Vec<Diagnostic>) {
    let (parsed, found) = parse_reaction(text, 0..text.len());
    let (outcome, diagnostics) = match parsed {
        Some(reaction) => {
            let (outcome, diagnostics) = check_and_balance(
                &reaction,
                host,
                keep_written,
                found,
                "pass --host, e.g. `--host ZrO2`, to balance the site ratio too",
            );
            (Some(outcome), diagnostics)
        }
        None => (None, found),
    };
    let located = diagnostics.into_iter().map(|d| d.locate(1, text)).collect();
    (outcome, located)
}

fn human(
    args: &BalanceArgs,
    text: &str,
    outcome: Option<&Balancing>,
    diagnostics: &[Diagnostic],
) -> io::Result<()> {
    let palette: Palette = args.color.palette();
    let style = args.style.style();
    let mut out = io::stdout().lock();
    let mut printed = false;
    if let Some(outcome) = outcome {
        printed = write_outcome(&mut out, palette, outcome, style, args.conventional)?;
    }
    for d in diagnostics {
        if printed {
            writeln!(out)?;
        }
        write_diagnostic(&mut out, palette, "--reaction", text, d)?;
        printed = true;
    }
    out.flush()
}
