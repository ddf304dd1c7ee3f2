//! The command line: argument definitions and one function per command, each
//! a thin layer over the library. Exit codes: 0 all good, 1 the input has
//! problems, 2 usage or I/O error.

use crate::engine::{Checker, Sink};
use crate::host::Host;
use crate::render::{Palette, gnu::GnuSink, human::HumanSink, json::JsonSink, sarif::SarifSink};
use clap::{Args, Parser, Subcommand, ValueEnum};
use std::fs::File;
use std::io::{self, BufReader, BufWriter, IsTerminal, Write};
use std::path::PathBuf;
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
    Check(CheckArgs),
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
            ColorChoice::Auto => io::stdout().is_terminal() && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty()),
        };
        Palette { enabled }
    }
}

#[derive(Debug, Args)]
pub struct CheckArgs {
    /// Reaction files to check; `-` reads standard input.
    #[arg(value_name = "FILE")]
    pub files: Vec<PathBuf>,
    /// A reaction to check (repeatable); uses --host.
    #[arg(short, long = "reaction", value_name = "TEXT")]
    pub reactions: Vec<String>,
    /// Host for inline reactions and files without a `host` line, e.g. `ZrO2`
    /// or `Fe3O4 sites Fe:A +3 x1, Fe:B +5/2 x2, O -2`.
    #[arg(long, value_name = "SPEC")]
    pub host: Option<String>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Human)]
    pub format: Format,
    /// When to use colour.
    #[arg(long, value_enum, default_value_t = ColorChoice::Auto, value_name = "WHEN")]
    pub color: ColorChoice,
    /// Print only the summary line (human format).
    #[arg(short, long)]
    pub quiet: bool,
    /// Also list the reactions that pass (human format).
    #[arg(short, long)]
    pub verbose: bool,
}

/// Parses the process arguments and runs the command.
pub fn main() -> ExitCode {
    let cli = Cli::parse();
    match cli.command {
        Command::Check(args) => check(&args),
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
            let _ = crate::render::human::write_diagnostic(&mut stderr, Palette::PLAIN, "--host", spec, &d);
        }
        fail("the --host value is not a usable host")
    })
}

fn check(args: &CheckArgs) -> ExitCode {
    if args.files.is_empty() && args.reactions.is_empty() {
        return fail("nothing to check: name reaction files, `-` for standard input, or give --reaction TEXT");
    }
    let host = match args.host.as_deref().map(host_argument).transpose() {
        Ok(host) => host,
        Err(code) => return code,
    };
    let stdout = io::stdout();
    let out = BufWriter::new(stdout.lock());
    let mut sink: Box<dyn Sink> = match args.format {
        Format::Human => {
            let mut human = HumanSink::new(out, args.color.palette());
            human.quiet = args.quiet;
            human.verbose = args.verbose;
            Box::new(human)
        }
        Format::Json => Box::new(JsonSink::new(out)),
        Format::Gnu => Box::new(GnuSink::new(out)),
        Format::Sarif => Box::new(SarifSink::new(out)),
    };
    let mut io_failed = false;
    let mut checker = Checker::new(host, sink.as_mut());
    for path in &args.files {
        let result = if path.as_os_str() == "-" {
            checker.check_reader("<stdin>", io::stdin().lock())
        } else if path.is_dir() {
            Err(io::Error::other("is a folder; name the reaction files in it"))
        } else {
            File::open(path).and_then(|f| checker.check_reader(&path.display().to_string(), BufReader::with_capacity(1 << 16, f)))
        };
        if let Err(e) = result {
            if e.kind() == io::ErrorKind::BrokenPipe {
                return ExitCode::from(2);
            }
            io_failed = true;
            let _ = writeln!(io::stderr(), "lacuna: cannot read {}: {e}", path.display());
        }
    }
    if !args.reactions.is_empty() {
        // One source, one line per --reaction, so line numbers say which one.
        let joined = args.reactions.iter().map(|r| r.replace('\n', " ")).collect::<Vec<_>>().join("\n");
        if let Err(e) = checker.check_text("<inline>", &joined) {
            return fail(e);
        }
    }
    match checker.finish() {
        Ok(_) if io_failed => ExitCode::from(2),
        Ok(summary) if summary.clean() => ExitCode::SUCCESS,
        Ok(_) => ExitCode::from(1),
        Err(e) if e.kind() == io::ErrorKind::BrokenPipe => ExitCode::from(2),
        Err(e) => fail(e),
    }
}
