//! `lacuna check`: the three balances over files, stdin and inline reactions.

use super::{ColorChoice, Format, fail, host_argument};
use crate::engine::{Checker, Sink};
use crate::render::{gnu::GnuSink, human::HumanSink, json::JsonSink, sarif::SarifSink};
use clap::Args;
use std::fs::File;
use std::io::{self, BufReader, BufWriter, Write};
use std::path::PathBuf;
use std::process::ExitCode;

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

pub fn run(args: &CheckArgs) -> ExitCode {
    if args.files.is_empty() && args.reactions.is_empty() {
        return fail(
            "nothing to check: name reaction files, `-` for standard input, or give --reaction TEXT",
        );
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
            Err(io::Error::other(
                "is a folder; name the reaction files in it",
            ))
        } else {
            File::open(path).and_then(|f| {
                checker.check_reader(
                    &path.display().to_string(),
                    BufReader::with_capacity(1 << 16, f),
                )
            })
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
        let joined = args
            .reactions
            .iter()
            .map(|r| r.replace('\n', " "))
            .collect::<Vec<_>>()
            .join("\n");
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
