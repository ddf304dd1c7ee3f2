//! The command line: argument definitions and one function per command, each
//! a thin layer over the library. Exit codes: 0 all good, 1 the input has
//! problems, 2 usage or I/O error.

mod brouwer;
mod check;
mod law;
mod model_input;

use crate::host::Host;
use crate::render::Palette;
use clap::{Parser, Subcommand, ValueEnum};
use std::io::{self, IsTerminal, Write};
use std::process::ExitCode;

/// Point-defect chemistry in Kröger–Vink notation.
#[derive(Debug, Parser)]
#[command(name = "lacuna", version, about, long_about = None, arg_required_else_help = true)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Check that reactions balance in mass, charge and sites.
    Check(check::CheckArgs),
    /// Write the mass-action law of each reaction, with K(T) and its units.
    Law(law::LawArgs),
    /// Solve a defect model: exact Brouwer regimes and slopes, the full
    /// numerical equilibrium over pO2 or temperature, frozen-in defects;
    /// as a table, CSV, JSON or an SVG diagram.
    Brouwer(brouwer::BrouwerArgs),
}

/// Output format of `check`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// Annotated text for people.
    Human,
    /// Machine-readable report (stable keys).
    Json,
    /// One `file:line:column: severity: message` line per problem.
    Gnu,
    /// SARIF 2.1.0 for code-scanning services.
    Sarif,
}

/// When to colour terminal output.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ColorChoice {
    Auto,
    Always,
    Never,
}

impl ColorChoice {
    /// Decides colour for standard output: `auto` colours a terminal unless
    /// NO_COLOR is set (https://no-color.org).
    pub fn palette(self) -> Palette {
        let enabled = match self {
            ColorChoice::Always => true,
            ColorChoice::Never => false,
            ColorChoice::Auto => {
                io::stdout().is_terminal()
                    && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty())
            }
        };
        Palette { enabled }
    }
}

/// Parses the process arguments and runs the command.
pub fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Command::Check(args) => check::run(&args),
        Command::Law(args) => law::run(&args),
        Command::Brouwer(args) => brouwer::run(&args),
    }
}

/// Prints a usage or I/O problem to stderr and returns exit code 2.
pub fn fail(message: impl std::fmt::Display) -> ExitCode {
    let _ = writeln!(io::stderr(), "lacuna: {message}");
    ExitCode::from(2)
}

/// Parses a `--host` value, printing its diagnostics as a usage error.
pub fn host_argument(spec: &str) -> Result<Host, ExitCode> {
    Host::from_spec(spec).map_err(|diagnostics| {
        let mut stderr = io::stderr();
        for d in diagnostics {
            let d = d.locate(1, spec);
            let _ = crate::render::human::write_diagnostic(
                &mut stderr,
                Palette::PLAIN,
                "--host",
                spec,
                &d,
            );
        }
        fail("the --host value is not a usable host")
    })
}
