//! `lacuna check`: the three balances and the lint rules over files,
//! folders, stdin and inline reactions.

use super::{ColorChoice, Format, fail, host_argument};
use crate::check::rules::{Level, Levels, find_config};
use crate::file::runner::{Checker, Recording, Sink, Summary};
use crate::host::Host;
use crate::report::{gnu::GnuSink, human::HumanSink, json::JsonSink, sarif::SarifSink};
use clap::Args;
use rayon::prelude::*;
use std::fs::File;
use std::io::{self, BufReader, BufWriter, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

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

/// Folder searches hand out this many files to the worker threads at a time,
/// so results are printed in order while memory stays bounded.
const BATCH: usize = 256;

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
    let keep_passing = sink.wants_passing();
    let mut io_failed = false;
    let mut checker = Checker::new(host.clone(), sink.as_mut()).with_levels(levels.clone());
    for path in &args.files {
        let result = if path.as_os_str() == "-" {
            checker.check_reader("<stdin>", io::stdin().lock())
        } else if path.is_dir() {
            let (files, walk_failed) = reaction_files(path);
            io_failed |= walk_failed;
            check_in_parallel(&mut checker, &files, host.as_ref(), &levels, keep_passing)
                .map(|failed| io_failed |= failed)
        } else {
            check_file(&mut checker, path, true)
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

/// Checks one file; `parallel` spreads its lines over the cores (for a file
/// named alone; files of a folder are already checked side by side).
fn check_file(checker: &mut Checker<'_>, path: &Path, parallel: bool) -> io::Result<()> {
    let file = File::open(path)?;
    let reader = BufReader::with_capacity(1 << 16, file);
    let name = path.display().to_string();
    if parallel {
        checker.check_reader_parallel(&name, reader)
    } else {
        checker.check_reader(&name, reader)
    }
}

/// Rule levels: the config file (given, or `lacuna.toml` found upwards from
/// the current folder), then the command-line flags, which win.
fn levels(args: &CheckArgs) -> Result<Levels, String> {
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
            Levels::from_config(&text, &path)?
        }
        None => Levels::default(),
    };
    for (names, level) in [
        (&args.allow, Level::Allow),
        (&args.warn, Level::Warn),
        (&args.deny, Level::Deny),
    ] {
        for name in names {
            levels.set(name, level)?;
        }
    }
    Ok(levels)
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

/// One file checked on a worker thread: its events, totals and read error.
type FileResult = (Recording, Summary, Option<(PathBuf, io::Error)>);

/// Checks files on all cores, then replays each file's results in order.
fn check_in_parallel(
    checker: &mut Checker<'_>,
    files: &[PathBuf],
    host: Option<&Host>,
    levels: &Levels,
    keep_passing: bool,
) -> io::Result<bool> {
    let mut failed = false;
    for batch in files.chunks(BATCH) {
        let results: Vec<FileResult> = batch
            .par_iter()
            .map(|path| {
                let mut recording = Recording {
                    events: Vec::new(),
                    keep_passing,
                };
                let mut local =
                    Checker::new(host.cloned(), &mut recording).with_levels(levels.clone());
                let error = check_file(&mut local, path, false)
                    .err()
                    .map(|e| (path.clone(), e));
                let summary = local.summary;
                (recording, summary, error)
            })
            .collect();
        for (recording, summary, error) in results {
            recording.replay(checker.sink())?;
            checker.absorb(&summary);
            if let Some((path, e)) = error {
                failed = true;
                let _ = writeln!(io::stderr(), "lacuna: cannot read {}: {e}", path.display());
            }
        }
    }
    Ok(failed)
}
