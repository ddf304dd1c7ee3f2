//! The command line: argument definitions and one function per command, each
//! a thin layer over the library. Exit codes: 0 all good, 1 the input has
//! problems, 2 usage or I/O error (a closed pipe or a full disk included).
//!
//! The commands share what is here (colour, formats, `fail`, the folder
//! search) and `model_input`; they never import one another or the
//! workbench (`repl` only starts it).

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
mod typeset;

use crate::host::Host;
use crate::notation::Style;
use crate::report::Palette;
use clap::{Parser, Subcommand, ValueEnum};
use std::io::{self, IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::atomic::{AtomicBool, Ordering};

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
    /// NO_COLOR is set.
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
        Err(_) if FAILED.load(Ordering::Relaxed) => ExitCode::from(2),
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

/// Set when a command has reported a failure with exit 2.
static FAILED: AtomicBool = AtomicBool::new(false);

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

/// Prints a usage or I/O problem to stderr and returns exit code 2.
pub fn fail(message: impl std::fmt::Display) -> ExitCode {
    let _ = writeln!(io::stderr(), "lacuna: {message}");
    FAILED.store(true, Ordering::Relaxed);
    ExitCode::from(2)
}

/// The exit when the command's output cannot be written: 2, quietly for a
/// closed pipe (the reader took what it wanted), with a short message
/// otherwise (a full disk, a lost terminal).
pub fn output_failed(e: &io::Error) -> ExitCode {
    if e.kind() == io::ErrorKind::BrokenPipe {
        FAILED.store(true, Ordering::Relaxed);
        ExitCode::from(2)
    } else {
        fail(format_args!("cannot write the output: {e}"))
    }
}

/// Standard output, locked: what a command writes its results to. Write to
/// it with `?` and end with `finish`, so that a failed write is an error.
pub fn stdout() -> io::StdoutLock<'static> {
    io::stdout().lock()
}

/// Ends a command's output: flushes it and turns a failed write into exit 2.
pub fn finish(written: io::Result<()>, code: ExitCode) -> ExitCode {
    match written.and_then(|()| io::stdout().flush()) {
        Ok(()) => code,
        Err(e) => output_failed(&e),
    }
}

/// Output format of the generating commands (`balance`, `dope`, `native`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum OutputFormat {
    /// Text for people.
    Human,
    /// Machine-readable (stable keys).
    Json,
}

/// Which spelling of Kröger–Vink notation to print.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum NotationStyle {
    /// `V_O••`, `Y_Zr′`, `→`
    Unicode,
    /// `V_O..`, `Y_Zr'`, `->`
    Ascii,
    /// LaTeX math
    Latex,
}

impl NotationStyle {
    pub fn style(self) -> Style {
        match self {
            NotationStyle::Unicode => Style::Unicode,
            NotationStyle::Ascii => Style::Ascii,
            NotationStyle::Latex => Style::Latex,
        }
    }
}

pub use crate::report::json::JsonDiagnostic;

/// Writes `value` as pretty JSON and a newline to stdout.
pub fn print_json<T: serde::Serialize>(value: &T) -> io::Result<()> {
    // Serialise first, so a closed pipe surfaces as an I/O error of its own kind.
    let mut text = serde_json::to_string_pretty(value).map_err(io::Error::other)?;
    text.push('\n');
    let mut out = io::stdout().lock();
    out.write_all(text.as_bytes())?;
    out.flush()
}

/// The `.kvr` files below `folder`, sorted, honouring ignore files. Problems
/// met on the way (unreadable folders, link loops) are printed and flagged.
pub fn reaction_files(folder: &Path) -> (Vec<PathBuf>, bool) {
    let mut files = Vec::new();
    let mut failed = false;
    let walker = ignore::WalkBuilder::new(folder)
        .follow_links(true)
        .add_custom_ignore_filename(".lacunaignore")
        .require_git(false)
        .build();
    for entry in walker {
        match entry {
            Ok(entry) => {
                let path = entry.path();
                if entry.file_type().is_some_and(|t| t.is_file())
                    && path
                        .extension()
                        .is_some_and(|e| e == crate::file::reader::EXTENSION)
                {
                    files.push(path.to_path_buf());
                }
            }
            Err(e) => {
                failed = true;
                let _ = writeln!(io::stderr(), "lacuna: {e}");
            }
        }
    }
    files.sort();
    (files, failed)
}

/// Parses a `--host` value, printing its diagnostics as a usage error.
pub fn host_argument(spec: &str) -> Result<Host, ExitCode> {
    Host::from_spec(spec).map_err(|diagnostics| {
        let mut stderr = io::stderr();
        for d in diagnostics {
            let d = d.locate(1, spec);
            let _ = crate::report::human::write_diagnostic(
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
