//! `lacuna check`: the three balances and the lint rules over files,
//! folders, stdin and inline reactions.

use super::shared::{ColorChoice, fail, host_argument, output_failed, reaction_files};
use clap::{Args, ValueEnum};
use lacuna::check::rules::{RuleLevel, RuleLevels, find_config};
use lacuna::file::runner::{Runner, Sink};
use lacuna::report::{gnu::GnuSink, human::HumanSink, json::JsonSink, sarif::SarifSink};
use std::cell::Cell;
use std::fs::File;
use std::io::{self, BufReader, BufWriter, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::rc::Rc;

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

#[derive(Debug, Args)]
pub struct CheckArgs {
    /// Reaction files or folders to check (folders are searched for `.kvr`
    /// files, honouring .gitignore and .lacunaignore); `-` reads standard input.
    #[arg(value_name = "PATH")]
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
    /// Treat a rule (code or name), or all `warnings`, as an error (repeatable).
    #[arg(long, value_name = "RULE")]
    pub deny: Vec<String>,
    /// Report a rule as a warning (repeatable).
    #[arg(long, value_name = "RULE")]
    pub warn: Vec<String>,
    /// Silence a rule (repeatable).
    #[arg(long, value_name = "RULE")]
    pub allow: Vec<String>,
    /// Read rule levels from this file instead of looking for lacuna.toml.
    #[arg(long, value_name = "FILE")]
    pub config: Option<PathBuf>,
}

pub fn run(args: &CheckArgs) -> ExitCode {
    if args.files.is_empty() && args.reactions.is_empty() {
        return fail(
            "nothing to check: name reaction files or folders, `-` for standard input, or give --reaction TEXT",
        );
    }
    let host = match args.host.as_deref().map(host_argument).transpose() {
        Ok(host) => host,
        Err(code) => return code,
    };
    let levels = match levels(args) {
        Ok(levels) => levels,
        Err(message) => return fail(message),
    };
    let stdout = io::stdout();
    let written = Rc::new(Cell::new(true));
    // The watch sits under the buffer, so the hot path is the buffer's own
    // and the watch sees only the large writes that reach standard output.
    let out = BufWriter::new(Watched {
        inner: stdout.lock(),
        ok: Rc::clone(&written),
    });
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
    let mut checker = Runner::new(host.clone(), sink.as_mut()).with_levels(levels.clone());
    for path in &args.files {
        let result = if path.as_os_str() == "-" {
            checker.check_reader("<stdin>", io::stdin().lock())
        } else if path.is_dir() {
            let (files, walk_failed) = reaction_files(path);
            io_failed |= walk_failed;
            checker.check_files(&files).map(|unreadable| {
                for (path, e) in unreadable {
                    io_failed = true;
                    let _ = writeln!(io::stderr(), "lacuna: cannot read {}: {e}", path.display());
                }
            })
        } else {
            check_file(&mut checker, path)
        };
        if let Err(e) = result {
            // The report could not be written: stop, whatever is left.
            if !written.get() {
                return output_failed(&e);
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
            return output_failed(&e);
        }
    }
    match checker.finish() {
        Ok(_) if io_failed => ExitCode::from(2),
        Ok(summary) if summary.clean() => ExitCode::SUCCESS,
        Ok(_) => ExitCode::from(1),
        Err(e) => output_failed(&e),
    }
}

/// Checks one file named alone, its lines spread over the cores (files of
/// a folder are checked side by side instead).
fn check_file(checker: &mut Runner<'_>, path: &Path) -> io::Result<()> {
    let file = File::open(path)?;
    let reader = BufReader::with_capacity(1 << 16, file);
    checker.check_reader_parallel(&path.display().to_string(), reader)
}

/// Standard output that remembers a failed write, so that a failure of the
/// report (a closed pipe, a full disk) is told from a file that cannot be read.
struct Watched<W> {
    inner: W,
    ok: Rc<Cell<bool>>,
}

impl<W: Write> Write for Watched<W> {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.inner.write(buf).inspect_err(|_| self.ok.set(false))
    }

    fn flush(&mut self) -> io::Result<()> {
        self.inner.flush().inspect_err(|_| self.ok.set(false))
    }
}

/// Rule levels: the config file (given, or `lacuna.toml` found upwards from
/// the current folder), then the command-line flags, which win.
fn levels(args: &CheckArgs) -> Result<RuleLevels, String> {
    let config = match &args.config {
        Some(path) => Some(path.clone()),
        None => std::env::current_dir()
            .ok()
            .and_then(|dir| find_config(&dir)),
    };
    let mut levels = match config {
        Some(path) => {
            let text = std::fs::read_to_string(&path)
                .map_err(|e| format!("cannot read {}: {e}", path.display()))?;
            RuleLevels::from_config(&text, &path)?
        }
        None => RuleLevels::default(),
    };
    for (names, level) in [
        (&args.allow, RuleLevel::Allow),
        (&args.warn, RuleLevel::Warn),
        (&args.deny, RuleLevel::Deny),
    ] {
        for name in names {
            levels.set(name, level)?;
        }
    }
    Ok(levels)
}
