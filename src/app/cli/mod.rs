//! The command line: argument definitions and one function per command, each
//! a thin layer over the library. Exit codes: 0 all good, 1 the input has
//! problems, 2 usage or I/O error (a closed pipe or a full disk included).
//!
//! This file parses the arguments and hands each command its own; the
//! commands share `shared` (colour, formats, `fail`, the folder search) and
//! `model_input`, and never import this file, one another or the workbench
//! (`repl` only starts it).

mod balance;
mod brouwer;
mod check;
mod dope;
mod explain;
mod fit;
mod fmt;
mod law;
mod model_input;
mod native;
mod repl;
mod shared;
mod typeset;

use clap::{Parser, Subcommand};
use shared::output_failed;
use std::io::{self, Write};
use std::process::ExitCode;

/// Point-defect chemistry in Kröger–Vink notation.
#[derive(Debug, Parser)]
///
/// With no command on a terminal, starts the workbench (`lacuna repl`).
#[command(name = "lacuna", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Option<Command>,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Check that reactions balance in mass, charge and sites.
    Check(check::CheckArgs),
    /// Rewrite reaction files in one canonical layout.
    Fmt(fmt::FmtArgs),
    /// Explain a diagnostic code, or list them all.
    Explain(explain::ExplainArgs),
    /// Fit conductivity versus pO2 and temperature: regime slopes, ionic and
    /// electronic parts, activation energies.
    Fit(fit::FitArgs),
    /// Work interactively (also `lacuna` alone on a terminal): type, check, name, save and typeset reactions.
    Repl(repl::ReplArgs),
    /// Write reactions and species for manuscripts (LaTeX, Unicode, HTML, ...).
    Typeset(typeset::TypesetArgs),
    /// Find the coefficients of a reaction from its species (exact; unique,
    /// several or none, each explained).
    Balance(balance::BalanceArgs),
    /// List a host's intrinsic defect reactions (Schottky, Frenkel,
    /// electronic, redox, antisite), balanced.
    Native(native::NativeArgs),
    /// Propose every balanced way a dopant can enter a host, ranked by size
    /// and charge match; convert dopant levels between units.
    Dope(dope::DopeArgs),
    /// Write the mass-action law of each reaction, with K(T) and its units.
    Law(law::LawArgs),
    /// Solve a defect model: exact Brouwer regimes and slopes, the full
    /// numerical equilibrium over pO2 or temperature, frozen-in defects;
    /// as a table, CSV, JSON or an SVG diagram.
    Brouwer(brouwer::BrouwerArgs),
}

/// Parses the process arguments and runs the command.
pub fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        // Help, the version and usage errors, written like any output.
        Err(e) => return parse_failed(&e),
    };
    let code = run(cli);
    // What is still buffered must reach the reader, or the exit says it did
    // not (once: a command that already failed has said why).
    match io::stdout().flush() {
        Ok(()) => code,
        Err(_) if shared::failed_already() => ExitCode::from(2),
        Err(e) => output_failed(&e),
    }
}

/// Prints what the argument parser has to say (help and the version on
/// standard output, usage errors on standard error) and exits with its
/// code, or with 2 when the help cannot be written.
fn parse_failed(e: &clap::Error) -> ExitCode {
    let written = e.print().and_then(|()| io::stdout().flush());
    match written {
        Ok(()) => ExitCode::from(u8::try_from(e.exit_code()).unwrap_or(2)),
        Err(_) if e.use_stderr() => ExitCode::from(2),
        Err(err) => output_failed(&err),
    }
}

fn run(cli: Cli) -> ExitCode {
    match cli.command {
        Some(Command::Check(args)) => check::run(&args),
        Some(Command::Fmt(args)) => fmt::run(&args),
        Some(Command::Explain(args)) => explain::run(&args),
        Some(Command::Fit(args)) => fit::run(&args),
        Some(Command::Balance(args)) => balance::run(&args),
        Some(Command::Native(args)) => native::run(&args),
        Some(Command::Dope(args)) => dope::run(&args),
        Some(Command::Law(args)) => law::run(&args),
        Some(Command::Brouwer(args)) => brouwer::run(&args),
        Some(Command::Repl(args)) => repl::run(&args),
        Some(Command::Typeset(args)) => typeset::run(&args),
        // No command: the workbench on a terminal, else help and a usage error.
        None if repl::on_terminal() => repl::run(&repl::ReplArgs::bare()),
        None => {
            use clap::CommandFactory;
            let help = Cli::command().render_help();
            let _ = write!(io::stderr(), "{help}");
            ExitCode::from(2)
        }
    }
}
